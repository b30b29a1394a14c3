/* api_output_file.c — output files written atomically, for the public API (epiwell.h): one
 * file (an ew_atomic_file) and all outputs of one run (an ew_atomic_txn) behind opaque
 * handles; atomic.c makes and names every temporary. */
#include <stdio.h>
#include <stdlib.h>

#include "atomic.h"
#include "epiwell.h"
#include "error.h"
#include "output.h"

struct ew_output_file {
  ew_atomic_file a;
};

ew_status ew_output_file_open(const char *path, ew_output_file **out, ew_error *err) {
  if (out) *out = NULL;
  if (!path || !out)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_file_open: NULL argument");
  ew_output_file *f = calloc(1, sizeof *f);
  if (!f) return ew_fail(err, EW_ERR_NOMEM, path, 0, "out of memory");
  ew_status st = ew_atomic_open(&f->a, path, err);
  if (st != EW_OK) {
    free(f);
    return st;
  }
  *out = f;
  return EW_OK;
}

FILE *ew_output_file_stream(ew_output_file *f) { return f ? f->a.f : NULL; }

ew_status ew_output_file_commit(ew_output_file *f, ew_error *err) {
  if (!f) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_file_commit: NULL argument");
  ew_status st = ew_atomic_commit(&f->a, err);
  free(f);
  return st;
}

void ew_output_file_abort(ew_output_file *f) {
  if (!f) return;
  ew_atomic_abort(&f->a);
  free(f);
}

/* ---- all outputs of one run ------------------------------------------------------------ */
struct ew_output_set {
  ew_atomic_txn t;
};

/* Names of the CSV set (output.c) that a new set replaces even when it does not write them:
 * the wavefunctions in the other format would be stale. */
static const char *const csv_names[] = {"profile.csv", "levels.csv", "lines.csv",
                                        "wavefunctions.csv", "wavefunctions.csv.gz", NULL};

ew_status ew_output_set_create(ew_output_set **out, ew_error *err) {
  if (!out) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_set_create: NULL argument");
  *out = malloc(sizeof **out);
  if (!*out) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  ew_atomic_txn_init(&(*out)->t);
  return EW_OK;
}

static ew_status give(const char *w, char *work, size_t size, const char *path, ew_error *err) {
  if ((size_t)snprintf(work, size, "%s", w) >= size)
    return ew_fail(err, EW_ERR_USAGE, path, 0, "staged name longer than the buffer (%zu bytes)",
                   size);
  return EW_OK;
}

ew_status ew_output_set_dir(ew_output_set *s, const char *dir, char *work, size_t size,
                            ew_error *err) {
  if (!s || !dir || !work || !size)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_set_dir: NULL argument");
  const char *w;
  ew_status st = ew_atomic_txn_dir(&s->t, dir, csv_names, &w, err);
  return st == EW_OK ? give(w, work, size, dir, err) : st;
}

ew_status ew_output_set_file(ew_output_set *s, const char *path, int make_dir, char *work,
                             size_t size, ew_error *err) {
  if (!s || !path || !work || !size)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_set_file: NULL argument");
  const char *w;
  ew_status st = ew_atomic_txn_file(&s->t, path, make_dir, &w, err);
  return st == EW_OK ? give(w, work, size, path, err) : st;
}

ew_status ew_output_set_write_csv(ew_output_set *s, const ew_result *res, int gzip,
                                  ew_error *err) {
  if (!s || !res)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_set_write_csv: NULL argument");
  const ew_atomic_txn *t = &s->t;
  const char *work = t->dir_stage >= 0 ? t->stage[t->dir_stage].work : t->work;
  if (!work[0])
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_set_write_csv: no directory staged");
  ew_status st = ew_output_csv_dir(res, work, gzip, err);
  if (st != EW_OK) ew_atomic_txn_explain(t, err);
  return st;
}

void ew_output_set_explain(const ew_output_set *s, ew_error *err) {
  if (s) ew_atomic_txn_explain(&s->t, err);
}

ew_status ew_output_set_commit(ew_output_set *s, ew_error *err) {
  if (!s) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_output_set_commit: NULL argument");
  ew_status st = ew_atomic_txn_commit(&s->t, err);
  free(s);
  return st;
}

void ew_output_set_abort(ew_output_set *s) {
  if (!s) return;
  ew_atomic_txn_abort(&s->t);
  free(s);
}
