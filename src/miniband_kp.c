/* miniband_kp.c — the minibands of a stack taken as one period in the multiband k·p model
 * (kp_periodic.h): which minibands, E(q) at k∥ = 0, E(k∥) at q = 0, the 8-band gap, the
 * labels by character at q = 0 and the mass at each miniband's bottom.
 *
 * Which eigenvalues.  The 8-band spectrum of the period's grid has 2N conduction-like and 6N
 * valence-like eigenvalues at every q (N nodes; exactly so with Ep = 0, where the conduction
 * rows decouple, and kept while the rescaled Ep opens no state inside the gap: Foreman's
 * rescaling, kp_hamiltonian.h).  In the hole picture λ = −E the conduction states are the
 * 2N lowest, so the gap lies between eigenvalues 2N − 1 and 2N at every q and k∥: the
 * electron side is counted down from index 2N, the hole side up from it.  A state inside
 * the gap (a spurious solution) would take one of those indices; the count at the middle of
 * the gap is checked to be 2N at every point, and the characters at q = 0 (e1 mostly |S>,
 * the top hole miniband mostly |3/2, ±3/2> or ±1/2) say which states the indices hold.  The
 * 4- and 6-band models have the hole side only (index 0 up).
 * How many: the electron minibands whose bottom lies below the highest conduction edge of
 * the period (at least 1, at most 4), the hole minibands whose top lies above the lowest
 * valence top (at least 1, at most 8), counted at q = 0; each miniband is a Kramers pair of
 * eigenvalues (degenerate at k∥ = 0: the k∥ = 0 Hamiltonian splits into two blocks related by
 * a sign change of the split-off components), printed as the pair's mean. */
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "kp_periodic.h"
#include "miniband.h"

#define MAX_E 8  /* electron-side eigenvalues: 4 minibands */
#define MAX_H 16 /* hole-side eigenvalues: 8 minibands */

typedef struct {
  ew_kpp_pencil *p;
  ew_kpp_solver *s;
  size_t k0, me, mh, c; /* window start, sides, the gap index */
  double *val, *bnd;    /* [me + mh] */
} kp_work;

/* the window at phase qd of the present fill; the count in the gap certified to be c */
static ew_status window(kp_work *w, double qd, int warm, ew_error *err) {
  size_t m = w->me + w->mh;
  ew_status rc = ew_kpp_window(w->s, qd, w->k0, m, warm, w->val, w->bnd, err);
  if (rc || !w->me) return rc;
  double mid = 0.5 * (w->val[w->me - 1] + w->val[w->me]);
  size_t c = 0;
  if ((rc = ew_kpp_count_below(w->p, qd, mid, &c, err))) return rc;
  if (c != w->c)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "8-band minibands at qd = %.6g: %zu states "
                   "below the gap's middle %.9g eV where %zu belong (a state inside the gap)",
                   qd, c, -mid, w->c);
  return EW_OK;
}

/* miniband j's pair in the window: electron side upwards from the gap, then the hole side
 * down from it */
static size_t pair_first(const kp_work *w, size_t j) {
  size_t ne = w->me / 2;
  return j < ne ? w->me - 2 - 2 * j : w->me + 2 * (j - ne);
}

/* pair mean (absolute energy) and its bound */
static void pair_value(const kp_work *w, size_t j, double *E, double *b) {
  size_t i = pair_first(w, j);
  *E = -0.5 * (w->val[i] + w->val[i + 1]);
  *b = fmax(w->bnd[i], w->bnd[i + 1]) + 0.5 * fabs(w->val[i + 1] - w->val[i]);
}

/* the component weights of a pair at q = 0 (both vectors, B-weighted, halved) */
static void weights(const kp_work *w, size_t first, double wt[4]) {
  static const int comp[8] = {0, 1, 1, 0, 2, 2, 3, 3}; /* hh lh lh hh so so e e */
  size_t nb = (size_t)w->p->nb, dim = ew_kpp_dim(w->p);
  const double complex *V = ew_kpp_solver_vectors(w->s);
  for (int t = 0; t < 4; t++) wt[t] = 0.0;
  for (size_t v = first; v < first + 2; v++)
    for (size_t j = 0; j < w->p->n; j++)
      for (size_t a = 0; a < nb; a++) {
        double complex x = V[v * dim + j * nb + a];
        wt[comp[a]] += 0.5 * w->p->prof->w[j] * (creal(x) * creal(x) + cimag(x) * cimag(x));
      }
}

static void labels(ew_minibands *mb, const kp_work *w) {
  unsigned seen[3] = {0, 0, 0};
  static const char *names[3] = {"hh", "lh", "so"};
  static const ew_band bands[3] = {EW_BAND_HH, EW_BAND_LH, EW_BAND_LH};
  size_t ne = w->me / 2;
  for (size_t j = 0; j < mb->count; j++) {
    if (j < ne) {
      snprintf(mb->label[j], EW_MB_LABEL, "e%u", (unsigned)(j + 1));
      snprintf(mb->kp_band[j], 4, "e");
      mb->band[j] = EW_BAND_E, mb->index[j] = (int)j + 1;
      continue;
    }
    double wt[4];
    weights(w, pair_first(w, j), wt);
    int c = 0;
    for (int t = 1; t < 3; t++)
      if (wt[t] > wt[c]) c = t;
    seen[c]++;
    snprintf(mb->label[j], EW_MB_LABEL, "%s%u", names[c], seen[c] % 100000u);
    snprintf(mb->kp_band[j], 4, "%s", names[c]);
    mb->band[j] = bands[c], mb->index[j] = (int)seen[c];
  }
}

/* the sides' sizes at q = 0, k∥ = 0 (see the top of this file) */
static ew_status sides(kp_work *w, ew_error *err) {
  size_t ce = 0, ch = 0;
  w->c = w->p->nb == 8 ? 2 * w->p->n : 0;
  /* 1 µeV beyond the edges: a state at an edge (a bulk-like period's degenerate Γ8 top)
     comes in with all its partners, so that no window ends inside a degenerate cluster */
  ew_status rc = ew_kpp_count_below(w->p, 0.0, -w->p->ev_min + 1e-6, &ch, err);
  if (!rc && w->p->nb == 8) rc = ew_kpp_count_below(w->p, 0.0, -w->p->ec_max - 1e-6, &ce, err);
  if (rc) return rc;
  w->mh = (ch > w->c ? ch - w->c : 0) & ~(size_t)1;
  w->mh = w->mh < 2 ? 2 : w->mh > MAX_H ? MAX_H : w->mh;
  if (w->p->nb == 8) {
    w->me = (w->c > ce ? w->c - ce : 0) & ~(size_t)1;
    w->me = w->me < 2 ? 2 : w->me > MAX_E ? MAX_E : w->me;
  }
  w->k0 = w->c - w->me;
  return EW_OK;
}

/* every q at k∥ = 0 */
static ew_status q_loop(ew_minibands *mb, kp_work *w, ew_error *err) {
  double bmax[MAX_E / 2 + MAX_H / 2] = {0};
  for (size_t i = 0; i < mb->points; i++) {
    ew_status rc = window(w, EW_PI * (double)i / (double)(mb->points - 1), i > 0, err);
    if (rc) return rc;
    if (i == 0) labels(mb, w);
    for (size_t j = 0; j < mb->count; j++) {
      double E, b;
      pair_value(w, j, &E, &b);
      mb->energy_eV[j * mb->points + i] = E;
      bmax[j] = fmax(bmax[j], b);
    }
  }
  for (size_t j = 0; j < mb->count; j++) {
    const double *e = mb->energy_eV + j * mb->points;
    double lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < mb->points; i++) lo = fmin(lo, e[i]), hi = fmax(hi, e[i]);
    int el = mb->band[j] == EW_BAND_E;
    mb->bottom_eV[j] = el ? lo : hi, mb->top_eV[j] = el ? hi : lo;
    mb->width_eV[j] = hi - lo, mb->bound_eV[j] = bmax[j];
  }
  if (w->me) mb->gap_eV = mb->bottom_eV[0] - mb->bottom_eV[w->me / 2];
  return EW_OK;
}

/* the mass at each miniband's bottom, as miniband_run.c has it: the curvature of E(q) from
 * q0 ± δ and q0 ± 2δ (Richardson), δ = EW_MB_MASS_DQ π/d, q0 = 0 or π/d where the bottom is;
 * positive for a band curving away from its edge (electrons up, holes down) */
static ew_status masses(ew_minibands *mb, kp_work *w, ew_error *err) {
  double dq = EW_MB_MASS_DQ * EW_PI, d = dq / mb->period_nm;
  double e[2][2][MAX_E / 2 + MAX_H / 2]; /* [end][δ, 2δ][miniband] */
  for (int end = 1; end >= 0; end--)
    for (int t = 0; t < 2; t++) {
      double qd = end ? EW_PI - (t + 1) * dq : (t + 1) * dq, b;
      ew_status rc = window(w, qd, 1, err);
      if (rc) return rc;
      for (size_t j = 0; j < mb->count; j++) pair_value(w, j, &e[end][t][j], &b);
    }
  for (size_t j = 0; j < mb->count; j++) {
    const double *E = mb->energy_eV + j * mb->points;
    double sgn = mb->band[j] == EW_BAND_E ? 1.0 : -1.0;
    int end = sgn * E[mb->points - 1] < sgn * E[0];
    double e0 = sgn * E[end ? mb->points - 1 : 0], e1 = sgn * e[end][0][j], e2 = sgn * e[end][1][j];
    double D1 = 2.0 * (e1 - e0) / (d * d), D2 = 2.0 * (e2 - e0) / (4.0 * d * d);
    mb->mass_m0[j] = 2.0 * EW_HB2M0_EVNM2 / ((4.0 * D1 - D2) / 3.0);
  }
  return EW_OK;
}

/* E(k∥) at q = 0 along [100] */
static ew_status k_loop(ew_minibands *mb, kp_work *w, double kmax, ew_error *err) {
  for (size_t i = 0; i < mb->kpoints; i++) {
    double k = mb->kpoints > 1 ? kmax * (double)i / (double)(mb->kpoints - 1) : 0.0, b;
    mb->k_inv_nm[i] = k;
    ew_kpp_fill(w->p, k, 0.0);
    ew_status rc = window(w, 0.0, 1, err);
    if (rc) return rc;
    for (size_t j = 0; j < mb->count; j++) pair_value(w, j, &mb->energy_k_eV[j * mb->kpoints + i], &b);
  }
  ew_kpp_fill(w->p, 0.0, 0.0);
  return EW_OK;
}

static ew_status kp_checks(int model, double kmax, size_t kpoints, ew_error *err) {
  if (model != 4 && model != 6 && model != 8)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "minibands: model %d (give 4, 6 or 8 bands)", model);
  if (!isfinite(kmax) || kmax < 0 || kmax > 10.0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "minibands: in-plane k up to %g 1/nm (give 0 to "
                   "10)", kmax);
  if (kpoints > EW_MB_POINTS_MAX)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "minibands: %zu in-plane points (give 0 to %d)",
                   kpoints, EW_MB_POINTS_MAX);
  return EW_OK;
}

static ew_status kp_setup(ew_minibands *mb, const ew_stack *st, int model, double step,
                          size_t points, size_t kpoints, ew_grid **g, kp_work *w,
                          ew_error *err) {
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  if (!cells) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands)");
  ew_grid_cells_for_step(st, step, cells);
  *g = ew_grid_layered(st, cells);
  free(cells);
  if (!*g) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands grid)");
  ew_status rc = ew_kpp_build(st, *g, (ew_kp_model)model, &w->p, err);
  if (!rc) rc = sides(w, err);
  if (rc) return rc;
  size_t m = w->me + w->mh, count = m / 2;
  w->s = ew_kpp_solver_create(w->p, m);
  w->val = malloc(m * sizeof *w->val);
  w->bnd = malloc(m * sizeof *w->bnd);
  if (!w->s || !w->val || !w->bnd || !ew_minibands_alloc(mb, count, points))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p minibands, %zu nodes)", w->p->n);
  mb->kp_band = malloc(count * sizeof *mb->kp_band);
  mb->k_inv_nm = malloc((kpoints ? kpoints : 1) * sizeof *mb->k_inv_nm);
  mb->energy_k_eV = malloc(count * (kpoints ? kpoints : 1) * sizeof *mb->energy_k_eV);
  if (!mb->kp_band || !mb->k_inv_nm || !mb->energy_k_eV)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p minibands)");
  mb->points = points, mb->count = count, mb->kpoints = kpoints;
  mb->period_nm = st->total_nm, mb->step_nm = step, mb->nodes = w->p->n;
  for (size_t i = 0; i < points; i++)
    mb->q_inv_nm[i] = EW_PI / st->total_nm * (double)i / (double)(points - 1);
  mb->model = model, mb->gap_eV = NAN, mb->gap_index = w->c;
  mb->doping_ignored = st->doped;
  mb->window_top_eV[EW_BAND_E] = model == 8 ? w->p->ec_max : NAN;
  mb->window_top_eV[EW_BAND_HH] = mb->window_top_eV[EW_BAND_LH] = w->p->ev_min;
  return EW_OK;
}

ew_status ew_minibands_run_kp(ew_minibands *mb, const ew_stack *st, int model, size_t points,
                              double step_nm, double kmax_inv_nm, size_t kpoints, ew_error *err) {
  double step = 0.0;
  ew_status rc = kp_checks(model, kmax_inv_nm, kpoints, err);
  if (!rc) rc = ew_minibands_check_args(st, points, step_nm, &step, err);
  if (rc) return rc;
  ew_minibands_clear(mb);
  ew_grid *g = NULL;
  kp_work w;
  memset(&w, 0, sizeof w);
  rc = kp_setup(mb, st, model, step, points, kpoints, &g, &w, err);
  if (!rc) rc = q_loop(mb, &w, err);
  if (!rc) rc = masses(mb, &w, err);
  if (!rc) rc = k_loop(mb, &w, kmax_inv_nm, err);
  if (w.s) ew_kpp_solver_work(w.s, &mb->factorizations, &mb->solves, &mb->counts);
  ew_kpp_solver_free(w.s);
  ew_kpp_free(w.p);
  free(w.val);
  free(w.bnd);
  ew_grid_free(g);
  if (rc) ew_minibands_clear(mb);
  return rc;
}
