/* test_published.c — whole-chain checks (catalogue → stack → solver → lines) against
 * published measurements and handbook values. */
#include <math.h>

#include "testutil.h"

#include "solve.h"

static ew_catalogue *cat;

static int setup(void **state) {
  (void)state;
  return tu_load_catalogue(&cat);
}

static int teardown(void **state) {
  (void)state;
  ew_catalogue_free(cat);
  return 0;
}

static ew_result *solve_text(const char *text, ew_stack **st) {
  return tu_solve_text(cat, text, st, NULL);
}

static const ew_line *find_line(const ew_result *r, const char *lower, const char *upper) {
  for (size_t i = 0; i < ew_result_line_count(r); i++) {
    const ew_line *ln = ew_result_line(r, i);
    if (!strcmp(ew_result_state(r, ln->lower)->label, lower) &&
        !strcmp(ew_result_state(r, ln->upper)->label, upper))
      return ln;
  }
  return NULL;
}

/* L. C. West, S. J. Eglash, Appl. Phys. Lett. 46, 1156 (1985): intersubband absorption of
 * 6.5 nm GaAs wells between Al0.3Ga0.7As barriers at room temperature, peak at 152 meV
 * (about 8.2 µm) with a dipole of about 1.8 nm (both from memory).  Tolerance 15 meV: the
 * measured line includes the depolarization shift of the doped wells (a few meV up, from
 * memory), which this bare single-particle line lacks, and a monolayer of width or 0.02 in x
 * moves the line by about as much.  The default (Kane) model is checked; the parabolic one
 * is printed beside it (e2 lies near the barrier top, so non-parabolicity moves it most). */
static void west_eglash_intersubband(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = solve_text("temperature = 300.0;\n"
                            "layers = (\n"
                            " { name = \"b1\"; material = \"AlGaAs\"; x = 0.30; thickness = 30.0; },\n"
                            " { name = \"well\"; material = \"GaAs\"; thickness = 6.5; },\n"
                            " { name = \"b2\"; material = \"AlGaAs\"; x = 0.30; thickness = 30.0; }\n"
                            ");\n",
                            &st);
  assert_non_null(r);
  const ew_line *ln = find_line(r, "e1", "e2");
  assert_non_null(ln);
  ew_stack *stp = NULL;
  ew_result *rp = solve_text("temperature = 300.0; nonparabolic = false;\n"
                             "layers = ( { material = \"AlGaAs\"; x = 0.30; thickness = 30.0; },\n"
                             " { name = \"well\"; material = \"GaAs\"; thickness = 6.5; },\n"
                             " { material = \"AlGaAs\"; x = 0.30; thickness = 30.0; } );\n",
                             &stp);
  assert_non_null(rp);
  const ew_line *lp = find_line(rp, "e1", "e2");
  assert_non_null(lp);
  print_message("6.5 nm GaAs e1-e2: Kane %.1f meV, parabolic %.1f meV (measured 152)\n",
                ln->energy_eV * 1e3, lp->energy_eV * 1e3);
  assert_true(ln->energy_eV < lp->energy_eV); /* non-parabolicity lowers e2 more than e1 */
  ew_result_free(rp);
  ew_stack_free(stp);
  TU_NEAR(ln->energy_eV, 0.152, 0.015, "West & Eglash 1985 (from memory)");
  TU_NEAR(ln->dipole_nm, 1.8, 0.3, "West & Eglash 1985 dipole (from memory)");
  /* a single well's e1→e2 carries most of the oscillator strength (Helm 2000) */
  assert_true(ln->oscillator_strength > 0.9 && ln->oscillator_strength < 1.0);
  ew_result_free(r);
  ew_stack_free(st);
}

/* Handbook consistency through the whole chain (I. Vurgaftman, J. R. Meyer, L. R.
 * Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), values from memory): a thick (40 nm) GaAs well
 * at 0 K approaches bulk, so e1 − hh1 tends to Eg(GaAs) = 1.519 eV from above by the
 * confinement K π²/L² (1/me + 1/mhh) = 5.6 meV + 0.7 meV (infinite-well estimate, an upper
 * bound); check 1.519 < e1−hh1 < 1.519 + 0.0065 eV. */
static void thick_well_tends_to_bulk_gap(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = solve_text("temperature = 0.0;\n"
                            "layers = (\n"
                            " { name = \"b1\"; material = \"AlGaAs\"; x = 0.30; thickness = 25.0; },\n"
                            " { name = \"well\"; material = \"GaAs\"; thickness = 40.0; },\n"
                            " { name = \"b2\"; material = \"AlGaAs\"; x = 0.30; thickness = 25.0; }\n"
                            ");\n",
                            &st);
  assert_non_null(r);
  const ew_line *ln = find_line(r, "hh1", "e1");
  assert_non_null(ln);
  assert_true(ln->energy_eV > 1.519 && ln->energy_eV < 1.519 + 0.0065);
  ew_result_free(r);
  ew_stack_free(st);
}


/* Strained In0.2Ga0.8As/GaAs wells of a few nm emit near 980 nm at room temperature: the
 * pump-laser design (common practice).  A 6 nm well: e1–hh1 PL peak between 960 and 1010 nm;
 * compressive strain puts the heavy hole on top (Ev_hh > Ev_lh in the well; Bir–Pikus, see
 * src/strain.h) and the well stays below its Matthews–Blakeslee thickness (no warning). */
static void strained_ingaas_980nm(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = solve_text("temperature = 300.0; substrate = \"GaAs\";\n"
                            "layers = ( { material = \"GaAs\"; thickness = 30.0; },\n"
                            " { name = \"well\"; material = \"InGaAs\"; x = 0.2; thickness = 6.0; },\n"
                            " { material = \"GaAs\"; thickness = 30.0; } );\n",
                            &st);
  assert_non_null(r);
  const ew_line *ln = find_line(r, "hh1", "e1");
  assert_non_null(ln);
  double nm = 1239.84198 / ln->pl_peak_eV;
  print_message("In0.2Ga0.8As 6 nm: PL peak %.1f nm\n", nm);
  assert_true(nm > 960.0 && nm < 1010.0);
  assert_true(st->layers[1].bands.Ev_hh_eV > st->layers[1].bands.Ev_lh_eV);
  assert_true(st->layers[1].bands.eps_par < 0);
  assert_int_equal(ew_result_warning_count(r), 0);
  ew_result_free(r);
  ew_stack_free(st);
}

/* Lattice-matched In0.53Ga0.47As/Al0.48In0.52As on InP.
 * - Band offsets: J. S. Weiner, D. S. Chemla, D. A. B. Miller, T. H. Wood, D. Sivco, A. Y. Cho,
 *   Appl. Phys. Lett. 46, 619 (1985), from the room-temperature exciton spectra of GaInAs/AlInAs
 *   wells: ΔEc = 0.44 eV, ΔEv = 0.29 eV.  The catalogue follows the later review (I. Vurgaftman
 *   et al., J. Appl. Phys. 89, 5815 (2001)), whose offsets give ΔEc ≈ 0.52 eV (from memory):
 *   the gap difference ΔEc + ΔEv must match 0.73 eV to 0.03 eV, and ΔEc must lie between the
 *   two published values (0.42 … 0.55 eV).
 * - Intersubband line: B. F. Levine, A. Y. Cho, J. Walker, R. J. Malik, D. A. Kleinman,
 *   D. L. Sivco, Appl. Phys. Lett. 52, 1481 (1988): e1→e2 absorption at λ = 4.4 µm in 5.0 nm
 *   In0.53Ga0.47As wells at room temperature (citation, line and well width all from memory).  The bare line lacks
 *   the depolarization shift of the doped wells, which moves the measured line to shorter
 *   wavelength, so the check is one-sided: 4.4 µm ≤ λ ≤ 4.4 µm × 1.15 (15 %: the shift, a
 *   monolayer of width and the 0.08 eV spread of the published ΔEc). */
static void ingaas_alinas_on_inp(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = solve_text("temperature = 300.0; substrate = \"InP\";\n"
                            "layers = ( { material = \"AlInAs\"; x = 0.48; thickness = 20.0; },\n"
                            " { name = \"well\"; material = \"InGaAs\"; x = 0.53; thickness = 5.0; },\n"
                            " { material = \"AlInAs\"; x = 0.48; thickness = 20.0; } );\n",
                            &st);
  assert_non_null(r);
  const ew_bands *b = &st->layers[0].bands, *w = &st->layers[1].bands;
  double dEc = b->Ec_eV - w->Ec_eV, dEv = w->Ev_hh_eV - b->Ev_hh_eV;
  print_message("InGaAs/AlInAs: dEc %.3f eV, dEv %.3f eV\n", dEc, dEv);
  TU_NEAR(dEc + dEv, 0.44 + 0.29, 0.03, "Weiner et al. 1985 gap difference");
  assert_true(dEc > 0.42 && dEc < 0.55);
  const ew_line *ln = find_line(r, "e1", "e2");
  assert_non_null(ln);
  print_message("5.0 nm InGaAs/AlInAs e1-e2: %.0f nm (measured 4400 nm)\n", ln->wavelength_nm);
  assert_true(ln->wavelength_nm >= 4400.0 && ln->wavelength_nm <= 4400.0 * 1.15);
  ew_result_free(r);
  ew_stack_free(st);
}

/* Non-parabolicity in narrow wells: C. Wetzel, R. Winkler, M. Drechsler, B. K. Meyer,
 * U. Rössler, J. Scriba, J. P. Kotthaus, V. Härle, F. Scholz, Phys. Rev. B 53, 1038 (1996),
 * measured the in-plane electron mass of Ga0.47In0.53As/InP wells (widths down to 1.5 nm) by
 * cyclotron resonance and summed it up, in agreement with their k·p calculation, as
 *   m0/m∥(ε) = (1 − 1.96 ε/eV)/0.044,   ε the quantization energy of e1,
 * with the narrowest well at m∥ = 0.065 m0 (50 % above bulk).  Our e1 in-plane mass (Kane
 * mass at the level's energy in every layer, README "In-plane mass") must follow this relation
 * at our own ε to 3 % for 3–10 nm wells and to 8 % at 2 nm, and the 1.5 nm well must come
 * within 10 % of 0.065 m0 (the relation and the data scatter by a few %; the measurement
 * temperature is not in the abstract: low temperature assumed).  With parabolic bands the
 * 3 nm well misses the relation by more than 10 %, so the check sees the Kane model. */
static void wetzel_inplane_mass(void **state) {
  (void)state;
  const double L[] = {1.5, 2.0, 3.0, 5.0, 8.0, 10.0};
  for (int np = 1; np >= 0; np--) {
    for (size_t k = 0; k < sizeof L / sizeof *L; k++) {
      if (!np && L[k] != 3.0) continue;
      char text[512];
      snprintf(text, sizeof text,
               "temperature = 4.0; nonparabolic = %s;\n"
               "layers = ( { material = \"InP\"; thickness = 20.0; },\n"
               " { name = \"well\"; material = \"InGaAs\"; x = 0.53; thickness = %.1f; },\n"
               " { material = \"InP\"; thickness = 20.0; } );\n",
               np ? "true" : "false", L[k]);
      ew_stack *st = NULL;
      ew_result *r = solve_text(text, &st);
      assert_non_null(r);
      const ew_state *e1 = NULL;
      for (size_t i = 0; i < ew_result_state_count(r); i++)
        if (ew_result_state(r, i)->band == EW_BAND_E && ew_result_state(r, i)->n == 1)
          e1 = ew_result_state(r, i);
      assert_non_null(e1);
      double eps = e1->energy_eV - st->layers[1].bands.Ec_eV;
      double want = 0.044 / (1.0 - 1.96 * eps);
      print_message("%s L = %4.1f nm: eps %.4f eV, m_par %.4f, Wetzel relation %.4f\n",
                    np ? "Kane     " : "parabolic", L[k], eps, e1->inplane_mass, want);
      if (!np) {
        assert_true(fabs(e1->inplane_mass / want - 1.0) > 0.10);
      } else if (L[k] == 1.5) {
        TU_NEAR(e1->inplane_mass, 0.065, 0.1 * 0.065, "Wetzel et al. 1996, narrowest well");
      } else {
        double tol = L[k] >= 3.0 ? 0.03 : 0.08;
        TU_NEAR(e1->inplane_mass, want, tol * want, "Wetzel et al. 1996 relation");
      }
      ew_result_free(r);
      ew_stack_free(st);
    }
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(west_eglash_intersubband),
      cmocka_unit_test(thick_well_tends_to_bulk_gap),
      cmocka_unit_test(strained_ingaas_980nm),
      cmocka_unit_test(ingaas_alinas_on_inp),
      cmocka_unit_test(wetzel_inplane_mass),
  };
  return cmocka_run_group_tests_name("published", tests, setup, teardown);
}
