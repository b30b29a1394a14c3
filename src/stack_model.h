/* stack_model.h — a stack file opened for the workflows: its nominal stack, its text, the
 * solver options of every point, and the solving of the stack at given key values (keys as in
 * stack_edit.h) from its one parsed tree. */
#ifndef EW_STACK_MODEL_H
#define EW_STACK_MODEL_H

#include <stddef.h>

#include "epiwell.h"
#include "progress.h"
#include "stack_edit.h"

typedef struct ew_wf_model ew_wf_model;

/* Read and validate path (errors as ew_stack_read_file, with file:line).  opt: solver options
 * used for every point (NULL: defaults); lowest_levels is raised to at least
 * EW_WF_INTERBAND_MAX so that every main line is computed.  cat must outlive the model.  A
 * model is only read after it is opened: several threads may use it at once. */
ew_status ew_wf_model_open(const char *path, const ew_catalogue *cat, const ew_options *opt,
                           ew_wf_model **out, ew_error *err);
void ew_wf_model_free(ew_wf_model *m); /* NULL is a no-op */
const ew_stack *ew_wf_model_stack(const ew_wf_model *m);     /* the nominal stack */
const ew_options *ew_wf_model_options(const ew_wf_model *m); /* the solver options */

/* Check that key names a setting of the model that can take a number (see
 * ew_stack_editor_check): *nominal is its value in the file, NaN when absent. */
ew_status ew_wf_key_check(const ew_wf_model *m, const char *key, const char *opt_name,
                          double *nominal, ew_error *err);

/* The model's stack with keys[i] set to values[i] (i < nkeys), errors as
 * ew_stack_editor_build (file, line of the setting, the values).  Edits the model's one
 * parsed tree under its lock (no parse, so no libconfig allocation that could end the process);
 * safe from several threads. */
ew_status ew_wf_stack_at(const ew_wf_model *m, size_t nkeys, const char *const *keys,
                         const double *values, ew_stack **out, ew_error *err);

/* ---- many points on many threads ------------------------------------------------------- */
/* The solving of a model's points on the threads of a parallel loop (the stacks are built
 * from the model's one tree, in turn; the solves run in parallel). */
typedef struct {
  const ew_wf_model *m;
  size_t n; /* threads the loop may use */
  /* NULL (ew_wf_pool_open), or: every solve is one step of it, and once it is cancelled
   * every further ew_wf_pool_solve fails with EW_ERR_CANCELLED */
  ew_progress *progress;
} ew_wf_pool;

/* For loops of up to `threads` threads (as resolved by ew_wf_threads). */
ew_status ew_wf_pool_open(const ew_wf_model *m, int threads, ew_wf_pool *p, ew_error *err);
void ew_wf_pool_free(ew_wf_pool *p); /* NULL or zeroed is a no-op */
/* ew_wf_stack_at with the calling thread's editor. */
ew_status ew_wf_pool_stack(const ew_wf_pool *p, size_t nkeys, const char *const *keys,
                           const double *values, ew_stack **out, ew_error *err);
/* The stack and its solve at the given values (both freed by the caller, NULL on error); a
 * solver error says at which values it happened. */
ew_status ew_wf_pool_solve(const ew_wf_pool *p, size_t nkeys, const char *const *keys,
                           const double *values, ew_stack **st, ew_result **res, ew_error *err);

/* "KEY = VALUE" or "KEY = VALUE, KEY = VALUE" (the first two keys); "the nominal stack"
 * when nkeys is 0. */
void ew_wf_point_text(char *buf, size_t size, size_t nkeys, const char *const *keys,
                      const double *values);

#endif
