/* kp_blocklu.c — block-tridiagonal LU of a k·p pencil (see kp_blocklu.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (a library call per
 * product otherwise): every value here is finite.  GCC's -fcx-limited-range, for this file. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range", "unroll-loops")
#endif
#include "kp_blocklu.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

#define GROWTH_MAX 1e8 /* largest |element| of D_i⁻¹ C_i accepted (the C_i are of order D_i) */

struct ew_kp_blocklu {
  size_t n;
  int nb;
  double complex *dinv; /* [n · nb²] D_i⁻¹ (column-major blocks) */
  double complex *x;    /* [(n − 1) · nb²] X_i = D_i⁻¹ C_i */
  const double complex *off; /* the factorised pencil's C_i (for the forward sweep) */
};

ew_kp_blocklu *ew_kp_blocklu_create(size_t n, int nb) {
  if (n < 1 || nb < 1 || nb > EW_KP_MAX_NB) return NULL;
  ew_kp_blocklu *f = calloc(1, sizeof *f);
  if (!f) return NULL;
  size_t nb2 = (size_t)nb * (size_t)nb;
  f->n = n, f->nb = nb;
  f->dinv = malloc(n * nb2 * sizeof *f->dinv);
  f->x = malloc((n > 1 ? n - 1 : 1) * nb2 * sizeof *f->x);
  if (!f->dinv || !f->x) {
    ew_kp_blocklu_free(f);
    return NULL;
  }
  return f;
}

void ew_kp_blocklu_free(ew_kp_blocklu *f) {
  if (!f) return;
  free(f->dinv);
  free(f->x);
  free(f);
}

/* The factorisation (invert, factor_nb) at -O3: GCC then pairs the real and imaginary parts
 * of the block products in vector registers, 25 % fewer instructions measured; the solves
 * below are slower so and keep the file's options. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC push_options
#pragma GCC optimize("O3")
#endif

/* inv ← A⁻¹ (nb × nb column-major) by Gauss–Jordan with partial pivoting (by |re| + |im|); A is destroyed.
 * 0 ok, −1 for a zero pivot. */
static inline int invert(const int nb, double complex *A, double complex *inv) {
  for (int k = 0; k < nb * nb; k++) inv[k] = 0;
  for (int a = 0; a < nb; a++) inv[a * nb + a] = 1;
  for (int c = 0; c < nb; c++) {
    int piv = c;
    double best = fabs(creal(A[c * nb + c])) + fabs(cimag(A[c * nb + c]));
    for (int r = c + 1; r < nb; r++) {
      double m = fabs(creal(A[c * nb + r])) + fabs(cimag(A[c * nb + r]));
      if (m > best) best = m, piv = r;
    }
    if (!(best > 0.0) || !isfinite(best)) return -1;
    if (piv != c)
      for (int k = 0; k < nb; k++) {
        double complex t = A[k * nb + c];
        A[k * nb + c] = A[k * nb + piv], A[k * nb + piv] = t;
        t = inv[k * nb + c];
        inv[k * nb + c] = inv[k * nb + piv], inv[k * nb + piv] = t;
      }
    double complex s = 1.0 / A[c * nb + c];
    /* columns < c of A are eliminated already, column c becomes e_c: only k > c of A */
    for (int k = c + 1; k < nb; k++) A[k * nb + c] *= s;
    for (int k = 0; k < nb; k++) inv[k * nb + c] *= s;
    for (int r = 0; r < nb; r++) {
      if (r == c) continue;
      double complex m = A[c * nb + r];
      for (int k = c + 1; k < nb; k++) A[k * nb + r] -= m * A[k * nb + c];
      for (int k = 0; k < nb; k++) inv[k * nb + r] -= m * inv[k * nb + c];
    }
  }
  return 0;
}

/* the factorisation with nb a compile-time constant in each instance (the small loops
 * unroll); *at (out) the failing node, *growth its element growth (0: a singular block) */
static inline int factor_nb(ew_kp_blocklu *f, const ew_kp_pencil *H, double sigma, const int nb,
                            size_t *at, double *grow) {
  size_t nb2 = (size_t)nb * (size_t)nb;
  double complex D[EW_KP_MAX_NB * EW_KP_MAX_NB];
  memcpy(D, H->diag, nb2 * sizeof *D);
  for (int a = 0; a < nb; a++) D[a * nb + a] -= sigma * H->w[0];
  f->off = H->off;
  for (size_t i = 0; i < f->n; i++) {
    double complex *Di = f->dinv + i * nb2;
    if (invert(nb, D, Di)) {
      *at = i, *grow = 0.0;
      return -1;
    }
    if (i + 1 == f->n) break;
    const double complex *C = H->off + i * nb2;
    double complex *X = f->x + i * nb2;
    double growth = 0.0;
    for (int b = 0; b < nb; b++) /* X = D⁻¹ C */
      for (int a = 0; a < nb; a++) {
        double complex acc = 0;
        for (int q = 0; q < nb; q++) acc += Di[q * nb + a] * C[b * nb + q];
        X[b * nb + a] = acc;
        double m = fabs(creal(acc)) + fabs(cimag(acc));
        if (m > growth) growth = m;
      }
    if (!(growth < GROWTH_MAX)) {
      *at = i, *grow = growth;
      return -1;
    }
    const double complex *A = H->diag + (i + 1) * nb2;
    for (int b = 0; b < nb; b++) /* D_{i+1} = A − σ w − Cᴴ X: Hermitian, the lower half */
      for (int a = b; a < nb; a++) {
        double complex acc = A[b * nb + a];
        for (int q = 0; q < nb; q++) acc -= conj(C[a * nb + q]) * X[b * nb + q];
        D[b * nb + a] = acc, D[a * nb + b] = conj(acc);
      }
    for (int a = 0; a < nb; a++) D[a * nb + a] = creal(D[a * nb + a]);
    for (int a = 0; a < nb; a++) D[a * nb + a] -= sigma * H->w[i + 1];
  }
  return 0;
}

#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC pop_options
#endif

ew_status ew_kp_blocklu_factor(ew_kp_blocklu *f, const ew_kp_pencil *H, double sigma,
                               ew_error *err) {
  size_t at = 0;
  double grow = 0.0;
  int bad = f->nb == 4 ? factor_nb(f, H, sigma, 4, &at, &grow)
            : f->nb == 6 ? factor_nb(f, H, sigma, 6, &at, &grow)
            : f->nb == 8 ? factor_nb(f, H, sigma, 8, &at, &grow)
                         : factor_nb(f, H, sigma, f->nb, &at, &grow);
  if (!bad) return EW_OK;
  if (grow == 0.0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "block LU at %.12g eV: singular pivot block "
                   "at node %zu", sigma, at);
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "block LU at %.12g eV: element growth %.3g at "
                 "node %zu", sigma, grow, at);
}

/* one column: forward u_i = D_i⁻¹ (b_i − C_{i−1}ᴴ u_{i−1}), back x_i = u_i − X_i x_{i+1};
 * nb a compile-time constant in each instance below (the small loops unroll) */
static inline void solve1(const ew_kp_blocklu *f, double complex *x, const int nb) {
  size_t nb2 = (size_t)nb * (size_t)nb, n = f->n;
  double complex g[EW_KP_MAX_NB];
  for (size_t i = 0; i < n; i++) {
    double complex *xi = x + i * (size_t)nb;
    for (int a = 0; a < nb; a++) g[a] = xi[a];
    if (i > 0) {
      const double complex *C = f->off + (i - 1) * nb2, *u = xi - nb;
      for (int a = 0; a < nb; a++)
        for (int q = 0; q < nb; q++) g[a] -= conj(C[a * nb + q]) * u[q];
    }
    const double complex *Di = f->dinv + i * nb2;
    double complex acc[EW_KP_MAX_NB];
    for (int a = 0; a < nb; a++) acc[a] = 0;
    for (int q = 0; q < nb; q++)
      for (int a = 0; a < nb; a++) acc[a] += Di[q * nb + a] * g[q];
    for (int a = 0; a < nb; a++) xi[a] = acc[a];
  }
  for (size_t i = n - 1; i-- > 0;) {
    double complex *xi = x + i * (size_t)nb;
    const double complex *X = f->x + i * nb2, *xn = xi + nb;
    for (int q = 0; q < nb; q++)
      for (int a = 0; a < nb; a++) xi[a] -= X[q * nb + a] * xn[q];
  }
}

void ew_kp_blocklu_solve(const ew_kp_blocklu *f, double complex *X, size_t nrhs) {
  size_t dim = f->n * (size_t)f->nb;
  for (size_t j = 0; j < nrhs; j++) switch (f->nb) {
    case 4: solve1(f, X + j * dim, 4); break;
    case 6: solve1(f, X + j * dim, 6); break;
    case 8: solve1(f, X + j * dim, 8); break;
    default: solve1(f, X + j * dim, f->nb); break;
    }
}
