/* solve.h — the entry of a solve (ew_solve in epiwell.h) and the internal definition of its
 * result.  ew_solve runs one Schrödinger pass (schrodinger.h) or, for doped, surface-pinned
 * or biased stacks, the self-consistent loop above it (self_consistent.h), then the passes
 * over the finished result (excitons, exciton.h). */
#ifndef EW_SOLVE_H
#define EW_SOLVE_H

#include "eigen.h"
#include "grid.h"
#include "result.h"

#endif
