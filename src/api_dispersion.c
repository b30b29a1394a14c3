/* api_dispersion.c — the public face of the k·p hole dispersion (epiwell.h): argument checks
 * in front of dispersion.c and dispersion_output.c. */
#include <math.h>
#include <stdlib.h>

#include "dispersion.h"
#include "error.h"

void ew_dispersion_options_default(ew_dispersion_options *o) {
  if (!o) return;
  o->model = 4;
  o->direction = 100;
  o->axial = 0;
  o->kmax_inv_nm = 0.5;
  o->points = 51;
  o->grid_step_nm = 0.0;
  o->symmetrised = 0;
}

ew_status ew_dispersion_create(ew_dispersion **out, ew_error *err) {
  if (!out) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_dispersion_create: out is NULL");
  *out = calloc(1, sizeof **out);
  return *out ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (dispersion)");
}

void ew_dispersion_free(ew_dispersion *d) {
  if (!d) return;
  ew_dispersion_clear(d);
  free(d);
}

ew_status ew_dispersion_compute(ew_dispersion *d, const ew_stack *stack,
                                const ew_dispersion_options *o, ew_error *err) {
  if (!d || !stack)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_dispersion_compute: NULL argument");
  ew_dispersion_options def;
  ew_dispersion_options_default(&def);
  return ew_dispersion_run(d, stack, o ? o : &def, err);
}

size_t ew_dispersion_point_count(const ew_dispersion *d) { return d ? d->points : 0; }
size_t ew_dispersion_subband_count(const ew_dispersion *d) { return d ? d->subbands : 0; }

double ew_dispersion_k_inv_nm(const ew_dispersion *d, size_t i) {
  return d && i < d->points ? d->k_inv_nm[i] : NAN;
}

const char *ew_dispersion_label(const ew_dispersion *d, size_t j) {
  return d && j < d->subbands ? d->label[j] : NULL;
}

const char *ew_dispersion_band(const ew_dispersion *d, size_t j) {
  return d && j < d->subbands ? ew_dispersion_character_name(d->character[j]) : NULL;
}

double ew_dispersion_energy_eV(const ew_dispersion *d, size_t j, size_t i) {
  return d && j < d->subbands && i < d->points ? d->energy_eV[j * d->points + i] : NAN;
}

double ew_dispersion_branch_eV(const ew_dispersion *d, size_t j, int branch, size_t i) {
  if (!d || j >= d->subbands || i >= d->points || (branch != 0 && branch != 1)) return NAN;
  return d->branch_eV[(2 * j + (size_t)branch) * d->points + i];
}

size_t ew_dispersion_certified(const ew_dispersion *d, size_t i) {
  return d && i < d->points ? d->certified[i] : 0;
}

const char *ew_dispersion_model(const ew_dispersion *d) {
  if (!d || !d->points) return NULL;
  return d->model == EW_KP_8BAND ? "8band" : d->model == EW_KP_6BAND ? "6band" : "4band";
}

const char *ew_dispersion_direction(const ew_dispersion *d) {
  if (!d || !d->points) return NULL;
  return d->direction == 110 ? "110" : "100";
}

double ew_dispersion_weight(const ew_dispersion *d, size_t j, int c) {
  return d && j < d->subbands && c >= 0 && c < EW_DISP_CHARACTERS
             ? d->weight[EW_DISP_CHARACTERS * j + (size_t)c]
             : NAN;
}
