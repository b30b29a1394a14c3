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
  const char *stack, *csv, *plot, *csv_k;
  int json, model, k_given;
  size_t points, kpoints;
  double step_nm, kmax;
} args_t;

static int parse(int argc, char **argv, args_t *a) {
  a->points = 41, a->model = 1, a->kpoints = 11, a->kmax = 0.3;
  for (int i = 0; i < argc; i++) {
    const char *s = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    double x;
    if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
      fputs(usage, stdout);
      exit(0);
    } else if (!strcmp(s, "--json")) {
      a->json = 1;
    } else if (s[0] == '-' && s[1] == '-' && !v) {
      return ew_cli_bad(usage, "%s needs a value", s);
    } else if (!strcmp(s, "--points")) {
      if (!ew_cli_parse_num(v, &x) || x < 2 || x > 10000 || x != (double)(size_t)x)
        return ew_cli_bad(usage, "--points %s: give a whole number from 2 to 10000", v);
      a->points = (size_t)x, i++;
    } else if (!strcmp(s, "--grid-step")) {
      if (!ew_cli_parse_num(v, &x) || !(x > 0))
        return ew_cli_bad(usage, "--grid-step %s: give a positive number (nm)", v);
      a->step_nm = x, i++;
    } else if (!strcmp(s, "--model")) {
      if (!strcmp(v, "1band")) a->model = 1;
      else if (!strcmp(v, "4band")) a->model = 4;
      else if (!strcmp(v, "6band")) a->model = 6;
      else if (!strcmp(v, "8band")) a->model = 8;
      else return ew_cli_bad(usage, "--model %s: give 1band, 4band, 6band or 8band", v);
      i++;
    } else if (!strcmp(s, "--kmax")) {
      if (!ew_cli_parse_num(v, &x) || !(x >= 0 && x <= 10))
        return ew_cli_bad(usage, "--kmax %s: give a number from 0 to 10 (1/nm)", v);
      a->kmax = x, a->k_given = 1, i++;
    } else if (!strcmp(s, "--kpoints")) {
      if (!ew_cli_parse_num(v, &x) || x < 0 || x > 10000 || x != (double)(size_t)x)
        return ew_cli_bad(usage, "--kpoints %s: give a whole number from 0 to 10000", v);
      a->kpoints = (size_t)x, a->k_given = 1, i++;
    } else if (!strcmp(s, "--csv-k")) {
      a->csv_k = v, a->k_given = 1, i++;
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
  if (a->k_given && a->model == 1)
    return ew_cli_bad(usage, "--kmax, --kpoints and --csv-k need --model 4band, 6band or 8band");
  if (a->csv_k && a->kpoints == 0) return ew_cli_bad(usage, "--csv-k needs --kpoints 1 or more");
  return 0;
}

static void table(const ew_minibands *mb, FILE *out) {
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

/* a CSV file, written atomically */
static int write_file(const ew_minibands *mb, const char *path, int in_plane) {
  ew_error err;
  ew_output_file *f = NULL;
  if (ew_output_file_open(path, &f, &err)) return ew_cli_report(&err);
  ew_status rc = in_plane ? ew_minibands_write_csv_k(mb, ew_output_file_stream(f), &err)
                          : ew_minibands_write_csv(mb, ew_output_file_stream(f), &err);
  if (rc) {
    ew_output_file_abort(f);
    return ew_cli_report(&err);
  }
  if (ew_output_file_commit(f, &err)) return ew_cli_report(&err);
  return 0;
}

static int outputs(const ew_minibands *mb, const args_t *a) {
  ew_error err;
  int rc = 0;
  for (size_t w = 0; w < ew_minibands_warning_count(mb); w++)
    fprintf(stderr, "epiwell: warning [%s]: %s\n", ew_minibands_warning(mb, w),
            ew_minibands_warning_text(mb, w));
  /* the files first: on an error nothing reaches standard output */
  if (a->csv) rc = write_file(mb, a->csv, 0);
  if (!rc && a->csv_k) rc = write_file(mb, a->csv_k, 1);
  if (!rc && a->plot && ew_minibands_write_plot(mb, a->plot, &err)) rc = ew_cli_report(&err);
  if (!rc && a->json && ew_minibands_write_json(mb, stdout, &err)) rc = ew_cli_report(&err);
  if (!rc && !a->json) table(mb, stdout);
  return rc;
}

int ew_cli_minibands(int argc, char **argv) {
  args_t a;
  memset(&a, 0, sizeof a);
  int rc = parse(argc, argv, &a);
  if (rc) return rc;
  ew_error err;
  if (a.csv && ew_data_path_check(a.csv, "--csv", &err)) return ew_cli_report(&err);
  if (a.csv_k && ew_data_path_check(a.csv_k, "--csv-k", &err)) return ew_cli_report(&err);
  if (a.plot && ew_plot_path_check(a.plot, &err)) return ew_cli_report(&err);
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_minibands *mb = NULL;
  if (ew_catalogue_load(NULL, &cat, &err)) return ew_cli_report(&err);
  if (ew_stack_read_file(a.stack, cat, &st, &err) || ew_minibands_create(&mb, &err) ||
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
