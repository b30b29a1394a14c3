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

/* Room for k more blocks in the section's list.  0 when out of memory. */
static int section_reserve(slu_section *sec, size_t k) {
  if (sec->n + k <= sec->cap) return 1;
  size_t cap = sec->cap ? 2 * sec->cap : 32;
  while (cap < sec->n + k) cap *= 2;
  void **b = realloc(sec->blocks, cap * sizeof *b);
  if (!b) return 0;
  sec->blocks = b, sec->cap = cap;
  return 1;
}

/* Enter a section.  Its list (sec->blocks) may be kept from an earlier one: a workspace keeps
 * it, so that a factorization or a solve does not allocate it afresh. */
static void section_begin(slu_section *sec) {
  sec->n = 0;
  active_section = sec;
}

/* Leave the section; the blocks still alive belong to their owners from now on. */
static void section_end(slu_section *sec) {
  active_section = NULL;
  sec->n = 0;
}

/* Leave the section after a failure: free every block SuperLU allocated in it and kept. */
static void section_unwind(slu_section *sec) {
  active_section = NULL;
  for (size_t i = 0; i < sec->n; i++) free(sec->blocks[i]);
  sec->n = 0;
}

/* Free the section's list (it holds no block then). */
static void section_release(slu_section *sec) {
  free(sec->blocks);
  sec->blocks = NULL;
  sec->n = sec->cap = 0;
}

EW_API void *superlu_malloc(size_t size) {
  slu_section *sec = active_section;
  if (sec && !section_reserve(sec, 1)) return NULL; /* SuperLU sees an ordinary failure */
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

/* ---- the shift-invert core shared by the real and the complex pencils --------------------
 * One sparsity pattern (A's columns), factored at many shifts.  The column order and the
 * elimination tree are computed once (sp_preorder).  The first factorization chooses the row
 * order by partial pivoting and allocates L and U; every later one (SuperLU's
 * SamePattern_SameRowPerm) is offered that row order and refills the same L and U storage.
 * SuperLU's dpivotL keeps an offered pivot only when it passes the test a fresh factorization
 * applies (|pivot| >= DiagPivotThresh · the column's largest entry, threshold 1 here), and
 * pivots afresh from the first column where it does not: the factors are those of partial
 * pivoting either way.  What is saved is SuperLU's allocation and first touch of L and U
 * (its initial guess is 20 nnz(A) entries of each of four arrays, ~2 MB for a 1323-node
 * tridiagonal), once per shift. */
typedef struct {
  Dtype_t type;            /* SLU_D or SLU_Z */
  int dim, nnz, relax, panel;
  void *nz;                /* A's values (double or doublecomplex), written by the caller */
  int *row, *col, *perm_c, *perm_r, *etree;
  SuperMatrix A, AC, L, U; /* AC: A with the column order applied; shares A's values */
  int have_lu, have_ac;
  superlu_options_t opt;
  SuperLUStat_t stat;
  GlobalLU_t glu;          /* kept: SamePattern_SameRowPerm reads the previous sizes from it */
  slu_section sec;         /* its block list is kept between calls */
} slu_core;

/* Our arrays of a core of dim columns and nnz entries of elem bytes (malloc: SuperLU's
 * intMalloc would abort when it fails).  0 when out of memory. */
static int core_alloc(slu_core *c, Dtype_t type, int dim, int nnz, size_t elem, int relax,
                      int panel) {
  c->type = type, c->dim = dim, c->nnz = nnz, c->relax = relax, c->panel = panel;
  c->nz = malloc((size_t)nnz * elem);
  c->row = malloc((size_t)nnz * sizeof *c->row);
  c->col = malloc((size_t)(dim + 1) * sizeof *c->col);
  c->perm_c = malloc((size_t)dim * sizeof *c->perm_c);
  c->perm_r = malloc((size_t)dim * sizeof *c->perm_r);
  c->etree = malloc((size_t)dim * sizeof *c->etree);
  for (int j = 0; c->perm_c && j < dim; j++) c->perm_c[j] = j;
  return c->nz && c->row && c->col && c->perm_c && c->perm_r && c->etree;
}

/* The SuperLU part of creating a core, inside its section (setjmp here; no local is used
 * after a longjmp).  1 ok, 0 aborted. */
static int guarded_preorder(slu_core *c) {
  if (setjmp(c->sec.back)) return 0;
  if (c->type == SLU_D)
    dCreate_CompCol_Matrix(&c->A, c->dim, c->dim, c->nnz, c->nz, c->row, c->col, SLU_NC, SLU_D,
                           SLU_GE);
  else
    zCreate_CompCol_Matrix(&c->A, c->dim, c->dim, c->nnz, c->nz, c->row, c->col, SLU_NC, SLU_Z,
                           SLU_GE);
  set_default_options(&c->opt);
  /* a (block) tridiagonal is banded: no fill-reducing order; partial pivoting keeps it
     stable */
  c->opt.ColPerm = NATURAL;
  StatInit(&c->stat);
  /* the pattern never changes between shifts: order and elimination tree once (this saves a
     third of each factorization's cost on a tridiagonal) */
  sp_preorder(&c->opt, &c->A, c->perm_c, c->etree, &c->AC);
  return 1;
}

static void core_drop_lu(slu_core *c) {
  if (c->have_lu) {
    Destroy_SuperNode_Matrix(&c->L);
    Destroy_CompCol_Matrix(&c->U);
    c->have_lu = 0;
  }
}

static void core_free(slu_core *c) {
  core_drop_lu(c);
  if (c->have_ac) Destroy_CompCol_Permuted(&c->AC);
  if (c->A.Store) Destroy_SuperMatrix_Store(&c->A);
  if (c->stat.ops) StatFree(&c->stat);
  section_release(&c->sec);
  free(c->nz);
  free(c->row);
  free(c->col);
  free(c->perm_c);
  free(c->perm_r);
  free(c->etree);
}

/* SuperLU's matrices of a core whose pattern (row, col) the caller has filled.  0 when
 * SuperLU ran out of memory (everything it allocated is freed again). */
static int core_preorder(slu_core *c) {
  section_begin(&c->sec);
  if (!guarded_preorder(c)) {
    section_unwind(&c->sec); /* A's and AC's stores, the statistics: all SuperLU's */
    memset(&c->A, 0, sizeof c->A);
    memset(&c->stat, 0, sizeof c->stat);
    return 0;
  }
  section_end(&c->sec);
  c->have_ac = 1;
  return 1;
}

/* The blocks of the kept L and U (what Destroy_SuperNode_Matrix and Destroy_CompCol_Matrix
 * free) join the section before SuperLU refills them: should it abort while growing them,
 * they are freed with the rest (L and U are then half rebuilt and good for nothing else).
 * 0 when the section's list cannot hold them (out of memory). */
static int section_adopt_lu(slu_section *sec, SuperMatrix *L, SuperMatrix *U) {
  SCformat *l = L->Store;
  NCformat *u = U->Store;
  void *b[] = {l->rowind, l->rowind_colptr, l->nzval, l->nzval_colptr, l->col_to_sup,
               l->sup_to_col, l, u->rowind, u->colptr, u->nzval, u};
  size_t nb = sizeof b / sizeof b[0];
  if (!section_reserve(sec, nb)) return 0;
  for (size_t i = 0; i < nb; i++) sec->blocks[sec->n++] = b[i];
  return 1;
}

/* dgstrf or zgstrf inside the core's section: its info, or −1 when SuperLU aborted. */
static int guarded_gstrf(slu_core *c) {
  if (setjmp(c->sec.back)) return -1;
  int info = 0;
  /* relax and panel: see the callers; never 0 (SuperLU 5.3 loops forever) */
  if (c->type == SLU_D)
    dgstrf(&c->opt, &c->AC, c->relax, c->panel, c->etree, NULL, 0, c->perm_c, c->perm_r, &c->L,
           &c->U, &c->glu, &c->stat, &info);
  else
    zgstrf(&c->opt, &c->AC, c->relax, c->panel, c->etree, NULL, 0, c->perm_c, c->perm_r, &c->L,
           &c->U, &c->glu, &c->stat, &info);
  return info;
}

/* Factor the core's current values.  0 ok; info in 1 … dim for an exactly zero pivot (no
 * factors kept); −1 out of memory (no factors kept). */
static int core_factor(slu_core *c) {
  section_begin(&c->sec);
  int reuse = c->have_lu;
  if (reuse && !section_adopt_lu(&c->sec, &c->L, &c->U)) {
    section_end(&c->sec);
    return -1;
  }
  c->opt.Fact = reuse ? SamePattern_SameRowPerm : DOFACT;
  int info = guarded_gstrf(c);
  if (info == 0 || (info > 0 && info <= c->dim)) { /* L and U exist in both cases */
    if (reuse) c->sec.n = 0; /* L and U keep their (possibly grown) blocks */
    section_end(&c->sec);
    c->have_lu = 1;
    if (info != 0) core_drop_lu(c); /* the next factorization pivots afresh */
    return info;
  }
  section_unwind(&c->sec); /* out of memory (info > dim) or aborted: L, U are not usable */
  c->have_lu = 0;
  return -1;
}

/* dgstrs or zgstrs inside the core's section: 0 ok, −1 when SuperLU aborted (its work
 * array). */
static int guarded_gstrs(slu_core *c, void *x, int nrhs) {
  if (setjmp(c->sec.back)) return -1;
  SuperMatrix X;
  int info = 0;
  if (c->type == SLU_D) {
    dCreate_Dense_Matrix(&X, c->dim, nrhs, x, c->dim, SLU_DN, SLU_D, SLU_GE);
    dgstrs(NOTRANS, &c->L, &c->U, c->perm_c, c->perm_r, &X, &c->stat, &info);
  } else {
    zCreate_Dense_Matrix(&X, c->dim, nrhs, x, c->dim, SLU_DN, SLU_Z, SLU_GE);
    zgstrs(NOTRANS, &c->L, &c->U, c->perm_c, c->perm_r, &X, &c->stat, &info);
  }
  Destroy_SuperMatrix_Store(&X);
  return info;
}

/* x ← (LU)⁻¹ x for nrhs columns.  0 ok, −1 out of memory. */
static int core_solve(slu_core *c, void *x, int nrhs) {
  section_begin(&c->sec);
  int info = guarded_gstrs(c, x, nrhs);
  if (info == 0) {
    section_end(&c->sec);
    return 0;
  }
  section_unwind(&c->sec);
  return -1;
}

/* ---- real tridiagonal pencils ----------------------------------------------------------- */
/* Panel size of dgstrf for a scalar tridiagonal: measured with callgrind on a 1323-node
 * pencil, 2.44M instructions a factorization with panel 1, 2.19M with 4 (2.23M with 2, 2.22M
 * with 6); relax stays 1 (a tridiagonal has no supernodes worth relaxing).  The arithmetic
 * is the same: each column is updated by its one predecessor whatever the panel. */
#define TRI_RELAX 1
#define TRI_PANEL 4
struct ew_shift_lu {
  slu_core c;
};

ew_shift_lu *ew_shift_lu_create(size_t size) {
  if (size < 2 || size > 100000000u) return NULL;
  ew_shift_lu *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  slu_core *c = &s->c;
  int n = (int)size;
  if (!core_alloc(c, SLU_D, n, 3 * n - 2, sizeof(double), TRI_RELAX, TRI_PANEL)) {
    ew_shift_lu_free(s);
    return NULL;
  }
  int k = 0;
  for (int j = 0; j < n; j++) { /* compressed columns of the tridiagonal */
    c->col[j] = k;
    if (j > 0) c->row[k++] = j - 1;
    c->row[k++] = j;
    if (j + 1 < n) c->row[k++] = j + 1;
  }
  c->col[n] = k;
  if (!core_preorder(c)) {
    ew_shift_lu_free(s);
    return NULL;
  }
  return s;
}

void ew_shift_lu_free(ew_shift_lu *s) {
  if (!s) return;
  core_free(&s->c);
  free(s);
}

size_t ew_shift_lu_size(const ew_shift_lu *s) { return s ? (size_t)s->c.dim : 0; }

ew_status ew_shift_lu_factor(ew_shift_lu *s, const ew_pencil *p, double sigma, ew_error *err) {
  slu_core *c = &s->c;
  double *nz = c->nz;
  int n = c->dim, k = 0;
  for (int j = 0; j < n; j++) {
    if (j > 0) nz[k++] = p->off[j - 1];
    nz[k++] = p->diag[j] - sigma * p->b[j];
    if (j + 1 < n) nz[k++] = p->off[j];
  }
  int info = core_factor(c);
  if (info == 0) return EW_OK;
  if (info > 0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV is an eigenvalue (zero pivot "
                   "in column %d)", sigma, info);
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (n = %d)", n);
}

ew_status ew_shift_lu_solve(ew_shift_lu *s, double *x, ew_error *err) {
  if (core_solve(&s->c, x, 1) == 0) return EW_OK;
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (solve, n = %d)",
                 s->c.dim);
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
  slu_section sec = {0};
  section_begin(&sec);
  int info = guarded_dgssv(&sec, m, nz, row, col, perm_c, perm_r, x);
  if (info >= 0 && info <= m) section_end(&sec);
  else section_unwind(&sec);
  section_release(&sec);
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
  int n, nb;
  slu_core c;
};

ew_zshift_lu *ew_zshift_lu_create(size_t n, int nb) {
  if (n < 1 || nb < 1 || nb > 8 || n > 10000000u / (size_t)nb) return NULL;
  ew_zshift_lu *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  slu_core *c = &s->c;
  s->n = (int)n, s->nb = nb;
  int dim = (int)n * nb;
  if (!core_alloc(c, SLU_Z, dim, nb * nb * (3 * (int)n - 2), sizeof(doublecomplex), KP_RELAX,
                  KP_PANEL)) {
    ew_zshift_lu_free(s);
    return NULL;
  }
  int k = 0;
  for (int j = 0; j < dim; j++) { /* column j: every row of nodes J − 1, J, J + 1 */
    int J = j / nb;
    c->col[j] = k;
    for (int R = J > 0 ? J - 1 : 0; R <= J + 1 && R < s->n; R++)
      for (int a = 0; a < nb; a++) c->row[k++] = R * nb + a;
  }
  c->col[dim] = k;
  if (!core_preorder(c)) {
    ew_zshift_lu_free(s);
    return NULL;
  }
  return s;
}

ew_zshift_lu *ew_zshift_lu_create_pattern(size_t dim, size_t nnz, const int *colptr,
                                          const int *rowind) {
  if (dim < 1 || dim > 10000000u || nnz < dim || nnz > 10 * dim || !colptr || !rowind ||
      colptr[0] != 0 || colptr[dim] != (int)nnz)
    return NULL;
  ew_zshift_lu *s = calloc(1, sizeof *s);
  if (!s) return NULL;
  slu_core *c = &s->c;
  s->n = (int)dim, s->nb = 1;
  if (!core_alloc(c, SLU_Z, (int)dim, (int)nnz, sizeof(doublecomplex), KP_RELAX, KP_PANEL)) {
    ew_zshift_lu_free(s);
    return NULL;
  }
  memcpy(c->col, colptr, (dim + 1) * sizeof *colptr);
  memcpy(c->row, rowind, nnz * sizeof *rowind);
  if (!core_preorder(c)) {
    ew_zshift_lu_free(s);
    return NULL;
  }
  return s;
}

void ew_zshift_lu_free(ew_zshift_lu *s) {
  if (!s) return;
  core_free(&s->c);
  free(s);
}

/* Factor the values now in the core (sigma only names the shift in messages). */
static ew_status zfactor(ew_zshift_lu *s, double sigma, ew_error *err) {
  int info = core_factor(&s->c);
  if (info == 0) return EW_OK;
  if (info > 0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV is an eigenvalue (zero pivot in "
                   "column %d)", sigma, info);
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (complex LU, n = %d)",
                 s->c.dim);
}

ew_status ew_zshift_lu_factor_values(ew_zshift_lu *s, const double complex *values,
                                     double sigma, ew_error *err) {
  doublecomplex *nz = s->c.nz;
  for (int k = 0; k < s->c.nnz; k++) {
    nz[k].r = creal(values[k]);
    nz[k].i = cimag(values[k]);
  }
  return zfactor(s, sigma, err);
}

ew_status ew_zshift_lu_factor(ew_zshift_lu *s, const ew_kp_pencil *H, double sigma,
                              ew_error *err) {
  slu_core *c = &s->c;
  doublecomplex *nz = c->nz;
  int nb = s->nb, k = 0;
  size_t nb2 = (size_t)nb * (size_t)nb;
  for (int j = 0; j < c->dim; j++) {
    int J = j / nb, b = j % nb;
    for (int R = J > 0 ? J - 1 : 0; R <= J + 1 && R < s->n; R++)
      for (int a = 0; a < nb; a++) {
        double complex v;
        if (R == J) v = H->diag[(size_t)J * nb2 + (size_t)b * nb + a] - (a == b ? sigma * H->w[J] : 0.0);
        else if (R == J - 1) v = H->off[(size_t)R * nb2 + (size_t)b * nb + a];
        else v = conj(H->off[(size_t)J * nb2 + (size_t)a * nb + b]); /* H_{J+1,J} = C_Jᴴ */
        nz[k].r = creal(v);
        nz[k].i = cimag(v);
        k++;
      }
  }
  return zfactor(s, sigma, err);
}

ew_status ew_zshift_lu_solve(ew_zshift_lu *s, double complex *X, size_t nrhs, ew_error *err) {
  if (nrhs == 0) return EW_OK;
  /* double complex and SuperLU's doublecomplex are both two doubles, real part first (C11
     6.2.5p13) */
  if (core_solve(&s->c, (doublecomplex *)(void *)X, (int)nrhs) == 0) return EW_OK;
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (complex solve, n = %d)",
                 s->c.dim);
}
