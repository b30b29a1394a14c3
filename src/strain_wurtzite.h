/* strain_wurtzite.h — the band edges of a wurtzite layer grown on the c plane ((0001),
 * growth axis z = +c, metal face), coherently strained on a template of in-plane lattice
 * constant a_sub, and the growth-axis and in-plane masses of its three valence bands at the
 * band edge.  Pure functions of the material parameters: no catalogue, no I/O.  Internal; the
 * catalogue entry point is ew_material_bands_on() (alloy.c) for entries with
 * structure = "wurtzite".
 *
 * Strain (biaxial in the c plane, free growth surface σ_zz = c13 (ε_xx + ε_yy) + c33 ε_zz = 0):
 *   ε_xx = ε_yy = (a_sub − a)/a,   ε_zz = −2 (c13/c33) ε_xx.
 * Valence bands at k = 0 (S. L. Chuang, C. S. Chang, Phys. Rev. B 54, 2491 (1996), the
 * 6×6 Hamiltonian block-diagonalised at the band edge; quasi-cubic Δ2 = Δ3 = Δso/3, Δ1 = Δcr;
 * as recalled, from memory):
 *   θ = D3 ε_zz + D4 (ε_xx + ε_yy),   λ = D1 ε_zz + D2 (ε_xx + ε_yy),
 *   E_hh = Δ1 + Δ2 + θ + λ                                   (Γ9, "A", heavy hole)
 *   E_lh = (Δ1 − Δ2 + θ)/2 + λ + √(((Δ1 − Δ2 + θ)/2)² + 2Δ3²)  (upper Γ7, "B", light hole)
 *   E_ch = (Δ1 − Δ2 + θ)/2 + λ − √(((Δ1 − Δ2 + θ)/2)² + 2Δ3²)  (lower Γ7, "C", crystal-field
 *                                                               split-off hole)
 * on a scale whose zero is the valence-band average; the catalogue's VBO is the top of the
 * unstrained bands, so each edge is VBO + E − max(E_hh⁰, E_lh⁰, E_ch⁰) (⁰: unstrained).
 * Masses (same paper, band-edge masses in units of m0; the Γ7 bands mix |X,Y⟩ and |Z⟩ with the
 * weights w = (E − λ)/(E_lh − E_ch), E_lh and E_ch strained):
 *   hh: m_z = −1/(A1 + A3),        m_t = −1/(A2 + A4)
 *   lh: m_z = −1/(A1 + w_lh A3),   m_t = −1/(A2 + w_lh A4),   w_lh = (E_lh − λ)/(E_lh − E_ch)
 *   ch: m_z = −1/(A1 + w_ch A3),   m_t = −1/(A2 + w_ch A4),   w_ch = (E_ch − λ)/(E_ch − E_lh)
 *   (w_lh + w_ch = 1; for Δ3 → 0 and Δ1 − Δ2 + θ > 0 the light hole is |X,Y⟩ like the heavy
 *   hole and the crystal-field hole pure |Z⟩, m_z = −1/A1).
 * Conduction edge: δEc = a_cz ε_zz + a_ct (ε_xx + ε_yy).  Vurgaftman & Meyer (J. Appl. Phys.
 * 94, 3675 (2003)) tabulate the interband potentials a1 = a_cz − D1 and a2 = a_ct − D2 (our
 * reading, from memory), so a_cz = a1 + D1, a_ct = a2 + D2 and the gap to the band-average
 * reference moves by a1 ε_zz + a2 (ε_xx + ε_yy).
 * Piezoelectric polarisation (linear in strain; F. Bernardini, V. Fiorentini, D. Vanderbilt,
 * Phys. Rev. B 56, R10024 (1997); O. Ambacher et al., J. Appl. Phys. 87, 334 (2000), eq. for
 * P_PE, from memory):  P_pz = 2 ε_xx (e31 − e33 c13/c33), along +z (C/m²).
 */
#ifndef EW_STRAIN_WURTZITE_H
#define EW_STRAIN_WURTZITE_H

#include "epiwell.h"

typedef struct {
  double a_nm;                 /* relaxed in-plane lattice constant a, nm */
  double c13_kbar, c33_kbar;   /* only their ratio enters */
  double a1_eV, a2_eV;         /* interband deformation potentials (above) */
  double D_eV[4];              /* D1 … D4 */
  double Dcr_eV, Dso_eV;       /* Δcr, Δso */
  double A[6];                 /* A1 … A6 (A5, A6 do not enter the band-edge masses) */
  double e31_C_m2, e33_C_m2;   /* piezoelectric constants */
} ew_wz_input;

typedef struct {
  double eps_xx, eps_zz;
  double dEc_eV;                  /* conduction-edge shift */
  double E_eV[3];                 /* hh, lh, ch edges relative to the unstrained top */
  double m_z[3], m_t[3];          /* growth-axis (c) and in-plane masses, m0: hh, lh, ch */
  double Ppz_C_m2;                /* piezoelectric polarisation along +z */
} ew_wz_bands;

/* Band edges and masses of a layer on a template of in-plane lattice constant a_sub_nm;
 * a_sub_nm <= 0: unstrained (then c13, c33, a1, a2, D, e31, e33 are not used).  Fails
 * (EW_ERR_INPUT) on non-finite or non-positive inputs and on a non-positive mass. */
ew_status ew_wurtzite_bands(const ew_wz_input *m, double a_sub_nm, ew_wz_bands *out,
                            ew_error *err);

#endif
