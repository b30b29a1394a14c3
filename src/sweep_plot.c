/* sweep_plot.c — the pictures of a sweep (see sweep_plot.h): the sweep table's columns
 * picked by kind (level, interband, intersubband) and drawn with ew_plot_xy. */
#include "sweep_plot.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "chart_file.h"
#include "error.h"
#include "range.h"

const char *const EW_WF_PLOT_SUFFIX[EW_WF_PLOT_FILES] = {"", "interband", "intersubband"};

static int ends_with(const char *s, const char *tail) {
  size_t a = strlen(s), b = strlen(tail);
  return a >= b && !strcmp(s + a - b, tail);
}

/* Kind of a sweep column: 0 level (…_eV without '-'), 1 interband λ (…_nm), 2 intersubband
 * λ (…_um), -1 anything else. */
static int column_kind(const char *name) {
  if (ends_with(name, "_eV") && !strchr(name, '-')) return 0;
  if (ends_with(name, "_nm") && strchr(name, '-')) return 1;
  if (ends_with(name, "_um") && strchr(name, '-')) return 2;
  return -1;
}

/* Axis label of a varied key: the key, with its unit when the key is a known one. */
static void key_label(const char *key, char *buf, size_t size) {
  const char *unit = NULL;
  if (ends_with(key, "thickness") || !strcmp(key, "grid_step")) unit = "nm";
  else if (!strcmp(key, "temperature")) unit = "K";
  else if (ends_with(key, ".x") || ends_with(key, ".y")) unit = "composition";
  else if (ends_with(key, ".Ec") || ends_with(key, ".Ev")) unit = "eV";
  else if (!strcmp(key, "field")) unit = "kV/cm";
  if (unit) snprintf(buf, size, "%s (%s)", key, unit);
  else snprintf(buf, size, "%s", key);
}

static int cmp_double(const void *pa, const void *pb) {
  double a = *(const double *)pa, b = *(const double *)pb;
  return (a > b) - (a < b);
}

static const char *base_of(const char *path) {
  const char *sl = strrchr(path, '/');
  return sl ? sl + 1 : path;
}

/* The series of one chart and the sweep's axes. */
typedef struct {
  size_t R, C, maxs;
  double *x;         /* [R] x values (two keys: the first key's, in order of appearance) */
  size_t nx;
  size_t *ix, *iy;   /* [R] two keys: row i's x index and its second-key value index */
  double *second;    /* [R] two keys: the distinct second-key values, sorted (n2) */
  size_t n2;
  double *ybuf;      /* [maxs × R] the series */
  const double **ys;
  char (*labels)[96];
  const char **names;
  size_t ns;         /* series of the chart in progress */
  char title[800];
} plot_work;

static ew_status work_alloc(plot_work *w, const ew_wf_table *t, ew_error *err) {
  memset(w, 0, sizeof *w);
  w->R = t->nrows;
  w->C = t->ncol;
  /* + 1: the series that marks the points with warnings (flag_series) */
  w->maxs = (w->C > EW_WF_PLOT_MAX_CURVES ? w->C : EW_WF_PLOT_MAX_CURVES) + 1;
  w->x = malloc(w->R * sizeof *w->x);
  w->ys = malloc(w->maxs * sizeof *w->ys);
  w->labels = malloc(w->maxs * sizeof *w->labels);
  w->names = malloc(w->maxs * sizeof *w->names);
  w->ix = malloc(w->R * sizeof *w->ix);
  w->iy = malloc(w->R * sizeof *w->iy);
  w->second = malloc(w->R * sizeof *w->second);
  w->ybuf = malloc(w->maxs * w->R * sizeof *w->ybuf);
  if (!w->x || !w->ys || !w->labels || !w->names || !w->ix || !w->iy || !w->second || !w->ybuf)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep picture)");
  return EW_OK;
}

static void work_free(plot_work *w) {
  free(w->x);
  free(w->ys);
  free(w->labels);
  free(w->names);
  free(w->ix);
  free(w->iy);
  free(w->second);
  free(w->ybuf);
}

/* Two keys: rows run over the second key inside the first, so x = the first key's values in
 * order of appearance and the curves are the distinct second-key values (sorted). */
static void axes_two_keys(const ew_wf_table *t, plot_work *w) {
  size_t R = w->R, C = w->C;
  for (size_t i = 0; i < R; i++) {
    double v0 = t->v[i * C];
    if (w->nx == 0 || w->x[w->nx - 1] != v0) w->x[w->nx++] = v0;
    w->ix[i] = w->nx - 1;
    w->second[i] = t->v[i * C + 1];
  }
  double *u = w->ybuf; /* scratch: sorted distinct second values */
  memcpy(u, w->second, R * sizeof *u);
  qsort(u, R, sizeof *u, cmp_double);
  for (size_t i = 0; i < R; i++)
    if (w->n2 == 0 || u[w->n2 - 1] != u[i]) u[w->n2++] = u[i];
  for (size_t i = 0; i < R; i++) {
    const double *hit = bsearch(&w->second[i], u, w->n2, sizeof *u, cmp_double);
    w->iy[i] = (size_t)(hit - u);
  }
  memcpy(w->second, u, w->n2 * sizeof *u); /* second[0..n2) = the distinct values */
}

static const char *const WHAT1[EW_WF_PLOT_FILES] = {"levels", "interband lines",
                                                    "intersubband lines"};
static const char *const COL2[EW_WF_PLOT_FILES] = {"e1_eV", "e1-hh1_nm", "e1-e2_um"};

/* An intersubband column of holes (hh1-hh2_um, lh1-lh2_um): left out of the chart when the
 * sweep has electron lines, whose µm they would squash (hh1-hh2 runs to 180 µm). */
static int hole_line(const char *name) { return name[0] == 'h' || name[0] == 'l'; }

static int any_electron_line(const ew_wf_table *t) {
  for (size_t c = 1; c < t->ncol; c++)
    if (column_kind(t->names[c]) == 2 && !hole_line(t->names[c])) return 1;
  return 0;
}

/* One key: every column of kind f is a series (intersubband: the electron lines when there
 * are any). */
static void series_one_key(const ew_wf_table *t, int f, plot_work *w) {
  size_t R = w->R, C = w->C;
  int electrons_only = f == 2 && any_electron_line(t);
  w->ns = 0;
  for (size_t c = 1; c < C; c++) {
    if (column_kind(t->names[c]) != f) continue;
    if (electrons_only && hole_line(t->names[c])) continue;
    double *y = w->ybuf + w->ns * R;
    for (size_t i = 0; i < R; i++) y[i] = t->v[i * C + c];
    snprintf(w->labels[w->ns], sizeof w->labels[w->ns], "%.*s", (int)(strlen(t->names[c]) - 3),
             t->names[c]);
    w->ys[w->ns] = y;
    w->names[w->ns] = w->labels[w->ns];
    w->ns++;
  }
  snprintf(w->title, sizeof w->title, "%s: %s%s against %s", base_of(t->stack),
           electrons_only ? "electron " : "", WHAT1[f], t->names[0]);
}

/* Two keys: column COL2[f], one curve per picked value of the second key. */
static void series_two_keys(const ew_wf_table *t, int f, plot_work *w) {
  size_t R = w->R, C = w->C, c = 2, nx = w->nx, n2 = w->n2;
  w->ns = 0;
  while (c < C && strcmp(t->names[c], COL2[f]) != 0) c++;
  if (c < C) {
    size_t S = n2 < EW_WF_PLOT_MAX_CURVES ? n2 : EW_WF_PLOT_MAX_CURVES;
    size_t pick[EW_WF_PLOT_MAX_CURVES];
    for (size_t q = 0; q < S; q++) pick[q] = S > 1 ? (q * (n2 - 1) + (S - 1) / 2) / (S - 1) : 0;
    for (size_t q = 0; q < S; q++) {
      double *y = w->ybuf + q * nx;
      for (size_t i = 0; i < nx; i++) y[i] = NAN;
      w->ys[q] = y;
      snprintf(w->labels[q], sizeof w->labels[q], "%s=%.6g", t->names[1], w->second[pick[q]]);
      w->names[q] = w->labels[q];
    }
    for (size_t i = 0; i < R; i++)
      for (size_t q = 0; q < S; q++)
        if (w->iy[i] == pick[q]) w->ybuf[q * nx + w->ix[i]] = t->v[i * C + c];
    w->ns = S;
  }
  snprintf(w->title, sizeof w->title, "%s: %.*s against %s, one curve per %s", base_of(t->stack),
           (int)(strlen(COL2[f]) - 3), COL2[f], t->names[0], t->names[1]);
}

/* Overlap |⟨a|b⟩| of two sampled ψ (each of unit norm, or zero). */
static double overlap(const double *a, const double *b) {
  double s = 0;
  for (size_t k = 0; k < EW_WF_PSI_SAMPLES; k++) s += a[k] * b[k];
  return fabs(s);
}

/* A field sweep's levels chart: each curve follows one level by the overlap of its ψ with
 * the previous point's (greedy, largest overlap first, within a band; pairs below 1/2 are not
 * matched, and what is left keeps energy order), so a quasi-bound level that trades places
 * with another does not zigzag between two curves.  Series k is level column k. */
static ew_status track_levels(const ew_wf_table *t, plot_work *w, ew_error *err) {
  const size_t L = t->nlev, K = EW_WF_PSI_SAMPLES, R = w->R, C = w->C;
  if (L == 0 || w->ns != L || !t->psi) return EW_OK;
  double *prev = malloc(L * K * sizeof *prev);
  size_t *of = malloc(2 * L * sizeof *of); /* of[a]: the column track a takes at this point */
  if (!prev || !of) {
    free(prev);
    free(of);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep picture)");
  }
  unsigned char *taken = (unsigned char *)(of + L); /* L bytes of the second half */
  memcpy(prev, t->psi, L * K * sizeof *prev);
  for (size_t i = 1; i < R; i++) {
    const double *cur = t->psi + i * L * K;
    for (size_t a = 0; a < L; a++) of[a] = SIZE_MAX, taken[a] = 0;
    for (;;) {
      double best = 0.5;
      size_t ba = SIZE_MAX, bc = SIZE_MAX;
      for (size_t a = 0; a < L; a++)
        for (size_t c = 0; of[a] == SIZE_MAX && c < L; c++) {
          if (taken[c] || t->band[c] != t->band[a]) continue;
          double o = overlap(prev + a * K, cur + c * K);
          if (o > best) best = o, ba = a, bc = c;
        }
      if (ba == SIZE_MAX) break;
      of[ba] = bc, taken[bc] = 1;
    }
    for (size_t a = 0; a < L; a++) /* the rest in energy order, within the band */
      for (size_t c = 0; of[a] == SIZE_MAX && c < L; c++)
        if (!taken[c] && t->band[c] == t->band[a]) of[a] = c, taken[c] = 1;
    for (size_t a = 0; a < L; a++) {
      size_t c = of[a] == SIZE_MAX ? a : of[a];
      w->ybuf[a * R + i] = t->v[i * C + t->lev0 + c];
      if (overlap(cur + c * K, cur + c * K) > 0) memcpy(prev + a * K, cur + c * K, K * sizeof *prev);
    }
  }
  free(prev);
  free(of);
  return EW_OK;
}

/* The points with warnings: one more series over the chart's first curve, finite only where
 * the point's stack has warnings (a dot, or a line in its own colour over a run of them),
 * named after the codes, so that flagged values stand out in the legend and on the curve.
 * Two keys: the first curve is the first value of the second key (rows with iy == 0). */
static void flag_series(const ew_wf_table *t, plot_work *w) {
  if (w->ns == 0 || !t->warnings) return;
  size_t R = w->R, n = t->nkeys == 1 ? R : w->nx, any = SIZE_MAX;
  double *y = w->ybuf + w->ns * R;
  for (size_t i = 0; i < n; i++) y[i] = NAN;
  for (size_t i = 0; i < R; i++) {
    if (!t->warnings[i][0]) continue;
    size_t at = t->nkeys == 1 ? i : w->ix[i];
    if (t->nkeys == 2 && w->iy[i] != 0) continue;
    y[at] = w->ys[0][at];
    if (any == SIZE_MAX) any = i;
  }
  if (any == SIZE_MAX) return;
  snprintf(w->labels[w->ns], sizeof w->labels[w->ns], "warnings: %.80s", t->warnings[any]);
  w->ys[w->ns] = y;
  w->names[w->ns] = w->labels[w->ns];
  w->ns++;
}

ew_status ew_wf_sweep_plot(const ew_wf_table *t, const char *path, ew_wf_outset *set,
                           int written[EW_WF_PLOT_FILES], ew_error *err) {
  for (int f = 0; f < EW_WF_PLOT_FILES; f++) written[f] = 0;
  if (!t || t->nkeys < 1 || t->nkeys > 2 || t->nrows == 0)
    return ew_fail(err, EW_ERR_USAGE, path, 0, "--plot: the sweep has no points to draw");
  char paths[EW_WF_PLOT_FILES][EW_WF_PATH_MAX];
  for (int f = 0; f < EW_WF_PLOT_FILES; f++) {
    ew_status rc = ew_wf_plot_companion(path, EW_WF_PLOT_SUFFIX[f], "--plot", paths[f],
                                        sizeof paths[f], err);
    if (rc != EW_OK) return rc;
  }
  static const char *const ylab[EW_WF_PLOT_FILES] = {"energy (eV)", "wavelength (nm)",
                                                     "wavelength (\xc2\xb5m)"};
  char xlabel[EW_WF_KEY_MAX + 32];
  key_label(t->names[0], xlabel, sizeof xlabel);
  plot_work w;
  ew_status rc = work_alloc(&w, t, err);
  if (rc == EW_OK && t->nkeys == 1) {
    for (size_t i = 0; i < w.R; i++) w.x[i] = t->v[i * w.C];
    w.nx = w.R;
  } else if (rc == EW_OK) {
    axes_two_keys(t, &w);
  }
  for (int f = 0; f < EW_WF_PLOT_FILES && rc == EW_OK; f++) {
    if (t->nkeys == 1) series_one_key(t, f, &w);
    else series_two_keys(t, f, &w);
    if (f == 0 && t->nkeys == 1 && !strcmp(t->names[0], "field")) {
      rc = track_levels(t, &w, err);
      snprintf(w.title, sizeof w.title, "%s: levels against field, followed by overlap "
               "(names at the first point)", base_of(t->stack));
      if (rc != EW_OK) break;
    }
    flag_series(t, &w);
    if (w.ns == 0) continue; /* no such column in this sweep: no chart */
    /* the levels chart: electron and hole levels lie a band gap apart, so its axis breaks */
    ew_xy_chart ch = {w.title, xlabel, ylab[f], w.nx, w.ns, w.x, w.ys, w.names, f == 0};
    rc = ew_wf_chart_desc_into_set(set, paths[f], "--plot", &ch, err);
    if (rc == EW_OK) written[f] = 1;
  }
  work_free(&w);
  return rc;
}
