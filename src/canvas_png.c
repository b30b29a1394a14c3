/* canvas_png.c — the PNG back end of the canvas (see canvas.h), the library's only cairo
 * user: rasterising anti-aliased lines and real text is far beyond a few lines of code.
 * cairo is opened when a PNG is first drawn (dynlib.h: it is not linked, so that the runs
 * without a PNG do not load it); its functions are called through the table below.
 * Coordinates are SVG user units scaled by the caller's pixels per unit. */
#include <cairo.h>
#include <math.h>
#include <stddef.h>
#include <stdlib.h>

#include "canvas.h"
#include "constants.h"
#include "dynlib.h"
#include "error.h"

/* the cairo functions used: return type, name without "cairo_", parameters */
#define CAIRO_FUNCTIONS(X)                                                                     \
  X(cairo_surface_t *, image_surface_create, (cairo_format_t, int, int))                       \
  X(cairo_t *, create, (cairo_surface_t *))                                                    \
  X(cairo_status_t, status, (cairo_t *))                                                       \
  X(const char *, status_to_string, (cairo_status_t))                                          \
  X(void, scale, (cairo_t *, double, double))                                                  \
  X(void, set_line_join, (cairo_t *, cairo_line_join_t))                                       \
  X(void, set_line_cap, (cairo_t *, cairo_line_cap_t))                                         \
  X(void, set_source_rgba, (cairo_t *, double, double, double, double))                        \
  X(void, set_line_width, (cairo_t *, double))                                                 \
  X(void, set_dash, (cairo_t *, const double *, int, double))                                  \
  X(void, new_path, (cairo_t *))                                                               \
  X(void, move_to, (cairo_t *, double, double))                                                \
  X(void, line_to, (cairo_t *, double, double))                                                \
  X(void, close_path, (cairo_t *))                                                             \
  X(void, rectangle, (cairo_t *, double, double, double, double))                              \
  X(void, stroke, (cairo_t *))                                                                 \
  X(void, fill, (cairo_t *))                                                                   \
  X(void, fill_preserve, (cairo_t *))                                                          \
  X(void, save, (cairo_t *))                                                                   \
  X(void, restore, (cairo_t *))                                                                \
  X(void, select_font_face, (cairo_t *, const char *, cairo_font_slant_t, cairo_font_weight_t)) \
  X(void, set_font_size, (cairo_t *, double))                                                  \
  X(void, text_extents, (cairo_t *, const char *, cairo_text_extents_t *))                     \
  X(void, translate, (cairo_t *, double, double))                                              \
  X(void, rotate, (cairo_t *, double))                                                         \
  X(void, show_text, (cairo_t *, const char *))                                                \
  X(void, surface_flush, (cairo_surface_t *))                                                  \
  X(cairo_status_t, surface_write_to_png_stream,                                               \
    (cairo_surface_t *, cairo_write_func_t, void *))                                           \
  X(void, destroy, (cairo_t *))                                                                \
  X(void, surface_destroy, (cairo_surface_t *))

typedef struct {
#define CAIRO_FIELD(ret, name, args) ret(*name) args;
  CAIRO_FUNCTIONS(CAIRO_FIELD)
#undef CAIRO_FIELD
} cairo_api;

static const ew_dynsym cairo_syms[] = {
#define CAIRO_SYM(ret, name, args) {"cairo_" #name, offsetof(cairo_api, name)},
    CAIRO_FUNCTIONS(CAIRO_SYM)
#undef CAIRO_SYM
};

/* Debian's runtime package names it libcairo.so.2; the development link as a fallback */
static const char *const cairo_names[] = {"libcairo.so.2", "libcairo.so"};

typedef struct {
  void *lib;
  cairo_api c;
  cairo_surface_t *sf;
  cairo_t *cr;
} png_state;

static png_state *ps_of(ew_canvas *cv) { return cv->impl; }

static void cr_rgb(const png_state *ps, uint32_t rgb, double alpha) {
  ps->c.set_source_rgba(ps->cr, ((rgb >> 16) & 0xff) / 255.0, ((rgb >> 8) & 0xff) / 255.0,
                        (rgb & 0xff) / 255.0, alpha);
}

/* The same dash patterns as the SVG back end's stroke-dasharray. */
static void cr_pen(const png_state *ps, const ew_pen *p) {
  cairo_t *cr = ps->cr;
  cr_rgb(ps, p->rgb, p->opacity);
  ps->c.set_line_width(cr, p->width);
  static const double dl[] = {7, 4}, dd[] = {1.2, 3}, ds[] = {3, 3};
  switch (p->dash) {
  case EW_DASH_LONG: ps->c.set_dash(cr, dl, 2, 0); break;
  case EW_DASH_DOT: ps->c.set_dash(cr, dd, 2, 0); break;
  case EW_DASH_SHORT: ps->c.set_dash(cr, ds, 2, 0); break;
  default: ps->c.set_dash(cr, NULL, 0, 0);
  }
}

static void png_path(ew_canvas *cv, size_t n, const double *x, const double *y,
                     const ew_pen *p) {
  const png_state *ps = ps_of(cv);
  cairo_t *cr = ps->cr;
  ps->c.new_path(cr);
  int open = 0;
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(x[i]) || !isfinite(y[i])) {
      open = 0;
      continue;
    }
    if (open) ps->c.line_to(cr, x[i], y[i]);
    else ps->c.move_to(cr, x[i], y[i]);
    open = 1;
  }
  cr_pen(ps, p);
  ps->c.stroke(cr);
}

static void png_fill(ew_canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
                     double opacity) {
  const png_state *ps = ps_of(cv);
  cairo_t *cr = ps->cr;
  ps->c.new_path(cr);
  for (size_t i = 0; i < n; i++) {
    if (i) ps->c.line_to(cr, x[i], y[i]);
    else ps->c.move_to(cr, x[i], y[i]);
  }
  ps->c.close_path(cr);
  cr_rgb(ps, rgb, opacity);
  ps->c.fill(cr);
}

static void png_rect(ew_canvas *cv, double x, double y, double w, double h, uint32_t fill,
                     double fill_opacity, const ew_pen *stroke) {
  const png_state *ps = ps_of(cv);
  cairo_t *cr = ps->cr;
  ps->c.new_path(cr);
  ps->c.rectangle(cr, x, y, w, h);
  if (fill_opacity > 0) {
    cr_rgb(ps, fill, fill_opacity);
    if (stroke) ps->c.fill_preserve(cr);
    else ps->c.fill(cr);
  }
  if (stroke) {
    cr_pen(ps, stroke);
    ps->c.stroke(cr);
  }
  ps->c.new_path(cr);
}

static void png_text(ew_canvas *cv, double x, double y, const char *s, const ew_font *ft) {
  const png_state *ps = ps_of(cv);
  cairo_t *cr = ps->cr;
  ps->c.save(cr);
  ps->c.select_font_face(cr, EW_FONT_FAMILY,
                         ft->italic ? CAIRO_FONT_SLANT_ITALIC : CAIRO_FONT_SLANT_NORMAL,
                         ft->bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
  ps->c.set_font_size(cr, ft->size);
  cairo_text_extents_t ex;
  ps->c.text_extents(cr, s, &ex);
  /* the renderer's own width aligns the text, as text-anchor does in SVG */
  double dx = ft->anchor == EW_ANCHOR_MIDDLE ? -ex.x_advance / 2
              : ft->anchor == EW_ANCHOR_END  ? -ex.x_advance
                                             : 0;
  ps->c.translate(cr, x, y);
  if (ft->vertical) ps->c.rotate(cr, -EW_PI / 2);
  ps->c.move_to(cr, dx, 0);
  cr_rgb(ps, ft->rgb, 1.0);
  ps->c.show_text(cr, s);
  ps->c.new_path(cr);
  ps->c.restore(cr);
}

static const ew_canvas_ops png_ops = {png_path, png_fill, png_rect, png_text};

ew_status ew_canvas_png_begin(ew_canvas *cv, int w, int h, int scale, ew_error *err) {
  cv->ops = &png_ops;
  cv->bad = 0;
  png_state *ps = calloc(1, sizeof *ps);
  cv->impl = ps;
  if (!ps) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
  ew_status rc = ew_dynlib_open(cairo_names, sizeof cairo_names / sizeof *cairo_names,
                                cairo_syms, sizeof cairo_syms / sizeof *cairo_syms, &ps->c,
                                &ps->lib, err);
  if (rc != EW_OK) return rc;
  ps->sf = ps->c.image_surface_create(CAIRO_FORMAT_RGB24, w * scale, h * scale);
  ps->cr = ps->c.create(ps->sf);
  if (ps->c.status(ps->cr) != CAIRO_STATUS_SUCCESS)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "cannot create a %dx%d image: %s", w * scale,
                   h * scale, ps->c.status_to_string(ps->c.status(ps->cr)));
  ps->c.scale(ps->cr, scale, scale);
  ps->c.set_line_join(ps->cr, CAIRO_LINE_JOIN_ROUND);
  ps->c.set_line_cap(ps->cr, CAIRO_LINE_CAP_BUTT);
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
  if (out && ps->cr) {
    ps->c.surface_flush(ps->sf);
    cairo_status_t cs = ps->c.status(ps->cr);
    if (cv->bad) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
    else if (cs != CAIRO_STATUS_SUCCESS)
      rc = ew_fail(err, cs == CAIRO_STATUS_NO_MEMORY ? EW_ERR_NOMEM : EW_ERR_IO, NULL, 0,
                   "drawing failed: %s", ps->c.status_to_string(cs));
    else if ((cs = ps->c.surface_write_to_png_stream(ps->sf, png_sink, out)) !=
             CAIRO_STATUS_SUCCESS)
      rc = ew_fail(err, EW_ERR_IO, NULL, 0, "PNG write failed: %s", ps->c.status_to_string(cs));
  }
  if (ps->cr) ps->c.destroy(ps->cr);
  if (ps->sf) ps->c.surface_destroy(ps->sf);
  ew_dynlib_close(ps->lib);
  free(ps);
  cv->impl = NULL;
  return rc;
}
