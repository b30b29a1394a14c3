/* workflow.c — sweeps, inverse matching and growth tolerances on top of ew_solve (see
 * workflow.h for the contracts).
 *
 * libconfig is used here, as in stack.c, to re-write a stack with one key changed: that keeps
 * every present and future numeric key of the stack reader variable without touching it.
 * OpenMP pragmas are spelt through EW_OMP so that a build without -fopenmp is warning-free
 * (-Wunknown-pragmas is in -Wall) and simply serial. */
#include "workflow.h"

#include <errno.h>
#include <float.h>
#include <libconfig.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#ifdef _OPENMP
#include <omp.h>
#define EW_OMP(...) _Pragma(#__VA_ARGS__)
#else
#define EW_OMP(...)
#endif

#include "constants.h"
#include "error.h"
#include "grid.h"
#include "nonparabolic.h"
#include "plot.h"
#include "solve.h"
#include "spectra.h"
#include "stack.h"

static const double K_EVNM2 = EW_HB2M0_EVNM2; /* ħ²/2m0 = 0.0380998 eV nm² (CODATA 2018) */

struct ew_wf_model {
  const ew_catalogue *cat;
  ew_stack *nominal;
  char *text; /* canonical libconfig text of the stack (config_write of the file) */
  ew_options opt;
};

int ew_wf_have_openmp(void) {
#ifdef _OPENMP
  return 1;
#else
  return 0;
#endif
}

int ew_wf_threads(int requested) {
#ifdef _OPENMP
  return requested > 0 ? requested : omp_get_num_procs();
#else
  (void)requested;
  return 1;
#endif
}

/* ---- small helpers ------------------------------------------------------------------- */
static void jstr(FILE *out, const char *s) {
  fputc('"', out);
  for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
    if (*p == '"' || *p == '\\') fprintf(out, "\\%c", *p);
    else if (*p < 0x20) fprintf(out, "\\u%04x", *p);
    else fputc(*p, out);
  }
  fputc('"', out);
}

static void jnum(FILE *out, double v) {
  if (isfinite(v)) fprintf(out, "%.10g", v);
  else fputs("null", out);
}

static int parse_double(const char *s, const char *end, double *v) {
  char buf[64];
  size_t n = (size_t)(end - s);
  if (n == 0 || n >= sizeof buf) return 0;
  memcpy(buf, s, n);
  buf[n] = '\0';
  char *stop;
  errno = 0;
  *v = strtod(buf, &stop);
  return *stop == '\0' && errno == 0 && isfinite(*v);
}

static double now_s(void) {
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* ---- model ---------------------------------------------------------------------------- */
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
  if (rc != EW_OK) {
    ew_wf_model_free(m);
    return rc;
  }
  config_t cfg;
  config_init(&cfg);
  if (!config_read_file(&cfg, path)) {
    config_destroy(&cfg);
    ew_wf_model_free(m);
    return ew_fail(err, EW_ERR_IO, path, 0, "cannot re-read '%s' with libconfig", path);
  }
  size_t len = 0;
  FILE *f = open_memstream(&m->text, &len);
  if (f) {
    config_write(&cfg, f);
    if (fclose(f) != 0) {
      free(m->text);
      m->text = NULL;
    }
  }
  config_destroy(&cfg);
  if (!m->text) {
    ew_wf_model_free(m);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack text)");
  }
  *out = m;
  return EW_OK;
}

void ew_wf_model_free(ew_wf_model *m) {
  if (!m) return;
  ew_stack_free(m->nominal);
  free(m->text);
  free(m);
}

const ew_stack *ew_wf_model_stack(const ew_wf_model *m) { return m->nominal; }

/* Find the group and setting name a key refers to.  *group is NULL on error.
 *   KEY                 a top-level setting (temperature, field, ...)
 *   GROUP.KEY           a setting of a top-level group (surface.barrier)
 *   NAME.KEY            a setting of the layer or user material NAME (the longest name that
 *                       prefixes the key: names may hold dots)
 *   NAME.GROUP.KEY      a setting of one of its groups (well.grade.x_end, well.doping.donors) */
static ew_status locate(const ew_wf_model *m, config_t *cfg, const char *key, const char *opt,
                        config_setting_t **group, const char **name, ew_error *err) {
  *group = NULL;
  config_setting_t *root = config_root_setting(cfg);
  const char *dot = strrchr(key, '.');
  if (!key[0] || (dot && !dot[1]) || dot == key)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0,
                   "%s: '%s' is not a key; write LAYER.KEY (e.g. well.thickness) or a top-level "
                   "key (e.g. temperature)", opt, key);
  if (!dot) {
    *group = root;
    *name = key;
    return EW_OK;
  }
  const ew_stack *st = m->nominal;
  config_setting_t *best = NULL;
  size_t plen = 0;
  config_setting_t *list = config_setting_get_member(root, "layers");
  for (size_t k = 0; list && k < st->n_layers; k++) {
    size_t L = strlen(st->layers[k].name);
    if (L > plen && !strncmp(st->layers[k].name, key, L) && key[L] == '.' && key[L + 1]) {
      config_setting_t *g = config_setting_get_elem(list, (unsigned)k);
      if (g) best = g, plen = L;
    }
  }
  config_setting_t *mats = config_setting_get_member(root, "materials");
  for (int i = 0; mats && i < config_setting_length(mats); i++) {
    config_setting_t *g = config_setting_get_elem(mats, (unsigned)i);
    const char *nm = NULL;
    size_t L;
    if (g && config_setting_lookup_string(g, "name", &nm) && (L = strlen(nm)) > plen &&
        !strncmp(nm, key, L) && key[L] == '.' && key[L + 1])
      best = g, plen = L;
  }
  const char *rest = key;
  config_setting_t *owner = root;
  if (best) {
    owner = best;
    rest = key + plen + 1;
  }
  const char *sub = strchr(rest, '.');
  if (!sub && best) {
    *group = owner;
    *name = rest;
    return EW_OK;
  }
  if (sub && !strchr(sub + 1, '.')) { /* GROUP.KEY inside the owner */
    size_t glen = (size_t)(sub - rest);
    for (int i = 0; i < config_setting_length(owner); i++) {
      config_setting_t *g = config_setting_get_elem(owner, (unsigned)i);
      const char *gn = g ? config_setting_name(g) : NULL;
      if (gn && strlen(gn) == glen && !strncmp(gn, rest, glen) && config_setting_is_group(g)) {
        *group = g;
        *name = sub + 1;
        return EW_OK;
      }
    }
    if (best)
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: '%.*s' has no group '%.*s' in %s", opt,
                     key, (int)plen, key, (int)glen, rest, st->path);
  }
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

static int numeric_type(int t) {
  return t == CONFIG_TYPE_INT || t == CONFIG_TYPE_INT64 || t == CONFIG_TYPE_FLOAT;
}

ew_status ew_wf_key_check(const ew_wf_model *m, const char *key, const char *opt,
                          double *nominal, ew_error *err) {
  config_t cfg;
  config_init(&cfg);
  ew_status rc = EW_OK;
  *nominal = NAN;
  if (!config_read_string(&cfg, m->text)) {
    rc = ew_fail(err, EW_ERR_INPUT, m->nominal->path, 0, "cannot re-read the stack text");
  } else {
    config_setting_t *g;
    const char *name;
    rc = locate(m, &cfg, key, opt, &g, &name, err);
    if (rc == EW_OK) {
      config_setting_t *s = config_setting_get_member(g, name);
      if (s && !numeric_type(config_setting_type(s)))
        rc = ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: that setting is not a number", opt, key);
      else if (s && config_setting_type(s) == CONFIG_TYPE_FLOAT)
        *nominal = config_setting_get_float(s);
      else if (s && config_setting_type(s) == CONFIG_TYPE_INT64)
        *nominal = (double)config_setting_get_int64(s);
      else if (s)
        *nominal = config_setting_get_int(s);
    }
  }
  config_destroy(&cfg);
  return rc;
}

ew_status ew_wf_stack_at(const ew_wf_model *m, size_t nkeys, const char *const *keys,
                         const double *values, ew_stack **out, ew_error *err) {
  *out = NULL;
  config_t cfg;
  config_init(&cfg);
  ew_status rc = EW_OK;
  char *text = NULL;
  size_t len = 0;
  if (!config_read_string(&cfg, m->text)) {
    rc = ew_fail(err, EW_ERR_INPUT, m->nominal->path, 0, "cannot re-read the stack text");
    goto done;
  }
  for (size_t i = 0; i < nkeys; i++) {
    config_setting_t *g;
    const char *name;
    rc = locate(m, &cfg, keys[i], "--vary", &g, &name, err);
    if (rc != EW_OK) goto done;
    if (!isfinite(values[i])) {
      rc = ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: value is not finite", keys[i]);
      goto done;
    }
    config_setting_t *s = config_setting_get_member(g, name);
    if (s && !numeric_type(config_setting_type(s))) {
      rc = ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: that setting is not a number", keys[i]);
      goto done;
    }
    /* a layer's thickness is given one way: setting one form replaces the other */
    const char *other = !strcmp(name, "thickness") ? "thickness_ml"
                        : !strcmp(name, "thickness_ml") ? "thickness" : NULL;
    if (other && g != config_root_setting(&cfg) && config_setting_get_member(g, other))
      config_setting_remove(g, other);
    /* An integer literal cannot hold the new value: replace it by a float setting. */
    if (s && config_setting_type(s) != CONFIG_TYPE_FLOAT) {
      config_setting_remove(g, name);
      s = NULL;
    }
    if (!s) s = config_setting_add(g, name, CONFIG_TYPE_FLOAT);
    if (!s || !config_setting_set_float(s, values[i])) {
      rc = ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: '%s' cannot be added to the stack",
                   keys[i], name);
      goto done;
    }
  }
  {
    FILE *f = open_memstream(&text, &len);
    if (!f) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack text)");
      goto done;
    }
    config_write(&cfg, f);
    if (fclose(f) != 0 || !text) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (stack text)");
      goto done;
    }
  }
  {
    ew_error e2 = {0};
    rc = ew_stack_read_string(text, m->nominal->path, m->cat, out, &e2);
    if (rc != EW_OK && err) {
      /* The line numbers are those of the generated text, useless to the user: say which
       * values made the stack invalid instead. */
      char what[512];
      size_t used = 0;
      what[0] = '\0';
      for (size_t i = 0; i < nkeys && used + 1 < sizeof what; i++) {
        int w = snprintf(what + used, sizeof what - used, "%s%s = %.10g", i ? ", " : "", keys[i],
                         values[i]);
        if (w < 0) break;
        used += (size_t)w;
      }
      ew_fail(err, rc, m->nominal->path, 0, "with %s: %s", what, e2.message);
    }
  }
done:
  config_destroy(&cfg);
  free(text);
  return rc;
}

/* Solve the model at the given key values; both outputs are freed by the caller. */
static ew_status solve_at(const ew_wf_model *m, size_t nk, const char *const *keys,
                          const double *vals, ew_stack **st, ew_result **res, ew_error *err) {
  *res = NULL;
  ew_status rc = ew_wf_stack_at(m, nk, keys, vals, st, err);
  if (rc != EW_OK) return rc;
  ew_error e2 = {0};
  rc = ew_solve(*st, &m->opt, res, &e2);
  if (rc != EW_OK) {
    ew_stack_free(*st);
    *st = NULL;
    /* say at which point of a sweep or search the solver failed */
    char at[320];
    if (nk > 1) snprintf(at, sizeof at, "%s = %.10g, %s = %.10g", keys[0], vals[0], keys[1], vals[1]);
    else if (nk == 1) snprintf(at, sizeof at, "%s = %.10g", keys[0], vals[0]);
    else snprintf(at, sizeof at, "the nominal stack");
    ew_fail(err, rc, e2.file[0] ? e2.file : NULL, e2.line, "at %s: %s", at, e2.message);
  }
  return rc;
}

/* ---- ranges and quantities ------------------------------------------------------------ */
ew_status ew_wf_range_parse(const char *spec, int need_step, const char *opt, ew_wf_range *r,
                            ew_error *err) {
  memset(r, 0, sizeof *r);
  const char *eq = strchr(spec, '=');
  const char *form = need_step ? "KEY=FROM:TO:STEP (e.g. well.thickness=4:12:0.25)"
                               : "KEY=FROM:TO (e.g. well.thickness=3:12)";
  if (!eq || eq == spec || (size_t)(eq - spec) >= sizeof r->key)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants %s, got '%s'", opt, form, spec);
  memcpy(r->key, spec, (size_t)(eq - spec));
  r->key[eq - spec] = '\0';
  const char *a = eq + 1, *c1 = strchr(a, ':');
  const char *c2 = c1 ? strchr(c1 + 1, ':') : NULL;
  const char *end = a + strlen(a);
  if (!c1 || (c2 && strchr(c2 + 1, ':')) || (need_step && !c2) ||
      !parse_double(a, c1, &r->from) || !parse_double(c1 + 1, c2 ? c2 : end, &r->to) ||
      (c2 && !parse_double(c2 + 1, end, &r->step)))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants %s, got '%s'", opt, form, spec);
  if (c2 && !(r->step > 0))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: STEP must be > 0, got %g", opt, r->key,
                   r->step);
  if (!need_step && r->from == r->to)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: FROM and TO must differ", opt, r->key);
  if (c2 && fabs(r->to - r->from) / r->step > EW_WF_MAX_POINTS)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: %g values is more than the limit %d",
                   opt, r->key, fabs(r->to - r->from) / r->step, EW_WF_MAX_POINTS);
  return EW_OK;
}

size_t ew_wf_range_count(const ew_wf_range *r) {
  if (!(r->step > 0)) return r->from == r->to ? 1 : 2;
  /* 1e-9 of a step absorbs the rounding of (TO − FROM)/STEP, e.g. (12 − 4)/0.1 = 79.999… */
  return (size_t)floor(fabs(r->to - r->from) / r->step + 1e-9) + 1;
}

double ew_wf_range_value(const ew_wf_range *r, size_t i) {
  size_t n = ew_wf_range_count(r);
  if (!(r->step > 0)) return i == 0 ? r->from : r->to;
  double dir = r->to >= r->from ? 1.0 : -1.0;
  double v = r->from + dir * (double)i * r->step;
  if (i + 1 == n && fabs(v - r->to) <= 1e-9 * r->step) v = r->to;
  return v;
}

ew_status ew_wf_quantity_parse(const char *text, int allow_zero, const char *opt,
                               ew_wf_quantity *q, ew_error *err) {
  memset(q, 0, sizeof *q);
  char *stop;
  errno = 0;
  double v = strtod(text, &stop);
  const char *u = stop;
  while (*u == ' ') u++;
  static const struct {
    const char *unit;
    int wl;
    double scale;
  } units[] = {{"eV", 0, 1.0},       {"meV", 0, 1e-3},        {"nm", 1, 1.0},
               {"um", 1, 1e3},       {"\xc2\xb5m", 1, 1e3},   {"\xce\xbcm", 1, 1e3}};
  size_t k = 0, nu = sizeof units / sizeof units[0];
  while (k < nu && strcmp(u, units[k].unit) != 0) k++;
  if (stop == text || errno != 0 || !isfinite(v))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants a number with a unit (eV, meV, nm, um "
                   "or \xc2\xb5m), e.g. 9.0um or 1.548eV; got '%s'", opt, text);
  if (k == nu)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s '%s': unit must be eV, meV, nm, um or "
                   "\xc2\xb5m", opt, text);
  if (v < 0 || (!allow_zero && v == 0))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s '%s' must be %s", opt, text,
                   allow_zero ? ">= 0" : "> 0");
  q->value = v;
  q->is_wavelength = units[k].wl;
  q->scale = units[k].scale;
  if (q->is_wavelength) {
    q->nm = v * q->scale;
    q->eV = q->nm > 0 ? EW_HC_EVNM / q->nm : INFINITY;
  } else {
    q->eV = v * q->scale;
    q->nm = q->eV > 0 ? EW_HC_EVNM / q->eV : INFINITY;
  }
  return EW_OK;
}

/* ---- levels and lines by name --------------------------------------------------------- */
typedef struct {
  ew_band band;
  int n;
} wf_level;

static int parse_level(const char *s, size_t len, wf_level *lv) {
  static const char *const names[] = {"e", "hh", "lh"};
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    size_t nl = strlen(names[b]);
    if (len <= nl || strncmp(s, names[b], nl) != 0) continue;
    long n = 0;
    size_t i = nl;
    for (; i < len && s[i] >= '0' && s[i] <= '9' && n < 100000; i++) n = n * 10 + (s[i] - '0');
    if (i != len || n < 1 || n >= 100000 || s[nl] == '0') continue;
    lv->band = (ew_band)b;
    lv->n = (int)n;
    return 1;
  }
  return 0;
}

/* Index of level (band, n) in a result, or SIZE_MAX when it is not bound. */
static size_t level_index(const ew_result *r, ew_band band, int n) {
  size_t off = 0;
  for (int b = 0; b < (int)band; b++) off += r->band_count[b];
  return (size_t)n <= r->band_count[band] ? off + (size_t)n - 1 : SIZE_MAX;
}

static double level_energy(const ew_result *r, ew_band band, int n) {
  size_t i = level_index(r, band, n);
  return i == SIZE_MAX ? NAN : r->states[i].energy_eV;
}

/* Parse "A-B" into its two levels; *interband set.  0 on a malformed name. */
static int parse_line(const char *line, wf_level *a, wf_level *b, int *interband) {
  const char *dash = strchr(line, '-');
  if (!dash || strchr(dash + 1, '-')) return 0;
  if (!parse_level(line, (size_t)(dash - line), a) ||
      !parse_level(dash + 1, strlen(dash + 1), b))
    return 0;
  if (a->band == b->band) {
    *interband = 0;
    return a->n != b->n;
  }
  *interband = 1;
  return a->band == EW_BAND_E || b->band == EW_BAND_E;
}

ew_status ew_wf_line_energy(const ew_result *res, const char *line_in, double *energy_eV,
                            ew_error *err) {
  wf_level a, b;
  int ib;
  *energy_eV = NAN;
  /* "e1-hh1:pl": the photoluminescence peak, the interband line less its exciton binding */
  char line[64];
  snprintf(line, sizeof line, "%s", line_in);
  size_t len = strlen(line);
  int pl = len > 3 && !strcmp(line + len - 3, ":pl");
  if (pl) line[len - 3] = '\0';
  if (!parse_line(line, &a, &b, &ib) || (pl && !ib))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--line '%s': a line is two levels joined by '-', "
                   "of one band (intersubband, e.g. e1-e2, hh1-hh2) or an electron and a hole "
                   "level (interband, e.g. e1-hh1, e1-lh1); an interband line with ':pl' "
                   "(e1-hh1:pl) is its photoluminescence peak, exciton included", line_in);
  if (!res) return EW_OK;
  if (pl) {
    const wf_level *e = a.band == EW_BAND_E ? &a : &b, *h = a.band == EW_BAND_E ? &b : &a;
    size_t ie = level_index(res, e->band, e->n), ih = level_index(res, h->band, h->n);
    for (size_t i = 0; i < res->n_lines && ie != SIZE_MAX && ih != SIZE_MAX; i++)
      if (res->lines[i].kind == EW_LINE_INTERBAND && res->lines[i].upper == ie &&
          res->lines[i].lower == ih)
        *energy_eV = res->lines[i].pl_peak_eV;
    return EW_OK;
  }
  double ea = level_energy(res, a.band, a.n), eb = level_energy(res, b.band, b.n);
  /* as ew_line: intersubband |E_upper − E_lower|, interband E(e) − E(h) (README) */
  if (!ib) *energy_eV = fabs(ea - eb);
  else *energy_eV = a.band == EW_BAND_E ? ea - eb : eb - ea;
  return EW_OK;
}

/* ---- main lines and sweep columns ----------------------------------------------------- */
typedef struct {
  size_t nlev[EW_BAND_COUNT]; /* levels per band */
  size_t nib[2];              /* interband e_n–hh_n (nib[0]) and e_n–lh_n (nib[1]) for n <= */
} wf_cols;

typedef struct {
  char name[40];
  wf_level a, b; /* intersubband: a = b1, b = bj; interband: a = e_n, b = hole */
  int interband;
} wf_linedef;

/* Main lines for a column set, in column order: intersubband per band (b1-b2, b1-b3, …),
 * then interband by n (e1-hh1, e1-lh1, e2-hh2, …).  Returns the count (≤ cap written). */
static size_t main_lines(const wf_cols *c, wf_linedef *out, size_t cap) {
  size_t k = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t j = 2; j <= c->nlev[b]; j++, k++)
      if (k < cap) {
        wf_linedef *d = &out[k];
        d->a = (wf_level){(ew_band)b, 1};
        d->b = (wf_level){(ew_band)b, (int)j};
        d->interband = 0;
        snprintf(d->name, sizeof d->name, "%s1-%s%zu", ew_band_name((ew_band)b),
                 ew_band_name((ew_band)b), j);
      }
  for (size_t n = 1; n <= EW_WF_INTERBAND_MAX; n++)
    for (int h = 0; h < 2; h++)
      if (n <= c->nib[h]) {
        if (k < cap) {
          wf_linedef *d = &out[k];
          ew_band hb = h ? EW_BAND_LH : EW_BAND_HH;
          d->a = (wf_level){EW_BAND_E, (int)n};
          d->b = (wf_level){hb, (int)n};
          d->interband = 1;
          snprintf(d->name, sizeof d->name, "e%zu-%s%zu", n, ew_band_name(hb), n);
        }
        k++;
      }
  return k;
}

static wf_cols cols_of_counts(const size_t cnt[EW_BAND_COUNT]) {
  wf_cols c;
  for (int b = 0; b < EW_BAND_COUNT; b++) c.nlev[b] = cnt[b];
  for (int h = 0; h < 2; h++) {
    size_t m = cnt[EW_BAND_E] < cnt[1 + h] ? cnt[EW_BAND_E] : cnt[1 + h];
    c.nib[h] = m < EW_WF_INTERBAND_MAX ? m : EW_WF_INTERBAND_MAX;
  }
  return c;
}

/* The line of a result joining two state indices, or NULL. */
static const ew_line *find_line(const ew_result *r, size_t upper, size_t lower) {
  for (size_t i = 0; i < r->n_lines; i++)
    if (r->lines[i].upper == upper && r->lines[i].lower == lower) return &r->lines[i];
  return NULL;
}

/* Columns: keys, levels, then per main line three values. */
static size_t n_columns(const wf_cols *c, size_t nkeys) {
  size_t nl = main_lines(c, NULL, 0);
  return nkeys + c->nlev[0] + c->nlev[1] + c->nlev[2] + 3 * nl;
}

static void column_name(const wf_cols *c, const wf_linedef *lines, size_t nkeys,
                        const char *const *keys, size_t j, char *buf, size_t size) {
  if (j < nkeys) {
    snprintf(buf, size, "%s", keys[j]);
    return;
  }
  j -= nkeys;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    if (j < c->nlev[b]) {
      snprintf(buf, size, "%s%zu_eV", ew_band_name((ew_band)b), j + 1);
      return;
    }
    j -= c->nlev[b];
  }
  const wf_linedef *d = &lines[j / 3];
  static const char *const isb[] = {"eV", "um", "f"}, *const ib[] = {"eV", "nm", "overlap"};
  snprintf(buf, size, "%s_%s", d->name, (d->interband ? ib : isb)[j % 3]);
}

static void fill_row(const ew_result *r, const wf_cols *c, const wf_linedef *lines, size_t nl,
                     size_t nkeys, const double *vals, double *row) {
  size_t j = 0;
  for (size_t i = 0; i < nkeys; i++) row[j++] = vals[i];
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t n = 1; n <= c->nlev[b]; n++) row[j++] = level_energy(r, (ew_band)b, (int)n);
  for (size_t k = 0; k < nl; k++, j += 3) {
    const wf_linedef *d = &lines[k];
    size_t ia = level_index(r, d->a.band, d->a.n), ib = level_index(r, d->b.band, d->b.n);
    const ew_line *ln = NULL;
    if (ia != SIZE_MAX && ib != SIZE_MAX)
      ln = d->interband ? find_line(r, ia, ib) : find_line(r, ib, ia);
    if (!ln) {
      row[j] = row[j + 1] = row[j + 2] = NAN;
      continue;
    }
    row[j] = ln->energy_eV;
    row[j + 1] = d->interband ? ln->wavelength_nm : ln->wavelength_nm / 1e3;
    row[j + 2] = d->interband ? ln->overlap : ln->oscillator_strength;
  }
}

static void point_desc(char *buf, size_t size, size_t nk, const char *const *keys,
                       const double *vals) {
  if (nk > 1) snprintf(buf, size, "%s = %.10g, %s = %.10g", keys[0], vals[0], keys[1], vals[1]);
  else snprintf(buf, size, "%s = %.10g", keys[0], vals[0]);
}

/* The sub-grid fixed the columns; a point with more levels cannot be written. */
static ew_status check_counts(const ew_result *r, const wf_cols *c, size_t nk,
                              const char *const *keys, const double *vals, ew_error *err) {
  for (int b = 0; b < EW_BAND_COUNT; b++)
    if (r->band_count[b] > c->nlev[b]) {
      char at[320];
      point_desc(at, sizeof at, nk, keys, vals);
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "at %s %zu %s levels are bound but the sweep's "
                     "columns, fixed in advance on a sub-grid so that shards agree, hold %zu; "
                     "run again with --levels %zu (or more)", at, r->band_count[b],
                     ew_band_name((ew_band)b), c->nlev[b], r->band_count[b]);
    }
  return EW_OK;
}

/* ---- sweeps ---------------------------------------------------------------------------- */
#define WF_COLUMN_SAMPLES 9 /* values per axis solved first to fix the sweep's columns */
void ew_wf_sweep_opt_default(ew_wf_sweep_opt *o) {
  memset(o, 0, sizeof *o);
  o->header = -1;
}

typedef struct {
  const ew_wf_range *r;
  size_t nr;
  size_t count[2];
} wf_points;

static void point_values(const wf_points *P, size_t p, double *vals) {
  if (P->nr == 1) {
    vals[0] = ew_wf_range_value(&P->r[0], p);
  } else { /* outer loop the first range */
    vals[0] = ew_wf_range_value(&P->r[0], p / P->count[1]);
    vals[1] = ew_wf_range_value(&P->r[1], p % P->count[1]);
  }
}

/* First failure in point order: a parallel loop records the lowest failing index, so the
 * error reported does not depend on the thread count or scheduling. */
typedef struct {
  size_t index;
  ew_error err;
  ew_status rc;
} wf_fail;

static void fail_record(wf_fail *f, size_t p, ew_status rc, const ew_error *e) {
  EW_OMP(omp critical(ew_wf_fail))
  {
    if (p < f->index) {
      f->err = *e;
      f->rc = rc;
      EW_OMP(omp atomic write)
      f->index = p;
    }
  }
}

static size_t fail_index(const wf_fail *f) {
  size_t v;
  EW_OMP(omp atomic read)
  v = f->index;
  return v;
}

static ew_status fail_report(const wf_fail *f, ew_error *err) {
  if (err) *err = f->err;
  return f->rc;
}

static void write_csv_row(FILE *out, const double *row, size_t ncol) {
  for (size_t j = 0; j < ncol; j++) {
    if (j) fputc(',', out);
    if (isfinite(row[j])) fprintf(out, "%.10g", row[j]);
  }
  fputc('\n', out);
}

ew_status ew_wf_sweep(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                      const ew_wf_sweep_opt *oin, FILE *csv, FILE *json, ew_error *err) {
  ew_wf_sweep_opt o;
  if (oin) o = *oin;
  else ew_wf_sweep_opt_default(&o);
  if (nr < 1 || nr > 2)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary: give one or two ranges, got %zu", nr);
  const char *keys[2] = {ranges[0].key, nr > 1 ? ranges[1].key : NULL};
  for (size_t i = 0; i < nr; i++) {
    double nominal;
    ew_status rc = ew_wf_key_check(m, ranges[i].key, "--vary", &nominal, err);
    if (rc != EW_OK) return rc;
    if (!(ranges[i].step > 0))
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: a sweep needs FROM:TO:STEP",
                     ranges[i].key);
  }
  if (nr == 2 && !strcmp(keys[0], keys[1]))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s given twice", keys[0]);
  wf_points P = {ranges, nr, {ew_wf_range_count(&ranges[0]), nr > 1 ? ew_wf_range_count(&ranges[1]) : 1}};
  double total = (double)P.count[0] * (double)P.count[1];
  if (total > EW_WF_MAX_POINTS)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary: %.0f points is more than the limit %d",
                   total, EW_WF_MAX_POINTS);
  size_t np = P.count[0] * P.count[1];
  size_t sn = o.shard_n > 1 ? o.shard_n : 1, sk = o.shard_n > 1 ? o.shard_k : 1;
  if (sk < 1 || sk > sn)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--shard %zu/%zu: K must be in 1..N", sk, sn);
  int nt = ew_wf_threads(o.threads);

  /* 1. the column set: the levels bound on a fixed sub-grid of the sweep — up to
   *    WF_COLUMN_SAMPLES evenly spaced values per axis, both ends included (every value when
   *    the axis has no more) — at least o.min_levels per band.  Every shard solves the same
   *    sub-grid, so all shards and the whole sweep agree on the columns without seeing each
   *    other's points.  Level counts need not be monotonic (raising one barrier of an
   *    asymmetric well pushes a level out of the window the other barrier sets), hence a
   *    sub-grid rather than the end points; a point with more levels is refused
   *    (check_counts) and the message names the --levels that fixes it. */
  size_t sub[2][WF_COLUMN_SAMPLES], ns[2] = {1, 1};
  for (size_t a = 0; a < nr; a++) {
    size_t n = P.count[a], S = n < WF_COLUMN_SAMPLES ? n : WF_COLUMN_SAMPLES;
    ns[a] = 0;
    for (size_t q = 0; q < S; q++) {
      size_t idx = S > 1 ? (size_t)(((unsigned long long)q * (n - 1) + (S - 1) / 2) / (S - 1)) : 0;
      if (ns[a] == 0 || sub[a][ns[a] - 1] != idx) sub[a][ns[a]++] = idx;
    }
  }
  if (nr == 1) sub[1][0] = 0;
  size_t nc = ns[0] * ns[1];
  size_t corner[WF_COLUMN_SAMPLES * WF_COLUMN_SAMPLES];
  for (size_t q = 0; q < nc; q++) corner[q] = sub[0][q / ns[1]] * P.count[1] + sub[1][q % ns[1]];
  size_t ccount[WF_COLUMN_SAMPLES * WF_COLUMN_SAMPLES][EW_BAND_COUNT];
  wf_fail fl = {SIZE_MAX, {0}, EW_OK};
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t q = 0; q < nc; q++) {
    double vals[2];
    ew_error e = {0};
    ew_stack *st = NULL;
    ew_result *res = NULL;
    point_values(&P, corner[q], vals);
    ew_status rc = solve_at(m, nr, keys, vals, &st, &res, &e);
    if (rc == EW_OK)
      for (int b = 0; b < EW_BAND_COUNT; b++) ccount[q][b] = res->band_count[b];
    else
      fail_record(&fl, corner[q], rc, &e);
    ew_result_free(res);
    ew_stack_free(st);
  }
  if (fl.index != SIZE_MAX) return fail_report(&fl, err);
  size_t maxc[EW_BAND_COUNT];
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    maxc[b] = o.min_levels;
    for (size_t q = 0; q < nc; q++)
      if (ccount[q][b] > maxc[b]) maxc[b] = ccount[q][b];
  }
  wf_cols cols = cols_of_counts(maxc);

  size_t nl = main_lines(&cols, NULL, 0);
  wf_linedef *lines = malloc((nl ? nl : 1) * sizeof *lines);
  size_t ncol = n_columns(&cols, nr);
  char (*names)[64] = malloc(ncol * sizeof *names);
  /* contiguous split: part K holds points [(K−1)·P/N, K·P/N), so the parts concatenate */
  size_t lo = (size_t)((unsigned long long)np * (sk - 1) / sn);
  size_t hi = (size_t)((unsigned long long)np * sk / sn);
  const size_t chunk = 64 * (size_t)nt;
  double *rows = malloc(chunk * ncol * sizeof *rows);
  if (!lines || !names || !rows) {
    free(lines);
    free(names);
    free(rows);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep rows)");
  }
  main_lines(&cols, lines, nl);
  for (size_t j = 0; j < ncol; j++) column_name(&cols, lines, nr, keys, j, names[j], sizeof names[j]);
  ew_wf_table *tab = o.table;
  if (tab) {
    memset(tab, 0, sizeof *tab);
    snprintf(tab->stack, sizeof tab->stack, "%s", m->nominal->path);
    tab->nkeys = nr;
    tab->ncol = ncol;
    tab->names = malloc(ncol * sizeof *tab->names);
    tab->v = malloc(((hi - lo) ? (hi - lo) : 1) * ncol * sizeof *tab->v);
    if (!tab->names || !tab->v) {
      ew_wf_table_free(tab);
      free(lines);
      free(names);
      free(rows);
      return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep table of %zu points for "
                     "the picture)", hi - lo);
    }
    memcpy(tab->names, names, ncol * sizeof *names);
  }

  int header = o.header < 0 ? sk == 1 : o.header;
  if (csv && header) {
    for (size_t j = 0; j < ncol; j++) fprintf(csv, "%s%s", j ? "," : "", names[j]);
    fputc('\n', csv);
  }
  if (json) {
    fputs("{\"stack\":", json);
    jstr(json, m->nominal->path);
    fputs(",\"varied\":[", json);
    for (size_t i = 0; i < nr; i++) {
      if (i) fputc(',', json);
      jstr(json, keys[i]);
    }
    fprintf(json, "],\"points_total\":%zu,\"shard\":{\"k\":%zu,\"n\":%zu,\"first\":%zu,"
            "\"count\":%zu},\"columns\":[", np, sk, sn, lo, hi - lo);
    for (size_t j = 0; j < ncol; j++) {
      if (j) fputc(',', json);
      jstr(json, names[j]);
    }
    fputs("],\"points\":[", json);
  }

  /* 2. the shard's points, in chunks: rows computed in parallel, written in point order */
  size_t done = 0, todo = hi - lo;
  for (size_t c0 = lo; c0 < hi && fl.index == SIZE_MAX; c0 += chunk) {
    size_t cn = hi - c0 < chunk ? hi - c0 : chunk;
    EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
    for (size_t j = 0; j < cn; j++) {
      size_t p = c0 + j;
      if (p > fail_index(&fl)) continue;
      double vals[2];
      ew_error e = {0};
      ew_stack *st = NULL;
      ew_result *res = NULL;
      point_values(&P, p, vals);
      ew_status rc = solve_at(m, nr, keys, vals, &st, &res, &e);
      if (rc == EW_OK) rc = check_counts(res, &cols, nr, keys, vals, &e);
      if (rc == EW_OK) fill_row(res, &cols, lines, nl, nr, vals, rows + j * ncol);
      else fail_record(&fl, p, rc, &e);
      ew_result_free(res);
      ew_stack_free(st);
      if (o.progress) {
        EW_OMP(omp critical(ew_wf_progress))
        o.progress(o.progress_ctx, ++done, todo);
      }
    }
    if (fl.index != SIZE_MAX) break;
    for (size_t j = 0; j < cn; j++) {
      const double *row = rows + j * ncol;
      if (csv) write_csv_row(csv, row, ncol);
      if (tab) memcpy(tab->v + (tab->nrows++) * ncol, row, ncol * sizeof *row);
      if (json) {
        fputs(c0 + j > lo ? ",\n{" : "\n{", json);
        for (size_t k = 0; k < ncol; k++) {
          if (k) fputc(',', json);
          jstr(json, names[k]);
          fputc(':', json);
          jnum(json, row[k]);
        }
        fputc('}', json);
      }
    }
  }
  free(lines);
  free(names);
  free(rows);
  if (fl.index != SIZE_MAX) {
    ew_wf_table_free(tab);
    return fail_report(&fl, err);
  }
  if (json) fputs("]}\n", json);
  return EW_OK;
}

void ew_wf_table_free(ew_wf_table *t) {
  if (!t) return;
  free(t->names);
  free(t->v);
  memset(t, 0, sizeof *t);
}

/* ---- inverse matching ----------------------------------------------------------------- */
typedef struct {
  const ew_wf_model *m;
  size_t nk;
  const char *keys[2];
  const char *line[2];
  size_t nlines;
} wf_eval;

/* Line energies at vals; NaN where a level is not bound.  Errors of the stack (a value the
 * reader refuses, e.g. a thickness <= 0) are errors: the range was checked at its ends. */
static ew_status eval_lines(const wf_eval *ev, const double *vals, double *E, ew_error *err) {
  ew_stack *st = NULL;
  ew_result *res = NULL;
  ew_status rc = solve_at(ev->m, ev->nk, ev->keys, vals, &st, &res, err);
  if (rc != EW_OK) return rc;
  for (size_t i = 0; i < ev->nlines; i++) ew_wf_line_energy(res, ev->line[i], &E[i], NULL);
  ew_result_free(res);
  ew_stack_free(st);
  return EW_OK;
}

static ew_status eval1(const wf_eval *ev, double v, double *E, ew_error *err) {
  return eval_lines(ev, &v, E, err);
}

/* Brent's method for a root of f(v) = E(v) − target in [a, b] with f(a)·f(b) < 0
 * (R. P. Brent, Algorithms for Minimization without Derivatives (Prentice-Hall, 1973),
 * ch. 4: inverse quadratic interpolation or secant, falling back to bisection whenever the
 * step would not shrink the bracket fast enough).  xtol_rel: relative accuracy in v. */
static ew_status brent(const wf_eval *ev, double target, double a, double fa, double b,
                       double fb, double xtol_rel, double xtol_abs, double *root, double *froot,
                       ew_error *err) {
  double c = a, fc = fa, d = b - a, e = d;
  for (int it = 0; it < 200; it++) {
    if ((fb > 0) == (fc > 0)) { /* keep the root between b and c */
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (fabs(fc) < fabs(fb)) { /* b is the best estimate */
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    double tol = 2.0 * DBL_EPSILON * fabs(b) + 0.5 * fmax(xtol_rel * fabs(b), xtol_abs);
    double mid = 0.5 * (c - b);
    if (fabs(mid) <= tol || fb == 0.0) {
      *root = b;
      *froot = fb;
      return EW_OK;
    }
    if (fabs(e) >= tol && fabs(fa) > fabs(fb)) {
      double s = fb / fa, p, q;
      if (a == c) { /* secant */
        p = 2.0 * mid * s;
        q = 1.0 - s;
      } else { /* inverse quadratic interpolation */
        double qa = fa / fc, r = fb / fc;
        p = s * (2.0 * mid * qa * (qa - r) - (b - a) * (r - 1.0));
        q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2.0 * p < fmin(3.0 * mid * q - fabs(tol * q), fabs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = mid;
        e = d;
      }
    } else {
      d = mid;
      e = d;
    }
    a = b;
    fa = fb;
    b += fabs(d) > tol ? d : (mid > 0 ? tol : -tol);
    double E;
    ew_status rc = eval1(ev, b, &E, err);
    if (rc != EW_OK) return rc;
    if (!isfinite(E)) /* the line vanished inside the bracket: treat as a bracket end */
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "%s disappeared inside a bracket at %s = %g",
                     ev->line[0], ev->keys[0], b);
    fb = E - target;
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "Brent's method did not converge near %s = %g",
                 ev->keys[0], b);
}

/* Where a line appears between va (not bound) and vb (bound): bisection on "is it bound". */
static ew_status locate_edge(const wf_eval *ev, double va, double vb, double xtol,
                             double *vedge, double *Eedge, ew_error *err) {
  double E = NAN;
  ew_status rc = eval1(ev, vb, &E, err);
  if (rc != EW_OK) return rc;
  for (int it = 0; it < 80 && fabs(vb - va) > xtol; it++) {
    double mid = 0.5 * (va + vb), Em;
    rc = eval1(ev, mid, &Em, err);
    if (rc != EW_OK) return rc;
    if (isfinite(Em)) {
      vb = mid;
      E = Em;
    } else {
      va = mid;
    }
  }
  *vedge = vb;
  *Eedge = E;
  return EW_OK;
}

typedef struct {
  double a, fa, b, fb; /* bracket */
  int exact;           /* 1: a is a root already */
} wf_bracket;

/* Solve E(v) = target near a known root v0 (E0 there), for the tolerance: step from v0 along
 * the local slope, widen until the sign changes, then Brent.  NaN when not reached. */
static ew_status near_root(const wf_eval *ev, const ew_wf_range *r, double v0, double E0,
                           double target, double xtol_rel, double xtol_abs, double *out,
                           ew_error *err) {
  *out = NAN;
  double lo = fmin(r->from, r->to), hi = fmax(r->from, r->to), span = hi - lo;
  double h = 1e-4 * span, Ep, Em;
  double vp = fmin(v0 + h, hi), vm = fmax(v0 - h, lo);
  ew_status rc = eval1(ev, vp, &Ep, err);
  if (rc == EW_OK) rc = eval1(ev, vm, &Em, err);
  if (rc != EW_OK) return rc;
  double slope = (Ep - Em) / (vp - vm);
  if (!isfinite(slope) || slope == 0.0) return EW_OK;
  double d = 1.5 * (target - E0) / slope;
  if (d == 0.0) {
    *out = v0;
    return EW_OK;
  }
  double fa = E0 - target;
  for (int it = 0; it < 12; it++) {
    double b = fmin(fmax(v0 + d, lo), hi), Eb;
    rc = eval1(ev, b, &Eb, err);
    if (rc != EW_OK) return rc;
    if (!isfinite(Eb)) return EW_OK;
    double fb = Eb - target;
    if (fb == 0.0) {
      *out = b;
      return EW_OK;
    }
    if ((fa > 0) != (fb > 0)) {
      double root, froot;
      rc = brent(ev, target, v0, fa, b, fb, xtol_rel, xtol_abs, &root, &froot, err);
      if (rc == EW_OK) *out = root;
      return rc;
    }
    if (b == lo || b == hi) return EW_OK;
    d *= 2.0;
  }
  return EW_OK;
}

static ew_status sample_grid(const wf_eval *ev, size_t npts, const double *vals, double *E,
                             int nt, ew_error *err) {
  (void)nt; /* unused without OpenMP */
  wf_fail fl = {SIZE_MAX, {0}, EW_OK};
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t i = 0; i < npts; i++) {
    if (i > fail_index(&fl)) continue;
    ew_error e = {0};
    ew_status rc = eval_lines(ev, vals + i * ev->nk, E + i * ev->nlines, &e);
    if (rc != EW_OK) fail_record(&fl, i, rc, &e);
  }
  return fl.index != SIZE_MAX ? fail_report(&fl, err) : EW_OK;
}

static void fmt_energy(char *buf, size_t size, double eV) {
  double nm = EW_HC_EVNM / eV;
  if (nm >= 2000) snprintf(buf, size, "%.6g eV = %.5g \xc2\xb5m", eV, nm / 1e3);
  else snprintf(buf, size, "%.6g eV = %.5g nm", eV, nm);
}

#define WF_XTOL_REL 2e-7 /* Brent stops within this relative distance: 1e-6 asked, margin 5 */

static ew_status match_1d(const wf_eval *ev, const ew_wf_range *r, const ew_wf_quantity *tol,
                          size_t S, int nt, ew_wf_match_result *out, ew_error *err) {
  double *v = malloc(S * sizeof *v), *E = malloc(S * sizeof *E);
  wf_bracket *br = malloc(2 * S * sizeof *br);
  ew_status rc = EW_OK;
  if (!v || !E || !br) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (samples)");
    goto done;
  }
  for (size_t i = 0; i < S; i++) v[i] = r->from + (r->to - r->from) * (double)i / (double)(S - 1);
  v[S - 1] = r->to;
  rc = sample_grid(ev, S, v, E, nt, err);
  if (rc != EW_OK) goto done;
  double T = out->target[0].eV, span = fabs(r->to - r->from);
  double xtol_abs = 1e-9 * span;
  /* a line that is bound over part of the range only: find where it appears */
  double *vedge = calloc(S, sizeof *vedge), *Eedge = calloc(S, sizeof *Eedge);
  if (!vedge || !Eedge) {
    free(vedge);
    free(Eedge);
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto done;
  }
  {
    wf_fail fl = {SIZE_MAX, {0}, EW_OK};
    EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
    for (size_t i = 0; i < S - 1; i++) {
      Eedge[i] = NAN;
      if (isfinite(E[i]) == isfinite(E[i + 1])) continue;
      ew_error e = {0};
      double va = isfinite(E[i]) ? v[i + 1] : v[i], vb = isfinite(E[i]) ? v[i] : v[i + 1];
      ew_status q = locate_edge(ev, va, vb, WF_XTOL_REL * fmax(fabs(vb), 1e-3 * span), &vedge[i],
                                &Eedge[i], &e);
      if (q != EW_OK) fail_record(&fl, i, q, &e);
    }
    if (fl.index != SIZE_MAX) {
      free(vedge);
      free(Eedge);
      rc = fail_report(&fl, err);
      goto done;
    }
  }
  double emin = INFINITY, emax = -INFINITY;
  size_t nb = 0;
  for (size_t i = 0; i < S; i++) {
    if (isfinite(E[i])) emin = fmin(emin, E[i]), emax = fmax(emax, E[i]);
    if (i + 1 < S && isfinite(Eedge[i])) emin = fmin(emin, Eedge[i]), emax = fmax(emax, Eedge[i]);
  }
  for (size_t i = 0; i < S; i++) {
    if (isfinite(E[i]) && E[i] == T) br[nb++] = (wf_bracket){v[i], 0, v[i], 0, 1};
    if (i + 1 == S) break;
    double a = v[i], fa = E[i] - T, b = v[i + 1], fb = E[i + 1] - T;
    if (isfinite(Eedge[i])) { /* one end unbound: bracket from the edge */
      if (isfinite(E[i])) b = vedge[i], fb = Eedge[i] - T;
      else a = vedge[i], fa = Eedge[i] - T;
    } else if (!isfinite(fa) || !isfinite(fb)) {
      continue;
    }
    if (fa != 0 && fb != 0 && (fa > 0) != (fb > 0)) br[nb++] = (wf_bracket){a, fa, b, fb, 0};
  }
  free(vedge);
  free(Eedge);
  out->reached_min_eV[0] = isfinite(emin) ? emin : NAN;
  out->reached_max_eV[0] = isfinite(emax) ? emax : NAN;
  out->sol = calloc(nb ? nb : 1, sizeof *out->sol);
  if (!out->sol) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto done;
  }
  {
    wf_fail fl = {SIZE_MAX, {0}, EW_OK};
    double tm = NAN, tp = NAN; /* line energies at target −/+ tolerance (in its own unit) */
    if (tol) {
      if (tol->is_wavelength) {
        double lam = out->target[0].nm, d = tol->value * tol->scale;
        tm = lam - d > 0 ? EW_HC_EVNM / (lam - d) : NAN;
        tp = EW_HC_EVNM / (lam + d);
      } else {
        tm = T - tol->eV;
        tp = T + tol->eV;
      }
    }
    EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
    for (size_t k = 0; k < nb; k++) {
      ew_error e = {0};
      ew_wf_solution *s = &out->sol[k];
      double root = br[k].a, froot = 0.0;
      ew_status q = EW_OK;
      if (!br[k].exact)
        q = brent(ev, T, br[k].a, br[k].fa, br[k].b, br[k].fb, WF_XTOL_REL, xtol_abs, &root,
                  &froot, &e);
      s->value[0] = root;
      s->energy_eV[0] = froot + T;
      s->wavelength_nm[0] = EW_HC_EVNM / s->energy_eV[0];
      s->residual_eV[0] = froot;
      s->value_minus = s->value_plus = s->uncertainty = NAN;
      if (q == EW_OK && tol && isfinite(tm))
        q = near_root(ev, r, root, s->energy_eV[0], tm, WF_XTOL_REL, xtol_abs, &s->value_minus, &e);
      if (q == EW_OK && tol)
        q = near_root(ev, r, root, s->energy_eV[0], tp, WF_XTOL_REL, xtol_abs, &s->value_plus, &e);
      if (tol) s->uncertainty = 0.5 * fabs(s->value_plus - s->value_minus);
      if (q != EW_OK) fail_record(&fl, k, q, &e);
    }
    if (fl.index != SIZE_MAX) {
      rc = fail_report(&fl, err);
      goto done;
    }
  }
  out->n = nb;
  if (nb == 0) {
    char t[64], a[64], b[64];
    fmt_energy(t, sizeof t, T);
    if (!isfinite(emin)) {
      snprintf(out->message, sizeof out->message, "no value of %s in [%g, %g] puts %s at %s: "
               "%s is not bound anywhere in the range", r->key, r->from, r->to, ev->line[0], t,
               ev->line[0]);
    } else {
      fmt_energy(a, sizeof a, emin);
      fmt_energy(b, sizeof b, emax);
      snprintf(out->message, sizeof out->message, "no value of %s in [%g, %g] puts %s at %s; "
               "over the range %s spans %s to %s", r->key, r->from, r->to, ev->line[0], t,
               ev->line[0], a, b);
    }
  }
done:
  free(v);
  free(E);
  free(br);
  return rc;
}

/* Relative residual of the two lines (each measured against its target). */
static double rnorm(const double *E, const ew_wf_match_result *o) {
  double a = (E[0] - o->target[0].eV) / o->target[0].eV, b = (E[1] - o->target[1].eV) / o->target[1].eV;
  return sqrt(a * a + b * b);
}

/* Newton's method in two unknowns with a central finite-difference Jacobian, each step
 * clamped to the box and halved until the residual falls (damped Newton, e.g. J. E. Dennis,
 * R. B. Schnabel, Numerical Methods for Unconstrained Optimization and Nonlinear Equations
 * (SIAM, 1996), ch. 6).  *found = 0 when it stalls or leaves the region where both lines are
 * bound. */
static ew_status newton_2d(const wf_eval *ev, const ew_wf_range *r, const double *start,
                           const ew_wf_match_result *o, ew_wf_solution *s, int *found,
                           ew_error *err) {
  *found = 0;
  double lo[2], hi[2], v[2] = {start[0], start[1]}, E[2];
  for (int i = 0; i < 2; i++) lo[i] = fmin(r[i].from, r[i].to), hi[i] = fmax(r[i].from, r[i].to);
  ew_status rc = eval_lines(ev, v, E, err);
  if (rc != EW_OK || !isfinite(E[0]) || !isfinite(E[1])) return rc;
  double res = rnorm(E, o);
  for (int it = 0; it < 40; it++) {
    double J[2][2];
    for (int j = 0; j < 2; j++) {
      double h = 1e-4 * (hi[j] - lo[j]);
      double vp[2] = {v[0], v[1]}, vm[2] = {v[0], v[1]}, Ep[2], Em[2];
      vp[j] = fmin(v[j] + h, hi[j]);
      vm[j] = fmax(v[j] - h, lo[j]);
      rc = eval_lines(ev, vp, Ep, err);
      if (rc == EW_OK) rc = eval_lines(ev, vm, Em, err);
      if (rc != EW_OK) return rc;
      for (int i = 0; i < 2; i++) J[i][j] = (Ep[i] - Em[i]) / (vp[j] - vm[j]);
    }
    double det = J[0][0] * J[1][1] - J[0][1] * J[1][0];
    double scale = fabs(J[0][0] * J[1][1]) + fabs(J[0][1] * J[1][0]);
    if (!isfinite(det) || fabs(det) <= 1e-12 * scale || scale == 0) return EW_OK;
    double f0 = E[0] - o->target[0].eV, f1 = E[1] - o->target[1].eV;
    double d[2] = {-(J[1][1] * f0 - J[0][1] * f1) / det, -(-J[1][0] * f0 + J[0][0] * f1) / det};
    int accepted = 0;
    double vn[2], En[2];
    for (int ls = 0; ls < 14 && !accepted; ls++) {
      double lam = ldexp(1.0, -ls);
      for (int i = 0; i < 2; i++) vn[i] = fmin(fmax(v[i] + lam * d[i], lo[i]), hi[i]);
      rc = eval_lines(ev, vn, En, err);
      if (rc != EW_OK) return rc;
      if (isfinite(En[0]) && isfinite(En[1]) && rnorm(En, o) < res) accepted = 1;
    }
    int small = 1;
    for (int i = 0; i < 2; i++)
      if (fabs(vn[i] - v[i]) > 1e-6 * fmax(fabs(v[i]), 1e-3 * (hi[i] - lo[i]))) small = 0;
    if (accepted) {
      v[0] = vn[0], v[1] = vn[1], E[0] = En[0], E[1] = En[1];
      res = rnorm(E, o);
    }
    /* converged: the step is below 1e-6 relative, or the residual at rounding level */
    if ((small || !accepted) && res < 1e-5) {
      *found = 1;
      break;
    }
    if (!accepted) return EW_OK;
  }
  if (!*found) return EW_OK;
  for (int i = 0; i < 2; i++) {
    s->value[i] = v[i];
    s->energy_eV[i] = E[i];
    s->wavelength_nm[i] = EW_HC_EVNM / E[i];
    s->residual_eV[i] = E[i] - o->target[i].eV;
  }
  s->value_minus = s->value_plus = s->uncertainty = NAN;
  return EW_OK;
}

static int cmp_sol(const void *pa, const void *pb) {
  const ew_wf_solution *a = pa, *b = pb;
  if (a->value[0] != b->value[0]) return a->value[0] < b->value[0] ? -1 : 1;
  return (a->value[1] > b->value[1]) - (a->value[1] < b->value[1]);
}

typedef struct {
  double r;
  size_t i, j;
} wf_start;

static int cmp_start(const void *pa, const void *pb) {
  const wf_start *a = pa, *b = pb;
  if (a->r != b->r) return a->r < b->r ? -1 : 1;
  return a->i != b->i ? (a->i < b->i ? -1 : 1) : (a->j > b->j) - (a->j < b->j);
}

#define WF_MAX_STARTS 8

static ew_status match_2d(const wf_eval *ev, const ew_wf_range *r, size_t S0, size_t S1, int nt,
                          ew_wf_match_result *out, ew_error *err) {
  size_t np = S0 * S1;
  double *v = malloc(2 * np * sizeof *v), *E = malloc(2 * np * sizeof *E);
  wf_start *st = malloc(np * sizeof *st);
  ew_status rc = EW_OK;
  if (!v || !E || !st) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (samples)");
    goto done;
  }
  for (size_t i = 0; i < S0; i++)
    for (size_t j = 0; j < S1; j++) {
      v[2 * (i * S1 + j)] = r[0].from + (r[0].to - r[0].from) * (double)i / (double)(S0 - 1);
      v[2 * (i * S1 + j) + 1] = r[1].from + (r[1].to - r[1].from) * (double)j / (double)(S1 - 1);
    }
  rc = sample_grid(ev, np, v, E, nt, err);
  if (rc != EW_OK) goto done;
  for (int k = 0; k < 2; k++) {
    double a = INFINITY, b = -INFINITY;
    for (size_t p = 0; p < np; p++)
      if (isfinite(E[2 * p + k])) a = fmin(a, E[2 * p + k]), b = fmax(b, E[2 * p + k]);
    out->reached_min_eV[k] = isfinite(a) ? a : NAN;
    out->reached_max_eV[k] = isfinite(b) ? b : NAN;
  }
  /* starts: the best corner of every grid cell across which both residuals change sign; the
   * best grid point when no cell qualifies */
  size_t ns = 0;
  for (size_t i = 0; i + 1 < S0; i++)
    for (size_t j = 0; j + 1 < S1; j++) {
      int neg[2] = {0, 0}, pos[2] = {0, 0}, ok = 1;
      wf_start best = {INFINITY, 0, 0};
      for (size_t di = 0; di < 2; di++)
        for (size_t dj = 0; dj < 2; dj++) {
          size_t p = (i + di) * S1 + j + dj;
          for (int k = 0; k < 2; k++) {
            double f = E[2 * p + k] - out->target[k].eV;
            if (!isfinite(f)) ok = 0;
            neg[k] |= f <= 0;
            pos[k] |= f >= 0;
          }
          if (ok) {
            double q = rnorm(&E[2 * p], out);
            if (q < best.r) best = (wf_start){q, i + di, j + dj};
          }
        }
      if (ok && neg[0] && pos[0] && neg[1] && pos[1]) st[ns++] = best;
    }
  if (ns == 0) {
    wf_start best = {INFINITY, 0, 0};
    for (size_t p = 0; p < np; p++)
      if (isfinite(E[2 * p]) && isfinite(E[2 * p + 1]) && rnorm(&E[2 * p], out) < best.r)
        best = (wf_start){rnorm(&E[2 * p], out), p / S1, p % S1};
    if (isfinite(best.r)) st[ns++] = best;
  }
  qsort(st, ns, sizeof *st, cmp_start);
  /* one start per grid point (a point is the best corner of up to four cells) */
  size_t u = 0;
  for (size_t k = 0; k < ns; k++) {
    size_t q = 0;
    while (q < u && (st[q].i != st[k].i || st[q].j != st[k].j)) q++;
    if (q == u) st[u++] = st[k];
  }
  ns = u < WF_MAX_STARTS ? u : WF_MAX_STARTS;
  ew_wf_solution *sol = calloc(ns ? ns : 1, sizeof *sol);
  int *found = calloc(ns ? ns : 1, sizeof *found);
  if (!sol || !found) {
    free(sol);
    free(found);
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto done;
  }
  {
    wf_fail fl = {SIZE_MAX, {0}, EW_OK};
    EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
    for (size_t k = 0; k < ns; k++) {
      ew_error e = {0};
      ew_status q = newton_2d(ev, r, &v[2 * (st[k].i * S1 + st[k].j)], out, &sol[k], &found[k], &e);
      if (q != EW_OK) fail_record(&fl, k, q, &e);
    }
    if (fl.index != SIZE_MAX) {
      free(sol);
      free(found);
      rc = fail_report(&fl, err);
      goto done;
    }
  }
  /* distinct solutions (starts converging to the same point agree to ~1e-6 of the box) */
  size_t n = 0;
  for (size_t k = 0; k < ns; k++) {
    if (!found[k]) continue;
    size_t q = 0;
    for (; q < n; q++)
      if (fabs(sol[q].value[0] - sol[k].value[0]) <= 1e-4 * fabs(r[0].to - r[0].from) &&
          fabs(sol[q].value[1] - sol[k].value[1]) <= 1e-4 * fabs(r[1].to - r[1].from))
        break;
    if (q == n) sol[n++] = sol[k];
  }
  qsort(sol, n, sizeof *sol, cmp_sol);
  free(found);
  out->sol = sol;
  out->n = n;
  if (n == 0) {
    snprintf(out->message, sizeof out->message, "no pair of %s in [%g, %g] and %s in [%g, %g] "
             "puts %s at %.6g eV and %s at %.6g eV; over the box %s spans %.6g to %.6g eV and "
             "%s %.6g to %.6g eV", r[0].key, r[0].from, r[0].to, r[1].key, r[1].from, r[1].to,
             ev->line[0], out->target[0].eV, ev->line[1], out->target[1].eV, ev->line[0],
             out->reached_min_eV[0], out->reached_max_eV[0], ev->line[1], out->reached_min_eV[1],
             out->reached_max_eV[1]);
  }
done:
  free(v);
  free(E);
  free(st);
  return rc;
}

ew_status ew_wf_match(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                      const char *const *lines, const ew_wf_quantity *targets, size_t nlines,
                      const ew_wf_quantity *tolerance, const ew_wf_match_opt *oin,
                      ew_wf_match_result *out, ew_error *err) {
  memset(out, 0, sizeof *out);
  ew_wf_match_opt o = {0, 0};
  if (oin) o = *oin;
  if (nr < 1 || nr > 2 || nlines != nr)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "match: give one --vary with one --line/--target, "
                   "or two --vary with two --line/--target pairs (got %zu and %zu)", nr, nlines);
  if (tolerance && nr == 2)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--tolerance works with one unknown only");
  wf_eval ev = {m, nr, {NULL, NULL}, {NULL, NULL}, nlines};
  out->nkeys = nr;
  for (size_t i = 0; i < nr; i++) {
    double nominal;
    ew_status rc = ew_wf_key_check(m, ranges[i].key, "--vary", &nominal, err);
    if (rc != EW_OK) return rc;
    rc = ew_wf_line_energy(NULL, lines[i], &nominal, err);
    if (rc != EW_OK) return rc;
    if (strlen(ranges[i].key) >= sizeof out->key[i] || strlen(lines[i]) >= sizeof out->line[i])
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "key or line name too long");
    strcpy(out->key[i], ranges[i].key);
    strcpy(out->line[i], lines[i]);
    out->target[i] = targets[i];
    ev.keys[i] = ranges[i].key;
    ev.line[i] = lines[i];
    out->reached_min_eV[i] = out->reached_max_eV[i] = NAN;
  }
  if (nr == 2 && !strcmp(ranges[0].key, ranges[1].key))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s given twice", ranges[0].key);
  if (tolerance) {
    out->have_tolerance = 1;
    out->tolerance = *tolerance;
  }
  int nt = ew_wf_threads(o.threads);
  size_t S[2];
  for (size_t i = 0; i < nr; i++) {
    S[i] = o.samples ? o.samples
           : ranges[i].step > 0 ? ew_wf_range_count(&ranges[i])
                                : (nr == 1 ? 41 : 11);
    if (S[i] < 2) S[i] = 2;
  }
  if ((double)S[0] * (nr == 2 ? (double)S[1] : 1.0) > 1e6)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--samples: too many samples (limit 10^6 solves)");
  ew_status rc = nr == 1 ? match_1d(&ev, ranges, tolerance, S[0], nt, out, err)
                         : match_2d(&ev, ranges, S[0], S[1], nt, out, err);
  if (rc != EW_OK) {
    free(out->sol);
    out->sol = NULL;
    out->n = 0;
  }
  return rc;
}

void ew_wf_match_result_free(ew_wf_match_result *r) {
  if (!r) return;
  free(r->sol);
  r->sol = NULL;
  r->n = 0;
}

/* "e1-e2", "hh1-hh3": both ends in one band (an intersubband line, read in µm) */
static int same_band_line(const char *line) {
  size_t a = strcspn(line, "0123456789"), d = strcspn(line, "-");
  if (!line[d]) return 0;
  const char *b = line + d + 1;
  return a > 0 && a < d && strcspn(b, "0123456789") == a && !strncmp(line, b, a);
}

void ew_wf_match_print(const ew_wf_match_result *r, FILE *out) {
  for (size_t i = 0; i < r->nkeys; i++) {
    char t[64];
    fmt_energy(t, sizeof t, r->target[i].eV);
    fprintf(out, "target: %s at %s\n", r->line[i], t);
  }
  if (r->have_tolerance)
    fprintf(out, "tolerance: %g %s\n", r->tolerance.value,
            r->tolerance.is_wavelength ? (r->tolerance.scale == 1.0 ? "nm" : "um")
                                       : (r->tolerance.scale == 1.0 ? "eV" : "meV"));
  if (r->n == 0) {
    fprintf(out, "no solution: %s\n", r->message);
    return;
  }
  fprintf(out, "\n  %-3s", "#");
  for (size_t i = 0; i < r->nkeys; i++) fprintf(out, " %16s", r->key[i]);
  if (r->have_tolerance) fprintf(out, " %12s %14s %14s", "uncertainty", "at_target-tol", "at_target+tol");
  for (size_t i = 0; i < r->nkeys; i++)
    fprintf(out, " %13s %13s", "energy_eV", same_band_line(r->line[i]) ? "lambda_um" : "lambda_nm");
  fputc('\n', out);
  for (size_t k = 0; k < r->n; k++) {
    const ew_wf_solution *s = &r->sol[k];
    fprintf(out, "  %-3zu", k + 1);
    for (size_t i = 0; i < r->nkeys; i++) fprintf(out, " %16.8g", s->value[i]);
    if (r->have_tolerance)
      fprintf(out, " %12.4g %14.8g %14.8g", s->uncertainty, s->value_minus, s->value_plus);
    for (size_t i = 0; i < r->nkeys; i++) {
      int um = same_band_line(r->line[i]);
      fprintf(out, um ? " %13.7f %13.5f" : " %13.7f %13.3f", s->energy_eV[i],
              um ? s->wavelength_nm[i] * 1e-3 : s->wavelength_nm[i]);
    }
    fputc('\n', out);
  }
}

void ew_wf_match_print_json(const ew_wf_match_result *r, FILE *out) {
  int two = r->nkeys == 2;
  fputs("{\"keys\":[", out);
  for (size_t i = 0; i < r->nkeys; i++) {
    if (i) fputc(',', out);
    jstr(out, r->key[i]);
  }
  fputs("],\"lines\":[", out);
  for (size_t i = 0; i < r->nkeys; i++) {
    fputs(i ? ",{\"line\":" : "{\"line\":", out);
    jstr(out, r->line[i]);
    fputs(",\"target_eV\":", out);
    jnum(out, r->target[i].eV);
    fputs(",\"target_nm\":", out);
    jnum(out, r->target[i].nm);
    fputs(",\"reached_eV\":[", out);
    jnum(out, r->reached_min_eV[i]);
    fputc(',', out);
    jnum(out, r->reached_max_eV[i]);
    fputs("]}", out);
  }
  fputs("],\"solutions\":[", out);
  for (size_t k = 0; k < r->n; k++) {
    const ew_wf_solution *s = &r->sol[k];
    fputs(k ? ",{" : "{", out);
    const char *f[] = {"value", "energy_eV", "wavelength_nm", "residual_eV"};
    const double *a[] = {s->value, s->energy_eV, s->wavelength_nm, s->residual_eV};
    for (int q = 0; q < 4; q++) {
      fprintf(out, "%s\"%s\":", q ? "," : "", f[q]);
      if (two) {
        fputc('[', out);
        jnum(out, a[q][0]);
        fputc(',', out);
        jnum(out, a[q][1]);
        fputc(']', out);
      } else {
        jnum(out, a[q][0]);
      }
    }
    if (r->have_tolerance) {
      fputs(",\"uncertainty\":", out);
      jnum(out, s->uncertainty);
      fputs(",\"value_at_target_minus_tolerance\":", out);
      jnum(out, s->value_minus);
      fputs(",\"value_at_target_plus_tolerance\":", out);
      jnum(out, s->value_plus);
    }
    fputc('}', out);
  }
  fputs("],\"message\":", out);
  jstr(out, r->message);
  fputs("}\n", out);
}

/* ---- Hellmann–Feynman derivatives ------------------------------------------------------
 * BenDaniel–Duke energy functional E = ∫ [K |ψ'|²/m + V |ψ|²] dz, K = ħ²/2m0 (m in m0).
 *
 * A parameter p of one layer (composition): first-order perturbation theory (Hellmann–
 * Feynman, H. Hellmann, Einführung in die Quantenchemie (1937); R. P. Feynman, Phys. Rev. 56,
 * 340 (1939)) gives dE/dp = ⟨ψ|∂H/∂p|ψ⟩ = ∫_layer [∂V/∂p ψ² − K (∂m/∂p)/m² ψ'²] dz
 *                         = ∫_layer [∂V/∂p ψ² − K (∂m/∂p) J²] dz,  J = ψ'/m.
 * On the grid this is evaluated in the solver's own quadrature (H_ii = K(1/M_i + 1/M_{i+1}) +
 * w_i V_i, M_c = ∫_c m dz): the potential term weights ψ_i² by the part of node i's dual cell
 * inside the layer, the kinetic term sums h_c J_c² over the layer's cells with the cell flux
 * J_c = (ψ_c − ψ_{c−1})/M_c; that is the exact derivative of the discrete eigenvalue.
 *
 * Moving an interface: perturbation theory cannot be applied to a step that moves (the change
 * of H is not small where it acts), so map the moved problem back by z = y + ε θ(y) with θ = 1
 * at the interface (a Hadamard shape derivative).  Then
 *   dE/dz0 = ∫ θ' [−K ψ'²/m + (V − E) ψ²] dy = F(z0−) − F(z0+),  F = −K ψ'²/m + (V − E)ψ²,
 * because F' = 0 inside each layer (use K(ψ'/m)' = (V − E)ψ).  With ψ and J continuous:
 *   dE/dz0 = (V_L − V_R) ψ(z0)² − K (m_L − m_R) J(z0)²,
 * L and R the materials left and right of z0 (z0 moving right turns R into L).  Sign check:
 * for small contrast m_L = m_R + δ this is −K δ J², the perturbation-theory value, and more
 * heavy material lowers the kinetic energy.  The hard wall at z = L (ψ = 0):
 *   dE/dL = F(L−) = −K m J(L)².
 * Growing layer k by dt moves every interface after it and the wall by dt: dE/dt is the sum.
 * J at an interface node from the two adjacent cell fluxes (cell midpoints), each moved to
 * the node with J' = (V − E)ψ/K, so the estimate is second order in h. */

static double wf_pot(const ew_layer *ly, ew_band b) {
  double e = ew_layer_edge(ly, b);
  return b == EW_BAND_E ? e : -e; /* holes: positive-mass particles in −Ev (solve.c) */
}

static size_t node_at(const ew_grid *g, double z) {
  size_t lo = 0, hi = g->n; /* first node with g->z >= z − tiny */
  double eps = 1e-9 * (1.0 + g->length_nm);
  while (lo < hi) {
    size_t mid = (lo + hi) / 2;
    if (g->z[mid] < z - eps) lo = mid + 1;
    else hi = mid;
  }
  return lo < g->n && fabs(g->z[lo] - z) <= eps ? lo : SIZE_MAX;
}

/* Hellmann–Feynman needs potentials constant in each layer (the F' = 0 step above): no
 * applied field, no graded layer.  Otherwise the derivatives are not offered (NaN). */
static int hf_applies(const ew_stack *st) {
  if (st->field_kV_cm != 0.0) return 0;
  for (size_t k = 0; k < st->n_layers; k++)
    if (st->layers[k].grade != EW_GRADE_NONE) return 0;
  return 1;
}

/* Energy-dependent (Kane) electron mass: the level solves E = λ(H(E)), so
 *   dE/dp = (∂λ/∂p at fixed E) / (1 − ∂λ/∂E)
 * (implicit differentiation of the fixed point, ∂λ/∂E from ew_nonparabolic_slope; the masses
 * at fixed E enter every formula above). */
typedef struct {
  ew_band b;
  double sign, E;  /* E on the positive-mass scale (holes: −E) */
  int np;          /* Kane electrons */
  const double *psi, *M; /* the state and the cell mass integrals of its pencil */
  double *own;     /* storage of M when energy-dependent */
  double denom;    /* 1 − ∂λ/∂E (1 when parabolic) */
} hf_state;

static int hf_begin(const ew_result *r, size_t s, hf_state *h) {
  const ew_grid *g = r->grid;
  const ew_state *q = &r->states[s];
  size_t n = g->n;
  memset(h, 0, sizeof *h);
  if (!hf_applies(r->stack)) return 0;
  h->b = q->band;
  h->sign = h->b == EW_BAND_E ? 1.0 : -1.0;
  h->E = h->sign * q->energy_eV;
  h->psi = r->psi + s * n;
  h->np = h->b == EW_BAND_E && r->nonparabolic;
  h->M = g->cell_mass[h->b];
  h->denom = 1.0;
  if (!h->np) return 1;
  h->own = malloc(3 * (n + 1) * sizeof *h->own);
  if (!h->own) return 0;
  double dl = ew_nonparabolic_slope(r->stack, g, h->E, h->psi, h->own);
  if (isnan(dl)) {
    free(h->own);
    h->own = NULL;
    return 0;
  }
  h->denom = 1.0 - dl;
  h->M = h->own; /* the cell masses at E */
  return 1;
}

static void hf_end(hf_state *h) { free(h->own); }

/* band edge / growth-axis mass of band b for a layer with the given band parameters (through
 * ew_layer_edge/ew_layer_mass so that the mapping stays the grid's) */
static double bands_edge(const ew_layer *ly, const ew_bands *bb, ew_band b) {
  ew_layer tmp = *ly;
  tmp.bands = *bb;
  return ew_layer_edge(&tmp, b);
}

static double mass_at(const hf_state *h, const ew_layer *ly, const ew_bands *bb) {
  if (h->np) return ew_kane_mass(bb, h->E - bands_edge(ly, bb, EW_BAND_E));
  ew_layer tmp = *ly;
  tmp.bands = *bb;
  return ew_layer_mass(&tmp, h->b);
}

double ew_wf_hf_dthickness(const ew_result *r, size_t s, size_t k) {
  hf_state h;
  if (!hf_begin(r, s, &h)) return NAN;
  const ew_grid *g = r->grid;
  const ew_stack *st = r->stack;
  const double *psi = h.psi, K = K_EVNM2, E = h.E;
  size_t n = g->n;
  ew_band b = h.b;
  double d = 0.0;
  for (size_t j = k; j + 1 < st->n_layers; j++) {
    size_t i = node_at(g, st->layers[j + 1].z_start_nm);
    if (i == SIZE_MAX) { /* interfaces are nodes on the solver's layered grid */
      hf_end(&h);
      return NAN;
    }
    const ew_layer *L = &st->layers[j], *R = &st->layers[j + 1];
    double VL = wf_pot(L, b), VR = wf_pot(R, b);
    double mL = mass_at(&h, L, &L->bands), mR = mass_at(&h, R, &R->bands);
    double p0 = psi[i];
    double Jl = (p0 - (i ? psi[i - 1] : 0.0)) / h.M[i];
    double Jr = ((i + 1 < n ? psi[i + 1] : 0.0) - p0) / h.M[i + 1];
    double J = 0.5 * (Jl + 0.5 * g->h[i] * (VL - E) * p0 / K + Jr -
                      0.5 * g->h[i + 1] * (VR - E) * p0 / K);
    d += (VL - VR) * p0 * p0 - K * (mL - mR) * J * J;
  }
  const ew_layer *last = &st->layers[st->n_layers - 1];
  double Jw = (0.0 - psi[n - 1]) / h.M[n];
  Jw += 0.5 * g->h[n] * (wf_pot(last, b) - E) * (0.5 * psi[n - 1]) / K;
  d += -K * mass_at(&h, last, &last->bands) * Jw * Jw;
  d = h.sign * d / h.denom; /* back to the reported (electron) energy scale */
  hf_end(&h);
  return d;
}

double ew_wf_hf_dparam(const ew_result *r, size_t s, size_t k, const ew_bands *lo,
                       const ew_bands *hi, double span) {
  hf_state h;
  if (!(span > 0) || !hf_begin(r, s, &h)) return NAN;
  const ew_grid *g = r->grid;
  const ew_layer *ly = &r->stack->layers[k];
  ew_band b = h.b;
  double dedge = (bands_edge(ly, hi, b) - bands_edge(ly, lo, b)) / span;
  double dV = b == EW_BAND_E ? dedge : -dedge;
  double dm = (mass_at(&h, ly, hi) - mass_at(&h, ly, lo)) / span; /* at fixed E */
  const double *psi = h.psi;
  size_t n = g->n;
  double a = ly->z_start_nm, z1 = ly->z_start_nm + ly->thickness_nm;
  double pot = 0.0, kin = 0.0;
  for (size_t c = 0; c <= n; c++) {
    double za = c ? g->z[c - 1] : 0.0, zb = c < n ? g->z[c] : g->length_nm, mid = 0.5 * (za + zb);
    if (mid < a || mid > z1) continue;
    double pl = c ? psi[c - 1] : 0.0, pr = c < n ? psi[c] : 0.0;
    /* half of the cell belongs to each end node's dual cell */
    pot += 0.5 * g->h[c] * (pl * pl + pr * pr);
    double J = (pr - pl) / h.M[c];
    kin += g->h[c] * J * J;
  }
  double d = h.sign * (dV * pot - K_EVNM2 * dm * kin) / h.denom;
  hf_end(&h);
  return d;
}

/* ---- tolerances ------------------------------------------------------------------------ */
typedef struct {
  wf_level a, b;
  int is_line, interband;
} wf_itemdef;

static double item_energy(const ew_result *r, const wf_itemdef *d) {
  double ea = level_energy(r, d->a.band, d->a.n);
  if (!d->is_line) return ea;
  double eb = level_energy(r, d->b.band, d->b.n);
  return d->interband ? ea - eb : fabs(eb - ea);
}

/* Items of a nominal result: every level, then the main lines. */
static ew_status make_items(const ew_result *r, ew_wf_item **items, wf_itemdef **defs,
                            size_t *count, int levels, ew_error *err) {
  size_t cnt[EW_BAND_COUNT];
  for (int b = 0; b < EW_BAND_COUNT; b++) cnt[b] = r->band_count[b];
  wf_cols c = cols_of_counts(cnt);
  size_t nl = main_lines(&c, NULL, 0), nlev = levels ? r->n_states : 0, n = nlev + nl;
  wf_linedef *ld = malloc((nl ? nl : 1) * sizeof *ld);
  *items = calloc(n ? n : 1, sizeof **items);
  *defs = calloc(n ? n : 1, sizeof **defs);
  if (!ld || !*items || !*defs) {
    free(ld);
    free(*items);
    free(*defs);
    *items = NULL;
    *defs = NULL;
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  main_lines(&c, ld, nl);
  for (size_t i = 0; i < nlev; i++) {
    snprintf((*items)[i].name, sizeof (*items)[i].name, "%s", r->states[i].label);
    (*defs)[i].a = (wf_level){r->states[i].band, r->states[i].n};
  }
  for (size_t i = 0; i < nl; i++) {
    ew_wf_item *it = &(*items)[nlev + i];
    wf_itemdef *d = &(*defs)[nlev + i];
    snprintf(it->name, sizeof it->name, "%s", ld[i].name);
    it->is_line = d->is_line = 1;
    it->interband = d->interband = ld[i].interband;
    d->a = ld[i].a;
    d->b = ld[i].b;
  }
  for (size_t i = 0; i < n; i++) {
    (*items)[i].energy_eV = item_energy(r, &(*defs)[i]);
    (*items)[i].wavelength_nm = EW_HC_EVNM / fabs((*items)[i].energy_eV);
  }
  free(ld);
  *count = n;
  return EW_OK;
}

static double ml_of(const ew_layer *ly, int *dflt) {
  *dflt = 0;
  /* a layer written in whole monolayers: the reader's own monolayer */
  if (ly->thickness_ml > 0) return ly->thickness_nm / ly->thickness_ml;
  *dflt = !(ly->bands.a_nm > 0);
  /* one monolayer = a/2 (zinc blende, [001]); a pseudomorphic layer has a(1 + ε⊥) along z */
  return *dflt ? EW_WF_DEFAULT_ML_NM : 0.5 * ly->bands.a_nm * (1.0 + ly->bands.eps_perp);
}

/* The key that sets a layer's thickness and its value for thickness t_nm: thickness_ml
 * (in monolayers) when the file gives the layer that way, else thickness. */
static double thickness_key(const ew_layer *ly, double ml_nm, double t_nm, char *key, size_t size) {
  int in_ml = ly->thickness_ml > 0;
  snprintf(key, size, "%s.%s", ly->name, in_ml ? "thickness_ml" : "thickness");
  return in_ml ? t_nm / ml_nm : t_nm;
}

/* One variation of one key: its solve gives every item's energy and the varied layer's band
 * parameters.  A stack the reader refuses (thickness <= 0, x outside [0, 1]) is "not
 * available" (ok = 0), not an error. */
typedef struct {
  char key[EW_WF_KEY_MAX];
  double value;
  size_t layer;
  int ok;
  double *E;          /* [n_items] */
  ew_bands bands;     /* the varied layer's band parameters in that stack */
} wf_job;

static ew_status run_jobs(const ew_wf_model *m, wf_job *jobs, size_t nj, const wf_itemdef *defs,
                          size_t ni, int nt, ew_error *err) {
  (void)nt; /* unused without OpenMP */
  wf_fail fl = {SIZE_MAX, {0}, EW_OK};
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t j = 0; j < nj; j++) {
    wf_job *jb = &jobs[j];
    const char *key = jb->key;
    ew_error e = {0};
    ew_stack *st = NULL;
    ew_result *res = NULL;
    jb->ok = 0;
    for (size_t i = 0; i < ni; i++) jb->E[i] = NAN;
    ew_status rc = ew_wf_stack_at(m, 1, &key, &jb->value, &st, &e);
    if (rc == EW_ERR_INPUT) continue;
    if (rc == EW_OK) rc = ew_solve(st, &m->opt, &res, &e);
    if (rc != EW_OK) {
      fail_record(&fl, j, rc, &e);
      ew_stack_free(st);
      continue;
    }
    jb->ok = 1;
    for (size_t i = 0; i < ni; i++) jb->E[i] = item_energy(res, &defs[i]);
    jb->bands = st->layers[jb->layer].bands;
    ew_result_free(res);
    ew_stack_free(st);
  }
  return fl.index != SIZE_MAX ? fail_report(&fl, err) : EW_OK;
}

/* Derivative of an item from per-state derivatives dS (indexed by state). */
static double item_deriv(const ew_result *r, const wf_itemdef *d, const double *dS) {
  size_t ia = level_index(r, d->a.band, d->a.n);
  if (ia == SIZE_MAX) return NAN;
  if (!d->is_line) return dS[ia];
  size_t ib = level_index(r, d->b.band, d->b.n);
  if (ib == SIZE_MAX) return NAN;
  if (d->interband) return dS[ia] - dS[ib];
  double s = r->states[ib].energy_eV >= r->states[ia].energy_eV ? 1.0 : -1.0;
  return s * (dS[ib] - dS[ia]);
}

/* steps of the central differences that check Hellmann–Feynman: small enough that the
 * O(step²) truncation is ~1e-5 relative, large enough that the solver's energy noise (the
 * grid re-meshes as a thickness changes, ~1e-7 eV after Richardson) stays ~1e-4 relative */
#define WF_FD_DT_NM 0.01
#define WF_FD_DX 0.001

ew_status ew_wf_tolerance_run(const ew_wf_model *m, double dx, int threads,
                              ew_wf_tolerance **out, ew_error *err) {
  *out = NULL;
  const ew_stack *st = m->nominal;
  int nt = ew_wf_threads(threads);
  ew_result *res = NULL;
  ew_status rc = ew_solve(st, &m->opt, &res, err);
  if (rc != EW_OK) return rc;
  ew_wf_tolerance *t = calloc(1, sizeof *t);
  wf_itemdef *defs = NULL;
  wf_job *jobs = NULL;
  double *jobE = NULL, *dS = NULL;
  size_t nl = st->n_layers, nj = 8 * nl;
  if (!t) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto fail;
  }
  snprintf(t->stack, sizeof t->stack, "%s", st->path);
  rc = make_items(res, &t->items, &defs, &t->n_items, 1, err);
  if (rc != EW_OK) goto fail;
  size_t ni = t->n_items;
  t->n_layers = nl;
  t->layers = calloc(nl, sizeof *t->layers);
  jobs = calloc(nj, sizeof *jobs);
  jobE = malloc((nj * ni > 0 ? nj * ni : 1) * sizeof *jobE);
  dS = malloc((res->n_states ? res->n_states : 1) * sizeof *dS);
  if (!t->layers || !jobs || !jobE || !dS) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto fail;
  }
  /* jobs per layer: t ∓ ML, t ∓ δt, x ∓ dx, x ∓ δx (the composition ones only for alloys) */
  size_t used = 0;
  for (size_t k = 0; k < nl; k++) {
    const ew_layer *ly = &st->layers[k];
    ew_wf_tol_layer *L = &t->layers[k];
    L->layer = k;
    snprintf(L->name, sizeof L->name, "%s", ly->name);
    snprintf(L->material, sizeof L->material, "%s", ly->material);
    L->thickness_nm = ly->thickness_nm;
    L->ml_nm = ml_of(ly, &L->ml_default);
    L->has_x = ly->has_x;
    L->x = ly->x;
    L->dx = dx;
    L->fd_dt_nm = WF_FD_DT_NM;
    L->fd_dx = WF_FD_DX;
    double tv[4] = {ly->thickness_nm - L->ml_nm, ly->thickness_nm + L->ml_nm,
                    ly->thickness_nm - WF_FD_DT_NM, ly->thickness_nm + WF_FD_DT_NM};
    double xv[4] = {ly->x - dx, ly->x + dx, ly->x - WF_FD_DX, ly->x + WF_FD_DX};
    for (int q = 0; q < (ly->has_x ? 8 : 4); q++) {
      wf_job *jb = &jobs[used];
      if (q < 4) {
        jb->value = thickness_key(ly, L->ml_nm, tv[q], jb->key, sizeof jb->key);
      } else {
        snprintf(jb->key, sizeof jb->key, "%s.x", ly->name);
        jb->value = xv[q - 4];
      }
      jb->layer = k;
      jb->E = jobE + used * ni;
      used++;
    }
  }
  rc = run_jobs(m, jobs, used, defs, ni, nt, err);
  if (rc != EW_OK) goto fail;
  used = 0;
  for (size_t k = 0; k < nl; k++) {
    const ew_layer *ly = &st->layers[k];
    ew_wf_tol_layer *L = &t->layers[k];
    double **arr[] = {&L->ml_minus, &L->ml_plus, &L->dx_minus, &L->dx_plus,
                      &L->dEdt_hf,  &L->dEdt_fd, &L->dEdx_hf,  &L->dEdx_fd};
    for (int q = 0; q < 8; q++) {
      *arr[q] = malloc((ni ? ni : 1) * sizeof(double));
      if (!*arr[q]) {
        rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
        goto fail;
      }
      for (size_t i = 0; i < ni; i++) (*arr[q])[i] = NAN;
    }
    wf_job *J = &jobs[used];
    used += ly->has_x ? 8 : 4;
    for (size_t s = 0; s < res->n_states; s++) dS[s] = ew_wf_hf_dthickness(res, s, k);
    for (size_t i = 0; i < ni; i++) {
      double E0 = t->items[i].energy_eV;
      L->ml_minus[i] = J[0].E[i] - E0;
      L->ml_plus[i] = J[1].E[i] - E0;
      L->dEdt_fd[i] = (J[3].E[i] - J[2].E[i]) / (2.0 * WF_FD_DT_NM);
      if (!J[2].ok) L->dEdt_fd[i] = (J[3].E[i] - E0) / WF_FD_DT_NM;
      L->dEdt_hf[i] = item_deriv(res, &defs[i], dS);
    }
    if (!ly->has_x) continue;
    /* band-parameter derivatives of this layer from the stacks at x ∓ δx: whatever the
     * reader does with x (bowing, strain) is differentiated the same way */
    double lo_x = J[6].ok ? ly->x - WF_FD_DX : ly->x, hi_x = J[7].ok ? ly->x + WF_FD_DX : ly->x;
    const ew_bands *blo = J[6].ok ? &J[6].bands : &ly->bands, *bhi = J[7].ok ? &J[7].bands : &ly->bands;
    for (size_t s = 0; s < res->n_states; s++)
      dS[s] = ew_wf_hf_dparam(res, s, k, blo, bhi, hi_x - lo_x);
    for (size_t i = 0; i < ni; i++) {
      double E0 = t->items[i].energy_eV;
      L->dx_minus[i] = J[4].E[i] - E0;
      L->dx_plus[i] = J[5].E[i] - E0;
      double el = J[6].ok ? J[6].E[i] : E0, eh = J[7].ok ? J[7].E[i] : E0;
      L->dEdx_fd[i] = hi_x > lo_x ? (eh - el) / (hi_x - lo_x) : NAN;
      L->dEdx_hf[i] = item_deriv(res, &defs[i], dS);
    }
  }
  free(defs);
  free(jobs);
  free(jobE);
  free(dS);
  ew_result_free(res);
  *out = t;
  return EW_OK;
fail:
  free(defs);
  free(jobs);
  free(jobE);
  free(dS);
  ew_result_free(res);
  ew_wf_tolerance_free(t);
  return rc;
}

void ew_wf_tolerance_free(ew_wf_tolerance *t) {
  if (!t) return;
  for (size_t k = 0; t->layers && k < t->n_layers; k++) {
    ew_wf_tol_layer *L = &t->layers[k];
    free(L->ml_minus);
    free(L->ml_plus);
    free(L->dx_minus);
    free(L->dx_plus);
    free(L->dEdt_hf);
    free(L->dEdt_fd);
    free(L->dEdx_hf);
    free(L->dEdx_fd);
  }
  free(t->layers);
  free(t->items);
  free(t);
}

static void cell(FILE *out, const char *fmt, int width, double v) {
  if (isfinite(v)) fprintf(out, fmt, width, v);
  else fprintf(out, "%*s", width, "-");
}

void ew_wf_tolerance_print(const ew_wf_tolerance *t, FILE *out) {
  fprintf(out, "epiwell %s tolerance  %s\n", EW_VERSION, t->stack);
  fprintf(out, "Shifts of the main lines for one monolayer (ML) more or less of each layer and "
               "for x -/+ dx of alloy layers;\n"
               "dE/dt and dE/dx by Hellmann-Feynman (HF) and by central differences (FD).\n");
  for (size_t k = 0; k < t->n_layers; k++) {
    const ew_wf_tol_layer *L = &t->layers[k];
    fprintf(out, "\nlayer %zu %s (%s, %.3f nm)  1 ML = %.4f nm%s", k + 1, L->name, L->material,
            L->thickness_nm, L->ml_nm,
            L->ml_default ? " (no lattice constant: GaAs's a/2 used)" : "");
    if (L->has_x) fprintf(out, "  x = %.4f, dx = %g", L->x, L->dx);
    fprintf(out, "\n  %-10s %10s %9s %9s %11s %11s", "line", "energy_eV", "-1ML_meV", "+1ML_meV",
            "dEdt_HF", "dEdt_FD");
    if (L->has_x) fprintf(out, " %9s %9s %11s %11s", "-dx_meV", "+dx_meV", "dEdx_HF", "dEdx_FD");
    fprintf(out, "\n  %-10s %10s %9s %9s %11s %11s", "", "", "", "", "meV/nm", "meV/nm");
    if (L->has_x) fprintf(out, " %9s %9s %11s %11s", "", "", "meV/x", "meV/x");
    fputc('\n', out);
    for (size_t i = 0; i < t->n_items; i++) {
      const ew_wf_item *it = &t->items[i];
      if (!it->is_line) continue;
      fprintf(out, "  %-10s %10.6f", it->name, it->energy_eV);
      cell(out, " %*.3f", 9, 1e3 * L->ml_minus[i]);
      cell(out, " %*.3f", 9, 1e3 * L->ml_plus[i]);
      cell(out, " %*.4f", 11, 1e3 * L->dEdt_hf[i]);
      cell(out, " %*.4f", 11, 1e3 * L->dEdt_fd[i]);
      if (L->has_x) {
        cell(out, " %*.3f", 9, 1e3 * L->dx_minus[i]);
        cell(out, " %*.3f", 9, 1e3 * L->dx_plus[i]);
        cell(out, " %*.2f", 11, 1e3 * L->dEdx_hf[i]);
        cell(out, " %*.2f", 11, 1e3 * L->dEdx_fd[i]);
      }
      fputc('\n', out);
    }
  }
}

static void jarr(FILE *out, const char *name, const double *v, size_t n) {
  fprintf(out, ",\"%s\":[", name);
  for (size_t i = 0; i < n; i++) {
    if (i) fputc(',', out);
    jnum(out, v ? v[i] : NAN);
  }
  fputc(']', out);
}

void ew_wf_tolerance_print_json(const ew_wf_tolerance *t, FILE *out) {
  fputs("{\"stack\":", out);
  jstr(out, t->stack);
  fputs(",\"items\":[", out);
  for (size_t i = 0; i < t->n_items; i++) {
    fputs(i ? ",{\"name\":" : "{\"name\":", out);
    jstr(out, t->items[i].name);
    fprintf(out, ",\"kind\":\"%s\",\"energy_eV\":",
            !t->items[i].is_line ? "level" : t->items[i].interband ? "interband" : "intersubband");
    jnum(out, t->items[i].energy_eV);
    fputc('}', out);
  }
  fputs("],\"layers\":[", out);
  for (size_t k = 0; k < t->n_layers; k++) {
    const ew_wf_tol_layer *L = &t->layers[k];
    fprintf(out, "%s{\"index\":%zu,\"name\":", k ? "," : "", k + 1);
    jstr(out, L->name);
    fputs(",\"material\":", out);
    jstr(out, L->material);
    fputs(",\"thickness_nm\":", out);
    jnum(out, L->thickness_nm);
    fputs(",\"monolayer_nm\":", out);
    jnum(out, L->ml_nm);
    fprintf(out, ",\"monolayer_default\":%s,\"alloy\":%s,\"x\":", L->ml_default ? "true" : "false",
            L->has_x ? "true" : "false");
    jnum(out, L->has_x ? L->x : NAN);
    fputs(",\"dx\":", out);
    jnum(out, L->has_x ? L->dx : NAN);
    fputs(",\"fd_step_nm\":", out);
    jnum(out, L->fd_dt_nm);
    fputs(",\"fd_step_x\":", out);
    jnum(out, L->fd_dx);
    jarr(out, "shift_minus_1ML_eV", L->ml_minus, t->n_items);
    jarr(out, "shift_plus_1ML_eV", L->ml_plus, t->n_items);
    jarr(out, "dEdt_HF_eV_per_nm", L->dEdt_hf, t->n_items);
    jarr(out, "dEdt_FD_eV_per_nm", L->dEdt_fd, t->n_items);
    jarr(out, "shift_minus_dx_eV", L->has_x ? L->dx_minus : NULL, t->n_items);
    jarr(out, "shift_plus_dx_eV", L->has_x ? L->dx_plus : NULL, t->n_items);
    jarr(out, "dEdx_HF_eV", L->has_x ? L->dEdx_hf : NULL, t->n_items);
    jarr(out, "dEdx_FD_eV", L->has_x ? L->dEdx_fd : NULL, t->n_items);
    fputc('}', out);
  }
  fputs("]}\n", out);
}

/* ---- monolayer ladder ----------------------------------------------------------------- */
ew_status ew_wf_ladder_run(const ew_wf_model *m, const char *layer, int threads,
                           ew_wf_ladder **out, ew_error *err) {
  *out = NULL;
  const ew_stack *st = m->nominal;
  size_t k = 0;
  while (k < st->n_layers && strcmp(st->layers[k].name, layer) != 0) k++;
  if (k == st->n_layers)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--ladder %s: no such layer in %s", layer,
                   st->path);
  ew_result *res = NULL;
  ew_status rc = ew_solve(st, &m->opt, &res, err);
  if (rc != EW_OK) return rc;
  ew_wf_ladder *l = calloc(1, sizeof *l);
  wf_itemdef *defs = NULL;
  wf_job jobs[5];
  if (!l) {
    ew_result_free(res);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  l->layer = k;
  l->ml_nm = ml_of(&st->layers[k], &l->ml_default);
  rc = make_items(res, &l->items, &defs, &l->n_items, 0, err);
  if (rc == EW_OK) {
    l->energy_eV = malloc((l->n_items > 0 ? 5 * l->n_items : 1) * sizeof *l->energy_eV);
    if (!l->energy_eV) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  if (rc == EW_OK) {
    for (int q = 0; q < 5; q++) {
      l->thickness_nm[q] = st->layers[k].thickness_nm + (q - 2) * l->ml_nm;
      jobs[q].value = thickness_key(&st->layers[k], l->ml_nm, l->thickness_nm[q], jobs[q].key,
                                    sizeof jobs[q].key);
      jobs[q].layer = k;
      jobs[q].E = l->energy_eV + (size_t)q * l->n_items;
    }
    rc = run_jobs(m, jobs, 5, defs, l->n_items, ew_wf_threads(threads), err);
  }
  free(defs);
  ew_result_free(res);
  if (rc != EW_OK) {
    ew_wf_ladder_free(l);
    return rc;
  }
  *out = l;
  return EW_OK;
}

void ew_wf_ladder_free(ew_wf_ladder *l) {
  if (!l) return;
  free(l->items);
  free(l->energy_eV);
  free(l);
}

void ew_wf_ladder_print(const ew_wf_ladder *l, const ew_stack *st, FILE *out) {
  const ew_layer *ly = &st->layers[l->layer];
  fprintf(out, "Monolayer ladder of layer '%s' (%s, %.3f nm, 1 ML = %.4f nm%s)  %s\n", ly->name,
          ly->material, ly->thickness_nm, l->ml_nm,
          l->ml_default ? ": no lattice constant, GaAs's a/2 used" : "", st->path);
  fprintf(out, "  %-16s", "");
  static const char *const hd[5] = {"-2 ML", "-1 ML", "nominal", "+1 ML", "+2 ML"};
  for (int q = 0; q < 5; q++) fprintf(out, " %11s", hd[q]);
  fprintf(out, "\n  %-16s", "thickness_nm");
  for (int q = 0; q < 5; q++) fprintf(out, " %11.4f", l->thickness_nm[q]);
  fputc('\n', out);
  for (size_t i = 0; i < l->n_items; i++) {
    char nm[64];
    snprintf(nm, sizeof nm, "%s_eV", l->items[i].name);
    fprintf(out, "  %-16s", nm);
    for (int q = 0; q < 5; q++) cell(out, " %*.6f", 11, l->energy_eV[(size_t)q * l->n_items + i]);
    snprintf(nm, sizeof nm, "%s_%s", l->items[i].name, l->items[i].interband ? "nm" : "um");
    fprintf(out, "\n  %-16s", nm);
    for (int q = 0; q < 5; q++) {
      double e = l->energy_eV[(size_t)q * l->n_items + i];
      double w = EW_HC_EVNM / e / (l->items[i].interband ? 1.0 : 1e3);
      cell(out, l->items[i].interband ? " %*.2f" : " %*.4f", 11, isfinite(e) ? w : NAN);
    }
    fputc('\n', out);
  }
}

void ew_wf_ladder_print_json(const ew_wf_ladder *l, const ew_stack *st, FILE *out) {
  fputs("{\"stack\":", out);
  jstr(out, st->path);
  fputs(",\"layer\":", out);
  jstr(out, st->layers[l->layer].name);
  fputs(",\"monolayer_nm\":", out);
  jnum(out, l->ml_nm);
  fprintf(out, ",\"monolayer_default\":%s,\"offsets_ML\":[-2,-1,0,1,2]",
          l->ml_default ? "true" : "false");
  jarr(out, "thickness_nm", l->thickness_nm, 5);
  fputs(",\"lines\":[", out);
  for (size_t i = 0; i < l->n_items; i++) {
    fputs(i ? ",{\"name\":" : "{\"name\":", out);
    jstr(out, l->items[i].name);
    double e[5], w[5];
    for (int q = 0; q < 5; q++) {
      e[q] = l->energy_eV[(size_t)q * l->n_items + i];
      w[q] = EW_HC_EVNM / e[q];
    }
    jarr(out, "energy_eV", e, 5);
    jarr(out, "wavelength_nm", w, 5);
    fputc('}', out);
  }
  fputs("]}\n", out);
}

/* ---- benchmark ------------------------------------------------------------------------ */
ew_status ew_wf_benchmark(const ew_wf_model *m, const char *key, double from, double to,
                          size_t points, int threads, ew_wf_bench_result *out, ew_error *err) {
  memset(out, 0, sizeof *out);
  if (points < 2) points = 2;
  ew_wf_range r;
  memset(&r, 0, sizeof r);
  snprintf(r.key, sizeof r.key, "%s", key);
  r.from = from;
  r.to = to;
  r.step = (to - from) / (double)(points - 1);
  if (!(r.step > 0)) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "benchmark: need from < to");
  out->points = ew_wf_range_count(&r);
  out->threads = ew_wf_threads(threads);
  ew_wf_sweep_opt o;
  ew_wf_sweep_opt_default(&o);
  o.threads = 1;
  double t0 = now_s();
  ew_status rc = ew_wf_sweep(m, &r, 1, &o, NULL, NULL, err);
  double t1 = now_s();
  if (rc != EW_OK) return rc;
  o.threads = out->threads;
  rc = ew_wf_sweep(m, &r, 1, &o, NULL, NULL, err);
  double t2 = now_s();
  if (rc != EW_OK) return rc;
  out->seconds_1 = t1 - t0;
  out->seconds_n = t2 - t1;
  out->per_s_1 = (double)out->points / out->seconds_1;
  out->per_s_n = (double)out->points / out->seconds_n;
  return EW_OK;
}

/* ---- output sets ---------------------------------------------------------------------- */
void ew_wf_outset_init(ew_wf_outset *s) { memset(s, 0, sizeof *s); }

ew_status ew_wf_outset_add(ew_wf_outset *s, const char *path, const char *opt,
                           const char **tmp, ew_error *err) {
  *tmp = NULL;
  if (s->n >= EW_WF_SET_MAX)
    return ew_fail(err, EW_ERR_IO, path, 0, "%s: too many output files at once", opt);
  const char *sl = strrchr(path, '/');
  const char *base = sl ? sl + 1 : path;
  int dl = sl ? (int)(sl - path) + 1 : 0; /* the directory with its slash */
  char *t = s->tmp_path[s->n];
  int w = snprintf(t, EW_WF_PATH_MAX, "%.*s.epiwell-%ld-%zu-%s", dl, path, (long)getpid(), s->n,
                   base);
  if (!base[0] || strlen(path) >= EW_WF_PATH_MAX || w < 0 || w >= EW_WF_PATH_MAX)
    return ew_fail(err, EW_ERR_IO, path, 0, "%s %s: not a usable file name (empty or longer "
                   "than %d bytes)", opt, path, EW_WF_PATH_MAX - 64);
  snprintf(s->final_path[s->n], EW_WF_PATH_MAX, "%s", path);
  *tmp = t;
  s->n++;
  return EW_OK;
}

ew_status ew_wf_outset_commit(ew_wf_outset *s, int ok, ew_error *err) {
  ew_status rc = EW_OK;
  for (size_t k = 0; k < s->n; k++) {
    if (ok && rc == EW_OK) {
      if (rename(s->tmp_path[k], s->final_path[k]) != 0) {
        rc = ew_fail(err, EW_ERR_IO, s->final_path[k], 0, "cannot rename into place: %s",
                     strerror(errno));
        remove(s->tmp_path[k]);
      }
    } else {
      remove(s->tmp_path[k]); /* a file never written is no error */
    }
  }
  s->n = 0;
  return rc;
}

ew_status ew_wf_check_file_path(const char *path, const char *opt, ew_error *err) {
  if (!path || !path[0])
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants a file name, got an empty one", opt);
  size_t n = strlen(path);
  if (path[n - 1] == '/')
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: names a directory, not a file", opt, path);
  char dir[EW_WF_PATH_MAX];
  const char *sl = strrchr(path, '/');
  if (n >= sizeof dir - 64)
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s: file name too long", opt);
  if (!sl) snprintf(dir, sizeof dir, ".");
  else if (sl == path) snprintf(dir, sizeof dir, "/");
  else snprintf(dir, sizeof dir, "%.*s", (int)(sl - path), path);
  struct stat sb;
  if (stat(dir, &sb) != 0 || !S_ISDIR(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: directory %s does not exist", opt, path, dir);
  if (access(dir, W_OK | X_OK) != 0)
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: directory %s is not writable: %s", opt, path,
                   dir, strerror(errno));
  if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: exists and is not a regular file", opt, path);
  return EW_OK;
}

ew_status ew_wf_plot_companion(const char *path, const char *suffix, const char *opt, char *out,
                               size_t size, ew_error *err) {
  if (!ew_plot_format(path))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants a file name ending in .svg or .png, "
                   "got %s", opt, path ? path : "(none)");
  size_t n = strlen(path);
  int w = suffix && suffix[0]
              ? snprintf(out, size, "%.*s-%s%s", (int)(n - 4), path, suffix, path + n - 4)
              : snprintf(out, size, "%s", path);
  if (w < 0 || (size_t)w >= size)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: file name too long", opt, path);
  return EW_OK;
}

/* Write one chart into the set: its temporary name, then ew_plot_xy. */
static ew_status set_plot(ew_wf_outset *set, const char *final_path, const char *title,
                          const char *xlabel, const char *ylabel, size_t np, const double *x,
                          size_t ns, const double *const *y, const char *const *names,
                          ew_error *err) {
  const char *tmp;
  ew_status rc = ew_wf_outset_add(set, final_path, "--plot", &tmp, err);
  if (rc != EW_OK) return rc;
  rc = ew_plot_xy(tmp, title, xlabel, ylabel, np, x, ns, y, names, err);
  if (rc != EW_OK && err) snprintf(err->file, sizeof err->file, "%.500s", final_path);
  return rc;
}

/* ---- sweep pictures ------------------------------------------------------------------- */
const char *const EW_WF_PLOT_SUFFIX[EW_WF_PLOT_FILES] = {"", "interband", "intersubband"};

static int ends_with(const char *s, const char *tail) {
  size_t a = strlen(s), b = strlen(tail);
  return a >= b && !strcmp(s + a - b, tail);
}

/* Kind of a sweep column: 0 level (…_eV without '-'), 1 interband λ (…_nm), 2 intersubband
 * λ (…_um), -1 anything else. */
static int column_kind(const char *name) {
  if (ends_with(name, "_eV") && !strchr(name, '-')) return 0;
  if (ends_with(name, "_nm") && strchr(name, '-')) return 1;
  if (ends_with(name, "_um") && strchr(name, '-')) return 2;
  return -1;
}

/* Axis label of a varied key: the key, with its unit when the key is a known one. */
static void key_label(const char *key, char *buf, size_t size) {
  const char *unit = NULL;
  if (ends_with(key, "thickness") || !strcmp(key, "grid_step")) unit = "nm";
  else if (!strcmp(key, "temperature")) unit = "K";
  else if (ends_with(key, ".x") || ends_with(key, ".y")) unit = "composition";
  else if (ends_with(key, ".Ec") || ends_with(key, ".Ev")) unit = "eV";
  else if (!strcmp(key, "field")) unit = "kV/cm";
  if (unit) snprintf(buf, size, "%s (%s)", key, unit);
  else snprintf(buf, size, "%s", key);
}

static int cmp_double(const void *pa, const void *pb) {
  double a = *(const double *)pa, b = *(const double *)pb;
  return (a > b) - (a < b);
}

static const char *base_of(const char *path) {
  const char *sl = strrchr(path, '/');
  return sl ? sl + 1 : path;
}

ew_status ew_wf_sweep_plot(const ew_wf_table *t, const char *path, ew_wf_outset *set,
                           int written[EW_WF_PLOT_FILES], ew_error *err) {
  for (int f = 0; f < EW_WF_PLOT_FILES; f++) written[f] = 0;
  if (!t || t->nkeys < 1 || t->nkeys > 2 || t->nrows == 0)
    return ew_fail(err, EW_ERR_USAGE, path, 0, "--plot: the sweep has no points to draw");
  char paths[EW_WF_PLOT_FILES][EW_WF_PATH_MAX];
  for (int f = 0; f < EW_WF_PLOT_FILES; f++) {
    ew_status rc = ew_wf_plot_companion(path, EW_WF_PLOT_SUFFIX[f], "--plot", paths[f],
                                        sizeof paths[f], err);
    if (rc != EW_OK) return rc;
  }
  static const char *const ylab[EW_WF_PLOT_FILES] = {"energy (eV)", "wavelength (nm)",
                                                     "wavelength (\xc2\xb5m)"};
  static const char *const what1[EW_WF_PLOT_FILES] = {"levels", "interband lines",
                                                      "intersubband lines"};
  static const char *const col2[EW_WF_PLOT_FILES] = {"e1_eV", "e1-hh1_nm", "e1-e2_um"};
  size_t R = t->nrows, C = t->ncol;
  char xlabel[EW_WF_KEY_MAX + 32], title[800];
  key_label(t->names[0], xlabel, sizeof xlabel);
  ew_status rc = EW_OK;
  double *x = NULL, *ybuf = NULL, *second = NULL;
  const double **ys = NULL;
  char (*labels)[96] = NULL;
  const char **names = NULL;
  size_t *ix = NULL, *iy = NULL;
  size_t nx = 0, n2 = 0, maxs = C > EW_WF_PLOT_MAX_CURVES ? C : EW_WF_PLOT_MAX_CURVES;
  x = malloc(R * sizeof *x);
  ys = malloc(maxs * sizeof *ys);
  labels = malloc(maxs * sizeof *labels);
  names = malloc(maxs * sizeof *names);
  ix = malloc(R * sizeof *ix);
  iy = malloc(R * sizeof *iy);
  second = malloc(R * sizeof *second);
  ybuf = malloc(maxs * R * sizeof *ybuf);
  if (!x || !ys || !labels || !names || !ix || !iy || !second || !ybuf) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep picture)");
    goto done;
  }
  if (t->nkeys == 1) {
    for (size_t i = 0; i < R; i++) x[i] = t->v[i * C];
    nx = R;
  } else {
    /* rows run over the second key inside the first: x = the first key's values in order
     * of appearance, curves = the distinct second-key values (sorted) */
    for (size_t i = 0; i < R; i++) {
      double v0 = t->v[i * C];
      if (nx == 0 || x[nx - 1] != v0) x[nx++] = v0;
      ix[i] = nx - 1;
      second[i] = t->v[i * C + 1];
    }
    double *u = ybuf; /* scratch: sorted distinct second values */
    memcpy(u, second, R * sizeof *u);
    qsort(u, R, sizeof *u, cmp_double);
    for (size_t i = 0; i < R; i++)
      if (n2 == 0 || u[n2 - 1] != u[i]) u[n2++] = u[i];
    for (size_t i = 0; i < R; i++) {
      const double *hit = bsearch(&second[i], u, n2, sizeof *u, cmp_double);
      iy[i] = (size_t)(hit - u);
    }
    memcpy(second, u, n2 * sizeof *u); /* second[0..n2) = the distinct values */
  }
  for (int f = 0; f < EW_WF_PLOT_FILES; f++) {
    size_t ns = 0;
    if (t->nkeys == 1) {
      for (size_t c = 1; c < C; c++) {
        if (column_kind(t->names[c]) != f) continue;
        double *y = ybuf + ns * R;
        for (size_t i = 0; i < R; i++) y[i] = t->v[i * C + c];
        snprintf(labels[ns], sizeof labels[ns], "%.*s", (int)(strlen(t->names[c]) - 3),
                 t->names[c]);
        ys[ns] = y;
        names[ns] = labels[ns];
        ns++;
      }
      snprintf(title, sizeof title, "%s: %s against %s", base_of(t->stack), what1[f],
               t->names[0]);
    } else {
      size_t c = 2;
      while (c < C && strcmp(t->names[c], col2[f]) != 0) c++;
      if (c < C) {
        size_t S = n2 < EW_WF_PLOT_MAX_CURVES ? n2 : EW_WF_PLOT_MAX_CURVES;
        size_t pick[EW_WF_PLOT_MAX_CURVES];
        for (size_t q = 0; q < S; q++)
          pick[q] = S > 1 ? (q * (n2 - 1) + (S - 1) / 2) / (S - 1) : 0;
        for (size_t q = 0; q < S; q++) {
          double *y = ybuf + q * nx;
          for (size_t i = 0; i < nx; i++) y[i] = NAN;
          ys[q] = y;
          snprintf(labels[q], sizeof labels[q], "%s=%.6g", t->names[1], second[pick[q]]);
          names[q] = labels[q];
        }
        for (size_t i = 0; i < R; i++)
          for (size_t q = 0; q < S; q++)
            if (iy[i] == pick[q]) ybuf[q * nx + ix[i]] = t->v[i * C + c];
        ns = S;
      }
      snprintf(title, sizeof title, "%s: %.*s against %s, one curve per %s", base_of(t->stack),
               (int)(strlen(col2[f]) - 3), col2[f], t->names[0], t->names[1]);
    }
    if (ns == 0) continue; /* no such column in this sweep: no chart */
    rc = set_plot(set, paths[f], title, xlabel, ylab[f], nx, x, ns, ys, names, err);
    if (rc != EW_OK) goto done;
    written[f] = 1;
  }
done:
  free(x);
  free(ys);
  free(labels);
  free(names);
  free(ix);
  free(iy);
  free(second);
  free(ybuf);
  return rc;
}

/* ---- absorption spectra --------------------------------------------------------------- */
void ew_wf_spectra_free(ew_wf_spectra *s) {
  if (!s) return;
  free(s->E_eV);
  free(s->interband_rel);
  free(s->intersubband);
  free(s->grid);
  memset(s, 0, sizeof *s);
}

ew_status ew_wf_spectra_compute(const ew_result *r, double theta_deg, double n_refr,
                                ew_wf_spectra *s, ew_error *err) {
  memset(s, 0, sizeof *s);
  if (!(theta_deg >= 0 && theta_deg < 90))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--angle wants an internal angle in degrees in "
                   "[0, 90), got %g", theta_deg);
  if (!(n_refr > 0) || !isfinite(n_refr))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--index wants a refractive index > 0, got %g",
                   n_refr);
  const ew_stack *st = r->stack;
  s->theta_deg = theta_deg;
  s->n_refr = n_refr;
  s->sheet_density_cm2 = st->sheet_density_cm2;
  s->linewidth_meV = st->linewidth_meV;
  for (int g = 0; g < 2; g++) s->lo_eV[g] = s->hi_eV[g] = NAN;
  /* interband grid: 20 meV below the lowest exciton (PL) peak to 100 meV above the
   * highest listed line */
  double lo = INFINITY, hi = -INFINITY;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    lo = fmin(lo, ln->pl_peak_eV > 0 ? ln->pl_peak_eV : ln->energy_eV);
    hi = fmax(hi, ln->energy_eV);
  }
  if (isfinite(lo)) {
    s->lo_eV[0] = lo - 0.020;
    s->hi_eV[0] = hi + 0.100;
  } else {
    snprintf(s->note[0], sizeof s->note[0], "interband column empty: %s has no interband line "
             "(no bound electron and hole levels)", st->path);
  }
  /* intersubband grid: 0 to 1.5 × the highest e1 → ej line */
  size_t e1 = r->n_states;
  for (size_t i = 0; i < r->n_states && e1 == r->n_states; i++)
    if (r->states[i].band == EW_BAND_E && r->states[i].n == 1) e1 = i;
  double emax = -INFINITY;
  for (size_t j = 0; j < r->n_lines; j++)
    if (r->lines[j].kind == EW_LINE_INTERSUBBAND && r->lines[j].lower == e1)
      emax = fmax(emax, r->lines[j].energy_eV);
  if (!(st->sheet_density_cm2 > 0))
    snprintf(s->note[1], sizeof s->note[1], "intersubband column empty: %s sets no "
             "sheet_density (electrons per well in cm^-2, e.g. sheet_density = 5e11;)", st->path);
  else if (!isfinite(emax))
    snprintf(s->note[1], sizeof s->note[1], "intersubband column empty: %s has no e1->ej line "
             "(fewer than two bound electron levels)", st->path);
  else {
    s->lo_eV[1] = 0.0;
    s->hi_eV[1] = 1.5 * emax;
  }
  /* the union of the grids present, ascending, a shared energy once */
  const size_t N = EW_WF_SPECTRUM_POINTS;
  int have[2] = {!s->note[0][0], !s->note[1][0]};
  size_t cap = (size_t)(have[0] + have[1]) * N;
  s->E_eV = malloc((cap ? cap : 1) * sizeof *s->E_eV);
  s->grid = malloc(cap ? cap : 1);
  if (have[0]) s->interband_rel = malloc((cap ? cap : 1) * sizeof(double));
  if (have[1]) s->intersubband = malloc((cap ? cap : 1) * sizeof(double));
  if (!s->E_eV || !s->grid || (have[0] && !s->interband_rel) || (have[1] && !s->intersubband)) {
    ew_wf_spectra_free(s);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (spectra)");
  }
  size_t i[2] = {have[0] ? 0 : N, have[1] ? 0 : N}, n = 0;
#define GRID_E(g, k) (s->lo_eV[g] + (s->hi_eV[g] - s->lo_eV[g]) * (double)(k) / (double)(N - 1))
  while (i[0] < N || i[1] < N) {
    double a = i[0] < N ? GRID_E(0, i[0]) : INFINITY, b = i[1] < N ? GRID_E(1, i[1]) : INFINITY;
    double e = fmin(a, b);
    unsigned char bits = (unsigned char)((a == e ? 1 : 0) | (b == e ? 2 : 0));
    if (a == e) i[0]++;
    if (b == e) i[1]++;
    s->E_eV[n] = e;
    s->grid[n++] = bits;
  }
#undef GRID_E
  s->n = n;
  ew_status rc = EW_OK;
  if (have[0]) rc = ew_interband_absorption(r, st->linewidth_meV, n, s->E_eV, s->interband_rel, err);
  if (rc == EW_OK && have[1])
    rc = ew_intersubband_absorption(r, st->sheet_density_cm2, st->linewidth_meV, theta_deg,
                                    n_refr, n, s->E_eV, s->intersubband, err);
  if (rc != EW_OK) ew_wf_spectra_free(s);
  return rc;
}

void ew_wf_spectra_write_csv(const ew_wf_spectra *s, FILE *out) {
  fputs("E_eV,interband_rel,intersubband_fraction\n", out);
  for (size_t k = 0; k < s->n; k++) {
    fprintf(out, "%.10g,", s->E_eV[k]);
    if (s->interband_rel) fprintf(out, "%.10g", s->interband_rel[k]);
    fputc(',', out);
    if (s->intersubband) fprintf(out, "%.10g", s->intersubband[k]);
    fputc('\n', out);
  }
}

size_t ew_wf_spectra_peaks(const ew_wf_spectra *s, int which, ew_wf_peak *out, size_t cap) {
  const double *v = which ? s->intersubband : s->interband_rel;
  unsigned char bit = which ? 2 : 1;
  if (!v) return 0;
  double vmax = -INFINITY;
  for (size_t k = 0; k < s->n; k++)
    if (s->grid[k] & bit) vmax = fmax(vmax, v[k]);
  if (!(vmax > 0)) return 0;
  /* walk the spectrum's own grid: prev, cur, next are consecutive points of it */
  size_t cnt = 0, prev = SIZE_MAX, cur = SIZE_MAX;
  for (size_t k = 0; k <= s->n; k++) {
    if (k < s->n && !(s->grid[k] & bit)) continue;
    if (prev != SIZE_MAX && cur != SIZE_MAX && k < s->n && v[cur] > v[prev] &&
        v[cur] >= v[k] && v[cur] >= EW_WF_PEAK_FRACTION * vmax) {
      if (cnt < cap) out[cnt] = (ew_wf_peak){s->E_eV[cur], v[cur]};
      cnt++;
    }
    prev = cur;
    cur = k;
  }
  return cnt;
}

void ew_wf_spectra_print_peaks(const ew_wf_spectra *s, FILE *out) {
  fprintf(out, "\nAbsorption spectra (Lorentzian FWHM %g meV", s->linewidth_meV);
  if (s->intersubband)
    fprintf(out, "; intersubband: N_s = %g cm^-2 in e1, TM at %g deg inside n = %g",
            s->sheet_density_cm2, s->theta_deg, s->n_refr);
  fprintf(out, ")\n  peaks: local maxima above %g %% of each spectrum's maximum\n",
          100.0 * EW_WF_PEAK_FRACTION);
  fprintf(out, "  %-13s %10s %13s %12s\n", "spectrum", "energy_eV", "wavelength", "value");
  static const char *const nm[2] = {"interband", "intersubband"};
  for (int w = 0; w < 2; w++) {
    if (s->note[w][0]) {
      fprintf(out, "  %-13s none: %s\n", nm[w], s->note[w]);
      continue;
    }
    ew_wf_peak pk[64];
    size_t n = ew_wf_spectra_peaks(s, w, pk, 64);
    if (n == 0) fprintf(out, "  %-13s none above the threshold\n", nm[w]);
    for (size_t k = 0; k < n && k < 64; k++) {
      double lam = EW_HC_EVNM / pk[k].E_eV;
      char wl[32];
      if (!(pk[k].E_eV > 0)) snprintf(wl, sizeof wl, "-");
      else if (lam >= 2000) snprintf(wl, sizeof wl, "%.4f um", lam / 1e3);
      else snprintf(wl, sizeof wl, "%.2f nm", lam);
      fprintf(out, "  %-13s %10.6f %13s %12.5g\n", nm[w], pk[k].E_eV, wl, pk[k].value);
    }
    if (n > 64) fprintf(out, "  %-13s (%zu more)\n", nm[w], n - 64);
  }
}

ew_status ew_wf_spectra_plot(const ew_wf_spectra *s, const char *path, ew_wf_outset *set,
                             int written[2], ew_error *err) {
  written[0] = written[1] = 0;
  char paths[2][EW_WF_PATH_MAX];
  ew_status rc = ew_wf_plot_companion(path, "", "--spectra-plot", paths[0], sizeof paths[0], err);
  if (rc == EW_OK)
    rc = ew_wf_plot_companion(path, "intersubband", "--spectra-plot", paths[1], sizeof paths[1],
                              err);
  if (rc != EW_OK) return rc;
  double *x = malloc((s->n ? s->n : 1) * sizeof *x), *y = malloc((s->n ? s->n : 1) * sizeof *y);
  if (!x || !y) {
    free(x);
    free(y);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (spectra picture)");
  }
  for (int w = 0; w < 2 && rc == EW_OK; w++) {
    const double *v = w ? s->intersubband : s->interband_rel;
    if (!v) continue;
    size_t m = 0;
    for (size_t k = 0; k < s->n; k++)
      if (s->grid[k] & (w ? 2 : 1)) {
        x[m] = w ? 1e3 * s->E_eV[k] : s->E_eV[k];
        y[m++] = v[k];
      }
    char title[400];
    const char *nm = w ? "absorbed fraction per pass" : "interband_rel";
    if (w)
      snprintf(title, sizeof title, "Intersubband absorption (%g meV FWHM, %g deg, n = %g)",
               s->linewidth_meV, s->theta_deg, s->n_refr);
    else
      snprintf(title, sizeof title, "Interband absorption, relative (%g meV FWHM)",
               s->linewidth_meV);
    const double *ys[1] = {y};
    const char *names[1] = {nm};
    const char *tmp;
    rc = ew_wf_outset_add(set, paths[w], "--spectra-plot", &tmp, err);
    if (rc == EW_OK) {
      rc = ew_plot_xy(tmp, title, w ? "photon energy (meV)" : "photon energy (eV)",
                      w ? "fraction absorbed per pass" : "relative absorption", m, x, 1, ys,
                      names, err);
      if (rc != EW_OK && err) snprintf(err->file, sizeof err->file, "%.500s", paths[w]);
    }
    if (rc == EW_OK) written[w] = 1;
  }
  free(x);
  free(y);
  return rc;
}
