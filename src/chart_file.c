/* chart_file.c — companion picture names and charts written into an output set (see
 * chart_file.h). */
#include "chart_file.h"

#include <stdio.h>
#include <string.h>

#include "error.h"
#include "plot.h"

ew_status ew_wf_plot_companion(const char *path, const char *suffix, const char *opt, char *out,
                               size_t size, ew_error *err) {
  if (!ew_plot_format(path))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants a file name ending in .svg or .png, "
                   "got %s", opt, path ? path : "(none)");
  size_t n = strlen(path);
  int w = suffix && suffix[0]
              ? snprintf(out, size, "%.*s-%s%s", (int)(n - 4), path, suffix, path + n - 4)
              : snprintf(out, size, "%s", path);
  if (w < 0 || (size_t)w >= size)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: file name too long", opt, path);
  return EW_OK;
}

ew_status ew_wf_chart_desc_into_set(ew_wf_outset *set, const char *final_path, const char *opt,
                                    const ew_xy_chart *chart, ew_error *err) {
  const char *tmp;
  ew_status rc = ew_wf_outset_add(set, final_path, opt, &tmp, err);
  if (rc != EW_OK) return rc;
  rc = ew_plot_xy_chart(tmp, chart, err);
  if (rc != EW_OK && err) snprintf(err->file, sizeof err->file, "%.500s", final_path);
  return rc;
}

ew_status ew_wf_chart_into_set(ew_wf_outset *set, const char *final_path, const char *opt,
                               const char *title, const char *xlabel, const char *ylabel,
                               size_t np, const double *x, size_t ns, const double *const *y,
                               const char *const *names, ew_error *err) {
  const char *tmp;
  ew_status rc = ew_wf_outset_add(set, final_path, opt, &tmp, err);
  if (rc != EW_OK) return rc;
  rc = ew_plot_xy(tmp, title, xlabel, ylabel, np, x, ns, y, names, err);
  if (rc != EW_OK && err) snprintf(err->file, sizeof err->file, "%.500s", final_path);
  return rc;
}
