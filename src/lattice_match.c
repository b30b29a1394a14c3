/* lattice_match.c — the composition of an alloy lattice-matched to a substrate: bisection
 * of the mismatch for a ternary; for a quaternary the matched line is followed, the target
 * Γ gap bracketed on a scan and bisected (lattice_match.h).  Lattice constants are the
 * catalogue's 300 K values. */
#include "lattice_match.h"

#include "alloy.h"
#include "error.h"

#include <math.h>

/* Relative mismatch (a(x, y) − a_sub)/a_sub of entry e; a_lattice known (checked). */
static double mismatch(const ew_catalogue *cat, const ew_cat_entry *e, double x, double y,
                       double a_sub_A) {
  double v = 0.0;
  ew_entry_value(cat, e, EW_P_ALC, -1, x, y, 0.0, &v);
  return (v - a_sub_A) / a_sub_A;
}

/* Solve mismatch = 0 for the free variable u in [0, hi] with the other one fixed
 * (quaternary: along = 0 → u is x at y = fixed; along = 1 → u is y at x = fixed); ternary:
 * u is x.  Bisection (a(u) continuous); 1 when a root was found. */
static int match_free(const ew_catalogue *cat, const ew_cat_entry *e, int along, double fixed,
                      double hi, double a_sub_A, double *u) {
  double lo = 0.0;
#define MM(v) (along ? mismatch(cat, e, fixed, (v), a_sub_A) : mismatch(cat, e, (v), fixed, a_sub_A))
  double flo = MM(lo), fhi = MM(hi);
  if (flo == 0.0) {
    *u = lo;
    return 1;
  }
  if (fhi == 0.0) {
    *u = hi;
    return 1;
  }
  if ((flo > 0) == (fhi > 0)) return 0;
  for (int it = 0; it < 200 && hi - lo > 1e-16; it++) {
    double m = 0.5 * (lo + hi), fm = MM(m);
    if (fm == 0.0) {
      lo = hi = m;
      break;
    }
    if ((fm > 0) == (flo > 0)) lo = m, flo = fm;
    else hi = m;
  }
#undef MM
  *u = 0.5 * (lo + hi);
  return 1;
}

/* Point t of the lattice-matched line of quaternary e: square → t = y, x solved; triangle
 * → t = x, y solved in [0, 1 − x].  1 when matched. */
static int line_point(const ew_catalogue *cat, const ew_cat_entry *e, double t, double a_sub_A,
                      double *x, double *y) {
  double u;
  if (e->scheme == EW_SCHEME_SQUARE) {
    if (!match_free(cat, e, 0, t, 1.0, a_sub_A, &u)) return 0;
    *x = u;
    *y = t;
  } else {
    if (!match_free(cat, e, 1, t, 1.0 - t, a_sub_A, &u)) return 0;
    *x = t;
    *y = u;
  }
  return 1;
}

/* The one lattice-matched composition of ternary e; a requested gap is either that
 * composition's or unreachable. */
static ew_status match_ternary(const ew_catalogue *cat, const ew_cat_entry *e, const char *name,
                               const char *substrate, double a_sub_A, double target_gap_eV,
                               double T_K, double *x, double *y, ew_error *err) {
  double u, g;
  if (!match_free(cat, e, 0, 0.0, 1.0, a_sub_A, &u))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "no composition of %s is lattice-matched to %s (a = %g nm)", name, substrate,
                   a_sub_A / 10.0);
  *x = u;
  *y = 0.0;
  if (isfinite(target_gap_eV) && ew_entry_value(cat, e, -1, 0, u, 0.0, T_K, &g) &&
      fabs(g - target_gap_eV) > EW_MATCH_GAP_TOL_EV)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s is a ternary: lattice matching to %s fixes x = %.5f, whose Γ gap at "
                   "%g K is %.4f eV, not %g eV; a gap of choice needs a quaternary "
                   "(InGaAsP, AlGaInAs)",
                   name, substrate, u, T_K, g, target_gap_eV);
  return EW_OK;
}

/* A bracket [lo, hi] of the line parameter t where the gap crosses the target, found on a scan
 * of the lattice-matched line; flo is the gap error at lo (0: lo is the root itself). */
typedef struct {
  double lo, hi, flo;
} gap_bracket;

/* Scan quaternary e's lattice-matched line for the target gap: exactly one crossing is
 * accepted; none (unreachable) and several (ambiguous) are input errors naming the range. */
static ew_status scan_gap_line(const ew_catalogue *cat, const ew_cat_entry *e, const char *name,
                               const char *substrate, double a_sub_A, double target_gap_eV,
                               double T_K, gap_bracket *b, ew_error *err) {
  enum { NS = 400 };
  double tprev = 0.0, fprev = 0.0, gmin = INFINITY, gmax = -INFINITY, roots[4];
  int have_prev = 0, nroot = 0;
  for (int i = 0; i <= NS; i++) {
    double t = (double)i / NS, xx, yy, g;
    if (!line_point(cat, e, t, a_sub_A, &xx, &yy) ||
        !ew_entry_value(cat, e, -1, 0, xx, yy, T_K, &g)) {
      have_prev = 0;
      continue;
    }
    gmin = fmin(gmin, g);
    gmax = fmax(gmax, g);
    double f = g - target_gap_eV;
    if (f == 0.0 || (have_prev && (f > 0) != (fprev > 0) && fprev != 0.0)) {
      if (nroot < 4) roots[nroot] = t;
      if (nroot == 0) *b = (gap_bracket){f == 0.0 ? t : tprev, t, f == 0.0 ? 0.0 : fprev};
      nroot++;
    }
    tprev = t;
    fprev = f;
    have_prev = 1;
  }
  if (!(gmin <= gmax))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "no composition of %s is lattice-matched to %s (a = %g nm)", name, substrate,
                   a_sub_A / 10.0);
  if (nroot == 0)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s lattice-matched to %s has Γ gaps from %.4f to %.4f eV at %g K: "
                   "%.4f eV is not reachable",
                   name, substrate, gmin, gmax, T_K, target_gap_eV);
  if (nroot > 1)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s lattice-matched to %s reaches a Γ gap of %.4f eV at %d compositions "
                   "(%s near %.3f and %.3f%s): ambiguous",
                   name, substrate, target_gap_eV, nroot,
                   e->scheme == EW_SCHEME_SQUARE ? "y" : "x", roots[0], roots[1],
                   nroot > 2 ? ", ..." : "");
  return EW_OK;
}

/* Bisect the bracket to the composition (x, y) on the line whose gap is the target. */
static ew_status bisect_gap(const ew_catalogue *cat, const ew_cat_entry *e, const char *name,
                            double a_sub_A, double target_gap_eV, double T_K, gap_bracket b,
                            double *x, double *y, ew_error *err) {
  double xx = 0, yy = 0;
  for (int it = 0; b.flo != 0.0 && it < 200 && b.hi - b.lo > 1e-15; it++) {
    double m = 0.5 * (b.lo + b.hi), g;
    if (!line_point(cat, e, m, a_sub_A, &xx, &yy) ||
        !ew_entry_value(cat, e, -1, 0, xx, yy, T_K, &g))
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0,
                     "%s: the lattice-matched line is interrupted near %g", name, m);
    double f = g - target_gap_eV;
    if (f == 0.0) {
      b.lo = b.hi = m;
      break;
    }
    if ((f > 0) == (b.flo > 0)) b.lo = m, b.flo = f;
    else b.hi = m;
  }
  double t = b.flo == 0.0 ? b.lo : 0.5 * (b.lo + b.hi);
  if (!line_point(cat, e, t, a_sub_A, &xx, &yy))
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "%s: lattice match lost at the root", name);
  *x = xx;
  *y = yy;
  return EW_OK;
}

ew_status ew_lattice_match(const ew_catalogue *cat, const char *name, const char *substrate,
                           double substrate_x, double target_gap_eV, double T_K, double *x,
                           double *y, ew_error *err) {
  const ew_cat_entry *e, *s;
  ew_status st = ew_material_lookup(cat, name, 0.5, 0.0, 1, T_K, &e, err);
  if (st) return st;
  if (e->kind == EW_KIND_BINARY)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "%s is a binary: it has no composition to lattice-match", name);
  if ((st = ew_material_lookup(cat, substrate, substrate_x, 0.0, 0, 0.0, &s, err))) return st;
  double a_sub_A, probe;
  if (!ew_entry_value(cat, s, EW_P_ALC, -1, substrate_x, 0.0, 0.0, &a_sub_A) || !(a_sub_A > 0.0))
    return ew_fail(err, EW_ERR_CATALOGUE, s->path, 0, "substrate %s has no a_lattice",
                   substrate);
  if (!ew_entry_value(cat, e, EW_P_ALC, -1, 0.5, 0.0, 0.0, &probe))
    return ew_fail(err, EW_ERR_CATALOGUE, e->path, 0, "%s has no a_lattice", name);
  if (e->kind == EW_KIND_ALLOY)
    return match_ternary(cat, e, name, substrate, a_sub_A, target_gap_eV, T_K, x, y, err);
  if (!isfinite(target_gap_eV))
    return ew_fail(err, EW_ERR_INPUT, NULL, 0,
                   "quaternary %s: a target Γ gap is needed to fix (x, y) on the "
                   "lattice-matched line",
                   name);
  gap_bracket b = {0.0, 0.0, 0.0};
  if ((st = scan_gap_line(cat, e, name, substrate, a_sub_A, target_gap_eV, T_K, &b, err)))
    return st;
  return bisect_gap(cat, e, name, a_sub_A, target_gap_eV, T_K, b, x, y, err);
}
