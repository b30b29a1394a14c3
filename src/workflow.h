/* workflow.h — design workflows built on ew_solve: parameter sweeps, inverse matching (which
 * value of a stack key puts a line at a target) and growth tolerances (line shifts per
 * monolayer and per composition step, with Hellmann–Feynman derivatives).
 *
 * Any numeric key of a stack can be varied without the stack reader knowing about it: the
 * stack file is read once with libconfig and written back to canonical text; for every point
 * the text is parsed again, the key is set and the config is written to memory and handed to
 * ew_stack_read_string, which validates it like the original file.  A key is named
 * "LAYER.KEY" (the layer group whose name is LAYER, e.g. well.thickness, barrier.x; a
 * user-defined material's group may be named the same way, e.g. deep_barrier.Ec) or "KEY"
 * for a top-level setting (temperature, grid_step, and any later top-level number).
 *
 * Level identity across a sweep: levels are labelled by their order within their band (e1 is
 * always the lowest electron level).  The 1D BenDaniel–Duke problem with ψ = 0 at both walls
 * is a regular Sturm–Liouville problem, whose spectrum is non-degenerate (two solutions with
 * the same energy and the same boundary value would have a vanishing Wronskian, hence be
 * proportional), so two levels of one band can never cross as a parameter varies: their order
 * is their identity.  A level that becomes bound inside the sweep adds a column whose earlier
 * rows are empty.
 *
 * Main lines (the columns of a sweep, the rows of a tolerance table): intersubband lines
 * from the lowest level of each band to every other bound level of that band (e1-e2, e1-e3,
 * hh1-hh2, …) and interband lines e_n–hh_n and e_n–lh_n for n ≤ EW_WF_INTERBAND_MAX.
 *
 * Everything here is reentrant: no mutable globals; the OpenMP loops share only const data
 * (the model, the catalogue) and each point is computed alone, so results do not depend on
 * the number of threads.  Built without OpenMP (-fopenmp) everything runs on one thread. */
#ifndef EW_WORKFLOW_H
#define EW_WORKFLOW_H

#include "epiwell.h"
#include "materials.h" /* ew_bands */

#define EW_WF_INTERBAND_MAX 3 /* interband main lines e_n–hh_n, e_n–lh_n for n <= 3 */
#define EW_WF_KEY_MAX 128
#define EW_WF_MAX_POINTS 10000000 /* a sweep larger than this is a typo, not a design */

/* GaAs half lattice constant (a = 0.56533 nm at 300 K, Vurgaftman et al., J. Appl. Phys. 89,
 * 5815 (2001), Table III; from memory): the monolayer used for layers whose material has no
 * lattice constant (user-defined materials). */
#define EW_WF_DEFAULT_ML_NM 0.2827

/* ---- the stack model: a stack file whose numeric keys can be set ---------------------- */
typedef struct ew_wf_model ew_wf_model;

/* Read and validate path (errors as ew_stack_read_file, with file:line).  opt: solver options
 * used for every point (NULL: defaults); lowest_levels is raised to at least
 * EW_WF_INTERBAND_MAX so that every main line is computed.  cat must outlive the model. */
ew_status ew_wf_model_open(const char *path, const ew_catalogue *cat, const ew_options *opt,
                           ew_wf_model **out, ew_error *err);
void ew_wf_model_free(ew_wf_model *m); /* NULL is a no-op */
const ew_stack *ew_wf_model_stack(const ew_wf_model *m); /* the nominal stack */

/* Check that key names a setting of the model (see above) that can take a number.  *nominal
 * receives its value in the file, or NaN when it is absent (it will be added).  opt_name
 * (e.g. "--vary") starts the message of an EW_ERR_USAGE error. */
ew_status ew_wf_key_check(const ew_wf_model *m, const char *key, const char *opt_name,
                          double *nominal, ew_error *err);

/* The model's stack with keys[i] set to values[i] (i < nkeys); errors of the modified stack
 * are EW_ERR_INPUT naming the keys and values (no line: the text is generated). */
ew_status ew_wf_stack_at(const ew_wf_model *m, size_t nkeys, const char *const *keys,
                         const double *values, ew_stack **out, ew_error *err);

/* ---- ranges ---------------------------------------------------------------------------- */
typedef struct {
  char key[EW_WF_KEY_MAX];
  double from, to;
  double step; /* > 0; 0 when the range was given as FROM:TO only */
} ew_wf_range;

/* Parse "KEY=FROM:TO:STEP" (need_step 1) or "KEY=FROM:TO[:STEP]" (need_step 0).  FROM > TO
 * runs downwards; STEP is a positive magnitude.  EW_ERR_USAGE naming opt_name. */
ew_status ew_wf_range_parse(const char *spec, int need_step, const char *opt_name,
                            ew_wf_range *out, ew_error *err);
/* Number of values FROM, FROM ± STEP, …, TO inclusive: the end is included when it lies within
 * 1e-9 steps of a grid value, so 4:12:0.1 has 81 values despite rounding. */
size_t ew_wf_range_count(const ew_wf_range *r);
/* Value i: FROM ± i·STEP, computed from i (not accumulated), the last one exactly TO. */
double ew_wf_range_value(const ew_wf_range *r, size_t i);

/* ---- quantities: "9.0um", "1.548eV", "154meV", "800nm", "9µm" ------------------------- */
typedef struct {
  double value;      /* as written */
  int is_wavelength; /* 1: nm/um/µm, 0: eV/meV */
  double eV;         /* energy (for a wavelength: hc/λ) */
  double nm;         /* wavelength (for an energy: hc/E) */
  double scale;      /* the unit in eV or nm (1e-3 for meV, 1e3 for um) */
} ew_wf_quantity;

/* Parse a number followed by a unit (eV, meV, nm, um, µm, μm), spaces allowed between them.
 * allow_zero: a tolerance may be 0; a target must be > 0.  EW_ERR_USAGE naming opt_name. */
ew_status ew_wf_quantity_parse(const char *text, int allow_zero, const char *opt_name,
                               ew_wf_quantity *out, ew_error *err);

/* ---- sweeps ---------------------------------------------------------------------------- */
typedef struct {
  int threads;            /* 0: every core (omp_get_num_procs) */
  size_t shard_k, shard_n;/* compute part K (1-based) of N contiguous parts; N = 0 or 1: all */
  int header;             /* CSV header: 1 always, 0 never, -1 (default) part 1 only */
  size_t min_levels;      /* columns for at least this many levels per band (--levels) */
  /* called (serialised) after each point; may be NULL */
  void (*progress)(void *ctx, size_t done, size_t total);
  void *progress_ctx;
  /* when not NULL: receives the columns and every row of this part, in point order (for
   * pictures); release with ew_wf_table_free.  Left empty when the sweep fails. */
  struct ew_wf_table *table;
} ew_wf_sweep_opt;

/* A sweep held in memory: the CSV's columns and rows (NaN where the CSV cell is empty). */
typedef struct ew_wf_table {
  char stack[512];     /* the stack file's name as given */
  size_t nkeys;        /* the first nkeys columns are the varied keys */
  size_t ncol, nrows;
  char (*names)[64];   /* [ncol] column names as in the CSV header */
  double *v;           /* [nrows × ncol], row-major */
} ew_wf_table;
void ew_wf_table_free(ew_wf_table *t); /* frees the contents, keeps t; NULL is a no-op */

void ew_wf_sweep_opt_default(ew_wf_sweep_opt *o);

/* Sweep one or two ranges (outer loop the first) and write CSV to csv and/or JSON to json
 * (either may be NULL).  Columns: the varied keys, then every level (e1_eV, …, hh1_eV, …,
 * lh1_eV, …) and every main line (intersubband NAME_eV, NAME_um, NAME_f; interband NAME_eV,
 * NAME_nm, NAME_overlap).  The column set is fixed before any row is written, identically
 * in every shard: the levels bound on a fixed sub-grid of the sweep (up to 9 evenly spaced
 * values per axis, both ends included; all values of an axis with at most 9), raised to
 * min_levels per band; interband columns e_n–h_n for n up to the smaller of the two
 * bands' level columns (≤ EW_WF_INTERBAND_MAX).  A point with more bound levels than the
 * columns hold fails the sweep (EW_ERR_USAGE, the message names the point and the --levels
 * to use).  Missing values (a level not bound at that point) are empty (CSV) or null
 * (JSON).  Part K of N holds the points [(K−1)·P/N, K·P/N) in order, so the parts
 * concatenate byte for byte to the whole sweep's CSV.  Rows are written in point order
 * whatever the thread count; on an error the streams hold partial output (the CLI buffers
 * them and writes nothing). */
ew_status ew_wf_sweep(const ew_wf_model *m, const ew_wf_range *ranges, size_t nranges,
                      const ew_wf_sweep_opt *o, FILE *csv, FILE *json, ew_error *err);

/* ---- output sets and pictures --------------------------------------------------------- */
#define EW_WF_PATH_MAX 1024
#define EW_WF_SET_MAX 4

/* Files written under temporary names in their target's directory (".epiwell-PID-K-NAME",
 * so the extension is kept) and renamed into place together by ew_wf_outset_commit: on an
 * error none of them appears and the previous files stay intact. */
typedef struct {
  size_t n;
  char final_path[EW_WF_SET_MAX][EW_WF_PATH_MAX];
  char tmp_path[EW_WF_SET_MAX][EW_WF_PATH_MAX];
} ew_wf_outset;

void ew_wf_outset_init(ew_wf_outset *s);
/* Register path; *tmp receives the temporary name to write.  EW_ERR_IO (naming opt_name)
 * when the name is too long or the set is full. */
ew_status ew_wf_outset_add(ew_wf_outset *s, const char *path, const char *opt_name,
                           const char **tmp, ew_error *err);
/* ok: rename every temporary file into place (EW_ERR_IO naming the file that failed; the
 * temporaries not yet renamed are removed); !ok: remove the temporaries.  Idempotent. */
ew_status ew_wf_outset_commit(ew_wf_outset *s, int ok, ew_error *err);

/* EW_OK when a data file (CSV) can be written at path: its directory exists and is
 * writable and path is not a directory.  EW_ERR_IO naming opt_name.  Run before any work. */
ew_status ew_wf_check_file_path(const char *path, const char *opt_name, ew_error *err);

/* The companion picture names of FILE.ext: FILE-SUFFIX.ext (suffix e.g. "interband").
 * EW_ERR_USAGE (naming opt_name) when path does not end in .svg or .png or is too long. */
ew_status ew_wf_plot_companion(const char *path, const char *suffix, const char *opt_name,
                               char *out, size_t size, ew_error *err);

/* Pictures of a sweep (the suffixes of EW_WF_PLOT_SUFFIX):
 *   one key:  FILE                  every level (e1, e2, …, hh1, …, lh1, …; eV) against it;
 *             FILE-interband.ext    the interband main lines' wavelengths (nm);
 *             FILE-intersubband.ext the intersubband main lines' wavelengths (µm);
 *   two keys: the same three files with the first key on the x axis and one curve per value
 *             of the second key (at most EW_WF_PLOT_MAX_CURVES values, evenly spaced, both
 *             ends included), labelled KEY=VALUE: FILE e1 (eV), FILE-interband e1-hh1 (nm),
 *             FILE-intersubband e1-e2 (µm).
 * A level not bound at a point is a gap.  A chart without any column (no intersubband line
 * in the sweep) is not written: written[k] is 0 for it.  Every file goes into set (written
 * under a temporary name; the caller commits the set). */
#define EW_WF_PLOT_MAX_CURVES 12
#define EW_WF_PLOT_FILES 3
extern const char *const EW_WF_PLOT_SUFFIX[EW_WF_PLOT_FILES]; /* "", "interband", "intersubband" */
ew_status ew_wf_sweep_plot(const ew_wf_table *t, const char *path, ew_wf_outset *set,
                           int written[EW_WF_PLOT_FILES], ew_error *err);

/* ---- absorption spectra of one solved stack (epiwell solve --spectra) -------------------- */
#define EW_WF_SPECTRUM_POINTS 2001
#define EW_WF_DEFAULT_ANGLE_DEG 45.0 /* internal angle of a 45° polished facet */
/* GaAs near 10 µm, from memory (the GaAs refractive index falls from ~3.6 at 0.9 µm to ~3.3
 * in the mid-infrared): the intersubband default. */
#define EW_WF_DEFAULT_INDEX 3.3
#define EW_WF_PEAK_FRACTION 0.05 /* a peak is a local maximum above 5 % of the maximum */

/* Two uniform grids of EW_WF_SPECTRUM_POINTS energies, both written in one CSV on their
 * union (sorted; an energy both grids share appears once):
 *   interband:    from 20 meV below the lowest interband pl_peak_eV to 100 meV above the
 *                 highest listed interband line (ew_interband_absorption, relative units);
 *   intersubband: from 0 to 1.5 × the highest e1→ej line (ew_intersubband_absorption: the
 *                 fraction absorbed per pass for the stack's sheet_density and linewidth).
 * Both spectra are evaluated at every row.  A spectrum that cannot be computed (no
 * interband line; no sheet_density in the stack, or no e1→ej line) has no grid and an empty
 * column, and note[] says why. */
typedef struct {
  size_t n;                 /* rows (union of the grids present) */
  double *E_eV;             /* [n] ascending */
  double *interband_rel;    /* [n] or NULL when absent */
  double *intersubband;     /* [n] or NULL when absent */
  unsigned char *grid;      /* [n] bit 1: a point of the interband grid, bit 2: intersubband */
  double lo_eV[2], hi_eV[2];/* the grids: [0] interband, [1] intersubband (NaN when absent) */
  double theta_deg, n_refr, sheet_density_cm2, linewidth_meV;
  char note[2][720];        /* why a spectrum is absent; "" when present */
} ew_wf_spectra;

/* theta_deg in [0, 90), n_refr > 0 (EW_ERR_USAGE naming --angle / --index). */
ew_status ew_wf_spectra_compute(const ew_result *r, double theta_deg, double n_refr,
                                ew_wf_spectra *out, ew_error *err);
void ew_wf_spectra_free(ew_wf_spectra *s); /* frees the contents; NULL is a no-op */
/* CSV "E_eV,interband_rel,intersubband_fraction", one row per energy, absent values empty. */
void ew_wf_spectra_write_csv(const ew_wf_spectra *s, FILE *out);

typedef struct {
  double E_eV, value;
} ew_wf_peak;
/* Local maxima of spectrum which (0 interband, 1 intersubband) on its own grid above
 * EW_WF_PEAK_FRACTION of its maximum, ascending in energy; returns how many (≤ cap written). */
size_t ew_wf_spectra_peaks(const ew_wf_spectra *s, int which, ew_wf_peak *out, size_t cap);
/* Terminal summary of the peaks (energy, wavelength, value) of both spectra. */
void ew_wf_spectra_print_peaks(const ew_wf_spectra *s, FILE *out);
/* Pictures: FILE the interband spectrum against E (eV); FILE-intersubband.ext the
 * intersubband one against E (meV), when present (written[1]).  Into set, as above. */
ew_status ew_wf_spectra_plot(const ew_wf_spectra *s, const char *path, ew_wf_outset *set,
                             int written[2], ew_error *err);

/* ---- inverse matching ------------------------------------------------------------------ */
typedef struct {
  double value[2];        /* varied value(s) */
  double energy_eV[2];    /* line energy there */
  double wavelength_nm[2];
  double residual_eV[2];  /* line − target at the solution */
  /* 1D with a tolerance: values at target −/+ tolerance (NaN when not reached in the range)
   * and the uncertainty = half their distance (NaN when one is missing) */
  double value_minus, value_plus, uncertainty;
} ew_wf_solution;

typedef struct {
  size_t nkeys;            /* 1 or 2 */
  char key[2][EW_WF_KEY_MAX];
  char line[2][40];
  ew_wf_quantity target[2];
  int have_tolerance;
  ew_wf_quantity tolerance;
  size_t n;                /* solutions found */
  ew_wf_solution *sol;
  /* what the range reaches: line energy min/max over the samples (1D), NaN if never bound */
  double reached_min_eV[2], reached_max_eV[2];
  char message[512];       /* "no value … reaches …" when n == 0, otherwise empty */
} ew_wf_match_result;

typedef struct {
  int threads;     /* 0: every core */
  size_t samples;  /* samples per range; 0: from STEP if given, else 41 (1D) / 11 (2D) */
} ew_wf_match_opt;

/* Every value of ranges[0] (1D; nranges = 1, nlines = 1) or pair of values (2D; nranges =
 * nlines = 2) that puts the line(s) at the target(s).  Lines are "A-B" with A, B level labels
 * of one band (intersubband, |E_A − E_B|) or an electron and a hole level (interband,
 * E_e − E_h).  1D: sampling, bracketing of sign changes (a line that becomes bound inside the
 * range is bracketed from the point where it appears, located by bisection) and Brent's
 * method to 1e-6 relative in the value.  2D: a coarse grid search, then Newton's method with a
 * central finite-difference Jacobian from the best grid cells, clamped to the box.
 * tolerance (may be NULL, 1D only): also solve at target ± tolerance.  No solution is not an
 * error: n = 0 and message says what range of the line the range reaches. */
ew_status ew_wf_match(const ew_wf_model *m, const ew_wf_range *ranges, size_t nranges,
                      const char *const *lines, const ew_wf_quantity *targets, size_t nlines,
                      const ew_wf_quantity *tolerance, const ew_wf_match_opt *o,
                      ew_wf_match_result *out, ew_error *err);
void ew_wf_match_result_free(ew_wf_match_result *r); /* frees sol; NULL is a no-op */
void ew_wf_match_print(const ew_wf_match_result *r, FILE *out);      /* table */
void ew_wf_match_print_json(const ew_wf_match_result *r, FILE *out); /* one JSON object */

/* Energy of line "A-B" in a result (see ew_wf_match); NaN when a level is not bound.
 * EW_ERR_USAGE for a malformed name (checked without a result when res is NULL). */
ew_status ew_wf_line_energy(const ew_result *res, const char *line, double *energy_eV,
                            ew_error *err);

/* ---- tolerances ------------------------------------------------------------------------ */
typedef struct {
  char name[40];   /* "e1", "hh2" (levels) or "e1-e2", "e1-hh1" (main lines) */
  int is_line;
  int interband;
  double energy_eV; /* nominal */
  double wavelength_nm;
} ew_wf_item;

typedef struct {
  size_t layer;        /* index in the stack */
  char name[64], material[64];
  double thickness_nm;
  double ml_nm;        /* one monolayer: a/2 of the layer's material */
  int ml_default;      /* 1 when the material has no lattice constant: EW_WF_DEFAULT_ML_NM */
  int has_x;           /* alloy: composition rows present */
  double x, dx;
  double fd_dt_nm, fd_dx; /* steps of the central finite differences */
  /* per item (arrays of n_items), eV; NaN when the item is not bound at that variation */
  double *ml_minus, *ml_plus;   /* E(t − ML) − E(t), E(t + ML) − E(t) */
  double *dx_minus, *dx_plus;   /* E(x − dx) − E(x), E(x + dx) − E(x) */
  double *dEdt_hf, *dEdt_fd;    /* eV/nm: Hellmann–Feynman, central difference */
  double *dEdx_hf, *dEdx_fd;    /* eV per unit x */
} ew_wf_tol_layer;

typedef struct {
  char stack[512];
  size_t n_items;
  ew_wf_item *items;   /* levels first, then main lines */
  size_t n_layers;
  ew_wf_tol_layer *layers;
} ew_wf_tolerance;

/* Shifts of every level and main line for ±1 monolayer of every layer and ±dx of every alloy
 * layer's composition, and dE/dt, dE/dx by Hellmann–Feynman and by central differences. */
ew_status ew_wf_tolerance_run(const ew_wf_model *m, double dx, int threads,
                              ew_wf_tolerance **out, ew_error *err);
void ew_wf_tolerance_free(ew_wf_tolerance *t);
void ew_wf_tolerance_print(const ew_wf_tolerance *t, FILE *out);
void ew_wf_tolerance_print_json(const ew_wf_tolerance *t, FILE *out);

/* Hellmann–Feynman derivatives of state s of a result (absolute energy scale, as reported):
 * dE/dt of layer k's thickness (eV/nm; every later interface and the outer wall move) and
 * dE/dx of layer k's composition given the layer's band parameters lo, hi at two
 * compositions span apart (eV per unit x); the formulas and their derivation are in
 * workflow.c.  Kane non-parabolic electrons are handled (implicit differentiation of
 * E = λ(H(E))).  NaN when the stack has an applied field or a graded layer (the potential is
 * then not constant in each layer). */
double ew_wf_hf_dthickness(const ew_result *res, size_t s, size_t k);
double ew_wf_hf_dparam(const ew_result *res, size_t s, size_t k, const ew_bands *lo,
                       const ew_bands *hi, double span);

/* Monolayer ladder: main lines at the nominal width of layer and at ±1, ±2 monolayers. */
typedef struct {
  size_t layer;
  double ml_nm;
  int ml_default;
  double thickness_nm[5];  /* offsets −2 … +2 monolayers */
  size_t n_items;
  ew_wf_item *items;       /* main lines at nominal */
  double *energy_eV;       /* [5 × n_items], NaN when not bound */
} ew_wf_ladder;

ew_status ew_wf_ladder_run(const ew_wf_model *m, const char *layer, int threads,
                           ew_wf_ladder **out, ew_error *err);
void ew_wf_ladder_free(ew_wf_ladder *l);
void ew_wf_ladder_print(const ew_wf_ladder *l, const ew_stack *st, FILE *out);
void ew_wf_ladder_print_json(const ew_wf_ladder *l, const ew_stack *st, FILE *out);

/* ---- threads and benchmark ------------------------------------------------------------- */
/* Threads a request resolves to (0: every core; 1 when built without OpenMP). */
int ew_wf_threads(int requested);
/* 1 when built with OpenMP. */
int ew_wf_have_openmp(void);

typedef struct {
  size_t points;          /* well widths solved per run */
  int threads;            /* threads of the parallel run */
  double seconds_1, seconds_n;  /* wall time with 1 and with `threads` threads */
  double per_s_1, per_s_n;      /* single-well solves per second */
} ew_wf_bench_result;

/* Sweep key over points values of [from, to] (CSV written to a null sink, everything else as
 * `epiwell sweep`) with 1 thread and with `threads`, timing both (wall clock). */
ew_status ew_wf_benchmark(const ew_wf_model *m, const char *key, double from, double to,
                          size_t points, int threads, ew_wf_bench_result *out, ew_error *err);

#endif
