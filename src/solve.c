/* solve.c — ew_solve, from a stack to a finished result: one Schrödinger pass or the
 * self-consistent Schrödinger–Poisson loop, then the passes that read the finished states
 * (excitons).  Nothing below calls back up here. */
#include "solve.h"

#include "error.h"
#include "exciton.h"
#include "hole_dos_kp.h"
#include "poisson.h"
#include "progress.h"
#include "schrodinger.h"
#include "self_consistent.h"

#define SOLVE_STEPS "steps"

ew_status ew_solve(const ew_stack *st, const ew_options *opt, ew_result **out, ew_error *err) {
  ew_result *r = NULL;
  if (out) *out = NULL;
  if (!st || !out) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_solve: NULL argument");
  ew_options defaults;
  if (!opt) { /* NULL options: the defaults (epiwell.h), for the loop as for one pass */
    ew_options_default(&defaults);
    opt = &defaults;
  }
  if (!ew_hole_dos_name(opt->hole_dos))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_solve: hole_dos %d: give EW_HOLE_DOS_PARABOLIC, "
                   "EW_HOLE_DOS_KP or EW_HOLE_DOS_KP_AXIAL", opt->hole_dos);
  if (opt->hole_dos != EW_HOLE_DOS_PARABOLIC && st->polarized) /* wurtzite: no Luttinger model */
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "the k·p hole densities of states "
                   "(--hole-dos %s) use the zinc-blende Luttinger–Kohn model; this stack is "
                   "wurtzite: give --hole-dos parabolic", ew_hole_dos_name(opt->hole_dos));
  /* doping, a pinned surface or a bias all need the self-consistent potential */
  int sc = st->doped || st->surface_given || st->bias_given;
  /* steps (epiwell.h): [outer iterations up to the budget +] the final pass [+ excitons] */
  size_t budget = opt->sp_max_iterations > 0 ? (size_t)opt->sp_max_iterations : EW_SP_MAX_ITER;
  ew_progress pg;
  ew_progress_init(&pg, opt->progress, opt->progress_ctx,
                   (sc ? budget : 0) + 1 + (opt->excitons ? 1 : 0));
  ew_status rc = sc ? ew_solve_self_consistent_progress(st, opt, &pg, &r, err)
                    : ew_schrodinger_pass(st, opt, NULL, &r, err);
  /* k·p density-of-states masses of an undoped stack's hole levels (the loop makes its own) */
  if (rc == EW_OK && !sc && opt->hole_dos != EW_HOLE_DOS_PARABOLIC)
    rc = ew_hole_dos_kp_report(r, opt->hole_dos, err);
  if (rc == EW_OK && !sc && ew_progress_step(&pg))
    rc = ew_progress_fail(&pg, "the solve", SOLVE_STEPS, err);
  if (rc == EW_OK && r->opt.excitons) rc = ew_result_add_excitons(r, err);
  if (rc == EW_OK && r->opt.excitons && ew_progress_step(&pg))
    rc = ew_progress_fail(&pg, "the solve", SOLVE_STEPS, err);
  if (rc != EW_OK) {
    ew_result_free(r);
    r = NULL;
  }
  *out = r;
  return rc;
}
