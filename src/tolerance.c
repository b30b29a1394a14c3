/* tolerance.c — growth tolerances and the monolayer ladder (see tolerance.h): every variation
 * is one stack edited at one key and solved, the variations of a run solved in parallel. */
#include "tolerance.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "hellmann_feynman.h"
#include "json_writer.h"
#include "line_name.h"
#include "parallel.h"
#include "range.h"
#include "solve.h"
#include "stack.h"

typedef struct {
  ew_wf_level a, b;
  int is_line, interband;
} wf_itemdef;

static double item_energy(const ew_result *r, const wf_itemdef *d) {
  double ea = ew_wf_level_energy(r, d->a.band, d->a.n);
  if (!d->is_line) return ea;
  double eb = ew_wf_level_energy(r, d->b.band, d->b.n);
  return d->interband ? ea - eb : fabs(eb - ea);
}

/* Items of a nominal result: every level, then the main lines. */
static ew_status make_items(const ew_result *r, ew_wf_item **items, wf_itemdef **defs,
                            size_t *count, int levels, ew_error *err) {
  size_t cnt[EW_BAND_COUNT];
  for (int b = 0; b < EW_BAND_COUNT; b++) cnt[b] = r->band_count[b];
  ew_wf_cols c = ew_wf_cols_of_counts(cnt);
  size_t nl = ew_wf_main_lines(&c, NULL, 0), nlev = levels ? r->n_states : 0, n = nlev + nl;
  ew_wf_linedef *ld = malloc((nl ? nl : 1) * sizeof *ld);
  *items = calloc(n ? n : 1, sizeof **items);
  *defs = calloc(n ? n : 1, sizeof **defs);
  if (!ld || !*items || !*defs) {
    free(ld);
    free(*items);
    free(*defs);
    *items = NULL;
    *defs = NULL;
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  ew_wf_main_lines(&c, ld, nl);
  for (size_t i = 0; i < nlev; i++) {
    snprintf((*items)[i].name, sizeof (*items)[i].name, "%s", r->states[i].label);
    (*defs)[i].a = (ew_wf_level){r->states[i].band, r->states[i].n};
  }
  for (size_t i = 0; i < nl; i++) {
    ew_wf_item *it = &(*items)[nlev + i];
    wf_itemdef *d = &(*defs)[nlev + i];
    snprintf(it->name, sizeof it->name, "%s", ld[i].name);
    it->is_line = d->is_line = 1;
    it->interband = d->interband = ld[i].interband;
    d->a = ld[i].a;
    d->b = ld[i].b;
  }
  for (size_t i = 0; i < n; i++) {
    (*items)[i].energy_eV = item_energy(r, &(*defs)[i]);
    (*items)[i].wavelength_nm = EW_HC_EVNM / fabs((*items)[i].energy_eV);
  }
  free(ld);
  *count = n;
  return EW_OK;
}

static double ml_of(const ew_layer *ly, int *dflt) {
  *dflt = 0;
  /* a layer written in whole monolayers: the reader's own monolayer */
  if (ly->thickness_ml > 0) return ly->thickness_nm / ly->thickness_ml;
  *dflt = !(ly->bands.a_nm > 0);
  /* one monolayer = a/2 (zinc blende, [001]); a pseudomorphic layer has a(1 + ε⊥) along z */
  return *dflt ? EW_WF_DEFAULT_ML_NM : 0.5 * ly->bands.a_nm * (1.0 + ly->bands.eps_perp);
}

/* The key that sets a layer's thickness and its value for thickness t_nm: thickness_ml
 * (in monolayers) when the file gives the layer that way, else thickness. */
static double thickness_key(const ew_layer *ly, double ml_nm, double t_nm, char *key, size_t size) {
  int in_ml = ly->thickness_ml > 0;
  snprintf(key, size, "%s.%s", ly->name, in_ml ? "thickness_ml" : "thickness");
  return in_ml ? t_nm / ml_nm : t_nm;
}

/* One variation of one key: its solve gives every item's energy and the varied layer's band
 * parameters.  A stack the reader refuses (thickness <= 0, x outside [0, 1]) is "not
 * available" (ok = 0), not an error. */
typedef struct {
  char key[EW_WF_KEY_MAX];
  double value;
  size_t layer;
  int ok;
  double *E;          /* [n_items] */
  double *PL;         /* [n_items] or NULL: PL peak (line − exciton binding) of interband items */
  ew_bands bands;     /* the varied layer's band parameters in that stack */
  char codes[EW_WARNING_CODES_MAX]; /* its warning codes ("" when not solved) */
} wf_job;


/* The PL peak of an interband item: the line's energy less its exciton binding, as the
 * interband table gives it (NaN for other items or when the pair has no line). */
static double item_pl(const ew_result *r, const wf_itemdef *d) {
  if (!d->is_line || !d->interband) return NAN;
  size_t ia = ew_wf_level_index(r, d->a.band, d->a.n), ib = ew_wf_level_index(r, d->b.band, d->b.n);
  for (size_t i = 0; ia != SIZE_MAX && ib != SIZE_MAX && i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind == EW_LINE_INTERBAND && ln->upper == ia && ln->lower == ib)
      return ln->exciton_binding_eV > 0 ? ln->pl_peak_eV : NAN;
  }
  return NAN;
}

static ew_status run_jobs(const ew_wf_model *m, wf_job *jobs, size_t nj, const wf_itemdef *defs,
                          size_t ni, int nt, ew_error *err) {
  ew_wf_pool pool;
  /* every key checked before the loop: one the file leaves out is created here, not per job */
  ew_status rc = EW_OK;
  for (size_t j = 0; j < nj && rc == EW_OK; j++) {
    double nominal;
    rc = ew_wf_key_check(m, jobs[j].key, "tolerance", &nominal, err);
  }
  if (rc == EW_OK) rc = ew_wf_pool_open(m, nt, &pool, err);
  if (rc != EW_OK) return rc;
  const ew_options *opt = ew_wf_model_options(m);
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t j = 0; j < nj; j++) {
    wf_job *jb = &jobs[j];
    const char *key = jb->key;
    ew_error e = {0};
    ew_stack *st = NULL;
    ew_result *res = NULL;
    jb->ok = 0;
    jb->codes[0] = '\0';
    for (size_t i = 0; i < ni; i++) jb->E[i] = NAN;
    for (size_t i = 0; jb->PL && i < ni; i++) jb->PL[i] = NAN;
    ew_status q = ew_wf_pool_stack(&pool, 1, &key, &jb->value, &st, &e);
    if (q == EW_ERR_INPUT) continue;
    if (q == EW_OK) q = ew_solve(st, opt, &res, &e);
    if (q != EW_OK) {
      ew_wf_fail_record(&fl, j, q, &e);
      ew_stack_free(st);
      continue;
    }
    jb->ok = 1;
    for (size_t i = 0; i < ni; i++) jb->E[i] = item_energy(res, &defs[i]);
    for (size_t i = 0; jb->PL && i < ni; i++) jb->PL[i] = item_pl(res, &defs[i]);
    jb->bands = st->layers[jb->layer].bands;
    ew_result_warning_codes_join(res, jb->codes, sizeof jb->codes);
    ew_result_free(res);
    ew_stack_free(st);
  }
  ew_wf_pool_free(&pool);
  return fl.index != SIZE_MAX ? ew_wf_fail_report(&fl, err) : EW_OK;
}
/* Derivative of an item from per-state derivatives dS (indexed by state). */
static double item_deriv(const ew_result *r, const wf_itemdef *d, const double *dS) {
  size_t ia = ew_wf_level_index(r, d->a.band, d->a.n);
  if (ia == SIZE_MAX) return NAN;
  if (!d->is_line) return dS[ia];
  size_t ib = ew_wf_level_index(r, d->b.band, d->b.n);
  if (ib == SIZE_MAX) return NAN;
  if (d->interband) return dS[ia] - dS[ib];
  double s = r->states[ib].energy_eV >= r->states[ia].energy_eV ? 1.0 : -1.0;
  return s * (dS[ib] - dS[ia]);
}

/* steps of the central differences that check Hellmann–Feynman: small enough that the
 * O(step²) truncation is ~1e-5 relative, large enough that the solver's energy noise (the
 * grid re-meshes as a thickness changes, ~1e-7 eV after Richardson) stays ~1e-4 relative */
#define WF_FD_DT_NM 0.01
#define WF_FD_DX 0.001

/* A layer's row of the table, and its variations: t ∓ ML, t ∓ δt, x ∓ dx, x ∓ δx (the
 * composition ones only for alloys).  Returns the number of jobs written. */
static size_t layer_jobs(const ew_stack *st, size_t k, double dx, ew_wf_tol_layer *L,
                         wf_job *jobs) {
  const ew_layer *ly = &st->layers[k];
  L->layer = k;
  snprintf(L->name, sizeof L->name, "%s", ly->name);
  snprintf(L->material, sizeof L->material, "%s", ly->material);
  L->thickness_nm = ly->thickness_nm;
  L->ml_nm = ml_of(ly, &L->ml_default);
  L->has_x = ly->has_x;
  L->x = ly->x;
  L->dx = dx;
  L->fd_dt_nm = WF_FD_DT_NM;
  L->fd_dx = WF_FD_DX;
  double tv[4] = {ly->thickness_nm - L->ml_nm, ly->thickness_nm + L->ml_nm,
                  ly->thickness_nm - WF_FD_DT_NM, ly->thickness_nm + WF_FD_DT_NM};
  double xv[4] = {ly->x - dx, ly->x + dx, ly->x - WF_FD_DX, ly->x + WF_FD_DX};
  size_t nj = ly->has_x ? 8 : 4;
  for (size_t q = 0; q < nj; q++) {
    wf_job *jb = &jobs[q];
    if (q < 4) {
      jb->value = thickness_key(ly, L->ml_nm, tv[q], jb->key, sizeof jb->key);
    } else {
      snprintf(jb->key, sizeof jb->key, "%s.x", ly->name);
      jb->value = xv[q - 4];
    }
    jb->layer = k;
  }
  return nj;
}

static ew_status layer_arrays(ew_wf_tol_layer *L, size_t ni, ew_error *err) {
  double **arr[] = {&L->ml_minus, &L->ml_plus, &L->dx_minus, &L->dx_plus,
                    &L->dEdt_hf,  &L->dEdt_fd, &L->dEdx_hf,  &L->dEdx_fd};
  for (int q = 0; q < 8; q++) {
    *arr[q] = malloc((ni ? ni : 1) * sizeof(double));
    if (!*arr[q]) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    for (size_t i = 0; i < ni; i++) (*arr[q])[i] = NAN;
  }
  return EW_OK;
}

/* The thickness columns of layer k from its jobs J[0..3] (dS: scratch per state). */
static void thickness_row(const ew_result *res, const wf_itemdef *defs,
                          const ew_wf_tolerance *t, size_t k, const wf_job *J, double *dS) {
  ew_wf_tol_layer *L = &t->layers[k];
  for (size_t s = 0; s < res->n_states; s++) dS[s] = ew_wf_hf_dthickness(res, s, k);
  for (size_t i = 0; i < t->n_items; i++) {
    double E0 = t->items[i].energy_eV;
    L->ml_minus[i] = J[0].E[i] - E0;
    L->ml_plus[i] = J[1].E[i] - E0;
    L->dEdt_fd[i] = (J[3].E[i] - J[2].E[i]) / (2.0 * WF_FD_DT_NM);
    if (!J[2].ok) L->dEdt_fd[i] = (J[3].E[i] - E0) / WF_FD_DT_NM;
    L->dEdt_hf[i] = item_deriv(res, &defs[i], dS);
  }
  snprintf(L->warn_ml_minus, sizeof L->warn_ml_minus, "%s", J[0].codes);
  snprintf(L->warn_ml_plus, sizeof L->warn_ml_plus, "%s", J[1].codes);
}

/* The composition columns of alloy layer k from its jobs J[4..7]: the band-parameter
 * derivatives come from the stacks at x ∓ δx, so whatever the reader does with x (bowing,
 * strain) is differentiated the same way. */
static void composition_row(const ew_result *res, const wf_itemdef *defs,
                            const ew_wf_tolerance *t, const ew_layer *ly, size_t k,
                            const wf_job *J, double *dS) {
  ew_wf_tol_layer *L = &t->layers[k];
  double lo_x = J[6].ok ? ly->x - WF_FD_DX : ly->x, hi_x = J[7].ok ? ly->x + WF_FD_DX : ly->x;
  const ew_bands *blo = J[6].ok ? &J[6].bands : &ly->bands, *bhi = J[7].ok ? &J[7].bands : &ly->bands;
  for (size_t s = 0; s < res->n_states; s++)
    dS[s] = ew_wf_hf_dparam(res, s, k, blo, bhi, hi_x - lo_x);
  for (size_t i = 0; i < t->n_items; i++) {
    double E0 = t->items[i].energy_eV;
    L->dx_minus[i] = J[4].E[i] - E0;
    L->dx_plus[i] = J[5].E[i] - E0;
    double el = J[6].ok ? J[6].E[i] : E0, eh = J[7].ok ? J[7].E[i] : E0;
    L->dEdx_fd[i] = hi_x > lo_x ? (eh - el) / (hi_x - lo_x) : NAN;
    L->dEdx_hf[i] = item_deriv(res, &defs[i], dS);
  }
  snprintf(L->warn_dx_minus, sizeof L->warn_dx_minus, "%s", J[4].codes);
  snprintf(L->warn_dx_plus, sizeof L->warn_dx_plus, "%s", J[5].codes);
}

/* Scratch of a tolerance run. */
typedef struct {
  wf_itemdef *defs;
  wf_job *jobs;
  double *jobE, *dS;
  size_t nj;
} tol_work;

static void work_free(tol_work *w) {
  free(w->defs);
  free(w->jobs);
  free(w->jobE);
  free(w->dS);
}

/* The items, the layers' rows and every job of the run. */
static ew_status tolerance_plan(const ew_stack *st, const ew_result *res, double dx,
                                ew_wf_tolerance *t, tol_work *w, ew_error *err) {
  size_t nl = st->n_layers;
  snprintf(t->stack, sizeof t->stack, "%s", st->path);
  ew_status rc = make_items(res, &t->items, &w->defs, &t->n_items, 1, err);
  if (rc != EW_OK) return rc;
  size_t ni = t->n_items;
  t->n_layers = nl;
  t->layers = calloc(nl, sizeof *t->layers);
  w->jobs = calloc(8 * nl, sizeof *w->jobs);
  w->jobE = malloc((8 * nl * ni > 0 ? 8 * nl * ni : 1) * sizeof *w->jobE);
  w->dS = malloc((res->n_states ? res->n_states : 1) * sizeof *w->dS);
  if (!t->layers || !w->jobs || !w->jobE || !w->dS)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  w->nj = 0;
  for (size_t k = 0; k < nl; k++) w->nj += layer_jobs(st, k, dx, &t->layers[k], w->jobs + w->nj);
  for (size_t j = 0; j < w->nj; j++) w->jobs[j].E = w->jobE + j * ni;
  return EW_OK;
}

ew_status ew_wf_tolerance_run(const ew_wf_model *m, double dx, int threads,
                              ew_wf_tolerance **out, ew_error *err) {
  *out = NULL;
  const ew_stack *st = ew_wf_model_stack(m);
  ew_result *res = NULL;
  ew_status rc = ew_solve(st, ew_wf_model_options(m), &res, err);
  if (rc != EW_OK) return rc;
  ew_wf_tolerance *t = calloc(1, sizeof *t);
  tol_work w = {NULL, NULL, NULL, NULL, 0};
  if (!t) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  if (rc == EW_OK) rc = tolerance_plan(st, res, dx, t, &w, err);
  if (rc == EW_OK) ew_result_warning_codes_join(res, t->warnings, sizeof t->warnings);
  if (rc == EW_OK) rc = run_jobs(m, w.jobs, w.nj, w.defs, t->n_items, ew_wf_threads(threads), err);
  const wf_job *J = w.jobs;
  for (size_t k = 0; rc == EW_OK && k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    rc = layer_arrays(&t->layers[k], t->n_items, err);
    if (rc != EW_OK) break;
    thickness_row(res, w.defs, t, k, J, w.dS);
    if (ly->has_x) composition_row(res, w.defs, t, ly, k, J, w.dS);
    J += ly->has_x ? 8 : 4;
  }
  work_free(&w);
  ew_result_free(res);
  if (rc != EW_OK) {
    ew_wf_tolerance_free(t);
    return rc;
  }
  *out = t;
  return EW_OK;
}

void ew_wf_tolerance_free(ew_wf_tolerance *t) {
  if (!t) return;
  for (size_t k = 0; t->layers && k < t->n_layers; k++) {
    ew_wf_tol_layer *L = &t->layers[k];
    free(L->ml_minus);
    free(L->ml_plus);
    free(L->dx_minus);
    free(L->dx_plus);
    free(L->dEdt_hf);
    free(L->dEdt_fd);
    free(L->dEdx_hf);
    free(L->dEdx_fd);
  }
  free(t->layers);
  free(t->items);
  free(t);
}

/* One right-aligned fixed-point column: `width` characters, `digits` decimals, "-" when not
 * finite; a value that rounds to zero prints without a sign (no "-0.000"). */
static void cell(FILE *out, int width, int digits, double v) {
  if (fabs(v) < 0.5 * pow(10.0, -digits)) v = 0.0;
  if (isfinite(v)) fprintf(out, " %*.*f", width, digits, v);
  else fprintf(out, "%*s", width, "-");
}

ew_wf_spread ew_wf_tolerance_spread(const ew_wf_tolerance *t, size_t i) {
  ew_wf_spread s = {0, 0, 0, 0, 0};
  double rate = 0;
  for (size_t k = 0; k < t->n_layers; k++) {
    const ew_wf_tol_layer *L = &t->layers[k];
    double a = L->dEdt_hf[i] * L->ml_nm;
    s.thickness_eV += a * a;
    s.worst_eV += fabs(a);
    rate += L->dEdt_hf[i] * L->thickness_nm;
    if (!L->has_x) continue;
    double c = L->dEdx_hf[i] * L->dx;
    s.composition_eV += c * c;
    s.worst_eV += fabs(c);
  }
  s.rate_eV = fabs(rate) * t->rate_percent / 100.0;
  s.worst_eV += s.rate_eV;
  s.rss_eV = sqrt(s.thickness_eV + s.composition_eV + s.rate_eV * s.rate_eV);
  s.thickness_eV = sqrt(s.thickness_eV);
  s.composition_eV = sqrt(s.composition_eV);
  return s;
}

/* A layer whose ±1 ML moves no line by half the table's last digit (0.0005 meV), by the
 * solves and by dE/dt · ML alike: a thick barrier, whose thickness columns print zeros. */
static int thickness_moves_nothing(const ew_wf_tolerance *t, const ew_wf_tol_layer *L) {
  for (size_t i = 0; i < t->n_items; i++) {
    if (!t->items[i].is_line) continue;
    double v[3] = {L->ml_minus[i], L->ml_plus[i], L->dEdt_hf[i] * L->ml_nm};
    for (int q = 0; q < 3; q++)
      if (!isfinite(v[q]) || fabs(v[q]) >= 0.5e-6) return 0;
  }
  return 1;
}

static void layer_block(const ew_wf_tolerance *t, size_t k, int show_t, FILE *out) {
  const ew_wf_tol_layer *L = &t->layers[k];
  fprintf(out, "\nlayer %zu %s (%s, %.3f nm)  1 ML = %.4f nm%s", k + 1, L->name, L->material,
          L->thickness_nm, L->ml_nm,
          L->ml_default ? " (no lattice constant: GaAs's a/2 used)" : "");
  if (L->has_x) fprintf(out, "  x = %.4f, dx = %g", L->x, L->dx);
  if (!show_t) fprintf(out, "\n  (thickness moves no line by 0.0005 meV for -/+1 ML: columns left out)");
  fprintf(out, "\n  %-10s %10s", "line", "energy_eV");
  if (show_t) fprintf(out, " %9s %9s %11s %11s", "-1ML_meV", "+1ML_meV", "dEdt_HF", "dEdt_FD");
  if (L->has_x) fprintf(out, " %9s %9s %11s %11s", "-dx_meV", "+dx_meV", "dEdx_HF", "dEdx_FD");
  fprintf(out, "\n  %-10s %10s", "", "");
  if (show_t) fprintf(out, " %9s %9s %11s %11s", "", "", "meV/nm", "meV/nm");
  if (L->has_x) fprintf(out, " %9s %9s %11s %11s", "", "", "meV/x", "meV/x");
  fputc('\n', out);
  for (size_t i = 0; i < t->n_items; i++) {
    const ew_wf_item *it = &t->items[i];
    if (!it->is_line) continue;
    fprintf(out, "  %-10s %10.6f", it->name, it->energy_eV);
    if (show_t) {
      cell(out, 9, 3, 1e3 * L->ml_minus[i]);
      cell(out, 9, 3, 1e3 * L->ml_plus[i]);
      cell(out, 11, 4, 1e3 * L->dEdt_hf[i]);
      cell(out, 11, 4, 1e3 * L->dEdt_fd[i]);
    }
    if (L->has_x) {
      cell(out, 9, 3, 1e3 * L->dx_minus[i]);
      cell(out, 9, 3, 1e3 * L->dx_plus[i]);
      cell(out, 11, 2, 1e3 * L->dEdx_hf[i]);
      cell(out, 11, 2, 1e3 * L->dEdx_fd[i]);
    }
    fputc('\n', out);
  }
  const char *wl[4] = {L->warn_ml_minus, L->warn_ml_plus, L->warn_dx_minus, L->warn_dx_plus};
  static const char *const at[4] = {"-1 ML", "+1 ML", "-dx", "+dx"};
  for (int q = 0; q < 4; q++)
    if (wl[q][0]) fprintf(out, "  warnings at %s: %s\n", at[q], wl[q]);
}

/* The spread of the main lines from the stated growth tolerances (ew_wf_tolerance_spread). */
static void spread_block(const ew_wf_tolerance *t, FILE *out) {
  double dx = NAN;
  for (size_t k = 0; k < t->n_layers; k++)
    if (t->layers[k].has_x) dx = t->layers[k].dx;
  fprintf(out, "\nSpread of the lines from the stated growth tolerances (first order, HF): every "
               "layer -/+1 ML");
  if (isfinite(dx)) fprintf(out, " and every alloy x -/+ %g", dx);
  fprintf(out, ", each on its own");
  if (t->rate_percent > 0) fprintf(out, "; growth rate -/+%g %% on all layers together", t->rate_percent);
  fprintf(out, ".\nrss = root sum of squares (independent errors), worst = all aligned; "
               "d_lambda from rss (nm for interband, um for intersubband lines;\n"
               "'-' where rss exceeds a quarter of the line: there first order says only that the line is not pinned)\n");
  fprintf(out, "  %-10s %10s %9s %9s %9s %9s %9s %10s\n", "line", "energy_eV", "thick_meV",
          "comp_meV", "rate_meV", "rss_meV", "worst_meV", "d_lambda");
  for (size_t i = 0; i < t->n_items; i++) {
    const ew_wf_item *it = &t->items[i];
    if (!it->is_line) continue;
    ew_wf_spread s = ew_wf_tolerance_spread(t, i);
    double e = fabs(it->energy_eV), dl = EW_HC_EVNM / (e * e) * s.rss_eV;
    fprintf(out, "  %-10s %10.6f", it->name, it->energy_eV);
    cell(out, 9, 3, 1e3 * s.thickness_eV);
    cell(out, 9, 3, 1e3 * s.composition_eV);
    cell(out, 9, 3, 1e3 * s.rate_eV);
    cell(out, 9, 3, 1e3 * s.rss_eV);
    cell(out, 9, 3, 1e3 * s.worst_eV);
    if (s.rss_eV > 0.25 * e) fprintf(out, "%10s", "-"); /* first order means nothing there */
    else if (it->interband) cell(out, 7, 2, dl), fputs(" nm", out);
    else cell(out, 7, 3, dl / 1e3), fputs(" um", out);
    fputc('\n', out);
  }
}

void ew_wf_tolerance_print(const ew_wf_tolerance *t, FILE *out) {
  fprintf(out, "epiwell %s tolerance  %s\n", EW_VERSION, t->stack);
  fprintf(out, "Shifts of the main lines for one monolayer (ML) more or less of each layer and "
               "for x -/+ dx of alloy layers;\n"
               "dE/dt and dE/dx by Hellmann-Feynman (HF) and by central differences (FD).\n");
  if (t->warnings[0]) fprintf(out, "warnings: %s\n", t->warnings);
  int quiet = 0;
  for (size_t k = 0; k < t->n_layers; k++) {
    const ew_wf_tol_layer *L = &t->layers[k];
    int show_t = !thickness_moves_nothing(t, L);
    if (!show_t && !L->has_x) {
      quiet = 1;
      continue;
    }
    layer_block(t, k, show_t, out);
  }
  if (quiet) {
    fprintf(out, "\nlayers whose thickness moves no line by 0.0005 meV for -/+1 ML (not listed):");
    for (size_t k = 0; k < t->n_layers; k++)
      if (!t->layers[k].has_x && thickness_moves_nothing(t, &t->layers[k]))
        fprintf(out, " %s", t->layers[k].name);
    fputc('\n', out);
  }
  spread_block(t, out);
}


/* "spread": ew_wf_tolerance_spread of every item (arrays in the order of "items"). */
static void spread_json(const ew_wf_tolerance *t, FILE *out) {
  double dx = NAN;
  for (size_t k = 0; k < t->n_layers; k++)
    if (t->layers[k].has_x) dx = t->layers[k].dx;
  fputs(",\"spread\":{\"thickness_ML\":1,\"dx\":", out);
  ew_json_write_number(out, dx);
  fputs(",\"growth_rate_percent\":", out);
  ew_json_write_number(out, t->rate_percent);
  static const char *const key[5] = {"thickness_eV", "composition_eV", "growth_rate_eV",
                                     "rss_eV", "worst_case_eV"};
  for (int c = 0; c < 5; c++) {
    fprintf(out, ",\"%s\":[", key[c]);
    for (size_t i = 0; i < t->n_items; i++) {
      ew_wf_spread s = ew_wf_tolerance_spread(t, i);
      double q[5] = {s.thickness_eV, s.composition_eV, s.rate_eV, s.rss_eV, s.worst_eV};
      if (i) fputc(',', out);
      ew_json_write_number(out, q[c]);
    }
    fputc(']', out);
  }
  fputc('}', out);
}

void ew_wf_tolerance_print_json(const ew_wf_tolerance *t, FILE *out) {
  fputs("{\"stack\":", out);
  ew_json_write_string(out, t->stack);
  fputs(",\"items\":[", out);
  for (size_t i = 0; i < t->n_items; i++) {
    fputs(i ? ",{\"name\":" : "{\"name\":", out);
    ew_json_write_string(out, t->items[i].name);
    fprintf(out, ",\"kind\":\"%s\",\"energy_eV\":",
            !t->items[i].is_line ? "level" : t->items[i].interband ? "interband" : "intersubband");
    ew_json_write_number(out, t->items[i].energy_eV);
    fputc('}', out);
  }
  fputs("],\"layers\":[", out);
  for (size_t k = 0; k < t->n_layers; k++) {
    const ew_wf_tol_layer *L = &t->layers[k];
    fprintf(out, "%s{\"index\":%zu,\"name\":", k ? "," : "", k + 1);
    ew_json_write_string(out, L->name);
    fputs(",\"material\":", out);
    ew_json_write_string(out, L->material);
    fputs(",\"thickness_nm\":", out);
    ew_json_write_number(out, L->thickness_nm);
    fputs(",\"monolayer_nm\":", out);
    ew_json_write_number(out, L->ml_nm);
    fprintf(out, ",\"monolayer_default\":%s,\"alloy\":%s,\"x\":", L->ml_default ? "true" : "false",
            L->has_x ? "true" : "false");
    ew_json_write_number(out, L->has_x ? L->x : NAN);
    fputs(",\"dx\":", out);
    ew_json_write_number(out, L->has_x ? L->dx : NAN);
    fputs(",\"fd_step_nm\":", out);
    ew_json_write_number(out, L->fd_dt_nm);
    fputs(",\"fd_step_x\":", out);
    ew_json_write_number(out, L->fd_dx);
    ew_json_write_number_array(out, "shift_minus_1ML_eV", L->ml_minus, t->n_items);
    ew_json_write_number_array(out, "shift_plus_1ML_eV", L->ml_plus, t->n_items);
    ew_json_write_number_array(out, "dEdt_HF_eV_per_nm", L->dEdt_hf, t->n_items);
    ew_json_write_number_array(out, "dEdt_FD_eV_per_nm", L->dEdt_fd, t->n_items);
    ew_json_write_number_array(out, "shift_minus_dx_eV", L->has_x ? L->dx_minus : NULL, t->n_items);
    ew_json_write_number_array(out, "shift_plus_dx_eV", L->has_x ? L->dx_plus : NULL, t->n_items);
    ew_json_write_number_array(out, "dEdx_HF_eV", L->has_x ? L->dEdx_hf : NULL, t->n_items);
    ew_json_write_number_array(out, "dEdx_FD_eV", L->has_x ? L->dEdx_fd : NULL, t->n_items);
    const char *wl[4] = {L->warn_ml_minus, L->warn_ml_plus, L->warn_dx_minus, L->warn_dx_plus};
    static const char *const wk[4] = {"warnings_minus_1ML", "warnings_plus_1ML",
                                      "warnings_minus_dx", "warnings_plus_dx"};
    for (int q = 0; q < 4; q++) {
      fprintf(out, ",\"%s\":", wk[q]);
      ew_json_write_codes(out, q < 2 || L->has_x ? wl[q] : "");
    }
    fputc('}', out);
  }
  fputs("]", out);
  spread_json(t, out);
  fputs(",\"warnings\":", out);
  ew_json_write_codes(out, t->warnings);
  fputs("}\n", out);
}

/* ---- monolayer ladder ----------------------------------------------------------------- */
ew_status ew_wf_ladder_run(const ew_wf_model *m, const char *layer, int threads,
                           ew_wf_ladder **out, ew_error *err) {
  *out = NULL;
  const ew_stack *st = ew_wf_model_stack(m);
  size_t k = ew_stack_find_layer(st, layer);
  if (k == st->n_layers)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--ladder %s: no such layer in %s", layer,
                   st->path);
  ew_result *res = NULL;
  ew_status rc = ew_solve(st, ew_wf_model_options(m), &res, err);
  if (rc != EW_OK) return rc;
  ew_wf_ladder *l = calloc(1, sizeof *l);
  wf_itemdef *defs = NULL;
  wf_job jobs[5];
  if (!l) {
    ew_result_free(res);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  l->layer = k;
  l->ml_nm = ml_of(&st->layers[k], &l->ml_default);
  rc = make_items(res, &l->items, &defs, &l->n_items, 0, err);
  if (rc == EW_OK) {
    l->energy_eV = malloc((l->n_items > 0 ? 5 * l->n_items : 1) * sizeof *l->energy_eV);
    l->pl_peak_eV = malloc((l->n_items > 0 ? 5 * l->n_items : 1) * sizeof *l->pl_peak_eV);
    if (!l->energy_eV || !l->pl_peak_eV) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  if (rc == EW_OK) {
    for (int q = 0; q < 5; q++) {
      l->thickness_nm[q] = st->layers[k].thickness_nm + (q - 2) * l->ml_nm;
      jobs[q].value = thickness_key(&st->layers[k], l->ml_nm, l->thickness_nm[q], jobs[q].key,
                                    sizeof jobs[q].key);
      jobs[q].layer = k;
      jobs[q].E = l->energy_eV + (size_t)q * l->n_items;
      jobs[q].PL = l->pl_peak_eV + (size_t)q * l->n_items;
    }
    rc = run_jobs(m, jobs, 5, defs, l->n_items, ew_wf_threads(threads), err);
    for (int q = 0; q < 5 && rc == EW_OK; q++)
      snprintf(l->warnings[q], sizeof l->warnings[q], "%s", jobs[q].codes);
  }
  free(defs);
  ew_result_free(res);
  if (rc != EW_OK) {
    ew_wf_ladder_free(l);
    return rc;
  }
  *out = l;
  return EW_OK;
}

void ew_wf_ladder_free(ew_wf_ladder *l) {
  if (!l) return;
  free(l->items);
  free(l->energy_eV);
  free(l->pl_peak_eV);
  free(l);
}

/* The PL peak rows of interband item i, in eV and nm (the interband table's PL_eV, PL_nm). */
static void ladder_pl_rows(const ew_wf_ladder *l, size_t i, FILE *out) {
  char nm[64];
  for (int u = 0; u < 2; u++) {
    snprintf(nm, sizeof nm, "%s_PL_%s", l->items[i].name, u ? "nm" : "eV");
    fprintf(out, "  %-16s", nm);
    for (int q = 0; q < 5; q++) {
      double e = l->pl_peak_eV[(size_t)q * l->n_items + i];
      cell(out, 11, u ? 2 : 6, u ? (e > 0 ? EW_HC_EVNM / e : NAN) : e);
    }
    fputc('\n', out);
  }
}

void ew_wf_ladder_print(const ew_wf_ladder *l, const ew_stack *st, FILE *out) {
  const ew_layer *ly = &st->layers[l->layer];
  fprintf(out, "Monolayer ladder of layer '%s' (%s, %.3f nm, 1 ML = %.4f nm%s)  %s\n", ly->name,
          ly->material, ly->thickness_nm, l->ml_nm,
          l->ml_default ? ": no lattice constant, GaAs's a/2 used" : "", st->path);
  fprintf(out, "  %-16s", "");
  static const char *const hd[5] = {"-2 ML", "-1 ML", "nominal", "+1 ML", "+2 ML"};
  for (int q = 0; q < 5; q++) fprintf(out, " %11s", hd[q]);
  fprintf(out, "\n  %-16s", "thickness_nm");
  for (int q = 0; q < 5; q++) fprintf(out, " %11.4f", l->thickness_nm[q]);
  fputc('\n', out);
  for (size_t i = 0; i < l->n_items; i++) {
    char nm[64];
    snprintf(nm, sizeof nm, "%s_eV", l->items[i].name);
    fprintf(out, "  %-16s", nm);
    for (int q = 0; q < 5; q++) cell(out, 11, 6, l->energy_eV[(size_t)q * l->n_items + i]);
    snprintf(nm, sizeof nm, "%s_%s", l->items[i].name, l->items[i].interband ? "nm" : "um");
    fprintf(out, "\n  %-16s", nm);
    for (int q = 0; q < 5; q++) {
      double e = l->energy_eV[(size_t)q * l->n_items + i];
      double w = EW_HC_EVNM / e / (l->items[i].interband ? 1.0 : 1e3);
      cell(out, 11, l->items[i].interband ? 2 : 4, isfinite(e) ? w : NAN);
    }
    fputc('\n', out);
    if (l->items[i].interband) ladder_pl_rows(l, i, out);
  }
  for (int q = 0; q < 5; q++)
    if (l->warnings[q][0]) fprintf(out, "  warnings at %s: %s\n", hd[q], l->warnings[q]);
}

void ew_wf_ladder_print_json(const ew_wf_ladder *l, const ew_stack *st, FILE *out) {
  fputs("{\"stack\":", out);
  ew_json_write_string(out, st->path);
  fputs(",\"layer\":", out);
  ew_json_write_string(out, st->layers[l->layer].name);
  fputs(",\"monolayer_nm\":", out);
  ew_json_write_number(out, l->ml_nm);
  fprintf(out, ",\"monolayer_default\":%s,\"offsets_ML\":[-2,-1,0,1,2]",
          l->ml_default ? "true" : "false");
  ew_json_write_number_array(out, "thickness_nm", l->thickness_nm, 5);
  fputs(",\"lines\":[", out);
  for (size_t i = 0; i < l->n_items; i++) {
    fputs(i ? ",{\"name\":" : "{\"name\":", out);
    ew_json_write_string(out, l->items[i].name);
    double e[5], w[5];
    for (int q = 0; q < 5; q++) {
      e[q] = l->energy_eV[(size_t)q * l->n_items + i];
      w[q] = EW_HC_EVNM / e[q];
    }
    ew_json_write_number_array(out, "energy_eV", e, 5);
    ew_json_write_number_array(out, "wavelength_nm", w, 5);
    if (l->items[i].interband) { /* the interband table's PL peak at each offset */
      for (int q = 0; q < 5; q++) {
        e[q] = l->pl_peak_eV[(size_t)q * l->n_items + i];
        w[q] = e[q] > 0 ? EW_HC_EVNM / e[q] : NAN;
      }
      ew_json_write_number_array(out, "pl_peak_eV", e, 5);
      ew_json_write_number_array(out, "pl_peak_nm", w, 5);
    }
    fputc('}', out);
  }
  fputs("],\"warnings\":[", out); /* one array of codes per offset */
  for (int q = 0; q < 5; q++) {
    if (q) fputc(',', out);
    ew_json_write_codes(out, l->warnings[q]);
  }
  fputs("]}\n", out);
}

