/* xy_chart.c — the line chart (see plot.h, ew_plot_xy): linear axes over the finite data,
 * grid and ticks, one polyline per series (gaps at non-finite values, a dot for a point
 * with no finite neighbour), a legend column at the right. */
#include "xy_chart.h"

#include <math.h>
#include <string.h>

#include "constants.h"
#include "plot.h"

/* Twelve hues for white paper, then hues a golden angle (137.5°) apart in two lightnesses:
 * every series of a chart gets its own colour; dash patterns change every eight series so a
 * grey-scale print still tells neighbours apart. */
static const uint32_t palette[12] = {0x1f5fa8u, 0xc0392bu, 0x1b7a3du, 0x7d3c98u,
                                     0xd68910u, 0x117a8bu, 0x6e2c00u, 0x4d4d4du,
                                     0xb0287au, 0x5b7a00u, 0x2c3e8cu, 0x9c5a3cu};

/* HSL to RGB (h in turns, s and l in [0, 1]); the standard conversion. */
static uint32_t hsl(double h, double s, double l) {
  double c = (1 - fabs(2 * l - 1)) * s, hp = 6 * (h - floor(h));
  double x = c * (1 - fabs(fmod(hp, 2) - 1)), m = l - c / 2, r = 0, g = 0, b = 0;
  if (hp < 1) r = c, g = x;
  else if (hp < 2) r = x, g = c;
  else if (hp < 3) g = c, b = x;
  else if (hp < 4) g = x, b = c;
  else if (hp < 5) r = x, b = c;
  else r = c, b = x;
  uint32_t R = (uint32_t)lround(255 * (r + m)), G = (uint32_t)lround(255 * (g + m)),
           B = (uint32_t)lround(255 * (b + m));
  return R << 16 | G << 8 | B;
}

uint32_t ew_xy_series_colour(size_t s) {
  if (s < 12) return palette[s];
  size_t k = s - 12;
  return hsl(0.071 + 0.381966 * (double)k, 0.62, k % 2 ? 0.30 : 0.45);
}

#define LEGEND_FONT 11.0

/* Plot area and data ranges. */
typedef struct {
  double L, T, R, B;
  double x_lo, x_hi, y_lo, y_hi;
  double legw; /* legend column */
  int have;    /* any finite point */
  double keep_lo, keep_hi; /* values drawn in this frame (a broken axis: its group) */
  int xlabels; /* bit 1: x tick labels and the x axis label under this frame; bit 2: no y
                  axis label (a broken axis draws one over both panels) */
} frame;

static double xp(const frame *f, double v) { return f->L + (v - f->x_lo) / (f->x_hi - f->x_lo) * (f->R - f->L); }
static double yp(const frame *f, double v) { return f->B - (v - f->y_lo) / (f->y_hi - f->y_lo) * (f->B - f->T); }

/* Series s's legend text: its name, or "series N". */
static void series_name(const ew_xy_chart *a, size_t s, char *buf, size_t cap) {
  if (a->names && a->names[s]) ew_text_clean(a->names[s], buf, cap);
  else snprintf(buf, cap, "series %zu", s + 1);
}

/* Legend column width from the names (within limits), then the plot area. */
static void layout(const ew_xy_chart *a, frame *f) {
  double legw = 0;
  for (size_t s = 0; s < a->nseries; s++) {
    char tmp[256];
    series_name(a, s, tmp, sizeof tmp);
    legw = fmax(legw, ew_text_width(tmp, LEGEND_FONT));
  }
  f->legw = fmin(240, fmax(80, legw)) + 56; /* sample line, gap, right margin */
  f->L = 84, f->T = a->title ? 48 : 24, f->R = EW_PLOT_XY_W - f->legw - 12, f->B = EW_PLOT_XY_H - 62;
  f->keep_lo = -INFINITY, f->keep_hi = INFINITY, f->xlabels = 1;
}

/* Ranges over the finite points, widened when flat, with 5 % room above and below. */
static void data_range(const ew_xy_chart *a, frame *f) {
  double x_lo = INFINITY, x_hi = -INFINITY, y_lo = INFINITY, y_hi = -INFINITY;
  for (size_t i = 0; i < a->npoints; i++) {
    if (!isfinite(a->x[i])) continue;
    for (size_t s = 0; s < a->nseries; s++) {
      double v = a->y[s][i];
      if (!isfinite(v)) continue;
      x_lo = fmin(x_lo, a->x[i]), x_hi = fmax(x_hi, a->x[i]);
      y_lo = fmin(y_lo, v), y_hi = fmax(y_hi, v);
    }
  }
  f->have = isfinite(x_lo);
  if (!f->have) x_lo = 0, x_hi = 1, y_lo = 0, y_hi = 1;
  if (!(x_hi > x_lo)) {
    double d = fmax(0.5, 0.05 * fabs(x_lo));
    x_lo -= d, x_hi += d;
  }
  if (!(y_hi > y_lo)) {
    double d = fmax(0.5, 0.05 * fabs(y_lo));
    y_lo -= d, y_hi += d;
  }
  double pad = 0.05 * (y_hi - y_lo); /* lines at the extremes stay clear of the frame */
  f->x_lo = x_lo, f->x_hi = x_hi, f->y_lo = y_lo - pad, f->y_hi = y_hi + pad;
}

/* Grid, ticks with labels, frame, axis labels, and a note when nothing is finite. */
static void draw_axes(ew_canvas *cv, const ew_xy_chart *a, const frame *f) {
  char buf[64];
  ew_pen frame_pen = ew_pen_make(EW_COL_FRAME, 1, EW_DASH_NONE), tick = frame_pen;
  ew_pen grid = ew_pen_make(EW_COL_GRID, 0.8, 0);
  ew_font f_tick = ew_font_make(11, EW_ANCHOR_END, EW_COL_INK);
  ew_font f_axis = ew_font_make(12, EW_ANCHOR_MIDDLE, EW_COL_INK);
  ew_ticks tx = ew_chart_ticks(f->x_lo, f->x_hi, (int)((f->R - f->L) / 90) + 1);
  ew_ticks ty = ew_chart_ticks(f->y_lo, f->y_hi, (int)((f->B - f->T) / 50) + 1);
  ew_font fx = ew_font_make(11, EW_ANCHOR_MIDDLE, EW_COL_INK);
  for (int i = 0; i < tx.count; i++) {
    double v = tx.first + i * tx.step, px = xp(f, v);
    ew_cv_line(cv, px, f->T, px, f->B, &grid);
    ew_cv_line(cv, px, f->B, px, f->B + 5, &tick);
    if (!(f->xlabels & 1)) continue;
    ew_chart_fmt_tick(buf, sizeof buf, v, tx.step, tx.dec);
    ew_cv_text(cv, px, f->B + 18, buf, &fx);
  }
  for (int i = 0; i < ty.count; i++) {
    double v = ty.first + i * ty.step, py = yp(f, v);
    ew_cv_line(cv, f->L, py, f->R, py, &grid);
    ew_cv_line(cv, f->L - 5, py, f->L, py, &tick);
    ew_chart_fmt_tick(buf, sizeof buf, v, ty.step, ty.dec);
    ew_cv_text(cv, f->L - 8, py + 4, buf, &f_tick);
  }
  ew_cv_rect(cv, f->L, f->T, f->R - f->L, f->B - f->T, 0, 0, &frame_pen);
  if (a->xlabel && (f->xlabels & 1)) ew_cv_text(cv, (f->L + f->R) / 2, f->B + 40, a->xlabel, &f_axis);
  if (a->ylabel && !(f->xlabels & 2)) {
    ew_font fv = f_axis;
    fv.vertical = 1;
    ew_cv_text(cv, 22, (f->T + f->B) / 2, a->ylabel, &fv);
  }
  if (!f->have) {
    ew_font fm = ew_font_make(13, EW_ANCHOR_MIDDLE, EW_COL_MUTED);
    ew_cv_text(cv, (f->L + f->R) / 2, (f->T + f->B) / 2, "no finite data", &fm);
  }
}

/* Series s: a dot for every finite point between two gaps (it would vanish as a line),
 * then the polyline. */
static void draw_series(ew_canvas *cv, const ew_xy_chart *a, const frame *f, size_t s,
                        const ew_pen *p, ew_chart_scratch *sc) {
  const double *y = a->y[s];
  size_t m = 0;
  for (size_t i = 0; i < a->npoints; i++, m++) {
    int ok = isfinite(a->x[i]) && isfinite(y[i]) && y[i] >= f->keep_lo && y[i] <= f->keep_hi;
    sc->x[m] = ok ? xp(f, a->x[i]) : NAN;
    sc->y[m] = ok ? yp(f, y[i]) : NAN;
    int prev = i > 0 && isfinite(a->x[i - 1]) && isfinite(y[i - 1]) && y[i - 1] >= f->keep_lo &&
               y[i - 1] <= f->keep_hi;
    int next = i + 1 < a->npoints && isfinite(a->x[i + 1]) && isfinite(y[i + 1]) &&
               y[i + 1] >= f->keep_lo && y[i + 1] <= f->keep_hi;
    if (ok && !prev && !next) {
      double cx[13], cy[13];
      for (int k = 0; k < 12; k++) {
        cx[k] = sc->x[m] + 2.6 * cos(2 * EW_PI * k / 12);
        cy[k] = sc->y[m] + 2.6 * sin(2 * EW_PI * k / 12);
      }
      ew_cv_fill(cv, 12, cx, cy, p->rgb, 1);
    }
  }
  size_t k = ew_chart_decimate(m, sc->x, sc->y, sc->dx, sc->dy);
  ew_cv_path(cv, k, sc->dx, sc->dy, p);
}

/* Series s's legend entry; more series than the column holds go unnamed. */
static void draw_legend_entry(ew_canvas *cv, const ew_xy_chart *a, const frame *f, size_t s,
                              const ew_pen *p) {
  double ly = f->T + 14 + 18.0 * (double)s;
  if (ly > f->B) return;
  ew_cv_line(cv, f->R + 16, ly - 4, f->R + 44, ly - 4, p);
  char tmp[256];
  series_name(a, s, tmp, sizeof tmp);
  /* shorten names that would run off the picture, ending them in an ellipsis */
  while (strlen(tmp) > 4 && ew_text_width(tmp, LEGEND_FONT) > f->legw - 56) {
    size_t len = strlen(tmp) - 1;
    while (len > 0 && ((unsigned char)tmp[len] & 0xC0) == 0x80) len--;
    tmp[len] = '\0';
    if (len >= 1) {
      size_t cut = len - 1;
      while (cut > 0 && ((unsigned char)tmp[cut] & 0xC0) == 0x80) cut--;
      snprintf(tmp + cut, sizeof tmp - cut, "\xe2\x80\xa6");
    }
  }
  ew_font f_leg = ew_font_make(LEGEND_FONT, EW_ANCHOR_START, EW_COL_INK);
  ew_cv_text(cv, f->R + 50, ly, tmp, &f_leg);
}

/* The gap of a broken axis: the series' value ranges merged where they overlap; the widest
 * hole between merged ranges, when it is more than half of the whole span and there are at
 * most 256 series.  Returns 1 with the gap's ends. */
#define XY_BREAK_MAX_SERIES 256
static int find_gap(const ew_xy_chart *a, double *glo, double *ghi) {
  double lo[XY_BREAK_MAX_SERIES], hi[XY_BREAK_MAX_SERIES];
  size_t n = 0;
  if (a->nseries > XY_BREAK_MAX_SERIES) return 0;
  for (size_t s = 0; s < a->nseries; s++) {
    double l = INFINITY, h = -INFINITY;
    for (size_t i = 0; i < a->npoints; i++)
      if (isfinite(a->x[i]) && isfinite(a->y[s][i])) l = fmin(l, a->y[s][i]), h = fmax(h, a->y[s][i]);
    if (!isfinite(l)) continue;
    size_t k = n++; /* insertion by lower end */
    while (k > 0 && lo[k - 1] > l) lo[k] = lo[k - 1], hi[k] = hi[k - 1], k--;
    lo[k] = l, hi[k] = h;
  }
  if (n < 2) return 0;
  double best = 0, reach = hi[0], top = hi[0];
  for (size_t k = 1; k < n; k++) {
    if (lo[k] - reach > best) best = lo[k] - reach, *glo = reach, *ghi = lo[k];
    reach = fmax(reach, hi[k]);
    top = fmax(top, hi[k]);
  }
  return best > 0.5 * (top - lo[0]);
}

/* Two panels: values above the gap in the upper one, below it in the lower one, the x axis
 * shared, the energy axis broken between them with slanted marks and what was left out. */
static void draw_broken(ew_canvas *cv, const ew_xy_chart *a, frame *f, double glo, double ghi,
                        ew_chart_scratch *sc) {
  const double gap = 30;
  /* the ranges of each group, with the 5 % room of data_range */
  data_range(a, f);
  frame up = *f, dn = *f;
  double ylo = f->y_lo + 0.05 / 1.1 * (f->y_hi - f->y_lo), yhi = f->y_hi - 0.05 / 1.1 * (f->y_hi - f->y_lo);
  size_t nu = 0, nd = 0;
  for (size_t s = 0; s < a->nseries; s++) {
    int u = 0, d = 0;
    for (size_t i = 0; i < a->npoints; i++) {
      if (!isfinite(a->y[s][i])) continue;
      if (a->y[s][i] >= ghi) u = 1;
      else d = 1;
    }
    nu += (size_t)u, nd += (size_t)d;
  }
  /* heights by how many curves each group holds, neither under 30 % */
  double frac = fmin(0.7, fmax(0.3, (nu + 1.0) / (nu + nd + 2.0)));
  double H = f->B - f->T - gap;
  up.B = f->T + H * frac;
  dn.T = up.B + gap;
  double pu = 0.05 * fmax(yhi - ghi, 1e-9 * fabs(ghi) + 1e-12), pd = 0.05 * fmax(glo - ylo, 1e-9 * fabs(glo) + 1e-12);
  up.y_lo = ghi - pu, up.y_hi = yhi + pu, up.keep_lo = ghi, up.keep_hi = INFINITY;
  dn.y_lo = ylo - pd, dn.y_hi = glo + pd, dn.keep_lo = -INFINITY, dn.keep_hi = glo;
  up.xlabels = 2;
  dn.xlabels = 3; /* x labels under the lower panel; the y label centred over both */
  draw_axes(cv, a, &up);
  draw_axes(cv, a, &dn);
  if (a->ylabel) {
    ew_font fv = ew_font_make(12, EW_ANCHOR_MIDDLE, EW_COL_INK);
    fv.vertical = 1;
    ew_cv_text(cv, 22, (up.T + dn.B) / 2, a->ylabel, &fv);
  }
  ew_pen brk = ew_pen_make(EW_COL_FRAME, 1.2, EW_DASH_NONE);
  for (int side = 0; side < 2; side++) {
    double xa = side ? f->R : f->L;
    ew_cv_line(cv, xa - 6, up.B + 9, xa + 6, up.B + 3, &brk);
    ew_cv_line(cv, xa - 6, dn.T - 3, xa + 6, dn.T - 9, &brk);
  }
  char g[64], msg[120];
  ew_chart_fmt_num(g, sizeof g, ghi - glo, 3);
  /* the unit from the y label's parentheses, "energy (eV)" → "eV" */
  const char *u0 = a->ylabel ? strrchr(a->ylabel, '(') : NULL, *u1 = u0 ? strchr(u0, ')') : NULL;
  if (u0 && u1 && u1 - u0 < 20)
    snprintf(msg, sizeof msg, "axis broken: %s %.*s left out", g, (int)(u1 - u0 - 1), u0 + 1);
  else snprintf(msg, sizeof msg, "axis broken: %s left out", g);
  ew_font fi = ew_font_make(10.5, EW_ANCHOR_MIDDLE, EW_COL_MUTED);
  fi.italic = 1;
  ew_cv_text(cv, (f->L + f->R) / 2, up.B + gap / 2 + 4, msg, &fi);
  frame leg = *f;
  leg.T = up.T, leg.B = dn.B;
  for (size_t s = 0; s < a->nseries; s++) {
    static const int dashes[3] = {EW_DASH_NONE, EW_DASH_LONG, EW_DASH_SHORT};
    ew_pen p = ew_pen_make(ew_xy_series_colour(s), 1.8, dashes[(s / 8) % 3]);
    draw_series(cv, a, &up, s, &p, sc);
    draw_series(cv, a, &dn, s, &p, sc);
    draw_legend_entry(cv, a, &leg, s, &p);
  }
}

void ew_xy_chart_draw(ew_canvas *cv, const ew_xy_chart *a, ew_chart_scratch *sc) {
  frame f;
  ew_cv_rect(cv, 0, 0, EW_PLOT_XY_W, EW_PLOT_XY_H, 0xffffffu, 1, NULL);
  layout(a, &f);
  if (a->title) {
    ew_font f_title = ew_font_make(15, EW_ANCHOR_START, EW_COL_INK);
    f_title.bold = 1;
    ew_cv_text(cv, f.L, 28, a->title, &f_title);
  }
  double glo, ghi;
  if (a->break_y && find_gap(a, &glo, &ghi)) {
    draw_broken(cv, a, &f, glo, ghi, sc);
    return;
  }
  data_range(a, &f);
  draw_axes(cv, a, &f);
  for (size_t s = 0; s < a->nseries; s++) {
    static const int dashes[3] = {EW_DASH_NONE, EW_DASH_LONG, EW_DASH_SHORT};
    ew_pen p = ew_pen_make(ew_xy_series_colour(s), 1.8, dashes[(s / 8) % 3]);
    draw_series(cv, a, &f, s, &p, sc);
    draw_legend_entry(cv, a, &f, s, &p);
  }
}
