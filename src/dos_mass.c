/* dos_mass.c — the density-of-states mass of a k·p subband (epiwell.h,
 * ew_dispersion_dos_mass_m0).
 *
 * Definition: the mass of the parabolic 2-D band that holds as many states within ε of the
 * subband edge.  A parabolic band of mass m holds N(ε) = m ε / (2π ħ²) states per area and
 * spin within ε of its edge (the 2-D density of states m/(2πħ²) per spin; S. L. Chuang,
 * Physics of Photonic Devices (Wiley, 2009), ch. 3, from memory), so
 *   m_dos(ε) = 2π ħ² N(ε) / ε,   N(ε) = |{s = k² : |E(k) − E(0)| ≤ ε}| / (4π),
 * the area of k∥ space where the subband lies within ε of its k∥ = 0 energy (on the
 * dispersion's direction: isotropic in the axial approximation), E taken linear in s
 * between the samples (a non-monotonic, camel-back subband counts every part within ε).
 * The distance is counted into the band (down for holes, up for the 8-band electrons).
 * NAN when the subband is still within ε at kmax (the count would be cut off). */
#include <math.h>

#include "constants.h"
#include "dispersion.h"

double ew_dispersion_dos_mass_m0(const ew_dispersion *d, size_t j, double eps) {
  if (!d || j >= d->subbands || !d->points || !(eps > 0) || !isfinite(eps)) return NAN;
  const double *E = d->energy_eV + j * d->points, *k = d->k_inv_nm;
  double sign = d->character[j] == 3 ? 1.0 : -1.0; /* into the band */
  double measure = 0; /* of s with depth(s) <= eps */
  for (size_t i = 0; i + 1 < d->points; i++) {
    double a = sign * (E[i] - E[0]), b = sign * (E[i + 1] - E[0]);
    double s0 = k[i] * k[i], s1 = k[i + 1] * k[i + 1];
    if (a <= eps && b <= eps) measure += s1 - s0;
    else if (a <= eps) measure += (s1 - s0) * (eps - a) / (b - a);
    else if (b <= eps) measure += (s1 - s0) * (eps - b) / (a - b);
  }
  if (sign * (E[d->points - 1] - E[0]) <= eps) return NAN;
  double N = measure / (4.0 * EW_PI);                 /* per nm² and spin */
  return 2.0 * EW_PI * (2.0 * EW_HB2M0_EVNM2) * N / eps; /* ħ²/m0 = 2 EW_HB2M0 eV nm²: in m0 */
}
