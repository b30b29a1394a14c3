/* spectra.h — absorption spectra of a solved stack: intersubband absorption per pass and the
 * relative interband absorption edge.  Internal; the lead exposes what the public API needs.
 *
 * Both take a list of photon energies E_eV[0 … npts−1] (any order, any spacing) and fill
 * one output value per energy.  Linewidths are full widths at half maximum (FWHM) of
 * normalised Lorentzians, L(E) = (1/π) γ / (E² + γ²), γ = FWHM/2, ∫ L dE = 1. */
#ifndef EW_SPECTRA_H
#define EW_SPECTRA_H

#include "result.h"

/* Intersubband absorption of the structure's e1 population: the fraction of the incident
 * power absorbed in one pass (dimensionless) by TM-polarised light (p-polarised: E in the
 * plane of incidence) crossing the wells at internal angle theta_deg to the growth axis, in
 * a medium of refractive index n_refr (the 45° facet or Brewster geometries):
 *
 *   A(ħω) = (e² h / (4 ε0 n c m*)) · N_s · (sin²θ / cos θ) · Σ_j f_1j L_j(ħω − E_1j)
 *
 * (M. Helm, Semicond. Semimet. 62, 1 (2000), from memory; derived in spectra.c), with all
 * N_s = sheet_density_cm2 electrons (cm⁻²) in e1 (low temperature, or E_F − E1 ≪ E2 − E1),
 * f_1j the oscillator strengths of the intersubband lines e1 → ej in r->lines, m* = m0/⟨e1|
 * m0/m(z)|e1⟩ the mass of the f definition (observables.h), L_j of FWHM linewidth_meV.
 * Bound-to-bound lines only (the lines r->lines lists); no depolarisation shift, no
 * non-parabolic line shape.  Linear in N_s: valid while A ≪ 1.  For unpolarised light
 * multiply by 1/2; at normal incidence (θ = 0) A = 0.  Without a bound e1 the spectrum is 0.
 * Fails (EW_ERR_USAGE) for sheet_density < 0, linewidth <= 0, θ outside [0, 90), n_refr <=
 * 0, non-finite values or NULL arrays with npts > 0. */
ew_status ew_intersubband_absorption(const ew_result *r, double sheet_density_cm2,
                                     double linewidth_meV, double theta_deg, double n_refr,
                                     size_t npts, const double *E_eV, double *fraction,
                                     ew_error *err);

/* The bound-to-continuum part of the same absorption: e1 into the open-boundary continuum
 * of continuum.h, A(ħω) = (same prefactor) ∫ dE (df/dE) L(ħω − E) over photon energies E
 * above the threshold (bound window top − E1), the states sampled with steps of at most a
 * quarter of the half width (midpoint rule in √(E − threshold), at most
 * EW_CONTINUUM_NODES_MAX states) up to 60 linewidths above the highest ħω.  Independent of
 * the outer barriers' thickness (no box).  Zero without e1 or in a field (no flat barrier
 * to open).  Same refusals as ew_intersubband_absorption. */
#define EW_CONTINUUM_NODES_MAX 40000
ew_status ew_intersubband_continuum_absorption(const ew_result *r, double sheet_density_cm2,
                                               double linewidth_meV, double theta_deg,
                                               double n_refr, size_t npts, const double *E_eV,
                                               double *fraction, ew_error *err);

/* Prefactor e² h / (4 ε0 c m0) of the intersubband absorption in eV cm² (to be divided by
 * n_refr and by the mass ratio m* / m0): 1.0977e-16 eV cm². */
double ew_intersubband_prefactor_eVcm2(void);

/* Relative interband absorption for TE light (E in the plane, normal incidence), summed
 * over the interband lines e_n–h_m of r->lines:
 *
 *   α_rel(E) = Σ_lines S · [ 1/2 + (1/π) atan((E − E_nm)/γ)  +  W · L(E − E_pl) ],
 *   S = te_strength · μ∥/m0,   W = 2πħ²|φλ(0)|²/μ∥ = 4ħ²/(μ∥ λ²)  (eV),
 *
 * i.e. each line's 2D continuum step at the band-to-band energy E_nm, of height S (the TE
 * weight times overlap of ew_interband_polarisation, times the in-plane reduced mass in m0:
 * the 2D joint density of states is μ∥/(2πħ²) per spin), broadened by a Lorentzian of FWHM
 * linewidth_meV (the arctan step is the Lorentzian-convolved step), plus the 1s exciton peak
 * at E_pl = E_nm − binding, a Lorentzian of the same width and of area S·W: the
 * Elliott-type ratio of bound to continuum absorption, |φ(0)|² to the free-pair density of
 * states (R. J. Elliott, Phys. Rev. 108, 1384 (1957); the 2D hydrogen model of M. Shinada,
 * S. Sugano, J. Phys. Soc. Jpn. 21, 1936 (1966): φ1s(0)² = 8/(π a_B²), W = 32 R*; both
 * from memory), here with the variational φλ of exciton.h (|φλ(0)|² = 2/(πλ²)).  Omitted:
 * the Sommerfeld enhancement of the continuum (up to ×2 at the edge in strict 2D), the
 * excited exciton states (2s carries 1/27 of the 1s weight in 2D), TM light.  Units: α_rel
 * is dimensionless, 1 = the step of a line with te_strength·μ∥/m0 = 1 (no absolute scale:
 * that needs the Kane energy and the refractive index, not used here).  Lines whose
 * electron layer has no permittivity get no exciton peak.  Fails (EW_ERR_USAGE) for
 * linewidth <= 0 or NULL arrays with npts > 0; exciton failures are passed on. */
ew_status ew_interband_absorption(const ew_result *r, double linewidth_meV, size_t npts,
                                  const double *E_eV, double *alpha_rel, ew_error *err);

#endif
