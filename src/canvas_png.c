/* canvas_png.c — the PNG back end of the canvas (see canvas.h), the library's only cairo
 * user: rasterising anti-aliased lines and real text is far beyond a few lines of code.
 * Coordinates are SVG user units scaled by the caller's pixels per unit. */
#include <cairo.h>
#include <math.h>
#include <stdlib.h>

#include "canvas.h"
#include "constants.h"
#include "error.h"

typedef struct {
  cairo_surface_t *sf;
  cairo_t *cr;
} png_state;

static cairo_t *cr_of(ew_canvas *cv) { return ((png_state *)cv->impl)->cr; }

static void cr_rgb(cairo_t *cr, uint32_t rgb, double alpha) {
  cairo_set_source_rgba(cr, ((rgb >> 16) & 0xff) / 255.0, ((rgb >> 8) & 0xff) / 255.0,
                        (rgb & 0xff) / 255.0, alpha);
}

/* The same dash patterns as the SVG back end's stroke-dasharray. */
static void cr_pen(cairo_t *cr, const ew_pen *p) {
  cr_rgb(cr, p->rgb, p->opacity);
  cairo_set_line_width(cr, p->width);
  static const double dl[] = {7, 4}, dd[] = {1.2, 3}, ds[] = {3, 3};
  switch (p->dash) {
  case EW_DASH_LONG: cairo_set_dash(cr, dl, 2, 0); break;
  case EW_DASH_DOT: cairo_set_dash(cr, dd, 2, 0); break;
  case EW_DASH_SHORT: cairo_set_dash(cr, ds, 2, 0); break;
  default: cairo_set_dash(cr, NULL, 0, 0);
  }
}

static void png_path(ew_canvas *cv, size_t n, const double *x, const double *y,
                     const ew_pen *p) {
  cairo_t *cr = cr_of(cv);
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
}

static void png_fill(ew_canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
                     double opacity) {
  cairo_t *cr = cr_of(cv);
  cairo_new_path(cr);
  for (size_t i = 0; i < n; i++) {
    if (i) cairo_line_to(cr, x[i], y[i]);
    else cairo_move_to(cr, x[i], y[i]);
  }
  cairo_close_path(cr);
  cr_rgb(cr, rgb, opacity);
  cairo_fill(cr);
}

static void png_rect(ew_canvas *cv, double x, double y, double w, double h, uint32_t fill,
                     double fill_opacity, const ew_pen *stroke) {
  cairo_t *cr = cr_of(cv);
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
}

static void png_text(ew_canvas *cv, double x, double y, const char *s, const ew_font *ft) {
  cairo_t *cr = cr_of(cv);
  cairo_save(cr);
  cairo_select_font_face(cr, EW_FONT_FAMILY,
                         ft->italic ? CAIRO_FONT_SLANT_ITALIC : CAIRO_FONT_SLANT_NORMAL,
                         ft->bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, ft->size);
  cairo_text_extents_t ex;
  cairo_text_extents(cr, s, &ex);
  /* the renderer's own width aligns the text, as text-anchor does in SVG */
  double dx = ft->anchor == EW_ANCHOR_MIDDLE ? -ex.x_advance / 2
              : ft->anchor == EW_ANCHOR_END  ? -ex.x_advance
                                             : 0;
  cairo_translate(cr, x, y);
  if (ft->vertical) cairo_rotate(cr, -EW_PI / 2);
  cairo_move_to(cr, dx, 0);
  cr_rgb(cr, ft->rgb, 1.0);
  cairo_show_text(cr, s);
  cairo_new_path(cr);
  cairo_restore(cr);
}

static const ew_canvas_ops png_ops = {png_path, png_fill, png_rect, png_text};

ew_status ew_canvas_png_begin(ew_canvas *cv, int w, int h, int scale, ew_error *err) {
  cv->ops = &png_ops;
  cv->bad = 0;
  png_state *ps = calloc(1, sizeof *ps);
  cv->impl = ps;
  if (!ps) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
  ps->sf = cairo_image_surface_create(CAIRO_FORMAT_RGB24, w * scale, h * scale);
  ps->cr = cairo_create(ps->sf);
  if (cairo_status(ps->cr) != CAIRO_STATUS_SUCCESS)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "cannot create a %dx%d image: %s", w * scale,
                   h * scale, cairo_status_to_string(cairo_status(ps->cr)));
  cairo_scale(ps->cr, scale, scale);
  cairo_set_line_join(ps->cr, CAIRO_LINE_JOIN_ROUND);
  cairo_set_line_cap(ps->cr, CAIRO_LINE_CAP_BUTT);
  return EW_OK;
}

static cairo_status_t png_sink(void *closure, const unsigned char *data, unsigned int len) {
  return fwrite(data, 1, len, (FILE *)closure) == len ? CAIRO_STATUS_SUCCESS
                                                      : CAIRO_STATUS_WRITE_ERROR;
}

ew_status ew_canvas_png_end(ew_canvas *cv, FILE *out, ew_error *err) {
  png_state *ps = cv->impl;
  ew_status rc = EW_OK;
  if (!ps) return EW_OK;
  if (out) {
    cairo_surface_flush(ps->sf);
    cairo_status_t cs = cairo_status(ps->cr);
    if (cv->bad) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
    else if (cs != CAIRO_STATUS_SUCCESS)
      rc = ew_fail(err, cs == CAIRO_STATUS_NO_MEMORY ? EW_ERR_NOMEM : EW_ERR_IO, NULL, 0,
                   "drawing failed: %s", cairo_status_to_string(cs));
    else if ((cs = cairo_surface_write_to_png_stream(ps->sf, png_sink, out)) !=
             CAIRO_STATUS_SUCCESS)
      rc = ew_fail(err, EW_ERR_IO, NULL, 0, "PNG write failed: %s", cairo_status_to_string(cs));
  }
  cairo_destroy(ps->cr);
  cairo_surface_destroy(ps->sf);
  free(ps);
  cv->impl = NULL;
  return rc;
}
