/* hole_absorption_spectrum.c — the absorption spectra α_TE, α_TM (hole_absorption.h).
 *
 * For each transition (u, l) the k∥ samples are cut into segments on which the transition
 * energy ΔE(s) = E_u − E_l, s = k², changes by at most SEG_EV; there ΔE, |M|² and the
 * occupations are taken linear in s and the lineshape is integrated exactly,
 *   ∫ L(ΔE(s) − ħω) ds = Δs [C(ΔE1 − ħω) − C(ΔE0 − ħω)] / (ΔE1 − ΔE0),
 * C the lineshape's cumulative distribution (secant: (2/π) atan(e^{x/γ}), γ = Γ/(2 arcosh 2);
 * Lorentzian: 1/2 + atan(2x/Γ)/π), so a narrow line shows the joint density of states, not
 * the samples.  Beyond kmax nothing is added (choose kmax where f_u − f_l has died out). */
#include <math.h>
#include <string.h>

#include "constants.h"
#include "hole_absorption.h"

#define SEG_EV 0.001
#define MAX_SUB 256

typedef struct {
  int lorentz;
  double width; /* γ or Γ/2, eV */
} shape_t;

static double cdf(const shape_t *sh, double x) {
  return sh->lorentz ? 0.5 + atan(x / sh->width) / EW_PI : 2.0 / EW_PI * atan(exp(x / sh->width));
}
static double pdf(const shape_t *sh, double x) {
  if (sh->lorentz) return sh->width / EW_PI / (x * x + sh->width * sh->width);
  return 1.0 / (EW_PI * sh->width * cosh(x / sh->width));
}

typedef struct {
  double s, eu, el, te, tm;
} node_t;

static node_t at(const ew_hole_absorption *h, size_t t, size_t i, double f) {
  const double *k = h->k_inv_nm;
  size_t nk = h->nk, u = h->t_u[t], l = h->t_l[t];
  node_t n;
  n.s = (1 - f) * k[i] * k[i] + f * k[i + 1] * k[i + 1];
  n.eu = (1 - f) * h->h_eV[u * nk + i] + f * h->h_eV[u * nk + i + 1];
  n.el = (1 - f) * h->h_eV[l * nk + i] + f * h->h_eV[l * nk + i + 1];
  n.te = (1 - f) * h->te2[t * nk + i] + f * h->te2[t * nk + i + 1];
  n.tm = (1 - f) * h->tm2[t * nk + i] + f * h->tm2[t * nk + i + 1];
  return n;
}

/* hole occupation of a state at electron energy E: holes fill the states above F */
static double occ(const ew_hole_absorption *h, double E) {
  return 1.0 / (1.0 + exp((h->fermi_eV - E) / (EW_KB_EVK * h->temperature_K)));
}

static void segment(ew_hole_absorption *h, const shape_t *sh, const node_t *a, const node_t *c) {
  double ds = (c->s - a->s) / (4.0 * EW_PI); /* ∫ d²k/(2π)² = ∫ ds/4π */
  double df = occ(h, 0.5 * (a->eu + c->eu)) - occ(h, 0.5 * (a->el + c->el));
  double wte = ds * 0.5 * (a->te + c->te) * df, wtm = ds * 0.5 * (a->tm + c->tm) * df;
  double E0 = a->eu - a->el, E1 = c->eu - c->el;
  for (size_t i = 0; i < h->np; i++) {
    double x = h->energy_eV[i];
    double v = fabs(E1 - E0) < 1e-9 ? pdf(sh, 0.5 * (E0 + E1) - x)
                                   : (cdf(sh, E1 - x) - cdf(sh, E0 - x)) / (E1 - E0);
    h->alpha_te[i] += wte * v, h->alpha_tm[i] += wtm * v;
  }
}

void ew_hole_absorption_spectra(ew_hole_absorption *h) {
  shape_t sh = {h->o.lorentzian,
                1e-3 * h->o.linewidth_meV / (h->o.lorentzian ? 2.0 : 2.0 * acosh(2.0))};
  memset(h->alpha_te, 0, h->np * sizeof *h->alpha_te);
  memset(h->alpha_tm, 0, h->np * sizeof *h->alpha_tm);
  for (size_t t = 0; t < h->nt; t++)
    for (size_t i = 0; i + 1 < h->nk; i++) {
      node_t a = at(h, t, i, 0.0), c = at(h, t, i, 1.0);
      size_t sub = (size_t)ceil(fabs((c.eu - c.el) - (a.eu - a.el)) / SEG_EV);
      if (sub < 1) sub = 1;
      if (sub > MAX_SUB) sub = MAX_SUB;
      node_t p = a;
      for (size_t j = 1; j <= sub; j++) {
        node_t q = j == sub ? c : at(h, t, i, (double)j / (double)sub);
        segment(h, &sh, &p, &q);
        p = q;
      }
    }
  /* α [1/cm] = π e² S / (n_r c ε0 ħω ħ L_w) · 0.01 with S in eV (eV² nm² · nm⁻² · 1/eV) and
     ħω in eV: the SI factors of S (e² 1e-18 · 1e18 / e = e) and of ω = ħω e/ħ leave
     π e² / (n_r c ε0 ħ L_w) · S/ħω (hole_absorption.h) */
  double A = EW_PI * EW_E_C * EW_E_C / (h->o.refractive_index * EW_C_MS * EW_EPS0_FM * EW_HBAR_JS *
                               h->well_nm * 1e-9) * 0.01;
  for (size_t i = 0; i < h->np; i++) {
    double f = A / h->energy_eV[i];
    h->alpha_te[i] *= f, h->alpha_tm[i] *= f;
  }
}
