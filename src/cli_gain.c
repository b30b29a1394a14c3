/* cli_gain.c — `epiwell gain`: TE and TM material gain and spontaneous emission at a range
 * of injected sheet densities.  A thin client of epiwell.h (ew_gain_*); outputs written
 * atomically. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_common.h"

static const char usage[] =
    "usage: epiwell gain STACK --density FROM:TO:STEP [--model 4band|6band] [--linewidth MEV]\n"
    "                    [--lineshape sech|lorentzian] [--index N_R] [--energy FROM:TO:STEP]\n"
    "                    [--grid-step NM] [--csv FILE] [--json] [--plot FILE.svg|.png]\n"
    "  TE and TM material gain (1/cm) and spontaneous emission at each sheet carrier density\n"
    "  (cm^-2, equal electrons and holes), holes from the k.p dispersion; densities in cm^-2,\n"
    "  photon energies in eV; table of the peak gain against density unless --json\n";

typedef struct {
  const char *stack, *csv, *plot;
  int json, have_density;
  ew_gain_options o;
} args_t;

/* FROM:TO:STEP into three numbers */
static int triple(const char *v, double x[3]) {
  char buf[256];
  if (strlen(v) >= sizeof buf) return 0;
  strcpy(buf, v);
  char *p = buf;
  for (int k = 0; k < 3; k++) {
    char *c = k < 2 ? strchr(p, ':') : NULL;
    if (k < 2 && !c) return 0;
    if (c) *c = '\0';
    if (!ew_cli_parse_num(p, &x[k])) return 0;
    p = c ? c + 1 : p;
  }
  return 1;
}

static int parse(int argc, char **argv, args_t *a) {
  ew_gain_options_default(&a->o);
  for (int i = 0; i < argc; i++) {
    const char *s = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    double x, t[3];
    if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
      fputs(usage, stdout);
      exit(0);
    } else if (!strcmp(s, "--json")) {
      a->json = 1;
    } else if (s[0] == '-' && s[1] == '-' && !v) {
      return ew_cli_bad(usage, "%s needs a value", s);
    } else if (!strcmp(s, "--density")) {
      if (!triple(v, t) || !(t[0] > 0) || !(t[1] >= t[0]) || !(t[2] > 0))
        return ew_cli_bad(usage, "--density %s: give FROM:TO:STEP in cm^-2, 0 < FROM <= TO, "
                          "STEP > 0", v);
      a->o.density_from_cm2 = t[0], a->o.density_to_cm2 = t[1], a->o.density_step_cm2 = t[2];
      a->have_density = 1, i++;
    } else if (!strcmp(s, "--energy")) {
      if (!triple(v, t) || !(t[0] > 0) || !(t[1] >= t[0]) || !(t[2] > 0))
        return ew_cli_bad(usage, "--energy %s: give FROM:TO:STEP in eV, 0 < FROM <= TO, "
                          "STEP > 0", v);
      a->o.energy_from_eV = t[0], a->o.energy_to_eV = t[1], a->o.energy_step_eV = t[2], i++;
    } else if (!strcmp(s, "--model")) {
      if (!strcmp(v, "4band")) a->o.model = 4;
      else if (!strcmp(v, "6band")) a->o.model = 6;
      else return ew_cli_bad(usage, "--model %s: give 4band or 6band", v);
      i++;
    } else if (!strcmp(s, "--lineshape")) {
      if (!strcmp(v, "sech")) a->o.lorentzian = 0;
      else if (!strcmp(v, "lorentzian")) a->o.lorentzian = 1;
      else return ew_cli_bad(usage, "--lineshape %s: give sech or lorentzian", v);
      i++;
    } else if (!strcmp(s, "--linewidth")) {
      if (!ew_cli_parse_num(v, &x) || !(x > 0) || x > 200)
        return ew_cli_bad(usage, "--linewidth %s: give a FWHM in meV, (0, 200]", v);
      a->o.linewidth_meV = x, i++;
    } else if (!strcmp(s, "--index")) {
      if (!ew_cli_parse_num(v, &x) || !(x >= 1) || x > 10)
        return ew_cli_bad(usage, "--index %s: give a refractive index from 1 to 10", v);
      a->o.refractive_index = x, i++;
    } else if (!strcmp(s, "--grid-step")) {
      if (!ew_cli_parse_num(v, &x) || !(x > 0)) return ew_cli_bad(usage, "--grid-step %s: give a positive number (nm)", v);
      a->o.grid_step_nm = x, i++;
    } else if (!strcmp(s, "--csv")) {
      a->csv = v, i++;
    } else if (!strcmp(s, "--plot")) {
      a->plot = v, i++;
    } else if (s[0] == '-') {
      return ew_cli_bad(usage, "unknown option %s", s);
    } else if (!a->stack) {
      a->stack = s;
    } else {
      return ew_cli_bad(usage, "more than one stack file (%s)", s);
    }
  }
  if (!a->stack) return ew_cli_bad(usage, "give a stack file");
  if (!a->have_density) return ew_cli_bad(usage, "give --density FROM:TO:STEP");
  return 0;
}

static void table(const ew_gain *g, double linewidth_meV, FILE *out) {
  fprintf(out, "material gain, well %.4g nm, Ep %.4g eV, %s lineshape %.4g meV FWHM\n",
          ew_gain_well_nm(g), ew_gain_Ep_eV(g), ew_gain_lineshape(g), linewidth_meV);
  fprintf(out, "lowest transition %.6f eV; transparency density %.4g cm^-2\n", ew_gain_edge_eV(g),
          ew_gain_transparency_density_cm2(g));
  fprintf(out, "%12s %12s %14s %12s %14s\n", "N (cm^-2)", "dF (eV)", "peak TE (1/cm)",
          "at (eV)", "peak TM (1/cm)");
  for (size_t d = 0; d < ew_gain_density_count(g); d++)
    fprintf(out, "%12.4g %12.6f %14.2f %12.6f %14.2f\n", ew_gain_density_cm2(g, d),
            ew_gain_fermi_separation_eV(g, d), ew_gain_peak_te_cm(g, d),
            ew_gain_peak_te_energy_eV(g, d), ew_gain_peak_tm_cm(g, d));
}

static int write_file(const ew_gain *g, const char *path) {
  ew_error err;
  ew_output_file *f = NULL;
  if (ew_output_file_open(path, &f, &err)) return ew_cli_report(&err);
  if (ew_gain_write_csv(g, ew_output_file_stream(f), &err)) {
    ew_output_file_abort(f);
    return ew_cli_report(&err);
  }
  if (ew_output_file_commit(f, &err)) return ew_cli_report(&err);
  return 0;
}

int ew_cli_gain(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  int rc = parse(argc, argv, &a);
  if (rc) return rc;
  ew_error err;
  if (a.csv && ew_data_path_check(a.csv, "--csv", &err)) return ew_cli_report(&err);
  if (a.plot && ew_plot_path_check(a.plot, &err)) return ew_cli_report(&err);
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_gain *g = NULL;
  if (ew_catalogue_load(NULL, &cat, &err)) return ew_cli_report(&err);
  if (ew_stack_read_file(a.stack, cat, &st, &err) || ew_gain_create(&g, &err) ||
      ew_gain_compute(g, st, &a.o, &err)) {
    rc = ew_cli_report(&err);
  } else {
    if (a.csv) rc = write_file(g, a.csv);
    if (!rc && a.plot && ew_gain_write_plot(g, a.plot, &err)) rc = ew_cli_report(&err);
    if (!rc && a.json && ew_gain_write_json(g, stdout, &err)) rc = ew_cli_report(&err);
    if (!rc && !a.json) table(g, a.o.linewidth_meV, stdout);
  }
  ew_gain_free(g);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}
