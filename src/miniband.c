/* miniband.c — the periodic (Bloch) pencil of one period, its certified count and its
 * eigenvalues by shift-invert (see miniband.h). */
#include "miniband.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"

/* ---- the pencil -------------------------------------------------------------------------- */
static double band_edge(const ew_bands *b, ew_band band) {
  return band == EW_BAND_E ? b->Ec_eV : band == EW_BAND_HH ? b->Ev_hh_eV : b->Ev_lh_eV;
}

/* Positive-mass potential (Ec, or −Ev for holes) of layer ly at fraction u of its thickness. */
static double layer_pot_at(const ew_layer *ly, ew_band band, double u) {
  ew_bands b;
  ew_layer_bands_at(ly, u, &b);
  double e = band_edge(&b, band);
  return band == EW_BAND_E ? e : -e;
}

/* Mean potential over the period node's dual cell: the last half cell of the last layer and
 * the first half cell of the first, each by the trapezoid rule (exact for constant layers
 * and for a graded layer's linear pieces, which are longer than half a cell at any step the
 * grid allows: EW_GRADE_SAMPLES pieces per layer). */
double ew_mb_period_node_pot(const ew_stack *st, ew_band band, double h_first, double h_last) {
  const ew_layer *f = &st->layers[0], *l = &st->layers[st->n_layers - 1];
  double uf = 0.5 * h_first / f->thickness_nm, ul = 1.0 - 0.5 * h_last / l->thickness_nm;
  double vf = 0.5 * (layer_pot_at(f, band, 0.0) + layer_pot_at(f, band, uf));
  double vl = 0.5 * (layer_pot_at(l, band, ul) + layer_pot_at(l, band, 1.0));
  return (h_first * vf + h_last * vl) / (h_first + h_last);
}

void ew_mb_pencil_free(ew_mb_pencil *p) {
  if (!p) return;
  free(p->diag);
  free(p->off);
  free(p->w);
  free(p->sd);
  free(p->se);
  free(p);
}

/* The standard form, its Gershgorin upper bound and the count's pivot floor. */
static void standard_form(ew_mb_pencil *p) {
  size_t N = p->n;
  double emax = 0.0;
  p->upper = -INFINITY;
  for (size_t j = 0; j < N; j++) {
    p->sd[j] = p->diag[j] / p->w[j];
    p->se[j] = p->off[j] / sqrt(p->w[j] * p->w[(j + 1) % N]);
    emax = fmax(emax, p->se[j] * p->se[j]);
  }
  for (size_t j = 0; j < N; j++)
    p->upper = fmax(p->upper, p->sd[j] + fabs(p->se[j]) + fabs(p->se[(j + N - 1) % N]));
  p->pivmin = DBL_MIN * fmax(1.0, emax);
}

ew_mb_pencil *ew_mb_pencil_build(const ew_stack *st, const ew_grid *g, ew_band band) {
  if (g->n < 2) return NULL;
  size_t N = g->n + 1;
  ew_mb_pencil *p = calloc(1, sizeof *p);
  if (!p) return NULL;
  p->n = N;
  p->period_nm = g->length_nm;
  p->diag = malloc(N * sizeof *p->diag);
  p->off = malloc(N * sizeof *p->off);
  p->w = malloc(N * sizeof *p->w);
  p->sd = malloc(N * sizeof *p->sd);
  p->se = malloc(N * sizeof *p->se);
  if (!p->diag || !p->off || !p->w || !p->sd || !p->se) {
    ew_mb_pencil_free(p);
    return NULL;
  }
  ew_mb_pencil_set_masses(p, st, g, band, NULL);
  return p;
}

void ew_mb_pencil_set_masses(ew_mb_pencil *p, const ew_stack *st, const ew_grid *g, ew_band band,
                             const double *M) {
  size_t n = g->n, N = p->n;
  const double K = EW_HB2M0_EVNM2, *cm = M ? M : g->cell_mass[band];
  /* Mc(j): the cell joining node j − 1 to node j; Mc(0) is the face cell [z_{n−1}, d] */
#define MC(j) ((j) == 0 ? cm[n] : cm[(j) - 1])
  p->vmin = INFINITY;
  for (size_t j = 0; j < N; j++) {
    double V = j == 0 ? ew_mb_period_node_pot(st, band, g->h[0], g->h[n]) : g->pot[band][j - 1];
    p->w[j] = j == 0 ? 0.5 * (g->h[0] + g->h[n]) : g->w[j - 1];
    p->diag[j] = K * (1.0 / MC(j) + 1.0 / MC((j + 1) % N)) + p->w[j] * V;
    p->off[j] = -K / MC((j + 1) % N);
    p->vmin = fmin(p->vmin, V);
  }
#undef MC
  standard_form(p);
}

void ew_mb_dense(const ew_mb_pencil *p, double qd, double complex *out) {
  size_t N = p->n;
  memset(out, 0, N * N * sizeof *out);
  for (size_t j = 0; j < N; j++) out[j * N + j] = p->diag[j];
  for (size_t j = 0; j + 1 < N; j++) out[j * N + j + 1] = out[(j + 1) * N + j] = p->off[j];
  out[(N - 1) * N] = p->off[N - 1] * cexp(I * qd);
  out[N - 1] = p->off[N - 1] * cexp(-I * qd);
}

/* ---- the count ------------------------------------------------------------------------- */
typedef struct {
  size_t neg;  /* negative pivots of the open block plus [s < 0] */
  double s;    /* the corner's Schur complement */
  double acc;  /* sum of the magnitudes that made s: its rounding scale */
} arrow_count;

/* LDLᵀ of the open block 0 … N−2 with the fill towards the corner node N−1 carried along
 * (miniband.h), in the node order given (rev: N−1 … 0, a relabelling j → N−1−j). */
static void count_order(const ew_mb_pencil *p, double qd, double sigma, int rev,
                        arrow_count *out) {
  size_t N = p->n;
#define SD(j) (rev ? p->sd[N - 1 - (j)] : p->sd[j])
#define SE(j) (rev ? p->se[N - 2 - (j)] : p->se[j]) /* coupling of nodes j, j + 1 (j < N−1) */
  double complex g = p->se[N - 1] * cexp(-I * qd); /* A(0, N−1); its phase sign is immaterial */
  double s = SD(N - 1) - sigma, acc = fabs(s), q = SD(0) - sigma;
  size_t neg = 0;
  for (size_t j = 0; j + 1 < N; j++) {
    if (fabs(q) < p->pivmin) q = -p->pivmin;
    neg += q < 0;
    double t = (creal(g) * creal(g) + cimag(g) * cimag(g)) / q;
    s -= t;
    acc += fabs(t);
    if (j + 2 < N) { /* node j + 1 is still in the open block */
      double e = SE(j);
      g = (j + 3 == N ? SE(N - 2) : 0.0) - e * g / q;
      q = (SD(j + 1) - sigma) - e * e / q;
    }
  }
#undef SD
#undef SE
  if (fabs(s) < p->pivmin) s = -p->pivmin;
  out->neg = neg + (s < 0);
  out->s = s;
  out->acc = acc;
}

size_t ew_mb_count_in_order(const ew_mb_pencil *p, double qd, double sigma, int reverse) {
  arrow_count c;
  count_order(p, qd, sigma, reverse != 0, &c);
  return c.neg;
}

size_t ew_mb_count_below(const ew_mb_pencil *p, double qd, double sigma) {
  arrow_count f, r;
  count_order(p, qd, sigma, 0, &f);
  /* s is resolved when it stands clear of the rounding of the terms that made it */
  if (fabs(f.s) > 64.0 * DBL_EPSILON * f.acc) return f.neg;
  count_order(p, qd, sigma, 1, &r);
  return fabs(r.s) * f.acc > fabs(f.s) * r.acc ? r.neg : f.neg;
}

/* ---- shift-invert ------------------------------------------------------------------------ */
struct ew_mb_solver {
  size_t n;
  ew_zshift_lu *lu;
  double complex *val, *x, *y;
};

void ew_mb_solver_free(ew_mb_solver *s) {
  if (!s) return;
  ew_zshift_lu_free(s->lu);
  free(s->val);
  free(s->x);
  free(s->y);
  free(s);
}

/* The pattern in compressed columns: column 0 rows 0, 1, N−1; column j rows j−1, j, j+1;
 * column N−1 rows 0, N−2, N−1 (ascending; N >= 3 keeps the corners apart from the band). */
static void periodic_pattern(size_t N, int *col, int *row) {
  size_t k = 0;
  for (size_t j = 0; j < N; j++) {
    col[j] = (int)k;
    if (j == 0) {
      row[k++] = 0, row[k++] = 1, row[k++] = (int)N - 1;
    } else if (j == N - 1) {
      row[k++] = 0, row[k++] = (int)N - 2, row[k++] = (int)N - 1;
    } else {
      row[k++] = (int)j - 1, row[k++] = (int)j, row[k++] = (int)j + 1;
    }
  }
  col[N] = (int)k;
}

ew_mb_solver *ew_mb_solver_create(const ew_mb_pencil *p) {
  size_t N = p->n;
  ew_mb_solver *s = calloc(1, sizeof *s);
  int *col = malloc((N + 1) * sizeof *col), *row = malloc(3 * N * sizeof *row);
  if (!s || !col || !row) {
    free(col);
    free(row);
    free(s);
    return NULL;
  }
  s->n = N;
  periodic_pattern(N, col, row);
  s->lu = ew_zshift_lu_create_pattern(N, 3 * N, col, row);
  free(col);
  free(row);
  s->val = malloc(3 * N * sizeof *s->val);
  s->x = malloc(N * sizeof *s->x);
  s->y = malloc(N * sizeof *s->y);
  if (!s->lu || !s->val || !s->x || !s->y) {
    ew_mb_solver_free(s);
    return NULL;
  }
  return s;
}

/* H(q) − σB in the pattern's order, factored. */
static ew_status factor_at(const ew_mb_pencil *p, ew_mb_solver *s, double qd, double sigma,
                           ew_error *err) {
  size_t N = p->n, k = 0;
  double complex down = p->off[N - 1] * cexp(I * qd); /* H(N−1, 0) */
  for (size_t j = 0; j < N; j++) {
    double complex dj = p->diag[j] - sigma * p->w[j];
    if (j == 0) {
      s->val[k++] = dj, s->val[k++] = p->off[0], s->val[k++] = down;
    } else if (j == N - 1) {
      s->val[k++] = conj(down), s->val[k++] = p->off[N - 2], s->val[k++] = dj;
    } else {
      s->val[k++] = p->off[j - 1], s->val[k++] = dj, s->val[k++] = p->off[j];
    }
  }
  return ew_zshift_lu_factor_values(s->lu, s->val, sigma, err);
}

/* y = H(q) x */
static void apply_h(const ew_mb_pencil *p, double qd, const double complex *x, double complex *y) {
  size_t N = p->n;
  double complex down = p->off[N - 1] * cexp(I * qd);
  for (size_t j = 0; j < N; j++) {
    double complex v = p->diag[j] * x[j];
    v += j > 0 ? p->off[j - 1] * x[j - 1] : conj(down) * x[N - 1];
    v += j + 1 < N ? p->off[j] * x[j + 1] : down * x[0];
    y[j] = v;
  }
}

/* Normalise x in the B norm, then θ = xᴴHx and the residual bound ‖B^{-1/2}(Hx − θBx)‖
 * (= ‖T y − θ y‖ for y = B^{1/2} x, ‖y‖ = 1). */
static double rayleigh(const ew_mb_pencil *p, double qd, double complex *x, double complex *hx,
                       double *bound) {
  size_t N = p->n;
  double nb = 0.0;
  for (size_t j = 0; j < N; j++) nb += p->w[j] * (creal(x[j]) * creal(x[j]) + cimag(x[j]) * cimag(x[j]));
  nb = 1.0 / sqrt(nb);
  for (size_t j = 0; j < N; j++) x[j] *= nb;
  apply_h(p, qd, x, hx);
  double th = 0.0, r2 = 0.0;
  for (size_t j = 0; j < N; j++) th += creal(conj(x[j]) * hx[j]);
  for (size_t j = 0; j < N; j++) {
    double complex r = hx[j] - th * p->w[j] * x[j];
    r2 += (creal(r) * creal(r) + cimag(r) * cimag(r)) / p->w[j];
  }
  *bound = sqrt(r2);
  return th;
}

/* count(θ − b) <= k < count(θ + b), b widened by the count's own rounding */
static int certify_one(const ew_mb_pencil *p, double qd, double th, double b, size_t k) {
  double slack = b + 8.0 * DBL_EPSILON * (fabs(th) + fabs(p->upper));
  return ew_mb_count_below(p, qd, th - slack) <= k && k < ew_mb_count_below(p, qd, th + slack);
}

/* [a, b] with count(a) = k, count(b) = k + 1 and b − a <= 1e-7 eV (or a cluster the count
 * cannot split, b − a at rounding level). */
static void isolate(const ew_mb_pencil *p, double qd, size_t k, double *pa, double *pb) {
  double a = p->vmin - 1e-9 * (1.0 + fabs(p->vmin)), b = p->upper + 1e-9 * (1.0 + fabs(p->upper));
  size_t ca = 0, cb = p->n;
  for (int it = 0; it < 300; it++) {
    if (ca == k && cb == k + 1 && b - a <= 1e-7) break;
    if (b - a <= 4.0 * DBL_EPSILON * (fabs(a) + fabs(b))) break;
    double m = 0.5 * (a + b);
    size_t cm = ew_mb_count_below(p, qd, m);
    if (cm > k) b = m, cb = cm;
    else a = m, ca = cm;
  }
  *pa = a, *pb = b;
}

ew_status ew_mb_eigenvalue(const ew_mb_pencil *p, ew_mb_solver *s, double qd, size_t k,
                           double *E, double *bound, ew_error *err) {
  size_t N = p->n;
  if (k >= N) return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "miniband %zu: the grid has %zu nodes", k + 1, N);
  double a, b;
  isolate(p, qd, k, &a, &b);
  double sigma = 0.5 * (a + b);
  ew_status rc = factor_at(p, s, qd, sigma, err);
  for (int t = 1; rc == EW_ERR_NUMERIC && t <= 3; t++) /* σ hit the eigenvalue exactly */
    rc = factor_at(p, s, qd, sigma += 0.25 * (b - a) / t + 1e-12, err);
  if (rc != EW_OK) return rc;
  /* a fixed start with every node and both parts non-zero */
  for (size_t j = 0; j < N; j++) s->x[j] = 1.0 + 0.5 * cos(0.7 * (double)j) + 0.3 * I * sin(1.3 * (double)j);
  double th = sigma, r = INFINITY, tol = fmax(1e-10, 64.0 * DBL_EPSILON * fabs(p->upper));
  for (int it = 0; it < 12 && !(r <= tol); it++) {
    for (size_t j = 0; j < N; j++) s->x[j] *= p->w[j];
    if ((rc = ew_zshift_lu_solve(s->lu, s->x, 1, err)) != EW_OK) return rc;
    th = rayleigh(p, qd, s->x, s->y, &r);
  }
  if (!(r <= tol) || !certify_one(p, qd, th, r, k))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                   "miniband %zu at qd = %.6g: inverse iteration gave %.12g eV (residual bound "
                   "%.3g eV), which the count does not certify as eigenvalue %zu",
                   k + 1, qd, th, r, k + 1);
  *E = th;
  if (bound) *bound = r;
  return EW_OK;
}

ew_status ew_mb_certify(const ew_mb_pencil *p, double qd, const double *values,
                        const double *bound, size_t m, ew_error *err) {
  for (size_t j = 0; j < m; j++)
    if (!isfinite(values[j]) || !(bound[j] >= 0) || (j > 0 && values[j] < values[j - 1]) ||
        !certify_one(p, qd, values[j], bound[j], j))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                     "certified count: %.12g eV (±%.3g) at qd = %.6g is not eigenvalue %zu of "
                     "the period (counts %zu below, %zu above)", values[j], bound[j], qd, j + 1,
                     ew_mb_count_below(p, qd, values[j] - bound[j]),
                     ew_mb_count_below(p, qd, values[j] + bound[j]));
  return EW_OK;
}
