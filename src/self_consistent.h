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

/* A start for the loop other than flat bands (a warm start, sweep.c): the converged potential
 * U_eV[n] and Fermi level of a neighbouring solve on nodes z_nm[n].  It is used only when the
 * stack's own grid has exactly these nodes (same count, same bits); otherwise, or with start
 * NULL, the loop starts from flat bands as above.  The loop then stops at another point
 * within its tolerance (max|ΔU| < EW_SP_TOL_EV), not at the cold start's bits. */
typedef struct {
  size_t n;
  const double *z_nm, *U_eV;
  double fermi_eV;
} ew_sp_start;
ew_status ew_solve_self_consistent_from(const ew_stack *st, const ew_options *opt,
                                        const ew_sp_start *start, ew_progress *pg,
                                        ew_result **out, ew_error *err);

#endif
