/* bench.c — `make bench`: speed figures, printed, never asserted.
 *  1. The eigen-solve of a 100-period GaAs/Al0.3Ga0.7As superlattice (5 nm / 5 nm) at a
 *     0.01 nm grid (N ≈ 1e5), all three bands with their error estimates, against LAPACK's
 *     dstemr (MRRR, value range) on the same matrices in the same run: times, ratio, memory.
 *  2. A single-well solve end to end: process start to JSON on stdout, through the CLI.
 *  3. Well-width sweep throughput: examples/detector_well.cfg, well.thickness over 800
 *     values 4–12 nm (levels and main lines of all three bands, error estimates on, as
 *     `epiwell sweep`), with 1 and with 2 OpenMP threads: solves per second and the scaling.
 *  5. The layer reader on 10^5 layers (GaAs, 0.1 nm each) refused at the last one (an
 *     unknown material): linear in the number of layers (issue 18: 45 s to 288 s before the
 *     duplicate-name check was hashed and integer literals found by a line index).
 * The machine is shared: compare the ratios printed in one run, not absolute times. */
#include <lapacke.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <time.h>

#include "eigen.h"
#include "error.h"
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

/* 1. the superlattice eigen-solve against dstemr on the same matrices */
static int bench_superlattice(void) {
  size_t cap = 64 * 1024, len = 0;
  char *text = malloc(cap);
  len += (size_t)snprintf(text + len, cap - len,
                          "temperature = 10.0;\ngrid_step = 0.01;\nnonparabolic = false;\nlayers = (\n"
                          "  { name = \"b0\"; material = \"AlGaAs\"; x = 0.3; thickness = 5.0; }");
  for (int k = 1; k <= 100; k++)
    len += (size_t)snprintf(text + len, cap - len,
                            ",\n  { name = \"w%d\"; material = \"GaAs\"; thickness = 5.0; },\n"
                            "  { name = \"b%d\"; material = \"AlGaAs\"; x = 0.3; thickness = 5.0; }",
                            k, k);
  snprintf(text + len, cap - len, "\n);\n");
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
  double t0 = now();
  if (ew_solve(st, &opt, &res, &err) != EW_OK) {
    fprintf(stderr, "bench: %s\n", ew_error_text(&err, msg, sizeof msg));
    return 1;
  }
  double t_ours = now() - t0, mem_ours = peak_mb();
  printf("superlattice: 100 periods 5 nm GaAs / 5 nm Al0.3Ga0.7As, grid 0.01 nm, N = %zu\n",
         ew_result_node_count(res));
  printf("  levels: e %zu, hh %zu, lh %zu; lines %zu\n", ew_result_band_count(res, EW_BAND_E),
         ew_result_band_count(res, EW_BAND_HH), ew_result_band_count(res, EW_BAND_LH),
         ew_result_line_count(res));
  printf("  epiwell (SuperLU shift-invert + inertia, fine vectors + coarse values): %.3f s\n",
         t_ours);
  printf("    work: %zu factorizations, %zu solves, %zu inertia counts; peak memory %.0f MB\n",
         res->work_factorizations, res->work_solves, res->work_counts, mem_ours);
  double t_lap = dstemr_same_matrices(st, res);
  printf("  LAPACK dstemr, same matrices: %.3f s; peak memory after both %.0f MB\n", t_lap,
         peak_mb());
  printf("  ratio dstemr / epiwell = %.2f (target >= 1)\n", t_lap / t_ours);
  ew_result_free(res);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  free(text);
  return 0;
}

/* 2. a single-well solve end to end through the CLI */
static int bench_single_well(const char *cli) {
  char cmd[1024];
  snprintf(cmd, sizeof cmd, "%s solve examples/detector_well.cfg --json > /dev/null", cli);
  int runs = 20;
  double t0 = now();
  for (int i = 0; i < runs; i++)
    if (system(cmd) != 0) {
      fprintf(stderr, "bench: '%s' failed\n", cmd);
      return 1;
    }
  double per = (now() - t0) / runs;
  printf("single well end to end (%s): %.1f ms per run over %d runs (target < 20 ms)\n", cmd,
         per * 1e3, runs);
  return 0;
}

/* 3. well-width sweep throughput with 1 and 2 threads */
static int bench_sweep_throughput(void) {
  {
    ew_error err = {0};
    char msg[2048];
    ew_catalogue *wcat = NULL;
    ew_wf_model *wm = NULL;
    sweep_bench br;
    const size_t points = 800;
    ew_options wo; /* as `epiwell sweep` solves: its columns carry no PL peaks */
    ew_options_default(&wo);
    wo.excitons = 0;
    if (ew_catalogue_load(NULL, &wcat, &err) != EW_OK ||
        ew_wf_model_open("examples/detector_well.cfg", wcat, &wo, &wm, &err) != EW_OK ||
        bench_sweep(wm, "well.thickness", 4.0, 12.0, points, 2, &br, &err) != EW_OK) {
      fprintf(stderr, "bench: sweep: %s\n", ew_error_text(&err, msg, sizeof msg));
      ew_wf_model_free(wm);
      ew_catalogue_free(wcat);
      return 1;
    }
    printf("well-width sweep throughput: examples/detector_well.cfg well.thickness 4-12 nm, %zu "
           "values, levels and main lines of e, hh, lh%s\n",
           br.points, ew_wf_have_openmp() ? "" : " (built without OpenMP)");
    printf("  1 thread : %.3f s, %.0f solves/s\n", br.seconds_1, br.per_s_1);
    printf("  %d threads: %.3f s, %.0f solves/s\n", br.threads, br.seconds_n, br.per_s_n);
    printf("  scaling %d/1 threads = %.2f; target >= 500 single-well solves/s on 2 cores\n",
           br.threads, br.per_s_n / br.per_s_1);
    ew_wf_model_free(wm);
    ew_catalogue_free(wcat);
  }
  return 0;
}

/* 4. self-consistent Schrödinger–Poisson at 1e19 cm^-3 */
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
  mallopt(M_MMAP_THRESHOLD, 256 * 1024 * 1024);
  mallopt(M_TRIM_THRESHOLD, 512 * 1024 * 1024);
#endif
  const char *cli = argc > 1 ? argv[1] : "build/epiwell";
  if (argc > 2 && !strcmp(argv[2], "reader")) return bench_reader(); /* part 5 alone */
  if (argc > 2 && !strcmp(argv[2], "gain")) return bench_gain();     /* part 7 alone */
  if (bench_superlattice() != 0 || bench_single_well(cli) != 0 || bench_sweep_throughput() != 0)
    return 1;
  if (bench_self_consistent() != 0) return 1;
  if (bench_reader()) return 1;
  if (bench_dispersion()) return 1;
  return bench_gain();
}
