/* dispersion.c — hole subbands against k∥ in the k·p model (see dispersion.h). */
#include "dispersion.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "bound.h"
#include "eigen.h"
#include "error.h"
#include "kp_solve.h"
#include "schrodinger.h"

#define GUARD 4 /* extra vectors of the iterated block (kp_solve.h) */
#define MAX_WANTED 56

const char *ew_dispersion_character_name(int c) {
  return c == 0 ? "hh" : c == 1 ? "lh" : c == 2 ? "so" : "e";
}

void ew_dispersion_clear(ew_dispersion *d) {
  free(d->k_inv_nm);
  free(d->label);
  free(d->character);
  free(d->weight);
  free(d->branch_eV);
  free(d->energy_eV);
  free(d->certified);
  memset(d, 0, sizeof *d);
}

void ew_dispersion_label_pair(ew_dispersion *d, size_t j, const double complex *X, size_t dim,
                              int nb, const double *w, int seen[EW_DISP_CHARACTERS]) {
  double wt[EW_DISP_CHARACTERS] = {0, 0, 0, 0};
  for (size_t v = 0; v < 2; v++)
    for (size_t k = 0; k < dim; k++) {
      int comp = (int)(k % (size_t)nb);
      int c = comp == 0 || comp == 3 ? 0 : comp < 4 ? 1 : comp < 6 ? 2 : 3;
      wt[c] += 0.5 * w[k / (size_t)nb] * creal(X[v * dim + k] * conj(X[v * dim + k]));
    }
  int best = 0;
  for (int c = 1; c < EW_DISP_CHARACTERS; c++)
    if (wt[c] > wt[best]) best = c;
  d->character[j] = best;
  memcpy(d->weight + EW_DISP_CHARACTERS * j, wt, sizeof wt);
  snprintf(d->label[j], sizeof d->label[j], "%s%d", ew_dispersion_character_name(best),
           ++seen[best]);
}

/* labels from the k∥ = 0 vectors: pair j's weights in the hh, lh, so components */
static void label_pairs(ew_dispersion *d, const double complex *X, size_t dim, int nb,
                        const double *w) {
  int seen[EW_DISP_CHARACTERS] = {0, 0, 0, 0};
  for (size_t j = 0; j < d->subbands; j++)
    ew_dispersion_label_pair(d, j, X + 2 * j * dim, dim, nb, w, seen);
}

ew_status ew_dispersion_alloc(ew_dispersion *d, size_t points, size_t sub) {
  d->k_inv_nm = malloc(points * sizeof *d->k_inv_nm);
  d->certified = calloc(points, sizeof *d->certified);
  d->label = calloc(sub ? sub : 1, sizeof *d->label);
  d->character = calloc(sub ? sub : 1, sizeof *d->character);
  d->weight = calloc(EW_DISP_CHARACTERS * (sub ? sub : 1), sizeof *d->weight);
  d->branch_eV = malloc(2 * (sub ? sub : 1) * points * sizeof *d->branch_eV);
  d->energy_eV = malloc((sub ? sub : 1) * points * sizeof *d->energy_eV);
  return d->k_inv_nm && d->certified && d->label && d->character && d->weight &&
                 d->branch_eV && d->energy_eV
             ? EW_OK
             : EW_ERR_NOMEM;
}

/* How many eigenvalues the window holds at k∥ = 0 (even: Kramers pairs). */
static ew_status bound_count(const ew_kp_pencil *H, double lo, double top, size_t *m,
                             ew_error *err) {
  ew_kp_inertia *in = ew_kp_inertia_create(H->nb);
  if (!in) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p count)");
  size_t c_lo = 0, c_top = 0;
  ew_status rc = ew_kp_count_below(in, H, lo, &c_lo, err);
  if (!rc) rc = ew_kp_count_below(in, H, top, &c_top, err);
  ew_kp_inertia_free(in);
  if (rc) return rc;
  if (c_lo != 0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: %zu eigenvalues below the lowest "
                   "potential (spurious solutions: check the Luttinger parameters)", c_lo);
  *m = c_top & ~(size_t)1;
  return EW_OK;
}

typedef struct {
  ew_grid *g;
  ew_kp_profile *prof;
  ew_kp_pencil *H;
  ew_kp_solver *sol;
  double *vals;
} work_t;

static void work_free(work_t *w) {
  ew_grid_free(w->g);
  ew_kp_profile_free(w->prof);
  ew_kp_pencil_free(w->H);
  ew_kp_solver_free(w->sol);
  free(w->vals);
}

static ew_status start_vectors(const ew_grid *g, double top, ew_kp_solver *sol, size_t p,
                               int nb, ew_error *err);

static ew_status setup(ew_dispersion *d, const ew_stack *st, const ew_dispersion_options *o,
                       work_t *w, size_t *m, double *lo, ew_error *err) {
  ew_options so;
  ew_options_default(&so);
  so.grid_step_nm = o->grid_step_nm;
  w->g = ew_schrodinger_grid(st, &so);
  if (!w->g) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p grid)");
  d->nodes = w->g->n;
  d->grid_step_nm = so.grid_step_nm > 0 ? so.grid_step_nm
                    : st->grid_step_nm > 0 ? st->grid_step_nm : EW_DEFAULT_STEP_NM;
  ew_status rc = ew_kp_profile_build(st, w->g, (ew_kp_model)o->model,
                                     o->symmetrised ? EW_KP_SYMMETRISED : EW_KP_BURT_FOREMAN,
                                     o->axial, &w->prof, err);
  if (rc) return rc;
  w->H = ew_kp_pencil_create(w->prof);
  if (!w->H) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p pencil)");
  ew_kp_pencil_fill(w->prof, 0.0, 0.0, w->H);
  double top = fmin(ew_bound_window_top(st, w->g, EW_BAND_HH),
                    ew_bound_window_top(st, w->g, EW_BAND_LH));
  d->window_eV = -top;
  *lo = w->prof->vmin - 1e-6 * (1.0 + fabs(w->prof->vmin));
  if (!(top > *lo))
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "no hole well: the valence band has no "
                   "confining layer");
  if ((rc = bound_count(w->H, *lo, top, m, err))) return rc;
  if (*m == 0)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "no hole subband is bound at k = 0");
  if (*m > MAX_WANTED) *m = MAX_WANTED; /* the deepest MAX_WANTED / 2 subbands */
  w->sol = ew_kp_solver_create(w->g->n, o->model, *m + GUARD);
  w->vals = malloc((*m + GUARD) * sizeof *w->vals);
  if (!w->sol || !w->vals) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p)");
  return start_vectors(w->g, top, w->sol, *m, o->model, err);
}

/* Start vectors at k∥ = 0: the single-band heavy- and light-hole eigenvectors of the same
 * grid (hamiltonian.h, eigen.h), in the |3/2, ±3/2> and |3/2, ±1/2> components.  At k∥ = 0
 * the 4-band pencil is exactly those two single-band pencils twice over (kp_hamiltonian.h),
 * so the block starts converged; the 6-band one only adds the split-off coupling of the
 * light holes.  The guard columns keep the solver's pseudo-random start. */
static ew_status start_vectors(const ew_grid *g, double top, ew_kp_solver *sol, size_t p,
                               int nb, ew_error *err) {
  double complex *X = ew_kp_solver_start(sol);
  size_t dim = g->n * (size_t)nb, col = 0;
  for (int band = EW_BAND_HH; band <= EW_BAND_LH; band++) {
    ew_pencil *pc = ew_pencil_build(g, (ew_band)band);
    if (!pc) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p start)");
    ew_eigenpairs ep;
    memset(&ep, 0, sizeof ep);
    double lo = pc->vmin - 1e-9 * (1.0 + fabs(pc->vmin));
    ew_status rc = top > lo ? ew_eigen_window(pc, lo, top, 1, &ep, err) : EW_OK;
    ew_pencil_free(pc);
    if (rc) {
      ew_eigenpairs_free(&ep);
      return rc;
    }
    for (size_t j = 0; j < ep.count && col + 2 <= p; j++)
      for (int spin = 0; spin < 2; spin++, col++) {
        int comp = band == EW_BAND_HH ? (spin ? 3 : 0) : (spin ? 2 : 1);
        memset(X + col * dim, 0, dim * sizeof *X);
        for (size_t i = 0; i < g->n; i++) X[col * dim + i * (size_t)nb + (size_t)comp] = ep.vectors[j * g->n + i];
      }
    ew_eigenpairs_free(&ep);
  }
  return EW_OK;
}

static ew_status check_options(const ew_dispersion_options *o, ew_error *err) {
  if (o->model != 4 && o->model != 6 && o->model != 8)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "model %d: give 4 (4band), 6 (6band) or 8 "
                   "(8band)", o->model);
  if (o->direction != 100 && o->direction != 110)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "direction %d: give 100 or 110", o->direction);
  if (!(o->kmax_inv_nm > 0.0) || !isfinite(o->kmax_inv_nm) || o->kmax_inv_nm > 10.0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "kmax %g 1/nm: give a number in (0, 10]",
                   o->kmax_inv_nm);
  if (o->points < 2 || o->points > 10000)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "points %zu: give 2 to 10000", o->points);
  if (isnan(o->grid_step_nm) || o->grid_step_nm < 0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "grid step %g nm: give a positive step or 0",
                   o->grid_step_nm);
  return EW_OK;
}

ew_status ew_dispersion_run(ew_dispersion *d, const ew_stack *st,
                            const ew_dispersion_options *o, ew_error *err) {
  return ew_dispersion_run_vectors(d, st, o, NULL, NULL, err);
}

ew_status ew_dispersion_run_vectors(ew_dispersion *d, const ew_stack *st,
                                    const ew_dispersion_options *o,
                                    ew_dispersion_vectors_fn fn, void *ctx, ew_error *err) {
  ew_status rc = check_options(o, err);
  if (rc) return rc;
  ew_dispersion_clear(d);
  if (o->model == 8) return ew_dispersion_run_kane(d, st, o, err);
  work_t w = {0};
  size_t m = 0;
  double lo = 0.0;
  rc = setup(d, st, o, &w, &m, &lo, err);
  if (!rc) {
    d->model = (ew_kp_model)o->model, d->direction = o->direction, d->axial = o->axial;
    d->points = o->points, d->subbands = m / 2;
    if (ew_dispersion_alloc(d, d->points, d->subbands))
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (dispersion)");
  }
  /* along [100]: k = (k, 0); along [110]: k = (k, k)/√2 */
  double cx = o->direction == 100 ? 1.0 : sqrt(0.5), cy = o->direction == 100 ? 0.0 : sqrt(0.5);
  for (size_t i = 0; i < o->points && !rc; i++) {
    double k = o->kmax_inv_nm * (double)i / (double)(o->points - 1);
    d->k_inv_nm[i] = k;
    ew_kp_pencil_fill(w.prof, cx * k, cy * k, w.H);
    /* the shift half way from the lowest potential to the last k∥'s first level converges
       faster; the count at it certifies that nothing lies below, else the safe shift */
    double lo_k = i ? 0.5 * (lo + w.vals[0]) : lo;
    /* k∥ = 0 to 1e-8 eV residual (the single-band limit to ~1e-12 eV); beyond, 1e-6 eV: an
       error <= 1e-12 eV²/gap, < 1e-7 eV even 10 µeV from the next level */
    ew_kp_solver_set_tol(w.sol, i ? 1e-6 : 1e-8);
    rc = ew_kp_lowest(w.sol, w.H, lo_k, m, w.vals, &d->certified[i], err);
    if (rc == EW_ERR_NUMERIC && lo_k != lo)
      rc = ew_kp_lowest(w.sol, w.H, lo, m, w.vals, &d->certified[i], err);
    if (rc) break;
    if (i == 0) label_pairs(d, ew_kp_solver_vectors(w.sol), w.g->n * (size_t)o->model, o->model, w.prof->w);
    for (size_t j = 0; j < d->subbands; j++) {
      double e0 = -w.vals[2 * j], e1 = -w.vals[2 * j + 1];
      d->branch_eV[(2 * j) * d->points + i] = e0;
      d->branch_eV[(2 * j + 1) * d->points + i] = e1;
      d->energy_eV[j * d->points + i] = 0.5 * (e0 + e1);
    }
    if (fn && (rc = fn(ctx, i, ew_kp_solver_vectors(w.sol), w.g->n * (size_t)o->model,
                       o->model, w.prof->w, err)))
      break;
  }
  if (w.sol) ew_kp_solver_work(w.sol, &d->factorizations, &d->solves, &d->counts);
  work_free(&w);
  if (rc) ew_dispersion_clear(d);
  return rc;
}
