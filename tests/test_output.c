/* test_output.c — the CSV / JSON / table writers: what ends up in the files (read back,
 * including through zlib), that the files agree with the result they were written from, and
 * that a failed write leaves nothing behind.  A small well of user-defined layers is solved
 * once for the whole group; each test writes into its own fresh temporary directory. */
#include <errno.h>
#include <math.h>
#include <dirent.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zlib.h>

#include "testutil.h"

#include "grid.h"
#include "output.h"
#include "solve.h"

/* ---- fixture ------------------------------------------------------------------------------ */
typedef struct {
  ew_stack *st;
  ew_result *res;
  char base[512]; /* temporary directory holding every test's output */
  int seq;        /* next per-test subdirectory number */
} fixture;

/* A 6 nm well between 15 nm barriers (invented values, deep enough for e, hh and lh
 * states); a 0.1 nm step keeps the grid a few hundred nodes. */
static int group_setup(void **state) {
  static fixture fx; /* lives for the whole run */
  tu_layer ly[] = {{15.0, 1.00, -0.95, 0.090, 0.38, 0.105},
                   {6.0, 0.70, -0.80, 0.067, 0.35, 0.090},
                   {15.0, 1.00, -0.95, 0.090, 0.38, 0.105}};
  fx.st = tu_stack(3, ly);
  if (tu_fixture_solve("test_output", fx.st, 0.1, &fx.res) || tu_mkdtemp("output", fx.base, sizeof fx.base))
    return -1;
  *state = &fx;
  return 0;
}


static int group_teardown(void **state) {
  fixture *fx = *state;
  ew_result_free(fx->res);
  tu_stack_free(fx->st);
  tu_rm_tree(fx->base);
  return 0;
}

/* A new empty directory under the fixture's base: base/NNN-tag. */
static void fresh_dir(fixture *fx, const char *tag, char *out, size_t size) {
  snprintf(out, size, "%s/%03d-%s", fx->base, fx->seq++, tag);
  assert_int_equal(mkdir(out, 0700), 0);
}

static void path_in(char *out, size_t size, const char *dir, const char *name) {
  snprintf(out, size, "%s/%s", dir, name);
}

static int exists(const char *path) {
  struct stat sb;
  return stat(path, &sb) == 0;
}

/* Entries of dir other than . and .. whose name contains sub (NULL: all entries). */
static int count_entries(const char *dir, const char *sub) {
  DIR *d = opendir(dir);
  if (!d) return 0;
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL) {
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
    if (!sub || strstr(e->d_name, sub)) n++;
  }
  closedir(d);
  return n;
}

/* Hidden entries (the writer's temporaries are ".NAME.tmpPID"). */
static int count_hidden(const char *dir) {
  DIR *d = opendir(dir);
  if (!d) return 0;
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL)
    if (e->d_name[0] == '.' && strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) n++;
  closedir(d);
  return n;
}

/* Whole text of a (small) file, NUL-terminated; NULL when it cannot be read. */
static char *slurp(const char *path, size_t *len) {
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  size_t cap = 1 << 16, n = 0;
  char *buf = malloc(cap);
  size_t got;
  while (buf && (got = fread(buf + n, 1, cap - n - 1, f)) > 0) {
    n += got;
    if (n + 1 >= cap) {
      char *nb = realloc(buf, cap *= 2);
      if (!nb) { free(buf); buf = NULL; }
      else buf = nb;
    }
  }
  fclose(f);
  if (buf) buf[n] = '\0';
  if (len) *len = n;
  return buf;
}

static size_t count_lines(const char *text) {
  size_t n = 0;
  for (const char *p = text; *p; p++) n += *p == '\n';
  return n;
}

static const char PROFILE_PREFIX[] = "z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh";

/* Header of profile.csv starts with the documented columns (more may follow after a comma). */
static void check_profile(const char *dir, size_t nodes) {
  char p[1200];
  path_in(p, sizeof p, dir, "profile.csv");
  char *t = slurp(p, NULL);
  assert_non_null(t);
  size_t k = strlen(PROFILE_PREFIX);
  if (strncmp(t, PROFILE_PREFIX, k) != 0 || (t[k] != '\n' && t[k] != ',')) {
    print_error("profile.csv header: %.80s\n", t);
    fail();
  }
  /* header + one line per node */
  assert_int_equal(count_lines(t), nodes + 1);
  free(t);
}

/* ---- 1. plain CSV ------------------------------------------------------------------------ */
static void csv_plain(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "plain", dir, sizeof dir);
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_output_csv_dir(fx->res, dir, 0, &err), EW_OK);
  size_t nodes = ew_result_node_count(fx->res), ns = ew_result_state_count(fx->res);
  check_profile(dir, nodes);

  /* levels.csv: header + one row per state, in result order */
  path_in(p, sizeof p, dir, "levels.csv");
  char *t = slurp(p, NULL);
  assert_non_null(t);
  assert_int_equal(count_lines(t), ns + 1);
  char *row = strchr(t, '\n') + 1;
  for (size_t i = 0; i < ns; i++) {
    const char *lab = ew_result_state(fx->res, i)->label;
    size_t l = strlen(lab);
    if (strncmp(row, lab, l) != 0 || row[l] != ',') {
      print_error("levels.csv row %zu: want label %s, got %.40s\n", i + 1, lab, row);
      fail();
    }
    row = strchr(row, '\n') + 1;
  }
  free(t);

  /* lines.csv: header + one row per line */
  path_in(p, sizeof p, dir, "lines.csv");
  t = slurp(p, NULL);
  assert_non_null(t);
  assert_int_equal(count_lines(t), ew_result_line_count(fx->res) + 1);
  free(t);

  /* wavefunctions.csv plain, no .gz, no temporaries; exactly the four files */
  path_in(p, sizeof p, dir, "wavefunctions.csv");
  assert_true(exists(p));
  t = slurp(p, NULL);
  assert_non_null(t);
  assert_int_equal(count_lines(t), nodes + 1);
  assert_memory_equal(t, "z_nm,", 5);
  free(t);
  path_in(p, sizeof p, dir, "wavefunctions.csv.gz");
  assert_false(exists(p));
  assert_int_equal(count_hidden(dir), 0);
  assert_int_equal(count_entries(dir, NULL), 4);
}

/* gzip = −1 (automatic) for a table this small writes plain text. */
static void csv_auto_small_is_plain(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "auto", dir, sizeof dir);
  assert_int_equal(ew_output_csv_dir(fx->res, dir, -1, NULL), EW_OK);
  path_in(p, sizeof p, dir, "wavefunctions.csv");
  assert_true(exists(p));
  path_in(p, sizeof p, dir, "wavefunctions.csv.gz");
  assert_false(exists(p));
}

/* ---- 2. gzip CSV, read back through zlib ------------------------------------------------- */
/* Split a CSV line in place on commas; returns the number of fields (at most max). */
static size_t split_csv(char *line, char **field, size_t max) {
  size_t n = 0;
  char *p = line;
  line[strcspn(line, "\r\n")] = '\0';
  while (n < max) {
    field[n++] = p;
    char *c = strchr(p, ',');
    if (!c) break;
    *c = '\0';
    p = c + 1;
  }
  return n;
}

static void csv_gzip_read_back(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "gzip", dir, sizeof dir);
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_output_csv_dir(fx->res, dir, 1, &err), EW_OK);
  size_t nodes = ew_result_node_count(fx->res), ns = ew_result_state_count(fx->res);
  assert_true(ns >= 3); /* e1, hh1, lh1 at least: the fixture is deep enough */
  check_profile(dir, nodes); /* profile.csv stays plain text with gzip = 1 */

  path_in(p, sizeof p, dir, "wavefunctions.csv");
  assert_false(exists(p));
  path_in(p, sizeof p, dir, "wavefunctions.csv.gz");

  /* really gzip data: gzopen would read a plain file transparently, so look at the magic */
  FILE *raw = fopen(p, "rb");
  assert_non_null(raw);
  unsigned char magic[2] = {0, 0};
  assert_int_equal(fread(magic, 1, 2, raw), 2);
  fclose(raw);
  assert_int_equal(magic[0], 0x1f);
  assert_int_equal(magic[1], 0x8b);

  gzFile gz = gzopen(p, "rb");
  assert_non_null(gz);
  size_t cap = 64 + 32 * (ns + 1);
  char *line = malloc(cap);
  char **field = calloc(ns + 2, sizeof *field);
  assert_non_null(line);
  assert_non_null(field);

  /* header: z_nm then the state labels in result order */
  assert_non_null(gzgets(gz, line, (int)cap));
  assert_int_equal(split_csv(line, field, ns + 2), ns + 1);
  assert_string_equal(field[0], "z_nm");
  for (size_t j = 0; j < ns; j++) assert_string_equal(field[j + 1], ew_result_state(fx->res, j)->label);

  const double *z = ew_result_z_nm(fx->res);
  size_t e1 = ns;
  for (size_t j = 0; j < ns; j++)
    if (!strcmp(ew_result_state(fx->res, j)->label, "e1")) e1 = j;
  assert_true(e1 < ns);
  const double *psi_e1 = ew_result_wavefunction(fx->res, e1);

  double *zr = calloc(nodes, sizeof *zr), *pr = calloc(nodes, sizeof *pr);
  assert_non_null(zr);
  assert_non_null(pr);
  size_t rows = 0;
  size_t bad_psi = 0;
  while (gzgets(gz, line, (int)cap)) {
    if (strlen(line) == cap - 1 && line[cap - 2] != '\n') {
      print_error("wavefunctions row %zu longer than %zu bytes\n", rows + 1, cap);
      fail();
    }
    size_t nf = split_csv(line, field, ns + 2);
    if (nf != ns + 1) {
      print_error("wavefunctions row %zu has %zu columns, want %zu\n", rows + 1, nf, ns + 1);
      fail();
    }
    if (rows >= nodes) {
      rows++;
      continue; /* counted, reported below */
    }
    for (size_t c = 0; c < nf; c++) {
      char *end;
      errno = 0;
      double v = strtod(field[c], &end);
      if (end == field[c] || *end != '\0' || errno != 0 || !isfinite(v)) {
        print_error("wavefunctions row %zu column %zu: not a number: '%s'\n", rows + 1, c + 1,
                    field[c]);
        fail();
      }
      if (c == 0) zr[rows] = v;
      if (c == e1 + 1) pr[rows] = v;
      if (c >= 1) { /* %.6e: 7 significant digits, relative rounding <= 5e-7 */
        double want = ew_result_wavefunction(fx->res, c - 1)[rows];
        if (fabs(v - want) > 1e-6 * fabs(want) + 1e-300) bad_psi++;
      }
    }
    /* z written with %.6f: within 5e-7 nm of the grid node */
    TU_NEAR(zr[rows], z[rows], 1e-6, "z printed with 6 decimals");
    rows++;
  }
  assert_int_equal(gzeof(gz), 1);
  assert_int_equal(gzclose(gz), Z_OK);
  assert_int_equal(rows, nodes);
  assert_int_equal(bad_psi, 0); /* every ψ value equals the result's to print precision */

  /* ∫ψ² dz of e1 by the trapezoid rule on the nodes, with ψ = 0 on the outer faces z = 0
   * and z = L (the grid's hard walls): Σ w_i ψ_i², w_i = (z_{i+1} − z_{i−1}) / 2.  The result
   * is normalised ∫|ψ|² = 1 on this rule; printing to 7 significant digits and the
   * wall terms keep it within 1e-3. */
  double L = fx->st->total_nm, sum = 0, sum_mem = 0;
  for (size_t i = 0; i < nodes; i++) {
    double zl = i ? zr[i - 1] : 0.0, zh = i + 1 < nodes ? zr[i + 1] : L;
    sum += 0.5 * (zh - zl) * pr[i] * pr[i];
    sum_mem += 0.5 * (zh - zl) * psi_e1[i] * psi_e1[i];
  }
  TU_NEAR(sum, 1.0, 1e-3, "e1 read back from the .gz is normalised (trapezoid rule)");
  TU_NEAR(sum, sum_mem, 1e-5, "the file's e1 integrates like the in-memory one");

  free(zr);
  free(pr);
  free(field);
  free(line);
  assert_int_equal(count_hidden(dir), 0);
}

/* ---- 3. failed writes leave nothing behind --------------------------------------------------- */
/* The output path's parent is a regular file: works for root as well. */
static void csv_parent_is_file(void **state) {
  fixture *fx = *state;
  char dir[1024], file[1200], target[1300];
  fresh_dir(fx, "notdir", dir, sizeof dir);
  path_in(file, sizeof file, dir, "regular");
  FILE *f = fopen(file, "w");
  assert_non_null(f);
  fputs("not a directory\n", f);
  fclose(f);
  snprintf(target, sizeof target, "%s/out", file);
  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_output_csv_dir(fx->res, target, 0, &err), EW_ERR_IO);
  assert_int_equal(err.code, EW_ERR_IO);
  assert_true(err.message[0] != '\0');
  assert_int_equal(ew_output_check_dir(target, NULL), EW_ERR_IO);
  /* nothing was created next to the regular file, and the file is untouched */
  assert_int_equal(count_entries(dir, NULL), 1);
  char *t = slurp(file, NULL);
  assert_non_null(t);
  assert_string_equal(t, "not a directory\n");
  free(t);
}

/* The output path is itself a regular file. */
static void csv_path_is_file(void **state) {
  fixture *fx = *state;
  char dir[1024], file[1200];
  fresh_dir(fx, "isfile", dir, sizeof dir);
  path_in(file, sizeof file, dir, "regular");
  FILE *f = fopen(file, "w");
  assert_non_null(f);
  fclose(f);
  assert_int_equal(ew_output_csv_dir(fx->res, file, 1, NULL), EW_ERR_IO);
  assert_int_equal(count_entries(dir, NULL), 1);
}

/* A read-only directory: root ignores the permission, so this runs only as a normal user
 * (csv_parent_is_file covers the failure for root). */
static void csv_readonly_dir(void **state) {
  fixture *fx = *state;
  if (geteuid() == 0) {
    print_message("skipped: running as root, which can write into a read-only directory\n");
    skip();
  }
  char dir[1024];
  fresh_dir(fx, "readonly", dir, sizeof dir);
  assert_int_equal(chmod(dir, 0500), 0);
  ew_error err;
  memset(&err, 0, sizeof err);
  ew_status st = ew_output_csv_dir(fx->res, dir, 1, &err);
  int left = count_entries(dir, NULL);
  chmod(dir, 0700);
  assert_int_equal(st, EW_ERR_IO);
  assert_int_equal(left, 0); /* no temporaries, no partial files */
}

/* Writing twice into the same directory replaces the files and leaves no temporaries. */
static void csv_overwrite(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "overwrite", dir, sizeof dir);
  path_in(p, sizeof p, dir, "profile.csv");
  FILE *f = fopen(p, "w");
  assert_non_null(f);
  fputs("stale\n", f);
  fclose(f);
  assert_int_equal(ew_output_csv_dir(fx->res, dir, 0, NULL), EW_OK);
  assert_int_equal(ew_output_csv_dir(fx->res, dir, 0, NULL), EW_OK);
  check_profile(dir, ew_result_node_count(fx->res));
  assert_int_equal(count_hidden(dir), 0);
  assert_int_equal(count_entries(dir, NULL), 4);
}

/* output.h: "an error leaves no partial file and the previous result intact".  The one
 * failure that can be staged as root is a rename: a directory stands where
 * wavefunctions.csv (the last file) should go.  The earlier result must then be left as a
 * whole — not profile/levels/lines from the new result next to the old wavefunctions. */
static void csv_rename_failure_keeps_previous(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "rename", dir, sizeof dir);
  const char *old[] = {"profile.csv", "levels.csv", "lines.csv"};
  for (size_t k = 0; k < 3; k++) {
    path_in(p, sizeof p, dir, old[k]);
    FILE *f = fopen(p, "w");
    assert_non_null(f);
    fputs("previous\n", f);
    fclose(f);
  }
  path_in(p, sizeof p, dir, "wavefunctions.csv");
  assert_int_equal(mkdir(p, 0700), 0);
  char keep[1300];
  snprintf(keep, sizeof keep, "%s/keep", p); /* non-empty: rename onto it must fail */
  FILE *f = fopen(keep, "w");
  assert_non_null(f);
  fclose(f);

  ew_error err;
  memset(&err, 0, sizeof err);
  assert_int_equal(ew_output_csv_dir(fx->res, dir, 0, &err), EW_ERR_IO);
  assert_int_equal(count_hidden(dir), 0); /* no temporaries left */
  for (size_t k = 0; k < 3; k++) {
    path_in(p, sizeof p, dir, old[k]);
    char *t = slurp(p, NULL);
    assert_non_null(t);
    if (strcmp(t, "previous\n") != 0) {
      print_error("%s was replaced although the write failed (%s): the directory now mixes "
                  "the new result with the previous one\n", old[k], err.message);
      free(t);
      fail();
    }
    free(t);
  }
}

/* ---- 3b. RFC 4180 quoting ------------------------------------------------------------------ */
/* A small RFC 4180 reader, independent of the writer (RFC 4180 section 2: fields separated by
 * commas, records by line breaks; a field in double quotes may hold commas, quotes written
 * twice, CR and LF).  Records end in LF or CRLF.  Fills rows[r][c] with malloc'd cells;
 * returns the number of records, or −1 on a syntax error (a quote inside an unquoted field,
 * text after a closing quote, an unterminated quoted field). */
enum { CSV_MAX_ROWS = 2048, CSV_MAX_COLS = 32 };
typedef struct {
  char *cell[CSV_MAX_ROWS][CSV_MAX_COLS];
  size_t ncols[CSV_MAX_ROWS];
} csv_table;

static long rfc4180_parse(const char *t, csv_table *tab) {
  long nr = 0;
  const char *p = t;
  while (*p) {
    if (nr >= CSV_MAX_ROWS) return -1;
    size_t nc = 0;
    for (;;) { /* one field */
      char *buf = malloc(strlen(p) + 1);
      size_t n = 0;
      if (!buf) return -1;
      if (*p == '"') {
        for (p++;; p++) {
          if (!*p) return free(buf), -1;
          if (*p == '"') {
            if (p[1] != '"') break;
            p++;
          }
          buf[n++] = *p;
        }
        p++; /* the closing quote */
        if (*p && *p != ',' && *p != '\n' && !(*p == '\r' && p[1] == '\n')) return free(buf), -1;
      } else {
        for (; *p && *p != ',' && *p != '\n' && !(*p == '\r' && p[1] == '\n'); p++) {
          if (*p == '"') return free(buf), -1;
          buf[n++] = *p;
        }
      }
      buf[n] = '\0';
      if (nc >= CSV_MAX_COLS) return free(buf), -1;
      tab->cell[nr][nc++] = buf;
      if (*p == ',') {
        p++;
        continue;
      }
      if (*p == '\r') p++;
      if (*p == '\n') p++;
      break;
    }
    tab->ncols[nr++] = nc;
  }
  return nr;
}

static void csv_table_free(csv_table *tab, long nr) {
  for (long r = 0; r < nr; r++)
    for (size_t c = 0; c < tab->ncols[r]; c++) free(tab->cell[r][c]);
}

/* Column index of name in the header row; fails when missing. */
static size_t csv_col(const csv_table *tab, const char *name) {
  for (size_t c = 0; c < tab->ncols[0]; c++)
    if (!strcmp(tab->cell[0][c], name)) return c;
  fail_msg("no column %s", name);
  return 0;
}

static csv_table *read_csv(const char *dir, const char *name, long *nr) {
  char p[1200];
  path_in(p, sizeof p, dir, name);
  char *t = slurp(p, NULL);
  assert_non_null(t);
  csv_table *tab = calloc(1, sizeof *tab);
  assert_non_null(tab);
  *nr = rfc4180_parse(t, tab);
  free(t);
  if (*nr < 1) fail_msg("%s is not RFC 4180 CSV", name);
  for (long r = 1; r < *nr; r++) /* every record has the header's field count (RFC 4180 2.4) */
    if (tab->ncols[r] != tab->ncols[0])
      fail_msg("%s record %ld: %zu fields, header %zu", name, r, tab->ncols[r], tab->ncols[0]);
  return tab;
}

/* Layer names with a comma, a quote and a line break: profile.csv and levels.csv still parse
 * into the documented columns, and the parsed cells are the library's values.  Tolerances:
 * half a unit in the last printed decimal (%.6f, %.8f, %.10f), doubled for safety. */
static void csv_quotes_layer_names(void **state) {
  fixture *fx = *state;
  static const char *const names[3] = {"left, barrier", "well \"A\"", "right\r\nbarrier"};
  char saved[3][EW_NAME_MAX];
  for (int k = 0; k < 3; k++) {
    memcpy(saved[k], fx->st->layers[k].name, EW_NAME_MAX);
    snprintf(fx->st->layers[k].name, EW_NAME_MAX, "%s", names[k]);
  }
  char dir[1024];
  fresh_dir(fx, "quoted", dir, sizeof dir);
  ew_status rc = ew_output_csv_dir(fx->res, dir, 0, NULL);
  for (int k = 0; k < 3; k++) memcpy(fx->st->layers[k].name, saved[k], EW_NAME_MAX);
  assert_int_equal(rc, EW_OK);

  const ew_result *r = fx->res;
  size_t nodes = ew_result_node_count(r);
  const double *z = ew_result_z_nm(r), *ec = ew_result_edge_eV(r, EW_BAND_E);
  long nr;
  csv_table *tab = read_csv(dir, "profile.csv", &nr);
  assert_int_equal(nr, (long)nodes + 1);
  assert_int_equal(tab->ncols[0], 14);
  size_t cz = csv_col(tab, "z_nm"), cec = csv_col(tab, "Ec_eV"), cl = csv_col(tab, "layer");
  for (size_t i = 0; i < nodes; i++) {
    char **row = tab->cell[i + 1];
    TU_NEAR(strtod(row[cz], NULL), z[i], 1e-6, "z_nm printed with %.6f");
    TU_NEAR(strtod(row[cec], NULL), ec[i], 1e-8, "Ec_eV printed with %.8f");
    const char *want = names[r->grid->layer[i]];
    if (strcmp(row[cl], want))
      fail_msg("profile.csv node %zu: layer \"%s\", want \"%s\"", i, row[cl], want);
  }
  csv_table_free(tab, nr);
  free(tab);

  size_t ns = ew_result_state_count(r);
  tab = read_csv(dir, "levels.csv", &nr);
  assert_int_equal(nr, (long)ns + 1);
  assert_int_equal(tab->ncols[0], 15); /* … below_top_eV, dos_mass_m0 */
  size_t clab = csv_col(tab, "label"), ce = csv_col(tab, "energy_eV");
  cl = csv_col(tab, "layer");
  for (size_t i = 0; i < ns; i++) {
    const ew_state *s = ew_result_state(r, i);
    char **row = tab->cell[i + 1];
    assert_string_equal(row[clab], s->label);
    TU_NEAR(strtod(row[ce], NULL), s->energy_eV, 1e-10, "energy_eV printed with %.10f");
    assert_string_equal(row[cl], names[s->layer]);
  }
  csv_table_free(tab, nr);
  free(tab);
}

/* ---- 4. JSON and table ------------------------------------------------------------------------ */
/* Brackets and braces balance outside strings, never close below zero, and the text is one
 * object followed only by whitespace. */
static void check_balanced(const char *t) {
  int brace = 0, bracket = 0, in_str = 0, closed = 0;
  for (const char *p = t; *p; p++) {
    if (closed) {
      if (*p != '\n' && *p != ' ') {
        print_error("text after the closing brace at offset %ld\n", (long)(p - t));
        fail();
      }
      continue;
    }
    if (in_str) {
      if (*p == '\\' && p[1]) p++;
      else if (*p == '"') in_str = 0;
      continue;
    }
    switch (*p) {
    case '"': in_str = 1; break;
    case '{': brace++; break;
    case '}': brace--; if (brace == 0 && bracket == 0) closed = 1; break;
    case '[': bracket++; break;
    case ']': bracket--; break;
    default: break;
    }
    if (brace < 0 || bracket < 0) {
      print_error("unbalanced close at offset %ld\n", (long)(p - t));
      fail();
    }
  }
  assert_false(in_str);
  assert_int_equal(brace, 0);
  assert_int_equal(bracket, 0);
  assert_true(closed);
}

static char *capture(void (*fn)(const ew_result *, FILE *), const ew_result *r) {
  FILE *f = tmpfile();
  assert_non_null(f);
  fn(r, f);
  assert_int_equal(fflush(f), 0);
  long n = ftell(f);
  assert_true(n > 0);
  rewind(f);
  char *t = malloc((size_t)n + 1);
  assert_non_null(t);
  assert_int_equal(fread(t, 1, (size_t)n, f), (size_t)n);
  t[n] = '\0';
  fclose(f);
  return t;
}

static size_t count_sub(const char *t, const char *sub) {
  size_t n = 0;
  for (const char *p = strstr(t, sub); p; p = strstr(p + 1, sub)) n++;
  return n;
}

static void json_output(void **state) {
  fixture *fx = *state;
  char *t = capture(ew_output_json, fx->res);
  assert_true(t[0] == '{');
  assert_non_null(strstr(t, "\"states\":["));
  assert_non_null(strstr(t, "\"transitions\":["));
  check_balanced(t);
  /* one object per state and per line */
  assert_int_equal(count_sub(t, "\"label\":"), ew_result_state_count(fx->res));
  assert_int_equal(count_sub(t, "\"kind\":"), ew_result_line_count(fx->res));
  assert_non_null(strstr(t, "\"label\":\"e1\""));
  free(t);
}

/* A stack whose layer name needs escaping still gives balanced JSON. */
static void json_escapes_names(void **state) {
  fixture *fx = *state;
  char saved[EW_NAME_MAX];
  memcpy(saved, fx->st->layers[1].name, sizeof saved);
  snprintf(fx->st->layers[1].name, sizeof fx->st->layers[1].name, "we\"ll\\{[");
  char *t = capture(ew_output_json, fx->res);
  memcpy(fx->st->layers[1].name, saved, sizeof saved);
  check_balanced(t);
  assert_non_null(strstr(t, "\"we\\\"ll\\\\{[\""));
  free(t);
}

/* RFC 8259 section 7: control characters must be escaped, and the text must be UTF-8
 * (section 8.1), so a byte that is not part of valid UTF-8 becomes U+FFFD; valid multibyte
 * characters pass through unchanged. */
static void json_escapes_controls_and_bad_utf8(void **state) {
  fixture *fx = *state;
  char saved[EW_NAME_MAX];
  memcpy(saved, fx->st->layers[1].name, sizeof saved);
  snprintf(fx->st->layers[1].name, sizeof fx->st->layers[1].name, "a\x01\tb\xff\xc3\xa9\xe2\x82");
  char *t = capture(ew_output_json, fx->res);
  memcpy(fx->st->layers[1].name, saved, sizeof saved);
  check_balanced(t);
  assert_non_null(strstr(t, "\"a\\u0001\\u0009b\\ufffd\xc3\xa9\\ufffd\\ufffd\""));
  free(t);
}

static void table_output(void **state) {
  fixture *fx = *state;
  char *t = capture(ew_output_table, fx->res);
  for (size_t i = 0; i < ew_result_state_count(fx->res); i++) {
    char want[40];
    snprintf(want, sizeof want, "\n  %s ", ew_result_state(fx->res, i)->label);
    if (!strstr(t, want)) {
      print_error("table has no row for %s\n", ew_result_state(fx->res, i)->label);
      fail();
    }
  }
  assert_non_null(strstr(t, "Bound levels"));
  free(t);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(csv_plain),
      cmocka_unit_test(csv_auto_small_is_plain),
      cmocka_unit_test(csv_gzip_read_back),
      cmocka_unit_test(csv_parent_is_file),
      cmocka_unit_test(csv_path_is_file),
      cmocka_unit_test(csv_readonly_dir),
      cmocka_unit_test(csv_overwrite),
      cmocka_unit_test(csv_rename_failure_keeps_previous),
      cmocka_unit_test(csv_quotes_layer_names),
      cmocka_unit_test(json_output),
      cmocka_unit_test(json_escapes_names),
      cmocka_unit_test(json_escapes_controls_and_bad_utf8),
      cmocka_unit_test(table_output),
  };
  return cmocka_run_group_tests_name("output", tests, group_setup, group_teardown);
}
