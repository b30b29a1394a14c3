/* spectra.c — intersubband absorption per pass and the relative interband absorption edge
 * (formulas and conventions in spectra.h).
 *
 * Intersubband prefactor, derived (the form of M. Helm, Semicond. Semimet. 62, 1 (2000),
 * from memory).  A transition of oscillator strength f = 2mΔE|z|²/ħ² responds to the field
 * component along z as a Lorentz oscillator of charge e and mass m (the f-sum definition of
 * observables.h).  N such oscillators per volume give, near resonance ω0 with a normalised
 * line shape L_ω (∫ L_ω dω = 1), ε''(ω) = (π N e² f / (2 ε0 m ω)) L_ω(ω − ω0); the
 * absorption coefficient is α = ω ε'' / (n c) = π N e² f L_ω / (2 ε0 n c m).  With
 * L_ω(ω) = ħ L(ħω) (L normalised in energy): α = (π ħ e² / (2 ε0 n c m)) N f L =
 * (e² h / (4 ε0 n c m)) N f L.  A sheet, N = N_s δ(z), crossed by a ray at angle θ to z:
 * only E_z = E sin θ couples (factor sin²θ) and the ray's path through the sheet per unit
 * thickness is 1/cos θ, so A = ∫ α ds = (e² h / (4 ε0 n c m)) N_s f (sin²θ / cos θ) L.
 * Dimensions: e² h / (ε0 c m) is C² J s / ((C² J⁻¹ m⁻¹)(m s⁻¹) kg) = J² s² / kg = J m²;
 * times N_s (m⁻²) and L (J⁻¹): dimensionless.  In the units used: e² h[eV s] / (4 ε0 c m0)
 * = 1.0977e-20 eV m² = 1.0977e-16 eV cm².  The m of f cancels physically (e² f / m =
 * 2 e² ΔE |z|² / ħ²), so m here must be the m of the f definition: m* = m0 / ⟨e1|m0/m|e1⟩. */
#include "spectra.h"

#include <math.h>
#include <stdlib.h>

#include "constants.h"
#include "error.h"
#include "continuum.h"
#include "exciton.h"

double ew_intersubband_prefactor_eVcm2(void) {
  /* C² · eV s / (F m⁻¹ · m s⁻¹ · kg) = eV m²; × 1e4 cm² per m² */
  return EW_E_C * EW_E_C * EW_H_EVS / (4.0 * EW_EPS0_FM * EW_C_MS * EW_M0_KG) * 1e4;
}

/* normalised Lorentzian of half width at half maximum g */
static double lorentz(double x, double g) { return g / (EW_PI * (x * x + g * g)); }

static ew_status check_arrays(size_t npts, const double *E, const double *out, ew_error *err) {
  if (npts > 0 && (!E || !out))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "spectrum: no energy or output array");
  for (size_t k = 0; k < npts; k++)
    if (!isfinite(E[k]))
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "spectrum: energy %zu is not finite", k);
  return EW_OK;
}

/* The checks, e1 and the prefactor (e² h / (4 ε0 n c m*)) N_s (sin²θ / cos θ) in eV, with
 * 1/m* = ⟨e1|1/m|e1⟩, shared by the bound and the continuum spectrum; *e1 = n_states when
 * there is no bound electron. */
static ew_status isb_setup(const ew_result *r, double sheet_density_cm2, double linewidth_meV,
                           double theta_deg, double n_refr, size_t npts, const double *E_eV,
                           double *fraction, size_t *e1_out, double *pref, ew_error *err) {
  if (!r) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "spectrum: no result");
  if (!(sheet_density_cm2 >= 0) || !isfinite(sheet_density_cm2))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "intersubband absorption: sheet density %g cm^-2 must be >= 0",
                   sheet_density_cm2);
  if (!(linewidth_meV > 0) || !isfinite(linewidth_meV))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "intersubband absorption: linewidth %g meV must be positive", linewidth_meV);
  if (!(theta_deg >= 0 && theta_deg < 90))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "intersubband absorption: angle %g deg must be in [0, 90)", theta_deg);
  if (!(n_refr > 0) || !isfinite(n_refr))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "intersubband absorption: refractive index %g must be positive", n_refr);
  ew_status rc = check_arrays(npts, E_eV, fraction, err);
  if (rc != EW_OK) return rc;
  for (size_t k = 0; k < npts; k++) fraction[k] = 0.0;
  /* e1: the first electron state (states are e…, hh…, lh…, ascending in confinement) */
  size_t e1 = r->n_states;
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].band == EW_BAND_E && r->states[i].n == 1) {
      e1 = i;
      break;
    }
  *e1_out = e1;
  *pref = 0.0;
  if (e1 == r->n_states) return EW_OK; /* no bound electron: nothing absorbs */
  /* the same ⟨e1|m0/m|e1⟩ the oscillator strengths were made with, so that f/m* is exactly
     2ΔE|z|²/ħ² (Kane electrons: the masses at e1's energy) */
  double invm = r->mean_inv_mass[e1];
  if (!(invm > 0) || !isfinite(invm))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "intersubband absorption: <e1|m0/m|e1> = %g",
                   invm);
  double th = theta_deg * EW_PI / 180.0;
  double geom = sin(th) * sin(th) / cos(th);
  *pref = ew_intersubband_prefactor_eVcm2() * invm / n_refr * sheet_density_cm2 * geom;
  return EW_OK;
}

ew_status ew_intersubband_absorption(const ew_result *r, double sheet_density_cm2,
                                     double linewidth_meV, double theta_deg, double n_refr,
                                     size_t npts, const double *E_eV, double *fraction,
                                     ew_error *err) {
  size_t e1;
  double pref;
  ew_status rc = isb_setup(r, sheet_density_cm2, linewidth_meV, theta_deg, n_refr, npts, E_eV,
                           fraction, &e1, &pref, err);
  if (rc != EW_OK || e1 == r->n_states) return rc;
  double g = 0.5e-3 * linewidth_meV; /* HWHM, eV */
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERSUBBAND || ln->lower != e1) continue;
    double a = pref * ln->oscillator_strength;
    if (a == 0.0) continue;
    for (size_t k = 0; k < npts; k++) fraction[k] += a * lorentz(E_eV[k] - ln->energy_eV, g);
  }
  return EW_OK;
}

/* The continuum's df/dE sampled for a Lorentzian of HWHM g up to photon energy xmax: the
 * midpoint rule in s = √(x − threshold) (dense at the √ onset), steps of at most g/4 in
 * energy.  *nodes, *weights (df/dE × dx) malloc'd; *count.  EW_ERR_NOMEM. */
static ew_status continuum_nodes(ew_continuum *c, double g, double xmax, double **nodes,
                                 double **weights, size_t *count, ew_error *err) {
  double thr = ew_continuum_threshold_eV(c), span = xmax - thr;
  *count = 0;
  if (!(span > 0)) return EW_OK;
  double smax = sqrt(span);
  size_t m = (size_t)ceil(8.0 * span / g);
  if (m > EW_CONTINUUM_NODES_MAX) m = EW_CONTINUUM_NODES_MAX;
  if (m < 16) m = 16;
  double ds = smax / (double)m;
  *nodes = malloc(m * sizeof **nodes);
  *weights = malloc(m * sizeof **weights);
  if (!*nodes || !*weights) {
    free(*nodes), free(*weights);
    *nodes = *weights = NULL;
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (continuum spectrum)");
  }
  for (size_t j = 0; j < m; j++) {
    double s = ((double)j + 0.5) * ds;
    (*nodes)[j] = thr + s * s;
  }
  ew_continuum_dfdE_many(c, m, *nodes, *weights);
  for (size_t j = 0; j < m; j++) (*weights)[j] *= 2.0 * (((double)j + 0.5) * ds) * ds;
  *count = m;
  return EW_OK;
}

ew_status ew_intersubband_continuum_absorption(const ew_result *r, double sheet_density_cm2,
                                               double linewidth_meV, double theta_deg,
                                               double n_refr, size_t npts, const double *E_eV,
                                               double *fraction, ew_error *err) {
  size_t e1;
  double pref;
  ew_status rc = isb_setup(r, sheet_density_cm2, linewidth_meV, theta_deg, n_refr, npts, E_eV,
                           fraction, &e1, &pref, err);
  if (rc != EW_OK || e1 == r->n_states || pref == 0.0 || npts == 0 ||
      !ew_continuum_applies(r, e1, NULL, 0))
    return rc;
  double g = 0.5e-3 * linewidth_meV, xmax = E_eV[0];
  for (size_t k = 1; k < npts; k++) xmax = fmax(xmax, E_eV[k]);
  ew_continuum *c;
  rc = ew_continuum_new(r, e1, &c, err);
  if (rc != EW_OK) return rc;
  double *x = NULL, *wt = NULL;
  size_t m = 0;
  /* states up to 60 linewidths above the highest photon energy: the Lorentzian tails of
     the rest weigh less than 1e-3 of a line's peak there */
  rc = continuum_nodes(c, g, xmax + 120.0 * g, &x, &wt, &m, err);
  ew_continuum_free(c);
  if (rc != EW_OK) return rc;
  for (size_t k = 0; k < npts; k++) {
    double a = 0.0;
    for (size_t j = 0; j < m; j++) a += wt[j] * lorentz(E_eV[k] - x[j], g);
    fraction[k] = pref * a;
  }
  free(x);
  free(wt);
  return EW_OK;
}

ew_status ew_interband_absorption(const ew_result *r, double linewidth_meV, size_t npts,
                                  const double *E_eV, double *alpha_rel, ew_error *err) {
  if (!r) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "spectrum: no result");
  if (!(linewidth_meV > 0) || !isfinite(linewidth_meV))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "interband absorption: linewidth %g meV must be positive", linewidth_meV);
  ew_status rc = check_arrays(npts, E_eV, alpha_rel, err);
  if (rc != EW_OK) return rc;
  for (size_t k = 0; k < npts; k++) alpha_rel[k] = 0.0;
  double g = 0.5e-3 * linewidth_meV; /* HWHM, eV */
  size_t n = r->grid->n;
  ew_exciton_ws *ws = NULL;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    double mu, eps, te, tm;
    rc = ew_line_exciton_params(r, ln, &mu, &eps, err);
    if (rc != EW_OK) break;
    ew_interband_polarisation(r->states[ln->lower].band, ln->overlap, &te, &tm);
    double S = te * mu; /* step height: TE weight × overlap × μ∥/m0 (2D joint DOS) */
    if (S == 0.0) continue;
    double bind = 0.0, lam = 0.0, W = 0.0;
    if (eps > 0) {
      if (!ws && !(ws = ew_exciton_ws_new())) {
        rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (exciton workspace)");
        break;
      }
      rc = ew_exciton_binding_ws(ws, r->grid, r->psi + ln->upper * n, r->psi + ln->lower * n,
                                 mu, eps, &bind, &lam, err);
      if (rc != EW_OK) break;
      /* W = |φλ(0)|² / (μ/(2πħ²)) = (2/(πλ²)) (2πħ²/μ) = 4ħ²/(μλ²) = 8 (ħ²/2m0) / (μ λ²) */
      W = 8.0 * EW_HB2M0_EVNM2 / (mu * lam * lam);
    }
    double E0 = ln->energy_eV, Epl = E0 - bind;
    for (size_t k = 0; k < npts; k++) {
      double step = 0.5 + atan((E_eV[k] - E0) / g) / EW_PI;
      alpha_rel[k] += S * (step + W * lorentz(E_eV[k] - Epl, g));
    }
  }
  ew_exciton_ws_free(ws);
  if (rc != EW_OK)
    for (size_t k = 0; k < npts; k++) alpha_rel[k] = 0.0; /* nothing half-computed */
  return rc;
}
