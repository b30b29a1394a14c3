/* kp_periodic.h — the multiband k·p pencil (kp_hamiltonian.h: 4-, 6- or 8-band, Burt–Foreman
 * ordering, Foreman's Ep rescaling, Bir–Pikus strain, all exactly as in the hard-wall stack)
 * of ONE superlattice period with the Bloch condition ψ(z + d) = e^{iqd} ψ(z) (F. Bloch,
 * Z. Phys. 52, 555 (1929)), its certified inertia count and its eigenvalues by shift-invert.
 *
 * Grid (as miniband.h): the period's faces z = 0 and z = d are one node, node 0; the grid's n
 * nodes follow as nodes 1 … n, N = n + 1 nodes and N cells, the last cell [z_{n−1}, d]
 * joining node N − 1 to node 0 of the next period.  The period's profile is the stack's
 * k·p profile with its cells and nodes renumbered so (cell 0 is the face cell, the left cell
 * of node 0), and the face node's dual-cell potentials taken as miniband.c takes them
 * (ew_mb_period_node_pot; its shear strain and Δso the half-cell-weighted means of the two
 * outer layers).  The pencil is then the block-tridiagonal k·p pencil of N nodes plus the
 * corner blocks
 *   H_{N−1,0} = W e^{iqd},   H_{0,N−1} = Wᴴ e^{−iqd},
 * W the coupling through the face cell (ew_kp_coupling_fill), Hermitian for every q;
 * B = diag(w) ⊗ 1.  Hole picture (λ = −E) as kp_hamiltonian.h.
 *
 * Count (number of eigenvalues below σ, Sylvester's law of inertia): the open block of nodes
 * 0 … N−2 by the block LDLᴴ recurrence (kp_inertia.h) with the fill towards the corner node
 * N − 1 carried along, F_0 = H_{0,N−1}, F_{j+1} = H_{j+1,N−1} − C_jᴴ D_j⁻¹ F_j, and the corner's
 * nb × nb Schur complement S = A_{N−1} − σ w_{N−1} − Σ_j F_jᴴ D_j⁻¹ F_j, whose inertia adds
 * (E. V. Haynsworth, Linear Algebra Appl. 1, 73 (1968)); every pivot block by LAPACK's
 * zhetrf (Bunch–Kaufman).
 *
 * Eigenvalues of an index window k0 … k0 + m − 1 (kp_periodic_solve.c): cuts σ with exact
 * counts split the window into groups (a Kramers pair each, as a rule; bisection on the count
 * where a group is not yet isolated); each group [a, b] holding g eigenvalues is solved by
 * block shift-invert iteration with SuperLU's complex LU (superlu_adapter.h, the periodic
 * block pattern) and a Rayleigh–Ritz step, the shift moved to the Ritz mean (block Rayleigh
 * quotient iteration).  A group is accepted when its B-orthonormal Ritz block has a residual
 * ρ = ‖B^{−1/2}(HX − BXΘ)‖_F with every θ_j ± ρ inside (a, b): then g eigenvalues lie within
 * ρ of the θ_j (Kahan's theorem, B. N. Parlett, The Symmetric Eigenvalue Problem (SIAM
 * 1998), Thm 11.5.1; from memory) and the counts at a and b say there are exactly g in
 * (a, b), so the θ_j are those g, each within ρ. */
#ifndef EW_KP_PERIODIC_H
#define EW_KP_PERIODIC_H

#include <complex.h>

#include "kp_hamiltonian.h"
#include "lapack_dyn.h"

typedef struct {
  size_t n;             /* nodes N (>= 3) */
  int nb;               /* block size 4, 6 or 8 */
  double period_nm;     /* d */
  ew_kp_profile *prof;  /* the period's profile (N nodes, N + 1 cells: cell N = cell 0) */
  ew_kp_pencil *H;      /* the open block-tridiagonal part at the last fill */
  double complex *wrap; /* [nb²] W = H_{N−1,N} through the face cell, column-major */
  double norm;          /* a bound on ‖B^{−1/2} H B^{−1/2}‖ including the corners */
  double ec_max;        /* highest conduction edge over the nodes, eV (8-band) */
  double ev_min;        /* lowest valence top max(v_xy, v_z) over the nodes, eV */
  ew_lapack lp;         /* the block counts' and the solver's LAPACK (lapack_dyn.h) */
} ew_kpp_pencil;

/* The periodic pencil of the period st on its layered grid g (no field; the caller checks).
 * EW_ERR_NOMEM; EW_ERR_INPUT as ew_kp_profile_build, or a grid of fewer than 2 nodes. */
ew_status ew_kpp_build(const ew_stack *st, const ew_grid *g, ew_kp_model model,
                       ew_kpp_pencil **out, ew_error *err);
void ew_kpp_free(ew_kpp_pencil *p);
/* Fill at in-plane (kx, ky), 1/nm (the Bloch phase enters only where it is used). */
void ew_kpp_fill(ew_kpp_pencil *p, double kx, double ky);
/* Dimension N · nb. */
size_t ew_kpp_dim(const ew_kpp_pencil *p);
/* Dense H(q) (column-major dim × dim, out[dim²]) at phase qd = q·d, for tests against LAPACK. */
void ew_kpp_dense(const ew_kpp_pencil *p, double qd, double complex *out);
/* y = H(q) x. */
void ew_kpp_apply(const ew_kpp_pencil *p, double qd, const double complex *x, double complex *y);

/* Number of eigenvalues of (H(q), B) below sigma.  EW_OK; EW_ERR_NUMERIC when a pivot block is
 * exactly singular (the caller moves sigma); EW_ERR_NOMEM. */
ew_status ew_kpp_count_below(const ew_kpp_pencil *p, double qd, double sigma, size_t *count,
                             ew_error *err);

/* ---- eigenvalues (kp_periodic_solve.c) ------------------------------------------------ */
typedef struct ew_kpp_solver ew_kpp_solver;
/* A solver for windows of up to mmax eigenvalues; NULL when out of memory. */
ew_kpp_solver *ew_kpp_solver_create(const ew_kpp_pencil *p, size_t mmax);
void ew_kpp_solver_free(ew_kpp_solver *s);
/* Eigenvalues k0 … k0 + m − 1 (0-based from below, hole picture) of the pencil's present fill
 * at phase qd: values[m] ascending, bound[m] each certified |θ − λ| bound (see above); the
 * vectors (B-orthonormal, column j of ew_kpp_solver_vectors) start the next call when
 * warm != 0 (the last call's values then place the cuts).  EW_OK; EW_ERR_NUMERIC (no
 * convergence, or no isolating cut); EW_ERR_NOMEM. */
ew_status ew_kpp_window(ew_kpp_solver *s, double qd, size_t k0, size_t m, int warm,
                        double *values, double *bound, ew_error *err);
const double complex *ew_kpp_solver_vectors(const ew_kpp_solver *s);
/* Work so far (factorisations, solves, counts), for the figures. */
void ew_kpp_solver_work(const ew_kpp_solver *s, size_t *factorizations, size_t *solves,
                        size_t *counts);

#endif
