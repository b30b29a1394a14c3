/* stack_caveats.c — warnings about the stack itself: what the model leaves out for its
 * layers (other conduction valleys, a missing substrate, strain relaxation). */
#include "stack_caveats.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>

#include "alloy.h"
#include "strain.h"

/* Layers whose lowest conduction minimum is not Γ. */
static int valley_caveats(ew_result *r) {
  const ew_stack *st = r->stack;
  static const char *valley[] = {"Γ", "X", "L"};
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_bands *b = &st->layers[k].bands;
    if (b->lowest_valley > 0 && b->lowest_valley < 3) {
      double eg = b->lowest_valley == 1 ? b->Eg_X_eV : b->Eg_L_eV;
      if (!ew_result_warn_code(r, "indirect-layer",
                       "layer '%s' (%s): the lowest conduction minimum is %s (%.3f eV) below Γ "
                       "(%.3f eV): electrons there scatter into %s states, which this Γ-valley "
                       "model does not contain; the layer's effective barrier for electrons is "
                       "lower than shown",
                       st->layers[k].name, st->layers[k].material, valley[b->lowest_valley], eg,
                       b->Eg_G_eV, valley[b->lowest_valley]))
        return 0;
    }
  }
  return 1;
}

/* Lattice constant range of a layer (a graded layer: both faces and its centre). */
static void layer_a_range(const ew_layer *ly, double *lo, double *hi) {
  double f[3] = {0.0, 0.5, 1.0};
  *lo = *hi = ly->bands.a_nm;
  if (!ly->profile) return;
  for (int i = 0; i < 3; i++) {
    ew_bands b;
    ew_layer_bands_at(ly, f[i], &b);
    if (b.a_nm < *lo) *lo = b.a_nm;
    if (b.a_nm > *hi) *hi = b.a_nm;
  }
}

/* Catalogue layers of different lattice constants computed unstrained, without a word of
 * what that costs: the substrate sets the strain (README "Strain"). */
static int substrate_caveat(ew_result *r) {
  const ew_stack *st = r->stack;
  if (st->substrate[0]) return 1;
  size_t klo = SIZE_MAX, khi = SIZE_MAX;
  double alo = 0.0, ahi = 0.0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    if (ly->user_material || !(ly->bands.a_nm > 0.0)) continue; /* no lattice constant */
    double lo, hi;
    layer_a_range(ly, &lo, &hi);
    if (klo == SIZE_MAX || lo < alo) klo = k, alo = lo;
    if (khi == SIZE_MAX || hi > ahi) khi = k, ahi = hi;
  }
  if (klo == SIZE_MAX || !((ahi - alo) / alo > EW_NO_SUBSTRATE_MISMATCH)) return 1;
  const ew_layer *first = &st->layers[0];
  char how[160];
  if (!first->user_material && !first->has_x)
    snprintf(how, sizeof how, "substrate = \"%s\";", first->material);
  else
    snprintf(how, sizeof how, "substrate = \"GaAs\"; or substrate = { material = \"InGaAs\"; "
             "x = 0.53; };");
  return ew_result_warn_code(r, "no-substrate",
                        "layers '%s' (%s, a = %.5f nm) and '%s' (%s, a = %.5f nm) differ in "
                        "lattice constant by %.2f %%, but the stack has no substrate: every "
                        "layer is computed unstrained, so strained edges may be off by tens of "
                        "meV; name the wafer with a top-level key, e.g. %s",
                        st->layers[khi].name, st->layers[khi].material, ahi,
                        st->layers[klo].name, st->layers[klo].material, alo,
                        100.0 * (ahi - alo) / alo, how);
}

/* the layer at the uncapped surface (stack_caveats.h) */
static size_t surface_layer(const ew_stack *st) {
  return st->surface_given ? 0 : st->n_layers - 1;
}

static double layer_nu(const ew_bands *b) {
  return b->c11_kbar > 0 && b->c12_kbar > 0 ? ew_strain_poisson(b->c11_kbar, b->c12_kbar) : 0.3;
}

double ew_stack_layer_hc_nm(const ew_stack *st, size_t k) {
  const ew_bands *b = &st->layers[k].bands;
  /* the 60° misfit dislocations of zinc blende do not exist on the wurtzite c plane: no
     critical thickness is claimed there (README "Nitrides", limits) */
  if (b->wurtzite || b->eps_par == 0.0 || !(b->a_nm > 0.0)) return INFINITY;
  double hc = ew_mb_critical_thickness_nm(b->a_nm, b->eps_par, layer_nu(b),
                                          k == surface_layer(st) ? 1 : 2);
  return isnan(hc) ? INFINITY : hc;
}

/* biaxial modulus A = c11 + c12 − 2 c12²/c11 (Ekins-Daukes et al. 2002); 1 when unknown
 * (user materials: plain thickness weighting) */
static double biaxial_modulus(const ew_bands *b) {
  return b->c11_kbar > 0 ? b->c11_kbar + b->c12_kbar - 2.0 * b->c12_kbar * b->c12_kbar / b->c11_kbar
                         : 1.0;
}

size_t ew_stack_strain_block(const ew_stack *st, ew_strain_block *blk) {
  size_t n_strained = 0;
  blk->first = SIZE_MAX;
  blk->last = 0;
  for (size_t k = 0; k < st->n_layers; k++)
    if (st->layers[k].bands.eps_par != 0.0) {
      if (blk->first == SIZE_MAX) blk->first = k;
      blk->last = k;
      n_strained++;
    }
  blk->thickness_nm = blk->mean_eps = 0.0;
  blk->hc_nm = INFINITY;
  blk->at_surface = 0;
  if (n_strained < 2) return n_strained; /* a single layer is judged by its own thickness */
  double sum_at = 0.0, sum_aet = 0.0, a = 0.0, nu = 0.3;
  for (size_t k = blk->first; k <= blk->last; k++) {
    const ew_layer *ly = &st->layers[k];
    double A = biaxial_modulus(&ly->bands);
    blk->thickness_nm += ly->thickness_nm;
    sum_at += A * ly->thickness_nm;
    sum_aet += A * ly->bands.eps_par * ly->thickness_nm;
    if (a == 0.0 && ly->bands.eps_par != 0.0) a = ly->bands.a_nm, nu = layer_nu(&ly->bands);
  }
  blk->mean_eps = sum_aet / sum_at;
  size_t s = surface_layer(st);
  blk->at_surface = s >= blk->first && s <= blk->last;
  /* |mean| below 1e-6 is balanced to the precision of the catalogue's lattice constants */
  if (fabs(blk->mean_eps) > 1e-6 && a > 0.0) {
    double hc = ew_mb_critical_thickness_nm(a, blk->mean_eps, nu, blk->at_surface ? 1 : 2);
    blk->hc_nm = isnan(hc) ? INFINITY : hc;
  }
  return n_strained;
}

/* The one critical-thickness rule (stack_caveats.h). */
static int strain_caveats(ew_result *r) {
  const ew_stack *st = r->stack;
  size_t s = surface_layer(st);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double hc = ew_stack_layer_hc_nm(st, k);
    if (ly->thickness_nm > hc &&
        !ew_result_warn_code(r, "critical-thickness", "layer '%s' (%s): %.2f nm exceeds its "
                     "Matthews–Blakeslee critical thickness %.2f nm at strain %.3f %% (%s): it "
                     "is likely to relax by misfit dislocations, and the strained band edges "
                     "used here would not apply", ly->name, ly->material, ly->thickness_nm, hc,
                     100.0 * ly->bands.eps_par,
                     k == s ? "uncapped surface layer, one interface" : "buried layer, two interfaces"))
      return 0;
  }
  ew_strain_block blk;
  if (st->polarized) return 1; /* wurtzite: no Matthews–Blakeslee rule (above) */
  if (ew_stack_strain_block(st, &blk) < 2 || !(blk.thickness_nm > blk.hc_nm)) return 1;
  return ew_result_warn_code(r, "critical-thickness", "cumulative strain: layers '%s' to '%s' "
                        "(%.1f nm, spacers included) have a mean strain of %.3f %%, beyond the "
                        "%.1f nm a layer of that strain could keep coherent (Matthews–Blakeslee, "
                        "%s); strain-balance the stack (N. J. Ekins-Daukes et al., Cryst. Growth "
                        "Des. 2, 287 (2002)) or expect relaxation",
                        st->layers[blk.first].name, st->layers[blk.last].name, blk.thickness_nm,
                        100.0 * blk.mean_eps, blk.hc_nm,
                        blk.at_surface ? "one interface" : "buried");
}

/* The Kane relation moves the band-edge electron mass with the whole Varshni gap shift
 * (alloy.c).  For GaAs that gives 0.062 m0 at 300 K against measured 0.063–0.065 (from
 * memory); for the narrow gaps the shift is large and the measured masses stay nearer the
 * 0 K value (InSb about 0.014 m0 at 300 K, NSM archive, from memory, where the relation
 * gives 0.010).  Beyond EW_MASS_T_SHIFT of relative change the layer's mass, and so its
 * electron levels, carry a warning. */
#define EW_MASS_T_SHIFT 0.12

static int mass_temperature_caveat(ew_result *r) {
  const ew_stack *st = r->stack;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_bands *b = &st->layers[k].bands;
    if (!(b->me0 > 0.0) || !(b->Eg0_G_eV > 0.0)) continue;
    double mT = ew_kane_edge_mass(b->me0, b->Ep_eV, b->Dso_eV, b->Eg0_G_eV, b->Eg_G_eV);
    double shift = mT / b->me0 - 1.0;
    if (!(fabs(shift) > EW_MASS_T_SHIFT)) continue;
    if (!ew_result_warn_code(r, "electron-mass-temperature",
                             "layer '%s' (%s): the electron mass %.4f m0 at %g K is the 0 K "
                             "mass %.4f m0 moved %+.0f %% by the Kane relation with the whole "
                             "gap shift; measured narrow-gap masses move less with "
                             "temperature, so electron levels and intersubband lines may be "
                             "off by up to that much of their confinement energy",
                             st->layers[k].name, st->layers[k].material, mT,
                             st->temperature_K, b->me0, 100.0 * shift))
      return 0;
  }
  return 1;
}

int ew_stack_caveats(ew_result *r) {
  return valley_caveats(r) && substrate_caveat(r) && strain_caveats(r) &&
         mass_temperature_caveat(r);
}
