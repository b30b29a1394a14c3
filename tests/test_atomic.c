/* test_atomic.c — atomic.c's safety promises (atomic.h; README "Output files"): temporaries
 * are never opened through a name planted in advance, a transaction commits all of its
 * outputs or none, a directory set is locked against a second writer and swapped in whole,
 * targets that are not regular files are refused, and what a killed run left is removed by
 * the next run.  The expectations are the POSIX semantics of open(O_EXCL|O_NOFOLLOW),
 * rename(2) and fcntl record locks (common practice), checked on real files. */
#include <dirent.h>
#include <errno.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <unistd.h>

#include "testutil.h"

#include "atomic.h"

typedef struct {
  char base[512];
  int seq;
} fixture;

static int group_setup(void **state) {
  static fixture fx;
  if (tu_mkdtemp("atomic", fx.base, sizeof fx.base)) return -1;
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
  assert_int_equal(mkdir(out, 0755), 0);
}

/* Entries of dir (without . and ..); with hidden = 1 only those starting with '.'. */
static int count_entries(const char *dir, int hidden) {
  DIR *d = opendir(dir);
  if (!d) return -1;
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL)
    if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..") && (!hidden || e->d_name[0] == '.'))
      n++;
  closedir(d);
  return n;
}

static void put_file(const char *path, const char *text) {
  FILE *f = fopen(path, "w");
  assert_non_null(f);
  fputs(text, f);
  assert_int_equal(fclose(f), 0);
}

static void expect_file(const char *path, const char *want) {
  char buf[256] = {0};
  FILE *f = fopen(path, "r");
  if (!f) fail_msg("%s: %s", path, strerror(errno));
  size_t n = fread(buf, 1, sizeof buf - 1, f);
  fclose(f);
  buf[n] = '\0';
  if (strcmp(buf, want)) fail_msg("%s holds \"%s\", want \"%s\"", path, buf, want);
}

static void write_text(const char *path, const char *text) { put_file(path, text); }

/* The PID of a process that has exited and been reaped: what a killed run leaves. */
static long dead_pid(void) {
  pid_t p = fork();
  assert_true(p >= 0);
  if (p == 0) _exit(0);
  assert_int_equal(waitpid(p, NULL, 0), p);
  return (long)p;
}

/* A symbolic link planted at every name an earlier version used for temporaries and moved-
 * aside files (".BASE.tmpPID", ".BASE.tmpPID.oldPID", ".epiwell-PID-K-BASE"), at the lock
 * name and at the target itself: the file they point to is never written, and the target
 * becomes a regular file (rename(2) replaces a link, it does not follow it). */
static void planted_symlinks_not_followed(void **state) {
  fixture *fx = *state;
  char dir[1024], victim[1200], p[1200], link[1400];
  fresh_dir(fx, "plant", dir, sizeof dir);
  snprintf(victim, sizeof victim, "%s/victim", dir);
  put_file(victim, "precious\n");
  long pid = (long)getpid();
  /* the names the earlier helpers used (predictable: PID only), literal formats */
  for (int k = 0; k < 4; k++) {
    char nm[128];
    if (k == 0) snprintf(nm, sizeof nm, ".a.csv.tmp%ld", pid);
    else if (k == 1) snprintf(nm, sizeof nm, ".a.csv.tmp%ld.old%ld", pid, pid);
    else if (k == 2) snprintf(nm, sizeof nm, ".epiwell-%ld-0-a.csv", pid);
    else snprintf(nm, sizeof nm, ".set.lock.unused%ld", pid);
    snprintf(link, sizeof link, "%s/%s", dir, nm);
    assert_int_equal(symlink(victim, link), 0);
  }
  snprintf(p, sizeof p, "%s/a.csv", dir);
  assert_int_equal(symlink(victim, p), 0); /* the target itself */
  ew_atomic_file a;
  ew_error err = {0};
  assert_int_equal(ew_atomic_open(&a, p, &err), EW_OK);
  fputs("new\n", a.f);
  assert_int_equal(ew_atomic_commit(&a, &err), EW_OK);
  expect_file(victim, "precious\n");
  struct stat sb;
  assert_int_equal(lstat(p, &sb), 0);
  assert_true(S_ISREG(sb.st_mode));
  expect_file(p, "new\n");

  /* a link at the lock name of a directory set: refused, the victim untouched */
  char set[1200];
  snprintf(set, sizeof set, "%s/set", dir);
  snprintf(link, sizeof link, "%s/.set.lock", dir);
  assert_int_equal(symlink(victim, link), 0);
  ew_atomic_txn t;
  ew_atomic_txn_init(&t);
  const char *work;
  assert_int_equal(ew_atomic_txn_dir(&t, set, NULL, &work, &err), EW_ERR_IO);
  assert_non_null(strstr(err.message, "cannot lock"));
  expect_file(victim, "precious\n");
  assert_int_equal(access(set, F_OK), -1); /* nothing made */
}

/* A transaction of a directory set and two single files: abort leaves every previous output
 * and no temporary anywhere; commit puts all in place, carries over a file of the previous
 * set, drops an owned name it did not write, and gives the new set the previous one's mode. */
static void txn_all_or_nothing(void **state) {
  fixture *fx = *state;
  char dir[1024], set[1200], other[1200], f1[1300], f2[1300], p[1400];
  fresh_dir(fx, "txn", dir, sizeof dir);
  snprintf(set, sizeof set, "%s/out", dir);
  snprintf(other, sizeof other, "%s/pics", dir);
  assert_int_equal(mkdir(set, 0750), 0);
  assert_int_equal(mkdir(other, 0755), 0);
  snprintf(p, sizeof p, "%s/levels.csv", set);
  put_file(p, "old levels\n");
  snprintf(p, sizeof p, "%s/wave.gz", set);
  put_file(p, "old wave\n");
  snprintf(p, sizeof p, "%s/notes.txt", set);
  put_file(p, "mine\n");
  snprintf(f1, sizeof f1, "%s/band.svg", other);
  snprintf(f2, sizeof f2, "%s/report.html", set); /* a file into the set's directory */
  put_file(f1, "old band\n");
  static const char *const owned[] = {"levels.csv", "wave.gz", NULL};
  for (int pass = 0; pass < 2; pass++) {
    ew_atomic_txn t;
    ew_atomic_txn_init(&t);
    ew_error err = {0};
    const char *w, *w1, *w2;
    assert_int_equal(ew_atomic_txn_dir(&t, set, owned, &w, &err), EW_OK);
    assert_int_equal(ew_atomic_txn_file(&t, f1, 0, &w1, &err), EW_OK);
    assert_int_equal(ew_atomic_txn_file(&t, f2, 0, &w2, &err), EW_OK);
    assert_string_equal(strrchr(w1, '/'), "/band.svg"); /* the extension is kept */
    snprintf(p, sizeof p, "%s/levels.csv", w);
    write_text(p, "new levels\n");
    write_text(w1, "new band\n");
    write_text(w2, "report\n");
    if (pass == 0) {
      ew_atomic_txn_abort(&t);
      snprintf(p, sizeof p, "%s/levels.csv", set);
      expect_file(p, "old levels\n");
      expect_file(f1, "old band\n");
      assert_int_equal(access(f2, F_OK), -1);
      assert_int_equal(count_entries(set, 0), 3);
      assert_int_equal(count_entries(other, 0), 1);
      assert_int_equal(count_entries(dir, 1), 1); /* only the lock file beside the set */
    } else {
      assert_int_equal(ew_atomic_txn_commit(&t, &err), EW_OK);
      snprintf(p, sizeof p, "%s/levels.csv", set);
      expect_file(p, "new levels\n");
      snprintf(p, sizeof p, "%s/notes.txt", set);
      expect_file(p, "mine\n");
      snprintf(p, sizeof p, "%s/wave.gz", set);
      assert_int_equal(access(p, F_OK), -1); /* owned, not written: stale, gone */
      expect_file(f1, "new band\n");
      expect_file(f2, "report\n");
      assert_int_equal(count_entries(set, 0), 3);
      assert_int_equal(count_entries(other, 0), 1);
      assert_int_equal(count_entries(dir, 1), 1);
      struct stat sb;
      assert_int_equal(stat(set, &sb), 0);
      assert_int_equal(sb.st_mode & 07777, 0750);
    }
  }
}

/* A new set's and file's modes follow the umask as mkdir/open with 0777/0666 would
 * (POSIX), not mkdtemp's 0700. */
static void txn_modes_follow_umask(void **state) {
  fixture *fx = *state;
  char dir[1024], set[1200], p[1400];
  fresh_dir(fx, "umask", dir, sizeof dir);
  snprintf(set, sizeof set, "%s/new", dir);
  mode_t old = umask(027);
  ew_atomic_txn t;
  ew_atomic_txn_init(&t);
  ew_error err = {0};
  const char *w;
  assert_int_equal(ew_atomic_txn_dir(&t, set, NULL, &w, &err), EW_OK);
  snprintf(p, sizeof p, "%s/a.csv", set);
  const char *wf;
  assert_int_equal(ew_atomic_txn_file(&t, p, 0, &wf, &err), EW_OK);
  ew_atomic_file a;
  assert_int_equal(ew_atomic_open(&a, wf, &err), EW_OK);
  fputs("x\n", a.f);
  assert_int_equal(ew_atomic_commit(&a, &err), EW_OK);
  assert_int_equal(ew_atomic_txn_commit(&t, &err), EW_OK);
  umask(old);
  struct stat sb;
  assert_int_equal(stat(set, &sb), 0);
  assert_int_equal(sb.st_mode & 07777, 0750);
  assert_int_equal(stat(p, &sb), 0);
  assert_int_equal(sb.st_mode & 07777, 0640);
}

/* Not regular files are refused, never replaced: a FIFO, a directory where a file is
 * expected, a file where the set's directory is expected, a set holding a subdirectory. */
static void txn_refuses_non_regular(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "nonreg", dir, sizeof dir);
  ew_atomic_txn t;
  ew_atomic_txn_init(&t);
  ew_error err = {0};
  const char *w;
  snprintf(p, sizeof p, "%s/fifo.csv", dir);
  assert_int_equal(mkfifo(p, 0600), 0);
  assert_int_equal(ew_atomic_txn_file(&t, p, 0, &w, &err), EW_ERR_IO);
  assert_non_null(strstr(err.message, "not a regular file"));
  ew_atomic_file a;
  assert_int_equal(ew_atomic_open(&a, p, &err), EW_ERR_IO);
  snprintf(p, sizeof p, "%s/adir.svg", dir);
  assert_int_equal(mkdir(p, 0700), 0);
  assert_int_equal(ew_atomic_txn_file(&t, p, 0, &w, &err), EW_ERR_IO);
  snprintf(p, sizeof p, "%s/plain", dir);
  put_file(p, "x\n");
  assert_int_equal(ew_atomic_txn_dir(&t, p, NULL, &w, &err), EW_ERR_IO);
  assert_non_null(strstr(err.message, "not a directory"));
  expect_file(p, "x\n");
  snprintf(p, sizeof p, "%s/adir.svg/sub", dir);
  assert_int_equal(mkdir(p, 0700), 0);
  snprintf(p, sizeof p, "%s/adir.svg", dir);
  assert_int_equal(ew_atomic_txn_dir(&t, p, NULL, &w, &err), EW_ERR_IO);
  assert_non_null(strstr(err.message, "holds the directory sub"));
  ew_atomic_txn_abort(&t);
  assert_int_equal(count_entries(dir, 1), 0); /* no lock, stage or temporary left */
}

/* A second writer of one directory set fails at once, naming the first one's PID; after the
 * first committed, it succeeds. */
static void txn_lock_second_writer(void **state) {
  fixture *fx = *state;
  char dir[1024], set[1200];
  fresh_dir(fx, "lock", dir, sizeof dir);
  snprintf(set, sizeof set, "%s/out", dir);
  int go[2], ready[2];
  assert_int_equal(pipe(go), 0);
  assert_int_equal(pipe(ready), 0);
  pid_t child = fork();
  assert_true(child >= 0);
  if (child == 0) {
    ew_atomic_txn t;
    ew_atomic_txn_init(&t);
    const char *w;
    char c = ew_atomic_txn_dir(&t, set, NULL, &w, NULL) == EW_OK ? 'y' : 'n';
    if (write(ready[1], &c, 1) != 1) _exit(2);
    if (read(go[0], &c, 1) != 1) _exit(2);
    _exit(ew_atomic_txn_commit(&t, NULL) == EW_OK ? 0 : 1);
  }
  char c = 0;
  assert_int_equal(read(ready[0], &c, 1), 1);
  assert_int_equal(c, 'y');
  ew_atomic_txn t;
  ew_atomic_txn_init(&t);
  ew_error err = {0};
  const char *w;
  assert_int_equal(ew_atomic_txn_dir(&t, set, NULL, &w, &err), EW_ERR_IO);
  char want[64];
  snprintf(want, sizeof want, "another epiwell run (pid %ld)", (long)child);
  if (!strstr(err.message, want)) fail_msg("message \"%s\" lacks \"%s\"", err.message, want);
  assert_int_equal(write(go[1], "g", 1), 1);
  int status;
  assert_int_equal(waitpid(child, &status, 0), child);
  assert_true(WIFEXITED(status) && WEXITSTATUS(status) == 0);
  assert_int_equal(ew_atomic_txn_dir(&t, set, NULL, &w, &err), EW_OK);
  ew_atomic_txn_abort(&t);
  struct stat sb;
  assert_int_equal(stat(set, &sb), 0); /* the child's (empty) set is there */
  assert_true(S_ISDIR(sb.st_mode));
  close(go[0]), close(go[1]), close(ready[0]), close(ready[1]);
}

/* What killed runs left is removed by the next run: temporaries of dead PIDs, stage
 * directories of dead PIDs, sibling directories of a set (under its lock); a temporary of a
 * live process is kept. */
static void stale_leftovers_cleaned(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1400];
  fresh_dir(fx, "stale", dir, sizeof dir);
  long dead = dead_pid(), live = (long)getppid();
  char dead_tmp[1200], live_tmp[1200], stage[1200], sib[1200];
  snprintf(dead_tmp, sizeof dead_tmp, "%s/.a.csv.%ld.0badf00d.tmp", dir, dead);
  snprintf(live_tmp, sizeof live_tmp, "%s/.a.csv.%ld.0badf00d.tmp", dir, live);
  snprintf(stage, sizeof stage, "%s/.epiwell-stage.%ld.AbCdEf", dir, dead);
  snprintf(sib, sizeof sib, "%s/.out.new.%ld.QwErTy", dir, live); /* live, but no lock */
  put_file(dead_tmp, "half\n");
  put_file(live_tmp, "busy\n");
  assert_int_equal(mkdir(stage, 0700), 0);
  snprintf(p, sizeof p, "%s/report.html", stage);
  put_file(p, "half\n");
  assert_int_equal(mkdir(sib, 0700), 0);
  snprintf(p, sizeof p, "%s/levels.csv", sib);
  put_file(p, "half\n");

  snprintf(p, sizeof p, "%s/a.csv", dir);
  ew_atomic_file a;
  ew_error err = {0};
  assert_int_equal(ew_atomic_open(&a, p, &err), EW_OK);
  ew_atomic_abort(&a);
  assert_int_equal(access(dead_tmp, F_OK), -1);
  assert_int_equal(access(live_tmp, F_OK), 0);

  ew_atomic_txn t;
  ew_atomic_txn_init(&t);
  const char *w;
  snprintf(p, sizeof p, "%s/b.svg", dir);
  assert_int_equal(ew_atomic_txn_file(&t, p, 0, &w, &err), EW_OK);
  assert_int_equal(access(stage, F_OK), -1);
  snprintf(p, sizeof p, "%s/out", dir);
  assert_int_equal(ew_atomic_txn_dir(&t, p, NULL, &w, &err), EW_OK);
  assert_int_equal(access(sib, F_OK), -1);
  ew_atomic_txn_abort(&t);
  assert_int_equal(count_entries(dir, 1), 2); /* the live temporary and the lock */
}

/* Many processes making one missing directory at once (`--report DIR`): every one of them
 * succeeds (mkdir's EEXIST of a directory is no error). */
static void mkdir_race(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "race", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/rep/report.html", dir);
  enum { N = 8 };
  pid_t kids[N];
  for (int k = 0; k < N; k++) {
    kids[k] = fork();
    assert_true(kids[k] >= 0);
    if (kids[k] == 0) {
      ew_atomic_txn t;
      ew_atomic_txn_init(&t);
      const char *w;
      if (ew_atomic_txn_file(&t, p, 1, &w, NULL) != EW_OK) _exit(1);
      FILE *f = fopen(w, "w");
      if (!f) _exit(1);
      fprintf(f, "%d\n", k);
      fclose(f);
      _exit(ew_atomic_txn_commit(&t, NULL) == EW_OK ? 0 : 1);
    }
  }
  for (int k = 0; k < N; k++) {
    int status;
    assert_int_equal(waitpid(kids[k], &status, 0), kids[k]);
    assert_true(WIFEXITED(status));
    assert_int_equal(WEXITSTATUS(status), 0);
  }
  snprintf(p, sizeof p, "%s/rep", dir);
  assert_int_equal(count_entries(p, 0), 1); /* one whole report, no stage left */
}

/* A writer's error names what it was given, a staged name: explain rewrites it to the
 * target, in the file and the message, for a single file and for the directory set. */
static void txn_explain_names_targets(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200], set[1200];
  fresh_dir(fx, "explain", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/b.svg", dir);
  snprintf(set, sizeof set, "%s/out", dir);
  ew_atomic_txn t;
  ew_atomic_txn_init(&t);
  ew_error err = {0};
  const char *w, *wd;
  assert_int_equal(ew_atomic_txn_file(&t, p, 0, &w, &err), EW_OK);
  assert_int_equal(ew_atomic_txn_dir(&t, set, NULL, &wd, &err), EW_OK);
  snprintf(err.file, sizeof err.file, "%s", w);
  snprintf(err.message, sizeof err.message, "cannot write '%s/levels.csv': disk full", wd);
  ew_atomic_txn_explain(&t, &err);
  assert_string_equal(err.file, p);
  char want[1400];
  snprintf(want, sizeof want, "cannot write '%s/levels.csv': disk full", set);
  assert_string_equal(err.message, want);
  ew_atomic_txn_abort(&t);
}

int main(void) {
  signal(SIGPIPE, SIG_IGN);
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(planted_symlinks_not_followed),
      cmocka_unit_test(txn_all_or_nothing),
      cmocka_unit_test(txn_modes_follow_umask),
      cmocka_unit_test(txn_refuses_non_regular),
      cmocka_unit_test(txn_lock_second_writer),
      cmocka_unit_test(stale_leftovers_cleaned),
      cmocka_unit_test(mkdir_race),
      cmocka_unit_test(txn_explain_names_targets),
  };
  return cmocka_run_group_tests(tests, group_setup, group_teardown);
}
