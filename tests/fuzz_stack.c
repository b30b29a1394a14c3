/* fuzz_stack.c — libFuzzer target over the stack reader and the solver entry.
 *
 * One input is the text of a stack file.  It goes through ew_stack_read_string (with the
 * catalogue) and, when accepted and small, through ew_solve on a coarse grid (0.2 nm) so that
 * one execution stays in the millisecond range.  Besides crashes and sanitizer reports, the
 * target aborts when a documented contract is broken (see fuzz_check_one): an accepted stack
 * is non-empty with finite positions, a rejection carries a status in 1..6 and a message, a
 * solved result has as many states as its certified counts and only finite numbers.
 *
 *   make fuzz                        build with clang and run FUZZ_RUNS executions
 *   build/fuzz/fuzz_stack FILE...    replay inputs (e.g. a crash from tests/fuzz/regressions)
 *
 * tests/test_robust.c includes this file with EW_FUZZ_NO_MAIN defined and replays every file
 * under tests/fuzz/ through fuzz_check_one, so the corpus and the regressions run in
 * `make check` as well. */
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "epiwell.h"
#include "stack.h"

/* Keep executions fast: solve only stacks up to this size (nm, layers). */
#define FUZZ_MAX_TOTAL_NM 200.0
#define FUZZ_MAX_LAYERS 40
#define FUZZ_GRID_STEP_NM 0.2
#define FUZZ_MAX_INPUT 65536

/* Checks one input; returns NULL when every contract held, otherwise what broke (static
 * text).  *solved tells whether the solver ran. */
static const char *fuzz_check_one(const uint8_t *data, size_t size, const ew_catalogue *cat,
                                  int *solved) {
  *solved = 0;
  if (size > FUZZ_MAX_INPUT) return NULL; /* stack files are small; not interesting */
  char *text = malloc(size + 1);
  if (!text) return NULL;
  memcpy(text, data, size);
  text[size] = '\0'; /* an embedded NUL ends the text, as in any C string */

  const char *bad = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  ew_stack *st = (ew_stack *)(uintptr_t)1; /* sentinel: must be overwritten */
  ew_status rc = ew_stack_read_string(text, "fuzz.cfg", cat, &st, &err);
  free(text);
  if (rc != EW_OK) {
    if (st != NULL) return "rejected stack but *out is not NULL";
    if (rc < EW_ERR_USAGE || rc > EW_ERR_NUMERIC) return "reader status outside 1..6";
    if (err.code != rc) return "err.code differs from the returned status";
    if (err.message[0] == '\0') return "rejection without a message";
    if (err.line < 0) return "rejection with a negative line";
    return NULL;
  }
  if (!st) return "accepted stack but *out is NULL";
  if (st->n_layers < 1) bad = "accepted stack without layers";
  else if (!(st->total_nm > 0) || !isfinite(st->total_nm)) bad = "total thickness not finite > 0";
  for (size_t i = 0; !bad && i < st->n_layers; i++) {
    const ew_layer *L = &st->layers[i];
    if (!(L->thickness_nm > 0) || !isfinite(L->z_start_nm)) bad = "layer thickness/position";
    else if (!isfinite(L->bands.Ec_eV) || !isfinite(L->bands.Ev_hh_eV) ||
             !isfinite(L->bands.Ev_lh_eV) || !(L->bands.me > 0) || !(L->bands.mhh_z > 0) ||
             !(L->bands.mlh_z > 0))
      bad = "accepted layer with non-finite edges or non-positive masses";
  }
  if (bad || st->total_nm > FUZZ_MAX_TOTAL_NM || st->n_layers > FUZZ_MAX_LAYERS) {
    ew_stack_free(st);
    return bad;
  }

  *solved = 1;
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = FUZZ_GRID_STEP_NM;
  ew_result *res = (ew_result *)(uintptr_t)1;
  memset(&err, 0, sizeof err);
  rc = ew_solve(st, &opt, &res, &err);
  if (rc != EW_OK) {
    if (res != NULL) bad = "failed solve but *out is not NULL";
    else if (rc < EW_ERR_USAGE || rc > EW_ERR_NUMERIC) bad = "solver status outside 1..6";
    else if (err.message[0] == '\0') bad = "solver failure without a message";
    ew_stack_free(st);
    return bad;
  }
  size_t n = ew_result_state_count(res), nodes = ew_result_node_count(res), sum = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) sum += ew_result_band_count(res, (ew_band)b);
  if (sum != n) bad = "state count differs from the certified band counts";
  for (size_t i = 0; !bad && i < n; i++) {
    const ew_state *s = ew_result_state(res, i);
    const double *psi = ew_result_wavefunction(res, i);
    if (!isfinite(s->energy_eV) || !isfinite(s->residual) || !isfinite(s->depth_eV))
      bad = "state with a non-finite energy, residual or depth";
    else if (!(s->error_eV == -1.0 || (s->error_eV >= 0 && isfinite(s->error_eV))))
      bad = "error estimate neither -1 nor finite >= 0";
    else if (s->layer >= st->n_layers)
      bad = "state located in a layer that does not exist";
    else if (!(s->layer_probability >= 0 && s->layer_probability <= 1 + 1e-9))
      bad = "layer probability outside [0, 1]";
    else if (!(s->inplane_mass > 0 && isfinite(s->inplane_mass)))
      bad = "in-plane mass not finite and positive";
    for (size_t k = 0; !bad && k < nodes; k++)
      if (!isfinite(psi[k])) bad = "non-finite wavefunction value";
  }
  for (size_t j = 0; !bad && j < ew_result_line_count(res); j++) {
    const ew_line *l = ew_result_line(res, j);
    if (l->upper >= n || l->lower >= n) bad = "line names a state that does not exist";
    else if (!isfinite(l->energy_eV) || !isfinite(l->overlap) || !isfinite(l->dipole_nm))
      bad = "line with a non-finite energy, overlap or dipole";
  }
  ew_result_free(res);
  ew_stack_free(st);
  return bad;
}

#ifndef EW_FUZZ_NO_MAIN
/* libconfig 1.5 leaks the text of a string token that its parser discards on a syntax error
 * (no bison %destructor): through strbuf_append for a non-empty string, straight from the
 * lexer (libconfig_yylex) for "" — e.g. 'name "" x'.  Not ours (epiwell always calls
 * config_destroy), and the fuzzer hits it constantly. */
const char *__lsan_default_suppressions(void);
const char *__lsan_default_suppressions(void) {
  return "leak:strbuf_append\nleak:libconfig_yylex\n";
}

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* test harness only: the catalogue is loaded once for the whole fuzzing run */
static ew_catalogue *fuzz_cat;

int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  ew_error err;
  memset(&err, 0, sizeof err);
  const char *env = getenv("EPIWELL_MATERIALS");
  if (ew_catalogue_load(env && env[0] ? env : "materials", &fuzz_cat, &err) != EW_OK) {
    char buf[2048];
    fprintf(stderr, "fuzz_stack: cannot load the catalogue (%s); run from the project root "
            "or set EPIWELL_MATERIALS\n", ew_error_text(&err, buf, sizeof buf));
    exit(1);
  }
  return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  int solved;
  const char *bad = fuzz_check_one(data, size, fuzz_cat, &solved);
  if (bad) {
    fprintf(stderr, "fuzz_stack: contract broken: %s\n", bad);
    abort();
  }
  return 0;
}
#endif
