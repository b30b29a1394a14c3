/* test_continuum.c — open-boundary continuum (continuum.c): the bound-to-continuum
 * oscillator strength of a square well against the analytic finite well, the
 * Thomas–Reiche–Kuhn sum over bound and continuum states, independence of the outer
 * barriers' thickness (the box), holes, and the absorption spectrum built on it. */
#include <math.h>

#include "testutil.h"

#include "constants.h"
#include "continuum.h"
#include "spectra.h"

/* Symmetric square well of width a (nm), depth V0 (eV), well mass mw and barrier mass mb
 * (m0), outer barriers of thickness tb each (user materials: parabolic bands). */
static ew_result *square(double a, double V0, double mw, double mb, double tb, double step,
                         ew_stack **st) {
  tu_layer ly[] = {{tb, V0, -1.8, mb, 0.40, 0.10},
                   {a, 0.00, -1.5, mw, 0.35, 0.09},
                   {tb, V0, -1.8, mb, 0.40, 0.10}};
  *st = tu_stack(3, ly);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = step;
  opt.excitons = 0;
  ew_result *r = NULL;
  if (ew_solve(*st, &opt, &r, NULL) != EW_OK) return NULL;
  return r;
}

static size_t e1_of(const ew_result *r) {
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].band == EW_BAND_E && r->states[i].n == 1) return i;
  return (size_t)-1;
}

/* ---- the analytic finite well (BenDaniel–Duke matching: ψ and ψ′/m continuous) ----------
 * e1 (even): k tan(ka/2)/mw = κ/mb; ψ1 = N cos kz inside, N cos(ka/2) e^{−κ(|z|−a/2)} outside.
 * Odd continuum states (the only ones with a dipole to e1) at E > V0: A sin qz inside,
 * ±A[sin(qa/2) cos ps + (q mb/(p mw)) cos(qa/2) sin ps] outside (s = |z| − a/2), normalised
 * to δ(E − E′): 2 π K p amp²/mb = 1 for the outside amplitude amp (two sides, each
 * (π/2) ħ v amp², v = ħp/mb).  df/dE = (E − E1) d² / (K ⟨1|m0/m|1⟩) (the definition of f
 * with 1/m* = ⟨1|1/m|1⟩; M. Helm, Semicond. Semimet. 62, 1 (2000), from memory). */
typedef struct {
  double a, V0, mw, mb, E1, k, kap, N, invm;
} fw;

static fw finite_well(double a, double V0, double mw, double mb) {
  const double K = EW_HB2M0_EVNM2;
  fw w = {a, V0, mw, mb, 0, 0, 0, 0, 0};
  double lo = 1e-9, hi = V0 - 1e-12; /* e1 by bisection on the matching condition */
  for (int it = 0; it < 200; it++) {
    double E = 0.5 * (lo + hi), k = sqrt(E * mw / K), kap = sqrt((V0 - E) * mb / K);
    double F = k * tan(k * a / 2) / mw - kap / mb;
    if (k * a / 2 >= M_PI / 2 || F > 0) hi = E;
    else lo = E;
  }
  w.E1 = 0.5 * (lo + hi);
  w.k = sqrt(w.E1 * mw / K);
  w.kap = sqrt((V0 - w.E1) * mb / K);
  double c = cos(w.k * a / 2);
  double in = a / 2 + sin(w.k * a) / (2 * w.k), out = c * c / (2 * w.kap);
  w.N = 1.0 / sqrt(in + 2 * out); /* in: −a/2 … a/2; out: one side */
  w.invm = w.N * w.N * (in / mw + 2 * out / mb);
  return w;
}

/* ∫_0^X z sin(uz) dz */
static double zsin(double u, double X) { return sin(u * X) / (u * u) - X * cos(u * X) / u; }

static double fw_dfdE(const fw *w, double E) {
  const double K = EW_HB2M0_EVNM2;
  double q = sqrt(E * w->mw / K), p = sqrt((E - w->V0) * w->mb / K), h = w->a / 2;
  double al = sin(q * h), be = q * w->mb / (p * w->mw) * cos(q * h);
  double A = 1.0 / sqrt(2 * M_PI * K * p / w->mb * (al * al + be * be));
  /* inside: ∫_0^h z sin qz cos kz = ½[zsin(q+k) + zsin(q−k)] */
  double din = 0.5 * (zsin(q + w->k, h) + zsin(q - w->k, h));
  /* outside: ∫_0^∞ (s + h) e^{−κs} (al cos ps + be sin ps) ds */
  double kk = w->kap, D = kk * kk + p * p;
  double I0c = kk / D, I0s = p / D, I1c = (kk * kk - p * p) / (D * D), I1s = 2 * kk * p / (D * D);
  double dout = al * (I1c + h * I0c) + be * (I1s + h * I0s);
  double d = 2 * A * w->N * (din + cos(w->k * h) * dout);
  return (E - w->E1) * d * d / (K * w->invm);
}

/* df/dE of a 5 nm well 0.3 eV deep (mw 0.067, mb 0.09: a bound-to-continuum shape, one bound
 * level) against the analytic well at photon energies from just above the threshold to
 * 0.5 eV above it.  Tolerance 0.5 % of the peak: the scheme is second order, and e1 moves
 * by 0.1 % at h = 0.02 nm (its error estimate), the dipole by about as much. */
static void dfdE_against_finite_well(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = square(5.0, 0.3, 0.067, 0.09, 60.0, 0.02, &st);
  assert_non_null(r);
  fw w = finite_well(5.0, 0.3, 0.067, 0.09);
  size_t e1 = e1_of(r);
  TU_NEAR(r->states[e1].energy_eV, w.E1, 2e-4, "analytic finite well e1, Richardson level");
  ew_continuum *c;
  assert_int_equal(ew_continuum_new(r, e1, &c, NULL), EW_OK);
  TU_NEAR(ew_continuum_threshold_eV(c), 0.3 - r->states[e1].energy_eV, 1e-9, "barrier top - e1");
  double peak = 0.0;
  for (double x = 0.001; x < 0.5; x += 0.01) peak = fmax(peak, fw_dfdE(&w, 0.3 + x));
  assert_true(peak > 0.5); /* per eV: the continuum holds most of the strength */
  for (double x = 0.002; x < 0.5; x += 0.037) {
    double want = fw_dfdE(&w, 0.3 + x), got = ew_continuum_dfdE(c, 0.3 + x - w.E1);
    TU_NEAR(got, want, 5e-3 * peak, "analytic finite-well continuum");
  }
  assert_true(ew_continuum_dfdE(c, 0.5 * ew_continuum_threshold_eV(c)) == 0.0);
  ew_continuum_free(c);
  ew_result_free(r);
  tu_stack_free(st);
}

/* Thomas–Reiche–Kuhn: bound + continuum = 1 (BenDaniel–Duke double commutator; continuum.h).
 * A deeper well with three bound levels, so that both parts count.  The tolerance: the bound
 * lines use the Richardson energies (the commutator holds for the fine-grid ones; the
 * difference is each level's error estimate, 1e-4 of ΔE here), e1's tail at the hard walls
 * of the bound solve (e^{−2κ·60 nm}, nothing) and the quadrature (below 1e-6): 1e-3. */
static void trk_sum_is_one(void **state) {
  (void)state;
  double steps[2] = {0.05, 0.025}, dev[2];
  for (int s = 0; s < 2; s++) {
    ew_stack *st;
    ew_result *r = square(10.0, 0.5, 0.067, 0.09, 60.0, steps[s], &st);
    assert_non_null(r);
    double b, c;
    assert_int_equal(ew_continuum_sum_rule_e1(r, &b, &c, NULL), EW_OK);
    assert_true(b > 0.5 && b < 1.0);
    assert_true(c > 0.01);
    TU_NEAR(b + c, 1.0, 1e-3, "Thomas-Reiche-Kuhn sum rule");
    dev[s] = b + c - 1.0;
    print_message("TRK h = %g nm: bound %.6f continuum %.6f sum-1 %.2e\n", steps[s], b, c, dev[s]);
    ew_result_free(r);
    tu_stack_free(st);
  }
}

/* Holes: the same rule from hh1 into the heavy-hole continuum (positive-mass scale). */
static void trk_holes(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = square(6.0, 0.3, 0.067, 0.09, 40.0, 0.05, &st);
  assert_non_null(r);
  size_t hh1 = (size_t)-1;
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].band == EW_BAND_HH && r->states[i].n == 1) hh1 = i;
  assert_true(hh1 != (size_t)-1);
  ew_continuum *c;
  assert_int_equal(ew_continuum_new(r, hh1, &c, NULL), EW_OK);
  TU_NEAR(ew_continuum_threshold_eV(c), 0.3 + r->states[hh1].energy_eV + 1.5, 1e-9,
          "hh1 to the barrier valence edge");
  double b = ew_continuum_bound_sum(r, hh1), s = ew_continuum_oscillator_sum(c);
  TU_NEAR(b + s, 1.0, 1e-3, "Thomas-Reiche-Kuhn sum rule, heavy holes");
  ew_continuum_free(c);
  ew_result_free(r);
  tu_stack_free(st);
}

/* Box independence: doubling both outer barriers (60 → 120 nm) leaves df/dE and the
 * broadened absorption spectrum unchanged to 1e-4 of its peak (the only change is e1's tail,
 * e^{−2κ·60 nm}); a closed box of the same size would move its continuum lines by their
 * spacing (several meV).  Stated tolerance for the spectrum: 1e-3 of the peak. */
static void box_independent(void **state) {
  (void)state;
  double Es[400], A[2][400], peak = 0.0;
  for (int k = 0; k < 400; k++) Es[k] = 0.1 + 0.4 * k / 399.0;
  for (int b = 0; b < 2; b++) {
    ew_stack *st;
    ew_result *r = square(5.0, 0.3, 0.067, 0.09, b ? 120.0 : 60.0, 0.05, &st);
    assert_non_null(r);
    assert_int_equal(ew_intersubband_continuum_absorption(r, 5e11, 10.0, 45.0, 3.3, 400, Es,
                                                          A[b], NULL), EW_OK);
    ew_result_free(r);
    tu_stack_free(st);
  }
  for (int k = 0; k < 400; k++) peak = fmax(peak, A[0][k]);
  assert_true(peak > 1e-4);
  for (int k = 0; k < 400; k++) TU_NEAR(A[1][k], A[0][k], 1e-3 * peak, "box independence");
}

/* The broadened continuum spectrum integrates to prefactor × N_s × geometry × continuum
 * part of the sum rule (∫ L dE = 1), here over a window wide enough for all but the far
 * tail: 2 % (the window 0–3 eV leaves out the strength above 3 eV and the Lorentzian tails). */
static void spectrum_area(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = square(5.0, 0.3, 0.067, 0.09, 60.0, 0.05, &st);
  assert_non_null(r);
  size_t n = 6001;
  double *E = malloc(n * sizeof *E), *A = malloc(n * sizeof *A);
  for (size_t k = 0; k < n; k++) E[k] = 3.0 * (double)k / (double)(n - 1);
  assert_int_equal(ew_intersubband_continuum_absorption(r, 5e11, 10.0, 45.0, 3.3, n, E, A, NULL),
                   EW_OK);
  double area = 0.0;
  for (size_t k = 1; k < n; k++) area += 0.5 * (A[k] + A[k - 1]) * (E[k] - E[k - 1]);
  double b, c;
  assert_int_equal(ew_continuum_sum_rule_e1(r, &b, &c, NULL), EW_OK);
  size_t e1 = e1_of(r);
  double th = 45.0 * M_PI / 180.0;
  double want = EW_E_C * EW_E_C * EW_H_EVS / (4.0 * EW_EPS0_FM * EW_C_MS * EW_M0_KG) * 1e4 *
                r->mean_inv_mass[e1] / 3.3 * 5e11 * sin(th) * sin(th) / cos(th) * c;
  TU_NEAR(area, want, 0.02 * want, "Lorentzian area = oscillator strength");
  free(E);
  free(A);
  ew_result_free(r);
  tu_stack_free(st);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(dfdE_against_finite_well),
      cmocka_unit_test(trk_sum_is_one),
      cmocka_unit_test(trk_holes),
      cmocka_unit_test(box_independent),
      cmocka_unit_test(spectrum_area),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
