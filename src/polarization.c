/* polarization.c — layer polarisation, interface charges and the static fields of a wurtzite
 * stack (formulas, conventions and sources: polarization.h). */
#include "polarization.h"

#include "constants.h"
#include "error.h"

#include <math.h>

/* V/m → kV/cm, and the electron energy in eV of a field E (V/m) over dz (nm) */
#define KVCM_PER_VM 1e-5
#define NM 1e-9

static double gap_of(const ew_layer *ly) { return ly->bands.Ec_eV - ly->bands.Ev_hh_eV; }

/* 1 when layer i is a well: its gap below both neighbours' */
static int is_well(const ew_stack *st, size_t i) {
  if (i == 0 || i + 1 >= st->n_layers) return 0;
  double g = gap_of(&st->layers[i]);
  return g < gap_of(&st->layers[i - 1]) && g < gap_of(&st->layers[i + 1]);
}

double ew_interface_bound_C_m2(const ew_stack *st, size_t k) {
  if (!st->polarized || k + 1 >= st->n_layers) return 0.0;
  return st->layers[k].polarization_C_m2 - st->layers[k + 1].polarization_C_m2;
}

double ew_interface_charge_C_m2(const ew_stack *st, size_t k) {
  double s = ew_interface_bound_C_m2(st, k);
  if (!(st->screening_sheet_cm2 > 0.0)) return s;
  /* interface k is the right face of layer k and the left face of layer k + 1; at most one
     of them is a well (a well's neighbours have wider gaps), none at a step between barriers */
  int faces = is_well(st, k) || is_well(st, k + 1);
  double cut = faces * EW_E_C * st->screening_sheet_cm2 * 1e4; /* C/m² */
  double mag = fmax(fabs(s) - cut, 0.0);
  return s < 0 ? -mag : mag;
}

static ew_status check_layers(const ew_stack *st, ew_error *err) {
  int wz = st->layers[0].bands.wurtzite;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    if (ly->bands.wurtzite != wz)
      return ew_fail(err, EW_ERR_INPUT, st->path, ly->line,
                     "layer '%s' (%s) is %s but layer '%s' is %s: a stack is all wurtzite "
                     "(c plane) or all zinc blende", ly->name, ly->material,
                     ly->bands.wurtzite ? "wurtzite" : "zinc blende", st->layers[0].name,
                     wz ? "wurtzite" : "zinc blende");
    if (!wz) continue;
    if (ly->profile)
      return ew_fail(err, EW_ERR_INPUT, st->path, ly->line,
                     "layer '%s': graded wurtzite layers are not supported (their bulk "
                     "polarisation charge is not modelled); split it into uniform layers",
                     ly->name);
    if (!(ly->bands.eps_r > 0.0))
      return ew_fail(err, EW_ERR_INPUT, st->path, ly->line,
                     "layer '%s' (%s) has no static permittivity: polarisation fields need "
                     "eps_static", ly->name, ly->material);
  }
  return EW_OK;
}

/* The static fields of an undoped stack: constant D, zero total drop (polarization.h). */
static void static_fields(ew_stack *st) {
  double num = 0.0, den = 0.0, Pt = st->layers[0].polarization_C_m2;
  for (size_t i = 0; i < st->n_layers; i++) {
    const ew_layer *ly = &st->layers[i];
    if (i > 0) Pt -= ew_interface_charge_C_m2(st, i - 1);
    st->layers[i].pol_field_kV_cm = Pt; /* P̃_i kept here until D is known */
    num += Pt * ly->thickness_nm / ly->bands.eps_r;
    den += ly->thickness_nm / ly->bands.eps_r;
  }
  double D = num / den, V = 0.0;
  for (size_t i = 0; i < st->n_layers; i++) {
    ew_layer *ly = &st->layers[i];
    double E = (D - ly->pol_field_kV_cm) / (EW_EPS0_FM * ly->bands.eps_r); /* V/m */
    ly->pol_field_kV_cm = E * KVCM_PER_VM;
    ly->pol_V0_eV = V;
    V += E * ly->thickness_nm * NM;
  }
  /* the reference at the stack's centre, as for the applied field (grid.c) */
  double c = ew_polarization_eV(st, 0.5 * st->total_nm);
  for (size_t i = 0; i < st->n_layers; i++) st->layers[i].pol_V0_eV -= c;
}

ew_status ew_polarization_apply(ew_stack *st, ew_error *err) {
  st->polarized = st->pol_in_poisson = 0;
  for (size_t k = 0; k < st->n_layers; k++) {
    ew_layer *ly = &st->layers[k];
    ly->polarization_C_m2 = ly->pol_field_kV_cm = ly->pol_V0_eV = 0.0;
  }
  if (st->n_layers == 0) return EW_OK;
  ew_status rc = check_layers(st, err);
  if (rc || !st->layers[0].bands.wurtzite) return rc;
  st->polarized = 1;
  for (size_t k = 0; k < st->n_layers; k++) {
    ew_layer *ly = &st->layers[k];
    ly->polarization_C_m2 = st->c_sign * (ly->bands.Psp_C_m2 + ly->bands.Ppz_C_m2);
  }
  st->pol_in_poisson = st->doped || st->surface_given || st->bias_given;
  if (!st->pol_in_poisson) static_fields(st);
  return EW_OK;
}

/* the layer holding z (the right one at an interface) */
static size_t layer_of(const ew_stack *st, double z) {
  size_t k = 0;
  while (k + 1 < st->n_layers && z >= st->layers[k + 1].z_start_nm) k++;
  return k;
}

static double layer_pot(const ew_layer *ly, double z) {
  /* eV: V0 + E (z − z0), E in kV/cm = 1e-4 V/nm */
  return ly->pol_V0_eV + ly->pol_field_kV_cm * 1e-4 * (z - ly->z_start_nm);
}

double ew_polarization_eV(const ew_stack *st, double z) {
  if (!st->polarized || st->pol_in_poisson) return 0.0;
  return layer_pot(&st->layers[layer_of(st, z)], z);
}

double ew_polarization_integral(const ew_stack *st, double a, double b) {
  if (!st->polarized || st->pol_in_poisson || !(b > a)) return 0.0;
  double sum = 0.0;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double z0 = ly->z_start_nm, z1 = z0 + ly->thickness_nm;
    if (k == 0) z0 = -INFINITY; /* the outer layers continue past the faces */
    if (k + 1 == st->n_layers) z1 = INFINITY;
    double lo = fmax(a, z0), hi = fmin(b, z1);
    if (hi > lo) sum += 0.5 * (hi - lo) * (layer_pot(ly, lo) + layer_pot(ly, hi)); /* linear */
  }
  return sum;
}

void ew_polarization_sheets_nm2(const ew_stack *st, const double *z, size_t n, double *q) {
  if (!st->polarized || !st->pol_in_poisson || n == 0) return;
  size_t i = 0;
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    double zi = st->layers[k + 1].z_start_nm;
    while (i + 1 < n && fabs(z[i + 1] - zi) <= fabs(z[i] - zi)) i++;
    q[i] += ew_interface_charge_C_m2(st, k) / EW_E_C * 1e-18; /* C/m² → e/nm² */
  }
}

double ew_result_layer_field_kV_cm(const ew_result *r, size_t k) {
  const ew_stack *st = r->stack;
  const ew_layer *ly = &st->layers[k];
  double F = st->field_kV_cm + ly->pol_field_kV_cm;
  const ew_grid *g = r->grid;
  if (!g || !g->U) return F;
  double z0 = ly->z_start_nm, z1 = z0 + ly->thickness_nm;
  size_t a = g->n, b = 0;
  for (size_t i = 0; i < g->n; i++)
    if (g->z[i] >= z0 - 1e-9 && g->z[i] <= z1 + 1e-9) {
      if (a == g->n) a = i;
      b = i;
    }
  if (a == g->n || b <= a) return F;
  /* dU/dz in eV/nm is e E with E in V/nm; 1 V/nm = 1e4 kV/cm */
  return F + (g->U[b] - g->U[a]) / (g->z[b] - g->z[a]) * 1e4;
}
