/* alloy.c — a catalogue material at a composition and a temperature.
 *
 * Alloy rule (Vegard's law with bowing, as used throughout I. Vurgaftman, J. R. Meyer,
 * L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), Sec. II):
 *     P(x) = x P_first + (1 − x) P_second − x (1 − x) C(x),   C(x) = C0 + C1 x,
 * where x is the fraction of the first-named element and a missing bowing means C = 0.
 * Gaps at T follow the same review: each end binary's gap is taken at T (Varshni) and then
 * interpolated with a temperature-independent bowing.
 * Quaternaries ("square" and "triangle" schemes) interpolate their corner binaries and
 * take the bowings of their bounding ternaries from the catalogue: formulas in alloy.h.
 * Strain on a substrate (ew_material_bands_on) is computed in strain.c.
 */
#include "alloy.h"

#include "error.h"
#include "strain.h"
#include "strain_wurtzite.h"

#include <math.h>
#include <string.h>

static const char linear_source[] = "linear interpolation (no bowing in this catalogue)";
static const char varshni_alloy_source[] =
    "linear interpolation, for display only: gaps at T use each end binary's Varshni law "
    "(I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001))";

double ew_varshni(double Eg0_eV, double alpha_meV_K, double beta_K, double T_K) {
  double den = T_K + beta_K;
  if (den == 0.0) return Eg0_eV;
  return Eg0_eV - 1e-3 * alpha_meV_K * T_K * T_K / den;
}

/* Bowing coefficient C(t) = C0 + C1 t of parameter p of alloy e (0 without bowing). */
static double bow_coeff(const ew_cat_entry *e, int p, double t) {
  if (!e->have[p]) return 0.0;
  return e->v[p] + e->per_x[p] * t;
}

/* x (1 − x) C(x) for parameter p of alloy e (0 without bowing). */
static double bow_term(const ew_cat_entry *e, int p, double x) {
  return x * (1.0 - x) * bow_coeff(e, p, x);
}

/* Weights of a quaternary's corners, and per edge the composition along it (fraction of
 * the edge's first corner) and the weight of the edge ternary's bowing (alloy.h). */
typedef struct {
  double w[4], t[4], coef[4];
} qgeom;

static void quat_geom(const ew_cat_entry *e, double x, double y, qgeom *g) {
  memset(g, 0, sizeof *g);
  if (e->scheme == EW_SCHEME_SQUARE) {
    /* corners (1,1) (1,0) (0,1) (0,0); edges y = 1, y = 0 (along x), x = 1, x = 0 (along y):
     * −x(1−x)[y C_ABC + (1−y) C_ABD] − y(1−y)[x C_ACD + (1−x) C_BCD] */
    g->w[0] = x * y;
    g->w[1] = x * (1.0 - y);
    g->w[2] = (1.0 - x) * y;
    g->w[3] = (1.0 - x) * (1.0 - y);
    g->t[0] = g->t[1] = x;
    g->t[2] = g->t[3] = y;
    g->coef[0] = y * x * (1.0 - x);
    g->coef[1] = (1.0 - y) * x * (1.0 - x);
    g->coef[2] = x * y * (1.0 - y);
    g->coef[3] = (1.0 - x) * y * (1.0 - y);
  } else {
    /* corners A, B, C with weights x, y, z; −xy C_AB(u) − yz C_BC(v) − xz C_AC(w), each at
     * the orthogonal projection of (x, y, z) on its edge */
    double z = 1.0 - x - y;
    if (z < 0.0) z = 0.0;
    g->w[0] = x;
    g->w[1] = y;
    g->w[2] = z;
    g->t[0] = 0.5 * (1.0 + x - y);
    g->t[1] = 0.5 * (1.0 + y - z);
    g->t[2] = 0.5 * (1.0 + x - z);
    g->coef[0] = x * y;
    g->coef[1] = y * z;
    g->coef[2] = x * z;
  }
}

/* Value of a binary: parameter p (g < 0) or its gap g (0 Γ, 1 X, 2 L) at T by Varshni. */
static int binary_value(const ew_cat_entry *b, int p, int g, double T_K, double *out) {
  if (g < 0 && ew_param_is_hole_mass((ew_param)p)) {
    if (!b->have[EW_P_GAMMA1] || !b->have[EW_P_GAMMA2]) return 0;
    double s = p == EW_P_MHH ? -2.0 : 2.0;
    double den = b->v[EW_P_GAMMA1] + s * b->v[EW_P_GAMMA2];
    if (!(den > 0.0)) return 0; /* bands_at reports the non-positive mass */
    *out = 1.0 / den;
    return 1;
  }
  if (g < 0) {
    if (!b->have[p]) return 0;
    *out = b->v[p];
    return 1;
  }
  if (!b->have[ew_gap_param[g]]) return 0;
  *out = ew_varshni(b->v[ew_gap_param[g]], b->v[ew_alpha_param[g]], b->v[ew_beta_param[g]], T_K);
  return 1;
}

/* Parameter p (g < 0) or gap g at T of any entry at (x, y); 0 if unknown.  Ternaries:
 * Vegard + bowing; quaternaries: alloy.h; gaps at T: end values at T, then the
 * T-independent bowing (Vurgaftman 2001, Sec. II). */
int ew_entry_value(const ew_catalogue *cat, const ew_cat_entry *e, int p, int g, double x,
                   double y, double T_K, double *out) {
  int bp = g < 0 ? p : (int)ew_gap_param[g];
  if (e->kind == EW_KIND_BINARY) return binary_value(e, p, g, T_K, out);
  if (e->kind == EW_KIND_ALLOY) {
    double va, vb;
    if (!binary_value(&cat->e[e->i_first], p, g, T_K, &va) ||
        !binary_value(&cat->e[e->i_second], p, g, T_K, &vb))
      return 0;
    *out = x * va + (1.0 - x) * vb - bow_term(e, bp, x);
    return 1;
  }
  qgeom q;
  quat_geom(e, x, y, &q);
  double sum = 0.0;
  for (int k = 0; k < e->n_corner; k++) {
    double v;
    if (!binary_value(&cat->e[e->i_corner[k]], p, g, T_K, &v)) return 0;
    sum += q.w[k] * v;
  }
  for (int k = 0; k < e->n_edge; k++) {
    const ew_cat_entry *t = &cat->e[e->i_edge[k]];
    double tt = e->edge_flip[k] ? 1.0 - q.t[k] : q.t[k];
    sum -= q.coef[k] * bow_coeff(t, bp, tt);
  }
  *out = sum;
  return 1;
}

static ew_status unknown_name(const ew_catalogue *cat, const char *name, ew_error *err) {
  char hint[160];
  ew_catalogue_hint(cat, name, hint, sizeof hint);
  if (hint[0])
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "unknown material '%s' (%s)",
                   name ? name : "(null)", hint);
  return ew_fail(err, EW_ERR_INPUT, NULL, 0, "unknown material '%s'", name ? name : "(null)");
}

/* Find name and check (x, y, T).  with_y = 0: the caller has no y (old API), so a
 * quaternary is refused; with_y = 1: y is checked for quaternaries, ignored otherwise. */
ew_status ew_material_lookup(const ew_catalogue *cat, const char *name, double x, double y,
                             int with_y, double T_K, const ew_cat_entry **e, ew_error *err) {
  long i = ew_catalogue_find(cat, name);
  if (i < 0) return unknown_name(cat, name, err);
  *e = &cat->e[i];
  const ew_cat_entry *m = *e;
  if (m->kind == EW_KIND_QUATERNARY && !with_y)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s is a quaternary, %s (x = %s, y = %s): it needs a composition y as well "
                   "as x",
                   name, m->description, m->x_is, m->y_is);
  if (m->is_alloy && !(x >= 0.0 && x <= 1.0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "composition x = %g of %s (%s) is outside [0, 1]", x, name, m->x_is);
  if (m->kind == EW_KIND_QUATERNARY) {
    if (!(y >= 0.0 && y <= 1.0))
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "composition y = %g of %s (%s) is outside [0, 1]", y, name, m->y_is);
    if (m->scheme == EW_SCHEME_TRIANGLE && x + y > 1.0 + 1e-12)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "x + y = %g of %s (%s) exceeds 1 (x = %s, y = %s)", x + y, name,
                     m->description, m->x_is, m->y_is);
  }
  if (!(T_K >= 0.0) || !isfinite(T_K))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "temperature %g K must be >= 0", T_K);
  return EW_OK;
}

/* 1 if a hole mass of entry e is bowed: by the alloy itself, or for a quaternary by one of
 * the ternaries on its edges. */
static int hole_mass_bowed(const ew_catalogue *cat, const ew_cat_entry *e) {
  if (e->kind == EW_KIND_ALLOY) return e->have[EW_P_MHH] || e->have[EW_P_MLH];
  if (e->kind != EW_KIND_QUATERNARY) return 0;
  for (int k = 0; k < e->n_edge; k++) {
    const ew_cat_entry *t = &cat->e[e->i_edge[k]];
    if (t->have[EW_P_MHH] || t->have[EW_P_MLH]) return 1;
  }
  return 0;
}

/* [001] hole masses 1/(γ1 ∓ 2γ2) of Luttinger parameters g1, g2; 0 where not positive. */
static void masses_of_gammas(double g1, double g2, double m[2]) {
  for (int k = 0; k < 2; k++) {
    double den = g1 + (k ? 2.0 : -2.0) * g2;
    m[k] = den > 0.0 ? 1.0 / den : 0.0;
  }
}

/* A ternary's hole-mass bowing restated against the γ-linear mass: C_eff(t) with
 * m_linγ(t) − m(t) = t(1 − t) C_eff(t), where m(t) = t m_A + (1 − t) m_B − t(1 − t) C(t) is
 * the review's bowed mass and m_linγ(t) the mass of the linearly interpolated γ's.  Summing
 * coef_k C_eff_k over a quaternary's edges then gives back each ternary exactly on its edge
 * (the edge weights of alloy.h vanish on the other edges) and γ-linear masses where no edge
 * bows them. */
static double edge_mass_bowing(const ew_catalogue *cat, const ew_cat_entry *t, int q,
                               double tt) {
  double w = tt * (1.0 - tt), g1, g2, m_bowed, m_lin[2];
  if (!(w > 0.0) || !t->have[q]) return 0.0;
  if (!ew_entry_value(cat, t, EW_P_GAMMA1, -1, tt, 0.0, 0.0, &g1) ||
      !ew_entry_value(cat, t, EW_P_GAMMA2, -1, tt, 0.0, 0.0, &g2) ||
      !ew_entry_value(cat, t, q, -1, tt, 0.0, 0.0, &m_bowed))
    return 0.0;
  masses_of_gammas(g1, g2, m_lin);
  double ml = m_lin[q == EW_P_MLH];
  return ml > 0.0 ? (ml - m_bowed) / w : 0.0;
}

/* The [001] hole masses and γ1, γ2 of a material kept consistent, mhh = 1/(γ1 − 2γ2) and
 * mlh = 1/(γ1 + 2γ2).  Without a hole-mass bowing the Luttinger parameters are interpolated
 * linearly and the masses follow from them.  With one (Vurgaftman 2001 give hole-mass
 * bowings for some alloys, e.g. InGaAs, rather than γ bowings) a ternary's masses are
 * interpolated with their bowing, a quaternary's by edge_mass_bowing, and γ1 = (1/mhh +
 * 1/mlh)/2, γ2 = (1/mlh − 1/mhh)/4 follow; γ3 stays linear (no bowing given for it). */
static void hole_masses_of(const ew_catalogue *cat, const ew_cat_entry *e, double x, double y,
                           ew_params *out) {
  static const char from_gamma[] = "1/(gamma1 -/+ 2 gamma2): the [001] mass of the "
                                   "Luttinger parameters (J. M. Luttinger, Phys. Rev. 102, "
                                   "1030 (1956))";
  static const char from_mass[] =
      "from the [001] hole masses mhh, mlh interpolated with their bowing: gamma1 = "
      "(1/mhh + 1/mlh)/2, gamma2 = (1/mlh - 1/mhh)/4 (hole-mass bowing as in I. Vurgaftman "
      "et al., J. Appl. Phys. 89, 5815 (2001))";
  static const int q_of[2] = {EW_P_MHH, EW_P_MLH};
  double m[2];
  int bowed = hole_mass_bowed(cat, e);
  const char *bow_src[2] = {out->source[EW_P_MHH], out->source[EW_P_MLH]};
  int have_bowed[2] = {out->have[EW_P_MHH], out->have[EW_P_MLH]};
  for (int k = 0; k < 2; k++) out->have[q_of[k]] = 0;
  if (!out->have[EW_P_GAMMA1] || !out->have[EW_P_GAMMA2]) return;
  masses_of_gammas(out->v[EW_P_GAMMA1], out->v[EW_P_GAMMA2], m);
  if (bowed && e->kind == EW_KIND_ALLOY) {
    for (int k = 0; k < 2; k++)
      if (have_bowed[k]) m[k] = out->v[q_of[k]];
  } else if (bowed) {
    qgeom g;
    quat_geom(e, x, y, &g);
    for (int k = 0; k < 2; k++)
      for (int j = 0; j < e->n_edge && m[k] > 0.0; j++) {
        double tt = e->edge_flip[j] ? 1.0 - g.t[j] : g.t[j];
        m[k] -= g.coef[j] * edge_mass_bowing(cat, &cat->e[e->i_edge[j]], q_of[k], tt);
      }
  }
  for (int k = 0; k < 2; k++) {
    if (!(m[k] > 0.0)) return; /* bands_at reports the non-positive mass */
    out->v[q_of[k]] = m[k];
    out->have[q_of[k]] = 1;
    out->source[q_of[k]] = bowed && e->kind == EW_KIND_ALLOY && have_bowed[k] ? bow_src[k]
                           : bowed ? e->source[q_of[k]]
                                   : from_gamma;
  }
  if (!bowed) return;
  out->v[EW_P_GAMMA1] = 0.5 * (1.0 / m[0] + 1.0 / m[1]);
  out->v[EW_P_GAMMA2] = 0.25 * (1.0 / m[1] - 1.0 / m[0]);
  out->source[EW_P_GAMMA1] = out->source[EW_P_GAMMA2] = from_mass;
}

static void params_of(const ew_catalogue *cat, const ew_cat_entry *e, double x, double y,
                      ew_params *out) {
  memset(out, 0, sizeof *out);
  for (int p = 0; p < EW_P_COUNT; p++) {
    double v;
    if (!ew_entry_value(cat, e, p, -1, x, y, 0.0, &v)) continue;
    out->have[p] = 1;
    out->v[p] = v;
    if (e->kind != EW_KIND_ALLOY) {
      out->source[p] = e->source[p];
    } else {
      int varshni = ew_param_is_varshni((ew_param)p);
      out->source[p] =
          e->have[p] ? e->source[p] : varshni ? varshni_alloy_source : linear_source;
    }
  }
  hole_masses_of(cat, e, x, y, out);
}

ew_status ew_material_params(const ew_catalogue *cat, const char *name, double x,
                             ew_params *out, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, 0.0, 0, 0.0, &e, err);
  if (st) return st;
  params_of(cat, e, x, 0.0, out);
  return EW_OK;
}

ew_status ew_material_params2(const ew_catalogue *cat, const char *name, double x, double y,
                              ew_params *out, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, y, 1, 0.0, &e, err);
  if (st) return st;
  params_of(cat, e, x, y, out);
  return EW_OK;
}

/* Line of parameter p for error messages: the binary's line, 0 for mixtures. */
static int param_line(const ew_cat_entry *e, int p) { return e->kind == EW_KIND_BINARY ? e->line[p] : 0; }

/* Composition text for messages: "x = 0.3" or "x = 0.4, y = 0.9". */
static const char *comp_text(const ew_cat_entry *e, double x, double y, char *buf, size_t n) {
  if (e->kind == EW_KIND_QUATERNARY) snprintf(buf, n, "x = %g, y = %g", x, y);
  else snprintf(buf, n, "x = %g", x);
  return buf;
}

/* Bulk density-of-states hole masses in the spherical approximation: the warped heavy- and
 * light-hole bands replaced by spheres with γ̄ = (γ2 + γ3)/2, m = 1/(γ1 ∓ 2γ̄) (A. Baldereschi,
 * N. O. Lipari, Phys. Rev. B 8, 2697 (1973); S. L. Chuang, Physics of Photonic Devices (Wiley,
 * 2009), ch. 4; as recalled, from memory).  Bulk carrier densities integrate over all
 * directions of k, so neither the [001] mass 1/(γ1 ∓ 2γ2) nor the k∥ = 0 in-plane mass
 * 1/(γ1 ± γ2) is right for them; the in-plane masses stay for the 2D subband densities of
 * states (a subband disperses in the plane only).  Left 0 without γ3 or when a denominator
 * is not positive (poisson.c then falls back). */
static void dos_masses(const ew_params *p, ew_bands *out) {
  if (!p->have[EW_P_GAMMA3]) return;
  double g1 = p->v[EW_P_GAMMA1], gbar = 0.5 * (p->v[EW_P_GAMMA2] + p->v[EW_P_GAMMA3]);
  if (g1 - 2.0 * gbar > 0.0) out->mhh_dos = 1.0 / (g1 - 2.0 * gbar);
  if (g1 + 2.0 * gbar > 0.0) out->mlh_dos = 1.0 / (g1 + 2.0 * gbar);
}

/* The band-edge electron mass at a gap Eg from the catalogue's mass me0 at the 0 K gap Eg0,
 * through the three-band Kane relation m0/m = 1 + 2F + (E_P/3) [2/Eg + 1/(Eg + Δso)]
 * (I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), Sec. II,
 * eq. for the Γ mass, as recalled (from memory)).  Taken as a difference from the 0 K value,
 * m0/m(Eg) = m0/me0 + (E_P/3) [2/Eg + 1/(Eg + Δ) − 2/Eg0 − 1/(Eg0 + Δ)], so the review's
 * mass holds exactly at 0 K whatever F is, and a gap lowered by temperature (or raised by
 * strain) gives a lighter (heavier) electron.  Without E_P the mass stays me0. */
double ew_kane_edge_mass(double me0, double Ep, double Dso, double Eg0, double Eg) {
  if (!(Ep > 0.0) || !(Eg0 > 0.0) || !(Eg > 0.0)) return me0;
  double D = Dso > 0.0 ? Dso : 0.0;
  double inv = 1.0 / me0 + Ep / 3.0 * (2.0 / Eg + 1.0 / (Eg + D) - 2.0 / Eg0 - 1.0 / (Eg0 + D));
  return inv > 0.0 ? 1.0 / inv : me0;
}

/* A wurtzite entry's band parameters at (x, T) on a template a_sub_nm (<= 0: unstrained):
 * gap by Varshni and bowing, edges and masses of strain_wurtzite.h, polarisation. */
static ew_status bands_wurtzite(const ew_catalogue *cat, const ew_cat_entry *e, double x,
                                double T_K, const ew_params *p, double a_sub_nm,
                                ew_bands *out, ew_error *err) {
  int strained = a_sub_nm > 0.0;
  static const ew_param need_s[] = {EW_P_ALC, EW_P_C13, EW_P_C33, EW_P_WA1, EW_P_WA2, EW_P_D1,
                                    EW_P_D2,  EW_P_D3,  EW_P_D4,  EW_P_E31, EW_P_E33};
  for (size_t k = 0; strained && k < sizeof need_s / sizeof need_s[0]; k++)
    if (!p->have[need_s[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0,
                     "%s lacks %s (needed for the strain on a template)", e->name,
                     ew_param_key(need_s[k]));
  memset(out, 0, sizeof *out);
  out->wurtzite = 1;
  if (!ew_entry_value(cat, e, -1, 0, x, 0.0, T_K, &out->Eg_G_eV) || !(out->Eg_G_eV > 0.0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s at x = %g, T = %g K has a gap of %g eV (must be > 0)", e->name, x, T_K,
                   out->Eg_G_eV);
  ew_wz_input in = {.a_nm = p->v[EW_P_ALC] / 10.0, .c13_kbar = p->v[EW_P_C13],
                    .c33_kbar = p->v[EW_P_C33], .a1_eV = p->v[EW_P_WA1],
                    .a2_eV = p->v[EW_P_WA2], .Dcr_eV = p->v[EW_P_DCR], .Dso_eV = p->v[EW_P_DSO],
                    .e31_C_m2 = p->v[EW_P_E31], .e33_C_m2 = p->v[EW_P_E33]};
  for (int k = 0; k < 4; k++) in.D_eV[k] = p->v[EW_P_D1 + k];
  for (int k = 0; k < 6; k++) in.A[k] = p->v[EW_P_A1 + k];
  ew_wz_bands wb;
  ew_error sub;
  memset(&sub, 0, sizeof sub);
  if (ew_wurtzite_bands(&in, a_sub_nm, &wb, &sub))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s at x = %g: %s", e->name, x,
                   sub.message);
  /* nitride gaps: no X or L data in the catalogue (0 = unknown, as for a zinc-blende
     entry without them) */
  out->Eg_X_eV = out->Eg_L_eV = 0.0;
  out->c_nm = p->have[EW_P_CLC] ? p->v[EW_P_CLC] / 10.0 : 0.0;
  out->Ev_eV = p->v[EW_P_VBO];
  out->Ec_eV = out->Ev_eV + out->Eg_G_eV + wb.dEc_eV;
  out->Ev_hh_eV = out->Ev_eV + wb.E_eV[0];
  out->Ev_lh_eV = out->Ev_eV + wb.E_eV[1];
  out->Ev_ch_eV = out->Ev_eV + wb.E_eV[2];
  out->me = p->v[EW_P_ME];
  out->mhh_z = wb.m_z[0], out->mhh_par = wb.m_t[0];
  out->mlh_z = wb.m_z[1], out->mlh_par = wb.m_t[1];
  out->mch_z = wb.m_z[2], out->mch_par = wb.m_t[2];
  out->eps_r = p->have[EW_P_EPS_S] ? p->v[EW_P_EPS_S] : 0.0;
  out->a_nm = p->have[EW_P_ALC] ? p->v[EW_P_ALC] / 10.0 : 0.0;
  out->Dso_eV = p->v[EW_P_DSO];
  out->c11_kbar = p->have[EW_P_C11] ? p->v[EW_P_C11] : 0.0;
  out->c12_kbar = p->have[EW_P_C12] ? p->v[EW_P_C12] : 0.0;
  out->eps_par = wb.eps_xx;
  out->eps_perp = wb.eps_zz;
  out->dEc_strain_eV = wb.dEc_eV;
  /* the shifts from the unstrained edges (the unstrained top is Ev_eV) */
  ew_wz_bands w0;
  if (strained && ew_wurtzite_bands(&in, 0.0, &w0, &sub) == EW_OK) {
    out->dEhh_strain_eV = wb.E_eV[0] - w0.E_eV[0];
    out->dElh_strain_eV = wb.E_eV[1] - w0.E_eV[1];
  }
  /* Matthews–Blakeslee (60° dislocations of zinc blende) does not apply to the c plane */
  out->critical_thickness_nm = INFINITY;
  out->Psp_C_m2 = p->v[EW_P_PSP];
  out->Ppz_C_m2 = wb.Ppz_C_m2;
  if (!(out->me > 0.0) || !(out->Ec_eV > out->Ev_hh_eV && out->Ec_eV > out->Ev_lh_eV &&
                            out->Ec_eV > out->Ev_ch_eV))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s at x = %g on a template a = %g nm: no gap (Ec = %g, Ev_hh = %g eV) or "
                   "electron mass %g", e->name, x, a_sub_nm, out->Ec_eV, out->Ev_hh_eV, out->me);
  return EW_OK;
}

double ew_bands_monolayer_nm(const ew_bands *b) {
  if (b->wurtzite) return b->c_nm > 0 ? 0.5 * b->c_nm * (1.0 + b->eps_perp) : 0.0;
  return b->a_nm > 0 ? 0.5 * b->a_nm * (1.0 + b->eps_perp) : 0.0;
}

/* Unstrained band parameters of entry e at (x, y, T); (x, y, T) already checked. */
static ew_status bands_at(const ew_catalogue *cat, const ew_cat_entry *e, double x, double y,
                          double T_K, const ew_params *p, ew_bands *out, ew_error *err) {
  const char *name = e->name;
  char ct[64];
  comp_text(e, x, y, ct, sizeof ct);
  static const ew_param need[] = {EW_P_EG_G, EW_P_VBO, EW_P_ME, EW_P_GAMMA1, EW_P_GAMMA2};
  for (size_t k = 0; k < sizeof need / sizeof need[0]; k++)
    if (!p->have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s lacks %s (needed for bands)",
                     name, ew_param_key(need[k]));
  memset(out, 0, sizeof *out);
  double gaps[3];
  int have_gap[3];
  for (int g = 0; g < 3; g++) {
    have_gap[g] = ew_entry_value(cat, e, -1, g, x, y, T_K, &gaps[g]);
    if (!have_gap[g]) gaps[g] = 0.0;
  }
  out->Eg_G_eV = gaps[0];
  out->Eg_X_eV = gaps[1];
  out->Eg_L_eV = gaps[2];
  out->lowest_valley = 0;
  for (int g = 1; g < 3; g++)
    if (have_gap[g] && gaps[g] < gaps[out->lowest_valley]) out->lowest_valley = g;
  if (!(out->Eg_G_eV > 0.0)) /* the requested (x, T) is outside the model's range: an input error */
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s at %s, T = %g K has a Γ gap of %g eV (must be > 0): outside the "
                   "range of the catalogue's Varshni and bowing parameters", name, ct, T_K,
                   out->Eg_G_eV);
  /* VBO is temperature independent; the gap's T shift goes entirely into Ec
   * (Vurgaftman 2001, Sec. II) */
  out->Ev_eV = p->v[EW_P_VBO];
  out->Ec_eV = out->Ev_eV + out->Eg_G_eV;
  out->Ev_hh_eV = out->Ev_eV; /* unstrained */
  out->Ev_lh_eV = out->Ev_eV;
  out->me = p->v[EW_P_ME];
  if (!(out->me > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, param_line(e, EW_P_ME),
                   "%s at %s has electron mass %g (must be > 0)", name, ct, out->me);
  double Eg0;
  if (p->have[EW_P_EP] && ew_entry_value(cat, e, -1, 0, x, y, 0.0, &Eg0)) {
    out->me0 = out->me;
    out->Eg0_G_eV = Eg0;
    out->me = ew_kane_edge_mass(out->me0, p->v[EW_P_EP], p->have[EW_P_DSO] ? p->v[EW_P_DSO] : 0.0,
                             Eg0, out->Eg_G_eV);
  }
  /* Hole masses from the Luttinger parameters (J. M. Luttinger, Phys. Rev. 102, 1030
   * (1956)): along [001] 1/(γ1 ∓ 2γ2), in plane 1/(γ1 ± γ2) */
  double g1 = p->v[EW_P_GAMMA1], g2 = p->v[EW_P_GAMMA2];
  double den[4] = {g1 - 2.0 * g2, g1 + 2.0 * g2, g1 + g2, g1 - g2};
  static const char *const den_name[4] = {"γ1 − 2γ2", "γ1 + 2γ2", "γ1 + γ2", "γ1 − γ2"};
  for (int k = 0; k < 4; k++)
    if (!(den[k] > 0.0))
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, param_line(e, EW_P_GAMMA2),
                     "%s at %s: %s = %g <= 0 would give a non-positive hole mass", name, ct,
                     den_name[k], den[k]);
  out->mhh_z = 1.0 / den[0];
  out->mlh_z = 1.0 / den[1];
  out->mhh_par = 1.0 / den[2];
  out->mlh_par = 1.0 / den[3];
  dos_masses(p, out);
  out->gamma3 = p->have[EW_P_GAMMA3] ? p->v[EW_P_GAMMA3] : 0.0;
  out->eps_r = p->have[EW_P_EPS_S] ? p->v[EW_P_EPS_S] : 0.0;
  out->a_nm = p->have[EW_P_ALC] ? p->v[EW_P_ALC] / 10.0 : 0.0;
  out->Ep_eV = p->have[EW_P_EP] ? p->v[EW_P_EP] : 0.0;
  out->Dso_eV = p->have[EW_P_DSO] ? p->v[EW_P_DSO] : 0.0;
  out->c11_kbar = p->have[EW_P_C11] ? p->v[EW_P_C11] : 0.0;
  out->c12_kbar = p->have[EW_P_C12] ? p->v[EW_P_C12] : 0.0;
  out->critical_thickness_nm = INFINITY;
  return EW_OK;
}

/* Strain of a layer on a substrate of lattice constant a_sub_nm > 0 (strain.h), applied to
 * the unstrained bands b. */
static ew_status apply_strain(const ew_cat_entry *e, double x, double y, const ew_params *p,
                              double a_sub_nm, ew_bands *b, ew_error *err) {
  static const ew_param need[] = {EW_P_ALC, EW_P_C11, EW_P_C12, EW_P_AC,
                                  EW_P_AV,  EW_P_B,   EW_P_DSO};
  for (size_t k = 0; k < sizeof need / sizeof need[0]; k++)
    if (!p->have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0,
                     "%s lacks %s (needed for the strain on a substrate)", e->name,
                     ew_param_key(need[k]));
  /* the catalogue's a_lattice is the 300 K value, used at every temperature */
  ew_strain_input in = {.a_nm = p->v[EW_P_ALC] / 10.0,
                        .c11_kbar = p->v[EW_P_C11],
                        .c12_kbar = p->v[EW_P_C12],
                        .a_c_eV = p->v[EW_P_AC],
                        .a_v_eV = p->v[EW_P_AV],
                        .b_eV = p->v[EW_P_B],
                        .Dso_eV = p->v[EW_P_DSO]};
  ew_strain_shifts sh;
  ew_error sub;
  memset(&sub, 0, sizeof sub);
  if (ew_strain_biaxial(&in, a_sub_nm, &sh, &sub))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s: %s", e->name, sub.message);
  b->eps_par = sh.eps_par;
  b->eps_perp = sh.eps_perp;
  b->dEc_strain_eV = sh.dEc_eV;
  b->dEhh_strain_eV = sh.dEhh_eV;
  b->dElh_strain_eV = sh.dElh_eV;
  b->dE_shear_strain_eV = sh.dE_shear_eV;
  b->Ec_eV += sh.dEc_eV;
  b->Ev_hh_eV += sh.dEhh_eV;
  b->Ev_lh_eV += sh.dElh_eV;
  /* the electron mass follows the strained gap too: its hydrostatic part, Γ6 to the mean of
     the Γ8 edges (the shear splitting of hh and lh changes the Γ mass only in second order and
     anisotropically, left out) */
  if (b->me0 > 0.0)
    b->me = ew_kane_edge_mass(b->me0, b->Ep_eV, b->Dso_eV, b->Eg0_G_eV,
                           b->Eg_G_eV + sh.dEc_eV - sh.dEv_hyd_eV);
  double hc = ew_mb_critical_thickness_nm(in.a_nm, sh.eps_par,
                                          ew_strain_poisson(in.c11_kbar, in.c12_kbar), 2);
  b->critical_thickness_nm = isnan(hc) ? INFINITY : hc;
  if (!(b->Ec_eV > b->Ev_hh_eV && b->Ec_eV > b->Ev_lh_eV)) {
    char ct[64];
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s at %s on a substrate with a = %g nm: strain ε∥ = %.4g closes the gap "
                   "(Ec = %g, Ev_hh = %g, Ev_lh = %g eV)",
                   e->name, comp_text(e, x, y, ct, sizeof ct), a_sub_nm, sh.eps_par, b->Ec_eV,
                   b->Ev_hh_eV, b->Ev_lh_eV);
  }
  return EW_OK;
}

ew_status ew_material_bands(const ew_catalogue *cat, const char *name, double x, double T_K,
                            ew_bands *out, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, 0.0, 0, T_K, &e, err);
  if (st) return st;
  ew_params p;
  params_of(cat, e, x, 0.0, &p);
  if (e->wurtzite) return bands_wurtzite(cat, e, x, T_K, &p, 0.0, out, err);
  return bands_at(cat, e, x, 0.0, T_K, &p, out, err);
}

ew_status ew_material_bands_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, ew_bands *out, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, y, 1, T_K, &e, err);
  if (st) return st;
  if (!isfinite(a_sub_nm))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "substrate lattice constant %g nm is not finite",
                   a_sub_nm);
  ew_params p;
  params_of(cat, e, x, y, &p);
  if (e->wurtzite) return bands_wurtzite(cat, e, x, T_K, &p, a_sub_nm, out, err);
  if ((st = bands_at(cat, e, x, y, T_K, &p, out, err))) return st;
  if (a_sub_nm <= 0.0) return EW_OK;
  return apply_strain(e, x, y, &p, a_sub_nm, out, err);
}

ew_status ew_lattice_nm(const ew_catalogue *cat, const char *name, double x, double y,
                        double *a_nm, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, y, 1, 0.0, &e, err);
  if (st) return st;
  double v;
  if (!ew_entry_value(cat, e, EW_P_ALC, -1, x, y, 0.0, &v) || !(v > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s has no lattice constant a_lattice",
                   name);
  *a_nm = v / 10.0;
  return EW_OK;
}
