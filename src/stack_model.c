/* stack_model.c — a stack file opened for the workflows and solved at key values (see
 * stack_model.h). */
#include "stack_model.h"

#include <errno.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "line_name.h" /* EW_WF_INTERBAND_MAX */
#include "parallel.h"
#include "solve.h"
#include "stack.h"

struct ew_wf_model {
  const ew_catalogue *cat;
  ew_stack *nominal;
  char *text;              /* the stack file as read */
  /* The file's parsed tree, edited for every point under `lock`.  One tree parsed once when
   * the model opens, because libconfig 1.5 does not survive an allocation failure (its
   * scanner exits, its setting constructor dereferences NULL): no parse happens inside a
   * sweep, match or tolerance run.  A build is tens of microseconds against milliseconds per
   * solve, so the lock costs the parallel loops little. */
  ew_stack_editor *ed;
  pthread_mutex_t lock;
  int have_lock;
  ew_options opt;
};

/* The whole file as a string (ew_stack_read_file has checked it already: size, NUL bytes). */
static ew_status slurp(const char *path, char **text, ew_error *err) {
  *text = NULL;
  FILE *f = fopen(path, "rb");
  if (!f) return ew_fail(err, EW_ERR_IO, path, 0, "cannot re-read '%s': %s", path, strerror(errno));
  size_t cap = 4096, len = 0;
  char *buf = malloc(cap);
  while (buf) {
    len += fread(buf + len, 1, cap - 1 - len, f);
    if (len + 1 < cap) break;
    char *nb = realloc(buf, 2 * cap);
    if (!nb) free(buf);
    buf = nb;
    cap *= 2;
  }
  int bad = ferror(f);
  fclose(f);
  if (!buf) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack text)");
  if (bad) {
    free(buf);
    return ew_fail(err, EW_ERR_IO, path, 0, "cannot re-read '%s'", path);
  }
  buf[len] = '\0';
  *text = buf;
  return EW_OK;
}

ew_status ew_wf_model_open(const char *path, const ew_catalogue *cat, const ew_options *opt,
                           ew_wf_model **out, ew_error *err) {
  *out = NULL;
  ew_wf_model *m = calloc(1, sizeof *m);
  if (!m) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  m->cat = cat;
  if (opt) m->opt = *opt;
  else ew_options_default(&m->opt);
  /* the workflows report their own points (epiwell.h): no per-solve calls from threads */
  m->opt.progress = NULL;
  m->opt.progress_ctx = NULL;
  if (m->opt.lowest_levels > 0 && m->opt.lowest_levels < EW_WF_INTERBAND_MAX)
    m->opt.lowest_levels = EW_WF_INTERBAND_MAX;
  /* The reader validates first, so a broken file is reported with its own file:line. */
  ew_status rc = ew_stack_read_file(path, cat, &m->nominal, err);
  if (rc == EW_OK) rc = slurp(path, &m->text, err);
  if (rc == EW_OK) rc = ew_stack_editor_open(m->text, m->nominal, cat, &m->ed, err);
  if (rc == EW_OK && pthread_mutex_init(&m->lock, NULL) != 0)
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack editor lock)");
  if (rc == EW_OK) m->have_lock = 1;
  if (rc != EW_OK) {
    ew_wf_model_free(m);
    return rc;
  }
  *out = m;
  return EW_OK;
}

void ew_wf_model_free(ew_wf_model *m) {
  if (!m) return;
  if (m->have_lock) pthread_mutex_destroy(&m->lock);
  ew_stack_editor_free(m->ed);
  ew_stack_free(m->nominal);
  free(m->text);
  free(m);
}

const ew_stack *ew_wf_model_stack(const ew_wf_model *m) { return m->nominal; }
const ew_options *ew_wf_model_options(const ew_wf_model *m) { return &m->opt; }

ew_status ew_wf_key_check(const ew_wf_model *m, const char *key, const char *opt,
                          double *nominal, ew_error *err) {
  ew_wf_model *w = (ew_wf_model *)m; /* the lock is the model's only mutable part */
  pthread_mutex_lock(&w->lock);
  ew_status rc = ew_stack_editor_check(w->ed, key, opt, nominal, err);
  pthread_mutex_unlock(&w->lock);
  return rc;
}

ew_status ew_wf_stack_at(const ew_wf_model *m, size_t nkeys, const char *const *keys,
                         const double *values, ew_stack **out, ew_error *err) {
  ew_wf_model *w = (ew_wf_model *)m; /* the lock is the model's only mutable part */
  pthread_mutex_lock(&w->lock);
  ew_status rc = ew_stack_editor_build(w->ed, nkeys, keys, values, out, err);
  pthread_mutex_unlock(&w->lock);
  return rc;
}

/* ---- pools ------------------------------------------------------------------------------ */
ew_status ew_wf_pool_open(const ew_wf_model *m, int threads, ew_wf_pool *p, ew_error *err) {
  (void)err;
  p->m = m;
  p->n = threads > 0 ? (size_t)threads : 1;
  p->progress = NULL;
  return EW_OK;
}

void ew_wf_pool_free(ew_wf_pool *p) {
  if (p) p->m = NULL, p->n = 0;
}

ew_status ew_wf_pool_stack(const ew_wf_pool *p, size_t nkeys, const char *const *keys,
                           const double *values, ew_stack **out, ew_error *err) {
  *out = NULL;
  size_t t = (size_t)ew_wf_thread_index();
  if (t >= p->n) /* a loop with more threads than the pool was opened for */
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "internal: thread %zu of a pool of %zu", t,
                   p->n);
  return ew_wf_stack_at(p->m, nkeys, keys, values, out, err);
}

void ew_wf_point_text(char *buf, size_t size, size_t nk, const char *const *keys,
                      const double *vals) {
  if (nk > 1) snprintf(buf, size, "%s = %.10g, %s = %.10g", keys[0], vals[0], keys[1], vals[1]);
  else if (nk == 1) snprintf(buf, size, "%s = %.10g", keys[0], vals[0]);
  else snprintf(buf, size, "the nominal stack");
}

ew_status ew_wf_pool_solve(const ew_wf_pool *p, size_t nk, const char *const *keys,
                           const double *vals, ew_stack **st, ew_result **res, ew_error *err) {
  *res = NULL;
  *st = NULL;
  if (ew_progress_cancelled(p->progress))
    return ew_progress_fail(p->progress, "the search", "solves", err);
  ew_status rc = ew_wf_pool_stack(p, nk, keys, vals, st, err);
  if (rc != EW_OK) return rc;
  ew_error e2 = {0};
  rc = ew_solve(*st, &p->m->opt, res, &e2);
  if (rc == EW_OK && p->progress) ew_progress_step(p->progress);
  if (rc != EW_OK) {
    ew_stack_free(*st);
    *st = NULL;
    /* say at which point of a sweep or search the solver failed */
    char at[320];
    ew_wf_point_text(at, sizeof at, nk, keys, vals);
    ew_fail(err, rc, e2.file[0] ? e2.file : NULL, e2.line, "at %s: %s", at, e2.message);
  }
  return rc;
}
