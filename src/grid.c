/* grid.c — node placement and exact piecewise integrals of mass and potential. */
#include "grid.h"
#include "polarization.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

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

/* Electrostatic potential energy of an electron, eV, from the applied field: F (z − L/2)
 * with F in eV/nm (1 kV/cm = 1e-4 V/nm).  A positive field raises an electron's energy
 * with z; both band edges shift by the same amount.  The reference at the stack's centre
 * keeps absolute energies near their field-free values. */
static double field_slope(const ew_stack *st) { return st->field_kV_cm * 1e-4; }

double ew_stack_field_eV(const ew_stack *st, double z) {
  /* plus the static polarisation fields of an undoped wurtzite stack (polarization.h) */
  return field_slope(st) * (z - 0.5 * st->total_nm) + ew_polarization_eV(st, z);
}

static double edge_of(const ew_bands *b, ew_band band) {
  return band == EW_BAND_E ? b->Ec_eV : band == EW_BAND_HH ? b->Ev_hh_eV : b->Ev_lh_eV;
}
static double mass_of(const ew_bands *b, ew_band band) {
  return band == EW_BAND_E ? b->me : band == EW_BAND_HH ? b->mhh_z : b->mlh_z;
}

/* f = mass (what = 0) or positive-mass potential (what = 1: Ec for electrons, −Ev for holes;
 * the field is added separately) of layer ly at fraction u of its thickness. */
static double layer_value(const ew_layer *ly, ew_band band, int what, double u) {
  ew_bands b;
  ew_layer_bands_at(ly, u, &b);
  if (what == 0) return mass_of(&b, band);
  double e = edge_of(&b, band);
  return band == EW_BAND_E ? e : -e;
}

/* ∫_a^b f dz over the layers: exact for piecewise-constant layers and for graded layers
 * (whose parameters are piecewise linear between their samples: trapezoid per piece), and
 * exact for the linear field term. */
static double integrate(const ew_stack *st, ew_band band, int what, double a, double b,
                        size_t *k0) {
  double sum = 0.0;
  /* calls come in increasing a: *k0 is the first layer that can still overlap [a, b] */
  while (*k0 + 1 < st->n_layers && st->layers[*k0].z_start_nm + st->layers[*k0].thickness_nm <= a)
    ++*k0;
  for (size_t k = *k0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double z0 = ly->z_start_nm, t = ly->thickness_nm;
    if (z0 >= b) break;
    /* finite positions: comparisons, not fmax/fmin calls (this runs per cell, band, grid) */
    double lo = a > z0 ? a : z0, hi = b < z0 + t ? b : z0 + t;
    if (hi <= lo) continue;
    if (!ly->profile) {
      double e = ew_layer_edge(ly, band);
      sum += (hi - lo) * (what == 0 ? ew_layer_mass(ly, band) : band == EW_BAND_E ? e : -e);
    } else {
      double piece = t / (EW_GRADE_SAMPLES - 1);
      double p = lo;
      while (p < hi) {
        double q = fmin(hi, z0 + (floor((p - z0) / piece + 1e-9) + 1.0) * piece);
        if (q <= p) q = hi;
        sum += 0.5 * (q - p) *
               (layer_value(ly, band, what, (p - z0) / t) + layer_value(ly, band, what, (q - z0) / t));
        p = q;
      }
    }
  }
  if (what == 1 && st->field_kV_cm != 0.0) {
    double F = field_slope(st), c = 0.5 * st->total_nm;
    double lin = 0.5 * ((b - c) * (b - c) - (a - c) * (a - c)); /* ∫ (z − c) dz */
    sum += (band == EW_BAND_E ? F : -F) * lin;
  }
  if (what == 1 && st->polarized) {
    double u = ew_polarization_integral(st, a, b);
    sum += band == EW_BAND_E ? u : -u;
  }
  return sum;
}

/* band edge in layer k at z (absolute eV, with grading and the field) */
static double edge_in(const ew_stack *st, size_t k, ew_band band, double z) {
  const ew_layer *ly = &st->layers[k];
  double e;
  if (!ly->profile) {
    e = ew_layer_edge(ly, band);
  } else {
    ew_bands b;
    ew_layer_bands_at(ly, (z - ly->z_start_nm) / ly->thickness_nm, &b);
    e = edge_of(&b, band);
  }
  return e + ew_stack_field_eV(st, z);
}

/* the layer ew_stack_edge_at reads at z, searched on from *k (z increasing) */
static size_t edge_layer(const ew_stack *st, double z, size_t k) {
  while (k + 1 < st->n_layers && z >= st->layers[k + 1].z_start_nm) k++;
  return k;
}

double ew_stack_edge_at(const ew_stack *st, ew_band band, double z) {
  return edge_in(st, edge_layer(st, z, 0), band, z);
}

/* the layer holding z (the right one at an interface), searched on from k (z increasing) */
static size_t layer_from(const ew_stack *st, double z, size_t k) {
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
  free(g->U);
  free(g);
}

int ew_grid_add_potential(ew_grid *g, const double *U) {
  if (!U) return 1;
  if (!g->U) {
    g->U = calloc(g->n, sizeof *g->U);
    if (!g->U) return 0;
  }
  for (size_t i = 0; i < g->n; i++) {
    g->U[i] += U[i];
    for (int b = 0; b < EW_BAND_COUNT; b++) {
      g->edge[b][i] += U[i];
      g->pot[b][i] += b == EW_BAND_E ? U[i] : -U[i];
    }
  }
  return 1;
}

/* a copy of k elements of size sz at p (NULL stays NULL); *ok becomes 0 when out of memory */
static void *dup_of(const void *p, size_t k, size_t sz, int *ok) {
  if (!p) return NULL;
  void *q = malloc(k * sz);
  if (q) memcpy(q, p, k * sz);
  else *ok = 0;
  return q;
}

ew_grid *ew_grid_copy(const ew_grid *g) {
  ew_grid *c = calloc(1, sizeof *c);
  if (!c) return NULL;
  size_t n = g->n, m = n ? n : 1, d = sizeof(double);
  int ok = 1;
  c->n = n, c->length_nm = g->length_nm;
  c->z = dup_of(g->z, m, d, &ok);
  c->w = dup_of(g->w, m, d, &ok);
  c->h = dup_of(g->h, n + 1, d, &ok);
  c->layer = dup_of(g->layer, m, sizeof *g->layer, &ok);
  c->U = dup_of(g->U, m, d, &ok);
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    c->cell_mass[b] = dup_of(g->cell_mass[b], n + 1, d, &ok);
    c->pot[b] = dup_of(g->pot[b], m, d, &ok);
    c->edge[b] = dup_of(g->edge[b], m, d, &ok);
    c->mass[b] = dup_of(g->mass[b], m, d, &ok);
  }
  if (!ok) {
    ew_grid_free(c);
    return NULL;
  }
  return c;
}

void ew_grid_sample_coarse(const double *U_fine, size_t n_coarse, double *out) {
  for (size_t i = 0; i < n_coarse; i++) out[i] = U_fine[2 * i + 1];
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
  size_t kl = 0; /* nodes are increasing: the layer searches move on, never restart */
  for (size_t i = 0; i < n; i++) {
    g->w[i] = 0.5 * (g->h[i] + g->h[i + 1]);
    g->layer[i] = kl = layer_from(st, g->z[i], kl);
  }
  for (int band = 0; band < EW_BAND_COUNT; band++) {
    size_t k0 = 0, ke = 0;
    for (size_t c = 0; c <= n; c++) {
      double a = c == 0 ? 0.0 : g->z[c - 1], b = c == n ? g->length_nm : g->z[c];
      g->cell_mass[band][c] = integrate(st, (ew_band)band, 0, a, b, &k0);
    }
    k0 = 0;
    for (size_t i = 0; i < n; i++) {
      double a = g->z[i] - 0.5 * g->h[i], b = g->z[i] + 0.5 * g->h[i + 1];
      g->pot[band][i] = integrate(st, (ew_band)band, 1, a, b, &k0) / (b - a);
      const ew_layer *ly = &st->layers[g->layer[i]];
      if (!ly->profile) {
        g->mass[band][i] = ew_layer_mass(ly, (ew_band)band);
      } else {
        ew_bands bb;
        ew_layer_bands_at(ly, (g->z[i] - ly->z_start_nm) / ly->thickness_nm, &bb);
        g->mass[band][i] = mass_of(&bb, (ew_band)band);
      }
      ke = edge_layer(st, g->z[i], ke);
      g->edge[band][i] = edge_in(st, ke, (ew_band)band, g->z[i]);
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
