/* text.c — the "did you mean" rule (text.h) and the UTF-8 display width.
 *
 * One dynamic-programming pass gives both criteria of the rule: each edit costs
 * CASE_WEIGHT and a match that differs only in letter case costs 1, so the smallest cost is
 * the fewest edits first and, among those alignments, the fewest case mismatches (a name
 * has at most 127 characters, fewer than CASE_WEIGHT). */
#include "text.h"

#include <ctype.h>
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
