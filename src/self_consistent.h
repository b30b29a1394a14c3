/* self_consistent.h — the self-consistent Schrödinger–Poisson solve of doped, surface-pinned
 * or biased stacks: Schrödinger passes (schrodinger.h) alternated with Poisson updates
 * (poisson.h) until max|ΔU| < EW_SP_TOL_EV. */
#ifndef EW_SELF_CONSISTENT_H
#define EW_SELF_CONSISTENT_H

#include "progress.h"
#include "result.h"

/* The final pass at the self-consistent potential, with the self-consistent quantities in
 * out->sp and without excitons (a pass over the finished result, solve.c).  A stack without
 * doping, surface or bias gets one plain pass (flat bands). */
ew_status ew_solve_self_consistent(const ew_stack *st, const ew_options *opt, ew_result **out,
                                   ew_error *err);
/* The same with progress (may be NULL): one step per outer iteration up to the budget
 * (total = sp_max_iterations + the final pass; convergence skips to the budget's end), one
 * for the final pass; a cancel stops between iterations with EW_ERR_CANCELLED. */
ew_status ew_solve_self_consistent_progress(const ew_stack *st, const ew_options *opt,
                                            ew_progress *pg, ew_result **out, ew_error *err);

#endif
