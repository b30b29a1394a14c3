/* catalogue.c — the material catalogue: one libconfig file per material in a directory
 * (materials/NAME.cfg), validated on load (known keys, a source for every value, complete
 * Varshni sets, the end binaries of alloys, the corners and edge ternaries of quaternaries),
 * and the queries on names.  Evaluation at a composition is alloy.c; the parameter table is
 * in catalogue.h.
 */
/* dladdr (the library's own file, for the default catalogue search) is a GNU extension */
#define _GNU_SOURCE
#include "catalogue.h"

#include "error.h"
#include "helper_thread.h"
#include "plausible.h"
#include "text.h"

#include <ctype.h>
#include <dirent.h>
#include <dlfcn.h>
#include <errno.h>
#include <fcntl.h>
#include <libconfig.h>
#include <math.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#ifndef EW_PREFIX
#define EW_PREFIX "/usr/local"
#endif

/* ---- parameter table ------------------------------------------------------------------ */

static const char *const param_keys[EW_P_COUNT] = {
    "Eg_G",   "alpha_G", "beta_G",   "Eg_X",   "alpha_X", "beta_X",   "Eg_L",
    "alpha_L", "beta_L", "VBO",      "Delta_so", "me",    "gamma1",   "gamma2",
    "gamma3", "eps_static", "a_lattice", "Ep",  "F",       "a_c",      "a_v",
    "b_shear", "d_shear", "c11",     "c12",    "c44",  "mhh",     "mlh",
    "c_lattice", "c13",  "c33",      "Delta_cr", "A1",   "A2",      "A3",
    "A4",     "A5",      "A6",       "a1",     "a2",      "D1",       "D2",
    "D3",     "D4",      "Psp",      "e31",    "e33"};

static const char *const param_units[EW_P_COUNT] = {
    "eV", "meV/K", "K", "eV", "meV/K", "K", "eV", "meV/K", "K", "eV", "eV", "m0", "-",
    "-",  "-",     "-", "Å",  "eV",    "-", "eV", "eV",    "eV", "eV", "kbar", "kbar", "kbar",
    "m0", "m0",
    "Å",  "kbar", "kbar", "eV", "-", "-", "-", "-", "-", "-", "eV", "eV", "eV", "eV", "eV",
    "eV", "C/m2", "C/m2", "C/m2"};

const char *ew_param_key(ew_param p) {
  return (p >= 0 && p < EW_P_COUNT) ? param_keys[p] : "?";
}

const char *ew_param_unit(ew_param p) {
  return (p >= 0 && p < EW_P_COUNT) ? param_units[p] : "?";
}

const ew_param ew_gap_param[3] = {EW_P_EG_G, EW_P_EG_X, EW_P_EG_L};
const ew_param ew_alpha_param[3] = {EW_P_ALPHA_G, EW_P_ALPHA_X, EW_P_ALPHA_L};
const ew_param ew_beta_param[3] = {EW_P_BETA_G, EW_P_BETA_X, EW_P_BETA_L};

int ew_param_is_varshni(ew_param p) {
  return p == EW_P_ALPHA_G || p == EW_P_BETA_G || p == EW_P_ALPHA_X || p == EW_P_BETA_X ||
         p == EW_P_ALPHA_L || p == EW_P_BETA_L;
}

/* The Luttinger parameters are interpolated linearly (the brief's rule, following
 * Vurgaftman 2001, who give no γ bowings), and Varshni α, β are not used for alloys at all
 * (the end binaries' gaps are taken at T instead). */
int ew_param_is_hole_mass(ew_param p) { return p == EW_P_MHH || p == EW_P_MLH; }

/* The A parameters too: Vurgaftman & Meyer 2003 interpolate them linearly (from memory). */
int ew_param_no_bowing(ew_param p) {
  return p == EW_P_GAMMA1 || p == EW_P_GAMMA2 || p == EW_P_GAMMA3 || ew_param_is_varshni(p) ||
         (p >= EW_P_A1 && p <= EW_P_A6);
}

int ew_param_wurtzite_only(ew_param p) { return p >= EW_P_CLC && p <= EW_P_E33; }

int ew_param_zincblende_only(ew_param p) {
  return p == EW_P_GAMMA1 || p == EW_P_GAMMA2 || p == EW_P_GAMMA3 || p == EW_P_EP ||
         p == EW_P_F || p == EW_P_AC || p == EW_P_AV || p == EW_P_B || p == EW_P_D;
}

/* ---- catalogue ------------------------------------------------------------------------ */

/* Corner pairs of the edges of each scheme (see alloy.h). */
static const int edge_a[2][4] = {{0, 1, 0, 2}, {0, 1, 0, -1}};
static const int edge_b[2][4] = {{2, 3, 1, 3}, {1, 2, 2, -1}};

static char *dup_str(const char *s) {
  size_t n = strlen(s) + 1;
  char *d = malloc(n);
  if (d) memcpy(d, s, n);
  return d;
}

static void entry_clear(ew_cat_entry *e) {
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

/* " (did you mean 'NEAR'?)" for a message, or "" when the rule of text.h finds nothing
 * close enough. */
static const char *mean_text(const char *near, char *buf, size_t size) {
  if (!near) return "";
  snprintf(buf, size, " (did you mean '%s'?)", near);
  return buf;
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
  return i < 0 ? -1 : cat->e[i].kind == EW_KIND_QUATERNARY;
}

const char *ew_catalogue_description(const ew_catalogue *cat, size_t i) {
  if (!cat || i >= cat->n) return NULL;
  const ew_cat_entry *e = &cat->e[i];
  return e->kind == EW_KIND_ALLOY ? e->x_is : e->description;
}

const char *ew_catalogue_x_is(const ew_catalogue *cat, size_t i) {
  return (cat && i < cat->n) ? cat->e[i].x_is : NULL;
}

const char *ew_catalogue_y_is(const ew_catalogue *cat, size_t i) {
  return (cat && i < cat->n) ? cat->e[i].y_is : NULL;
}

const char *ew_catalogue_nearest(const ew_catalogue *cat, const char *name) {
  if (!cat || !name) return NULL;
  ew_suggestion sg;
  ew_suggest_init(&sg, name);
  for (size_t i = 0; i < cat->n; i++) ew_suggest_offer(&sg, cat->e[i].name);
  return ew_suggest_best(&sg);
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

/* ---- compositions written in the name ("Al0.3Ga0.7As") -------------------------------- */

/* Column of the periodic table of an element symbol that a III–V alloy mixes: 3, 5 or 0. */
static int iii_v_group(const char *sym) {
  static const char *const iii[] = {"B", "Al", "Ga", "In", "Tl"};
  static const char *const v[] = {"N", "P", "As", "Sb", "Bi"};
  for (size_t i = 0; i < sizeof iii / sizeof iii[0]; i++)
    if (!strcmp(sym, iii[i])) return 3;
  for (size_t i = 0; i < sizeof v / sizeof v[0]; i++)
    if (!strcmp(sym, v[i])) return 5;
  return 0;
}

/* The two element symbols of a binary's name ("GaAs" → "Ga", "As"); 0 when it is not two. */
static int binary_symbols(const char *name, char s[2][3]) {
  int n = 0;
  for (const char *p = name; *p; n++) {
    if (n == 2 || !isupper((unsigned char)*p)) return 0;
    s[n][0] = *p++;
    s[n][1] = islower((unsigned char)*p) ? *p++ : '\0';
    s[n][2] = '\0';
  }
  return n == 2;
}

/* The symbol of a that b lacks (a, b binaries sharing one element) into out; 0 if none. */
static int symbol_not_in(const char *a, const char *b, char out[3]) {
  char sa[2][3], sb[2][3];
  if (!binary_symbols(a, sa) || !binary_symbols(b, sb)) return 0;
  for (int i = 0; i < 2; i++)
    if (strcmp(sa[i], sb[0]) && strcmp(sa[i], sb[1])) return memcpy(out, sa[i], 3), 1;
  return 0;
}

/* The symbol two binaries share into out; 0 if none. */
static int symbol_shared(const char *a, const char *b, char out[3]) {
  char sa[2][3], sb[2][3];
  if (!binary_symbols(a, sa) || !binary_symbols(b, sb)) return 0;
  for (int i = 0; i < 2; i++)
    if (!strcmp(sa[i], sb[0]) || !strcmp(sa[i], sb[1])) return memcpy(out, sa[i], 3), 1;
  return 0;
}

/* The elements whose fractions the entry's x and y are (catalogue.h: a ternary's x is the
 * fraction of its first binary; a square quaternary [AC, AD, BC, BD] has x of A, y of C;
 * a triangle [AD, BD, CD] x of A, y of B).  1 on success. */
static int composition_symbols(const ew_cat_entry *e, char xs[3], char ys[3]) {
  ys[0] = '\0';
  if (e->kind == EW_KIND_ALLOY) return e->first && e->second && symbol_not_in(e->first, e->second, xs);
  if (e->kind != EW_KIND_QUATERNARY || e->n_corner < 3) return 0;
  if (e->scheme == EW_SCHEME_SQUARE)
    return e->n_corner == 4 && symbol_shared(e->corner[0], e->corner[1], xs) &&
           symbol_shared(e->corner[0], e->corner[2], ys);
  return symbol_not_in(e->corner[0], e->corner[1], xs) &&
         symbol_not_in(e->corner[1], e->corner[0], ys);
}

/* name as symbols with fractions: sym[i], frac[i] (−1 when not written); the count, 0 when it
 * is not of that form. */
static int formula_terms(const char *name, char sym[8][3], double frac[8]) {
  int n = 0;
  for (const char *p = name; *p; n++) {
    if (n == 8 || !isupper((unsigned char)*p)) return 0;
    sym[n][0] = *p++;
    sym[n][1] = islower((unsigned char)*p) ? *p++ : '\0';
    sym[n][2] = '\0';
    frac[n] = -1.0;
    if (isdigit((unsigned char)*p) || *p == '.') {
      char *end;
      frac[n] = strtod(p, &end);
      if (end == p || *end == 'e' || *end == 'E') return 0;
      p = end;
    }
  }
  return n;
}

/* Each group's fractions sum to 1 (a lone element of its group may go unwritten). */
static int check_groups(const char *name, int n, char sym[8][3], const double frac[8],
                        char *why, size_t size) {
  for (int g = 3; g <= 5; g += 2) {
    int count = 0, written = 0;
    double sum = 0.0;
    for (int i = 0; i < n; i++) {
      if (iii_v_group(sym[i]) != g) continue;
      count++;
      if (frac[i] >= 0) written++, sum += frac[i];
      if (frac[i] > 1.0)
        return snprintf(why, size, "'%s': the fraction of %s is above 1", name, sym[i]), 0;
    }
    if (count == 1 && (written == 0 || fabs(sum - 1.0) <= 1e-9)) continue;
    if (count < 2) return snprintf(why, size, "'%s' is not a III-V compound", name), 0;
    if (written != count)
      return snprintf(why, size, "'%s': write the fraction of every mixed group-%s element "
                      "(e.g. Al0.3Ga0.7As)", name, g == 3 ? "III" : "V"), 0;
    /* fractions are written to a few digits: 1e-6 accepts 0.333 + 0.667, not a typo */
    if (fabs(sum - 1.0) > 1e-6)
      return snprintf(why, size, "'%s': the group-%s fractions add up to %g, not 1", name,
                      g == 3 ? "III" : "V", sum), 0;
  }
  return 1;
}

long ew_catalogue_composition(const ew_catalogue *cat, const char *name, double *x, double *y,
                              char *why, size_t size) {
  char sym[8][3], key[8][3], b[8][3];
  double frac[8];
  if (size) why[0] = '\0';
  int n = cat && name ? formula_terms(name, sym, frac) : 0, any = 0;
  for (int i = 0; i < n; i++) any |= frac[i] >= 0;
  if (!any) return -1; /* no fraction written: an ordinary name */
  char bare[8 * 2 + 1] = "";
  for (int i = 0; i < n; i++) strcat(bare, sym[i]);
  int nk = element_key(bare, key);
  if (!check_groups(name, n, sym, frac, why, size)) return -2;
  for (size_t i = 0; i < cat->n; i++) {
    const ew_cat_entry *e = &cat->e[i];
    char xs[3], ys[3];
    if (!e->is_alloy || element_key(e->name, b) != nk || memcmp(key, b, sizeof(char[3]) * (size_t)nk))
      continue;
    if (!composition_symbols(e, xs, ys)) continue;
    for (int k = 0; k < n; k++) {
      if (!strcmp(sym[k], xs)) *x = frac[k];
      if (ys[0] && !strcmp(sym[k], ys)) *y = frac[k];
    }
    return (long)i;
  }
  snprintf(why, size, "'%s': the catalogue has no alloy of %s (`epiwell materials` lists it)",
           name, bare);
  return -2;
}

void ew_catalogue_hint(const ew_catalogue *cat, const char *name, char *buf, size_t size) {
  if (!size) return;
  buf[0] = '\0';
  long i = ew_catalogue_reordered(cat, name);
  if (i >= 0) {
    const ew_cat_entry *e = &cat->e[i];
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

/* Catalogue text reaches the table, `epiwell materials`, JSON, SVG and the report: the same
 * rule as names in stack files (printable UTF-8, text.h). */
static ew_status check_text(const char *t, const char *key, const char *path, int line,
                            ew_error *err) {
  char why[96];
  long bad = ew_text_check(t, why, sizeof why);
  if (bad < 0) return EW_OK;
  return ew_fail(err, EW_ERR_CATALOGUE, path, line, "'%s': %s at byte %ld; catalogue text "
                 "must be printable UTF-8", key, why, bad + 1);
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
  ew_status st = check_text(t, key, path, line_of(s), err);
  if (st) return st;
  *out = dup_str(t);
  if (!*out) return ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  return EW_OK;
}

/* The fields of one parameter group KEY = { value = ...; [per_x = ...;] source = "..."; }. */
static ew_status read_param_fields(const config_setting_t *ps, const char *key, int p,
                                   int bowing, const char *path, ew_cat_entry *e,
                                   int *have_value, ew_error *err) {
  int m = config_setting_length(ps);
  for (int j = 0; j < m; j++) {
    const config_setting_t *f = config_setting_get_elem(ps, (unsigned)j);
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
        *have_value = 1;
      } else {
        e->per_x[p] = v;
      }
    } else if (strcmp(fk, "source") == 0) {
      const char *t = config_setting_get_string(f);
      if (!t || !t[0])
        return ew_fail(err, EW_ERR_CATALOGUE, path, fl, "%s.source must be a non-empty string",
                       key);
      ew_status st = check_text(t, "source", path, fl, err);
      if (st) return st;
      e->source[p] = dup_str(t);
      if (!e->source[p]) return ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
    } else {
      return ew_fail(err, EW_ERR_CATALOGUE, path, fl,
                     "unknown field '%s' in %s (expected value%s, source)", fk, key,
                     bowing ? ", per_x" : "");
    }
  }
  return EW_OK;
}

/* issue 18: a binary's value within the plausibility range of its parameter (plausible.c);
 * an alloy's bowing C(x) = C0 + C1 x no wider than that range at x = 0 and 1 (a bowing
 * enters as x (1 - x) C, at most C/4).  Blamed on the value's line, exit 3. */
static ew_status check_range(const ew_cat_entry *e, ew_param p, int bowing, const char *path,
                             int line, ew_error *err) {
  double lo, hi;
  ew_param_range(p, &lo, &hi);
  const char *key = param_keys[p], *unit = param_units[p];
  if (!bowing) {
    if (e->v[p] >= lo && e->v[p] <= hi) return EW_OK;
    return ew_fail(err, EW_ERR_CATALOGUE, path, line, "%s = %g %s is outside the plausible "
                   "range [%g, %g] %s", key, e->v[p], unit, lo, hi, unit);
  }
  double w = hi - lo, c0 = e->v[p], c1 = c0 + e->per_x[p];
  if (fabs(c0) <= w && fabs(c1) <= w) return EW_OK;
  return ew_fail(err, EW_ERR_CATALOGUE, path, line, "bowing of %s (%g at x = 0, %g at x = 1) "
                 "is beyond +-%g %s, the width of its plausible range", key, c0, c1, w, unit);
}

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

/* Read the group "params" (binary, bowing = 0) or "bowing" (alloy, bowing = 1). */
static ew_status read_params(const config_setting_t *grp, int bowing, const char *path,
                             ew_cat_entry *e, ew_error *err) {
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
    char mean[96];
    if (p < 0)
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln, "unknown parameter '%s' in %s%s", key,
                     what, mean_text(ew_text_nearest(key, param_keys, EW_P_COUNT), mean,
                                     sizeof mean));
    if (e->wurtzite ? ew_param_zincblende_only((ew_param)p) : ew_param_wurtzite_only((ew_param)p))
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "'%s' belongs to %s materials: this entry is %s (structure = \"%s\")", key,
                     e->wurtzite ? "zinc-blende" : "wurtzite",
                     e->wurtzite ? "wurtzite" : "zinc blende",
                     e->wurtzite ? "wurtzite" : "zincblende");
    if (bowing && ew_param_no_bowing((ew_param)p))
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "no bowing allowed for '%s': %s", key,
                     (p == EW_P_GAMMA1 || p == EW_P_GAMMA2 || p == EW_P_GAMMA3)
                         ? "Luttinger parameters are interpolated linearly"
                         : (p >= EW_P_A1 && p <= EW_P_A6)
                         ? "the wurtzite A parameters are interpolated linearly"
                         : "alloy gaps at T use the end binaries' Varshni parameters");
    if (!bowing && ew_param_is_hole_mass((ew_param)p))
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "'%s' of a binary is 1/(gamma1 %s 2 gamma2): give the Luttinger "
                     "parameters (an alloy may bow %s)", key, p == EW_P_MHH ? "-" : "+", key);
    if (!config_setting_is_group(ps))
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "'%s' must be a group { value = ...; source = \"...\"; }", key);
    int have_value = 0;
    ew_status st = read_param_fields(ps, key, p, bowing, path, e, &have_value, err);
    if (st) return st;
    if (!have_value)
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln, "%s has no value", key);
    if (!e->source[p])
      return ew_fail(err, EW_ERR_CATALOGUE, path, ln,
                     "%s has no source (every value must say where it comes from)", key);
    e->have[p] = 1;
    e->line[p] = ln;
    if ((st = check_range(e, (ew_param)p, bowing, path, ln, err))) return st;
  }
  return EW_OK;
}

/* Checks on a binary's values that the band calculation relies on. */
static ew_status check_binary(const ew_cat_entry *e, const char *path, int root_line,
                              ew_error *err) {
  static const ew_param need_zb[] = {EW_P_EG_G, EW_P_VBO, EW_P_ME, EW_P_GAMMA1, EW_P_GAMMA2};
  /* a wurtzite binary needs what its band edges, masses and polarisation need
   * (strain_wurtzite.h, polarization.h) */
  static const ew_param need_wz[] = {EW_P_EG_G, EW_P_VBO, EW_P_ME,  EW_P_DSO, EW_P_DCR,
                                     EW_P_A1,   EW_P_A2,  EW_P_A3,  EW_P_A4,  EW_P_A5,
                                     EW_P_A6,   EW_P_PSP};
  const ew_param *need = e->wurtzite ? need_wz : need_zb;
  size_t n_need = e->wurtzite ? COUNT(need_wz) : COUNT(need_zb);
  for (size_t k = 0; k < n_need; k++)
    if (!e->have[need[k]])
      return ew_fail(err, EW_ERR_CATALOGUE, path, root_line,
                     "binary '%s' lacks %s (needed for the band edges and masses)", e->name,
                     param_keys[need[k]]);
  for (int g = 0; g < 3; g++) {
    int hg = e->have[ew_gap_param[g]], ha = e->have[ew_alpha_param[g]], hb = e->have[ew_beta_param[g]];
    if (hg && (!ha || !hb))
      return ew_fail(err, EW_ERR_CATALOGUE, path, e->line[ew_gap_param[g]],
                     "%s needs %s and %s (Varshni temperature dependence)",
                     param_keys[ew_gap_param[g]], param_keys[ew_alpha_param[g]], param_keys[ew_beta_param[g]]);
    if (!hg && (ha || hb))
      return ew_fail(err, EW_ERR_CATALOGUE, path,
                     e->line[ha ? ew_alpha_param[g] : ew_beta_param[g]],
                     "Varshni parameters given without %s", param_keys[ew_gap_param[g]]);
    /* β = 0 is the linear law Eg(T) = Eg(0) − αT, the form the review gives for some gaps
       (InP X; Vurgaftman 2001, from memory); α = β = 0 holds a gap constant */
    if (hb && e->v[ew_beta_param[g]] < 0)
      return ew_fail(err, EW_ERR_CATALOGUE, path, e->line[ew_beta_param[g]],
                     "%s must be >= 0 K (0: the linear law Eg - alpha T)",
                     param_keys[ew_beta_param[g]]);
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

/* The first of keys that root holds (*which = its key), or NULL. */
static const config_setting_t *first_present(const config_setting_t *root,
                                             const char *const *keys, size_t n,
                                             const char **which) {
  for (size_t j = 0; j < n; j++) {
    const config_setting_t *s = config_setting_get_member(root, keys[j]);
    if (s) {
      *which = keys[j];
      return s;
    }
  }
  return NULL;
}

static const char *const top_keys[] = {"name", "kind",   "description", "params",
                                       "first", "second", "x_is",        "bowing",
                                       "y_is", "scheme", "binaries",    "structure"};

/* Every top-level setting must be one of top_keys (parameters belong in a group). */
static ew_status check_top_keys(const config_setting_t *root, const char *path,
                                ew_error *err) {
  int n = config_setting_length(root);
  for (int k = 0; k < n; k++) {
    const config_setting_t *s = config_setting_get_elem(root, (unsigned)k);
    const char *key = config_setting_name(s);
    size_t j = 0;
    while (j < COUNT(top_keys) && strcmp(key, top_keys[j]) != 0) j++;
    if (j < COUNT(top_keys)) continue;
    char mean[96];
    if (key_index(key) >= 0)
      return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "parameter '%s' must be inside params = { ... } (or bowing)", key);
    return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s), "unknown setting '%s'%s", key,
                   mean_text(ew_text_nearest(key, top_keys, COUNT(top_keys)), mean,
                             sizeof mean));
  }
  return EW_OK;
}

/* name, kind and description (required except for ternary alloys). */
static ew_status read_kind(const config_setting_t *root, const char *path, ew_cat_entry *e,
                           ew_error *err) {
  char *kind = NULL;
  int kind_line = 0;
  ew_status st;
  if ((st = get_string(root, "name", 1, path, &e->name, &e->name_line, err))) return st;
  if ((st = get_string(root, "kind", 1, path, &kind, &kind_line, err))) return st;
  if (strcmp(kind, "binary") == 0) {
    e->kind = EW_KIND_BINARY;
  } else if (strcmp(kind, "alloy") == 0) {
    e->kind = EW_KIND_ALLOY;
  } else if (strcmp(kind, "quaternary") == 0) {
    e->kind = EW_KIND_QUATERNARY;
  } else {
    st = ew_fail(err, EW_ERR_CATALOGUE, path, kind_line,
                 "kind must be \"binary\", \"alloy\" or \"quaternary\", not \"%s\"", kind);
    free(kind);
    return st;
  }
  free(kind);
  e->is_alloy = e->kind != EW_KIND_BINARY;
  /* structure = "zincblende" (the default) | "wurtzite": which parameter set applies */
  if (config_setting_get_member(root, "structure")) {
    char *sv = NULL;
    if ((st = get_string(root, "structure", 1, path, &sv, &e->structure_line, err))) return st;
    if (strcmp(sv, "wurtzite") == 0) e->wurtzite = 1;
    else if (strcmp(sv, "zincblende") != 0)
      st = ew_fail(err, EW_ERR_CATALOGUE, path, e->structure_line,
                   "structure must be \"zincblende\" or \"wurtzite\", not \"%s\"", sv);
    free(sv);
    if (st) return st;
    if (e->wurtzite && e->kind == EW_KIND_QUATERNARY)
      return ew_fail(err, EW_ERR_CATALOGUE, path, e->structure_line,
                     "wurtzite quaternaries are not supported");
  }
  return get_string(root, "description", e->kind != EW_KIND_ALLOY, path, &e->description,
                    NULL, err);
}

/* scheme = "square" | "triangle" and the corner binaries of a quaternary. */
static ew_status read_corners(const config_setting_t *root, const char *path,
                              ew_cat_entry *e, ew_error *err) {
  char *scheme = NULL;
  int scheme_line = 0;
  ew_status st = get_string(root, "scheme", 1, path, &scheme, &scheme_line, err);
  if (st) return st;
  if (strcmp(scheme, "square") == 0) {
    e->scheme = EW_SCHEME_SQUARE;
    e->n_corner = 4;
  } else if (strcmp(scheme, "triangle") == 0) {
    e->scheme = EW_SCHEME_TRIANGLE;
    e->n_corner = 3;
  } else {
    st = ew_fail(err, EW_ERR_CATALOGUE, path, scheme_line,
                 "scheme must be \"square\" (A(x)B(1-x)C(y)D(1-y)) or \"triangle\" "
                 "(A(x)B(y)C(1-x-y)D), not \"%s\"",
                 scheme);
    free(scheme);
    return st;
  }
  free(scheme);
  e->n_edge = e->scheme == EW_SCHEME_SQUARE ? 4 : 3;
  const config_setting_t *bl = config_setting_get_member(root, "binaries");
  if (!bl) return ew_fail(err, EW_ERR_CATALOGUE, path, 0, "missing required setting 'binaries'");
  e->corners_line = line_of(bl);
  int nb = config_setting_length(bl);
  if (!(config_setting_is_array(bl) || config_setting_is_list(bl)) || nb != e->n_corner)
    return ew_fail(err, EW_ERR_CATALOGUE, path, e->corners_line,
                   "binaries must be an array of %d names: %s", e->n_corner,
                   e->scheme == EW_SCHEME_SQUARE ? "[AC, AD, BC, BD] for A(x)B(1-x)C(y)D(1-y)"
                                                 : "[AD, BD, CD] for A(x)B(y)C(1-x-y)D");
  for (int k = 0; k < nb; k++) {
    const char *t = config_setting_get_string_elem(bl, (unsigned)k);
    if (!t || !t[0])
      return ew_fail(err, EW_ERR_CATALOGUE, path, e->corners_line,
                     "binaries[%d] must be a material name", k);
    st = check_text(t, "binaries", path, e->corners_line, err);
    if (st) return st;
    if (!(e->corner[k] = dup_str(t))) return ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  }
  return EW_OK;
}

static ew_status read_quaternary(const config_setting_t *root, const char *path,
                                 ew_cat_entry *e, ew_error *err) {
  static const char *const refused[] = {"params", "first", "second", "bowing"};
  const char *which;
  const config_setting_t *s = first_present(root, refused, COUNT(refused), &which);
  if (s)
    return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                   "a quaternary takes its values from its corner binaries and the bowings "
                   "of the ternaries between them: '%s' is not allowed",
                   which);
  ew_status st;
  if ((st = get_string(root, "x_is", 1, path, &e->x_is, NULL, err))) return st;
  if ((st = get_string(root, "y_is", 1, path, &e->y_is, NULL, err))) return st;
  return read_corners(root, path, e, err);
}

static ew_status read_alloy(const config_setting_t *root, const char *path, ew_cat_entry *e,
                            ew_error *err) {
  const config_setting_t *s = config_setting_get_member(root, "params");
  if (s)
    return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                   "an alloy takes its parameters from its end binaries: use bowing = { ... }");
  ew_status st;
  if ((st = get_string(root, "first", 1, path, &e->first, &e->first_line, err))) return st;
  if ((st = get_string(root, "second", 1, path, &e->second, &e->second_line, err))) return st;
  if ((st = get_string(root, "x_is", 1, path, &e->x_is, NULL, err))) return st;
  const config_setting_t *b = config_setting_get_member(root, "bowing");
  return b ? read_params(b, 1, path, e, err) : EW_OK;
}

static ew_status read_binary(const config_setting_t *root, const char *path, ew_cat_entry *e,
                             ew_error *err) {
  static const char *const alloy_only[] = {"first", "second", "x_is", "bowing"};
  const char *which;
  const config_setting_t *s = first_present(root, alloy_only, COUNT(alloy_only), &which);
  if (s)
    return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                   "'%s' belongs to alloys, not to a binary", which);
  const config_setting_t *p = config_setting_get_member(root, "params");
  if (!p) return ew_fail(err, EW_ERR_CATALOGUE, path, 0, "binary without params = { ... }");
  ew_status st = read_params(p, 0, path, e, err);
  return st ? st : check_binary(e, path, line_of(p), err);
}

/* One parsed catalogue file into e. */
static ew_status read_entry(const config_setting_t *root, const char *path, ew_cat_entry *e,
                            ew_error *err) {
  ew_status st;
  if ((st = check_top_keys(root, path, err))) return st;
  if ((st = read_kind(root, path, e, err))) return st;
  if (e->kind != EW_KIND_QUATERNARY) {
    static const char *const quaternary_only[] = {"y_is", "scheme", "binaries"};
    const char *which;
    const config_setting_t *s = first_present(root, quaternary_only, COUNT(quaternary_only), &which);
    if (s)
      return ew_fail(err, EW_ERR_CATALOGUE, path, line_of(s),
                     "'%s' belongs to quaternaries (kind = \"quaternary\")", which);
  }
  if (e->kind == EW_KIND_QUATERNARY) return read_quaternary(root, path, e, err);
  if (e->kind == EW_KIND_ALLOY) return read_alloy(root, path, e, err);
  return read_binary(root, path, e, err);
}

/* The largest catalogue file is about 7 kB; a file this big is not one (and libconfig's
 * string scanner is quadratic: a 4 MB string took 7 s). */
#define MAX_CATALOGUE_BYTES (1L << 20)

/* The whole of a regular file into *buf (NUL-terminated, owned by the caller even on
 * failure), with the stack reader's safeguards (issue 18): a FIFO, device or directory named
 * *.cfg is refused without blocking (O_NONBLOCK, then fstat), the size is capped, a NUL byte
 * is binary data.  Read here rather than by config_read_file, which honours none of it. */
static ew_status read_bytes(const char *path, char **buf, ew_error *err) {
  *buf = NULL;
  int fd = open(path, O_RDONLY | O_NONBLOCK | O_NOCTTY | O_CLOEXEC);
  if (fd < 0)
    return ew_fail(err, EW_ERR_CATALOGUE, path, 0, "cannot read catalogue file: %s",
                   strerror(errno));
  struct stat sb;
  ew_status st = EW_OK;
  if (fstat(fd, &sb) != 0 || !S_ISREG(sb.st_mode))
    st = ew_fail(err, EW_ERR_CATALOGUE, path, 0, "not a regular file (a FIFO, device or "
                 "directory named *.cfg is not a catalogue file)");
  else if (sb.st_size > MAX_CATALOGUE_BYTES)
    st = ew_fail(err, EW_ERR_CATALOGUE, path, 0, "file is larger than %ld bytes; not a "
                 "catalogue file", MAX_CATALOGUE_BYTES);
  else if (!(*buf = malloc((size_t)sb.st_size + 1)))
    st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  size_t len = 0;
  while (!st && len < (size_t)sb.st_size) {
    ssize_t got = read(fd, *buf + len, (size_t)sb.st_size - len);
    if (got < 0 && errno == EINTR) continue;
    if (got < 0)
      st = ew_fail(err, EW_ERR_CATALOGUE, path, 0, "cannot read catalogue file: %s",
                   strerror(errno));
    if (got <= 0) break; /* shrank while read: what was there */
    len += (size_t)got;
  }
  close(fd);
  if (st) return st;
  (*buf)[len] = '\0';
  const char *nul = memchr(*buf, '\0', len);
  if (nul) {
    int line = 1;
    for (const char *p = *buf; p < nul; p++) line += *p == '\n';
    return ew_fail(err, EW_ERR_CATALOGUE, path, line, "binary data (NUL byte at offset %ld): "
                   "not a text catalogue file", (long)(nul - *buf));
  }
  return EW_OK;
}

static ew_status read_file(const char *path, ew_cat_entry *e, ew_error *err) {
  char *text = NULL;
  ew_status st = read_bytes(path, &text, err);
  if (st) {
    free(text);
    return st;
  }
  config_t cfg;
  config_init(&cfg);
  int inc = ew_text_include_line(text);
  if (inc > 0) {
    st = ew_fail(err, EW_ERR_CATALOGUE, path, inc, "'@include' is not supported in catalogue "
                 "files: every material is one self-contained file");
  } else if (!config_read_string(&cfg, text)) {
    st = ew_fail(err, EW_ERR_CATALOGUE, path, config_error_line(&cfg), "syntax error: %s",
                 config_error_text(&cfg) ? config_error_text(&cfg) : "?");
  } else if (!(e->path = dup_str(path))) {
    st = ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  } else {
    st = read_entry(config_root_setting(&cfg), path, e, err);
  }
  config_destroy(&cfg);
  free(text);
  return st;
}

/* ---- quaternaries: corners, bounding ternaries, source texts -------------------------- */

const char ew_quaternary_ref[] =
    "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), section on "
    "quaternary alloys, interpolation form as recalled (from memory)";

/* Find the ternary alloy whose end binaries are corners ia and ib (either order). */
static ew_status find_edge(const ew_catalogue *cat, ew_cat_entry *e, int k, ew_error *err) {
  size_t ia = e->i_corner[edge_a[e->scheme][k]], ib = e->i_corner[edge_b[e->scheme][k]];
  for (size_t j = 0; j < cat->n; j++) {
    const ew_cat_entry *t = &cat->e[j];
    if (t->kind != EW_KIND_ALLOY) continue;
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

static ew_status resolve_quaternary(ew_catalogue *cat, ew_cat_entry *e, ew_error *err) {
  for (int k = 0; k < e->n_corner; k++) {
    long j = ew_catalogue_find(cat, e->corner[k]);
    if (j < 0) {
      char mean[96];
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->corners_line,
                     "corner binary '%s' of quaternary '%s' is not in the catalogue%s",
                     e->corner[k], e->name,
                     mean_text(ew_catalogue_nearest(cat, e->corner[k]), mean, sizeof mean));
    }
    if (cat->e[j].kind != EW_KIND_BINARY)
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
  const char *how = e->scheme == EW_SCHEME_SQUARE ? "bilinear interpolation" : "linear interpolation";
  for (int p = 0; p < EW_P_COUNT; p++) {
    char buf[1024];
    if (ew_param_is_varshni((ew_param)p)) {
      snprintf(buf, sizeof buf,
               "%s of %s, for display only: gaps at T use each corner binary's Varshni law "
               "(%s)",
               how, corners, ew_quaternary_ref);
    } else {
      char bows[256] = "";
      for (int k = 0; k < e->n_edge; k++) {
        const ew_cat_entry *t = &cat->e[e->i_edge[k]];
        if (!t->have[p]) continue;
        size_t l = strlen(bows);
        snprintf(bows + l, sizeof bows - l, "%s%s", bows[0] ? ", " : "", t->name);
      }
      if (bows[0])
        snprintf(buf, sizeof buf, "%s of %s with the bowing of %s (%s)", how, corners, bows,
                 ew_quaternary_ref);
      else
        snprintf(buf, sizeof buf, "%s of %s, no ternary bowing in this catalogue (%s)", how,
                 corners, ew_quaternary_ref);
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
  const ew_cat_entry *x = a, *y = b;
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

/* The *.cfg file names of dir, sorted (so that error reports and the list do not depend on
 * readdir order); *names is owned by the caller even on failure. */
static ew_status list_cfg_files(const char *dir, char ***names, size_t *nn, ew_error *err) {
  DIR *d = opendir(dir);
  if (!d)
    return ew_fail(err, EW_ERR_CATALOGUE, dir, 0, "cannot open material directory: %s",
                   strerror(errno));
  size_t cap = 0;
  ew_status st = EW_OK;
  struct dirent *de;
  while ((de = readdir(d)) != NULL) {
    if (!is_cfg_name(de->d_name)) continue;
    if (*nn == cap) {
      size_t nc = cap ? 2 * cap : 32;
      char **t = realloc(*names, nc * sizeof *t);
      if (!t) {
        st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
        break;
      }
      *names = t;
      cap = nc;
    }
    if (!((*names)[*nn] = dup_str(de->d_name))) {
      st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
      break;
    }
    (*nn)++;
  }
  closedir(d);
  if (st == EW_OK && *nn == 0)
    st = ew_fail(err, EW_ERR_CATALOGUE, dir, 0, "no *.cfg material files in this directory");
  if (st == EW_OK) qsort(*names, *nn, sizeof **names, cmp_str);
  return st;
}

/* Read every file into cat->e (room for nn entries); names must be unique. */
/* The files of a directory as a queue that the threads of read_files draw from: each file's
 * entry, status and error are its own, so that the files can be parsed on two threads and
 * judged afterwards in name order. */
typedef struct {
  ew_catalogue *cat;
  const char *dir;
  char *const *names;
  size_t nn;
  atomic_size_t next;
  ew_status *st; /* [nn] */
  ew_error *err; /* [nn] */
} file_queue;

static void *drain_files(void *arg) {
  file_queue *q = arg;
  for (size_t i; (i = atomic_fetch_add(&q->next, 1)) < q->nn;) {
    char path[EW_CATALOGUE_PATH_MAX];
    if (snprintf(path, sizeof path, "%s/%s", q->dir, q->names[i]) >= (int)sizeof path)
      q->st[i] = ew_fail(&q->err[i], EW_ERR_CATALOGUE, q->dir, 0, "path too long: %s",
                         q->names[i]);
    else q->st[i] = read_file(path, &q->cat->e[i], &q->err[i]);
  }
  return NULL;
}

/* Every file of names into cat->e (all counted in cat->n, so that free releases what was
 * read); the first file in name order that fails, or repeats an earlier file's material name,
 * is the error, as if they had been read one by one. */
static ew_status read_files(ew_catalogue *cat, const char *dir, char *const *names, size_t nn,
                            ew_error *err) {
  file_queue q = {cat, dir, names, nn, 0, malloc((nn ? nn : 1) * sizeof *q.st),
                  malloc((nn ? nn : 1) * sizeof *q.err)};
  if (!q.st || !q.err) {
    free(q.st);
    free(q.err);
    return ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
  }
  atomic_init(&q.next, 0);
  ew_helper h = {0};
  if (ew_helper_count(nn < 2 ? (int)nn : 2) > 0) ew_helper_start(&h, drain_files, &q);
  drain_files(&q);
  ew_helper_join(&h);
  cat->n = nn;
  ew_status st = EW_OK;
  for (size_t i = 0; i < nn && st == EW_OK; i++) {
    if ((st = q.st[i]) != EW_OK) {
      if (err) *err = q.err[i];
      break;
    }
    const ew_cat_entry *ne = &cat->e[i];
    for (size_t j = 0; j < i && st == EW_OK; j++)
      if (strcmp(cat->e[j].name, ne->name) == 0)
        st = ew_fail(err, EW_ERR_CATALOGUE, ne->path, ne->name_line,
                     "duplicate material name '%s' (already defined in %s:%d)", ne->name,
                     cat->e[j].path, cat->e[j].name_line);
  }
  free(q.st);
  free(q.err);
  return st;
}

/* The end binaries of ternary alloy e: two distinct binaries of the catalogue. */
static ew_status resolve_alloy(const ew_catalogue *cat, ew_cat_entry *e, ew_error *err) {
  const char *end[2] = {e->first, e->second};
  int lines[2] = {e->first_line, e->second_line};
  size_t *idx[2] = {&e->i_first, &e->i_second};
  for (int k = 0; k < 2; k++) {
    long j = ew_catalogue_find(cat, end[k]);
    char mean[96];
    if (j < 0)
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, lines[k],
                     "end binary '%s' of alloy '%s' is not in the catalogue%s", end[k], e->name,
                     mean_text(ew_catalogue_nearest(cat, end[k]), mean, sizeof mean));
    if (cat->e[j].is_alloy)
      return ew_fail(err, EW_ERR_CATALOGUE, e->path, lines[k],
                     "end '%s' of alloy '%s' must be a binary, not an alloy", end[k], e->name);
    *idx[k] = (size_t)j;
  }
  if (e->i_first == e->i_second)
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, e->second_line,
                   "alloy '%s' has the same end binary twice", e->name);
  /* an alloy's structure (its own key, default zinc blende: its bowings were read against
   * that key set) must be its binaries' */
  int wa = cat->e[e->i_first].wurtzite, wb = cat->e[e->i_second].wurtzite;
  if (wa != wb || e->wurtzite != wa)
    return ew_fail(err, EW_ERR_CATALOGUE, e->path,
                   e->structure_line ? e->structure_line : e->second_line,
                   "alloy '%s' (%s) and its binaries must share one crystal structure: %s is "
                   "%s, %s is %s%s", e->name, e->wurtzite ? "wurtzite" : "zinc blende",
                   e->first, wa ? "wurtzite" : "zinc blende", e->second,
                   wb ? "wurtzite" : "zinc blende",
                   e->structure_line ? "" : " (give structure = \"wurtzite\" in the alloy)");
  return EW_OK;
}

static ew_status load_dir(const char *dir, ew_catalogue **out, ew_error *err) {
  char **names = NULL;
  size_t nn = 0;
  ew_catalogue *cat = NULL;
  ew_status st = list_cfg_files(dir, &names, &nn, err);
  if (st == EW_OK && !(cat = calloc(1, sizeof *cat)))
    st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
  if (st == EW_OK && !(cat->e = calloc(nn, sizeof *cat->e)))
    st = ew_fail(err, EW_ERR_NOMEM, dir, 0, "out of memory");
  if (st == EW_OK) {
    snprintf(cat->dir, sizeof cat->dir, "%s", dir);
    st = read_files(cat, dir, names, nn, err);
  }
  for (size_t i = 0; i < nn; i++) free(names[i]);
  free(names);
  if (st == EW_OK) qsort(cat->e, cat->n, sizeof *cat->e, cmp_entry);
  /* resolve alloys after sorting, since indices are kept; quaternaries need the alloys */
  for (size_t i = 0; st == EW_OK && i < cat->n; i++)
    if (cat->e[i].kind == EW_KIND_ALLOY) st = resolve_alloy(cat, &cat->e[i], err);
  for (size_t i = 0; st == EW_OK && i < cat->n; i++)
    if (cat->e[i].kind == EW_KIND_QUATERNARY) st = resolve_quaternary(cat, &cat->e[i], err);
  if (st) {
    ew_catalogue_free(cat);
    return st;
  }
  *out = cat;
  return EW_OK;
}

/* dirname of path in place; 0 when it has none. */
static int dir_of(char *buf) {
  char *slash = strrchr(buf, '/');
  if (!slash) return 0;
  if (slash == buf) slash[1] = '\0';
  else *slash = '\0';
  return 1;
}

/* dirname of the running executable, via /proc/self/exe (Linux); 0 when unknown. */
static int exe_dir(char *buf, size_t size) {
  ssize_t n = readlink("/proc/self/exe", buf, size - 1);
  if (n <= 0 || (size_t)n >= size - 1) return 0;
  buf[n] = '\0';
  return dir_of(buf);
}

/* dirname of the file this code was loaded from: libepiwell.so when a program (a Python
 * interpreter) loaded the shared library, the executable when the archive is linked in. */
static int lib_dir(char *buf, size_t size) {
  Dl_info info;
  if (!dladdr((const void *)param_keys, &info) || !info.dli_fname || /* any object of ours */
      info.dli_fname[0] != '/' || strlen(info.dli_fname) >= size)
    return 0;
  snprintf(buf, size, "%s", info.dli_fname);
  return dir_of(buf);
}

/* The places near a directory d holding the program or the library: d/materials,
 * d/../share/epiwell/materials (an installed tree moved as a whole: PREFIX/bin/epiwell or
 * PREFIX/lib/libepiwell.so → PREFIX/share/epiwell), and the materials of d's parent and
 * grandparent (build/epiwell, build/libepiwell.so, build/sanitize/epiwell → ./materials). */
static void near_dir(char *d, char (*cand)[EW_CATALOGUE_PATH_MAX], size_t *nc) {
  snprintf(cand[(*nc)++], EW_CATALOGUE_PATH_MAX, "%.4000s/materials", d);
  snprintf(cand[(*nc)++], EW_CATALOGUE_PATH_MAX, "%.4000s/../share/epiwell/materials", d);
  for (int up = 0; up < 2; up++) {
    char *slash = strrchr(d, '/');
    if (slash && slash != d) {
      *slash = '\0';
      snprintf(cand[(*nc)++], EW_CATALOGUE_PATH_MAX, "%.4000s/materials", d);
    } else {
      if (slash) snprintf(cand[(*nc)++], EW_CATALOGUE_PATH_MAX, "/materials");
      break;
    }
  }
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
  /* the library's places first (a script's interpreter is not next to the catalogue), then
   * the executable's when it lives elsewhere, then the install prefix */
  char cand[9][EW_CATALOGUE_PATH_MAX];
  size_t nc = 0;
  char exe[EW_CATALOGUE_PATH_MAX], lib[EW_CATALOGUE_PATH_MAX];
  int have_exe = exe_dir(exe, sizeof exe);
  int have_lib = lib_dir(lib, sizeof lib);
  if (have_lib && have_exe && !strcmp(lib, exe)) have_lib = 0;
  if (have_lib) near_dir(lib, cand, &nc);
  if (have_exe) near_dir(exe, cand, &nc);
  snprintf(cand[nc++], EW_CATALOGUE_PATH_MAX, "%s", EW_PREFIX "/share/epiwell/materials");
  for (size_t i = 0; i < nc; i++)
    if (has_catalogue(cand[i])) return load_dir(cand[i], out, err);
  char list[EW_CATALOGUE_PATH_MAX];
  list[0] = '\0';
  for (size_t i = 0; i < nc; i++) {
    size_t l = strlen(list);
    snprintf(list + l, sizeof list - l, "%s%.4000s", i ? ", " : "", cand[i]);
  }
  return ew_fail(err, EW_ERR_CATALOGUE, NULL, 0,
                 "no material catalogue found (set $EPIWELL_MATERIALS); searched: %s", list);
}
