/* test_repeat.c — repeat groups in a stack's layers (issue 14 §1; src/stack_repeat.c, the
 * copies in src/stack.c, keys of repeated layers in src/stack_edit.c).
 *
 * The reference for every expansion is the same stack typed out by hand, layer by layer,
 * with the copies' names written as the README says they are given (NAME#k): the reader must
 * give it the identical layers and the solver the identical levels, bit for bit, since the
 * copies are read from the same settings.  The physics check beside it: N coupled identical
 * wells give N levels per single-well level (a miniband of N states; Bastard, "Wave mechanics
 * applied to semiconductor heterostructures", 1988, ch. III, the tight-binding chain of N
 * sites), and they lie inside the Kronig–Penney band of the infinite superlattice (Kronig and
 * Penney, Proc. R. Soc. A 130, 499 (1931); BenDaniel–Duke matching, Bastard ch. III eq. for
 * cos(qd)).  Errors name the file:line of the written layer or group. */
#include <math.h>

#include "roundtrip.h"

#include "stack_repeat.h"
#include "workflow.h"

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

/* ---- the superlattice, written with a repeat group and typed out -------------------------- */
#define PERIODS 10
#define WELL_NM 3.0
#define BARRIER_NM 2.0

/* Lines: 1 temperature, 2 grid_step, 3 layers, 4 lower, 5 repeat, 6 its layers, 7 well,
 * 8 barrier, 9 ");", 10 "},", 11 upper, 12 ");". */
static void repeat_text(char *buf, size_t size, int periods, double well_nm) {
  snprintf(buf, size,
           "temperature = 77.0;\ngrid_step = 0.1;\nlayers = (\n"
           "  { name = \"lower\"; material = \"AlGaAs\"; x = 0.35; thickness = 10.0; },\n"
           "  { repeat = %d;\n    layers = (\n"
           "      { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
           "      { name = \"barrier\"; material = \"AlGaAs\"; x = 0.35; thickness = %.17g; }\n"
           "    );\n  },\n"
           "  { name = \"upper\"; material = \"AlGaAs\"; x = 0.35; thickness = 10.0; }\n);\n",
           periods, well_nm, BARRIER_NM);
}

/* The same stack typed out; well_nm[k] is the thickness of well#(k+1). */
static void typed_text(char *buf, size_t size, int periods, const double *well_nm) {
  int used = snprintf(buf, size, "temperature = 77.0;\ngrid_step = 0.1;\nlayers = (\n"
                      "  { name = \"lower\"; material = \"AlGaAs\"; x = 0.35; thickness = 10.0; },\n");
  for (int k = 0; k < periods; k++)
    used += snprintf(buf + used, size - (size_t)used,
                     "  { name = \"well#%d\"; material = \"GaAs\"; thickness = %.17g; },\n"
                     "  { name = \"barrier#%d\"; material = \"AlGaAs\"; x = 0.35; thickness = "
                     "%.17g; },\n", k + 1, well_nm[k], k + 1, BARRIER_NM);
  snprintf(buf + used, size - (size_t)used,
           "  { name = \"upper\"; material = \"AlGaAs\"; x = 0.35; thickness = 10.0; }\n);\n");
}

static ew_stack *read_ok(const char *text) {
  ew_stack *st = NULL;
  ew_error err;
  char buf[2048];
  if (ew_stack_read_string(text, "test", cat, &st, &err) != EW_OK)
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
  assert_non_null(st);
  return st;
}

/* Every layer the same: name, material, composition, thickness, position, resolved bands. */
static void same_layers(const ew_stack *a, const ew_stack *b) {
  assert_int_equal(ew_stack_layer_count(a), ew_stack_layer_count(b));
  for (size_t k = 0; k < a->n_layers; k++) {
    const ew_layer *p = &a->layers[k], *q = &b->layers[k];
    assert_string_equal(p->name, q->name);
    assert_string_equal(p->material, q->material);
    assert_true(p->x == q->x && p->thickness_nm == q->thickness_nm);
    assert_true(p->z_start_nm == q->z_start_nm);
    assert_memory_equal(&p->bands, &q->bands, sizeof p->bands);
  }
  assert_true(a->total_nm == b->total_nm);
}

/* Every state and line the same, bit for bit. */
static void same_levels(const ew_result *a, const ew_result *b) {
  assert_int_equal(ew_result_state_count(a), ew_result_state_count(b));
  assert_true(ew_result_state_count(a) > 0);
  for (size_t i = 0; i < ew_result_state_count(a); i++) {
    const ew_state *p = ew_result_state(a, i), *q = ew_result_state(b, i);
    assert_string_equal(p->label, q->label);
    assert_true(p->energy_eV == q->energy_eV);
    assert_true(p->error_eV == q->error_eV);
    assert_int_equal(p->layer, q->layer);
  }
  assert_int_equal(ew_result_line_count(a), ew_result_line_count(b));
  for (size_t j = 0; j < ew_result_line_count(a); j++) {
    const ew_line *p = ew_result_line(a, j), *q = ew_result_line(b, j);
    assert_true(p->energy_eV == q->energy_eV && p->oscillator_strength == q->oscillator_strength);
    assert_true(p->overlap == q->overlap && p->exciton_binding_eV == q->exciton_binding_eV);
  }
}

static void solve_both_same(const ew_stack *a, const ew_stack *b) {
  ew_result *ra = NULL, *rb = NULL;
  ew_error err;
  assert_int_equal(ew_solve(a, NULL, &ra, &err), EW_OK);
  assert_int_equal(ew_solve(b, NULL, &rb, &err), EW_OK);
  same_levels(ra, rb);
  ew_result_free(ra);
  ew_result_free(rb);
}

/* Reference: the hand-typed stack.  Identical layers and levels to the last digit. */
static void repeat_equals_typed(void **state) {
  (void)state;
  static char rt[4096], tt[16384];
  double w[PERIODS];
  for (int k = 0; k < PERIODS; k++) w[k] = WELL_NM;
  repeat_text(rt, sizeof rt, PERIODS, WELL_NM);
  typed_text(tt, sizeof tt, PERIODS, w);
  ew_stack *a = read_ok(rt), *b = read_ok(tt);
  same_layers(a, b);
  solve_both_same(a, b);
  ew_stack_free(a);
  ew_stack_free(b);
}

/* A 10-period stack through the public API: count, names, thicknesses, positions (typed
 * here from the design: 10 nm cladding, then 3 nm / 2 nm periods), the written line. */
static void ten_periods(void **state) {
  (void)state;
  static char rt[4096];
  repeat_text(rt, sizeof rt, PERIODS, WELL_NM);
  ew_stack *st = read_ok(rt);
  assert_int_equal(ew_stack_layer_count(st), 2 * PERIODS + 2);
  assert_string_equal(ew_stack_layer_name(st, 0), "lower");
  assert_string_equal(ew_stack_layer_name(st, 2 * PERIODS + 1), "upper");
  for (int k = 0; k < PERIODS; k++) {
    char wn[32], bn[32];
    snprintf(wn, sizeof wn, "well#%d", k + 1);
    snprintf(bn, sizeof bn, "barrier#%d", k + 1);
    size_t iw = (size_t)(1 + 2 * k), ib = iw + 1, idx = 99;
    ew_error err;
    assert_string_equal(ew_stack_layer_name(st, iw), wn);
    assert_string_equal(ew_stack_layer_name(st, ib), bn);
    assert_int_equal(ew_stack_layer_index(st, wn, &idx, &err), EW_OK);
    assert_int_equal(idx, iw);
    assert_true(ew_stack_layer_thickness_nm(st, iw) == 3.0);
    assert_true(ew_stack_layer_thickness_nm(st, ib) == 2.0);
    TU_NEAR(ew_stack_layer_start_nm(st, iw), 10.0 + 5.0 * k, 1e-12, "sum of thicknesses");
    assert_string_equal(ew_stack_layer_material(st, iw), "GaAs");
    TU_NEAR(ew_stack_layer_x(st, ib), 0.35, 0, "as written");
    assert_int_equal(st->layers[iw].line, 7); /* the written layer's line */
    assert_int_equal(st->layers[ib].line, 8);
    assert_int_equal(st->layers[iw].copy, (size_t)k + 1);
  }
  TU_NEAR(ew_stack_total_nm(st), 20.0 + 5.0 * PERIODS, 1e-12, "sum of thicknesses");
  size_t idx;
  ew_error err;
  assert_int_equal(ew_stack_layer_index(st, "well", &idx, &err), EW_ERR_INPUT); /* copies only */
  ew_stack_free(st);
}

/* Nested: the outer period is a spacer and three inner wells; copies counted in growth
 * order across the outer periods (README "Repeated layers"). */
static const char *nested_text =
    "temperature = 300.0;\ngrid_step = 0.1;\nlayers = (\n"
    "  { name = \"clad\"; material = \"AlGaAs\"; x = 0.3; thickness = 8.0; },\n"
    "  { repeat = 2;\n    layers = (\n"
    "      { name = \"spacer\"; material = \"AlGaAs\"; x = 0.3; thickness = 6.0; },\n"
    "      { repeat = 3; layers = (\n"
    "          { name = \"w\"; material = \"GaAs\"; thickness = 4.0; },\n"
    "          { name = \"b\"; material = \"AlGaAs\"; x = 0.3; thickness = 1.5; } ); }\n"
    "    );\n  },\n"
    "  { name = \"cap\"; material = \"AlGaAs\"; x = 0.3; thickness = 8.0; }\n);\n";

static void nested_groups(void **state) {
  (void)state;
  static const char *const names[] = {"clad", "spacer#1", "w#1", "b#1", "w#2", "b#2", "w#3",
                                      "b#3", "spacer#2", "w#4", "b#4", "w#5", "b#5", "w#6",
                                      "b#6", "cap"};
  static const int lines[] = {4, 7, 9, 10, 9, 10, 9, 10, 7, 9, 10, 9, 10, 9, 10, 13};
  ew_stack *st = read_ok(nested_text);
  size_t n = sizeof names / sizeof names[0];
  assert_int_equal(ew_stack_layer_count(st), n);
  char typed[8192];
  int used = snprintf(typed, sizeof typed, "temperature = 300.0;\ngrid_step = 0.1;\nlayers = (\n");
  for (size_t k = 0; k < n; k++) {
    assert_string_equal(ew_stack_layer_name(st, k), names[k]);
    assert_int_equal(st->layers[k].line, lines[k]);
    const char *mat = names[k][0] == 'w' ? "GaAs" : "AlGaAs";
    double t = names[k][0] == 'w' ? 4.0 : names[k][0] == 'b' ? 1.5 : names[k][0] == 's' ? 6.0 : 8.0;
    used += snprintf(typed + used, sizeof typed - (size_t)used,
                     "  { name = \"%s\"; material = \"%s\"; %s thickness = %g; }%s\n", names[k],
                     mat, names[k][0] == 'w' ? "" : "x = 0.3;", t, k + 1 < n ? "," : "");
  }
  snprintf(typed + used, sizeof typed - (size_t)used, ");\n");
  ew_stack *ref = read_ok(typed);
  same_layers(st, ref);
  solve_both_same(st, ref);
  ew_stack_free(ref);
  ew_stack_free(st);
}

/* ---- errors: file:line of the written layer or group ---------------------------------------- */
typedef struct {
  const char *what, *text, *needle;
  int line;
} bad_case;

static void refused(void **state) {
  (void)state;
  static const char head[] = "layers = (\n  { name = \"a\"; material = \"GaAs\"; thickness = 5.0; },\n";
  static const bad_case cases[] = {
      {"bad layer inside a group", "  { repeat = 3; layers = (\n    { name = \"w\"; material = "
       "\"GaAz\"; thickness = 3.0; } ); }\n);\n", "unknown material 'GaAz' in layer 'w'", 4},
      {"bad thickness inside a nested group", "  { repeat = 2; layers = (\n  { repeat = 2; "
       "layers = (\n    { name = \"w\"; material = \"GaAs\"; thickness = -3.0; } ); } ); }\n);\n",
       "thickness of layer 'w' must be positive", 5},
      {"repeat = 0", "  { repeat = 0; layers = ( { material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "repeat = 0 must be at least 1", 3},
      {"negative repeat", "  { repeat = -4; layers = ( { material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "repeat = -4 must be at least 1", 3},
      {"fractional repeat", "  { repeat = 2.5; layers = ( { material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "repeat = 2.5 must be a whole number", 3},
      {"huge repeat", "  { repeat = 1e9; layers = ( { material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "repeat = 1e+09 is above the limit of 100000 copies", 3},
      {"repeat wrapping in 32 bits", "  { repeat = 4294967298; layers = ( { material = \"GaAs\"; "
       "thickness = 3.0; } ); }\n);\n", "integer 'repeat' in a repeat group is too large", 3},
      {"repeat as a string", "  { repeat = \"3\"; layers = ( { material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "'repeat' in a repeat group must be a number, not a string", 3},
      {"no repeat", "  { layers = ( { material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "a repeat group needs 'repeat = N;'", 3},
      {"no layers", "  { repeat = 3; }\n);\n", "a repeat group needs its 'layers' list", 3},
      {"empty layers", "  { repeat = 3;\n    layers = ( ); }\n);\n", "'layers' in a repeat group is empty", 4},
      {"unknown key", "  { repeat = 3; name = \"p\"; layers = ( { material = \"GaAs\"; "
       "thickness = 3.0; } ); }\n);\n", "unknown key 'name' in a repeat group", 3},
      {"expansion beyond the limit", "  { repeat = 1000; layers = (\n    { repeat = 1000; layers = "
       "( { material = \"GaAs\"; thickness = 3.0; } ); } ); }\n);\n",
       "this repeat group brings the stack to more than 100000 layers", 3},
      {"nested five deep", "  { repeat = 2; layers = ( { repeat = 2; layers = ( { repeat = 2; "
       "layers = ( { repeat = 2; layers = (\n { repeat = 2; layers = ( { material = \"GaAs\"; "
       "thickness = 3.0; } ); } ); } ); } ); } ); }\n);\n", "repeat groups nest at most 4 deep", 4},
      {"a repeated name also given to a layer", "  { repeat = 2; layers = (\n    { name = \"a\"; "
       "material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "layer name 'a' is given to a repeated layer here and to the layer at line 2", 4},
      {"copies' names too long", "  { repeat = 2; layers = (\n    { name = "
       "\"abcdefghijklmnopqrstuvwxyzabcdefghijklmnopqrstuvwxyzabcdefghij\"; material = \"GaAs\"; "
       "thickness = 3.0; } ); }\n);\n", "is too long for the names of its copies", 4},
      {"two groups with the same layer name", "  { repeat = 2; layers = ( { name = \"w\"; "
       "material = \"GaAs\"; thickness = 3.0; } ); },\n  { repeat = 2; layers = ( { name = "
       "\"w\"; material = \"GaAs\"; thickness = 3.0; } ); }\n);\n",
       "duplicate layer name 'w#1' (first used at line 3); the copies of a repeated layer", 4},
      {"total thickness", "  { repeat = 3000; layers = ( { name = \"w\"; material = \"GaAs\"; "
       "thickness = 7.0; } ); }\n);\n", "total thickness reaches", 3},
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    char text[1024];
    snprintf(text, sizeof text, "%s%s", head, cases[i].text);
    ew_stack *st = NULL;
    ew_error err;
    memset(&err, 0, sizeof err);
    ew_status rc = ew_stack_read_string(text, "case.cfg", cat, &st, &err);
    int ok = rc == EW_ERR_INPUT && !st && err.line == cases[i].line &&
             !strcmp(err.file, "case.cfg") && strstr(err.message, cases[i].needle);
    if (!ok)
      print_error("%s: got status %d line %d \"%s\", want line %d containing \"%s\"\n",
                  cases[i].what, (int)rc, err.line, err.message, cases[i].line, cases[i].needle);
    assert_true(ok);
    ew_stack_free(st);
  }
}

/* ---- keys of repeated layers: sweeps and single stacks at key values -------------------------- */
static ew_wf_model *open_model(const char *text, char *dir, size_t dsize) {
  char path[600];
  assert_int_equal(tu_mkdtemp("repeat", dir, dsize), 0);
  snprintf(path, sizeof path, "%s/sl.cfg", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fputs(text, f);
  fclose(f);
  ew_wf_model *m = NULL;
  ew_error err;
  assert_int_equal(ew_wf_model_open(path, cat, NULL, &m, &err), EW_OK);
  return m;
}

/* well.thickness = v: every copy v, and the stack equals the typed one at v (layers and
 * levels); well#3.thickness = v: only the third well. */
static void key_sets_copies(void **state) {
  (void)state;
  static char rt[4096], tt[16384];
  char dir[512];
  repeat_text(rt, sizeof rt, PERIODS, WELL_NM);
  ew_wf_model *m = open_model(rt, dir, sizeof dir);
  ew_error err;
  double nominal = 0;
  assert_int_equal(ew_wf_key_check(m, "well.thickness", "--vary", &nominal, &err), EW_OK);
  assert_true(nominal == WELL_NM);
  assert_int_equal(ew_wf_key_check(m, "well#3.thickness", "--vary", &nominal, &err), EW_OK);
  assert_true(nominal == WELL_NM);
  assert_int_equal(ew_wf_key_check(m, "well.thicknes", "--vary", &nominal, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "did you mean 'thickness'"));

  const char *keys[2] = {"well.thickness", "well#3.thickness"};
  double v[2] = {3.4, 2.6}, w[PERIODS];
  for (int one = 0; one < 2; one++) {
    ew_stack *st = NULL;
    assert_int_equal(ew_wf_stack_at(m, 1, &keys[one], &v[one], &st, &err), EW_OK);
    for (int k = 0; k < PERIODS; k++) w[k] = one && k != 2 ? WELL_NM : v[one];
    typed_text(tt, sizeof tt, PERIODS, w);
    ew_stack *ref = read_ok(tt);
    same_layers(st, ref);
    solve_both_same(st, ref);
    ew_stack_free(ref);
    ew_stack_free(st);
  }
  /* both at once: every copy 3.4 but the third 2.6 (the one-copy key wins for its copy) */
  ew_stack *st = NULL;
  assert_int_equal(ew_wf_stack_at(m, 2, keys, v, &st, &err), EW_OK);
  for (int k = 0; k < PERIODS; k++)
    assert_true(st->layers[1 + 2 * k].thickness_nm == (k == 2 ? 2.6 : 3.4));
  ew_stack_free(st);
  /* one copy in monolayers (a key the file leaves out: thickness is taken out of the written
   * group while well#4 is read, thickness_ml put in); 20 ML of GaAs = 20 a/2, a = 0.565325 nm
   * (I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), from memory) */
  const char *ml = "well#4.thickness_ml";
  double n_ml = 20.0;
  assert_int_equal(ew_wf_key_check(m, ml, "--vary", &nominal, &err), EW_OK);
  assert_true(isnan(nominal));
  assert_int_equal(ew_wf_stack_at(m, 1, &ml, &n_ml, &st, &err), EW_OK);
  for (int k = 0; k < PERIODS; k++)
    TU_NEAR(st->layers[1 + 2 * k].thickness_nm, k == 3 ? 20 * 0.565325 / 2 : WELL_NM, 1e-9,
            "well#4 in monolayers, the other copies as written");
  ew_stack_free(st);
  /* the tree is put back after every build: the nominal stack again */
  assert_int_equal(ew_wf_stack_at(m, 0, NULL, NULL, &st, &err), EW_OK);
  same_layers(st, ew_wf_model_stack(m));
  ew_stack_free(st);
  /* an error inside one copy names the written line and the key */
  const char *bad = "well#2.thickness";
  double neg = -1.0;
  assert_int_equal(ew_wf_stack_at(m, 1, &bad, &neg, &st, &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 7);
  assert_non_null(strstr(err.message, "with well#2.thickness = -1"));
  ew_wf_model_free(m);
  tu_rm_tree(dir);
}

/* Nested groups: a key of one copy (w#5, in the second outer period) and of every copy (b),
 * against the thicknesses the design gives each layer (typed here). */
static void nested_keys(void **state) {
  (void)state;
  char dir[512];
  ew_wf_model *m = open_model(nested_text, dir, sizeof dir);
  const char *keys[3] = {"w#5.thickness", "b.thickness", "spacer#2.thickness"};
  double v[3] = {3.25, 2.0, 7.5};
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_wf_stack_at(m, 3, keys, v, &st, &err), EW_OK);
  static const double want[] = {8.0, 6.0, 4.0, 2.0, 4.0, 2.0, 4.0, 2.0, 7.5, 4.0, 2.0, 3.25, 2.0,
                                4.0, 2.0, 8.0};
  assert_int_equal(st->n_layers, sizeof want / sizeof want[0]);
  for (size_t k = 0; k < st->n_layers; k++) assert_true(st->layers[k].thickness_nm == want[k]);
  ew_stack_free(st);
  ew_wf_model_free(m);
  tu_rm_tree(dir);
}

/* The sweep's CSV over well.thickness of the repeated layer, read back: every level column
 * equals the typed stack's level at that value (printed %.10g). */
static void sweep_of_repeated_layer(void **state) {
  (void)state;
  static char rt[4096], tt[16384];
  char dir[512], csv[700];
  repeat_text(rt, sizeof rt, PERIODS, WELL_NM);
  ew_wf_model *m = open_model(rt, dir, sizeof dir);
  ew_wf_range r;
  ew_error err;
  assert_int_equal(ew_wf_range_parse("well.thickness=2.5:3.5:0.5", 1, "--vary", &r, &err), EW_OK);
  snprintf(csv, sizeof csv, "%s/sweep.csv", dir);
  FILE *f = fopen(csv, "w");
  assert_non_null(f);
  assert_int_equal(ew_wf_sweep(m, &r, 1, NULL, f, NULL, &err), EW_OK);
  fclose(f);
  rcsv c;
  assert_int_equal(rcsv_read(csv, &c), 0);
  assert_int_equal(c.nrows, 3);
  int kc = rcsv_col(&c, "well.thickness");
  assert_true(kc >= 0);
  for (size_t row = 0; row < 3; row++) {
    double t = rcsv_num(&c, row, kc), w[PERIODS];
    TU_NEAR(t, 2.5 + 0.5 * (double)row, 1e-12, "the range");
    for (int k = 0; k < PERIODS; k++) w[k] = t;
    typed_text(tt, sizeof tt, PERIODS, w);
    ew_stack *ref = read_ok(tt);
    ew_result *res = NULL;
    assert_int_equal(ew_solve(ref, NULL, &res, &err), EW_OK);
    size_t checked = 0;
    for (size_t i = 0; i < ew_result_state_count(res); i++) {
      const ew_state *s = ew_result_state(res, i);
      char col[32];
      snprintf(col, sizeof col, "%s_eV", s->label);
      int cc = rcsv_col(&c, col);
      if (cc < 0) continue; /* the sweep keeps the lowest levels of each band */
      double got = rcsv_num(&c, row, cc);
      TU_NEAR(got, s->energy_eV, rt_tol_sig(s->energy_eV, 10), "printed %.10g");
      checked++;
    }
    assert_true(checked >= 2 * PERIODS); /* the ten e levels of the miniband and more */
    ew_result_free(res);
    ew_stack_free(ref);
  }
  rcsv_free(&c);
  ew_wf_model_free(m);
  tu_rm_tree(dir);
}

/* ---- physics: the miniband --------------------------------------------------------------- */
/* Kronig–Penney with BenDaniel–Duke matching (Bastard 1988, ch. III): for E below the barrier
 * cos(qd) = cos(ka) cosh(κb) − ½(ξ − 1/ξ) sin(ka) sinh(κb),  ξ = (k/m_w)/(κ/m_b),
 * k = √(2 m_w E)/ħ, κ = √(2 m_b (V − E))/ħ, energies from the well's edge. */
static double kp_rhs(double E, double V, double mw, double mb, double a, double b) {
  const double hb2_2m0 = 0.0380998212; /* ħ²/2m0 in eV nm² (CODATA 2018; constants.h) */
  double k = sqrt(mw * E / hb2_2m0), kap = sqrt(mb * (V - E) / hb2_2m0);
  double xi = (k / mw) / (kap / mb);
  return cos(k * a) * cosh(kap * b) - 0.5 * (xi - 1 / xi) * sin(k * a) * sinh(kap * b);
}

/* With user materials (constant masses, parabolic) the ten e levels of a 10-well
 * superlattice form the lowest Kronig–Penney band (|rhs| <= 1), and the chain of N wells
 * has its states at q_j = jπ/((N+1)d), j = 1 … N (tight binding, Bastard ch. III), so
 * rhs(E_j) = cos(jπ/(N+1)).  Tolerance 0.02 in cos(qd): the end wells, between a thin and a
 * thick barrier, and the couplings beyond the next well are outside the chain model (measured
 * deviation 0.006 at j = 5 on a 0.02 nm grid, whose own error is below 1e-5 eV). */
static void miniband_in_kronig_penney_band(void **state) {
  (void)state;
  char text[2048];
  snprintf(text, sizeof text,
           "temperature = 300.0;\ngrid_step = 0.02;\nnonparabolic = false;\n"
           "materials = ( { name = \"W\"; Ec = 0.0; Ev = -1.5; me = 0.067; mhh = 0.5; mlh = 0.08; },\n"
           "  { name = \"B\"; Ec = 0.25; Ev = -1.6; me = 0.09; mhh = 0.5; mlh = 0.09; } );\n"
           "layers = (\n  { name = \"lo\"; material = \"B\"; thickness = 15.0; },\n"
           "  { repeat = %d; layers = ( { name = \"w\"; material = \"W\"; thickness = 4.0; },\n"
           "    { name = \"b\"; material = \"B\"; thickness = 1.5; } ); },\n"
           "  { name = \"w_end\"; material = \"W\"; thickness = 4.0; },\n"
           "  { name = \"hi\"; material = \"B\"; thickness = 15.0; }\n);\n", PERIODS - 1);
  ew_stack *st = NULL;
  ew_result *res = tu_solve_text(cat, text, &st, NULL);
  assert_non_null(res);
  int n_e = 0;
  for (size_t i = 0; i < ew_result_state_count(res) && n_e < PERIODS; i++) {
    const ew_state *s = ew_result_state(res, i);
    if (s->band != EW_BAND_E) continue;
    n_e++;
    assert_true(s->energy_eV < 0.25);
    double rhs = kp_rhs(s->energy_eV, 0.25, 0.067, 0.09, 4.0, 1.5);
    TU_NEAR(rhs, cos(n_e * M_PI / (PERIODS + 1)), 0.02, "chain of N wells, see above");
  }
  assert_int_equal(n_e, PERIODS); /* ten wells: a lowest miniband of ten levels */
  ew_result_free(res);
  ew_stack_free(st);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(repeat_equals_typed),
      cmocka_unit_test(ten_periods),
      cmocka_unit_test(nested_groups),
      cmocka_unit_test(refused),
      cmocka_unit_test(key_sets_copies),
      cmocka_unit_test(nested_keys),
      cmocka_unit_test(sweep_of_repeated_layer),
      cmocka_unit_test(miniband_in_kronig_penney_band),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
