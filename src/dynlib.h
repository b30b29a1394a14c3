/* dynlib.h — a shared library opened when a feature first needs it (dlopen), so that every
 * run does not pay for loading it and its dependencies.  cairo (PNG pictures) pulls in
 * X11, fontconfig, freetype, pixman and libpng: loading them took 1.3 ms of the 3.3 ms
 * start-up of every `epiwell` run (measured 2026-12-04, best of 40, an empty program linked
 * as the command was), while only a PNG picture uses them.
 *
 * The library stays mapped once opened (RTLD_NODELETE): a second picture opens it again
 * cheaply, and the leak checkers' suppressions still find its frames at exit. */
#ifndef EW_DYNLIB_H
#define EW_DYNLIB_H

#include <stddef.h>

#include "error.h"

/* One function to look up: its name and where its pointer goes in the caller's table (a
 * struct of function pointers; offsetof). */
typedef struct {
  const char *name;
  size_t offset;
} ew_dynsym;

/* Open the first of sonames[0 … nnames−1] that loads and fill table with every symbol of
 * syms[0 … n−1]; *handle receives the library (ew_dynlib_close).  EW_ERR_IO with the
 * loader's message when no name loads or a symbol is missing (table then unusable). */
ew_status ew_dynlib_open(const char *const *sonames, size_t nnames, const ew_dynsym *syms,
                         size_t n, void *table, void **handle, ew_error *err);
void ew_dynlib_close(void *handle); /* NULL is a no-op */

#endif
