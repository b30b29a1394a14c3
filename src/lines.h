/* lines.h — the optical lines of a set of states: intersubband and interband pairs with
 * their energies, dipoles, oscillator strengths and overlaps (observables.h). */
#ifndef EW_LINES_H
#define EW_LINES_H

#include "result.h"

/* Fill r->lines from r's states: intersubband lines from each of the lowest
 * r->opt.lowest_levels states of a band (0: all) to every higher state of that band, and
 * interband lines e_n–hh_m, e_n–lh_m with n and m among the lowest.  The exciton and
 * polarisation fields stay 0 (exciton.c fills them over the finished result). */
ew_status ew_lines_build(ew_result *r, ew_error *err);

#endif
