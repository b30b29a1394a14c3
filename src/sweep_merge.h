/* sweep_merge.h — joining the parts of a sharded sweep (`--shard K/N`, one part per machine)
 * into exactly the output one machine would have written.
 *
 * JSON parts describe themselves (README "epiwell sweep": points_total and shard {k, n,
 * first, count}); CSV parts do not, so they are placed by their rows' key values on the
 * grid of the sweep's ranges (the same --vary as the sweep).  Every part is read and checked
 * before a byte is written; then the parts are copied line by line (the files are read
 * twice, never held in memory). */
#ifndef EW_SWEEP_MERGE_H
#define EW_SWEEP_MERGE_H

#include <stddef.h>
#include <stdio.h>

#include "epiwell.h"
#include "range.h"

/* Merge paths[0..n) (all JSON or all CSV, told by the first byte: '{' is JSON) into out.
 * ranges (nr of them; may be NULL with nr 0 for JSON parts, where they are then only
 * checked against points_total) are the sweep's --vary ranges, needed for CSV.  Refused with
 * EW_ERR_INPUT naming the part (and line): a part missing (points in no part), duplicated
 * (points in two parts), from another sweep (other stack, keys, columns, header, point
 * count, or rows off the grid), truncated, or of the other format; EW_ERR_IO for a file that
 * cannot be read or an output that cannot be written; EW_ERR_USAGE for no parts, or CSV
 * parts without ranges. */
ew_status ew_wf_sweep_merge(const ew_wf_range *ranges, size_t nr, size_t n,
                            const char *const *paths, FILE *out, ew_error *err);

#endif
