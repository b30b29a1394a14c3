/* test_roundtrip_workflow.c — `epiwell sweep` (CSV and --json, one and two keys, a shard),
 * `epiwell match --json` and `epiwell tolerance --json` (and --ladder), read back with the
 * independent parser of roundtrip.h and compared with single solves through the public API:
 * the test writes the stack with the varied value itself, solves it with ew_solve and
 * compares every column (levels and lines), every derivative (recomputed as the difference
 * the README defines) and every solution (solved again at the value found).  Reference: the
 * library's single solve (public API) and the definitions in README "Sweeps, matching and
 * tolerances". */
#include <math.h>

#include "roundtrip.h"

#include "hellmann_feynman.h" /* the library's own derivative, for the round trip */

static rt_env env;
static ew_catalogue *cat;
static const char *argv0;

/* The stack of these tests: a GaAs well between AlGaAs barriers (left's x can vary). */
static void stack_text(double well_nm, double left_x, double left_nm, char *buf, size_t size) {
  snprintf(buf, size,
           "temperature = 77.0;\n"
           "layers = (\n"
           "  { name = \"left\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
           "  { name = \"right\"; material = \"AlGaAs\"; x = 0.3; thickness = 25.0; }\n"
           ");\n",
           left_x, left_nm, well_nm);
}
#define WELL_NM 6.5
#define LEFT_X 0.3
#define LEFT_NM 25.0

/* The options the workflow commands use (cli_workflow.c; README: sweeps skip the exciton
 * binding, which no column holds); energies and overlaps do not depend on it.  A result
 * refers to its stack: keep both. */
typedef struct {
  ew_stack *st;
  ew_result *r;
} pt;
static pt solve_pt(double well_nm, double left_x, double left_nm) {
  char text[2048];
  stack_text(well_nm, left_x, left_nm, text, sizeof text);
  ew_options opt;
  ew_options_default(&opt);
  opt.excitons = 0;
  pt p;
  p.r = tu_solve_text(cat, text, &p.st, &opt);
  assert_non_null(p.r);
  return p;
}
static void pt_free(pt *p) {
  ew_result_free(p->r);
  ew_stack_free(p->st);
}

/* The line joining labels a and b (either order), or NULL. */
static const ew_line *line_of(const ew_result *r, const char *a, const char *b) {
  for (size_t j = 0; j < ew_result_line_count(r); j++) {
    const ew_line *ln = ew_result_line(r, j);
    const char *u = ew_result_state(r, ln->upper)->label, *l = ew_result_state(r, ln->lower)->label;
    if ((!strcmp(u, a) && !strcmp(l, b)) || (!strcmp(u, b) && !strcmp(l, a))) return ln;
  }
  return NULL;
}

/* The value a sweep column NAME holds for result r (README: LEVEL_eV; intersubband
 * A-B_eV, _um, _f; interband A-B_eV, _nm, _overlap); NAN when not bound.  *digits: 10
 * (%.10g).  Fails for a name that is none of these. */
static double column_value(const ew_result *r, const char *name) {
  char base[64];
  snprintf(base, sizeof base, "%s", name);
  char *us = strrchr(base, '_');
  assert_non_null(us);
  *us = '\0';
  const char *suf = us + 1, *dash = strchr(base, '-');
  if (!dash) {
    assert_string_equal(suf, "eV");
    size_t i = rt_state_labelled(r, base);
    return i == SIZE_MAX ? NAN : ew_result_state(r, i)->energy_eV;
  }
  char a[32];
  snprintf(a, sizeof a, "%.*s", (int)(dash - base), base);
  const char *b = dash + 1;
  if (rt_state_labelled(r, a) == SIZE_MAX || rt_state_labelled(r, b) == SIZE_MAX) return NAN;
  const ew_line *ln = line_of(r, a, b);
  assert_non_null(ln);
  int ib = ln->kind == EW_LINE_INTERBAND;
  if (!strcmp(suf, "eV")) return ln->energy_eV;
  if (!strcmp(suf, "um") && !ib) return ln->wavelength_nm / 1e3;
  if (!strcmp(suf, "f") && !ib) return ln->oscillator_strength;
  if (!strcmp(suf, "nm") && ib) return ln->wavelength_nm;
  if (!strcmp(suf, "overlap") && ib) return ln->overlap;
  print_error("sweep column '%s': unknown\n", name);
  fail();
  return NAN;
}

/* Every bound level of r has its column, and so has every main line (README: b1-bj per band;
 * e_n-hh_n, e_n-lh_n for n <= 3 while both are bound). */
static void columns_cover(const ew_result *r, char **names, size_t ncol) {
  for (size_t i = 0; i < ew_result_state_count(r); i++) {
    char want[64];
    const ew_state *s = ew_result_state(r, i);
    snprintf(want, sizeof want, "%s_eV", s->label);
    int found = 0;
    for (size_t j = 0; j < ncol; j++) found |= !strcmp(names[j], want);
    if (!found) {
      print_error("no sweep column for bound level %s\n", s->label);
      fail();
    }
    const char *bn = ew_band_name(s->band);
    if (s->n >= 2 || (s->band != EW_BAND_E && s->n <= 3)) {
      if (s->n >= 2) snprintf(want, sizeof want, "%s1-%s_eV", bn, s->label);
      else continue;
      found = 0;
      for (size_t j = 0; j < ncol; j++) found |= !strcmp(names[j], want);
      if (!found) {
        print_error("no sweep column %s\n", want);
        fail();
      }
    }
    if (s->band != EW_BAND_E && s->n <= 3) {
      char e[16];
      snprintf(e, sizeof e, "e%d", s->n);
      if (rt_state_labelled(r, e) == SIZE_MAX) continue;
      snprintf(want, sizeof want, "%s-%s_overlap", e, s->label);
      found = 0;
      for (size_t j = 0; j < ncol; j++) found |= !strcmp(names[j], want);
      if (!found) {
        print_error("no sweep column %s\n", want);
        fail();
      }
    }
  }
}

/* A sweep point's values: well thickness and left.x (either varied) */
typedef struct {
  double well, x;
} pvals;

/* Compare row (CSV cells or JSON values through get) with the single solve at p. */
static void check_row(const pvals *p, char **names, size_t ncol, size_t nkeys,
                      double (*get)(const void *row, size_t j), const void *row, const char *what) {
  pt s = solve_pt(p->well, p->x, LEFT_NM);
  columns_cover(s.r, names, ncol);
  for (size_t j = nkeys; j < ncol; j++) {
    if (!strcmp(names[j], "warnings")) continue; /* codes, not numbers: test_validity.c */
    double want = column_value(s.r, names[j]);
    char w[160];
    snprintf(w, sizeof w, "%s at well %g, left.x %g: column %s", what, p->well, p->x, names[j]);
    RT_SAME(get(row, j), want, rt_tol_sig(want, 10), w);
  }
  pt_free(&s);
}

static double csv_get(const void *row, size_t j) {
  const char *const *cells = row;
  if (!*cells[j]) return NAN;
  return strtod(cells[j], NULL);
}
static char **json_names;
static double json_get(const void *row, size_t j) {
  return rj_num((const rj *)row, json_names[j]);
}

static void write_stack(char *path, size_t size) {
  char text[2048];
  stack_text(WELL_NM, LEFT_X, LEFT_NM, text, sizeof text);
  assert_int_equal(rt_write(&env, "wf.cfg", text, path, size), 0);
}

/* vary: "well" or "left.x" pairs of values, outer first */
static void sweep_case(const char *vary_args, size_t nkeys, const char *const *keys,
                       const pvals *pts, size_t npts, const char *shard, size_t first) {
  char stack[1200], csvp[1300], out[1300], args[4096];
  write_stack(stack, sizeof stack);
  snprintf(csvp, sizeof csvp, "%s/sweep.csv", env.tmp);
  snprintf(out, sizeof out, "%s/sweep.json", env.tmp);
  snprintf(args, sizeof args, "sweep '%s' %s %s --csv '%s' --json --threads 2", stack, vary_args,
           shard, csvp);
  assert_int_equal(rt_run(&env, args, out), 0);
  /* CSV; a later shard has no header line (README): read it under the JSON's columns */
  if (first > 0) {
    char *body = rt_slurp(csvp), *jt = rt_slurp(out);
    assert_true(body && jt);
    rj d;
    assert_int_equal(rj_parse(jt, &d), 0);
    const rj *cl = rj_get(&d, "columns");
    assert_non_null(cl);
    FILE *f = fopen(csvp, "w");
    assert_non_null(f);
    for (size_t j = 0; j < cl->n; j++) fprintf(f, "%s%s", j ? "," : "", cl->item[j].str);
    fprintf(f, "\n%s", body);
    assert_int_equal(fclose(f), 0);
    assert_true(strncmp(body, keys[0], strlen(keys[0])) != 0); /* no header in the part */
    free(body);
    free(jt);
    rj_free(&d);
  }
  rcsv c;
  assert_int_equal(rcsv_read(csvp, &c), 0);
  assert_int_equal(c.nrows, npts);
  for (size_t k = 0; k < nkeys; k++) RT_STREQ(c.head[k], keys[k], "sweep key column");
  for (size_t i = 0; i < npts; i++) {
    const pvals *p = &pts[first + i];
    double kv[2] = {nkeys == 2 || strstr(keys[0], "thickness") ? p->well : p->x, p->x};
    for (size_t k = 0; k < nkeys; k++)
      RT_SAME(rcsv_num(&c, i, (int)k), kv[k], rt_tol_sig(kv[k], 10), "sweep key value");
    check_row(p, c.head, c.ncol, nkeys, csv_get, c.cell + i * c.ncol, "CSV");
  }
  /* JSON */
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  RT_STREQ(rj_str(&doc, "stack"), stack, "sweep json stack");
  const rj *varied = rj_get(&doc, "varied");
  assert_true(varied && varied->n == nkeys);
  for (size_t k = 0; k < nkeys; k++) RT_STREQ(varied->item[k].str, keys[k], "varied");
  const rj *sh = rj_get(&doc, "shard");
  assert_non_null(sh);
  RT_SAME(rj_num(sh, "first"), (double)first, 0, "shard.first");
  RT_SAME(rj_num(sh, "count"), (double)npts, 0, "shard.count");
  const rj *cols = rj_get(&doc, "columns");
  assert_true(cols && cols->n == c.ncol);
  for (size_t j = 0; j < c.ncol; j++) RT_STREQ(cols->item[j].str, c.head[j], "columns = CSV header");
  const rj *points = rj_get(&doc, "points");
  assert_true(points && points->n == npts);
  json_names = c.head;
  for (size_t i = 0; i < npts; i++) {
    const rj *o = &points->item[i];
    assert_int_equal(o->n, c.ncol); /* one member per column */
    const pvals *p = &pts[first + i];
    double kv[2] = {nkeys == 2 || strstr(keys[0], "thickness") ? p->well : p->x, p->x};
    for (size_t k = 0; k < nkeys; k++)
      RT_SAME(rj_num(o, keys[k]), kv[k], rt_tol_sig(kv[k], 10), "sweep json key value");
    check_row(p, c.head, c.ncol, nkeys, json_get, o, "JSON");
  }
  rj_free(&doc);
  rcsv_free(&c);
}

static void sweep_one_key(void **state) {
  (void)state;
  static const char *const keys[] = {"well.thickness"};
  pvals p[5];
  for (int i = 0; i < 5; i++) p[i] = (pvals){4.0 + i, LEFT_X}; /* 4:8:1 */
  sweep_case("--vary well.thickness=4:8:1", 1, keys, p, 5, "", 0);
}

static void sweep_one_key_composition(void **state) {
  (void)state;
  static const char *const keys[] = {"left.x"};
  pvals p[3] = {{WELL_NM, 0.2}, {WELL_NM, 0.3}, {WELL_NM, 0.4}};
  sweep_case("--vary left.x=0.2:0.4:0.1", 1, keys, p, 3, "", 0);
}

/* two keys: the first is the outer loop (README) */
static void sweep_two_keys(void **state) {
  (void)state;
  static const char *const keys[] = {"well.thickness", "left.x"};
  pvals p[6] = {{5, 0.2}, {5, 0.25}, {5, 0.3}, {7, 0.2}, {7, 0.25}, {7, 0.3}};
  sweep_case("--vary well.thickness=5:7:2 --vary left.x=0.2:0.3:0.05", 2, keys, p, 6, "", 0);
}

/* part 2 of 3 of 7 points holds points [7/3, 14/3) = 2, 3 (README: contiguous parts) */
static void sweep_shard(void **state) {
  (void)state;
  static const char *const keys[] = {"well.thickness"};
  pvals p[7];
  for (int i = 0; i < 7; i++) p[i] = (pvals){4.0 + i, LEFT_X};
  sweep_case("--vary well.thickness=4:10:1", 1, keys, p, 2, "--shard 2/3", 2);
}

/* ---- match ---------------------------------------------------------------------------- */
static double line_energy(double well, const char *a, const char *b) {
  pt s = solve_pt(well, LEFT_X, LEFT_NM);
  const ew_line *ln = line_of(s.r, a, b);
  double e = ln ? ln->energy_eV : NAN;
  pt_free(&s);
  return e;
}

static void match_one_key_with_tolerance(void **state) {
  (void)state;
  char stack[1200], out[1300], args[4096];
  write_stack(stack, sizeof stack);
  double target = line_energy(6.3, "e1", "e2"), tol = 0.002;
  snprintf(out, sizeof out, "%s/match.json", env.tmp);
  snprintf(args, sizeof args,
           "match '%s' --vary well.thickness=4:10 --line e1-e2 --target %.10feV "
           "--tolerance %.3feV --json", stack, target, tol);
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  target = strtod(strstr(args, "--target ") + 9, NULL); /* as the command read it */
  const rj *keys = rj_get(&doc, "keys");
  assert_true(keys && keys->n == 1);
  RT_STREQ(keys->item[0].str, "well.thickness", "keys");
  const rj *lines = rj_get(&doc, "lines");
  assert_true(lines && lines->n == 1);
  const rj *l0 = &lines->item[0];
  RT_STREQ(rj_str(l0, "line"), "e1-e2", "line");
  RT_JSON(l0, "target_eV", target, "lines[0]");
  RT_JSON(l0, "target_nm", RT_HC_EVNM / target, "lines[0]");
  /* reached: min and max over the 41 default samples, evenly spaced, both ends (README) */
  double lo = INFINITY, hi = -INFINITY;
  for (int i = 0; i <= 40; i++) {
    double e = line_energy(4.0 + 6.0 * i / 40, "e1", "e2");
    if (!isnan(e)) lo = fmin(lo, e), hi = fmax(hi, e);
  }
  const rj *reached = rj_get(l0, "reached_eV");
  assert_true(reached && reached->n == 2);
  RT_SAME(reached->item[0].num, lo, rt_tol_sig(lo, 10) + 1e-12, "reached_eV[0] (lowest)");
  RT_SAME(reached->item[1].num, hi, rt_tol_sig(hi, 10) + 1e-12, "reached_eV[1] (highest)");
  const rj *sol = rj_get(&doc, "solutions");
  assert_true(sol && sol->n == 1); /* e1-e2 falls monotonically with the width */
  const rj *s = &sol->item[0];
  double v = rj_num(s, "value"), e = line_energy(v, "e1", "e2");
  /* the value is printed to 10 digits: the line there agrees to |dE/dt|·5e-10·t < 1e-10 eV */
  RT_SAME(rj_num(s, "energy_eV"), e, rt_tol_sig(e, 10) + 1e-10, "solution energy_eV");
  RT_SAME(rj_num(s, "wavelength_nm"), RT_HC_EVNM / e, rt_tol_sig(RT_HC_EVNM / e, 9), "wavelength_nm");
  RT_SAME(rj_num(s, "residual_eV"), e - target, 2e-10, "residual_eV = energy − target");
  /* Brent to 2e-7 relative in the value (README): |dE/dt| ~ 0.03 eV/nm at 6 nm → 4e-8 eV */
  TU_NEAR(e, target, 1e-6, "the line at the value found is on target (Brent 2e-7 in value)");
  TU_NEAR(v, 6.3, 1e-5, "the target came from the line at 6.3 nm");
  double vm = rj_num(s, "value_at_target_minus_tolerance"), vp = rj_num(s, "value_at_target_plus_tolerance");
  TU_NEAR(line_energy(vm, "e1", "e2"), target - tol, 1e-6, "value at target − tolerance");
  TU_NEAR(line_energy(vp, "e1", "e2"), target + tol, 1e-6, "value at target + tolerance");
  RT_SAME(rj_num(s, "uncertainty"), 0.5 * fabs(vp - vm), rt_tol_sig(0.5 * fabs(vp - vm), 9),
          "uncertainty = half the distance");
  RT_STREQ(rj_str(&doc, "message"), "", "message");
  rj_free(&doc);
}

/* two unknowns: each member a pair (README); solved again at the pair found */
static double line_energy2(double well, double x, const char *a, const char *b) {
  pt s = solve_pt(well, x, LEFT_NM);
  const ew_line *ln = line_of(s.r, a, b);
  double e = ln ? ln->energy_eV : NAN;
  pt_free(&s);
  return e;
}

static void match_two_keys(void **state) {
  (void)state;
  char stack[1200], out[1300], args[4096];
  write_stack(stack, sizeof stack);
  double t0 = line_energy2(6.3, 0.25, "e1", "hh1"), t1 = line_energy2(6.3, 0.25, "e1", "e2");
  snprintf(out, sizeof out, "%s/match2.json", env.tmp);
  snprintf(args, sizeof args,
           "match '%s' --vary well.thickness=5:8 --vary left.x=0.15:0.35 --line e1-hh1 "
           "--target %.10feV --line e1-e2 --target %.10feV --json", stack, t0, t1);
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  char s0[32], s1[32]; /* the targets as the command read them */
  snprintf(s0, sizeof s0, "%.10f", t0);
  snprintf(s1, sizeof s1, "%.10f", t1);
  double tg[2] = {strtod(s0, NULL), strtod(s1, NULL)};
  const rj *keys = rj_get(&doc, "keys"), *lines = rj_get(&doc, "lines");
  assert_true(keys && keys->n == 2 && lines && lines->n == 2);
  RT_STREQ(keys->item[0].str, "well.thickness", "keys[0]");
  RT_STREQ(keys->item[1].str, "left.x", "keys[1]");
  static const char *const ln[2][2] = {{"e1", "hh1"}, {"e1", "e2"}};
  for (int i = 0; i < 2; i++) {
    char nm[16];
    snprintf(nm, sizeof nm, "%s-%s", ln[i][0], ln[i][1]);
    RT_STREQ(rj_str(&lines->item[i], "line"), nm, "lines[i].line");
    RT_JSON(&lines->item[i], "target_eV", tg[i], nm);
    RT_JSON(&lines->item[i], "target_nm", RT_HC_EVNM / tg[i], nm);
  }
  const rj *sol = rj_get(&doc, "solutions");
  assert_true(sol && sol->n >= 1);
  for (size_t k = 0; k < sol->n; k++) {
    const rj *s = &sol->item[k];
    const rj *v = rj_get(s, "value"), *E = rj_get(s, "energy_eV"), *W = rj_get(s, "wavelength_nm"),
             *R = rj_get(s, "residual_eV");
    assert_true(v && v->n == 2 && E && E->n == 2 && W && W->n == 2 && R && R->n == 2);
    for (int i = 0; i < 2; i++) {
      double e = line_energy2(v->item[0].num, v->item[1].num, ln[i][0], ln[i][1]);
      RT_SAME(E->item[i].num, e, rt_tol_sig(e, 10) + 1e-10, "2D solution energy_eV[i]");
      RT_SAME(W->item[i].num, RT_HC_EVNM / e, rt_tol_sig(RT_HC_EVNM / e, 9), "wavelength_nm[i]");
      RT_SAME(R->item[i].num, e - tg[i], 2e-10, "residual_eV[i] = energy − target");
    }
  }
  /* the pair the targets came from is among the solutions (Newton; 1e-5 eV of residual
     moves the pair by < 1e-3) */
  int found = 0;
  for (size_t k = 0; k < sol->n; k++) {
    const rj *v = rj_get(&sol->item[k], "value");
    found |= fabs(v->item[0].num - 6.3) < 1e-3 && fabs(v->item[1].num - 0.25) < 1e-3;
  }
  assert_true(found);
  RT_STREQ(rj_str(&doc, "message"), "", "message");
  rj_free(&doc);
}

/* ---- tolerance ------------------------------------------------------------------------ */
typedef struct {
  double t[3], x[3];
} geo;

/* the energy of item name ("e1" or "e1-e2") at a geometry, NAN when not bound */
/* The resolved band parameters of layer k of the stack with geometry g (stack.h). */
static void layer_bands(const geo *g, size_t k, ew_bands *out) {
  char text[2048];
  snprintf(text, sizeof text,
           "temperature = 77.0;\n"
           "layers = (\n"
           "  { name = \"left\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
           "  { name = \"right\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; }\n"
           ");\n",
           g->x[0], g->t[0], g->t[1], g->x[2], g->t[2]);
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(text, "bands.cfg", cat, &st, &err), EW_OK);
  *out = st->layers[k].bands;
  ew_stack_free(st);
}

static double item_energy(const geo *g, const char *name) {
  char text[2048];
  snprintf(text, sizeof text,
           "temperature = 77.0;\n"
           "layers = (\n"
           "  { name = \"left\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
           "  { name = \"right\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; }\n"
           ");\n",
           g->x[0], g->t[0], g->t[1], g->x[2], g->t[2]);
  ew_options opt;
  ew_options_default(&opt);
  opt.excitons = 0;
  ew_stack *st;
  ew_result *r = tu_solve_text(cat, text, &st, &opt);
  assert_non_null(r);
  double e = NAN;
  const char *dash = strchr(name, '-');
  if (!dash) {
    size_t i = rt_state_labelled(r, name);
    if (i != SIZE_MAX) e = ew_result_state(r, i)->energy_eV;
  } else {
    char a[32];
    snprintf(a, sizeof a, "%.*s", (int)(dash - name), name);
    const ew_line *ln = line_of(r, a, dash + 1);
    if (ln) e = ln->energy_eV;
  }
  ew_result_free(r);
  ew_stack_free(st);
  return e;
}

static void tolerance_json(void **state) {
  (void)state;
  char stack[1200], out[1300], args[4096];
  write_stack(stack, sizeof stack);
  snprintf(out, sizeof out, "%s/tolerance.json", env.tmp);
  snprintf(args, sizeof args, "tolerance '%s' --json --threads 2", stack);
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  RT_STREQ(rj_str(&doc, "stack"), stack, "tolerance stack");
  const geo g0 = {{LEFT_NM, WELL_NM, 25.0}, {LEFT_X, -1, 0.3}};
  const rj *items = rj_get(&doc, "items");
  assert_true(items && items->n >= 4);
  pt nom = solve_pt(WELL_NM, LEFT_X, LEFT_NM);
  /* items: every level, then the main lines (README) */
  size_t ns = ew_result_state_count(nom.r);
  assert_true(items->n > ns);
  double E0[64];
  assert_true(items->n <= 64);
  for (size_t i = 0; i < items->n; i++) {
    const rj *it = &items->item[i];
    const char *name = rj_str(it, "name"), *kind = rj_str(it, "kind");
    if (i < ns) {
      RT_STREQ(name, ew_result_state(nom.r, i)->label, "items: the levels first");
      RT_STREQ(kind, "level", "item kind");
    } else {
      assert_non_null(strchr(name, '-'));
      int ib = name[0] == 'e' && !strstr(name, "-e");
      RT_STREQ(kind, ib ? "interband" : "intersubband", "item kind");
    }
    E0[i] = item_energy(&g0, name);
    RT_JSON(it, "energy_eV", E0[i], name);
  }
  const rj *layers = rj_get(&doc, "layers");
  assert_true(layers && layers->n == 3);
  static const char *const lname[] = {"left", "well", "right"}, *const lmat[] = {"AlGaAs", "GaAs", "AlGaAs"};
  for (size_t k = 0; k < 3; k++) {
    const rj *L = &layers->item[k];
    char what[64];
    snprintf(what, sizeof what, "layers[%zu]", k);
    RT_SAME(rj_num(L, "index"), (double)k + 1, 0, "index");
    RT_STREQ(rj_str(L, "name"), lname[k], what);
    RT_STREQ(rj_str(L, "material"), lmat[k], what);
    RT_JSON(L, "thickness_nm", g0.t[k], what);
    /* one monolayer a/2, a from `epiwell materials` (unstrained: no substrate) */
    char margs[256], mout[1300];
    snprintf(mout, sizeof mout, "%s/mat%zu.txt", env.tmp, k);
    if (g0.x[k] >= 0) snprintf(margs, sizeof margs, "materials %s --x %.17g --temperature 77", lmat[k], g0.x[k]);
    else snprintf(margs, sizeof margs, "materials %s --temperature 77", lmat[k]);
    assert_int_equal(rt_run(&env, margs, mout), 0);
    char *mt = rt_slurp(mout);
    assert_non_null(mt);
    double a = NAN;
    for (const char *p = mt; p; p = strchr(p, '\n'), p = p ? p + 1 : NULL)
      if (!strncmp(p, "a ", 2)) a = strtod(p + 1, NULL);
    free(mt);
    double ml = rj_num(L, "monolayer_nm");
    RT_SAME(ml, a / 2, rt_tol_sig(a / 2, 6), "monolayer_nm = a/2 (epiwell materials, 6 digits)");
    const rj *md = rj_get(L, "monolayer_default"), *al = rj_get(L, "alloy");
    assert_true(md && md->t == RJ_BOOL && md->num == 0);
    assert_true(al && al->t == RJ_BOOL && al->num == (g0.x[k] >= 0));
    double dx = rj_num(L, "dx"), ht = rj_num(L, "fd_step_nm"), hx = rj_num(L, "fd_step_x");
    if (g0.x[k] >= 0) {
      RT_JSON(L, "x", g0.x[k], what);
      RT_SAME(dx, 0.01, 1e-12, "dx (default 0.01, README)");
    } else {
      assert_true(isnan(rj_num(L, "x")) && isnan(dx));
    }
    assert_true(ht > 0 && ht < 0.1);
    const char *arr[8] = {"shift_minus_1ML_eV", "shift_plus_1ML_eV", "dEdt_HF_eV_per_nm",
                          "dEdt_FD_eV_per_nm", "shift_minus_dx_eV", "shift_plus_dx_eV",
                          "dEdx_HF_eV", "dEdx_FD_eV"};
    const rj *A[8];
    for (int q = 0; q < 8; q++) {
      A[q] = rj_get(L, arr[q]);
      assert_true(A[q] && A[q]->t == RJ_ARR && A[q]->n == items->n);
    }
    for (size_t i = 0; i < items->n; i++) {
      const char *name = rj_str(&items->item[i], "name");
      geo g = g0;
      double want[8];
      g.t[k] = g0.t[k] - ml, want[0] = item_energy(&g, name) - E0[i];
      g.t[k] = g0.t[k] + ml, want[1] = item_energy(&g, name) - E0[i];
      g.t[k] = g0.t[k] + ht;
      double ep = item_energy(&g, name);
      g.t[k] = g0.t[k] - ht;
      want[3] = (ep - item_energy(&g, name)) / (2 * ht);
      g = g0;
      want[2] = want[3]; /* Hellmann–Feynman = the derivative: compared below, loosely */
      for (int q = 4; q < 8; q++) want[q] = NAN;
      if (g0.x[k] >= 0) {
        g.x[k] = g0.x[k] - dx, want[4] = item_energy(&g, name) - E0[i];
        g.x[k] = g0.x[k] + dx, want[5] = item_energy(&g, name) - E0[i];
        g.x[k] = g0.x[k] + hx;
        double xp = item_energy(&g, name);
        g.x[k] = g0.x[k] - hx;
        want[7] = (xp - item_energy(&g, name)) / (2 * hx);
        want[6] = want[7];
      }
      for (int q = 0; q < 8; q++) {
        double got = A[q]->item[i].t == RJ_NULL ? NAN : A[q]->item[i].num;
        char w[160];
        snprintf(w, sizeof w, "%s %s[%s]", lname[k], arr[q], name);
        /* differences: 10 digits of the difference, plus the 10-digit monolayer and step
           (|dE/dt| ≤ 0.1 eV/nm × 5e-11 nm) over the step; HF against the central difference:
           the theorem is exact for the discrete problem only to the O(h²) of the
           difference and the Richardson step, 2 % (README: "beside central differences") */
        double tol = q == 2 || q == 6 ? 0.02 * fabs(want[q]) + 1e-4
                     : q == 3 || q == 7 ? rt_tol_sig(want[q], 10) + 1e-11 / (q == 3 ? ht : hx)
                                        : rt_tol_sig(want[q], 10) + 1e-11;
        RT_SAME(got, want[q], tol, w);
      }
      /* dEdt_HF is the library's Hellmann–Feynman derivative of the nominal solve (a round
         trip: the writer must print that member, not the close central difference, which
         the 2 % check above cannot tell apart): levels directly, lines as the difference of
         their levels' derivatives (upper − lower); 10 printed digits */
      double hf = NAN;
      if (i < ns) {
        hf = ew_wf_hf_dthickness(nom.r, i, k);
      } else {
        char up[16], lo[16];
        const char *dash = strchr(name, '-');
        snprintf(up, sizeof up, "%.*s", (int)(dash - name), name);
        snprintf(lo, sizeof lo, "%s", dash + 1);
        size_t iu = rt_state_labelled(nom.r, up), il = rt_state_labelled(nom.r, lo);
        assert_true(iu != SIZE_MAX && il != SIZE_MAX);
        double du = ew_wf_hf_dthickness(nom.r, iu, k), dl = ew_wf_hf_dthickness(nom.r, il, k);
        int ib = ew_result_state(nom.r, iu)->band != ew_result_state(nom.r, il)->band;
        double eu = ew_result_state(nom.r, iu)->energy_eV, el = ew_result_state(nom.r, il)->energy_eV;
        /* interband: E(e) − E(h); intersubband: the positive difference (tolerance.c) */
        hf = ib ? du - dl : (el >= eu ? dl - du : du - dl);
      }
      char w[160];
      snprintf(w, sizeof w, "%s dEdt_HF_eV_per_nm[%s] = Hellmann–Feynman of the nominal solve",
               lname[k], name);
      RT_SAME(A[2]->item[i].num, hf, rt_tol_sig(hf, 10) + 1e-15, w);
      /* dEdx_HF likewise, for a level of an alloy layer: the library's derivative with the
         layer's band parameters of the stacks at x ∓ fd_step_x (as the JSON says) */
      if (g0.x[k] >= 0 && i < ns) {
        ew_bands bl, bh;
        geo gx = g0;
        gx.x[k] = g0.x[k] - hx;
        layer_bands(&gx, k, &bl);
        gx.x[k] = g0.x[k] + hx;
        layer_bands(&gx, k, &bh);
        double hx_hf = ew_wf_hf_dparam(nom.r, i, k, &bl, &bh, 2 * hx);
        snprintf(w, sizeof w, "%s dEdx_HF_eV[%s] = Hellmann–Feynman of the nominal solve",
                 lname[k], name);
        RT_SAME(A[6]->item[i].num, hx_hf, rt_tol_sig(hx_hf, 10) + 1e-15, w);
      }
    }
  }
  pt_free(&nom);
  rj_free(&doc);
}

/* --ladder: the main lines at the nominal width and ±1, ±2 monolayers */
static void tolerance_ladder_json(void **state) {
  (void)state;
  char stack[1200], out[1300], args[4096];
  write_stack(stack, sizeof stack);
  snprintf(out, sizeof out, "%s/ladder.json", env.tmp);
  snprintf(args, sizeof args, "tolerance '%s' --ladder well --json --threads 2", stack);
  assert_int_equal(rt_run(&env, args, out), 0);
  char *text = rt_slurp(out);
  assert_non_null(text);
  rj doc;
  assert_int_equal(rj_parse(text, &doc), 0);
  free(text);
  RT_STREQ(rj_str(&doc, "stack"), stack, "ladder stack");
  RT_STREQ(rj_str(&doc, "layer"), "well", "ladder layer");
  double ml = rj_num(&doc, "monolayer_nm");
  TU_NEAR(ml, 0.56533 / 2, 1e-4, "GaAs a/2, a = 0.56533 nm (Vurgaftman et al., J. Appl. Phys. "
                                 "89, 5815 (2001), Table III; from memory)");
  const rj *off = rj_get(&doc, "offsets_ML"), *th = rj_get(&doc, "thickness_nm");
  assert_true(off && off->n == 5 && th && th->n == 5);
  const rj *lines = rj_get(&doc, "lines");
  assert_true(lines && lines->n >= 2);
  const geo g0 = {{LEFT_NM, WELL_NM, 25.0}, {LEFT_X, -1, 0.3}};
  for (int q = 0; q < 5; q++) {
    RT_SAME(off->item[q].num, q - 2, 0, "offsets_ML");
    double t = WELL_NM + (q - 2) * ml;
    RT_SAME(th->item[q].num, t, rt_tol_sig(t, 10), "thickness_nm");
    geo g = g0;
    g.t[1] = th->item[q].num;
    for (size_t i = 0; i < lines->n; i++) {
      const rj *L = &lines->item[i];
      const char *name = rj_str(L, "name");
      const rj *E = rj_get(L, "energy_eV"), *W = rj_get(L, "wavelength_nm");
      assert_true(E && E->n == 5 && W && W->n == 5);
      double e = item_energy(&g, name);
      char w[96];
      snprintf(w, sizeof w, "ladder %s at %+d ML", name, q - 2);
      RT_SAME(E->item[q].t == RJ_NULL ? NAN : E->item[q].num, e, rt_tol_sig(e, 10) + 1e-11, w);
      RT_SAME(W->item[q].t == RJ_NULL ? NAN : W->item[q].num, RT_HC_EVNM / e,
              rt_tol_sig(RT_HC_EVNM / e, 9), w);
    }
  }
  rj_free(&doc);
}

static int setup(void **state) {
  (void)state;
  if (rt_env_init(&env, argv0, "roundtrip-wf") != 0) return -1;
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
      cmocka_unit_test(sweep_one_key),
      cmocka_unit_test(sweep_one_key_composition),
      cmocka_unit_test(sweep_two_keys),
      cmocka_unit_test(sweep_shard),
      cmocka_unit_test(match_one_key_with_tolerance),
      cmocka_unit_test(match_two_keys),
      cmocka_unit_test(tolerance_json),
      cmocka_unit_test(tolerance_ladder_json),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
