/* nonparabolic.c — self-consistent electron levels with the Kane mass (see nonparabolic.h). */
#include "nonparabolic.h"

#include <float.h>
#include <math.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "helper_thread.h"
#include "observables.h"

#define NP_TOL_EV 1e-11 /* fixed point of each level */
#define NP_MAX_IT 60

static int layer_np(const ew_bands *b) { return b->Ep_eV > 0 && b->Eg_G_eV > 0; }

int ew_nonparabolic_applies(const ew_stack *st) {
  if (!st->nonparabolic) return 0;
  for (size_t k = 0; k < st->n_layers; k++)
    if (layer_np(&st->layers[k].bands)) return 1;
  return 0;
}

/* The Kane mass at kinetic energy eps = E − ec and, when dm != NULL, ∂m/∂ε =
 * m² (E_P/3) [2/(E_g + ε)² + 1/(E_g + Δ + ε)²].  Deep in a barrier ε → −E_g would send the
 * denominators to zero: the two-band picture is meaningless there anyway, so the kinetic
 * energy is held above −E_g/2 (derivative 0 there), and a mass that would turn negative
 * falls back to the band edge's.  The parts that do not depend on the energy are computed
 * once per piece (kane_consts): three divisions per evaluation instead of seven. */
typedef struct {
  double me, ec, Eg, EgD, inv_me, Ep, Ep3, two_Eg, one_EgD, floor; /* floor: −E_g/2 */
} kane_consts;

static kane_consts kane_consts_of(double me, double Ep, double Eg, double D, double ec) {
  return (kane_consts){me, ec, Eg, Eg + D, 1.0 / me, Ep, Ep / 3.0, 2.0 / Eg, 1.0 / (Eg + D),
                       -0.5 * Eg};
}

/* the Kane mass at E from the piece's constants (see above) */
static inline double kane_m_at(const kane_consts *q, double E, double *dm) {
  double eps = E - q->ec, e = eps > q->floor ? eps : q->floor;
  double a = q->Eg + e, b = q->EgD + e;
  double inv = q->inv_me + q->Ep3 * (2.0 / a + 1.0 / b - q->two_Eg - q->one_EgD);
  double m = inv > 0 ? 1.0 / inv : q->me;
  if (dm) *dm = inv > 0 && eps > q->floor ? m * m * q->Ep / 3.0 * (2.0 / (a * a) + 1.0 / (b * b)) : 0.0;
  return m;
}

double ew_kane_mass(const ew_bands *b, double eps) {
  if (!layer_np(b)) return b->me;
  kane_consts q = kane_consts_of(b->me, b->Ep_eV, b->Eg_G_eV, b->Dso_eV > 0 ? b->Dso_eV : 0.0, 0.0);
  return kane_m_at(&q, eps, NULL);
}

/* The cell ∩ layer pieces of a grid with what the masses need at each piece's midpoint (cells
 * are a few hundredths of a nm: the midpoint rule is second order like the rest of the
 * scheme), built once per grid: a fixed-point iteration then re-evaluates only the masses. */
typedef struct {
  const ew_grid *g;
  size_t n, cap;
  size_t *cell;
  double *len, *me, *Ep, *Eg, *D, *ec; /* ec: conduction edge at the midpoint (field, U) */
  double *mhp, *mlp;                   /* hole in-plane masses */
  int *np;
  unsigned char *same; /* piece k has the mass inputs of piece k − 1 (a uniform layer) */
  size_t nd;           /* distinct masses: a run of pieces with the same inputs shares one */
  size_t *rid;         /* [n] the distinct mass of each piece */
  kane_consts *kc;     /* [nd] the Kane mass's energy-independent parts */
  double *md, *dmd;    /* [nd] scratch: the distinct masses at E and their slopes */
  int *dnp;            /* [nd] the distinct mass is a Kane mass */
  ew_pencil *pen;      /* the pencil the iterations refill at each energy (ctx_pencil) */
  int borrowed;        /* the pieces are another context's (ctx_borrow): only md, dmd, pen own */
} np_ctx;

static void ctx_free(np_ctx *c) {
  if (c->borrowed) {
    free(c->md), free(c->dmd);
    ew_pencil_free(c->pen);
    memset(c, 0, sizeof *c);
    return;
  }
  free(c->cell), free(c->len), free(c->me), free(c->Ep), free(c->Eg), free(c->D), free(c->ec);
  free(c->mhp), free(c->mlp), free(c->np), free(c->same), free(c->kc);
  free(c->rid), free(c->md), free(c->dmd), free(c->dnp);
  ew_pencil_free(c->pen);
  memset(c, 0, sizeof *c);
}

/* room for every piece at once: a cell holds one piece per layer it touches, so there are at
 * most (cells) + (layers) pieces */
static int ctx_alloc(np_ctx *c, size_t cap) {
  c->cap = cap;
  c->cell = malloc(cap * sizeof *c->cell);
  c->np = malloc(cap * sizeof *c->np);
  c->same = malloc(cap * sizeof *c->same);
  c->kc = malloc(cap * sizeof *c->kc);
  c->rid = malloc(cap * sizeof *c->rid);
  c->dnp = malloc(cap * sizeof *c->dnp);
  double **arr[] = {&c->len, &c->me, &c->Ep, &c->Eg, &c->D, &c->ec, &c->mhp, &c->mlp, &c->md, &c->dmd};
  int ok = c->cell && c->np && c->same && c->kc && c->rid && c->dnp;
  for (size_t k = 0; k < sizeof arr / sizeof *arr; k++) ok = (*arr[k] = malloc(cap * sizeof **arr[k])) && ok;
  return ok;
}

static void ctx_push(np_ctx *c, size_t cell, double len, const ew_bands *b, double ec) {
  size_t k = c->n++;
  c->cell[k] = cell, c->len[k] = len, c->me[k] = b->me, c->Ep[k] = b->Ep_eV;
  c->Eg[k] = b->Eg_G_eV, c->D[k] = b->Dso_eV > 0 ? b->Dso_eV : 0.0, c->ec[k] = ec;
  c->mhp[k] = b->mhh_par, c->mlp[k] = b->mlh_par;
  c->np[k] = layer_np(b);
  c->same[k] = k > 0 && c->me[k] == c->me[k - 1] && c->Ep[k] == c->Ep[k - 1] &&
               c->Eg[k] == c->Eg[k - 1] && c->D[k] == c->D[k - 1] && c->ec[k] == c->ec[k - 1] &&
               c->np[k] == c->np[k - 1];
  if (!c->same[k]) { /* a new distinct mass (a parabolic one gets harmless constants) */
    size_t d = c->nd++;
    c->dnp[d] = c->np[k];
    c->kc[d] = c->np[k] ? kane_consts_of(c->me[k], c->Ep[k], c->Eg[k], c->D[k], ec)
                        : kane_consts_of(c->me[k], 0.0, 1.0, 0.0, 0.0);
  }
  c->rid[k] = c->nd - 1;
}

/* A context for another thread that reads the pieces of `from` (which it must not outlive,
 * and which nobody changes meanwhile) with scratch and a pencil of its own.  0 when out of
 * memory (c then holds nothing). */
static int ctx_borrow(np_ctx *c, const np_ctx *from) {
  /* the fields ctx_build sets and nothing changes after (not the owner's scratch or pencil,
     which its thread writes meanwhile) */
  memset(c, 0, sizeof *c);
  c->g = from->g, c->n = from->n, c->cap = from->cap, c->cell = from->cell, c->len = from->len;
  c->me = from->me, c->Ep = from->Ep, c->Eg = from->Eg, c->D = from->D, c->ec = from->ec;
  c->mhp = from->mhp, c->mlp = from->mlp, c->np = from->np, c->same = from->same;
  c->nd = from->nd, c->rid = from->rid, c->kc = from->kc, c->dnp = from->dnp;
  c->borrowed = 1;
  c->md = malloc((c->nd ? c->nd : 1) * sizeof *c->md);
  c->dmd = malloc((c->nd ? c->nd : 1) * sizeof *c->dmd);
  if (c->md && c->dmd) return 1;
  ctx_free(c);
  return 0;
}

static int ctx_build(np_ctx *c, const ew_stack *st, const ew_grid *g) {
  memset(c, 0, sizeof *c);
  c->g = g;
  size_t n = g->n, k0 = 0;
  if (!ctx_alloc(c, n + 1 + st->n_layers)) {
    ctx_free(c);
    return 0;
  }
  for (size_t cc = 0; cc <= n; cc++) {
    double a = cc == 0 ? 0.0 : g->z[cc - 1], b = cc == n ? g->length_nm : g->z[cc];
    while (k0 + 1 < st->n_layers && st->layers[k0 + 1].z_start_nm <= a) k0++;
    for (size_t k = k0; k < st->n_layers; k++) {
      const ew_layer *ly = &st->layers[k];
      if (ly->z_start_nm >= b) break;
      double z0 = ly->z_start_nm, z1 = z0 + ly->thickness_nm; /* finite: no fmax/fmin calls */
      double lo = a > z0 ? a : z0, hi = b < z1 ? b : z1;
      if (hi <= lo) continue;
      double zm = 0.5 * (lo + hi), u = 0.0;
      ew_bands tmp;
      const ew_bands *bb = &ly->bands; /* the midpoint lies inside layer k */
      if (ly->profile) {
        ew_layer_bands_at(ly, (zm - ly->z_start_nm) / ly->thickness_nm, &tmp);
        bb = &tmp;
      }
      if (g->U) u = cc == 0 ? g->U[0] : cc == n ? g->U[n - 1] : 0.5 * (g->U[cc - 1] + g->U[cc]);
      ctx_push(c, cc, hi - lo, bb, bb->Ec_eV + ew_stack_field_eV(st, zm) + u);
    }
  }
  return 1;
}

/* At energy E: cell masses M_c = ∫_c m dz and, when not NULL, dM_c = ∂M_c/∂E and
 * Q_c = ∫_c m0/m dz (electrons; the Kane mass where the piece has one).  Each distinct mass
 * is evaluated once (the same bits for every piece of its run), without the slopes in one
 * vectorisable loop. */
static void ctx_eval(const np_ctx *c, double E, double *M, double *dM, double *Q) {
  size_t nc = c->g->n + 1, nd = c->nd;
  const kane_consts *kc = c->kc;
  double *md = c->md, *dmd = c->dmd;
  memset(M, 0, nc * sizeof *M);
  if (dM) {
    memset(dM, 0, nc * sizeof *dM);
    for (size_t d = 0; d < nd; d++) {
      dmd[d] = 0.0;
      md[d] = c->dnp[d] ? kane_m_at(&kc[d], E, &dmd[d]) : kc[d].me;
    }
  } else {
    const int *dnp = c->dnp;
#pragma omp simd
    for (size_t d = 0; d < nd; d++) {
      double m = kane_m_at(&kc[d], E, NULL);
      md[d] = dnp[d] ? m : kc[d].me;
    }
  }
  if (Q) memset(Q, 0, nc * sizeof *Q);
  for (size_t k = 0; k < c->n; k++) {
    size_t cc = c->cell[k], d = c->rid[k];
    M[cc] += c->len[k] * md[d];
    if (dM) dM[cc] += c->len[k] * dmd[d];
    if (Q) Q[cc] += c->len[k] / md[d];
  }
}

/* −K Σ_c dM_c J_c², J_c = (ψ_c − ψ_{c−1})/M_c */
static double slope_of(size_t n, const double *M, const double *dM, const double *psi) {
  double dl = 0.0;
  for (size_t c = 0; c <= n; c++) {
    double J = ((c < n ? psi[c] : 0.0) - (c ? psi[c - 1] : 0.0)) / M[c];
    dl -= EW_HB2M0_EVNM2 * dM[c] * J * J;
  }
  return dl;
}

/* Σ_c Q_c (ψ_{c−1}² + ψ_c²)/2: ⟨ψ|m0/m|ψ⟩ in the box quadrature of B */
static double inverse_mass_of(size_t n, const double *Q, const double *psi) {
  double inv = 0.0;
  for (size_t c = 0; c <= n; c++) {
    double pl = c ? psi[c - 1] : 0.0, pr = c < n ? psi[c] : 0.0;
    inv += Q[c] * 0.5 * (pl * pl + pr * pr);
  }
  return inv;
}

double ew_nonparabolic_slope(const ew_stack *st, const ew_grid *g, double E, const double *psi,
                             double *work) {
  size_t nc = g->n + 1;
  np_ctx c;
  if (!ctx_build(&c, st, g)) return NAN;
  ctx_eval(&c, E, work, work + nc, work + 2 * nc);
  ctx_free(&c);
  return slope_of(g->n, work, work + nc, psi);
}

struct ew_kane_cells {
  np_ctx c;
};

ew_kane_cells *ew_kane_cells_new(const ew_stack *st, const ew_grid *g) {
  ew_kane_cells *k = malloc(sizeof *k);
  if (k && !ctx_build(&k->c, st, g)) {
    free(k);
    k = NULL;
  }
  return k;
}

void ew_kane_cells_eval(const ew_kane_cells *k, double E, double *M) {
  ctx_eval(&k->c, E, M, NULL, NULL);
}

void ew_kane_cells_free(ew_kane_cells *k) {
  if (!k) return;
  ctx_free(&k->c);
  free(k);
}

/* Q_c = ∫_c m0/m∥ dz of a parabolic band: the pieces of ctx_build (the same lengths and
 * masses, summed in the same order) without building the context. */
static void inplane_cells(const ew_stack *st, const ew_grid *g, ew_band band, double *Q) {
  size_t n = g->n, k0 = 0;
  memset(Q, 0, (n + 1) * sizeof *Q);
  for (size_t cc = 0; cc <= n; cc++) {
    double a = cc == 0 ? 0.0 : g->z[cc - 1], b = cc == n ? g->length_nm : g->z[cc];
    while (k0 + 1 < st->n_layers && st->layers[k0 + 1].z_start_nm <= a) k0++;
    for (size_t k = k0; k < st->n_layers; k++) {
      const ew_layer *ly = &st->layers[k];
      if (ly->z_start_nm >= b) break;
      double z0 = ly->z_start_nm, z1 = z0 + ly->thickness_nm;
      double lo = a > z0 ? a : z0, hi = b < z1 ? b : z1;
      if (hi <= lo) continue;
      ew_bands tmp;
      const ew_bands *bb = &ly->bands;
      if (ly->profile) {
        ew_layer_bands_at(ly, (0.5 * (lo + hi) - z0) / ly->thickness_nm, &tmp);
        bb = &tmp;
      }
      double m = band == EW_BAND_E ? bb->me : band == EW_BAND_HH ? bb->mhh_par : bb->mlh_par;
      Q[cc] += (hi - lo) / m;
    }
  }
}

int ew_inplane_masses(const ew_stack *st, const ew_grid *g, ew_band band, int nonparabolic,
                      size_t count, const double *E, const double *psi, double *out,
                      double *trk) {
  size_t n = g->n, nc = n + 1;
  if (!count) return 1;
  int kane = band == EW_BAND_E && nonparabolic;
  double *w = malloc((kane ? 3 : 1) * nc * sizeof *w);
  np_ctx c;
  memset(&c, 0, sizeof c);
  if (!w || (kane && !ctx_build(&c, st, g))) {
    free(w);
    return 0;
  }
  double *M = w, *dM = w + nc, *Q = kane ? w + 2 * nc : w;
  if (kane) {
    for (size_t j = 0; j < count; j++) {
      const double *v = psi + j * n;
      ctx_eval(&c, E[j], M, dM, Q);
      out[j] = (1.0 - slope_of(n, M, dM, v)) / inverse_mass_of(n, Q, v);
      if (trk) trk[j] = ew_obs_inverse_mass_M(g, M, v);
    }
  } else { /* parabolic: Q_c once for the band (m_e, or the holes' Luttinger in-plane masses) */
    inplane_cells(st, g, band, Q);
    for (size_t j = 0; j < count; j++) {
      out[j] = 1.0 / inverse_mass_of(n, Q, psi + j * n);
      if (trk) trk[j] = ew_obs_inverse_mass(g, band, psi + j * n);
    }
  }
  ctx_free(&c);
  free(w);
  return 1;
}

/* H(E) in the context's own pencil, refilled (allocated at the first call; freed with the
 * context): valid until the next call.  NULL when out of memory. */
static ew_pencil *ctx_pencil(np_ctx *c, double E, double *M) {
  ctx_eval(c, E, M, NULL, NULL);
  if (!c->pen) c->pen = ew_pencil_build_mass(c->g, EW_BAND_E, M);
  else ew_pencil_refill_mass(c->pen, c->g, EW_BAND_E, M);
  return c->pen;
}

/* g(E) = λ_idx(H(E)) − E, the eigenvalue found by Newton from guess; *ok becomes 0 when it is
 * not found, −1 when out of memory; *tol (when not NULL) receives the step below which the
 * fixed point counts as reached: NP_TOL_EV, or the eigenvalue's own resolution 16 ε ‖T‖
 * (eigen.c) when that is larger.  Near the node limit (h ≈ 2e-4 nm, ‖T‖ ≈ 4K/(m h²) ≈ 1e8 eV) λ is only known to
 * ~3e-7 eV and steps of 1e-9 eV are noise: the iteration "did not converge" (exit 6, issue 18). */
static double gap_fn(np_ctx *c, double E, double guess, size_t idx, double *M, size_t *counts,
                     int *ok, double *tol) {
  ew_pencil *p = ctx_pencil(c, E, M);
  if (!p) {
    *ok = -1;
    return 0.0;
  }
  double lam = ew_eigen_index(p, idx, guess, 1e-13, counts);
  if (tol) *tol = fmax(NP_TOL_EV, 16.0 * DBL_EPSILON * p->std_norm);
  if (!isfinite(lam)) *ok = 0;
  return lam - E;
}

/* Secant iteration for the fixed point of level idx from start; returns 0 on success, 1 when
 * it does not converge, −1 when out of memory.
 * *slope (in/out): the slope of g(E) = λ(E) − E; 0 on entry means unknown (the first step is
 * then the plain fixed-point step, slope −1).  The coarse grid starts from the fine grid's
 * slope, which is nearly the same, and usually converges in two evaluations. */
static int fixed_point(np_ctx *c, size_t idx, double start, double *M, size_t *counts,
                       double *E_out, double *last_step, double *slope, double *first_gap) {
  int ok = 1;
  double tol = NP_TOL_EV;
  /* first_gap (in/out): λ(start) − start expected on entry (NAN: unknown, Newton then starts
     at start itself), found on return */
  double E0 = start, g0 = gap_fn(c, E0, E0 + (isfinite(*first_gap) ? *first_gap : 0.0), idx, M,
                                 counts, &ok, &tol);
  *first_gap = g0;
  double s0 = *slope < 0 ? *slope : -1.0;
  double E1 = E0 - g0 / s0, g1 = 0.0;
  *last_step = fabs(g0);
  *E_out = E1;
  if (ok != 1) return ok < 0 ? -1 : 1;
  if (fabs(g0) < tol) return 0;
  for (int it = 0; it < NP_MAX_IT; it++) {
    g1 = gap_fn(c, E1, E1, idx, M, counts, &ok, NULL);
    if (ok != 1) return ok < 0 ? -1 : 1;
    if (E1 != E0 && g1 != g0) *slope = (g1 - g0) / (E1 - E0);
    double step = (g1 - g0) != 0.0 ? -g1 * (E1 - E0) / (g1 - g0) : g1;
    if (!isfinite(step)) step = g1;
    E0 = E1, g0 = g1;
    E1 += step;
    *last_step = fabs(step);
    if (fabs(step) < tol) {
      *E_out = E1;
      return 0;
    }
  }
  *E_out = E1;
  return 1;
}

/* Fixed points closer than this are one cluster whose vectors come from one pencil (see
 * cluster_vectors).  Vectors of separate pencils are orthogonal only to ~1e-17 eV / gap
 * (measured in eigen.c), so 1e-8 eV keeps them orthogonal to ~1e-9; far below any splitting
 * that can be measured and above the fixed points' own accuracy (NP_TOL_EV). */
#define NP_CLUSTER_EV 1e-8

/* The self-consistent energy of each of the nb levels from index clo on the fine grid (E[j])
 * and the slope of its secant at the end (slope[j], where the coarse grid's fixed point
 * starts).  *good: the levels that converged; when it is below nb, level *good failed and
 * the return value says how (err set). */
static ew_status fine_energies(np_ctx *cf, size_t clo, size_t nb, double lo, double top,
                               double *M, double *E, double *slope_out, size_t *good,
                               size_t *work_counts, ew_error *err) {
  /* start each level from the parabolic value: the plain pencil's eigenvalues of the levels'
     indices, isolated together by one bisection on the count (E is their scratch) */
  *good = 0;
  ew_pencil *pp = ew_pencil_build(cf->g, EW_BAND_E);
  if (!pp) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  ew_status rc = ew_eigen_indices(pp, clo, nb, lo, top, 1e-9, E, work_counts, err);
  double fine_slope = 0.0;
  /* (start, λ(start) − start) of the two levels before: Newton for λ(start) of the next level
     starts from their line (the Kane shift varies slowly with energy).  Started at the start
     itself, Newton on the determinant of a superlattice crossed the miniband's levels between
     start and λ, ~40 passes instead of ~4 (measured, 100 periods). */
  double s1 = NAN, g1 = NAN, s2 = NAN, g2 = NAN;
  for (size_t j = 0; j < nb && rc == EW_OK; j++) {
    size_t idx = clo + j;
    double start = E[j], step;
    if (!isfinite(start) || start > top) start = top;
    /* the previous level's slope starts the secant (levels of one band have similar ones) */
    double slope = fine_slope;
    double gap = isfinite(g2) && s1 != s2 ? g1 + (g1 - g2) / (s1 - s2) * (start - s1) : g1;
    int fp = fixed_point(cf, idx, start, M, work_counts, &E[j], &step, &slope, &gap);
    s2 = s1, g2 = g1, s1 = start, g1 = gap;
    fine_slope = slope_out[j] = slope;
    if (fp < 0) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic pencil)");
    else if (fp)
      rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                   "non-parabolic level e%zu did not converge in %d steps (reached %.9f eV, "
                   "last change %.2e eV)", j + 1, NP_MAX_IT, E[j], step);
    else *good = j + 1;
  }
  ew_pencil_free(pp);
  return rc;
}

/* The vectors of the m levels j0… (indices idx0…, energies fine->values[j0…], within
 * NP_CLUSTER_EV of each other): all from the one pencil H(Ē), Ē their mean, so that they are
 * B-orthonormal however close the levels are (identical decoupled wells: e1, e2 of two
 * wells agree to far below the fixed points' accuracy, and separate pencils would each pick
 * an arbitrary, possibly the same, vector of the pair).  A single level keeps the eigenvalue
 * of its own pencil; a cluster keeps each level's fixed point, with the residual of its
 * vector in the level's own pencil H(E_j). */
static ew_status cluster_vectors(np_ctx *cf, size_t idx0, size_t j0, size_t m, double *M,
                                 ew_shift_lu *lu, ew_eigenpairs *fine, size_t *work,
                                 ew_error *err) {
  size_t n = cf->g->n;
  double *E = fine->values + j0, mean = 0.0;
  for (size_t r = 0; r < m; r++) mean += E[r] / (double)m;
  ew_pencil *p = ctx_pencil(cf, m == 1 ? E[0] : mean, M);
  if (!p) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic pencil)");
  double w = 1e-4; /* a window holding exactly the cluster's indices */
  int isolated = 0;
  for (int t = 0; t < 40 && !isolated; t++, w *= 0.25)
    isolated = ew_eigen_count_below(p, E[0] - w) == idx0 &&
               ew_eigen_count_below(p, E[m - 1] + w) == idx0 + m;
  w *= 4.0;
  ew_eigenpairs grp;
  ew_status rc = isolated ? ew_eigen_window_lu(p, E[0] - w, E[m - 1] + w, 1, lu, &grp, err)
                          : ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "non-parabolic level e%zu: "
                                    "cannot isolate its eigenvalue", j0 + 1);
  if (rc == EW_OK && grp.count != m)
    rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "non-parabolic levels e%zu-e%zu: %zu vectors "
                 "for %zu levels", j0 + 1, j0 + m, grp.count, m);
  for (size_t r = 0; rc == EW_OK && r < m; r++) {
    double *v = fine->vectors + (j0 + r) * n;
    memcpy(v, grp.vectors + r * n, n * sizeof *v);
    if (m == 1) {
      E[r] = grp.values[r];
      fine->residual[j0 + r] = ew_pencil_residual(p, v, E[r]);
      continue;
    }
    ew_pencil *pj = ctx_pencil(cf, E[r], M); /* p is not needed any more */
    if (!pj) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic pencil)");
    else fine->residual[j0 + r] = ew_pencil_residual(pj, v, E[r]);
  }
  if (rc == EW_OK || isolated) {
    work[0] += grp.factorizations; /* work: {factorizations, solves} of this thread */
    work[1] += grp.solves;
    ew_eigenpairs_free(&grp);
  }
  return rc;
}

/* Levels of separate clusters closer than this are B-orthogonalised against each other, as
 * eigen.c does for the eigenvalues of one pencil closer than its EW_ORTH_GAP_EV (same value). */
#define NP_ORTH_GAP_EV 1e-5

/* The vectors of levels j0…j0+m−1 B-orthogonalised against the earlier levels closer than
 * NP_ORTH_GAP_EV (Gram–Schmidt), residuals recomputed in each level's own pencil.  Why: the
 * vector of a level whose neighbour lies Δ away is determined only to ~ε‖T‖/Δ, and two levels
 * of different pencils do not share that rounding (a resolved 2.5e-7 eV pair of 40 nm-apart
 * wells came out 1.3e-7 non-orthogonal); the exact non-orthogonality of an energy-dependent
 * H, ψiᵀ[H(Ej) − H(Ei)]/(Ej − Ei)ψj, is that of nearly identical, nearly decoupled wells
 * here (close levels arise no other way), far below that. */
static ew_status orthogonalize_near(np_ctx *cf, size_t j0, size_t m, double *M,
                                    ew_eigenpairs *fine, ew_error *err) {
  size_t n = cf->g->n;
  for (size_t j = j0; j < j0 + m; j++) {
    double *x = fine->vectors + j * n;
    const double *w = cf->g->w;
    int again = 0;
    for (size_t r = j0; r-- > 0 && fine->values[j] - fine->values[r] < NP_ORTH_GAP_EV;) {
      const double *u = fine->vectors + r * n;
      double a = 0.0, nb = 0.0;
      for (size_t i = 0; i < n; i++) a += u[i] * w[i] * x[i];
      for (size_t i = 0; i < n; i++) x[i] -= a * u[i], nb += x[i] * w[i] * x[i];
      for (size_t i = 0; i < n; i++) x[i] /= sqrt(nb);
      again = 1;
    }
    if (!again) continue;
    ew_pencil *p = ctx_pencil(cf, fine->values[j], M);
    if (!p) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic pencil)");
    fine->residual[j] = ew_pencil_residual(p, x, fine->values[j]);
  }
  return EW_OK;
}

/* Threads on one queue of level tasks at most: its owner and the other threads of a pass. */
#define NP_TASK_SLOTS 4

/* What follows the fine fixed points, as one queue of tasks for the threads of level_tasks:
 * first each level's fixed point on the coarse grid (from the fine energy and slope), then the
 * vectors of each cluster of levels (first level j0[k], k < nc; j0[nc] = nb), whose vectors
 * come from the cluster's own pencil H(Ē) alone.  Every task depends only on the fine results,
 * so it runs on any thread (each with its own contexts, masses and workspace) into its own
 * outputs; errors are judged, and the vectors B-orthogonalised against earlier levels, in
 * level order on the caller's thread afterwards: the same bits as one task after another. */
typedef struct {
  const ew_stack *st;
  const ew_grid *g, *coarse;
  size_t clo, nb, ncv, nc; /* ncv coarse tasks (0 without a coarse grid), nc clusters */
  const size_t *j0;
  const double *slope; /* [nb] the fine secants' slopes */
  const double *Efp;   /* [nb] the fine fixed points (the coarse ones start there; a single
                          level's task replaces its fine->values by its own pencil's value) */
  ew_eigenpairs *fine;
  const np_ctx *cf, *cc; /* the caller's contexts, whose pieces a helper borrows */
  double *cv;          /* [nb] coarse values */
  atomic_size_t next;
  int *fc;             /* [ncv] the coarse fixed points' outcome (fixed_point's) */
  double *step;        /* [ncv] their last steps */
  ew_status *rc;       /* [nc] */
  ew_error *err;       /* [nc] */
  atomic_int servers;  /* threads that came to help so far (each takes its own work slot) */
  size_t work[NP_TASK_SLOTS][3]; /* factorizations, solves and counts: the owner's (slot 0),
                                    each helper's */
} task_queue;

/* The thread's contexts: the fine and (with a coarse grid) the coarse masses, the masses'
 * scratch and the factorization workspace. */
typedef struct {
  np_ctx *cf, *cc;
  double *M;
  ew_shift_lu *lu;
} task_ws;

static void drain_tasks(task_queue *q, int slot, const task_ws *w) {
  for (size_t k; (k = atomic_fetch_add(&q->next, 1)) < q->ncv + q->nc;) {
    if (k < q->ncv) { /* the coarse grid's fixed point of level k */
      size_t idx = q->clo + k;
      double sl = q->slope[k];
      q->fc[k] = 0;
      if (idx >= w->cc->g->n) q->cv[k] = NAN; /* the coarse grid cannot hold it */
      else q->fc[k] = fixed_point(w->cc, idx, q->Efp[k], w->M, &q->work[slot][2],
                                  &q->cv[k], &q->step[k], &sl, &(double){NAN});
      continue;
    }
    k -= q->ncv;
    size_t j0 = q->j0[k], m = q->j0[k + 1] - j0;
    q->rc[k] = cluster_vectors(w->cf, q->clo + j0, j0, m, w->M, w->lu, q->fine, q->work[slot],
                               &q->err[k]);
  }
}

/* A thread serving the queue (ew_assist_fn; scratch: its workspace slot, helper_thread.h). */
static void serve_tasks(void *arg, void *scratch) {
  task_queue *q = arg;
  int slot = 1 + atomic_fetch_add(&q->servers, 1);
  if (slot >= NP_TASK_SLOTS) return; /* enough threads on this queue */
  ew_shift_lu **lu = scratch;
  if (*lu && ew_shift_lu_size(*lu) != q->g->n) ew_shift_lu_free(*lu), *lu = NULL;
  if (!*lu) *lu = ew_shift_lu_create(q->g->n);
  np_ctx cf, cc;
  memset(&cf, 0, sizeof cf);
  memset(&cc, 0, sizeof cc);
  size_t nm = (q->g->n > (q->coarse ? q->coarse->n : 0) ? q->g->n : q->coarse->n) + 1;
  task_ws w = {&cf, &cc, malloc(nm * sizeof *w.M), *lu};
  if (w.M && w.lu && ctx_borrow(&cf, q->cf) && (!q->coarse || ctx_borrow(&cc, q->cc)))
    drain_tasks(q, slot, &w);
  ctx_free(&cf); /* a thread that cannot work leaves its tasks to the others */
  ctx_free(&cc);
  free(w.M);
}

/* Below this much work (tasks × nodes) the tasks are not offered: a task takes about a
 * factorization, ~1.5e3 instructions a node; a thread that comes to help first borrows the
 * contexts and makes a workspace. */
#define NP_SPLIT_MIN_WORK 2e5

/* The tasks after the fine fixed points (see task_queue): the coarse values of the first ncv
 * levels and, when vectors is set, the vectors of all nb levels (fine->values set), on this
 * thread and, when worth it, the pass's threads that have run out of bands (offered through
 * assist); then orthogonalize_near in level order.  The first
 * coarse failure in level order is the error, then the first cluster's. */
static ew_status level_tasks(const task_ws *w, ew_assist *assist, const ew_stack *st,
                             const ew_grid *coarse, size_t clo, size_t nb, size_t ncv,
                             int vectors, const double *slope, ew_eigenpairs *fine, double *cv,
                             size_t *work_counts, ew_error *err) {
  size_t *j0 = malloc((nb + 1) * sizeof *j0), nc = 0, cap = nb ? nb : 1;
  double *Efp = malloc(cap * sizeof *Efp);
  task_queue q = {st, w->cf->g, coarse, clo, nb, coarse ? ncv : 0, 0, j0, slope, Efp, fine,
                  w->cf, w->cc, cv, 0, malloc(cap * sizeof *q.fc), malloc(cap * sizeof *q.step),
                  malloc(cap * sizeof *q.rc), malloc(cap * sizeof *q.err), 0, {{0}}};
  ew_status rc = EW_OK;
  if (!j0 || !Efp || !q.fc || !q.step || !q.rc || !q.err)
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic levels)");
  else memcpy(Efp, fine->values, nb * sizeof *Efp);
  for (size_t j = 0; rc == EW_OK && vectors && j < nb; j++)
    if (j == 0 || fine->values[j] - fine->values[j - 1] >= NP_CLUSTER_EV) j0[nc++] = j;
  if (rc == EW_OK) {
    j0[nc] = nb, q.nc = nc;
    atomic_init(&q.next, 0);
    atomic_init(&q.servers, 0);
    /* offered to the pass's threads that ran out of bands (they serve on their own heaps) */
    int offered = vectors && (double)(q.ncv + nc) * (double)q.g->n >= NP_SPLIT_MIN_WORK
                      ? ew_assist_offer(assist, serve_tasks, &q)
                      : 0;
    drain_tasks(&q, 0, w);
    if (offered) ew_assist_withdraw(assist, offered);
    for (int t = 0; t < NP_TASK_SLOTS; t++) {
      fine->factorizations += q.work[t][0];
      fine->solves += q.work[t][1];
      *work_counts += q.work[t][2];
    }
  }
  for (size_t j = 0; rc == EW_OK && j < q.ncv; j++)
    if (q.fc[j] < 0)
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic pencil)");
    else if (q.fc[j])
      rc = ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "non-parabolic level e%zu did not converge "
                   "on the coarse grid (last change %.2e eV)", j + 1, q.step[j]);
  for (size_t k = 0; rc == EW_OK && k < nc; k++) {
    size_t a = j0[k], m = j0[k + 1] - a;
    if (q.rc[k] != EW_OK) {
      rc = q.rc[k];
      if (err) *err = q.err[k];
    } else rc = orthogonalize_near(w->cf, a, m, w->M, fine, err);
    if (rc == EW_OK) fine->count = a + m;
  }
  free(j0);
  free(Efp);
  free(q.fc);
  free(q.step);
  free(q.rc);
  free(q.err);
  return rc;
}

/* The nb levels from index clo: the fine fixed points one after another (each starts from
 * the previous one's slope), then the tasks that depend only on them (level_tasks).  A level
 * that fails on the fine grid: the coarse values of the levels before it can still fail
 * first (in level order, as one level after another would); no vectors then. */
static ew_status all_levels(const task_ws *w, ew_assist *assist, const ew_stack *st,
                            const ew_grid *coarse, size_t clo, size_t nb, double lo, double top,
                            ew_eigenpairs *fine, double *cv, size_t *work_counts,
                            ew_error *err) {
  size_t good = 0;
  double *slope = malloc((nb ? nb : 1) * sizeof *slope);
  if (!slope) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic levels)");
  ew_error fine_err;
  ew_status frc = fine_energies(w->cf, clo, nb, lo, top, w->M, fine->values, slope, &good,
                                work_counts, &fine_err);
  ew_status rc = frc == EW_OK || good > 0
                     ? level_tasks(w, assist, st, coarse, clo, nb, good, frc == EW_OK, slope,
                                   fine, cv, work_counts, err)
                     : EW_OK;
  free(slope);
  if (rc == EW_OK && frc != EW_OK) {
    rc = frc;
    if (err) *err = fine_err;
  }
  return rc;
}

ew_status ew_nonparabolic_levels(const ew_stack *st, const ew_grid *g, const ew_grid *coarse,
                                 double lo, double top, ew_eigenpairs *fine,
                                 double **coarse_vals, size_t *work_counts, ew_error *err) {
  return ew_nonparabolic_levels_lu(st, g, coarse, lo, top, NULL, fine, coarse_vals, work_counts,
                                   err);
}

ew_status ew_nonparabolic_levels_lu(const ew_stack *st, const ew_grid *g, const ew_grid *coarse,
                                    double lo, double top, ew_shift_lu *given,
                                    ew_eigenpairs *fine, double **coarse_vals,
                                    size_t *work_counts, ew_error *err) {
  return ew_nonparabolic_levels_assist(st, g, coarse, lo, top, given, NULL, fine, coarse_vals,
                                       work_counts, err);
}

ew_status ew_nonparabolic_levels_assist(const ew_stack *st, const ew_grid *g,
                                        const ew_grid *coarse, double lo, double top,
                                        ew_shift_lu *given, ew_assist *assist,
                                        ew_eigenpairs *fine, double **coarse_vals,
                                        size_t *work_counts, ew_error *err) {
  memset(fine, 0, sizeof *fine);
  *coarse_vals = NULL;
  size_t nmax = (g->n > (coarse ? coarse->n : 0) ? g->n : coarse->n) + 1, dummy = 0;
  if (!work_counts) work_counts = &dummy;
  double *M = malloc(nmax * sizeof *M), *cv = NULL;
  np_ctx cf, cc;
  memset(&cf, 0, sizeof cf);
  memset(&cc, 0, sizeof cc);
  ew_status rc = EW_OK;
  ew_pencil *pt = NULL;
  /* one factorization workspace for every level's vectors (the caller's when it fits) */
  ew_shift_lu *own = NULL, *lu = given && ew_shift_lu_size(given) == g->n ? given : NULL;
  if (!lu && g->n >= 2) lu = own = ew_shift_lu_create(g->n);
  if (!M || (!lu && g->n >= 2) || !ctx_build(&cf, st, g) ||
      (coarse && !ctx_build(&cc, st, coarse)) || !(pt = ctx_pencil(&cf, top, M))) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic masses)");
    goto done;
  }
  /* bound count: eigenvalues of H(top) below top (see the header) */
  size_t clo = ew_eigen_count_below(pt, lo), nb = ew_eigen_count_below(pt, top) - clo;
  size_t n = g->n;
  fine->n = n;
  fine->certified = nb;
  fine->values = malloc((nb ? nb : 1) * sizeof *fine->values);
  fine->vectors = malloc((nb ? nb : 1) * n * sizeof *fine->vectors);
  fine->residual = malloc((nb ? nb : 1) * sizeof *fine->residual);
  cv = coarse ? malloc((nb ? nb : 1) * sizeof *cv) : NULL;
  if (!fine->values || !fine->vectors || !fine->residual || (coarse && !cv)) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (non-parabolic levels)");
    goto done;
  }
  task_ws w = {&cf, &cc, M, lu};
  rc = all_levels(&w, assist, st, coarse, clo, nb, lo, top, fine, cv, work_counts, err);
done:
  free(M);
  ew_shift_lu_free(own);
  ctx_free(&cf);
  ctx_free(&cc);
  if (rc != EW_OK) {
    ew_eigenpairs_free(fine);
    free(cv);
    return rc;
  }
  *coarse_vals = cv;
  return EW_OK;
}
