/* options.c — the default solve options (epiwell.h). */
#include "epiwell.h"

#include "poisson.h"

void ew_options_default(ew_options *opt) {
  if (!opt) return; /* NULL: nothing to fill (epiwell.h) */
  opt->grid_step_nm = 0.0;
  opt->lowest_levels = 3;
  opt->error_estimate = 1;
  opt->residual_tol = 1e-8;
  opt->excitons = 1;
  opt->sp_max_iterations = EW_SP_MAX_ITER;
  opt->line_min_strength = 1e-3; /* = the interband "allowed" threshold of lines.c */
  opt->progress = NULL;
  opt->progress_ctx = NULL;
  opt->hole_dos = EW_HOLE_DOS_PARABOLIC; /* the k·p densities of states cost dispersions */
}

const char *ew_hole_dos_name(int hole_dos) {
  return hole_dos == EW_HOLE_DOS_PARABOLIC ? "parabolic"
         : hole_dos == EW_HOLE_DOS_KP      ? "kp"
         : hole_dos == EW_HOLE_DOS_KP_AXIAL ? "kp-axial"
                                             : NULL;
}
