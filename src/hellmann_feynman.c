/* hellmann_feynman.c — level derivatives from the solved state (see hellmann_feynman.h).
 *
 * BenDaniel–Duke energy functional E = ∫ [K |ψ'|²/m + V |ψ|²] dz, K = ħ²/2m0 (m in m0).
 *
 * A parameter p of one layer (composition): first-order perturbation theory (Hellmann–
 * Feynman, H. Hellmann, Einführung in die Quantenchemie (1937); R. P. Feynman, Phys. Rev. 56,
 * 340 (1939)) gives dE/dp = ⟨ψ|∂H/∂p|ψ⟩ = ∫_layer [∂V/∂p ψ² − K (∂m/∂p)/m² ψ'²] dz
 *                         = ∫_layer [∂V/∂p ψ² − K (∂m/∂p) J²] dz,  J = ψ'/m.
 * On the grid this is evaluated in the solver's own quadrature (H_ii = K(1/M_i + 1/M_{i+1}) +
 * w_i V_i, M_c = ∫_c m dz): the potential term weights ψ_i² by the part of node i's dual cell
 * inside the layer, the kinetic term sums h_c J_c² over the layer's cells with the cell flux
 * J_c = (ψ_c − ψ_{c−1})/M_c; that is the exact derivative of the discrete eigenvalue.
 *
 * Moving an interface: perturbation theory cannot be applied to a step that moves (the change
 * of H is not small where it acts), so map the moved problem back by z = y + ε θ(y) with θ = 1
 * at the interface (a Hadamard shape derivative).  Then
 *   dE/dz0 = ∫ θ' [−K ψ'²/m + (V − E) ψ²] dy = F(z0−) − F(z0+),  F = −K ψ'²/m + (V − E)ψ²,
 * because F' = 0 inside each layer (use K(ψ'/m)' = (V − E)ψ).  With ψ and J continuous:
 *   dE/dz0 = (V_L − V_R) ψ(z0)² − K (m_L − m_R) J(z0)²,
 * L and R the materials left and right of z0 (z0 moving right turns R into L).  Sign check:
 * for small contrast m_L = m_R + δ this is −K δ J², the perturbation-theory value, and more
 * heavy material lowers the kinetic energy.  The hard wall at z = L (ψ = 0):
 *   dE/dL = F(L−) = −K m J(L)².
 * Growing layer k by dt moves every interface after it and the wall by dt: dE/dt is the sum.
 * J at an interface node from the two adjacent cell fluxes (cell midpoints), each moved to
 * the node with J' = (V − E)ψ/K, so the estimate is second order in h. */
#include "hellmann_feynman.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "grid.h"
#include "nonparabolic.h"
#include "solve.h"
#include "stack.h"

static const double K_EVNM2 = EW_HB2M0_EVNM2; /* ħ²/2m0 = 0.0380998 eV nm² (CODATA 2018) */

static double wf_pot(const ew_layer *ly, ew_band b) {
  double e = ew_layer_edge(ly, b);
  return b == EW_BAND_E ? e : -e; /* holes: positive-mass particles in −Ev (solve.c) */
}

static size_t node_at(const ew_grid *g, double z) {
  size_t lo = 0, hi = g->n; /* first node with g->z >= z − tiny */
  double eps = 1e-9 * (1.0 + g->length_nm);
  while (lo < hi) {
    size_t mid = (lo + hi) / 2;
    if (g->z[mid] < z - eps) lo = mid + 1;
    else hi = mid;
  }
  return lo < g->n && fabs(g->z[lo] - z) <= eps ? lo : SIZE_MAX;
}

/* Hellmann–Feynman needs potentials constant in each layer (the F' = 0 step above): no
 * applied field, no graded layer.  Otherwise the derivatives are not offered (NaN). */
static int hf_applies(const ew_stack *st) {
  if (st->field_kV_cm != 0.0) return 0;
  for (size_t k = 0; k < st->n_layers; k++)
    if (st->layers[k].grade != EW_GRADE_NONE) return 0;
  return 1;
}

/* Energy-dependent (Kane) electron mass: the level solves E = λ(H(E)), so
 *   dE/dp = (∂λ/∂p at fixed E) / (1 − ∂λ/∂E)
 * (implicit differentiation of the fixed point, ∂λ/∂E from ew_nonparabolic_slope; the masses
 * at fixed E enter every formula above). */
typedef struct {
  ew_band b;
  double sign, E;  /* E on the positive-mass scale (holes: −E) */
  int np;          /* Kane electrons */
  const double *psi, *M; /* the state and the cell mass integrals of its pencil */
  double *own;     /* storage of M when energy-dependent */
  double denom;    /* 1 − ∂λ/∂E (1 when parabolic) */
} hf_state;

static int hf_begin(const ew_result *r, size_t s, hf_state *h) {
  const ew_grid *g = r->grid;
  const ew_state *q = &r->states[s];
  size_t n = g->n;
  memset(h, 0, sizeof *h);
  if (!hf_applies(r->stack)) return 0;
  h->b = q->band;
  h->sign = h->b == EW_BAND_E ? 1.0 : -1.0;
  h->E = h->sign * q->energy_eV;
  h->psi = r->psi + s * n;
  h->np = h->b == EW_BAND_E && r->nonparabolic;
  h->M = g->cell_mass[h->b];
  h->denom = 1.0;
  if (!h->np) return 1;
  h->own = malloc(3 * (n + 1) * sizeof *h->own);
  if (!h->own) return 0;
  double dl = ew_nonparabolic_slope(r->stack, g, h->E, h->psi, h->own);
  if (isnan(dl)) {
    free(h->own);
    h->own = NULL;
    return 0;
  }
  h->denom = 1.0 - dl;
  h->M = h->own; /* the cell masses at E */
  return 1;
}

static void hf_end(hf_state *h) { free(h->own); }

/* band edge / growth-axis mass of band b for a layer with the given band parameters (through
 * ew_layer_edge/ew_layer_mass so that the mapping stays the grid's) */
static double bands_edge(const ew_layer *ly, const ew_bands *bb, ew_band b) {
  ew_layer tmp = *ly;
  tmp.bands = *bb;
  return ew_layer_edge(&tmp, b);
}

static double mass_at(const hf_state *h, const ew_layer *ly, const ew_bands *bb) {
  if (h->np) return ew_kane_mass(bb, h->E - bands_edge(ly, bb, EW_BAND_E));
  ew_layer tmp = *ly;
  tmp.bands = *bb;
  return ew_layer_mass(&tmp, h->b);
}

double ew_wf_hf_dthickness(const ew_result *r, size_t s, size_t k) {
  hf_state h;
  if (!hf_begin(r, s, &h)) return NAN;
  const ew_grid *g = r->grid;
  const ew_stack *st = r->stack;
  const double *psi = h.psi, K = K_EVNM2, E = h.E;
  size_t n = g->n;
  ew_band b = h.b;
  double d = 0.0;
  for (size_t j = k; j + 1 < st->n_layers; j++) {
    size_t i = node_at(g, st->layers[j + 1].z_start_nm);
    if (i == SIZE_MAX) { /* interfaces are nodes on the solver's layered grid */
      hf_end(&h);
      return NAN;
    }
    const ew_layer *L = &st->layers[j], *R = &st->layers[j + 1];
    double VL = wf_pot(L, b), VR = wf_pot(R, b);
    double mL = mass_at(&h, L, &L->bands), mR = mass_at(&h, R, &R->bands);
    double p0 = psi[i];
    double Jl = (p0 - (i ? psi[i - 1] : 0.0)) / h.M[i];
    double Jr = ((i + 1 < n ? psi[i + 1] : 0.0) - p0) / h.M[i + 1];
    double J = 0.5 * (Jl + 0.5 * g->h[i] * (VL - E) * p0 / K + Jr -
                      0.5 * g->h[i + 1] * (VR - E) * p0 / K);
    d += (VL - VR) * p0 * p0 - K * (mL - mR) * J * J;
  }
  const ew_layer *last = &st->layers[st->n_layers - 1];
  double Jw = (0.0 - psi[n - 1]) / h.M[n];
  Jw += 0.5 * g->h[n] * (wf_pot(last, b) - E) * (0.5 * psi[n - 1]) / K;
  d += -K * mass_at(&h, last, &last->bands) * Jw * Jw;
  d = h.sign * d / h.denom; /* back to the reported (electron) energy scale */
  hf_end(&h);
  return d;
}

double ew_wf_hf_dparam(const ew_result *r, size_t s, size_t k, const ew_bands *lo,
                       const ew_bands *hi, double span) {
  hf_state h;
  if (!(span > 0) || !hf_begin(r, s, &h)) return NAN;
  const ew_grid *g = r->grid;
  const ew_layer *ly = &r->stack->layers[k];
  ew_band b = h.b;
  double dedge = (bands_edge(ly, hi, b) - bands_edge(ly, lo, b)) / span;
  double dV = b == EW_BAND_E ? dedge : -dedge;
  double dm = (mass_at(&h, ly, hi) - mass_at(&h, ly, lo)) / span; /* at fixed E */
  const double *psi = h.psi;
  size_t n = g->n;
  double a = ly->z_start_nm, z1 = ly->z_start_nm + ly->thickness_nm;
  double pot = 0.0, kin = 0.0;
  for (size_t c = 0; c <= n; c++) {
    double za = c ? g->z[c - 1] : 0.0, zb = c < n ? g->z[c] : g->length_nm, mid = 0.5 * (za + zb);
    if (mid < a || mid > z1) continue;
    double pl = c ? psi[c - 1] : 0.0, pr = c < n ? psi[c] : 0.0;
    /* half of the cell belongs to each end node's dual cell */
    pot += 0.5 * g->h[c] * (pl * pl + pr * pr);
    double J = (pr - pl) / h.M[c];
    kin += g->h[c] * J * J;
  }
  double d = h.sign * (dV * pot - K_EVNM2 * dm * kin) / h.denom;
  hf_end(&h);
  return d;
}

