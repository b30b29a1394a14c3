/* spectra_workflow.h — absorption spectra of one solved stack for `epiwell solve --spectra`:
 * the energy grids, the CSV, the peaks and the pictures (the absorption formulas are
 * spectra.c's). */
#ifndef EW_SPECTRA_WORKFLOW_H
#define EW_SPECTRA_WORKFLOW_H

#include <stddef.h>
#include <stdio.h>

#include "epiwell.h"
#include "output_set.h"

#define EW_WF_SPECTRUM_POINTS 2001
/* EW_WF_DEFAULT_ANGLE_DEG and EW_WF_DEFAULT_INDEX: public, in epiwell.h */
#define EW_WF_PEAK_FRACTION 0.05 /* a peak is a local maximum above 5 % of the maximum */

/* Two uniform grids of EW_WF_SPECTRUM_POINTS energies, both written in one CSV on their
 * union (sorted; an energy both grids share appears once):
 *   interband:    from 20 meV below the lowest interband pl_peak_eV to 100 meV above the
 *                 highest listed interband line (ew_interband_absorption, relative units);
 *   intersubband: from 0 to 1.5 × the highest of the e1→ej lines and the continuum
 *                 threshold (ew_intersubband_absorption and, in its own column,
 *                 ew_intersubband_continuum_absorption: the fraction absorbed per pass for
 *                 the stack's sheet_density and linewidth).
 * Both spectra are evaluated at every row.  A spectrum that cannot be computed (no
 * interband line; no sheet_density in the stack, or no e1→ej line) has no grid and an empty
 * column, and note[] says why. */
typedef struct {
  size_t n;                 /* rows (union of the grids present) */
  double *E_eV;             /* [n] ascending */
  double *interband_rel;    /* [n] or NULL when absent */
  double *intersubband;     /* [n] or NULL when absent: the bound lines e1 → ej */
  double *continuum;        /* [n] e1 → continuum (ew_intersubband_continuum_absorption), or
                               NULL (no intersubband spectrum, or a field: no continuum) */
  int has_continuum;        /* the continuum from e1 applies */
  double threshold_eV;      /* photon energy of the continuum's bottom from e1 */
  unsigned char *grid;      /* [n] bit 1: a point of the interband grid, bit 2: intersubband */
  double lo_eV[2], hi_eV[2];/* the grids: [0] interband, [1] intersubband (NaN when absent) */
  double theta_deg, n_refr, sheet_density_cm2, linewidth_meV;
  char note[2][720];        /* why a spectrum is absent; "" when present */
} ew_wf_spectra;

/* theta_deg in [0, 90), n_refr > 0 (EW_ERR_USAGE naming --angle / --index). */
ew_status ew_wf_spectra_compute(const ew_result *r, double theta_deg, double n_refr,
                                ew_wf_spectra *out, ew_error *err);
void ew_wf_spectra_free(ew_wf_spectra *s); /* frees the contents; NULL is a no-op */
/* CSV "E_eV,interband_rel,intersubband_fraction,intersubband_continuum_fraction", one row
 * per energy, absent values empty. */
void ew_wf_spectra_write_csv(const ew_wf_spectra *s, FILE *out);

typedef struct {
  double E_eV, value;
} ew_wf_peak;
/* Spectrum which at row k: interband_rel, or the intersubband total (bound lines plus
 * continuum); the row must belong to a present spectrum. */
double ew_wf_spectra_value(const ew_wf_spectra *s, int which, size_t k);
/* Local maxima of spectrum which (0 interband, 1 intersubband) on its own grid above
 * EW_WF_PEAK_FRACTION of its maximum (intersubband: of the total), ascending in energy;
 * returns how many (≤ cap written). */
size_t ew_wf_spectra_peaks(const ew_wf_spectra *s, int which, ew_wf_peak *out, size_t cap);
/* Terminal summary of the peaks (energy, wavelength, value) of both spectra. */
void ew_wf_spectra_print_peaks(const ew_wf_spectra *s, FILE *out);
/* Pictures: FILE the interband spectrum against E (eV); FILE-intersubband.ext the
 * intersubband one against E (meV), when present (written[1]).  Into set, as above. */
ew_status ew_wf_spectra_plot(const ew_wf_spectra *s, const char *path, ew_wf_outset *set,
                             int written[2], ew_error *err);

#endif
