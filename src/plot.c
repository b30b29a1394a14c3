/* plot.c — picture files (see plot.h): the format from the file name, the canvas for it
 * (canvas_svg.c or canvas_png.c), the drawing (band_diagram.c, xy_chart.c), and the file
 * written atomically through atomic.c. */
#include "plot.h"

#include <errno.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "atomic.h"
#include "band_diagram.h"
#include "canvas.h"
#include "error.h"
#include "grid.h"
#include "xy_chart.h"

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

ew_status ew_plot_check_path(const char *path, ew_error *err) {
  if (!path || !ew_plot_format(path))
    return ew_fail(err, EW_ERR_USAGE, path, 0, "a picture file name must end in .svg or .png");
  char dir[1024];
  ew_atomic_dir_of(path, dir, sizeof dir);
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

/* What to draw: a band diagram or a line chart. */
typedef struct {
  const ew_result *band;   /* non-NULL: r's band diagram */
  int levels;              /* its levels per band (<= 0: all) */
  const ew_xy_chart *xy;   /* otherwise this chart */
  int w, h;                /* picture size in units */
  const char *title;       /* the SVG's <title> */
  size_t npoints;          /* longest polyline before reduction */
} picture;

static void draw(ew_canvas *cv, const picture *p, ew_chart_scratch *sc) {
  if (p->band) ew_band_diagram_draw(cv, p->band, p->levels, sc);
  else ew_xy_chart_draw(cv, p->xy, sc);
}

/* Draw onto an open stream: SVG text, or an image written to it as PNG. */
static ew_status render(FILE *f, int fmt, const picture *p, ew_error *err) {
  ew_chart_scratch sc = {0};
  if (!ew_chart_scratch_alloc(&sc, p->npoints)) {
    ew_chart_scratch_free(&sc);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture of %zu points)",
                   p->npoints);
  }
  ew_status rc = EW_OK;
  ew_canvas cv = {0};
  if (fmt == 's') {
    ew_canvas_svg_begin(&cv, f, p->w, p->h, p->title);
    draw(&cv, p, &sc);
    ew_canvas_svg_end(&cv);
    if (cv.bad) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (picture)");
    else if (ferror(f)) rc = ew_fail(err, EW_ERR_IO, NULL, 0, "write failed (disk full?)");
  } else {
    rc = ew_canvas_png_begin(&cv, p->w, p->h, EW_PLOT_PNG_SCALE, err);
    if (rc == EW_OK) draw(&cv, p, &sc);
    ew_status end = ew_canvas_png_end(&cv, rc == EW_OK ? f : NULL, err);
    if (rc == EW_OK) rc = end;
  }
  ew_chart_scratch_free(&sc);
  return rc;
}

/* Write a picture to path atomically (atomic.c). */
static ew_status write_file(const char *path, const picture *p, ew_error *err) {
  ew_status rc = ew_plot_check_path(path, err);
  if (rc != EW_OK) return rc;
  ew_atomic_file a;
  rc = ew_atomic_open(&a, path, err);
  if (rc != EW_OK) return rc;
  rc = render(a.f, ew_plot_format(path), p, err);
  if (rc == EW_OK) {
    rc = ew_atomic_commit(&a, err);
  } else {
    ew_atomic_abort(&a);
    /* render() cannot know the file name: name it in the report */
    if (err && !err->file[0]) snprintf(err->file, sizeof err->file, "%s", path);
  }
  return rc;
}

static const char *base_name(const char *path) {
  const char *b = strrchr(path, '/');
  return b ? b + 1 : path;
}

static void band_title(const ew_result *r, char *buf, size_t cap) {
  snprintf(buf, cap, "Band diagram of %s", r->stack->path[0] ? base_name(r->stack->path) : "a stack");
}

ew_status ew_plot_band_diagram_levels(const ew_result *r, const char *path, int levels_per_band,
                                      ew_error *err) {
  if (!r || !path) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_plot_band_diagram: NULL argument");
  char title[600];
  band_title(r, title, sizeof title);
  picture p = {r, levels_per_band, NULL, EW_PLOT_BAND_W, EW_PLOT_BAND_H, title, r->grid->n + 2};
  return write_file(path, &p, err);
}

ew_status ew_plot_band_diagram(const ew_result *r, const char *path, ew_error *err) {
  return ew_plot_band_diagram_levels(r, path, EW_PLOT_LEVELS_DEFAULT, err);
}

ew_status ew_plot_band_diagram_svg(const ew_result *r, FILE *out, ew_error *err) {
  if (!r || !out)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_plot_band_diagram_svg: NULL argument");
  char title[600];
  band_title(r, title, sizeof title);
  picture p = {r, EW_PLOT_LEVELS_DEFAULT, NULL, EW_PLOT_BAND_W, EW_PLOT_BAND_H, title,
               r->grid->n + 2};
  return render(out, 's', &p, err);
}

ew_status ew_plot_xy(const char *path, const char *title, const char *xlabel,
                     const char *ylabel, size_t npoints, const double *x, size_t nseries,
                     const double *const *y, const char *const *names, ew_error *err) {
  if (!path || npoints == 0 || nseries == 0 || !x || !y)
    return ew_fail(err, EW_ERR_USAGE, path, 0,
                   "ew_plot_xy needs a path, at least one point and one series");
  for (size_t s = 0; s < nseries; s++)
    if (!y[s]) return ew_fail(err, EW_ERR_USAGE, path, 0, "ew_plot_xy: series %zu is NULL", s + 1);
  ew_xy_chart a = {title, xlabel, ylabel, npoints, nseries, x, y, names, 0};
  picture p = {NULL, 0, &a, EW_PLOT_XY_W, EW_PLOT_XY_H, title ? title : "line chart", npoints};
  return write_file(path, &p, err);
}

ew_status ew_plot_xy_chart(const char *path, const ew_xy_chart *a, ew_error *err) {
  if (!path || !a || a->npoints == 0 || a->nseries == 0 || !a->x || !a->y)
    return ew_fail(err, EW_ERR_USAGE, path, 0,
                   "ew_plot_xy needs a path, at least one point and one series");
  for (size_t s = 0; s < a->nseries; s++)
    if (!a->y[s]) return ew_fail(err, EW_ERR_USAGE, path, 0, "ew_plot_xy: series %zu is NULL", s + 1);
  picture p = {NULL, 0, a, EW_PLOT_XY_W, EW_PLOT_XY_H, a->title ? a->title : "line chart",
               a->npoints};
  return write_file(path, &p, err);
}

ew_status ew_plot_xy_svg(FILE *out, const char *title, const char *xlabel, const char *ylabel,
                         size_t npoints, const double *x, size_t nseries,
                         const double *const *y, const char *const *names, ew_error *err) {
  if (!out || npoints == 0 || nseries == 0 || !x || !y)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "ew_plot_xy_svg needs a stream, at least one point and one series");
  ew_xy_chart a = {title, xlabel, ylabel, npoints, nseries, x, y, names, 0};
  picture p = {NULL, 0, &a, EW_PLOT_XY_W, EW_PLOT_XY_H, title ? title : "line chart", npoints};
  return render(out, 's', &p, err);
}
