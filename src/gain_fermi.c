/* gain_fermi.c — carrier densities and quasi-Fermi levels of the gain model (gain.h).
 *
 * Electrons: a parabolic subband of edge E_n and in-plane mass m holds
 *   n = (m kT / π ħ²) ln(1 + e^{(Fc − E_n)/kT})   (spin included)
 * (Chuang 1995, sec. 9.3).  Holes: each Kramers branch b of the k·p dispersion holds
 *   p_b = ∫ k dk/(2π) [1 − f(E_b(k))] = ∫ ds/(4π) σ((E_b(s) − Fv)/kT),  s = k²,
 * with σ the logistic function; E_b is taken linear in s between the k∥ samples, on which
 * the integral is exact: ∫ σ(u) ds = ln(1 + e^u)/u' (exact for a parabolic band).  Beyond
 * kmax the branch is continued as a parabola with the last interval's mass (its part
 * (m kT / 2πħ²) ln(1 + e^{(E_N − Fv)/kT}) in closed form).  The levels are the roots of
 * n(Fc) = N and p(Fv) = N, by bisection (both densities are monotonic) to 1e-12 eV. */
#include <math.h>

#include "constants.h"
#include "error.h"
#include "gain.h"

#define NM2_TO_CM2 1e14 /* 1/nm² in 1/cm² */

double ew_gain_softplus(double u) { return u > 30 ? u + log1p(exp(-u)) : log1p(exp(u)); }

static double kT_eV(const ew_gain *g) { return EW_KB_EVK * g->temperature_K; }

double ew_gain_electron_density(const ew_gain *g, double Fc) {
  double kT = kT_eV(g), n = 0;
  for (size_t e = 0; e < g->ne; e++)
    n += g->e_mass[e] * kT / (EW_PI * 2.0 * EW_HB2M0_EVNM2) * ew_gain_softplus((Fc - g->e_eV[e]) / kT);
  return n * NM2_TO_CM2;
}

double ew_gain_hole_density(const ew_gain *g, double Fv) {
  double kT = kT_eV(g), p = 0;
  for (size_t b = 0; b < g->nb; b++) {
    const double *E = g->h_eV + b * g->nk;
    for (size_t i = 0; i + 1 < g->nk; i++) {
      double s0 = g->k_inv_nm[i] * g->k_inv_nm[i], s1 = g->k_inv_nm[i + 1] * g->k_inv_nm[i + 1];
      double u0 = (E[i] - Fv) / kT, u1 = (E[i + 1] - Fv) / kT;
      if (fabs(u1 - u0) < 1e-9) /* flat: the midpoint value, exact to O(Δu²) */
        p += (s1 - s0) / (1.0 + exp(-0.5 * (u0 + u1))) / (4.0 * EW_PI);
      else
        p += (ew_gain_softplus(u1) - ew_gain_softplus(u0)) * (s1 - s0) / (u1 - u0) / (4.0 * EW_PI);
    }
    size_t N = g->nk - 1;
    double ds = g->k_inv_nm[N] * g->k_inv_nm[N] - g->k_inv_nm[N - 1] * g->k_inv_nm[N - 1];
    double dE = E[N - 1] - E[N];
    if (dE > 0) { /* the parabolic tail */
      double m = EW_HB2M0_EVNM2 * ds / dE;
      p += m * kT / (2.0 * EW_PI * 2.0 * EW_HB2M0_EVNM2) * ew_gain_softplus((E[N] - Fv) / kT);
    }
  }
  return p * NM2_TO_CM2;
}

/* root of f(x) = target for f increasing (sign +1) or decreasing (−1), bracket widened */
static ew_status bisect(const ew_gain *g, double (*f)(const ew_gain *, double), int sign,
                        double target, double lo, double hi, double *x, ew_error *err) {
  for (int w = 0; w < 60 && sign * (f(g, lo) - target) > 0; w++) lo -= (hi - lo);
  for (int w = 0; w < 60 && sign * (f(g, hi) - target) < 0; w++) hi += (hi - lo);
  if (sign * (f(g, lo) - target) > 0 || sign * (f(g, hi) - target) < 0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "gain: no quasi-Fermi level gives %g cm^-2",
                   target);
  while (hi - lo > 1e-12) {
    double mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (sign * (f(g, mid) - target) < 0) lo = mid;
    else hi = mid;
  }
  *x = 0.5 * (lo + hi);
  return EW_OK;
}

ew_status ew_gain_fermi_levels(const ew_gain *g, double N, double *Fc, double *Fv, ew_error *err) {
  double e1 = INFINITY, h1 = -INFINITY;
  for (size_t e = 0; e < g->ne; e++) e1 = fmin(e1, g->e_eV[e]);
  for (size_t b = 0; b < g->nb; b++) h1 = fmax(h1, g->h_eV[b * g->nk]);
  ew_status rc = bisect(g, ew_gain_electron_density, +1, N, e1 - 1.0, e1 + 1.0, Fc, err);
  if (!rc) rc = bisect(g, ew_gain_hole_density, -1, N, h1 - 1.0, h1 + 1.0, Fv, err);
  return rc;
}

/* Fc − Fv at density N, minus the edge */
static double excess(const ew_gain *g, double N) {
  double Fc = 0, Fv = 0;
  if (ew_gain_fermi_levels(g, N, &Fc, &Fv, NULL)) return NAN;
  return Fc - Fv - g->edge_eV;
}

double ew_gain_transparency(const ew_gain *g) {
  double lo = log(1e8), hi = log(1e15); /* bisection in ln N: the excess is monotonic in N */
  double flo = excess(g, exp(lo)), fhi = excess(g, exp(hi));
  if (!(flo < 0) || !(fhi > 0)) return NAN;
  while (hi - lo > 1e-12) {
    double mid = 0.5 * (lo + hi), f = excess(g, exp(mid));
    if (isnan(f)) return NAN;
    if (f < 0) lo = mid;
    else hi = mid;
  }
  return exp(0.5 * (lo + hi));
}
