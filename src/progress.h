/* progress.h — the caller's progress callback (ew_progress_fn, epiwell.h) and cancelling: a
 * count of finished steps, the calls serialised, the first nonzero return remembered.
 *
 * Shared by the threads of a workflow: ew_progress_step may be called from any of them (the
 * callback then runs on that thread, one call at a time, `done` strictly increasing), and a
 * thread about to start a step asks ew_progress_cancelled first.  After the callback asked
 * to cancel it is not called again. */
#ifndef EW_PROGRESS_H
#define EW_PROGRESS_H

#include <stddef.h>

#include "epiwell.h"

typedef struct {
  ew_progress_fn fn; /* may be NULL: counting only, never cancelled */
  void *ctx;
  size_t done, total;
  int cancelled;     /* 1 once fn returned nonzero (read and written atomically) */
} ew_progress;

void ew_progress_init(ew_progress *p, ew_progress_fn fn, void *ctx, size_t total);
/* One more step finished: ++done, then fn(ctx, done, total) unless cancelled already.
 * Returns 1 when the work is cancelled (by this call or an earlier one), else 0. */
int ew_progress_step(ew_progress *p);
/* Set done to n (>= done) with one call, as a converged loop skipping its remaining budget. */
int ew_progress_step_to(ew_progress *p, size_t n);
int ew_progress_cancelled(const ew_progress *p); /* NULL: 0 */
/* EW_ERR_CANCELLED with "what cancelled by the progress callback after D of T steps". */
ew_status ew_progress_fail(const ew_progress *p, const char *what, const char *steps,
                           ew_error *err);

#endif
