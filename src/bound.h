/* bound.h — what counts as a bound state: the top of a band's bound window and, in a field,
 * the test that tells a quasi-bound well state from a box state of the tilted continuum. */
#ifndef EW_BOUND_H
#define EW_BOUND_H

#include "grid.h"

/* Top of the bound window of a band on the positive-mass scale (Ec, or −Ev for holes), from
 * the edges on the grid's nodes (which include grading, the field and any added potential):
 * without a field the lower of the two outer faces' edges; in a field the lower of the two
 * outer layers' highest edges (see bound.c). */
double ew_bound_window_top(const ew_stack *st, const ew_grid *g, ew_band band);

/* The rule itself, for any sampling of the two outer layers (the Schrödinger pass reads the
 * grid's nodes, the self-consistent gauge the potential between them), on the positive-mass
 * scale: face[s] is the edge at the outer face of side s (0: first layer, 1: last), highest[s]
 * the highest edge anywhere in that outer layer.  Without a field (tilted = 0) the continuum
 * starts at the lower outer face; in a field at the lower of the two sides' highest points. */
double ew_bound_window_rule(int tilted, const double face[2], const double highest[2]);

/* Probability of psi (normalised in the grid's box quadrature) in the inner layers, between
 * the two outer layers; 1 when there are fewer than three layers. */
double ew_bound_inner_probability(const ew_stack *st, const ew_grid *g, const double *psi);

/* A state of a field-tilted stack whose inner probability is below this is a box state. */
#define EW_BOUND_INNER_MIN 0.5

#endif
