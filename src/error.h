/* error.h — filling an ew_error.  Internal. */
#ifndef EW_ERROR_H
#define EW_ERROR_H
#include "epiwell.h"

/* Record code, input position (file may be NULL, line 0) and a printf-style message into err
 * (which may be NULL).  Returns code, so callers write `return ew_fail(err, ...)`. */
ew_status ew_fail(ew_error *err, ew_status code, const char *file, int line, const char *fmt,
                  ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 5, 6)))
#endif
    ;
#endif
