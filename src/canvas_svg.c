/* canvas_svg.c — the SVG back end of the canvas (see canvas.h): plain SVG text of our own,
 * coordinates with two decimals, every text escaped for XML. */
#include <math.h>

#include "canvas.h"
#include "text.h"

static FILE *out_of(ew_canvas *cv) { return cv->impl; }

/* The readers refuse names that are not printable UTF-8 (text.h); as a second line, a byte
 * XML 1.0 does not allow (C0 controls) is dropped and invalid UTF-8 becomes U+FFFD, so the
 * file always parses. */
static void svg_escaped(FILE *f, const char *s) {
  while (*s) {
    int n = ew_utf8_len(s);
    switch (*s) {
    case '&': fputs("&amp;", f); break;
    case '<': fputs("&lt;", f); break;
    case '>': fputs("&gt;", f); break;
    case '"': fputs("&quot;", f); break;
    case '\'': fputs("&#39;", f); break;
    default:
      if (n == 0) fputs("\xEF\xBF\xBD", f), n = 1;
      else if (n > 1 || (unsigned char)*s >= 0x20) fwrite(s, 1, (size_t)n, f);
    }
    s += n;
  }
}

static void svg_color(FILE *f, const char *attr, uint32_t rgb) {
  fprintf(f, " %s=\"#%06x\"", attr, (unsigned)(rgb & 0xffffffu));
}

static const char *svg_dash(int dash) {
  switch (dash) {
  case EW_DASH_LONG: return "7 4";
  case EW_DASH_DOT: return "1.2 3";
  case EW_DASH_SHORT: return "3 3";
  default: return NULL;
  }
}

static void svg_pen(FILE *f, const ew_pen *p) {
  svg_color(f, "stroke", p->rgb);
  fprintf(f, " stroke-width=\"%.2f\"", p->width);
  const char *d = svg_dash(p->dash);
  if (d) fprintf(f, " stroke-dasharray=\"%s\"", d);
  if (p->opacity < 1) fprintf(f, " stroke-opacity=\"%.2f\"", p->opacity);
}

static void svg_path(ew_canvas *cv, size_t n, const double *x, const double *y,
                     const ew_pen *p) {
  FILE *f = out_of(cv);
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

static void svg_fill(ew_canvas *cv, size_t n, const double *x, const double *y, uint32_t rgb,
                     double opacity) {
  FILE *f = out_of(cv);
  fputs("<path d=\"", f);
  for (size_t i = 0; i < n; i++) fprintf(f, "%s%.2f %.2f", i ? " L" : "M", x[i], y[i]);
  fputs(" Z\" stroke=\"none\"", f);
  svg_color(f, "fill", rgb);
  if (opacity < 1) fprintf(f, " fill-opacity=\"%.2f\"", opacity);
  fputs("/>\n", f);
}

static void svg_rect(ew_canvas *cv, double x, double y, double w, double h, uint32_t fill,
                     double fill_opacity, const ew_pen *stroke) {
  FILE *f = out_of(cv);
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

static void svg_text(ew_canvas *cv, double x, double y, const char *s, const ew_font *ft) {
  FILE *f = out_of(cv);
  fprintf(f, "<text x=\"%.2f\" y=\"%.2f\" font-size=\"%.1f\"", x, y, ft->size);
  if (ft->anchor == EW_ANCHOR_MIDDLE) fputs(" text-anchor=\"middle\"", f);
  else if (ft->anchor == EW_ANCHOR_END) fputs(" text-anchor=\"end\"", f);
  if (ft->bold) fputs(" font-weight=\"bold\"", f);
  if (ft->italic) fputs(" font-style=\"italic\"", f);
  if (ft->vertical) fprintf(f, " transform=\"rotate(-90 %.2f %.2f)\"", x, y);
  svg_color(f, "fill", ft->rgb);
  fputc('>', f);
  svg_escaped(f, s);
  fputs("</text>\n", f);
}

static const ew_canvas_ops svg_ops = {svg_path, svg_fill, svg_rect, svg_text};

void ew_canvas_svg_begin(ew_canvas *cv, FILE *out, int w, int h, const char *title) {
  cv->ops = &svg_ops;
  cv->impl = out;
  cv->bad = 0;
  fprintf(out,
          "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%d\" height=\"%d\" "
          "viewBox=\"0 0 %d %d\" font-family=\"%s\" role=\"img\">\n<title>",
          w, h, w, h, EW_SVG_FONTS);
  char t[512];
  ew_text_clean(title, t, sizeof t);
  svg_escaped(out, t);
  fputs("</title>\n", out);
}

void ew_canvas_svg_end(ew_canvas *cv) { fputs("</svg>\n", out_of(cv)); }
