/* cli_common.h — what the command's files share: error reports, usage errors, strict
 * number parsing.  Command side only (src/cli*.c). */
#ifndef EW_CLI_COMMON_H
#define EW_CLI_COMMON_H

#include "epiwell.h"

/* Print "epiwell: file:line: message" on stderr; returns the status as the exit code. */
int ew_cli_report(const ew_error *err);
/* Print "epiwell: " fmt (with arg), then usage, on stderr; returns EW_ERR_USAGE. */
int ew_cli_bad(const char *usage, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* 1 when the whole of s is one finite number, stored in *v. */
int ew_cli_parse_num(const char *s, double *v);

#endif
