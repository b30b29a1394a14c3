/* level_caveats.h — warnings about the computed levels against what the single-band (Γ,
 * BenDaniel–Duke) model leaves out: other conduction valleys, staggered and broken-gap
 * alignments, a stack that binds no holes.  Run on a finished pass (states and lines). */
#ifndef EW_LEVEL_CAVEATS_H
#define EW_LEVEL_CAVEATS_H

#include "result.h"

/* A Γ electron level counts against a layer's X or L edge when it has at least this much
 * probability in the layer (common practice: 1e-3 of the state is enough for interface Γ–X
 * mixing to matter) ... */
#define EW_LEVEL_PROB_MIN 1e-3
/* ... or when the layer lies within this many decay lengths of the layer holding the level
 * (WKB attenuation ∫κ dz ≤ 3, κ = √(2m(Ec − E))/ħ: |ψ|² down by e⁻⁶). */
#define EW_LEVEL_DECAY_LENGTHS 3.0

/* Append to r's warnings (codes in README "Warnings"):
 *  "level-above-x" / "level-above-l": e1 (the Γ ground state) above the X (L) edge of a layer
 *    it reaches (above); "excited-level-above-x" / "-l": only excited levels are; one warning
 *    per valley naming the lowest such level, the layer of lowest edge and the valley;
 *  "broken-gap": a conduction edge or an electron level below a valence edge elsewhere;
 *  "type-ii": a staggered alignment, naming the layers that confine electrons and holes and
 *    the spatially indirect line when both are bound (lines.c lists every e–h pair);
 *  "no-bound-holes": electrons bound but no hole level, with the reason.
 * X and L edges are the relaxed material's gaps above its valence edge, moved with the Γ edge
 * by the field and the self-consistent potential (their strain shifts are not modelled).
 * Returns 0 when out of memory. */
int ew_level_caveats(ew_result *r);

#endif
