/* continuum.c — open-boundary continuum states and the bound-to-continuum oscillator
 * strength (see continuum.h).
 *
 * Energy normalisation on a lead, derived.  A lead of cells of length h and mass integral
 * M has rows −t ψ_j−1 + (2t + h(V − E)) ψ_j − t ψ_j+1 = 0, t = K/M (K = ħ²/2m0), solved by
 * ψ_j = a sin(θj + φ) with E = V + 2t(1 − cos θ)/h.  Over a half-infinite lead with weights
 * h, Σ_j h a_a sin(θj + φ_a) a_b sin(θ′j + φ_b) has the singular part
 * h a_a a_b (π/2) cos(φ_a − φ_b) δ(θ − θ′), and δ(θ − θ′) = (dE/dθ) δ(E − E′) with
 * dE/dθ = 2t sin θ / h: the coefficient is π t sin θ a_a a_b cos(φ_a − φ_b).  Writing
 * u = a e^{i(θj + φ)} from two consecutive samples (Im u = ψ_j, Re u = (ψ_j+1 − ψ_j cos θ)/
 * sin θ), a_a a_b cos(φ_a − φ_b) = Re(u_a ū_b) = [ψa_j ψb_j + ψa_j+1 ψb_j+1 − cos θ (ψa_j
 * ψb_j+1 + ψa_j+1 ψb_j)] / sin²θ, which gives G_ab of continuum.h.  The continuum limit
 * (h → 0) is the familiar (π/2) ħ v a² of a plane wave of velocity v per lead. */
#include "continuum.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "helper_thread.h"
#include "nonparabolic.h"

#define CT_PANELS 32    /* geometric panels in s = √(E − E_edge) per piece */
#define CT_GRADE 14.0   /* panel growth: the first panel is e^−14 of the piece (in s) */
#define CT_RESCALE 1e150 /* rescale a shot solution beyond this size */
/* Energies shot side by side in one pass over the stack: each lane performs the operations of
 * a single shot, the same bits, while the chains of dependent divisions of the four overlap
 * in the processor (as the lanes of eigen.c). */
#define CT_LANES 4
#if defined(__GNUC__)
#define CT_UNROLLED static inline __attribute__((always_inline))
#else
#define CT_UNROLLED static inline
#endif

struct ew_continuum {
  const ew_result *r;
  const ew_grid *g;
  ew_band band;
  double Ei;       /* the bound state's energy, positive-mass scale (its reported energy) */
  double invm;     /* ⟨i|m0/m|i⟩ of the state's lines */
  double zbar;     /* ⟨i|z|i⟩ */
  const double *psi;
  double *M;       /* [n+1] cell mass integrals at the energy of the last shot */
  double *kinv;    /* [n+1] K / M, the chain's couplings at that energy */
  double *wz;      /* [n] w_i (z_i − ⟨z⟩) ψ_i, the dipole weights (no energy in them) */
  ew_kane_cells *kane; /* Kane electrons, else NULL (masses fixed: g->cell_mass) */
  double kane_cap;     /* Kane masses are taken at min(E, kane_cap) */
  /* Kane masses and couplings for the lanes of a batch of shots: slot 0 is M and kinv, slots
     1 … in one block (NULL without Kane masses); slot_at: the energy each holds (NaN: none) */
  double *slot_M[CT_LANES], *slot_kinv[CT_LANES], slot_at[CT_LANES];
  double V[2];     /* lead potentials: left, right */
};

int ew_continuum_applies(const ew_result *r, size_t lower, char *why, size_t size) {
  const char *msg = NULL;
  if (!r || lower >= r->n_states) msg = "no such bound state";
  else if (r->stack->field_kV_cm != 0.0)
    msg = "a stack in a field has no flat outer barrier to open (the continuum is tilted)";
  else if (r->grid->n < 3) msg = "the grid is too small";
  if (msg && why && size) snprintf(why, size, "%s", msg);
  return msg == NULL;
}

double ew_continuum_edge_eV(const ew_result *r, ew_band band) {
  const ew_grid *g = r->grid;
  double v = fmin(g->pot[band][0], g->pot[band][g->n - 1]); /* positive-mass scale */
  return band == EW_BAND_E ? v : -v;
}

void ew_continuum_free(ew_continuum *c) {
  if (!c) return;
  free(c->M);
  free(c->kinv);
  free(c->wz);
  free(c->slot_M[1]);
  ew_kane_cells_free(c->kane);
  free(c);
}

/* The mass slots of a Kane continuum: slot 0 is M and kinv, slots 1 … in one block.
 * 0 when out of memory. */
static int kane_slots(ew_continuum *c, size_t nc) {
  double *b = malloc(2 * (CT_LANES - 1) * nc * sizeof *b);
  if (!b) return 0;
  c->slot_M[0] = c->M, c->slot_kinv[0] = c->kinv;
  for (int s = 1; s < CT_LANES; s++)
    c->slot_M[s] = b + 2 * (size_t)(s - 1) * nc, c->slot_kinv[s] = c->slot_M[s] + nc;
  for (int s = 0; s < CT_LANES; s++) c->slot_at[s] = NAN;
  return 1;
}

ew_status ew_continuum_new(const ew_result *r, size_t lower, ew_continuum **out,
                           ew_error *err) {
  *out = NULL;
  char why[160];
  if (!ew_continuum_applies(r, lower, why, sizeof why))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "continuum: %s", why);
  const ew_grid *g = r->grid;
  ew_continuum *c = calloc(1, sizeof *c);
  if (!c) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (continuum)");
  c->r = r;
  c->g = g;
  c->band = r->states[lower].band;
  c->Ei = c->band == EW_BAND_E ? r->states[lower].energy_eV : -r->states[lower].energy_eV;
  c->invm = r->mean_inv_mass[lower];
  c->psi = r->psi + lower * g->n;
  c->M = malloc((g->n + 1) * sizeof *c->M);
  c->kinv = malloc((g->n + 1) * sizeof *c->kinv);
  c->wz = malloc(g->n * sizeof *c->wz);
  if (!c->kinv || !c->wz) free(c->M), c->M = NULL;
  if (c->M && c->band == EW_BAND_E && r->nonparabolic && !(c->kane = ew_kane_cells_new(r->stack, g)))
    free(c->M), c->M = NULL;
  if (c->M && c->kane && !kane_slots(c, g->n + 1)) free(c->M), c->M = NULL;
  if (!c->M) {
    ew_continuum_free(c);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (continuum)");
  }
  memcpy(c->M, g->cell_mass[c->band], (g->n + 1) * sizeof *c->M);
  for (size_t i = 0; i <= g->n; i++) c->kinv[i] = EW_HB2M0_EVNM2 / c->M[i];
  double zb = 0.0;
  for (size_t i = 0; i < g->n; i++) zb += g->w[i] * g->z[i] * c->psi[i] * c->psi[i];
  c->zbar = zb;
  for (size_t i = 0; i < g->n; i++) c->wz[i] = g->w[i] * (g->z[i] - c->zbar) * c->psi[i];
  c->V[0] = g->pot[c->band][0];
  c->V[1] = g->pot[c->band][g->n - 1];
  /* The Kane masses up to the smallest Γ gap of the stack above the continuum's bottom, held
     there beyond: far above the gap the three-level model means nothing (its mass grows
     without bound and then turns negative, kane_m falls back to m_e), and the far continuum
     weighs in the sum rule only through its tail, which then decays as for constant masses. */
  double gap = INFINITY;
  for (size_t k = 0; k < r->stack->n_layers; k++)
    if (r->stack->layers[k].bands.Eg_G_eV > 0) gap = fmin(gap, r->stack->layers[k].bands.Eg_G_eV);
  c->kane_cap = fmin(c->V[0], c->V[1]) + (isfinite(gap) ? gap : 1.0);
  *out = c;
  return EW_OK;
}

/* cos θ of a lead (t, h, V) at E (|cos θ| < 1 when its channel is open) and sin θ, from
 * x = 1 − cos θ: sin²θ = x(2 − x) keeps its digits near the band bottom, where cos θ → 1 */
static double lead_cos(double t, double h, double V, double E, double *sn) {
  double x = h * (E - V) / (2.0 * t);
  *sn = x > 0 && x < 2 ? sqrt(x * (2.0 - x)) : 0.0;
  return 1.0 - x;
}

/* The root λ of λ + 1/λ = 2c with |λ| < 1 (|c| > 1): the solution decaying into a closed lead */
static double decaying(double c) { return c > 0 ? c - sqrt(c * c - 1.0) : c + sqrt(c * c - 1.0); }

/* (π t / sin θ)·[…] of continuum.h for two solutions sampled at consecutive lead nodes */
static double lead_gram(double t, double cs, double sn, double a0, double a1, double b0,
                        double b1) {
  return EW_PI * t / sn * (a0 * b0 + a1 * b1 - cs * (a0 * b1 + a1 * b0));
}

/* The Kane cell masses (and couplings K/M) at min(E, kane_cap) into slot s; each slot keeps
 * its last energy's, so that the shots above the cap, which all see the cap's masses,
 * evaluate them once. */
static void kane_masses_in(ew_continuum *c, int s, double E) {
  double Ek = fmin(E, c->kane_cap);
  if (Ek == c->slot_at[s]) return;
  double *M = c->slot_M[s], *kv = c->slot_kinv[s];
  ew_kane_cells_eval(c->kane, Ek, M);
  /* the cells of a layer share one mass integral: a quotient repeats bit for bit, and the
     divisions (most of this function's time) are done once a run of equal cells */
  double last_M = NAN, last_kv = NAN;
  for (size_t i = 0; i <= c->g->n; i++) {
    if (M[i] != last_M) last_M = M[i], last_kv = EW_HB2M0_EVNM2 / M[i];
    kv[i] = last_kv;
  }
  c->slot_at[s] = Ek;
}

static void kane_masses(ew_continuum *c, double E) { kane_masses_in(c, 0, E); }

/* One shot of a batch: its energy, couplings, leads and the two solutions' samples (pm at node
 * j−1, p0 at j), dipoles d and start samples l0 (at nodes −1 and 0). */
typedef struct {
  double E, tL, tR, cL, sL, cR, sR;
  const double *kv; /* K / M at this energy */
  int openL, openR;
  double pm[2], p0[2], l0[2][2], d[2];
} ct_shot;

/* Shoot ns (1 or 2) solutions of K shots (K a constant at each call) across the stack, side by
 * side: on entry their samples at nodes −1 and 0, on return at n−1 and n.  Each step is row i
 * of hamiltonian.h solved for ψ_i+1, ψ_i+1 = (diag ψ_i − (K/M_i) ψ_i−1) / (K/M_i+1) (the
 * off-diagonals −K/M with their signs taken out: the same bits), with the couplings K/M_c of
 * the shot's energy (the same quotients, computed once per cell); a solution is rescaled
 * (with its dipole and start samples, which d^T G⁻¹ d does not see scaled) beyond
 * CT_RESCALE.  Solution j of shot k is lane 2k + j, held in locals; with ns = 2 a shot whose
 * second solution is all zeros keeps it so. */
CT_UNROLLED void shoot_rows(const ew_continuum *c, const int K, const int ns, ct_shot *sh) {
  const ew_grid *g = c->g;
  const size_t n = g->n;
  const double *V = g->pot[c->band], *w = g->w, *wz = c->wz;
  enum { L = 2 * CT_LANES };
  double pm[L], p0[L], d[L], E[CT_LANES];
  const double *kv[CT_LANES];
  for (int k = 0; k < K; k++) {
    E[k] = sh[k].E, kv[k] = sh[k].kv;
    for (int j = 0; j < ns; j++)
      pm[ns * k + j] = sh[k].pm[j], p0[ns * k + j] = sh[k].p0[j], d[ns * k + j] = sh[k].d[j];
  }
  for (size_t i = 0; i < n; i++) {
    double wi = w[i], vi = V[i], wzi = wz[i];
    int big = 0;
#pragma GCC unroll 8
    for (int k = 0; k < K; k++) {
      double kl = kv[k][i], kr = kv[k][i + 1], diag = kl + kr + wi * (vi - E[k]);
#pragma GCC unroll 2
      for (int j = 0; j < ns; j++) {
        int l = ns * k + j;
        d[l] += wzi * p0[l];
        double p1 = (diag * p0[l] - kl * pm[l]) / kr;
        pm[l] = p0[l];
        p0[l] = p1;
        big |= fabs(p1) > CT_RESCALE;
      }
    }
    if (big)
      for (int l = 0; l < ns * K; l++)
        if (fabs(p0[l]) > CT_RESCALE) {
          double *l0 = sh[l / ns].l0[l % ns];
          pm[l] /= CT_RESCALE, p0[l] /= CT_RESCALE, d[l] /= CT_RESCALE;
          l0[0] /= CT_RESCALE, l0[1] /= CT_RESCALE;
        }
  }
  for (int k = 0; k < K; k++)
    for (int j = 0; j < ns; j++)
      sh[k].pm[j] = pm[ns * k + j], sh[k].p0[j] = p0[ns * k + j], sh[k].d[j] = d[ns * k + j];
}

/* shoot_rows for 1 … CT_LANES shots (the locals of each count unrolled) */
static void shoot_rows_k(const ew_continuum *c, int K, int ns, ct_shot *sh) {
#define CT_CASE(k)                                                                             \
  case k:                                                                                      \
    if (ns > 1) shoot_rows(c, k, 2, sh);                                                       \
    else shoot_rows(c, k, 1, sh);                                                              \
    break;
  switch (K) {
    CT_CASE(1)
    CT_CASE(2)
    CT_CASE(3)
    CT_CASE(4)
  }
#undef CT_CASE
}

/* Set up shot s at E with couplings kv: its leads and start samples.  0 when no lead is
 * open (nothing to shoot). */
static int shot_start(const ew_continuum *c, double E, const double *kv, ct_shot *s) {
  const ew_grid *g = c->g;
  const size_t n = g->n;
  s->E = E, s->kv = kv, s->tL = kv[0], s->tR = kv[n];
  s->cL = lead_cos(s->tL, g->h[0], c->V[0], E, &s->sL);
  s->cR = lead_cos(s->tR, g->h[n], c->V[1], E, &s->sR);
  s->openL = s->sL > 0, s->openR = s->sR > 0;
  if (!s->openL && !s->openR) return 0;
  /* solutions a (and b when the left lead is open), from the samples at nodes −1 and 0 */
  /* open: the lead's standing waves sin θj and cos θj (orthogonal there, G_L = π t sin θ · 1,
     well conditioned even at the band bottom); closed: the wave decaying into the lead */
  if (s->openL) s->pm[0] = -s->sL, s->p0[0] = 0.0, s->pm[1] = s->cL, s->p0[1] = 1.0;
  else s->pm[0] = decaying(s->cL), s->p0[0] = 1.0, s->pm[1] = s->p0[1] = 0.0;
  for (int k = 0; k < 2; k++) s->l0[k][0] = s->pm[k], s->l0[k][1] = s->p0[k], s->d[k] = 0.0;
  return 1;
}

/* d^T G⁻¹ d (nm²/eV) of a shot across the stack (pm, p0: the samples at nodes n−1 and n, the
 * right lead's first two nodes) */
static double shot_result(const ct_shot *s) {
  int ns = s->openL ? 2 : 1;
  const double *pm = s->pm, *p0 = s->p0, *d = s->d;
  const double(*l0)[2] = s->l0;
  double G[2][2] = {{0, 0}, {0, 0}};
  if (s->openL && !s->openR) { /* one state: the combination decaying into the right lead */
    double lam = decaying(s->cR), al = p0[1] - lam * pm[1], be = -(p0[0] - lam * pm[0]);
    double dd = al * d[0] + be * d[1], x0 = al * l0[0][0] + be * l0[1][0],
           x1 = al * l0[0][1] + be * l0[1][1];
    double gl = lead_gram(s->tL, s->cL, s->sL, x0, x1, x0, x1);
    return gl > 0 ? dd * dd / gl : 0.0;
  }
  for (int a = 0; a < ns; a++)
    for (int b = 0; b < ns; b++) {
      if (s->openL)
        G[a][b] += lead_gram(s->tL, s->cL, s->sL, l0[a][0], l0[a][1], l0[b][0], l0[b][1]);
      if (s->openR) G[a][b] += lead_gram(s->tR, s->cR, s->sR, pm[a], p0[a], pm[b], p0[b]);
    }
  if (ns == 1) return G[0][0] > 0 ? d[0] * d[0] / G[0][0] : 0.0;
  /* 2×2 by the Cholesky form d1²/g11 + (d2 − g12 d1/g11)² / (g22 − g12²/g11) */
  if (!(G[0][0] > 0)) return 0.0;
  double r1 = G[0][1] / G[0][0], s2 = G[1][1] - G[0][1] * r1, y = d[1] - r1 * d[0];
  return d[0] * d[0] / G[0][0] + (s2 > 0 ? y * y / s2 : 0.0);
}

/* The couplings of K <= CT_LANES energies E[k]: Kane shot k reads slot k, or an earlier
 * shot's slot when it holds the same masses (shots above the cap share the cap's). */
static void batch_couplings(ew_continuum *c, int K, const double *E, const double **kv) {
  for (int k = 0; k < K; k++) {
    kv[k] = c->kinv;
    if (!c->kane) continue;
    double Ek = fmin(E[k], c->kane_cap);
    int j = 0;
    while (j < k && c->slot_at[j] != Ek) j++;
    if (j == k) kane_masses_in(c, k, E[k]);
    kv[k] = c->slot_kinv[j];
  }
}

/* d^T G⁻¹ d (nm²/eV) of the continuum at K <= CT_LANES energies E[k] (positive-mass scale)
 * into q[k]; 0 where no lead is open. */
static void shoot_batch(ew_continuum *c, int K, const double *E, double *q) {
  const double *kv[CT_LANES];
  batch_couplings(c, K, E, kv);
  ct_shot sh[CT_LANES];
  int m = 0, at[CT_LANES], ns = 1;
  for (int k = 0; k < K; k++) {
    q[k] = 0.0;
    if (shot_start(c, E[k], kv[k], &sh[m])) {
      if (sh[m].openL) ns = 2;
      at[m++] = k;
    }
  }
  if (!m) return;
  shoot_rows_k(c, m, ns, sh);
  for (int k = 0; k < m; k++) q[at[k]] = shot_result(&sh[k]);
}

double ew_continuum_threshold_eV(const ew_continuum *c) { return fmin(c->V[0], c->V[1]) - c->Ei; }

/* ew_continuum_dfdE_many on the calling thread */
static void dfdE_run(ew_continuum *c, size_t count, const double *photon_eV, double *out) {
  double thr = ew_continuum_threshold_eV(c);
  for (size_t j = 0; j < count;) {
    double E[CT_LANES], q[CT_LANES];
    size_t at[CT_LANES];
    int K = 0;
    for (; j < count && K < CT_LANES; j++) {
      out[j] = 0.0;
      if (photon_eV[j] > thr) at[K] = j, E[K++] = c->Ei + photon_eV[j];
    }
    if (!K) continue;
    shoot_batch(c, K, E, q);
    for (int k = 0; k < K; k++) /* f = ΔE|z|² / (K ⟨m0/m⟩) */
      out[at[k]] = photon_eV[at[k]] * q[k] / (EW_HB2M0_EVNM2 * c->invm);
  }
}

/* Part of a dfdE_many call for a helper thread: its own copy of the continuum, made by the
 * caller before the helper starts (the Kane cells' scratch and the mass slots are written by
 * every shot: the helper makes its own on its thread). */
typedef struct {
  ew_continuum v;
  size_t count;
  const double *x;
  double *out;
  int done;
} dfdE_part;

static void *dfdE_helper(void *arg) {
  dfdE_part *p = arg;
  ew_continuum *v = &p->v;
  size_t nc = v->g->n + 1;
  if (v->kane) {
    v->kane = ew_kane_cells_new(v->r->stack, v->g);
    v->M = malloc(2 * nc * sizeof *v->M);
    v->slot_M[1] = NULL;
    if (v->M) v->kinv = v->M + nc;
    if (!v->kane || !v->M || !kane_slots(v, nc)) {
      ew_kane_cells_free(v->kane);
      free(v->M);
      return NULL; /* the caller does this part */
    }
  }
  dfdE_run(v, p->count, p->x, p->out);
  if (v->kane) {
    ew_kane_cells_free(v->kane);
    free(v->M);
    free(v->slot_M[1]);
  }
  p->done = 1;
  return NULL;
}

/* Below this many energies a helper thread costs more than it saves. */
#define CT_SPLIT_MIN 64

void ew_continuum_dfdE_many(ew_continuum *c, size_t count, const double *photon_eV,
                            double *out) {
  /* the second half on a helper when one is worth it (the same bits: each energy is shot
     alone of the others) */
  ew_helper h = {0};
  size_t half = count;
  dfdE_part part;
  part.done = 0;
  if (count >= CT_SPLIT_MIN && ew_helper_count(2) > 0) {
    half = count / 2;
    part = (dfdE_part){*c, count - half, photon_eV + half, out + half, 0};
    if (!ew_helper_start(&h, dfdE_helper, &part)) half = count;
  }
  dfdE_run(c, half, photon_eV, out);
  ew_helper_join(&h);
  if (half < count && !part.done) dfdE_run(c, part.count, part.x, part.out);
}

double ew_continuum_dfdE(ew_continuum *c, double photon_eV) {
  double f;
  ew_continuum_dfdE_many(c, 1, &photon_eV, &f);
  return f;
}

/* 8-point Gauss–Legendre on [−1, 1] (abscissae and weights to 16 digits; M. Abramowitz,
 * I. A. Stegun, Handbook of Mathematical Functions (1964), Table 25.4) */
static const double GL_X[4] = {0.1834346424956498, 0.5255324099163290, 0.7966664774136267,
                               0.9602898564975363};
static const double GL_W[4] = {0.3626837833783620, 0.3137066661265559, 0.2223810344533745,
                               0.1012285362903763};

/* The quadrature of ∫ df/dE over photon energies [a, b], a the bottom of a lead's band (√
 * onset): in s = √(E − a), ∫ 2s df/dE ds on CT_PANELS panels growing geometrically from
 * s = 0; the CT_POINTS energies into x and their weights into wt (none when b <= a). */
#define CT_POINTS (8 * CT_PANELS)
static size_t piece_points(double a, double b, double *x, double *wt) {
  if (!(b > a)) return 0;
  double smax = sqrt(b - a), den = expm1(CT_GRADE);
  for (int k = 0; k < CT_PANELS; k++) {
    double s0 = smax * expm1(CT_GRADE * k / CT_PANELS) / den;
    double s1 = smax * expm1(CT_GRADE * (k + 1) / CT_PANELS) / den;
    double mid = 0.5 * (s0 + s1), half = 0.5 * (s1 - s0);
    for (int q = 0; q < 8; q++) {
      double s = mid + (q < 4 ? -GL_X[q] : GL_X[q - 4]) * half;
      wt[8 * k + q] = GL_W[q % 4] * half * 2.0 * s;
      x[8 * k + q] = a + s * s;
    }
  }
  return CT_POINTS;
}

double ew_continuum_oscillator_sum(ew_continuum *c) {
  const ew_grid *g = c->g;
  const size_t n = g->n;
  if (c->kane) kane_masses(c, fmin(c->V[0], c->V[1]));
  /* the leads' band tops V + 4t/h (with the masses at the threshold: Kane masses grow with
     E, so a lead closes a little earlier, where df/dE is long negligible) */
  double top[2] = {c->V[0] + 4.0 * EW_HB2M0_EVNM2 / (c->M[0] * g->h[0]),
                   c->V[1] + 4.0 * EW_HB2M0_EVNM2 / (c->M[n] * g->h[n])};
  double lo = fmin(c->V[0], c->V[1]) - c->Ei, mid = fmax(c->V[0], c->V[1]) - c->Ei;
  double hi = fmax(top[0], top[1]) - c->Ei;
  /* one piece, or two split at the upper lead's band bottom; all their energies in one call */
  double x[2 * CT_POINTS], wt[2 * CT_POINTS], f[2 * CT_POINTS];
  size_t m[2] = {0, 0};
  if (mid - lo < 1e-12) m[0] = piece_points(lo, hi, x, wt);
  else m[0] = piece_points(lo, mid, x, wt), m[1] = piece_points(mid, hi, x + m[0], wt + m[0]);
  ew_continuum_dfdE_many(c, m[0] + m[1], x, f);
  double sum[2] = {0.0, 0.0}; /* each piece summed in the order of its points */
  for (size_t p = 0; p < m[0]; p++) sum[0] += wt[p] * f[p];
  for (size_t p = 0; p < m[1]; p++) sum[1] += wt[m[0] + p] * f[m[0] + p];
  return sum[0] + sum[1];
}

double ew_continuum_bound_sum(const ew_result *r, size_t lower) {
  double f = 0.0;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind == EW_LINE_INTERSUBBAND && ln->lower == lower) f += ln->oscillator_strength;
  }
  return f;
}

ew_status ew_continuum_sum_rule_e1(const ew_result *r, double *bound, double *continuum,
                                   ew_error *err) {
  *bound = *continuum = NAN;
  size_t e1 = r->n_states;
  for (size_t i = 0; i < r->n_states && e1 == r->n_states; i++)
    if (r->states[i].band == EW_BAND_E && r->states[i].n == 1) e1 = i;
  if (e1 == r->n_states || !ew_continuum_applies(r, e1, NULL, 0)) return EW_OK;
  ew_continuum *c;
  ew_status rc = ew_continuum_new(r, e1, &c, err);
  if (rc != EW_OK) return rc;
  *bound = ew_continuum_bound_sum(r, e1);
  *continuum = ew_continuum_oscillator_sum(c);
  ew_continuum_free(c);
  return EW_OK;
}
