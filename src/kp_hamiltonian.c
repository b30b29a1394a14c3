/* kp_hamiltonian.c — the multiband valence-band pencil (see kp_hamiltonian.h). */
/* Complex products without the C99 Annex G infinity/NaN recovery (a library call per
 * product otherwise): every value here is finite.  GCC's -fcx-limited-range, for this file. */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("cx-limited-range", "unroll-loops")
#endif
#include "kp_hamiltonian.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"

void ew_kp_basis(double complex U[36]) {
  /* Clebsch–Gordan combinations of |l = 1, m> ⊗ spin with |1,±1> = ∓(X ± iY)/√2, |1,0> = Z
   * (any consistent phases give the same spectrum); rows X↑ Y↑ Z↑ X↓ Y↓ Z↓ */
  const double s2 = 1.0 / sqrt(2.0), s6 = 1.0 / sqrt(6.0), s3 = 1.0 / sqrt(3.0);
  for (int k = 0; k < 36; k++) U[k] = 0;
#define AT(row, col) U[(col) * 6 + (row)]
  AT(0, 0) = -s2, AT(1, 0) = -I * s2;                          /* |3/2,+3/2> */
  AT(3, 1) = -s6, AT(4, 1) = -I * s6, AT(2, 1) = 2.0 * s6;     /* |3/2,+1/2> */
  AT(0, 2) = s6, AT(1, 2) = -I * s6, AT(5, 2) = 2.0 * s6;      /* |3/2,−1/2> */
  AT(3, 3) = s2, AT(4, 3) = -I * s2;                           /* |3/2,−3/2> */
  AT(3, 4) = s3, AT(4, 4) = I * s3, AT(2, 4) = s3;             /* |1/2,+1/2> */
  AT(0, 5) = s3, AT(1, 5) = -I * s3, AT(5, 5) = -s3;           /* |1/2,−1/2> */
#undef AT
}

void ew_kp_profile_free(ew_kp_profile *p) {
  if (!p) return;
  free(p->h);
  free(p->g_hh);
  free(p->g_lh);
  free(p->g3);
  free(p->w);
  free(p->v_xy);
  free(p->v_z);
  free(p->dso);
  free(p->g_e);
  free(p->ep);
  free(p->fk);
  free(p->v_c);
  free(p);
}

/* bands of the stack at z (the layer holding z; graded layers at their local fraction) */
static void bands_at_z(const ew_stack *st, double z, size_t *k, ew_bands *out) {
  while (*k + 1 < st->n_layers && z >= st->layers[*k + 1].z_start_nm) ++*k;
  const ew_layer *ly = &st->layers[*k];
  ew_layer_bands_at(ly, (z - ly->z_start_nm) / ly->thickness_nm, out);
}

/* per cell: γ's, the shear strain and Δso of the cell's material (cells of a layered grid lie
 * inside one layer; a cell across an interface takes its midpoint's) */
static ew_status cell_params(const ew_stack *st, const ew_grid *g, ew_kp_profile *p,
                             double *sh, double *dso, int need_dso, ew_error *err) {
  size_t n = g->n, k = 0;
  for (size_t c = 0; c <= n; c++) {
    double a = c == 0 ? 0.0 : g->z[c - 1], b = c == n ? g->length_nm : g->z[c];
    ew_bands bb;
    bands_at_z(st, 0.5 * (a + b), &k, &bb);
    p->h[c] = g->h[c];
    p->g_hh[c] = g->h[c] / g->cell_mass[EW_BAND_HH][c];
    p->g_lh[c] = g->h[c] / g->cell_mass[EW_BAND_LH][c];
    double g2 = 0.25 * (p->g_lh[c] - p->g_hh[c]);
    p->g3[c] = bb.gamma3 > 0.0 ? bb.gamma3 : g2;
    sh[c] = bb.dE_shear_strain_eV;
    dso[c] = bb.Dso_eV;
    if (need_dso && !(bb.Dso_eV > 0.0))
      return ew_fail(err, EW_ERR_INPUT, st->path, st->layers[k].line,
                     "layer '%s' (%s) has no spin-orbit splitting Delta_so: the 6- and 8-band "
                     "models need it (use the 4-band model)", st->layers[k].name,
                     st->layers[k].material);
  }
  return EW_OK;
}

/* 8-band: the electron's cell terms, the Foreman-rescaled Kane energy and the remote-band
 * subtraction from γ2 (through g_lh) and γ3 (kp_hamiltonian.h) */
static ew_status kane_params(const ew_stack *st, const ew_grid *g, ew_kp_profile *p,
                             ew_error *err) {
  size_t n = g->n, k = 0;
  p->g_e = malloc((n + 1) * sizeof *p->g_e);
  p->ep = malloc((n + 1) * sizeof *p->ep);
  p->fk = malloc((n + 1) * sizeof *p->fk);
  p->v_c = malloc(n * sizeof *p->v_c);
  if (!p->g_e || !p->ep || !p->fk || !p->v_c)
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (8-band profile, n = %zu)", n);
  for (size_t c = 0; c <= n; c++) {
    double a = c == 0 ? 0.0 : g->z[c - 1], b = c == n ? g->length_nm : g->z[c];
    ew_bands bb;
    bands_at_z(st, 0.5 * (a + b), &k, &bb);
    double eg = bb.Eg_G_eV, dso = bb.Dso_eV;
    if (!(eg > 0.0))
      return ew_fail(err, EW_ERR_INPUT, st->path, st->layers[k].line, "layer '%s' (%s): the "
                     "8-band model needs a positive Gamma gap (here %g eV)", st->layers[k].name,
                     st->layers[k].material, eg);
    p->g_e[c] = g->h[c] / g->cell_mass[EW_BAND_E][c];
    p->fk[c] = (eg + 2.0 * dso / 3.0) / (eg * (eg + dso));
    /* Foreman's rescaling: S = 1/me − Ep fk not below 1; and the valence coefficients
       γ1', γ1' + 2γ2', γ3' kept at >= 1/5 of their values (kp_hamiltonian.h) */
    double g1 = 0.5 * (p->g_hh[c] + p->g_lh[c]);
    double ep_v = 0.8 * eg * fmin(3.0 * g1, fmin(1.5 * p->g_lh[c], 6.0 * p->g3[c]));
    double ep = fmin(fmin(bb.Ep_eV > 0.0 ? bb.Ep_eV : 0.0, (p->g_e[c] - 1.0) / p->fk[c]), ep_v);
    p->ep[c] = ep > 0.0 ? ep : 0.0;
    p->g_lh[c] -= 2.0 * p->ep[c] / (3.0 * eg); /* γ1' + 2γ2' */
    p->g3[c] -= p->ep[c] / (6.0 * eg);
  }
  for (size_t i = 0; i < n; i++) p->v_c[i] = g->pot[EW_BAND_E][i];
  return EW_OK;
}

ew_status ew_kp_profile_build(const ew_stack *st, const ew_grid *g, ew_kp_model model,
                              ew_kp_ordering ordering, int axial, ew_kp_profile **out,
                              ew_error *err) {
  *out = NULL;
  size_t n = g->n;
  ew_kp_profile *p = calloc(1, sizeof *p);
  double *sh = malloc((n + 1) * sizeof *sh), *dc = malloc((n + 1) * sizeof *dc);
  if (p) {
    p->h = malloc((n + 1) * sizeof *p->h);
    p->g_hh = malloc((n + 1) * sizeof *p->g_hh);
    p->g_lh = malloc((n + 1) * sizeof *p->g_lh);
    p->g3 = malloc((n + 1) * sizeof *p->g3);
    p->w = malloc(n * sizeof *p->w);
    p->v_xy = malloc(n * sizeof *p->v_xy);
    p->v_z = malloc(n * sizeof *p->v_z);
    p->dso = malloc(n * sizeof *p->dso);
  }
  if (!p || !sh || !dc || !p->h || !p->g_hh || !p->g_lh || !p->g3 || !p->w || !p->v_xy ||
      !p->v_z || !p->dso) {
    free(sh);
    free(dc);
    ew_kp_profile_free(p);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (k·p profile, n = %zu)", n);
  }
  p->n = n;
  p->nb = (int)model;
  p->ordering = ordering;
  p->axial = axial;
  ew_status rc = cell_params(st, g, p, sh, dc, model != EW_KP_4BAND, err);
  if (rc == EW_OK && model == EW_KP_8BAND) rc = kane_params(st, g, p, err);
  p->vmin = INFINITY;
  for (size_t i = 0; i < n && rc == EW_OK; i++) {
    double wl = 0.5 * g->h[i], wr = 0.5 * g->h[i + 1];
    p->w[i] = g->w[i];
    double sh_i = (wl * sh[i] + wr * sh[i + 1]) / (wl + wr);
    p->dso[i] = (wl * dc[i] + wr * dc[i + 1]) / (wl + wr);
    p->v_xy[i] = -g->pot[EW_BAND_HH][i]; /* the heavy-hole edge (electron sign) */
    if (model == EW_KP_4BAND) /* light hole at the grid's edge: (2 v_z + v_xy)/3 = Ev_lh */
      p->v_z[i] = 0.5 * (3.0 * -g->pot[EW_BAND_LH][i] - p->v_xy[i]);
    else /* δEv,hyd + 2δE_sh against the heavy hole's δEv,hyd − δE_sh */
      p->v_z[i] = p->v_xy[i] + 3.0 * sh_i;
    double top = fmax(p->v_xy[i], p->v_z[i]);
    if (-top < p->vmin) p->vmin = -top;
  }
  free(sh);
  free(dc);
  if (rc != EW_OK) {
    ew_kp_profile_free(p);
    return rc;
  }
  *out = p;
  return EW_OK;
}

ew_kp_pencil *ew_kp_pencil_create(const ew_kp_profile *p) {
  ew_kp_pencil *H = calloc(1, sizeof *H);
  if (!H) return NULL;
  size_t nb2 = (size_t)p->nb * (size_t)p->nb;
  H->n = p->n;
  H->nb = p->nb;
  H->w = p->w;
  H->diag = malloc(p->n * nb2 * sizeof *H->diag);
  H->off = malloc((p->n > 1 ? p->n - 1 : 1) * nb2 * sizeof *H->off);
  if (!H->diag || !H->off) {
    ew_kp_pencil_free(H);
    return NULL;
  }
  return H;
}

void ew_kp_pencil_free(ew_kp_pencil *H) {
  if (!H) return;
  free(H->diag);
  free(H->off);
  free(H);
}

/* The in-plane (kz-free) part of a cell, electron sign, units K: 3×3 row-major into A. */
static void inplane(const ew_kp_profile *p, size_t c, double kx, double ky, double A[9]) {
  double g1 = 0.5 * (p->g_hh[c] + p->g_lh[c]), g2 = 0.25 * (p->g_lh[c] - p->g_hh[c]);
  double g3 = p->g3[c];
  double Lt = -g1 - 4.0 * g2, Mt = -g1 + 2.0 * g2;
  double kk = kx * kx + ky * ky, d = kx * kx - ky * ky;
  /* Lt kx² + Mt ky² = (Lt + Mt)/2 k² + (Lt − Mt)/2 (kx² − ky²), (Lt − Mt)/2 = −3γ2 */
  double ga = p->axial ? 0.5 * (g2 + g3) : g2, gb = p->axial ? 0.5 * (g2 + g3) : g3;
  memset(A, 0, 9 * sizeof *A);
  A[0] = 0.5 * (Lt + Mt) * kk - 3.0 * ga * d;
  A[4] = 0.5 * (Lt + Mt) * kk + 3.0 * ga * d;
  A[8] = Mt * kk;
  A[1] = A[3] = -6.0 * gb * kx * ky;
}

/* N+ and N− of a cell (kp_hamiltonian.h: Burt–Foreman or symmetrised), units K */
static void n_split(const ew_kp_profile *p, size_t c, double *np, double *nm) {
  double N = -6.0 * p->g3[c], Mt = -p->g_hh[c];
  if (p->ordering == EW_KP_SYMMETRISED) {
    *np = *nm = 0.5 * N;
  } else {
    *nm = Mt - 1.0; /* N− = M − ħ²/2m0 (Foreman) */
    *np = N - *nm;
  }
}

/* The valence coupling Cm (units K, electron sign, 3×3 row-major per spin) between the nodes
 * on either side of cell c (c − 1 and c). */
static void valence_coupling(const ew_kp_profile *p, size_t c, double kx, double ky,
                             double complex Cm[9]) {
  double np, nm, hc = p->h[c];
  for (int q = 0; q < 9; q++) Cm[q] = 0;
  n_split(p, c, &np, &nm);
  double Mt = -p->g_hh[c], Lt = 0.5 * (p->g_hh[c] - 3.0 * p->g_lh[c]);
  Cm[0] = -Mt / hc, Cm[4] = -Mt / hc, Cm[8] = -Lt / hc;
  /* −(i/2)(F + Fᵀ): xz and zx entries kx (N+ + N−) = kx N */
  Cm[2] = Cm[6] = -0.5 * I * kx * (np + nm);
  Cm[5] = Cm[7] = -0.5 * I * ky * (np + nm);
}

/* The valence node block M (units K, electron sign, 3×3 row-major per spin: the box over the
 * dual cell of node i) and the coupling Cm through cell i + 1 (when i + 1 < n). */
static void valence_blocks(const ew_kp_profile *p, size_t i, double kx, double ky,
                           double complex M[9], double complex Cm[9]) {
  for (int q = 0; q < 9; q++) M[q] = 0, Cm[q] = 0;
  for (int side = 0; side < 2; side++) { /* left cell i, right cell i + 1 */
    size_t c = i + (size_t)side;
    double A[9], np, nm, hc = p->h[c];
    inplane(p, c, kx, ky, A);
    n_split(p, c, &np, &nm);
    double Mt = -p->g_hh[c], Lt = 0.5 * (p->g_hh[c] - 3.0 * p->g_lh[c]);
    for (int q = 0; q < 9; q++) M[q] += 0.5 * hc * A[q];
    M[0] += Mt / hc, M[4] += Mt / hc, M[8] += Lt / hc;
    /* (i/2)(F − Fᵀ) of the right cell minus that of the left: F_xz = kx N+, F_zx = kx N− */
    double sgn = side ? 0.5 : -0.5, dx = kx * (np - nm), dy = ky * (np - nm);
    M[2] += sgn * I * dx, M[6] -= sgn * I * dx;
    M[5] += sgn * I * dy, M[7] -= sgn * I * dy;
  }
  if (i + 1 < p->n) valence_coupling(p, i + 1, kx, ky, Cm);
}

/* 8-band: the conduction row's part of the coupling through cell c (C4 4×4 row-major, units
 * K; the valence part already in place) */
static void kane_coupling(const ew_kp_profile *p, size_t c, double complex C4[16]) {
  const double K = EW_HB2M0_EVNM2;
  double hc = p->h[c], S = p->g_e[c] - p->ep[c] * p->fk[c], pk = sqrt(p->ep[c] / K);
  C4[0] = -S / hc;
  C4[3] = 0.5 * pk, C4[12] = -0.5 * pk; /* −(i/2)(F + F†) */
}

/* 8-band: the orbital S, X, Y, Z blocks (4×4 row-major, units K): the valence blocks, the
 * electron's S k² and the Kane terms i P k (kp_hamiltonian.h), P/K = √(Ep/K) */
static void kane_blocks(const ew_kp_profile *p, size_t i, double kx, double ky,
                        const double complex M[9], const double complex Cm[9],
                        double complex M4[16], double complex C4[16]) {
  const double K = EW_HB2M0_EVNM2;
  for (int q = 0; q < 16; q++) M4[q] = 0, C4[q] = 0;
  for (int r = 0; r < 3; r++)
    for (int q = 0; q < 3; q++) M4[(r + 1) * 4 + q + 1] = M[r * 3 + q], C4[(r + 1) * 4 + q + 1] = Cm[r * 3 + q];
  for (int side = 0; side < 2; side++) {
    size_t c = i + (size_t)side;
    double hc = p->h[c], S = p->g_e[c] - p->ep[c] * p->fk[c], pk = sqrt(p->ep[c] / K);
    M4[0] += 0.5 * hc * S * (kx * kx + ky * ky) + S / hc;
    M4[1] += 0.5 * hc * I * pk * kx, M4[4] -= 0.5 * hc * I * pk * kx;
    M4[2] += 0.5 * hc * I * pk * ky, M4[8] -= 0.5 * hc * I * pk * ky;
    /* (i/2)(F − F†) right minus left, F_SZ = i P: −P/2 (Burt–Foreman); 0 symmetrised */
    if (p->ordering == EW_KP_BURT_FOREMAN) {
      double sgn = side ? 0.5 : -0.5;
      M4[3] -= sgn * pk, M4[12] -= sgn * pk;
    }
  }
  if (i + 1 < p->n) kane_coupling(p, i + 1, C4);
}

/* The basis change U† (1₂ ⊗ M) U as a list of its non-zero terms J_ab += c · M_rq, c =
 * conj(U_{sp r, a}) U_{sp q, b} (U is sparse: 14 of 36 entries), built once per fill: the
 * transformation then costs one product per term, not a dense triple product per node. */
typedef struct {
  int ab, rq; /* J index b·nb + a; M index r·no + q */
  double complex c;
} jterm;
#define MAX_JTERMS 1024

/* U: ld × nb column-major (ld = 2 no rows: orbitals ⊗ spin) */
static int j_terms(const double complex *U, int ld, int no, int nb, jterm *t) {
  int n = 0;
  for (int b = 0; b < nb; b++)
    for (int a = 0; a < nb; a++)
      for (int sp = 0; sp < 2; sp++)
        for (int r = 0; r < no; r++)
          for (int q = 0; q < no; q++) {
            double complex c = conj(U[a * ld + no * sp + r]) * U[b * ld + no * sp + q];
            if (c != 0 && n < MAX_JTERMS) t[n].ab = b * nb + a, t[n].rq = r * no + q, t[n++].c = c;
          }
  return n;
}

static void apply_terms(const jterm *t, int n, const double complex *M, double s,
                        double complex *J) {
  for (int k = 0; k < n; k++) J[t[k].ab] += s * (t[k].c * M[t[k].rq]);
}

/* U8: ew_kp_basis on X, Y, Z and the identity on S↑, S↓ (components 6, 7); rows
 * S↑ X↑ Y↑ Z↑ S↓ X↓ Y↓ Z↓ */
static void basis8(const double complex U[36], double complex U8[64]) {
  for (int k = 0; k < 64; k++) U8[k] = 0;
  for (int b = 0; b < 6; b++)
    for (int sp = 0; sp < 2; sp++)
      for (int q = 0; q < 3; q++) U8[b * 8 + 4 * sp + 1 + q] = U[b * 6 + 3 * sp + q];
  U8[6 * 8 + 0] = 1, U8[7 * 8 + 4] = 1;
}

static double l1(double complex z) { return fabs(creal(z)) + fabs(cimag(z)); }

void ew_kp_pencil_fill(const ew_kp_profile *p, double kx, double ky, ew_kp_pencil *H) {
  double complex U[36], U8[64];
  ew_kp_basis(U);
  basis8(U, U8);
  jterm terms[MAX_JTERMS];
  const double K = EW_HB2M0_EVNM2;
  size_t n = p->n;
  int nb = p->nb;
  int nt = nb == 8 ? j_terms(U8, 8, 4, 8, terms) : j_terms(U, 6, 3, nb, terms);
  size_t nb2 = (size_t)nb * (size_t)nb;
  double norm = 0.0;
  for (size_t i = 0; i < n; i++) {
    double complex M[9], Cm[9];
    valence_blocks(p, i, kx, ky, M, Cm);
    double complex *D = H->diag + i * nb2, *C = i + 1 < n ? H->off + i * nb2 : NULL;
    memset(D, 0, nb2 * sizeof *D);
    if (C) memset(C, 0, nb2 * sizeof *C);
    if (nb == 8) {
      double complex M4[16], C4[16];
      kane_blocks(p, i, kx, ky, M, Cm, M4, C4);
      apply_terms(terms, nt, M4, -K, D); /* hole picture: −H */
      double complex V4[16] = {0};
      V4[0] = p->v_c[i], V4[5] = V4[10] = p->v_xy[i], V4[15] = p->v_z[i];
      apply_terms(terms, nt, V4, -p->w[i], D);
      if (C) apply_terms(terms, nt, C4, -K, C);
    } else {
      apply_terms(terms, nt, M, -K, D); /* hole picture: −H */
      double complex V[9] = {p->v_xy[i], 0, 0, 0, p->v_xy[i], 0, 0, 0, p->v_z[i]};
      apply_terms(terms, nt, V, -p->w[i], D);
      if (C) apply_terms(terms, nt, Cm, -K, C);
    }
    if (nb >= 6) D[4 * nb + 4] += p->w[i] * p->dso[i], D[5 * nb + 5] += p->w[i] * p->dso[i];
    double row = 0.0; /* block Gershgorin of the standard form (|re| + |im| >= |z|: still a
                           bound, without a hypot call per entry) */
    for (int a = 0; a < nb; a++) {
      double r = 0.0;
      for (int b = 0; b < nb; b++) {
        r += l1(D[b * nb + a]);
        if (i + 1 < n) r += l1(H->off[i * nb2 + (size_t)b * nb + a]);
        if (i > 0) r += l1(H->off[(i - 1) * nb2 + (size_t)a * nb + b]);
      }
      if (r > row) row = r;
    }
    if (row / p->w[i] > norm) norm = row / p->w[i];
  }
  H->norm = norm;
}

/* y = H x with the block size nb a compile-time constant in each instance below (the small
 * loops then unroll: ~2× fewer instructions than one loop for every nb) */
static inline void apply_nb(const ew_kp_pencil *H, const double complex *x, double complex *y,
                            const int nb) {
  size_t n = H->n, nb2 = (size_t)nb * (size_t)nb;
  for (size_t i = 0; i < n; i++) {
    const double complex *D = H->diag + i * nb2, *xi = x + i * (size_t)nb;
    double complex acc[EW_KP_MAX_NB];
    for (int a = 0; a < nb; a++) acc[a] = 0;
    for (int b = 0; b < nb; b++)
      for (int a = 0; a < nb; a++) acc[a] += D[b * nb + a] * xi[b];
    if (i + 1 < n) {
      const double complex *C = H->off + i * nb2, *xn = xi + nb;
      for (int b = 0; b < nb; b++)
        for (int a = 0; a < nb; a++) acc[a] += C[b * nb + a] * xn[b];
    }
    if (i > 0) { /* C_{i−1}ᴴ */
      const double complex *C = H->off + (i - 1) * nb2, *xp = xi - nb;
      for (int a = 0; a < nb; a++)
        for (int b = 0; b < nb; b++) acc[a] += conj(C[a * nb + b]) * xp[b];
    }
    for (int a = 0; a < nb; a++) y[i * (size_t)nb + (size_t)a] = acc[a];
  }
}

void ew_kp_pencil_apply(const ew_kp_pencil *H, const double complex *x, double complex *y) {
  switch (H->nb) {
  case 4: apply_nb(H, x, y, 4); break;
  case 6: apply_nb(H, x, y, 6); break;
  default: apply_nb(H, x, y, 8); break;
  }
}

void ew_kp_coupling_fill(const ew_kp_profile *p, size_t c, double kx, double ky,
                         double complex *C) {
  double complex U[36], U8[64], Cm[9];
  ew_kp_basis(U);
  basis8(U, U8);
  jterm terms[MAX_JTERMS];
  int nb = p->nb;
  int nt = nb == 8 ? j_terms(U8, 8, 4, 8, terms) : j_terms(U, 6, 3, nb, terms);
  memset(C, 0, (size_t)nb * (size_t)nb * sizeof *C);
  valence_coupling(p, c, kx, ky, Cm);
  if (nb == 8) {
    double complex C4[16] = {0};
    for (int r = 0; r < 3; r++)
      for (int q = 0; q < 3; q++) C4[(r + 1) * 4 + q + 1] = Cm[r * 3 + q];
    kane_coupling(p, c, C4);
    apply_terms(terms, nt, C4, -EW_HB2M0_EVNM2, C);
  } else {
    apply_terms(terms, nt, Cm, -EW_HB2M0_EVNM2, C);
  }
}
