/* test_practitioner_report.c — the report page holds what the terminal shows (issue 17, "The
 * report page"): the band model, the levels, the interband lines with exciton binding, PL
 * peak (eV and nm), TE and TM, the intersubband lines, for doped stacks the Fermi level, the
 * densities, the sheet density of every level and the depolarisation-shifted lines, the
 * spectra with their peaks, and a band diagram that draws the Fermi level.
 *
 * The page is parsed (tables found by id, cells stripped of markup) and every number compared
 * with the library's value to the page's printed digits (half a unit of the last digit).
 * Where the page derives a number (a wavelength, a shifted line), the expected value is
 * formed here from hc typed below, not with the library's formula. */
#include <ctype.h>
#include <math.h>

#include "epiwell.h"
#include "spectra.h"
#include "testutil.h"

/* hc in eV·nm, exact SI values (CODATA 2018: E. Tiesinga et al., Rev. Mod. Phys. 93, 025010
 * (2021)) */
#define HC_EVNM 1239.84198433200208

typedef struct {
  ew_catalogue *cat;
  ew_stack *st[2]; /* 0: examples/detector_well.cfg, 1: examples/doped_detector.cfg */
  ew_result *res[2];
  char *page[2];
  char dir[512];
} fixture;

static char *slurp(const char *path) {
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  fseek(f, 0, SEEK_END);
  long n = ftell(f);
  fseek(f, 0, SEEK_SET);
  char *b = malloc((size_t)n + 1);
  if (b && fread(b, 1, (size_t)n, f) != (size_t)n) {
    free(b);
    b = NULL;
  }
  if (b) b[n] = '\0';
  fclose(f);
  return b;
}

static int setup(void **state) {
  static fixture fx; /* lives for the whole run */
  static const char *const ex[2] = {"examples/detector_well.cfg", "examples/doped_detector.cfg"};
  ew_error err = {0};
  if (ew_catalogue_load("materials", &fx.cat, &err) != EW_OK) return -1;
  if (tu_mkdtemp("report17", fx.dir, sizeof fx.dir)) return -1;
  for (int k = 0; k < 2; k++) {
    if (ew_stack_read_file(ex[k], fx.cat, &fx.st[k], &err) != EW_OK) return -1;
    if (ew_solve(fx.st[k], NULL, &fx.res[k], &err) != EW_OK) return -1;
    char path[700];
    snprintf(path, sizeof path, "%s/page%d.html", fx.dir, k);
    if (ew_result_write_report(fx.res[k], fx.cat, path, &err) != EW_OK) return -1;
    if (!(fx.page[k] = slurp(path))) return -1;
  }
  *state = &fx;
  return 0;
}

static int teardown(void **state) {
  fixture *fx = *state;
  for (int k = 0; k < 2; k++) {
    free(fx->page[k]);
    ew_result_free(fx->res[k]);
    ew_stack_free(fx->st[k]);
  }
  ew_catalogue_free(fx->cat);
  tu_rm_tree(fx->dir);
  return 0;
}

/* ---- a small reader of the page's tables ---------------------------------------------- */
#define MAX_ROWS 96
#define MAX_CELLS 16
typedef struct {
  size_t n;
  size_t cells[MAX_ROWS];
  char cell[MAX_ROWS][MAX_CELLS][96];
} table;

/* Cell text: tags dropped, the entities the page uses turned into ASCII ("–" between level
 * names into "-", "—" (no value) into "", µ into "u"). */
static void cell_text(const char *a, const char *e, char *out, size_t cap) {
  size_t n = 0;
  while (a < e && n + 1 < cap) {
    if (*a == '<') {
      while (a < e && *a != '>') a++;
      a++;
      continue;
    }
    if (*a == '&') {
      const char *semi = memchr(a, ';', (size_t)(e - a));
      if (semi) {
        if (!strncmp(a, "&#8211;", 7)) out[n++] = '-';
        else if (!strncmp(a, "&#181;", 6)) out[n++] = 'u';
        a = semi + 1;
        continue;
      }
    }
    out[n++] = *a++;
  }
  out[n] = '\0';
}

/* The data rows (those with <td> cells) of the table with id `id`; 0 rows when absent. */
static table *read_table(const char *page, const char *id) {
  table *t = calloc(1, sizeof *t);
  char key[128];
  snprintf(key, sizeof key, "<table id=\"%s\">", id);
  const char *p = strstr(page, key);
  if (!p) return t;
  const char *end = strstr(p, "</table>");
  for (const char *r = strstr(p, "<tr>"); r && r < end && t->n < MAX_ROWS; r = strstr(r + 4, "<tr>")) {
    const char *re = strstr(r, "</tr>");
    size_t c = 0;
    for (const char *d = strstr(r, "<td"); d && d < re && c < MAX_CELLS; d = strstr(d + 3, "<td")) {
      const char *a = strchr(d, '>') + 1, *e = strstr(a, "</td>");
      cell_text(a, e, t->cell[t->n][c++], sizeof t->cell[0][0]);
    }
    if (c) t->cells[t->n++] = c;
  }
  return t;
}

static double cnum(const table *t, size_t r, size_t c) {
  assert_true(c < t->cells[r]);
  char *e;
  double v = strtod(t->cell[r][c], &e);
  return e == t->cell[r][c] ? NAN : v;
}

/* half a unit of the last of `dec` decimals (and a little for the binary rounding) */
static double half(int dec) { return 0.5 * pow(10.0, -dec) * (1 + 1e-9) + 1e-12; }
/* the same for %.{dec}e: half a unit of the mantissa's last digit */
static double half_e(double v, int dec) { return half(dec) * pow(10.0, floor(log10(fabs(v)))) + 1e-300; }

static void line_name(const ew_result *r, const ew_line *ln, char *buf, size_t cap) {
  if (ln->kind == EW_LINE_INTERBAND)
    snprintf(buf, cap, "%s-%s", ew_result_state(r, ln->upper)->label, ew_result_state(r, ln->lower)->label);
  else
    snprintf(buf, cap, "%s-%s", ew_result_state(r, ln->lower)->label, ew_result_state(r, ln->upper)->label);
}

/* The row of table t whose first cell is name; fails the test when there is none. */
static size_t row_of(const table *t, const char *name) {
  for (size_t i = 0; i < t->n; i++)
    if (!strcmp(t->cell[i][0], name)) return i;
  fail_msg("no row %s", name);
  return 0;
}

/* ---- checks ---------------------------------------------------------------------------- */
static void model_and_levels(void **state) {
  fixture *fx = *state;
  for (int k = 0; k < 2; k++) {
    const ew_result *r = fx->res[k];
    const char *m = strstr(fx->page[k], "<p class=\"meta\" id=\"model\">Band model: ");
    assert_non_null(m);
    assert_int_equal(strncmp(m + strlen("<p class=\"meta\" id=\"model\">Band model: "),
                             ew_result_model(r), strlen(ew_result_model(r))), 0);
    table *t = read_table(fx->page[k], "levels-table");
    assert_int_equal(t->n, ew_result_state_count(r));
    for (size_t i = 0; i < t->n; i++) {
      const ew_state *s = ew_result_state(r, i);
      assert_string_equal(t->cell[i][0], s->label);
      TU_NEAR(cnum(t, i, 1), s->energy_eV, half(6), "energy, 6 decimals");
      TU_NEAR(cnum(t, i, 2), 1e3 * s->depth_eV, half(3), "depth in meV, 3 decimals");
      TU_NEAR(cnum(t, i, 3), 1e3 * s->error_eV, half_e(1e3 * s->error_eV, 2), "error %.2e");
      TU_NEAR(cnum(t, i, 6), s->inplane_mass, half(4), "in-plane mass");
    }
    free(t);
    /* the layer table's strain column (percent) as the terminal's strain_% */
    t = read_table(fx->page[k], "layers");
    assert_int_equal(t->n, fx->st[k]->n_layers);
    for (size_t i = 0; i < t->n; i++)
      TU_NEAR(cnum(t, i, 12), 100.0 * fx->st[k]->layers[i].bands.eps_par, half(3), "strain %");
    free(t);
  }
}

/* Every interband line the terminal lists (overlap >= line_min_strength) is a row with its
 * energy, wavelength, overlap, exciton binding, PL peak in eV and in nm (hc/E with hc typed
 * here), TE and TM; the lines below the threshold are not rows but are counted in a note. */
static void interband_rows(void **state) {
  fixture *fx = *state;
  for (int k = 0; k < 2; k++) {
    const ew_result *r = fx->res[k];
    table *t = read_table(fx->page[k], "interband");
    size_t listed = 0, hidden = 0;
    for (size_t i = 0; i < ew_result_line_count(r); i++) {
      const ew_line *ln = ew_result_line(r, i);
      if (ln->kind != EW_LINE_INTERBAND) continue;
      if (ln->overlap < 1e-3) { /* ew_options_default line_min_strength */
        hidden++;
        continue;
      }
      listed++;
      char nm[40];
      line_name(r, ln, nm, sizeof nm);
      size_t j = row_of(t, nm);
      TU_NEAR(cnum(t, j, 1), ln->energy_eV, half(5), "line energy");
      TU_NEAR(cnum(t, j, 2), HC_EVNM / ln->energy_eV, half(2) + 1e-6, "band-to-band nm");
      TU_NEAR(cnum(t, j, 3), ln->overlap, half(4), "overlap");
      assert_true(ln->exciton_binding_eV > 1e-3); /* the exciton pass ran: a few meV */
      TU_NEAR(cnum(t, j, 4), 1e3 * ln->exciton_binding_eV, half(2), "binding meV");
      TU_NEAR(cnum(t, j, 5), ln->pl_peak_eV, half(5), "PL eV");
      TU_NEAR(cnum(t, j, 6), HC_EVNM / ln->pl_peak_eV, half(2) + 1e-6, "PL nm = hc / PL eV");
      TU_NEAR(cnum(t, j, 7), ln->te_strength, half(3), "TE");
      TU_NEAR(cnum(t, j, 8), ln->tm_strength, half(3), "TM");
      assert_string_equal(t->cell[j][9], ln->allowed ? "allowed" : "forbidden");
    }
    assert_int_equal(t->n, listed);
    assert_true(listed >= 4);
    if (hidden) {
      char note[96];
      snprintf(note, sizeof note, "%zu line%s with overlap &lt; 0.001 not listed", hidden,
               hidden == 1 ? "" : "s");
      assert_non_null(strstr(fx->page[k], note));
    }
    free(t);
  }
}

static void intersubband_rows(void **state) {
  fixture *fx = *state;
  for (int k = 0; k < 2; k++) {
    const ew_result *r = fx->res[k];
    table *t = read_table(fx->page[k], "intersubband");
    size_t listed = 0;
    for (size_t i = 0; i < ew_result_line_count(r); i++) {
      const ew_line *ln = ew_result_line(r, i);
      if (ln->kind != EW_LINE_INTERSUBBAND || ln->oscillator_strength < 1e-3) continue;
      listed++;
      char nm[40];
      line_name(r, ln, nm, sizeof nm);
      size_t j = row_of(t, nm);
      TU_NEAR(cnum(t, j, 1), 1e3 * ln->energy_eV, half(3), "meV");
      TU_NEAR(cnum(t, j, 2), HC_EVNM / ln->energy_eV / 1e3, half(4) + 1e-9, "um = hc/E");
      TU_NEAR(cnum(t, j, 3), ln->dipole_nm, half(4), "dipole");
      TU_NEAR(cnum(t, j, 4), ln->oscillator_strength, half(4), "f");
    }
    assert_int_equal(t->n, listed);
    assert_true(listed >= 2);
    free(t);
  }
}

/* The doped stack: Fermi level, densities, sheet densities and depolarised lines against the
 * result's Schrödinger–Poisson block. */
static void doped_block(void **state) {
  fixture *fx = *state;
  const ew_result *r = fx->res[1];
  const ew_sp_info *sp = r->sp;
  assert_non_null(sp);
  assert_null(strstr(fx->page[0], "id=\"sp-summary\"")); /* undoped: no such block */
  table *t = read_table(fx->page[1], "sp-summary");
  TU_NEAR(cnum(t, row_of(t, "Fermi level"), 1), sp->fermi_eV, half(6), "Fermi level");
  struct { const char *name; double v; } q[] = {
      {"free electrons", sp->electrons_cm2},      {"electrons in the subbands", sp->electrons_bound_cm2},
      {"ionised donors", sp->donors_ion_cm2},
  };
  for (size_t i = 0; i < sizeof q / sizeof q[0]; i++)
    TU_NEAR(cnum(t, row_of(t, q[i].name), 1), q[i].v, half_e(q[i].v, 4), q[i].name);
  /* charge neutrality of the example (3e18 cm^-3 × 6 nm = 1.8e12 cm^-2, all ionised):
   * an outside check of the numbers the page shows */
  TU_NEAR(cnum(t, row_of(t, "ionised donors"), 1), 3e18 * 6e-7, 1e8, "N_D × well width");
  free(t);
  t = read_table(fx->page[1], "sheet");
  assert_int_equal(t->n, ew_result_state_count(r));
  for (size_t i = 0; i < t->n; i++) {
    assert_string_equal(t->cell[i][0], ew_result_state(r, i)->label);
    TU_NEAR(cnum(t, i, 2), sp->sheet_cm2[i], half_e(sp->sheet_cm2[i], 4), "sheet density");
  }
  free(t);
  t = read_table(fx->page[1], "depol");
  size_t n = 0;
  for (size_t i = 0; i < ew_result_line_count(r); i++) {
    const ew_line *ln = ew_result_line(r, i);
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    n++;
    char nm[40];
    line_name(r, ln, nm, sizeof nm);
    size_t j = row_of(t, nm);
    double d = sp->depol_eV[i], e = ln->energy_eV + d;
    TU_NEAR(cnum(t, j, 1), 1e3 * ln->energy_eV, half(3), "bare");
    TU_NEAR(cnum(t, j, 2), 1e3 * d, half(3), "shift");
    TU_NEAR(cnum(t, j, 3), 1e3 * e, half(3), "shifted");
    TU_NEAR(cnum(t, j, 4), HC_EVNM / e / 1e3, half(4) + 1e-9, "shifted um = hc/E");
  }
  assert_int_equal(t->n, n);
  free(t);
  /* e1-e2 of a 1.8e12 cm^-2 well is blue-shifted by several meV (the depolarisation shift,
   * T. Ando, A. B. Fowler, F. Stern, Rev. Mod. Phys. 54, 437 (1982); from memory) */
  char nm[8] = "e1-e2";
  t = read_table(fx->page[1], "depol");
  double shift = cnum(t, row_of(t, nm), 2);
  assert_true(shift > 3 && shift < 30);
  free(t);
  /* the band diagram on the page draws the Fermi level with its value */
  char label[64];
  snprintf(label, sizeof label, "Fermi level %.4f eV</text>", sp->fermi_eV);
  assert_non_null(strstr(fx->page[1], label));
  assert_null(strstr(fx->page[0], "Fermi level 0"));
}

/* The spectra: the interband chart inline, its peaks each at a local maximum of the
 * library's ew_interband_absorption evaluated here at the peak energy and 1 meV to either
 * side, and the strongest peak within the grid spacing of a line's PL peak (the 1s exciton
 * Lorentzian sits there).  The undoped and doped examples set no sheet_density: the page
 * says why the intersubband spectrum is absent. */
static void spectra_section(void **state) {
  fixture *fx = *state;
  for (int k = 0; k < 2; k++) {
    const ew_result *r = fx->res[k];
    assert_non_null(strstr(fx->page[k], "<figure id=\"spectrum-interband\">\n<svg"));
    assert_non_null(strstr(fx->page[k], "sets no sheet_density"));
    table *t = read_table(fx->page[k], "spectrum-interband-peaks");
    assert_true(t->n >= 1);
    size_t best = 0;
    for (size_t i = 0; i < t->n; i++) {
      double E = cnum(t, i, 0), v = cnum(t, i, 2), E3[3] = {E - 1e-3, E, E + 1e-3}, a[3];
      ew_error err = {0};
      assert_int_equal(ew_interband_absorption(r, fx->st[k]->linewidth_meV, 3, E3, a, &err), EW_OK);
      TU_NEAR(v, a[1], 5e-5 * fabs(a[1]) + 1e-6 * fabs(a[1]), "value (5 significant digits)");
      assert_true(a[1] >= a[0] && a[1] >= a[2]);
      if (v > cnum(t, best, 2)) best = i;
    }
    double Eb = cnum(t, best, 0), dmin = INFINITY;
    for (size_t i = 0; i < ew_result_line_count(r); i++) {
      const ew_line *ln = ew_result_line(r, i);
      if (ln->kind == EW_LINE_INTERBAND) dmin = fmin(dmin, fabs(ln->pl_peak_eV - Eb));
    }
    assert_true(dmin < 1e-3); /* grid spacing ~0.2 meV; a sum of neighbouring tails ~0.5 meV */
    free(t);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(model_and_levels), cmocka_unit_test(interband_rows),
      cmocka_unit_test(intersubband_rows), cmocka_unit_test(doped_block),
      cmocka_unit_test(spectra_section),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
