/* cli.c — the epiwell command: a thin layer that parses options, calls the library and maps
 * status codes to exit codes.  The only place that decides what goes to stdout/stderr. */
#include <errno.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_common.h"
#include "epiwell.h"
#include "materials.h"
#include "output.h"
#include "plot.h"
#include "report.h"
#include "workflow.h" /* absorption spectra (solve --spectra) */

static const char usage[] =
    "usage:\n"
    "  epiwell solve STACK [--json] [-o DIR] [--gzip] [--grid-step NM] [--lines K|all]\n"
    "                      [--no-estimate] [--plot FILE.svg|FILE.png] [--report DIR]\n"
    "                      [--spectra FILE.csv] [--spectra-plot FILE.svg|FILE.png]\n"
    "                      [--angle DEG] [--index N]\n"
    "    --spectra: absorption spectra, columns E_eV,interband_rel,intersubband_fraction on\n"
    "      the union of two 2001-point grids (interband: 20 meV below the lowest exciton\n"
    "      peak to 100 meV above the highest interband line; intersubband: 0 to 1.5 x the\n"
    "      highest e1-ej line); intersubband needs the stack's sheet_density (else empty);\n"
    "      --angle internal angle to the growth axis (default 45), --index refractive index\n"
    "      (default 3.3, GaAs near 10 um); --spectra-plot FILE: interband chart, and\n"
    "      FILE-intersubband.EXT the intersubband one; peaks are listed after the table\n"
    "  epiwell materials [NAME [--x X] [--y Y] [--temperature K] [--substrate SUB\n"
    "                    [--substrate-x X] [--lattice-match] [--match-gap EV]]]\n"
    "  epiwell sweep STACK --vary KEY=FROM:TO:STEP [--vary ...] [--csv FILE] [--json]\n"
    "                      [--threads N] [--shard K/N] [--no-header] [--levels N]\n"
    "                      [--plot FILE.svg|FILE.png]  (epiwell sweep --help: the pictures)\n"
    "  epiwell match STACK --vary KEY=FROM:TO --line LINE --target VALUE [--tolerance VALUE]\n"
    "                      [--samples N] [--json] [--threads N]  (two unknowns: each twice)\n"
    "  epiwell tolerance STACK [--dx DX] [--ladder LAYER] [--json] [--threads N]\n"
    "    (sweep, match, tolerance also take --grid-step NM and --no-estimate)\n"
    "  epiwell --version | --help\n"
    "exit codes: 0 ok, 1 usage, 2 stack-file error, 3 catalogue error, 4 out of memory or\n"
    "too large, 5 file I/O error, 6 numerical failure\n";

static int report(const ew_error *err) { return ew_cli_report(err); }
static int parse_num(const char *s, double *v) { return ew_cli_parse_num(s, v); }

static int cmd_materials(int argc, char **argv) {
  const char *name = NULL, *substrate = NULL;
  double x = 0.0, y = 0.0, T = 300.0, sx = 0.0, gap = 0.0;
  int match = 0, given_x = 0, given_sx = 0;
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    if (!strcmp(a, "--x") || !strcmp(a, "--y") || !strcmp(a, "--temperature") ||
        !strcmp(a, "--substrate-x")) {
      if (i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
      double *dst = !strcmp(a, "--x") ? &x : !strcmp(a, "--y") ? &y
                    : !strcmp(a, "--temperature") ? &T : &sx;
      if (!parse_num(argv[i + 1], dst)) return ew_cli_bad(usage, "not a number: %s", argv[i + 1]);
      if (dst == &x || dst == &y) given_x = 1;
      if (dst == &sx) given_sx = 1;
      i++;
    } else if (!strcmp(a, "--substrate")) {
      if (i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
      substrate = argv[++i];
    } else if (!strcmp(a, "--lattice-match")) {
      match = 1;
      if (!(gap > 0)) gap = NAN; /* ternaries: the composition alone */
    } else if (!strcmp(a, "--match-gap")) {
      if (i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
      if (!parse_num(argv[i + 1], &gap) || gap <= 0)
        return ew_cli_bad(usage, "--match-gap wants a gap in eV, got %s", argv[i + 1]);
      match = 1;
      i++;
    } else if (a[0] == '-') {
      return ew_cli_bad(usage, "unknown option %s", a);
    } else if (!name) {
      name = a;
    } else {
      return ew_cli_bad(usage, "unexpected argument %s", a);
    }
  }
  /* option values are checked here so that a bad one is a usage error naming the option */
  if (x < 0 || x > 1) return ew_cli_bad(usage, "--x wants a composition in [0, 1]%s", "");
  if (y < 0 || y > 1) return ew_cli_bad(usage, "--y wants a composition in [0, 1]%s", "");
  if (sx < 0 || sx > 1) return ew_cli_bad(usage, "--substrate-x wants a composition in [0, 1]%s", "");
  if (T < 0 || T > 1500) return ew_cli_bad(usage, "--temperature wants kelvin in [0, 1500]%s", "");
  ew_catalogue *cat = NULL;
  ew_error err = {0};
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK) return report(&err);
  int rc = 0;
  double a_sub = 0.0;
  /* the stack file's rules: an alloy substrate needs its x, a binary takes none */
  /* The composition flags must fit the materials named: an alloy needs its x, a binary none. */
  const char *why = NULL, *what = NULL;
  if (substrate && !given_sx && ew_catalogue_is_alloy(cat, substrate) > 0)
    why = "is an alloy: give its composition with --substrate-x", what = substrate;
  else if (substrate && given_sx && ew_catalogue_is_alloy(cat, substrate) == 0)
    why = "is a binary: it takes no --substrate-x", what = substrate;
  else if (name && given_x && ew_catalogue_is_alloy(cat, name) == 0)
    why = "is a binary: it takes no --x or --y", what = name;
  if (why) {
    ew_catalogue_free(cat);
    return ew_cli_bad(usage, "%s%s %s", what == substrate ? "--substrate " : "", what, why);
  }
  if (match && (!name || !substrate)) {
    ew_catalogue_free(cat);
    return ew_cli_bad(usage, "%s", "--lattice-match and --match-gap need a material NAME and --substrate");
  }
  if (substrate && ew_lattice_nm(cat, substrate, sx, 0.0, &a_sub, &err) != EW_OK) {
    rc = report(&err);
  } else if (match) {
    /* the composition lattice-matched to the substrate with the requested Γ gap at T */
    if (ew_lattice_match(cat, name, substrate, sx, gap, T, &x, &y, &err) != EW_OK) {
      rc = report(&err);
    } else {
      if (isnan(gap))
        printf("%s lattice-matched to %s: x = %.5f\n\n", name, substrate, x);
      else
        printf("%s lattice-matched to %s with a Γ gap of %g eV at %g K: x = %.5f, y = %.5f\n\n",
               name, substrate, gap, T, x, y);
      if (ew_material_print_on(cat, name, x, y, T, a_sub, stdout, &err) != EW_OK) rc = report(&err);
    }
  } else if (!name) {
    ew_catalogue_print(cat, stdout);
  } else if (ew_material_print_on(cat, name, x, y, T, a_sub, stdout, &err) != EW_OK) {
    rc = report(&err);
  }
  ew_catalogue_free(cat);
  /* a name or composition the catalogue refuses came from the command line, not a file */
  return rc == EW_ERR_INPUT ? EW_ERR_USAGE : rc;
}

static int cmd_solve(int argc, char **argv) {
  const char *path = NULL, *outdir = NULL, *plot = NULL, *repdir = NULL;
  const char *spectra = NULL, *spectra_plot = NULL, *angle_opt = NULL, *index_opt = NULL;
  double angle = EW_WF_DEFAULT_ANGLE_DEG, index = EW_WF_DEFAULT_INDEX;
  int json = 0, gzip = -1;
  ew_options opt;
  ew_options_default(&opt);
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    if (!strcmp(a, "--json")) {
      json = 1;
    } else if (!strcmp(a, "--gzip")) {
      gzip = 1;
    } else if (!strcmp(a, "--no-estimate")) {
      opt.error_estimate = 0;
    } else if (!strcmp(a, "-o") || !strcmp(a, "--grid-step") || !strcmp(a, "--lines") ||
               !strcmp(a, "--plot") || !strcmp(a, "--report") || !strcmp(a, "--spectra") ||
               !strcmp(a, "--spectra-plot") || !strcmp(a, "--angle") || !strcmp(a, "--index")) {
      if (i + 1 >= argc) return ew_cli_bad(usage, "%s needs a value", a);
      const char *v = argv[++i];
      if (!strcmp(a, "--spectra")) {
        if (!v[0]) return ew_cli_bad(usage, "%s", "--spectra wants a file name, got an empty one");
        spectra = v;
      } else if (!strcmp(a, "--spectra-plot")) {
        if (!ew_plot_format(v))
          return ew_cli_bad(usage, "--spectra-plot wants a file name ending in .svg or .png, got %s", v);
        spectra_plot = v;
      } else if (!strcmp(a, "--angle")) {
        if (!parse_num(v, &angle) || angle < 0 || angle >= 90)
          return ew_cli_bad(usage, "--angle wants the internal angle to the growth axis in degrees, "
                           "in [0, 90), got %s", v);
        angle_opt = a;
      } else if (!strcmp(a, "--index")) {
        if (!parse_num(v, &index) || index <= 0 || index > 100)
          return ew_cli_bad(usage, "--index wants a refractive index in (0, 100], got %s", v);
        index_opt = a;
      } else if (!strcmp(a, "-o")) {
        if (!v[0]) return ew_cli_bad(usage, "%s", "-o wants a directory name, got an empty one"); /* robustness */
        outdir = v;
      } else if (!strcmp(a, "--plot")) {
        if (!ew_plot_format(v))
          return ew_cli_bad(usage, "--plot wants a file name ending in .svg or .png, got %s", v);
        plot = v;
      } else if (!strcmp(a, "--report")) {
        repdir = v;
      } else if (!strcmp(a, "--grid-step")) {
        if (!parse_num(v, &opt.grid_step_nm) || opt.grid_step_nm <= 0 || opt.grid_step_nm > 1)
          return ew_cli_bad(usage, "--grid-step wants a step in nm in (0, 1], got %s", v);
      } else if (!strcmp(v, "all")) {
        opt.lowest_levels = 0;
      } else {
        double k;
        if (!parse_num(v, &k) || k < 1 || k > 1e6 || k != floor(k))
          return ew_cli_bad(usage, "--lines wants a whole number >= 1 or 'all', got %s", v);
        opt.lowest_levels = (int)k;
      }
    } else if (a[0] == '-') {
      return ew_cli_bad(usage, "unknown option %s", a);
    } else if (!path) {
      path = a;
    } else {
      return ew_cli_bad(usage, "unexpected argument %s", a);
    }
  }
  if (!path) return ew_cli_bad(usage, "%s", "solve needs a stack file");
  if ((angle_opt || index_opt) && !spectra && !spectra_plot)
    return ew_cli_bad(usage, "%s needs --spectra or --spectra-plot", angle_opt ? angle_opt : index_opt);
  ew_error err = {0};
  /* unwritable outputs (directories, picture file) fail before any work is done */
  if (outdir && ew_output_check_dir(outdir, &err) != EW_OK) return report(&err);
  if (plot && ew_plot_check_path(plot, &err) != EW_OK) return report(&err);
  if (repdir && ew_output_check_dir(repdir, &err) != EW_OK) return report(&err);
  if (spectra && ew_wf_check_file_path(spectra, "--spectra", &err) != EW_OK) return report(&err);
  for (int k = 0; spectra_plot && k < 2; k++) {
    char pp[EW_WF_PATH_MAX];
    if (ew_wf_plot_companion(spectra_plot, k ? "intersubband" : "", "--spectra-plot", pp,
                             sizeof pp, &err) != EW_OK ||
        ew_plot_check_path(pp, &err) != EW_OK) {
      char msg[sizeof err.message];
      snprintf(msg, sizeof msg, "--spectra-plot: %.1000s", err.message);
      snprintf(err.message, sizeof err.message, "%s", msg);
      return report(&err);
    }
  }
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_result *res = NULL;
  ew_wf_spectra sp;
  memset(&sp, 0, sizeof sp);
  ew_wf_outset spset; /* the spectra CSV and pictures, renamed into place together */
  ew_wf_outset_init(&spset);
  int sp_written[2] = {0, 0};
  int want_sp = spectra || spectra_plot;
  const char *sp_tmp = NULL;
  FILE *sp_csv = NULL;
  int rc = 0;
  if (ew_catalogue_load(NULL, &cat, &err) != EW_OK || ew_stack_read_file(path, cat, &st, &err) != EW_OK ||
      ew_solve(st, &opt, &res, &err) != EW_OK ||
      (want_sp && ew_wf_spectra_compute(res, angle, index, &sp, &err) != EW_OK) ||
      (outdir && ew_output_csv_dir(res, outdir, gzip, &err) != EW_OK) ||
      (plot && ew_plot_band_diagram(res, plot, &err) != EW_OK) ||
      (repdir && ew_report_write(res, cat, repdir, &err) != EW_OK) ||
      (spectra && ew_wf_outset_add(&spset, spectra, "--spectra", &sp_tmp, &err) != EW_OK) ||
      (spectra_plot && ew_wf_spectra_plot(&sp, spectra_plot, &spset, sp_written, &err) != EW_OK)) {
    rc = report(&err);
  } else {
    if (spectra) {
      sp_csv = fopen(sp_tmp, "w");
      if (sp_csv) ew_wf_spectra_write_csv(&sp, sp_csv);
      int bad_write = !sp_csv || ferror(sp_csv) != 0, e = errno;
      if (sp_csv && fclose(sp_csv) != 0 && !bad_write) bad_write = 1, e = errno;
      if (bad_write) {
        fprintf(stderr, "epiwell: --spectra: cannot write '%s': %s\n", spectra, strerror(e));
        rc = EW_ERR_IO;
      }
    }
    if (!rc && ew_wf_outset_commit(&spset, 1, &err) != EW_OK) rc = report(&err);
    if (!rc) {
      for (int w = 0; w < 2 && want_sp; w++)
        if (sp.note[w][0]) fprintf(stderr, "epiwell: %s\n", sp.note[w]);
      if (spectra_plot && !sp_written[0])
        fprintf(stderr, "epiwell: --spectra-plot: no interband spectrum, %s not written\n",
                spectra_plot);
      if (json) ew_output_json(res, stdout);
      else ew_output_table(res, stdout);
      if (!json && want_sp) ew_wf_spectra_print_peaks(&sp, stdout);
      if (fflush(stdout) != 0) rc = EW_ERR_IO;
    }
  }
  ew_wf_outset_commit(&spset, 0, NULL);
  ew_wf_spectra_free(&sp);
  ew_result_free(res);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}

int main(int argc, char **argv) {
#ifdef __GLIBC__
  /* A solve allocates and frees the same large arrays many times (grids, pencils, SuperLU's
     factors): keep them in the heap instead of mapping and unmapping them each time, which
     costs a page fault per page (measured: 11 % of a single-well solve). */
  mallopt(M_MMAP_THRESHOLD, 256 * 1024 * 1024);
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
  if (!strcmp(argv[1], "sweep")) { int ew_cli_sweep(int, char **); return ew_cli_sweep(argc - 2, argv + 2); }
  if (!strcmp(argv[1], "match")) { int ew_cli_match(int, char **); return ew_cli_match(argc - 2, argv + 2); }
  if (!strcmp(argv[1], "tolerance")) { int ew_cli_tolerance(int, char **); return ew_cli_tolerance(argc - 2, argv + 2); }
  return ew_cli_bad(usage, "unknown command %s", argv[1]);
}
