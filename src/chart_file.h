/* chart_file.h — the picture files of a workflow: companion names (FILE.svg,
 * FILE-interband.svg, …) and one x–y chart written into an output set. */
#ifndef EW_CHART_FILE_H
#define EW_CHART_FILE_H

#include <stddef.h>

#include "epiwell.h"
#include "output_set.h"
#include "xy_chart.h"

/* The companion picture names of FILE.ext: FILE-SUFFIX.ext (suffix e.g. "interband"; ""
 * or NULL: FILE.ext itself).  EW_ERR_USAGE (naming opt_name) when path does not end in .svg
 * or .png or is too long. */
ew_status ew_wf_plot_companion(const char *path, const char *suffix, const char *opt_name,
                               char *out, size_t size, ew_error *err);

/* Write one chart (ew_plot_xy: np points, ns series) under a temporary name registered in set
 * for final_path; an error of the picture names final_path. */
ew_status ew_wf_chart_into_set(ew_wf_outset *set, const char *final_path, const char *opt_name,
                               const char *title, const char *xlabel, const char *ylabel,
                               size_t np, const double *x, size_t ns, const double *const *y,
                               const char *const *names, ew_error *err);

/* The same for a chart description (xy_chart.h), e.g. with its axis break. */
ew_status ew_wf_chart_desc_into_set(ew_wf_outset *set, const char *final_path, const char *opt_name,
                                    const ew_xy_chart *chart, ew_error *err);

#endif
