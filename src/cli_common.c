/* cli_common.c — helpers shared by the command's files (see cli_common.h). */
#include "cli_common.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* After a usage error, the one line that says where the usage is (cmd: len characters). */
static void help_line(const char *cmd, int len) {
  fprintf(stderr, "epiwell: run 'epiwell %.*s%s--help' for the usage\n", len, cmd, len ? " " : "");
}

int ew_cli_report(const ew_error *err) {
  char buf[2048];
  fprintf(stderr, "epiwell: %s\n", ew_error_text(err, buf, sizeof buf));
  if (err->code == EW_ERR_USAGE) help_line("", 0);
  return (int)err->code;
}

int ew_cli_bad(const char *usage, const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  fprintf(stderr, "epiwell: ");
  vfprintf(stderr, fmt, ap);
  va_end(ap);
  /* the cause, then where the usage is: 25 lines of it would bury the one that matters */
  const char *cmd = "";
  int len = 0;
  if (!strncmp(usage, "usage: epiwell ", 15) && islower((unsigned char)usage[15])) {
    cmd = usage + 15; /* a command's own usage: "usage: epiwell sweep ..." */
    while (islower((unsigned char)cmd[len])) len++;
  }
  fputc('\n', stderr);
  help_line(cmd, len);
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
