/* json_writer.h — compact JSON (RFC 8259) written straight to a stream, with the commas
 * placed by the writer.  Used by output.c; workflow.c's sweep, match and tolerance JSON can
 * switch to it without a byte changing.
 *
 * Formatting (the project's JSON everywhere): no spaces; numbers "%.10g", a NaN or infinity
 * as null (JSON has no such numbers); integers exact; strings UTF-8 with '"' and '\' escaped
 * by a backslash, control characters as \u00XX, and any byte that is not part of a valid
 * UTF-8 sequence as \ufffd (the replacement character), so the text is always valid JSON.
 *
 *     ew_json j;  ew_json_init(&j, out);
 *     ew_json_begin_object(&j);
 *     ew_json_key_str(&j, "stack", path);        // "stack":"…"
 *     ew_json_key(&j, "points"); ew_json_begin_array(&j);
 *     for (…) { ew_json_newline(&j); ew_json_begin_object(&j); … ew_json_end_object(&j); }
 *     ew_json_end_array(&j);
 *     ew_json_end_object(&j);
 *     ew_json_finish(&j);                        // "\n"; 0, or −1 after any error
 *
 * A value directly after ew_json_key belongs to that key; otherwise the writer puts a comma
 * before every value but the first of its array or object.  ew_json_newline puts the next
 * value of the current array on a line of its own ("[\n{…},\n{…}]", as the sweep JSON is
 * laid out).  Nesting deeper than EW_JSON_DEPTH marks the writer failed. */
#ifndef EW_JSON_WRITER_H
#define EW_JSON_WRITER_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#define EW_JSON_DEPTH 64

typedef struct {
  FILE *out;
  int depth;          /* open arrays and objects */
  uint64_t started;   /* bit d: level d already holds a value (a comma comes next) */
  int after_key;      /* the next value is a key's value: no comma */
  int newline;        /* the next value starts a new line */
  int bad;            /* nesting error */
} ew_json;

void ew_json_init(ew_json *j, FILE *out);

void ew_json_begin_object(ew_json *j);
void ew_json_end_object(ew_json *j);
void ew_json_begin_array(ew_json *j);
void ew_json_end_array(ew_json *j);
/* The key of the next value in the current object (escaped like a string). */
void ew_json_key(ew_json *j, const char *key);
void ew_json_newline(ew_json *j);

/* Values (also as array elements).  A NULL string is written as null. */
void ew_json_str(ew_json *j, const char *s);
void ew_json_num(ew_json *j, double v);
void ew_json_int(ew_json *j, long long v);
void ew_json_size(ew_json *j, size_t v);
void ew_json_bool(ew_json *j, int v);
void ew_json_null(ew_json *j);

/* Key and value in one call. */
void ew_json_key_str(ew_json *j, const char *key, const char *s);
void ew_json_key_num(ew_json *j, const char *key, double v);
void ew_json_key_int(ew_json *j, const char *key, long long v);
void ew_json_key_size(ew_json *j, const char *key, size_t v);
void ew_json_key_bool(ew_json *j, const char *key, int v);
void ew_json_key_null(ew_json *j, const char *key);

/* A JSON string literal (quotes included) on out, escaped as above; for writers that lay
 * out their own JSON text. */
void ew_json_write_string(FILE *out, const char *s);
/* One number as above (%.10g, null when not finite), for code that lays out its own JSON. */
void ew_json_write_number(FILE *out, double v);
/* ,"name":[v0,v1,…] — every value null when v is NULL */
void ew_json_write_number_array(FILE *out, const char *name, const double *v, size_t n);
/* Warning codes joined by ';' ("a;b", "" for none) as the JSON array ["a","b"]. */
void ew_json_write_codes(FILE *out, const char *codes);

/* End the document with a newline.  0 when every call nested properly and the stream had
 * no error, −1 otherwise. */
int ew_json_finish(ew_json *j);

#endif
