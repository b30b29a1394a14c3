/* gain_output.c — the gain model's JSON, CSV and picture (epiwell.h). */
#include <stdlib.h>

#include "error.h"
#include "gain.h"
#include "json_writer.h"
#include "plot.h"

static void num_array(ew_json *j, const char *key, const double *v, size_t n) {
  ew_json_key(j, key);
  ew_json_begin_array(j);
  for (size_t i = 0; i < n; i++) ew_json_num(j, v[i]);
  ew_json_end_array(j);
}

ew_status ew_gain_write_json(const ew_gain *g, FILE *out, ew_error *err) {
  if (!g || !out || !g->nd)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_gain_write_json: nothing computed");
  ew_json j;
  ew_json_init(&j, out);
  ew_json_begin_object(&j);
  ew_json_key_str(&j, "model", g->o.model == 6 ? "6band" : "4band");
  ew_json_key_str(&j, "lineshape", ew_gain_lineshape(g));
  ew_json_key_num(&j, "linewidth_meV", g->o.linewidth_meV);
  ew_json_key_num(&j, "temperature_K", g->temperature_K);
  ew_json_key_str(&j, "well_layer", g->well_layer);
  ew_json_key_num(&j, "well_nm", g->well_nm);
  ew_json_key_num(&j, "Ep_eV", g->Ep_eV);
  ew_json_key_num(&j, "refractive_index", g->refractive_index);
  ew_json_key_num(&j, "edge_eV", g->edge_eV);
  ew_json_key_num(&j, "transparency_density_cm2", g->transparency_cm2);
  ew_json_key(&j, "densities");
  ew_json_begin_array(&j);
  for (size_t d = 0; d < g->nd; d++) {
    size_t at = d * g->ne_pts;
    ew_json_newline(&j);
    ew_json_begin_object(&j);
    ew_json_key_num(&j, "density_cm2", g->density_cm2[d]);
    ew_json_key_num(&j, "fermi_separation_eV", g->fermi_c_eV[d] - g->fermi_v_eV[d]);
    num_array(&j, "energy_eV", g->energy_eV, g->ne_pts);
    num_array(&j, "gain_te_cm", g->gain_te + at, g->ne_pts);
    num_array(&j, "gain_tm_cm", g->gain_tm + at, g->ne_pts);
    num_array(&j, "spontaneous", g->spont + at, g->ne_pts);
    /* after the six keys: the levels and the peak */
    ew_json_key_num(&j, "fermi_electron_eV", g->fermi_c_eV[d]);
    ew_json_key_num(&j, "fermi_hole_eV", g->fermi_v_eV[d]);
    ew_json_key_num(&j, "peak_gain_te_cm", g->peak_te[d]);
    ew_json_key_num(&j, "peak_energy_te_eV", g->peak_te_eV[d]);
    ew_json_key_num(&j, "peak_gain_tm_cm", g->peak_tm[d]);
    ew_json_end_object(&j);
  }
  ew_json_end_array(&j);
  ew_json_end_object(&j);
  if (ew_json_finish(&j)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the gain JSON failed");
  return EW_OK;
}

ew_status ew_gain_write_csv(const ew_gain *g, FILE *out, ew_error *err) {
  if (!g || !out || !g->nd)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_gain_write_csv: nothing computed");
  fputs("density_cm2,fermi_separation_eV,energy_eV,gain_te_cm,gain_tm_cm,spontaneous\n", out);
  for (size_t d = 0; d < g->nd; d++)
    for (size_t i = 0; i < g->ne_pts; i++) {
      size_t at = d * g->ne_pts + i;
      fprintf(out, "%.10g,%.10g,%.10g,%.10g,%.10g,%.10g\n", g->density_cm2[d],
              g->fermi_c_eV[d] - g->fermi_v_eV[d], g->energy_eV[i], g->gain_te[at],
              g->gain_tm[at], g->spont[at]);
    }
  if (ferror(out)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the gain CSV failed");
  return EW_OK;
}

/* TE gain against photon energy, one curve per density */
ew_status ew_gain_write_plot(const ew_gain *g, const char *path, ew_error *err) {
  if (!g || !path || !g->nd)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_gain_write_plot: nothing computed");
  const double **y = malloc(g->nd * sizeof *y);
  char (*names)[40] = malloc(g->nd * sizeof *names);
  const char **np = malloc(g->nd * sizeof *np);
  ew_status rc = EW_OK;
  if (!y || !names || !np) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (gain picture)");
  } else {
    for (size_t d = 0; d < g->nd; d++) {
      y[d] = g->gain_te + d * g->ne_pts;
      snprintf(names[d], sizeof names[d], "%.3g cm^-2", g->density_cm2[d]);
      np[d] = names[d];
    }
    char title[96];
    snprintf(title, sizeof title, "TE material gain, %s k·p holes, %s %.3g meV",
             g->o.model == 6 ? "6-band" : "4-band", ew_gain_lineshape(g), g->o.linewidth_meV);
    rc = ew_plot_xy(path, title, "photon energy (eV)", "gain (1/cm)", g->ne_pts, g->energy_eV,
                    g->nd, (const double *const *)y, np, err);
  }
  free(y);
  free(names);
  free(np);
  return rc;
}
