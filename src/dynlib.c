/* dynlib.c — libraries opened on first use (see dynlib.h). */
#include "dynlib.h"

#include <dlfcn.h>
#include <string.h>

ew_status ew_dynlib_open(const char *const *sonames, size_t nnames, const ew_dynsym *syms,
                         size_t n, void *table, void **handle, ew_error *err) {
  void *h = NULL;
  const char *why = "no library name given";
  *handle = NULL;
  for (size_t k = 0; k < nnames && !h; k++) {
    h = dlopen(sonames[k], RTLD_NOW | RTLD_LOCAL | RTLD_NODELETE);
    if (!h) why = dlerror();
  }
  if (!h)
    return ew_fail(err, EW_ERR_IO, NULL, 0, "cannot load %s: %s", nnames ? sonames[0] : "?",
                   why ? why : "unknown error");
  for (size_t k = 0; k < n; k++) {
    dlerror();
    void *sym = dlsym(h, syms[k].name);
    const char *e = dlerror();
    if (e || !sym) {
      ew_status rc = ew_fail(err, EW_ERR_IO, NULL, 0, "%s has no %s: %s", sonames[0],
                             syms[k].name, e ? e : "null symbol");
      dlclose(h);
      return rc;
    }
    /* POSIX: a function's address from dlsym has the representation of a function pointer */
    memcpy((char *)table + syms[k].offset, &sym, sizeof sym);
  }
  *handle = h;
  return EW_OK;
}

void ew_dynlib_close(void *handle) {
  if (handle) dlclose(handle);
}
