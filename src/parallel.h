/* parallel.h — the threads of the workflows (sweeps, matching, tolerances): how many, which
 * one is running, and the first failure in point order, so that an error reported by a
 * parallel loop does not depend on the thread count or the scheduling.
 *
 * OpenMP pragmas are spelt through EW_OMP so that a build without -fopenmp is warning-free
 * (-Wunknown-pragmas is in -Wall) and simply serial. */
#ifndef EW_PARALLEL_H
#define EW_PARALLEL_H

#include <stddef.h>

#include "epiwell.h"

#ifdef _OPENMP
#define EW_OMP(...) _Pragma(#__VA_ARGS__)
#else
#define EW_OMP(...)
#endif

/* Threads a request resolves to (0: every core; 1 when built without OpenMP). */
int ew_wf_threads(int requested);
/* int ew_wf_have_openmp(void), 1 when built with OpenMP: public, in epiwell.h */
/* The calling thread's number in the innermost parallel region, 0 outside one. */
int ew_wf_thread_index(void);

/* First failure in point order: a parallel loop records the lowest failing index. */
typedef struct {
  size_t index; /* SIZE_MAX: no failure */
  ew_error err;
  ew_status rc;
} ew_wf_fail;

#define EW_WF_FAIL_NONE {SIZE_MAX, {0}, EW_OK}

/* Keep (rc, e) when point p comes before the failure recorded so far (thread-safe). */
void ew_wf_fail_record(ew_wf_fail *f, size_t p, ew_status rc, const ew_error *e);
/* The failing index recorded so far (thread-safe read); SIZE_MAX when none. */
size_t ew_wf_fail_index(const ew_wf_fail *f);
/* Copy the recorded error to err and return its code. */
ew_status ew_wf_fail_report(const ew_wf_fail *f, ew_error *err);

#endif
