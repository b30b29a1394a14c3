/* plot.c — band diagram and line charts (see plot.h).  cairo is used only here.
 *
 * The drawing code talks to a tiny canvas (lines, filled polygons, rectangles, text) with
 * two back ends: an SVG writer of our own, so the file is plain escaped text whose labels
 * can be searched and inlined into the HTML report, and cairo for PNG, because
 * rasterising anti-aliased lines and real text is far beyond a few lines of code.  All
 * coordinates are in SVG user units; the PNG back end scales them by EW_PLOT_PNG_SCALE.
 * Layout decisions (label rows, label columns, legend wrapping) use an estimate of text
 * width, never a measurement, so both back ends lay out the same picture. */
#include "plot.h"

#include <cairo.h>
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "error.h"
#include "grid.h"

#define FONT_FAMILY "DejaVu Sans"
#define PI 3.14159265358979323846
/* The SVG names fonts with wide metrics first: the width estimate below is tuned to them,
 * and narrower fallbacks only leave more room. */
#define SVG_FONTS "DejaVu Sans, Verdana, Arial, Helvetica, sans-serif"

/* ---- colours and pens ------------------------------------------------------------------ */
/* Chosen for white paper: dark, clearly different hues that stay apart in grey scale too
 * (light holes also get a dashed line for that reason). */
#define COL_INK 0x1a1a1au
#define COL_FRAME 0x4d4d4du
#define COL_MUTED 0x5f5f5fu
#define COL_FAINT 0xa6a6a6u
#define COL_SHADE 0xf1f1eeu
#define COL_GRID 0xe4e4e4u
#define COL_WARN 0xa30000u
static const uint32_t band_col[EW_BAND_COUNT] = {0x1b7a3du, 0x6a2c91u, 0xc25a00u};

enum { DASH_NONE = 0, DASH_LONG = 1, DASH_DOT = 2, DASH_SHORT = 3 };

typedef struct {
  uint32_t rgb;
  double width;
  int dash;
  double opacity;
} pen;

static pen mkpen(uint32_t rgb, double width, int dash) {
  pen p = {rgb, width, dash, 1.0};
  return p;
}

/* ---- text helpers ---------------------------------------------------------------------- */
/* Copy s into out as valid UTF-8 without control characters (XML refuses them and cairo
 * stops drawing on invalid UTF-8): every bad byte becomes '?'.  Truncates at cap on a code
 * point boundary. */
static void clean_text(const char *s, char *out, size_t cap) {
  size_t o = 0;
  if (!cap) return;
  if (!s) s = "";
  const unsigned char *p = (const unsigned char *)s;
  while (*p && o + 1 < cap) {
    unsigned c = *p;
    size_t len = c < 0x80 ? 1 : (c & 0xE0) == 0xC0 ? 2 : (c & 0xF0) == 0xE0 ? 3
                 : (c & 0xF8) == 0xF0 ? 4 : 0;
    int ok = len > 0 && !(c < 0x80 && c < 0x20) && c != 0x7f && !(len == 2 && c < 0xC2);
    for (size_t k = 1; ok && k < len; k++)
      if ((p[k] & 0xC0) != 0x80) ok = 0;
    if (!ok) {
      out[o++] = '?';
      p++;
      continue;
    }
    if (o + len >= cap) break;
    memcpy(out + o, p, len);
    o += len;
    p += len;
  }
  out[o] = '\0';
}

/* Estimated advance of s at font size `size`, for wide sans fonts (DejaVu Sans, Verdana).
 * Errs on the wide side so that estimated gaps are real gaps. */
static double text_width(const char *s, double size) {
  double w = 0;
  for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
    unsigned c = *p;
    if (c >= 0x80) {
      if ((c & 0xC0) != 0x80) w += 0.64; /* one per code point (lead byte) */
    } else if (strchr("iljtfrI.,:;'|!()[] ", (int)c)) {
      w += 0.36;
    } else if (strchr("mwMW%", (int)c)) {
      w += 0.94;
    } else if (c >= 'A' && c <= 'Z') {
      w += 0.72;
    } else {
      w += 0.62;
    }
  }
  return w * size;
}

/* v with `dec` decimals and a true minus sign (U+2212) for negative values; a value that
 * rounds to zero prints as 0 without a sign. */
static void fmt_num(char *buf, size_t cap, double v, int dec) {
  char tmp[64];
  snprintf(tmp, sizeof tmp, "%.*f", dec, fabs(v));
  int zero = 1;
  for (const char *p = tmp; *p; p++)
    if (*p >= '1' && *p <= '9') zero = 0;
  snprintf(buf, cap, "%s%s", v < 0 && !zero ? "\xe2\x88\x92" : "", tmp);
}

/* Tick label: fixed decimals for ordinary magnitudes, %g beyond them. */
static void fmt_tick(char *buf, size_t cap, double v, double step, int dec) {
  if (fabs(v) < 1e-9 * step) v = 0;
  double a = fabs(v);
  if (a >= 1e6 || (a > 0 && step < 1e-5)) {
    char tmp[64];
    snprintf(tmp, sizeof tmp, "%.3g", a);
    snprintf(buf, cap, "%s%s", v < 0 ? "\xe2\x88\x92" : "", tmp);
  } else {
    fmt_num(buf, cap, v, dec);
  }
}

/* ---- canvas ---------------------------------------------------------------------------- */
typedef struct {
  int png;       /* 0 SVG text on out, 1 cairo context cr */
  FILE *out;
  cairo_t *cr;
  int bad;       /* an SVG write failed */
} canvas;

enum { ANCHOR_START = -1, ANCHOR_MIDDLE = 0, ANCHOR_END = 1 };

static void svg_escaped(FILE *f, const char *s) {
  for (; *s; s++) {
    switch (*s) {
    case '&': fputs("&amp;", f); break;
    case '<': fputs("&lt;", f); break;
    case '>': fputs("&gt;", f); break;
    case '"': fputs("&quot;", f); break;
    case '\'': fputs("&#39;", f); break;
    default: fputc(*s, f);
    }
  }
}

static void svg_color(FILE *f, const char *attr, uint32_t rgb) {
  fprintf(f, " %s=\"#%06x\"", attr, (unsigned)(rgb & 0xffffffu));
}

static const char *svg_dash(int dash) {
  switch (dash) {
  case DASH_LONG: return "7 4";
  case DASH_DOT: return "1.2 3";
  case DASH_SHORT: return "3 3";
  default: return NULL;
  }
}

static void cr_rgb(cairo_t *cr, uint32_t rgb, double alpha) {
  cairo_set_source_rgba(cr, ((rgb >> 16) & 0xff) / 255.0, ((rgb >> 8) & 0xff) / 255.0,
                        (rgb & 0xff) / 255.0, alpha);
}

static void cr_pen(cairo_t *cr, const pen *p) {
  cr_rgb(cr, p->rgb, p->opacity);
  cairo_set_line_width(cr, p->width);
  static const double dl[] = {7, 4}, dd[] = {1.2, 3}, ds[] = {3, 3};
  switch (p->dash) {
  case DASH_LONG: cairo_set_dash(cr, dl, 2, 0); break;
  case DASH_DOT: cairo_set_dash(cr, dd, 2, 0); break;
  case DASH_SHORT: cairo_set_dash(cr, ds, 2, 0); break;
  default: cairo_set_dash(cr, NULL, 0, 0);
  }
}

static void svg_pen(FILE *f, const pen *p) {
  svg_color(f, "stroke", p->rgb);
  fprintf(f, " stroke-width=\"%.2f\"", p->width);
  const char *d = svg_dash(p->dash);
  if (d) fprintf(f, " stroke-dasharray=\"%s\"", d);
  if (p->opacity < 1) fprintf(f, " stroke-opacity=\"%.2f\"", p->opacity);
}

/* Polyline through n points; a non-finite coordinate breaks it into pieces. */
static void cv_path(canvas *cv, size_t n, const double *x, const double *y, const pen *p) {
  if (cv->png) {
    cairo_t *cr = cv->cr;
    cairo_new_path(cr);
    int open = 0;
    for (size_t i = 0; i < n; i++) {
      if (!isfinite(x[i]) || !isfinite(y[i])) {
        open = 0;
        continue;
      }
      if (open) cairo_line_to(cr, x[i], y[i]);
      else cairo_move_to(cr, x[i], y[i]);
      open = 1;
    }
    cr_pen(cr, p);
    cairo_stroke(cr);
    return;
  }
  FILE *f = cv->out;
  int open = 0, any = 0;
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(x[i]) || !isfinite(y[i])) {
      open = 0;
      continue;
    }
    if (!any) fputs("<path d=\"", f);
    fprintf(f, "%s%.2f %.2f", open ? " L" : any ? " M" : "M", x[i], y[i]);
    open = any = 1;
  }
  if (!any) return;
  fputs("\" fill=\"none\" stroke-linejoin=\"round\" stroke-linecap=\"round\"", f);
  svg_pen(f, p);
  fputs("/>\n", f);
}

static void cv_line(canvas *cv, double x0, double y0, double x1, double y1, const pen *p) {
  double x[2] = {x0, x1}, y[2] = {y0, y1};
  cv_path(cv, 2, x, y, p);
}

/* Closed polygon filled with rgb at the given opacity (no outline). */
static void cv_fill(canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
                    double opacity) {
  if (n < 3) return;
  if (cv->png) {
    cairo_t *cr = cv->cr;
    cairo_new_path(cr);
    for (size_t i = 0; i < n; i++) {
      if (i) cairo_line_to(cr, x[i], y[i]);
      else cairo_move_to(cr, x[i], y[i]);
    }
    cairo_close_path(cr);
    cr_rgb(cr, rgb, opacity);
    cairo_fill(cr);
    return;
  }
  FILE *f = cv->out;
  fputs("<path d=\"", f);
  for (size_t i = 0; i < n; i++) fprintf(f, "%s%.2f %.2f", i ? " L" : "M", x[i], y[i]);
  fputs(" Z\" stroke=\"none\"", f);
  svg_color(f, "fill", rgb);
  if (opacity < 1) fprintf(f, " fill-opacity=\"%.2f\"", opacity);
  fputs("/>\n", f);
}

/* Rectangle: filled when fill_opacity > 0, outlined when stroke is not NULL. */
static void cv_rect(canvas *cv, double x, double y, double w, double h, uint32_t fill,
                    double fill_opacity, const pen *stroke) {
  if (cv->png) {
    cairo_t *cr = cv->cr;
    cairo_new_path(cr);
    cairo_rectangle(cr, x, y, w, h);
    if (fill_opacity > 0) {
      cr_rgb(cr, fill, fill_opacity);
      if (stroke) cairo_fill_preserve(cr);
      else cairo_fill(cr);
    }
    if (stroke) {
      cr_pen(cr, stroke);
      cairo_stroke(cr);
    }
    cairo_new_path(cr);
    return;
  }
  FILE *f = cv->out;
  fprintf(f, "<rect x=\"%.2f\" y=\"%.2f\" width=\"%.2f\" height=\"%.2f\"", x, y, w, h);
  if (fill_opacity > 0) {
    svg_color(f, "fill", fill);
    if (fill_opacity < 1) fprintf(f, " fill-opacity=\"%.2f\"", fill_opacity);
  } else {
    fputs(" fill=\"none\"", f);
  }
  if (stroke) svg_pen(f, stroke);
  fputs("/>\n", f);
}

typedef struct {
  double size;
  int anchor; /* ANCHOR_* */
  uint32_t rgb;
  int bold, italic;
  int vertical; /* 1: rotated a quarter turn counter-clockwise (reads bottom to top) */
} font;

static font mkfont(double size, int anchor, uint32_t rgb) {
  font f = {size, anchor, rgb, 0, 0, 0};
  return f;
}

/* Text with its baseline at y. */
static void cv_text(canvas *cv, double x, double y, const char *text, const font *ft) {
  char s[1024];
  clean_text(text, s, sizeof s);
  if (!s[0]) return;
  if (cv->png) {
    cairo_t *cr = cv->cr;
    cairo_save(cr);
    cairo_select_font_face(cr, FONT_FAMILY,
                           ft->italic ? CAIRO_FONT_SLANT_ITALIC : CAIRO_FONT_SLANT_NORMAL,
                           ft->bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr, ft->size);
    cairo_text_extents_t ex;
    cairo_text_extents(cr, s, &ex);
    /* the renderer's own width aligns the text, as text-anchor does in SVG */
    double dx = ft->anchor == ANCHOR_MIDDLE ? -ex.x_advance / 2
                : ft->anchor == ANCHOR_END  ? -ex.x_advance
                                            : 0;
    cairo_translate(cr, x, y);
    if (ft->vertical) cairo_rotate(cr, -PI / 2);
    cairo_move_to(cr, dx, 0);
    cr_rgb(cr, ft->rgb, 1.0);
    cairo_show_text(cr, s);
    cairo_new_path(cr);
    cairo_restore(cr);
    return;
  }
  FILE *f = cv->out;
  fprintf(f, "<text x=\"%.2f\" y=\"%.2f\" font-size=\"%.1f\"", x, y, ft->size);
  if (ft->anchor == ANCHOR_MIDDLE) fputs(" text-anchor=\"middle\"", f);
  else if (ft->anchor == ANCHOR_END) fputs(" text-anchor=\"end\"", f);
  if (ft->bold) fputs(" font-weight=\"bold\"", f);
  if (ft->italic) fputs(" font-style=\"italic\"", f);
  if (ft->vertical) fprintf(f, " transform=\"rotate(-90 %.2f %.2f)\"", x, y);
  svg_color(f, "fill", ft->rgb);
  fputc('>', f);
  svg_escaped(f, s);
  fputs("</text>\n", f);
}

/* Reduce a polyline in picture units to what can be seen: per unit column (two PNG
 * pixels) keep the first, lowest, highest and last point in their order.  A wavefunction on a 10⁵-node grid
 * thus costs a few thousand points in the file, and vertical steps (interfaces) stay
 * exact.  Non-finite points become single separators.  ox/oy hold 2n points. */
static size_t decimate(size_t n, const double *x, const double *y, double *ox, double *oy) {
  size_t m = 0, i = 0;
  while (i < n) {
    if (!isfinite(x[i]) || !isfinite(y[i])) {
      if (m && isfinite(ox[m - 1])) ox[m] = oy[m] = NAN, m++;
      i++;
      continue;
    }
    double col = floor(x[i]);
    size_t first = i, last = i, lo = i, hi = i;
    while (i < n && isfinite(x[i]) && isfinite(y[i]) && floor(x[i]) == col) {
      if (y[i] < y[lo]) lo = i;
      if (y[i] > y[hi]) hi = i;
      last = i++;
    }
    size_t keep[4] = {first, lo < hi ? lo : hi, lo < hi ? hi : lo, last};
    for (int k = 0; k < 4; k++) {
      if (k && keep[k] == keep[k - 1]) continue;
      ox[m] = x[keep[k]];
      oy[m] = y[keep[k]];
      m++;
    }
  }
  return m;
}

/* ---- axes ------------------------------------------------------------------------------ */
typedef struct {
  double first, step; /* first tick >= lo, spacing */
  int count;          /* ticks within [lo, hi] */
  int dec;            /* decimals for the labels */
} ticks;

/* About `target` ticks over [lo, hi] at 1, 2, 2.5 or 5 × 10^k. */
static ticks nice_ticks(double lo, double hi, int target) {
  ticks t = {lo, 1, 1, 0};
  double span = hi - lo;
  if (!(span > 0) || !isfinite(span)) return t;
  if (target < 2) target = 2;
  double raw = span / target, p = pow(10, floor(log10(raw))), m = raw / p;
  double mult = m < 1.5 ? 1 : m < 2.25 ? 2 : m < 3.5 ? 2.5 : m < 7.5 ? 5 : 10;
  t.step = mult * p;
  t.first = ceil(lo / t.step - 1e-9) * t.step;
  t.count = (int)floor((hi - t.first) / t.step + 1e-9) + 1;
  if (t.count < 0) t.count = 0;
  int d = (int)-floor(log10(t.step) + 1e-9);
  if (mult == 2.5) d++;
  t.dec = d > 0 ? d : 0;
  return t;
}

/* ---- band diagram ---------------------------------------------------------------------- */
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

typedef struct {
  double *x, *y, *dx, *dy, *fx, *fy; /* scratch polylines: 2n+8 each */
} scratch;

static void scratch_free(scratch *s) {
  free(s->x), free(s->y), free(s->dx), free(s->dy), free(s->fx), free(s->fy);
}

static int scratch_alloc(scratch *s, size_t n) {
  size_t cap = 2 * n + 8;
  s->x = malloc(cap * sizeof *s->x);
  s->y = malloc(cap * sizeof *s->y);
  s->dx = malloc(cap * sizeof *s->dx);
  s->dy = malloc(cap * sizeof *s->dy);
  s->fx = malloc(cap * sizeof *s->fx);
  s->fy = malloc(cap * sizeof *s->fy);
  return s->x && s->y && s->dx && s->dy && s->fx && s->fy;
}

/* Greedy wrapping of legend items into rows of the given width; returns rows used. */
typedef struct {
  const char *text;
  pen line;
  int wave; /* 1: sample shows a small wave above the line (a level with ψ) */
} legend_item;

static const char *base_name(const char *path) {
  const char *b = strrchr(path, '/');
  return b ? b + 1 : path;
}

/* Layout constants of the band diagram (picture units). */
enum { BD_LEFT = 86, BD_LABEL_COL = 196, BD_GAP = 40 };

static void draw_band(canvas *cv, const ew_result *r, scratch *sc) {
  const ew_stack *st = r->stack;
  const double W = EW_PLOT_BAND_W, H = EW_PLOT_BAND_H;
  const double L = BD_LEFT, R = W - BD_LABEL_COL;
  const size_t n = r->grid->n;
  const double *z = ew_result_z_nm(r);
  const double *ec = ew_result_edge_eV(r, EW_BAND_E);
  const double *ehh = ew_result_edge_eV(r, EW_BAND_HH);
  const double *elh = ew_result_edge_eV(r, EW_BAND_LH);
  const double Lz = st->total_nm > 0 ? st->total_nm : r->grid->length_nm;
  char buf[1200];
  font f_title = mkfont(15, ANCHOR_START, COL_INK);
  f_title.bold = 1;
  font f_small = mkfont(10.5, ANCHOR_START, COL_MUTED);
  font f_tick = mkfont(11, ANCHOR_END, COL_INK);
  font f_axis = mkfont(12, ANCHOR_MIDDLE, COL_INK);
  font f_layer = mkfont(11, ANCHOR_MIDDLE, 0x333333u);
  pen frame = mkpen(COL_FRAME, 1, DASH_NONE);
  pen tick = mkpen(COL_FRAME, 1, DASH_NONE);

  cv_rect(cv, 0, 0, W, H, 0xffffffu, 1, NULL);
  if (st->path[0])
    snprintf(buf, sizeof buf, "Band diagram \xe2\x80\x94 %s, T = %g K", base_name(st->path),
             st->temperature_K);
  else snprintf(buf, sizeof buf, "Band diagram, T = %g K", st->temperature_K);
  cv_text(cv, L, 26, buf, &f_title);

  /* layer names in rows above the panels: a name goes into the first row where it does
     not touch its neighbours, so thin layers keep readable names */
  enum { MAX_ROWS = 4 };
  double row_end[MAX_ROWS];
  int nrows = 1;
  size_t omitted = 0;
  for (int k = 0; k < MAX_ROWS; k++) row_end[k] = -1e9;
  int *row_of = calloc(st->n_layers, sizeof *row_of);
  double *cx_of = calloc(st->n_layers, sizeof *cx_of);
  if (!row_of || !cx_of) {
    free(row_of), free(cx_of);
    cv->bad = 1;
    return;
  }
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double cx = L + (ly->z_start_nm + ly->thickness_nm / 2) / Lz * (R - L);
    char nm[256];
    clean_text(ly->name, nm, sizeof nm);
    double w = text_width(nm, f_layer.size);
    double a = cx - w / 2;
    if (a < 4) a = 4;
    if (a + w > W - 4) a = W - 4 - w;
    int row = -1;
    for (int q = 0; q < MAX_ROWS && row < 0; q++)
      if (a >= row_end[q] + 8) row = q;
    row_of[k] = row; /* −1: no free row, the name is left out rather than overprinted */
    cx_of[k] = a + w / 2;
    if (row < 0) {
      omitted++;
      continue;
    }
    row_end[row] = a + w;
    if (row + 1 > nrows) nrows = row + 1;
  }
  const double names_base = 52 + 14.0 * (nrows - 1); /* baseline of the row next to panel */
  int any_flag = 0;
  for (size_t s = 0; s < r->n_states; s++) any_flag |= r->states[s].flagged;
  const double top = names_base + 12;
  /* below the panels: z ticks and label, one legend row, two notes (three when a level
     failed its residual check) */
  const double bottom = H - 124 - (any_flag ? 15 : 0);
  const double ph = bottom - top - BD_GAP;

  /* energy ranges: conduction panel over Ec and the electron levels, valence panel over
     both hole edges and the hole levels */
  double c_lo = INFINITY, c_hi = -INFINITY, v_lo = INFINITY, v_hi = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    c_lo = fmin(c_lo, ec[i]), c_hi = fmax(c_hi, ec[i]);
    v_lo = fmin(v_lo, fmin(ehh[i], elh[i])), v_hi = fmax(v_hi, fmax(ehh[i], elh[i]));
  }
  for (size_t s = 0; s < r->n_states; s++) {
    double e = r->states[s].energy_eV;
    if (r->states[s].band == EW_BAND_E) c_lo = fmin(c_lo, e), c_hi = fmax(c_hi, e);
    else v_lo = fmin(v_lo, e), v_hi = fmax(v_hi, e);
  }
  /* panel heights: partly by energy span (a similar eV per unit in both), mostly by how
     many levels each must show (two electrons against nine holes need room for the
     holes); neither panel gets less than 32 % so a shallow band stays readable */
  size_t cnt[2] = {0, 0};
  for (size_t s = 0; s < r->n_states; s++) cnt[r->states[s].band != EW_BAND_E]++;
  double span_c = c_hi - c_lo, span_v = v_hi - v_lo;
  double frac_span = span_c + span_v > 0 ? span_c / (span_c + span_v) : 0.5;
  double frac_lev = (cnt[0] + 1.0) / (cnt[0] + cnt[1] + 2.0);
  double frac = fmin(0.68, fmax(0.32, 0.4 * frac_span + 0.6 * frac_lev));
  panel pc = {top, ph * frac, 0, 0}, pv = {top + ph * frac + BD_GAP, ph * (1 - frac), 0, 0};
  /* room for the panel caption at the top; electrons' ψ rises above their level, holes'
     ψ hangs below it, so the valence panel keeps more room at its bottom */
  panel_fit(&pc, c_lo, c_hi, 30, 12);
  panel_fit(&pv, v_lo, v_hi, 30, 34);
  panel *pan[2] = {&pc, &pv};

  /* layer columns: alternate light shading and dotted interfaces through both panels */
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    double x0 = L + ly->z_start_nm / Lz * (R - L);
    double x1 = L + (ly->z_start_nm + ly->thickness_nm) / Lz * (R - L);
    for (int q = 0; q < 2; q++) {
      if (k % 2 == 1) cv_rect(cv, x0, pan[q]->top, x1 - x0, pan[q]->h, COL_SHADE, 1, NULL);
      if (k > 0) {
        pen dot = mkpen(COL_FAINT, 0.8, DASH_SHORT);
        cv_line(cv, x0, pan[q]->top, x0, pan[q]->top + pan[q]->h, &dot);
      }
    }
    if (row_of[k] < 0) continue;
    char nm[256];
    clean_text(ly->name, nm, sizeof nm);
    double y = names_base - 14.0 * row_of[k];
    cv_text(cv, cx_of[k], y, nm, &f_layer);
    /* names lifted to an upper row point down to their layer */
    double lx = L + (ly->z_start_nm + ly->thickness_nm / 2) / Lz * (R - L);
    if (row_of[k] > 0 || fabs(lx - cx_of[k]) > 1) {
      pen lead = mkpen(COL_FAINT, 0.7, DASH_NONE);
      cv_line(cv, cx_of[k], y + 3, lx, top - 1, &lead);
    }
  }
  free(row_of);
  free(cx_of);
  if (omitted) {
    font fo = f_small;
    fo.anchor = ANCHOR_END;
    snprintf(buf, sizeof buf, "%zu of %zu layer names left out (no room)", omitted,
             st->n_layers);
    cv_text(cv, W - 12, 26, buf, &fo);
  }

  /* band edges from the node profile (it carries whatever shape the edges have) */
  const double *edges[3] = {ec, ehh, elh};
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    const panel *p = b == EW_BAND_E ? &pc : &pv;
    size_t m = 0;
    sc->x[m] = L, sc->y[m] = panel_y(p, edges[b][0]), m++;
    for (size_t i = 0; i < n; i++, m++) {
      sc->x[m] = L + z[i] / Lz * (R - L);
      sc->y[m] = panel_y(p, edges[b][i]);
    }
    sc->x[m] = R, sc->y[m] = panel_y(p, edges[b][n - 1]), m++;
    size_t k = decimate(m, sc->x, sc->y, sc->dx, sc->dy);
    pen pe = b == EW_BAND_LH ? mkpen(band_col[EW_BAND_LH], 1.5, DASH_LONG)
                             : mkpen(COL_INK, 2.0, DASH_NONE);
    cv_path(cv, k, sc->dx, sc->dy, &pe);
  }

  /* levels: the wavefunction amplitude is one scale per panel, so relative sizes mean
     something; its height is limited by how many levels share the panel */
  double psimax[2] = {0, 0};
  for (size_t s = 0; s < r->n_states; s++) {
    int q = r->states[s].band != EW_BAND_E;
    const double *psi = ew_result_wavefunction(r, s);
    for (size_t i = 0; i < n; i++) psimax[q] = fmax(psimax[q], fabs(psi[i]));
  }
  double amp[2];
  for (int q = 0; q < 2; q++) {
    double per = pan[q]->h / (double)(cnt[q] + 1);
    amp[q] = fmin(0.16 * pan[q]->h, fmax(10.0, 0.8 * per));
  }
  const int draw_psi_max = 40; /* beyond this many levels a panel shows the lines only */
  for (size_t s = 0; s < r->n_states; s++) {
    const ew_state *qs = &r->states[s];
    int q = qs->band != EW_BAND_E;
    const panel *p = pan[q];
    const double *psi = ew_result_wavefunction(r, s);
    double peak = 0;
    for (size_t i = 0; i < n; i++) peak = fmax(peak, psi[i] * psi[i]);
    if (!(peak > 0)) continue;
    size_t a = n, b = 0, a4 = n, b4 = 0;
    for (size_t i = 0; i < n; i++) {
      double p2 = psi[i] * psi[i];
      if (p2 >= EW_PLOT_LEVEL_FRACTION * peak) {
        if (a == n) a = i;
        b = i;
      }
      if (p2 >= 1e-4 * peak) {
        if (a4 == n) a4 = i;
        b4 = i;
      }
    }
    double ye = panel_y(p, qs->energy_eV);
    double sign = qs->band == EW_BAND_E ? -1.0 : 1.0; /* away from the band edge */
    uint32_t col = band_col[qs->band];
    if (cnt[q] <= (size_t)draw_psi_max && psimax[q] > 0) {
      size_t m = 0;
      for (size_t i = a4; i <= b4; i++, m++) {
        sc->x[m] = L + z[i] / Lz * (R - L);
        double y = ye + sign * amp[q] * psi[i] / psimax[q];
        sc->y[m] = fmin(p->top + p->h, fmax(p->top, y));
      }
      size_t k = decimate(m, sc->x, sc->y, sc->dx, sc->dy);
      memcpy(sc->fx, sc->dx, k * sizeof *sc->fx);
      memcpy(sc->fy, sc->dy, k * sizeof *sc->fy);
      sc->fx[k] = sc->dx[k - 1], sc->fy[k] = ye;
      sc->fx[k + 1] = sc->dx[0], sc->fy[k + 1] = ye;
      /* light fills, lighter still where many levels overlap, so crossings stay legible */
      cv_fill(cv, k + 2, sc->fx, sc->fy, col, cnt[q] > 6 ? 0.07 : 0.12);
      pen pw = mkpen(col, 1.1, DASH_NONE);
      cv_path(cv, k, sc->dx, sc->dy, &pw);
    }
    double x0 = L + z[a] / Lz * (R - L), x1 = L + z[b] / Lz * (R - L);
    pen pl = mkpen(col, 1.8, DASH_NONE);
    cv_line(cv, x0, ye, x1, ye, &pl);
    /* a faint guide from the level to its label column at the right edge */
    pen guide = mkpen(col, 0.8, DASH_DOT);
    guide.opacity = 0.7;
    if (x1 < R - 2) cv_line(cv, x1 + 2, ye, R, ye, &guide);
  }

  /* frames and energy ticks */
  for (int q = 0; q < 2; q++) {
    const panel *p = pan[q];
    cv_rect(cv, L, p->top, R - L, p->h, 0, 0, &frame);
    ticks t = nice_ticks(p->e_lo, p->e_hi, (int)(p->h / 42) + 1);
    for (int i = 0; i < t.count; i++) {
      double e = t.first + i * t.step, y = panel_y(p, e);
      if (y < p->top - 0.5 || y > p->top + p->h + 0.5) continue;
      cv_line(cv, L - 5, y, L, y, &tick);
      cv_line(cv, R, y, R + 4, y, &tick);
      char lab[64];
      fmt_tick(lab, sizeof lab, e, t.step, t.dec);
      cv_text(cv, L - 8, y + 4, lab, &f_tick);
    }
    font cap = mkfont(11.5, ANCHOR_START, COL_MUTED);
    cap.bold = 1;
    cv_text(cv, L + 8, p->top + 17, q == 0 ? "conduction band" : "valence band", &cap);
  }
  font f_ylab = f_axis;
  f_ylab.vertical = 1;
  cv_text(cv, 24, top + ph / 2, "energy (eV, absolute scale)", &f_ylab);

  /* the broken energy axis: slanted marks on both axes and what was left out */
  {
    double yb = pc.top + pc.h, yt = pv.top;
    pen brk = mkpen(COL_FRAME, 1.2, DASH_NONE);
    for (int side = 0; side < 2; side++) {
      double xa = side ? R : L;
      cv_line(cv, xa - 6, yb + 9, xa + 6, yb + 3, &brk);
      cv_line(cv, xa - 6, yt - 3, xa + 6, yt - 9, &brk);
    }
    char gap[64], msg[160];
    fmt_num(gap, sizeof gap, pc.e_lo - pv.e_hi, 3);
    snprintf(msg, sizeof msg, "energy axis broken: %s eV between the panels left out", gap);
    font fi = mkfont(10.5, ANCHOR_MIDDLE, COL_MUTED);
    fi.italic = 1;
    cv_text(cv, (L + R) / 2, (yb + yt) / 2 + 4, msg, &fi);
  }

  /* shared z axis: ticks on both panels, labels under the lower one */
  {
    ticks t = nice_ticks(0, Lz, 8);
    font fz = mkfont(11, ANCHOR_MIDDLE, COL_INK);
    for (int i = 0; i < t.count; i++) {
      double zz = t.first + i * t.step, x = L + zz / Lz * (R - L);
      for (int q = 0; q < 2; q++) cv_line(cv, x, pan[q]->top + pan[q]->h, x, pan[q]->top + pan[q]->h - 5, &tick);
      cv_line(cv, x, pv.top + pv.h, x, pv.top + pv.h + 5, &tick);
      char lab[64];
      fmt_tick(lab, sizeof lab, zz, t.step, t.dec);
      cv_text(cv, x, pv.top + pv.h + 18, lab, &fz);
    }
    cv_text(cv, (L + R) / 2, pv.top + pv.h + 36, "position z along the growth direction (nm)",
            &f_axis);
  }

  /* label columns at the right: name and energy, spread so they never overlap, joined to
     their level by a short elbow */
  {
    font fl = mkfont(11, ANCHOR_START, COL_INK);
    const double d = 13.5;
    slot *sl = malloc((r->n_states + 1) * sizeof *sl);
    if (!sl) {
      cv->bad = 1;
      return;
    }
    for (int q = 0; q < 2; q++) {
      const panel *p = pan[q];
      size_t m = 0;
      for (size_t s = 0; s < r->n_states; s++) {
        if ((r->states[s].band != EW_BAND_E) != q) continue;
        sl[m].want = panel_y(p, r->states[s].energy_eV);
        sl[m].state = s;
        m++;
      }
      size_t cap = (size_t)((p->h - 8) / d);
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
      spread(sl, shown, d, p->top + 8, p->top + p->h - 6 - (shown < m ? d : 0));
      /* energies start in one column after the widest name (SVG collapses runs of
         spaces, so the gap is a position, not padding) */
      double namew = 0;
      for (size_t j = 0; j < shown; j++) {
        const ew_state *qs = &r->states[sl[j].state];
        namew = fmax(namew, text_width(qs->label, 11) * 1.08 + (qs->flagged ? 7 : 0));
      }
      for (size_t j = 0; j < shown; j++) {
        const ew_state *qs = &r->states[sl[j].state];
        pen elbow = mkpen(band_col[qs->band], 0.9, DASH_NONE);
        double xs[3] = {R, R + 9, R + 21}, ys[3] = {sl[j].want, sl[j].want, sl[j].at};
        cv_path(cv, 3, xs, ys, &elbow);
        char e[48], lab[80];
        fmt_num(e, sizeof e, qs->energy_eV, 4);
        /* the name in its band's colour and bold, the energy in plain ink */
        snprintf(lab, sizeof lab, "%s%s", qs->label, qs->flagged ? "*" : "");
        fl.rgb = qs->flagged ? COL_WARN : band_col[qs->band];
        fl.bold = 1;
        cv_text(cv, R + 25, sl[j].at + 4, lab, &fl);
        fl.bold = 0;
        fl.rgb = COL_INK;
        snprintf(lab, sizeof lab, "%s eV", e);
        cv_text(cv, R + 25 + namew + 7, sl[j].at + 4, lab, &fl);
      }
      if (shown < m) {
        snprintf(buf, sizeof buf, "(+%zu more levels)", m - shown);
        cv_text(cv, R + 25, p->top + p->h - 4, buf, &f_small);
      }
      if (m == 0) cv_text(cv, R + 12, p->top + p->h / 2, "no bound level", &f_small);
    }
    free(sl);
  }

  /* legend and notes below the axis */
  {
    legend_item items[] = {
        {"Ec, Ev heavy hole", mkpen(COL_INK, 2.0, DASH_NONE), 0},
        {"Ev light hole", mkpen(band_col[EW_BAND_LH], 1.5, DASH_LONG), 0},
        {"electron level, \xcf\x88", mkpen(band_col[EW_BAND_E], 1.8, DASH_NONE), 1},
        {"heavy-hole level, \xcf\x88", mkpen(band_col[EW_BAND_HH], 1.8, DASH_NONE), 1},
        {"light-hole level, \xcf\x88", mkpen(band_col[EW_BAND_LH], 1.8, DASH_NONE), 1},
    };
    double x = L, y = pv.top + pv.h + 64;
    font fl = mkfont(11, ANCHOR_START, COL_INK);
    for (size_t k = 0; k < sizeof items / sizeof items[0]; k++) {
      double w = 34 + text_width(items[k].text, fl.size) + 22;
      if (x + w > W - 20 && x > L) x = L, y += 20;
      cv_line(cv, x, y - 4, x + 28, y - 4, &items[k].line);
      if (items[k].wave) {
        double xs[15], ys[15];
        for (int i = 0; i < 15; i++) {
          xs[i] = x + 2 + i * 24.0 / 14;
          ys[i] = y - 4 - 6 * sin(PI * i / 14.0);
        }
        pen pw = mkpen(items[k].line.rgb, 1.1, DASH_NONE);
        cv_path(cv, 15, xs, ys, &pw);
      }
      cv_text(cv, x + 34, y, items[k].text, &fl);
      x += w;
    }
    y += 22;
    snprintf(buf, sizeof buf,
             "Each level is drawn where |\xcf\x88|\xc2\xb2 > %g %% of its peak. \xcf\x88 "
             "(largest lobe positive, one scale per panel) is drawn about its level, away "
             "from the band edge.",
             EW_PLOT_LEVEL_FRACTION * 100);
    cv_text(cv, L, y, buf, &f_small);
    y += 15;
    snprintf(buf, sizeof buf,
             "Energies are absolute (eV); hole levels lie below the valence edge. Shaded "
             "columns alternate layers.");
    cv_text(cv, L, y, buf, &f_small);
    if (any_flag) {
      y += 15;
      font fw = f_small;
      fw.rgb = COL_WARN;
      cv_text(cv, L, y, "* residual check failed for this level: treat its numbers with care.",
              &fw);
    }
  }
}

/* ---- line chart ------------------------------------------------------------------------ */
typedef struct {
  const char *title, *xlabel, *ylabel;
  size_t npoints, nseries;
  const double *x;
  const double *const *y;
  const char *const *names;
} xy_args;

/* Eight hues for white paper, paired with dash patterns that change every eight series so
 * a grey-scale print still tells the lines apart. */
static const uint32_t palette[8] = {0x1f5fa8u, 0xc0392bu, 0x1b7a3du, 0x7d3c98u,
                                    0xd68910u, 0x117a8bu, 0x6e2c00u, 0x4d4d4du};

static void draw_xy(canvas *cv, const xy_args *a, scratch *sc) {
  const double W = EW_PLOT_XY_W, H = EW_PLOT_XY_H;
  char buf[1200];
  cv_rect(cv, 0, 0, W, H, 0xffffffu, 1, NULL);
  font f_title = mkfont(15, ANCHOR_START, COL_INK);
  f_title.bold = 1;
  font f_tick = mkfont(11, ANCHOR_END, COL_INK);
  font f_axis = mkfont(12, ANCHOR_MIDDLE, COL_INK);
  font f_leg = mkfont(11, ANCHOR_START, COL_INK);
  pen frame = mkpen(COL_FRAME, 1, DASH_NONE), tick = frame, grid = mkpen(COL_GRID, 0.8, 0);

  /* legend column width from the names, within limits */
  double legw = 0;
  for (size_t s = 0; s < a->nseries; s++) {
    const char *nm = a->names && a->names[s] ? a->names[s] : NULL;
    char tmp[256];
    if (nm) clean_text(nm, tmp, sizeof tmp);
    else snprintf(tmp, sizeof tmp, "series %zu", s + 1);
    legw = fmax(legw, text_width(tmp, f_leg.size));
  }
  legw = fmin(240, fmax(80, legw)) + 56; /* sample line, gap, right margin */
  const double L = 84, T = a->title ? 48 : 24, R = W - legw - 12, B = H - 62;

  if (a->title) cv_text(cv, L, 28, a->title, &f_title);

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
  int have = isfinite(x_lo);
  if (!have) x_lo = 0, x_hi = 1, y_lo = 0, y_hi = 1;
  if (!(x_hi > x_lo)) {
    double d = fmax(0.5, 0.05 * fabs(x_lo));
    x_lo -= d, x_hi += d;
  }
  if (!(y_hi > y_lo)) {
    double d = fmax(0.5, 0.05 * fabs(y_lo));
    y_lo -= d, y_hi += d;
  }
  double pad = 0.05 * (y_hi - y_lo); /* lines at the extremes stay clear of the frame */
  y_lo -= pad, y_hi += pad;
#define XP(v) (L + ((v) - x_lo) / (x_hi - x_lo) * (R - L))
#define YP(v) (B - ((v) - y_lo) / (y_hi - y_lo) * (B - T))
  ticks tx = nice_ticks(x_lo, x_hi, (int)((R - L) / 90) + 1);
  ticks ty = nice_ticks(y_lo, y_hi, (int)((B - T) / 50) + 1);
  font fx = mkfont(11, ANCHOR_MIDDLE, COL_INK);
  for (int i = 0; i < tx.count; i++) {
    double v = tx.first + i * tx.step, px = XP(v);
    cv_line(cv, px, T, px, B, &grid);
    cv_line(cv, px, B, px, B + 5, &tick);
    fmt_tick(buf, sizeof buf, v, tx.step, tx.dec);
    cv_text(cv, px, B + 18, buf, &fx);
  }
  for (int i = 0; i < ty.count; i++) {
    double v = ty.first + i * ty.step, py = YP(v);
    cv_line(cv, L, py, R, py, &grid);
    cv_line(cv, L - 5, py, L, py, &tick);
    fmt_tick(buf, sizeof buf, v, ty.step, ty.dec);
    cv_text(cv, L - 8, py + 4, buf, &f_tick);
  }
  cv_rect(cv, L, T, R - L, B - T, 0, 0, &frame);
  if (a->xlabel) cv_text(cv, (L + R) / 2, B + 40, a->xlabel, &f_axis);
  if (a->ylabel) {
    font fv = f_axis;
    fv.vertical = 1;
    cv_text(cv, 22, (T + B) / 2, a->ylabel, &fv);
  }
  if (!have) {
    font fm = mkfont(13, ANCHOR_MIDDLE, COL_MUTED);
    cv_text(cv, (L + R) / 2, (T + B) / 2, "no finite data", &fm);
  }

  for (size_t s = 0; s < a->nseries; s++) {
    static const int dashes[3] = {DASH_NONE, DASH_LONG, DASH_SHORT};
    pen p = mkpen(palette[s % 8], 1.8, dashes[(s / 8) % 3]);
    const double *y = a->y[s];
    size_t m = 0;
    for (size_t i = 0; i < a->npoints; i++, m++) {
      int ok = isfinite(a->x[i]) && isfinite(y[i]);
      sc->x[m] = ok ? XP(a->x[i]) : NAN;
      sc->y[m] = ok ? YP(y[i]) : NAN;
      /* a finite point between two gaps would vanish as a line: mark it with a dot */
      int prev = i > 0 && isfinite(a->x[i - 1]) && isfinite(y[i - 1]);
      int next = i + 1 < a->npoints && isfinite(a->x[i + 1]) && isfinite(y[i + 1]);
      if (ok && !prev && !next) {
        double cx[13], cy[13];
        for (int k = 0; k < 12; k++) {
          cx[k] = sc->x[m] + 2.6 * cos(2 * PI * k / 12);
          cy[k] = sc->y[m] + 2.6 * sin(2 * PI * k / 12);
        }
        cv_fill(cv, 12, cx, cy, p.rgb, 1);
      }
    }
    size_t k = decimate(m, sc->x, sc->y, sc->dx, sc->dy);
    cv_path(cv, k, sc->dx, sc->dy, &p);
    /* legend entry */
    double ly = T + 14 + 18.0 * (double)s;
    if (ly > B) continue; /* more series than the column holds: the rest go unnamed */
    cv_line(cv, R + 16, ly - 4, R + 44, ly - 4, &p);
    char tmp[256];
    if (a->names && a->names[s]) clean_text(a->names[s], tmp, sizeof tmp);
    else snprintf(tmp, sizeof tmp, "series %zu", s + 1);
    /* shorten names that would run off the picture */
    while (strlen(tmp) > 4 && text_width(tmp, f_leg.size) > legw - 56) {
      size_t len = strlen(tmp) - 1;
      while (len > 0 && ((unsigned char)tmp[len] & 0xC0) == 0x80) len--;
      tmp[len] = '\0';
      if (len >= 1) {
        size_t cut = len - 1;
        while (cut > 0 && ((unsigned char)tmp[cut] & 0xC0) == 0x80) cut--;
        snprintf(tmp + cut, sizeof tmp - cut, "\xe2\x80\xa6");
      }
    }
    cv_text(cv, R + 50, ly, tmp, &f_leg);
  }
#undef XP
#undef YP
}

/* ---- files ----------------------------------------------------------------------------- */
int ew_plot_format(const char *path) {
  if (!path) return 0;
  size_t n = strlen(path);
  if (n < 5 || path[n - 4] != '.') return 0;
  char e[4];
  for (int k = 0; k < 3; k++) {
    char c = path[n - 3 + k];
    e[k] = (char)(c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c);
  }
  e[3] = '\0';
  if (path[n - 5] == '/') return 0; /* ".svg" alone is a hidden file, not a picture name */
  if (!strcmp(e, "svg")) return 's';
  if (!strcmp(e, "png")) return 'p';
  return 0;
}

/* Directory part of path ("." when there is none). */
static void dir_of(const char *path, char *dir, size_t cap) {
  const char *sl = strrchr(path, '/');
  if (!sl) snprintf(dir, cap, ".");
  else if (sl == path) snprintf(dir, cap, "/");
  else snprintf(dir, cap, "%.*s", (int)(sl - path), path);
}

ew_status ew_plot_check_path(const char *path, ew_error *err) {
  if (!path || !ew_plot_format(path))
    return ew_fail(err, EW_ERR_USAGE, path, 0, "a picture file name must end in .svg or .png");
  char dir[1024];
  dir_of(path, dir, sizeof dir);
  struct stat sb;
  if (stat(dir, &sb) != 0 || !S_ISDIR(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, path, 0, "directory %s does not exist", dir);
  if (access(dir, W_OK | X_OK) != 0)
    return ew_fail(err, EW_ERR_IO, path, 0, "directory %s is not writable: %s", dir,
                   strerror(errno));
  if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, path, 0, "exists and is not a regular file");
  return EW_OK;
}

static cairo_status_t png_sink(void *closure, const unsigned char *data, unsigned int len) {
  return fwrite(data, 1, len, (FILE *)closure) == len ? CAIRO_STATUS_SUCCESS
                                                      : CAIRO_STATUS_WRITE_ERROR;
}

typedef void (*draw_fn)(canvas *, const void *, scratch *);

static void draw_band_cb(canvas *cv, const void *ctx, scratch *sc) { draw_band(cv, ctx, sc); }
static void draw_xy_cb(canvas *cv, const void *ctx, scratch *sc) { draw_xy(cv, ctx, sc); }

static void svg_open(FILE *f, int w, int h, const char *title) {
  fprintf(f,
          "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%d\" height=\"%d\" "
          "viewBox=\"0 0 %d %d\" font-family=\"%s\" role=\"img\">\n<title>",
          w, h, w, h, SVG_FONTS);
  char t[512];
  clean_text(title, t, sizeof t);
  svg_escaped(f, t);
  fputs("</title>\n", f);
}

/* Draw onto an open stream (SVG) or a fresh image surface written as PNG to the stream. */
static ew_status render(FILE *f, int fmt, int w, int h, const char *title, draw_fn draw,
                        const void *ctx, size_t npoints, ew_error *err) {
  scratch sc = {0};
  if (!scratch_alloc(&sc, npoints)) {
    scratch_free(&sc);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture of %zu points)", npoints);
  }
  ew_status rc = EW_OK;
  canvas cv = {0};
  if (fmt == 's') {
    cv.out = f;
    svg_open(f, w, h, title);
    draw(&cv, ctx, &sc);
    fputs("</svg>\n", f);
    if (cv.bad) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
    else if (ferror(f)) rc = ew_fail(err, EW_ERR_IO, NULL, 0, "write failed (disk full?)");
  } else {
    cairo_surface_t *sf = cairo_image_surface_create(CAIRO_FORMAT_RGB24, w * EW_PLOT_PNG_SCALE,
                                                     h * EW_PLOT_PNG_SCALE);
    cairo_t *cr = cairo_create(sf);
    if (cairo_status(cr) != CAIRO_STATUS_SUCCESS) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "cannot create a %dx%d image: %s",
                   w * EW_PLOT_PNG_SCALE, h * EW_PLOT_PNG_SCALE,
                   cairo_status_to_string(cairo_status(cr)));
    } else {
      cairo_scale(cr, EW_PLOT_PNG_SCALE, EW_PLOT_PNG_SCALE);
      cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
      cairo_set_line_cap(cr, CAIRO_LINE_CAP_BUTT);
      cv.png = 1;
      cv.cr = cr;
      draw(&cv, ctx, &sc);
      cairo_surface_flush(sf);
      cairo_status_t cs = cairo_status(cr);
      if (cv.bad) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
      else if (cs != CAIRO_STATUS_SUCCESS)
        rc = ew_fail(err, cs == CAIRO_STATUS_NO_MEMORY ? EW_ERR_NOMEM : EW_ERR_IO, NULL, 0,
                     "drawing failed: %s", cairo_status_to_string(cs));
      else if ((cs = cairo_surface_write_to_png_stream(sf, png_sink, f)) != CAIRO_STATUS_SUCCESS)
        rc = ew_fail(err, EW_ERR_IO, NULL, 0, "PNG write failed: %s", cairo_status_to_string(cs));
    }
    cairo_destroy(cr);
    cairo_surface_destroy(sf);
  }
  scratch_free(&sc);
  return rc;
}

/* Write a picture to path atomically: a temporary file in the same directory (so rename
 * cannot cross file systems), renamed into place only when complete. */
static ew_status write_file(const char *path, int w, int h, const char *title, draw_fn draw,
                            const void *ctx, size_t npoints, ew_error *err) {
  ew_status rc = ew_plot_check_path(path, err);
  if (rc != EW_OK) return rc;
  int fmt = ew_plot_format(path);
  char dir[1024], tmp[1400];
  dir_of(path, dir, sizeof dir);
  snprintf(tmp, sizeof tmp, "%s/.%.200s.tmp%ld", dir, base_name(path), (long)getpid());
  FILE *f = fopen(tmp, "wb");
  if (!f) return ew_fail(err, EW_ERR_IO, tmp, 0, "cannot write: %s", strerror(errno));
  rc = render(f, fmt, w, h, title, draw, ctx, npoints, err);
  if (fclose(f) != 0 && rc == EW_OK)
    rc = ew_fail(err, EW_ERR_IO, path, 0, "write failed (disk full?)");
  if (rc == EW_OK && rename(tmp, path) != 0)
    rc = ew_fail(err, EW_ERR_IO, path, 0, "cannot rename into place: %s", strerror(errno));
  if (rc != EW_OK) {
    remove(tmp);
    /* render() cannot know the file name: name it in the report */
    if (err && !err->file[0]) snprintf(err->file, sizeof err->file, "%s", path);
  }
  return rc;
}

static void band_title(const ew_result *r, char *buf, size_t cap) {
  snprintf(buf, cap, "Band diagram of %s", r->stack->path[0] ? base_name(r->stack->path) : "a stack");
}

ew_status ew_plot_band_diagram(const ew_result *r, const char *path, ew_error *err) {
  if (!r || !path) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_plot_band_diagram: NULL argument");
  char title[600];
  band_title(r, title, sizeof title);
  return write_file(path, EW_PLOT_BAND_W, EW_PLOT_BAND_H, title, draw_band_cb, r,
                    r->grid->n + 2, err);
}

ew_status ew_plot_band_diagram_svg(const ew_result *r, FILE *out, ew_error *err) {
  if (!r || !out)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_plot_band_diagram_svg: NULL argument");
  char title[600];
  band_title(r, title, sizeof title);
  return render(out, 's', EW_PLOT_BAND_W, EW_PLOT_BAND_H, title, draw_band_cb, r,
                r->grid->n + 2, err);
}

ew_status ew_plot_xy(const char *path, const char *title, const char *xlabel,
                     const char *ylabel, size_t npoints, const double *x, size_t nseries,
                     const double *const *y, const char *const *names, ew_error *err) {
  if (!path || npoints == 0 || nseries == 0 || !x || !y)
    return ew_fail(err, EW_ERR_USAGE, path, 0,
                   "ew_plot_xy needs a path, at least one point and one series");
  for (size_t s = 0; s < nseries; s++)
    if (!y[s]) return ew_fail(err, EW_ERR_USAGE, path, 0, "ew_plot_xy: series %zu is NULL", s + 1);
  xy_args a = {title, xlabel, ylabel, npoints, nseries, x, y, names};
  return write_file(path, EW_PLOT_XY_W, EW_PLOT_XY_H, title ? title : "line chart", draw_xy_cb,
                    &a, npoints, err);
}
