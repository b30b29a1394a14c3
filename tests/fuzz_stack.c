/* fuzz_stack.c — libFuzzer target over the stack reader and the solver entry.
 *
 * One input is the text of a stack file.  It goes through ew_stack_read_string (with the
 * catalogue) and, when accepted and small, through ew_solve on a coarse grid (0.2 nm) so that
 * one execution stays in the millisecond range.  Besides crashes and sanitizer reports, the
 * target aborts when a documented contract is broken (see fuzz_check_one): an accepted stack
 * is non-empty with finite positions, a rejection carries a status in 1..6 and a message, a
 * solved result has as many states as its certified counts and only finite numbers.
 *
 *   make fuzz                        build with clang and run FUZZ_RUNS executions
 *   build/fuzz/fuzz_stack FILE...    replay inputs (e.g. a crash from tests/fuzz/regressions)
 *
 * Past the solve (issue 18 §4) every writer runs on the result: the terminal table, JSON and
 * SVG to memory streams (checked: no control bytes but LF/tab, valid UTF-8 in JSON and SVG),
 * the CSV set (plain and gzip), the PNG and the HTML report into a private temporary
 * directory ($TMPDIR or /tmp, epiwell-fuzz-XXXXXX, removed at exit).  The option parsers the
 * library holds run on the input's comment lines: "#vary SPEC" through the --vary range
 * parser (ew_wf_range_parse, with and without a step), "#target Q" through the quantity
 * parser of match/tolerance (ew_wf_quantity_parse), "#set KEY=VALUE" through
 * ew_stack_read_string_set (the keys of --set and --vary).
 *
 * tests/test_robust.c includes this file with EW_FUZZ_NO_MAIN defined and replays every file
 * under tests/fuzz/ through fuzz_check_one, so the corpus and the regressions run in
 * `make check` as well. */
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <unistd.h>

#include "epiwell.h"
#include "range.h"
#include "stack.h"

/* Keep executions fast: solve only stacks up to this size (nm, layers). */
#define FUZZ_MAX_TOTAL_NM 200.0
#define FUZZ_MAX_LAYERS 40
#define FUZZ_GRID_STEP_NM 0.2
#define FUZZ_MAX_INPUT 65536

/* 1 when buf[0..len) is valid UTF-8 with no control byte but LF, CR and tab (what every text
 * output promises; independent of text.c's checker). */
static int fuzz_clean_text(const char *buf, size_t len) {
  const unsigned char *p = (const unsigned char *)buf, *end = p + len;
  while (p < end) {
    unsigned c = *p;
    if (c < 0x80) {
      if ((c < 0x20 && c != '\n' && c != '\t' && c != '\r') || c == 0x7f) return 0;
      p++;
      continue;
    }
    int n = c >= 0xC2 && c <= 0xDF ? 2 : c >= 0xE0 && c <= 0xEF ? 3 : c >= 0xF0 && c <= 0xF4 ? 4 : 0;
    if (!n || end - p < n) return 0;
    unsigned long cp = c & (0x7Fu >> n);
    for (int k = 1; k < n; k++) {
      if ((p[k] & 0xC0) != 0x80) return 0;
      cp = (cp << 6) | (p[k] & 0x3Fu);
    }
    static const unsigned long least[5] = {0, 0, 0x80, 0x800, 0x10000};
    if (cp < least[n] || (cp >= 0xD800 && cp <= 0xDFFF) || cp > 0x10FFFF ||
        (cp >= 0x80 && cp <= 0x9F))
      return 0;
    p += n;
  }
  return 1;
}

/* The private directory the file writers write into (created once, removed at exit). */
static char fuzz_dir[256];

static void fuzz_dir_remove(void) {
  if (!fuzz_dir[0]) return;
  static const char *const names[] = {"csv/profile.csv", "csv/levels.csv", "csv/lines.csv",
                                      "csv/wavefunctions.csv", "csv/profile.csv.gz",
                                      "csv/levels.csv.gz", "csv/lines.csv.gz",
                                      "csv/wavefunctions.csv.gz", "band.png", "report.html"};
  char path[512];
  for (size_t k = 0; k < sizeof names / sizeof names[0]; k++) {
    snprintf(path, sizeof path, "%s/%s", fuzz_dir, names[k]);
    unlink(path);
  }
  snprintf(path, sizeof path, "%s/csv", fuzz_dir);
  rmdir(path);
  rmdir(fuzz_dir);
}

static const char *fuzz_workdir(void) {
  if (fuzz_dir[0]) return fuzz_dir;
  const char *t = getenv("TMPDIR");
  snprintf(fuzz_dir, sizeof fuzz_dir, "%s/epiwell-fuzz-XXXXXX", t && t[0] ? t : "/tmp");
  if (!mkdtemp(fuzz_dir)) {
    fuzz_dir[0] = '\0';
    return NULL;
  }
  atexit(fuzz_dir_remove);
  return fuzz_dir;
}

/* One stream writer into memory; NULL or what broke. */
static const char *fuzz_stream(ew_status (*w)(const ew_result *, FILE *, ew_error *),
                               const ew_result *res, const char *what) {
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  if (!f) return NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  ew_status rc = w(res, f, &err);
  fclose(f);
  const char *bad = NULL;
  if (rc != EW_OK && rc != EW_ERR_NOMEM) bad = what;
  else if (rc == EW_OK && !fuzz_clean_text(buf, len)) bad = "a text output holds a control byte or invalid UTF-8";
  free(buf);
  return bad;
}

/* Every writer over a solved result (issue 18 §4); NULL or what broke. */
static const char *fuzz_writers(const ew_result *res, const ew_catalogue *cat) {
  const char *bad = fuzz_stream(ew_result_write_table, res, "table writer failed");
  if (!bad) bad = fuzz_stream(ew_result_write_json, res, "JSON writer failed");
  if (!bad) bad = fuzz_stream(ew_result_write_band_diagram_svg, res, "SVG writer failed");
  const char *dir = bad ? NULL : fuzz_workdir();
  if (!dir) return bad;
  char path[512];
  ew_error err;
  memset(&err, 0, sizeof err);
  snprintf(path, sizeof path, "%s/csv", dir);
  ew_status rc = ew_result_write_csv_dir(res, path, 0, &err);
  if (rc == EW_OK) rc = ew_result_write_csv_dir(res, path, 1, &err);
  snprintf(path, sizeof path, "%s/band.png", dir);
  if (rc == EW_OK) rc = ew_result_write_band_diagram(res, path, &err);
  snprintf(path, sizeof path, "%s/report.html", dir);
  if (rc == EW_OK) rc = ew_result_write_report(res, cat, path, &err);
  if (rc != EW_OK && rc != EW_ERR_NOMEM && rc != EW_ERR_IO) return "a file writer failed";
  if (rc != EW_OK && err.message[0] == '\0') return "a file writer failed without a message";
  return NULL;
}

/* The library's option parsers on the input's "#vary", "#target" and "#set" lines; NULL or
 * what broke. */
static const char *fuzz_parsers(const char *text, const ew_catalogue *cat) {
  for (const char *p = text; p && *p; p = strchr(p, '\n'), p = p ? p + 1 : NULL) {
    char line[512];
    size_t n = strcspn(p, "\n");
    if (n >= sizeof line || p[0] != '#') continue;
    memcpy(line, p, n);
    line[n] = '\0';
    ew_error err;
    memset(&err, 0, sizeof err);
    if (!strncmp(line, "#vary ", 6)) {
      ew_wf_range r;
      for (int step = 0; step < 2; step++) {
        ew_status rc = ew_wf_range_parse(line + 6, step, "--vary", &r, &err);
        if (rc == EW_OK && !(isfinite(r.from) && isfinite(r.to) && r.step >= 0 && isfinite(r.step)))
          return "range parser accepted a non-finite range";
        if (rc == EW_OK && r.step > 0 && ew_wf_range_count(&r) == 0)
          return "range parser accepted an empty range";
        if (rc != EW_OK && rc != EW_ERR_USAGE) return "range parser status not EW_ERR_USAGE";
      }
    } else if (!strncmp(line, "#target ", 8)) {
      ew_wf_quantity q;
      ew_status rc = ew_wf_quantity_parse(line + 8, 0, "--target", &q, &err);
      if (rc == EW_OK && !(q.eV > 0 && isfinite(q.eV) && q.nm > 0 && isfinite(q.nm)))
        return "quantity parser accepted a non-finite or non-positive quantity";
      if (rc != EW_OK && rc != EW_ERR_USAGE) return "quantity parser status not EW_ERR_USAGE";
    } else if (!strncmp(line, "#set ", 5)) {
      char *eq = strchr(line + 5, '=');
      if (!eq) continue;
      *eq = '\0';
      char *end;
      double v = strtod(eq + 1, &end);
      const char *key = line + 5;
      ew_stack *st = NULL;
      ew_status rc = ew_stack_read_string_set(text, "fuzz.cfg", cat, 1, &key, &v, &st, &err);
      if (rc == EW_OK && !st) return "set: accepted stack but NULL";
      if (rc != EW_OK && (st || err.message[0] == '\0')) return "set: rejection without a message";
      ew_stack_free(st);
    }
  }
  return NULL;
}

/* Checks one input; returns NULL when every contract held, otherwise what broke (static
 * text).  *solved tells whether the solver ran. */
static const char *fuzz_check_one(const uint8_t *data, size_t size, const ew_catalogue *cat,
                                  int *solved) {
  *solved = 0;
  if (size > FUZZ_MAX_INPUT) return NULL; /* stack files are small; not interesting */
  char *text = malloc(size + 1);
  if (!text) return NULL;
  memcpy(text, data, size);
  text[size] = '\0'; /* an embedded NUL ends the text, as in any C string */

  const char *bad = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  ew_stack *st = (ew_stack *)(uintptr_t)1; /* sentinel: must be overwritten */
  ew_status rc = ew_stack_read_string(text, "fuzz.cfg", cat, &st, &err);
  const char *pbad = fuzz_parsers(text, cat);
  free(text);
  if (pbad) {
    if (rc == EW_OK) ew_stack_free(st);
    return pbad;
  }
  if (rc != EW_OK && !fuzz_clean_text(err.message, strlen(err.message)))
    return "an error message holds a control byte or invalid UTF-8";
  if (rc != EW_OK) {
    if (st != NULL) return "rejected stack but *out is not NULL";
    if (rc < EW_ERR_USAGE || rc > EW_ERR_NUMERIC) return "reader status outside 1..6";
    if (err.code != rc) return "err.code differs from the returned status";
    if (err.message[0] == '\0') return "rejection without a message";
    if (err.line < 0) return "rejection with a negative line";
    return NULL;
  }
  if (!st) return "accepted stack but *out is NULL";
  if (st->n_layers < 1) bad = "accepted stack without layers";
  else if (!(st->total_nm > 0) || !isfinite(st->total_nm)) bad = "total thickness not finite > 0";
  for (size_t i = 0; !bad && i < st->n_layers; i++) {
    const ew_layer *L = &st->layers[i];
    if (!(L->thickness_nm > 0) || !isfinite(L->z_start_nm)) bad = "layer thickness/position";
    else if (!isfinite(L->bands.Ec_eV) || !isfinite(L->bands.Ev_hh_eV) ||
             !isfinite(L->bands.Ev_lh_eV) || !(L->bands.me > 0) || !(L->bands.mhh_z > 0) ||
             !(L->bands.mlh_z > 0))
      bad = "accepted layer with non-finite edges or non-positive masses";
    /* issue 18: the limits of README "Robustness" hold for the resolved layer (a user
       alloy's bowing gave 2.5e307 m0): edges within 10 eV, masses in [1e-3, 100] m0 */
    else if (fabs(L->bands.Ec_eV) > 10 || fabs(L->bands.Ev_hh_eV) > 10 || L->bands.me < 1e-3 ||
             L->bands.me > 100 || L->bands.mhh_z > 100 || L->bands.mlh_z > 100 ||
             L->bands.mhh_z < 1e-3 || L->bands.mlh_z < 1e-3 ||
             !(L->bands.eps_r == 0 || (L->bands.eps_r >= 1 && L->bands.eps_r <= 100)))
      bad = "accepted layer with parameters beyond the documented limits";
  }
  if (bad || st->total_nm > FUZZ_MAX_TOTAL_NM || st->n_layers > FUZZ_MAX_LAYERS) {
    ew_stack_free(st);
    return bad;
  }

  *solved = 1;
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = FUZZ_GRID_STEP_NM;
  ew_result *res = (ew_result *)(uintptr_t)1;
  memset(&err, 0, sizeof err);
  rc = ew_solve(st, &opt, &res, &err);
  if (rc != EW_OK) {
    if (res != NULL) bad = "failed solve but *out is not NULL";
    else if (rc < EW_ERR_USAGE || rc > EW_ERR_NUMERIC) bad = "solver status outside 1..6";
    else if (err.message[0] == '\0') bad = "solver failure without a message";
    ew_stack_free(st);
    return bad;
  }
  size_t n = ew_result_state_count(res), nodes = ew_result_node_count(res), sum = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) sum += ew_result_band_count(res, (ew_band)b);
  if (sum != n) bad = "state count differs from the certified band counts";
  for (size_t i = 0; !bad && i < n; i++) {
    const ew_state *s = ew_result_state(res, i);
    const double *psi = ew_result_wavefunction(res, i);
    if (!isfinite(s->energy_eV) || !isfinite(s->residual) || !isfinite(s->depth_eV))
      bad = "state with a non-finite energy, residual or depth";
    else if (!(s->error_eV == -1.0 || (s->error_eV >= 0 && isfinite(s->error_eV))))
      bad = "error estimate neither -1 nor finite >= 0";
    else if (s->layer >= st->n_layers)
      bad = "state located in a layer that does not exist";
    else if (!(s->layer_probability >= 0 && s->layer_probability <= 1 + 1e-9))
      bad = "layer probability outside [0, 1]";
    else if (!(s->inplane_mass > 0 && isfinite(s->inplane_mass)))
      bad = "in-plane mass not finite and positive";
    for (size_t k = 0; !bad && k < nodes; k++)
      if (!isfinite(psi[k])) bad = "non-finite wavefunction value";
  }
  for (size_t j = 0; !bad && j < ew_result_line_count(res); j++) {
    const ew_line *l = ew_result_line(res, j);
    if (l->upper >= n || l->lower >= n) bad = "line names a state that does not exist";
    else if (!isfinite(l->energy_eV) || !isfinite(l->overlap) || !isfinite(l->dipole_nm))
      bad = "line with a non-finite energy, overlap or dipole";
  }
  if (!bad) bad = fuzz_writers(res, cat);
  ew_result_free(res);
  ew_stack_free(st);
  return bad;
}

#ifndef EW_FUZZ_NO_MAIN
/* libconfig 1.5 leaks the text of a string token that its parser discards on a syntax error
 * (no bison %destructor): through strbuf_append for a non-empty string, straight from the
 * lexer (libconfig_yylex) for "" — e.g. 'name "" x'.  Not ours (epiwell always calls
 * config_destroy), and the fuzzer hits it constantly. */
const char *__lsan_default_suppressions(void);
const char *__lsan_default_suppressions(void) {
  /* fontconfig (through cairo, for the PNG) keeps its font cache for the process: not ours */
  return "leak:strbuf_append\nleak:libconfig_yylex\nleak:libfontconfig.so\n";
}

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* test harness only: the catalogue is loaded once for the whole fuzzing run */
static ew_catalogue *fuzz_cat;

int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  ew_error err;
  memset(&err, 0, sizeof err);
  const char *env = getenv("EPIWELL_MATERIALS");
  if (ew_catalogue_load(env && env[0] ? env : "materials", &fuzz_cat, &err) != EW_OK) {
    char buf[2048];
    fprintf(stderr, "fuzz_stack: cannot load the catalogue (%s); run from the project root "
            "or set EPIWELL_MATERIALS\n", ew_error_text(&err, buf, sizeof buf));
    exit(1);
  }
  return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  int solved;
  const char *bad = fuzz_check_one(data, size, fuzz_cat, &solved);
  if (bad) {
    fprintf(stderr, "fuzz_stack: contract broken: %s\n", bad);
    abort();
  }
  return 0;
}
#endif
