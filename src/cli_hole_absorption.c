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
  ew_cli_outputs out;
  ew_hole_absorption_options o;
} args_t;

/* one option with its value v; 0 or the exit code */
static int option(const char *s, const char *v, void *ctx) {
  args_t *a = ctx;
  double x, t[3];
  ew_cli_optics c = {&a->o.model, &a->o.lorentzian, &a->o.linewidth_meV, &a->o.refractive_index,
                     &a->o.grid_step_nm};
  int r = ew_cli_optics_arg(usage, &c, s, v);
  if (r) return r < 0 ? -r : 0;
  if (!strcmp(s, "--density")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0) || x > 1e15)
      return ew_cli_bad(usage, "--density %s: give a hole sheet density in cm^-2, (0, 1e15]", v);
    a->o.density_cm2 = x;
  } else if (!strcmp(s, "--energy")) {
    if (!ew_cli_triple(v, t) || !(t[0] > 0) || !(t[1] >= t[0]) || !(t[2] > 0))
      return ew_cli_bad(usage, "--energy %s: give FROM:TO:STEP in eV, 0 < FROM <= TO, STEP > 0", v);
    a->o.energy_from_eV = t[0], a->o.energy_to_eV = t[1], a->o.energy_step_eV = t[2];
  } else {
    return ew_cli_bad(usage, "unknown option %s", s);
  }
  return 0;
}

static void table(const void *r, const void *ctx, FILE *out) {
  (void)ctx;
  const ew_hole_absorption *h = r;
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

static ew_status csv(const void *r, FILE *out, ew_error *err) { return ew_hole_absorption_write_csv(r, out, err); }
static ew_status plot(const void *r, const char *path, ew_error *err) { return ew_hole_absorption_write_plot(r, path, err); }
static ew_status json(const void *r, FILE *out, ew_error *err) { return ew_hole_absorption_write_json(r, out, err); }

int ew_cli_hole_absorption(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  ew_hole_absorption_options_default(&a.o);
  int rc = ew_cli_parse(argc, argv, usage, &a.out, NULL, option, &a);
  if (!rc && !(a.o.density_cm2 > 0)) rc = ew_cli_bad(usage, "give --density P_CM2");
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  if (rc || (rc = ew_cli_read_stack(&a.out, &cat, &st))) return rc;
  ew_error err;
  ew_hole_absorption *h = NULL;
  const ew_cli_writers w = {csv, plot, json, table};
  if (ew_hole_absorption_create(&h, &err) || ew_hole_absorption_compute(h, st, &a.o, &err))
    rc = ew_cli_report(&err);
  else
    rc = ew_cli_emit(&a.out, h, &w, NULL);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}
