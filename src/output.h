/* output.h — presenting a result: terminal table, JSON, CSV files (atomic, optionally
 * gzip-compressed through zlib).  Pure formatting: nothing here changes a number. */
#ifndef EW_OUTPUT_H
#define EW_OUTPUT_H

#include "solve.h"

/* Human-readable tables of the layers, levels and lines. */
void ew_output_table(const ew_result *r, FILE *out);
/* One JSON object (see README "Output reference"). */
void ew_output_json(const ew_result *r, FILE *out);
/* The same with the sum rule from e1 given ({bound, continuum}, ew_continuum_sum_rule_e1;
 * NaN or NULL: "sum_rule":null): ew_output_json computes it and writes null when that fails
 * (out of memory); ew_result_write_json computes it first and fails instead. */
void ew_output_json_sum(const ew_result *r, const double sum_rule[2], FILE *out);
/* Write profile.csv, levels.csv, lines.csv and wavefunctions.csv (or .csv.gz when gzip is
 * 1, or when gzip is −1 and the table is large) into dir.  Every file is written under a
 * temporary name first and all are renamed only when all were written, so an error leaves
 * no partial file and the previous result intact.  Returns EW_OK or EW_ERR_IO. */
ew_status ew_output_csv_dir(const ew_result *r, const char *dir, int gzip, ew_error *err);
/* EW_OK when dir is a writable directory, or is missing and its parent is writable (checked
 * before any work; nothing is created, so a failed run leaves no empty directory). */
ew_status ew_output_check_dir(const char *dir, ew_error *err);
/* The same, creating dir when it is missing (the writers call it). */
ew_status ew_output_make_dir(const char *dir, ew_error *err);

#endif
