/* test_hole_absorption.c — hole intersubband absorption (hole_absorption*.c,
 * api_hole_absorption.c) against outside references:
 *  - selection rules at k∥ = 0 in the 4-band Luttinger–Kohn model of a symmetric well: the
 *    heavy- and light-hole blocks decouple, so hh1 → hh2 is TM only (TE zero for pure
 *    heavy-hole states), hh1 → lh1 is forbidden in both (parity of the kz-linear coupling),
 *    lh1 → hh2 is TE only (Y.-C. Chang, R. B. James, Phys. Rev. B 39, 12672 (1989); S. L.
 *    Chuang, Physics of Photonic Devices (Wiley, 2009), ch. 9; from memory);
 *  - the TM matrix element hh1 → hh2 at k∥ = 0 against the single-band dipole
 *    |(E2 − E1) ⟨hh1|z|hh2⟩|² computed here from the single-band heavy-hole envelopes of
 *    ew_solve (hamiltonian.c, an independent code path), and the commutator against the
 *    dipole form at every k∥;
 *  - TE of hh1 → hh2 rising from zero with k∥ (band mixing, Chang & James 1989), as an even
 *    power of k∥;
 *  - the hole density at the Fermi level by a trapezoid quadrature of the subbands here;
 *  - the absorption area: ∫ α ħω dħω = π e² / (n_r c ε0 ħ L_w) Σ ∫ d²k/(2π)² |M|² Δf, the
 *    right side summed here from the matrix elements (the lineshape has unit area);
 *  - a p-type GaAs/Al0.3Ga0.7As detector well: 4 nm wells give a bound-to-continuum peak
 *    near 7–8 µm (B. F. Levine, J. Appl. Phys. 74, R1 (1993), from memory); the bound
 *    hh1 → hh2 line lies below the barrier edge, so at a longer wavelength than that;
 *  - the sharper measured structure: C-doped 4 nm GaAs wells in 54 nm Al0.36Ga0.64As
 *    barriers, 77 K, normal-incidence peak λp = 8.1 µm and cutoff λco = 8.9 µm (W. S.
 *    Hobson, A. Zussman, B. F. Levine, J. deJong, M. Geva, L. C. Luther, J. Appl. Phys. 71,
 *    3642 (1992), abstract; the volume from memory): the k·p hh1 → barrier-edge threshold
 *    hc/(E_hh1 − W_hh) of the bound-to-continuum response within 0.4 µm of λp and short of
 *    λco (one monolayer of well width moves it by ±0.18 µm; the response peaks just above
 *    its threshold);
 *  - JSON and CSV read back, every field against the accessors. */
#include <math.h>

#include "testutil.h"
#include "roundtrip.h"

/* CODATA 2018, typed here */
#define HBAR 1.054571817e-34
#define QE 1.602176634e-19
#define C_LIGHT 299792458.0
#define EPS0 8.8541878128e-12
#define KB_EV 8.617333262e-5

TU_CATALOGUE_FIXTURE

static const char *well_text =
    "temperature = 77.0;\n"
    "layers = (\n"
    "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 15.0; },\n"
    "  { name = \"well\"; material = \"GaAs\"; thickness = 5.0; },\n"
    "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 15.0; }\n"
    ");\n";


static ew_hole_absorption *run(const ew_stack *st, const ew_hole_absorption_options *o) {
  ew_hole_absorption *h = NULL;
  ew_error err;
  assert_int_equal(ew_hole_absorption_create(&h, &err), EW_OK);
  if (ew_hole_absorption_compute(h, st, o, &err)) print_error("%s\n", err.message);
  assert_true(ew_hole_absorption_energy_count(h) > 0);
  return h;
}

static size_t transition(const ew_hole_absorption *h, const char *from, const char *to) {
  for (size_t t = 0; t < ew_hole_absorption_transition_count(h); t++)
    if (!strcmp(ew_hole_absorption_label(h, ew_hole_absorption_transition_from(h, t)), from) &&
        !strcmp(ew_hole_absorption_label(h, ew_hole_absorption_transition_to(h, t)), to))
      return t;
  print_error("no transition %s -> %s\n", from, to);
  fail();
  return 0;
}

static ew_hole_absorption_options defaults(double density) {
  ew_hole_absorption_options o;
  ew_hole_absorption_options_default(&o);
  o.density_cm2 = density;
  return o;
}

static void selection_rules(void **state) {
  (void)state;
  ew_stack *st = read_stack(well_text);
  ew_hole_absorption_options o = defaults(3e11);
  ew_hole_absorption *h = run(st, &o);
  size_t a = transition(h, "hh1", "hh2"), b = transition(h, "hh1", "lh1"),
         c = transition(h, "lh1", "hh2");
  double tm = ew_hole_absorption_tm_eV2nm2(h, a, 0);
  assert_true(tm > 1e-3);
  assert_true(ew_hole_absorption_te_eV2nm2(h, a, 0) < 1e-9 * tm);
  assert_true(ew_hole_absorption_te_eV2nm2(h, b, 0) < 1e-9 * tm);
  assert_true(ew_hole_absorption_tm_eV2nm2(h, b, 0) < 1e-9 * tm);
  assert_true(ew_hole_absorption_te_eV2nm2(h, c, 0) > 1e-3);
  assert_true(ew_hole_absorption_tm_eV2nm2(h, c, 0) < 1e-9 * tm);
  /* commutator i[H, z] and dipole (E_l − E_u) ⟨u|z|l⟩ agree for eigenvectors (to the k·p
     solve's 1e-6 eV residual: relative ~1e-4 of |M|² ~ 1e-2 eV² nm²) */
  for (size_t t = 0; t < ew_hole_absorption_transition_count(h); t++)
    for (size_t i = 0; i < ew_hole_absorption_point_count(h); i++) {
      double x = ew_hole_absorption_tm_eV2nm2(h, t, i), y = ew_hole_absorption_dipole_tm_eV2nm2(h, t, i);
      assert_true(fabs(x - y) <= 1e-3 * fmax(x, y) + 1e-6);
    }
  /* TE of hh1 → hh2 rises from zero as k² (mixing) */
  double k1 = ew_hole_absorption_k_inv_nm(h, 1), k2 = ew_hole_absorption_k_inv_nm(h, 2);
  double t1 = ew_hole_absorption_te_eV2nm2(h, a, 1), t2 = ew_hole_absorption_te_eV2nm2(h, a, 2);
  assert_true(t1 > 1e-6 * tm);
  /* |M(k)|² is even in k (axial symmetry), so the leading power is an even integer >= 2
     (measured: 4, both the hh2 admixture and the velocity linear in k) */
  double pw = log(t2 / t1) / log(k2 / k1);
  assert_true(pw > 1.9 && fabs(pw - 2.0 * round(pw / 2.0)) < 0.1);
  for (size_t i = 1; i < 16; i++)
    assert_true(ew_hole_absorption_te_eV2nm2(h, a, i + 1) > ew_hole_absorption_te_eV2nm2(h, a, i));
  assert_true(ew_hole_absorption_te_eV2nm2(h, a, 16) > 1e-2 * tm); /* k∥ = 0.2 /nm */
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

static void single_band_dipole(void **state) {
  (void)state;
  ew_stack *st = read_stack(well_text);
  ew_hole_absorption_options o = defaults(3e11);
  ew_hole_absorption *h = run(st, &o);
  ew_options so;
  ew_options_default(&so);
  so.error_estimate = 0;
  ew_result *r = NULL;
  ew_error err;
  assert_int_equal(ew_solve(st, &so, &r, &err), EW_OK);
  size_t s1 = rt_state_of(r, EW_BAND_HH, 1), s2 = rt_state_of(r, EW_BAND_HH, 2);
  const double *p1 = ew_result_wavefunction(r, s1), *p2 = ew_result_wavefunction(r, s2);
  const double *z = ew_result_z_nm(r);
  size_t n = ew_result_node_count(r);
  double d = 0, n1 = 0, n2 = 0; /* trapezoid on the nodes, normalised here */
  for (size_t i = 0; i + 1 < n; i++) {
    double dz = z[i + 1] - z[i];
    d += 0.5 * dz * (p1[i] * z[i] * p2[i] + p1[i + 1] * z[i + 1] * p2[i + 1]);
    n1 += 0.5 * dz * (p1[i] * p1[i] + p1[i + 1] * p1[i + 1]);
    n2 += 0.5 * dz * (p2[i] * p2[i] + p2[i + 1] * p2[i + 1]);
  }
  double dE = ew_result_state(r, s1)->energy_eV - ew_result_state(r, s2)->energy_eV;
  /* both Kramers partners of hh1 couple to their own partner of hh2: twice the spinless
     value */
  double want = 2.0 * dE * dE * d * d / (n1 * n2);
  double got = ew_hole_absorption_tm_eV2nm2(h, transition(h, "hh1", "hh2"), 0);
  /* the k·p pencil at k∥ = 0 is the single-band one (kp_hamiltonian.h): measured 2e-12 */
  assert_true(fabs(got / want - 1.0) < 1e-6);
  assert_true(fabs(ew_hole_absorption_transition_eV(h, transition(h, "hh1", "hh2")) - dE) < 1e-6);
  ew_result_free(r);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

/* Σ over subbands, both branches, ∫ d²k/(2π)² f_h at the reported Fermi level: each subband
 * taken linear in k² between its samples (the model's statement) and integrated by the
 * midpoint rule on 200 steps per interval here */
static void fermi_density(void **state) {
  (void)state;
  ew_stack *st = read_stack(well_text);
  ew_hole_absorption_options o = defaults(5e11);
  ew_hole_absorption *h = run(st, &o);
  double F = ew_hole_absorption_fermi_eV(h), kT = KB_EV * 77.0, p = 0;
  for (size_t j = 0; j < ew_hole_absorption_subband_count(h); j++)
    for (size_t i = 0; i + 1 < ew_hole_absorption_point_count(h); i++) {
      double ka = ew_hole_absorption_k_inv_nm(h, i), kb = ew_hole_absorption_k_inv_nm(h, i + 1);
      double ea = ew_hole_absorption_subband_eV(h, j, i), eb = ew_hole_absorption_subband_eV(h, j, i + 1);
      double ds = (kb * kb - ka * ka) / 200.0;
      for (int q = 0; q < 200; q++) {
        double E = ea + (eb - ea) * (q + 0.5) / 200.0;
        p += ds / (2.0 * M_PI) / (1.0 + exp((F - E) / kT)); /* 2 branches / 4π */
      }
    }
  /* beyond kmax (hh1 there only 44 meV below F: 0.5 % of the density) each subband goes on
     as the parabola of its last interval (the stated model, gain_fermi.c):
     ∫ ds/2π f = (Δs/ΔE) kT ln(1 + e^{(E_N − F)/kT}) / 2π, written out here */
  size_t N = ew_hole_absorption_point_count(h) - 1;
  double kN = ew_hole_absorption_k_inv_nm(h, N), kM = ew_hole_absorption_k_inv_nm(h, N - 1);
  for (size_t j = 0; j < ew_hole_absorption_subband_count(h); j++) {
    double dE = ew_hole_absorption_subband_eV(h, j, N - 1) - ew_hole_absorption_subband_eV(h, j, N);
    double EN = ew_hole_absorption_subband_eV(h, j, N);
    if (dE > 0) p += (kN * kN - kM * kM) / dE * kT * log1p(exp((EN - F) / kT)) / (2.0 * M_PI);
  }
  assert_true(fabs(p * 1e14 / 5e11 - 1.0) < 1e-4);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

/* ∫ α(ħω) ħω dħω against π e² / (n_r c ε0 ħ L_w) Σ ∫ ds/4π |M|² Δf */
static void absorption_area(void **state) {
  (void)state;
  ew_stack *st = read_stack(well_text);
  ew_hole_absorption_options o = defaults(5e11);
  o.linewidth_meV = 3, o.energy_from_eV = 0.001, o.energy_to_eV = 0.4;
  ew_hole_absorption *h = run(st, &o);
  double F = ew_hole_absorption_fermi_eV(h), kT = KB_EV * 77.0;
  double A = M_PI * QE * QE / (3.3 * C_LIGHT * EPS0 * HBAR * ew_hole_absorption_well_nm(h) * 1e-9) * 0.01;
  double ate = 0, atm = 0, ste = 0, stm = 0;
  for (size_t i = 0; i + 1 < ew_hole_absorption_energy_count(h); i++) {
    double ea = ew_hole_absorption_energy_eV(h, i), eb = ew_hole_absorption_energy_eV(h, i + 1);
    ate += 0.5 * (eb - ea) * (ea * ew_hole_absorption_te_cm(h, i) + eb * ew_hole_absorption_te_cm(h, i + 1));
    atm += 0.5 * (eb - ea) * (ea * ew_hole_absorption_tm_cm(h, i) + eb * ew_hole_absorption_tm_cm(h, i + 1));
  }
  for (size_t t = 0; t < ew_hole_absorption_transition_count(h); t++) {
    size_t u = ew_hole_absorption_transition_from(h, t), l = ew_hole_absorption_transition_to(h, t);
    for (size_t i = 0; i + 1 < ew_hole_absorption_point_count(h); i++) {
      double w[2], te[2], tm[2];
      for (int q = 0; q < 2; q++) {
        double fu = 1.0 / (1.0 + exp((F - ew_hole_absorption_subband_eV(h, u, i + q)) / kT));
        double fl = 1.0 / (1.0 + exp((F - ew_hole_absorption_subband_eV(h, l, i + q)) / kT));
        w[q] = fu - fl;
        te[q] = ew_hole_absorption_te_eV2nm2(h, t, i + q) * w[q];
        tm[q] = ew_hole_absorption_tm_eV2nm2(h, t, i + q) * w[q];
      }
      double ka = ew_hole_absorption_k_inv_nm(h, i), kb = ew_hole_absorption_k_inv_nm(h, i + 1);
      double ds = (kb * kb - ka * ka) / (4.0 * M_PI);
      ste += ds * 0.5 * (te[0] + te[1]), stm += ds * 0.5 * (tm[0] + tm[1]);
    }
  }
  assert_true(stm > 0 && ste > 0);
  /* measured 0.9993 and 0.9998: the lines' tails outside 1 … 400 meV */
  assert_true(fabs(atm / (A * stm) - 1.0) < 3e-3);
  assert_true(fabs(ate / (A * ste) - 1.0) < 3e-3);
  /* the TM peak sits on hh1 → hh2 (the strong TM line), within the linewidth */
  double e12 = ew_hole_absorption_transition_eV(h, transition(h, "hh1", "hh2"));
  assert_true(fabs(ew_hole_absorption_peak_tm_eV(h) - e12) < 0.01);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

static void detector_well(void **state) {
  (void)state;
  ew_stack *st = read_stack(
      "temperature = 77.0;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 20.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 4.0; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 20.0; }\n);\n");
  ew_hole_absorption_options o = defaults(1e12);
  o.linewidth_meV = 15;
  ew_hole_absorption *h = run(st, &o);
  double lambda_um = 1.239841984 / ew_hole_absorption_peak_tm_eV(h);
  assert_true(lambda_um > 7.2 && lambda_um < 20.0);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

static void detector_well_hobson(void **state) {
  (void)state;
  ew_stack *st = read_stack(
      "temperature = 77.0;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.36; thickness = 20.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 4.0; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.36; thickness = 20.0; }\n);\n");
  ew_hole_absorption_options o = defaults(1e12);
  ew_hole_absorption *h = run(st, &o);
  ew_result *r = NULL;
  assert_int_equal(ew_solve(st, NULL, &r, NULL), EW_OK);
  assert_string_equal(ew_hole_absorption_label(h, 0), "hh1");
  double edge = ew_result_window_eV(r, EW_BAND_HH);
  double threshold_um = 1.239841984 / (ew_hole_absorption_subband_eV(h, 0, 0) - edge);
  print_message("Hobson 1992 structure: hh1 -> barrier edge at %.3f um (measured peak 8.1, "
                "cutoff 8.9 um)\n", threshold_um);
  assert_true(fabs(threshold_um - 8.1) < 0.4);
  assert_true(threshold_um < 8.9);
  ew_result_free(r);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

static void roundtrip(void **state) {
  (void)state;
  ew_stack *st = read_stack(well_text);
  ew_hole_absorption_options o = defaults(4e11);
  o.energy_step_eV = 0.005, o.lorentzian = 1, o.linewidth_meV = 7;
  ew_hole_absorption *h = run(st, &o);
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_int_equal(ew_hole_absorption_write_json(h, f, NULL), EW_OK);
  fclose(f);
  rj j;
  assert_int_equal(rj_parse(buf, &j), 0);
  assert_string_equal(rj_str(&j, "model"), "4band");
  assert_string_equal(rj_str(&j, "lineshape"), "lorentzian");
  struct { const char *k; double v; } top[] = {
      {"temperature_K", 77.0}, {"density_cm2", ew_hole_absorption_density_cm2(h)},
      {"fermi_eV", ew_hole_absorption_fermi_eV(h)}, {"well_nm", ew_hole_absorption_well_nm(h)},
      {"linewidth_meV", 7.0}};
  for (size_t k = 0; k < sizeof top / sizeof *top; k++)
    RT_SAME(rj_num(&j, top[k].k), top[k].v, rt_tol_sig(top[k].v, 10), top[k].k);
  assert_true(fabs(ew_hole_absorption_density_cm2(h) - 4e11) < 1);
  size_t np = ew_hole_absorption_energy_count(h);
  const char *arr[] = {"energy_eV", "absorption_te_cm", "absorption_tm_cm"};
  for (int a = 0; a < 3; a++) {
    const rj *v = rj_get(&j, arr[a]);
    assert_non_null(v);
    assert_int_equal(v->n, np);
    for (size_t i = 0; i < np; i++) {
      double want = a == 0 ? ew_hole_absorption_energy_eV(h, i)
                    : a == 1 ? ew_hole_absorption_te_cm(h, i) : ew_hole_absorption_tm_cm(h, i);
      RT_SAME(v->item[i].num, want, rt_tol_sig(want, 10), arr[a]);
    }
  }
  const rj *tr = rj_get(&j, "transitions");
  assert_non_null(tr);
  assert_int_equal(tr->n, ew_hole_absorption_transition_count(h));
  for (size_t t = 0; t < tr->n; t++) {
    const rj *x = &tr->item[t];
    assert_string_equal(rj_str(x, "from"), ew_hole_absorption_label(h, ew_hole_absorption_transition_from(h, t)));
    assert_string_equal(rj_str(x, "to"), ew_hole_absorption_label(h, ew_hole_absorption_transition_to(h, t)));
    double w[3] = {ew_hole_absorption_transition_eV(h, t), ew_hole_absorption_te_eV2nm2(h, t, 0),
                   ew_hole_absorption_tm_eV2nm2(h, t, 0)};
    const char *keys[3] = {"energy_eV", "te_eV2nm2", "tm_eV2nm2"};
    for (int k = 0; k < 3; k++) RT_SAME(rj_num(x, keys[k]), w[k], rt_tol_sig(w[k], 10), keys[k]);
  }
  rj_free(&j);
  free(buf);
  char dir[256], path[300];
  assert_int_equal(tu_mkdtemp("holeabs", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/a.csv", dir);
  f = fopen(path, "w");
  assert_non_null(f);
  assert_int_equal(ew_hole_absorption_write_csv(h, f, NULL), EW_OK);
  fclose(f);
  rcsv c;
  assert_int_equal(rcsv_read(path, &c), 0);
  assert_int_equal(c.ncol, 3);
  assert_int_equal(c.nrows, np);
  for (size_t row = 0; row < np; row++) {
    double want[3] = {ew_hole_absorption_energy_eV(h, row), ew_hole_absorption_te_cm(h, row),
                      ew_hole_absorption_tm_cm(h, row)};
    for (int k = 0; k < 3; k++) {
      int col = rcsv_col(&c, arr[k]);
      assert_true(col >= 0);
      RT_SAME(rcsv_num(&c, row, col), want[k], rt_tol_sig(want[k], 10), arr[k]);
    }
  }
  rcsv_free(&c);
  snprintf(path, sizeof path, "%s/a.svg", dir);
  assert_int_equal(ew_hole_absorption_write_plot(h, path, NULL), EW_OK);
  tu_rm_tree(dir);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

static void refusals(void **state) {
  (void)state;
  ew_stack *st = read_stack(well_text);
  ew_hole_absorption *h = NULL;
  ew_error err;
  assert_int_equal(ew_hole_absorption_create(NULL, &err), EW_ERR_USAGE);
  assert_int_equal(ew_hole_absorption_create(&h, &err), EW_OK);
  ew_hole_absorption_options o = defaults(0);
  assert_int_equal(ew_hole_absorption_compute(h, st, &o, &err), EW_ERR_USAGE);
  assert_int_equal(ew_hole_absorption_compute(h, st, NULL, &err), EW_ERR_USAGE);
  o = defaults(1e11), o.model = 8;
  assert_int_equal(ew_hole_absorption_compute(h, st, &o, &err), EW_ERR_USAGE);
  assert_int_equal(ew_hole_absorption_energy_count(h), 0);
  assert_true(isnan(ew_hole_absorption_te_cm(h, 0)));
  assert_int_equal(ew_hole_absorption_write_json(h, stdout, &err), EW_ERR_USAGE);
  ew_stack *doped = read_stack(
      "temperature = 77.0;\nlayers = (\n"
      "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
      "  { name = \"well\"; material = \"GaAs\"; thickness = 5.0; doping = { acceptors = 1e18; }; },\n"
      "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n);\n");
  o = defaults(1e11);
  assert_int_equal(ew_hole_absorption_compute(h, doped, &o, &err), EW_ERR_INPUT);
  assert_non_null(strstr(err.message, "doped"));
  ew_stack_free(doped);
  ew_hole_absorption_free(h);
  ew_stack_free(st);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(selection_rules), cmocka_unit_test(single_band_dipole),
      cmocka_unit_test(fermi_density),   cmocka_unit_test(absorption_area),
      cmocka_unit_test(detector_well),
      cmocka_unit_test(detector_well_hobson),   cmocka_unit_test(roundtrip),
      cmocka_unit_test(refusals),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
