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
  ew_cli_outputs out;
  int have_density;
  ew_gain_options o;
} args_t;

/* one option with its value v; 0 or the exit code */
static int option(const char *s, const char *v, void *ctx) {
  args_t *a = ctx;
  double t[3];
  ew_cli_optics c = {&a->o.model, &a->o.lorentzian, &a->o.linewidth_meV, &a->o.refractive_index,
                     &a->o.grid_step_nm};
  int r = ew_cli_optics_arg(usage, &c, s, v);
  if (r) return r < 0 ? -r : 0;
  if (!strcmp(s, "--density")) {
    if (!ew_cli_triple(v, t) || !(t[0] > 0) || !(t[1] >= t[0]) || !(t[2] > 0))
      return ew_cli_bad(usage, "--density %s: give FROM:TO:STEP in cm^-2, 0 < FROM <= TO, "
                        "STEP > 0", v);
    a->o.density_from_cm2 = t[0], a->o.density_to_cm2 = t[1], a->o.density_step_cm2 = t[2];
    a->have_density = 1;
  } else if (!strcmp(s, "--energy")) {
    if (!ew_cli_triple(v, t) || !(t[0] > 0) || !(t[1] >= t[0]) || !(t[2] > 0))
      return ew_cli_bad(usage, "--energy %s: give FROM:TO:STEP in eV, 0 < FROM <= TO, "
                        "STEP > 0", v);
    a->o.energy_from_eV = t[0], a->o.energy_to_eV = t[1], a->o.energy_step_eV = t[2];
  } else {
    return ew_cli_bad(usage, "unknown option %s", s);
  }
  return 0;
}

static void table(const void *r, const void *ctx, FILE *out) {
  const ew_gain *g = r;
  double linewidth_meV = ((const args_t *)ctx)->o.linewidth_meV;
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

static ew_status csv(const void *r, FILE *out, ew_error *err) { return ew_gain_write_csv(r, out, err); }
static ew_status plot(const void *r, const char *path, ew_error *err) { return ew_gain_write_plot(r, path, err); }
static ew_status json(const void *r, FILE *out, ew_error *err) { return ew_gain_write_json(r, out, err); }

int ew_cli_gain(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  ew_gain_options_default(&a.o);
  int rc = ew_cli_parse(argc, argv, usage, &a.out, NULL, option, &a);
  if (!rc && !a.have_density) rc = ew_cli_bad(usage, "give --density FROM:TO:STEP");
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  if (rc || (rc = ew_cli_read_stack(&a.out, &cat, &st))) return rc;
  ew_error err;
  ew_gain *g = NULL;
  const ew_cli_writers w = {csv, plot, json, table};
  if (ew_gain_create(&g, &err) || ew_gain_compute(g, st, &a.o, &err)) rc = ew_cli_report(&err);
  else rc = ew_cli_emit(&a.out, g, &w, &a);
  ew_gain_free(g);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}
