/* gain.c — the subbands, matrix elements and densities of the gain model (see gain.h). */
#include "gain.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "dispersion.h"
#include "error.h"
#include "kp_hamiltonian.h"
#include "stack.h"

#define MAX_DENSITIES 1000
#define MAX_ENERGIES 20000

void ew_gain_clear(ew_gain *g) {
  free(g->e_eV);
  free(g->e_mass);
  free(g->k_inv_nm);
  free(g->h_eV);
  free(g->f_te);
  free(g->f_tm);
  free(g->density_cm2);
  free(g->fermi_c_eV);
  free(g->fermi_v_eV);
  free(g->energy_eV);
  free(g->gain_te);
  free(g->gain_tm);
  free(g->spont);
  free(g->peak_te);
  free(g->peak_te_eV);
  free(g->peak_tm);
  memset(g, 0, sizeof *g);
}

static ew_status check_options(const ew_gain_options *o, ew_error *err) {
  if (o->model != 4 && o->model != 6)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--model %d: give 4band or 6band", o->model);
  double a = o->density_from_cm2, b = o->density_to_cm2, s = o->density_step_cm2;
  if (!(a > 0) || !(b >= a) || !(s > 0) || !isfinite(b) || !isfinite(s) ||
      (b - a) / s > MAX_DENSITIES - 1 + 1e-9)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--density %g:%g:%g cm^-2: give FROM > 0, TO "
                   ">= FROM, STEP > 0, at most %d densities", a, b, s, MAX_DENSITIES);
  double ea = o->energy_from_eV, eb = o->energy_to_eV, es = o->energy_step_eV;
  if (!isfinite(ea) || !isfinite(eb) || !(es > 0) || !isfinite(es) || eb < ea ||
      (eb - ea) / es > MAX_ENERGIES - 1 + 1e-9)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "photon energies %g:%g:%g eV: give FROM <= TO, "
                   "STEP > 0, at most %d energies", ea, eb, es, MAX_ENERGIES);
  return ew_kp_optics_check(o->linewidth_meV, o->refractive_index, o->kmax_inv_nm, o->k_points,
                            o->grid_step_nm, err);
}

ew_status ew_kp_optics_check(double linewidth_meV, double refractive_index, double kmax_inv_nm,
                             size_t k_points, double grid_step_nm, ew_error *err) {
  if (!(linewidth_meV > 0) || !(linewidth_meV <= 200))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--linewidth %g meV: give (0, 200]", linewidth_meV);
  if (!(refractive_index >= 1) || !(refractive_index <= 10))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "refractive index %g: give 1 to 10",
                   refractive_index);
  if (!(kmax_inv_nm > 0) || !(kmax_inv_nm <= 10) || k_points < 2 || k_points > 2000)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "k grid %g /nm, %zu points: give kmax in (0, 10] "
                   "and 2 to 2000 points", kmax_inv_nm, k_points);
  if (isnan(grid_step_nm) || grid_step_nm < 0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "grid step %g nm: give a positive step or 0",
                   grid_step_nm);
  return EW_OK;
}

/* what the k·p callback needs */
typedef struct {
  ew_gain *g;
  const ew_result *res;
  const size_t *e_state; /* [ne] state indices of the electron subbands */
  const ew_dispersion *d; /* its subband count is set before the first point */
  double complex U[36];
} mx_ctx;

/* F_te, F_tm of every pair (n, b) at point i: the overlaps O_j = Σ w ψ_n x_{b,j} of the
 * electron envelope with the hole spinor's components, turned into X,Y,Z ⊗ spin amplitudes
 * a = U O (U the Clebsch–Gordan unitary of kp_hamiltonian.h); <S σ|p_α|α' σ'> = P δ δ, so
 * |ê·p|² = P² |a_ασ|² summed over the electron spin σ (Chuang 1995, sec. 9.5: the heavy hole
 * gives TE 3/2 M_b², TM 0, the light hole 1/2 and 2 M_b², M_b² = m0 Ep / 6 = P²/3). */
static ew_status on_point(void *ctx, size_t i, const double complex *X, size_t dim, int nb,
                          const double *w, ew_error *err) {
  mx_ctx *c = ctx;
  ew_gain *g = c->g;
  size_t n = dim / (size_t)nb;
  if (i == 0) { /* the arrays, now that the subband count is known */
    g->nb = 2 * c->d->subbands, g->nk = c->d->points;
    g->f_te = calloc(g->ne * g->nb * g->nk, sizeof *g->f_te);
    g->f_tm = calloc(g->ne * g->nb * g->nk, sizeof *g->f_tm);
    if (!g->f_te || !g->f_tm) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (gain)");
  }
  if (n != ew_result_node_count(c->res))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "gain: the k·p grid (%zu nodes) is not the "
                   "solve's (%zu)", n, ew_result_node_count(c->res));
  for (size_t e = 0; e < g->ne; e++) {
    const double *psi = ew_result_wavefunction(c->res, c->e_state[e]);
    for (size_t b = 0; b < g->nb; b++) {
      double complex O[EW_KP_MAX_NB] = {0};
      const double complex *x = X + b * dim;
      for (size_t k = 0; k < n; k++)
        for (int j = 0; j < nb; j++) O[j] += w[k] * psi[k] * x[k * (size_t)nb + (size_t)j];
      double te = 0, tm = 0;
      for (int r = 0; r < 6; r++) { /* rows X↑ Y↑ Z↑ X↓ Y↓ Z↓ */
        double complex a = 0;
        for (int j = 0; j < nb; j++) a += c->U[j * 6 + r] * O[j];
        double a2 = creal(a * conj(a));
        if (r % 3 == 2) tm += a2;
        else te += 0.5 * a2;
      }
      size_t at = (e * g->nb + b) * g->nk + i;
      g->f_te[at] = te, g->f_tm[at] = tm;
    }
  }
  return EW_OK;
}

/* electron subbands of the single-band solve; L_w and Ep from the layer that holds e1 */
static ew_status electrons(ew_gain *g, const ew_stack *st, const ew_result *res,
                           size_t **e_state, ew_error *err) {
  size_t ns = ew_result_state_count(res);
  *e_state = malloc((ns ? ns : 1) * sizeof **e_state);
  g->e_eV = malloc((ns ? ns : 1) * sizeof *g->e_eV);
  g->e_mass = malloc((ns ? ns : 1) * sizeof *g->e_mass);
  if (!*e_state || !g->e_eV || !g->e_mass)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (gain)");
  size_t well = 0;
  for (size_t s = 0; s < ns; s++) {
    const ew_state *q = ew_result_state(res, s);
    if (q->band != EW_BAND_E) continue;
    if (!g->ne) well = q->layer;
    (*e_state)[g->ne] = s;
    g->e_eV[g->ne] = q->energy_eV;
    g->e_mass[g->ne++] = q->inplane_mass;
  }
  if (!g->ne)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "gain: no bound electron subband");
  const ew_layer *L = &st->layers[well];
  g->well_nm = L->thickness_nm;
  g->Ep_eV = L->bands.Ep_eV;
  snprintf(g->well_layer, sizeof g->well_layer, "%s", L->name);
  if (!(g->Ep_eV > 0))
    return ew_fail(err, EW_ERR_INPUT, st->path, L->line, "gain: layer '%s' gives no Kane "
                   "energy Ep (a catalogue material is needed for the matrix elements)", L->name);
  return EW_OK;
}

/* the hole branches of the dispersion d on its k∥ grid */
static ew_status holes(ew_gain *g, const ew_dispersion *d, ew_error *err) {
  g->k_inv_nm = malloc(g->nk * sizeof *g->k_inv_nm);
  g->h_eV = malloc(g->nb * g->nk * sizeof *g->h_eV);
  if (!g->k_inv_nm || !g->h_eV) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (gain)");
  memcpy(g->k_inv_nm, d->k_inv_nm, g->nk * sizeof *g->k_inv_nm);
  memcpy(g->h_eV, d->branch_eV, g->nb * g->nk * sizeof *g->h_eV);
  g->edge_eV = INFINITY;
  for (size_t e = 0; e < g->ne; e++)
    for (size_t b = 0; b < g->nb; b++) g->edge_eV = fmin(g->edge_eV, g->e_eV[e] - g->h_eV[b * g->nk]);
  return EW_OK;
}

/* the solve, the k·p dispersion with its matrix elements, the subbands */
static ew_status bands(ew_gain *g, const ew_stack *st, ew_error *err) {
  ew_options so;
  ew_options_default(&so);
  so.grid_step_nm = g->o.grid_step_nm;
  so.error_estimate = 0; /* electrons and holes on the one grid of the k·p pencil */
  so.excitons = 0;
  ew_result *res = NULL;
  ew_dispersion d;
  memset(&d, 0, sizeof d);
  size_t *e_state = NULL;
  ew_status rc = ew_solve(st, &so, &res, err);
  if (!rc) rc = electrons(g, st, res, &e_state, err);
  ew_dispersion_options dopt;
  ew_dispersion_options_default(&dopt);
  dopt.model = g->o.model, dopt.axial = 1; /* isotropic in the plane: a 1-D k∥ integral */
  dopt.kmax_inv_nm = g->o.kmax_inv_nm, dopt.points = g->o.k_points;
  dopt.grid_step_nm = g->o.grid_step_nm;
  if (!rc) {
    mx_ctx c = {g, res, e_state, &d, {0}};
    ew_kp_basis(c.U);
    rc = ew_dispersion_run_vectors(&d, st, &dopt, on_point, &c, err);
    if (!rc) rc = holes(g, &d, err);
  }
  ew_dispersion_clear(&d);
  ew_result_free(res);
  free(e_state);
  return rc;
}

static ew_status alloc_spectra(ew_gain *g) {
  size_t nd = g->nd, np = g->ne_pts;
  g->density_cm2 = malloc(nd * sizeof(double));
  g->fermi_c_eV = malloc(nd * sizeof(double));
  g->fermi_v_eV = malloc(nd * sizeof(double));
  g->peak_te = malloc(nd * sizeof(double));
  g->peak_te_eV = malloc(nd * sizeof(double));
  g->peak_tm = malloc(nd * sizeof(double));
  g->energy_eV = malloc(np * sizeof(double));
  g->gain_te = malloc(nd * np * sizeof(double));
  g->gain_tm = malloc(nd * np * sizeof(double));
  g->spont = malloc(nd * np * sizeof(double));
  return g->density_cm2 && g->fermi_c_eV && g->fermi_v_eV && g->peak_te && g->peak_te_eV &&
                 g->peak_tm && g->energy_eV && g->gain_te && g->gain_tm && g->spont
             ? EW_OK
             : EW_ERR_NOMEM;
}

static size_t steps(double from, double to, double step) {
  return (size_t)floor((to - from) / step + 1e-9) + 1;
}

ew_status ew_gain_run(ew_gain *g, const ew_stack *st, const ew_gain_options *o, ew_error *err) {
  ew_status rc = check_options(o, err);
  if (rc) return rc;
  ew_gain_clear(g);
  g->o = *o;
  if (st->doped)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "gain: the stack is doped; the gain model "
                   "takes an undoped well with injected carriers");
  g->temperature_K = st->temperature_K;
  g->refractive_index = o->refractive_index;
  if (!(g->temperature_K > 0))
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "gain: needs a temperature above 0 K");
  rc = bands(g, st, err);
  if (rc) {
    ew_gain_clear(g);
    return rc;
  }
  if (o->energy_from_eV == 0 && o->energy_to_eV == 0)
    g->o.energy_from_eV = g->edge_eV - 0.1, g->o.energy_to_eV = g->edge_eV + 0.2;
  g->nd = steps(o->density_from_cm2, o->density_to_cm2, o->density_step_cm2);
  g->ne_pts = steps(g->o.energy_from_eV, g->o.energy_to_eV, o->energy_step_eV);
  if (alloc_spectra(g)) {
    ew_gain_clear(g);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (gain spectra)");
  }
  for (size_t i = 0; i < g->ne_pts; i++) g->energy_eV[i] = g->o.energy_from_eV + (double)i * o->energy_step_eV;
  for (size_t d = 0; d < g->nd && !rc; d++) {
    g->density_cm2[d] = o->density_from_cm2 + (double)d * o->density_step_cm2;
    rc = ew_gain_fermi_levels(g, g->density_cm2[d], &g->fermi_c_eV[d], &g->fermi_v_eV[d], err);
    if (!rc) ew_gain_spectra(g, d);
  }
  if (!rc) g->transparency_cm2 = ew_gain_transparency(g);
  if (rc) ew_gain_clear(g);
  return rc;
}
