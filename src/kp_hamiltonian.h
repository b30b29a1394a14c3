/* kp_hamiltonian.h — the 4-band (heavy and light holes) and 6-band (with the split-off band)
 * Luttinger–Kohn Hamiltonians and the 8-band Kane Hamiltonian (with the Γ6 conduction band;
 * below) of an [001]-grown zinc-blende stack on the finite-difference
 * grid of grid.h, as a block-tridiagonal Hermitian pencil (H, B) in the hole picture
 * (eigenvalue λ = −E: a hole's energy counted downwards, as the single-band hole pencils of
 * hamiltonian.h are).
 *
 * The model (J. M. Luttinger, W. Kohn, Phys. Rev. 97, 869 (1955); J. M. Luttinger, Phys. Rev.
 * 102, 1030 (1956)) is written in the basis |X>,|Y>,|Z> ⊗ spin of the Γ15 valence states in
 * the Dresselhaus–Kip–Kittel form (G. Dresselhaus, A. F. Kip, C. Kittel, Phys. Rev. 98, 368
 * (1955)), electron sign, in units of K = ħ²/2m0:
 *   H_xx = Lt kx² + Mt (ky² + kz²),  H_zz = Lt kz² + Mt (kx² + ky²),  H_xy = N kx ky,
 *   H_xz = kx (N+ kz + kz N−),       H_zx = kx (kz N+ + N− kz),
 *   Lt = −γ1 − 4γ2,  Mt = −γ1 + 2γ2,  N = −6γ3   (Lt, Mt with the free-electron term),
 * and turned into the angular-momentum basis |3/2, ±3/2>, |3/2, ±1/2>, |1/2, ±1/2> by the
 * Clebsch–Gordan unitary, where the spin–orbit splitting −Δso is diagonal.  The 4-band model
 * is the J = 3/2 block.  Strain (Bir–Pikus, [001] biaxial; G. L. Bir, G. E. Pikus, Symmetry
 * and Strain-Induced Effects in Semiconductors (Wiley, 1974)) is the X,Y,Z-diagonal
 * (δEv,hyd − δE_sh, δEv,hyd − δE_sh, δEv,hyd + 2δE_sh) of strain.h's shifts: it gives the
 * heavy hole δEv,hyd − δE_sh, the light hole δEv,hyd + δE_sh and, in the 6-band model, the
 * √2 δE_sh light-hole/split-off coupling by the same transformation as the kinetic terms.
 *
 * Operator ordering (why Burt–Foreman).  Where the parameters jump, a product such as γ3 kz
 * is ambiguous.  The symmetrised ordering ½(γ kz + kz γ) is Hermitian but has no derivation
 * behind it; the exact envelope-function theory (M. G. Burt, J. Phys. Condens. Matter 4, 6651
 * (1992)) gives the ordering kx N+ kz + kz N− kx, and B. A. Foreman, Phys. Rev. B 56, R12748
 * (1997) (with Phys. Rev. B 48, 4964 (1993) for the valence band) closes it with the split
 * N = N+ + N−, N− = M − ħ²/2m0 (the Γ25 remote bands neglected): in our units
 * N− = Mt − 1, N+ = N − N−.  We use that Burt–Foreman form by default (it is the derived
 * one and it removes the spurious interface terms of the symmetrised one);
 * EW_KP_SYMMETRISED selects N+ = N− = N/2 for comparison.  Both are Hermitian: the kz-linear
 * part F kz + kz F† is discretised so that the coupling blocks are −(i/2)(F + F†)/1 and the
 * node block gets (i/2)[(F − F†)_right − (F − F†)_left] (box integration over the dual cell;
 * the node term is non-zero only at an interface, where the two orderings differ).
 *
 * Discretisation (box integration, as hamiltonian.h): the kz D kz terms couple neighbours
 * by −K D_c/h_c with D_c of the cell; the heavy- and light-hole combinations take
 * D_c/h_c = 1/∫_cell m dz from the grid (the single-band masses 1/(γ1 ∓ 2γ2) exactly), so that
 * at k∥ = 0 the heavy-hole and light-hole blocks ARE the single-band pencils of hamiltonian.h
 * (tested to solver precision).  γ1, γ2 of a cell follow from those two growth-axis masses,
 * γ3 is the layer's (γ2 for user materials, which give no γ3).  The potential is the grid's
 * dual-cell mean (field and any added potential included): in the 4-band model the light
 * hole sits at the grid's light-hole edge (which already holds the strained split-off
 * coupling, as the single-band model has it); in the 6-band model at δEv,hyd + δE_sh with the
 * coupling explicit.
 * 8-band model (narrow and broken gaps; E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957);
 * the parameters of I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815
 * (2001)): the Γ6 conduction band |S> joins the six valence states through
 * <S|H|X_j> = i P k_j, P² = Ep ħ²/2m0.  The valence parameters lose the part the conduction
 * band now gives explicitly: γ1' = γ1 − Ep/(3Eg), γ2' = γ2 − Ep/(6Eg), γ3' = γ3 − Ep/(6Eg)
 * (so γ1' − 2γ2' = γ1 − 2γ2: the heavy hole does not couple at k∥ = 0), and the electron
 * keeps S = 1/me − Ep (Eg + 2Δ/3)/(Eg (Eg + Δ)) (units ħ²/2m0).  With the catalogue's Ep,
 * S is negative in most III–V compounds (InAs −4.8, GaSb −2.3, GaAs −2.9), and a negative S
 * gives spurious states in the gap (at large kz, and on the grid at the zone edge, where
 * the central difference of P kz vanishes).  Following B. A. Foreman, Phys. Rev. B 56,
 * R12748 (1997) we rescale Ep per layer so that S is not below +1 (the free-electron term:
 * no remote-band contribution, F = 0): Ep' <= (1/me − 1) Eg (Eg + Δ)/(Eg + 2Δ/3); S = 1
 * rather than Foreman's S = 0 because S = 0 leaves the conduction row without a second
 * difference and the grid's zone-edge mode then falls into the gap.  The valence side has
 * the same trap: in a narrow gap γ1' + 2γ2' and γ3' turn negative (InAs at 300 K with the
 * S = 1 value of Ep: −2.7 and −0.7) and the light-hole band's large-kz branch then fills
 * the gap with spurious states (found so, by the inertia count, on an InAs/GaSb
 * superlattice); the envelope equations must stay elliptic (R. G. Veprek, S. Steiger,
 * B. Witzigmann, Phys. Rev. B 76, 165320 (2007) (from memory)).  So also
 * Ep' <= 0.8 Eg min(3γ1, 3(γ1 + 2γ2)/2, 6γ3), which keeps γ1', γ1' + 2γ2' and γ3' at >= 1/5
 * of γ1, γ1 + 2γ2, γ3 (the factor 0.8 is our choice).  Ep' = min(Ep, both bounds); S then
 * takes whatever keeps me exact (S >= 1).  The Kane term is ordered as Foreman's Burt–Foreman form: P kz in the conduction
 * row, kz P in the valence rows (F kz + kz F† with F_SZ = iP; the symmetrised option takes
 * ½(P kz + kz P)); it is Hermitian on the grid by the same discretisation as above.  The
 * conduction edge is the grid's (Bir–Pikus hydrostatic a_c (2ε∥ + ε⊥) included, strain.h).
 * Axial approximation: the in-plane anisotropic terms γ2 (kx² − ky²) and γ3 kx ky both take
 * γ̄ = (γ2 + γ3)/2 (the dispersion becomes isotropic in the plane). */
#ifndef EW_KP_HAMILTONIAN_H
#define EW_KP_HAMILTONIAN_H

#include <complex.h>

#include "grid.h"

typedef enum { EW_KP_4BAND = 4, EW_KP_6BAND = 6, EW_KP_8BAND = 8 } ew_kp_model;

/* ordering of the kz-linear terms at interfaces */
typedef enum { EW_KP_BURT_FOREMAN = 0, EW_KP_SYMMETRISED = 1 } ew_kp_ordering;

/* Basis order of the blocks: 0 |3/2,+3/2> (hh), 1 |3/2,+1/2> (lh), 2 |3/2,−1/2> (lh),
 * 3 |3/2,−3/2> (hh), 4 |1/2,+1/2> (so), 5 |1/2,−1/2> (so), and in the 8-band model
 * 6 |S↑> (e), 7 |S↓> (e). */
#define EW_KP_MAX_NB 8

/* The k-independent material profile of a stack on a grid (built once per dispersion). */
typedef struct {
  size_t n;               /* nodes */
  int nb;                 /* block size: 4 or 6 */
  ew_kp_ordering ordering;
  int axial;              /* 1: axial approximation */
  double *h;              /* [n+1] cell lengths, nm (the grid's) */
  double *g_hh, *g_lh;    /* [n+1] per cell γ1 − 2γ2 and γ1 + 2γ2 as h_c / ∫_cell m dz */
  double *g3;             /* [n+1] per cell γ3 */
  double *w;              /* [n] dual-cell lengths (B = w ⊗ 1) */
  double *v_xy, *v_z;     /* [n] electron-sign potential of the X,Y and Z components, eV */
  double *dso;            /* [n] dual-cell mean Δso, eV (6-band) */
  /* 8-band only (NULL otherwise): per cell the electron's 1/me (h_c / ∫_cell m dz), the
     Kane energy used (Foreman-rescaled, kp_hamiltonian.h) and (Eg + 2Δ/3)/(Eg (Eg + Δ)),
     1/eV; per node the Γ conduction edge (grid's dual-cell mean, a_c strain included) */
  double *g_e, *ep, *fk;  /* [n+1] */
  double *v_c;            /* [n] eV */
  double vmin;            /* lowest hole-picture potential over nodes and components, eV */
} ew_kp_profile;

/* The block-tridiagonal Hermitian pencil: diagonal blocks A_i, couplings C_i = H_{i,i+1}
 * (column-major nb × nb), B = diag(w_i) ⊗ 1. */
typedef struct {
  size_t n;
  int nb;
  double complex *diag; /* [n · nb²] */
  double complex *off;  /* [(n − 1) · nb²] */
  const double *w;      /* [n] the profile's */
  double norm;          /* a bound on ‖B^−1/2 H B^−1/2‖ (block Gershgorin) */
} ew_kp_pencil;

/* Profile of the stack on grid g.  EW_ERR_NOMEM; EW_ERR_INPUT for a 6- or 8-band model of a
 * layer without Δso (user materials give none) and an 8-band model of a layer without a
 * positive Γ gap. */
ew_status ew_kp_profile_build(const ew_stack *st, const ew_grid *g, ew_kp_model model,
                              ew_kp_ordering ordering, int axial, ew_kp_profile **out,
                              ew_error *err);
void ew_kp_profile_free(ew_kp_profile *p);

/* A pencil of the profile's size (values filled by ew_kp_pencil_fill); NULL when out of
 * memory. */
ew_kp_pencil *ew_kp_pencil_create(const ew_kp_profile *p);
void ew_kp_pencil_free(ew_kp_pencil *H);
/* Fill H at in-plane wave vector (kx, ky), 1/nm (x ∥ [100], y ∥ [010]). */
void ew_kp_pencil_fill(const ew_kp_profile *p, double kx, double ky, ew_kp_pencil *H);

/* y = H x (x, y of n · nb). */
void ew_kp_pencil_apply(const ew_kp_pencil *H, const double complex *x, double complex *y);

/* The coupling block H_{c−1,c} through cell c (1 <= c <= p->n; column-major nb × nb, the
 * basis and sign of ew_kp_pencil_fill's off blocks): off block c − 1 of the pencil for
 * c < n, and for c = n the coupling through the last cell to a node beyond the stack, which
 * the hard-wall pencil leaves out (the Bloch condition of kp_periodic.h needs it). */
void ew_kp_coupling_fill(const ew_kp_profile *p, size_t c, double kx, double ky,
                         double complex *C);

/* The Clebsch–Gordan unitary: column j = basis state j (above) in X↑ Y↑ Z↑ X↓ Y↓ Z↓. */
void ew_kp_basis(double complex U[36]);

#endif
