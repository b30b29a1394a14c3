/* range.h — what the command line says about values: a varied key's range
 * ("well.thickness=4:12:0.25") and a quantity with its unit ("9.0um", "1.548eV", "154meV"). */
#ifndef EW_RANGE_H
#define EW_RANGE_H

#include <stddef.h>

#include "epiwell.h"

#define EW_WF_KEY_MAX 128
#define EW_WF_MAX_POINTS 10000000 /* a sweep larger than this is a typo, not a design */

typedef struct {
  char key[EW_WF_KEY_MAX];
  double from, to;
  double step; /* > 0; 0 when the range was given as FROM:TO only */
} ew_wf_range;

/* Parse "KEY=FROM:TO:STEP" (need_step 1) or "KEY=FROM:TO[:STEP]" (need_step 0).  FROM > TO
 * runs downwards; STEP is a positive magnitude.  EW_ERR_USAGE naming opt_name. */
ew_status ew_wf_range_parse(const char *spec, int need_step, const char *opt_name,
                            ew_wf_range *out, ew_error *err);
/* Number of values FROM, FROM ± STEP, …, TO inclusive: the end is included when it lies within
 * 1e-9 steps of a grid value, so 4:12:0.1 has 81 values despite rounding. */
size_t ew_wf_range_count(const ew_wf_range *r);
/* Value i: FROM ± i·STEP, computed from i (not accumulated), the last one exactly TO. */
double ew_wf_range_value(const ew_wf_range *r, size_t i);

/* ---- quantities: "9.0um", "1.548eV", "154meV", "800nm", "9µm" ------------------------- */
typedef struct {
  double value;      /* as written */
  int is_wavelength; /* 1: nm/um/µm, 0: eV/meV */
  double eV;         /* energy (for a wavelength: hc/λ) */
  double nm;         /* wavelength (for an energy: hc/E) */
  double scale;      /* the unit in eV or nm (1e-3 for meV, 1e3 for um) */
} ew_wf_quantity;

/* Parse a number followed by a unit (eV, meV, nm, um, µm, μm), spaces allowed between them.
 * allow_zero: a tolerance may be 0; a target must be > 0.  EW_ERR_USAGE naming opt_name. */
ew_status ew_wf_quantity_parse(const char *text, int allow_zero, const char *opt_name,
                               ew_wf_quantity *out, ew_error *err);

#endif
