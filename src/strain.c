/* strain.c — pseudomorphic strain on (001) and the Matthews–Blakeslee critical thickness.
 * Formulas, sign convention and sources: see strain.h. */
#include "strain.h"

#include "constants.h"
#include "error.h"

#include <math.h>

static int positive(double v) { return isfinite(v) && v > 0.0; }

ew_status ew_strain_biaxial(const ew_strain_input *m, double a_sub_nm, ew_strain_shifts *out,
                            ew_error *err) {
  if (!m || !out) return ew_fail(err, EW_ERR_INPUT, NULL, 0, "ew_strain_biaxial: NULL argument");
  if (!positive(m->a_nm) || !positive(a_sub_nm))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "strain needs positive lattice constants (layer %g nm, substrate %g nm)",
                   m->a_nm, a_sub_nm);
  if (!positive(m->c11_kbar) || !positive(m->c12_kbar))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "strain needs positive elastic constants (c11 = %g, c12 = %g kbar)",
                   m->c11_kbar, m->c12_kbar);
  if (!positive(m->Dso_eV))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "strain needs a positive spin-orbit splitting (Delta_so = %g eV)", m->Dso_eV);
  if (!isfinite(m->a_c_eV) || !isfinite(m->a_v_eV) || !isfinite(m->b_eV))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "strain needs finite deformation potentials");

  /* pseudomorphic growth: the layer takes the substrate's in-plane lattice constant; the
   * growth axis relaxes with zero normal stress, σ_zz = c12 (ε_xx + ε_yy) + c11 ε_zz = 0
   * (Chuang 2009, strain effects on band structures; from memory) */
  double ep = (a_sub_nm - m->a_nm) / m->a_nm;
  double ez = -2.0 * (m->c12_kbar / m->c11_kbar) * ep;
  double tr = 2.0 * ep + ez;
  out->eps_par = ep;
  out->eps_perp = ez;
  /* conduction edge δEc = a_c tr ε (Vurgaftman 2001, Bir–Pikus hydrostatic term) */
  out->dEc_eV = m->a_c_eV * tr;
  /* valence, hydrostatic: −P_ε with P_ε = −a_v' tr ε, a_v' = −a_v (catalogue sign; see
   * strain.h), so −P_ε = a_v' tr ε = −a_v tr ε */
  out->dEv_hyd_eV = -m->a_v_eV * tr;
  /* shear: Q_ε = −(b/2)(ε_xx + ε_yy − 2 ε_zz) = b (ε⊥ − ε∥) (Bir–Pikus, [001] biaxial) */
  double q = m->b_eV * (ez - ep);
  out->dE_shear_eV = q;
  /* heavy hole: −P_ε − Q_ε (decoupled from lh and so at k = 0 for [001] strain) */
  out->dEhh_eV = out->dEv_hyd_eV - q;
  /* light hole and split-off: eigenvalues of [[−P+Q, √2 Q], [√2 Q, −P−Δ]] (Chuang 2009),
   * λ = −P + ½[(Q − Δ) ± √((Q + Δ)² + 8Q²)], (Q + Δ)² + 8Q² = Δ² + 2ΔQ + 9Q² */
  double d = m->Dso_eV;
  double root = sqrt(d * d + 2.0 * d * q + 9.0 * q * q);
  /* the root of smaller magnitude from the product (det = −QΔ − 2Q²) to avoid the
   * cancellation in (q − d) + root when Δ ≫ |Q| */
  double det = -q * d - 2.0 * q * q, e_lh, e_so;
  if (q - d < 0.0) {
    e_so = 0.5 * (q - d - root);
    e_lh = det / e_so;
  } else {
    e_lh = 0.5 * (q - d + root);
    e_so = e_lh != 0.0 ? det / e_lh : 0.5 * (q - d - root);
  }
  out->dElh_eV = out->dEv_hyd_eV + e_lh;
  out->dEso_eV = out->dEv_hyd_eV + e_so + d;
  out->dElh_simple_eV = out->dEv_hyd_eV + q;
  return EW_OK;
}

double ew_strain_poisson(double c11_kbar, double c12_kbar) {
  /* ν = c12/(c11 + c12) for (001) biaxial strain, as used in the MB formula */
  return c12_kbar / (c11_kbar + c12_kbar);
}

double ew_mb_critical_thickness_nm(double a_nm, double eps_par, double nu, int n_interfaces) {
  if (!positive(a_nm) || !isfinite(eps_par) || !(nu > -1.0 && nu < 0.5) ||
      (n_interfaces != 1 && n_interfaces != 2))
    return NAN;
  double f = fabs(eps_par);
  if (f == 0.0) return INFINITY;
  const double alpha = EW_PI / 3.0, lambda = EW_PI / 3.0; /* 60° dislocations (MB 1974) */
  double bd = a_nm / sqrt(2.0);
  double ca = cos(alpha);
  /* h_c = A (ln(h_c/b_d) + 1), A = n b_d (1 − ν cos²α)/(8π f (1 + ν) cos λ)  (strain.h) */
  double A = n_interfaces * bd * (1.0 - nu * ca * ca) / (8.0 * EW_PI * f * (1.0 + nu) * cos(lambda));
  if (A < bd) return 0.0; /* h/A − ln(h/b_d) ≥ 1 − ln(A/b_d) > 1: no root */
  /* g(h) = A (ln(h/b_d) + 1) is increasing and concave; g(A) ≥ A lies above the smaller
   * root, so the iteration decreases or increases monotonically to the larger root at the
   * rate g'(h_c) = A/h_c = 1/(ln(h_c/b_d) + 1) < 1 */
  double h = A * (log(A / bd) + 1.0);
  for (int it = 0; it < 2000; it++) {
    double hn = A * (log(h / bd) + 1.0);
    if (fabs(hn - h) <= 1e-15 * hn) {
      h = hn;
      break;
    }
    h = hn;
  }
  /* close to the tangency A ≈ b_d the rate approaches 1: polish with Newton steps on
   * F(h) = h − A (ln(h/b_d) + 1), kept only while they stay on the physical branch h > A */
  for (int it = 0; it < 8; it++) {
    double fp = 1.0 - A / h;
    if (!(fp > 1e-6)) break;
    double hn = h - (h - A * (log(h / bd) + 1.0)) / fp;
    if (!(hn > A) || hn == h) break;
    h = hn;
  }
  return h;
}
