/* json_writer.c — compact JSON on a stream (see json_writer.h). */
#include "json_writer.h"

#include <math.h>
#include <string.h>

void ew_json_init(ew_json *j, FILE *out) {
  j->out = out;
  j->depth = 0;
  j->started = 0;
  j->after_key = j->newline = j->bad = 0;
}

/* Length of the valid UTF-8 sequence at p (RFC 3629: no overlong forms, no surrogates,
 * nothing above U+10FFFF), 0 when p does not start one. */
static int utf8_len(const unsigned char *p) {
  unsigned c = p[0];
  int n;
  unsigned lo = 0x80, hi = 0xBF; /* allowed range of the second byte */
  if (c >= 0xC2 && c <= 0xDF) n = 2;
  else if (c >= 0xE0 && c <= 0xEF) {
    n = 3;
    if (c == 0xE0) lo = 0xA0;
    if (c == 0xED) hi = 0x9F;
  } else if (c >= 0xF0 && c <= 0xF4) {
    n = 4;
    if (c == 0xF0) lo = 0x90;
    if (c == 0xF4) hi = 0x8F;
  } else {
    return 0;
  }
  if (p[1] < lo || p[1] > hi) return 0;
  for (int k = 2; k < n; k++)
    if ((p[k] & 0xC0) != 0x80) return 0;
  return n;
}

void ew_json_write_string(FILE *out, const char *s) {
  fputc('"', out);
  const unsigned char *p = (const unsigned char *)s;
  while (*p) {
    unsigned c = *p;
    if (c == '"' || c == '\\') {
      fprintf(out, "\\%c", c);
    } else if (c < 0x20) {
      fprintf(out, "\\u%04x", c);
    } else if (c < 0x80) {
      fputc((int)c, out);
    } else {
      int n = utf8_len(p);
      if (n == 0) {
        fputs("\\ufffd", out);
        n = 1;
      } else {
        fwrite(p, 1, (size_t)n, out);
      }
      p += n;
      continue;
    }
    p++;
  }
  fputc('"', out);
}

void ew_json_write_number(FILE *out, double v) {
  if (isfinite(v)) fprintf(out, "%.10g", v);
  else fputs("null", out);
}

void ew_json_write_number_array(FILE *out, const char *name, const double *v, size_t n) {
  fprintf(out, ",\"%s\":[", name);
  for (size_t i = 0; i < n; i++) {
    if (i) fputc(',', out);
    ew_json_write_number(out, v ? v[i] : NAN);
  }
  fputc(']', out);
}

/* Before any value (and before a key): the comma and line break it needs. */
static void separate(ew_json *j) {
  uint64_t bit = j->depth < EW_JSON_DEPTH ? (uint64_t)1 << j->depth : 0;
  if (j->after_key) {
    j->after_key = 0;
    return;
  }
  if (j->started & bit) fputc(',', j->out);
  if (j->newline) fputc('\n', j->out);
  j->newline = 0;
  j->started |= bit;
}

static void open_level(ew_json *j, int c) {
  separate(j);
  fputc(c, j->out);
  if (++j->depth >= EW_JSON_DEPTH) j->bad = 1;
  else j->started &= ~((uint64_t)1 << j->depth);
}

static void close_level(ew_json *j, int c) {
  if (j->depth <= 0 || j->after_key) j->bad = 1;
  else j->depth--;
  j->after_key = j->newline = 0;
  fputc(c, j->out);
}

void ew_json_begin_object(ew_json *j) { open_level(j, '{'); }
void ew_json_end_object(ew_json *j) { close_level(j, '}'); }
void ew_json_begin_array(ew_json *j) { open_level(j, '['); }
void ew_json_end_array(ew_json *j) { close_level(j, ']'); }
void ew_json_newline(ew_json *j) { j->newline = 1; }

void ew_json_key(ew_json *j, const char *key) {
  if (j->after_key) j->bad = 1;
  separate(j);
  ew_json_write_string(j->out, key ? key : "");
  fputc(':', j->out);
  j->after_key = 1;
}

void ew_json_str(ew_json *j, const char *s) {
  separate(j);
  if (s) ew_json_write_string(j->out, s);
  else fputs("null", j->out);
}

void ew_json_num(ew_json *j, double v) {
  separate(j);
  ew_json_write_number(j->out, v);
}

void ew_json_int(ew_json *j, long long v) {
  separate(j);
  fprintf(j->out, "%lld", v);
}

void ew_json_size(ew_json *j, size_t v) {
  separate(j);
  fprintf(j->out, "%zu", v);
}

void ew_json_bool(ew_json *j, int v) {
  separate(j);
  fputs(v ? "true" : "false", j->out);
}

void ew_json_null(ew_json *j) {
  separate(j);
  fputs("null", j->out);
}

void ew_json_key_str(ew_json *j, const char *key, const char *s) {
  ew_json_key(j, key);
  ew_json_str(j, s);
}

void ew_json_key_num(ew_json *j, const char *key, double v) {
  ew_json_key(j, key);
  ew_json_num(j, v);
}

void ew_json_key_int(ew_json *j, const char *key, long long v) {
  ew_json_key(j, key);
  ew_json_int(j, v);
}

void ew_json_key_size(ew_json *j, const char *key, size_t v) {
  ew_json_key(j, key);
  ew_json_size(j, v);
}

void ew_json_key_bool(ew_json *j, const char *key, int v) {
  ew_json_key(j, key);
  ew_json_bool(j, v);
}

void ew_json_key_null(ew_json *j, const char *key) {
  ew_json_key(j, key);
  ew_json_null(j);
}

int ew_json_finish(ew_json *j) {
  fputc('\n', j->out);
  return j->bad || j->depth != 0 || ferror(j->out) ? -1 : 0;
}

void ew_json_write_codes(FILE *out, const char *codes) {
  fputc('[', out);
  for (const char *c = codes; *c;) {
    size_t n = strcspn(c, ";");
    char one[128];
    snprintf(one, sizeof one, "%.*s", (int)(n < sizeof one ? n : sizeof one - 1), c);
    if (c != codes) fputc(',', out);
    ew_json_write_string(out, one);
    c += n + (c[n] == ';');
  }
  fputc(']', out);
}
