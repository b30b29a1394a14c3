/* lines.c — from the states of a result to its optical lines (see lines.h). */
#include "lines.h"

#include <math.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"
#include "helper_thread.h"
#include "observables.h"

/* a new zeroed line at the end of r->lines (capacity *cap, doubled as needed); NULL when out
 * of memory */
static ew_line *new_line(ew_result *r, size_t *cap) {
  if (r->n_lines + 1 > *cap) {
    size_t nc = *cap ? *cap : 16;
    while (nc < r->n_lines + 1) nc *= 2;
    ew_line *q = realloc(r->lines, nc * sizeof *q);
    if (!q) return NULL;
    r->lines = q;
    *cap = nc;
  }
  ew_line *ln = &r->lines[r->n_lines++];
  memset(ln, 0, sizeof *ln);
  return ln;
}

/* intersubband: lower state among the lowest K of its band, upper any higher state */
static int intersubband(ew_result *r, size_t *cap, const size_t *first, size_t K) {
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    for (size_t i = 0; i < r->band_count[b] && i < K; i++) {
      size_t si = first[b] + i;
      for (size_t j = i + 1; j < r->band_count[b]; j++) {
        size_t sj = first[b] + j;
        ew_line *ln = new_line(r, cap);
        if (!ln) return 0;
        ln->kind = EW_LINE_INTERSUBBAND;
        ln->upper = sj;
        ln->lower = si;
        ln->energy_eV = fabs(r->states[sj].energy_eV - r->states[si].energy_eV);
        /* two degenerate levels (identical decoupled wells) have no line to speak of: no
         * wavelength (NaN: null in JSON, empty in CSV, "-" in the table), not 1/0 */
        ln->wavelength_nm = ln->energy_eV > 0.0 ? EW_HC_EVNM / ln->energy_eV : NAN;
        ln->allowed = 1; /* dipole and oscillator strength: line_numbers */
      }
    }
  }
  return 1;
}

/* interband: e_n with hh_m and lh_m, n and m among the lowest K */
static int interband(ew_result *r, size_t *cap, const size_t *first, size_t K) {
  for (size_t i = 0; i < r->band_count[EW_BAND_E] && i < K; i++) {
    for (int b = EW_BAND_HH; b <= EW_BAND_LH; b++) {
      for (size_t j = 0; j < r->band_count[b] && j < K; j++) {
        size_t se = first[EW_BAND_E] + i, sh = first[b] + j;
        ew_line *ln = new_line(r, cap);
        if (!ln) return 0;
        ln->kind = EW_LINE_INTERBAND;
        ln->upper = se;
        ln->lower = sh;
        ln->energy_eV = r->states[se].energy_eV - r->states[sh].energy_eV;
        ln->wavelength_nm = EW_HC_EVNM / ln->energy_eV; /* overlap: line_numbers */
      }
    }
  }
  return 1;
}

/* The numbers of line ln that its states' vectors give: an intersubband line's dipole and
 * oscillator strength (Kane: the masses at the lower state's energy), an interband line's
 * overlap and whether it is allowed. */
static void line_numbers(const ew_result *r, ew_line *ln) {
  const ew_grid *g = r->grid;
  const double *pu = r->psi + ln->upper * g->n, *pl = r->psi + ln->lower * g->n;
  if (ln->kind == EW_LINE_INTERSUBBAND) {
    ln->dipole_nm = fabs(ew_obs_dipole(g, pl, pu));
    ln->oscillator_strength =
        ew_obs_oscillator_strength(ln->energy_eV, ln->dipole_nm, r->mean_inv_mass[ln->lower]);
  } else {
    double ov = ew_obs_overlap(g, pu, pl);
    ln->overlap = ov * ov;
    ln->allowed = ln->overlap >= 1e-3;
  }
}

/* Runs of LINE_CHUNK lines from a queue: each line's numbers depend on its two vectors only
 * (read), so the calling thread and a helper share them; the same bits on either. */
#define LINE_CHUNK 32
/* below this much work (lines × nodes) the lines stay on the calling thread (see the states'
 * runs, states.c: ~1 ms) */
#define LINES_SPLIT_MIN_WORK 1e5

typedef struct {
  ew_result *r;
  atomic_size_t next;
} line_queue;

static void *line_runs(void *arg) {
  line_queue *q = arg;
  size_t nl = q->r->n_lines;
  for (size_t a; (a = atomic_fetch_add(&q->next, LINE_CHUNK)) < nl;)
    for (size_t j = a; j < a + LINE_CHUNK && j < nl; j++) line_numbers(q->r, &q->r->lines[j]);
  return NULL;
}

ew_status ew_lines_build(ew_result *r, ew_error *err) {
  size_t cap = 0, first[EW_BAND_COUNT], s0 = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    first[b] = s0;
    s0 += r->band_count[b];
  }
  size_t K = r->opt.lowest_levels > 0 ? (size_t)r->opt.lowest_levels : (size_t)-1;
  if (!intersubband(r, &cap, first, K) || !interband(r, &cap, first, K))
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (lines)");
  line_queue q = {r, 0};
  atomic_init(&q.next, 0);
  ew_helper h = {0};
  if (r->n_lines > LINE_CHUNK && (double)r->n_lines * (double)r->grid->n >= LINES_SPLIT_MIN_WORK &&
      ew_helper_count(2) > 0)
    ew_helper_start(&h, line_runs, &q);
  line_runs(&q);
  ew_helper_join(&h);
  return EW_OK;
}

/* The PL peak as a wavelength, λ = hc/E (PL engineers read nm); NAN without a positive peak. */
double ew_line_pl_peak_nm(const ew_line *ln) {
  return ln && ln->pl_peak_eV > 0 && isfinite(ln->pl_peak_eV) ? EW_HC_EVNM / ln->pl_peak_eV : NAN;
}
