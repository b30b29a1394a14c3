/* test_workflow.c — the workflow modules (src/workflow.h lists them): stack editing, ranges,
 * sweeps, inverse matching, tolerances, sweep pictures and spectra.
 *
 * Runs from the project root: the catalogue is materials/, the stacks are the examples
 * (examples/NAME.cfg) and small stacks written to temporary files.  Every numeric check names
 * its reference and its tolerance beside it. */
#include <math.h>
#include <unistd.h>

#include "testutil.h"

#include "constants.h"
#include "observables.h"
#include "poisson.h"
#include "self_consistent.h"
#include "solve.h"
#include "spectra.h"
#include "workflow.h"

static const char *const DETECTOR = "examples/detector_well.cfg";

typedef struct {
  ew_catalogue *cat;
  ew_wf_model *det; /* examples/detector_well.cfg with default options */
} fixture;

static int group_setup(void **state) {
  static fixture fx;
  ew_error err = {0};
  if (ew_catalogue_load("materials", &fx.cat, &err) != EW_OK) {
    fprintf(stderr, "catalogue: %s\n", err.message);
    return -1;
  }
  if (ew_wf_model_open(DETECTOR, fx.cat, NULL, &fx.det, &err) != EW_OK) {
    fprintf(stderr, "%s: %s\n", DETECTOR, err.message);
    return -1;
  }
  *state = &fx;
  return 0;
}

static int group_teardown(void **state) {
  fixture *fx = *state;
  ew_wf_model_free(fx->det);
  ew_catalogue_free(fx->cat);
  return 0;
}

/* ---- helpers ------------------------------------------------------------------------- */
typedef struct {
  char *buf;
  size_t len;
  FILE *f;
} mem;

static FILE *mem_open(mem *m) {
  m->buf = NULL;
  m->len = 0;
  m->f = open_memstream(&m->buf, &m->len);
  return m->f;
}

static char *mem_close(mem *m) {
  fclose(m->f);
  return m->buf;
}

/* Run a sweep into a string (CSV); NULL on failure (err filled). */
static char *sweep_csv(const ew_wf_model *md, const ew_wf_range *r, size_t nr,
                       const ew_wf_sweep_opt *o, ew_error *err) {
  mem m;
  mem_open(&m);
  ew_status rc = ew_wf_sweep(md, r, nr, o, m.f, NULL, err);
  char *s = mem_close(&m);
  if (rc != EW_OK) {
    free(s);
    return NULL;
  }
  return s;
}

static ew_wf_range range(const char *spec) {
  ew_wf_range r;
  ew_error err = {0};
  if (ew_wf_range_parse(spec, 1, "--vary", &r, &err) != EW_OK) {
    print_error("range %s: %s\n", spec, err.message);
    fail();
  }
  return r;
}

/* The CSV as a table of cells (values NaN when empty). */
typedef struct {
  size_t rows, cols;
  char names[128][64];
  double *v;
} table;

static int parse_csv(const char *s, table *t) {
  memset(t, 0, sizeof *t);
  const char *p = s;
  const char *eol = strchr(p, '\n');
  if (!eol) return 0;
  for (const char *q = p; q <= eol && t->cols < 128;) {
    const char *e = q;
    while (e < eol && *e != ',') e++;
    snprintf(t->names[t->cols++], 64, "%.*s", (int)(e - q), q);
    q = e + 1;
  }
  size_t cap = 0;
  for (const char *q = eol + 1; *q; q++) cap += *q == '\n';
  t->v = malloc((cap ? cap : 1) * t->cols * sizeof *t->v);
  for (p = eol + 1; *p; p = eol + 1) {
    eol = strchr(p, '\n');
    if (!eol) break;
    const char *q = p;
    for (size_t c = 0; c < t->cols; c++) {
      const char *e = q;
      while (e < eol && *e != ',') e++;
      t->v[t->rows * t->cols + c] = e > q ? strtod(q, NULL) : NAN;
      q = e + 1;
    }
    t->rows++;
  }
  return 1;
}

static long col(const table *t, const char *name) {
  for (size_t c = 0; c < t->cols; c++)
    if (!strcmp(t->names[c], name)) return (long)c;
  return -1;
}

static double cellv(const table *t, size_t row, long c) { return t->v[row * t->cols + (size_t)c]; }

/* A temporary copy of a stack text on disk (the model reads files). */
static void write_tmp(char *path, size_t size, const char *text) {
  snprintf(path, size, "/tmp/ew_test_workflow_XXXXXX");
  int fd = mkstemp(path);
  assert_true(fd >= 0);
  size_t n = strlen(text);
  assert_int_equal((size_t)write(fd, text, n), n);
  close(fd);
}

/* Energy of a line when key = value, by a plain solve (the reference path of the matcher). */
static double line_at(const ew_wf_model *m, const char *key, double v, const char *line) {
  ew_stack *st = NULL;
  ew_result *res = NULL;
  ew_error err = {0};
  assert_int_equal(ew_wf_stack_at(m, 1, &key, &v, &st, &err), EW_OK);
  assert_int_equal(ew_solve(st, NULL, &res, &err), EW_OK);
  double E;
  assert_int_equal(ew_wf_line_energy(res, line, &E, &err), EW_OK);
  ew_result_free(res);
  ew_stack_free(st);
  return E;
}

/* ---- ranges and quantities ----------------------------------------------------------- */
static void ranges_include_both_ends(void **state) {
  (void)state;
  ew_wf_range r = range("well.thickness=4:12:0.1");
  /* (12 − 4)/0.1 = 79.99999999999999 in floating point: the end must still be included */
  assert_int_equal(ew_wf_range_count(&r), 81);
  TU_NEAR(ew_wf_range_value(&r, 80), 12.0, 0.0, "last value is TO exactly (contract)");
  TU_NEAR(ew_wf_range_value(&r, 30), 7.0, 1e-12, "4 + 30 × 0.1, computed not accumulated");
  r = range("well.x=12:4:0.25");
  assert_int_equal(ew_wf_range_count(&r), 33);
  TU_NEAR(ew_wf_range_value(&r, 1), 11.75, 0.0, "downward range: 12 − 0.25 (exact in binary)");
  r = range("t=0:1:0.3");
  assert_int_equal(ew_wf_range_count(&r), 4); /* 0, 0.3, 0.6, 0.9: TO is not on the grid */
  ew_wf_range bad;
  ew_error err = {0};
  assert_int_equal(ew_wf_range_parse("well.thickness=4:12", 1, "--vary", &bad, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--vary"));
  assert_int_equal(ew_wf_range_parse("well.thickness=4:12:-1", 1, "--vary", &bad, &err), EW_ERR_USAGE);
  assert_int_equal(ew_wf_range_parse("well.thickness=3:12", 0, "--vary", &bad, &err), EW_OK);
}

static void quantities_parse_units(void **state) {
  (void)state;
  ew_wf_quantity q;
  ew_error err = {0};
  assert_int_equal(ew_wf_quantity_parse("9.0um", 0, "--target", &q, &err), EW_OK);
  assert_true(q.is_wavelength);
  TU_NEAR(q.nm, 9000.0, 1e-9, "9 µm = 9000 nm");
  TU_NEAR(q.eV, EW_HC_EVNM / 9000.0, 1e-15, "E = hc/λ, hc = 1239.84198 eV nm (CODATA 2018)");
  assert_int_equal(ew_wf_quantity_parse("9 \xc2\xb5m", 0, "--target", &q, &err), EW_OK);
  TU_NEAR(q.nm, 9000.0, 1e-9, "micro sign U+00B5 accepted");
  assert_int_equal(ew_wf_quantity_parse("154meV", 0, "--target", &q, &err), EW_OK);
  TU_NEAR(q.eV, 0.154, 1e-15, "154 meV = 0.154 eV");
  assert_int_equal(ew_wf_quantity_parse("800nm", 0, "--target", &q, &err), EW_OK);
  TU_NEAR(q.eV, EW_HC_EVNM / 800.0, 1e-15, "E = hc/λ");
  assert_int_equal(ew_wf_quantity_parse("9.0", 0, "--target", &q, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--target"));
  assert_int_equal(ew_wf_quantity_parse("9parsec", 0, "--target", &q, &err), EW_ERR_USAGE);
  assert_int_equal(ew_wf_quantity_parse("0eV", 0, "--target", &q, &err), EW_ERR_USAGE);
  assert_int_equal(ew_wf_quantity_parse("0eV", 1, "--tolerance", &q, &err), EW_OK);
}

static void keys_are_checked(void **state) {
  fixture *fx = *state;
  double nominal;
  ew_error err = {0};
  assert_int_equal(ew_wf_key_check(fx->det, "well.thickness", "--vary", &nominal, &err), EW_OK);
  TU_NEAR(nominal, 6.2, 0.0, "examples/detector_well.cfg: thickness = 6.2");
  assert_int_equal(ew_wf_key_check(fx->det, "temperature", "--vary", &nominal, &err), EW_OK);
  TU_NEAR(nominal, 77.0, 0.0, "examples/detector_well.cfg: temperature = 77.0");
  assert_int_equal(ew_wf_key_check(fx->det, "wel.thickness", "--vary", &nominal, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--vary"));
  assert_non_null(strstr(err.message, "upper_barrier")); /* lists the layers */
  assert_int_equal(ew_wf_key_check(fx->det, "well.material", "--vary", &nominal, &err), EW_ERR_USAGE);
  /* an unknown key is refused by the stack reader itself, with its suggestion, naming the
   * value and, for a setting the file does not have, the line of its layer (line 6 of
   * examples/detector_well.cfg is the well's entry) */
  const char *k = "well.thicknes";
  double v = 5.0;
  ew_stack *st = NULL;
  assert_int_equal(ew_wf_stack_at(fx->det, 1, &k, &v, &st, &err), EW_ERR_INPUT);
  assert_null(st);
  assert_string_equal(err.file, DETECTOR);
  assert_int_equal(err.line, 6);
  assert_non_null(strstr(err.message, "well.thicknes = 5"));
  assert_non_null(strstr(err.message, "thickness"));
}

/* A key the file leaves out (the field of examples/detector_well.cfg, and the thickness in
 * monolayers of a well written in nm) is reserved when checked and present only in the builds
 * that set it: a build without it reads the file as written (the reader's defaults: no field;
 * the thickness in nm), before and after builds that set it.  The field read back against the
 * value set; 20 ML of GaAs = 20 a/2, a = 0.565325 nm (I. Vurgaftman et al., J. Appl. Phys. 89,
 * 5815 (2001), from memory). */
static void absent_keys_only_in_their_builds(void **state) {
  fixture *fx = *state;
  double nominal;
  ew_error err = {0};
  assert_int_equal(ew_wf_key_check(fx->det, "field", "--vary", &nominal, &err), EW_OK);
  assert_true(isnan(nominal));
  assert_int_equal(ew_wf_key_check(fx->det, "well.thickness_ml", "--vary", &nominal, &err), EW_OK);
  assert_true(isnan(nominal));
  const char *kf = "field", *kt = "well.thickness_ml", *kw = "well.thickness";
  double vf = 25.0, vt = 20.0, vw = 6.2;
  for (int round = 0; round < 2; round++) {
    ew_stack *st = NULL;
    assert_int_equal(ew_wf_stack_at(fx->det, 1, &kf, &vf, &st, &err), EW_OK);
    TU_NEAR(st->field_kV_cm, 25.0, 0.0, "field set");
    TU_NEAR(st->layers[1].thickness_nm, 6.2, 0.0, "examples/detector_well.cfg: 6.2 nm");
    ew_stack_free(st);
    assert_int_equal(ew_wf_stack_at(fx->det, 1, &kt, &vt, &st, &err), EW_OK);
    TU_NEAR(st->layers[1].thickness_nm, 20 * 0.565325 / 2, 1e-9, "20 ML of GaAs");
    TU_NEAR(st->field_kV_cm, 0.0, 0.0, "no field: the file has none");
    ew_stack_free(st);
    assert_int_equal(ew_wf_stack_at(fx->det, 1, &kw, &vw, &st, &err), EW_OK);
    TU_NEAR(st->field_kV_cm, 0.0, 0.0, "no field: the file has none");
    TU_NEAR(st->layers[1].thickness_nm, 6.2, 0.0, "thickness in nm as written");
    ew_stack_free(st);
  }
}

/* Keys inside a layer's groups and the two thickness forms: NAME.grade.KEY and
 * NAME.doping.KEY reach the nested settings, and varying thickness_ml of a layer written in
 * nm (or the reverse) replaces the other form.  Checked against the stack read back: the
 * graded layer's end composition and the monolayer thickness (23 ML of GaAs = 23 a/2 with
 * a = 0.565325 nm: I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), from memory). */
static void nested_keys_and_thickness_forms(void **state) {
  fixture *fx = *state;
  char path[64];
  write_tmp(path, sizeof path,
            "temperature = 77.0;\nlayers = (\n"
            " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
            " { name = \"ramp\"; material = \"AlGaAs\"; thickness = 5.0;\n"
            "   grade = { profile = \"linear\"; x_start = 0.3; x_end = 0.1; }; },\n"
            " { name = \"w\"; material = \"GaAs\"; thickness = 6.0; doping = { donors = 1e18; }; },\n"
            " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; } );\n");
  ew_wf_model *m = NULL;
  ew_error err = {0};
  assert_int_equal(ew_wf_model_open(path, fx->cat, NULL, &m, &err), EW_OK);
  double nominal;
  assert_int_equal(ew_wf_key_check(m, "ramp.grade.x_end", "--vary", &nominal, &err), EW_OK);
  TU_NEAR(nominal, 0.1, 0.0, "the stack text: x_end = 0.1");
  assert_int_equal(ew_wf_key_check(m, "w.doping.donors", "--vary", &nominal, &err), EW_OK);
  TU_NEAR(nominal, 1e18, 0.0, "the stack text: donors = 1e18");
  assert_int_equal(ew_wf_key_check(m, "ramp.grad.x_end", "--vary", &nominal, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "no group 'grad'"));
  const char *keys[2] = {"ramp.grade.x_end", "w.thickness_ml"};
  double v[2] = {0.0, 23.0};
  ew_stack *st = NULL;
  assert_int_equal(ew_wf_stack_at(m, 2, keys, v, &st, &err), EW_OK);
  TU_NEAR(st->layers[1].x_end, 0.0, 0.0, "x_end replaced");
  TU_NEAR(st->layers[2].thickness_nm, 23 * 0.565325 / 2, 1e-9, "23 ML of GaAs");
  ew_stack_free(st);
  unlink(path);
  ew_wf_model_free(m);
}

/* A stack error at a swept value names the file and the line of the setting that was set,
 * and the value: the lines are those of the text written here (the well's thickness, an
 * integer literal, on line 5; the barrier b2's thickness_ml on line 6).  Points run 2, 1, 0, …:
 * the first one the reader refuses (a thickness must be > 0) is 0. */
static void sweep_error_names_the_setting_line(void **state) {
  fixture *fx = *state;
  char path[64];
  write_tmp(path, sizeof path,
            "temperature = 77.0;\n"
            "layers = (\n"
            " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
            " { name = \"well\"; material = \"GaAs\";\n   thickness = 6; },\n"
            " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness_ml = 36; } );\n");
  ew_wf_model *m = NULL;
  ew_error err = {0};
  assert_int_equal(ew_wf_model_open(path, fx->cat, NULL, &m, &err), EW_OK);
  ew_wf_range r = range("well.thickness=2:-2:1");
  char *csv = sweep_csv(m, &r, 1, NULL, &err);
  assert_null(csv);
  assert_int_equal(err.code, EW_ERR_INPUT);
  assert_string_equal(err.file, path);
  assert_int_equal(err.line, 5);
  assert_non_null(strstr(err.message, "well.thickness = 0"));
  assert_non_null(strstr(err.message, "positive"));
  /* thickness replaces thickness_ml and reports its line */
  r = range("b2.thickness=1:-1:1");
  memset(&err, 0, sizeof err);
  assert_null(sweep_csv(m, &r, 1, NULL, &err));
  assert_int_equal(err.code, EW_ERR_INPUT);
  assert_int_equal(err.line, 6);
  assert_non_null(strstr(err.message, "b2.thickness = 0"));
  /* one editor, many builds: each build puts the tree back as parsed (a failed one too), so
   * a key set before does not linger into the next point */
  ew_stack_editor *ed = NULL;
  char text[1024];
  FILE *f = fopen(path, "r");
  assert_non_null(f);
  text[fread(text, 1, sizeof text - 1, f)] = '\0';
  fclose(f);
  assert_int_equal(ew_stack_editor_open(text, ew_wf_model_stack(m), fx->cat, &ed, &err), EW_OK);
  const char *kt[2] = {"b2.thickness", "well.thickness"}, *kx = "b1.x";
  double vt[2] = {0.0, 7.5}, vx = 0.25;
  ew_stack *st = NULL;
  assert_int_equal(ew_stack_editor_build(ed, 1, kt, vt, &st, &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 6);
  assert_int_equal(ew_stack_editor_build(ed, 1, kt + 1, vt + 1, &st, &err), EW_OK);
  TU_NEAR(st->layers[1].thickness_nm, 7.5, 0.0, "well set");
  ew_stack_free(st);
  assert_int_equal(ew_stack_editor_build(ed, 1, &kx, &vx, &st, &err), EW_OK);
  TU_NEAR(st->layers[0].x, 0.25, 0.0, "b1.x set");
  TU_NEAR(st->layers[1].thickness_nm, 6.0, 0.0, "well back to the file's 6");
  TU_NEAR(st->layers[2].thickness_ml, 36.0, 0.0, "b2 back to the file's 36 ML");
  ew_stack_free(st);
  /* and the restored integer setting keeps its line */
  vt[1] = -1.0;
  assert_int_equal(ew_stack_editor_build(ed, 1, kt + 1, vt + 1, &st, &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 5);
  ew_stack_editor_free(ed);
  unlink(path);
  ew_wf_model_free(m);
}

/* ---- sweeps ---------------------------------------------------------------------------- */
static void sweep_monotonic_and_identity(void **state) {
  fixture *fx = *state;
  ew_wf_range r = range("well.thickness=3:12:0.5");
  ew_error err = {0};
  char *csv = sweep_csv(fx->det, &r, 1, NULL, &err);
  if (!csv) print_error("%s\n", err.message);
  assert_non_null(csv);
  table t;
  assert_true(parse_csv(csv, &t));
  assert_int_equal(t.rows, 19);
  long ce1 = col(&t, "e1_eV"), ce2 = col(&t, "e2_eV"), chh1 = col(&t, "hh1_eV");
  assert_true(ce1 > 0 && ce2 > 0 && chh1 > 0);
  assert_true(col(&t, "e1-e2_um") > 0 && col(&t, "e1-hh1_nm") > 0 && col(&t, "e1-hh1_overlap") > 0);
  int seen_e2 = 0;
  for (size_t i = 0; i < t.rows; i++) {
    /* e1 always bound in a finite well (any 1D well binds one state) */
    assert_true(isfinite(cellv(&t, i, ce1)));
    if (i > 0) {
      /* widening a well lowers every level (variational argument: the wider well's trial
       * space contains the narrower one's; e.g. G. Bastard, Wave Mechanics Applied to
       * Semiconductor Heterostructures (1988), ch. III): strictly, tolerance 0 */
      assert_true(cellv(&t, i, ce1) < cellv(&t, i - 1, ce1));
      assert_true(cellv(&t, i, chh1) > cellv(&t, i - 1, chh1)); /* holes: towards the edge */
    }
    /* identity by order: e1 below e2 wherever both are bound (non-degenerate 1D spectrum) */
    if (isfinite(cellv(&t, i, ce2))) {
      seen_e2 = 1;
      assert_true(cellv(&t, i, ce1) < cellv(&t, i, ce2));
    } else {
      assert_false(seen_e2); /* once bound, e2 stays bound as the well widens */
    }
  }
  assert_true(seen_e2);
  assert_false(isfinite(cellv(&t, 0, ce2))); /* 3 nm: e2 not bound: the column's first rows empty */
  /* the sweep row at the nominal width equals a plain solve of the file (same path, printed
   * to 10 significant digits: tolerance 1e-9 relative) */
  ew_stack *st = NULL;
  ew_result *res = NULL;
  assert_int_equal(ew_stack_read_file(DETECTOR, fx->cat, &st, &err), EW_OK);
  assert_int_equal(ew_solve(st, NULL, &res, &err), EW_OK);
  ew_wf_range one = range("well.thickness=6.2:6.2:1");
  char *csv1 = sweep_csv(fx->det, &one, 1, NULL, &err);
  assert_non_null(csv1);
  table t1;
  assert_true(parse_csv(csv1, &t1));
  assert_int_equal(t1.rows, 1);
  for (size_t i = 0; i < ew_result_state_count(res); i++) {
    char nm[40];
    snprintf(nm, sizeof nm, "%s_eV", ew_result_state(res, i)->label);
    long c = col(&t1, nm);
    assert_true(c > 0);
    double want = ew_result_state(res, i)->energy_eV;
    TU_NEAR(cellv(&t1, 0, c), want, 1e-9 * fabs(want), "plain ew_solve of the same file");
  }
  ew_result_free(res);
  ew_stack_free(st);
  free(t.v);
  free(t1.v);
  free(csv);
  free(csv1);
}

static void shards_concatenate_to_the_full_sweep(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_range grid[2] = {range("well.thickness=4:7:0.5"), range("upper_barrier.x=0.2:0.35:0.05")};
  for (size_t nr = 1; nr <= 2; nr++) {
    char *full = sweep_csv(fx->det, grid, nr, NULL, &err);
    assert_non_null(full);
    for (size_t N = 2; N <= 5; N += 3) { /* 7 or 28 points: uneven parts */
      mem m;
      mem_open(&m);
      for (size_t K = 1; K <= N; K++) {
        ew_wf_sweep_opt o;
        ew_wf_sweep_opt_default(&o);
        o.shard_k = K;
        o.shard_n = N;
        assert_int_equal(ew_wf_sweep(fx->det, grid, nr, &o, m.f, NULL, &err), EW_OK);
      }
      char *cat = mem_close(&m);
      /* contract: the parts' CSVs concatenate byte for byte to the full sweep's */
      assert_string_equal(cat, full);
      free(cat);
    }
    free(full);
  }
}

static void thread_count_does_not_change_output(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_range grid[2] = {range("well.thickness=4:8:1"), range("temperature=10:300:145")};
  ew_wf_sweep_opt o1, o2;
  ew_wf_sweep_opt_default(&o1);
  ew_wf_sweep_opt_default(&o2);
  o1.threads = 1;
  o2.threads = 2;
  char *a = sweep_csv(fx->det, grid, 2, &o1, &err);
  char *b = sweep_csv(fx->det, grid, 2, &o2, &err);
  assert_non_null(a);
  assert_non_null(b);
  assert_string_equal(a, b); /* each point computed alone, rows written in order */
  free(a);
  free(b);
}

static void sweep_levels_floor(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  /* --levels N raises the column set to N levels per band, whatever the end points bind */
  ew_wf_range r = range("well.thickness=3:3.5:0.5");
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.min_levels = 4;
  char *csv = sweep_csv(fx->det, &r, 1, &o, &err);
  assert_non_null(csv);
  table t;
  assert_true(parse_csv(csv, &t));
  assert_true(col(&t, "e4_eV") > 0 && col(&t, "lh4_eV") > 0); /* --levels 4: 4 per band */
  assert_false(isfinite(cellv(&t, 0, col(&t, "e4_eV"))));     /* not bound: empty */
  free(t.v);
  free(csv);
}

/* ---- sweep rows against separate solves ------------------------------------------------ */
/* The value a sweep cell NAME must hold for the plain solve res, from the public accessors
 * (README "Sweeps": LEVEL_eV; LINE_eV, LINE_um|nm, LINE_f|overlap; LINE_depol_eV the line
 * plus its depolarisation shift); NaN where the level or the line is not bound. */
static double cell_of_solve(const ew_result *res, const char *name) {
  char base[64];
  snprintf(base, sizeof base, "%s", name);
  char *us = strrchr(base, '_');
  assert_non_null(us);
  *us = '\0';
  const char *suf = us + 1;
  int depol = 0;
  if (!strcmp(suf, "eV") && strlen(base) > 6 && !strcmp(base + strlen(base) - 6, "_depol")) {
    base[strlen(base) - 6] = '\0';
    depol = 1;
  }
  char *dash = strchr(base, '-');
  size_t idx[2] = {SIZE_MAX, SIZE_MAX};
  const char *lab[2] = {base, dash ? dash + 1 : NULL};
  if (dash) *dash = '\0';
  for (int k = 0; k < (dash ? 2 : 1); k++)
    for (size_t i = 0; i < ew_result_state_count(res); i++)
      if (!strcmp(ew_result_state(res, i)->label, lab[k])) idx[k] = i;
  if (!dash) return idx[0] == SIZE_MAX ? NAN : ew_result_state(res, idx[0])->energy_eV;
  for (size_t j = 0; j < ew_result_line_count(res) && idx[0] != SIZE_MAX && idx[1] != SIZE_MAX;
       j++) {
    const ew_line *l = ew_result_line(res, j);
    if (!((l->upper == idx[0] && l->lower == idx[1]) || (l->upper == idx[1] && l->lower == idx[0])))
      continue;
    int ib = l->kind == EW_LINE_INTERBAND;
    if (depol) {
      double d = ew_result_line_depolarization_eV(res, j);
      return l->energy_eV + (isfinite(d) ? d : 0.0);
    }
    if (!strcmp(suf, "eV")) return l->energy_eV;
    if (!strcmp(suf, "um") || !strcmp(suf, "nm")) return l->wavelength_nm / (ib ? 1.0 : 1e3);
    return ib ? l->overlap : l->oscillator_strength;
  }
  return NAN;
}

/* Row i of t against the result res: every cell to the 10 significant digits printed (1e-9
 * relative), widened by tol_eV in the energy columns (…_eV) and tol_rel relative elsewhere. */
static void row_equals(const table *t, size_t i, const ew_result *res, double tol_eV,
                       double tol_rel, const char *what) {
  size_t bound = 0;
  for (size_t c = 1; c + 1 < t->cols; c++) { /* the last column holds the warning codes */
    double want = cell_of_solve(res, t->names[c]), got = cellv(t, i, c);
    if (!isfinite(want)) {
      if (isfinite(got)) print_error("row %zu %s: %g, the solve has none\n", i, t->names[c], got);
      assert_false(isfinite(got));
      continue;
    }
    bound++;
    size_t ln = strlen(t->names[c]);
    int ev = ln > 3 && !strcmp(t->names[c] + ln - 3, "_eV");
    TU_NEAR(got, want, (1e-9 + (ev ? 0.0 : tol_rel)) * fabs(want) + (ev ? tol_eV : 0.0) + 1e-15,
            what);
  }
  assert_true(bound >= 3); /* e1, hh1, lh1 at least: the comparison is not empty */
}

/* Every cell of every row of csv (points first, first + 1, … of the sweep over r) equals a
 * separate plain solve of the model's stack at that point's value with the model's options:
 * to the 10 significant digits printed (tolerance 1e-9 relative), widened by tol_eV and
 * tol_rel as row_equals says (0 for a sweep without self-consistent loop).  Neighbouring
 * points differ by far more, so a row filled from another point's solve fails. */
static void rows_equal_plain_solves(const ew_wf_model *m, const ew_wf_range *r,
                                    const char *csv, size_t first, size_t rows, double tol_eV,
                                    double tol_rel) {
  table t;
  assert_true(parse_csv(csv, &t));
  assert_int_equal(t.rows, rows);
  const char *key = r->key;
  for (size_t i = 0; i < t.rows; i++) {
    double v;
    ew_wf_sweep_point(r, 1, first + i, &v);
    TU_NEAR(cellv(&t, i, 0), v, 1e-9 * fabs(v), "the point's value");
    ew_stack *st = NULL;
    ew_result *res = NULL;
    ew_error err = {0};
    assert_int_equal(ew_wf_stack_at(m, 1, &key, &v, &st, &err), EW_OK);
    assert_int_equal(ew_solve(st, ew_wf_model_options(m), &res, &err), EW_OK);
    row_equals(&t, i, res, tol_eV, tol_rel, "a plain ew_solve at the same value");
    ew_result_free(res);
    ew_stack_free(st);
  }
  free(t.v);
}

/* The warm-started rows of the doped sweep over r: row i (i not on the sub-grid) is the
 * self-consistent loop started from the converged pair of sub-grid point from[i] (the
 * nearest, the lower of two as near), to the printed digits, and that loop converged to
 * the same tolerance as a cold one (max|ΔU| < EW_SP_TOL_EV) in no more outer iterations. */
static void warm_rows_are_warm_solves(const ew_wf_model *m, const ew_wf_range *r,
                                      const char *csv, const size_t *rows, const size_t *from,
                                      size_t n) {
  table t;
  assert_true(parse_csv(csv, &t));
  const char *key = r->key;
  for (size_t k = 0; k < n; k++) {
    double v0, v;
    ew_wf_sweep_point(r, 1, from[k], &v0);
    ew_wf_sweep_point(r, 1, rows[k], &v);
    ew_stack *s0 = NULL, *st = NULL;
    ew_result *r0 = NULL, *cold = NULL, *warm = NULL;
    ew_error err = {0};
    assert_int_equal(ew_wf_stack_at(m, 1, &key, &v0, &s0, &err), EW_OK);
    assert_int_equal(ew_solve(s0, ew_wf_model_options(m), &r0, &err), EW_OK);
    assert_int_equal(ew_wf_stack_at(m, 1, &key, &v, &st, &err), EW_OK);
    assert_int_equal(ew_solve(st, ew_wf_model_options(m), &cold, &err), EW_OK);
    ew_sp_start start = {ew_result_node_count(r0), ew_result_z_nm(r0),
                         ew_result_sp_profile(r0, EW_SP_POTENTIAL_EV),
                         ew_result_fermi_energy_eV(r0)};
    assert_int_equal(ew_solve_self_consistent_from(st, ew_wf_model_options(m), &start, NULL,
                                                   &warm, &err), EW_OK);
    assert_true(ew_result_sp_residual_eV(warm) < EW_SP_TOL_EV);
    assert_true(ew_result_sp_iterations(warm) <= ew_result_sp_iterations(cold));
    row_equals(&t, rows[k], warm, 0.0, 0.0, "the loop warm-started from the nearest sub-grid point");
    ew_result_free(warm);
    ew_result_free(cold);
    ew_result_free(r0);
    ew_stack_free(st);
    ew_stack_free(s0);
  }
  free(t.v);
}

/* The sub-grid that fixes the columns is solved with the first chunk of rows and the
 * shard's points on it are not solved again (sweep.c, plan_solve): every row, held from the
 * sub-grid or solved with the rows, in the first chunk (64 points a thread) or beyond, in
 * one shard or three, equals a separate solve of its own stack. */
static void sweep_rows_are_their_own_solves(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1; /* a coarse grid: 150 points stay cheap (the same in both paths) */
  opt.error_estimate = 0;
  opt.excitons = 0;
  ew_wf_model *m = NULL;
  assert_int_equal(ew_wf_model_open(DETECTOR, fx->cat, &opt, &m, &err), EW_OK);
  /* 150 points: the sub-grid is points 0, 19, 37, 56, 75, 93, 112, 130, 149; one thread's
     chunk holds 64, so five sub-grid points are held past the first chunk */
  ew_wf_range r = range("well.thickness=4:8.47:0.03");
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 1;
  char *full = sweep_csv(m, &r, 1, &o, &err);
  if (!full) print_error("%s\n", err.message);
  assert_non_null(full);
  rows_equal_plain_solves(m, &r, full, 0, 150, 0.0, 0.0);
  mem cat;
  mem_open(&cat);
  for (size_t K = 1; K <= 3; K++) { /* parts [0, 50), [50, 100), [100, 150) on two threads */
    o.shard_k = K;
    o.shard_n = 3;
    o.threads = 2;
    assert_int_equal(ew_wf_sweep(m, &r, 1, &o, cat.f, NULL, &err), EW_OK);
  }
  char *parts = mem_close(&cat);
  assert_string_equal(parts, full); /* contract: the parts concatenate to the whole sweep */
  free(parts);
  free(full);
  ew_wf_model_free(m);
}

/* The same for a doped (self-consistent) stack: 13 donor densities, the sub-grid 9 of them
 * (0, 2, 3, 5, 6, 8, 9, 11, 12), two parts on two threads against the whole on one (byte for
 * byte), and every row (levels, lines, depolarised lines) a separate self-consistent solve.
 * Rows 1, 4, 7, 10 start their loop from the converged potential of sub-grid point 0, 3, 6,
 * 9 (sweep.c, warm_of), so they match a cold solve only within the loop's tolerance: both
 * loops stop once an update moves U by less than EW_SP_TOL_EV near the same fixed point, and
 * a level moves with U by at most max|ΔU| (first-order perturbation), so the energies within
 * 3·EW_SP_TOL_EV; a line of energy E ≥ 0.05 eV (the smallest here, hh1–hh2 0.052 eV) moves
 * its wavelength by δE/E and its strength and overlap (through E and ψ, whose first-order
 * change is δU over a level spacing ≥ 0.05 eV) by about as much: 3·EW_SP_TOL_EV / 0.05 eV
 * relative.  Neighbouring rows differ by ≥ 2·10⁻⁵ eV in e1, beyond these. */
static void doped_sweep_rows_are_their_own_solves(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  opt.error_estimate = 0;
  opt.excitons = 0;
  ew_wf_model *m = NULL;
  assert_int_equal(ew_wf_model_open("examples/doped_detector.cfg", fx->cat, &opt, &m, &err),
                   EW_OK);
  ew_wf_range r = range("well.doping.donors=1e18:4e18:2.5e17");
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 1;
  char *full = sweep_csv(m, &r, 1, &o, &err);
  if (!full) print_error("%s\n", err.message);
  assert_non_null(full);
  assert_non_null(strstr(full, "e1-e2_depol_eV")); /* self-consistent: depolarised columns */
  rows_equal_plain_solves(m, &r, full, 0, 13, 3 * EW_SP_TOL_EV, 3 * EW_SP_TOL_EV / 0.05);
  const size_t warm_rows[] = {1, 4, 7, 10}, warm_from[] = {0, 3, 6, 9};
  warm_rows_are_warm_solves(m, &r, full, warm_rows, warm_from, 4);
  mem cat;
  mem_open(&cat);
  for (size_t K = 1; K <= 2; K++) {
    o.shard_k = K;
    o.shard_n = 2;
    o.threads = 2;
    assert_int_equal(ew_wf_sweep(m, &r, 1, &o, cat.f, NULL, &err), EW_OK);
  }
  char *parts = mem_close(&cat);
  assert_string_equal(parts, full);
  free(parts);
  free(full);
  ew_wf_model_free(m);
}

/* The table's ψ samples (the pictures' level tracking, sweep.h): for every row and level
 * column, ψ of that level of a separate plain solve at EW_WF_PSI_SAMPLES evenly spaced z,
 * linear between nodes, scaled to unit norm — computed here from the public accessors —
 * and zeros for a level not bound at that point; tolerance 1e-12 (rounding of the same
 * interpolation).  12 points: the sub-grid's 9 rows held from the plan and 3 solved with
 * the rows, the level columns of all three bands. */
static void sweep_table_psi_samples_are_the_solves(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  opt.error_estimate = 0;
  opt.excitons = 0;
  ew_wf_model *m = NULL;
  assert_int_equal(ew_wf_model_open(DETECTOR, fx->cat, &opt, &m, &err), EW_OK);
  ew_wf_range r = range("well.thickness=3:8.5:0.5"); /* e2 bound from some width on */
  ew_wf_table tab;
  memset(&tab, 0, sizeof tab);
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 2;
  o.table = &tab;
  assert_int_equal(ew_wf_sweep(m, &r, 1, &o, NULL, NULL, &err), EW_OK);
  assert_int_equal(tab.nrows, 12);
  assert_true(tab.nlev >= 4);
  const size_t K = EW_WF_PSI_SAMPLES;
  const char *key = r.key;
  size_t zero_cols = 0;
  for (size_t row = 0; row < tab.nrows; row++) {
    double v;
    ew_wf_sweep_point(&r, 1, row, &v);
    ew_stack *st = NULL;
    ew_result *res = NULL;
    assert_int_equal(ew_wf_stack_at(m, 1, &key, &v, &st, &err), EW_OK);
    assert_int_equal(ew_solve(st, ew_wf_model_options(m), &res, &err), EW_OK);
    size_t n = ew_result_node_count(res);
    const double *z = ew_result_z_nm(res);
    for (size_t c = 0; c < tab.nlev; c++) {
      /* the column's level: its band and its number within the band in column order */
      size_t num = 1;
      for (size_t k = 0; k < c; k++) num += tab.band[k] == tab.band[c];
      char label[16];
      snprintf(label, sizeof label, "%s%zu", ew_band_name(tab.band[c]), num);
      char colname[24];
      snprintf(colname, sizeof colname, "%s_eV", label);
      assert_string_equal(tab.names[tab.lev0 + c], colname);
      const double *psi = NULL;
      for (size_t i = 0; i < ew_result_state_count(res); i++)
        if (!strcmp(ew_result_state(res, i)->label, label)) psi = ew_result_wavefunction(res, i);
      const double *got = tab.psi + (row * tab.nlev + c) * K;
      double want[EW_WF_PSI_SAMPLES], s2 = 0;
      for (size_t k = 0; k < K; k++) {
        double zz = z[0] + (z[n - 1] - z[0]) * (double)k / (double)(K - 1);
        size_t j = 0; /* the cell [z_j, z_j+1] holding zz */
        while (j + 2 < n && z[j + 1] < zz) j++;
        double t = (zz - z[j]) / (z[j + 1] - z[j]);
        want[k] = psi ? (1 - t) * psi[j] + t * psi[j + 1] : 0.0;
        s2 += want[k] * want[k];
      }
      zero_cols += !psi;
      for (size_t k = 0; k < K; k++) {
        double w = s2 > 0 ? want[k] / sqrt(s2) : 0.0;
        TU_NEAR(got[k], w, 1e-12, "ψ of a plain solve sampled at the same z");
      }
    }
    ew_result_free(res);
    ew_stack_free(st);
  }
  assert_true(zero_cols > 0); /* some level not bound at the narrow end: zeros checked too */
  ew_wf_table_free(&tab);
  ew_wf_model_free(m);
}

/* ---- matching -------------------------------------------------------------------------- */
static void match_round_trip(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  const char *key = "well.thickness";
  const double t0 = 6.7;
  const char *lines[] = {"e1-e2", "e1-hh1"};
  for (int l = 0; l < 2; l++) {
    double E0 = line_at(fx->det, key, t0, lines[l]);
    ew_wf_range r;
    assert_int_equal(ew_wf_range_parse("well.thickness=3:12", 0, "--vary", &r, &err), EW_OK);
    ew_wf_quantity q = {E0, 0, E0, EW_HC_EVNM / E0, 1.0};
    ew_wf_match_result res;
    assert_int_equal(ew_wf_match(fx->det, &r, 1, &lines[l], &q, 1, NULL, NULL, &res, &err), EW_OK);
    assert_int_equal(res.n, 1); /* both lines are monotonic in the width beyond 5.5 nm */
    /* Brent to 1e-6 relative (README contract): recover 6.7 nm to 1e-4 nm */
    TU_NEAR(res.sol[0].value[0], t0, 1e-4, "round trip: solve at 6.7 nm, match its line");
    TU_NEAR(res.sol[0].energy_eV[0], E0, 1e-9, "line at the solution equals the target");
    ew_wf_match_result_free(&res);
  }
}

/* The depolarisation-shifted line as a match target ("e1-e2:depol"): the doped detector
 * example at its 6.0 nm width gives the bare e1-e2 line plus the shift the result reports
 * (README "Doped structures": about 17 meV); matching that value over 5.5–6.5 nm recovers
 * 6.0 nm (Brent to 1e-6 relative, README contract). */
static void match_depolarised_line(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_model *dop = NULL;
  assert_int_equal(ew_wf_model_open("examples/doped_detector.cfg", fx->cat, NULL, &dop, &err),
                   EW_OK);
  const char *key = "well.thickness";
  double t0 = 6.0, E = NAN, bare = NAN, shift = NAN;
  ew_stack *st = NULL;
  ew_result *res = NULL;
  assert_int_equal(ew_wf_stack_at(dop, 1, &key, &t0, &st, &err), EW_OK);
  assert_int_equal(ew_solve(st, NULL, &res, &err), EW_OK);
  for (size_t j = 0; j < ew_result_line_count(res); j++) {
    const ew_line *l = ew_result_line(res, j);
    if (l->kind == EW_LINE_INTERSUBBAND &&
        !strcmp(ew_result_state(res, l->lower)->label, "e1") &&
        !strcmp(ew_result_state(res, l->upper)->label, "e2"))
      bare = l->energy_eV, shift = ew_result_line_depolarization_eV(res, j);
  }
  assert_int_equal(ew_wf_line_energy(res, "e1-e2:depol", &E, &err), EW_OK);
  TU_NEAR(E, bare + shift, 1e-15, "e1-e2:depol = bare line + its depolarisation shift");
  if (!(shift > 0.010 && shift < 0.025)) fail_msg("depolarisation shift %g eV", shift);
  ew_result_free(res);
  ew_stack_free(st);
  /* ':depol' belongs to intersubband lines only */
  assert_int_equal(ew_wf_line_energy(NULL, "e1-hh1:depol", &E, &err), EW_ERR_USAGE);
  ew_wf_range r;
  assert_int_equal(ew_wf_range_parse("well.thickness=5.5:6.5", 0, "--vary", &r, &err), EW_OK);
  ew_wf_quantity q = {bare + shift, 0, bare + shift, EW_HC_EVNM / (bare + shift), 1.0};
  const char *line = "e1-e2:depol";
  ew_wf_match_result mr;
  assert_int_equal(ew_wf_match(dop, &r, 1, &line, &q, 1, NULL, NULL, &mr, &err), EW_OK);
  assert_int_equal(mr.n, 1);
  TU_NEAR(mr.sol[0].value[0], t0, 1e-4, "round trip through the depolarised line");
  ew_wf_match_result_free(&mr);
  ew_wf_model_free(dop);
}

static void match_tolerance_and_no_solution(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_range r;
  assert_int_equal(ew_wf_range_parse("well.thickness=3:12", 0, "--vary", &r, &err), EW_OK);
  const char *line = "e1-hh1";
  ew_wf_quantity q, tol;
  assert_int_equal(ew_wf_quantity_parse("1.5480eV", 0, "--target", &q, &err), EW_OK);
  assert_int_equal(ew_wf_quantity_parse("0.002eV", 1, "--tolerance", &tol, &err), EW_OK);
  ew_wf_match_result res;
  assert_int_equal(ew_wf_match(fx->det, &r, 1, &line, &q, 1, &tol, NULL, &res, &err), EW_OK);
  assert_int_equal(res.n, 1);
  const ew_wf_solution *s = &res.sol[0];
  /* the line falls with the width: the value at target − tol is the wider one */
  assert_true(s->value_minus > s->value[0] && s->value_plus < s->value[0]);
  TU_NEAR(line_at(fx->det, "well.thickness", s->value_minus, line), 1.546, 1e-8,
          "line at value_minus = target − tolerance (Brent to 2e-7 relative in the value)");
  TU_NEAR(s->uncertainty, 0.5 * (s->value_minus - s->value_plus), 1e-12, "definition");
  ew_wf_match_result_free(&res);
  /* a target outside what the range reaches: no solution, exit-0 style, the range reported */
  assert_int_equal(ew_wf_quantity_parse("1.3eV", 0, "--target", &q, &err), EW_OK);
  assert_int_equal(ew_wf_match(fx->det, &r, 1, &line, &q, 1, NULL, NULL, &res, &err), EW_OK);
  assert_int_equal(res.n, 0);
  assert_non_null(strstr(res.message, "spans"));
  assert_true(res.reached_min_eV[0] > 1.3 && res.reached_max_eV[0] > res.reached_min_eV[0]);
  ew_wf_match_result_free(&res);
}

static void match_two_unknowns(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  const char *keys[2] = {"well.thickness", "temperature"};
  const double v0[2] = {6.5, 150.0};
  const char *lines[2] = {"e1-e2", "e1-hh1"};
  ew_stack *st = NULL;
  ew_result *res0 = NULL;
  assert_int_equal(ew_wf_stack_at(fx->det, 2, keys, v0, &st, &err), EW_OK);
  assert_int_equal(ew_solve(st, NULL, &res0, &err), EW_OK);
  ew_wf_quantity q[2];
  for (int i = 0; i < 2; i++) {
    double E;
    assert_int_equal(ew_wf_line_energy(res0, lines[i], &E, &err), EW_OK);
    q[i] = (ew_wf_quantity){E, 0, E, EW_HC_EVNM / E, 1.0};
  }
  ew_result_free(res0);
  ew_stack_free(st);
  ew_wf_range r[2];
  assert_int_equal(ew_wf_range_parse("well.thickness=5:8", 0, "--vary", &r[0], &err), EW_OK);
  assert_int_equal(ew_wf_range_parse("temperature=50:300", 0, "--vary", &r[1], &err), EW_OK);
  ew_wf_match_result res;
  assert_int_equal(ew_wf_match(fx->det, r, 2, lines, q, 2, NULL, NULL, &res, &err), EW_OK);
  assert_int_equal(res.n, 1);
  /* Newton stops at 1e-6 relative steps / 1e-5 relative residual; the temperature moves the
   * lines weakly (Varshni), so allow 1e-3 nm and 0.5 K */
  TU_NEAR(res.sol[0].value[0], 6.5, 1e-3, "round trip in two unknowns: thickness");
  TU_NEAR(res.sol[0].value[1], 150.0, 0.5, "round trip in two unknowns: temperature");
  ew_wf_match_result_free(&res);
}

/* ---- Hellmann–Feynman ------------------------------------------------------------------ */
static void check_hf(const ew_wf_tolerance *t, const char *what) {
  int checked = 0;
  for (size_t k = 0; k < t->n_layers; k++) {
    const ew_wf_tol_layer *L = &t->layers[k];
    for (size_t i = 0; i < t->n_items; i++) {
      /* Hellmann–Feynman / Hadamard shape derivative against central finite differences of
       * full solves (step 0.01 nm, 0.001 in x): 1 % (the project's requirement).  Below
       * 1 meV/nm (an outer layer: the structure shifts against the wall) the derivative is
       * the difference of interface terms of ~10 meV/nm that HF evaluates to ~1e-3 each
       * (O(h²) flux estimate), so there the tolerance is 1e-4 eV/nm absolute */
      double fd = L->dEdt_fd[i], hf = L->dEdt_hf[i];
      if (isfinite(fd)) {
        if (fabs(fd) > 1e-3) {
          TU_NEAR(hf, fd, 0.01 * fabs(fd), what);
          checked++;
        } else {
          TU_NEAR(hf, fd, 1e-4, what);
        }
      }
      if (L->has_x && isfinite(L->dEdx_fd[i])) {
        fd = L->dEdx_fd[i];
        hf = L->dEdx_hf[i];
        if (fabs(fd) > 1e-3) {
          TU_NEAR(hf, fd, 0.01 * fabs(fd), what);
          checked++;
        } else {
          TU_NEAR(hf, fd, 1e-4, what);
        }
      }
    }
  }
  assert_true(checked >= 10);
}

static void hellmann_feynman_vs_finite_differences(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_tolerance *t = NULL;
  /* detector well: Kane non-parabolic electrons (the default where the catalogue has E_P) */
  assert_int_equal(ew_wf_tolerance_run(fx->det, 0.01, 0, &t, &err), EW_OK);
  check_hf(t, "HF vs FD, detector well (non-parabolic electrons)");
  ew_wf_tolerance_free(t);
  /* parabolic bands, an asymmetric well with a user-defined outer barrier */
  char path[64];
  write_tmp(path, sizeof path,
            "temperature = 10.0;\nnonparabolic = false;\n"
            "materials = ({ name = \"deep\"; Ec = 1.2; Ev = -1.1; me = 0.10; mhh = 0.45; mlh = 0.12; });\n"
            "layers = ( { name = \"left\"; material = \"AlGaAs\"; x = 0.30; thickness = 25.0; },\n"
            "           { name = \"well\"; material = \"GaAs\"; thickness = 7.0; },\n"
            "           { name = \"right\"; material = \"deep\"; thickness = 25.0; } );\n");
  ew_wf_model *m = NULL;
  ew_status rc = ew_wf_model_open(path, fx->cat, NULL, &m, &err);
  if (rc != EW_OK) print_error("%s\n", err.message);
  assert_int_equal(rc, EW_OK);
  assert_int_equal(ew_wf_tolerance_run(m, 0.01, 0, &t, &err), EW_OK);
  check_hf(t, "HF vs FD, parabolic asymmetric well");
  assert_true(t->layers[2].ml_default); /* user material: GaAs's a/2 */
  TU_NEAR(t->layers[2].ml_nm, 0.2827, 0.0, "EW_WF_DEFAULT_ML_NM, GaAs a/2");
  TU_NEAR(t->layers[1].ml_nm, 0.5 * 0.56533, 1e-4,
          "GaAs a = 0.56533 nm (Vurgaftman 2001, Table III; from memory)");
  ew_wf_tolerance_free(t);
  ew_wf_model_free(m);
  unlink(path);
}

static void monolayer_ladder(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_ladder *l = NULL;
  assert_int_equal(ew_wf_ladder_run(fx->det, "well", 0, &l, &err), EW_OK);
  TU_NEAR(l->thickness_nm[2], 6.2, 0.0, "nominal");
  TU_NEAR(l->thickness_nm[4] - l->thickness_nm[2], 2 * l->ml_nm, 1e-12, "two monolayers");
  size_t i = 0;
  while (i < l->n_items && strcmp(l->items[i].name, "e1-hh1")) i++;
  assert_true(i < l->n_items);
  for (int q = 1; q < 5; q++) /* wider islands: lower e1-hh1 (variational, as above) */
    assert_true(l->energy_eV[q * l->n_items + i] < l->energy_eV[(q - 1) * l->n_items + i]);
  /* the nominal column is the plain solve */
  TU_NEAR(l->energy_eV[2 * l->n_items + i], line_at(fx->det, "well.thickness", 6.2, "e1-hh1"),
          1e-12, "same solve");
  ew_wf_ladder_free(l);
  assert_int_equal(ew_wf_ladder_run(fx->det, "nosuch", 0, &l, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--ladder"));
}

/* ---- sweep table and pictures -------------------------------------------------------- */
static char *slurp(const char *path) {
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  fseek(f, 0, SEEK_END);
  long n = ftell(f);
  fseek(f, 0, SEEK_SET);
  char *b = malloc((size_t)n + 1);
  size_t got = fread(b, 1, (size_t)n, f);
  b[got] = '\0';
  fclose(f);
  return b;
}

/* an SVG written whole: the root element first, its end tag last */
static void assert_svg(const char *path, const char *must_contain) {
  char *b = slurp(path);
  if (!b) {
    print_error("%s was not written\n", path);
    fail();
  }
  assert_true(strncmp(b, "<svg", 4) == 0);
  size_t n = strlen(b);
  assert_true(n > 8 && strcmp(b + n - 7, "</svg>\n") == 0);
  if (must_contain && !strstr(b, must_contain)) {
    print_error("%s does not contain %s\n", path, must_contain);
    fail();
  }
  free(b);
}

static void sweep_table_matches_csv_and_plots(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  ew_wf_range r = range("well.thickness=4:8:1");
  ew_wf_table tab;
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.table = &tab;
  char *csv = sweep_csv(fx->det, &r, 1, &o, &err);
  assert_non_null(csv);
  table t;
  assert_true(parse_csv(csv, &t));
  /* reference: the CSV of the same sweep, printed with %.10g */
  assert_int_equal(tab.nrows, t.rows);
  assert_int_equal(tab.ncol, t.cols);
  assert_int_equal(tab.nkeys, 1);
  for (size_t c = 0; c < t.cols; c++) assert_string_equal(tab.names[c], t.names[c]);
  for (size_t i = 0; i < t.rows * t.cols; i++) {
    double a = tab.v[i], b = t.v[i];
    if (isnan(b)) assert_true(isnan(a));
    else TU_NEAR(a, b, 1e-9 * fabs(b), "CSV prints 10 significant digits");
  }
  char dir[] = "/tmp/ew_test_plot_XXXXXX", path[256], p2[256];
  assert_non_null(mkdtemp(dir));
  snprintf(path, sizeof path, "%s/levels.svg", dir);
  ew_wf_outset set;
  ew_wf_outset_init(&set);
  int written[EW_WF_PLOT_FILES];
  assert_int_equal(ew_wf_sweep_plot(&tab, path, &set, written, &err), EW_OK);
  assert_true(written[0] && written[1] && written[2]);
  /* not committed yet: nothing under the final names */
  assert_int_equal(access(path, F_OK), -1);
  assert_int_equal(ew_wf_outset_commit(&set, 1, &err), EW_OK);
  assert_svg(path, ">hh1<");
  snprintf(p2, sizeof p2, "%s/levels-interband.svg", dir);
  assert_svg(p2, ">e1-hh1<");
  snprintf(p2, sizeof p2, "%s/levels-intersubband.svg", dir);
  assert_svg(p2, ">e1-e2<");
  /* a set dropped (ok = 0) removes its temporaries and leaves the committed files intact */
  char *before = slurp(path);
  assert_int_equal(ew_wf_sweep_plot(&tab, path, &set, written, &err), EW_OK);
  assert_int_equal(ew_wf_outset_commit(&set, 0, &err), EW_OK);
  char *after = slurp(path);
  assert_string_equal(before, after);
  char cmd[400];
  snprintf(cmd, sizeof cmd, "test $(ls -A %s | wc -l) -eq 3", dir);
  assert_int_equal(system(cmd), 0);
  snprintf(cmd, sizeof cmd, "rm -rf %s", dir);
  assert_int_equal(system(cmd), 0);
  free(before);
  free(after);
  free(t.v);
  free(csv);
  ew_wf_table_free(&tab);
  /* companion names keep the extension */
  assert_int_equal(ew_wf_plot_companion("a/b.PNG", "interband", "--plot", p2, sizeof p2, &err),
                   EW_OK);
  assert_string_equal(p2, "a/b-interband.PNG");
  assert_int_equal(ew_wf_plot_companion("a/b.pdf", "x", "--plot", p2, sizeof p2, &err),
                   EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--plot"));
}

/* ---- spectra ---------------------------------------------------------------------------- */
static ew_result *solve_file(const char *path, ew_catalogue *cat, ew_stack **st) {
  ew_error err = {0};
  ew_result *res = NULL;
  assert_int_equal(ew_stack_read_file(path, cat, st, &err), EW_OK);
  assert_int_equal(ew_solve(*st, NULL, &res, &err), EW_OK);
  return res;
}

static void spectra_grids_and_intersubband_peak(void **state) {
  fixture *fx = *state;
  ew_error err = {0};
  char path[64];
  write_tmp(path, sizeof path,
            "temperature = 77.0; sheet_density = 5e11; linewidth = 8.0;\n"
            "layers = (\n"
            "  { name = \"lower_barrier\"; material = \"AlGaAs\"; x = 0.28; thickness = 30.0; },\n"
            "  { name = \"well\"; material = \"GaAs\"; thickness = 6.2; },\n"
            "  { name = \"upper_barrier\"; material = \"AlGaAs\"; x = 0.28; thickness = 30.0; }\n"
            ");\n");
  ew_stack *st = NULL;
  ew_result *res = solve_file(path, fx->cat, &st);
  unlink(path);
  ew_wf_spectra sp;
  assert_int_equal(ew_wf_spectra_compute(res, 45.0, 3.3, &sp, &err), EW_OK);
  assert_non_null(sp.interband_rel);
  assert_non_null(sp.intersubband);
  assert_int_equal(sp.n, 2 * EW_WF_SPECTRUM_POINTS); /* the grids do not meet */
  for (size_t k = 1; k < sp.n; k++) assert_true(sp.E_eV[k] > sp.E_eV[k - 1]);
  /* grid ends as specified: lowest PL peak − 20 meV … highest interband line + 100 meV;
   * 0 … 1.5 × the highest e1→ej line */
  double plmin = INFINITY, ibmax = -INFINITY, e12 = NAN, z12 = NAN;
  size_t ne1j = 0;
  for (size_t j = 0; j < res->n_lines; j++) {
    const ew_line *ln = &res->lines[j];
    if (ln->kind == EW_LINE_INTERBAND) {
      plmin = fmin(plmin, ln->pl_peak_eV);
      ibmax = fmax(ibmax, ln->energy_eV);
    } else if (res->states[ln->lower].band == EW_BAND_E && res->states[ln->lower].n == 1) {
      ne1j++;
      e12 = ln->energy_eV;
      z12 = ln->dipole_nm;
    }
  }
  assert_int_equal(ne1j, 1); /* this well binds e1, e2 only: the peak below is e1-e2 alone */
  TU_NEAR(sp.lo_eV[0], plmin - 0.020, 1e-12, "grid definition");
  TU_NEAR(sp.hi_eV[0], ibmax + 0.100, 1e-12, "grid definition");
  TU_NEAR(sp.lo_eV[1], 0.0, 0.0, "grid definition");
  /* 1.5 × the higher of e1-e2 and the continuum threshold (outer barrier edge − e1) */
  double thr = res->stack->layers[0].bands.Ec_eV - res->states[0].energy_eV;
  TU_NEAR(sp.threshold_eV, thr, 1e-9, "continuum threshold: barrier edge - e1");
  TU_NEAR(sp.hi_eV[1], 1.5 * fmax(e12, thr), 1e-12, "grid definition");
  ew_wf_peak pk[8];
  size_t np = ew_wf_spectra_peaks(&sp, 1, pk, 8);
  assert_int_equal(np, 1);
  double step = 1.5 * fmax(e12, thr) / (EW_WF_SPECTRUM_POINTS - 1);
  TU_NEAR(pk[0].E_eV, e12, step, "a Lorentzian peaks at its line energy: within one grid step");
  /* reference: the peak of spectra.h's formula, A = (e²h/(4ε0 c m0)) <m0/m>/n · N_s ·
   * sin²θ/cos θ · f / (π γ) (Helm 2000), where <m0/m>·f = 2 m0 ΔE |z12|²/ħ² = ΔE |z12|²/K
   * whatever the mass model (the mass cancels: Helm 2000), less the Lorentzian's fall over
   * the offset from the grid point (|δ| ≤ step/2: (δ/γ)² ≤ 1e-4 relative at γ = 4 meV) */
  double th = 45.0 * EW_PI / 180.0, g = 0.5 * 8.0e-3;
  double want = ew_intersubband_prefactor_eVcm2() / 3.3 * 5e11 * sin(th) * sin(th) / cos(th) *
                (e12 * z12 * z12 / EW_HB2M0_EVNM2) / (EW_PI * g);
  /* the peaks are of the total: add the continuum's absorption there (continuum.c, tested
     in test_continuum.c), a few per cent of the line's here */
  double Ec = pk[0].E_eV, Ac = 0.0;
  assert_int_equal(ew_intersubband_continuum_absorption(res, 5e11, 8.0, 45.0, 3.3, 1, &Ec, &Ac,
                                                        NULL), EW_OK);
  assert_true(Ac >= 0 && Ac < 0.2 * want);
  TU_NEAR(pk[0].value, want + Ac, 2e-4 * want, "Lorentzian peak height, offset below half a step");
  /* interband: every peak lies inside the grid, and the lowest is the e1-hh1 exciton, near
   * its PL peak (within the linewidth: the step below it tilts the maximum) */
  np = ew_wf_spectra_peaks(&sp, 0, pk, 8);
  assert_true(np >= 1);
  TU_NEAR(pk[0].E_eV, plmin, 8.0e-3, "exciton peak within one FWHM of the lowest PL peak");
  ew_wf_spectra_free(&sp);
  /* normal incidence: TM light has no E_z, nothing absorbs, no peak (spectra.h) */
  assert_int_equal(ew_wf_spectra_compute(res, 0.0, 3.3, &sp, &err), EW_OK);
  assert_int_equal(ew_wf_spectra_peaks(&sp, 1, pk, 8), 0);
  ew_wf_spectra_free(&sp);
  assert_int_equal(ew_wf_spectra_compute(res, 90.0, 3.3, &sp, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--angle"));
  assert_int_equal(ew_wf_spectra_compute(res, 45.0, 0.0, &sp, &err), EW_ERR_USAGE);
  assert_non_null(strstr(err.message, "--index"));
  ew_result_free(res);
  ew_stack_free(st);
  /* without sheet_density: one grid, no intersubband column, a note naming the key */
  res = solve_file(DETECTOR, fx->cat, &st);
  assert_int_equal(ew_wf_spectra_compute(res, 45.0, 3.3, &sp, &err), EW_OK);
  assert_int_equal(sp.n, EW_WF_SPECTRUM_POINTS);
  assert_null(sp.intersubband);
  assert_non_null(strstr(sp.note[1], "sheet_density"));
  assert_int_equal(sp.note[0][0], '\0');
  ew_wf_spectra_free(&sp);
  ew_result_free(res);
  ew_stack_free(st);
}

/* The peak finder on a spectrum made by hand: two Lorentzians (FWHM 0.4) at 3 and 7 and a
 * bump at 5 that tops out at ~3.5 % of the maximum (with the tails there) — analytic maxima,
 * the bump below the 5 % threshold. */
static void spectra_peak_finder(void **state) {
  (void)state;
  enum { N = 1001 };
  ew_wf_spectra sp;
  memset(&sp, 0, sizeof sp);
  sp.n = N;
  sp.E_eV = malloc(N * sizeof(double));
  sp.intersubband = malloc(N * sizeof(double));
  sp.grid = malloc(N);
  for (size_t k = 0; k < N; k++) {
    double E = 10.0 * (double)k / (N - 1);
    sp.E_eV[k] = E;
    sp.grid[k] = 2;
    double u = (E - 3) / 0.2, w = (E - 7) / 0.2;
    sp.intersubband[k] = 1.0 / (1.0 + u * u) + 0.5 / (1.0 + w * w) +
                         0.02 * exp(-(E - 5) * (E - 5) / 0.01);
  }
  ew_wf_peak pk[4];
  size_t n = ew_wf_spectra_peaks(&sp, 1, pk, 4);
  assert_int_equal(n, 2);
  /* the other line's tail shifts each maximum by ~5e-5 (slope / curvature): far below one
   * grid step (0.01) */
  TU_NEAR(pk[0].E_eV, 3.0, 0.011, "analytic maximum, one grid step");
  TU_NEAR(pk[1].E_eV, 7.0, 0.011, "analytic maximum, one grid step");
  assert_int_equal(ew_wf_spectra_peaks(&sp, 0, pk, 4), 0); /* no interband spectrum */
  ew_wf_spectra_free(&sp);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(ranges_include_both_ends),
      cmocka_unit_test(quantities_parse_units),
      cmocka_unit_test(keys_are_checked),
      cmocka_unit_test(absent_keys_only_in_their_builds),
      cmocka_unit_test(nested_keys_and_thickness_forms),
      cmocka_unit_test(sweep_error_names_the_setting_line),
      cmocka_unit_test(sweep_monotonic_and_identity),
      cmocka_unit_test(shards_concatenate_to_the_full_sweep),
      cmocka_unit_test(thread_count_does_not_change_output),
      cmocka_unit_test(sweep_levels_floor),
      cmocka_unit_test(sweep_rows_are_their_own_solves),
      cmocka_unit_test(doped_sweep_rows_are_their_own_solves),
      cmocka_unit_test(sweep_table_psi_samples_are_the_solves),
      cmocka_unit_test(match_round_trip),
      cmocka_unit_test(match_depolarised_line),
      cmocka_unit_test(match_tolerance_and_no_solution),
      cmocka_unit_test(match_two_unknowns),
      cmocka_unit_test(hellmann_feynman_vs_finite_differences),
      cmocka_unit_test(monolayer_ladder),
      cmocka_unit_test(sweep_table_matches_csv_and_plots),
      cmocka_unit_test(spectra_grids_and_intersubband_peak),
      cmocka_unit_test(spectra_peak_finder),
  };
  return cmocka_run_group_tests_name("workflow", tests, group_setup, group_teardown);
}
