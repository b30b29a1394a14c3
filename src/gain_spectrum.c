/* gain_spectrum.c — the gain and spontaneous-emission spectra at one density (gain.h).
 *
 * The k∥ integral of gain.h runs over segments on which the transition energy E(s), s = k²,
 * is linear (the k·p samples subdivided so that E changes by at most SEG_EV on a segment:
 * the occupations, matrix elements and the hole energy are linear in s there); on each
 * segment the lineshape is integrated exactly,
 *   ∫ L(E(s) − ħω) ds = Δs [C(E1 − ħω) − C(E0 − ħω)] / (E1 − E0),
 * with C the lineshape's cumulative distribution, so a narrow line gives the step of the
 * two-dimensional density of states, not a comb of the samples.
 * Lineshapes (FWHM Γ): hyperbolic secant L = sech(x/γ)/(πγ), γ = Γ/(2 arcosh 2),
 * C = (2/π) atan(e^{x/γ}); Lorentzian L = (Γ/2π)/(x² + Γ²/4), C = 1/2 + atan(2x/Γ)/π.  The
 * Lorentzian's 1/x² tails put absorption far below the gap (every transition absorbs at all
 * energies; at transparency the band-edge gain is pulled negative); the secant's tails decay
 * as e^{−|x|/γ}, so its artefact below the gap is exponentially small (Chuang 2009, sec. 10.3
 * (from memory)).  Both are symmetric: neither has the many-body asymmetry of a measured line.
 *
 * Spontaneous emission (photons per unit volume, time and photon energy, over all
 * polarisations: the matrix element averaged over directions, (2 F_te + F_tm)/3):
 *   r_sp(ħω) = n_r² (ħω)² / (π² ħ³ c²) · g_sp(ħω)
 * with g_sp the gain with f_c (1 − f_v) for f_c − f_v (Chuang 1995, sec. 9.2; the
 * Lasher–Stern relation g = g_sp (1 − e^{(ħω − ΔF)/kT}) follows for a narrow line). */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "gain.h"

#define SEG_EV 0.002 /* largest change of the transition energy on one segment */
#define MAX_SUB 256
#define CUT 40.0     /* secant: tails beyond 40 γ (< 1e-17 of the peak) are left out */

typedef struct {
  int lorentz;
  double width; /* γ (secant) or Γ/2 (Lorentzian), eV */
} shape_t;

static double cdf(const shape_t *sh, double x) {
  return sh->lorentz ? 0.5 + atan(x / sh->width) / EW_PI : 2.0 / EW_PI * atan(exp(x / sh->width));
}

static double pdf(const shape_t *sh, double x) {
  if (sh->lorentz) return sh->width / EW_PI / (x * x + sh->width * sh->width);
  return 1.0 / (EW_PI * sh->width * cosh(x / sh->width));
}

typedef struct {
  double s, ecv, ec, eh, te, tm;
} node_t;

/* pair (e, b) at s between coarse samples i and i + 1 (t ∈ [0, 1] along s) */
static node_t at(const ew_gain *g, size_t e, size_t b, size_t i, double t) {
  const double *k = g->k_inv_nm;
  size_t base = (e * g->nb + b) * g->nk + i;
  node_t n;
  n.s = (1 - t) * k[i] * k[i] + t * k[i + 1] * k[i + 1];
  n.eh = (1 - t) * g->h_eV[b * g->nk + i] + t * g->h_eV[b * g->nk + i + 1];
  n.ec = g->e_eV[e] + EW_HB2M0_EVNM2 * n.s / g->e_mass[e];
  n.ecv = n.ec - n.eh;
  n.te = (1 - t) * g->f_te[base] + t * g->f_te[base + 1];
  n.tm = (1 - t) * g->f_tm[base] + t * g->f_tm[base + 1];
  return n;
}

/* add segment [a, c] of one pair to the sums */
static void segment(const ew_gain *g, size_t d, const shape_t *sh, const node_t *a,
                    const node_t *c, double *ste, double *stm, double *ssp) {
  double kT = EW_KB_EVK * g->temperature_K;
  double ds = (c->s - a->s) / (4.0 * EW_PI); /* ∫ k dk / 2π = ∫ ds / 4π */
  double ec = 0.5 * (a->ec + c->ec), eh = 0.5 * (a->eh + c->eh);
  double fc = 1.0 / (1.0 + exp((ec - g->fermi_c_eV[d]) / kT));
  double fv = 1.0 / (1.0 + exp((eh - g->fermi_v_eV[d]) / kT));
  double te = 0.5 * (a->te + c->te), tm = 0.5 * (a->tm + c->tm);
  double wte = ds * te * (fc - fv), wtm = ds * tm * (fc - fv);
  double wsp = ds * (2.0 * te + tm) / 3.0 * fc * (1.0 - fv);
  double E0 = a->ecv, E1 = c->ecv, lo = fmin(E0, E1), hi = fmax(E0, E1);
  const double *w = g->energy_eV;
  size_t np = g->ne_pts, i0 = 0, i1 = np;
  double step = np > 1 ? w[1] - w[0] : 1.0;
  if (!sh->lorentz) {
    double from = (lo - CUT * sh->width - w[0]) / step, to = (hi + CUT * sh->width - w[0]) / step;
    if (to < 0 || from > (double)np) return;
    i0 = from > 0 ? (size_t)from : 0;
    i1 = to + 1 < (double)np ? (size_t)(to + 1) : np;
  }
  for (size_t i = i0; i < i1; i++) {
    double v = hi - lo < 1e-9 ? pdf(sh, 0.5 * (E0 + E1) - w[i])
                              : (cdf(sh, E1 - w[i]) - cdf(sh, E0 - w[i])) / (E1 - E0);
    ste[i] += wte * v, stm[i] += wtm * v, ssp[i] += wsp * v;
  }
}

void ew_gain_spectra(ew_gain *g, size_t d) {
  size_t np = g->ne_pts;
  double *ste = g->gain_te + d * np, *stm = g->gain_tm + d * np, *ssp = g->spont + d * np;
  memset(ste, 0, np * sizeof *ste);
  memset(stm, 0, np * sizeof *stm);
  memset(ssp, 0, np * sizeof *ssp);
  shape_t sh = {g->o.lorentzian, 1e-3 * g->o.linewidth_meV / (g->o.lorentzian ? 2.0 : 2.0 * acosh(2.0))};
  double top = g->energy_eV[np - 1] + CUT * sh.width;
  for (size_t e = 0; e < g->ne; e++)
    for (size_t b = 0; b < g->nb; b++)
      for (size_t i = 0; i + 1 < g->nk; i++) {
        node_t a = at(g, e, b, i, 0.0), c = at(g, e, b, i, 1.0);
        if (!sh.lorentz && fmin(a.ecv, c.ecv) > top) continue; /* beyond the window */
        double span = fabs(c.ecv - a.ecv);
        size_t sub = (size_t)ceil(span / SEG_EV);
        if (sub < 1) sub = 1;
        if (sub > MAX_SUB) sub = MAX_SUB;
        node_t p = a;
        for (size_t j = 1; j <= sub; j++) {
          node_t q = j == sub ? c : at(g, e, b, i, (double)j / (double)sub);
          segment(g, d, &sh, &p, &q, ste, stm, ssp);
          p = q;
        }
      }
  /* prefactors (gain.h; SI inside): g [1/cm] = π e ħ Ep / (2 n_r c ε0 m0 L_w ħω) · S,
     S in 1/(nm² eV) → 1e18 m⁻² and 1/e per J; the 0.01 takes 1/m to 1/cm */
  double n_r = g->refractive_index;
  double A = EW_PI * EW_E_C * EW_HBAR_JS /
             (2.0 * n_r * EW_C_MS * EW_EPS0_FM * EW_M0_KG * g->well_nm * 1e-9) * 1e18 * 0.01;
  double peak = -INFINITY, peak_e = NAN, peak_tm = -INFINITY;
  for (size_t i = 0; i < np; i++) {
    double hw = g->energy_eV[i], f = A * g->Ep_eV / hw;
    ste[i] *= f, stm[i] *= f, ssp[i] *= f;
    /* r_sp = n_r² (ħω)² / (π² ħ³ c²) g_sp: 1/(J s m³) from g_sp in 1/m, → 1/(eV s cm³) */
    double hwJ = hw * EW_E_C;
    ssp[i] *= 100.0 * n_r * n_r * hwJ * hwJ /
              (EW_PI * EW_PI * EW_HBAR_JS * EW_HBAR_JS * EW_HBAR_JS * EW_C_MS * EW_C_MS) *
              EW_E_C * 1e-6;
    if (ste[i] > peak) peak = ste[i], peak_e = hw;
    if (stm[i] > peak_tm) peak_tm = stm[i];
  }
  g->peak_te[d] = peak, g->peak_te_eV[d] = peak_e, g->peak_tm[d] = peak_tm;
}
