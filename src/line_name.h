/* line_name.h — levels and lines by name ("e1", "hh2", "e1-e2", "e1-hh1", "e1-hh1:pl"), their
 * energies in a result, and the main lines of a workflow.
 *
 * Main lines (the columns of a sweep, the rows of a tolerance table): intersubband lines
 * from the lowest level of each band to every other bound level of that band (e1-e2, e1-e3,
 * hh1-hh2, …) and interband lines e_n–hh_n and e_n–lh_n for n ≤ EW_WF_INTERBAND_MAX. */
#ifndef EW_LINE_NAME_H
#define EW_LINE_NAME_H

#include <stddef.h>

#include "epiwell.h"
#include "solve.h"

#define EW_WF_INTERBAND_MAX 3 /* interband main lines e_n–hh_n, e_n–lh_n for n <= 3 */

/* A level: the n-th (from 1) of its band. */
typedef struct {
  ew_band band;
  int n;
} ew_wf_level;

/* Index of level (band, n) in a result, or SIZE_MAX when it is not bound. */
size_t ew_wf_level_index(const ew_result *r, ew_band band, int n);
/* Its energy, NaN when not bound. */
double ew_wf_level_energy(const ew_result *r, ew_band band, int n);
/* The line of a result joining two state indices, or NULL. */
const ew_line *ew_wf_find_line(const ew_result *r, size_t upper, size_t lower);

/* Energy of line "A-B" in a result: A, B level labels of one band (intersubband,
 * |E_A − E_B|) or an electron and a hole level (interband, E_e − E_h); "A-B:pl" the
 * photoluminescence peak of an interband line; "A-B:depol" the depolarisation-shifted
 * intersubband line; "e2-top" below (ew_wf_line_is_top).  NaN when a level is not bound.  EW_ERR_USAGE
 * for a malformed name (checked without a result when res is NULL). */
ew_status ew_wf_line_energy(const ew_result *res, const char *line, double *energy_eV,
                            ew_error *err);
/* "e2-top" (a level and "-top"): the "line" is the level's distance below the top of its
 * band's bound window, ew_result_state_below_top_eV (> 0 while bound; 0 where the level
 * leaves the well, the aim of a bound-to-quasi-bound design); NaN when not bound.  1 for
 * such a name. */
int ew_wf_line_is_top(const char *line);

/* ---- main lines ------------------------------------------------------------------------ */
typedef struct {
  size_t nlev[EW_BAND_COUNT]; /* levels per band */
  size_t nib[2];              /* interband e_n–hh_n (nib[0]) and e_n–lh_n (nib[1]) for n <= */
} ew_wf_cols;

typedef struct {
  char name[40];
  ew_wf_level a, b; /* intersubband: a = b1, b = bj; interband: a = e_n, b = hole */
  int interband;
} ew_wf_linedef;

/* The column set of given level counts per band (interband up to the smaller of the
 * electron and the hole count, at most EW_WF_INTERBAND_MAX). */
ew_wf_cols ew_wf_cols_of_counts(const size_t cnt[EW_BAND_COUNT]);
/* Main lines of a column set, in column order: intersubband per band (b1-b2, b1-b3, …), then
 * interband by n (e1-hh1, e1-lh1, e2-hh2, …).  Returns the count (≤ cap written). */
size_t ew_wf_main_lines(const ew_wf_cols *c, ew_wf_linedef *out, size_t cap);

#endif
