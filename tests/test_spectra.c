/* test_spectra.c — intersubband absorption per pass and the relative interband edge. */
#include <math.h>

#include "testutil.h"

#include "constants.h"
#include "exciton.h"
#include "observables.h"
#include "solve.h"
#include "spectra.h"

/* An 8 nm well with mass mismatch (well 0.067, barriers 0.09) and a deep conduction offset
 * (0.6 eV), so that e1 has several intersubband lines (e1→e2, e1→e3, …). */
static ew_result *well(ew_stack **st, double eps_r) {
  tu_layer ly[] = {{25.0, 0.60, -1.80, 0.090, 0.40, 0.10},
                   {8.0, 0.00, -1.50, 0.067, 0.35, 0.09},
                   {25.0, 0.60, -1.80, 0.090, 0.40, 0.10}};
  *st = tu_stack(3, ly);
  for (size_t k = 0; k < 3; k++) (*st)->layers[k].bands.eps_r = eps_r;
  ew_result *r = NULL;
  if (ew_solve(*st, NULL, &r, NULL) != EW_OK) return NULL;
  return r;
}

static size_t state_index(const ew_result *r, const char *label) {
  for (size_t i = 0; i < r->n_states; i++)
    if (!strcmp(r->states[i].label, label)) return i;
  return (size_t)-1;
}

/* e² h / (4 ε0 c m0) in eV cm², computed here from the CODATA 2018 values of constants.h:
 * (C² · eV s) / (F/m · m/s · kg) = eV m², × 1e4. */
static double prefactor(void) {
  return EW_E_C * EW_E_C * EW_H_EVS / (4.0 * EW_EPS0_FM * EW_C_MS * EW_M0_KG) * 1e4;
}

/* ---- intersubband --------------------------------------------------------------------------
 * Sum rule of the Lorentzians (analytic, ∫ L dE = 1): ∫ A dE = (e²h/(4ε0 n c m*)) N_s
 * (sin²θ/cos θ) Σ_j f_1j, m* = m0/⟨e1|m0/m|e1⟩ (M. Helm, Semicond. Semimet. 62, 1 (2000),
 * from memory; prefactor derived in spectra.c). */
static void intersubband_sum_rule_and_peak(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = well(&st, 0.0);
  assert_non_null(r);
  /* the prefactor: 1.0976e-16 eV cm² (hand evaluation of e²h/(4ε0 c m0) with CODATA 2018),
   * tolerance 1e-4 relative (five digits carried by hand) */
  TU_NEAR(ew_intersubband_prefactor_eVcm2(), 1.0976e-16, 1e-4 * 1.0976e-16, "hand evaluation");
  TU_NEAR(ew_intersubband_prefactor_eVcm2(), prefactor(), 1e-15 * prefactor(), "same formula");
  size_t e1 = state_index(r, "e1"), e2 = state_index(r, "e2");
  assert_true(e1 != (size_t)-1 && e2 != (size_t)-1);
  double invm = ew_obs_inverse_mass(r->grid, EW_BAND_E, ew_result_wavefunction(r, e1));
  double fsum = 0.0, E12 = 0.0;
  size_t nl = 0;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERSUBBAND || ln->lower != e1) continue;
    fsum += ln->oscillator_strength;
    nl++;
    if (ln->upper == e2) E12 = ln->energy_eV;
  }
  assert_true(nl >= 2 && E12 > 0);
  double Ns = 5e11, fwhm = 4.0, theta = 45.0, n = 3.3, g = 0.5e-3 * fwhm;
  double th = theta * M_PI / 180.0, geom = sin(th) * sin(th) / cos(th);
  double total = prefactor() * invm / n * Ns * geom * fsum;
  /* wide range: E = E12 + γ sinh u, |E − E12| <= 100 eV, trapezoid in u (dE = γ cosh u du:
   * each Lorentzian becomes smooth, 1/(π cosh u) for the e1→e2 line); the Lorentzian tails
   * beyond ±100 eV hold 2γ/(π·100 eV) = 1.3e-5 of the total; brief's tolerance 1e-3 */
  size_t np = 40001;
  double umax = asinh(100.0 / g), du = 2.0 * umax / (double)(np - 1);
  double *E = malloc(np * sizeof *E), *A = malloc(np * sizeof *A);
  for (size_t k = 0; k < np; k++) E[k] = E12 + g * sinh(-umax + (double)k * du);
  assert_int_equal(ew_intersubband_absorption(r, Ns, fwhm, theta, n, np, E, A, NULL), EW_OK);
  double integral = 0.0;
  for (size_t k = 0; k < np; k++) {
    double wk = (k == 0 || k == np - 1) ? 0.5 : 1.0;
    integral += wk * A[k] * g * cosh(-umax + (double)k * du) * du;
  }
  print_message("intersubband: %zu e1 lines, sum f = %.4f, m*/m0 = %.4f, integral %.6e eV, "
                "analytic %.6e eV\n",
                nl, fsum, 1.0 / invm, integral, total);
  TU_NEAR(integral, total, 1e-3 * total, "Lorentzian sum rule, wide range");
  free(E);
  free(A);
  /* physical range [0, 1 eV] on a uniform mesh: against the analytic integral of the
   * truncated Lorentzians (1/π)[atan((1 − E_j)/γ) − atan((0 − E_j)/γ)], 1e-6 relative
   * (trapezoid error (h²/12)·|A'| at the ends, h = 10 µeV) */
  np = 100001;
  E = malloc(np * sizeof *E);
  A = malloc(np * sizeof *A);
  for (size_t k = 0; k < np; k++) E[k] = 1.0 * (double)k / (double)(np - 1);
  assert_int_equal(ew_intersubband_absorption(r, Ns, fwhm, theta, n, np, E, A, NULL), EW_OK);
  double trunc = 0.0, h = 1.0 / (double)(np - 1);
  integral = 0.0;
  for (size_t k = 0; k < np; k++) integral += ((k == 0 || k == np - 1) ? 0.5 : 1.0) * A[k] * h;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERSUBBAND || ln->lower != e1) continue;
    trunc += prefactor() * invm / n * Ns * geom * ln->oscillator_strength *
             (atan((1.0 - ln->energy_eV) / g) - atan((0.0 - ln->energy_eV) / g)) / M_PI;
  }
  TU_NEAR(integral, trunc, 1e-6 * trunc, "truncated Lorentzians, analytic");
  /* peak at the e1→e2 energy: the largest value on a 1 µeV mesh within ±5 meV of E12;
   * tolerance 2 µeV (mesh step, plus the shift from the other lines' tails, < 0.1 µeV:
   * slope/curvature estimate) */
  np = 10001;
  for (size_t k = 0; k < np; k++) E[k] = E12 - 5e-3 + 1e-6 * (double)k;
  assert_int_equal(ew_intersubband_absorption(r, Ns, fwhm, theta, n, np, E, A, NULL), EW_OK);
  size_t kmax = 0;
  for (size_t k = 1; k < np; k++)
    if (A[k] > A[kmax]) kmax = k;
  TU_NEAR(E[kmax], E12, 2e-6, "peak at E(e2) − E(e1)");
  print_message("intersubband peak %.5f per pass at %.4f eV (N_s %.1e cm^-2, FWHM %.0f meV, "
                "45°, n = 3.3)\n",
                A[kmax], E[kmax], Ns, fwhm);
  /* linear in N_s (exact up to rounding, 1e-14 relative); zero without electrons */
  double *A2 = malloc(np * sizeof *A2);
  assert_int_equal(ew_intersubband_absorption(r, 3.0 * Ns, fwhm, theta, n, np, E, A2, NULL), EW_OK);
  for (size_t k = 0; k < np; k += 500) TU_NEAR(A2[k], 3.0 * A[k], 1e-14 * A2[k], "linear in N_s");
  assert_int_equal(ew_intersubband_absorption(r, 0.0, fwhm, theta, n, np, E, A2, NULL), EW_OK);
  for (size_t k = 0; k < np; k += 500) TU_NEAR(A2[k], 0.0, 0.0, "N_s = 0");
  /* geometry sin²θ/cos θ (analytic): 60° vs 45°, and zero at normal incidence */
  assert_int_equal(ew_intersubband_absorption(r, Ns, fwhm, 60.0, n, np, E, A2, NULL), EW_OK);
  double r60 = (0.75 / 0.5) / (0.5 / sqrt(0.5));
  TU_NEAR(A2[kmax] / A[kmax], r60, 1e-12 * r60, "sin²θ/cos θ");
  assert_int_equal(ew_intersubband_absorption(r, Ns, fwhm, 0.0, n, np, E, A2, NULL), EW_OK);
  TU_NEAR(A2[kmax], 0.0, 0.0, "normal incidence: no E_z");
  free(A2);
  free(E);
  free(A);
  ew_result_free(r);
  tu_stack_free(st);
}

static void intersubband_errors(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = well(&st, 0.0);
  assert_non_null(r);
  double E = 0.1, A = -1;
  ew_error err;
  assert_int_equal(ew_intersubband_absorption(r, -1.0, 5, 45, 3.3, 1, &E, &A, &err), EW_ERR_USAGE);
  assert_int_equal(ew_intersubband_absorption(r, 1e11, 0.0, 45, 3.3, 1, &E, &A, &err),
                   EW_ERR_USAGE);
  assert_int_equal(ew_intersubband_absorption(r, 1e11, 5, 90, 3.3, 1, &E, &A, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "angle"));
  assert_int_equal(ew_intersubband_absorption(r, 1e11, 5, 45, 0.0, 1, &E, &A, &err), EW_ERR_USAGE);
  assert_int_equal(ew_intersubband_absorption(r, 1e11, 5, 45, 3.3, 1, NULL, &A, &err),
                   EW_ERR_USAGE);
  assert_int_equal(ew_interband_absorption(r, -2.0, 1, &E, &A, &err), EW_ERR_USAGE);
  ew_result_free(r);
  tu_stack_free(st);
}

/* ---- interband -----------------------------------------------------------------------------
 * Step heights S = te_strength · μ∥/m0 (TE weight × overlap: Chuang (2009) ch. 9, from
 * memory; μ∥ from the two subbands' in-plane masses), computed here independently of the
 * spectra code. */
static double step_sum(const ew_result *r) {
  double s = 0.0;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    int hh = r->states[ln->lower].band == EW_BAND_HH;
    double mu = 1.0 / (1.0 / r->states[ln->upper].inplane_mass + 1.0 / r->states[ln->lower].inplane_mass);
    s += (hh ? 0.5 : 1.0 / 6.0) * ln->overlap * mu;
  }
  return s;
}

static void interband_staircase_and_peaks(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = well(&st, 12.9);
  assert_non_null(r);
  assert_int_equal(ew_result_add_excitons(r, NULL), EW_OK);
  double fwhm = 1.0, g = 0.5e-3 * fwhm, Emax = 0.0;
  for (size_t j = 0; j < r->n_lines; j++)
    if (r->lines[j].kind == EW_LINE_INTERBAND && r->lines[j].energy_eV > Emax)
      Emax = r->lines[j].energy_eV;
  /* far above every edge (Emax + 3 eV): the sum of the step heights.  Tolerance: the arctan
   * step's deficit γ/(π·3 eV) = 5e-5 relative plus the exciton Lorentzians' tails, W γ/(π ΔE²)
   * with W < 1 eV: < 2e-5; 1e-4 relative */
  double E = Emax + 3.0, a, S = step_sum(r);
  assert_int_equal(ew_interband_absorption(r, fwhm, 1, &E, &a, NULL), EW_OK);
  print_message("interband: staircase far above the edges %.6f, sum of steps %.6f\n", a, S);
  TU_NEAR(a, S, 1e-4 * S, "sum of step heights");
  /* far below every edge: only Lorentzian tails, < 1e-3 of the staircase */
  E = 0.0;
  assert_int_equal(ew_interband_absorption(r, fwhm, 1, &E, &a, NULL), EW_OK);
  assert_true(a >= 0 && a < 1e-3 * S);
  /* exciton peaks at the pl_peak energies of e1–hh1 and e1–lh1: the largest value on a
   * 0.5 µeV mesh within ±2 meV; tolerance 2 µeV (mesh, and the shift by the step's slope
   * under the peak: slope/curvature ≈ γ⁴/(2W(E−Epl)²) ~ 1e-5 µeV, analytic estimate) */
  const char *holes[] = {"hh1", "lh1"};
  size_t e1 = state_index(r, "e1");
  size_t np = 8001;
  double *Es = malloc(np * sizeof *Es), *As = malloc(np * sizeof *As);
  for (int t = 0; t < 2; t++) {
    size_t h = state_index(r, holes[t]);
    const ew_line *ln = NULL;
    for (size_t j = 0; j < r->n_lines; j++)
      if (r->lines[j].kind == EW_LINE_INTERBAND && r->lines[j].upper == e1 &&
          r->lines[j].lower == h)
        ln = &r->lines[j];
    assert_non_null(ln);
    assert_true(ln->exciton_binding_eV > 0);
    for (size_t k = 0; k < np; k++) Es[k] = ln->pl_peak_eV - 2e-3 + 0.5e-6 * (double)k;
    assert_int_equal(ew_interband_absorption(r, fwhm, np, Es, As, NULL), EW_OK);
    size_t kmax = 0;
    for (size_t k = 1; k < np; k++)
      if (As[k] > As[kmax]) kmax = k;
    print_message("e1-%s: band to band %.5f eV, binding %.3f meV, peak at %.5f eV (%.2f)\n",
                  holes[t], ln->energy_eV, ln->exciton_binding_eV * 1e3, Es[kmax], As[kmax]);
    TU_NEAR(Es[kmax], ln->pl_peak_eV, 2e-6, "exciton peak at pl_peak");
  }
  /* without permittivity: no exciton peaks, the spectrum is exactly the arctan staircase
   * (analytic sum, 1e-12 relative) */
  for (size_t k = 0; k < 3; k++) st->layers[k].bands.eps_r = 0.0;
  for (size_t k = 0; k < np; k++) Es[k] = 1.4 + 1e-4 * (double)k;
  assert_int_equal(ew_interband_absorption(r, fwhm, np, Es, As, NULL), EW_OK);
  for (size_t k = 0; k < np; k += 97) {
    double want = 0.0;
    for (size_t j = 0; j < r->n_lines; j++) {
      const ew_line *ln = &r->lines[j];
      if (ln->kind != EW_LINE_INTERBAND) continue;
      int hh = r->states[ln->lower].band == EW_BAND_HH;
      double mu = 1.0 / (1.0 / r->states[ln->upper].inplane_mass +
                         1.0 / r->states[ln->lower].inplane_mass);
      want += (hh ? 0.5 : 1.0 / 6.0) * ln->overlap * mu *
              (0.5 + atan((Es[k] - ln->energy_eV) / g) / M_PI);
    }
    TU_NEAR(As[k], want, 1e-12 * (want + 1e-300), "arctan staircase");
  }
  free(Es);
  free(As);
  ew_result_free(r);
  tu_stack_free(st);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(intersubband_sum_rule_and_peak),
      cmocka_unit_test(intersubband_errors),
      cmocka_unit_test(interband_staircase_and_peaks),
  };
  return cmocka_run_group_tests_name("spectra", tests, NULL, NULL);
}
