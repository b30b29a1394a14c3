/* lapack_dyn.h — the LAPACKE functions of the k·p modules, from liblapacke opened when a k·p
 * computation first needs them (dynlib.h): LAPACKE and the LAPACK, gfortran and quadmath
 * libraries under it took 0.9 ms of every run's start-up (measured 2026-12-04, best of 40,
 * an empty program linked with -llapacke), and a plain solve never calls them.
 * Each k·p workspace holds one table (ew_lapack_open when it is created); the `_work` forms,
 * which allocate nothing.  A new function: add it to EW_LAPACK_FUNCTIONS. */
#ifndef EW_LAPACK_DYN_H
#define EW_LAPACK_DYN_H

#include <lapacke.h>

#include "error.h"

#define EW_LAPACK_FUNCTIONS(X) X(zhetrf) X(zhetrs) X(zgetrf) X(zgetrs) X(zheev) X(zhegv)

typedef struct {
  void *lib;
  /* the same types as lapacke.h's LAPACKE_NAME_work */
#define EW_LAPACK_FIELD(name) __typeof__(LAPACKE_##name##_work) *name;
  EW_LAPACK_FUNCTIONS(EW_LAPACK_FIELD)
#undef EW_LAPACK_FIELD
} ew_lapack;

/* Fill *L (EW_OK), or EW_ERR_IO with the loader's message (err may be NULL). */
ew_status ew_lapack_open(ew_lapack *L, ew_error *err);
void ew_lapack_close(ew_lapack *L); /* a table never opened (all zero) is a no-op */

#endif
