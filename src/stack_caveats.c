/* stack_caveats.c — warnings about the stack itself: what the model leaves out for its
 * layers (other conduction valleys, strain relaxation). */
#include "stack_caveats.h"

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

/* Strain: each layer against its Matthews–Blakeslee thickness, and the strained part of the
 * stack as one layer of the thickness-weighted mean strain (J. W. Matthews, A. E. Blakeslee,
 * J. Cryst. Growth 27, 118 (1974)). */
static int strain_caveats(ew_result *r) {
  const ew_stack *st = r->stack;
  double sum_t = 0.0, sum_et = 0.0, a = 0.0, nu = 0.0;
  int n_strained = 0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    const ew_bands *b = &ly->bands;
    if (b->eps_par == 0.0) continue;
    if (ly->thickness_nm > b->critical_thickness_nm &&
        !ew_result_warn_code(r, "critical-thickness", "layer '%s' (%s): %.2f nm exceeds its Matthews–Blakeslee critical "
                     "thickness %.2f nm at strain %.3f %%: it is likely to relax by misfit "
                     "dislocations, and the strained band edges used here would not apply",
                     ly->name, ly->material, ly->thickness_nm, b->critical_thickness_nm,
                     100.0 * b->eps_par))
      return 0;
    sum_t += ly->thickness_nm;
    sum_et += b->eps_par * ly->thickness_nm;
    n_strained++;
    if (a == 0.0)
      a = b->a_nm, nu = b->c11_kbar + b->c12_kbar > 0 ? b->c12_kbar / (b->c11_kbar + b->c12_kbar) : 0.3;
  }
  if (n_strained > 1 && sum_et != 0.0) { /* a single layer is judged by its own thickness */
    double mean = sum_et / sum_t, hc = ew_mb_critical_thickness_nm(a, mean, nu, 1);
    if (sum_t > hc &&
        !ew_result_warn_code(r, "critical-thickness", "cumulative strain: the strained layers add up to %.1f nm at a mean "
                     "strain of %.3f %%, beyond the %.1f nm a single layer of that strain "
                     "could keep coherent (Matthews–Blakeslee); strain-balance the stack or "
                     "expect relaxation", sum_t, 100.0 * mean, hc))
      return 0;
  }
  return 1;
}

int ew_stack_caveats(ew_result *r) { return valley_caveats(r) && strain_caveats(r); }
