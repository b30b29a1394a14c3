/* hole_absorption.c — the k·p subbands, velocity matrix elements and Fermi level of the
 * hole intersubband absorption (see hole_absorption.h). */
#include "hole_absorption.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "dispersion.h"
#include "error.h"
#include "gain.h"
#include "grid.h"
#include "kp_hamiltonian.h"
#include "schrodinger.h"
#include "stack.h"

#define MAX_ENERGIES 20000
#define DK_INV_NM 0.1 /* δ of the central difference of H(k): exact for any δ (H quadratic) */

void ew_hole_absorption_clear(ew_hole_absorption *h) {
  free(h->label);
  free(h->k_inv_nm);
  free(h->h_eV);
  free(h->br_eV);
  free(h->t_u);
  free(h->t_l);
  free(h->te2);
  free(h->tm2);
  free(h->dip2);
  free(h->energy_eV);
  free(h->alpha_te);
  free(h->alpha_tm);
  memset(h, 0, sizeof *h);
}

static ew_status check_options(const ew_hole_absorption_options *o, ew_error *err) {
  if (o->model != 4 && o->model != 6)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--model %d: give 4band or 6band", o->model);
  if (!(o->density_cm2 > 0) || !(o->density_cm2 <= 1e15))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--density %g cm^-2: give a hole sheet density "
                   "in (0, 1e15]", o->density_cm2);
  double ea = o->energy_from_eV, eb = o->energy_to_eV, es = o->energy_step_eV;
  if (!isfinite(ea) || !isfinite(eb) || !(es > 0) || !isfinite(es) || eb < ea ||
      (ea != 0 || eb != 0 ? !(ea > 0) : 0) || (eb - ea) / es > MAX_ENERGIES - 1 + 1e-9)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--energy %g:%g:%g eV: give 0 < FROM <= TO, "
                   "STEP > 0, at most %d energies", ea, eb, es, MAX_ENERGIES);
  return ew_kp_optics_check(o->linewidth_meV, o->refractive_index, o->kmax_inv_nm, o->k_points,
                            o->grid_step_nm, err);
}

/* what the k·p callback needs: its own copy of the profile (the dispersion's grid) to
 * build H(k) and H(k ± δ) */
typedef struct {
  ew_hole_absorption *h;
  const ew_dispersion *d;
  const ew_grid *g;
  const ew_kp_profile *p;
  ew_kp_pencil *H, *A;
  double complex *y;       /* [4 × m × dim]: H x, H Z x, (H+ − H−) x along x and y */
  double complex *zx;      /* [dim] */
} mx_ctx;

static double complex dot(const double complex *a, const double complex *b, size_t n) {
  double complex s = 0;
  for (size_t k = 0; k < n; k++) s += conj(a[k]) * b[k];
  return s;
}

/* y = (H(kx + δx, δy) − H(kx − δx, −δy)) x / 2δ for every column of X */
static void derivative(mx_ctx *c, double kx, double dx, double dy, const double complex *X,
                       size_t m, size_t dim, double complex *y) {
  ew_kp_pencil_fill(c->p, kx + dx, dy, c->A);
  for (size_t b = 0; b < m; b++) ew_kp_pencil_apply(c->A, X + b * dim, y + b * dim);
  ew_kp_pencil_fill(c->p, kx - dx, -dy, c->A);
  for (size_t b = 0; b < m; b++) {
    ew_kp_pencil_apply(c->A, X + b * dim, c->zx);
    for (size_t k = 0; k < dim; k++) y[b * dim + k] = (y[b * dim + k] - c->zx[k]) / (2.0 * DK_INV_NM);
  }
}

static ew_status on_point(void *ctx, size_t i, const double complex *X, size_t dim, int nb,
                          const double *w, ew_error *err) {
  mx_ctx *c = ctx;
  ew_hole_absorption *h = c->h;
  size_t n = dim / (size_t)nb, m = 2 * c->d->subbands, nk = c->d->points;
  if (n != c->g->n)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "hole absorption: the k·p grid (%zu nodes) "
                   "is not the profile's (%zu)", n, c->g->n);
  if (i == 0) {
    h->ns = c->d->subbands, h->nk = nk, h->nt = h->ns * (h->ns - 1) / 2;
    h->te2 = calloc(h->nt * nk + 1, sizeof *h->te2);
    h->tm2 = calloc(h->nt * nk + 1, sizeof *h->tm2);
    h->dip2 = calloc(h->nt * nk + 1, sizeof *h->dip2);
    c->y = malloc(4 * m * dim * sizeof *c->y);
    c->zx = malloc(dim * sizeof *c->zx);
    if (!h->te2 || !h->tm2 || !h->dip2 || !c->y || !c->zx)
      return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (hole absorption)");
  }
  double k = c->d->k_inv_nm[i], z0 = 0.5 * (c->g->z[0] + c->g->z[n - 1]);
  double complex *hx = c->y, *hzx = c->y + m * dim, *vx = c->y + 2 * m * dim, *vy = c->y + 3 * m * dim;
  ew_kp_pencil_fill(c->p, k, 0.0, c->H);
  for (size_t b = 0; b < m; b++) {
    ew_kp_pencil_apply(c->H, X + b * dim, hx + b * dim);
    for (size_t q = 0; q < dim; q++) c->zx[q] = (c->g->z[q / (size_t)nb] - z0) * X[b * dim + q];
    ew_kp_pencil_apply(c->H, c->zx, hzx + b * dim);
  }
  derivative(c, k, DK_INV_NM, 0.0, X, m, dim, vx);
  derivative(c, k, 0.0, DK_INV_NM, X, m, dim, vy);
  for (size_t t = 0; t < h->nt; t++) {
    double te = 0, tm = 0, dp = 0;
    for (int a = 0; a < 2; a++)
      for (int b = 0; b < 2; b++) {
        size_t u = 2 * h->t_u[t] + (size_t)a, l = 2 * h->t_l[t] + (size_t)b;
        const double complex *xu = X + u * dim, *xl = X + l * dim;
        double complex mx = dot(xu, vx + l * dim, dim), my = dot(xu, vy + l * dim, dim);
        /* x_u^H H Z x_l − (Z x_u)^H H x_l */
        double complex zu = 0;
        for (size_t q = 0; q < dim; q++) zu += (c->g->z[q / (size_t)nb] - z0) * conj(xu[q]) * hx[l * dim + q];
        double complex mz = dot(xu, hzx + l * dim, dim) - zu;
        double complex zd = 0; /* ⟨u|z|l⟩ = x_u^H B Z x_l */
        for (size_t q = 0; q < dim; q++) zd += w[q / (size_t)nb] * (c->g->z[q / (size_t)nb] - z0) * conj(xu[q]) * xl[q];
        double dE = h->br_eV[u * nk + i] - h->br_eV[l * nk + i];
        te += 0.5 * (creal(mx * conj(mx)) + creal(my * conj(my)));
        tm += creal(mz * conj(mz));
        dp += dE * dE * creal(zd * conj(zd));
      }
    h->te2[t * nk + i] = te, h->tm2[t * nk + i] = tm, h->dip2[t * nk + i] = dp;
  }
  return EW_OK;
}

/* the subbands, the transitions and their branch energies before the first point: the
 * callback at i = 0 runs after the dispersion has its k∥ = 0 energies, so it takes them
 * from there (d->branch_eV holds point i when point i's callback runs) */
static ew_status on_first(void *ctx, size_t i, const double complex *X, size_t dim, int nb,
                          const double *w, ew_error *err) {
  mx_ctx *c = ctx;
  ew_hole_absorption *h = c->h;
  const ew_dispersion *d = c->d;
  if (i == 0) {
    size_t ns = d->subbands, nt = ns * (ns - 1) / 2;
    if (ns < 2)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0, "hole absorption: only %zu hole subband is "
                     "bound at k = 0 (two are needed)", ns);
    h->br_eV = malloc(2 * ns * d->points * sizeof *h->br_eV);
    h->t_u = malloc(nt * sizeof *h->t_u);
    h->t_l = malloc(nt * sizeof *h->t_l);
    if (!h->br_eV || !h->t_u || !h->t_l)
      return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (hole absorption)");
    size_t t = 0;
    for (size_t u = 0; u < ns; u++)
      for (size_t l = u + 1; l < ns; l++) h->t_u[t] = u, h->t_l[t++] = l;
  }
  for (size_t b = 0; b < 2 * d->subbands; b++) h->br_eV[b * d->points + i] = d->branch_eV[b * d->points + i];
  return on_point(ctx, i, X, dim, nb, w, err);
}

/* labels, k grid, pair energies, L_w (the layer holding most of the first subband) */
static ew_status keep(ew_hole_absorption *h, const ew_dispersion *d, const ew_stack *st) {
  h->label = malloc(h->ns * sizeof *h->label);
  h->k_inv_nm = malloc(h->nk * sizeof *h->k_inv_nm);
  h->h_eV = malloc(h->ns * h->nk * sizeof *h->h_eV);
  if (!h->label || !h->k_inv_nm || !h->h_eV) return EW_ERR_NOMEM;
  memcpy(h->label, d->label, h->ns * sizeof *h->label);
  memcpy(h->k_inv_nm, d->k_inv_nm, h->nk * sizeof *h->k_inv_nm);
  memcpy(h->h_eV, d->energy_eV, h->ns * h->nk * sizeof *h->h_eV);
  (void)st;
  return EW_OK;
}

/* the layer with the highest valence edge (the hole well) at the first subband's energy:
 * the thickest layer whose heavy-hole edge lies above hh1 */
static double well_thickness(const ew_stack *st, const ew_grid *g, double e1) {
  double best = 0;
  for (size_t q = 0; q < g->n; q++) {
    const ew_layer *L = &st->layers[g->layer[q]];
    if (g->edge[EW_BAND_HH][q] > e1 && L->thickness_nm > best) best = L->thickness_nm;
  }
  return best;
}

static ew_status bands(ew_hole_absorption *h, const ew_stack *st, ew_error *err) {
  ew_options so;
  ew_options_default(&so);
  so.grid_step_nm = h->o.grid_step_nm;
  ew_dispersion d;
  memset(&d, 0, sizeof d);
  mx_ctx c = {h, &d, NULL, NULL, NULL, NULL, NULL, NULL};
  ew_kp_profile *p = NULL;
  ew_grid *g = ew_schrodinger_grid(st, &so);
  ew_status rc = g ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p grid)");
  if (!rc) rc = ew_kp_profile_build(st, g, (ew_kp_model)h->o.model, EW_KP_BURT_FOREMAN, 1, &p, err);
  if (!rc) {
    c.g = g, c.p = p, c.H = ew_kp_pencil_create(p), c.A = ew_kp_pencil_create(p);
    if (!c.H || !c.A) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p pencil)");
  }
  ew_dispersion_options dopt;
  ew_dispersion_options_default(&dopt);
  dopt.model = h->o.model, dopt.axial = 1; /* isotropic in the plane: a 1-D k∥ integral */
  dopt.kmax_inv_nm = h->o.kmax_inv_nm, dopt.points = h->o.k_points;
  dopt.grid_step_nm = h->o.grid_step_nm;
  if (!rc) rc = ew_dispersion_run_vectors(&d, st, &dopt, on_first, &c, err);
  if (!rc && keep(h, &d, st)) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (hole absorption)");
  if (!rc) h->well_nm = well_thickness(st, g, h->h_eV[0]);
  ew_dispersion_clear(&d);
  ew_kp_pencil_free(c.H);
  ew_kp_pencil_free(c.A);
  free(c.y);
  free(c.zx);
  ew_kp_profile_free(p);
  ew_grid_free(g);
  return rc;
}

/* the quasi-Fermi level of the density: the k·p branch densities of gain_fermi.c (a view of
 * our arrays as the gain model's holes), bisection (p decreases with F) to 1e-12 eV */
static ew_status fermi(ew_hole_absorption *h, ew_error *err) {
  ew_gain v;
  memset(&v, 0, sizeof v);
  v.temperature_K = h->temperature_K, v.nb = 2 * h->ns, v.nk = h->nk;
  v.k_inv_nm = h->k_inv_nm, v.h_eV = h->br_eV;
  double top = h->h_eV[0], lo = top - 1.0, hi = top + 1.0, N = h->o.density_cm2;
  for (int i = 0; i < 60 && ew_gain_hole_density(&v, lo) < N; i++) lo -= 1.0;
  for (int i = 0; i < 60 && ew_gain_hole_density(&v, hi) > N; i++) hi += 1.0;
  if (ew_gain_hole_density(&v, lo) < N || ew_gain_hole_density(&v, hi) > N)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "hole absorption: no Fermi level gives %g "
                   "cm^-2", N);
  while (hi - lo > 1e-12) {
    double mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (ew_gain_hole_density(&v, mid) > N) lo = mid;
    else hi = mid;
  }
  h->fermi_eV = 0.5 * (lo + hi);
  return EW_OK;
}

static size_t steps(double from, double to, double step) {
  return (size_t)floor((to - from) / step + 1e-9) + 1;
}

ew_status ew_hole_absorption_run(ew_hole_absorption *h, const ew_stack *st,
                                 const ew_hole_absorption_options *o, ew_error *err) {
  ew_status rc = check_options(o, err);
  if (rc) return rc;
  ew_hole_absorption_clear(h);
  h->o = *o;
  if (st->doped)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "hole absorption: the stack is doped; give "
                   "an undoped stack and the hole sheet density (--density): the bands are "
                   "taken flat");
  h->temperature_K = st->temperature_K;
  if (!(h->temperature_K > 0))
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "hole absorption: needs a temperature "
                   "above 0 K");
  rc = bands(h, st, err);
  if (!rc) rc = fermi(h, err);
  if (!rc && o->energy_from_eV == 0 && o->energy_to_eV == 0) {
    double top = 0;
    for (size_t t = 0; t < h->nt; t++) top = fmax(top, h->h_eV[h->t_u[t] * h->nk] - h->h_eV[h->t_l[t] * h->nk]);
    h->o.energy_from_eV = 0.005, h->o.energy_to_eV = top + 0.1;
  }
  if (!rc) {
    h->np = steps(h->o.energy_from_eV, h->o.energy_to_eV, h->o.energy_step_eV);
    h->energy_eV = malloc(h->np * sizeof *h->energy_eV);
    h->alpha_te = calloc(h->np, sizeof *h->alpha_te);
    h->alpha_tm = calloc(h->np, sizeof *h->alpha_tm);
    if (!h->energy_eV || !h->alpha_te || !h->alpha_tm)
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (hole absorption spectra)");
  }
  if (!rc) {
    for (size_t i = 0; i < h->np; i++) h->energy_eV[i] = h->o.energy_from_eV + (double)i * h->o.energy_step_eV;
    ew_hole_absorption_spectra(h);
  }
  if (rc) ew_hole_absorption_clear(h);
  return rc;
}
