/* cli.c — the epiwell command: a thin layer that parses options, calls the library and maps
 * status codes to exit codes.  The only place that decides what goes to stdout/stderr.  Uses
 * the public API only (epiwell.h; tests/public_includes.sh checks it).  Each command is an
 * options struct and its steps: parse, check (before any work), run, write. */
#include <errno.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h> /* strcasecmp */

#include "cli_common.h"
#include "epiwell.h"

static const char usage[] =
    "usage:\n"
    "  epiwell solve STACK [--json] [-o DIR] [--gzip] [--grid-step NM] [--lines K|all]\n"
    "                      [--no-estimate] [--plot FILE.svg|FILE.png] [--plot-levels N|all]\n"
    "                      [--report DIR|FILE.html]\n"
    "                      [--spectra FILE.csv] [--spectra-plot FILE.svg|FILE.png]\n"
    "                      [--angle DEG] [--index N] [--hole-dos parabolic|kp|kp-axial]\n"
    "    --hole-dos kp: hole subband densities of states (doped stacks) and hole DOS masses\n"
    "      from the 4-band k.p dispersion ([100] and [110] averaged; kp-axial: axial model)\n"
    "    --spectra: absorption spectra, columns E_eV,interband_rel,intersubband_fraction,\n"
    "      intersubband_continuum_fraction on the union of two 2001-point grids (interband:\n"
    "      20 meV below the lowest exciton peak to 100 meV above the highest interband line;\n"
    "      intersubband: 0 to 1.5 x the higher of the highest e1-ej line and the barrier top\n"
    "      less e1; bound lines and e1 into the continuum in their own columns);\n"
    "      intersubband needs the stack's sheet_density (else empty);\n"
    "      --angle internal angle to the growth axis (default 45), --index refractive index\n"
    "      (default 3.3, GaAs near 10 um); --spectra-plot FILE: interband chart, and\n"
    "      FILE-intersubband.EXT the intersubband one; peaks are listed after the table\n"
    "  epiwell materials [NAME [--x X] [--y Y] [--temperature K] [--substrate SUB\n"
    "                    [--substrate-x X] [--lattice-match] [--match-gap EV]]]\n"
    "  epiwell sweep STACK --vary KEY=FROM:TO:STEP [--vary ...] [--csv FILE] [--json]\n"
    "                      [--threads N] [--shard K/N|auto] [--no-header] [--levels N]\n"
    "                      [--plot FILE.svg|FILE.png]  (epiwell sweep --help: the pictures)\n"
    "  epiwell match STACK --vary KEY=FROM:TO --line LINE --target VALUE [--tolerance VALUE]\n"
    "                      [--samples N] [--json] [--threads N]  (two unknowns: each twice)\n"
    "  epiwell tolerance STACK [--dx DX] [--rate PCT] [--ladder LAYER] [--json] [--threads N]\n"
    "  epiwell merge PART... [--vary KEY=FROM:TO:STEP ...] [-o FILE]  (epiwell merge --help)\n"
    "  epiwell dispersion STACK [--model 4band|6band] [--direction 100|110] [--kmax K]\n"
    "                     [--points N] [--csv FILE] [--json] [--plot FILE.svg|.png]\n"
    "  epiwell minibands STACK [--points N] [--grid-step NM] [--csv FILE] [--json]\n"
    "                    [--plot FILE.svg|.png]  (the stack is one superlattice period)\n"
    "  epiwell gain STACK --density FROM:TO:STEP [--model 4band|6band] [--linewidth MEV]\n"
    "               [--lineshape sech|lorentzian] [--index N_R] [--energy FROM:TO:STEP]\n"
    "               [--csv FILE] [--json] [--plot FILE.svg|.png]  (epiwell gain --help)\n"
    "  epiwell hole-absorption STACK --density P_CM2 [--model 4band|6band] [--linewidth MEV]\n"
    "               [--energy FROM:TO:STEP] [--csv FILE] [--json] [--plot FILE.svg|.png]\n"
    "    (sweep, match, tolerance also take --grid-step NM and --no-estimate)\n"
    "  epiwell --version | --help\n"
    "exit codes: 0 ok, 1 usage, 2 stack-file error, 3 catalogue error, 4 out of memory or\n"
    "too large, 5 file I/O error, 6 numerical failure, 7 cancelled (SIGINT or SIGTERM)\n";

static int report(const ew_error *err) { return ew_cli_report(err); }
static int parse_num(const char *s, double *v) { return ew_cli_parse_num(s, v); }

/* ---- materials ------------------------------------------------------------------------- */
typedef struct {
  const char *name, *substrate;
  double x, y, T, sx, gap;
  int match, given_x, given_sx;
} mat_opt;

/* One option of `materials` at argv[*i] (its value consumed); 0 or a usage exit code. */
static int mat_option(int argc, char **argv, int *i, mat_opt *o) {
  const char *a = argv[*i];
  if (!strcmp(a, "--x") || !strcmp(a, "--y") || !strcmp(a, "--temperature") ||
      !strcmp(a, "--substrate-x")) {
    if (*i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
    double *dst = !strcmp(a, "--x") ? &o->x : !strcmp(a, "--y") ? &o->y
                  : !strcmp(a, "--temperature") ? &o->T : &o->sx;
    if (!parse_num(argv[*i + 1], dst)) return ew_cli_bad(usage, "not a number: %s", argv[*i + 1]);
    if (dst == &o->x || dst == &o->y) o->given_x = 1;
    if (dst == &o->sx) o->given_sx = 1;
    ++*i;
  } else if (!strcmp(a, "--substrate")) {
    if (*i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
    o->substrate = argv[++*i];
  } else if (!strcmp(a, "--lattice-match")) {
    o->match = 1;
    if (!(o->gap > 0)) o->gap = NAN; /* ternaries: the composition alone */
  } else if (!strcmp(a, "--match-gap")) {
    if (*i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
    if (!parse_num(argv[*i + 1], &o->gap) || o->gap <= 0)
      return ew_cli_bad(usage, "--match-gap wants a gap in eV, got %s", argv[*i + 1]);
    o->match = 1;
    ++*i;
  } else if (a[0] == '-') {
    return ew_cli_bad(usage, "unknown option %s", a);
  } else if (!o->name) {
    o->name = a;
  } else {
    return ew_cli_bad(usage, "unexpected argument %s", a);
  }
  return 0;
}

static int mat_parse(int argc, char **argv, mat_opt *o) {
  memset(o, 0, sizeof *o);
  o->T = 300.0;
  for (int i = 0; i < argc; i++) {
    int rc = mat_option(argc, argv, &i, o);
    if (rc) return rc;
  }
  /* option values are checked here so that a bad one is a usage error naming the option */
  if (o->x < 0 || o->x > 1) return ew_cli_bad(usage, "--x wants a composition in [0, 1]%s", "");
  if (o->y < 0 || o->y > 1) return ew_cli_bad(usage, "--y wants a composition in [0, 1]%s", "");
  if (o->sx < 0 || o->sx > 1)
    return ew_cli_bad(usage, "--substrate-x wants a composition in [0, 1]%s", "");
  if (o->T < 0 || o->T > 1500)
    return ew_cli_bad(usage, "--temperature wants kelvin in [0, 1500]%s", "");
  return 0;
}

/* The composition flags must fit the materials named (the stack file's rules): an alloy
 * needs its x, a binary takes none. */
static int mat_check(const ew_catalogue *cat, const mat_opt *o) {
  const char *why = NULL, *what = NULL;
  if (o->substrate && !o->given_sx && ew_material_is_alloy(cat, o->substrate) > 0)
    why = "is an alloy: give its composition with --substrate-x", what = o->substrate;
  else if (o->substrate && o->given_sx && ew_material_is_alloy(cat, o->substrate) == 0)
    why = "is a binary: it takes no --substrate-x", what = o->substrate;
  else if (o->name && o->given_x && ew_material_is_alloy(cat, o->name) == 0)
    why = "is a binary: it takes no --x or --y", what = o->name;
  if (why)
    return ew_cli_bad(usage, "%s%s %s", what == o->substrate ? "--substrate " : "", what, why);
  if (o->match && (!o->name || !o->substrate))
    return ew_cli_bad(usage, "%s",
                      "--lattice-match and --match-gap need a material NAME and --substrate");
  return 0;
}

static int mat_run(const ew_catalogue *cat, mat_opt *o) {
  ew_error err = {0};
  double a_sub = 0.0;
  if (o->substrate && ew_material_lattice_nm(cat, o->substrate, o->sx, 0.0, &a_sub, &err) != EW_OK)
    return report(&err);
  if (o->match) {
    /* the composition lattice-matched to the substrate with the requested Γ gap at T */
    if (ew_material_lattice_match(cat, o->name, o->substrate, o->sx, o->gap, o->T, &o->x,
                                  &o->y, &err) != EW_OK)
      return report(&err);
    if (isnan(o->gap))
      printf("%s lattice-matched to %s: x = %.5f\n\n", o->name, o->substrate, o->x);
    else
      printf("%s lattice-matched to %s with a Γ gap of %g eV at %g K: x = %.5f, y = %.5f\n\n",
             o->name, o->substrate, o->gap, o->T, o->x, o->y);
  }
  if (!o->name) {
    ew_catalogue_write(cat, stdout, NULL);
    return 0;
  }
  if (ew_material_write(cat, o->name, o->x, o->y, o->T, a_sub, stdout, &err) != EW_OK)
    return report(&err);
  return 0;
}

static int cmd_materials(int argc, char **argv) {
  mat_opt o;
  int rc = mat_parse(argc, argv, &o);
  if (rc) return rc;
  ew_catalogue *cat = NULL;
  ew_error err = {0};
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK) return report(&err);
  rc = mat_check(cat, &o);
  if (!rc) rc = mat_run(cat, &o);
  ew_catalogue_free(cat);
  /* a name or composition the catalogue refuses came from the command line, not a file */
  return rc == EW_ERR_INPUT ? EW_ERR_USAGE : rc;
}

/* ---- solve ----------------------------------------------------------------------------- */
typedef struct {
  const char *path, *outdir, *plot, *repdir;
  const char *spectra, *spectra_plot, *angle_opt, *index_opt;
  double angle, index;
  int json, gzip;
  int plot_levels; /* --plot-levels: levels per band in the band diagram, 0 = all */
  ew_options opt;
} solve_opt;

/* The spectra options' values; 0 or a usage exit code. */
static int solve_spectra_value(const char *a, const char *v, solve_opt *o) {
  if (!strcmp(a, "--spectra")) {
    if (!v[0]) return ew_cli_bad(usage, "%s", "--spectra wants a file name, got an empty one");
    o->spectra = v;
  } else if (!strcmp(a, "--spectra-plot")) {
    if (!ew_plot_format(v))
      return ew_cli_bad(usage, "--spectra-plot wants a file name ending in .svg or .png, got %s",
                        v);
    o->spectra_plot = v;
  } else if (!strcmp(a, "--angle")) {
    if (!parse_num(v, &o->angle) || o->angle < 0 || o->angle >= 90)
      return ew_cli_bad(usage, "--angle wants the internal angle to the growth axis in degrees, "
                       "in [0, 90), got %s", v);
    o->angle_opt = a;
  } else {
    if (!parse_num(v, &o->index) || o->index <= 0 || o->index > 100)
      return ew_cli_bad(usage, "--index wants a refractive index in (0, 100], got %s", v);
    o->index_opt = a;
  }
  return 0;
}

/* The value of option a (one of those that take one); 0 or a usage exit code. */
static int solve_value(const char *a, const char *v, solve_opt *o) {
  if (!strcmp(a, "--spectra") || !strcmp(a, "--spectra-plot") || !strcmp(a, "--angle") ||
      !strcmp(a, "--index"))
    return solve_spectra_value(a, v, o);
  if (!strcmp(a, "-o")) {
    if (!v[0]) /* robustness */
      return ew_cli_bad(usage, "%s", "-o wants a directory name, got an empty one");
    o->outdir = v;
  } else if (!strcmp(a, "--plot")) {
    if (!ew_plot_format(v))
      return ew_cli_bad(usage, "--plot wants a file name ending in .svg or .png, got %s", v);
    o->plot = v;
  } else if (!strcmp(a, "--report")) {
    o->repdir = v;
  } else if (!strcmp(a, "--hole-dos")) {
    int k = EW_HOLE_DOS_PARABOLIC;
    while (ew_hole_dos_name(k) && strcmp(ew_hole_dos_name(k), v)) k++;
    if (!ew_hole_dos_name(k))
      return ew_cli_bad(usage, "--hole-dos wants parabolic, kp or kp-axial, got %s", v);
    o->opt.hole_dos = k;
  } else if (!strcmp(a, "--plot-levels")) {
    double k = 0;
    if (strcmp(v, "all") && (!parse_num(v, &k) || k < 1 || k > 1e6 || k != floor(k)))
      return ew_cli_bad(usage, "--plot-levels wants a whole number >= 1 or 'all', got %s", v);
    o->plot_levels = (int)k;
  } else if (!strcmp(a, "--grid-step")) {
    if (!parse_num(v, &o->opt.grid_step_nm) || o->opt.grid_step_nm <= 0 || o->opt.grid_step_nm > 1)
      return ew_cli_bad(usage, "--grid-step wants a step in nm in (0, 1], got %s", v);
  } else if (!strcmp(v, "all")) { /* --lines: every pair, and the weak lines listed too */
    o->opt.lowest_levels = 0;
    o->opt.line_min_strength = 0.0;
  } else {
    double k;
    if (!parse_num(v, &k) || k < 1 || k > 1e6 || k != floor(k))
      return ew_cli_bad(usage, "--lines wants a whole number >= 1 or 'all', got %s", v);
    o->opt.lowest_levels = (int)k;
  }
  return 0;
}

static int solve_parse(int argc, char **argv, solve_opt *o) {
  memset(o, 0, sizeof *o);
  o->angle = EW_WF_DEFAULT_ANGLE_DEG;
  o->index = EW_WF_DEFAULT_INDEX;
  o->gzip = -1;
  o->plot_levels = EW_PLOT_LEVELS_DEFAULT;
  ew_options_default(&o->opt);
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    int rc = 0;
    if (!strcmp(a, "--json")) {
      o->json = 1;
    } else if (!strcmp(a, "--gzip")) {
      o->gzip = 1;
    } else if (!strcmp(a, "--no-estimate")) {
      o->opt.error_estimate = 0;
    } else if (!strcmp(a, "-o") || !strcmp(a, "--grid-step") || !strcmp(a, "--lines") ||
               !strcmp(a, "--plot") || !strcmp(a, "--plot-levels") || !strcmp(a, "--report") ||
               !strcmp(a, "--hole-dos") ||
               !strcmp(a, "--spectra") ||
               !strcmp(a, "--spectra-plot") || !strcmp(a, "--angle") || !strcmp(a, "--index")) {
      if (i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
      rc = solve_value(a, argv[++i], o);
    } else if (a[0] == '-') {
      rc = ew_cli_bad(usage, "unknown option %s", a);
    } else if (!o->path) {
      o->path = a;
    } else {
      rc = ew_cli_bad(usage, "unexpected argument %s", a);
    }
    if (rc) return rc;
  }
  if (!o->path) return ew_cli_bad(usage, "%s", "solve needs a stack file");
  if ((o->angle_opt || o->index_opt) && !o->spectra && !o->spectra_plot)
    return ew_cli_bad(usage, "%s needs --spectra or --spectra-plot",
                      o->angle_opt ? o->angle_opt : o->index_opt);
  return 0;
}

/* Unwritable outputs (directories, picture files) fail before any work is done. */
static int solve_check_outputs(const solve_opt *o) {
  ew_error err = {0};
  if (o->outdir && ew_output_dir_check(o->outdir, &err) != EW_OK) return report(&err);
  if (o->plot && ew_plot_path_check(o->plot, &err) != EW_OK) return report(&err);
  size_t rl = o->repdir ? strlen(o->repdir) : 0; /* FILE.html: the page (report.c) */
  if (rl > 5 && !strcasecmp(o->repdir + rl - 5, ".html")) {
    if (ew_data_path_check(o->repdir, "--report", &err) != EW_OK) return report(&err);
  } else if (o->repdir && ew_output_dir_check(o->repdir, &err) != EW_OK) {
    return report(&err);
  }
  if (o->spectra && ew_data_path_check(o->spectra, "--spectra", &err) != EW_OK) return report(&err);
  for (int k = 0; o->spectra_plot && k < 2; k++) {
    char pp[EW_CLI_PATH_MAX];
    if (ew_plot_companion_name(o->spectra_plot, k ? "intersubband" : "", "--spectra-plot", pp,
                               sizeof pp, &err) != EW_OK ||
        ew_plot_path_check(pp, &err) != EW_OK) {
      ew_cli_prefix(&err, "--spectra-plot");
      return report(&err);
    }
  }
  return 0;
}

/* Staged names are the target's directory plus a private staging directory. */
#define SOLVE_STAGED_MAX (EW_CLI_PATH_MAX + 512)

/* What one solve holds until it is written: the results, and every output staged in one
 * set, committed together only when all of them were written. */
typedef struct {
  ew_catalogue *cat;
  ew_stack *st;
  ew_result *res;
  ew_spectra *sp; /* NULL unless --spectra or --spectra-plot */
  int sp_written[2];
  ew_output_set *set;
  char w_plot[SOLVE_STAGED_MAX], w_rep[SOLVE_STAGED_MAX], w_spectra[SOLVE_STAGED_MAX];
  char w_splot[SOLVE_STAGED_MAX], w_out[SOLVE_STAGED_MAX];
} solve_job;

/* Stage every output before the work: -o DIR is locked from here on (a second run on it
 * fails now, not after its solve), and every target is known to be writable. */
static ew_status solve_stage(const solve_opt *o, solve_job *j, ew_error *err) {
  ew_status st = ew_output_set_create(&j->set, err);
  if (st == EW_OK && o->outdir)
    st = ew_output_set_dir(j->set, o->outdir, j->w_out, sizeof j->w_out, err);
  if (st == EW_OK && o->plot)
    st = ew_output_set_file(j->set, o->plot, 0, j->w_plot, sizeof j->w_plot, err);
  if (st == EW_OK && o->repdir) {
    /* FILE.html is the page itself; any other path a directory that receives report.html */
    size_t rl = strlen(o->repdir);
    int page = rl > 5 && !strcasecmp(o->repdir + rl - 5, ".html");
    char rp[EW_CLI_PATH_MAX + 16];
    snprintf(rp, sizeof rp, page ? "%.1024s" : "%.1024s/report.html", o->repdir);
    st = ew_output_set_file(j->set, rp, !page, j->w_rep, sizeof j->w_rep, err);
    if (st == EW_OK && !page) *strrchr(j->w_rep, '/') = '\0'; /* the writer takes the directory */
  }
  if (st == EW_OK && o->spectra)
    st = ew_output_set_file(j->set, o->spectra, 0, j->w_spectra, sizeof j->w_spectra, err);
  for (int k = 0; st == EW_OK && o->spectra_plot && k < 2; k++) {
    char pp[EW_CLI_PATH_MAX], w[SOLVE_STAGED_MAX];
    st = ew_plot_companion_name(o->spectra_plot, k ? "intersubband" : "", "--spectra-plot", pp,
                                sizeof pp, err);
    if (st == EW_OK) st = ew_output_set_file(j->set, pp, 0, k ? w : j->w_splot, sizeof w, err);
  }
  return st;
}

static ew_status solve_compute(const solve_opt *o, solve_job *j, ew_error *err) {
  ew_status st = ew_catalogue_load(NULL, &j->cat, err);
  if (st == EW_OK) st = ew_stack_read_file(o->path, j->cat, &j->st, err);
  if (st == EW_OK) st = ew_solve(j->st, &o->opt, &j->res, err);
  if (st == EW_OK && (o->spectra || o->spectra_plot))
    st = ew_spectra_compute(j->res, o->angle, o->index, &j->sp, err);
  return st;
}

/* Every output at its staged name, then all of them put in place at once. */
static ew_status solve_write_files(const solve_opt *o, solve_job *j, ew_error *err) {
  ew_status st = EW_OK;
  if (o->outdir) st = ew_output_set_write_csv(j->set, j->res, o->gzip, err);
  if (st == EW_OK && o->plot)
    st = ew_result_write_band_diagram_levels(j->res, j->w_plot, o->plot_levels, err);
  if (st == EW_OK && o->repdir) st = ew_result_write_report(j->res, j->cat, j->w_rep, err);
  if (st == EW_OK && j->sp)
    st = ew_spectra_stage_files(j->sp, o->spectra ? j->w_spectra : NULL,
                                o->spectra_plot ? j->w_splot : NULL, j->sp_written, err);
  if (st == EW_OK && j->sp) st = ew_spectra_commit_files(j->sp, 1, err);
  if (st != EW_OK) {
    ew_output_set_explain(j->set, err); /* name the targets, not the staged names */
    return st;
  }
  st = ew_output_set_commit(j->set, err);
  j->set = NULL;
  return st;
}

/* Notes on stderr, then the result on stdout; 0 or EW_ERR_IO. */
static int solve_print(const solve_opt *o, const solve_job *j) {
  for (int w = 0; w < 2 && j->sp; w++)
    if (ew_spectra_note(j->sp, w)[0]) fprintf(stderr, "epiwell: %s\n", ew_spectra_note(j->sp, w));
  if (o->spectra_plot && !j->sp_written[0])
    fprintf(stderr, "epiwell: --spectra-plot: no interband spectrum, %s not written\n",
            o->spectra_plot);
  ew_status st = o->json ? ew_result_write_json(j->res, stdout, NULL)
                         : ew_result_write_table(j->res, stdout, NULL);
  if (st == EW_OK && !o->json && j->sp) st = ew_spectra_write_peaks(j->sp, stdout, NULL);
  return st != EW_OK || fflush(stdout) != 0 ? EW_ERR_IO : 0;
}

static int cmd_solve(int argc, char **argv) {
  solve_opt o;
  int rc = solve_parse(argc, argv, &o);
  if (!rc) rc = solve_check_outputs(&o);
  if (rc) return rc;
  solve_job j;
  memset(&j, 0, sizeof j);
  ew_error err = {0};
  if (solve_stage(&o, &j, &err) != EW_OK || solve_compute(&o, &j, &err) != EW_OK ||
      solve_write_files(&o, &j, &err) != EW_OK)
    rc = report(&err);
  else
    rc = solve_print(&o, &j);
  ew_output_set_abort(j.set); /* nothing new appears after an error */
  ew_spectra_free(j.sp);      /* removes spectra temporaries not committed */
  ew_result_free(j.res);
  ew_stack_free(j.st);
  ew_catalogue_free(j.cat);
  return rc;
}

int main(int argc, char **argv) {
#ifdef __GLIBC__
  /* A solve allocates and frees the same large arrays many times (grids, pencils, SuperLU's
     factors): keep them in the heap instead of mapping and unmapping them each time, which
     costs a page fault per page (measured: 11 % of a single-well solve).  32 MB, glibc's own
     cap of its sliding threshold: with 256 MB the helper threads' arenas (helper_thread.h),
     whose heaps hold at most 64 MB, kept making and dropping heaps (Kane superlattice of the
     bench: 599k page faults instead of 217k, 9.6 s instead of 8.7 s; single wells, sweeps
     and doped stacks the same either way). */
  mallopt(M_MMAP_THRESHOLD, 32 * 1024 * 1024);
  mallopt(M_TRIM_THRESHOLD, 512 * 1024 * 1024);
#endif
  if (argc < 2) return ew_cli_bad(usage, "%s", "no command given");
  if (!strcmp(argv[1], "--version")) {
    printf("epiwell %s\n", EW_VERSION);
    return 0;
  }
  if (!strcmp(argv[1], "--help") || !strcmp(argv[1], "-h")) {
    fputs(usage, stdout);
    return 0;
  }
  if (!strcmp(argv[1], "solve") || !strcmp(argv[1], "materials"))
    for (int i = 2; i < argc; i++)
      if (!strcmp(argv[i], "--help") || !strcmp(argv[i], "-h")) { /* their usage is the main one */
        fputs(usage, stdout);
        return 0;
      }
  if (!strcmp(argv[1], "solve")) return cmd_solve(argc - 2, argv + 2);
  if (!strcmp(argv[1], "materials")) return cmd_materials(argc - 2, argv + 2);
  if (!strcmp(argv[1], "sweep")) return ew_cli_sweep(argc - 2, argv + 2);
  if (!strcmp(argv[1], "match")) return ew_cli_match(argc - 2, argv + 2);
  if (!strcmp(argv[1], "tolerance")) return ew_cli_tolerance(argc - 2, argv + 2);
  if (!strcmp(argv[1], "merge")) return ew_cli_merge(argc - 2, argv + 2);
  if (!strcmp(argv[1], "dispersion")) return ew_cli_dispersion(argc - 2, argv + 2);
  if (!strcmp(argv[1], "minibands")) return ew_cli_minibands(argc - 2, argv + 2);
  if (!strcmp(argv[1], "gain")) return ew_cli_gain(argc - 2, argv + 2);
  if (!strcmp(argv[1], "hole-absorption")) return ew_cli_hole_absorption(argc - 2, argv + 2);
  return ew_cli_bad(usage, "unknown command %s", argv[1]);
}
