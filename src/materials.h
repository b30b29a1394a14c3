/* materials.h — the material modules in one include: the catalogue read from
 * materials/NAME.cfg (catalogue.h: parameter keys and units, entries, names), a material
 * evaluated at (x, y, T) (alloy.h: Vegard with bowing, quaternary schemes, Varshni, strain
 * on a substrate), lattice matching (lattice_match.h) and what `epiwell materials` prints
 * (material_print.h).  Internal; the public face is in epiwell.h. */
#ifndef EW_MATERIALS_H
#define EW_MATERIALS_H

#include "alloy.h"
#include "catalogue.h"
#include "lattice_match.h"
#include "material_print.h"

#endif
