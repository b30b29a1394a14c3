/* grid.c — node placement and exact piecewise integrals of mass and potential. */
#include "grid.h"

#include <math.h>
#include <stdlib.h>

double ew_layer_edge(const ew_layer *ly, ew_band band) {
  switch (band) {
  case EW_BAND_E: return ly->bands.Ec_eV;
  case EW_BAND_HH: return ly->bands.Ev_hh_eV;
  default: return ly->bands.Ev_lh_eV;
  }
}

double ew_layer_mass(const ew_layer *ly, ew_band band) {
  switch (band) {
  case EW_BAND_E: return ly->bands.me;
  case EW_BAND_HH: return ly->bands.mhh_z;
  default: return ly->bands.mlh_z;
  }
}

/* Holes are solved as positive-mass particles in −Ev(z). */
static double layer_pot(const ew_layer *ly, ew_band band) {
  double edge = ew_layer_edge(ly, band);
  return band == EW_BAND_E ? edge : -edge;
}

/* ∫_a^b f dz over the piecewise-constant layers, f = mass (what=0) or potential (what=1). */
static double integrate(const ew_stack *st, ew_band band, int what, double a, double b) {
  double sum = 0.0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double lo = fmax(a, ly->z_start_nm), hi = fmin(b, ly->z_start_nm + ly->thickness_nm);
    if (hi <= lo) continue;
    sum += (hi - lo) * (what == 0 ? ew_layer_mass(ly, band) : layer_pot(ly, band));
  }
  return sum;
}

static size_t layer_of(const ew_stack *st, double z) {
  size_t k = 0;
  while (k + 1 < st->n_layers && z >= st->layers[k + 1].z_start_nm - 1e-12) k++;
  return k;
}

void ew_grid_free(ew_grid *g) {
  if (!g) return;
  free(g->z);
  free(g->w);
  free(g->h);
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    free(g->cell_mass[b]);
    free(g->pot[b]);
    free(g->edge[b]);
    free(g->mass[b]);
  }
  free(g->layer);
  free(g);
}

/* Fill everything from the node positions already in g->z. */
static ew_grid *finish(const ew_stack *st, ew_grid *g) {
  size_t n = g->n;
  g->w = malloc(n * sizeof *g->w);
  g->h = malloc((n + 1) * sizeof *g->h);
  g->layer = malloc(n * sizeof *g->layer);
  int ok = g->w && g->h && g->layer;
  for (int b = 0; b < EW_BAND_COUNT && ok; b++) {
    g->cell_mass[b] = malloc((n + 1) * sizeof(double));
    g->pot[b] = malloc(n * sizeof(double));
    g->edge[b] = malloc(n * sizeof(double));
    g->mass[b] = malloc(n * sizeof(double));
    ok = g->cell_mass[b] && g->pot[b] && g->edge[b] && g->mass[b];
  }
  if (!ok) {
    ew_grid_free(g);
    return NULL;
  }
  for (size_t c = 0; c <= n; c++) {
    double a = c == 0 ? 0.0 : g->z[c - 1], b = c == n ? g->length_nm : g->z[c];
    g->h[c] = b - a;
  }
  for (size_t i = 0; i < n; i++) {
    g->w[i] = 0.5 * (g->h[i] + g->h[i + 1]);
    g->layer[i] = layer_of(st, g->z[i]);
  }
  for (int band = 0; band < EW_BAND_COUNT; band++) {
    for (size_t c = 0; c <= n; c++) {
      double a = c == 0 ? 0.0 : g->z[c - 1], b = c == n ? g->length_nm : g->z[c];
      g->cell_mass[band][c] = integrate(st, (ew_band)band, 0, a, b);
    }
    for (size_t i = 0; i < n; i++) {
      double a = g->z[i] - 0.5 * g->h[i], b = g->z[i] + 0.5 * g->h[i + 1];
      g->pot[band][i] = integrate(st, (ew_band)band, 1, a, b) / (b - a);
      const ew_layer *ly = &st->layers[g->layer[i]];
      g->edge[band][i] = ew_layer_edge(ly, (ew_band)band);
      g->mass[band][i] = ew_layer_mass(ly, (ew_band)band);
    }
  }
  return g;
}

ew_grid *ew_grid_layered(const ew_stack *st, const size_t *cells) {
  ew_grid *g = calloc(1, sizeof *g);
  if (!g) return NULL;
  size_t total = 0;
  for (size_t k = 0; k < st->n_layers; k++) total += cells[k];
  g->n = total - 1;
  g->length_nm = st->total_nm;
  g->z = malloc((g->n ? g->n : 1) * sizeof *g->z);
  if (!g->z) {
    ew_grid_free(g);
    return NULL;
  }
  size_t i = 0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    for (size_t j = 1; j <= cells[k] && i < g->n; j++)
      g->z[i++] = ly->z_start_nm + ly->thickness_nm * (double)j / (double)cells[k];
  }
  return finish(st, g);
}

ew_grid *ew_grid_uniform(const ew_stack *st, size_t ncells) {
  ew_grid *g = calloc(1, sizeof *g);
  if (!g || ncells < 2) {
    free(g);
    return NULL;
  }
  g->n = ncells - 1;
  g->length_nm = st->total_nm;
  g->z = malloc(g->n * sizeof *g->z);
  if (!g->z) {
    ew_grid_free(g);
    return NULL;
  }
  for (size_t i = 0; i < g->n; i++) g->z[i] = st->total_nm * (double)(i + 1) / (double)ncells;
  return finish(st, g);
}

void ew_grid_cells_for_step(const ew_stack *st, double step_nm, size_t *cells) {
  for (size_t k = 0; k < st->n_layers; k++) {
    double m = ceil(st->layers[k].thickness_nm / step_nm - 1e-9);
    size_t c = (size_t)(m < 2.0 ? 2.0 : m);
    cells[k] = c + (c & 1u);
  }
}
