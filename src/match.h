/* match.h — inverse matching: which value of a stack key (or which pair of values of two
 * keys) puts a line (or two lines) at a target energy or wavelength. */
#ifndef EW_MATCH_H
#define EW_MATCH_H

#include <stddef.h>
#include <stdio.h>

#include "epiwell.h"
#include "range.h"
#include "result.h"
#include "stack_model.h"

typedef struct {
  double value[2];        /* varied value(s) */
  double energy_eV[2];    /* line energy there */
  double wavelength_nm[2];
  double residual_eV[2];  /* line − target at the solution */
  /* 1D with a tolerance: values at target −/+ tolerance (NaN when not reached in the range)
   * and the uncertainty = half their distance (NaN when one is missing) */
  double value_minus, value_plus, uncertainty;
  char warnings[EW_WARNING_CODES_MAX]; /* the stack's warning codes at value, ';'-joined */
} ew_wf_solution;

/* A start of Newton's method in a 2D match part (see ew_wf_match_opt.shard_n): a grid point
 * (i, j), its relative residual r, whether it is the best corner of a cell across which both
 * residuals change sign (cell 1) or the part's best point (cell 0, when the part has no such
 * cell), and where Newton went from it (found 0: nowhere in the box). */
typedef struct {
  double r;
  size_t i, j;
  int cell, found;
  ew_wf_solution sol;
} ew_wf_match_start;

typedef struct {
  size_t nkeys;            /* 1 or 2 */
  char key[2][EW_WF_KEY_MAX];
  char line[2][40];
  ew_wf_quantity target[2];
  int have_tolerance;
  ew_wf_quantity tolerance;
  size_t n;                /* solutions found */
  ew_wf_solution *sol;
  /* what the range reaches: line energy min/max over the samples (1D), NaN if never bound */
  double reached_min_eV[2], reached_max_eV[2];
  char message[512];       /* "no value … reaches …" when n == 0, otherwise empty */
  /* A part of a sharded match (shard_n > 1): the samples, range ends and shard it was cut
   * from; 1D: the solutions of its intervals (no message); 2D: the Newton starts of its rows
   * (n = 0 until merged, ew_wf_match_merge_starts). */
  size_t shard_k, shard_n;  /* 1 and 1 for a whole match */
  size_t samples[2];
  double from[2], to[2];
  ew_wf_match_start *starts;
  size_t n_starts;
} ew_wf_match_result;

typedef struct {
  int threads;     /* 0: every core */
  size_t samples;  /* samples per range; 0: from STEP if given, else 41 (1D) / 11 (2D) */
  ew_progress_fn progress; /* may be NULL: one step per solve, total 0; nonzero cancels */
  void *progress_ctx;
  /* Part shard_k of shard_n (1 ≤ k ≤ n; n ≤ 1: the whole match): 1D, the K-th of N
   * contiguous runs of the sample intervals (an exact hit on a sample belongs to the interval
   * it starts, the last sample to the last part); 2D, of the rows of grid cells.  Every part
   * samples its points exactly as the whole match would, so ew_wf_match_merge of all parts
   * is the whole match to the last bit. */
  size_t shard_k, shard_n;
} ew_wf_match_opt;

/* Every value of ranges[0] (1D; nranges = 1, nlines = 1) or pair of values (2D; nranges =
 * nlines = 2) that puts the line(s) at the target(s).  Lines are "A-B" with A, B level labels
 * of one band (intersubband, |E_A − E_B|) or an electron and a hole level (interband,
 * E_e − E_h).  1D: sampling, bracketing of sign changes (a line that becomes bound inside the
 * range is bracketed from the point where it appears, located by bisection) and Brent's
 * method to 1e-6 relative in the value.  2D: a coarse grid search, then Newton's method with a
 * central finite-difference Jacobian from the best grid cells, clamped to the box.
 * tolerance (may be NULL, 1D only): also solve at target ± tolerance.  No solution is not an
 * error: n = 0 and message says what range of the line the range reaches. */
ew_status ew_wf_match(const ew_wf_model *m, const ew_wf_range *ranges, size_t nranges,
                      const char *const *lines, const ew_wf_quantity *targets, size_t nlines,
                      const ew_wf_quantity *tolerance, const ew_wf_match_opt *o,
                      ew_wf_match_result *out, ew_error *err);
void ew_wf_match_result_free(ew_wf_match_result *r); /* frees sol, starts; NULL is a no-op */

/* The runs [*lo, *hi) of n items in part k of parts (1 ≤ k ≤ parts): contiguous, in order. */
void ew_wf_match_part_span(size_t n, size_t k, size_t parts, size_t *lo, size_t *hi);
/* 2D, merging: Newton's starts st[0..n) gathered from every part become what the whole match
 * keeps (the same selection, de-duplication and order) in out->sol and out->n.  st is
 * reordered.  EW_ERR_NOMEM. */
ew_status ew_wf_match_merge_starts(ew_wf_match_start *st, size_t n, ew_wf_match_result *out,
                                   ew_error *err);
/* The "no value … puts …" message of a merged match without solutions (out->n == 0), from
 * its keys, lines, targets, range ends and reached energies. */
void ew_wf_match_message(ew_wf_match_result *out);
void ew_wf_match_print(const ew_wf_match_result *r, FILE *out);      /* table */
void ew_wf_match_print_json(const ew_wf_match_result *r, FILE *out); /* one JSON object */

#endif
