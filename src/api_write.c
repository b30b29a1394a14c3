/* api_write.c — writing a result, and checking output paths before any work, for the
 * public API (epiwell.h): argument checks and stream-error checks in front of output.c,
 * plot.c, report.c, output_set.c and chart_file.c. */
#include <stdio.h>

#include "chart_file.h"
#include "epiwell.h"
#include "error.h"
#include "continuum.h"
#include "output.h"
#include "output_set.h"
#include "plot.h"
#include "report.h"

#define NULL_ARG(fn) ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: NULL argument", fn)

/* The writers below print and return nothing; a stream error shows in ferror. */
static ew_status stream_ok(FILE *out, const char *what, ew_error *err) {
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the %s", what) : EW_OK;
}

ew_status ew_result_write_table(const ew_result *res, FILE *out, ew_error *err) {
  if (!res || !out) return NULL_ARG("ew_result_write_table");
  ew_output_table(res, out);
  return stream_ok(out, "result table", err);
}

ew_status ew_result_write_json(const ew_result *res, FILE *out, ew_error *err) {
  if (!res || !out) return NULL_ARG("ew_result_write_json");
  double sr[2];
  ew_status st = ew_continuum_sum_rule_e1(res, &sr[0], &sr[1], err);
  if (st != EW_OK) return st;
  ew_output_json_sum(res, sr, out);
  return stream_ok(out, "result JSON", err);
}

ew_status ew_result_write_csv_dir(const ew_result *res, const char *dir, int gzip, ew_error *err) {
  if (!res || !dir) return NULL_ARG("ew_result_write_csv_dir");
  /* the set appears whole: written into a staged directory, swapped in (atomic.c) */
  ew_output_set *set = NULL;
  char work[1400];
  ew_status st = ew_output_set_create(&set, err);
  if (st == EW_OK) st = ew_output_set_dir(set, dir, work, sizeof work, err);
  if (st == EW_OK) st = ew_output_set_write_csv(set, res, gzip, err);
  if (st != EW_OK) {
    ew_output_set_abort(set);
    return st;
  }
  return ew_output_set_commit(set, err);
}

ew_status ew_result_write_band_diagram(const ew_result *res, const char *path, ew_error *err) {
  if (!res || !path) return NULL_ARG("ew_result_write_band_diagram");
  return ew_plot_band_diagram(res, path, err);
}

ew_status ew_result_write_band_diagram_levels(const ew_result *res, const char *path,
                                              int levels_per_band, ew_error *err) {
  if (!res || !path) return NULL_ARG("ew_result_write_band_diagram_levels");
  return ew_plot_band_diagram_levels(res, path, levels_per_band, err);
}

ew_status ew_result_write_band_diagram_svg(const ew_result *res, FILE *out, ew_error *err) {
  if (!res || !out) return NULL_ARG("ew_result_write_band_diagram_svg");
  return ew_plot_band_diagram_svg(res, out, err);
}

ew_status ew_result_write_report(const ew_result *res, const ew_catalogue *cat, const char *dir,
                                 ew_error *err) {
  if (!res || !dir) return NULL_ARG("ew_result_write_report");
  return ew_report_write(res, cat, dir, err);
}

ew_status ew_output_dir_check(const char *dir, ew_error *err) {
  if (!dir) return NULL_ARG("ew_output_dir_check");
  return ew_output_check_dir(dir, err);
}

ew_status ew_plot_path_check(const char *path, ew_error *err) {
  if (!path) return NULL_ARG("ew_plot_path_check");
  return ew_plot_check_path(path, err);
}

ew_status ew_data_path_check(const char *path, const char *opt_name, ew_error *err) {
  if (!path) return NULL_ARG("ew_data_path_check");
  return ew_wf_check_file_path(path, opt_name ? opt_name : "output", err);
}

ew_status ew_plot_companion_name(const char *path, const char *suffix, const char *opt_name,
                                 char *out, size_t size, ew_error *err) {
  if (!path || !out || size == 0) return NULL_ARG("ew_plot_companion_name");
  return ew_wf_plot_companion(path, suffix, opt_name ? opt_name : "--plot", out, size, err);
}
