/* hamiltonian.c — assembly of the BenDaniel–Duke pencil (see hamiltonian.h). */
#include "hamiltonian.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>

#include "constants.h"

void ew_pencil_free(ew_pencil *p) {
  if (!p) return;
  free(p->diag);
  free(p->off);
  free(p->b);
  free(p->std_d);
  free(p->std_e2);
  free(p);
}

ew_pencil *ew_pencil_build(const ew_grid *g, ew_band band) {
  return ew_pencil_build_mass(g, band, g->cell_mass[band]);
}

ew_pencil *ew_pencil_build_mass(const ew_grid *g, ew_band band, const double *M) {
  ew_pencil *p = calloc(1, sizeof *p);
  if (!p) return NULL;
  size_t n = g->n;
  p->n = n;
  p->diag = malloc(n * sizeof *p->diag);
  p->off = malloc((n > 1 ? n - 1 : 1) * sizeof *p->off);
  p->b = malloc(n * sizeof *p->b);
  p->std_d = malloc(n * sizeof *p->std_d);
  p->std_e2 = malloc((n > 1 ? n - 1 : 1) * sizeof *p->std_e2);
  if (!p->diag || !p->off || !p->b || !p->std_d || !p->std_e2) {
    ew_pencil_free(p);
    return NULL;
  }
  ew_pencil_refill_mass(p, g, band, M);
  return p;
}

static double h_row_norm(const ew_pencil *p);

void ew_pencil_refill_mass(ew_pencil *p, const ew_grid *g, ew_band band, const double *M) {
  size_t n = g->n;
  const double K = EW_HB2M0_EVNM2;
  const double *V = g->pot[band];
  /* one pass (the values are finite: plain comparisons instead of fmin/fmax calls, and each
     off-diagonal's square root once) — this runs for every level of every Kane iteration */
  double vmin = INFINITY, vmax = -INFINITY, emax = 0.0, norm = 0.0, s_prev = 0.0;
  double inv_prev = 1.0 / M[0];
  const double *w = g->w;
  for (size_t i = 0; i < n; i++) {
    if (V[i] < vmin) vmin = V[i];
    if (V[i] > vmax) vmax = V[i];
    /* inside a layer (node i's masses, weights and potential those of node i − 1, shifted by
       one) every number of the row repeats bit for bit: copied, not divided again (the
       divisions and the root are most of this loop's time) */
    if (i > 0 && i + 1 < n && M[i + 1] == M[i] && M[i] == M[i - 1] && w[i + 1] == w[i] &&
        w[i] == w[i - 1] && V[i] == V[i - 1]) {
      p->diag[i] = p->diag[i - 1], p->b[i] = p->b[i - 1], p->std_d[i] = p->std_d[i - 1];
      p->off[i] = p->off[i - 1], p->std_e2[i] = p->std_e2[i - 1];
      double r = fabs(p->std_d[i]) + s_prev + s_prev; /* s_next = s_prev */
      if (r > norm) norm = r;
      continue; /* inv_prev stays 1/M[i + 1] */
    }
    double inv_next = 1.0 / M[i + 1];
    p->diag[i] = K * (inv_prev + inv_next) + w[i] * V[i];
    p->b[i] = w[i];
    p->std_d[i] = p->diag[i] / p->b[i];
    double r = fabs(p->std_d[i]) + s_prev, s_next = 0.0;
    if (i + 1 < n) {
      p->off[i] = -K / M[i + 1];
      p->std_e2[i] = p->off[i] * p->off[i] / (p->b[i] * w[i + 1]);
      if (p->std_e2[i] > emax) emax = p->std_e2[i];
      s_next = sqrt(p->std_e2[i]);
      r += s_next;
    }
    if (r > norm) norm = r;
    s_prev = s_next;
    inv_prev = inv_next;
  }
  p->vmin = vmin;
  p->vmax = vmax;
  p->std_pivmin = DBL_MIN * fmax(1.0, emax);
  p->std_norm = norm;
  p->hnorm = h_row_norm(p);
}

/* ‖H‖∞, the largest row sum of |H| (the residual's scale), once per pencil */
static double h_row_norm(const ew_pencil *p) {
  size_t n = p->n;
  double hnorm = 0.0;
  for (size_t i = 0; i < n; i++) {
    double row = fabs(p->diag[i]);
    if (i > 0) row += fabs(p->off[i - 1]);
    if (i + 1 < n) row += fabs(p->off[i]);
    if (row > hnorm) hnorm = row;
  }
  return hnorm;
}

double ew_pencil_residual(const ew_pencil *p, const double *x, double e) {
  size_t n = p->n;
  double rr = 0.0, xx = 0.0, hnorm = p->hnorm;
  for (size_t i = 0; i < n; i++) {
    double hx = p->diag[i] * x[i];
    if (i > 0) hx += p->off[i - 1] * x[i - 1];
    if (i + 1 < n) hx += p->off[i] * x[i + 1];
    double r = hx - e * p->b[i] * x[i];
    rr += r * r;
    xx += x[i] * x[i];
  }
  return xx > 0 && hnorm > 0 ? sqrt(rr) / (hnorm * sqrt(xx)) : INFINITY;
}
