/* test_public_api.c — the library as a script sees it: only epiwell.h (no internal header).
 * The examples/ stacks are solved through the public API, and what the API returns is compared
 * with values obtained independently of it:
 *   - layer names, materials, compositions and thicknesses with the example file's own text,
 *     scanned here line by line (not by the library's reader);
 *   - the JSON writer's text, parsed back by the small RFC 8259 reader below, field by field
 *     with the library's accessors (ew_result_state, ew_result_line, …);
 *   - a sweep point and a match solution with a separate solve of the stack written out with
 *     that value, and the match target with hc/λ (CODATA 2018 hc = 1239.841984 eV nm);
 *   - the spectra CSV's row count and first energy with the grid rule of `epiwell --help`
 *     (2001 points from 20 meV below the lowest PL peak).
 * Every public entry point given NULL must return an error status or its "no value". */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cmocka.h>

#include "epiwell.h"

#define COUNT(a) (sizeof(a) / sizeof *(a))
static const char *const EXAMPLES[] = {"examples/detector_well.cfg", "examples/doped_detector.cfg",
                                       "examples/double_well.cfg", "examples/emitter_well.cfg",
                                       "examples/inp_detector.cfg"};

/* ---- a minimal JSON reader (RFC 8259 values; strings without \u escapes suffice here) ---- */
typedef enum { J_NULL, J_BOOL, J_NUM, J_STR, J_ARR, J_OBJ } jtype;
typedef struct jval {
  jtype t;
  double num;
  int b;
  char *str;
  size_t n;          /* array / object members */
  struct jval *item; /* [n] */
  char **key;        /* [n] for objects */
} jval;

static void jfree(jval *v) {
  for (size_t i = 0; i < v->n; i++) {
    jfree(&v->item[i]);
    if (v->key) free(v->key[i]);
  }
  free(v->item);
  free(v->key);
  free(v->str);
}

static void jskip(const char **p) {
  while (**p == ' ' || **p == '\n' || **p == '\t' || **p == '\r')
    ++*p;
}

static int jparse(const char **p, jval *v);

static char *jstring(const char **p) {
  if (**p != '"') return NULL;
  const char *s = ++*p;
  size_t cap = 16, len = 0;
  char *out = malloc(cap);
  while (*s && *s != '"') {
    char c = *s++;
    if (c == '\\') {
      c = *s++;
      c = c == 'n' ? '\n' : c == 't' ? '\t' : c == 'r' ? '\r' : c;
    }
    if (len + 2 > cap) out = realloc(out, cap *= 2);
    out[len++] = c;
  }
  out[len] = '\0';
  *p = *s ? s + 1 : s;
  return out;
}

static int jmembers(const char **p, jval *v, char close) {
  ++*p;
  jskip(p);
  while (**p && **p != close) {
    v->item = realloc(v->item, (v->n + 1) * sizeof *v->item);
    if (v->t == J_OBJ) {
      v->key = realloc(v->key, (v->n + 1) * sizeof *v->key);
      v->key[v->n] = jstring(p);
      jskip(p);
      if (!v->key[v->n] || *(*p)++ != ':') return -1;
    }
    memset(&v->item[v->n], 0, sizeof *v->item);
    if (jparse(p, &v->item[v->n++])) return -1;
    jskip(p);
    if (**p == ',') ++*p;
    jskip(p);
  }
  if (**p != close) return -1;
  ++*p;
  return 0;
}

static int jparse(const char **p, jval *v) {
  jskip(p);
  memset(v, 0, sizeof *v);
  if (**p == '{') return v->t = J_OBJ, jmembers(p, v, '}');
  if (**p == '[') return v->t = J_ARR, jmembers(p, v, ']');
  if (**p == '"') return v->t = J_STR, (v->str = jstring(p)) ? 0 : -1;
  if (!strncmp(*p, "null", 4)) return *p += 4, v->t = J_NULL, 0;
  if (!strncmp(*p, "true", 4)) return *p += 4, v->t = J_BOOL, v->b = 1, 0;
  if (!strncmp(*p, "false", 5)) return *p += 5, v->t = J_BOOL, v->b = 0, 0;
  char *end;
  v->t = J_NUM;
  v->num = strtod(*p, &end);
  if (end == *p) return -1;
  *p = end;
  return 0;
}

/* Member key of object o (fails the test when missing). */
static const jval *jget(const jval *o, const char *key) {
  assert_int_equal(o->t, J_OBJ);
  for (size_t i = 0; i < o->n; i++)
    if (!strcmp(o->key[i], key)) return &o->item[i];
  print_error("JSON member '%s' missing\n", key);
  fail();
  return NULL;
}
static double jnum(const jval *o, const char *key) {
  const jval *v = jget(o, key);
  if (v->t == J_NULL) return NAN;
  assert_int_equal(v->t, J_NUM);
  return v->num;
}
static const char *jstr(const jval *o, const char *key) {
  const jval *v = jget(o, key);
  assert_int_equal(v->t, J_STR);
  return v->str;
}

/* The writer prints 10 significant digits (%.10g): equal to that. */
#define NEAR10(got, want) assert_true(fabs((got) - (want)) <= 1e-9 * fabs(want) + 1e-300)

/* ---- fixtures ---------------------------------------------------------------------------- */
static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  ew_error err;
  if (ew_catalogue_load("materials", &cat, &err) != EW_OK) {
    char buf[2048];
    print_error("catalogue: %s\n", ew_error_text(&err, buf, sizeof buf));
    return -1;
  }
  return 0;
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

static char *slurp(const char *path) {
  FILE *f = fopen(path, "r");
  assert_non_null(f);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  int c;
  while ((c = fgetc(f)) != EOF)
    fputc(c, m);
  fclose(f);
  fclose(m);
  return buf;
}

static ew_result *solve_file(const char *path, ew_stack **st) {
  ew_error err;
  char buf[2048];
  ew_options opt;
  ew_options_default(&opt);
  if (ew_stack_read_file(path, cat, st, &err) != EW_OK) {
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
    fail();
  }
  ew_result *res = NULL;
  if (ew_solve(*st, &opt, &res, &err) != EW_OK) {
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
    fail();
  }
  return res;
}

/* ---- layers as the file writes them ---------------------------------------------------- */
/* Value of `key = VALUE;` on one line of a stack file (strings without quotes); 0 if absent. */
static int line_value(const char *line, const char *key, char *out, size_t size) {
  char pat[64];
  snprintf(pat, sizeof pat, " %s = ", key);
  const char *p = strstr(line, pat);
  if (!p) return 0;
  p += strlen(pat);
  if (*p == '"') p++;
  size_t n = strcspn(p, "\";");
  if (n >= size) n = size - 1;
  memcpy(out, p, n);
  out[n] = '\0';
  return 1;
}

static void layers_match_file(void **state) {
  (void)state;
  for (size_t e = 0; e < COUNT(EXAMPLES); e++) {
    ew_stack *st = NULL;
    ew_error err;
    assert_int_equal(ew_stack_read_file(EXAMPLES[e], cat, &st, &err), EW_OK);
    char *text = slurp(EXAMPLES[e]);
    size_t i = 0;
    double z = 0;
    /* the layer entries: lines with a name, a material and a thickness */
    for (char *line = strtok(text, "\n"); line; line = strtok(NULL, "\n")) {
      char name[64], mat[64], th[32], x[32];
      if (!line_value(line, "name", name, sizeof name) ||
          !line_value(line, "material", mat, sizeof mat) ||
          !line_value(line, "thickness", th, sizeof th))
        continue;
      assert_true(i < ew_stack_layer_count(st));
      assert_string_equal(ew_stack_layer_name(st, i), name);
      assert_string_equal(ew_stack_layer_material(st, i), mat);
      assert_true(ew_stack_layer_thickness_nm(st, i) == strtod(th, NULL));
      assert_true(fabs(ew_stack_layer_start_nm(st, i) - z) < 1e-12);
      z += strtod(th, NULL);
      if (line_value(line, "x", x, sizeof x))
        assert_true(ew_stack_layer_x(st, i) == strtod(x, NULL));
      else
        assert_true(isnan(ew_stack_layer_x(st, i)));
      size_t idx = SIZE_MAX;
      assert_int_equal(ew_stack_layer_index(st, name, &idx, &err), EW_OK);
      assert_int_equal(idx, i);
      i++;
    }
    assert_int_equal(i, ew_stack_layer_count(st));
    assert_true(fabs(ew_stack_total_nm(st) - z) < 1e-12);
    assert_null(ew_stack_layer_name(st, i));
    assert_true(isnan(ew_stack_layer_thickness_nm(st, i)));
    size_t idx;
    assert_int_equal(ew_stack_layer_index(st, "no_such_layer", &idx, &err), EW_ERR_INPUT);
    free(text);
    ew_stack_free(st);
  }
}

/* ---- JSON read back, field by field ---------------------------------------------------- */
static void json_layers(const jval *doc, const ew_stack *st) {
  const jval *ly = jget(doc, "layers");
  assert_int_equal(ly->n, ew_stack_layer_count(st));
  for (size_t i = 0; i < ly->n; i++) {
    assert_string_equal(jstr(&ly->item[i], "name"), ew_stack_layer_name(st, i));
    assert_string_equal(jstr(&ly->item[i], "material"), ew_stack_layer_material(st, i));
    NEAR10(jnum(&ly->item[i], "thickness_nm"), ew_stack_layer_thickness_nm(st, i));
    NEAR10(jnum(&ly->item[i], "z_start_nm"), ew_stack_layer_start_nm(st, i));
  }
}

static void json_states(const jval *doc, const ew_result *res, const ew_stack *st) {
  const jval *s = jget(doc, "states");
  assert_int_equal(s->n, ew_result_state_count(res));
  for (size_t i = 0; i < s->n; i++) {
    const ew_state *w = ew_result_state(res, i);
    const jval *o = &s->item[i];
    assert_string_equal(jstr(o, "label"), w->label);
    assert_string_equal(jstr(o, "band"), ew_band_name(w->band));
    assert_int_equal((int)jnum(o, "n"), w->n);
    NEAR10(jnum(o, "energy_eV"), w->energy_eV);
    NEAR10(jnum(o, "edge_eV"), w->edge_eV);
    NEAR10(jnum(o, "depth_eV"), w->depth_eV);
    NEAR10(jnum(o, "layer_probability"), w->layer_probability);
    NEAR10(jnum(o, "inplane_mass_m0"), w->inplane_mass);
    assert_string_equal(jstr(o, "layer"), ew_stack_layer_name(st, w->layer));
    assert_int_equal(jget(o, "flagged")->b, w->flagged);
  }
}

static void json_lines(const jval *doc, const ew_result *res) {
  const jval *t = jget(doc, "transitions");
  assert_int_equal(t->n, ew_result_line_count(res));
  for (size_t i = 0; i < t->n; i++) {
    const ew_line *l = ew_result_line(res, i);
    const jval *o = &t->item[i];
    assert_string_equal(jstr(o, "kind"),
                        l->kind == EW_LINE_INTERBAND ? "interband" : "intersubband");
    assert_string_equal(jstr(o, "upper"), ew_result_state(res, l->upper)->label);
    assert_string_equal(jstr(o, "lower"), ew_result_state(res, l->lower)->label);
    NEAR10(jnum(o, "energy_eV"), l->energy_eV);
    if (l->kind == EW_LINE_INTERBAND) {
      NEAR10(jnum(o, "wavelength_nm"), l->wavelength_nm);
      NEAR10(jnum(o, "overlap"), l->overlap);
      NEAR10(jnum(o, "te_strength"), l->te_strength);
      NEAR10(jnum(o, "tm_strength"), l->tm_strength);
    } else {
      NEAR10(jnum(o, "wavelength_um"), l->wavelength_nm / 1000.0);
      NEAR10(jnum(o, "dipole_nm"), l->dipole_nm);
      NEAR10(jnum(o, "oscillator_strength"), l->oscillator_strength);
    }
  }
}

static void json_matches_accessors(void **state) {
  (void)state;
  for (size_t e = 0; e < COUNT(EXAMPLES); e++) {
    ew_stack *st = NULL;
    ew_result *res = solve_file(EXAMPLES[e], &st);
    char *buf = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&buf, &len);
    ew_error err;
    assert_int_equal(ew_result_write_json(res, m, &err), EW_OK);
    fclose(m);
    const char *p = buf;
    jval doc;
    assert_int_equal(jparse(&p, &doc), 0);
    jskip(&p);
    assert_int_equal(*p, '\0'); /* one object, nothing after it */
    NEAR10(jnum(&doc, "temperature_K"), ew_stack_temperature_K(st));
    NEAR10(jnum(&doc, "grid_step_nm"), ew_result_grid_step_nm(res));
    assert_int_equal((size_t)jnum(&doc, "nodes"), ew_result_node_count(res));
    assert_int_equal(jget(&doc, "warnings")->n, ew_result_warning_count(res));
    for (int b = 0; b < EW_BAND_COUNT; b++) {
      const jval *band = jget(jget(&doc, "bands"), ew_band_name((ew_band)b));
      assert_int_equal((size_t)jnum(band, "count"), ew_result_band_count(res, (ew_band)b));
      NEAR10(jnum(band, "window_eV"), ew_result_window_eV(res, (ew_band)b));
    }
    json_layers(&doc, st);
    json_states(&doc, res, st);
    json_lines(&doc, res);
    jfree(&doc);
    free(buf);
    ew_result_free(res);
    ew_stack_free(st);
  }
}

/* The table names every layer and every level with its energy in meV... at least its label. */
static void table_names_layers_and_levels(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *res = solve_file(EXAMPLES[2], &st);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_result_write_table(res, m, NULL), EW_OK);
  fclose(m);
  for (size_t i = 0; i < ew_stack_layer_count(st); i++)
    assert_non_null(strstr(buf, ew_stack_layer_name(st, i)));
  for (size_t i = 0; i < ew_result_state_count(res); i++)
    assert_non_null(strstr(buf, ew_result_state(res, i)->label));
  free(buf);
  ew_result_free(res);
  ew_stack_free(st);
}

/* The band diagram (SVG to a memory stream) labels every layer and every level with its
 * energy to 0.1 meV (U+2212 for the minus sign, as the picture writes it). */
static void band_diagram_svg_labels_levels(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *res = solve_file(EXAMPLES[0], &st);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_result_write_band_diagram_svg(res, m, NULL), EW_OK);
  fclose(m);
  assert_memory_equal(buf, "<svg", 4);
  for (size_t i = 0; i < ew_stack_layer_count(st); i++)
    assert_non_null(strstr(buf, ew_stack_layer_name(st, i)));
  for (size_t i = 0; i < ew_result_state_count(res); i++) {
    double E = ew_result_state(res, i)->energy_eV;
    char label[64];
    snprintf(label, sizeof label, ">%s%.4f eV<", E < 0 ? "\xe2\x88\x92" : "", fabs(E));
    if (!strstr(buf, label)) {
      print_error("level %s: no label %s in the band diagram\n", ew_result_state(res, i)->label,
                  label);
      fail();
    }
  }
  free(buf);
  ew_result_free(res);
  ew_stack_free(st);
}

/* ---- spectra: the grid rule of the usage text ------------------------------------------ */
static void spectra_csv_grid(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *res = solve_file(EXAMPLES[0], &st); /* no sheet_density: interband only */
  ew_spectra *sp = NULL;
  ew_error err;
  assert_int_equal(ew_spectra_compute(res, EW_WF_DEFAULT_ANGLE_DEG, EW_WF_DEFAULT_INDEX, &sp, &err),
                   EW_OK);
  assert_string_equal(ew_spectra_note(sp, 0), "");
  assert_non_null(strstr(ew_spectra_note(sp, 1), "sheet_density"));
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_spectra_write_csv(sp, m, &err), EW_OK);
  fclose(m);
  assert_memory_equal(buf, "E_eV,interband_rel,intersubband_fraction,"
                           "intersubband_continuum_fraction\n", 73);
  size_t rows = 0;
  for (const char *p = buf; *p; p++)
    rows += *p == '\n';
  assert_int_equal(rows - 1, 2001);
  double lowest_pl = INFINITY;
  for (size_t i = 0; i < ew_result_line_count(res); i++) {
    const ew_line *l = ew_result_line(res, i);
    if (l->kind == EW_LINE_INTERBAND && l->pl_peak_eV < lowest_pl) lowest_pl = l->pl_peak_eV;
  }
  double first = strtod(buf + 73, NULL);
  assert_true(fabs(first - (lowest_pl - 0.020)) < 1e-6);
  ew_spectra_free(sp);
  free(buf);
  ew_result_free(res);
  ew_stack_free(st);
}

/* ---- sweep and match against separate solves ------------------------------------------- */
/* examples/detector_well.cfg with the well's thickness set to w_nm. */
static ew_result *solve_detector_at(double w_nm, ew_stack **st) {
  char text[1024];
  snprintf(
      text, sizeof text,
      "temperature = 77.0;\nlayers = (\n"
      "  { name = \"lower_barrier\"; material = \"AlGaAs\"; x = 0.28; thickness = 30.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
      "  { name = \"upper_barrier\"; material = \"AlGaAs\"; x = 0.28; thickness = 30.0; }\n);\n",
      w_nm);
  ew_error err;
  assert_int_equal(ew_stack_read_string(text, "detector_at", cat, st, &err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  ew_result *res = NULL;
  assert_int_equal(ew_solve(*st, &opt, &res, &err), EW_OK);
  return res;
}

static double level_eV(const ew_result *res, const char *label) {
  for (size_t i = 0; i < ew_result_state_count(res); i++)
    if (!strcmp(ew_result_state(res, i)->label, label)) return ew_result_state(res, i)->energy_eV;
  return NAN;
}

static void sweep_point_is_a_solve(void **state) {
  (void)state;
  ew_sweep *sw = NULL;
  ew_error err;
  assert_int_equal(ew_sweep_create(&sw, &err), EW_OK);
  assert_int_equal(ew_sweep_vary(sw, "well.thickness=5:6:1", &err), EW_OK);
  assert_int_equal(ew_sweep_open(sw, EXAMPLES[0], cat, NULL, &err), EW_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_sweep_compute(sw, NULL, m, NULL, &err), EW_OK);
  fclose(m);
  assert_memory_equal(buf, "well.thickness,e1_eV,", 21);
  const char *row = strchr(buf, '\n') + 1;
  row = strchr(row, '\n') + 1; /* the second point: 6 nm */
  char *end;
  assert_true(strtod(row, &end) == 6.0);
  double e1 = strtod(end + 1, NULL);
  ew_stack *st = NULL;
  ew_result *res = solve_detector_at(6.0, &st);
  assert_true(fabs(e1 - level_eV(res, "e1")) <= 1e-9 * fabs(e1)); /* the CSV's %.10g */
  ew_result_free(res);
  ew_stack_free(st);
  free(buf);
  ew_sweep_free(sw);
}

static void match_solution_hits_target(void **state) {
  (void)state;
  ew_match *mt = NULL;
  ew_error err;
  assert_int_equal(ew_match_create(&mt, &err), EW_OK);
  assert_int_equal(ew_match_vary(mt, "well.thickness=3:12", &err), EW_OK);
  assert_int_equal(ew_match_line(mt, "e1-e2", &err), EW_OK);
  assert_int_equal(ew_match_target(mt, "9.0um", &err), EW_OK);
  assert_int_equal(ew_match_compute(mt, EXAMPLES[0], cat, NULL, 0, 0, &err), EW_OK);
  assert_int_equal(ew_match_solution_count(mt), 1);
  assert_string_equal(ew_match_message(mt), "");
  double w = ew_match_solution_value(mt, 0, 0);
  assert_true(w > 3 && w < 12);
  assert_true(isnan(ew_match_solution_value(mt, 1, 0)));
  ew_stack *st = NULL;
  ew_result *res = solve_detector_at(w, &st);
  double target_eV = 1239.841984 / 9000.0; /* hc/λ, CODATA 2018 */
  /* Brent stops at 1e-6 relative in w; dE/dw is ~0.03 eV/nm here, so ~2e-7 eV */
  assert_true(fabs(level_eV(res, "e2") - level_eV(res, "e1") - target_eV) < 2e-6);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_match_write_json(mt, m, &err), EW_OK);
  fclose(m);
  const char *p = buf;
  jval doc;
  assert_int_equal(jparse(&p, &doc), 0);
  const jval *sol = jget(&doc, "solutions");
  assert_int_equal(sol->n, 1);
  NEAR10(jnum(&sol->item[0], "value"), w);
  jfree(&doc);
  free(buf);
  ew_result_free(res);
  ew_stack_free(st);
  ew_match_free(mt);
}

/* The ladder of the well: widths nominal ± whole GaAs monolayers (a/2, a = 0.565325 nm at
 * 300 K, Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), Table I; from memory), and its
 * e1-e2 energies those of separate solves at those widths. */
static void ladder_json_is_separate_solves(void **state) {
  (void)state;
  ew_tolerance *t = NULL;
  ew_error err;
  assert_int_equal(ew_tolerance_compute(EXAMPLES[0], cat, NULL, 0, "well", 1, &t, &err), EW_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_tolerance_write_json(t, m, &err), EW_OK);
  fclose(m);
  const char *p = buf;
  jval doc;
  assert_int_equal(jparse(&p, &doc), 0);
  assert_string_equal(jstr(&doc, "layer"), "well");
  const jval *th = jget(&doc, "thickness_nm"), *lines = jget(&doc, "lines");
  assert_int_equal(th->n, 5);
  const jval *e12 = NULL;
  for (size_t i = 0; i < lines->n; i++)
    if (!strcmp(jstr(&lines->item[i], "name"), "e1-e2")) e12 = jget(&lines->item[i], "energy_eV");
  assert_non_null(e12);
  for (int k = 0; k < 5; k++) {
    double w = 6.2 + (k - 2) * 0.565325 / 2;
    assert_true(fabs(th->item[k].num - w) < 1e-9);
    if (k == 1 || k == 2) { /* two widths suffice: the solve is the same code for all five */
      ew_stack *st = NULL;
      ew_result *res = solve_detector_at(th->item[k].num, &st);
      NEAR10(e12->item[k].num, level_eV(res, "e2") - level_eV(res, "e1"));
      ew_result_free(res);
      ew_stack_free(st);
    }
  }
  jfree(&doc);
  free(buf);
  ew_tolerance_free(t);
}

/* ---- an output file appears whole or not at all ---------------------------------------- */
static size_t dir_entries(const char *dir) {
  char cmd[600];
  snprintf(cmd, sizeof cmd, "ls -A '%s' | wc -l", dir);
  FILE *p = popen(cmd, "r");
  size_t n = 0;
  assert_int_equal(fscanf(p, "%zu", &n), 1);
  pclose(p);
  return n;
}

static void output_file_commit_and_abort(void **state) {
  (void)state;
  char dir[] = "/tmp/epiwell-api-XXXXXX", path[600];
  assert_non_null(mkdtemp(dir));
  snprintf(path, sizeof path, "%s/out.csv", dir);
  ew_output_file *f = NULL;
  ew_error err;
  assert_int_equal(ew_output_file_open(path, &f, &err), EW_OK);
  fputs("a,b\n1,2\n", ew_output_file_stream(f));
  assert_int_equal(access(path, F_OK), -1); /* not there before the commit */
  assert_int_equal(ew_output_file_commit(f, &err), EW_OK);
  char *text = slurp(path);
  assert_string_equal(text, "a,b\n1,2\n");
  free(text);
  assert_int_equal(ew_output_file_open(path, &f, &err), EW_OK);
  fputs("new", ew_output_file_stream(f));
  ew_output_file_abort(f);
  text = slurp(path);
  assert_string_equal(text, "a,b\n1,2\n"); /* previous content kept */
  free(text);
  assert_int_equal(dir_entries(dir), 1); /* and no temporary left */
  snprintf(path, sizeof path, "%s/no/such/dir/x.csv", dir);
  assert_int_equal(ew_output_file_open(path, &f, &err), EW_ERR_IO);
  assert_null(f);
  snprintf(path, sizeof path, "rm -rf '%s'", dir);
  assert_int_equal(system(path), 0);
}

/* ---- materials -------------------------------------------------------------------------- */
static void materials_queries(void **state) {
  (void)state;
  size_t n = ew_catalogue_material_count(cat);
  assert_true(n > 0);
  int seen_gaas = 0;
  for (size_t i = 0; i < n; i++)
    seen_gaas |= !strcmp(ew_catalogue_material_name(cat, i), "GaAs");
  assert_true(seen_gaas);
  assert_null(ew_catalogue_material_name(cat, n));
  assert_int_equal(ew_material_is_alloy(cat, "GaAs"), 0);
  assert_int_equal(ew_material_is_alloy(cat, "AlGaAs"), 1);
  assert_int_equal(ew_material_is_alloy(cat, "NoSuch"), -1);
  double a = 0;
  ew_error err;
  assert_int_equal(ew_material_lattice_nm(cat, "GaAs", 0, 0, &a, &err), EW_OK);
  /* GaAs a = 0.565325 nm at 300 K (Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), Table I;
   * from memory) */
  assert_true(fabs(a - 0.565325) < 1e-5);
  double x = NAN, y = NAN;
  assert_int_equal(ew_material_lattice_match(cat, "InGaAs", "InP", 0, NAN, 300, &x, &y, &err),
                   EW_OK);
  /* In0.53Ga0.47As is the InP-matched composition (common practice) */
  assert_true(fabs(x - 0.53) < 0.01);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_catalogue_write(cat, m, &err), EW_OK);
  fclose(m);
  assert_non_null(strstr(buf, "AlGaAs"));
  free(buf);
}

/* ---- NULL arguments ---------------------------------------------------------------------- */
static void null_arguments_are_errors(void **state) {
  (void)state;
  ew_error err;
  FILE *m = tmpfile();
  double d;
  size_t z;
  assert_int_equal(ew_result_write_table(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_result_write_json(NULL, m, NULL), EW_ERR_USAGE);
  assert_int_equal(ew_result_write_csv_dir(NULL, "/tmp", 0, &err), EW_ERR_USAGE);
  assert_int_equal(ew_result_write_band_diagram(NULL, "x.svg", &err), EW_ERR_USAGE);
  assert_int_equal(ew_result_write_band_diagram_svg(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_result_write_report(NULL, cat, "/tmp", &err), EW_ERR_USAGE);
  assert_int_equal(ew_output_dir_check(NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_plot_path_check(NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_data_path_check(NULL, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_plot_companion_name(NULL, "", NULL, NULL, 0, &err), EW_ERR_USAGE);
  assert_int_equal(ew_plot_format(NULL), 0);
  assert_int_equal(ew_catalogue_material_count(NULL), 0);
  assert_null(ew_catalogue_material_name(NULL, 0));
  assert_int_equal(ew_material_is_alloy(NULL, "GaAs"), -1);
  assert_int_equal(ew_material_is_alloy(cat, NULL), -1);
  assert_int_equal(ew_material_lattice_nm(cat, NULL, 0, 0, &d, &err), EW_ERR_USAGE);
  assert_int_equal(ew_material_lattice_nm(cat, "GaAs", 0, 0, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_material_lattice_match(NULL, "InGaAs", "InP", 0, NAN, 300, &d, &d, &err),
                   EW_ERR_USAGE);
  assert_int_equal(ew_material_write(cat, "GaAs", 0, 0, 300, 0, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_catalogue_write(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_stack_layer_count(NULL), 0);
  assert_null(ew_stack_layer_name(NULL, 0));
  assert_null(ew_stack_layer_material(NULL, 0));
  assert_true(isnan(ew_stack_layer_thickness_nm(NULL, 0)));
  assert_true(isnan(ew_stack_layer_start_nm(NULL, 0)));
  assert_true(isnan(ew_stack_layer_x(NULL, 0)) && isnan(ew_stack_layer_y(NULL, 0)));
  assert_true(isnan(ew_stack_temperature_K(NULL)) && isnan(ew_stack_total_nm(NULL)));
  assert_int_equal(ew_stack_layer_index(NULL, "well", &z, &err), EW_ERR_USAGE);
  ew_output_file *of = (ew_output_file *)&of;
  assert_int_equal(ew_output_file_open(NULL, &of, &err), EW_ERR_USAGE);
  assert_null(of);
  assert_null(ew_output_file_stream(NULL));
  assert_int_equal(ew_output_file_commit(NULL, &err), EW_ERR_USAGE);
  ew_output_file_abort(NULL);
  ew_spectra *sp = (ew_spectra *)&sp;
  assert_int_equal(ew_spectra_compute(NULL, 45, 3.3, &sp, &err), EW_ERR_USAGE);
  assert_null(sp);
  assert_null(ew_spectra_note(NULL, 0));
  assert_int_equal(ew_spectra_write_csv(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_spectra_write_peaks(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_spectra_stage_files(NULL, "a.csv", NULL, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_spectra_commit_files(NULL, 1, &err), EW_ERR_USAGE);
  ew_spectra_free(NULL);
  ew_sweep *sw = NULL;
  assert_int_equal(ew_sweep_create(NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_vary(NULL, "well.thickness=4:5:1", &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_open(NULL, EXAMPLES[0], cat, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_compute(NULL, NULL, m, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_stage_plots(NULL, "a.svg", NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_commit_plots(NULL, 1, &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_key_count(NULL), 0);
  assert_null(ew_sweep_plot_suffix(EW_SWEEP_PLOT_FILES));
  assert_int_equal(ew_sweep_create(&sw, &err), EW_OK);
  assert_int_equal(ew_sweep_vary(sw, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_sweep_compute(sw, NULL, m, NULL, &err), EW_ERR_USAGE); /* not opened */
  assert_int_equal(ew_sweep_open(sw, EXAMPLES[0], NULL, NULL, &err), EW_ERR_USAGE);
  ew_sweep_free(sw);
  ew_sweep_free(NULL);
  ew_match *mt = NULL;
  assert_int_equal(ew_match_create(NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_vary(NULL, "well.thickness=3:12", &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_line(NULL, "e1-e2", &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_target(NULL, "9um", &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_tolerance(NULL, "0eV", &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_compute(NULL, EXAMPLES[0], cat, NULL, 0, 0, &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_solution_count(NULL), 0);
  assert_true(isnan(ew_match_solution_value(NULL, 0, 0)));
  assert_null(ew_match_message(NULL));
  assert_int_equal(ew_match_write_table(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_write_json(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_create(&mt, &err), EW_OK);
  assert_int_equal(ew_match_line(mt, NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_match_write_json(mt, m, &err), EW_ERR_USAGE); /* nothing computed */
  assert_int_equal(ew_match_compute(mt, EXAMPLES[0], cat, NULL, 0, 0, &err), EW_ERR_USAGE);
  ew_match_free(mt);
  ew_match_free(NULL);
  ew_tolerance *t = (ew_tolerance *)&t;
  assert_int_equal(ew_tolerance_compute(NULL, cat, NULL, 0.01, NULL, 1, &t, &err), EW_ERR_USAGE);
  assert_null(t);
  assert_int_equal(ew_tolerance_compute(EXAMPLES[0], cat, NULL, 0.01, NULL, 1, NULL, &err),
                   EW_ERR_USAGE);
  assert_int_equal(ew_tolerance_write_table(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_tolerance_write_json(NULL, m, &err), EW_ERR_USAGE);
  assert_int_equal(ew_tolerance_compute(EXAMPLES[0], cat, NULL, 0, NULL, 1, &t, &err),
                   EW_ERR_USAGE);
  assert_null(t);
  ew_tolerance_free(NULL);
  fclose(m);
}

/* The first section of epiwell.h (catalogue, stack, solve, result): NULL where not allowed is
 * EW_ERR_USAGE, an accessor's NULL (or an out-of-range band) its documented "no value"
 * (0, NAN, NULL); ew_options_default(NULL) and ew_result_free(NULL) do nothing.  A crash
 * here fails the test program. */
static void null_core_arguments(void **state) {
  (void)state;
  ew_error err;
  ew_options opt;
  ew_options_default(&opt);
  ew_options_default(NULL);
  ew_stack *st = NULL;
  ew_result *r = (ew_result *)&r; /* must come back NULL */
  /* the readers answer with their own error codes (catalogue, input): any error will do */
  assert_int_not_equal(ew_catalogue_load("materials", NULL, &err), EW_OK);
  assert_int_not_equal(ew_stack_read_file(NULL, cat, &st, &err), EW_OK);
  assert_int_not_equal(ew_stack_read_file(EXAMPLES[0], NULL, &st, &err), EW_OK);
  assert_int_not_equal(ew_stack_read_string(NULL, "x", cat, &st, &err), EW_OK);
  assert_int_not_equal(ew_stack_read_string("x", "x", cat, NULL, &err), EW_OK);
  assert_int_equal(ew_solve(NULL, &opt, &r, &err), EW_ERR_USAGE);
  assert_null(r);
  assert_int_equal(ew_solve(NULL, &opt, &r, NULL), EW_ERR_USAGE);
  assert_int_equal(ew_stack_read_file(EXAMPLES[0], cat, &st, &err), EW_OK);
  assert_int_equal(ew_solve(st, &opt, NULL, &err), EW_ERR_USAGE);
  /* NULL options are the defaults: the same e1 as with ew_options_default */
  ew_result *a = NULL, *b = NULL;
  assert_int_equal(ew_solve(st, NULL, &a, &err), EW_OK);
  assert_int_equal(ew_solve(st, &opt, &b, &err), EW_OK);
  assert_true(ew_result_state(a, 0)->energy_eV == ew_result_state(b, 0)->energy_eV);
  assert_true(ew_result_band_count(a, (ew_band)EW_BAND_COUNT) == 0);
  assert_null(ew_result_edge_eV(a, (ew_band)-1));
  assert_null(ew_result_mass(a, (ew_band)EW_BAND_COUNT));
  assert_true(isnan(ew_result_window_eV(a, (ew_band)-1)));
  ew_result_free(a);
  ew_result_free(b);
  ew_stack_free(st);
  assert_int_equal(ew_result_state_count(NULL), 0);
  assert_null(ew_result_state(NULL, 0));
  assert_null(ew_result_wavefunction(NULL, 0));
  assert_int_equal(ew_result_line_count(NULL), 0);
  assert_null(ew_result_line(NULL, 0));
  assert_int_equal(ew_result_node_count(NULL), 0);
  assert_null(ew_result_z_nm(NULL));
  assert_null(ew_result_edge_eV(NULL, EW_BAND_E));
  assert_null(ew_result_mass(NULL, EW_BAND_E));
  assert_true(isnan(ew_result_grid_step_nm(NULL)));
  assert_int_equal(ew_result_band_count(NULL, EW_BAND_E), 0);
  assert_true(isnan(ew_result_window_eV(NULL, EW_BAND_E)));
  assert_int_equal(ew_result_warning_count(NULL), 0);
  assert_null(ew_result_model(NULL));
  assert_null(ew_result_warning(NULL, 0));
  assert_null(ew_result_warning_code(NULL, 0));
  assert_true(isnan(ew_result_fermi_energy_eV(NULL)));
  assert_true(isnan(ew_result_fermi_energy_last_eV(NULL)));
  assert_int_equal(ew_result_sp_iterations(NULL), 0);
  assert_true(isnan(ew_result_sp_residual_eV(NULL)));
  assert_true(isnan(ew_result_state_sheet_density_cm2(NULL, 0)));
  assert_true(isnan(ew_result_line_depolarization_eV(NULL, 0)));
  assert_null(ew_result_sp_profile(NULL, EW_SP_POTENTIAL_EV));
  ew_result_free(NULL);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(layers_match_file),
      cmocka_unit_test(json_matches_accessors),
      cmocka_unit_test(table_names_layers_and_levels),
      cmocka_unit_test(band_diagram_svg_labels_levels),
      cmocka_unit_test(spectra_csv_grid),
      cmocka_unit_test(sweep_point_is_a_solve),
      cmocka_unit_test(match_solution_hits_target),
      cmocka_unit_test(ladder_json_is_separate_solves),
      cmocka_unit_test(output_file_commit_and_abort),
      cmocka_unit_test(materials_queries),
      cmocka_unit_test(null_arguments_are_errors),
      cmocka_unit_test(null_core_arguments),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
