/* eigen.c — spectrum slicing with Sturm counts and SuperLU shift-invert (see eigen.h).
 * This file is the only one that touches SuperLU. */
#include "eigen.h"

#include <float.h>
#include <math.h>
#include <slu_ddefs.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

/* Eigenvalues closer than this have their vectors explicitly re-orthogonalized (measured:
   a pair 1e-7 eV apart came out 1.4e-10 non-orthogonal without it). */
#define EW_ORTH_GAP_EV 1e-5

/* Standard form T = B^{-1/2} H B^{-1/2}: diagonal d, squared off-diagonal e2. */
typedef struct {
  size_t n;
  const double *d, *e2;
  double pivmin; /* smallest pivot magnitude allowed in the count (as LAPACK's dlaneg) */
  double norm;   /* Gershgorin bound on ‖T‖ */
} tri;

/* The standard form is computed once when the pencil is built (hamiltonian.c): borrow it. */
static int tri_init(tri *t, const ew_pencil *p) {
  t->n = p->n;
  t->d = p->std_d;
  t->e2 = p->std_e2;
  t->pivmin = p->std_pivmin;
  t->norm = p->std_norm;
  return t->d && t->e2;
}

static void tri_free(tri *t) { (void)t; }

/* Negative pivots of LDLᵀ(T − σI): the Sturm count, backward stable (Kahan; LAPACK dlaneg). */
static size_t tri_count(const tri *t, double s) {
  size_t cnt = 0;
  double q = t->d[0] - s;
  if (fabs(q) < t->pivmin) q = -t->pivmin;
  cnt += q < 0;
  for (size_t i = 1; i < t->n; i++) {
    q = (t->d[i] - s) - t->e2[i - 1] / q;
    if (fabs(q) < t->pivmin) q = -t->pivmin;
    cnt += q < 0;
  }
  return cnt;
}

size_t ew_eigen_count_below(const ew_pencil *p, double sigma) {
  tri t;
  if (!tri_init(&t, p)) {
    tri_free(&t);
    return (size_t)-1;
  }
  size_t c = tri_count(&t, sigma);
  tri_free(&t);
  return c;
}

/* An interval [a, b) holding k = cb − ca eigenvalues. */
typedef struct {
  double a, b;
  size_t ca, cb;
} slice;

void ew_eigenpairs_free(ew_eigenpairs *e) {
  if (!e) return;
  free(e->values);
  free(e->vectors);
  free(e->residual);
  e->values = e->vectors = e->residual = NULL;
  e->count = 0;
}

/* ---- SuperLU adapter: factor H − σB once, solve many ------------------------------- */
typedef struct {
  int n;
  double *nz;
  int *row, *col;
  int *perm_c, *perm_r, *etree;
  SuperMatrix A, AC, L, U; /* AC: A with the column order applied; shares A's values */
  int have_lu, have_ac;
  superlu_options_t opt;
  SuperLUStat_t stat;
  GlobalLU_t glu;
} slu;

static int slu_init(slu *s, const ew_pencil *p) {
  memset(s, 0, sizeof *s);
  int n = (int)p->n, nnz = 3 * n - 2;
  s->n = n;
  s->nz = doubleMalloc(nnz);
  s->row = intMalloc(nnz);
  s->col = intMalloc(n + 1);
  s->perm_c = intMalloc(n);
  s->perm_r = intMalloc(n);
  s->etree = intMalloc(n);
  if (!s->nz || !s->row || !s->col || !s->perm_c || !s->perm_r || !s->etree) return 0;
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
  return 1;
}

static void slu_drop_lu(slu *s) {
  if (s->have_lu) {
    Destroy_SuperNode_Matrix(&s->L);
    Destroy_CompCol_Matrix(&s->U);
    s->have_lu = 0;
  }
}

static void slu_free(slu *s) {
  slu_drop_lu(s);
  if (s->have_ac) Destroy_CompCol_Permuted(&s->AC);
  if (s->A.Store) Destroy_SuperMatrix_Store(&s->A);
  if (s->stat.ops) StatFree(&s->stat);
  SUPERLU_FREE(s->nz);
  SUPERLU_FREE(s->row);
  SUPERLU_FREE(s->col);
  SUPERLU_FREE(s->perm_c);
  SUPERLU_FREE(s->perm_r);
  SUPERLU_FREE(s->etree);
}

/* Factor H − σB.  Returns 0 ok, i in 1..n when U(i,i) is exactly zero (σ is an eigenvalue
 * to working precision), −1 when SuperLU ran out of memory. */
static int slu_factor(slu *s, const ew_pencil *p, double sigma) {
  int n = s->n, k = 0;
  for (int j = 0; j < n; j++) {
    if (j > 0) s->nz[k++] = p->off[j - 1];
    s->nz[k++] = p->diag[j] - sigma * p->b[j];
    if (j + 1 < n) s->nz[k++] = p->off[j];
  }
  slu_drop_lu(s);
  int info = 0;
  s->opt.Fact = DOFACT;
  /* small relax / panel sizes: a tridiagonal has no supernodes worth the bookkeeping */
  dgstrf(&s->opt, &s->AC, 1, 1, s->etree, NULL, 0, s->perm_c, s->perm_r, &s->L, &s->U,
         &s->glu, &s->stat, &info);
  if (info == 0) {
    s->have_lu = 1;
    return 0;
  }
  if (info > 0 && info <= n) {
    s->have_lu = 1; /* L and U are allocated even for an exactly singular U */
    slu_drop_lu(s);
    return info;
  }
  return -1;
}

/* x ← (H − σB)⁻¹ x in place. */
static int slu_solve(slu *s, double *x) {
  SuperMatrix X;
  int info = 0;
  dCreate_Dense_Matrix(&X, s->n, 1, x, s->n, SLU_DN, SLU_D, SLU_GE);
  dgstrs(NOTRANS, &s->L, &s->U, s->perm_c, s->perm_r, &X, &s->stat, &info);
  Destroy_SuperMatrix_Store(&X);
  return info;
}

/* ---- helpers --------------------------------------------------------------------------- */
static double bdot(const ew_pencil *p, const double *x, const double *y) {
  double s = 0.0;
  for (size_t i = 0; i < p->n; i++) s += x[i] * p->b[i] * y[i];
  return s;
}

static double hquad(const ew_pencil *p, const double *x) { /* xᵀHx */
  double s = 0.0;
  for (size_t i = 0; i < p->n; i++) {
    s += p->diag[i] * x[i] * x[i];
    if (i + 1 < p->n) s += 2.0 * p->off[i] * x[i] * x[i + 1];
  }
  return s;
}

/* Deterministic start vector (a fixed LCG), so results repeat run to run. */
static void start_vector(double *x, size_t n, size_t seed) {
  unsigned long long st = 0x9E3779B97F4A7C15ULL ^ (seed * 0xBF58476D1CE4E5B9ULL);
  for (size_t i = 0; i < n; i++) {
    st = st * 6364136223846793005ULL + 1442695040888963407ULL;
    x[i] = 0.5 + (double)(st >> 11) / 9007199254740992.0;
  }
}

/* Isolate eigenvalues in [lo, hi) into slices of one eigenvalue (or an unresolvable
 * cluster).  Returns the number of slices, or (size_t)-1 when out of memory. */
static size_t isolate(const tri *t, double lo, double hi, size_t clo, size_t chi, double tol,
                      slice **out, size_t *counts) {
  size_t k = chi - clo, cap = k ? k : 1, nout = 0, top = 0;
  slice *res = malloc(cap * sizeof *res), *stack = malloc((cap + 64) * sizeof *stack);
  if (!res || !stack) {
    free(res);
    free(stack);
    return (size_t)-1;
  }
  if (k) stack[top++] = (slice){lo, hi, clo, chi};
  while (top) {
    slice s = stack[--top];
    size_t m = s.cb - s.ca;
    if (m == 0) continue;
    if (m == 1 || s.b - s.a <= tol) {
      res[nout++] = s;
      continue;
    }
    double mid = 0.5 * (s.a + s.b);
    size_t cm = tri_count(t, mid);
    (*counts)++;
    /* push the upper half first so the lower one is processed first: ascending output */
    stack[top++] = (slice){mid, s.b, cm, s.cb};
    stack[top++] = (slice){s.a, mid, s.ca, cm};
  }
  free(stack);
  *out = res;
  return nout;
}

static size_t tri_count_newton(const tri *t, double s, double *step);

/* Newton on det(T − σ) inside slice s, which holds exactly one eigenvalue; the slice shrinks
 * with the count of every pass (bisection whenever Newton would leave it).  Returns the
 * estimate, accurate to about tol. */
static double refine_newton(const tri *t, slice *s, double tol, size_t *counts) {
  double x = 0.5 * (s->a + s->b);
  for (int it = 0; it < 60; it++) {
    double step;
    size_t c = tri_count_newton(t, x, &step);
    (*counts)++;
    if (c > s->ca) s->b = x, s->cb = c;
    else s->a = x;
    double nx = x + step;
    if (!(nx > s->a && nx < s->b) || !isfinite(nx) || step == 0.0) nx = 0.5 * (s->a + s->b);
    if (fabs(nx - x) < tol || s->b - s->a < tol) return nx;
    x = nx;
  }
  return x;
}

/* Narrow slice s (one eigenvalue) by bisection until width <= target. */
static void narrow(const tri *t, slice *s, double target, size_t *counts) {
  for (int it = 0; it < 200 && s->b - s->a > target; it++) {
    double mid = 0.5 * (s->a + s->b);
    size_t cm = tri_count(t, mid);
    (*counts)++;
    if (cm > s->ca) s->b = mid, s->cb = cm;
    else s->a = mid;
  }
}

ew_status ew_eigen_window(const ew_pencil *p, double lo, double hi, int want_vectors,
                          ew_eigenpairs *out, ew_error *err) {
  memset(out, 0, sizeof *out);
  out->n = p->n;
  if (p->n < 2 || !(lo < hi))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "eigen-solve needs n >= 2 and lo < hi");
  tri t;
  slice *sl = NULL;
  slu s;
  int have_slu = 0;
  double *x = NULL, *y = NULL;
  ew_status rc = EW_OK;
  if (!tri_init(&t, p)) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (eigen workspace, n = %zu)", p->n);
    goto done;
  }
  size_t clo = tri_count(&t, lo), chi = tri_count(&t, hi);
  out->counts = 2;
  out->certified = chi - clo;
  const double tol = 16.0 * DBL_EPSILON * t.norm; /* resolution of the count */
  size_t ns = isolate(&t, lo, hi, clo, chi, tol, &sl, &out->counts);
  if (ns == (size_t)-1) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu eigenvalues)", chi - clo);
    goto done;
  }
  size_t k = out->certified;
  out->values = malloc((k ? k : 1) * sizeof *out->values);
  if (!out->values) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu eigenvalues)", k);
    goto done;
  }
  if (!want_vectors) {
    size_t j = 0;
    for (size_t q = 0; q < ns; q++) {
      narrow(&t, &sl[q], fmax(tol, 1e-12), &out->counts);
      for (size_t m = sl[q].ca; m < sl[q].cb; m++) out->values[j++] = 0.5 * (sl[q].a + sl[q].b);
    }
    out->count = j;
    goto done;
  }
  if (k > 0 && p->n > SIZE_MAX / sizeof(double) / k) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "too many eigenvectors (%zu of size %zu)", k, p->n);
    goto done;
  }
  out->vectors = malloc((k ? k : 1) * p->n * sizeof *out->vectors);
  x = malloc(p->n * sizeof *x);
  y = malloc(p->n * sizeof *y);
  if (out->vectors && x && y) {
    have_slu = 1; /* slu_free copes with a partly initialised adapter */
    if (!slu_init(&s, p)) free(x), x = NULL;
  }
  if (!out->vectors || !x || !y) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu eigenvectors of size %zu)", k,
                 p->n);
    goto done;
  }
  size_t n = p->n, j = 0;
  for (size_t q = 0; q < ns; q++) {
    slice *c = &sl[q];
    size_t mult = c->cb - c->ca;
    /* A single eigenvalue is refined by Newton on the LDLᵀ recurrence inside its slice (which
       holds it alone): the shift then sits within ~1e-12 of it and inverse iteration
       converges in one or two solves. */
    double sigma = mult == 1 ? refine_newton(&t, c, fmax(tol, 1e-12), &out->counts)
                             : 0.5 * (c->a + c->b);
    int info = 0;
    for (int attempt = 0; attempt < 8; attempt++) {
      info = slu_factor(&s, p, sigma);
      out->factorizations++;
      if (info <= 0) break;
      sigma += (1e-10 + 4.0 * tol) * (attempt + 1); /* hit the eigenvalue exactly: perturb */
    }
    if (info != 0) {
      rc = info < 0 ? ew_fail(err, EW_ERR_NOMEM, NULL, 0, "SuperLU ran out of memory (n = %zu)", n)
                    : ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                              "shift %.12g eV stays singular after perturbation", sigma);
      goto done;
    }
    for (size_t m = 0; m < mult; m++, j++) {
      double *v = out->vectors + j * n, theta = sigma, res = INFINITY;
      start_vector(x, n, j + 1);
      int conv = 0, extra = 1; /* after the residual settles, one more step polishes the
                                  vector (each shrinks its error by |λ − σ| / gap) */
      for (int it = 0; it < 60 && extra > 0; it++) {
        if (conv) extra--;
        for (size_t i = 0; i < n; i++) y[i] = p->b[i] * x[i];
        slu_solve(&s, y);
        out->solves++;
        /* B-orthogonalize against the vectors of this cluster found so far */
        for (size_t r = j - m; r < j; r++) {
          double *u = out->vectors + r * n, a = bdot(p, u, y);
          for (size_t i = 0; i < n; i++) y[i] -= a * u[i];
        }
        double nb = sqrt(bdot(p, y, y));
        if (!(nb > 0) || !isfinite(nb)) break;
        for (size_t i = 0; i < n; i++) x[i] = y[i] / nb;
        theta = hquad(p, x);
        res = ew_pencil_residual(p, x, theta);
        if (!conv) conv = res < 64.0 * DBL_EPSILON * sqrt((double)n) || (it > 4 && res < 1e-11);
      }
      double slack = 1e3 * tol + 1e-9 * fabs(theta);
      if (!conv || theta < c->a - slack || theta > c->b + slack) {
        rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                     "inverse iteration did not converge to eigenvalue %zu in [%.12g, %.12g] eV "
                     "(reached %.12g eV, relative residual %.3g)",
                     c->ca + m + 1 - clo, c->a, c->b, theta, res);
        goto done;
      }
      /* Vectors of eigenvalues closer than EW_ORTH_GAP lose orthogonality to rounding
         (~ ε‖T‖/gap): one final B-orthogonalization against those found before. */
      int again = 0;
      for (size_t r = j; r-- > 0 && theta - out->values[r] < EW_ORTH_GAP_EV;) {
        double *u = out->vectors + r * n, a = bdot(p, u, x);
        for (size_t i = 0; i < n; i++) x[i] -= a * u[i];
        again = 1;
      }
      if (again) {
        double nb = sqrt(bdot(p, x, x));
        for (size_t i = 0; i < n; i++) x[i] /= nb;
        theta = hquad(p, x);
      }
      memcpy(v, x, n * sizeof *v);
      out->values[j] = theta;
    }
  }
  out->count = j;
done:
  if (have_slu) slu_free(&s);
  free(x);
  free(y);
  free(sl);
  tri_free(&t);
  if (rc != EW_OK) ew_eigenpairs_free(out);
  return rc;
}

/* One pass of the LDLᵀ recurrence at s: the count, and the Newton step −det/det' from
 * (log det)' = Σ q_i'/q_i with q_i' = −1 + e²_{i−1} q_{i−1}' / q_{i−1}². */
static size_t tri_count_newton(const tri *t, double s, double *step) {
  size_t cnt = 0;
  double q = t->d[0] - s, dq = -1.0;
  if (fabs(q) < t->pivmin) q = -t->pivmin;
  double g = dq / q;
  cnt += q < 0;
  for (size_t i = 1; i < t->n; i++) {
    double r = t->e2[i - 1] / q;
    dq = -1.0 + r * dq / q;
    q = (t->d[i] - s) - r;
    if (fabs(q) < t->pivmin) q = -t->pivmin;
    g += dq / q;
    cnt += q < 0;
  }
  *step = g != 0.0 && isfinite(g) ? -1.0 / g : 0.0;
  return cnt;
}

/* The eigenvalue of global index idx near x0: Newton on det(T − σ) safeguarded by a bracket
 * kept with the counts of the same passes (bisection when Newton leaves it). */
static double newton_index(const tri *t, size_t idx, double x0, double w, double tol,
                           size_t *counts) {
  /* the bracket [a, b] (count(a) <= idx < count(b)) comes from the passes themselves */
  if (idx >= t->n) return NAN; /* the pencil has no eigenvalue of that index */
  double a = -INFINITY, b = INFINITY, x = x0;
  for (int it = 0; it < 400; it++) {
    if (b - a <= tol) return 0.5 * (a + b);
    double step;
    size_t c = tri_count_newton(t, x, &step);
    (*counts)++;
    if (c > idx) b = fmin(b, x);
    else a = fmax(a, x);
    double nx = x + step;
    /* Newton on a determinant with many roots can wander without closing the bracket (seen
       with a poor start far above the index's eigenvalue): after a few steps an open bracket
       is closed by expansion instead */
    int inside = nx > a && nx < b && step != 0.0 && isfinite(nx) &&
                 (it < 30 || (isfinite(a) && isfinite(b)));
    if (inside && fabs(step) < 0.25 * tol) { /* converged: confirm the count brackets it */
      size_t cl = tri_count(t, nx - tol), ch = tri_count(t, nx + tol);
      *counts += 2;
      if (cl <= idx && ch > idx) return nx;
      if (cl > idx) b = fmin(b, nx - tol); /* converged to another eigenvalue: keep bisecting */
      else a = fmax(a, nx - tol);
      if (ch > idx) b = fmin(b, nx + tol);
      else a = fmax(a, nx + tol);
      inside = 0;
    }
    if (!inside) {
      if (isfinite(a) && isfinite(b)) nx = 0.5 * (a + b);
      else if (isfinite(a)) nx = a + w, w *= 2;
      else nx = b - w, w *= 2;
    }
    x = nx;
  }
  double mid = 0.5 * (a + b);
  return isfinite(mid) ? mid : NAN; /* never an infinity: NaN is "not found" to callers */
}

ew_status ew_eigen_values_near(const ew_pencil *p, double lo, const double *guess, size_t k,
                               double tol_eV, double *values, size_t *counts, ew_error *err) {
  size_t n = p->n, dummy = 0;
  if (!counts) counts = &dummy;
  tri t;
  double *theta = malloc((k ? k : 1) * sizeof *theta), *rho2 = malloc((k ? k : 1) * sizeof *rho2);
  if (!tri_init(&t, p) || !theta || !rho2) {
    tri_free(&t);
    free(theta);
    free(rho2);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (coarse eigenvalues)");
  }
  double res_tol = fmax(tol_eV, 16.0 * DBL_EPSILON * t.norm);
  for (size_t j = 0; j < k; j++) { /* Rayleigh quotients and residual norms ‖r‖²_{B⁻¹} */
    const double *x = guess + j * n;
    double xbx = bdot(p, x, x), th = hquad(p, x) / xbx, r2 = 0.0;
    for (size_t i = 0; i < n; i++) {
      double hx = p->diag[i] * x[i];
      if (i > 0) hx += p->off[i - 1] * x[i - 1];
      if (i + 1 < n) hx += p->off[i] * x[i + 1];
      double r = hx - th * p->b[i] * x[i];
      r2 += r * r / p->b[i];
    }
    theta[j] = th;
    rho2[j] = r2 / xbx;
  }
  size_t clo = tri_count(&t, lo);
  (*counts)++;
  for (size_t j = 0; j < k; j++) {
    double left = j > 0 ? theta[j] - theta[j - 1] : theta[j] - lo;
    double right = j + 1 < k ? theta[j + 1] - theta[j] : left;
    double gam = 0.5 * fmin(left, right);
    int ok = gam > 0 && rho2[j] / gam <= res_tol;
    if (ok) {
      size_t ca = tri_count(&t, theta[j] - gam), cb = tri_count(&t, theta[j] + gam);
      *counts += 2;
      ok = ca == clo + j && cb == ca + 1;
    }
    values[j] = ok ? theta[j]
                   : newton_index(&t, clo + j, theta[j], fmax(gam, 1e-9),
                                  fmax(tol_eV, 4.0 * DBL_EPSILON * t.norm), counts);
  }
  tri_free(&t);
  free(theta);
  free(rho2);
  return EW_OK;
}

double ew_eigen_index(const ew_pencil *p, size_t idx, double guess, double tol_eV,
                      size_t *counts) {
  size_t dummy = 0;
  if (!counts) counts = &dummy;
  tri t;
  if (!tri_init(&t, p)) {
    tri_free(&t);
    return NAN;
  }
  double v = newton_index(&t, idx, guess, 1e-3, fmax(tol_eV, 4.0 * DBL_EPSILON * t.norm), counts);
  tri_free(&t);
  return v;
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
