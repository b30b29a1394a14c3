/* test_validity.c — the warnings that say where a number leaves the model (README
 * "Warnings"): their machine-readable codes (library and JSON), the strain and substrate
 * checks (stack_caveats.c) and the level checks (level_caveats.c), and the codes that reach
 * sweeps, matches and tolerance tables.  Each check names its outside reference beside it;
 * the Matthews–Blakeslee thicknesses are recomputed here by a few lines of our own
 * (mb_hc_nm), not with the library's function. */
#include <math.h>

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

int main(int argc, char **argv) {
  (void)argc;
  argv0 = argv[0];
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(codes_library_and_json),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
