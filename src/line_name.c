/* line_name.c — level and line names, their energies in a result, and the main lines (see
 * line_name.h). */
#include "line_name.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "error.h"

static int parse_level(const char *s, size_t len, ew_wf_level *lv) {
  static const char *const names[] = {"e", "hh", "lh"};
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    size_t nl = strlen(names[b]);
    if (len <= nl || strncmp(s, names[b], nl) != 0) continue;
    long n = 0;
    size_t i = nl;
    for (; i < len && s[i] >= '0' && s[i] <= '9' && n < 100000; i++) n = n * 10 + (s[i] - '0');
    if (i != len || n < 1 || n >= 100000 || s[nl] == '0') continue;
    lv->band = (ew_band)b;
    lv->n = (int)n;
    return 1;
  }
  return 0;
}

size_t ew_wf_level_index(const ew_result *r, ew_band band, int n) {
  size_t off = 0;
  for (int b = 0; b < (int)band; b++) off += r->band_count[b];
  return (size_t)n <= r->band_count[band] ? off + (size_t)n - 1 : SIZE_MAX;
}

double ew_wf_level_energy(const ew_result *r, ew_band band, int n) {
  size_t i = ew_wf_level_index(r, band, n);
  return i == SIZE_MAX ? NAN : r->states[i].energy_eV;
}

/* Parse "A-B" into its two levels; *interband set.  0 on a malformed name. */
static int parse_line(const char *line, ew_wf_level *a, ew_wf_level *b, int *interband) {
  const char *dash = strchr(line, '-');
  if (!dash || strchr(dash + 1, '-')) return 0;
  if (!parse_level(line, (size_t)(dash - line), a) ||
      !parse_level(dash + 1, strlen(dash + 1), b))
    return 0;
  if (a->band == b->band) {
    *interband = 0;
    return a->n != b->n;
  }
  *interband = 1;
  return a->band == EW_BAND_E || b->band == EW_BAND_E;
}

int ew_wf_line_is_top(const char *line) {
  size_t len = strlen(line);
  ew_wf_level lv;
  return len > 4 && !strcmp(line + len - 4, "-top") && parse_level(line, len - 4, &lv);
}

ew_status ew_wf_line_energy(const ew_result *res, const char *line_in, double *energy_eV,
                            ew_error *err) {
  ew_wf_level a, b;
  int ib;
  *energy_eV = NAN;
  /* "e2-top": how far e2 lies below the top of its band's bound window (below_top_eV; 0 at
     the top, where the level leaves the well) */
  if (ew_wf_line_is_top(line_in)) {
    parse_level(line_in, strlen(line_in) - 4, &a);
    if (!res) return EW_OK;
    size_t i = ew_wf_level_index(res, a.band, a.n);
    if (i != SIZE_MAX) *energy_eV = ew_result_state_below_top_eV(res, i);
    return EW_OK;
  }
  /* "e1-hh1:pl": the photoluminescence peak, the interband line less its exciton binding */
  char line[64];
  snprintf(line, sizeof line, "%s", line_in);
  size_t len = strlen(line);
  int pl = len > 3 && !strcmp(line + len - 3, ":pl");
  if (pl) line[len - 3] = '\0';
  /* "e1-e2:depol": the intersubband line with its depolarisation shift (doped stacks; the
     bare line where no carriers shift it) */
  int depol = len > 6 && !strcmp(line + len - 6, ":depol");
  if (depol) line[len - 6] = '\0';
  if (!parse_line(line, &a, &b, &ib) || (pl && !ib) || (depol && ib))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "--line '%s': a line is two levels joined by '-', "
                   "of one band (intersubband, e.g. e1-e2, hh1-hh2) or an electron and a hole "
                   "level (interband, e.g. e1-hh1, e1-lh1); an interband line with ':pl' "
                   "(e1-hh1:pl) is its photoluminescence peak, exciton included; an "
                   "intersubband line with ':depol' (e1-e2:depol) its depolarisation-shifted "
                   "absorption line; a level with '-top' (e2-top) its distance below the "
                   "barrier top", line_in);
  if (!res) return EW_OK;
  if (depol) {
    size_t ia = ew_wf_level_index(res, a.band, a.n), ib2 = ew_wf_level_index(res, b.band, b.n);
    if (ia == SIZE_MAX || ib2 == SIZE_MAX) return EW_OK;
    for (size_t i = 0; i < res->n_lines; i++) {
      const ew_line *l = &res->lines[i];
      if (l->kind != EW_LINE_INTERSUBBAND || !((l->upper == ia && l->lower == ib2) ||
                                               (l->upper == ib2 && l->lower == ia)))
        continue;
      double d = res->sp ? res->sp->depol_eV[i] : 0.0;
      *energy_eV = l->energy_eV + (isfinite(d) ? d : 0.0);
    }
    return EW_OK;
  }
  if (pl) {
    const ew_wf_level *e = a.band == EW_BAND_E ? &a : &b, *h = a.band == EW_BAND_E ? &b : &a;
    size_t ie = ew_wf_level_index(res, e->band, e->n), ih = ew_wf_level_index(res, h->band, h->n);
    for (size_t i = 0; i < res->n_lines && ie != SIZE_MAX && ih != SIZE_MAX; i++)
      if (res->lines[i].kind == EW_LINE_INTERBAND && res->lines[i].upper == ie &&
          res->lines[i].lower == ih)
        *energy_eV = res->lines[i].pl_peak_eV;
    return EW_OK;
  }
  double ea = ew_wf_level_energy(res, a.band, a.n), eb = ew_wf_level_energy(res, b.band, b.n);
  /* as ew_line: intersubband |E_upper − E_lower|, interband E(e) − E(h) (README) */
  if (!ib) *energy_eV = fabs(ea - eb);
  else *energy_eV = a.band == EW_BAND_E ? ea - eb : eb - ea;
  return EW_OK;
}

/* The line of a result joining two state indices, or NULL. */
const ew_line *ew_wf_find_line(const ew_result *r, size_t upper, size_t lower) {
  for (size_t i = 0; i < r->n_lines; i++)
    if (r->lines[i].upper == upper && r->lines[i].lower == lower) return &r->lines[i];
  return NULL;
}

ew_wf_cols ew_wf_cols_of_counts(const size_t cnt[EW_BAND_COUNT]) {
  ew_wf_cols c;
  for (int b = 0; b < EW_BAND_COUNT; b++) c.nlev[b] = cnt[b];
  for (int h = 0; h < 2; h++) {
    size_t m = cnt[EW_BAND_E] < cnt[1 + h] ? cnt[EW_BAND_E] : cnt[1 + h];
    c.nib[h] = m < EW_WF_INTERBAND_MAX ? m : EW_WF_INTERBAND_MAX;
  }
  return c;
}

size_t ew_wf_main_lines(const ew_wf_cols *c, ew_wf_linedef *out, size_t cap) {
  size_t k = 0;
  for (int b = 0; b < EW_BAND_COUNT; b++)
    for (size_t j = 2; j <= c->nlev[b]; j++, k++)
      if (k < cap) {
        ew_wf_linedef *d = &out[k];
        d->a = (ew_wf_level){(ew_band)b, 1};
        d->b = (ew_wf_level){(ew_band)b, (int)j};
        d->interband = 0;
        snprintf(d->name, sizeof d->name, "%s1-%s%zu", ew_band_name((ew_band)b),
                 ew_band_name((ew_band)b), j);
      }
  for (size_t n = 1; n <= EW_WF_INTERBAND_MAX; n++)
    for (int h = 0; h < 2; h++)
      if (n <= c->nib[h]) {
        if (k < cap) {
          ew_wf_linedef *d = &out[k];
          ew_band hb = h ? EW_BAND_LH : EW_BAND_HH;
          d->a = (ew_wf_level){EW_BAND_E, (int)n};
          d->b = (ew_wf_level){hb, (int)n};
          d->interband = 1;
          snprintf(d->name, sizeof d->name, "e%zu-%s%zu", n, ew_band_name(hb), n);
        }
        k++;
      }
  return k;
}
