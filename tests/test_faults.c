/* test_faults.c — every allocation failure inside a solve gives EW_ERR_NOMEM or the identical
 * result (RULES: "Every allocation failure returns EW_ERR_NOMEM"; never an exit or a crash).
 *
 * This program replaces malloc, calloc and realloc (glibc's are reached as __libc_malloc, …,
 * which glibc exports for this purpose), so every allocation of the library and of SuperLU
 * in this process passes through a counter.  A reference run counts the N allocations of one
 * job (a solve, a doped self-consistent solve, a 3-point sweep); then, for every k = 1 … N, a
 * child process repeats the job with the k-th allocation failing and reports how it ended.
 * Allowed: EW_ERR_NOMEM, or EW_OK with a result identical to the reference (every state's
 * energy and error estimate bit for bit; the sweep's CSV byte for byte).  Anything else — an
 * exit, a crash, another status, a different result — is listed with the backtrace of the
 * failed allocation (addresses: `addr2line -f -e build/tests/test_faults ADDR`) and fails.
 * Under SANITIZE=1, AddressSanitizer owns malloc: the tests are skipped (reported as skipped).
 * The doped solve and the sweep run on a coarser grid than the single well so that the whole
 * campaign takes about two minutes (see job_grid).  EW_FAULTS_ONLY=NAME runs one test;
 * EW_FAULTS_TRACE=1 makes every child print the stack of its failed allocation. */
#include <math.h>
#include <stdatomic.h>
#include <sys/wait.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "testutil.h"

#include "continuum.h"
#include "workflow.h"

#if defined(__SANITIZE_ADDRESS__)
#define FAULTS_POSSIBLE 0
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define FAULTS_POSSIBLE 0
#endif
#endif
#ifndef FAULTS_POSSIBLE
#define FAULTS_POSSIBLE 1
#endif

#if FAULTS_POSSIBLE
#include <execinfo.h>

extern void *__libc_malloc(size_t);
extern void *__libc_calloc(size_t, size_t);
extern void *__libc_realloc(void *, size_t);

static atomic_long alloc_seen;  /* allocations since arming */
static long fail_at;            /* 0: none fails */
static atomic_int armed;
static void *fail_trace[32];
static int fail_depth;
static int trace_each; /* EW_FAULTS_TRACE=1: every child prints its failed allocation's stack */
extern char __executable_start; /* the linker's start of this program's image (its load base) */

/* 1 when this allocation is to fail (the k-th after arming) */
static int inject(void) {
  if (!atomic_load(&armed)) return 0;
  long k = atomic_fetch_add(&alloc_seen, 1) + 1;
  if (k != fail_at) return 0;
  atomic_store(&armed, 0); /* backtrace() must not recurse into a failure */
  fail_depth = backtrace(fail_trace, 32);
  if (trace_each) backtrace_symbols_fd(fail_trace, fail_depth, 2); /* no allocation */
  atomic_store(&armed, 1);
  return 1;
}

/* A failed allocation sets errno to ENOMEM, as glibc's does (POSIX): fopen and getline pass
 * it on, and that is how a caller tells their out-of-memory from a missing file or the end. */
static void *failed(void) {
  errno = ENOMEM;
  return NULL;
}
void *malloc(size_t n) { return inject() ? failed() : __libc_malloc(n); }
void *calloc(size_t a, size_t b) { return inject() ? failed() : __libc_calloc(a, b); }
void *realloc(void *p, size_t n) { return inject() ? failed() : __libc_realloc(p, n); }
#endif

static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  return tu_load_catalogue(&cat);
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

/* What one run of a job produced: a status and a fingerprint of its result. */
typedef struct {
  ew_status rc;
  size_t len;
  unsigned char bytes[8192];
} outcome;

typedef void (*job_fn)(const void *ctx, outcome *out);

/* Solve a stack (plain or doped: ew_solve dispatches) and keep every state's energy and error
 * estimate. */
static void solve_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_result *r = NULL;
  ew_error err;
  out->rc = ew_solve(st, NULL, &r, &err);
  out->len = 0;
  for (size_t i = 0; out->rc == EW_OK && i < ew_result_state_count(r); i++) {
    const ew_state *s = ew_result_state(r, i);
    if (out->len + 2 * sizeof(double) > sizeof out->bytes) break;
    memcpy(out->bytes + out->len, &s->energy_eV, sizeof(double));
    memcpy(out->bytes + out->len + sizeof(double), &s->error_eV, sizeof(double));
    out->len += 2 * sizeof(double);
  }
  ew_result_free(r);
}

/* A 3-point sweep of the well width, CSV into a file whose buffer exists before arming. */
typedef struct {
  ew_wf_model *m;
  ew_wf_range range;
  FILE *csv;
} sweep_ctx;

static void sweep_job(const void *ctx, outcome *out) {
  const sweep_ctx *c = ctx;
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 1; /* one thread: the k-th allocation is the same one every run */
  ew_error err;
  rewind(c->csv);
  out->rc = ew_wf_sweep(c->m, &c->range, 1, &o, c->csv, NULL, &err);
  fflush(c->csv);
  long end = ftell(c->csv);
  rewind(c->csv);
  out->len = end > 0 && (size_t)end <= sizeof out->bytes ? (size_t)end : 0;
  if (out->len && fread(out->bytes, 1, out->len, c->csv) != out->len) out->len = 0;
}

/* The stack of a model at key values (faults_repeat_build): every layer's name, thickness,
 * position and conduction edge. */
typedef struct {
  ew_wf_model *m;
  const char *const *keys;
  const double *values;
  size_t nkeys;
} build_ctx;

static void build_job(const void *ctx, outcome *out) {
  const build_ctx *c = ctx;
  ew_stack *st = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_wf_stack_at(c->m, c->nkeys, c->keys, c->values, &st, &err);
  for (size_t k = 0; out->rc == EW_OK && k < st->n_layers; k++) {
    const ew_layer *L = &st->layers[k];
    double v[3] = {L->thickness_nm, L->z_start_nm, L->bands.Ec_eV};
    if (out->len + sizeof L->name + sizeof v > sizeof out->bytes) break;
    memcpy(out->bytes + out->len, L->name, sizeof L->name);
    memcpy(out->bytes + out->len + sizeof L->name, v, sizeof v);
    out->len += sizeof L->name + sizeof v;
  }
  ew_stack_free(st);
}

/* Two JSON parts of a sweep (sweep_merge.c) or of a match (match_part.c) merged into a file
 * whose buffer exists before arming; the parts' own files are opened while armed. */
typedef struct {
  const char *paths[2];
  FILE *out;
  int match; /* 1: parts of a match */
} merge_ctx;

static void merge_job(const void *ctx, outcome *out) {
  const merge_ctx *c = ctx;
  ew_error err;
  rewind(c->out);
  out->rc = c->match ? ew_wf_match_merge(2, c->paths, c->out, &err)
                     : ew_wf_sweep_merge(NULL, 0, 2, c->paths, c->out, &err);
  fflush(c->out);
  long end = ftell(c->out);
  rewind(c->out);
  out->len = end > 0 && (size_t)end <= sizeof out->bytes ? (size_t)end : 0;
  if (out->len && fread(out->bytes, 1, out->len, c->out) != out->len) out->len = 0;
}

/* A 6-band k·p dispersion (kp_*.c, dispersion.c, SuperLU's complex LU): every subband
 * energy at every k∥. */
static void dispersion_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_dispersion *d = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_dispersion_create(&d, &err);
  ew_dispersion_options o;
  ew_dispersion_options_default(&o);
  o.model = 6;
  o.points = 4;
  o.kmax_inv_nm = 0.3;
  if (out->rc == EW_OK) out->rc = ew_dispersion_compute(d, st, &o, &err);
  for (size_t j = 0; out->rc == EW_OK && j < ew_dispersion_subband_count(d); j++)
    for (size_t i = 0; i < ew_dispersion_point_count(d); i++) {
      double e = ew_dispersion_energy_eV(d, j, i);
      if (out->len + sizeof e > sizeof out->bytes) break;
      memcpy(out->bytes + out->len, &e, sizeof e);
      out->len += sizeof e;
    }
  ew_dispersion_free(d);
}

/* The same in the 8-band model (kp_hamiltonian.c's Kane terms, kp_blocklu.c,
 * dispersion_kane.c: both sides of the gap). */
static void dispersion8_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_dispersion *d = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_dispersion_create(&d, &err);
  ew_dispersion_options o;
  ew_dispersion_options_default(&o);
  o.model = 8;
  o.points = 3;
  o.kmax_inv_nm = 0.3;
  if (out->rc == EW_OK) out->rc = ew_dispersion_compute(d, st, &o, &err);
  for (size_t j = 0; out->rc == EW_OK && j < ew_dispersion_subband_count(d); j++)
    for (size_t i = 0; i < ew_dispersion_point_count(d); i++) {
      double e = ew_dispersion_energy_eV(d, j, i);
      if (out->len + sizeof e > sizeof out->bytes) break;
      memcpy(out->bytes + out->len, &e, sizeof e);
      out->len += sizeof e;
    }
  ew_dispersion_free(d);
}

/* The minibands of a superlattice period (miniband.c, api_minibands.c, SuperLU's complex LU
 * over the periodic pattern): every miniband energy at every q, and each mass. */
static void minibands_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_minibands *mb = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_minibands_create(&mb, &err);
  if (out->rc == EW_OK) out->rc = ew_minibands_compute(mb, st, 4, 0.0, &err);
  for (size_t j = 0; out->rc == EW_OK && j < ew_minibands_count(mb); j++)
    for (size_t i = 0; i <= ew_minibands_point_count(mb); i++) {
      double e = i < ew_minibands_point_count(mb) ? ew_minibands_energy_eV(mb, j, i)
                                                   : ew_minibands_mass_m0(mb, j);
      if (out->len + sizeof e > sizeof out->bytes) break;
      memcpy(out->bytes + out->len, &e, sizeof e);
      out->len += sizeof e;
    }
  ew_minibands_free(mb);
}

/* The gain spectra (gain*.c over the solve and the 4-band dispersion with its matrix
 * elements): every TE, TM and spontaneous value at two densities, the transparency. */
static void gain_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_gain *g = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_gain_create(&g, &err);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.k_points = 9, o.kmax_inv_nm = 0.1;
  o.density_from_cm2 = 2e12, o.density_to_cm2 = 3e12;
  o.energy_step_eV = 0.02;
  if (out->rc == EW_OK) out->rc = ew_gain_compute(g, st, &o, &err);
  double t = ew_gain_transparency_density_cm2(g);
  if (out->rc == EW_OK) memcpy(out->bytes, &t, sizeof t), out->len = sizeof t;
  for (size_t d = 0; out->rc == EW_OK && d < ew_gain_density_count(g); d++)
    for (size_t i = 0; i < ew_gain_energy_count(g); i++) {
      double v[3] = {ew_gain_te_cm(g, d, i), ew_gain_tm_cm(g, d, i), ew_gain_spontaneous(g, d, i)};
      if (out->len + sizeof v > sizeof out->bytes) break;
      memcpy(out->bytes + out->len, v, sizeof v);
      out->len += sizeof v;
    }
  ew_gain_free(g);
}

/* The hole intersubband absorption (hole_absorption*.c over the 4-band dispersion's
 * eigenvectors): the Fermi level, every TE and TM value and the k∥ = 0 matrix elements. */
static void hole_absorption_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_hole_absorption *h = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_hole_absorption_create(&h, &err);
  ew_hole_absorption_options o;
  ew_hole_absorption_options_default(&o);
  o.density_cm2 = 5e11, o.k_points = 9, o.kmax_inv_nm = 0.1, o.energy_step_eV = 0.02;
  if (out->rc == EW_OK) out->rc = ew_hole_absorption_compute(h, st, &o, &err);
  double F = ew_hole_absorption_fermi_eV(h);
  if (out->rc == EW_OK) memcpy(out->bytes, &F, sizeof F), out->len = sizeof F;
  size_t np = ew_hole_absorption_energy_count(h), nt = ew_hole_absorption_transition_count(h);
  for (size_t i = 0; out->rc == EW_OK && i < np + nt; i++) {
    double v[2] = {i < np ? ew_hole_absorption_te_cm(h, i) : ew_hole_absorption_te_eV2nm2(h, i - np, 0),
                   i < np ? ew_hole_absorption_tm_cm(h, i) : ew_hole_absorption_tm_eV2nm2(h, i - np, 0)};
    if (out->len + sizeof v > sizeof out->bytes) break;
    memcpy(out->bytes + out->len, v, sizeof v);
    out->len += sizeof v;
  }
  ew_hole_absorption_free(h);
}

#if FAULTS_POSSIBLE
/* Run job with the k-th allocation failing (k = 0: none); returns the count seen. */
/* Over a solved result: the sum rule from e1 (continuum.c) and the spectra with their
 * bound-to-continuum column (spectra.c, spectra_workflow.c); the fingerprint keeps both parts
 * of the sum and every 50th value of the continuum column. */
static void continuum_job(const void *ctx, outcome *out) {
  const ew_result *r = ctx;
  double b = 0, c = 0;
  ew_error err;
  ew_wf_spectra sp;
  out->len = 0;
  out->rc = ew_continuum_sum_rule_e1(r, &b, &c, &err);
  if (out->rc != EW_OK) return;
  out->rc = ew_wf_spectra_compute(r, 45.0, 3.3, &sp, &err);
  if (out->rc != EW_OK) return;
  memcpy(out->bytes, &b, sizeof b);
  memcpy(out->bytes + sizeof b, &c, sizeof c);
  out->len = 2 * sizeof(double);
  for (size_t k = 0; sp.continuum && k < sp.n && out->len + sizeof(double) <= sizeof out->bytes; k += 50) {
    memcpy(out->bytes + out->len, &sp.continuum[k], sizeof(double));
    out->len += sizeof(double);
  }
  ew_wf_spectra_free(&sp);
}

static long run_armed(job_fn job, const void *ctx, long k, outcome *out) {
  atomic_store(&alloc_seen, 0);
  fail_at = k;
  fail_depth = 0;
  atomic_store(&armed, 1);
  job(ctx, out);
  atomic_store(&armed, 0);
  return atomic_load(&alloc_seen);
}

/* Every k for one job; returns the number of bad k (each printed). */
static int every_fault(const char *what, job_fn job, const void *ctx) {
  outcome *ref = calloc(1, sizeof *ref), *got = calloc(1, sizeof *got);
  assert_non_null(ref);
  assert_non_null(got);
  void *warm[4];
  backtrace(warm, 4); /* loads libgcc before any fork */
  long total = run_armed(job, ctx, 0, ref);
  assert_int_equal(ref->rc, EW_OK);
  assert_true(total > 0);
  int bad = 0, nomem = 0, same = 0;
  for (long k = 1; k <= total; k++) {
    int fd[2];
    assert_int_equal(pipe(fd), 0);
    fflush(NULL);
    pid_t pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) { /* child: run, send the outcome and the failed allocation's backtrace */
      close(fd[0]);
      run_armed(job, ctx, k, got);
      int depth = fail_depth;
      if (write(fd[1], got, sizeof *got) != (ssize_t)sizeof *got ||
          write(fd[1], &depth, sizeof depth) != (ssize_t)sizeof depth ||
          write(fd[1], fail_trace, sizeof fail_trace) != (ssize_t)sizeof fail_trace)
        _exit(3);
      _exit(0);
    }
    close(fd[1]);
    int depth = 0;
    void *trace[32];
    size_t have = 0;
    unsigned char *dst[3] = {(unsigned char *)got, (unsigned char *)&depth, (unsigned char *)trace};
    size_t len[3] = {sizeof *got, sizeof depth, sizeof trace};
    for (int part = 0; part < 3; part++)
      for (size_t off = 0; off < len[part];) {
        ssize_t r = read(fd[0], dst[part] + off, len[part] - off);
        if (r <= 0) break;
        off += (size_t)r, have += (size_t)r;
      }
    close(fd[0]);
    int status = 0;
    waitpid(pid, &status, 0);
    const char *why = NULL;
    char buf[96];
    if (WIFSIGNALED(status)) snprintf(buf, sizeof buf, "crashed (signal %d)", WTERMSIG(status)), why = buf;
    else if (have != sizeof *got + sizeof depth + sizeof trace)
      snprintf(buf, sizeof buf, "ended the process (exit %d)", WEXITSTATUS(status)), why = buf;
    else if (got->rc == EW_ERR_NOMEM) nomem++;
    else if (got->rc != EW_OK) snprintf(buf, sizeof buf, "returned status %d", (int)got->rc), why = buf;
    else if (got->len != ref->len || memcmp(got->bytes, ref->bytes, ref->len)) why = "changed the result";
    else same++;
    if (!why) continue;
    bad++;
    print_error("%s: allocation %ld of %ld %s; failed allocation at:", what, k, total, why);
    for (int i = 1; i < depth && i < 12; i++) /* offsets into this PIE binary, for addr2line */
      print_error(" 0x%tx", (char *)trace[i] - &__executable_start);
    print_error("\n");
  }
  print_message("%s: %ld allocations: %d EW_ERR_NOMEM, %d identical, %d bad\n", what, total,
                nomem, same, bad);
  free(ref);
  free(got);
  return bad;
}
#endif

static ew_stack *read_stack(const char *text) {
  ew_stack *st = NULL;
  ew_error err;
  assert_int_equal(ew_stack_read_string(text, "test", cat, &st, &err), EW_OK);
  return st;
}

/* An 8 nm GaAs well in Al0.3Ga0.7As with the Kane electron mass (the default), coarse grid
 * step so that the job is small. */
static const char *well_text =
    "temperature = 300.0;\ngrid_step = 0.1;\n"
    "layers = (\n"
    "  { name = \"lower\"; material = \"AlGaAs\"; x = 0.30; thickness = 15.0; },\n"
    "  { name = \"well\";  material = \"GaAs\"; thickness = 8.0; },\n"
    "  { name = \"upper\"; material = \"AlGaAs\"; x = 0.30; thickness = 15.0; }\n);\n";

static void faults_single_well(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  ew_stack *st = read_stack(well_text);
  int bad = every_fault("single well", solve_job, st);
  ew_stack_free(st);
  assert_int_equal(bad, 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* The doped solve and the sweep run on a coarse grid (0.4 nm): every allocation of the job is
 * still reached (the same code runs at any node count), and a child takes milliseconds, so
 * all of them run in the suite.  EW_FAULTS_ALL=1 uses the 0.1 nm grid of the single well. */
static const char *job_grid(void) {
  const char *e = getenv("EW_FAULTS_ALL");
  return e && !strcmp(e, "1") ? "0.1" : "0.4";
}

#if FAULTS_POSSIBLE
/* A fresh directory dir holding the single well on the job grid as path (DIR/well.cfg). */
/* the stack file of layers (text from "layers = (" on; NULL: the single well) on the job grid */
static void job_stack(char *dir, size_t dsize, char *path, size_t psize, const char *layers) {
  assert_int_equal(tu_mkdtemp("faults", dir, dsize), 0);
  snprintf(path, psize, "%s/well.cfg", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fprintf(f, "temperature = 300.0;\ngrid_step = %s;\n%s", job_grid(),
          layers ? layers : strstr(well_text, "layers"));
  fclose(f);
}
static void job_well(char *dir, size_t dsize, char *path, size_t psize) {
  job_stack(dir, dsize, path, psize, NULL);
}
#endif

static void faults_doped_well(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char text[640];
  snprintf(text, sizeof text,
           "temperature = 77.0;\ngrid_step = %s;\n"
           "layers = (\n"
           "  { name = \"lower\"; material = \"AlGaAs\"; x = 0.30; thickness = 15.0; },\n"
           "  { name = \"well\";  material = \"GaAs\"; thickness = 6.0; doping = { donors = 1e18; }; },\n"
           "  { name = \"upper\"; material = \"AlGaAs\"; x = 0.30; thickness = 15.0; }\n);\n",
           job_grid());
  ew_stack *st = read_stack(text);
  int bad = every_fault("doped well", solve_job, st);
  ew_stack_free(st);
  assert_int_equal(bad, 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* A wurtzite AlGaN/GaN transistor stack: the polarisation charges of the Poisson model
 * (poisson.c, polarization.c) are allocated with the rest of the self-consistent solve. */
static void faults_nitride_2deg(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char text[640];
  snprintf(text, sizeof text,
           "temperature = 300.0;\ngrid_step = %s;\nsubstrate = \"GaN\";\nc_axis = \"-z\";\n"
           "surface = { barrier = 1.23; };\nlayers = (\n"
           "  { name = \"barrier\"; material = \"AlGaN\"; x = 0.30; thickness = 20.0; },\n"
           "  { name = \"channel\"; material = \"GaN\"; thickness = 30.0; }\n);\n",
           job_grid());
  ew_stack *st = read_stack(text);
  int bad = every_fault("nitride 2DEG", solve_job, st);
  ew_stack_free(st);
  assert_int_equal(bad, 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

#if FAULTS_POSSIBLE
/* A 3-point sweep over range (KEY=FROM:TO:STEP) of the single well on the coarse grid. */
static int sweep_faults_of(const char *what, const char *range, const char *layers) {
  char dir[512], path[600];
  job_stack(dir, sizeof dir, path, sizeof path, layers);
  sweep_ctx c;
  ew_error err;
  assert_int_equal(ew_wf_model_open(path, cat, NULL, &c.m, &err), EW_OK);
  assert_int_equal(ew_wf_range_parse(range, 1, "--vary", &c.range, &err), EW_OK);
  static char iobuf[1 << 16];
  c.csv = tmpfile();
  assert_non_null(c.csv);
  setvbuf(c.csv, iobuf, _IOFBF, sizeof iobuf); /* no buffer allocation while armed */
  int bad = every_fault(what, sweep_job, &c);
  fclose(c.csv);
  ew_wf_model_free(c.m);
  tu_rm_tree(dir);
  return bad;
}
static int sweep_faults(const char *what, const char *range) {
  return sweep_faults_of(what, range, NULL);
}
#endif

static void faults_sweep(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  assert_int_equal(sweep_faults("3-point sweep", "well.thickness=6:8:1"), 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* A doped sweep of ten donor densities: nine sub-grid points solved cold, whose converged
 * potentials are kept (sweep.c start_of), and one row warm-started from its nearest one. */
static void faults_sweep_doped(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  const char *layers =
      "layers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 6.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 5.0; doping = { donors = 1e18; }; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 6.0; }\n);\n";
  assert_int_equal(sweep_faults_of("doped sweep (warm start)",
                                   "well.doping.donors=1e18:5.5e18:5e17", layers), 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* Keys the stack file leaves out (the field; the well's thickness in monolayers, which takes
 * its thickness out): the settings are created when the key is checked, before the sweep, and
 * a build only attaches them, so libconfig allocates nothing while armed (stack_edit.c). */
static void faults_sweep_absent_keys(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  assert_int_equal(sweep_faults("sweep over an absent key", "field=0:20:10"), 0);
  assert_int_equal(sweep_faults("sweep over the other thickness form", "well.thickness_ml=26:30:2"),
                   0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* The keys of a repeated layer (issue 14 §1): well.thickness sets every copy in the tree,
 * well#2.thickness one copy through the reader's hook (stack_edit.c), and the build walks the
 * repeat group (stack_repeat.c) into the expanded layers (stack.c).  A build, not a sweep:
 * the solves after it are the other cases' (a sweep here took 9000 allocations, 8 minutes). */
static void faults_repeat_build(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char dir[512], path[600];
  assert_int_equal(tu_mkdtemp("faults", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/sl.cfg", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fprintf(f, "temperature = 300.0;\nlayers = (\n"
          "  { name = \"lower\"; material = \"AlGaAs\"; x = 0.30; thickness = 10.0; },\n"
          "  { repeat = 2; layers = (\n"
          "    { name = \"well\"; material = \"GaAs\"; thickness = 6.0; },\n"
          "    { repeat = 3; layers = ( { name = \"barrier\"; material = \"AlGaAs\"; x = 0.30; "
          "thickness = 1.2; } ); } ); },\n"
          "  { name = \"upper\"; material = \"AlGaAs\"; x = 0.30; thickness = 10.0; }\n);\n");
  fclose(f);
  /* well#1 switches to monolayers: thickness taken out, the reserved thickness_ml attached */
  static const char *const keys[] = {"well.thickness", "well#2.thickness", "barrier#4.thickness",
                                     "well#1.thickness_ml"};
  static const double values[] = {7.0, 5.0, 1.5, 20.0};
  build_ctx c = {NULL, keys, values, 4};
  ew_error err;
  assert_int_equal(ew_wf_model_open(path, cat, NULL, &c.m, &err), EW_OK);
  for (size_t i = 0; i < c.nkeys; i++) { /* as every workflow does before its run */
    double nominal;
    assert_int_equal(ew_wf_key_check(c.m, keys[i], "--vary", &nominal, &err), EW_OK);
  }
  int bad = every_fault("repeat build", build_job, &c);
  ew_wf_model_free(c.m);
  tu_rm_tree(dir);
  assert_int_equal(bad, 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

#if FAULTS_POSSIBLE
/* The merge of c's parts with every allocation failing in turn, into a file whose buffer
 * exists before arming; the number of bad outcomes. */
static int merge_faults(const char *what, merge_ctx *c) {
  static char iobuf[1 << 16];
  c->out = tmpfile();
  assert_non_null(c->out);
  setvbuf(c->out, iobuf, _IOFBF, sizeof iobuf);
  int bad = every_fault(what, merge_job, c);
  fclose(c->out);
  return bad;
}
#endif

/* The parts written once (unarmed), then merged with every allocation failing in turn. */
static void faults_merge(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char dir[512], path[600], parts[2][600];
  job_well(dir, sizeof dir, path, sizeof path);
  ew_wf_model *m = NULL;
  ew_wf_range range;
  ew_error err;
  assert_int_equal(ew_wf_model_open(path, cat, NULL, &m, &err), EW_OK);
  assert_int_equal(ew_wf_range_parse("well.thickness=6:8:1", 1, "--vary", &range, &err), EW_OK);
  merge_ctx c = {.match = 0};
  for (int k = 0; k < 2; k++) {
    snprintf(parts[k], sizeof parts[k], "%s/part%d.json", dir, k + 1);
    FILE *p = fopen(parts[k], "w");
    assert_non_null(p);
    ew_wf_sweep_opt o;
    ew_wf_sweep_opt_default(&o);
    o.shard_k = (size_t)k + 1;
    o.shard_n = 2;
    assert_int_equal(ew_wf_sweep(m, &range, 1, &o, NULL, p, &err), EW_OK);
    fclose(p);
    c.paths[k] = parts[k];
  }
  int bad = merge_faults("merge of 2 parts", &c);
  ew_wf_model_free(m);
  tu_rm_tree(dir);
  assert_int_equal(bad, 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* The two parts of a 1D match (match_part.c), written unarmed, then joined with every
 * allocation failing in turn. */
static void faults_match_merge(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char dir[512], path[600], parts[2][600];
  job_well(dir, sizeof dir, path, sizeof path);
  ew_wf_model *m = NULL;
  ew_wf_range range;
  ew_wf_quantity target;
  ew_error err;
  assert_int_equal(ew_wf_model_open(path, cat, NULL, &m, &err), EW_OK);
  assert_int_equal(ew_wf_range_parse("well.thickness=5:9", 0, "--vary", &range, &err), EW_OK);
  assert_int_equal(ew_wf_quantity_parse("10um", 0, "--target", &target, &err), EW_OK);
  const char *line = "e1-e2";
  merge_ctx c = {.match = 1};
  for (int k = 0; k < 2; k++) {
    snprintf(parts[k], sizeof parts[k], "%s/part%d.json", dir, k + 1);
    FILE *p = fopen(parts[k], "w");
    assert_non_null(p);
    ew_wf_match_opt o = {.threads = 1, .samples = 5, .shard_k = (size_t)k + 1, .shard_n = 2};
    ew_wf_match_result r;
    assert_int_equal(ew_wf_match(m, &range, 1, &line, &target, 1, NULL, &o, &r, &err), EW_OK);
    ew_wf_match_part_write(&r, p);
    ew_wf_match_result_free(&r);
    fclose(p);
    c.paths[k] = parts[k];
  }
  int bad = merge_faults("merge of 2 match parts", &c);
  ew_wf_model_free(m);
  tu_rm_tree(dir);
  assert_int_equal(bad, 0);
#else
  skip(); /* AddressSanitizer owns malloc */
#endif
}

/* The k·p dispersion of a narrow well with thin barriers on the coarse job grid. */
static void faults_dispersion(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char text[512];
  snprintf(text, sizeof text,
           "temperature = 300.0;\ngrid_step = %s;\nlayers = (\n"
           "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 4.0; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = 6.0; },\n"
           "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 4.0; }\n);\n",
           job_grid());
  ew_stack *st = read_stack(text);
  int bad = every_fault("6-band dispersion", dispersion_job, st);
  ew_stack_free(st);
  assert_int_equal(bad, 0);
#else
  skip();
#endif
}

#if FAULTS_POSSIBLE
/* job over a well of w_nm GaAs between two b_nm Al0.3Ga0.7As layers on the coarse job grid,
 * every allocation failing in turn; the number of bad outcomes. */
static int narrow_well_faults(const char *what, job_fn job, double b_nm, double w_nm) {
  char text[512];
  snprintf(text, sizeof text,
           "temperature = 300.0;\ngrid_step = %s;\nlayers = (\n"
           "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = %g; },\n"
           "  { name = \"well\"; material = \"GaAs\"; thickness = %g; },\n"
           "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = %g; }\n);\n",
           job_grid(), b_nm, w_nm, b_nm);
  ew_stack *st = read_stack(text);
  int bad = every_fault(what, job, st);
  ew_stack_free(st);
  return bad;
}
#endif

/* A cmocka test: every allocation of JOB on the narrow well (barriers B_NM, well W_NM) failing
 * in turn gives EW_ERR_NOMEM or the identical outcome (skipped where faults cannot be
 * injected). */
#if FAULTS_POSSIBLE
#define NARROW_WELL_TEST(name, what, job, b_nm, w_nm)                \
  static void name(void **state) {                                   \
    (void)state;                                                     \
    assert_int_equal(narrow_well_faults(what, job, b_nm, w_nm), 0); \
  }
#else
#define NARROW_WELL_TEST(name, what, job, b_nm, w_nm) \
  static void name(void **state) {                    \
    (void)state;                                      \
    skip();                                           \
  }
#endif

/* The 8-band dispersion of the same well. */
NARROW_WELL_TEST(faults_dispersion8, "8-band dispersion", dispersion8_job, 4.0, 6.0)

/* The minibands of a short period (barrier halves around a well) on the coarse job grid. */
NARROW_WELL_TEST(faults_minibands, "minibands", minibands_job, 1.5, 4.0)

/* The gain model on a 6 nm well. */
NARROW_WELL_TEST(faults_gain, "gain", gain_job, 4.0, 6.0)

/* The hole intersubband absorption of a 6 nm well. */
NARROW_WELL_TEST(faults_hole_absorption, "hole absorption", hole_absorption_job, 4.0, 6.0)

/* The continuum over the single well (Kane electrons) with a sheet density for the spectra. */
static void faults_continuum(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  char text[640];
  snprintf(text, sizeof text, "sheet_density = 5e11;\n%s", well_text);
  ew_stack *st = read_stack(text);
  ew_result *r = NULL;
  assert_int_equal(ew_solve(st, NULL, &r, NULL), EW_OK);
  int bad = every_fault("continuum and spectra", continuum_job, r);
  ew_result_free(r);
  ew_stack_free(st);
  assert_int_equal(bad, 0);
#else
  skip();
#endif
}

/* The k·p hole densities of states (ew_options.hole_dos, hole_dos_kp.c): a p-doped well on
 * the coarse job grid solved self-consistently with them (axial: the same code with one
 * direction; its ~3200 children take about two minutes of CPU), and an undoped one with full
 * warping (the masses alone); the outcome holds every state's energy, sheet density and
 * density-of-states mass. */
#if FAULTS_POSSIBLE
static int hole_dos_mode = EW_HOLE_DOS_KP;
static void hole_dos_kp_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_options opt;
  ew_options_default(&opt);
  opt.hole_dos = hole_dos_mode;
  opt.excitons = 0;
  ew_result *r = NULL;
  ew_error err;
  out->rc = ew_solve(st, &opt, &r, &err);
  out->len = 0;
  for (size_t i = 0; out->rc == EW_OK && i < ew_result_state_count(r); i++) {
    const ew_state *s = ew_result_state(r, i);
    double v[3] = {s->energy_eV, ew_result_state_sheet_density_cm2(r, i), s->dos_mass_m0};
    if (out->len + sizeof v > sizeof out->bytes) break;
    memcpy(out->bytes + out->len, v, sizeof v);
    out->len += sizeof v;
  }
  ew_result_free(r);
}
#endif

static void faults_hole_dos_kp(void **state) {
  (void)state;
#if FAULTS_POSSIBLE
  const char *doping[2] = {"doping = { acceptors = 5e18; };", ""};
  for (int k = 0; k < 2; k++) {
    char text[640];
    snprintf(text, sizeof text,
             "temperature = 300.0;\ngrid_step = %s;\nlayers = (\n"
             "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 4.0; },\n"
             "  { name = \"well\"; material = \"GaAs\"; thickness = 6.0; %s },\n"
             "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 4.0; }\n);\n",
             job_grid(), doping[k]);
    ew_stack *st = read_stack(text);
    hole_dos_mode = k ? EW_HOLE_DOS_KP : EW_HOLE_DOS_KP_AXIAL;
    int bad = every_fault(k ? "k.p hole DOS masses" : "k.p hole DOS, p-doped", hole_dos_kp_job, st);
    ew_stack_free(st);
    assert_int_equal(bad, 0);
  }
#else
  skip();
#endif
}

/* The 8-band minibands of the same short period (kp_periodic*.c, miniband_kp.c: the periodic
 * profile, the bordered elimination over SuperLU, the window solver): every energy at every q
 * and in-plane k, each mass, the gap. */
static void minibands8_job(const void *ctx, outcome *out) {
  const ew_stack *st = ctx;
  ew_minibands *mb = NULL;
  ew_error err;
  out->len = 0;
  out->rc = ew_minibands_create(&mb, &err);
  if (out->rc == EW_OK) out->rc = ew_minibands_compute_kp(mb, st, 8, 2, 0.0, 0.2, 2, &err);
  size_t np = ew_minibands_point_count(mb), nk = ew_minibands_k_count(mb);
  for (size_t j = 0; out->rc == EW_OK && j < ew_minibands_count(mb); j++)
    for (size_t i = 0; i <= np + nk; i++) {
      double e = i < np ? ew_minibands_energy_eV(mb, j, i)
                 : i < np + nk ? ew_minibands_energy_k_eV(mb, j, i - np)
                               : ew_minibands_mass_m0(mb, j) + ew_minibands_gap_eV(mb);
      if (out->len + sizeof e > sizeof out->bytes) break;
      memcpy(out->bytes + out->len, &e, sizeof e);
      out->len += sizeof e;
    }
  ew_minibands_free(mb);
}

NARROW_WELL_TEST(faults_minibands8, "8-band minibands", minibands8_job, 1.5, 4.0)

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(faults_single_well),
      cmocka_unit_test(faults_doped_well),
      cmocka_unit_test(faults_nitride_2deg),
      cmocka_unit_test(faults_sweep),
      cmocka_unit_test(faults_sweep_doped),
      cmocka_unit_test(faults_sweep_absent_keys),
      cmocka_unit_test(faults_merge),
      cmocka_unit_test(faults_match_merge),
      cmocka_unit_test(faults_dispersion),
      cmocka_unit_test(faults_dispersion8),
      cmocka_unit_test(faults_minibands),
      cmocka_unit_test(faults_gain),
      cmocka_unit_test(faults_hole_absorption),
      cmocka_unit_test(faults_repeat_build),
      cmocka_unit_test(faults_continuum),
      cmocka_unit_test(faults_hole_dos_kp),
      cmocka_unit_test(faults_minibands8),
  };
#if !FAULTS_POSSIBLE
  (void)solve_job, (void)sweep_job, (void)build_job, (void)merge_job, (void)dispersion_job,
      (void)minibands_job, (void)gain_job, (void)read_stack,
      (void)well_text, (void)job_grid; /* skipped */
  (void)dispersion8_job, (void)hole_absorption_job;
  (void)minibands8_job;
#endif
  /* EW_FAULTS_ONLY=NAME runs one test (a cmocka filter pattern), for chasing one failure */
  const char *only = getenv("EW_FAULTS_ONLY");
#if FAULTS_POSSIBLE
  trace_each = getenv("EW_FAULTS_TRACE") != NULL;
#endif
  if (only && *only) cmocka_set_test_filter(only);
#ifdef _OPENMP
  /* no helper threads (helper_thread.h): the k-th allocation is the same one every run */
  omp_set_num_threads(1);
#endif
  return cmocka_run_group_tests(tests, setup, teardown);
}
