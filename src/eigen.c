/* eigen.c — spectrum slicing: Sturm counts, isolation, Newton on the LDLᵀ recurrence, and
 * inverse iteration with the shift-invert factorizations of superlu_adapter.c (see eigen.h). */
#include "eigen.h"

#include <float.h>
#include <math.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "helper_thread.h"
#include "superlu_adapter.h"

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

/* Several shifts in one pass (K of them, K <= EW_LANES, a constant at each call so that the
 * lanes are unrolled): each lane performs exactly the scalar recurrence's operations, the same
 * bits, but the K chains of dependent divisions overlap in the processor.  Measured on
 * 100 499 nodes: two counts in one pass take 0.54 of two passes, four 0.40 of four; Newton
 * passes (three divisions a node) 0.55 and 0.43. */
#define EW_LANES 4
#if defined(__GNUC__)
#define EW_UNROLLED static inline __attribute__((always_inline))
#else
#define EW_UNROLLED static inline
#endif

/* tri_count at s[0 … K−1] into c[] */
EW_UNROLLED void count_lanes(const tri *t, const int K, const double *s, size_t *c) {
  double q[EW_LANES];
  for (int k = 0; k < K; k++) {
    q[k] = t->d[0] - s[k];
    if (fabs(q[k]) < t->pivmin) q[k] = -t->pivmin;
    c[k] = q[k] < 0;
  }
  for (size_t i = 1; i < t->n; i++) {
    double di = t->d[i], e = t->e2[i - 1];
    for (int k = 0; k < K; k++) {
      q[k] = (di - s[k]) - e / q[k];
      if (fabs(q[k]) < t->pivmin) q[k] = -t->pivmin;
      c[k] += q[k] < 0;
    }
  }
}

static void tri_count2(const tri *t, double s0, double s1, size_t *c0, size_t *c1) {
  double s[2] = {s0, s1};
  size_t c[2];
  count_lanes(t, 2, s, c);
  *c0 = c[0], *c1 = c[1];
}

/* tri_count at k <= EW_LANES shifts: one pass of as many lanes as needed */
static void tri_count_k(const tri *t, int k, const double *s, size_t *c) {
  if (k == 1) c[0] = tri_count(t, s[0]);
  else if (k == 2) count_lanes(t, 2, s, c);
  else if (k == 3) count_lanes(t, 3, s, c);
  else if (k == 4) count_lanes(t, 4, s, c);
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

static int slice_cmp(const void *x, const void *y) {
  double a = ((const slice *)x)->a, b = ((const slice *)y)->a;
  return (a > b) - (a < b);
}

/* Isolate eigenvalues in [lo, hi) into slices of one eigenvalue (or an unresolvable
 * cluster), ascending.  Each slice's bisection depends on its own bounds only, so up to
 * EW_LANES slices are bisected per pass and the result sorted: the slices of one at a time.
 * Returns the number of slices, or (size_t)-1 when out of memory. */
static size_t isolate(const tri *t, double lo, double hi, size_t clo, size_t chi, double tol,
                      slice **out, size_t *counts) {
  size_t k = chi - clo, cap = k ? k : 1, nout = 0, top = 0, scap = cap + 64;
  slice *res = malloc(cap * sizeof *res), *stack = malloc(scap * sizeof *stack);
  if (!res || !stack) {
    free(res);
    free(stack);
    return (size_t)-1;
  }
  if (k) stack[top++] = (slice){lo, hi, clo, chi};
  while (top) {
    if (top + 2 * EW_LANES > scap) { /* empty halves wait on the stack of every lane */
      slice *more = realloc(stack, 2 * scap * sizeof *stack);
      if (!more) {
        free(res);
        free(stack);
        return (size_t)-1;
      }
      stack = more, scap *= 2;
    }
    slice cut[EW_LANES];
    double mid[EW_LANES];
    size_t cm[EW_LANES];
    int nc = 0;
    while (top && nc < EW_LANES) { /* the slices that still need a cut, one per lane */
      slice s = stack[--top];
      size_t m = s.cb - s.ca;
      if (m == 0) continue;
      if (m == 1 || s.b - s.a <= tol) res[nout++] = s;
      else mid[nc] = 0.5 * (s.a + s.b), cut[nc++] = s;
    }
    tri_count_k(t, nc, mid, cm);
    *counts += (size_t)nc;
    for (int c = nc; c-- > 0;) {
      /* push the upper half first so the lower one is processed first */
      stack[top++] = (slice){mid[c], cut[c].b, cm[c], cut[c].cb};
      stack[top++] = (slice){cut[c].a, mid[c], cut[c].ca, cm[c]};
    }
  }
  free(stack);
  qsort(res, nout, sizeof *res, slice_cmp);
  *out = res;
  return nout;
}

static size_t tri_count_newton(const tri *t, double s, double *step);

/* Newton on det(T − σ) inside a slice that holds exactly one eigenvalue, as a lane that is
 * given the result of one pass at a time (so that two slices share each pass): the slice
 * shrinks with the count of every pass (bisection whenever Newton would leave it). */
typedef struct {
  slice *s;
  double x;   /* where the next pass is due */
  int it;
} newton_lane;

static void lane_start(newton_lane *l, slice *s) {
  l->s = s, l->x = 0.5 * (s->a + s->b), l->it = 0;
}

/* The pass at l->x gave count c and Newton step `step`: 1 with the estimate in *est when it
 * is accurate to about tol (or 60 passes are spent), else 0 with the next l->x. */
static int lane_step(newton_lane *l, size_t c, double step, double tol, double *est) {
  slice *s = l->s;
  double x = l->x;
  if (c > s->ca) s->b = x, s->cb = c;
  else s->a = x;
  double nx = x + step;
  if (!(nx > s->a && nx < s->b) || !isfinite(nx) || step == 0.0) nx = 0.5 * (s->a + s->b);
  l->x = nx;
  *est = nx;
  return fabs(nx - x) < tol || s->b - s->a < tol || ++l->it >= 60;
}

static void tri_count_newton_k(const tri *t, int k, const double *s, size_t *c, double *step);

/* sigma[q]: the eigenvalue of every slice q < ns that holds one and is not excluded by want
 * (want == NULL: all), by Newton lanes sharing each pass (the values of one at a time). */
static void refine_slices(const tri *t, slice *sl, size_t ns, const unsigned char *want,
                          double tol, double *sigma, size_t *counts) {
  newton_lane lane[EW_LANES];
  size_t which[EW_LANES], next = 0;
  int live = 0;
  for (;;) {
    while (live < EW_LANES && next < ns) { /* fill the free lanes */
      size_t q = next++;
      if (sl[q].cb - sl[q].ca != 1 || (want && !want[q])) continue;
      lane_start(&lane[live], &sl[q]), which[live++] = q;
    }
    if (!live) return;
    double x[EW_LANES], step[EW_LANES];
    size_t c[EW_LANES];
    for (int k = 0; k < live; k++) x[k] = lane[k].x;
    tri_count_newton_k(t, live, x, c, step);
    *counts += (size_t)live;
    for (int k = 0; k < live;) /* a finished lane gives its place to the last one */
      if (lane_step(&lane[k], c[k], step[k], tol, &sigma[which[k]])) {
        live--;
        lane[k] = lane[live], which[k] = which[live], c[k] = c[live], step[k] = step[live];
      } else k++;
  }
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

/* Values only: each slice bisected to 1e-12 eV (or the count's resolution). */
static void window_values(const tri *t, slice *sl, size_t ns, double tol, ew_eigenpairs *out) {
  size_t j = 0;
  for (size_t q = 0; q < ns; q++) {
    narrow(t, &sl[q], fmax(tol, 1e-12), &out->counts);
    for (size_t m = sl[q].ca; m < sl[q].cb; m++) out->values[j++] = 0.5 * (sl[q].a + sl[q].b);
  }
  out->count = j;
}

/* Factor H − σB, perturbing σ when it hits an eigenvalue exactly (a zero pivot). */
static ew_status factor_near(ew_shift_lu *lu, const ew_pencil *p, double *sigma, double tol,
                             ew_eigenpairs *out, ew_error *err) {
  ew_status rc = EW_OK;
  for (int attempt = 0; attempt < 8; attempt++) {
    rc = ew_shift_lu_factor(lu, p, *sigma, err);
    out->factorizations++;
    if (rc != EW_ERR_NUMERIC) return rc;
    *sigma += (1e-10 + 4.0 * tol) * (attempt + 1);
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "shift %.12g eV stays singular after perturbation",
                 *sigma);
}

/* Inverse iteration with the current factorization for vector j, B-orthogonal to the vectors
 * first..j−1 of its slice: x (normalised, xᵀBx = 1) and its Rayleigh quotient *theta; *res
 * the relative residual.  Returns 1 when converged, 0 when not, −1 when a solve failed (err
 * set). */
static int inverse_iteration(const ew_pencil *p, ew_shift_lu *lu, ew_eigenpairs *out,
                             size_t first, size_t j, double *x, double *y, double *theta,
                             double *res, ew_error *err) {
  size_t n = p->n;
  start_vector(x, n, j + 1);
  int conv = 0, extra = 1; /* after the residual settles, one more step polishes the vector
                              (each shrinks its error by |λ − σ| / gap) */
  for (int it = 0; it < 60 && extra > 0; it++) {
    if (conv) extra--;
    /* element-wise loops vectorised (the same bits in every lane: no sum is reordered) */
#pragma omp simd
    for (size_t i = 0; i < n; i++) y[i] = p->b[i] * x[i];
    if (ew_shift_lu_solve(lu, y, err) != EW_OK) return -1;
    out->solves++;
    for (size_t r = first; r < j; r++) { /* B-orthogonal to this slice's vectors so far */
      double *u = out->vectors + r * n, a = bdot(p, u, y);
      for (size_t i = 0; i < n; i++) y[i] -= a * u[i];
    }
    double nb = sqrt(bdot(p, y, y));
    if (!(nb > 0) || !isfinite(nb)) break;
#pragma omp simd
    for (size_t i = 0; i < n; i++) x[i] = y[i] / nb;
    *theta = hquad(p, x);
    *res = ew_pencil_residual(p, x, *theta);
    if (!conv) conv = *res < 64.0 * DBL_EPSILON * sqrt((double)n) || (it > 4 && *res < 1e-11);
  }
  return conv;
}

/* Vectors of eigenvalues closer than EW_ORTH_GAP lose orthogonality to rounding
   (~ ε‖T‖/gap): one final B-orthogonalization of x (value theta) against those before j. */
static double orthogonalize_close(const ew_pencil *p, const ew_eigenpairs *out, size_t j,
                                  double *x, double theta) {
  size_t n = p->n;
  int again = 0;
  for (size_t r = j; r-- > 0 && theta - out->values[r] < EW_ORTH_GAP_EV;) {
    double *u = out->vectors + r * n, a = bdot(p, u, x);
    for (size_t i = 0; i < n; i++) x[i] -= a * u[i];
    again = 1;
  }
  if (!again) return theta;
  double nb = sqrt(bdot(p, x, x));
  for (size_t i = 0; i < n; i++) x[i] /= nb;
  return hquad(p, x);
}

/* Accept eigenvector m of slice c (Rayleigh quotient theta, relative residual res, conv as
 * inverse_iteration returned it): EW_OK, or EW_ERR_NUMERIC saying how close it got. */
static ew_status accept_vector(const slice *c, size_t m, int conv, double theta, double res,
                               double tol, size_t clo, ew_error *err) {
  double slack = 1e3 * tol + 1e-9 * fabs(theta);
  if (conv && theta >= c->a - slack && theta <= c->b + slack) return EW_OK;
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                 "inverse iteration did not converge to eigenvalue %zu in [%.12g, %.12g] eV "
                 "(reached %.12g eV, relative residual %.3g)",
                 c->ca + m + 1 - clo, c->a, c->b, theta, res);
}

/* The mult eigenvectors of slice c (values in out->values[j…]) from one factorization. */
static ew_status slice_vectors(const ew_pencil *p, ew_shift_lu *lu, slice *c, double refined,
                               double tol, size_t clo, size_t j, double *x, double *y,
                               ew_eigenpairs *out, ew_error *err) {
  size_t mult = c->cb - c->ca, n = p->n;
  /* A single eigenvalue comes refined by Newton on the LDLᵀ recurrence inside its slice
     (which holds it alone): the shift then sits within ~1e-12 of it and inverse iteration
     converges in one or two solves. */
  double sigma = mult == 1 ? refined : 0.5 * (c->a + c->b);
  ew_status rc = factor_near(lu, p, &sigma, tol, out, err);
  if (rc != EW_OK) return rc;
  for (size_t m = 0; m < mult; m++, j++) {
    double theta = sigma, res = INFINITY;
    int conv = inverse_iteration(p, lu, out, j - m, j, x, y, &theta, &res, err);
    if (conv < 0) return EW_ERR_NOMEM;
    if ((rc = accept_vector(c, m, conv, theta, res, tol, clo, err)) != EW_OK) return rc;
    theta = orthogonalize_close(p, out, j, x, theta);
    memcpy(out->vectors + j * n, x, n * sizeof *x);
    out->values[j] = theta;
  }
  return EW_OK;
}

/* Cyclic Jacobi on the symmetric m × m matrix a (row-major, destroyed): eigenvectors into the
 * columns of q, eigenvalues left on a's diagonal (G. H. Golub, C. F. Van Loan, Matrix
 * Computations, 4th ed., §8.5.2). */
static void jacobi_eigen(size_t m, double *a, double *q) {
  for (size_t i = 0; i < m * m; i++) q[i] = i % (m + 1) == 0;
  for (int sweep = 0; sweep < 60; sweep++) {
    double off = 0.0, diag = 0.0;
    for (size_t i = 0; i < m; i++)
      for (size_t k = 0; k < m; k++) *(i == k ? &diag : &off) += a[i * m + k] * a[i * m + k];
    if (off <= DBL_EPSILON * DBL_EPSILON * diag) return;
    for (size_t r = 0; r + 1 < m; r++)
      for (size_t s = r + 1; s < m; s++) {
        double apq = a[r * m + s];
        if (apq == 0.0) continue;
        double tau = (a[s * m + s] - a[r * m + r]) / (2.0 * apq);
        double tn = (tau >= 0 ? 1.0 : -1.0) / (fabs(tau) + sqrt(1.0 + tau * tau));
        double c = 1.0 / sqrt(1.0 + tn * tn), sn = tn * c;
        for (size_t k = 0; k < m; k++) { /* a ← Jᵀ a J, q ← q J */
          double akr = a[k * m + r], aks = a[k * m + s];
          a[k * m + r] = c * akr - sn * aks, a[k * m + s] = sn * akr + c * aks;
        }
        for (size_t k = 0; k < m; k++) {
          double ark = a[r * m + k], ask = a[s * m + k];
          a[r * m + k] = c * ark - sn * ask, a[s * m + k] = sn * ark + c * ask;
          double qkr = q[k * m + r], qks = q[k * m + s];
          q[k * m + r] = c * qkr - sn * qks, q[k * m + s] = sn * qkr + c * qks;
        }
      }
  }
}

/* Rotate the m B-orthonormal vectors v[j·n …] of one degenerate group to the basis that
 * diagonalises the node index i (a position along z) within their span, ordered by ascending
 * position, each with its largest component positive.  Returns 0 when out of memory. */
static int rotate_to_position(const double *b, size_t n, size_t m, double *v) {
  double *z = malloc(2 * m * m * sizeof *z + m * sizeof *z), *q = z ? z + m * m : NULL;
  size_t *ord = malloc(m * sizeof *ord);
  if (!z || !ord) {
    free(z);
    free(ord);
    return 0;
  }
  double *row = q + m * m;
  for (size_t r = 0; r < m; r++)
    for (size_t s = r; s < m; s++) {
      double acc = 0.0;
      for (size_t i = 0; i < n; i++) acc += v[r * n + i] * b[i] * (double)i * v[s * n + i];
      z[r * m + s] = z[s * m + r] = acc;
    }
  jacobi_eigen(m, z, q);
  for (size_t r = 0; r < m; r++) ord[r] = r; /* insertion sort by position (m is small) */
  for (size_t r = 1; r < m; r++)
    for (size_t s = r; s > 0 && z[ord[s] * (m + 1)] < z[ord[s - 1] * (m + 1)]; s--) {
      size_t tmp = ord[s];
      ord[s] = ord[s - 1], ord[s - 1] = tmp;
    }
  for (size_t i = 0; i < n; i++) { /* row i of V ← row i of V Q (columns in position order) */
    for (size_t s = 0; s < m; s++) {
      double acc = 0.0;
      for (size_t r = 0; r < m; r++) acc += v[r * n + i] * q[r * m + ord[s]];
      row[s] = acc;
    }
    for (size_t s = 0; s < m; s++) v[s * n + i] = row[s];
  }
  for (size_t s = 0; s < m; s++) {
    double *u = v + s * n, big = 0.0;
    for (size_t i = 0; i < n; i++)
      if (fabs(u[i]) > fabs(big)) big = u[i];
    if (big < 0)
      for (size_t i = 0; i < n; i++) u[i] = -u[i];
  }
  free(z);
  free(ord);
  return 1;
}

/* Eigenvalues closer than the count and the vectors can resolve (a few times the count's
 * resolution) are degenerate to working precision: any orthonormal basis of their space is as
 * right as any other, and the one the iteration happened to produce depends on start vectors
 * and rounding.  Decoupled identical wells (the usual multi-well case) give such groups.  Each
 * group is rotated to the basis that diagonalises the node position within it (localised
 * states, one per well, ordered along z): deterministic and what a user expects of decoupled
 * wells.  Returns 0 when out of memory. */
static int localise_degenerate(const ew_pencil *p, ew_eigenpairs *out, double gap) {
  size_t n = p->n;
  for (size_t a = 0; a < out->count;) {
    size_t b = a + 1;
    while (b < out->count && out->values[b] - out->values[b - 1] <= gap) b++;
    if (b - a > 1 && !rotate_to_position(p->b, n, b - a, out->vectors + a * n)) return 0;
    for (size_t r = a; b - a > 1 && r < b; r++) out->values[r] = hquad(p, out->vectors + r * n);
    for (size_t r = a + 1; r < b; r++) /* keep the values ascending (they agree to rounding) */
      if (out->values[r] < out->values[r - 1]) out->values[r] = out->values[r - 1];
    a = b;
  }
  return 1;
}

/* The vectors of every slice, then the degenerate groups localised. */
/* The inverse iterations of the single-eigenvalue slices of a window, offered to the idle
 * threads of a pass (helper_thread.h, ew_assist): each slice's vector depends on nothing but
 * its own factorization, so it is computed on any thread into its own column; what depends on
 * the vectors before it (the B-orthogonalisation of close ones, and whole slices of several
 * eigenvalues) follows on the owner's thread in slice order: the same bits as one slice after
 * another. */
#define EW_SINGLE_SLOTS 4 /* threads on one queue at most: the owner and the pass's others */
typedef struct {
  const ew_pencil *p;
  const slice *sl;
  const double *sigma;
  const size_t *col;   /* [ns] first column of each slice */
  size_t ns;
  double tol;
  ew_eigenpairs *out;
  atomic_size_t next;
  atomic_int servers;
  double *theta, *res; /* [ns] Rayleigh quotient and relative residual of each single slice */
  int *state;          /* [ns] 0 not done, 1 converged, 2 not converged, −1 failed */
  ew_status *rc;       /* [ns] */
  ew_error *err;       /* [ns] */
  size_t factorizations[EW_SINGLE_SLOTS], solves[EW_SINGLE_SLOTS];
} single_queue;

/* Single slices off the queue until it is empty, with workspace lu; work counted in slot. */
static void single_slices(single_queue *q, int slot, ew_shift_lu *lu) {
  size_t n = q->p->n;
  double *y = malloc(n * sizeof *y);
  ew_eigenpairs tally = *q->out; /* the vectors to write; this thread's own counters */
  tally.factorizations = tally.solves = 0;
  for (size_t k; lu && y && (k = atomic_fetch_add(&q->next, 1)) < q->ns;) {
    if (q->sl[k].cb - q->sl[k].ca != 1) continue;
    double sigma = q->sigma[k], *x = q->out->vectors + q->col[k] * n;
    if ((q->rc[k] = factor_near(lu, q->p, &sigma, q->tol, &tally, &q->err[k])) != EW_OK) {
      q->state[k] = -1;
      continue;
    }
    q->theta[k] = sigma, q->res[k] = INFINITY;
    int conv = inverse_iteration(q->p, lu, &tally, q->col[k], q->col[k], x, y, &q->theta[k],
                                 &q->res[k], &q->err[k]);
    if (conv < 0) q->rc[k] = EW_ERR_NOMEM;
    q->state[k] = conv < 0 ? -1 : conv ? 1 : 2;
  }
  q->factorizations[slot] = tally.factorizations, q->solves[slot] = tally.solves;
  free(y);
}

/* A thread serving the queue (ew_assist_fn; scratch: its workspace slot, helper_thread.h). */
static void serve_singles(void *arg, void *scratch) {
  single_queue *q = arg;
  int slot = 1 + atomic_fetch_add(&q->servers, 1);
  if (slot >= EW_SINGLE_SLOTS) return;
  ew_shift_lu **lu = scratch;
  if (*lu && ew_shift_lu_size(*lu) != q->p->n) ew_shift_lu_free(*lu), *lu = NULL;
  if (!*lu) *lu = ew_shift_lu_create(q->p->n);
  single_slices(q, slot, *lu);
}

static void singles_free(single_queue *q) {
  free((void *)q->col);
  free(q->theta);
  free(q->state);
  free(q->rc);
  free(q->err);
}

/* The single slices' vectors on this thread and the threads assist brings (columns, theta,
 * res, state set; work counted into out).  0 when out of memory. */
static int singles_shared(const ew_pencil *p, const slice *sl, size_t ns, const double *sigma,
                          double tol, ew_shift_lu *lu, ew_assist *assist, ew_eigenpairs *out,
                          single_queue *q) {
  memset(q, 0, sizeof *q);
  q->p = p, q->sl = sl, q->sigma = sigma, q->ns = ns, q->tol = tol, q->out = out;
  size_t *col = malloc((ns ? ns : 1) * sizeof *col), cap = ns ? ns : 1;
  q->col = col;
  q->theta = malloc(2 * cap * sizeof *q->theta);
  q->state = calloc(cap, sizeof *q->state);
  q->rc = calloc(cap, sizeof *q->rc);
  q->err = malloc(cap * sizeof *q->err);
  if (!col || !q->theta || !q->state || !q->rc || !q->err) return 0;
  q->res = q->theta + ns;
  for (size_t k = 0, j = 0; k < ns; j += sl[k].cb - sl[k].ca, k++) col[k] = j;
  atomic_init(&q->next, 0);
  atomic_init(&q->servers, 0);
  int offered = ew_assist_offer(assist, serve_singles, q);
  single_slices(q, 0, lu);
  if (offered) ew_assist_withdraw(assist, offered);
  for (int t = 0; t < EW_SINGLE_SLOTS; t++) {
    out->factorizations += q->factorizations[t];
    out->solves += q->solves[t];
  }
  for (size_t k = 0; k < ns; k++) /* slices nobody could do (out of memory) */
    if (sl[k].cb - sl[k].ca == 1 && q->state[k] == 0) return 0;
  return 1;
}

/* Slice q's vectors after singles_shared: a single slice's check and B-orthogonalisation
 * (as slice_vectors ends), or a slice of several eigenvalues whole (slice_vectors). */
static ew_status finish_slice(const ew_pencil *p, ew_shift_lu *lu, slice *c, size_t q,
                              const single_queue *sq, double tol, size_t clo, size_t j,
                              double *x, double *y, ew_eigenpairs *out, ew_error *err) {
  if (c->cb - c->ca != 1) return slice_vectors(p, lu, c, sq->sigma[q], tol, clo, j, x, y, out, err);
  if (sq->state[q] < 0) {
    if (err) *err = sq->err[q];
    return sq->rc[q];
  }
  double theta = sq->theta[q];
  ew_status rc = accept_vector(c, 0, sq->state[q] == 1, theta, sq->res[q], tol, clo, err);
  if (rc == EW_OK) out->values[j] = orthogonalize_close(p, out, j, out->vectors + j * p->n, theta);
  return rc;
}

/* Below this many single slices, or this much work (slices × nodes), the slices are not
 * offered: a thread that comes to help wakes, and its first factorization at this size
 * sets up L and U. */
#define EW_OFFER_MIN_SLICES 2
#define EW_OFFER_MIN_WORK 2000.0

static ew_status window_vectors(const ew_pencil *p, const tri *t, slice *sl, size_t ns,
                                double tol, size_t clo, ew_shift_lu *given, ew_assist *assist,
                                ew_eigenpairs *out, ew_error *err) {
  size_t n = p->n, k = out->certified;
  if (k > 0 && n > SIZE_MAX / sizeof(double) / k)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "too many eigenvectors (%zu of size %zu)", k, n);
  out->vectors = malloc((k ? k : 1) * n * sizeof *out->vectors);
  double *x = malloc(n * sizeof *x), *y = malloc(n * sizeof *y);
  double *sigma = malloc((ns ? ns : 1) * sizeof *sigma);
  ew_shift_lu *own = NULL, *lu = given && ew_shift_lu_size(given) == n ? given : NULL;
  if (!lu && out->vectors && x && y && sigma) lu = own = ew_shift_lu_create(n);
  ew_status rc = EW_OK;
  if (!lu || !out->vectors || !x || !y || !sigma)
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu eigenvectors of size %zu)", k, n);
  else refine_slices(t, sl, ns, NULL, fmax(tol, 1e-12), sigma, &out->counts);
  size_t nsingle = 0;
  for (size_t q = 0; q < ns; q++) nsingle += sl[q].cb - sl[q].ca == 1;
  single_queue sq;
  int shared = rc == EW_OK && assist && nsingle >= EW_OFFER_MIN_SLICES &&
               (double)nsingle * (double)n >= EW_OFFER_MIN_WORK;
  memset(&sq, 0, sizeof sq);
  if (shared && !singles_shared(p, sl, ns, sigma, tol, lu, assist, out, &sq))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu eigenvectors of size %zu)", k, n);
  size_t j = 0;
  for (size_t q = 0; rc == EW_OK && q < ns; q++) {
    rc = shared ? finish_slice(p, lu, &sl[q], q, &sq, tol, clo, j, x, y, out, err)
                : slice_vectors(p, lu, &sl[q], sigma[q], tol, clo, j, x, y, out, err);
    j += sl[q].cb - sl[q].ca;
  }
  singles_free(&sq);
  out->count = rc == EW_OK ? j : 0;
  if (rc == EW_OK && !localise_degenerate(p, out, 64.0 * tol))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (degenerate eigenvectors)");
  ew_shift_lu_free(own);
  free(x);
  free(y);
  free(sigma);
  return rc;
}

ew_status ew_eigen_window(const ew_pencil *p, double lo, double hi, int want_vectors,
                          ew_eigenpairs *out, ew_error *err) {
  return ew_eigen_window_lu(p, lo, hi, want_vectors, NULL, out, err);
}

static ew_status window(const ew_pencil *p, double lo, double hi, int want_vectors,
                        ew_shift_lu *lu, ew_assist *assist, ew_eigenpairs *out, ew_error *err);

ew_status ew_eigen_window_lu(const ew_pencil *p, double lo, double hi, int want_vectors,
                             ew_shift_lu *lu, ew_eigenpairs *out, ew_error *err) {
  return window(p, lo, hi, want_vectors, lu, NULL, out, err);
}

ew_status ew_eigen_window_assist(const ew_pencil *p, double lo, double hi, ew_shift_lu *lu,
                                 ew_assist *assist, ew_eigenpairs *out, ew_error *err) {
  return window(p, lo, hi, 1, lu, assist, out, err);
}

static ew_status window(const ew_pencil *p, double lo, double hi, int want_vectors,
                        ew_shift_lu *lu, ew_assist *assist, ew_eigenpairs *out, ew_error *err) {
  memset(out, 0, sizeof *out);
  out->n = p->n;
  if (p->n < 2 || !(lo < hi))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "eigen-solve needs n >= 2 and lo < hi");
  tri t;
  if (!tri_init(&t, p))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (eigen workspace, n = %zu)", p->n);
  size_t clo = tri_count(&t, lo), chi = tri_count(&t, hi);
  out->counts = 2;
  out->certified = chi - clo;
  const double tol = 16.0 * DBL_EPSILON * t.norm; /* resolution of the count */
  slice *sl = NULL;
  size_t ns = isolate(&t, lo, hi, clo, chi, tol, &sl, &out->counts), k = out->certified;
  ew_status rc = EW_OK;
  if (ns != (size_t)-1) out->values = malloc((k ? k : 1) * sizeof *out->values);
  if (ns == (size_t)-1 || !out->values)
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu eigenvalues)", k);
  else if (!want_vectors)
    window_values(&t, sl, ns, tol, out);
  else
    rc = window_vectors(p, &t, sl, ns, tol, clo, lu, assist, out, err);
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

/* tri_count_newton at s[0 … K−1] (see count_lanes) */
EW_UNROLLED void newton_lanes(const tri *t, const int K, const double *s, size_t *c,
                              double *step) {
  double q[EW_LANES], dq[EW_LANES], g[EW_LANES];
  for (int k = 0; k < K; k++) {
    q[k] = t->d[0] - s[k], dq[k] = -1.0;
    if (fabs(q[k]) < t->pivmin) q[k] = -t->pivmin;
    g[k] = dq[k] / q[k];
    c[k] = q[k] < 0;
  }
  for (size_t i = 1; i < t->n; i++) {
    double e = t->e2[i - 1], di = t->d[i];
    for (int k = 0; k < K; k++) {
      double r = e / q[k];
      dq[k] = -1.0 + r * dq[k] / q[k];
      q[k] = (di - s[k]) - r;
      if (fabs(q[k]) < t->pivmin) q[k] = -t->pivmin;
      g[k] += dq[k] / q[k];
      c[k] += q[k] < 0;
    }
  }
  for (int k = 0; k < K; k++) step[k] = g[k] != 0.0 && isfinite(g[k]) ? -1.0 / g[k] : 0.0;
}

/* tri_count_newton at k <= EW_LANES shifts in one pass */
static void tri_count_newton_k(const tri *t, int k, const double *s, size_t *c, double *step) {
  if (k == 1) c[0] = tri_count_newton(t, s[0], &step[0]);
  else if (k == 2) newton_lanes(t, 2, s, c, step);
  else if (k == 3) newton_lanes(t, 3, s, c, step);
  else if (k == 4) newton_lanes(t, 4, s, c, step);
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
      /* a side the bracket already decides needs no pass: the count is monotone in σ
         (J. W. Demmel, I. S. Dhillon, H. Ren, ETNA 3, 116 (1995)), so a >= nx − tol gives
         count(nx − tol) <= count(a) <= idx and b <= nx + tol gives count(nx + tol) > idx */
      size_t cl = idx, ch = idx + 1;
      if (a < nx - tol && b > nx + tol) tri_count2(t, nx - tol, nx + tol, &cl, &ch), *counts += 2;
      else if (a < nx - tol) cl = tri_count(t, nx - tol), (*counts)++;
      else if (b > nx + tol) ch = tri_count(t, nx + tol), (*counts)++;
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

/* The Rayleigh quotient θ of x and its residual norm ‖Hx − θBx‖²_{B⁻¹} / xᵀBx. */
static void rayleigh(const ew_pencil *p, const double *x, double *theta, double *rho2) {
  size_t n = p->n;
  double xbx = bdot(p, x, x), th = hquad(p, x) / xbx, r2 = 0.0;
  for (size_t i = 0; i < n; i++) {
    double hx = p->diag[i] * x[i];
    if (i > 0) hx += p->off[i - 1] * x[i - 1];
    if (i + 1 < n) hx += p->off[i] * x[i + 1];
    double r = hx - th * p->b[i] * x[i];
    r2 += r * r / p->b[i];
  }
  *theta = th;
  *rho2 = r2 / xbx;
}

/* The certified values from the Rayleigh quotients theta[k] and residuals rho2[k] (see
 * ew_eigen_values_near). */
static void values_near(const tri *t, double lo, const double *theta, const double *rho2,
                        size_t k, double tol_eV, double *values, size_t *counts) {
  double res_tol = fmax(tol_eV, 16.0 * DBL_EPSILON * t->norm);
  size_t clo = tri_count(t, lo);
  (*counts)++;
  for (size_t j = 0; j < k; j++) {
    double left = j > 0 ? theta[j] - theta[j - 1] : theta[j] - lo;
    double right = j + 1 < k ? theta[j + 1] - theta[j] : left;
    double gam = 0.5 * fmin(left, right);
    int ok = gam > 0 && rho2[j] / gam <= res_tol;
    if (ok) {
      size_t ca, cb;
      tri_count2(t, theta[j] - gam, theta[j] + gam, &ca, &cb);
      *counts += 2;
      ok = ca == clo + j && cb == ca + 1;
    }
    values[j] = ok ? theta[j]
                   : newton_index(t, clo + j, theta[j], fmax(gam, 1e-9),
                                  fmax(tol_eV, 4.0 * DBL_EPSILON * t->norm), counts);
  }
}

/* Both forms below: the guesses' Rayleigh quotients, then values_near.  fine == NULL: guess
 * holds k vectors of p->n; else vector j is fine[j·nf + 2i + 1], i < p->n (sampled into a
 * scratch vector one at a time). */
static ew_status values_near_from(const ew_pencil *p, double lo, const double *guess,
                                  const double *fine, size_t nf, size_t k, double tol_eV,
                                  double *values, size_t *counts, ew_error *err) {
  size_t n = p->n, dummy = 0;
  if (!counts) counts = &dummy;
  tri t;
  double *theta = malloc((k ? k : 1) * sizeof *theta), *rho2 = malloc((k ? k : 1) * sizeof *rho2);
  double *x = fine ? malloc(n * sizeof *x) : NULL;
  if (!tri_init(&t, p) || !theta || !rho2 || (fine && !x)) {
    tri_free(&t);
    free(theta);
    free(rho2);
    free(x);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (coarse eigenvalues)");
  }
  for (size_t j = 0; j < k; j++) {
    if (fine)
      for (size_t i = 0; i < n; i++) x[i] = fine[j * nf + 2 * i + 1];
    rayleigh(p, fine ? x : guess + j * n, &theta[j], &rho2[j]);
  }
  values_near(&t, lo, theta, rho2, k, tol_eV, values, counts);
  tri_free(&t);
  free(theta);
  free(rho2);
  free(x);
  return EW_OK;
}

ew_status ew_eigen_values_near(const ew_pencil *p, double lo, const double *guess, size_t k,
                               double tol_eV, double *values, size_t *counts, ew_error *err) {
  return values_near_from(p, lo, guess, NULL, 0, k, tol_eV, values, counts, err);
}

ew_status ew_eigen_values_near_fine(const ew_pencil *p, double lo, const double *fine,
                                    size_t nf, size_t k, double tol_eV, double *values,
                                    size_t *counts, ew_error *err) {
  if (nf < 2 * p->n + 1)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "coarse grid of %zu nodes is not every second "
                   "node of %zu", p->n, nf);
  return values_near_from(p, lo, NULL, fine, nf, k, tol_eV, values, counts, err);
}

ew_status ew_eigen_indices(const ew_pencil *p, size_t first, size_t k, double lo, double hi,
                           double tol_eV, double *values, size_t *counts, ew_error *err) {
  size_t dummy = 0;
  if (!counts) counts = &dummy;
  tri t;
  if (!tri_init(&t, p)) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (eigenvalues)");
  for (size_t j = 0; j < k; j++) values[j] = NAN;
  size_t want = first + k < t.n ? first + k : t.n; /* indices the pencil has */
  if (k == 0 || first >= want) return EW_OK;
  /* a window [a, b) from lo, hi holding the indices first … want − 1 (widened when not) */
  double w = fmax(hi - lo, 1e-3), a = lo, b = hi;
  size_t ca = tri_count(&t, a), cb = tri_count(&t, b);
  *counts += 2;
  for (int it = 0; it < 200 && ca > first; it++, w *= 2) ca = tri_count(&t, a -= w), (*counts)++;
  for (int it = 0; it < 200 && cb < want; it++, w *= 2) cb = tri_count(&t, b += w), (*counts)++;
  const double res = 16.0 * DBL_EPSILON * t.norm, tol = fmax(tol_eV, 4.0 * DBL_EPSILON * t.norm);
  slice *sl = NULL;
  size_t ns = ca <= first && cb >= want ? isolate(&t, a, b, ca, cb, res, &sl, counts) : 0;
  double *refined = ns != (size_t)-1 ? malloc((ns ? ns : 1) * sizeof *refined) : NULL;
  unsigned char *inside = refined ? calloc(ns ? ns : 1, 1) : NULL;
  if (!inside) {
    free(sl);
    free(refined);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (eigenvalues)");
  }
  for (size_t q = 0; q < ns; q++) inside[q] = sl[q].cb > first && sl[q].ca < want;
  refine_slices(&t, sl, ns, inside, tol, refined, counts);
  for (size_t q = 0; q < ns; q++) {
    slice *c = &sl[q];
    if (!inside[q]) continue;
    double v;
    if (c->cb - c->ca == 1) v = refined[q];
    else narrow(&t, c, tol, counts), v = 0.5 * (c->a + c->b);
    for (size_t m = c->ca; m < c->cb; m++)
      if (m >= first && m < want) values[m - first] = v;
  }
  free(sl);
  free(refined);
  free(inside);
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
