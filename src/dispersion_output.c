/* dispersion_output.c — the dispersion's JSON, CSV and picture (epiwell.h). */
#include <stdlib.h>

#include "dispersion.h"
#include "error.h"
#include "json_writer.h"
#include "plot.h"

ew_status ew_dispersion_write_json(const ew_dispersion *d, FILE *out, ew_error *err) {
  if (!d || !out || !d->points)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_dispersion_write_json: nothing computed");
  ew_json j;
  ew_json_init(&j, out);
  ew_json_begin_object(&j);
  ew_json_key_str(&j, "model", ew_dispersion_model(d));
  ew_json_key_str(&j, "direction", ew_dispersion_direction(d));
  ew_json_key(&j, "k_inv_nm");
  ew_json_begin_array(&j);
  for (size_t i = 0; i < d->points; i++) ew_json_num(&j, d->k_inv_nm[i]);
  ew_json_end_array(&j);
  ew_json_key(&j, "subbands");
  ew_json_begin_array(&j);
  for (size_t s = 0; s < d->subbands; s++) {
    ew_json_newline(&j);
    ew_json_begin_object(&j);
    ew_json_key_str(&j, "label", d->label[s]);
    ew_json_key_str(&j, "band", ew_dispersion_character_name(d->character[s]));
    ew_json_key(&j, "energy_eV");
    ew_json_begin_array(&j);
    for (size_t i = 0; i < d->points; i++) ew_json_num(&j, d->energy_eV[s * d->points + i]);
    ew_json_end_array(&j);
    ew_json_key_num(&j, "dos_mass_m0", ew_dispersion_dos_mass_m0(d, s, EW_DOS_MASS_WINDOW_EV));
    ew_json_end_object(&j);
  }
  ew_json_end_array(&j);
  ew_json_end_object(&j);
  if (ew_json_finish(&j))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the dispersion JSON failed");
  return EW_OK;
}

ew_status ew_dispersion_write_csv(const ew_dispersion *d, FILE *out, ew_error *err) {
  if (!d || !out || !d->points)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_dispersion_write_csv: nothing computed");
  fputs("k_inv_nm", out);
  for (size_t s = 0; s < d->subbands; s++) fprintf(out, ",%s_eV", d->label[s]);
  fputs("\n", out);
  for (size_t i = 0; i < d->points; i++) {
    fprintf(out, "%.10g", d->k_inv_nm[i]);
    for (size_t s = 0; s < d->subbands; s++) fprintf(out, ",%.10g", d->energy_eV[s * d->points + i]);
    fputs("\n", out);
  }
  if (ferror(out)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the dispersion CSV failed");
  return EW_OK;
}

ew_status ew_dispersion_write_plot(const ew_dispersion *d, const char *path, ew_error *err) {
  if (!d || !path || !d->points)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_dispersion_write_plot: nothing computed");
  const double **y = malloc((d->subbands ? d->subbands : 1) * sizeof *y);
  const char **names = malloc((d->subbands ? d->subbands : 1) * sizeof *names);
  if (!y || !names) {
    free(y);
    free(names);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (dispersion picture)");
  }
  for (size_t s = 0; s < d->subbands; s++) {
    y[s] = d->energy_eV + s * d->points;
    names[s] = d->label[s];
  }
  char title[96];
  snprintf(title, sizeof title, "%s, %s k·p, k∥ along [%s]%s",
           d->model == EW_KP_8BAND ? "Subbands" : "Hole subbands", ew_dispersion_model(d),
           ew_dispersion_direction(d), d->axial ? " (axial)" : "");
  ew_status rc = ew_plot_xy(path, title, "k∥ (1/nm)", "energy (eV)", d->points, d->k_inv_nm,
                            d->subbands, (const double *const *)y, (const char *const *)names,
                            err);
  free(y);
  free(names);
  return rc;
}
