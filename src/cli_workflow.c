/* cli_workflow.c — the `epiwell sweep`, `epiwell match` and `epiwell tolerance` commands:
 * options → calls of the workflow modules (workflow.h lists them) → exit codes (the same
 * codes as the rest of the CLI).
 *
 * Output discipline (README "Exit codes"): on any error nothing is written to standard
 * output and no output file is left half-written, so standard output is assembled in memory
 * and written only on success, and the files of a sweep (--csv FILE, --plot FILE) are staged
 * in one set before any point is solved and put in place together (ew_output_set_*).  Uses
 * the public API only
 * (epiwell.h); each command is an options struct and its parse / run / write steps. */
#include <errno.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli_common.h"
#include "epiwell.h"

static const char sweep_usage[] =
    "usage: epiwell sweep STACK --vary KEY=FROM:TO:STEP [--vary KEY=FROM:TO:STEP]\n"
    "                     [--csv FILE] [--json] [--threads N] [--shard K/N|auto] [--no-header]\n"
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
    "      (a note on stderr says so); with --shard only that part's points are drawn\n"
    "  --shard auto  the part of this task of a Slurm job array (SLURM_ARRAY_TASK_ID,\n"
    "      _COUNT, _MIN; sbatch --array=1-N); join the parts with epiwell merge\n"
    "  SIGINT or SIGTERM stops the sweep: exit 7, no output file written\n";
static const char match_usage[] =
    "usage: epiwell match STACK --vary KEY=FROM:TO --line LINE --target VALUE\n"
    "                     [--tolerance VALUE] [--samples N] [--json] [--threads N]\n"
    "                     [--grid-step NM] [--no-estimate] [--shard K/N|auto]\n"
    "       (two unknowns: --vary twice and --line/--target twice)\n"
    "  --shard K/N  scan only the K-th of N parts of the samples (1D: of the intervals\n"
    "      between samples; 2D: of the rows of grid cells) and write that part as JSON, one\n"
    "      line; epiwell merge joins the parts into exactly the --json of the whole match\n"
    "  --shard auto  the part of this task of a Slurm job array (as for sweep)\n"
    "       VALUE is a number with a unit: eV, meV, nm, um or \xc2\xb5m (e.g. 9.0um, 1.548eV)\n";
static const char tolerance_usage[] =
    "usage: epiwell tolerance STACK [--dx DX] [--rate PCT] [--ladder LAYER] [--json]\n"
    "                         [--threads N] [--grid-step NM] [--no-estimate]\n"
    "  the table ends with the spread of every main line from the stated growth tolerances:\n"
    "  -/+1 ML of every layer, -/+DX of every alloy x (default 0.01), each on its own, and\n"
    "  with --rate a growth-rate error of -/+PCT percent, scaling all thicknesses together\n";

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

/* ---- standard output, assembled in memory --------------------------------------------- */
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

/* ---- progress (stderr, only on a terminal) and cancelling (SIGINT, SIGTERM) ----------- */
/* A signal asks the running sweep or match to stop: its progress callback returns nonzero,
 * the library stops with EW_ERR_CANCELLED after the points in flight, and the staged output
 * files are removed as after any error (a workload manager's job cancel sends SIGTERM). */
static volatile sig_atomic_t stop_signal;

static void on_stop_signal(int sig) { stop_signal = sig; }

static void catch_stop_signals(void) {
  struct sigaction sa;
  memset(&sa, 0, sizeof sa);
  sa.sa_handler = on_stop_signal;
  sigemptyset(&sa.sa_mask);
  sigaction(SIGINT, &sa, NULL);
  sigaction(SIGTERM, &sa, NULL);
}

typedef struct {
  int last;
  int bar; /* 1: draw the bar (stderr is a terminal) */
} progress_state;

static int progress_bar(void *ctx, size_t done, size_t total) {
  progress_state *p = ctx;
  if (stop_signal) return 1;
  int pct = total ? (int)(100.0 * (double)done / (double)total) : 100;
  if (!p->bar || (pct == p->last && done != total)) return 0;
  p->last = pct;
  char bar[41];
  int fill = pct * 40 / 100;
  for (int i = 0; i < 40; i++) bar[i] = i < fill ? '#' : '.';
  bar[40] = '\0';
  fprintf(stderr, "\rsweep [%s] %3d%% %zu/%zu points", bar, pct, done, total);
  if (done == total) fputc('\n', stderr);
  fflush(stderr);
  return 0;
}

/* The match's callback: the signal only (the number of its solves is not known). */
static int match_cancel(void *ctx, size_t done, size_t total) {
  (void)ctx, (void)done, (void)total;
  return stop_signal != 0;
}

/* ---- sweep ----------------------------------------------------------------------------- */
/* A whole number >= 0 from the environment variable name into *v; 0 when unset or not one. */
static int env_whole(const char *name, size_t *v) {
  const char *s = getenv(name);
  return s && *s && parse_whole(s, 0, 1e9, v);
}

/* --shard auto: part K of N of a Slurm job array, K = SLURM_ARRAY_TASK_ID −
 * SLURM_ARRAY_TASK_MIN + 1, N = SLURM_ARRAY_TASK_COUNT (so the IDs must be consecutive:
 * --array=MIN-MAX, no step, no list).  0 or the exit code of a usage error. */
static int shard_auto(const char *usage, size_t *k, size_t *n) {
  static const char *const vars[3] = {"SLURM_ARRAY_TASK_ID", "SLURM_ARRAY_TASK_COUNT",
                                      "SLURM_ARRAY_TASK_MIN"};
  size_t v[3];
  for (int i = 0; i < 3; i++)
    if (!env_whole(vars[i], &v[i]))
      return ew_cli_bad(usage, "--shard auto: %s is %s (auto takes the part from a Slurm "
                        "job array: sbatch --array=1-N; elsewhere give --shard K/N)", vars[i],
                        getenv(vars[i]) ? "not a whole number" : "not set");
  if (v[0] < v[2] || v[1] < 1 || v[0] - v[2] + 1 > v[1] || v[1] > 1000000)
    return ew_cli_bad(usage, "--shard auto: task %zu of an array of %zu from %zu: the task "
                      "IDs must be consecutive (sbatch --array=MIN-MAX, without :STEP or a list)",
                      v[0], v[1], v[2]);
  *k = v[0] - v[2] + 1;
  *n = v[1];
  return 0;
}

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

typedef struct {
  common_opt c;
  const char *path, *csv_path, *plot_path;
  ew_sweep_options so;
  ew_sweep *sw; /* holds the --vary ranges */
  int help;
} sweep_cmd;

/* The value v of option a (one of those that take one); 0 or an exit code. */
static int sweep_value(const char *a, const char *v, sweep_cmd *s) {
  ew_error err = {0};
  if (!strcmp(a, "--plot")) {
    if (!ew_plot_format(v))
      return ew_cli_bad(sweep_usage, "--plot wants a file name ending in .svg or .png, got %s", v);
    s->plot_path = v;
  } else if (!strcmp(a, "--levels")) {
    if (!parse_whole(v, 0, 10000, &s->so.min_levels))
      return ew_cli_bad(sweep_usage, "--levels wants a whole number of levels per band, got %s", v);
  } else if (!strcmp(a, "--csv")) {
    s->csv_path = v;
  } else if (!strcmp(a, "--shard") && !strcmp(v, "auto")) {
    return shard_auto(sweep_usage, &s->so.shard_k, &s->so.shard_n);
  } else if (!strcmp(a, "--shard")) {
    if (!parse_shard(v, &s->so.shard_k, &s->so.shard_n))
      return ew_cli_bad(sweep_usage, "--shard wants K/N with 1 <= K <= N (e.g. 3/8), got %s", v);
  } else {
    if (ew_sweep_key_count(s->sw) == 2)
      return ew_cli_bad(sweep_usage, "%s", "--vary: at most two ranges (a grid)");
    if (ew_sweep_vary(s->sw, v, &err) != EW_OK) return report(&err);
  }
  return 0;
}

static int sweep_parse(int argc, char **argv, sweep_cmd *s) {
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int r = common_option(sweep_usage, argc, argv, &i, &s->c), rc = 0;
    if (r < 0) return EW_ERR_USAGE;
    if (r > 0) continue;
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      s->help = 1;
      return 0;
    } else if (!strcmp(a, "--no-header")) {
      s->so.header = 0;
    } else if (!strcmp(a, "--vary") || !strcmp(a, "--csv") || !strcmp(a, "--shard") ||
               !strcmp(a, "--levels") || !strcmp(a, "--plot")) {
      if (i + 1 >= argc) return ew_cli_bad(sweep_usage, "%s needs a value", a);
      rc = sweep_value(a, argv[++i], s);
    } else if (a[0] == '-' && a[1]) {
      rc = ew_cli_bad(sweep_usage, "unknown option %s", a);
    } else if (!s->path) {
      s->path = a;
    } else {
      rc = ew_cli_bad(sweep_usage, "unexpected argument %s", a);
    }
    if (rc) return rc;
  }
  if (!s->path) return ew_cli_bad(sweep_usage, "%s", "sweep needs a stack file");
  if (ew_sweep_key_count(s->sw) == 0)
    return ew_cli_bad(sweep_usage, "%s", "sweep needs --vary KEY=FROM:TO:STEP");
  return 0;
}

/* Every picture file must be writable before any point is solved. */
static int sweep_check_plots(const char *plot_path) {
  ew_error err = {0};
  for (int f = 0; plot_path && f < EW_SWEEP_PLOT_FILES; f++) {
    char pp[EW_CLI_PATH_MAX];
    if (ew_plot_companion_name(plot_path, ew_sweep_plot_suffix(f), "--plot", pp, sizeof pp,
                               &err) != EW_OK ||
        ew_plot_path_check(pp, &err) != EW_OK) {
      if (!strstr(err.message, "--plot")) ew_cli_prefix(&err, "--plot");
      return report(&err);
    }
  }
  return 0;
}

/* A note on stderr for each chart that had nothing to draw. */
static void sweep_plot_notes(const char *plot_path, const int written[EW_SWEEP_PLOT_FILES]) {
  for (int f = 0; f < EW_SWEEP_PLOT_FILES; f++) {
    if (written[f]) continue;
    char pp[EW_CLI_PATH_MAX];
    const char *sfx = ew_sweep_plot_suffix(f);
    ew_plot_companion_name(plot_path, sfx, "--plot", pp, sizeof pp, NULL);
    fprintf(stderr, "epiwell: --plot: no %s%s in this sweep: %s not written\n",
            f ? sfx : "bound level", f ? " main line" : "", pp);
  }
}

/* The sweep's output files, staged in one set before any point is solved (the CSV and the
 * pictures appear together, or none does). */
#define SWEEP_STAGED_MAX (EW_CLI_PATH_MAX + 512)
typedef struct {
  ew_output_set *set;
  ew_output_file *csv;
  char w_csv[SWEEP_STAGED_MAX], w_plot[SWEEP_STAGED_MAX];
} sweep_files;

static ew_status sweep_stage(const sweep_cmd *s, sweep_files *fs, ew_error *err) {
  ew_status st = ew_output_set_create(&fs->set, err);
  if (st == EW_OK && s->csv_path) {
    st = ew_data_path_check(s->csv_path, "--csv", err);
    if (st == EW_OK) st = ew_output_set_file(fs->set, s->csv_path, 0, fs->w_csv,
                                             sizeof fs->w_csv, err);
    if (st == EW_OK) st = ew_output_file_open(fs->w_csv, &fs->csv, err);
    if (st != EW_OK && !strstr(err->message, "--csv")) ew_cli_prefix(err, "--csv");
  }
  for (int f = 0; st == EW_OK && s->plot_path && f < EW_SWEEP_PLOT_FILES; f++) {
    char pp[EW_CLI_PATH_MAX], w[SWEEP_STAGED_MAX];
    st = ew_plot_companion_name(s->plot_path, ew_sweep_plot_suffix(f), "--plot", pp, sizeof pp,
                                err);
    if (st == EW_OK) st = ew_output_set_file(fs->set, pp, 0, f ? w : fs->w_plot, sizeof w, err);
    if (st != EW_OK && !strstr(err->message, "--plot")) ew_cli_prefix(err, "--plot");
  }
  return st;
}

/* Solve, then the CSV and the pictures at their staged names, then all of them into place:
 * an error anywhere leaves no new file.  Returns the exit code. */
static int sweep_write(sweep_cmd *s, sweep_files *fs, membuf *out) {
  ew_error err = {0};
  FILE *csv = fs->csv ? ew_output_file_stream(fs->csv) : (s->c.json ? NULL : out->f);
  FILE *json = s->c.json ? out->f : NULL;
  int written[EW_SWEEP_PLOT_FILES] = {0};
  ew_status st = ew_sweep_compute(s->sw, &s->so, csv, json, &err);
  if (st == EW_OK && s->plot_path) st = ew_sweep_stage_plots(s->sw, fs->w_plot, written, &err);
  if (st == EW_OK && s->plot_path) st = ew_sweep_commit_plots(s->sw, 1, &err);
  if (st == EW_OK && fs->csv) st = ew_output_file_commit(fs->csv, &err);
  else ew_output_file_abort(fs->csv);
  fs->csv = NULL;
  if (st == EW_OK) {
    st = ew_output_set_commit(fs->set, &err);
    fs->set = NULL;
  } else {
    ew_output_set_explain(fs->set, &err);
  }
  int rc = st == EW_OK ? 0 : report(&err);
  if (!rc && s->plot_path) sweep_plot_notes(s->plot_path, written);
  int io = mem_finish(out, rc == 0);
  return rc ? rc : io;
}

static int sweep_run(sweep_cmd *s) {
  threads_note(s->c.threads);
  s->so.threads = s->c.threads;
  s->so.keep_table = s->plot_path != NULL;
  progress_state ps = {-1, isatty(fileno(stderr))};
  s->so.progress = progress_bar;
  s->so.progress_ctx = &ps;
  catch_stop_signals();
  s->c.solve.excitons = 0; /* the sweep's columns hold no PL peaks: skip the exciton work */
  ew_catalogue *cat = NULL;
  sweep_files fs;
  memset(&fs, 0, sizeof fs);
  membuf out = {NULL, 0, NULL};
  ew_error err = {0};
  int rc = 0;
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_sweep_open(s->sw, s->path, cat, &s->c.solve, &err) != EW_OK ||
      sweep_stage(s, &fs, &err) != EW_OK) {
    rc = report(&err);
  } else if (!mem_open(&out)) {
    rc = EW_ERR_NOMEM;
    fprintf(stderr, "epiwell: out of memory\n");
  } else {
    rc = sweep_write(s, &fs, &out); /* commits or leaves fs to be aborted */
  }
  ew_output_file_abort(fs.csv);
  ew_output_set_abort(fs.set);
  ew_catalogue_free(cat);
  return rc;
}

int ew_cli_sweep(int argc, char **argv) {
  sweep_cmd s;
  memset(&s, 0, sizeof s);
  common_init(&s.c);
  ew_sweep_options_default(&s.so);
  ew_error err = {0};
  if (ew_sweep_create(&s.sw, &err) != EW_OK) return report(&err);
  int rc = sweep_parse(argc, argv, &s);
  if (!rc && s.help) fputs(sweep_usage, stdout);
  else if (!rc) rc = sweep_check_plots(s.plot_path);
  if (!rc && !s.help) rc = sweep_run(&s);
  ew_sweep_free(s.sw);
  return rc;
}

/* ---- match ----------------------------------------------------------------------------- */
typedef struct {
  common_opt c;
  const char *path;
  size_t nr, nl, nt, samples;
  size_t shard_k, shard_n; /* --shard K/N (0, 0: none) */
  int have_tol, help;
  ew_match *mt; /* holds the unknowns, lines and targets */
} match_cmd;

/* The value v of option a (one of those that take one); 0 or an exit code. */
static int match_value(const char *a, const char *v, match_cmd *m) {
  ew_error err = {0};
  if (!strcmp(a, "--vary")) {
    if (m->nr == 2) return ew_cli_bad(match_usage, "%s", "--vary: at most two unknowns");
    if (ew_match_vary(m->mt, v, &err) != EW_OK) return report(&err);
    m->nr++;
  } else if (!strcmp(a, "--line")) {
    if (m->nl == 2) return ew_cli_bad(match_usage, "%s", "--line: at most two lines");
    if (ew_match_line(m->mt, v, &err) != EW_OK) return report(&err);
    m->nl++;
    /* only a PL-peak target (A-B:pl) needs the exciton binding */
    if (strlen(v) > 3 && !strcmp(v + strlen(v) - 3, ":pl")) m->c.solve.excitons = 1;
  } else if (!strcmp(a, "--target")) {
    if (m->nt == 2) return ew_cli_bad(match_usage, "%s", "--target: at most two targets");
    if (ew_match_target(m->mt, v, &err) != EW_OK) return report(&err);
    m->nt++;
  } else if (!strcmp(a, "--tolerance")) {
    if (ew_match_tolerance(m->mt, v, &err) != EW_OK) return report(&err);
    m->have_tol = 1;
  } else if (!strcmp(a, "--shard") && !strcmp(v, "auto")) {
    return shard_auto(match_usage, &m->shard_k, &m->shard_n);
  } else if (!strcmp(a, "--shard")) {
    if (!parse_shard(v, &m->shard_k, &m->shard_n))
      return ew_cli_bad(match_usage, "--shard wants K/N with 1 <= K <= N (e.g. 3/8), got %s", v);
  } else if (!parse_whole(v, 2, 1e6, &m->samples)) {
    return ew_cli_bad(match_usage, "--samples wants a whole number >= 2, got %s", v);
  }
  return 0;
}

static int match_parse(int argc, char **argv, match_cmd *m) {
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int r = common_option(match_usage, argc, argv, &i, &m->c), rc = 0;
    if (r < 0) return EW_ERR_USAGE;
    if (r > 0) continue;
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      m->help = 1;
      return 0;
    }
    if (!strcmp(a, "--vary") || !strcmp(a, "--line") || !strcmp(a, "--target") ||
        !strcmp(a, "--tolerance") || !strcmp(a, "--samples") || !strcmp(a, "--shard")) {
      if (i + 1 >= argc) return ew_cli_bad(match_usage, "%s needs a value", a);
      rc = match_value(a, argv[++i], m);
    } else if (a[0] == '-' && a[1]) {
      rc = ew_cli_bad(match_usage, "unknown option %s", a);
    } else if (!m->path) {
      m->path = a;
    } else {
      rc = ew_cli_bad(match_usage, "unexpected argument %s", a);
    }
    if (rc) return rc;
  }
  if (!m->path) return ew_cli_bad(match_usage, "%s", "match needs a stack file");
  if (m->nr == 0) return ew_cli_bad(match_usage, "%s", "match needs --vary KEY=FROM:TO");
  if (m->nl != m->nr || m->nt != m->nr)
    return ew_cli_bad(match_usage, "%s", "match needs one --line and one --target per --vary");
  if (m->have_tol && m->nr == 2)
    return ew_cli_bad(match_usage, "%s", "--tolerance works with one --vary only");
  if (m->shard_n > 1 && !m->c.json)
    return ew_cli_bad(match_usage, "%s", "--shard writes a part for epiwell merge: add --json");
  return 0;
}

static int match_run(match_cmd *m) {
  threads_note(m->c.threads);
  ew_catalogue *cat = NULL;
  ew_error err = {0};
  int rc = 0;
  catch_stop_signals();
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_match_progress(m->mt, match_cancel, NULL, &err) != EW_OK ||
      ew_match_shard(m->mt, m->shard_k, m->shard_n, &err) != EW_OK ||
      ew_match_compute(m->mt, m->path, cat, &m->c.solve, m->c.threads, m->samples, &err) !=
          EW_OK) {
    rc = report(&err);
  } else {
    /* no solution is an answer, not an error: exit 0, the reached range on stderr too */
    if (ew_match_solution_count(m->mt) == 0 && m->shard_n <= 1)
      fprintf(stderr, "epiwell: %s\n", ew_match_message(m->mt));
    ew_status st = m->c.json ? ew_match_write_json(m->mt, stdout, NULL)
                             : ew_match_write_table(m->mt, stdout, NULL);
    if (st != EW_OK || fflush(stdout) != 0) rc = EW_ERR_IO;
  }
  ew_catalogue_free(cat);
  return rc;
}

int ew_cli_match(int argc, char **argv) {
  match_cmd m;
  memset(&m, 0, sizeof m);
  common_init(&m.c);
  m.c.solve.excitons = 0; /* set again by a :pl line */
  ew_error err = {0};
  if (ew_match_create(&m.mt, &err) != EW_OK) return report(&err);
  int rc = match_parse(argc, argv, &m);
  if (!rc && m.help) fputs(match_usage, stdout);
  else if (!rc) rc = match_run(&m);
  ew_match_free(m.mt);
  return rc;
}

/* ---- tolerance ------------------------------------------------------------------------- */
typedef struct {
  common_opt c;
  const char *path, *ladder;
  double dx, rate;
  int help;
} tolerance_cmd;

static int tolerance_parse(int argc, char **argv, tolerance_cmd *t) {
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int r = common_option(tolerance_usage, argc, argv, &i, &t->c);
    if (r < 0) return EW_ERR_USAGE;
    if (r > 0) continue;
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      t->help = 1;
      return 0;
    }
    if (!strcmp(a, "--dx") || !strcmp(a, "--ladder") || !strcmp(a, "--rate")) {
      if (i + 1 >= argc) return ew_cli_bad(tolerance_usage, "%s needs a value", a);
      const char *v = argv[++i];
      if (!strcmp(a, "--ladder")) t->ladder = v;
      else if (!strcmp(a, "--rate")) {
        if (!parse_num(v, &t->rate) || !(t->rate >= 0 && t->rate <= 50))
          return ew_cli_bad(tolerance_usage, "--rate wants a percentage in [0, 50], got %s", v);
      }
      else if (!parse_num(v, &t->dx) || t->dx <= 0 || t->dx > 0.5)
        return ew_cli_bad(tolerance_usage, "--dx wants a composition step in (0, 0.5], got %s", v);
    } else if (a[0] == '-' && a[1]) {
      return ew_cli_bad(tolerance_usage, "unknown option %s", a);
    } else if (!t->path) {
      t->path = a;
    } else {
      return ew_cli_bad(tolerance_usage, "unexpected argument %s", a);
    }
  }
  if (!t->path) return ew_cli_bad(tolerance_usage, "%s", "tolerance needs a stack file");
  if (t->ladder && t->rate > 0)
    return ew_cli_bad(tolerance_usage, "%s", "--rate gives the spread of a tolerance run: not with --ladder");
  return 0;
}

static int tolerance_run(const tolerance_cmd *t) {
  threads_note(t->c.threads);
  ew_catalogue *cat = NULL;
  ew_tolerance *tol = NULL;
  ew_error err = {0};
  int rc = 0;
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_tolerance_compute(t->path, cat, &t->c.solve, t->dx, t->ladder, t->c.threads, &tol,
                           &err) != EW_OK ||
      (!t->ladder && ew_tolerance_set_growth_rate(tol, t->rate, &err) != EW_OK)) {
    rc = report(&err);
  } else {
    ew_status st = t->c.json ? ew_tolerance_write_json(tol, stdout, NULL)
                             : ew_tolerance_write_table(tol, stdout, NULL);
    if (st != EW_OK || fflush(stdout) != 0) rc = EW_ERR_IO;
  }
  ew_tolerance_free(tol);
  ew_catalogue_free(cat);
  return rc;
}

int ew_cli_tolerance(int argc, char **argv) {
  tolerance_cmd t;
  memset(&t, 0, sizeof t);
  common_init(&t.c);
  t.dx = 0.01;
  int rc = tolerance_parse(argc, argv, &t);
  if (!rc && t.help) fputs(tolerance_usage, stdout);
  else if (!rc) rc = tolerance_run(&t);
  return rc;
}
