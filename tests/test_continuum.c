/* test_continuum.c — open-boundary continuum (continuum.c): the bound-to-continuum
 * oscillator strength of a square well against the analytic finite well, the
 * Thomas–Reiche–Kuhn sum over bound and continuum states, independence of the outer
 * barriers' thickness (the box), holes, and the absorption spectrum built on it. */
#include <math.h>

#include "testutil.h"
#include "roundtrip.h"

#include "constants.h"
#include "continuum.h"
#include "line_name.h"
#include "output.h"
#include "spectra.h"
#include "spectra_workflow.h"

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

/* Box independence: doubling both outer barriers (60 → 120 nm) leaves the broadened
 * absorption spectrum unchanged (the only change is e1's tail at the hard walls of the bound
 * solve, e^{−2κ·60 nm}, and rounding: measured 4e-12 of the peak); a closed box of the same
 * size would move its continuum lines by their spacing (several meV).  Stated tolerance:
 * 1e-6 of the peak. */
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
  double dmax = 0.0;
  for (int k = 0; k < 400; k++) {
    TU_NEAR(A[1][k], A[0][k], 1e-6 * peak, "box independence");
    dmax = fmax(dmax, fabs(A[1][k] - A[0][k]));
  }
  print_message("box 60 -> 120 nm: max change %.2e of the peak\n", dmax / peak);
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


/* ---- catalogue stacks, the workflows and the outputs --------------------------------------- */
static ew_catalogue *CAT;

static ew_result *solve_path(const char *path, ew_stack **st, int nonparabolic) {
  ew_error err;
  *st = NULL;
  if (ew_stack_read_file(path, CAT, st, &err) != EW_OK) return NULL;
  if (!nonparabolic) (*st)->nonparabolic = 0;
  ew_result *r = NULL;
  if (ew_solve(*st, NULL, &r, &err) != EW_OK) return NULL;
  return r;
}

/* The parabolic sum over catalogue layers: examples/detector_well.cfg with nonparabolic off
 * gives 1 (the tolerance of trk_sum_is_one).  With the Kane mass the bound lines and the
 * continuum come from different H(E): the sum falls short (continuum.h); measured 0.935 for
 * this well, and the check keeps it within [0.85, 1) so that a change shows. */
static void trk_catalogue_parabolic_and_kane(void **state) {
  (void)state;
  ew_stack *st;
  double b, c;
  ew_result *r = solve_path("examples/detector_well.cfg", &st, 0);
  assert_non_null(r);
  assert_int_equal(ew_continuum_sum_rule_e1(r, &b, &c, NULL), EW_OK);
  TU_NEAR(b + c, 1.0, 1e-3, "Thomas-Reiche-Kuhn, parabolic catalogue well");
  ew_result_free(r);
  ew_stack_free(st);
  r = solve_path("examples/detector_well.cfg", &st, 1);
  assert_non_null(r);
  assert_int_equal(ew_continuum_sum_rule_e1(r, &b, &c, NULL), EW_OK);
  print_message("Kane detector well: bound %.4f continuum %.4f sum %.4f\n", b, c, b + c);
  assert_true(b + c > 0.85 && b + c < 1.0);
  ew_result_free(r);
  ew_stack_free(st);
}

/* Every photon energy's df/dE alone and `count` of them in one call (several shots share
 * each pass over the stack): the same bits.  The energies mix the closed range below the
 * threshold, one lead open (the left barrier of the asymmetric well is the higher, so a shot
 * with one solution rides beside shots with two) and, for the Kane well, energies beyond the
 * cap of its masses beside energies below it. */
static void check_many_equals_single(ew_continuum *c, double thr) {
  double x[11], many[11];
  const double at[11] = {0.5, 1.0001, 1.02, 1.3, 0.9, 1.7, 3.0, 9.0, 1.05, 40.0, 2.2};
  for (int j = 0; j < 11; j++) x[j] = thr * at[j];
  ew_continuum_dfdE_many(c, 11, x, many);
  int nonzero = 0;
  for (int j = 0; j < 11; j++) {
    double one = ew_continuum_dfdE(c, x[j]);
    assert_memory_equal(&one, &many[j], sizeof one);
    nonzero += many[j] != 0.0;
  }
  assert_true(nonzero >= 8); /* only the two below the threshold are 0 */
}

static void dfdE_many_equals_single(void **state) {
  (void)state;
  ew_continuum *c;
  ew_result *r = NULL;
  ew_stack *st;
  for (int side = 0; side < 2; side++) { /* the higher barrier on the left, then the right */
    tu_layer ly[] = {{40.0, side ? 0.30 : 0.40, -1.8, 0.09, 0.40, 0.10},
                     {5.0, 0.00, -1.5, 0.067, 0.35, 0.09},
                     {40.0, side ? 0.40 : 0.30, -1.8, 0.09, 0.40, 0.10}};
    st = tu_stack(3, ly);
    ew_options opt;
    ew_options_default(&opt);
    opt.excitons = 0;
    assert_int_equal(ew_solve(st, &opt, &r, NULL), EW_OK);
    assert_int_equal(ew_continuum_new(r, e1_of(r), &c, NULL), EW_OK);
    check_many_equals_single(c, ew_continuum_threshold_eV(c));
    ew_continuum_free(c);
    ew_result_free(r);
    tu_stack_free(st);
  }
  r = solve_path("examples/detector_well.cfg", &st, 1);
  assert_non_null(r);
  assert_int_equal(ew_continuum_new(r, e1_of(r), &c, NULL), EW_OK);
  check_many_equals_single(c, ew_continuum_threshold_eV(c));
  ew_continuum_free(c);
  ew_result_free(r);
  ew_stack_free(st);
}

/* The bound-to-continuum detector example against the measured peak of its type: B. F.
 * Levine, J. Appl. Phys. 74, R1 (1993) (from memory): GaAs wells of about 40 Å between
 * Al(0.25–0.3)GaAs barriers absorb bound-to-continuum with peaks near 9 µm (8–10 µm over the
 * samples).  Tolerance 1.2 µm: a recalled value, and one per cent of Al in the barriers
 * moves the threshold by about 8 meV, 0.5 µm here. */
static void levine_bound_to_continuum_peak(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = solve_path("examples/btc_detector.cfg", &st, 1);
  assert_non_null(r);
  assert_int_equal(r->band_count[EW_BAND_E], 1); /* one bound level: bound-to-continuum */
  ew_wf_spectra sp;
  assert_int_equal(ew_wf_spectra_compute(r, 45.0, 3.3, &sp, NULL), EW_OK);
  assert_non_null(sp.continuum);
  ew_wf_peak pk[8];
  size_t n = ew_wf_spectra_peaks(&sp, 1, pk, 8);
  assert_int_equal(n, 1);
  double lam_um = EW_HC_EVNM / pk[0].E_eV / 1e3;
  print_message("btc_detector: peak %.4f eV = %.3f um, threshold %.4f eV\n", pk[0].E_eV, lam_um,
                sp.threshold_eV);
  TU_NEAR(lam_um, 9.0, 1.2, "Levine 1993 bound-to-continuum peak (from memory)");
  assert_true(pk[0].E_eV > sp.threshold_eV); /* above the barrier top */
  ew_wf_spectra_free(&sp);
  ew_result_free(r);
  ew_stack_free(st);
}

/* The spectra CSV read back: every row's continuum column equals the library's
 * ew_intersubband_continuum_absorption at that energy, and the bound column the bound one. */
static void spectra_csv_roundtrip(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = solve_path("examples/btc_detector.cfg", &st, 1);
  assert_non_null(r);
  ew_spectra *sp;
  assert_int_equal(ew_spectra_compute(r, 45.0, 3.3, &sp, NULL), EW_OK);
  char path[] = "/tmp/epiwell-continuum-XXXXXX";
  int fd = mkstemp(path);
  assert_true(fd >= 0);
  FILE *f = fdopen(fd, "w");
  assert_int_equal(ew_spectra_write_csv(sp, f, NULL), EW_OK);
  fclose(f);
  rcsv c;
  assert_int_equal(rcsv_read(path, &c), 0);
  unlink(path);
  int cE = rcsv_col(&c, "E_eV"), cb = rcsv_col(&c, "intersubband_fraction"),
      cc = rcsv_col(&c, "intersubband_continuum_fraction");
  assert_true(cE == 0 && cb == 2 && cc == 3 && c.ncol == 4);
  size_t n = 0;
  double *E = malloc(c.nrows * sizeof *E), *A = malloc(c.nrows * sizeof *A),
         *B = malloc(c.nrows * sizeof *B);
  /* every row, as the workflow evaluates both spectra on every row of the union grid */
  for (size_t k = 0; k < c.nrows; k++) E[n++] = rcsv_num(&c, k, cE);
  assert_true(n >= 2 * EW_WF_SPECTRUM_POINTS - 1);
  assert_int_equal(ew_intersubband_continuum_absorption(r, r->stack->sheet_density_cm2,
                                                        r->stack->linewidth_meV, 45.0, 3.3, n, E,
                                                        A, NULL), EW_OK);
  assert_int_equal(ew_intersubband_absorption(r, r->stack->sheet_density_cm2,
                                              r->stack->linewidth_meV, 45.0, 3.3, n, E, B, NULL),
                   EW_OK);
  double amax = 0.0;
  for (size_t k = 0; k < n; k++) amax = fmax(amax, A[k]);
  assert_true(amax > 1e-3);
  for (size_t k = 0, q = 0; k < c.nrows; k++) {
    /* + 1e-8 of the peak: the energies read back with 10 digits sample the states 1e-10 apart */
    RT_SAME(rcsv_num(&c, k, cc), A[q], rt_tol_sig(A[q], 10) + 1e-8 * amax, "continuum column");
    RT_SAME(rcsv_num(&c, k, cb), B[q], rt_tol_sig(B[q], 10) + 1e-15, "bound column");
    q++;
  }
  free(E), free(A), free(B);
  rcsv_free(&c);
  ew_spectra_free(sp);
  ew_result_free(r);
  ew_stack_free(st);
}

/* The solve JSON's "sum_rule" read back: from "e1", bound and continuum as the library. */
static void json_sum_rule_roundtrip(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = solve_path("examples/detector_well.cfg", &st, 1);
  assert_non_null(r);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_result_write_json(r, m, NULL), EW_OK);
  fclose(m);
  rj root;
  assert_int_equal(rj_parse(buf, &root), 0);
  const rj *s = rj_get(&root, "sum_rule");
  assert_non_null(s);
  double b, c;
  assert_int_equal(ew_continuum_sum_rule_e1(r, &b, &c, NULL), EW_OK);
  assert_string_equal(rj_str(s, "from"), "e1");
  RT_JSON(s, "bound", b, "sum_rule");
  RT_JSON(s, "continuum", c, "sum_rule");
  assert_true(b > 0.5 && c > 0.01);
  rj_free(&root);
  free(buf);
  ew_result_free(r);
  ew_stack_free(st);
  /* in a field there is no continuum: null */
  tu_layer ly[] = {{20, 0.3, -1.8, 0.09, 0.4, 0.1}, {6, 0, -1.5, 0.067, 0.35, 0.09},
                   {20, 0.3, -1.8, 0.09, 0.4, 0.1}};
  st = tu_stack(3, ly);
  st->field_kV_cm = 10.0;
  assert_int_equal(ew_solve(st, NULL, &r, NULL), EW_OK);
  m = open_memstream(&buf, &len);
  assert_int_equal(ew_result_write_json(r, m, NULL), EW_OK);
  fclose(m);
  assert_int_equal(rj_parse(buf, &root), 0);
  s = rj_get(&root, "sum_rule");
  assert_true(s && s->t == RJ_NULL);
  rj_free(&root);
  free(buf);
  ew_result_free(r);
  tu_stack_free(st);
}

/* match --line e2-top --target 0meV: the well width where e2 reaches the barrier top,
 * checked by a separate solve there (below_top of e2 within 1e-6 eV of 0: Brent's and the
 * edge bisection's 2e-7 relative in the width times dE/dt ≈ 0.1 eV/nm is 1e-7 eV), and a
 * width 1e-3 nm narrower has no e2 while 1e-3 nm wider has one just below the top.  The
 * same with a 10 meV target, within 1e-6 eV of 0.010 eV. */
static void match_level_at_top(void **state) {
  (void)state;
  /* the third run without the Richardson estimate: the reported levels are the fine-grid
     eigenvalues, below the top wherever bound, so the root is the edge itself (no sign
     change to bracket); with the estimate e2 can sit a few µeV above the top near the edge */
  const char *targets[3] = {"0meV", "10meV", "0meV"};
  for (int t = 0; t < 3; t++) {
    ew_options opt;
    ew_options_default(&opt);
    opt.error_estimate = t < 2;
    ew_match *mt;
    assert_int_equal(ew_match_create(&mt, NULL), EW_OK);
    assert_int_equal(ew_match_vary(mt, "well.thickness=4:8", NULL), EW_OK);
    assert_int_equal(ew_match_line(mt, "e2-top", NULL), EW_OK);
    assert_int_equal(ew_match_target(mt, targets[t], NULL), EW_OK);
    assert_int_equal(ew_match_compute(mt, "examples/btc_detector.cfg", CAT, &opt, 1, 0, NULL), EW_OK);
    assert_int_equal(ew_match_solution_count(mt), 1);
    double w = ew_match_solution_value(mt, 0, 0);
    ew_match_free(mt);
    const char *keys[1] = {"well.thickness"};
    double want = t == 1 ? 0.010 : 0.0;
    for (int side = -1; side <= 1; side++) {
      char *text = rt_slurp("examples/btc_detector.cfg");
      double v = w + 1e-3 * side;
      ew_stack *st;
      ew_result *r;
      assert_int_equal(ew_stack_read_string_set(text, "btc", CAT, 1, keys, &v, &st, NULL), EW_OK);
      free(text);
      assert_int_equal(ew_solve(st, &opt, &r, NULL), EW_OK);
      size_t e2 = ew_wf_level_index(r, EW_BAND_E, 2);
      if (side == 0) {
        assert_true(e2 != SIZE_MAX);
        TU_NEAR(ew_result_state_below_top_eV(r, e2), want, 1e-6, "separate solve at the match");
        if (t == 2) assert_true(ew_result_state_below_top_eV(r, e2) >= 0);
      } else if (t != 1) {
        assert_true(side < 0 ? e2 == SIZE_MAX : e2 != SIZE_MAX);
      }
      ew_result_free(r);
      ew_stack_free(st);
    }
  }
  /* 0 is a target only for a level's distance below the top */
  ew_match *mt;
  assert_int_equal(ew_match_create(&mt, NULL), EW_OK);
  assert_int_equal(ew_match_vary(mt, "well.thickness=4:8", NULL), EW_OK);
  assert_int_equal(ew_match_line(mt, "e1-e2", NULL), EW_OK);
  assert_int_equal(ew_match_target(mt, "0meV", NULL), EW_OK);
  assert_int_equal(ew_match_compute(mt, "examples/btc_detector.cfg", CAT, NULL, 1, 0, NULL),
                   EW_ERR_USAGE);
  ew_match_free(mt);
}

/* A doped sweep's depolarised columns read back (CSV and JSON) against the library: each
 * e1-e2_depol_eV cell equals the solve's e1-e2 line plus its depolarisation shift (the
 * depol_meV of the table, ew_sp_info.depol_eV) at that point; an undoped sweep has none. */
static void sweep_depol_roundtrip(void **state) {
  (void)state;
  for (int fmt = 0; fmt < 2; fmt++) {
    ew_sweep *sw;
    assert_int_equal(ew_sweep_create(&sw, NULL), EW_OK);
    assert_int_equal(ew_sweep_vary(sw, "well.thickness=6:7:0.5", NULL), EW_OK);
    assert_int_equal(ew_sweep_open(sw, "examples/doped_detector.cfg", CAT, NULL, NULL), EW_OK);
    char *buf = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&buf, &len);
    assert_int_equal(ew_sweep_compute(sw, NULL, fmt ? NULL : m, fmt ? m : NULL, NULL), EW_OK);
    fclose(m);
    ew_sweep_free(sw);
    double width[3], depol[3];
    size_t rows = 0;
    if (fmt == 0) {
      char path[] = "/tmp/epiwell-sweep-XXXXXX";
      int fd = mkstemp(path);
      assert_true(fd >= 0 && write(fd, buf, len) == (ssize_t)len);
      close(fd);
      rcsv c;
      assert_int_equal(rcsv_read(path, &c), 0);
      unlink(path);
      int cw = rcsv_col(&c, "well.thickness"), cd = rcsv_col(&c, "e1-e2_depol_eV");
      assert_true(cw >= 0 && cd >= 0 && cd == (int)c.ncol - 5); /* before hh, lh and warnings */
      for (size_t k = 0; k < c.nrows && rows < 3; k++, rows++)
        width[rows] = rcsv_num(&c, k, cw), depol[rows] = rcsv_num(&c, k, cd);
      rcsv_free(&c);
    } else {
      rj root;
      assert_int_equal(rj_parse(buf, &root), 0);
      const rj *pts = rj_get(&root, "points");
      assert_true(pts && pts->t == RJ_ARR && pts->n == 3);
      for (size_t k = 0; k < 3; k++, rows++)
        width[k] = rj_num(&pts->item[k], "well.thickness"),
        depol[k] = rj_num(&pts->item[k], "e1-e2_depol_eV");
      rj_free(&root);
    }
    free(buf);
    assert_int_equal(rows, 3);
    for (size_t k = 0; k < 3; k++) {
      const char *keys[1] = {"well.thickness"};
      char *text = rt_slurp("examples/doped_detector.cfg");
      ew_stack *st;
      ew_result *r;
      assert_int_equal(ew_stack_read_string_set(text, "d", CAT, 1, keys, &width[k], &st, NULL), EW_OK);
      free(text);
      ew_options o;
      ew_options_default(&o);
      o.excitons = 0;
      assert_int_equal(ew_solve(st, &o, &r, NULL), EW_OK);
      assert_non_null(r->sp);
      size_t e1 = ew_wf_level_index(r, EW_BAND_E, 1), e2 = ew_wf_level_index(r, EW_BAND_E, 2);
      double want = NAN;
      for (size_t j = 0; j < r->n_lines; j++)
        if (r->lines[j].lower == e1 && r->lines[j].upper == e2)
          want = r->lines[j].energy_eV + r->sp->depol_eV[j];
      assert_true(want > 0.14 && want < 0.18); /* 162.7 meV at 6 nm, the table's depol_meV */
      RT_SAME(depol[k], want, rt_tol_sig(want, 10), "e1-e2_depol_eV");
      ew_result_free(r);
      ew_stack_free(st);
    }
  }
}

static int setup(void **state) {
  (void)state;
  return ew_catalogue_load("materials", &CAT, NULL) == EW_OK ? 0 : -1;
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(CAT);
  return 0;
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(dfdE_against_finite_well),
      cmocka_unit_test(trk_sum_is_one),
      cmocka_unit_test(trk_holes),
      cmocka_unit_test(box_independent),
      cmocka_unit_test(spectrum_area),
      cmocka_unit_test(trk_catalogue_parabolic_and_kane),
      cmocka_unit_test(dfdE_many_equals_single),
      cmocka_unit_test(levine_bound_to_continuum_peak),
      cmocka_unit_test(spectra_csv_roundtrip),
      cmocka_unit_test(json_sum_rule_roundtrip),
      cmocka_unit_test(match_level_at_top),
      cmocka_unit_test(sweep_depol_roundtrip),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
