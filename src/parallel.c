/* parallel.c — thread counts and the first failure in point order (see parallel.h). */
#include "parallel.h"

#include <stdint.h>

#ifdef _OPENMP
#include <omp.h>
#endif

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

int ew_wf_thread_index(void) {
#ifdef _OPENMP
  return omp_get_thread_num();
#else
  return 0;
#endif
}

void ew_wf_fail_record(ew_wf_fail *f, size_t p, ew_status rc, const ew_error *e) {
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

size_t ew_wf_fail_index(const ew_wf_fail *f) {
  size_t v;
  EW_OMP(omp atomic read)
  v = f->index;
  return v;
}

ew_status ew_wf_fail_report(const ew_wf_fail *f, ew_error *err) {
  if (err) *err = f->err;
  return f->rc;
}
