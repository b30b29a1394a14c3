/* csv_writer.c — RFC 4180 cells (see csv_writer.h). */
#include "csv_writer.h"

#include <math.h>
#include <stdarg.h>
#include <string.h>

void ew_csv_init(ew_csv *c, ew_csv_write_fn write, void *ctx) {
  c->write = write;
  c->ctx = ctx;
  c->cells = 0;
  c->bad = 0;
}

static int write_file(void *ctx, const char *data, size_t len) {
  return fwrite(data, 1, len, (FILE *)ctx) != len;
}

void ew_csv_init_file(ew_csv *c, FILE *f) { ew_csv_init(c, write_file, f); }

static void put(ew_csv *c, const char *data, size_t len) {
  if (c->bad || len == 0) return;
  if (c->write(c->ctx, data, len) != 0) c->bad = 1;
}

static void begin_cell(ew_csv *c) {
  if (c->cells++) put(c, ",", 1);
}

void ew_csv_text(ew_csv *c, const char *s) {
  begin_cell(c);
  if (!s) return;
  size_t len = strlen(s);
  /* A text cell starting with = + - @ (or tab, CR) is a formula to a spreadsheet: prefix a
   * single quote, the usual neutraliser (OWASP "CSV Injection"), so a layer named
   * "=cmd|…" stays text.  Numbers are written by ew_csv_number/_format, never here. */
  int formula = strchr("=+-@\t\r", s[0]) != NULL && s[0] != '\0';
  if (!formula && strcspn(s, ",\"\r\n") == len) {
    put(c, s, len);
    return;
  }
  put(c, "\"", 1);
  if (formula) put(c, "'", 1);
  for (const char *q; (q = strchr(s, '"')) != NULL; s = q + 1) {
    put(c, s, (size_t)(q - s) + 1); /* through the quote, which is then doubled */
    put(c, "\"", 1);
  }
  put(c, s, strlen(s));
  put(c, "\"", 1);
}

void ew_csv_format(ew_csv *c, const char *fmt, ...) {
  char buf[512];
  va_list ap;
  begin_cell(c);
  va_start(ap, fmt);
  int n = vsnprintf(buf, sizeof buf, fmt, ap);
  va_end(ap);
  if (n < 0 || (size_t)n >= sizeof buf) c->bad = 1;
  else put(c, buf, (size_t)n);
}

void ew_csv_number(ew_csv *c, double v) {
  if (isfinite(v)) ew_csv_format(c, "%.10g", v);
  else ew_csv_empty(c);
}

void ew_csv_int(ew_csv *c, long long v) {
  char buf[32];
  begin_cell(c);
  int n = snprintf(buf, sizeof buf, "%lld", v);
  put(c, buf, (size_t)n);
}

void ew_csv_empty(ew_csv *c) { begin_cell(c); }

void ew_csv_end_row(ew_csv *c) {
  put(c, "\n", 1);
  c->cells = 0;
}

void ew_csv_header(ew_csv *c, size_t n, const char *const *names) {
  for (size_t k = 0; k < n; k++) ew_csv_text(c, names[k]);
  ew_csv_end_row(c);
}

int ew_csv_failed(const ew_csv *c) { return c->bad; }
