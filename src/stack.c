/* stack.c — reading and validating a layer-stack file (libconfig syntax).
 *
 * Every rejection names file:line so a user can fix the file without guessing; the reader
 * checks physical plausibility as well as syntax because a typo such as "thickness = 8000"
 * would otherwise surface much later as a solver running out of memory. */
#include "stack.h"

#include <ctype.h>
#include <errno.h>
#include <libconfig.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"

/* Plausibility limits (see the header of this file for why they exist). */
#define MAX_LAYER_NM 10000.0
#define MAX_TOTAL_NM 20000.0
#define MAX_TEMPERATURE_K 1500.0
#define MAX_GRID_STEP_NM 1.0
#define MAX_NODES 5e6
#define BYTES_PER_NODE_PER_BAND 200.0 /* solver's rough footprint: matrix, LU fill, vectors */
#define DEFAULT_TEMPERATURE_K 300.0
/* Stack files are a few hundred bytes; anything this big is not one. */
#define MAX_FILE_BYTES (16L * 1024 * 1024)
/* "Not given" for the X and L gaps of user materials: far above any real gap. */
#define GAP_NOT_GIVEN_EV 1e9

static const char *const top_keys[] = {"temperature", "grid_step", "materials", "layers"};
static const char *const layer_keys[] = {"name", "material", "x", "thickness"};
static const char *const umat_keys[] = {"name", "Ec", "Ev", "me", "mhh", "mlh",
                                        "mhh_par", "mlh_par", "eps_static"};
static const char *const umat_required[] = {"Ec", "Ev", "me", "mhh", "mlh"};
#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

typedef struct {
  char name[EW_NAME_MAX];
  int line;
  ew_bands bands;
} user_material;

typedef struct {
  const char *path;
  const char *text; /* the source, to re-check integers (see int_is_exact) */
  const ew_catalogue *cat;
  ew_error *err;
  user_material *umat;
  size_t n_umat;
} reader;

/* Formats the message once here so call sites stay one line each. */
#if defined(__GNUC__)
__attribute__((format(printf, 3, 4)))
#endif
static ew_status
fail(const reader *r, int line, const char *fmt, ...) {
  char msg[1024];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(msg, sizeof msg, fmt, ap);
  va_end(ap);
  return ew_fail(r->err, EW_ERR_INPUT, r->path, line, "%s", msg);
}

static int line_of(const config_setting_t *s) {
  return s ? (int)config_setting_source_line(s) : 0;
}

/* Case-insensitive Levenshtein distance, so "Gaas" still finds "GaAs".  Names are at most a
 * few dozen characters; longer inputs are clipped (they get no useful suggestion anyway). */
static size_t edit_distance(const char *a, const char *b) {
  enum { N = 128 };
  size_t la = strlen(a), lb = strlen(b);
  if (la > N - 1) la = N - 1;
  if (lb > N - 1) lb = N - 1;
  size_t row[N];
  for (size_t j = 0; j <= lb; j++) row[j] = j;
  for (size_t i = 1; i <= la; i++) {
    size_t diag = row[0];
    row[0] = i;
    for (size_t j = 1; j <= lb; j++) {
      size_t up = row[j];
      int same = tolower((unsigned char)a[i - 1]) == tolower((unsigned char)b[j - 1]);
      size_t best = diag + (same ? 0 : 1);
      if (up + 1 < best) best = up + 1;
      if (row[j - 1] + 1 < best) best = row[j - 1] + 1;
      row[j] = best;
      diag = up;
    }
  }
  return row[lb];
}

/* A suggestion is only useful when it is plausibly what was meant. */
static int close_enough(const char *typed, size_t d) {
  size_t len = strlen(typed);
  size_t limit = len / 3 > 2 ? len / 3 : 2;
  return d <= limit;
}

static const char *nearest_key(const char *name, const char *const *keys, size_t n) {
  const char *best = NULL;
  size_t best_d = (size_t)-1;
  for (size_t i = 0; i < n; i++) {
    size_t d = edit_distance(name, keys[i]);
    if (d < best_d) best_d = d, best = keys[i];
  }
  return best && close_enough(name, best_d) ? best : NULL;
}

static void join_keys(char *buf, size_t size, const char *const *keys, size_t n) {
  size_t used = 0;
  buf[0] = '\0';
  for (size_t i = 0; i < n && used < size; i++) {
    int k = snprintf(buf + used, size - used, "%s%s", i ? ", " : "", keys[i]);
    if (k < 0) break;
    used += (size_t)k;
  }
}

/* Reject any key of group that is not in keys; where is e.g. "in layer 'well'". */
static ew_status check_keys(const reader *r, const config_setting_t *group,
                            const char *const *keys, size_t n, const char *where) {
  int len = config_setting_length(group);
  for (int i = 0; i < len; i++) {
    const config_setting_t *s = config_setting_get_elem(group, (unsigned)i);
    const char *name = config_setting_name(s);
    if (!name) continue;
    size_t k = 0;
    while (k < n && strcmp(name, keys[k]) != 0) k++;
    if (k < n) continue;
    const char *hint = nearest_key(name, keys, n);
    if (hint) return fail(r, line_of(s), "unknown key '%s' %s; did you mean '%s'?", name, where, hint);
    char list[256];
    join_keys(list, sizeof list, keys, n);
    return fail(r, line_of(s), "unknown key '%s' %s (valid keys: %s)", name, where, list);
  }
  return EW_OK;
}

static const char *type_word(const config_setting_t *s) {
  switch (config_setting_type(s)) {
  case CONFIG_TYPE_STRING: return "a string";
  case CONFIG_TYPE_BOOL: return "a boolean";
  case CONFIG_TYPE_GROUP: return "a group";
  case CONFIG_TYPE_LIST: return "a list";
  case CONFIG_TYPE_ARRAY: return "an array";
  default: return "a number";
  }
}

/* libconfig 1.5 stores a plain integer literal in 32 bits and silently wraps larger ones
 * ("thickness = 4294967304;" reads as 8).  Re-read the literal from the source line and
 * report whether it agrees with the stored value; 1 when the literal cannot be located
 * (value on another line than its key), since then there is nothing better to compare. */
static int int_is_exact(const reader *r, const char *key, int line, long long stored) {
  const char *p = r->text;
  for (int l = 1; l < line && p; l++) {
    p = strchr(p, '\n');
    if (p) p++;
  }
  if (!p) return 1;
  const char *end = strchr(p, '\n');
  if (!end) end = p + strlen(p);
  size_t klen = strlen(key);
  int found = 0;
  for (const char *q = p; q + klen <= end; q++) {
    if (strncmp(q, key, klen) != 0) continue;
    if (q > p && (isalnum((unsigned char)q[-1]) || q[-1] == '_')) continue;
    const char *v = q + klen;
    while (v < end && (*v == ' ' || *v == '\t')) v++;
    if (v >= end || (*v != '=' && *v != ':')) continue;
    v++;
    while (v < end && (*v == ' ' || *v == '\t')) v++;
    char *stop;
    errno = 0;
    double lit = strtod(v, &stop);
    if (stop == v) continue;
    found = 1;
    if (errno == 0 && lit == (double)stored) return 1;
  }
  return !found;
}

/* Fetch key of group as a finite double.  Returns 0 when absent (nothing reported), 1 when
 * present and valid, -1 after reporting an error.  Integers are accepted because people
 * naturally write "thickness = 8;". */
static int get_number(const reader *r, const config_setting_t *group, const char *key,
                      const char *where, double *value, int *line) {
  const config_setting_t *s = config_setting_get_member(group, key);
  if (!s) return 0;
  *line = line_of(s);
  switch (config_setting_type(s)) {
  case CONFIG_TYPE_INT:
    *value = (double)config_setting_get_int(s);
    if (!int_is_exact(r, key, *line, config_setting_get_int(s))) {
      fail(r, *line, "integer '%s'%s%s is too large to read exactly; write it with a decimal "
           "point (e.g. 1e10)", key, *where ? " " : "", where);
      return -1;
    }
    break;
  case CONFIG_TYPE_INT64: *value = (double)config_setting_get_int64(s); break;
  case CONFIG_TYPE_FLOAT: *value = config_setting_get_float(s); break;
  default:
    fail(r, *line, "'%s'%s%s must be a number, not %s", key, *where ? " " : "", where,
         type_word(s));
    return -1;
  }
  if (!isfinite(*value)) {
    fail(r, *line, "'%s'%s%s must be a finite number", key, *where ? " " : "", where);
    return -1;
  }
  return 1;
}

/* Fetch key of group as a non-empty name that fits EW_NAME_MAX.  Same return convention. */
static int get_name(const reader *r, const config_setting_t *group, const char *key,
                    const char *where, char out[EW_NAME_MAX], int *line) {
  const config_setting_t *s = config_setting_get_member(group, key);
  if (!s) return 0;
  *line = line_of(s);
  if (config_setting_type(s) != CONFIG_TYPE_STRING) {
    fail(r, *line, "'%s' %s must be a string in double quotes, not %s", key, where,
         type_word(s));
    return -1;
  }
  const char *v = config_setting_get_string(s);
  size_t len = strlen(v);
  if (len == 0) {
    fail(r, *line, "'%s' %s must not be empty", key, where);
    return -1;
  }
  if (len >= EW_NAME_MAX) {
    fail(r, *line, "'%s' %s is too long (%zu characters, at most %d): \"%.24s...\"", key,
         where, len, EW_NAME_MAX - 1, v);
    return -1;
  }
  memcpy(out, v, len + 1);
  return 1;
}

static const user_material *find_user(const reader *r, const char *name) {
  for (size_t i = 0; i < r->n_umat; i++)
    if (strcmp(r->umat[i].name, name) == 0) return &r->umat[i];
  return NULL;
}

/* ---- user-defined materials --------------------------------------------------------- */

static ew_status read_user_material(reader *r, const config_setting_t *g, size_t index) {
  char where[96];
  int line = line_of(g), kline = line;
  if (config_setting_type(g) != CONFIG_TYPE_GROUP)
    return fail(r, line, "entry %zu of 'materials' must be a group { name = ...; Ec = ...; }, "
                "not %s", index + 1, type_word(g));
  user_material *m = &r->umat[r->n_umat];
  memset(m, 0, sizeof *m);
  m->line = line;

  snprintf(where, sizeof where, "in material entry %zu", index + 1);
  int got = get_name(r, g, "name", where, m->name, &kline);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, line, "material entry %zu has no 'name'", index + 1);
  snprintf(where, sizeof where, "in material '%s'", m->name);
  ew_status st = check_keys(r, g, umat_keys, COUNT(umat_keys), where);
  if (st) return st;

  const user_material *dup = find_user(r, m->name);
  if (dup)
    return fail(r, kline, "material '%s' is defined twice (first at line %d)", m->name,
                dup->line);
  if (r->cat && ew_catalogue_find(r->cat, m->name) >= 0)
    return fail(r, kline, "user material '%s' would shadow the catalogue material of the "
                "same name; choose another name", m->name);

  for (size_t k = 0; k < COUNT(umat_required); k++)
    if (!config_setting_get_member(g, umat_required[k])) {
      char list[128];
      join_keys(list, sizeof list, umat_required, COUNT(umat_required));
      return fail(r, line, "material '%s' lacks '%s' (required: %s)", m->name,
                  umat_required[k], list);
    }

  double Ec = 0, Ev = 0, me = 0, mhh = 0, mlh = 0, eps = 0;
  int lEc = line, lEv = line, l = line;
  if (get_number(r, g, "Ec", where, &Ec, &lEc) < 0 || get_number(r, g, "Ev", where, &Ev, &lEv) < 0)
    return EW_ERR_INPUT;
  if (Ev >= Ec)
    return fail(r, lEv, "material '%s': Ev = %g eV must lie below Ec = %g eV", m->name, Ev, Ec);

  /* Masses must be positive: a zero or negative mass makes the kinetic operator indefinite. */
  const char *mass_keys[] = {"me", "mhh", "mlh", "mhh_par", "mlh_par"};
  double *mass_out[] = {&me, &mhh, &mlh, &m->bands.mhh_par, &m->bands.mlh_par};
  for (size_t k = 0; k < COUNT(mass_keys); k++) {
    int g2 = get_number(r, g, mass_keys[k], where, mass_out[k], &l);
    if (g2 < 0) return EW_ERR_INPUT;
    if (g2 == 0) { /* only the in-plane masses are optional: default to growth-axis ones */
      *mass_out[k] = k == 3 ? mhh : mlh;
      continue;
    }
    if (*mass_out[k] <= 0)
      return fail(r, l, "material '%s': mass '%s' = %g must be positive (units of m0)",
                  m->name, mass_keys[k], *mass_out[k]);
  }
  int ge = get_number(r, g, "eps_static", where, &eps, &l);
  if (ge < 0) return EW_ERR_INPUT;
  if (ge > 0 && eps <= 0)
    return fail(r, l, "material '%s': 'eps_static' = %g must be positive", m->name, eps);

  ew_bands *b = &m->bands;
  b->Ec_eV = Ec;
  b->Ev_eV = b->Ev_hh_eV = b->Ev_lh_eV = Ev;
  b->Eg_G_eV = Ec - Ev;
  b->Eg_X_eV = b->Eg_L_eV = GAP_NOT_GIVEN_EV;
  b->me = me;
  b->mhh_z = mhh;
  b->mlh_z = mlh;
  b->eps_r = ge > 0 ? eps : 0.0;
  b->a_nm = 0.0;
  b->lowest_valley = 0;
  r->n_umat++;
  return EW_OK;
}

static ew_status read_user_materials(reader *r, const config_setting_t *root) {
  const config_setting_t *list = config_setting_get_member(root, "materials");
  if (!list) return EW_OK;
  int type = config_setting_type(list), n = config_setting_length(list);
  /* An empty [] parses as an array; treat it like an empty list. */
  if (type != CONFIG_TYPE_LIST && !(type == CONFIG_TYPE_ARRAY && n == 0))
    return fail(r, line_of(list), "'materials' must be a list of groups: materials = ( { ... }, "
                "... ); not %s", type_word(list));
  if (n == 0) return EW_OK;
  r->umat = calloc((size_t)n, sizeof *r->umat);
  if (!r->umat) return ew_fail(r->err, EW_ERR_NOMEM, r->path, 0, "out of memory");
  for (int i = 0; i < n; i++) {
    ew_status st = read_user_material(r, config_setting_get_elem(list, (unsigned)i), (size_t)i);
    if (st) return st;
  }
  return EW_OK;
}

/* ---- layers ----------------------------------------------------------------------------- */

/* "unknown material" with the closest user or catalogue name. */
static ew_status unknown_material(const reader *r, int line, const char *name, const char *layer) {
  const char *best = NULL;
  size_t best_d = (size_t)-1;
  for (size_t i = 0; i < r->n_umat; i++) {
    size_t d = edit_distance(name, r->umat[i].name);
    if (d < best_d) best_d = d, best = r->umat[i].name;
  }
  size_t nc = r->cat ? ew_catalogue_count(r->cat) : 0;
  for (size_t i = 0; i < nc; i++) {
    const char *c = ew_catalogue_name(r->cat, i);
    if (!c) continue;
    size_t d = edit_distance(name, c);
    if (d < best_d) best_d = d, best = c;
  }
  if (best && close_enough(name, best_d))
    return fail(r, line, "unknown material '%s' in layer '%s'; did you mean '%s'?", name,
                layer, best);
  if (!r->cat)
    return fail(r, line, "unknown material '%s' in layer '%s' (no material catalogue is "
                "loaded; only materials defined in the file are available)", name, layer);
  return fail(r, line, "unknown material '%s' in layer '%s' (`epiwell materials` lists the "
              "catalogue; define others under 'materials')", name, layer);
}

static ew_status read_layer(reader *r, const config_setting_t *g, size_t index, ew_layer *L,
                            double T) {
  int line = line_of(g), l = line;
  char where[96];
  memset(L, 0, sizeof *L);
  L->line = line;
  if (config_setting_type(g) != CONFIG_TYPE_GROUP)
    return fail(r, line, "layer %zu must be a group { material = ...; thickness = ...; }, not %s",
                index + 1, type_word(g));

  snprintf(where, sizeof where, "of layer %zu", index + 1);
  int got = get_name(r, g, "name", where, L->name, &l);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) snprintf(L->name, sizeof L->name, "layer%zu", index + 1);
  snprintf(where, sizeof where, "in layer '%s'", L->name);
  ew_status st = check_keys(r, g, layer_keys, COUNT(layer_keys), where);
  if (st) return st;

  int lmat = line;
  got = get_name(r, g, "material", where, L->material, &lmat);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, line, "layer '%s' has no 'material'", L->name);

  int lth = line;
  got = get_number(r, g, "thickness", where, &L->thickness_nm, &lth);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, line, "layer '%s' has no 'thickness' (nm)", L->name);
  if (L->thickness_nm <= 0)
    return fail(r, lth, "thickness of layer '%s' must be positive (got %g nm)", L->name,
                L->thickness_nm);
  if (L->thickness_nm > MAX_LAYER_NM)
    return fail(r, lth, "thickness of layer '%s' is %g nm, above the %g nm limit (units are nm)",
                L->name, L->thickness_nm, MAX_LAYER_NM);

  int lx = line;
  got = get_number(r, g, "x", where, &L->x, &lx);
  if (got < 0) return EW_ERR_INPUT;
  L->has_x = got;

  const user_material *um = find_user(r, L->material);
  if (um) {
    if (L->has_x)
      return fail(r, lx, "layer '%s': 'x' given for user material '%s', which has no "
                  "composition", L->name, L->material);
    L->user_material = 1;
    L->bands = um->bands;
    return EW_OK;
  }
  int alloy = r->cat && ew_catalogue_find(r->cat, L->material) >= 0
                  ? ew_catalogue_is_alloy(r->cat, L->material)
                  : -1;
  if (alloy < 0) return unknown_material(r, lmat, L->material, L->name);
  if (alloy && !L->has_x)
    return fail(r, line, "layer '%s': alloy '%s' needs a composition 'x' in [0, 1]", L->name,
                L->material);
  if (!alloy && L->has_x)
    return fail(r, lx, "layer '%s': 'x' given for binary '%s', which has no composition",
                L->name, L->material);
  if (L->has_x && (L->x < 0 || L->x > 1))
    return fail(r, lx, "layer '%s': x = %g is outside [0, 1]", L->name, L->x);

  ew_error sub;
  memset(&sub, 0, sizeof sub);
  st = ew_material_bands(r->cat, L->material, L->has_x ? L->x : 0.0, T, &L->bands, &sub);
  if (st) /* keep the catalogue's code and words, but point at the layer that asked */
    return ew_fail(r->err, st, r->path, line, "layer '%s' (%s): %s", L->name, L->material,
                   sub.message[0] ? sub.message : "band parameters unavailable");
  return EW_OK;
}

static ew_status read_layers(reader *r, const config_setting_t *root, ew_stack *s) {
  const config_setting_t *list = config_setting_get_member(root, "layers");
  if (!list)
    return fail(r, 1, "no 'layers' list: the stack needs at least one layer, e.g. layers = ( "
                "{ material = \"GaAs\"; thickness = 8.0; } );");
  int type = config_setting_type(list), n = config_setting_length(list);
  if (type != CONFIG_TYPE_LIST && !(type == CONFIG_TYPE_ARRAY && n == 0))
    return fail(r, line_of(list), "'layers' must be a list of groups: layers = ( { ... }, ... ); "
                "not %s", type_word(list));
  if (n == 0) return fail(r, line_of(list), "'layers' is empty: the stack needs at least one layer");

  s->layers = calloc((size_t)n, sizeof *s->layers);
  if (!s->layers) return ew_fail(r->err, EW_ERR_NOMEM, r->path, 0, "out of memory");
  double z = 0;
  for (int i = 0; i < n; i++) {
    ew_layer *L = &s->layers[i];
    ew_status st = read_layer(r, config_setting_get_elem(list, (unsigned)i), (size_t)i, L,
                              s->temperature_K);
    if (st) return st;
    s->n_layers = (size_t)i + 1;
    for (int j = 0; j < i; j++)
      if (strcmp(s->layers[j].name, L->name) == 0)
        return fail(r, L->line, "duplicate layer name '%s' (first used at line %d)%s", L->name,
                    s->layers[j].line,
                    config_setting_get_member(config_setting_get_elem(list, (unsigned)i), "name")
                        ? ""
                        : "; an unnamed layer gets its position as name");
    L->z_start_nm = z;
    z += L->thickness_nm;
    if (z > MAX_TOTAL_NM)
      return fail(r, L->line, "total thickness reaches %g nm at layer '%s', above the %g nm "
                  "limit", z, L->name, MAX_TOTAL_NM);
  }
  s->total_nm = z;
  return EW_OK;
}

/* ---- top level ---------------------------------------------------------------------- */

static ew_status read_top(reader *r, const config_setting_t *root, ew_stack *s) {
  ew_status st = check_keys(r, root, top_keys, COUNT(top_keys), "at top level");
  if (st) return st;

  int l = 1;
  s->temperature_K = DEFAULT_TEMPERATURE_K;
  int got = get_number(r, root, "temperature", "", &s->temperature_K, &l);
  if (got < 0) return EW_ERR_INPUT;
  if (got && (s->temperature_K < 0 || s->temperature_K > MAX_TEMPERATURE_K))
    return fail(r, l, "temperature = %g K is outside [0, %g] K", s->temperature_K,
                MAX_TEMPERATURE_K);

  int lg = 1;
  s->grid_step_nm = 0; /* 0: not given, the solver chooses */
  got = get_number(r, root, "grid_step", "", &s->grid_step_nm, &lg);
  if (got < 0) return EW_ERR_INPUT;
  if (got && (s->grid_step_nm <= 0 || s->grid_step_nm > MAX_GRID_STEP_NM))
    return fail(r, lg, "grid_step = %g nm must be in (0, %g] nm", s->grid_step_nm,
                MAX_GRID_STEP_NM);

  st = read_user_materials(r, root);
  if (st) return st;
  st = read_layers(r, root, s);
  if (st) return st;

  if (s->grid_step_nm > 0) {
    double nodes = s->total_nm / s->grid_step_nm;
    if (nodes > MAX_NODES) {
      double gb = nodes * BYTES_PER_NODE_PER_BAND * EW_BAND_COUNT / 1e9;
      return fail(r, lg, "grid_step = %g nm over %g nm gives about %.3g grid nodes (limit %g); "
                  "that would need roughly %.3g GB (about %g bytes per node per band, %d bands). "
                  "Use a larger grid_step", s->grid_step_nm, s->total_nm, nodes, MAX_NODES, gb,
                  BYTES_PER_NODE_PER_BAND, (int)EW_BAND_COUNT);
    }
  }
  return EW_OK;
}

/* Root may be empty when the text holds only blanks and comments. */
static int text_is_blank(const char *text) {
  for (const unsigned char *p = (const unsigned char *)text; *p; p++)
    if (!isspace(*p)) return 0;
  return 1;
}

static ew_status read_text(const char *text, const char *name, const ew_catalogue *cat,
                           ew_stack **out, ew_error *err) {
  reader r = {name, text, cat, err, NULL, 0};
  ew_stack *s = calloc(1, sizeof *s);
  if (!s) return ew_fail(err, EW_ERR_NOMEM, name, 0, "out of memory");
  size_t nl = strlen(name);
  if (nl >= sizeof s->path) nl = sizeof s->path - 1;
  memcpy(s->path, name, nl);
  s->path[nl] = '\0';

  config_t cfg;
  config_init(&cfg);
  ew_status st = EW_OK;
  if (!config_read_string(&cfg, text)) {
    int line = config_error_line(&cfg);
    const char *why = config_error_text(&cfg);
    st = fail(&r, line > 0 ? line : 1, "cannot parse the stack file: %s (libconfig syntax: "
              "key = value; groups in { }, lists in ( ))", why ? why : "syntax error");
  } else {
    const config_setting_t *root = config_root_setting(&cfg);
    if (config_setting_length(root) == 0)
      st = fail(&r, 1, text_is_blank(text) ? "the stack file is empty"
                                           : "the stack file holds no settings (only comments)");
    else
      st = read_top(&r, root, s);
  }
  config_destroy(&cfg);
  free(r.umat);
  if (st) {
    ew_stack_free(s);
    return st;
  }
  *out = s;
  return EW_OK;
}

ew_status ew_stack_read_string(const char *text, const char *display_name,
                               const ew_catalogue *cat, ew_stack **out, ew_error *err) {
  const char *name = display_name ? display_name : "<string>";
  if (out) *out = NULL;
  if (!out || !text)
    return ew_fail(err, EW_ERR_INPUT, name, 0, "ew_stack_read_string: NULL %s",
                   !out ? "output pointer" : "text");
  return read_text(text, name, cat, out, err);
}

ew_status ew_stack_read_file(const char *path, const ew_catalogue *cat, ew_stack **out,
                             ew_error *err) {
  if (out) *out = NULL;
  if (!out || !path)
    return ew_fail(err, EW_ERR_IO, path, 0, "ew_stack_read_file: NULL %s",
                   !out ? "output pointer" : "path");
  /* Read the bytes ourselves rather than config_read_file: it lets us tell an unreadable file
   * (EW_ERR_IO, with errno) from a malformed one and reject binary data before parsing. */
  FILE *f = fopen(path, "rb");
  if (!f) return ew_fail(err, EW_ERR_IO, path, 0, "cannot open '%s': %s", path, strerror(errno));
  size_t cap = 4096, len = 0;
  char *buf = malloc(cap);
  ew_status st = EW_OK;
  if (!buf) st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  while (!st) {
    if (len + 1 >= cap) {
      if (cap >= (size_t)MAX_FILE_BYTES) {
        st = ew_fail(err, EW_ERR_INPUT, path, 1, "file is larger than %ld bytes; not a stack file",
                     MAX_FILE_BYTES);
        break;
      }
      char *nb = realloc(buf, cap * 2);
      if (!nb) { st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory"); break; }
      buf = nb;
      cap *= 2;
    }
    size_t got = fread(buf + len, 1, cap - 1 - len, f);
    len += got;
    if (got == 0) {
      if (ferror(f)) st = ew_fail(err, EW_ERR_IO, path, 0, "cannot read '%s': %s", path,
                                  errno ? strerror(errno) : "read error");
      break;
    }
  }
  fclose(f);
  if (!st) {
    buf[len] = '\0';
    /* A NUL byte would silently end the text early; report binary data where it starts. */
    const char *nul = memchr(buf, '\0', len);
    if (nul) {
      int line = 1;
      for (const char *p = buf; p < nul; p++) line += *p == '\n';
      st = ew_fail(err, EW_ERR_INPUT, path, line, "binary data (NUL byte at offset %ld): this "
                   "is not a text stack file", (long)(nul - buf));
    } else {
      st = read_text(buf, path, cat, out, err);
    }
  }
  free(buf);
  return st;
}

void ew_stack_free(ew_stack *stack) {
  if (!stack) return;
  free(stack->layers);
  free(stack);
}
