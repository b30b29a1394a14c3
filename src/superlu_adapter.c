/* superlu_adapter.c — SuperLU behind three calls (see superlu_adapter.h).  This file is the
 * only one that includes SuperLU's headers. */
#include "superlu_adapter.h"

#include <math.h>
#include <slu_ddefs.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

struct ew_shift_lu {
  int n;
  double *nz;
  int *row, *col;
  int *perm_c, *perm_r, *etree;
  SuperMatrix A, AC, L, U; /* AC: A with the column order applied; shares A's values */
  int have_lu, have_ac;
  superlu_options_t opt;
  SuperLUStat_t stat;
  GlobalLU_t glu;
};

ew_shift_lu *ew_shift_lu_create(size_t size) {
  if (size < 2 || size > 100000000u) return NULL;
  ew_shift_lu *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  int n = (int)size, nnz = 3 * n - 2;
  s->n = n;
  s->nz = doubleMalloc(nnz);
  s->row = intMalloc(nnz);
  s->col = intMalloc(n + 1);
  s->perm_c = intMalloc(n);
  s->perm_r = intMalloc(n);
  s->etree = intMalloc(n);
  if (!s->nz || !s->row || !s->col || !s->perm_c || !s->perm_r || !s->etree) {
    ew_shift_lu_free(s);
    return NULL;
  }
  int k = 0;
  for (int j = 0; j < n; j++) { /* compressed columns of the tridiagonal */
    s->col[j] = k;
    if (j > 0) s->row[k++] = j - 1;
    s->row[k++] = j;
    if (j + 1 < n) s->row[k++] = j + 1;
  }
  s->col[n] = k;
  dCreate_CompCol_Matrix(&s->A, n, n, nnz, s->nz, s->row, s->col, SLU_NC, SLU_D, SLU_GE);
  set_default_options(&s->opt);
  /* A tridiagonal needs no fill-reducing ordering; partial pivoting keeps it stable. */
  s->opt.ColPerm = NATURAL;
  for (int j = 0; j < n; j++) s->perm_c[j] = j;
  StatInit(&s->stat);
  /* the pattern never changes between shifts: order and elimination tree once (this saves a
     third of each factorization's cost on a tridiagonal) */
  sp_preorder(&s->opt, &s->A, s->perm_c, s->etree, &s->AC);
  s->have_ac = 1;
  return s;
}

static void drop_lu(ew_shift_lu *s) {
  if (s->have_lu) {
    Destroy_SuperNode_Matrix(&s->L);
    Destroy_CompCol_Matrix(&s->U);
    s->have_lu = 0;
  }
}

void ew_shift_lu_free(ew_shift_lu *s) {
  if (!s) return;
  drop_lu(s);
  if (s->have_ac) Destroy_CompCol_Permuted(&s->AC);
  if (s->A.Store) Destroy_SuperMatrix_Store(&s->A);
  if (s->stat.ops) StatFree(&s->stat);
  SUPERLU_FREE(s->nz);
  SUPERLU_FREE(s->row);
  SUPERLU_FREE(s->col);
  SUPERLU_FREE(s->perm_c);
  SUPERLU_FREE(s->perm_r);
  SUPERLU_FREE(s->etree);
  free(s);
}

ew_status ew_shift_lu_factor(ew_shift_lu *s, const ew_pencil *p, double sigma, ew_error *err) {
  int n = s->n, k = 0;
  for (int j = 0; j < n; j++) {
    if (j > 0) s->nz[k++] = p->off[j - 1];
    s->nz[k++] = p->diag[j] - sigma * p->b[j];
    if (j + 1 < n) s->nz[k++] = p->off[j];
  }
  drop_lu(s);
  int info = 0;
  s->opt.Fact = DOFACT;
  /* small relax / panel sizes: a tridiagonal has no supernodes worth the bookkeeping (and 0
     makes SuperLU 5.3 loop forever) */
  dgstrf(&s->opt, &s->AC, 1, 1, s->etree, NULL, 0, s->perm_c, s->perm_r, &s->L, &s->U,
         &s->glu, &s->stat, &info);
  if (info == 0) {
    s->have_lu = 1;
    return EW_OK;
  }
  if (info > 0 && info <= n) { /* L and U are allocated even for an exactly singular U */
    s->have_lu = 1;
    drop_lu(s);
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV is an eigenvalue (zero pivot "
                   "in column %d)", sigma, info);
  }
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (n = %d)", n);
}

ew_status ew_shift_lu_solve(ew_shift_lu *s, double *x, ew_error *err) {
  (void)err;
  SuperMatrix X;
  int info = 0;
  dCreate_Dense_Matrix(&X, s->n, 1, x, s->n, SLU_DN, SLU_D, SLU_GE);
  dgstrs(NOTRANS, &s->L, &s->U, s->perm_c, s->perm_r, &X, &s->stat, &info);
  Destroy_SuperMatrix_Store(&X);
  return EW_OK;
}

/* ---- general tridiagonal linear solve (the self-consistent Poisson step) ---------------- */
ew_status ew_sparse_tridiag_solve(size_t n, const double *lower, const double *diag,
                                  const double *upper, double *rhs_inout, ew_error *err) {
  if (n == 0) return EW_OK;
  if (n > 100000000u)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "tridiagonal system of %zu unknowns is too large", n);
  for (size_t i = 0; i < n; i++) /* SuperLU is only given finite, well-formed input */
    if (!isfinite(diag[i]) || !isfinite(rhs_inout[i]) ||
        (i + 1 < n && (!isfinite(lower[i]) || !isfinite(upper[i]))))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                     "tridiagonal solve: non-finite coefficient at row %zu", i);
  int m = (int)n, nnz = 3 * m - 2;
  double *nz = doubleMalloc(nnz);
  int *row = intMalloc(nnz), *col = intMalloc(m + 1);
  int *perm_c = intMalloc(m), *perm_r = intMalloc(m);
  ew_status rc = EW_OK;
  if (!nz || !row || !col || !perm_c || !perm_r) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (tridiagonal solve, n = %zu)", n);
    goto done;
  }
  int k = 0;
  for (int j = 0; j < m; j++) { /* compressed columns: A(j−1,j) = upper[j−1], A(j+1,j) = lower[j] */
    col[j] = k;
    if (j > 0) row[k] = j - 1, nz[k++] = upper[j - 1];
    row[k] = j, nz[k++] = diag[j];
    if (j + 1 < m) row[k] = j + 1, nz[k++] = lower[j];
    perm_c[j] = j;
  }
  col[m] = k;
  SuperMatrix A, L, U, B;
  superlu_options_t opt;
  SuperLUStat_t stat;
  dCreate_CompCol_Matrix(&A, m, m, nnz, nz, row, col, SLU_NC, SLU_D, SLU_GE);
  dCreate_Dense_Matrix(&B, m, 1, rhs_inout, m, SLU_DN, SLU_D, SLU_GE);
  set_default_options(&opt);
  opt.ColPerm = NATURAL; /* a tridiagonal needs no fill-reducing order; partial pivoting */
  StatInit(&stat);
  int info = 0;
  dgssv(&opt, &A, perm_c, perm_r, &L, &U, &B, &stat, &info);
  if (info == 0 || (info > 0 && info <= m)) { /* L and U exist in both cases */
    Destroy_SuperNode_Matrix(&L);
    Destroy_CompCol_Matrix(&U);
  }
  Destroy_SuperMatrix_Store(&A);
  Destroy_SuperMatrix_Store(&B);
  StatFree(&stat);
  if (info > 0 && info <= m)
    rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                 "tridiagonal solve: the matrix is singular (zero pivot in column %d of %d)",
                 info, m);
  else if (info != 0)
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (tridiagonal, n = %zu)", n);
  else
    for (size_t i = 0; i < n; i++)
      if (!isfinite(rhs_inout[i])) {
        rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "tridiagonal solve: non-finite solution");
        break;
      }
done:
  SUPERLU_FREE(nz);
  SUPERLU_FREE(row);
  SUPERLU_FREE(col);
  SUPERLU_FREE(perm_c);
  SUPERLU_FREE(perm_r);
  return rc;
}
