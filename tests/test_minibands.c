/* test_minibands.c — the minibands of an infinite superlattice (miniband.c, api_minibands.c)
 * against outside references:
 *  - the Kronig–Penney relation with BenDaniel–Duke matching, solved here by bisection
 *    (every miniband of e, hh, lh at every q; bottom, top, width; the mass at the bottom);
 *  - LAPACK zheev on the dense periodic Hermitian matrix (the certified count at many shifts,
 *    the eigenvalues at q = 0, an intermediate q and π/d);
 *  - a finite stack of N periods solved by ew_solve: its N levels lie in the miniband;
 *  - the JSON and CSV read back by independent parsers (roundtrip.h), every field.
 *
 * Kronig–Penney with BenDaniel–Duke matching (G. Bastard, Wave Mechanics Applied to
 * Semiconductor Heterostructures (Les Éditions de Physique, 1988), ch. III; G. Bastard,
 * Phys. Rev. B 24, 5693 (1981)).  Well a (mass m_w, V = 0), barrier b (m_b, V0), E < V0:
 * ψ = A e^{ikz} + B e^{−ikz} in the well, C e^{κz} + D e^{−κz} in the barrier,
 * k = √(2 m_w E)/ħ, κ = √(2 m_b (V0 − E))/ħ.  ψ and ψ'/m continuous at both interfaces and
 * ψ(z + d) = e^{iqd} ψ(z) give, eliminating A … D (the transfer matrix over one period has
 * unit determinant, so its half trace is cos qd):
 *   cos qd = cos(ka) cosh(κb) + ½ (ξ − 1/ξ) sin(ka) sinh(κb),   ξ = (κ/m_b)/(k/m_w).
 * The sign of the second term is "+": for V0 = 0 and m_b = m_w (κ = ik, ξ = i) the right
 * side becomes cos ka cos kb − sin ka sin kb = cos k(a + b), the free particle, as it must
 * (with "−" it would be cos k(a − b)).
 * Near a miniband bottom at q0 (0 or π/d), cos qd ≈ cos q0d (1 − (q − q0)²d²/2) and
 * F(E) ≈ F(E0) + F'(E0)(E − E0) give E − E0 = −cos(q0d) d² (q − q0)² / (2 F'(E0)), so with
 * K = ħ²/2m0:  m* (in m0) = −2 K F'(E0) cos(q0 d) / d²  (F' by a central difference of F).
 *
 * Grid error.  The finite-difference pencil (box integration, interfaces on nodes, exact
 * cell mass integrals) is second order in the step h: E_h − E = c h² + O(h⁴), so
 * (E_2h − E_h)/3 estimates the error of E_h (Richardson).  Tolerances are |E_2h − E_h|
 * (three times that estimate) plus 1e-9 eV for the certified eigenvalue bound; measured on
 * these periods at h = 0.025 nm: errors up to ~1e-5 eV for e, ~2e-6 eV for holes. */
#include <complex.h>
#include <lapacke.h>
#include <math.h>

#include "testutil.h"

#include "constants.h"
#include "miniband.h"
#include "roundtrip.h"
#include "xy_chart.h"

/* ---- the Kronig–Penney reference ---------------------------------------------------------- */
typedef struct {
  double a, b, mw, mb, V0; /* nm, nm, m0, m0, eV */
} kp_period;

static double kp_F(const kp_period *p, double E) {
  const double K = EW_HB2M0_EVNM2; /* ħ²/2m0, CODATA 2018 (constants.h) */
  double k = sqrt(p->mw * E / K);
  if (E < p->V0) {
    double kap = sqrt(p->mb * (p->V0 - E) / K), xi = (kap / p->mb) / (k / p->mw);
    return cos(k * p->a) * cosh(kap * p->b) + 0.5 * (xi - 1.0 / xi) * sin(k * p->a) * sinh(kap * p->b);
  }
  /* above the barrier κ = i k_b: cosh → cos, ξ = iη, ½(ξ − 1/ξ) sinh κb → −½(η + 1/η) sin k_b b */
  double kb = sqrt(p->mb * (E - p->V0) / K), eta = (kb / p->mb) / (k / p->mw);
  if (kb == 0.0) /* κ → 0: ξ sinh κb → 0, sinh(κb)/ξ → m_b k b/m_w */
    return cos(k * p->a) - 0.5 * (p->mb * k * p->b / p->mw) * sin(k * p->a);
  return cos(k * p->a) * cos(kb * p->b) - 0.5 * (eta + 1.0 / eta) * sin(k * p->a) * sin(kb * p->b);
}

#define KP_SCAN 40000
/* Root n (0-based, ascending) of F(E) = cos qd in (0, 3 V0), by a scan for sign changes and
 * bisection to rounding; NAN when there are fewer roots. */
static double kp_root(const kp_period *p, double qd, int n) {
  double c = cos(qd), lo = 1e-12 * p->V0, flo = kp_F(p, lo) - c;
  int seen = 0;
  for (int s = 1; s <= KP_SCAN; s++) {
    double hi = 3.0 * p->V0 * ((double)s / KP_SCAN) * (1.0 - 1e-9), fhi = kp_F(p, hi) - c;
    if ((flo > 0) != (fhi > 0) && seen++ == n) {
      for (int it = 0; it < 200 && hi - lo > 1e-15 * hi; it++) {
        double m = 0.5 * (lo + hi), fm = kp_F(p, m) - c;
        if ((fm > 0) == (flo > 0)) lo = m, flo = fm;
        else hi = m;
      }
      return 0.5 * (lo + hi);
    }
    lo = hi, flo = fhi;
  }
  return NAN;
}

/* Minibands whose bottom lies below V0: entries into |F| <= 1 while E rises from 0
 * (F(0+) > 1: forbidden at the well's edge). */
static int kp_band_count(const kp_period *p) {
  int count = 0, allowed = 0;
  for (int s = 1; s < KP_SCAN; s++) {
    int a = fabs(kp_F(p, p->V0 * (double)s / KP_SCAN)) <= 1.0;
    count += a && !allowed;
    allowed = a;
  }
  return count;
}

static double kp_mass(const kp_period *p, double E0, double q0d) {
  double dE = 1e-7, d = p->a + p->b;
  double Fp = (kp_F(p, E0 + dE) - kp_F(p, E0 - dE)) / (2 * dE);
  return -2.0 * EW_HB2M0_EVNM2 * Fp * cos(q0d) / (d * d);
}

/* ---- the test period ------------------------------------------------------------------------ */
/* Invented parameters: a 5 nm well between two 1 nm barrier halves (b = 2 nm), different
 * masses in well and barrier so that the BenDaniel–Duke matching matters. */
static const double WELL = 5.0, BARRIER = 2.0;
static const tu_layer period_layers[3] = {
    {1.0, 0.30, -0.15, 0.092, 0.45, 0.11},
    {5.0, 0.00, 0.00, 0.067, 0.38, 0.09},
    {1.0, 0.30, -0.15, 0.092, 0.45, 0.11},
};

static kp_period kp_of(ew_band b) {
  kp_period p = {WELL, BARRIER, 0, 0, 0};
  if (b == EW_BAND_E) p.mw = 0.067, p.mb = 0.092, p.V0 = 0.30;
  if (b == EW_BAND_HH) p.mw = 0.38, p.mb = 0.45, p.V0 = 0.15;
  if (b == EW_BAND_LH) p.mw = 0.09, p.mb = 0.11, p.V0 = 0.15;
  return p;
}

static ew_minibands *minibands_at(const ew_stack *st, size_t points, double step) {
  ew_minibands *mb = NULL;
  ew_error err;
  assert_int_equal(ew_minibands_create(&mb, &err), EW_OK);
  if (ew_minibands_compute(mb, st, points, step, &err) != EW_OK) {
    print_error("compute: %s\n", err.message);
    fail();
  }
  return mb;
}

/* positive-mass energy of miniband j at point i (electrons E, holes −E: the well at 0) */
static double lam(const ew_minibands *mb, size_t j, size_t i) {
  double s = mb->band[j] == EW_BAND_E ? 1.0 : -1.0;
  return s * ew_minibands_energy_eV(mb, j, i);
}

static void kronig_penney(void **state) {
  (void)state;
  ew_stack *st = tu_stack(3, period_layers);
  const size_t P = 9;
  ew_minibands *fine = minibands_at(st, P, 0.025), *coarse = minibands_at(st, P, 0.05);
  assert_int_equal(ew_minibands_count(fine), ew_minibands_count(coarse));
  TU_NEAR(ew_minibands_period_nm(fine), WELL + BARRIER, 1e-12, "period = a + b");
  double worst[EW_BAND_COUNT] = {0};
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    kp_period kp = kp_of((ew_band)b);
    /* the count: minibands with bottoms below the barrier (Kronig–Penney) */
    assert_int_equal((int)fine->per_band[b], kp_band_count(&kp));
    assert_true(fine->per_band[b] >= 1);
  }
  for (size_t j = 0; j < ew_minibands_count(fine); j++) {
    ew_band band = fine->band[j];
    kp_period kp = kp_of(band);
    int n = ew_minibands_index(fine, j) - 1;
    double d = WELL + BARRIER;
    for (size_t i = 0; i < P; i++) {
      double qd = EW_PI * (double)i / (double)(P - 1);
      TU_NEAR(ew_minibands_q_inv_nm(fine, i), qd / d, 1e-14, "q grid from 0 to π/d");
      double want = kp_root(&kp, qd, n), got = lam(fine, j, i);
      double tol = fabs(lam(coarse, j, i) - got) + 1e-9; /* Richardson level, see above */
      TU_NEAR(got, want, tol, "Kronig–Penney (BenDaniel–Duke), Bastard 1988");
      worst[band] = fmax(worst[band], fabs(got - want));
      /* the extrapolated value is far closer (O(h⁴)): the error really is the grid's */
      TU_NEAR((4 * got - lam(coarse, j, i)) / 3, want, 0.05 * tol + 1e-9, "Richardson O(h^4)");
    }
    /* bottom, top, width and mass from the band ends */
    double e0 = kp_root(&kp, 0.0, n), epi = kp_root(&kp, EW_PI, n);
    double sgn = band == EW_BAND_E ? 1.0 : -1.0, lo = fmin(e0, epi), hi = fmax(e0, epi);
    double tol = fabs(ew_minibands_width_eV(coarse, j) - ew_minibands_width_eV(fine, j)) +
                 fabs(ew_minibands_bottom_eV(coarse, j) - ew_minibands_bottom_eV(fine, j)) + 2e-9;
    TU_NEAR(ew_minibands_bottom_eV(fine, j), sgn * lo, tol, "bottom: Kronig–Penney");
    TU_NEAR(ew_minibands_top_eV(fine, j), sgn * hi, tol, "top: Kronig–Penney");
    TU_NEAR(ew_minibands_width_eV(fine, j), hi - lo, tol, "width: Kronig–Penney");
    double m = kp_mass(&kp, lo, e0 < epi ? 0.0 : EW_PI), got = ew_minibands_mass_m0(fine, j);
    double mtol = fabs(ew_minibands_mass_m0(coarse, j) - got) + 1e-5 * fabs(m);
    TU_NEAR(got, m, mtol, "mass at the bottom: Kronig–Penney curvature");
    print_message("%s: mass %.6f m0 (Kronig-Penney %.6f, tolerance %.2g)\n",
                  ew_minibands_label(fine, j), got, m, mtol);
    assert_true(m > 0);
  }
  print_message("Kronig-Penney: worst |E_h - E_KP| e %.3g, hh %.3g, lh %.3g eV at h = 0.025 nm\n",
                worst[0], worst[1], worst[2]);
  ew_minibands_free(fine);
  ew_minibands_free(coarse);
  tu_stack_free(st);
}

/* ---- any piecewise-constant period: the transfer matrix ------------------------------------
 * With φ = ψ'/m (continuous under BenDaniel–Duke matching) the equation is u' = [[0, m],
 * [(V − E)/K, 0]] u for u = (ψ, φ); across a layer of thickness t with κ² = m (V − E)/K the
 * exact propagator is [[cosh κt, (m/κ) sinh κt], [(κ/m) sinh κt, cosh κt]] (κ² > 0; cos/sin
 * with k² = −κ² below the edge).  Its product P over the period has det P = 1, and the Bloch
 * condition P u = e^{iqd} u gives cos qd = ½ tr P (Bastard 1988, ch. III, the same derivation
 * as the two-layer relation above, which is its special case: checked below). */
/* Kane energy, gap and spin–orbit splitting of each layer (NULL: parabolic) */
typedef struct {
  double Ep, Eg, D;
} tm_kane;
static const tm_kane *tm_kane_of; /* the layers' Kane data while a Kane check runs */

/* The Kane mass at kinetic energy ε, typed from its source (not from the library):
 * m0/m(ε) = m0/m_e + (E_P/3) [2/(E_g + ε) + 1/(E_g + Δ + ε) − 2/E_g − 1/(E_g + Δ)]
 * (E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957); anchored at the band-edge mass as in
 * D. F. Nelson, R. C. Miller, D. A. Kleinman, Phys. Rev. B 35, 7770 (1987)). */
static double kane_mass(double me, const tm_kane *k, double eps) {
  return 1.0 / (1.0 / me + k->Ep / 3.0 * (2.0 / (k->Eg + eps) + 1.0 / (k->Eg + k->D + eps) -
                                          2.0 / k->Eg - 1.0 / (k->Eg + k->D)));
}

static double tm_half_trace(size_t n, const tu_layer *ly, ew_band band, double E) {
  double P[2][2] = {{1, 0}, {0, 1}};
  for (size_t j = 0; j < n; j++) {
    double V = band == EW_BAND_E ? ly[j].Ec : -ly[j].Ev;
    double m = band == EW_BAND_E ? ly[j].me : band == EW_BAND_HH ? ly[j].mhh : ly[j].mlh;
    if (band == EW_BAND_E && tm_kane_of) m = kane_mass(m, &tm_kane_of[j], E - V);
    double k2 = m * (V - E) / EW_HB2M0_EVNM2, t = ly[j].t, M[2][2];
    if (k2 > 0) {
      double k = sqrt(k2);
      M[0][0] = M[1][1] = cosh(k * t), M[0][1] = m / k * sinh(k * t), M[1][0] = k / m * sinh(k * t);
    } else {
      double k = sqrt(-k2);
      M[0][0] = M[1][1] = cos(k * t), M[0][1] = m / k * sin(k * t), M[1][0] = -k / m * sin(k * t);
    }
    double R[2][2]; /* P ← M P (layer j after those before it) */
    for (int r = 0; r < 2; r++)
      for (int c = 0; c < 2; c++) R[r][c] = M[r][0] * P[0][c] + M[r][1] * P[1][c];
    memcpy(P, R, sizeof P);
  }
  return 0.5 * (P[0][0] + P[1][1]);
}

/* Root n of ½ tr P(E) = cos qd in (Vmin, Vmin + 1 eV) by scan and bisection. */
static double tm_root(size_t nl, const tu_layer *ly, ew_band band, double vmin, double qd, int n) {
  double c = cos(qd), lo = vmin + 1e-9, flo = tm_half_trace(nl, ly, band, lo) - c;
  int seen = 0;
  for (int s = 1; s <= KP_SCAN; s++) {
    double hi = vmin + 1e-9 + (double)s / KP_SCAN, fhi = tm_half_trace(nl, ly, band, hi) - c;
    if ((flo > 0) != (fhi > 0) && seen++ == n) {
      for (int it = 0; it < 200 && hi - lo > 1e-15 * fabs(hi); it++) {
        double m = 0.5 * (lo + hi), fm = tm_half_trace(nl, ly, band, m) - c;
        if ((fm > 0) == (flo > 0)) lo = m, flo = fm;
        else hi = m;
      }
      return 0.5 * (lo + hi);
    }
    lo = hi, flo = fhi;
  }
  return NAN;
}

/* An asymmetric period (three materials, different faces: the period node joins two of them)
 * against the transfer matrix; and the two-layer relation against the transfer matrix. */
static void asymmetric_period(void **state) {
  (void)state;
  static const tu_layer asym[3] = {
      {1.2, 0.25, -0.12, 0.080, 0.42, 0.10},
      {4.0, 0.02, 0.01, 0.067, 0.38, 0.09},
      {1.8, 0.35, -0.20, 0.100, 0.48, 0.12},
  };
  for (int b = 0; b < EW_BAND_COUNT; b++) { /* the closed form is the transfer matrix's trace */
    kp_period kp = kp_of((ew_band)b);
    for (double E = 0.01; E < 0.14; E += 0.013)
      TU_NEAR(kp_F(&kp, E), tm_half_trace(3, period_layers, (ew_band)b, E),
              1e-9 * fmax(1.0, fabs(kp_F(&kp, E))), "two-layer relation = transfer matrix");
  }
  ew_stack *st = tu_stack(3, asym);
  const size_t P = 5;
  ew_minibands *fine = minibands_at(st, P, 0.025), *coarse = minibands_at(st, P, 0.05);
  assert_true(ew_minibands_count(fine) >= 3);
  for (size_t j = 0; j < ew_minibands_count(fine); j++) {
    ew_band band = fine->band[j];
    double vmin = band == EW_BAND_E ? 0.02 : -0.01;
    for (size_t i = 0; i < P; i++) {
      double qd = EW_PI * (double)i / (double)(P - 1);
      double want = tm_root(3, asym, band, vmin, qd, ew_minibands_index(fine, j) - 1);
      double got = lam(fine, j, i), tol = fabs(lam(coarse, j, i) - got) + 1e-9;
      TU_NEAR(got, want, tol, "transfer matrix of the period (BenDaniel–Duke), Bastard 1988");
    }
  }
  ew_minibands_free(fine);
  ew_minibands_free(coarse);
  tu_stack_free(st);
}

/* Electrons with the Kane mass (in each constant layer the BenDaniel–Duke equation at energy E
 * is parabolic with the mass m(E − Ec): the transfer matrix holds with those masses), against
 * the library's fixed point E = λ(H(q, E)). */
static void kane_period(void **state) {
  (void)state;
  /* invented Kane parameters of the well and barrier materials, plausible for III–V's */
  static const tm_kane kk[3] = {{26.0, 1.80, 0.32}, {28.0, 1.42, 0.34}, {26.0, 1.80, 0.32}};
  ew_stack *st = tu_stack(3, period_layers);
  st->nonparabolic = 1;
  for (int k = 0; k < 3; k++) {
    st->layers[k].bands.Ep_eV = kk[k].Ep;
    st->layers[k].bands.Eg_G_eV = kk[k].Eg;
    st->layers[k].bands.Dso_eV = kk[k].D;
  }
  const size_t P = 5;
  ew_minibands *fine = minibands_at(st, P, 0.025), *coarse = minibands_at(st, P, 0.05);
  RT_STREQ(ew_minibands_electron_mass(fine), "kane", "layers with E_P, nonparabolic on");
  tm_kane_of = kk;
  size_t checked = 0;
  for (size_t j = 0; j < ew_minibands_count(fine); j++) {
    if (fine->band[j] != EW_BAND_E) continue;
    for (size_t i = 0; i < P; i++) {
      double qd = EW_PI * (double)i / (double)(P - 1);
      double want = tm_root(3, period_layers, EW_BAND_E, 0.0, qd, ew_minibands_index(fine, j) - 1);
      double got = lam(fine, j, i), tol = fabs(lam(coarse, j, i) - got) + 1e-9;
      TU_NEAR(got, want, tol, "transfer matrix with Kane masses m(E - Ec) per layer");
      /* and not the parabolic answer: the Kane shift is many times the tolerance */
      tm_kane_of = NULL;
      assert_true(fabs(got - tm_root(3, period_layers, EW_BAND_E, 0.0, qd, ew_minibands_index(fine, j) - 1)) > 10 * tol);
      tm_kane_of = kk;
      checked++;
    }
  }
  tm_kane_of = NULL;
  assert_true(checked >= P);
  ew_minibands_free(fine);
  ew_minibands_free(coarse);
  tu_stack_free(st);
}

/* ---- the count against LAPACK -------------------------------------------------------------- */
static ew_mb_pencil *small_pencil(ew_stack *st, double step, ew_band band, ew_grid **g) {
  size_t cells[3];
  ew_grid_cells_for_step(st, step, cells);
  *g = ew_grid_layered(st, cells);
  assert_non_null(*g);
  ew_mb_pencil *p = ew_mb_pencil_build(st, *g, band);
  assert_non_null(p);
  return p;
}

/* eigenvalues of the dense standard form B^{-1/2} H(q) B^{-1/2} (LAPACK zheev) */
static void lapack_values(const ew_mb_pencil *p, double qd, double *ev) {
  size_t N = p->n;
  double complex *A = malloc(N * N * sizeof *A);
  assert_non_null(A);
  ew_mb_dense(p, qd, A);
  for (size_t r = 0; r < N; r++)
    for (size_t c = 0; c < N; c++) A[r * N + c] /= sqrt(p->w[r] * p->w[c]);
  assert_int_equal(LAPACKE_zheev(LAPACK_ROW_MAJOR, 'N', 'U', (lapack_int)N, A, (lapack_int)N, ev), 0);
  free(A);
}

static size_t below(const double *ev, size_t n, double s) {
  size_t c = 0;
  for (size_t i = 0; i < n; i++) c += ev[i] < s;
  return c;
}

static void count_against_lapack(void **state) {
  (void)state;
  ew_stack *st = tu_stack(3, period_layers);
  const double qds[4] = {0.0, 0.37 * EW_PI, 0.81 * EW_PI, EW_PI};
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_grid *g;
    ew_mb_pencil *p = small_pencil(st, 0.1, (ew_band)b, &g);
    size_t N = p->n;
    double *ev = malloc(N * sizeof *ev);
    ew_mb_solver *s = ew_mb_solver_create(p);
    assert_non_null(ev);
    assert_non_null(s);
    for (int t = 0; t < 4; t++) {
      lapack_values(p, qds[t], ev);
      size_t checked = 0;
      /* midpoints between neighbours and points just beside each eigenvalue */
      for (size_t i = 0; i < N; i++) {
        double gap = i + 1 < N ? ev[i + 1] - ev[i] : 1.0, left = i ? ev[i] - ev[i - 1] : 1.0;
        double probes[3] = {ev[i] + 0.5 * gap, ev[i] - 1e-3 * left, ev[i] + 1e-3 * gap};
        for (int k = 0; k < 3; k++) {
          if (fmin(gap, left) < 1e-8) continue; /* LAPACK cannot order such a pair */
          size_t want = below(ev, N, probes[k]);
          assert_int_equal(ew_mb_count_below(p, qds[t], probes[k]), want);
          assert_int_equal(ew_mb_count_in_order(p, qds[t], probes[k], 0), want);
          assert_int_equal(ew_mb_count_in_order(p, qds[t], probes[k], 1), want); /* the fallback */
          checked++;
        }
      }
      assert_true(checked > 2 * N);
      assert_int_equal(ew_mb_count_below(p, qds[t], p->vmin - 1e-6), 0);
      assert_int_equal(ew_mb_count_below(p, qds[t], p->upper + 1e-6), N);
      /* the four lowest eigenvalues by shift-invert (SuperLU) against LAPACK */
      for (size_t k = 0; k < 4; k++) {
        double E, bound;
        ew_error err;
        assert_int_equal(ew_mb_eigenvalue(p, s, qds[t], k, &E, &bound, &err), EW_OK);
        TU_NEAR(E, ev[k], 1e-9 + 1e-12 * fabs(ev[k]), "LAPACK zheev, dense periodic matrix");
        assert_true(bound <= 1e-9);
      }
    }
    /* q and −q (e^{±iqd}) and q + 2π/d give the same spectrum: the Bloch phase only */
    assert_int_equal(ew_mb_count_below(p, 0.4, 0.1), ew_mb_count_below(p, -0.4, 0.1));
    assert_int_equal(ew_mb_count_below(p, 0.4, 0.1), ew_mb_count_below(p, 0.4 + 2 * EW_PI, 0.1));
    ew_mb_solver_free(s);
    free(ev);
    ew_mb_pencil_free(p);
    ew_grid_free(g);
  }
  tu_stack_free(st);
}

/* The certificate refuses a wrong list: one missing, one repeated, one moved into a gap. */
static void certified_count_refuses(void **state) {
  (void)state;
  ew_stack *st = tu_stack(3, period_layers);
  ew_grid *g;
  ew_mb_pencil *p = small_pencil(st, 0.1, EW_BAND_E, &g);
  size_t N = p->n;
  double *ev = malloc(N * sizeof *ev), bound[3] = {1e-9, 1e-9, 1e-9}, v[3];
  assert_non_null(ev);
  ew_error err;
  double qd = 0.5 * EW_PI;
  lapack_values(p, qd, ev);
  memcpy(v, ev, sizeof v);
  assert_int_equal(ew_mb_certify(p, qd, v, bound, 3, &err), EW_OK); /* LAPACK's three lowest */
  v[1] = ev[2], v[2] = ev[3]; /* the second missing: counts say 2 below the "second" */
  assert_int_equal(ew_mb_certify(p, qd, v, bound, 3, &err), EW_ERR_NUMERIC);
  v[1] = ev[0], v[2] = ev[1]; /* the first repeated */
  assert_int_equal(ew_mb_certify(p, qd, v, bound, 3, &err), EW_ERR_NUMERIC);
  memcpy(v, ev, sizeof v);
  v[1] = 0.5 * (ev[1] + ev[2]); /* in the gap: no eigenvalue within its bound */
  assert_int_equal(ew_mb_certify(p, qd, v, bound, 3, &err), EW_ERR_NUMERIC);
  v[1] = ev[1] + 1e-6; /* within the bound? no: 1e-6 off with a 1e-9 bound */
  assert_int_equal(ew_mb_certify(p, qd, v, bound, 3, &err), EW_ERR_NUMERIC);
  free(ev);
  ew_mb_pencil_free(p);
  ew_grid_free(g);
  tu_stack_free(st);
}

/* ---- a finite stack of N periods ------------------------------------------------------------ */
/* Invented user materials (not measured): a well and a barrier material.  The period is the
 * well between two 1.25 nm barrier halves; the finite stack has five 4.5 nm wells with 2.5 nm
 * inner barriers between two 20 nm outer barriers of the same barrier material. */
#define FINITE_MATERIALS                                                                    \
  "temperature = 77.0;\ngrid_step = 0.025;\nmaterials = (\n"                                \
  "  { name = \"wellium\"; Ec = 0.10; Ev = -1.40; me = 0.065; mhh = 0.36; mlh = 0.085; },\n" \
  "  { name = \"barrium\"; Ec = 0.32; Ev = -1.52; me = 0.085; mhh = 0.42; mlh = 0.10; }\n);\n"
static const char period_text[] = FINITE_MATERIALS
    "layers = (\n"
    "  { name = \"half1\"; material = \"barrium\"; thickness = 1.25; },\n"
    "  { name = \"well\";  material = \"wellium\"; thickness = 4.5; },\n"
    "  { name = \"half2\"; material = \"barrium\"; thickness = 1.25; }\n);\n";
static const char finite_text[] = FINITE_MATERIALS
    "layers = (\n"
    "  { name = \"outer1\"; material = \"barrium\"; thickness = 20.0; },\n"
    "  { name = \"w1\"; material = \"wellium\"; thickness = 4.5; },\n"
    "  { name = \"b1\"; material = \"barrium\"; thickness = 2.5; },\n"
    "  { name = \"w2\"; material = \"wellium\"; thickness = 4.5; },\n"
    "  { name = \"b2\"; material = \"barrium\"; thickness = 2.5; },\n"
    "  { name = \"w3\"; material = \"wellium\"; thickness = 4.5; },\n"
    "  { name = \"b3\"; material = \"barrium\"; thickness = 2.5; },\n"
    "  { name = \"w4\"; material = \"wellium\"; thickness = 4.5; },\n"
    "  { name = \"b4\"; material = \"barrium\"; thickness = 2.5; },\n"
    "  { name = \"w5\"; material = \"wellium\"; thickness = 4.5; },\n"
    "  { name = \"outer2\"; material = \"barrium\"; thickness = 20.0; }\n);\n";

/* The same with catalogue GaAs wells and Al0.3Ga0.7As barriers at 300 K, where both solve
 * and minibands take the Kane electron mass (the default for layers with E_P). */
#define CAT_LAYER(name, mat, t) "  { name = \"" name "\"; material = \"" mat "\"; " t " }"
#define CAT_B(name, t) CAT_LAYER(name, "AlGaAs", "x = 0.3; thickness = " t ";")
#define CAT_W(name) CAT_LAYER(name, "GaAs", "thickness = 4.5;")
#define NL ",\n"
static const char cat_period_text[] = "temperature = 300.0;\ngrid_step = 0.025;\nlayers = (\n"
    CAT_B("half1", "1.25") NL CAT_W("well") NL CAT_B("half2", "1.25") "\n);\n";
static const char cat_finite_text[] = "temperature = 300.0;\ngrid_step = 0.025;\nlayers = (\n"
    CAT_B("outer1", "20.0") NL CAT_W("w1") NL CAT_B("b1", "2.5") NL CAT_W("w2") NL
    CAT_B("b2", "2.5") NL CAT_W("w3") NL CAT_B("b3", "2.5") NL CAT_W("w4") NL
    CAT_B("b4", "2.5") NL CAT_W("w5") NL CAT_B("outer2", "20.0") "\n);\n";
#undef NL

static void fills(const char *period, const char *finite, const char *mass_model) {
  ew_catalogue *cat = NULL;
  assert_int_equal(tu_load_catalogue(&cat), 0);
  ew_stack *per = NULL, *fin = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(period, "period", cat, &per, &err), EW_OK);
  ew_minibands *mb = minibands_at(per, 17, 0.0);
  RT_STREQ(ew_minibands_electron_mass(mb), mass_model, "electron mass model");
  ew_result *r = tu_solve_text(cat, finite, &fin, NULL);
  assert_non_null(r);
  const int N = 5;
  for (size_t j = 0; j < ew_minibands_count(mb); j++) {
    if (ew_minibands_index(mb, j) != 1) continue; /* the first miniband of each band */
    double b = ew_minibands_bottom_eV(mb, j), t = ew_minibands_top_eV(mb, j);
    double lo = fmin(b, t) - 1e-5, hi = fmax(b, t) + 1e-5; /* grid error of both, ~1e-6 */
    int inside = 0, first_inside = 0;
    for (size_t i = 0; i < ew_result_state_count(r); i++) {
      const ew_state *s = ew_result_state(r, i);
      if (s->band != mb->band[j]) continue;
      int in = s->energy_eV > lo && s->energy_eV < hi;
      inside += in;
      first_inside += in && s->n <= N;
    }
    print_message("%s (%s): [%.6f, %.6f] eV holds %d levels of the 5-well stack\n",
                  ew_minibands_label(mb, j), mass_model, fmin(b, t), fmax(b, t), inside);
    assert_int_equal(inside, N);       /* N periods: N levels in the miniband */
    assert_int_equal(first_inside, N); /* and they are levels 1 … N of their band */
    assert_true(ew_minibands_width_eV(mb, j) > 1e-3);
  }
  ew_result_free(r);
  ew_stack_free(fin);
  ew_minibands_free(mb);
  ew_stack_free(per);
  ew_catalogue_free(cat);
}

static void finite_stack_fills_miniband(void **state) {
  (void)state;
  fills(period_text, finite_text, "parabolic");
  fills(cat_period_text, cat_finite_text, "kane");
}

/* ---- JSON and CSV read back ------------------------------------------------------------------ */
static void json_csv_roundtrip(void **state) {
  (void)state;
  ew_catalogue *cat = NULL;
  assert_int_equal(tu_load_catalogue(&cat), 0);
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_file("examples/miniband_period.cfg", cat, &st, &err), EW_OK);
  ew_minibands *mb = minibands_at(st, 7, 0.05);
  char dir[256], path[300];
  assert_int_equal(tu_mkdtemp("minibands", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/mb.json", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  assert_int_equal(ew_minibands_write_json(mb, f, &err), EW_OK);
  fclose(f);
  char *text = rt_slurp(path);
  rj doc;
  assert_non_null(text);
  assert_int_equal(rj_parse(text, &doc), 0);
  RT_JSON(&doc, "period_nm", ew_minibands_period_nm(mb), "json");
  RT_JSON(&doc, "grid_step_nm", ew_minibands_grid_step_nm(mb), "json");
  RT_STREQ(rj_str(&doc, "electron_mass"), ew_minibands_electron_mass(mb), "json.electron_mass");
  RT_STREQ(ew_minibands_electron_mass(mb), "parabolic", "the example sets nonparabolic = false");
  const rj *w = rj_get(&doc, "warnings"), *arr = rj_get(&doc, "minibands");
  assert_non_null(w);
  assert_int_equal(w->n, ew_minibands_warning_count(mb));
  assert_non_null(arr);
  assert_int_equal(arr->t, RJ_ARR);
  assert_int_equal(arr->n, ew_minibands_count(mb));
  for (size_t j = 0; j < arr->n; j++) {
    const rj *o = &arr->item[j];
    RT_STREQ(rj_str(o, "band"), ew_minibands_band(mb, j), "json.band");
    RT_STREQ(rj_str(o, "label"), ew_minibands_label(mb, j), "json.label");
    RT_JSON(o, "index", ew_minibands_index(mb, j), "json");
    RT_JSON(o, "bottom_eV", ew_minibands_bottom_eV(mb, j), "json");
    RT_JSON(o, "top_eV", ew_minibands_top_eV(mb, j), "json");
    RT_JSON(o, "width_eV", ew_minibands_width_eV(mb, j), "json");
    RT_JSON(o, "mass_m0", ew_minibands_mass_m0(mb, j), "json");
    RT_JSON(o, "bound_eV", ew_minibands_bound_eV(mb, j), "json");
    const rj *q = rj_get(o, "q_inv_nm"), *e = rj_get(o, "energy_eV");
    assert_non_null(q);
    assert_non_null(e);
    assert_int_equal(q->n, ew_minibands_point_count(mb));
    assert_int_equal(e->n, ew_minibands_point_count(mb));
    for (size_t i = 0; i < q->n; i++) {
      double wq = ew_minibands_q_inv_nm(mb, i), we = ew_minibands_energy_eV(mb, j, i);
      RT_SAME(q->item[i].num, wq, rt_tol_sig(wq, 10), "json.q_inv_nm");
      RT_SAME(e->item[i].num, we, rt_tol_sig(we, 10), "json.energy_eV");
    }
  }
  rj_free(&doc);
  free(text);
  snprintf(path, sizeof path, "%s/mb.csv", dir);
  f = fopen(path, "w");
  assert_non_null(f);
  assert_int_equal(ew_minibands_write_csv(mb, f, &err), EW_OK);
  fclose(f);
  rcsv c;
  assert_int_equal(rcsv_read(path, &c), 0);
  assert_int_equal(c.ncol, 1 + ew_minibands_count(mb));
  assert_int_equal(c.nrows, ew_minibands_point_count(mb));
  RT_STREQ(c.head[0], "q_inv_nm", "csv header");
  for (size_t j = 0; j < ew_minibands_count(mb); j++) {
    char name[32];
    snprintf(name, sizeof name, "%s_eV", ew_minibands_label(mb, j));
    RT_STREQ(c.head[1 + j], name, "csv header");
  }
  for (size_t i = 0; i < c.nrows; i++) {
    double wq = ew_minibands_q_inv_nm(mb, i);
    RT_SAME(rcsv_num(&c, i, 0), wq, rt_tol_sig(wq, 10), "csv q_inv_nm");
    for (size_t j = 0; j < ew_minibands_count(mb); j++) {
      double we = ew_minibands_energy_eV(mb, j, i);
      RT_SAME(rcsv_num(&c, i, (int)(1 + j)), we, rt_tol_sig(we, 10), "csv energy");
    }
  }
  rcsv_free(&c);
  /* the accessors against the struct they read (a query printing a neighbour fails here) */
  for (size_t j = 0; j < ew_minibands_count(mb); j++) {
    double lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < mb->points; i++) {
      lo = fmin(lo, ew_minibands_energy_eV(mb, j, i));
      hi = fmax(hi, ew_minibands_energy_eV(mb, j, i));
    }
    int e = mb->band[j] == EW_BAND_E;
    TU_NEAR(ew_minibands_bottom_eV(mb, j), e ? lo : hi, 0, "bottom = the edge nearest the band edge");
    TU_NEAR(ew_minibands_top_eV(mb, j), e ? hi : lo, 0, "top = the far edge");
    TU_NEAR(ew_minibands_width_eV(mb, j), hi - lo, 1e-15, "width = |top - bottom|");
  }
  tu_rm_tree(dir);
  ew_minibands_free(mb);
  ew_stack_free(st);
  ew_catalogue_free(cat);
}

/* ---- the picture read back ------------------------------------------------------------------ */
/* Our SVG's energy ticks (right-aligned at x = 76, baseline 4 below the tick, running upward;
 * the lower panel's start low again) give each panel's map E(y) = a + b·y; every curve (the
 * path in its series colour, one vertex per q) must sit at the library's energies within one
 * SVG unit, with equally spaced vertices (the uniform q grid). */
typedef struct {
  double x, y;
  char s[64];
} tick_text;

static int panel_map(const char *svg, int panel, double *a, double *b) {
  double ys[2], es[2], prev = -1;
  int k = 0, q = 0;
  for (const char *e = strstr(svg, "<text "); e && k < 2; e = strstr(e + 1, "<text ")) {
    const char *gt = strchr(e, '>'), *xa = strstr(e, " x=\""), *ya = strstr(e, " y=\"");
    if (!gt || !xa || !ya || xa > gt || ya > gt || !strstr(e, "text-anchor=\"end\"")) continue;
    if (strstr(e, "text-anchor=\"end\"") > gt) continue;
    double x = atof(xa + 4), y = atof(ya + 4);
    if (fabs(x - 76.0) > 1e-6) continue;
    char v[64];
    size_t n = 0;
    for (const char *c = gt + 1; *c && *c != '<' && n + 1 < sizeof v;)
      if (!strncmp(c, "\xe2\x88\x92", 3)) v[n++] = '-', c += 3; /* U+2212 minus */
      else v[n++] = *c++;
    v[n] = '\0';
    if (prev >= 0 && y > prev) q++;
    prev = y;
    if (q != panel) continue;
    ys[k] = y - 4, es[k++] = atof(v);
  }
  if (k < 2) return -1;
  *b = (es[1] - es[0]) / (ys[1] - ys[0]);
  *a = es[0] - *b * ys[0];
  return 0;
}

/* vertices of the first path stroked colour with more than two vertices */
static size_t curve(const char *svg, const char *colour, double *x, double *y, size_t cap) {
  char key[40];
  snprintf(key, sizeof key, "stroke=\"%s\"", colour);
  for (const char *e = strstr(svg, "<path "); e; e = strstr(e + 1, "<path ")) {
    const char *gt = strchr(e, '>'), *st = strstr(e, key), *d = strstr(e, " d=\"");
    if (!gt || !st || st > gt || !d || d > gt) continue;
    size_t n = 0;
    for (d += 4; *d != '"' && n < cap;) {
      while (*d == 'M' || *d == 'L' || *d == ' ') d++;
      if (*d == '"') break;
      char *end;
      x[n] = strtod(d, &end);
      y[n++] = strtod(end, &end);
      d = end;
    }
    if (n > 2) return n;
  }
  return 0;
}

static void picture_read_back(void **state) {
  (void)state;
  tu_layer gapped[3];
  memcpy(gapped, period_layers, sizeof gapped);
  for (int k = 0; k < 3; k++) gapped[k].Ec += 1.5; /* a gap: the axis breaks between e and h */
  ew_stack *st = tu_stack(3, gapped);
  const size_t P = 9;
  ew_minibands *mb = minibands_at(st, P, 0.05);
  char dir[256], path[300];
  assert_int_equal(tu_mkdtemp("minibands-svg", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/mb.svg", dir);
  ew_error err;
  assert_int_equal(ew_minibands_write_plot(mb, path, &err), EW_OK);
  char *svg = rt_slurp(path);
  assert_non_null(svg);
  double a[2], b[2];
  assert_int_equal(panel_map(svg, 0, &a[0], &b[0]), 0); /* electrons, upper panel */
  assert_int_equal(panel_map(svg, 1, &a[1], &b[1]), 0); /* holes, lower panel */
  for (size_t j = 0; j < ew_minibands_count(mb); j++) {
    char col[8], label[40];
    snprintf(col, sizeof col, "#%06x", (unsigned)ew_xy_series_colour(j));
    double x[64], y[64];
    assert_int_equal(curve(svg, col, x, y, 64), P);
    int q = mb->band[j] == EW_BAND_E ? 0 : 1;
    for (size_t i = 0; i < P; i++) {
      TU_NEAR(a[q] + b[q] * y[i], ew_minibands_energy_eV(mb, j, i), fabs(b[q]),
              "curve at the library's E(q), one SVG unit");
      TU_NEAR(x[i] - x[0], (double)i * (x[1] - x[0]), 1e-3, "uniform q grid");
    }
    snprintf(label, sizeof label, ">%s<", ew_minibands_label(mb, j));
    assert_non_null(strstr(svg, label)); /* the legend names it */
  }
  free(svg);
  tu_rm_tree(dir);
  ew_minibands_free(mb);
  tu_stack_free(st);
}

/* ---- refusals and warnings ------------------------------------------------------------------- */
static void refusals_and_warnings(void **state) {
  (void)state;
  ew_stack *st = tu_stack(3, period_layers);
  ew_minibands *mb = NULL;
  ew_error err;
  assert_int_equal(ew_minibands_create(&mb, &err), EW_OK);
  assert_int_equal(ew_minibands_compute(mb, st, 1, 0.05, &err), EW_ERR_USAGE);
  assert_int_equal(ew_minibands_compute(mb, st, 10001, 0.05, &err), EW_ERR_USAGE);
  assert_int_equal(ew_minibands_compute(mb, st, 5, -1.0, &err), EW_ERR_USAGE);
  assert_int_equal(ew_minibands_compute(NULL, st, 5, 0.05, &err), EW_ERR_USAGE);
  assert_true(isnan(ew_minibands_period_nm(mb)));
  assert_null(ew_minibands_label(mb, 0));
  assert_int_equal(ew_minibands_write_json(mb, stdout, &err), EW_ERR_USAGE);
  st->field_kV_cm = 10.0;
  assert_int_equal(ew_minibands_compute(mb, st, 5, 0.05, &err), EW_ERR_INPUT);
  st->field_kV_cm = 0.0;
  assert_int_equal(ew_minibands_compute(mb, st, 5, 0.05, &err), EW_OK);
  assert_int_equal(ew_minibands_warning_count(mb), 0);
  size_t n = ew_minibands_count(mb);
  assert_null(ew_minibands_band(mb, n));
  assert_true(isnan(ew_minibands_bottom_eV(mb, n)));
  assert_true(isnan(ew_minibands_energy_eV(mb, 0, 5)));
  assert_int_equal(ew_minibands_index(mb, n), 0);
  TU_NEAR(ew_minibands_window_top_eV(mb, EW_BAND_E), 0.30, 1e-12, "barrier Ec");
  TU_NEAR(ew_minibands_window_top_eV(mb, EW_BAND_HH), -0.15, 1e-12, "barrier Ev");
  tu_stack_free(st);
  /* a period of well material only confines nothing */
  tu_layer flat[1] = {{5.0, 0.0, 0.0, 0.067, 0.38, 0.09}};
  st = tu_stack(1, flat);
  assert_int_equal(ew_minibands_compute(mb, st, 5, 0.05, &err), EW_ERR_INPUT);
  tu_stack_free(st);
  /* GaAs has E_P: the Kane mass, as solve; doping: warned, with its code */
  ew_catalogue *cat = NULL;
  assert_int_equal(tu_load_catalogue(&cat), 0);
  const char *text =
      "temperature = 300.0;\ngrid_step = 0.05;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 1.5; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 4.0; doping = { donors = 1e17; }; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 1.5; }\n);\n";
  assert_int_equal(ew_stack_read_string(text, "warn", cat, &st, &err), EW_OK);
  assert_int_equal(ew_minibands_compute(mb, st, 3, 0.0, &err), EW_OK);
  RT_STREQ(ew_minibands_electron_mass(mb), "kane", "catalogue GaAs: Kane, as solve");
  assert_int_equal(ew_minibands_warning_count(mb), 1);
  RT_STREQ(ew_minibands_warning(mb, 0), "miniband-doping-ignored", "warning code");
  assert_null(ew_minibands_warning(mb, 1));
  ew_stack_free(st);
  ew_catalogue_free(cat);
  ew_minibands_free(mb);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(kronig_penney),
      cmocka_unit_test(asymmetric_period),
      cmocka_unit_test(kane_period),
      cmocka_unit_test(count_against_lapack),
      cmocka_unit_test(certified_count_refuses),
      cmocka_unit_test(finite_stack_fills_miniband),
      cmocka_unit_test(json_csv_roundtrip),
      cmocka_unit_test(picture_read_back),
      cmocka_unit_test(refusals_and_warnings),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
