/* test_practitioner_output.c — what issue 17 ("Output") adds to the result writers: the PL
 * peak as a wavelength (table PL_nm, JSON and CSV pl_peak_nm), y of quaternary layers in the
 * layer table, and the error_meV heading.  Values are compared, not just keys: pl_peak_nm
 * must be hc / pl_peak_eV with hc from CODATA 2018 written here, not taken from the library. */
#include <math.h>

#include "roundtrip.h"

/* hc = 6.62607015e-34 J s × 299792458 m/s / 1.602176634e-19 J/eV, in eV·nm (CODATA 2018,
 * exact SI values: E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)) */
#define HC_EVNM 1239.84198433200208

typedef struct {
  ew_catalogue *cat;
  ew_stack *st;
  ew_result *res;
} fixture;

static int solve_file(const char *path, fixture *fx) {
  ew_error err = {0};
  if (ew_catalogue_load("materials", &fx->cat, &err) != EW_OK) return -1;
  if (ew_stack_read_file(path, fx->cat, &fx->st, &err) != EW_OK) return -1;
  return tu_fixture_solve("test_practitioner_output", fx->st, 0.1, &fx->res);
}

static int setup(void **state) {
  static fixture fx; /* test-only: lives for the whole run */
  if (solve_file("examples/detector_well.cfg", &fx) != 0) return -1;
  *state = &fx;
  return 0;
}

static int teardown(void **state) {
  fixture *fx = *state;
  ew_result_free(fx->res);
  ew_stack_free(fx->st);
  ew_catalogue_free(fx->cat);
  return 0;
}

static char *table_text(const ew_result *r) {
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_non_null(f);
  ew_error err = {0};
  assert_int_equal(ew_result_write_table(r, f, &err), EW_OK);
  fclose(f);
  return buf;
}

static void test_pl_peak_nm_json(void **state) {
  fixture *fx = *state;
  char *buf = NULL;
  size_t len = 0, n_ib = 0;
  FILE *f = open_memstream(&buf, &len);
  ew_error err = {0};
  assert_int_equal(ew_result_write_json(fx->res, f, &err), EW_OK);
  fclose(f);
  rj doc;
  assert_int_equal(rj_parse(buf, &doc), 0);
  const rj *tr = rj_get(&doc, "transitions");
  assert_non_null(tr);
  for (size_t i = 0; i < tr->n; i++) {
    const rj *t = &tr->item[i];
    if (strcmp(rj_str(t, "kind"), "interband") != 0) continue;
    n_ib++;
    double eV = rj_num(t, "pl_peak_eV"), nm = rj_num(t, "pl_peak_nm");
    assert_true(eV > 1.4 && eV < 2.0); /* a GaAs well's band-to-band lines */
    /* both printed with %.10g: relative error a few 1e-10 */
    TU_NEAR(nm, HC_EVNM / eV, 3e-9 * nm, "lambda = hc/E to the printed digits");
    /* the band-to-band wavelength is a different member, shorter by the exciton binding */
    assert_true(nm > rj_num(t, "wavelength_nm"));
  }
  assert_true(n_ib >= 4);
  rj_free(&doc);
  free(buf);
}

static void test_pl_peak_nm_csv(void **state) {
  fixture *fx = *state;
  char dir[512], path[600];
  assert_int_equal(tu_mkdtemp("practitioner", dir, sizeof dir), 0);
  ew_error err = {0};
  assert_int_equal(ew_result_write_csv_dir(fx->res, dir, 0, &err), EW_OK);
  snprintf(path, sizeof path, "%s/lines.csv", dir);
  rcsv c;
  assert_int_equal(rcsv_read(path, &c), 0);
  int kind = rcsv_col(&c, "kind"), ev = rcsv_col(&c, "pl_peak_eV"), nm = rcsv_col(&c, "pl_peak_nm");
  assert_true(kind >= 0 && ev >= 0 && nm >= 0);
  assert_int_equal(nm, (int)c.ncol - 1); /* appended: the earlier columns keep their places */
  size_t n_ib = 0;
  for (size_t row = 0; row < c.nrows; row++) {
    double e = rcsv_num(&c, row, ev), l = rcsv_num(&c, row, nm);
    if (strcmp(rcsv_at(&c, row, kind), "interband") != 0) {
      assert_true(isnan(l)); /* an intersubband line has no PL peak */
      continue;
    }
    n_ib++;
    /* pl_peak_eV %.10f, pl_peak_nm %.6f: 1e-6 nm plus the energy's rounding through hc/E^2 */
    TU_NEAR(l, HC_EVNM / e, 1e-6 + HC_EVNM / (e * e) * 1e-10, "lambda = hc/E (CSV digits)");
  }
  assert_true(n_ib >= 4);
  rcsv_free(&c);
  tu_rm_tree(dir);
}

/* The table's PL_nm column is the wavelength of its PL_eV column (%.2f of hc/E). */
static void test_pl_peak_nm_table(void **state) {
  fixture *fx = *state;
  char *t = table_text(fx->res);
  const char *p = strstr(t, "PL_eV    PL_nm");
  assert_non_null(p);
  const char *row = strstr(p, "\n  e1-hh1 ");
  assert_non_null(row);
  double E, lam, ov, xb, pl, pl_nm;
  char name[16];
  assert_int_equal(sscanf(row, " %15s %lf %lf %lf %lf %lf %lf", name, &E, &lam, &ov, &xb, &pl,
                          &pl_nm), 7);
  TU_NEAR(pl_nm, HC_EVNM / pl, 0.005 + HC_EVNM / (pl * pl) * 5e-6, "%.2f of hc/E(%.5f)");
  /* and the heading says what error_meV is */
  assert_non_null(strstr(t, "error_meV is the numerical error only, not the design uncertainty"));
  free(t);
}

/* A quaternary layer shows y beside x; stacks without one keep the old columns. */
static void test_layer_table_y(void **state) {
  fixture *fx = *state;
  const char *q = "temperature = 300.0;\nsubstrate = \"InP\";\nlayers = (\n"
                  " { name = \"b\"; material = \"InP\"; thickness = 15.0; },\n"
                  " { name = \"w\"; material = \"InGaAsP\"; x = 0.28; y = 0.61; thickness = 6.0; },\n"
                  " { name = \"c\"; material = \"InP\"; thickness = 15.0; }\n);\n";
  ew_stack *st = NULL;
  ew_result *r = tu_solve_text(fx->cat, q, &st, NULL);
  assert_non_null(r);
  char *t = table_text(r);
  assert_non_null(strstr(t, " x      y    from_nm"));
  const char *row = strstr(t, "\n  2   w ");
  assert_non_null(row);
  char mat[32];
  double x, y;
  int n;
  assert_int_equal(sscanf(row, " %d %*s %31s %lf %lf", &n, mat, &x, &y), 4);
  assert_string_equal(mat, "InGaAsP");
  assert_true(x == 0.28 && y == 0.61); /* %.3f of both, read back */
  free(t);
  ew_result_free(r);
  ew_stack_free(st);
  /* the detector well has no quaternary: no y column */
  t = table_text(fx->res);
  assert_null(strstr(t, " x      y    from_nm"));
  assert_non_null(strstr(t, " x    from_nm"));
  free(t);
}

/* 1 when the table lists line "lower-upper" (intersubband) or "upper-lower" (interband) */
static int listed(const char *table, const char *name) {
  char pat[48];
  snprintf(pat, sizeof pat, "\n  %s ", name);
  return strstr(table, pat) != NULL;
}

/* The table leaves out lines below line_min_strength (f for intersubband, overlap for
 * interband; by default 1e-3) and says how many; 0 lists every line.  In the symmetric
 * detector well hh1-hh3 and e1-hh2 are forbidden by parity (even-even intersubband, odd
 * overlap; G. Bastard, Wave Mechanics Applied to Semiconductor Heterostructures, Les
 * Éditions de Physique (1988), ch. III (from memory)), so both must be hidden. */
static void test_lines_threshold(void **state) {
  fixture *fx = *state;
  char *t = table_text(fx->res);
  size_t n_isb_hidden = 0, n_ib_hidden = 0;
  for (size_t i = 0; i < ew_result_line_count(fx->res); i++) {
    const ew_line *ln = ew_result_line(fx->res, i);
    const ew_state *up = ew_result_state(fx->res, ln->upper), *lo = ew_result_state(fx->res, ln->lower);
    char name[40];
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    snprintf(name, sizeof name, "%s-%s", isb ? lo->label : up->label, isb ? up->label : lo->label);
    double strength = isb ? ln->oscillator_strength : ln->overlap;
    if (strength < 1e-3) *(isb ? &n_isb_hidden : &n_ib_hidden) += 1;
    if (listed(t, name) != (strength >= 1e-3))
      print_error("%s (strength %g) listed %d\n", name, strength, listed(t, name));
    assert_int_equal(listed(t, name), strength >= 1e-3);
  }
  assert_false(listed(t, "hh1-hh3"));
  assert_false(listed(t, "e1-hh2"));
  assert_true(listed(t, "e1-e2") && listed(t, "e1-hh1") && listed(t, "e1-hh3"));
  char note[128];
  snprintf(note, sizeof note, "(%zu line%s with f < 0.001 not listed", n_isb_hidden,
           n_isb_hidden == 1 ? "" : "s");
  assert_true(n_isb_hidden >= 1);
  assert_non_null(strstr(t, note));
  snprintf(note, sizeof note, "(%zu lines with overlap < 0.001 not listed", n_ib_hidden);
  assert_true(n_ib_hidden >= 2);
  assert_non_null(strstr(t, note));
  free(t);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  opt.line_min_strength = 0.0;
  ew_result *all = NULL;
  ew_error err = {0};
  assert_int_equal(ew_solve(fx->st, &opt, &all, &err), EW_OK);
  t = table_text(all);
  assert_true(listed(t, "hh1-hh3") && listed(t, "e1-hh2"));
  assert_null(strstr(t, "not listed"));
  free(t);
  ew_result_free(all);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_pl_peak_nm_json),
      cmocka_unit_test(test_pl_peak_nm_csv),
      cmocka_unit_test(test_pl_peak_nm_table),
      cmocka_unit_test(test_layer_table_y),
      cmocka_unit_test(test_lines_threshold),
  };
  return cmocka_run_group_tests_name("practitioner_output", tests, setup, teardown);
}
