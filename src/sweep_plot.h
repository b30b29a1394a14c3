/* sweep_plot.h — the pictures of a sweep: levels and main lines against the varied key. */
#ifndef EW_SWEEP_PLOT_H
#define EW_SWEEP_PLOT_H

#include "epiwell.h"
#include "output_set.h"
#include "sweep.h"

/* Pictures of a sweep (the suffixes of EW_WF_PLOT_SUFFIX):
 *   one key:  FILE                  every level (e1, e2, …, hh1, …, lh1, …; eV) against it,
 *                                   the energy axis broken between electron and hole levels;
 *             FILE-interband.ext    the interband main lines' wavelengths (nm);
 *             FILE-intersubband.ext the intersubband main lines' wavelengths (µm): the
 *                                   electron lines (e1-e2, …) when the sweep has any, else
 *                                   the hole lines;
 *   two keys: the same three files with the first key on the x axis and one curve per value
 *             of the second key (at most EW_WF_PLOT_MAX_CURVES values, evenly spaced, both
 *             ends included), labelled KEY=VALUE: FILE e1 (eV), FILE-interband e1-hh1 (nm),
 *             FILE-intersubband e1-e2 (µm).
 * A level not bound at a point is a gap.  A chart without any column (no intersubband line
 * in the sweep) is not written: written[k] is 0 for it.  Every file goes into set (written
 * under a temporary name; the caller commits the set). */
#define EW_WF_PLOT_MAX_CURVES 12
#define EW_WF_PLOT_FILES 3
extern const char *const EW_WF_PLOT_SUFFIX[EW_WF_PLOT_FILES]; /* "", "interband", "intersubband" */
ew_status ew_wf_sweep_plot(const ew_wf_table *t, const char *path, ew_wf_outset *set,
                           int written[EW_WF_PLOT_FILES], ew_error *err);

#endif
