/* api_gain.c — the public face of the gain model (epiwell.h): options, argument checks and
 * accessors in front of gain.c. */
#include <math.h>
#include <stdlib.h>

#include "error.h"
#include "gain.h"

void ew_gain_options_default(ew_gain_options *o) {
  if (!o) return;
  o->model = 4;
  o->density_from_cm2 = 1e12;
  o->density_to_cm2 = 5e12;
  o->density_step_cm2 = 1e12;
  o->linewidth_meV = 10.0;
  o->lorentzian = 0;
  o->refractive_index = 3.6; /* GaAs near its gap, ~3.6 (from memory; common practice) */
  o->energy_from_eV = 0.0;
  o->energy_to_eV = 0.0;
  o->energy_step_eV = 0.001;
  o->kmax_inv_nm = 0.8;
  o->k_points = 65;
  o->grid_step_nm = 0.0;
}

ew_status ew_gain_create(ew_gain **out, ew_error *err) {
  if (!out) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_gain_create: out is NULL");
  *out = calloc(1, sizeof **out);
  return *out ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (gain)");
}

void ew_gain_free(ew_gain *g) {
  if (!g) return;
  ew_gain_clear(g);
  free(g);
}

ew_status ew_gain_compute(ew_gain *g, const ew_stack *stack, const ew_gain_options *o,
                          ew_error *err) {
  if (!g || !stack) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_gain_compute: NULL argument");
  ew_gain_options def;
  ew_gain_options_default(&def);
  return ew_gain_run(g, stack, o ? o : &def, err);
}

size_t ew_gain_density_count(const ew_gain *g) { return g ? g->nd : 0; }
size_t ew_gain_energy_count(const ew_gain *g) { return g && g->nd ? g->ne_pts : 0; }

#define PER_D(name, expr)                                                                  \
  double name(const ew_gain *g, size_t d) { return g && d < g->nd ? (expr) : NAN; }
PER_D(ew_gain_density_cm2, g->density_cm2[d])
PER_D(ew_gain_fermi_electron_eV, g->fermi_c_eV[d])
PER_D(ew_gain_fermi_hole_eV, g->fermi_v_eV[d])
PER_D(ew_gain_fermi_separation_eV, g->fermi_c_eV[d] - g->fermi_v_eV[d])
PER_D(ew_gain_peak_te_cm, g->peak_te[d])
PER_D(ew_gain_peak_te_energy_eV, g->peak_te_eV[d])
PER_D(ew_gain_peak_tm_cm, g->peak_tm[d])

double ew_gain_energy_eV(const ew_gain *g, size_t i) {
  return g && g->nd && i < g->ne_pts ? g->energy_eV[i] : NAN;
}

#define PER_DI(name, arr)                                                                  \
  double name(const ew_gain *g, size_t d, size_t i) {                                      \
    return g && d < g->nd && i < g->ne_pts ? g->arr[d * g->ne_pts + i] : NAN;              \
  }
PER_DI(ew_gain_te_cm, gain_te)
PER_DI(ew_gain_tm_cm, gain_tm)
PER_DI(ew_gain_spontaneous, spont)

double ew_gain_transparency_density_cm2(const ew_gain *g) { return g && g->nd ? g->transparency_cm2 : NAN; }
double ew_gain_edge_eV(const ew_gain *g) { return g && g->nd ? g->edge_eV : NAN; }
double ew_gain_well_nm(const ew_gain *g) { return g && g->nd ? g->well_nm : NAN; }
double ew_gain_Ep_eV(const ew_gain *g) { return g && g->nd ? g->Ep_eV : NAN; }
const char *ew_gain_lineshape(const ew_gain *g) {
  return g && g->nd ? (g->o.lorentzian ? "lorentzian" : "sech") : NULL;
}
