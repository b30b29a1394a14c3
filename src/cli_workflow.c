/* cli_workflow.c — the `epiwell sweep`, `epiwell match` and `epiwell tolerance` commands:
 * options → calls of the workflow modules (workflow.h lists them) → exit codes (the same
 * codes as the rest of the CLI).
 *
 * Output discipline (README "Exit codes"): on any error nothing is written to standard
 * output and no output file is left half-written, so standard output is assembled in memory
 * and written only on success, and --csv FILE is written under a temporary name in the same
 * directory and renamed into place. */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "cli_common.h"
#include "epiwell.h"
#include "error.h"
#include "plot.h"
#include "chart_file.h"
#include "line_name.h"
#include "match.h"
#include "output_set.h"
#include "parallel.h"
#include "range.h"
#include "stack.h"
#include "stack_model.h"
#include "sweep.h"
#include "sweep_plot.h"
#include "tolerance.h"

int ew_cli_sweep(int argc, char **argv);
int ew_cli_match(int argc, char **argv);
int ew_cli_tolerance(int argc, char **argv);

static const char sweep_usage[] =
    "usage: epiwell sweep STACK --vary KEY=FROM:TO:STEP [--vary KEY=FROM:TO:STEP]\n"
    "                     [--csv FILE] [--json] [--threads N] [--shard K/N] [--no-header]\n"
    "                     [--levels N] [--grid-step NM] [--no-estimate]\n"
    "                     [--plot FILE.svg|FILE.png]\n"
    "  --plot FILE.svg|.png  pictures of the sweep (the CSV/JSON output is unchanged):\n"
    "      one --vary:  FILE                   every level (eV) against the varied value\n"
    "                   FILE-interband.EXT     interband main lines, wavelength (nm)\n"
    "                   FILE-intersubband.EXT  intersubband main lines, wavelength (um)\n"
    "      two --vary:  the same three files, the first key on the x axis and one curve per\n"
    "                   value of the second key (at most 12, evenly spaced), of e1 (FILE),\n"
    "                   e1-hh1 (FILE-interband) and e1-e2 (FILE-intersubband)\n"
    "      a gap is a level not bound there; a chart whose lines never occur is not written\n"
    "      (a note on stderr says so); with --shard only that part's points are drawn\n";
static const char match_usage[] =
    "usage: epiwell match STACK --vary KEY=FROM:TO --line LINE --target VALUE\n"
    "                     [--tolerance VALUE] [--samples N] [--json] [--threads N]\n"
    "                     [--grid-step NM] [--no-estimate]\n"
    "       (two unknowns: --vary twice and --line/--target twice)\n"
    "       VALUE is a number with a unit: eV, meV, nm, um or \xc2\xb5m (e.g. 9.0um, 1.548eV)\n";
static const char tolerance_usage[] =
    "usage: epiwell tolerance STACK [--dx DX] [--ladder LAYER] [--json] [--threads N]\n"
    "                         [--grid-step NM] [--no-estimate]\n";

static int report(const ew_error *err) { return ew_cli_report(err); }
static int parse_num(const char *s, double *v) { return ew_cli_parse_num(s, v); }

static int parse_whole(const char *s, double lo, double hi, size_t *out) {
  double v;
  if (!parse_num(s, &v) || v < lo || v > hi || v != floor(v)) return 0;
  *out = (size_t)v;
  return 1;
}

/* Options every workflow command takes.  Returns 1 when argv[*i] was one (and consumed its
 * value), 0 when it is not one of them, -1 after reporting a usage error. */
typedef struct {
  ew_options solve;
  int threads;
  int json;
} common_opt;

static int common_option(const char *usage, int argc, char **argv, int *i, common_opt *c) {
  const char *a = argv[*i];
  if (!strcmp(a, "--json")) {
    c->json = 1;
    return 1;
  }
  if (!strcmp(a, "--no-estimate")) {
    c->solve.error_estimate = 0;
    return 1;
  }
  if (strcmp(a, "--threads") && strcmp(a, "--grid-step")) return 0;
  if (*i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a), -1;
  const char *v = argv[++*i];
  if (!strcmp(a, "--threads")) {
    size_t n;
    if (!parse_whole(v, 1, 4096, &n))
      return ew_cli_bad(usage, "--threads wants a whole number of threads >= 1, got %s", v), -1;
    c->threads = (int)n;
  } else if (!parse_num(v, &c->solve.grid_step_nm) || c->solve.grid_step_nm <= 0 ||
             c->solve.grid_step_nm > 1) {
    return ew_cli_bad(usage, "--grid-step wants a step in nm in (0, 1], got %s", v), -1;
  }
  return 1;
}

static void common_init(common_opt *c) {
  ew_options_default(&c->solve);
  c->threads = 0;
  c->json = 0;
}

/* Warn once when threads were asked for but the build has no OpenMP. */
static void threads_note(int threads) {
  if (threads > 1 && !ew_wf_have_openmp())
    fprintf(stderr, "epiwell: built without OpenMP: running on 1 thread\n");
}

/* ---- output sinks ---------------------------------------------------------------------- */
typedef struct {
  char *buf;
  size_t len;
  FILE *f;
} membuf;

static int mem_open(membuf *m) {
  m->buf = NULL;
  m->len = 0;
  m->f = open_memstream(&m->buf, &m->len);
  return m->f != NULL;
}

/* Flush the buffer to stdout (when ok) and release it; returns 0 or EW_ERR_IO. */
static int mem_finish(membuf *m, int ok) {
  int rc = 0;
  if (m->f && fclose(m->f) != 0) rc = EW_ERR_IO;
  m->f = NULL;
  if (ok && !rc && m->buf && (fwrite(m->buf, 1, m->len, stdout) != m->len || fflush(stdout) != 0)) {
    fprintf(stderr, "epiwell: cannot write standard output: %s\n", strerror(errno));
    rc = EW_ERR_IO;
  }
  free(m->buf);
  m->buf = NULL;
  return rc;
}

typedef struct {
  const char *path;
  char tmp[4096];
  FILE *f;
} atomic_file;

/* A temporary file next to path (same directory, so the rename is atomic). */
static int atomic_open(atomic_file *a, const char *path, ew_error *err) {
  a->path = path;
  a->f = NULL;
  if (snprintf(a->tmp, sizeof a->tmp, "%s.tmp.XXXXXX", path) >= (int)sizeof a->tmp)
    return ew_fail(err, EW_ERR_IO, path, 0, "--csv %s: path too long", path);
  int fd = mkstemp(a->tmp);
  if (fd < 0)
    return ew_fail(err, EW_ERR_IO, path, 0, "--csv %s: cannot create a file there: %s", path,
                   strerror(errno));
  mode_t um = umask(0);
  umask(um);
  (void)fchmod(fd, 0666 & ~um); /* mkstemp makes 0600; give the file the usual mode */
  a->f = fdopen(fd, "w");
  if (!a->f) {
    close(fd);
    unlink(a->tmp);
    return ew_fail(err, EW_ERR_IO, path, 0, "--csv %s: %s", path, strerror(errno));
  }
  return EW_OK;
}

static int atomic_close(atomic_file *a, int ok, ew_error *err) {
  if (!a->f) return EW_OK;
  int bad_write = ferror(a->f) != 0;
  int bad_close = fclose(a->f) != 0;
  a->f = NULL;
  if (!ok) {
    unlink(a->tmp);
    return EW_OK;
  }
  if (bad_write || bad_close || rename(a->tmp, a->path) != 0) {
    int e = errno;
    unlink(a->tmp);
    return ew_fail(err, EW_ERR_IO, a->path, 0, "cannot write '%s': %s", a->path, strerror(e));
  }
  return EW_OK;
}

/* ---- progress (stderr, only on a terminal) --------------------------------------------- */
typedef struct {
  int last;
} progress_state;

static void progress_bar(void *ctx, size_t done, size_t total) {
  progress_state *p = ctx;
  int pct = total ? (int)(100.0 * (double)done / (double)total) : 100;
  if (pct == p->last && done != total) return;
  p->last = pct;
  char bar[41];
  int fill = pct * 40 / 100;
  for (int i = 0; i < 40; i++) bar[i] = i < fill ? '#' : '.';
  bar[40] = '\0';
  fprintf(stderr, "\rsweep [%s] %3d%% %zu/%zu points", bar, pct, done, total);
  if (done == total) fputc('\n', stderr);
  fflush(stderr);
}

/* ---- sweep ----------------------------------------------------------------------------- */
static int parse_shard(const char *v, size_t *k, size_t *n) {
  const char *slash = strchr(v, '/');
  if (!slash) return 0;
  char a[32];
  size_t la = (size_t)(slash - v);
  if (la == 0 || la >= sizeof a) return 0;
  memcpy(a, v, la);
  a[la] = '\0';
  return parse_whole(a, 1, 1e6, k) && parse_whole(slash + 1, 1, 1e6, n) && *k <= *n;
}

int ew_cli_sweep(int argc, char **argv) {
  const char *path = NULL, *csv_path = NULL, *plot_path = NULL;
  ew_wf_range ranges[2];
  size_t nr = 0;
  common_opt c;
  common_init(&c);
  ew_wf_sweep_opt so;
  ew_wf_sweep_opt_default(&so);
  ew_error err = {0};
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int r = common_option(sweep_usage, argc, argv, &i, &c);
    if (r < 0) return EW_ERR_USAGE;
    if (r > 0) continue;
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      fputs(sweep_usage, stdout);
      return 0;
    } else if (!strcmp(a, "--no-header")) {
      so.header = 0;
    } else if (!strcmp(a, "--vary") || !strcmp(a, "--csv") || !strcmp(a, "--shard") ||
               !strcmp(a, "--levels") || !strcmp(a, "--plot")) {
      if (i + 1 >= argc) return ew_cli_bad(sweep_usage, "%s needs a value", a);
      const char *v = argv[++i];
      if (!strcmp(a, "--plot")) {
        if (!ew_plot_format(v))
          return ew_cli_bad(sweep_usage, "--plot wants a file name ending in .svg or .png, got %s", v);
        plot_path = v;
      } else if (!strcmp(a, "--levels")) {
        if (!parse_whole(v, 0, 10000, &so.min_levels))
          return ew_cli_bad(sweep_usage, "--levels wants a whole number of levels per band, got %s", v);
      } else if (!strcmp(a, "--csv")) {
        csv_path = v;
      } else if (!strcmp(a, "--shard")) {
        if (!parse_shard(v, &so.shard_k, &so.shard_n))
          return ew_cli_bad(sweep_usage, "--shard wants K/N with 1 <= K <= N (e.g. 3/8), got %s", v);
      } else {
        if (nr == 2) return ew_cli_bad(sweep_usage, "%s", "--vary: at most two ranges (a grid)");
        if (ew_wf_range_parse(v, 1, "--vary", &ranges[nr], &err) != EW_OK) return report(&err);
        nr++;
      }
    } else if (a[0] == '-' && a[1]) {
      return ew_cli_bad(sweep_usage, "unknown option %s", a);
    } else if (!path) {
      path = a;
    } else {
      return ew_cli_bad(sweep_usage, "unexpected argument %s", a);
    }
  }
  if (!path) return ew_cli_bad(sweep_usage, "%s", "sweep needs a stack file");
  if (nr == 0) return ew_cli_bad(sweep_usage, "%s", "sweep needs --vary KEY=FROM:TO:STEP");
  /* every picture file must be writable before any point is solved */
  if (plot_path) {
    for (int f = 0; f < EW_WF_PLOT_FILES; f++) {
      char pp[EW_WF_PATH_MAX];
      if (ew_wf_plot_companion(plot_path, EW_WF_PLOT_SUFFIX[f], "--plot", pp, sizeof pp, &err) !=
              EW_OK ||
          ew_plot_check_path(pp, &err) != EW_OK) {
        if (!strstr(err.message, "--plot")) {
          char msg[sizeof err.message];
          snprintf(msg, sizeof msg, "--plot: %.1000s", err.message);
          snprintf(err.message, sizeof err.message, "%s", msg);
        }
        return report(&err);
      }
    }
  }
  threads_note(c.threads);
  so.threads = c.threads;
  ew_wf_table table;
  memset(&table, 0, sizeof table);
  if (plot_path) so.table = &table;
  ew_wf_outset pics;
  ew_wf_outset_init(&pics);
  int written[EW_WF_PLOT_FILES] = {0};
  progress_state ps = {-1};
  if (isatty(fileno(stderr))) {
    so.progress = progress_bar;
    so.progress_ctx = &ps;
  }
  ew_catalogue *cat = NULL;
  ew_wf_model *m = NULL;
  atomic_file af = {NULL, "", NULL};
  membuf out = {NULL, 0, NULL};
  int rc = 0;
  c.solve.excitons = 0; /* the sweep's columns hold no PL peaks: skip the exciton work */
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_wf_model_open(path, cat, &c.solve, &m, &err) != EW_OK ||
      (csv_path && atomic_open(&af, csv_path, &err) != EW_OK)) {
    rc = report(&err);
  } else if (!mem_open(&out)) {
    rc = EW_ERR_NOMEM;
    fprintf(stderr, "epiwell: out of memory\n");
  } else {
    /* CSV to the file when given, else to stdout unless only JSON was asked for */
    FILE *csv = csv_path ? af.f : (c.json ? NULL : out.f);
    FILE *json = c.json ? out.f : NULL;
    ew_status st = ew_wf_sweep(m, ranges, nr, &so, csv, json, &err);
    /* pictures under temporary names first, then the CSV, then the pictures into place:
     * an error anywhere leaves no new file */
    if (st == EW_OK && plot_path) st = ew_wf_sweep_plot(&table, plot_path, &pics, written, &err);
    if (st != EW_OK) rc = report(&err);
    if (atomic_close(&af, st == EW_OK, &err) != EW_OK && !rc) rc = report(&err);
    if (ew_wf_outset_commit(&pics, rc == 0, &err) != EW_OK && !rc) rc = report(&err);
    if (!rc && plot_path)
      for (int f = 0; f < EW_WF_PLOT_FILES; f++)
        if (!written[f]) {
          char pp[EW_WF_PATH_MAX];
          ew_wf_plot_companion(plot_path, EW_WF_PLOT_SUFFIX[f], "--plot", pp, sizeof pp, NULL);
          fprintf(stderr, "epiwell: --plot: no %s%s in this sweep: %s not written\n",
                  f ? EW_WF_PLOT_SUFFIX[f] : "bound level", f ? " main line" : "", pp);
        }
    int io = mem_finish(&out, rc == 0);
    if (!rc) rc = io;
  }
  if (af.f) atomic_close(&af, 0, &err);
  if (out.f) mem_finish(&out, 0);
  ew_wf_outset_commit(&pics, 0, NULL);
  ew_wf_table_free(&table);
  ew_wf_model_free(m);
  ew_catalogue_free(cat);
  return rc;
}

/* ---- match ----------------------------------------------------------------------------- */
int ew_cli_match(int argc, char **argv) {
  const char *path = NULL, *lines[2] = {NULL, NULL};
  ew_wf_range ranges[2];
  ew_wf_quantity targets[2], tol;
  size_t nr = 0, nl = 0, nt = 0;
  int have_tol = 0;
  common_opt c;
  common_init(&c);
  ew_wf_match_opt mo = {0, 0};
  ew_error err = {0};
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int r = common_option(match_usage, argc, argv, &i, &c);
    if (r < 0) return EW_ERR_USAGE;
    if (r > 0) continue;
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      fputs(match_usage, stdout);
      return 0;
    }
    if (!strcmp(a, "--vary") || !strcmp(a, "--line") || !strcmp(a, "--target") ||
        !strcmp(a, "--tolerance") || !strcmp(a, "--samples")) {
      if (i + 1 >= argc) return ew_cli_bad(match_usage, "%s needs a value", a);
      const char *v = argv[++i];
      if (!strcmp(a, "--vary")) {
        if (nr == 2) return ew_cli_bad(match_usage, "%s", "--vary: at most two unknowns");
        if (ew_wf_range_parse(v, 0, "--vary", &ranges[nr], &err) != EW_OK) return report(&err);
        nr++;
      } else if (!strcmp(a, "--line")) {
        if (nl == 2) return ew_cli_bad(match_usage, "%s", "--line: at most two lines");
        double dummy;
        if (ew_wf_line_energy(NULL, v, &dummy, &err) != EW_OK) return report(&err);
        lines[nl++] = v;
      } else if (!strcmp(a, "--target")) {
        if (nt == 2) return ew_cli_bad(match_usage, "%s", "--target: at most two targets");
        if (ew_wf_quantity_parse(v, 0, "--target", &targets[nt], &err) != EW_OK)
          return report(&err);
        nt++;
      } else if (!strcmp(a, "--tolerance")) {
        if (ew_wf_quantity_parse(v, 1, "--tolerance", &tol, &err) != EW_OK) return report(&err);
        have_tol = 1;
      } else if (!parse_whole(v, 2, 1e6, &mo.samples)) {
        return ew_cli_bad(match_usage, "--samples wants a whole number >= 2, got %s", v);
      }
    } else if (a[0] == '-' && a[1]) {
      return ew_cli_bad(match_usage, "unknown option %s", a);
    } else if (!path) {
      path = a;
    } else {
      return ew_cli_bad(match_usage, "unexpected argument %s", a);
    }
  }
  if (!path) return ew_cli_bad(match_usage, "%s", "match needs a stack file");
  if (nr == 0) return ew_cli_bad(match_usage, "%s", "match needs --vary KEY=FROM:TO");
  if (nl != nr || nt != nr)
    return ew_cli_bad(match_usage, "%s", "match needs one --line and one --target per --vary");
  if (have_tol && nr == 2) return ew_cli_bad(match_usage, "%s", "--tolerance works with one --vary only");
  threads_note(c.threads);
  mo.threads = c.threads;
  c.solve.excitons = 0; /* only a PL-peak target (A-B:pl) needs the exciton binding */
  for (size_t i = 0; i < (size_t)nl; i++)
    if (strlen(lines[i]) > 3 && !strcmp(lines[i] + strlen(lines[i]) - 3, ":pl")) c.solve.excitons = 1;
  ew_catalogue *cat = NULL;
  ew_wf_model *m = NULL;
  ew_wf_match_result res;
  memset(&res, 0, sizeof res);
  int rc = 0;
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_wf_model_open(path, cat, &c.solve, &m, &err) != EW_OK ||
      ew_wf_match(m, ranges, nr, lines, targets, nr, have_tol ? &tol : NULL, &mo, &res, &err) !=
          EW_OK) {
    rc = report(&err);
  } else {
    /* no solution is an answer, not an error: exit 0, the reached range on stderr too */
    if (res.n == 0) fprintf(stderr, "epiwell: %s\n", res.message);
    if (c.json) ew_wf_match_print_json(&res, stdout);
    else ew_wf_match_print(&res, stdout);
    if (fflush(stdout) != 0) rc = EW_ERR_IO;
  }
  ew_wf_match_result_free(&res);
  ew_wf_model_free(m);
  ew_catalogue_free(cat);
  return rc;
}

/* ---- tolerance ------------------------------------------------------------------------- */
int ew_cli_tolerance(int argc, char **argv) {
  const char *path = NULL, *ladder = NULL;
  double dx = 0.01;
  common_opt c;
  common_init(&c);
  ew_error err = {0};
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int r = common_option(tolerance_usage, argc, argv, &i, &c);
    if (r < 0) return EW_ERR_USAGE;
    if (r > 0) continue;
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      fputs(tolerance_usage, stdout);
      return 0;
    }
    if (!strcmp(a, "--dx") || !strcmp(a, "--ladder")) {
      if (i + 1 >= argc) return ew_cli_bad(tolerance_usage, "%s needs a value", a);
      const char *v = argv[++i];
      if (!strcmp(a, "--ladder")) ladder = v;
      else if (!parse_num(v, &dx) || dx <= 0 || dx > 0.5)
        return ew_cli_bad(tolerance_usage, "--dx wants a composition step in (0, 0.5], got %s", v);
    } else if (a[0] == '-' && a[1]) {
      return ew_cli_bad(tolerance_usage, "unknown option %s", a);
    } else if (!path) {
      path = a;
    } else {
      return ew_cli_bad(tolerance_usage, "unexpected argument %s", a);
    }
  }
  if (!path) return ew_cli_bad(tolerance_usage, "%s", "tolerance needs a stack file");
  threads_note(c.threads);
  ew_catalogue *cat = NULL;
  ew_wf_model *m = NULL;
  ew_wf_tolerance *t = NULL;
  ew_wf_ladder *l = NULL;
  int rc = 0;
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_wf_model_open(path, cat, &c.solve, &m, &err) != EW_OK ||
      (ladder ? ew_wf_ladder_run(m, ladder, c.threads, &l, &err)
              : ew_wf_tolerance_run(m, dx, c.threads, &t, &err)) != EW_OK) {
    rc = report(&err);
  } else {
    const ew_stack *st = ew_wf_model_stack(m);
    if (l && c.json) ew_wf_ladder_print_json(l, st, stdout);
    else if (l) ew_wf_ladder_print(l, st, stdout);
    else if (c.json) ew_wf_tolerance_print_json(t, stdout);
    else ew_wf_tolerance_print(t, stdout);
    if (fflush(stdout) != 0) rc = EW_ERR_IO;
  }
  ew_wf_ladder_free(l);
  ew_wf_tolerance_free(t);
  ew_wf_model_free(m);
  ew_catalogue_free(cat);
  return rc;
}
