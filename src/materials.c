/* materials.c — the material catalogue: one libconfig file per material in a directory,
 * validated on load, interpolated in composition and evaluated at a temperature.
 *
 * Alloy rule (Vegard's law with bowing, as used throughout I. Vurgaftman, J. R. Meyer,
 * L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), Sec. II):
 *     P(x) = x P_first + (1 − x) P_second − x (1 − x) C(x),   C(x) = C0 + C1 x,
 * where x is the fraction of the first-named element and a missing bowing means C = 0.
 * Gaps at T follow the same review: each end binary's gap is taken at T (Varshni) and then
 * interpolated with a temperature-independent bowing.
 * Quaternaries ("square" and "triangle" schemes) interpolate their corner binaries and
 * take the bowings of their bounding ternaries from the catalogue: formulas in materials.h.
 * Strain on a substrate (ew_material_bands_on) is computed in strain.c.
 */
#include "materials.h"

#include "error.h"
#include "strain.h"

#include <ctype.h>
#include <dirent.h>
#include <errno.h>
#include <libconfig.h>
#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#ifndef EW_PREFIX
#define EW_PREFIX "/usr/local"
#endif

#define EW_PATH_MAX 4096

/* ---- parameter table ------------------------------------------------------------------ */

static const char *const param_keys[EW_P_COUNT] = {
    "Eg_G",   "alpha_G", "beta_G",   "Eg_X",   "alpha_X", "beta_X",   "Eg_L",
    "alpha_L", "beta_L", "VBO",      "Delta_so", "me",    "gamma1",   "gamma2",
    "gamma3", "eps_static", "a_lattice", "Ep",  "F",       "a_c",      "a_v",
    "b_shear", "d_shear", "c11",     "c12",    "c44"};

static const char *const param_units[EW_P_COUNT] = {
    "eV", "meV/K", "K", "eV", "meV/K", "K", "eV", "meV/K", "K", "eV", "eV", "m0", "-",
    "-",  "-",     "-", "Å",  "eV",    "-", "eV", "eV",    "eV", "eV", "GPa", "GPa", "GPa"};

const char *ew_param_key(ew_param p) {
  return (p >= 0 && p < EW_P_COUNT) ? param_keys[p] : "?";
}

const char *ew_param_unit(ew_param p) {
  return (p >= 0 && p < EW_P_COUNT) ? param_units[p] : "?";
}

/* Varshni parameters that belong to each gap (Γ, X, L). */
static const ew_param gap_key[3] = {EW_P_EG_G, EW_P_EG_X, EW_P_EG_L};
static const ew_param alpha_key[3] = {EW_P_ALPHA_G, EW_P_ALPHA_X, EW_P_ALPHA_L};
static const ew_param beta_key[3] = {EW_P_BETA_G, EW_P_BETA_X, EW_P_BETA_L};

/* Parameters an alloy file may not bow: the Luttinger parameters are interpolated linearly
 * (the brief's rule, following Vurgaftman 2001, who give no γ bowings), and Varshni α, β
 * are not used for alloys at all (the end binaries' gaps are taken at T instead). */
static int bowing_forbidden(ew_param p) {
  return p == EW_P_GAMMA1 || p == EW_P_GAMMA2 || p == EW_P_GAMMA3 || p == EW_P_ALPHA_G ||
         p == EW_P_BETA_G || p == EW_P_ALPHA_X || p == EW_P_BETA_X || p == EW_P_ALPHA_L ||
         p == EW_P_BETA_L;
}

static const char linear_source[] = "linear interpolation (no bowing in this catalogue)";
static const char varshni_alloy_source[] =
    "linear interpolation, for display only: gaps at T use each end binary's Varshni law "
    "(I. Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001))";

/* ---- catalogue ------------------------------------------------------------------------ */

enum { KIND_BINARY = 0, KIND_ALLOY = 1, KIND_QUATERNARY = 2 };
enum { SCHEME_SQUARE = 0, SCHEME_TRIANGLE = 1 };

typedef struct {
  char *name, *description, *x_is, *path;
  int is_alloy; /* 1 for ternary alloys and quaternaries: x is needed */
  int kind;     /* KIND_* */
  int name_line;
  /* binary: values; alloy: bowing C0 (v), C1 (per_x) */
  double v[EW_P_COUNT], per_x[EW_P_COUNT];
  int have[EW_P_COUNT];
  int line[EW_P_COUNT];
  char *source[EW_P_COUNT];
  /* alloy end binaries */
  char *first, *second;
  int first_line, second_line;
  size_t i_first, i_second;
  /* quaternary: y, scheme, corner binaries, bounding ternaries (source[] holds the
   * interpolation text of every parameter, built when the catalogue is resolved) */
  char *y_is;
  int scheme, n_corner, corners_line;
  char *corner[4];
  size_t i_corner[4];
  int n_edge;
  size_t i_edge[4];   /* the ternary on each edge */
  int edge_flip[4];   /* 1: the ternary's first binary is the edge's second corner */
} entry;

/* Corner pairs of the edges of each scheme (see materials.h). */
static const int edge_a[2][4] = {{0, 1, 0, 2}, {0, 1, 0, -1}};
static const int edge_b[2][4] = {{2, 3, 1, 3}, {1, 2, 2, -1}};

struct ew_catalogue {
  char dir[EW_PATH_MAX];
  entry *e;
  size_t n;
};

static char *dup_str(const char *s) {
  size_t n = strlen(s) + 1;
  char *d = malloc(n);
  if (d) memcpy(d, s, n);
  return d;
}

static void entry_clear(entry *e) {
  free(e->name);
  free(e->description);
  free(e->x_is);
  free(e->path);
  free(e->first);
  free(e->second);
  free(e->y_is);
  for (int k = 0; k < 4; k++) free(e->corner[k]);
  for (int p = 0; p < EW_P_COUNT; p++) free(e->source[p]);
  memset(e, 0, sizeof *e);
}

void ew_catalogue_free(ew_catalogue *cat) {
  if (!cat) return;
  for (size_t i = 0; i < cat->n; i++) entry_clear(&cat->e[i]);
  free(cat->e);
  free(cat);
}

/* Weighted edit distance: insertion, deletion, substitution cost 2, a change of letter
 * case only 1, so "GaAS" is nearer to "GaAs" than to any name differing in a letter. */
static int edit_distance(const char *a, const char *b) {
  enum { MAXL = 127 };
  size_t la = strlen(a), lb = strlen(b);
  if (la > MAXL) la = MAXL;
  if (lb > MAXL) lb = MAXL;
  int row[MAXL + 1];
  for (size_t j = 0; j <= lb; j++) row[j] = 2 * (int)j;
  for (size_t i = 1; i <= la; i++) {
    int diag = row[0];
    row[0] = 2 * (int)i;
    for (size_t j = 1; j <= lb; j++) {
      unsigned char ca = (unsigned char)a[i - 1], cb = (unsigned char)b[j - 1];
      int sub = ca == cb ? 0 : (tolower(ca) == tolower(cb) ? 1 : 2);
      int best = diag + sub;
      if (row[j] + 2 < best) best = row[j] + 2;
      if (row[j - 1] + 2 < best) best = row[j - 1] + 2;
      diag = row[j];
      row[j] = best;
    }
  }
  return row[lb];
}

static const char *nearest_key(const char *key) {
  const char *best = param_keys[0];
  int bd = INT_MAX;
  for (int p = 0; p < EW_P_COUNT; p++) {
    int d = edit_distance(key, param_keys[p]);
    if (d < bd) {
      bd = d;
      best = param_keys[p];
    }
  }
  return best;
}

static int key_index(const char *key) {
  for (int p = 0; p < EW_P_COUNT; p++)
    if (strcmp(key, param_keys[p]) == 0) return p;
  return -1;
}

size_t ew_catalogue_count(const ew_catalogue *cat) { return cat ? cat->n : 0; }

const char *ew_catalogue_name(const ew_catalogue *cat, size_t i) {
  return (cat && i < cat->n) ? cat->e[i].name : NULL;
}

long ew_catalogue_find(const ew_catalogue *cat, const char *name) {
  if (!cat || !name) return -1;
  for (size_t i = 0; i < cat->n; i++)
    if (strcmp(cat->e[i].name, name) == 0) return (long)i;
  return -1;
}

int ew_catalogue_is_alloy(const ew_catalogue *cat, const char *name) {
  long i = ew_catalogue_find(cat, name);
  return i < 0 ? -1 : cat->e[i].is_alloy;
}

int ew_catalogue_needs_y(const ew_catalogue *cat, const char *name) {
  long i = ew_catalogue_find(cat, name);
  return i < 0 ? -1 : cat->e[i].kind == KIND_QUATERNARY;
}

const char *ew_catalogue_description(const ew_catalogue *cat, size_t i) {
  if (!cat || i >= cat->n) return NULL;
  const entry *e = &cat->e[i];
  return e->kind == KIND_ALLOY ? e->x_is : e->description;
}

const char *ew_catalogue_x_is(const ew_catalogue *cat, size_t i) {
  return (cat && i < cat->n) ? cat->e[i].x_is : NULL;
}

const char *ew_catalogue_y_is(const ew_catalogue *cat, size_t i) {
  return (cat && i < cat->n) ? cat->e[i].y_is : NULL;
}

const char *ew_catalogue_nearest(const ew_catalogue *cat, const char *name) {
  if (!cat || !name || cat->n == 0) return NULL;
  const char *best = NULL;
  int bd = INT_MAX;
  for (size_t i = 0; i < cat->n; i++) {
    int d = edit_distance(name, cat->e[i].name);
    if (d < bd) {
      bd = d;
      best = cat->e[i].name;
    }
  }
  return best;
}

/* element symbols of a name (capital + lower-case letters), sorted; 0 when it is not made
 * of symbols only or has too many */
static int element_key(const char *name, char out[8][3]) {
  int n = 0;
  for (const char *p = name; *p;) {
    if (!isupper((unsigned char)*p) || n == 8) return 0;
    out[n][0] = *p++;
    out[n][1] = islower((unsigned char)*p) ? *p++ : '\0';
    out[n][2] = '\0';
    if (islower((unsigned char)*p)) return 0;
    n++;
  }
  for (int i = 1; i < n; i++) /* insertion sort: a handful of symbols */
    for (int j = i; j > 0 && strcmp(out[j - 1], out[j]) > 0; j--) {
      char t[3];
      memcpy(t, out[j], 3), memcpy(out[j], out[j - 1], 3), memcpy(out[j - 1], t, 3);
    }
  return n;
}

long ew_catalogue_reordered(const ew_catalogue *cat, const char *name) {
  char a[8][3], b[8][3];
  int na = name ? element_key(name, a) : 0;
  if (!cat || na < 2) return -1;
  for (size_t i = 0; i < cat->n; i++) {
    if (!strcmp(cat->e[i].name, name) || element_key(cat->e[i].name, b) != na) continue;
    if (!memcmp(a, b, sizeof(char[3]) * (size_t)na)) return (long)i;
  }
  return -1;
}

void ew_catalogue_hint(const ew_catalogue *cat, const char *name, char *buf, size_t size) {
  if (!size) return;
  buf[0] = '\0';
  long i = ew_catalogue_reordered(cat, name);
  if (i >= 0) {
    const entry *e = &cat->e[i];
    if (e->y_is)
      snprintf(buf, size, "the catalogue writes it '%s', x = %s, y = %s", e->name, e->x_is, e->y_is);
    else if (e->x_is)
      snprintf(buf, size, "the catalogue writes it '%s', x = %s", e->name, e->x_is);
    else
      snprintf(buf, size, "did you mean '%s'?", e->name);
    return;
  }
  const char *near = ew_catalogue_nearest(cat, name);
  if (near) snprintf(buf, size, "did you mean '%s'?", near);
}

const char *ew_catalogue_dir(const ew_catalogue *cat) { return cat ? cat->dir : NULL; }

/* ---- reading one file ----------------------------------------------------------------- */

static int line_of(const config_setting_t *s) { return (int)config_setting_source_line(s); }

/* A number setting (int or float) → *v; 0 if not a number. */
static int get_number(const config_setting_t *s, double *v) {
  switch (config_setting_type(s)) {
  case CONFIG_TYPE_INT: *v = config_setting_get_int(s); return 1;
  case CONFIG_TYPE_INT64: *v = (double)config_setting_get_int64(s); return 1;
  case CONFIG_TYPE_FLOAT: *v = config_setting_get_float(s); return 1;
  default: return 0;
  }
}

/* A required or optional top-level string; returns EW_OK and *out = NULL when optional and
 * absent. */
static ew_status get_string(const config_setting_t *root, const char *key, int required,
                            const char *path, char **out, int *line, ew_error *err) {
  *out = NULL;
  config_setting_t *s = config_setting_get_member(root, key);
  if (!s) {
    if (!required) return EW_OK;
    return ew_fail(err, EW_ERR_CATALOGUE, path, 0, "missing required setting '%s'", key);
  }
  if (line) *line = line_of(s);
  const char *t = config_setting_get_string(s);
  if (!t) return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s), "'%s' must be a string", key);
  if (!t[0]) return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s), "'%s' is empty", key);
  *out = dup_str(t);
  if (!*out) return ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  return EW_OK;
}

/* Read the group "params" (binary, bowing = 0) or "bowing" (alloy, bowing = 1). */
static ew_status read_params(const config_setting_t *grp, int bowing, const char *path,
                             entry *e, ew_error *err) {
  const char *what = bowing ? "bowing" : "params";
  if (!config_setting_is_group(grp))
    return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(grp),
                   "'%s' must be a group { KEY = { value = ...; source = \"...\"; }; ... }",
                   what);
  int n = config_setting_length(grp);
  for (int k = 0; k < n; k++) {
    config_setting_t *ps = config_setting_get_elem(grp, (unsigned)k);
    const char *key = config_setting_name(ps);
    int ln = line_of(ps);
    int p = key_index(key);
    if (p < 0)
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "unknown parameter '%s' in %s (did you mean '%s'?)", key, what,
                     nearest_key(key));
    if (bowing && bowing_forbidden((ew_param)p))
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "no bowing allowed for '%s': %s", key,
                     (p == EW_P_GAMMA1 || p == EW_P_GAMMA2 || p == EW_P_GAMMA3)
                         ? "Luttinger parameters are interpolated linearly"
                         : "alloy gaps at T use the end binaries' Varshni parameters");
    if (!config_setting_is_group(ps))
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "'%s' must be a group { value = ...; source = \"...\"; }", key);
    int have_value = 0;
    int m = config_setting_length(ps);
    for (int j = 0; j < m; j++) {
      config_setting_t *f = config_setting_get_elem(ps, (unsigned)j);
      const char *fk = config_setting_name(f);
      int fl = line_of(f);
      if (strcmp(fk, "value") == 0 || (bowing && strcmp(fk, "per_x") == 0)) {
        double v;
        if (!get_number(f, &v))
          return ew_fail(err, EW_ERR_CATALOGUE, path, fl, "%s.%s must be a number", key, fk);
        if (!isfinite(v))
          return ew_fail(err, EW_ERR_CATALOGUE, path, fl, "%s.%s is not finite", key, fk);
        if (fk[0] == 'v') {
          e->v[p] = v;
          have_value = 1;
        } else {
          e->per_x[p] = v;
        }
      } else if (strcmp(fk, "source") == 0) {
        const char *t = config_setting_get_string(f);
        if (!t || !t[0])
          return ew_fail(err, EW_ERR_CATALOGUE, path, fl,
                         "%s.source must be a non-empty string", key);
        e->source[p] = dup_str(t);
        if (!e->source[p]) return ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
      } else {
        return ew_fail(err, EW_ERR_CATALOGUE, path, fl,
                       "unknown field '%s' in %s (expected value%s, source)", fk, key,
                       bowing ? ", per_x" : "");
      }
    }
    if (!have_value)
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln, "%s has no value", key);
    if (!e->source[p])
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "%s has no source (every value must say where it comes from)", key);
    e->have[p] = 1;
    e->line[p] = ln;
  }
  return EW_OK;
}

/* Checks on a binary's values that the band calculation relies on. */
static ew_status check_binary(const entry *e, const char *path, int root_line,
                              ew_error *err) {
  static const ew_param need[] = {EW_P_EG_G, EW_P_VBO, EW_P_ME, EW_P_GAMMA1, EW_P_GAMMA2};
  for (size_t k = 0; k < sizeof need / sizeof need[0]; k++)
    if (!e->have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, path, root_line,
                     "binary '%s' lacks %s (needed for the band edges and masses)", e->name,
                     param_keys[need[k]]);
  for (int g = 0; g < 3; g++) {
    int hg = e->have[gap_key[g]], ha = e->have[alpha_key[g]], hb = e->have[beta_key[g]];
    if (hg && (!ha || !hb))
      return ew_fail(err, EW_ERR_CATALOGUE, path, e->line[gap_key[g]],
                     "%s needs %s and %s (Varshni temperature dependence)",
                     param_keys[gap_key[g]], param_keys[alpha_key[g]], param_keys[beta_key[g]]);
    if (!hg && (ha || hb))
      return ew_fail(err, EW_ERR_CATALOGUE, path,
                     e->line[ha ? alpha_key[g] : beta_key[g]],
                     "Varshni parameters given without %s", param_keys[gap_key[g]]);
    if (hb && e->v[beta_key[g]] <= 0)
      return ew_fail(err, EW_ERR_CATALOGUE, path, e->line[beta_key[g]],
                     "%s must be > 0 K", param_keys[beta_key[g]]);
  }
  /* one sign convention for a_v in the whole catalogue: mixing them would silently swap
   * the direction of the hydrostatic valence shift (strain.h) */
  if (e->have[EW_P_AV] && e->v[EW_P_AV] > 0)
    return ew_fail(err, EW_ERR_CATALOGUE, path, e->line[EW_P_AV],
                   "a_v = %g eV > 0: this catalogue stores a_v with the sign of the tables of "
                   "Vurgaftman et al. 2001 (negative, GaAs -1.16 eV; the valence band then "
                   "moves down under hydrostatic compression, see src/strain.h)",
                   e->v[EW_P_AV]);
  return EW_OK;
}

static ew_status read_file(const char *path, entry *e, ew_error *err) {
  config_t cfg;
  config_init(&cfg);
  ew_status st = EW_OK;
  if (!config_read_file(&cfg, path)) {
    if (config_error_type(&cfg) == CONFIG_ERR_FILE_IO)
      st = ew_fail(err, EW_ERR_CATALOGUE, path, 0, "cannot read catalogue file");
    else
      st = ew_fail(err, EW_ERR_CATALOGUE, path, config_error_line(&cfg), "syntax error: %s",
                   config_error_text(&cfg) ? config_error_text(&cfg) : "?");
    config_destroy(&cfg);
    return st;
  }
  config_setting_t *root = config_root_setting(&cfg);
  e->path = dup_str(path);
  if (!e->path) {
    st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
    goto done;
  }
  static const char *const top_keys[] = {"name",   "kind",   "description", "params",
                                         "first",  "second", "x_is",        "bowing",
                                         "y_is",   "scheme", "binaries"};
  int n = config_setting_length(root);
  for (int k = 0; k < n; k++) {
    config_setting_t *s = config_setting_get_elem(root, (unsigned)k);
    const char *key = config_setting_name(s);
    int known = 0;
    for (size_t j = 0; j < sizeof top_keys / sizeof top_keys[0]; j++)
      if (strcmp(key, top_keys[j]) == 0) known = 1;
    if (!known) {
      const char *best = top_keys[0];
      int bd = INT_MAX;
      for (size_t j = 0; j < sizeof top_keys / sizeof top_keys[0]; j++) {
        int d = edit_distance(key, top_keys[j]);
        if (d < bd) {
          bd = d;
          best = top_keys[j];
        }
      }
      int p = key_index(key);
      if (p >= 0)
        st = ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "parameter '%s' must be inside params = { ... } (or bowing)", key);
      else
        st = ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "unknown setting '%s' (did you mean '%s'?)", key, best);
      goto done;
    }
  }
  char *kind = NULL;
  int kind_line = 0;
  if ((st = get_string(root, "name", 1, path, &e->name, &e->name_line, err))) goto done;
  if ((st = get_string(root, "kind", 1, path, &kind, &kind_line, err))) goto done;
  if (strcmp(kind, "binary") == 0) {
    e->kind = KIND_BINARY;
  } else if (strcmp(kind, "alloy") == 0) {
    e->kind = KIND_ALLOY;
  } else if (strcmp(kind, "quaternary") == 0) {
    e->kind = KIND_QUATERNARY;
  } else {
    st = ew_fail(err, EW_ERR_CATALOGUE, path, kind_line,
                 "kind must be \"binary\", \"alloy\" or \"quaternary\", not \"%s\"", kind);
    free(kind);
    goto done;
  }
  free(kind);
  e->is_alloy = e->kind != KIND_BINARY;
  if ((st = get_string(root, "description", e->kind != KIND_ALLOY, path, &e->description,
                       NULL, err)))
    goto done;

  static const char *const binary_only[] = {"params"};
  static const char *const alloy_only[] = {"first", "second", "x_is", "bowing"};
  static const char *const quaternary_only[] = {"y_is", "scheme", "binaries"};
  if (e->kind != KIND_QUATERNARY)
    for (size_t j = 0; j < sizeof quaternary_only / sizeof quaternary_only[0]; j++) {
      config_setting_t *s = config_setting_get_member(root, quaternary_only[j]);
      if (s) {
        st = ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "'%s' belongs to quaternaries (kind = \"quaternary\")",
                     quaternary_only[j]);
        goto done;
      }
    }
  if (e->kind == KIND_QUATERNARY) {
    static const char *const refused[] = {"params", "first", "second", "bowing"};
    for (size_t j = 0; j < sizeof refused / sizeof refused[0]; j++) {
      config_setting_t *s = config_setting_get_member(root, refused[j]);
      if (s) {
        st = ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "a quaternary takes its values from its corner binaries and the bowings "
                     "of the ternaries between them: '%s' is not allowed",
                     refused[j]);
        goto done;
      }
    }
    if ((st = get_string(root, "x_is", 1, path, &e->x_is, NULL, err))) goto done;
    if ((st = get_string(root, "y_is", 1, path, &e->y_is, NULL, err))) goto done;
    char *scheme = NULL;
    int scheme_line = 0;
    if ((st = get_string(root, "scheme", 1, path, &scheme, &scheme_line, err))) goto done;
    if (strcmp(scheme, "square") == 0) {
      e->scheme = SCHEME_SQUARE;
      e->n_corner = 4;
    } else if (strcmp(scheme, "triangle") == 0) {
      e->scheme = SCHEME_TRIANGLE;
      e->n_corner = 3;
    } else {
      st = ew_fail(err, EW_ERR_CATALOGUE, path, scheme_line,
                   "scheme must be \"square\" (A(x)B(1-x)C(y)D(1-y)) or \"triangle\" "
                   "(A(x)B(y)C(1-x-y)D), not \"%s\"",
                   scheme);
      free(scheme);
      goto done;
    }
    free(scheme);
    e->n_edge = e->scheme == SCHEME_SQUARE ? 4 : 3;
    config_setting_t *bl = config_setting_get_member(root, "binaries");
    if (!bl) {
      st = ew_fail(err, EW_ERR_CATALOGUE, path, 0, "missing required setting 'binaries'");
      goto done;
    }
    e->corners_line = line_of(bl);
    int nb = config_setting_length(bl);
    if (!(config_setting_is_array(bl) || config_setting_is_list(bl)) || nb != e->n_corner) {
      st = ew_fail(err, EW_ERR_CATALOGUE, path, e->corners_line,
                   "binaries must be an array of %d names: %s", e->n_corner,
                   e->scheme == SCHEME_SQUARE ? "[AC, AD, BC, BD] for A(x)B(1-x)C(y)D(1-y)"
                                              : "[AD, BD, CD] for A(x)B(y)C(1-x-y)D");
      goto done;
    }
    for (int k = 0; k < nb; k++) {
      const char *t = config_setting_get_string_elem(bl, (unsigned)k);
      if (!t || !t[0]) {
        st = ew_fail(err, EW_ERR_CATALOGUE, path, e->corners_line,
                     "binaries[%d] must be a material name", k);
        goto done;
      }
      if (!(e->corner[k] = dup_str(t))) {
        st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
        goto done;
      }
    }
  } else if (e->is_alloy) {
    config_setting_t *s = config_setting_get_member(root, binary_only[0]);
    if (s) {
      st = ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                   "an alloy takes its parameters from its end binaries: use bowing = { ... }");
      goto done;
    }
    if ((st = get_string(root, "first", 1, path, &e->first, &e->first_line, err))) goto done;
    if ((st = get_string(root, "second", 1, path, &e->second, &e->second_line, err)))
      goto done;
    if ((st = get_string(root, "x_is", 1, path, &e->x_is, NULL, err))) goto done;
    config_setting_t *b = config_setting_get_member(root, "bowing");
    if (b && (st = read_params(b, 1, path, e, err))) goto done;
  } else {
    for (size_t j = 0; j < sizeof alloy_only / sizeof alloy_only[0]; j++) {
      config_setting_t *s = config_setting_get_member(root, alloy_only[j]);
      if (s) {
        st = ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "'%s' belongs to alloys, not to a binary", alloy_only[j]);
        goto done;
      }
    }
    config_setting_t *p = config_setting_get_member(root, "params");
    if (!p) {
      st = ew_fail(err, EW_ERR_CATALOGUE, path, 0, "binary without params = { ... }");
      goto done;
    }
    if ((st = read_params(p, 0, path, e, err))) goto done;
    if ((st = check_binary(e, path, line_of(p), err))) goto done;
  }
done:
  config_destroy(&cfg);
  return st;
}

/* ---- quaternaries: corners, bounding ternaries, source texts -------------------------- */

static const char quaternary_ref[] =
    "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), section on "
    "quaternary alloys, interpolation form as recalled (from memory)";

/* Find the ternary alloy whose end binaries are corners ia and ib (either order). */
static ew_status find_edge(const ew_catalogue *cat, entry *e, int k, ew_error *err) {
  size_t ia = e->i_corner[edge_a[e->scheme][k]], ib = e->i_corner[edge_b[e->scheme][k]];
  for (size_t j = 0; j < cat->n; j++) {
    const entry *t = &cat->e[j];
    if (t->kind != KIND_ALLOY) continue;
    if ((t->i_first == ia && t->i_second == ib) || (t->i_first == ib && t->i_second == ia)) {
      e->i_edge[k] = j;
      e->edge_flip[k] = t->i_first != ia;
      return EW_OK;
    }
  }
  return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->corners_line,
                 "quaternary '%s' needs the ternary alloy of %s and %s in the catalogue (for "
                 "its bowing): add materials/%s%s.cfg or similar with kind = \"alloy\"",
                 e->name, cat->e[ia].name, cat->e[ib].name, cat->e[ia].name, cat->e[ib].name);
}

static ew_status resolve_quaternary(ew_catalogue *cat, entry *e, ew_error *err) {
  for (int k = 0; k < e->n_corner; k++) {
    long j = ew_catalogue_find(cat, e->corner[k]);
    if (j < 0) {
      const char *near = ew_catalogue_nearest(cat, e->corner[k]);
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->corners_line,
                     "corner binary '%s' of quaternary '%s' is not in the catalogue (did you "
                     "mean '%s'?)",
                     e->corner[k], e->name, near ? near : "?");
    }
    if (cat->e[j].kind != KIND_BINARY)
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->corners_line,
                     "corner '%s' of quaternary '%s' must be a binary", e->corner[k], e->name);
    for (int m = 0; m < k; m++)
      if (e->i_corner[m] == (size_t)j)
        return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->corners_line,
                       "quaternary '%s' names the binary '%s' twice", e->name, e->corner[k]);
    e->i_corner[k] = (size_t)j;
  }
  for (int k = 0; k < e->n_edge; k++) {
    ew_status st = find_edge(cat, e, k, err);
    if (st) return st;
  }
  /* per-parameter source text: which binaries, which ternaries bow it */
  char corners[256] = "";
  for (int k = 0; k < e->n_corner; k++) {
    size_t l = strlen(corners);
    snprintf(corners + l, sizeof corners - l, "%s%s", k ? ", " : "", e->corner[k]);
  }
  const char *how = e->scheme == SCHEME_SQUARE ? "bilinear interpolation" : "linear interpolation";
  for (int p = 0; p < EW_P_COUNT; p++) {
    char buf[1024];
    if (bowing_forbidden((ew_param)p) && p != EW_P_GAMMA1 && p != EW_P_GAMMA2 &&
        p != EW_P_GAMMA3) {
      snprintf(buf, sizeof buf,
               "%s of %s, for display only: gaps at T use each corner binary's Varshni law "
               "(%s)",
               how, corners, quaternary_ref);
    } else {
      char bows[256] = "";
      for (int k = 0; k < e->n_edge; k++) {
        const entry *t = &cat->e[e->i_edge[k]];
        if (!t->have[p]) continue;
        size_t l = strlen(bows);
        snprintf(bows + l, sizeof bows - l, "%s%s", bows[0] ? ", " : "", t->name);
      }
      if (bows[0])
        snprintf(buf, sizeof buf, "%s of %s with the bowing of %s (%s)", how, corners, bows,
                 quaternary_ref);
      else
        snprintf(buf, sizeof buf, "%s of %s, no ternary bowing in this catalogue (%s)", how,
                 corners, quaternary_ref);
    }
    if (!(e->source[p] = dup_str(buf)))
      return ew_fail(err, EW_ERR_NOMEM, e->path, 0, "out of memory");
  }
  return EW_OK;
}

/* ---- loading a directory -------------------------------------------------------------- */

static int cmp_str(const void *a, const void *b) {
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static int cmp_entry(const void *a, const void *b) {
  const entry *x = a, *y = b;
  if (x->kind != y->kind) return x->kind - y->kind;
  return strcmp(x->name, y->name);
}

static int is_cfg_name(const char *n) {
  size_t l = strlen(n);
  return n[0] != '.' && l > 4 && strcmp(n + l - 4, ".cfg") == 0;
}

/* 1 if dir is a directory holding at least one *.cfg file. */
static int has_catalogue(const char *dir) {
  DIR *d = opendir(dir);
  if (!d) return 0;
  int found = 0;
  struct dirent *de;
  while (!found && (de = readdir(d)) != NULL) found = is_cfg_name(de->d_name);
  closedir(d);
  return found;
}

static ew_status load_dir(const char *dir, ew_catalogue **out, ew_error *err) {
  DIR *d = opendir(dir);
  if (!d)
    return ew_fail(err, EW_ERR_CATALOGUE, dir, 0, "cannot open material directory: %s",
                   strerror(errno));
  char **names = NULL;
  size_t nn = 0, cap = 0;
  ew_status st = EW_OK;
  struct dirent *de;
  while ((de = readdir(d)) != NULL) {
    if (!is_cfg_name(de->d_name)) continue;
    if (nn == cap) {
      size_t nc = cap ? 2 * cap : 32;
      char **t = realloc(names, nc * sizeof *t);
      if (!t) {
        st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
        break;
      }
      names = t;
      cap = nc;
    }
    if (!(names[nn] = dup_str(de->d_name))) {
      st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
      break;
    }
    nn++;
  }
  closedir(d);
  ew_catalogue *cat = NULL;
  if (st == EW_OK && nn == 0)
    st = ew_fail(err, EW_ERR_CATALOGUE, dir, 0, "no *.cfg material files in this directory");
  if (st == EW_OK && !(cat = calloc(1, sizeof *cat)))
    st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
  if (st == EW_OK && !(cat->e = calloc(nn, sizeof *cat->e)))
    st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
  if (st == EW_OK) {
    snprintf(cat->dir, sizeof cat->dir, "%s", dir);
    /* sorted so that error reports and the list do not depend on readdir order */
    qsort(names, nn, sizeof *names, cmp_str);
  }
  for (size_t i = 0; st == EW_OK && i < nn; i++) {
    char path[EW_PATH_MAX];
    if (snprintf(path, sizeof path, "%s/%s", dir, names[i]) >= (int)sizeof path) {
      st = ew_fail(err, EW_ERR_CATALOGUE, dir, 0, "path too long: %s", names[i]);
      break;
    }
    st = read_file(path, &cat->e[cat->n], err);
    cat->n++; /* counted even on failure so that free releases what was read */
    if (st) break;
    const entry *ne = &cat->e[cat->n - 1];
    for (size_t j = 0; j + 1 < cat->n; j++)
      if (strcmp(cat->e[j].name, ne->name) == 0) {
        st = ew_fail(err, EW_ERR_CATALOGUE, ne->path, ne->name_line,
                     "duplicate material name '%s' (already defined in %s:%d)", ne->name,
                     cat->e[j].path, cat->e[j].name_line);
        break;
      }
  }
  for (size_t i = 0; i < nn; i++) free(names[i]);
  free(names);
  if (st == EW_OK) qsort(cat->e, cat->n, sizeof *cat->e, cmp_entry);
  /* resolve alloy end binaries after sorting, since indices are kept */
  for (size_t i = 0; st == EW_OK && i < cat->n; i++) {
    entry *e = &cat->e[i];
    if (e->kind != KIND_ALLOY) continue;
    const char *end[2] = {e->first, e->second};
    int lines[2] = {e->first_line, e->second_line};
    size_t *idx[2] = {&e->i_first, &e->i_second};
    for (int k = 0; k < 2 && st == EW_OK; k++) {
      long j = ew_catalogue_find(cat, end[k]);
      if (j < 0) {
        const char *near = ew_catalogue_nearest(cat, end[k]);
        st = ew_fail(err, EW_ERR_CATALOGUE, e->path, lines[k],
                     "end binary '%s' of alloy '%s' is not in the catalogue (did you mean "
                     "'%s'?)",
                     end[k], e->name, near ? near : "?");
      } else if (cat->e[j].is_alloy) {
        st = ew_fail(err, EW_ERR_CATALOGUE, e->path, lines[k],
                     "end '%s' of alloy '%s' must be a binary, not an alloy", end[k], e->name);
      } else {
        *idx[k] = (size_t)j;
      }
    }
    if (st == EW_OK && e->i_first == e->i_second)
      st = ew_fail(err, EW_ERR_CATALOGUE, e->path, e->second_line,
                   "alloy '%s' has the same end binary twice", e->name);
  }
  for (size_t i = 0; st == EW_OK && i < cat->n; i++)
    if (cat->e[i].kind == KIND_QUATERNARY) st = resolve_quaternary(cat, &cat->e[i], err);
  if (st) {
    ew_catalogue_free(cat);
    return st;
  }
  *out = cat;
  return EW_OK;
}

/* dirname of the running executable, via /proc/self/exe (Linux); 0 when unknown. */
static int exe_dir(char *buf, size_t size) {
  ssize_t n = readlink("/proc/self/exe", buf, size - 1);
  if (n <= 0 || (size_t)n >= size - 1) return 0;
  buf[n] = '\0';
  char *slash = strrchr(buf, '/');
  if (!slash) return 0;
  if (slash == buf) slash[1] = '\0';
  else *slash = '\0';
  return 1;
}

ew_status ew_catalogue_load(const char *dir, ew_catalogue **out, ew_error *err) {
  if (!out) return ew_fail(err, EW_ERR_INPUT, NULL, 0, "ew_catalogue_load: out is NULL");
  *out = NULL;
  if (dir) return load_dir(dir, out, err);

  /* An explicit $EPIWELL_MATERIALS is the only place looked at: silently falling back to
   * an installed catalogue would hide a mistyped path. */
  const char *env = getenv("EPIWELL_MATERIALS");
  if (env && env[0]) {
    if (!has_catalogue(env))
      return ew_fail(err, EW_ERR_CATALOGUE, NULL, 0,
                     "no material catalogue: $EPIWELL_MATERIALS=%s is not a directory with "
                     "*.cfg files",
                     env);
    return load_dir(env, out, err);
  }
  char cand[5][EW_PATH_MAX];
  size_t nc = 0;
  char exe[EW_PATH_MAX];
  if (exe_dir(exe, sizeof exe)) {
    snprintf(cand[nc++], EW_PATH_MAX, "%.4000s/materials", exe);
    /* an installed tree moved as a whole: PREFIX/bin/epiwell → PREFIX/share/epiwell */
    snprintf(cand[nc++], EW_PATH_MAX, "%.4000s/../share/epiwell/materials", exe);
    /* build/epiwell → ./materials and build/sanitize/epiwell → ./materials: the parent and
       grandparent of the binary's directory */
    for (int up = 0; up < 2; up++) {
      char *slash = strrchr(exe, '/');
      if (slash && slash != exe) {
        *slash = '\0';
        snprintf(cand[nc++], EW_PATH_MAX, "%.4000s/materials", exe);
      } else {
        if (slash) snprintf(cand[nc++], EW_PATH_MAX, "/materials");
        break;
      }
    }
  }
  snprintf(cand[nc++], EW_PATH_MAX, "%s", EW_PREFIX "/share/epiwell/materials");
  for (size_t i = 0; i < nc; i++)
    if (has_catalogue(cand[i])) return load_dir(cand[i], out, err);
  char list[EW_PATH_MAX];
  list[0] = '\0';
  for (size_t i = 0; i < nc; i++) {
    size_t l = strlen(list);
    snprintf(list + l, sizeof list - l, "%s%s", i ? ", " : "", cand[i]);
  }
  return ew_fail(err, EW_ERR_CATALOGUE, NULL, 0,
                 "no material catalogue found (set $EPIWELL_MATERIALS); searched: %s", list);
}

/* ---- evaluation ----------------------------------------------------------------------- */

double ew_varshni(double Eg0_eV, double alpha_meV_K, double beta_K, double T_K) {
  double den = T_K + beta_K;
  if (den == 0.0) return Eg0_eV;
  return Eg0_eV - 1e-3 * alpha_meV_K * T_K * T_K / den;
}

/* Bowing coefficient C(t) = C0 + C1 t of parameter p of alloy e (0 without bowing). */
static double bow_coeff(const entry *e, int p, double t) {
  if (!e->have[p]) return 0.0;
  return e->v[p] + e->per_x[p] * t;
}

/* x (1 − x) C(x) for parameter p of alloy e (0 without bowing). */
static double bow_term(const entry *e, int p, double x) {
  return x * (1.0 - x) * bow_coeff(e, p, x);
}

/* Weights of a quaternary's corners, and per edge the composition along it (fraction of
 * the edge's first corner) and the weight of the edge ternary's bowing (materials.h). */
typedef struct {
  double w[4], t[4], coef[4];
} qgeom;

static void quat_geom(const entry *e, double x, double y, qgeom *g) {
  memset(g, 0, sizeof *g);
  if (e->scheme == SCHEME_SQUARE) {
    /* corners (1,1) (1,0) (0,1) (0,0); edges y = 1, y = 0 (along x), x = 1, x = 0 (along y):
     * −x(1−x)[y C_ABC + (1−y) C_ABD] − y(1−y)[x C_ACD + (1−x) C_BCD] */
    g->w[0] = x * y;
    g->w[1] = x * (1.0 - y);
    g->w[2] = (1.0 - x) * y;
    g->w[3] = (1.0 - x) * (1.0 - y);
    g->t[0] = g->t[1] = x;
    g->t[2] = g->t[3] = y;
    g->coef[0] = y * x * (1.0 - x);
    g->coef[1] = (1.0 - y) * x * (1.0 - x);
    g->coef[2] = x * y * (1.0 - y);
    g->coef[3] = (1.0 - x) * y * (1.0 - y);
  } else {
    /* corners A, B, C with weights x, y, z; −xy C_AB(u) − yz C_BC(v) − xz C_AC(w), each at
     * the orthogonal projection of (x, y, z) on its edge */
    double z = 1.0 - x - y;
    if (z < 0.0) z = 0.0;
    g->w[0] = x;
    g->w[1] = y;
    g->w[2] = z;
    g->t[0] = 0.5 * (1.0 + x - y);
    g->t[1] = 0.5 * (1.0 + y - z);
    g->t[2] = 0.5 * (1.0 + x - z);
    g->coef[0] = x * y;
    g->coef[1] = y * z;
    g->coef[2] = x * z;
  }
}

/* Value of a binary: parameter p (g < 0) or its gap g (0 Γ, 1 X, 2 L) at T by Varshni. */
static int binary_value(const entry *b, int p, int g, double T_K, double *out) {
  if (g < 0) {
    if (!b->have[p]) return 0;
    *out = b->v[p];
    return 1;
  }
  if (!b->have[gap_key[g]]) return 0;
  *out = ew_varshni(b->v[gap_key[g]], b->v[alpha_key[g]], b->v[beta_key[g]], T_K);
  return 1;
}

/* Parameter p (g < 0) or gap g at T of any entry at (x, y); 0 if unknown.  Ternaries:
 * Vegard + bowing; quaternaries: materials.h; gaps at T: end values at T, then the
 * T-independent bowing (Vurgaftman 2001, Sec. II). */
static int entry_value(const ew_catalogue *cat, const entry *e, int p, int g, double x,
                       double y, double T_K, double *out) {
  int bp = g < 0 ? p : (int)gap_key[g];
  if (e->kind == KIND_BINARY) return binary_value(e, p, g, T_K, out);
  if (e->kind == KIND_ALLOY) {
    double va, vb;
    if (!binary_value(&cat->e[e->i_first], p, g, T_K, &va) ||
        !binary_value(&cat->e[e->i_second], p, g, T_K, &vb))
      return 0;
    *out = x * va + (1.0 - x) * vb - bow_term(e, bp, x);
    return 1;
  }
  qgeom q;
  quat_geom(e, x, y, &q);
  double sum = 0.0;
  for (int k = 0; k < e->n_corner; k++) {
    double v;
    if (!binary_value(&cat->e[e->i_corner[k]], p, g, T_K, &v)) return 0;
    sum += q.w[k] * v;
  }
  for (int k = 0; k < e->n_edge; k++) {
    const entry *t = &cat->e[e->i_edge[k]];
    double tt = e->edge_flip[k] ? 1.0 - q.t[k] : q.t[k];
    sum -= q.coef[k] * bow_coeff(t, bp, tt);
  }
  *out = sum;
  return 1;
}

static ew_status unknown_name(const ew_catalogue *cat, const char *name, ew_error *err) {
  char hint[160];
  ew_catalogue_hint(cat, name, hint, sizeof hint);
  if (hint[0])
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "unknown material '%s' (%s)",
                   name ? name : "(null)", hint);
  return ew_fail(err, EW_ERR_INPUT, NULL, 0, "unknown material '%s'", name ? name : "(null)");
}

/* Find name and check (x, y, T).  with_y = 0: the caller has no y (old API), so a
 * quaternary is refused; with_y = 1: y is checked for quaternaries, ignored otherwise. */
static ew_status lookup(const ew_catalogue *cat, const char *name, double x, double y,
                        int with_y, double T_K, const entry **e, ew_error *err) {
  long i = ew_catalogue_find(cat, name);
  if (i < 0) return unknown_name(cat, name, err);
  *e = &cat->e[i];
  const entry *m = *e;
  if (m->kind == KIND_QUATERNARY && !with_y)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s is a quaternary, %s (x = %s, y = %s): it needs a composition y as well "
                   "as x",
                   name, m->description, m->x_is, m->y_is);
  if (m->is_alloy && !(x >= 0.0 && x <= 1.0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "composition x = %g of %s (%s) is outside [0, 1]", x, name, m->x_is);
  if (m->kind == KIND_QUATERNARY) {
    if (!(y >= 0.0 && y <= 1.0))
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "composition y = %g of %s (%s) is outside [0, 1]", y, name, m->y_is);
    if (m->scheme == SCHEME_TRIANGLE && x + y > 1.0 + 1e-12)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "x + y = %g of %s (%s) exceeds 1 (x = %s, y = %s)", x + y, name,
                     m->description, m->x_is, m->y_is);
  }
  if (!(T_K >= 0.0) || !isfinite(T_K))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "temperature %g K must be >= 0", T_K);
  return EW_OK;
}

static void params_of(const ew_catalogue *cat, const entry *e, double x, double y,
                      ew_params *out) {
  memset(out, 0, sizeof *out);
  for (int p = 0; p < EW_P_COUNT; p++) {
    double v;
    if (!entry_value(cat, e, p, -1, x, y, 0.0, &v)) continue;
    out->have[p] = 1;
    out->v[p] = v;
    if (e->kind != KIND_ALLOY) {
      out->source[p] = e->source[p];
    } else {
      int varshni = bowing_forbidden((ew_param)p) && p != EW_P_GAMMA1 && p != EW_P_GAMMA2 &&
                    p != EW_P_GAMMA3;
      out->source[p] =
          e->have[p] ? e->source[p] : varshni ? varshni_alloy_source : linear_source;
    }
  }
}

ew_status ew_material_params(const ew_catalogue *cat, const char *name, double x,
                             ew_params *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, 0.0, 0, 0.0, &e, err);
  if (st) return st;
  params_of(cat, e, x, 0.0, out);
  return EW_OK;
}

ew_status ew_material_params2(const ew_catalogue *cat, const char *name, double x, double y,
                              ew_params *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, y, 1, 0.0, &e, err);
  if (st) return st;
  params_of(cat, e, x, y, out);
  return EW_OK;
}

/* Line of parameter p for error messages: the binary's line, 0 for mixtures. */
static int param_line(const entry *e, int p) { return e->kind == KIND_BINARY ? e->line[p] : 0; }

/* Composition text for messages: "x = 0.3" or "x = 0.4, y = 0.9". */
static const char *comp_text(const entry *e, double x, double y, char *buf, size_t n) {
  if (e->kind == KIND_QUATERNARY) snprintf(buf, n, "x = %g, y = %g", x, y);
  else snprintf(buf, n, "x = %g", x);
  return buf;
}

/* Unstrained band parameters of entry e at (x, y, T); (x, y, T) already checked. */
static ew_status bands_at(const ew_catalogue *cat, const entry *e, double x, double y,
                          double T_K, const ew_params *p, ew_bands *out, ew_error *err) {
  const char *name = e->name;
  char ct[64];
  comp_text(e, x, y, ct, sizeof ct);
  static const ew_param need[] = {EW_P_EG_G, EW_P_VBO, EW_P_ME, EW_P_GAMMA1, EW_P_GAMMA2};
  for (size_t k = 0; k < sizeof need / sizeof need[0]; k++)
    if (!p->have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s lacks %s (needed for bands)",
                     name, param_keys[need[k]]);
  memset(out, 0, sizeof *out);
  double gaps[3];
  int have_gap[3];
  for (int g = 0; g < 3; g++) {
    have_gap[g] = entry_value(cat, e, -1, g, x, y, T_K, &gaps[g]);
    if (!have_gap[g]) gaps[g] = 0.0;
  }
  out->Eg_G_eV = gaps[0];
  out->Eg_X_eV = gaps[1];
  out->Eg_L_eV = gaps[2];
  out->lowest_valley = 0;
  for (int g = 1; g < 3; g++)
    if (have_gap[g] && gaps[g] < gaps[out->lowest_valley]) out->lowest_valley = g;
  if (!(out->Eg_G_eV > 0.0)) /* the requested (x, T) is outside the model's range: an input error */
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s at %s, T = %g K has a Γ gap of %g eV (must be > 0): outside the "
                   "range of the catalogue's Varshni and bowing parameters", name, ct, T_K,
                   out->Eg_G_eV);
  /* VBO is temperature independent; the gap's T shift goes entirely into Ec
   * (Vurgaftman 2001, Sec. II) */
  out->Ev_eV = p->v[EW_P_VBO];
  out->Ec_eV = out->Ev_eV + out->Eg_G_eV;
  out->Ev_hh_eV = out->Ev_eV; /* unstrained */
  out->Ev_lh_eV = out->Ev_eV;
  out->me = p->v[EW_P_ME];
  if (!(out->me > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, param_line(e, EW_P_ME),
                   "%s at %s has electron mass %g (must be > 0)", name, ct, out->me);
  /* Hole masses from the Luttinger parameters (J. M. Luttinger, Phys. Rev. 102, 1030
   * (1956)): along [001] 1/(γ1 ∓ 2γ2), in plane 1/(γ1 ± γ2) */
  double g1 = p->v[EW_P_GAMMA1], g2 = p->v[EW_P_GAMMA2];
  double den[4] = {g1 - 2.0 * g2, g1 + 2.0 * g2, g1 + g2, g1 - g2};
  static const char *const den_name[4] = {"γ1 − 2γ2", "γ1 + 2γ2", "γ1 + γ2", "γ1 − γ2"};
  for (int k = 0; k < 4; k++)
    if (!(den[k] > 0.0))
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, param_line(e, EW_P_GAMMA2),
                     "%s at %s: %s = %g <= 0 would give a non-positive hole mass", name, ct,
                     den_name[k], den[k]);
  out->mhh_z = 1.0 / den[0];
  out->mlh_z = 1.0 / den[1];
  out->mhh_par = 1.0 / den[2];
  out->mlh_par = 1.0 / den[3];
  out->eps_r = p->have[EW_P_EPS_S] ? p->v[EW_P_EPS_S] : 0.0;
  out->a_nm = p->have[EW_P_ALC] ? p->v[EW_P_ALC] / 10.0 : 0.0;
  out->Ep_eV = p->have[EW_P_EP] ? p->v[EW_P_EP] : 0.0;
  out->Dso_eV = p->have[EW_P_DSO] ? p->v[EW_P_DSO] : 0.0;
  out->c11_GPa = p->have[EW_P_C11] ? p->v[EW_P_C11] : 0.0;
  out->c12_GPa = p->have[EW_P_C12] ? p->v[EW_P_C12] : 0.0;
  out->critical_thickness_nm = INFINITY;
  return EW_OK;
}

/* Strain of a layer on a substrate of lattice constant a_sub_nm > 0 (strain.h), applied to
 * the unstrained bands b. */
static ew_status apply_strain(const entry *e, double x, double y, const ew_params *p,
                              double a_sub_nm, ew_bands *b, ew_error *err) {
  static const ew_param need[] = {EW_P_ALC, EW_P_C11, EW_P_C12, EW_P_AC,
                                  EW_P_AV,  EW_P_B,   EW_P_DSO};
  for (size_t k = 0; k < sizeof need / sizeof need[0]; k++)
    if (!p->have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0,
                     "%s lacks %s (needed for the strain on a substrate)", e->name,
                     param_keys[need[k]]);
  /* the catalogue's a_lattice is the 300 K value, used at every temperature */
  ew_strain_input in = {.a_nm = p->v[EW_P_ALC] / 10.0,
                        .c11_GPa = p->v[EW_P_C11],
                        .c12_GPa = p->v[EW_P_C12],
                        .a_c_eV = p->v[EW_P_AC],
                        .a_v_eV = p->v[EW_P_AV],
                        .b_eV = p->v[EW_P_B],
                        .Dso_eV = p->v[EW_P_DSO]};
  ew_strain_shifts sh;
  ew_error sub;
  memset(&sub, 0, sizeof sub);
  if (ew_strain_biaxial(&in, a_sub_nm, &sh, &sub))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s: %s", e->name, sub.message);
  b->eps_par = sh.eps_par;
  b->eps_perp = sh.eps_perp;
  b->dEc_strain_eV = sh.dEc_eV;
  b->dEhh_strain_eV = sh.dEhh_eV;
  b->dElh_strain_eV = sh.dElh_eV;
  b->Ec_eV += sh.dEc_eV;
  b->Ev_hh_eV += sh.dEhh_eV;
  b->Ev_lh_eV += sh.dElh_eV;
  double hc = ew_mb_critical_thickness_nm(in.a_nm, sh.eps_par,
                                          ew_strain_poisson(in.c11_GPa, in.c12_GPa), 2);
  b->critical_thickness_nm = isnan(hc) ? INFINITY : hc;
  if (!(b->Ec_eV > b->Ev_hh_eV && b->Ec_eV > b->Ev_lh_eV)) {
    char ct[64];
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s at %s on a substrate with a = %g nm: strain ε∥ = %.4g closes the gap "
                   "(Ec = %g, Ev_hh = %g, Ev_lh = %g eV)",
                   e->name, comp_text(e, x, y, ct, sizeof ct), a_sub_nm, sh.eps_par, b->Ec_eV,
                   b->Ev_hh_eV, b->Ev_lh_eV);
  }
  return EW_OK;
}

ew_status ew_material_bands(const ew_catalogue *cat, const char *name, double x, double T_K,
                            ew_bands *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, 0.0, 0, T_K, &e, err);
  if (st) return st;
  ew_params p;
  params_of(cat, e, x, 0.0, &p);
  return bands_at(cat, e, x, 0.0, T_K, &p, out, err);
}

ew_status ew_material_bands_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, ew_bands *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, y, 1, T_K, &e, err);
  if (st) return st;
  if (!isfinite(a_sub_nm))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "substrate lattice constant %g nm is not finite",
                   a_sub_nm);
  ew_params p;
  params_of(cat, e, x, y, &p);
  if ((st = bands_at(cat, e, x, y, T_K, &p, out, err))) return st;
  if (a_sub_nm <= 0.0) return EW_OK;
  return apply_strain(e, x, y, &p, a_sub_nm, out, err);
}

ew_status ew_lattice_nm(const ew_catalogue *cat, const char *name, double x, double y,
                        double *a_nm, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, y, 1, 0.0, &e, err);
  if (st) return st;
  double v;
  if (!entry_value(cat, e, EW_P_ALC, -1, x, y, 0.0, &v) || !(v > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s has no lattice constant a_lattice",
                   name);
  *a_nm = v / 10.0;
  return EW_OK;
}

/* ---- lattice matching ----------------------------------------------------------------- */

/* Relative mismatch (a(x, y) − a_sub)/a_sub of entry e; a_lattice known (checked). */
static double mismatch(const ew_catalogue *cat, const entry *e, double x, double y,
                       double a_sub_A) {
  double v = 0.0;
  entry_value(cat, e, EW_P_ALC, -1, x, y, 0.0, &v);
  return (v - a_sub_A) / a_sub_A;
}

/* Solve mismatch = 0 for the free variable u in [0, hi] with the other one fixed
 * (quaternary: along = 0 → u is x at y = fixed; along = 1 → u is y at x = fixed); ternary:
 * u is x.  Bisection (a(u) continuous); 1 when a root was found. */
static int match_free(const ew_catalogue *cat, const entry *e, int along, double fixed,
                      double hi, double a_sub_A, double *u) {
  double lo = 0.0;
#define MM(v) (along ? mismatch(cat, e, fixed, (v), a_sub_A) : mismatch(cat, e, (v), fixed, a_sub_A))
  double flo = MM(lo), fhi = MM(hi);
  if (flo == 0.0) {
    *u = lo;
    return 1;
  }
  if (fhi == 0.0) {
    *u = hi;
    return 1;
  }
  if ((flo > 0) == (fhi > 0)) return 0;
  for (int it = 0; it < 200 && hi - lo > 1e-16; it++) {
    double m = 0.5 * (lo + hi), fm = MM(m);
    if (fm == 0.0) {
      lo = hi = m;
      break;
    }
    if ((fm > 0) == (flo > 0)) lo = m, flo = fm;
    else hi = m;
  }
#undef MM
  *u = 0.5 * (lo + hi);
  return 1;
}

/* Point t of the lattice-matched line of quaternary e: square → t = y, x solved; triangle
 * → t = x, y solved in [0, 1 − x].  1 when matched. */
static int line_point(const ew_catalogue *cat, const entry *e, double t, double a_sub_A,
                      double *x, double *y) {
  double u;
  if (e->scheme == SCHEME_SQUARE) {
    if (!match_free(cat, e, 0, t, 1.0, a_sub_A, &u)) return 0;
    *x = u;
    *y = t;
  } else {
    if (!match_free(cat, e, 1, t, 1.0 - t, a_sub_A, &u)) return 0;
    *x = t;
    *y = u;
  }
  return 1;
}

ew_status ew_lattice_match(const ew_catalogue *cat, const char *name, const char *substrate,
                           double substrate_x, double target_gap_eV, double T_K, double *x,
                           double *y, ew_error *err) {
  const entry *e, *s;
  ew_status st = lookup(cat, name, 0.5, 0.0, 1, T_K, &e, err);
  if (st) return st;
  if (e->kind == KIND_BINARY)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s is a binary: it has no composition to lattice-match", name);
  if ((st = lookup(cat, substrate, substrate_x, 0.0, 0, 0.0, &s, err))) return st;
  double a_sub_A;
  if (!entry_value(cat, s, EW_P_ALC, -1, substrate_x, 0.0, 0.0, &a_sub_A) || !(a_sub_A > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, s->path, 0, "substrate %s has no a_lattice",
                   substrate);
  double probe;
  if (!entry_value(cat, e, EW_P_ALC, -1, 0.5, 0.0, 0.0, &probe))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s has no a_lattice", name);
  if (e->kind == KIND_ALLOY) {
    double u;
    if (!match_free(cat, e, 0, 0.0, 1.0, a_sub_A, &u))
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "no composition of %s is lattice-matched to %s (a = %g nm)", name,
                     substrate, a_sub_A / 10.0);
    *x = u;
    *y = 0.0;
    /* one composition only: a requested gap is either that composition's or unreachable */
    double g;
    if (isfinite(target_gap_eV) && entry_value(cat, e, -1, 0, u, 0.0, T_K, &g) &&
        fabs(g - target_gap_eV) > EW_MATCH_GAP_TOL_EV)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "%s is a ternary: lattice matching to %s fixes x = %.5f, whose Γ gap at "
                     "%g K is %.4f eV, not %g eV; a gap of choice needs a quaternary "
                     "(InGaAsP, AlGaInAs)",
                     name, substrate, u, T_K, g, target_gap_eV);
    return EW_OK;
  }
  if (!isfinite(target_gap_eV))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "quaternary %s: a target Γ gap is needed to fix (x, y) on the "
                   "lattice-matched line",
                   name);
  /* scan the line, bracket the gap root, bisect */
  enum { NS = 400 };
  double tprev = 0.0, fprev = 0.0, gmin = INFINITY, gmax = -INFINITY;
  int have_prev = 0, nroot = 0;
  double lo = 0.0, hi = 0.0, flo = 0.0, roots[4];
  for (int i = 0; i <= NS; i++) {
    double t = (double)i / NS, xx, yy, g;
    if (!line_point(cat, e, t, a_sub_A, &xx, &yy) ||
        !entry_value(cat, e, -1, 0, xx, yy, T_K, &g)) {
      have_prev = 0;
      continue;
    }
    if (g < gmin) gmin = g;
    if (g > gmax) gmax = g;
    double f = g - target_gap_eV;
    if (f == 0.0 || (have_prev && (f > 0) != (fprev > 0) && fprev != 0.0)) {
      if (nroot < 4) roots[nroot] = t;
      if (nroot == 0) {
        lo = f == 0.0 ? t : tprev;
        hi = t;
        flo = f == 0.0 ? 0.0 : fprev;
      }
      nroot++;
    }
    tprev = t;
    fprev = f;
    have_prev = 1;
  }
  if (!(gmin <= gmax))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "no composition of %s is lattice-matched to %s (a = %g nm)", name, substrate,
                   a_sub_A / 10.0);
  if (nroot == 0)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s lattice-matched to %s has Γ gaps from %.4f to %.4f eV at %g K: "
                   "%.4f eV is not reachable",
                   name, substrate, gmin, gmax, T_K, target_gap_eV);
  if (nroot > 1) {
    const char *tn = e->scheme == SCHEME_SQUARE ? "y" : "x";
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s lattice-matched to %s reaches a Γ gap of %.4f eV at %d compositions "
                   "(%s near %.3f and %.3f%s): ambiguous",
                   name, substrate, target_gap_eV, nroot, tn, roots[0], roots[1],
                   nroot > 2 ? ", ..." : "");
  }
  double xx = 0, yy = 0;
  if (flo != 0.0) {
    for (int it = 0; it < 200 && hi - lo > 1e-15; it++) {
      double m = 0.5 * (lo + hi), g;
      if (!line_point(cat, e, m, a_sub_A, &xx, &yy) ||
          !entry_value(cat, e, -1, 0, xx, yy, T_K, &g))
        return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                       "%s: the lattice-matched line is interrupted near %g", name, m);
      double f = g - target_gap_eV;
      if (f == 0.0) {
        lo = hi = m;
        break;
      }
      if ((f > 0) == (flo > 0)) lo = m, flo = f;
      else hi = m;
    }
  }
  double t = flo == 0.0 ? lo : 0.5 * (lo + hi);
  if (!line_point(cat, e, t, a_sub_A, &xx, &yy))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "%s: lattice match lost at the root", name);
  *x = xx;
  *y = yy;
  return EW_OK;
}

/* ---- printing ------------------------------------------------------------------------- */

/* Characters (UTF-8 code points) in s, for column alignment with "Å", "Γ". */
static int text_width(const char *s) {
  int w = 0;
  for (; *s; s++)
    if (((unsigned char)*s & 0xC0) != 0x80) w++;
  return w;
}

static void put_padded(FILE *out, const char *s, int width) {
  fputs(s, out);
  for (int w = text_width(s); w < width; w++) fputc(' ', out);
}

static void put_row(FILE *out, const char *label, double v, const char *unit) {
  put_padded(out, label, 12);
  char num[32];
  snprintf(num, sizeof num, "%.6g", v);
  put_padded(out, num, 15);
  fprintf(out, "%s\n", unit);
}

ew_status ew_material_print(const ew_catalogue *cat, const char *name, double x, double T_K,
                            FILE *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, 0.0, 0, T_K, &e, err);
  if (st) return st;
  return ew_material_print_on(cat, name, x, 0.0, T_K, 0.0, out, err);
}

ew_status ew_material_print_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, FILE *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, y, 1, T_K, &e, err);
  if (st) return st;
  ew_params p;
  ew_bands b;
  if ((st = ew_material_params2(cat, name, x, y, &p, err))) return st;
  if ((st = ew_material_bands_on(cat, name, x, y, T_K, a_sub_nm, &b, err))) return st;
  if (e->kind == KIND_QUATERNARY) {
    fprintf(out, "%s: quaternary %s, x = %s, y = %s\n", e->name, e->description, e->x_is,
            e->y_is);
    fprintf(out, "x = %g, y = %g, T = %g K\n", x, y, T_K);
    if (e->scheme == SCHEME_SQUARE)
      fprintf(out,
              "P = xy P(%s) + x(1-y) P(%s) + (1-x)y P(%s) + (1-x)(1-y) P(%s)\n"
              "    - x(1-x)[y C(%s) + (1-y) C(%s)] - y(1-y)[x C(%s) + (1-x) C(%s)]\n",
              e->corner[0], e->corner[1], e->corner[2], e->corner[3],
              cat->e[e->i_edge[0]].name, cat->e[e->i_edge[1]].name, cat->e[e->i_edge[2]].name,
              cat->e[e->i_edge[3]].name);
    else
      fprintf(out,
              "P = x P(%s) + y P(%s) + z P(%s) - xy C(%s) - yz C(%s) - xz C(%s), z = 1 - x - y,\n"
              "    each C at the projection of (x, y, z) on its edge\n",
              e->corner[0], e->corner[1], e->corner[2], cat->e[e->i_edge[0]].name,
              cat->e[e->i_edge[1]].name, cat->e[e->i_edge[2]].name);
    fprintf(out, "interpolation: %s\n", quaternary_ref);
    fputs("ternary bowings from:", out);
    for (int k = 0; k < e->n_edge; k++)
      fprintf(out, "%s %s", k ? "," : "", cat->e[e->i_edge[k]].path);
    fputc('\n', out);
  } else if (e->is_alloy) {
    const entry *a = &cat->e[e->i_first], *c = &cat->e[e->i_second];
    fprintf(out, "%s: alloy of %s (x = 1) and %s (x = 0), x = %s\n", e->name, a->name,
            c->name, e->x_is);
    fprintf(out, "x = %g, T = %g K\n", x, T_K);
    fprintf(out, "P(x) = x P(%s) + (1 - x) P(%s) - x (1 - x) C(x), end values from %s, %s\n",
            a->name, c->name, a->path, c->path);
  } else {
    fprintf(out, "%s: binary, %s\n", e->name, e->description);
    fprintf(out, "T = %g K\n", T_K);
  }
  fprintf(out, "file: %s\n\n", e->path);
  fprintf(out, "parameters%s (gaps at 0 K)\n",
          e->kind == KIND_QUATERNARY ? " at (x, y)" : e->is_alloy ? " at x" : "");
  fputs("parameter   value          unit    source\n", out);
  for (int k = 0; k < EW_P_COUNT; k++) {
    if (!p.have[k]) continue;
    put_padded(out, param_keys[k], 12);
    char num[32];
    snprintf(num, sizeof num, "%.6g", p.v[k]);
    put_padded(out, num, 15);
    put_padded(out, param_units[k], 8);
    if (e->kind == KIND_ALLOY && e->have[k] && e->per_x[k] != 0.0)
      fprintf(out, "bowing C = %g + %g x: %s\n", e->v[k], e->per_x[k], p.source[k]);
    else if (e->kind == KIND_ALLOY && e->have[k])
      fprintf(out, "bowing C = %g: %s\n", e->v[k], p.source[k]);
    else
      fprintf(out, "%s\n", p.source[k] ? p.source[k] : "");
  }
  static const char *const valley[3] = {"Γ", "X", "L"};
  fprintf(out, "\nband parameters at T = %g K (gaps by Varshni%s; VBO independent of T)\n",
          T_K,
          e->kind == KIND_QUATERNARY ? " at the corner binaries, then bowing"
          : e->is_alloy              ? " at the end binaries, then bowing"
                                     : "");
  int strained = a_sub_nm > 0.0;
  if (strained)
    fprintf(out, "(Ec, Ev_hh, Ev_lh include the strain below; Ev and the gaps are the relaxed "
                 "material's)\n");
  struct {
    const char *label;
    double v;
    const char *unit;
    int show;
  } rows[] = {
      {"Eg_G(T)", b.Eg_G_eV, "eV", 1},
      {"Eg_X(T)", b.Eg_X_eV, "eV", b.Eg_X_eV != 0.0},
      {"Eg_L(T)", b.Eg_L_eV, "eV", b.Eg_L_eV != 0.0},
      {"Ec", b.Ec_eV, "eV", 1},
      {"Ev", b.Ev_eV, "eV", 1},
      {"Ev_hh", b.Ev_hh_eV, "eV", 1},
      {"Ev_lh", b.Ev_lh_eV, "eV", 1},
      {"me", b.me, "m0", 1},
      {"mhh_z", b.mhh_z, "m0", 1},
      {"mlh_z", b.mlh_z, "m0", 1},
      {"mhh_par", b.mhh_par, "m0", 1},
      {"mlh_par", b.mlh_par, "m0", 1},
      {"eps_r", b.eps_r, "-", b.eps_r != 0.0},
      {"a", b.a_nm, "nm", b.a_nm != 0.0},
      {"Ep", b.Ep_eV, "eV", b.Ep_eV != 0.0},
      {"Delta_so", b.Dso_eV, "eV", b.Dso_eV != 0.0},
      {"c11", b.c11_GPa, "GPa", b.c11_GPa != 0.0},
      {"c12", b.c12_GPa, "GPa", b.c12_GPa != 0.0},
  };
  for (size_t k = 0; k < sizeof rows / sizeof rows[0]; k++)
    if (rows[k].show) put_row(out, rows[k].label, rows[k].v, rows[k].unit);
  put_padded(out, "lowest", 12);
  fprintf(out, "%s valley%s\n", valley[b.lowest_valley], a_sub_nm > 0.0 ? " (unstrained gaps)" : "");
  if (!strained) return EW_OK;
  fprintf(out,
          "\nstrain: pseudomorphic on (001), substrate a = %g nm (lattice constants at 300 K)\n",
          a_sub_nm);
  fputs("eps_par = (a_sub - a)/a < 0 compressive; eps_perp = -2 (c12/c11) eps_par; "
        "dEc = a_c tr eps,\n"
        "dEv_hyd = -a_v tr eps (catalogue a_v < 0), shear Q = b (eps_perp - eps_par), "
        "dEhh = dEv_hyd - Q,\n"
        "dElh with the lh-so coupling (Bir-Pikus; Chuang 2009), see src/strain.h\n",
        out);
  put_row(out, "eps_par", b.eps_par, "-");
  put_row(out, "eps_perp", b.eps_perp, "-");
  put_row(out, "dEc", b.dEc_strain_eV, "eV");
  put_row(out, "dEhh", b.dEhh_strain_eV, "eV");
  put_row(out, "dElh", b.dElh_strain_eV, "eV");
  put_row(out, "Eg_hh", b.Ec_eV - b.Ev_hh_eV, "eV");
  put_row(out, "Eg_lh", b.Ec_eV - b.Ev_lh_eV, "eV");
  put_padded(out, "top", 12);
  fprintf(out, "%s\n", b.Ev_hh_eV >= b.Ev_lh_eV ? "heavy hole" : "light hole");
  if (isinf(b.critical_thickness_nm)) {
    put_padded(out, "h_c", 12);
    fputs("inf            nm      (Matthews-Blakeslee, buried layer)\n", out);
  } else {
    put_padded(out, "h_c", 12);
    char num[32];
    snprintf(num, sizeof num, "%.4g", b.critical_thickness_nm);
    put_padded(out, num, 15);
    fputs("nm      Matthews-Blakeslee (J. Cryst. Growth 27, 118 (1974)), layer buried "
          "between two interfaces\n",
          out);
  }
  return EW_OK;
}

void ew_catalogue_print(const ew_catalogue *cat, FILE *out) {
  if (!cat || !out) return;
  int w = 8, kw = 8;
  for (size_t i = 0; i < cat->n; i++) {
    int l = text_width(cat->e[i].name);
    if (l + 2 > w) w = l + 2;
    if (cat->e[i].kind == KIND_QUATERNARY) kw = 12;
  }
  fprintf(out, "materials in %s\n", cat->dir);
  for (size_t i = 0; i < cat->n; i++) {
    const entry *e = &cat->e[i];
    put_padded(out, e->name, w);
    put_padded(out, e->kind == KIND_QUATERNARY ? "quaternary" : e->is_alloy ? "alloy" : "binary",
               kw);
    if (e->kind == KIND_QUATERNARY) {
      fprintf(out, "%s: x = %s, y = %s (", e->description, e->x_is, e->y_is);
      for (int k = 0; k < e->n_corner; k++) fprintf(out, "%s%s", k ? ", " : "", e->corner[k]);
      fputs(")\n", out);
    } else if (e->is_alloy) {
      fprintf(out, "x = %s (%s at x = 1, %s at x = 0)\n", e->x_is, e->first, e->second);
    } else {
      fprintf(out, "%s\n", e->description);
    }
  }
}
