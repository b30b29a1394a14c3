/* sweep.c — parameter sweeps (see sweep.h): the column set fixed on a sub-grid, the shard's
 * points solved in parallel chunks, rows written in point order as CSV and JSON. */
#include "sweep.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "csv_writer.h"
#include "error.h"
#include "json_writer.h"
#include "line_name.h"
#include "parallel.h"
#include "progress.h"
#include "solve.h"
#include "stack.h"

#define SWEEP_TIED_MAX 8     /* keys set per point, all ranges together (tied keys) */
#define WF_COLUMN_SAMPLES 9 /* values per axis solved first to fix the sweep's columns */

void ew_wf_sweep_opt_default(ew_wf_sweep_opt *o) {
  memset(o, 0, sizeof *o);
  o->header = -1;
}

void ew_wf_table_free(ew_wf_table *t) {
  if (!t) return;
  free(t->names);
  free(t->v);
  free(t->warnings);
  free(t->psi);
  memset(t, 0, sizeof *t);
}

/* Everything a sweep fixes before its first row. */
typedef struct {
  const ew_wf_range *r;
  size_t nr;
  size_t count[2];       /* values per axis (1 for a missing second axis) */
  const char *keys[2];
  size_t np;             /* points of the whole sweep */
  size_t sk, sn;         /* shard K of N */
  size_t lo, hi;         /* the shard's points [lo, hi) */
  int nt;                /* threads */
  ew_wf_pool pool;
  ew_wf_cols cols;
  size_t nl, ncol;       /* main lines, columns */
  int doped;             /* the sub-grid's stacks are self-consistent: depolarised columns */
  size_t nd;             /* depolarised columns: one per intersubband main line when doped */
  ew_wf_linedef *lines;  /* [nl] */
  char (*names)[64];     /* [ncol] */
  /* the keys set at each point: a tied range ("a.x,b.x=…") sets each of its keys to the
   * axis value (both barriers' Al fraction together) */
  size_t nsub;
  const char *sub_keys[SWEEP_TIED_MAX];
  size_t sub_axis[SWEEP_TIED_MAX];
  char sub_buf[SWEEP_TIED_MAX][EW_WF_KEY_MAX];
} sweep_plan;

/* Solve the point with axis values vals: every key of every range set. */
static ew_status solve_point(const sweep_plan *P, const double *vals, ew_stack **st,
                             ew_result **res, ew_error *e) {
  double sv[SWEEP_TIED_MAX];
  for (size_t k = 0; k < P->nsub; k++) sv[k] = vals[P->sub_axis[k]];
  return ew_wf_pool_solve(&P->pool, P->nsub, P->sub_keys, sv, st, res, e);
}

/* Split range a's key at commas into the plan's keys; each checked against the stack. */
static ew_status split_tied(const ew_wf_model *m, sweep_plan *P, size_t a, ew_error *err) {
  const char *key = P->r[a].key;
  for (const char *p = key;;) {
    const char *c = strchr(p, ',');
    size_t len = c ? (size_t)(c - p) : strlen(p);
    if (len == 0)
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: an empty key between commas (tie "
                     "keys as a.x,b.x=FROM:TO:STEP)", key);
    if (P->nsub == SWEEP_TIED_MAX)
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: at most %d keys in all", key,
                     SWEEP_TIED_MAX);
    char *b = P->sub_buf[P->nsub];
    memcpy(b, p, len); /* len < EW_WF_KEY_MAX: a part of the range's key */
    b[len] = '\0';
    for (size_t k = 0; k < P->nsub; k++)
      if (!strcmp(P->sub_keys[k], b))
        return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s given twice", b);
    double nominal;
    ew_status rc = ew_wf_key_check(m, b, "--vary", &nominal, err);
    if (rc != EW_OK) return rc;
    P->sub_keys[P->nsub] = b;
    P->sub_axis[P->nsub++] = a;
    if (!c) return EW_OK;
    p = c + 1;
  }
}

size_t ew_wf_sweep_points(const ew_wf_range *r, size_t nr) {
  return ew_wf_range_count(&r[0]) * (nr > 1 ? ew_wf_range_count(&r[1]) : 1);
}

void ew_wf_sweep_point(const ew_wf_range *r, size_t nr, size_t p, double *vals) {
  if (nr == 1) {
    vals[0] = ew_wf_range_value(&r[0], p);
  } else { /* outer loop the first range */
    size_t c1 = ew_wf_range_count(&r[1]);
    vals[0] = ew_wf_range_value(&r[0], p / c1);
    vals[1] = ew_wf_range_value(&r[1], p % c1);
  }
}

static void point_values(const sweep_plan *P, size_t p, double *vals) {
  ew_wf_sweep_point(P->r, P->nr, p, vals);
}

/* The ranges, keys and shard of a sweep, checked before anything is solved. */
static ew_status plan_points(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                             const ew_wf_sweep_opt *o, sweep_plan *P, ew_error *err) {
  if (nr < 1 || nr > 2)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary: give one or two ranges, got %zu", nr);
  P->r = ranges;
  P->nr = nr;
  P->keys[0] = ranges[0].key;
  P->keys[1] = nr > 1 ? ranges[1].key : NULL;
  P->nsub = 0;
  for (size_t i = 0; i < nr; i++) {
    ew_status rc = split_tied(m, P, i, err);
    if (rc != EW_OK) return rc;
    if (!(ranges[i].step > 0))
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s: a sweep needs FROM:TO:STEP",
                     ranges[i].key);
  }
  if (nr == 2 && !strcmp(P->keys[0], P->keys[1]))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s given twice", P->keys[0]);
  P->count[0] = ew_wf_range_count(&ranges[0]);
  P->count[1] = nr > 1 ? ew_wf_range_count(&ranges[1]) : 1;
  double total = (double)P->count[0] * (double)P->count[1];
  if (total > EW_WF_MAX_POINTS)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary: %.0f points is more than the limit %d",
                   total, EW_WF_MAX_POINTS);
  P->np = P->count[0] * P->count[1];
  P->sn = o->shard_n > 1 ? o->shard_n : 1;
  P->sk = o->shard_n > 1 ? o->shard_k : 1;
  if (P->sk < 1 || P->sk > P->sn)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--shard %zu/%zu: K must be in 1..N", P->sk,
                   P->sn);
  /* contiguous split: part K holds points [(K−1)·P/N, K·P/N), so the parts concatenate */
  P->lo = (size_t)((unsigned long long)P->np * (P->sk - 1) / P->sn);
  P->hi = (size_t)((unsigned long long)P->np * P->sk / P->sn);
  P->nt = ew_wf_threads(o->threads);
  return ew_wf_pool_open(m, P->nt, &P->pool, err);
}

/* The sub-grid that fixes the columns: up to WF_COLUMN_SAMPLES evenly spaced values per axis,
 * both ends included (every value when the axis has no more).  Returns the point count. */
static size_t column_points(const sweep_plan *P, size_t *corner) {
  size_t sub[2][WF_COLUMN_SAMPLES] = {{0}}, ns[2] = {1, 1};
  for (size_t a = 0; a < P->nr; a++) {
    size_t n = P->count[a], S = n < WF_COLUMN_SAMPLES ? n : WF_COLUMN_SAMPLES;
    ns[a] = 0;
    for (size_t q = 0; q < S; q++) {
      size_t idx = S > 1 ? (size_t)(((unsigned long long)q * (n - 1) + (S - 1) / 2) / (S - 1)) : 0;
      if (ns[a] == 0 || sub[a][ns[a] - 1] != idx) sub[a][ns[a]++] = idx;
    }
  }
  if (P->nr == 1) sub[1][0] = 0;
  size_t nc = ns[0] * ns[1];
  for (size_t q = 0; q < nc; q++) corner[q] = sub[0][q / ns[1]] * P->count[1] + sub[1][q % ns[1]];
  return nc;
}

/* 1. The column set: the levels bound on the sub-grid, at least min_levels per band.  Every
 *    shard solves the same sub-grid, so all shards and the whole sweep agree on the columns
 *    without seeing each other's points.  Level counts need not be monotonic (raising one
 *    barrier of an asymmetric well pushes a level out of the window the other barrier sets),
 *    hence a sub-grid rather than the end points; a point with more levels is refused
 *    (check_counts) and the message names the --levels that fixes it. */
static ew_status plan_columns(sweep_plan *P, size_t min_levels, ew_error *err) {
  size_t corner[WF_COLUMN_SAMPLES * WF_COLUMN_SAMPLES];
  size_t ccount[WF_COLUMN_SAMPLES * WF_COLUMN_SAMPLES][EW_BAND_COUNT];
  unsigned char dp[WF_COLUMN_SAMPLES * WF_COLUMN_SAMPLES] = {0}; /* self-consistent there */
  size_t nc = column_points(P, corner);
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  EW_OMP(omp parallel for num_threads(P->nt) schedule(dynamic, 1))
  for (size_t q = 0; q < nc; q++) {
    double vals[2];
    ew_error e = {0};
    ew_stack *st = NULL;
    ew_result *res = NULL;
    point_values(P, corner[q], vals);
    ew_status rc = solve_point(P, vals, &st, &res, &e);
    if (rc == EW_OK) {
      for (int b = 0; b < EW_BAND_COUNT; b++) ccount[q][b] = res->band_count[b];
      dp[q] = res->sp != NULL;
    } else
      ew_wf_fail_record(&fl, corner[q], rc, &e);
    ew_result_free(res);
    ew_stack_free(st);
  }
  if (fl.index != SIZE_MAX) return ew_wf_fail_report(&fl, err);
  for (size_t q = 0; q < nc; q++) P->doped |= dp[q];
  size_t maxc[EW_BAND_COUNT];
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    maxc[b] = min_levels;
    for (size_t q = 0; q < nc; q++)
      if (ccount[q][b] > maxc[b]) maxc[b] = ccount[q][b];
  }
  P->cols = ew_wf_cols_of_counts(maxc);
  return EW_OK;
}

static void column_name(const sweep_plan *P, size_t j, char *buf, size_t size) {
  const ew_wf_cols *c = &P->cols;
  if (j < P->nr) {
    snprintf(buf, size, "%s", P->keys[j]);
    return;
  }
  j -= P->nr;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    if (j < c->nlev[b]) {
      snprintf(buf, size, "%s%zu_eV", ew_band_name((ew_band)b), j + 1);
      return;
    }
    j -= c->nlev[b];
  }
  if (j / 3 >= P->nl) {
    j -= 3 * P->nl;
    /* the depolarisation-shifted intersubband lines (line_name.h "e1-e2:depol") */
    if (j < P->nd) snprintf(buf, size, "%s_depol_eV", P->lines[j].name);
    else snprintf(buf, size, "warnings");
    return;
  }
  const ew_wf_linedef *d = &P->lines[j / 3];
  static const char *const isb[] = {"eV", "um", "f"}, *const ib[] = {"eV", "nm", "overlap"};
  snprintf(buf, size, "%s_%s", d->name, (d->interband ? ib : isb)[j % 3]);
}

/* Columns: keys, levels, per main line three values, for a doped stack the depolarised
 * energy of every intersubband main line (…_depol_eV, the main lines list those first), then
 * the warning codes. */
static ew_status plan_names(sweep_plan *P, ew_error *err) {
  const ew_wf_cols *c = &P->cols;
  P->nl = ew_wf_main_lines(c, NULL, 0);
  P->nd = P->doped ? c->nlev[0] + c->nlev[1] + c->nlev[2] : 0;
  for (int b = 0; b < EW_BAND_COUNT && P->doped; b++) P->nd -= c->nlev[b] ? 1 : 0;
  P->ncol = P->nr + c->nlev[0] + c->nlev[1] + c->nlev[2] + 3 * P->nl + P->nd + 1;
  P->lines = malloc((P->nl ? P->nl : 1) * sizeof *P->lines);
  P->names = malloc(P->ncol * sizeof *P->names);
  if (!P->lines || !P->names)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep rows)");
  ew_wf_main_lines(c, P->lines, P->nl);
  for (size_t j = 0; j < P->ncol; j++) column_name(P, j, P->names[j], sizeof P->names[j]);
  return EW_OK;
}

static void plan_free(sweep_plan *P) {
  ew_wf_pool_free(&P->pool);
  free(P->lines);
  free(P->names);
}

static ew_status table_begin(const sweep_plan *P, const char *stack, ew_wf_table *tab,
                             ew_error *err) {
  memset(tab, 0, sizeof *tab);
  snprintf(tab->stack, sizeof tab->stack, "%s", stack);
  tab->nkeys = P->nr;
  tab->ncol = P->ncol;
  tab->names = malloc(P->ncol * sizeof *tab->names);
  size_t rows = (P->hi - P->lo) ? (P->hi - P->lo) : 1;
  tab->v = malloc(rows * P->ncol * sizeof *tab->v);
  tab->warnings = malloc(rows * sizeof *tab->warnings);
  tab->lev0 = P->nr;
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t n = 0; n < P->cols.nlev[b] && tab->nlev < sizeof tab->band / sizeof tab->band[0]; n++)
      tab->band[tab->nlev++] = (ew_band)b;
  tab->psi = malloc((rows * tab->nlev * EW_WF_PSI_SAMPLES + 1) * sizeof *tab->psi);
  if (!tab->names || !tab->v || !tab->warnings || !tab->psi) {
    ew_wf_table_free(tab);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep table of %zu points for "
                   "the picture)", P->hi - P->lo);
  }
  memcpy(tab->names, P->names, P->ncol * sizeof *P->names);
  return EW_OK;
}

static void json_begin(const sweep_plan *P, const char *stack, FILE *json) {
  fputs("{\"stack\":", json);
  ew_json_write_string(json, stack);
  fputs(",\"varied\":[", json);
  for (size_t i = 0; i < P->nr; i++) {
    if (i) fputc(',', json);
    ew_json_write_string(json, P->keys[i]);
  }
  fprintf(json, "],\"points_total\":%zu,\"shard\":{\"k\":%zu,\"n\":%zu,\"first\":%zu,"
          "\"count\":%zu},\"columns\":[", P->np, P->sk, P->sn, P->lo, P->hi - P->lo);
  for (size_t j = 0; j < P->ncol; j++) {
    if (j) fputc(',', json);
    ew_json_write_string(json, P->names[j]);
  }
  fputs("],\"points\":[", json);
}

static void fill_row(const ew_result *r, const sweep_plan *P, const double *vals, double *row,
                     char *codes) {
  ew_result_warning_codes_join(r, codes, EW_WARNING_CODES_MAX);
  row[P->ncol - 1] = NAN; /* the codes column: text, held in codes */
  size_t j = 0;
  for (size_t i = 0; i < P->nr; i++) row[j++] = vals[i];
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t n = 1; n <= P->cols.nlev[b]; n++)
      row[j++] = ew_wf_level_energy(r, (ew_band)b, (int)n);
  for (size_t k = 0; k < P->nl; k++, j += 3) {
    const ew_wf_linedef *d = &P->lines[k];
    size_t ia = ew_wf_level_index(r, d->a.band, d->a.n);
    size_t ib = ew_wf_level_index(r, d->b.band, d->b.n);
    const ew_line *ln = NULL;
    if (ia != SIZE_MAX && ib != SIZE_MAX)
      ln = d->interband ? ew_wf_find_line(r, ia, ib) : ew_wf_find_line(r, ib, ia);
    if (!ln) {
      row[j] = row[j + 1] = row[j + 2] = NAN;
      continue;
    }
    row[j] = ln->energy_eV;
    row[j + 1] = d->interband ? ln->wavelength_nm : ln->wavelength_nm / 1e3;
    row[j + 2] = d->interband ? ln->overlap : ln->oscillator_strength;
  }
  for (size_t k = 0; k < P->nd; k++) { /* the match target's one definition */
    char nm[80];
    snprintf(nm, sizeof nm, "%s:depol", P->lines[k].name);
    ew_wf_line_energy(r, nm, &row[j++], NULL);
  }
}

/* Each level column's ψ at EW_WF_PSI_SAMPLES evenly spaced z (linear between nodes), unit
 * norm; zeros for a level not bound here (for the pictures' level tracking). */
static void sample_psi(const ew_result *r, const sweep_plan *P, double *out) {
  const size_t K = EW_WF_PSI_SAMPLES, n = r->grid->n;
  const double *z = ew_result_z_nm(r);
  size_t q = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t lv = 1; lv <= P->cols.nlev[b] && q < 3 * 64; lv++, q++) {
      double *o = out + q * K, s2 = 0;
      size_t i = ew_wf_level_index(r, (ew_band)b, (int)lv), m = 0;
      const double *psi = i != SIZE_MAX ? ew_result_wavefunction(r, i) : NULL;
      for (size_t k = 0; k < K; k++) {
        double zz = z[0] + (z[n - 1] - z[0]) * (double)k / (double)(K - 1);
        while (m + 2 < n && z[m + 1] < zz) m++;
        double t = z[m + 1] > z[m] ? (zz - z[m]) / (z[m + 1] - z[m]) : 0;
        o[k] = psi ? psi[m] + t * (psi[m + 1] - psi[m]) : 0;
        s2 += o[k] * o[k];
      }
      for (size_t k = 0; k < K && s2 > 0; k++) o[k] /= sqrt(s2);
    }
}

/* The sub-grid fixed the columns; a point with more levels cannot be written. */
static ew_status check_counts(const ew_result *r, const sweep_plan *P, const double *vals,
                              ew_error *err) {
  for (int b = 0; b < EW_BAND_COUNT; b++)
    if (r->band_count[b] > P->cols.nlev[b]) {
      char at[320];
      ew_wf_point_text(at, sizeof at, P->nr, P->keys, vals);
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "at %s %zu %s levels are bound but the sweep's "
                     "columns, fixed in advance on a sub-grid so that shards agree, hold %zu; "
                     "run again with --levels %zu (or more)", at, r->band_count[b],
                     ew_band_name((ew_band)b), P->cols.nlev[b], r->band_count[b]);
    }
  return EW_OK;
}

/* One point into its row; failures recorded in point order. */
static void solve_row(const sweep_plan *P, size_t p, double *row, char *codes, double *psi,
                      ew_wf_fail *fl) {
  double vals[2];
  ew_error e = {0};
  ew_stack *st = NULL;
  ew_result *res = NULL;
  point_values(P, p, vals);
  ew_status rc = solve_point(P, vals, &st, &res, &e);
  if (rc == EW_OK) rc = check_counts(res, P, vals, &e);
  if (rc == EW_OK) fill_row(res, P, vals, row, codes);
  else ew_wf_fail_record(fl, p, rc, &e);
  if (rc == EW_OK && psi) sample_psi(res, P, psi);
  ew_result_free(res);
  ew_stack_free(st);
}

static void write_row(const sweep_plan *P, size_t p, const double *row, const char *codes,
                      const double *psi, FILE *csv, FILE *json, ew_wf_table *tab) {
  size_t ncol = P->ncol;
  if (csv) {
    for (size_t j = 0; j + 1 < ncol; j++) {
      if (j) fputc(',', csv);
      if (isfinite(row[j])) fprintf(csv, "%.10g", row[j]);
    }
    fprintf(csv, ",%s\n", codes); /* codes hold no comma or quote: a plain RFC 4180 cell */
  }
  if (tab) {
    size_t pk = tab->nlev * EW_WF_PSI_SAMPLES;
    memcpy(tab->psi + tab->nrows * pk, psi, pk * sizeof *psi);
    memcpy(tab->warnings[tab->nrows], codes, EW_WARNING_CODES_MAX);
    memcpy(tab->v + (tab->nrows++) * ncol, row, ncol * sizeof *row);
  }
  if (json) {
    fputs(p > P->lo ? ",\n{" : "\n{", json);
    for (size_t k = 0; k < ncol; k++) {
      if (k) fputc(',', json);
      ew_json_write_string(json, P->names[k]);
      fputc(':', json);
      if (k + 1 < ncol) ew_json_write_number(json, row[k]);
      else ew_json_write_codes(json, codes);
    }
    fputc('}', json);
  }
}

/* 2. The shard's points, in chunks: rows computed in parallel, written in point order. */
static ew_status sweep_rows(const sweep_plan *P, const ew_wf_sweep_opt *o, FILE *csv,
                            FILE *json, ew_wf_table *tab, ew_error *err) {
  const size_t chunk = 64 * (size_t)P->nt, ncol = P->ncol;
  double *rows = malloc(chunk * ncol * sizeof *rows);
  char (*codes)[EW_WARNING_CODES_MAX] = malloc(chunk * sizeof *codes);
  size_t pk = tab ? tab->nlev * EW_WF_PSI_SAMPLES : 0; /* ψ samples per row (pictures only) */
  double *psi = tab ? malloc((chunk * pk + 1) * sizeof *psi) : NULL;
  if (!rows || !codes || (tab && !psi)) {
    free(rows);
    free(codes);
    free(psi);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep rows)");
  }
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  ew_progress pg;
  ew_progress_init(&pg, o->progress, o->progress_ctx, P->hi - P->lo);
  int cancelled = 0;
  for (size_t c0 = P->lo; c0 < P->hi && fl.index == SIZE_MAX && !cancelled; c0 += chunk) {
    size_t cn = P->hi - c0 < chunk ? P->hi - c0 : chunk;
    EW_OMP(omp parallel for num_threads(P->nt) schedule(dynamic, 1))
    for (size_t j = 0; j < cn; j++) {
      if (c0 + j > ew_wf_fail_index(&fl) || ew_progress_cancelled(&pg)) continue;
      solve_row(P, c0 + j, rows + j * ncol, codes[j], psi ? psi + j * pk : NULL, &fl);
      if (o->progress) ew_progress_step(&pg);
    }
    /* a cancelled chunk has holes: none of it is written */
    cancelled = ew_progress_cancelled(&pg);
    if (fl.index != SIZE_MAX || cancelled) break;
    for (size_t j = 0; j < cn; j++)
      write_row(P, c0 + j, rows + j * ncol, codes[j], psi ? psi + j * pk : NULL, csv, json, tab);
  }
  free(rows);
  free(codes);
  free(psi);
  if (fl.index != SIZE_MAX) return ew_wf_fail_report(&fl, err);
  return cancelled ? ew_progress_fail(&pg, "the sweep", "points", err) : EW_OK;
}

ew_status ew_wf_sweep(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                      const ew_wf_sweep_opt *oin, FILE *csv, FILE *json, ew_error *err) {
  ew_wf_sweep_opt o;
  if (oin) o = *oin;
  else ew_wf_sweep_opt_default(&o);
  const char *stack = ew_wf_model_stack(m)->path;
  sweep_plan P;
  memset(&P, 0, sizeof P);
  ew_status rc = plan_points(m, ranges, nr, &o, &P, err);
  if (rc == EW_OK) rc = plan_columns(&P, o.min_levels, err);
  if (rc == EW_OK) rc = plan_names(&P, err);
  if (rc == EW_OK && o.table) rc = table_begin(&P, stack, o.table, err);
  if (rc != EW_OK) {
    plan_free(&P);
    return rc;
  }
  int header = o.header < 0 ? P.sk == 1 : o.header;
  if (csv && header) {
    /* the names hold user text (layer names in keys, tied keys with commas): quoted and
     * formula-neutralised by the one CSV writer, like every other text cell */
    ew_csv c;
    ew_csv_init_file(&c, csv);
    for (size_t j = 0; j < P.ncol; j++) ew_csv_text(&c, P.names[j]);
    ew_csv_end_row(&c);
  }
  if (json) json_begin(&P, stack, json);
  rc = sweep_rows(&P, &o, csv, json, o.table, err);
  plan_free(&P);
  if (rc != EW_OK) {
    ew_wf_table_free(o.table);
    return rc;
  }
  if (json) fputs("]}\n", json);
  return EW_OK;
}
