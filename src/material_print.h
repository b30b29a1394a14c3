/* material_print.h — what `epiwell materials` prints: the catalogue list, and one material
 * at (x, y, T) with its parameters, sources, band parameters and strain.  Internal. */
#ifndef EW_MATERIAL_PRINT_H
#define EW_MATERIAL_PRINT_H

#include "catalogue.h"

/* Print the parameters at (x, T) with units and sources, and the derived band parameters,
 * as the `epiwell materials NAME --x X --temperature T` command shows them. */
ew_status ew_material_print(const ew_catalogue *cat, const char *name, double x, double T_K,
                            FILE *out, ew_error *err);
/* As ew_material_print at (x, y, T); y shown for quaternaries; with a_sub_nm > 0 also
 * the strain results (strains, shifts, strained edges and gaps, critical thickness), as
 * `epiwell materials NAME --x X --y Y --substrate SUB` is to show them.  ew_material_print
 * is this with y unused and no substrate (and fails for quaternaries). */
ew_status ew_material_print_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, FILE *out, ew_error *err);
/* Print the catalogue list (`epiwell materials`). */
void ew_catalogue_print(const ew_catalogue *cat, FILE *out);

#endif
