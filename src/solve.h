/* solve.h — internal definition of ew_result: one solved stack. */
#ifndef EW_SOLVE_H
#define EW_SOLVE_H

#include "eigen.h"
#include "grid.h"

struct ew_result {
  const ew_stack *stack;   /* borrowed: must outlive the result */
  ew_options opt;
  double step_nm;          /* requested step (cells are at most this long) */
  ew_grid *grid;           /* fine grid */
  size_t n_states;
  ew_state *states;        /* e…, hh…, lh…, each band ascending in confinement */
  double *psi;             /* [grid->n × n_states] */
  double *mean_inv_mass;   /* [n_states] ⟨m0/m⟩ in the discrete Thomas–Reiche–Kuhn form
                              (ew_obs_inverse_mass_M; Kane electrons: the masses at the
                              state's own energy), for oscillator strengths */
  size_t n_lines;
  ew_line *lines;
  size_t band_count[EW_BAND_COUNT];
  double window_eV[EW_BAND_COUNT]; /* upper end of the bound window, absolute eV */
  size_t work_factorizations, work_solves, work_counts;
  int nonparabolic;                /* electrons solved with the Kane mass */
  size_t unestimated;              /* states the coarse grid could not hold (no estimate) */
  size_t dropped[EW_BAND_COUNT];   /* box states of a field-tilted continuum left out */
  size_t n_warnings;
  char (*warnings)[EW_WARNING_MAX];
  struct ew_sp_info *sp;           /* self-consistent Schrödinger–Poisson results (owned;
                                      NULL for a plain solve): see poisson.h */
};

struct ew_sp_info;
/* Release a result's self-consistent information (poisson.c); NULL is a no-op. */
void ew_sp_info_free(struct ew_sp_info *sp);

/* ew_solve with U[n] (eV, on the nodes of the fine grid that ew_solve builds for this
 * stack and options: see ew_solve_grid) added to every band edge; U == NULL: plain. */
ew_status ew_solve_potential(const ew_stack *st, const ew_options *opt, const double *U,
                             ew_result **out, ew_error *err);
/* The fine grid ew_solve uses for st and opt (caller frees), so that a potential can be
 * given on its nodes; NULL when out of memory or too large. */
ew_grid *ew_solve_grid(const ew_stack *st, const ew_options *opt);
/* Doped stacks: the self-consistent Schrödinger–Poisson solve (poisson.c). */
ew_status ew_solve_self_consistent(const ew_stack *st, const ew_options *opt, ew_result **out,
                                   ew_error *err);

#endif
