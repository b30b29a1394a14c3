/* test_richardson.c — the error estimate of ew_solve (fine grid h, coarse grid 2h,
 * Richardson extrapolation E = E_h + (E_h − E_2h)/3, error_eV = |E_h − E_2h|/3) against an
 * analytic reference, through the public API only.
 *
 * Reference: the finite square well of width a between barriers of height V with the
 * BenDaniel–Duke matching (ψ and ψ'/m continuous; D. J. BenDaniel, C. B. Duke, Phys. Rev.
 * 152, 683 (1966)): even states (k/m_w) tan(ka/2) = κ/m_b, odd states −(k/m_w) cot(ka/2) =
 * κ/m_b, with ħ²k²/2m_w = E and ħ²κ²/2m_b = V − E (textbook result, e.g. G. Bastard, Wave
 * Mechanics Applied to Semiconductor Heterostructures (1988), ch. III).  Solved here by
 * bisection on each branch of ka/2, independent of the library.  The stack's outer faces are
 * hard walls: its barriers are thick enough that exp(−2κb) < 1e-14 for every level compared,
 * far below the errors tested.
 *
 * What must hold (the scheme is second order, so the extrapolated value is fourth order and
 * its error falls by ~(kh)² against the fine one's; measured gains ≥ 22 at h = 0.2 nm,
 * ≥ 79 at 0.1 nm, ≥ 330 at 0.05 nm):
 *   - the extrapolated error is at least 10× (h = 0.2 nm), 30× (0.1 nm), 100× (0.05 nm)
 *     below the fine-grid error (error_estimate off);
 *   - error_eV is a faithful estimate of the fine-grid error, within 25 % (the O(h⁴) terms:
 *     measured within 5 % at h = 0.2 nm), and bounds the extrapolated value's error;
 * for every band, with equal and with unequal masses.  A wrong coarse-grid value (a wrong
 * sample of the fine vector, a wrong coarse grid) or a wrong extrapolation step fails. */
#include <math.h>

#include "testutil.h"

#include "epiwell.h"

/* ħ²/2m0 in eV nm², CODATA 2018 (E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)):
 * ħ = 1.054571817e-34 J s, m0 = 9.1093837015e-31 kg, e = 1.602176634e-19 C */
#define HB2M0 (1.054571817e-34 * 1.054571817e-34 / (2.0 * 9.1093837015e-31) / 1.602176634e-19 * 1e18)

/* Bound levels (from the well bottom, eV) of the BenDaniel–Duke square well, ascending;
 * returns how many (≤ cap). */
static size_t square_well_levels(double a_nm, double V_eV, double mw, double mb, double *E,
                                 size_t cap) {
  size_t n = 0;
  /* θ = ka/2 on branches [jπ/2, (j+1)π/2): j even = even states (tan), j odd = odd (−cot) */
  double theta_max = sqrt(V_eV * mw / HB2M0) * a_nm / 2.0;
  for (int j = 0; n < cap && j * M_PI / 2 < theta_max; j++) {
    double lo = j * M_PI / 2, hi = fmin((j + 1) * M_PI / 2, theta_max);
    /* g(θ) = (k/m_w)·t(θ) − κ/m_b: −κ/m_b < 0 at the branch start, rising to +∞ (or to
       k/m_w·t > 0 = κ at θ_max), so a root exists iff g(hi) > 0 */
#define G(th)                                                                               \
  ((2.0 * (th) / a_nm) / mw * (j % 2 ? -1.0 / tan(th) : tan(th)) -                          \
   sqrt(fmax(0.0, (V_eV - HB2M0 * pow(2.0 * (th) / a_nm, 2) / mw) / HB2M0 * mb)) / mb)
    double b = hi * (1 - 1e-15);
    if (!(G(b) > 0)) continue;
    double x = lo + 1e-15;
    for (int it = 0; it < 200; it++) {
      double mid = 0.5 * (x + b);
      if (G(mid) > 0) b = mid;
      else x = mid;
    }
#undef G
    double th = 0.5 * (x + b);
    E[n++] = HB2M0 * pow(2.0 * th / a_nm, 2) / mw;
  }
  return n;
}

/* The state of r with the band and index of s, or SIZE_MAX. */
static size_t rt_twin(const ew_result *r, const ew_state *s) {
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (ew_result_state(r, i)->band == s->band && ew_result_state(r, i)->n == s->n) return i;
  return SIZE_MAX;
}

typedef struct {
  double Ec_b, Ev_b, Ec_w, Ev_w; /* eV */
  double me_b, mhh_b, mlh_b, me_w, mhh_w, mlh_w;
  double a_nm, b_nm;
} well;

static ew_result *solve_well(const ew_catalogue *cat, const well *w, double step, int estimate,
                             ew_stack **st) {
  char text[2048];
  snprintf(text, sizeof text,
           "grid_step = %.17g;\n"
           "materials = (\n"
           "  { name = \"bar\"; Ec = %.17g; Ev = %.17g; me = %.17g; mhh = %.17g; mlh = %.17g; },\n"
           "  { name = \"wel\"; Ec = %.17g; Ev = %.17g; me = %.17g; mhh = %.17g; mlh = %.17g; }\n"
           ");\n"
           "layers = (\n"
           "  { name = \"left\"; material = \"bar\"; thickness = %.17g; },\n"
           "  { name = \"well\"; material = \"wel\"; thickness = %.17g; },\n"
           "  { name = \"right\"; material = \"bar\"; thickness = %.17g; }\n"
           ");\n",
           step, w->Ec_b, w->Ev_b, w->me_b, w->mhh_b, w->mlh_b, w->Ec_w, w->Ev_w, w->me_w,
           w->mhh_w, w->mlh_w, w->b_nm, w->a_nm, w->b_nm);
  ew_options opt;
  ew_options_default(&opt);
  opt.error_estimate = estimate;
  opt.excitons = 0;
  return tu_solve_text(cat, text, st, &opt);
}

/* Compare every level of every band whose barrier decay gives exp(−2κb) < 1e-14. */
static void check_well(const well *w, double step, double min_gain) {
  ew_catalogue *cat = NULL; /* user materials only */
  ew_stack *s1, *s2;
  ew_result *est = solve_well(cat, w, step, 1, &s1), *raw = solve_well(cat, w, step, 0, &s2);
  assert_non_null(est);
  assert_non_null(raw);
  int compared = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    double V, mw, mb, edge, sign;
    if (b == EW_BAND_E) V = w->Ec_b - w->Ec_w, mw = w->me_w, mb = w->me_b, edge = w->Ec_w, sign = 1;
    else {
      V = w->Ev_w - w->Ev_b, edge = w->Ev_w, sign = -1;
      mw = b == EW_BAND_HH ? w->mhh_w : w->mlh_w;
      mb = b == EW_BAND_HH ? w->mhh_b : w->mlh_b;
    }
    double E[64];
    size_t n = square_well_levels(w->a_nm, V, mw, mb, E, 64);
    assert_int_equal(ew_result_band_count(est, (ew_band)b), n); /* the count, certified */
    for (size_t j = 0; j < n; j++) {
      double kappa = sqrt((V - E[j]) * mb / HB2M0);
      if (exp(-2 * kappa * w->b_nm) > 1e-14) continue;
      double exact = edge + sign * E[j];
      const ew_state *se = NULL, *sr = NULL;
      for (size_t i = 0; i < ew_result_state_count(est); i++)
        if (ew_result_state(est, i)->band == (ew_band)b && ew_result_state(est, i)->n == (int)j + 1)
          se = ew_result_state(est, i);
      for (size_t i = 0; i < ew_result_state_count(raw); i++)
        if (ew_result_state(raw, i)->band == (ew_band)b && ew_result_state(raw, i)->n == (int)j + 1)
          sr = ew_result_state(raw, i);
      assert_non_null(se);
      assert_non_null(sr);
      double e_fine = fabs(sr->energy_eV - exact), e_rich = fabs(se->energy_eV - exact);
      assert_true(sr->error_eV == -1.0); /* no estimate: -1 (epiwell.h) */
      if (!(e_rich * min_gain <= e_fine) || !(se->error_eV >= e_rich) ||
          !(se->error_eV >= 0.8 * e_fine && se->error_eV <= 1.25 * e_fine)) {
        print_error("%s (h = %g nm): exact %.12f, fine %.12f (err %.3g), extrapolated %.12f "
                    "(err %.3g), error_eV %.3g\n", se->label, step, exact, sr->energy_eV,
                    e_fine, se->energy_eV, e_rich, se->error_eV);
        fail();
      }
      compared++;
    }
  }
  assert_true(compared >= 5);
  ew_result_free(est);
  ew_result_free(raw);
  ew_stack_free(s1);
  ew_stack_free(s2);
}

/* GaAs/Al0.3Ga0.7As-like numbers (invented, parabolic): V_e = 0.25 eV, V_h = 0.15 eV */
static const well unequal = {0.25, -1.65, 0.0, -1.5, 0.092, 0.51, 0.10, 0.067, 0.35, 0.09, 8.0, 40.0};
static const well equal = {0.25, -1.65, 0.0, -1.5, 0.067, 0.35, 0.09, 0.067, 0.35, 0.09, 8.0, 40.0};

static void richardson_unequal_masses_default_step(void **s) { (void)s; check_well(&unequal, 0.05, 100); }
static void richardson_unequal_masses_coarse_step(void **s) { (void)s; check_well(&unequal, 0.2, 10); }
static void richardson_equal_masses(void **s) { (void)s; check_well(&equal, 0.1, 30); }

/* The reference itself: a deep well approaches the infinite well, E_n → n²π²ħ²/(2 m a²)
 * (textbook), from below; checks the bisection and the branch bookkeeping. */
static void reference_deep_well_limit(void **s) {
  (void)s;
  double E[8];
  size_t n = square_well_levels(10.0, 1e4, 0.067, 0.067, E, 8);
  assert_true(n == 8);
  for (size_t j = 0; j < 8; j++) {
    double inf = HB2M0 * pow((j + 1) * M_PI / 10.0, 2) / 0.067;
    assert_true(E[j] < inf);
    TU_NEAR(E[j], inf, 2e-2 * inf, "V = 1e4 eV: relative shift ~2/(κa) ~ 5e-3");
  }
}

/* ---- the order of the extrapolation where no closed form exists ------------------------
 * Kane electrons (nonparabolic.c computes their coarse values itself): with E(h) = E + C h²
 * + D h⁴ (Richardson 1911, as above), the fine values at h and h/2 differ by ¾ C h², the
 * extrapolated ones by O(h⁴).  So at h = 0.1 and 0.05 nm, for every level whose fine values
 * differ by more than 1e-6 eV (1e3 × the eigenvalue tolerance, 1e-9 eV):
 *   |E_x(h) − E_x(h/2)| ≤ 0.1 |E_f(h) − E_f(h/2)| + 1e-9 eV (measured ≤ 0.027),
 *   error_eV(h) = |E_f(h) − E_f(h/2)| · 4/3 within 5 % (the h⁴ terms; measured ≤ 2.1 %).
 * A coarse value of the wrong node, potential or vector moves E_x(h) by far more. */
static void richardson_order_kane_electrons(void **unused) {
  (void)unused;
  const char *text = "temperature = 77.0;\n"
                     "layers = (\n"
                     "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 30.0; },\n"
                     "  { name = \"well\"; material = \"GaAs\"; thickness = 8.0; },\n"
                     "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 30.0; }\n"
                     ");\n";
  ew_catalogue *cat = NULL;
  assert_int_equal(tu_load_catalogue(&cat), 0);
  double hs[2] = {0.1, 0.05};
  ew_stack *st[2][2];
  ew_result *r[2][2]; /* [step][estimate] */
  for (int a = 0; a < 2; a++)
    for (int e = 0; e < 2; e++) {
      ew_options opt;
      ew_options_default(&opt);
      opt.grid_step_nm = hs[a];
      opt.error_estimate = e;
      opt.excitons = 0;
      r[a][e] = tu_solve_text(cat, text, &st[a][e], &opt);
      assert_non_null(r[a][e]);
    }
  assert_string_not_equal(ew_result_model(r[0][1]), ""); /* (the model line names Kane) */
  assert_non_null(strstr(ew_result_model(r[0][1]), "Kane"));
  int compared = 0;
  for (size_t i = 0; i < ew_result_state_count(r[0][1]); i++) {
    const ew_state *x0 = ew_result_state(r[0][1], i);
    const ew_state *q[2][2] = {{NULL, NULL}, {NULL, NULL}};
    for (int a = 0; a < 2; a++)
      for (int e = 0; e < 2; e++)
        for (size_t j = 0; j < ew_result_state_count(r[a][e]); j++)
          if (!strcmp(ew_result_state(r[a][e], j)->label, x0->label)) q[a][e] = ew_result_state(r[a][e], j);
    assert_true(q[0][0] && q[1][0] && q[1][1]);
    assert_true(x0->error_eV >= 0); /* every level estimated */
    double dfine = fabs(q[0][0]->energy_eV - q[1][0]->energy_eV);
    double dx = fabs(q[0][1]->energy_eV - q[1][1]->energy_eV);
    if (dfine < 1e-6) continue;
    if (!(dx <= 0.1 * dfine + 1e-9) || !(fabs(x0->error_eV - dfine * 4 / 3) <= 0.05 * dfine * 4 / 3)) {
      print_error("%s: fine %.10f / %.10f (diff %.3g), extrapolated %.10f / %.10f (diff %.3g), "
                  "error_eV(%g nm) %.3g\n", x0->label, q[0][0]->energy_eV, q[1][0]->energy_eV,
                  dfine, q[0][1]->energy_eV, q[1][1]->energy_eV, dx, hs[0], x0->error_eV);
      fail();
    }
    if (getenv("RT_VERBOSE"))
      fprintf(stderr, "%s dfine %.3g dx/dfine %.3f est/(4/3 dfine) %.4f\n", x0->label, dfine,
              dx / dfine, x0->error_eV / (dfine * 4 / 3));
    compared++;
  }
  assert_true(compared >= 4);
  for (int a = 0; a < 2; a++)
    for (int e = 0; e < 2; e++) {
      ew_result_free(r[a][e]);
      ew_stack_free(st[a][e]);
    }
  ew_catalogue_free(cat);
}

/* ---- a doped stack: the self-consistent potential sampled onto the coarse grid ----------
 * No closed form, and the order test above does not apply: the potential itself comes from
 * a Poisson discretisation whose O(h²) error the extrapolation does not remove.  What does
 * hold: error_eV estimates the Schrödinger discretisation error at the final potential,
 * (h²/12)-weighted curvature of ψ, which for the electron levels the self-consistent
 * potential (a few tens of meV against a 0.25 eV well) changes little: it must stay within
 * a factor 1.5 of the same stack's undoped twin (measured 0.90–1.11 at h = 0.2, 0.1,
 * 0.05 nm).  Hole levels are not compared: the electrons' potential is a barrier for holes
 * and reshapes them (their estimates change by 0.1–20×).  Every level must be estimated.
 * A coarse potential sampled at the wrong nodes (shifted by one fine cell) makes the electron
 * estimates 10–50× larger or drops them (measured). */
static void richardson_self_consistent_potential(void **unused) {
  (void)unused;
  static const char *const text[2] = {
      "temperature = 77.0;\nnonparabolic = false;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 30.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 4.0; doping = { donors = 5e18; }; },\n"
      "  { name = \"well2\"; material = \"GaAs\"; thickness = 6.0; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 30.0; }\n);\n",
      "temperature = 77.0;\nnonparabolic = false;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 30.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 4.0; },\n"
      "  { name = \"well2\"; material = \"GaAs\"; thickness = 6.0; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 30.0; }\n);\n"};
  ew_catalogue *cat = NULL;
  assert_int_equal(tu_load_catalogue(&cat), 0);
  static const double hs[] = {0.2, 0.05};
  for (int a = 0; a < 2; a++) {
    ew_stack *st[2];
    ew_result *r[2];
    ew_options opt;
    ew_options_default(&opt);
    opt.grid_step_nm = hs[a];
    opt.excitons = 0;
    for (int k = 0; k < 2; k++) assert_non_null(r[k] = tu_solve_text(cat, text[k], &st[k], &opt));
    assert_false(isnan(ew_result_fermi_energy_eV(r[0])));
    assert_true(isnan(ew_result_fermi_energy_eV(r[1])));
    size_t ne = 0;
    for (size_t i = 0; i < ew_result_state_count(r[0]); i++) {
      const ew_state *d = ew_result_state(r[0], i);
      assert_true(d->error_eV >= 0);
      if (d->band != EW_BAND_E) continue;
      size_t j = rt_twin(r[1], d);
      assert_true(j != SIZE_MAX);
      double u = ew_result_state(r[1], j)->error_eV, ratio = d->error_eV / u;
      if (getenv("RT_VERBOSE")) fprintf(stderr, "h %g %s ratio %.3f\n", hs[a], d->label, ratio);
      if (!(ratio >= 1 / 1.5 && ratio <= 1.5)) {
        print_error("h = %g nm, %s: error_eV %.3g doped, %.3g undoped (ratio %.3g)\n", hs[a],
                    d->label, d->error_eV, u, ratio);
        fail();
      }
      ne++;
    }
    assert_true(ne >= 2);
    for (int k = 0; k < 2; k++) {
      ew_result_free(r[k]);
      ew_stack_free(st[k]);
    }
  }
  ew_catalogue_free(cat);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(reference_deep_well_limit),
      cmocka_unit_test(richardson_unequal_masses_default_step),
      cmocka_unit_test(richardson_unequal_masses_coarse_step),
      cmocka_unit_test(richardson_equal_masses),
      cmocka_unit_test(richardson_order_kane_electrons),
      cmocka_unit_test(richardson_self_consistent_potential),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
