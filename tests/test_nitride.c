/* test_nitride.c — wurtzite nitrides: the catalogue entries, c-plane strain and band edges
 * (strain_wurtzite.c, alloy.c), polarisation charges and fields (polarization.c), the
 * quantum-confined Stark effect, the AlGaN/GaN two-dimensional electron gas through the
 * Poisson solve, and the new JSON fields read back.  Runs from the project root (the
 * catalogue in materials/).  Each check names its source and tolerance beside it; values
 * typed here are typed independently of the catalogue files. */
#include <math.h>
#include <string.h>

#include "testutil.h"
#include "roundtrip.h"

#include "constants.h"
#include "materials.h"
#include "polarization.h"
#include "result.h"
#include "strain_wurtzite.h"

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

static ew_stack *read_text(const char *text) {
  ew_stack *st = NULL;
  ew_error err;
  char buf[2048];
  if (ew_stack_read_string(text, "test", cat, &st, &err) != EW_OK)
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
  return st;
}

static ew_result *solve(const ew_stack *st) {
  ew_result *r = NULL;
  ew_error err;
  char buf[2048];
  if (ew_solve(st, NULL, &r, &err) != EW_OK) print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
  return r;
}

/* ---- catalogue ------------------------------------------------------------------------- */

/* Binary values: I. Vurgaftman, J. R. Meyer, J. Appl. Phys. 94, 3675 (2003) (gaps, crystal
 * field, A parameters, elastic constants in GPa, lattice constants; from memory), spontaneous
 * polarisation as O. Ambacher et al., J. Phys. Condens. Matter 14, 3399 (2002) use it and
 * e31, e33 of F. Bernardini, V. Fiorentini, D. Vanderbilt, Phys. Rev. B 56, R10024 (1997)
 * (from memory).  Exact to the digits typed. */
static void catalogue_binaries(void **state) {
  (void)state;
  static const struct {
    const char *name;
    double Eg, dcr, A1, A3, c13_GPa, c33_GPa, a_A, psp, e31, e33;
  } ref[] = {
      {"GaN", 3.510, 0.010, -7.21, 6.68, 106, 398, 3.189, -0.034, -0.49, 0.73},
      {"AlN", 6.25, -0.169, -3.86, 3.58, 108, 373, 3.112, -0.090, -0.60, 1.46},
      {"InN", 0.78, 0.040, -8.21, 7.57, 92, 224, 3.545, -0.042, -0.57, 0.97},
  };
  for (size_t k = 0; k < sizeof ref / sizeof ref[0]; k++) {
    ew_params p;
    ew_error err;
    assert_int_equal(ew_material_params(cat, ref[k].name, 0.0, &p, &err), EW_OK);
    TU_NEAR(p.v[EW_P_EG_G], ref[k].Eg, 1e-12, "Vurgaftman & Meyer 2003");
    TU_NEAR(p.v[EW_P_DCR], ref[k].dcr, 1e-12, "Vurgaftman & Meyer 2003");
    TU_NEAR(p.v[EW_P_A1], ref[k].A1, 1e-12, "Vurgaftman & Meyer 2003");
    TU_NEAR(p.v[EW_P_A3], ref[k].A3, 1e-12, "Vurgaftman & Meyer 2003");
    TU_NEAR(p.v[EW_P_C13], 10.0 * ref[k].c13_GPa, 1e-9, "Vurgaftman & Meyer 2003, kbar");
    TU_NEAR(p.v[EW_P_C33], 10.0 * ref[k].c33_GPa, 1e-9, "Vurgaftman & Meyer 2003, kbar");
    TU_NEAR(p.v[EW_P_ALC], ref[k].a_A, 1e-12, "Vurgaftman & Meyer 2003");
    TU_NEAR(p.v[EW_P_PSP], ref[k].psp, 1e-12, "Ambacher et al. 2002");
    TU_NEAR(p.v[EW_P_E31], ref[k].e31, 1e-12, "Bernardini et al. 1997");
    TU_NEAR(p.v[EW_P_E33], ref[k].e33, 1e-12, "Bernardini et al. 1997");
    assert_false(p.have[EW_P_GAMMA1]); /* the zinc-blende parameter set is absent */
  }
}

/* The non-linear spontaneous polarisation of the ternaries (Ambacher et al. 2002, from
 * memory): AlGaN −0.090x − 0.034(1−x) + 0.019x(1−x), InGaN −0.042x − 0.034(1−x) +
 * 0.038x(1−x), AlInN −0.090x − 0.042(1−x) + 0.071x(1−x) C/m²; gap bowings 0.8, 1.4, 2.5 eV
 * (Vurgaftman & Meyer 2003, from memory). */
static void catalogue_ternaries(void **state) {
  (void)state;
  static const struct {
    const char *name;
    double P1, P0, bP, Eg1, Eg0, bEg;
  } ref[] = {{"AlGaN", -0.090, -0.034, 0.019, 6.25, 3.510, 0.8},
             {"InGaN", -0.042, -0.034, 0.038, 0.78, 3.510, 1.4},
             {"AlInN", -0.090, -0.042, 0.071, 6.25, 0.78, 2.5}};
  for (size_t k = 0; k < 3; k++)
    for (double x = 0.1; x < 1.0; x += 0.2) {
      ew_params p;
      ew_error err;
      assert_int_equal(ew_material_params(cat, ref[k].name, x, &p, &err), EW_OK);
      TU_NEAR(p.v[EW_P_PSP], ref[k].P1 * x + ref[k].P0 * (1 - x) + ref[k].bP * x * (1 - x),
              1e-12, "Ambacher et al. 2002 non-linear P_sp");
      ew_bands b;
      assert_int_equal(ew_material_bands(cat, ref[k].name, x, 0.0, &b, &err), EW_OK);
      TU_NEAR(b.Eg_G_eV, ref[k].Eg1 * x + ref[k].Eg0 * (1 - x) - ref[k].bEg * x * (1 - x), 1e-12,
              "Vurgaftman & Meyer 2003 gap bowing, 0 K");
      assert_int_equal(b.wurtzite, 1);
    }
}

/* A zinc-blende file giving a wurtzite key, a wurtzite file giving a Luttinger parameter, and
 * an alloy mixing structures are refused at the value's line (common practice: one parameter
 * set per crystal structure). */
static void catalogue_structure_guard(void **state) {
  (void)state;
  static const char *const bad[] = {
      "name = \"ZB\"; kind = \"binary\"; description = \"d\";\nparams = {\n"
      "  Eg_G = { value = 1.0; source = \"s\"; }; alpha_G = { value = 0.5; source = \"s\"; };\n"
      "  beta_G = { value = 200; source = \"s\"; }; VBO = { value = -1; source = \"s\"; };\n"
      "  me = { value = 0.1; source = \"s\"; }; gamma1 = { value = 7; source = \"s\"; };\n"
      "  gamma2 = { value = 2; source = \"s\"; }; Psp = { value = -0.03; source = \"s\"; };\n};\n",
      "name = \"WZ\"; kind = \"binary\"; structure = \"wurtzite\"; description = \"d\";\nparams = {\n"
      "  Eg_G = { value = 1.0; source = \"s\"; }; alpha_G = { value = 0.5; source = \"s\"; };\n"
      "  beta_G = { value = 200; source = \"s\"; }; VBO = { value = -1; source = \"s\"; };\n"
      "  me = { value = 0.1; source = \"s\"; }; gamma1 = { value = 7; source = \"s\"; };\n};\n",
      "name = \"WZ\"; kind = \"binary\"; structure = \"hexagonal\"; description = \"d\";\n"};
  static const int line[] = {6, 5, 1};
  for (size_t k = 0; k < 3; k++) {
    char dir[] = "/tmp/ew_nitride_XXXXXX";
    assert_non_null(mkdtemp(dir));
    char path[256];
    snprintf(path, sizeof path, "%s/X.cfg", dir);
    FILE *f = fopen(path, "w");
    assert_non_null(f);
    fputs(bad[k], f);
    fclose(f);
    ew_catalogue *c = NULL;
    ew_error err;
    assert_int_equal(ew_catalogue_load(dir, &c, &err), EW_ERR_CATALOGUE);
    assert_int_equal(err.line, line[k]);
    tu_rm_tree(dir);
  }
}

/* ---- strain and band edges --------------------------------------------------------------- */

/* In0.15Ga0.85N on GaN: ε_xx = (a_GaN − a)/a with Vegard a, ε_zz = −2 (c13/c33) ε_xx, the
 * conduction shift (a1 + D1) ε_zz + 2 (a2 + D2) ε_xx, the heavy-hole shift (D1 + D3) ε_zz +
 * 2 (D2 + D4) ε_xx (S. L. Chuang, C. S. Chang, Phys. Rev. B 54, 2491 (1996), band-edge
 * energies, from memory) and P_pz = 2 ε_xx (e31 − e33 c13/c33) (Ambacher et al. 2000, from
 * memory), all from values typed here (Vurgaftman & Meyer 2003; Bernardini et al. 1997). */
static void strain_ingan_on_gan(void **state) {
  (void)state;
  double x = 0.15, y = 1 - x;
  double a = 3.545 * x + 3.189 * y, exx = (3.189 - a) / a;
  double c13 = 92 * x + 106 * y, c33 = 224 * x + 398 * y, ezz = -2 * c13 / c33 * exx;
  double a1 = -3.5 * x - 4.9 * y, a2 = -3.5 * x - 11.3 * y, D1 = -3.7, D2 = 4.5, D3 = 8.2, D4 = -4.1;
  double e31 = -0.57 * x - 0.49 * y, e33 = 0.97 * x + 0.73 * y;
  ew_bands b;
  ew_error err;
  assert_int_equal(ew_material_bands_on(cat, "InGaN", x, 0, 300, 0.3189, &b, &err), EW_OK);
  TU_NEAR(b.eps_par, exx, 1e-12, "Vegard lattice constant on GaN");
  TU_NEAR(b.eps_perp, ezz, 1e-12, "c-plane biaxial strain");
  TU_NEAR(b.dEc_strain_eV, (a1 + D1) * ezz + 2 * (a2 + D2) * exx, 1e-12, "Chuang & Chang 1996");
  TU_NEAR(b.dEhh_strain_eV, (D1 + D3) * ezz + 2 * (D2 + D4) * exx, 1e-12, "Chuang & Chang 1996");
  TU_NEAR(b.Ppz_C_m2, 2 * exx * (e31 - e33 * c13 / c33), 1e-14, "Ambacher et al. 2000");
  assert_true(b.Ppz_C_m2 > 0.0); /* compressive InGaN: P_pz along +z, opposing P_sp */
  /* compressive strain widens the gap (trend of Chuang & Chang 1996) */
  ew_bands u;
  assert_int_equal(ew_material_bands(cat, "InGaN", x, 300, &u, &err), EW_OK);
  assert_true(b.Ec_eV - b.Ev_hh_eV > u.Ec_eV - u.Ev_hh_eV);
}

/* Band-edge masses of unstrained GaN (Chuang & Chang 1996 formulas, typed here): hh
 * m_z = −1/(A1 + A3), m_t = −1/(A2 + A4); and the Δso → 0 limit where the light hole is
 * |X,Y⟩ (m_z = −1/(A1 + A3)) and the crystal-field hole |Z⟩ (m_z = −1/A1, m_t = −1/A2). */
static void masses_band_edge(void **state) {
  (void)state;
  ew_bands b;
  ew_error err;
  assert_int_equal(ew_material_bands(cat, "GaN", 0, 300, &b, &err), EW_OK);
  TU_NEAR(b.mhh_z, 1.0 / (7.21 - 6.68), 1e-12, "Chuang & Chang 1996, hh along c");
  TU_NEAR(b.mhh_par, 1.0 / (0.44 + 3.46), 1e-12, "Chuang & Chang 1996, hh in plane");
  /* GaN: top at VBO, hh above lh above ch by the quasi-cubic splittings (Δcr = 10, Δso = 17
   * meV): E_hh − E_lh = Δ1 + Δ2 − h − √(h² + 2Δ3²), h = (Δ1 − Δ2)/2 (Chuang & Chang 1996) */
  double d1 = 0.010, d2 = 0.017 / 3, h = 0.5 * (d1 - d2), r = sqrt(h * h + 2 * d2 * d2);
  TU_NEAR(b.Ev_hh_eV, -2.64, 1e-12, "VBO is the top (Vurgaftman & Meyer 2003 offsets)");
  TU_NEAR(b.Ev_hh_eV - b.Ev_lh_eV, d1 + d2 - h - r, 1e-12, "Chuang & Chang 1996");
  TU_NEAR(b.Ev_lh_eV - b.Ev_ch_eV, 2 * r, 1e-12, "Chuang & Chang 1996");
  ew_wz_input in = {.Dcr_eV = 0.010, .Dso_eV = 0.0,
                    .A = {-7.21, -0.44, 6.68, -3.46, -3.40, -4.90}};
  ew_wz_bands w;
  assert_int_equal(ew_wurtzite_bands(&in, 0.0, &w, &err), EW_OK);
  TU_NEAR(w.m_z[1], 1.0 / (7.21 - 6.68), 1e-12, "|X,Y> light hole without spin-orbit");
  TU_NEAR(w.m_z[2], 1.0 / 7.21, 1e-12, "|Z> crystal-field hole, -1/A1");
  TU_NEAR(w.m_t[2], 1.0 / 0.44, 1e-12, "|Z> crystal-field hole, -1/A2");
}

/* ---- polarisation fields ----------------------------------------------------------------- */

#define MQW_FMT \
    "temperature = 300.0;\nsubstrate = \"GaN\";\nscreening_sheet = %g;\n" \
    "layers = (\n" \
    "  { name = \"b0\"; material = \"GaN\"; thickness = %g; },\n" \
    "  { name = \"w1\"; material = \"InGaN\"; x = 0.15; thickness = %g; },\n" \
    "  { name = \"b1\"; material = \"GaN\"; thickness = %g; },\n" \
    "  { name = \"w2\"; material = \"InGaN\"; x = 0.15; thickness = %g; },\n" \
    "  { name = \"b2\"; material = \"GaN\"; thickness = %g; }\n);\n"

static ew_stack *mqw(double n_cm2, double Lb, double Lw) {
  char text[1024];
  snprintf(text, sizeof text, MQW_FMT, n_cm2, 0.5 * Lb, Lw, Lb, Lw, 0.5 * Lb);
  return read_text(text);
}

/* The field in the well of a periodic multi-well stack, F_w = (P_b − P_w) L_b /
 * (ε0 (ε_w L_b + ε_b L_w)) (the zero-average-drop result; e.g. Fiorentini et al., Phys. Rev. B
 * 60, 8849 (1999), from memory) and in the barrier −F_w L_w / L_b, from the tool's own
 * polarisations and permittivities; the band edges tilt by that field. */
static void periodic_field(void **state) {
  (void)state;
  double Lb = 8.0, Lw = 3.0;
  ew_stack *st = mqw(0.0, Lb, Lw);
  assert_non_null(st);
  const ew_layer *b = &st->layers[2], *w = &st->layers[1];
  double Fw = (b->polarization_C_m2 - w->polarization_C_m2) * Lb /
              (EW_EPS0_FM * (w->bands.eps_r * Lb + b->bands.eps_r * Lw)) * 1e-5; /* kV/cm */
  TU_NEAR(w->pol_field_kV_cm, Fw, 1e-9 * fabs(Fw), "periodic-stack formula");
  TU_NEAR(st->layers[3].pol_field_kV_cm, Fw, 1e-9 * fabs(Fw), "periodic-stack formula");
  TU_NEAR(b->pol_field_kV_cm, -Fw * Lw / Lb, 1e-9 * fabs(Fw), "zero drop over a period");
  assert_true(Fw < -1500 && Fw > -3500); /* In0.15: 2-3 MV/cm along -z (from memory) */
  /* the electron's band edge inside the well falls by e F per unit length (1 kV/cm = 1e-4 eV/nm) */
  double z0 = w->z_start_nm + 0.5, z1 = w->z_start_nm + Lw - 0.5;
  double slope = (ew_stack_edge_at(st, EW_BAND_E, z1) - ew_stack_edge_at(st, EW_BAND_E, z0)) / (z1 - z0);
  TU_NEAR(slope, Fw * 1e-4, 1e-9, "band tilt = e F");
  /* zero drop over the stack (the boundary condition): the outer faces at equal potential */
  TU_NEAR(ew_polarization_eV(st, 0.0), ew_polarization_eV(st, st->total_nm), 1e-12, "zero drop");
  /* interface charges: σ = P_k − P_{k+1} */
  TU_NEAR(ew_interface_charge_C_m2(st, 0), st->layers[0].polarization_C_m2 - w->polarization_C_m2,
          1e-15, "bound charge -dP/dz");
  ew_stack_free(st);
}

/* Screening by injected pairs: each well face loses e·n of its charge, so the periodic
 * formula holds with P_b − P_w → P_b − P_w + e n (σ < 0 at the lower face here); the emission
 * blue-shifts with injection (the QCSE screening, e.g. Takeuchi et al., Jpn. J. Appl. Phys.
 * 36, L382 (1997), blue shift of the PL with excitation, from memory). */
static void screening_blue_shift(void **state) {
  (void)state;
  double Lb = 8.0, Lw = 3.0, n = 5e12;
  ew_stack *s0 = mqw(0.0, Lb, Lw), *s1 = mqw(n, Lb, Lw);
  assert_non_null(s0);
  assert_non_null(s1);
  const ew_layer *b = &s1->layers[2], *w = &s1->layers[1];
  double dP = b->polarization_C_m2 - w->polarization_C_m2 + EW_E_C * n * 1e4;
  double Fw = dP * Lb / (EW_EPS0_FM * (w->bands.eps_r * Lb + b->bands.eps_r * Lw)) * 1e-5;
  TU_NEAR(w->pol_field_kV_cm, Fw, 1e-9 * fabs(Fw), "periodic formula with screened charges");
  /* a step between two barriers (AlGaN/GaN) is no well face: its charge stays unscreened */
  ew_stack *s2 = read_text("temperature = 300.0;\nsubstrate = \"GaN\";\nscreening_sheet = 5e12;\n"
                           "layers = (\n { material = \"AlGaN\"; x = 0.1; thickness = 5; },\n"
                           " { material = \"GaN\"; thickness = 5; },\n"
                           " { material = \"InGaN\"; x = 0.15; thickness = 3; },\n"
                           " { material = \"GaN\"; thickness = 5; }\n);\n");
  assert_non_null(s2);
  TU_NEAR(ew_interface_charge_C_m2(s2, 0), ew_interface_bound_C_m2(s2, 0), 1e-15, "no well face");
  double b1 = ew_interface_bound_C_m2(s2, 1);
  TU_NEAR(fabs(ew_interface_charge_C_m2(s2, 1)), fabs(b1) - EW_E_C * n * 1e4, 1e-12, "well face screened");
  ew_stack_free(s2);
  ew_result *r0 = solve(s0), *r1 = solve(s1);
  assert_non_null(r0);
  assert_non_null(r1);
  const ew_line *l0 = ew_result_line(r0, ew_result_line_count(r0) - 1), *l1;
  double e0 = INFINITY, e1 = INFINITY;
  for (size_t k = 0; k < ew_result_line_count(r0); k++)
    if ((l0 = ew_result_line(r0, k))->kind == EW_LINE_INTERBAND) e0 = fmin(e0, l0->energy_eV);
  for (size_t k = 0; k < ew_result_line_count(r1); k++)
    if ((l1 = ew_result_line(r1, k))->kind == EW_LINE_INTERBAND) e1 = fmin(e1, l1->energy_eV);
  assert_true(e1 > e0 + 0.01); /* blue shift of tens of meV */
  ew_result_free(r0);
  ew_result_free(r1);
  ew_stack_free(s0);
  ew_stack_free(s1);
}

/* The lowest interband line of one period of a multi-well stack: a well of Lw between
 * half barriers of Lb/2 (zero drop over the period), both states in the well. */
static double lowest_line(double Lw, double Lb, double *F, double *overlap) {
  char text[1024];
  snprintf(text, sizeof text,
           "temperature = 300.0;\nsubstrate = \"GaN\";\nlayers = (\n"
           "  { name = \"b0\"; material = \"GaN\"; thickness = %g; },\n"
           "  { name = \"w\"; material = \"InGaN\"; x = 0.15; thickness = %g; },\n"
           "  { name = \"b1\"; material = \"GaN\"; thickness = %g; }\n);\n", 0.5 * Lb, Lw, 0.5 * Lb);
  ew_stack *st = read_text(text);
  assert_non_null(st);
  ew_options opt;
  ew_options_default(&opt);
  opt.excitons = 0;
  ew_result *r = NULL;
  ew_error err;
  assert_int_equal(ew_solve(st, &opt, &r, &err), EW_OK);
  double best = INFINITY;
  for (size_t k = 0; k < ew_result_line_count(r); k++) {
    const ew_line *l = ew_result_line(r, k);
    const ew_state *u = ew_result_state(r, l->upper), *d = ew_result_state(r, l->lower);
    if (l->kind == EW_LINE_INTERBAND && u->layer == 1 && d->layer == 1 && l->energy_eV < best) {
      best = l->energy_eV;
      *overlap = l->overlap;
    }
  }
  *F = st->layers[1].pol_field_kV_cm;
  ew_result_free(r);
  ew_stack_free(st);
  return best;
}

/* QCSE red shift with well width: in a wide well the electron and the hole sit at opposite
 * faces in states fixed by the field alone, so the transition falls by e F_w per unit of
 * width, dE/dL = −e F_w (the wide-well limit of the QCSE; G. Bastard, Wave Mechanics Applied to
 * Semiconductor Heterostructures (1988), electric-field effects, from memory); tolerance 10 %
 * (the states still feel the far face a little).  L_b = 2 L_w keeps F_w the same at both
 * widths (periodic formula).  The transition and the overlap fall with width at fixed
 * barriers (same source), and a 2.5 nm In0.15Ga0.85N well between 8 nm barriers emits in the
 * blue, 420–470 nm (common practice: blue LEDs use 2–3 nm wells of In 0.15–0.20 at 440–460
 * nm). */
static void qcse_red_shift(void **state) {
  (void)state;
  double F5, F6, o5, o6;
  double E5 = lowest_line(5.0, 10.0, &F5, &o5), E6 = lowest_line(6.0, 12.0, &F6, &o6);
  TU_NEAR(F5, F6, 1e-9 * fabs(F5), "L_b/L_w fixed keeps F_w");
  double slope = (E6 - E5) / 1.0, want = F5 * 1e-4; /* eV/nm */
  TU_NEAR(slope, want, 0.10 * fabs(want), "wide-well QCSE limit dE/dL = -e F_w");
  print_message("QCSE: dE/dL %.4f eV/nm, -e F_w %.4f eV/nm\n", slope, want);
  double F2, F3, F4, o2, o3, o4;
  double E2 = lowest_line(2.0, 8.0, &F2, &o2), E3 = lowest_line(3.0, 8.0, &F3, &o3),
         E4 = lowest_line(4.0, 8.0, &F4, &o4);
  assert_true(E2 > E3 && E3 > E4);
  assert_true(o2 > o3 && o3 > o4);
  double o25, F25, lambda = EW_HC_EVNM / lowest_line(2.5, 8.0, &F25, &o25);
  print_message("QCSE: 2/3/4 nm wells %.4f/%.4f/%.4f eV, overlaps %.3f/%.3f/%.3f; 2.5 nm %.1f nm\n",
                E2, E3, E4, o2, o3, o4, lambda);
  assert_true(lambda > 420 && lambda < 470);
}

/* ---- the two-dimensional electron gas ----------------------------------------------------- */

#define HEMT_FMT \
    "temperature = 300.0;\nsubstrate = \"GaN\";\nc_axis = \"-z\";\n" \
    "surface = { barrier = %g; };\nlayers = (\n" \
    "  { name = \"barrier\"; material = \"AlGaN\"; x = %g; thickness = %g; },\n" \
    "  { name = \"channel\"; material = \"GaN\"; thickness = 60.0; }\n);\n"

/* The charge balance of O. Ambacher et al., J. Appl. Phys. 87, 334 (2000) (from memory):
 *   n_s = σ/e − (ε0 ε_b / (e² d)) (eφ_b + E_F − ΔEc),  E_F = E0 + πħ² n_s/m*,
 *   E0 = (9πħ e² n_s / (8 ε0 ε_GaN √(8 m*)))^{2/3},
 * solved here by bisection, with σ of the typed constants (Ambacher 2002 P_sp, Bernardini 1997
 * e31/e33, Vurgaftman & Meyer 2003 lattice and elastic constants) and ΔEc the tool's. */
static double ambacher_ns_cm2(double x, double d_nm, double phib, double dEc) {
  double y = 1 - x;
  double a = 3.112 * x + 3.189 * y, exx = (3.189 - a) / a;
  double c13 = 108 * x + 106 * y, c33 = 373 * x + 398 * y;
  double e31 = -0.60 * x - 0.49 * y, e33 = 1.46 * x + 0.73 * y;
  double P = -0.090 * x - 0.034 * y + 0.019 * x * y + 2 * exx * (e31 - e33 * c13 / c33);
  double sigma = P - -0.034; /* |P_AlGaN − P_GaN|, the interface with the GaN below */
  sigma = fabs(sigma);
  double eps_b = 9.5 * y + 9.0 * x, eps_g = 9.5, m = 0.20 * EW_M0_KG, e = EW_E_C;
  double d = d_nm * 1e-9, lo = 0, hi = sigma / e;
  for (int it = 0; it < 200; it++) {
    double n = 0.5 * (lo + hi);
    double E0 = pow(9 * EW_PI * EW_HBAR_JS * e * e * n / (8 * EW_EPS0_FM * eps_g * sqrt(8 * m)), 2.0 / 3.0);
    double EF = (E0 + EW_PI * EW_HBAR_JS * EW_HBAR_JS * n / m) / e; /* eV */
    double rhs = sigma / e - EW_EPS0_FM * eps_b / (e * d) * (phib + EF - dEc);
    if (rhs > n) lo = n; else hi = n;
  }
  return 0.5 * (lo + hi) * 1e-4;
}

static void hemt_sheet_density(void **state) {
  (void)state;
  double x = 0.30, phib = 0.84 + 1.3 * x; /* Ambacher 2000 surface barrier (from memory) */
  static const double d_nm[] = {15.0, 25.0, 30.0};
  double last = 0.0;
  for (size_t k = 0; k < 3; k++) {
    char text[1024];
    snprintf(text, sizeof text, HEMT_FMT, phib, x, d_nm[k]);
    ew_stack *st = read_text(text);
    assert_non_null(st);
    ew_result *r = solve(st);
    assert_non_null(r);
    ew_interface in;
    ew_stack_interface(st, 0, &in);
    double ns = r->sp->electrons_cm2, want = ambacher_ns_cm2(x, d_nm[k], phib, in.dEc_eV);
    print_message("2DEG d = %g nm: n_s %.4g cm^-2, charge balance %.4g cm^-2\n", d_nm[k], ns, want);
    TU_NEAR(ns, want, 0.15 * want, "Ambacher et al. 2000 charge balance, 15 %");
    assert_true(ns > last); /* n_s grows with the barrier thickness (same source) */
    last = ns;
    if (d_nm[k] >= 20.0) /* about 1e13 cm^-2 measured for Al0.3Ga0.7N of 20-30 nm (from memory) */
      assert_true(ns > 0.8e13 && ns < 1.6e13);
    ew_result_free(r);
    ew_stack_free(st);
  }
}

/* The interface charges in the Poisson solve: an undoped stack between two equal contacts
 * (bias = 0) whose bands bend far less than the gap holds no carriers, so its self-consistent
 * field must be the static one of constant D with zero drop (Gauss's law; polarization.h),
 * layer by layer; tolerance 1e-4 relative (the carriers left are below 1e-20 of σ/e). */
static void poisson_charges_gauss(void **state) {
  (void)state;
#define GAUSS_STACK(BIAS)                                                              \
  "temperature = 300.0;\nsubstrate = \"GaN\";\n" BIAS                                       \
  "layers = (\n { material = \"GaN\"; thickness = 10; },\n"                                 \
  " { material = \"AlGaN\"; x = 0.1; thickness = 5; },\n"                                    \
  " { material = \"GaN\"; thickness = 10; }\n);\n"
  const char *a = GAUSS_STACK(""), *b = GAUSS_STACK("bias = 0.0;\n");
#undef GAUSS_STACK
  ew_stack *st = read_text(a), *sc = read_text(b);
  assert_non_null(st);
  assert_non_null(sc);
  assert_int_equal(sc->pol_in_poisson, 1);
  ew_result *r = solve(sc);
  assert_non_null(r);
  for (size_t k = 0; k < st->n_layers; k++) {
    double want = st->layers[k].pol_field_kV_cm, got = ew_result_layer_field_kV_cm(r, k);
    TU_NEAR(got, want, 1e-4 * fabs(want), "Gauss: constant D, zero drop");
  }
  ew_result_free(r);
  ew_stack_free(st);
  ew_stack_free(sc);
}

/* ---- JSON round trip ----------------------------------------------------------------------- */

static void json_check(const ew_result *r) {
  const ew_stack *st = r->stack;
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  ew_error err;
  assert_int_equal(ew_result_write_json(r, f, &err), EW_OK);
  fclose(f);
  rj doc;
  assert_int_equal(rj_parse(buf, &doc), 0);
  const rj *layers = rj_get(&doc, "layers"), *ifs = rj_get(&doc, "interfaces");
  assert_non_null(layers);
  assert_non_null(ifs);
  assert_int_equal(layers->n, st->n_layers);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    const rj *o = &layers->item[k];
    struct { const char *key; double want; } f[] = {
        {"polarization_C_m2", ly->polarization_C_m2},
        {"field_kV_cm", ew_result_layer_field_kV_cm(r, k)},
        {"Ev_ch_eV", ly->bands.Ev_ch_eV}, {"mhh_par", ly->bands.mhh_par},
        {"mlh_par", ly->bands.mlh_par}, {"mch", ly->bands.mch_z},
        {"mch_par", ly->bands.mch_par}, {"eps_par", ly->bands.eps_par},
        {"eps_perp", ly->bands.eps_perp}};
    for (size_t j = 0; j < sizeof f / sizeof f[0]; j++) {
      const rj *v = rj_get(o, f[j].key);
      assert_non_null(v);
      TU_NEAR(v->num, f[j].want, rt_tol_sig(f[j].want, 10), f[j].key);
    }
  }
  assert_int_equal(ifs->n, st->n_layers - 1);
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    const rj *b = rj_get(&ifs->item[k], "bound_charge_C_m2"), *s = rj_get(&ifs->item[k], "sheet_charge_C_m2");
    assert_non_null(b);
    assert_non_null(s);
    TU_NEAR(b->num, ew_interface_bound_C_m2(st, k), rt_tol_sig(ew_interface_bound_C_m2(st, k), 10), "bound");
    TU_NEAR(s->num, ew_interface_charge_C_m2(st, k), rt_tol_sig(ew_interface_charge_C_m2(st, k), 10), "sheet");
  }
  rj_free(&doc);
  free(buf);
}

/* Every new JSON field read back and compared with the library's values, for a static-field
 * stack with screening (sheet ≠ bound) and a self-consistent one (field from the potential). */
static void json_roundtrip(void **state) {
  (void)state;
  ew_stack *st = mqw(3e12, 8.0, 3.0);
  ew_result *r = solve(st);
  assert_non_null(r);
  json_check(r);
  assert_true(fabs(ew_interface_charge_C_m2(st, 0)) < fabs(ew_interface_bound_C_m2(st, 0)));
  ew_result_free(r);
  ew_stack_free(st);
  char text[1024];
  snprintf(text, sizeof text, HEMT_FMT, 1.23, 0.3, 25.0);
  st = read_text(text);
  r = solve(st);
  assert_non_null(r);
  json_check(r);
  /* the self-consistent field in the barrier: Gauss across the interface, ε_b F_b − ε_ch F_ch
   * = σ − e n_s-ish; here only its sign and size: the barrier field opposes the channel's
   * electrons, |F_b| of a few hundred kV/cm (Ambacher et al. 2000, band diagrams, from memory) */
  double Fb = ew_result_layer_field_kV_cm(r, 0);
  assert_true(fabs(Fb) > 100 && fabs(Fb) < 3000);
  ew_result_free(r);
  ew_stack_free(st);
}

/* The numbers of the td cells of table id in html, row by row after the name cells: the
 * report's polarisation tables read back (*n numbers; 0 when the table is absent). */
static size_t report_cells(const char *html, const char *id, double *out, size_t max) {
  char key[96];
  snprintf(key, sizeof key, "<table id=\"%s\">", id);
  const char *p = strstr(html, key), *end = p ? strstr(p, "</table>") : NULL;
  size_t n = 0;
  while (p && end && (p = strstr(p, "<td class=\"n\">")) && p < end && n < max) {
    p += strlen("<td class=\"n\">");
    out[n++] = strtod(p, NULL);
  }
  return n;
}

/* The report's polarisation section: every cell read back and compared with the library's
 * values to the printed decimals (5 for charges, 1 for fields). */
static void report_roundtrip(void **state) {
  (void)state;
  char text[1024];
  snprintf(text, sizeof text, HEMT_FMT, 1.23, 0.3, 25.0);
  ew_stack *st = read_text(text);
  ew_result *r = solve(st);
  assert_non_null(r);
  char dir[] = "/tmp/ew_nitride_rep_XXXXXX";
  assert_non_null(mkdtemp(dir));
  char path[256];
  snprintf(path, sizeof path, "%s/r.html", dir);
  ew_error err;
  assert_int_equal(ew_result_write_report(r, cat, path, &err), EW_OK);
  char *html = rt_slurp(path);
  assert_non_null(html);
  double v[64];
  size_t n = report_cells(html, "polarization-table", v, 64);
  assert_int_equal(n, 4 * st->n_layers);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    TU_NEAR(v[4 * k], ly->bands.Psp_C_m2, rt_tol_fix(ly->bands.Psp_C_m2, 5), "report P_sp");
    TU_NEAR(v[4 * k + 1], ly->bands.Ppz_C_m2, rt_tol_fix(ly->bands.Ppz_C_m2, 5), "report P_pz");
    TU_NEAR(v[4 * k + 2], ly->polarization_C_m2, rt_tol_fix(ly->polarization_C_m2, 5), "report P");
    double F = ew_result_layer_field_kV_cm(r, k);
    TU_NEAR(v[4 * k + 3], F, rt_tol_fix(F, 1), "report field");
  }
  n = report_cells(html, "interface-charge-table", v, 64);
  assert_int_equal(n, 2 * (st->n_layers - 1));
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    double b = ew_interface_bound_C_m2(st, k), c = ew_interface_charge_C_m2(st, k);
    TU_NEAR(v[2 * k], b, rt_tol_fix(b, 5), "report bound charge");
    TU_NEAR(v[2 * k + 1], c, rt_tol_fix(c, 5), "report screened charge");
  }
  free(html);
  tu_rm_tree(dir);
  ew_result_free(r);
  ew_stack_free(st);
}

/* The terminal table's "Polarisation" section read back: each layer row (P_sp, P_pz to 5
 * decimals, field to 1) and each interface row (z to 3, bound and screened charge to 5, the
 * screened charge in e/cm² to 4 significant digits), compared with the library's values. */
static void table_roundtrip(void **state) {
  (void)state;
  ew_stack *st = mqw(3e12, 8.0, 3.0);
  ew_result *r = solve(st);
  assert_non_null(r);
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  ew_error err;
  assert_int_equal(ew_result_write_table(r, f, &err), EW_OK);
  fclose(f);
  const char *p = strstr(buf, "\nPolarisation (");
  assert_non_null(p);
  p = strchr(p + 1, '\n') + 1; /* the layer header */
  p = strchr(p, '\n') + 1;
  for (size_t k = 0; k < st->n_layers; k++) {
    char name[64];
    double psp, ppz, F;
    assert_int_equal(sscanf(p, "%63s %lf %lf %lf", name, &psp, &ppz, &F), 4);
    assert_string_equal(name, st->layers[k].name);
    TU_NEAR(psp, st->layers[k].bands.Psp_C_m2, rt_tol_fix(psp, 5), "table P_sp");
    TU_NEAR(ppz, st->layers[k].bands.Ppz_C_m2, rt_tol_fix(ppz, 5), "table P_pz");
    TU_NEAR(F, ew_result_layer_field_kV_cm(r, k), rt_tol_fix(F, 1), "table field");
    p = strchr(p, '\n') + 1;
  }
  p = strchr(p, '\n') + 1; /* the interface header */
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    char a[64], b[64];
    double z, bound, sheet, cm2;
    assert_int_equal(sscanf(p, "%63s %63s %lf %lf %lf %lf", a, b, &z, &bound, &sheet, &cm2), 6);
    assert_string_equal(a, st->layers[k].name);
    assert_string_equal(b, st->layers[k + 1].name);
    double s0 = ew_interface_bound_C_m2(st, k), s1 = ew_interface_charge_C_m2(st, k);
    TU_NEAR(z, st->layers[k + 1].z_start_nm, rt_tol_fix(z, 3), "table z");
    TU_NEAR(bound, s0, rt_tol_fix(s0, 5), "table bound charge");
    TU_NEAR(sheet, s1, rt_tol_fix(s1, 5), "table screened charge");
    TU_NEAR(cm2, s1 / EW_E_C * 1e-4, rt_tol_sig(s1 / EW_E_C * 1e-4, 4), "table charge in e/cm2");
    p = strchr(p, '\n') + 1;
  }
  free(buf);
  ew_result_free(r);
  ew_stack_free(st);
}

/* ---- second sources (stored pages; typed from them, not from the catalogue) ------------ */

/* Values the catalogue files cite as confirmations ("confirmed by [tag]" in the materials files),
 * each typed from the stored page and compared within that page's digits:
 * GaN elastic constants C11 390, C12 145, C13 106, C33 398, C44 105 GPa (A. Polian, M.
 * Grimsditch, I. Grzegory, J. Appl. Phys. 79, 3343 (1996), abstract, stored at
 * https://preview.concepedia.online/publication/W2133351565); GaN a 3.1893, c 5.1851 Å (Sci.
 * Rep. 8 (2018), s41598-018-28328-7, Table 1, http://preview-www.nature.com/articles/
 * s41598-018-28328-7/tables/1); AlN a 3.112, c 4.982 Å, InN a 3.548 Å, AlN electron mass
 * 0.33, GaN gap 3.44 eV at 300 K (Kansas State University GaN group table,
 * http://www.phys.ksu.edu/area/GaNgroup/gparametm.html); AlN Δso 19 meV, InN Δcr 41 meV,
 * valence offsets AlN/GaN 0.81 eV and GaN/InN 0.48 eV (S.-H. Wei, A. Zunger, Appl. Phys. Lett.
 * 69, 2719 (1996), abstract, https://research-hub.nrel.gov/en/publications/
 * valence-band-splittings-and-band-offsets-of-aln-gan-and-inn); InN ε 15.3 (EPJ Photovoltaics 9 (2018), Table 1, https://www.epj-pv.org/articles/epjpv/
 * full_html/2018/01/pv180009/T1.html). */
static void second_sources(void **state) {
  (void)state;
  ew_params g, al, in;
  ew_error err;
  assert_int_equal(ew_material_params(cat, "GaN", 0.0, &g, &err), EW_OK);
  assert_int_equal(ew_material_params(cat, "AlN", 0.0, &al, &err), EW_OK);
  assert_int_equal(ew_material_params(cat, "InN", 0.0, &in, &err), EW_OK);
  /* Polian et al. 1996, GPa -> kbar; half a unit of the last digit */
  TU_NEAR(g.v[EW_P_C11], 10.0 * 390, 5.0, "Polian 1996 GaN C11");
  TU_NEAR(g.v[EW_P_C12], 10.0 * 145, 5.0, "Polian 1996 GaN C12");
  TU_NEAR(g.v[EW_P_C13], 10.0 * 106, 5.0, "Polian 1996 GaN C13");
  TU_NEAR(g.v[EW_P_C33], 10.0 * 398, 5.0, "Polian 1996 GaN C33");
  TU_NEAR(g.v[EW_P_C44], 10.0 * 105, 5.0, "Polian 1996 GaN C44");
  TU_NEAR(g.v[EW_P_ALC], 3.1893, 0.0005, "Sci. Rep. 2018 GaN a");
  TU_NEAR(g.v[EW_P_CLC], 5.1851, 0.0005, "Sci. Rep. 2018 GaN c");
  TU_NEAR(al.v[EW_P_ALC], 3.112, 0.0015, "KSU table / McNeil 1993 AlN a");
  TU_NEAR(al.v[EW_P_CLC], 4.982, 0.005, "KSU table / McNeil 1993 AlN c");
  TU_NEAR(in.v[EW_P_ALC], 3.548, 0.004, "KSU table InN a (0.1 %)");
  TU_NEAR(al.v[EW_P_ME], 0.33, 0.012, "KSU table AlN me (3 %)");
  TU_NEAR(al.v[EW_P_DSO], 0.019, 0.0005, "Wei & Zunger 1996 AlN spin-orbit");
  TU_NEAR(in.v[EW_P_DCR], 0.041, 0.0015, "Wei & Zunger 1996 InN crystal field");
  TU_NEAR(g.v[EW_P_VBO] - al.v[EW_P_VBO], 0.81, 0.02, "Wei & Zunger 1996 AlN/GaN offset");
  TU_NEAR(in.v[EW_P_VBO] - g.v[EW_P_VBO], 0.48, 0.03, "Wei & Zunger 1996 GaN/InN offset");
  TU_NEAR(in.v[EW_P_EPS_S], 15.3, 0.05, "EPJ PV 2018 InN permittivity");
  ew_bands bg;
  assert_int_equal(ew_material_bands(cat, "GaN", 0.0, 300.0, &bg, &err), EW_OK);
  TU_NEAR(bg.Eg_G_eV, 3.44, 0.01, "KSU table GaN gap at 300 K");
}

/* ---- emission of InGaN/GaN wells against measurements ------------------------------------ */

/* The e1–hh1 line of one In(x)Ga(1−x)N well of Lw between GaN barrier halves of 20 nm (a
 * single well stands for a 40 nm period: the zero-drop condition leaves the barriers a weak
 * field), at T: its energy, the PL peak (less the exciton binding) and the well's field. */
static double emission(double x, double Lw, double T, double *pl, double *F) {
  char text[1024];
  snprintf(text, sizeof text,
           "temperature = %g;\nsubstrate = \"GaN\";\nlayers = (\n"
           "  { name = \"b0\"; material = \"GaN\"; thickness = 20.0; },\n"
           "  { name = \"w\"; material = \"InGaN\"; x = %g; thickness = %g; },\n"
           "  { name = \"b1\"; material = \"GaN\"; thickness = 20.0; }\n);\n", T, x, Lw);
  ew_stack *st = read_text(text);
  assert_non_null(st);
  ew_result *r = solve(st);
  assert_non_null(r);
  double E = NAN;
  for (size_t k = 0; k < ew_result_line_count(r); k++) {
    const ew_line *l = ew_result_line(r, k);
    if (l->kind == EW_LINE_INTERBAND && strcmp(ew_result_state(r, l->upper)->label, "e1") == 0 &&
        strcmp(ew_result_state(r, l->lower)->label, "hh1") == 0) {
      E = l->energy_eV;
      *pl = l->pl_peak_eV;
    }
  }
  assert_false(isnan(E));
  *F = st->layers[1].pol_field_kV_cm;
  ew_result_free(r);
  ew_stack_free(st);
  return E;
}

/* Measured emission of c-plane InGaN/GaN single wells, the red shift with well width:
 * - P. Lefebvre et al., Appl. Phys. Lett. 78, 1252 (2001) (authors and volume from memory;
 *   the abstract is stored at https://infoscience.epfl.ch/record/152705 and
 *   https://scilit.net/publications/50a4dbb80605b172e5f9d9444924bab4): one graded-width
 *   well, 8 K, PL peak from 2.9 eV at 2.0 nm to 2.0 eV at 5.5 nm, field fitted to the decay
 *   times 2.45 ± 0.25 MV/cm;
 * - molecular-beam-epitaxy single wells of the same laboratory (Appl. Phys. Lett. (2000),
 *   abstract stored at https://infoscience.epfl.ch/record/152671): In 16 ± 2 % by x-ray
 *   diffraction, room-temperature PL from 0.40 µm to 0.66 µm as the width goes from 1 to 5 nm
 *   (3.10 to 1.88 eV; the ends of the range taken as the ends of the widths).
 * The graded well's composition is not in its abstract: x = 0.16 of the second sample set is
 * assumed for both.  Tolerance: ±0.02 in x moves the line by ±0.09 eV at 2 nm and ±0.20 eV
 * at 5.5 nm here (the model's dE/dx), and carrier localisation on In-rich sites lowers
 * measured peaks by some tens of meV (common practice), which the uniform-alloy model leaves
 * out; so 0.15 eV at 1–2 nm, 0.25 eV at 5–5.5 nm, and the red shift between the ends within
 * 25 %.  The model's field exceeds the fitted one (ab-initio polarisation constants give
 * fields above measured ones, common practice): checked within 30 %. */
static void measured_emission(void **state) {
  (void)state;
  double pl2, pl55, F2, F55, pl1, pl5, F1, F5;
  double E2 = emission(0.16, 2.0, 8.0, &pl2, &F2), E55 = emission(0.16, 5.5, 8.0, &pl55, &F55);
  double E1 = emission(0.16, 1.0, 300.0, &pl1, &F1), E5 = emission(0.16, 5.0, 300.0, &pl5, &F5);
  print_message("emission 8 K: 2.0 nm %.3f eV (PL %.3f; measured 2.9), 5.5 nm %.3f eV (PL %.3f;"
                " measured 2.0); fields %.0f/%.0f kV/cm (fitted 2450)\n",
                E2, pl2, E55, pl55, F2, F55);
  print_message("emission 300 K: 1.0 nm %.3f eV (PL %.3f; measured 3.10), 5.0 nm %.3f eV (PL %.3f;"
                " measured 1.88)\n", E1, pl1, E5, pl5);
  TU_NEAR(pl2, 2.9, 0.15, "Lefebvre 2001, 2.0 nm, 8 K");
  TU_NEAR(pl55, 2.0, 0.25, "Lefebvre 2001, 5.5 nm, 8 K");
  TU_NEAR(pl2 - pl55, 2.9 - 2.0, 0.25 * 0.9, "Lefebvre 2001, red shift 2.0 -> 5.5 nm");
  TU_NEAR(fabs(F2), 2450.0, 0.30 * 2450.0, "Lefebvre 2001 fitted field");
  TU_NEAR(fabs(F55), 2450.0, 0.30 * 2450.0, "Lefebvre 2001 fitted field");
  TU_NEAR(pl1, 1239.84 / 400.0, 0.15, "MBE wells 2000, 1 nm, 300 K");
  TU_NEAR(pl5, 1239.84 / 660.0, 0.25, "MBE wells 2000, 5 nm, 300 K");
  TU_NEAR(pl1 - pl5, 1239.84 / 400.0 - 1239.84 / 660.0, 0.25 * 1.22, "MBE wells 2000, red shift");
}

/* Stacks mixing structures and graded wurtzite layers are refused at the layer's line. */
static void stack_refusals(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string("layers = (\n { material = \"GaN\"; thickness = 5; },\n"
                                        " { material = \"GaAs\"; thickness = 5; }\n);\n",
                                        "t", cat, &st, &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 3);
  assert_int_equal(ew_stack_read_string("c_axis = \"up\";\nlayers = (\n { material = \"GaN\"; thickness = 5; }\n);\n",
                                        "t", cat, &st, &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 1);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(catalogue_binaries),     cmocka_unit_test(catalogue_ternaries),
      cmocka_unit_test(catalogue_structure_guard), cmocka_unit_test(strain_ingan_on_gan),
      cmocka_unit_test(masses_band_edge),       cmocka_unit_test(periodic_field),
      cmocka_unit_test(screening_blue_shift),   cmocka_unit_test(qcse_red_shift),
      cmocka_unit_test(hemt_sheet_density),     cmocka_unit_test(json_roundtrip),
      cmocka_unit_test(poisson_charges_gauss),  cmocka_unit_test(report_roundtrip),       cmocka_unit_test(table_roundtrip),       cmocka_unit_test(stack_refusals),
      cmocka_unit_test(second_sources),         cmocka_unit_test(measured_emission),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
