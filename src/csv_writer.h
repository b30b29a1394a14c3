/* csv_writer.h — CSV rows written cell by cell, quoted per RFC 4180: a cell holding a comma,
 * a double quote, CR or LF is enclosed in double quotes with every quote doubled; any other
 * cell is written as is.  Rows end in LF (not RFC 4180's CRLF: the project's files always
 * have, and every common reader takes both).  Used by output.c (plain or gzip files through
 * a write callback); workflow.c's sweep CSV can switch to it without a byte changing.
 *
 *     ew_csv c;  ew_csv_init_file(&c, f);        // or ew_csv_init(&c, my_write, ctx)
 *     ew_csv_header(&c, ncol, names);              // one row of text cells
 *     ew_csv_text(&c, layer_name);                 // quoted when needed
 *     ew_csv_format(&c, "%.6f", z);                // printf-formatted cell (nan prints "nan")
 *     ew_csv_number(&c, v);                        // "%.10g", empty cell when not finite
 *     ew_csv_int(&c, n);  ew_csv_empty(&c);
 *     ew_csv_end_row(&c);
 *     if (ew_csv_failed(&c)) …                     // a write failed (or a cell was too long)
 *
 * The writer puts the comma before every cell but the first of a row.  Numbers are never
 * quoted (a printf number has no comma in the C locale the library runs in). */
#ifndef EW_CSV_WRITER_H
#define EW_CSV_WRITER_H

#include <stddef.h>
#include <stdio.h>

/* Write len bytes; 0 on success, nonzero on failure. */
typedef int (*ew_csv_write_fn)(void *ctx, const char *data, size_t len);

typedef struct {
  ew_csv_write_fn write;
  void *ctx;
  size_t cells; /* cells in the current row so far */
  int bad;      /* a write failed or a number did not fit its buffer */
} ew_csv;

void ew_csv_init(ew_csv *c, ew_csv_write_fn write, void *ctx);
/* Writes to a stdio stream. */
void ew_csv_init_file(ew_csv *c, FILE *f);

/* NULL: empty cell.  Quoted when it holds , " CR or LF; a cell starting with = + - @ tab or CR
 * (a spreadsheet formula) is written as "'TEXT" (quoted, with a leading single quote). */
void ew_csv_text(ew_csv *c, const char *s);
void ew_csv_format(ew_csv *c, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
void ew_csv_number(ew_csv *c, double v);
void ew_csv_int(ew_csv *c, long long v);
void ew_csv_empty(ew_csv *c);
void ew_csv_end_row(ew_csv *c);
/* A row of n text cells (a header), ended. */
void ew_csv_header(ew_csv *c, size_t n, const char *const *names);

int ew_csv_failed(const ew_csv *c);

#endif
