/* test_kp_periodic.c — the k·p minibands of an infinite superlattice (kp_periodic.c,
 * kp_periodic_solve.c, miniband_kp.c, api_minibands.c) against outside references and
 * independent code paths:
 *  - the measured gap of an InAs/GaSb 8 ML / 8 ML superlattice on GaSb at 300 K (the source
 *    README "Eight bands" cites; below);
 *  - the finite N-period stack of the hard-wall 8-band model (dispersion_kane.c, another
 *    code path) approaches the periodic gap as N grows, as a tight-binding chain does;
 *  - Bloch periodicity q → q + 2π/d and E(q) = E(−q) (time reversal at k∥ = 0);
 *  - with Ep = 0 the conduction rows decouple: the electron minibands equal the single-band
 *    Bloch pencil of `epiwell minibands` (miniband.c) on the same grid; the 4-band model at
 *    k∥ = 0 decouples into the single-band heavy- and light-hole pencils likewise;
 *  - LAPACK zheev on the dense periodic matrix: the window's eigenvalues to 1e-9 eV and the
 *    block LDLᴴ count at many shifts;
 *  - no state inside the gap (the count and zheev) at every q and k∥ sample;
 *  - the JSON and both CSVs read back by independent parsers (roundtrip.h). */
#include <complex.h>
#include <lapacke.h>
#include <math.h>

#include "testutil.h"

#include "constants.h"
#include "dispersion.h"
#include "kp_periodic.h"
#include "miniband.h"
#include "roundtrip.h"
#include "stack.h"

TU_CATALOGUE_FIXTURE


/* One period of InAs/GaSb 8 ML / 8 ML (2.42 nm / 2.44 nm: 8 × a/2 with a = 0.6058 and
 * 0.6096 nm, the lattice constants of I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl.
 * Phys. 89, 5815 (2001), from memory) on GaSb at 300 K. */
static ew_stack *inas_gasb(double step) {
  char text[512];
  snprintf(text, sizeof text, "substrate = \"GaSb\";\ntemperature = 300.0;\ngrid_step = %g;\n"
           "layers = (\n { name = \"e\"; material = \"InAs\"; thickness = 2.42; },\n"
           " { name = \"h\"; material = \"GaSb\"; thickness = 2.44; }\n);\n", step);
  return read_stack(text);
}

static ew_minibands *kp_minibands(const ew_stack *st, int bands, size_t points, double step,
                                  double kmax, size_t kpoints) {
  ew_minibands *mb = NULL;
  ew_error err;
  assert_int_equal(ew_minibands_create(&mb, &err), EW_OK);
  if (ew_minibands_compute_kp(mb, st, bands, points, step, kmax, kpoints, &err) != EW_OK) {
    print_error("compute_kp: %s\n", err.message);
    fail();
  }
  return mb;
}

static size_t labelled(const ew_minibands *mb, const char *label) {
  for (size_t j = 0; j < ew_minibands_count(mb); j++)
    if (!strcmp(ew_minibands_label(mb, j), label)) return j;
  print_error("no miniband %s\n", label);
  fail();
  return 0;
}

static ew_kpp_pencil *period_pencil(const ew_stack *st, double step, ew_kp_model model,
                                    ew_grid **g) {
  size_t *cells = calloc(st->n_layers, sizeof *cells);
  assert_non_null(cells);
  ew_grid_cells_for_step(st, step, cells);
  *g = ew_grid_layered(st, cells);
  free(cells);
  assert_non_null(*g);
  ew_kpp_pencil *p = NULL;
  assert_int_equal(ew_kpp_build(st, *g, model, &p, NULL), EW_OK);
  return p;
}

/* all eigenvalues of the dense standard form B^{-1/2} H(q) B^{-1/2} (LAPACK zheev), ascending;
 * vectors in A when want_vectors */
static double *dense_eigs(const ew_kpp_pencil *p, double qd, double complex **vectors) {
  size_t dim = ew_kpp_dim(p), nb = (size_t)p->nb;
  double complex *A = malloc(dim * dim * sizeof *A);
  double *ev = malloc(dim * sizeof *ev);
  assert_non_null(A);
  assert_non_null(ev);
  ew_kpp_dense(p, qd, A);
  for (size_t c = 0; c < dim; c++)
    for (size_t r = 0; r < dim; r++) A[c * dim + r] /= sqrt(p->prof->w[r / nb] * p->prof->w[c / nb]);
  assert_int_equal(LAPACKE_zheev(LAPACK_COL_MAJOR, vectors ? 'V' : 'N', 'L', (lapack_int)dim, A,
                                 (lapack_int)dim, ev), 0);
  if (vectors) *vectors = A;
  else free(A);
  return ev;
}

/* ---- the published gap -------------------------------------------------------------------- */
/* InAs(8 ML)/GaSb(8 ML) on GaSb(100): measured cutoff about 4.8 µm at 300 K, i.e.
 * hc/λ = 0.258 eV ("MBE growth of high absorption mid-IR type-II InAs/GaSb superlattices",
 * https://www.soolun.com/periodical/c12a0b1dd640952d144bab355449db2b.html, the source README
 * "Eight bands" cites).  8-band envelope results for such superlattices are good to a few
 * tens of meV (interfaces, parameters; from memory), and the finite-stack test of test_kp.c
 * uses the same ± 0.04 eV.  The gap converges in the step (0.2331, 0.2329, 0.2328 eV at 0.1,
 * 0.05, 0.025 nm): the default 0.05 nm is used. */
static void published_gap(void **state) {
  (void)state;
  ew_stack *st = inas_gasb(0.05);
  ew_minibands *mb = kp_minibands(st, 8, 9, 0.0, 0.2, 3);
  TU_NEAR(ew_minibands_gap_eV(mb), 0.258, 0.04, "InAs/GaSb 8/8 ML superlattice gap at 300 K");
  size_t e1 = labelled(mb, "e1"), hh1 = labelled(mb, "hh1");
  assert_string_equal(ew_minibands_model(mb), "8band");
  assert_string_equal(ew_minibands_band(mb, e1), "e");
  /* the top hole miniband is the heavy hole (type II: the hole in GaSb) */
  assert_int_equal(hh1, e1 + 1);
  /* the gap is e1's bottom minus hh1's top, both the minimum/maximum over the q samples */
  double lo = INFINITY, hi = -INFINITY;
  for (size_t i = 0; i < ew_minibands_point_count(mb); i++) {
    lo = fmin(lo, ew_minibands_energy_eV(mb, e1, i));
    hi = fmax(hi, ew_minibands_energy_eV(mb, hh1, i));
  }
  TU_NEAR(ew_minibands_gap_eV(mb), lo - hi, 1e-15, "gap = min e1 − max hh1");
  ew_minibands_free(mb);
  ew_stack_free(st);
}

/* ---- the finite stack approaches the periodic gap ------------------------------------------- */
/* N periods plus one InAs layer between 10 nm of AlSb (the stack of test_kp.c's superlattice
 * test) by the hard-wall 8-band dispersion.  The finite stack's e1 lies inside the miniband,
 * above its bottom: for a tight-binding chain of M coupled wells, E_1 − E_bottom =
 * (W/2)(1 − cos(π/(M + 1))) with W the miniband width (the chain's levels E0 − 2t cos(kπ/(M+1));
 * C. Kittel, Introduction to Solid State Physics, ch. 9, from memory); here M = N + 1 InAs
 * wells.  Checked: the gap decreases with N towards the periodic one, and e1's excess at
 * N = 8 and 16 follows the chain law to 30 % (the chain is a model, the cladding ends are
 * not tight-binding sites). */
static double finite_gap(int N, double *e1) {
  char text[1024];
  snprintf(text, sizeof text, "substrate = \"GaSb\";\ntemperature = 300.0;\ngrid_step = 0.1;\n"
           "layers = (\n { name = \"c1\"; material = \"AlSb\"; thickness = 10.0; },\n"
           " { repeat = %d; layers = ( { name = \"e\"; material = \"InAs\"; thickness = 2.42; },\n"
           "   { name = \"h\"; material = \"GaSb\"; thickness = 2.44; } ); },\n"
           " { name = \"x\"; material = \"InAs\"; thickness = 2.42; },\n"
           " { name = \"c2\"; material = \"AlSb\"; thickness = 10.0; }\n);\n", N);
  ew_stack *st = read_stack(text);
  ew_dispersion *d = NULL;
  ew_dispersion_create(&d, NULL);
  ew_dispersion_options o;
  ew_dispersion_options_default(&o);
  o.model = 8, o.points = 2, o.kmax_inv_nm = 0.01;
  ew_error err;
  if (ew_dispersion_compute(d, st, &o, &err)) print_error("%s\n", err.message);
  size_t ie = SIZE_MAX, ih = SIZE_MAX;
  for (size_t j = 0; j < ew_dispersion_subband_count(d); j++) {
    if (!strcmp(ew_dispersion_label(d, j), "e1")) ie = j;
    if (!strcmp(ew_dispersion_label(d, j), "hh1")) ih = j;
  }
  assert_true(ie != SIZE_MAX && ih != SIZE_MAX);
  *e1 = ew_dispersion_energy_eV(d, ie, 0);
  double gap = *e1 - ew_dispersion_energy_eV(d, ih, 0);
  ew_dispersion_free(d);
  ew_stack_free(st);
  return gap;
}

static void finite_approaches_periodic(void **state) {
  (void)state;
  ew_stack *st = inas_gasb(0.1);
  ew_minibands *mb = kp_minibands(st, 8, 9, 0.0, 0.0, 0);
  double gp = ew_minibands_gap_eV(mb);
  size_t e1 = labelled(mb, "e1");
  double bottom = ew_minibands_bottom_eV(mb, e1), W = ew_minibands_width_eV(mb, e1);
  const int Ns[3] = {4, 8, 16};
  double last = INFINITY;
  for (int t = 0; t < 3; t++) {
    double ef, g = finite_gap(Ns[t], &ef);
    assert_true(g > gp && g < last); /* above the periodic gap, decreasing with N */
    last = g;
    if (Ns[t] >= 8) {
      double chain = 0.5 * W * (1.0 - cos(EW_PI / (Ns[t] + 2)));
      TU_NEAR(ef - bottom, chain, 0.3 * chain, "finite e1 above the miniband bottom: chain law");
    }
  }
  TU_NEAR(last, gp, 0.004, "16 periods: the finite gap within 4 meV of the periodic one");
  ew_minibands_free(mb);
  ew_stack_free(st);
}

/* ---- periodicity, time reversal --------------------------------------------------------------- */
/* E(q + 2π/d) = E(q) (the Bloch phase e^{iqd} is all that q enters) and E(−q) = E(q) (at
 * k∥ = 0 the Hamiltonian is real up to a unitary, H(−q) = conj H(q): time reversal), both
 * through independent solves at the three phases, to the certified bounds. */
static void periodicity(void **state) {
  (void)state;
  ew_stack *st = inas_gasb(0.1);
  ew_grid *g = NULL;
  ew_kpp_pencil *p = period_pencil(st, 0.1, EW_KP_8BAND, &g);
  ew_kpp_solver *s = ew_kpp_solver_create(p, 12);
  assert_non_null(s);
  double v[3][12], b[3][12];
  const double qd[3] = {0.7, 0.7 + 2.0 * EW_PI, -0.7};
  size_t k0 = 2 * p->n - 4;
  for (int t = 0; t < 3; t++) assert_int_equal(ew_kpp_window(s, qd[t], k0, 12, 0, v[t], b[t], NULL), EW_OK);
  for (int j = 0; j < 12; j++) {
    TU_NEAR(v[1][j], v[0][j], 1e-9, "q + 2π/d");
    TU_NEAR(v[2][j], v[0][j], 1e-9, "−q");
    assert_true(b[0][j] < 1e-9);
  }
  ew_kpp_solver_free(s);
  ew_kpp_free(p);
  ew_grid_free(g);
  ew_stack_free(st);
}

/* An invented asymmetric period: two different barriers around a GaAs well, thicknesses that
 * the 0.07 nm step does not divide alike (the face node's two half cells differ), parabolic
 * electrons in the single-band model (nonparabolic = false). */
static const char *asym_text =
    "temperature = 300.0;\nnonparabolic = false;\nlayers = (\n"
    "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.25; thickness = 1.0; },\n"
    "  { name = \"well\"; material = \"GaAs\"; thickness = 4.0; },\n"
    "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.35; thickness = 1.5; }\n);\n";

/* ---- Ep = 0: the conduction rows are the single-band Bloch pencil ------------------------------ */
/* With Ep = 0 the 8-band conduction rows hold only S k² = k²/me (S = 1/me − Ep·(…)) and the
 * conduction edge: the BenDaniel–Duke pencil of miniband.c on the same grid, whose e1
 * miniband `epiwell minibands` computes by a different code path (scalar Bloch pencil,
 * bisection on its own count), on the asymmetric period above (its electron mass the
 * band-edge one as well).  Agreement to 1e-9 eV at q = 0 and π/d (bottom and top of e1). */
static void ep_zero_decouples(void **state) {
  (void)state;
  ew_stack *st = read_stack(asym_text);
  ew_minibands *one = NULL;
  assert_int_equal(ew_minibands_create(&one, NULL), EW_OK);
  assert_int_equal(ew_minibands_compute(one, st, 5, 0.07, NULL), EW_OK);
  ew_grid *g = NULL;
  ew_kpp_pencil *p = period_pencil(st, 0.07, EW_KP_8BAND, &g);
  for (size_t c = 0; c <= p->n; c++) p->prof->ep[c] = 0.0;
  ew_kpp_fill(p, 0.0, 0.0);
  ew_kpp_solver *s = ew_kpp_solver_create(p, 2);
  double v[2], b[2];
  size_t e1 = labelled(one, "e1");
  for (int end = 0; end < 2; end++) {
    /* the lowest conduction pair: eigenvalues 2N − 2, 2N − 1 of the hole picture */
    assert_int_equal(ew_kpp_window(s, end ? EW_PI : 0.0, 2 * p->n - 2, 2, 0, v, b, NULL), EW_OK);
    double want = end ? ew_minibands_top_eV(one, e1) : ew_minibands_bottom_eV(one, e1);
    TU_NEAR(-v[0], want, 1e-9, "Ep = 0: 8-band e1 = single-band e1 (spin up)");
    TU_NEAR(-v[1], want, 1e-9, "Ep = 0: 8-band e1 = single-band e1 (spin down)");
  }
  ew_kpp_solver_free(s);
  ew_kpp_free(p);
  ew_grid_free(g);
  ew_minibands_free(one);
  ew_stack_free(st);
}

/* The 4-band model at k∥ = 0: the heavy- and light-hole blocks are the single-band hole
 * pencils (kp_hamiltonian.h: the cell coefficients are the single-band masses 1/(γ1 ∓ 2γ2)
 * exactly; J. M. Luttinger, Phys. Rev. 102, 1030 (1956)), so hh1 and lh1 of
 * ew_minibands_compute_kp(…, 4, …) equal the single-band minibands (miniband.c) at every q. */
static void four_band_decouples(void **state) {
  (void)state;
  ew_stack *st = read_stack(asym_text);
  ew_minibands *one = NULL;
  assert_int_equal(ew_minibands_create(&one, NULL), EW_OK);
  assert_int_equal(ew_minibands_compute(one, st, 5, 0.07, NULL), EW_OK);
  ew_minibands *kp = kp_minibands(st, 4, 5, 0.07, 0.0, 0);
  assert_string_equal(ew_minibands_model(kp), "4band");
  assert_true(isnan(ew_minibands_gap_eV(kp)));
  const char *names[2] = {"hh1", "lh1"};
  for (int t = 0; t < 2; t++) {
    size_t a = labelled(one, names[t]), b = labelled(kp, names[t]);
    for (size_t i = 0; i < 5; i++)
      TU_NEAR(ew_minibands_energy_eV(kp, b, i), ew_minibands_energy_eV(one, a, i), 1e-9,
              "4-band k∥ = 0 = single-band hole miniband");
  }
  ew_minibands_free(kp);
  ew_minibands_free(one);
  ew_stack_free(st);
}

/* ---- a uniform strained period: the bulk band edges ------------------------------------------ */
/* A "period" of one material (two InAs layers, 1.0 and 1.37 nm, on GaSb at 300 K: biaxial
 * tension) is bulk InAs: at q = 0, k∥ = 0 the node-constant vectors are exact eigenvectors
 * (every second difference and the Kane term P kz vanish on them), so the edges of the
 * strained bulk are eigenvalues: the conduction edge and the heavy- and light-hole edges of
 * the Bir–Pikus model (G. L. Bir, G. E. Pikus, Symmetry and Strain-Induced Effects in
 * Semiconductors (Wiley, 1974); the light hole with its split-off coupling, strain.h) as the
 * stack resolves them, to 1e-9 eV, in the 8- and 6-band models.  The face node (built apart
 * from the others: its potentials and strain from the two outer layers) must agree for this. */
static void uniform_bulk_edges(void **state) {
  (void)state;
  ew_stack *st = read_stack("substrate = \"GaSb\";\ntemperature = 300.0;\nlayers = (\n"
                            " { name = \"a\"; material = \"InAs\"; thickness = 1.0; },\n"
                            " { name = \"b\"; material = \"InAs\"; thickness = 1.37; }\n);\n");
  const ew_bands *bb = &st->layers[0].bands;
  assert_true(fabs(bb->Ev_lh_eV - bb->Ev_hh_eV) > 0.01); /* the strain splits them */
  for (int model = 8; model >= 6; model -= 2) {
    ew_grid *g = NULL;
    ew_kpp_pencil *p = period_pencil(st, 0.05, (ew_kp_model)model, &g);
    ew_kpp_solver *s = ew_kpp_solver_create(p, 6);
    double v[6], b[6];
    size_t c = model == 8 ? 2 * p->n : 0, k0 = model == 8 ? c - 2 : 0;
    assert_int_equal(ew_kpp_window(s, 0.0, k0, model == 8 ? 6 : 4, 0, v, b, NULL), EW_OK);
    const double *h = model == 8 ? v + 2 : v; /* hole picture: the two highest valence pairs */
    if (model == 8)
      for (int t = 0; t < 2; t++) TU_NEAR(-v[t], bb->Ec_eV, 1e-9, "uniform period: Ec");
    double top = fmax(bb->Ev_hh_eV, bb->Ev_lh_eV), next = fmin(bb->Ev_hh_eV, bb->Ev_lh_eV);
    for (int t = 0; t < 2; t++) {
      TU_NEAR(-h[t], top, 1e-9, "uniform period: the upper valence edge (light hole, tension)");
      TU_NEAR(-h[2 + t], next, 1e-9, "uniform period: the heavy-hole edge");
    }
    ew_kpp_solver_free(s);
    ew_kpp_free(p);
    ew_grid_free(g);
  }
  ew_stack_free(st);
}

/* The mass at a miniband's bottom, on a uniform unstrained InAs period (no substrate): the
 * conduction miniband is bulk InAs folded, and the 8-band conduction mass at k → 0 is
 * 1/(S + Ep' (Eg + 2Δ/3)/(Eg (Eg + Δ))) = me for every rescaled Ep' (S takes the rest:
 * E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957); the remote-band S of kp_hamiltonian.h),
 * i.e. the layer's band-edge mass.  The curvature of E(q) from the Richardson differences
 * (the grid's sin(qh)/h in place of q changes it by O((qh)²) ~ 1e-6 here): to 1e-3. */
static void uniform_bulk_mass(void **state) {
  (void)state;
  ew_stack *st = read_stack("temperature = 300.0;\nlayers = (\n"
                            " { name = \"a\"; material = \"InAs\"; thickness = 1.0; },\n"
                            " { name = \"b\"; material = \"InAs\"; thickness = 1.37; }\n);\n");
  ew_minibands *mb = kp_minibands(st, 8, 5, 0.05, 0.0, 0);
  size_t e1 = labelled(mb, "e1");
  double me = st->layers[0].bands.me;
  TU_NEAR(ew_minibands_mass_m0(mb, e1), me, 1e-3 * me, "uniform InAs period: e1 mass = me");
  TU_NEAR(ew_minibands_bottom_eV(mb, e1), st->layers[0].bands.Ec_eV, 1e-9, "e1 bottom = Ec");
  /* the fourfold Γ8 top: two minibands from Ev with the Luttinger masses along [001],
   * 1/(γ1 − 2γ2) and 1/(γ1 + 2γ2) (J. M. Luttinger, Phys. Rev. 102, 1030 (1956); in the
   * 8-band model γ1' + 2γ2' + 2Ep'/(3Eg) = γ1 + 2γ2), in either order: at the degenerate
   * top their labels are not told apart by character */
  assert_int_equal(ew_minibands_count(mb), 3);
  double m1 = ew_minibands_mass_m0(mb, 1), m2 = ew_minibands_mass_m0(mb, 2);
  double mh = st->layers[0].bands.mhh_z, ml = st->layers[0].bands.mlh_z;
  TU_NEAR(fmax(m1, m2), mh, 1e-3 * mh, "Γ8: heavy-hole mass along [001]");
  TU_NEAR(fmin(m1, m2), ml, 1e-3 * ml, "Γ8: light-hole mass along [001]");
  for (size_t j = 1; j < 3; j++)
    TU_NEAR(ew_minibands_bottom_eV(mb, j), st->layers[0].bands.Ev_eV, 1e-9, "Γ8 top = Ev");
  ew_minibands_free(mb);
  ew_stack_free(st);
}

/* ---- against LAPACK zheev ------------------------------------------------------------------- */
/* The dense periodic matrix (ew_kpp_dense, B^{-1/2} H B^{-1/2}) by zheev at q = 0.37 π/d and
 * k∥ = (0.12, 0.05)/nm of a period without a mirror plane (InAs/GaSb/AlSb: every term of the
 * Hamiltonian on, the Kramers pairs split by the structural asymmetry): the
 * window of 12 eigenvalues around the gap by the sparse shift-invert to 1e-9 eV, and the
 * block LDLᴴ count at 300 shifts (spread over the spectrum, around the gap, and 1e-7 eV
 * either side of every window eigenvalue) equal to zheev's. */
static void against_zheev(void **state) {
  (void)state;
  ew_stack *st = read_stack("substrate = \"GaSb\";\ntemperature = 300.0;\ngrid_step = 0.1;\n"
                            "layers = (\n { name = \"e\"; material = \"InAs\"; thickness = 2.42; },\n"
                            " { name = \"h\"; material = \"GaSb\"; thickness = 2.44; },\n"
                            " { name = \"b\"; material = \"AlSb\"; thickness = 0.9; }\n);\n");
  ew_grid *g = NULL;
  ew_kpp_pencil *p = period_pencil(st, 0.1, EW_KP_8BAND, &g);
  ew_kpp_fill(p, 0.12, 0.05);
  double qd = 0.37 * EW_PI;
  double *ev = dense_eigs(p, qd, NULL);
  size_t dim = ew_kpp_dim(p), k0 = 2 * p->n - 4;
  ew_kpp_solver *s = ew_kpp_solver_create(p, 12);
  double v[12], b[12];
  assert_int_equal(ew_kpp_window(s, qd, k0, 12, 0, v, b, NULL), EW_OK);
  for (size_t j = 0; j < 12; j++) TU_NEAR(v[j], ev[k0 + j], 1e-9, "window vs zheev");
  assert_true(fabs(ev[k0 + 1] - ev[k0]) > 1e-6); /* k∥ > 0: the pairs are split here */
  for (int t = 0; t < 300; t++) {
    double x = t < 100 ? ev[0] - 1.0 + (ev[dim - 1] - ev[0] + 2.0) * t / 99.0
               : t < 276 ? ev[k0] - 0.3 + 0.9 * (t - 100) / 176.0
                         : ev[k0 + (size_t)(t - 276) / 2] + ((t % 2) ? 1e-7 : -1e-7);
    size_t c = 0, want = 0;
    assert_int_equal(ew_kpp_count_below(p, qd, x, &c, NULL), EW_OK);
    for (size_t k = 0; k < dim; k++) want += ev[k] < x;
    assert_int_equal(c, want);
  }
  free(ev);
  ew_kpp_solver_free(s);
  ew_kpp_free(p);
  ew_grid_free(g);
  ew_stack_free(st);
}

/* ---- no state inside the gap -------------------------------------------------------------------- */
/* At every q sample (k∥ = 0) and every k∥ sample (q = 0) of the result: the count between
 * hh1's energy + 0.1 meV and e1's − 0.1 meV is zero (block LDLᴴ), and independently zheev
 * finds no eigenvalue there and exactly 2N above the gap (the conduction band's share of the
 * 8N states), e1 being mostly |S> (weight > 1/2 in zheev's vectors at q = 0); the result's
 * e1 and hh1 there are zheev's two pairs next to the gap to 1e-9 eV. */
static void no_state_in_gap(void **state) {
  (void)state;
  ew_stack *st = inas_gasb(0.1);
  ew_minibands *mb = kp_minibands(st, 8, 5, 0.0, 0.2, 3);
  size_t e1 = labelled(mb, "e1"), hh1 = labelled(mb, "hh1");
  ew_grid *g = NULL;
  ew_kpp_pencil *p = period_pencil(st, 0.1, EW_KP_8BAND, &g);
  size_t dim = ew_kpp_dim(p), N = p->n;
  for (size_t t = 0; t < 5 + 3; t++) {
    int inplane = t >= 5;
    size_t i = inplane ? t - 5 : t;
    double qd = inplane ? 0.0 : EW_PI * (double)i / 4.0;
    ew_kpp_fill(p, inplane ? 0.1 * (double)i : 0.0, 0.0); /* the k∥ asked for: 0 … 0.2/nm */
    double ee = inplane ? ew_minibands_energy_k_eV(mb, e1, i) : ew_minibands_energy_eV(mb, e1, i);
    double eh = inplane ? ew_minibands_energy_k_eV(mb, hh1, i) : ew_minibands_energy_eV(mb, hh1, i);
    size_t c_e = 0, c_h = 0; /* hole picture λ = −E */
    assert_int_equal(ew_kpp_count_below(p, qd, -(ee - 1e-4), &c_e, NULL), EW_OK);
    assert_int_equal(ew_kpp_count_below(p, qd, -(eh + 1e-4), &c_h, NULL), EW_OK);
    assert_int_equal(c_h - c_e, 0);
    double complex *V = NULL;
    double *ev = dense_eigs(p, qd, t == 0 ? &V : NULL);
    size_t inside = 0, above = 0;
    for (size_t k = 0; k < dim; k++) {
      inside += -ev[k] > eh + 1e-4 && -ev[k] < ee - 1e-4;
      above += -ev[k] >= ee - 1e-4;
    }
    assert_int_equal(inside, 0);
    assert_int_equal(above, 2 * N);
    /* and the result's e1 and hh1 are zheev's pairs next to the gap (pair means) */
    TU_NEAR(ee, -0.5 * (ev[2 * N - 2] + ev[2 * N - 1]), 1e-9, "e1 = zheev's pair 2N − 1, 2N");
    TU_NEAR(eh, -0.5 * (ev[2 * N] + ev[2 * N + 1]), 1e-9, "hh1 = zheev's pair 2N + 1, 2N + 2");
    if (V) { /* e1's pair: zheev's eigenvalues 2N − 2 and 2N − 1; S is components 6, 7 */
      double ws = 0.0;
      for (size_t c = 2 * N - 2; c < 2 * N; c++)
        for (size_t j = 0; j < N; j++)
          for (size_t a = 6; a < 8; a++) ws += 0.5 * cabs(V[c * dim + j * 8 + a]) * cabs(V[c * dim + j * 8 + a]);
      assert_true(ws > 0.5);
      free(V);
    }
    free(ev);
  }
  ew_kpp_free(p);
  ew_grid_free(g);
  ew_minibands_free(mb);
  ew_stack_free(st);
}

/* ---- JSON and CSV read back ----------------------------------------------------------------- */
static void json_csv_roundtrip(void **state) {
  (void)state;
  ew_stack *st = inas_gasb(0.1);
  ew_minibands *mb = kp_minibands(st, 8, 5, 0.0, 0.2, 4);
  char dir[256], path[300];
  ew_error err;
  assert_int_equal(tu_mkdtemp("kp_minibands", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/mb.json", dir);
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  assert_int_equal(ew_minibands_write_json(mb, f, &err), EW_OK);
  fclose(f);
  char *text = rt_slurp(path);
  rj doc;
  assert_non_null(text);
  assert_int_equal(rj_parse(text, &doc), 0);
  RT_JSON(&doc, "period_nm", ew_minibands_period_nm(mb), "json");
  RT_JSON(&doc, "grid_step_nm", ew_minibands_grid_step_nm(mb), "json");
  RT_JSON(&doc, "gap_eV", ew_minibands_gap_eV(mb), "json");
  RT_STREQ(rj_str(&doc, "model"), "8band", "json.model");
  RT_STREQ(rj_str(&doc, "electron_mass"), ew_minibands_electron_mass(mb), "json.electron_mass");
  const rj *k = rj_get(&doc, "k_inv_nm"), *arr = rj_get(&doc, "minibands");
  assert_non_null(k);
  assert_non_null(arr);
  assert_int_equal(k->n, ew_minibands_k_count(mb));
  for (size_t i = 0; i < k->n; i++) /* the k∥ asked for: 0 … 0.2/nm in 4 samples */
    TU_NEAR(ew_minibands_k_inv_nm(mb, i), 0.2 * (double)i / 3.0, 1e-15, "k∥ grid");
  for (size_t i = 0; i < k->n; i++)
    RT_SAME(k->item[i].num, ew_minibands_k_inv_nm(mb, i), rt_tol_sig(ew_minibands_k_inv_nm(mb, i), 10), "json.k_inv_nm");
  assert_int_equal(arr->n, ew_minibands_count(mb));
  for (size_t j = 0; j < arr->n; j++) {
    const rj *o = &arr->item[j];
    RT_STREQ(rj_str(o, "band"), ew_minibands_band(mb, j), "json.band");
    RT_STREQ(rj_str(o, "label"), ew_minibands_label(mb, j), "json.label");
    RT_JSON(o, "index", ew_minibands_index(mb, j), "json");
    RT_JSON(o, "bottom_eV", ew_minibands_bottom_eV(mb, j), "json");
    RT_JSON(o, "top_eV", ew_minibands_top_eV(mb, j), "json");
    RT_JSON(o, "width_eV", ew_minibands_width_eV(mb, j), "json");
    RT_JSON(o, "mass_m0", ew_minibands_mass_m0(mb, j), "json");
    RT_JSON(o, "bound_eV", ew_minibands_bound_eV(mb, j), "json");
    const rj *q = rj_get(o, "q_inv_nm"), *e = rj_get(o, "energy_eV"), *ek = rj_get(o, "energy_k_eV");
    assert_non_null(q);
    assert_non_null(e);
    assert_non_null(ek);
    assert_int_equal(e->n, ew_minibands_point_count(mb));
    assert_int_equal(ek->n, ew_minibands_k_count(mb));
    for (size_t i = 0; i < e->n; i++) {
      double wq = ew_minibands_q_inv_nm(mb, i), we = ew_minibands_energy_eV(mb, j, i);
      RT_SAME(q->item[i].num, wq, rt_tol_sig(wq, 10), "json.q_inv_nm");
      RT_SAME(e->item[i].num, we, rt_tol_sig(we, 10), "json.energy_eV");
    }
    for (size_t i = 0; i < ek->n; i++) {
      double we = ew_minibands_energy_k_eV(mb, j, i);
      RT_SAME(ek->item[i].num, we, rt_tol_sig(we, 10), "json.energy_k_eV");
    }
    /* E(k∥ = 0) and E(q = 0) are the same state */
    TU_NEAR(ew_minibands_energy_k_eV(mb, j, 0), ew_minibands_energy_eV(mb, j, 0), 1e-9, "k∥ = 0 = q = 0");
  }
  rj_free(&doc);
  free(text);
  for (int in_plane = 0; in_plane < 2; in_plane++) {
    snprintf(path, sizeof path, "%s/mb%d.csv", dir, in_plane);
    f = fopen(path, "w");
    assert_non_null(f);
    assert_int_equal(in_plane ? ew_minibands_write_csv_k(mb, f, &err) : ew_minibands_write_csv(mb, f, &err), EW_OK);
    fclose(f);
    rcsv c;
    assert_int_equal(rcsv_read(path, &c), 0);
    size_t rows = in_plane ? ew_minibands_k_count(mb) : ew_minibands_point_count(mb);
    assert_int_equal(c.ncol, 1 + ew_minibands_count(mb));
    assert_int_equal(c.nrows, rows);
    RT_STREQ(c.head[0], in_plane ? "k_inv_nm" : "q_inv_nm", "csv header");
    for (size_t j = 0; j < ew_minibands_count(mb); j++) {
      char name[32];
      snprintf(name, sizeof name, "%s_eV", ew_minibands_label(mb, j));
      RT_STREQ(c.head[1 + j], name, "csv header");
    }
    for (size_t i = 0; i < rows; i++) {
      double x = in_plane ? ew_minibands_k_inv_nm(mb, i) : ew_minibands_q_inv_nm(mb, i);
      RT_SAME(rcsv_num(&c, i, 0), x, rt_tol_sig(x, 10), "csv abscissa");
      for (size_t j = 0; j < ew_minibands_count(mb); j++) {
        double we = in_plane ? ew_minibands_energy_k_eV(mb, j, i) : ew_minibands_energy_eV(mb, j, i);
        RT_SAME(rcsv_num(&c, i, (int)(1 + j)), we, rt_tol_sig(we, 10), "csv energy");
      }
    }
    rcsv_free(&c);
  }
  /* the accessors against the struct they read */
  for (size_t j = 0; j < ew_minibands_count(mb); j++)
    for (size_t i = 0; i < mb->kpoints; i++)
      TU_NEAR(ew_minibands_energy_k_eV(mb, j, i), mb->energy_k_eV[j * mb->kpoints + i], 0, "accessor");
  assert_true(isnan(ew_minibands_energy_k_eV(mb, 0, mb->kpoints)));
  tu_rm_tree(dir);
  ew_minibands_free(mb);
  ew_stack_free(st);
}

/* refusals: a model that is not 4, 6 or 8; in-plane k out of range */
static void refusals(void **state) {
  (void)state;
  ew_stack *st = inas_gasb(0.1);
  ew_minibands *mb = NULL;
  ew_error err;
  assert_int_equal(ew_minibands_create(&mb, &err), EW_OK);
  assert_int_equal(ew_minibands_compute_kp(mb, st, 5, 5, 0.0, 0.2, 3, &err), EW_ERR_USAGE);
  assert_int_equal(ew_minibands_compute_kp(mb, st, 8, 5, 0.0, -1.0, 3, &err), EW_ERR_USAGE);
  assert_int_equal(ew_minibands_compute_kp(mb, st, 8, 1, 0.0, 0.2, 3, &err), EW_ERR_USAGE);
  assert_int_equal(ew_minibands_compute_kp(NULL, st, 8, 5, 0.0, 0.2, 3, &err), EW_ERR_USAGE);
  assert_null(ew_minibands_model(mb));
  assert_int_equal(ew_minibands_write_csv_k(mb, stdout, &err), EW_ERR_USAGE);
  ew_minibands_free(mb);
  ew_stack_free(st);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(published_gap),      cmocka_unit_test(finite_approaches_periodic),
      cmocka_unit_test(periodicity),        cmocka_unit_test(ep_zero_decouples),
      cmocka_unit_test(four_band_decouples), cmocka_unit_test(against_zheev),
      cmocka_unit_test(no_state_in_gap),    cmocka_unit_test(json_csv_roundtrip),
      cmocka_unit_test(refusals),          cmocka_unit_test(uniform_bulk_edges),
      cmocka_unit_test(uniform_bulk_mass),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
