/* test_practitioner_tolerance.c — what issue 17 adds to `epiwell tolerance`: the spread of the
 * lines from stated growth tolerances (JSON "spread", the table's last block), the PL peaks of
 * the monolayer ladder, and the table without the all-zero thickness rows of thick barriers.
 *
 * The spread is checked against finite differences this test computes itself: it writes the
 * detector well's stack text with one thickness or composition moved, solves it, and takes
 * central differences of E(e1) − E(hh1) and E(e2) − E(e1); the monolayers are a/2 of the
 * layer (Vegard's law between the review's lattice constants, typed here).  The library's
 * spread uses Hellmann–Feynman derivatives instead, so the two meet only if both are right. */
#include <math.h>

#include "roundtrip.h"

/* hc in eV·nm from the exact SI values (CODATA 2018: E. Tiesinga et al., Rev. Mod. Phys. 93,
 * 025010 (2021)) */
#define HC_EVNM 1239.84198433200208
/* lattice constants at 300 K, Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001),
 * Table I/III: GaAs 5.65325 Å, AlAs 5.6611 Å (from memory) */
#define A_GAAS_NM 0.565325
#define A_ALAS_NM 0.56611

static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  ew_error err = {0};
  return ew_catalogue_load("materials", &cat, &err) == EW_OK ? 0 : -1;
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

/* The detector well of examples/detector_well.cfg with its five numbers given; the result
 * borrows its stack, so both are kept together (free_det). */
typedef struct {
  ew_stack *st;
  ew_result *r;
} det;

static void free_det(det d) {
  ew_result_free(d.r);
  ew_stack_free(d.st);
}

static det solve_det(double t1, double x1, double t2, double t3, double x3) {
  char text[1024];
  snprintf(text, sizeof text,
           "temperature = 77.0;\nlayers = (\n"
           "  { name = \"lower_barrier\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = %.17g; },\n"
           "  { name = \"upper_barrier\"; material = \"AlGaAs\"; x = %.17g; thickness = %.17g; }\n);\n",
           x1, t1, t2, x3, t3);
  ew_stack *st = NULL;
  ew_error err = {0};
  assert_int_equal(ew_stack_read_string(text, "det", cat, &st, &err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  ew_result *res = NULL;
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_OK);
  return (det){st, res};
}

static double level(const ew_result *r, const char *label) {
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (!strcmp(ew_result_state(r, i)->label, label)) return ew_result_state(r, i)->energy_eV;
  return NAN;
}

/* the two lines checked: 0 = e1-hh1 (interband), 1 = e1-e2 (intersubband) */
static void lines_of(const ew_result *r, double out[2]) {
  out[0] = level(r, "e1") - level(r, "hh1");
  out[1] = level(r, "e2") - level(r, "e1");
}

static char *tolerance_json(double rate, const char *ladder) {
  ew_tolerance *t = NULL;
  ew_error err = {0};
  assert_int_equal(
      ew_tolerance_compute("examples/detector_well.cfg", cat, NULL, 0.01, ladder, 2, &t, &err),
      EW_OK);
  if (!ladder) assert_int_equal(ew_tolerance_set_growth_rate(t, rate, &err), EW_OK);
  else assert_int_equal(ew_tolerance_set_growth_rate(t, rate, &err), EW_ERR_USAGE);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_tolerance_write_json(t, m, &err), EW_OK);
  fclose(m);
  ew_tolerance_free(t);
  return buf;
}

static size_t item_index(const rj *doc, const char *name) {
  const rj *items = rj_get(doc, "items");
  for (size_t i = 0; i < items->n; i++)
    if (!strcmp(rj_str(&items->item[i], "name"), name)) return i;
  fail_msg("no item %s", name);
  return 0;
}

/* Spread from stated tolerances (±1 ML of each layer, ±0.01 in x of each barrier, growth rate
 * ±2 %) against central differences of separate solves.  Steps 0.02 nm and 0.002 in x: the
 * O(h²) truncation is ~1e-5 relative (the lines are smooth in t and x) and the solver's noise
 * (~1e-7 eV after Richardson) over 2h gives ~1e-5 eV/nm; the HF derivatives agree with central
 * differences to ~1e-3 relative (the tolerance table's own HF/FD columns), so 1 % on the
 * spread, several times that. */
static void spread_is_first_order_of_separate_solves(void **state) {
  (void)state;
  const double t0[3] = {30.0, 6.2, 30.0}, x0 = 0.28, ht = 0.02, hx = 0.002, rate = 2.0;
  const double ml[3] = {(A_GAAS_NM + x0 * (A_ALAS_NM - A_GAAS_NM)) / 2, A_GAAS_NM / 2,
                        (A_GAAS_NM + x0 * (A_ALAS_NM - A_GAAS_NM)) / 2};
  double dt[3][2], dxd[2][2]; /* dE/dt per layer, dE/dx per barrier, for the two lines */
  for (int k = 0; k < 3; k++) {
    double t[2][3];
    for (int s = 0; s < 2; s++)
      for (int q = 0; q < 3; q++) t[s][q] = t0[q] + (q == k ? (s ? ht : -ht) : 0.0);
    double lo[2], hi[2];
    det a = solve_det(t[0][0], x0, t[0][1], t[0][2], x0);
    det b = solve_det(t[1][0], x0, t[1][1], t[1][2], x0);
    lines_of(a.r, lo);
    lines_of(b.r, hi);
    for (int l = 0; l < 2; l++) dt[k][l] = (hi[l] - lo[l]) / (2 * ht);
    free_det(a);
    free_det(b);
  }
  for (int k = 0; k < 2; k++) {
    double lo[2], hi[2];
    det a = solve_det(30, k ? x0 : x0 - hx, 6.2, 30, k ? x0 - hx : x0);
    det b = solve_det(30, k ? x0 : x0 + hx, 6.2, 30, k ? x0 + hx : x0);
    lines_of(a.r, lo);
    lines_of(b.r, hi);
    for (int l = 0; l < 2; l++) dxd[k][l] = (hi[l] - lo[l]) / (2 * hx);
    free_det(a);
    free_det(b);
  }
  char *buf = tolerance_json(rate, NULL);
  rj doc;
  assert_int_equal(rj_parse(buf, &doc), 0);
  const rj *sp = rj_get(&doc, "spread");
  assert_non_null(sp);
  TU_NEAR(rj_num(sp, "growth_rate_percent"), rate, 0, "the stated rate");
  TU_NEAR(rj_num(sp, "dx"), 0.01, 0, "the stated dx");
  const char *names[2] = {"e1-hh1", "e1-e2"};
  for (int l = 0; l < 2; l++) {
    size_t i = item_index(&doc, names[l]);
    double th = 0, co = 0, ra = 0, worst = 0;
    for (int k = 0; k < 3; k++) {
      th += pow(dt[k][l] * ml[k], 2);
      worst += fabs(dt[k][l] * ml[k]);
      ra += dt[k][l] * t0[k];
    }
    for (int k = 0; k < 2; k++) {
      co += pow(dxd[k][l] * 0.01, 2);
      worst += fabs(dxd[k][l] * 0.01);
    }
    ra = fabs(ra) * rate / 100;
    worst += ra;
    double rss = sqrt(th + co + ra * ra);
    th = sqrt(th);
    co = sqrt(co);
    TU_NEAR(rj_get(sp, "thickness_eV")->item[i].num, th, 0.01 * th, "±1 ML per layer, RSS");
    TU_NEAR(rj_get(sp, "composition_eV")->item[i].num, co, 0.01 * co, "±0.01 per barrier, RSS");
    TU_NEAR(rj_get(sp, "growth_rate_eV")->item[i].num, ra, 0.01 * ra, "±2 % of every thickness");
    TU_NEAR(rj_get(sp, "rss_eV")->item[i].num, rss, 0.01 * rss, "all in quadrature");
    TU_NEAR(rj_get(sp, "worst_case_eV")->item[i].num, worst, 0.01 * worst, "all aligned");
    /* a plausibility bound of its own: a 6.2 nm GaAs well's e1-hh1 moves ~4-5 meV per ML
     * (the ladder's neighbouring rungs), so the spread is meV, not µeV or eV */
    assert_true(rss > 1e-3 && rss < 2e-2);
  }
  rj_free(&doc);
  free(buf);
}

/* The ladder's PL peaks: at every rung, the pl_peak_eV of the e1-hh1 line of a separate
 * solve at that width (the exciton pass runs in each), and pl_peak_nm = hc / pl_peak_eV with
 * hc typed above; the PL peak lies below the band-to-band line by a binding of a few meV
 * (GaAs bulk exciton 4.2 meV, 2D limit 4×: Bastard, Wave Mechanics Applied to Semiconductor
 * Heterostructures (1988), ch. VIII (from memory)). */
static void ladder_pl_peaks_are_separate_solves(void **state) {
  (void)state;
  char *buf = tolerance_json(0, "well");
  rj doc;
  assert_int_equal(rj_parse(buf, &doc), 0);
  const rj *lines = rj_get(&doc, "lines"), *th = rj_get(&doc, "thickness_nm"), *l = NULL;
  for (size_t i = 0; i < lines->n; i++) {
    const rj *it = &lines->item[i];
    if (!strcmp(rj_str(it, "name"), "e1-hh1")) l = it;
    if (!strcmp(rj_str(it, "name"), "e1-e2")) assert_null(rj_get(it, "pl_peak_eV"));
  }
  assert_non_null(l);
  const rj *pe = rj_get(l, "pl_peak_eV"), *pn = rj_get(l, "pl_peak_nm"), *en = rj_get(l, "energy_eV");
  assert_int_equal(pe->n, 5);
  for (int q = 0; q < 5; q++) {
    TU_NEAR(pn->item[q].num, HC_EVNM / pe->item[q].num, 3e-9 * pn->item[q].num, "hc/E");
    double b = en->item[q].num - pe->item[q].num;
    assert_true(b > 3e-3 && b < 17e-3);
    if (q != 0 && q != 4) continue; /* the outer rungs: the solve is the same code for all */
    det d = solve_det(30, 0.28, th->item[q].num, 30, 0.28);
    const ew_result *r = d.r;
    double want = NAN;
    for (size_t i = 0; i < ew_result_line_count(r); i++) {
      const ew_line *ln = ew_result_line(r, i);
      if (ln->kind == EW_LINE_INTERBAND && !strcmp(ew_result_state(r, ln->upper)->label, "e1") &&
          !strcmp(ew_result_state(r, ln->lower)->label, "hh1"))
        want = ln->pl_peak_eV;
    }
    TU_NEAR(pe->item[q].num, want, 1e-9 * want, "the rung's own solve (%.10g)");
    free_det(d);
  }
  rj_free(&doc);
  free(buf);
}

/* The table: no "-0.000", the thick barriers' thickness columns left out with one note, the
 * well's rows kept, and the spread block with the rss of e1-hh1 the JSON gives (to the table's
 * three decimals in meV). */
static void table_drops_zero_rows(void **state) {
  (void)state;
  ew_tolerance *t = NULL;
  ew_error err = {0};
  assert_int_equal(
      ew_tolerance_compute("examples/detector_well.cfg", cat, NULL, 0.01, NULL, 2, &t, &err),
      EW_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  assert_int_equal(ew_tolerance_write_table(t, m, &err), EW_OK);
  fclose(m);
  ew_tolerance_free(t);
  assert_null(strstr(buf, "-0.000"));
  assert_non_null(strstr(buf, "(thickness moves no line by 0.0005 meV for -/+1 ML: columns left out)"));
  const char *well = strstr(buf, "layer 2 well");
  assert_non_null(well);
  assert_non_null(strstr(well, "-1ML_meV"));
  const char *sp = strstr(buf, "\nSpread of the lines");
  assert_non_null(sp);
  const char *row = strstr(sp, "\n  e1-hh1 ");
  assert_non_null(row);
  double e, th, co, ra, rss, worst, dl;
  assert_int_equal(sscanf(row, " e1-hh1 %lf %lf %lf %lf %lf %lf %lf", &e, &th, &co, &ra, &rss,
                          &worst, &dl), 7);
  char *js = tolerance_json(0, NULL);
  rj doc;
  assert_int_equal(rj_parse(js, &doc), 0);
  size_t i = item_index(&doc, "e1-hh1");
  double want = rj_get(rj_get(&doc, "spread"), "rss_eV")->item[i].num;
  TU_NEAR(rss, 1e3 * want, 0.0005, "table rss_meV = JSON rss_eV (three decimals)");
  TU_NEAR(ra, 0, 0, "no --rate: no growth-rate term");
  /* d_lambda = λ² dE / hc = hc dE / E² (nm) */
  TU_NEAR(dl, HC_EVNM * want / (e * e), 0.005, "d_lambda in nm (two decimals)");
  rj_free(&doc);
  free(js);
  free(buf);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(spread_is_first_order_of_separate_solves),
      cmocka_unit_test(ladder_pl_peaks_are_separate_solves),
      cmocka_unit_test(table_drops_zero_rows),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
