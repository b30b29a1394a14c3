/* nonparabolic.h — electron levels with an energy-dependent (Kane) effective mass.
 *
 * The conduction band of a III–V compound is not parabolic: from the three-level k·p model
 * (E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957)) the band-edge mass generalises to
 *   m0 / m(ε) = m0/m_e + (E_P/3) [ 2/(E_g + ε) + 1/(E_g + Δ_so + ε) − 2/E_g − 1/(E_g + Δ_so) ],
 * ε = E − Ec(z) the kinetic energy in the layer (negative in a barrier), anchored so that
 * m(0) is the catalogue's m_e (the form used for quantum wells by D. F. Nelson, R. C. Miller,
 * D. A. Kleinman, Phys. Rev. B 35, 7770 (1987)).  Each level n then satisfies E = λ_n(H(E)):
 * solved per level by a secant iteration on g(E) = λ_n(H(E)) − E, which is strictly
 * decreasing (the mass grows with E), so the fixed point is unique and level n is bound iff
 * λ_n(H(top)) < top: the bound count is the inertia count of H(top) below top — certified
 * as in the parabolic case. */
#ifndef EW_NONPARABOLIC_H
#define EW_NONPARABOLIC_H

#include "eigen.h"
#include "helper_thread.h"

/* 1 when some layer of st can be non-parabolic (Kane energy and gap known). */
int ew_nonparabolic_applies(const ew_stack *st);

/* The energy-dependent mass of layer bands b at kinetic energy eps (eV), m0 units; the
 * parabolic m_e when the layer has no Kane energy. */
double ew_kane_mass(const ew_bands *b, double eps_eV);


/* ∂λ/∂E = ⟨ψ|∂H/∂E|ψ⟩ = −K Σ_c (∂M_c/∂E) J_c², J_c = (ψ_c − ψ_{c−1})/M_c, of a Kane electron
 * state psi (B-normalised, level E) on grid g: the slope of the fixed point E = λ(H(E)), so
 * that derivatives of E carry the factor 1/(1 − ∂λ/∂E); ∂M_c/∂E from the analytic derivative
 * of the Kane mass.  work: [3(n+1)]; on return work[0..n] holds the cell masses M_c at E.
 * NaN when out of memory. */
double ew_nonparabolic_slope(const ew_stack *st, const ew_grid *g, double E, const double *psi,
                             double *work);

/* The electrons' cell mass integrals M_c = ∫_c m(E) dz at many energies E (the continuum,
 * continuum.c): the cell ∩ layer pieces are found once by _new (NULL when out of memory),
 * _eval fills M[g->n + 1] at E (the Kane mass where a piece has one, else m_e). */
typedef struct ew_kane_cells ew_kane_cells;
ew_kane_cells *ew_kane_cells_new(const ew_stack *st, const ew_grid *g);
void ew_kane_cells_eval(const ew_kane_cells *k, double E, double *M);
void ew_kane_cells_free(ew_kane_cells *k); /* NULL is a no-op */

/* In-plane masses (m0) of count subbands of one band at k∥ = 0: E(k∥) = E + K k∥² m0/m∥ with
 *   m0/m∥ = ⟨ψ| m0/m∥(z, E) |ψ⟩ / (1 − ∂λ/∂E)
 * (first order in k∥²; U. Ekenberg, Phys. Rev. B 40, 7714 (1989)): electrons use the Kane
 * mass at the level's kinetic energy in every layer when nonparabolic (else me), so the
 * mass grows with confinement and penetration into the barriers; heavy and light holes the
 * Luttinger in-plane masses m0/(γ1 ± γ2) of each layer (no valence mixing: a k∥ = 0
 * curvature only).  E[count] on the electron energy scale; psi: count B-normalised vectors of
 * g->n values, one after another.  out[count]; trk[count] (may be NULL): ⟨m0/m⟩ of each
 * state in the discrete Thomas–Reiche–Kuhn form of ew_obs_inverse_mass_M, with the growth-
 * axis masses at its energy.  Returns 0 when out of memory. */
int ew_inplane_masses(const ew_stack *st, const ew_grid *g, ew_band band, int nonparabolic,
                      size_t count, const double *E, const double *psi, double *out,
                      double *trk);

/* Electron levels on grid g (vectors) and, if coarse != NULL, the same levels' values on the
 * coarse grid, with the Kane mass; window (lo, top) as for the parabolic solve.
 * (output) fine: eigenpairs (values = self-consistent energies); coarse_vals: malloc'd
 * [fine->count] or NULL.  Fails with EW_ERR_NUMERIC when a level's iteration does not
 * converge in 60 steps (the message gives the level and the last change). */
ew_status ew_nonparabolic_levels(const ew_stack *st, const ew_grid *g, const ew_grid *coarse,
                                 double lo, double top, ew_eigenpairs *fine,
                                 double **coarse_vals, size_t *work_counts, ew_error *err);
/* The same with the caller's factorization workspace for g (ew_shift_lu_create(g->n), shared
 * with the other bands of a pass); NULL or of another size: one of its own, shared by the
 * levels. */
ew_status ew_nonparabolic_levels_lu(const ew_stack *st, const ew_grid *g, const ew_grid *coarse,
                                    double lo, double top, ew_shift_lu *lu,
                                    ew_eigenpairs *fine, double **coarse_vals,
                                    size_t *work_counts, ew_error *err);
/* The same, offering the levels' coarse fixed points and vectors to the idle threads of a
 * pass through assist (helper_thread.h; NULL: all on this thread); the same bits. */
ew_status ew_nonparabolic_levels_assist(const ew_stack *st, const ew_grid *g,
                                        const ew_grid *coarse, double lo, double top,
                                        ew_shift_lu *lu, ew_assist *assist, ew_eigenpairs *fine,
                                        double **coarse_vals, size_t *work_counts,
                                        ew_error *err);

#endif
