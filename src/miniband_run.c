/* miniband_run.c — the minibands of a stack taken as one period (miniband.h): which
 * minibands, every q point, the Kane electron mass as the single-well solve has it, and the
 * mass at each miniband's bottom. */
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "bound.h"
#include "constants.h"
#include "error.h"
#include "miniband.h"
#include "nonparabolic.h"
#include "schrodinger.h"

#define KANE_MAX_IT 60

/* One band's problem: the pencil and its solver, and for a Kane electron the grid and the
 * work of the cell masses at an energy (nonparabolic.h). */
typedef struct {
  ew_mb_pencil *p;
  ew_mb_solver *s;
  ew_band band;
  int kane;
  const ew_stack *st;
  const ew_grid *g;
  double *work; /* [3(n + 1)]: M, ∂M/∂E, ∫m0/m (ew_nonparabolic_slope) */
  double *zero; /* [n]: a null vector, so that the slope call only fills the masses */
  double tol;   /* the fixed point's stop, max(1e-11 eV, 16 ε‖T‖) as nonparabolic.c */
} band_problem;

/* H(E): the cell masses of the Kane mass at energy E (the grid's masses when parabolic). */
static ew_status masses_at(band_problem *bp, double E, ew_error *err) {
  if (!bp->kane) return EW_OK;
  if (isnan(ew_nonparabolic_slope(bp->st, bp->g, E, bp->zero, bp->work)))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands, Kane masses)");
  ew_mb_pencil_set_masses(bp->p, bp->st, bp->g, bp->band, bp->work);
  return EW_OK;
}

/* Level k at qd: parabolic, the eigenvalue; Kane, the fixed point E = λ_k(H(q, E)) (as
 * nonparabolic.c does per level: λ_k(H(E)) − E is strictly decreasing, the root unique),
 * by the secant method from guess, each λ_k certified at its own H(E). */
static ew_status level(band_problem *bp, double qd, size_t k, double guess, double *E,
                       double *bound, ew_error *err) {
  ew_status rc;
  if (!bp->kane) return ew_mb_eigenvalue(bp->p, bp->s, qd, k, E, bound, err);
  double e0 = guess, f0, e1, f1, l, b = 0.0;
  if ((rc = masses_at(bp, e0, err)) || (rc = ew_mb_eigenvalue(bp->p, bp->s, qd, k, &l, &b, err)))
    return rc;
  f0 = l - e0, e1 = l;
  for (int it = 0; it < KANE_MAX_IT; it++) {
    if ((rc = masses_at(bp, e1, err)) || (rc = ew_mb_eigenvalue(bp->p, bp->s, qd, k, &l, &b, err)))
      return rc;
    f1 = l - e1;
    if (fabs(f1) <= bp->tol) {
      *E = l;
      if (bound) *bound = b + fabs(f1);
      return EW_OK;
    }
    double e2 = f1 != f0 ? e1 - f1 * (e1 - e0) / (f1 - f0) : l;
    if (!isfinite(e2)) e2 = l; /* a plain fixed-point step */
    e0 = e1, f0 = f1, e1 = e2;
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "miniband e%zu at qd = %.6g: the Kane mass "
                 "iteration did not converge in %d steps (last change %.3g eV)", k + 1, qd,
                 KANE_MAX_IT, fabs(e1 - e0));
}

void ew_minibands_clear(ew_minibands *mb) {
  if (!mb) return;
  free(mb->q_inv_nm);
  free(mb->band);
  free(mb->index);
  free(mb->label);
  free(mb->energy_eV);
  free(mb->bottom_eV);
  free(mb->top_eV);
  free(mb->width_eV);
  free(mb->mass_m0);
  free(mb->bound_eV);
  free(mb->kp_band);
  free(mb->k_inv_nm);
  free(mb->energy_k_eV);
  memset(mb, 0, sizeof *mb);
}

int ew_minibands_alloc(ew_minibands *mb, size_t count, size_t points) {
  size_t c = count ? count : 1;
  mb->q_inv_nm = malloc(points * sizeof *mb->q_inv_nm);
  mb->band = malloc(c * sizeof *mb->band);
  mb->index = malloc(c * sizeof *mb->index);
  mb->label = malloc(c * sizeof *mb->label);
  mb->energy_eV = malloc(c * points * sizeof *mb->energy_eV);
  mb->bottom_eV = malloc(c * sizeof(double));
  mb->top_eV = malloc(c * sizeof(double));
  mb->width_eV = malloc(c * sizeof(double));
  mb->mass_m0 = malloc(c * sizeof(double));
  mb->bound_eV = malloc(c * sizeof(double));
  return mb->q_inv_nm && mb->band && mb->index && mb->label && mb->energy_eV && mb->bottom_eV &&
         mb->top_eV && mb->width_eV && mb->mass_m0 && mb->bound_eV;
}

/* Mass at the bottom q0 (0 or π/d) from the curvature of λ_k: with D(δ) = 2(λ(q0 ± δ) − λ(q0))/δ²
 * (λ is even about both ends), λ'' = (4 D(δ) − D(2δ))/3 + O(δ⁴) (Richardson), and
 * m* = ħ²/λ'', i.e. m*(m0) = 2K/λ''.  δ = EW_MB_MASS_DQ π/d keeps λ(q0 + δ) − λ(q0) some 10⁵
 * times the eigenvalues' certified accuracy for bands up to ~100 m0 heavy.  For a Kane
 * electron λ(q) is the fixed point at each q: the mass includes the non-parabolicity. */
static ew_status bottom_mass(band_problem *bp, size_t k, int at_pi, double e0, double *mass,
                             ew_error *err) {
  double dq = EW_MB_MASS_DQ * EW_PI, e1, e2; /* in qd */
  ew_status rc = level(bp, at_pi ? EW_PI - dq : dq, k, e0, &e1, NULL, err);
  if (rc == EW_OK) rc = level(bp, at_pi ? EW_PI - 2 * dq : 2 * dq, k, e1, &e2, NULL, err);
  if (rc != EW_OK) return rc;
  double d = dq / bp->p->period_nm; /* 1/nm */
  double D1 = 2.0 * (e1 - e0) / (d * d), D2 = 2.0 * (e2 - e0) / (4.0 * d * d);
  *mass = 2.0 * EW_HB2M0_EVNM2 / ((4.0 * D1 - D2) / 3.0);
  return EW_OK;
}

/* Miniband j (index k of its band) on every q point, then its bottom, top and mass; guess: a
 * start for the Kane iteration at q = 0. */
static ew_status one_miniband(ew_minibands *mb, band_problem *bp, size_t k, size_t j,
                              double guess, ew_error *err) {
  double sgn = bp->band == EW_BAND_E ? 1.0 : -1.0, lo = INFINITY, hi = -INFINITY, bmax = 0.0;
  double *lam = mb->energy_eV + j * mb->points;
  for (size_t i = 0; i < mb->points; i++) {
    double qd = EW_PI * (double)i / (double)(mb->points - 1), b;
    ew_status rc = level(bp, qd, k, i ? lam[i - 1] : guess, &lam[i], &b, err);
    if (rc != EW_OK) return rc;
    lo = fmin(lo, lam[i]);
    hi = fmax(hi, lam[i]);
    bmax = fmax(bmax, b);
  }
  int at_pi = lam[mb->points - 1] < lam[0];
  ew_status rc = bottom_mass(bp, k, at_pi, at_pi ? lam[mb->points - 1] : lam[0], &mb->mass_m0[j], err);
  if (rc != EW_OK) return rc;
  mb->band[j] = bp->band;
  mb->index[j] = (int)k + 1;
  snprintf(mb->label[j], EW_MB_LABEL, "%s%u", ew_band_name(bp->band), (unsigned)(k + 1) % 100000u);
  mb->bottom_eV[j] = sgn * lo;
  mb->top_eV[j] = sgn * hi;
  mb->width_eV[j] = hi - lo;
  mb->bound_eV[j] = bmax;
  for (size_t i = 0; i < mb->points; i++) lam[i] *= sgn; /* absolute energies */
  return EW_OK;
}

/* Every q point's values of one parabolic band certified together (ew_mb_certify); a Kane
 * band's values each belong to their own H(E) and were certified there. */
static ew_status certify_band(const ew_minibands *mb, const band_problem *bp, size_t first,
                              size_t m, ew_error *err) {
  double v[64], b[64];
  if (bp->kane || m > 64) return EW_OK; /* each value was certified alone already */
  double sgn = bp->band == EW_BAND_E ? 1.0 : -1.0;
  for (size_t i = 0; i < mb->points; i++) {
    for (size_t k = 0; k < m; k++) {
      v[k] = sgn * mb->energy_eV[(first + k) * mb->points + i];
      b[k] = mb->bound_eV[first + k];
    }
    ew_status rc = ew_mb_certify(bp->p, EW_PI * (double)i / (double)(mb->points - 1), v, b, m, err);
    if (rc != EW_OK) return rc;
  }
  return EW_OK;
}

/* The minibands of one band: those whose bottom (at q = 0 or π/d) lies below the window top
 * that the single-well solve uses (bound.c), i.e. the larger of the two end counts; for a
 * Kane electron the counts of H(top) below top (nonparabolic.h: level n is bound iff
 * λ_n(H(top)) < top). */
static ew_status band_count(band_problem *bp, double top, size_t *count, ew_error *err) {
  *count = 0;
  double lo = bp->p->vmin - 1e-9 * (1.0 + fabs(bp->p->vmin));
  top -= 1e-9 * (1.0 + fabs(top)); /* strictly below: a flat period's q = 0 state sits at it */
  if (!(top > lo)) return EW_OK;
  ew_status rc = masses_at(bp, top, err);
  if (rc != EW_OK) return rc;
  size_t c0 = ew_mb_count_below(bp->p, 0.0, top), cp = ew_mb_count_below(bp->p, EW_PI, top);
  *count = c0 > cp ? c0 : cp;
  return EW_OK;
}

ew_status ew_minibands_check_args(const ew_stack *st, size_t points, double step_nm,
                                  double *step, ew_error *err) {
  if (points < 2 || points > EW_MB_POINTS_MAX)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "minibands: %zu q points (give 2 to %d)", points,
                   EW_MB_POINTS_MAX);
  if (isnan(step_nm) || !isfinite(step_nm) || step_nm < 0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "grid step %g nm: give a positive step, or 0 "
                   "for the stack's or the default", step_nm);
  if (st->field_kV_cm != 0.0)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "minibands: the applied field (%g kV/cm) "
                   "breaks the periodicity; remove `field` for a superlattice period",
                   st->field_kV_cm);
  *step = step_nm > 0 ? step_nm : st->grid_step_nm > 0 ? st->grid_step_nm : EW_DEFAULT_STEP_NM;
  if (st->total_nm / *step > EW_GRID_MAX_NODES)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "minibands: a grid of %.3g nodes is too large "
                   "(limit %g)", st->total_nm / *step, EW_GRID_MAX_NODES);
  return EW_OK;
}

static void problems_free(band_problem bp[EW_BAND_COUNT]) {
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_mb_solver_free(bp[b].s);
    ew_mb_pencil_free(bp[b].p);
    free(bp[b].work);
    free(bp[b].zero);
  }
}

/* The period's grid and each band's problem. */
static ew_status build_problems(const ew_stack *st, double step, ew_grid **g,
                                band_problem bp[EW_BAND_COUNT], ew_error *err) {
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  if (!cells) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands)");
  ew_grid_cells_for_step(st, step, cells);
  *g = ew_grid_layered(st, cells);
  free(cells);
  if (!*g) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands grid)");
  if ((*g)->n < 2)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "minibands: the period (%g nm) is thinner "
                   "than two grid steps", st->total_nm);
  size_t n = (*g)->n;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    band_problem *q = &bp[b];
    q->band = (ew_band)b, q->st = st, q->g = *g;
    q->kane = b == EW_BAND_E && ew_nonparabolic_applies(st);
    q->p = ew_mb_pencil_build(st, *g, (ew_band)b);
    q->s = q->p ? ew_mb_solver_create(q->p) : NULL;
    if (q->kane) {
      q->work = malloc(3 * (n + 1) * sizeof *q->work);
      q->zero = calloc(n, sizeof *q->zero);
    }
    if (!q->p || !q->s || (q->kane && (!q->work || !q->zero)))
      return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands pencil, n = %zu)", n + 1);
    q->tol = fmax(1e-11, 16.0 * DBL_EPSILON * fabs(q->p->upper));
  }
  return EW_OK;
}

static ew_status fill_bands(ew_minibands *mb, band_problem bp[EW_BAND_COUNT], ew_error *err) {
  size_t j = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    size_t first = j;
    ew_status rc = EW_OK;
    double top = b == EW_BAND_E ? mb->window_top_eV[b] : -mb->window_top_eV[b];
    for (size_t k = 0; k < mb->per_band[b] && rc == EW_OK; k++, j++) {
      double guess = 0.0; /* Kane: start from the level of H(top) */
      if (bp[b].kane && (rc = masses_at(&bp[b], top, err)) == EW_OK)
        rc = ew_mb_eigenvalue(bp[b].p, bp[b].s, 0.0, k, &guess, NULL, err);
      if (rc == EW_OK) rc = one_miniband(mb, &bp[b], k, j, guess, err);
    }
    if (rc == EW_OK && mb->per_band[b]) rc = certify_band(mb, &bp[b], first, mb->per_band[b], err);
    if (rc != EW_OK) return rc;
  }
  return EW_OK;
}

ew_status ew_minibands_run(ew_minibands *mb, const ew_stack *st, size_t points, double step_nm,
                           ew_error *err) {
  double step = 0.0;
  ew_status rc = ew_minibands_check_args(st, points, step_nm, &step, err);
  if (rc != EW_OK) return rc;
  ew_minibands_clear(mb);
  ew_grid *g = NULL;
  band_problem bp[EW_BAND_COUNT];
  memset(bp, 0, sizeof bp);
  rc = build_problems(st, step, &g, bp, err);
  size_t count = 0;
  for (int b = 0; b < EW_BAND_COUNT && rc == EW_OK; b++) {
    double top = ew_bound_window_top(st, g, (ew_band)b);
    mb->window_top_eV[b] = b == EW_BAND_E ? top : -top;
    rc = band_count(&bp[b], top, &mb->per_band[b], err);
    count += mb->per_band[b];
  }
  if (rc == EW_OK && count == 0)
    rc = ew_fail(err, EW_ERR_INPUT, st->path, 0, "minibands: no band has a miniband below its "
                 "window top (the lower edge of the period's two outer layers: put barrier "
                 "material at both faces of the period)");
  if (rc == EW_OK && !ew_minibands_alloc(mb, count, points))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands, %zu x %zu)", count, points);
  if (rc == EW_OK) {
    mb->points = points, mb->count = count;
    mb->period_nm = st->total_nm, mb->step_nm = step, mb->nodes = bp[0].p->n;
    for (size_t i = 0; i < points; i++)
      mb->q_inv_nm[i] = EW_PI / st->total_nm * (double)i / (double)(points - 1);
    mb->kane = bp[EW_BAND_E].kane;
    mb->model = 1, mb->gap_eV = NAN;
    mb->doping_ignored = st->doped;
    rc = fill_bands(mb, bp, err);
  }
  problems_free(bp);
  ew_grid_free(g);
  if (rc != EW_OK) ew_minibands_clear(mb);
  return rc;
}
