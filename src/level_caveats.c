/* level_caveats.c — the computed levels against what the single-band model leaves out (see
 * level_caveats.h). */
#include "level_caveats.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include "constants.h"

/* gaps at or above this are "not given" (user materials; stack.c) */
#define GAP_UNKNOWN_EV 1e8

/* Height of layer ly's X (valley 1) or L (valley 2) edge above its Γ edge at fraction f of
 * the layer; NAN when the material has no such gap. */
static double valley_offset_eV(const ew_layer *ly, double f, int valley) {
  if (ly->user_material) return NAN;
  ew_bands b;
  ew_layer_bands_at(ly, f, &b);
  double eg = valley == 1 ? b.Eg_X_eV : b.Eg_L_eV;
  if (!(eg > 0.0) || eg >= GAP_UNKNOWN_EV) return NAN;
  return b.Ev_eV + eg - b.Ec_eV;
}

/* Scratch of the valley checks, per layer: the lowest X and L edges (absolute eV, with
 * field and potential; NAN when unknown), and for the state in hand its probability and the
 * WKB attenuation from its own layer.  Every array is filled in one pass over the nodes, so
 * the checks cost O(states × nodes). */
typedef struct {
  double *edge[3]; /* [1] X, [2] L */
  double *prob, *att;
} valley_work;

static void edges_fill(const ew_result *r, valley_work *w) {
  const ew_grid *g = r->grid;
  for (int v = 1; v <= 2; v++)
    for (size_t k = 0; k < r->stack->n_layers; k++) w->edge[v][k] = NAN;
  for (size_t j = 0; j < g->n; j++) {
    const ew_layer *ly = &r->stack->layers[g->layer[j]];
    double f = ly->thickness_nm > 0 ? (g->z[j] - ly->z_start_nm) / ly->thickness_nm : 0.5;
    for (int v = 1; v <= 2; v++) {
      double e = g->edge[EW_BAND_E][j] + valley_offset_eV(ly, f, v), *lo = &w->edge[v][g->layer[j]];
      if (isnan(*lo) || e < *lo) *lo = e;
    }
  }
}

/* WKB decay constant κ = √(2m(Ec − E))/ħ at node j (0 where E is above the Γ edge) */
static double kappa(const ew_grid *g, size_t j, double E) {
  double dv = g->edge[EW_BAND_E][j] - E;
  return dv > 0 ? sqrt(g->mass[EW_BAND_E][j] * dv / EW_HB2M0_EVNM2) : 0.0;
}

/* prob[k] = ∫|ψ_i|² over layer k; att[k] = ∫κ dz over the layers strictly between state i's
 * own layer and layer k (0 for its own and adjacent layers). */
static void state_fill(const ew_result *r, size_t i, valley_work *w) {
  const ew_grid *g = r->grid;
  const double *psi = r->psi + i * g->n;
  size_t nl = r->stack->n_layers, home = r->states[i].layer;
  double E = r->states[i].energy_eV;
  for (size_t k = 0; k < nl; k++) w->prob[k] = w->att[k] = 0.0;
  for (size_t j = 0; j < g->n; j++) w->prob[g->layer[j]] += g->w[j] * psi[j] * psi[j];
  for (int dir = -1; dir <= 1; dir += 2) { /* outward from home, to each side */
    double sum = 0.0, zprev = NAN, kprev = 0.0;
    size_t last = home;
    for (size_t s = 0; s < g->n; s++) {
      size_t j = dir > 0 ? s : g->n - 1 - s, k = g->layer[j];
      if (dir > 0 ? k <= home : k >= home) continue;
      if (k != last) { /* entering layer k: what lies between home and k is summed */
        w->att[k] = sum;
        last = k;
      }
      double kap = kappa(g, j, E);
      if (!isnan(zprev)) sum += 0.5 * (kap + kprev) * fabs(g->z[j] - zprev);
      zprev = g->z[j];
      kprev = kap;
    }
  }
}

/* The reachable layer of lowest X or L edge below state i's energy (SIZE_MAX: none). */
static size_t valley_layer(const ew_result *r, size_t i, int v, const valley_work *w,
                           double *edge_out, double *p_out) {
  size_t best = SIZE_MAX;
  for (size_t k = 0; k < r->stack->n_layers; k++) {
    double edge = w->edge[v][k];
    if (!(edge < r->states[i].energy_eV)) continue;
    if (w->prob[k] < EW_LEVEL_PROB_MIN && w->att[k] > EW_LEVEL_DECAY_LENGTHS) continue;
    if (best == SIZE_MAX || edge < *edge_out) best = k, *edge_out = edge, *p_out = w->prob[k];
  }
  return best;
}

/* The warning of valley v for its lowest level `first` (layer, edge, probability). */
static int valley_warn(ew_result *r, int v, size_t first, size_t layer, double edge, double p,
                       size_t higher) {
  static const char *vname[] = {"", "X", "L"};
  static const char *code[2][3] = {{"", "excited-level-above-x", "excited-level-above-l"},
                                   {"", "level-above-x", "level-above-l"}};
  const ew_state *s = &r->states[first];
  const ew_layer *ly = &r->stack->layers[layer];
  char more[64] = "";
  if (higher) snprintf(more, sizeof more, " (with %zu higher level%s)", higher, higher > 1 ? "s" : "");
  return ew_result_warn_code(r, code[s->n == 1][v], "%s (%.4f eV)%s lies %.1f meV above the %s "
                             "edge (%.4f eV) of layer '%s' (%s), where it has %.2g of its "
                             "probability: this Γ-valley model leaves out the %s states, with "
                             "which the level mixes%s; treat %s and its lines with care",
                             s->label, s->energy_eV, more, 1e3 * (s->energy_eV - edge), vname[v],
                             edge, ly->name, ly->material, p, vname[v],
                             s->n == 1 ? ", so the lowest electron state may be X- or L-like "
                                         "(type II in space or in k)" : "",
                             s->label);
}

/* One warning per valley: the lowest electron level above a reachable X (L) edge, with the
 * count of higher ones.  e1 there decides what the well is (the Γ–X crossover of narrow
 * GaAs/AlAs wells): "level-above-x"; only excited levels: "excited-level-above-x". */
static int valley_levels(ew_result *r) {
  size_t nl = r->stack->n_layers;
  double *buf = malloc(4 * nl * sizeof *buf);
  if (!buf) return 0;
  valley_work w = {{NULL, buf, buf + nl}, buf + 2 * nl, buf + 3 * nl};
  edges_fill(r, &w);
  size_t first[3] = {SIZE_MAX, SIZE_MAX, SIZE_MAX}, layer[3] = {0, 0, 0}, higher[3] = {0, 0, 0};
  double edge[3] = {0, 0, 0}, p[3] = {0, 0, 0};
  for (size_t i = 0; i < r->n_states; i++) {
    if (r->states[i].band != EW_BAND_E) continue;
    /* a level above no X or L edge has nothing to report: its probabilities and decay
       lengths (a pass over the grid with a root at every node) are not needed */
    int below = 0;
    for (size_t k = 0; k < nl && !below; k++)
      below = w.edge[1][k] < r->states[i].energy_eV || w.edge[2][k] < r->states[i].energy_eV;
    if (!below) continue;
    state_fill(r, i, &w);
    for (int v = 1; v <= 2; v++) {
      double e_i = 0.0, p_i = 0.0;
      size_t k = valley_layer(r, i, v, &w, &e_i, &p_i);
      if (k == SIZE_MAX) continue;
      if (first[v] != SIZE_MAX) higher[v]++;
      else first[v] = i, layer[v] = k, edge[v] = e_i, p[v] = p_i;
    }
  }
  free(buf);
  for (int v = 1; v <= 2; v++)
    if (first[v] != SIZE_MAX && !valley_warn(r, v, first[v], layer[v], edge[v], p[v], higher[v]))
      return 0;
  return 1;
}

static double ev_top(const ew_layer *ly) {
  return fmax(ly->bands.Ev_hh_eV, ly->bands.Ev_lh_eV);
}

/* The layers of lowest conduction and highest valence edge. */
static void extremes(const ew_stack *st, size_t *kc, size_t *kv) {
  *kc = *kv = 0;
  for (size_t k = 1; k < st->n_layers; k++) {
    if (st->layers[k].bands.Ec_eV < st->layers[*kc].bands.Ec_eV) *kc = k;
    if (ev_top(&st->layers[k]) > ev_top(&st->layers[*kv])) *kv = k;
  }
}

/* the highest hole level (hh1 or lh1), SIZE_MAX when none is bound */
static size_t top_hole(const ew_result *r) {
  size_t best = SIZE_MAX;
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].band != EW_BAND_E && r->states[i].n == 1 &&
        (best == SIZE_MAX || r->states[i].energy_eV > r->states[best].energy_eV))
      best = i;
  return best;
}
static size_t first_electron(const ew_result *r) {
  for (size_t i = 0; i < r->n_states; i++)
    if (r->states[i].band == EW_BAND_E && r->states[i].n == 1) return i;
  return SIZE_MAX;
}

/* Broken gap: a conduction edge, or e1, below a valence edge elsewhere.  Returns 1 when it
 * warned (sets *warned), 0 when out of memory. */
static int broken_gap(ew_result *r, int *warned) {
  const ew_stack *st = r->stack;
  size_t kc, kv, e1 = first_electron(r);
  extremes(st, &kc, &kv);
  const ew_layer *c = &st->layers[kc], *v = &st->layers[kv];
  int edges = c->bands.Ec_eV < ev_top(v);
  int level = e1 != SIZE_MAX && r->states[e1].energy_eV < ev_top(v);
  *warned = edges || level;
  if (!*warned) return 1;
  char what[400];
  if (edges)
    snprintf(what, sizeof what, "the conduction edge of '%s' (%s, %.4f eV)", c->name,
             c->material, c->bands.Ec_eV);
  else
    snprintf(what, sizeof what, "level e1 (%.4f eV)", r->states[e1].energy_eV);
  return ew_result_warn_code(r, "broken-gap", "%s lies below the valence edge of '%s' (%s, "
                             "%.4f eV): a broken-gap (type III) alignment, where conduction "
                             "and valence states mix across the interface; the single-band "
                             "model, which solves them apart, does not apply: use a multiband "
                             "(8-band k·p) envelope-function model", what, v->name, v->material,
                             ev_top(v));
}

/* Staggered alignment: the layers confining electrons and holes differ and each band's edge
 * is lower (electrons) / higher (holes) in its own layer. */
static int staggered(ew_result *r) {
  const ew_stack *st = r->stack;
  size_t kc, kv, e1 = first_electron(r), h1 = top_hole(r);
  extremes(st, &kc, &kv);
  size_t ke = e1 != SIZE_MAX ? r->states[e1].layer : kc;
  size_t kh = h1 != SIZE_MAX ? r->states[h1].layer : kv;
  const ew_layer *le = &st->layers[ke], *lh = &st->layers[kh];
  if (ke == kh || !(lh->bands.Ec_eV - le->bands.Ec_eV > 1e-3) || !(ev_top(lh) - ev_top(le) > 1e-3))
    return 1;
  char line[400];
  const ew_line *ln = NULL;
  for (size_t j = 0; j < r->n_lines && e1 != SIZE_MAX && h1 != SIZE_MAX; j++)
    if (r->lines[j].kind == EW_LINE_INTERBAND && r->lines[j].upper == e1 && r->lines[j].lower == h1)
      ln = &r->lines[j];
  if (ln)
    snprintf(line, sizeof line, "the e1-%s line (%.4f eV) is spatially indirect, overlap %.3g: "
             "weak, and shifted by any field or charge", r->states[h1].label, ln->energy_eV,
             ln->overlap);
  else
    snprintf(line, sizeof line, "no interband line: no %s level is bound",
             e1 == SIZE_MAX ? "electron" : "hole");
  return ew_result_warn_code(r, "type-ii", "staggered (type II) alignment: electrons are "
                             "confined in '%s' (%s, Ec %.4f eV), holes in '%s' (%s, Ev %.4f eV); "
                             "%s", le->name, le->material, le->bands.Ec_eV, lh->name,
                             lh->material, ev_top(lh), line);
}

/* Electrons bound, holes not: say why. */
static int no_holes(ew_result *r) {
  const ew_stack *st = r->stack;
  size_t e1 = first_electron(r);
  if (e1 == SIZE_MAX || r->band_count[EW_BAND_HH] || r->band_count[EW_BAND_LH]) return 1;
  size_t kc, kv;
  extremes(st, &kc, &kv);
  const ew_layer *le = &st->layers[r->states[e1].layer], *lv = &st->layers[kv];
  char why[600];
  if (ev_top(lv) - ev_top(le) > 1e-3)
    snprintf(why, sizeof why, "the valence edge is higher in '%s' (%s, %.4f eV) than in '%s' "
             "(%s, %.4f eV), which confines the electrons, so holes are not held there%s",
             lv->name, lv->material, ev_top(lv), le->name, le->material, ev_top(le),
             kv == 0 || kv == st->n_layers - 1 ? " and collect in an outer layer, which stands "
             "for semi-infinite material" : "");
  else
    snprintf(why, sizeof why, "the valence edge of '%s' (%s) is not above its neighbours' "
             "(no valence-band well)", le->name, le->material);
  return ew_result_warn_code(r, "no-bound-holes", "no hole level is bound: %s; the stack has "
                             "no interband lines", why);
}

int ew_level_caveats(ew_result *r) {
  int broken = 0;
  if (!valley_levels(r) || !broken_gap(r, &broken)) return 0;
  if (!broken && !staggered(r)) return 0;
  return no_holes(r);
}
