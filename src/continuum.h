/* continuum.h — the states above a band's bound window, with open boundaries, and the
 * oscillator strength from a bound state into them.
 *
 * Method: the quantum transmitting boundary of C. S. Lent, D. J. Kirkner, J. Appl. Phys. 67,
 * 6353 (1990), on our own finite-difference chain.  The stack's grid is continued beyond
 * both outer faces by semi-infinite uniform leads with the outer cells' mass, length and
 * potential (the outer layers stand for the semi-infinite barrier material), instead of the
 * hard walls of the bound solve.  At an energy E above a lead's band bottom the lead's
 * solutions are the discrete plane waves ψ_j = a sin(θj + φ), cos θ = 1 − h(E − V)/(2t),
 * t = ħ²/(2 ∫_cell m dz).  Two real solutions are shot across the stack (the BenDaniel–Duke
 * rows of hamiltonian.h, with the Kane masses at E for Kane electrons); their energy
 * normalisation is read off the leads exactly: ⟨ψ_a|ψ_b⟩ = G_ab δ(E − E′) with
 *   G_ab = Σ_leads (π t / sin θ) [ψa_j ψb_j + ψa_j+1 ψb_j+1 − cos θ (ψa_j ψb_j+1 + ψa_j+1 ψb_j)]
 * (the singular part of Σ_j h ψa_j ψb_j over a half-infinite lead; derived in continuum.c).
 * The oscillator strength per unit energy from the bound state i is then, summed over the
 * continuum states of energy E (both leads' channels, basis-independent):
 *   df/dE = (E − E_i) d^T G⁻¹ d / ((ħ²/2m0) ⟨i|m0/m|i⟩),  d_a = ∫ ψ_a (z − ⟨z⟩_i) ψ_i dz,
 * in the normalisation of the bound lines (observables.h: f = 2 m_i ΔE |z|²/ħ², 1/m_i =
 * ⟨i|1/m|i⟩), so that the Thomas–Reiche–Kuhn sum over bound and continuum states is 1 for
 * parabolic bands: the double commutator [z, [H, z]] = −ħ²/m(z) of the BenDaniel–Duke
 * Hamiltonian (M. Helm, Semicond. Semimet. 62, 1 (2000), from memory) holds on the grid with
 * the discrete ⟨m0/m⟩ of ew_obs_inverse_mass.  With the Kane mass H depends on E, the bound
 * lines and the continuum come from different H(E), and the sum is not exactly 1 (README
 * "Continuum" gives the measured deviation).  Nothing depends on the size of a box: the
 * result changes with the outer barriers only through the bound state's tail at the faces.
 *
 * Not handled: a stack in a field (no flat lead: ew_continuum_applies says so). */
#ifndef EW_CONTINUUM_H
#define EW_CONTINUUM_H

#include <stddef.h>

#include "result.h"

/* 1 when the continuum of r's band of state `lower` can be computed; otherwise 0 and why
 * (a sentence) in why[size] (why may be NULL). */
int ew_continuum_applies(const ew_result *r, size_t lower, char *why, size_t size);

/* The bottom of band's continuum on its own scale (absolute eV as the states': electrons
 * Ec, holes Ev): the lower of the two outer faces' band edges, where the leads open. */
double ew_continuum_edge_eV(const ew_result *r, ew_band band);

typedef struct ew_continuum ew_continuum;

/* The continuum of the band of bound state `lower` (an index into r->states) as seen from
 * that state.  EW_ERR_USAGE when it does not apply (the message says why), EW_ERR_NOMEM. */
ew_status ew_continuum_new(const ew_result *r, size_t lower, ew_continuum **out,
                           ew_error *err);
void ew_continuum_free(ew_continuum *c); /* NULL is a no-op */

/* Photon energy (eV) from the state to the bottom of the continuum (the lower lead's band
 * bottom: the bound window's top). */
double ew_continuum_threshold_eV(const ew_continuum *c);
/* df/dE (per eV) at photon energy photon_eV (0 below the threshold). */
double ew_continuum_dfdE(ew_continuum *c, double photon_eV);
/* The same at count photon energies into out[count] (bit for bit ew_continuum_dfdE of each;
 * several shots share each pass over the stack). */
void ew_continuum_dfdE_many(ew_continuum *c, size_t count, const double *photon_eV,
                            double *out);
/* ∫ df/dE over the whole continuum of the grid (up to the leads' band tops), by composite
 * Gauss–Legendre quadrature in s = √(E − E_edge) on geometrically graded panels, split at
 * each lead's band bottom.  Quadrature: 24, 32 and 64 panels agree within 3e-4 of the
 * whole sum rule (1) on the examples; the parabolic sum comes out 1 within 1e-4. */
double ew_continuum_oscillator_sum(ew_continuum *c);
/* Σ_j f_ij over the bound lines i → j of r (the bound part of the sum rule). */
double ew_continuum_bound_sum(const ew_result *r, size_t lower);

/* The sum rule from e1 (README "Continuum"): *bound, *continuum; both NaN when there is no
 * e1 or the continuum does not apply (not an error).  EW_ERR_NOMEM. */
ew_status ew_continuum_sum_rule_e1(const ew_result *r, double *bound, double *continuum,
                                   ew_error *err);

#endif
