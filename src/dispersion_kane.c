/* dispersion_kane.c — subbands against k∥ in the 8-band model (kp_hamiltonian.h): the
 * electron side and the hole side of the gap, each followed by its own shift-invert block
 * (kp_solve.h, ew_kp_around) and certified by the inertia (see dispersion.h).
 *
 * The 8-band spectrum runs from the valence continuum through the gap into the conduction
 * continuum, so "the lowest eigenvalues" means nothing: the subbands are counted from a gap
 * reference E_ref outwards.  At k∥ = 0, E_ref is the midpoint between the lowest
 * single-band electron level and the highest single-band hole level of the same grid
 * (hamiltonian.h; these also start the iteration), or, where those overlap (a broken gap),
 * between the lowest conduction edge and the highest valence edge of the stack; the 8-band
 * count at E_ref splits the bound levels into the electron side (E_ref up to the electron
 * window top of bound.h) and the hole side (E_ref down to the hole window top).  At k∥ > 0
 * the same numbers are followed from a reference half way between the last k∥'s two sides.
 * Counts in the hole picture (λ = −E): with c = count(λ_ref), the electron side is the
 * eigenvalues c − m_e … c − 1 and the hole side c … c + m_h − 1; nothing lies between the two
 * sides (count(last electron cut) = count(first hole cut) = c). */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "bound.h"
#include "dispersion.h"
#include "eigen.h"
#include "error.h"
#include "kp_solve.h"
#include "schrodinger.h"

#define GUARD 8     /* extra vectors of each block */
#define MAX_E 8     /* electron-side eigenvalues followed: the 4 lowest subbands */
#define MAX_H 16    /* hole-side eigenvalues: the 8 highest subbands */

typedef struct {
  ew_grid *g;
  ew_kp_profile *prof;
  ew_kp_pencil *H;
  ew_kp_solver *se, *sh;  /* electron-side and hole-side blocks */
  double *ve, *vh;
  ew_eigenpairs sb[3];    /* single-band e, hh, lh levels of the grid at k∥ = 0 */
  size_t me, mh;
  double ref, sig_e, sig_h; /* hole-picture gap reference and the blocks' shifts */
} kwork;

static void kwork_free(kwork *w) {
  ew_grid_free(w->g);
  ew_kp_profile_free(w->prof);
  ew_kp_pencil_free(w->H);
  ew_kp_solver_free(w->se);
  ew_kp_solver_free(w->sh);
  free(w->ve);
  free(w->vh);
  for (int b = 0; b < 3; b++) ew_eigenpairs_free(&w->sb[b]);
}

/* single-band levels of band b below top (its positive-mass scale), with vectors */
static ew_status single_band(const ew_grid *g, ew_band b, double top, ew_eigenpairs *ep,
                             ew_error *err) {
  ew_pencil *pc = ew_pencil_build(g, b);
  if (!pc) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (8-band start)");
  double lo = pc->vmin - 1e-9 * (1.0 + fabs(pc->vmin));
  ew_status rc = top > lo ? ew_eigen_window(pc, lo, top, 1, ep, err) : EW_OK;
  ew_pencil_free(pc);
  return rc;
}

/* start columns: single-band vectors of the bands in comps (two components each) */
static void start_block(const kwork *w, ew_kp_solver *s, size_t m, const int *bands,
                        int nbands) {
  double complex *X = ew_kp_solver_start(s);
  size_t n = w->g->n, dim = n * 8, col = 0;
  for (int t = 0; t < nbands; t++) {
    int b = bands[t];
    const ew_eigenpairs *ep = &w->sb[b];
    int c0 = b == EW_BAND_E ? 6 : b == EW_BAND_HH ? 0 : 1, c1 = b == EW_BAND_E ? 7 : b == EW_BAND_HH ? 3 : 2;
    for (size_t j = 0; j < ep->count && col + 2 <= m; j++)
      for (int spin = 0; spin < 2; spin++, col++) {
        memset(X + col * dim, 0, dim * sizeof *X);
        for (size_t i = 0; i < n; i++) X[col * dim + i * 8 + (size_t)(spin ? c1 : c0)] = ep->vectors[j * n + i];
      }
  }
}

/* the gap reference and both sides' sizes at k∥ = 0 */
static ew_status sides(const ew_stack *st, kwork *w, double top_e, double top_h,
                       ew_error *err) {
  const ew_eigenpairs *e = &w->sb[EW_BAND_E], *hh = &w->sb[EW_BAND_HH], *lh = &w->sb[EW_BAND_LH];
  double e1 = e->count ? e->values[0] : INFINITY; /* energies, eV */
  double h1 = -fmin(hh->count ? hh->values[0] : INFINITY, lh->count ? lh->values[0] : INFINITY);
  double ref_e;
  if (isfinite(e1) && isfinite(h1) && e1 > h1) {
    ref_e = 0.5 * (e1 + h1);
  } else { /* overlapping single-band levels (broken gap): the edges' midpoint */
    double ec = INFINITY, ev = -INFINITY;
    for (size_t i = 0; i < w->prof->n; i++)
      ec = fmin(ec, w->prof->v_c[i]), ev = fmax(ev, fmax(w->prof->v_xy[i], w->prof->v_z[i]));
    ref_e = 0.5 * (ec + ev);
  }
  w->ref = -ref_e;
  ew_kp_inertia *in = ew_kp_inertia_create(8);
  if (!in) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (8-band count)");
  size_t ca = 0, cr = 0, cb = 0;
  ew_status rc = ew_kp_count_below(in, w->H, -top_e, &ca, err);
  if (!rc) rc = ew_kp_count_below(in, w->H, w->ref, &cr, err);
  if (!rc) rc = ew_kp_count_below(in, w->H, top_h, &cb, err);
  ew_kp_inertia_free(in);
  if (rc) return rc;
  w->me = (cr > ca ? cr - ca : 0) & ~(size_t)1;
  w->mh = (cb > cr ? cb - cr : 0) & ~(size_t)1;
  if (w->me > MAX_E) w->me = MAX_E;
  if (w->mh > MAX_H) w->mh = MAX_H;
  if (w->me + w->mh == 0)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "no subband is bound at k = 0 (8-band)");
  /* the shifts: the middle of each side's single-band levels (refined from k∥ > 0 on) */
  size_t ne = e->count < w->me / 2 ? e->count : w->me / 2;
  w->sig_e = ne ? -0.5 * (e->values[0] + e->values[ne - 1]) : w->ref - 0.1;
  /* the hole side: the (mh/2)-th highest of the merged heavy- and light-hole levels */
  size_t a = 0, b = 0;
  double last = -h1;
  for (size_t q = 0; q < w->mh / 2 && (a < hh->count || b < lh->count); q++) {
    int take_hh = b >= lh->count || (a < hh->count && hh->values[a] <= lh->values[b]);
    last = take_hh ? hh->values[a++] : lh->values[b++];
  }
  w->sig_h = isfinite(h1) ? 0.5 * (-h1 + last) : w->ref + 0.1;
  return EW_OK;
}

static ew_status kane_setup(ew_dispersion *d, const ew_stack *st, const ew_dispersion_options *o,
                            kwork *w, ew_error *err) {
  ew_options so;
  ew_options_default(&so);
  so.grid_step_nm = o->grid_step_nm;
  w->g = ew_schrodinger_grid(st, &so);
  if (!w->g) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p grid)");
  d->nodes = w->g->n;
  d->grid_step_nm = so.grid_step_nm > 0 ? so.grid_step_nm
                    : st->grid_step_nm > 0 ? st->grid_step_nm : EW_DEFAULT_STEP_NM;
  ew_status rc = ew_kp_profile_build(st, w->g, EW_KP_8BAND,
                                     o->symmetrised ? EW_KP_SYMMETRISED : EW_KP_BURT_FOREMAN,
                                     o->axial, &w->prof, err);
  if (rc) return rc;
  w->H = ew_kp_pencil_create(w->prof);
  if (!w->H) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p pencil)");
  ew_kp_pencil_fill(w->prof, 0.0, 0.0, w->H);
  double top_h = fmin(ew_bound_window_top(st, w->g, EW_BAND_HH),
                      ew_bound_window_top(st, w->g, EW_BAND_LH));
  double top_e = ew_bound_window_top(st, w->g, EW_BAND_E);
  d->window_eV = -top_h, d->window_e_eV = top_e;
  for (int b = 0; b < 3 && !rc; b++)
    rc = single_band(w->g, (ew_band)b, b == EW_BAND_E ? top_e : top_h, &w->sb[b], err);
  if (!rc) rc = sides(st, w, top_e, top_h, err);
  if (rc) return rc;
  d->gap_ref_eV = -w->ref;
  if (w->me) {
    w->se = ew_kp_solver_create(w->g->n, 8, w->me + GUARD);
    w->ve = malloc((w->me + GUARD) * sizeof *w->ve);
    if (!w->se || !w->ve) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p)");
    const int eb[1] = {EW_BAND_E};
    start_block(w, w->se, w->me, eb, 1);
  }
  if (w->mh) {
    w->sh = ew_kp_solver_create(w->g->n, 8, w->mh + GUARD);
    w->vh = malloc((w->mh + GUARD) * sizeof *w->vh);
    if (!w->sh || !w->vh) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p)");
    const int hb[2] = {EW_BAND_HH, EW_BAND_LH};
    start_block(w, w->sh, w->mh, hb, 2);
  }
  return EW_OK;
}

/* labels at k∥ = 0: the electron side e1 upwards (the block's values descend in energy),
 * then the hole side from the top down */
static void kane_labels(ew_dispersion *d, const kwork *w) {
  int seen[EW_DISP_CHARACTERS] = {0, 0, 0, 0};
  size_t dim = w->g->n * 8, ne = w->me / 2;
  for (size_t j = 0; j < ne; j++) {
    size_t col = ew_kp_window_column(w->se) + 2 * (ne - 1 - j);
    ew_dispersion_label_pair(d, j, ew_kp_solver_vectors(w->se) + col * dim, dim, 8, w->prof->w, seen);
  }
  for (size_t q = 0; q < w->mh / 2; q++) {
    size_t col = ew_kp_window_column(w->sh) + 2 * q;
    ew_dispersion_label_pair(d, ne + q, ew_kp_solver_vectors(w->sh) + col * dim, dim, 8, w->prof->w, seen);
  }
}

static void store(ew_dispersion *d, const kwork *w, size_t i) {
  size_t ne = w->me / 2;
  for (size_t j = 0; j < d->subbands; j++) {
    /* hole picture: E = −λ */
    double l0 = j < ne ? w->ve[2 * (ne - 1 - j)] : w->vh[2 * (j - ne)];
    double l1 = j < ne ? w->ve[2 * (ne - 1 - j) + 1] : w->vh[2 * (j - ne) + 1];
    d->branch_eV[(2 * j) * d->points + i] = -l0;
    d->branch_eV[(2 * j + 1) * d->points + i] = -l1;
    d->energy_eV[j * d->points + i] = -0.5 * (l0 + l1);
  }
}

static double mid(const double *v, size_t m) { return 0.5 * (v[0] + v[m - 1]); }

ew_status ew_dispersion_run_kane(ew_dispersion *d, const ew_stack *st,
                                 const ew_dispersion_options *o, ew_error *err) {
  kwork w;
  memset(&w, 0, sizeof w);
  ew_status rc = kane_setup(d, st, o, &w, err);
  if (!rc) {
    d->model = EW_KP_8BAND, d->direction = o->direction, d->axial = o->axial;
    d->points = o->points, d->subbands = (w.me + w.mh) / 2, d->electron_subbands = w.me / 2;
    if (ew_dispersion_alloc(d, d->points, d->subbands))
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (dispersion)");
  }
  double cx = o->direction == 100 ? 1.0 : sqrt(0.5), cy = o->direction == 100 ? 0.0 : sqrt(0.5);
  for (size_t i = 0; i < o->points && !rc; i++) {
    double k = o->kmax_inv_nm * (double)i / (double)(o->points - 1);
    d->k_inv_nm[i] = k;
    ew_kp_pencil_fill(w.prof, cx * k, cy * k, w.H);
    if (i > 0 && w.me && w.mh) w.ref = 0.5 * (w.ve[w.me - 1] + w.vh[0]);
    size_t ce = 0, ch = 0;
    if (w.se) {
      ew_kp_solver_set_tol(w.se, i ? 1e-6 : 1e-8);
      rc = ew_kp_around(w.se, w.H, w.ref, w.me, 0, w.sig_e, w.ve, &ce, err);
      if (!rc) w.sig_e = mid(w.ve, w.me);
    }
    if (!rc && w.sh) {
      ew_kp_solver_set_tol(w.sh, i ? 1e-6 : 1e-8);
      rc = ew_kp_around(w.sh, w.H, w.ref, 0, w.mh, w.sig_h, w.vh, &ch, err);
      if (!rc) w.sig_h = mid(w.vh, w.mh);
    }
    if (rc) break;
    d->certified[i] = ce + ch;
    if (i == 0) kane_labels(d, &w);
    store(d, &w, i);
  }
  size_t f[2] = {0, 0}, s[2] = {0, 0}, c[2] = {0, 0};
  if (w.se) ew_kp_solver_work(w.se, &f[0], &s[0], &c[0]);
  if (w.sh) ew_kp_solver_work(w.sh, &f[1], &s[1], &c[1]);
  d->factorizations = f[0] + f[1], d->solves = s[0] + s[1], d->counts = c[0] + c[1];
  kwork_free(&w);
  if (rc) ew_dispersion_clear(d);
  return rc;
}
