/* test_physics.c — fields, grading and monolayer thicknesses against analytic results. */
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>

#include "testutil.h"

#include "constants.h"
#include "alloy.h"
#include "bound.h"
#include "eigen.h"
#include "hamiltonian.h"
#include "nonparabolic.h"
#include "result.h"
#include "solve.h"

static const double K = EW_HB2M0_EVNM2;
static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  return tu_load_catalogue(&cat);
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

static ew_result *solve_text(const char *text, ew_stack **st, const ew_options *opt) {
  return tu_solve_text(cat, text, st, opt);
}

/* electron levels in order */
static const ew_state *elec(const ew_result *r, int n) {
  for (size_t i = 0; i < ew_result_state_count(r); i++) {
    const ew_state *s = ew_result_state(r, i);
    if (s->band == EW_BAND_E && s->n == n) return s;
  }
  return NULL;
}

/* Triangular well: a hard wall and a uniform field F.  E_n = (ħ²e²F²/2m)^{1/3} a_n with a_n the
 * zeros of Ai(−x): 2.33811, 4.08795, 5.52056 (M. Abramowitz, I. A. Stegun, Handbook of
 * Mathematical Functions (1964), Table 10.13).  The wall is a 10 eV step: ψ vanishes about
 * 1/κ = sqrt(K/(m V0)) = 0.24 nm inside it, so the equivalent hard wall sits 1/κ beyond the
 * face and its potential is F/κ lower (a first-order correction; what remains is at most of
 * order (1/κ)² over the 4.8 nm Airy length squared, and measures 1.8e-5 for all three levels
 * against the 1e-8 of the discretisation): tolerance 1e-4. */
static void triangular_well(void **state) {
  (void)state;
  const char *text = "temperature = 300.0; field = 50.0;\n"
                     "materials = ( { name = \"wall\"; Ec = 10.0; Ev = -10.0; me = 0.067; mhh = 0.4; mlh = 0.1; },\n"
                     "              { name = \"chan\"; Ec = 0.0; Ev = -1.5; me = 0.067; mhh = 0.4; mlh = 0.1; } );\n"
                     "layers = ( { material = \"wall\"; thickness = 2.0; },\n"
                     "           { material = \"chan\"; thickness = 150.0; },\n"
                     "           { material = \"chan\"; thickness = 5.0; } );\n";
  ew_stack *st;
  ew_result *r = solve_text(text, &st, NULL);
  assert_non_null(r);
  double F = 50.0 * 1e-4; /* eV/nm */
  double kappa = sqrt(0.067 * 10.0 / K);
  double wall = F * (2.0 - 1.0 / kappa - 0.5 * st->total_nm); /* at the equivalent hard wall */
  double scale = cbrt(K / 0.067 * F * F);
  const double a[] = {2.33811, 4.08795, 5.52056};
  for (int n = 1; n <= 3; n++) {
    const ew_state *s = elec(r, n);
    assert_non_null(s);
    double want = scale * a[n - 1];
    TU_NEAR(s->energy_eV - wall, want, 1e-4 * want, "Airy zeros, 1e-4");
  }
  ew_result_free(r);
  ew_stack_free(st);
}

/* Second-order Stark shift of the ground state of a deep well, infinite-well perturbation
 * theory: ΔE = −(15 − π²)/(24π⁴) e²F² m L⁴/ħ² (e.g. G. Bastard, E. E. Mendez, L. L. Chang,
 * L. Esaki, Phys. Rev. B 28, 3241 (1983), from memory; D. A. B. Miller et al., Phys. Rev. B
 * 32, 1043 (1985)).  Finite barriers widen the effective well: the computed shift must lie
 * between the formula at the geometric width L and at L + 2/κ (penetration on both sides),
 * with 5 % allowance above the latter. */
static double stark_formula(double F, double L, double m) {
  return (15 - M_PI * M_PI) / (24 * pow(M_PI, 4)) * F * F * m * pow(L, 4) / (2 * K);
}

static void stark_shift(void **state) {
  (void)state;
/* A literal template so that -Wformat=2 checks its arguments. */
#define STACK_TEMPLATE_1 "temperature = 300.0; field = %g;\n" \
                    "materials = ( { name = \"bar\"; Ec = 10.0; Ev = -10.0; me = 0.067; mhh = 0.4; mlh = 0.1; },\n" \
                    "              { name = \"w\"; Ec = 0.0; Ev = -1.5; me = 0.067; mhh = 0.4; mlh = 0.1; } );\n" \
                    "layers = ( { material = \"bar\"; thickness = 6.0; },\n" \
                    "           { material = \"w\"; thickness = 10.0; },\n" \
                    "           { material = \"bar\"; thickness = 6.0; } );\n"
  char text[1024];
  double E[2];
  for (int k = 0; k < 2; k++) {
    snprintf(text, sizeof text, STACK_TEMPLATE_1, k ? 10.0 : 0.0);
    ew_stack *st;
    ew_result *r = solve_text(text, &st, NULL);
    assert_non_null(r);
    E[k] = elec(r, 1)->energy_eV;
    ew_result_free(r);
    ew_stack_free(st);
  }
  double shift = E[0] - E[1], F = 10.0 * 1e-4, kappa = sqrt(0.067 * 10.0 / K);
  double lo = stark_formula(F, 10.0, 0.067), hi = 1.05 * stark_formula(F, 10.0 + 2 / kappa, 0.067);
  print_message("Stark shift at 10 kV/cm: %.4g µeV (bracket %.4g … %.4g µeV)\n", shift * 1e6,
                lo * 1e6, hi * 1e6);
  assert_true(shift > lo && shift < hi);
}

/* A parabolic well (digital-alloy style grading of a user alloy with linear Ec(x) and equal
 * masses) has equally spaced levels E_n = (n + 1/2) ħω, ħω = sqrt(ħ² k / m), k = 8 ΔV / W²
 * (harmonic oscillator, analytic).  Tolerances: 3e-4 ħω for the ground state and the first
 * two spacings (the 257-sample grading; measured ≤ 7.4e-5), 2e-3 ħω for the next two, whose
 * levels (up to 5.5 ħω) reach where the parabola stops at ΔV = 0.3 eV ≈ 7.3 ħω (measured
 * 1.9e-4 and 1.3e-3). */
static void parabolic_well(void **state) {
  (void)state;
  const char *text = "temperature = 300.0;\n"
                     "materials = ( { name = \"A\"; Ec = 0.3; Ev = -1.8; me = 0.067; mhh = 0.4; mlh = 0.1; },\n"
                     "              { name = \"B\"; Ec = 0.0; Ev = -1.5; me = 0.067; mhh = 0.4; mlh = 0.1; } );\n"
                     "alloys = ( { name = \"AB\"; first = \"A\"; second = \"B\"; } );\n"
                     "layers = ( { material = \"A\"; thickness = 20.0; },\n"
                     "           { name = \"pw\"; material = \"AB\"; thickness = 40.0;\n"
                     "             grade = { profile = \"parabolic\"; x_centre = 0.0; x_edge = 1.0; }; },\n"
                     "           { material = \"A\"; thickness = 20.0; } );\n";
  ew_stack *st;
  ew_result *r = solve_text(text, &st, NULL);
  assert_non_null(r);
  double k = 8 * 0.3 / (40.0 * 40.0), hw = sqrt(2 * K * k / 0.067);
  TU_NEAR(elec(r, 1)->energy_eV, 0.5 * hw, 3e-4 * hw, "harmonic ground state");
  for (int n = 1; n <= 4; n++)
    TU_NEAR(elec(r, n + 1)->energy_eV - elec(r, n)->energy_eV, hw, (n <= 2 ? 3e-4 : 2e-3) * hw,
            "equal spacing");
  ew_result_free(r);
  ew_stack_free(st);
}

/* A linear grade puts the composition's band edge at each node: Ec of AlGaAs graded 0 → 0.3
 * at the centre equals Ec of Al0.15Ga0.85As (catalogue, same rule) within 2 meV (the bowing
 * makes Ec(x) slightly curved between the 257 samples: far below that). */
static void linear_grade_and_monolayers(void **state) {
  (void)state;
  const char *text = "temperature = 300.0;\n"
                     "layers = ( { material = \"AlGaAs\"; x = 0.3; thickness = 20.0; },\n"
                     "           { name = \"ramp\"; material = \"AlGaAs\"; thickness = 20.0;\n"
                     "             grade = { profile = \"linear\"; x_start = 0.0; x_end = 0.3; }; },\n"
                     "           { name = \"w\"; material = \"GaAs\"; thickness_ml = 23; },\n"
                     "           { material = \"AlGaAs\"; x = 0.3; thickness = 20.0; } );\n";
  ew_stack *st;
  ew_result *r = solve_text(text, &st, NULL);
  assert_non_null(r);
  ew_bands mid;
  assert_int_equal(ew_material_bands(cat, "AlGaAs", 0.15, 300.0, &mid, NULL), EW_OK);
  TU_NEAR(ew_stack_edge_at(st, EW_BAND_E, 30.0), mid.Ec_eV, 2e-3, "graded Ec at the centre");
  /* one monolayer of [001] zincblende is a/2 (GaAs: a = 0.565325 nm, Vurgaftman 2001, from
     memory): 23 ML = 6.5012 nm */
  TU_NEAR(st->layers[2].thickness_nm, 23 * 0.565325 / 2, 1e-9, "23 monolayers of GaAs");
  ew_result_free(r);
  ew_stack_free(st);
}


/* Kane non-parabolicity in a deep well against the same model solved analytically.  For a
 * hard-wall well of equivalent width L_n the level obeys E = K k² m0/m(E), k = nπ/L_n, with
 * the Kane mass m(E) of src/nonparabolic.h (E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957);
 * D. F. Nelson, R. C. Miller, D. A. Kleinman, Phys. Rev. B 35, 7770 (1987)).  L_n is read off
 * the parabolic solution of the same stack and corrected for the change of the penetration
 * depth δ = sqrt(m_b K/(V − E))/m_w(E) (BenDaniel–Duke matching at a high wall) as the well
 * mass grows; the solver must reproduce the non-parabolic lowering of e1…e3 to 10 % of its
 * size. */
static void kane_deep_well(void **state) {
  (void)state;
/* A literal template so that -Wformat=2 checks its arguments. */
#define STACK_TEMPLATE_2 "temperature = 300.0; nonparabolic = %s;\n" \
                    "materials = ( { name = \"wall\"; Ec = 10.0; Ev = -2.0; me = 0.01; mhh = 0.4; mlh = 0.1; } );\n" \
                    "layers = ( { material = \"wall\"; thickness = 4.0; },\n" \
                    "           { name = \"w\"; material = \"GaAs\"; thickness = 8.0; },\n" \
                    "           { material = \"wall\"; thickness = 4.0; } );\n"
  char text[1024];
  ew_stack *st[2];
  ew_result *r[2];
  for (int k = 0; k < 2; k++) {
    snprintf(text, sizeof text, STACK_TEMPLATE_2, k ? "true" : "false");
    r[k] = solve_text(text, &st[k], NULL);
    assert_non_null(r[k]);
  }
  const ew_bands *b = &st[1]->layers[1].bands;
  assert_true(b->Ep_eV > 0);
  for (int n = 1; n <= 3; n++) {
    double ec = b->Ec_eV;
    double Epar = elec(r[0], n)->energy_eV - ec, Enp = elec(r[1], n)->energy_eV - ec;
    const double V = 10.0 - ec, mb = 0.01;
    double Leff = n * M_PI / sqrt(Epar * b->me / K); /* equivalent hard-wall width */
    double L0 = Leff - 2 * sqrt(mb * K / (V - Epar)) / b->me;
    double lo = 0.0, hi = Epar; /* E m(E)/m0 = K (nπ/(L0 + 2δ(E)))² has one root below Epar */
    for (int it = 0; it < 200; it++) {
      double mid = 0.5 * (lo + hi), m = ew_kane_mass(b, mid);
      double Ln = L0 + 2 * sqrt(mb * K / (V - mid)) / m, kk = n * M_PI / Ln;
      if (mid * m < K * kk * kk) lo = mid;
      else hi = mid;
    }
    double pred = 0.5 * (lo + hi);
    print_message("e%d: parabolic %.4f, Kane %.4f, analytic Kane %.4f eV\n", n, Epar, Enp, pred);
    assert_true(Enp < Epar);
    TU_NEAR(Enp, pred, 0.1 * (Epar - pred), "Kane infinite-well dispersion, 10 % of the shift");
  }
  for (int k = 0; k < 2; k++) {
    ew_result_free(r[k]);
    ew_stack_free(st[k]);
  }
}

/* The Kane electron levels of a 60-period superlattice (GaAs / Al0.3Ga0.7As, 5 nm / 5 nm,
 * 0.1 nm grid: 60 levels per miniband, spaced far below the ~1 meV Kane shift) are fixed
 * points of their own energy-dependent pencil: each level E_j is eigenvalue j of H(E_j),
 * which LAPACK's dstebz (bisection, one index) finds on the standard form independently of
 * epiwell's Newton (E. Anderson et al., LAPACK Users' Guide, 3rd ed. (1999)); to 1e-9 eV
 * against the fixed points' 1e-11.  Each level's first evaluation starts Newton from the
 * line through the two levels before (nonparabolic.c fine_energies): 20.3 count passes a
 * level here; from the level before alone 21.3, from the level's own start (crossing the
 * miniband's levels) 38.8 (measured; the counts repeat bit for bit). */
static void kane_superlattice_fixed_points(void **state) {
  (void)state;
  char text[16384];
  size_t len = (size_t)snprintf(text, sizeof text, "temperature = 10.0; grid_step = 0.1; "
                                "nonparabolic = true;\nlayers = ( { material = \"AlGaAs\"; "
                                "x = 0.3; thickness = 5.0; }");
  for (int k = 0; k < 60; k++)
    len += (size_t)snprintf(text + len, sizeof text - len, ", { material = \"GaAs\"; thickness "
                            "= 5.0; }, { material = \"AlGaAs\"; x = 0.3; thickness = 5.0; }");
  assert_true(len + 8 < sizeof text);
  snprintf(text + len, sizeof text - len, " );\n");
  ew_stack *st;
  ew_result *r = solve_text(text, &st, NULL);
  assert_non_null(r);
  const ew_grid *g = r->grid;
  ew_pencil *p = ew_pencil_build(g, EW_BAND_E);
  assert_non_null(p);
  double lo = p->vmin - 1e-9 * (1.0 + fabs(p->vmin)), top = ew_bound_window_top(st, g, EW_BAND_E);
  size_t clo = ew_eigen_count_below(p, lo);
  ew_pencil_free(p);
  ew_eigenpairs fine;
  double *coarse_vals = NULL;
  size_t counts = 0;
  assert_int_equal(ew_nonparabolic_levels(st, g, NULL, lo, top, &fine, &coarse_vals, &counts,
                                          NULL), EW_OK);
  assert_true(fine.count >= 60); /* the first miniband and more */
  size_t n = g->n;
  double *M = malloc((n + 1) * sizeof *M), *e = malloc(n * sizeof *e), *w = malloc(n * sizeof *w);
  lapack_int *iblock = malloc(n * sizeof *iblock), *isplit = malloc(n * sizeof *isplit);
  ew_kane_cells *kc = ew_kane_cells_new(st, g);
  assert_true(M && e && w && iblock && isplit && kc);
  for (size_t j = 0; j < fine.count; j++) {
    ew_kane_cells_eval(kc, fine.values[j], M);
    ew_pencil *pj = ew_pencil_build_mass(g, EW_BAND_E, M);
    assert_non_null(pj);
    for (size_t i = 0; i + 1 < n; i++) e[i] = sqrt(pj->std_e2[i]);
    lapack_int idx = (lapack_int)(clo + j + 1), m = 0, nsplit = 0;
    assert_int_equal(LAPACKE_dstebz('I', 'E', (lapack_int)n, 0.0, 0.0, idx, idx, 0.0, pj->std_d,
                                    e, &m, &nsplit, w, iblock, isplit), 0);
    assert_int_equal(m, 1);
    TU_NEAR(w[0], fine.values[j], 1e-9, "eigenvalue j of H(E_j) is E_j (LAPACK dstebz)");
    ew_pencil_free(pj);
  }
  print_message("%zu Kane levels, %.1f count passes a level\n", fine.count,
                (double)counts / (double)fine.count);
  assert_true((double)counts < 20.8 * (double)fine.count);
  ew_kane_cells_free(kc);
  free(M), free(e), free(w), free(iblock), free(isplit), free(coarse_vals);
  ew_eigenpairs_free(&fine);
  ew_result_free(r);
  ew_stack_free(st);
}

/* In-plane mass of a parabolic finite well against the closed-form BenDaniel–Duke ground
 * state (D. J. BenDaniel, C. B. Duke, Phys. Rev. 152, 683 (1966); G. Bastard, Phys. Rev. B
 * 24, 5693 (1981)): ψ = cos kz in the well (|z| < L/2), A e^{−κ(|z|−L/2)} outside, with
 * tan(kL/2) = m_w κ/(m_b k).  To first order in k∥² the subband's m0/m∥ is the probability-
 * weighted m0/m∥ of the layers, P_w/m_w∥ + P_b/m_b∥, with P_w = (L/2 + sin(kL)/2k)/N and
 * P_b = (A²/κ)/N.  Electrons (m∥ = m_z) and heavy holes, whose in-plane Luttinger mass
 * mhh_par differs from the growth-axis mhh, both to 0.2 % (the 0.05 nm grid, second order). */
static double bdd_inplane(double V, double L, double mw, double mb, double mwp, double mbp) {
  double lo = 0.0, hi = fmin(V, K * M_PI * M_PI / (mw * L * L));
  for (int it = 0; it < 200; it++) { /* even ground state: f(E) = tan(kL/2) − m_w κ/(m_b k) */
    double E = 0.5 * (lo + hi), k = sqrt(E * mw / K), kap = sqrt((V - E) * mb / K);
    if (tan(0.5 * k * L) - mw * kap / (mb * k) < 0) lo = E;
    else hi = E;
  }
  double E = 0.5 * (lo + hi), k = sqrt(E * mw / K), kap = sqrt((V - E) * mb / K);
  double A = cos(0.5 * k * L), Pw = 0.5 * L + sin(k * L) / (2 * k), Pb = A * A / kap;
  return (Pw + Pb) / (Pw / mwp + Pb / mbp);
}

static void inplane_mass_finite_well(void **state) {
  (void)state;
  ew_stack *st;
  ew_result *r = solve_text("materials = ( { name = \"B\"; Ec = 0.25; Ev = -1.65; me = 0.092; "
                            "mhh = 0.38; mlh = 0.10; mhh_par = 0.12; mlh_par = 0.2; },\n"
                            "  { name = \"W\"; Ec = 0.0; Ev = -1.5; me = 0.067; mhh = 0.35; "
                            "mlh = 0.09; mhh_par = 0.11; mlh_par = 0.19; } );\n"
                            "layers = ( { material = \"B\"; thickness = 20.0; },\n"
                            "           { name = \"w\"; material = \"W\"; thickness = 6.0; },\n"
                            "           { material = \"B\"; thickness = 20.0; } );\n",
                            &st, NULL);
  assert_non_null(r);
  const ew_state *e1 = elec(r, 1), *hh1 = NULL;
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (ew_result_state(r, i)->band == EW_BAND_HH && ew_result_state(r, i)->n == 1)
      hh1 = ew_result_state(r, i);
  assert_non_null(e1);
  assert_non_null(hh1);
  double me = bdd_inplane(0.25, 6.0, 0.067, 0.092, 0.067, 0.092);
  double mh = bdd_inplane(0.15, 6.0, 0.35, 0.38, 0.11, 0.12);
  print_message("e1 m_par %.5f (analytic %.5f), hh1 m_par %.5f (analytic %.5f)\n",
                e1->inplane_mass, me, hh1->inplane_mass, mh);
  TU_NEAR(e1->inplane_mass, me, 2e-3 * me, "closed-form finite well, grid 0.05 nm");
  TU_NEAR(hh1->inplane_mass, mh, 2e-3 * mh, "closed-form finite well, grid 0.05 nm");
  ew_result_free(r);
  ew_stack_free(st);
}

/* The PL line of a GaAs/Al0.3Ga0.7As well follows the GaAs gap with temperature: from 10 K to
 * 300 K the GaAs Γ gap closes by 1.5189 − 1.4224 = 96.5 meV (Varshni with α = 0.5405 meV/K,
 * β = 204 K: I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), from memory); the
 * confinement of a 10 nm well changes by a few meV as the barriers' gap moves differently, so
 * the e1–hh1 PL peak must red-shift by 96.5 ± 8 meV (common practice: "about 0.1 eV"). */
static void pl_temperature_shift(void **state) {
  (void)state;
/* A literal template so that -Wformat=2 checks its arguments. */
#define STACK_TEMPLATE_3 "temperature = %g;\n" \
                    "layers = ( { material = \"AlGaAs\"; x = 0.3; thickness = 25.0; },\n" \
                    "           { name = \"w\"; material = \"GaAs\"; thickness = 10.0; },\n" \
                    "           { material = \"AlGaAs\"; x = 0.3; thickness = 25.0; } );\n"
  double pl[2];
  const double T[2] = {10.0, 300.0};
  for (int k = 0; k < 2; k++) {
    char text[1024];
    snprintf(text, sizeof text, STACK_TEMPLATE_3, T[k]);
    ew_stack *st;
    ew_result *r = solve_text(text, &st, NULL);
    assert_non_null(r);
    pl[k] = 0;
    for (size_t i = 0; i < ew_result_line_count(r); i++) {
      const ew_line *ln = ew_result_line(r, i);
      if (ln->kind == EW_LINE_INTERBAND && ew_result_state(r, ln->upper)->n == 1 &&
          ew_result_state(r, ln->lower)->band == EW_BAND_HH && ew_result_state(r, ln->lower)->n == 1)
        pl[k] = ln->pl_peak_eV;
    }
    assert_true(pl[k] > 1.3);
    ew_result_free(r);
    ew_stack_free(st);
  }
  print_message("e1-hh1 PL peak: %.4f eV at 10 K, %.4f eV at 300 K\n", pl[0], pl[1]);
  TU_NEAR(pl[0] - pl[1], 0.0965, 0.008, "Varshni shift of the GaAs gap");
}

/* The band-edge electron mass follows the gap.  Expected values built here from the review's
 * GaAs numbers (I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001),
 * from memory: m_e(0 K) = 0.067, E_P = 28.8 eV, Δso = 0.341 eV, Eg(0) = 1.519 eV, Varshni
 * α = 0.5405 meV/K, β = 204 K) and the review's three-band Kane relation m0/m = 1 + 2F +
 * (E_P/3)[2/Eg + 1/(Eg + Δ)], taken as a difference from 0 K: the 0 K mass exactly (1e-12),
 * 300 K to 1e-9 relative (same formula).  Measurement: the Ioffe NSM archive, "AlGaAs -
 * Basic Parameters at 300 K" (http://www.ioffe.ru/SVA/NSM/Semicond/AlGaAs/basic.html) gives
 * m_e = 0.063 m0 at x = 0; the Kane scaling with the whole Varshni shift gives 0.0622, 1.2 %
 * lighter (part of the measured gap shrinkage is electron–phonon renormalisation, which the
 * Kane relation does not see), so 2 % (the unscaled 0.067 is 6 % off and fails).  Strain: a
 * pseudomorphic In0.2Ga0.8As layer on GaAs (compressive, its Γ–Γ8 gap opens by the
 * hydrostatic part δEc − δEv,hyd, δEv,hyd = −a_v tr ε, a_v = 0.2(−1.00) + 0.8(−1.16) eV,
 * review, from memory) gets the heavier Kane mass of that gap (1e-9 relative, with E_P, Δso
 * and ε of the layer as inputs). */
static double kane_inv(double Ep, double D, double Eg) { return Ep / 3.0 * (2.0 / Eg + 1.0 / (Eg + D)); }

static void electron_mass_follows_gap(void **state) {
  (void)state;
  ew_bands b0, b300;
  ew_error err;
  assert_int_equal(ew_material_bands(cat, "GaAs", 0.0, 0.0, &b0, &err), EW_OK);
  assert_int_equal(ew_material_bands(cat, "GaAs", 0.0, 300.0, &b300, &err), EW_OK);
  TU_NEAR(b0.me, 0.067, 1e-12, "review's 0 K mass kept exactly");
  const double Ep = 28.8, D = 0.341, Eg0 = 1.519;
  double Eg300 = Eg0 - 0.5405e-3 * 300.0 * 300.0 / (300.0 + 204.0);
  double want = 1.0 / (1.0 / 0.067 + kane_inv(Ep, D, Eg300) - kane_inv(Ep, D, Eg0));
  print_message("GaAs m_e: %.5f at 0 K, %.5f at 300 K (Kane %.5f)\n", b0.me, b300.me, want);
  TU_NEAR(b300.me / want, 1.0, 1e-9, "three-band Kane relation, Vurgaftman 2001");
  TU_NEAR(b300.me, 0.063, 0.02 * 0.063, "Ioffe NSM AlGaAs basic parameters at 300 K, x = 0");

  ew_bands u, s;
  assert_int_equal(ew_material_bands_on(cat, "InGaAs", 0.2, 0.0, 300.0, 0.0, &u, &err), EW_OK);
  assert_int_equal(ew_material_bands_on(cat, "InGaAs", 0.2, 0.0, 300.0, 0.565325, &s, &err), EW_OK);
  double tr = 2.0 * s.eps_par + s.eps_perp, av = 0.2 * -1.00 + 0.8 * -1.16;
  double Egs = u.Eg_G_eV + s.dEc_strain_eV - (-av * tr);
  double ws = 1.0 / (1.0 / u.me + kane_inv(u.Ep_eV, u.Dso_eV, Egs) - kane_inv(u.Ep_eV, u.Dso_eV, u.Eg_G_eV));
  print_message("In0.2Ga0.8As m_e: %.5f relaxed, %.5f on GaAs (Kane %.5f)\n", u.me, s.me, ws);
  assert_true(s.eps_par < 0 && s.me > u.me);
  TU_NEAR(s.me / ws, 1.0, 1e-9, "Kane mass of the hydrostatically strained gap");
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(triangular_well),
      cmocka_unit_test(stark_shift),
      cmocka_unit_test(parabolic_well),
      cmocka_unit_test(linear_grade_and_monolayers),
      cmocka_unit_test(kane_deep_well),
      cmocka_unit_test(kane_superlattice_fixed_points),
      cmocka_unit_test(inplane_mass_finite_well),
      cmocka_unit_test(pl_temperature_shift),
      cmocka_unit_test(electron_mass_follows_gap),
  };
  return cmocka_run_group_tests_name("physics", tests, setup, teardown);
}
