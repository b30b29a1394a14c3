/* api_sweep.c — parameter sweeps for the public API (epiwell.h): the ranges, the opened
 * stack model (stack_model.c), the sweep itself (sweep.c) and its pictures (sweep_plot.c),
 * staged in an output set until the caller commits them. */
#include <stdlib.h>
#include <string.h>

#include "epiwell.h"
#include "error.h"
#include "output_set.h"
#include "range.h"
#include "stack_model.h"
#include "sweep.h"
#include "sweep_merge.h"
#include "sweep_plot.h"

_Static_assert(EW_SWEEP_PLOT_FILES == EW_WF_PLOT_FILES, "one picture set");

#define NULL_ARG(fn) ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: NULL argument", fn)

struct ew_sweep {
  ew_wf_range ranges[2];
  size_t nr;
  ew_wf_model *m;
  ew_wf_table table; /* the rows, when kept for pictures */
  ew_wf_outset pics; /* staged pictures */
};

void ew_sweep_options_default(ew_sweep_options *o) {
  if (!o) return;
  ew_wf_sweep_opt d;
  ew_wf_sweep_opt_default(&d);
  memset(o, 0, sizeof *o);
  o->threads = d.threads;
  o->shard_k = d.shard_k;
  o->shard_n = d.shard_n;
  o->header = d.header;
  o->min_levels = d.min_levels;
}

ew_status ew_sweep_create(ew_sweep **out, ew_error *err) {
  if (!out) return NULL_ARG("ew_sweep_create");
  *out = calloc(1, sizeof **out);
  if (!*out) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  ew_wf_outset_init(&(*out)->pics);
  return EW_OK;
}

void ew_sweep_free(ew_sweep *sw) {
  if (!sw) return;
  ew_wf_outset_commit(&sw->pics, 0, NULL);
  ew_wf_table_free(&sw->table);
  ew_wf_model_free(sw->m);
  free(sw);
}

ew_status ew_sweep_vary(ew_sweep *sw, const char *spec, ew_error *err) {
  if (!sw || !spec) return NULL_ARG("ew_sweep_vary");
  if (sw->nr == 2)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary: at most two ranges (a grid)");
  ew_status st = ew_wf_range_parse(spec, 1, "--vary", &sw->ranges[sw->nr], err);
  if (st == EW_OK) sw->nr++;
  return st;
}

size_t ew_sweep_key_count(const ew_sweep *sw) { return sw ? sw->nr : 0; }

ew_status ew_sweep_open(ew_sweep *sw, const char *stack_path, const ew_catalogue *cat,
                        const ew_options *opt, ew_error *err) {
  if (!sw || !stack_path || !cat) return NULL_ARG("ew_sweep_open");
  ew_wf_model_free(sw->m);
  sw->m = NULL;
  return ew_wf_model_open(stack_path, cat, opt, &sw->m, err);
}

ew_status ew_sweep_compute(ew_sweep *sw, const ew_sweep_options *o, FILE *csv, FILE *json,
                           ew_error *err) {
  if (!sw) return NULL_ARG("ew_sweep_compute");
  if (!sw->m || sw->nr == 0)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_sweep_compute: %s",
                   sw->m ? "no --vary range given" : "no stack opened (ew_sweep_open)");
  ew_sweep_options d;
  ew_sweep_options_default(&d);
  if (!o) o = &d;
  ew_wf_sweep_opt so;
  ew_wf_sweep_opt_default(&so);
  so.threads = o->threads;
  so.shard_k = o->shard_k;
  so.shard_n = o->shard_n;
  so.header = o->header;
  so.min_levels = o->min_levels;
  so.progress = o->progress;
  so.progress_ctx = o->progress_ctx;
  ew_wf_table_free(&sw->table);
  memset(&sw->table, 0, sizeof sw->table);
  if (o->keep_table) so.table = &sw->table;
  return ew_wf_sweep(sw->m, sw->ranges, sw->nr, &so, csv, json, err);
}

ew_status ew_sweep_merge(const ew_sweep *sw, size_t n, const char *const *paths, FILE *out,
                         ew_error *err) {
  if ((n && !paths) || !out) return NULL_ARG("ew_sweep_merge");
  for (size_t i = 0; i < n; i++)
    if (!paths[i]) return NULL_ARG("ew_sweep_merge");
  return ew_wf_sweep_merge(sw ? sw->ranges : NULL, sw ? sw->nr : 0, n, paths, out, err);
}

const char *ew_sweep_plot_suffix(int k) {
  return k >= 0 && k < EW_SWEEP_PLOT_FILES ? EW_WF_PLOT_SUFFIX[k] : NULL;
}

ew_status ew_sweep_stage_plots(ew_sweep *sw, const char *path, int written[EW_SWEEP_PLOT_FILES],
                               ew_error *err) {
  if (!sw || !path) return NULL_ARG("ew_sweep_stage_plots");
  if (!sw->table.names)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "ew_sweep_stage_plots: no rows kept (compute with keep_table = 1)");
  int w[EW_WF_PLOT_FILES] = {0};
  ew_status st = ew_wf_sweep_plot(&sw->table, path, &sw->pics, w, err);
  for (int k = 0; written && k < EW_WF_PLOT_FILES; k++)
    written[k] = w[k];
  return st;
}

ew_status ew_sweep_commit_plots(ew_sweep *sw, int ok, ew_error *err) {
  if (!sw) return NULL_ARG("ew_sweep_commit_plots");
  return ew_wf_outset_commit(&sw->pics, ok, err);
}
