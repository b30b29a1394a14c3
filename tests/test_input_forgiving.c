/* test_input_forgiving.c — the stack reader forgives what practitioners write (issue 17,
 * "Input"): a UTF-8 byte-order mark, compositions written in the material name, and specific
 * messages (with the right file:line) for a unit after a number, a decimal comma and an
 * unquoted name.  The notations are the trade's own (common practice); what x and y count
 * for each alloy is what the catalogue files say (x_is and y_is in materials/). */
#include <math.h>

#include "testutil.h"

#include "catalogue.h"

typedef struct {
  ew_catalogue *cat;
} fixture;

static int group_setup(void **state) {
  static fixture fx; /* test-only: lives for the whole run */
  if (tu_load_catalogue(&fx.cat) != 0) return -1;
  *state = &fx;
  return 0;
}

static int group_teardown(void **state) {
  fixture *fx = *state;
  ew_catalogue_free(fx->cat);
  return 0;
}

/* A three-layer stack with the well written as `well` (the text after material =). */
static void well_text(char *buf, size_t size, const char *head, const char *well) {
  snprintf(buf, size,
           "%stemperature = 77.0;\ngrid_step = 0.1;\nlayers = (\n"
           "  { name = \"lb\"; material = \"GaAs\"; thickness = 15.0; },\n"
           "  { name = \"well\"; material = %s; thickness = 6.0; },\n"
           "  { name = \"ub\"; material = \"GaAs\"; thickness = 15.0; }\n);\n",
           head, well);
}

/* Both texts read and solve, and give the same levels to the last bit (same arithmetic). */
static void assert_same_levels(const ew_catalogue *cat, const char *a, const char *b) {
  ew_stack *sa = NULL, *sb = NULL;
  ew_result *ra = tu_solve_text(cat, a, &sa, NULL), *rb = tu_solve_text(cat, b, &sb, NULL);
  assert_non_null(ra);
  assert_non_null(rb);
  size_t n = ew_result_state_count(ra);
  assert_true(n >= 2);
  assert_int_equal(n, ew_result_state_count(rb));
  for (size_t i = 0; i < n; i++) {
    const ew_state *x = ew_result_state(ra, i), *y = ew_result_state(rb, i);
    assert_string_equal(x->label, y->label);
    assert_true(x->energy_eV == y->energy_eV);
  }
  ew_result_free(ra), ew_result_free(rb);
  ew_stack_free(sa), ew_stack_free(sb);
}

static void test_bom(void **state) {
  fixture *fx = *state;
  /* UTF-8 BOM: U+FEFF encoded EF BB BF (RFC 3629, section 6) */
  const char *body = "temperature = 77.0;\ngrid_step = 0.1;\nlayers = (\n"
                     " { material = \"AlGaAs\"; x = 0.3; thickness = 15.0; },\n"
                     " { material = \"GaAs\"; thickness = 6.0; },\n"
                     " { material = \"AlGaAs\"; x = 0.3; thickness = 15.0; }\n);\n";
  char bom[1024];
  snprintf(bom, sizeof bom, "\xEF\xBB\xBF%s", body);
  assert_same_levels(fx->cat, body, bom);
  /* and a syntax error after it is still dated on its own line */
  snprintf(bom, sizeof bom, "\xEF\xBB\xBFtemperature = 300 K;\n%s", body + 20);
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(bom, "t.cfg", fx->cat, &st, &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 1);
}

/* text gives an input error at `line` whose message holds `want` */
static void assert_message(const ew_catalogue *cat, const char *text, int line, const char *want) {
  ew_stack *st = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_stack_read_string(text, "t.cfg", cat, &st, &err), EW_ERR_INPUT);
  assert_null(st);
  if (!strstr(err.message, want) || err.line != line)
    print_error("line %d, message: %s\n(want line %d, '%s')\n", err.line, err.message, line, want);
  assert_int_equal(err.line, line);
  assert_non_null(strstr(err.message, want));
}

static void test_syntax_messages(void **state) {
  fixture *fx = *state;
  const char *L = "layers = ( { material = \"GaAs\"; thickness = 8.0; } );\n";
  char t[512];
  snprintf(t, sizeof t, "# unit\ntemperature = 77.0;\nlayers = (\n  { material = \"GaAs\";\n"
           "    thickness = 8 nm; }\n);\n");
  assert_message(fx->cat, t, 5, "'thickness = 8 nm': write the number without a unit: nm is implied");
  snprintf(t, sizeof t, "\ntemperature = 300 K;\n%s", L);
  assert_message(fx->cat, t, 2, "write the number without a unit: K is implied");
  snprintf(t, sizeof t, "temperature = 300.0;\nlayers = (\n { material = \"AlGaAs\"; x = 0,3; "
           "thickness = 8.0; }\n);\n");
  assert_message(fx->cat, t, 3, "'x = 0,3': use a decimal point (x = 0.3)");
  snprintf(t, sizeof t, "temperature = 300.0;\n\nsubstrate = GaAs;\n%s", L);
  assert_message(fx->cat, t, 3, "quote the name (substrate = \"GaAs\";)");
  /* a different unit than the key's: the message names the key's unit */
  snprintf(t, sizeof t, "temperature = 300.0;\nlayers = ( { material = \"GaAs\"; thickness = 80 A; } );\n");
  assert_message(fx->cat, t, 2, "('thickness' is in nm)");
  /* a bare word where a boolean or a number belongs is not a name to quote */
  snprintf(t, sizeof t, "temperature = 300.0;\nnonparabolic = yes;\n%s", L);
  assert_message(fx->cat, t, 2, "'nonparabolic = yes': write true or false");
  snprintf(t, sizeof t, "layers = (\n { material = \"AlGaAs\";\n   x = three; thickness = 8.0; }\n);\n");
  assert_message(fx->cat, t, 3, "'x = three': write a number");
  /* an error the pre-scan does not recognise keeps the generic libconfig message */
  snprintf(t, sizeof t, "temperature = 300.0;\nlayers = ( { material = \"GaAs\"; thickness = 8.0; } ;\n");
  assert_message(fx->cat, t, 2, "libconfig syntax");
}

static void test_composition_names(void **state) {
  fixture *fx = *state;
  static const struct {
    const char *written, *keys;
  } cases[] = {
      /* AlGaAs: x = Al fraction (materials/AlGaAs.cfg) */
      {"\"Al0.3Ga0.7As\"", "\"AlGaAs\"; x = 0.3"},
      /* InGaAs: x = In fraction, either order of the group-III elements (materials/InGaAs.cfg) */
      {"\"In0.53Ga0.47As\"", "\"InGaAs\"; x = 0.53"},
      {"\"Ga0.47In0.53As\"", "\"InGaAs\"; x = 0.53"},
      /* InGaAsP: x = Ga (group III), y = As (group V) (materials/InGaAsP.cfg) */
      {"\"In0.72Ga0.28As0.61P0.39\"", "\"InGaAsP\"; x = 0.28; y = 0.61"},
      /* GaAsP: x = As fraction (materials/GaAsP.cfg) */
      {"\"GaAs0.8P0.2\"", "\"GaAsP\"; x = 0.8"},
      /* AlGaInAs: x = Al, y = Ga (materials/AlGaInAs.cfg) */
      {"\"Al0.1Ga0.2In0.7As\"", "\"AlGaInAs\"; x = 0.1; y = 0.2"},
  };
  for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
    char a[1024], b[1024];
    well_text(a, sizeof a, "", cases[k].written);
    well_text(b, sizeof b, "", cases[k].keys);
    /* wells of lower gap than GaAs need GaAs barriers; AlGaAs and GaAsP are barriers here,
     * so put them in an AlAs-rich frame where they are wells */
    if (k == 0 || k == 4) {
      for (char *t[2] = {a, b}, **s = t; s < t + 2; s++) {
        char *p;
        while ((p = strstr(*s, "\"GaAs\"; thickness = 15.0")) != NULL)
          memcpy(p, "\"AlAs\"", 6);
      }
    }
    assert_same_levels(fx->cat, a, b);
  }
}

static void test_composition_refused(void **state) {
  fixture *fx = *state;
  char t[1024];
  well_text(t, sizeof t, "", "\"Al0.3Ga0.7As\"; x = 0.3");
  assert_message(fx->cat, t, 5, "x given twice");
  well_text(t, sizeof t, "", "\"In0.72Ga0.28As0.61P0.39\"; y = 0.61");
  assert_message(fx->cat, t, 5, "x given twice");
  well_text(t, sizeof t, "", "\"Al0.3Ga0.6As\"");
  assert_message(fx->cat, t, 5, "group-III fractions add up to 0.9, not 1");
  well_text(t, sizeof t, "", "\"Al0.3GaAs\"");
  assert_message(fx->cat, t, 5, "write the fraction of every mixed group-III element");
  well_text(t, sizeof t, "", "\"Al0.3In0.7Sb\"");
  assert_message(fx->cat, t, 5, "the catalogue has no alloy of AlInSb");
  /* the substrate takes the notation too, and refuses it twice */
  snprintf(t, sizeof t, "substrate = { material = \"In0.53Ga0.47As\"; x = 0.53; };\n"
           "layers = ( { material = \"InP\"; thickness = 8.0; } );\n");
  assert_message(fx->cat, t, 1, "x given twice");
}

/* substrate = "In0.53Ga0.47As" strains the layers as substrate { InGaAs, x = 0.53 } does */
static void test_composition_substrate(void **state) {
  fixture *fx = *state;
  const char *a = "temperature = 77.0;\ngrid_step = 0.1;\nsubstrate = \"In0.53Ga0.47As\";\n"
                  "layers = ( { material = \"InP\"; thickness = 15.0; },\n"
                  " { material = \"InAs\"; thickness = 3.0; }, { material = \"InP\"; thickness = 15.0; } );\n";
  const char *b = "temperature = 77.0;\ngrid_step = 0.1;\n"
                  "substrate = { material = \"InGaAs\"; x = 0.53; };\n"
                  "layers = ( { material = \"InP\"; thickness = 15.0; },\n"
                  " { material = \"InAs\"; thickness = 3.0; }, { material = \"InP\"; thickness = 15.0; } );\n";
  assert_same_levels(fx->cat, a, b);
}

/* thickness_ml = 1.5 (an average coverage) is a continuum slab of 1.5 × a/2: GaAs
 * a = 0.565325 nm at 300 K (I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89,
 * 5815 (2001), Table I), so 0.42398... nm; it solves exactly as that thickness in nm does. */
static void test_fractional_monolayers(void **state) {
  fixture *fx = *state;
  const char *ml = "temperature = 300.0;\ngrid_step = 0.1;\nlayers = (\n"
                   " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
                   " { name = \"w\"; material = \"GaAs\"; thickness_ml = 13.5; },\n"
                   " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n);\n";
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(ml, "t.cfg", fx->cat, &st, &err), EW_OK);
  const double ml_nm = 0.565325 / 2.0;
  TU_NEAR(st->layers[1].thickness_nm, 13.5 * ml_nm, 1e-12,
          "the catalogue's GaAs lattice constant is the review's to all digits");
  /* the same slab in nm, written to the digits %.17g keeps */
  char nm[1024];
  snprintf(nm, sizeof nm, "temperature = 300.0;\ngrid_step = 0.1;\nlayers = (\n"
           " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
           " { name = \"w\"; material = \"GaAs\"; thickness = %.17g; },\n"
           " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n);\n",
           st->layers[1].thickness_nm);
  ew_stack_free(st);
  assert_same_levels(fx->cat, ml, nm);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_bom),
      cmocka_unit_test(test_syntax_messages),
      cmocka_unit_test(test_composition_names),
      cmocka_unit_test(test_composition_refused),
      cmocka_unit_test(test_composition_substrate),
      cmocka_unit_test(test_fractional_monolayers),
  };
  return cmocka_run_group_tests_name("input_forgiving", tests, group_setup, group_teardown);
}
