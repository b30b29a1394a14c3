/* polarization.h — spontaneous and piezoelectric polarisation of a wurtzite (c-plane) stack:
 * the polarisation of every layer, the bound sheet charge at every interface, and the field
 * they set up.  Internal.
 *
 * Conventions: z is the stack's axis; c_axis = "+z" (default) puts [0001] along +z (layers
 * listed from the template up, metal-face growth), c_axis = "-z" along −z (layers listed from
 * a metal-face surface down, as a transistor whose surface barrier pins the first face).  The
 * layer's P along +z, C/m², is c_sign (P_sp + P_pz) (P_sp < 0: along −c; alloy.h,
 * strain_wurtzite.h).
 * The bound charge density is −dP/dz, so the interface between layer k (first grown) and
 * k + 1 holds σ_k = P_k − P_{k+1} (AlGaN grown on GaN: σ > 0, the 2D electron gas side).
 * The outer faces' charges are left out: they stand for the polarisation continuing into
 * the semi-infinite template and for the surface states that compensate it.
 *
 * Screening (stack key screening_sheet = n, cm^-2): injected electrons and holes gather as
 * sheets at the faces of every well (a layer whose gap is below both neighbours'), e at the
 * face with σ > 0 and h at the face with σ < 0, each cancelling e·n of that face's |σ| (at most
 * all of it) — the sheet-charge picture of carrier screening of the quantum-confined Stark
 * effect (e.g. the screening description in F. Della Sala et al., Appl. Phys. Lett. 74, 2002
 * (1999), from memory); it is not a self-consistent solve of the injected carriers.
 *
 * Fields of an undoped stack (no doping, surface or bias: the single Schrödinger pass):
 * with no free charge the displacement D = ε0 εr E + P is the same in every layer, and the
 * boundary condition chosen is a zero total potential drop over the stack, Σ E_i L_i = 0 —
 * the condition of a periodic active region (an LED's multi-well stack, one period or the
 * whole stack standing for the periodic structure), which gives
 *     D = Σ (P̃_i L_i/ε_i) / Σ (L_i/ε_i),   E_i = (D − P̃_i)/(ε0 ε_i),
 * P̃ the polarisation with the screening sheets folded in (P̃_0 = P_0, P̃_{k+1} = P̃_k − σ̃_k).
 * For a well w between barriers b this is F_w = (P_b − P_w) L_b / (ε0 (ε_w L_b + ε_b L_w))
 * (e.g. V. Fiorentini et al., Phys. Rev. B 60, 8849 (1999), from memory).  The electron's
 * potential energy is U(z) = e∫E dz, zero at the stack's centre like the applied field's, and
 * adds to the applied field.  Doped stacks and stacks with a surface or a bias: the σ̃_k are
 * fixed charges at the interface nodes of the Poisson solve (poisson.c), the layers carry no
 * static field, and the reported field is that of the self-consistent potential.
 */
#ifndef EW_POLARIZATION_H
#define EW_POLARIZATION_H

#include "result.h"
#include "stack.h"

/* Fills every layer's polarisation and the static fields (above) once the layers are
 * resolved; sets st->polarized (any wurtzite layer) and st->pol_in_poisson.  Fails
 * (EW_ERR_INPUT, file:line) for a stack mixing wurtzite and zinc-blende layers, a graded
 * wurtzite layer, or a wurtzite layer without a static permittivity. */
ew_status ew_polarization_apply(ew_stack *st, ew_error *err);

/* Bound sheet charge of interface k (between layers k and k + 1), C/m²: P_k − P_{k+1}, and
 * with the screening sheets (what the fields are solved with). */
double ew_interface_bound_C_m2(const ew_stack *st, size_t k);
double ew_interface_charge_C_m2(const ew_stack *st, size_t k);

/* Electron potential energy of the static polarisation fields at z, eV (0 when none), and
 * its exact integral over [a, b], eV nm. */
double ew_polarization_eV(const ew_stack *st, double z);
double ew_polarization_integral(const ew_stack *st, double a, double b);

/* Adds the interface charges of a stack whose charges go to the Poisson solve, as sheets
 * σ/e in nm^-2 on the nodes nearest each interface, to q[n]. */
void ew_polarization_sheets_nm2(const ew_stack *st, const double *z, size_t n, double *q);

/* The field in layer k of a solved result, kV/cm, along +z: the applied field plus the static
 * polarisation field plus the mean slope of the self-consistent potential over the layer's
 * nodes (E = (1/e) dU/dz). */
double ew_result_layer_field_kV_cm(const ew_result *r, size_t k);

#endif
