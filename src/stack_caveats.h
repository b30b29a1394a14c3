/* stack_caveats.h — warnings about what the model leaves out for a stack's layers. */
#ifndef EW_STACK_CAVEATS_H
#define EW_STACK_CAVEATS_H

#include "result.h"

/* Mismatch between catalogue layers above which a stack without a substrate is warned about
 * ("no-substrate"): 0.2 % (common practice: a pseudomorphic 0.2 % mismatch already shifts
 * the edges by tens of meV). */
#define EW_NO_SUBSTRATE_MISMATCH 2e-3

/* Append to r's warnings: layers whose lowest conduction minimum is X or L
 * ("indirect-layer"), catalogue layers of different lattice constants in a stack without a
 * substrate ("no-substrate"), and strain beyond the Matthews–Blakeslee critical thickness
 * ("critical-thickness", one rule, ew_stack_strain_rule below).  Returns 0 when out of
 * memory. */
int ew_stack_caveats(ew_result *r);

/* The critical-thickness rule, one for every stack (README "Strain"):
 *  - each strained layer against h_c of its own strain: the surface (uncapped) layer with
 *    the one-interface Matthews–Blakeslee form, a buried layer with the two-interface form
 *    (J. W. Matthews, A. E. Blakeslee, J. Cryst. Growth 27, 118 (1974); strain.h);
 *  - the strained block (first to last strained layer, spacers included) as one layer of
 *    the stiffness- and thickness-weighted mean strain Σ A_k ε_k t_k / Σ A_k t_k,
 *    A = c11 + c12 − 2 c12²/c11 (the zero-stress condition of N. J. Ekins-Daukes et al.,
 *    Cryst. Growth Des. 2, 287 (2002)), with the one-interface form when the block reaches
 *    the surface and the buried form otherwise.  A strain-balanced block has mean 0: no
 *    warning.
 * The surface layer is the last one in growth order, or the first when the stack pins a
 * `surface` (whose layers are listed from the surface inward).
 * Fills the block's thickness, mean strain and critical thickness (hc INFINITY when there
 * is no block of two or more strained layers); returns the number of strained layers. */
typedef struct {
  size_t first, last;      /* the block: layers first..last */
  double thickness_nm, mean_eps, hc_nm;
  int at_surface;          /* the block includes the surface layer */
} ew_strain_block;
size_t ew_stack_strain_block(const ew_stack *st, ew_strain_block *blk);
/* h_c of layer k by the rule above (INFINITY when unstrained). */
double ew_stack_layer_hc_nm(const ew_stack *st, size_t k);

#endif
