/* schrodinger.c — one Schrödinger pass (see schrodinger.h): grids, the eigenpairs of each
 * band in its bound window, then states (states.c), warnings and lines (lines.c). */
#include "schrodinger.h"

#include <math.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>

#include "bound.h"
#include "error.h"
#include "helper_thread.h"
#include "level_caveats.h"
#include "lines.h"
#include "nonparabolic.h"
#include "stack_caveats.h"
#include "states.h"

/* Eigenpairs of every band on the fine grid, values on the coarse one. */
typedef struct {
  ew_eigenpairs fine[EW_BAND_COUNT];
  double *coarse[EW_BAND_COUNT];
  size_t n_coarse[EW_BAND_COUNT];
} band_pairs;

static void band_pairs_free(band_pairs *bp) {
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_eigenpairs_free(&bp->fine[b]);
    free(bp->coarse[b]);
  }
}

/* The eigenvalues of the coarse grid near the fine vectors sampled on its nodes (coarse node i
 * is fine node 2i + 1: every layer has an even number of fine cells), read off the fine
 * vectors without a copy of them. */
static ew_status coarse_values(const ew_result *r, const ew_grid *coarse, ew_band band,
                               double lo, const ew_eigenpairs *fine, double **coarse_vals,
                               size_t *n_coarse, size_t *counts, ew_error *err) {
  ew_pencil *pc = ew_pencil_build(coarse, band);
  size_t k = fine->count;
  double *vals = malloc(k * sizeof *vals);
  if (!pc || !vals) {
    ew_pencil_free(pc);
    free(vals);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (coarse grid)");
  }
  ew_status rc = ew_eigen_values_near_fine(pc, lo, fine->vectors, r->grid->n, k, 1e-11, vals,
                                           counts, err);
  ew_pencil_free(pc);
  if (rc != EW_OK) {
    free(vals);
    return rc;
  }
  *coarse_vals = vals;
  *n_coarse = k;
  return EW_OK;
}

/* The factorization workspace of the fine grid: the caller's (ws->given, when its size fits)
 * or one of the pass's own, made when a band first needs it and shared by the bands. */
typedef struct {
  ew_shift_lu *given, *own;
} pass_lu;

static ew_shift_lu *pass_lu_get(pass_lu *ws, size_t n) {
  if (ws->given && ew_shift_lu_size(ws->given) == n) return ws->given;
  if (!ws->own) ws->own = ew_shift_lu_create(n);
  return ws->own;
}

/* What one band's solve gives besides its eigenpairs: its work counters and whether the Kane
 * mass applied, kept apart so that the bands can be solved on separate threads. */
typedef struct {
  size_t factorizations, solves, counts;
  int nonparabolic;
} band_work;

/* Solve one band on the fine grid (vectors) and, if asked, the coarse grid (values).  Reads r
 * (stack, grid), writes only its own outputs: bands may run concurrently. */
static ew_status solve_band(const ew_result *r, const ew_grid *coarse, ew_band band, pass_lu *ws,
                            ew_assist *assist, ew_eigenpairs *fine, double **coarse_vals,
                            size_t *n_coarse, band_work *bw, ew_error *err) {
  const ew_grid *g = r->grid;
  *coarse_vals = NULL;
  *n_coarse = 0;
  ew_pencil *p = ew_pencil_build(g, band);
  if (!p) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (pencil, n = %zu)", g->n);
  double top = ew_bound_window_top(r->stack, g, band);
  double lo = p->vmin - 1e-9 * (1.0 + fabs(p->vmin));
  if (top <= lo) { /* no well at all: an empty window */
    memset(fine, 0, sizeof *fine);
    ew_pencil_free(p);
    return EW_OK;
  }
  if (band == EW_BAND_E && ew_nonparabolic_applies(r->stack)) {
    ew_pencil_free(p);
    ew_status rc = ew_nonparabolic_levels_assist(r->stack, g, coarse, lo, top,
                                                 pass_lu_get(ws, g->n), assist, fine,
                                                 coarse_vals, &bw->counts, err);
    *n_coarse = rc == EW_OK && coarse ? fine->count : 0;
    bw->nonparabolic = rc == EW_OK;
    return rc;
  }
  ew_shift_lu *lu = pass_lu_get(ws, g->n);
  if (!lu) {
    memset(fine, 0, sizeof *fine);
    ew_pencil_free(p);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (factorization workspace, n = %zu)",
                   g->n);
  }
  ew_status rc = ew_eigen_window_assist(p, lo, top, lu, assist, fine, err);
  ew_pencil_free(p);
  bw->factorizations += fine->factorizations;
  bw->solves += fine->solves;
  bw->counts += fine->counts;
  if (rc != EW_OK || !coarse || fine->count == 0) return rc;
  return coarse_values(r, coarse, band, lo, fine, coarse_vals, n_coarse, &bw->counts, err);
}

/* The bands of a pass as a queue that every thread draws from. */
typedef struct {
  ew_result *r;
  const ew_grid *coarse;
  band_pairs *bp;
  ew_assist *assist; /* where a band offers its parts to the threads that ran out of bands */
  atomic_int next;
  band_work bw[EW_BAND_COUNT];
  ew_status rc[EW_BAND_COUNT];
  ew_error err[EW_BAND_COUNT];
} band_queue;

/* On a large grid, the free pages of the heaps back to the system (glibc: malloc_trim; the
 * CLI keeps freed memory in its heap, cli.c): a band's pencils, Kane contexts and a finished
 * thread's factorization workspace would otherwise stay resident while the last band's
 * vectors complete, the pass's peak (the 100-period Kane superlattice: 455 MiB, of it 351
 * MiB of vectors, measured). */
#define GIVE_BACK_MIN_NODES 50000
static void give_back(size_t n) {
#ifdef __GLIBC__
  if (n >= GIVE_BACK_MIN_NODES) malloc_trim(0);
#else
  (void)n;
#endif
}

/* Solve bands off the queue until it is empty, with the thread's own workspace ws. */
static void drain(band_queue *q, pass_lu *ws) {
  for (int b; (b = atomic_fetch_add(&q->next, 1)) < EW_BAND_COUNT;) {
    q->rc[b] = solve_band(q->r, q->coarse, (ew_band)b, ws, q->assist, &q->bp->fine[b],
                          &q->bp->coarse[b], &q->bp->n_coarse[b], &q->bw[b], &q->err[b]);
    give_back(q->r->grid->n);
  }
}

typedef struct {
  band_queue *q;
  pass_lu ws;
} band_helper;

static void *helper_main(void *arg) {
  band_helper *h = arg;
  drain(h->q, &h->ws);
  /* then help the bands still running, with this thread's factorization workspace */
  if (h->q->assist) ew_assist_serve(h->q->assist, &h->ws.own);
  ew_shift_lu_free(h->ws.own);
  give_back(h->q->r->grid->n);
  return NULL;
}

/* Every band of the pass: eigenpairs into bp, window tops into r, work counters summed into
 * r in band order; the first failing band's error (in band order) is reported. */
static ew_status solve_bands(ew_result *r, const ew_grid *coarse, ew_shift_lu *lu,
                             band_pairs *bp, ew_error *err) {
  band_queue q;
  memset(&q, 0, sizeof q);
  q.r = r, q.coarse = coarse, q.bp = bp;
  atomic_init(&q.next, 0);
  /* the bands are independent eigenproblems: helpers draw from the same queue (a helper that
     cannot start leaves its bands to this thread); each band's result is the same bits on
     any thread, as every factorization pivots as a fresh one would (superlu_adapter.c) */
  band_helper h[EW_BAND_COUNT];
  ew_helper th[EW_BAND_COUNT];
  ew_assist as;
  int nh = r->grid->n <= EW_HELPER_WORKSPACE_MAX_NODES ? ew_helper_count(EW_BAND_COUNT) : 0;
  if (nh > 0 && ew_assist_init(&as, nh + 1)) q.assist = &as;
  for (int k = 0; k < nh; k++) {
    h[k] = (band_helper){&q, {NULL, NULL}};
    if (!ew_helper_start(&th[k], helper_main, &h[k]) && q.assist) ew_assist_leave(q.assist);
  }
  pass_lu ws = {lu, NULL};
  drain(&q, &ws);
  if (q.assist) ew_assist_serve(q.assist, &ws.own); /* help the bands still running */
  ew_shift_lu_free(ws.own); /* before the wait: the last band may still be finishing */
  give_back(r->grid->n);
  for (int k = 0; k < nh; k++) ew_helper_join(&th[k]);
  if (q.assist) ew_assist_destroy(q.assist);
  ew_status out = EW_OK;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    if (out == EW_OK && q.rc[b] != EW_OK) {
      out = q.rc[b];
      if (err) *err = q.err[b];
    }
    double top = ew_bound_window_top(r->stack, r->grid, (ew_band)b);
    r->window_eV[b] = b == EW_BAND_E ? top : -top;
    r->work_factorizations += q.bw[b].factorizations;
    r->work_solves += q.bw[b].solves;
    r->work_counts += q.bw[b].counts;
    if (q.bw[b].nonparabolic) r->nonparabolic = 1;
  }
  return out;
}

static double step_of(const ew_stack *st, const ew_options *opt) {
  return opt && opt->grid_step_nm > 0 ? opt->grid_step_nm
         : st->grid_step_nm > 0      ? st->grid_step_nm
                                     : EW_DEFAULT_STEP_NM;
}

ew_grid *ew_schrodinger_grid(const ew_stack *st, const ew_options *opt) {
  double step = step_of(st, opt);
  if (!(step > 0) || st->total_nm / step > EW_GRID_MAX_NODES) return NULL;
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  if (!cells) return NULL;
  ew_grid_cells_for_step(st, step, cells);
  ew_grid *g = ew_grid_layered(st, cells);
  free(cells);
  return g;
}

/* The step of a pass: refuses a negative or non-finite step and a grid beyond
 * EW_GRID_MAX_NODES. */
static ew_status check_step(const ew_stack *st, const ew_options *opt, double *step,
                            ew_error *err) {
  if (isnan(opt->grid_step_nm) || opt->grid_step_nm < 0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "grid step %g nm: give a positive step, or 0 for the stack's or the default",
                   opt->grid_step_nm);
  *step = step_of(st, opt);
  if (!(*step > 0) || !isfinite(*step))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "grid step must be a positive number of nm");
  double nodes = st->total_nm / *step;
  if (nodes > EW_GRID_MAX_NODES)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0,
                   "grid of %.3g nodes (step %g nm over %g nm) is too large (limit %g): it "
                   "would need at least %.1f GB (plus %g bytes per node for every bound state)",
                   nodes, *step, st->total_nm, EW_GRID_MAX_NODES,
                   nodes * EW_GRID_BYTES_PER_NODE_BAND * EW_BAND_COUNT / 1e9,
                   EW_GRID_BYTES_PER_NODE_STATE);
  return EW_OK;
}

/* The fine grid r->grid (a copy of base when given) and, with the error estimate, the coarse
 * grid of every second node, both with U added (U == NULL: none). */
static ew_status build_grids(ew_result *r, const ew_grid *base, const double *U,
                             ew_grid **coarse, ew_error *err) {
  const ew_stack *st = r->stack;
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  if (!cells) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  ew_grid_cells_for_step(st, r->step_nm, cells);
  r->grid = base ? ew_grid_copy(base) : ew_grid_layered(st, cells);
  if (r->opt.error_estimate) {
    for (size_t k = 0; k < st->n_layers; k++) cells[k] /= 2; /* cells are even: same faces */
    *coarse = ew_grid_layered(st, cells);
  }
  free(cells);
  if (!r->grid || (r->opt.error_estimate && !*coarse))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (grid of %.0f nodes)",
                   st->total_nm / r->step_nm);
  if (!U) return EW_OK;
  /* the self-consistent electrostatic potential, on both grids */
  double *Uc = *coarse ? malloc((*coarse)->n * sizeof *Uc) : NULL;
  if (*coarse && Uc) ew_grid_sample_coarse(U, (*coarse)->n, Uc);
  int ok = ew_grid_add_potential(r->grid, U) &&
           (!*coarse || (Uc && ew_grid_add_potential(*coarse, Uc)));
  free(Uc);
  return ok ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (potential)");
}

/* The warnings of a pass after its states and lines: no estimate, the stack's caveats, the
 * levels' caveats (level_caveats.h), residuals. */
static int pass_warnings(ew_result *r) {
  if (r->unestimated &&
      !ew_result_warn_code(r, "no-error-estimate", "%zu state(s) have no error estimate: the grid of step 2h cannot "
                      "resolve them (fewer nodes than bound states, or oscillations finer "
                      "than its step); use a smaller grid step", r->unestimated))
    return 0;
  if (!ew_stack_caveats(r) || !ew_level_caveats(r)) return 0;
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].flagged &&
        !ew_result_warn_code(r, "residual", "%s failed its residual check (relative residual %.2e)",
                        r->states[i].label, r->states[i].residual))
      return 0;
  return 1;
}

ew_status ew_schrodinger_pass(const ew_stack *st, const ew_options *optin, const double *U,
                              ew_result **out, ew_error *err) {
  return ew_schrodinger_pass_lu(st, optin, U, NULL, out, err);
}

ew_status ew_schrodinger_pass_lu(const ew_stack *st, const ew_options *optin, const double *U,
                                 ew_shift_lu *lu, ew_result **out, ew_error *err) {
  return ew_schrodinger_pass_on(st, optin, NULL, U, lu, out, err);
}

ew_status ew_schrodinger_pass_on(const ew_stack *st, const ew_options *optin, const ew_grid *base,
                                 const double *U, ew_shift_lu *lu, ew_result **out,
                                 ew_error *err) {
  *out = NULL;
  ew_options opt;
  if (optin) opt = *optin;
  else ew_options_default(&opt);
  double step = 0.0;
  ew_status rc = check_step(st, &opt, &step, err);
  if (rc != EW_OK) return rc;
  ew_result *r = calloc(1, sizeof *r);
  if (!r) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  r->stack = st;
  r->opt = opt;
  r->step_nm = step;
  ew_grid *coarse = NULL;
  band_pairs bp;
  memset(&bp, 0, sizeof bp);
  rc = build_grids(r, base, U, &coarse, err);
  if (rc == EW_OK) rc = solve_bands(r, coarse, lu, &bp, err);
  if (rc == EW_OK) rc = ew_states_build(r, bp.fine, bp.coarse, bp.n_coarse, err);
  if (rc == EW_OK) rc = ew_lines_build(r, err);
  if (rc == EW_OK && !pass_warnings(r)) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  band_pairs_free(&bp);
  ew_grid_free(coarse);
  if (rc == EW_ERR_NOMEM) /* what it takes, measured (grid.h), so the user can size the step */
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "%s: a grid of %.0f nodes needs about %.2g GB "
                 "plus %g bytes per node for every bound state (%.3g MB per state); use a "
                 "larger grid step", err ? err->message : "out of memory",
                 st->total_nm / step,
                 st->total_nm / step * EW_GRID_BYTES_PER_NODE_BAND * EW_BAND_COUNT / 1e9,
                 EW_GRID_BYTES_PER_NODE_STATE,
                 st->total_nm / step * EW_GRID_BYTES_PER_NODE_STATE / 1e6);
  if (rc != EW_OK) {
    ew_result_free(r);
    return rc;
  }
  *out = r;
  return EW_OK;
}
