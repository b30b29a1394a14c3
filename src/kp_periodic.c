/* kp_periodic.c — the k·p pencil of one superlattice period with the Bloch condition and its
 * certified inertia count (see kp_periodic.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (every value here is
 * finite), as kp_inertia.c. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range")
#endif
#include "kp_periodic.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "miniband.h"

#define LWORK (64 * EW_KP_MAX_NB)

void ew_kpp_free(ew_kpp_pencil *p) {
  if (!p) return;
  ew_kp_profile_free(p->prof);
  ew_kp_pencil_free(p->H);
  free(p->wrap);
  ew_lapack_close(&p->lp);
  free(p);
}

size_t ew_kpp_dim(const ew_kpp_pencil *p) { return p->n * (size_t)p->nb; }

/* the half-cell-weighted mean over the face node's dual cell of a layer quantity (constant
 * in a plain layer; a graded layer's value at the half cell's middle) */
static void face_strain_dso(const ew_stack *st, double h0, double hn, double *sh, double *dso) {
  const ew_layer *f = &st->layers[0], *l = &st->layers[st->n_layers - 1];
  ew_bands bf, bl;
  ew_layer_bands_at(f, 0.25 * h0 / f->thickness_nm, &bf);
  ew_layer_bands_at(l, 1.0 - 0.25 * hn / l->thickness_nm, &bl);
  *sh = (h0 * bf.dE_shear_strain_eV + hn * bl.dE_shear_strain_eV) / (h0 + hn);
  *dso = (h0 * bf.Dso_eV + hn * bl.Dso_eV) / (h0 + hn);
}

/* the stack's profile fp (n nodes) renumbered onto the period (N = n + 1 nodes, node 0 the
 * face; cell c of the period is the stack's cell c − 1, cell 0 = cell N the face cell n) */
static ew_status periodic_profile(const ew_stack *st, const ew_grid *g, const ew_kp_profile *fp,
                                  ew_kp_profile **out, ew_error *err) {
  size_t n = fp->n, N = n + 1;
  int kane = fp->nb == 8;
  ew_kp_profile *p = calloc(1, sizeof *p);
  if (p) {
    p->h = malloc((N + 1) * sizeof *p->h);
    p->g_hh = malloc((N + 1) * sizeof *p->g_hh);
    p->g_lh = malloc((N + 1) * sizeof *p->g_lh);
    p->g3 = malloc((N + 1) * sizeof *p->g3);
    p->w = malloc(N * sizeof *p->w);
    p->v_xy = malloc(N * sizeof *p->v_xy);
    p->v_z = malloc(N * sizeof *p->v_z);
    p->dso = malloc(N * sizeof *p->dso);
    if (kane) {
      p->g_e = malloc((N + 1) * sizeof *p->g_e);
      p->ep = malloc((N + 1) * sizeof *p->ep);
      p->fk = malloc((N + 1) * sizeof *p->fk);
      p->v_c = malloc(N * sizeof *p->v_c);
    }
  }
  if (!p || !p->h || !p->g_hh || !p->g_lh || !p->g3 || !p->w || !p->v_xy || !p->v_z ||
      !p->dso || (kane && (!p->g_e || !p->ep || !p->fk || !p->v_c))) {
    ew_kp_profile_free(p);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (periodic k·p profile, n = %zu)", N);
  }
  p->n = N, p->nb = fp->nb, p->ordering = fp->ordering, p->axial = fp->axial;
  for (size_t c = 0; c <= N; c++) {
    size_t s = c == 0 ? n : c - 1;
    p->h[c] = fp->h[s], p->g_hh[c] = fp->g_hh[s], p->g_lh[c] = fp->g_lh[s], p->g3[c] = fp->g3[s];
    if (kane) p->g_e[c] = fp->g_e[s], p->ep[c] = fp->ep[s], p->fk[c] = fp->fk[s];
  }
  for (size_t j = 1; j < N; j++) {
    p->w[j] = fp->w[j - 1], p->v_xy[j] = fp->v_xy[j - 1], p->v_z[j] = fp->v_z[j - 1];
    p->dso[j] = fp->dso[j - 1];
    if (kane) p->v_c[j] = fp->v_c[j - 1];
  }
  /* the face node: potentials as the single-band Bloch pencil has them (miniband.c) */
  double h0 = g->h[0], hn = g->h[n], sh, dso;
  face_strain_dso(st, h0, hn, &sh, &dso);
  p->w[0] = 0.5 * (h0 + hn);
  p->v_xy[0] = -ew_mb_period_node_pot(st, EW_BAND_HH, h0, hn);
  if (fp->nb == 4) /* light hole at the single-band light-hole edge, as kp_hamiltonian.c */
    p->v_z[0] = 0.5 * (3.0 * -ew_mb_period_node_pot(st, EW_BAND_LH, h0, hn) - p->v_xy[0]);
  else
    p->v_z[0] = p->v_xy[0] + 3.0 * sh;
  p->dso[0] = dso;
  if (kane) p->v_c[0] = ew_mb_period_node_pot(st, EW_BAND_E, h0, hn);
  p->vmin = INFINITY;
  for (size_t j = 0; j < N; j++) p->vmin = fmin(p->vmin, -fmax(p->v_xy[j], p->v_z[j]));
  *out = p;
  return EW_OK;
}

ew_status ew_kpp_build(const ew_stack *st, const ew_grid *g, ew_kp_model model,
                       ew_kpp_pencil **out, ew_error *err) {
  *out = NULL;
  if (g->n < 2)
    return ew_fail(err, EW_ERR_INPUT, st->path, 0, "the period (%g nm) is thinner than two "
                   "grid steps", g->length_nm);
  ew_kp_profile *fp = NULL;
  ew_status rc = ew_kp_profile_build(st, g, model, EW_KP_BURT_FOREMAN, 0, &fp, err);
  if (rc) return rc;
  ew_kpp_pencil *p = calloc(1, sizeof *p);
  if (!p) {
    ew_kp_profile_free(fp);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (periodic k·p pencil)");
  }
  rc = periodic_profile(st, g, fp, &p->prof, err);
  ew_kp_profile_free(fp);
  if (rc) {
    ew_kpp_free(p);
    return rc;
  }
  p->n = p->prof->n, p->nb = p->prof->nb, p->period_nm = g->length_nm;
  if ((rc = ew_lapack_open(&p->lp, err)) != EW_OK) {
    ew_kpp_free(p);
    return rc;
  }
  p->H = ew_kp_pencil_create(p->prof);
  p->wrap = malloc((size_t)p->nb * (size_t)p->nb * sizeof *p->wrap);
  if (!p->H || !p->wrap) {
    ew_kpp_free(p);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (periodic k·p pencil)");
  }
  p->ec_max = -INFINITY, p->ev_min = INFINITY;
  for (size_t j = 0; j < p->n; j++) {
    if (p->nb == 8) p->ec_max = fmax(p->ec_max, p->prof->v_c[j]);
    p->ev_min = fmin(p->ev_min, fmax(p->prof->v_xy[j], p->prof->v_z[j]));
  }
  ew_kpp_fill(p, 0.0, 0.0);
  *out = p;
  return EW_OK;
}

static double l1(double complex z) { return fabs(creal(z)) + fabs(cimag(z)); }

void ew_kpp_fill(ew_kpp_pencil *p, double kx, double ky) {
  ew_kp_pencil_fill(p->prof, kx, ky, p->H);
  ew_kp_coupling_fill(p->prof, p->n, kx, ky, p->wrap);
  int nb = p->nb;
  double r0 = 0.0, r1 = 0.0; /* the corners' rows in the block Gershgorin bound */
  for (int a = 0; a < nb; a++) {
    double ra = 0.0, ca = 0.0;
    for (int b = 0; b < nb; b++) ra += l1(p->wrap[b * nb + a]), ca += l1(p->wrap[a * nb + b]);
    r1 = fmax(r1, ra), r0 = fmax(r0, ca);
  }
  p->norm = p->H->norm + fmax(r1 / p->prof->w[p->n - 1], r0 / p->prof->w[0]);
}

void ew_kpp_dense(const ew_kpp_pencil *p, double qd, double complex *out) {
  size_t N = p->n, nb = (size_t)p->nb, dim = N * nb, nb2 = nb * nb;
  double complex ph = cexp(I * qd);
  memset(out, 0, dim * dim * sizeof *out);
  for (size_t j = 0; j < N; j++)
    for (size_t b = 0; b < nb; b++)
      for (size_t a = 0; a < nb; a++) {
        out[(j * nb + b) * dim + j * nb + a] = p->H->diag[j * nb2 + b * nb + a];
        if (j + 1 < N) {
          double complex c = p->H->off[j * nb2 + b * nb + a]; /* H_{j,j+1}(a, b) */
          out[((j + 1) * nb + b) * dim + j * nb + a] = c;
          out[(j * nb + a) * dim + (j + 1) * nb + b] = conj(c);
        }
      }
  for (size_t b = 0; b < nb; b++)
    for (size_t a = 0; a < nb; a++) {
      double complex c = p->wrap[b * nb + a] * ph; /* H_{N−1,0}(a, b) */
      out[b * dim + (N - 1) * nb + a] = c;
      out[((N - 1) * nb + a) * dim + b] = conj(c);
    }
}

void ew_kpp_apply(const ew_kpp_pencil *p, double qd, const double complex *x, double complex *y) {
  ew_kp_pencil_apply(p->H, x, y);
  size_t N = p->n, nb = (size_t)p->nb, last = (N - 1) * nb;
  double complex ph = cexp(I * qd);
  for (size_t a = 0; a < nb; a++) {
    double complex u = 0, v = 0;
    for (size_t b = 0; b < nb; b++) {
      u += p->wrap[b * nb + a] * ph * x[b];               /* H_{N−1,0} x_0 */
      v += conj(p->wrap[a * nb + b] * ph) * x[last + b];  /* H_{0,N−1} x_{N−1} */
    }
    y[last + a] += u;
    y[a] += v;
  }
}

/* ---- the count ------------------------------------------------------------------------- */
/* negative eigenvalues of the Bunch–Kaufman block diagonal (lower, after zhetrf), as
 * kp_inertia.c reads it */
static size_t negatives(int nb, const double complex *D, const lapack_int *ipiv) {
  size_t neg = 0;
  for (int k = 0; k < nb; k++) {
    double d11 = creal(D[k * nb + k]);
    if (ipiv[k] > 0 || k + 1 == nb) {
      neg += d11 < 0.0;
      continue;
    }
    double d22 = creal(D[(k + 1) * nb + k + 1]);
    double complex d21 = D[k * nb + k + 1];
    double det = d11 * d22 - creal(d21 * conj(d21));
    neg += det < 0.0 ? 1 : d11 + d22 < 0.0 ? 2 : 0;
    k++;
  }
  return neg;
}

/* acc(a, b) = A(a, b) − Σ_q conj(L(q, a)) X(q, b): A − Lᴴ X, nb × nb column-major */
static void sub_hprod(int nb, const double complex *A, const double complex *L,
                      const double complex *X, double complex *out) {
  for (int b = 0; b < nb; b++)
    for (int a = 0; a < nb; a++) {
      double complex acc = A ? A[b * nb + a] : 0;
      for (int q = 0; q < nb; q++) acc -= conj(L[a * nb + q]) * X[b * nb + q];
      out[b * nb + a] = acc;
    }
}

ew_status ew_kpp_count_below(const ew_kpp_pencil *p, double qd, double sigma, size_t *count,
                             ew_error *err) {
  (void)err;
  int nb = p->nb;
  size_t N = p->n, nb2 = (size_t)nb * (size_t)nb, neg = 0;
  const ew_kp_pencil *H = p->H;
  const double *w = p->prof->w;
  double complex D[EW_KP_MAX_NB * EW_KP_MAX_NB], F[EW_KP_MAX_NB * EW_KP_MAX_NB];
  double complex S[EW_KP_MAX_NB * EW_KP_MAX_NB], X[2 * EW_KP_MAX_NB * EW_KP_MAX_NB];
  double complex T[EW_KP_MAX_NB * EW_KP_MAX_NB], work[LWORK];
  lapack_int ipiv[EW_KP_MAX_NB];
  double complex ph = cexp(I * qd);
  memcpy(S, H->diag + (N - 1) * nb2, nb2 * sizeof *S);
  memcpy(D, H->diag, nb2 * sizeof *D);
  for (int a = 0; a < nb; a++) S[a * nb + a] -= sigma * w[N - 1], D[a * nb + a] -= sigma * w[0];
  for (int b = 0; b < nb; b++) /* F_0 = H_{0,N−1} = (W e^{iqd})ᴴ */
    for (int a = 0; a < nb; a++) F[b * nb + a] = conj(p->wrap[a * nb + b] * ph);
  for (size_t j = 0; j + 1 < N; j++) {
    int more = j + 2 < N; /* node j + 1 is still in the open block */
    memcpy(X, F, nb2 * sizeof *X);
    if (more) memcpy(X + nb2, H->off + j * nb2, nb2 * sizeof *X);
    lapack_int info = p->lp.zhetrf(LAPACK_COL_MAJOR, 'L', nb, D, nb, ipiv, work, LWORK);
    if (info != 0)
      return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "periodic block LDLᴴ count at %.12g eV: "
                     "singular pivot block at node %zu", sigma, j);
    neg += negatives(nb, D, ipiv);
    p->lp.zhetrs(LAPACK_COL_MAJOR, 'L', nb, more ? 2 * nb : nb, D, nb, ipiv, X, nb);
    sub_hprod(nb, S, F, X, T); /* S −= F_jᴴ D_j⁻¹ F_j */
    memcpy(S, T, nb2 * sizeof *S);
    if (!more) break;
    const double complex *C = H->off + j * nb2;
    /* F_{j+1} = H_{j+1,N−1} − C_jᴴ D_j⁻¹ F_j; H_{j+1,N−1} = C_{N−2} when j + 1 = N − 2 */
    sub_hprod(nb, j + 3 == N ? H->off + (N - 2) * nb2 : NULL, C, X, F);
    sub_hprod(nb, H->diag + (j + 1) * nb2, C, X + nb2, D);
    for (int a = 0; a < nb; a++) D[a * nb + a] -= sigma * w[j + 1];
  }
  lapack_int info = p->lp.zhetrf(LAPACK_COL_MAJOR, 'L', nb, S, nb, ipiv, work, LWORK);
  if (info != 0)
    return ew_fail(err, EW_ERR_NUMERIC, NULL, 0, "periodic block LDLᴴ count at %.12g eV: "
                   "singular corner block", sigma);
  *count = neg + negatives(nb, S, ipiv);
  return EW_OK;
}
