/* match.c — inverse matching (see match.h): samples of the range, brackets of sign changes
 * and Brent's method in one unknown; a grid search and damped Newton in two. */
#include "match.h"

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "json_writer.h"
#include "line_name.h"
#include "parallel.h"
#include "solve.h"
#include "stack.h"

typedef struct {
  const ew_wf_pool *pool;
  size_t nk;
  const char *keys[2];
  const char *line[2];
  size_t nlines;
} wf_eval;

/* Line energies at vals; NaN where a level is not bound.  Errors of the stack (a value the
 * reader refuses, e.g. a thickness <= 0) are errors: the range was checked at its ends. */
static ew_status eval_lines(const wf_eval *ev, const double *vals, double *E, ew_error *err) {
  ew_stack *st = NULL;
  ew_result *res = NULL;
  ew_status rc = ew_wf_pool_solve(ev->pool, ev->nk, ev->keys, vals, &st, &res, err);
  if (rc != EW_OK) return rc;
  for (size_t i = 0; i < ev->nlines; i++) ew_wf_line_energy(res, ev->line[i], &E[i], NULL);
  ew_result_free(res);
  ew_stack_free(st);
  return EW_OK;
}

static ew_status eval1(const wf_eval *ev, double v, double *E, ew_error *err) {
  return eval_lines(ev, &v, E, err);
}

/* One step of Brent's method from the best point b (fb), the previous one a (fa) and the
 * counterpoint c (fc): inverse quadratic interpolation or secant when it shrinks the bracket
 * fast enough, else bisection.  d, e: the last two steps (updated). */
static void brent_step(double a, double fa, double b, double fb, double c, double fc,
                       double tol, double mid, double *d, double *e) {
  if (fabs(*e) >= tol && fabs(fa) > fabs(fb)) {
    double s = fb / fa, p, q;
    if (a == c) { /* secant */
      p = 2.0 * mid * s;
      q = 1.0 - s;
    } else { /* inverse quadratic interpolation */
      double qa = fa / fc, r = fb / fc;
      p = s * (2.0 * mid * qa * (qa - r) - (b - a) * (r - 1.0));
      q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
    }
    if (p > 0) q = -q;
    else p = -p;
    if (2.0 * p < fmin(3.0 * mid * q - fabs(tol * q), fabs(*e * q))) {
      *e = *d;
      *d = p / q;
      return;
    }
  }
  *d = mid;
  *e = *d;
}

/* Brent's method for a root of f(v) = E(v) − target in [a, b] with f(a)·f(b) < 0
 * (R. P. Brent, Algorithms for Minimization without Derivatives (Prentice-Hall, 1973),
 * ch. 4: inverse quadratic interpolation or secant, falling back to bisection whenever the
 * step would not shrink the bracket fast enough).  xtol_rel: relative accuracy in v. */
static ew_status brent(const wf_eval *ev, double target, double a, double fa, double b,
                       double fb, double xtol_rel, double xtol_abs, double *root, double *froot,
                       ew_error *err) {
  double c = a, fc = fa, d = b - a, e = d;
  for (int it = 0; it < 200; it++) {
    if ((fb > 0) == (fc > 0)) { /* keep the root between b and c */
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (fabs(fc) < fabs(fb)) { /* b is the best estimate */
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    double tol = 2.0 * DBL_EPSILON * fabs(b) + 0.5 * fmax(xtol_rel * fabs(b), xtol_abs);
    double mid = 0.5 * (c - b);
    if (fabs(mid) <= tol || fb == 0.0) {
      *root = b;
      *froot = fb;
      return EW_OK;
    }
    brent_step(a, fa, b, fb, c, fc, tol, mid, &d, &e);
    a = b;
    fa = fb;
    b += fabs(d) > tol ? d : (mid > 0 ? tol : -tol);
    double E;
    ew_status rc = eval1(ev, b, &E, err);
    if (rc != EW_OK) return rc;
    if (!isfinite(E)) /* the line vanished inside the bracket: treat as a bracket end */
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "%s disappeared inside a bracket at %s = %g",
                     ev->line[0], ev->keys[0], b);
    fb = E - target;
  }
  return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "Brent's method did not converge near %s = %g",
                 ev->keys[0], b);
}
/* Where a line appears between va (not bound) and vb (bound): bisection on "is it bound". */
static ew_status locate_edge(const wf_eval *ev, double va, double vb, double xtol,
                             double *vedge, double *Eedge, ew_error *err) {
  double E = NAN;
  ew_status rc = eval1(ev, vb, &E, err);
  if (rc != EW_OK) return rc;
  for (int it = 0; it < 80 && fabs(vb - va) > xtol; it++) {
    double mid = 0.5 * (va + vb), Em;
    rc = eval1(ev, mid, &Em, err);
    if (rc != EW_OK) return rc;
    if (isfinite(Em)) {
      vb = mid;
      E = Em;
    } else {
      va = mid;
    }
  }
  *vedge = vb;
  *Eedge = E;
  return EW_OK;
}

typedef struct {
  double a, fa, b, fb; /* bracket */
  int exact;           /* 1: a is a root already */
} wf_bracket;

/* Solve E(v) = target near a known root v0 (E0 there), for the tolerance: step from v0 along
 * the local slope, widen until the sign changes, then Brent.  NaN when not reached. */
static ew_status near_root(const wf_eval *ev, const ew_wf_range *r, double v0, double E0,
                           double target, double xtol_rel, double xtol_abs, double *out,
                           ew_error *err) {
  *out = NAN;
  double lo = fmin(r->from, r->to), hi = fmax(r->from, r->to), span = hi - lo;
  double h = 1e-4 * span, Ep, Em;
  double vp = fmin(v0 + h, hi), vm = fmax(v0 - h, lo);
  ew_status rc = eval1(ev, vp, &Ep, err);
  if (rc == EW_OK) rc = eval1(ev, vm, &Em, err);
  if (rc != EW_OK) return rc;
  double slope = (Ep - Em) / (vp - vm);
  if (!isfinite(slope) || slope == 0.0) return EW_OK;
  double d = 1.5 * (target - E0) / slope;
  if (d == 0.0) {
    *out = v0;
    return EW_OK;
  }
  double fa = E0 - target;
  for (int it = 0; it < 12; it++) {
    double b = fmin(fmax(v0 + d, lo), hi), Eb;
    rc = eval1(ev, b, &Eb, err);
    if (rc != EW_OK) return rc;
    if (!isfinite(Eb)) return EW_OK;
    double fb = Eb - target;
    if (fb == 0.0) {
      *out = b;
      return EW_OK;
    }
    if ((fa > 0) != (fb > 0)) {
      double root, froot;
      rc = brent(ev, target, v0, fa, b, fb, xtol_rel, xtol_abs, &root, &froot, err);
      if (rc == EW_OK) *out = root;
      return rc;
    }
    if (b == lo || b == hi) return EW_OK;
    d *= 2.0;
  }
  return EW_OK;
}

static ew_status sample_grid(const wf_eval *ev, size_t npts, const double *vals, double *E,
                             int nt, ew_error *err) {
  (void)nt; /* unused without OpenMP */
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t i = 0; i < npts; i++) {
    if (i > ew_wf_fail_index(&fl)) continue;
    ew_error e = {0};
    ew_status rc = eval_lines(ev, vals + i * ev->nk, E + i * ev->nlines, &e);
    if (rc != EW_OK) ew_wf_fail_record(&fl, i, rc, &e);
  }
  return fl.index != SIZE_MAX ? ew_wf_fail_report(&fl, err) : EW_OK;
}

static void fmt_energy(char *buf, size_t size, double eV) {
  double nm = EW_HC_EVNM / eV;
  if (nm >= 2000) snprintf(buf, size, "%.6g eV = %.5g \xc2\xb5m", eV, nm / 1e3);
  else snprintf(buf, size, "%.6g eV = %.5g nm", eV, nm);
}

#define WF_XTOL_REL 2e-7 /* Brent stops within this relative distance: 1e-6 asked, margin 5 */

/* The samples of a 1D match and what is learnt from them. */
typedef struct {
  size_t S;
  double *v, *E;        /* [S] values and line energies (NaN: not bound) */
  double *vedge, *Eedge;/* [S] where the line appears inside interval i (NaN: no edge) */
  wf_bracket *br;       /* [2S] */
  size_t nb;
  double emin, emax;    /* the line's range over samples and edges */
  int own_last;         /* an exact hit on the last sample is this part's (the last part's) */
} samples_1d;

static void samples_free(samples_1d *s) {
  free(s->v);
  free(s->E);
  free(s->vedge);
  free(s->Eedge);
  free(s->br);
}

/* A line that is bound over part of the range only: find where it appears. */
static ew_status find_edges(const wf_eval *ev, samples_1d *s, double span, int nt,
                            ew_error *err) {
  (void)nt; /* unused without OpenMP */
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  const double *v = s->v, *E = s->E;
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t i = 0; i < s->S - 1; i++) {
    s->Eedge[i] = NAN;
    if (isfinite(E[i]) == isfinite(E[i + 1])) continue;
    ew_error e = {0};
    double va = isfinite(E[i]) ? v[i + 1] : v[i], vb = isfinite(E[i]) ? v[i] : v[i + 1];
    ew_status q = locate_edge(ev, va, vb, WF_XTOL_REL * fmax(fabs(vb), 1e-3 * span),
                              &s->vedge[i], &s->Eedge[i], &e);
    if (q != EW_OK) ew_wf_fail_record(&fl, i, q, &e);
  }
  return fl.index != SIZE_MAX ? ew_wf_fail_report(&fl, err) : EW_OK;
}

/* The line's range over the samples, and every bracket of E − T (an exact hit is a bracket
 * of its own; an interval with one end unbound is bracketed from the edge). */
static void brackets_1d(samples_1d *s, double T) {
  const double *v = s->v, *E = s->E;
  s->emin = INFINITY;
  s->emax = -INFINITY;
  for (size_t i = 0; i < s->S; i++) {
    if (isfinite(E[i])) s->emin = fmin(s->emin, E[i]), s->emax = fmax(s->emax, E[i]);
    if (i + 1 < s->S && isfinite(s->Eedge[i]))
      s->emin = fmin(s->emin, s->Eedge[i]), s->emax = fmax(s->emax, s->Eedge[i]);
  }
  s->nb = 0;
  for (size_t i = 0; i < s->S; i++) {
    if (isfinite(E[i]) && E[i] == T && (i + 1 < s->S || s->own_last))
      s->br[s->nb++] = (wf_bracket){v[i], 0, v[i], 0, 1};
    if (i + 1 == s->S) break;
    double a = v[i], fa = E[i] - T, b = v[i + 1], fb = E[i + 1] - T;
    if (isfinite(s->Eedge[i])) { /* one end unbound: bracket from the edge */
      if (isfinite(E[i])) b = s->vedge[i], fb = s->Eedge[i] - T;
      else a = s->vedge[i], fa = s->Eedge[i] - T;
    } else if (!isfinite(fa) || !isfinite(fb)) {
      continue;
    }
    if (fa != 0 && fb != 0 && (fa > 0) != (fb > 0)) s->br[s->nb++] = (wf_bracket){a, fa, b, fb, 0};
  }
}

/* Line energies at target −/+ tolerance, the tolerance in its own unit (NaN when the minus
 * side is not a positive wavelength). */
static void tolerance_targets(const ew_wf_match_result *out, const ew_wf_quantity *tol,
                              double *tm, double *tp) {
  double T = out->target[0].eV;
  if (tol->is_wavelength) {
    double lam = out->target[0].nm, d = tol->value * tol->scale;
    *tm = lam - d > 0 ? EW_HC_EVNM / (lam - d) : NAN;
    *tp = EW_HC_EVNM / (lam + d);
  } else {
    *tm = T - tol->eV;
    *tp = T + tol->eV;
  }
}

/* Brent in every bracket (and at target ± tolerance near each root) into out->sol. */
static ew_status solve_brackets(const wf_eval *ev, const ew_wf_range *r,
                                const ew_wf_quantity *tol, const samples_1d *s, double xtol_abs,
                                int nt, ew_wf_match_result *out, ew_error *err) {
  (void)nt; /* unused without OpenMP */
  double T = out->target[0].eV, tm = NAN, tp = NAN;
  if (tol) tolerance_targets(out, tol, &tm, &tp);
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t k = 0; k < s->nb; k++) {
    ew_error e = {0};
    ew_wf_solution *sol = &out->sol[k];
    const wf_bracket *br = &s->br[k];
    double root = br->a, froot = 0.0;
    ew_status q = EW_OK;
    if (!br->exact)
      q = brent(ev, T, br->a, br->fa, br->b, br->fb, WF_XTOL_REL, xtol_abs, &root, &froot, &e);
    sol->value[0] = root;
    sol->energy_eV[0] = froot + T;
    sol->wavelength_nm[0] = EW_HC_EVNM / sol->energy_eV[0];
    sol->residual_eV[0] = froot;
    sol->value_minus = sol->value_plus = sol->uncertainty = NAN;
    if (q == EW_OK && tol && isfinite(tm))
      q = near_root(ev, r, root, sol->energy_eV[0], tm, WF_XTOL_REL, xtol_abs, &sol->value_minus,
                    &e);
    if (q == EW_OK && tol)
      q = near_root(ev, r, root, sol->energy_eV[0], tp, WF_XTOL_REL, xtol_abs, &sol->value_plus,
                    &e);
    if (tol) sol->uncertainty = 0.5 * fabs(sol->value_plus - sol->value_minus);
    if (q != EW_OK) ew_wf_fail_record(&fl, k, q, &e);
  }
  return fl.index != SIZE_MAX ? ew_wf_fail_report(&fl, err) : EW_OK;
}

static void no_match_1d(ew_wf_match_result *out) {
  char t[64], a[64], b[64];
  fmt_energy(t, sizeof t, out->target[0].eV);
  const char *key = out->key[0], *line = out->line[0];
  if (!isfinite(out->reached_min_eV[0])) {
    snprintf(out->message, sizeof out->message, "no value of %s in [%g, %g] puts %s at %s: "
             "%s is not bound anywhere in the range", key, out->from[0], out->to[0], line, t,
             line);
  } else {
    fmt_energy(a, sizeof a, out->reached_min_eV[0]);
    fmt_energy(b, sizeof b, out->reached_max_eV[0]);
    snprintf(out->message, sizeof out->message, "no value of %s in [%g, %g] puts %s at %s; "
             "over the range %s spans %s to %s", key, out->from[0], out->to[0], line, t, line, a,
             b);
  }
}

/* Sample i of S over range r (the last one is r->to itself). */
static double sample_value(const ew_wf_range *r, size_t i, size_t S) {
  return i + 1 == S ? r->to : r->from + (r->to - r->from) * (double)i / (double)(S - 1);
}

/* 1D: the samples i0 … i1 of S (the intervals [i0, i1) of a part; 0 … S − 1 for the whole
 * match), their edges and brackets, and Brent in each. */
static ew_status match_1d(const wf_eval *ev, const ew_wf_range *r, const ew_wf_quantity *tol,
                          size_t S, size_t i0, size_t i1, int nt, ew_wf_match_result *out,
                          ew_error *err) {
  size_t m = i1 - i0 + 1;
  samples_1d s = {m, malloc(m * sizeof(double)), malloc(m * sizeof(double)),
                  calloc(m, sizeof(double)), calloc(m, sizeof(double)),
                  malloc(2 * m * sizeof(wf_bracket)), 0, NAN, NAN, i1 + 1 == S};
  ew_status rc = EW_OK;
  if (!s.v || !s.E || !s.vedge || !s.Eedge || !s.br) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (samples)");
    goto done;
  }
  for (size_t i = 0; i < m; i++) s.v[i] = sample_value(r, i0 + i, S);
  double span = fabs(r->to - r->from), xtol_abs = 1e-9 * span;
  rc = sample_grid(ev, m, s.v, s.E, nt, err);
  if (rc == EW_OK) rc = find_edges(ev, &s, span, nt, err);
  if (rc != EW_OK) goto done;
  brackets_1d(&s, out->target[0].eV);
  out->reached_min_eV[0] = isfinite(s.emin) ? s.emin : NAN;
  out->reached_max_eV[0] = isfinite(s.emax) ? s.emax : NAN;
  out->sol = calloc(s.nb ? s.nb : 1, sizeof *out->sol);
  if (!out->sol) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
    goto done;
  }
  rc = solve_brackets(ev, r, tol, &s, xtol_abs, nt, out, err);
  if (rc != EW_OK) goto done;
  out->n = s.nb;
  if (s.nb == 0 && out->shard_n <= 1) no_match_1d(out);
done:
  samples_free(&s);
  return rc;
}

/* Relative residual of the two lines (each measured against its target). */
static double rnorm(const double *E, const ew_wf_match_result *o) {
  double a = (E[0] - o->target[0].eV) / o->target[0].eV, b = (E[1] - o->target[1].eV) / o->target[1].eV;
  return sqrt(a * a + b * b);
}

/* The box of a 2D match. */
typedef struct {
  double lo[2], hi[2];
} wf_box;

/* Central finite-difference Jacobian of the two line energies at v (steps 1e-4 of the box,
 * one-sided at its faces). */
static ew_status jacobian_2d(const wf_eval *ev, const wf_box *bx, const double *v,
                             double J[2][2], ew_error *err) {
  for (int j = 0; j < 2; j++) {
    double h = 1e-4 * (bx->hi[j] - bx->lo[j]);
    double vp[2] = {v[0], v[1]}, vm[2] = {v[0], v[1]}, Ep[2], Em[2];
    vp[j] = fmin(v[j] + h, bx->hi[j]);
    vm[j] = fmax(v[j] - h, bx->lo[j]);
    ew_status rc = eval_lines(ev, vp, Ep, err);
    if (rc == EW_OK) rc = eval_lines(ev, vm, Em, err);
    if (rc != EW_OK) return rc;
    for (int i = 0; i < 2; i++) J[i][j] = (Ep[i] - Em[i]) / (vp[j] - vm[j]);
  }
  return EW_OK;
}

/* The step d from v, clamped to the box and halved until the residual falls below res:
 * *accepted, and the last trial point vn with its energies En. */
static ew_status line_search_2d(const wf_eval *ev, const wf_box *bx, const ew_wf_match_result *o,
                                const double *v, const double *d, double res, double *vn,
                                double *En, int *accepted, ew_error *err) {
  *accepted = 0;
  for (int ls = 0; ls < 14 && !*accepted; ls++) {
    double lam = ldexp(1.0, -ls);
    for (int i = 0; i < 2; i++) vn[i] = fmin(fmax(v[i] + lam * d[i], bx->lo[i]), bx->hi[i]);
    ew_status rc = eval_lines(ev, vn, En, err);
    if (rc != EW_OK) return rc;
    if (isfinite(En[0]) && isfinite(En[1]) && rnorm(En, o) < res) *accepted = 1;
  }
  return EW_OK;
}

/* Newton's method in two unknowns with a central finite-difference Jacobian, each step
 * clamped to the box and halved until the residual falls (damped Newton, e.g. J. E. Dennis,
 * R. B. Schnabel, Numerical Methods for Unconstrained Optimization and Nonlinear Equations
 * (SIAM, 1996), ch. 6).  *found = 0 when it stalls or leaves the region where both lines are
 * bound. */
static ew_status newton_2d(const wf_eval *ev, const ew_wf_range *r, const double *start,
                           const ew_wf_match_result *o, ew_wf_solution *s, int *found,
                           ew_error *err) {
  *found = 0;
  wf_box bx;
  double v[2] = {start[0], start[1]}, E[2];
  for (int i = 0; i < 2; i++) bx.lo[i] = fmin(r[i].from, r[i].to), bx.hi[i] = fmax(r[i].from, r[i].to);
  ew_status rc = eval_lines(ev, v, E, err);
  if (rc != EW_OK || !isfinite(E[0]) || !isfinite(E[1])) return rc;
  double res = rnorm(E, o);
  for (int it = 0; it < 40 && !*found; it++) {
    double J[2][2];
    rc = jacobian_2d(ev, &bx, v, J, err);
    if (rc != EW_OK) return rc;
    double det = J[0][0] * J[1][1] - J[0][1] * J[1][0];
    double scale = fabs(J[0][0] * J[1][1]) + fabs(J[0][1] * J[1][0]);
    if (!isfinite(det) || fabs(det) <= 1e-12 * scale || scale == 0) return EW_OK;
    double f0 = E[0] - o->target[0].eV, f1 = E[1] - o->target[1].eV;
    double d[2] = {-(J[1][1] * f0 - J[0][1] * f1) / det, -(-J[1][0] * f0 + J[0][0] * f1) / det};
    int accepted;
    double vn[2], En[2];
    rc = line_search_2d(ev, &bx, o, v, d, res, vn, En, &accepted, err);
    if (rc != EW_OK) return rc;
    int small = 1;
    for (int i = 0; i < 2; i++)
      if (fabs(vn[i] - v[i]) > 1e-6 * fmax(fabs(v[i]), 1e-3 * (bx.hi[i] - bx.lo[i]))) small = 0;
    if (accepted) {
      v[0] = vn[0], v[1] = vn[1], E[0] = En[0], E[1] = En[1];
      res = rnorm(E, o);
    }
    /* converged: the step is below 1e-6 relative, or the residual at rounding level */
    if ((small || !accepted) && res < 1e-5) *found = 1;
    else if (!accepted) return EW_OK;
  }
  if (!*found) return EW_OK;
  for (int i = 0; i < 2; i++) {
    s->value[i] = v[i];
    s->energy_eV[i] = E[i];
    s->wavelength_nm[i] = EW_HC_EVNM / E[i];
    s->residual_eV[i] = E[i] - o->target[i].eV;
  }
  s->value_minus = s->value_plus = s->uncertainty = NAN;
  return EW_OK;
}

static int cmp_sol(const void *pa, const void *pb) {
  const ew_wf_solution *a = pa, *b = pb;
  if (a->value[0] != b->value[0]) return a->value[0] < b->value[0] ? -1 : 1;
  return (a->value[1] > b->value[1]) - (a->value[1] < b->value[1]);
}

static int cmp_start(const void *pa, const void *pb) {
  const ew_wf_match_start *a = pa, *b = pb;
  if (a->r != b->r) return a->r < b->r ? -1 : 1;
  return a->i != b->i ? (a->i < b->i ? -1 : 1) : (a->j > b->j) - (a->j < b->j);
}

#define WF_MAX_STARTS 8

/* The grid of a 2D match (or of a part's rows): S0 × S1 points from row i0 of the whole
 * grid, values v[2p..2p+1] and energies E[2p..2p+1]. */
typedef struct {
  size_t S0, S1, np, i0;
  double *v, *E;
} grid_2d;

/* The best corner of grid cell (i, j) (local rows) when both residuals change sign across the
 * cell; the start's i is the whole grid's row. */
static int cell_start(const grid_2d *g, const ew_wf_match_result *out, size_t i, size_t j,
                      ew_wf_match_start *best) {
  int neg[2] = {0, 0}, pos[2] = {0, 0}, ok = 1;
  *best = (ew_wf_match_start){.r = INFINITY, .cell = 1};
  for (size_t di = 0; di < 2; di++)
    for (size_t dj = 0; dj < 2; dj++) {
      size_t p = (i + di) * g->S1 + j + dj;
      for (int k = 0; k < 2; k++) {
        double f = g->E[2 * p + k] - out->target[k].eV;
        if (!isfinite(f)) ok = 0;
        neg[k] |= f <= 0;
        pos[k] |= f >= 0;
      }
      if (ok) {
        double q = rnorm(&g->E[2 * p], out);
        if (q < best->r) best->r = q, best->i = g->i0 + i + di, best->j = j + dj;
      }
    }
  return ok && neg[0] && pos[0] && neg[1] && pos[1];
}

/* The starts Newton goes from, chosen from candidates st[0..n) (all of one kind: cell
 * corners, or best points): sorted by residual (ties by row, column), one per grid point, the
 * best WF_MAX_STARTS (one when they are best points).  Returns how many, at the front of st. */
static size_t pick_starts(ew_wf_match_start *st, size_t n) {
  qsort(st, n, sizeof *st, cmp_start);
  size_t u = 0;
  for (size_t k = 0; k < n; k++) {
    size_t q = 0;
    while (q < u && (st[q].i != st[k].i || st[q].j != st[k].j)) q++;
    if (q == u) st[u++] = st[k];
  }
  size_t keep = u > 0 && !st[0].cell ? 1 : WF_MAX_STARTS;
  return u < keep ? u : keep;
}

/* Newton's starts of grid g: the best corner of every grid cell across which both residuals
 * change sign, the best grid point when no cell qualifies (pick_starts).  st has np. */
static size_t starts_2d(const grid_2d *g, const ew_wf_match_result *out, ew_wf_match_start *st) {
  size_t ns = 0;
  for (size_t i = 0; i + 1 < g->S0; i++)
    for (size_t j = 0; j + 1 < g->S1; j++)
      if (cell_start(g, out, i, j, &st[ns])) ns++;
  if (ns == 0) {
    ew_wf_match_start best = {.r = INFINITY};
    for (size_t p = 0; p < g->np; p++)
      if (isfinite(g->E[2 * p]) && isfinite(g->E[2 * p + 1]) && rnorm(&g->E[2 * p], out) < best.r)
        best.r = rnorm(&g->E[2 * p], out), best.i = g->i0 + p / g->S1, best.j = p % g->S1;
    if (isfinite(best.r)) st[ns++] = best;
  }
  return pick_starts(st, ns);
}

/* Newton from every start (its found and sol). */
static ew_status newton_starts(const wf_eval *ev, const ew_wf_range *r, const grid_2d *g,
                               ew_wf_match_start *st, size_t ns, int nt,
                               const ew_wf_match_result *out, ew_error *err) {
  (void)nt; /* unused without OpenMP */
  ew_wf_fail fl = EW_WF_FAIL_NONE;
  EW_OMP(omp parallel for num_threads(nt) schedule(dynamic, 1))
  for (size_t k = 0; k < ns; k++) {
    ew_error e = {0};
    ew_status q = newton_2d(ev, r, &g->v[2 * ((st[k].i - g->i0) * g->S1 + st[k].j)], out,
                            &st[k].sol, &st[k].found, &e);
    if (q != EW_OK) ew_wf_fail_record(&fl, k, q, &e);
  }
  return fl.index != SIZE_MAX ? ew_wf_fail_report(&fl, err) : EW_OK;
}

/* The distinct solutions of the starts st[0..ns) (starts converging to the same point agree
 * to ~1e-6 of the box), sorted, into out. */
static ew_status collect_solutions(const ew_wf_match_start *st, size_t ns,
                                   ew_wf_match_result *out, ew_error *err) {
  ew_wf_solution *sol = calloc(ns ? ns : 1, sizeof *sol);
  if (!sol) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  size_t n = 0;
  for (size_t k = 0; k < ns; k++) {
    if (!st[k].found) continue;
    size_t q = 0;
    for (; q < n; q++)
      if (fabs(sol[q].value[0] - st[k].sol.value[0]) <= 1e-4 * fabs(out->to[0] - out->from[0]) &&
          fabs(sol[q].value[1] - st[k].sol.value[1]) <= 1e-4 * fabs(out->to[1] - out->from[1]))
        break;
    if (q == n) sol[n++] = st[k].sol;
  }
  qsort(sol, n, sizeof *sol, cmp_sol);
  free(out->sol);
  out->sol = sol;
  out->n = n;
  return EW_OK;
}

ew_status ew_wf_match_merge_starts(ew_wf_match_start *st, size_t n, ew_wf_match_result *out,
                                   ew_error *err) {
  /* the cell corners of every part, or (no part had one) every part's best point */
  size_t nc = 0;
  for (size_t k = 0; k < n; k++)
    if (st[k].cell) {
      ew_wf_match_start t = st[nc];
      st[nc++] = st[k];
      st[k] = t;
    }
  size_t ns = pick_starts(st, nc ? nc : n);
  return collect_solutions(st, ns, out, err);
}

static void no_match_2d(ew_wf_match_result *out) {
  int w = snprintf(out->message, sizeof out->message, "no pair of %s in [%g, %g] and %s in [%g, %g] "
           "puts %s at %.6g eV and %s at %.6g eV; over the box %s spans %.6g to %.6g eV and "
           "%s %.6g to %.6g eV", out->key[0], out->from[0], out->to[0], out->key[1],
           out->from[1], out->to[1], out->line[0], out->target[0].eV, out->line[1],
           out->target[1].eV, out->line[0], out->reached_min_eV[0], out->reached_max_eV[0],
           out->line[1], out->reached_min_eV[1], out->reached_max_eV[1]);
  if (w < 0) out->message[0] = '\0';
}

void ew_wf_match_message(ew_wf_match_result *out) {
  out->message[0] = '\0';
  if (out->n > 0) return;
  if (out->nkeys == 2) no_match_2d(out);
  else no_match_1d(out);
}

/* 2D: the grid rows i0 … i1 of S0 (the cell rows [i0, i1) of a part; all for the whole match),
 * Newton's starts and Newton from each.  A part keeps its starts (out->starts) for the merge;
 * the whole match its solutions. */
static ew_status match_2d(const wf_eval *ev, const ew_wf_range *r, size_t S0, size_t S1,
                          size_t i0, size_t i1, int nt, ew_wf_match_result *out, ew_error *err) {
  size_t rows = i1 - i0 + 1, np = rows * S1;
  grid_2d g = {rows, S1, np, i0, malloc(2 * np * sizeof(double)), malloc(2 * np * sizeof(double))};
  ew_wf_match_start *st = calloc(np, sizeof *st);
  ew_status rc = EW_OK;
  if (!g.v || !g.E || !st) {
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (samples)");
    goto done;
  }
  for (size_t i = 0; i < rows; i++)
    for (size_t j = 0; j < S1; j++) {
      g.v[2 * (i * S1 + j)] = r[0].from + (r[0].to - r[0].from) * (double)(i0 + i) / (double)(S0 - 1);
      g.v[2 * (i * S1 + j) + 1] = r[1].from + (r[1].to - r[1].from) * (double)j / (double)(S1 - 1);
    }
  rc = sample_grid(ev, np, g.v, g.E, nt, err);
  if (rc != EW_OK) goto done;
  for (int k = 0; k < 2; k++) {
    double a = INFINITY, b = -INFINITY;
    for (size_t p = 0; p < np; p++)
      if (isfinite(g.E[2 * p + k])) a = fmin(a, g.E[2 * p + k]), b = fmax(b, g.E[2 * p + k]);
    out->reached_min_eV[k] = isfinite(a) ? a : NAN;
    out->reached_max_eV[k] = isfinite(b) ? b : NAN;
  }
  size_t ns = starts_2d(&g, out, st);
  rc = newton_starts(ev, r, &g, st, ns, nt, out, err);
  if (rc == EW_OK && out->shard_n > 1) {
    out->starts = st;
    out->n_starts = ns;
    st = NULL;
  } else if (rc == EW_OK) {
    rc = collect_solutions(st, ns, out, err);
    if (rc == EW_OK && out->n == 0) no_match_2d(out);
  }
done:
  free(g.v);
  free(g.E);
  free(st);
  return rc;
}

/* Check the request and fill the result's keys, lines and targets and the evaluator. */
static ew_status match_setup(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                             const char *const *lines, const ew_wf_quantity *targets,
                             size_t nlines, const ew_wf_quantity *tolerance, wf_eval *ev,
                             ew_wf_match_result *out, ew_error *err) {
  if (nr < 1 || nr > 2 || nlines != nr)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "match: give one --vary with one --line/--target, "
                   "or two --vary with two --line/--target pairs (got %zu and %zu)", nr, nlines);
  if (tolerance && nr == 2)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--tolerance works with one unknown only");
  ev->nk = nr;
  ev->nlines = nlines;
  out->nkeys = nr;
  for (size_t i = 0; i < nr; i++) {
    double nominal;
    ew_status rc = ew_wf_key_check(m, ranges[i].key, "--vary", &nominal, err);
    if (rc != EW_OK) return rc;
    rc = ew_wf_line_energy(NULL, lines[i], &nominal, err);
    if (rc != EW_OK) return rc;
    if (strlen(ranges[i].key) >= sizeof out->key[i] || strlen(lines[i]) >= sizeof out->line[i])
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "key or line name too long");
    strcpy(out->key[i], ranges[i].key);
    strcpy(out->line[i], lines[i]);
    out->target[i] = targets[i];
    ev->keys[i] = ranges[i].key;
    ev->line[i] = lines[i];
    out->reached_min_eV[i] = out->reached_max_eV[i] = NAN;
  }
  if (nr == 2 && !strcmp(ranges[0].key, ranges[1].key))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--vary %s given twice", ranges[0].key);
  if (tolerance) {
    out->have_tolerance = 1;
    out->tolerance = *tolerance;
  }
  return EW_OK;
}

/* The warning codes of the stack at solution s (README "Warnings"). */
static ew_status solution_codes(const wf_eval *ev, ew_wf_solution *s, ew_error *err) {
  ew_stack *st = NULL;
  ew_result *res = NULL;
  ew_status rc = ew_wf_pool_solve(ev->pool, ev->nk, ev->keys, s->value, &st, &res, err);
  if (rc != EW_OK) return rc;
  ew_result_warning_codes_join(res, s->warnings, sizeof s->warnings);
  ew_result_free(res);
  ew_stack_free(st);
  return EW_OK;
}

/* ... of every solution, and of every found start of a 2D part. */
static ew_status all_codes(const wf_eval *ev, ew_wf_match_result *out, ew_error *err) {
  ew_status rc = EW_OK;
  for (size_t k = 0; rc == EW_OK && k < out->n; k++) rc = solution_codes(ev, &out->sol[k], err);
  for (size_t k = 0; rc == EW_OK && k < out->n_starts; k++)
    if (out->starts[k].found) rc = solution_codes(ev, &out->starts[k].sol, err);
  return rc;
}

void ew_wf_match_part_span(size_t n, size_t k, size_t parts, size_t *lo, size_t *hi) {
  *lo = (size_t)((unsigned long long)n * (k - 1) / parts);
  *hi = (size_t)((unsigned long long)n * k / parts);
}

/* Samples per range (the option, or one per STEP, or 41 in 1D and 11 in 2D), and the shard. */
static ew_status match_samples(const ew_wf_range *ranges, size_t nr, const ew_wf_match_opt *o,
                               ew_wf_match_result *out, ew_error *err) {
  for (size_t i = 0; i < nr; i++) {
    size_t S = o->samples ? o->samples
               : ranges[i].step > 0 ? ew_wf_range_count(&ranges[i])
                                    : (nr == 1 ? 41 : 11);
    out->samples[i] = S < 2 ? 2 : S;
    out->from[i] = ranges[i].from;
    out->to[i] = ranges[i].to;
  }
  if ((double)out->samples[0] * (nr == 2 ? (double)out->samples[1] : 1.0) > 1e6)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--samples: too many samples (limit 10^6 solves)");
  out->shard_n = o->shard_n > 1 ? o->shard_n : 1;
  out->shard_k = o->shard_n > 1 ? o->shard_k : 1;
  if (out->shard_k < 1 || out->shard_k > out->shard_n)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--shard %zu/%zu: K must be in 1..N",
                   out->shard_k, out->shard_n);
  return EW_OK;
}

ew_status ew_wf_match(const ew_wf_model *m, const ew_wf_range *ranges, size_t nr,
                      const char *const *lines, const ew_wf_quantity *targets, size_t nlines,
                      const ew_wf_quantity *tolerance, const ew_wf_match_opt *oin,
                      ew_wf_match_result *out, ew_error *err) {
  memset(out, 0, sizeof *out);
  ew_wf_match_opt o = {0};
  if (oin) o = *oin;
  wf_eval ev = {NULL, 0, {NULL, NULL}, {NULL, NULL}, 0};
  ew_status rc = match_setup(m, ranges, nr, lines, targets, nlines, tolerance, &ev, out, err);
  if (rc == EW_OK) rc = match_samples(ranges, nr, &o, out, err);
  if (rc != EW_OK) return rc;
  int nt = ew_wf_threads(o.threads);
  ew_wf_pool pool;
  rc = ew_wf_pool_open(m, nt, &pool, err);
  if (rc != EW_OK) return rc;
  ew_progress pg;
  ew_progress_init(&pg, o.progress, o.progress_ctx, 0);
  if (o.progress) pool.progress = &pg;
  ev.pool = &pool;
  /* the part's intervals (1D) or cell rows (2D): [lo, hi) of samples[0] − 1 */
  size_t lo, hi;
  ew_wf_match_part_span(out->samples[0] - 1, out->shard_k, out->shard_n, &lo, &hi);
  rc = nr == 1 ? match_1d(&ev, ranges, tolerance, out->samples[0], lo, hi, nt, out, err)
               : match_2d(&ev, ranges, out->samples[0], out->samples[1], lo, hi, nt, out, err);
  if (rc == EW_OK) rc = all_codes(&ev, out, err);
  ew_wf_pool_free(&pool);
  if (rc != EW_OK) ew_wf_match_result_free(out);
  return rc;
}

void ew_wf_match_result_free(ew_wf_match_result *r) {
  if (!r) return;
  free(r->sol);
  free(r->starts);
  r->sol = NULL;
  r->starts = NULL;
  r->n = r->n_starts = 0;
}

/* ---- reports ---------------------------------------------------------------------------- */
/* "e1-e2", "hh1-hh3": both ends in one band (an intersubband line, read in µm) */
static int same_band_line(const char *line) {
  size_t a = strcspn(line, "0123456789"), d = strcspn(line, "-");
  if (!line[d]) return 0;
  const char *b = line + d + 1;
  return a > 0 && a < d && strcspn(b, "0123456789") == a && !strncmp(line, b, a);
}

void ew_wf_match_print(const ew_wf_match_result *r, FILE *out) {
  for (size_t i = 0; i < r->nkeys; i++) {
    char t[64];
    fmt_energy(t, sizeof t, r->target[i].eV);
    fprintf(out, "target: %s at %s\n", r->line[i], t);
  }
  if (r->have_tolerance)
    fprintf(out, "tolerance: %g %s\n", r->tolerance.value,
            r->tolerance.is_wavelength ? (r->tolerance.scale == 1.0 ? "nm" : "um")
                                       : (r->tolerance.scale == 1.0 ? "eV" : "meV"));
  if (r->n == 0) {
    fprintf(out, "no solution: %s\n", r->message);
    return;
  }
  fprintf(out, "\n  %-3s", "#");
  for (size_t i = 0; i < r->nkeys; i++) fprintf(out, " %16s", r->key[i]);
  if (r->have_tolerance) fprintf(out, " %12s %14s %14s", "uncertainty", "at_target-tol", "at_target+tol");
  for (size_t i = 0; i < r->nkeys; i++)
    fprintf(out, " %13s %13s", "energy_eV", same_band_line(r->line[i]) ? "lambda_um" : "lambda_nm");
  fputc('\n', out);
  for (size_t k = 0; k < r->n; k++) {
    const ew_wf_solution *s = &r->sol[k];
    fprintf(out, "  %-3zu", k + 1);
    for (size_t i = 0; i < r->nkeys; i++) fprintf(out, " %16.8g", s->value[i]);
    if (r->have_tolerance)
      fprintf(out, " %12.4g %14.8g %14.8g", s->uncertainty, s->value_minus, s->value_plus);
    for (size_t i = 0; i < r->nkeys; i++) {
      int um = same_band_line(r->line[i]);
      fprintf(out, um ? " %13.7f %13.5f" : " %13.7f %13.3f", s->energy_eV[i],
              um ? s->wavelength_nm[i] * 1e-3 : s->wavelength_nm[i]);
    }
    fputc('\n', out);
  }
  for (size_t k = 0; k < r->n; k++)
    if (r->sol[k].warnings[0]) fprintf(out, "  warnings of #%zu: %s\n", k + 1, r->sol[k].warnings);
}

static void json_lines(const ew_wf_match_result *r, FILE *out) {
  fputs("{\"keys\":[", out);
  for (size_t i = 0; i < r->nkeys; i++) {
    if (i) fputc(',', out);
    ew_json_write_string(out, r->key[i]);
  }
  fputs("],\"lines\":[", out);
  for (size_t i = 0; i < r->nkeys; i++) {
    fputs(i ? ",{\"line\":" : "{\"line\":", out);
    ew_json_write_string(out, r->line[i]);
    fputs(",\"target_eV\":", out);
    ew_json_write_number(out, r->target[i].eV);
    fputs(",\"target_nm\":", out);
    ew_json_write_number(out, r->target[i].nm);
    fputs(",\"reached_eV\":[", out);
    ew_json_write_number(out, r->reached_min_eV[i]);
    fputc(',', out);
    ew_json_write_number(out, r->reached_max_eV[i]);
    fputs("]}", out);
  }
}

static void json_solution(const ew_wf_match_result *r, const ew_wf_solution *s, FILE *out) {
  const char *f[] = {"value", "energy_eV", "wavelength_nm", "residual_eV"};
  const double *a[] = {s->value, s->energy_eV, s->wavelength_nm, s->residual_eV};
  for (int q = 0; q < 4; q++) {
    fprintf(out, "%s\"%s\":", q ? "," : "", f[q]);
    if (r->nkeys == 2) {
      fputc('[', out);
      ew_json_write_number(out, a[q][0]);
      fputc(',', out);
      ew_json_write_number(out, a[q][1]);
      fputc(']', out);
    } else {
      ew_json_write_number(out, a[q][0]);
    }
  }
  if (r->have_tolerance) {
    fputs(",\"uncertainty\":", out);
    ew_json_write_number(out, s->uncertainty);
    fputs(",\"value_at_target_minus_tolerance\":", out);
    ew_json_write_number(out, s->value_minus);
    fputs(",\"value_at_target_plus_tolerance\":", out);
    ew_json_write_number(out, s->value_plus);
  }
  fputs(",\"warnings\":", out);
  ew_json_write_codes(out, s->warnings);
}

void ew_wf_match_print_json(const ew_wf_match_result *r, FILE *out) {
  json_lines(r, out);
  fputs("],\"solutions\":[", out);
  for (size_t k = 0; k < r->n; k++) {
    fputs(k ? ",{" : "{", out);
    json_solution(r, &r->sol[k], out);
    fputc('}', out);
  }
  fputs("],\"message\":", out);
  ew_json_write_string(out, r->message);
  fputs("}\n", out);
}
