/* test_practitioner_plot.c — what issue 17 ("Pictures") adds to the band diagram, checked by
 * reading the SVG back: the Fermi level of a doped stack drawn at its energy, the arrows of the
 * PL line and of the strongest e1 intersubband line ending on their levels and labelled with
 * their wavelengths, only the lowest N levels of each band drawn (default 8), hole ψ of a
 * visible size, and the two levels of a double-well doublet in different tones with their
 * names at opposite ends.
 *
 * Positions are turned back into energies through the picture's own energy tick labels (two
 * ticks of a panel give its linear map), so a line drawn at a wrong energy fails; the expected
 * energies are the library's, the wavelengths hc/E with hc typed here. */
#include <math.h>

#include "band_diagram.h"
#include "epiwell.h"
#include "testutil.h"

/* hc in eV·nm, exact SI values (CODATA 2018, Rev. Mod. Phys. 93, 025010 (2021)) */
#define HC_EVNM 1239.84198433200208

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

/* ---- a reader of our SVG ----------------------------------------------------------------- */
typedef struct {
  double x, y, size;
  int anchor; /* -1 start, 0 middle, 1 end */
  int bold;
  char fill[8], s[160];
} svg_text;

typedef struct {
  size_t n;
  double x[4096], y[4096];
  char stroke[8], fill[8];
  double width;
} svg_path;

typedef struct {
  size_t nt, np;
  svg_text t[1200];
  svg_path *p; /* [np] */
} svg;

static void attr(const char *el, const char *end, const char *name, char *out, size_t cap) {
  char key[40];
  snprintf(key, sizeof key, " %s=\"", name);
  out[0] = '\0';
  const char *a = strstr(el, key);
  if (!a || a > end) return;
  a += strlen(key);
  size_t n = 0;
  while (*a && *a != '"' && n + 1 < cap) out[n++] = *a++;
  out[n] = '\0';
}

static svg *parse_svg(const char *s) {
  svg *g = calloc(1, sizeof *g);
  g->p = calloc(600, sizeof *g->p);
  for (const char *e = strchr(s, '<'); e; e = strchr(e + 1, '<')) {
    const char *end = strchr(e, '>');
    char v[64];
    if (!strncmp(e, "<text ", 6) && g->nt < 1200) {
      svg_text *t = &g->t[g->nt++];
      attr(e, end, "x", v, sizeof v), t->x = atof(v);
      attr(e, end, "y", v, sizeof v), t->y = atof(v);
      attr(e, end, "font-size", v, sizeof v), t->size = atof(v);
      attr(e, end, "text-anchor", v, sizeof v);
      t->anchor = !strcmp(v, "end") ? 1 : !strcmp(v, "middle") ? 0 : -1;
      attr(e, end, "font-weight", v, sizeof v), t->bold = !strcmp(v, "bold");
      attr(e, end, "fill", t->fill, sizeof t->fill);
      const char *c = end + 1, *ce = strstr(c, "</text>");
      size_t n = 0;
      while (c < ce && n + 1 < sizeof t->s) {
        if (!strncmp(c, "\xe2\x88\x92", 3)) t->s[n++] = '-', c += 3; /* U+2212 minus */
        else t->s[n++] = *c++;
      }
      t->s[n] = '\0';
    } else if (!strncmp(e, "<path ", 6) && g->np < 600) {
      svg_path *p = &g->p[g->np++];
      attr(e, end, "stroke", p->stroke, sizeof p->stroke);
      attr(e, end, "fill", p->fill, sizeof p->fill);
      attr(e, end, "stroke-width", v, sizeof v), p->width = atof(v);
      const char *d = strstr(e, " d=\"") + 4;
      while (*d != '"' && p->n < 4096) {
        while (*d == 'M' || *d == 'L' || *d == ' ' || *d == 'Z') d++;
        if (*d == '"') break;
        char *q;
        p->x[p->n] = strtod(d, &q);
        p->y[p->n++] = strtod(q, &q);
        d = q;
      }
    }
  }
  return g;
}

static void svg_free(svg *g) {
  free(g->p);
  free(g);
}

/* The energy axis of panel q (0 upper, 1 lower) from its tick labels (at x = tick_x, right
 * aligned, baseline 4 below the tick): E(y) = a + b·y. */
static void panel_map_at(const svg *g, double tick_x, int q, double *a, double *b) {
  double ys[2], es[2];
  int panel = 0, k = 0;
  double prev = -1;
  for (size_t i = 0; i < g->nt && k < 2; i++) {
    const svg_text *t = &g->t[i];
    if (fabs(t->x - tick_x) > 1e-6 || t->anchor != 1) continue;
    if (prev >= 0 && t->y > prev) panel++; /* ticks run upward; the next panel starts low */
    prev = t->y;
    if (panel != q) continue;
    ys[k] = t->y - 4;
    es[k++] = atof(t->s);
  }
  assert_int_equal(k, 2);
  *b = (es[1] - es[0]) / (ys[1] - ys[0]);
  *a = es[0] - *b * ys[0];
}

/* band diagram: labels at x = 78 (BD_LEFT − 8) */
static void panel_map(const svg *g, int q, double *a, double *b) { panel_map_at(g, 78.0, q, a, b); }

static const svg_text *find_text(const svg *g, const char *prefix) {
  for (size_t i = 0; i < g->nt; i++)
    if (!strncmp(g->t[i].s, prefix, strlen(prefix))) return &g->t[i];
  return NULL;
}

static char *diagram(const ew_result *r) {
  char *buf = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&buf, &len);
  ew_error err = {0};
  assert_int_equal(ew_result_write_band_diagram_svg(r, m, &err), EW_OK);
  fclose(m);
  return buf;
}

static ew_result *solve_file(const char *path, ew_stack **st) {
  ew_error err = {0};
  assert_int_equal(ew_stack_read_file(path, cat, st, &err), EW_OK);
  ew_result *r = NULL;
  assert_int_equal(ew_solve(*st, NULL, &r, &err), EW_OK);
  return r;
}

static size_t level_index(const ew_result *r, const char *label) {
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (!strcmp(ew_result_state(r, i)->label, label)) return i;
  fail_msg("no level %s", label);
  return 0;
}

static void hex(uint32_t rgb, char *out) { snprintf(out, 8, "#%06x", (unsigned)rgb); }

/* ---- checks ---------------------------------------------------------------------------- */
/* The doped detector: the Fermi line at the Fermi energy (one picture unit is ~1.5 meV here,
 * so 1 unit of tolerance), its label with the value to 4 decimals; the PL arrow's head on
 * hh1 and its label the e1-hh1 PL peak in nm; the intersubband arrow's head on e2 and its
 * label the e1-e2 wavelength and the depolarised one. */
static void fermi_and_arrows(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = solve_file("examples/doped_detector.cfg", &st);
  const ew_sp_info *sp = r->sp;
  char *s = diagram(r);
  svg *g = parse_svg(s);
  double a0, b0, a1, b1;
  panel_map(g, 0, &a0, &b0);
  panel_map(g, 1, &a1, &b1);
  const svg_path *fermi = NULL;
  for (size_t i = 0; i < g->np && !fermi; i++) /* the first: the legend's sample comes later */
    if (!strcmp(g->p[i].stroke, "#0a4f9e") && g->p[i].n == 2) fermi = &g->p[i];
  assert_non_null(fermi);
  TU_NEAR(fermi->y[0], fermi->y[1], 1e-9, "horizontal without a bias");
  TU_NEAR(a0 + b0 * fermi->y[0], sp->fermi_eV, fabs(b0), "Fermi line at E_F (1 unit)");
  const svg_text *ft = find_text(g, "Fermi level ");
  assert_non_null(ft);
  TU_NEAR(atof(ft->s + strlen("Fermi level ")), sp->fermi_eV, 0.5e-4 + 1e-12, "label, 4 decimals");
  /* arrow heads: filled ink triangles, the tip last */
  double tips[2];
  int nt = 0;
  for (size_t i = 0; i < g->np && nt < 2; i++)
    if (!strcmp(g->p[i].fill, "#1a1a1a") && g->p[i].n == 3) tips[nt++] = g->p[i].y[2];
  assert_int_equal(nt, 2);
  size_t e1 = level_index(r, "e1"), e2 = level_index(r, "e2"), hh1 = level_index(r, "hh1");
  /* the PL head is drawn first, in the valence panel; the intersubband one in the other */
  TU_NEAR(a1 + b1 * tips[0], ew_result_state(r, hh1)->energy_eV, fabs(b1), "PL head on hh1");
  TU_NEAR(a0 + b0 * tips[1], ew_result_state(r, e2)->energy_eV, fabs(b0), "ISB head on e2");
  const ew_line *pl = NULL, *isb = NULL;
  size_t isb_i = 0;
  for (size_t i = 0; i < ew_result_line_count(r); i++) {
    const ew_line *ln = ew_result_line(r, i);
    if (ln->kind == EW_LINE_INTERBAND && ln->upper == e1 && ln->lower == hh1) pl = ln;
    if (ln->kind == EW_LINE_INTERSUBBAND && ln->lower == e1 && ln->upper == e2) isb = ln, isb_i = i;
  }
  assert_non_null(pl);
  assert_non_null(isb);
  const svg_text *tl = find_text(g, "e1\xe2\x80\x93hh1 PL ");
  assert_non_null(tl);
  TU_NEAR(atof(tl->s + strlen("e1\xe2\x80\x93hh1 PL ")), HC_EVNM / pl->pl_peak_eV, 0.005 + 1e-9,
          "PL nm (2 decimals)");
  const svg_text *ti = find_text(g, "e1\xe2\x80\x93" "e2 ");
  assert_non_null(ti);
  double um = 0, um_d = 0;
  assert_int_equal(sscanf(ti->s + strlen("e1\xe2\x80\x93" "e2 "), "%lf \xc2\xb5m (depolarised %lf", &um, &um_d), 2);
  TU_NEAR(um, HC_EVNM / isb->energy_eV / 1e3, 0.0005 + 1e-9, "e1-e2 um (3 decimals)");
  TU_NEAR(um_d, HC_EVNM / (isb->energy_eV + sp->depol_eV[isb_i]) / 1e3, 0.0005 + 1e-9, "depolarised");
  assert_true(um_d < um); /* the depolarisation shift is a blue shift */
  svg_free(g);
  free(s);
  /* an undoped stack has no Fermi line */
  ew_stack *st0 = NULL;
  ew_result *r0 = solve_file("examples/detector_well.cfg", &st0);
  char *s0 = diagram(r0);
  assert_null(strstr(s0, "Fermi level"));
  free(s0);
  ew_result_free(r0);
  ew_stack_free(st0);
  ew_result_free(r);
  ew_stack_free(st);
}

static const char wide[] =
    "temperature = 300.0;\nlayers = (\n"
    "  { name = \"lower_barrier\"; material = \"AlGaAs\"; x = 0.30; thickness = 20.0; },\n"
    "  { name = \"well\"; material = \"GaAs\"; thickness = 30.0; },\n"
    "  { name = \"upper_barrier\"; material = \"AlGaAs\"; x = 0.30; thickness = 20.0; }\n);\n";

/* Bold labels in the right-hand column naming band levels (prefix "hh", "lh" or "e"). */
static int column_labels(const svg *g, const char *band, int *maxn) {
  int n = 0;
  *maxn = 0;
  for (size_t i = 0; i < g->nt; i++) {
    const svg_text *t = &g->t[i];
    int k;
    char rest[8];
    if (!t->bold || t->x < 784 || strncmp(t->s, band, strlen(band))) continue;
    if (sscanf(t->s + strlen(band), "%d%7s", &k, rest) != 1) continue;
    n++;
    if (k > *maxn) *maxn = k;
  }
  return n;
}

/* A 30 nm well has 12 hh levels (7 e, 6 lh): by default hh1 … hh8 are drawn and named, and
 * the column says 4 are not; with every level asked for, hh12 is named too.  The hh1 ψ spans
 * more than 10 units in the valence panel (hole wavefunctions visible). */
static void lowest_levels_and_hole_psi(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = tu_solve_text(cat, wide, &st, NULL);
  assert_non_null(r);
  size_t nhh = 0;
  for (size_t i = 0; i < ew_result_state_count(r); i++) nhh += ew_result_state(r, i)->band == EW_BAND_HH;
  assert_true(nhh > EW_PLOT_LEVELS_DEFAULT);
  char *s = diagram(r);
  svg *g = parse_svg(s);
  int maxn, n = column_labels(g, "hh", &maxn);
  assert_int_equal(n, EW_PLOT_LEVELS_DEFAULT);
  assert_int_equal(maxn, EW_PLOT_LEVELS_DEFAULT);
  char note[64];
  snprintf(note, sizeof note, "(+%zu levels not drawn)", nhh - EW_PLOT_LEVELS_DEFAULT);
  assert_non_null(find_text(g, note));
  char col[8];
  hex(ew_level_colour(EW_BAND_HH, 1), col);
  double lo = INFINITY, hi = -INFINITY;
  for (size_t i = 0; i < g->np; i++) {
    const svg_path *p = &g->p[i];
    if (strcmp(p->stroke, col) || fabs(p->width - 1.1) > 1e-9) continue;
    for (size_t k = 0; k < p->n; k++) lo = fmin(lo, p->y[k]), hi = fmax(hi, p->y[k]);
  }
  assert_true(hi - lo > 10); /* ψ of hh1 (and of hh4, hh7: the same tone) */
  svg_free(g);
  free(s);
  /* every level */
  char dir[512], path[600];
  assert_int_equal(tu_mkdtemp("plot17", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/all.svg", dir);
  ew_error err = {0};
  assert_int_equal(ew_result_write_band_diagram_levels(r, path, 0, &err), EW_OK);
  FILE *f = fopen(path, "r");
  static char big[1 << 21];
  size_t len = fread(big, 1, sizeof big - 1, f);
  big[len] = '\0';
  fclose(f);
  g = parse_svg(big);
  n = column_labels(g, "hh", &maxn);
  assert_int_equal((size_t)n, nhh);
  assert_int_equal((size_t)maxn, nhh);
  assert_null(find_text(g, "(+"));
  svg_free(g);
  tu_rm_tree(dir);
  ew_result_free(r);
  ew_stack_free(st);
}

/* The double well's e1/e2 doublet: the two ψ in different tones (ew_level_colour), the names
 * e1 at the left end of its level line and e2 at the right end, each at its level's energy. */
static void doublet_tones_and_names(void **state) {
  (void)state;
  ew_stack *st = NULL;
  ew_result *r = solve_file("examples/double_well.cfg", &st);
  char *s = diagram(r);
  svg *g = parse_svg(s);
  double a0, b0;
  panel_map(g, 0, &a0, &b0);
  char c1[8], c2[8];
  hex(ew_level_colour(EW_BAND_E, 1), c1);
  hex(ew_level_colour(EW_BAND_E, 2), c2);
  assert_string_not_equal(c1, c2);
  const svg_text *t1 = NULL, *t2 = NULL;
  for (size_t i = 0; i < g->nt; i++) {
    const svg_text *t = &g->t[i];
    if (fabs(t->size - 9.5) > 1e-9) continue;
    if (!strcmp(t->s, "e1")) t1 = t;
    if (!strcmp(t->s, "e2")) t2 = t;
  }
  assert_non_null(t1);
  assert_non_null(t2);
  assert_string_equal(t1->fill, c1);
  assert_string_equal(t2->fill, c2);
  assert_int_equal(t1->anchor, 1);  /* left end, right-aligned */
  assert_int_equal(t2->anchor, -1); /* right end */
  /* baseline 3.5 below the level */
  TU_NEAR(a0 + b0 * (t1->y - 3.5), ew_result_state(r, level_index(r, "e1"))->energy_eV, fabs(b0), "e1 name at e1");
  TU_NEAR(a0 + b0 * (t2->y - 3.5), ew_result_state(r, level_index(r, "e2"))->energy_eV, fabs(b0), "e2 name at e2");
  int psi1 = 0, psi2 = 0;
  for (size_t i = 0; i < g->np; i++) {
    if (fabs(g->p[i].width - 1.1) > 1e-9) continue;
    psi1 += !strcmp(g->p[i].stroke, c1);
    psi2 += !strcmp(g->p[i].stroke, c2);
  }
  assert_true(psi1 >= 1 && psi2 >= 1);
  svg_free(g);
  free(s);
  ew_result_free(r);
  ew_stack_free(st);
}

/* ---- sweep charts ---------------------------------------------------------------------- */
static char *slurp_file(const char *path) {
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  static char buf[1 << 21];
  size_t n = fread(buf, 1, sizeof buf - 1, f);
  buf[n] = '\0';
  fclose(f);
  return strdup(buf);
}

/* The legend samples (28-unit lines right of the plot) in order: their colours. */
static size_t legend_colours(const svg *g, char (*out)[8], size_t cap) {
  size_t n = 0;
  for (size_t i = 0; i < g->np && n < cap; i++) {
    const svg_path *p = &g->p[i];
    if (p->n == 2 && fabs(p->x[1] - p->x[0] - 28) < 1e-6 && p->y[0] == p->y[1] && p->x[0] > 500)
      snprintf(out[n++], 8, "%s", p->stroke);
  }
  return n;
}

/* A field sweep of the double well (13 levels): the levels chart breaks its energy axis
 * (two panels, the break note), every curve has its own colour, and every e1 point sits at
 * the CSV's e1 value read through the upper panel's ticks (1 unit); the intersubband chart
 * draws the electron lines only (no hh/lh entry while e1-e2 exists). */
static void sweep_charts(void **state) {
  (void)state;
  char dir[512], path[600], p2[640];
  assert_int_equal(tu_mkdtemp("sweep17", dir, sizeof dir), 0);
  snprintf(path, sizeof path, "%s/s.svg", dir);
  ew_sweep *sw = NULL;
  ew_error err = {0};
  assert_int_equal(ew_sweep_create(&sw, &err), EW_OK);
  assert_int_equal(ew_sweep_vary(sw, "field=0:20:5", &err), EW_OK);
  assert_int_equal(ew_sweep_open(sw, "examples/double_well.cfg", cat, NULL, &err), EW_OK);
  ew_sweep_options o;
  ew_sweep_options_default(&o);
  o.keep_table = 1;
  char *csv = NULL;
  size_t len = 0;
  FILE *m = open_memstream(&csv, &len);
  assert_int_equal(ew_sweep_compute(sw, &o, m, NULL, &err), EW_OK);
  fclose(m);
  int written[EW_SWEEP_PLOT_FILES];
  assert_int_equal(ew_sweep_stage_plots(sw, path, written, &err), EW_OK);
  assert_int_equal(ew_sweep_commit_plots(sw, 1, &err), EW_OK);
  assert_true(written[0] && written[2]);
  char *s = slurp_file(path);
  svg *g = parse_svg(s);
  assert_non_null(find_text(g, "axis broken: "));
  char col[40][8];
  size_t nc = legend_colours(g, col, 40);
  assert_true(nc >= 10);
  for (size_t a = 0; a < nc; a++)
    for (size_t b = a + 1; b < nc; b++) assert_string_not_equal(col[a], col[b]);
  /* e1 column: the CSV's second column; e1 is the first series (first legend colour) */
  double a0, b0;
  panel_map_at(g, 76.0, 0, &a0, &b0); /* line chart: labels at x = 84 − 8 */
  const svg_path *e1 = NULL;
  for (size_t i = 0; i < g->np && !e1; i++)
    if (!strcmp(g->p[i].stroke, col[0]) && g->p[i].n > 2) e1 = &g->p[i];
  assert_non_null(e1);
  const char *row = strchr(csv, '\n') + 1;
  size_t k = 0;
  for (; *row && k < 5; k++, row = strchr(row, '\n') + 1) {
    char *end;
    strtod(row, &end);
    double v = strtod(end + 1, NULL);
    int hit = 0;
    for (size_t q = 0; q < e1->n; q++) hit |= fabs(a0 + b0 * e1->y[q] - v) <= fabs(b0);
    assert_true(hit);
  }
  assert_int_equal(k, 5);
  svg_free(g);
  free(s);
  snprintf(p2, sizeof p2, "%s/s-intersubband.svg", dir);
  s = slurp_file(p2);
  g = parse_svg(s);
  assert_non_null(find_text(g, "e1-e2"));
  for (size_t i = 0; i < g->nt; i++)
    assert_false(g->t[i].x > 500 && (!strncmp(g->t[i].s, "hh", 2) || !strncmp(g->t[i].s, "lh", 2)));
  svg_free(g);
  free(s);
  free(csv);
  ew_sweep_free(sw);
  tu_rm_tree(dir);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(fermi_and_arrows),
      cmocka_unit_test(lowest_levels_and_hole_psi),
      cmocka_unit_test(doublet_tones_and_names),
      cmocka_unit_test(sweep_charts),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
