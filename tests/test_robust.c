/* test_robust.c — robustness through the library: every kind of bad input gives a clear error
 * (status, file:line, words) quickly and returns nothing; catalogue failures; a problem too
 * large to attempt is refused with a memory estimate; results are bit-for-bit repeatable and
 * pass their residual check; and every input under tests/fuzz/ (seed corpus and crash
 * regressions from `make fuzz`) replays through the fuzz entry point without breaking a
 * contract.  Run from the project root (catalogue in "materials", examples in "examples"). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <dirent.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "epiwell.h"
#include "stack.h"

/* The fuzz entry point (fuzz_check_one), without its libFuzzer hooks. */
#define EW_FUZZ_NO_MAIN
#include "fuzz_stack.c"

/* libconfig 1.5 leaks the text of a string token its parser discards on a syntax error (no
 * bison %destructor): via strbuf_append for a non-empty string, from libconfig_yylex for "".
 * Not ours; read only by LeakSanitizer in `make check SANITIZE=1`. */
const char *__lsan_default_suppressions(void);
const char *__lsan_default_suppressions(void) {
  return "leak:strbuf_append\nleak:libconfig_yylex\n";
}

/* Every error path must answer within this (seconds); the brief's limit for a clear error. */
#define FAST_S 1.0

static double now_s(void) {
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

typedef struct {
  ew_catalogue *cat; /* NULL when the catalogue could not be loaded */
  char why[1100];
  char tmp[64];      /* scratch directory for files written by the tests */
} fixture;

static int group_setup(void **state) {
  static fixture fx; /* test-only: lives for the whole run */
  ew_error err;
  memset(&err, 0, sizeof err);
  if (ew_catalogue_load("materials", &fx.cat, &err) != EW_OK) {
    fx.cat = NULL;
    ew_error_text(&err, fx.why, sizeof fx.why);
  }
  snprintf(fx.tmp, sizeof fx.tmp, "/tmp/ew_robust_XXXXXX");
  if (!mkdtemp(fx.tmp)) return -1;
  *state = &fx;
  return 0;
}

/* Removes the files the tests made (one level of subdirectories). */
static void remove_tree(const char *dir) {
  DIR *d = opendir(dir);
  if (!d) return;
  struct dirent *de;
  char p[1024];
  while ((de = readdir(d)) != NULL) {
    if (!strcmp(de->d_name, ".") || !strcmp(de->d_name, "..")) continue;
    snprintf(p, sizeof p, "%s/%s", dir, de->d_name);
    struct stat sb;
    if (lstat(p, &sb) == 0 && S_ISDIR(sb.st_mode)) remove_tree(p);
    else unlink(p);
  }
  closedir(d);
  rmdir(dir);
}

static int group_teardown(void **state) {
  fixture *fx = *state;
  ew_catalogue_free(fx->cat);
  remove_tree(fx->tmp);
  return 0;
}

static void write_file(const char *path, const char *bytes, size_t n) {
  FILE *f = fopen(path, "wb");
  assert_non_null(f);
  assert_int_equal(fwrite(bytes, 1, n, f), n);
  assert_int_equal(fclose(f), 0);
}

/* ---- 1. bad stack files, read from disk -------------------------------------------------- */

/* A well between barriers from the catalogue; the cases below change one thing. */
#define L1 "temperature = 77.0;\n"
#define L2 "layers = (\n"
#define LB "  { name = \"lower\"; material = \"AlGaAs\"; x = 0.3; thickness = 20.0; },\n"
#define LW "  { name = \"well\";  material = \"GaAs\"; thickness = 6.0; },\n"
#define LU "  { name = \"upper\"; material = \"AlGaAs\"; x = 0.3; thickness = 20.0; }\n"
#define LE ");\n"
#define UM "materials = (\n  { name = \"hb\"; Ec = 1.3; Ev = -0.6; me = 0.1; mhh = 0.45; mlh = 0.11; }\n);\n"

typedef struct {
  const char *what;   /* what the case checks */
  const char *text;   /* file contents (len bytes when len > 0: may hold NUL) */
  size_t len;
  ew_status status;   /* expected status */
  int line;           /* expected err.line; -1: any line >= 1 */
  const char *needle; /* expected in err.message */
} bad_case;

static const bad_case bad_cases[] = {
  {"syntax error: a value is missing", L1 L2 LB "  { material = \"GaAs\"; thickness = ; },\n" LU LE,
   0, EW_ERR_INPUT, 4, "cannot parse"},
  {"syntax error: unbalanced braces", L1 L2 LB "  { material = \"GaAs\"; thickness = 6.0; \n" LU LE,
   0, EW_ERR_INPUT, 5, "cannot parse"},
  {"wrong type: thickness as a string", L1 L2 LB "  { material = \"GaAs\"; thickness = \"6\"; },\n" LU LE,
   0, EW_ERR_INPUT, 4, "must be a number, not a string"},
  {"wrong type: material as a number", L1 L2 LB "  { material = 7; thickness = 6.0; },\n" LU LE, 0,
   EW_ERR_INPUT, 4, "must be a string"},
  {"wrong type: layers as a group", L1 "layers = { a = 1; };\n", 0, EW_ERR_INPUT, 2, "not a group"},
  {"unknown key suggests the nearest valid name", L1 L2 LB
   "  { material = \"GaAs\"; thickneess = 6.0; },\n" LU LE, 0, EW_ERR_INPUT, 4,
   "did you mean 'thickness'?"},
  {"unknown top-level key suggests the nearest", "temprature = 77.0;\n" L2 LB LW LU LE, 0,
   EW_ERR_INPUT, 1, "did you mean 'temperature'?"},
  {"unknown material suggests the nearest catalogue name", L1 L2 LB
   "  { material = \"GaAS\"; thickness = 6.0; },\n" LU LE, 0, EW_ERR_INPUT, 4,
   "did you mean 'GaAs'?"},
  {"unknown material far from any name", L1 L2 LB "  { material = \"Kryptonite\"; thickness = 6.0; },\n"
   LU LE, 0, EW_ERR_INPUT, 4, "unknown material 'Kryptonite'"},
  {"x above 1", L1 L2 "  { material = \"AlGaAs\"; x = 1.01; thickness = 20.0; },\n" LW LU LE, 0,
   EW_ERR_INPUT, 3, "outside [0, 1]"},
  {"x below 0", L1 L2 "  { material = \"AlGaAs\"; x = -0.2; thickness = 20.0; },\n" LW LU LE, 0,
   EW_ERR_INPUT, 3, "outside [0, 1]"},
  {"negative thickness", L1 L2 LB "  { material = \"GaAs\"; thickness = -6.0; },\n" LU LE, 0,
   EW_ERR_INPUT, 4, "must be positive"},
  {"absurd thickness: a 1e9 nm layer", L1 L2 LB "  { material = \"GaAs\"; thickness = 1e9; },\n" LU LE,
   0, EW_ERR_INPUT, 4, "above the 10000 nm limit"},
  {"absurd thickness: a 1e-12 nm layer (made the solver return wrong levels silently)",
   L1 L2 LB LW "  { material = \"AlAs\"; thickness = 1e-12; },\n" LW LU LE, 0, EW_ERR_INPUT, 5,
   "below the 0.01 nm minimum"},
  {"infinite thickness (1e999)", L1 L2 LB "  { material = \"GaAs\"; thickness = 1e999; },\n" LU LE, 0,
   EW_ERR_INPUT, 4, "finite"},
  {"NaN is not a libconfig number: a syntax error", L1 L2 LB
   "  { material = \"GaAs\"; thickness = nan; },\n" LU LE, 0, EW_ERR_INPUT, 4, "cannot parse"},
  {"infinite temperature", "temperature = 1e999;\n" L2 LB LW LU LE, 0, EW_ERR_INPUT, 1, "finite"},
  {"absurd temperature", "temperature = 1e6;\n" L2 LB LW LU LE, 0, EW_ERR_INPUT, 1,
   "outside [0, 1500]"},
  {"grid step of 1e-9 nm is refused with a memory estimate", "grid_step = 1e-9;\n" L2 LB LW LU LE, 0,
   EW_ERR_INPUT, 1, "GB"},
  {"grid step of 1e-9 nm names the node count", "grid_step = 1e-9;\n" L2 LB LW LU LE, 0,
   EW_ERR_INPUT, 1, "grid nodes"},
  {"absurd user band edge (Ec = 1e30 was accepted and solved)",
   "materials = (\n { name = \"z\"; Ec = 1e30; Ev = -0.5; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n"
   L2 LB "  { material = \"z\"; thickness = 6.0; },\n" LU LE, 0, EW_ERR_INPUT, 2,
   "band edge Ec = 1e+30 eV is outside"},
  {"absurd user mass (me = 1e30 gave 86 degenerate states)",
   "materials = (\n { name = \"z\"; Ec = 1.0; Ev = -0.5; me = 1e30; mhh = 0.4; mlh = 0.1; }\n);\n"
   L2 LB "  { material = \"z\"; thickness = 6.0; },\n" LU LE, 0, EW_ERR_INPUT, 2,
   "mass 'me' = 1e+30 m0 is outside"},
  {"tiny user mass (me = 1e-30)",
   "materials = (\n { name = \"z\"; Ec = 1.0; Ev = -0.5; me = 1e-30; mhh = 0.4; mlh = 0.1; }\n);\n"
   L2 LB "  { material = \"z\"; thickness = 6.0; },\n" LU LE, 0, EW_ERR_INPUT, 2, "is outside"},
  {"duplicate layer names", L1 L2 "  { name = \"w\"; material = \"GaAs\"; thickness = 6.0; },\n"
   "  { name = \"w\"; material = \"GaAs\"; thickness = 6.0; }\n" LE, 0, EW_ERR_INPUT, 4,
   "duplicate layer name 'w' (first used at line 3)"},
  {"duplicate user-material names", "materials = (\n"
   " { name = \"z\"; Ec = 1.0; Ev = -0.5; me = 0.1; mhh = 0.4; mlh = 0.1; },\n"
   " { name = \"z\"; Ec = 1.0; Ev = -0.5; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n" L2 LB LW LU LE, 0,
   EW_ERR_INPUT, 3, "defined twice"},
  {"empty file", "", 0, EW_ERR_INPUT, 1, "empty"},
  {"comments only", "# nothing\n# here\n", 0, EW_ERR_INPUT, 1, "no settings"},
  {"binary garbage with a NUL byte", "\x7f" "ELF\x02\x01\x01\x00\x00\x00garbage", 16, EW_ERR_INPUT,
   1, "binary data"},
  {"binary garbage without NUL", "\xff\xfe\x01\x02\x80\x81 = ;;\n\x90\x91", 0, EW_ERR_INPUT, -1,
   "cannot parse"},
  {"@include is refused (it read any file and blocked forever on a FIFO)",
   L1 "@include \"/dev/null\"\n" L2 LB LW LU LE, 0, EW_ERR_INPUT, 2, "'@include' is not supported"},
  {"@include after blanks is refused as well", "  \t@include \"x.cfg\"\n", 0, EW_ERR_INPUT, 1,
   "'@include' is not supported"},
  {"user material shadowing the catalogue", "materials = (\n"
   " { name = \"GaAs\"; Ec = 1.0; Ev = -0.5; me = 0.1; mhh = 0.4; mlh = 0.1; }\n);\n" L2 LB LW LU LE, 0,
   EW_ERR_INPUT, 2, "would shadow"},
};

/* Each bad file: the listed status, err.file = the path, the listed line and words, *out
 * NULL, within FAST_S.  Also checks a good control file is accepted (so the failures are
 * about the one change each case makes). */
static void bad_stack_files(void **state) {
  fixture *fx = *state;
  if (!fx->cat) {
    print_message("skipping: cannot load catalogue: %s\n", fx->why);
    skip();
  }
  char path[256];
  snprintf(path, sizeof path, "%s/control.cfg", fx->tmp);
  const char *good = L1 UM L2 LB LW LU LE;
  write_file(path, good, strlen(good));
  ew_stack *st = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_stack_read_file(path, fx->cat, &st, &err), EW_OK);
  ew_stack_free(st);

  int bad = 0;
  for (size_t i = 0; i < sizeof bad_cases / sizeof bad_cases[0]; i++) {
    const bad_case *c = &bad_cases[i];
    snprintf(path, sizeof path, "%s/case%zu.cfg", fx->tmp, i);
    write_file(path, c->text, c->len ? c->len : strlen(c->text));
    st = (ew_stack *)(uintptr_t)1; /* sentinel: must be overwritten with NULL */
    memset(&err, 0, sizeof err);
    double t0 = now_s();
    ew_status got = ew_stack_read_file(path, fx->cat, &st, &err);
    double dt = now_s() - t0;
    int ok = got == c->status && st == NULL && err.code == c->status &&
             strcmp(err.file, path) == 0 && (c->line < 0 ? err.line >= 1 : err.line == c->line) &&
             strstr(err.message, c->needle) != NULL && dt < FAST_S;
    if (!ok) {
      print_error("case \"%s\": got status %d, %s:%d \"%s\" in %.3f s (out %s); want status %d, "
                  "%s:%d containing \"%s\" in < %.1f s\n", c->what, (int)got, err.file, err.line,
                  err.message, dt, st ? "set" : "NULL", (int)c->status, path, c->line,
                  c->needle, FAST_S);
      bad++;
    }
    if (got == EW_OK) ew_stack_free(st);
  }
  assert_int_equal(bad, 0);
}

/* The same texts through ew_stack_read_string (the in-memory entry) give the same status
 * and line (the binary case is excluded: in memory a NUL simply ends the text). */
static void bad_stack_strings(void **state) {
  fixture *fx = *state;
  if (!fx->cat) skip();
  int bad = 0;
  for (size_t i = 0; i < sizeof bad_cases / sizeof bad_cases[0]; i++) {
    const bad_case *c = &bad_cases[i];
    if (c->len) continue;
    ew_stack *st = (ew_stack *)(uintptr_t)1;
    ew_error err;
    memset(&err, 0, sizeof err);
    ew_status got = ew_stack_read_string(c->text, "mem.cfg", fx->cat, &st, &err);
    if (got != c->status || st != NULL || strcmp(err.file, "mem.cfg") != 0 ||
        (c->line >= 0 && err.line != c->line)) {
      print_error("string case \"%s\": got status %d line %d; want %d line %d\n", c->what,
                  (int)got, err.line, (int)c->status, c->line);
      bad++;
    }
    if (got == EW_OK) ew_stack_free(st);
  }
  assert_int_equal(bad, 0);
}

/* A missing file and a directory are I/O errors (5) naming the path, not stack errors. */
static void unreadable_stack(void **state) {
  fixture *fx = *state;
  ew_stack *st = (ew_stack *)(uintptr_t)1;
  ew_error err;
  memset(&err, 0, sizeof err);
  char path[256];
  snprintf(path, sizeof path, "%s/no_such.cfg", fx->tmp);
  assert_int_equal(ew_stack_read_file(path, fx->cat, &st, &err), EW_ERR_IO);
  assert_null(st);
  assert_non_null(strstr(err.message, path));
  st = (ew_stack *)(uintptr_t)1;
  assert_int_equal(ew_stack_read_file(fx->tmp, fx->cat, &st, &err), EW_ERR_IO);
  assert_null(st);
}

/* ---- 2. catalogue failures -------------------------------------------------------------- */

/* Empty directory, missing directory: EW_ERR_CATALOGUE, *out NULL.  A directory holding one
 * malformed .cfg (syntax error on line 3): EW_ERR_CATALOGUE naming that file and line. */
static void catalogue_failures(void **state) {
  fixture *fx = *state;
  char dir[256], path[320];
  ew_catalogue *cat = (ew_catalogue *)(uintptr_t)1;
  ew_error err;
  memset(&err, 0, sizeof err);

  snprintf(dir, sizeof dir, "%s/empty_catalogue", fx->tmp);
  assert_int_equal(mkdir(dir, 0755), 0);
  double t0 = now_s();
  assert_int_equal(ew_catalogue_load(dir, &cat, &err), EW_ERR_CATALOGUE);
  assert_null(cat);
  assert_true(err.message[0] != '\0');

  snprintf(dir, sizeof dir, "%s/no_such_catalogue", fx->tmp);
  cat = (ew_catalogue *)(uintptr_t)1;
  assert_int_equal(ew_catalogue_load(dir, &cat, &err), EW_ERR_CATALOGUE);
  assert_null(cat);

  snprintf(dir, sizeof dir, "%s/bad_catalogue", fx->tmp);
  assert_int_equal(mkdir(dir, 0755), 0);
  snprintf(path, sizeof path, "%s/Broken.cfg", dir);
  const char *broken = "# invented, test only\nname = \"Broken\";\nEg_G = { value = ; };\n";
  write_file(path, broken, strlen(broken));
  cat = (ew_catalogue *)(uintptr_t)1;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_catalogue_load(dir, &cat, &err), EW_ERR_CATALOGUE);
  assert_null(cat);
  assert_string_equal(err.file, path);
  assert_int_equal(err.line, 3);
  assert_true(now_s() - t0 < FAST_S);
}

/* ---- 3. too large to attempt ------------------------------------------------------------ */

/* A normal stack with opt.grid_step_nm = 1e-6 nm (6.6e7 nodes, over the solver's 5e6 limit)
 * is refused at once with EW_ERR_NOMEM (exit 4) and a memory estimate in GB; *out NULL. */
static void solver_refuses_huge_grid(void **state) {
  fixture *fx = *state;
  if (!fx->cat) skip();
  ew_stack *st = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_stack_read_file("examples/detector_well.cfg", fx->cat, &st, &err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 1e-6;
  ew_result *res = (ew_result *)(uintptr_t)1;
  double t0 = now_s();
  assert_int_equal(ew_solve(st, &opt, &res, &err), EW_ERR_NOMEM);
  assert_true(now_s() - t0 < FAST_S);
  assert_null(res);
  assert_non_null(strstr(err.message, "GB"));
  assert_non_null(strstr(err.message, "nodes"));
  ew_stack_free(st);
}

/* ---- 4. numerical failure paths: repeatability and residuals ------------------------------ */

/* Solves path; returns the result (stack in *st). */
static ew_result *solve_file(const char *path, const ew_catalogue *cat, ew_stack **st) {
  ew_error err;
  memset(&err, 0, sizeof err);
  *st = NULL;
  if (ew_stack_read_file(path, cat, st, &err) != EW_OK) {
    print_error("%s: %s\n", path, err.message);
    fail();
  }
  ew_options opt;
  ew_options_default(&opt);
  ew_result *res = NULL;
  if (ew_solve(*st, &opt, &res, &err) != EW_OK) {
    print_error("%s: solve failed: %s\n", path, err.message);
    fail();
  }
  return res;
}

/* The example stacks (examples/NAME.cfg; at least one must exist). */
static size_t list_examples(char names[][256], size_t max) {
  DIR *d = opendir("examples");
  size_t n = 0;
  if (!d) return 0;
  struct dirent *de;
  while ((de = readdir(d)) != NULL && n < max) {
    size_t l = strlen(de->d_name);
    if (l > 4 && strcmp(de->d_name + l - 4, ".cfg") == 0)
      snprintf(names[n++], 256, "examples/%.240s", de->d_name);
  }
  closedir(d);
  return n;
}

/* Solving the same stack twice gives identical bits: energies, error estimates, residuals,
 * every wavefunction value and every line (no uninitialised memory, no order dependence). */
static void deterministic(void **state) {
  fixture *fx = *state;
  if (!fx->cat) skip();
  char ex[32][256];
  size_t n = list_examples(ex, 32);
  assert_true(n >= 1);
  for (size_t e = 0; e < n; e++) {
    ew_stack *s1, *s2;
    ew_result *a = solve_file(ex[e], fx->cat, &s1), *b = solve_file(ex[e], fx->cat, &s2);
    size_t ns = ew_result_state_count(a), nodes = ew_result_node_count(a);
    assert_int_equal(ns, ew_result_state_count(b));
    assert_int_equal(nodes, ew_result_node_count(b));
    assert_true(ns > 0);
    for (size_t i = 0; i < ns; i++) {
      const ew_state *p = ew_result_state(a, i), *q = ew_result_state(b, i);
      int same = memcmp(&p->energy_eV, &q->energy_eV, sizeof(double)) == 0 &&
                 memcmp(&p->error_eV, &q->error_eV, sizeof(double)) == 0 &&
                 memcmp(&p->residual, &q->residual, sizeof(double)) == 0 &&
                 strcmp(p->label, q->label) == 0 && p->layer == q->layer &&
                 memcmp(ew_result_wavefunction(a, i), ew_result_wavefunction(b, i),
                        nodes * sizeof(double)) == 0;
      if (!same) print_error("%s: state %s differs between two runs\n", ex[e], p->label);
      assert_true(same);
    }
    assert_int_equal(ew_result_line_count(a), ew_result_line_count(b));
    for (size_t j = 0; j < ew_result_line_count(a); j++) {
      const ew_line *p = ew_result_line(a, j), *q = ew_result_line(b, j);
      assert_true(memcmp(&p->energy_eV, &q->energy_eV, sizeof(double)) == 0 &&
                  memcmp(&p->overlap, &q->overlap, sizeof(double)) == 0 &&
                  memcmp(&p->dipole_nm, &q->dipole_nm, sizeof(double)) == 0);
    }
    ew_result_free(a);
    ew_result_free(b);
    ew_stack_free(s1);
    ew_stack_free(s2);
  }
}

/* Every state of every example passes its residual check: flagged == 0 and relative
 * residual ||Hψ − EBψ|| / (||H|| ||ψ||) < 1e-8 (the default residual_tol, README "Residual
 * check"), with finite energies and error estimates. */
static void residuals_pass(void **state) {
  fixture *fx = *state;
  if (!fx->cat) skip();
  char ex[32][256];
  size_t n = list_examples(ex, 32);
  assert_true(n >= 1);
  int bad = 0;
  for (size_t e = 0; e < n; e++) {
    ew_stack *st;
    ew_result *r = solve_file(ex[e], fx->cat, &st);
    assert_true(ew_result_state_count(r) > 0);
    for (size_t i = 0; i < ew_result_state_count(r); i++) {
      const ew_state *s = ew_result_state(r, i);
      if (s->flagged || !(s->residual < 1e-8) || !isfinite(s->energy_eV) ||
          !(s->error_eV >= 0 && isfinite(s->error_eV))) {
        print_error("%s: %s residual %.3g flagged %d energy %g error %g\n", ex[e], s->label,
                    s->residual, s->flagged, s->energy_eV, s->error_eV);
        bad++;
      }
    }
    ew_result_free(r);
    ew_stack_free(st);
  }
  assert_int_equal(bad, 0);
}

/* ---- 5. fuzz corpus and crash regressions ------------------------------------------------ */

typedef struct {
  size_t files, solved, broken;
} replay_count;

/* Replay limit per input (s): a regression may be a hang (libFuzzer -timeout=10), so each
 * input runs in a child process killed by SIGALRM; a crash kills only the child as well. */
#define REPLAY_LIMIT_S 20

/* Runs one input in a child; returns NULL or what went wrong.  *solved as in the check. */
static const char *replay_one(const uint8_t *buf, size_t n, const ew_catalogue *cat,
                              int *solved) {
  int fds[2];
  *solved = 0;
  if (pipe(fds) != 0) return "pipe failed";
  fflush(NULL);
  pid_t pid = fork();
  if (pid < 0) {
    close(fds[0]);
    close(fds[1]);
    return "fork failed";
  }
  if (pid == 0) { /* child: report "s" (solved) / "-" then the verdict, then exit */
    close(fds[0]);
    alarm(REPLAY_LIMIT_S);
    int sv = 0;
    const char *why = fuzz_check_one(buf, n, cat, &sv);
    char msg[256];
    int len = snprintf(msg, sizeof msg, "%c%s", sv ? 's' : '-', why ? why : "");
    if (write(fds[1], msg, (size_t)len) < 0) _exit(3);
    _exit(why ? 1 : 0);
  }
  close(fds[1]);
  static char verdict[320]; /* test-only, one replay at a time */
  char msg[256];
  ssize_t got = 0, k;
  while (got < (ssize_t)sizeof msg - 1 && (k = read(fds[0], msg + got, sizeof msg - 1 - (size_t)got)) > 0)
    got += k;
  close(fds[0]);
  msg[got > 0 ? got : 0] = '\0';
  int status = 0;
  if (waitpid(pid, &status, 0) != pid) return "waitpid failed";
  *solved = got > 0 && msg[0] == 's';
  if (WIFSIGNALED(status)) {
    snprintf(verdict, sizeof verdict, "%s (signal %d)", WTERMSIG(status) == SIGALRM
             ? "did not finish within the replay limit (hang)" : "crashed", WTERMSIG(status));
    return verdict;
  }
  if (WEXITSTATUS(status) != 0) {
    snprintf(verdict, sizeof verdict, "contract broken: %s (exit %d)", got > 1 ? msg + 1 : "?",
             WEXITSTATUS(status));
    return verdict;
  }
  return NULL;
}

static void replay_dir(const char *dir, const ew_catalogue *cat, replay_count *c) {
  DIR *d = opendir(dir);
  if (!d) return;
  struct dirent *de;
  char p[1024];
  while ((de = readdir(d)) != NULL) {
    if (de->d_name[0] == '.') continue; /* ., .., and hidden files such as .gitkeep */
    snprintf(p, sizeof p, "%s/%s", dir, de->d_name);
    struct stat sb;
    if (stat(p, &sb) != 0) continue;
    if (S_ISDIR(sb.st_mode)) {
      replay_dir(p, cat, c);
      continue;
    }
    if (!S_ISREG(sb.st_mode)) continue;
    FILE *f = fopen(p, "rb");
    if (!f) continue;
    size_t cap = (size_t)sb.st_size + 1;
    uint8_t *buf = malloc(cap);
    size_t n = buf ? fread(buf, 1, cap, f) : 0;
    fclose(f);
    int solved = 0;
    const char *why = buf ? replay_one(buf, n, cat, &solved) : "out of memory";
    free(buf);
    c->files++;
    c->solved += (size_t)solved;
    if (why) {
      print_error("%s: %s\n", p, why);
      c->broken++;
    }
  }
  closedir(d);
}

/* Every file under tests/fuzz/ (corpus/ seeds, regressions/ crashes found by `make fuzz`)
 * goes through fuzz_check_one with the catalogue: no contract may break.  At least the seed
 * corpus must be there, and some inputs must reach the solver, or the replay tests nothing. */
static void fuzz_replay(void **state) {
  fixture *fx = *state;
  if (!fx->cat) skip();
  replay_count c = {0, 0, 0};
  replay_dir("tests/fuzz", fx->cat, &c);
  print_message("fuzz replay: %zu files, %zu solved, %zu broken\n", c.files, c.solved, c.broken);
  assert_true(c.files >= 3);
  assert_true(c.solved >= 1);
  assert_int_equal(c.broken, 0);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(bad_stack_files),     cmocka_unit_test(bad_stack_strings),
      cmocka_unit_test(unreadable_stack),    cmocka_unit_test(catalogue_failures),
      cmocka_unit_test(solver_refuses_huge_grid), cmocka_unit_test(deterministic),
      cmocka_unit_test(residuals_pass),      cmocka_unit_test(fuzz_replay),
  };
  return cmocka_run_group_tests_name("robust", tests, group_setup, group_teardown);
}
