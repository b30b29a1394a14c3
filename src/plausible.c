/* plausible.c — plausibility limits of material parameters (see plausible.h). */
#include "plausible.h"

#include <math.h>
#include <stdio.h>

/* Ranges per catalogue parameter (catalogue.h units).  Sources of the typical values quoted:
 * Vurgaftman et al. 2001, tables of the binaries (from memory).  A range bounds what a
 * typo can do; it is not a statement about the material. */
void ew_param_range(ew_param p, double *lo, double *hi) {
  switch (p) {
  case EW_P_EG_G: case EW_P_EG_X: case EW_P_EG_L: *lo = 0.0, *hi = 10.0; break; /* eV */
  case EW_P_ALPHA_G: case EW_P_ALPHA_X: case EW_P_ALPHA_L: *lo = 0.0, *hi = 10.0; break;
  case EW_P_BETA_G: case EW_P_BETA_X: case EW_P_BETA_L: *lo = 0.0, *hi = 5000.0; break; /* K */
  case EW_P_VBO: *lo = -EW_PLAUSIBLE_EDGE_EV, *hi = EW_PLAUSIBLE_EDGE_EV; break;
  case EW_P_DSO: *lo = 0.0, *hi = 5.0; break;  /* InSb 0.81 eV */
  case EW_P_ME: case EW_P_MHH: case EW_P_MLH:
    *lo = EW_PLAUSIBLE_MASS_MIN, *hi = EW_PLAUSIBLE_MASS_MAX; break; /* mhh, mlh: bowing only */
  case EW_P_GAMMA1: *lo = 0.1, *hi = 200.0; break; /* InSb 34.8 */
  case EW_P_GAMMA2: case EW_P_GAMMA3: *lo = -200.0, *hi = 200.0; break;
  case EW_P_EPS_S: *lo = EW_PLAUSIBLE_EPS_MIN, *hi = EW_PLAUSIBLE_EPS_MAX; break;
  case EW_P_ALC: *lo = 10 * EW_PLAUSIBLE_A_MIN_NM, *hi = 10 * EW_PLAUSIBLE_A_MAX_NM; break; /* Å */
  case EW_P_EP: *lo = 0.1, *hi = 50.0; break;  /* GaAs 28.8 eV; must be > 0 (Kane mass) */
  case EW_P_F: *lo = -20.0, *hi = 20.0; break;
  case EW_P_AC: case EW_P_AV: case EW_P_B: case EW_P_D: *lo = -50.0, *hi = 50.0; break; /* eV */
  case EW_P_C11: case EW_P_C12: case EW_P_C44: *lo = 1.0, *hi = 1e4; break; /* GaAs c11 1221 */
  /* wurtzite (Vurgaftman & Meyer 2003, binaries' tables, from memory): c = 4.98 (AlN) …
   * 5.70 Å (InN); c33 2240 (InN) … 3980 kbar (GaN); Δcr −0.169 (AlN) … 0.040 eV (InN);
   * |A_i| ≤ 8.3 (InN A1); deformation potentials within ±18 eV (AlN D1 −17.1); Psp
   * −0.090 (AlN) … −0.034 C/m² (GaN); e33 ≤ 1.46 C/m² (AlN, Bernardini et al. 1997) */
  case EW_P_CLC: *lo = 10 * EW_PLAUSIBLE_A_MIN_NM, *hi = 10 * EW_PLAUSIBLE_A_MAX_NM; break; /* Å */
  case EW_P_C13: case EW_P_C33: *lo = 1.0, *hi = 1e4; break;
  case EW_P_DCR: *lo = -1.0, *hi = 1.0; break;
  case EW_P_A1: case EW_P_A2: case EW_P_A3: case EW_P_A4: case EW_P_A5: case EW_P_A6:
    *lo = -50.0, *hi = 50.0; break;
  case EW_P_WA1: case EW_P_WA2: case EW_P_D1: case EW_P_D2: case EW_P_D3: case EW_P_D4:
    *lo = -50.0, *hi = 50.0; break;
  case EW_P_PSP: *lo = -0.5, *hi = 0.5; break;
  case EW_P_E31: case EW_P_E33: *lo = -5.0, *hi = 5.0; break;
  default: *lo = -INFINITY, *hi = INFINITY; break;
  }
}

static int in(double v, double lo, double hi) { return v >= lo && v <= hi; }

int ew_bands_plausible(const ew_bands *b, char *why, size_t size) {
  const double E = EW_PLAUSIBLE_EDGE_EV, m0 = EW_PLAUSIBLE_MASS_MIN, m1 = EW_PLAUSIBLE_MASS_MAX;
  const struct { const char *what; double v; } edge[] = {
      {"conduction edge Ec", b->Ec_eV}, {"valence edge Ev", b->Ev_eV},
      {"heavy-hole edge", b->Ev_hh_eV}, {"light-hole edge", b->Ev_lh_eV}};
  for (size_t k = 0; k < sizeof edge / sizeof edge[0]; k++)
    if (!in(edge[k].v, -E, E))
      return snprintf(why, size, "%s = %g eV is outside [-%g, %g] eV", edge[k].what, edge[k].v,
                      E, E), 0;
  const struct { const char *what; double v; } mass[] = {
      {"electron mass me", b->me}, {"heavy-hole mass mhh", b->mhh_z},
      {"light-hole mass mlh", b->mlh_z}, {"in-plane heavy-hole mass mhh_par", b->mhh_par},
      {"in-plane light-hole mass mlh_par", b->mlh_par}};
  for (size_t k = 0; k < sizeof mass / sizeof mass[0]; k++)
    if (!in(mass[k].v, m0, m1))
      return snprintf(why, size, "%s = %g m0 is outside [%g, %g] m0", mass[k].what, mass[k].v,
                      m0, m1), 0;
  if (b->eps_r != 0 && !in(b->eps_r, EW_PLAUSIBLE_EPS_MIN, EW_PLAUSIBLE_EPS_MAX))
    return snprintf(why, size, "static permittivity eps_static = %g is outside [%g, %g]",
                    b->eps_r, EW_PLAUSIBLE_EPS_MIN, EW_PLAUSIBLE_EPS_MAX), 0;
  if (b->a_nm != 0 && !in(b->a_nm, EW_PLAUSIBLE_A_MIN_NM, EW_PLAUSIBLE_A_MAX_NM))
    return snprintf(why, size, "lattice constant %g nm is outside [%g, %g] nm", b->a_nm,
                    EW_PLAUSIBLE_A_MIN_NM, EW_PLAUSIBLE_A_MAX_NM), 0;
  if (!isfinite(b->Eg_G_eV) || !isfinite(b->Eg_X_eV) || !isfinite(b->Eg_L_eV) ||
      !isfinite(b->mhh_dos) || !isfinite(b->mlh_dos) || !isfinite(b->eps_perp))
    return snprintf(why, size, "a gap, density-of-states mass or strain is not finite"), 0;
  return 1;
}
