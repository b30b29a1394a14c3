/* stack_repeat.c — repeat groups in a stack's layers: checks, the expanded count, the walk
 * over the expanded layers (see stack_repeat.h). */
#include "stack_repeat.h"

#include <libconfig.h>
#include <math.h>

#include "error.h"

static const char *const repeat_keys[] = {"repeat", "layers"};
#define WHERE "in a repeat group"

static int line_of(const config_setting_t *s) {
  return s ? (int)config_setting_source_line(s) : 0;
}

int ew_repeat_is_group(const config_setting_t *g) {
  return g && config_setting_type(g) == CONFIG_TYPE_GROUP &&
         (config_setting_get_member(g, "repeat") || config_setting_get_member(g, "layers"));
}

/* repeat = N of group g: a whole number of copies in [1, EW_REPEAT_MAX_LAYERS]. */
static ew_status group_count(const ew_repeat_reader *rd, const config_setting_t *g,
                             long *count) {
  int line = line_of(g), l = line;
  ew_status st = rd->keys(rd->ctx, g, repeat_keys, 2, WHERE);
  if (st) return st;
  double v = 0.0;
  int got = rd->number(rd->ctx, g, "repeat", WHERE, &v, &l);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0)
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, line, "a repeat group needs 'repeat = N;' "
                   "(how many times its layers are grown)");
  if (v != floor(v))
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, l, "repeat = %g must be a whole number "
                   "of copies", v);
  if (v < 1)
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, l, "repeat = %g must be at least 1", v);
  if (v > EW_REPEAT_MAX_LAYERS)
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, l, "repeat = %g is above the limit of %d "
                   "copies (a stack with repeat groups holds at most %d layers)", v,
                   EW_REPEAT_MAX_LAYERS, EW_REPEAT_MAX_LAYERS);
  *count = (long)v;
  return EW_OK;
}

/* The group's own non-empty `layers` list into *inner. */
static ew_status group_layers(const ew_repeat_reader *rd, const config_setting_t *g,
                              const config_setting_t **inner) {
  const config_setting_t *in = config_setting_get_member(g, "layers");
  if (!in)
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, line_of(g), "a repeat group needs its "
                   "'layers' list: { repeat = N; layers = ( { ... }, ... ); }");
  int type = config_setting_type(in), n = config_setting_length(in);
  if (type != CONFIG_TYPE_LIST && !(type == CONFIG_TYPE_ARRAY && n == 0))
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, line_of(in), "'layers' %s must be a list "
                   "of groups: layers = ( { ... }, ... );", WHERE);
  if (n == 0)
    return ew_fail(rd->err, EW_ERR_INPUT, rd->path, line_of(in), "'layers' %s is empty: give "
                   "the layers of one period", WHERE);
  *inner = in;
  return EW_OK;
}

static ew_status too_many(const ew_repeat_reader *rd, int line) {
  return ew_fail(rd->err, EW_ERR_INPUT, rd->path, line, "this repeat group brings the stack "
                 "to more than %d layers, the limit of a stack with repeat groups",
                 EW_REPEAT_MAX_LAYERS);
}

/* Expanded layers of list (depth: the repeat groups around it) into *n.  Plain layers alone
 * are not limited here (a typed-out stack keeps the reader's own limits); once a repeat group
 * is in the count, the total stays within EW_REPEAT_MAX_LAYERS, checked before any product
 * could overflow. */
static ew_status count_list(const ew_repeat_reader *rd, const config_setting_t *list,
                            int depth, size_t *n) {
  size_t total = 0;
  int group_line = 0, len = config_setting_length(list);
  for (int i = 0; i < len; i++) {
    const config_setting_t *g = config_setting_get_elem(list, (unsigned)i);
    if (!ew_repeat_is_group(g)) {
      if (++total > EW_REPEAT_MAX_LAYERS && group_line) return too_many(rd, group_line);
      continue;
    }
    if (depth == EW_REPEAT_MAX_DEPTH)
      return ew_fail(rd->err, EW_ERR_INPUT, rd->path, line_of(g), "repeat groups nest at "
                     "most %d deep", EW_REPEAT_MAX_DEPTH);
    long count = 0;
    const config_setting_t *inner = NULL;
    size_t m = 0;
    ew_status st = group_count(rd, g, &count);
    if (!st) st = group_layers(rd, g, &inner);
    if (!st) st = count_list(rd, inner, depth + 1, &m);
    if (st) return st;
    group_line = line_of(g);
    if (m > EW_REPEAT_MAX_LAYERS / (size_t)count ||
        total + (size_t)count * m > EW_REPEAT_MAX_LAYERS)
      return too_many(rd, group_line);
    total += (size_t)count * m;
  }
  *n = total;
  return EW_OK;
}

ew_status ew_repeat_count(const ew_repeat_reader *rd, const config_setting_t *list, size_t *n) {
  *n = 0;
  return count_list(rd, list, 0, n);
}

void ew_repeat_begin(ew_repeat_iter *it, const config_setting_t *list) {
  it->top = 0;
  it->written = 0;
  it->f[0] = (struct ew_repeat_frame){list, 0, 1, 1, 0};
}

/* The count of a group ew_repeat_count accepted (a whole number, stored as libconfig read it). */
static long stored_count(const config_setting_t *g) {
  const config_setting_t *s = config_setting_get_member(g, "repeat");
  switch (config_setting_type(s)) {
  case CONFIG_TYPE_INT: return config_setting_get_int(s);
  case CONFIG_TYPE_INT64: return (long)config_setting_get_int64(s);
  default: return (long)config_setting_get_float(s);
  }
}

int ew_repeat_next(ew_repeat_iter *it, ew_repeat_layer *out) {
  while (it->top >= 0) {
    struct ew_repeat_frame *f = &it->f[it->top];
    if (f->i >= (unsigned)config_setting_length(f->list)) {
      if (f->copy < f->count) { /* the next period: the same written layers again */
        f->copy++;
        f->i = 0;
        it->written = f->base;
      } else if (--it->top >= 0) {
        it->f[it->top].i++;
      }
      continue;
    }
    const config_setting_t *g = config_setting_get_elem(f->list, f->i);
    if (ew_repeat_is_group(g) && it->top < EW_REPEAT_MAX_DEPTH) {
      it->f[++it->top] = (struct ew_repeat_frame){config_setting_get_member(g, "layers"), 0, 1,
                                                  stored_count(g), it->written};
      continue;
    }
    out->group = g;
    out->written = it->written++;
    /* copy k − 1 in mixed radix: the passes of the open groups, outermost first */
    size_t k = 0;
    for (int d = 1; d <= it->top; d++)
      k = k * (size_t)it->f[d].count + (size_t)(it->f[d].copy - 1);
    out->copy = it->top > 0 ? k + 1 : 0;
    f->i++;
    return 1;
  }
  return 0;
}

static config_setting_t *walk(const config_setting_t *list, size_t *left, int depth) {
  int len = config_setting_length(list);
  for (int i = 0; i < len; i++) {
    config_setting_t *g = config_setting_get_elem(list, (unsigned)i);
    if (ew_repeat_is_group(g) && depth < EW_REPEAT_MAX_DEPTH) {
      const config_setting_t *inner = config_setting_get_member(g, "layers");
      config_setting_t *r = inner ? walk(inner, left, depth + 1) : NULL;
      if (r) return r;
      continue;
    }
    if ((*left)-- == 0) return g;
  }
  return NULL;
}

config_setting_t *ew_repeat_written(const config_setting_t *list, size_t written) {
  size_t left = written;
  return list ? walk(list, &left, 0) : NULL;
}
