/* test_roundtrip.c — every field `epiwell solve --json` and `epiwell solve -o DIR` write,
 * read back with an independent parser (roundtrip.h) and compared, to the printed precision,
 * with the library's own values for the same stack file through the public API (ew_solve,
 * ew_result_state, ew_result_line, ew_result_sp_profile, …).  The layers' resolved band
 * parameters are checked against a second printer, `epiwell materials NAME --x X
 * --substrate S --temperature T` (materials.c), and against the band-edge profile at the
 * layer's centre node.  Three stacks: strained and undoped (InGaAs on GaAs), a field, and a
 * doped well solved self-consistently.  Reference: the library itself through the public
 * API (the writers must only format it) — the physics is checked elsewhere. */
#include <math.h>

#include "roundtrip.h"

static rt_env env;
static ew_catalogue *cat;

typedef struct {
  const char *name, *material;
  double x; /* < 0: binary */
  double t_nm;
  const char *extra; /* more settings of the layer group, or "" */
} spec_layer;

typedef struct {
  const char *file;
  double T_K, field_kV_cm;
  const char *substrate; /* NULL: none */
  const char *top;       /* more top-level settings */
  size_t n;
  spec_layer ly[4];
} spec;

static const spec strained = {"strained.cfg", 77.0, 0.0, "GaAs",
                              "sheet_density = 4e11;\nlinewidth = 8.0;\n", 3,
                              {{"lower", "AlGaAs", 0.30, 20.0, ""},
                               {"well", "InGaAs", 0.15, 8.0, ""},
                               {"upper", "AlGaAs", 0.25, 20.0, ""}}};
static const spec field = {"field.cfg", 300.0, 15.0, NULL, "", 3,
                           {{"left", "AlGaAs", 0.30, 25.0, ""},
                            {"well", "GaAs", -1, 7.0, ""},
                            {"right", "AlGaAs", 0.30, 25.0, ""}}};
/* electrons in the well, acceptors in one barrier: n, p, N_D+, N_A- all differ */
static const spec doped = {"doped.cfg", 77.0, 0.0, NULL, "", 3,
                           {{"lower_barrier", "AlGaAs", 0.30, 30.0, ""},
                            {"well", "GaAs", -1, 6.0, "doping = { donors = 3e18; };"},
                            {"upper_barrier", "AlGaAs", 0.30, 30.0,
                             "doping = { acceptors = 2e17; };"}}};

static void spec_text(const spec *s, char *buf, size_t size) {
  size_t u = (size_t)snprintf(buf, size, "temperature = %.17g;\n%s", s->T_K, s->top);
  if (s->field_kV_cm != 0) u += (size_t)snprintf(buf + u, size - u, "field = %.17g;\n", s->field_kV_cm);
  if (s->substrate) u += (size_t)snprintf(buf + u, size - u, "substrate = \"%s\";\n", s->substrate);
  u += (size_t)snprintf(buf + u, size - u, "layers = (\n");
  for (size_t k = 0; k < s->n; k++) {
    const spec_layer *L = &s->ly[k];
    u += (size_t)snprintf(buf + u, size - u, "  { name = \"%s\"; material = \"%s\"; ", L->name,
                          L->material);
    if (L->x >= 0) u += (size_t)snprintf(buf + u, size - u, "x = %.17g; ", L->x);
    u += (size_t)snprintf(buf + u, size - u, "thickness = %.17g; %s }%s\n", L->t_nm, L->extra,
                          k + 1 < s->n ? "," : "");
  }
  snprintf(buf + u, size - u, ");\n");
}

/* The stack file in the scratch directory and the library's result for it (default
 * options, as `epiwell solve` uses them). */
typedef struct {
  char path[1200];
  ew_stack *st;
  ew_result *r;
} solved;

static int solve_spec(const spec *s, solved *out) {
  char text[4096];
  spec_text(s, text, sizeof text);
  memset(out, 0, sizeof *out);
  if (rt_write(&env, s->file, text, out->path, sizeof out->path) != 0) return -1;
  ew_error err;
  ew_options opt;
  ew_options_default(&opt);
  if (ew_stack_read_file(out->path, cat, &out->st, &err) != EW_OK ||
      ew_solve(out->st, &opt, &out->r, &err) != EW_OK) {
    fprintf(stderr, "test_roundtrip: %s: %s\n", s->file, err.message);
    return -1;
  }
  return 0;
}

static void solved_free(solved *s) {
  ew_result_free(s->r);
  ew_stack_free(s->st);
}

/* Node nearest z. */
static size_t node_at(const ew_result *r, double z) {
  const double *zz = ew_result_z_nm(r);
  size_t best = 0;
  for (size_t i = 1; i < ew_result_node_count(r); i++)
    if (fabs(zz[i] - z) < fabs(zz[best] - z)) best = i;
  return best;
}

/* The value of "NAME   value ..." in `epiwell materials` output (first match), NAN if absent */
static double materials_value(const char *text, const char *name) {
  size_t len = strlen(name);
  for (const char *p = text; p && *p; p = strchr(p, '\n'), p = p ? p + 1 : NULL)
    if (!strncmp(p, name, len) && p[len] == ' ') {
      char *end;
      double v = strtod(p + len, &end);
      if (end > p + len) return v; /* "eps_par = (a_sub - a)/a …" is the explanation */
    }
  return NAN;
}

/* Layer fields of the JSON against `epiwell materials` (a second printer, %g: 6 digits)
 * and, for an undoped stack without a field, the band-edge profile at the layer's centre. */
static void check_layers(const spec *s, const solved *sv, const rj *layers) {
  assert_non_null(layers);
  assert_int_equal(layers->t, RJ_ARR);
  assert_int_equal(layers->n, s->n);
  double z = 0;
  int flat = s->field_kV_cm == 0 && isnan(ew_result_fermi_energy_eV(sv->r));
  for (size_t k = 0; k < s->n; k++) {
    const spec_layer *L = &s->ly[k];
    const rj *o = &layers->item[k];
    char what[64];
    snprintf(what, sizeof what, "layers[%zu]", k);
    RT_STREQ(rj_str(o, "name"), L->name, what);
    RT_STREQ(rj_str(o, "material"), L->material, what);
    if (L->x >= 0) RT_JSON(o, "x", L->x, what);
    else assert_null(rj_get(o, "x"));
    assert_null(rj_get(o, "y")); /* no quaternary here */
    RT_JSON(o, "z_start_nm", z, what);
    RT_JSON(o, "thickness_nm", L->t_nm, what);
    /* the second printer */
    char args[1400], out[1200];
    snprintf(out, sizeof out, "%s/materials-%s.txt", env.tmp, L->name);
    int n = snprintf(args, sizeof args, "materials %s --temperature %.17g", L->material, s->T_K);
    if (L->x >= 0) n += snprintf(args + n, sizeof args - (size_t)n, " --x %.17g", L->x);
    if (s->substrate) snprintf(args + n, sizeof args - (size_t)n, " --substrate %s", s->substrate);
    assert_int_equal(rt_run(&env, args, out), 0);
    char *mt = rt_slurp(out);
    assert_non_null(mt);
    static const char *const jkey[] = {"Ec_eV", "Ev_hh_eV", "Ev_lh_eV", "me", "mhh", "mlh"};
    static const char *const mkey[] = {"Ec", "Ev_hh", "Ev_lh", "me", "mhh_z", "mlh_z"};
    /* the band rows at T (the parameter table above them holds the catalogue's 0 K "me") */
    const char *bands_at = strstr(mt, "\nband parameters at T");
    assert_non_null(bands_at);
    for (int q = 0; q < 6; q++) {
      double want = materials_value(bands_at + 1, mkey[q]);
      char w[96];
      snprintf(w, sizeof w, "%s.%s vs epiwell materials %s", what, jkey[q], mkey[q]);
      RT_SAME(rj_num(o, jkey[q]), want, rt_tol_sig(want, 6), w);
    }
    double ep = materials_value(mt, "eps_par"), eq = materials_value(mt, "eps_perp");
    double hc = materials_value(mt, "h_c");
    if (isnan(ep)) ep = eq = 0.0; /* no strain section: unstrained */
    RT_SAME(rj_num(o, "eps_par"), ep, rt_tol_sig(ep, 6), "eps_par vs epiwell materials");
    RT_SAME(rj_num(o, "eps_perp"), eq, rt_tol_sig(eq, 6), "eps_perp vs epiwell materials");
    /* h_c printed with 4 digits by `materials`; null in the JSON when unstrained */
    if (ep == 0.0) hc = NAN;
    if (k + 1 == s->n && isfinite(hc)) {
      /* the uncapped surface layer: one interface (README "Strain"), half the buried
       * prefactor of Matthews–Blakeslee h = A (ln(h/b) + 1), b = a/√2 (J. W. Matthews,
       * A. E. Blakeslee, J. Cryst. Growth 27, 118 (1974)); A from the buried value, the
       * larger root by fixed-point iteration */
      double bd = materials_value(mt, "a") / sqrt(2.0), A1 = 0.5 * hc / (log(hc / bd) + 1.0);
      double h1 = A1 * (log(A1 / bd) + 1.0);
      for (int it = 0; it < 500; it++) h1 = A1 * (log(h1 / bd) + 1.0);
      hc = A1 < bd ? 0.0 : h1;
    }
    RT_SAME(rj_num(o, "critical_thickness_nm"), hc, rt_tol_sig(hc, 3), "critical_thickness_nm");
    free(mt);
    if (flat) { /* the profile at the centre node holds the layer's own edges and masses */
      size_t i = node_at(sv->r, z + 0.5 * L->t_nm);
      RT_JSON(o, "Ec_eV", ew_result_edge_eV(sv->r, EW_BAND_E)[i], what);
      RT_JSON(o, "Ev_hh_eV", ew_result_edge_eV(sv->r, EW_BAND_HH)[i], what);
      RT_JSON(o, "Ev_lh_eV", ew_result_edge_eV(sv->r, EW_BAND_LH)[i], what);
      RT_JSON(o, "me", ew_result_mass(sv->r, EW_BAND_E)[i], what);
      RT_JSON(o, "mhh", ew_result_mass(sv->r, EW_BAND_HH)[i], what);
      RT_JSON(o, "mlh", ew_result_mass(sv->r, EW_BAND_LH)[i], what);
    }
    z += L->t_nm;
  }
}

static void check_json(const spec *s) {
  solved sv;
  assert_int_equal(solve_spec(s, &sv), 0);
  const ew_result *r = sv.r;
  char out[1300], args[1400];
  snprintf(out, sizeof out, "%s.json", sv.path);
  snprintf(args, sizeof args, "solve '%s' --json", sv.path);
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  RT_STREQ(rj_str(&doc, "version"), EW_VERSION, "version");
  RT_STREQ(rj_str(&doc, "stack"), sv.path, "stack");
  RT_JSON(&doc, "temperature_K", s->T_K, "top");
  RT_JSON(&doc, "grid_step_nm", ew_result_grid_step_nm(r), "top");
  RT_SAME(rj_num(&doc, "nodes"), (double)ew_result_node_count(r), 0, "nodes");
  RT_STREQ(rj_str(&doc, "model"), ew_result_model(r), "model");
  RT_JSON(&doc, "field_kV_cm", s->field_kV_cm, "top");
  const rj *w = rj_get(&doc, "warnings");
  assert_non_null(w);
  assert_int_equal(w->n, ew_result_warning_count(r));
  for (size_t i = 0; i < w->n; i++) RT_STREQ(w->item[i].str, ew_result_warning(r, i), "warning");
  check_layers(s, &sv, rj_get(&doc, "layers"));
  const rj *bands = rj_get(&doc, "bands");
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    const rj *o = rj_get(bands, ew_band_name((ew_band)b));
    assert_non_null(o);
    RT_SAME(rj_num(o, "count"), (double)ew_result_band_count(r, (ew_band)b), 0, "bands.count");
    RT_JSON(o, "window_eV", ew_result_window_eV(r, (ew_band)b), ew_band_name((ew_band)b));
  }
  int sc = !isnan(ew_result_fermi_energy_eV(r));
  const rj *states = rj_get(&doc, "states");
  assert_non_null(states);
  assert_int_equal(states->n, ew_result_state_count(r));
  for (size_t i = 0; i < states->n; i++) {
    const rj *o = &states->item[i];
    const ew_state *q = ew_result_state(r, i);
    const char *what = q->label;
    RT_STREQ(rj_str(o, "label"), q->label, what);
    RT_STREQ(rj_str(o, "band"), ew_band_name(q->band), what);
    RT_SAME(rj_num(o, "n"), q->n, 0, "n");
    RT_JSON(o, "energy_eV", q->energy_eV, what);
    RT_JSON(o, "error_eV", q->error_eV >= 0 ? q->error_eV : NAN, what);
    RT_JSON(o, "edge_eV", q->edge_eV, what);
    RT_JSON(o, "depth_eV", q->depth_eV, what);
    RT_STREQ(rj_str(o, "layer"), s->ly[q->layer].name, what);
    RT_JSON(o, "layer_probability", q->layer_probability, what);
    RT_JSON(o, "residual", q->residual, what);
    const rj *fl = rj_get(o, "flagged");
    assert_true(fl && fl->t == RJ_BOOL && (int)fl->num == q->flagged);
    RT_JSON(o, "inplane_mass_m0", q->inplane_mass, what);
    /* distance below the window top, from the window and the energy (README "Output") */
    double w = ew_result_window_eV(r, q->band);
    double below = q->band == EW_BAND_E ? w - q->energy_eV : q->energy_eV - w;
    if (!(below > 0)) fail_msg("%s: bound state %g eV not below its window %g", what, q->energy_eV, w);
    RT_JSON(o, "below_top_eV", below, what);
    RT_JSON(o, "sheet_density_cm2", sc ? ew_result_state_sheet_density_cm2(r, i) : NAN, what);
  }
  const rj *tr = rj_get(&doc, "transitions");
  assert_non_null(tr);
  assert_int_equal(tr->n, ew_result_line_count(r));
  for (size_t j = 0; j < tr->n; j++) {
    const rj *o = &tr->item[j];
    const ew_line *ln = ew_result_line(r, j);
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    char what[64];
    snprintf(what, sizeof what, "transitions[%zu]", j);
    RT_STREQ(rj_str(o, "kind"), isb ? "intersubband" : "interband", what);
    RT_STREQ(rj_str(o, "upper"), ew_result_state(r, ln->upper)->label, what);
    RT_STREQ(rj_str(o, "lower"), ew_result_state(r, ln->lower)->label, what);
    RT_JSON(o, "energy_eV", ln->energy_eV, what);
    if (isb) {
      RT_JSON(o, "wavelength_um", ln->wavelength_nm / 1e3, what);
      RT_JSON(o, "dipole_nm", ln->dipole_nm, what);
      RT_JSON(o, "oscillator_strength", ln->oscillator_strength, what);
      RT_JSON(o, "depolarization_shift_eV", sc ? ew_result_line_depolarization_eV(r, j) : NAN,
              what);
      assert_null(rj_get(o, "overlap"));
    } else {
      RT_JSON(o, "wavelength_nm", ln->wavelength_nm, what);
      RT_JSON(o, "overlap", ln->overlap, what);
      const rj *al = rj_get(o, "allowed");
      assert_true(al && al->t == RJ_BOOL && (int)al->num == ln->allowed);
      RT_JSON(o, "exciton_binding_eV", ln->exciton_binding_eV, what);
      RT_JSON(o, "pl_peak_eV", ln->pl_peak_eV, what);
      RT_JSON(o, "te_strength", ln->te_strength, what);
      RT_JSON(o, "tm_strength", ln->tm_strength, what);
      assert_null(rj_get(o, "dipole_nm"));
    }
  }
  RT_JSON(&doc, "fermi_energy_eV", ew_result_fermi_energy_eV(r), "top");
  RT_SAME(rj_num(&doc, "iterations"), sc ? ew_result_sp_iterations(r) : NAN, 0, "iterations");
  RT_JSON(&doc, "residual_eV", sc ? ew_result_sp_residual_eV(r) : NAN, "top");
  if (sc) {
    RT_JSON(&doc, "fermi_energy_last_eV", ew_result_fermi_energy_last_eV(r), "top");
    /* the sheet totals are the integrals of the density profiles over the nodes' boxes
       (midpoint to midpoint; the outermost reach the walls, which are not nodes, as the
       flat charge-neutral ends of README "Doped structures" have no fixed potential) */
    static const char *const key[] = {"electrons_cm2", "holes_cm2", "donors_ionised_cm2",
                                      "acceptors_ionised_cm2"};
    static const ew_sp_profile prof[] = {EW_SP_N_CM3, EW_SP_P_CM3, EW_SP_DONORS_ION_CM3,
                                         EW_SP_ACCEPTORS_ION_CM3};
    const double *zz = ew_result_z_nm(r);
    size_t n = ew_result_node_count(r);
    double total = 0;
    for (size_t k = 0; k < s->n; k++) total += s->ly[k].t_nm;
    for (int k = 0; k < 4; k++) {
      const double *d = ew_result_sp_profile(r, prof[k]);
      double sum = 0;
      for (size_t i = 0; i < n; i++)
        sum += d[i] * ((i + 1 < n ? 0.5 * (zz[i] + zz[i + 1]) : total) -
                       (i ? 0.5 * (zz[i - 1] + zz[i]) : 0.0)) * 1e-7; /* cm */
      /* (1e-6 cm^-2 absolute: the holes of an n-type well are ~1e-94 cm^-2, where the
         wall cells' share differs; any swap with another total is still 1e11 off) */
      RT_SAME(rj_num(&doc, key[k]), sum, rt_tol_sig(sum, 10) + 1e-9 * fabs(sum) + 1e-6, key[k]);
    }
  } else {
    assert_null(rj_get(&doc, "electrons_cm2"));
  }
  rj_free(&doc);
  solved_free(&sv);
}

static void json_strained(void **state) { (void)state; check_json(&strained); }
static void json_field(void **state) { (void)state; check_json(&field); }
static void json_doped(void **state) { (void)state; check_json(&doped); }

/* ---- the CSV set of -o DIR ---------------------------------------------------------- */
static int csv_open(const char *dir, const char *file, rcsv *c, const char *header) {
  char p[1400];
  snprintf(p, sizeof p, "%s/%s", dir, file);
  if (rcsv_read(p, c) != 0) {
    print_error("cannot read %s as CSV\n", p);
    return -1;
  }
  if (header) { /* the documented columns, in order (README "Output reference") */
    char h[2048];
    size_t u = 0;
    for (size_t j = 0; j < c->ncol; j++) u += (size_t)snprintf(h + u, sizeof h - u, "%s%s", j ? "," : "", c->head[j]);
    if (strcmp(h, header)) {
      print_error("%s header\n  got  %s\n  want %s\n", file, h, header);
      return -1;
    }
  }
  return 0;
}

#define CSVNUM(c, row, name) rcsv_num(c, row, rcsv_col(c, name))

static void check_profile(const spec *s, const ew_result *r, const char *dir) {
  rcsv c;
  assert_int_equal(csv_open(dir, "profile.csv", &c,
                            "z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh,layer,potential_eV,"
                            "charge_cm3,n_cm3,p_cm3,donors_ion_cm3,acceptors_ion_cm3"), 0);
  size_t n = ew_result_node_count(r);
  assert_int_equal(c.nrows, n);
  const double *z = ew_result_z_nm(r);
  int sc = !isnan(ew_result_fermi_energy_eV(r));
  static const char *const ek[] = {"Ec_eV", "Ev_hh_eV", "Ev_lh_eV"}, *const mk[] = {"me", "mhh", "mlh"};
  static const char *const pk[] = {"potential_eV", "charge_cm3", "n_cm3", "p_cm3",
                                   "donors_ion_cm3", "acceptors_ion_cm3"};
  for (size_t i = 0; i < n; i++) {
    RT_SAME(CSVNUM(&c, i, "z_nm"), z[i], rt_tol_fix(z[i], 6), "profile z_nm");
    for (int b = 0; b < EW_BAND_COUNT; b++) {
      double e = ew_result_edge_eV(r, (ew_band)b)[i], m = ew_result_mass(r, (ew_band)b)[i];
      RT_SAME(CSVNUM(&c, i, ek[b]), e, rt_tol_fix(e, 8), ek[b]);
      RT_SAME(CSVNUM(&c, i, mk[b]), m, rt_tol_fix(m, 6), mk[b]);
    }
    /* the layer holding the node (an interface node may name either neighbour) */
    const char *ln = rcsv_at(&c, i, rcsv_col(&c, "layer"));
    double z0 = 0;
    int found = 0;
    for (size_t k = 0; k < s->n; k++) {
      if (z[i] >= z0 - 1e-9 && z[i] <= z0 + s->ly[k].t_nm + 1e-9 && !strcmp(ln, s->ly[k].name))
        found = 1;
      z0 += s->ly[k].t_nm;
    }
    if (!found) {
      print_error("profile.csv row %zu: z = %g nm is not in layer '%s'\n", i, z[i], ln);
      fail();
    }
    for (int k = 0; k < EW_SP_PROFILE_COUNT; k++) {
      double v = sc ? ew_result_sp_profile(r, (ew_sp_profile)k)[i] : NAN;
      RT_SAME(CSVNUM(&c, i, pk[k]), v, k == 0 ? rt_tol_fix(v, 10) : rt_tol_sig(v, 7), pk[k]);
    }
  }
  rcsv_free(&c);
}

static void check_levels(const spec *s, const ew_result *r, const char *dir) {
  rcsv c;
  assert_int_equal(csv_open(dir, "levels.csv", &c,
                            "label,band,n,energy_eV,error_eV,edge_eV,depth_eV,layer,"
                            "layer_probability,residual,flagged,sheet_density_cm2,"
                            "inplane_mass_m0,below_top_eV,dos_mass_m0"), 0);
  assert_int_equal(c.nrows, ew_result_state_count(r));
  int sc = !isnan(ew_result_fermi_energy_eV(r));
  for (size_t i = 0; i < c.nrows; i++) {
    const ew_state *q = ew_result_state(r, i);
    RT_STREQ(rcsv_at(&c, i, 0), q->label, "levels label");
    RT_STREQ(rcsv_at(&c, i, 1), ew_band_name(q->band), "levels band");
    RT_SAME(CSVNUM(&c, i, "n"), q->n, 0, "levels n");
    RT_SAME(CSVNUM(&c, i, "energy_eV"), q->energy_eV, rt_tol_fix(q->energy_eV, 10), "energy_eV");
    RT_SAME(CSVNUM(&c, i, "error_eV"), q->error_eV, rt_tol_sig(q->error_eV, 4), "error_eV");
    RT_SAME(CSVNUM(&c, i, "edge_eV"), q->edge_eV, rt_tol_fix(q->edge_eV, 8), "edge_eV");
    RT_SAME(CSVNUM(&c, i, "depth_eV"), q->depth_eV, rt_tol_fix(q->depth_eV, 10), "depth_eV");
    RT_STREQ(rcsv_at(&c, i, rcsv_col(&c, "layer")), s->ly[q->layer].name, "levels layer");
    RT_SAME(CSVNUM(&c, i, "layer_probability"), q->layer_probability,
            rt_tol_fix(q->layer_probability, 6), "layer_probability");
    RT_SAME(CSVNUM(&c, i, "residual"), q->residual, rt_tol_sig(q->residual, 4), "residual");
    RT_SAME(CSVNUM(&c, i, "flagged"), q->flagged, 0, "flagged");
    double sd = sc ? ew_result_state_sheet_density_cm2(r, i) : NAN;
    RT_SAME(CSVNUM(&c, i, "sheet_density_cm2"), sd, rt_tol_sig(sd, 7), "sheet_density_cm2");
    RT_SAME(CSVNUM(&c, i, "inplane_mass_m0"), q->inplane_mass, rt_tol_fix(q->inplane_mass, 6),
            "inplane_mass_m0");
    double w = ew_result_window_eV(r, q->band);
    double below = q->band == EW_BAND_E ? w - q->energy_eV : q->energy_eV - w;
    RT_SAME(CSVNUM(&c, i, "below_top_eV"), below, rt_tol_fix(below, 10), "below_top_eV");
    RT_STREQ(rcsv_at(&c, i, rcsv_col(&c, "dos_mass_m0")), "", "dos_mass_m0 (parabolic: empty)");
  }
  rcsv_free(&c);
}

static void check_lines(const ew_result *r, const char *dir) {
  rcsv c;
  assert_int_equal(csv_open(dir, "lines.csv", &c,
                            "kind,upper,lower,energy_eV,wavelength_nm,wavelength_um,dipole_nm,"
                            "oscillator_strength,overlap,allowed,exciton_binding_eV,pl_peak_eV,"
                            "te_strength,tm_strength,depolarization_shift_eV,pl_peak_nm"), 0);
  assert_int_equal(c.nrows, ew_result_line_count(r));
  int sc = !isnan(ew_result_fermi_energy_eV(r));
  for (size_t j = 0; j < c.nrows; j++) {
    const ew_line *ln = ew_result_line(r, j);
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    RT_STREQ(rcsv_at(&c, j, 0), isb ? "intersubband" : "interband", "lines kind");
    RT_STREQ(rcsv_at(&c, j, 1), ew_result_state(r, ln->upper)->label, "lines upper");
    RT_STREQ(rcsv_at(&c, j, 2), ew_result_state(r, ln->lower)->label, "lines lower");
    RT_SAME(CSVNUM(&c, j, "energy_eV"), ln->energy_eV, rt_tol_fix(ln->energy_eV, 10), "energy_eV");
    RT_SAME(CSVNUM(&c, j, "wavelength_nm"), ln->wavelength_nm, rt_tol_fix(ln->wavelength_nm, 6),
            "wavelength_nm");
    double um = ln->wavelength_nm / 1e3;
    RT_SAME(CSVNUM(&c, j, "wavelength_um"), um, rt_tol_fix(um, 8), "wavelength_um");
    double nan = NAN;
    RT_SAME(CSVNUM(&c, j, "dipole_nm"), isb ? ln->dipole_nm : nan, rt_tol_fix(ln->dipole_nm, 8),
            "dipole_nm");
    RT_SAME(CSVNUM(&c, j, "oscillator_strength"), isb ? ln->oscillator_strength : nan,
            rt_tol_fix(ln->oscillator_strength, 8), "oscillator_strength");
    RT_SAME(CSVNUM(&c, j, "overlap"), isb ? nan : ln->overlap, rt_tol_fix(ln->overlap, 8),
            "overlap");
    /* intersubband lines are always written allowed (README: TM lines) */
    RT_SAME(CSVNUM(&c, j, "allowed"), isb ? 1 : ln->allowed, 0, "allowed");
    RT_SAME(CSVNUM(&c, j, "exciton_binding_eV"), isb ? nan : ln->exciton_binding_eV,
            rt_tol_fix(ln->exciton_binding_eV, 8), "exciton_binding_eV");
    RT_SAME(CSVNUM(&c, j, "pl_peak_eV"), isb ? nan : ln->pl_peak_eV,
            rt_tol_fix(ln->pl_peak_eV, 10), "pl_peak_eV");
    RT_SAME(CSVNUM(&c, j, "te_strength"), isb ? nan : ln->te_strength,
            rt_tol_fix(ln->te_strength, 6), "te_strength");
    RT_SAME(CSVNUM(&c, j, "tm_strength"), isb ? nan : ln->tm_strength,
            rt_tol_fix(ln->tm_strength, 6), "tm_strength");
    double d = sc && isb ? ew_result_line_depolarization_eV(r, j) : nan;
    RT_SAME(CSVNUM(&c, j, "depolarization_shift_eV"), d, rt_tol_sig(d, 9),
            "depolarization_shift_eV");
  }
  rcsv_free(&c);
}

static void check_waves(const ew_result *r, const char *dir) {
  rcsv c;
  assert_int_equal(csv_open(dir, "wavefunctions.csv", &c, NULL), 0);
  size_t n = ew_result_node_count(r), ns = ew_result_state_count(r);
  assert_int_equal(c.ncol, ns + 1);
  assert_int_equal(c.nrows, n);
  RT_STREQ(c.head[0], "z_nm", "wavefunctions header");
  const double *z = ew_result_z_nm(r);
  for (size_t j = 0; j < ns; j++) {
    RT_STREQ(c.head[j + 1], ew_result_state(r, j)->label, "wavefunctions header");
    const double *psi = ew_result_wavefunction(r, j);
    for (size_t i = 0; i < n; i++)
      RT_SAME(rcsv_num(&c, i, (int)j + 1), psi[i], rt_tol_sig(psi[i], 7) + 1e-300,
              "wavefunction");
  }
  for (size_t i = 0; i < n; i++) RT_SAME(rcsv_num(&c, i, 0), z[i], rt_tol_fix(z[i], 6), "z_nm");
  rcsv_free(&c);
}

static void check_csv(const spec *s) {
  solved sv;
  assert_int_equal(solve_spec(s, &sv), 0);
  char dir[1300], args[2800], out[1300];
  snprintf(dir, sizeof dir, "%s.out", sv.path);
  snprintf(out, sizeof out, "%s.table", sv.path);
  snprintf(args, sizeof args, "solve '%s' -o '%s'", sv.path, dir);
  assert_int_equal(rt_run(&env, args, out), 0);
  check_profile(s, sv.r, dir);
  check_levels(s, sv.r, dir);
  check_lines(sv.r, dir);
  check_waves(sv.r, dir);
  solved_free(&sv);
}

static void csv_strained(void **state) { (void)state; check_csv(&strained); }
static void csv_field(void **state) { (void)state; check_csv(&field); }
static void csv_doped(void **state) { (void)state; check_csv(&doped); }

/* The writers print wrong fields as numbers too: a round trip that compared nothing would
 * pass them.  Make sure the stacks exercise what the checks above need: bound levels in every
 * band, both kinds of lines, strain, a self-consistent solve with all four sheet totals
 * distinct (a swap of any two would show). */
static void fixtures_exercise_the_fields(void **state) {
  (void)state;
  solved a, d;
  assert_int_equal(solve_spec(&strained, &a), 0);
  assert_int_equal(solve_spec(&doped, &d), 0);
  for (int b = 0; b < EW_BAND_COUNT; b++) assert_true(ew_result_band_count(a.r, (ew_band)b) >= 2);
  int kinds[2] = {0, 0};
  for (size_t j = 0; j < ew_result_line_count(a.r); j++) kinds[ew_result_line(a.r, j)->kind]++;
  assert_true(kinds[0] > 0 && kinds[1] > 0);
  assert_false(isnan(ew_result_fermi_energy_eV(d.r)));
  const double *zz = ew_result_z_nm(d.r);
  size_t n = ew_result_node_count(d.r);
  double tot[4] = {0};
  static const ew_sp_profile prof[] = {EW_SP_N_CM3, EW_SP_P_CM3, EW_SP_DONORS_ION_CM3,
                                       EW_SP_ACCEPTORS_ION_CM3};
  for (int k = 0; k < 4; k++)
    for (size_t i = 0; i + 1 < n; i++)
      tot[k] += 0.5 * (ew_result_sp_profile(d.r, prof[k])[i] + ew_result_sp_profile(d.r, prof[k])[i + 1]) * (zz[i + 1] - zz[i]);
  for (int k = 0; k < 4; k++)
    for (int l = k + 1; l < 4; l++) assert_true(fabs(tot[k] - tot[l]) > 1e-3 * fabs(tot[k]));
  solved_free(&a);
  solved_free(&d);
}

/* ---- --spectra FILE.csv ----------------------------------------------------------------
 * Intersubband column against the formula of README "Spectra" (after M. Helm, Semicond.
 * Semimet. 62, 1 (2000)), evaluated here from the public line values alone:
 *   A(E) = (e² h / (4 ε0 n c)) N_s (sin²θ / cos θ) Σ_j (2 ΔE_j |z_1j|² / ħ²) L_j(E),
 * (f_1j/m* = 2ΔE|z|²/ħ², README), L_j a normalised Lorentzian of FWHM `linewidth` at the
 * e1→ej line energy, θ = 45°, n = 3.3 (the defaults); CODATA 2018 constants.  The interband
 * column (exciton peaks not reconstructible from the public API) is checked for its place:
 * its maximum lies within one linewidth of an allowed line's PL peak (the 1s exciton peak,
 * README).  The energy column: the union of the two documented 2001-point grids. */
static void spectra_csv(void **state) {
  (void)state;
  solved sv;
  assert_int_equal(solve_spec(&strained, &sv), 0);
  const ew_result *r = sv.r;
  char csvp[1300], args[2800], out[1300];
  snprintf(csvp, sizeof csvp, "%s/spectra.csv", env.tmp);
  snprintf(out, sizeof out, "%s.spectra.table", sv.path);
  snprintf(args, sizeof args, "solve '%s' --spectra '%s'", sv.path, csvp);
  assert_int_equal(rt_run(&env, args, out), 0);
  rcsv c;
  assert_int_equal(csv_open(env.tmp, "spectra.csv", &c, "E_eV,interband_rel,intersubband_fraction,"
                                                  "intersubband_continuum_fraction"), 0);
  const double e = 1.602176634e-19, h = 6.62607015e-34, hbar = 1.054571817e-34;
  const double eps0 = 8.8541878128e-12, cl = 299792458.0, nr = 3.3, th = 45.0 * M_PI / 180;
  const double Ns = 4e11 * 1e4, fwhm = 8e-3; /* the stack's sheet_density (m^-2), linewidth */
  size_t e1 = rt_state_of(r, EW_BAND_E, 1);
  assert_true(e1 != SIZE_MAX);
  double Emax_isb = 0, Emin_pl = INFINITY, Emax_ib = 0;
  for (size_t j = 0; j < ew_result_line_count(r); j++) {
    const ew_line *ln = ew_result_line(r, j);
    if (ln->kind == EW_LINE_INTERSUBBAND && ln->lower == e1) Emax_isb = fmax(Emax_isb, ln->energy_eV);
    if (ln->kind == EW_LINE_INTERBAND) {
      Emin_pl = fmin(Emin_pl, ln->pl_peak_eV);
      Emax_ib = fmax(Emax_ib, ln->energy_eV);
    }
  }
  assert_true(Emax_isb > 0);
  double pref = e * e * h / (4 * eps0 * nr * cl) * Ns * sin(th) * sin(th) / cos(th);
  double amax = 0, ibmax = -1, E_ibmax = 0;
  int grid_ends[4] = {0, 0, 0, 0};
  /* the intersubband grid reaches 1.5 × the higher of the e1 lines and the continuum
     threshold, e1's distance below the barrier top */
  double thr = ew_result_state_below_top_eV(r, e1);
  double ends[4] = {Emin_pl - 0.020, Emax_ib + 0.100, 0.0, 1.5 * fmax(Emax_isb, thr)};
  for (size_t k = 0; k < c.nrows; k++) {
    double E = rcsv_num(&c, k, 0);
    if (k) assert_true(E > rcsv_num(&c, k - 1, 0)); /* ascending, each energy once */
    for (int q = 0; q < 4; q++) grid_ends[q] |= fabs(E - ends[q]) <= rt_tol_sig(ends[q], 10) + 1e-12;
    double A = 0;
    for (size_t j = 0; j < ew_result_line_count(r); j++) {
      const ew_line *ln = ew_result_line(r, j);
      if (ln->kind != EW_LINE_INTERSUBBAND || ln->lower != e1) continue;
      double dE = ln->energy_eV * e, z = ln->dipole_nm * 1e-9, g = 0.5 * fwhm;
      double L = g / (M_PI * ((E - ln->energy_eV) * (E - ln->energy_eV) + g * g)) / e; /* 1/J */
      A += pref * 2 * dE * z * z / (hbar * hbar) * L;
    }
    amax = fmax(amax, A);
    /* 10 digits printed; 1e-6 relative of the peak for the constants' last digits */
    RT_SAME(rcsv_num(&c, k, 2), A, rt_tol_sig(A, 10) + 1e-6 * amax + 1e-15,
            "intersubband_fraction against the Helm formula");
    double ib = rcsv_num(&c, k, 1);
    if (ib > ibmax) ibmax = ib, E_ibmax = E;
  }
  for (int q = 0; q < 4; q++) {
    if (!grid_ends[q]) print_error("spectra: no row at the grid end %.10g eV\n", ends[q]);
    assert_true(grid_ends[q]);
  }
  assert_true(c.nrows > 2001 && c.nrows <= 4002);
  int near_pl = 0;
  for (size_t j = 0; j < ew_result_line_count(r); j++) {
    const ew_line *ln = ew_result_line(r, j);
    if (ln->kind == EW_LINE_INTERBAND && ln->allowed && fabs(E_ibmax - ln->pl_peak_eV) <= fwhm) near_pl = 1;
  }
  assert_true(ibmax > 0 && near_pl);
  rcsv_free(&c);
  solved_free(&sv);
}

static const char *argv0;
static int setup(void **state) {
  (void)state;
  if (rt_env_init(&env, argv0, "roundtrip") != 0) return -1;
  ew_error err;
  return ew_catalogue_load("materials", &cat, &err) == EW_OK ? 0 : -1;
}
static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  tu_rm_tree(env.tmp);
  return 0;
}

int main(int argc, char **argv) {
  (void)argc;
  argv0 = argv[0];
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(fixtures_exercise_the_fields),
      cmocka_unit_test(json_strained),
      cmocka_unit_test(json_field),
      cmocka_unit_test(json_doped),
      cmocka_unit_test(csv_strained),
      cmocka_unit_test(csv_field),
      cmocka_unit_test(csv_doped),
      cmocka_unit_test(spectra_csv),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
