/* hole_dos_kp.c — the hole subbands' k·p densities of states (see hole_dos_kp.h). */
#include "hole_dos_kp.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "dispersion.h"
#include "error.h"
#include "kp_solve.h"
#include "poisson.h"

#define GUARD 4               /* extra vectors of the iterated block (as dispersion.c) */
#define X_STEP 0.125          /* table step in x = (E(0) − E_F)/kT, at most */
#define X_MARGIN 40.0         /* the table reaches 40 kT beyond the sampled energies */
#define X_TABLE_MAX 8192      /* entries at most (below ~3 K the step grows beyond kT/8) */
#define FLAT_DU 1e-9          /* a segment flatter than this (kT) is taken as constant */

/* k∥ samples (1/nm): 0.025 up to 0.5, then 0.05 up to 1.0 (the 25 meV density-of-states
 * window of a light subband lies within the first 0.3/nm; at 1.0/nm a subband of mass 0.3
 * is 0.13 eV deep, 19 kT at 77 K and 5 kT at 300 K; beyond, the parabolic continuation of
 * the last segment).  Larger steps let a level come down from the barrier continuum
 * between two k∥ unseen by the start vectors (the count then refuses the point), and larger
 * k∥ cost much more (the subbands reach the barriers' dense box states). */
#define K_FINE_STEP 0.025
#define K_FINE_END 0.5
#define K_COARSE_STEP 0.05
#define K_POINTS (21 + 10)

struct ew_sheet_table {
  double x0, hx;   /* first abscissa, step */
  size_t nx;
  double *n, *dn;  /* [nx] n(x), dn/dx at x0 + i hx, nm^-2 */
  size_t ndir;
  double s_last;   /* k∥² of the last sample, nm^-2 */
  double u_last[2], slope[2]; /* per direction: the last depth (kT), the continuation's du/ds */
};

struct ew_hole_dos_kp {
  int mode;
  double kT;
  int tabulated;
  size_t tabulations;
  size_t nodes;
  double *U_tab;         /* [nodes] the potential of the tabulation (0: none) */
  size_t pairs, ndir;
  size_t hole_levels;    /* bound hole levels of the tabulated pass (above both windows) */
  double k[K_POINTS];
  double *E;             /* [ndir][pairs][K_POINTS] pair means, electron scale, eV */
  int *band;             /* [pairs] EW_BAND_HH or EW_BAND_LH */
  ew_sheet_table *tab;   /* [pairs] */
  size_t *map;           /* [n_map] state → pair, SIZE_MAX: none */
  size_t n_map;
};

/* ---- the table n(x) ------------------------------------------------------------------- */
static double log1pexp(double y) { return y > 0 ? y + log1p(exp(-y)) : log1p(exp(y)); }
static double sigm(double y) { /* 1 / (1 + e^-y) */
  if (y >= 0) return 1.0 / (1.0 + exp(-y));
  double e = exp(y);
  return e / (1.0 + e);
}

/* n(x) and dn/dx exactly for the piecewise-linear u(s) of samples s[p], u[p] and the
 * continuation (hole_dos_kp.h), nm^-2 */
static double sheet_exact(const double *s, const double *u, size_t p, double slope, double x,
                          double *dn) {
  double n = 0.0, d = 0.0;
  for (size_t i = 0; i + 1 < p; i++) {
    double ds = s[i + 1] - s[i], du = u[i + 1] - u[i];
    if (fabs(du) < FLAT_DU) {
      double sg = sigm(x - 0.5 * (u[i] + u[i + 1]));
      n += ds * sg;
      d += ds * sg * (1.0 - sg);
    } else {
      n += ds / du * (log1pexp(x - u[i]) - log1pexp(x - u[i + 1]));
      d += ds / du * (sigm(x - u[i]) - sigm(x - u[i + 1]));
    }
  }
  n += log1pexp(x - u[p - 1]) / slope;
  d += sigm(x - u[p - 1]) / slope;
  *dn = d / (2.0 * EW_PI);
  return n / (2.0 * EW_PI);
}

double ew_sheet_table_eval(const ew_sheet_table *t, double x, double *dndx) {
  double n, d;
  double xe = t->x0 + t->hx * (double)(t->nx - 1);
  if (x <= t->x0) { /* Boltzmann: n ∝ e^x */
    n = t->n[0] * exp(x - t->x0);
    d = n;
  } else if (x >= xe) { /* every sample filled: only the continuations still grow */
    n = d = 0.0;
    for (size_t r = 0; r < t->ndir; r++) {
      n += (t->s_last + log1pexp(x - t->u_last[r]) / t->slope[r]) / (double)t->ndir;
      d += sigm(x - t->u_last[r]) / t->slope[r] / (double)t->ndir;
    }
    n /= 2.0 * EW_PI;
    d /= 2.0 * EW_PI;
  } else { /* cubic Hermite on the values and exact derivatives */
    double q = (x - t->x0) / t->hx;
    size_t i = (size_t)q;
    if (i + 1 >= t->nx) i = t->nx - 2;
    double f = q - (double)i, h = t->hx;
    double y0 = t->n[i], y1 = t->n[i + 1], m0 = t->dn[i] * h, m1 = t->dn[i + 1] * h;
    double f2 = f * f, f3 = f2 * f;
    n = (2 * f3 - 3 * f2 + 1) * y0 + (f3 - 2 * f2 + f) * m0 + (-2 * f3 + 3 * f2) * y1 +
        (f3 - f2) * m1;
    d = ((6 * f2 - 6 * f) * y0 + (3 * f2 - 4 * f + 1) * m0 + (-6 * f2 + 6 * f) * y1 +
         (3 * f2 - 2 * f) * m1) / h;
  }
  if (dndx) *dndx = d;
  return n;
}

/* The table of one subband from its ndir directions' depths u[dir][p] (kT) at s[p]: the
 * directions' densities averaged. */
static int table_build(ew_sheet_table *t, const double *s, const double *u, size_t p,
                       size_t ndir, const double *slope) {
  double umin = 0.0, umax = 0.0;
  for (size_t k = 0; k < ndir * p; k++) umin = fmin(umin, u[k]), umax = fmax(umax, u[k]);
  t->x0 = umin - X_MARGIN;
  double span = umax + X_MARGIN - t->x0;
  t->hx = fmax(X_STEP, span / (X_TABLE_MAX - 1));
  t->nx = (size_t)ceil(span / t->hx) + 1;
  t->n = malloc(t->nx * sizeof *t->n);
  t->dn = malloc(t->nx * sizeof *t->dn);
  if (!t->n || !t->dn) return 0;
  for (size_t i = 0; i < t->nx; i++) {
    double x = t->x0 + t->hx * (double)i, n = 0.0, d = 0.0;
    for (size_t r = 0; r < ndir; r++) {
      double dd, nn = sheet_exact(s, u + r * p, p, slope[r], x, &dd);
      n += nn / (double)ndir, d += dd / (double)ndir;
    }
    t->n[i] = n, t->dn[i] = d;
  }
  /* above the table every sample is filled to e^-40: only the continuations still grow */
  t->ndir = ndir;
  t->s_last = s[p - 1];
  for (size_t r = 0; r < ndir; r++) t->u_last[r] = u[r * p + p - 1], t->slope[r] = slope[r];
  return 1;
}

static void table_free(ew_sheet_table *t) {
  if (!t) return;
  free(t->n);
  free(t->dn);
  t->n = t->dn = NULL;
}

/* ---- the object ----------------------------------------------------------------------- */
ew_hole_dos_kp *ew_hole_dos_kp_create(int mode, double T_K) {
  ew_hole_dos_kp *h = calloc(1, sizeof *h);
  if (!h) return NULL;
  h->mode = mode;
  h->kT = EW_KB_EVK * T_K;
  h->ndir = mode == EW_HOLE_DOS_KP_AXIAL ? 1 : 2;
  for (size_t i = 0; i < K_POINTS; i++)
    h->k[i] = i <= 20 ? K_FINE_STEP * (double)i : K_FINE_END + K_COARSE_STEP * (double)(i - 20);
  return h;
}

static void tables_clear(ew_hole_dos_kp *h) {
  for (size_t j = 0; h->tab && j < h->pairs; j++) table_free(&h->tab[j]);
  free(h->tab);
  free(h->E);
  free(h->band);
  h->tab = NULL, h->E = NULL, h->band = NULL;
  h->pairs = 0, h->tabulated = 0;
}

void ew_hole_dos_kp_free(ew_hole_dos_kp *h) {
  if (!h) return;
  tables_clear(h);
  free(h->U_tab);
  free(h->map);
  free(h);
}

size_t ew_hole_dos_kp_pairs(const ew_hole_dos_kp *h) { return h ? h->pairs : 0; }
size_t ew_hole_dos_kp_tabulations(const ew_hole_dos_kp *h) { return h ? h->tabulations : 0; }

/* r's hole levels above both hole windows in energy order (highest first: the k·p pencil's
 * lowest eigenvalues), into idx (room for r->n_states); returns how many */
static size_t hole_order(const ew_result *r, size_t *idx) {
  double W = fmax(r->window_eV[EW_BAND_HH], r->window_eV[EW_BAND_LH]);
  size_t c = 0;
  for (size_t j = 0; j < r->n_states; j++) {
    const ew_state *q = &r->states[j];
    if (q->band == EW_BAND_E || !(q->energy_eV > W)) continue;
    size_t at = c++;
    while (at > 0 && r->states[idx[at - 1]].energy_eV < q->energy_eV) idx[at] = idx[at - 1], at--;
    idx[at] = j;
  }
  return c;
}

/* ---- the dispersions ------------------------------------------------------------------ */
typedef struct {
  ew_kp_profile *prof;
  ew_kp_pencil *H;
  ew_kp_solver *sol;
  double *vals;
} kp_work;

static void kp_work_free(kp_work *w) {
  ew_kp_profile_free(w->prof);
  ew_kp_pencil_free(w->H);
  ew_kp_solver_free(w->sol);
  free(w->vals);
}

/* k∥ = 0 start: the pass's own heavy- and light-hole vectors in their J components (the
 * 4-band pencil at k∥ = 0 is those single-band pencils twice over, kp_hamiltonian.h) */
static void start_block(const ew_result *r, const size_t *idx, size_t pairs, ew_kp_solver *s) {
  size_t n = r->grid->n, dim = 4 * n;
  double complex *X = ew_kp_solver_start(s);
  for (size_t j = 0; j < pairs; j++) {
    const ew_state *q = &r->states[idx[j]];
    const double *psi = r->psi + idx[j] * n;
    for (int spin = 0; spin < 2; spin++) {
      size_t col = 2 * j + (size_t)spin;
      int comp = q->band == EW_BAND_HH ? (spin ? 3 : 0) : (spin ? 2 : 1);
      memset(X + col * dim, 0, dim * sizeof *X);
      for (size_t i = 0; i < n; i++) X[col * dim + 4 * i + (size_t)comp] = psi[i];
    }
  }
}

/* The pairs' energies along one direction into E[pairs][K_POINTS] (as dispersion.c's loop) */
static ew_status one_direction(ew_hole_dos_kp *h, const ew_result *r, const size_t *idx,
                               kp_work *w, int dir, double *E, ew_error *err) {
  size_t m = 2 * h->pairs;
  double cx = dir == 100 ? 1.0 : sqrt(0.5), cy = dir == 100 ? 0.0 : sqrt(0.5);
  double lo = w->prof->vmin - 1e-6 * (1.0 + fabs(w->prof->vmin));
  start_block(r, idx, h->pairs, w->sol);
  for (size_t i = 0; i < K_POINTS; i++) {
    double k = h->k[i];
    size_t cert = 0;
    ew_kp_pencil_fill(w->prof, cx * k, cy * k, w->H);
    double lo_k = i ? 0.5 * (lo + w->vals[0]) : lo;
    ew_kp_solver_set_tol(w->sol, i ? 1e-6 : 1e-8);
    ew_status rc = ew_kp_lowest(w->sol, w->H, lo_k, m, w->vals, &cert, err);
    if (rc == EW_ERR_NUMERIC && lo_k != lo)
      rc = ew_kp_lowest(w->sol, w->H, lo, m, w->vals, &cert, err);
    if (rc) return rc;
    for (size_t j = 0; j < h->pairs; j++)
      E[j * K_POINTS + i] = -0.5 * (w->vals[2 * j] + w->vals[2 * j + 1]);
  }
  return EW_OK;
}

/* Tables from the energies: depths in kT, the continuation slope per direction */
static ew_status build_tables(ew_hole_dos_kp *h, const ew_result *r, const size_t *idx,
                              ew_error *err) {
  double s[K_POINTS], u[2 * K_POINTS], slope[2];
  for (size_t i = 0; i < K_POINTS; i++) s[i] = h->k[i] * h->k[i];
  for (size_t j = 0; j < h->pairs; j++) {
    const ew_state *q = &r->states[idx[j]];
    double mp = q->inplane_mass > 0 ? q->inplane_mass : 0.5;
    for (size_t d = 0; d < h->ndir; d++) {
      const double *E = h->E + (d * h->pairs + j) * K_POINTS;
      for (size_t i = 0; i < K_POINTS; i++) u[d * K_POINTS + i] = (E[0] - E[i]) / h->kT;
      double b = (u[d * K_POINTS + K_POINTS - 1] - u[d * K_POINTS + K_POINTS - 2]) /
                 (s[K_POINTS - 1] - s[K_POINTS - 2]);
      /* not rising at the end: continue with the parabola of the in-plane mass */
      slope[d] = b > 0 ? b : EW_HB2M0_EVNM2 / mp / h->kT;
    }
    if (!table_build(&h->tab[j], s, u, K_POINTS, h->ndir, slope))
      return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole density tables)");
  }
  return EW_OK;
}

/* Tabulate at r's potential the first `pairs` levels of idx (r's hole order) */
static ew_status tabulate(ew_hole_dos_kp *h, const ew_result *r, const size_t *idx,
                          size_t levels, size_t pairs, ew_error *err) {
  tables_clear(h);
  size_t n = r->grid->n;
  if (h->nodes != n || !h->U_tab) {
    free(h->U_tab);
    h->U_tab = calloc(n, sizeof *h->U_tab);
    if (!h->U_tab) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
    h->nodes = n;
  }
  for (size_t i = 0; i < n; i++) h->U_tab[i] = r->grid->U ? r->grid->U[i] : 0.0;
  h->hole_levels = levels;
  h->tabulated = 1;
  h->tabulations++;
  if (pairs == 0) return EW_OK;
  h->E = malloc(h->ndir * pairs * K_POINTS * sizeof *h->E);
  h->band = malloc(pairs * sizeof *h->band);
  h->tab = calloc(pairs, sizeof *h->tab);
  if (!h->E || !h->band || !h->tab) {
    tables_clear(h);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  }
  h->pairs = pairs;
  h->tabulated = 1;
  for (size_t j = 0; j < pairs; j++) h->band[j] = (int)r->states[idx[j]].band;
  kp_work w = {0};
  ew_status rc = ew_kp_profile_build(r->stack, r->grid, EW_KP_4BAND, EW_KP_BURT_FOREMAN,
                                     h->mode == EW_HOLE_DOS_KP_AXIAL, &w.prof, err);
  if (!rc) {
    w.H = ew_kp_pencil_create(w.prof);
    w.sol = ew_kp_solver_create(n, 4, 2 * pairs + GUARD);
    w.vals = malloc((2 * pairs + GUARD) * sizeof *w.vals);
    if (!w.H || !w.sol || !w.vals)
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  }
  for (size_t d = 0; d < h->ndir && !rc; d++)
    rc = one_direction(h, r, idx, &w, d ? 110 : 100, h->E + d * pairs * K_POINTS, err);
  kp_work_free(&w);
  if (!rc) rc = build_tables(h, r, idx, err);
  if (rc) tables_clear(h);
  return rc;
}

/* How many of r's hole levels (hole order idx) to follow: those within EW_HOLE_DOS_SPAN_KT
 * of the top one, at most EW_HOLE_DOS_MAX_PAIRS */
static size_t wanted_pairs(const ew_hole_dos_kp *h, const ew_result *r, const size_t *idx,
                           size_t levels) {
  size_t c = 0;
  while (c < levels && c < EW_HOLE_DOS_MAX_PAIRS &&
         r->states[idx[0]].energy_eV - r->states[idx[c]].energy_eV <= EW_HOLE_DOS_SPAN_KT * h->kT)
    c++;
  return c;
}

/* Match r's hole states to the tabulated pairs (r's hole order); 0 when out of memory */
static int match_states(ew_hole_dos_kp *h, const ew_result *r, const size_t *idx,
                        size_t levels) {
  if (h->n_map < r->n_states) {
    size_t *m = realloc(h->map, (r->n_states ? r->n_states : 1) * sizeof *m);
    if (!m) return 0;
    h->map = m;
  }
  h->n_map = r->n_states;
  for (size_t j = 0; j < r->n_states; j++) h->map[j] = SIZE_MAX;
  if (levels != h->hole_levels) return 1; /* stale: parabolic until retabulated */
  for (size_t j = 0; j < h->pairs; j++) h->map[idx[j]] = j;
  return 1;
}

static double moved(const ew_hole_dos_kp *h, const ew_result *r) {
  double d = 0.0;
  for (size_t i = 0; i < h->nodes; i++)
    d = fmax(d, fabs((r->grid->U ? r->grid->U[i] : 0.0) - h->U_tab[i]));
  return d;
}

ew_status ew_hole_dos_kp_update(ew_hole_dos_kp *h, const ew_result *r, double EF_eV,
                                ew_error *err) {
  size_t *idx = malloc((r->n_states ? r->n_states : 1) * sizeof *idx);
  if (!idx) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  size_t levels = hole_order(r, idx);
  /* needed: the top level within EW_HOLE_DOS_NEED_KT of the Fermi level (either face's) */
  double margin = EW_HOLE_DOS_NEED_KT * h->kT +
                  (r->stack->bias_given ? fabs(r->stack->bias_V) : 0.0);
  int needed = levels > 0 && r->states[idx[0]].energy_eV - EF_eV > -margin;
  ew_status rc = EW_OK;
  size_t want = needed ? wanted_pairs(h, r, idx, levels) : 0;
  if (needed && (!h->tabulated || levels != h->hole_levels || h->nodes != r->grid->n ||
                 want > h->pairs || moved(h, r) > EW_HOLE_DOS_RETAB_EV))
    rc = tabulate(h, r, idx, levels, want, err);
  if (!rc && !match_states(h, r, idx, levels))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  free(idx);
  return rc;
}

const ew_sheet_table *ew_hole_dos_kp_table(const void *ctx, size_t state) {
  const ew_hole_dos_kp *h = ctx;
  if (!h || state >= h->n_map || h->map[state] == SIZE_MAX) return NULL;
  return &h->tab[h->map[state]];
}

/* ---- density-of-states masses --------------------------------------------------------- */
static double pair_mass(const ew_hole_dos_kp *h, size_t j) {
  double sum = 0.0;
  for (size_t d = 0; d < h->ndir; d++) {
    struct ew_dispersion view;
    memset(&view, 0, sizeof view);
    int character = h->band[j] == EW_BAND_HH ? 0 : 1;
    view.points = K_POINTS;
    view.subbands = 1;
    view.k_inv_nm = (double *)h->k;
    view.energy_eV = h->E + (d * h->pairs + j) * K_POINTS;
    view.character = &character;
    sum += ew_dispersion_dos_mass_m0(&view, 0, EW_DOS_MASS_WINDOW_EV);
  }
  return sum / (double)h->ndir; /* NAN when a direction stays within the window */
}

ew_status ew_hole_dos_kp_masses(ew_hole_dos_kp *h, ew_result *r, ew_error *err) {
  size_t *idx = malloc((r->n_states ? r->n_states : 1) * sizeof *idx);
  if (!idx) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  size_t levels = hole_order(r, idx);
  ew_status rc = EW_OK;
  if (levels > 0 && (!h->tabulated || levels != h->hole_levels || h->nodes != r->grid->n ||
                     moved(h, r) > EW_HOLE_DOS_RETAB_EV || h->pairs == 0))
    rc = tabulate(h, r, idx, levels,
                  h->pairs ? h->pairs : levels < EW_HOLE_DOS_MAX_PAIRS ? levels : EW_HOLE_DOS_MAX_PAIRS,
                  err);
  if (!rc && !match_states(h, r, idx, levels))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  for (size_t j = 0; !rc && j < r->n_states; j++)
    if (h->map[j] != SIZE_MAX) r->states[j].dos_mass_m0 = pair_mass(h, h->map[j]);
  free(idx);
  return rc;
}

ew_status ew_hole_dos_kp_report(ew_result *r, int mode, ew_error *err) {
  ew_hole_dos_kp *h = ew_hole_dos_kp_create(mode, fmax(r->stack->temperature_K, EW_SP_T_FLOOR_K));
  if (!h) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p hole DOS)");
  ew_status rc = ew_hole_dos_kp_masses(h, r, err);
  ew_hole_dos_kp_free(h);
  return rc;
}
