/* test_gain.c — the material gain model (gain.c, gain_fermi.c, gain_spectrum.c,
 * gain_output.c, api_gain.c) against outside references:
 *  - polarisation factors at k∥ = 0: heavy hole TE 3/2 M_b², TM 0; light hole TE 1/2 M_b²,
 *    TM 2 M_b² (S. L. Chuang, Physics of Optoelectronic Devices (Wiley, 1995), Table 9.1),
 *    times the envelope overlap computed here by the trapezoid rule;
 *  - the electron density of the quasi-Fermi level: the analytic 2-D Fermi integral of each
 *    parabolic subband (Chuang 1995, sec. 9.3), typed here; the hole density by a fine
 *    trapezoid quadrature of the k·p dispersion (the public ew_dispersion) in the test;
 *  - the step gain near the band edge: Chuang's formula g = C0 ρ_r (3/2) M_b² |O|² (f_c − f_v)
 *    with C0 = π e²/(n_r c ε0 m0² ω), M_b² = m0 Ep/6, ρ_r the joint density of states of the
 *    e1–hh1 pair from the dispersion, all written out here;
 *  - Bernard–Duraffourg: the gain changes sign where ħω = Fc − Fv (M. G. A. Bernard,
 *    G. Duraffourg, Phys. Status Solidi 1, 699 (1961));
 *  - the Lasher–Stern relation between spontaneous emission and gain, r_sp = n_r² (ħω)² /
 *    (π² ħ³ c²) g_avg / (1 − e^{(ħω − ΔF)/kT}) (G. Lasher, F. Stern, Phys. Rev. 133, A553
 *    (1964));
 *  - the size of the gain: a GaAs/Al0.3Ga0.7As 8 nm well has a peak TE gain of order 10³ /cm
 *    at a few 10¹² cm⁻² and transparency near 1–2 × 10¹² cm⁻² (Chuang, Physics of Photonic
 *    Devices (Wiley, 2009), ch. 10 figures; from memory);
 *  - compressive strain lowers the transparency density and raises the gain (E. Yablonovitch,
 *    E. O. Kane, J. Lightwave Technol. 4, 504 (1986); A. R. Adams, Electron. Lett. 22, 249
 *    (1986));
 *  - the Lorentzian's absorption below the gap (its known artefact) and the secant's lack of it;
 *  - JSON and CSV read back, every field against the accessors. */
#include <math.h>

#include "testutil.h"
#include "roundtrip.h"

#include "gain.h"

/* CODATA 2018, typed here */
#define HBAR 1.054571817e-34
#define QE 1.602176634e-19
#define M0 9.1093837015e-31
#define C_LIGHT 299792458.0
#define EPS0 8.8541878128e-12
#define KB_EV 8.617333262e-5
#define HB2M (HBAR * HBAR / (2.0 * M0) / QE * 1e18) /* ħ²/2m0, eV nm² */

TU_CATALOGUE_FIXTURE

static const char *gaas_text =
    "temperature = 300.0;\n"
    "layers = (\n"
    "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
    "  { name = \"well\"; material = \"GaAs\"; thickness = 6.0; },\n"
    "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n"
    ");\n";


static ew_gain *gain_of(const ew_stack *st, const ew_gain_options *o) {
  ew_gain *g = NULL;
  ew_error err;
  assert_int_equal(ew_gain_create(&g, &err), EW_OK);
  if (ew_gain_compute(g, st, o, &err)) print_error("%s\n", err.message);
  assert_true(ew_gain_density_count(g) > 0);
  return g;
}

static ew_result *solve(const ew_stack *st) {
  ew_options so;
  ew_options_default(&so);
  so.error_estimate = 0;
  so.excitons = 0;
  ew_result *r = NULL;
  ew_error err;
  assert_int_equal(ew_solve(st, &so, &r, &err), EW_OK);
  return r;
}

static size_t state_of(const ew_result *r, const char *label) {
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (!strcmp(ew_result_state(r, i)->label, label)) return i;
  fail_msg("no state %s", label);
  return 0;
}

/* |∫ ψ_a ψ_b dz|² by the trapezoid rule on the result's nodes */
static double overlap2(const ew_result *r, size_t a, size_t b) {
  const double *z = ew_result_z_nm(r), *pa = ew_result_wavefunction(r, a),
               *pb = ew_result_wavefunction(r, b);
  double s = 0;
  for (size_t i = 0; i + 1 < ew_result_node_count(r); i++)
    s += 0.5 * (z[i + 1] - z[i]) * (pa[i] * pb[i] + pa[i + 1] * pb[i + 1]);
  return s * s;
}

/* hole subband index of a label in the dispersion of the gain's own options */
static size_t subband_of(const ew_stack *st, const ew_gain_options *o, const char *label,
                         ew_dispersion **keep) {
  ew_dispersion *d = NULL;
  ew_error err;
  assert_int_equal(ew_dispersion_create(&d, &err), EW_OK);
  ew_dispersion_options dp;
  ew_dispersion_options_default(&dp);
  dp.axial = 1, dp.kmax_inv_nm = o->kmax_inv_nm, dp.points = o->k_points;
  assert_int_equal(ew_dispersion_compute(d, st, &dp, &err), EW_OK);
  size_t j = 0;
  while (j < ew_dispersion_subband_count(d) && strcmp(ew_dispersion_label(d, j), label)) j++;
  assert_true(j < ew_dispersion_subband_count(d));
  if (keep) *keep = d;
  else ew_dispersion_free(d);
  return j;
}

/* Chuang's Table 9.1 at k∥ = 0, summed over each Kramers pair (the electron spin summed):
 * hh: TE 2·(3/2) M_b² = P² → F = |O|², TM 0; lh: TE 2·(1/2) M_b² → |O|²/3, TM 4|O|²/3. */
static void polarisation_k0(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_to_cm2 = o.density_from_cm2;
  ew_gain *g = gain_of(st, &o);
  ew_result *r = solve(st);
  size_t e1 = state_of(r, "e1");
  double o_hh = overlap2(r, e1, state_of(r, "hh1")), o_lh = overlap2(r, e1, state_of(r, "lh1"));
  size_t jh = subband_of(st, &o, "hh1", NULL), jl = subband_of(st, &o, "lh1", NULL);
  double te[2] = {0, 0}, tm[2] = {0, 0};
  for (int c = 0; c < 2; c++)
    for (size_t b = 2 * (c ? jl : jh); b < 2 * (c ? jl : jh) + 2; b++) {
      size_t at = (0 * g->nb + b) * g->nk; /* e1 is the first electron subband, k∥ = 0 */
      te[c] += g->f_te[at], tm[c] += g->f_tm[at];
    }
  /* the k·p k∥ = 0 vectors equal the single-band ones to solver precision (test_kp.c); the
     trapezoid and the dual-cell weights agree on a uniform grid */
  TU_NEAR(te[0], o_hh, 1e-6, "hh TE = |O|² (3/2 M_b² per spin)");
  TU_NEAR(tm[0], 0.0, 1e-9, "hh has no TM");
  TU_NEAR(te[1], o_lh / 3.0, 1e-6, "lh TE = |O|²/3 (1/2 M_b² per spin)");
  TU_NEAR(tm[1], 4.0 * o_lh / 3.0, 1e-6, "lh TM = 4|O|²/3 (2 M_b² per spin)");
  ew_result_free(r);
  ew_gain_free(g);
  ew_stack_free(st);
}

/* the hole density of Fv from the dispersion by a 20000-step trapezoid in s = k² on the
 * energies linear in s between samples, the parabolic continuation beyond kmax integrated
 * numerically to 8 kmax */
static double holes_by_quadrature(const ew_dispersion *d, double Fv, double kT) {
  size_t nk = ew_dispersion_point_count(d);
  double kmax = ew_dispersion_k_inv_nm(d, nk - 1), p = 0;
  for (size_t j = 0; j < ew_dispersion_subband_count(d); j++)
    for (int br = 0; br < 2; br++) {
      double sN = kmax * kmax, sN1 = pow(ew_dispersion_k_inv_nm(d, nk - 2), 2);
      double EN = ew_dispersion_branch_eV(d, j, br, nk - 1);
      double slope = (EN - ew_dispersion_branch_eV(d, j, br, nk - 2)) / (sN - sN1);
      if (slope > 0) slope = 0; /* no continuation of a rising branch */
      size_t steps = 20000;
      double s_end = 64.0 * sN, ds = s_end / (double)steps, sum = 0;
      for (size_t t = 0; t <= steps; t++) {
        double s = ds * (double)t, E;
        if (s >= sN) {
          E = EN + slope * (s - sN);
          if (slope == 0 && s > sN) E = -INFINITY; /* nothing beyond */
        } else {
          size_t i = 0;
          while (pow(ew_dispersion_k_inv_nm(d, i + 1), 2) < s) i++;
          double s0 = pow(ew_dispersion_k_inv_nm(d, i), 2), s1 = pow(ew_dispersion_k_inv_nm(d, i + 1), 2);
          E = ew_dispersion_branch_eV(d, j, br, i) +
              (ew_dispersion_branch_eV(d, j, br, i + 1) - ew_dispersion_branch_eV(d, j, br, i)) *
                  (s - s0) / (s1 - s0);
        }
        double occ = 1.0 / (1.0 + exp((Fv - E) / kT)); /* 1 − f */
        sum += (t == 0 || t == steps ? 0.5 : 1.0) * occ;
      }
      p += sum * ds / (4.0 * M_PI);
    }
  return p * 1e14;
}

static void fermi_levels(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = 1e12, o.density_to_cm2 = 7e12, o.density_step_cm2 = 3e12;
  ew_gain *g = gain_of(st, &o);
  ew_result *r = solve(st);
  ew_dispersion *d = NULL;
  subband_of(st, &o, "hh1", &d);
  double kT = KB_EV * 300.0;
  for (size_t k = 0; k < ew_gain_density_count(g); k++) {
    double N = ew_gain_density_cm2(g, k), Fc = ew_gain_fermi_electron_eV(g, k), n = 0;
    for (size_t i = 0; i < ew_result_state_count(r); i++) {
      const ew_state *s = ew_result_state(r, i);
      if (s->band != EW_BAND_E) continue;
      /* n = (m kT / π ħ²) ln(1 + e^{(F − E)/kT}) per subband, m kT/πħ² = m kT /(2π HB2M) */
      n += s->inplane_mass * kT / (2.0 * M_PI * HB2M) * log1p(exp((Fc - s->energy_eV) / kT)) * 1e14;
    }
    TU_NEAR(n / N, 1.0, 1e-9, "bisection to 1e-12 eV");
    double p = holes_by_quadrature(d, ew_gain_fermi_hole_eV(g, k), kT);
    TU_NEAR(p / N, 1.0, 5e-5, "20000-step trapezoid against the exact segment integrals");
    TU_NEAR(ew_gain_fermi_separation_eV(g, k), Fc - ew_gain_fermi_hole_eV(g, k), 1e-15, "difference");
  }
  ew_dispersion_free(d);
  ew_result_free(r);
  ew_gain_free(g);
  ew_stack_free(st);
}

/* Chuang's step gain of the e1–hh1 pair 1 meV above the edge with a 0.2 meV line */
static void step_gain(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = o.density_to_cm2 = 4e12;
  o.linewidth_meV = 0.2;
  ew_gain *g0 = gain_of(st, &o);
  double edge = ew_gain_edge_eV(g0);
  o.energy_from_eV = edge + 0.001, o.energy_to_eV = edge + 0.001;
  ew_gain *g = gain_of(st, &o);
  ew_result *r = solve(st);
  size_t e1 = state_of(r, "e1"), hh1 = state_of(r, "hh1");
  double O2 = overlap2(r, e1, hh1), me = ew_result_state(r, e1)->inplane_mass;
  double Ee = ew_result_state(r, e1)->energy_eV;
  ew_dispersion *d = NULL;
  size_t j = subband_of(st, &o, "hh1", &d);
  double hw = ew_gain_energy_eV(g, 0);
  /* the k where E_e(k) − E_hh1(k) = ħω, on the dispersion interval that holds it (energies
     linear in k² there), and the joint density of states ρ_r = 2 ∫ d²k/(2π)² δ(·) =
     1/(2π dE/ds) per unit area */
  size_t i = 0;
  double sa = 0, sb = 0, h0 = 0, h1 = 0;
  for (; i + 1 < ew_dispersion_point_count(d); i++) {
    sa = pow(ew_dispersion_k_inv_nm(d, i), 2), sb = pow(ew_dispersion_k_inv_nm(d, i + 1), 2);
    h0 = ew_dispersion_energy_eV(d, j, i), h1 = ew_dispersion_energy_eV(d, j, i + 1);
    if (Ee + HB2M * sb / me - h1 >= hw) break;
  }
  double dEds = HB2M / me - (h1 - h0) / (sb - sa); /* eV nm² */
  double s = sa + (hw - (Ee + HB2M * sa / me - h0)) / dEds;
  assert_true(s >= sa && s <= sb);
  h0 = h0 + (h1 - h0) * (s - sa) / (sb - sa); /* E_hh1 at s */
  double Ec = Ee + HB2M * s / me, Eh = h0, kT = KB_EV * 300.0;
  double fc = 1.0 / (1.0 + exp((Ec - ew_gain_fermi_electron_eV(g, 0)) / kT));
  double fv = 1.0 / (1.0 + exp((Eh - ew_gain_fermi_hole_eV(g, 0)) / kT));
  double rho = 1.0 / (2.0 * M_PI * dEds) * 1e18 / QE / (ew_gain_well_nm(g) * 1e-9); /* 1/(J m³) */
  double omega = hw * QE / HBAR, nr = 3.6;
  double C0 = M_PI * QE * QE / (nr * C_LIGHT * EPS0 * M0 * M0 * omega);
  double Mb2 = M0 * ew_gain_Ep_eV(g) * QE / 6.0;
  double want = C0 * rho * 1.5 * Mb2 * O2 * (fc - fv) / 100.0; /* 1/cm */
  TU_NEAR(ew_gain_te_cm(g, 0, 0) / want, 1.0, 2e-3,
          "hh1 light-hole admixture at k ≈ 0.03/nm (∝ k²) and the segment midpoints");
  TU_NEAR(ew_gain_tm_cm(g, 0, 0) / want, 0.0, 2e-3, "heavy holes give no TM");
  ew_dispersion_free(d);
  ew_result_free(r);
  ew_gain_free(g);
  ew_gain_free(g0);
  ew_stack_free(st);
}

/* the highest energy at which the series y changes sign from + to −, linearly interpolated */
static double sign_change(const ew_gain *g, size_t d, int tm) {
  double x = NAN;
  for (size_t i = 0; i + 1 < ew_gain_energy_count(g); i++) {
    double a = tm ? ew_gain_tm_cm(g, d, i) : ew_gain_te_cm(g, d, i);
    double b = tm ? ew_gain_tm_cm(g, d, i + 1) : ew_gain_te_cm(g, d, i + 1);
    if (a > 0 && b <= 0)
      x = ew_gain_energy_eV(g, i) + (ew_gain_energy_eV(g, i + 1) - ew_gain_energy_eV(g, i)) * a / (a - b);
  }
  return x;
}

static void bernard_duraffourg(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = 3e12, o.density_to_cm2 = 7e12, o.density_step_cm2 = 2e12;
  o.linewidth_meV = 1.0, o.energy_step_eV = 0.0005;
  ew_gain *g = gain_of(st, &o);
  for (size_t d = 0; d < ew_gain_density_count(g); d++) {
    double dF = ew_gain_fermi_separation_eV(g, d);
    /* f_c − f_v changes sign exactly at E_cv = ΔF; the 1 meV line and the ≤ 2 meV segments
       (occupations at their midpoints) move the zero by a fraction of the line width */
    TU_NEAR(sign_change(g, d, 0), dF, 5e-4, "TE: half the 1 meV line");
    TU_NEAR(sign_change(g, d, 1), dF, 5e-4, "TM: the same");
  }
  ew_gain_free(g);
  ew_stack_free(st);
}

static void lasher_stern(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = o.density_to_cm2 = 5e12;
  o.linewidth_meV = 0.2, o.energy_step_eV = 0.002;
  ew_gain *g = gain_of(st, &o);
  double dF = ew_gain_fermi_separation_eV(g, 0), kT = KB_EV * 300.0, nr = 3.6;
  int checked = 0;
  for (size_t i = 0; i < ew_gain_energy_count(g); i++) {
    double hw = ew_gain_energy_eV(g, i);
    if (hw < ew_gain_edge_eV(g) + 0.001 || hw > dF - 3 * kT) continue;
    double gavg = (2.0 * ew_gain_te_cm(g, 0, i) + ew_gain_tm_cm(g, 0, i)) / 3.0 * 100.0; /* 1/m */
    double hwJ = hw * QE;
    double want = nr * nr * hwJ * hwJ / (M_PI * M_PI * pow(HBAR, 3) * C_LIGHT * C_LIGHT) * gavg /
                  (1.0 - exp((hw - dF) / kT)) * QE * 1e-6; /* 1/(s cm³ eV) */
    TU_NEAR(ew_gain_spontaneous(g, 0, i) / want, 1.0, 1e-3,
            "segment midpoints within 1 meV of ħω: the Boltzmann factor to ~0.1 %");
    checked++;
  }
  assert_true(checked >= 5);
  ew_gain_free(g);
  ew_stack_free(st);
}

/* an 8 nm GaAs well between Al0.3Ga0.7As: peak TE gain ~10³ /cm at 3e12 (from memory) */
static void textbook_size(void **state) {
  (void)state;
  ew_stack *st = read_stack(
      "temperature = 300.0;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 15.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 8.0; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 15.0; }\n);\n");
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = o.density_to_cm2 = 3e12;
  ew_gain *g = gain_of(st, &o);
  double peak = ew_gain_peak_te_cm(g, 0), tr = ew_gain_transparency_density_cm2(g);
  assert_true(peak > 500 && peak < 4000);  /* Chuang 2009 ch. 10 (from memory): ~10³ /cm */
  assert_true(tr > 0.8e12 && tr < 2.5e12); /* transparency 1–2 × 10¹² cm⁻² (from memory) */
  TU_NEAR(ew_gain_well_nm(g), 8.0, 1e-12, "the layer of e1");
  TU_NEAR(ew_gain_Ep_eV(g), 28.8, 0.05, "GaAs Ep, Vurgaftman et al. 2001 Table III");
  ew_gain_free(g);
  ew_stack_free(st);
}

/* In0.2Ga0.8As 6 nm between Al0.3Ga0.7As barriers, pseudomorphic on GaAs (compressive,
 * ε ≈ −1.4 %) against the same well unstrained (no substrate) */
static void compressive_strain(void **state) {
  (void)state;
#define STRAIN_STACK(SUBSTRATE)                                                        \
  "temperature = 300.0;\n" SUBSTRATE "layers = (\n"                                       \
  "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"               \
  "  { name = \"well\"; material = \"InGaAs\"; x = 0.2; thickness = 6.0; },\n"              \
  "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n);\n"
  const char *text[2] = {STRAIN_STACK("substrate = \"GaAs\";\n"), STRAIN_STACK("")};
#undef STRAIN_STACK
  double tr[2], peak[2];
  for (int k = 0; k < 2; k++) {
    ew_stack *st = read_stack(text[k]);
    ew_gain_options o;
    ew_gain_options_default(&o);
    o.density_from_cm2 = o.density_to_cm2 = 3e12;
    ew_gain *g = gain_of(st, &o);
    tr[k] = ew_gain_transparency_density_cm2(g), peak[k] = ew_gain_peak_te_cm(g, 0);
    ew_gain_free(g);
    ew_stack_free(st);
  }
  /* Yablonovitch & Kane 1986, Adams 1986: the lighter in-plane heavy hole of a compressed
     well lowers the transparency density and raises the gain at a given density */
  assert_true(tr[0] < 0.98 * tr[1]);
  assert_true(peak[0] > 1.2 * peak[1]);
}

/* the Lorentzian's tails absorb 80 meV below the edge at a density with gain; the secant's
 * e^{−|x|/γ} tails give nothing there */
static void lorentzian_artefact(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = o.density_to_cm2 = 4e12;
  double v[2];
  for (int k = 0; k < 2; k++) {
    o.lorentzian = k;
    ew_gain *g = gain_of(st, &o);
    size_t i = 20; /* 80 meV below the edge: the window starts 100 meV below it */
    TU_NEAR(ew_gain_energy_eV(g, i), ew_gain_edge_eV(g) - 0.08, 1e-9, "the default window");
    v[k] = ew_gain_te_cm(g, 0, i);
    assert_string_equal(ew_gain_lineshape(g), k ? "lorentzian" : "sech");
    ew_gain_free(g);
  }
  assert_true(v[1] < -1.0);               /* absorption below the gap: the artefact */
  assert_true(fabs(v[0]) < 1e-6 * -v[1]); /* sech(80/3.8) ~ 1e-9 */
  ew_stack_free(st);
}

/* The line's width: a symmetric line over the step of the 2-D joint density of states at the
 * edge E0 gives g(E0 − Γ/2) = C(−Γ/2) · step, C the line's cumulative distribution: for the
 * secant (2/π) atan(e^{−arcosh 2}) = 1/6 exactly (sech(x/γ) = 1/2 at x = γ arcosh 2), for the
 * Lorentzian 1/2 − atan(1)/π = 1/4.  The step is read with a 0.05 meV line 0.5 meV above E0. */
static void line_width(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = o.density_to_cm2 = 4e12;
  ew_gain *g0 = gain_of(st, &o);
  double E0 = ew_gain_edge_eV(g0);
  ew_gain_free(g0);
  o.linewidth_meV = 0.05, o.energy_from_eV = o.energy_to_eV = E0 + 0.0005;
  ew_gain *gs = gain_of(st, &o);
  double step = ew_gain_te_cm(gs, 0, 0);
  ew_gain_free(gs);
  double want[2] = {1.0 / 6.0, 0.25};
  for (int k = 0; k < 2; k++) {
    o.lorentzian = k, o.linewidth_meV = 2.0;
    o.energy_from_eV = o.energy_to_eV = E0 - 0.001;
    ew_gain *g = gain_of(st, &o);
    /* the step varies by ~1 % over the few meV the secant reaches; the Lorentzian's 1/x²
       tails also reach the absorbing part above ΔF (~60 meV away: weight Γ/(2π·60 meV) ≈ 0.5 %
       of the line) and vary more: 0.02 (a width of Γ instead of Γ/2 would give 0.35) */
    TU_NEAR(ew_gain_te_cm(g, 0, 0) / step, want[k], k ? 0.02 : 0.006, "FWHM = --linewidth");
    ew_gain_free(g);
  }
  ew_stack_free(st);
}

static void roundtrip(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = 2e12, o.density_to_cm2 = 4e12, o.energy_step_eV = 0.005;
  ew_gain *g = gain_of(st, &o);
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_int_equal(ew_gain_write_json(g, f, NULL), EW_OK);
  fclose(f);
  rj j;
  assert_int_equal(rj_parse(buf, &j), 0);
  assert_string_equal(rj_get(&j, "model")->str, "4band");
  assert_string_equal(rj_get(&j, "lineshape")->str, "sech");
  assert_string_equal(rj_get(&j, "well_layer")->str, "well");
  struct { const char *k; double v; } top[] = {
      {"linewidth_meV", 10.0}, {"temperature_K", 300.0}, {"well_nm", ew_gain_well_nm(g)},
      {"Ep_eV", ew_gain_Ep_eV(g)}, {"refractive_index", 3.6}, {"edge_eV", ew_gain_edge_eV(g)},
      {"transparency_density_cm2", ew_gain_transparency_density_cm2(g)}};
  for (size_t k = 0; k < sizeof top / sizeof *top; k++)
    RT_SAME(rj_get(&j, top[k].k)->num, top[k].v, rt_tol_sig(top[k].v, 10), top[k].k);
  const rj *ds = rj_get(&j, "densities");
  assert_int_equal(ds->n, ew_gain_density_count(g));
  size_t np = ew_gain_energy_count(g);
  for (size_t d = 0; d < ds->n; d++) {
    const rj *x = &ds->item[d];
    struct { const char *k; double v; } per[] = {
        {"density_cm2", ew_gain_density_cm2(g, d)},
        {"fermi_separation_eV", ew_gain_fermi_separation_eV(g, d)},
        {"fermi_electron_eV", ew_gain_fermi_electron_eV(g, d)},
        {"fermi_hole_eV", ew_gain_fermi_hole_eV(g, d)},
        {"peak_gain_te_cm", ew_gain_peak_te_cm(g, d)},
        {"peak_energy_te_eV", ew_gain_peak_te_energy_eV(g, d)},
        {"peak_gain_tm_cm", ew_gain_peak_tm_cm(g, d)}};
    for (size_t k = 0; k < sizeof per / sizeof *per; k++)
      RT_SAME(rj_get(x, per[k].k)->num, per[k].v, rt_tol_sig(per[k].v, 10), per[k].k);
    const char *arr[] = {"energy_eV", "gain_te_cm", "gain_tm_cm", "spontaneous"};
    for (int a = 0; a < 4; a++) {
      const rj *v = rj_get(x, arr[a]);
      assert_int_equal(v->n, np);
      for (size_t i = 0; i < np; i++) {
        double want = a == 0 ? ew_gain_energy_eV(g, i) : a == 1 ? ew_gain_te_cm(g, d, i)
                      : a == 2 ? ew_gain_tm_cm(g, d, i) : ew_gain_spontaneous(g, d, i);
        RT_SAME(v->item[i].num, want, rt_tol_sig(want, 10), arr[a]);
      }
    }
  }
  rj_free(&j);
  free(buf);
  /* CSV: one row per density and energy, the columns by name */
  char dir[256], path[300];
  assert_int_equal(tu_mkdtemp("gain", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/gain.csv", dir);
  f = fopen(path, "w");
  assert_non_null(f);
  assert_int_equal(ew_gain_write_csv(g, f, NULL), EW_OK);
  fclose(f);
  rcsv c;
  assert_int_equal(rcsv_read(path, &c), 0);
  assert_int_equal(c.ncol, 6);
  assert_int_equal(c.nrows, ew_gain_density_count(g) * np);
  const char *cols[] = {"density_cm2", "fermi_separation_eV", "energy_eV", "gain_te_cm",
                        "gain_tm_cm", "spontaneous"};
  for (size_t row = 0; row < c.nrows; row++) {
    size_t d = row / np, i = row % np;
    double want[6] = {ew_gain_density_cm2(g, d), ew_gain_fermi_separation_eV(g, d),
                      ew_gain_energy_eV(g, i), ew_gain_te_cm(g, d, i), ew_gain_tm_cm(g, d, i),
                      ew_gain_spontaneous(g, d, i)};
    for (int k = 0; k < 6; k++) {
      int col = rcsv_col(&c, cols[k]);
      assert_true(col >= 0);
      RT_SAME(rcsv_num(&c, row, col), want[k], rt_tol_sig(want[k], 10), cols[k]);
    }
  }
  rcsv_free(&c);
  tu_rm_tree(dir);
  ew_gain_free(g);
  ew_stack_free(st);
}

static void refusals(void **state) {
  (void)state;
  ew_stack *st = read_stack(gaas_text);
  ew_gain *g = NULL;
  ew_error err;
  assert_int_equal(ew_gain_create(NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_gain_create(&g, &err), EW_OK);
  assert_int_equal(ew_gain_compute(g, NULL, NULL, &err), EW_ERR_USAGE);
  ew_gain_options o;
  ew_gain_options_default(&o);
  o.density_from_cm2 = -1;
  assert_int_equal(ew_gain_compute(g, st, &o, &err), EW_ERR_USAGE);
  ew_gain_options_default(&o);
  o.linewidth_meV = 0;
  assert_int_equal(ew_gain_compute(g, st, &o, &err), EW_ERR_USAGE);
  ew_gain_options_default(&o);
  o.model = 5;
  assert_int_equal(ew_gain_compute(g, st, &o, &err), EW_ERR_USAGE);
  assert_int_equal(ew_gain_density_count(g), 0);
  assert_true(isnan(ew_gain_te_cm(g, 0, 0)));
  assert_int_equal(ew_gain_write_json(g, stdout, &err), EW_ERR_USAGE);
  ew_stack *doped = read_stack(
      "temperature = 300.0;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 6.0; doping = { donors = 1e17; }; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n);\n");
  assert_non_null(doped);
  assert_int_equal(ew_gain_compute(g, doped, NULL, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "doped"));
  ew_stack_free(doped);
  ew_gain_free(g);
  ew_stack_free(st);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(polarisation_k0),   cmocka_unit_test(fermi_levels),
      cmocka_unit_test(step_gain),         cmocka_unit_test(bernard_duraffourg),
      cmocka_unit_test(lasher_stern),      cmocka_unit_test(textbook_size),
      cmocka_unit_test(compressive_strain), cmocka_unit_test(lorentzian_artefact),
      cmocka_unit_test(line_width),        cmocka_unit_test(roundtrip),
      cmocka_unit_test(refusals),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
