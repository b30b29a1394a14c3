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
  size_t n_lines;
  ew_line *lines;
  size_t band_count[EW_BAND_COUNT];
  double window_eV[EW_BAND_COUNT]; /* upper end of the bound window, absolute eV */
  size_t work_factorizations, work_solves, work_counts;
  int nonparabolic;                /* electrons solved with the Kane mass */
  size_t dropped[EW_BAND_COUNT];   /* box states of a field-tilted continuum left out */
  size_t n_warnings;
  char (*warnings)[EW_WARNING_MAX];
};

#endif
