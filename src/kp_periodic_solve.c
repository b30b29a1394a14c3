/* kp_periodic_solve.c — eigenvalues of an index window of the periodic k·p pencil: cuts with
 * exact counts, groups solved by block shift-invert with SuperLU's complex LU, each group
 * certified by its residual and the counts at its ends (see kp_periodic.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (every value here is
 * finite), as kp_inertia.c. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range")
#endif
#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "kp_periodic.h"
#include "superlu_adapter.h"

#define GMAX 16     /* largest group solved as one block (a cluster beyond is split) */
#define ROUNDS 12   /* factorisations per group before it is split */
#define SOLVES 8    /* inverse-iteration steps per factorisation */
#define DEPTH 60    /* bisections of one group */

struct ew_kpp_solver {
  const ew_kpp_pencil *p;
  size_t dim, dim1, mmax;         /* dim1 = (N − 1) nb: the open block of nodes 0 … N − 2 */
  ew_zshift_lu *lu;               /* SuperLU's complex LU of the open block A11 − σB */
  double complex *Z;              /* [dim1 × nb] A11⁻¹ A12 (A12: the open block's coupling to
                                     the border node N − 1) */
  double complex S[EW_KP_MAX_NB * EW_KP_MAX_NB]; /* the border's Schur complement, LU */
  double complex A0[EW_KP_MAX_NB * EW_KP_MAX_NB], AL[EW_KP_MAX_NB * EW_KP_MAX_NB];
  lapack_int ipiv[EW_KP_MAX_NB];
  double complex *vec;            /* [dim × mmax] the window's vectors */
  double complex *X, *HX, *T;     /* [dim × GMAX] group work */
  double *last;                   /* [mmax] the last window's values */
  size_t last_k0, last_m;
  double qd;                      /* the phase of the present window */
  size_t nfac, nsol, ncount;
};

void ew_kpp_solver_free(ew_kpp_solver *s) {
  if (!s) return;
  ew_zshift_lu_free(s->lu);
  free(s->Z);
  free(s->vec);
  free(s->X);
  free(s->HX);
  free(s->T);
  free(s->last);
  free(s);
}

ew_kpp_solver *ew_kpp_solver_create(const ew_kpp_pencil *p, size_t mmax) {
  size_t N = p->n, nb = (size_t)p->nb, dim = N * nb;
  if (N < 3 || mmax < 1 || dim > (size_t)1 << 28) return NULL;
  ew_kpp_solver *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  s->p = p, s->dim = dim, s->dim1 = dim - nb, s->mmax = mmax;
  s->lu = ew_zshift_lu_create(N - 1, p->nb);
  s->Z = malloc(s->dim1 * nb * sizeof *s->Z);
  s->vec = malloc(dim * mmax * sizeof *s->vec);
  s->X = malloc(dim * GMAX * sizeof *s->X);
  s->HX = malloc(dim * GMAX * sizeof *s->HX);
  s->T = malloc(dim * GMAX * sizeof *s->T);
  s->last = malloc(mmax * sizeof *s->last);
  if (!s->lu || !s->Z || !s->vec || !s->X || !s->HX || !s->T || !s->last) {
    ew_kpp_solver_free(s);
    return NULL;
  }
  return s;
}

const double complex *ew_kpp_solver_vectors(const ew_kpp_solver *s) { return s->vec; }

void ew_kpp_solver_work(const ew_kpp_solver *s, size_t *factorizations, size_t *solves,
                        size_t *counts) {
  *factorizations = s->nfac, *solves = s->nsol, *counts = s->ncount;
}

/* the two non-zero block rows of A12 (the open block's coupling to the border node N − 1):
 * row 0, H_{0,N−1} = (W e^{iqd})ᴴ, and row N − 2, H_{N−2,N−1} = C_{N−2} (N >= 3 keeps them
 * apart) */
static void border_blocks(ew_kpp_solver *s) {
  const ew_kpp_pencil *p = s->p;
  size_t N = p->n, nb = (size_t)p->nb;
  double complex ph = cexp(I * s->qd);
  for (size_t b = 0; b < nb; b++)
    for (size_t a = 0; a < nb; a++) {
      s->A0[b * nb + a] = conj(p->wrap[a * nb + b] * ph);
      s->AL[b * nb + a] = p->H->off[(N - 2) * nb * nb + b * nb + a];
    }
}

/* out[a] −= Σ_i A21(a, i) y(i) = Σ_i conj(A12(i, a)) y(i) over the two block rows */
static void sub_a21(const ew_kpp_solver *s, const double complex *y, double complex *out) {
  size_t nb = (size_t)s->p->nb, off = (s->p->n - 2) * nb;
  for (size_t a = 0; a < nb; a++) {
    double complex v = 0;
    for (size_t i = 0; i < nb; i++)
      v += conj(s->A0[a * nb + i]) * y[i] + conj(s->AL[a * nb + i]) * y[off + i];
    out[a] -= v;
  }
}

/* H(q) − σB by bordered block elimination (kp_periodic.h): SuperLU's LU of the open block
 * A11 − σB (nodes 0 … N − 2, block tridiagonal), Z = A11⁻¹ A12, and the LU (LAPACK zgetrf)
 * of the border's nb × nb Schur complement S = A22 − σ w − A12ᴴ Z */
static ew_status factor_at(ew_kpp_solver *s, double sigma, ew_error *err) {
  const ew_kpp_pencil *p = s->p;
  size_t N = p->n, nb = (size_t)p->nb, nb2 = nb * nb, d1 = s->dim1;
  ew_kp_pencil open = *p->H;
  open.n = N - 1;
  s->nfac++;
  ew_status rc = ew_zshift_lu_factor(s->lu, &open, sigma, err);
  if (rc) return rc;
  border_blocks(s);
  memset(s->Z, 0, d1 * nb * sizeof *s->Z);
  for (size_t b = 0; b < nb; b++)
    for (size_t a = 0; a < nb; a++) {
      s->Z[b * d1 + a] = s->A0[b * nb + a];
      s->Z[b * d1 + (N - 2) * nb + a] = s->AL[b * nb + a];
    }
  if ((rc = ew_zshift_lu_solve(s->lu, s->Z, nb, err))) return rc;
  for (size_t b = 0; b < nb; b++) {
    double complex col[EW_KP_MAX_NB];
    for (size_t a = 0; a < nb; a++)
      col[a] = p->H->diag[(N - 1) * nb2 + b * nb + a] - (a == b ? sigma * p->prof->w[N - 1] : 0.0);
    sub_a21(s, s->Z + b * d1, col);
    for (size_t a = 0; a < nb; a++) s->S[b * nb + a] = col[a];
  }
  lapack_int info = p->lp.zgetrf(LAPACK_COL_MAJOR, (lapack_int)nb, (lapack_int)nb, s->S,
                                 (lapack_int)nb, s->ipiv);
  if (info != 0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV: singular border block", sigma);
  return EW_OK;
}

/* X ← (H(q) − σB)⁻¹ X, g columns of dim, with the factors of factor_at */
static ew_status solve_at(ew_kpp_solver *s, double complex *X, size_t g, ew_error *err) {
  size_t nb = (size_t)s->p->nb, d1 = s->dim1, dim = s->dim;
  for (size_t c = 0; c < g; c++) memcpy(s->T + c * d1, X + c * dim, d1 * sizeof *X);
  ew_status rc = ew_zshift_lu_solve(s->lu, s->T, g, err); /* y1 = A11⁻¹ b1 */
  if (rc) return rc;
  s->nsol += g;
  for (size_t c = 0; c < g; c++) {
    double complex x2[EW_KP_MAX_NB], *y1 = s->T + c * d1;
    for (size_t a = 0; a < nb; a++) x2[a] = X[c * dim + d1 + a];
    sub_a21(s, y1, x2); /* b2 − A21 y1 */
    s->p->lp.zgetrs(LAPACK_COL_MAJOR, 'N', (lapack_int)nb, 1, s->S, (lapack_int)nb, s->ipiv, x2,
                    (lapack_int)nb);
    for (size_t i = 0; i < d1; i++) { /* x1 = y1 − Z x2 */
      double complex v = y1[i];
      for (size_t b = 0; b < nb; b++) v -= s->Z[b * d1 + i] * x2[b];
      X[c * dim + i] = v;
    }
    for (size_t a = 0; a < nb; a++) X[c * dim + d1 + a] = x2[a];
  }
  return EW_OK;
}

/* the count at x, moved off an exactly singular pivot block */
static ew_status count_at(ew_kpp_solver *s, double x, size_t *c, ew_error *err) {
  ew_status rc = EW_OK;
  for (int t = 0; t < 4; t++) {
    s->ncount++;
    rc = ew_kpp_count_below(s->p, s->qd, x, c, err);
    if (rc != EW_ERR_NUMERIC) return rc;
    x += 1e-13 * (1.0 + fabs(x)) * (t + 1);
  }
  return rc;
}

/* x with count(x) = target, searched from guess outwards by steps doubling from step, then
 * bisection; NAN when eigenvalues target − 1 and target are not apart to rounding.  *direct
 * (may be NULL) = 1 when the guess itself had the count. */
static ew_status find_cut_at(ew_kpp_solver *s, size_t target, double guess, double step,
                             double *cut, int *direct, ew_error *err) {
  if (direct) *direct = 0;
  double lim = 4.0 * s->p->norm + 1.0, x = guess, lo = -lim, hi = lim;
  size_t c;
  ew_status rc = count_at(s, x, &c, err);
  if (rc) return rc;
  if (c == target) {
    if (direct) *direct = 1;
    return *cut = x, EW_OK;
  }
  double dir = c > target ? -1.0 : 1.0;
  if (c > target) hi = x;
  else lo = x;
  for (;;) { /* bracket */
    x += dir * step;
    step *= 2.0;
    if (x <= -lim || x >= lim) break;
    if ((rc = count_at(s, x, &c, err))) return rc;
    if (c == target) return *cut = x, EW_OK;
    if ((c > target) != (dir < 0)) {
      if (c > target) hi = x;
      else lo = x;
      break;
    }
    if (c > target) hi = x;
    else lo = x;
  }
  for (int it = 0; it < 200 && hi - lo > 4.0 * DBL_EPSILON * (fabs(lo) + fabs(hi)); it++) {
    double m = 0.5 * (lo + hi);
    if ((rc = count_at(s, m, &c, err))) return rc;
    if (c == target) return *cut = m, EW_OK;
    if (c > target) hi = m;
    else lo = m;
  }
  *cut = NAN;
  return EW_OK;
}

static ew_status find_cut(ew_kpp_solver *s, size_t target, double guess, double step,
                          double *cut, ew_error *err) {
  return find_cut_at(s, target, guess, step, cut, NULL, err);
}

/* Whether the cut x (count target) stands 1e-8 eV clear of the eigenvalues on both sides: a
 * cut that bisection drove into a degenerate cluster split by rounding only is not one (the
 * cluster then stays one group). */
static ew_status apart(ew_kpp_solver *s, double x, size_t target, int *ok, ew_error *err) {
  double sep = 1e-8 * (1.0 + fabs(x));
  size_t lo, hi;
  ew_status rc = count_at(s, x - sep, &lo, err);
  if (!rc) rc = count_at(s, x + sep, &hi, err);
  *ok = !rc && lo == target && hi == target;
  return rc;
}

/* B-inner product xᴴ B y */
static double complex bdot(const ew_kpp_pencil *p, const double complex *x, const double complex *y) {
  size_t nb = (size_t)p->nb;
  double complex acc = 0;
  for (size_t j = 0; j < p->n; j++) {
    double complex t = 0;
    for (size_t a = 0; a < nb; a++) t += conj(x[j * nb + a]) * y[j * nb + a];
    acc += p->prof->w[j] * t;
  }
  return acc;
}

static void pseudo_random(double complex *x, size_t dim, size_t col) {
  for (size_t i = 0; i < dim; i++)
    x[i] = cos(0.37 * (double)i + 1.1 * (double)col + 0.2) + I * sin(0.73 * (double)i + 0.5 * (double)col);
}

/* B-orthonormalise the g columns of X (twice classical Gram–Schmidt per column); a column
 * that vanishes is replaced by a pseudo-random one */
static void b_orthonormalise(const ew_kpp_pencil *p, double complex *X, size_t dim, size_t g) {
  for (size_t c = 0; c < g; c++) {
    double complex *x = X + c * dim;
    for (int tries = 0; tries < 3; tries++) {
      double before = sqrt(creal(bdot(p, x, x)));
      for (int pass = 0; pass < 2; pass++)
        for (size_t d = 0; d < c; d++) {
          double complex pr = bdot(p, X + d * dim, x);
          for (size_t i = 0; i < dim; i++) x[i] -= pr * X[d * dim + i];
        }
      double nrm = sqrt(creal(bdot(p, x, x)));
      if (nrm > 1e-10 * before && nrm > 0) {
        for (size_t i = 0; i < dim; i++) x[i] /= nrm;
        break;
      }
      pseudo_random(x, dim, c + 7 * (size_t)tries + 3);
    }
  }
}

/* Rayleigh–Ritz on the B-orthonormal X (g columns): X ← X V, HX = H X, theta ascending, the
 * residual ‖B^{−1/2}(HX − BXΘ)‖_F */
static double rayleigh_ritz(ew_kpp_solver *s, size_t g, double *theta) {
  const ew_kpp_pencil *p = s->p;
  size_t dim = s->dim, nb = (size_t)p->nb;
  lapack_complex_double A[GMAX * GMAX], work[4 * GMAX];
  double rwork[3 * GMAX];
  for (size_t c = 0; c < g; c++) ew_kpp_apply(p, s->qd, s->X + c * dim, s->HX + c * dim);
  for (size_t b = 0; b < g; b++)
    for (size_t a = 0; a < g; a++) {
      double complex acc = 0;
      for (size_t i = 0; i < dim; i++) acc += conj(s->X[a * dim + i]) * s->HX[b * dim + i];
      A[b * g + a] = acc;
    }
  lapack_int info = s->p->lp.zheev(LAPACK_COL_MAJOR, 'V', 'L', (lapack_int)g, A, (lapack_int)g,
                                   theta, work, 4 * GMAX, rwork);
  if (info != 0) return INFINITY;
  /* X ← X V and HX ← HX V through T */
  for (int pass = 0; pass < 2; pass++) {
    double complex *M = pass ? s->HX : s->X;
    for (size_t c = 0; c < g; c++)
      for (size_t i = 0; i < dim; i++) {
        double complex acc = 0;
        for (size_t q = 0; q < g; q++) acc += M[q * dim + i] * A[c * g + q];
        s->T[c * dim + i] = acc;
      }
    memcpy(M, s->T, g * dim * sizeof *M);
  }
  double r2 = 0.0;
  for (size_t c = 0; c < g; c++)
    for (size_t j = 0; j < p->n; j++)
      for (size_t a = 0; a < nb; a++) {
        size_t i = j * nb + a;
        double complex r = s->HX[c * dim + i] - theta[c] * p->prof->w[j] * s->X[c * dim + i];
        r2 += (creal(r) * creal(r) + cimag(r) * cimag(r)) / p->prof->w[j];
      }
  return sqrt(r2);
}

/* One group: the g eigenvalues in (a, b), from the start block in s->X and shift sigma.
 * *done = 1 when certified (theta, *rho set); 0 when not converged (the caller splits). */
static ew_status group_solve(ew_kpp_solver *s, double a, double b, size_t g, double sigma,
                             double *theta, double *rho, int *done, ew_error *err) {
  size_t dim = s->dim;
  double tol = fmax(1e-10, 256.0 * DBL_EPSILON * s->p->norm);
  *done = 0;
  b_orthonormalise(s->p, s->X, dim, g);
  for (int round = 0; round < ROUNDS; round++) {
    ew_status rc = factor_at(s, sigma, err);
    for (int t = 1; rc == EW_ERR_NUMERIC && t <= 3; t++) /* σ hit an eigenvalue exactly */
      rc = factor_at(s, sigma += 1e-9 * (b - a) / t, err);
    if (rc) return rc;
    /* inverse iteration on this factorisation while the residual falls by 10 a step */
    double r = INFINITY, prev = INFINITY;
    for (int it = 0; it < SOLVES && !(r > 0.1 * prev); it++) {
      prev = r;
      for (size_t c = 0; c < g; c++)
        for (size_t j = 0; j < s->p->n; j++)
          for (size_t q = 0; q < (size_t)s->p->nb; q++) s->X[c * dim + j * (size_t)s->p->nb + q] *= s->p->prof->w[j];
      if ((rc = solve_at(s, s->X, g, err))) return rc;
      b_orthonormalise(s->p, s->X, dim, g);
      r = rayleigh_ritz(s, g, theta);
      int inside = isfinite(r);
      for (size_t j = 0; j < g && inside; j++) inside = theta[j] - r > a && theta[j] + r < b;
      if (r <= tol && inside) {
        *rho = r, *done = 1;
        return EW_OK;
      }
      if (!isfinite(r)) break;
    }
    double mean = 0.0;
    for (size_t j = 0; j < g; j++) mean += theta[j] / (double)g;
    /* block Rayleigh quotient step while the Ritz values stay in the group's interval */
    sigma = mean > a && mean < b ? mean : 0.5 * (a + b) + 0.1 * (b - a) * (round % 2 ? 1 : -1);
  }
  return EW_OK;
}

/* the group (a, ca) … (b, cb) of the window starting at k0: solved, or split at its middle */
static ew_status solve_group(ew_kpp_solver *s, size_t k0, double a, size_t ca, double b,
                             size_t cb, int warm, double *values, double *bound, int depth,
                             ew_error *err) {
  size_t g = cb - ca, off = ca - k0;
  if (g == 0) return EW_OK;
  if (depth > DEPTH)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "periodic k·p: eigenvalues %zu … %zu at qd = "
                   "%.6g did not converge (interval [%.12g, %.12g] eV)", ca + 1, cb, s->qd, a, b);
  ew_status rc;
  if (g <= GMAX) {
    double sigma = 0.5 * (a + b);
    if (warm) {
      memcpy(s->X, s->vec + off * s->dim, g * s->dim * sizeof *s->X);
      double m = 0.0;
      for (size_t j = 0; j < g; j++) m += s->last[off + j] / (double)g;
      if (m > a && m < b) sigma = m;
    } else {
      for (size_t c = 0; c < g; c++) pseudo_random(s->X + c * s->dim, s->dim, off + c);
    }
    double theta[GMAX], rho = 0.0;
    int done = 0;
    if ((rc = group_solve(s, a, b, g, sigma, theta, &rho, &done, err))) return rc;
    if (done) {
      memcpy(s->vec + off * s->dim, s->X, g * s->dim * sizeof *s->X);
      for (size_t j = 0; j < g; j++) values[off + j] = theta[j], bound[off + j] = rho;
      return EW_OK;
    }
  }
  double m = 0.5 * (a + b);
  size_t cm;
  if ((rc = count_at(s, m, &cm, err))) return rc;
  if (cm < ca || cm > cb)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "periodic k·p: the count is not monotonic at "
                   "%.12g eV (%zu, outside %zu … %zu)", m, cm, ca, cb);
  if ((rc = solve_group(s, k0, a, ca, m, cm, warm, values, bound, depth + 1, err))) return rc;
  return solve_group(s, k0, m, cm, b, cb, warm, values, bound, depth + 1, err);
}

/* cold start: split [a, b] by bisection until each piece holds at most two eigenvalues */
static ew_status split_cold(ew_kpp_solver *s, size_t k0, double a, size_t ca, double b,
                            size_t cb, double *values, double *bound, int depth, ew_error *err) {
  if (cb == ca) return EW_OK;
  if (cb - ca <= 2 || b - a < 1e-9 || depth > DEPTH)
    return solve_group(s, k0, a, ca, b, cb, 0, values, bound, 0, err);
  double m = 0.5 * (a + b);
  size_t cm;
  ew_status rc = count_at(s, m, &cm, err);
  if (rc) return rc;
  if ((rc = split_cold(s, k0, a, ca, m, cm, values, bound, depth + 1, err))) return rc;
  return split_cold(s, k0, m, cm, b, cb, values, bound, depth + 1, err);
}

ew_status ew_kpp_window(ew_kpp_solver *s, double qd, size_t k0, size_t m, int warm,
                        double *values, double *bound, ew_error *err) {
  if (m < 1 || m > s->mmax || k0 + m > s->dim)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "periodic k·p: window %zu + %zu of %zu", k0, m,
                   s->dim);
  s->qd = qd;
  warm = warm && s->last_m == m && s->last_k0 == k0;
  double lo, hi, spread = 0.0;
  int d_lo = 0, d_hi = 0;
  ew_status rc;
  if (warm) {
    spread = fmax(1e-3, s->last[m - 1] - s->last[0]);
    if ((rc = find_cut_at(s, k0, s->last[0] - 0.05 * spread, 0.05 * spread, &lo, &d_lo, err)) ||
        (rc = find_cut_at(s, k0 + m, s->last[m - 1] + 0.05 * spread, 0.05 * spread, &hi, &d_hi,
                          err)))
      return rc;
  } else {
    double lim = 2.0 * s->p->norm + 1.0;
    if ((rc = find_cut(s, k0, 0.0, 0.25 * lim, &lo, err)) ||
        (rc = find_cut(s, k0 + m, 0.0, 0.25 * lim, &hi, err)))
      return rc;
  }
  int ok_lo = isfinite(lo), ok_hi = isfinite(hi);
  if ((ok_lo && (!warm || !d_lo) && (rc = apart(s, lo, k0, &ok_lo, err))) ||
      (ok_hi && (!warm || !d_hi) && (rc = apart(s, hi, k0 + m, &ok_hi, err))))
    return rc;
  if (!ok_lo || !ok_hi)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "periodic k·p: no cut isolates eigenvalues %zu "
                   "… %zu at qd = %.6g (the window ends inside a degenerate cluster)", k0 + 1,
                   k0 + m, qd);
  if (!warm) {
    rc = split_cold(s, k0, lo, k0, hi, k0 + m, values, bound, 0, err);
  } else { /* cuts between the last window's pairs, then one group per piece */
    double a = lo;
    size_t ca = k0;
    for (size_t t = 2; !rc; t += 2) {
      double b = hi;
      size_t cb = k0 + m;
      if (t < m) {
        double gap = s->last[t] - s->last[t - 1];
        int ok = 0, direct = 0;
        if ((rc = find_cut_at(s, k0 + t, 0.5 * (s->last[t - 1] + s->last[t]),
                              fmax(0.25 * gap, 1e-6 * spread), &b, &direct, err)))
          break;
        /* the midpoint of two values 1e-6 eV apart or more that holds the count is clear of
           them; a cut that needed the search, or a tight pair, is checked */
        ok = isfinite(b);
        if (ok && (!direct || gap < 1e-6) && (rc = apart(s, b, k0 + t, &ok, err))) break;
        if (!ok) continue; /* not apart: this pair joins the next */
        cb = k0 + t;
      }
      rc = solve_group(s, k0, a, ca, b, cb, 1, values, bound, 0, err);
      a = b, ca = cb;
      if (cb == k0 + m) break;
    }
  }
  if (rc) return rc;
  memcpy(s->last, values, m * sizeof *values);
  s->last_k0 = k0, s->last_m = m;
  return EW_OK;
}
