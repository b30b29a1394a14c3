/* kp_inertia.c — block LDLᴴ inertia counts (see kp_inertia.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (a library call per
 * product otherwise): every value here is finite.  GCC's -fcx-limited-range, for this file. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range")
#endif
#include "kp_inertia.h"

#include <lapacke.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

#define LWORK (64 * EW_KP_MAX_NB)

struct ew_kp_inertia {
  int nb;
  lapack_complex_double D[EW_KP_MAX_NB * EW_KP_MAX_NB], X[EW_KP_MAX_NB * EW_KP_MAX_NB];
  lapack_complex_double work[LWORK];
  lapack_int ipiv[EW_KP_MAX_NB];
};

ew_kp_inertia *ew_kp_inertia_create(int nb) {
  if (nb < 1 || nb > EW_KP_MAX_NB) return NULL;
  ew_kp_inertia *w = calloc(1, sizeof *w);
  if (w) w->nb = nb;
  return w;
}

void ew_kp_inertia_free(ew_kp_inertia *w) { free(w); }

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

ew_status ew_kp_count_below(ew_kp_inertia *w, const ew_kp_pencil *H, double sigma,
                            size_t *count, ew_error *err) {
  int nb = w->nb;
  size_t nb2 = (size_t)nb * (size_t)nb, neg = 0;
  memcpy(w->D, H->diag, nb2 * sizeof *w->D);
  for (int a = 0; a < nb; a++) w->D[a * nb + a] -= sigma * H->w[0];
  for (size_t i = 0; i < H->n; i++) {
    lapack_int info = LAPACKE_zhetrf_work(LAPACK_COL_MAJOR, 'L', nb, w->D, nb, w->ipiv,
                                          w->work, LWORK);
    if (info != 0)
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                     "block LDLᴴ count at %.12g eV: singular pivot block at node %zu", sigma, i);
    neg += negatives(w);
    if (i + 1 == H->n) break;
    const double complex *C = H->off + i * nb2;
    memcpy(w->X, C, nb2 * sizeof *w->X);
    LAPACKE_zhetrs_work(LAPACK_COL_MAJOR, 'L', nb, nb, w->D, nb, w->ipiv, w->X, nb);
    /* D_{i+1} = A_{i+1} − σ w − Cᴴ X, X = D_i⁻¹ C (the product written out: nb <= 6) */
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
