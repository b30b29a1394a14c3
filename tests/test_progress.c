/* test_progress.c — progress callbacks and cancelling through the public API (epiwell.h only):
 * ew_options.progress of ew_solve, ew_sweep_options.progress of a sweep on two threads,
 * ew_match_progress.  Expected counts come from the contracts in epiwell.h and README
 * ("epiwell sweep": a range FROM:TO:STEP has (TO − FROM)/STEP + 1 points; part K of N holds
 * the points [(K−1)·P/N, K·P/N)), worked out by hand here, not by the library. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "epiwell.h"

#define MAX_CALLS 512
typedef struct {
  size_t n;                /* calls so far */
  size_t done[MAX_CALLS], total[MAX_CALLS];
  size_t cancel_at;        /* return 1 when done reaches it (0: never) */
} recorder;

/* Serialised by the library (epiwell.h): no lock needed; a call after the cancel is an error
 * the test sees as n > cancel_at. */
static int record(void *ctx, size_t done, size_t total) {
  recorder *r = ctx;
  if (r->n < MAX_CALLS) {
    r->done[r->n] = done;
    r->total[r->n] = total;
  }
  r->n++;
  return r->cancel_at && done >= r->cancel_at;
}

static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  ew_error err = {0};
  return ew_catalogue_load("materials", &cat, &err) == EW_OK ? 0 : -1;
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

/* A sweep of examples/detector_well.cfg over well.thickness 4:6.9:0.1 (30 points, by hand:
 * (6.9 − 4)/0.1 + 1 = 30) on two threads, coarse grid; CSV into a memory stream. */
static ew_status run_sweep(recorder *r, size_t shard_k, size_t shard_n, char **csv,
                           ew_error *err) {
  ew_sweep *sw = NULL;
  size_t len = 0;
  FILE *f = open_memstream(csv, &len);
  assert_non_null(f);
  assert_int_equal(ew_sweep_create(&sw, err), EW_OK);
  assert_int_equal(ew_sweep_vary(sw, "well.thickness=4:6.9:0.1", err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  opt.error_estimate = 0;
  opt.excitons = 0;
  recorder ignored = {0};
  opt.progress = record; /* a solve's own callback: ignored by the sweep (epiwell.h) */
  opt.progress_ctx = &ignored;
  assert_int_equal(ew_sweep_open(sw, "examples/detector_well.cfg", cat, &opt, err), EW_OK);
  ew_sweep_options so;
  ew_sweep_options_default(&so);
  so.threads = 2;
  so.shard_k = shard_k;
  so.shard_n = shard_n;
  so.progress = r ? record : NULL;
  so.progress_ctx = r;
  ew_status rc = ew_sweep_compute(sw, &so, f, NULL, err);
  fclose(f);
  ew_sweep_free(sw);
  assert_int_equal(ignored.n, 0);
  return rc;
}

static size_t count_lines(const char *s) {
  size_t n = 0;
  for (; *s; s++) n += *s == '\n';
  return n;
}

/* Every point once, in order, total = the points of the part. */
static void sweep_counts_are_exact(void **state) {
  (void)state;
  ew_error err = {0};
  recorder r = {0};
  char *csv = NULL;
  assert_int_equal(run_sweep(&r, 0, 0, &csv, &err), EW_OK);
  assert_int_equal(r.n, 30);
  for (size_t i = 0; i < r.n; i++) {
    assert_int_equal(r.done[i], i + 1);
    assert_int_equal(r.total[i], 30);
  }
  assert_int_equal(count_lines(csv), 31); /* header + 30 rows */
  free(csv);
  /* part 3 of 4: points [2·30/4, 3·30/4) = [15, 22), 7 points */
  memset(&r, 0, sizeof r);
  assert_int_equal(run_sweep(&r, 3, 4, &csv, &err), EW_OK);
  assert_int_equal(r.n, 7);
  for (size_t i = 0; i < r.n; i++) {
    assert_int_equal(r.done[i], i + 1);
    assert_int_equal(r.total[i], 7);
  }
  assert_int_equal(count_lines(csv), 7); /* no header: only part 1 writes it */
  free(csv);
}

/* Cancel after k points: the cancel code, exactly k calls, no row written (the 30 points
 * are one chunk); a later sweep is unaffected (byte-equal to the first full one). */
static void sweep_cancel_after_k(void **state) {
  (void)state;
  ew_error err = {0};
  char *full = NULL, *cut = NULL, *again = NULL;
  assert_int_equal(run_sweep(NULL, 0, 0, &full, &err), EW_OK);
  for (size_t k = 1; k <= 5; k += 4) {
    recorder r = {0};
    r.cancel_at = k;
    assert_int_equal(run_sweep(&r, 0, 0, &cut, &err), EW_ERR_CANCELLED);
    assert_int_equal(r.n, k);
    assert_int_equal(r.done[k - 1], k);
    char want[128];
    snprintf(want, sizeof want, "after %zu of 30 points", k);
    assert_non_null(strstr(err.message, want));
    assert_int_equal(count_lines(cut), 1); /* the header only */
    free(cut);
  }
  assert_int_equal(run_sweep(NULL, 0, 0, &again, &err), EW_OK);
  assert_string_equal(full, again);
  free(full);
  free(again);
}

/* ew_solve: the pass and the exciton pass; cancelling gives no result. */
static void solve_counts_and_cancel(void **state) {
  (void)state;
  ew_error err = {0};
  ew_stack *st = NULL;
  ew_result *res = NULL;
  assert_int_equal(ew_stack_read_file("examples/detector_well.cfg", cat, &st, &err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  assert_null(opt.progress); /* the default: none */
  recorder r = {0};
  opt.progress = record;
  opt.progress_ctx = &r;
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_OK);
  assert_int_equal(r.n, 2);
  assert_int_equal(r.done[0], 1);
  assert_int_equal(r.done[1], 2);
  assert_int_equal(r.total[0], 2);
  ew_result_free(res);
  memset(&r, 0, sizeof r);
  opt.excitons = 0;
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_OK);
  assert_int_equal(r.n, 1);
  assert_int_equal(r.total[0], 1);
  ew_result_free(res);
  memset(&r, 0, sizeof r);
  r.cancel_at = 1;
  opt.excitons = 1;
  res = (ew_result *)&r; /* must be set to NULL */
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_ERR_CANCELLED);
  assert_null(res);
  assert_int_equal(r.n, 1);
  assert_int_equal(err.code, EW_ERR_CANCELLED);
  ew_stack_free(st);
}

/* A self-consistent solve: one call per outer iteration, then the jump to the budget
 * (sp_max_iterations) on convergence, the final pass, the exciton pass. */
static void self_consistent_counts(void **state) {
  (void)state;
  ew_error err = {0};
  ew_stack *st = NULL;
  ew_result *res = NULL;
  assert_int_equal(ew_stack_read_file("examples/doped_detector.cfg", cat, &st, &err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  opt.sp_max_iterations = 40;
  recorder r = {0};
  opt.progress = record;
  opt.progress_ctx = &r;
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_OK);
  size_t it = (size_t)ew_result_sp_iterations(res);
  assert_true(it >= 2 && it < 40);
  assert_int_equal(r.n, it + 2); /* it − 1 iterations, the converged one, final, excitons */
  for (size_t i = 0; i + 1 < it; i++) assert_int_equal(r.done[i], i + 1);
  assert_int_equal(r.done[it - 1], 40);
  assert_int_equal(r.done[it], 41);
  assert_int_equal(r.done[it + 1], 42);
  assert_int_equal(r.total[0], 42);
  ew_result_free(res);
  memset(&r, 0, sizeof r);
  r.cancel_at = 1; /* between the first and the second outer iteration */
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_ERR_CANCELLED);
  assert_null(res);
  assert_int_equal(r.n, 1);
  ew_stack_free(st);
}

/* A match counts its solves (total 0) and stops when asked. */
static void match_counts_and_cancel(void **state) {
  (void)state;
  for (int cancel = 0; cancel < 2; cancel++) {
    ew_error err = {0};
    ew_match *mt = NULL;
    recorder r = {0};
    r.cancel_at = cancel ? 3 : 0;
    assert_int_equal(ew_match_create(&mt, &err), EW_OK);
    assert_int_equal(ew_match_vary(mt, "well.thickness=4:12", &err), EW_OK);
    assert_int_equal(ew_match_line(mt, "e1-e2", &err), EW_OK);
    assert_int_equal(ew_match_target(mt, "9.0um", &err), EW_OK);
    assert_int_equal(ew_match_progress(mt, record, &r, &err), EW_OK);
    ew_options opt;
    ew_options_default(&opt);
    opt.grid_step_nm = 0.1;
    opt.excitons = 0;
    ew_status rc = ew_match_compute(mt, "examples/detector_well.cfg", cat, &opt, 2, 11, &err);
    if (cancel) {
      assert_int_equal(rc, EW_ERR_CANCELLED);
      assert_int_equal(r.n, 3);
      assert_int_equal(ew_match_solution_count(mt), 0);
    } else {
      assert_int_equal(rc, EW_OK);
      assert_true(r.n >= 11); /* at least the 11 samples */
      for (size_t i = 0; i < r.n && i < MAX_CALLS; i++) {
        assert_int_equal(r.done[i], i + 1);
        assert_int_equal(r.total[i], 0);
      }
      assert_int_equal(ew_match_solution_count(mt), 1);
    }
    ew_match_free(mt);
  }
  assert_int_equal(ew_match_progress(NULL, record, NULL, NULL), EW_ERR_USAGE);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(sweep_counts_are_exact),
      cmocka_unit_test(sweep_cancel_after_k),
      cmocka_unit_test(solve_counts_and_cancel),
      cmocka_unit_test(self_consistent_counts),
      cmocka_unit_test(match_counts_and_cancel),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
