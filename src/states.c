/* states.c — from eigenpairs to the states of a result (see states.h).
 *
 * The scheme is second order, so Richardson extrapolation E = E_h + (E_h − E_2h)/3 removes
 * the leading error and |E_h − E_2h|/3, the size of that correction, is reported as the
 * error estimate (L. F. Richardson, Phil. Trans. R. Soc. A 210, 307 (1911)). */
#include "states.h"

#include <math.h>
#include <stdatomic.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "bound.h"
#include "error.h"
#include "helper_thread.h"
#include "nonparabolic.h"

/* +1 or −1: the sign that makes psi follow the convention (states.h) */
static double sign_of(const double *psi, size_t n) {
  double big = 0.0;
  for (size_t i = 0; i < n; i++) big = fmax(big, fabs(psi[i]));
  size_t first = 0;
  while (first < n && fabs(psi[first]) < (1.0 - EW_SIGN_TIE_REL) * big) first++;
  return first < n && psi[first] < 0 ? -1.0 : 1.0;
}

void ew_fix_sign(double *psi, size_t n) {
  if (sign_of(psi, n) < 0)
    for (size_t i = 0; i < n; i++) psi[i] = -psi[i];
}

/* dst = the vector src with the convention's sign (one pass over it to copy) */
static void copy_signed(double *dst, const double *src, size_t n) {
  if (sign_of(src, n) > 0) memcpy(dst, src, n * sizeof *dst);
  else
    for (size_t i = 0; i < n; i++) dst[i] = -src[i];
}

/* The fine value e extrapolated with the coarse value ec (have_ec: there is one) into
 * q->error_eV (−1: no estimate); returns the energy on the positive-mass scale.  A coarse
 * value that differs from the fine one by more than EW_RICHARDSON_MAX_REL of the level's
 * height above the potential minimum vmin (a state whose oscillations the grid of step 2h
 * cannot follow: aliasing, not an O(h²) error; resolved levels differ by ~1e-4 of it) gives
 * no estimate and leaves the fine value as it is. */
static double richardson(ew_result *r, ew_state *q, double e, int have_ec, double ec,
                         double vmin) {
  q->error_eV = -1.0;
  if (!r->opt.error_estimate || !have_ec) return e;
  if (!(fabs(e - ec) <= EW_RICHARDSON_MAX_REL * (e - vmin))) {
    r->unestimated++;
    return e;
  }
  double corr = (e - ec) / 3.0;
  q->error_eV = fabs(corr);
  return e + corr;
}

/* where the state lives: the layer of largest probability (prob: scratch of n_layers) */
static void locate(const ew_result *r, ew_state *q, const double *psi, double *prob) {
  const ew_stack *st = r->stack;
  const ew_grid *g = r->grid;
  memset(prob, 0, st->n_layers * sizeof *prob);
  /* a layer's sum kept in a register over its run of nodes (the same additions in the same
     order as prob[layer[i]] += …, without a store and reload at every node) */
  size_t cur = g->n ? g->layer[0] : 0;
  double acc = 0.0;
  for (size_t i = 0; i < g->n; i++) {
    if (g->layer[i] != cur) prob[cur] = acc, cur = g->layer[i], acc = prob[cur];
    acc += g->w[i] * psi[i] * psi[i];
  }
  if (g->n) prob[cur] = acc;
  size_t best = 0;
  for (size_t k = 1; k < st->n_layers; k++)
    if (prob[k] > prob[best]) best = k;
  q->layer = best;
  q->layer_probability = prob[best];
  q->edge_eV = ew_layer_edge(&st->layers[best], q->band);
  q->depth_eV = fabs(q->energy_eV - q->edge_eV);
}

/* in-plane masses of the count states of band b from state first on (see nonparabolic.h) */
static int inplane_masses(ew_result *r, ew_band b, size_t first, size_t count) {
  double *E = malloc((count ? count : 1) * 2 * sizeof *E), *m = E + (count ? count : 1);
  if (!E) return 0;
  for (size_t j = 0; j < count; j++) E[j] = r->states[first + j].energy_eV;
  int ok = ew_inplane_masses(r->stack, r->grid, b, r->nonparabolic, count, E,
                             r->psi + first * r->grid->n, m, r->mean_inv_mass + first);
  for (size_t j = 0; ok && j < count; j++) r->states[first + j].inplane_mass = m[j];
  free(E);
  return ok;
}

/* Which eigenvectors of band b are kept (keep[j]): in a field, the box states of the tilted
 * continuum are dropped (bound.h). */
static void keep_flags(ew_result *r, ew_band b, const ew_eigenpairs *fine, char *keep) {
  const ew_stack *st = r->stack;
  for (size_t j = 0; j < fine->count; j++) {
    keep[j] = !(st->field_kV_cm != 0.0 &&
                ew_bound_inner_probability(st, r->grid, fine->vectors + j * r->grid->n) <
                    EW_BOUND_INNER_MIN);
    if (!keep[j]) r->dropped[b]++;
  }
}

/* The heap pages a shrink or free gave back.  The CLI keeps freed arrays in its heap
 * (mallopt in cli.c), where a shrunk block's tail would stay resident; malloc_trim returns
 * the free pages inside the heap to the system (glibc; elsewhere large blocks are mapped
 * and the shrink itself returns them). */
static void release_pages(void) {
#ifdef __GLIBC__
  malloc_trim(0);
#endif
}

#define RELEASE_BYTES ((size_t)8 << 20) /* give back copied vectors every 8 MiB */

/* Moves the kept vectors of band b into r->psi from state s0 on, each with the convention's
 * sign, without holding a second copy of the band: copied from its last vector down while
 * the band's own block is shrunk behind the copy, then freed (fine->vectors becomes NULL).
 * Returns the vectors kept. */
static size_t place_vectors(ew_result *r, ew_eigenpairs *fine, const char *keep, size_t s0) {
  size_t n = r->grid->n, kept = 0, vec = n * sizeof(double);
  for (size_t j = 0; j < fine->count; j++) kept += keep[j] != 0;
  size_t d = s0 + kept, since = 0;
  int big = fine->count * vec >= RELEASE_BYTES;
  for (size_t j = fine->count; j-- > 0;) {
    if (keep[j]) copy_signed(r->psi + --d * n, fine->vectors + j * n, n);
    if (big && (since += vec) >= RELEASE_BYTES && j > 0) {
      double *t = realloc(fine->vectors, j * vec);
      if (t) fine->vectors = t; /* a failed shrink only keeps the memory longer */
      release_pages();
      since = 0;
    }
  }
  free(fine->vectors);
  fine->vectors = NULL;
  if (big) release_pages();
  return kept;
}

/* The bands whose vectors still have to be copied into r->psi, as a queue for this thread
 * and a helper (disjoint destinations; each band shrinks its own block). */
typedef struct {
  ew_result *r;
  ew_eigenpairs *fine;
  const char *keep;
  size_t j0[EW_BAND_COUNT], s0[EW_BAND_COUNT];
  int todo[EW_BAND_COUNT], n_todo;
  size_t in_place; /* the electrons' vectors already in r->psi (grown block): only signed */
  atomic_int next;
} place_queue;

static void *place_bands(void *arg) {
  place_queue *q = arg;
  size_t n = q->r->grid->n;
  for (int k; (k = atomic_fetch_add(&q->next, 1)) < q->n_todo;) {
    int b = q->todo[k];
    if (b == 0 && q->in_place)
      for (size_t j = 0; j < q->in_place; j++) ew_fix_sign(q->r->psi + j * n, n);
    else place_vectors(q->r, &q->fine[b], q->keep + q->j0[b], q->s0[b]);
  }
  return NULL;
}

/* Below this size of all vectors the bands are copied on the calling thread alone (1 MiB
 * takes ~0.3 ms to copy, a helper ~0.1 ms to start on the other CPU). */
#define PLACE_SPLIT_MIN_BYTES ((size_t)1 << 20)

/* r->psi (total vectors of n) with every band's kept vectors in band order, each with the
 * convention's sign; every fine[b].vectors NULL after.  When the electrons come first with
 * none dropped, their block itself is grown into r->psi (glibc: mremap of the mapping, no
 * copy; 135 of the 100-period superlattice's 435 vectors) and signed in place; the other
 * bands are copied; the bands' parts are shared with a helper when the vectors are large.
 * 0 when out of memory (r->psi NULL; the blocks not yet moved are left to the caller). */
static int place_all(ew_result *r, ew_eigenpairs fine[EW_BAND_COUNT], const char *keep,
                     size_t total) {
  size_t n = r->grid->n, bytes = (total ? total : 1) * n * sizeof *r->psi;
  place_queue q = {r, fine, keep, {0}, {0}, {0}, 0, 0, 0};
  size_t j0 = 0, s = 0;
  for (int b = 0; b < EW_BAND_COUNT; j0 += fine[b].count, b++) {
    size_t kept = 0;
    for (size_t j = 0; j < fine[b].count; j++) kept += keep[j0 + j] != 0;
    q.j0[b] = j0, q.s0[b] = s;
    if (fine[b].count) q.todo[q.n_todo++] = b;
    s += kept;
  }
  if (fine[0].count && fine[0].vectors && q.s0[1] == fine[0].count) {
    double *grown = realloc(fine[0].vectors, bytes);
    if (grown) { /* the electrons' vectors are already in place */
      r->psi = grown;
      fine[0].vectors = NULL;
      q.in_place = fine[0].count;
    }
  }
  if (!q.in_place && !(r->psi = malloc(bytes))) return 0;
  atomic_init(&q.next, 0);
  ew_helper h = {0};
  if (q.n_todo > 1 && bytes >= PLACE_SPLIT_MIN_BYTES && ew_helper_count(2) > 0)
    ew_helper_start(&h, place_bands, &q);
  place_bands(&q);
  ew_helper_join(&h);
  return 1;
}

/* The states of band b from their vectors already in r->psi, appended from state *s on:
 * label, number and energy (Richardson with the pencil's potential minimum vmin); the
 * residual when the eigensolver gave one (e_fine[state] NAN), else the fine value in
 * e_fine[state], from which state_numbers computes it. */
static void band_states(ew_result *r, ew_band b, double vmin, const ew_eigenpairs *fine,
                        const char *keep, const double *coarse, size_t n_coarse, size_t *s,
                        double *e_fine) {
  size_t kept = 0;
  double sign = b == EW_BAND_E ? 1.0 : -1.0; /* back to the electron energy scale */
  for (size_t j = 0; j < fine->count; j++) {
    if (!keep[j]) continue;
    ew_state *q = &r->states[*s];
    kept++;
    double e = fine->values[j];
    e_fine[*s] = fine->residual ? NAN : e;
    q->residual = fine->residual ? fine->residual[j] : NAN;
    q->band = b;
    q->n = (int)kept;
    snprintf(q->label, sizeof q->label, "%s%u", ew_band_name(b), (unsigned)(kept % 1000000u));
    q->energy_eV = sign * richardson(r, q, e, j < n_coarse, j < n_coarse ? coarse[j] : 0.0, vmin);
    (*s)++;
  }
  r->band_count[b] = kept;
}

/* A run of a few states (STATE_CHUNK at most, fewer when there are few) of one band whose
 * residuals (where the eigensolver gave none), flags, layers and in-plane masses come from
 * their vectors: the runs are independent (each state's numbers from its own vector, read
 * only), so the threads of the machine take them from a queue; the same bits on any
 * thread. */
#define STATE_CHUNK 16
/* Below this much work (states × nodes) the runs stay on the calling thread: ~10 ns a node
 * and state (measured, 100-period superlattice: 0.43 s for 435 states of 10⁵ nodes), so
 * 1e5 is ~1 ms, ten times a helper's start on the other CPU (helper_thread.h). */
#define STATES_SPLIT_MIN_WORK 1e5

typedef struct {
  ew_result *r;
  const ew_pencil *pen[EW_BAND_COUNT];
  const double *e_fine;
  size_t n_chunks, *first; /* run k: states first[k] … first[k + 1] − 1 (one band) */
  atomic_size_t next;
  int *ok; /* [n_chunks] 0 when out of memory */
} state_queue;

static void *state_numbers(void *arg) {
  state_queue *q = arg;
  ew_result *r = q->r;
  size_t n = r->grid->n;
  double *prob = malloc(r->stack->n_layers * sizeof *prob);
  for (size_t k; (k = atomic_fetch_add(&q->next, 1)) < q->n_chunks;) {
    size_t a = q->first[k], m = q->first[k + 1] - a;
    ew_band b = r->states[a].band;
    for (size_t i = a; prob && i < a + m; i++) {
      ew_state *st = &r->states[i];
      const double *psi = r->psi + i * n;
      if (!isnan(q->e_fine[i])) st->residual = ew_pencil_residual(q->pen[b], psi, q->e_fine[i]);
      st->flagged = !(st->residual <= r->opt.residual_tol);
      locate(r, st, psi, prob);
    }
    q->ok[k] = prob && inplane_masses(r, b, a, m);
  }
  free(prob);
  return NULL;
}

/* state_numbers for the states of r, on this thread and a helper when the work is worth one.
 * 0 when out of memory. */
static int all_state_numbers(ew_result *r, ew_pencil *const pen[EW_BAND_COUNT],
                             const double *e_fine) {
  size_t cap = 2, nc = 0, s = 0, total = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) total += r->band_count[b];
  /* about eight runs or more, each at least two states (each run sets up the band's masses) */
  size_t chunk = total / 8 < 2 ? 2 : total / 8 > STATE_CHUNK ? STATE_CHUNK : total / 8;
  for (int b = 0; b < EW_BAND_COUNT; b++) cap += r->band_count[b] / chunk + 1;
  state_queue q = {r, {pen[0], pen[1], pen[2]}, e_fine, 0, malloc(cap * sizeof(size_t)), 0,
                   calloc(cap, sizeof(int))};
  if (!q.first || !q.ok) {
    free(q.first);
    free(q.ok);
    return 0;
  }
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t e = s + r->band_count[b]; s < e; s += s + chunk < e ? chunk : e - s)
      q.first[nc++] = s;
  q.first[nc] = s;
  q.n_chunks = nc;
  atomic_init(&q.next, 0);
  ew_helper h = {0};
  if (nc > 1 && (double)s * (double)r->grid->n >= STATES_SPLIT_MIN_WORK && ew_helper_count(2) > 0)
    ew_helper_start(&h, state_numbers, &q);
  state_numbers(&q);
  ew_helper_join(&h);
  int ok = 1;
  for (size_t k = 0; k < nc; k++) ok &= q.ok[k];
  free(q.first);
  free(q.ok);
  return ok;
}

ew_status ew_states_build(ew_result *r, ew_eigenpairs fine[EW_BAND_COUNT],
                          double *const coarse[EW_BAND_COUNT],
                          const size_t n_coarse[EW_BAND_COUNT], ew_error *err) {
  size_t total = 0, s = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) total += fine[b].count;
  r->n_states = total;
  r->states = calloc(total ? total : 1, sizeof *r->states);
  r->mean_inv_mass = malloc((total ? total : 1) * sizeof *r->mean_inv_mass);
  double *e_fine = malloc((total ? total : 1) * sizeof *e_fine);
  char *keep = malloc(total ? total : 1);
  if (r->states && r->mean_inv_mass && e_fine && keep) {
    for (int b = 0, j0 = 0; b < EW_BAND_COUNT; j0 += (int)fine[b].count, b++)
      keep_flags(r, (ew_band)b, &fine[b], keep + j0);
    place_all(r, fine, keep, total);
  }
  if (!r->states || !r->psi || !r->mean_inv_mass || !e_fine || !keep) {
    free(e_fine);
    free(keep);
    r->n_states = 0;
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (%zu states)", total);
  }
  ew_status rc = EW_OK;
  size_t j0 = 0;
  ew_pencil *pen[EW_BAND_COUNT] = {NULL, NULL, NULL};
  for (int b = 0; b < EW_BAND_COUNT && rc == EW_OK; j0 += fine[b].count, b++) {
    if (!(pen[b] = ew_pencil_build(r->grid, (ew_band)b))) {
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (pencil)");
      break;
    }
    band_states(r, (ew_band)b, pen[b]->vmin, &fine[b], keep + j0, coarse[b], n_coarse[b], &s,
                e_fine);
  }
  r->n_states = s;
  if (rc == EW_OK && !all_state_numbers(r, pen, e_fine))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_pencil_free(pen[b]);
    if (rc == EW_OK && r->dropped[b] &&
        !ew_result_warn_code(r, "box-states-dropped", "%zu %s state(s) of the field-tilted continuum (box states against "
                        "the outer walls) were dropped; the listed states are the quasi-bound "
                        "ones", r->dropped[b], ew_band_name((ew_band)b)))
      rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  free(e_fine);
  free(keep);
  r->n_states = s;
  return rc;
}
