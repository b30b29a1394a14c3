/* cli_common.c — helpers shared by the command's files (see cli_common.h). */
#include "cli_common.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

int ew_cli_report(const ew_error *err) {
  char buf[2048];
  fprintf(stderr, "epiwell: %s\n", ew_error_text(err, buf, sizeof buf));
  return (int)err->code;
}

int ew_cli_bad(const char *usage, const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  fprintf(stderr, "epiwell: ");
  vfprintf(stderr, fmt, ap);
  va_end(ap);
  fprintf(stderr, "\n%s", usage);
  return EW_ERR_USAGE;
}

int ew_cli_parse_num(const char *s, double *v) {
  char *end;
  errno = 0;
  *v = strtod(s, &end);
  return s[0] && *end == '\0' && errno == 0 && isfinite(*v);
}

void ew_cli_prefix(ew_error *err, const char *opt) {
  char msg[sizeof err->message];
  snprintf(msg, sizeof msg, "%s: %.1000s", opt, err->message);
  memcpy(err->message, msg, sizeof err->message);
}
