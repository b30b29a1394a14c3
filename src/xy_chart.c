/* xy_chart.c — the line chart (see plot.h, ew_plot_xy): linear axes over the finite data,
 * grid and ticks, one polyline per series (gaps at non-finite values, a dot for a point
 * with no finite neighbour), a legend column at the right. */
#include "xy_chart.h"

#include <math.h>
#include <string.h>

#include "constants.h"
#include "plot.h"

/* Eight hues for white paper, paired with dash patterns that change every eight series so
 * a grey-scale print still tells the lines apart. */
static const uint32_t palette[8] = {0x1f5fa8u, 0xc0392bu, 0x1b7a3du, 0x7d3c98u,
                                    0xd68910u, 0x117a8bu, 0x6e2c00u, 0x4d4d4du};

#define LEGEND_FONT 11.0

/* Plot area and data ranges. */
typedef struct {
  double L, T, R, B;
  double x_lo, x_hi, y_lo, y_hi;
  double legw; /* legend column */
  int have;    /* any finite point */
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
  if (a->xlabel) ew_cv_text(cv, (f->L + f->R) / 2, f->B + 40, a->xlabel, &f_axis);
  if (a->ylabel) {
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
    int ok = isfinite(a->x[i]) && isfinite(y[i]);
    sc->x[m] = ok ? xp(f, a->x[i]) : NAN;
    sc->y[m] = ok ? yp(f, y[i]) : NAN;
    int prev = i > 0 && isfinite(a->x[i - 1]) && isfinite(y[i - 1]);
    int next = i + 1 < a->npoints && isfinite(a->x[i + 1]) && isfinite(y[i + 1]);
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

void ew_xy_chart_draw(ew_canvas *cv, const ew_xy_chart *a, ew_chart_scratch *sc) {
  frame f;
  ew_cv_rect(cv, 0, 0, EW_PLOT_XY_W, EW_PLOT_XY_H, 0xffffffu, 1, NULL);
  layout(a, &f);
  if (a->title) {
    ew_font f_title = ew_font_make(15, EW_ANCHOR_START, EW_COL_INK);
    f_title.bold = 1;
    ew_cv_text(cv, f.L, 28, a->title, &f_title);
  }
  data_range(a, &f);
  draw_axes(cv, a, &f);
  for (size_t s = 0; s < a->nseries; s++) {
    static const int dashes[3] = {EW_DASH_NONE, EW_DASH_LONG, EW_DASH_SHORT};
    ew_pen p = ew_pen_make(palette[s % 8], 1.8, dashes[(s / 8) % 3]);
    draw_series(cv, a, &f, s, &p, sc);
    draw_legend_entry(cv, a, &f, s, &p);
  }
}
