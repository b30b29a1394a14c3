/* api_minibands.c — the public face of the superlattice minibands (epiwell.h): argument
 * checks in front of miniband.c, accessors, and the JSON, CSV and picture writers. */
#include <math.h>
#include <stdlib.h>

#include "error.h"
#include "json_writer.h"
#include "miniband.h"
#include "plot.h"

ew_status ew_minibands_create(ew_minibands **out, ew_error *err) {
  if (!out) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_create: out is NULL");
  *out = calloc(1, sizeof **out);
  return *out ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands)");
}

void ew_minibands_free(ew_minibands *mb) {
  if (!mb) return;
  ew_minibands_clear(mb);
  free(mb);
}

ew_status ew_minibands_compute(ew_minibands *mb, const ew_stack *stack, size_t points,
                               double grid_step_nm, ew_error *err) {
  if (!mb || !stack)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_compute: NULL argument");
  return ew_minibands_run(mb, stack, points, grid_step_nm, err);
}

ew_status ew_minibands_compute_kp(ew_minibands *mb, const ew_stack *stack, int bands,
                                  size_t points, double grid_step_nm, double kmax_inv_nm,
                                  size_t kpoints, ew_error *err) {
  if (!mb || !stack)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_compute_kp: NULL argument");
  return ew_minibands_run_kp(mb, stack, bands, points, grid_step_nm, kmax_inv_nm, kpoints, err);
}

const char *ew_minibands_model(const ew_minibands *mb) {
  if (!mb || !mb->points) return NULL;
  return mb->model == 8 ? "8band" : mb->model == 6 ? "6band" : mb->model == 4 ? "4band" : "1band";
}
double ew_minibands_gap_eV(const ew_minibands *mb) { return mb && mb->points ? mb->gap_eV : NAN; }
size_t ew_minibands_k_count(const ew_minibands *mb) { return mb ? mb->kpoints : 0; }
double ew_minibands_k_inv_nm(const ew_minibands *mb, size_t i) {
  return mb && i < mb->kpoints ? mb->k_inv_nm[i] : NAN;
}
double ew_minibands_energy_k_eV(const ew_minibands *mb, size_t j, size_t i) {
  return mb && j < mb->count && i < mb->kpoints ? mb->energy_k_eV[j * mb->kpoints + i] : NAN;
}

double ew_minibands_period_nm(const ew_minibands *mb) { return mb && mb->points ? mb->period_nm : NAN; }
double ew_minibands_grid_step_nm(const ew_minibands *mb) { return mb && mb->points ? mb->step_nm : NAN; }
size_t ew_minibands_point_count(const ew_minibands *mb) { return mb ? mb->points : 0; }
size_t ew_minibands_count(const ew_minibands *mb) { return mb ? mb->count : 0; }

double ew_minibands_q_inv_nm(const ew_minibands *mb, size_t i) {
  return mb && i < mb->points ? mb->q_inv_nm[i] : NAN;
}

const char *ew_minibands_band(const ew_minibands *mb, size_t j) {
  if (!mb || j >= mb->count) return NULL;
  return mb->kp_band ? mb->kp_band[j] : ew_band_name(mb->band[j]);
}
const char *ew_minibands_label(const ew_minibands *mb, size_t j) {
  return mb && j < mb->count ? mb->label[j] : NULL;
}
int ew_minibands_index(const ew_minibands *mb, size_t j) {
  return mb && j < mb->count ? mb->index[j] : 0;
}

#define PER_BAND(name, member)                                                             \
  double ew_minibands_##name(const ew_minibands *mb, size_t j) {                           \
    return mb && j < mb->count ? mb->member[j] : NAN;                                      \
  }
PER_BAND(bottom_eV, bottom_eV)
PER_BAND(top_eV, top_eV)
PER_BAND(width_eV, width_eV)
PER_BAND(mass_m0, mass_m0)
PER_BAND(bound_eV, bound_eV)
#undef PER_BAND

double ew_minibands_energy_eV(const ew_minibands *mb, size_t j, size_t i) {
  return mb && j < mb->count && i < mb->points ? mb->energy_eV[j * mb->points + i] : NAN;
}

double ew_minibands_window_top_eV(const ew_minibands *mb, ew_band band) {
  return mb && mb->points && (int)band >= 0 && band < EW_BAND_COUNT ? mb->window_top_eV[band] : NAN;
}

/* ---- warnings ------------------------------------------------------------------------- */
static const char warn_code[] = "miniband-doping-ignored";
static const char warn_text[] = "the stack is doped; minibands are computed for flat bands (no "
                                "charge, no self-consistent potential)";

size_t ew_minibands_warning_count(const ew_minibands *mb) {
  return mb && mb->points && mb->doping_ignored ? 1 : 0;
}
const char *ew_minibands_warning(const ew_minibands *mb, size_t i) {
  return i < ew_minibands_warning_count(mb) ? warn_code : NULL;
}
const char *ew_minibands_warning_text(const ew_minibands *mb, size_t i) {
  return i < ew_minibands_warning_count(mb) ? warn_text : NULL;
}

const char *ew_minibands_electron_mass(const ew_minibands *mb) {
  if (!mb || !mb->points) return NULL;
  return mb->model > 1 ? "kp" : mb->kane ? "kane" : "parabolic";
}

/* ---- writers ---------------------------------------------------------------------------- */
static void json_numbers(ew_json *j, const char *key, const double *v, size_t n) {
  ew_json_key(j, key);
  ew_json_begin_array(j);
  for (size_t i = 0; i < n; i++) ew_json_num(j, v[i]);
  ew_json_end_array(j);
}

ew_status ew_minibands_write_json(const ew_minibands *mb, FILE *out, ew_error *err) {
  if (!mb || !out || !mb->points)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_write_json: nothing computed");
  ew_json j;
  ew_json_init(&j, out);
  ew_json_begin_object(&j);
  ew_json_key_num(&j, "period_nm", mb->period_nm);
  ew_json_key_num(&j, "grid_step_nm", mb->step_nm);
  ew_json_key_str(&j, "electron_mass", ew_minibands_electron_mass(mb));
  ew_json_key(&j, "warnings");
  ew_json_begin_array(&j);
  for (size_t w = 0; w < ew_minibands_warning_count(mb); w++) {
    ew_json_begin_object(&j);
    ew_json_key_str(&j, "code", ew_minibands_warning(mb, w));
    ew_json_key_str(&j, "message", ew_minibands_warning_text(mb, w));
    ew_json_end_object(&j);
  }
  ew_json_end_array(&j);
  ew_json_key(&j, "minibands");
  ew_json_begin_array(&j);
  for (size_t s = 0; s < mb->count; s++) {
    ew_json_newline(&j);
    ew_json_begin_object(&j);
    ew_json_key_str(&j, "band", ew_minibands_band(mb, s));
    ew_json_key_int(&j, "index", mb->index[s]);
    ew_json_key_str(&j, "label", mb->label[s]);
    ew_json_key_num(&j, "bottom_eV", mb->bottom_eV[s]);
    ew_json_key_num(&j, "top_eV", mb->top_eV[s]);
    ew_json_key_num(&j, "width_eV", mb->width_eV[s]);
    ew_json_key_num(&j, "mass_m0", mb->mass_m0[s]);
    ew_json_key_num(&j, "bound_eV", mb->bound_eV[s]);
    json_numbers(&j, "q_inv_nm", mb->q_inv_nm, mb->points);
    json_numbers(&j, "energy_eV", mb->energy_eV + s * mb->points, mb->points);
    if (mb->model > 1) json_numbers(&j, "energy_k_eV", mb->energy_k_eV + s * mb->kpoints, mb->kpoints);
    ew_json_end_object(&j);
  }
  ew_json_end_array(&j);
  ew_json_key_str(&j, "model", ew_minibands_model(mb));
  if (mb->model > 1) {
    ew_json_key_num(&j, "gap_eV", mb->gap_eV);
    json_numbers(&j, "k_inv_nm", mb->k_inv_nm, mb->kpoints);
  }
  ew_json_end_object(&j);
  if (ew_json_finish(&j)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the minibands JSON failed");
  return EW_OK;
}

ew_status ew_minibands_write_csv(const ew_minibands *mb, FILE *out, ew_error *err) {
  if (!mb || !out || !mb->points)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_write_csv: nothing computed");
  fputs("q_inv_nm", out);
  for (size_t s = 0; s < mb->count; s++) fprintf(out, ",%s_eV", mb->label[s]);
  fputs("\n", out);
  for (size_t i = 0; i < mb->points; i++) {
    fprintf(out, "%.10g", mb->q_inv_nm[i]);
    for (size_t s = 0; s < mb->count; s++) fprintf(out, ",%.10g", mb->energy_eV[s * mb->points + i]);
    fputs("\n", out);
  }
  if (ferror(out)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the minibands CSV failed");
  return EW_OK;
}

ew_status ew_minibands_write_csv_k(const ew_minibands *mb, FILE *out, ew_error *err) {
  if (!mb || !out || !mb->points || !mb->kpoints)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_write_csv_k: no in-plane samples");
  fputs("k_inv_nm", out);
  for (size_t s = 0; s < mb->count; s++) fprintf(out, ",%s_eV", mb->label[s]);
  fputs("\n", out);
  for (size_t i = 0; i < mb->kpoints; i++) {
    fprintf(out, "%.10g", mb->k_inv_nm[i]);
    for (size_t s = 0; s < mb->count; s++) fprintf(out, ",%.10g", mb->energy_k_eV[s * mb->kpoints + i]);
    fputs("\n", out);
  }
  if (ferror(out)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the in-plane CSV failed");
  return EW_OK;
}

ew_status ew_minibands_write_plot(const ew_minibands *mb, const char *path, ew_error *err) {
  if (!mb || !path || !mb->points)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_minibands_write_plot: nothing computed");
  const double **y = malloc(mb->count * sizeof *y);
  const char **names = malloc(mb->count * sizeof *names);
  if (!y || !names) {
    free(y);
    free(names);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (minibands picture)");
  }
  for (size_t s = 0; s < mb->count; s++) {
    y[s] = mb->energy_eV + s * mb->points;
    names[s] = mb->label[s];
  }
  char title[96];
  snprintf(title, sizeof title, "Minibands, period %g nm", mb->period_nm);
  /* electron and hole minibands lie a gap apart: the broken axis of the sweep charts */
  ew_xy_chart c = {title, "q (1/nm)", "energy (eV)", mb->points, mb->count, mb->q_inv_nm,
                   (const double *const *)y, (const char *const *)names, 1};
  ew_status rc = ew_plot_xy_chart(path, &c, err);
  free(y);
  free(names);
  return rc;
}
