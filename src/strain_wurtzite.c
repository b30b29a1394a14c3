/* strain_wurtzite.c — c-plane strain, band edges and band-edge masses of a wurtzite layer.
 * Formulas and sources: strain_wurtzite.h. */
#include "strain_wurtzite.h"

#include "error.h"

#include <math.h>

/* E_hh, E_lh, E_ch on the band-average scale at strain terms θ, λ (strain_wurtzite.h) */
static void edges(const ew_wz_input *m, double th, double la, double E[3]) {
  double d1 = m->Dcr_eV, d2 = m->Dso_eV / 3.0, d3 = d2;
  double h = 0.5 * (d1 - d2 + th);
  double r = sqrt(h * h + 2.0 * d3 * d3);
  E[0] = d1 + d2 + th + la;
  E[1] = h + la + r;
  E[2] = h + la - r;
}

static int finite_all(const double *v, int n) {
  for (int k = 0; k < n; k++)
    if (!isfinite(v[k])) return 0;
  return 1;
}

ew_status ew_wurtzite_bands(const ew_wz_input *m, double a_sub_nm, ew_wz_bands *out,
                            ew_error *err) {
  if (!m || !out) return ew_fail(err, EW_ERR_INPUT, NULL, 0, "ew_wurtzite_bands: NULL argument");
  double scal[] = {m->a1_eV, m->a2_eV, m->Dcr_eV, m->Dso_eV, m->e31_C_m2, m->e33_C_m2};
  if (!finite_all(scal, 6) || !finite_all(m->D_eV, 4) || !finite_all(m->A, 6) ||
      !(m->Dso_eV >= 0.0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "wurtzite bands need finite parameters");
  int strained = a_sub_nm > 0.0;
  if (strained && !(m->a_nm > 0.0 && m->c13_kbar > 0.0 && m->c33_kbar > 0.0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "wurtzite strain needs positive a, c13, c33 (a = %g nm, c13 = %g, c33 = %g "
                   "kbar)", m->a_nm, m->c13_kbar, m->c33_kbar);
  double exx = strained ? (a_sub_nm - m->a_nm) / m->a_nm : 0.0;
  double ezz = strained ? -2.0 * m->c13_kbar / m->c33_kbar * exx : 0.0;
  out->eps_xx = exx;
  out->eps_zz = ezz;
  const double *D = m->D_eV;
  double th = D[2] * ezz + D[3] * 2.0 * exx, la = D[0] * ezz + D[1] * 2.0 * exx;
  double E0[3], E[3];
  edges(m, 0.0, 0.0, E0);
  edges(m, th, la, E);
  double top = fmax(E0[0], fmax(E0[1], E0[2]));
  for (int b = 0; b < 3; b++) out->E_eV[b] = E[b] - top;
  out->dEc_eV = (m->a1_eV + D[0]) * ezz + (m->a2_eV + D[1]) * 2.0 * exx;
  /* Γ7 mixing weights; equal edges (Δ3 = 0 and h = 0) cannot occur with Δso > 0 */
  double gap = E[1] - E[2];
  double w_lh = gap > 0.0 ? (E[1] - la) / gap : 1.0, w_ch = 1.0 - w_lh;
  const double *A = m->A;
  double inv_z[3] = {A[0] + A[2], A[0] + w_lh * A[2], A[0] + w_ch * A[2]};
  double inv_t[3] = {A[1] + A[3], A[1] + w_lh * A[3], A[1] + w_ch * A[3]};
  static const char *const name[3] = {"heavy-hole", "light-hole", "crystal-field-hole"};
  for (int b = 0; b < 3; b++) {
    if (!(inv_z[b] < 0.0) || !(inv_t[b] < 0.0))
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "wurtzite %s mass is not positive (A parameters give 1/m_z = %g, 1/m_t = "
                     "%g)", name[b], -inv_z[b], -inv_t[b]);
    out->m_z[b] = -1.0 / inv_z[b];
    out->m_t[b] = -1.0 / inv_t[b];
  }
  out->Ppz_C_m2 =
      strained ? 2.0 * exx * (m->e31_C_m2 - m->e33_C_m2 * m->c13_kbar / m->c33_kbar) + 0.0 : 0.0;
  return EW_OK;
}
