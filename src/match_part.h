/* match_part.h — the parts of a sharded match (`epiwell match … --shard K/N`, one part per
 * machine) written out and joined into exactly the output one machine would have written.
 *
 * A part is one line of JSON holding everything the join needs at full precision (numbers to
 * 17 significant digits, so they read back bit for bit): the shard and the sample grid, the
 * keys, lines and targets, the line energies the part's samples reach, and its solutions (1D)
 * or Newton's starts with where each went (2D).  The join checks that the parts are all the
 * parts of one match, then rebuilds the whole match's result (match.h:
 * ew_wf_match_merge_starts, ew_wf_match_message) and prints it as `match --json` does. */
#ifndef EW_MATCH_PART_H
#define EW_MATCH_PART_H

#include <stddef.h>
#include <stdio.h>

#include "epiwell.h"
#include "match.h"

/* Write part r (r->shard_n > 1) as one line. */
void ew_wf_match_part_write(const ew_wf_match_result *r, FILE *out);

/* 1 when text (the start of a file) is a match part: merge tells parts of a match from those
 * of a sweep by it. */
int ew_wf_match_part_is(const char *text);

/* Join the parts paths[0..n) (any order) and print the whole match's JSON to out.  Refused
 * with EW_ERR_INPUT naming the part: a part missing or given twice, of another match (keys,
 * lines, targets, samples, range, tolerance, part count), or not a match part (cut short);
 * EW_ERR_IO for a file that cannot be read; EW_ERR_USAGE for no parts.  Nothing is written
 * unless every part checks. */
ew_status ew_wf_match_merge(size_t n, const char *const *paths, FILE *out, ew_error *err);

#endif
