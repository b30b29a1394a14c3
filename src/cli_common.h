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

/* FROM:TO:STEP into x[0..2]; 1 when all three are finite numbers (no range check). */
int ew_cli_triple(const char *v, double x[3]);

/* What every computing command shares on its command line: the stack file (the one
 * positional argument), --csv FILE, --plot FILE and --json. */
typedef struct {
  const char *stack, *csv, *plot;
  int json;
} ew_cli_outputs;
/* Take argument s (with v, the next one, or NULL) when it is one of those: returns 1 with
 * *used the number of arguments taken (1 or 2), 0 when s is something else, or −EW_ERR_USAGE
 * (reported) for a second stack file. */
int ew_cli_output_arg(const char *usage, ew_cli_outputs *o, const char *s, const char *v, int *used);
/* A command line: --help/-h (usage on stdout, exit 0), the outputs above, flag(s, ctx) for
 * each other option (1: it was a flag and is taken; may be NULL), "needs a value" for an
 * option at the end, else option(s, v, ctx) with its value (0, or the exit code, reported).
 * Refuses a missing stack file.  0 or the exit code. */
typedef int (*ew_cli_flag_fn)(const char *s, void *ctx);
typedef int (*ew_cli_option_fn)(const char *s, const char *v, void *ctx);
int ew_cli_parse(int argc, char **argv, const char *usage, ew_cli_outputs *o, ew_cli_flag_fn flag,
                 ew_cli_option_fn option, void *ctx);

/* A result's writers, each a one-line cast of the command's own ew_*_write_* function. */
typedef struct {
  ew_status (*csv)(const void *r, FILE *out, ew_error *err);
  ew_status (*plot)(const void *r, const char *path, ew_error *err);
  ew_status (*json)(const void *r, FILE *out, ew_error *err);
  void (*table)(const void *r, const void *ctx, FILE *out);
} ew_cli_writers;
/* The outputs the command line asked for, files first (on an error nothing reaches standard
 * output): the CSV file (atomic), the picture, then the JSON or the table (given ctx).  0 or
 * the exit code (reported). */
int ew_cli_emit(const ew_cli_outputs *o, const void *r, const ew_cli_writers *w, const void *ctx);

/* After parsing: the output paths checked before any work, the catalogue and the stack
 * read; 0, or the exit code (reported; *cat and *st then NULL). */
int ew_cli_read_stack(const ew_cli_outputs *o, ew_catalogue **cat, ew_stack **st);

/* The options the k·p optics commands (gain, hole-absorption) share: --model 4band|6band,
 * --lineshape sech|lorentzian, --linewidth MEV, --index N_R, --grid-step NM.  Values as in
 * ew_gain_options / ew_hole_absorption_options. */
typedef struct {
  int *model, *lorentzian; /* where the values go: the command's own options fields */
  double *linewidth_meV, *refractive_index, *grid_step_nm;
} ew_cli_optics;
/* Take option s with value v when it is one of those: 1 taken, 0 not one of them, or
 * −EW_ERR_USAGE (reported) for a bad value. */
int ew_cli_optics_arg(const char *usage, ew_cli_optics *o, const char *s, const char *v);

/* A CSV file written atomically: open it (0 or the exit code, reported), write to
 * ew_output_file_stream(*f), then close with the writer's status — committed when it is
 * EW_OK, else removed; returns the exit code (the writer's error, reported, wins). */
int ew_cli_file_open(const char *path, ew_output_file **f);
int ew_cli_file_close(ew_output_file *f, ew_status written, const ew_error *err);

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
