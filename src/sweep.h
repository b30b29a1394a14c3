/* sweep.h — parameter sweeps: one or two varied keys over ranges, every level and main line
 * at every point, as CSV and/or JSON, on many threads and in shards.
 *
 * Level identity across a sweep: levels are labelled by their order within their band (e1 is
 * always the lowest electron level).  The 1D BenDaniel–Duke problem with ψ = 0 at both walls
 * is a regular Sturm–Liouville problem, whose spectrum is non-degenerate (two solutions with
 * the same energy and the same boundary value would have a vanishing Wronskian, hence be
 * proportional), so two levels of one band can never cross as a parameter varies: their order
 * is their identity.  A level that becomes bound inside the sweep adds a column whose earlier
 * rows are empty.  Results do not depend on the number of threads. */
#ifndef EW_SWEEP_H
#define EW_SWEEP_H

#include <stddef.h>
#include <stdio.h>

#include "epiwell.h"
#include "range.h"
#include "result.h"
#include "stack_model.h"

typedef struct {
  int threads;            /* 0: every core (omp_get_num_procs) */
  size_t shard_k, shard_n;/* compute part K (1-based) of N contiguous parts; N = 0 or 1: all */
  int header;             /* CSV header: 1 always, 0 never, -1 (default) part 1 only */
  size_t min_levels;      /* columns for at least this many levels per band (--levels) */
  /* after each point of the part (ew_progress_fn, epiwell.h); may be NULL; nonzero cancels:
   * EW_ERR_CANCELLED, no row written after the chunks already written */
  ew_progress_fn progress;
  void *progress_ctx;
  /* when not NULL: receives the columns and every row of this part, in point order (for
   * pictures); release with ew_wf_table_free.  Left empty when the sweep fails. */
  struct ew_wf_table *table;
} ew_wf_sweep_opt;

/* A sweep held in memory: the CSV's columns and rows (NaN where the CSV cell is empty). */
typedef struct ew_wf_table {
  char stack[512];     /* the stack file's name as given */
  size_t nkeys;        /* the first nkeys columns are the varied keys */
  size_t ncol, nrows;
  char (*names)[64];   /* [ncol] column names as in the CSV header */
  double *v;           /* [nrows × ncol], row-major (NaN in the last column, "warnings") */
  char (*warnings)[EW_WARNING_CODES_MAX]; /* [nrows] the point's warning codes, ';'-joined */
  /* for the pictures' level tracking (sweep_plot.c): the level columns are columns
     lev0 … lev0 + nlev − 1, band[k] the band of level column k; psi holds each point's ψ of
     each level column at EW_WF_PSI_SAMPLES evenly spaced z over the stack, unit norm
     (zeros when the level is not bound) — [nrows × nlev × EW_WF_PSI_SAMPLES] */
  size_t lev0, nlev;
  ew_band band[3 * 64];
  double *psi;
} ew_wf_table;
#define EW_WF_PSI_SAMPLES 160
void ew_wf_table_free(ew_wf_table *t); /* frees the contents, keeps t; NULL is a no-op */

void ew_wf_sweep_opt_default(ew_wf_sweep_opt *o);

/* Sweep one or two ranges (outer loop the first) and write CSV to csv and/or JSON to json
 * (either may be NULL).  Columns: the varied keys, then every level (e1_eV, …, hh1_eV, …,
 * lh1_eV, …) and every main line (intersubband NAME_eV, NAME_um, NAME_f; interband NAME_eV,
 * NAME_nm, NAME_overlap), and last "warnings": the point's warning codes joined by ';' (JSON:
 * an array of codes).  The column set is fixed before any row is written, identically
 * in every shard: the levels bound on a fixed sub-grid of the sweep (up to 9 evenly spaced
 * values per axis, both ends included; all values of an axis with at most 9), raised to
 * min_levels per band; interband columns e_n–h_n for n up to the smaller of the two
 * bands' level columns (≤ EW_WF_INTERBAND_MAX).  A point with more bound levels than the
 * columns hold fails the sweep (EW_ERR_USAGE, the message names the point and the --levels
 * to use).  Missing values (a level not bound at that point) are empty (CSV) or null
 * (JSON).  Part K of N holds the points [(K−1)·P/N, K·P/N) in order, so the parts
 * concatenate byte for byte to the whole sweep's CSV.  Rows are written in point order
 * whatever the thread count; on an error the streams hold partial output (the CLI buffers
 * them and writes nothing). */
/* Points of a sweep over ranges (nr 1 or 2: the product of their counts), and the axis
 * values of point p (outer loop the first range) into vals[nr]. */
size_t ew_wf_sweep_points(const ew_wf_range *ranges, size_t nr);
void ew_wf_sweep_point(const ew_wf_range *ranges, size_t nr, size_t p, double *vals);

ew_status ew_wf_sweep(const ew_wf_model *m, const ew_wf_range *ranges, size_t nranges,
                      const ew_wf_sweep_opt *o, FILE *csv, FILE *json, ew_error *err);

#endif
