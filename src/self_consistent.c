/* self_consistent.c — the outer loop of the self-consistent Schrödinger–Poisson solve: the
 * predictor–corrector of A. Trellakis, A. T. Galick, A. Pacelli, U. Ravaioli, J. Appl.
 * Phys. 81, 7880 (1997) (the Poisson update is poisson.c).  The iterations need the states
 * only: their passes skip the error estimate and keep one level per band for the lines; the
 * final pass at the converged potential uses the caller's options. */
#include "self_consistent.h"

#include <math.h>
#include <string.h>

#include "error.h"
#include "hole_dos_kp.h"
#include "poisson.h"
#include "schrodinger.h"

/* Alternate passes and Poisson updates from p's first guess until converged; *res is the
 * last pass (caller frees), *iters and *dU the iterations done and the last max|ΔU|. */
static ew_status iterate(const ew_stack *st, const ew_options *uopt, const ew_grid *g,
                         ew_poisson *p, ew_shift_lu *lu, ew_hole_dos_kp *hd, ew_progress *pg,
                         int *iters, double *dU, ew_error *err) {
  ew_options iopt = *uopt;
  iopt.error_estimate = 0;
  iopt.excitons = 0;
  iopt.lowest_levels = 1;
  ew_result *res = NULL;
  ew_status rc = ew_schrodinger_pass_on(st, &iopt, g, ew_poisson_potential(p), lu, &res, err);
  const int max_it = uopt->sp_max_iterations > 0 ? uopt->sp_max_iterations : EW_SP_MAX_ITER;
  int it = 0, conv = 0;
  *dU = INFINITY;
  while (rc == EW_OK && it < max_it) {
    it++;
    /* k·p hole densities of states (ew_options.hole_dos): tables for this pass */
    if (hd) rc = ew_hole_dos_kp_update(hd, res, ew_poisson_fermi_eV(p), err);
    if (rc == EW_OK) rc = ew_poisson_update(p, res, it, dU, err);
    if (rc != EW_OK) break;
    if (*dU < EW_SP_TOL_EV) {
      conv = 1;
      if (pg && ew_progress_step_to(pg, (size_t)max_it))
        rc = ew_progress_fail(pg, "the self-consistent solve", "steps", err);
      break;
    }
    if (pg && ew_progress_step(pg)) {
      rc = ew_progress_fail(pg, "the self-consistent solve", "steps", err);
      break;
    }
    ew_result_free(res);
    res = NULL;
    rc = ew_schrodinger_pass_on(st, &iopt, g, ew_poisson_potential(p), lu, &res, err);
  }
  ew_result_free(res);
  *iters = it;
  if (rc == EW_OK && !conv)
    rc = ew_fail(err, EW_ERR_NUMERIC, st->path, 0,
                 "self-consistent Schrödinger–Poisson solve did not converge: after %d outer "
                 "iterations max|ΔU| = %.3g eV (tolerance %.0e eV)",
                 it, *dU, EW_SP_TOL_EV);
  return rc;
}

ew_status ew_solve_self_consistent(const ew_stack *st, const ew_options *opt, ew_result **out,
                                   ew_error *err) {
  return ew_solve_self_consistent_progress(st, opt, NULL, out, err);
}

ew_status ew_solve_self_consistent_progress(const ew_stack *st, const ew_options *optin,
                                            ew_progress *pg, ew_result **out, ew_error *err) {
  return ew_solve_self_consistent_from(st, optin, NULL, pg, out, err);
}

/* The start's nodes are the grid's, bit for bit (then U means the same potential). */
static int start_fits(const ew_sp_start *s, const ew_grid *g) {
  return s && s->n == g->n && s->z_nm && s->U_eV &&
         memcmp(s->z_nm, g->z, g->n * sizeof *g->z) == 0;
}

ew_status ew_solve_self_consistent_from(const ew_stack *st, const ew_options *optin,
                                        const ew_sp_start *start, ew_progress *pg,
                                        ew_result **out, ew_error *err) {
  *out = NULL;
  /* Undoped with charge-neutral ends: no fixed charge, so the band is flat (intrinsic
     carriers aside) and the plain pass is the self-consistent one. */
  if (!st->doped && !st->surface_given && !st->bias_given)
    return ew_schrodinger_pass(st, optin, NULL, out, err);
  ew_status rc = ew_poisson_check_stack(st, err);
  if (rc != EW_OK) return rc;
  ew_options uopt;
  if (optin) uopt = *optin;
  else ew_options_default(&uopt);
  ew_grid *g = ew_schrodinger_grid(st, &uopt);
  if (!g) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (grid)");
  ew_poisson *p = NULL;
  ew_result *res = NULL;
  if (g->n < 3) rc = ew_fail(err, EW_ERR_INPUT, st->path, 0, "the stack is too thin for the grid");
  else rc = ew_poisson_new(st, g, fmax(st->temperature_K, EW_SP_T_FLOOR_K), &p, err);
  if (rc == EW_OK && start_fits(start, g)) ew_poisson_start(p, start->U_eV, start->fermi_eV);
  int it = 0;
  double dU = INFINITY;
  /* one factorization workspace for every pass on this grid: the pattern analysis and the L/U
     storage are kept across the outer iterations (only the potential changes) */
  ew_shift_lu *lu = rc == EW_OK ? ew_shift_lu_create(g->n) : NULL;
  if (rc == EW_OK && !lu) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (workspace)");
  ew_hole_dos_kp *hd = NULL;
  if (rc == EW_OK && uopt.hole_dos != EW_HOLE_DOS_PARABOLIC) {
    hd = ew_hole_dos_kp_create(uopt.hole_dos, fmax(st->temperature_K, EW_SP_T_FLOOR_K));
    if (!hd) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
    else ew_poisson_set_subband_dos(p, ew_hole_dos_kp_table, hd);
  }
  if (rc == EW_OK) rc = iterate(st, &uopt, g, p, lu, hd, pg, &it, &dU, err);
  if (rc == EW_OK) rc = ew_schrodinger_pass_on(st, &uopt, g, ew_poisson_potential(p), lu, &res, err);
  if (rc == EW_OK && pg && ew_progress_step(pg))
    rc = ew_progress_fail(pg, "the self-consistent solve", "steps", err);
  if (rc == EW_OK && hd) rc = ew_hole_dos_kp_update(hd, res, ew_poisson_fermi_eV(p), err);
  if (rc == EW_OK) rc = ew_poisson_attach(p, res, it, dU, err);
  if (rc == EW_OK && hd) rc = ew_hole_dos_kp_masses(hd, res, err);
  ew_hole_dos_kp_free(hd);
  if (rc == EW_OK) {
    *out = res;
    res = NULL;
  }
  ew_result_free(res);
  ew_shift_lu_free(lu);
  ew_poisson_free(p);
  ew_grid_free(g);
  return rc;
}
