/* text.h — small text helpers shared by the readers and printers: the one "did you mean"
 * rule of the program (stack keys, catalogue keys, material names) and the display width of
 * UTF-8 text for aligned columns.  Internal. */
#ifndef EW_TEXT_H
#define EW_TEXT_H

#include <stddef.h>

/* The "did you mean" rule, for keys and for material names alike:
 *   - distance: Levenshtein edits (insert, delete or substitute one character; V. I.
 *     Levenshtein, Sov. Phys. Dokl. 10, 707 (1966)) with letter case ignored, so "Gaas"
 *     is 0 edits from "GaAs";
 *   - among candidates at the same distance the one whose letters' case matches more
 *     often wins ("GaAS" → "GaAs" before "GAAS"), then the earlier candidate;
 *   - a candidate is suggested only when it is at most max(2, strlen(typed) / 3) edits
 *     away: a farther one is rarely what was meant, and a wrong hint misleads.
 * Texts longer than 127 bytes are compared on their first 127 (they get no useful
 * suggestion anyway). */

/* Case-insensitive Levenshtein distance (edits) between a and b. */
int ew_text_distance(const char *a, const char *b);

/* The best candidate so far for a typed word: offer candidates one by one (from any number
 * of lists), then ask for the suggestion. */
typedef struct {
  const char *typed;
  const char *best; /* NULL until a candidate was offered */
  long best_cost;   /* edits, then case mismatches (see text.c) */
} ew_suggestion;

void ew_suggest_init(ew_suggestion *s, const char *typed);
void ew_suggest_offer(ew_suggestion *s, const char *candidate); /* NULL is ignored */
/* The suggestion by the rule above, or NULL when no candidate is close enough. */
const char *ew_suggest_best(const ew_suggestion *s);

/* The suggestion for typed among keys[0..n-1], or NULL. */
const char *ew_text_nearest(const char *typed, const char *const *keys, size_t n);

/* ---- user text that reaches the outputs (names, catalogue strings, messages) ------------
 * Valid UTF-8 is RFC 3629's: no overlong forms, no surrogates (U+D800–U+DFFF), nothing above
 * U+10FFFF, no sequence cut short.  A control character is C0 (U+0000–U+001F), DEL (U+007F)
 * or C1 (U+0080–U+009F): in a terminal they move the cursor, recolour or rewrite the screen
 * (ECMA-48), and XML 1.0 does not allow most of them at all. */

/* Length (1–4) of the valid UTF-8 sequence at p, 0 when p does not start one (a NUL ends
 * the text: a sequence cut by it is invalid). */
int ew_utf8_len(const char *p);

/* Whether s is a name fit for every output: valid UTF-8 without control characters.
 * Returns -1 when it is; otherwise the byte offset of the first offending byte, with what
 * is wrong in why ("control character U+001B", "invalid UTF-8: surrogate U+D800", …). */
long ew_text_check(const char *s, char *why, size_t size);

/* s with every control character and every byte of invalid UTF-8 written as \xNN (a
 * message that quotes input stays harmless on a terminal); LF and tab are kept.  Writes at
 * most size bytes (truncating, NUL-terminated). */
void ew_text_escape(const char *s, char *out, size_t size);

/* robustness: libconfig 1.5 honours '@include "FILE"' at the start of a line and offers no
 * way to turn it off.  An include reads any file, bypasses the size and NUL checks of the
 * readers, dates its errors with the wrong file, and blocks forever on a FIFO or a terminal.
 * Stack files and catalogue files are self-contained, so both readers refuse the directive:
 * returns the 1-based line of the first line that is blanks then "@include", 0 when there is
 * none. */
int ew_text_include_line(const char *text);

/* Characters (UTF-8 code points) in s, for aligning columns that hold "Å" or "Γ". */
int ew_text_codepoints(const char *s);

#endif
