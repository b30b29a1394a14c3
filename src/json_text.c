/* json_text.c — JSON strings, numbers and arrays of numbers (see json_text.h). */
#include "json_text.h"

#include <math.h>

void ew_json_str(FILE *out, const char *s) {
  fputc('"', out);
  for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
    if (*p == '"' || *p == '\\') fprintf(out, "\\%c", *p);
    else if (*p < 0x20) fprintf(out, "\\u%04x", *p);
    else fputc(*p, out);
  }
  fputc('"', out);
}

void ew_json_num(FILE *out, double v) {
  if (isfinite(v)) fprintf(out, "%.10g", v);
  else fputs("null", out);
}

void ew_json_arr(FILE *out, const char *name, const double *v, size_t n) {
  fprintf(out, ",\"%s\":[", name);
  for (size_t i = 0; i < n; i++) {
    if (i) fputc(',', out);
    ew_json_num(out, v ? v[i] : NAN);
  }
  fputc(']', out);
}
