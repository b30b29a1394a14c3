/* canvas.c — the canvas front (see canvas.h): text cleaning and width estimate, and the
 * calls every back end shares. */
#include "canvas.h"

#include <string.h>

ew_pen ew_pen_make(uint32_t rgb, double width, int dash) {
  ew_pen p = {rgb, width, dash, 1.0};
  return p;
}

ew_font ew_font_make(double size, int anchor, uint32_t rgb) {
  ew_font f = {size, anchor, rgb, 0, 0, 0};
  return f;
}

void ew_text_clean(const char *s, char *out, size_t cap) {
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

double ew_text_width(const char *s, double size) {
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

void ew_cv_path(ew_canvas *cv, size_t n, const double *x, const double *y, const ew_pen *p) {
  cv->ops->path(cv, n, x, y, p);
}

void ew_cv_line(ew_canvas *cv, double x0, double y0, double x1, double y1, const ew_pen *p) {
  double x[2] = {x0, x1}, y[2] = {y0, y1};
  cv->ops->path(cv, 2, x, y, p);
}

void ew_cv_fill(ew_canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
                double opacity) {
  if (n < 3) return;
  cv->ops->fill(cv, n, x, y, rgb, opacity);
}

void ew_cv_rect(ew_canvas *cv, double x, double y, double w, double h, uint32_t fill,
                double fill_opacity, const ew_pen *stroke) {
  cv->ops->rect(cv, x, y, w, h, fill, fill_opacity, stroke);
}

void ew_cv_text(ew_canvas *cv, double x, double y, const char *text, const ew_font *ft) {
  char s[1024];
  ew_text_clean(text, s, sizeof s);
  if (!s[0]) return;
  cv->ops->text(cv, x, y, s, ft);
}
