/* test_writers.c — the output building blocks on their own: atomic.c (a file and a set
 * appear whole or not at all; a failed commit leaves every previous target and no
 * temporary), json_writer.c (RFC 8259 text with the project's layout) and csv_writer.c
 * (RFC 4180 quoting).  Expected texts are written out by hand from the two RFCs. */
#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <sys/stat.h>
#include <unistd.h>

#include "testutil.h"

#include "atomic.h"
#include "csv_writer.h"
#include "json_writer.h"

typedef struct {
  char base[512];
  int seq;
} fixture;

static int group_setup(void **state) {
  static fixture fx;
  if (tu_mkdtemp("writers", fx.base, sizeof fx.base)) return -1;
  *state = &fx;
  return 0;
}

static int group_teardown(void **state) {
  fixture *fx = *state;
  tu_rm_tree(fx->base);
  return 0;
}

static void fresh_dir(fixture *fx, const char *tag, char *out, size_t size) {
  snprintf(out, size, "%s/%03d-%s", fx->base, fx->seq++, tag);
  assert_int_equal(mkdir(out, 0700), 0);
}

static int count_entries(const char *dir) {
  DIR *d = opendir(dir);
  if (!d) return -1;
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL)
    if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) n++;
  closedir(d);
  return n;
}

static void put_file(const char *path, const char *text) {
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fputs(text, f);
  assert_int_equal(fclose(f), 0);
}

/* Contents of a small file must be want. */
static void expect_file(const char *path, const char *want) {
  char buf[256] = {0};
  FILE *f = fopen(path, "r");
  if (!f) fail_msg("%s missing: %s", path, strerror(errno));
  size_t n = fread(buf, 1, sizeof buf - 1, f);
  fclose(f);
  buf[n] = '\0';
  if (strcmp(buf, want)) fail_msg("%s holds \"%s\", want \"%s\"", path, buf, want);
}

/* ---- atomic.c ---------------------------------------------------------------------------- */
/* One file: nothing at the target until the commit; then the text and no temporary.  An
 * abort leaves the previous content. */
static void atomic_file_commit_and_abort(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "one", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/out.txt", dir);
  ew_atomic_file a;
  ew_error err = {0};
  assert_int_equal(ew_atomic_open(&a, p, &err), EW_OK);
  fputs("new\n", a.f);
  assert_int_equal(access(p, F_OK), -1); /* not there before the commit */
  assert_int_equal(ew_atomic_commit(&a, &err), EW_OK);
  expect_file(p, "new\n");
  assert_int_equal(count_entries(dir), 1);

  assert_int_equal(ew_atomic_open(&a, p, &err), EW_OK);
  fputs("half", a.f);
  ew_atomic_abort(&a);
  expect_file(p, "new\n");
  assert_int_equal(count_entries(dir), 1);
}

/* A target that is a directory is refused before anything is made. */
static void atomic_target_not_regular(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "notreg", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/sub", dir);
  assert_int_equal(mkdir(p, 0700), 0);
  ew_atomic_file a;
  ew_error err = {0};
  assert_int_equal(ew_atomic_open(&a, p, &err), EW_ERR_IO);
  assert_string_equal(err.file, p);
  assert_int_equal(count_entries(dir), 1);
}

/* A set whose second member cannot be renamed in (its temporary vanished): the first
 * target, already replaced, is put back; the second keeps its previous content; no
 * temporary or moved-aside file is left. */
static void atomic_set_undo(void **state) {
  fixture *fx = *state;
  char dir[1024], p1[1200], p2[1200];
  fresh_dir(fx, "set", dir, sizeof dir);
  snprintf(p1, sizeof p1, "%s/a.csv", dir);
  snprintf(p2, sizeof p2, "%s/b.csv", dir);
  put_file(p1, "old a\n");
  put_file(p2, "old b\n");
  ew_atomic_set s;
  ew_atomic_set_init(&s);
  ew_atomic_file *m1, *m2;
  ew_error err = {0};
  assert_int_equal(ew_atomic_set_add(&s, p1, &m1, &err), EW_OK);
  assert_int_equal(ew_atomic_set_add(&s, p2, &m2, &err), EW_OK);
  fputs("new a\n", m1->f);
  fputs("new b\n", m2->f);
  assert_int_equal(ew_atomic_close(m2, &err), EW_OK);
  assert_int_equal(remove(m2->tmp), 0);
  assert_int_equal(ew_atomic_set_commit(&s, &err), EW_ERR_IO);
  assert_string_equal(err.file, p2);
  expect_file(p1, "old a\n");
  expect_file(p2, "old b\n");
  assert_int_equal(count_entries(dir), 2);

  /* the same set written properly replaces both */
  ew_atomic_set_init(&s);
  assert_int_equal(ew_atomic_set_add(&s, p1, &m1, &err), EW_OK);
  assert_int_equal(ew_atomic_set_add_fd(&s, p2, &m2, &err), EW_OK);
  fputs("new a\n", m1->f);
  assert_int_equal(write(m2->fd, "new b\n", 6), 6);
  assert_int_equal(ew_atomic_set_commit(&s, &err), EW_OK);
  expect_file(p1, "new a\n");
  expect_file(p2, "new b\n");
  assert_int_equal(count_entries(dir), 2);
}

/* ---- json_writer.c ----------------------------------------------------------------------- */
static char *capture_json(void (*fill)(ew_json *), int *finish) {
  FILE *f = tmpfile();
  assert_non_null(f);
  ew_json j;
  ew_json_init(&j, f);
  fill(&j);
  *finish = ew_json_finish(&j);
  long n = ftell(f);
  rewind(f);
  char *t = calloc((size_t)n + 1, 1);
  assert_non_null(t);
  assert_int_equal(fread(t, 1, (size_t)n, f), (size_t)n);
  fclose(f);
  return t;
}

static void fill_sweep_like(ew_json *j) {
  ew_json_begin_object(j);
  ew_json_key_str(j, "stack", "a\"b");
  ew_json_key(j, "columns");
  ew_json_begin_array(j);
  ew_json_str(j, "x");
  ew_json_str(j, NULL);
  ew_json_end_array(j);
  ew_json_key(j, "points");
  ew_json_begin_array(j);
  for (int k = 0; k < 2; k++) {
    ew_json_newline(j);
    ew_json_begin_object(j);
    ew_json_key_num(j, "x", 1.5 + k);
    ew_json_key_num(j, "y", k ? INFINITY : NAN);
    ew_json_key_size(j, "n", (size_t)k);
    ew_json_key_bool(j, "ok", k);
    ew_json_end_object(j);
  }
  ew_json_end_array(j);
  ew_json_end_object(j);
}

/* Commas between members and elements only (RFC 8259 sections 4 and 5), no NaN or
 * infinity (section 6: not JSON numbers, so null), the sweep layout of one point a line. */
static void json_layout(void **state) {
  (void)state;
  int fin;
  char *t = capture_json(fill_sweep_like, &fin);
  assert_int_equal(fin, 0);
  assert_string_equal(t, "{\"stack\":\"a\\\"b\",\"columns\":[\"x\",null],\"points\":[\n"
                         "{\"x\":1.5,\"y\":null,\"n\":0,\"ok\":false},\n"
                         "{\"x\":2.5,\"y\":null,\"n\":1,\"ok\":true}]}\n");
  free(t);
}

static void fill_unbalanced(ew_json *j) {
  ew_json_begin_object(j);
  ew_json_key(j, "a");
  ew_json_end_object(j); /* a key without its value */
}

static void json_reports_misuse(void **state) {
  (void)state;
  int fin;
  char *t = capture_json(fill_unbalanced, &fin);
  assert_int_equal(fin, -1);
  free(t);
}

/* ---- csv_writer.c ------------------------------------------------------------------------ */
static int to_buffer(void *ctx, const char *data, size_t len) {
  char *b = ctx;
  size_t n = strlen(b);
  if (n + len >= 256) return 1;
  memcpy(b + n, data, len);
  b[n + len] = '\0';
  return 0;
}

/* RFC 4180 section 2, rules 5–7: a field with a comma, quote, CR or LF is enclosed in
 * double quotes and a quote inside it is doubled; other fields stay bare. */
static void csv_quoting(void **state) {
  (void)state;
  char buf[256] = "";
  ew_csv c;
  ew_csv_init(&c, to_buffer, buf);
  static const char *const head[] = {"name", "v"};
  ew_csv_header(&c, 2, head);
  ew_csv_text(&c, "left, barrier");
  ew_csv_text(&c, "say \"hi\"");
  ew_csv_text(&c, "two\r\nlines");
  ew_csv_text(&c, "plain");
  ew_csv_end_row(&c);
  ew_csv_number(&c, NAN);
  ew_csv_number(&c, 0.1);
  ew_csv_format(&c, "%.3f", -2.0);
  ew_csv_int(&c, -7);
  ew_csv_empty(&c);
  ew_csv_end_row(&c);
  assert_false(ew_csv_failed(&c));
  assert_string_equal(buf, "name,v\n"
                           "\"left, barrier\",\"say \"\"hi\"\"\",\"two\r\nlines\",plain\n"
                           ",0.1,-2.000,-7,\n");
}

/* Formula starts (OWASP "CSV Injection": cells beginning with = + - @ tab or CR are run by
 * spreadsheets) are written quoted with a leading single quote; a number cell that is negative
 * (written by ew_csv_format/_number) and text starting elsewhere are untouched. */
static void csv_formula_neutralised(void **state) {
  (void)state;
  char buf[256] = "";
  ew_csv c;
  ew_csv_init(&c, to_buffer, buf);
  ew_csv_text(&c, "=HYPERLINK(\"x\")");
  ew_csv_text(&c, "+1");
  ew_csv_text(&c, "-cap");
  ew_csv_text(&c, "@sum");
  ew_csv_text(&c, "well=3");
  ew_csv_format(&c, "%.1f", -1.5);
  ew_csv_end_row(&c);
  assert_false(ew_csv_failed(&c));
  assert_string_equal(buf, "\"'=HYPERLINK(\"\"x\"\")\",\"'+1\",\"'-cap\",\"'@sum\",well=3,-1.5\n");
}

/* A sink that refuses to write marks the writer failed. */
static int refuse(void *ctx, const char *data, size_t len) {
  (void)ctx, (void)data, (void)len;
  return 1;
}

static void csv_write_failure(void **state) {
  (void)state;
  ew_csv c;
  ew_csv_init(&c, refuse, NULL);
  ew_csv_text(&c, "x");
  assert_true(ew_csv_failed(&c));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(atomic_file_commit_and_abort),
      cmocka_unit_test(atomic_target_not_regular),
      cmocka_unit_test(atomic_set_undo),
      cmocka_unit_test(json_layout),
      cmocka_unit_test(json_reports_misuse),
      cmocka_unit_test(csv_quoting),
      cmocka_unit_test(csv_formula_neutralised),
      cmocka_unit_test(csv_write_failure),
  };
  return cmocka_run_group_tests_name("writers", tests, group_setup, group_teardown);
}
