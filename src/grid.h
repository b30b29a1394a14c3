/* grid.h — the finite-difference grid along z and the per-band profiles on it.
 *
 * Nodes z_0 < … < z_{n−1} lie strictly inside (0, L); ψ = 0 on the outer faces z = 0 and
 * z = L (hard walls far out in the outer barriers).  Cell c (c = 0 … n) spans
 * [z_{c−1}, z_c] with z_{−1} = 0 and z_n = L.  Box integration (BenDaniel–Duke flux
 * continuity) needs, per cell, the integral of the mass ∫m dz — the flux (1/m)ψ' through a
 * cell is (ψ_c − ψ_{c−1}) / ∫m dz exactly when the flux is constant across the cell, even
 * when an interface falls inside it — and, per node, the integral of the potential over the
 * dual cell [z_{i−1/2}, z_{i+1/2}].  Both integrals are taken exactly over the piecewise
 * layers, so interfaces may fall on nodes or between them.
 */
#ifndef EW_GRID_H
#define EW_GRID_H

#include "stack.h"

/* Largest grid, in nodes (total thickness / step), a solve accepts: every node costs about
 * 200 bytes per band (vectors, pencils, factorisations), so 5e6 nodes are ~3 GB, plus the
 * states' vectors (fine and coarse grid, the lines' work): 16 bytes per node per bound state.
 * Measured (peak RSS of `epiwell solve`, 2026-12-02): a 6 nm well in 2 x 400 nm barriers,
 * 7 states, 0.81 M nodes 497 MB and 1.61 M nodes 988 MB (610 bytes per node); the
 * 100-period superlattice of `make bench`, 435 states, 0.1 M nodes 766 MB (16.1 bytes per
 * node per state beyond those 610). */
#define EW_GRID_MAX_NODES 5e6
#define EW_GRID_BYTES_PER_NODE_BAND 200.0
#define EW_GRID_BYTES_PER_NODE_STATE 16.0

typedef struct {
  size_t n;          /* number of nodes (unknowns) */
  double length_nm;  /* L */
  double *z;         /* [n] node positions, nm */
  double *w;         /* [n] dual-cell lengths (h_c + h_{c+1})/2, nm: the diagonal of B */
  double *h;         /* [n+1] cell lengths, nm */
  double *cell_mass[EW_BAND_COUNT]; /* [n+1] ∫_cell m dz, m0·nm */
  double *pot[EW_BAND_COUNT];       /* [n] dual-cell mean of the band's potential energy, eV:
                                       Ec for electrons, −Ev for holes (positive-mass form) */
  double *edge[EW_BAND_COUNT];      /* [n] band edge of the node's layer (absolute eV) */
  double *mass[EW_BAND_COUNT];      /* [n] growth-axis mass of the node's layer, m0 */
  size_t *layer;                    /* [n] layer holding the node (right side at interfaces) */
  double *U;                        /* [n] electrostatic potential energy of an electron
                                       added to every edge (self-consistent doping), or NULL */
} ew_grid;

/* Add U[n] (eV, an electron's electrostatic potential energy at the nodes) to every band:
 * +U to the edges, +U to the electron potential, −U to the hole potentials.  Keeps a copy
 * in g->U (energy-dependent masses need it).  Returns 0 when out of memory. */
int ew_grid_add_potential(ew_grid *g, const double *U);
/* A deep copy of g (the same values bit for bit: a grid of the same stack and cells without
 * recomputing its integrals), or NULL when out of memory. */
ew_grid *ew_grid_copy(const ew_grid *g);
/* U on the coarse grid of every second node (node i = fine node 2i + 1), into out[coarse n]. */
void ew_grid_sample_coarse(const double *U_fine, size_t n_coarse, double *out);

/* Grid with cells_per_layer[k] equal cells in layer k (so every interface is a node).
 * Returns NULL when out of memory. */
ew_grid *ew_grid_layered(const ew_stack *st, const size_t *cells_per_layer);
/* Uniform grid of ncells equal cells over the whole stack, interfaces wherever they fall. */
ew_grid *ew_grid_uniform(const ew_stack *st, size_t ncells);
void ew_grid_free(ew_grid *g);

/* Cells per layer for a requested step: ceil(t/h) rounded up to an even number >= 2, so the
 * grid of every second node (step 2h) has the same interfaces — used for Richardson. */
void ew_grid_cells_for_step(const ew_stack *st, double step_nm, size_t *cells_per_layer);

/* An electron's potential energy from the applied field at z, eV: F·(z − L/2) (both edges
 * move by it). */
double ew_stack_field_eV(const ew_stack *st, double z);

/* Band edge of a band at position z (absolute eV), with grading and the applied field. */
double ew_stack_edge_at(const ew_stack *st, ew_band band, double z);

/* Band edge (absolute eV) and growth-axis mass of a layer for a band (ungraded value). */
double ew_layer_edge(const ew_layer *ly, ew_band band);
double ew_layer_mass(const ew_layer *ly, ew_band band);

#endif
