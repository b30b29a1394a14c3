/* test_text.c — the "did you mean" rule of src/text.h (case-insensitive Levenshtein edits,
 * ties to the better letter case, suggestions only within max(2, len/3) edits) and the
 * UTF-8 display width.
 * Sources: the distances are the standard textbook examples of the Levenshtein distance
 * (V. I. Levenshtein, Sov. Phys. Dokl. 10, 707 (1966); kitten → sitting = 3 and
 * flaw → lawn = 2 as given in the usual presentations, from memory); the rule's cases
 * follow its statement in src/text.h. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <string.h>

#include "text.h"

static void test_levenshtein(void **state) {
  (void)state;
  assert_int_equal(ew_text_distance("kitten", "sitting"), 3); /* textbook (from memory) */
  assert_int_equal(ew_text_distance("flaw", "lawn"), 2);      /* textbook (from memory) */
  assert_int_equal(ew_text_distance("", "abc"), 3);           /* three insertions */
  assert_int_equal(ew_text_distance("abc", "abc"), 0);
  /* letter case is ignored (the rule in text.h) */
  assert_int_equal(ew_text_distance("GAAS", "gaas"), 0);
  assert_int_equal(ew_text_distance("Gaas", "GaAs"), 0);
}

static void test_rule(void **state) {
  (void)state;
  static const char *const names[] = {"GAAS", "GaAs", "AlAs"};
  /* 0 edits to both "GAAS" and "GaAs": the one with fewer case mismatches wins, not the first */
  assert_string_equal(ew_text_nearest("Gaas", names, 3), "GaAs");
  assert_string_equal(ew_text_nearest("gAAS", names, 3), "GAAS");
  /* one edit: suggested */
  assert_string_equal(ew_text_nearest("AlAss", names, 3), "AlAs");
  /* limit max(2, len/3): "thicknes" (8 letters) is 1 edit from "thickness"; "Kryptonite"
   * (10 letters, limit 3) is more than 3 edits from every name: no suggestion */
  static const char *const keys[] = {"thickness", "material", "name"};
  assert_string_equal(ew_text_nearest("thicknes", keys, 3), "thickness");
  assert_null(ew_text_nearest("Kryptonite", names, 3));
  assert_null(ew_text_nearest("xyz", keys, 3)); /* 3 edits > limit 2 */
  assert_null(ew_text_nearest("GaAs", NULL, 0));
  /* candidates from several lists through the accumulator; NULL candidates are skipped */
  ew_suggestion s;
  ew_suggest_init(&s, "barier");
  ew_suggest_offer(&s, NULL);
  ew_suggest_offer(&s, "barrier");
  ew_suggest_offer(&s, "GaAs");
  assert_string_equal(ew_suggest_best(&s), "barrier");
}

static void test_width(void **state) {
  (void)state;
  assert_int_equal(ew_text_codepoints("a_lattice"), 9);
  assert_int_equal(ew_text_codepoints("Å"), 1);       /* two bytes in UTF-8 */
  assert_int_equal(ew_text_codepoints("Eg_Γ(T)"), 7); /* Γ is two bytes */
  assert_int_equal(ew_text_codepoints(""), 0);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_levenshtein),
      cmocka_unit_test(test_rule),
      cmocka_unit_test(test_width),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
