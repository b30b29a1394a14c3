/* poisson.c — the electrostatics of doped stacks and the Poisson update of the
 * self-consistent loop (self_consistent.c; see poisson.h).
 *
 * Equations (SI, then in the units of this file: z in nm, energies in eV, densities nm^-3)
 *   Poisson:   d/dz (ε0 εr(z) dφ/dz) = −ρ(z),   ρ = e (p − n + N_D⁺ − N_A⁻).
 *   With U = −eφ (the potential energy of an electron, added to every band edge):
 *              d/dz (εr dU/dz) = (e/ε0) (p − n + N_D⁺ − N_A⁻);
 *   e/ε0 = 1.602e-19 C / 8.854e-12 F/m = 1.8095e-8 V m; a density of N nm^-3 is N·1e27 m^-3
 *   and d²/dz² in nm^-2 is 1e-18 of the one in m^-2, so e/ε0 → (e/ε0)·1e9 = 18.095 V nm
 *   (POISSON_C below).
 * Discretisation: box integration on the grid's nodes (the finite-volume form of the same
 * flux continuity BenDaniel–Duke uses for ψ): the flux of cell c (between nodes c−1 and c) is
 * F_c = εr_c (U_c − U_{c−1}) / h_c and node i's box [z_i − h_i/2, z_i + h_{i+1}/2] (extended
 * to the face at a charge-neutral, flux-free end) holds the charge q_i:
 *              F_{i+1} − F_i = (e/ε0) q_i,   q_i = ∫_box (p − n + N_D⁺ − N_A⁻) dz.
 * Every cell lies inside one layer (interfaces are nodes), so εr_c is that layer's ew_bands
 * eps_r and the discrete Gauss law holds exactly between any two cells.
 *
 * Free carriers.
 *  - Subbands (2D): n_i = (m∥ kT / (π ħ²)) ln(1 + exp((E_F − E_i)/kT)) distributed as |ψ_i|²
 *    (T. Ando, A. B. Fowler, F. Stern, Rev. Mod. Phys. 54, 437 (1982), the 2D density of
 *    states m∥/(πħ²) with spin); holes likewise with E_i − E_F.  m∥: the subband's in-plane
 *    mass at k∥ = 0 (ew_state.inplane_mass: Kane electrons get heavier with confinement and
 *    barrier penetration; holes the layers' Luttinger in-plane masses weighted by |ψ|²).
 *  - Continuum (3D, Thomas–Fermi): n = N_c ℱ_{1/2}((E_F − max(Ec + U, W_e)) / kT),
 *    N_c = 2 (m kT / (2π ħ²))^{3/2}, with W_e the top of the electrons' bound window: the
 *    continuum is the states above the confined ones, and in a thick doped contact (where
 *    Ec + U reaches W_e) this is the bulk density.  Inside a well the density of continuum
 *    states is taken from W_e up (an approximation: the local √(E − Ec) density of states
 *    above W_e is replaced by √(E − W_e)).  Holes: heavy and light separately below their
 *    windows, each with its bulk density-of-states mass (ew_hole_dos_masses: the spherical
 *    1/(γ1 ∓ 2γ̄) of alloy.c; the subbands above keep the in-plane masses).
 *  - ℱ_{1/2} and its derivative ℱ_{−1/2}: the rational approximations of H. M. Antia,
 *    Astrophys. J. Suppl. 84, 101 (1993) (relative error ~1e-12); tests/test_poisson.c
 *    checks both against quadrature and the analytic limits (5e-12).
 * Doping: uniform N_D, N_A per layer; delta layers (sheets) at the layer centre on the nearest
 * node, as sheet / box length.  Incomplete ionisation when the ionisation energy E_d, E_a > 0:
 *   N_D⁺ = N_D / (1 + 2 exp((E_F − E_D)/kT)),  E_D = Ec + U − E_d  (spin degeneracy 2),
 *   N_A⁻ = N_A / (1 + 4 exp((E_A − E_F)/kT)),  E_A = Ev + U + E_a  (degeneracy 4, heavy and
 *   light holes), Ev the upper valence edge (S. M. Sze, Physics of Semiconductor Devices,
 *   2nd ed. (Wiley, 1981), ch. 1, from memory); E_d = E_a = 0: fully ionised.
 * Boundary conditions (U at the faces z = 0 and z = L; one equilibrium Fermi level unless
 * biased):
 *  - default: both ends charge-neutral and flat (dU/dz = 0: no flux through the faces); the
 *    Fermi level is then set by global neutrality (the discrete sum of all q_i is zero).
 *  - surface = { barrier = B; }: Dirichlet at the first face, Ec(0) + U(0) − E_F = B; the
 *    last face flat and neutral.
 *  - bias = V (volts, V(last face) − V(first face)): both faces are neutral ohmic contacts
 *    (Dirichlet: U at each face makes the face's bulk charge-neutral at its own Fermi level)
 *    with E_F(last) = E_F(first) − eV: a positive V lowers the electron energies of the last
 *    face.  In between, the quasi-Fermi level is interpolated linearly in z (no current is
 *    computed): continuum carriers and dopants use E_F(z) at their node, a subband uses E_F
 *    at its centroid ⟨z⟩.
 * The gauge: (U, E_F) → (U + c, E_F + c) changes nothing physical (the Schrödinger pass's
 * window includes U and moves with it); it fixes the energy reference.  After every Poisson
 * step c is chosen so that the majority band's bound window with U equals its window without
 * U, by the one rule of bound.c (ew_bound_window_rule: the outer faces, which stand for the
 * semi-infinite material; in a field the outer layers' highest points): energies are then on
 * the scale where the outer material sits at its catalogue (flat-band) edge.
 *
 * Outer loop: the predictor–corrector of A. Trellakis, A. T. Galick, A. Pacelli,
 * U. Ravaioli, J. Appl. Phys. 81, 7880 (1997).  The Poisson step is solved for the new U with
 * the quantum density predicted from the last Schrödinger solve (at U_S) by shifting each
 * subband locally with the potential change, E_i → E_i + (U(z) − U_S(z)) in the term weighted
 * by |ψ_i(z)|²: the density stays a local function of U, so the Jacobian of each Newton
 * iteration is tridiagonal (solved by newton_lu below, SuperLU's arithmetic without its set-up;
 * ew_sparse_tridiag_solve, SuperLU, where a pivot would be exchanged).  Then the
 * Schrödinger equation is solved again at the new U.  Converged when max|ΔU| < 1e-6 eV
 * between outer iterations, at most 100 of them; each Newton solve is damped (steps of at
 * most 0.1 eV per node, halved while the residual norm grows) and bounded.
 *
 * Depolarisation (collective) shift of an intersubband line i → j (Ando, Fowler & Stern
 * 1982, section on intersubband optical absorption; M. Helm, Semicond. Semimet. 62, 1 (2000)):
 *   Ẽ² = E² (1 + α),  α = 2 e² (N_i − N_j) S / (ε0 εr E),  S = ∫ dz [∫_0^z ψ_j ψ_i dz']²,
 * with N_i − N_j the population difference of the two subbands (N_i, the sheet density of
 * e1, when the upper subband is empty) and εr of the layer holding the lower state.  Units:
 * e²/ε0 = e·(e/ε0) = 18.095 eV nm, N in nm^-2, S in nm, E in eV: α = 2·18.095·N·S/(εr E) is
 * dimensionless.  The exciton-like (final-state) correction is left out.
 */
#include "poisson.h"
#include "polarization.h"

#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "bound.h"
#include "eigen.h"
#include "error.h"
#include "hole_dos_kp.h"

#define NM3_PER_CM3 1e-21 /* 1 cm^-3 in nm^-3 */
#define NM2_PER_CM2 1e-14 /* 1 cm^-2 in nm^-2 */
/* e/ε0 in V nm, see the header comment: d/dz(εr dU/dz) = POISSON_C × (density in nm^-3) */
#define POISSON_C (EW_E_C / EW_EPS0_FM * 1e9)
/* e²/ε0 in eV nm (numerically the same as POISSON_C): the depolarisation integral's scale */
#define E2_EPS0_EVNM (EW_E_C / EW_EPS0_FM * 1e9)
#define NEWTON_STEP_MAX_EV 0.1
#define NEWTON_TOL_EV 1e-12

/* ---- Fermi–Dirac integral of order 1/2 ------------------------------------------------- */
/* H. M. Antia, Astrophys. J. Suppl. 84, 101 (1993), tables for j = 1/2 and j = −1/2: for the
 * unnormalised F_j(η) = ∫0^∞ x^j dx / (1 + e^(x−η)),
 *   η < 2:  F_j = e^η P(e^η) / Q(e^η),      η ≥ 2:  F_j = η^(j+1) P(η^−2) / Q(η^−2),
 * P monic, relative error 5.5e-13 (j = 1/2) and 1.2e-12 (j = −1/2) by the paper's table.
 * ℱ = F_{1/2} / Γ(3/2), and dℱ/dη = F_{−1/2} / (2 Γ(3/2)) = F_{−1/2} / √π (dF_j/dη = j F_{j−1}).
 * Coefficients lowest order first; the leading 1 of each P is implicit. */
static const double fdp_lo_p[7] = {5.75834152995465e6, 1.30964880355883e7, 1.07608632249013e7,
                                   3.93536421893014e6, 6.42493233715640e5, 4.16031909245777e4,
                                   7.77238678539648e2};
static const double fdp_lo_q[8] = {6.49759261942269e6, 1.70750501625775e7, 1.69288134856160e7,
                                   7.95192647756086e6, 1.83167424554505e6, 1.95155948326832e5,
                                   8.17922106644547e3, 9.02129136642157e1};
static const double fdp_hi_p[10] = {4.85378381173415e-14, 1.64429113030738e-11,
                                    3.76794942277806e-9,  4.69233883900644e-7,
                                    3.40679845803144e-5,  1.32212995937796e-3,
                                    2.60768398973913e-2,  2.48653216266227e-1,
                                    1.08037861921488e0,   1.91247528779676e0};
static const double fdp_hi_q[12] = {7.28067571760518e-14, 2.45745452167585e-11,
                                    5.62152894375277e-9,  6.96888634549649e-7,
                                    5.02360015186394e-5,  1.92040136756592e-3,
                                    3.66887808002874e-2,  3.24095226486468e-1,
                                    1.16434871200131e0,   1.34981244060549e0,
                                    2.01311836975930e-1,  -2.14562434782759e-2};
static const double fdm_lo_p[7] = {1.71446374704454e7, 3.88148302324068e7, 3.16743385304962e7,
                                   1.14587609192151e7, 1.83696370756153e6, 1.14980998186874e5,
                                   1.98276889924768e3};
static const double fdm_lo_q[8] = {9.67282587452899e6, 2.87386436731785e7, 3.26070130734158e7,
                                   1.77657027846367e7, 4.81648022267831e6, 6.13709569333207e5,
                                   3.13595854332114e4, 4.35061725080755e2};
static const double fdm_hi_p[11] = {-4.46620341924942e-15, -1.58654991146236e-12,
                                    -4.44467627042232e-10, -6.84738791621745e-8,
                                    -6.64932238528105e-6,  -3.69976170193942e-4,
                                    -1.12295393687006e-2,  -1.60926102124442e-1,
                                    -8.52408612877447e-1,  -7.45519953763928e-1,
                                    2.98435207466372e0};
static const double fdm_hi_q[12] = {-2.23310170962369e-15, -7.94193282071464e-13,
                                    -2.22564376956228e-10, -3.43299431079845e-8,
                                    -3.33919612678907e-6,  -1.86432212187088e-4,
                                    -5.69764436880529e-3,  -8.34904593067194e-2,
                                    -4.78770844009440e-1,  -4.99759250374148e-1,
                                    1.86795964993052e0,    4.16485970495288e-1};

/* P(x) / Q(x) with P monic of degree np (np coefficients given) and Q of degree nq − 1, by
 * Horner's rule written out for the three (np, nq) of the tables: the operations of the loop
 *   num = 1; for i = np − 1 … 0: num = num·x + p[i];  den = q[nq − 1]; for i = nq − 2 … 0: …
 * in the same order (the same bits) without the loop's counting */
static double ratio_7_8(const double *p, const double *q, double x) {
  double num = 1.0, den = q[7];
  num = num * x + p[6]; num = num * x + p[5]; num = num * x + p[4]; num = num * x + p[3];
  num = num * x + p[2]; num = num * x + p[1]; num = num * x + p[0];
  den = den * x + q[6]; den = den * x + q[5]; den = den * x + q[4]; den = den * x + q[3];
  den = den * x + q[2]; den = den * x + q[1]; den = den * x + q[0];
  return num / den;
}
static double ratio_10_12(const double *p, const double *q, double x) {
  double num = 1.0, den = q[11];
  num = num * x + p[9]; num = num * x + p[8]; num = num * x + p[7]; num = num * x + p[6];
  num = num * x + p[5]; num = num * x + p[4]; num = num * x + p[3]; num = num * x + p[2];
  num = num * x + p[1]; num = num * x + p[0];
  den = den * x + q[10]; den = den * x + q[9]; den = den * x + q[8]; den = den * x + q[7];
  den = den * x + q[6]; den = den * x + q[5]; den = den * x + q[4]; den = den * x + q[3];
  den = den * x + q[2]; den = den * x + q[1]; den = den * x + q[0];
  return num / den;
}
static double ratio_11_12(const double *p, const double *q, double x) {
  double num = 1.0, den = q[11];
  num = num * x + p[10]; num = num * x + p[9]; num = num * x + p[8]; num = num * x + p[7];
  num = num * x + p[6]; num = num * x + p[5]; num = num * x + p[4]; num = num * x + p[3];
  num = num * x + p[2]; num = num * x + p[1]; num = num * x + p[0];
  den = den * x + q[10]; den = den * x + q[9]; den = den * x + q[8]; den = den * x + q[7];
  den = den * x + q[6]; den = den * x + q[5]; den = den * x + q[4]; den = den * x + q[3];
  den = den * x + q[2]; den = den * x + q[1]; den = den * x + q[0];
  return num / den;
}

#define SQRT_PI 1.7724538509055160273 /* √π = 2 Γ(3/2) */
#define FD_EXP_ONLY -37.0 /* e^η / 2^{3/2} < 1e-16 below (the series ℱ = Σ (−1)^{k+1} e^{kη} k^{−3/2}) */

double ew_fd_half(double eta, double *deriv) {
  double F, dF = 0.0;
  if (eta < FD_EXP_ONLY) { /* ℱ = e^η (1 − e^η/2^{3/2} + …): the correction is below 1e-16 */
    F = exp(eta);
    if (deriv) *deriv = F;
    return F;
  }
  if (eta < 2.0) {
    double x = exp(eta);
    F = x * ratio_7_8(fdp_lo_p, fdp_lo_q, x);
    if (deriv) dF = x * ratio_7_8(fdm_lo_p, fdm_lo_q, x);
  } else {
    double x = 1.0 / (eta * eta), r = sqrt(eta);
    F = eta * r * ratio_10_12(fdp_hi_p, fdp_hi_q, x);
    if (deriv) dF = r * ratio_11_12(fdm_hi_p, fdm_hi_q, x);
  }
  if (deriv) *deriv = dF / SQRT_PI;
  return F * (2.0 / SQRT_PI);
}

/* kT ln(1 + e^x) / kT = ln(1 + e^x), without overflow */
static double log1pexp(double x) { return x > 0 ? x + log1p(exp(-x)) : log1p(exp(x)); }
/* fmax(a, v) for a that is not NaN (a NaN v leaves a), without the library call */
static inline double max_of(double a, double v) { return v > a ? v : a; }

/* ln(1 + e^x) and its derivative 1 / (1 + e^−x) together: the bits of log1pexp(x) and
 * occ(−x, 1.0), which take the same exponential (e^−|x|), computed once */
static void log1pexp_deriv(double x, double *lx, double *fx) {
  if (x > 0) {
    double e = exp(-x);
    *lx = x + log1p(e);
    *fx = 1.0 / (1.0 + e);
  } else if (x < 0) {
    double e = exp(x);
    *lx = log1p(e);
    *fx = e / (e + 1.0);
  } else { /* 0 (either sign) or NaN: as the two separately */
    *lx = log1p(exp(x));
    *fx = 1.0 / (1.0 + exp(-x));
  }
}
/* 1 / (1 + g e^x), without overflow */
static double occ(double x, double g) {
  if (x > 0) {
    double e = exp(-x);
    return e / (e + g);
  }
  return 1.0 / (1.0 + g * exp(x));
}

/* ---- the static model: everything that does not change with U ------------------------- */
typedef struct {
  double len;             /* length of this half of the box, nm */
  double z;               /* position (for the quasi-Fermi level), nm */
  double Ec, Evh, Evl, Evtop; /* edges without U (with grading and the applied field), eV */
  double Nc, Nvh, Nvl;    /* effective densities of states at T, nm^-3 */
  double ND, NA;          /* nm^-3 */
  double Ed, Ea;          /* ionisation energies, eV (0: fully ionised) */
  int fresh;              /* 0: Ec … Ea those of the half before it, bit for bit, and that half
                             has a length (its half_rho may stand for this one: bulk_charges) */
} half;

typedef struct {
  size_t node;
  double dens;            /* nm^-2 */
  double Ec, Evtop;       /* edges at the layer centre (without U) */
  double eion;
  int donor;
} sheet;

typedef struct {
  const ew_stack *st;
  size_t n;
  const double *z, *w;
  double L, kT;
  half *hc;               /* [2n]: left (2i) and right (2i + 1) half of node i's box */
  double *ec;             /* [n+1] εr_c / h_c of cell c */
  double *box;            /* [n] box length */
  sheet *sh;
  size_t n_sheets;
  double *bound;          /* [n] fixed interface charges of a wurtzite stack, nm^-2 (polarization.h) */
  int dir_left, dir_right;    /* Dirichlet faces */
  double off_left, off_right; /* U(face) − E_F(face) for the Dirichlet faces */
  double bias_eV;             /* E_F(last) = E_F(first) − bias_eV */
  int holes_major;            /* gauge reference band: 0 electrons, 1 heavy holes */
  ew_subband_dos_fn dos_fn;   /* non-parabolic hole subbands (hole_dos_kp.h), or NULL */
  const void *dos_ctx;
} model;

/* states of the last Schrödinger solve, as the predictor needs them */
typedef struct {
  int hole;
  double E;               /* eV */
  double D;               /* m∥ kT / (π ħ²), nm^-2 */
  double zc;              /* centroid ⟨z⟩, nm */
  double chi;             /* weight of the state in the hand-over to the continuum (blend) */
  const double *psi;      /* [n] */
  const ew_sheet_table *tab; /* k·p density of states (D = 1 nm^-2 then), or NULL */
} qstate;

typedef struct {
  size_t ns;
  qstate *s;
  const double *Us;       /* [n] U of that solve */
  double W[EW_BAND_COUNT];/* bound windows (electron energy scale): e from below, holes above */
} snap;

static size_t layer_at(const ew_stack *st, double z) {
  size_t k = 0;
  while (k + 1 < st->n_layers && z >= st->layers[k + 1].z_start_nm) k++;
  return k;
}

static void bands_at(const ew_stack *st, double z, size_t *k, ew_bands *b) {
  *k = layer_at(st, z);
  const ew_layer *ly = &st->layers[*k];
  double f = (z - ly->z_start_nm) / ly->thickness_nm;
  ew_layer_bands_at(ly, fmin(fmax(f, 0.0), 1.0), b);
}

/* effective density of states 2 (m kT / (2π ħ²))^{3/2} in nm^-3; ħ²/m0 = 2 EW_HB2M0_EVNM2 */
static double nc_of(double m, double kT) {
  return 2.0 * pow(m * kT / (4.0 * EW_PI * EW_HB2M0_EVNM2), 1.5);
}

void ew_hole_dos_masses(const ew_bands *b, double mdos[2]) {
  /* the spherical density-of-states masses of alloy.c where the catalogue has γ3; else (user
     materials) the density-of-states mass of an ellipsoid with the [001] and in-plane masses,
     (m_z m∥²)^{1/3} (common practice) */
  double mz[2] = {b->mhh_z, b->mlh_z}, mp[2] = {b->mhh_par, b->mlh_par};
  double md[2] = {b->mhh_dos, b->mlh_dos};
  for (int k = 0; k < 2; k++) {
    double par = mp[k] > 0 ? mp[k] : mz[k];
    mdos[k] = md[k] > 0 ? md[k] : cbrt(mz[k] * par * par);
  }
}

double ew_valence_nv_cm3(const ew_bands *b, double T_K) {
  double mdos[2];
  ew_hole_dos_masses(b, mdos);
  double kT = EW_KB_EVK * T_K;
  return (nc_of(mdos[0], kT) + nc_of(mdos[1], kT)) / NM3_PER_CM3;
}
/* 2D density of states times kT: m kT / (π ħ²) in nm^-2 */
static double d2_of(double m, double kT) { return m * kT / (2.0 * EW_PI * EW_HB2M0_EVNM2); }

static double fermi_at(const model *m, double EF0, double z) {
  return m->bias_eV != 0.0 ? EF0 - m->bias_eV * z / m->L : EF0;
}

static int same_bits(double a, double b) { return memcmp(&a, &b, sizeof a) == 0; }

/* nc_of of the last mass given in each of a few slots (the halves of one layer share their
 * masses: one pow for the layer, the same bits) */
typedef struct {
  int valid[3];
  double mass[3], N[3];
} nc_memo;
static double nc_memo_of(nc_memo *c, int slot, double mass, double kT) {
  if (!c) return nc_of(mass, kT);
  if (!c->valid[slot] || !same_bits(mass, c->mass[slot]))
    c->valid[slot] = 1, c->mass[slot] = mass, c->N[slot] = nc_of(mass, kT);
  return c->N[slot];
}

/* the half [a, b] (c: see nc_memo; may be NULL) */
static void fill_half(const model *m, half *h, double a, double b, nc_memo *c) {
  const ew_stack *st = m->st;
  double mid = 0.5 * (a + b);
  size_t k;
  ew_bands bb;
  bands_at(st, mid, &k, &bb);
  const ew_layer *ly = &st->layers[k];
  h->len = b - a;
  h->Ec = ew_stack_edge_at(st, EW_BAND_E, mid);
  h->Evh = ew_stack_edge_at(st, EW_BAND_HH, mid);
  h->Evl = ew_stack_edge_at(st, EW_BAND_LH, mid);
  h->Evtop = fmax(h->Evh, h->Evl);
  h->Nc = nc_memo_of(c, 0, bb.me, m->kT);
  double mdos[2];
  ew_hole_dos_masses(&bb, mdos);
  h->Nvh = nc_memo_of(c, 1, mdos[0], m->kT);
  h->Nvl = nc_memo_of(c, 2, mdos[1], m->kT);
  h->ND = ly->donors_cm3 * NM3_PER_CM3;
  h->NA = ly->acceptors_cm3 * NM3_PER_CM3;
  h->Ed = ly->donor_energy_eV;
  h->Ea = ly->acceptor_energy_eV;
}

/* Hand-over between subbands and continuum.  A Schrödinger pass returns the states below a
 * sharp window top W; a state crossing W as U changes would add or remove its whole density at
 * once, and the outer iteration could cycle between the two sides for ever.  So the energy
 * axis is shared over the interval δ = EW_SP_BLEND_KT·kT below W (above, for holes) by a
 * partition of unity: a state at depth x = (W − E)/δ counts with χ(x) = 3x² − 2x³ (0 at the
 * window, 1 from δ below it on), and the continuum density of states at the same energies with
 * 1 − χ.  With n(t) the continuum density above a threshold t, the continuum part is then
 * ∫ (1 − χ) (−dn/dE) dE = ∫_0^1 χ'(x) n(W − δx) dx (integration by parts, χ' = 6x(1 − x)),
 * taken by 4-point Gauss–Legendre in x (exact for the weight; common practice). */
#define BLEND_POINTS 4
static const double blend_x[BLEND_POINTS] = {0.0694318442029737, 0.3300094782075719,
                                             0.6699905217924281, 0.9305681557970263};
/* Gauss–Legendre weights on [0, 1] times χ'(x) = 6x(1 − x) at the nodes */
static const double blend_w[BLEND_POINTS] = {
    0.1739274225687269 * 6 * 0.0694318442029737 * (1 - 0.0694318442029737),
    0.3260725774312731 * 6 * 0.3300094782075719 * (1 - 0.3300094782075719),
    0.3260725774312731 * 6 * 0.6699905217924281 * (1 - 0.6699905217924281),
    0.1739274225687269 * 6 * 0.9305681557970263 * (1 - 0.9305681557970263)};
static double smoothstep(double x) { return x <= 0 ? 0.0 : x >= 1 ? 1.0 : x * x * (3.0 - 2.0 * x); }

/* ℱ(η_k) and dℱ/dη at the hand-over points k = 0 … 3 of one band; where the band edge clips
 * the thresholds, points share one argument: an argument equal to the one before reuses its
 * values (the same bits as evaluating it again) */
static void fd_blend(const double eta[BLEND_POINTS], double F[BLEND_POINTS],
                     double dF[BLEND_POINTS]) {
  F[0] = ew_fd_half(eta[0], &dF[0]);
  for (int k = 1; k < BLEND_POINTS; k++) {
    if (eta[k] != eta[k - 1]) F[k] = ew_fd_half(eta[k], &dF[k]);
    else F[k] = F[k - 1], dF[k] = dF[k - 1];
  }
}

/* Charge density p − n + N_D⁺ − N_A⁻ (nm^-3) of a half at potential U, Fermi level EF and
 * continuum windows W[0..2] (electron energies, already shifted with the local U − U_S) with
 * the hand-over width W[3] (NULL: the whole bulk bands), with d/dU; parts[4] (may be NULL)
 * receives n, p, N_D⁺, N_A⁻. */
static double half_rho(const half *h, double U, double EF, const double *W, double kT,
                       double *drho, double parts[4]) {
  double dF;
  double ec = h->Ec + U, n = 0.0, dn = 0.0, p = 0.0, dp = 0.0;
  const double ev[2] = {h->Evh + U, h->Evl + U}, nv[2] = {h->Nvh, h->Nvl};
  if (!W) { /* the whole bulk bands */
    n = h->Nc * ew_fd_half((EF - ec) / kT, &dF);
    dn = -h->Nc * dF / kT;
    for (int b = 0; b < 2; b++) {
      p += nv[b] * ew_fd_half((ev[b] - EF) / kT, &dF);
      dp += nv[b] * dF / kT;
    }
  } else {
    /* electrons above max(Ec + U, t), holes below min(Ev + U, t), the threshold t spread
       over the hand-over interval by the weight χ'(x) (see blend) */
    double eta[3][BLEND_POINTS], F[3][BLEND_POINTS], dF3[3][BLEND_POINTS];
    for (int k = 0; k < BLEND_POINTS; k++) {
      double x = blend_x[k];
      double t = W[EW_BAND_E] - W[EW_BAND_COUNT] * x;
      eta[0][k] = (EF - (t > ec ? t : ec)) / kT;
      for (int b = 0; b < 2; b++) {
        double th = W[1 + b] + W[EW_BAND_COUNT] * x;
        eta[1 + b][k] = ((th < ev[b] ? th : ev[b]) - EF) / kT;
      }
    }
    for (int b = 0; b < 3; b++) fd_blend(eta[b], F[b], dF3[b]);
    for (int k = 0; k < BLEND_POINTS; k++) {
      double wt = blend_w[k];
      n += wt * h->Nc * F[0][k];
      dn -= wt * h->Nc * dF3[0][k] / kT; /* the thresholds move with U as well (see charges) */
      for (int b = 0; b < 2; b++) {
        p += wt * nv[b] * F[1 + b][k];
        dp += wt * nv[b] * dF3[1 + b][k] / kT;
      }
    }
  }
  double nd = 0.0, dnd = 0.0, na = 0.0, dna = 0.0;
  if (h->ND > 0) {
    double g = h->Ed > 0 ? occ((EF - (ec - h->Ed)) / kT, 2.0) : 1.0;
    nd = h->ND * g;
    dnd = h->Ed > 0 ? h->ND * g * (1.0 - g) / kT : 0.0;
  }
  if (h->NA > 0) {
    double g = h->Ea > 0 ? occ((h->Evtop + U + h->Ea - EF) / kT, 4.0) : 1.0;
    na = h->NA * g;
    dna = h->Ea > 0 ? -h->NA * g * (1.0 - g) / kT : 0.0;
  }
  if (drho) *drho = dp - dn + dnd - dna;
  if (parts) parts[0] = n, parts[1] = p, parts[2] = nd, parts[3] = na;
  return p - n + nd - na;
}

/* The bulk part of the box charges: continuum carriers and uniform dopants of both halves of
 * every node's box (q, dq, parts as in charges).
 * The last half_rho is remembered with its inputs: a half that is not fresh (its static inputs
 * those of the half before it) at bit for bit the same U, E_F and windows gets the same bits
 * without a second evaluation.  The second half of a node inside one layer always does (the
 * node's own inputs); neighbouring nodes of a layer do at the same U (a flat start, e.g. every
 * step of the first guess's bisection).  A half without length is skipped and makes the next
 * one fresh.  The model's scalars are copied to locals (the stores to q could alias them). */
static void bulk_charges(const model *m, const snap *s, double EF0, const double *U, double *q,
                         double *dq, double *const parts[4]) {
  const double kT = m->kT, bias = m->bias_eV, L = m->L;
  const double *z = m->z;
  const half *hc = m->hc;
  const size_t n = m->n;
  double lU = 0.0, lEF = 0.0, lW[EW_BAND_COUNT] = {0}; /* inputs of the last evaluation */
  double rho = 0.0, d = 0.0, pp[4] = {0, 0, 0, 0};
  for (size_t i = 0; i < n; i++) {
    double EF = bias != 0.0 ? EF0 - bias * z[i] / L : EF0, qi = 0.0, di = 0.0; /* fermi_at */
    double pa[4] = {0, 0, 0, 0};
    /* the continuum starts at the bound window; like the subbands it is predicted to move
       with the local potential change (so the step is gauge-covariant) */
    double Wl[EW_BAND_COUNT + 1];
    if (s) {
      for (int b = 0; b < EW_BAND_COUNT; b++) Wl[b] = s->W[b] + U[i] - s->Us[i];
      Wl[EW_BAND_COUNT] = EW_SP_BLEND_KT * kT;
    }
    for (int k = 0; k < 2; k++) {
      const half *h = &hc[2 * i + k];
      if (h->len <= 0) continue;
      int hit = !h->fresh;
      if (hit && k == 0) { /* the last half was node i − 1's: compare the inputs */
        hit = same_bits(U[i], lU) && same_bits(EF, lEF);
        for (int b = 0; hit && s && b < EW_BAND_COUNT; b++) hit = same_bits(Wl[b], lW[b]);
      }
      if (!hit) {
        rho = half_rho(h, U[i], EF, s ? Wl : NULL, kT, &d, pp);
        lU = U[i], lEF = EF;
        if (s) memcpy(lW, Wl, sizeof lW);
      }
      qi += h->len * rho;
      if (dq) di += h->len * d;
      if (parts)
        for (int t = 0; t < 4; t++) pa[t] += h->len * pp[t];
    }
    q[i] = qi;
    if (dq) dq[i] = di;
    if (parts)
      for (int t = 0; t < 4; t++) parts[t][i] = pa[t];
  }
}

/* bulk_charges for the bisection of the first guess: the classical bulk bands, q alone (the
 * same operations, without the windows, derivatives and parts) */
static void bulk_charges_q(const model *m, double EF0, const double *U, double *q) {
  const double kT = m->kT, bias = m->bias_eV, L = m->L;
  const double *z = m->z;
  const half *hc = m->hc;
  const size_t n = m->n;
  double lU = 0.0, lEF = 0.0, rho = 0.0, d, pp[4];
  for (size_t i = 0; i < n; i++) {
    const half *h = &hc[2 * i];
    double EF = bias != 0.0 ? EF0 - bias * z[i] / L : EF0, qi = 0.0; /* fermi_at */
    if (h[0].len > 0) {
      if (h[0].fresh || !same_bits(U[i], lU) || !same_bits(EF, lEF)) {
        rho = half_rho(&h[0], U[i], EF, NULL, kT, &d, pp);
        lU = U[i], lEF = EF;
      }
      qi += h[0].len * rho;
    }
    if (h[1].len > 0) {
      if (h[1].fresh) { /* else: the first half's inputs */
        rho = half_rho(&h[1], U[i], EF, NULL, kT, &d, pp);
        lU = U[i], lEF = EF;
      }
      qi += h[1].len * rho;
    }
    q[i] = qi;
  }
}

/* The delta layers' ionised dopants, added to the box charges. */
static void sheet_charges(const model *m, double EF0, const double *U, double *q, double *dq,
                          double *const parts[4]) {
  const double kT = m->kT;
  for (size_t k = 0; k < m->n_sheets; k++) {
    const sheet *sh = &m->sh[k];
    size_t i = sh->node;
    double EF = fermi_at(m, EF0, m->z[i]);
    double g = 1.0, dg = 0.0;
    if (sh->eion > 0) {
      g = sh->donor ? occ((EF - (sh->Ec + U[i] - sh->eion)) / kT, 2.0)
                    : occ((sh->Evtop + U[i] + sh->eion - EF) / kT, 4.0);
      dg = (sh->donor ? 1.0 : -1.0) * g * (1.0 - g) / kT;
    }
    q[i] += (sh->donor ? 1.0 : -1.0) * sh->dens * g;
    if (dq) dq[i] += (sh->donor ? 1.0 : -1.0) * sh->dens * dg;
    if (parts) parts[sh->donor ? 2 : 3][i] += sh->dens * g;
  }
}

/* The subbands' carriers, each subband shifted locally by U − U_S (Trellakis et al. 1997),
 * added to the box charges. */
static void subband_charges(const model *m, const snap *s, double EF0, const double *U,
                            double *q, double *dq, double *const parts[4]) {
  const double kT = m->kT;
  size_t n = m->n;
  double dmax = 0.0;
  for (size_t i = 0; i < n; i++) dmax = max_of(dmax, fabs(U[i] - s->Us[i]));
  for (size_t j = 0; j < s->ns; j++) {
    const qstate *qs = &s->s[j];
    double EF = fermi_at(m, EF0, qs->zc);
    double x0 = qs->hole ? (qs->E - EF) / kT : (EF - qs->E) / kT;
    if (x0 + dmax / kT < -200.0) continue; /* occupation below e^-200 everywhere */
    /* the state's constants in locals (the stores to q could alias them); chi·D is the
       first product of dens, evaluated left to right */
    const double *psi = qs->psi, *Us = s->Us, *w = m->w;
    const double chi = qs->chi, D = qs->D, chiD = chi * D;
    const int hole = qs->hole;
    const ew_sheet_table *tab = qs->tab;
    double *pt = parts ? parts[hole ? 1 : 0] : NULL;
    for (size_t i = 0; i < n; i++) {
      double p2 = psi[i] * psi[i];
      if (p2 == 0.0) continue;
      double du = U[i] - Us[i];
      double x = hole ? x0 + du / kT : x0 - du / kT;
      double fx, lx; /* ln(1 + e^x) and d ln(1+e^x)/dx */
      if (tab) lx = ew_sheet_table_eval(tab, x, &fx);
      else log1pexp_deriv(x, &lx, &fx);
      double dens = chiD * lx * p2 * w[i]; /* nm^-2 in this box */
      double f = chi * fx;
      q[i] += hole ? dens : -dens;
      if (dq) dq[i] += D * f / kT * p2 * w[i];
      if (pt) pt[i] += dens;
    }
  }
}

/* Box charge q_i (nm^-2) of every node and dq_i/dU_i; parts[4][n] (may be NULL) receives the
 * box-integrated n, p, N_D⁺, N_A⁻.  s == NULL: classical bulk bands only (the first guess). */
static void charges(const model *m, const snap *s, double EF0, const double *U, double *q,
                    double *dq, double *const parts[4]) {
  if (!s && !dq && !parts) bulk_charges_q(m, EF0, U, q);
  else bulk_charges(m, s, EF0, U, q, dq, parts);
  sheet_charges(m, EF0, U, q, dq, parts);
  for (size_t i = 0; m->bound && i < m->n; i++) q[i] += m->bound[i];
  if (s) subband_charges(m, s, EF0, U, q, dq, parts);
}

/* Residual R_i = F_{i+1} − F_i − C q_i of the discrete Poisson equation; returns ||R||_2. */
static double residual(const model *m, double EF0, const double *U, const double *q, double *R) {
  size_t n = m->n;
  double Ul = EF0 + m->off_left, Ur = fermi_at(m, EF0, m->L) + m->off_right, sum = 0.0;
  for (size_t i = 0; i < n; i++) {
    double left = i > 0 ? m->ec[i] * (U[i] - U[i - 1]) : m->dir_left ? m->ec[0] * (U[0] - Ul) : 0.0;
    double right = i + 1 < n ? m->ec[i + 1] * (U[i + 1] - U[i])
                   : m->dir_right ? m->ec[n] * (Ur - U[i]) : 0.0;
    R[i] = right - left - POISSON_C * q[i];
    sum += R[i] * R[i];
  }
  return sqrt(sum);
}

typedef struct {
  double *q, *dq, *R, *lo, *di, *up, *x, *Ut;
} work;

/* The Newton system lo/di/up x = rhs (x in place) by Gaussian elimination on the tridiagonal,
 * in the very operations SuperLU's partial-pivoting LU and triangular solves make when no row
 * is exchanged (dpivotL scales the column by 1/pivot; dgstrs divides by the diagonal), so the
 * bits are those of ew_sparse_tridiag_solve, without its per-call set-up (allocations, column
 * order, symbolic factorisation: 3.5M instructions per call on the doped detector against
 * 2·10⁴).  The Jacobian is an M-matrix (diagonal ≤ −(off-diagonals), dq ≥ 0) so no row is
 * exchanged; where one would be (|sub-diagonal| > |pivot|), or anything is not finite, the
 * system goes to SuperLU as before.  piv[n] is scratch. */
static ew_status newton_lu(size_t n, const double *lo, const double *di, const double *up,
                           double *x, double *piv, ew_error *err) {
  int ok = n >= 2;
  for (size_t i = 0; ok && i < n; i++) {
    double u = i ? di[i] - lo[i - 1] * (1.0 / piv[i - 1]) * up[i - 1] : di[0];
    piv[i] = u;
    ok = isfinite(u) && u != 0.0 && isfinite(x[i]) && (i + 1 == n || fabs(lo[i]) <= fabs(u));
  }
  if (!ok) return ew_sparse_tridiag_solve(n, lo, di, up, x, err);
  for (size_t i = 1; i < n; i++) x[i] -= lo[i - 1] * (1.0 / piv[i - 1]) * x[i - 1];
  x[n - 1] /= piv[n - 1];
  for (size_t i = n - 1; i-- > 0;) {
    x[i] -= up[i] * x[i + 1];
    x[i] /= piv[i];
  }
  for (size_t i = 0; i < n; i++)
    if (!isfinite(x[i]))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "tridiagonal solve: non-finite solution");
  return EW_OK;
}

/* One nonlinear Poisson solve for U (in place) at fixed E_F with the predicted densities.
 * On success wk->q and parts[4][n] hold the charges at the final U: the last evaluation is
 * always the step that was taken (parts costs a few stores, and saves the caller a further
 * evaluation at the same U). */
static ew_status poisson_step(const model *m, const snap *s, double EF0, double *U, work *wk,
                              double *const parts[4], int outer, ew_error *err) {
  size_t n = m->n;
  charges(m, s, EF0, U, wk->q, wk->dq, NULL);
  double rn = residual(m, EF0, U, wk->q, wk->R);
  double last = INFINITY;
  for (int it = 0; it < EW_SP_NEWTON_MAX; it++) {
    for (size_t i = 0; i < n; i++) {
      double d = -POISSON_C * wk->dq[i];
      if (i > 0 || m->dir_left) d -= m->ec[i];
      if (i + 1 < n || m->dir_right) d -= m->ec[i + 1];
      wk->di[i] = d;
      wk->x[i] = -wk->R[i];
      if (i + 1 < n) wk->lo[i] = wk->up[i] = m->ec[i + 1];
    }
    /* wk->Ut is free until the step is taken: the pivots */
    ew_status rc = newton_lu(n, wk->lo, wk->di, wk->up, wk->x, wk->Ut, err);
    if (rc != EW_OK) return rc;
    double mx = 0.0;
    for (size_t i = 0; i < n; i++) mx = max_of(mx, fabs(wk->x[i]));
    last = mx;
    double t = mx > NEWTON_STEP_MAX_EV ? NEWTON_STEP_MAX_EV / mx : 1.0;
    double rt = rn;
    for (int bt = 0; bt < 40; bt++) { /* halve the step while the residual grows */
      for (size_t i = 0; i < n; i++) wk->Ut[i] = U[i] + t * wk->x[i];
      charges(m, s, EF0, wk->Ut, wk->q, wk->dq, parts);
      rt = residual(m, EF0, wk->Ut, wk->q, wk->R);
      if (rt <= rn * (1.0 - 1e-4 * t) || mx * t < NEWTON_TOL_EV) break;
      t *= 0.5;
    }
    memcpy(U, wk->Ut, n * sizeof *U);
    rn = rt;
    if (t == 1.0 && mx < NEWTON_TOL_EV) return EW_OK;
    if (t * mx < 1e-15 && mx < 1e-9) return EW_OK; /* at the floating-point floor */
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                 "self-consistent solve: the nonlinear Poisson step of outer iteration %d did "
                 "not converge in %d Newton iterations (last step %.3g eV, residual %.3g)",
                 outer, EW_SP_NEWTON_MAX, last, rn);
}

/* ---- set-up -------------------------------------------------------------------------- */
static ew_status check_eps(const ew_stack *st, ew_error *err) {
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    int ok = ly->bands.eps_r > 0 && isfinite(ly->bands.eps_r);
    if (ly->profile)
      for (int j = 0; j < EW_GRADE_SAMPLES && ok; j++) ok = ly->profile[j].eps_r > 0;
    if (!ok)
      return ew_fail(err, EW_ERR_INPUT, st->path, ly->line,
                     "layer '%s' (material '%s') has no static permittivity: the "
                     "self-consistent (doped) solve needs eps_static for every layer; give "
                     "'eps_static' in its user-defined material",
                     ly->name, ly->material);
  }
  return EW_OK;
}

/* U of a flat, charge-neutral bulk at half h relative to its Fermi level (E_F = 0). */
static double neutral_offset(const half *h, double kT) {
  double lo = -h->Ec - 3.0, hi = -h->Evtop + 3.0; /* Ec + U 3 eV below E_F … Ev + U above */
  for (int it = 0; it < 200; it++) { /* ρ(U) increases with U */
    double mid = 0.5 * (lo + hi);
    double r = half_rho(h, mid, 0.0, NULL, kT, NULL, NULL);
    if (r != 0 && (mid == lo || mid == hi)) return mid; /* converged (see neutral_fermi) */
    if (r > 0) hi = mid;
    else if (r < 0) lo = mid;
    else { /* both densities underflow: the midgap of the intrinsic bulk */
      return -0.5 * (h->Ec + h->Evtop);
    }
  }
  return 0.5 * (lo + hi);
}

/* Fermi level of global neutrality with U given, classical bulk bands (the first guess). */
static double neutral_fermi(const model *m, const double *U, double *q) {
  double lo = INFINITY, hi = -INFINITY;
  for (size_t i = 0; i < 2 * m->n; i++) {
    lo = fmin(lo, m->hc[i].Evtop + U[i / 2]);
    hi = fmax(hi, m->hc[i].Ec + U[i / 2]);
  }
  lo -= 2.0;
  hi += 2.0;
  for (int it = 0; it < 200; it++) { /* total charge decreases with E_F */
    double mid = 0.5 * (lo + hi), tot = 0.0;
    /* lo and hi adjacent doubles: every further step keeps mid (it moves lo or hi onto
       it, or neither), so the 200 steps would end on it as well */
    if (mid == lo || mid == hi) return mid;
    charges(m, NULL, mid, U, q, NULL, NULL);
    for (size_t i = 0; i < m->n; i++) tot += q[i];
    if (tot > 0) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

static void model_free(model *m) {
  free(m->hc);
  free(m->ec);
  free(m->box);
  free(m->sh);
  free(m->bound);
}

/* Cells (εr / h, one layer per cell) and the two halves of every node's box. */
static void fill_cells_and_boxes(model *m, const ew_grid *g) {
  size_t n = g->n;
  for (size_t c = 0; c <= n; c++) {
    double a = c == 0 ? 0.0 : g->z[c - 1], b = c == n ? g->length_nm : g->z[c];
    size_t k;
    ew_bands bb;
    bands_at(m->st, 0.5 * (a + b), &k, &bb);
    m->ec[c] = bb.eps_r / g->h[c];
  }
  nc_memo nm = {{0, 0, 0}, {0, 0, 0}, {0, 0, 0}};
  for (size_t i = 0; i < n; i++) {
    double a = i == 0 && !m->dir_left ? 0.0 : g->z[i] - 0.5 * g->h[i];
    double b = i + 1 == n && !m->dir_right ? g->length_nm : g->z[i] + 0.5 * g->h[i + 1];
    fill_half(m, &m->hc[2 * i], a, g->z[i], &nm);
    fill_half(m, &m->hc[2 * i + 1], g->z[i], b, &nm);
    m->hc[2 * i].z = m->hc[2 * i + 1].z = g->z[i];
    m->box[i] = b - a;
  }
  /* the static inputs of half_rho (Ec … Ea, contiguous doubles) shared with the half before,
     when that one has a length (is evaluated or stands for an evaluation) */
  const size_t from = offsetof(half, Ec), len = offsetof(half, Ea) + sizeof(double) - from;
  m->hc[0].fresh = 1;
  for (size_t j = 1; j < 2 * n; j++)
    m->hc[j].fresh = !(m->hc[j - 1].len > 0) || memcmp((const char *)&m->hc[j] + from,
                                                       (const char *)&m->hc[j - 1] + from, len);
}

/* Delta layers on the node nearest their layer's centre. */
static void fill_sheets(model *m, const ew_grid *g) {
  const ew_stack *st = m->st;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double zc = ly->z_start_nm + 0.5 * ly->thickness_nm;
    size_t best = 0;
    for (size_t i = 1; i < g->n; i++)
      if (fabs(g->z[i] - zc) < fabs(g->z[best] - zc)) best = i;
    for (int d = 0; d < 2; d++) {
      double dens = d == 0 ? ly->donor_sheet_cm2 : ly->acceptor_sheet_cm2;
      if (!(dens > 0)) continue;
      sheet *sh = &m->sh[m->n_sheets++];
      sh->node = best;
      sh->dens = dens * NM2_PER_CM2;
      sh->Ec = ew_stack_edge_at(st, EW_BAND_E, zc);
      sh->Evtop = fmax(ew_stack_edge_at(st, EW_BAND_HH, zc), ew_stack_edge_at(st, EW_BAND_LH, zc));
      sh->eion = d == 0 ? ly->donor_energy_eV : ly->acceptor_energy_eV;
      sh->donor = d == 0;
    }
  }
}

/* Dirichlet offsets U(face) − E_F(face), and the gauge's reference band (the majority
 * carriers' band: heavy holes when the acceptors outnumber the donors). */
static void fill_faces(model *m, const ew_grid *g) {
  const ew_stack *st = m->st;
  size_t n = g->n;
  if (st->surface_given)
    m->off_left = st->surface_barrier_eV - ew_stack_edge_at(st, EW_BAND_E, 0.0);
  if (st->bias_given) {
    half h;
    fill_half(m, &h, 0.0, fmin(1e-3, 0.5 * g->z[0]), NULL);
    m->off_left = neutral_offset(&h, m->kT);
    fill_half(m, &h, fmax(g->length_nm - 1e-3, 0.5 * (g->z[n - 1] + g->length_nm)), g->length_nm,
              NULL);
    m->off_right = neutral_offset(&h, m->kT);
  }
  double nd = 0.0, na = 0.0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    nd += ly->donors_cm3 * ly->thickness_nm * 1e-7 + ly->donor_sheet_cm2;
    na += ly->acceptors_cm3 * ly->thickness_nm * 1e-7 + ly->acceptor_sheet_cm2;
  }
  m->holes_major = na > nd;
}

static ew_status model_build(model *m, const ew_stack *st, const ew_grid *g, double T,
                             ew_error *err) {
  memset(m, 0, sizeof *m);
  m->st = st;
  m->n = g->n;
  m->z = g->z;
  m->w = g->w;
  m->L = g->length_nm;
  m->kT = EW_KB_EVK * T;
  m->dir_left = st->surface_given || st->bias_given;
  m->dir_right = st->bias_given;
  m->bias_eV = st->bias_given ? st->bias_V : 0.0; /* e·V in eV for V in volts */
  size_t n = g->n;
  m->hc = calloc(2 * n, sizeof *m->hc);
  m->ec = malloc((n + 1) * sizeof *m->ec);
  m->box = malloc(n * sizeof *m->box);
  size_t ns = 0;
  for (size_t k = 0; k < st->n_layers; k++)
    ns += (st->layers[k].donor_sheet_cm2 > 0) + (st->layers[k].acceptor_sheet_cm2 > 0);
  m->sh = calloc(ns ? ns : 1, sizeof *m->sh);
  if (st->polarized) m->bound = calloc(n, sizeof *m->bound);
  if (!m->hc || !m->ec || !m->box || !m->sh || (st->polarized && !m->bound)) {
    model_free(m);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (Poisson model, n = %zu)", n);
  }
  fill_cells_and_boxes(m, g);
  fill_sheets(m, g);
  if (m->bound) ew_polarization_sheets_nm2(st, g->z, n, m->bound);
  fill_faces(m, g);
  return EW_OK;
}

/* ---- the gauge --------------------------------------------------------------------------- */
static double interp(const model *m, const double *U, double z) {
  size_t n = m->n;
  if (z <= m->z[0]) return U[0];
  if (z >= m->z[n - 1]) return U[n - 1];
  size_t lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    size_t mid = (lo + hi) / 2;
    if (m->z[mid] <= z) lo = mid;
    else hi = mid;
  }
  double t = (z - m->z[lo]) / (m->z[hi] - m->z[lo]);
  return U[lo] + t * (U[hi] - U[lo]);
}

/* The bound window of a band in its positive-mass form (Ec, or −Ev for holes) with U added
 * (U == NULL: without), by the Schrödinger pass's own rule (ew_bound_window_rule): the outer
 * faces, or in a field the outer layers' highest points, sampled on 33 points per layer. */
static double window_with(const model *m, ew_band band, const double *U) {
  const ew_stack *st = m->st;
  double face[2], highest[2];
  for (int side = 0; side < 2; side++) {
    const ew_layer *ly = &st->layers[side ? st->n_layers - 1 : 0];
    double mx = -INFINITY;
    for (int j = 0; j <= 32; j++) {
      double u = fmin(fmax(j / 32.0, 1e-9), 1.0 - 1e-9);
      double z = ly->z_start_nm + u * ly->thickness_nm;
      double e = ew_stack_edge_at(st, band, z) + (U ? interp(m, U, z) : 0.0);
      double v = band == EW_BAND_E ? e : -e;
      mx = fmax(mx, v);
      if (j == (side ? 32 : 0)) face[side] = v; /* the stack's outer face on this side */
    }
    highest[side] = mx;
  }
  return ew_bound_window_rule(st->field_kV_cm != 0.0, face, highest);
}

/* The constant c for (U, E_F) → (U + c, E_F + c) that puts the reference band's window with
 * U at its window without U. */
static double gauge_shift(const model *m, const double *U) {
  if (m->holes_major) return window_with(m, EW_BAND_HH, U) - window_with(m, EW_BAND_HH, NULL);
  return window_with(m, EW_BAND_E, NULL) - window_with(m, EW_BAND_E, U);
}

/* ---- from a result to the predictor's states ------------------------------------------ */
static ew_status snap_of(const ew_result *r, const model *m, const double *Us, snap *s,
                         ew_error *err) {
  const ew_stack *st = r->stack;
  s->ns = r->n_states;
  s->s = calloc(s->ns ? s->ns : 1, sizeof *s->s);
  if (!s->s) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (states)");
  s->Us = Us;
  for (int b = 0; b < EW_BAND_COUNT; b++) s->W[b] = r->window_eV[b];
  for (size_t j = 0; j < s->ns; j++) {
    const ew_state *q = &r->states[j];
    const ew_bands *bb = &st->layers[q->layer].bands;
    qstate *o = &s->s[j];
    o->hole = q->band != EW_BAND_E;
    o->E = q->energy_eV;
    double mp = q->inplane_mass; /* the subband's own curvature (states.c) */
    if (!(mp > 0))
      mp = q->band == EW_BAND_E ? bb->me : q->band == EW_BAND_HH ? bb->mhh_par : bb->mlh_par;
    if (!(mp > 0)) mp = q->band == EW_BAND_HH ? bb->mhh_z : bb->mlh_z;
    o->D = d2_of(mp, m->kT);
    o->tab = o->hole && m->dos_fn ? m->dos_fn(m->dos_ctx, j) : NULL;
    if (o->tab) o->D = 1.0; /* the table gives nm^-2 */
    o->psi = r->psi + j * r->grid->n;
    double zc = 0.0; /* read only for the quasi-Fermi level of a bias (fermi_at) */
    for (size_t i = 0; m->bias_eV != 0.0 && i < m->n; i++)
      zc += m->w[i] * o->psi[i] * o->psi[i] * m->z[i];
    o->zc = zc;
    double depth = o->hole ? o->E - s->W[q->band] : s->W[EW_BAND_E] - o->E;
    o->chi = smoothstep(depth / (EW_SP_BLEND_KT * m->kT));
  }
  return EW_OK;
}

/* ---- results ------------------------------------------------------------------------ */
/* Depolarisation integral S = ∫ dz [∫_0^z ψ_j ψ_i dz']² (nm), box rule on the nodes. */
static double depol_integral(const ew_grid *g, const double *pi, const double *pj) {
  double c = 0.0, S = 0.0;
  for (size_t k = 0; k < g->n; k++) {
    double c1 = c + g->w[k] * pi[k] * pj[k];
    double mid = 0.5 * (c + c1);
    S += g->w[k] * mid * mid;
    c = c1;
  }
  return S;
}

/* The profiles: U, and the box integrals q and parts as densities in cm^-3; their totals. */
static void fill_profiles(ew_sp_info *sp, const model *m, const double *U,
                          double *const parts[4], const double *q) {
  for (size_t i = 0; i < m->n; i++) {
    double to = 1.0 / (m->box[i] * NM3_PER_CM3);
    sp->prof[EW_SP_POTENTIAL_EV][i] = U[i];
    sp->prof[EW_SP_CHARGE_CM3][i] = q[i] * to;
    sp->prof[EW_SP_N_CM3][i] = parts[0][i] * to;
    sp->prof[EW_SP_P_CM3][i] = parts[1][i] * to;
    sp->prof[EW_SP_DONORS_ION_CM3][i] = parts[2][i] * to;
    sp->prof[EW_SP_ACCEPTORS_ION_CM3][i] = parts[3][i] * to;
    sp->electrons_cm2 += parts[0][i] / NM2_PER_CM2;
    sp->holes_cm2 += parts[1][i] / NM2_PER_CM2;
    sp->donors_ion_cm2 += parts[2][i] / NM2_PER_CM2;
    sp->acceptors_ion_cm2 += parts[3][i] / NM2_PER_CM2;
  }
}

/* Per-state sheet densities from the final states (their reported energies). */
static ew_status fill_sheet_densities(ew_sp_info *sp, const ew_result *r, const model *m,
                                      double EF0, const double *U, ew_error *err) {
  snap s;
  ew_status rc = snap_of(r, m, U, &s, err);
  if (rc != EW_OK) return rc;
  for (size_t j = 0; j < r->n_states; j++) {
    const qstate *o = &s.s[j];
    double EF = fermi_at(m, EF0, o->zc);
    double x = o->hole ? (o->E - EF) / m->kT : (EF - o->E) / m->kT;
    double lx = o->tab ? ew_sheet_table_eval(o->tab, x, NULL) : log1pexp(x);
    sp->sheet_cm2[j] = o->chi * o->D * lx / NM2_PER_CM2;
    if (o->hole) sp->holes_bound_cm2 += sp->sheet_cm2[j];
    else sp->electrons_bound_cm2 += sp->sheet_cm2[j];
  }
  free(s.s);
  return EW_OK;
}

/* Depolarisation shift of every intersubband line (header of this file). */
static void fill_depolarisation(ew_sp_info *sp, const ew_result *r) {
  size_t n = r->grid->n;
  for (size_t k = 0; k < r->n_lines; k++) {
    const ew_line *ln = &r->lines[k];
    sp->depol_eV[k] = NAN;
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    const ew_state *lo = &r->states[ln->lower];
    double dN = (sp->sheet_cm2[ln->lower] - sp->sheet_cm2[ln->upper]) * NM2_PER_CM2;
    double S = depol_integral(r->grid, r->psi + ln->lower * n, r->psi + ln->upper * n);
    double eps = r->stack->layers[lo->layer].bands.eps_r, E = ln->energy_eV;
    double alpha = 2.0 * E2_EPS0_EVNM * dN * S / (eps * E);
    sp->depol_eV[k] = 1.0 + alpha > 0 ? E * sqrt(1.0 + alpha) - E : NAN;
  }
}

/* Attach the self-consistent information to the final result r (solved at U). */
static ew_status attach(ew_result *r, const model *m, double EF0, const double *U,
                        double *const parts[4], const double *q, int iters, double resid,
                        double T, ew_error *err) {
  size_t n = m->n;
  ew_sp_info *sp = calloc(1, sizeof *sp);
  if (!sp) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  r->sp = sp; /* freed with r from here on */
  sp->fermi_eV = EF0;
  sp->fermi_last_eV = fermi_at(m, EF0, m->L);
  sp->temperature_K = T;
  sp->iterations = iters;
  sp->residual_eV = resid;
  sp->n = n;
  sp->n_states = r->n_states;
  sp->n_lines = r->n_lines;
  sp->sheet_cm2 = calloc(r->n_states ? r->n_states : 1, sizeof *sp->sheet_cm2);
  sp->depol_eV = calloc(r->n_lines ? r->n_lines : 1, sizeof *sp->depol_eV);
  int ok = sp->sheet_cm2 && sp->depol_eV;
  for (int k = 0; k < EW_SP_PROFILE_COUNT && ok; k++)
    ok = (sp->prof[k] = malloc(n * sizeof(double))) != NULL;
  if (!ok) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  fill_profiles(sp, m, U, parts, q);
  ew_status rc = fill_sheet_densities(sp, r, m, EF0, U, err);
  if (rc != EW_OK) return rc;
  fill_depolarisation(sp, r);
  if (r->stack->temperature_K < EW_SP_T_FLOOR_K &&
      !ew_result_warn_code(r, "temperature-floor",
                           "self-consistent solve: the Fermi–Dirac occupations use a 1 K floor "
                           "for the stack's temperature below 1 K"))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  return EW_OK;
}

/* ---- the state of the iteration (poisson.h) -------------------------------------------- */
struct ew_poisson {
  model m;
  work wk;
  double *U, *Un;  /* [n] the potential and its next iterate */
  double *pbuf;    /* [4n] the box-integrated n, p, N_D⁺, N_A⁻ of the last step (parts) */
  double *parts[4];
  double EF;       /* Fermi level (of the first face), eV */
  double T;        /* temperature of the occupations, K */
};

ew_status ew_poisson_check_stack(const ew_stack *st, ew_error *err) { return check_eps(st, err); }

/* the work arrays of the Newton steps, to allocate and free them in one loop */
#define WORK_ARRAYS 8
static void work_slots(work *wk, double **slot[WORK_ARRAYS]) {
  double **all[WORK_ARRAYS] = {&wk->q, &wk->dq, &wk->R, &wk->lo, &wk->di, &wk->up, &wk->x, &wk->Ut};
  memcpy(slot, all, sizeof all);
}

void ew_poisson_free(ew_poisson *p) {
  if (!p) return;
  double **wf[WORK_ARRAYS];
  work_slots(&p->wk, wf);
  for (size_t k = 0; k < WORK_ARRAYS; k++) free(*wf[k]);
  free(p->U);
  free(p->Un);
  free(p->pbuf);
  model_free(&p->m);
  free(p);
}

/* First guess: flat bands at global neutrality; with a bias the two contact levels and a
 * linear U between them; then the gauge. */
static void first_guess(ew_poisson *p) {
  model *m = &p->m;
  size_t n = m->n;
  if (m->st->bias_given) {
    p->EF = -m->off_left; /* U(first face) = 0 */
    double Ur = fermi_at(m, p->EF, m->L) + m->off_right;
    for (size_t i = 0; i < n; i++) p->U[i] = Ur * m->z[i] / m->L;
  } else {
    p->EF = neutral_fermi(m, p->U, p->wk.q);
  }
  double c0 = gauge_shift(m, p->U);
  for (size_t i = 0; i < n; i++) p->U[i] += c0;
  p->EF += c0;
}

ew_status ew_poisson_new(const ew_stack *st, const ew_grid *g, double T, ew_poisson **out,
                         ew_error *err) {
  *out = NULL;
  ew_poisson *p = calloc(1, sizeof *p);
  if (!p)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (Poisson model, n = %zu)", g->n);
  ew_status rc = model_build(&p->m, st, g, T, err);
  if (rc != EW_OK) {
    free(p);
    return rc;
  }
  size_t n = p->m.n;
  p->T = T;
  p->U = calloc(n, sizeof *p->U);
  p->Un = malloc(n * sizeof *p->Un);
  p->pbuf = malloc(4 * n * sizeof *p->pbuf);
  double **wf[WORK_ARRAYS];
  work_slots(&p->wk, wf);
  int ok = p->U && p->Un && p->pbuf;
  for (size_t k = 0; k < WORK_ARRAYS; k++) ok = ok && (*wf[k] = malloc(n * sizeof(double)));
  if (!ok) {
    ew_poisson_free(p);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (Poisson, n = %zu)", n);
  }
  for (int t = 0; t < 4; t++) p->parts[t] = p->pbuf + t * n;
  first_guess(p);
  *out = p;
  return EW_OK;
}

void ew_poisson_start(ew_poisson *p, const double *U, double EF) {
  memcpy(p->U, U, p->m.n * sizeof *p->U);
  p->EF = EF;
}

const double *ew_poisson_potential(const ew_poisson *p) { return p->U; }
double ew_poisson_fermi_eV(const ew_poisson *p) { return p->EF; }
void ew_poisson_set_subband_dos(ew_poisson *p, ew_subband_dos_fn fn, const void *ctx) {
  p->m.dos_fn = fn, p->m.dos_ctx = ctx;
}

ew_status ew_poisson_update(ew_poisson *p, const ew_result *r, int outer, double *dU,
                            ew_error *err) {
  model *m = &p->m;
  size_t n = m->n;
  snap s = {0};
  ew_status rc = snap_of(r, m, p->U, &s, err);
  if (rc != EW_OK) return rc;
  memcpy(p->Un, p->U, n * sizeof *p->Un);
  /* p->wk.q and p->parts: the charges the Poisson step satisfied (gauge invariant: kept for
     the profiles) */
  rc = poisson_step(m, &s, p->EF, p->Un, &p->wk, p->parts, outer, err);
  if (rc == EW_OK) {
    double c = gauge_shift(m, p->Un), d = 0.0;
    for (size_t i = 0; i < n; i++) {
      p->Un[i] += c;
      d = max_of(d, fabs(p->Un[i] - p->U[i]));
    }
    p->EF += c;
    memcpy(p->U, p->Un, n * sizeof *p->U);
    *dU = d;
  }
  free(s.s);
  return rc;
}

ew_status ew_poisson_attach(const ew_poisson *p, ew_result *r, int iterations,
                            double residual_eV, ew_error *err) {
  if (r->grid->n != p->m.n)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "self-consistent solve: grid mismatch");
  return attach(r, &p->m, p->EF, p->U, p->parts, p->wk.q, iterations, residual_eV, p->T, err);
}
