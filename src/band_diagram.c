/* band_diagram.c — the band diagram (see plot.h for what it shows and band_diagram.h for
 * the call): layout first (layer-name rows, panel heights and energy ranges), then each
 * part drawn by its own function in a fixed order — layers, band edges, levels with their
 * wavefunctions, energy axes, the axis break, the z axis, the label columns, the legend and
 * notes.  Layout uses estimated text widths only, so SVG and PNG show the same picture. */
#include "band_diagram.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "grid.h"
#include "plot.h"
#include "result.h" /* the Schrödinger–Poisson block: the Fermi level */

/* Layout constants (picture units). */
enum { BD_LEFT = 86, BD_LABEL_COL = 196, BD_GAP = 40, BD_NAME_ROWS = 4 };
#define BD_DRAW_PSI_MAX 40 /* beyond this many levels a panel shows the lines only */
#define BD_LABEL_STEP 13.5 /* label rows in the right-hand columns */
#define BD_TAG_MAX 10      /* beyond this many levels a panel names them in the column only */

typedef struct {
  double top, h;     /* panel rectangle (vertical part; x is shared) */
  double e_lo, e_hi; /* energies at the bottom and top edges */
} panel;

static double panel_y(const panel *p, double e) {
  return p->top + (p->e_hi - e) / (p->e_hi - p->e_lo) * p->h;
}

/* Fit [lo, hi] into panel p leaving pad_top / pad_bot units free at the edges. */
static void panel_fit(panel *p, double lo, double hi, double pad_top, double pad_bot) {
  if (!(hi > lo)) {
    double c = lo, d = fmax(0.05, 0.05 * fabs(c));
    lo = c - d;
    hi = c + d;
  }
  double usable = p->h - pad_top - pad_bot;
  if (usable < 0.3 * p->h) usable = 0.3 * p->h;
  double per = (hi - lo) / usable; /* eV per unit */
  p->e_hi = hi + pad_top * per;
  p->e_lo = lo - pad_bot * per;
}

/* Everything the drawing steps share. */
typedef struct {
  const ew_result *r;
  const ew_stack *st;
  ew_chart_scratch *sc;
  size_t n;                         /* nodes */
  const double *z, *edge[EW_BAND_COUNT];
  double W, H, L, R, Lz;            /* picture, plot area's x range, stack length */
  int *row_of;                      /* layer-name row per layer, −1: left out */
  double *cx_of;                    /* layer-name centre per layer */
  size_t omitted;                   /* layer names left out */
  double names_base, top, ph;       /* name row next to the panels, panels' top, height */
  int any_flag;                     /* a level failed its residual check */
  size_t cnt[2];                    /* levels drawn per panel (0 conduction, 1 valence) */
  size_t all[2];                    /* levels per panel, drawn or not */
  int max_lv;                       /* levels drawn per band (<= 0: all) */
  int fermi_q;                      /* panel of the Fermi level (doped stacks), −1: none */
  panel pan[2];
} band;

/* The lowest max_lv levels of each band are drawn. */
static int shown_n(int max_lv, const ew_state *s) { return max_lv <= 0 || s->n <= max_lv; }
static int shown(const band *b, size_t s) { return shown_n(b->max_lv, &b->r->states[s]); }

uint32_t ew_level_colour(ew_band band, int n) {
  /* three tones of each band's hue (chart.h's band colour first), distinct in grey too */
  static const uint32_t tone[EW_BAND_COUNT][3] = {{0x1b7a3du, 0x0b5563u, 0x6b8f12u},
                                                  {0x6a2c91u, 0xa3286fu, 0x3b3f9cu},
                                                  {0xc25a00u, 0x8f6a00u, 0xd6382au}};
  int b = band >= 0 && band < EW_BAND_COUNT ? (int)band : 0;
  return tone[b][(n > 0 ? n - 1 : 0) % 3];
}

static double x_of(const band *b, double z_nm) { return b->L + z_nm / b->Lz * (b->R - b->L); }

static const char *base_name(const char *path) {
  const char *s = strrchr(path, '/');
  return s ? s + 1 : path;
}

/* Layer names in rows above the panels: a name goes into the first row where it does not
 * touch its neighbours, so thin layers keep readable names.  −1 when out of memory. */
static int layout_names(band *b) {
  const ew_stack *st = b->st;
  double row_end[BD_NAME_ROWS];
  int nrows = 1;
  for (int k = 0; k < BD_NAME_ROWS; k++) row_end[k] = -1e9;
  b->row_of = calloc(st->n_layers, sizeof *b->row_of);
  b->cx_of = calloc(st->n_layers, sizeof *b->cx_of);
  if (!b->row_of || !b->cx_of) return -1;
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double cx = x_of(b, ly->z_start_nm + ly->thickness_nm / 2);
    char nm[256];
    ew_text_clean(ly->name, nm, sizeof nm);
    double w = ew_text_width(nm, 11);
    double a = cx - w / 2;
    if (a < 4) a = 4;
    if (a + w > b->W - 4) a = b->W - 4 - w;
    int row = -1;
    for (int q = 0; q < BD_NAME_ROWS && row < 0; q++)
      if (a >= row_end[q] + 8) row = q;
    b->row_of[k] = row; /* −1: no free row, the name is left out rather than overprinted */
    b->cx_of[k] = a + w / 2;
    if (row < 0) {
      b->omitted++;
      continue;
    }
    row_end[row] = a + w;
    if (row + 1 > nrows) nrows = row + 1;
  }
  b->names_base = 52 + 14.0 * (nrows - 1); /* baseline of the row next to the panels */
  return 0;
}

/* Panel heights and energy ranges: the conduction panel over Ec and the electron levels,
 * the valence panel over both hole edges and the hole levels. */
static void layout_panels(band *b) {
  const ew_result *r = b->r;
  for (size_t s = 0; s < r->n_states; s++) {
    b->any_flag |= r->states[s].flagged;
    b->all[r->states[s].band != EW_BAND_E]++;
    if (shown(b, s)) b->cnt[r->states[s].band != EW_BAND_E]++;
  }
  b->top = b->names_base + 12;
  /* below the panels: z ticks and label, one legend row (two with the Fermi level), two
     notes (one more when a level failed its residual check, one when levels are left out) */
  const double bottom = b->H - 124 - (b->any_flag ? 15 : 0) - (r->sp ? 20 : 0) -
                        (b->all[0] + b->all[1] > b->cnt[0] + b->cnt[1] ? 15 : 0);
  b->ph = bottom - b->top - BD_GAP;
  const double *ec = b->edge[EW_BAND_E], *ehh = b->edge[EW_BAND_HH], *elh = b->edge[EW_BAND_LH];
  double c_lo = INFINITY, c_hi = -INFINITY, v_lo = INFINITY, v_hi = -INFINITY;
  for (size_t i = 0; i < b->n; i++) {
    c_lo = fmin(c_lo, ec[i]), c_hi = fmax(c_hi, ec[i]);
    v_lo = fmin(v_lo, fmin(ehh[i], elh[i])), v_hi = fmax(v_hi, fmax(ehh[i], elh[i]));
  }
  for (size_t s = 0; s < r->n_states; s++) {
    if (!shown(b, s)) continue;
    double e = r->states[s].energy_eV;
    if (r->states[s].band == EW_BAND_E) c_lo = fmin(c_lo, e), c_hi = fmax(c_hi, e);
    else v_lo = fmin(v_lo, e), v_hi = fmax(v_hi, e);
  }
  /* the Fermi level of a doped stack goes into the panel of the band it is nearer */
  b->fermi_q = -1;
  if (r->sp && isfinite(r->sp->fermi_eV)) {
    double ef[2] = {r->sp->fermi_eV, r->sp->fermi_last_eV};
    b->fermi_q = ef[0] > 0.5 * (c_lo + v_hi) ? 0 : 1;
    for (int k = 0; k < 2; k++) {
      if (!isfinite(ef[k])) continue;
      if (b->fermi_q == 0) c_lo = fmin(c_lo, ef[k]), c_hi = fmax(c_hi, ef[k]);
      else v_lo = fmin(v_lo, ef[k]), v_hi = fmax(v_hi, ef[k]);
    }
  }
  /* heights: partly by energy span (a similar eV per unit in both), mostly by how many
     levels each must show (two electrons against nine holes need room for the holes);
     neither panel gets less than 32 % so a shallow band stays readable */
  double span_c = c_hi - c_lo, span_v = v_hi - v_lo;
  double frac_span = span_c + span_v > 0 ? span_c / (span_c + span_v) : 0.5;
  double frac_lev = (b->cnt[0] + 1.0) / (b->cnt[0] + b->cnt[1] + 2.0);
  double frac = fmin(0.68, fmax(0.32, 0.4 * frac_span + 0.6 * frac_lev));
  panel pc = {b->top, b->ph * frac, 0, 0};
  panel pv = {b->top + b->ph * frac + BD_GAP, b->ph * (1 - frac), 0, 0};
  /* room for the panel caption at the top; electrons' ψ rises above their level, holes'
     ψ hangs below it, so the valence panel keeps more room at its bottom */
  panel_fit(&pc, c_lo, c_hi, 30, 12);
  panel_fit(&pv, v_lo, v_hi, 30, 34);
  b->pan[0] = pc;
  b->pan[1] = pv;
}

static void draw_title(ew_canvas *cv, const band *b) {
  char buf[1200];
  ew_font f = ew_font_make(15, EW_ANCHOR_START, EW_COL_INK);
  f.bold = 1;
  if (b->st->path[0])
    snprintf(buf, sizeof buf, "Band diagram \xe2\x80\x94 %s, T = %g K", base_name(b->st->path),
             b->st->temperature_K);
  else snprintf(buf, sizeof buf, "Band diagram, T = %g K", b->st->temperature_K);
  ew_cv_text(cv, b->L, 26, buf, &f);
}

/* Layer columns: alternate light shading and dotted interfaces through both panels, the
 * names above (lifted names point down to their layer), and a note on names left out. */
static void draw_layers(ew_canvas *cv, const band *b) {
  const ew_stack *st = b->st;
  ew_font f_layer = ew_font_make(11, EW_ANCHOR_MIDDLE, 0x333333u);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double x0 = x_of(b, ly->z_start_nm), x1 = x_of(b, ly->z_start_nm + ly->thickness_nm);
    for (int q = 0; q < 2; q++) {
      const panel *p = &b->pan[q];
      if (k % 2 == 1) ew_cv_rect(cv, x0, p->top, x1 - x0, p->h, EW_COL_SHADE, 1, NULL);
      if (k > 0) {
        ew_pen dot = ew_pen_make(EW_COL_FAINT, 0.8, EW_DASH_SHORT);
        ew_cv_line(cv, x0, p->top, x0, p->top + p->h, &dot);
      }
    }
    if (b->row_of[k] < 0) continue;
    char nm[256];
    ew_text_clean(ly->name, nm, sizeof nm);
    double y = b->names_base - 14.0 * b->row_of[k];
    ew_cv_text(cv, b->cx_of[k], y, nm, &f_layer);
    double lx = x_of(b, ly->z_start_nm + ly->thickness_nm / 2);
    if (b->row_of[k] > 0 || fabs(lx - b->cx_of[k]) > 1) {
      ew_pen lead = ew_pen_make(EW_COL_FAINT, 0.7, EW_DASH_NONE);
      ew_cv_line(cv, b->cx_of[k], y + 3, lx, b->top - 1, &lead);
    }
  }
  if (b->omitted) {
    ew_font fo = ew_font_make(10.5, EW_ANCHOR_END, EW_COL_MUTED);
    char buf[160];
    snprintf(buf, sizeof buf, "%zu of %zu layer names left out (no room)", b->omitted,
             st->n_layers);
    ew_cv_text(cv, b->W - 12, 26, buf, &fo);
  }
}

/* Band edges from the node profile (it carries whatever shape the edges have), extended
 * flat to both frame edges. */
static void draw_edges(ew_canvas *cv, const band *b) {
  ew_chart_scratch *sc = b->sc;
  for (int e = 0; e < EW_BAND_COUNT; e++) {
    const panel *p = &b->pan[e != EW_BAND_E];
    const double *edge = b->edge[e];
    size_t m = 0;
    sc->x[m] = b->L, sc->y[m] = panel_y(p, edge[0]), m++;
    for (size_t i = 0; i < b->n; i++, m++) {
      sc->x[m] = x_of(b, b->z[i]);
      sc->y[m] = panel_y(p, edge[i]);
    }
    sc->x[m] = b->R, sc->y[m] = panel_y(p, edge[b->n - 1]), m++;
    size_t k = ew_chart_decimate(m, sc->x, sc->y, sc->dx, sc->dy);
    ew_pen pe = e == EW_BAND_LH ? ew_pen_make(ew_band_colour[EW_BAND_LH], 1.5, EW_DASH_LONG)
                                : ew_pen_make(EW_COL_INK, 2.0, EW_DASH_NONE);
    ew_cv_path(cv, k, sc->dx, sc->dy, &pe);
  }
}

/* ψ of one level about its energy ye, away from the band edge, clipped to the panel, with a
 * light fill between curve and level (lighter still where many levels overlap, so
 * crossings stay legible); amp is signed.  Nodes a..e hold |ψ|² above 1e-4 of its peak. */
static void draw_wave(ew_canvas *cv, const band *b, int q, const double *psi, size_t a,
                      size_t e, double ye, double amp, double psimax, uint32_t col) {
  ew_chart_scratch *sc = b->sc;
  const panel *p = &b->pan[q];
  size_t m = 0;
  for (size_t i = a; i <= e; i++, m++) {
    sc->x[m] = x_of(b, b->z[i]);
    double y = ye + amp * psi[i] / psimax;
    sc->y[m] = fmin(p->top + p->h, fmax(p->top, y));
  }
  size_t k = ew_chart_decimate(m, sc->x, sc->y, sc->dx, sc->dy);
  memcpy(sc->fx, sc->dx, k * sizeof *sc->fx);
  memcpy(sc->fy, sc->dy, k * sizeof *sc->fy);
  sc->fx[k] = sc->dx[k - 1], sc->fy[k] = ye;
  sc->fx[k + 1] = sc->dx[0], sc->fy[k + 1] = ye;
  ew_cv_fill(cv, k + 2, sc->fx, sc->fy, col, b->cnt[q] > 6 ? 0.07 : 0.12);
  ew_pen pw = ew_pen_make(col, 1.1, EW_DASH_NONE);
  ew_cv_path(cv, k, sc->dx, sc->dy, &pw);
}

/* One level: its wavefunction (when the panel is not too crowded), the level line where
 * |ψ|² exceeds EW_PLOT_LEVEL_FRACTION of its peak, and a faint guide to the label column. */
static void draw_level(ew_canvas *cv, const band *b, size_t s, const double amp[2],
                       const double psimax[2]) {
  const ew_state *qs = &b->r->states[s];
  int q = qs->band != EW_BAND_E;
  const double *psi = ew_result_wavefunction(b->r, s);
  const size_t n = b->n;
  double peak = 0;
  for (size_t i = 0; i < n; i++) peak = fmax(peak, psi[i] * psi[i]);
  if (!(peak > 0)) return;
  size_t a = n, e = 0, a4 = n, e4 = 0;
  for (size_t i = 0; i < n; i++) {
    double p2 = psi[i] * psi[i];
    if (p2 >= EW_PLOT_LEVEL_FRACTION * peak) {
      if (a == n) a = i;
      e = i;
    }
    if (p2 >= 1e-4 * peak) {
      if (a4 == n) a4 = i;
      e4 = i;
    }
  }
  double ye = panel_y(&b->pan[q], qs->energy_eV);
  double sign = qs->band == EW_BAND_E ? -1.0 : 1.0; /* away from the band edge */
  uint32_t col = ew_level_colour(qs->band, qs->n);
  if (b->cnt[q] <= (size_t)BD_DRAW_PSI_MAX && psimax[q] > 0)
    draw_wave(cv, b, q, psi, a4, e4, ye, sign * amp[q], psimax[q], col);
  double x0 = x_of(b, b->z[a]), x1 = x_of(b, b->z[e]);
  ew_pen pl = ew_pen_make(col, 1.8, EW_DASH_NONE);
  ew_cv_line(cv, x0, ye, x1, ye, &pl);
  /* the level's name at the left end of its line: with ψ in the level's own tone, the
     lobes of a doublet (a double well's e1, e2) say which level they belong to */
  /* odd levels name it at the left end, even ones at the right, so a doublet's two
     names never overprint */
  double gx = x1 + 2;
  if (b->cnt[q] <= BD_TAG_MAX) {
    int left = qs->n % 2 == 1;
    ew_font ft = ew_font_make(9.5, left ? EW_ANCHOR_END : EW_ANCHOR_START, col);
    ew_cv_text(cv, left ? x0 - 3 : x1 + 3, ye + 3.5, qs->label, &ft);
    if (!left) gx = x1 + 6 + ew_text_width(qs->label, 9.5);
  }
  ew_pen guide = ew_pen_make(col, 0.8, EW_DASH_DOT);
  guide.opacity = 0.7;
  if (gx < b->R - 2) ew_cv_line(cv, gx, ye, b->R, ye, &guide);
}

/* The levels: the wavefunction amplitude is one scale per panel, so relative sizes mean
 * something; its height is limited by how many levels share the panel. */
static void draw_levels(ew_canvas *cv, const band *b) {
  const ew_result *r = b->r;
  double psimax[2] = {0, 0}, amp[2];
  for (size_t s = 0; s < r->n_states; s++) {
    if (!shown(b, s)) continue;
    int q = r->states[s].band != EW_BAND_E;
    const double *psi = ew_result_wavefunction(r, s);
    for (size_t i = 0; i < b->n; i++) psimax[q] = fmax(psimax[q], fabs(psi[i]));
  }
  for (int q = 0; q < 2; q++) {
    /* holes are heavy: their ψ are narrow and their levels close, so the valence panel
       keeps at least 14 units of amplitude (the hole lobes stay visible) */
    double per = b->pan[q].h / (double)(b->cnt[q] + 1);
    amp[q] = fmin(0.16 * b->pan[q].h, fmax(q ? 14.0 : 10.0, 0.8 * per));
  }
  for (size_t s = 0; s < r->n_states; s++)
    if (shown(b, s)) draw_level(cv, b, s, amp, psimax);
}

/* Text on a white ground (it stands over lines: the Fermi level, ψ). */
static void text_on_white(ew_canvas *cv, double x, double y, const char *t, const ew_font *ft) {
  double w = ew_text_width(t, ft->size) * (ft->bold ? 1.08 : 1.0) + 4;
  double x0 = ft->anchor == EW_ANCHOR_START ? x - 2 : ft->anchor == EW_ANCHOR_END ? x - w + 2 : x - w / 2;
  ew_cv_rect(cv, x0, y - ft->size, w, ft->size + 3.5, 0xffffffu, 0.85, NULL);
  ew_cv_text(cv, x, y, t, ft);
}

#define BD_COL_FERMI 0x0a4f9eu /* a blue no band uses */
#define BD_COL_ARROW 0x1a1a1au

/* The Fermi level of a doped stack: a dashed line across its panel (with a bias, the first
 * face's level over the first half and the last face's over the second), labelled. */
static void draw_fermi(ew_canvas *cv, const band *b) {
  if (b->fermi_q < 0) return;
  const ew_sp_info *sp = b->r->sp;
  const panel *p = &b->pan[b->fermi_q];
  int two = isfinite(sp->fermi_last_eV) && b->st->bias_given;
  ew_pen pf = ew_pen_make(BD_COL_FERMI, 1.4, EW_DASH_SHORT);
  double xm = two ? (b->L + b->R) / 2 : b->R;
  double y0 = panel_y(p, sp->fermi_eV), y1 = two ? panel_y(p, sp->fermi_last_eV) : y0;
  ew_cv_line(cv, b->L, y0, xm, y0, &pf);
  if (two) ew_cv_line(cv, xm, y1, b->R, y1, &pf);
  ew_font ft = ew_font_make(10.5, EW_ANCHOR_START, BD_COL_FERMI);
  char e[48], buf[96];
  ew_chart_fmt_num(e, sizeof e, sp->fermi_eV, 4);
  snprintf(buf, sizeof buf, "Fermi level %s eV", e);
  text_on_white(cv, b->L + 6, y0 - 4, buf, &ft);
  if (two) {
    ew_chart_fmt_num(e, sizeof e, sp->fermi_last_eV, 4);
    snprintf(buf, sizeof buf, "Fermi level %s eV", e);
    ft.anchor = EW_ANCHOR_END;
    text_on_white(cv, b->R - 6, y1 - 4, buf, &ft);
  }
}

size_t ew_band_diagram_pl_line(const ew_result *r, int levels_per_band) {
  size_t best = SIZE_MAX;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERBAND || !ln->allowed) continue;
    if (!shown_n(levels_per_band, &r->states[ln->upper]) ||
        !shown_n(levels_per_band, &r->states[ln->lower]))
      continue;
    double e = ln->pl_peak_eV > 0 ? ln->pl_peak_eV : ln->energy_eV;
    const ew_line *bl = best == SIZE_MAX ? NULL : &r->lines[best];
    if (!bl || e < (bl->pl_peak_eV > 0 ? bl->pl_peak_eV : bl->energy_eV)) best = i;
  }
  return best;
}

size_t ew_band_diagram_isb_line(const ew_result *r, int levels_per_band) {
  size_t best = SIZE_MAX;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    const ew_state *lo = &r->states[ln->lower], *up = &r->states[ln->upper];
    if (ln->kind != EW_LINE_INTERSUBBAND || lo->band != EW_BAND_E || lo->n != 1) continue;
    if (!shown_n(levels_per_band, up) || !(ln->oscillator_strength > 0)) continue;
    if (best == SIZE_MAX || ln->oscillator_strength > r->lines[best].oscillator_strength) best = i;
  }
  return best;
}

/* ⟨z⟩ of state s (nm): where its arrow stands. */
static double mean_z(const band *b, size_t s) {
  const double *psi = ew_result_wavefunction(b->r, s);
  double num = 0, den = 0;
  for (size_t i = 0; i + 1 < b->n; i++) {
    double w = 0.5 * (psi[i] * psi[i] + psi[i + 1] * psi[i + 1]) * (b->z[i + 1] - b->z[i]);
    num += w * 0.5 * (b->z[i] + b->z[i + 1]);
    den += w;
  }
  return den > 0 ? num / den : b->Lz / 2;
}

/* A vertical arrow segment from y0 to y1 at x, with a head at y1 when head is set. */
static void arrow(ew_canvas *cv, double x, double y0, double y1, int head) {
  ew_pen pa = ew_pen_make(BD_COL_ARROW, 1.5, EW_DASH_NONE);
  double d = y1 > y0 ? 1 : -1;
  ew_cv_line(cv, x, y0, x, head ? y1 - d * 7 : y1, &pa);
  if (!head) return;
  double xs[3] = {x - 4, x + 4, x}, ys[3] = {y1 - d * 8, y1 - d * 8, y1};
  ew_cv_fill(cv, 3, xs, ys, BD_COL_ARROW, 1);
}

/* The arrows: the PL line from the electron level down across the axis break to the hole
 * level, labelled in the break with its PL peak in nm; the strongest e1 intersubband line
 * up from e1, labelled with its wavelength in µm (and the depolarised one of a doped stack).
 * Returns the far end of the PL label (NaN without a PL arrow) for the break message to
 * stay clear of it. */
static double draw_arrows(ew_canvas *cv, const band *b, double *arrow_x) {
  const ew_result *r = b->r;
  size_t pl = ew_band_diagram_pl_line(r, b->max_lv), isb = ew_band_diagram_isb_line(r, b->max_lv);
  ew_font ft = ew_font_make(10.5, EW_ANCHOR_START, BD_COL_ARROW);
  ft.bold = 1;
  char buf[160];
  double xa = NAN;
  if (pl != SIZE_MAX) {
    const ew_line *ln = &r->lines[pl];
    const panel *pc = &b->pan[0], *pv = &b->pan[1];
    xa = x_of(b, mean_z(b, ln->upper)) - 7;
    *arrow_x = xa;
    double ye = panel_y(pc, r->states[ln->upper].energy_eV), yh = panel_y(pv, r->states[ln->lower].energy_eV);
    arrow(cv, xa, ye, pc->top + pc->h, 0);
    arrow(cv, xa, pv->top, yh, 1);
    double nm = ew_line_pl_peak_nm(ln);
    if (!isfinite(nm)) nm = ln->wavelength_nm;
    snprintf(buf, sizeof buf, "%s\xe2\x80\x93%s PL %.2f nm", r->states[ln->upper].label,
             r->states[ln->lower].label, nm);
    double w = ew_text_width(buf, 10.5);
    ft.anchor = xa + 8 + w < b->R ? EW_ANCHOR_START : EW_ANCHOR_END;
    ew_cv_text(cv, ft.anchor == EW_ANCHOR_START ? xa + 8 : xa - 8, pc->top + pc->h + BD_GAP / 2 + 4,
               buf, &ft);
    /* the break message goes where the label is not: return the label's far side */
    xa = ft.anchor == EW_ANCHOR_START ? xa + 8 + w * 1.08 : xa - 8 - w * 1.08;
  }
  if (isb != SIZE_MAX) {
    const ew_line *ln = &r->lines[isb];
    const panel *pc = &b->pan[0];
    double x = x_of(b, mean_z(b, ln->lower)) + 7;
    double y0 = panel_y(pc, r->states[ln->lower].energy_eV), y1 = panel_y(pc, r->states[ln->upper].energy_eV);
    arrow(cv, x, y0, y1, 1);
    int n = snprintf(buf, sizeof buf, "%s\xe2\x80\x93%s %.3f \xc2\xb5m", r->states[ln->lower].label,
                     r->states[ln->upper].label, ln->wavelength_nm / 1e3);
    if (r->sp && isfinite(r->sp->depol_eV[isb]) && r->sp->depol_eV[isb] != 0 && n > 0 &&
        (size_t)n < sizeof buf)
      snprintf(buf + n, sizeof buf - (size_t)n, " (depolarised %.3f \xc2\xb5m)",
               EW_HC_EVNM / (ln->energy_eV + r->sp->depol_eV[isb]) / 1e3);
    ft.anchor = EW_ANCHOR_START;
    text_on_white(cv, x + 6, 0.5 * (y0 + y1) + 4, buf, &ft);
  }
  return xa;
}

/* Frames, energy ticks on both sides, the panel captions and the energy axis label. */
static void draw_energy_axes(ew_canvas *cv, const band *b) {
  ew_pen frame = ew_pen_make(EW_COL_FRAME, 1, EW_DASH_NONE), tick = frame;
  ew_font f_tick = ew_font_make(11, EW_ANCHOR_END, EW_COL_INK);
  const double L = b->L, R = b->R;
  for (int q = 0; q < 2; q++) {
    const panel *p = &b->pan[q];
    ew_cv_rect(cv, L, p->top, R - L, p->h, 0, 0, &frame);
    ew_ticks t = ew_chart_ticks(p->e_lo, p->e_hi, (int)(p->h / 42) + 1);
    for (int i = 0; i < t.count; i++) {
      double e = t.first + i * t.step, y = panel_y(p, e);
      if (y < p->top - 0.5 || y > p->top + p->h + 0.5) continue;
      ew_cv_line(cv, L - 5, y, L, y, &tick);
      ew_cv_line(cv, R, y, R + 4, y, &tick);
      char lab[64];
      ew_chart_fmt_tick(lab, sizeof lab, e, t.step, t.dec);
      ew_cv_text(cv, L - 8, y + 4, lab, &f_tick);
    }
    ew_font cap = ew_font_make(11.5, EW_ANCHOR_START, EW_COL_MUTED);
    cap.bold = 1;
    ew_cv_text(cv, L + 8, p->top + 17, q == 0 ? "conduction band" : "valence band", &cap);
  }
  ew_font f_ylab = ew_font_make(12, EW_ANCHOR_MIDDLE, EW_COL_INK);
  f_ylab.vertical = 1;
  ew_cv_text(cv, 24, b->top + b->ph / 2, "energy (eV, absolute scale)", &f_ylab);
}

/* The broken energy axis: slanted marks on both axes and what was left out. */
static void draw_axis_break(ew_canvas *cv, const band *b, double arrow_x, double label_end) {
  const panel *pc = &b->pan[0], *pv = &b->pan[1];
  double yb = pc->top + pc->h, yt = pv->top;
  ew_pen brk = ew_pen_make(EW_COL_FRAME, 1.2, EW_DASH_NONE);
  for (int side = 0; side < 2; side++) {
    double xa = side ? b->R : b->L;
    ew_cv_line(cv, xa - 6, yb + 9, xa + 6, yb + 3, &brk);
    ew_cv_line(cv, xa - 6, yt - 3, xa + 6, yt - 9, &brk);
  }
  char gap[64], msg[160];
  ew_chart_fmt_num(gap, sizeof gap, pc->e_lo - pv->e_hi, 3);
  snprintf(msg, sizeof msg, "energy axis broken: %s eV between the panels left out", gap);
  /* beside the PL arrow's label (which ends at label_end), on the side with room; the
     short form when neither side has room for the long one */
  ew_font fi = ew_font_make(10.5, EW_ANCHOR_MIDDLE, EW_COL_MUTED);
  fi.italic = 1;
  double x = (b->L + b->R) / 2, w = ew_text_width(msg, 10.5) + 20;
  if (isfinite(label_end)) {
    double lo = fmin(label_end, arrow_x), hi = fmax(label_end, arrow_x);
    if (b->R - hi > w) fi.anchor = EW_ANCHOR_END, x = b->R - 10;
    else if (lo - b->L > w) fi.anchor = EW_ANCHOR_START, x = b->L + 10;
    else {
      snprintf(msg, sizeof msg, "axis broken: %s eV left out", gap);
      w = ew_text_width(msg, 10.5) + 20;
      fi.anchor = b->R - hi > lo - b->L ? EW_ANCHOR_END : EW_ANCHOR_START;
      x = fi.anchor == EW_ANCHOR_END ? b->R - 10 : b->L + 10;
      if (fmax(b->R - hi, lo - b->L) < w) return;
    }
  }
  ew_cv_text(cv, x, (yb + yt) / 2 + 4, msg, &fi);
}

/* The shared z axis: ticks on both panels, labels under the lower one. */
static void draw_z_axis(ew_canvas *cv, const band *b) {
  ew_ticks t = ew_chart_ticks(0, b->Lz, 8);
  ew_font fz = ew_font_make(11, EW_ANCHOR_MIDDLE, EW_COL_INK);
  ew_pen tick = ew_pen_make(EW_COL_FRAME, 1, EW_DASH_NONE);
  const panel *pv = &b->pan[1];
  for (int i = 0; i < t.count; i++) {
    double zz = t.first + i * t.step, x = x_of(b, zz);
    for (int q = 0; q < 2; q++) {
      const panel *p = &b->pan[q];
      ew_cv_line(cv, x, p->top + p->h, x, p->top + p->h - 5, &tick);
    }
    ew_cv_line(cv, x, pv->top + pv->h, x, pv->top + pv->h + 5, &tick);
    char lab[64];
    ew_chart_fmt_tick(lab, sizeof lab, zz, t.step, t.dec);
    ew_cv_text(cv, x, pv->top + pv->h + 18, lab, &fz);
  }
  ew_font f_axis = ew_font_make(12, EW_ANCHOR_MIDDLE, EW_COL_INK);
  ew_cv_text(cv, (b->L + b->R) / 2, pv->top + pv->h + 36,
             "position z along the growth direction (nm)", &f_axis);
}

/* A label to place in a column: wanted position and final position. */
typedef struct {
  double want, at;
  size_t state;
} slot;

static int slot_cmp(const void *a, const void *b) {
  const slot *x = a, *y = b;
  return (x->want > y->want) - (x->want < y->want);
}

/* Spread labels (sorted by want) at least d apart inside [lo, hi]: push down, then up. */
static void spread(slot *s, size_t n, double d, double lo, double hi) {
  for (size_t i = 0; i < n; i++) {
    s[i].at = fmax(s[i].want, lo);
    if (i && s[i].at < s[i - 1].at + d) s[i].at = s[i - 1].at + d;
  }
  for (size_t i = n; i-- > 0;) {
    if (s[i].at > hi) s[i].at = hi;
    if (i + 1 < n && s[i].at > s[i + 1].at - d) s[i].at = s[i + 1].at - d;
  }
}

/* The levels of panel q into sl (m of them); when more than fit, the lowest levels of each
 * band (n = 1, 2, … in turn) are moved to the front.  Returns how many are shown, in
 * position order. */
static size_t choose_labels(const band *b, int q, slot *sl, size_t *m_out) {
  const ew_result *r = b->r;
  const panel *p = &b->pan[q];
  size_t m = 0;
  for (size_t s = 0; s < r->n_states; s++) {
    if ((r->states[s].band != EW_BAND_E) != q || !shown(b, s)) continue;
    sl[m].want = panel_y(p, r->states[s].energy_eV);
    sl[m].state = s;
    m++;
  }
  size_t cap = (size_t)((p->h - 8) / BD_LABEL_STEP);
  size_t shown = m;
  if (m > cap) { /* too many to name: keep the lowest levels of each band */
    shown = cap > 1 ? cap - 1 : 0;
    size_t k = 0;
    for (int nn = 1; k < shown; nn++)
      for (size_t j = k; j < m && k < shown; j++)
        if (r->states[sl[j].state].n == nn) {
          slot t = sl[k];
          sl[k] = sl[j];
          sl[j] = t;
          k++;
        }
  }
  qsort(sl, shown, sizeof *sl, slot_cmp);
  spread(sl, shown, BD_LABEL_STEP, p->top + 8, p->top + p->h - 6 - (shown < m ? BD_LABEL_STEP : 0));
  *m_out = m;
  return shown;
}

/* One label column: name (bold, band colour) and energy, joined to the level by a short
 * elbow.  Energies start in one column after the widest name (SVG collapses runs of
 * spaces, so the gap is a position, not padding). */
static void draw_label_column(ew_canvas *cv, const band *b, int q, slot *sl) {
  const ew_result *r = b->r;
  const panel *p = &b->pan[q];
  const double R = b->R;
  ew_font fl = ew_font_make(11, EW_ANCHOR_START, EW_COL_INK);
  ew_font f_small = ew_font_make(10.5, EW_ANCHOR_START, EW_COL_MUTED);
  size_t m;
  size_t shown = choose_labels(b, q, sl, &m);
  double namew = 0;
  for (size_t j = 0; j < shown; j++) {
    const ew_state *qs = &r->states[sl[j].state];
    namew = fmax(namew, ew_text_width(qs->label, 11) * 1.08 + (qs->flagged ? 7 : 0));
  }
  for (size_t j = 0; j < shown; j++) {
    const ew_state *qs = &r->states[sl[j].state];
    ew_pen elbow = ew_pen_make(ew_level_colour(qs->band, qs->n), 0.9, EW_DASH_NONE);
    double xs[3] = {R, R + 9, R + 21}, ys[3] = {sl[j].want, sl[j].want, sl[j].at};
    ew_cv_path(cv, 3, xs, ys, &elbow);
    char e[48], lab[80];
    ew_chart_fmt_num(e, sizeof e, qs->energy_eV, 4);
    snprintf(lab, sizeof lab, "%s%s", qs->label, qs->flagged ? "*" : "");
    fl.rgb = qs->flagged ? EW_COL_WARN : ew_level_colour(qs->band, qs->n);
    fl.bold = 1;
    ew_cv_text(cv, R + 25, sl[j].at + 4, lab, &fl);
    fl.bold = 0;
    fl.rgb = EW_COL_INK;
    snprintf(lab, sizeof lab, "%s eV", e);
    ew_cv_text(cv, R + 25 + namew + 7, sl[j].at + 4, lab, &fl);
  }
  if (shown < m || b->all[q] > m) {
    char buf[96];
    if (b->all[q] > m) snprintf(buf, sizeof buf, "(+%zu levels not drawn)", b->all[q] - shown);
    else snprintf(buf, sizeof buf, "(+%zu more levels)", m - shown);
    ew_cv_text(cv, R + 12, p->top + p->h - 4, buf, &f_small);
  }
  if (m == 0) ew_cv_text(cv, R + 12, p->top + p->h / 2, "no bound level", &f_small);
}

/* Label columns at the right, spread so they never overlap. */
static void draw_labels(ew_canvas *cv, const band *b) {
  slot *sl = malloc((b->r->n_states + 1) * sizeof *sl);
  if (!sl) {
    cv->bad = 1;
    return;
  }
  for (int q = 0; q < 2; q++) draw_label_column(cv, b, q, sl);
  free(sl);
}

typedef struct {
  const char *text;
  ew_pen line;
  int wave; /* 1: sample shows a small wave above the line (a level with ψ) */
} legend_item;

/* The legend, wrapped into rows; returns the baseline of its last row. */
static double draw_legend(ew_canvas *cv, const band *b) {
  legend_item items[] = {
      {"Ec, Ev heavy hole", ew_pen_make(EW_COL_INK, 2.0, EW_DASH_NONE), 0},
      {"Ev light hole", ew_pen_make(ew_band_colour[EW_BAND_LH], 1.5, EW_DASH_LONG), 0},
      {"electron level, \xcf\x88", ew_pen_make(ew_band_colour[EW_BAND_E], 1.8, EW_DASH_NONE), 1},
      {"heavy-hole level, \xcf\x88", ew_pen_make(ew_band_colour[EW_BAND_HH], 1.8, EW_DASH_NONE), 1},
      {"light-hole level, \xcf\x88", ew_pen_make(ew_band_colour[EW_BAND_LH], 1.8, EW_DASH_NONE), 1},
      {"Fermi level", ew_pen_make(BD_COL_FERMI, 1.4, EW_DASH_SHORT), 0}, /* doped stacks */
  };
  const panel *pv = &b->pan[1];
  double x = b->L, y = pv->top + pv->h + 64;
  ew_font fl = ew_font_make(11, EW_ANCHOR_START, EW_COL_INK);
  size_t nitems = sizeof items / sizeof items[0] - (b->fermi_q < 0);
  for (size_t k = 0; k < nitems; k++) {
    double w = 34 + ew_text_width(items[k].text, fl.size) + 22;
    if (x + w > b->W - 20 && x > b->L) x = b->L, y += 20;
    ew_cv_line(cv, x, y - 4, x + 28, y - 4, &items[k].line);
    if (items[k].wave) {
      double xs[15], ys[15];
      for (int i = 0; i < 15; i++) {
        xs[i] = x + 2 + i * 24.0 / 14;
        ys[i] = y - 4 - 6 * sin(EW_PI * i / 14.0);
      }
      ew_pen pw = ew_pen_make(items[k].line.rgb, 1.1, EW_DASH_NONE);
      ew_cv_path(cv, 15, xs, ys, &pw);
    }
    ew_cv_text(cv, x + 34, y, items[k].text, &fl);
    x += w;
  }
  return y;
}

/* Notes under the legend (y: the legend's last baseline). */
static void draw_notes(ew_canvas *cv, const band *b, double y) {
  ew_font f_small = ew_font_make(10.5, EW_ANCHOR_START, EW_COL_MUTED);
  char buf[400];
  y += 22;
  snprintf(buf, sizeof buf,
           "Each level is drawn where |\xcf\x88|\xc2\xb2 > %g %% of its peak. \xcf\x88 "
           "(largest lobe positive, one scale per panel) is drawn about its level, away "
           "from the band edge.",
           EW_PLOT_LEVEL_FRACTION * 100);
  ew_cv_text(cv, b->L, y, buf, &f_small);
  if (b->all[0] + b->all[1] > b->cnt[0] + b->cnt[1]) {
    snprintf(buf, sizeof buf, "The lowest %d levels of each band are drawn (solve --plot-levels N|all).",
             b->max_lv);
    y += 15;
    ew_cv_text(cv, b->L, y, buf, &f_small);
  }
  y += 15;
  ew_cv_text(cv, b->L, y,
             "Energies absolute (eV). Shaded columns alternate layers. Arrows: the main "
             "interband (PL) line and the strongest e1 intersubband line.",
             &f_small);
  if (b->any_flag) {
    y += 15;
    ew_font fw = f_small;
    fw.rgb = EW_COL_WARN;
    ew_cv_text(cv, b->L, y, "* residual check failed for this level: treat its numbers with care.",
               &fw);
  }
}

void ew_band_diagram_draw(ew_canvas *cv, const ew_result *r, int levels_per_band,
                          ew_chart_scratch *sc) {
  band b = {0};
  b.max_lv = levels_per_band;
  b.r = r;
  b.st = r->stack;
  b.sc = sc;
  b.n = r->grid->n;
  b.z = ew_result_z_nm(r);
  for (int e = 0; e < EW_BAND_COUNT; e++) b.edge[e] = ew_result_edge_eV(r, (ew_band)e);
  b.W = EW_PLOT_BAND_W, b.H = EW_PLOT_BAND_H;
  b.L = BD_LEFT, b.R = b.W - BD_LABEL_COL;
  b.Lz = b.st->total_nm > 0 ? b.st->total_nm : r->grid->length_nm;

  ew_cv_rect(cv, 0, 0, b.W, b.H, 0xffffffu, 1, NULL);
  draw_title(cv, &b);
  if (layout_names(&b) != 0) {
    cv->bad = 1;
  } else {
    layout_panels(&b);
    draw_layers(cv, &b);
    draw_edges(cv, &b);
    draw_levels(cv, &b);
    draw_fermi(cv, &b);
    draw_energy_axes(cv, &b);
    double arrow_x = NAN, label_end = draw_arrows(cv, &b, &arrow_x);
    draw_axis_break(cv, &b, arrow_x, label_end);
    draw_z_axis(cv, &b);
    draw_labels(cv, &b);
    if (!cv->bad) draw_notes(cv, &b, draw_legend(cv, &b));
  }
  free(b.row_of);
  free(b.cx_of);
}
