/* bound.c — the bound window of a band and the box-state test of a field-tilted stack. */
#include "bound.h"

#include <math.h>

/* Top of the bound window of a band (positive-mass scale): the continuum of each side starts
 * at the band edge the outer layer has at its outer face (the outer layers stand for
 * semi-infinite material), the lower of the two sides.  Edges read off the grid's nodes, so
 * they include grading and the self-consistent potential: a barrier that band bending lifts
 * next to the well does not make its flat far part "bound" (its box states against the
 * outer walls would pass as levels).  In a field the faces' edges differ by the tilt and
 * every state is a resonance: each side then counts up to its highest point, and the box
 * states are dropped by their location (ew_bound_inner_probability). */
double ew_bound_window_rule(int tilted, const double face[2], const double highest[2]) {
  return tilted ? fmin(highest[0], highest[1]) : fmin(face[0], face[1]);
}

double ew_bound_window_top(const ew_stack *st, const ew_grid *g, ew_band band) {
  double sgn = band == EW_BAND_E ? 1.0 : -1.0;
  double face[2] = {sgn * g->edge[band][0], sgn * g->edge[band][g->n - 1]};
  double highest[2] = {-INFINITY, -INFINITY};
  size_t last = st->n_layers - 1;
  for (size_t i = 0; i < g->n; i++) {
    int side = g->layer[i] == 0 ? 0 : g->layer[i] == last ? 1 : -1;
    double v = sgn * g->edge[band][i];
    if (side >= 0 && v > highest[side]) highest[side] = v;
  }
  if (st->n_layers == 1) highest[1] = highest[0];
  return ew_bound_window_rule(st->field_kV_cm != 0.0, face, highest);
}

/* In a field no state is truly bound and the hard walls turn the continuum into box states
 * living in the tilted outer layers.  A quasi-bound well state keeps most of its probability
 * in the inner layers (everything between the two outer layers); a box state does not.
 * Returns that inner probability (1 when there are no inner layers to tell them apart). */
double ew_bound_inner_probability(const ew_stack *st, const ew_grid *g, const double *psi) {
  if (st->n_layers < 3) return 1.0;
  double zl = st->layers[1].z_start_nm, zr = st->layers[st->n_layers - 1].z_start_nm;
  double p = 0.0;
  for (size_t i = 0; i < g->n; i++)
    if (g->z[i] >= zl && g->z[i] <= zr) p += g->w[i] * psi[i] * psi[i];
  return p;
}
