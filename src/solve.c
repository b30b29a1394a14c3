/* solve.c — from a stack to levels, wavefunctions and lines.
 *
 * For each band: the pencil on the fine grid (step h) gives eigenpairs in the bound window;
 * the same stack on the grid of every second node (step 2h, same interfaces) gives the
 * eigenvalues again.  The scheme is second order, so Richardson extrapolation
 * E = E_h + (E_h − E_2h)/3 removes the leading error and |E_h − E_2h|/3, the size of that
 * correction, is reported as the error estimate (L. F. Richardson, Phil. Trans. R. Soc. A
 * 210, 307 (1911)). */
#include "solve.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "exciton.h"
#include "nonparabolic.h"
#include "observables.h"
#include "poisson.h"
#include "strain.h"

#define EW_DEFAULT_STEP_NM 0.05

void ew_options_default(ew_options *opt) {
  opt->grid_step_nm = 0.0;
  opt->lowest_levels = 3;
  opt->error_estimate = 1;
  opt->residual_tol = 1e-8;
  opt->excitons = 1;
  opt->sp_max_iterations = EW_SP_MAX_ITER;
}

void ew_result_free(ew_result *r) {
  if (!r) return;
  ew_grid_free(r->grid);
  free(r->warnings);
  free(r->states);
  free(r->psi);
  free(r->mean_inv_mass);
  free(r->lines);
  ew_sp_info_free(r->sp);
  free(r);
}

size_t ew_result_state_count(const ew_result *r) { return r->n_states; }
const ew_state *ew_result_state(const ew_result *r, size_t i) {
  return i < r->n_states ? &r->states[i] : NULL;
}
const double *ew_result_wavefunction(const ew_result *r, size_t i) {
  return i < r->n_states ? r->psi + i * r->grid->n : NULL;
}
size_t ew_result_line_count(const ew_result *r) { return r->n_lines; }
const ew_line *ew_result_line(const ew_result *r, size_t i) {
  return i < r->n_lines ? &r->lines[i] : NULL;
}
size_t ew_result_node_count(const ew_result *r) { return r->grid->n; }
const double *ew_result_z_nm(const ew_result *r) { return r->grid->z; }
const double *ew_result_edge_eV(const ew_result *r, ew_band b) { return r->grid->edge[b]; }
const double *ew_result_mass(const ew_result *r, ew_band b) { return r->grid->mass[b]; }
double ew_result_grid_step_nm(const ew_result *r) { return r->step_nm; }
size_t ew_result_band_count(const ew_result *r, ew_band b) { return r->band_count[b]; }
double ew_result_window_eV(const ew_result *r, ew_band b) { return r->window_eV[b]; }

/* Top of the bound window of a band (positive-mass scale): the continuum of each side starts
 * at the band edge the outer layer has at its outer face (the outer layers stand for
 * semi-infinite material), the lower of the two sides.  Edges read off the grid's nodes, so
 * they include grading and the self-consistent potential: a barrier that band bending lifts
 * next to the well does not make its flat far part "bound" (its box states against the
 * outer walls would pass as levels).  In a field the faces' edges differ by the tilt and
 * every state is a resonance: each side then counts up to its highest point, and the box
 * states are dropped by their location (inner_probability). */
#define EW_RICHARDSON_MAX_REL 0.02 /* see the estimate in ew_solve_potential */

static double window_top(const ew_stack *st, const ew_grid *g, ew_band band) {
  double sgn = band == EW_BAND_E ? 1.0 : -1.0;
  if (st->field_kV_cm == 0.0)
    return fmin(sgn * g->edge[band][0], sgn * g->edge[band][g->n - 1]);
  double best[2] = {-INFINITY, -INFINITY};
  size_t last = st->n_layers - 1;
  for (size_t i = 0; i < g->n; i++) {
    int side = g->layer[i] == 0 ? 0 : g->layer[i] == last ? 1 : -1;
    if (side < 0) continue;
    double v = band == EW_BAND_E ? g->edge[band][i] : -g->edge[band][i];
    if (v > best[side]) best[side] = v;
  }
  if (st->n_layers == 1) best[1] = best[0];
  return fmin(best[0], best[1]);
}

/* In a field no state is truly bound and the hard walls turn the continuum into box states
 * living in the tilted outer layers.  A quasi-bound well state keeps most of its probability
 * in the inner layers (everything between the two outer layers); a box state does not.
 * Returns that inner probability (1 when there are no inner layers to tell them apart). */
static double inner_probability(const ew_stack *st, const ew_grid *g, const double *psi) {
  if (st->n_layers < 3) return 1.0;
  double zl = st->layers[1].z_start_nm, zr = st->layers[st->n_layers - 1].z_start_nm;
  double p = 0.0;
  for (size_t i = 0; i < g->n; i++)
    if (g->z[i] >= zl && g->z[i] <= zr) p += g->w[i] * psi[i] * psi[i];
  return p;
}

static int add_warning(ew_result *r, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;
static int add_warning(ew_result *r, const char *fmt, ...) {
  char (*w)[EW_WARNING_MAX] = realloc(r->warnings, (r->n_warnings + 1) * sizeof *w);
  if (!w) return 0;
  r->warnings = w;
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(r->warnings[r->n_warnings++], EW_WARNING_MAX, fmt, ap);
  va_end(ap);
  return 1;
}

size_t ew_result_warning_count(const ew_result *r) { return r->n_warnings; }
const char *ew_result_model(const ew_result *r) {
  return r->nonparabolic ? "BenDaniel-Duke; electrons with the Kane energy-dependent mass "
                           "(non-parabolic), holes parabolic"
                         : "BenDaniel-Duke, parabolic bands";
}
const char *ew_result_warning(const ew_result *r, size_t i) {
  return i < r->n_warnings ? r->warnings[i] : NULL;
}

/* Warnings about the stack itself: what the model leaves out for these layers. */
static int stack_warnings(ew_result *r) {
  const ew_stack *st = r->stack;
  static const char *valley[] = {"Γ", "X", "L"};
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_bands *b = &st->layers[k].bands;
    if (b->lowest_valley > 0 && b->lowest_valley < 3) {
      double eg = b->lowest_valley == 1 ? b->Eg_X_eV : b->Eg_L_eV;
      if (!add_warning(r,
                       "layer '%s' (%s): the lowest conduction minimum is %s (%.3f eV) below Γ "
                       "(%.3f eV): electrons there scatter into %s states, which this Γ-valley "
                       "model does not contain; the layer's effective barrier for electrons is "
                       "lower than shown",
                       st->layers[k].name, st->layers[k].material, valley[b->lowest_valley], eg,
                       b->Eg_G_eV, valley[b->lowest_valley]))
        return 0;
    }
  }
  /* strain: each layer against its Matthews–Blakeslee thickness, and the strained part of
     the stack as one layer of the thickness-weighted mean strain (J. W. Matthews,
     A. E. Blakeslee, J. Cryst. Growth 27, 118 (1974)) */
  double sum_t = 0.0, sum_et = 0.0, a = 0.0, nu = 0.0;
  int n_strained = 0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    const ew_bands *b = &ly->bands;
    if (b->eps_par == 0.0) continue;
    if (ly->thickness_nm > b->critical_thickness_nm &&
        !add_warning(r, "layer '%s' (%s): %.2f nm exceeds its Matthews–Blakeslee critical "
                     "thickness %.2f nm at strain %.3f %%: it is likely to relax by misfit "
                     "dislocations, and the strained band edges used here would not apply",
                     ly->name, ly->material, ly->thickness_nm, b->critical_thickness_nm,
                     100.0 * b->eps_par))
      return 0;
    sum_t += ly->thickness_nm;
    sum_et += b->eps_par * ly->thickness_nm;
    n_strained++;
    if (a == 0.0) a = b->a_nm, nu = b->c11_kbar + b->c12_kbar > 0 ? b->c12_kbar / (b->c11_kbar + b->c12_kbar) : 0.3;
  }
  if (n_strained > 1 && sum_et != 0.0) { /* a single layer is judged by its own thickness */
    double mean = sum_et / sum_t, hc = ew_mb_critical_thickness_nm(a, mean, nu, 1);
    if (sum_t > hc &&
        !add_warning(r, "cumulative strain: the strained layers add up to %.1f nm at a mean "
                     "strain of %.3f %%, beyond the %.1f nm a single layer of that strain "
                     "could keep coherent (Matthews–Blakeslee); strain-balance the stack or "
                     "expect relaxation", sum_t, 100.0 * mean, hc))
      return 0;
  }
  return 1;
}

static int grow(void **p, size_t *cap, size_t need, size_t size) {
  if (need <= *cap) return 1;
  size_t nc = *cap ? *cap : 16;
  while (nc < need) nc *= 2;
  void *q = realloc(*p, nc * size);
  if (!q) return 0;
  *p = q;
  *cap = nc;
  return 1;
}

/* Solve one band on the fine grid (vectors) and, if asked, the coarse grid (values). */
static ew_status solve_band(ew_result *r, const ew_grid *coarse, ew_band band,
                            ew_eigenpairs *fine, double **coarse_vals, size_t *n_coarse,
                            ew_error *err) {
  const ew_grid *g = r->grid;
  ew_pencil *p = ew_pencil_build(g, band);
  if (!p) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (pencil, n = %zu)", g->n);
  double top = window_top(r->stack, g, band);
  double lo = p->vmin - 1e-9 * (1.0 + fabs(p->vmin));
  ew_status rc = EW_OK;
  if (top <= lo) { /* no well at all: an empty window */
    memset(fine, 0, sizeof *fine);
    *coarse_vals = NULL;
    *n_coarse = 0;
    ew_pencil_free(p);
    return EW_OK;
  }
  if (band == EW_BAND_E && ew_nonparabolic_applies(r->stack)) {
    ew_pencil_free(p);
    rc = ew_nonparabolic_levels(r->stack, g, coarse, lo, top, fine, coarse_vals,
                                &r->work_counts, err);
    *n_coarse = rc == EW_OK && coarse ? fine->count : 0;
    r->nonparabolic = rc == EW_OK;
    return rc;
  }
  rc = ew_eigen_window(p, lo, top, 1, fine, err);
  ew_pencil_free(p);
  r->work_factorizations += fine->factorizations;
  r->work_solves += fine->solves;
  r->work_counts += fine->counts;
  *coarse_vals = NULL;
  *n_coarse = 0;
  if (rc != EW_OK || !coarse) return rc;
  if (fine->count == 0) return EW_OK;
  ew_pencil *pc = ew_pencil_build(coarse, band);
  size_t nc = coarse->n, k = fine->count;
  double *guess = pc ? malloc(nc * k * sizeof *guess) : NULL;
  double *vals = malloc(k * sizeof *vals);
  if (!pc || !guess || !vals) {
    ew_pencil_free(pc);
    free(guess);
    free(vals);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (coarse grid)");
  }
  /* coarse node i is fine node 2i + 1 (every layer has an even number of fine cells) */
  for (size_t j = 0; j < k; j++)
    for (size_t i = 0; i < nc; i++) guess[j * nc + i] = fine->vectors[j * g->n + 2 * i + 1];
  rc = ew_eigen_values_near(pc, lo, guess, k, 1e-11, vals, &r->work_counts, err);
  ew_pencil_free(pc);
  free(guess);
  if (rc != EW_OK) {
    free(vals);
    return rc;
  }
  *coarse_vals = vals;
  *n_coarse = k;
  return EW_OK;
}

/* in-plane masses of the count states of band b from state first on (see nonparabolic.h) */
static int inplane_masses(ew_result *r, ew_band b, size_t first, size_t count) {
  double *E = malloc((count ? count : 1) * 2 * sizeof *E), *m = E + (count ? count : 1);
  if (!E) return 0;
  for (size_t j = 0; j < count; j++) E[j] = r->states[first + j].energy_eV;
  int ok = ew_inplane_masses(r->stack, r->grid, b, r->nonparabolic, count, E,
                             r->psi + first * r->grid->n, m, r->mean_inv_mass + first);
  for (size_t j = 0; ok && j < count; j++) r->states[first + j].inplane_mass = m[j];
  free(E);
  return ok;
}

static ew_status add_lines(ew_result *r, ew_error *err) {
  const ew_grid *g = r->grid;
  size_t cap = 0, first[EW_BAND_COUNT], cnt[EW_BAND_COUNT], s0 = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    first[b] = s0;
    cnt[b] = r->band_count[b];
    s0 += cnt[b];
  }
  size_t K = r->opt.lowest_levels > 0 ? (size_t)r->opt.lowest_levels : (size_t)-1;
  /* intersubband: lower state among the lowest K of its band, upper any higher state */
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    for (size_t i = 0; i < cnt[b] && i < K; i++) {
      size_t si = first[b] + i;
      const double *pi = r->psi + si * g->n;
      double invm = r->mean_inv_mass[si]; /* Kane: the masses at the lower state's energy */
      for (size_t j = i + 1; j < cnt[b]; j++) {
        size_t sj = first[b] + j;
        if (!grow((void **)&r->lines, &cap, r->n_lines + 1, sizeof *r->lines))
          return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (lines)");
        ew_line *ln = &r->lines[r->n_lines++];
        memset(ln, 0, sizeof *ln);
        ln->kind = EW_LINE_INTERSUBBAND;
        ln->upper = sj;
        ln->lower = si;
        ln->energy_eV = fabs(r->states[sj].energy_eV - r->states[si].energy_eV);
        ln->wavelength_nm = EW_HC_EVNM / ln->energy_eV;
        ln->dipole_nm = fabs(ew_obs_dipole(g, pi, r->psi + sj * g->n));
        ln->oscillator_strength = ew_obs_oscillator_strength(ln->energy_eV, ln->dipole_nm, invm);
        ln->allowed = 1;
      }
    }
  }
  /* interband: e_n with hh_m and lh_m, n and m among the lowest K */
  for (size_t i = 0; i < cnt[EW_BAND_E] && i < K; i++) {
    for (int b = EW_BAND_HH; b <= EW_BAND_LH; b++) {
      for (size_t j = 0; j < cnt[b] && j < K; j++) {
        size_t se = first[EW_BAND_E] + i, sh = first[b] + j;
        if (!grow((void **)&r->lines, &cap, r->n_lines + 1, sizeof *r->lines))
          return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (lines)");
        ew_line *ln = &r->lines[r->n_lines++];
        memset(ln, 0, sizeof *ln);
        ln->kind = EW_LINE_INTERBAND;
        ln->upper = se;
        ln->lower = sh;
        ln->energy_eV = r->states[se].energy_eV - r->states[sh].energy_eV;
        ln->wavelength_nm = EW_HC_EVNM / ln->energy_eV;
        double ov = ew_obs_overlap(g, r->psi + se * g->n, r->psi + sh * g->n);
        ln->overlap = ov * ov;
        ln->allowed = ln->overlap >= 1e-3;
      }
    }
  }
  return EW_OK;
}

static double step_of(const ew_stack *st, const ew_options *opt) {
  return opt && opt->grid_step_nm > 0 ? opt->grid_step_nm
         : st->grid_step_nm > 0      ? st->grid_step_nm
                                     : EW_DEFAULT_STEP_NM;
}

ew_grid *ew_solve_grid(const ew_stack *st, const ew_options *opt) {
  double step = step_of(st, opt);
  if (!(step > 0) || st->total_nm / step > 5e6) return NULL;
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  if (!cells) return NULL;
  ew_grid_cells_for_step(st, step, cells);
  ew_grid *g = ew_grid_layered(st, cells);
  free(cells);
  return g;
}

ew_status ew_solve(const ew_stack *st, const ew_options *optin, ew_result **out, ew_error *err) {
  /* doping, a pinned surface or a bias all need the self-consistent potential */
  if (st->doped || st->surface_given || st->bias_given)
    return ew_solve_self_consistent(st, optin, out, err);
  return ew_solve_potential(st, optin, NULL, out, err);
}

ew_status ew_solve_potential(const ew_stack *st, const ew_options *optin, const double *U,
                             ew_result **out, ew_error *err) {
  *out = NULL;
  ew_options opt;
  if (optin) opt = *optin;
  else ew_options_default(&opt);
  if (isnan(opt.grid_step_nm) || opt.grid_step_nm < 0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "grid step %g nm: give a positive step, or 0 for the stack's or the default",
                   opt.grid_step_nm);
  double step = step_of(st, &opt);
  if (!(step > 0) || !isfinite(step))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "grid step must be a positive number of nm");
  double nodes = st->total_nm / step;
  if (nodes > 5e6)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0,
                   "grid of %.3g nodes (step %g nm over %g nm) is too large: it would need "
                   "about %.1f GB",
                   nodes, step, st->total_nm, nodes * 200.0 * 3 / 1e9);
  ew_result *r = calloc(1, sizeof *r);
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  ew_grid *coarse = NULL;
  ew_eigenpairs fine[EW_BAND_COUNT];
  double *cvals[EW_BAND_COUNT] = {0};
  size_t ncv[EW_BAND_COUNT] = {0};
  memset(fine, 0, sizeof fine);
  ew_status rc = EW_OK;
  if (!r || !cells) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto fail;
  }
  r->stack = st;
  r->opt = opt;
  r->step_nm = step;
  ew_grid_cells_for_step(st, step, cells);
  r->grid = ew_grid_layered(st, cells);
  if (opt.error_estimate) {
    for (size_t k = 0; k < st->n_layers; k++) cells[k] /= 2; /* cells are even: same faces */
    coarse = ew_grid_layered(st, cells);
  }
  if (!r->grid || (opt.error_estimate && !coarse)) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (grid of %.0f nodes)", nodes);
    goto fail;
  }
  if (U) { /* the self-consistent electrostatic potential, on both grids */
    double *Uc = coarse ? malloc(coarse->n * sizeof *Uc) : NULL;
    if (coarse && Uc) ew_grid_sample_coarse(U, coarse->n, Uc);
    int ok = ew_grid_add_potential(r->grid, U) && (!coarse || (Uc && ew_grid_add_potential(coarse, Uc)));
    free(Uc);
    if (!ok) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (potential)");
      goto fail;
    }
  }
  size_t total = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    rc = solve_band(r, coarse, (ew_band)b, &fine[b], &cvals[b], &ncv[b], err);
    if (rc != EW_OK) goto fail;
    r->band_count[b] = fine[b].count;
    double top = window_top(st, r->grid, (ew_band)b);
    r->window_eV[b] = b == EW_BAND_E ? top : -top;
    total += fine[b].count;
  }
  size_t n = r->grid->n;
  r->n_states = total;
  r->states = calloc(total ? total : 1, sizeof *r->states);
  r->psi = malloc((total ? total : 1) * n * sizeof *r->psi);
  r->mean_inv_mass = malloc((total ? total : 1) * sizeof *r->mean_inv_mass);
  if (!r->states || !r->psi || !r->mean_inv_mass) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu states)", total);
    goto fail;
  }
  size_t s = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_pencil *p = ew_pencil_build(r->grid, (ew_band)b);
    if (!p) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (pencil)");
      goto fail;
    }
    double sign = b == EW_BAND_E ? 1.0 : -1.0; /* back to the electron energy scale */
    size_t kept = 0;
    for (size_t j = 0; j < fine[b].count; j++) {
      const double *v = fine[b].vectors + j * n;
      if (st->field_kV_cm != 0.0 && inner_probability(st, r->grid, v) < 0.5) {
        r->dropped[b]++;
        continue;
      }
      ew_state *q = &r->states[s];
      kept++;
      double *psi = r->psi + s++ * n;
      memcpy(psi, v, n * sizeof *psi);
      /* sign convention: the largest lobe positive, so pictures and overlaps repeat */
      size_t imax = 0;
      for (size_t i = 1; i < n; i++)
        if (fabs(psi[i]) > fabs(psi[imax])) imax = i;
      if (psi[imax] < 0)
        for (size_t i = 0; i < n; i++) psi[i] = -psi[i];
      double e = fine[b].values[j];
      q->residual = fine[b].residual ? fine[b].residual[j] : ew_pencil_residual(p, psi, e);
      q->flagged = !(q->residual <= opt.residual_tol);
      q->band = (ew_band)b;
      q->n = (int)kept;
      snprintf(q->label, sizeof q->label, "%s%u", ew_band_name((ew_band)b), (unsigned)(kept % 1000000u));
      q->error_eV = -1.0;
      /* Richardson needs the asymptotic regime: a coarse value that is missing, or that
         differs from the fine one by more than 2 % of the level's height above the
         potential minimum (a state whose oscillations the grid of step 2h cannot follow:
         aliasing, not an O(h²) error; resolved levels differ by ~1e-4 of it), gives no
         estimate and leaves the fine value as it is */
      if (opt.error_estimate && j < ncv[b] &&
          !(fabs(e - cvals[b][j]) <= EW_RICHARDSON_MAX_REL * (e - p->vmin))) {
        r->unestimated++;
      } else if (opt.error_estimate && j < ncv[b]) {
        double corr = (e - cvals[b][j]) / 3.0;
        e += corr;
        q->error_eV = fabs(corr);
      }
      q->energy_eV = sign * e;
      /* where the state lives */
      double *prob = calloc(st->n_layers, sizeof *prob);
      if (!prob) {
        ew_pencil_free(p);
        rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
        goto fail;
      }
      for (size_t i = 0; i < n; i++) prob[r->grid->layer[i]] += r->grid->w[i] * psi[i] * psi[i];
      size_t best = 0;
      for (size_t k = 1; k < st->n_layers; k++)
        if (prob[k] > prob[best]) best = k;
      q->layer = best;
      q->layer_probability = prob[best];
      free(prob);
      q->edge_eV = ew_layer_edge(&st->layers[best], (ew_band)b);
      q->depth_eV = fabs(q->energy_eV - q->edge_eV);
    }
    ew_pencil_free(p);
    r->band_count[b] = kept;
    if (!inplane_masses(r, (ew_band)b, s - kept, kept)) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
      goto fail;
    }
    if (r->dropped[b] &&
        !add_warning(r, "%zu %s state(s) of the field-tilted continuum (box states against the "
                     "outer walls) were dropped; the listed states are the quasi-bound ones",
                     r->dropped[b], ew_band_name((ew_band)b))) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
      goto fail;
    }
  }
  r->n_states = s;
  if (r->unestimated &&
      !add_warning(r, "%zu state(s) have no error estimate: the grid of step 2h cannot resolve "
                   "them (fewer nodes than bound states, or oscillations finer than its step); "
                   "use a smaller grid step", r->unestimated)) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto fail;
  }
  if (!stack_warnings(r)) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto fail;
  }
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].flagged &&
        !add_warning(r, "%s failed its residual check (relative residual %.2e)",
                     r->states[i].label, r->states[i].residual)) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
      goto fail;
    }
  rc = add_lines(r, err);
  if (rc != EW_OK) goto fail;
  if (opt.excitons) {
    rc = ew_result_add_excitons(r, err);
    if (rc != EW_OK) goto fail;
  }
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_eigenpairs_free(&fine[b]);
    free(cvals[b]);
  }
  ew_grid_free(coarse);
  free(cells);
  *out = r;
  return EW_OK;
fail:
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_eigenpairs_free(&fine[b]);
    free(cvals[b]);
  }
  ew_grid_free(coarse);
  free(cells);
  ew_result_free(r);
  return rc;
}
