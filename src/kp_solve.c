/* kp_solve.c — shift-invert subspace iteration with Rayleigh–Ritz and a certified count
 * (see kp_solve.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (a library call per
 * product otherwise): every value here is finite.  GCC's -fcx-limited-range, for this file. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range", "unroll-loops")
#endif
#include "kp_solve.h"

#include "lapack_dyn.h"
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "kp_blocklu.h"

#define KP_MAX_ITER 400
#define KP_RESID_TOL (s->tol)
#define KP_PHASE1_TOL 1e-4 /* eV: where phase 1 hands over to the per-pair shifts */
/* eV: pairs closer than this take a Rayleigh–Ritz step together once converged (a pair's
   eigenvalue error is ~r²/gap to the levels outside its step: r <= 1e-6 eV over a gap of
   1 meV gives 1e-9 eV, the accuracy the block's step gave; a superlattice's miniband has
   its levels µeV apart, where a pair alone would be 1e-7 eV off) */
#define KP_MERGE_EV 1e-3

struct ew_kp_solver {
  size_t n, dim, p;
  int nb;
  ew_zshift_lu *lu;            /* the pivoting sparse LU: when the block LU's elements grow */
  ew_kp_blocklu *blu;          /* the block-tridiagonal LU (kp_blocklu.h), tried first */
  int use_blu;                 /* the current factorisation is blu's */
  ew_kp_inertia *inertia;
  ew_lapack lp;                /* zhegv for the Rayleigh–Ritz steps */
  double complex *X, *Y, *HY;  /* [dim × p] */
  double complex *Hs, *Bs;     /* [p × p] */
  double *theta, *rwork;       /* [p], [3p] */
  double complex *work;        /* [lwork] */
  size_t lwork;
  size_t factorizations, solves, counts;
  int warm; /* X holds converged vectors of a previous call */
  double tol; /* residual tolerance, eV */
  size_t win0; /* first column of the last ew_kp_around window */
  size_t rr;   /* Rayleigh–Ritz steps so far */
  size_t hx_cols; /* columns of H X a Rayleigh–Ritz step must form (the wanted ones) */
  size_t rr_cols; /* columns the refinement's Rayleigh–Ritz steps take (m in ew_kp_lowest) */
  int by_cluster; /* refinement: Rayleigh–Ritz per cluster, the block's only when they overlap */
  size_t cid[64], next_cid; /* per column: the Rayleigh–Ritz step it last took part in */
};

static void seed(ew_kp_solver *s, size_t j0);

void ew_kp_solver_free(ew_kp_solver *s) {
  if (!s) return;
  ew_zshift_lu_free(s->lu);
  ew_kp_blocklu_free(s->blu);
  ew_kp_inertia_free(s->inertia);
  ew_lapack_close(&s->lp);
  free(s->X);
  free(s->Y);
  free(s->HY);
  free(s->Hs);
  free(s->Bs);
  free(s->theta);
  free(s->rwork);
  free(s->work);
  free(s);
}

ew_kp_solver *ew_kp_solver_create(size_t n, int nb, size_t p) {
  if (p < 2 || p > 64 || n < 1) return NULL; /* rayleigh_ritz keeps a row of p on the stack */
  ew_kp_solver *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  s->n = n, s->nb = nb, s->p = p, s->dim = n * (size_t)nb;
  s->lwork = 64 * p;
  s->tol = 1e-8;
  s->hx_cols = p, s->rr_cols = p;
  s->lu = ew_zshift_lu_create(n, nb);
  s->blu = ew_kp_blocklu_create(n, nb);
  s->inertia = ew_kp_inertia_create(nb);
  int lapack = ew_lapack_open(&s->lp, NULL) == EW_OK;
  s->X = malloc(s->dim * p * sizeof *s->X);
  s->Y = malloc(s->dim * p * sizeof *s->Y);
  s->HY = malloc(s->dim * p * sizeof *s->HY);
  s->Hs = malloc(p * p * sizeof *s->Hs);
  s->Bs = malloc(p * p * sizeof *s->Bs);
  s->theta = malloc(p * sizeof *s->theta);
  s->rwork = malloc(3 * p * sizeof *s->rwork);
  s->work = malloc(s->lwork * sizeof *s->work);
  if (!lapack || !s->lu || !s->blu || !s->inertia || !s->X || !s->Y || !s->HY || !s->Hs || !s->Bs || !s->theta ||
      !s->rwork || !s->work) {
    ew_kp_solver_free(s);
    return NULL;
  }
  seed(s, 0);
  return s;
}

const double complex *ew_kp_solver_vectors(const ew_kp_solver *s) { return s->X; }

void ew_kp_solver_set_tol(ew_kp_solver *s, double tol_eV) { s->tol = tol_eV; }

double complex *ew_kp_solver_start(ew_kp_solver *s) {
  s->warm = 1;
  return s->X;
}

void ew_kp_solver_work(const ew_kp_solver *s, size_t *f, size_t *so, size_t *c) {
  *f = s->factorizations, *so = s->solves, *c = s->counts;
}

/* The lower triangle of G = Aᴴ C for dim × p blocks A, C (p × p, column-major; zhegv reads
 * only that triangle): written out, the pairs two at a time (half of a general product, and
 * no reference-BLAS call: ~4× fewer instructions measured on a 5292 × 14 block). */
static void gram(const ew_kp_solver *s, const double complex *A, const double complex *C,
                 double complex *G, size_t p) {
  size_t dim = s->dim;
  for (size_t j = 0; j < p; j++) {
    const double *c = (const double *)(const void *)(C + j * dim);
    size_t i = j;
    for (; i + 1 < p; i += 2) {
      const double *a0 = (const double *)(const void *)(A + i * dim), *a1 = a0 + 2 * dim;
      double r0 = 0, i0 = 0, r1 = 0, i1 = 0;
      for (size_t k = 0; k < 2 * dim; k += 2) {
        r0 += a0[k] * c[k] + a0[k + 1] * c[k + 1], i0 += a0[k] * c[k + 1] - a0[k + 1] * c[k];
        r1 += a1[k] * c[k] + a1[k + 1] * c[k + 1], i1 += a1[k] * c[k + 1] - a1[k + 1] * c[k];
      }
      G[j * p + i] = r0 + I * i0, G[j * p + i + 1] = r1 + I * i1;
    }
    for (; i < p; i++) {
      const double *a0 = (const double *)(const void *)(A + i * dim);
      double r0 = 0, i0 = 0;
      for (size_t k = 0; k < 2 * dim; k += 2)
        r0 += a0[k] * c[k] + a0[k + 1] * c[k + 1], i0 += a0[k] * c[k + 1] - a0[k + 1] * c[k];
      G[j * p + i] = r0 + I * i0;
    }
  }
}

/* Out = A c for a dim × p block A and p × p c (column-major), by row chunks that stay in
 * the first-level cache, two output columns at a time summed in registers */
static void times_small(const ew_kp_solver *s, const double complex *A, const double complex *c,
                        double complex *Out, size_t ncols, size_t p) {
  size_t dim = s->dim;
  for (size_t k0 = 0; k0 < dim; k0 += 256) {
    size_t k1 = k0 + 256 < dim ? k0 + 256 : dim;
    for (size_t j = 0; j < ncols; j += 2) {
      size_t j1 = j + 1 < ncols ? j + 1 : j; /* an odd last column: computed twice */
      double *o0 = (double *)(void *)(Out + j * dim), *o1 = (double *)(void *)(Out + j1 * dim);
      for (size_t k = 2 * k0; k < 2 * k1; k += 2) {
        double r0 = 0.0, i0 = 0.0, r1 = 0.0, i1 = 0.0;
        for (size_t q = 0; q < p; q++) {
          const double *a = (const double *)(const void *)(A + q * dim);
          double ar = a[k], ai = a[k + 1];
          double c0r = creal(c[j * p + q]), c0i = cimag(c[j * p + q]);
          double c1r = creal(c[j1 * p + q]), c1i = cimag(c[j1 * p + q]);
          r0 += c0r * ar - c0i * ai, i0 += c0r * ai + c0i * ar;
          r1 += c1r * ar - c1i * ai, i1 += c1r * ai + c1i * ar;
        }
        o0[k] = r0, o0[k + 1] = i0, o1[k] = r1, o1[k + 1] = i1;
      }
    }
  }
}

/* One Rayleigh–Ritz step on span of the first p columns of Y (all of the block or the wanted
 * ones: the columns after p are copied through, their theta = ∞): X, and HY turned into H X;
 * theta ascending.  0 ok, −1 when the small pencil is not definite (the block lost rank). */
static int rayleigh_ritz(ew_kp_solver *s, const ew_kp_pencil *H, size_t p) {
  size_t dim = s->dim;
  s->rr++;
  for (size_t j = 0; j < p; j++) ew_kp_pencil_apply(H, s->Y + j * dim, s->HY + j * dim);
  gram(s, s->Y, s->HY, s->Hs, p);
  for (size_t k = 0; k < dim * p; k++) s->X[k] = H->w[(k % dim) / (size_t)s->nb] * s->Y[k];
  gram(s, s->Y, s->X, s->Bs, p); /* Yᴴ B Y, with B Y in X for the moment */
  lapack_int info = s->lp.zhegv(LAPACK_COL_MAJOR, 1, 'V', 'L', (lapack_int)p, s->Hs,
                                (lapack_int)p, s->Bs, (lapack_int)p, s->theta, s->work,
                                (lapack_int)s->lwork, s->rwork);
  if (info != 0) return -1;
  /* X = Y c and H X = (H Y) c (into Y, free afterwards) */
  times_small(s, s->Y, s->Hs, s->X, p, p);
  size_t hx = s->hx_cols < p ? s->hx_cols : p;
  times_small(s, s->HY, s->Hs, s->Y, hx, p); /* H X: only the columns residuals read */
  for (size_t j = p; j < s->p; j++) s->theta[j] = INFINITY; /* X's columns there: untouched */
  double complex *t = s->HY;
  s->HY = s->Y, s->Y = t;
  return 0;
}

/* largest B⁻¹-norm residual of the m lowest Ritz pairs (H X in HY) */
static double residual(const ew_kp_solver *s, const ew_kp_pencil *H, size_t m) {
  double worst = 0.0;
  for (size_t j = 0; j < m; j++) {
    double rr = 0.0;
    for (size_t k = 0; k < s->dim; k++) {
      double wk = H->w[k / (size_t)s->nb];
      double complex r = s->HY[j * s->dim + k] - s->theta[j] * wk * s->X[j * s->dim + k];
      rr += creal(r * conj(r)) / wk;
    }
    if (rr > worst) worst = rr;
  }
  return sqrt(worst);
}

/* Factor H − σB: the block LU, or the pivoting sparse LU when its elements grow. */
static ew_status factor_at(ew_kp_solver *s, const ew_kp_pencil *H, double sigma,
                           ew_error *err) {
  ew_error quiet;
  s->use_blu = ew_kp_blocklu_factor(s->blu, H, sigma, &quiet) == EW_OK;
  return s->use_blu ? EW_OK : ew_zshift_lu_factor(s->lu, H, sigma, err);
}

/* X ← (H − σB)⁻¹ X with the last factorisation */
static ew_status solve_at(ew_kp_solver *s, double complex *X, size_t nrhs, ew_error *err) {
  if (!s->use_blu) return ew_zshift_lu_solve(s->lu, X, nrhs, err);
  ew_kp_blocklu_solve(s->blu, X, nrhs);
  return EW_OK;
}

static ew_status factor_near(ew_kp_solver *s, const ew_kp_pencil *H, double *sigma,
                             ew_error *err) {
  ew_status rc = EW_ERR_NUMERIC;
  for (int t = 0; t < 4 && rc == EW_ERR_NUMERIC; t++) {
    rc = factor_at(s, H, *sigma, err);
    s->factorizations++;
    if (rc == EW_ERR_NUMERIC) *sigma -= 1e-9 * (1.0 + fabs(*sigma)); /* an exact eigenvalue */
  }
  return rc;
}

static ew_status count_at(ew_kp_solver *s, const ew_kp_pencil *H, double sigma, size_t *c,
                          ew_error *err) {
  ew_status rc = EW_ERR_NUMERIC;
  for (int t = 0; t < 4 && rc == EW_ERR_NUMERIC; t++) {
    rc = ew_kp_count_below(s->inertia, H, sigma, c, err);
    s->counts++;
    sigma += 1e-11 * (1.0 + fabs(sigma)) * (t + 1); /* a singular leading block: move */
  }
  return rc;
}

/* Per-column residuals of the Ritz pairs j0 <= j < j1 into r[j]. */
static void residuals_range(const ew_kp_solver *s, const ew_kp_pencil *H, size_t j0,
                            size_t j1, double *r) {
  for (size_t j = j0; j < j1; j++) {
    double rr = 0.0;
    for (size_t k = 0; k < s->dim; k++) {
      double wk = H->w[k / (size_t)s->nb];
      double complex d = s->HY[j * s->dim + k] - s->theta[j] * wk * s->X[j * s->dim + k];
      rr += creal(d * conj(d)) / wk;
    }
    r[j] = sqrt(rr);
  }
}

/* Y ← (H − σB)⁻¹ B X for columns [j0, j1) of X (the rest of Y: X itself), then Rayleigh–Ritz
 * over all of Y. */
static ew_status step(ew_kp_solver *s, const ew_kp_pencil *H, size_t j0, size_t j1,
                      ew_error *err) {
  size_t dim = s->dim;
  memcpy(s->Y, s->X, dim * s->p * sizeof *s->Y);
  for (size_t j = j0; j < j1; j++)
    for (size_t k = 0; k < dim; k++) s->Y[j * dim + k] *= H->w[k / (size_t)s->nb];
  ew_status rc = solve_at(s, s->Y + j0 * dim, j1 - j0, err);
  if (rc) return rc;
  s->solves += j1 - j0;
  if (rayleigh_ritz(s, H, s->p))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: the iterated block lost rank");
  return EW_OK;
}

/* B-orthonormalise columns [j0, j1) of X against columns [q0, j) before each (modified
 * Gram–Schmidt; q0 = j0: among themselves). */
static void b_orthonormalise_from(ew_kp_solver *s, const ew_kp_pencil *H, size_t q0, size_t j0,
                                  size_t j1) {
  size_t dim = s->dim;
  for (size_t j = j0; j < j1; j++) {
    double complex *x = s->X + j * dim;
    for (size_t q = q0; q < j; q++) {
      const double complex *y = s->X + q * dim;
      double complex c = 0;
      for (size_t k = 0; k < dim; k++) c += conj(y[k]) * H->w[k / (size_t)s->nb] * x[k];
      for (size_t k = 0; k < dim; k++) x[k] -= c * y[k];
    }
    double nn = 0.0;
    for (size_t k = 0; k < dim; k++) nn += H->w[k / (size_t)s->nb] * creal(x[k] * conj(x[k]));
    double f = nn > 0.0 ? 1.0 / sqrt(nn) : 1.0;
    for (size_t k = 0; k < dim; k++) x[k] *= f;
  }
}
static void b_orthonormalise(ew_kp_solver *s, const ew_kp_pencil *H, size_t j0, size_t j1) {
  b_orthonormalise_from(s, H, j0, j0, j1);
}

/* Rayleigh–Ritz on the cluster columns [j, j1) of X alone (H X there into HY, θ; X and HY
 * rotated in place).  0 ok, −1 when the small pencil is not definite. */
static int cluster_rr(ew_kp_solver *s, const ew_kp_pencil *H, size_t j, size_t j1) {
  size_t dim = s->dim, q = j1 - j;
  double complex *X = s->X + j * dim, *HX = s->HY + j * dim, *BX = s->Y + j * dim;
  for (size_t c = 0; c < q; c++) ew_kp_pencil_apply(H, X + c * dim, HX + c * dim);
  for (size_t k = 0; k < q * dim; k++) BX[k] = H->w[(k % dim) / (size_t)s->nb] * X[k];
  gram(s, X, HX, s->Hs, q);
  gram(s, X, BX, s->Bs, q);
  lapack_int info = s->lp.zhegv(LAPACK_COL_MAJOR, 1, 'V', 'L', (lapack_int)q, s->Hs,
                                (lapack_int)q, s->Bs, (lapack_int)q, s->theta + j, s->work,
                                (lapack_int)s->lwork, s->rwork);
  if (info != 0) return -1;
  s->next_cid++;
  for (size_t c = j; c < j1; c++) s->cid[c] = s->next_cid;
  double complex t[64], u[64];
  for (size_t k = 0; k < dim; k++) { /* X ← X c, H X ← (H X) c, row by row */
    for (size_t a = 0; a < q; a++) t[a] = X[a * dim + k], u[a] = HX[a * dim + k];
    for (size_t b = 0; b < q; b++) {
      double complex x = 0, hx = 0;
      for (size_t a = 0; a < q; a++) x += s->Hs[b * q + a] * t[a], hx += s->Hs[b * q + a] * u[a];
      X[b * dim + k] = x, HX[b * dim + k] = hx;
    }
  }
  /* θ as each rotated column's own Rayleigh quotient, the column B-normalised: zhegv's values
     carry the rounding of the cluster's Gram matrix (columns refined apart onto one level
     make it ill-conditioned: 1e-6 eV off measured), the quotient only the vector's error */
  for (size_t c = 0; c < q; c++) {
    double complex *x = X + c * dim, *hx = HX + c * dim;
    double nn = 0.0, t = 0.0;
    for (size_t k = 0; k < dim; k++) {
      nn += H->w[k / (size_t)s->nb] * creal(x[k] * conj(x[k]));
      t += creal(conj(x[k]) * hx[k]);
    }
    if (!(nn > 0.0)) return -1;
    double f = 1.0 / sqrt(nn);
    for (size_t k = 0; k < dim; k++) x[k] *= f, hx[k] *= f;
    s->theta[j + c] = t / nn;
  }
  return 0;
}

/* the next cluster after column j (Ritz values within 1e-6 relative), up to column end */
static size_t cluster_end(const ew_kp_solver *s, size_t j, size_t end) {
  size_t j1 = j + 1;
  while (j1 < end && fabs(s->theta[j1] - s->theta[j]) < 1e-6 * (1.0 + fabs(s->theta[j]))) j1++;
  return j1;
}

/* columns [j0, j1) ordered by θ (X, HY and the residuals r swapped along; rare: a pair
 * moved past another) */
static void sort_columns(ew_kp_solver *s, size_t j0, size_t j1, double *r) {
  size_t dim = s->dim;
  for (size_t j = j0 + 1; j < j1; j++)
    for (size_t q = j; q > j0 && s->theta[q] < s->theta[q - 1]; q--) {
      double t = s->theta[q];
      s->theta[q] = s->theta[q - 1], s->theta[q - 1] = t;
      t = r[q], r[q] = r[q - 1], r[q - 1] = t;
      size_t c = s->cid[q];
      s->cid[q] = s->cid[q - 1], s->cid[q - 1] = c;
      for (size_t k = 0; k < dim; k++) {
        double complex a = s->X[q * dim + k], b = s->HY[q * dim + k];
        s->X[q * dim + k] = s->X[(q - 1) * dim + k], s->X[(q - 1) * dim + k] = a;
        s->HY[q * dim + k] = s->HY[(q - 1) * dim + k], s->HY[(q - 1) * dim + k] = b;
      }
    }
}

/* 1 when the clusters' intervals [θ_first − R, θ_last + R] are disjoint, R = the cluster's
 * Frobenius residual: each B-orthonormal cluster of q Ritz pairs has q eigenvalues within R
 * of its Ritz values (W. Kahan 1967; B. N. Parlett, The Symmetric Eigenvalue Problem
 * (SIAM, 1998), thm. 11.5.1), so disjoint intervals hold distinct eigenvalues: m of them
 * in all, as a Rayleigh–Ritz step over the whole block would certify.  A cluster must be
 * columns of one Rayleigh–Ritz step (B-orthonormal together): two pairs refined apart onto
 * one level are not, and fail here. */
static int clusters_apart(const ew_kp_solver *s, size_t j0, size_t m, const double *r) {
  double prev = -INFINITY;
  for (size_t j = j0; j < j0 + m;) {
    size_t j1 = cluster_end(s, j, j0 + m);
    double rr = 0.0;
    for (size_t q = j; q < j1; q++) {
      if (s->cid[q] != s->cid[j]) return 0;
      rr += r[q] * r[q];
    }
    double R = sqrt(rr);
    if (!(s->theta[j] - R > prev)) return 0;
    prev = s->theta[j1 - 1] + R;
    j = j1;
  }
  return 1;
}

/* One Rayleigh–Ritz step over every run of clusters whose neighbours lie within
 * KP_MERGE_EV and whose columns did not take one step together.  1 when it took any (−1:
 * a small pencil not definite). */
static int merge_close(ew_kp_solver *s, const ew_kp_pencil *H, size_t j0, size_t m) {
  int any = 0;
  for (size_t j = j0; j < j0 + m;) {
    size_t j1 = j + 1;
    int mixed = 0;
    while (j1 < j0 + m && s->theta[j1] - s->theta[j1 - 1] < KP_MERGE_EV) {
      mixed |= s->cid[j1] != s->cid[j];
      j1++;
    }
    if (mixed) {
      if (cluster_rr(s, H, j, j1)) return -1;
      any = 1;
    }
    j = j1;
  }
  return any;
}

/* Phase 2: each Kramers pair (cluster) not yet converged gets shift-invert at its own Ritz
 * value (inverse iteration converges there at |λ − θ|/gap per solve); one Rayleigh–Ritz step
 * over the whole block after every sweep over the clusters puts them together again.  With
 * by_cluster (ew_kp_lowest) each cluster gets its own Rayleigh–Ritz step instead, once
 * converged clusters closer than KP_MERGE_EV one together (merge_close), and the block's
 * only when the clusters' residual intervals overlap (then two of them may hold one level):
 * the block's step costs O(dim m²) against O(dim m) per cluster, ~20 % of a k∥ point. */
static ew_status refine_range(ew_kp_solver *s, const ew_kp_pencil *H, size_t j0, size_t m,
                              double *r, ew_error *err) {
  size_t dim = s->dim;
  int fresh = s->by_cluster; /* clusters not yet put through any Rayleigh–Ritz step */
  for (int round = 0; round < 7; round++) {
    residuals_range(s, H, j0, j0 + m, r);
    int todo = 0;
    for (size_t j = j0; j < j0 + m && round < 6;) {
      size_t j1 = cluster_end(s, j, s->by_cluster ? j0 + m : s->p);
      int conv = 1;
      for (size_t q = j; q < j1 && q < j0 + m; q++) conv &= r[q] < KP_RESID_TOL;
      if (!conv) {
        todo = 1;
        double sigma = s->theta[j];
        ew_status rc = factor_near(s, H, &sigma, err);
        for (int it = 0; it < 2 && rc == EW_OK; it++) {
          for (size_t q = j; q < j1; q++)
            for (size_t k = 0; k < dim; k++) s->X[q * dim + k] *= H->w[k / (size_t)s->nb];
          rc = solve_at(s, s->X + j * dim, j1 - j, err);
          s->solves += j1 - j;
          if (rc == EW_OK) b_orthonormalise(s, H, j, j1);
        }
        if (rc) return rc;
      }
      if (fresh || (!conv && s->by_cluster)) {
        if (cluster_rr(s, H, j, j1))
          return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: a refined pair lost rank");
        todo |= fresh; /* their residuals change */
      }
      j = j1;
    }
    fresh = 0;
    if (s->by_cluster) {
      sort_columns(s, j0, j0 + m, r);
      if (todo) continue;
      int merged = round < 6 ? merge_close(s, H, j0, m) : 0;
      if (merged < 0) return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: close pairs lost rank");
      if (merged) continue; /* their residuals anew */
      if (clusters_apart(s, j0, m, r)) return EW_OK;
    } else if (!todo) {
      return EW_OK;
    }
    memcpy(s->Y, s->X, dim * s->p * sizeof *s->Y);
    if (rayleigh_ritz(s, H, s->rr_cols))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: the refined block lost rank");
    if (s->by_cluster) { /* one block: its Ritz values are certified as they stand */
      s->next_cid++;
      for (size_t q = j0; q < j0 + m; q++) s->cid[q] = s->next_cid;
      residuals_range(s, H, j0, j0 + m, r);
      int conv = 1;
      for (size_t q = j0; q < j0 + m; q++) conv &= r[q] < KP_RESID_TOL;
      if (conv) return EW_OK;
    }
  }
  residuals_range(s, H, j0, j0 + m, r);
  return EW_OK;
}
static ew_status refine(ew_kp_solver *s, const ew_kp_pencil *H, size_t m, double *r,
                        ew_error *err) {
  return refine_range(s, H, 0, m, r, err);
}

/* A fixed pseudo-random block (a linear congruential sequence: reproducible runs) into the
 * columns from j0 on. */
static void seed(ew_kp_solver *s, size_t j0) {
  unsigned long long st = 0x9E3779B97F4A7C15ull + j0;
  for (size_t k = j0 * s->dim; k < s->dim * s->p; k++) {
    st = st * 6364136223846793005ull + 1442695040888963407ull;
    double re = (double)(st >> 11) / 9007199254740992.0 - 0.5;
    st = st * 6364136223846793005ull + 1442695040888963407ull;
    double im = (double)(st >> 11) / 9007199254740992.0 - 0.5;
    s->X[k] = re + I * im;
  }
}
static void reseed_guard(ew_kp_solver *s, size_t m) { seed(s, m); }

static ew_status phase1(ew_kp_solver *s, const ew_kp_pencil *H, size_t m, double lo,
                        double tol, int min_iter, ew_error *err) {
  double sigma = lo, res = INFINITY;
  ew_status rc = factor_near(s, H, &sigma, err);
  if (rc) return rc;
  for (int iter = 0; iter < KP_MAX_ITER; iter++) {
    if ((rc = step(s, H, 0, s->p, err))) return rc;
    res = residual(s, H, m);
    if (res < tol && iter + 1 >= min_iter) return EW_OK;
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: subspace iteration did not converge in "
                 "%d solves (residual %.3g eV)", KP_MAX_ITER, res);
}

/* θ_j = x_jᴴ H x_j for the first m columns, B-normalised first, with H x_j into HY (the
 * guard columns get θ = ∞: no cluster with them) */
static void rayleigh_quotients(ew_kp_solver *s, const ew_kp_pencil *H, size_t m) {
  size_t dim = s->dim;
  for (size_t j = 0; j < s->p; j++) s->theta[j] = INFINITY;
  for (size_t j = 0; j < m; j++) {
    double complex *x = s->X + j * dim, *hx = s->HY + j * dim;
    double nn = 0.0;
    for (size_t k = 0; k < dim; k++) nn += H->w[k / (size_t)s->nb] * creal(x[k] * conj(x[k]));
    double f = nn > 0.0 ? 1.0 / sqrt(nn) : 1.0, t = 0.0;
    for (size_t k = 0; k < dim; k++) x[k] *= f;
    ew_kp_pencil_apply(H, x, hx);
    for (size_t k = 0; k < dim; k++) t += creal(conj(x[k]) * hx[k]);
    s->theta[j] = t;
  }
}

/* Ritz values of the m wanted pairs below x (theta ascending) */
static size_t found_below(const ew_kp_solver *s, size_t m, double x) {
  size_t f = 0;
  while (f < m && s->theta[f] < x) f++;
  return f;
}

/* Levels the block missed: count(cut) = c_cut > m while the m wanted Ritz pairs below the cut
 * have converged (a level came down from the continuum where the block had no component, or
 * the warm start's shifts converged onto a neighbour at an anticrossing).  Each converged
 * pair is an eigenvalue, so g(x) = count(x) − (Ritz values below x) rises only at a missed
 * eigenvalue: bisection on g (from g(lo) = 0 to g(cut) > 0) isolates the lowest missed level
 * (an interval holding it and no Ritz value) to ~1e-9 eV.  Fresh guard columns, B-orthogonal
 * to the block, are then iterated at its centre (inverse iteration: the missed level's
 * eigenspace wins by |λ' − σ|/|λ − σ| per solve), a Rayleigh–Ritz step over the block sorts
 * them in and the per-pair refinement converges the new m lowest.  A few counts and one
 * factorisation, where the plain iteration from the shift below the spectrum converges at
 * (λ_m − σ)/(λ_{p+1} − σ) per solve: ~0.998 among the barriers' dense box states. */
static ew_status recover_missed(ew_kp_solver *s, const ew_kp_pencil *H, double lo, double cut,
                                size_t m, double *r, ew_error *err) {
  double a = lo, b = cut;
  size_t ga = 0, c = 0;
  for (int it = 0; it < 80; it++) {
    int isolated = found_below(s, m, a) == found_below(s, m, b);
    if (b - a < 1e-9 * (1.0 + fabs(b)) && (isolated || b - a < 1e-13 * (1.0 + fabs(b)))) break;
    double x = 0.5 * (a + b);
    ew_status rc = count_at(s, H, x, &c, err);
    if (rc) return rc;
    size_t f = found_below(s, m, x), g = c > f ? c - f : 0;
    if (g > ga) b = x;
    else a = x, ga = g;
  }
  double sigma = 0.5 * (a + b);
  ew_status rc = factor_near(s, H, &sigma, err);
  if (rc) return rc;
  size_t dim = s->dim, p = s->p;
  seed(s, m);
  b_orthonormalise_from(s, H, 0, m, p);
  for (int it = 0; it < 3; it++) {
    for (size_t k = m * dim; k < p * dim; k++) s->X[k] *= H->w[(k % dim) / (size_t)s->nb];
    if ((rc = solve_at(s, s->X + m * dim, p - m, err))) return rc;
    s->solves += p - m;
    b_orthonormalise_from(s, H, 0, m, p);
  }
  memcpy(s->Y, s->X, dim * p * sizeof *s->Y);
  if (rayleigh_ritz(s, H, p))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: the block lost rank (missed level)");
  return refine(s, H, m, r, err);
}

/* the largest of r[0..m) (NaN when one is) */
static double worst_of(const double *r, size_t m) {
  double w = 0.0;
  for (size_t j = 0; j < m; j++) {
    if (isnan(r[j])) return NAN;
    w = fmax(w, r[j]);
  }
  return w;
}

/* how far above the m-th Ritz value the count's cut goes: 1e-6 eV, or half the way to the
 * next Ritz value of the block (the guard columns' θ may be stale or ∞: then 1e-6) */
static double cut_margin(const ew_kp_solver *s, size_t m) {
  double g = s->theta[m] - s->theta[m - 1];
  return g > 0.0 ? fmin(1e-6, 0.5 * g) : 1e-6;
}

ew_status ew_kp_lowest(ew_kp_solver *s, const ew_kp_pencil *H, double lo, size_t m,
                       double *values, size_t *certified, ew_error *err) {
  size_t p = s->p;
  *certified = 0;
  if (m < 1 || m >= p) return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: %zu eigenpairs "
                                      "asked of a block of %zu", m, p);
  double sigma = lo, r[64];
  ew_status rc = EW_OK;
  s->hx_cols = m; /* residuals of the m lowest only */
  /* the refinement's Rayleigh–Ritz steps on the m wanted columns only: the guard columns
     take part in the plain iteration (phase1, recover_missed), where they carry the levels
     next above; in a warm start they are never iterated, so a step over them costs
     1 − (m/p)² of its products and improves nothing (~16 % of a k∥ point) */
  s->rr_cols = m, s->by_cluster = 1;
  if (s->warm) {
    /* the last pencil's vectors (a neighbouring k∥): their Rayleigh quotients on this pencil
       (second-order accurate) are close enough for the per-pair shifts straight away; the
       refinement's Rayleigh–Ritz step puts the block together (one such step per k∥
       instead of two: ~20 % of the work) */
    rayleigh_quotients(s, H, m);
    rc = refine(s, H, m, r, err); /* leaves the pairs ordered, apart or in one block */
    if (rc == EW_ERR_NUMERIC) { /* the warm block lost rank (two pairs onto one level): anew */
      seed(s, 0);
      s->warm = 0;
    }
  }
  if (!s->warm) {
    rc = phase1(s, H, m, lo, KP_PHASE1_TOL, 1, err);
    if (!rc) rc = refine(s, H, m, r, err);
  }
  if (!rc && !(worst_of(r, m) < KP_RESID_TOL)) /* refine's residuals, of the block as it is */
    rc = phase1(s, H, m, lo, KP_RESID_TOL, 1, err); /* the slow, sure way */
  if (rc) return rc;
  /* the cut just above the m-th value: a Ritz value bounds its eigenvalue from above
     (Cauchy interlacing), so the guard columns' θ say nothing below themselves; a level
     within the margin of the m-th is retried with a closer cut */
  size_t c_lo, c_cut = 0;
  double cut = 0.0, margin = cut_margin(s, m);
  if ((rc = count_at(s, H, sigma, &c_lo, err))) return rc;
  for (int t = 0; t < 6; t++) {
    cut = s->theta[m - 1] + margin;
    if ((rc = count_at(s, H, cut, &c_cut, err))) return rc;
    if (c_cut == m) break;
    if (c_cut < m) { /* a level within the margin of the m-th: a closer cut */
      margin *= 1e-3;
      continue;
    }
    /* converged pairs that are not the lowest (a level came down from the continuum where
       the block had no component, or a warm shift converged onto a neighbour): the missed
       level located by counts (recover_missed); should that fail three times, fresh guard
       columns and the sure way, long enough for them to reach the missing levels */
    if (c_lo == 0 && t < 3) {
      if ((rc = recover_missed(s, H, sigma, cut, m, r, err))) return rc;
      if (!(worst_of(r, m) < KP_RESID_TOL) && (rc = phase1(s, H, m, lo, KP_RESID_TOL, 1, err)))
        return rc;
    } else {
      reseed_guard(s, m);
      if ((rc = phase1(s, H, m, lo, KP_RESID_TOL, 60, err))) return rc;
    }
    margin = cut_margin(s, m);
  }
  *certified = c_cut - c_lo;
  if (c_lo != 0 || c_cut != m)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: the inertia counts %zu eigenvalues below "
                   "%.9g eV and %zu below %.9g eV where the iteration found 0 and %zu (a "
                   "spurious or missed state)", c_lo, sigma, c_cut, cut, m);
  memcpy(values, s->theta, m * sizeof *values);
  s->warm = 1;
  return EW_OK;
}

/* ---- interior windows (the 8-band model) ---------------------------------------------- */

/* first wanted column: below ref the mb highest Ritz values; SIZE_MAX when the block does not
 * hold mb below and ma above */
static size_t window_start(const ew_kp_solver *s, double ref, size_t mb, size_t ma) {
  size_t below = 0;
  while (below < s->p && s->theta[below] < ref) below++;
  if (below < mb || s->p - below < ma) return (size_t)-1;
  return below - mb;
}

static double range_residual(ew_kp_solver *s, const ew_kp_pencil *H, size_t j0, size_t m) {
  double r[64], worst = 0.0;
  residuals_range(s, H, j0, j0 + m, r);
  for (size_t j = j0; j < j0 + m; j++) worst = fmax(worst, r[j]);
  return worst;
}

/* subspace iteration at sigma until the window's pairs have residuals below tol */
static ew_status phase1_window(ew_kp_solver *s, const ew_kp_pencil *H, double sigma,
                               double ref, size_t mb, size_t ma, double tol, int min_iter,
                               size_t *j0, ew_error *err) {
  double res = INFINITY;
  ew_status rc = factor_near(s, H, &sigma, err);
  if (rc) return rc;
  for (int iter = 0; iter < KP_MAX_ITER; iter++) {
    if ((rc = step(s, H, 0, s->p, err))) return rc;
    *j0 = window_start(s, ref, mb, ma);
    if (*j0 == (size_t)-1) continue;
    res = range_residual(s, H, *j0, mb + ma);
    if (res < tol && iter + 1 >= min_iter) return EW_OK;
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: subspace iteration in the window did not "
                 "converge in %d solves (residual %.3g eV)", KP_MAX_ITER, res);
}

ew_status ew_kp_around(ew_kp_solver *s, const ew_kp_pencil *H, double ref, size_t mb,
                       size_t ma, double sigma, double *values, size_t *certified,
                       ew_error *err) {
  size_t m = mb + ma, j0 = (size_t)-1, c_ref = 0, c_lo = 0, c_hi = 0;
  double r[64];
  *certified = 0;
  if (m < 1 || m >= s->p) return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: %zu eigenpairs "
                                         "asked of a block of %zu", m, s->p);
  s->hx_cols = s->p, s->rr_cols = s->p, s->by_cluster = 0; /* the window: anywhere in the block */
  ew_status rc = count_at(s, H, ref, &c_ref, err);
  if (rc) return rc;
  if (c_ref < mb) return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: only %zu eigenvalues "
                                 "below the gap reference %.9g eV, %zu wanted", c_ref, ref, mb);
  if (s->warm) {
    memcpy(s->Y, s->X, s->dim * s->p * sizeof *s->Y);
    /* start vectors without full rank (a caller's block): the pseudo-random block instead */
    if (rayleigh_ritz(s, H, s->p)) seed(s, 0);
    else j0 = window_start(s, ref, mb, ma);
  }
  if (!rc && j0 == (size_t)-1) rc = phase1_window(s, H, sigma, ref, mb, ma, KP_PHASE1_TOL, 1, &j0, err);
  for (int t = 0; t < 6 && !rc; t++) {
    rc = refine_range(s, H, j0, m, r, err);
    size_t j = rc ? j0 : window_start(s, ref, mb, ma);
    if (!rc && (j != j0 || !(range_residual(s, H, j, m) < KP_RESID_TOL)))
      rc = phase1_window(s, H, sigma, ref, mb, ma, KP_RESID_TOL, 1, &j, err); /* the sure way */
    if (rc) break;
    j0 = j;
    /* cuts just outside the window's first and last values; every eigenvalue in between
       must be one of the window's (counts by the inertia) */
    double g_lo = j0 > 0 ? 0.5 * (s->theta[j0] - s->theta[j0 - 1]) : 1e-6;
    double g_hi = j0 + m < s->p ? 0.5 * (s->theta[j0 + m] - s->theta[j0 + m - 1]) : 1e-6;
    double lo = s->theta[j0] - fmin(1e-6, g_lo), hi = s->theta[j0 + m - 1] + fmin(1e-6, g_hi);
    if ((rc = count_at(s, H, lo, &c_lo, err)) || (rc = count_at(s, H, hi, &c_hi, err))) break;
    if (c_lo + mb == c_ref && c_hi == c_ref + ma) {
      *certified = c_hi - c_lo;
      memcpy(values, s->theta + j0, m * sizeof *values);
      s->warm = 1, s->win0 = j0;
      return EW_OK;
    }
    /* a level the block missed: fresh guard columns and the long way */
    seed(s, m);
    rc = phase1_window(s, H, sigma, ref, mb, ma, KP_RESID_TOL, 60, &j0, err);
  }
  if (!rc)
    rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "k·p: the inertia counts %zu eigenvalues in the "
                 "window where the iteration found %zu (a spurious or missed state)",
                 c_hi - c_lo, m);
  return rc;
}

size_t ew_kp_window_column(const ew_kp_solver *s) { return s->win0; }
