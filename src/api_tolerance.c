/* api_tolerance.c — growth tolerances and the monolayer ladder for the public API
 * (epiwell.h): the stack model and tolerance.c's two runs behind one handle. */
#include <stdlib.h>

#include "epiwell.h"
#include "error.h"
#include "stack_model.h"
#include "tolerance.h"

#define NULL_ARG(fn) ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: NULL argument", fn)

struct ew_tolerance {
  ew_wf_model *m;     /* kept: the ladder's writers name the stack's layer */
  ew_wf_tolerance *t; /* one of t and l is set */
  ew_wf_ladder *l;
};

ew_status ew_tolerance_compute(const char *stack_path, const ew_catalogue *cat,
                               const ew_options *opt, double dx, const char *ladder, int threads,
                               ew_tolerance **out, ew_error *err) {
  if (out) *out = NULL;
  if (!stack_path || !cat || !out) return NULL_ARG("ew_tolerance_compute");
  if (!ladder && !(dx > 0 && dx <= 0.5))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--dx wants a composition step in (0, 0.5], got %g",
                   dx);
  ew_tolerance *t = calloc(1, sizeof *t);
  if (!t) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  ew_status st = ew_wf_model_open(stack_path, cat, opt, &t->m, err);
  if (st == EW_OK)
    st = ladder ? ew_wf_ladder_run(t->m, ladder, threads, &t->l, err)
                : ew_wf_tolerance_run(t->m, dx, threads, &t->t, err);
  if (st != EW_OK) {
    ew_tolerance_free(t);
    return st;
  }
  *out = t;
  return EW_OK;
}

void ew_tolerance_free(ew_tolerance *t) {
  if (!t) return;
  ew_wf_ladder_free(t->l);
  ew_wf_tolerance_free(t->t);
  ew_wf_model_free(t->m);
  free(t);
}

ew_status ew_tolerance_set_growth_rate(ew_tolerance *t, double percent, ew_error *err) {
  if (!t) return NULL_ARG("ew_tolerance_set_growth_rate");
  if (!t->t) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--rate: not with --ladder");
  if (!(percent >= 0 && percent <= 50))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--rate wants a percentage in [0, 50], got %g",
                   percent);
  t->t->rate_percent = percent;
  return EW_OK;
}

static ew_status write_as(const ew_tolerance *t, FILE *out, int json, ew_error *err) {
  if (!t || !out) return NULL_ARG(json ? "ew_tolerance_write_json" : "ew_tolerance_write_table");
  const ew_stack *st = ew_wf_model_stack(t->m);
  if (t->l && json)
    ew_wf_ladder_print_json(t->l, st, out);
  else if (t->l)
    ew_wf_ladder_print(t->l, st, out);
  else if (json)
    ew_wf_tolerance_print_json(t->t, out);
  else
    ew_wf_tolerance_print(t->t, out);
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the tolerances") : EW_OK;
}

ew_status ew_tolerance_write_table(const ew_tolerance *t, FILE *out, ew_error *err) {
  return write_as(t, out, 0, err);
}

ew_status ew_tolerance_write_json(const ew_tolerance *t, FILE *out, ew_error *err) {
  return write_as(t, out, 1, err);
}
