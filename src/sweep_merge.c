/* sweep_merge.c — the parts of a sharded sweep joined into the one-machine output (see
 * sweep_merge.h).  What the parts look like is sweep.c's: a JSON part is one header line
 * ending in "points":[ , then one line per point ("{…}," and the last "{…}]}"); a CSV part is
 * an optional header line, then one line per point whose first cells are the varied values
 * printed %.10g. */
#include "sweep_merge.h"

#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/types.h>

#include "error.h"
#include "sweep.h"

typedef struct {
  const char *path;
  size_t first, count;     /* the points [first, first + count) of the whole sweep */
  size_t k, n, total;      /* JSON: its shard header and points_total */
  char *pre, *post;        /* JSON: the header line before and after the shard member */
  char *header;            /* CSV: the column header line, or NULL */
  size_t commas;           /* CSV: commas in each row (cells − 1), SIZE_MAX with no row */
} part;

typedef struct {
  FILE *f;
  char *buf;
  size_t cap;
  size_t len;  /* of the line, without its '\n' */
  int lineno;
} reader;

static ew_status reader_open(reader *r, const char *path, ew_error *err) {
  memset(r, 0, sizeof *r);
  errno = 0;
  r->f = fopen(path, "r");
  if (!r->f && errno == ENOMEM) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  if (!r->f) return ew_fail(err, EW_ERR_IO, path, 0, "cannot read the part: %s", strerror(errno));
  return EW_OK;
}

static void reader_close(reader *r) {
  if (r->f) fclose(r->f);
  free(r->buf);
  memset(r, 0, sizeof *r);
}

/* The next line into r->buf (without '\n'): 1, 0 at the end, -1 after filling err (a read
 * error, or a last line without its '\n': a part cut short). */
static int next_line(reader *r, const char *path, ew_error *err) {
  errno = 0;
  ssize_t n = getline(&r->buf, &r->cap, r->f);
  if (n < 0) { /* the end, or getline's buffer could not grow (ENOMEM), or a read error */
    if (errno == ENOMEM) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory"), -1;
    if (ferror(r->f)) return ew_fail(err, EW_ERR_IO, path, 0, "cannot read: %s", strerror(errno)), -1;
    return 0;
  }
  r->lineno++;
  if (n == 0 || r->buf[n - 1] != '\n')
    return ew_fail(err, EW_ERR_INPUT, path, r->lineno,
                   "the part ends inside a line (cut short: was its job killed?)"), -1;
  r->buf[n - 1] = '\0';
  r->len = (size_t)n - 1;
  return 1;
}

static char *dup_n(const char *s, size_t n) {
  char *d = malloc(n + 1);
  if (d) {
    memcpy(d, s, n);
    d[n] = '\0';
  }
  return d;
}

static int ends_with(const char *s, size_t len, const char *tail) {
  size_t t = strlen(tail);
  return len >= t && !memcmp(s + len - t, tail, t);
}

/* ---- JSON parts ------------------------------------------------------------------------ */
/* The header line: points_total, the shard member (cut out into pre/post).  Quotes inside
 * JSON strings are escaped, so the member names below cannot occur inside a value. */
static ew_status json_header(part *pt, const char *h, size_t len, int *empty, ew_error *err) {
  *empty = ends_with(h, len, "\"points\":[]}");
  const char *sh = strstr(h, ",\"shard\":{"), *tot = strstr(h, ",\"points_total\":");
  int used = 0;
  if (h[0] != '{' || !sh || !tot || !(*empty || ends_with(h, len, "\"points\":[")) ||
      sscanf(tot, ",\"points_total\":%zu", &pt->total) != 1 ||
      sscanf(sh, ",\"shard\":{\"k\":%zu,\"n\":%zu,\"first\":%zu,\"count\":%zu}%n", &pt->k,
             &pt->n, &pt->first, &pt->count, &used) != 4 || used == 0)
    return ew_fail(err, EW_ERR_INPUT, pt->path, 1,
                   "not the first line of an `epiwell sweep --json` part");
  size_t post_len = len - (size_t)(sh + used - h) - (*empty ? 2 : 0); /* without "]}" */
  pt->pre = dup_n(h, (size_t)(sh - h));
  pt->post = dup_n(sh + used, post_len);
  if (!pt->pre || !pt->post) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  return EW_OK;
}

/* A JSON part: its header, then exactly `count` point lines, the last one closing. */
static ew_status scan_json(part *pt, reader *r, ew_error *err) {
  int empty = 0, got = 0;
  ew_status rc = json_header(pt, r->buf, r->len, &empty, err);
  size_t rows = 0;
  int closed = empty;
  while (rc == EW_OK && (got = next_line(r, pt->path, err)) == 1) {
    if (closed || r->buf[0] != '{' ||
        !(ends_with(r->buf, r->len, "},") || ends_with(r->buf, r->len, "}]}")))
      return ew_fail(err, EW_ERR_INPUT, pt->path, r->lineno, "%s",
                     closed ? "text after the end of the part"
                            : "not a point line of an `epiwell sweep --json` part");
    rows++;
    closed = ends_with(r->buf, r->len, "]}");
  }
  if (rc != EW_OK || got < 0) return got < 0 ? err->code : rc;
  if (!closed)
    return ew_fail(err, EW_ERR_INPUT, pt->path, r->lineno,
                   "the part stops after %zu points without its closing ]} (cut short?)", rows);
  if (rows != pt->count)
    return ew_fail(err, EW_ERR_INPUT, pt->path, 0, "the part holds %zu points, its header says %zu",
                   rows, pt->count);
  /* the contiguous split of sweep.c: part K of N holds [(K−1)·P/N, K·P/N) */
  unsigned long long P = pt->total;
  if (pt->k < 1 || pt->k > pt->n ||
      pt->first != (size_t)(P * (pt->k - 1) / pt->n) ||
      pt->first + pt->count != (size_t)(P * pt->k / pt->n))
    return ew_fail(err, EW_ERR_INPUT, pt->path, 1,
                   "shard %zu/%zu of %zu points cannot hold points %zu..%zu", pt->k, pt->n,
                   pt->total, pt->first, pt->first + pt->count);
  return EW_OK;
}

/* Every part of one sweep, each part once, all N of them. */
static ew_status json_agree(part *pt, size_t n, ew_error *err) {
  for (size_t i = 0; i < n; i++) {
    if (strcmp(pt[i].pre, pt[0].pre) || strcmp(pt[i].post, pt[0].post) || pt[i].n != pt[0].n)
      return ew_fail(err, EW_ERR_INPUT, pt[i].path, 1,
                     "not a part of the sweep of %s (%s differ)", pt[0].path,
                     pt[i].n != pt[0].n ? "the number of parts N" : "stack, keys, point count or columns");
    for (size_t j = 0; j < i; j++)
      if (pt[j].k == pt[i].k)
        return ew_fail(err, EW_ERR_INPUT, pt[i].path, 1, "part %zu of %zu given twice (also %s)",
                       pt[i].k, pt[i].n, pt[j].path);
  }
  if (n < pt[0].n) {
    for (size_t k = 1; k <= pt[0].n; k++) {
      size_t j = 0;
      while (j < n && pt[j].k != k) j++;
      if (j == n)
        return ew_fail(err, EW_ERR_INPUT, NULL, 0, "part %zu of %zu is missing (%zu of %zu parts "
                       "given)", k, pt[0].n, n, pt[0].n);
    }
  }
  return EW_OK;
}

/* ---- CSV parts ------------------------------------------------------------------------- */
typedef struct {
  const ew_wf_range *r;
  size_t nr, total;
} grid;

/* Whether the first nr cells of line are point p's values as sweep.c prints them. */
static int row_is_point(const grid *g, const char *line, size_t p) {
  double v[2];
  ew_wf_sweep_point(g->r, g->nr, p, v);
  for (size_t a = 0; a < g->nr; a++) {
    char want[40];
    snprintf(want, sizeof want, "%.10g", v[a]);
    size_t n = strlen(want);
    if (strncmp(line, want, n) || line[n] != ',') return 0;
    line += n + 1;
  }
  return 1;
}

/* The point whose values the first row holds: nearest grid index per axis, ±1 checked. */
static size_t find_point(const grid *g, const char *line) {
  size_t idx[2] = {0, 0}, cnt[2] = {1, 1};
  const char *c = line;
  for (size_t a = 0; a < g->nr; a++) {
    char *end;
    double v = strtod(c, &end);
    if (end == c || *end != ',') return SIZE_MAX;
    cnt[a] = ew_wf_range_count(&g->r[a]);
    double i = g->r[a].step > 0 ? fabs(v - g->r[a].from) / g->r[a].step : 0;
    idx[a] = i < 0.5 || !isfinite(i) ? 0 : (size_t)(i + 0.5);
    c = end + 1;
  }
  for (int d0 = -1; d0 <= 1; d0++)
    for (int d1 = g->nr > 1 ? -1 : 0; d1 <= (g->nr > 1 ? 1 : 0); d1++) {
      long long i0 = (long long)idx[0] + d0, i1 = (long long)idx[1] + d1;
      if (i0 < 0 || i1 < 0 || i0 >= (long long)cnt[0] || i1 >= (long long)cnt[1]) continue;
      size_t p = (size_t)i0 * cnt[1] + (size_t)i1;
      if (row_is_point(g, line, p)) return p;
    }
  return SIZE_MAX;
}

static size_t count_commas(const char *s) {
  size_t n = 0;
  for (; *s; s++) n += *s == ',';
  return n;
}

/* Cells − 1 of the header line (RFC 4180: a tied key's quoted name holds commas). */
static size_t header_commas(const char *s) {
  size_t n = 0;
  for (int q = 0; *s; s++) {
    if (*s == '"') q = !q;
    else if (*s == ',' && !q) n++;
  }
  return n;
}

/* A CSV part: an optional header, then rows of consecutive points of the grid. */
static ew_status scan_csv(part *pt, reader *r, const grid *g, ew_error *err) {
  int got = 1;
  pt->commas = SIZE_MAX;
  pt->count = 0;
  for (int first = 1; got == 1; first = 0, got = next_line(r, pt->path, err)) {
    if (first && (r->buf[0] == '"' || (r->buf[0] >= 'A' && r->buf[0] != '\0'))) {
      if (!(pt->header = dup_n(r->buf, r->len)))
        return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
      continue;
    }
    if (pt->count == 0 && (pt->first = find_point(g, r->buf)) == SIZE_MAX)
      return ew_fail(err, EW_ERR_INPUT, pt->path, r->lineno, "the row's values are no point of "
                     "the sweep given by --vary (a part of another sweep?)");
    if (pt->first + pt->count >= g->total || !row_is_point(g, r->buf, pt->first + pt->count))
      return ew_fail(err, EW_ERR_INPUT, pt->path, r->lineno, "the row is not point %zu of the "
                     "sweep, which follows the part's row before (a part of another sweep?)",
                     pt->first + pt->count);
    size_t c = count_commas(r->buf);
    if (pt->commas != SIZE_MAX && c != pt->commas)
      return ew_fail(err, EW_ERR_INPUT, pt->path, r->lineno, "%zu cells, the rows before %zu", c + 1,
                     pt->commas + 1);
    pt->commas = c;
    pt->count++;
  }
  if (got < 0) return err->code;
  if (pt->header && pt->commas != SIZE_MAX && header_commas(pt->header) != pt->commas)
    return ew_fail(err, EW_ERR_INPUT, pt->path, 2, "the rows have %zu cells, the header %zu",
                   pt->commas + 1, header_commas(pt->header) + 1);
  return EW_OK;
}

/* Same columns everywhere; a header only where one machine writes it (before point 0)
 * unless every part has the same one (`header = 1`). */
static ew_status csv_agree(part *pt, size_t n, ew_error *err) {
  const part *h = NULL, *c = NULL;
  for (size_t i = 0; i < n; i++) {
    if (pt[i].header && h && strcmp(pt[i].header, h->header))
      return ew_fail(err, EW_ERR_INPUT, pt[i].path, 1, "its header differs from that of %s "
                     "(a part of another sweep?)", h->path);
    if (pt[i].header) h = &pt[i];
    if (pt[i].commas != SIZE_MAX && c && pt[i].commas != c->commas)
      return ew_fail(err, EW_ERR_INPUT, pt[i].path, 0, "rows of %zu cells, those of %s %zu (a "
                     "part of another sweep?)", pt[i].commas + 1, c->path, c->commas + 1);
    if (pt[i].commas != SIZE_MAX) c = &pt[i];
  }
  if (h && c && header_commas(h->header) != c->commas)
    return ew_fail(err, EW_ERR_INPUT, h->path, 1, "its header has %zu cells, the rows of %s %zu",
                   header_commas(h->header) + 1, c->path, c->commas + 1);
  return EW_OK;
}

/* ---- both: the parts tile the sweep ---------------------------------------------------- */
/* Point order; parts without points last (they hold nothing to place), except a CSV part
 * that holds only the header: part 1 of a sweep with fewer points than parts, whose header
 * opens the output. */
static int rank(const part *x) { return x->count ? 1 : x->header ? 0 : 2; }

static int by_first(const void *a, const void *b) {
  const part *x = a, *y = b;
  if (rank(x) != rank(y)) return rank(x) < rank(y) ? -1 : 1;
  return x->first < y->first ? -1 : x->first > y->first;
}

static ew_status tile(part *pt, size_t n, size_t total, ew_error *err) {
  qsort(pt, n, sizeof *pt, by_first);
  size_t next = 0;
  const part *prev = NULL;
  for (size_t i = 0; i < n; i++) {
    if (pt[i].count == 0) continue;
    if (pt[i].first > next)
      return ew_fail(err, EW_ERR_INPUT, NULL, 0, "points %zu..%zu of %zu are in no part given "
                     "(a part is missing)", next, pt[i].first - 1, total);
    if (pt[i].first < next)
      return ew_fail(err, EW_ERR_INPUT, pt[i].path, 0, "point %zu is also in %s (a part given "
                     "twice?)", pt[i].first, prev->path);
    next = pt[i].first + pt[i].count;
    prev = &pt[i];
  }
  if (next < total)
    return ew_fail(err, EW_ERR_INPUT, NULL, 0, "points %zu..%zu of %zu are in no part given (a "
                   "part is missing)", next, total - 1, total);
  return EW_OK;
}

/* ---- writing --------------------------------------------------------------------------- */
static ew_status copy_rows(const part *pt, int json, int *first_row, FILE *out, ew_error *err) {
  reader r;
  ew_status rc = reader_open(&r, pt->path, err);
  if (rc != EW_OK) return rc;
  int skip = json || pt->header != NULL; /* the part's first line is its header */
  int got;
  for (got = next_line(&r, pt->path, err); got == 1; got = next_line(&r, pt->path, err)) {
    if (skip) {
      skip = 0;
      continue;
    }
    if (json) { /* "{…}," or the last "{…}]}": the point alone */
      r.buf[r.len - (ends_with(r.buf, r.len, "]}") ? 2 : 1)] = '\0';
      fputs(*first_row ? "\n" : ",\n", out);
      fputs(r.buf, out);
    } else {
      fputs(r.buf, out);
      fputc('\n', out);
    }
    *first_row = 0;
  }
  reader_close(&r);
  return got < 0 ? err->code : EW_OK;
}

static ew_status write_merged(const part *pt, size_t n, int json, FILE *out, ew_error *err) {
  if (json)
    fprintf(out, "%s,\"shard\":{\"k\":1,\"n\":1,\"first\":0,\"count\":%zu}%s", pt[0].pre,
            pt[0].total, pt[0].post);
  else if (pt[0].header)
    fprintf(out, "%s\n", pt[0].header);
  int first_row = 1;
  for (size_t i = 0; i < n; i++) {
    ew_status rc = copy_rows(&pt[i], json, &first_row, out, err);
    if (rc != EW_OK) return rc;
  }
  if (json) fputs("]}\n", out);
  return ferror(out) ? ew_fail(err, EW_ERR_IO, NULL, 0, "cannot write the merged sweep") : EW_OK;
}

/* ---- the merge ------------------------------------------------------------------------- */
static ew_status scan_part(part *pt, const grid *g, int *json, ew_error *err) {
  reader r;
  ew_status rc = reader_open(&r, pt->path, err);
  if (rc != EW_OK) return rc;
  int got = next_line(&r, pt->path, err);
  int is_json = got == 1 && r.buf[0] == '{';
  if (*json < 0) *json = is_json;
  if (got < 0) rc = err->code;
  else if (got == 1 && is_json != *json)
    rc = ew_fail(err, EW_ERR_INPUT, pt->path, 1, "a %s part among %s parts", is_json ? "JSON" : "CSV",
                 *json ? "JSON" : "CSV");
  else if (*json && got == 0) rc = ew_fail(err, EW_ERR_INPUT, pt->path, 0, "an empty part");
  else if (*json) rc = scan_json(pt, &r, err);
  else if (!g->r) rc = ew_fail(err, EW_ERR_USAGE, pt->path, 0, "CSV parts carry no shard "
                               "header: give the sweep's --vary to place their rows");
  else if (got == 1) rc = scan_csv(pt, &r, g, err);
  else pt->commas = SIZE_MAX; /* an empty CSV part: no header, no point */
  reader_close(&r);
  return rc;
}

static void parts_free(part *pt, size_t n) {
  for (size_t i = 0; pt && i < n; i++) {
    free(pt[i].pre);
    free(pt[i].post);
    free(pt[i].header);
  }
  free(pt);
}

static ew_status merge(const ew_wf_range *ranges, size_t nr, size_t n, const char *const *paths,
                       FILE *out, ew_error *err) {
  if (n == 0) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "merge: no parts given");
  grid g = {nr ? ranges : NULL, nr, nr ? ew_wf_sweep_points(ranges, nr) : 0};
  part *pt = calloc(n, sizeof *pt);
  if (!pt) return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory");
  int json = -1;
  ew_status rc = EW_OK;
  for (size_t i = 0; i < n && rc == EW_OK; i++) {
    pt[i].path = paths[i];
    rc = scan_part(&pt[i], &g, &json, err);
  }
  if (rc == EW_OK && json && g.r && pt[0].total != g.total)
    rc = ew_fail(err, EW_ERR_INPUT, pt[0].path, 1, "a sweep of %zu points, --vary gives %zu",
                 pt[0].total, g.total);
  if (rc == EW_OK) rc = json ? json_agree(pt, n, err) : csv_agree(pt, n, err);
  if (rc == EW_OK) rc = tile(pt, n, json ? pt[0].total : g.total, err);
  if (rc == EW_OK && !json && !pt[0].header)
    for (size_t i = 1; i < n && rc == EW_OK; i++)
      if (pt[i].header) /* one machine writes the header first or not at all */
        rc = ew_fail(err, EW_ERR_INPUT, pt[i].path, 1, "a header in a later part while the "
                     "first part (%s) has none", pt[0].path);
  if (rc == EW_OK) rc = write_merged(pt, n, json, out, err);
  parts_free(pt, n);
  return rc;
}

ew_status ew_wf_sweep_merge(const ew_wf_range *ranges, size_t nr, size_t n,
                            const char *const *paths, FILE *out, ew_error *uerr) {
  ew_error e = {0}, *err = &e; /* never NULL below: the helpers read err->code */
  ew_status rc = merge(ranges, nr, n, paths, out, err);
  if (uerr && rc != EW_OK) *uerr = e;
  return rc;
}
