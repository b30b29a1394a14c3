/* stack_model.c — a stack file opened for the workflows and solved at key values (see
 * stack_model.h). */
#include "stack_model.h"

#include <errno.h>
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
  ew_stack_editor *probe;  /* only read: the key checks */
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
  if (m->opt.lowest_levels > 0 && m->opt.lowest_levels < EW_WF_INTERBAND_MAX)
    m->opt.lowest_levels = EW_WF_INTERBAND_MAX;
  /* The reader validates first, so a broken file is reported with its own file:line. */
  ew_status rc = ew_stack_read_file(path, cat, &m->nominal, err);
  if (rc == EW_OK) rc = slurp(path, &m->text, err);
  if (rc == EW_OK) rc = ew_stack_editor_open(m->text, m->nominal, cat, &m->probe, err);
  if (rc != EW_OK) {
    ew_wf_model_free(m);
    return rc;
  }
  *out = m;
  return EW_OK;
}

void ew_wf_model_free(ew_wf_model *m) {
  if (!m) return;
  ew_stack_editor_free(m->probe);
  ew_stack_free(m->nominal);
  free(m->text);
  free(m);
}

const ew_stack *ew_wf_model_stack(const ew_wf_model *m) { return m->nominal; }
const ew_options *ew_wf_model_options(const ew_wf_model *m) { return &m->opt; }

ew_status ew_wf_key_check(const ew_wf_model *m, const char *key, const char *opt,
                          double *nominal, ew_error *err) {
  return ew_stack_editor_check(m->probe, key, opt, nominal, err);
}

ew_status ew_wf_stack_at(const ew_wf_model *m, size_t nkeys, const char *const *keys,
                         const double *values, ew_stack **out, ew_error *err) {
  *out = NULL;
  ew_stack_editor *ed = NULL;
  ew_status rc = ew_stack_editor_open(m->text, m->nominal, m->cat, &ed, err);
  if (rc == EW_OK) rc = ew_stack_editor_build(ed, nkeys, keys, values, out, err);
  ew_stack_editor_free(ed);
  return rc;
}

/* ---- pools ------------------------------------------------------------------------------ */
ew_status ew_wf_pool_open(const ew_wf_model *m, int threads, ew_wf_pool *p, ew_error *err) {
  p->m = m;
  p->n = threads > 0 ? (size_t)threads : 1;
  p->ed = calloc(p->n, sizeof *p->ed);
  if (!p->ed) {
    p->n = 0;
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack editors)");
  }
  return EW_OK;
}

void ew_wf_pool_free(ew_wf_pool *p) {
  if (!p || !p->ed) return;
  for (size_t i = 0; i < p->n; i++) ew_stack_editor_free(p->ed[i]);
  free(p->ed);
  p->ed = NULL;
  p->n = 0;
}

ew_status ew_wf_pool_stack(const ew_wf_pool *p, size_t nkeys, const char *const *keys,
                           const double *values, ew_stack **out, ew_error *err) {
  *out = NULL;
  size_t t = (size_t)ew_wf_thread_index();
  if (t >= p->n) /* a loop with more threads than the pool was opened for */
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "internal: thread %zu of a pool of %zu", t,
                   p->n);
  /* only thread t touches slot t */
  if (!p->ed[t]) {
    const ew_wf_model *m = p->m;
    ew_status rc = ew_stack_editor_open(m->text, m->nominal, m->cat, &p->ed[t], err);
    if (rc != EW_OK) return rc;
  }
  return ew_stack_editor_build(p->ed[t], nkeys, keys, values, out, err);
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
  ew_status rc = ew_wf_pool_stack(p, nk, keys, vals, st, err);
  if (rc != EW_OK) return rc;
  ew_error e2 = {0};
  rc = ew_solve(*st, &p->m->opt, res, &e2);
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
