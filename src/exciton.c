/* exciton.c — quasi-2D exciton binding (G. Bastard, E. E. Mendez, L. L. Chang, L. Esaki,
 * Phys. Rev. B 26, 1974 (1982)) and interband polarisation weights (S. L. Chuang, Physics of
 * Photonic Devices (Wiley, 2009), ch. 9).  See exciton.h for the formulas.
 *
 * Numerics.
 *  1. P(d): the weights p_i = w_i ψ_i² of the electron and of the hole (box quadrature of
 *     the grid, normalised to 1; tails holding less than EW_EXC_TAIL each side dropped) are
 *     assigned linearly (cloud-in-cell) to one uniform mesh of M <= EW_EXC_MESH_MAX nodes,
 *     step δ <= EW_EXC_STEP_NM and <= 1/20 of the narrower envelope's standard deviation
 *     where the cap allows, over the union of both supports.  The
 *     distribution of ze − zh is then the discrete correlation P_m = Σ_{|k−l| = m} pe_k ph_l,
 *     O(M²) once per line, independent of λ and of the grid size N.  The mesh moves every
 *     weight by less than δ and keeps its mass and mean: the error of ∫P G is O((δ/λ)²).
 *  2. I(x) = ∫0^∞ t e^{−t}/sqrt(t² + x²) dt (G(d, λ) = (2/λ) I(2d/λ)) is tabulated once per
 *     workspace on a uniform mesh in s = ln x, x ∈ [EW_EXC_XMIN, EW_EXC_XMAX], with dI/ds, by
 *     composite Gauss–Legendre quadrature: for x < 1 after t = x sinh u (I = ∫ x sinh u
 *     e^{−x sinh u} du, smooth in u), for x >= 1 directly in t (the integrand's nearest
 *     singularities t = ±ix are at distance x >= 1).  Cubic Hermite interpolation in s.
 *     Outside the table: x < EW_EXC_XMIN, I = 1 − x (the next term is O(x² ln x)); x >
 *     EW_EXC_XMAX, the asymptotic series I ~ Σ_k C(−1/2, k) (2k+1)! / x^{2k+1} =
 *     1/x − 3/x³ + 45/x⁵ − 1575/x⁷ + 99225/x⁹ − 9823275/x¹¹ (expand 1/sqrt(t²+x²) in t²/x²
 *     and integrate term by term; the first omitted term is < 1e-10 relative at x = 40).
 *  3. E(λ) is scanned on a logarithmic mesh of λ from a_B/8 (where E > 0: E(λ) >= its 2D
 *     value, which is positive for λ < a_B/4) to 10⁴ a_B, then minimised by golden-section
 *     search on ln λ in the bracket around the lowest scan point.  A scan point whose lower
 *     bound ħ²/(2μλ²) − 2e²/(4πε0εr λ) (Σ P = 1, I <= 1) lies above the lowest energy so far
 *     cannot be the lowest and is not evaluated. */
#include "exciton.h"

#include <math.h>
#include <stdatomic.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "helper_thread.h"
#include "observables.h"

/* EW_EXC_NTAB and exciton_table[][2] = {I(x_k), dI/ds(x_k)}: the table of item 2 computed
 * once by ew_exciton_table_direct and printed with 17 digits (it is a pure function of the
 * constants below; test_exciton.c checks every entry against the quadrature and prints the
 * file anew with EW_PRINT_EXCITON_TABLE=1).  Building it took 15 % of a solve. */
#include "exciton_table.inc"

#define EW_EXC_TAIL 1e-10     /* probability dropped at each end of each envelope */
#ifndef EW_EXC_STEP_NM /* overridable at build time for convergence studies */
#define EW_EXC_STEP_NM 0.1    /* target step of the d mesh (binding unchanged to 1 µeV
                                 between 0.02 and 0.1 nm for GaAs wells, measured) */
#endif
#define EW_EXC_MESH_MAX 2048  /* largest d mesh (O(M²) correlation per line) */
#define EW_EXC_XMIN 1e-6      /* table range of x = 2d/λ */
#define EW_EXC_XMAX 40.0
#define EW_EXC_DS 0.05        /* table step in ln x */
#define EW_EXC_GL 10          /* Gauss–Legendre points per panel */
#define EW_EXC_SCAN 12        /* scan points in ln λ */
#define EW_EXC_SUM_MAX (1.0 + 1e-6) /* bound of the computed Σ P_m I(x_m): Σ P_m = 1 within
                                       M ulp, I <= 1 within the table's 2e-8 */

struct ew_exciton_ws {
  double gl_x[EW_EXC_GL], gl_w[EW_EXC_GL]; /* Gauss–Legendre nodes and weights on [−1, 1] */
  size_t ntab;
  double s0, ds;      /* s_k = s0 + k ds, s = ln x */
  const double (*tab)[2]; /* {I, dI/ds}[ntab]: the stored table or own */
  double (*own)[2];   /* computed when the mesh constants no longer match the stored one */
  double *lnm;        /* [EW_EXC_MESH_MAX] ln m (lnm[0] unused) */
  double *pe, *ph, *P; /* [EW_EXC_MESH_MAX] mesh weights and the correlation */
  /* the lags m >= 1 with P_m != 0, ascending (what energy sums; built once per line):
     P_m, ln m and m as a double, [EW_EXC_MESH_MAX] each, nlag of them */
  double *lagP, *lagln, *lagm;
  size_t nlag;
};

/* Gauss–Legendre nodes by Newton's method on the Legendre recurrence (textbook, e.g.
 * W. H. Press et al., Numerical Recipes, 3rd ed. (2007), §4.6). */
static void gauss_legendre(int n, double *x, double *w) {
  for (int i = 0; i < n; i++) {
    double z = cos(EW_PI * (i + 0.75) / (n + 0.5)), dp = 1.0;
    for (int it = 0; it < 100; it++) {
      double p0 = 1.0, p1 = z;
      for (int k = 2; k <= n; k++) {
        double p2 = ((2.0 * k - 1.0) * z * p1 - (k - 1.0) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      dp = n * (z * p1 - p0) / (z * z - 1.0);
      double dz = p1 / dp;
      z -= dz;
      if (fabs(dz) < 1e-16) break;
    }
    /* recompute the derivative at the converged node */
    double p0 = 1.0, p1 = z;
    for (int k = 2; k <= n; k++) {
      double p2 = ((2.0 * k - 1.0) * z * p1 - (k - 1.0) * p0) / k;
      p0 = p1;
      p1 = p2;
    }
    dp = n * (z * p1 - p0) / (z * z - 1.0);
    x[i] = z;
    w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
  }
}

/* I(x) and dI/dx by composite Gauss–Legendre (see the header comment, item 2). */
static void direct_I(const double *glx, const double *glw, double x, double *I, double *dIdx) {
  if (x <= 0) {
    *I = 1.0;
    *dIdx = -1.0;
    return;
  }
  double si = 0.0, sd = 0.0;
  if (x < 1.0) {
    /* t = x sinh u: I = ∫ x sinh u e^{−x sinh u} du,
     * dI/dx = −∫ t e^{−t} x/(t²+x²)^{3/2} dt = −∫ sinh u e^{−x sinh u} / cosh² u du */
    double U = asinh(45.0 / x);
    int np = (int)ceil(U);
    double hp = U / np;
    for (int p = 0; p < np; p++) {
      double a = p * hp;
      for (int k = 0; k < EW_EXC_GL; k++) {
        double u = a + 0.5 * hp * (glx[k] + 1.0), wk = 0.5 * hp * glw[k];
        double sh = sinh(u), ch = cosh(u), e = exp(-x * sh);
        si += wk * x * sh * e;
        sd -= wk * sh * e / (ch * ch);
      }
    }
  } else {
    const double T = 45.0; /* t e^{−t} < 1e-17 beyond */
    int np = 45;
    double hp = T / np;
    for (int p = 0; p < np; p++) {
      double a = p * hp;
      for (int k = 0; k < EW_EXC_GL; k++) {
        double t = a + 0.5 * hp * (glx[k] + 1.0), wk = 0.5 * hp * glw[k];
        double r2 = t * t + x * x, r = sqrt(r2), e = t * exp(-t);
        si += wk * e / r;
        sd -= wk * e * x / (r2 * r);
      }
    }
  }
  *I = si;
  *dIdx = sd;
}

/* Asymptotic series of I for large x (header comment, item 2). */
static double asymptotic_I(double x) {
  static const double c[6] = {1.0, -3.0, 45.0, -1575.0, 99225.0, -9823275.0};
  double y = 1.0 / (x * x), s = 0.0;
  for (int k = 5; k >= 0; k--) s = s * y + c[k];
  return s / x;
}

/* The table's mesh: s_k = s0 + k ds, k < ntab. */
static void table_mesh(size_t *ntab, double *s0, double *ds) {
  *s0 = log(EW_EXC_XMIN);
  double s1 = log(EW_EXC_XMAX);
  *ntab = (size_t)ceil((s1 - *s0) / EW_EXC_DS) + 1;
  *ds = (s1 - *s0) / (double)(*ntab - 1);
}

/* I and dI/ds at table node k by quadrature (the table's definition). */
static void table_entry(const double *glx, const double *glw, double s0, double ds, size_t k,
                        double *I, double *dIds) {
  double x = exp(s0 + (double)k * ds), d;
  direct_I(glx, glw, x, I, &d);
  *dIds = x * d; /* dI/ds = x dI/dx */
}

size_t ew_exciton_table_size(void) {
  size_t n;
  double s0, ds;
  table_mesh(&n, &s0, &ds);
  return n;
}

void ew_exciton_table_direct(size_t k, double *I, double *dIds) {
  double glx[EW_EXC_GL], glw[EW_EXC_GL], s0, ds;
  size_t n;
  gauss_legendre(EW_EXC_GL, glx, glw);
  table_mesh(&n, &s0, &ds);
  table_entry(glx, glw, s0, ds, k, I, dIds);
}

void ew_exciton_table_stored(size_t k, double *I, double *dIds) {
  *I = k < EW_EXC_NTAB ? exciton_table[k][0] : NAN;
  *dIds = k < EW_EXC_NTAB ? exciton_table[k][1] : NAN;
}

ew_exciton_ws *ew_exciton_ws_new(void) {
  ew_exciton_ws *ws = calloc(1, sizeof *ws);
  if (!ws) return NULL;
  gauss_legendre(EW_EXC_GL, ws->gl_x, ws->gl_w);
  table_mesh(&ws->ntab, &ws->s0, &ws->ds);
  /* the stored table (exciton_table.inc, tested against the quadrature in test_exciton.c);
     computed here only when the mesh constants no longer match it */
  int stored = ws->ntab == EW_EXC_NTAB;
  if (!stored) ws->own = malloc(ws->ntab * sizeof *ws->own);
  ws->lnm = malloc(EW_EXC_MESH_MAX * sizeof *ws->lnm);
  ws->pe = malloc(EW_EXC_MESH_MAX * sizeof *ws->pe);
  ws->ph = malloc(EW_EXC_MESH_MAX * sizeof *ws->ph);
  ws->P = malloc(EW_EXC_MESH_MAX * sizeof *ws->P);
  ws->lagP = malloc(EW_EXC_MESH_MAX * sizeof *ws->lagP);
  ws->lagln = malloc(EW_EXC_MESH_MAX * sizeof *ws->lagln);
  ws->lagm = malloc(EW_EXC_MESH_MAX * sizeof *ws->lagm);
  if ((!stored && !ws->own) || !ws->lnm || !ws->pe || !ws->ph || !ws->P || !ws->lagP ||
      !ws->lagln || !ws->lagm) {
    ew_exciton_ws_free(ws);
    return NULL;
  }
  if (stored) {
    ws->tab = exciton_table;
  } else {
    for (size_t k = 0; k < ws->ntab; k++)
      table_entry(ws->gl_x, ws->gl_w, ws->s0, ws->ds, k, &ws->own[k][0], &ws->own[k][1]);
    ws->tab = (const double(*)[2])ws->own;
  }
  ws->lnm[0] = 0.0;
  for (size_t m = 1; m < EW_EXC_MESH_MAX; m++) ws->lnm[m] = log((double)m);
  return ws;
}

void ew_exciton_ws_free(ew_exciton_ws *ws) {
  if (!ws) return;
  free(ws->own);
  free(ws->lnm);
  free(ws->lagP);
  free(ws->lagln);
  free(ws->lagm);
  free(ws->pe);
  free(ws->ph);
  free(ws->P);
  free(ws);
}

/* I at x > 0 with s = ln x given (so the hot loop takes no logarithm). */
static inline double table_I(const ew_exciton_ws *ws, double s, double x) {
  double u = (s - ws->s0) / ws->ds;
  if (u < 0.0) return 1.0 - x;
  if (u >= (double)(ws->ntab - 1)) return asymptotic_I(x);
  size_t k = (size_t)u;
  double t = u - (double)k, t2 = t * t, t3 = t2 * t;
  /* cubic Hermite basis on [s_k, s_k+1] */
  double h00 = 2 * t3 - 3 * t2 + 1, h10 = t3 - 2 * t2 + t, h01 = -2 * t3 + 3 * t2,
         h11 = t3 - t2;
  double I0 = ws->tab[k][0], d0 = ws->tab[k][1], I1 = ws->tab[k + 1][0], d1 = ws->tab[k + 1][1];
  return h00 * I0 + h10 * ws->ds * d0 + h01 * I1 + h11 * ws->ds * d1;
}

double ew_exciton_coulomb_G(double d_nm, double lambda_nm) {
  double glx[EW_EXC_GL], glw[EW_EXC_GL], I, dI;
  gauss_legendre(EW_EXC_GL, glx, glw);
  direct_I(glx, glw, 2.0 * fabs(d_nm) / lambda_nm, &I, &dI);
  return 2.0 / lambda_nm * I;
}

double ew_exciton_coulomb_G_ws(const ew_exciton_ws *ws, double d_nm, double lambda_nm) {
  double x = 2.0 * fabs(d_nm) / lambda_nm;
  if (x <= 0) return 2.0 / lambda_nm;
  return 2.0 / lambda_nm * table_I(ws, log(x), x);
}

/* First and last node of an envelope after dropping EW_EXC_TAIL of its probability
 * (w_i ψ_i² / nrm) at each end. */
static void support(const ew_grid *g, const double *psi, double nrm, size_t *a, size_t *b) {
  size_t i = 0, n = g->n;
  double c = 0.0;
  while (i + 1 < n && c + g->w[i] * psi[i] * psi[i] / nrm < EW_EXC_TAIL) {
    c += g->w[i] * psi[i] * psi[i] / nrm;
    i++;
  }
  *a = i;
  c = 0.0;
  i = n - 1;
  while (i > *a && c + g->w[i] * psi[i] * psi[i] / nrm < EW_EXC_TAIL) {
    c += g->w[i] * psi[i] * psi[i] / nrm;
    i--;
  }
  *b = i;
}

/* E(λ) in eV for the correlation P on a mesh of step delta (header of this file, item 3).
 * K = ħ²/(2μ) (eV nm²), C = e²/(4πε0εr) (eV nm).  The terms and their order are those of
 * Σ_m P_m table_I(ln m + ln a, m a) over the lags with P_m != 0; u = (ln m + ln a − s0)/ds
 * grows with m (every rounding is monotonic), so the lags come in three runs: below the
 * table (I = 1 − x), in it, and above it (asymptotic series), each without the others' tests. */
static double energy(const ew_exciton_ws *ws, double delta, double K, double C, double lam) {
  double a = 2.0 * delta / lam, la = log(a);
  double sum = ws->P[0]; /* I(0) = 1 */
  const double *lp = ws->lagP, *ll = ws->lagln, *lm = ws->lagm;
  const double(*tab)[2] = ws->tab;
  const double s0 = ws->s0, ds = ws->ds, umax = (double)(ws->ntab - 1);
  size_t n = ws->nlag, i = 0;
  for (; i < n; i++) {
    double s = ll[i] + la, u = (s - s0) / ds;
    if (!(u < 0.0)) break;
    sum += lp[i] * (1.0 - lm[i] * a);
  }
  for (; i < n; i++) {
    double s = ll[i] + la, u = (s - s0) / ds;
    if (u >= umax) break;
    /* table_I's cubic Hermite interpolation, operation for operation (k >= 0 here) */
    ptrdiff_t k = (ptrdiff_t)u;
    double t = u - (double)k, t2 = t * t, t3 = t2 * t;
    double h00 = 2 * t3 - 3 * t2 + 1, h10 = t3 - 2 * t2 + t, h01 = -2 * t3 + 3 * t2,
           h11 = t3 - t2;
    double I0 = tab[k][0], d0 = tab[k][1], I1 = tab[k + 1][0], d1 = tab[k + 1][1];
    sum += lp[i] * (h00 * I0 + h10 * ds * d0 + h01 * I1 + h11 * ds * d1);
  }
  for (; i < n; i++) sum += lp[i] * asymptotic_I(lm[i] * a);
  return K / (lam * lam) - C * (2.0 / lam) * sum;
}

/* One envelope's probability on the grid: its norm Σ w ψ² and its support [a, b]. */
typedef struct {
  const double *psi;
  double nrm;
  size_t a, b;
} envelope;

/* Mesh step: EW_EXC_STEP_NM, or finer to resolve the narrower envelope (1/20 of its standard
 * deviation): G has a kink at d = 0, so a distribution narrower than the mesh would be
 * broadened by it.  Moments about z0: no cancellation far from z = 0. */
static double mesh_step(const ew_grid *g, const envelope env[2], double z0) {
  double step = EW_EXC_STEP_NM;
  for (int which = 0; which < 2; which++) {
    const envelope *e = &env[which];
    double m1 = 0.0, m2 = 0.0;
    for (size_t i = e->a; i <= e->b; i++) {
      double p = g->w[i] * e->psi[i] * e->psi[i] / e->nrm;
      m1 += p * (g->z[i] - z0);
      m2 += p * (g->z[i] - z0) * (g->z[i] - z0);
    }
    double sd = sqrt(fmax(m2 - m1 * m1, 0.0));
    if (sd > 0 && sd / 20.0 < step) step = sd / 20.0;
  }
  return step;
}

/* Cloud-in-cell assignment of an envelope's weights to the M mesh nodes z0 + k delta. */
static void assign(const ew_grid *g, const envelope *e, size_t M, double z0, double delta,
                   double *q) {
  memset(q, 0, M * sizeof *q);
  for (size_t i = e->a; i <= e->b; i++) {
    double p = g->w[i] * e->psi[i] * e->psi[i] / e->nrm;
    if (M == 1) {
      q[0] += p;
      continue;
    }
    double u = (g->z[i] - z0) / delta;
    if (u < 0) u = 0;
    size_t k = (size_t)u;
    if (k >= M - 1) {
      q[M - 1] += p;
      continue;
    }
    double f = u - (double)k;
    q[k] += (1.0 - f) * p;
    q[k + 1] += f * p;
  }
}

/* first and last non-zero entry of q[0 … M−1] (*a = M when all are zero) */
static void nonzero_range(const double *q, size_t M, size_t *a, size_t *b) {
  *a = M;
  *b = 0;
  for (size_t k = 0; k < M; k++)
    if (q[k] != 0.0) {
      if (*a == M) *a = k;
      *b = k;
    }
}

/* acc + Σ_{k=a..b} pe_k ph_{k+off}, k ascending (nothing when b < a) */
static inline double dot_from(const double *pe, const double *ph, ptrdiff_t off, ptrdiff_t a,
                              ptrdiff_t b, double acc) {
  for (ptrdiff_t k = a; k <= b; k++) acc += pe[k] * ph[k + off];
  return acc;
}

#define CORR_BLOCK 8 /* lags computed together: each pe_k loaded once for all of them
                        (block_run is written out for eight) */

/* r[i] += p q[i] for the CORR_BLOCK accumulators r, k = c0 … c1 ascending with p = pe[k] and
 * q = ph + k + off.  Every lane keeps its own sum in its own order, so two lanes per vector
 * register (GCC/Clang vector extension; the same IEEE products and sums as the scalar
 * loop) change no bit.  Written out rather than looped so that the sums stay in registers;
 * the explicit vector loads because scalar code lets the compiler carry q[i + 1] over to
 * the next k as q[i], which costs more shuffles than the loads it saves. */
#if defined(__GNUC__) && !defined(EW_EXC_SCALAR)
typedef double ew_v2d __attribute__((vector_size(2 * sizeof(double))));
static inline ew_v2d load2(const double *q) {
  ew_v2d v;
  memcpy(&v, q, sizeof v);
  return v;
}
static inline void block_run(const double *pe, const double *ph, ptrdiff_t off, ptrdiff_t c0,
                             ptrdiff_t c1, double r[CORR_BLOCK]) {
  ew_v2d s0 = load2(r), s1 = load2(r + 2), s2 = load2(r + 4), s3 = load2(r + 6);
  ptrdiff_t k = c0;
  for (; k + 1 <= c1; k += 2) { /* two k per pass: fewer loop and register-copy overheads */
    ew_v2d p = {pe[k], pe[k]}, p1 = {pe[k + 1], pe[k + 1]};
    const double *q = ph + (k + off);
    s0 += p * load2(q), s1 += p * load2(q + 2), s2 += p * load2(q + 4), s3 += p * load2(q + 6);
    s0 += p1 * load2(q + 1), s1 += p1 * load2(q + 3), s2 += p1 * load2(q + 5),
        s3 += p1 * load2(q + 7);
  }
  for (; k <= c1; k++) {
    ew_v2d p = {pe[k], pe[k]};
    const double *q = ph + (k + off);
    s0 += p * load2(q), s1 += p * load2(q + 2), s2 += p * load2(q + 4), s3 += p * load2(q + 6);
  }
  memcpy(r, &s0, sizeof s0), memcpy(r + 2, &s1, sizeof s1), memcpy(r + 4, &s2, sizeof s2),
      memcpy(r + 6, &s3, sizeof s3);
}
#else
static inline void block_run(const double *pe, const double *ph, ptrdiff_t off, ptrdiff_t c0,
                             ptrdiff_t c1, double r[CORR_BLOCK]) {
  double s0 = r[0], s1 = r[1], s2 = r[2], s3 = r[3], s4 = r[4], s5 = r[5], s6 = r[6],
         s7 = r[7];
  for (ptrdiff_t k = c0; k <= c1; k++) {
    double p = pe[k];
    const double *q = ph + (k + off);
    s0 += p * q[0], s1 += p * q[1], s2 += p * q[2], s3 += p * q[3];
    s4 += p * q[4], s5 += p * q[5], s6 += p * q[6], s7 += p * q[7];
  }
  r[0] = s0, r[1] = s1, r[2] = s2, r[3] = s3, r[4] = s4, r[5] = s5, r[6] = s6, r[7] = s7;
}
#endif

/* P[m0 .. m0+CORR_BLOCK−1] (m0 > 0, all < M): for each lag the two sums of correlate in its
 * order (k ascending over each range, the l < k sum first), the ranges' common part in one
 * loop */
static void correlate_block(const double *pe, const double *ph, ptrdiff_t ka, ptrdiff_t kb,
                            ptrdiff_t la, ptrdiff_t lb, ptrdiff_t m0, double *P) {
  enum { B = CORR_BLOCK };
  double acc[B], r[B];
  ptrdiff_t k0[B], k1[B], j0[B], j1[B];
  for (int j = 0; j < B; j++) {
    ptrdiff_t m = m0 + j;
    acc[j] = 0.0;
    k0[j] = ka > la + m ? ka : la + m, k1[j] = kb < lb + m ? kb : lb + m; /* l = k − m */
    j0[j] = ka > la - m ? ka : la - m, j1[j] = kb < lb - m ? kb : lb - m; /* l = k + m */
  }
  /* l = k − m: k0, k1 grow with m; common part [k0 of the last lag, k1 of the first]; there
     l = k − m0 − j, so lag m0 + j is lane B−1−j of q = ph + k − m0 − (B−1) */
  ptrdiff_t c0 = k0[B - 1], c1 = k1[0];
  if (c0 <= c1) {
    for (int j = 0; j < B; j++) acc[j] = dot_from(pe, ph, -(m0 + j), k0[j], c0 - 1, acc[j]);
    for (int j = 0; j < B; j++) r[B - 1 - j] = acc[j];
    block_run(pe, ph, -(m0 + B - 1), c0, c1, r);
    for (int j = 0; j < B; j++) acc[j] = r[B - 1 - j];
    for (int j = 0; j < B; j++) acc[j] = dot_from(pe, ph, -(m0 + j), c1 + 1, k1[j], acc[j]);
  } else
    for (int j = 0; j < B; j++) acc[j] = dot_from(pe, ph, -(m0 + j), k0[j], k1[j], acc[j]);
  /* l = k + m: j0, j1 fall with m; common part [j0 of the first lag, j1 of the last]; there
     lag m0 + j is lane j of q = ph + k + m0 */
  c0 = j0[0], c1 = j1[B - 1];
  if (c0 <= c1) {
    for (int j = 0; j < B; j++) acc[j] = dot_from(pe, ph, m0 + j, j0[j], c0 - 1, acc[j]);
    block_run(pe, ph, m0, c0, c1, acc);
    for (int j = 0; j < B; j++) acc[j] = dot_from(pe, ph, m0 + j, c1 + 1, j1[j], acc[j]);
  } else
    for (int j = 0; j < B; j++) acc[j] = dot_from(pe, ph, m0 + j, j0[j], j1[j], acc[j]);
  for (int j = 0; j < B; j++) P[m0 + j] = acc[j];
}

/* P_m = Σ_k pe_k ph_{k−m} + Σ_k pe_k ph_{k+m} (m > 0) over the overlap of the supports */
static void correlate_sums(const double *pe, const double *ph, size_t M, size_t ka, size_t kb,
                           size_t la, size_t lb, double *P) {
  ptrdiff_t a = (ptrdiff_t)ka, b = (ptrdiff_t)kb, c = (ptrdiff_t)la, d = (ptrdiff_t)lb;
  P[0] = dot_from(pe, ph, 0, a > c ? a : c, b < d ? b : d, 0.0);
  ptrdiff_t m = 1, mm = (ptrdiff_t)M;
  for (; m + CORR_BLOCK <= mm; m += CORR_BLOCK) correlate_block(pe, ph, a, b, c, d, m, P);
  for (; m < mm; m++) {
    double acc = dot_from(pe, ph, -m, a > c + m ? a : c + m, b < d + m ? b : d + m, 0.0);
    P[m] = dot_from(pe, ph, m, a > c - m ? a : c - m, b < d - m ? b : d - m, acc);
  }
}

/* The correlation P_m = Σ_{|k−l| = m} pe_k ph_l in ws->P, normalised; 0 when empty. */
static int correlate(ew_exciton_ws *ws, size_t M) {
  const double *pe = ws->pe, *ph = ws->ph;
  double *P = ws->P;
  memset(P, 0, M * sizeof *P);
  size_t ka, kb, la, lb;
  nonzero_range(pe, M, &ka, &kb);
  nonzero_range(ph, M, &la, &lb);
  /* one dot product per m over the overlap of the two supports, kept in registers (the
     scatter P[|k−l|] += … stored on every step), CORR_BLOCK lags at a time */
  if (ka < M && la < M) correlate_sums(pe, ph, M, ka, kb, la, lb, P);
  double tot = 0.0;
  for (size_t m = 0; m < M; m++) tot += P[m];
  if (!(tot > 0)) return 0;
  for (size_t m = 0; m < M; m++) P[m] /= tot;
  size_t n = 0;
  for (size_t m = 1; m < M; m++)
    if (P[m] != 0.0) ws->lagP[n] = P[m], ws->lagln[n] = ws->lnm[m], ws->lagm[n++] = (double)m;
  ws->nlag = n;
  return 1;
}

/* The distribution of d = |ze − zh| on a mesh of *M nodes of step *delta (header of this
 * file, item 1) in ws->P. */
static ew_status distance_distribution(ew_exciton_ws *ws, const ew_grid *g, const double *psi_e,
                                       const double *psi_h, size_t *M, double *delta,
                                       ew_error *err) {
  envelope env[2] = {{psi_e, 0.0, 0, 0}, {psi_h, 0.0, 0, 0}};
  /* weights p_i = w_i ψ_i² / Σ w ψ², recomputed on the fly (no node-sized array) */
  for (size_t i = 0; i < g->n; i++) {
    env[0].nrm += g->w[i] * psi_e[i] * psi_e[i];
    env[1].nrm += g->w[i] * psi_h[i] * psi_h[i];
  }
  for (int k = 0; k < 2; k++)
    if (!(env[k].nrm > 0) || !isfinite(env[k].nrm))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "exciton: wavefunction of zero norm");
  /* supports: drop EW_EXC_TAIL of probability at each end of each envelope */
  for (int k = 0; k < 2; k++) support(g, env[k].psi, env[k].nrm, &env[k].a, &env[k].b);
  double z0 = fmin(g->z[env[0].a], g->z[env[1].a]), z1 = fmax(g->z[env[0].b], g->z[env[1].b]);
  double span = z1 - z0, step = mesh_step(g, env, z0);
  *M = 1;
  *delta = 1.0; /* any positive value when the mesh is one node */
  if (span > 0) {
    double want = ceil(span / step) + 1.0;
    *M = want > (double)EW_EXC_MESH_MAX ? EW_EXC_MESH_MAX : (size_t)want;
    if (*M < 2) *M = 2;
    *delta = span / (double)(*M - 1);
  }
  assign(g, &env[0], *M, z0, *delta, ws->pe);
  assign(g, &env[1], *M, z0, *delta, ws->ph);
  if (!correlate(ws, *M))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "exciton: empty distribution");
  return EW_OK;
}

/* min over λ of E(λ) (header of this file, item 3): scan on ln λ from lam2d/4 to lam2d·2e4,
 * then golden-section search around the lowest scan point; *lbest = ln λ at the minimum. */
static double minimise(const ew_exciton_ws *ws, double delta, double K, double C,
                       double *lbest) {
  double lam2d = K / C; /* = a_B/2, the strict-2D optimum */
  double l0 = log(lam2d / 4.0), l1 = log(lam2d * 2e4);
  double hs = (l1 - l0) / (EW_EXC_SCAN - 1), Es[EW_EXC_SCAN];
  int kmin = 0;
  for (int k = 0; k < EW_EXC_SCAN; k++) {
    double lam = exp(l0 + k * hs);
    /* energy returns fl(A − fl(B·sum)) with these A, B and a sum of P_m I(x_m) <= Σ P_m = 1
       (I <= 1, Σ P_m = 1 within rounding): every rounding being monotonic, it is at least
       A − B·EW_EXC_SUM_MAX.  When that already exceeds the lowest energy so far, λ cannot
       become the lowest scan point and is not evaluated (a point the scan never uses) */
    double A = K / (lam * lam), B = C * (2.0 / lam), lower = A - B * EW_EXC_SUM_MAX;
    if (k > 0 && lower > Es[kmin]) {
      Es[k] = lower;
      continue;
    }
    Es[k] = energy(ws, delta, K, C, lam);
    if (Es[k] < Es[kmin]) kmin = k;
  }
  /* Brent's minimisation on ln λ in [kmin − 1, kmin + 1] (R. P. Brent, Algorithms for
   * Minimization without Derivatives (Prentice-Hall, 1973), ch. 5; the form of W. H. Press et
   * al., Numerical Recipes, 3rd ed. (2007), §10.3): parabolic steps where E is smooth, golden
   * sections otherwise; the same 1e-6 bracket in ln λ as a pure golden-section search, in
   * about a third of the evaluations */
  double a = l0 + (kmin > 0 ? kmin - 1 : 0) * hs;
  double b = l0 + (kmin < EW_EXC_SCAN - 1 ? kmin + 1 : EW_EXC_SCAN - 1) * hs;
  const double cgold = 0.5 * (3.0 - sqrt(5.0)), tol = 1e-6;
  double x = l0 + kmin * hs, w = x, v = x, fx = Es[kmin], fw = fx, fv = fx, d = 0.0, e = 0.0;
  for (int it = 0; it < 100; it++) {
    double xm = 0.5 * (a + b), tol1 = 0.5 * tol, tol2 = 2.0 * tol1;
    if (fabs(x - xm) <= tol2 - 0.5 * (b - a)) break;
    int golden = 1;
    if (fabs(e) > tol1) { /* try a parabola through x, w, v */
      double r = (x - w) * (fx - fv), q = (x - v) * (fx - fw), p = (x - v) * q - (x - w) * r;
      q = 2.0 * (q - r);
      if (q > 0.0) p = -p;
      q = fabs(q);
      if (fabs(p) < fabs(0.5 * q * e) && p > q * (a - x) && p < q * (b - x)) {
        e = d;
        d = p / q;
        double u = x + d;
        if (u - a < tol2 || b - u < tol2) d = xm >= x ? tol1 : -tol1;
        golden = 0;
      }
    }
    if (golden) {
      e = x >= xm ? a - x : b - x;
      d = cgold * e;
    }
    double u = fabs(d) >= tol1 ? x + d : x + (d >= 0 ? tol1 : -tol1);
    double fu = energy(ws, delta, K, C, exp(u));
    if (fu <= fx) {
      if (u >= x) a = x;
      else b = x;
      v = w, fv = fw, w = x, fw = fx, x = u, fx = fu;
    } else {
      if (u < x) a = u;
      else b = u;
      if (fu <= fw || w == x) {
        v = w, fv = fw, w = u, fw = fu;
      } else if (fu <= fv || v == x || v == w) {
        v = u, fv = fu;
      }
    }
  }
  *lbest = x;
  return fx;
}

ew_status ew_exciton_binding_ws(ew_exciton_ws *ws, const ew_grid *g, const double *psi_e,
                                const double *psi_h, double mu_par, double eps_r,
                                double *binding_eV, double *radius_nm, ew_error *err) {
  if (!(mu_par > 0) || !isfinite(mu_par))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "exciton: in-plane reduced mass %g m0 must be positive", mu_par);
  if (!(eps_r > 0) || !isfinite(eps_r))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "exciton: relative permittivity %g must be positive", eps_r);
  if (!g || g->n == 0 || !psi_e || !psi_h)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "exciton: no grid or no wavefunction");
  size_t M = 1;
  double delta = 1.0;
  ew_status rc = distance_distribution(ws, g, psi_e, psi_h, &M, &delta, err);
  if (rc != EW_OK) return rc;
  /* K = ħ²/(2μ) = (ħ²/2m0)/μ (eV nm²); C = e²/(4πε0 εr) (eV nm) from CODATA e and ε0:
   * e²/(4πε0) in J m divided by e gives eV m, ×1e9 for eV nm (1.43996 eV nm). */
  double K = EW_HB2M0_EVNM2 / mu_par;
  double C = EW_E_C / (4.0 * EW_PI * EW_EPS0_FM) * 1e9 / eps_r;
  double lbest, Ebest = minimise(ws, delta, K, C, &lbest);
  if (!(Ebest < 0) || !isfinite(Ebest))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                   "exciton: variational energy did not go below zero (%g eV)", Ebest);
  *binding_eV = -Ebest;
  if (radius_nm) *radius_nm = exp(lbest);
  return EW_OK;
}

ew_status ew_exciton_binding(const ew_grid *g, const double *psi_e, const double *psi_h,
                             double mu_par, double eps_r, double *binding_eV, double *radius_nm,
                             ew_error *err) {
  ew_exciton_ws *ws = ew_exciton_ws_new();
  if (!ws) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (exciton workspace)");
  ew_status rc =
      ew_exciton_binding_ws(ws, g, psi_e, psi_h, mu_par, eps_r, binding_eV, radius_nm, err);
  ew_exciton_ws_free(ws);
  return rc;
}

/* Chuang (2009), ch. 9 (from memory): at k∥ = 0, |ê·p_cv|² / |P|² for the heavy hole
 * |3/2, ±3/2⟩ = (X ± iY)/√2: x, y: 1/2, z: 0; for the light hole |3/2, ±1/2⟩ =
 * (X ± iY)/√6 ∓ … + √(2/3) Z: x, y: 1/6, z: 2/3. */
void ew_interband_polarisation(ew_band hole_band, double overlap, double *te, double *tm) {
  double t = 0.0, m = 0.0;
  if (hole_band == EW_BAND_HH) t = 0.5, m = 0.0;
  else if (hole_band == EW_BAND_LH) t = 1.0 / 6.0, m = 2.0 / 3.0;
  if (te) *te = t * overlap;
  if (tm) *tm = m * overlap;
}

ew_status ew_line_exciton_params(const ew_result *r, const ew_line *ln, double *mu_par,
                                 double *eps_r, ew_error *err) {
  if (!r || !ln || ln->kind != EW_LINE_INTERBAND || ln->upper >= r->n_states ||
      ln->lower >= r->n_states)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "exciton: not an interband line of this result");
  const ew_state *se = &r->states[ln->upper], *sh = &r->states[ln->lower];
  const ew_layer *ly = &r->stack->layers[se->layer];
  /* the subbands' own in-plane masses (Kane electrons heavier with confinement, barrier
     penetration weighted in); the layer's band-edge masses if a result lacks them */
  double me = se->inplane_mass > 0 ? se->inplane_mass : ly->bands.me;
  double mh = sh->inplane_mass > 0 ? sh->inplane_mass
              : sh->band == EW_BAND_HH ? ly->bands.mhh_par : ly->bands.mlh_par;
  if (!(me > 0) || !(mh > 0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "exciton: layer '%s' has a non-positive in-plane mass (me %g, m%s,par %g)",
                   ly->name, me, ew_band_name(sh->band), mh);
  *mu_par = 1.0 / (1.0 / me + 1.0 / mh);
  *eps_r = ly->bands.eps_r > 0 && isfinite(ly->bands.eps_r) ? ly->bands.eps_r : 0.0;
  return EW_OK;
}

/* The interband lines of a result as a queue that the threads of ew_result_add_excitons draw
 * from; each line's outcome is kept, so that the first failure in line order is reported. */
typedef struct {
  ew_result *r;
  atomic_size_t next;
  ew_status *rc;  /* [n_lines] */
  ew_error *err;  /* [n_lines] */
} line_queue;

/* One line's exciton: its binding, PL peak and polarisation strengths. */
static ew_status line_exciton(ew_result *r, ew_line *ln, ew_exciton_ws **ws, ew_error *err) {
  size_t n = r->grid->n;
  double mu, eps, bind = 0.0, rad = 0.0;
  ew_status rc = ew_line_exciton_params(r, ln, &mu, &eps, err);
  if (rc != EW_OK) return rc;
  ew_interband_polarisation(r->states[ln->lower].band, ln->overlap, &ln->te_strength,
                            &ln->tm_strength);
  if (eps > 0) {
    if (!*ws && !(*ws = ew_exciton_ws_new()))
      return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (exciton workspace)");
    rc = ew_exciton_binding_ws(*ws, r->grid, r->psi + ln->upper * n, r->psi + ln->lower * n,
                               mu, eps, &bind, &rad, err);
    if (rc != EW_OK) return rc;
  }
  ln->exciton_binding_eV = bind;
  ln->pl_peak_eV = ln->energy_eV - bind;
  return EW_OK;
}

/* Lines off the queue until it is empty, with this thread's own workspace. */
static void *drain_lines(void *arg) {
  line_queue *q = arg;
  ew_exciton_ws *ws = NULL;
  for (size_t j; (j = atomic_fetch_add(&q->next, 1)) < q->r->n_lines;) {
    ew_line *ln = &q->r->lines[j];
    q->rc[j] = ln->kind == EW_LINE_INTERBAND ? line_exciton(q->r, ln, &ws, &q->err[j]) : EW_OK;
  }
  ew_exciton_ws_free(ws);
  return NULL;
}

ew_status ew_result_add_excitons(ew_result *r, ew_error *err) {
  size_t nl = r->n_lines, ni = 0;
  for (size_t j = 0; j < nl; j++) ni += r->lines[j].kind == EW_LINE_INTERBAND;
  if (!ni) return EW_OK;
  line_queue q = {r, 0, malloc(nl * sizeof *q.rc), malloc(nl * sizeof *q.err)};
  if (!q.rc || !q.err) {
    free(q.rc);
    free(q.err);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (exciton lines)");
  }
  atomic_init(&q.next, 0);
  /* lines are independent (each thread its own workspace: the same bits on any thread) */
  ew_helper h = {0};
  if (ew_helper_count((int)(ni < 8 ? ni : 8)) > 0) ew_helper_start(&h, drain_lines, &q);
  drain_lines(&q);
  ew_helper_join(&h);
  ew_status rc = EW_OK;
  for (size_t j = 0; j < nl && rc == EW_OK; j++)
    if ((rc = q.rc[j]) != EW_OK && err) *err = q.err[j];
  free(q.rc);
  free(q.err);
  return rc;
}
