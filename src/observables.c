/* observables.c — overlaps, dipoles and oscillator strengths (see observables.h). */
#include "observables.h"

#include "constants.h"

double ew_obs_overlap(const ew_grid *g, const double *a, const double *b) {
  double s = 0.0;
  for (size_t i = 0; i < g->n; i++) s += g->w[i] * a[i] * b[i];
  return s;
}

double ew_obs_dipole(const ew_grid *g, const double *a, const double *b) {
  double s = 0.0;
  for (size_t i = 0; i < g->n; i++) s += g->w[i] * g->z[i] * a[i] * b[i];
  return s;
}

double ew_obs_inverse_mass(const ew_grid *g, ew_band band, const double *a) {
  return ew_obs_inverse_mass_M(g, g->cell_mass[band], a);
}

double ew_obs_inverse_mass_M(const ew_grid *g, const double *M, const double *a) {
  double s = 0.0;
  for (size_t c = 1; c < g->n; c++) s += g->h[c] * g->h[c] / M[c] * a[c - 1] * a[c];
  return s;
}

double ew_obs_oscillator_strength(double dE_eV, double dipole_nm, double inverse_mass) {
  return dE_eV * dipole_nm * dipole_nm / (EW_HB2M0_EVNM2 * inverse_mass);
}
