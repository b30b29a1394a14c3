/* cli_hole_absorption.c — `epiwell hole-absorption`: TE and TM intersubband absorption
 * between the hole subbands of a well with a given hole sheet density.  A thin client of
 * epiwell.h (ew_hole_absorption_*); outputs written atomically. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_common.h"

static const char usage[] =
    "usage: epiwell hole-absorption STACK --density P_CM2 [--model 4band|6band]\n"
    "                    [--linewidth MEV] [--lineshape sech|lorentzian] [--index N_R]\n"
    "                    [--energy FROM:TO:STEP] [--grid-step NM] [--csv FILE] [--json]\n"
    "                    [--plot FILE.svg|.png]\n"
    "  TE and TM absorption (1/cm) of transitions between the hole subbands (k.p eigenvectors,\n"
    "  velocity matrix elements) at the hole sheet density P (cm^-2) and the stack's\n"
    "  temperature; photon energies in eV; table of the transitions unless --json\n";

typedef struct {
  const char *stack, *csv, *plot;
  int json;
  ew_hole_absorption_options o;
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

static int option(const char *s, const char *v, args_t *a) {
  double x, t[3];
  if (!strcmp(s, "--density")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0) || x > 1e15)
      return ew_cli_bad(usage, "--density %s: give a hole sheet density in cm^-2, (0, 1e15]", v);
    a->o.density_cm2 = x;
  } else if (!strcmp(s, "--energy")) {
    if (!triple(v, t) || !(t[0] > 0) || !(t[1] >= t[0]) || !(t[2] > 0))
      return ew_cli_bad(usage, "--energy %s: give FROM:TO:STEP in eV, 0 < FROM <= TO, STEP > 0", v);
    a->o.energy_from_eV = t[0], a->o.energy_to_eV = t[1], a->o.energy_step_eV = t[2];
  } else if (!strcmp(s, "--model")) {
    if (!strcmp(v, "4band")) a->o.model = 4;
    else if (!strcmp(v, "6band")) a->o.model = 6;
    else return ew_cli_bad(usage, "--model %s: give 4band or 6band", v);
  } else if (!strcmp(s, "--lineshape")) {
    if (!strcmp(v, "sech")) a->o.lorentzian = 0;
    else if (!strcmp(v, "lorentzian")) a->o.lorentzian = 1;
    else return ew_cli_bad(usage, "--lineshape %s: give sech or lorentzian", v);
  } else if (!strcmp(s, "--linewidth")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0) || x > 200)
      return ew_cli_bad(usage, "--linewidth %s: give a FWHM in meV, (0, 200]", v);
    a->o.linewidth_meV = x;
  } else if (!strcmp(s, "--index")) {
    if (!ew_cli_parse_num(v, &x) || !(x >= 1) || x > 10)
      return ew_cli_bad(usage, "--index %s: give a refractive index from 1 to 10", v);
    a->o.refractive_index = x;
  } else if (!strcmp(s, "--grid-step")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0))
      return ew_cli_bad(usage, "--grid-step %s: give a positive number (nm)", v);
    a->o.grid_step_nm = x;
  } else if (!strcmp(s, "--csv")) {
    a->csv = v;
  } else if (!strcmp(s, "--plot")) {
    a->plot = v;
  } else {
    return ew_cli_bad(usage, "unknown option %s", s);
  }
  return 0;
}

static int parse(int argc, char **argv, args_t *a) {
  ew_hole_absorption_options_default(&a->o);
  for (int i = 0; i < argc; i++) {
    const char *s = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
      fputs(usage, stdout);
      exit(0);
    } else if (!strcmp(s, "--json")) {
      a->json = 1;
    } else if (s[0] == '-' && s[1] == '-' && !v) {
      return ew_cli_bad(usage, "%s needs a value", s);
    } else if (s[0] == '-') {
      int rc = option(s, v, a);
      if (rc) return rc;
      i++;
    } else if (!a->stack) {
      a->stack = s;
    } else {
      return ew_cli_bad(usage, "more than one stack file (%s)", s);
    }
  }
  if (!a->stack) return ew_cli_bad(usage, "give a stack file");
  if (!(a->o.density_cm2 > 0)) return ew_cli_bad(usage, "give --density P_CM2");
  return 0;
}

static void table(const ew_hole_absorption *h, FILE *out) {
  fprintf(out, "hole intersubband absorption, %.4g cm^-2, well %.4g nm, Fermi level %.6f eV, "
          "%s lineshape\n", ew_hole_absorption_density_cm2(h), ew_hole_absorption_well_nm(h),
          ew_hole_absorption_fermi_eV(h), ew_hole_absorption_lineshape(h));
  fprintf(out, "peak TE at %.4f eV, peak TM at %.4f eV\n", ew_hole_absorption_peak_te_eV(h),
          ew_hole_absorption_peak_tm_eV(h));
  fprintf(out, "%6s %6s %12s %16s %16s\n", "from", "to", "E (eV)", "TE |M|^2 k=0", "TM |M|^2 k=0");
  for (size_t t = 0; t < ew_hole_absorption_transition_count(h); t++)
    fprintf(out, "%6s %6s %12.6f %16.6g %16.6g\n",
            ew_hole_absorption_label(h, ew_hole_absorption_transition_from(h, t)),
            ew_hole_absorption_label(h, ew_hole_absorption_transition_to(h, t)),
            ew_hole_absorption_transition_eV(h, t), ew_hole_absorption_te_eV2nm2(h, t, 0),
            ew_hole_absorption_tm_eV2nm2(h, t, 0));
}

static int write_file(const ew_hole_absorption *h, const char *path) {
  ew_error err;
  ew_output_file *f = NULL;
  if (ew_output_file_open(path, &f, &err)) return ew_cli_report(&err);
  if (ew_hole_absorption_write_csv(h, ew_output_file_stream(f), &err)) {
    ew_output_file_abort(f);
    return ew_cli_report(&err);
  }
  if (ew_output_file_commit(f, &err)) return ew_cli_report(&err);
  return 0;
}

int ew_cli_hole_absorption(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  int rc = parse(argc, argv, &a);
  if (rc) return rc;
  ew_error err;
  if (a.csv && ew_data_path_check(a.csv, "--csv", &err)) return ew_cli_report(&err);
  if (a.plot && ew_plot_path_check(a.plot, &err)) return ew_cli_report(&err);
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_hole_absorption *h = NULL;
  if (ew_catalogue_load(NULL, &cat, &err)) return ew_cli_report(&err);
  if (ew_stack_read_file(a.stack, cat, &st, &err) || ew_hole_absorption_create(&h, &err) ||
      ew_hole_absorption_compute(h, st, &a.o, &err)) {
    rc = ew_cli_report(&err);
  } else {
    if (a.csv) rc = write_file(h, a.csv);
    if (!rc && a.plot && ew_hole_absorption_write_plot(h, a.plot, &err)) rc = ew_cli_report(&err);
    if (!rc && a.json && ew_hole_absorption_write_json(h, stdout, &err)) rc = ew_cli_report(&err);
    if (!rc && !a.json) table(h, stdout);
  }
  ew_hole_absorption_free(h);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}
