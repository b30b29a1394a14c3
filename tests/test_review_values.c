/* test_review_values.c — every parameter of the binary catalogue entries (and the main
 * ternary bowings) against the review table it cites, typed here independently of
 * the catalogue files, so that a value mistyped or off by 1 % in a catalogue file fails.
 *
 * Reference: I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001),
 * the binary tables (Eg, α, β of Γ, X, L; VBO; Δso; me; γ1–3; Ep; F; a_c, a_v, b, d;
 * c11, c12, c44 in 10⁸ Pa as the catalogue stores them; a in Å) and the bowing table
 * (from memory, as the catalogue's own source strings say); static dielectric constants from
 * S. Adachi, Properties of Semiconductor Alloys (Wiley, 2009) (from memory).  Tolerance:
 * 1e-9 relative (the values are stored, not computed; a 1 % error is 1e7 times larger).
 * Parameters whose catalogue value departs from the review on purpose (InP X, InSb X/L
 * temperature laws, a second handbook's value) are left out. */
#include <math.h>
#include <string.h>

#include "testutil.h"

#include "alloy.h"
#include "catalogue.h"

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

typedef struct {
  const char *key;
  double v;
} kv;

/* keys as in src/catalogue.h */
#define BINARY_KEYS(eg, ag, bg, ex, ax, bx, el, al, bl, vbo, dso, me, g1, g2, g3, eps, a, ep, f,  \
                    ac, av, b, d, c11, c12, c44)                                               \
  {{"Eg_G", eg},     {"alpha_G", ag}, {"beta_G", bg}, {"Eg_X", ex},     {"alpha_X", ax},         \
   {"beta_X", bx},   {"Eg_L", el},    {"alpha_L", al}, {"beta_L", bl},  {"VBO", vbo},            \
   {"Delta_so", dso}, {"me", me},     {"gamma1", g1},  {"gamma2", g2},  {"gamma3", g3},          \
   {"eps_static", eps}, {"a_lattice", a}, {"Ep", ep}, {"F", f},          {"a_c", ac},            \
   {"a_v", av},      {"b_shear", b},  {"d_shear", d},  {"c11", c11},    {"c12", c12},            \
   {"c44", c44}}

typedef struct {
  const char *name;
  kv p[26];
} binary;

/* NAN: not compared (see the header comment) */
static const binary binaries[] = {
    {"GaAs", BINARY_KEYS(1.519, 0.5405, 204, 1.981, 0.460, 204, 1.815, 0.605, 204, -0.80, 0.341,
                         0.067, 6.98, 2.06, 2.93, 12.90, 5.65325, 28.8, -1.94, -7.17, -1.16, -2.0,
                         -4.8, 1221, 566, 600)},
    {"AlAs", BINARY_KEYS(3.099, 0.885, 530, 2.24, 0.70, 530, 2.46, 0.605, 204, -1.33, 0.28, 0.15,
                         3.76, 0.82, 1.42, 10.06, 5.6611, 21.1, -0.48, -5.64, -2.47, -2.3, -3.4,
                         1250, 534, 542)},
    {"InAs", BINARY_KEYS(0.417, 0.276, 93, 1.433, 0.276, 93, 1.133, 0.276, 93, -0.59, 0.39, 0.026,
                         20.0, 8.5, 9.2, 15.15, 6.0583, 21.5, -2.90, -5.08, -1.00, -1.8, -3.6,
                         832.9, 452.6, 395.9)},
    {"InP", BINARY_KEYS(1.4236, 0.363, 162, NAN, NAN, NAN, 2.014, 0.363, 162, -0.94, 0.108,
                        0.0795, 5.08, 1.60, 2.10, 12.5, 5.8697, 20.7, -1.31, -6.0, -0.6, -2.0,
                        -5.0, 1011, 561, 456)},
    {"GaSb", BINARY_KEYS(0.812, 0.417, 140, 1.141, 0.475, 94, 0.875, 0.597, 140, -0.03, 0.76,
                         0.039, 13.4, 4.7, 6.0, 15.7, 6.0959, 27.0, -1.63, -7.5, -0.8, -2.0, -4.7,
                         884.2, 402.6, 432.2)},
    {"AlSb", BINARY_KEYS(2.386, 0.42, 140, 1.696, 0.39, 140, 2.329, 0.58, 140, -0.41, 0.676, 0.14,
                         5.18, 1.19, 1.97, 12.04, 6.1355, 18.7, -0.56, -4.5, -1.4, -1.35, -4.3,
                         876.9, 434.1, 407.6)},
    {"GaP", BINARY_KEYS(2.886, 0.1081, 164, 2.35, 0.5771, 372, 2.72, 0.5771, 372, -1.27, 0.08,
                        0.13, 4.05, 0.49, 2.93, 11.1, 5.4505, 31.4, -2.04, -8.2, -1.7, -1.6, -4.6,
                        1405, 620.3, 703.3)},
    {"InSb", BINARY_KEYS(0.235, 0.32, 170, NAN, NAN, NAN, NAN, NAN, NAN, 0.0, 0.81, 0.0135, 34.8,
                         15.5, 16.5, 16.8, 6.4794, 23.3, -0.23, -6.94, -0.36, -2.0, -4.7, 684.7,
                         373.5, 311.1)},
};

static int param_of(const char *key) {
  for (int q = 0; q < EW_P_COUNT; q++)
    if (strcmp(ew_param_key((ew_param)q), key) == 0) return q;
  fail_msg("no catalogue key %s", key);
  return -1;
}

static void near_rel(double got, double want, const char *what, const char *key) {
  if (!(fabs(got - want) <= 1e-9 * fabs(want) + 1e-15))
    fail_msg("%s %s: catalogue %.9g, Vurgaftman 2001 / Adachi 2009 %.9g", what, key, got, want);
}

static void binaries_match_the_review(void **state) {
  (void)state;
  for (size_t k = 0; k < sizeof binaries / sizeof binaries[0]; k++) {
    const binary *b = &binaries[k];
    ew_params p;
    ew_error err;
    assert_int_equal(ew_material_params(cat, b->name, 0.0, &p, &err), EW_OK);
    for (size_t i = 0; i < 26; i++) {
      if (isnan(b->p[i].v)) continue;
      int q = param_of(b->p[i].key);
      if (!p.have[q]) fail_msg("%s has no %s", b->name, b->p[i].key);
      near_rel(p.v[q], b->p[i].v, b->name, b->p[i].key);
    }
  }
}

/* Bowing, C in v(x) = x v_A + (1 − x) v_B − x(1 − x) C, read back at x = 0.5 through the
 * catalogue's interpolation (x of the alloy's first binary: In in InGaAs, Al in AlInAs
 * and AlGaAs).  Vurgaftman 2001 bowing table (from memory): InGaAs Eg_Γ 0.477, VBO −0.38,
 * me 0.0091; AlInAs Eg_Γ 0.70, VBO −0.64, me 0.049; AlGaAs Eg_Γ −0.127 + 1.310x. */
typedef struct {
  const char *alloy, *first, *second, *key;
  double c0, c1;
} bow;

static const bow bowings[] = {
    {"InGaAs", "InAs", "GaAs", "Eg_G", 0.477, 0.0}, {"InGaAs", "InAs", "GaAs", "VBO", -0.38, 0.0},
    {"InGaAs", "InAs", "GaAs", "me", 0.0091, 0.0},  {"AlInAs", "AlAs", "InAs", "Eg_G", 0.70, 0.0},
    {"AlInAs", "AlAs", "InAs", "VBO", -0.64, 0.0},  {"AlInAs", "AlAs", "InAs", "me", 0.049, 0.0},
    {"AlGaAs", "AlAs", "GaAs", "Eg_G", -0.127, 1.310},
    /* the antimonides (Vurgaftman 2001, from memory) */
    {"GaInSb", "GaSb", "InSb", "Eg_G", 0.415, 0.0},  {"GaInSb", "GaSb", "InSb", "me", 0.0092, 0.0},
    {"GaInSb", "GaSb", "InSb", "Delta_so", 0.1, 0.0}, {"InAsSb", "InAs", "InSb", "Eg_G", 0.67, 0.0},
    {"InAsSb", "InAs", "InSb", "me", 0.035, 0.0},   {"InAsSb", "InAs", "InSb", "Delta_so", 1.2, 0.0},
    {"GaAsSb", "GaAs", "GaSb", "Eg_G", 1.43, 0.0},  {"GaAsSb", "GaAs", "GaSb", "VBO", -1.06, 0.0},
    {"GaAsSb", "GaAs", "GaSb", "Delta_so", 0.6, 0.0}, {"AlAsSb", "AlAs", "AlSb", "Eg_G", 0.8, 0.0},
    {"AlAsSb", "AlAs", "AlSb", "Eg_X", 0.28, 0.0},  {"AlAsSb", "AlAs", "AlSb", "VBO", -1.71, 0.0},
    {"AlAsSb", "AlAs", "AlSb", "Delta_so", 0.15, 0.0},
};

static void bowings_match_the_review(void **state) {
  (void)state;
  for (size_t k = 0; k < sizeof bowings / sizeof bowings[0]; k++) {
    const bow *w = &bowings[k];
    int q = param_of(w->key);
    ew_params pa, pb, px;
    ew_error err;
    const double x = 0.5;
    assert_int_equal(ew_material_params(cat, w->first, 0.0, &pa, &err), EW_OK);
    assert_int_equal(ew_material_params(cat, w->second, 0.0, &pb, &err), EW_OK);
    assert_int_equal(ew_material_params(cat, w->alloy, x, &px, &err), EW_OK);
    double want = x * pa.v[q] + (1 - x) * pb.v[q] - x * (1 - x) * (w->c0 + w->c1 * x);
    near_rel(px.v[q], want, w->alloy, w->key);
  }
}

/* Hole-mass bowings: Vurgaftman 2001 give bowings of the [001] heavy- and light-hole
 * masses of InGaAs, C(mhh) = −0.145 and C(mlh) = 0.0202 m0 (from memory), not of γ1, γ2.
 * The end masses are typed here from the review's Luttinger parameters (from memory):
 * InAs γ1 = 20.0, γ2 = 8.5; GaAs γ1 = 6.98, γ2 = 2.06.  At x = 0.53 (lattice-matched to
 * InP) the light-hole mass comes out 0.0516 m0, close to the 0.052 m0 of the NSM archive's
 * GaInAs table (from memory). */
static void hole_mass_bowing_of_ingaas(void **state) {
  (void)state;
  const double x = 0.53;
  double mhh = x / (20.0 - 2 * 8.5) + (1 - x) / (6.98 - 2 * 2.06) + x * (1 - x) * 0.145;
  double mlh = x / (20.0 + 2 * 8.5) + (1 - x) / (6.98 + 2 * 2.06) - x * (1 - x) * 0.0202;
  ew_bands b;
  ew_error err;
  assert_int_equal(ew_material_bands(cat, "InGaAs", x, 300.0, &b, &err), EW_OK);
  near_rel(b.mhh_z, mhh, "InGaAs", "mhh");
  near_rel(b.mlh_z, mlh, "InGaAs", "mlh");
  if (!(fabs(b.mlh_z - 0.052) < 0.001)) fail_msg("InGaAs mlh %g vs NSM 0.052", b.mlh_z);
  /* the in-plane masses use the γ1, γ2 these masses imply: 1/(γ1 ± γ2) */
  double g1 = 0.5 * (1 / mhh + 1 / mlh), g2 = 0.25 * (1 / mlh - 1 / mhh);
  near_rel(b.mhh_par, 1 / (g1 + g2), "InGaAs", "mhh_par");
  near_rel(b.mlh_par, 1 / (g1 - g2), "InGaAs", "mlh_par");
  /* a binary's [001] masses are its Luttinger ones; AlGaAs (no hole-mass bowing) keeps
   * linear Luttinger parameters: mhh = 1/(γ1 − 2γ2) of the linear γ's (AlAs γ1 = 3.76,
   * γ2 = 0.82, from memory) */
  assert_int_equal(ew_material_bands(cat, "GaAs", 0, 0.0, &b, &err), EW_OK);
  near_rel(b.mhh_z, 1 / (6.98 - 4.12), "GaAs", "mhh");
  assert_int_equal(ew_material_bands(cat, "AlGaAs", 0.3, 0.0, &b, &err), EW_OK);
  near_rel(b.mhh_z, 1 / (0.3 * 3.76 + 0.7 * 6.98 - 2 * (0.3 * 0.82 + 0.7 * 2.06)), "AlGaAs",
           "mhh");
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(binaries_match_the_review),
      cmocka_unit_test(bowings_match_the_review),
      cmocka_unit_test(hole_mass_bowing_of_ingaas),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
