/* roundtrip.h — what the round-trip tests (test_roundtrip*.c) share: running the epiwell
 * command, an independent reader for the JSON and CSV it writes (written here, sharing no
 * code with src/output.c or src/workflow.c), and comparisons to the printed precision.
 *
 * The round trip: the command writes a file; the test parses it and compares every field
 * with the value the library gives through the public API (src/epiwell.h) for the same
 * input.  A writer that prints the wrong member, swaps two columns or loses digits fails. */
#ifndef EW_ROUNDTRIP_H
#define EW_ROUNDTRIP_H

#include <ctype.h>
#include <math.h>
#include <sys/wait.h>

#include "testutil.h"

#include "epiwell.h"

/* ---- the command and a scratch directory ---------------------------------------------- */
typedef struct {
  char bin[1024]; /* the epiwell command beside the test binary's directory */
  char tmp[1024]; /* scratch directory, removed at the end */
} rt_env;

/* bin = dirname(argv0)/../epiwell (build/tests/test_X → build/epiwell); 0 ok. */
static inline int rt_env_init(rt_env *e, const char *argv0, const char *tag) {
  const char *sl = strrchr(argv0, '/');
  int len = sl ? (int)(sl - argv0) : 1;
  snprintf(e->bin, sizeof e->bin, "%.*s/../epiwell", len, sl ? argv0 : ".");
  if (access(e->bin, X_OK) != 0) {
    fprintf(stderr, "%s: the command %s is missing (build it first)\n", tag, e->bin);
    return -1;
  }
  /* the command finds the catalogue of this tree, as the library tests do */
  char cwd[900];
  if (!getcwd(cwd, sizeof cwd)) return -1;
  char mat[1000];
  snprintf(mat, sizeof mat, "%s/materials", cwd);
  setenv("EPIWELL_MATERIALS", mat, 1);
  return tu_mkdtemp(tag, e->tmp, sizeof e->tmp);
}

/* Write text to tmp/name; path receives the full name.  0 ok. */
static inline int rt_write(const rt_env *e, const char *name, const char *text, char *path,
                           size_t size) {
  snprintf(path, size, "%s/%s", e->tmp, name);
  FILE *f = fopen(path, "w");
  if (!f) return -1;
  fputs(text, f);
  return fclose(f) == 0 ? 0 : -1;
}

/* Run "bin ARGS > out" (stderr to out.err); returns the exit status, -1 when it could not
 * run.  args is pasted into a shell command line: the tests pass only their own paths. */
static inline int rt_run(const rt_env *e, const char *args, const char *out) {
  char cmd[8192];
  snprintf(cmd, sizeof cmd, "'%s' %s > '%s' 2> '%s.err'", e->bin, args, out, out);
  int rc = system(cmd);
  if (rc == -1 || !WIFEXITED(rc)) return -1;
  if (WEXITSTATUS(rc) != 0) {
    char errp[1400];
    snprintf(errp, sizeof errp, "%.1300s.err", out);
    FILE *f = fopen(errp, "r");
    char line[512];
    print_error("epiwell %s: exit %d\n", args, WEXITSTATUS(rc));
    while (f && fgets(line, sizeof line, f)) print_error("  %s", line);
    if (f) fclose(f);
  }
  return WEXITSTATUS(rc);
}

/* The whole file, NUL-terminated (free it), or NULL. */
static inline char *rt_slurp(const char *path) {
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  size_t cap = 1 << 16, n = 0;
  char *buf = malloc(cap);
  size_t got;
  while (buf && (got = fread(buf + n, 1, cap - n - 1, f)) > 0) {
    n += got;
    if (n + 1 == cap) {
      char *nb = realloc(buf, cap *= 2);
      if (!nb) free(buf);
      buf = nb;
    }
  }
  fclose(f);
  if (buf) buf[n] = '\0';
  return buf;
}

/* ---- JSON (RFC 8259) ------------------------------------------------------------------ */
typedef enum { RJ_NULL, RJ_BOOL, RJ_NUM, RJ_STR, RJ_ARR, RJ_OBJ } rj_type;
typedef struct rj {
  rj_type t;
  double num; /* RJ_NUM; RJ_BOOL: 0 or 1 */
  char *str;  /* RJ_STR */
  size_t n;   /* RJ_ARR, RJ_OBJ: members */
  struct rj *item;
  char **key; /* RJ_OBJ */
} rj;

static inline void rj_free(rj *v) {
  if (!v) return;
  for (size_t i = 0; i < v->n; i++) {
    rj_free(&v->item[i]);
    if (v->key) free(v->key[i]);
  }
  free(v->item);
  free(v->key);
  free(v->str);
  memset(v, 0, sizeof *v);
}

static inline const char *rj_ws(const char *p) {
  while (*p == ' ' || *p == '\t' || *p == '\n' || *p == '\r') p++;
  return p;
}

/* A string at p (after the opening quote); *out receives it (ASCII escapes decoded, \u
 * beyond ASCII kept as '?').  Returns the position after the closing quote, NULL if bad. */
static inline const char *rj_string(const char *p, char **out) {
  size_t cap = 64, n = 0;
  char *s = malloc(cap);
  while (s && *p && *p != '"') {
    char c = *p++;
    if (c == '\\') {
      c = *p++;
      if (c == 'n') c = '\n';
      else if (c == 't') c = '\t';
      else if (c == 'r') c = '\r';
      else if (c == 'b') c = '\b';
      else if (c == 'f') c = '\f';
      else if (c == 'u') {
        unsigned u = 0;
        for (int k = 0; k < 4; k++, p++) {
          if (!isxdigit((unsigned char)*p)) goto bad;
          u = 16 * u + (unsigned)(isdigit((unsigned char)*p) ? *p - '0' : (tolower(*p) - 'a' + 10));
        }
        c = u < 0x80 ? (char)u : '?';
      } else if (c != '"' && c != '\\' && c != '/') {
        goto bad;
      }
    } else if ((unsigned char)c < 0x20) {
      goto bad; /* control characters must be escaped */
    }
    if (n + 2 > cap) {
      char *ns = realloc(s, cap *= 2);
      if (!ns) goto bad;
      s = ns;
    }
    s[n++] = c;
  }
  if (!s || *p != '"') goto bad;
  s[n] = '\0';
  *out = s;
  return p + 1;
bad:
  free(s);
  return NULL;
}

static inline const char *rj_value(const char *p, rj *v, int depth);

static inline const char *rj_members(const char *p, rj *v, int obj, int depth) {
  char close = obj ? '}' : ']';
  p = rj_ws(p);
  if (*p == close) return p + 1;
  for (;;) {
    rj *ni = realloc(v->item, (v->n + 1) * sizeof *ni);
    if (!ni) return NULL;
    v->item = ni;
    memset(&v->item[v->n], 0, sizeof *ni);
    if (obj) {
      char **nk = realloc(v->key, (v->n + 1) * sizeof *nk);
      if (!nk) return NULL;
      v->key = nk;
      v->key[v->n] = NULL;
      p = rj_ws(p);
      if (*p != '"' || !(p = rj_string(p + 1, &v->key[v->n]))) return NULL;
      p = rj_ws(p);
      if (*p++ != ':') return NULL;
    }
    v->n++;
    if (!(p = rj_value(p, &v->item[v->n - 1], depth + 1))) return NULL;
    p = rj_ws(p);
    if (*p == ',') {
      p++;
      continue;
    }
    return *p == close ? p + 1 : NULL;
  }
}

static inline const char *rj_value(const char *p, rj *v, int depth) {
  if (depth > 64) return NULL;
  p = rj_ws(p);
  memset(v, 0, sizeof *v);
  if (*p == '{') return v->t = RJ_OBJ, rj_members(p + 1, v, 1, depth);
  if (*p == '[') return v->t = RJ_ARR, rj_members(p + 1, v, 0, depth);
  if (*p == '"') return v->t = RJ_STR, rj_string(p + 1, &v->str);
  if (!strncmp(p, "null", 4)) return v->t = RJ_NULL, p + 4;
  if (!strncmp(p, "true", 4)) return v->t = RJ_BOOL, v->num = 1, p + 4;
  if (!strncmp(p, "false", 5)) return v->t = RJ_BOOL, v->num = 0, p + 5;
  /* number: -?digits[.digits][e[+-]digits], checked before strtod (which takes more) */
  const char *q = p;
  if (*q == '-') q++;
  if (!isdigit((unsigned char)*q)) return NULL;
  char *end;
  v->t = RJ_NUM;
  v->num = strtod(p, &end);
  return end > p ? end : NULL;
}

/* Parse a whole document (nothing but white space may follow).  0 ok. */
static inline int rj_parse(const char *text, rj *out) {
  const char *p = rj_value(text, out, 0);
  if (!p || *rj_ws(p) != '\0') {
    rj_free(out);
    return -1;
  }
  return 0;
}

/* Member key of an object, or NULL. */
static inline const rj *rj_get(const rj *o, const char *key) {
  if (!o || o->t != RJ_OBJ) return NULL;
  for (size_t i = 0; i < o->n; i++)
    if (!strcmp(o->key[i], key)) return &o->item[i];
  return NULL;
}

/* ---- CSV (no quoting: the writers put no commas or quotes in a cell) -------------------- */
typedef struct {
  size_t ncol, nrows;
  char **head; /* [ncol] */
  char **cell; /* [nrows × ncol], row-major; "" for an empty cell */
  char *buf;
} rcsv;

static inline void rcsv_free(rcsv *c) {
  if (!c) return;
  free(c->head);
  free(c->cell);
  free(c->buf);
  memset(c, 0, sizeof *c);
}

/* Read a CSV whose first line is a header; every row must have ncol cells.  0 ok. */
static inline int rcsv_read(const char *path, rcsv *c) {
  memset(c, 0, sizeof *c);
  if (!(c->buf = rt_slurp(path))) return -1;
  size_t lines = 0;
  for (char *p = c->buf; *p; p++) lines += *p == '\n';
  char *save = NULL, *line = strtok_r(c->buf, "\n", &save);
  if (!line) return -1;
  c->ncol = 1;
  for (char *p = line; *p; p++) c->ncol += *p == ',';
  c->head = calloc(c->ncol, sizeof *c->head);
  c->cell = calloc((lines + 1) * c->ncol, sizeof *c->cell);
  if (!c->head || !c->cell) return -1;
  for (int row = -1; line; line = strtok_r(NULL, "\n", &save), row++) {
    char **dst = row < 0 ? c->head : c->cell + (size_t)row * c->ncol;
    size_t k = 0;
    for (char *p = line;; p++) {
      if (k >= c->ncol) return -1;
      if (*p == ',' || *p == '\0') {
        int last = *p == '\0';
        *p = '\0';
        dst[k++] = line;
        line = p + 1;
        if (last) break;
      }
    }
    if (k != c->ncol) return -1;
    if (row >= 0) c->nrows = (size_t)row + 1;
  }
  return 0;
}

/* Column of name, or -1. */
static inline int rcsv_col(const rcsv *c, const char *name) {
  for (size_t j = 0; j < c->ncol; j++)
    if (!strcmp(c->head[j], name)) return (int)j;
  return -1;
}

static inline const char *rcsv_at(const rcsv *c, size_t row, int col) {
  return c->cell[row * c->ncol + (size_t)col];
}

/* A cell as a number; NAN for an empty cell, and a failed check for anything else. */
static inline double rcsv_num(const rcsv *c, size_t row, int col) {
  const char *s = rcsv_at(c, row, col);
  if (!*s) return NAN;
  char *end;
  double v = strtod(s, &end);
  if (*end) {
    print_error("CSV cell [%zu][%s] = '%s' is not a number\n", row, c->head[col], s);
    fail();
  }
  return v;
}

/* ---- comparisons to the printed precision --------------------------------------------- */
/* Half a unit of the last digit printed, plus a hair for the binary→decimal rounding. */
static inline double rt_tol_sig(double want, int digits) { /* %.{digits-1}e, %.{digits}g */
  return 0.5 * pow(10.0, 1 - digits) * fabs(want) * 1.000001 + 1e-300;
}
static inline double rt_tol_fix(double want, int decimals) { /* %.{decimals}f */
  return 0.5 * pow(10.0, -decimals) * 1.000001 + 4e-16 * fabs(want);
}

/* got == want within tol, both NaN counting as equal (an empty cell for an absent value). */
#define RT_SAME(got, want, tol, what)                                                      \
  do {                                                                                     \
    double g2_ = (got), w2_ = (want);                                                      \
    if (isnan(w2_) || isnan(g2_)) {                                                        \
      if (!(isnan(w2_) && isnan(g2_))) {                                                   \
        print_error("%s:%d: %s: got %.12g, want %.12g (one of them absent)\n", __FILE__,   \
                    __LINE__, what, g2_, w2_);                                             \
        fail();                                                                            \
      }                                                                                    \
    } else if (!(fabs(g2_ - w2_) <= (tol))) {                                              \
      print_error("%s:%d: %s: got %.12g, want %.12g, |diff| %.3g > %.3g (printed "         \
                  "precision)\n", __FILE__, __LINE__, what, g2_, w2_, fabs(g2_ - w2_),     \
                  (double)(tol));                                                          \
      fail();                                                                              \
    }                                                                                      \
  } while (0)

/* JSON member key of object o as a number (null → NAN); fails when missing or not a number */
static inline double rj_num(const rj *o, const char *key) {
  const rj *v = rj_get(o, key);
  if (!v) {
    print_error("JSON: member \"%s\" missing\n", key);
    fail();
  }
  if (v->t == RJ_NULL) return NAN;
  if (v->t != RJ_NUM && v->t != RJ_BOOL) {
    print_error("JSON: member \"%s\" is not a number\n", key);
    fail();
  }
  return v->num;
}

static inline const char *rj_str(const rj *o, const char *key) {
  const rj *v = rj_get(o, key);
  if (!v || v->t != RJ_STR) {
    print_error("JSON: member \"%s\" missing or not a string\n", key);
    fail();
  }
  return v->str;
}

/* %.10g, the JSON writers' format */
#define RT_JSON(o, key, want, what)                                                        \
  do {                                                                                     \
    char w3_[160];                                                                         \
    snprintf(w3_, sizeof w3_, "%s.%s", what, key);                                         \
    double ww3_ = (want);                                                                  \
    RT_SAME(rj_num(o, key), ww3_, rt_tol_sig(ww3_, 10), w3_);                              \
  } while (0)

#define RT_STREQ(got, want, what)                                                          \
  do {                                                                                     \
    const char *g4_ = (got), *w4_ = (want);                                                \
    if (strcmp(g4_, w4_)) {                                                                \
      print_error("%s:%d: %s: got '%s', want '%s'\n", __FILE__, __LINE__, what, g4_, w4_); \
      fail();                                                                              \
    }                                                                                      \
  } while (0)

/* Index of the state with band b and index n in a result, or SIZE_MAX. */
static inline size_t rt_state_of(const ew_result *r, ew_band b, int n) {
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (ew_result_state(r, i)->band == b && ew_result_state(r, i)->n == n) return i;
  return SIZE_MAX;
}

/* Index of the state labelled label, or SIZE_MAX. */
static inline size_t rt_state_labelled(const ew_result *r, const char *label) {
  for (size_t i = 0; i < ew_result_state_count(r); i++)
    if (!strcmp(ew_result_state(r, i)->label, label)) return i;
  return SIZE_MAX;
}

/* Planck constant times c, eV nm, from CODATA 2018 (exact h, c and e: hc/e =
 * 1239.841984… eV nm), the same value the library derives. */
#define RT_HC_EVNM 1239.84198433200208

#endif
