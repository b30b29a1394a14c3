/* test_merge.c — sweep_merge.c: the parts of a sharded sweep joined into the one-machine
 * output.  The reference is the same sweep computed once without shards (ew_wf_sweep, CSV and
 * JSON): the merge of its parts must equal it byte for byte, whatever the order of the parts;
 * and the refusals (a part missing, given twice, of another sweep, cut short) must name the
 * part at fault and write nothing.  match_part.c likewise: a match's merged parts equal the
 * match computed whole, byte for byte.  tests/cluster_cli.sh checks the same through `epiwell
 * merge`, tests/slurm_test.sh through a real Slurm job array. */
#include "testutil.h"

#include "workflow.h"

#define NPART 3

typedef struct {
  ew_catalogue *cat;
  ew_wf_model *m;
  ew_wf_range r[2];
  size_t nr;
  char dir[512];
  char csv[NPART][600], json[NPART][600];
  char *one_csv, *one_json; /* the one-machine outputs */
} fixture;

static char *slurp(const char *path) {
  FILE *f = fopen(path, "rb");
  assert_non_null(f);
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  int c;
  while ((c = fgetc(f)) != EOF) fputc(c, m);
  fclose(f);
  fclose(m);
  return buf;
}

/* One sweep to paths csv/json (either may be NULL); part k of n (n = 0: whole). */
static void sweep_to(fixture *fx, size_t k, size_t n, const char *csv, const char *json,
                     size_t min_levels) {
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 2;
  o.shard_k = k;
  o.shard_n = n;
  o.min_levels = min_levels;
  FILE *fc = csv ? fopen(csv, "w") : NULL, *fj = json ? fopen(json, "w") : NULL;
  ew_error err = {0};
  assert_int_equal(ew_wf_sweep(fx->m, fx->r, fx->nr, &o, fc, fj, &err), EW_OK);
  if (fc) fclose(fc);
  if (fj) fclose(fj);
}

/* A grid of 3 widths x 4 temperatures (12 points) in 3 parts of 4. */
static int setup(void **state) {
  static fixture fx;
  ew_error err = {0};
  if (tu_load_catalogue(&fx.cat) || tu_mkdtemp("merge", fx.dir, sizeof fx.dir)) return -1;
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  opt.error_estimate = 0;
  opt.excitons = 0;
  if (ew_wf_model_open("examples/detector_well.cfg", fx.cat, &opt, &fx.m, &err) != EW_OK ||
      ew_wf_range_parse("well.thickness=5:6:0.5", 1, "--vary", &fx.r[0], &err) != EW_OK ||
      ew_wf_range_parse("temperature=60:300:80", 1, "--vary", &fx.r[1], &err) != EW_OK)
    return -1;
  fx.nr = 2;
  char one_csv[600], one_json[600];
  snprintf(one_csv, sizeof one_csv, "%s/one.csv", fx.dir);
  snprintf(one_json, sizeof one_json, "%s/one.json", fx.dir);
  sweep_to(&fx, 0, 0, one_csv, one_json, 0);
  fx.one_csv = slurp(one_csv);
  fx.one_json = slurp(one_json);
  for (size_t k = 0; k < NPART; k++) {
    snprintf(fx.csv[k], sizeof fx.csv[k], "%s/p%zu.csv", fx.dir, k + 1);
    snprintf(fx.json[k], sizeof fx.json[k], "%s/p%zu.json", fx.dir, k + 1);
    sweep_to(&fx, k + 1, NPART, fx.csv[k], fx.json[k], 0);
  }
  *state = &fx;
  return 0;
}

static int teardown(void **state) {
  fixture *fx = *state;
  free(fx->one_csv);
  free(fx->one_json);
  ew_wf_model_free(fx->m);
  ew_catalogue_free(fx->cat);
  tu_rm_tree(fx->dir);
  return 0;
}

/* Merge paths; *out the merged text (caller frees). */
static ew_status merge(const fixture *fx, int with_ranges, size_t n, const char *const *paths,
                       char **out, ew_error *err) {
  size_t len = 0;
  FILE *m = open_memstream(out, &len);
  assert_non_null(m);
  ew_status rc = ew_wf_sweep_merge(with_ranges ? fx->r : NULL, with_ranges ? fx->nr : 0, n,
                                   paths, m, err);
  fclose(m);
  return rc;
}

static void parts_in_any_order_equal_one_machine(void **state) {
  fixture *fx = *state;
  static const int orders[3][NPART] = {{0, 1, 2}, {2, 0, 1}, {1, 2, 0}};
  for (int o = 0; o < 3; o++) {
    const char *pj[NPART], *pc[NPART];
    for (int i = 0; i < NPART; i++) pj[i] = fx->json[orders[o][i]], pc[i] = fx->csv[orders[o][i]];
    char *got = NULL;
    ew_error err = {0};
    assert_int_equal(merge(fx, 0, NPART, pj, &got, &err), EW_OK);
    assert_string_equal(got, fx->one_json);
    free(got);
    assert_int_equal(merge(fx, 1, NPART, pj, &got, &err), EW_OK); /* checked against --vary */
    assert_string_equal(got, fx->one_json);
    free(got);
    assert_int_equal(merge(fx, 1, NPART, pc, &got, &err), EW_OK);
    assert_string_equal(got, fx->one_csv);
    free(got);
  }
  /* the merged JSON says it is the whole sweep: 12 points = 3 x 4, by hand */
  assert_non_null(strstr(fx->one_json, "\"points_total\":12,\"shard\":{\"k\":1,\"n\":1,\"first\":0,\"count\":12}"));
}

/* A refusal: the status, the part named, the words, and nothing written. */
static void refused(const fixture *fx, int with_ranges, size_t n, const char *const *paths,
                    ew_status want, const char *file, const char *words) {
  char *got = NULL;
  ew_error err = {0};
  assert_int_equal(merge(fx, with_ranges, n, paths, &got, &err), want);
  assert_string_equal(got, "");
  free(got);
  if (file) assert_string_equal(err.file, file);
  if (!strstr(err.message, words)) fail_msg("'%s' does not say '%s'", err.message, words);
}

static void missing_duplicated_and_foreign_parts_are_refused(void **state) {
  fixture *fx = *state;
  const char *j02[] = {fx->json[0], fx->json[2]};
  refused(fx, 0, 2, j02, EW_ERR_INPUT, NULL, "part 2 of 3 is missing");
  const char *c02[] = {fx->csv[0], fx->csv[2]};
  refused(fx, 1, 2, c02, EW_ERR_INPUT, NULL, "points 4..7 of 12 are in no part");
  const char *c01[] = {fx->csv[0], fx->csv[1]};
  refused(fx, 1, 2, c01, EW_ERR_INPUT, NULL, "points 8..11 of 12 are in no part");
  const char *j0012[] = {fx->json[0], fx->json[0], fx->json[1], fx->json[2]};
  refused(fx, 0, 4, j0012, EW_ERR_INPUT, fx->json[0], "part 1 of 3 given twice");
  const char *c0112[] = {fx->csv[0], fx->csv[1], fx->csv[1], fx->csv[2]};
  refused(fx, 1, 4, c0112, EW_ERR_INPUT, fx->csv[1], "point 4 is also in");
  const char *mixed[] = {fx->json[0], fx->csv[1], fx->json[2]};
  refused(fx, 0, 3, mixed, EW_ERR_INPUT, fx->csv[1], "a CSV part among JSON parts");
  const char *c012[] = {fx->csv[0], fx->csv[1], fx->csv[2]};
  refused(fx, 0, 3, c012, EW_ERR_USAGE, NULL, "give the sweep's --vary");
}

/* A part of another sweep: more level columns (--levels), another range, cut short. */
static void foreign_and_cut_parts_are_refused(void **state) {
  fixture *fx = *state;
  char other_j[600], other_c[600], cut[600];
  snprintf(other_j, sizeof other_j, "%s/other.json", fx->dir);
  snprintf(other_c, sizeof other_c, "%s/other.csv", fx->dir);
  sweep_to(fx, 2, NPART, other_c, other_j, 6);
  const char *j[] = {fx->json[0], other_j, fx->json[2]};
  refused(fx, 0, 3, j, EW_ERR_INPUT, other_j, "not a part of the sweep");
  const char *c[] = {fx->csv[0], other_c, fx->csv[2]};
  refused(fx, 1, 3, c, EW_ERR_INPUT, other_c, "cells");
  ew_wf_range wide[2] = {fx->r[0], fx->r[1]};
  wide[0].to = 6.5; /* 4 widths: 16 points */
  char *got = NULL;
  ew_error err = {0};
  size_t len = 0;
  FILE *m = open_memstream(&got, &len);
  const char *pc[] = {fx->csv[0], fx->csv[1], fx->csv[2]};
  assert_int_equal(ew_wf_sweep_merge(wide, 2, 3, pc, m, &err), EW_ERR_INPUT);
  fclose(m);
  assert_string_equal(got, "");
  assert_non_null(strstr(err.message, "points 12..15 of 16 are in no part"));
  free(got);
  /* the JSON part 2 without its last line */
  snprintf(cut, sizeof cut, "%s/cut.json", fx->dir);
  char *p2 = slurp(fx->json[1]);
  char *last = strrchr(p2, '{');
  *last = '\0';
  FILE *f = fopen(cut, "w");
  fputs(p2, f);
  fclose(f);
  free(p2);
  const char *jc[] = {fx->json[0], cut, fx->json[2]};
  refused(fx, 0, 3, jc, EW_ERR_INPUT, cut, "cut short");
  /* the CSV part 2 without its first row: one point (4) in no part */
  char *c2 = slurp(fx->csv[1]), lost[600];
  snprintf(lost, sizeof lost, "%s/lost.csv", fx->dir);
  f = fopen(lost, "w");
  fputs(strchr(c2, '\n') + 1, f);
  fclose(f);
  free(c2);
  const char *cl[] = {fx->csv[0], lost, fx->csv[2]};
  refused(fx, 1, 3, cl, EW_ERR_INPUT, NULL, "points 4..4 of 12 are in no part");
}

/* ---- the parts of a sharded match (match_part.c) --------------------------------------- */
/* The JSON of a match over ranges r (nr of them) at lines/targets, whole (n = 0) or merged
 * from its n parts written to files and joined in reverse order (caller frees). */
static char *match_json(fixture *fx, const char *const *specs, size_t nr, const char *const *lines,
                        const char *const *targets, const char *tol, size_t samples, size_t n) {
  ew_wf_range r[2];
  ew_wf_quantity q[2], t;
  ew_error err = {0};
  for (size_t i = 0; i < nr; i++) {
    assert_int_equal(ew_wf_range_parse(specs[i], 0, "--vary", &r[i], &err), EW_OK);
    assert_int_equal(ew_wf_quantity_parse(targets[i], 0, "--target", &q[i], &err), EW_OK);
  }
  if (tol) assert_int_equal(ew_wf_quantity_parse(tol, 1, "--tolerance", &t, &err), EW_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *out = open_memstream(&buf, &len);
  assert_non_null(out);
  char paths[4][600];
  const char *pp[4];
  for (size_t k = n ? 1 : 0; k <= n; k++) {
    ew_wf_match_opt o = {.threads = 2, .samples = samples, .shard_k = k, .shard_n = n};
    ew_wf_match_result res;
    assert_int_equal(ew_wf_match(fx->m, r, nr, lines, q, nr, tol ? &t : NULL, &o, &res, &err),
                     EW_OK);
    if (n == 0) {
      ew_wf_match_print_json(&res, out);
    } else {
      snprintf(paths[k - 1], sizeof paths[k - 1], "%s/match%zu.json", fx->dir, k);
      pp[n - k] = paths[k - 1];
      FILE *f = fopen(paths[k - 1], "w");
      assert_non_null(f);
      ew_wf_match_part_write(&res, f);
      fclose(f);
    }
    ew_wf_match_result_free(&res);
    if (n == 0) break;
  }
  if (n) assert_int_equal(ew_wf_match_merge(n, pp, out, &err), EW_OK);
  fclose(out);
  return buf;
}

/* Merged parts = the whole match byte for byte: one unknown with a tolerance, one without a
 * solution (the message and the reach come from all parts), more parts than intervals, and
 * two unknowns (Newton's starts chosen again over all parts). */
static void match_parts_equal_the_whole_match(void **state) {
  fixture *fx = *state;
  struct {
    const char *specs[2], *lines[2], *targets[2], *tol;
    size_t nr, samples, n;
    const char *must; /* in the whole match's JSON: it is the case meant */
  } cases[] = {
      {{"well.thickness=4:9"}, {"e1-e2"}, {"9.0um"}, "0.002eV", 1, 0, 3, "\"uncertainty\":"},
      {{"well.thickness=4:9"}, {"e1-e2"}, {"0.3eV"}, NULL, 1, 0, 2, "\"solutions\":[]"},
      {{"well.thickness=4:9"}, {"e1-e2"}, {"9.0um"}, NULL, 1, 3, 4, "\"value\":6.4"},
      /* the root (6.48 nm) in the first interval of part 2, [6, 7] */
      {{"well.thickness=5:7"}, {"e1-e2"}, {"9.0um"}, NULL, 1, 3, 2, "\"value\":6.4"},
      {{"well.thickness=5:8", "temperature=50:300"}, {"e1-e2", "e1-hh1"}, {"0.1393eV", "1.5066eV"},
       NULL, 2, 6, 3, "\"value\":[6."},
      {{"well.thickness=5:8", "temperature=50:300"}, {"e1-e2", "e1-hh1"}, {"0.3eV", "1.5066eV"},
       NULL, 2, 5, 2, "\"solutions\":[]"},
  };
  for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
    char *whole = match_json(fx, cases[c].specs, cases[c].nr, cases[c].lines, cases[c].targets,
                             cases[c].tol, cases[c].samples, 0);
    char *merged = match_json(fx, cases[c].specs, cases[c].nr, cases[c].lines, cases[c].targets,
                              cases[c].tol, cases[c].samples, cases[c].n);
    assert_non_null(strstr(whole, cases[c].must));
    assert_string_equal(merged, whole);
    free(whole);
    free(merged);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(parts_in_any_order_equal_one_machine),
      cmocka_unit_test(missing_duplicated_and_foreign_parts_are_refused),
      cmocka_unit_test(foreign_and_cut_parts_are_refused),
      cmocka_unit_test(match_parts_equal_the_whole_match),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
