/* test_validity.c — the warnings that say where a number leaves the model (README
 * "Warnings"): their machine-readable codes (library and JSON), the strain and substrate
 * checks (stack_caveats.c) and the level checks (level_caveats.c), and the codes that reach
 * sweeps, matches and tolerance tables.  Each check names its outside reference beside it;
 * the Matthews–Blakeslee thicknesses are recomputed here by a few lines of our own
 * (mb_hc_nm), not with the library's function. */
#include <math.h>

#include "constants.h"
#include "roundtrip.h"

static rt_env env;
static ew_catalogue *cat;
static const char *argv0;

static int setup(void **state) {
  (void)state;
  if (tu_load_catalogue(&cat) != 0) {
    fprintf(stderr, "test_validity: cannot load the catalogue in ./materials\n");
    return -1;
  }
  return rt_env_init(&env, argv0, "validity");
}
static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  tu_rm_tree(env.tmp);
  return 0;
}

/* A solved stack (the result borrows the stack: keep both). */
typedef struct {
  ew_stack *st;
  ew_result *r;
} solved;
static solved solve_text(const char *text) {
  solved s = {NULL, NULL};
  s.r = tu_solve_text(cat, text, &s.st, NULL);
  if (!s.r) fail_msg("the stack did not solve:\n%s", text);
  return s;
}
static void solved_free(solved *s) {
  ew_result_free(s->r);
  ew_stack_free(s->st);
}

/* Number of warnings of r with this code. */
static size_t count_code(const ew_result *r, const char *code) {
  size_t n = 0;
  for (size_t i = 0; i < ew_result_warning_count(r); i++)
    if (!strcmp(ew_result_warning_code(r, i), code)) n++;
  return n;
}
/* index of the first warning with this code (SIZE_MAX: none) */
static size_t find_code(const ew_result *r, const char *code) {
  for (size_t i = 0; i < ew_result_warning_count(r); i++)
    if (!strcmp(ew_result_warning_code(r, i), code)) return i;
  return SIZE_MAX;
}

/* ---- 1. codes ----------------------------------------------------------------------------
 * A 20 nm In0.2Ga0.8As layer buried in GaAs (past its critical thickness, see section 2) and
 * an Al0.6Ga0.4As barrier (an X-valley alloy above x ≈ 0.42: I. Vurgaftman et al., J. Appl.
 * Phys. 89, 5815 (2001), from memory) give "critical-thickness" twice (the layer itself, and
 * the strained block of barrier and well) and "indirect-layer" once; the codes stand beside
 * the right texts in the library and in `solve --json`. */
static const char *codes_stack =
    "substrate = \"GaAs\";\n"
    "layers = (\n"
    "  { name = \"left\";  material = \"AlGaAs\"; x = 0.6; thickness = 20.0; },\n"
    "  { name = \"well\";  material = \"InGaAs\"; x = 0.2; thickness = 20.0; },\n"
    "  { name = \"right\"; material = \"GaAs\"; thickness = 20.0; }\n"
    ");\n";

static void codes_library_and_json(void **state) {
  (void)state;
  solved s = solve_text(codes_stack);
  const ew_result *r = s.r;
  assert_int_equal(count_code(r, "critical-thickness"), 2);
  assert_int_equal(count_code(r, "indirect-layer"), 1);
  size_t ic = find_code(r, "critical-thickness"), iv = find_code(r, "indirect-layer");
  assert_non_null(strstr(ew_result_warning(r, ic), "'well'"));
  assert_non_null(strstr(ew_result_warning(r, ic), "exceeds its Matthews–Blakeslee"));
  assert_non_null(strstr(ew_result_warning(r, iv), "'left'"));
  assert_non_null(strstr(ew_result_warning(r, iv), "X"));
  assert_null(ew_result_warning_code(r, ew_result_warning_count(r)));
  /* the JSON: "warning_codes" parallel to "warnings" */
  char path[1200], out[1300], args[1400];
  assert_int_equal(rt_write(&env, "codes.cfg", codes_stack, path, sizeof path), 0);
  snprintf(out, sizeof out, "%s.json", path);
  snprintf(args, sizeof args, "solve '%s' --json", path);
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  const rj *w = rj_get(&doc, "warnings"), *c = rj_get(&doc, "warning_codes");
  assert_non_null(w);
  assert_non_null(c);
  assert_int_equal(w->n, ew_result_warning_count(r));
  assert_int_equal(c->n, ew_result_warning_count(r));
  for (size_t i = 0; i < c->n; i++) {
    RT_STREQ(w->item[i].str, ew_result_warning(r, i), "warning text");
    RT_STREQ(c->item[i].str, ew_result_warning_code(r, i), "warning code");
  }
  rj_free(&doc);
  solved_free(&s);
}

/* ---- 2. strain and substrate ------------------------------------------------------------
 * Matthews–Blakeslee force balance on a 60° dislocation (J. W. Matthews, A. E. Blakeslee,
 * J. Cryst. Growth 27, 118 (1974)): h = n b (1 − ν cos²α)/(8π f (1 + ν) cos λ) (ln(h/b) + 1),
 * b = a/√2, α = λ = 60°, n = 1 for a layer with a free surface, 2 for a buried one (two
 * interfaces); written out here, independently of strain.c. */
static double mb_hc_nm(double a_nm, double f, double nu, int n) {
  double b = a_nm / sqrt(2.0), A = n * b * (1.0 - nu * 0.25) / (8.0 * M_PI * fabs(f) * (1.0 + nu) * 0.5);
  double h = 10.0 * A;
  for (int i = 0; i < 500; i++) h = A * (log(h / b) + 1.0); /* contraction: rate A/h < 1 */
  return h;
}

/* catalogue parameters of a material (the inputs, not the function under test) */
typedef struct {
  double a_nm, c11, c12;
} mat;
static mat mat_of(const char *name, double x) {
  ew_params p;
  ew_error err;
  if (ew_material_params2(cat, name, x, 0.0, &p, &err) != EW_OK) fail_msg("%s: %s", name, err.message);
  mat m = {p.v[EW_P_ALC] / 10.0, p.v[EW_P_C11], p.v[EW_P_C12]};
  return m;
}
static double nu_of(mat m) { return m.c12 / (m.c11 + m.c12); }
static double eps_on(mat m, mat sub) { return (sub.a_nm - m.a_nm) / m.a_nm; }
/* biaxial modulus of the zero-stress strain balance, A = c11 + c12 − 2 c12²/c11
 * (N. J. Ekins-Daukes et al., Cryst. Growth Des. 2, 287 (2002)) */
static double biax(mat m) { return m.c11 + m.c12 - 2.0 * m.c12 * m.c12 / m.c11; }

/* In0.2Ga0.8As on GaAs, a coarse grid (strain warnings do not depend on it) */
static solved solve_ingaas(double t_nm, int buried) {
  char text[1024];
  snprintf(text, sizeof text,
           "substrate = \"GaAs\";\ngrid_step = 0.1;\nlayers = (\n"
           "  { name = \"below\"; material = \"GaAs\"; thickness = 20.0; },\n"
           "  { name = \"well\"; material = \"InGaAs\"; x = 0.2; thickness = %.17g; }%s\n);\n",
           t_nm, buried ? ",\n  { name = \"cap\"; material = \"GaAs\"; thickness = 20.0; }" : "");
  return solve_text(text);
}

/* The issue quotes 14.6 nm (buried) and 5.8 nm (one interface) for In0.2Ga0.8As/GaAs; our
 * own evaluation must agree with them to their printed digits, and the library must warn
 * exactly past them (±1 %: a constant off by 1 % moves h_c by about 0.9 %, see below). */
static void critical_thickness_buried_and_surface(void **state) {
  (void)state;
  mat w = mat_of("InGaAs", 0.2), g = mat_of("GaAs", 0.0);
  double f = eps_on(w, g), nu = nu_of(w);
  double hc2 = mb_hc_nm(w.a_nm, f, nu, 2), hc1 = mb_hc_nm(w.a_nm, f, nu, 1);
  TU_NEAR(hc2, 14.6, 0.05, "issue 10 quotes 14.6 nm buried (Matthews–Blakeslee)");
  TU_NEAR(hc1, 5.8, 0.05, "issue 10 quotes 5.8 nm one-interface (Matthews–Blakeslee)");
  const double k[2] = {0.99, 1.01};
  for (int buried = 0; buried < 2; buried++)
    for (int j = 0; j < 2; j++) {
      solved s = solve_ingaas(k[j] * (buried ? hc2 : hc1), buried);
      if (count_code(s.r, "critical-thickness") != (size_t)j)
        fail_msg("%s layer at %.2f h_c: %zu critical-thickness warnings, want %d",
                 buried ? "buried" : "surface", k[j], count_code(s.r, "critical-thickness"), j);
      solved_free(&s);
    }
  /* the inconsistency: a 12 nm buried well is fine, a 12 nm surface layer is not */
  solved a = solve_ingaas(12.0, 1), b = solve_ingaas(12.0, 0);
  assert_int_equal(count_code(a.r, "critical-thickness"), 0);
  assert_int_equal(count_code(b.r, "critical-thickness"), 1);
  assert_non_null(strstr(ew_result_warning(b.r, find_code(b.r, "critical-thickness")), "uncapped"));
  solved_free(&a);
  solved_free(&b);
}

/* Two 4 nm In0.2Ga0.8As wells 1 µm apart: each below 14.6 nm, and the block's mean strain
 * (spacer included) allows far more than 1008 nm — no warning; one 20 nm buried well warns. */
static void multilayer_with_spacers(void **state) {
  (void)state;
  mat w = mat_of("InGaAs", 0.2), g = mat_of("GaAs", 0.0);
  double ew = eps_on(w, g), Aw = biax(w), Ag = biax(g);
  double mean = Aw * ew * 8.0 / (Aw * 8.0 + Ag * 1000.0);
  double hc_block = mb_hc_nm(w.a_nm, mean, nu_of(w), 2);
  if (!(hc_block > 1008.0)) fail_msg("premise: block h_c %.1f nm should exceed 1008 nm", hc_block);
  solved s = solve_text("substrate = \"GaAs\";\ngrid_step = 0.25;\nlayers = (\n"
                        "  { name = \"b1\"; material = \"GaAs\"; thickness = 20.0; },\n"
                        "  { name = \"w1\"; material = \"InGaAs\"; x = 0.2; thickness = 4.0; },\n"
                        "  { name = \"sp\"; material = \"GaAs\"; thickness = 1000.0; },\n"
                        "  { name = \"w2\"; material = \"InGaAs\"; x = 0.2; thickness = 4.0; },\n"
                        "  { name = \"b2\"; material = \"GaAs\"; thickness = 20.0; }\n);\n");
  assert_int_equal(count_code(s.r, "critical-thickness"), 0);
  solved_free(&s);
  solved t = solve_ingaas(20.0, 1);
  assert_int_equal(count_code(t.r, "critical-thickness"), 1);
  solved_free(&t);
}

/* Five periods of 5 nm In0.2Ga0.8As and GaAs0.8P0.2 of the thickness that balances the
 * stress (A_w ε_w t_w + A_b ε_b t_b = 0, Ekins-Daukes et al. 2002): no warning.  The same
 * block with GaAs spacers is beyond the h_c of its mean strain and warns once (the block). */
static void strain_balanced(void **state) {
  (void)state;
  mat w = mat_of("InGaAs", 0.2), p = mat_of("GaAsP", 0.8), g = mat_of("GaAs", 0.0);
  double ew = eps_on(w, g), ep = eps_on(p, g);
  double tb = -biax(w) * ew * 5.0 / (biax(p) * ep);
  double tw_mean = biax(w) * ew * 25.0 / (biax(w) * 25.0 + biax(g) * 5.0 * tb);
  double T = 25.0 + 5.0 * tb, hc = mb_hc_nm(w.a_nm, tw_mean, nu_of(w), 2);
  if (!(T > hc)) fail_msg("premise: unbalanced block %.1f nm should exceed its h_c %.1f nm", T, hc);
  for (int balanced = 1; balanced >= 0; balanced--) {
    char text[4096];
    size_t n = (size_t)snprintf(text, sizeof text, "substrate = \"GaAs\";\ngrid_step = 0.1;\n"
                                "layers = (\n  { name = \"lo\"; material = \"GaAs\"; thickness = 20.0; },\n");
    for (int k = 0; k < 5; k++)
      n += (size_t)snprintf(text + n, sizeof text - n,
                            "  { name = \"w%d\"; material = \"InGaAs\"; x = 0.2; thickness = 5.0; },\n"
                            "  { name = \"s%d\"; material = \"%s\"; %s thickness = %.17g; },\n",
                            k, k, balanced ? "GaAsP" : "GaAs", balanced ? "x = 0.8;" : "", tb);
    snprintf(text + n, sizeof text - n, "  { name = \"cap\"; material = \"GaAs\"; thickness = 20.0; }\n);\n");
    solved s = solve_text(text);
    assert_int_equal(count_code(s.r, "critical-thickness"), balanced ? 0 : 1);
    if (!balanced)
      assert_non_null(strstr(ew_result_warning(s.r, find_code(s.r, "critical-thickness")),
                             "cumulative strain"));
    solved_free(&s);
  }
}

/* Three 5 nm In0.2Ga0.8As wells with 10 nm GaAs spacers (a 35 nm block of mean strain about
 * −0.6 %) lie between the one-interface and the buried h_c of that mean: buried under a cap,
 * no warning; uncapped (the last well at the surface), the block warns. */
static void block_surface_or_buried(void **state) {
  (void)state;
  mat w = mat_of("InGaAs", 0.2), g = mat_of("GaAs", 0.0);
  double ew = eps_on(w, g), Aw = biax(w), Ag = biax(g);
  double T = 35.0, mean = Aw * ew * 15.0 / (Aw * 15.0 + Ag * 20.0);
  double hc1 = mb_hc_nm(w.a_nm, mean, nu_of(w), 1), hc2 = mb_hc_nm(w.a_nm, mean, nu_of(w), 2);
  if (!(hc1 < T && T < hc2)) fail_msg("premise: %g < %g < %g nm", hc1, T, hc2);
  for (int capped = 1; capped >= 0; capped--) {
    char text[2048];
    snprintf(text, sizeof text, "substrate = \"GaAs\";\ngrid_step = 0.1;\nlayers = (\n"
             "  { name = \"lo\"; material = \"GaAs\"; thickness = 20.0; },\n"
             "  { name = \"w1\"; material = \"InGaAs\"; x = 0.2; thickness = 5.0; },\n"
             "  { name = \"s1\"; material = \"GaAs\"; thickness = 10.0; },\n"
             "  { name = \"w2\"; material = \"InGaAs\"; x = 0.2; thickness = 5.0; },\n"
             "  { name = \"s2\"; material = \"GaAs\"; thickness = 10.0; },\n"
             "  { name = \"w3\"; material = \"InGaAs\"; x = 0.2; thickness = 5.0; }%s\n);\n",
             capped ? ",\n  { name = \"cap\"; material = \"GaAs\"; thickness = 20.0; }" : "");
    solved s = solve_text(text);
    assert_int_equal(count_code(s.r, "critical-thickness"), capped ? 0 : 1);
    if (!capped)
      assert_non_null(strstr(ew_result_warning(s.r, find_code(s.r, "critical-thickness")),
                             "cumulative strain"));
    solved_free(&s);
  }
}

/* Without a substrate: In0.2Ga0.8As/GaAs warns with the mismatch (Vegard's law from the
 * catalogue's lattice constants) and the key to set; GaAs/Al0.3Ga0.7As (0.04 %, below the
 * 0.2 % threshold, common practice) and the same stack with its substrate do not. */
static void no_substrate(void **state) {
  (void)state;
#define NO_SUB_FMT                                                                  \
  "%slayers = (\n"                                                                  \
  "  { name = \"b1\"; material = \"GaAs\"; thickness = 20.0; },\n"                  \
  "  { name = \"w\"; material = \"%s\"; x = %g; thickness = 7.0; },\n"               \
  "  { name = \"b2\"; material = \"GaAs\"; thickness = 20.0; }\n);\n"
  char text[1024];
  snprintf(text, sizeof text, NO_SUB_FMT, "", "InGaAs", 0.2);
  solved s = solve_text(text);
  assert_int_equal(count_code(s.r, "no-substrate"), 1);
  const char *m = ew_result_warning(s.r, find_code(s.r, "no-substrate"));
  mat w = mat_of("InGaAs", 0.2), g = mat_of("GaAs", 0.0);
  char want[64];
  snprintf(want, sizeof want, "by %.2f %%", 100.0 * (w.a_nm - g.a_nm) / g.a_nm);
  if (!strstr(m, want)) fail_msg("no-substrate text lacks '%s': %s", want, m);
  assert_non_null(strstr(m, "substrate = \"GaAs\";"));
  solved_free(&s);
  snprintf(text, sizeof text, NO_SUB_FMT, "", "AlGaAs", 0.3);
  s = solve_text(text);
  assert_int_equal(count_code(s.r, "no-substrate"), 0);
  solved_free(&s);
  snprintf(text, sizeof text, NO_SUB_FMT, "substrate = \"GaAs\";\n", "InGaAs", 0.2);
  s = solve_text(text);
  assert_int_equal(count_code(s.r, "no-substrate"), 0);
  solved_free(&s);
}

/* ---- 3. levels against the single-band model ---------------------------------------------
 * A. T. da Cunha Lima, I. C. da Cunha Lima, A. Ferreira da Silva, Phys. Rev. B 55, 15420
 * (1997): in GaAs/AlAs wells the Γ ground state crosses the AlAs X edge for a GaAs width
 * near 37 Å (type II below); L. J. Blue et al., Superlattices Microstruct. 21, 187 (1997)
 * see both type-I and type-II lines at 35 Å.  So a 3.0 nm well warns "level-above-x" for e1
 * and a 5.0 nm well does not; the X edge in the text is AlAs's Ev + Eg_X from the catalogue. */
static solved gaas_in_alas(double w_nm) {
  char text[1024];
  snprintf(text, sizeof text,
           "temperature = 4.0;\nlayers = (\n"
           "  { name = \"b1\"; material = \"AlAs\"; thickness = 20.0; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
           "  { name = \"b2\"; material = \"AlAs\"; thickness = 20.0; }\n);\n", w_nm);
  return solve_text(text);
}
static double edge_of(const char *name, double x, double T, int valley) {
  ew_bands b;
  ew_error err;
  if (ew_material_bands(cat, name, x, T, &b, &err) != EW_OK) fail_msg("%s: %s", name, err.message);
  return b.Ev_eV + (valley == 1 ? b.Eg_X_eV : valley == 2 ? b.Eg_L_eV : b.Eg_G_eV);
}

static void gaas_alas_gamma_x(void **state) {
  (void)state;
  double X = edge_of("AlAs", 0.0, 4.0, 1);
  solved n = gaas_in_alas(3.0), w = gaas_in_alas(5.0);
  double e1n = ew_result_state(n.r, 0)->energy_eV, e1w = ew_result_state(w.r, 0)->energy_eV;
  if (!(e1n > X && e1w < X))
    fail_msg("premise (da Cunha Lima 1997): e1 %.4f (3 nm) above and %.4f (5 nm) below X %.4f",
             e1n, e1w, X);
  assert_int_equal(count_code(n.r, "level-above-x"), 1);
  const char *m = ew_result_warning(n.r, find_code(n.r, "level-above-x"));
  char want[96];
  snprintf(want, sizeof want, "e1 (%.4f eV)", e1n);
  if (!strstr(m, want)) fail_msg("'%s' missing in: %s", want, m);
  snprintf(want, sizeof want, "lies %.1f meV above the X edge (%.4f eV) of layer 'b", 1e3 * (e1n - X), X);
  if (!strstr(m, want)) fail_msg("'%s' missing in: %s", want, m);
  assert_non_null(strstr(m, "(AlAs)"));
  /* 5 nm: e1 is below X; only its excited levels (e2 at ~1.12 eV) reach above it */
  assert_int_equal(count_code(w.r, "level-above-x"), 0);
  assert_int_equal(count_code(w.r, "excited-level-above-x"), 1);
  assert_non_null(strstr(ew_result_warning(w.r, find_code(w.r, "excited-level-above-x")), "e2 ("));
  solved_free(&n);
  solved_free(&w);
}

/* The reach of a level: a 0.5 nm AlAs layer d nm beyond a 2 nm GaAs well in Al0.4Ga0.6As
 * holds less than 1e-3 of e1 at d = 4 nm, but lies within three WKB decay lengths
 * (κd < 3, κ = √(2m_b(Ec_b − E1))/ħ with the barrier's catalogue mass and edge: the
 * textbook tunnelling exponent), so e1 above its X edge is warned about; at d = 8 nm
 * (κd > 3) it is not. */
static void level_reach_decay_lengths(void **state) {
  (void)state;
  ew_bands b;
  ew_error err;
  assert_int_equal(ew_material_bands(cat, "AlGaAs", 0.4, 4.0, &b, &err), EW_OK);
  const double K = EW_HB2M0_EVNM2; /* ħ²/2m0 in eV nm² (CODATA 2018, src/constants.h) */
  const double d[2] = {4.0, 8.0};
  for (int q = 0; q < 2; q++) {
    char text[1024];
    snprintf(text, sizeof text,
             "temperature = 4.0;\nlayers = (\n"
             "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.4; thickness = 25.0; },\n"
             "  { name = \"well\"; material = \"GaAs\"; thickness = 2.0; },\n"
             "  { name = \"sp\"; material = \"AlGaAs\"; x = 0.4; thickness = %.17g; },\n"
             "  { name = \"alas\"; material = \"AlAs\"; thickness = 0.5; },\n"
             "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.4; thickness = 25.0; }\n);\n", d[q]);
    solved s = solve_text(text);
    double e1 = ew_result_state(s.r, 0)->energy_eV, X = edge_of("AlAs", 0.0, 4.0, 1);
    double kd = sqrt(b.me * (b.Ec_eV - e1) / K) * d[q];
    if (!(e1 > X) || (q == 0 ? !(kd < 3.0) : !(kd > 3.0)))
      fail_msg("premise: e1 %.4f above X %.4f, κd = %.3g %s 3", e1, X, kd, q ? ">" : "<");
    assert_int_equal(count_code(s.r, "level-above-x"), q == 0 ? 1 : 0);
    if (q == 0) {
      const char *m = ew_result_warning(s.r, find_code(s.r, "level-above-x"));
      assert_non_null(strstr(m, "'alas'"));
      const char *ph = strstr(m, "it has ");
      assert_non_null(ph);
      double p = strtod(ph + 7, NULL);
      if (!(p > 0.0 && p < 1e-3)) fail_msg("probability %g should be below 1e-3: %s", p, m);
    }
    solved_free(&s);
  }
}

/* InAs/GaSb: the InAs conduction edge lies below the GaSb valence edge (broken gap, type III:
 * I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), from memory); the warning says the
 * single-band model does not apply and names the 8-band k·p model. */
static void inas_gasb_broken_gap(void **state) {
  (void)state;
  double ec = edge_of("InAs", 0.0, 4.0, 0), ev = edge_of("GaSb", 0.0, 4.0, -1);
  if (!(ec < ev)) fail_msg("premise: InAs Ec %.4f below GaSb Ev %.4f", ec, ev);
  solved s = solve_text("temperature = 4.0;\nlayers = (\n"
                        "  { name = \"b1\"; material = \"AlSb\"; thickness = 20.0; },\n"
                        "  { name = \"inas\"; material = \"InAs\"; thickness = 8.0; },\n"
                        "  { name = \"gasb\"; material = \"GaSb\"; thickness = 8.0; },\n"
                        "  { name = \"b2\"; material = \"AlSb\"; thickness = 20.0; }\n);\n");
  assert_int_equal(count_code(s.r, "broken-gap"), 1);
  const char *m = ew_result_warning(s.r, find_code(s.r, "broken-gap"));
  assert_non_null(strstr(m, "'inas'"));
  assert_non_null(strstr(m, "'gasb'"));
  assert_non_null(strstr(m, "8-band k·p"));
  assert_int_equal(count_code(s.r, "type-ii"), 0); /* broken gap says it all */
  solved_free(&s);
}

/* An InP well in Al0.48In0.52As on InP: staggered (type II), electrons in InP, holes pushed
 * into AlInAs (J. S. Weiner et al., Appl. Phys. Lett. 46, 619 (1985) on the band offsets of
 * this lattice-matched system; staggered alignment from memory): no hole is bound and both
 * warnings say why. */
static void inp_alinas_no_holes(void **state) {
  (void)state;
  solved s = solve_text("temperature = 77.0;\nsubstrate = \"InP\";\nlayers = (\n"
                        "  { name = \"b1\"; material = \"AlInAs\"; x = 0.48; thickness = 20.0; },\n"
                        "  { name = \"well\"; material = \"InP\"; thickness = 6.0; },\n"
                        "  { name = \"b2\"; material = \"AlInAs\"; x = 0.48; thickness = 20.0; }\n);\n");
  assert_int_equal(ew_result_band_count(s.r, EW_BAND_HH) + ew_result_band_count(s.r, EW_BAND_LH), 0);
  assert_int_equal(count_code(s.r, "no-bound-holes"), 1);
  assert_int_equal(count_code(s.r, "type-ii"), 1);
  const char *m = ew_result_warning(s.r, find_code(s.r, "type-ii"));
  assert_non_null(strstr(m, "electrons are confined in 'well' (InP"));
  assert_non_null(strstr(m, "(AlInAs"));
  solved_free(&s);
}

/* Both bound in a staggered stack (outer barriers of a user material high in Ec and low in
 * Ev): the spatially indirect e1–hh1 line is listed, its overlap small but not zero, and the
 * warning quotes that line's overlap. */
static void type_ii_indirect_line(void **state) {
  (void)state;
  solved s = solve_text("temperature = 77.0;\nsubstrate = \"InP\";\n"
                        "materials = ( { name = \"wall\"; Ec = 1.3; Ev = -1.3; me = 0.1; mhh = 0.4; mlh = 0.1; } );\n"
                        "layers = (\n  { name = \"o1\"; material = \"wall\"; thickness = 20.0; },\n"
                        "  { name = \"inp\"; material = \"InP\"; thickness = 6.0; },\n"
                        "  { name = \"alinas\"; material = \"AlInAs\"; x = 0.48; thickness = 6.0; },\n"
                        "  { name = \"o2\"; material = \"wall\"; thickness = 20.0; }\n);\n");
  const ew_result *r = s.r;
  assert_int_equal(count_code(r, "type-ii"), 1);
  const char *m = ew_result_warning(r, find_code(r, "type-ii"));
  assert_non_null(strstr(m, "electrons are confined in 'inp'"));
  assert_non_null(strstr(m, "holes in 'alinas'"));
  const ew_line *ln = NULL;
  for (size_t j = 0; j < ew_result_line_count(r); j++) {
    const ew_line *l = ew_result_line(r, j);
    if (l->kind == EW_LINE_INTERBAND && !strcmp(ew_result_state(r, l->upper)->label, "e1") &&
        !strcmp(ew_result_state(r, l->lower)->label, "hh1"))
      ln = l;
  }
  assert_non_null(ln);
  if (!(ln->overlap > 1e-4 && ln->overlap < 0.5)) fail_msg("indirect overlap %g", ln->overlap);
  char want[80];
  snprintf(want, sizeof want, "overlap %.3g", ln->overlap);
  if (!strstr(m, want)) fail_msg("'%s' missing in: %s", want, m);
  solved_free(&s);
}

/* The detector example, a plain GaAs/Al0.28Ga0.72As well (type I, Γ-like, unstrained, 62:38
 * offsets, README): no warning at all. */
static void plain_well_has_none(void **state) {
  (void)state;
  char *text = rt_slurp("examples/detector_well.cfg");
  assert_non_null(text);
  solved s = solve_text(text);
  free(text);
  for (size_t i = 0; i < ew_result_warning_count(s.r); i++)
    fail_msg("unexpected warning [%s] %s", ew_result_warning_code(s.r, i), ew_result_warning(s.r, i));
  /* each level's distance below the barrier top: in a symmetric unbiased well the top is the
     barrier's edge at the outer face (node 0) */
  for (size_t i = 0; i < ew_result_state_count(s.r); i++) {
    const ew_state *q = ew_result_state(s.r, i);
    double edge = ew_result_edge_eV(s.r, q->band)[0];
    double want = q->band == EW_BAND_E ? edge - q->energy_eV : q->energy_eV - edge;
    if (!(fabs(ew_result_state_below_top_eV(s.r, i) - want) < 1e-12))
      fail_msg("%s: below_top %.12g, barrier edge gives %.12g", q->label,
               ew_result_state_below_top_eV(s.r, i), want);
  }
  solved_free(&s);
}

/* The Kane relation's temperature shift of the electron mass: an InAs well at 300 K moves
 * its mass by about −15 % (warned, with the mass computed here from the review's InAs
 * values typed independently: me = 0.026 m0, E_P = 21.5 eV, Δso = 0.39 eV, Eg = 0.417 eV,
 * α = 0.276 meV/K, β = 93 K; I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), from
 * memory); at 4 K it does not move, and the GaAs detector well at 300 K (−7 %) is not
 * warned (plain_well_has_none). */
static void electron_mass_temperature(void **state) {
  (void)state;
  /* a literal format (the suite builds with -Wformat=2 -Werror under the sanitizers) */
#define EMT_FMT                                                                             \
  "temperature = %g;\nlayers = (\n"                                                          \
  "  { name = \"b1\"; material = \"AlSb\"; thickness = 20.0; },\n"                           \
  "  { name = \"inas\"; material = \"InAs\"; thickness = 8.0; },\n"                          \
  "  { name = \"b2\"; material = \"AlSb\"; thickness = 20.0; }\n);\n"
  char text[512];
  snprintf(text, sizeof text, EMT_FMT, 300.0);
  solved s = solve_text(text);
  assert_int_equal(count_code(s.r, "electron-mass-temperature"), 1);
  const char *m = ew_result_warning(s.r, find_code(s.r, "electron-mass-temperature"));
  double eg0 = 0.417, eg = eg0 - 0.276e-3 * 300.0 * 300.0 / (300.0 + 93.0), d = 0.39;
  double inv = 1 / 0.026 + 21.5 / 3 * (2 / eg + 1 / (eg + d) - 2 / eg0 - 1 / (eg0 + d));
  char want[64];
  snprintf(want, sizeof want, "'inas' (InAs): the electron mass %.4f m0 at 300 K", 1 / inv);
  if (!strstr(m, want)) fail_msg("'%s' missing in: %s", want, m);
  snprintf(want, sizeof want, "%+.0f %%", 100.0 * (1 / inv / 0.026 - 1));
  if (!strstr(m, want)) fail_msg("'%s' missing in: %s", want, m);
  solved_free(&s);
  snprintf(text, sizeof text, EMT_FMT, 4.0);
#undef EMT_FMT
  s = solve_text(text);
  assert_int_equal(count_code(s.r, "electron-mass-temperature"), 0);
  solved_free(&s);
}

/* ---- 4. warnings reach sweeps, matches and tolerances ------------------------------------
 * The stack: an In0.2Ga0.8As well buried in GaAs on GaAs; its buried Matthews–Blakeslee
 * thickness (14.6 nm, mb_hc_nm above) is the reference for which points carry the code. */
#define WF_STACK                                                                     \
    "substrate = \"GaAs\";\ngrid_step = 0.1;\nlayers = (\n" \
    "  { name = \"lower\"; material = \"GaAs\"; thickness = 20.0; },\n" \
    "  { name = \"well\"; material = \"InGaAs\"; x = 0.2; thickness = %.17g; },\n" \
    "  { name = \"upper\"; material = \"GaAs\"; thickness = 20.0; }\n);\n"
static double hc_buried(void) {
  mat w = mat_of("InGaAs", 0.2), g = mat_of("GaAs", 0.0);
  return mb_hc_nm(w.a_nm, eps_on(w, g), nu_of(w), 2);
}
static void write_wf_stack(const char *name, double t_nm, char *path, size_t size) {
  char text[1024];
  snprintf(text, sizeof text, WF_STACK, t_nm);
  assert_int_equal(rt_write(&env, name, text, path, size), 0);
}
static rj run_json(const char *args, const char *out) {
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  return doc;
}
/* a JSON array of codes equals the expected single code (NULL: empty) */
static void codes_are(const rj *a, const char *want, const char *what) {
  if (!a || a->t != RJ_ARR) fail_msg("%s: no array of codes", what);
  if (!want) {
    if (a->n) fail_msg("%s: %zu codes, want none (first '%s')", what, a->n, a->item[0].str);
    return;
  }
  if (a->n != 1) fail_msg("%s: %zu codes, want 1 (%s)", what, a->n, want);
  RT_STREQ(a->item[0].str, want, what);
}

/* Sweep the well from 10 to 20 nm: exactly the points thicker than h_c carry the code, in
 * the CSV's last column "warnings" and in each JSON point. */
static void sweep_flags_thick_points(void **state) {
  (void)state;
  double hc = hc_buried();
  char stack[1200], csvp[1300], out[1300], args[4096];
  write_wf_stack("sweep.cfg", 12.0, stack, sizeof stack);
  snprintf(csvp, sizeof csvp, "%s/sweep.csv", env.tmp);
  snprintf(out, sizeof out, "%s/sweep.json", env.tmp);
  snprintf(args, sizeof args, "sweep '%s' --vary well.thickness=10:20:1 --csv '%s' --json", stack, csvp);
  rj doc = run_json(args, out);
  rcsv c;
  assert_int_equal(rcsv_read(csvp, &c), 0);
  int wc = rcsv_col(&c, "warnings");
  assert_int_equal(wc, (int)c.ncol - 1); /* the last column */
  assert_int_equal(c.nrows, 11);
  const rj *pts = rj_get(&doc, "points");
  assert_true(pts && pts->n == 11);
  size_t thick = 0;
  for (size_t i = 0; i < c.nrows; i++) {
    double t = rcsv_num(&c, i, 0);
    TU_NEAR(t, 10.0 + (double)i, 1e-9, "the sweep's values");
    const char *want = t > hc ? "critical-thickness" : "";
    thick += t > hc;
    char what[64];
    snprintf(what, sizeof what, "CSV warnings at %g nm", t);
    RT_STREQ(rcsv_at(&c, i, wc), want, what);
    snprintf(what, sizeof what, "JSON warnings at %g nm", t);
    codes_are(rj_get(&pts->item[i], "warnings"), t > hc ? want : NULL, what);
  }
  assert_int_equal(thick, 6); /* 15 … 20 nm */
  rcsv_free(&c);
  rj_free(&doc);
}

/* match: e1–hh1 at 1025 nm needs a well past h_c (about 25 nm), and the solution says so;
 * at 960 nm the well is below h_c and carries nothing. */
static void match_carries_codes(void **state) {
  (void)state;
  double hc = hc_buried();
  char stack[1200], out[1300], args[4096];
  write_wf_stack("match.cfg", 8.0, stack, sizeof stack);
  const double target_nm[2] = {1025.0, 960.0};
  for (int k = 0; k < 2; k++) {
    snprintf(out, sizeof out, "%s/match%d.json", env.tmp, k);
    snprintf(args, sizeof args, "match '%s' --vary well.thickness=3:30 --line e1-hh1 --target %gnm --json",
             stack, target_nm[k]);
    rj doc = run_json(args, out);
    const rj *sol = rj_get(&doc, "solutions");
    assert_true(sol && sol->n == 1);
    double v = rj_num(&sol->item[0], "value");
    if (k == 0 ? !(v > hc) : !(v < hc)) fail_msg("premise: %g nm against h_c %g nm", v, hc);
    codes_are(rj_get(&sol->item[0], "warnings"), k == 0 ? "critical-thickness" : NULL, "match");
    rj_free(&doc);
  }
}

/* tolerance: a well 0.15 nm below h_c is fine, one monolayer more is not. */
static void tolerance_carries_codes(void **state) {
  (void)state;
  double hc = hc_buried(), t = hc - 0.15;
  char stack[1200], out[1300], args[4096];
  write_wf_stack("tol.cfg", t, stack, sizeof stack);
  snprintf(out, sizeof out, "%s/tol.json", env.tmp);
  snprintf(args, sizeof args, "tolerance '%s' --json", stack);
  rj doc = run_json(args, out);
  codes_are(rj_get(&doc, "warnings"), NULL, "tolerance nominal");
  const rj *L = rj_get(&doc, "layers");
  assert_true(L && L->n == 3);
  const rj *w = &L->item[1];
  RT_STREQ(rj_str(w, "name"), "well", "layer 2");
  if (!(t + rj_num(w, "monolayer_nm") > hc)) fail_msg("premise: +1 ML should pass h_c");
  codes_are(rj_get(w, "warnings_minus_1ML"), NULL, "well -1 ML");
  codes_are(rj_get(w, "warnings_plus_1ML"), "critical-thickness", "well +1 ML");
  codes_are(rj_get(&L->item[0], "warnings_plus_1ML"), NULL, "lower +1 ML");
  rj_free(&doc);
}

int main(int argc, char **argv) {
  (void)argc;
  argv0 = argv[0];
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(codes_library_and_json),
      cmocka_unit_test(critical_thickness_buried_and_surface),
      cmocka_unit_test(multilayer_with_spacers),
      cmocka_unit_test(strain_balanced),
      cmocka_unit_test(block_surface_or_buried),
      cmocka_unit_test(no_substrate),
      cmocka_unit_test(gaas_alas_gamma_x),
      cmocka_unit_test(level_reach_decay_lengths),
      cmocka_unit_test(inas_gasb_broken_gap),
      cmocka_unit_test(inp_alinas_no_holes),
      cmocka_unit_test(type_ii_indirect_line),
      cmocka_unit_test(plain_well_has_none),
      cmocka_unit_test(electron_mass_temperature),
      cmocka_unit_test(sweep_flags_thick_points),
      cmocka_unit_test(match_carries_codes),
      cmocka_unit_test(tolerance_carries_codes),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
