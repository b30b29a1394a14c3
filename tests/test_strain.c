/* test_strain.c — pseudomorphic strain (src/strain.c, ew_material_bands_on) and the
 * Matthews–Blakeslee critical thickness.
 * Sources: sign convention and formulas as stated in src/strain.h (I. Vurgaftman, J. R. Meyer,
 * L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001); S. L. Chuang, Physics of Photonic Devices
 * (Wiley, 2009); J. W. Matthews, A. E. Blakeslee, J. Cryst. Growth 27, 118 (1974)).  The
 * hand computations below use the catalogue's own parameters (read back through
 * ew_material_params2), so they check the code against the formulas; the published numbers
 * they are compared with are marked "(from memory)".
 * Run from the project root (catalogue in ./materials) or with $EPIWELL_MATERIALS set. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "materials.h"
#include "strain.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

/* Check |got − want| <= tol with a message naming the source. */
#define CHECK_NEAR(got, want, tol, what)                                                    \
  do {                                                                                      \
    double g_ = (got), w_ = (want), t_ = (tol);                                             \
    if (!(fabs(g_ - w_) <= t_))                                                             \
      fail_msg("%s: got %.12g, want %.12g (tolerance %g)", what, g_, w_, t_);               \
  } while (0)

static int setup_cat(void **state) {
  const char *env = getenv("EPIWELL_MATERIALS");
  ew_catalogue *cat = NULL;
  ew_error err;
  if (ew_catalogue_load((env && env[0]) ? env : "materials", &cat, &err) != EW_OK) {
    char buf[1600];
    fprintf(stderr, "cannot load catalogue: %s\n", ew_error_text(&err, buf, sizeof buf));
    return -1;
  }
  *state = cat;
  return 0;
}

static int teardown_cat(void **state) {
  ew_catalogue_free(*state);
  return 0;
}

static ew_bands on(const ew_catalogue *cat, const char *name, double x, double y, double T,
                   double a_sub) {
  ew_bands b;
  ew_error err;
  char buf[1600];
  if (ew_material_bands_on(cat, name, x, y, T, a_sub, &b, &err) != EW_OK)
    fail_msg("%s bands_on: %s", name, ew_error_text(&err, buf, sizeof buf));
  return b;
}

static double lattice(const ew_catalogue *cat, const char *name, double x, double y) {
  double a = 0;
  ew_error err;
  if (ew_lattice_nm(cat, name, x, y, &a, &err) != EW_OK) fail_msg("lattice %s: %s", name, err.message);
  return a;
}

static ew_params params(const ew_catalogue *cat, const char *name, double x, double y) {
  ew_params p;
  ew_error err;
  if (ew_material_params2(cat, name, x, y, &p, &err) != EW_OK)
    fail_msg("params %s: %s", name, err.message);
  return p;
}

/* ---- sign convention ------------------------------------------------------------------- */

static void test_compressive_ingaas_on_gaas(void **state) {
  const ew_catalogue *cat = *state;
  double a_gaas = lattice(cat, "GaAs", 0, 0);
  ew_bands u = on(cat, "InGaAs", 0.2, 0, 300, 0.0);
  ew_bands s = on(cat, "InGaAs", 0.2, 0, 300, a_gaas);
  /* In0.2Ga0.8As is larger than GaAs (Vegard, a(InAs) > a(GaAs)): compressive, ε∥ < 0,
   * ε⊥ > 0 (strain.h convention; exact sign checks) */
  if (!(s.eps_par < 0 && s.eps_perp > 0)) fail_msg("ε∥ = %g, ε⊥ = %g", s.eps_par, s.eps_perp);
  /* Vurgaftman 2001 convention (strain.h): compression widens the gap and puts the heavy
   * hole above the light hole (sign checks, no tolerance) */
  double gap_u = u.Ec_eV - u.Ev_eV, gap_hh = s.Ec_eV - s.Ev_hh_eV;
  if (!(gap_hh > gap_u)) fail_msg("compressive gap %g eV not wider than unstrained %g", gap_hh, gap_u);
  if (!(s.Ev_hh_eV > s.Ev_lh_eV)) fail_msg("compressive: Ev_hh %g not above Ev_lh %g", s.Ev_hh_eV, s.Ev_lh_eV);
  if (!(s.dEc_strain_eV > 0)) fail_msg("compressive: Ec should rise (a_c < 0, tr ε < 0)");
  /* unstrained-material fields unchanged by strain (exact) */
  CHECK_NEAR(s.Ev_eV, u.Ev_eV, 0.0, "Ev stays the relaxed VBO");
  CHECK_NEAR(s.Eg_G_eV, u.Eg_G_eV, 0.0, "Eg_G stays the relaxed gap");
  /* the applied shifts are the recorded ones; tolerance 1e-12 eV (rounding of one sum) */
  CHECK_NEAR(s.Ec_eV - u.Ec_eV, s.dEc_strain_eV, 1e-12, "Ec shift = dEc_strain");
  CHECK_NEAR(s.Ev_hh_eV - u.Ev_hh_eV, s.dEhh_strain_eV, 1e-12, "Ev_hh shift = dEhh_strain");
  CHECK_NEAR(s.Ev_lh_eV - u.Ev_lh_eV, s.dElh_strain_eV, 1e-12, "Ev_lh shift = dElh_strain");
  /* heavy-hole gap at 300 K: relation Eg_hh = Eg + δEc − δEhh exactly (1e-12 eV), and a
   * plausibility window: In0.2Ga0.8As/GaAs quantum-well lasers emit near 980 nm
   * (1.265 eV) with some 40–70 meV of confinement, so the strained bulk hh gap is near
   * 1.20–1.22 eV (common practice, from memory); window [1.17, 1.25] eV */
  CHECK_NEAR(gap_hh, u.Eg_G_eV + s.dEc_strain_eV - s.dEhh_strain_eV, 1e-12,
             "Eg_hh = Eg + dEc - dEhh");
  if (!(gap_hh >= 1.17 && gap_hh <= 1.25))
    fail_msg("strained In0.2Ga0.8As hh gap %.4f eV outside [1.17, 1.25] (from memory)", gap_hh);
  /* the new unstrained fields: Kane energy, Δso, c11, c12 interpolated (Vurgaftman 2001
   * values in the catalogue, from memory): Ep = 0.2·21.5 + 0.8·28.8 − 0.16·(−1.48),
   * c11 = 0.2·832.9 + 0.8·1221; tolerance 1e-9 */
  CHECK_NEAR(u.Ep_eV, 0.2 * 21.5 + 0.8 * 28.8 + 0.16 * 1.48, 1e-9, "In0.2Ga0.8As Ep, Vegard + bowing");
  CHECK_NEAR(u.c11_kbar, 0.2 * 832.9 + 0.8 * 1221, 1e-9, "In0.2Ga0.8As c11, linear");
  CHECK_NEAR(u.c12_kbar, 0.2 * 452.6 + 0.8 * 566, 1e-9, "In0.2Ga0.8As c12, linear");
  CHECK_NEAR(u.Dso_eV, 0.2 * 0.39 + 0.8 * 0.341 - 0.16 * 0.15, 1e-9, "In0.2Ga0.8As Δso, Vegard + bowing");
  if (!isinf(u.critical_thickness_nm)) fail_msg("unstrained critical thickness should be INFINITY");
  CHECK_NEAR(u.eps_par, 0.0, 0.0, "unstrained ε∥ = 0");
  CHECK_NEAR(u.dEc_strain_eV + u.dEhh_strain_eV + u.dElh_strain_eV, 0.0, 0.0, "no shifts unstrained");
}

static void test_tensile(void **state) {
  const ew_catalogue *cat = *state;
  double a_gaas = lattice(cat, "GaAs", 0, 0), a_inp = lattice(cat, "InP", 0, 0);
  /* GaAs0.8P0.2 on GaAs: smaller lattice (GaP < GaAs), tensile, ε∥ > 0: light hole on top
   * (strain.h convention; sign checks) */
  ew_bands t = on(cat, "GaAsP", 0.8, 0, 300, a_gaas);
  if (!(t.eps_par > 0)) fail_msg("GaAs0.8P0.2 on GaAs: ε∥ = %g should be > 0", t.eps_par);
  if (!(t.Ev_lh_eV > t.Ev_hh_eV)) fail_msg("tensile: Ev_lh %g not above Ev_hh %g", t.Ev_lh_eV, t.Ev_hh_eV);
  /* In0.4Ga0.6As on InP: tensile, light hole on top too */
  ew_bands t2 = on(cat, "InGaAs", 0.4, 0, 300, a_inp);
  if (!(t2.eps_par > 0 && t2.Ev_lh_eV > t2.Ev_hh_eV))
    fail_msg("In0.4Ga0.6As on InP: ε∥ = %g, lh %g, hh %g", t2.eps_par, t2.Ev_lh_eV, t2.Ev_hh_eV);
  /* a layer on its own lattice constant is unstrained: exact zeros, h_c = INFINITY */
  ew_bands g = on(cat, "GaAs", 0, 0, 300, a_gaas);
  CHECK_NEAR(g.eps_par, 0.0, 0.0, "GaAs on GaAs ε∥");
  CHECK_NEAR(g.dEc_strain_eV, 0.0, 0.0, "GaAs on GaAs dEc");
  CHECK_NEAR(g.dEhh_strain_eV, 0.0, 0.0, "GaAs on GaAs dEhh");
  CHECK_NEAR(g.dElh_strain_eV, 0.0, 0.0, "GaAs on GaAs dElh (the so coupling vanishes at Q = 0)");
  if (!isinf(g.critical_thickness_nm)) fail_msg("GaAs on GaAs: h_c should be INFINITY");
}

static void test_lattice_matched_ingaas_on_inp(void **state) {
  const ew_catalogue *cat = *state;
  /* In0.53Ga0.47As is lattice-matched to InP (common practice, from memory): |ε∥| < 2e-3 */
  ew_bands b = on(cat, "InGaAs", 0.53, 0, 300, lattice(cat, "InP", 0, 0));
  if (!(fabs(b.eps_par) < 2e-3)) fail_msg("In0.53Ga0.47As on InP: ε∥ = %g", b.eps_par);
}

/* ---- formulas against hand computation ------------------------------------------------ */

static void test_formulas_by_hand(void **state) {
  const ew_catalogue *cat = *state;
  double a_sub = lattice(cat, "GaAs", 0, 0);
  const struct {
    const char *name;
    double x, y, a_sub;
  } cases[] = {
      {"InGaAs", 0.2, 0, 0}, {"GaAsP", 0.8, 0, 0}, {"InGaAsP", 0.3, 0.6, 0.58697},
      {"AlGaInAs", 0.2, 0.25, 0.58697},
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    double as = cases[i].a_sub > 0 ? cases[i].a_sub : a_sub;
    ew_params p = params(cat, cases[i].name, cases[i].x, cases[i].y);
    ew_bands u = on(cat, cases[i].name, cases[i].x, cases[i].y, 77, 0.0);
    ew_bands s = on(cat, cases[i].name, cases[i].x, cases[i].y, 77, as);
    /* strain.h, by hand from the catalogue's own a (Å → nm), c11, c12, a_c, a_v, b, Δso;
     * tolerance 1e-12 (a few roundings of O(1) numbers) */
    double a = p.v[EW_P_ALC] / 10.0;
    double ep = (as - a) / a, ez = -2.0 * p.v[EW_P_C12] / p.v[EW_P_C11] * ep, tr = 2 * ep + ez;
    double hyd = -p.v[EW_P_AV] * tr, q = p.v[EW_P_B] * (ez - ep), d = p.v[EW_P_DSO];
    double lh = hyd + 0.5 * (q - d + sqrt(d * d + 2 * d * q + 9 * q * q));
    CHECK_NEAR(s.eps_par, ep, 1e-12, "ε∥ = (a_sub − a)/a");
    CHECK_NEAR(s.eps_perp, ez, 1e-12, "ε⊥ = −2 c12/c11 ε∥");
    CHECK_NEAR(s.dEc_strain_eV, p.v[EW_P_AC] * tr, 1e-12, "δEc = a_c tr ε");
    CHECK_NEAR(s.dEhh_strain_eV, hyd - q, 1e-12, "δEhh = −a_v tr ε − b (ε⊥ − ε∥)");
    CHECK_NEAR(s.dElh_strain_eV, lh, 1e-12, "δElh with the lh–so coupling (Chuang 2009)");
    CHECK_NEAR(s.Ec_eV, u.Ec_eV + p.v[EW_P_AC] * tr, 1e-12, "strained Ec");
    /* gap deformation potential of the convention: δ(Ec − Ev,hyd) = (a_c + a_v) tr ε with
     * the catalogue's (negative) a_v, i.e. a = a_c − a_v' with a_v' = −a_v (strain.h);
     * tolerance 1e-12 */
    CHECK_NEAR(s.dEc_strain_eV - hyd, (p.v[EW_P_AC] + p.v[EW_P_AV]) * tr, 1e-12,
               "hydrostatic gap shift a tr ε");
    CHECK_NEAR(s.c11_kbar, p.v[EW_P_C11], 0.0, "c11 copied");
  }
  /* GaAs gap deformation potential a = a_c − a_v' = −7.17 − 1.16 = −8.33 eV (Vurgaftman
   * 2001 values, from memory); tolerance 1e-12 eV */
  ew_params g = params(cat, "GaAs", 0, 0);
  CHECK_NEAR(g.v[EW_P_AC] + g.v[EW_P_AV], -8.33, 1e-12, "GaAs gap deformation potential");
}

static void test_lh_so_block(void **state) {
  (void)state;
  /* the light-hole and split-off shifts are the eigenvalues of the 2×2 block
   * [[Q, √2 Q], [√2 Q, −Δ]] on top of δEv,hyd (Bir–Pikus; Chuang 2009): their sum is the
   * trace Q − Δ and their product the determinant −QΔ − 2Q²; tolerance 1e-12 eV (eV²) */
  ew_strain_input m = {.a_nm = 0.573, .c11_kbar = 1143, .c12_kbar = 543, .a_c_eV = -6.75,
                       .a_v_eV = -1.13, .b_eV = -1.96, .Dso_eV = 0.35};
  ew_strain_shifts s;
  ew_error err;
  const double subs[] = {0.5653, 0.58, 0.5731, 0.56};
  for (size_t i = 0; i < 4; i++) {
    assert_int_equal(ew_strain_biaxial(&m, subs[i], &s, &err), EW_OK);
    double e1 = s.dElh_eV - s.dEv_hyd_eV, e2 = s.dEso_eV - m.Dso_eV - s.dEv_hyd_eV,
           q = s.dE_shear_eV, d = m.Dso_eV;
    CHECK_NEAR(e1 + e2, q - d, 1e-12, "lh + so = trace");
    CHECK_NEAR(e1 * e2, -q * d - 2 * q * q, 1e-12, "lh · so = determinant");
    /* the simple ±b light hole, δEv,hyd + Q, differs from the coupled one by 2Q²/Δ to
     * leading order (expansion of the square root); tolerance 30 % of that (next order) */
    double corr = s.dElh_eV - s.dElh_simple_eV;
    CHECK_NEAR(corr, 2 * q * q / d, 0.3 * 2 * q * q / d + 1e-15, "lh–so correction ≈ 2Q²/Δ");
  }
  /* large Δso = 1e9 eV: the coupled light hole tends to the simple one (difference 2Q²/Δ
   * ≈ 5e-12 eV); tolerance 1e-9 eV */
  m.Dso_eV = 1e9;
  assert_int_equal(ew_strain_biaxial(&m, 0.5653, &s, &err), EW_OK);
  CHECK_NEAR(s.dElh_eV, s.dElh_simple_eV, 1e-9, "Δso → ∞: simple light hole");
  /* bad inputs */
  m.Dso_eV = 0.0;
  assert_int_equal(ew_strain_biaxial(&m, 0.5653, &s, &err), EW_ERR_INPUT);
  m.Dso_eV = 0.35;
  assert_int_equal(ew_strain_biaxial(&m, -1.0, &s, &err), EW_ERR_INPUT);
  m.c11_kbar = NAN;
  assert_int_equal(ew_strain_biaxial(&m, 0.5653, &s, &err), EW_ERR_INPUT);
}

/* ---- critical thickness -------------------------------------------------------------- */

static void test_critical_thickness(void **state) {
  const ew_catalogue *cat = *state;
  ew_bands s = on(cat, "InGaAs", 0.2, 0, 300, lattice(cat, "GaAs", 0, 0));
  double nu = s.c12_kbar / (s.c11_kbar + s.c12_kbar), f = fabs(s.eps_par), bd = s.a_nm / sqrt(2.0);
  double geo = (1 - nu * 0.25) / ((1 + nu) * 0.5); /* cos²60° = 1/4, cos 60° = 1/2 */
  /* buried layer (two interfaces, strain.h): h = 2 b_d geo/(8π f) (ln(h/b_d) + 1); the
   * fixed point must solve it to 1e-10 nm */
  double h = s.critical_thickness_nm, A2 = 2 * bd * geo / (8 * M_PI * f);
  CHECK_NEAR(h, A2 * (log(h / bd) + 1), 1e-10, "MB fixed point (buried layer)");
  /* In0.2Ga0.8As on GaAs: of order 10–20 nm (common practice; ≈ 15 nm, from memory):
   * window [8, 25] nm */
  if (!(h >= 8 && h <= 25)) fail_msg("In0.2Ga0.8As/GaAs h_c = %g nm outside [8, 25]", h);
  /* single uncapped layer (one interface): half the prefactor, a thinner limit; solves
   * its own equation to 1e-10 nm */
  double h1 = ew_mb_critical_thickness_nm(s.a_nm, s.eps_par, nu, 1), A1 = A2 / 2;
  CHECK_NEAR(h1, A1 * (log(h1 / bd) + 1), 1e-10, "MB fixed point (single layer)");
  if (!(h1 < h && h1 > 1)) fail_msg("uncapped h_c = %g nm vs buried %g", h1, h);
  /* the limits: no strain → INFINITY; a strain so large that A < b_d → 0; bad ν → NAN */
  if (!isinf(ew_mb_critical_thickness_nm(0.565, 0.0, 0.3, 2))) fail_msg("f = 0 should give INFINITY");
  CHECK_NEAR(ew_mb_critical_thickness_nm(0.565, 0.5, 0.3, 1), 0.0, 0.0, "huge strain: 0");
  if (!isnan(ew_mb_critical_thickness_nm(0.565, 0.01, 0.7, 2))) fail_msg("ν = 0.7 should be NAN");
  /* close to the tangency (A = 1.01 b_d for one interface, ν = 0.3) the fixed point is slow
   * and Newton polishes it: the root still solves the equation to relative 1e-9 */
  double gt = (1 - 0.3 * 0.25) / ((1 + 0.3) * 0.5), bt = 0.565 / sqrt(2.0);
  double ft = gt / (8 * M_PI * 1.01), At = bt * gt / (8 * M_PI * ft);
  double ht = ew_mb_critical_thickness_nm(0.565, -ft, 0.3, 1);
  CHECK_NEAR(ht, At * (log(ht / bt) + 1), 1e-9 * ht, "MB near tangency");
  if (!(ht > At)) fail_msg("near tangency: h_c = %g not on the physical branch (> %g)", ht, At);
  /* larger strain → thinner limit (monotonic; exact comparisons) */
  double prev = INFINITY;
  for (double x = 0.05; x <= 0.5; x += 0.05) {
    double hx = on(cat, "InGaAs", x, 0, 300, lattice(cat, "GaAs", 0, 0)).critical_thickness_nm;
    if (!(hx < prev)) fail_msg("h_c not decreasing with In fraction at x = %g", x);
    prev = hx;
  }
}

/* ---- lattice matching ----------------------------------------------------------------- */

static void test_lattice_match(void **state) {
  const ew_catalogue *cat = *state;
  double a_inp = lattice(cat, "InP", 0, 0);
  ew_error err;
  char buf[1600];
  double x = -1, y = -1;
  /* InGaAsP on InP at a 0.80 eV Γ gap (λ ≈ 1.55 µm) at 300 K: In0.58Ga0.42As0.9P0.1 in
   * common practice (from memory): y within 0.05 of 0.9; the match itself to a relative
   * mismatch < 1e-5 and the gap to 1e-9 eV */
  if (ew_lattice_match(cat, "InGaAsP", "InP", 0, 0.80, 300, &x, &y, &err) != EW_OK)
    fail_msg("InGaAsP match: %s", ew_error_text(&err, buf, sizeof buf));
  double a = lattice(cat, "InGaAsP", x, y);
  if (!(fabs(a - a_inp) / a_inp < 1e-5)) fail_msg("InGaAsP mismatch %g", (a - a_inp) / a_inp);
  CHECK_NEAR(y, 0.9, 0.05, "InGaAsP/InP at 0.80 eV: y ≈ 0.9 (from memory)");
  CHECK_NEAR(x, 0.42, 0.05, "InGaAsP/InP at 0.80 eV: Ga fraction ≈ 0.42 (from memory)");
  CHECK_NEAR(on(cat, "InGaAsP", x, y, 300, 0).Eg_G_eV, 0.80, 1e-9, "matched gap");
  CHECK_NEAR(on(cat, "InGaAsP", x, y, 300, a_inp).eps_par, 0.0, 1e-12, "matched: no strain");
  /* In0.53Ga0.47As is lattice-matched to InP (from memory): the ternary match gives x
   * within 0.01 of 0.53, and a(0.53) lies within 0.2 % of a(InP) */
  if (ew_lattice_match(cat, "InGaAs", "InP", 0, NAN, 300, &x, &y, &err) != EW_OK)
    fail_msg("InGaAs match: %s", err.message);
  CHECK_NEAR(x, 0.53, 0.01, "In0.53Ga0.47As on InP (from memory)");
  CHECK_NEAR(y, 0.0, 0.0, "ternary: y = 0");
  CHECK_NEAR(lattice(cat, "InGaAs", 0.53, 0) / a_inp, 1.0, 2e-3, "a(In0.53Ga0.47As)/a(InP)");
  CHECK_NEAR(lattice(cat, "InGaAs", x, 0), a_inp, 1e-12, "ternary match exact");
  /* a ternary has one matched composition: its own gap is accepted (to 1 meV), another is
   * refused with x and its gap in the message (the definition of the helper) */
  double g = on(cat, "InGaAs", x, 0, 300, 0).Eg_G_eV, x2, y2;
  if (ew_lattice_match(cat, "InGaAs", "InP", 0, g + 5e-4, 300, &x2, &y2, &err) != EW_OK)
    fail_msg("InGaAs match at its own gap: %s", err.message);
  CHECK_NEAR(x2, x, 0.0, "same composition");
  assert_int_equal(ew_lattice_match(cat, "InGaAs", "InP", 0, 0.90, 300, &x2, &y2, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "fixes x = 0.53"));
  /* AlGaInAs on InP: (AlzGa1−z)0.48In0.52As (common practice, from memory): the In
   * fraction 1 − x − y within 0.02 of 0.52, at any gap between the two ends */
  if (ew_lattice_match(cat, "AlGaInAs", "InP", 0, 1.0, 300, &x, &y, &err) != EW_OK)
    fail_msg("AlGaInAs match: %s", err.message);
  CHECK_NEAR(1 - x - y, 0.52, 0.02, "AlGaInAs/InP In fraction ≈ 0.52 (from memory)");
  CHECK_NEAR(lattice(cat, "AlGaInAs", x, y) / a_inp, 1.0, 1e-12, "AlGaInAs match");
  CHECK_NEAR(on(cat, "AlGaInAs", x, y, 300, 0).Eg_G_eV, 1.0, 1e-9, "AlGaInAs matched gap");
  /* errors: gap out of reach (the message gives the range), binary, quaternary substrate */
  assert_int_equal(ew_lattice_match(cat, "InGaAsP", "InP", 0, 0.3, 300, &x, &y, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "not reachable"));
  assert_int_equal(ew_lattice_match(cat, "InGaAsP", "InP", 0, NAN, 300, &x, &y, &err), EW_ERR_INPUT);
  assert_int_equal(ew_lattice_match(cat, "GaAs", "InP", 0, 1.0, 300, &x, &y, &err), EW_ERR_INPUT);
  assert_int_equal(ew_lattice_match(cat, "InGaAs", "InGaAsP", 0.5, 1.0, 300, &x, &y, &err), EW_ERR_INPUT);
  assert_int_equal(ew_lattice_match(cat, "InGaAs", "InSb", 0, NAN, 300, &x, &y, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "no composition"));
}

/* ---- printing ------------------------------------------------------------------------- */

static void test_print_on(void **state) {
  const ew_catalogue *cat = *state;
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_non_null(f);
  ew_error err;
  assert_int_equal(ew_material_print_on(cat, "InGaAs", 0.2, 0, 300, lattice(cat, "GaAs", 0, 0), f, &err), EW_OK);
  assert_int_equal(ew_material_print_on(cat, "InGaAsP", 0.42, 0.9, 300, 0, f, &err), EW_OK);
  fclose(f);
  assert_non_null(strstr(buf, "eps_par"));
  assert_non_null(strstr(buf, "heavy hole"));
  assert_non_null(strstr(buf, "Matthews-Blakeslee"));
  assert_non_null(strstr(buf, "x = 0.42, y = 0.9"));
  assert_non_null(strstr(buf, "y = As fraction"));
  free(buf);
  assert_int_equal(ew_material_print(cat, "InGaAsP", 0.42, 300, stdout, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "quaternary"));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_compressive_ingaas_on_gaas),
      cmocka_unit_test(test_tensile),
      cmocka_unit_test(test_lattice_matched_ingaas_on_inp),
      cmocka_unit_test(test_formulas_by_hand),
      cmocka_unit_test(test_lh_so_block),
      cmocka_unit_test(test_critical_thickness),
      cmocka_unit_test(test_lattice_match),
      cmocka_unit_test(test_print_on),
  };
  return cmocka_run_group_tests(tests, setup_cat, teardown_cat);
}
