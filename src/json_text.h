/* json_text.h — the few JSON writers the workflow outputs share: a string with escapes, a
 * number (null when not finite) and a named array of numbers. */
#ifndef EW_JSON_TEXT_H
#define EW_JSON_TEXT_H

#include <stddef.h>
#include <stdio.h>

void ew_json_str(FILE *out, const char *s);
void ew_json_num(FILE *out, double v); /* %.10g, or null */
/* ,"name":[v0,v1,…] — every value null when v is NULL */
void ew_json_arr(FILE *out, const char *name, const double *v, size_t n);

#endif
