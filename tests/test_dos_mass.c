/* test_dos_mass.c — the subband density-of-states mass (dos_mass.c, the "dos_mass_m0" of the
 * dispersion JSON) against outside references:
 *  - the parabolic limit: a subband E = E0 ∓ ħ²k²/2m gives m (the 2-D density of states
 *    m/(2πħ²) per spin; S. L. Chuang, Physics of Photonic Devices (Wiley, 2009), ch. 3, from
 *    memory), holes (downwards) and electrons (upwards), ħ²/2m0 typed here from CODATA 2018;
 *  - a camel-back subband: the states of both parts within ε, counted here by hand;
 *  - the JSON of a k·p dispersion read back, each subband's value against the accessor. */
#include <math.h>

#include "testutil.h"
#include "roundtrip.h"

#include "dispersion.h"

#define HB2M (1.054571817e-34 * 1.054571817e-34 / (2.0 * 9.1093837015e-31) / 1.602176634e-19 * 1e18)

/* a one-subband dispersion of points samples to kmax with energies from fn */
static void fake(ew_dispersion *d, size_t points, double kmax, int character,
                 double (*fn)(double k, double m), double m) {
  memset(d, 0, sizeof *d);
  assert_int_equal(ew_dispersion_alloc(d, points, 1), EW_OK);
  d->points = points, d->subbands = 1, d->model = EW_KP_4BAND, d->direction = 100;
  d->character[0] = character;
  snprintf(d->label[0], sizeof d->label[0], "%s1", character == 3 ? "e" : "hh");
  for (size_t i = 0; i < points; i++) {
    d->k_inv_nm[i] = kmax * (double)i / (double)(points - 1);
    d->energy_eV[i] = fn(d->k_inv_nm[i], m);
  }
}

static double hole_parabola(double k, double m) { return -0.1 - HB2M * k * k / m; }
static double electron_parabola(double k, double m) { return 1.5 + HB2M * k * k / m; }
/* hole picture depth: 20 meV up, then down; depth(s) = −a s + b s², a = 0.2 eV nm², b = 1 */
static double camel(double k, double m) {
  (void)m;
  double s = k * k;
  return -0.1 + 0.2 * s - 1.0 * s * s;
}

static void parabolic_limit(void **state) {
  (void)state;
  ew_dispersion d;
  fake(&d, 41, 1.0, 0, hole_parabola, 0.3);
  for (int e = 1; e <= 4; e++)
    assert_true(fabs(ew_dispersion_dos_mass_m0(&d, 0, 0.01 * e) - 0.3) < 1e-9);
  assert_true(isnan(ew_dispersion_dos_mass_m0(&d, 0, 1.0)));  /* beyond kmax: 1.0 eV > 0.127 */
  assert_true(isnan(ew_dispersion_dos_mass_m0(&d, 0, -0.01)));
  assert_true(isnan(ew_dispersion_dos_mass_m0(&d, 1, 0.01)));
  ew_dispersion_clear(&d);
  fake(&d, 33, 1.0, 3, electron_parabola, 0.067);
  assert_true(fabs(ew_dispersion_dos_mass_m0(&d, 0, 0.025) - 0.067) < 1e-9);
  ew_dispersion_clear(&d);
}

static void camel_back(void **state) {
  (void)state;
  ew_dispersion d;
  fake(&d, 2001, 1.0, 0, camel, 0);
  /* depth(s) = s² − 0.2 s: within ε for s up to the root of s² − 0.2 s − ε = 0 (the whole
     hump, depth < 0, counts), so N = s*(ε)/4π */
  double eps = 0.02, s_star = 0.1 + sqrt(0.01 + eps);
  double want = 2.0 * M_PI * 2.0 * HB2M * (s_star / (4.0 * M_PI)) / eps;
  assert_true(fabs(ew_dispersion_dos_mass_m0(&d, 0, eps) / want - 1.0) < 1e-4);
  ew_dispersion_clear(&d);
}

static void json_roundtrip(void **state) {
  (void)state;
  ew_catalogue *cat = NULL;
  assert_int_equal(tu_load_catalogue(&cat), 0);
  ew_stack *st = NULL;
  assert_int_equal(ew_stack_read_string(
                       "temperature = 77.0;\nlayers = (\n"
                       "  { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; },\n"
                       "  { name = \"well\"; material = \"GaAs\"; thickness = 8.0; },\n"
                       "  { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 10.0; }\n);\n",
                       "test", cat, &st, NULL), EW_OK);
  ew_dispersion *d = NULL;
  assert_int_equal(ew_dispersion_create(&d, NULL), EW_OK);
  ew_dispersion_options o;
  ew_dispersion_options_default(&o);
  o.kmax_inv_nm = 1.5, o.points = 61, o.axial = 1;
  assert_int_equal(ew_dispersion_compute(d, st, &o, NULL), EW_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_int_equal(ew_dispersion_write_json(d, f, NULL), EW_OK);
  fclose(f);
  rj j;
  assert_int_equal(rj_parse(buf, &j), 0);
  const rj *sb = rj_get(&j, "subbands");
  assert_int_equal(sb->n, ew_dispersion_subband_count(d));
  int finite = 0;
  for (size_t s = 0; s < sb->n; s++) {
    double want = ew_dispersion_dos_mass_m0(d, s, EW_DOS_MASS_WINDOW_EV);
    finite += isfinite(want);
    RT_SAME(rj_num(&sb->item[s], "dos_mass_m0"), want, rt_tol_sig(want, 10), "dos_mass_m0");
  }
  assert_true(finite >= 1);
  rj_free(&j);
  free(buf);
  ew_dispersion_free(d);
  ew_stack_free(st);
  ew_catalogue_free(cat);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(parabolic_limit),
      cmocka_unit_test(camel_back),
      cmocka_unit_test(json_roundtrip),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
