/* miniband.h — minibands of an infinite superlattice whose period is a stack (issue 14 §2).
 *
 * The stack is one period d.  On the finite-difference grid of grid.h (nodes at every
 * interface, exact cell integrals of the mass) the faces z = 0 and z = d are one node, the
 * "period node" 0; the grid's n nodes follow as nodes 1 … n, so N = n + 1 nodes and N cells,
 * the last cell [z_{n−1}, d] joining node N − 1 to node 0 of the next period.  The Bloch
 * condition ψ(z + d) = e^{iqd} ψ(z) (F. Bloch, Z. Phys. 52, 555 (1929)) turns the
 * BenDaniel–Duke pencil of hamiltonian.h into the same tridiagonal plus the corner couplings
 *   H_{N−1,0} = −K/M_wrap e^{iqd},  H_{0,N−1} = −K/M_wrap e^{−iqd},
 * real symmetric at q = 0 and q = π/d, complex Hermitian between; B stays diagonal.
 *
 * Eigenvalues: the k-th (0-based) is isolated by bisection on the certified count below,
 * then refined by shift-invert inverse iteration with SuperLU's complex LU
 * (superlu_adapter.h, ew_zshift_lu over the periodic pattern; the real q are solved by the
 * same complex factorisation); the Rayleigh quotient θ is accepted when the counts at
 * θ ∓ r (r the residual bound ‖T y − θ y‖/‖y‖ of the standard form, which bounds the distance
 * to an eigenvalue: B. N. Parlett, The Symmetric Eigenvalue Problem (SIAM 1998), Thm 4.5.1)
 * put index k between them.
 *
 * Count (inertia of T − σ, T = B^{−1/2} H B^{−1/2}): the open tridiagonal block of nodes
 * 0 … N−2 is eliminated by the LDLᵀ (Sturm) recurrence while the coupling of each eliminated
 * node to the corner node N − 1 is carried along (one complex fill per row); the corner's
 * 1 × 1 Schur complement s then adds its sign.  In(T − σ) = In(block) + In(s) is Haynsworth's
 * inertia additivity (E. V. Haynsworth, Linear Algebra Appl. 1, 73 (1968)).  A tiny pivot
 * makes two large terms of s cancel; when s is not resolved against that cancellation the
 * count is repeated in the reverse node order (a permutation similarity: same inertia). */
#ifndef EW_MINIBAND_H
#define EW_MINIBAND_H

#include <complex.h>

#include "grid.h"
#include "superlu_adapter.h"

/* The periodic pencil of one band: q enters only through the corner phase. */
typedef struct {
  size_t n;          /* nodes N (>= 3) */
  double period_nm;  /* d */
  double *diag;      /* [N] H_jj, eV·nm */
  double *off;       /* [N] H_{j,j+1} (j < N−1); off[N−1] = −K/M_wrap, the face coupling */
  double *w;         /* [N] B_jj, nm */
  double *sd, *se;   /* [N] standard form: sd_j = H_jj/w_j, se_j = off_j/√(w_j w_{j+1 mod N}) */
  double vmin;       /* lowest node potential (positive-mass scale), eV */
  double upper;      /* Gershgorin upper bound of the spectrum, eV */
  double pivmin;     /* smallest pivot magnitude allowed in the count (as LAPACK's dlaneg) */
} ew_mb_pencil;

/* The periodic pencil of band on grid g of the period st (no field).  NULL when out of memory
 * or when the grid has fewer than 2 nodes (N < 3). */
ew_mb_pencil *ew_mb_pencil_build(const ew_stack *st, const ew_grid *g, ew_band band);
void ew_mb_pencil_free(ew_mb_pencil *p);
/* Refill H with the cell mass integrals M[g->n + 1] of the grid's cells (energy-dependent
 * masses); M == NULL: the grid's band-edge masses. */
void ew_mb_pencil_set_masses(ew_mb_pencil *p, const ew_stack *st, const ew_grid *g, ew_band band,
                             const double *M);

/* Mean positive-mass potential (Ec, or −Ev for holes) of band over the period node's dual
 * cell (half of the last cell, h_last, and half of the first, h_first), eV. */
double ew_mb_period_node_pot(const ew_stack *st, ew_band band, double h_first, double h_last);

/* Number of eigenvalues of the pencil at phase qd (= q·d, radians) below sigma. */
size_t ew_mb_count_below(const ew_mb_pencil *p, double qd, double sigma);

/* The count in one node order only (reverse: N−1 … 0), for tests of both orders. */
size_t ew_mb_count_in_order(const ew_mb_pencil *p, double qd, double sigma, int reverse);

/* Dense Hermitian H(q) (row-major N × N, out[N·N]) for tests against LAPACK. */
void ew_mb_dense(const ew_mb_pencil *p, double qd, double complex *out);

/* The shift-invert workspace of one pencil (SuperLU pattern, vectors). */
typedef struct ew_mb_solver ew_mb_solver;
ew_mb_solver *ew_mb_solver_create(const ew_mb_pencil *p);
void ew_mb_solver_free(ew_mb_solver *s);

/* Eigenvalue k (0-based from below) at phase qd, eV on the positive-mass scale, certified as
 * described above; *bound (may be NULL) receives the certified |E − λ_k| bound.
 * EW_OK, EW_ERR_NOMEM, EW_ERR_NUMERIC (no convergence or a count that disagrees). */
ew_status ew_mb_eigenvalue(const ew_mb_pencil *p, ew_mb_solver *s, double qd, size_t k,
                           double *E, double *bound, ew_error *err);

/* EW_OK when values[0 … m) are the m lowest eigenvalues at qd, each within bound[j] (the
 * counts at values[j] ∓ bound[j] hold index j between them, and below the first value
 * minus its bound there is none); EW_ERR_NUMERIC naming the first that is not. */
ew_status ew_mb_certify(const ew_mb_pencil *p, double qd, const double *values,
                        const double *bound, size_t m, ew_error *err);

/* ---- the minibands of a stack (the opaque ew_minibands of epiwell.h; miniband_run.c) ------
 * Electrons take the Kane energy-dependent mass exactly when the single-well solve does
 * (ew_nonparabolic_applies): each E_n(q) is then the fixed point E = λ_n(H(q, E)). */
#define EW_MB_LABEL 16
#define EW_MB_POINTS_MAX 10000
/* q offset of the effective-mass differences, as a fraction of π/d (see miniband.c) */
#define EW_MB_MASS_DQ 0.02

struct ew_minibands {
  size_t points;           /* q samples from 0 to π/d */
  size_t count;            /* minibands, electrons first, then hh, lh, by index */
  double period_nm, step_nm;
  size_t nodes;            /* N of the periodic grid */
  double *q_inv_nm;        /* [points] */
  ew_band *band;           /* [count] */
  int *index;              /* [count] 1-based within its band */
  char (*label)[EW_MB_LABEL]; /* [count] "e1", "hh2", … */
  double *energy_eV;       /* [count × points] absolute energy of miniband j at q_i */
  double *bottom_eV, *top_eV, *width_eV, *mass_m0, *bound_eV; /* [count] */
  double window_top_eV[EW_BAND_COUNT]; /* absolute energy of each band's window top */
  size_t per_band[EW_BAND_COUNT];      /* minibands of each band */
  int kane;                /* 1: electrons with the Kane energy-dependent mass (as solve) */
  int doping_ignored;      /* 1: the stack is doped; minibands are flat-band */
  /* the multiband k·p model of one period (miniband_kp.c, kp_periodic.h); model 1: the
     single-band pencils above, and the members below stay empty */
  int model;               /* 1, 4, 6 or 8 */
  char (*kp_band)[4];      /* [count] "e", "hh", "lh", "so" by the q = 0 character (k·p) */
  double gap_eV;           /* 8-band: min over q of e1 − max over q of the top hole miniband */
  size_t kpoints;          /* in-plane samples at q = 0 (k·p; 0: none) */
  double *k_inv_nm;        /* [kpoints] along [100] */
  double *energy_k_eV;     /* [count × kpoints] E(k∥) at q = 0, pair means */
  size_t gap_index;        /* the count that splits the window's two sides (8-band: 2N) */
  size_t factorizations, solves, counts; /* work of the k·p solve */
};

/* The per-miniband arrays for count minibands on points q samples; 0 when out of memory
 * (ew_minibands_clear releases what was allocated). */
int ew_minibands_alloc(ew_minibands *mb, size_t count, size_t points);
/* The argument checks shared by both models; *step the grid step used. */
ew_status ew_minibands_check_args(const ew_stack *st, size_t points, double step_nm,
                                  double *step, ew_error *err);
/* The k·p minibands (miniband_kp.c): model 4, 6 or 8; E(q) at k∥ = 0 on points q samples and
 * E(k∥) at q = 0 on kpoints samples from 0 to kmax_inv_nm along [100] (kpoints 0: none). */
ew_status ew_minibands_run_kp(ew_minibands *mb, const ew_stack *st, int model, size_t points,
                              double step_nm, double kmax_inv_nm, size_t kpoints, ew_error *err);

/* Compute (replacing any earlier result); step_nm <= 0: the stack's or the solve's default. */
ew_status ew_minibands_run(ew_minibands *mb, const ew_stack *st, size_t points, double step_nm,
                           ew_error *err);
/* Release the arrays (the struct stays, zeroed). */
void ew_minibands_clear(ew_minibands *mb);

#endif
