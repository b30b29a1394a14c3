/* text.c — the "did you mean" rule (text.h) and the UTF-8 display width.
 *
 * One dynamic-programming pass gives both criteria of the rule: each edit costs
 * CASE_WEIGHT and a match that differs only in letter case costs 1, so the smallest cost is
 * the fewest edits first and, among those alignments, the fewest case mismatches (a name
 * has at most 127 characters, fewer than CASE_WEIGHT). */
#include "text.h"

#include <ctype.h>
#include <stdio.h>
#include <string.h>

enum { MAXL = 127, CASE_WEIGHT = 256 };

static long suggest_cost(const char *a, const char *b) {
  size_t la = strlen(a), lb = strlen(b);
  if (la > MAXL) la = MAXL;
  if (lb > MAXL) lb = MAXL;
  long row[MAXL + 1];
  for (size_t j = 0; j <= lb; j++) row[j] = CASE_WEIGHT * (long)j;
  for (size_t i = 1; i <= la; i++) {
    long diag = row[0];
    row[0] = CASE_WEIGHT * (long)i;
    for (size_t j = 1; j <= lb; j++) {
      unsigned char ca = (unsigned char)a[i - 1], cb = (unsigned char)b[j - 1];
      long sub = ca == cb ? 0 : tolower(ca) == tolower(cb) ? 1 : CASE_WEIGHT;
      long best = diag + sub;
      if (row[j] + CASE_WEIGHT < best) best = row[j] + CASE_WEIGHT;
      if (row[j - 1] + CASE_WEIGHT < best) best = row[j - 1] + CASE_WEIGHT;
      diag = row[j];
      row[j] = best;
    }
  }
  return row[lb];
}

int ew_text_distance(const char *a, const char *b) {
  return (int)(suggest_cost(a, b) / CASE_WEIGHT);
}

void ew_suggest_init(ew_suggestion *s, const char *typed) {
  s->typed = typed;
  s->best = NULL;
  s->best_cost = 0;
}

void ew_suggest_offer(ew_suggestion *s, const char *candidate) {
  if (!candidate || !s->typed) return;
  long c = suggest_cost(s->typed, candidate);
  if (!s->best || c < s->best_cost) {
    s->best = candidate;
    s->best_cost = c;
  }
}

const char *ew_suggest_best(const ew_suggestion *s) {
  if (!s->best) return NULL;
  size_t len = strlen(s->typed);
  long limit = len / 3 > 2 ? (long)(len / 3) : 2;
  return s->best_cost / CASE_WEIGHT <= limit ? s->best : NULL;
}

const char *ew_text_nearest(const char *typed, const char *const *keys, size_t n) {
  ew_suggestion s;
  ew_suggest_init(&s, typed);
  for (size_t i = 0; i < n; i++) ew_suggest_offer(&s, keys[i]);
  return ew_suggest_best(&s);
}

int ew_text_codepoints(const char *s) {
  int w = 0;
  for (; *s; s++)
    if (((unsigned char)*s & 0xC0) != 0x80) w++;
  return w;
}

int ew_utf8_len(const char *s) {
  const unsigned char *p = (const unsigned char *)s;
  unsigned c = p[0];
  if (c < 0x80) return c ? 1 : 0;
  int n;
  unsigned lo = 0x80, hi = 0xBF; /* allowed range of the second byte (RFC 3629, section 4) */
  if (c >= 0xC2 && c <= 0xDF) n = 2;
  else if (c >= 0xE0 && c <= 0xEF) {
    n = 3;
    if (c == 0xE0) lo = 0xA0; /* overlong below U+0800 */
    if (c == 0xED) hi = 0x9F; /* surrogates U+D800–U+DFFF */
  } else if (c >= 0xF0 && c <= 0xF4) {
    n = 4;
    if (c == 0xF0) lo = 0x90; /* overlong below U+10000 */
    if (c == 0xF4) hi = 0x8F; /* above U+10FFFF */
  } else {
    return 0;
  }
  if (p[1] < lo || p[1] > hi) return 0;
  for (int k = 2; k < n; k++)
    if ((p[k] & 0xC0) != 0x80) return 0;
  return n;
}

/* Code point of the valid sequence of n bytes at p. */
static unsigned long utf8_value(const unsigned char *p, int n) {
  if (n == 1) return p[0];
  unsigned long v = p[0] & (0x7Fu >> n);
  for (int k = 1; k < n; k++) v = (v << 6) | (p[k] & 0x3Fu);
  return v;
}

static int is_control(unsigned long cp) { return cp < 0x20 || (cp >= 0x7F && cp <= 0x9F); }

/* Why the bytes at p are not valid UTF-8 (p[0] >= 0x80, ew_utf8_len(p) == 0). */
static void utf8_why(const unsigned char *p, char *why, size_t size) {
  unsigned c = p[0];
  int n = c >= 0xC0 && c <= 0xDF ? 2 : c >= 0xE0 && c <= 0xEF ? 3 : c >= 0xF0 && c <= 0xF7 ? 4 : 0;
  int k = 1;
  while (n && k < n && (p[k] & 0xC0) == 0x80) k++;
  if (c >= 0x80 && c <= 0xBF) snprintf(why, size, "invalid UTF-8: stray continuation byte 0x%02X", c);
  else if (!n) snprintf(why, size, "invalid UTF-8: byte 0x%02X never starts a character", c);
  else if (k < n) snprintf(why, size, "invalid UTF-8: truncated %d-byte sequence", n);
  else {
    unsigned long cp = utf8_value(p, n);
    if (c == 0xC0 || c == 0xC1 || (c == 0xE0 && p[1] < 0xA0) || (c == 0xF0 && p[1] < 0x90))
      snprintf(why, size, "invalid UTF-8: overlong encoding of U+%04lX", cp);
    else if (cp >= 0xD800 && cp <= 0xDFFF)
      snprintf(why, size, "invalid UTF-8: surrogate U+%04lX", cp);
    else snprintf(why, size, "invalid UTF-8: code point U+%lX is above U+10FFFF", cp);
  }
}

long ew_text_check(const char *s, char *why, size_t size) {
  const unsigned char *p = (const unsigned char *)s;
  for (const unsigned char *q = p; *q;) {
    int n = ew_utf8_len((const char *)q);
    if (n == 0) {
      if (size) utf8_why(q, why, size);
      return (long)(q - p);
    }
    unsigned long cp = utf8_value(q, n);
    if (is_control(cp)) {
      if (size) snprintf(why, size, "control character U+%04lX", cp);
      return (long)(q - p);
    }
    q += n;
  }
  return -1;
}

void ew_text_escape(const char *s, char *out, size_t size) {
  size_t used = 0;
  if (!size) return;
  for (const char *q = s; *q;) {
    int n = ew_utf8_len(q);
    int keep = n > 0 && (*q == '\n' || *q == '\t' ||
                         !is_control(utf8_value((const unsigned char *)q, n)));
    char esc[5 * 4 + 1];
    const char *piece = q;
    size_t len = (size_t)n;
    if (!keep) { /* each byte of the sequence (or the one bad byte) as \xNN */
      size_t m = n > 0 ? (size_t)n : 1;
      for (size_t k = 0; k < m; k++) snprintf(esc + 4 * k, 5, "\\x%02X", (unsigned char)q[k]);
      piece = esc, len = 4 * m, n = (int)m;
    }
    if (used + len >= size) break;
    memcpy(out + used, piece, len);
    used += len;
    q += n;
  }
  out[used] = '\0';
}

int ew_text_include_line(const char *text) {
  int line = 1;
  for (const char *p = text; *p; line++) {
    while (*p == ' ' || *p == '\t' || *p == '\r' || *p == '\f' || *p == '\v') p++;
    if (strncmp(p, "@include", 8) == 0) return line;
    p = strchr(p, '\n');
    if (!p) break;
    p++;
  }
  return 0;
}
