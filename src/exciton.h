/* exciton.h — quasi-two-dimensional exciton of one electron and one hole subband
 * (variational, separable trial function) and the interband polarisation weights.
 * Internal; the lead exposes what the public API needs.
 *
 * Method: G. Bastard, E. E. Mendez, L. L. Chang, L. Esaki, Phys. Rev. B 26, 1974 (1982).
 * Trial function Ψ = ψe(ze) ψh(zh) φλ(ρ), φλ(ρ) = sqrt(2/π)/λ · exp(−ρ/λ) (normalised in
 * the plane: ∫|φλ|² d²ρ = 1), with the subband envelopes ψe, ψh kept fixed.  Then
 *
 *   E(λ) = ħ²/(2μλ²) − (e²/(4πε0 εr)) ∫ P(d) G(d, λ) dd,
 *   G(d, λ) = ⟨φλ| 1/sqrt(ρ² + d²) |φλ⟩ = (4/λ²) ∫0^∞ ρ e^{−2ρ/λ} / sqrt(ρ² + d²) dρ
 *           = (2/λ) I(2d/λ),  I(x) = ∫0^∞ t e^{−t} / sqrt(t² + x²) dt,
 *
 * P(d) the distribution of d = |ze − zh| for ze ~ |ψe|², zh ~ |ψh|².  The binding energy is
 * −min_λ E(λ) > 0 and λ at the minimum is the in-plane radius.  Checks of the normalisation:
 * G(0, λ) = 2/λ, so for P = δ(d) (the strict 2D limit) E(λ) = ħ²/(2μλ²) − 2e²/(4πε0εr λ),
 * minimal at λ = a_B/2 (a_B = 4πε0εr ħ²/(μe²)) with E = −4R*, R* = μe⁴/(2ħ²(4πε0εr)²);
 * for d ≫ λ, G → 1/d (the bare Coulomb interaction of two separated sheets). */
#ifndef EW_EXCITON_H
#define EW_EXCITON_H

#include "grid.h"
#include "result.h"

/* Binding energy (eV, > 0) and in-plane radius λ (nm) of the exciton formed by the
 * electron envelope psi_e and the hole envelope psi_h (values on the nodes of g, any
 * normalisation: each |ψ|² is normalised here in the grid's box quadrature), for in-plane
 * reduced mass mu_par (m0) and relative permittivity eps_r.  Fails with EW_ERR_INPUT for
 * non-positive or non-finite mu_par/eps_r, EW_ERR_NUMERIC for an envelope of zero norm,
 * EW_ERR_NOMEM. */
ew_status ew_exciton_binding(const ew_grid *g, const double *psi_e, const double *psi_h,
                             double mu_par, double eps_r, double *binding_eV, double *radius_nm,
                             ew_error *err);

/* The same with a reusable workspace (tables built once; no allocation per call), for
 * computing many lines.  ew_exciton_ws_new returns NULL when out of memory. */
typedef struct ew_exciton_ws ew_exciton_ws;
ew_exciton_ws *ew_exciton_ws_new(void);
void ew_exciton_ws_free(ew_exciton_ws *ws); /* NULL is a no-op */
ew_status ew_exciton_binding_ws(ew_exciton_ws *ws, const ew_grid *g, const double *psi_e,
                                const double *psi_h, double mu_par, double eps_r,
                                double *binding_eV, double *radius_nm, ew_error *err);

/* G(d, λ) in nm⁻¹ (d >= 0, λ > 0): by direct quadrature (3e-13 relative, measured), and
 * from the workspace's interpolation table (what the minimisation uses; 2e-8 relative,
 * measured). */
/* The interpolation table of I(x) (exciton.c, item 2): its size, entry k computed by
 * quadrature, and entry k as stored in exciton_table.inc (NaN past its end). */
size_t ew_exciton_table_size(void);
void ew_exciton_table_direct(size_t k, double *I_x, double *dIds);
void ew_exciton_table_stored(size_t k, double *I_x, double *dIds);
double ew_exciton_coulomb_G(double d_nm, double lambda_nm);
double ew_exciton_coulomb_G_ws(const ew_exciton_ws *ws, double d_nm, double lambda_nm);

/* Relative interband momentum-matrix-element weights at k∥ = 0 for light propagating in
 * the plane of the well, in units of |P|² = |⟨S|p_x|X⟩|², multiplied by overlap
 * (|⟨e|h⟩|²): heavy hole TE 1/2, TM 0; light hole TE 1/6, TM 2/3 (S. L. Chuang, Physics of
 * Photonic Devices (Wiley, 2009), ch. 9, from memory).  TE: E in the plane; TM: E along z.
 * For each hole band 2·TE + TM = 1 (the three polarisations x, y, z sum to |P|²), and
 * hh + lh give 2/3 for every polarisation (1/3 each on average: isotropic, as in the bulk).
 * hole_band EW_BAND_E (not a hole) gives 0, 0. */
void ew_interband_polarisation(ew_band hole_band, double overlap, double *te, double *tm);

/* In-plane reduced mass μ∥ = 1/(1/m_e,∥ + 1/m_h,∥) (m0) of an interband line from the two
 * subbands' in-plane masses (ew_state.inplane_mass), and the relative permittivity (0 when
 * the material has none) of the layer where its electron state is most probable.  Fails
 * with EW_ERR_INPUT when the line is not interband or a mass is not positive. */
ew_status ew_line_exciton_params(const ew_result *r, const ew_line *ln, double *mu_par,
                                 double *eps_r, ew_error *err);

/* Fill exciton_binding_eV, pl_peak_eV (= energy_eV − binding), te_strength, tm_strength of
 * every interband line of r.  A line whose electron layer has no permittivity (eps_r == 0,
 * a user material without eps_static) gets binding 0 and pl_peak_eV = energy_eV. */
ew_status ew_result_add_excitons(ew_result *r, ew_error *err);

#endif
