/* spectra_workflow.c — absorption spectra of one solved stack on their energy grids, as CSV,
 * peaks and pictures (see spectra_workflow.h). */
#include "spectra_workflow.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "chart_file.h"
#include "constants.h"
#include "continuum.h"
#include "error.h"
#include "solve.h"
#include "spectra.h"
#include "stack.h"

void ew_wf_spectra_free(ew_wf_spectra *s) {
  if (!s) return;
  free(s->E_eV);
  free(s->interband_rel);
  free(s->intersubband);
  free(s->continuum);
  free(s->grid);
  memset(s, 0, sizeof *s);
}

/* Interband grid: 20 meV below the lowest exciton (PL) peak to 100 meV above the highest
 * listed line. */
static void interband_grid(const ew_result *r, ew_wf_spectra *s) {
  double lo = INFINITY, hi = -INFINITY;
  for (size_t j = 0; j < r->n_lines; j++) {
    const ew_line *ln = &r->lines[j];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    lo = fmin(lo, ln->pl_peak_eV > 0 ? ln->pl_peak_eV : ln->energy_eV);
    hi = fmax(hi, ln->energy_eV);
  }
  if (isfinite(lo)) {
    s->lo_eV[0] = lo - 0.020;
    s->hi_eV[0] = hi + 0.100;
  } else {
    snprintf(s->note[0], sizeof s->note[0], "interband column empty: %s has no interband line "
             "(no bound electron and hole levels)", r->stack->path);
  }
}

/* Intersubband grid: 0 to 1.5 × the highest of the e1 → ej lines and the continuum
 * threshold (bound window top − e1). */
static void intersubband_grid(const ew_result *r, ew_wf_spectra *s) {
  const ew_stack *st = r->stack;
  size_t e1 = r->n_states;
  for (size_t i = 0; i < r->n_states && e1 == r->n_states; i++)
    if (r->states[i].band == EW_BAND_E && r->states[i].n == 1) e1 = i;
  double emax = -INFINITY;
  for (size_t j = 0; j < r->n_lines; j++)
    if (r->lines[j].kind == EW_LINE_INTERSUBBAND && r->lines[j].lower == e1)
      emax = fmax(emax, r->lines[j].energy_eV);
  char why[160] = "";
  if (e1 < r->n_states && ew_continuum_applies(r, e1, why, sizeof why)) {
    s->has_continuum = 1;
    s->threshold_eV = ew_continuum_edge_eV(r, EW_BAND_E) - r->states[e1].energy_eV;
    emax = fmax(emax, s->threshold_eV);
  }
  if (!(st->sheet_density_cm2 > 0))
    snprintf(s->note[1], sizeof s->note[1], "intersubband column empty: %s sets no "
             "sheet_density (electrons per well in cm^-2, e.g. sheet_density = 5e11;)", st->path);
  else if (!isfinite(emax)) {
    /* a long path is cut: the note is a hint, the return value says so */
    if (snprintf(s->note[1], sizeof s->note[1], "intersubband column empty: %s has no "
                 "e1->ej line and no continuum from e1 (%s)", st->path,
                 e1 < r->n_states ? why : "no bound e1") < 0)
      s->note[1][0] = '\0';
  } else {
    s->lo_eV[1] = 0.0;
    s->hi_eV[1] = 1.5 * emax;
  }
}

/* Energy k of grid g. */
static double grid_E(const ew_wf_spectra *s, int g, size_t k) {
  const size_t N = EW_WF_SPECTRUM_POINTS;
  return s->lo_eV[g] + (s->hi_eV[g] - s->lo_eV[g]) * (double)k / (double)(N - 1);
}

/* The union of the grids present, ascending, a shared energy once. */
static ew_status union_grid(ew_wf_spectra *s, ew_error *err) {
  const size_t N = EW_WF_SPECTRUM_POINTS;
  int have[2] = {!s->note[0][0], !s->note[1][0]};
  size_t cap = (size_t)(have[0] + have[1]) * N;
  s->E_eV = malloc((cap ? cap : 1) * sizeof *s->E_eV);
  s->grid = malloc(cap ? cap : 1);
  if (have[0]) s->interband_rel = malloc((cap ? cap : 1) * sizeof(double));
  if (have[1]) s->intersubband = malloc((cap ? cap : 1) * sizeof(double));
  if (have[1] && s->has_continuum) s->continuum = malloc((cap ? cap : 1) * sizeof(double));
  if (!s->E_eV || !s->grid || (have[0] && !s->interband_rel) || (have[1] && !s->intersubband) ||
      (have[1] && s->has_continuum && !s->continuum))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (spectra)");
  size_t i[2] = {have[0] ? 0 : N, have[1] ? 0 : N}, n = 0;
  while (i[0] < N || i[1] < N) {
    double a = i[0] < N ? grid_E(s, 0, i[0]) : INFINITY, b = i[1] < N ? grid_E(s, 1, i[1]) : INFINITY;
    double e = fmin(a, b);
    unsigned char bits = (unsigned char)((a == e ? 1 : 0) | (b == e ? 2 : 0));
    if (a == e) i[0]++;
    if (b == e) i[1]++;
    s->E_eV[n] = e;
    s->grid[n++] = bits;
  }
  s->n = n;
  return EW_OK;
}

ew_status ew_wf_spectra_compute(const ew_result *r, double theta_deg, double n_refr,
                                ew_wf_spectra *s, ew_error *err) {
  memset(s, 0, sizeof *s);
  if (!(theta_deg >= 0 && theta_deg < 90))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--angle wants an internal angle in degrees in "
                   "[0, 90), got %g", theta_deg);
  if (!(n_refr > 0) || !isfinite(n_refr))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--index wants a refractive index > 0, got %g",
                   n_refr);
  const ew_stack *st = r->stack;
  s->theta_deg = theta_deg;
  s->n_refr = n_refr;
  s->sheet_density_cm2 = st->sheet_density_cm2;
  s->linewidth_meV = st->linewidth_meV;
  for (int g = 0; g < 2; g++) s->lo_eV[g] = s->hi_eV[g] = NAN;
  interband_grid(r, s);
  intersubband_grid(r, s);
  ew_status rc = union_grid(s, err);
  if (rc == EW_OK && s->interband_rel)
    rc = ew_interband_absorption(r, st->linewidth_meV, s->n, s->E_eV, s->interband_rel, err);
  if (rc == EW_OK && s->intersubband)
    rc = ew_intersubband_absorption(r, st->sheet_density_cm2, st->linewidth_meV, theta_deg,
                                    n_refr, s->n, s->E_eV, s->intersubband, err);
  if (rc == EW_OK && s->continuum)
    rc = ew_intersubband_continuum_absorption(r, st->sheet_density_cm2, st->linewidth_meV,
                                              theta_deg, n_refr, s->n, s->E_eV, s->continuum,
                                              err);
  if (rc != EW_OK) ew_wf_spectra_free(s);
  return rc;
}

void ew_wf_spectra_write_csv(const ew_wf_spectra *s, FILE *out) {
  fputs("E_eV,interband_rel,intersubband_fraction,intersubband_continuum_fraction\n", out);
  for (size_t k = 0; k < s->n; k++) {
    fprintf(out, "%.10g,", s->E_eV[k]);
    if (s->interband_rel) fprintf(out, "%.10g", s->interband_rel[k]);
    fputc(',', out);
    if (s->intersubband) fprintf(out, "%.10g", s->intersubband[k]);
    fputc(',', out);
    if (s->continuum) fprintf(out, "%.10g", s->continuum[k]);
    fputc('\n', out);
  }
}

double ew_wf_spectra_value(const ew_wf_spectra *s, int which, size_t k) {
  if (!which) return s->interband_rel[k];
  return s->intersubband[k] + (s->continuum ? s->continuum[k] : 0.0);
}

size_t ew_wf_spectra_peaks(const ew_wf_spectra *s, int which, ew_wf_peak *out, size_t cap) {
  const double *v0 = which ? s->intersubband : s->interband_rel;
  unsigned char bit = which ? 2 : 1;
  if (!v0) return 0;
#define v(k) ew_wf_spectra_value(s, which, (k))
  double vmax = -INFINITY;
  for (size_t k = 0; k < s->n; k++)
    if (s->grid[k] & bit) vmax = fmax(vmax, v(k));
  if (!(vmax > 0)) return 0;
  /* walk the spectrum's own grid: prev, cur, next are consecutive points of it */
  size_t cnt = 0, prev = SIZE_MAX, cur = SIZE_MAX;
  for (size_t k = 0; k <= s->n; k++) {
    if (k < s->n && !(s->grid[k] & bit)) continue;
    if (prev != SIZE_MAX && cur != SIZE_MAX && k < s->n && v(cur) > v(prev) &&
        v(cur) >= v(k) && v(cur) >= EW_WF_PEAK_FRACTION * vmax) {
      if (cnt < cap) out[cnt] = (ew_wf_peak){s->E_eV[cur], v(cur)};
      cnt++;
    }
    prev = cur;
    cur = k;
  }
#undef v
  return cnt;
}

void ew_wf_spectra_print_peaks(const ew_wf_spectra *s, FILE *out) {
  fprintf(out, "\nAbsorption spectra (Lorentzian FWHM %g meV", s->linewidth_meV);
  if (s->intersubband)
    fprintf(out, "; intersubband: N_s = %g cm^-2 in e1, TM at %g deg inside n = %g",
            s->sheet_density_cm2, s->theta_deg, s->n_refr);
  fprintf(out, ")\n  peaks: local maxima above %g %% of each spectrum's maximum\n",
          100.0 * EW_WF_PEAK_FRACTION);
  if (s->continuum)
    fprintf(out, "  intersubband: bound lines and e1 to the continuum (threshold %.6f eV), "
            "summed\n", s->threshold_eV);
  fprintf(out, "  %-13s %10s %13s %12s\n", "spectrum", "energy_eV", "wavelength", "value");
  static const char *const nm[2] = {"interband", "intersubband"};
  for (int w = 0; w < 2; w++) {
    if (s->note[w][0]) {
      fprintf(out, "  %-13s none: %s\n", nm[w], s->note[w]);
      continue;
    }
    ew_wf_peak pk[64];
    size_t n = ew_wf_spectra_peaks(s, w, pk, 64);
    if (n == 0) fprintf(out, "  %-13s none above the threshold\n", nm[w]);
    for (size_t k = 0; k < n && k < 64; k++) {
      double lam = EW_HC_EVNM / pk[k].E_eV;
      char wl[32];
      if (!(pk[k].E_eV > 0)) snprintf(wl, sizeof wl, "-");
      else if (lam >= 2000) snprintf(wl, sizeof wl, "%.4f um", lam / 1e3);
      else snprintf(wl, sizeof wl, "%.2f nm", lam);
      fprintf(out, "  %-13s %10.6f %13s %12.5g\n", nm[w], pk[k].E_eV, wl, pk[k].value);
    }
    if (n > 64) fprintf(out, "  %-13s (%zu more)\n", nm[w], n - 64);
  }
}

ew_status ew_wf_spectra_plot(const ew_wf_spectra *s, const char *path, ew_wf_outset *set,
                             int written[2], ew_error *err) {
  written[0] = written[1] = 0;
  char paths[2][EW_WF_PATH_MAX];
  ew_status rc = ew_wf_plot_companion(path, "", "--spectra-plot", paths[0], sizeof paths[0], err);
  if (rc == EW_OK)
    rc = ew_wf_plot_companion(path, "intersubband", "--spectra-plot", paths[1], sizeof paths[1],
                              err);
  if (rc != EW_OK) return rc;
  size_t cap = s->n ? s->n : 1;
  double *x = malloc(cap * sizeof *x), *y = malloc(cap * sizeof *y);
  double *yb = malloc(cap * sizeof *yb), *yc = malloc(cap * sizeof *yc);
  if (!x || !y || !yb || !yc) {
    free(x), free(y), free(yb), free(yc);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (spectra picture)");
  }
  for (int w = 0; w < 2 && rc == EW_OK; w++) {
    const double *v = w ? s->intersubband : s->interband_rel;
    if (!v) continue;
    size_t m = 0;
    for (size_t k = 0; k < s->n; k++)
      if (s->grid[k] & (w ? 2 : 1)) {
        x[m] = w ? 1e3 * s->E_eV[k] : s->E_eV[k];
        y[m++] = ew_wf_spectra_value(s, w, k);
      }
    char title[400];
    if (w)
      snprintf(title, sizeof title, "Intersubband absorption%s (%g meV FWHM, %g deg, n = %g)",
               s->continuum ? ", bound and continuum" : "", s->linewidth_meV, s->theta_deg,
               s->n_refr);
    else
      snprintf(title, sizeof title, "Interband absorption, relative (%g meV FWHM)",
               s->linewidth_meV);
    /* the intersubband chart with a continuum: the total, the bound lines and the
       bound-to-continuum part as three curves */
    const double *ys[3] = {y, yb, yc};
    const char *names[3] = {w ? (s->continuum ? "total" : "absorbed fraction per pass")
                              : "interband_rel",
                            "bound lines", "continuum"};
    size_t ns = 1;
    if (w && s->continuum) {
      ns = 3;
      for (size_t k = 0, q = 0; k < s->n; k++)
        if (s->grid[k] & 2) yb[q] = s->intersubband[k], yc[q++] = s->continuum[k];
    }
    rc = ew_wf_chart_into_set(set, paths[w], "--spectra-plot", title,
                              w ? "photon energy (meV)" : "photon energy (eV)",
                              w ? "fraction absorbed per pass" : "relative absorption", m, x, ns,
                              ys, names, err);
    if (rc == EW_OK) written[w] = 1;
  }
  free(x), free(y), free(yb), free(yc);
  return rc;
}
