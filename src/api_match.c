/* api_match.c — inverse matching for the public API (epiwell.h): the unknowns, lines and
 * targets as parsed (range.c, line_name.c), then the stack model and ew_wf_match (match.c). */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "epiwell.h"
#include "error.h"
#include "line_name.h"
#include "match.h"
#include "match_part.h"
#include "range.h"
#include "stack_model.h"

#define NULL_ARG(fn) ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: NULL argument", fn)

struct ew_match {
  ew_wf_range ranges[2];
  size_t nr;
  char *lines[2];
  size_t nl;
  ew_wf_quantity targets[2], tol;
  size_t nt;
  int have_tol;
  int computed;
  ew_wf_match_result res;
  ew_progress_fn progress;
  void *progress_ctx;
  size_t shard_k, shard_n; /* part K of N (0 and 0: the whole match) */
};

ew_status ew_match_create(ew_match **out, ew_error *err) {
  if (!out) return NULL_ARG("ew_match_create");
  *out = calloc(1, sizeof **out);
  return *out ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
}

void ew_match_free(ew_match *mt) {
  if (!mt) return;
  free(mt->lines[0]);
  free(mt->lines[1]);
  ew_wf_match_result_free(&mt->res);
  free(mt);
}

ew_status ew_match_vary(ew_match *mt, const char *spec, ew_error *err) {
  if (!mt || !spec) return NULL_ARG("ew_match_vary");
  if (mt->nr == 2) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary: at most two unknowns");
  ew_status st = ew_wf_range_parse(spec, 0, "--vary", &mt->ranges[mt->nr], err);
  if (st == EW_OK) mt->nr++;
  return st;
}

ew_status ew_match_line(ew_match *mt, const char *line, ew_error *err) {
  if (!mt || !line) return NULL_ARG("ew_match_line");
  if (mt->nl == 2) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--line: at most two lines");
  double unused;
  ew_status st = ew_wf_line_energy(NULL, line, &unused, err); /* the name alone */
  if (st != EW_OK) return st;
  mt->lines[mt->nl] = malloc(strlen(line) + 1);
  if (!mt->lines[mt->nl]) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  strcpy(mt->lines[mt->nl++], line);
  return EW_OK;
}

ew_status ew_match_target(ew_match *mt, const char *quantity, ew_error *err) {
  if (!mt || !quantity) return NULL_ARG("ew_match_target");
  if (mt->nt == 2) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--target: at most two targets");
  ew_status st = ew_wf_quantity_parse(quantity, 0, "--target", &mt->targets[mt->nt], err);
  if (st == EW_OK) mt->nt++;
  return st;
}

ew_status ew_match_tolerance(ew_match *mt, const char *quantity, ew_error *err) {
  if (!mt || !quantity) return NULL_ARG("ew_match_tolerance");
  ew_status st = ew_wf_quantity_parse(quantity, 1, "--tolerance", &mt->tol, err);
  if (st == EW_OK) mt->have_tol = 1;
  return st;
}

ew_status ew_match_compute(ew_match *mt, const char *stack_path, const ew_catalogue *cat,
                           const ew_options *opt, int threads, size_t samples, ew_error *err) {
  if (!mt || !stack_path || !cat) return NULL_ARG("ew_match_compute");
  if (mt->nr == 0 || mt->nl != mt->nr || mt->nt != mt->nr)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "match needs one --line and one --target per --vary");
  if (mt->have_tol && mt->nr == 2)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--tolerance works with one --vary only");
  ew_wf_match_result_free(&mt->res);
  memset(&mt->res, 0, sizeof mt->res);
  mt->computed = 0;
  ew_wf_model *m = NULL;
  ew_status st = ew_wf_model_open(stack_path, cat, opt, &m, err);
  if (st == EW_OK) {
    ew_wf_match_opt mo = {threads, samples, mt->progress, mt->progress_ctx, mt->shard_k,
                          mt->shard_n};
    const char *lines[2] = {mt->lines[0], mt->lines[1]};
    st = ew_wf_match(m, mt->ranges, mt->nr, lines, mt->targets, mt->nr,
                     mt->have_tol ? &mt->tol : NULL, &mo, &mt->res, err);
  }
  ew_wf_model_free(m);
  mt->computed = st == EW_OK;
  return st;
}

ew_status ew_match_shard(ew_match *mt, size_t k, size_t n, ew_error *err) {
  if (!mt) return NULL_ARG("ew_match_shard");
  if (n > 1 && (k < 1 || k > n))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--shard %zu/%zu: K must be in 1..N", k, n);
  mt->shard_k = n > 1 ? k : 0;
  mt->shard_n = n > 1 ? n : 0;
  return EW_OK;
}

ew_status ew_match_merge(size_t n, const char *const *paths, FILE *out, ew_error *err) {
  if ((n && !paths) || !out) return NULL_ARG("ew_match_merge");
  for (size_t i = 0; i < n; i++)
    if (!paths[i]) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_match_merge: path %zu is NULL", i);
  return ew_wf_match_merge(n, paths, out, err);
}

ew_status ew_match_progress(ew_match *mt, ew_progress_fn fn, void *ctx, ew_error *err) {
  if (!mt) return NULL_ARG("ew_match_progress");
  mt->progress = fn;
  mt->progress_ctx = ctx;
  return EW_OK;
}

size_t ew_match_solution_count(const ew_match *mt) { return mt && mt->computed ? mt->res.n : 0; }

double ew_match_solution_value(const ew_match *mt, size_t i, size_t k) {
  if (!mt || !mt->computed || i >= mt->res.n || k >= mt->res.nkeys) return NAN;
  return mt->res.sol[i].value[k];
}

const char *ew_match_message(const ew_match *mt) {
  return mt && mt->computed ? mt->res.message : NULL;
}

static ew_status write_as(const ew_match *mt, FILE *out, int json, ew_error *err) {
  if (!mt || !out) return NULL_ARG(json ? "ew_match_write_json" : "ew_match_write_table");
  if (!mt->computed)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_match: nothing computed to write");
  int part = mt->res.shard_n > 1;
  if (part && !json)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "a part of a sharded match is written as JSON "
                   "(--json) and joined with the other parts (epiwell merge)");
  if (part)
    ew_wf_match_part_write(&mt->res, out);
  else if (json)
    ew_wf_match_print_json(&mt->res, out);
  else
    ew_wf_match_print(&mt->res, out);
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the match") : EW_OK;
}

ew_status ew_match_write_table(const ew_match *mt, FILE *out, ew_error *err) {
  return write_as(mt, out, 0, err);
}

ew_status ew_match_write_json(const ew_match *mt, FILE *out, ew_error *err) {
  return write_as(mt, out, 1, err);
}
