/* api_spectra.c — absorption spectra of a result for the public API (epiwell.h): an
 * ew_wf_spectra (spectra_workflow.c) and the output set its files are staged in. */
#include <errno.h>
#include <stdlib.h>
#include <string.h>

#include "epiwell.h"
#include "error.h"
#include "output_set.h"
#include "spectra_workflow.h"

#define NULL_ARG(fn) ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s: NULL argument", fn)

struct ew_spectra {
  ew_wf_spectra s;
  ew_wf_outset files; /* the CSV and the pictures, renamed into place together */
};

ew_status ew_spectra_compute(const ew_result *res, double theta_deg, double n_refr,
                             ew_spectra **out, ew_error *err) {
  if (out) *out = NULL;
  if (!res || !out) return NULL_ARG("ew_spectra_compute");
  ew_spectra *sp = calloc(1, sizeof *sp);
  if (!sp) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  ew_wf_outset_init(&sp->files);
  ew_status st = ew_wf_spectra_compute(res, theta_deg, n_refr, &sp->s, err);
  if (st != EW_OK) {
    ew_spectra_free(sp);
    return st;
  }
  *out = sp;
  return EW_OK;
}

void ew_spectra_free(ew_spectra *sp) {
  if (!sp) return;
  ew_wf_outset_commit(&sp->files, 0, NULL);
  ew_wf_spectra_free(&sp->s);
  free(sp);
}

const char *ew_spectra_note(const ew_spectra *sp, int which) {
  return sp && (which == 0 || which == 1) ? sp->s.note[which] : NULL;
}

ew_status ew_spectra_write_csv(const ew_spectra *sp, FILE *out, ew_error *err) {
  if (!sp || !out) return NULL_ARG("ew_spectra_write_csv");
  ew_wf_spectra_write_csv(&sp->s, out);
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the spectra") : EW_OK;
}

ew_status ew_spectra_write_peaks(const ew_spectra *sp, FILE *out, ew_error *err) {
  if (!sp || !out) return NULL_ARG("ew_spectra_write_peaks");
  ew_wf_spectra_print_peaks(&sp->s, out);
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the peaks") : EW_OK;
}

/* The CSV under its temporary name; the message names the target as `solve --spectra` has
 * always done. */
static ew_status write_csv_tmp(const ew_spectra *sp, const char *tmp, const char *path,
                               ew_error *err) {
  FILE *f = fopen(tmp, "w");
  if (f) ew_wf_spectra_write_csv(&sp->s, f);
  int bad = !f || ferror(f) != 0, e = errno;
  if (f && fclose(f) != 0 && !bad) bad = 1, e = errno;
  if (bad)
    return ew_fail(err, EW_ERR_IO, NULL, 0, "--spectra: cannot write '%s': %s", path, strerror(e));
  return EW_OK;
}

ew_status ew_spectra_stage_files(ew_spectra *sp, const char *csv_path, const char *plot_path,
                                 int written[2], ew_error *err) {
  if (!sp) return NULL_ARG("ew_spectra_stage_files");
  int w[2] = {0, 0};
  const char *tmp = NULL;
  ew_status st = EW_OK;
  if (csv_path) st = ew_wf_outset_add(&sp->files, csv_path, "--spectra", &tmp, err);
  if (st == EW_OK && plot_path) st = ew_wf_spectra_plot(&sp->s, plot_path, &sp->files, w, err);
  if (st == EW_OK && csv_path) st = write_csv_tmp(sp, tmp, csv_path, err);
  if (written) written[0] = w[0], written[1] = w[1];
  return st;
}

ew_status ew_spectra_commit_files(ew_spectra *sp, int ok, ew_error *err) {
  if (!sp) return NULL_ARG("ew_spectra_commit_files");
  return ew_wf_outset_commit(&sp->files, ok, err);
}
