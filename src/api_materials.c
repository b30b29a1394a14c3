/* api_materials.c — catalogue and material queries of the public API (epiwell.h): argument
 * checks in front of catalogue.c, alloy.c, lattice_match.c and material_print.c. */
#include <stdio.h>

#include "epiwell.h"
#include "error.h"
#include "materials.h"

#define NULL_ARG(fn) ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: NULL argument", fn)

size_t ew_catalogue_material_count(const ew_catalogue *cat) {
  return cat ? ew_catalogue_count(cat) : 0;
}

const char *ew_catalogue_material_name(const ew_catalogue *cat, size_t i) {
  return cat && i < ew_catalogue_count(cat) ? ew_catalogue_name(cat, i) : NULL;
}

int ew_material_is_alloy(const ew_catalogue *cat, const char *name) {
  return cat && name ? ew_catalogue_is_alloy(cat, name) : -1;
}

ew_status ew_material_lattice_nm(const ew_catalogue *cat, const char *name, double x, double y,
                                 double *a_nm, ew_error *err) {
  if (!cat || !name || !a_nm) return NULL_ARG("ew_material_lattice_nm");
  return ew_lattice_nm(cat, name, x, y, a_nm, err);
}

ew_status ew_material_lattice_match(const ew_catalogue *cat, const char *name,
                                    const char *substrate, double substrate_x, double target_gap_eV,
                                    double T_K, double *x, double *y, ew_error *err) {
  if (!cat || !name || !substrate || !x || !y) return NULL_ARG("ew_material_lattice_match");
  return ew_lattice_match(cat, name, substrate, substrate_x, target_gap_eV, T_K, x, y, err);
}

ew_status ew_material_write(const ew_catalogue *cat, const char *name, double x, double y,
                            double T_K, double a_sub_nm, FILE *out, ew_error *err) {
  if (!cat || !name || !out) return NULL_ARG("ew_material_write");
  ew_status st = ew_material_print_on(cat, name, x, y, T_K, a_sub_nm, out, err);
  if (st == EW_OK && ferror(out))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the material %s", name);
  return st;
}

ew_status ew_catalogue_write(const ew_catalogue *cat, FILE *out, ew_error *err) {
  if (!cat || !out) return NULL_ARG("ew_catalogue_write");
  ew_catalogue_print(cat, out);
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the catalogue list") : EW_OK;
}
