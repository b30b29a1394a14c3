/* hole_dos_kp.h — the hole subbands' densities of states from the 4-band k·p dispersion of
 * the current potential, for the self-consistent loop (ew_options.hole_dos, poisson.h's
 * subband hook) and the density-of-states masses that `solve` reports.
 *
 * Model.  A hole subband j with dispersion E_j(k∥) (electron scale, falling into the band)
 * holds, per area and with both spins,
 *   n_j = 2 ∫ d²k/(2π)² [1 − f(E_j(k∥))] = (1/2π) ∫_0^∞ ds occ((E_j(0) − E_j(s))/kT − x),
 * s = k∥², x = (E_j(0) − E_F)/kT, occ(v) = 1/(1 + e^v) (the 2-D density of states of a
 * subband as an integral over the in-plane wave vector; T. Ando, A. B. Fowler, F. Stern,
 * Rev. Mod. Phys. 54, 437 (1982)).  A parabolic subband of mass m gives the loop's
 * (m kT/πħ²) ln(1 + e^x).  E_j(s) is sampled by the 4-band Luttinger–Kohn model of
 * kp_hamiltonian.h on the pass's own grid (the self-consistent potential included), along
 * [100] and [110] with full warping (the two directions' integrals averaged: a two-point
 * rule in the angle that is exact for the cos 4θ warping term) or along [100] alone in the
 * axial approximation (isotropic); E is taken linear in s between the samples (as dos_mass.c
 * does), so every segment's integral is exact: ∫ occ(u(s) − x) ds over a segment where u
 * rises from u0 to u1 is (Δs/Δu)[L(x − u0) − L(x − u1)], L(y) = ln(1 + e^y); beyond the last
 * sample the subband continues with its last segment's slope (parabolic), or with its
 * in-plane mass when that slope is not positive.  n_j(x) is tabulated once per tabulation at
 * x steps of at most kT/8 with its exact derivative and read by cubic Hermite
 * interpolation (the Newton steps of the Poisson update call it at every node); below the
 * table n_j ∝ e^x (Boltzmann), above it only the tail term still changes.
 *
 * When the tables are made.  The k·p dispersion costs as much as many Schrödinger passes,
 * so its shape ε_j(k∥) = E_j(0) − E_j(k∥) is kept while the potential moves little: it is
 * retabulated when max|U − U_tab| > EW_HOLE_DOS_RETAB_EV (0.1 meV, 4e-3 kT at 300 K: the
 * shapes move by a fraction ~ΔU/(well depth) of that), when the bound hole levels change in
 * number, and not at all while no hole subband lies within 60 kT of the Fermi level (an
 * n-type stack: their density is below e^-60 of a full subband's, the parabolic model is
 * used).  The k∥ = 0 energies always come from the current pass.  A converged solve is
 * self-consistent with the tables in use (max|ΔU| < EW_SP_TOL_EV as without them), which
 * were made at a potential within EW_HOLE_DOS_RETAB_EV of the converged one.
 *
 * Subbands: the hole levels of the pass above the higher of the heavy- and light-hole
 * windows (the 4-band model's bound levels, as dispersion.c counts them), from the highest
 * down: in the loop those within EW_HOLE_DOS_SPAN_KT of the highest one, for the masses of
 * an undoped stack all of them, at most EW_HOLE_DOS_MAX_PAIRS either way (each costs a
 * Kramers pair of the k·p solve at every k∥), matched to the k·p Kramers pairs at k∥ = 0 in
 * energy order (the
 * 4-band pencil at k∥ = 0 is exactly the single-band heavy- and light-hole pencils,
 * kp_hamiltonian.h); any other hole level keeps the parabolic density of states and
 * reports no density-of-states mass. */
#ifndef EW_HOLE_DOS_KP_H
#define EW_HOLE_DOS_KP_H

#include "result.h"

#define EW_HOLE_DOS_RETAB_EV 1e-4  /* retabulate when the potential moved more than this */
#define EW_HOLE_DOS_MAX_PAIRS 4    /* subbands followed at most (the cost grows with them) */
#define EW_HOLE_DOS_SPAN_KT 10.0   /* in the loop: the levels within 10 kT of the top one */
#define EW_HOLE_DOS_NEED_KT 60.0   /* subbands farther than this (kT) from E_F: not needed */

/* One subband's sheet density n(x), nm^-2 (both spins), x = (E(0) − E_F)/kT. */
typedef struct ew_sheet_table ew_sheet_table;
/* n(x) and, when dndx is not NULL, dn/dx. */
double ew_sheet_table_eval(const ew_sheet_table *t, double x, double *dndx);

typedef struct ew_hole_dos_kp ew_hole_dos_kp;
/* mode: EW_HOLE_DOS_KP or EW_HOLE_DOS_KP_AXIAL (epiwell.h); T_K the occupations' temperature
 * (floored as the loop floors it).  NULL when out of memory. */
ew_hole_dos_kp *ew_hole_dos_kp_create(int mode, double T_K);
void ew_hole_dos_kp_free(ew_hole_dos_kp *h); /* NULL is a no-op */
/* Bring the tables up to date for pass r (solved on r->grid with its potential) at the Fermi
 * level EF_eV (the first face's; a bias widens the "needed" margin by |bias|) and match r's
 * hole states to them.  EW_ERR_NOMEM, EW_ERR_NUMERIC (k·p count). */
ew_status ew_hole_dos_kp_update(ew_hole_dos_kp *h, const ew_result *r, double EF_eV,
                                ew_error *err);
/* The table of state j of the last updated result, NULL for parabolic (the poisson.h hook;
 * ctx is the ew_hole_dos_kp). */
const ew_sheet_table *ew_hole_dos_kp_table(const void *ctx, size_t state);
/* Subbands tabulated (0 before any tabulation or when none was needed) and tabulations
 * done. */
size_t ew_hole_dos_kp_pairs(const ew_hole_dos_kp *h);
size_t ew_hole_dos_kp_tabulations(const ew_hole_dos_kp *h);
/* Set r->states[j].dos_mass_m0 of every matched hole state (dos_mass.c's definition at
 * EW_DOS_MASS_WINDOW_EV, averaged over [100] and [110] with full warping), from the tables
 * when they cover r's potential, else from a tabulation at it. */
ew_status ew_hole_dos_kp_masses(ew_hole_dos_kp *h, ew_result *r, ew_error *err);
/* A finished result without the loop (undoped): tabulate at its potential, set the masses. */
ew_status ew_hole_dos_kp_report(ew_result *r, int mode, ew_error *err);

#endif
