/* match_part.c — writing the part of a sharded match and joining the parts (see
 * match_part.h).  The part is written in one fixed order and read back in that order by a
 * cursor that names the first byte that is not what it expects. */
#include "match_part.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "error.h"
#include "json_writer.h"

#define PART_MAX_BYTES (16u << 20) /* a part holds a few solutions: far below this */

/* ---- writing ------------------------------------------------------------------------------ */
static void num(FILE *out, double v) {
  if (isfinite(v)) fprintf(out, "%.17g", v);
  else fputs("null", out);
}

static void pair(FILE *out, const char *name, const double *v) {
  fprintf(out, "\"%s\":[", name);
  num(out, v[0]);
  fputc(',', out);
  num(out, v[1]);
  fputc(']', out);
}

static void solution(FILE *out, const ew_wf_solution *s) {
  fputc('{', out);
  pair(out, "value", s->value);
  fputc(',', out);
  pair(out, "energy_eV", s->energy_eV);
  fputc(',', out);
  pair(out, "wavelength_nm", s->wavelength_nm);
  fputc(',', out);
  pair(out, "residual_eV", s->residual_eV);
  fputs(",\"value_minus\":", out);
  num(out, s->value_minus);
  fputs(",\"value_plus\":", out);
  num(out, s->value_plus);
  fputs(",\"uncertainty\":", out);
  num(out, s->uncertainty);
  fputs(",\"warnings\":", out);
  ew_json_write_string(out, s->warnings);
  fputc('}', out);
}

void ew_wf_match_part_write(const ew_wf_match_result *r, FILE *out) {
  fprintf(out, "{\"match_part\":{\"k\":%zu,\"n\":%zu,\"nkeys\":%zu,\"samples\":[%zu,%zu],",
          r->shard_k, r->shard_n, r->nkeys, r->samples[0], r->samples[1]);
  pair(out, "from", r->from);
  fputc(',', out);
  pair(out, "to", r->to);
  fprintf(out, ",\"tolerance\":%d},\"lines\":[", r->have_tolerance);
  for (size_t i = 0; i < r->nkeys; i++) {
    fputs(i ? ",{\"key\":" : "{\"key\":", out);
    ew_json_write_string(out, r->key[i]);
    fputs(",\"line\":", out);
    ew_json_write_string(out, r->line[i]);
    fputs(",\"target_eV\":", out);
    num(out, r->target[i].eV);
    fputs(",\"target_nm\":", out);
    num(out, r->target[i].nm);
    fputs(",\"reached_eV\":[", out);
    num(out, r->reached_min_eV[i]);
    fputc(',', out);
    num(out, r->reached_max_eV[i]);
    fputs("]}", out);
  }
  fputs("],\"solutions\":[", out);
  for (size_t k = 0; k < r->n; k++) {
    if (k) fputc(',', out);
    solution(out, &r->sol[k]);
  }
  fputs("],\"starts\":[", out);
  for (size_t k = 0; k < r->n_starts; k++) {
    const ew_wf_match_start *s = &r->starts[k];
    fputs(k ? ",{\"r\":" : "{\"r\":", out);
    num(out, s->r);
    fprintf(out, ",\"i\":%zu,\"j\":%zu,\"cell\":%d,\"found\":%d,\"solution\":", s->i, s->j,
            s->cell, s->found);
    solution(out, &s->sol);
    fputc('}', out);
  }
  fputs("]}\n", out);
}

int ew_wf_match_part_is(const char *text) { return !strncmp(text, "{\"match_part\":", 14); }

/* ---- reading ------------------------------------------------------------------------------ */
typedef struct {
  const char *text, *p, *path;
  ew_error *err;
  int bad;
} cursor;

static int fail_at(cursor *c, const char *what) {
  if (!c->bad)
    ew_fail(c->err, EW_ERR_INPUT, c->path, 1, "not a part of a sharded match: %s expected at "
            "byte %zu (cut short, or another file?)", what, (size_t)(c->p - c->text) + 1);
  c->bad = 1;
  return 0;
}

static int lit(cursor *c, const char *s) {
  size_t n = strlen(s);
  if (c->bad || strncmp(c->p, s, n)) return fail_at(c, s);
  c->p += n;
  return 1;
}

static int number(cursor *c, double *v) {
  if (c->bad) return 0;
  if (!strncmp(c->p, "null", 4)) {
    c->p += 4;
    *v = NAN;
    return 1;
  }
  char *end;
  errno = 0;
  *v = strtod(c->p, &end);
  if (end == c->p || errno || !isfinite(*v) || strchr("+ \t\n", *c->p))
    return fail_at(c, "a number");
  c->p = end;
  return 1;
}

static int count(cursor *c, size_t *v) {
  if (c->bad) return 0;
  char *end;
  errno = 0;
  unsigned long long u = strtoull(c->p, &end, 10);
  if (end == c->p || errno || *c->p < '0' || *c->p > '9' || u > (size_t)-1)
    return fail_at(c, "a whole number");
  c->p = end;
  *v = (size_t)u;
  return 1;
}

static int flag(cursor *c, int *v) {
  size_t u = 0;
  if (!count(c, &u) || u > 1) return fail_at(c, "0 or 1");
  *v = (int)u;
  return 1;
}

/* A string as ew_json_write_string writes our keys, line names and codes: \" and \\ are the
 * only escapes they can need (control characters never reach them: text.c refuses them). */
static int string(cursor *c, char *buf, size_t size) {
  if (!lit(c, "\"")) return 0;
  size_t n = 0;
  while (*c->p && *c->p != '"') {
    if (*c->p == '\\' && (c->p[1] == '"' || c->p[1] == '\\')) c->p++;
    else if (*c->p == '\\') return fail_at(c, "a string without escapes other than \\\" and \\\\");
    if (n + 1 >= size) return fail_at(c, "a shorter string");
    buf[n++] = *c->p++;
  }
  buf[n] = '\0';
  return lit(c, "\"");
}

static int read_pair(cursor *c, const char *name, double *v) {
  char head[40];
  snprintf(head, sizeof head, "\"%s\":[", name);
  return lit(c, head) && number(c, &v[0]) && lit(c, ",") && number(c, &v[1]) && lit(c, "]");
}

static int read_solution(cursor *c, ew_wf_solution *s) {
  return lit(c, "{") && read_pair(c, "value", s->value) && lit(c, ",") &&
         read_pair(c, "energy_eV", s->energy_eV) && lit(c, ",") &&
         read_pair(c, "wavelength_nm", s->wavelength_nm) && lit(c, ",") &&
         read_pair(c, "residual_eV", s->residual_eV) && lit(c, ",\"value_minus\":") &&
         number(c, &s->value_minus) && lit(c, ",\"value_plus\":") && number(c, &s->value_plus) &&
         lit(c, ",\"uncertainty\":") && number(c, &s->uncertainty) &&
         lit(c, ",\"warnings\":") && string(c, s->warnings, sizeof s->warnings) && lit(c, "}");
}

/* Append to a growing array (*a of *n, capacity *cap, elements of size sz). */
static void *grow(void **a, size_t *n, size_t *cap, size_t sz) {
  if (*n == *cap) {
    size_t nc = *cap ? 2 * *cap : 8;
    void *b = realloc(*a, nc * sz);
    if (!b) return NULL;
    *a = b;
    *cap = nc;
  }
  return (char *)*a + (*n)++ * sz;
}

static ew_status out_of_memory(cursor *c) {
  c->bad = 1;
  return ew_fail(c->err, EW_ERR_NOMEM, NULL, 0, "out of memory (match part)");
}

/* A list "[A,B,…]" of solutions (starts 0) or starts (starts 1) into r. */
static ew_status read_list(cursor *c, int starts, ew_wf_match_result *r) {
  size_t cap = 0;
  if (c->p[0] == ']') return EW_OK;
  do {
    if (!starts) {
      ew_wf_solution *s = grow((void **)&r->sol, &r->n, &cap, sizeof *s);
      if (!s) return out_of_memory(c);
      memset(s, 0, sizeof *s);
      read_solution(c, s);
    } else {
      ew_wf_match_start *s = grow((void **)&r->starts, &r->n_starts, &cap, sizeof *s);
      if (!s) return out_of_memory(c);
      memset(s, 0, sizeof *s);
      (void)(lit(c, "{\"r\":") && number(c, &s->r) && lit(c, ",\"i\":") && count(c, &s->i) &&
          lit(c, ",\"j\":") && count(c, &s->j) && lit(c, ",\"cell\":") && flag(c, &s->cell) &&
          lit(c, ",\"found\":") && flag(c, &s->found) && lit(c, ",\"solution\":") &&
          read_solution(c, &s->sol) && lit(c, "}"));
    }
  } while (!c->bad && *c->p == ',' && c->p++);
  return c->bad ? c->err->code : EW_OK;
}

/* The part's text (whole file) into r. */
static ew_status parse_part(cursor *c, ew_wf_match_result *r) {
  memset(r, 0, sizeof *r);
  (void)(lit(c, "{\"match_part\":{\"k\":") && count(c, &r->shard_k) && lit(c, ",\"n\":") &&
      count(c, &r->shard_n) && lit(c, ",\"nkeys\":") && count(c, &r->nkeys) &&
      lit(c, ",\"samples\":[") && count(c, &r->samples[0]) && lit(c, ",") &&
      count(c, &r->samples[1]) && lit(c, "],") && read_pair(c, "from", r->from) &&
      lit(c, ",") && read_pair(c, "to", r->to) && lit(c, ",\"tolerance\":") &&
      flag(c, &r->have_tolerance) && lit(c, "},\"lines\":["));
  if (!c->bad && (r->nkeys < 1 || r->nkeys > 2)) fail_at(c, "one or two keys");
  for (size_t i = 0; !c->bad && i < r->nkeys; i++) {
    (void)((i == 0 || lit(c, ",")) && lit(c, "{\"key\":") && string(c, r->key[i], sizeof r->key[i]) &&
        lit(c, ",\"line\":") && string(c, r->line[i], sizeof r->line[i]) &&
        lit(c, ",\"target_eV\":") && number(c, &r->target[i].eV) && lit(c, ",\"target_nm\":") &&
        number(c, &r->target[i].nm) && lit(c, ",\"reached_eV\":[") &&
        number(c, &r->reached_min_eV[i]) && lit(c, ",") && number(c, &r->reached_max_eV[i]) &&
        lit(c, "]}"));
  }
  if (lit(c, "],\"solutions\":[")) read_list(c, 0, r);
  if (lit(c, "],\"starts\":[")) read_list(c, 1, r);
  lit(c, "]}\n");
  if (!c->bad && *c->p) fail_at(c, "the end of the file");
  if (!c->bad && (r->shard_n < 2 || r->shard_k < 1 || r->shard_k > r->shard_n))
    fail_at(c, "a part K of N with 1 <= K <= N, N >= 2");
  return c->bad ? c->err->code : EW_OK;
}

/* The whole file as a string; EW_ERR_IO or EW_ERR_INPUT (too big, NUL bytes). */
static ew_status slurp(const char *path, char **text, ew_error *err) {
  *text = NULL;
  errno = 0;
  FILE *f = fopen(path, "rb");
  if (!f && errno == ENOMEM) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  if (!f) return ew_fail(err, EW_ERR_IO, path, 0, "cannot read the part: %s", strerror(errno));
  size_t cap = 4096, len = 0;
  char *buf = malloc(cap);
  ew_status rc = buf ? EW_OK : ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  while (rc == EW_OK) {
    len += fread(buf + len, 1, cap - 1 - len, f);
    if (ferror(f)) rc = ew_fail(err, EW_ERR_IO, path, 0, "cannot read the part");
    else if (len + 1 < cap) break;
    else if (cap >= PART_MAX_BYTES)
      rc = ew_fail(err, EW_ERR_INPUT, path, 0, "too big for a part of a match (over %u MiB)",
                   PART_MAX_BYTES >> 20);
    else {
      char *nb = realloc(buf, 2 * cap);
      if (!nb) rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
      else buf = nb, cap *= 2;
    }
  }
  fclose(f);
  if (rc == EW_OK && memchr(buf, '\0', len))
    rc = ew_fail(err, EW_ERR_INPUT, path, 0, "not a part of a sharded match (NUL bytes)");
  if (rc != EW_OK) {
    free(buf);
    return rc;
  }
  buf[len] = '\0';
  *text = buf;
  return EW_OK;
}

/* ---- joining ------------------------------------------------------------------------------ */
/* Part b is of the same match as part a (everything but its own shard, reach and results). */
static int same_match(const ew_wf_match_result *a, const ew_wf_match_result *b) {
  if (a->shard_n != b->shard_n || a->nkeys != b->nkeys || a->have_tolerance != b->have_tolerance)
    return 0;
  for (size_t i = 0; i < a->nkeys; i++)
    if (a->samples[i] != b->samples[i] || a->from[i] != b->from[i] || a->to[i] != b->to[i] ||
        strcmp(a->key[i], b->key[i]) || strcmp(a->line[i], b->line[i]) ||
        a->target[i].eV != b->target[i].eV || a->target[i].nm != b->target[i].nm)
      return 0;
  return 1;
}

static ew_status read_parts(size_t n, const char *const *paths, ew_wf_match_result *parts,
                            ew_error *err) {
  for (size_t q = 0; q < n; q++) {
    char *text = NULL;
    ew_status rc = slurp(paths[q], &text, err);
    if (rc != EW_OK) return rc;
    cursor c = {text, text, paths[q], err, 0};
    rc = parse_part(&c, &parts[q]);
    free(text);
    if (rc != EW_OK) return rc;
    if (!same_match(&parts[0], &parts[q]))
      return ew_fail(err, EW_ERR_INPUT, paths[q], 1, "a part of another match than %s (keys, "
                     "lines, targets, range, samples, tolerance or part count differ)", paths[0]);
  }
  return EW_OK;
}

/* Part k of N at its place: order[k − 1] = its index; a part missing or given twice refused. */
static ew_status place_parts(size_t n, const char *const *paths, const ew_wf_match_result *parts,
                             size_t *order, ew_error *err) {
  size_t N = parts[0].shard_n;
  for (size_t k = 0; k < N; k++) order[k] = SIZE_MAX;
  for (size_t q = 0; q < n; q++) {
    size_t k = parts[q].shard_k - 1;
    if (order[k] != SIZE_MAX)
      return ew_fail(err, EW_ERR_INPUT, paths[q], 1, "part %zu of %zu given twice (also %s)",
                     k + 1, N, paths[order[k]]);
    order[k] = q;
  }
  for (size_t k = 0; k < N; k++)
    if (order[k] == SIZE_MAX)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0, "part %zu of %zu is missing (%zu part%s given)",
                     k + 1, N, n, n == 1 ? "" : "s");
  return EW_OK;
}

/* The whole match from its parts in order: solutions in part order (1D) or the starts of all
 * parts chosen from again (2D), the reach over every part, the message. */
static ew_status join(const ew_wf_match_result *parts, const size_t *order, size_t N,
                      ew_wf_match_result *m, ew_error *err) {
  *m = parts[order[0]];
  m->sol = NULL;
  m->starts = NULL;
  m->n = m->n_starts = 0;
  m->shard_k = m->shard_n = 1;
  size_t ns = 0, nst = 0;
  for (size_t k = 0; k < N; k++) ns += parts[k].n, nst += parts[k].n_starts;
  m->sol = calloc(ns ? ns : 1, sizeof *m->sol);
  ew_wf_match_start *st = calloc(nst ? nst : 1, sizeof *st);
  if (!m->sol || !st) {
    free(st);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  }
  nst = 0;
  for (size_t k = 0; k < N; k++) {
    const ew_wf_match_result *p = &parts[order[k]];
    if (p->n) memcpy(m->sol + m->n, p->sol, p->n * sizeof *p->sol); /* NULL when none */
    m->n += p->n;
    if (p->n_starts) memcpy(st + nst, p->starts, p->n_starts * sizeof *st);
    nst += p->n_starts;
    for (size_t i = 0; i < m->nkeys; i++) { /* fmin/fmax skip a NaN (a part never bound) */
      m->reached_min_eV[i] = fmin(m->reached_min_eV[i], p->reached_min_eV[i]);
      m->reached_max_eV[i] = fmax(m->reached_max_eV[i], p->reached_max_eV[i]);
    }
  }
  ew_status rc = m->nkeys == 2 ? ew_wf_match_merge_starts(st, nst, m, err) : EW_OK;
  free(st);
  if (rc == EW_OK) ew_wf_match_message(m);
  return rc;
}

ew_status ew_wf_match_merge(size_t n, const char *const *paths, FILE *out, ew_error *err) {
  if (n == 0) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "merge needs the parts (files) to join");
  ew_wf_match_result *parts = calloc(n, sizeof *parts), m;
  memset(&m, 0, sizeof m);
  if (!parts) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  size_t *order = NULL;
  ew_status rc = read_parts(n, paths, parts, err);
  if (rc == EW_OK && !(order = malloc(parts[0].shard_n * sizeof *order)))
    rc = ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  if (rc == EW_OK) rc = place_parts(n, paths, parts, order, err);
  if (rc == EW_OK) rc = join(parts, order, parts[0].shard_n, &m, err);
  if (rc == EW_OK) {
    ew_wf_match_print_json(&m, out);
    if (ferror(out)) rc = ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the merged match");
  }
  ew_wf_match_result_free(&m);
  for (size_t q = 0; q < n; q++) ew_wf_match_result_free(&parts[q]);
  free(parts);
  free(order);
  return rc;
}
