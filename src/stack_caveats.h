/* stack_caveats.h — warnings about what the model leaves out for a stack's layers. */
#ifndef EW_STACK_CAVEATS_H
#define EW_STACK_CAVEATS_H

#include "result.h"

/* Append to r's warnings: layers whose lowest conduction minimum is X or L, layers beyond
 * their Matthews–Blakeslee critical thickness, and a strained stack beyond the thickness its
 * mean strain allows.  Returns 0 when out of memory. */
int ew_stack_caveats(ew_result *r);

#endif
