/* test_hostile_input.c — issue 18 §2–§3: text that reaches the outputs and limits that
 * cannot be bypassed.
 *
 *   - names (layer, material, user material, user alloy, substrate, offset_reference, grade
 *     profile) holding invalid UTF-8 (each kind of RFC 3629 violation: surrogate, overlong,
 *     above U+10FFFF, truncated, stray continuation) or a control character (C0, DEL, C1;
 *     ECMA-48 defines ESC and CSI as the introducers of terminal control sequences) are refused
 *     with the file:line of the name and exit code 2 (EW_ERR_INPUT); valid non-ASCII names
 *     are kept byte for byte;
 *   - every error message is printable: a quoted control byte is written \xNN;
 *   - the resolved parameters of a layer (user-alloy bowing) are held to the user-material
 *     limits, at the layer's line;
 *   - catalogue files: FIFOs and other non-regular files are refused without blocking,
 *     @include is refused, values outside their plausible range are blamed on the catalogue
 *     file and line with EW_ERR_CATALOGUE (exit 3), text must be printable UTF-8;
 *   - the sweep CSV's header cells are quoted and formula-neutralised like the other cells
 *     (OWASP "CSV Injection": a leading single quote, inside RFC 4180 quotes).
 *
 * Runs from the project root (materials/ is the catalogue). */
#include <fcntl.h>
#include <sys/stat.h>
#include <sys/types.h>

#include "testutil.h"

#include "error.h"
#include "workflow.h"

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

/* Independent of text.c: every byte printable ASCII (the reader's messages are ASCII apart
 * from what they quote, and a quoted byte must have been escaped). */
static int printable_ascii(const char *s) {
  for (const unsigned char *p = (const unsigned char *)s; *p; p++)
    if (*p < 0x20 || *p > 0x7e) return 0;
  return 1;
}

/* A three-layer stack whose well carries `field` = "VALUE" on line 4. */
static ew_status read_with(const char *field, const char *value, ew_error *err) {
  char text[1024];
  snprintf(text, sizeof text,
           "temperature = 77.0;\n"
           "layers = (\n"
           " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
           " { %s = \"%s\"; material = \"GaAs\"; thickness = 6.0; },\n"
           " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; } );\n",
           field, value);
  ew_stack *st = NULL;
  memset(err, 0, sizeof *err);
  ew_status rc = ew_stack_read_string(text, "hostile.cfg", cat, &st, err);
  ew_stack_free(st);
  return rc;
}

/* Each kind of invalid UTF-8 and each class of control character in a layer name: refused
 * at line 4 with the reason (byte sequences from RFC 3629 section 3 and the Unicode
 * standard's table 3-7 of well-formed sequences; control ranges from ECMA-48). */
static void bad_names_refused_with_line(void **state) {
  (void)state;
  static const struct { const char *bytes, *reason; } cases[] = {
      {"w\xED\xA0\x80", "surrogate U+D800"},          /* UTF-16 surrogate half */
      {"w\xED\xBF\xBF", "surrogate U+DFFF"},
      {"w\xC0\xAF", "overlong"},                      /* '/' in two bytes */
      {"w\xE0\x80\xAF", "overlong"},                  /* '/' in three bytes */
      {"w\xF0\x80\x80\xAF", "overlong"},              /* '/' in four bytes */
      {"w\xF4\x90\x80\x80", "above U+10FFFF"},        /* U+110000 */
      {"w\xF7\xBF\xBF\xBF", "above U+10FFFF"},        /* U+1FFFFF */
      {"w\xE2\x82", "truncated 3-byte"},              /* the euro sign cut short */
      {"w\xF0\x9F\x98", "truncated 4-byte"},
      {"w\x80x", "stray continuation"},
      {"w\xFF", "never starts"},
      {"w\x1b[31mred", "control character U+001B"},   /* ESC: a colour sequence */
      {"w\x07", "control character U+0007"},          /* BEL */
      {"w\tx", "control character U+0009"},           /* tab breaks the table's columns */
      {"w\rx", "control character U+000D"},           /* CR rewrites the line */
      {"w\x7f", "control character U+007F"},          /* DEL */
      {"w\xC2\x9B" "2J", "control character U+009B"}, /* C1 CSI: clears a VT220 screen */
      {"w\xC2\x85", "control character U+0085"},      /* C1 NEL */
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    ew_error err;
    ew_status rc = read_with("name", cases[i].bytes, &err);
    if (rc != EW_ERR_INPUT || err.line != 4 || !strstr(err.message, cases[i].reason)) {
      print_error("case %zu: rc %d line %d: %s (want '%s')\n", i, rc, err.line, err.message,
                  cases[i].reason);
      fail();
    }
    assert_string_equal(err.file, "hostile.cfg");
    assert_true(printable_ascii(err.message));
  }
}

/* libconfig's own escape (\x1b in the file text) gives the same bytes: refused too. */
static void escaped_control_refused(void **state) {
  (void)state;
  ew_error err;
  assert_int_equal(read_with("name", "w\\x1b]0;title\\x07", &err), EW_ERR_INPUT);
  assert_int_equal(err.line, 4);
  assert_non_null(strstr(err.message, "U+001B"));
}

/* Every name field of a stack goes through the same check (line of the field). */
static void every_name_field_checked(void **state) {
  (void)state;
  static const struct { const char *text; int line; } cases[] = {
      {"layers = ( { name = \"w\"; material = \"Ga\x1b" "As\"; thickness = 6.0; } );\n", 1},
      {"substrate = \"Ga\xC0\xAF\";\nlayers = ( { material = \"GaAs\"; thickness = 6.0; } );\n", 1},
      {"substrate = { material = \"Ga\x7f\"; };\n"
       "layers = ( { material = \"GaAs\"; thickness = 6.0; } );\n", 1},
      {"materials = ( { name = \"u\xED\xA0\x80\"; Ec = 1.0; Ev = 0.0; me = 0.07; mhh = 0.5; "
       "mlh = 0.08; } );\nlayers = ( { material = \"GaAs\"; thickness = 6.0; } );\n", 1},
      {"materials = ( { name = \"a\"; Ec = 1.0; Ev = 0.0; me = 0.07; mhh = 0.5; mlh = 0.08; },\n"
       "  { name = \"b\"; Ec = 1.2; Ev = 0.0; me = 0.08; mhh = 0.5; mlh = 0.08; } );\n"
       "alloys = ( { name = \"ab\xC2\x9B\"; first = \"a\"; second = \"b\"; } );\n"
       "layers = ( { material = \"a\"; thickness = 6.0; } );\n", 3},
      {"materials = ( { name = \"a\"; Ec = 1.0; Ev = 0.0; me = 0.07; mhh = 0.5; mlh = 0.08; },\n"
       "  { name = \"b\"; Ec = 1.2; Ev = 0.0; me = 0.08; mhh = 0.5; mlh = 0.08; } );\n"
       "alloys = ( { name = \"ab\"; first = \"a\"; second = \"b\x01\"; } );\n"
       "layers = ( { material = \"a\"; thickness = 6.0; } );\n", 3},
      {"layers = ( { name = \"w\"; material = \"GaAs\"; thickness = 6.0; } );\n"
       "offset_reference = \"w\xF4\x90\x80\x80\";\n", 2},
      {"layers = (\n { material = \"AlGaAs\"; thickness = 6.0;\n"
       "   grade = { profile = \"lin\x1b" "ear\"; x_start = 0.1; x_end = 0.3; }; } );\n", 3},
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    ew_stack *st = NULL;
    ew_error err = {0};
    ew_status rc = ew_stack_read_string(cases[i].text, "f.cfg", cat, &st, &err);
    ew_stack_free(st);
    if (rc != EW_ERR_INPUT || err.line != cases[i].line ||
        !(strstr(err.message, "UTF-8") || strstr(err.message, "control character"))) {
      print_error("case %zu: rc %d line %d: %s\n", i, rc, err.line, err.message);
      fail();
    }
    assert_true(printable_ascii(err.message));
  }
}

/* Valid non-ASCII names (2-, 3- and 4-byte sequences) are kept byte for byte. */
static void valid_utf8_names_kept(void **state) {
  (void)state;
  const char *name = "\xC3\x85-well \xCE\xB3 \xE2\x86\x92 \xF0\x9D\x9B\xBE"; /* Å γ → 𝛾 */
  char text[512];
  snprintf(text, sizeof text, "layers = ( { name = \"%s\"; material = \"GaAs\"; thickness = 6.0; "
           "} );\n", name);
  ew_stack *st = NULL;
  ew_error err = {0};
  assert_int_equal(ew_stack_read_string(text, "ok.cfg", cat, &st, &err), EW_OK);
  assert_string_equal(st->layers[0].name, name);
  ew_stack_free(st);
}

/* A message quoting a piece of the input (a unit after a number, with an ESC in it) is
 * printable: the byte becomes \x1B.  ew_fail does it for every message and file name. */
static void messages_escape_control_bytes(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_error err = {0};
  ew_status rc = ew_stack_read_string("layers = ( { material = \"GaAs\"; thickness = 6 n\x1b[2Jm; } );\n",
                                      "slip.cfg", cat, &st, &err);
  assert_int_equal(rc, EW_ERR_INPUT);
  assert_true(printable_ascii(err.message));
  assert_non_null(strstr(err.message, "\\x1B[2J"));
  memset(&err, 0, sizeof err);
  ew_fail(&err, EW_ERR_INPUT, "a\x9b" "b.cfg", 7, "bad '%s'", "x\x1b[31my\xC2\x9Bz");
  assert_string_equal(err.message, "bad 'x\\x1B[31my\\xC2\\x9Bz'");
  assert_string_equal(err.file, "a\\x9Bb.cfg");
  assert_int_equal(err.line, 7);
}

/* The file name is the one text of the terminal table the reader does not refuse (a file
 * can be named with an escape sequence): the table writes it with \xNN, the JSON with
 * \u001b (RFC 8259 section 7), and no ESC byte reaches either. */
static void file_name_escaped_in_table_and_json(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_error err = {0};
  assert_int_equal(ew_stack_read_string("layers = (\n { material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
                                        " { material = \"GaAs\"; thickness = 6.0; },\n"
                                        " { material = \"AlGaAs\"; x = 0.3; thickness = 10.0; } );\n",
                                        "a\x1b[2Jb.cfg", cat, &st, &err),
                   EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  ew_result *res = NULL;
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_OK);
  for (int json = 0; json < 2; json++) {
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    assert_int_equal(json ? ew_result_write_json(res, f, &err) : ew_result_write_table(res, f, &err),
                     EW_OK);
    fclose(f);
    assert_null(memchr(buf, 0x1b, len));
    assert_non_null(strstr(buf, json ? "a\\u001b[2Jb.cfg" : "a\\x1B[2Jb.cfg"));
    free(buf);
  }
  ew_result_free(res);
  ew_stack_free(st);
}

/* §3: a user alloy's bowing cannot take the resolved parameters past the user-material
 * limits (issue 18: me bowing gave 2.5e307 m0 and 219 "bound" levels), nor can eps_static.
 * At x = 0.5 the bowing term is x (1 - x) C = C / 4 (the reader's Vegard-with-bowing rule). */
static void resolved_parameters_limited(void **state) {
  (void)state;
  static const struct { const char *bow; const char *want; } cases[] = {
      {"me = -1e308;", "electron mass me = 2.5e+307"},
      {"me = 0.4;", "non-positive mass"},   /* 0.035 + 0.04 - 0.1 = -0.025 m0 */
      {"me = 0.2995;", "electron mass me = 0.000125"}, /* 0.075 - 0.074875: positive, too light */
      {"mhh = -1e300;", "heavy-hole mass"},
      {"Ec = -100.0;", "conduction edge Ec = 26.1"},    /* 1.1 + 25 */
      {"eps_static = -1e308;", "permittivity eps_static = 2.5e+307"},
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    char text[1024];
    snprintf(text, sizeof text,
             "materials = ( { name = \"a\"; Ec = 1.0; Ev = 0.0; me = 0.07; mhh = 0.5; mlh = 0.08; "
             "eps_static = 12.0; },\n"
             "  { name = \"b\"; Ec = 1.2; Ev = 0.0; me = 0.08; mhh = 0.5; mlh = 0.08; "
             "eps_static = 12.0; } );\n"
             "alloys = ( { name = \"ab\"; first = \"a\"; second = \"b\"; bowing = { %s }; } );\n"
             "layers = (\n { name = \"w\"; material = \"ab\"; x = 0.5; thickness = 6.0; } );\n",
             cases[i].bow);
    ew_stack *st = NULL;
    ew_error err = {0};
    ew_status rc = ew_stack_read_string(text, "bow.cfg", cat, &st, &err);
    ew_stack_free(st);
    if (rc != EW_ERR_INPUT || err.line != 5 || !strstr(err.message, cases[i].want)) {
      print_error("case %zu: rc %d line %d: %s (want '%s')\n", i, rc, err.line, err.message,
                  cases[i].want);
      fail();
    }
  }
  /* a user material's own eps_static: its line */
  ew_stack *st = NULL;
  ew_error err = {0};
  assert_int_equal(ew_stack_read_string(
                       "materials = ( { name = \"u\"; Ec = 1.0; Ev = 0.0; me = 0.07; mhh = 0.5;\n"
                       "  mlh = 0.08; eps_static = 1e308; } );\n"
                       "layers = ( { material = \"u\"; thickness = 6.0; } );\n",
                       "eps.cfg", cat, &st, &err),
                   EW_ERR_INPUT);
  assert_int_equal(err.line, 2);
  assert_non_null(strstr(err.message, "eps_static"));
}

/* ---- catalogue files ------------------------------------------------------------------ */

/* A one-binary catalogue in a fresh directory: GaAs-like values (Vurgaftman et al. 2001,
 * from memory), with `extra` appended inside params and Eg_G = eg (line 4). */
static void write_catalogue(char *dir, size_t size, const char *eg, const char *extra,
                            const char *description) {
  snprintf(dir, size, "/tmp/hostile-cat-XXXXXX");
  assert_non_null(mkdtemp(dir));
  char path[256];
  snprintf(path, sizeof path, "%s/Tb.cfg", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fprintf(f,
          "name = \"Tb\";\nkind = \"binary\";\ndescription = \"%s\";\n"
          "params = { Eg_G = { value = %s; source = \"s\"; };\n"
          "  alpha_G = { value = 0.5405; source = \"s\"; };\n"
          "  beta_G = { value = 204; source = \"s\"; };\n"
          "  VBO = { value = -0.8; source = \"s\"; };\n"
          "  me = { value = 0.067; source = \"s\"; };\n"
          "  gamma1 = { value = 6.98; source = \"s\"; };\n"
          "  gamma2 = { value = 2.06; source = \"s\"; };\n"
          "%s\n};\n",
          description, eg, extra);
  fclose(f);
}

static void remove_catalogue(const char *dir) {
  char path[512];
  DIR *d = opendir(dir);
  struct dirent *de;
  while (d && (de = readdir(d)) != NULL) {
    if (de->d_name[0] == '.') continue;
    snprintf(path, sizeof path, "%s/%s", dir, de->d_name);
    unlink(path);
  }
  if (d) closedir(d);
  rmdir(dir);
}

static ew_status load_catalogue(const char *dir, ew_error *err) {
  ew_catalogue *c = NULL;
  memset(err, 0, sizeof *err);
  ew_status rc = ew_catalogue_load(dir, &c, err);
  ew_catalogue_free(c);
  return rc;
}

/* Implausible values are refused at their line with EW_ERR_CATALOGUE (issue 18: c11 = 0,
 * Ep = -28.8, a_lattice = 1e308 gave wrong numbers with exit 0; Eg_G = -1 was blamed on the
 * stack file).  The template's own values load (the control case). */
static void catalogue_values_range_checked(void **state) {
  (void)state;
  static const struct { const char *eg, *extra; int line; const char *key; } cases[] = {
      {"1.519", "  c11 = { value = 0; source = \"s\"; };", 11, "c11"},
      {"1.519", "  Ep = { value = -28.8; source = \"s\"; };", 11, "Ep"},
      {"1.519", "  a_lattice = { value = 1e308; source = \"s\"; };", 11, "a_lattice"},
      {"1.519", "  eps_static = { value = 1e308; source = \"s\"; };", 11, "eps_static"},
      {"-1", "", 4, "Eg_G"},
  };
  char dir[64];
  ew_error err;
  write_catalogue(dir, sizeof dir, "1.519", "  c11 = { value = 1221; source = \"s\"; };",
                  "test binary");
  assert_int_equal(load_catalogue(dir, &err), EW_OK);
  remove_catalogue(dir);
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    write_catalogue(dir, sizeof dir, cases[i].eg, cases[i].extra, "test binary");
    ew_status rc = load_catalogue(dir, &err);
    remove_catalogue(dir);
    if (rc != EW_ERR_CATALOGUE || err.line != cases[i].line || !strstr(err.file, "Tb.cfg") ||
        !strstr(err.message, cases[i].key) || !strstr(err.message, "plausible")) {
      print_error("case %zu: rc %d %s:%d: %s\n", i, rc, err.file, err.line, err.message);
      fail();
    }
  }
}

/* A catalogue description with an ESC, or invalid UTF-8: refused at its line (it would reach
 * `epiwell materials` and the report). */
static void catalogue_text_checked(void **state) {
  (void)state;
  const char *bad[] = {"gallium\x1b[31m arsenide", "gallium \xED\xA0\x80"};
  for (size_t i = 0; i < 2; i++) {
    char dir[64];
    ew_error err;
    write_catalogue(dir, sizeof dir, "1.519", "", bad[i]);
    ew_status rc = load_catalogue(dir, &err);
    remove_catalogue(dir);
    assert_int_equal(rc, EW_ERR_CATALOGUE);
    assert_int_equal(err.line, 3);
    assert_true(printable_ascii(err.message));
  }
}

/* A FIFO named *.cfg is refused at once (it hung the loader forever); so is a directory
 * named *.cfg and an @include line (line 2). */
static void catalogue_files_safeguarded(void **state) {
  (void)state;
  char dir[64], path[256];
  ew_error err;
  write_catalogue(dir, sizeof dir, "1.519", "", "test binary");
  snprintf(path, sizeof path, "%s/Fifo.cfg", dir);
  assert_int_equal(mkfifo(path, 0600), 0);
  assert_int_equal(load_catalogue(dir, &err), EW_ERR_CATALOGUE); /* returns: no hang */
  assert_non_null(strstr(err.file, "Fifo.cfg"));
  assert_non_null(strstr(err.message, "not a regular file"));
  unlink(path);
  snprintf(path, sizeof path, "%s/Dir.cfg", dir);
  assert_int_equal(mkdir(path, 0700), 0);
  assert_int_equal(load_catalogue(dir, &err), EW_ERR_CATALOGUE);
  assert_non_null(strstr(err.message, "not a regular file"));
  rmdir(path);
  snprintf(path, sizeof path, "%s/Inc.cfg", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fprintf(f, "# a comment\n  @include \"/etc/passwd\"\n");
  fclose(f);
  assert_int_equal(load_catalogue(dir, &err), EW_ERR_CATALOGUE);
  assert_int_equal(err.line, 2);
  assert_non_null(strstr(err.message, "@include"));
  unlink(path);
  /* larger than the 1 MiB cap: refused before parsing */
  snprintf(path, sizeof path, "%s/Big.cfg", dir);
  f = fopen(path, "w");
  assert_non_null(f);
  for (int k = 0; k < (1 << 20) / 64 + 1; k++)
    fprintf(f, "# %61s\n", "padding");
  fclose(f);
  assert_int_equal(load_catalogue(dir, &err), EW_ERR_CATALOGUE);
  assert_non_null(strstr(err.message, "larger than"));
  remove_catalogue(dir);
}

/* ---- the sweep CSV's header ----------------------------------------------------------- */

/* A layer named @w"1: the swept key's header cell is "'@w""1.thickness" (RFC 4180 quotes with
 * the quote doubled, and the OWASP leading single quote); the other names stay plain. */
static void sweep_header_cells_neutralised(void **state) {
  (void)state;
  char path[] = "/tmp/hostile-sweep-XXXXXX";
  int fd = mkstemp(path);
  assert_true(fd >= 0);
  const char *text =
      "temperature = 77.0;\nlayers = (\n"
      " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
      " { name = \"@w\\\"1\"; material = \"GaAs\"; thickness = 6.0; },\n"
      " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; } );\n";
  assert_int_equal(write(fd, text, strlen(text)), (ssize_t)strlen(text));
  close(fd);
  ew_wf_model *m = NULL;
  ew_error err = {0};
  assert_int_equal(ew_wf_model_open(path, cat, NULL, &m, &err), EW_OK);
  ew_wf_range r;
  assert_int_equal(ew_wf_range_parse("@w\"1.thickness=5:6:1", 1, "--vary", &r, &err), EW_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_int_equal(ew_wf_sweep(m, &r, 1, NULL, f, NULL, &err), EW_OK);
  fclose(f);
  const char *want = "\"'@w\"\"1.thickness\",e1_eV,";
  if (strncmp(buf, want, strlen(want)) != 0) {
    print_error("header: %.80s\n", buf);
    fail();
  }
  free(buf);
  ew_wf_model_free(m);
  unlink(path);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(bad_names_refused_with_line),
      cmocka_unit_test(escaped_control_refused),
      cmocka_unit_test(every_name_field_checked),
      cmocka_unit_test(valid_utf8_names_kept),
      cmocka_unit_test(messages_escape_control_bytes),
      cmocka_unit_test(file_name_escaped_in_table_and_json),
      cmocka_unit_test(resolved_parameters_limited),
      cmocka_unit_test(catalogue_values_range_checked),
      cmocka_unit_test(catalogue_text_checked),
      cmocka_unit_test(catalogue_files_safeguarded),
      cmocka_unit_test(sweep_header_cells_neutralised),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
