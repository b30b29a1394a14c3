/* lattice_match.h — the composition of a catalogue alloy that is lattice-matched to a
 * substrate (ternaries: one x; quaternaries: the point of the matched line with a given Γ
 * gap).  Internal. */
#ifndef EW_LATTICE_MATCH_H
#define EW_LATTICE_MATCH_H

#include "catalogue.h"

/* Composition of alloy `name` lattice-matched to `substrate` (a binary, or a ternary at
 * substrate_x) at 300 K lattice constants.
 *   ternary:    *x solves a(x) = a_sub; *y = 0.  A finite target_gap_eV must be that
 *               composition's Γ gap at T_K to EW_MATCH_GAP_TOL_EV, else EW_ERR_INPUT (the
 *               message gives x and its gap); NaN asks for the lattice match alone.
 *   quaternary: (*x, *y) on the lattice-matched line with Γ gap Eg_G(x, y, T_K) =
 *               target_gap_eV: the line is followed in y (square scheme; x solved for each
 *               y) or in x (triangle; y solved for each x) and the gap root bracketed on a
 *               400-point scan then bisected.  Fails (EW_ERR_INPUT) when no composition is
 *               matched, the gap is out of the line's range (the message gives the range)
 *               or several compositions give it (the message lists them).
 * Relative mismatch of the result |a − a_sub|/a_sub <= 1e-12. */
#define EW_MATCH_GAP_TOL_EV 1e-3
ew_status ew_lattice_match(const ew_catalogue *cat, const char *name, const char *substrate,
                           double substrate_x, double target_gap_eV, double T_K, double *x,
                           double *y, ew_error *err);

#endif
