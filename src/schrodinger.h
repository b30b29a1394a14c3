/* schrodinger.h — one Schrödinger pass: given a stack, the grid options and a potential, the
 * states of all three bands with their error estimates, observables and optical lines.
 *
 * For each band: the pencil on the fine grid (step h) gives eigenpairs in the bound window
 * (bound.h); the same stack on the grid of every second node (step 2h, same interfaces) gives
 * the eigenvalues again for Richardson's extrapolation (states.h).  Electrons with a Kane
 * mass go through nonparabolic.c instead of the plain eigensolver. */
#ifndef EW_SCHRODINGER_H
#define EW_SCHRODINGER_H

#include "result.h"
#include "superlu_adapter.h"

#define EW_DEFAULT_STEP_NM 0.05 /* grid step when neither the options nor the stack give one */

/* The fine grid a pass uses for st and opt (caller frees), so that a potential can be given
 * on its nodes; NULL when out of memory or larger than EW_GRID_MAX_NODES. */
ew_grid *ew_schrodinger_grid(const ew_stack *st, const ew_options *opt);

/* One pass with U[n] (eV, on the nodes of ew_schrodinger_grid(st, opt)) added to every band
 * edge; U == NULL: the stack as it is; opt == NULL: the defaults.  The result has states,
 * lines and warnings; the exciton fields of its lines are 0 (exciton.c fills them). */
ew_status ew_schrodinger_pass(const ew_stack *st, const ew_options *opt, const double *U,
                              ew_result **out, ew_error *err);
/* The same with the caller's factorization workspace for the fine grid (superlu_adapter.h;
 * kept between passes on one grid: the self-consistent iterations), shared by the bands of
 * the plain eigensolver; NULL or of another size: the pass makes its own, also shared. */
ew_status ew_schrodinger_pass_lu(const ew_stack *st, const ew_options *opt, const double *U,
                                 ew_shift_lu *lu, ew_result **out, ew_error *err);
/* The same on a copy of base, ew_schrodinger_grid(st, opt) without a potential, instead of a
 * fine grid built anew (the self-consistent iterations: only U changes; the same values);
 * base == NULL: as ew_schrodinger_pass_lu. */
ew_status ew_schrodinger_pass_on(const ew_stack *st, const ew_options *opt, const ew_grid *base,
                                 const double *U, ew_shift_lu *lu, ew_result **out,
                                 ew_error *err);

#endif
