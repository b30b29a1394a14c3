/* testutil.h — small helpers shared by the test programs. */
#ifndef EW_TESTUTIL_H
#define EW_TESTUTIL_H

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <dirent.h>
#include <errno.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cmocka.h>

#include "solve.h"
#include "stack.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

/* A stack of user-defined layers built in memory: thickness (nm), Ec, Ev (eV), masses. */
typedef struct {
  double t, Ec, Ev, me, mhh, mlh;
} tu_layer;

static inline ew_stack *tu_stack(size_t n, const tu_layer *ly) {
  ew_stack *st = calloc(1, sizeof *st);
  st->layers = calloc(n, sizeof *st->layers);
  st->n_layers = n;
  st->temperature_K = 300;
  double z = 0;
  for (size_t k = 0; k < n; k++) {
    ew_layer *L = &st->layers[k];
    snprintf(L->name, sizeof L->name, "layer%zu", k + 1);
    snprintf(L->material, sizeof L->material, "user");
    L->thickness_nm = ly[k].t;
    L->z_start_nm = z;
    z += ly[k].t;
    L->user_material = 1;
    L->bands.Ec_eV = ly[k].Ec;
    L->bands.Ev_eV = L->bands.Ev_hh_eV = L->bands.Ev_lh_eV = ly[k].Ev;
    L->bands.Eg_G_eV = ly[k].Ec - ly[k].Ev;
    L->bands.me = ly[k].me;
    L->bands.mhh_z = L->bands.mhh_par = ly[k].mhh;
    L->bands.mlh_z = L->bands.mlh_par = ly[k].mlh;
  }
  st->total_nm = z;
  return st;
}

static inline void tu_stack_free(ew_stack *st) {
  if (!st) return;
  free(st->layers);
  free(st);
}

/* Check |got − want| <= tol, printing both and why the tolerance is what it is. */
#define TU_NEAR(got, want, tol, why)                                                      \
  do {                                                                                    \
    double g_ = (got), w_ = (want), t_ = (tol);                                           \
    if (!(fabs(g_ - w_) <= t_)) {                                                         \
      print_error("%s:%d: %s: got %.12g, want %.12g, |diff| %.3g > tol %.3g (%s)\n",      \
                  __FILE__, __LINE__, #got, g_, w_, fabs(g_ - w_), t_, why);              \
      fail();                                                                             \
    }                                                                                     \
  } while (0)

/* Read a stack from text against cat and solve it (opt may be NULL); NULL on failure, with the
 * reason printed.  *st receives the stack (free it after the result). */
static inline ew_result *tu_solve_text(const ew_catalogue *cat, const char *text, ew_stack **st,
                                       const ew_options *opt) {
  ew_error err;
  char buf[2048];
  *st = NULL;
  if (ew_stack_read_string(text, "test", cat, st, &err) != EW_OK) {
    print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
    return NULL;
  }
  ew_result *r = NULL;
  if (ew_solve(*st, opt, &r, &err) != EW_OK) print_error("%s\n", ew_error_text(&err, buf, sizeof buf));
  return r;
}

/* Solve st at grid step step_nm into *res for a group fixture; 0 ok, −1 with the reason on
 * stderr naming the test program who. */
static inline int tu_fixture_solve(const char *who, const ew_stack *st, double step_nm,
                                   ew_result **res) {
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = step_nm;
  ew_error err;
  memset(&err, 0, sizeof err);
  if (ew_solve(st, &opt, res, &err) == EW_OK) return 0;
  fprintf(stderr, "%s: solving the fixture failed: %s\n", who, err.message);
  return -1;
}

/* A fresh temporary directory $TMPDIR/epiwell-test-TAG.XXXXXX (or under /tmp) into buf;
 * 0 ok, −1 with the reason on stderr. */
static inline int tu_mkdtemp(const char *tag, char *buf, size_t size) {
  const char *t = getenv("TMPDIR");
  snprintf(buf, size, "%s/epiwell-test-%s.XXXXXX", t && *t ? t : "/tmp", tag);
  if (mkdtemp(buf)) return 0;
  fprintf(stderr, "test_%s: mkdtemp(%s): %s\n", tag, buf, strerror(errno));
  return -1;
}

/* Catalogue from the project's materials/ (tests run from the project root). */
static inline int tu_load_catalogue(ew_catalogue **cat) {
  ew_error err;
  return ew_catalogue_load("materials", cat, &err) == EW_OK ? 0 : -1;
}

/* The catalogue fixture of a test file: TU_CATALOGUE_FIXTURE defines `cat` with the cmocka
 * group fixtures setup/teardown that load and free it, and read_stack(text): the stack read
 * against it (the test fails, with the reader's message, when the text is refused). */
#define TU_CATALOGUE_FIXTURE                                                                 \
  static ew_catalogue *cat;                                                                  \
  static int setup(void **state) {                                                           \
    (void)state;                                                                             \
    return tu_load_catalogue(&cat);                                                          \
  }                                                                                          \
  static int teardown(void **state) {                                                        \
    (void)state;                                                                             \
    ew_catalogue_free(cat);                                                                  \
    return 0;                                                                                \
  }                                                                                          \
  static ew_stack *read_stack(const char *text) {                                            \
    ew_stack *st = NULL;                                                                     \
    ew_error err;                                                                            \
    if (ew_stack_read_string(text, "test", cat, &st, &err)) print_error("%s\n", err.message); \
    assert_non_null(st);                                                                     \
    return st;                                                                               \
  }

/* Remove path and, for a directory, everything under it (restoring write permission first,
 * so read-only test directories go too). */
static inline void tu_rm_tree(const char *path) {
  struct stat sb;
  if (lstat(path, &sb) != 0) return;
  if (S_ISDIR(sb.st_mode)) {
    chmod(path, 0700);
    DIR *d = opendir(path);
    if (d) {
      struct dirent *e;
      while ((e = readdir(d)) != NULL) {
        if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
        char sub[1200];
        int len = snprintf(sub, sizeof sub, "%s/%s", path, e->d_name);
        if (len > 0 && (size_t)len < sizeof sub) tu_rm_tree(sub); /* test paths are short */
      }
      closedir(d);
    }
    rmdir(path);
  } else {
    remove(path);
  }
}

#endif
