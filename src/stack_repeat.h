/* stack_repeat.h — repeat groups in a stack file's layers (issue 14 §1).
 *
 * An element of a `layers` list may be a repeat group instead of a layer:
 *     { repeat = 30; layers = ( { name = "well"; ... }, { name = "barrier"; ... } ); }
 * stands for its layers written `repeat` times in growth order; groups nest (at most
 * EW_REPEAT_MAX_DEPTH deep).  The layers are walked here without building anything: a count
 * pass checks every group (file:line of the group for a bad count, a bad key, an empty list,
 * too deep a nesting, too many expanded layers), then an iterator hands the stack reader the
 * written layer group of every expanded layer in growth order, with its copy number.  The
 * reader (stack.c) reads each copy from its written group, exactly as a layer typed out by
 * hand, so errors name the written layer's line.
 *
 * Copy names: a named layer in a repeat group (its `name` written once in the file) gives
 * copies NAME#k, k = 1, 2, … counting all copies of that written layer in growth order, also
 * across nested groups (well inside repeat 3 inside repeat 2: well#1 … well#6, the inner group
 * of the first outer period holding well#1 … well#3).  An unnamed layer is named by its
 * position in the expanded stack (layerN), as any unnamed layer.
 *
 * Written layers are numbered 0, 1, … depth first through the file (each layer group once,
 * whatever its group's count): ew_layer.written, and ew_repeat_written finds the group of a
 * number again in a tree parsed from the same text (stack editing). */
#ifndef EW_STACK_REPEAT_H
#define EW_STACK_REPEAT_H

#include <stddef.h>

#include "epiwell.h"

struct config_setting_t;

/* Nesting of repeat groups: a superlattice of multi-layer periods inside a period of a
 * longer structure is two; four leaves room without letting names grow without bound. */
#define EW_REPEAT_MAX_DEPTH 4
/* The most layers a stack with repeat groups expands to, and so the largest count of one
 * group: the size the linear reader is measured at (10^5 layers in 1.2 s, DEVELOPERS.md
 * "Benchmark").  Without it a 60-byte file could ask for 10^9 layer records. */
#define EW_REPEAT_MAX_LAYERS 100000

/* The stack reader's services the count pass uses (stack.c): its number fetch (finite
 * values, integers checked against the source text; 1 present, 0 absent, −1 reported) and
 * its key check (unknown keys with a suggestion), so repeat groups get the same messages. */
typedef struct {
  void *ctx;
  int (*number)(void *ctx, const struct config_setting_t *g, const char *key,
                const char *where, double *value, int *line);
  ew_status (*keys)(void *ctx, const struct config_setting_t *g, const char *const *keys,
                    size_t n, const char *where);
  const char *path; /* for messages */
  ew_error *err;
} ew_repeat_reader;

/* 1 when element g of a layers list is a repeat group (a group with `repeat` or `layers`). */
int ew_repeat_is_group(const struct config_setting_t *g);

/* Check every repeat group under list (a `layers` list) and count the expanded layers into
 * *n.  EW_ERR_INPUT with the file:line of the offending group or setting. */
ew_status ew_repeat_count(const ew_repeat_reader *rd, const struct config_setting_t *list,
                          size_t *n);

/* One expanded layer: the written layer group it is read from, that group's number among
 * the written layers, and its copy number k (1-based; 0 when no repeat group holds it). */
typedef struct {
  const struct config_setting_t *group;
  size_t written;
  size_t copy;
} ew_repeat_layer;

/* The walk over the expanded layers of a list checked by ew_repeat_count (no allocation). */
struct ew_repeat_frame {
  const struct config_setting_t *list;
  unsigned i;       /* next element */
  long copy, count; /* 1-based pass of this list, of count */
  size_t base;      /* number of its first written layer */
};
typedef struct {
  struct ew_repeat_frame f[EW_REPEAT_MAX_DEPTH + 1];
  int top;          /* index of the innermost open list; −1 at the end */
  size_t written;   /* number of the next written layer */
} ew_repeat_iter;

void ew_repeat_begin(ew_repeat_iter *it, const struct config_setting_t *list);
/* The next expanded layer into *out; 0 at the end. */
int ew_repeat_next(ew_repeat_iter *it, ew_repeat_layer *out);

/* The group of written layer number `written` under list (a tree parsed from the text the
 * numbers come from), or NULL. */
struct config_setting_t *ew_repeat_written(const struct config_setting_t *list, size_t written);

#endif
