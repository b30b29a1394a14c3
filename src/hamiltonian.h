/* hamiltonian.h — the BenDaniel–Duke pencil (H, B) of one band on a grid.
 *
 * Box integration of −(ħ²/2) d/dz[(1/m) dψ/dz] + Vψ = Eψ over the dual cell of node i
 * (D. J. BenDaniel, C. B. Duke, Phys. Rev. 152, 683 (1966)):
 *   H_ii     = K (1/M_i + 1/M_{i+1}) + w_i V_i,   H_i,i+1 = −K / M_{i+1},   B_ii = w_i,
 * with K = ħ²/(2 m0), M_c = ∫_cell c m dz and w_i the dual-cell length.  H is symmetric
 * tridiagonal, B diagonal positive: a symmetric-definite pencil. */
#ifndef EW_HAMILTONIAN_H
#define EW_HAMILTONIAN_H

#include "grid.h"

typedef struct {
  size_t n;
  double *diag; /* [n]   H_ii, eV·nm */
  double *off;  /* [n−1] H_i,i+1, eV·nm */
  double *b;    /* [n]   B_ii, nm */
  double vmin, vmax; /* range of the node potentials, eV */
  /* the standard form T = B^{-1/2} H B^{-1/2} the inertia counts run on, computed once at
     build: diagonal, squared off-diagonal, Gershgorin norm, smallest allowed pivot */
  double *std_d, *std_e2, std_norm, std_pivmin;
  double hnorm; /* ‖H‖∞, the scale of ew_pencil_residual */
} ew_pencil;

/* Allocate and fill the pencil of band on g; NULL when out of memory. */
ew_pencil *ew_pencil_build(const ew_grid *g, ew_band band);
/* The same with the cell mass integrals M[n+1] given (energy-dependent masses). */
ew_pencil *ew_pencil_build_mass(const ew_grid *g, ew_band band, const double *M);
/* Refill a pencil of g's size (p->n == g->n) with the masses M[n+1]: what _build_mass does
 * without allocating (the Kane iterations evaluate one pencil at many energies). */
void ew_pencil_refill_mass(ew_pencil *p, const ew_grid *g, ew_band band, const double *M);
void ew_pencil_free(ew_pencil *p);
/* r = Hx − e·Bx; returns ||r||_2 / (||H||_∞ ||x||_2), the relative residual. */
double ew_pencil_residual(const ew_pencil *p, const double *x, double e);

#endif
