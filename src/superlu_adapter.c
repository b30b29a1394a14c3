/* superlu_adapter.c — SuperLU behind three calls (see superlu_adapter.h).  This file is the
 * only one that includes SuperLU's headers.
 *
 * Memory and aborts.  SuperLU 5 allocates through superlu_malloc/superlu_free and, when an
 * allocation it cannot do without fails (StatInit, sp_preorder, dgstrs' work arrays, …),
 * calls superlu_abort_and_exit, which exits the process.  Debian's libsuperlu.so calls all
 * three through its PLT (checked with objdump -d: 194 calls to superlu_malloc@plt, none
 * direct), so the definitions below take their place in any program linking this library
 * (EW_API: they must stay visible to libsuperlu.so, from an executable and from
 * libepiwell.so alike; src/libepiwell.map exports them).
 * Each adapter call is a guarded section: the blocks SuperLU allocates during it are recorded;
 * an abort longjmps back to the section's start, which frees those blocks and returns
 * EW_ERR_NOMEM (an abort on other grounds cannot happen with the valid tridiagonals given
 * here).  A SuperLU call outside a section (a program using SuperLU for itself) keeps
 * SuperLU's own behaviour, message on stderr and exit. */
#include "superlu_adapter.h"

#include <math.h>
#include <setjmp.h>
#include <slu_ddefs.h>
#include <slu_zdefs.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

/* ---- guarded sections ------------------------------------------------------------------ */
typedef struct {
  jmp_buf back;        /* where an abort inside SuperLU returns to */
  void **blocks;       /* live blocks SuperLU allocated during this section */
  size_t n, cap;
} slu_section;

/* The section of the calling thread, NULL outside one.  A mutable global, on purpose: SuperLU's
 * allocation and abort hooks take no context argument, so the only way from them back to the
 * adapter call that is running is a per-thread pointer (threads run solves concurrently;
 * each thread is inside at most one section at a time, and the pointer is set and cleared
 * only by section_begin/section_end in this file). */
static _Thread_local slu_section *active_section;

static void section_begin(slu_section *sec) {
  sec->blocks = NULL;
  sec->n = sec->cap = 0;
  active_section = sec;
}

/* Leave the section; the blocks still alive belong to their owners from now on. */
static void section_end(slu_section *sec) {
  active_section = NULL;
  free(sec->blocks);
  sec->blocks = NULL;
}

/* Leave the section after a failure: free every block SuperLU allocated in it and kept. */
static void section_unwind(slu_section *sec) {
  active_section = NULL;
  for (size_t i = 0; i < sec->n; i++) free(sec->blocks[i]);
  free(sec->blocks);
  sec->blocks = NULL;
  sec->n = 0;
}

EW_API void *superlu_malloc(size_t size) {
  slu_section *sec = active_section;
  if (sec && sec->n == sec->cap) {
    size_t cap = sec->cap ? 2 * sec->cap : 32;
    void **b = realloc(sec->blocks, cap * sizeof *b);
    if (!b) return NULL; /* SuperLU sees an ordinary allocation failure */
    sec->blocks = b, sec->cap = cap;
  }
  void *p = malloc(size ? size : 1);
  if (p && sec) sec->blocks[sec->n++] = p;
  return p;
}

EW_API void superlu_free(void *addr) {
  slu_section *sec = active_section;
  for (size_t i = sec ? sec->n : 0; i-- > 0;)
    if (sec->blocks[i] == addr) {
      sec->blocks[i] = sec->blocks[--sec->n];
      break;
    }
  free(addr);
}

EW_API void superlu_abort_and_exit(char *msg) {
  if (active_section) longjmp(active_section->back, 1);
  fprintf(stderr, "%s", msg); /* SuperLU's own behaviour outside this adapter */
  exit(-1);
}

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

/* The SuperLU part of creating a workspace, run inside a section (setjmp here; no local is
 * used after a longjmp).  1 ok, 0 aborted. */
static int guarded_create(slu_section *sec, ew_shift_lu *s) {
  if (setjmp(sec->back)) return 0;
  int n = s->n, nnz = 3 * n - 2;
  dCreate_CompCol_Matrix(&s->A, n, n, nnz, s->nz, s->row, s->col, SLU_NC, SLU_D, SLU_GE);
  set_default_options(&s->opt);
  /* A tridiagonal needs no fill-reducing ordering; partial pivoting keeps it stable. */
  s->opt.ColPerm = NATURAL;
  StatInit(&s->stat);
  /* the pattern never changes between shifts: order and elimination tree once (this saves a
     third of each factorization's cost on a tridiagonal) */
  sp_preorder(&s->opt, &s->A, s->perm_c, s->etree, &s->AC);
  return 1;
}

ew_shift_lu *ew_shift_lu_create(size_t size) {
  if (size < 2 || size > 100000000u) return NULL;
  ew_shift_lu *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  int n = (int)size, nnz = 3 * n - 2;
  s->n = n;
  /* our arrays come from malloc (SuperLU's intMalloc would abort when it fails) */
  s->nz = malloc((size_t)nnz * sizeof *s->nz);
  s->row = malloc((size_t)nnz * sizeof *s->row);
  s->col = malloc((size_t)(n + 1) * sizeof *s->col);
  s->perm_c = malloc((size_t)n * sizeof *s->perm_c);
  s->perm_r = malloc((size_t)n * sizeof *s->perm_r);
  s->etree = malloc((size_t)n * sizeof *s->etree);
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
    s->perm_c[j] = j;
  }
  s->col[n] = k;
  slu_section sec;
  section_begin(&sec);
  if (!guarded_create(&sec, s)) {
    section_unwind(&sec); /* A's and AC's stores, the statistics: all SuperLU's */
    memset(&s->A, 0, sizeof s->A);
    memset(&s->stat, 0, sizeof s->stat);
    ew_shift_lu_free(s);
    return NULL;
  }
  section_end(&sec);
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
  free(s->nz);
  free(s->row);
  free(s->col);
  free(s->perm_c);
  free(s->perm_r);
  free(s->etree);
  free(s);
}

/* dgstrf inside a section: its info, or −1 when SuperLU aborted. */
static int guarded_dgstrf(slu_section *sec, ew_shift_lu *s) {
  if (setjmp(sec->back)) return -1;
  int info = 0;
  s->opt.Fact = DOFACT;
  /* small relax / panel sizes: a tridiagonal has no supernodes worth the bookkeeping (and 0
     makes SuperLU 5.3 loop forever) */
  dgstrf(&s->opt, &s->AC, 1, 1, s->etree, NULL, 0, s->perm_c, s->perm_r, &s->L, &s->U,
         &s->glu, &s->stat, &info);
  return info;
}

ew_status ew_shift_lu_factor(ew_shift_lu *s, const ew_pencil *p, double sigma, ew_error *err) {
  int n = s->n, k = 0;
  for (int j = 0; j < n; j++) {
    if (j > 0) s->nz[k++] = p->off[j - 1];
    s->nz[k++] = p->diag[j] - sigma * p->b[j];
    if (j + 1 < n) s->nz[k++] = p->off[j];
  }
  drop_lu(s);
  slu_section sec;
  section_begin(&sec);
  int info = guarded_dgstrf(&sec, s);
  if (info == 0) {
    section_end(&sec);
    s->have_lu = 1;
    return EW_OK;
  }
  if (info > 0 && info <= n) { /* L and U are allocated even for an exactly singular U */
    section_end(&sec);
    s->have_lu = 1;
    drop_lu(s);
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV is an eigenvalue (zero pivot "
                   "in column %d)", sigma, info);
  }
  section_unwind(&sec); /* out of memory (info > n) or aborted: L, U are not usable */
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (n = %d)", n);
}

/* dgstrs inside a section: 0 ok, −1 when SuperLU aborted (its work array). */
static int guarded_dgstrs(slu_section *sec, ew_shift_lu *s, double *x) {
  if (setjmp(sec->back)) return -1;
  SuperMatrix X;
  int info = 0;
  dCreate_Dense_Matrix(&X, s->n, 1, x, s->n, SLU_DN, SLU_D, SLU_GE);
  dgstrs(NOTRANS, &s->L, &s->U, s->perm_c, s->perm_r, &X, &s->stat, &info);
  Destroy_SuperMatrix_Store(&X);
  return info;
}

ew_status ew_shift_lu_solve(ew_shift_lu *s, double *x, ew_error *err) {
  slu_section sec;
  section_begin(&sec);
  int info = guarded_dgstrs(&sec, s, x);
  if (info == 0) {
    section_end(&sec);
    return EW_OK;
  }
  section_unwind(&sec);
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (solve, n = %d)", s->n);
}

/* ---- general tridiagonal linear solve (the self-consistent Poisson step) ---------------- */
/* dgssv inside a section on the prepared arrays: its info, or −1 when SuperLU aborted. */
static int guarded_dgssv(slu_section *sec, int m, double *nz, int *row, int *col, int *perm_c,
                         int *perm_r, double *rhs) {
  if (setjmp(sec->back)) return -1;
  SuperMatrix A, L, U, B;
  superlu_options_t opt;
  SuperLUStat_t stat;
  dCreate_CompCol_Matrix(&A, m, m, 3 * m - 2, nz, row, col, SLU_NC, SLU_D, SLU_GE);
  dCreate_Dense_Matrix(&B, m, 1, rhs, m, SLU_DN, SLU_D, SLU_GE);
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
  return info;
}

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
  double *nz = malloc((size_t)nnz * sizeof *nz), *x = malloc(n * sizeof *x);
  int *row = malloc((size_t)nnz * sizeof *row), *col = malloc((n + 1) * sizeof *col);
  int *perm_c = malloc(n * sizeof *perm_c), *perm_r = malloc(n * sizeof *perm_r);
  ew_status rc = EW_OK;
  if (!nz || !x || !row || !col || !perm_c || !perm_r) {
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
  /* SuperLU works on a copy, so that a failure leaves the right-hand side as it was */
  memcpy(x, rhs_inout, n * sizeof *x);
  slu_section sec;
  section_begin(&sec);
  int info = guarded_dgssv(&sec, m, nz, row, col, perm_c, perm_r, x);
  if (info >= 0 && info <= m) section_end(&sec);
  else section_unwind(&sec);
  if (info > 0 && info <= m)
    rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                 "tridiagonal solve: the matrix is singular (zero pivot in column %d of %d)",
                 info, m);
  else if (info != 0)
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (tridiagonal, n = %zu)", n);
  else
    for (size_t i = 0; i < n && rc == EW_OK; i++)
      if (!isfinite(x[i]))
        rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "tridiagonal solve: non-finite solution");
  if (rc == EW_OK) memcpy(rhs_inout, x, n * sizeof *x);
done:
  free(nz);
  free(x);
  free(row);
  free(col);
  free(perm_c);
  free(perm_r);
  return rc;
}

/* ---- complex block-tridiagonal pencils (k·p) ------------------------------------------- */
/* Supernode relaxation and panel size of zgstrf for the block-tridiagonal pencils: the
 * nb × nb blocks make supernodes worth having.  Measured on a 1323-node 4-band pencil: 8/8
 * gives ~4 ms a factorisation and ~0.25 ms a solve, 1/1 (right for a scalar tridiagonal)
 * ~7 ms and ~0.5 ms, 16/16 slower again; never 0 (SuperLU 5.3 loops forever). */
#define KP_RELAX 8
#define KP_PANEL 8
struct ew_zshift_lu {
  int n, nb, dim, nnz;
  doublecomplex *nz;
  int *row, *col;
  int *perm_c, *perm_r, *etree;
  SuperMatrix A, AC, L, U;
  int have_lu, have_ac;
  superlu_options_t opt;
  SuperLUStat_t stat;
  GlobalLU_t glu;
};

static int guarded_zcreate(slu_section *sec, ew_zshift_lu *s) {
  if (setjmp(sec->back)) return 0;
  zCreate_CompCol_Matrix(&s->A, s->dim, s->dim, s->nnz, s->nz, s->row, s->col, SLU_NC, SLU_Z,
                         SLU_GE);
  set_default_options(&s->opt);
  s->opt.ColPerm = NATURAL; /* banded (block tridiagonal): no fill-reducing order needed */
  StatInit(&s->stat);
  sp_preorder(&s->opt, &s->A, s->perm_c, s->etree, &s->AC);
  return 1;
}

/* The workspace of a dim × dim pattern of nnz entries: arrays only (zpattern_finish does the
 * rest once col/row are filled).  NULL when out of memory. */
static ew_zshift_lu *zpattern_alloc(int n, int nb, int dim, int nnz) {
  ew_zshift_lu *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  s->n = n, s->nb = nb, s->dim = dim, s->nnz = nnz;
  s->nz = malloc((size_t)s->nnz * sizeof *s->nz);
  s->row = malloc((size_t)s->nnz * sizeof *s->row);
  s->col = malloc((size_t)(s->dim + 1) * sizeof *s->col);
  s->perm_c = malloc((size_t)s->dim * sizeof *s->perm_c);
  s->perm_r = malloc((size_t)s->dim * sizeof *s->perm_r);
  s->etree = malloc((size_t)s->dim * sizeof *s->etree);
  if (!s->nz || !s->row || !s->col || !s->perm_c || !s->perm_r || !s->etree) {
    ew_zshift_lu_free(s);
    return NULL;
  }
  for (int j = 0; j < s->dim; j++) s->perm_c[j] = j;
  return s;
}

/* SuperLU's matrix over the filled pattern, column order and elimination tree. */
static ew_zshift_lu *zpattern_finish(ew_zshift_lu *s) {
  slu_section sec;
  section_begin(&sec);
  if (!guarded_zcreate(&sec, s)) {
    section_unwind(&sec);
    memset(&s->A, 0, sizeof s->A);
    memset(&s->stat, 0, sizeof s->stat);
    ew_zshift_lu_free(s);
    return NULL;
  }
  section_end(&sec);
  s->have_ac = 1;
  return s;
}

ew_zshift_lu *ew_zshift_lu_create(size_t n, int nb) {
  if (n < 1 || nb < 1 || nb > 8 || n > 10000000u / (size_t)nb) return NULL;
  ew_zshift_lu *s = zpattern_alloc((int)n, nb, (int)n * nb, nb * nb * (3 * (int)n - 2));
  if (!s) return NULL;
  int k = 0;
  for (int j = 0; j < s->dim; j++) { /* column j: every row of nodes J − 1, J, J + 1 */
    int J = j / nb;
    s->col[j] = k;
    for (int R = J > 0 ? J - 1 : 0; R <= J + 1 && R < s->n; R++)
      for (int a = 0; a < nb; a++) s->row[k++] = R * nb + a;
  }
  s->col[s->dim] = k;
  return zpattern_finish(s);
}

ew_zshift_lu *ew_zshift_lu_create_pattern(size_t dim, size_t nnz, const int *colptr,
                                          const int *rowind) {
  if (dim < 1 || dim > 10000000u || nnz < dim || nnz > 10 * dim || !colptr || !rowind ||
      colptr[0] != 0 || colptr[dim] != (int)nnz)
    return NULL;
  ew_zshift_lu *s = zpattern_alloc((int)dim, 1, (int)dim, (int)nnz);
  if (!s) return NULL;
  memcpy(s->col, colptr, (dim + 1) * sizeof *colptr);
  memcpy(s->row, rowind, nnz * sizeof *rowind);
  return zpattern_finish(s);
}

static void zdrop_lu(ew_zshift_lu *s) {
  if (s->have_lu) {
    Destroy_SuperNode_Matrix(&s->L);
    Destroy_CompCol_Matrix(&s->U);
    s->have_lu = 0;
  }
}

void ew_zshift_lu_free(ew_zshift_lu *s) {
  if (!s) return;
  zdrop_lu(s);
  if (s->have_ac) Destroy_CompCol_Permuted(&s->AC);
  if (s->A.Store) Destroy_SuperMatrix_Store(&s->A);
  if (s->stat.ops) StatFree(&s->stat);
  free(s->nz);
  free(s->row);
  free(s->col);
  free(s->perm_c);
  free(s->perm_r);
  free(s->etree);
  free(s);
}

static int guarded_zgstrf(slu_section *sec, ew_zshift_lu *s) {
  if (setjmp(sec->back)) return -1;
  int info = 0;
  s->opt.Fact = DOFACT;
  zgstrf(&s->opt, &s->AC, KP_RELAX, KP_PANEL, s->etree, NULL, 0, s->perm_c, s->perm_r, &s->L, &s->U,
         &s->glu, &s->stat, &info);
  return info;
}

/* Factor the values now in s->nz (sigma only names the shift in messages). */
static ew_status zfactor(ew_zshift_lu *s, double sigma, ew_error *err) {
  zdrop_lu(s);
  slu_section sec;
  section_begin(&sec);
  int info = guarded_zgstrf(&sec, s);
  if (info == 0) {
    section_end(&sec);
    s->have_lu = 1;
    return EW_OK;
  }
  if (info > 0 && info <= s->dim) {
    section_end(&sec);
    s->have_lu = 1;
    zdrop_lu(s);
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV is an eigenvalue (zero pivot in "
                   "column %d)", sigma, info);
  }
  section_unwind(&sec);
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (complex LU, n = %d)", s->dim);
}

ew_status ew_zshift_lu_factor(ew_zshift_lu *s, const ew_kp_pencil *H, double sigma,
                              ew_error *err) {
  int nb = s->nb, k = 0;
  size_t nb2 = (size_t)nb * (size_t)nb;
  for (int j = 0; j < s->dim; j++) {
    int J = j / nb, b = j % nb;
    for (int R = J > 0 ? J - 1 : 0; R <= J + 1 && R < s->n; R++)
      for (int a = 0; a < nb; a++) {
        double complex v;
        if (R == J) v = H->diag[(size_t)J * nb2 + (size_t)b * nb + a] - (a == b ? sigma * H->w[J] : 0.0);
        else if (R == J - 1) v = H->off[(size_t)R * nb2 + (size_t)b * nb + a];
        else v = conj(H->off[(size_t)J * nb2 + (size_t)a * nb + b]); /* H_{J+1,J} = C_Jᴴ */
        s->nz[k].r = creal(v);
        s->nz[k].i = cimag(v);
        k++;
      }
  }
  return zfactor(s, sigma, err);
}

ew_status ew_zshift_lu_factor_values(ew_zshift_lu *s, const double complex *values,
                                     double sigma, ew_error *err) {
  for (int k = 0; k < s->nnz; k++) {
    s->nz[k].r = creal(values[k]);
    s->nz[k].i = cimag(values[k]);
  }
  return zfactor(s, sigma, err);
}

static int guarded_zgstrs(slu_section *sec, ew_zshift_lu *s, double complex *x, int nrhs) {
  if (setjmp(sec->back)) return -1;
  SuperMatrix X;
  int info = 0;
  /* double complex and SuperLU's doublecomplex are both two doubles, real part first (C11
     6.2.5p13) */
  zCreate_Dense_Matrix(&X, s->dim, nrhs, (doublecomplex *)(void *)x, s->dim, SLU_DN, SLU_Z,
                       SLU_GE);
  zgstrs(NOTRANS, &s->L, &s->U, s->perm_c, s->perm_r, &X, &s->stat, &info);
  Destroy_SuperMatrix_Store(&X);
  return info;
}

ew_status ew_zshift_lu_solve(ew_zshift_lu *s, double complex *X, size_t nrhs, ew_error *err) {
  if (nrhs == 0) return EW_OK;
  slu_section sec;
  section_begin(&sec);
  int info = guarded_zgstrs(&sec, s, X, (int)nrhs);
  if (info == 0) {
    section_end(&sec);
    return EW_OK;
  }
  section_unwind(&sec);
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (k·p solve, n = %d)",
                 s->dim);
}
