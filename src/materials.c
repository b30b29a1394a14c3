/* materials.c — the material catalogue: one libconfig file per material in a directory,
 * validated on load, interpolated in composition and evaluated at a temperature.
 *
 * Alloy rule (Vegard's law with bowing, as used throughout I. Vurgaftman, J. R. Meyer,
 * L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), Sec. II):
 *     P(x) = x P_first + (1 − x) P_second − x (1 − x) C(x),   C(x) = C0 + C1 x,
 * where x is the fraction of the first-named element and a missing bowing means C = 0.
 * Gaps at T follow the same review: each end binary's gap is taken at T (Varshni) and then
 * interpolated with a temperature-independent bowing.
 */
#include "materials.h"

#include "error.h"

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

typedef struct {
  char *name, *description, *x_is, *path;
  int is_alloy;
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
} entry;

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

const char *ew_catalogue_description(const ew_catalogue *cat, size_t i) {
  if (!cat || i >= cat->n) return NULL;
  const entry *e = &cat->e[i];
  return e->is_alloy ? e->x_is : e->description;
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
  static const char *const top_keys[] = {"name",   "kind",  "description", "params",
                                         "first",  "second", "x_is",       "bowing"};
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
    e->is_alloy = 0;
  } else if (strcmp(kind, "alloy") == 0) {
    e->is_alloy = 1;
  } else {
    st = ew_fail(err, EW_ERR_CATALOGUE, path, kind_line,
                 "kind must be \"binary\" or \"alloy\", not \"%s\"", kind);
    free(kind);
    goto done;
  }
  free(kind);
  if ((st = get_string(root, "description", !e->is_alloy, path, &e->description, NULL, err)))
    goto done;

  static const char *const binary_only[] = {"params"};
  static const char *const alloy_only[] = {"first", "second", "x_is", "bowing"};
  if (e->is_alloy) {
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

/* ---- loading a directory -------------------------------------------------------------- */

static int cmp_str(const void *a, const void *b) {
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static int cmp_entry(const void *a, const void *b) {
  const entry *x = a, *y = b;
  if (x->is_alloy != y->is_alloy) return x->is_alloy - y->is_alloy;
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
    if (!e->is_alloy) continue;
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

/* x (1 − x) C(x) for parameter p of alloy e (0 without bowing). */
static double bow_term(const entry *e, int p, double x) {
  if (!e->have[p]) return 0.0;
  return x * (1.0 - x) * (e->v[p] + e->per_x[p] * x);
}

static ew_status lookup(const ew_catalogue *cat, const char *name, double x, double T_K,
                        const entry **e, ew_error *err) {
  long i = ew_catalogue_find(cat, name);
  if (i < 0) {
    const char *near = ew_catalogue_nearest(cat, name);
    if (near)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                     "unknown material '%s' (did you mean '%s'?)", name ? name : "(null)",
                     near);
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "unknown material '%s'",
                   name ? name : "(null)");
  }
  *e = &cat->e[i];
  if ((*e)->is_alloy && !(x >= 0.0 && x <= 1.0))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "composition x = %g of %s (%s) is outside [0, 1]", x, name, (*e)->x_is);
  if (!(T_K >= 0.0) || !isfinite(T_K))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "temperature %g K must be >= 0", T_K);
  return EW_OK;
}

ew_status ew_material_params(const ew_catalogue *cat, const char *name, double x,
                             ew_params *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, 0.0, &e, err);
  if (st) return st;
  memset(out, 0, sizeof *out);
  if (!e->is_alloy) {
    for (int p = 0; p < EW_P_COUNT; p++) {
      out->have[p] = e->have[p];
      out->v[p] = e->have[p] ? e->v[p] : 0.0;
      out->source[p] = e->source[p];
    }
    return EW_OK;
  }
  const entry *a = &cat->e[e->i_first], *b = &cat->e[e->i_second];
  for (int p = 0; p < EW_P_COUNT; p++) {
    if (!a->have[p] || !b->have[p]) continue;
    out->have[p] = 1;
    out->v[p] = x * a->v[p] + (1.0 - x) * b->v[p] - bow_term(e, p, x);
    int varshni = bowing_forbidden((ew_param)p) && p != EW_P_GAMMA1 && p != EW_P_GAMMA2 &&
                  p != EW_P_GAMMA3;
    out->source[p] = e->have[p] ? e->source[p] : varshni ? varshni_alloy_source : linear_source;
  }
  return EW_OK;
}

/* Gap g (0 Γ, 1 X, 2 L) of entry e at (x, T); 0 if unknown. */
static int gap_at(const ew_catalogue *cat, const entry *e, int g, double x, double T_K,
                  double *out) {
  if (!e->is_alloy) {
    if (!e->have[gap_key[g]]) return 0;
    *out = ew_varshni(e->v[gap_key[g]], e->v[alpha_key[g]], e->v[beta_key[g]], T_K);
    return 1;
  }
  double ga, gb;
  if (!gap_at(cat, &cat->e[e->i_first], g, x, T_K, &ga) ||
      !gap_at(cat, &cat->e[e->i_second], g, x, T_K, &gb))
    return 0;
  /* Vurgaftman 2001, Sec. II: end-point gaps at T, temperature-independent bowing */
  *out = x * ga + (1.0 - x) * gb - bow_term(e, gap_key[g], x);
  return 1;
}

ew_status ew_material_bands(const ew_catalogue *cat, const char *name, double x, double T_K,
                            ew_bands *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, T_K, &e, err);
  if (st) return st;
  ew_params p;
  if ((st = ew_material_params(cat, name, x, &p, err))) return st;
  static const ew_param need[] = {EW_P_EG_G, EW_P_VBO, EW_P_ME, EW_P_GAMMA1, EW_P_GAMMA2};
  for (size_t k = 0; k < sizeof need / sizeof need[0]; k++)
    if (!p.have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s lacks %s (needed for bands)",
                     name, param_keys[need[k]]);
  memset(out, 0, sizeof *out);
  double gaps[3];
  int have_gap[3];
  for (int g = 0; g < 3; g++) {
    have_gap[g] = gap_at(cat, e, g, x, T_K, &gaps[g]);
    if (!have_gap[g]) gaps[g] = 0.0;
  }
  out->Eg_G_eV = gaps[0];
  out->Eg_X_eV = gaps[1];
  out->Eg_L_eV = gaps[2];
  out->lowest_valley = 0;
  for (int g = 1; g < 3; g++)
    if (have_gap[g] && gaps[g] < gaps[out->lowest_valley]) out->lowest_valley = g;
  if (!(out->Eg_G_eV > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0,
                   "%s at x = %g, T = %g K has a Γ gap of %g eV (must be > 0)", name, x, T_K,
                   out->Eg_G_eV);
  /* VBO is temperature independent; the gap's T shift goes entirely into Ec
   * (Vurgaftman 2001, Sec. II) */
  out->Ev_eV = p.v[EW_P_VBO];
  out->Ec_eV = out->Ev_eV + out->Eg_G_eV;
  out->Ev_hh_eV = out->Ev_eV; /* no strain yet */
  out->Ev_lh_eV = out->Ev_eV;
  out->me = p.v[EW_P_ME];
  if (!(out->me > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->is_alloy ? 0 : e->line[EW_P_ME],
                   "%s at x = %g has electron mass %g (must be > 0)", name, x, out->me);
  /* Hole masses from the Luttinger parameters (J. M. Luttinger, Phys. Rev. 102, 1030
   * (1956)): along [001] 1/(γ1 ∓ 2γ2), in plane 1/(γ1 ± γ2) */
  double g1 = p.v[EW_P_GAMMA1], g2 = p.v[EW_P_GAMMA2];
  double den[4] = {g1 - 2.0 * g2, g1 + 2.0 * g2, g1 + g2, g1 - g2};
  static const char *const den_name[4] = {"γ1 − 2γ2", "γ1 + 2γ2", "γ1 + γ2", "γ1 − γ2"};
  for (int k = 0; k < 4; k++)
    if (!(den[k] > 0.0))
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->is_alloy ? 0 : e->line[EW_P_GAMMA2],
                     "%s at x = %g: %s = %g <= 0 would give a non-positive hole mass", name,
                     x, den_name[k], den[k]);
  out->mhh_z = 1.0 / den[0];
  out->mlh_z = 1.0 / den[1];
  out->mhh_par = 1.0 / den[2];
  out->mlh_par = 1.0 / den[3];
  out->eps_r = p.have[EW_P_EPS_S] ? p.v[EW_P_EPS_S] : 0.0;
  out->a_nm = p.have[EW_P_ALC] ? p.v[EW_P_ALC] / 10.0 : 0.0;
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

ew_status ew_material_print(const ew_catalogue *cat, const char *name, double x, double T_K,
                            FILE *out, ew_error *err) {
  const entry *e;
  ew_status st = lookup(cat, name, x, T_K, &e, err);
  if (st) return st;
  ew_params p;
  ew_bands b;
  if ((st = ew_material_params(cat, name, x, &p, err))) return st;
  if ((st = ew_material_bands(cat, name, x, T_K, &b, err))) return st;
  if (e->is_alloy) {
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
  fprintf(out, "parameters%s (gaps at 0 K)\n", e->is_alloy ? " at x" : "");
  fputs("parameter   value          unit    source\n", out);
  for (int k = 0; k < EW_P_COUNT; k++) {
    if (!p.have[k]) continue;
    put_padded(out, param_keys[k], 12);
    char num[32];
    snprintf(num, sizeof num, "%.6g", p.v[k]);
    put_padded(out, num, 15);
    put_padded(out, param_units[k], 8);
    if (e->is_alloy && e->have[k] && e->per_x[k] != 0.0)
      fprintf(out, "bowing C = %g + %g x: %s\n", e->v[k], e->per_x[k], p.source[k]);
    else if (e->is_alloy && e->have[k])
      fprintf(out, "bowing C = %g: %s\n", e->v[k], p.source[k]);
    else
      fprintf(out, "%s\n", p.source[k] ? p.source[k] : "");
  }
  static const char *const valley[3] = {"Γ", "X", "L"};
  fprintf(out, "\nband parameters at T = %g K (gaps by Varshni%s; VBO independent of T)\n",
          T_K, e->is_alloy ? " at the end binaries, then bowing" : "");
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
  };
  for (size_t k = 0; k < sizeof rows / sizeof rows[0]; k++) {
    if (!rows[k].show) continue;
    put_padded(out, rows[k].label, 12);
    char num[32];
    snprintf(num, sizeof num, "%.6g", rows[k].v);
    put_padded(out, num, 15);
    fprintf(out, "%s\n", rows[k].unit);
  }
  put_padded(out, "lowest", 12);
  fprintf(out, "%s valley\n", valley[b.lowest_valley]);
  return EW_OK;
}

void ew_catalogue_print(const ew_catalogue *cat, FILE *out) {
  if (!cat || !out) return;
  int w = 8;
  for (size_t i = 0; i < cat->n; i++) {
    int l = text_width(cat->e[i].name);
    if (l + 2 > w) w = l + 2;
  }
  fprintf(out, "materials in %s\n", cat->dir);
  for (size_t i = 0; i < cat->n; i++) {
    const entry *e = &cat->e[i];
    put_padded(out, e->name, w);
    put_padded(out, e->is_alloy ? "alloy" : "binary", 8);
    if (e->is_alloy)
      fprintf(out, "x = %s (%s at x = 1, %s at x = 0)\n", e->x_is, e->first, e->second);
    else
      fprintf(out, "%s\n", e->description);
  }
}
