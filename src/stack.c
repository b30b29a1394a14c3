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
#include <stdint.h> /* SIZE_MAX */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h> /* strncasecmp */

#include "error.h"
#include "grid.h" /* EW_GRID_MAX_NODES: the reader refuses a stack the grid cannot hold */
#include "plausible.h"
#include "stack_repeat.h"
#include "text.h"

/* Plausibility limits (see the header of this file for why they exist). */
#define MAX_LAYER_NM 10000.0
/* robustness (tests/test_robust.c): far below one monolayer (~0.28 nm).  Thinner layers make
 * grid cells so short that the kinetic terms (~1/(m h^2)) swamp double precision: a
 * 1e-12 nm layer silently gave reordered, wrong levels with tiny residuals. */
#define MIN_LAYER_NM 0.01
/* robustness: plausibility of user-defined materials (same reason, through 1/m and V) */
#define MAX_ABS_EDGE_EV EW_PLAUSIBLE_EDGE_EV
#define MIN_MASS_M0 EW_PLAUSIBLE_MASS_MIN
#define MAX_MASS_M0 EW_PLAUSIBLE_MASS_MAX
#define MAX_TOTAL_NM 20000.0
#define MAX_TEMPERATURE_K 1500.0
#define MAX_GRID_STEP_NM 1.0
#define MAX_NODES EW_GRID_MAX_NODES
#define BYTES_PER_NODE_PER_BAND EW_GRID_BYTES_PER_NODE_BAND /* measured: grid.h */
#define DEFAULT_TEMPERATURE_K 300.0
/* Stack files are a few hundred bytes; anything this big is not one. */
#define MAX_FILE_BYTES (16L * 1024 * 1024)
/* "Not given" for the X and L gaps of user materials: far above any real gap. */
#define GAP_NOT_GIVEN_EV 1e9

static const char *const top_keys[] = {"temperature", "grid_step",    "materials",
                                       "alloys",      "layers",       "substrate",
                                       "field",       "nonparabolic", "sheet_density",
                                       "linewidth",   "surface",      "bias",
                                       "conduction_share", "offset_reference"};
static const char *const layer_keys[] = {"name", "material", "x", "y", "thickness",
                                         "thickness_ml", "grade", "doping", "conduction_share"};
static const char *const doping_keys[] = {"donors", "acceptors", "donor_sheet",
                                          "acceptor_sheet", "donor_energy", "acceptor_energy"};
#define MAX_DOPING_CM3 1e21
#define MAX_SHEET_DOPING_CM2 1e15
static const char *const alloy_keys[] = {"name", "first", "second", "bowing"};
static const char *const bowing_keys[] = {"Ec", "Ev", "me", "mhh", "mlh", "mhh_par", "mlh_par",
                                          "eps_static"};
static const char *const grade_keys[] = {"profile", "x_start", "x_end", "x_centre", "x_edge"};
static const char *const substrate_keys[] = {"material", "x", "y"};
#define MAX_FIELD_KV_CM 2000.0    /* beyond this III–V layers break down long before */
#define MAX_SHEET_DENSITY_CM2 1e15
#define DEFAULT_LINEWIDTH_MEV 10.0
static const char *const umat_keys[] = {"name", "Ec", "Ev", "me", "mhh", "mlh",
                                        "mhh_par", "mlh_par", "eps_static"};
static const char *const umat_required[] = {"Ec", "Ev", "me", "mhh", "mlh"};
#define COUNT(a) (sizeof(a) / sizeof((a)[0]))
#define MAX_OFFSET_HINT 256 /* layers searched for a "did you mean" of offset_reference */

typedef struct {
  char name[EW_NAME_MAX];
  int line;
  ew_bands bands;
} user_material;

/* A user-defined alloy of two user materials: P(x) = x P_first + (1 − x) P_second
 * − x (1 − x) (C0 + C1 x) for each band parameter (same rule as the catalogue). */
typedef struct {
  char name[EW_NAME_MAX];
  int line;
  size_t first, second;            /* indices into the user materials */
  double c0[COUNT(bowing_keys)], c1[COUNT(bowing_keys)];
} user_alloy;

typedef struct {
  const char *path;
  const char *text; /* the source, to re-check integers (see int_is_exact) */
  const ew_catalogue *cat;
  ew_error *err;
  user_material *umat;
  size_t n_umat;
  user_alloy *ualloy;
  size_t n_ualloy;
  double a_sub_nm; /* substrate lattice constant, 0 = unstrained */
  const char **line_start; /* [n_lines]: where each line of text starts (int_is_exact) */
  size_t n_lines;
  const ew_stack_layer_hook *hook; /* NULL, or stack editing around each layer's read */
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
    const char *hint = ew_text_nearest(name, keys, n);
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
  if (!r->text) return 1; /* values set in the tree after parsing are stored exactly */
  /* the line from the index: scanning from the top for every integer made the reader
   * quadratic in the number of layers (issue 18) */
  if (line < 1 || (size_t)line > r->n_lines) return 1;
  const char *p = r->line_start[line - 1];
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
  /* issue 18: a name reaches the table, JSON, CSV, SVG and the report; an escape sequence
   * would drive the user's terminal, invalid UTF-8 breaks the SVG and the JSON */
  char why[96];
  long bad = ew_text_check(v, why, sizeof why);
  if (bad >= 0) {
    fail(r, *line, "'%s' %s: %s at byte %ld; names must be printable UTF-8 text", key, where,
         why, bad + 1);
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

/* The entry's group, name and keys: a new, unique name that does not shadow the catalogue,
 * with every required key present.  where receives "in material 'NAME'". */
static ew_status user_material_head(reader *r, const config_setting_t *g, size_t index,
                                    user_material *m, char *where, size_t where_size) {
  int line = line_of(g), kline = line;
  if (config_setting_type(g) != CONFIG_TYPE_GROUP)
    return fail(r, line, "entry %zu of 'materials' must be a group { name = ...; Ec = ...; }, "
                "not %s", index + 1, type_word(g));
  memset(m, 0, sizeof *m);
  m->line = line;

  snprintf(where, where_size, "in material entry %zu", index + 1);
  int got = get_name(r, g, "name", where, m->name, &kline);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, line, "material entry %zu has no 'name'", index + 1);
  snprintf(where, where_size, "in material '%s'", m->name);
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
  return EW_OK;
}

/* Ec and Ev: ordered and within the plausible range. */
static ew_status read_user_edges(reader *r, const config_setting_t *g, const user_material *m,
                                 const char *where, double *Ec, double *Ev) {
  int lEc = m->line, lEv = m->line;
  if (get_number(r, g, "Ec", where, Ec, &lEc) < 0 || get_number(r, g, "Ev", where, Ev, &lEv) < 0)
    return EW_ERR_INPUT;
  if (*Ev >= *Ec)
    return fail(r, lEv, "material '%s': Ev = %g eV must lie below Ec = %g eV", m->name, *Ev, *Ec);
  /* robustness: absurd band edges (e.g. Ec = 1e30) were accepted and solved */
  if (fabs(*Ec) > MAX_ABS_EDGE_EV || fabs(*Ev) > MAX_ABS_EDGE_EV)
    return fail(r, fabs(*Ec) > MAX_ABS_EDGE_EV ? lEc : lEv, "material '%s': band edge %s = %g eV "
                "is outside [-%g, %g] eV (absolute scale: the GaAs valence-band maximum is at "
                "-0.80 eV)", m->name, fabs(*Ec) > MAX_ABS_EDGE_EV ? "Ec" : "Ev",
                fabs(*Ec) > MAX_ABS_EDGE_EV ? *Ec : *Ev, MAX_ABS_EDGE_EV, MAX_ABS_EDGE_EV);
  return EW_OK;
}

/* me, mhh, mlh (required) and mhh_par, mlh_par (default: the growth-axis ones) into
 * mass[0..4], each positive and plausible. */
static ew_status read_user_masses(reader *r, const config_setting_t *g, const user_material *m,
                                  const char *where, double mass[5]) {
  /* Masses must be positive: a zero or negative mass makes the kinetic operator indefinite. */
  static const char *const mass_keys[] = {"me", "mhh", "mlh", "mhh_par", "mlh_par"};
  int l = m->line;
  for (size_t k = 0; k < COUNT(mass_keys); k++) {
    int g2 = get_number(r, g, mass_keys[k], where, &mass[k], &l);
    if (g2 < 0) return EW_ERR_INPUT;
    if (g2 == 0) { /* only the in-plane masses are optional: default to growth-axis ones */
      mass[k] = k == 3 ? mass[1] : mass[2];
      continue;
    }
    if (mass[k] <= 0)
      return fail(r, l, "material '%s': mass '%s' = %g must be positive (units of m0)",
                  m->name, mass_keys[k], mass[k]);
    /* robustness: me = 1e30 gave 86 degenerate "states", me = 1e-30 a wrong spectrum */
    if (mass[k] < MIN_MASS_M0 || mass[k] > MAX_MASS_M0)
      return fail(r, l, "material '%s': mass '%s' = %g m0 is outside [%g, %g] m0",
                  m->name, mass_keys[k], mass[k], MIN_MASS_M0, MAX_MASS_M0);
  }
  return EW_OK;
}

static ew_status read_user_material(reader *r, const config_setting_t *g, size_t index) {
  char where[96];
  user_material *m = &r->umat[r->n_umat];
  double Ec = 0, Ev = 0, mass[5] = {0}, eps = 0;
  ew_status st = user_material_head(r, g, index, m, where, sizeof where);
  if (!st) st = read_user_edges(r, g, m, where, &Ec, &Ev);
  if (!st) st = read_user_masses(r, g, m, where, mass);
  if (st) return st;
  int l = m->line, ge = get_number(r, g, "eps_static", where, &eps, &l);
  if (ge < 0) return EW_ERR_INPUT;
  if (ge > 0 && eps <= 0)
    return fail(r, l, "material '%s': 'eps_static' = %g must be positive", m->name, eps);
  if (ge > 0 && (eps < EW_PLAUSIBLE_EPS_MIN || eps > EW_PLAUSIBLE_EPS_MAX))
    return fail(r, l, "material '%s': 'eps_static' = %g is outside [%g, %g]", m->name, eps,
                EW_PLAUSIBLE_EPS_MIN, EW_PLAUSIBLE_EPS_MAX);

  ew_bands *b = &m->bands;
  b->Ec_eV = Ec;
  b->Ev_eV = b->Ev_hh_eV = b->Ev_lh_eV = Ev;
  b->Eg_G_eV = Ec - Ev;
  b->Eg_X_eV = b->Eg_L_eV = GAP_NOT_GIVEN_EV;
  b->me = mass[0];
  b->mhh_z = mass[1];
  b->mlh_z = mass[2];
  b->mhh_par = mass[3];
  b->mlh_par = mass[4];
  b->eps_r = ge > 0 ? eps : 0.0;
  b->a_nm = 0.0;
  b->lowest_valley = 0;
  b->critical_thickness_nm = INFINITY; /* unstrained: no critical thickness */
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

/* ---- user-defined alloys ------------------------------------------------------------- */

static const user_alloy *find_ualloy(const reader *r, const char *name) {
  for (size_t i = 0; i < r->n_ualloy; i++)
    if (strcmp(r->ualloy[i].name, name) == 0) return &r->ualloy[i];
  return NULL;
}

/* Which kind of material a name is, in the order a layer looks them up. */
typedef enum { MAT_UNKNOWN, MAT_USER, MAT_USER_ALLOY, MAT_CATALOGUE } material_kind;

static material_kind find_material(const reader *r, const char *name) {
  if (find_user(r, name)) return MAT_USER;
  if (find_ualloy(r, name)) return MAT_USER_ALLOY;
  if (r->cat && ew_catalogue_find(r->cat, name) >= 0) return MAT_CATALOGUE;
  return MAT_UNKNOWN;
}

static ew_status read_user_alloy(reader *r, const config_setting_t *g, size_t index) {
  int line = line_of(g), kl = line;
  if (config_setting_type(g) != CONFIG_TYPE_GROUP)
    return fail(r, line, "entry %zu of 'alloys' must be a group { name = ...; first = ...; "
                "second = ...; }, not %s", index + 1, type_word(g));
  user_alloy *a = &r->ualloy[r->n_ualloy];
  memset(a, 0, sizeof *a);
  a->line = line;
  char where[96];
  snprintf(where, sizeof where, "in alloy entry %zu", index + 1);
  int got = get_name(r, g, "name", where, a->name, &kl);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, line, "alloy entry %zu has no 'name'", index + 1);
  snprintf(where, sizeof where, "in alloy '%s'", a->name);
  ew_status st = check_keys(r, g, alloy_keys, COUNT(alloy_keys), where);
  if (st) return st;
  if (find_material(r, a->name) != MAT_UNKNOWN)
    return fail(r, kl, "alloy name '%s' is already used by a material", a->name);
  const char *ends[2] = {"first", "second"};
  size_t *idx[2] = {&a->first, &a->second};
  for (int e = 0; e < 2; e++) {
    char end[EW_NAME_MAX];
    int el = line;
    got = get_name(r, g, ends[e], where, end, &el);
    if (got < 0) return EW_ERR_INPUT;
    if (got == 0)
      return fail(r, line, "alloy '%s' needs '%s' (a material defined under 'materials'; x is "
                  "the fraction of 'first')", a->name, ends[e]);
    const user_material *um = find_user(r, end);
    if (!um)
      return fail(r, el, "alloy '%s': '%s' = \"%s\" is not a material defined under "
                  "'materials'", a->name, ends[e], end);
    *idx[e] = (size_t)(um - r->umat);
  }
  const config_setting_t *bow = config_setting_get_member(g, "bowing");
  if (bow) {
    if (config_setting_type(bow) != CONFIG_TYPE_GROUP)
      return fail(r, line_of(bow), "'bowing' in alloy '%s' must be a group { Ec = ...; }",
                  a->name);
    st = check_keys(r, bow, bowing_keys, COUNT(bowing_keys), "in 'bowing'");
    if (st) return st;
    for (size_t k = 0; k < COUNT(bowing_keys); k++) {
      const config_setting_t *b = config_setting_get_member(bow, bowing_keys[k]);
      if (!b) continue;
      int bl = line_of(b);
      if (config_setting_type(b) == CONFIG_TYPE_GROUP) { /* { value = C0; per_x = C1; } */
        static const char *const bk[] = {"value", "per_x"};
        st = check_keys(r, b, bk, 2, "in a bowing entry");
        if (st) return st;
        if (get_number(r, b, "value", where, &a->c0[k], &bl) <= 0)
          return fail(r, line_of(b), "bowing '%s' of alloy '%s' needs a number 'value'",
                      bowing_keys[k], a->name);
        if (get_number(r, b, "per_x", where, &a->c1[k], &bl) < 0) return EW_ERR_INPUT;
      } else if (get_number(r, bow, bowing_keys[k], where, &a->c0[k], &bl) < 0) {
        return EW_ERR_INPUT;
      }
    }
  }
  r->n_ualloy++;
  return EW_OK;
}

static ew_status read_user_alloys(reader *r, const config_setting_t *root) {
  const config_setting_t *list = config_setting_get_member(root, "alloys");
  if (!list) return EW_OK;
  int type = config_setting_type(list), n = config_setting_length(list);
  if (type != CONFIG_TYPE_LIST && !(type == CONFIG_TYPE_ARRAY && n == 0))
    return fail(r, line_of(list), "'alloys' must be a list of groups: alloys = ( { ... } ); "
                "not %s", type_word(list));
  if (n == 0) return EW_OK;
  r->ualloy = calloc((size_t)n, sizeof *r->ualloy);
  if (!r->ualloy) return ew_fail(r->err, EW_ERR_NOMEM, r->path, 0, "out of memory");
  for (int i = 0; i < n; i++) {
    ew_status st = read_user_alloy(r, config_setting_get_elem(list, (unsigned)i), (size_t)i);
    if (st) return st;
  }
  return EW_OK;
}

/* Band parameters of a user alloy at x (Vegard with bowing, as the catalogue's alloys). */
static void ualloy_bands(const reader *r, const user_alloy *a, double x, ew_bands *out) {
  const ew_bands *A = &r->umat[a->first].bands, *B = &r->umat[a->second].bands;
  double pa[COUNT(bowing_keys)] = {A->Ec_eV, A->Ev_eV, A->me, A->mhh_z, A->mlh_z,
                                   A->mhh_par, A->mlh_par, A->eps_r};
  double pb[COUNT(bowing_keys)] = {B->Ec_eV, B->Ev_eV, B->me, B->mhh_z, B->mlh_z,
                                   B->mhh_par, B->mlh_par, B->eps_r};
  double v[COUNT(bowing_keys)];
  for (size_t k = 0; k < COUNT(bowing_keys); k++)
    v[k] = x * pa[k] + (1 - x) * pb[k] - x * (1 - x) * (a->c0[k] + a->c1[k] * x);
  *out = *A;
  out->Ec_eV = v[0];
  out->Ev_eV = out->Ev_hh_eV = out->Ev_lh_eV = v[1];
  out->Eg_G_eV = v[0] - v[1];
  out->me = v[2];
  out->mhh_z = v[3];
  out->mlh_z = v[4];
  out->mhh_par = v[5];
  out->mlh_par = v[6];
  out->eps_r = A->eps_r > 0 && B->eps_r > 0 ? v[7] : 0.0;
}

/* Resolve a material at (x, T): user material, user alloy or catalogue entry; sub receives
 * the reason of a failure. */
static ew_status resolve_bands(const reader *r, const char *material, double x, double y,
                               double T, ew_bands *out, ew_error *sub) {
  const user_material *um = find_user(r, material);
  if (um) {
    *out = um->bands;
    return EW_OK;
  }
  const user_alloy *ua = find_ualloy(r, material);
  if (ua) {
    ualloy_bands(r, ua, x, out);
    if (!(out->me > 0 && out->mhh_z > 0 && out->mlh_z > 0 && out->mhh_par > 0 &&
          out->mlh_par > 0 && out->Ec_eV > out->Ev_eV))
      return ew_fail(sub, EW_ERR_INPUT, NULL, 0, "alloy '%s' at x = %g gives a non-positive "
                     "mass or Ev >= Ec (check its bowing)", material, x);
    return EW_OK;
  }
  /* catalogue materials are pseudomorphic on the substrate when one is given */
  return ew_material_bands_on(r->cat, material, x, y, T, r->a_sub_nm, out, sub);
}

/* ---- layers ----------------------------------------------------------------------------- */

/* "unknown material" with the closest user or catalogue name. */
static ew_status unknown_material(const reader *r, int line, const char *name, const char *layer) {
  if (r->cat && ew_catalogue_reordered(r->cat, name) >= 0) {
    char hint[160];
    ew_catalogue_hint(r->cat, name, hint, sizeof hint);
    return fail(r, line, "unknown material '%s' in layer '%s'; %s", name, layer, hint);
  }
  ew_suggestion sg;
  ew_suggest_init(&sg, name);
  for (size_t i = 0; i < r->n_umat; i++) ew_suggest_offer(&sg, r->umat[i].name);
  size_t nc = r->cat ? ew_catalogue_count(r->cat) : 0;
  for (size_t i = 0; i < nc; i++) ew_suggest_offer(&sg, ew_catalogue_name(r->cat, i));
  const char *best = ew_suggest_best(&sg);
  if (best)
    return fail(r, line, "unknown material '%s' in layer '%s'; did you mean '%s'?", name,
                layer, best);
  if (!r->cat)
    return fail(r, line, "unknown material '%s' in layer '%s' (no material catalogue is "
                "loaded; only materials defined in the file are available)", name, layer);
  return fail(r, line, "unknown material '%s' in layer '%s' (`epiwell materials` lists the "
              "catalogue; define others under 'materials')", name, layer);
}

/* x at fraction f of a graded layer */
static double grade_x(const ew_layer *L, double f) {
  if (L->grade == EW_GRADE_LINEAR) return L->x_start + (L->x_end - L->x_start) * f;
  double u = 2.0 * f - 1.0; /* parabolic: x_centre at f = 1/2, x_edge at both faces */
  return L->x_centre + (L->x_edge - L->x_centre) * u * u;
}

static ew_status read_grade(reader *r, const config_setting_t *g, ew_layer *L,
                            const char *where) {
  int line = line_of(g), l = line;
  if (config_setting_type(g) != CONFIG_TYPE_GROUP)
    return fail(r, line, "'grade' %s must be a group { profile = \"linear\"; x_start = ...; "
                "x_end = ...; }", where);
  ew_status st = check_keys(r, g, grade_keys, COUNT(grade_keys), "in 'grade'");
  if (st) return st;
  char prof[EW_NAME_MAX];
  int got = get_name(r, g, "profile", where, prof, &l);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, line, "'grade' %s needs a profile: \"linear\" or \"parabolic\"", where);
  const char *k1, *k2;
  double *v1, *v2;
  if (!strcmp(prof, "linear")) {
    L->grade = EW_GRADE_LINEAR;
    k1 = "x_start", k2 = "x_end", v1 = &L->x_start, v2 = &L->x_end;
  } else if (!strcmp(prof, "parabolic")) {
    L->grade = EW_GRADE_PARABOLIC;
    k1 = "x_centre", k2 = "x_edge", v1 = &L->x_centre, v2 = &L->x_edge;
  } else {
    return fail(r, l, "unknown grade profile \"%s\" %s (valid: \"linear\", \"parabolic\")",
                prof, where);
  }
  const char *keys[2] = {k1, k2};
  double *vals[2] = {v1, v2};
  for (int k = 0; k < 2; k++) {
    got = get_number(r, g, keys[k], where, vals[k], &l);
    if (got < 0) return EW_ERR_INPUT;
    if (got == 0)
      return fail(r, line, "%s grade %s needs '%s' and '%s'", prof, where, k1, k2);
    if (*vals[k] < 0 || *vals[k] > 1)
      return fail(r, l, "'%s' = %g %s is outside [0, 1]", keys[k], *vals[k], where);
  }
  /* the other profile's keys would be silently ignored: refuse them */
  const char *other[2] = {L->grade == EW_GRADE_LINEAR ? "x_centre" : "x_start",
                          L->grade == EW_GRADE_LINEAR ? "x_edge" : "x_end"};
  for (int k = 0; k < 2; k++) {
    const config_setting_t *o = config_setting_get_member(g, other[k]);
    if (o) return fail(r, line_of(o), "'%s' does not belong to a %s grade (use %s, %s)", other[k], prof, k1, k2);
  }
  return EW_OK;
}

/* Where each setting of a layer was, for messages about it. */
typedef struct {
  int line, material, thickness_ml, x, y; /* lines */
  int got_ml;                             /* thickness given in monolayers */
  const config_setting_t *grade;
} layer_lines;

/* thickness (nm) or thickness_ml (whole monolayers, converted once the bands are known). */
static ew_status read_layer_thickness(reader *r, const config_setting_t *g, const char *where,
                                      ew_layer *L, layer_lines *ll) {
  int lth = ll->line;
  ll->thickness_ml = ll->line;
  int got = get_number(r, g, "thickness", where, &L->thickness_nm, &lth);
  if (got < 0) return EW_ERR_INPUT;
  int got_ml = get_number(r, g, "thickness_ml", where, &L->thickness_ml, &ll->thickness_ml);
  if (got_ml < 0) return EW_ERR_INPUT;
  ll->got_ml = got_ml;
  int lml = ll->thickness_ml;
  if (got && got_ml)
    return fail(r, lml, "layer '%s' gives both 'thickness' and 'thickness_ml'; give one",
                L->name);
  if (!got && !got_ml)
    return fail(r, ll->line, "layer '%s' has no 'thickness' (nm) or 'thickness_ml' "
                "(monolayers)", L->name);
  /* a fractional value is an average coverage (1.5 ML of a grown island layer): the
   * envelope-function model cannot see islands, so the layer is a continuum slab of that
   * mean thickness (resolve_layer_bands converts it) */
  if (got_ml && !(L->thickness_ml > 0 && L->thickness_ml <= 1e5))
    return fail(r, lml, "thickness_ml of layer '%s' must be a positive number of monolayers "
                "(got %g)", L->name, L->thickness_ml);
  if (got && L->thickness_nm <= 0)
    return fail(r, lth, "thickness of layer '%s' must be positive (got %g nm)", L->name,
                L->thickness_nm);
  if (got && L->thickness_nm < MIN_LAYER_NM) /* robustness: see MIN_LAYER_NM */
    return fail(r, lth, "thickness of layer '%s' is %g nm, below the %g nm minimum (one "
                "monolayer is about 0.28 nm; units are nm)", L->name, L->thickness_nm,
                MIN_LAYER_NM);
  if (got && L->thickness_nm > MAX_LAYER_NM)
    return fail(r, lth, "thickness of layer '%s' is %g nm, above the %g nm limit (units are nm)",
                L->name, L->thickness_nm, MAX_LAYER_NM);
  return EW_OK;
}

/* x, y and grade = { ... } as written (checked against the material later). */
static ew_status read_layer_composition(reader *r, const config_setting_t *g,
                                        const char *where, ew_layer *L, layer_lines *ll) {
  ll->x = ll->y = ll->line;
  int got = get_number(r, g, "x", where, &L->x, &ll->x);
  if (got < 0) return EW_ERR_INPUT;
  L->has_x = got;
  got = get_number(r, g, "y", where, &L->y, &ll->y);
  if (got < 0) return EW_ERR_INPUT;
  L->has_y = got;
  ll->grade = config_setting_get_member(g, "grade");
  if (ll->grade) {
    ew_status st = read_grade(r, ll->grade, L, where);
    if (st) return st;
    if (L->has_x)
      return fail(r, ll->x, "layer '%s' gives both 'x' and a 'grade'; the grade sets x", L->name);
  }
  return EW_OK;
}

static ew_status read_layer_doping(reader *r, const config_setting_t *g, const char *where,
                                   ew_layer *L, int line) {
  const config_setting_t *dop = config_setting_get_member(g, "doping");
  if (!dop) return EW_OK;
  if (config_setting_type(dop) != CONFIG_TYPE_GROUP)
    return fail(r, line_of(dop), "'doping' %s must be a group { donors = 1e18; }", where);
  ew_status st = check_keys(r, dop, doping_keys, COUNT(doping_keys), "in 'doping'");
  if (st) return st;
  double *dst[] = {&L->donors_cm3, &L->acceptors_cm3, &L->donor_sheet_cm2,
                   &L->acceptor_sheet_cm2, &L->donor_energy_eV, &L->acceptor_energy_eV};
  const double lim[] = {MAX_DOPING_CM3, MAX_DOPING_CM3, MAX_SHEET_DOPING_CM2,
                        MAX_SHEET_DOPING_CM2, 1.0, 1.0};
  const char *unit[] = {"cm^-3", "cm^-3", "cm^-2", "cm^-2", "eV", "eV"};
  for (size_t k = 0; k < COUNT(doping_keys); k++) {
    int dl = line;
    int gd = get_number(r, dop, doping_keys[k], where, dst[k], &dl);
    if (gd < 0) return EW_ERR_INPUT;
    if (gd && (*dst[k] < 0 || *dst[k] > lim[k]))
      return fail(r, dl, "'%s' = %g %s %s must be in [0, %g] %s", doping_keys[k], *dst[k],
                  unit[k], where, lim[k], unit[k]);
  }
  return EW_OK;
}

/* material = "Al0.3Ga0.7As": the catalogue alloy (AlGaAs) with the x (and y) the name
 * writes, as if they were given as keys; the name and an explicit x (or y, or a grade) would
 * give the composition twice, and the two could disagree. */
static ew_status composition_name(reader *r, ew_layer *L, const layer_lines *ll) {
  double x = 0.0, y = 0.0;
  char why[160];
  long i = ew_catalogue_composition(r->cat, L->material, &x, &y, why, sizeof why);
  if (i == -1) return EW_OK; /* an ordinary name: unknown_material says what is near */
  if (i < 0) return fail(r, ll->material, "layer '%s': %s", L->name, why);
  const char *canon = ew_catalogue_name(r->cat, (size_t)i);
  int quaternary = ew_catalogue_needs_y(r->cat, canon) == 1;
  char comp[64];
  if (quaternary) snprintf(comp, sizeof comp, "x = %g, y = %g", x, y);
  else snprintf(comp, sizeof comp, "x = %g", x);
  if (L->has_x || L->grade || (L->has_y && quaternary))
    return fail(r, L->has_x ? ll->x : L->has_y ? ll->y : line_of(ll->grade), "layer '%s': x "
                "given twice: material '%s' already sets %s; write material = \"%s\" with "
                "'x'%s, or drop the %s", L->name, L->material, comp, canon,
                quaternary ? " and 'y'" : "", L->has_x ? "'x'" : L->has_y ? "'y'" : "'grade'");
  snprintf(L->material, sizeof L->material, "%s", canon);
  L->x = x, L->has_x = 1;
  if (quaternary) L->y = y, L->has_y = 1;
  return EW_OK;
}

/* The layer's material exists and its composition (x, y or grade) fits what it is. */
static ew_status check_layer_material(reader *r, ew_layer *L, const layer_lines *ll) {
  int alloy;
  material_kind kind = find_material(r, L->material);
  if (kind == MAT_UNKNOWN && r->cat) {
    ew_status st = composition_name(r, L, ll);
    if (st) return st;
    kind = find_material(r, L->material);
  }
  if (kind == MAT_USER) alloy = 0;
  else if (kind == MAT_USER_ALLOY) alloy = 1;
  else if (kind == MAT_CATALOGUE) alloy = ew_catalogue_is_alloy(r->cat, L->material);
  else return unknown_material(r, ll->material, L->material, L->name);
  L->user_material = kind == MAT_USER || kind == MAT_USER_ALLOY;
  if (!alloy && (L->has_x || L->grade))
    return fail(r, L->has_x ? ll->x : line_of(ll->grade), "layer '%s': %s given for %s '%s', "
                "which has no composition", L->name, L->has_x ? "'x'" : "a 'grade'",
                L->user_material ? "user material" : "binary", L->material);
  if (alloy && !L->has_x && !L->grade)
    return fail(r, ll->line, "layer '%s': alloy '%s' needs a composition 'x' in [0, 1] or a "
                "'grade'", L->name, L->material);
  if (L->has_x && (L->x < 0 || L->x > 1))
    return fail(r, ll->x, "layer '%s': x = %g is outside [0, 1]", L->name, L->x);
  int quaternary = !L->user_material && ew_catalogue_needs_y(r->cat, L->material) == 1;
  if (quaternary && !L->has_y)
    return fail(r, ll->line, "layer '%s': quaternary '%s' needs both 'x' and 'y' in [0, 1] "
                "(`epiwell materials %s` says what they are)", L->name, L->material, L->material);
  if (!quaternary && L->has_y)
    return fail(r, ll->y, "layer '%s': 'y' is only for quaternaries; '%s' is not one", L->name,
                L->material);
  if (L->has_y && (L->y < 0 || L->y > 1))
    return fail(r, ll->y, "layer '%s': y = %g is outside [0, 1]", L->name, L->y);
  return EW_OK;
}

/* Band parameters at T (graded layers: at the centre and EW_GRADE_SAMPLES samples), then
 * the thickness of a layer given in monolayers. */
static ew_status resolve_layer_bands(reader *r, ew_layer *L, double T, const layer_lines *ll) {
  ew_error sub;
  memset(&sub, 0, sizeof sub);
  double xc = L->grade ? grade_x(L, 0.5) : (L->has_x ? L->x : 0.0);
  ew_status st = resolve_bands(r, L->material, xc, L->y, T, &L->bands, &sub);
  if (!st && L->grade) {
    L->profile = malloc(EW_GRADE_SAMPLES * sizeof *L->profile);
    if (!L->profile) return ew_fail(r->err, EW_ERR_NOMEM, r->path, 0, "out of memory");
    for (int k = 0; k < EW_GRADE_SAMPLES && !st; k++)
      st = resolve_bands(r, L->material, grade_x(L, (double)k / (EW_GRADE_SAMPLES - 1)), L->y,
                         T, &L->profile[k], &sub);
  }
  if (st) /* keep the catalogue's code and words, but point at the layer that asked */
    return ew_fail(r->err, st, r->path, ll->line, "layer '%s' (%s): %s", L->name, L->material,
                   sub.message[0] ? sub.message : "band parameters unavailable");
  /* issue 18: the limits of user materials hold for what a layer resolves to as well (a user
   * alloy's bowing, the temperature, the strain could take it anywhere) */
  char why[160];
  for (int k = -1; k < (L->profile ? EW_GRADE_SAMPLES : 0); k++)
    if (!ew_bands_plausible(k < 0 ? &L->bands : &L->profile[k], why, sizeof why))
      return fail(r, ll->line, "layer '%s' (%s%s): %s", L->name, L->material,
                  k < 0 ? "" : ", along its grade", why);
  if (!ll->got_ml) return EW_OK;
  /* one monolayer of [001] zincblende is half the lattice constant along the growth axis */
  if (!(L->bands.a_nm > 0))
    return fail(r, ll->thickness_ml, "layer '%s': thickness_ml needs a lattice constant, which "
                "'%s' does not have; give 'thickness' in nm", L->name, L->material);
  /* pseudomorphic: the growth-axis lattice constant is a (1 + ε⊥) */
  L->thickness_nm = L->thickness_ml * 0.5 * L->bands.a_nm * (1.0 + L->bands.eps_perp);
  if (L->thickness_nm < MIN_LAYER_NM) /* robustness: see MIN_LAYER_NM */
    return fail(r, ll->thickness_ml, "layer '%s': %g ML is %g nm, below the %g nm minimum",
                L->name, L->thickness_ml, L->thickness_nm, MIN_LAYER_NM);
  if (L->thickness_nm > MAX_LAYER_NM)
    return fail(r, ll->thickness_ml, "layer '%s' is %g nm thick, above the %g nm limit", L->name,
                L->thickness_nm, MAX_LAYER_NM);
  return EW_OK;
}

/* conduction_share = S; in group g (top level or a layer): S in [0, 1] into *share, its line
 * into *line; *share = −1 when not given. */
static ew_status read_share(reader *r, const config_setting_t *g, const char *where,
                            double *share, int *line) {
  *share = -1.0;
  *line = line_of(g);
  int got = get_number(r, g, "conduction_share", where, share, line);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) {
    *share = -1.0;
    return EW_OK;
  }
  if (!(*share >= 0.0 && *share <= 1.0))
    return fail(r, *line, "conduction_share = %g must be in [0, 1] (the conduction band's part "
                "of the band-gap difference, e.g. 0.65)", *share);
  return EW_OK;
}

static ew_status read_layer(reader *r, const config_setting_t *g, size_t index, ew_layer *L,
                            double T) {
  layer_lines ll = {0};
  ll.line = line_of(g);
  int l = ll.line;
  char where[96];
  memset(L, 0, sizeof *L);
  L->line = ll.line;
  if (config_setting_type(g) != CONFIG_TYPE_GROUP)
    return fail(r, ll.line, "layer %zu must be a group { material = ...; thickness = ...; }, "
                "not %s", index + 1, type_word(g));

  snprintf(where, sizeof where, "of layer %zu", index + 1);
  int got = get_name(r, g, "name", where, L->name, &l);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) snprintf(L->name, sizeof L->name, "layer%zu", index + 1);
  snprintf(where, sizeof where, "in layer '%s'", L->name);
  ew_status st = check_keys(r, g, layer_keys, COUNT(layer_keys), where);
  if (st) return st;

  ll.material = ll.line;
  got = get_name(r, g, "material", where, L->material, &ll.material);
  if (got < 0) return EW_ERR_INPUT;
  if (got == 0) return fail(r, ll.line, "layer '%s' has no 'material'", L->name);
  if ((st = read_layer_thickness(r, g, where, L, &ll))) return st;
  if ((st = read_layer_composition(r, g, where, L, &ll))) return st;
  if ((st = read_layer_doping(r, g, where, L, ll.line))) return st;
  if ((st = read_share(r, g, where, &L->conduction_share, &L->conduction_share_line))) return st;
  if ((st = check_layer_material(r, L, &ll))) return st;
  return resolve_layer_bands(r, L, T, &ll);
}

/* The layer names seen so far, hashed (FNV-1a, open addressing): the duplicate check is
 * linear in the number of layers (issue 18: comparing each name with all earlier ones took
 * minutes for 10^5 layers). */
typedef struct {
  size_t *slot; /* layer index + 1, 0 = empty */
  size_t mask;
} name_set;

static int name_set_init(name_set *h, size_t n) {
  size_t cap = 16;
  while (cap < 2 * n) cap *= 2;
  h->mask = cap - 1;
  h->slot = calloc(cap, sizeof *h->slot);
  return h->slot == NULL;
}

static size_t name_hash(const char *name, size_t len) {
  size_t hash = 14695981039346656037u;
  for (const unsigned char *p = (const unsigned char *)name; len--; p++)
    hash = (hash ^ *p) * 1099511628211u;
  return hash;
}

/* The index of the layer called name[0..len) among those added, or SIZE_MAX. */
static size_t name_set_find(const name_set *h, const ew_layer *layers, const char *name,
                            size_t len) {
  for (size_t k = name_hash(name, len) & h->mask; h->slot[k]; k = (k + 1) & h->mask) {
    const char *other = layers[h->slot[k] - 1].name;
    if (!strncmp(other, name, len) && !other[len]) return h->slot[k] - 1;
  }
  return SIZE_MAX;
}

/* Adds layer i by its name; returns i, or the index of the earlier layer of the same name. */
static size_t name_set_add(name_set *h, const ew_layer *layers, size_t i) {
  size_t hash = name_hash(layers[i].name, strlen(layers[i].name));
  for (size_t k = hash & h->mask;; k = (k + 1) & h->mask) {
    if (!h->slot[k]) {
      h->slot[k] = i + 1;
      return i;
    }
    if (!strcmp(layers[h->slot[k] - 1].name, layers[i].name)) return h->slot[k] - 1;
  }
}

/* ---- repeat groups (stack_repeat.c walks them; the copies are read here) ---------------- */
static int repeat_number(void *ctx, const config_setting_t *g, const char *key,
                         const char *where, double *value, int *line) {
  return get_number(ctx, g, key, where, value, line);
}

static ew_status repeat_keys(void *ctx, const config_setting_t *g, const char *const *keys,
                             size_t n, const char *where) {
  return check_keys(ctx, g, keys, n, where);
}

/* A copy of a named layer in a repeat group is NAME#k (stack_repeat.h). */
static ew_status name_copy(reader *r, const ew_repeat_layer *e, ew_layer *L) {
  L->written = e->written;
  L->copy = e->copy;
  if (!e->copy || !config_setting_get_member(e->group, "name")) return EW_OK;
  char name[EW_NAME_MAX + 24];
  int w = snprintf(name, sizeof name, "%s#%zu", L->name, e->copy);
  if (w < 0 || (size_t)w >= sizeof L->name)
    return fail(r, L->line, "layer name '%s' is too long for the names of its copies (%s: at "
                "most %d characters)", L->name, name, EW_NAME_MAX - 1);
  memcpy(L->name, name, (size_t)w + 1);
  return EW_OK;
}

/* NAME.KEY sets every copy of the repeated layer NAME (stack_edit.c): no layer of the stack
 * may carry that name itself. */
static ew_status check_repeated_names(reader *r, const ew_stack *s, const name_set *names) {
  for (size_t k = 0; k < s->n_layers; k++) {
    const ew_layer *L = &s->layers[k];
    const char *hash = L->copy == 1 ? strrchr(L->name, '#') : NULL;
    size_t len = hash ? (size_t)(hash - L->name) : 0, j;
    if (!hash || (j = name_set_find(names, s->layers, L->name, len)) == SIZE_MAX) continue;
    return fail(r, L->line, "layer name '%.*s' is given to a repeated layer here and to the "
                "layer at line %d: a key '%.*s.KEY' sets every copy of the repeated one, so the "
                "names must differ", (int)len, L->name, s->layers[j].line, (int)len, L->name);
  }
  return EW_OK;
}

/* Layer i of the expanded stack from its written group (hook: stack editing of one copy). */
static ew_status read_copy(reader *r, const ew_repeat_layer *e, size_t i, ew_layer *L,
                           double T) {
  ew_status st = r->hook ? r->hook->before(r->hook->ctx, i, r->err) : EW_OK;
  if (st) return st;
  st = read_layer(r, e->group, i, L, T);
  if (!st) st = name_copy(r, e, L);
  ew_status sa = r->hook ? r->hook->after(r->hook->ctx, i, st ? NULL : r->err) : EW_OK;
  return st ? st : sa;
}

static ew_status read_layers(reader *r, const config_setting_t *root, ew_stack *s) {
  const config_setting_t *list = config_setting_get_member(root, "layers");
  if (!list)
    return fail(r, 1, "no 'layers' list: the stack needs at least one layer, e.g. layers = ( "
                "{ material = \"GaAs\"; thickness = 8.0; } );");
  int type = config_setting_type(list), len = config_setting_length(list);
  if (type != CONFIG_TYPE_LIST && !(type == CONFIG_TYPE_ARRAY && len == 0))
    return fail(r, line_of(list), "'layers' must be a list of groups: layers = ( { ... }, ... ); "
                "not %s", type_word(list));
  if (len == 0) return fail(r, line_of(list), "'layers' is empty: the stack needs at least one layer");
  ew_repeat_reader rr = {r, repeat_number, repeat_keys, r->path, r->err};
  size_t n = 0;
  ew_status st = ew_repeat_count(&rr, list, &n);
  if (st) return st;

  s->layers = calloc(n, sizeof *s->layers);
  name_set names = {NULL, 0};
  if (!s->layers || name_set_init(&names, n)) {
    free(names.slot);
    return ew_fail(r->err, EW_ERR_NOMEM, r->path, 0, "out of memory");
  }
  double z = 0;
  ew_repeat_iter it;
  ew_repeat_layer e;
  ew_repeat_begin(&it, list);
  for (size_t i = 0; !st && ew_repeat_next(&it, &e); i++) {
    ew_layer *L = &s->layers[i];
    st = read_copy(r, &e, i, L, s->temperature_K);
    if (st) break;
    s->n_layers = i + 1;
    size_t j = name_set_add(&names, s->layers, i);
    if (j != i) {
      st = fail(r, L->line, "duplicate layer name '%s' (first used at line %d)%s", L->name,
                s->layers[j].line,
                !config_setting_get_member(e.group, "name")
                    ? "; an unnamed layer gets its position as name"
                : L->copy ? "; the copies of a repeated layer are named NAME#k" : "");
      break;
    }
    L->z_start_nm = z;
    z += L->thickness_nm;
    if (z > MAX_TOTAL_NM)
      st = fail(r, L->line, "total thickness reaches %g nm at layer '%s', above the %g nm "
                "limit", z, L->name, MAX_TOTAL_NM);
  }
  if (!st) st = check_repeated_names(r, s, &names);
  free(names.slot);
  if (st) return st;
  s->total_nm = z;
  for (size_t k = 0; k < s->n_layers; k++) {
    const ew_layer *L = &s->layers[k];
    if (L->donors_cm3 > 0 || L->acceptors_cm3 > 0 || L->donor_sheet_cm2 > 0 ||
        L->acceptor_sheet_cm2 > 0)
      s->doped = 1;
  }
  return EW_OK;
}

/* ---- top level ---------------------------------------------------------------------- */

/* substrate = "GaAs";  or  substrate = { material = "InGaAs"; x = 0.53; }; */
static ew_status read_substrate(reader *r, const config_setting_t *root, ew_stack *s) {
  const config_setting_t *sub = config_setting_get_member(root, "substrate");
  if (!sub) return EW_OK;
  int line = line_of(sub), l = line, got;
  if (config_setting_type(sub) == CONFIG_TYPE_STRING) {
    got = get_name(r, root, "substrate", "", s->substrate, &l);
    if (got < 0) return EW_ERR_INPUT;
  } else if (config_setting_type(sub) == CONFIG_TYPE_GROUP) {
    ew_status st = check_keys(r, sub, substrate_keys, COUNT(substrate_keys), "in 'substrate'");
    if (st) return st;
    got = get_name(r, sub, "material", "in 'substrate'", s->substrate, &l);
    if (got < 0) return EW_ERR_INPUT;
    if (got == 0) return fail(r, line, "'substrate' needs a 'material'");
    int lm = l;
    got = get_number(r, sub, "x", "in 'substrate'", &s->substrate_x, &l);
    if (got < 0) return EW_ERR_INPUT;
    if (got == 0 && r->cat && ew_catalogue_is_alloy(r->cat, s->substrate) > 0)
      return fail(r, lm, "substrate alloy '%s' needs its composition: add x = ...; to the "
                  "'substrate' group", s->substrate);
    if (got > 0 && r->cat && ew_catalogue_find(r->cat, s->substrate) >= 0 &&
        !ew_catalogue_is_alloy(r->cat, s->substrate))
      return fail(r, l, "substrate '%s' is a binary: it takes no x", s->substrate);
  } else {
    return fail(r, line, "'substrate' must be a material name (\"GaAs\") or a group "
                "{ material = ...; x = ...; }, not %s", type_word(sub));
  }
  int from_name = 0; /* substrate = "In0.53Ga0.47As": see composition_name */
  if (r->cat && ew_catalogue_find(r->cat, s->substrate) < 0) {
    double x = 0.0, y = 0.0;
    char why[160];
    long i = ew_catalogue_composition(r->cat, s->substrate, &x, &y, why, sizeof why);
    if (i == -2) return fail(r, l, "substrate: %s", why);
    if (i >= 0) {
      const config_setting_t *dup = config_setting_type(sub) != CONFIG_TYPE_GROUP ? NULL
                                    : config_setting_get_member(sub, "x");
      if (!dup && config_setting_type(sub) == CONFIG_TYPE_GROUP)
        dup = config_setting_get_member(sub, "y");
      if (dup)
        return fail(r, line_of(dup), "substrate: x given twice: '%s' already sets the "
                    "composition; drop '%s' or write material = \"%s\"", s->substrate,
                    config_setting_name(dup), ew_catalogue_name(r->cat, (size_t)i));
      snprintf(s->substrate, sizeof s->substrate, "%s", ew_catalogue_name(r->cat, (size_t)i));
      s->substrate_x = x, s->substrate_y = y, from_name = 1;
    }
  }
  if (!r->cat || ew_catalogue_find(r->cat, s->substrate) < 0)
    return unknown_material(r, l, s->substrate, "substrate");
  int alloy = ew_catalogue_is_alloy(r->cat, s->substrate);
  if (alloy && !from_name && config_setting_type(sub) != CONFIG_TYPE_GROUP)
    return fail(r, line, "substrate alloy '%s' needs a composition: substrate = { material = "
                "\"%s\"; x = ...; };", s->substrate, s->substrate);
  if (s->substrate_x < 0 || s->substrate_x > 1)
    return fail(r, l, "substrate x = %g is outside [0, 1]", s->substrate_x);
  if (config_setting_type(sub) == CONFIG_TYPE_GROUP) {
    got = get_number(r, sub, "y", "in 'substrate'", &s->substrate_y, &l);
    if (got < 0) return EW_ERR_INPUT;
    if (s->substrate_y < 0 || s->substrate_y > 1)
      return fail(r, l, "substrate y = %g is outside [0, 1]", s->substrate_y);
  }
  double a = 0.0;
  ew_error e;
  memset(&e, 0, sizeof e);
  if (ew_lattice_nm(r->cat, s->substrate, s->substrate_x, s->substrate_y, &a, &e) || !(a > 0))
    return fail(r, line, "substrate '%s': no lattice constant available%s%s", s->substrate,
                e.message[0] ? ": " : "", e.message);
  s->substrate_a_nm = a;
  r->a_sub_nm = a;
  return EW_OK;
}

/* ---- Band offsets: the designer's own conduction-band share ---------------------------
 * The catalogue's offsets come from its valence-band offsets (VBO) on one absolute scale
 * (Vurgaftman 2001).  Where a designer trusts a measured split more (InGaAs/GaAs: the review's
 * VBO gives a conduction share of about 0.37, many measurements 0.6–0.7), conduction_share = S
 * (top level for every layer, or per layer) moves each such layer rigidly so that against the
 * reference layer (offset_reference = "name", default the first layer)
 *     Ec − Ec_ref = S (G − G_ref),   Ev,hh_ref − Ev,hh = (1 − S)(G − G_ref),   G = Ec − Ev,hh,
 * with the edges as grown (strained on a substrate): a measured offset is that of the strained
 * interface, and the interface table then shows exactly S.  A rigid shift keeps each layer's
 * gaps and strain splitting.  Graded layers are moved sample by sample. */
static void share_shift(ew_bands *b, const ew_bands *ref, double S) {
  double G = b->Ec_eV - b->Ev_hh_eV, Gref = ref->Ec_eV - ref->Ev_hh_eV;
  double d = ref->Ev_hh_eV - (1.0 - S) * (G - Gref) - b->Ev_hh_eV;
  b->Ev_eV += d, b->Ev_hh_eV += d, b->Ev_lh_eV += d, b->Ec_eV += d;
}

static ew_status offset_reference(reader *r, const config_setting_t *root, ew_stack *s) {
  s->offset_reference = 0;
  if (!config_setting_get_member(root, "offset_reference")) return EW_OK;
  char name[EW_NAME_MAX];
  int l = 1;
  if (get_name(r, root, "offset_reference", "", name, &l) < 0) return EW_ERR_INPUT;
  const char *names[MAX_OFFSET_HINT];
  size_t k = 0, n = s->n_layers < MAX_OFFSET_HINT ? s->n_layers : MAX_OFFSET_HINT;
  if ((k = ew_stack_find_layer(s, name)) == s->n_layers) {
    for (size_t i = 0; i < n; i++) names[i] = s->layers[i].name;
    const char *hint = ew_text_nearest(name, names, n);
    return fail(r, l, "offset_reference '%s' is not a layer of this stack%s%s%s", name,
                hint ? "; did you mean '" : "", hint ? hint : "", hint ? "'?" : "");
  }
  if (s->layers[k].grade)
    return fail(r, l, "offset_reference '%s' is a graded layer; name an ungraded one", name);
  s->offset_reference = k;
  return EW_OK;
}

static ew_status apply_offsets(reader *r, const config_setting_t *root, ew_stack *s) {
  ew_status st = read_share(r, root, "", &s->conduction_share, &(int){0});
  if (st || (st = offset_reference(r, root, s))) return st;
  const ew_bands ref = s->layers[s->offset_reference].bands;
  for (size_t k = 0; k < s->n_layers; k++) {
    ew_layer *L = &s->layers[k];
    if (k == s->offset_reference && L->conduction_share >= 0)
      return fail(r, L->conduction_share_line, "layer '%s' is the offset reference: its own "
                  "conduction_share has nothing to split against (give it to the other layers, "
                  "or name another offset_reference)", L->name);
    double S = L->conduction_share >= 0 ? L->conduction_share : s->conduction_share;
    if (S < 0 || k == s->offset_reference) continue;
    s->offsets_set = 1;
    share_shift(&L->bands, &ref, S);
    for (int j = 0; L->profile && j < EW_GRADE_SAMPLES; j++) share_shift(&L->profile[j], &ref, S);
  }
  return EW_OK;
}

void ew_stack_interface(const ew_stack *st, size_t k, ew_interface *out) {
  ew_bands a, b;
  ew_layer_bands_at(&st->layers[k], 1.0, &a);
  ew_layer_bands_at(&st->layers[k + 1], 0.0, &b);
  out->first = k;
  out->z_nm = st->layers[k + 1].z_start_nm;
  out->dEc_eV = a.Ec_eV - b.Ec_eV;
  out->dEv_eV = b.Ev_hh_eV - a.Ev_hh_eV;
  double sum = out->dEc_eV + out->dEv_eV;
  out->conduction_share = fabs(sum) > 1e-9 ? out->dEc_eV / sum : NAN;
}

/* temperature, grid_step (its line into *lg for the grid-size check), field, nonparabolic */
static ew_status read_run_keys(reader *r, const config_setting_t *root, ew_stack *s, int *lg) {
  int l = 1;
  s->temperature_K = DEFAULT_TEMPERATURE_K;
  int got = get_number(r, root, "temperature", "", &s->temperature_K, &l);
  if (got < 0) return EW_ERR_INPUT;
  if (got && (s->temperature_K < 0 || s->temperature_K > MAX_TEMPERATURE_K))
    return fail(r, l, "temperature = %g K is outside [0, %g] K", s->temperature_K,
                MAX_TEMPERATURE_K);

  *lg = 1;
  s->grid_step_nm = 0; /* 0: not given, the solver chooses */
  got = get_number(r, root, "grid_step", "", &s->grid_step_nm, lg);
  if (got < 0) return EW_ERR_INPUT;
  if (got && (s->grid_step_nm <= 0 || s->grid_step_nm > MAX_GRID_STEP_NM))
    return fail(r, *lg, "grid_step = %g nm must be in (0, %g] nm", s->grid_step_nm,
                MAX_GRID_STEP_NM);

  double v;
  int lf = 1;
  got = get_number(r, root, "field", "", &v, &lf);
  if (got < 0) return EW_ERR_INPUT;
  if (got && fabs(v) > MAX_FIELD_KV_CM)
    return fail(r, lf, "field = %g kV/cm is beyond %g kV/cm (units are kV/cm)", v, MAX_FIELD_KV_CM);
  s->field_kV_cm = got ? v : 0.0;

  s->nonparabolic = 1;
  const config_setting_t *np = config_setting_get_member(root, "nonparabolic");
  if (np) {
    if (config_setting_type(np) != CONFIG_TYPE_BOOL)
      return fail(r, line_of(np), "'nonparabolic' must be true or false, not %s", type_word(np));
    s->nonparabolic = config_setting_get_bool(np);
    s->nonparabolic_given = 1;
  }
  return EW_OK;
}

/* sheet_density and linewidth (the spectra's keys) */
static ew_status read_spectrum_keys(reader *r, const config_setting_t *root, ew_stack *s) {
  double v;
  int lf = 1;
  int got = get_number(r, root, "sheet_density", "", &v, &lf);
  if (got < 0) return EW_ERR_INPUT;
  if (got && (v < 0 || v > MAX_SHEET_DENSITY_CM2))
    return fail(r, lf, "sheet_density = %g cm^-2 must be in [0, %g]", v, MAX_SHEET_DENSITY_CM2);
  s->sheet_density_cm2 = got ? v : 0.0;
  got = get_number(r, root, "linewidth", "", &v, &lf);
  if (got < 0) return EW_ERR_INPUT;
  if (got && (v <= 0 || v > 500))
    return fail(r, lf, "linewidth = %g meV must be in (0, 500] meV", v);
  s->linewidth_meV = got ? v : DEFAULT_LINEWIDTH_MEV;
  return EW_OK;
}

/* surface = { barrier = …; } or bias = …; (not both): the electrostatic boundary conditions */
static ew_status read_contacts(reader *r, const config_setting_t *root, ew_stack *s) {
  int lf = 1;
  const config_setting_t *surf = config_setting_get_member(root, "surface");
  if (surf) {
    static const char *const sk[] = {"barrier"};
    if (config_setting_type(surf) != CONFIG_TYPE_GROUP)
      return fail(r, line_of(surf), "'surface' must be a group { barrier = 0.75; }");
    ew_status st = check_keys(r, surf, sk, 1, "in 'surface'");
    if (st) return st;
    int gs = get_number(r, surf, "barrier", "in 'surface'", &s->surface_barrier_eV, &lf);
    if (gs < 0) return EW_ERR_INPUT;
    if (gs == 0) return fail(r, line_of(surf), "'surface' needs 'barrier' (eV of Ec above the Fermi level at the first face)");
    if (s->surface_barrier_eV < -1 || s->surface_barrier_eV > 5)
      return fail(r, lf, "surface barrier = %g eV must be in [-1, 5] eV", s->surface_barrier_eV);
    s->surface_given = 1;
  }
  int got = get_number(r, root, "bias", "", &s->bias_V, &lf);
  if (got < 0) return EW_ERR_INPUT;
  if (got && fabs(s->bias_V) > 50)
    return fail(r, lf, "bias = %g V is beyond 50 V", s->bias_V);
  s->bias_given = got;
  if (s->surface_given && s->bias_given)
    return fail(r, lf, "give either 'surface' or 'bias', not both");
  return EW_OK;
}

/* A given grid_step (line lg) must not ask for more nodes than the solver can hold. */
static ew_status check_grid_size(reader *r, const ew_stack *s, int lg) {
  if (!(s->grid_step_nm > 0)) return EW_OK;
  double nodes = s->total_nm / s->grid_step_nm;
  if (nodes <= MAX_NODES) return EW_OK;
  double gb = nodes * BYTES_PER_NODE_PER_BAND * EW_BAND_COUNT / 1e9;
  return fail(r, lg, "grid_step = %g nm over %g nm gives about %.3g grid nodes (limit %g); "
              "that would need at least %.3g GB (about %g bytes per node per band, %d bands, "
              "plus %g bytes per node for every bound state). Use a larger grid_step",
              s->grid_step_nm, s->total_nm, nodes, MAX_NODES, gb, BYTES_PER_NODE_PER_BAND,
              (int)EW_BAND_COUNT, EW_GRID_BYTES_PER_NODE_STATE);
}

static ew_status read_top(reader *r, const config_setting_t *root, ew_stack *s) {
  int lg = 1;
  ew_status st = check_keys(r, root, top_keys, COUNT(top_keys), "at top level");
  if (!st) st = read_run_keys(r, root, s, &lg);
  if (!st) st = read_spectrum_keys(r, root, s);
  if (!st) st = read_contacts(r, root, s);
  if (!st) st = read_substrate(r, root, s);
  if (!st) st = read_user_materials(r, root);
  if (!st) st = read_user_alloys(r, root);
  if (!st) st = read_layers(r, root, s);
  if (!st) st = apply_offsets(r, root, s);
  if (!st) st = check_grid_size(r, s, lg);
  return st;
}

/* Root may be empty when the text holds only blanks and comments. */
static int text_is_blank(const char *text) {
  for (const unsigned char *p = (const unsigned char *)text; *p; p++)
    if (!isspace(*p)) return 0;
  return 1;
}

/* The reader's keys for a group of a parsed tree, found from where the group sits; NULL when
 * the group is not one the reader gives a fixed set of keys. */
static const char *const *keys_of_group(const config_setting_t *g, size_t *n) {
  static const char *const surface_keys[] = {"barrier"};
  static const char *const entry_keys[] = {"value", "per_x"};
  const config_setting_t *parent = config_setting_parent(g);
  const char *name = config_setting_name(g), *pname = parent ? config_setting_name(parent) : NULL;
#define KEYS(a) (*n = COUNT(a), a)
  if (!parent) return KEYS(top_keys);
  if (!name && pname && !strcmp(pname, "layers")) return KEYS(layer_keys);
  if (!name && pname && !strcmp(pname, "materials")) return KEYS(umat_keys);
  if (!name && pname && !strcmp(pname, "alloys")) return KEYS(alloy_keys);
  if (!name) return NULL;
  if (!strcmp(name, "doping")) return KEYS(doping_keys);
  if (!strcmp(name, "grade")) return KEYS(grade_keys);
  if (!strcmp(name, "substrate")) return KEYS(substrate_keys);
  if (!strcmp(name, "surface")) return KEYS(surface_keys);
  if (!strcmp(name, "bowing")) return KEYS(bowing_keys);
  if (pname && !strcmp(pname, "bowing")) return KEYS(entry_keys);
#undef KEYS
  return NULL;
}

ew_status ew_stack_check_key(const config_setting_t *group, const char *key, const char *opt,
                             const char *full_key, ew_error *err) {
  size_t n = 0;
  const char *const *keys = group ? keys_of_group(group, &n) : NULL;
  for (size_t k = 0; keys && k < n; k++)
    if (!strcmp(keys[k], key)) return EW_OK;
  if (!keys) return EW_OK;
  const char *hint = ew_text_nearest(key, keys, n);
  if (hint)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: unknown key '%s'; did you mean '%s'?",
                   opt, full_key, key, hint);
  char list[256];
  join_keys(list, sizeof list, keys, n);
  return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: unknown key '%s' (valid keys: %s)", opt,
                 full_key, key, list);
}

/* r->line_start: the start of every line of r->text; nonzero when out of memory. */
static int index_lines(reader *r) {
  size_t n = 1;
  for (const char *p = r->text; (p = strchr(p, '\n')) != NULL; p++) n++;
  r->line_start = malloc(n * sizeof *r->line_start);
  if (!r->line_start) return 1;
  r->n_lines = 0;
  for (const char *p = r->text;; p++) {
    r->line_start[r->n_lines++] = p;
    if (!(p = strchr(p, '\n'))) break;
  }
  return 0;
}

/* Build the stack from a parsed tree.  text, when not NULL, is the source the tree was parsed
 * from (to re-check integer literals, see int_is_exact); NULL when values were set in the tree
 * after parsing (stack editing), where every stored integer is exact. */
static ew_status read_tree(const config_t *cfg, const char *text, const char *name,
                           const ew_catalogue *cat, const ew_stack_layer_hook *hook,
                           ew_stack **out, ew_error *err) {
  reader r = {name, text, cat, err, NULL, 0, NULL, 0, 0.0, NULL, 0, hook};
  if (text && index_lines(&r)) return ew_fail(err, EW_ERR_NOMEM, name, 0, "out of memory");
  ew_stack *s = calloc(1, sizeof *s);
  if (!s) {
    free(r.line_start);
    return ew_fail(err, EW_ERR_NOMEM, name, 0, "out of memory");
  }
  size_t nl = strlen(name);
  if (nl >= sizeof s->path) nl = sizeof s->path - 1;
  memcpy(s->path, name, nl);
  s->path[nl] = '\0';
  const config_setting_t *root = config_root_setting(cfg);
  ew_status st;
  if (config_setting_length(root) == 0)
    st = fail(&r, 1, !text || text_is_blank(text)
                         ? "the stack file is empty"
                         : "the stack file holds no settings (only comments)");
  else
    st = read_top(&r, root, s);
  free(r.umat);
  free(r.ualloy);
  free(r.line_start);
  if (st) {
    ew_stack_free(s);
    return st;
  }
  *out = s;
  return EW_OK;
}

ew_status ew_stack_from_config_hooked(const config_t *cfg, const char *display_name,
                                      const ew_catalogue *cat, const ew_stack_layer_hook *hook,
                                      ew_stack **out, ew_error *err) {
  const char *name = display_name ? display_name : "<config>";
  if (out) *out = NULL;
  if (!out || !cfg)
    return ew_fail(err, EW_ERR_INPUT, name, 0, "ew_stack_from_config: NULL %s",
                   !out ? "output pointer" : "config");
  return read_tree(cfg, NULL, name, cat, hook, out, err);
}

ew_status ew_stack_from_config(const config_t *cfg, const char *display_name,
                               const ew_catalogue *cat, ew_stack **out, ew_error *err) {
  return ew_stack_from_config_hooked(cfg, display_name, cat, NULL, out, err);
}

/* ---- what a generic libconfig "syntax error" usually means ------------------------------
 * The usual slips of a grower's hand (common practice): a unit after the number, a decimal
 * comma, an unquoted material name.  Looked for on the line libconfig blames and the one
 * before it (libconfig blames the token after the slip, which may start the next line). */

/* The unit each top-level or layer key is in (README "Stack file"). */
static const char *implied_unit(const char *key, size_t len) {
  static const char *const tab[][2] = {
      {"thickness", "nm"}, {"grid_step", "nm"}, {"temperature", "K"}, {"field", "kV/cm"},
      {"linewidth", "meV"}, {"donors", "cm^-3"}, {"acceptors", "cm^-3"},
      {"donor_sheet", "cm^-2"}, {"acceptor_sheet", "cm^-2"}, {"sheet_density", "cm^-2"},
      {"donor_energy", "eV"}, {"acceptor_energy", "eV"}, {"thickness_ml", "monolayers"}};
  for (size_t i = 0; i < COUNT(tab); i++)
    if (strlen(tab[i][0]) == len && !strncmp(tab[i][0], key, len)) return tab[i][1];
  return NULL;
}

static int ident_char(char c) { return isalnum((unsigned char)c) || c == '_'; }

/* One "key = value" at p (p at the key) within [p, end): a message into msg, 1 if it is
 * one of the slips. */
static int explain_setting(const char *p, const char *end, char *msg, size_t size) {
  const char *k = p;
  while (p < end && ident_char(*p)) p++;
  int klen = (int)(p - k);
  while (p < end && (*p == ' ' || *p == '\t')) p++;
  if (p >= end || (*p != '=' && *p != ':')) return 0;
  p++;
  while (p < end && (*p == ' ' || *p == '\t')) p++;
  const char *v = p;
  if (p < end && (isdigit((unsigned char)*p) || *p == '-' || *p == '+' || *p == '.')) {
    while (p < end && (isdigit((unsigned char)*p) || strchr("+-.eE", *p))) p++;
    int nlen = (int)(p - v);
    if (p + 1 < end && *p == ',' && isdigit((unsigned char)p[1]) && !memchr(v, '.', (size_t)nlen)) {
      const char *f = p + 1;
      while (f < end && isdigit((unsigned char)*f)) f++;
      snprintf(msg, size, "'%.*s = %.*s': use a decimal point (%.*s = %.*s.%.*s)", klen, k,
               (int)(f - v), v, klen, k, nlen, v, (int)(f - p - 1), p + 1);
      return 1;
    }
    const char *u = p;
    while (u < end && (*u == ' ' || *u == '\t')) u++;
    if (u >= end || !(isalpha((unsigned char)*u) || *u == '%')) return 0;
    const char *ue = u;
    while (ue < end && !strchr(" \t;,)}#", *ue)) ue++;
    int ulen = (int)(ue - u), wlen = (int)(ue - k);
    const char *unit = implied_unit(k, (size_t)klen);
    if (unit && strlen(unit) == (size_t)ulen && !strncmp(unit, u, (size_t)ulen))
      snprintf(msg, size, "'%.*s': write the number without a unit: %s is implied", wlen, k,
               unit);
    else if (unit)
      snprintf(msg, size, "'%.*s': write the number without a unit ('%.*s' is in %s)", wlen, k,
               klen, k, unit);
    else
      snprintf(msg, size, "'%.*s': write the number without a unit (README \"Stack file\" "
               "gives each key's unit)", wlen, k);
    return 1;
  }
  if (p < end && isalpha((unsigned char)*p)) {
    while (p < end && (ident_char(*p) || *p == '.')) p++;
    int vlen = (int)(p - v);
    if ((vlen == 4 && !strncasecmp(v, "true", 4)) || (vlen == 5 && !strncasecmp(v, "false", 5)))
      return 0;
    if (klen == 12 && !strncmp(k, "nonparabolic", 12))
      snprintf(msg, size, "'%.*s = %.*s': write true or false", klen, k, vlen, v);
    else if (implied_unit(k, (size_t)klen) || (klen == 1 && (*k == 'x' || *k == 'y')))
      snprintf(msg, size, "'%.*s = %.*s': write a number", klen, k, vlen, v);
    else
      snprintf(msg, size, "'%.*s = %.*s': quote the name (%.*s = \"%.*s\";)", klen, k, vlen, v,
               klen, k, vlen, v);
    return 1;
  }
  return 0;
}

/* Line `line` (1-based) of text as [*b, *e), the comment cut off; 0 when there is none. */
static int line_span(const char *text, int line, const char **b, const char **e) {
  const char *p = text;
  for (int l = 1; l < line && p; l++) {
    p = strchr(p, '\n');
    if (p) p++;
  }
  if (!p || line < 1) return 0;
  const char *end = strchr(p, '\n');
  if (!end) end = p + strlen(p);
  int quoted = 0;
  for (const char *q = p; q < end; q++) { /* a '#' or '//' outside quotes starts a comment */
    if (*q == '"') quoted = !quoted;
    if (!quoted && (*q == '#' || (*q == '/' && q + 1 < end && q[1] == '/'))) { end = q; break; }
  }
  *b = p, *e = end;
  return 1;
}

/* A specific message for the slip near `line`, with the line it is on; 0 when none is seen. */
static int explain_syntax(const char *text, int line, char *msg, size_t size) {
  for (int l = line; l >= line - 1 && l >= 1; l--) {
    const char *b, *e;
    if (!line_span(text, l, &b, &e)) continue;
    int quoted = 0;
    for (const char *q = b; q < e; q++) {
      if (*q == '"') quoted = !quoted;
      if (quoted || !isalpha((unsigned char)*q) || (q > b && ident_char(q[-1]))) continue;
      if (explain_setting(q, e, msg, size)) return l;
    }
  }
  return 0;
}

static ew_status read_text(const char *text, const char *name, const ew_catalogue *cat,
                           ew_stack **out, ew_error *err) {
  config_t cfg;
  config_init(&cfg);
  ew_status st;
  /* a UTF-8 byte-order mark (written by common Windows editors) is not part of the text */
  if (!strncmp(text, "\xEF\xBB\xBF", 3)) text += 3;
  int inc = ew_text_include_line(text); /* robustness: see text.h */
  if (inc > 0) {
    st = ew_fail(err, EW_ERR_INPUT, name, inc, "'@include' is not supported in stack files: "
                 "put every setting in the one file");
  } else if (!config_read_string(&cfg, text)) {
    int line = config_error_line(&cfg);
    const char *why = config_error_text(&cfg);
    char hint[256];
    int hl = explain_syntax(text, line > 0 ? line : 1, hint, sizeof hint);
    if (hl > 0)
      st = ew_fail(err, EW_ERR_INPUT, name, hl, "cannot parse the stack file: %s", hint);
    else
      st = ew_fail(err, EW_ERR_INPUT, name, line > 0 ? line : 1, "cannot parse the stack file: "
                 "%s (libconfig syntax: key = value; groups in { }, lists in ( ))",
                 why ? why : "syntax error");
  } else {
    st = read_tree(&cfg, text, name, cat, NULL, out, err);
  }
  config_destroy(&cfg);
  return st;
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

/* The whole file into *buf (NUL-terminated, *len bytes, owned by the caller even on
 * failure).  Read here rather than by config_read_file: it tells an unreadable file
 * (EW_ERR_IO, with errno) from a malformed one and stops at MAX_FILE_BYTES. */
static ew_status read_bytes(const char *path, char **buf, size_t *len, ew_error *err) {
  FILE *f = fopen(path, "rb");
  if (!f) return ew_fail(err, EW_ERR_IO, path, 0, "cannot open '%s': %s", path, strerror(errno));
  size_t cap = 4096;
  *len = 0;
  *buf = malloc(cap);
  ew_status st = EW_OK;
  if (!*buf) st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  while (!st) {
    if (*len + 1 >= cap) {
      if (cap >= (size_t)MAX_FILE_BYTES) {
        st = ew_fail(err, EW_ERR_INPUT, path, 1, "file is larger than %ld bytes; not a stack file",
                     MAX_FILE_BYTES);
        break;
      }
      char *nb = realloc(*buf, cap * 2);
      if (!nb) { st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory"); break; }
      *buf = nb;
      cap *= 2;
    }
    size_t got = fread(*buf + *len, 1, cap - 1 - *len, f);
    *len += got;
    if (got == 0) {
      if (ferror(f)) st = ew_fail(err, EW_ERR_IO, path, 0, "cannot read '%s': %s", path,
                                  errno ? strerror(errno) : "read error");
      break;
    }
  }
  fclose(f);
  if (!st) (*buf)[*len] = '\0';
  return st;
}

ew_status ew_stack_read_file(const char *path, const ew_catalogue *cat, ew_stack **out,
                             ew_error *err) {
  if (out) *out = NULL;
  if (!out || !path)
    return ew_fail(err, EW_ERR_IO, path, 0, "ew_stack_read_file: NULL %s",
                   !out ? "output pointer" : "path");
  char *buf = NULL;
  size_t len = 0;
  ew_status st = read_bytes(path, &buf, &len, err);
  if (!st) {
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

void ew_layer_bands_at(const ew_layer *ly, double f, ew_bands *out) {
  if (!ly->profile) {
    *out = ly->bands;
    return;
  }
  double u = fmin(fmax(f, 0.0), 1.0) * (EW_GRADE_SAMPLES - 1);
  int k = (int)u;
  if (k >= EW_GRADE_SAMPLES - 1) k = EW_GRADE_SAMPLES - 2;
  double t = u - k;
  const ew_bands *a = &ly->profile[k], *b = &ly->profile[k + 1];
  *out = t < 0.5 ? *a : *b; /* integer fields from the nearer sample */
  /* interpolate what the solver uses along z */
#define LERP(fld) out->fld = (1 - t) * a->fld + t * b->fld
  LERP(Ec_eV);
  LERP(Ev_eV);
  LERP(Ev_hh_eV);
  LERP(Ev_lh_eV);
  LERP(Eg_G_eV);
  LERP(Eg_X_eV);
  LERP(Eg_L_eV);
  LERP(me);
  LERP(mhh_z);
  LERP(mlh_z);
  LERP(mhh_par);
  LERP(mlh_par);
  LERP(mhh_dos);
  LERP(mlh_dos);
  LERP(eps_r);
  LERP(a_nm);
  LERP(Dso_eV);
  LERP(gamma3);
  LERP(dE_shear_strain_eV);
#undef LERP
}

void ew_stack_free(ew_stack *stack) {
  if (!stack) return;
  for (size_t k = 0; stack->layers && k < stack->n_layers; k++) free(stack->layers[k].profile);
  free(stack->layers);
  free(stack);
}

size_t ew_stack_find_layer(const ew_stack *st, const char *name) {
  size_t k = 0;
  while (k < st->n_layers && strcmp(st->layers[k].name, name) != 0) k++;
  return k;
}
