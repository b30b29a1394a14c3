/* progress.c — progress counts and cancelling (see progress.h). */
#include "progress.h"

#include "error.h"
#include "parallel.h"

void ew_progress_init(ew_progress *p, ew_progress_fn fn, void *ctx, size_t total) {
  p->fn = fn;
  p->ctx = ctx;
  p->done = 0;
  p->total = total;
  p->cancelled = 0;
}

/* One critical section: the count, the call and the cancel flag change together, so the
 * callback sees every count once and in order whichever thread finished the step.  step:
 * one more, else up to `to`. */
static int advance(ew_progress *p, int step, size_t to) {
  int c = 0;
  EW_OMP(omp critical(ew_progress))
  {
    if (!p->cancelled) { /* steps finishing after a cancel are not counted */
      if (step) p->done++;
      else if (to > p->done) p->done = to;
      if (p->fn && p->fn(p->ctx, p->done, p->total) != 0) {
        EW_OMP(omp atomic write)
        p->cancelled = 1;
      }
    }
    c = p->cancelled;
  }
  return c;
}

int ew_progress_step(ew_progress *p) { return advance(p, 1, 0); }

int ew_progress_step_to(ew_progress *p, size_t n) { return advance(p, 0, n); }

int ew_progress_cancelled(const ew_progress *p) {
  if (!p) return 0;
  int c;
  EW_OMP(omp atomic read)
  c = p->cancelled;
  return c;
}

ew_status ew_progress_fail(const ew_progress *p, const char *what, const char *steps,
                           ew_error *err) {
  return ew_fail(err, EW_ERR_CANCELLED, NULL, 0,
                 "%s cancelled by the progress callback after %zu of %zu %s", what, p->done,
                 p->total, steps);
}
