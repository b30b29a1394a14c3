/* test_exciton.c — quasi-2D exciton binding (G. Bastard, E. E. Mendez, L. L. Chang, L. Esaki,
 * Phys. Rev. B 26, 1974 (1982)) and interband polarisation weights. */
#include <math.h>

#include "testutil.h"

#include "constants.h"
#include "exciton.h"
#include "solve.h"

/* CODATA 2018 (E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)): Rydberg energy
 * R∞hc = 13.605693122994 eV and Bohr radius a0 = 0.0529177210903 nm — independent of the
 * e, ε0, ħ, m0 of constants.h through which the code computes them. */
#define RYD_EV 13.605693122994
#define BOHR_NM 0.0529177210903

static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  ew_error err;
  return ew_catalogue_load("materials", &cat, &err) == EW_OK ? 0 : -1;
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

/* GaAs well of width L between Al0.3Ga0.7As barriers at 4 K, from the catalogue. */
static ew_result *gaas_well(double L, double step, ew_stack **st) {
  char text[1024];
  snprintf(text, sizeof text,
           "temperature = 4.0;\n"
           "layers = (\n"
           " { name = \"b1\"; material = \"AlGaAs\"; x = 0.30; thickness = 30.0; },\n"
           " { name = \"well\"; material = \"GaAs\"; thickness = %g; },\n"
           " { name = \"b2\"; material = \"AlGaAs\"; x = 0.30; thickness = 30.0; }\n"
           ");\n",
           L);
  ew_error err;
  char buf[2048];
  if (ew_stack_read_string(text, "test", cat, st, &err) != EW_OK) {
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
    return NULL;
  }
  ew_options opt;
  ew_options_default(&opt);
  if (step > 0) opt.grid_step_nm = step;
  ew_result *r = NULL;
  if (ew_solve(*st, &opt, &r, &err) != EW_OK)
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
  return r;
}

static ew_line *find_line(ew_result *r, const char *lower, const char *upper) {
  for (size_t i = 0; i < r->n_lines; i++) {
    ew_line *ln = &r->lines[i];
    if (!strcmp(r->states[ln->lower].label, lower) && !strcmp(r->states[ln->upper].label, upper))
      return ln;
  }
  return NULL;
}

/* ---- G(d, λ) ---------------------------------------------------------------------------
 * Independent reference: composite Simpson's rule directly on the defining integral
 * G = (4/λ²) ∫0^∞ ρ e^{−2ρ/λ}/sqrt(ρ² + d²) dρ (no substitution), on geometrically growing
 * panels starting at d/1000 so the scale d near ρ = 0 is resolved. */
static double G_simpson(double d, double lam) {
  double s = 0.0, lo = 0.0, t = d > 0 ? d * 1e-3 : 1e-9 * lam;
  double end = 40.0 * lam; /* e^{−80}: negligible */
  while (lo < end) {
    double hi = fmin(t, end);
    int n = 400;
    double h = (hi - lo) / n, ps = 0.0;
    for (int i = 0; i <= n; i++) {
      double r = lo + i * h, f = r * exp(-2.0 * r / lam) / sqrt(r * r + d * d);
      ps += f * (i == 0 || i == n ? 1.0 : (i % 2 ? 4.0 : 2.0));
    }
    s += ps * h / 3.0;
    lo = hi;
    t *= 1.3;
  }
  return 4.0 / (lam * lam) * s;
}

static void coulomb_kernel(void **state) {
  (void)state;
  ew_exciton_ws *ws = ew_exciton_ws_new();
  assert_non_null(ws);
  double lam = 7.0;
  /* d = 0: analytic, G = (4/λ²)(λ/2) = 2/λ (normalisation of φλ); tolerance: rounding */
  TU_NEAR(ew_exciton_coulomb_G(0.0, lam), 2.0 / lam, 1e-14, "analytic 2/λ");
  TU_NEAR(ew_exciton_coulomb_G_ws(ws, 0.0, lam), 2.0 / lam, 1e-14, "analytic 2/λ");
  for (double d = 1e-4 * lam; d < 30.0 * lam; d *= 1.7) {
    double ref = G_simpson(d, lam);
    /* direct quadrature vs independent Simpson: 1e-10 relative (both converged far below) */
    TU_NEAR(ew_exciton_coulomb_G(d, lam), ref, 1e-10 * ref, "independent Simpson quadrature");
    /* interpolation table: 1e-7 relative (cubic Hermite in ln x, step 0.05) */
    TU_NEAR(ew_exciton_coulomb_G_ws(ws, d, lam), ref, 1e-7 * ref, "table vs Simpson");
  }
  /* d ≫ λ: G = (1/d)(1 − 3/x² + 45/x⁴ − 1575/x⁶ + …), x = 2d/λ (analytic: expand
   * 1/sqrt(ρ² + d²) in ρ²/d² and integrate term by term); at d = 20λ (x = 40) the first
   * omitted term 99225/x⁸ is 1.5e-8 relative */
  for (double d = 20.0 * lam; d < 2000.0 * lam; d *= 3.0) {
    double x = 2.0 * d / lam,
           want = (1.0 / d) * (1.0 - 3.0 / (x * x) + 45.0 / pow(x, 4) - 1575.0 / pow(x, 6));
    TU_NEAR(ew_exciton_coulomb_G(d, lam), want, 3e-8 * want, "large-d asymptotics");
    TU_NEAR(ew_exciton_coulomb_G_ws(ws, d, lam), want, 3e-8 * want, "large-d asymptotics");
  }
  /* far limit: G → 1/d, the Coulomb interaction of two point charges; 1e-6 relative at
   * d = 1000λ (the correction 3λ²/(4d²) is 7.5e-7) */
  TU_NEAR(ew_exciton_coulomb_G(1000.0 * lam, lam) * 1000.0 * lam, 1.0, 1e-6, "G → 1/d");
  ew_exciton_ws_free(ws);
}

/* The stored table (src/exciton_table.inc) against its definition, the quadrature, entry by
 * entry: equal to rounding (1e-15 relative; a different libm may round sinh/exp differently).
 * EW_PRINT_EXCITON_TABLE=1 prints the file anew on stdout (after changing the table's mesh
 * constants in exciton.c). */
static void stored_table(void **state) {
  (void)state;
  size_t n = ew_exciton_table_size();
  const char *print = getenv("EW_PRINT_EXCITON_TABLE");
  if (print && !strcmp(print, "1")) {
    printf("/* exciton_table.inc — {Iq(x_k), dI/ds(x_k)} of exciton.c item 2, %zu nodes from x "
           "= 1e-6 to 40\n * uniform in s = ln x; generated by ew_exciton_table_direct "
           "(test_exciton.c prints it anew\n * with EW_PRINT_EXCITON_TABLE=1 and checks every "
           "entry). */\n#define EW_EXC_NTAB %zu\nstatic const double "
           "exciton_table[EW_EXC_NTAB][2] = {\n", n, n);
    for (size_t k = 0; k < n; k++) {
      double Iq, d;
      ew_exciton_table_direct(k, &Iq, &d);
      printf("    {%.17g, %.17g},\n", Iq, d);
    }
    printf("};\n");
  }
  for (size_t k = 0; k < n; k++) {
    double Iq, d, Is, ds;
    ew_exciton_table_direct(k, &Iq, &d);
    ew_exciton_table_stored(k, &Is, &ds);
    if (!(fabs(Is - Iq) <= 1e-15 * fabs(Iq)) || !(fabs(ds - d) <= 1e-15 * fabs(d)))
      fail_msg("table entry %zu: stored {%.17g, %.17g}, quadrature {%.17g, %.17g}", k, Is, ds,
               Iq, d);
  }
  double Iq, d;
  ew_exciton_table_stored(n, &Iq, &d); /* the stored table has exactly n entries */
  assert_true(isnan(Iq) && isnan(d));
}

/* ---- strict 2D limit ---------------------------------------------------------------------
 * Analytic (the 2D hydrogen atom's variational ground state, exact for this trial function):
 * with P(d) = δ(d), E(λ) = ħ²/(2μλ²) − 2e²/(4πε0εr λ), minimum −4R* at λ = a_B/2, R* =
 * R∞ μ/εr², a_B = a0 εr/μ. */
static void strict_2d_limit(void **state) {
  (void)state;
  tu_layer ly[] = {{2.0, 1.0, -1.0, 0.067, 0.3, 0.1}};
  ew_stack *st = tu_stack(1, ly);
  ew_grid *g = ew_grid_uniform(st, 4000); /* step 0.0005 nm */
  assert_non_null(g);
  double *psi = calloc(g->n, sizeof *psi);
  double mu = 0.05, eps = 12.9, Rs = RYD_EV * mu / (eps * eps), b, lam;
  /* (i) both envelopes on one node: P = δ(d) exactly in the discretisation */
  psi[g->n / 2] = 1.0 / sqrt(g->w[g->n / 2]);
  assert_int_equal(ew_exciton_binding(g, psi, psi, mu, eps, &b, &lam, NULL), EW_OK);
  /* tolerance 1e-7 relative: the golden-section bracket (1e-6 in ln λ) leaves ~1e-12; the
   * constants.h route to R∞ agrees with CODATA's R∞ to ~1e-9 */
  TU_NEAR(b, 4.0 * Rs, 1e-7 * 4.0 * Rs, "analytic 4R* (CODATA Rydberg)");
  TU_NEAR(lam, BOHR_NM * eps / mu / 2.0, 1e-5 * lam, "analytic a_B/2 (CODATA Bohr radius)");
  /* (ii) synthetic narrow envelopes |ψ|² = Gaussian of standard deviation σ: the binding
   * tends to 4R* from below as σ → 0 (G(d) <= G(0) = 2/λ, so E(λ) >= its 2D value and the
   * binding never exceeds 4R*); first-order estimate of the deficit 2·2⟨|ze − zh|⟩/λ =
   * 4(2σ/sqrt(π))/λ ≈ 0.7 % at σ = 0.01 nm (analytic, G ≈ (2/λ)(1 − 2d/λ)); the brief's
   * tolerance 2 % */
  double prev = 0.0;
  for (double sig = 0.04; sig > 0.009; sig /= 2) {
    for (size_t i = 0; i < g->n; i++) {
      double u = (g->z[i] - 1.0) / sig;
      psi[i] = exp(-u * u / 4.0);
    }
    assert_int_equal(ew_exciton_binding(g, psi, psi, mu, eps, &b, &lam, NULL), EW_OK);
    assert_true(b < 4.0 * Rs);   /* bound from G <= 2/λ */
    assert_true(b > prev);       /* monotone approach to the 2D limit */
    prev = b;
  }
  TU_NEAR(prev, 4.0 * Rs, 0.02 * 4.0 * Rs, "strict 2D limit 4R*, 2 % (σ = 0.01 nm)");
  free(psi);
  ew_grid_free(g);
  tu_stack_free(st);
}

/* ---- GaAs/Al0.3Ga0.7As wells -------------------------------------------------------------
 * In-plane masses from the catalogue: me = 0.067, m_hh,∥ = 1/(γ1 + γ2) = 1/(6.98 + 2.06) =
 * 0.1106 (I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), from memory), so μ∥ = 0.0417
 * (the subbands' in-plane masses the lines use are a few % heavier) and, with εr = 12.9
 * (S. Adachi (2009), from memory), R* = 3.41 meV, 4R* = 13.6 meV.
 * R. L. Greene, K. K. Bajaj, D. E. Phelps, Phys. Rev. B 29, 1807 (1984) find ≈ 8–9 meV for
 * the heavy-hole exciton of a ~10 nm well (from memory) with a trial function that also
 * correlates ze − zh.  The separable trial function used here is a restriction of theirs,
 * so by the variational principle its binding is a lower bound of the same Hamiltonian's:
 * expected below 8–9 meV.  Window [6, 10] meV: the lower end allows ~30 % below Greene et
 * al. for the missing correlation, the upper end is their value plus 1 meV for the
 * recollection and the parameter differences. */
static void gaas_10nm_heavy_hole(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = gaas_well(10.0, 0, &st);
  assert_non_null(r);
  ew_error err;
  assert_int_equal(ew_result_add_excitons(r, &err), EW_OK);
  ew_line *hh = find_line(r, "hh1", "e1"), *lh = find_line(r, "lh1", "e1");
  assert_non_null(hh);
  assert_non_null(lh);
  print_message("10 nm GaAs well: e1-hh1 binding %.3f meV, e1-lh1 %.3f meV\n",
                hh->exciton_binding_eV * 1e3, lh->exciton_binding_eV * 1e3);
  assert_true(hh->exciton_binding_eV > 6e-3 && hh->exciton_binding_eV < 10e-3);
  /* pl_peak definition, exact */
  TU_NEAR(hh->pl_peak_eV, hh->energy_eV - hh->exciton_binding_eV, 1e-15, "definition");
  /* polarisation weights of ew_interband_polarisation, exact */
  TU_NEAR(hh->te_strength, 0.5 * hh->overlap, 1e-15, "Chuang (2009): hh TE 1/2");
  TU_NEAR(hh->tm_strength, 0.0, 0.0, "Chuang (2009): hh TM 0");
  TU_NEAR(lh->te_strength, lh->overlap / 6.0, 1e-15, "Chuang (2009): lh TE 1/6");
  TU_NEAR(lh->tm_strength, 2.0 * lh->overlap / 3.0, 1e-15, "Chuang (2009): lh TM 2/3");
  /* the same binding through the public-style entry point with the subbands' in-plane
   * masses, which lines use (1e-6 relative: same arithmetic); those lie within 6 % above the
   * catalogue's band-edge 0.067 and 1/(6.98 + 2.06) in a 10 nm well (non-parabolicity and
   * barrier penetration make them heavier: README "In-plane mass") */
  const ew_state *se = ew_result_state(r, hh->upper), *sh = ew_result_state(r, hh->lower);
  assert_true(se->inplane_mass > 0.067 && se->inplane_mass < 1.06 * 0.067);
  assert_true(sh->inplane_mass > 1.0 / (6.98 + 2.06) && sh->inplane_mass < 1.06 / (6.98 + 2.06));
  double mu = 1.0 / (1.0 / se->inplane_mass + 1.0 / sh->inplane_mass), b, lam;
  assert_int_equal(ew_exciton_binding(r->grid, ew_result_wavefunction(r, hh->upper),
                                      ew_result_wavefunction(r, hh->lower), mu, 12.9, &b, &lam,
                                      NULL),
                   EW_OK);
  TU_NEAR(b, hh->exciton_binding_eV, 1e-6 * b, "same masses as the lines use");
  /* λ between the 2D value a_B/2 and a few a_B (analytic bound: binding < 4R*) */
  double aB = BOHR_NM * 12.9 / mu;
  assert_true(lam > aB / 2 && lam < 3 * aB);
  ew_result_free(r);
  ew_stack_free(st);
}

/* Physical trend: narrowing the well from 20 to 5 nm squeezes the pair, so the binding rises
 * monotonically (Bastard et al. 1982; Greene et al. 1984: the maximum of E_B(L) for x ≈ 0.3
 * lies at a few nm, where the envelopes start to leak into the barriers, from memory), and
 * lies between R* (3D) and 4R* (2D, the bound G <= 2/λ). */
static void binding_rises_as_well_narrows(void **state) {
  (void)state;
  double Ls[] = {20.0, 15.0, 10.0, 7.5, 5.0}, prev = 0.0;
  double mu = 1.0 / (1.0 / 0.067 + (6.98 + 2.06)), Rs = RYD_EV * mu / (12.9 * 12.9);
  for (int k = 0; k < 5; k++) {
    ew_stack *st = NULL;
    ew_result *r = gaas_well(Ls[k], 0, &st);
    assert_non_null(r);
    assert_int_equal(ew_result_add_excitons(r, NULL), EW_OK);
    ew_line *hh = find_line(r, "hh1", "e1");
    assert_non_null(hh);
    double b = hh->exciton_binding_eV;
    print_message("L = %4.1f nm: e1-hh1 binding %.3f meV\n", Ls[k], b * 1e3);
    assert_true(b > prev);
    assert_true(b > Rs && b < 4 * Rs);
    prev = b;
    ew_result_free(r);
    ew_stack_free(st);
  }
}

/* Independent check of the mesh and correlation: on a coarse grid (0.2 nm, ~330 nodes) the
 * energy E(λ) = K/λ² − C Σ_ij p_i q_j G(|z_i − z_j|, λ) summed directly over node pairs (no
 * mesh), at the returned λ, must equal −binding; and λ ± 5 % must give a higher energy (a
 * minimum).  Tolerance 1e-4 relative: the mesh error O((δ/λ)²) with δ <= 0.1 nm, λ ≈ 8 nm. */
static void binding_vs_direct_pair_sum(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = gaas_well(10.0, 0.2, &st);
  assert_non_null(r);
  ew_line *hh = find_line(r, "hh1", "e1");
  assert_non_null(hh);
  const ew_grid *g = r->grid;
  const double *pe = ew_result_wavefunction(r, hh->upper);
  const double *ph = ew_result_wavefunction(r, hh->lower);
  double mu = 1.0 / (1.0 / 0.067 + (6.98 + 2.06)), eps = 12.9, b, lam;
  assert_int_equal(ew_exciton_binding(g, pe, ph, mu, eps, &b, &lam, NULL), EW_OK);
  ew_exciton_ws *ws = ew_exciton_ws_new();
  double e2 = EW_E_C / (4.0 * M_PI * EW_EPS0_FM) * 1e9; /* e²/(4πε0), eV nm */
  TU_NEAR(e2, 1.43996, 1e-5, "e²/(4πε0) = 1.43996 eV nm (CODATA 2018)");
  double K = EW_HB2M0_EVNM2 / mu, C = e2 / eps;
  double E[3], lams[3] = {lam, lam * 1.05, lam / 1.05};
  for (int t = 0; t < 3; t++) {
    double s = 0.0;
    for (size_t i = 0; i < g->n; i++)
      for (size_t j = 0; j < g->n; j++)
        s += g->w[i] * pe[i] * pe[i] * g->w[j] * ph[j] * ph[j] *
             ew_exciton_coulomb_G_ws(ws, g->z[i] - g->z[j], lams[t]);
    E[t] = K / (lams[t] * lams[t]) - C * s;
  }
  TU_NEAR(-E[0], b, 1e-4 * b, "direct O(N²) pair sum at the optimum");
  assert_true(E[1] > E[0] && E[2] > E[0]);
  ew_exciton_ws_free(ws);
  ew_result_free(r);
  ew_stack_free(st);
}

/* User materials without eps_static: no binding (0), pl_peak = band-to-band energy, the
 * polarisation weights still filled. */
static void no_permittivity_no_binding(void **state) {
  (void)state;
  tu_layer ly[] = {{20.0, 1.0, -0.5, 0.09, 0.4, 0.1},
                   {8.0, 0.7, -0.3, 0.067, 0.35, 0.09},
                   {20.0, 1.0, -0.5, 0.09, 0.4, 0.1}};
  ew_stack *st = tu_stack(3, ly); /* tu_stack leaves eps_r = 0 */
  ew_result *r = NULL;
  assert_int_equal(ew_solve(st, NULL, &r, NULL), EW_OK);
  assert_int_equal(ew_result_add_excitons(r, NULL), EW_OK);
  size_t nib = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    nib++;
    TU_NEAR(ln->exciton_binding_eV, 0.0, 0.0, "eps_r = 0: not computed");
    TU_NEAR(ln->pl_peak_eV, ln->energy_eV, 0.0, "eps_r = 0: band to band");
    assert_true(ln->te_strength > 0 || ln->overlap < 1e-300);
  }
  assert_true(nib > 0);
  /* with a permittivity set by hand, a binding appears (user εr = 12.9) */
  for (size_t k = 0; k < 3; k++) st->layers[k].bands.eps_r = 12.9;
  assert_int_equal(ew_result_add_excitons(r, NULL), EW_OK);
  ew_line *hh = find_line(r, "hh1", "e1");
  assert_non_null(hh);
  assert_true(hh->exciton_binding_eV > 0);
  ew_result_free(r);
  tu_stack_free(st);
}

static void errors(void **state) {
  (void)state;
  tu_layer ly[] = {{2.0, 1.0, -1.0, 0.067, 0.3, 0.1}};
  ew_stack *st = tu_stack(1, ly);
  ew_grid *g = ew_grid_uniform(st, 100);
  double *psi = calloc(g->n, sizeof *psi), b = -1, lam = -1;
  ew_error err;
  psi[50] = 1.0;
  assert_int_equal(ew_exciton_binding(g, psi, psi, 0.05, 0.0, &b, &lam, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "permittivity"));
  assert_int_equal(ew_exciton_binding(g, psi, psi, -1.0, 12.9, &b, &lam, &err), EW_ERR_INPUT);
  assert_int_equal(ew_exciton_binding(g, psi, psi, NAN, 12.9, &b, &lam, &err), EW_ERR_INPUT);
  psi[50] = 0.0;
  assert_int_equal(ew_exciton_binding(g, psi, psi, 0.05, 12.9, &b, &lam, &err), EW_ERR_NUMERIC);
  assert_true(b == -1 && lam == -1); /* outputs untouched on failure */
  free(psi);
  ew_grid_free(g);
  tu_stack_free(st);
}

/* Chuang (2009), ch. 9 (from memory): |ê·p|²/|P|² at k∥ = 0 — hh: x, y 1/2, z 0; lh: x, y
 * 1/6, z 2/3.  Checks: the values; the ratios TE(hh)/TE(lh) = 3 and TM(lh)/TE(lh) = 4;
 * per band the three polarisations sum to 1 (2 TE + TM); hh + lh give 2/3 for each
 * polarisation, i.e. 1/3 each averaged over polarisations (isotropic, as the bulk value
 * |P|²/3); the overlap multiplies.  Exact in binary floating point up to rounding: 1e-15. */
static void polarisation_weights(void **state) {
  (void)state;
  double teh, tmh, tel, tml, te, tm;
  ew_interband_polarisation(EW_BAND_HH, 1.0, &teh, &tmh);
  ew_interband_polarisation(EW_BAND_LH, 1.0, &tel, &tml);
  TU_NEAR(teh, 0.5, 1e-15, "Chuang: hh TE");
  TU_NEAR(tmh, 0.0, 0.0, "Chuang: hh TM");
  TU_NEAR(tel, 1.0 / 6.0, 1e-15, "Chuang: lh TE");
  TU_NEAR(tml, 2.0 / 3.0, 1e-15, "Chuang: lh TM");
  TU_NEAR(teh / tel, 3.0, 1e-14, "TE hh : lh = 3");
  TU_NEAR(tml / tel, 4.0, 1e-14, "lh TM : TE = 4");
  TU_NEAR(2 * teh + tmh, 1.0, 1e-15, "hh: x + y + z = |P|²");
  TU_NEAR(2 * tel + tml, 1.0, 1e-15, "lh: x + y + z = |P|²");
  TU_NEAR(teh + tel, 2.0 / 3.0, 1e-15, "TE: hh + lh = 2/3");
  TU_NEAR(tmh + tml, 2.0 / 3.0, 1e-15, "TM: hh + lh = 2/3");
  TU_NEAR((2 * teh + tmh) / 3.0, 1.0 / 3.0, 1e-15, "hh polarisation average 1/3");
  TU_NEAR((2 * tel + tml) / 3.0, 1.0 / 3.0, 1e-15, "lh polarisation average 1/3");
  ew_interband_polarisation(EW_BAND_LH, 0.25, &te, &tm);
  TU_NEAR(te, 0.25 / 6.0, 1e-16, "times overlap");
  TU_NEAR(tm, 0.25 * 2.0 / 3.0, 1e-16, "times overlap");
  ew_interband_polarisation(EW_BAND_E, 1.0, &te, &tm);
  TU_NEAR(te + tm, 0.0, 0.0, "not a hole band");
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(coulomb_kernel),
      cmocka_unit_test(stored_table),
      cmocka_unit_test(strict_2d_limit),
      cmocka_unit_test(gaas_10nm_heavy_hole),
      cmocka_unit_test(binding_rises_as_well_narrows),
      cmocka_unit_test(binding_vs_direct_pair_sum),
      cmocka_unit_test(no_permittivity_no_binding),
      cmocka_unit_test(errors),
      cmocka_unit_test(polarisation_weights),
  };
  return cmocka_run_group_tests_name("exciton", tests, setup, teardown);
}
