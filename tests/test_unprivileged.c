/* test_unprivileged.c — the library's permission failures, which mean nothing to root (it
 * reads and writes anything): when the suite runs as root, each check runs in a child process
 * that first drops to nobody:nogroup (uid/gid 65534), on a directory handed to that user, so
 * that the mode bits decide.  Otherwise it runs as the calling user.  Checks (README
 * "Output reference", "Robustness"): an unreadable stack file is EW_ERR_IO naming the file; a
 * read-only output directory is EW_ERR_IO from ew_output_check_dir and ew_output_csv_dir,
 * and nothing is left in it; a control in the same directory writable succeeds. */
#define _DEFAULT_SOURCE /* setgroups */
#include <grp.h>
#include <math.h>
#include <sys/wait.h>

#include "testutil.h"

#include "epiwell.h"
#include "output.h"

#define NOBODY 65534

static char tmp[1024];

/* Run fn(arg) as an unprivileged user; returns its exit status (0 = every check held). */
static int as_unprivileged(int (*fn)(const char *), const char *arg) {
  pid_t pid = fork();
  if (pid < 0) return -1;
  if (pid == 0) {
    if (geteuid() == 0 && (setgroups(0, NULL) != 0 || setgid(NOBODY) != 0 || setuid(NOBODY) != 0))
      _exit(100);
    if (geteuid() == 0) _exit(101); /* still root: the checks would prove nothing */
    _exit(fn(arg));
  }
  int st = 0;
  if (waitpid(pid, &st, 0) != pid || !WIFEXITED(st)) return -1;
  return WEXITSTATUS(st);
}

/* a path the unprivileged user owns (root hands it over) */
static void hand_over(const char *path) {
  if (geteuid() == 0) assert_int_equal(chown(path, NOBODY, NOBODY), 0);
}

static int read_stack(const char *path) {
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_error err;
  memset(&err, 0, sizeof err);
  if (ew_catalogue_load("materials", &cat, &err) != EW_OK) return 10;
  ew_status rc = ew_stack_read_file(path, cat, &st, &err);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  if (rc == EW_OK) return 0;
  if (rc != EW_ERR_IO) return 11;
  return strstr(err.message, "unreadable") || strstr(err.file, "unreadable") ? 1 : 12;
}

static void unreadable_stack_file(void **state) {
  (void)state;
  char path[1200], text[4096];
  snprintf(path, sizeof path, "%s/unreadable.cfg", tmp);
  FILE *in = fopen("examples/detector_well.cfg", "r"), *out = fopen(path, "w");
  assert_true(in && out);
  size_t n = fread(text, 1, sizeof text, in);
  assert_int_equal(fwrite(text, 1, n, out), n);
  fclose(in);
  assert_int_equal(fclose(out), 0);
  hand_over(path);
  assert_int_equal(as_unprivileged(read_stack, path), 0); /* control: readable */
  assert_int_equal(chmod(path, 0), 0);
  assert_int_equal(as_unprivileged(read_stack, path), 1); /* EW_ERR_IO naming the file */
}

/* 0: written; 1: refused by both calls with EW_ERR_IO and nothing left in dir */
static int write_csv(const char *dir) {
  ew_catalogue *cat = NULL;
  ew_stack *st = NULL;
  ew_result *r = NULL;
  ew_error err;
  int rc = 10;
  if (ew_catalogue_load("materials", &cat, &err) == EW_OK &&
      ew_stack_read_file("examples/detector_well.cfg", cat, &st, &err) == EW_OK &&
      ew_solve(st, NULL, &r, &err) == EW_OK) {
    ew_status a = ew_output_check_dir(dir, &err), b = ew_output_csv_dir(r, dir, 0, &err);
    if (a == EW_OK && b == EW_OK) rc = 0;
    else if (a == EW_ERR_IO && b == EW_ERR_IO) rc = 1;
    else rc = 11;
  }
  ew_result_free(r);
  ew_stack_free(st);
  ew_catalogue_free(cat);
  return rc;
}

static size_t entries(const char *dir) {
  DIR *d = opendir(dir);
  size_t n = 0;
  struct dirent *e;
  while (d && (e = readdir(d)) != NULL) n += strcmp(e->d_name, ".") && strcmp(e->d_name, "..");
  if (d) closedir(d);
  return n;
}

static void readonly_output_directory(void **state) {
  (void)state;
  char ok[1200], ro[1200];
  snprintf(ok, sizeof ok, "%s/writable", tmp);
  snprintf(ro, sizeof ro, "%s/readonly", tmp);
  assert_int_equal(mkdir(ok, 0755), 0);
  assert_int_equal(mkdir(ro, 0755), 0);
  hand_over(ok);
  hand_over(ro);
  assert_int_equal(as_unprivileged(write_csv, ok), 0); /* control */
  assert_int_equal(entries(ok), 4);                    /* profile, levels, lines, waves */
  assert_int_equal(chmod(ro, 0555), 0);
  assert_int_equal(as_unprivileged(write_csv, ro), 1);
  assert_int_equal(entries(ro), 0); /* no temporaries, no partial files */
  chmod(ro, 0755);
}

static int setup(void **state) {
  (void)state;
  if (tu_mkdtemp("unpriv", tmp, sizeof tmp) != 0) return -1;
  return chmod(tmp, 0755); /* the unprivileged user must reach its files */
}
static int teardown(void **state) {
  (void)state;
  tu_rm_tree(tmp);
  return 0;
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(unreadable_stack_file),
      cmocka_unit_test(readonly_output_directory),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
