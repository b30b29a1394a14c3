/* api_hole_absorption.c — the public face of the hole intersubband absorption (epiwell.h):
 * options, accessors, JSON, CSV and the picture, in front of hole_absorption.c. */
#include <math.h>
#include <stdlib.h>

#include "error.h"
#include "hole_absorption.h"
#include "json_writer.h"
#include "plot.h"

void ew_hole_absorption_options_default(ew_hole_absorption_options *o) {
  if (!o) return;
  o->model = 4;
  o->density_cm2 = 0.0;
  o->linewidth_meV = 10.0;
  o->lorentzian = 0;
  o->refractive_index = 3.3; /* GaAs near 10 µm, ~3.3 (from memory) */
  o->energy_from_eV = 0.0;
  o->energy_to_eV = 0.0;
  o->energy_step_eV = 0.001;
  o->kmax_inv_nm = 0.8;
  o->k_points = 65;
  o->grid_step_nm = 0.0;
}

ew_status ew_hole_absorption_create(ew_hole_absorption **out, ew_error *err) {
  if (!out) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_hole_absorption_create: out is NULL");
  *out = calloc(1, sizeof **out);
  return *out ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (hole absorption)");
}

void ew_hole_absorption_free(ew_hole_absorption *h) {
  if (!h) return;
  ew_hole_absorption_clear(h);
  free(h);
}

ew_status ew_hole_absorption_compute(ew_hole_absorption *h, const ew_stack *stack,
                                     const ew_hole_absorption_options *o, ew_error *err) {
  if (!h || !stack || !o)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_hole_absorption_compute: NULL argument "
                   "(the options carry the density)");
  return ew_hole_absorption_run(h, stack, o, err);
}

#define DONE(h) ((h) && (h)->np)
double ew_hole_absorption_density_cm2(const ew_hole_absorption *h) { return DONE(h) ? h->o.density_cm2 : NAN; }
double ew_hole_absorption_fermi_eV(const ew_hole_absorption *h) { return DONE(h) ? h->fermi_eV : NAN; }
double ew_hole_absorption_well_nm(const ew_hole_absorption *h) { return DONE(h) ? h->well_nm : NAN; }
const char *ew_hole_absorption_lineshape(const ew_hole_absorption *h) {
  return DONE(h) ? (h->o.lorentzian ? "lorentzian" : "sech") : NULL;
}
size_t ew_hole_absorption_energy_count(const ew_hole_absorption *h) { return DONE(h) ? h->np : 0; }
double ew_hole_absorption_energy_eV(const ew_hole_absorption *h, size_t i) {
  return DONE(h) && i < h->np ? h->energy_eV[i] : NAN;
}
double ew_hole_absorption_te_cm(const ew_hole_absorption *h, size_t i) {
  return DONE(h) && i < h->np ? h->alpha_te[i] : NAN;
}
double ew_hole_absorption_tm_cm(const ew_hole_absorption *h, size_t i) {
  return DONE(h) && i < h->np ? h->alpha_tm[i] : NAN;
}
size_t ew_hole_absorption_subband_count(const ew_hole_absorption *h) { return DONE(h) ? h->ns : 0; }
const char *ew_hole_absorption_label(const ew_hole_absorption *h, size_t j) {
  return DONE(h) && j < h->ns ? h->label[j] : NULL;
}
size_t ew_hole_absorption_point_count(const ew_hole_absorption *h) { return DONE(h) ? h->nk : 0; }
double ew_hole_absorption_k_inv_nm(const ew_hole_absorption *h, size_t i) {
  return DONE(h) && i < h->nk ? h->k_inv_nm[i] : NAN;
}
double ew_hole_absorption_subband_eV(const ew_hole_absorption *h, size_t j, size_t i) {
  return DONE(h) && j < h->ns && i < h->nk ? h->h_eV[j * h->nk + i] : NAN;
}
size_t ew_hole_absorption_transition_count(const ew_hole_absorption *h) { return DONE(h) ? h->nt : 0; }
size_t ew_hole_absorption_transition_from(const ew_hole_absorption *h, size_t t) {
  return DONE(h) && t < h->nt ? h->t_u[t] : (size_t)-1;
}
size_t ew_hole_absorption_transition_to(const ew_hole_absorption *h, size_t t) {
  return DONE(h) && t < h->nt ? h->t_l[t] : (size_t)-1;
}
double ew_hole_absorption_transition_eV(const ew_hole_absorption *h, size_t t) {
  return DONE(h) && t < h->nt ? h->h_eV[h->t_u[t] * h->nk] - h->h_eV[h->t_l[t] * h->nk] : NAN;
}
#define PER_TI(name, arr)                                                                  \
  double name(const ew_hole_absorption *h, size_t t, size_t i) {                           \
    return DONE(h) && t < h->nt && i < h->nk ? h->arr[t * h->nk + i] : NAN;                \
  }
PER_TI(ew_hole_absorption_te_eV2nm2, te2)
PER_TI(ew_hole_absorption_tm_eV2nm2, tm2)
PER_TI(ew_hole_absorption_dipole_tm_eV2nm2, dip2)

static double peak(const ew_hole_absorption *h, const double *a) {
  if (!DONE(h)) return NAN;
  size_t best = 0;
  for (size_t i = 1; i < h->np; i++)
    if (a[i] > a[best]) best = i;
  return h->energy_eV[best];
}
double ew_hole_absorption_peak_te_eV(const ew_hole_absorption *h) { return DONE(h) ? peak(h, h->alpha_te) : NAN; }
double ew_hole_absorption_peak_tm_eV(const ew_hole_absorption *h) { return DONE(h) ? peak(h, h->alpha_tm) : NAN; }

static void num_array(ew_json *j, const char *key, const double *v, size_t n) {
  ew_json_key(j, key);
  ew_json_begin_array(j);
  for (size_t i = 0; i < n; i++) ew_json_num(j, v[i]);
  ew_json_end_array(j);
}

ew_status ew_hole_absorption_write_json(const ew_hole_absorption *h, FILE *out, ew_error *err) {
  if (!DONE(h) || !out)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_hole_absorption_write_json: nothing computed");
  ew_json j;
  ew_json_init(&j, out);
  ew_json_begin_object(&j);
  ew_json_key_str(&j, "model", h->o.model == 6 ? "6band" : "4band");
  ew_json_key_num(&j, "temperature_K", h->temperature_K);
  ew_json_key_num(&j, "density_cm2", h->o.density_cm2);
  ew_json_key_num(&j, "fermi_eV", h->fermi_eV);
  ew_json_key_num(&j, "well_nm", h->well_nm);
  ew_json_key_num(&j, "linewidth_meV", h->o.linewidth_meV);
  ew_json_key_str(&j, "lineshape", ew_hole_absorption_lineshape(h));
  num_array(&j, "energy_eV", h->energy_eV, h->np);
  num_array(&j, "absorption_te_cm", h->alpha_te, h->np);
  num_array(&j, "absorption_tm_cm", h->alpha_tm, h->np);
  ew_json_key(&j, "transitions");
  ew_json_begin_array(&j);
  for (size_t t = 0; t < h->nt; t++) {
    ew_json_newline(&j);
    ew_json_begin_object(&j);
    ew_json_key_str(&j, "from", h->label[h->t_u[t]]);
    ew_json_key_str(&j, "to", h->label[h->t_l[t]]);
    ew_json_key_num(&j, "energy_eV", ew_hole_absorption_transition_eV(h, t));
    ew_json_key_num(&j, "te_eV2nm2", h->te2[t * h->nk]);
    ew_json_key_num(&j, "tm_eV2nm2", h->tm2[t * h->nk]);
    ew_json_end_object(&j);
  }
  ew_json_end_array(&j);
  ew_json_end_object(&j);
  if (ew_json_finish(&j))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the hole absorption JSON failed");
  return EW_OK;
}

ew_status ew_hole_absorption_write_csv(const ew_hole_absorption *h, FILE *out, ew_error *err) {
  if (!DONE(h) || !out)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_hole_absorption_write_csv: nothing computed");
  fputs("energy_eV,absorption_te_cm,absorption_tm_cm\n", out);
  for (size_t i = 0; i < h->np; i++)
    fprintf(out, "%.10g,%.10g,%.10g\n", h->energy_eV[i], h->alpha_te[i], h->alpha_tm[i]);
  if (ferror(out)) return ew_fail(err, EW_ERR_IO, NULL, 0, "writing the hole absorption CSV failed");
  return EW_OK;
}

ew_status ew_hole_absorption_write_plot(const ew_hole_absorption *h, const char *path,
                                        ew_error *err) {
  if (!DONE(h) || !path)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_hole_absorption_write_plot: nothing computed");
  const double *y[2] = {h->alpha_te, h->alpha_tm};
  const char *names[2] = {"TE", "TM"};
  char title[120];
  snprintf(title, sizeof title, "hole intersubband absorption, %s k·p, %.3g cm^-2, %s %.3g meV",
           h->o.model == 6 ? "6-band" : "4-band", h->o.density_cm2,
           ew_hole_absorption_lineshape(h), h->o.linewidth_meV);
  return ew_plot_xy(path, title, "photon energy (eV)", "absorption (1/cm)", h->np, h->energy_eV,
                    2, y, names, err);
}
