/* kp_inertia.c — block LDLᴴ inertia counts (see kp_inertia.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (a library call per
 * product otherwise): every value here is finite.  GCC's -fcx-limited-range, for this file. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range", "unroll-loops")
#endif
#include "kp_inertia.h"

#include "lapack_dyn.h"
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

#define LWORK (64 * EW_KP_MAX_NB)

struct ew_kp_inertia {
  int nb;
  lapack_complex_double D[EW_KP_MAX_NB * EW_KP_MAX_NB], X[EW_KP_MAX_NB * EW_KP_MAX_NB];
  lapack_complex_double work[LWORK];
  lapack_int ipiv[EW_KP_MAX_NB];
  ew_lapack lp;
};

ew_kp_inertia *ew_kp_inertia_create(int nb) {
  if (nb < 1 || nb > EW_KP_MAX_NB) return NULL;
  ew_kp_inertia *w = calloc(1, sizeof *w);
  if (w && ew_lapack_open(&w->lp, NULL) != EW_OK) {
    free(w);
    return NULL;
  }
  if (w) w->nb = nb;
  return w;
}

void ew_kp_inertia_free(ew_kp_inertia *w) {
  if (!w) return;
  ew_lapack_close(&w->lp);
  free(w);
}

/* negative eigenvalues of the Bunch–Kaufman block diagonal in w->D (lower, after zhetrf) */
static size_t negatives(const ew_kp_inertia *w) {
  int nb = w->nb;
  size_t neg = 0;
  for (int k = 0; k < nb; k++) {
    double d11 = creal(w->D[k * nb + k]);
    if (w->ipiv[k] > 0 || k + 1 == nb) {
      neg += d11 < 0.0;
      continue;
    }
    double d22 = creal(w->D[(k + 1) * nb + k + 1]);
    double complex d21 = w->D[k * nb + k + 1];
    double det = d11 * d22 - creal(d21 * conj(d21));
    neg += det < 0.0 ? 1 : d11 + d22 < 0.0 ? 2 : 0;
    k++;
  }
  return neg;
}

/* In place D = L diag(d) Lᴴ without pivoting (lower triangle: L below the diagonal, d on
 * it), the negatives of d into *neg; −1 when a pivot falls below 1e-3 of the largest
 * diagonal entry (the no-pivot factors could then grow: the caller uses zhetrf instead).
 * By Sylvester's law the signs of d are D's inertia; on these blocks (nearly diagonal in the
 * J basis) the plain factorisation almost always passes: ~3× cheaper than zhetrf + zhetrs
 * through LAPACKE for nb = 4. */
static int ldl_plain(const int nb, double complex *D, size_t *neg) {
  double big = 0.0;
  for (int k = 0; k < nb; k++) big = fmax(big, fabs(creal(D[k * nb + k])));
  size_t ng = 0;
  for (int k = 0; k < nb; k++) {
    double dk = creal(D[k * nb + k]);
    for (int q = 0; q < k; q++) dk -= creal(D[q * nb + q]) * creal(D[q * nb + k] * conj(D[q * nb + k]));
    if (!(fabs(dk) >= 1e-3 * big)) return -1;
    D[k * nb + k] = dk;
    ng += dk < 0.0;
    for (int r = k + 1; r < nb; r++) { /* L_rk = (D_rk − Σ L_rq d_q conj(L_kq)) / d_k */
      double complex v = D[k * nb + r];
      for (int q = 0; q < k; q++) v -= D[q * nb + r] * creal(D[q * nb + q]) * conj(D[q * nb + k]);
      D[k * nb + r] = v / dk;
    }
  }
  *neg = ng;
  return 0;
}

/* X ← D⁻¹ X (nb columns) with the factors of ldl_plain */
static void ldl_solve(const int nb, const double complex *D, double complex *X) {
  for (int c = 0; c < nb; c++) {
    double complex *x = X + c * nb;
    for (int r = 0; r < nb; r++)
      for (int q = 0; q < r; q++) x[r] -= D[q * nb + r] * x[q];
    for (int r = 0; r < nb; r++) x[r] /= creal(D[r * nb + r]);
    for (int r = nb - 1; r >= 0; r--)
      for (int q = r + 1; q < nb; q++) x[r] -= conj(D[r * nb + q]) * x[q];
  }
}

/* the pivot block's negatives and X = D⁻¹ C: the plain LDLᴴ, or LAPACK's Bunch–Kaufman */
static int pivot_block(ew_kp_inertia *w, const double complex *C, size_t *neg) {
  int nb = w->nb;
  size_t nb2 = (size_t)nb * (size_t)nb;
  double complex save[EW_KP_MAX_NB * EW_KP_MAX_NB];
  memcpy(save, w->D, nb2 * sizeof *save);
  int plain = nb == 4 ? ldl_plain(4, w->D, neg) : nb == 8 ? ldl_plain(8, w->D, neg) : ldl_plain(nb, w->D, neg);
  if (plain == 0) {
    if (C) {
      memcpy(w->X, C, nb2 * sizeof *w->X);
      ldl_solve(nb, w->D, w->X);
    }
    return 0;
  }
  memcpy(w->D, save, nb2 * sizeof *save);
  lapack_int info = w->lp.zhetrf(LAPACK_COL_MAJOR, 'L', nb, w->D, nb, w->ipiv, w->work, LWORK);
  if (info != 0) return -1;
  *neg = negatives(w);
  if (C) {
    memcpy(w->X, C, nb2 * sizeof *w->X);
    w->lp.zhetrs(LAPACK_COL_MAJOR, 'L', nb, nb, w->D, nb, w->ipiv, w->X, nb);
  }
  return 0;
}

ew_status ew_kp_count_below(ew_kp_inertia *w, const ew_kp_pencil *H, double sigma,
                            size_t *count, ew_error *err) {
  int nb = w->nb;
  size_t nb2 = (size_t)nb * (size_t)nb, neg = 0;
  memcpy(w->D, H->diag, nb2 * sizeof *w->D);
  for (int a = 0; a < nb; a++) w->D[a * nb + a] -= sigma * H->w[0];
  for (size_t i = 0; i < H->n; i++) {
    const double complex *C = i + 1 < H->n ? H->off + i * nb2 : NULL;
    size_t ni = 0;
    if (pivot_block(w, C, &ni))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                     "block LDLᴴ count at %.12g eV: singular pivot block at node %zu", sigma, i);
    neg += ni;
    if (!C) break;
    /* D_{i+1} = A_{i+1} − σ w − Cᴴ X, X = D_i⁻¹ C (the product written out: nb <= 8) */
    const double complex *A = H->diag + (i + 1) * nb2;
    for (int b = 0; b < nb; b++)
      for (int a = 0; a < nb; a++) {
        double complex acc = A[b * nb + a];
        for (int q = 0; q < nb; q++) acc -= conj(C[a * nb + q]) * w->X[b * nb + q];
        w->D[b * nb + a] = acc;
      }
    for (int a = 0; a < nb; a++) w->D[a * nb + a] -= sigma * H->w[i + 1];
  }
  *count = neg;
  return EW_OK;
}
