/* bench.c — `make bench`: speed figures, printed, never asserted.
 *  1. The eigen-solve of a 100-period GaAs/Al0.3Ga0.7As superlattice (5 nm / 5 nm) at a
 *     0.01 nm grid (N ≈ 1e5), all three bands with their error estimates, against LAPACK's
 *     dstemr (MRRR, value range) on the same matrices in the same run: times, ratio, memory.
 *  2. A single-well solve end to end: process start to JSON on stdout, through the CLI.
 *  3. Well-width sweep throughput: examples/detector_well.cfg, well.thickness over 800
 *     values 4–12 nm (levels and main lines of all three bands, error estimates on, as
 *     `epiwell sweep`), with 1 and with 2 OpenMP threads: solves per second and the scaling.
 *  4. Self-consistent solves: the 1e19 cm^-3 well; examples/doped_detector.cfg end to end
 *     through the CLI; a doped sweep (its donor density over 40 values, 1 and 2 threads).
 *  5. The layer reader on 10^5 layers (GaAs, 0.1 nm each) refused at the last one (an
 *     unknown material): linear in the number of layers (issue 18: 45 s to 288 s before the
 *     duplicate-name check was hashed and integer literals found by a line index).
 *  7. The scripted tridiagonal baseline (a reference, not a dependency of the tool):
 *     tests/bench_scipy.py solves the single well's pencils with Debian's python3-scipy
 *     (eigh_tridiagonal: fine eigenpairs and coarse values of e, hh, lh, and the main lines)
 *     and its time per solve is set against epiwell's sweep point (target: 3x faster).
 *     Skipped, with a message, when /usr/bin/python3 has no scipy.
 * `build/bench build/epiwell PART` runs one part alone (superlattice, memory, cli, sweep, sc,
 * reader, dispersion).
 * EW_BENCH_REF=path/to/an/older/epiwell (e.g. build/same-5dbb810/build/epiwell, which
 * tests/same_outputs.sh 5dbb810 builds) times that program on the same end-to-end runs in the
 * same bench run and prints the ratios.
 * The machine is shared: compare the ratios printed in one run, not absolute times. */
#include <fcntl.h>
#include <lapacke.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif
#include <math.h>
#include <omp.h>
#include <spawn.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "bound.h"
#include "eigen.h"
#include "error.h"
#include "schrodinger.h"
#include "solve.h"
#include "workflow.h"

static double now(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static double peak_mb(void) {
  struct rusage ru;
  getrusage(RUSAGE_SELF, &ru);
  return (double)ru.ru_maxrss / 1024.0;
}

/* The sweep throughput: key over `points` values of [from, to] (CSV written to a null sink,
 * everything else as `epiwell sweep`) with 1 thread and with `threads`, wall clock. */
typedef struct {
  size_t points;                /* well widths solved per run */
  int threads;                  /* threads of the parallel run */
  double seconds_1, seconds_n;  /* wall time with 1 and with `threads` threads */
  double per_s_1, per_s_n;      /* single-well solves per second */
} sweep_bench;

static ew_status bench_sweep(const ew_wf_model *m, const char *key, double from, double to,
                             size_t points, int threads, sweep_bench *out, ew_error *err) {
  memset(out, 0, sizeof *out);
  if (points < 2) points = 2;
  ew_wf_range r;
  memset(&r, 0, sizeof r);
  snprintf(r.key, sizeof r.key, "%s", key);
  r.from = from;
  r.to = to;
  r.step = (to - from) / (double)(points - 1);
  if (!(r.step > 0)) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "benchmark: need from < to");
  out->points = ew_wf_range_count(&r);
  out->threads = ew_wf_threads(threads);
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 1;
  double t0 = now();
  ew_status rc = ew_wf_sweep(m, &r, 1, &o, NULL, NULL, err);
  double t1 = now();
  if (rc != EW_OK) return rc;
  o.threads = out->threads;
  rc = ew_wf_sweep(m, &r, 1, &o, NULL, NULL, err);
  double t2 = now();
  if (rc != EW_OK) return rc;
  out->seconds_1 = t1 - t0;
  out->seconds_n = t2 - t1;
  out->per_s_1 = (double)out->points / out->seconds_1;
  out->per_s_n = (double)out->points / out->seconds_n;
  return EW_OK;
}

/* dstemr on the standard form of one pencil, eigenvalues in (lo, hi); returns seconds */
static double run_dstemr(const ew_pencil *p, double lo, double hi, int vectors, size_t *found) {
  lapack_int n = (lapack_int)p->n, m = 0, tryrac = 1;
  double *d = malloc(p->n * sizeof *d), *e = malloc(p->n * sizeof *e), *w = malloc(p->n * sizeof *w);
  for (size_t i = 0; i < p->n; i++) {
    d[i] = p->diag[i] / p->b[i];
    e[i] = i + 1 < p->n ? p->off[i] / sqrt(p->b[i] * p->b[i + 1]) : 0.0;
  }
  size_t cap = ew_eigen_count_below(p, hi) - ew_eigen_count_below(p, lo) + 8;
  double *Z = vectors ? malloc(p->n * cap * sizeof *Z) : NULL;
  lapack_int *isup = malloc(2 * cap * sizeof *isup);
  double t0 = now();
  lapack_int info = LAPACKE_dstemr(LAPACK_COL_MAJOR, vectors ? 'V' : 'N', 'V', n, d, e, lo, hi, 0,
                                   0, &m, w, vectors ? Z : d, vectors ? n : 1, (lapack_int)cap,
                                   isup, &tryrac);
  double t = now() - t0;
  if (info != 0) fprintf(stderr, "dstemr info %d\n", (int)info);
  *found = (size_t)m;
  free(d), free(e), free(w), free(Z), free(isup);
  return t;
}

/* LAPACK dstemr on the superlattice's matrices (fine grid with vectors, coarse grid values
 * only), per band; returns the total seconds. */
static double dstemr_same_matrices(const ew_stack *st, const ew_result *res) {
  double t_lap = 0.0;
  size_t cells[512];
  ew_grid_cells_for_step(st, 0.01, cells);
  ew_grid *fine = ew_grid_layered(st, cells);
  for (size_t k = 0; k < st->n_layers; k++) cells[k] /= 2;
  ew_grid *coarse = ew_grid_layered(st, cells);
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    double top = b == 0 ? res->window_eV[b] : -res->window_eV[b];
    ew_pencil *pf = ew_pencil_build(fine, (ew_band)b), *pc = ew_pencil_build(coarse, (ew_band)b);
    size_t mf, mc;
    double lo = pf->vmin - 1e-9 * (1.0 + fabs(pf->vmin));
    double tf = run_dstemr(pf, lo, top, 1, &mf);
    double tc = run_dstemr(pc, lo, top, 0, &mc);
    printf("  dstemr %-2s: fine (vectors) %.3f s for %zu, coarse (values) %.3f s for %zu\n",
           ew_band_name((ew_band)b), tf, mf, tc, mc);
    if (mf != ew_result_band_count(res, (ew_band)b))
      printf("  WARNING: dstemr found %zu %s levels, epiwell %zu\n", mf,
             ew_band_name((ew_band)b), ew_result_band_count(res, (ew_band)b));
    t_lap += tf + tc;
    ew_pencil_free(pf);
    ew_pencil_free(pc);
  }
  ew_grid_free(fine);
  ew_grid_free(coarse);
  return t_lap;
}

/* The 100-period superlattice's stack text (nonparabolic: the Kane electron mass or not). */
static char *superlattice_text(int nonparabolic) {
  size_t cap = 64 * 1024, len = 0;
  char *text = malloc(cap);
  len += (size_t)snprintf(text + len, cap - len,
                          "temperature = 10.0;\ngrid_step = 0.01;\nnonparabolic = %s;\nlayers = (\n"
                          "  { name = \"b0\"; material = \"AlGaAs\"; x = 0.3; thickness = 5.0; }",
                          nonparabolic ? "true" : "false");
  for (int k = 1; k <= 100; k++)
    len += (size_t)snprintf(text + len, cap - len,
                            ",\n  { name = \"w%d\"; material = \"GaAs\"; thickness = 5.0; },\n"
                            "  { name = \"b%d\"; material = \"AlGaAs\"; x = 0.3; thickness = 5.0; }",
                            k, k);
  snprintf(text + len, cap - len, "\n);\n");
  return text;
}

/* One solve of a stack text in a child process (its own peak memory): time, peak resident
 * memory against the eigenvectors the result holds (states × nodes × 8 bytes).  The child
 * prints; *seconds receives its solve time (−1 when it failed). */
static void child_solve(const char *what, const char *text, double step_nm, double *seconds) {
  int fd[2];
  *seconds = -1.0;
  fflush(stdout);
  if (pipe(fd) != 0) return;
  pid_t pid = fork();
  if (pid == 0) {
    close(fd[0]);
    ew_catalogue *cat = NULL;
    ew_stack *st = NULL;
    ew_result *res = NULL;
    ew_error err = {0};
    ew_options opt;
    ew_options_default(&opt);
    opt.grid_step_nm = step_nm;
    double t = -1.0;
    if (ew_catalogue_load(NULL, &cat, &err) == EW_OK &&
        ew_stack_read_string(text, what, cat, &st, &err) == EW_OK) {
      double t0 = now();
      if (ew_solve(st, &opt, &res, &err) == EW_OK) t = now() - t0;
    }
    if (t < 0) printf("  %s: failed: %s\n", what, err.message);
    else {
      double vec_mb = (double)ew_result_state_count(res) * (double)ew_result_node_count(res) *
                      8.0 / 1048576.0, peak = peak_mb();
      printf("  %s: N = %zu, %zu levels, %.3f s; peak memory %.0f MiB, eigenvectors %.0f MiB, "
             "ratio %.2f%s\n", what, ew_result_node_count(res), ew_result_state_count(res), t,
             peak, vec_mb, peak / vec_mb, step_nm > 0 ? "" : " (target <= 1.3)");
    }
    fflush(stdout);
    if (write(fd[1], &t, sizeof t) != (ssize_t)sizeof t) _exit(1);
    _exit(0);
  }
  close(fd[1]);
  if (pid > 0) {
    if (read(fd[0], seconds, sizeof *seconds) != (ssize_t)sizeof *seconds) *seconds = -1.0;
    waitpid(pid, NULL, 0);
  }
  close(fd[0]);
}

/* 1b. the Kane superlattice against the parabolic one, and a 10^6-node single well, each in a
 * child process (peak memory of its own) */
static void bench_memory(void) {
  char *par = superlattice_text(0), *kane = superlattice_text(1);
  double tp, tk, tw;
  printf("superlattice and large-grid runs, each in its own process:\n");
  child_solve("superlattice, parabolic", par, 0.0, &tp);
  child_solve("superlattice, Kane mass", kane, 0.0, &tk);
  if (tp > 0 && tk > 0) printf("  Kane / parabolic = %.2f (target <= 1.5)\n", tk / tp);
  FILE *f = fopen("examples/detector_well.cfg", "r");
  char well[4096];
  size_t k = f ? fread(well, 1, sizeof well - 1, f) : 0;
  well[k] = 0;
  if (f) fclose(f);
  /* 66.2 nm at 6.62e-5 nm: 10^6 cells */
  child_solve("examples/detector_well.cfg at 10^6 nodes (target < 1024 MiB)", well, 6.62e-5, &tw);
  free(par);
  free(kane);
}

/* 1. the superlattice eigen-solve against dstemr on the same matrices */
static int bench_superlattice(void) {
  char *text = superlattice_text(0);
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_error err = {0};
  char msg[2048];
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_stack_read_string(text, "superlattice", cat, &st, &err) != EW_OK) {
    fprintf(stderr, "bench: %s\n", ew_error_text(&err, msg, sizeof msg));
    return 1;
  }
  ew_options opt;
  ew_options_default(&opt);
  ew_result *res = NULL;
  /* first on the calling thread alone (dstemr is serial), then with the solve's helper
     threads (README "The library", Threads: the bands side by side on the two cores) */
  int threads = omp_get_max_threads();
  omp_set_num_threads(1);
  double t0 = now();
  if (ew_solve(st, &opt, &res, &err) != EW_OK) {
    fprintf(stderr, "bench: %s\n", ew_error_text(&err, msg, sizeof msg));
    return 1;
  }
  double t_one = now() - t0, mem_ours = peak_mb();
  ew_result_free(res);
  omp_set_num_threads(threads);
  t0 = now();
  if (ew_solve(st, &opt, &res, &err) != EW_OK) {
    fprintf(stderr, "bench: %s\n", ew_error_text(&err, msg, sizeof msg));
    return 1;
  }
  double t_ours = now() - t0;
  printf("superlattice: 100 periods 5 nm GaAs / 5 nm Al0.3Ga0.7As, grid 0.01 nm, N = %zu\n",
         ew_result_node_count(res));
  printf("  levels: e %zu, hh %zu, lh %zu; lines %zu\n", ew_result_band_count(res, EW_BAND_E),
         ew_result_band_count(res, EW_BAND_HH), ew_result_band_count(res, EW_BAND_LH),
         ew_result_line_count(res));
  printf("  epiwell (SuperLU shift-invert + inertia, fine vectors + coarse values): %.3f s on "
         "1 thread, %.3f s with the helper threads (%d threads)\n", t_one, t_ours, threads);
  printf("    work: %zu factorizations, %zu solves, %zu inertia counts; peak memory %.0f MB\n",
         res->work_factorizations, res->work_solves, res->work_counts, mem_ours);
  double t_lap = dstemr_same_matrices(st, res);
  printf("  LAPACK dstemr, same matrices: %.3f s; peak memory after both %.0f MB\n", t_lap,
         peak_mb());
  double vec_mb = (double)ew_result_state_count(res) * (double)ew_result_node_count(res) * 8.0 /
                  1048576.0;
  printf("  ratio dstemr / epiwell = %.2f on 1 thread, %.2f with the helpers (target >= 4); peak "
         "memory (1 thread) / eigenvectors (%.0f MiB) = %.2f (target <= 1.3)\n", t_lap / t_one,
         t_lap / t_ours, vec_mb, mem_ours / vec_mb);
  ew_result_free(res);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  free(text);
  return 0;
}

/* Seconds of one run of `cli ARGS > /dev/null`; negative when it failed. */
static double time_cli(const char *cli, const char *args) {
  /* the program itself, started without a shell (a shell's own start-up, ~1 ms, would be
     timed with it and shrink every before/after ratio); args: words separated by spaces */
  char buf[1024], *argv[32];
  int argc = 0;
  snprintf(buf, sizeof buf, "%s", args);
  argv[argc++] = (char *)cli;
  for (char *w = strtok(buf, " "); w && argc < 31; w = strtok(NULL, " ")) argv[argc++] = w;
  argv[argc] = NULL;
  posix_spawn_file_actions_t fa;
  posix_spawn_file_actions_init(&fa);
  posix_spawn_file_actions_addopen(&fa, 1, "/dev/null", O_WRONLY, 0);
  extern char **environ;
  pid_t pid;
  int status = -1;
  double t0 = now();
  int rc = posix_spawn(&pid, cli, &fa, NULL, argv, environ);
  if (rc == 0) waitpid(pid, &status, 0);
  double t = now() - t0;
  posix_spawn_file_actions_destroy(&fa);
  if (rc != 0 || !WIFEXITED(status) || WEXITSTATUS(status) != 0) {
    fprintf(stderr, "bench: '%s %s' failed\n", cli, args);
    return -1.0;
  }
  return t;
}

/* One end-to-end CLI run, timed for this program and (EW_BENCH_REF) the reference one, runs
 * times each, alternating (so that both see the same load): the best run of each, the
 * figure least disturbed by the other users of the machine. */
static int bench_cli_pair(const char *what, const char *cli, const char *ref, const char *args,
                          int runs, double target_ratio) {
  double best = INFINITY, best_ref = INFINITY;
  for (int i = 0; i < runs; i++) {
    double t = time_cli(cli, args), tr = ref ? time_cli(ref, args) : 0.0;
    if (t < 0 || tr < 0) return 1;
    best = fmin(best, t), best_ref = fmin(best_ref, tr);
  }
  printf("%s end to end (epiwell %s): %.1f ms, best of %d runs\n", what, args, best * 1e3,
         runs);
  if (!ref)
    printf("  (set EW_BENCH_REF to an older epiwell for the before/after ratio; target: "
           "before / after >= %.0f)\n", target_ratio);
  else
    printf("  reference %s: %.1f ms; ratio reference / this = %.2f (target >= %.0f)\n", ref,
           best_ref * 1e3, best_ref / best, target_ratio);
  return 0;
}

/* 2. single-well and doped solves end to end through the CLI */
static int bench_single_well(const char *cli, const char *ref) {
  return bench_cli_pair("single well", cli, ref, "solve examples/detector_well.cfg --json", 20,
                        2.0) ||
         bench_cli_pair("doped detector", cli, ref, "solve examples/doped_detector.cfg --json",
                        3, 10.0);
}

/* A copy of examples/detector_well.cfg with the parabolic electron mass (nonparabolic =
 * false) in a temporary file; path receives its name.  0 on success. */
static int parabolic_copy(char *path, size_t size) {
  snprintf(path, size, "/tmp/epiwell-bench-parabolic-%ld.cfg", (long)getpid());
  FILE *in = fopen("examples/detector_well.cfg", "r"), *out = fopen(path, "w");
  int ok = in && out && fputs("nonparabolic = false;\n", out) >= 0;
  char buf[4096];
  size_t k;
  while (ok && (k = fread(buf, 1, sizeof buf, in)) > 0) ok = fwrite(buf, 1, k, out) == k;
  if (in) fclose(in);
  if (out && fclose(out) != 0) ok = 0;
  return ok ? 0 : 1;
}

/* The sweep throughput of stack file path over `key` from..to (points values). */
static int sweep_of(const char *path, const char *key, double from, double to, size_t points,
                    sweep_bench *br) {
  ew_error err = {0};
  char msg[2048];
  ew_catalogue *wcat = NULL;
  ew_wf_model *wm = NULL;
  ew_options wo; /* as `epiwell sweep` solves: its columns carry no PL peaks */
  ew_options_default(&wo);
  wo.excitons = 0;
  int rc = 0;
  if (ew_catalogue_load(NULL, &wcat, &err) != EW_OK ||
      ew_wf_model_open(path, wcat, &wo, &wm, &err) != EW_OK ||
      bench_sweep(wm, key, from, to, points, 2, br, &err) != EW_OK) {
    fprintf(stderr, "bench: sweep %s: %s\n", path, ew_error_text(&err, msg, sizeof msg));
    rc = 1;
  }
  ew_wf_model_free(wm);
  ew_catalogue_free(wcat);
  return rc;
}

static void print_sweep(const char *what, const sweep_bench *br, double target) {
  printf("  %s: 1 thread %.3f s, %.0f solves/s; %d threads %.3f s, %.0f solves/s (scaling "
         "%.2f); ratio to the target %.0f/s = %.2f\n", what, br->seconds_1, br->per_s_1,
         br->threads, br->seconds_n, br->per_s_n, br->per_s_n / br->per_s_1, target,
         br->per_s_n / target);
}

/* The pencils of stack file path (fine grid and coarse grid of every second node, per band,
 * with the bound window) written for tests/bench_scipy.py; 0 on success. */
static int write_pencils(const char *path, const char *out) {
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_error err = {0};
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK ||
      ew_stack_read_file(path, cat, &st, &err) != EW_OK) {
    ew_catalogue_free(cat);
    return 1;
  }
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  double step = st->grid_step_nm > 0 ? st->grid_step_nm : EW_DEFAULT_STEP_NM;
  ew_grid_cells_for_step(st, step, cells);
  ew_grid *g[2] = {ew_grid_layered(st, cells), NULL};
  for (size_t k = 0; k < st->n_layers; k++) cells[k] /= 2;
  g[1] = ew_grid_layered(st, cells);
  FILE *f = fopen(out, "w");
  int rc = f && g[0] && g[1] ? 0 : 1;
  if (!rc) fprintf(f, "%d\n", EW_BAND_COUNT);
  for (int b = 0; !rc && b < EW_BAND_COUNT; b++) {
    ew_pencil *p = ew_pencil_build(g[0], (ew_band)b);
    double top = ew_bound_window_top(st, g[0], (ew_band)b);
    fprintf(f, "%.17g %.17g\n", p->vmin - 1e-9 * (1.0 + fabs(p->vmin)), top);
    ew_pencil_free(p);
    for (int k = 0; k < 2; k++) {
      ew_pencil *q = ew_pencil_build(g[k], (ew_band)b);
      fprintf(f, "%zu\n", q->n);
      for (size_t i = 0; i < q->n; i++) fprintf(f, "%.17g ", q->diag[i]);
      for (size_t i = 0; i + 1 < q->n; i++) fprintf(f, "%.17g ", q->off[i]);
      for (size_t i = 0; i < q->n; i++) fprintf(f, "%.17g ", q->b[i]);
      for (size_t i = 0; i < q->n; i++) fprintf(f, "%.17g ", g[k]->z[i]);
      fprintf(f, "\n");
      ew_pencil_free(q);
    }
  }
  if (f && fclose(f) != 0) rc = 1;
  ew_grid_free(g[0]);
  ew_grid_free(g[1]);
  free(cells);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}

/* Seconds per solve of the scipy baseline on the parabolic single well, or −1 when it cannot
 * run (no Debian python3 with scipy: the line is skipped). */
static double scipy_baseline(const char *cfg) {
  if (system("/usr/bin/python3 -c 'import scipy.linalg' > /dev/null 2>&1") != 0) {
    printf("  scripted baseline: SKIPPED - /usr/bin/python3 has no scipy (Debian: apt-get "
           "install python3-scipy; a reference for the benchmark only)\n");
    return -1.0;
  }
  char pen[256], cmd[1024], line[1 << 16];
  snprintf(pen, sizeof pen, "/tmp/epiwell-bench-pencils-%ld.txt", (long)getpid());
  if (write_pencils(cfg, pen) != 0) {
    printf("  scripted baseline: could not write the pencils\n");
    return -1.0;
  }
  snprintf(cmd, sizeof cmd, "/usr/bin/python3 tests/bench_scipy.py %s 200", pen);
  FILE *p = popen(cmd, "r");
  double sec = -1.0;
  while (p && fgets(line, sizeof line, p))
    if (sscanf(line, "seconds_per_solve %lf", &sec) == 1) break;
  while (p && fgets(line, sizeof line, p)) {
  }
  if (p) pclose(p);
  remove(pen);
  return sec;
}

/* 3. sweep throughput (parabolic and Kane) and the scripted scipy baseline */
static int bench_sweep_throughput(void) {
  char par[256];
  sweep_bench kane, para;
  const size_t points = 800;
  if (parabolic_copy(par, sizeof par) != 0 ||
      sweep_of("examples/detector_well.cfg", "well.thickness", 4.0, 12.0, points, &kane) ||
      sweep_of(par, "well.thickness", 4.0, 12.0, points, &para)) {
    remove(par);
    return 1;
  }
  printf("well-width sweep throughput: examples/detector_well.cfg well.thickness 4-12 nm, %zu "
         "values, levels and main lines of e, hh, lh%s\n",
         kane.points, ew_wf_have_openmp() ? "" : " (built without OpenMP)");
  print_sweep("Kane mass ", &kane, 2000.0);
  print_sweep("parabolic ", &para, 2000.0);
  printf("  Kane / parabolic time per solve (1 thread) = %.2f\n", para.per_s_1 / kane.per_s_1);
  double base = scipy_baseline(par);
  remove(par);
  if (base > 0)
    printf("  scripted baseline (Debian python3-scipy eigh_tridiagonal, a reference only): "
           "%.3f ms per solve; baseline / epiwell per solve (1 thread): parabolic %.2f, Kane "
           "%.2f (target >= 3)\n", base * 1e3, base * para.per_s_1, base * kane.per_s_1);
  return 0;
}

/* 4. self-consistent Schrödinger–Poisson: the 1e19 cm^-3 well and a doped sweep */
static int bench_self_consistent(void) {
  { /* 10 nm GaAs doped 1e19 cm^-3 between Al0.3Ga0.7As barriers, 77 K: the outer iterations
       (target <= 30) */
    ew_catalogue *scat = NULL;
    ew_stack *sst = NULL;
    ew_result *sr = NULL;
    ew_error serr;
    const char *txt = "temperature = 77.0;\nlayers = (\n"
                      " { name = \"b1\"; material = \"AlGaAs\"; x = 0.30; thickness = 30.0; },\n"
                      " { name = \"well\"; material = \"GaAs\"; thickness = 10.0; doping = { donors = 1e19; }; },\n"
                      " { name = \"b2\"; material = \"AlGaAs\"; x = 0.30; thickness = 30.0; }\n);\n";
    double ts = now();
    if (ew_catalogue_load(NULL, &scat, &serr) == EW_OK &&
        ew_stack_read_string(txt, "bench-sp", scat, &sst, &serr) == EW_OK &&
        ew_solve(sst, NULL, &sr, &serr) == EW_OK)
      printf("self-consistent 1e19 cm^-3 well: %d outer iterations (target <= 30), residual "
             "%.2e eV, %.3f s\n", ew_result_sp_iterations(sr), ew_result_sp_residual_eV(sr),
             now() - ts);
    else
      printf("self-consistent 1e19 cm^-3 well: failed: %s\n", serr.message);
    ew_result_free(sr);
    ew_stack_free(sst);
    ew_catalogue_free(scat);
  }
  sweep_bench br;
  /* the process's CPU time over both runs as well: on the shared machine the wall clock of
     the two-thread run shows the load more than the program */
  double cpu0 = (double)clock() / CLOCKS_PER_SEC;
  if (sweep_of("examples/doped_detector.cfg", "well.doping.donors", 1e18, 5e18, 40, &br))
    return 1;
  double cpu = (double)clock() / CLOCKS_PER_SEC - cpu0;
  printf("doped sweep: examples/doped_detector.cfg well.doping.donors 1e18-5e18 cm^-3, %zu "
         "values, self-consistent\n", br.points);
  print_sweep("doped     ", &br, 50.0);
  printf("  CPU time: %.1f ms per point over both runs (%zu points), %.0f points per "
         "CPU-second; target 50/s on 2 cores = 25 per CPU-second at perfect scaling\n",
         1e3 * cpu / (2.0 * (double)br.points), 2 * br.points, 2.0 * (double)br.points / cpu);
  return 0;
}

/* 5. the stack reader on 10^4 and 10^5 layers, refused at the last one */
static int bench_reader(void) {
  ew_catalogue *cat = NULL;
  ew_error err = {0};
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK) return 1;
  double t[2];
  for (int k = 0; k < 2; k++) {
    size_t n = k ? 100000 : 10000, cap = 64 * n + 256, len = 0;
    char *text = malloc(cap);
    if (!text) return 1;
    len += (size_t)snprintf(text, cap, "layers = (\n");
    for (size_t i = 0; i < n; i++)
      len += (size_t)snprintf(text + len, cap - len, " { name = \"l%zu\"; material = \"GaAs\"; "
                              "thickness = 0.1; },\n", i);
    snprintf(text + len, cap - len, " { name = \"last\"; material = \"Nope\"; thickness = 1; } );\n");
    ew_stack *st = NULL;
    double t0 = now();
    ew_status rc = ew_stack_read_string(text, "layers", cat, &st, &err);
    t[k] = now() - t0;
    free(text);
    ew_stack_free(st);
    if (rc != EW_ERR_INPUT) return 1;
  }
  printf("stack reader, refused at the last layer: 1e4 layers %.3f s, 1e5 layers %.3f s "
         "(ratio %.1f; linear = 10)\n", t[0], t[1], t[1] / t[0]);
  ew_catalogue_free(cat);
  return 0;
}

/* 6. 4-band k·p hole dispersion of a ~1300-node well at 51 k∥ points (target < 0.5 s) */
static int bench_dispersion(void) {
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_dispersion *d = NULL;
  ew_error e;
  if (ew_catalogue_load("materials", &cat, &e) || ew_stack_read_file("examples/detector_well.cfg", cat, &st, &e) ||
      ew_dispersion_create(&d, &e)) {
    printf("k.p dispersion: setup failed: %s\n", e.message);
    return 1;
  }
  ew_dispersion_options o;
  ew_dispersion_options_default(&o); /* 4band, [100], 0 … 0.5 /nm, 51 points, 0.05 nm grid */
  double t0 = now();
  ew_status rc = ew_dispersion_compute(d, st, &o, &e);
  double t1 = now();
  if (rc) printf("k.p dispersion: failed: %s\n", e.message);
  else
    printf("4-band k.p dispersion, examples/detector_well.cfg (1323 nodes), 51 k points, %zu "
           "subbands: %.3f s (target < 0.5 s)\n", ew_dispersion_subband_count(d), t1 - t0);
  ew_dispersion_free(d);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return 0;
}

/* 7. gain spectra of examples/emitter_well.cfg (8 nm GaAs, 1161 nodes) at ten densities,
 * defaults: 4-band holes to 0.8 /nm at 65 k points, 301 photon energies (target < 1 s) */
static int bench_gain(void) {
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_gain *g = NULL;
  ew_error e;
  if (ew_catalogue_load("materials", &cat, &e) ||
      ew_stack_read_file("examples/emitter_well.cfg", cat, &st, &e) || ew_gain_create(&g, &e)) {
    printf("gain: setup failed: %s\n", e.message);
    return 1;
  }
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = 1e12, o.density_to_cm2 = 1e13, o.density_step_cm2 = 1e12;
  double t0 = now(), c0 = (double)clock() / CLOCKS_PER_SEC;
  ew_status rc = ew_gain_compute(g, st, &o, &e);
  double t1 = now(), c1 = (double)clock() / CLOCKS_PER_SEC;
  /* the k·p part alone (the same dispersion the gain runs), to show where the time goes */
  ew_dispersion *d = NULL;
  ew_dispersion_options dp;
  ew_dispersion_options_default(&dp);
  dp.axial = 1, dp.kmax_inv_nm = o.kmax_inv_nm, dp.points = o.k_points;
  double c2 = (double)clock() / CLOCKS_PER_SEC;
  if (!rc && !(rc = ew_dispersion_create(&d, &e))) rc = ew_dispersion_compute(d, st, &dp, &e);
  double c3 = (double)clock() / CLOCKS_PER_SEC;
  ew_dispersion_free(d);
  if (rc) printf("gain: failed: %s\n", e.message);
  else
    printf("gain spectra, examples/emitter_well.cfg, %zu densities x %zu energies (4-band "
           "holes, 65 k points): %.3f s wall, %.3f s CPU (target < 1 s, ratio %.2f); of it "
           "the k.p dispersion %.3f s CPU, the rest (matrix elements, Fermi levels, spectra, "
           "transparency) %.3f s\n", ew_gain_density_count(g), ew_gain_energy_count(g), t1 - t0,
           c1 - c0, (t1 - t0) / 1.0, c3 - c2, (c1 - c0) - (c3 - c2));
  ew_gain_free(g);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc != EW_OK;
}

int main(int argc, char **argv) {
#ifdef __GLIBC__
  /* as the CLI does (src/cli.c): keep freed arrays in the heap between solves */
  mallopt(M_MMAP_THRESHOLD, 32 * 1024 * 1024);
  mallopt(M_TRIM_THRESHOLD, 512 * 1024 * 1024);
#endif
  const char *cli = argc > 1 ? argv[1] : "build/epiwell";
  const char *ref = getenv("EW_BENCH_REF");
  if (ref && !*ref) ref = NULL;
  /* build/bench CLI [PART]: one part alone (superlattice, memory, cli, sweep, sc, reader,
     dispersion, gain); no PART: all of them */
  const char *part = argc > 2 ? argv[2] : NULL;
#define PART(name) (!part || !strcmp(part, name))
  if (PART("superlattice") && bench_superlattice() != 0) return 1;
  if (PART("memory")) bench_memory();
  if (PART("cli") && bench_single_well(cli, ref) != 0) return 1;
  if (PART("sweep") && bench_sweep_throughput() != 0) return 1;
  if (PART("sc") && bench_self_consistent() != 0) return 1;
  if (PART("reader") && bench_reader() != 0) return 1;
  if (PART("dispersion") && bench_dispersion() != 0) return 1;
  if (PART("gain") && bench_gain() != 0) return 1;
#undef PART
  return 0;
}
