/* lines.c — from the states of a result to its optical lines (see lines.h). */
#include "lines.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "observables.h"

/* a new zeroed line at the end of r->lines (capacity *cap, doubled as needed); NULL when out
 * of memory */
static ew_line *new_line(ew_result *r, size_t *cap) {
  if (r->n_lines + 1 > *cap) {
    size_t nc = *cap ? *cap : 16;
    while (nc < r->n_lines + 1) nc *= 2;
    ew_line *q = realloc(r->lines, nc * sizeof *q);
    if (!q) return NULL;
    r->lines = q;
    *cap = nc;
  }
  ew_line *ln = &r->lines[r->n_lines++];
  memset(ln, 0, sizeof *ln);
  return ln;
}

/* intersubband: lower state among the lowest K of its band, upper any higher state */
static int intersubband(ew_result *r, size_t *cap, const size_t *first, size_t K) {
  const ew_grid *g = r->grid;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    for (size_t i = 0; i < r->band_count[b] && i < K; i++) {
      size_t si = first[b] + i;
      const double *pi = r->psi + si * g->n;
      double invm = r->mean_inv_mass[si]; /* Kane: the masses at the lower state's energy */
      for (size_t j = i + 1; j < r->band_count[b]; j++) {
        size_t sj = first[b] + j;
        ew_line *ln = new_line(r, cap);
        if (!ln) return 0;
        ln->kind = EW_LINE_INTERSUBBAND;
        ln->upper = sj;
        ln->lower = si;
        ln->energy_eV = fabs(r->states[sj].energy_eV - r->states[si].energy_eV);
        /* two degenerate levels (identical decoupled wells) have no line to speak of: no
         * wavelength (NaN: null in JSON, empty in CSV, "-" in the table), not 1/0 */
        ln->wavelength_nm = ln->energy_eV > 0.0 ? EW_HC_EVNM / ln->energy_eV : NAN;
        ln->dipole_nm = fabs(ew_obs_dipole(g, pi, r->psi + sj * g->n));
        ln->oscillator_strength = ew_obs_oscillator_strength(ln->energy_eV, ln->dipole_nm, invm);
        ln->allowed = 1;
      }
    }
  }
  return 1;
}

/* interband: e_n with hh_m and lh_m, n and m among the lowest K */
static int interband(ew_result *r, size_t *cap, const size_t *first, size_t K) {
  const ew_grid *g = r->grid;
  for (size_t i = 0; i < r->band_count[EW_BAND_E] && i < K; i++) {
    for (int b = EW_BAND_HH; b <= EW_BAND_LH; b++) {
      for (size_t j = 0; j < r->band_count[b] && j < K; j++) {
        size_t se = first[EW_BAND_E] + i, sh = first[b] + j;
        ew_line *ln = new_line(r, cap);
        if (!ln) return 0;
        ln->kind = EW_LINE_INTERBAND;
        ln->upper = se;
        ln->lower = sh;
        ln->energy_eV = r->states[se].energy_eV - r->states[sh].energy_eV;
        ln->wavelength_nm = EW_HC_EVNM / ln->energy_eV;
        double ov = ew_obs_overlap(g, r->psi + se * g->n, r->psi + sh * g->n);
        ln->overlap = ov * ov;
        ln->allowed = ln->overlap >= 1e-3;
      }
    }
  }
  return 1;
}

ew_status ew_lines_build(ew_result *r, ew_error *err) {
  size_t cap = 0, first[EW_BAND_COUNT], s0 = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    first[b] = s0;
    s0 += r->band_count[b];
  }
  size_t K = r->opt.lowest_levels > 0 ? (size_t)r->opt.lowest_levels : (size_t)-1;
  if (!intersubband(r, &cap, first, K) || !interband(r, &cap, first, K))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (lines)");
  return EW_OK;
}

/* The PL peak as a wavelength, λ = hc/E (PL engineers read nm); NAN without a positive peak. */
double ew_line_pl_peak_nm(const ew_line *ln) {
  return ln && ln->pl_peak_eV > 0 && isfinite(ln->pl_peak_eV) ? EW_HC_EVNM / ln->pl_peak_eV : NAN;
}
