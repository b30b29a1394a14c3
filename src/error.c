/* error.c — error reports and small shared helpers that cannot fail. */
#include "error.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "text.h"

ew_status ew_fail(ew_error *err, ew_status code, const char *file, int line, const char *fmt,
                  ...) {
  if (!err) return code;
  err->code = code;
  err->line = line;
  /* a message may quote input (a name, a piece of a line): control characters and invalid
   * UTF-8 are written as \xNN so that printing it cannot drive the user's terminal */
  char raw[sizeof err->message];
  snprintf(raw, sizeof raw, "%s", file ? file : ""); /* file may be err->file itself */
  ew_text_escape(raw, err->file, sizeof err->file);
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(raw, sizeof raw, fmt, ap);
  va_end(ap);
  ew_text_escape(raw, err->message, sizeof err->message);
  return code;
}

const char *ew_error_text(const ew_error *err, char *buf, size_t size) {
  if (!buf || size == 0) return buf;
  if (!err) {
    snprintf(buf, size, "unknown error");
  } else if (err->file[0] && err->line > 0) {
    snprintf(buf, size, "%s:%d: %s", err->file, err->line, err->message);
  } else if (err->file[0]) {
    snprintf(buf, size, "%s: %s", err->file, err->message);
  } else {
    snprintf(buf, size, "%s", err->message);
  }
  return buf;
}

const char *ew_band_name(ew_band band) {
  switch (band) {
  case EW_BAND_E: return "e";
  case EW_BAND_HH: return "hh";
  case EW_BAND_LH: return "lh";
  default: return "?";
  }
}
