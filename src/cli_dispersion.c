/* cli_dispersion.c — `epiwell dispersion`: hole subbands against k∥ in the multiband k·p
 * model.  A thin client of epiwell.h (ew_dispersion_*); outputs written atomically. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_common.h"

static const char usage[] =
    "usage: epiwell dispersion STACK [--model 4band|6band|8band] [--direction 100|110] [--axial]\n"
    "                          [--kmax K] [--points N] [--grid-step NM] [--csv FILE] [--json]\n"
    "                          [--plot FILE.svg|.png]\n"
    "  hole subband energies (eV) against k (1/nm) in the 4-band or 6-band Luttinger-Kohn\n"
    "  model (8band: with the conduction band, electron subbands e1... too), labelled by\n"
    "  their k = 0 character; table on stdout unless --json\n";

typedef struct {
  ew_cli_outputs out;
  ew_dispersion_options o;
} args_t;

/* one option with its value v; 0 or the exit code */
static int option(const char *s, const char *v, void *ctx) {
  args_t *a = ctx;
  double x;
  if (!strcmp(s, "--model")) {
    if (!strcmp(v, "4band")) a->o.model = 4;
    else if (!strcmp(v, "6band")) a->o.model = 6;
    else if (!strcmp(v, "8band")) a->o.model = 8;
    else return ew_cli_bad(usage, "--model %s: give 4band, 6band or 8band", v);
  } else if (!strcmp(s, "--direction")) {
    if (!strcmp(v, "100")) a->o.direction = 100;
    else if (!strcmp(v, "110")) a->o.direction = 110;
    else return ew_cli_bad(usage, "--direction %s: give 100 or 110", v);
  } else if (!strcmp(s, "--kmax")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0)) return ew_cli_bad(usage, "--kmax %s: give a positive number (1/nm)", v);
    a->o.kmax_inv_nm = x;
  } else if (!strcmp(s, "--points")) {
    if (!ew_cli_parse_num(v, &x) || x < 2 || x > 10000 || x != (double)(size_t)x)
      return ew_cli_bad(usage, "--points %s: give a whole number from 2 to 10000", v);
    a->o.points = (size_t)x;
  } else if (!strcmp(s, "--grid-step")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0)) return ew_cli_bad(usage, "--grid-step %s: give a positive number (nm)", v);
    a->o.grid_step_nm = x;
  } else {
    return ew_cli_bad(usage, "unknown option %s", s);
  }
  return 0;
}

/* the one flag */
static int flag(const char *s, void *ctx) {
  if (strcmp(s, "--axial")) return 0;
  ((args_t *)ctx)->o.axial = 1;
  return 1;
}

static void table(const void *r, const void *ctx, FILE *out) {
  (void)ctx;
  const ew_dispersion *d = r;
  fprintf(out, "%s, %s k.p, k along [%s] (energies eV)\n",
          strcmp(ew_dispersion_model(d), "8band") ? "hole subbands" : "subbands",
          ew_dispersion_model(d), ew_dispersion_direction(d));
  fprintf(out, "%10s", "k (1/nm)");
  for (size_t j = 0; j < ew_dispersion_subband_count(d); j++) fprintf(out, " %11s", ew_dispersion_label(d, j));
  fputc('\n', out);
  for (size_t i = 0; i < ew_dispersion_point_count(d); i++) {
    fprintf(out, "%10.4f", ew_dispersion_k_inv_nm(d, i));
    for (size_t j = 0; j < ew_dispersion_subband_count(d); j++) fprintf(out, " %11.6f", ew_dispersion_energy_eV(d, j, i));
    fputc('\n', out);
  }
}

static ew_status csv(const void *r, FILE *out, ew_error *err) { return ew_dispersion_write_csv(r, out, err); }
static ew_status plot(const void *r, const char *path, ew_error *err) { return ew_dispersion_write_plot(r, path, err); }
static ew_status json(const void *r, FILE *out, ew_error *err) { return ew_dispersion_write_json(r, out, err); }

int ew_cli_dispersion(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  ew_dispersion_options_default(&a.o);
  int rc = ew_cli_parse(argc, argv, usage, &a.out, flag, option, &a);
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  if (rc || (rc = ew_cli_read_stack(&a.out, &cat, &st))) return rc;
  ew_error err;
  ew_dispersion *d = NULL;
  const ew_cli_writers w = {csv, plot, json, table};
  if (ew_dispersion_create(&d, &err) || ew_dispersion_compute(d, st, &a.o, &err)) rc = ew_cli_report(&err);
  else rc = ew_cli_emit(&a.out, d, &w, NULL);
  ew_dispersion_free(d);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}
