/* canvas.h — the drawing surface the pictures are drawn on: polylines, filled polygons,
 * rectangles and text, in SVG user units (CSS px) with y pointing down.  Two back ends
 * implement it: canvas_svg.c writes SVG text of our own (searchable labels, inlined by the
 * report), canvas_png.c rasterises through cairo (the only cairo user).  The drawing code
 * (band_diagram.c, xy_chart.c) sees only this header, so both formats get the same picture.
 *
 * The front functions below clean text (valid UTF-8, no control characters) and skip what
 * would draw nothing, then call the back end.  A back end that runs out of memory, or a
 * drawing function that does, sets cv->bad; the file writer (plot.c) reports it. */
#ifndef EW_CANVAS_H
#define EW_CANVAS_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "epiwell.h"

enum { EW_DASH_NONE = 0, EW_DASH_LONG = 1, EW_DASH_DOT = 2, EW_DASH_SHORT = 3 };
enum { EW_ANCHOR_START = -1, EW_ANCHOR_MIDDLE = 0, EW_ANCHOR_END = 1 };

/* The fonts asked for: DejaVu Sans by name for PNG; the SVG lists wide fallbacks after it,
 * because the text-width estimate (ew_text_width) is tuned to wide fonts and narrower ones
 * only leave more room. */
#define EW_FONT_FAMILY "DejaVu Sans"
#define EW_SVG_FONTS "DejaVu Sans, Verdana, Arial, Helvetica, sans-serif"

typedef struct {
  uint32_t rgb; /* 0xRRGGBB */
  double width;
  int dash;     /* EW_DASH_* */
  double opacity;
} ew_pen;

typedef struct {
  double size;
  int anchor; /* EW_ANCHOR_* */
  uint32_t rgb;
  int bold, italic;
  int vertical; /* 1: rotated a quarter turn counter-clockwise (reads bottom to top) */
} ew_font;

ew_pen ew_pen_make(uint32_t rgb, double width, int dash);   /* opaque */
ew_font ew_font_make(double size, int anchor, uint32_t rgb); /* upright, regular */

typedef struct ew_canvas ew_canvas;

/* What a back end implements.  text gets cleaned, non-empty text. */
typedef struct {
  void (*path)(ew_canvas *cv, size_t n, const double *x, const double *y, const ew_pen *p);
  void (*fill)(ew_canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
               double opacity);
  void (*rect)(ew_canvas *cv, double x, double y, double w, double h, uint32_t fill,
               double fill_opacity, const ew_pen *stroke);
  void (*text)(ew_canvas *cv, double x, double y, const char *text, const ew_font *ft);
} ew_canvas_ops;

struct ew_canvas {
  const ew_canvas_ops *ops;
  void *impl; /* the back end's state */
  int bad;    /* out of memory while drawing */
};

/* Polyline through n points; a non-finite coordinate breaks it into pieces. */
void ew_cv_path(ew_canvas *cv, size_t n, const double *x, const double *y, const ew_pen *p);
void ew_cv_line(ew_canvas *cv, double x0, double y0, double x1, double y1, const ew_pen *p);
/* Closed polygon filled with rgb at the given opacity (no outline); n < 3 draws nothing. */
void ew_cv_fill(ew_canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
                double opacity);
/* Rectangle: filled when fill_opacity > 0, outlined when stroke is not NULL. */
void ew_cv_rect(ew_canvas *cv, double x, double y, double w, double h, uint32_t fill,
                double fill_opacity, const ew_pen *stroke);
/* Text with its baseline at y, cleaned first (ew_text_clean, up to 1023 bytes). */
void ew_cv_text(ew_canvas *cv, double x, double y, const char *text, const ew_font *ft);

/* Copy s into out as valid UTF-8 without control characters (XML refuses them and cairo
 * stops drawing on invalid UTF-8): every bad byte becomes '?'.  Truncates at cap on a code
 * point boundary.  NULL is the empty string. */
void ew_text_clean(const char *s, char *out, size_t cap);
/* Estimated advance of s at font size `size`, for wide sans fonts (DejaVu Sans, Verdana).
 * Errs on the wide side so that estimated gaps are real gaps; layout uses this, never a
 * measurement, so both back ends lay out the same picture. */
double ew_text_width(const char *s, double size);

/* ---- back ends ------------------------------------------------------------------------ */
/* SVG on out: ew_canvas_svg_begin writes the <svg> element (w × h units) with its <title>
 * and sets up cv; ew_canvas_svg_end closes it.  Write errors stay in out's error flag. */
void ew_canvas_svg_begin(ew_canvas *cv, FILE *out, int w, int h, const char *title);
void ew_canvas_svg_end(ew_canvas *cv);

/* PNG: an image of w × h units at `scale` pixels per unit (canvas_png.c, cairo).  _begin
 * returns EW_ERR_NOMEM when the image cannot be made; _end checks the drawing, writes the
 * PNG to out (when out is not NULL) and frees everything (also after a failed _begin). */
ew_status ew_canvas_png_begin(ew_canvas *cv, int w, int h, int scale, ew_error *err);
ew_status ew_canvas_png_end(ew_canvas *cv, FILE *out, ew_error *err);

#endif
