/* api_output_file.c — one output file written atomically, for the public API (epiwell.h):
 * an ew_atomic_file (atomic.c makes and names the temporary) behind an opaque handle. */
#include <stdlib.h>

#include "atomic.h"
#include "epiwell.h"
#include "error.h"

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
