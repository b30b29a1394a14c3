/* cli_common.h — what the command's files share: error reports, usage errors, strict
 * number parsing.  Command side only (src/cli*.c), which includes no project header but this
 * and epiwell.h. */
#ifndef EW_CLI_COMMON_H
#define EW_CLI_COMMON_H

#include "epiwell.h"

/* Print "epiwell: file:line: message" on stderr; returns the status as the exit code. */
int ew_cli_report(const ew_error *err);
/* Print "epiwell: " fmt (with arg) and a line pointing at `epiwell [COMMAND] --help` (the
 * command read off usage) on stderr; returns EW_ERR_USAGE. */
int ew_cli_bad(const char *usage, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* 1 when the whole of s is one finite number, stored in *v. */
int ew_cli_parse_num(const char *s, double *v);
/* Put "opt: " in front of err's message (which names a picture or file the option gave). */
void ew_cli_prefix(ew_error *err, const char *opt);

/* Longest output path the commands take (the library's output sets hold 1024 bytes). */
#define EW_CLI_PATH_MAX 1024

/* The workflow commands (cli_workflow.c): argv after the command name; exit codes. */
int ew_cli_sweep(int argc, char **argv);
int ew_cli_match(int argc, char **argv);
int ew_cli_tolerance(int argc, char **argv);
/* `epiwell merge` (cli_merge.c). */
int ew_cli_merge(int argc, char **argv);
/* `epiwell dispersion` (cli_dispersion.c) */
int ew_cli_dispersion(int argc, char **argv);
/* `epiwell minibands` (cli_minibands.c) */
int ew_cli_minibands(int argc, char **argv);
/* `epiwell gain` (cli_gain.c) */
int ew_cli_gain(int argc, char **argv);
/* `epiwell hole-absorption` (cli_hole_absorption.c) */
int ew_cli_hole_absorption(int argc, char **argv);

#endif
