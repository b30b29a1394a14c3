/* lapack_dyn.c — LAPACKE opened on demand (see lapack_dyn.h). */
#include "lapack_dyn.h"

#include <stddef.h>
#include <string.h>

#include "dynlib.h"

static const ew_dynsym lapack_syms[] = {
#define EW_LAPACK_SYM(name) {"LAPACKE_" #name "_work", offsetof(ew_lapack, name)},
    EW_LAPACK_FUNCTIONS(EW_LAPACK_SYM)
#undef EW_LAPACK_SYM
};

/* Debian's liblapacke package names it liblapacke.so.3 (the development link as a fallback) */
static const char *const lapack_names[] = {"liblapacke.so.3", "liblapacke.so"};

ew_status ew_lapack_open(ew_lapack *L, ew_error *err) {
  memset(L, 0, sizeof *L);
  return ew_dynlib_open(lapack_names, sizeof lapack_names / sizeof *lapack_names, lapack_syms,
                        sizeof lapack_syms / sizeof *lapack_syms, L, &L->lib, err);
}

void ew_lapack_close(ew_lapack *L) {
  ew_dynlib_close(L->lib);
  L->lib = NULL;
}
