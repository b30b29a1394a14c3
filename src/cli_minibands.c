/* cli_minibands.c — `epiwell minibands`: the minibands of an infinite superlattice whose
 * period is the stack.  A thin client of epiwell.h (ew_minibands_*); outputs written
 * atomically, warnings on stderr. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_common.h"

static const char usage[] =
    "usage: epiwell minibands STACK [--model 1band|4band|6band|8band] [--points N]\n"
    "                         [--grid-step NM] [--kmax K] [--kpoints M] [--csv FILE]\n"
    "                         [--csv-k FILE] [--json] [--plot FILE.svg|.png]\n"
    "  the stack is one period d of an infinite superlattice: minibands E_n(q), q from 0 to\n"
    "  pi/d (N points, default 41), of electrons, heavy and light holes below each band's\n"
    "  window top; bottom, top, width (eV) and the mass at the bottom (m0); table on stdout\n"
    "  unless --json; --csv writes q_inv_nm and one column per miniband\n"
    "  --model 4band|6band|8band: the k.p Hamiltonian of the period (8band: electron and hole\n"
    "  minibands and the superlattice gap); E(k) at q = 0 for k from 0 to K 1/nm (default\n"
    "  0.3) in M points (default 11, 0: none); --csv-k writes k_inv_nm and those columns\n";

typedef struct {
  ew_cli_outputs out;
  const char *csv_k;
  int model, k_given;
  size_t points, kpoints;
  double step_nm, kmax;
} args_t;

/* one option with its value v; 0 or the exit code */
static int option(const char *s, const char *v, void *ctx) {
  args_t *a = ctx;
  double x;
  if (!strcmp(s, "--points")) {
    if (!ew_cli_parse_num(v, &x) || x < 2 || x > 10000 || x != (double)(size_t)x)
      return ew_cli_bad(usage, "--points %s: give a whole number from 2 to 10000", v);
    a->points = (size_t)x;
  } else if (!strcmp(s, "--grid-step")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0))
      return ew_cli_bad(usage, "--grid-step %s: give a positive number (nm)", v);
    a->step_nm = x;
  } else if (!strcmp(s, "--model")) {
    if (!strcmp(v, "1band")) a->model = 1;
    else if (!strcmp(v, "4band")) a->model = 4;
    else if (!strcmp(v, "6band")) a->model = 6;
    else if (!strcmp(v, "8band")) a->model = 8;
    else return ew_cli_bad(usage, "--model %s: give 1band, 4band, 6band or 8band", v);
  } else if (!strcmp(s, "--kmax")) {
    if (!ew_cli_parse_num(v, &x) || !(x >= 0 && x <= 10))
      return ew_cli_bad(usage, "--kmax %s: give a number from 0 to 10 (1/nm)", v);
    a->kmax = x, a->k_given = 1;
  } else if (!strcmp(s, "--kpoints")) {
    if (!ew_cli_parse_num(v, &x) || x < 0 || x > 10000 || x != (double)(size_t)x)
      return ew_cli_bad(usage, "--kpoints %s: give a whole number from 0 to 10000", v);
    a->kpoints = (size_t)x, a->k_given = 1;
  } else if (!strcmp(s, "--csv-k")) {
    a->csv_k = v, a->k_given = 1;
  } else {
    return ew_cli_bad(usage, "unknown option %s", s);
  }
  return 0;
}

static int parse(int argc, char **argv, args_t *a) {
  a->points = 41, a->model = 1, a->kpoints = 11, a->kmax = 0.3;
  int rc = ew_cli_parse(argc, argv, usage, &a->out, NULL, option, a);
  if (rc) return rc;
  if (a->k_given && a->model == 1)
    return ew_cli_bad(usage, "--kmax, --kpoints and --csv-k need --model 4band, 6band or 8band");
  if (a->csv_k && a->kpoints == 0) return ew_cli_bad(usage, "--csv-k needs --kpoints 1 or more");
  return 0;
}

static void table(const void *r, const void *ctx, FILE *out) {
  (void)ctx;
  const ew_minibands *mb = r;
  size_t nb = ew_minibands_count(mb), np = ew_minibands_point_count(mb);
  fprintf(out, "minibands of a superlattice, period %g nm, grid step %g nm (energies eV)\n",
          ew_minibands_period_nm(mb), ew_minibands_grid_step_nm(mb));
  fprintf(out, "%-8s %12s %12s %12s %10s\n", "band", "bottom", "top", "width", "mass (m0)");
  for (size_t j = 0; j < nb; j++)
    fprintf(out, "%-8s %12.6f %12.6f %12.6f %10.4f\n", ew_minibands_label(mb, j),
            ew_minibands_bottom_eV(mb, j), ew_minibands_top_eV(mb, j),
            ew_minibands_width_eV(mb, j), ew_minibands_mass_m0(mb, j));
  size_t ne = 0;
  while (ne < nb && !strcmp(ew_minibands_band(mb, ne), "e")) ne++;
  if (isfinite(ew_minibands_gap_eV(mb)) && ne < nb)
    fprintf(out, "superlattice gap (%s, %s - %s, minimum over q): %.6f eV\n",
            ew_minibands_model(mb), ew_minibands_label(mb, 0),
            ew_minibands_label(mb, ne), ew_minibands_gap_eV(mb));
  fprintf(out, "\n%10s", "q (1/nm)");
  for (size_t j = 0; j < nb; j++) fprintf(out, " %11s", ew_minibands_label(mb, j));
  fputc('\n', out);
  for (size_t i = 0; i < np; i++) {
    fprintf(out, "%10.5f", ew_minibands_q_inv_nm(mb, i));
    for (size_t j = 0; j < nb; j++) fprintf(out, " %11.6f", ew_minibands_energy_eV(mb, j, i));
    fputc('\n', out);
  }
  size_t nk = ew_minibands_k_count(mb);
  if (!nk) return;
  fprintf(out, "\nat q = 0, in-plane along [100]\n%10s", "k (1/nm)");
  for (size_t j = 0; j < nb; j++) fprintf(out, " %11s", ew_minibands_label(mb, j));
  fputc('\n', out);
  for (size_t i = 0; i < nk; i++) {
    fprintf(out, "%10.5f", ew_minibands_k_inv_nm(mb, i));
    for (size_t j = 0; j < nb; j++) fprintf(out, " %11.6f", ew_minibands_energy_k_eV(mb, j, i));
    fputc('\n', out);
  }
}

static ew_status csv(const void *r, FILE *out, ew_error *err) { return ew_minibands_write_csv(r, out, err); }
static ew_status plot(const void *r, const char *path, ew_error *err) { return ew_minibands_write_plot(r, path, err); }
static ew_status json(const void *r, FILE *out, ew_error *err) { return ew_minibands_write_json(r, out, err); }

/* warnings on stderr, the in-plane CSV, then the common outputs */
static int outputs(const ew_minibands *mb, const args_t *a) {
  for (size_t w = 0; w < ew_minibands_warning_count(mb); w++)
    fprintf(stderr, "epiwell: warning [%s]: %s\n", ew_minibands_warning(mb, w),
            ew_minibands_warning_text(mb, w));
  ew_error err;
  ew_output_file *f;
  int rc = 0;
  if (a->csv_k && !(rc = ew_cli_file_open(a->csv_k, &f)))
    rc = ew_cli_file_close(f, ew_minibands_write_csv_k(mb, ew_output_file_stream(f), &err), &err);
  const ew_cli_writers w = {csv, plot, json, table};
  return rc ? rc : ew_cli_emit(&a->out, mb, &w, NULL);
}

int ew_cli_minibands(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  int rc = parse(argc, argv, &a);
  ew_error err;
  if (!rc && a.csv_k && ew_data_path_check(a.csv_k, "--csv-k", &err)) rc = ew_cli_report(&err);
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  if (rc || (rc = ew_cli_read_stack(&a.out, &cat, &st))) return rc;
  ew_minibands *mb = NULL;
  if (ew_minibands_create(&mb, &err) ||
      (a.model == 1 ? ew_minibands_compute(mb, st, a.points, a.step_nm, &err)
                    : ew_minibands_compute_kp(mb, st, a.model, a.points, a.step_nm, a.kmax,
                                              a.kpoints, &err)))
    rc = ew_cli_report(&err);
  else
    rc = outputs(mb, &a);
  ew_minibands_free(mb);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}
