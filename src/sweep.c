/* sweep.c — parameter sweeps (see sweep.h): the column set fixed on a sub-grid, the shard's
 * points solved in parallel chunks, rows written in point order as CSV and JSON. */
#include "sweep.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "csv_writer.h"
#include "error.h"
#include "exciton.h"
#include "json_writer.h"
#include "line_name.h"
#include "parallel.h"
#include "progress.h"
#include "self_consistent.h"
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
  int psi;               /* rows keep ψ samples (a table for pictures) */
  /* the points solved before the columns are fixed (plan_solve): the sub-grid and the
   * shard's first chunk, ascending; held[i] the record of held_p[i] while the rows have not
   * taken it (NULL outside the shard, after a failure, once written) */
  size_t nheld;
  size_t *held_p;
  struct point_rec **held;
  /* Warm start (a self-consistent nominal stack): each row's loop starts from the converged
   * potential of the nearest sub-grid point (warm_of), which every shard solves cold the
   * same way, so the rows do not depend on shards or threads.  sub[a][k] are axis a's
   * sub-grid indices (ns[a] of them); start[q] the converged pair of sub-grid point q
   * (corner order), NULL when it was not solved self-consistently. */
  int warm;
  size_t sub[2][WF_COLUMN_SAMPLES], ns[2];
  struct start_rec **start;
  size_t nstart;
} sweep_plan;

/* A sub-grid point's converged potential and Fermi level on its nodes (ew_sp_start). */
typedef struct start_rec {
  ew_sp_start s;
  double data[]; /* z [n], then U [n] */
} start_rec;

/* What a row takes from a point's result, whatever the sweep's column set: the point's own
 * bound levels and the lines between them.  Any column set that holds the point's levels
 * (check_counts) leaves every other level and line cell empty, since a level beyond a band's
 * bound count has no energy and no line (line_name.c), so the row filled from the record is
 * the row filled from the result, bit for bit, whenever the columns are fixed. */
typedef struct point_rec {
  size_t cnt[EW_BAND_COUNT];  /* bound levels per band */
  size_t lev0[EW_BAND_COUNT]; /* band b's first level in lev[] (and in psi[], × samples) */
  size_t isb0[EW_BAND_COUNT]; /* band b's line b1–b2 in isb[] */
  int sc;                     /* solved self-consistently (res->sp) */
  double *lev;                /* [Σ cnt] energies, eV */
  double *isb;                /* [Σ (cnt − 1)][4] b1–bj: eV, µm, f, depolarised eV */
  double *psi;                /* [Σ min(cnt, WF_PSI_LEVELS)][EW_WF_PSI_SAMPLES] or NULL */
  double ib[EW_WF_INTERBAND_MAX][2][3]; /* e_n–hh_n, e_n–lh_n: eV, nm, overlap; NaN: none */
  char codes[EW_WARNING_CODES_MAX];
  double data[];
} point_rec;
#define WF_PSI_LEVELS (3 * 64) /* ψ columns a table holds at most (ew_wf_table.band) */

/* ew_wf_pool_solve with the self-consistent loop started from `from` (ew_solve's path for a
 * self-consistent stack, solve.c: the loop, then the excitons; the option checks ew_solve
 * makes first have passed on the sub-grid's cold solves, with the same options). */
static ew_status solve_warm(const sweep_plan *P, const double *sv, const ew_sp_start *from,
                            ew_stack **st, ew_result **res, ew_error *e) {
  *res = NULL;
  ew_status rc = ew_wf_pool_stack(&P->pool, P->nsub, P->sub_keys, sv, st, e);
  if (rc != EW_OK) return rc;
  const ew_options *opt = ew_wf_model_options(P->pool.m);
  ew_error e2 = {0};
  if (!((*st)->doped || (*st)->surface_given || (*st)->bias_given)) {
    rc = ew_solve(*st, opt, res, &e2);
  } else {
    rc = ew_solve_self_consistent_from(*st, opt, from, NULL, res, &e2);
    if (rc == EW_OK && (*res)->opt.excitons) rc = ew_result_add_excitons(*res, &e2);
  }
  if (rc != EW_OK) {
    ew_result_free(*res);
    *res = NULL;
    ew_stack_free(*st);
    *st = NULL;
    char at[320];
    ew_wf_point_text(at, sizeof at, P->nsub, P->sub_keys, sv);
    ew_fail(e, rc, e2.file[0] ? e2.file : NULL, e2.line, "at %s: %s", at, e2.message);
  }
  return rc;
}

/* Solve the point with axis values vals: every key of every range set (from: a warm start,
 * or NULL). */
static ew_status solve_point(const sweep_plan *P, const double *vals, const ew_sp_start *from,
                             ew_stack **st, ew_result **res, ew_error *e) {
  double sv[SWEEP_TIED_MAX];
  for (size_t k = 0; k < P->nsub; k++) sv[k] = vals[P->sub_axis[k]];
  if (from) return solve_warm(P, sv, from, st, res, e);
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
static size_t column_points(sweep_plan *P, size_t *corner) {
  size_t (*sub)[WF_COLUMN_SAMPLES] = P->sub, *ns = P->ns;
  memset(P->sub, 0, sizeof P->sub);
  ns[0] = ns[1] = 1;
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


/* ---- a point's record ------------------------------------------------------------------- */
/* Each level's ψ at EW_WF_PSI_SAMPLES evenly spaced z (linear between nodes), unit norm, for
 * the pictures' level tracking. */
static void sample_psi(const ew_result *r, size_t i, double *o) {
  const size_t K = EW_WF_PSI_SAMPLES, n = r->grid->n;
  const double *z = ew_result_z_nm(r);
  const double *psi = ew_result_wavefunction(r, i);
  double s2 = 0;
  size_t m = 0;
  for (size_t k = 0; k < K; k++) {
    double zz = z[0] + (z[n - 1] - z[0]) * (double)k / (double)(K - 1);
    while (m + 2 < n && z[m + 1] < zz) m++;
    double t = z[m + 1] > z[m] ? (zz - z[m]) / (z[m + 1] - z[m]) : 0;
    o[k] = psi[m] + t * (psi[m + 1] - psi[m]);
    s2 += o[k] * o[k];
  }
  for (size_t k = 0; k < K && s2 > 0; k++) o[k] /= sqrt(s2);
}

/* Line b1–bj (j ≥ 2) of band b: energy, µm, oscillator strength, depolarised energy. */
static void rec_isb(const ew_result *r, ew_band b, size_t j, double *s) {
  size_t ia = ew_wf_level_index(r, b, 1), ib = ew_wf_level_index(r, b, (int)j);
  const ew_line *ln = ew_wf_find_line(r, ib, ia);
  s[0] = ln ? ln->energy_eV : NAN;
  s[1] = ln ? ln->wavelength_nm / 1e3 : NAN;
  s[2] = ln ? ln->oscillator_strength : NAN;
  char nm[80]; /* the match target's one definition ("e1-e2:depol", line_name.h) */
  snprintf(nm, sizeof nm, "%s1-%s%zu:depol", ew_band_name(b), ew_band_name(b), j);
  ew_wf_line_energy(r, nm, &s[3], NULL);
}

/* The record of result r (ψ samples when want_psi); NULL when out of memory. */
static point_rec *rec_of(const ew_result *r, int want_psi) {
  size_t nlev = 0, nisb = 0, npsi = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    size_t c = r->band_count[b];
    nlev += c;
    nisb += c > 1 ? c - 1 : 0;
    npsi += c < WF_PSI_LEVELS ? c : WF_PSI_LEVELS;
  }
  size_t nd = nlev + 4 * nisb + (want_psi ? npsi * EW_WF_PSI_SAMPLES : 0);
  point_rec *q = malloc(sizeof *q + (nd ? nd : 1) * sizeof(double));
  if (!q) return NULL;
  q->sc = r->sp != NULL;
  q->lev = q->data;
  q->isb = q->lev + nlev;
  q->psi = want_psi ? q->isb + 4 * nisb : NULL;
  ew_result_warning_codes_join(r, q->codes, EW_WARNING_CODES_MAX);
  size_t l = 0, s = 0, ps = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    size_t c = r->band_count[b];
    q->cnt[b] = c;
    q->lev0[b] = l;
    q->isb0[b] = s;
    for (size_t n = 1; n <= c; n++, l++) {
      q->lev[l] = ew_wf_level_energy(r, (ew_band)b, (int)n);
      if (q->psi && n <= WF_PSI_LEVELS)
        sample_psi(r, ew_wf_level_index(r, (ew_band)b, (int)n),
                   q->psi + (ps++) * EW_WF_PSI_SAMPLES);
    }
    for (size_t j = 2; j <= c; j++, s++) rec_isb(r, (ew_band)b, j, q->isb + 4 * s);
  }
  for (size_t n = 1; n <= EW_WF_INTERBAND_MAX; n++)
    for (int h = 0; h < 2; h++) {
      ew_band hb = h ? EW_BAND_LH : EW_BAND_HH;
      size_t ie = ew_wf_level_index(r, EW_BAND_E, (int)n), ih = ew_wf_level_index(r, hb, (int)n);
      const ew_line *ln = ie != SIZE_MAX && ih != SIZE_MAX ? ew_wf_find_line(r, ie, ih) : NULL;
      double *d = q->ib[n - 1][h];
      d[0] = ln ? ln->energy_eV : NAN;
      d[1] = ln ? ln->wavelength_nm : NAN;
      d[2] = ln ? ln->overlap : NAN;
    }
  return q;
}

/* The converged pair of a self-consistent result r (NULL: r is not one, or out of memory). */
static start_rec *start_of(const ew_result *r) {
  const ew_sp_info *sp = r->sp;
  size_t n = r->grid->n;
  if (!sp || sp->n != n || !sp->prof[EW_SP_POTENTIAL_EV]) return NULL;
  start_rec *s = malloc(sizeof *s + 2 * n * sizeof(double));
  if (!s) return NULL;
  memcpy(s->data, r->grid->z, n * sizeof(double));
  memcpy(s->data + n, sp->prof[EW_SP_POTENTIAL_EV], n * sizeof(double));
  s->s.n = n;
  s->s.z_nm = s->data;
  s->s.U_eV = s->data + n;
  s->s.fermi_eV = sp->fermi_eV;
  return s;
}

/* The warm start of row p: the nearest sub-grid point on each axis (the lower one of two
 * equally near), NULL for a cold start (no warm start, p on the sub-grid, or that point not
 * self-consistent).  A function of p and the sweep's ranges only, as shards require. */
static const ew_sp_start *warm_of(const sweep_plan *P, size_t p) {
  if (!P->warm || !P->start) return NULL;
  size_t ix[2] = {P->nr > 1 ? p / P->count[1] : p, P->nr > 1 ? p % P->count[1] : 0}, k[2];
  for (size_t a = 0; a < 2; a++) {
    k[a] = 0;
    for (size_t j = 1; j < P->ns[a]; j++) {
      size_t dj = P->sub[a][j] > ix[a] ? P->sub[a][j] - ix[a] : ix[a] - P->sub[a][j];
      size_t dk = P->sub[a][k[a]] > ix[a] ? P->sub[a][k[a]] - ix[a] : ix[a] - P->sub[a][k[a]];
      if (dj < dk) k[a] = j;
    }
  }
  if (P->sub[0][k[0]] == ix[0] && P->sub[1][k[1]] == ix[1]) return NULL; /* stays cold */
  const start_rec *s = P->start[k[0] * P->ns[1] + k[1]];
  return s ? &s->s : NULL;
}

/* Solve point p into its record (*out, caller frees; NULL on error), warm started as
 * warm_of says; keep (may be NULL) receives the converged pair of a self-consistent result. */
static ew_status point_solve(const sweep_plan *P, size_t p, point_rec **out, start_rec **keep,
                             ew_error *e) {
  double vals[2];
  ew_stack *st = NULL;
  ew_result *res = NULL;
  point_values(P, p, vals);
  ew_status rc = solve_point(P, vals, warm_of(P, p), &st, &res, e);
  *out = rc == EW_OK ? rec_of(res, P->psi) : NULL;
  if (rc == EW_OK && !*out) rc = ew_fail(e, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep row)");
  if (rc == EW_OK && keep && res->sp && !(*keep = start_of(res)))
    rc = ew_fail(e, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep warm start)");
  ew_result_free(res);
  ew_stack_free(st);
  return rc;
}

/* The record's values of a main line (eV, µm|nm, f|overlap[, depolarised eV]), NULL when
 * the point does not bind both levels. */
static const double *rec_line(const point_rec *q, const ew_wf_linedef *d) {
  if (d->interband) {
    size_t n = (size_t)d->a.n, h = d->b.band == EW_BAND_LH;
    return n >= 1 && n <= EW_WF_INTERBAND_MAX ? q->ib[n - 1][h] : NULL;
  }
  size_t b = (size_t)d->a.band, j = (size_t)d->b.n;
  return j >= 2 && j <= q->cnt[b] ? q->isb + 4 * (q->isb0[b] + j - 2) : NULL;
}

/* ---- the points solved before the columns are fixed ------------------------------------ */
/* Points the rows solve at once (a chunk); 64 a thread keeps the threads busy. */
static size_t chunk_points(const sweep_plan *P) { return 64 * (size_t)P->nt; }

/* The record held for point p, taken from the plan (NULL when none is held). */
static point_rec *take_held(const sweep_plan *P, size_t p) {
  size_t lo = 0, hi = P->nheld;
  while (lo < hi) { /* held_p ascending */
    size_t mid = lo + (hi - lo) / 2;
    if (P->held_p[mid] < p) lo = mid + 1;
    else hi = mid;
  }
  if (lo == P->nheld || P->held_p[lo] != p) return NULL;
  point_rec *q = P->held[lo];
  P->held[lo] = NULL; /* each row takes its record once, from one thread */
  return q;
}


/* 1. The column set: the levels bound on the sub-grid, at least min_levels per band.  Every
 *    shard solves the same sub-grid, so all shards and the whole sweep agree on the columns
 *    without seeing each other's points.  Level counts need not be monotonic (raising one
 *    barrier of an asymmetric well pushes a level out of the window the other barrier sets),
 *    hence a sub-grid rather than the end points; a point with more levels is refused
 *    (check_counts) and the message names the --levels that fixes it.
 *    The sub-grid is solved in one parallel loop with the shard's first chunk of rows, and
 *    the shard's points among them keep their records for the rows (sweep_rows): no point
 *    is solved twice (the 40-value doped sweep solved 49 points before), and the threads do
 *    not wait at the end of the sub-grid.  A record does not depend on the columns
 *    (point_rec), so the rows have the same bits.  The sub-grid is always solved whole (a
 *    cancel stops the rows only); a failure on it fails the sweep, one among the other rows
 *    is recorded in rows_fl in point order as the rows record theirs.
 *    A self-consistent nominal stack solves the sub-grid alone (cold) and keeps each point's
 *    converged potential for the rows' warm starts (warm_of), so its rows wait for it. */
static ew_status plan_solve(sweep_plan *P, size_t min_levels, ew_progress *pg,
                            ew_wf_fail *rows_fl, ew_error *err) {
  size_t corner[WF_COLUMN_SAMPLES * WF_COLUMN_SAMPLES];
  size_t nc = column_points(P, corner); /* ascending */
  size_t first = P->hi - P->lo < chunk_points(P) ? P->hi - P->lo : chunk_points(P);
  /* a warm start needs the sub-grid converged before any row: the rows wait for it */
  P->warm = ew_wf_model_stack(P->pool.m)->doped || ew_wf_model_stack(P->pool.m)->surface_given ||
            ew_wf_model_stack(P->pool.m)->bias_given;
  if (P->warm) first = 0;
  size_t cap = nc + first;
  P->start = P->warm ? calloc(nc, sizeof *P->start) : NULL;
  P->nstart = P->start ? nc : 0;
  P->held_p = malloc(cap * sizeof *P->held_p);
  P->held = calloc(cap, sizeof *P->held);
  size_t *order = malloc(cap * sizeof *order), (*cnt)[EW_BAND_COUNT] = malloc(cap * sizeof *cnt);
  unsigned char *plan = calloc(cap, 1), *sc = calloc(cap, 1);
  if (!P->held_p || !P->held || !order || !cnt || !plan || !sc || (P->warm && !P->start)) {
    free(order), free(cnt), free(plan), free(sc);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (sweep plan)");
  }
  /* the two ascending lists merged; the sub-grid first in the loop's order, so that a failure
     there is found before the rows are solved */
  size_t n = 0, a = 0, b = P->lo, np = 0;
  while (a < nc || b < P->lo + first) {
    int take_a = a < nc && (b >= P->lo + first || corner[a] <= b);
    size_t p = take_a ? corner[a] : b;
    if (take_a) {
      if (b < P->lo + first && corner[a] == b) b++; /* a sub-grid point of the first chunk */
      a++;
      plan[n] = 1;
    } else {
      b++;
    }
    P->held_p[n++] = p;
  }
  P->nheld = n;
  for (size_t i = 0; i < n; i++)
    if (plan[i]) order[np++] = i;
  for (size_t i = 0, k = np; i < n; i++)
    if (!plan[i]) order[k++] = i;
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  EW_OMP(omp parallel for num_threads(P->nt) schedule(dynamic, 1))
  for (size_t i = 0; i < n; i++) {
    size_t w = order[i], p = P->held_p[w];
    int in = p >= P->lo && p < P->hi;
    if (!plan[w] && (p >= ew_wf_fail_index(rows_fl) || ew_progress_cancelled(pg))) continue;
    ew_error e = {0};
    point_rec *q = NULL;
    /* order[i < np]: sub-grid point i (both ascending) */
    ew_status rc = point_solve(P, p, &q, plan[w] && P->start ? &P->start[i] : NULL, &e);
    if (rc != EW_OK) ew_wf_fail_record(plan[w] ? &fl : rows_fl, p, rc, &e);
    if (q) {
      memcpy(cnt[w], q->cnt, sizeof cnt[w]);
      sc[w] = (unsigned char)q->sc;
    }
    if (in) P->held[w] = q;
    else free(q);
    if (in && pg->fn) ew_progress_step(pg);
  }
  size_t maxc[EW_BAND_COUNT];
  for (int k = 0; k < EW_BAND_COUNT; k++) {
    maxc[k] = min_levels;
    for (size_t i = 0; i < np; i++)
      if (cnt[order[i]][k] > maxc[k]) maxc[k] = cnt[order[i]][k];
  }
  for (size_t i = 0; i < np; i++) P->doped |= sc[order[i]];
  free(order), free(cnt), free(plan), free(sc);
  if (fl.index != SIZE_MAX) return ew_wf_fail_report(&fl, err);
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
  for (size_t i = 0; i < P->nheld && P->held; i++) free(P->held[i]);
  free(P->held);
  free(P->held_p);
  for (size_t i = 0; i < P->nstart; i++) free(P->start[i]);
  free(P->start);
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



static void fill_row(const point_rec *q, const sweep_plan *P, const double *vals, double *row,
                     char *codes) {
  memcpy(codes, q->codes, EW_WARNING_CODES_MAX);
  row[P->ncol - 1] = NAN; /* the codes column: text, held in codes */
  size_t j = 0;
  for (size_t i = 0; i < P->nr; i++) row[j++] = vals[i];
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t n = 1; n <= P->cols.nlev[b]; n++)
      row[j++] = n <= q->cnt[b] ? q->lev[q->lev0[b] + n - 1] : NAN;
  for (size_t k = 0; k < P->nl; k++, j += 3) {
    const double *s = rec_line(q, &P->lines[k]);
    for (int t = 0; t < 3; t++) row[j + t] = s ? s[t] : NAN;
  }
  for (size_t k = 0; k < P->nd; k++) { /* the intersubband main lines, listed first */
    const double *s = rec_line(q, &P->lines[k]);
    row[j++] = s ? s[3] : NAN;
  }
}

/* Each level column's ψ samples (zeros for a level not bound here). */
static void fill_psi(const point_rec *q, const sweep_plan *P, double *out) {
  const size_t K = EW_WF_PSI_SAMPLES;
  size_t c = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t lv = 1; lv <= P->cols.nlev[b] && c < WF_PSI_LEVELS; lv++, c++) {
      if (lv <= q->cnt[b]) memcpy(out + c * K, q->psi + (q->lev0[b] + lv - 1) * K, K * sizeof *out);
      else memset(out + c * K, 0, K * sizeof *out);
    }
}

/* The sub-grid fixed the columns; a point with more levels cannot be written. */
static ew_status check_counts(const point_rec *q, const sweep_plan *P, const double *vals,
                              ew_error *err) {
  for (int b = 0; b < EW_BAND_COUNT; b++)
    if (q->cnt[b] > P->cols.nlev[b]) {
      char at[320];
      ew_wf_point_text(at, sizeof at, P->nr, P->keys, vals);
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "at %s %zu %s levels are bound but the sweep's "
                     "columns, fixed in advance on a sub-grid so that shards agree, hold %zu; "
                     "run again with --levels %zu (or more)", at, q->cnt[b],
                     ew_band_name((ew_band)b), P->cols.nlev[b], q->cnt[b]);
    }
  return EW_OK;
}

/* Record q of point p into its row (and ψ samples); a failure recorded in point order. */
static void rec_row(const sweep_plan *P, size_t p, const point_rec *q, double *row, char *codes,
                    double *psi, ew_wf_fail *fl) {
  double vals[2];
  ew_error e = {0};
  point_values(P, p, vals);
  ew_status rc = check_counts(q, P, vals, &e);
  if (rc != EW_OK) {
    ew_wf_fail_record(fl, p, rc, &e);
    return;
  }
  fill_row(q, P, vals, row, codes);
  if (psi) fill_psi(q, P, psi);
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


/* 2. The shard's points, in chunks: rows computed in parallel (or taken from the records
 *    plan_solve holds), written in point order. */
static ew_status sweep_rows(const sweep_plan *P, const ew_wf_sweep_opt *o, ew_progress *pg,
                            ew_wf_fail *fl, FILE *csv, FILE *json, ew_wf_table *tab,
                            ew_error *err) {
  const size_t chunk = chunk_points(P), ncol = P->ncol;
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
  int cancelled = ew_progress_cancelled(pg);
  for (size_t c0 = P->lo; c0 < P->hi && fl->index == SIZE_MAX && !cancelled; c0 += chunk) {
    size_t cn = P->hi - c0 < chunk ? P->hi - c0 : chunk;
    EW_OMP(omp parallel for num_threads(P->nt) schedule(dynamic, 1))
    for (size_t j = 0; j < cn; j++) {
      size_t p = c0 + j;
      point_rec *q = take_held(P, p);
      if (p >= ew_wf_fail_index(fl) || (!q && ew_progress_cancelled(pg))) {
        free(q);
        continue;
      }
      if (!q) {
        ew_error e = {0};
        ew_status rc = point_solve(P, p, &q, NULL, &e);
        if (rc != EW_OK) ew_wf_fail_record(fl, p, rc, &e);
        if (o->progress) ew_progress_step(pg);
      }
      if (q) rec_row(P, p, q, rows + j * ncol, codes[j], psi ? psi + j * pk : NULL, fl);
      free(q);
    }
    /* a cancelled chunk has holes: none of it is written */
    cancelled = ew_progress_cancelled(pg);
    if (fl->index != SIZE_MAX || cancelled) break;
    for (size_t j = 0; j < cn; j++)
      write_row(P, c0 + j, rows + j * ncol, codes[j], psi ? psi + j * pk : NULL, csv, json, tab);
  }
  free(rows);
  free(codes);
  free(psi);
  if (fl->index != SIZE_MAX) return ew_wf_fail_report(fl, err);
  return cancelled ? ew_progress_fail(pg, "the sweep", "points", err) : EW_OK;
}

ew_status ew_wf_sweep(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                      const ew_wf_sweep_opt *oin, FILE *csv, FILE *json, ew_error *err) {
  ew_wf_sweep_opt o;
  if (oin) o = *oin;
  else ew_wf_sweep_opt_default(&o);
  const char *stack = ew_wf_model_stack(m)->path;
  sweep_plan P;
  memset(&P, 0, sizeof P);
  P.psi = o.table != NULL;
  ew_progress pg; /* the shard's points, each one step (solved for the plan or for the rows) */
  ew_wf_fail fl = EW_WF_FAIL_NONE; /* the rows' first failure in point order */
  ew_status rc = plan_points(m, ranges, nr, &o, &P, err);
  ew_progress_init(&pg, o.progress, o.progress_ctx, P.hi - P.lo);
  if (rc == EW_OK) rc = plan_solve(&P, o.min_levels, &pg, &fl, err);
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
  rc = sweep_rows(&P, &o, &pg, &fl, csv, json, o.table, err);
  plan_free(&P);
  if (rc != EW_OK) {
    ew_wf_table_free(o.table);
    return rc;
  }
  if (json) fputs("]}\n", json);
  return EW_OK;
}
