/* stack_edit.c — set numeric keys of a stack in its parsed libconfig tree, build the stack,
 * restore the tree (see stack_edit.h).  libconfig is used here, as in stack.c, so that every
 * present and future numeric key of the stack reader stays variable without touching it. */
#include "stack_edit.h"

#include <libconfig.h>
#include <math.h>
#include <stdint.h> /* SIZE_MAX */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "stack.h"
#include "stack_repeat.h"

/* How to put one setting back after a build.  No undo allocates: a changed scalar gets its
 * type and value back in place, and a setting that a build added or took away is detached
 * from or re-attached to its group by pointer (see attach and detach). */
typedef enum { UNDO_VALUE, UNDO_DETACH, UNDO_ATTACH } undo_kind;
typedef struct {
  undo_kind kind;
  config_setting_t *group, *s;
  int type; /* UNDO_VALUE: CONFIG_TYPE_INT, _INT64 or _FLOAT */
  long long ival;
  double fval;
} edit_undo;

/* A setting the file leaves out, created when its key is checked (before any build) and kept
 * detached from its group between builds; a build attaches it.  Creating it in the build
 * would call libconfig's allocator at every point, and libconfig 1.5 does not survive an
 * allocation failure (its setting constructor dereferences NULL). */
typedef struct {
  config_setting_t *group, *s;
  int attached;
} reserved_key;

/* A key of one copy of a repeated layer (NAME#k.KEY): set in the written group only while
 * that copy is read (the hook of ew_stack_from_config_hooked), since all copies share it. */
typedef struct {
  size_t layer; /* index in the expanded stack */
  config_setting_t *group;
  const char *name, *key;
  double value;
} copy_edit;

struct ew_stack_editor {
  config_t cfg;
  const ew_stack *nominal;
  const ew_catalogue *cat;
  edit_undo *undo; /* the edits of the build in progress, in order */
  size_t n_undo, cap_undo;
  reserved_key *res;
  size_t n_res, cap_res;
  copy_edit *copies; /* the one-copy keys of the build in progress ([nkeys], its own) */
  size_t n_copies, copy_mark;
};

/* ---- settings in and out of a group without allocating ----------------------------------
 * libconfig 1.5's config_list_t (public in libconfig.h) holds a group's settings; it only
 * ever grows its element array (config_setting_remove shrinks the length, not the array).
 * So a list that once held n settings has room for n, and a setting taken out can be put
 * back by pointer as long as no more settings are attached than the group once held: the
 * reservation below attaches every reserved setting of a group before it adds one more. */
static void detach(config_setting_t *group, config_setting_t *s) {
  config_list_t *l = group->value.list;
  for (unsigned i = 0; l && i < l->length; i++)
    if (l->elements[i] == s) {
      memmove(l->elements + i, l->elements + i + 1, (l->length - i - 1) * sizeof *l->elements);
      l->length--;
      return;
    }
}

static void attach(config_setting_t *group, config_setting_t *s) {
  config_list_t *l = group->value.list;
  l->elements[l->length++] = s;
}

ew_status ew_stack_editor_open(const char *text, const ew_stack *nominal,
                               const ew_catalogue *cat, ew_stack_editor **out, ew_error *err) {
  *out = NULL;
  ew_stack_editor *ed = calloc(1, sizeof *ed);
  if (!ed) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack editor)");
  config_init(&ed->cfg);
  ed->nominal = nominal;
  ed->cat = cat;
  if (!strncmp(text, "\xEF\xBB\xBF", 3)) text += 3; /* a UTF-8 BOM, as the reader (stack.c) */
  if (!config_read_string(&ed->cfg, text)) {
    ew_stack_editor_free(ed);
    return ew_fail(err, EW_ERR_IO, nominal->path, 0, "cannot re-read '%s' with libconfig",
                   nominal->path);
  }
  *out = ed;
  return EW_OK;
}

void ew_stack_editor_free(ew_stack_editor *ed) {
  if (!ed) return;
  /* reserved settings go back into their groups so that config_destroy frees them */
  for (size_t i = 0; i < ed->n_res; i++)
    if (!ed->res[i].attached) attach(ed->res[i].group, ed->res[i].s);
  config_destroy(&ed->cfg);
  free(ed->undo);
  free(ed->res);
  free(ed);
}

/* ---- finding the setting a key names --------------------------------------------------- */
/* 1 when name[0..len) followed by '.' and more starts key. */
static int owns(const char *name, size_t len, const char *key) {
  return !strncmp(name, key, len) && key[len] == '.' && key[len + 1];
}

/* The written group of the layer or user material whose name is the longest prefix of key
 * followed by '.' and more; NULL when none.  *plen receives the name's length, *copy the
 * expanded index of the one copy the name is (NAME#k, or any layer of a repeat group by its
 * full name), else SIZE_MAX: a layer in no repeat group, or the written NAME of a repeated
 * layer, whose every copy is read from the group (stack_repeat.h). */
static config_setting_t *find_owner(const ew_stack_editor *ed, const char *key, size_t *plen,
                                    size_t *copy) {
  const ew_stack *st = ed->nominal;
  config_setting_t *root = config_root_setting(&ed->cfg), *best = NULL;
  *plen = 0;
  *copy = SIZE_MAX;
  config_setting_t *list = config_setting_get_member(root, "layers");
  size_t best_k = SIZE_MAX;
  for (size_t k = 0; list && k < st->n_layers; k++) {
    const ew_layer *Ly = &st->layers[k];
    size_t L = strlen(Ly->name);
    const char *hash = Ly->copy == 1 ? strrchr(Ly->name, '#') : NULL;
    if (L > *plen && owns(Ly->name, L, key)) best_k = k, *plen = L, *copy = Ly->copy ? k : SIZE_MAX;
    if (hash && (L = (size_t)(hash - Ly->name)) > *plen && owns(Ly->name, L, key))
      best_k = k, *plen = L, *copy = SIZE_MAX;
  }
  if (best_k != SIZE_MAX) best = ew_repeat_written(list, st->layers[best_k].written);
  if (!best) *plen = 0, *copy = SIZE_MAX;
  config_setting_t *mats = config_setting_get_member(root, "materials");
  for (int i = 0; mats && i < config_setting_length(mats); i++) {
    config_setting_t *g = config_setting_get_elem(mats, (unsigned)i);
    const char *nm = NULL;
    size_t L;
    if (g && config_setting_lookup_string(g, "name", &nm) && (L = strlen(nm)) > *plen &&
        owns(nm, L, key))
      best = g, *plen = L, *copy = SIZE_MAX;
  }
  return best;
}

/* The group named by the first glen characters of name inside owner, or NULL. */
static config_setting_t *find_group(config_setting_t *owner, const char *name, size_t glen) {
  for (int i = 0; i < config_setting_length(owner); i++) {
    config_setting_t *g = config_setting_get_elem(owner, (unsigned)i);
    const char *gn = g ? config_setting_name(g) : NULL;
    if (gn && strlen(gn) == glen && !strncmp(gn, name, glen) && config_setting_is_group(g))
      return g;
  }
  return NULL;
}

static ew_status no_such_owner(const ew_stack *st, const char *key, const char *opt,
                               ew_error *err) {
  char names[512];
  size_t used = 0;
  names[0] = '\0';
  for (size_t k = 0; k < st->n_layers && used + 1 < sizeof names; k++) {
    int w = snprintf(names + used, sizeof names - used, "%s%s", k ? ", " : "", st->layers[k].name);
    if (w < 0) break;
    used += (size_t)w;
  }
  size_t head = (size_t)(strchr(key, '.') - key);
  return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: no layer, material or group named '%.*s' in "
                 "%s (layers: %s)", opt, key, (int)head, key, st->path, names);
}

/* The group and setting name a key refers to (see stack_edit.h), and in *copy the expanded
 * index of the one copy it is for (SIZE_MAX: every layer read from the group).  *group is
 * NULL on error. */
static ew_status locate(const ew_stack_editor *ed, const char *key, const char *opt,
                        config_setting_t **group, const char **name, size_t *copy,
                        ew_error *err) {
  *group = NULL;
  *copy = SIZE_MAX;
  const char *dot = strrchr(key, '.');
  if (!key[0] || (dot && !dot[1]) || dot == key)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "%s: '%s' is not a key; write LAYER.KEY (e.g. well.thickness) or a top-level "
                   "key (e.g. temperature)", opt, key);
  if (!dot) {
    *group = config_root_setting(&ed->cfg);
    *name = key;
    return EW_OK;
  }
  size_t plen;
  config_setting_t *best = find_owner(ed, key, &plen, copy);
  const char *rest = best ? key + plen + 1 : key;
  config_setting_t *owner = best ? best : config_root_setting(&ed->cfg);
  const char *sub = strchr(rest, '.');
  if (!sub && best) {
    *group = owner;
    *name = rest;
    return EW_OK;
  }
  if (sub && !strchr(sub + 1, '.')) { /* GROUP.KEY inside the owner */
    size_t glen = (size_t)(sub - rest);
    config_setting_t *g = find_group(owner, rest, glen);
    if (g) {
      *group = g;
      *name = sub + 1;
      return EW_OK;
    }
    if (best)
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: '%.*s' has no group '%.*s' in %s", opt,
                     key, (int)plen, key, (int)glen, rest, ed->nominal->path);
  }
  return no_such_owner(ed->nominal, key, opt, err);
}

static int numeric_type(int t) {
  return t == CONFIG_TYPE_INT || t == CONFIG_TYPE_INT64 || t == CONFIG_TYPE_FLOAT;
}

/* The reserved setting name of group, or NULL. */
static reserved_key *find_reserved(ew_stack_editor *ed, const config_setting_t *group,
                                   const char *name) {
  for (size_t i = 0; i < ed->n_res; i++)
    if (ed->res[i].group == group && !strcmp(config_setting_name(ed->res[i].s), name))
      return &ed->res[i];
  return NULL;
}

static int is_reserved(const ew_stack_editor *ed, const config_setting_t *s) {
  for (size_t i = 0; i < ed->n_res; i++)
    if (ed->res[i].s == s) return 1;
  return 0;
}

/* Put every setting of g that is out of the tree now back in (out = 0), or take the same
 * ones out again (out = 1): the reserved settings not attached and those a build in progress
 * took out (its UNDO_ATTACH records). */
static void out_of_group(ew_stack_editor *ed, config_setting_t *g, int out) {
  for (size_t i = 0; i < ed->n_res; i++)
    if (ed->res[i].group == g && !ed->res[i].attached)
      (out ? detach : attach)(g, ed->res[i].s);
  for (size_t i = 0; i < ed->n_undo; i++)
    if (ed->undo[i].kind == UNDO_ATTACH && ed->undo[i].group == g &&
        !is_reserved(ed, ed->undo[i].s))
      (out ? detach : attach)(g, ed->undo[i].s);
}

/* Create setting name of group (absent from the file) and keep it detached (see
 * reserved_key).  The new setting reports the line of its group. */
static ew_status reserve(ew_stack_editor *ed, config_setting_t *g, const char *name,
                         const char *opt, const char *key, ew_error *err) {
  if (find_reserved(ed, g, name)) return EW_OK;
  if (ed->n_res == ed->cap_res) {
    size_t cap = ed->cap_res ? 2 * ed->cap_res : 4;
    reserved_key *r = realloc(ed->res, cap * sizeof *r);
    if (!r) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack edit)");
    ed->res = r;
    ed->cap_res = cap;
  }
  /* the group's list then grows to hold all its settings at once (see attach) */
  out_of_group(ed, g, 0);
  config_setting_t *s = config_setting_add(g, name, CONFIG_TYPE_FLOAT);
  out_of_group(ed, g, 1);
  if (!s)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: '%s' cannot be added to the stack", opt,
                   key, name);
  s->line = g->line;
  detach(g, s);
  ed->res[ed->n_res++] = (reserved_key){g, s, 0};
  return EW_OK;
}

ew_status ew_stack_editor_check(ew_stack_editor *ed, const char *key, const char *opt,
                                double *nominal, ew_error *err) {
  config_setting_t *g;
  const char *name;
  size_t copy;
  *nominal = NAN;
  ew_status rc = locate(ed, key, opt, &g, &name, &copy, err);
  if (rc != EW_OK) return rc;
  config_setting_t *s = config_setting_get_member(g, name);
  if (!s && (rc = ew_stack_check_key(g, name, opt, key, err)) != EW_OK) return rc;
  if (s && !numeric_type(config_setting_type(s)))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: that setting is not a number", opt, key);
  if (!s) return reserve(ed, g, name, opt, key, err);
  if (config_setting_type(s) == CONFIG_TYPE_FLOAT) *nominal = config_setting_get_float(s);
  else if (config_setting_type(s) == CONFIG_TYPE_INT64)
    *nominal = (double)config_setting_get_int64(s);
  else *nominal = config_setting_get_int(s);
  return EW_OK;
}

/* ---- edits and their undo -------------------------------------------------------------- */
/* Room for one more undo record; 0 when out of memory. */
static edit_undo *new_undo(ew_stack_editor *ed) {
  if (ed->n_undo == ed->cap_undo) {
    size_t cap = ed->cap_undo ? 2 * ed->cap_undo : 8;
    edit_undo *u = realloc(ed->undo, cap * sizeof *u);
    if (!u) return NULL;
    ed->undo = u;
    ed->cap_undo = cap;
  }
  edit_undo *u = &ed->undo[ed->n_undo++];
  memset(u, 0, sizeof *u);
  return u;
}

/* Give numeric setting s the type and value (no allocation).  libconfig 1.5 has no setter that
 * changes a scalar's type, and remove-then-add allocates inside its constructor, which does not
 * survive an allocation failure; config_setting_t is a public struct, and type and value are
 * all a scalar is. */
static void set_scalar(config_setting_t *s, int type, long long ival, double fval) {
  s->type = (short)type;
  if (type == CONFIG_TYPE_FLOAT) s->value.fval = fval;
  else if (type == CONFIG_TYPE_INT64) s->value.llval = ival;
  else s->value.ival = (int)ival;
}

static void undo_one(ew_stack_editor *ed, const edit_undo *u) {
  if (u->kind == UNDO_VALUE) {
    set_scalar(u->s, u->type, u->ival, u->fval);
    return;
  }
  reserved_key *r = find_reserved(ed, u->group, config_setting_name(u->s));
  if (u->kind == UNDO_DETACH) detach(u->group, u->s);
  else attach(u->group, u->s);
  if (r && r->s == u->s) r->attached = u->kind == UNDO_ATTACH;
}

static void undo_all(ew_stack_editor *ed) {
  while (ed->n_undo > 0) undo_one(ed, &ed->undo[--ed->n_undo]);
}

/* The value as a stack file holds it when written with 15 significant digits (what
 * config_write prints): the workflows re-wrote the stack as text before they edited the tree,
 * and this keeps every sweep, match and tolerance result bit for bit what it was. */
static double text_value(double v) {
  char buf[40];
  snprintf(buf, sizeof buf, "%.15g", v);
  return strtod(buf, NULL);
}

static ew_status out_of_memory(ew_error *err) {
  return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack edit)");
}

/* Take setting name of g out of the tree for this build (logged); *line receives its line. */
static ew_status take_out(ew_stack_editor *ed, config_setting_t *g, const char *name,
                          unsigned *line, ew_error *err) {
  config_setting_t *s = config_setting_get_member(g, name);
  if (!s) return EW_OK;
  edit_undo *u = new_undo(ed);
  if (!u) return out_of_memory(err);
  *u = (edit_undo){.kind = UNDO_ATTACH, .group = g, .s = s};
  *line = s->line;
  detach(g, s);
  reserved_key *r = find_reserved(ed, g, name);
  if (r && r->s == s) r->attached = 0;
  return EW_OK;
}

/* Setting name of group g (key names it) to value, logged for the undo. */
static ew_status set_in(ew_stack_editor *ed, const char *key, config_setting_t *g,
                        const char *name, double value, ew_error *err) {
  ew_status rc = EW_OK;
  config_setting_t *s = config_setting_get_member(g, name);
  unsigned line = g->line; /* an added setting reports its group */
  /* a layer's thickness is given one way: setting one form takes the other out */
  const char *other = !strcmp(name, "thickness") ? "thickness_ml"
                      : !strcmp(name, "thickness_ml") ? "thickness" : NULL;
  if (other && g != config_root_setting(&ed->cfg) && (rc = take_out(ed, g, other, &line, err)))
    return rc;
  edit_undo *u = new_undo(ed);
  if (!u) return out_of_memory(err);
  if (s) {
    *u = (edit_undo){.kind = UNDO_VALUE, .group = g, .s = s, .type = config_setting_type(s)};
    if (u->type == CONFIG_TYPE_FLOAT) u->fval = config_setting_get_float(s);
    else if (u->type == CONFIG_TYPE_INT64) u->ival = config_setting_get_int64(s);
    else u->ival = config_setting_get_int(s);
  } else {
    /* a key the file leaves out was reserved when it was checked (ew_stack_editor_check);
     * one set without a check is reserved by its first build (a libconfig allocation, once) */
    reserved_key *r = find_reserved(ed, g, name);
    if (!r && (rc = reserve(ed, g, name, "--vary", key, err)) == EW_OK)
      r = find_reserved(ed, g, name);
    if (!r) {
      ed->n_undo--;
      return rc;
    }
    s = r->s;
    s->line = line;
    attach(g, s);
    r->attached = 1;
    *u = (edit_undo){.kind = UNDO_DETACH, .group = g, .s = s};
  }
  /* an integer literal becomes a float setting in place: it must hold the new value */
  set_scalar(s, CONFIG_TYPE_FLOAT, 0, text_value(value));
  return EW_OK;
}

/* Keys of every copy are set now; a key of one copy is kept for the hook below. */
static ew_status set_one(ew_stack_editor *ed, const char *key, double value, ew_error *err) {
  config_setting_t *g;
  const char *name;
  size_t copy;
  ew_status rc = locate(ed, key, "--vary", &g, &name, &copy, err);
  if (rc != EW_OK) return rc;
  if (!isfinite(value)) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: value is not finite", key);
  config_setting_t *s = config_setting_get_member(g, name);
  if (s && !numeric_type(config_setting_type(s)))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: that setting is not a number", key);
  if (copy == SIZE_MAX) return set_in(ed, key, g, name, value, err);
  ed->copies[ed->n_copies++] = (copy_edit){copy, g, name, key, value};
  return EW_OK;
}

/* The hook around each layer's read: one copy's keys set in its written group before, the
 * group put back after (undo entries above copy_mark are that copy's). */
static ew_status copy_before(void *ctx, size_t layer, ew_error *err) {
  ew_stack_editor *ed = ctx;
  ed->copy_mark = ed->n_undo;
  ew_status rc = EW_OK;
  for (size_t i = 0; i < ed->n_copies && rc == EW_OK; i++) {
    const copy_edit *c = &ed->copies[i];
    if (c->layer == layer) rc = set_in(ed, c->key, c->group, c->name, c->value, err);
  }
  return rc;
}

static ew_status copy_after(void *ctx, size_t layer, ew_error *err) {
  ew_stack_editor *ed = ctx;
  (void)layer;
  (void)err; /* putting settings back allocates nothing */
  while (ed->n_undo > ed->copy_mark) undo_one(ed, &ed->undo[--ed->n_undo]);
  return EW_OK;
}

/* "KEY = VALUE, KEY = VALUE" for messages. */
static void values_text(char *buf, size_t size, size_t nkeys, const char *const *keys,
                        const double *values) {
  size_t used = 0;
  buf[0] = '\0';
  for (size_t i = 0; i < nkeys && used + 1 < size; i++) {
    int w = snprintf(buf + used, size - used, "%s%s = %.10g", i ? ", " : "", keys[i], values[i]);
    if (w < 0) break;
    used += (size_t)w;
  }
}

ew_status ew_stack_editor_build(ew_stack_editor *ed, size_t nkeys, const char *const *keys,
                                const double *values, ew_stack **out, ew_error *err) {
  *out = NULL;
  ew_status rc = EW_OK;
  ed->n_copies = 0;
  ed->copies = nkeys ? malloc(nkeys * sizeof *ed->copies) : NULL;
  if (nkeys && !ed->copies) return out_of_memory(err);
  for (size_t i = 0; i < nkeys && rc == EW_OK; i++) rc = set_one(ed, keys[i], values[i], err);
  if (rc == EW_OK) {
    ew_error e2 = {0};
    const char *path = ed->nominal->path;
    const ew_stack_layer_hook hook = {ed, copy_before, copy_after};
    rc = ew_stack_from_config_hooked(&ed->cfg, path, ed->cat, ed->n_copies ? &hook : NULL, out,
                                     &e2);
    if (rc != EW_OK && err) { /* the reader's words and line, and the values that were set */
      char what[512];
      values_text(what, sizeof what, nkeys, keys, values);
      ew_fail(err, rc, e2.file[0] ? e2.file : path, e2.line, "with %s: %s", what, e2.message);
    }
  }
  undo_all(ed);
  free(ed->copies);
  ed->copies = NULL;
  ed->n_copies = 0;
  return rc;
}
