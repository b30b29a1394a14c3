/* atomic.c — whole-or-nothing output files, sets of files and transactions (see atomic.h).
 * The one place in the library that makes temporaries. */
#define _GNU_SOURCE /* renameat2 through syscall(2), getrandom */
#include "atomic.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/random.h>
#include <sys/stat.h>
#include <sys/syscall.h>
#include <time.h>
#include <unistd.h>

#include "error.h"

/* Random bits for temporary names.  Safety comes from O_EXCL, not from the randomness: a
 * name taken already just means another draw. */
static unsigned rand32(void) {
  unsigned v;
  if (getrandom(&v, sizeof v, GRND_NONBLOCK) == (ssize_t)sizeof v) return v;
  struct timespec ts;
  clock_gettime(CLOCK_REALTIME, &ts);
  return (unsigned)ts.tv_nsec ^ (unsigned)getpid() * 2654435761u ^ (unsigned)(uintptr_t)&ts;
}

/* A run that left a temporary named with its PID is gone (ESRCH: no such process).  A PID
 * of another user's process gives EPERM: alive. */
static int pid_dead(long pid) {
  return pid > 0 && kill((pid_t)pid, 0) != 0 && errno == ESRCH;
}

/* Remove name in dfd; a directory with its contents down to depth levels.  Symbolic links
 * are removed, never followed. */
static void remove_tree_at(int dfd, const char *name, int depth) {
  struct stat sb;
  if (fstatat(dfd, name, &sb, AT_SYMLINK_NOFOLLOW) != 0) return;
  if (!S_ISDIR(sb.st_mode)) {
    unlinkat(dfd, name, 0);
    return;
  }
  int fd = depth > 0 ? openat(dfd, name, O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC) : -1;
  DIR *d = fd >= 0 ? fdopendir(fd) : NULL;
  if (!d && fd >= 0) close(fd);
  struct dirent *e;
  while (d && (e = readdir(d)) != NULL)
    if (strcmp(e->d_name, ".") && strcmp(e->d_name, ".."))
      remove_tree_at(dirfd(d), e->d_name, depth - 1);
  if (d) closedir(d);
  unlinkat(dfd, name, AT_REMOVEDIR);
}

static void remove_tree(const char *path) { remove_tree_at(AT_FDCWD, path, 4); }

/* fsync a file or directory by name; file systems that cannot sync a directory (EINVAL)
 * are no error. */
static int sync_path(const char *path, int dir) {
  int fd = open(path, O_RDONLY | O_CLOEXEC | O_NOFOLLOW | (dir ? O_DIRECTORY : 0));
  if (fd < 0) return -1;
  int rc = fsync(fd) == 0 || errno == EINVAL || errno == EROFS ? 0 : -1;
  close(fd);
  return rc;
}

/* Remove entries of dir named PREFIX + "PID." + more (prefix "" allowed) with a dead PID,
 * owned by this user; dirs_too: also directories (stage directories).  What a killed run
 * left behind. */
static void clean_dead(const char *dir, const char *prefix, const char *suffix, int dirs_too) {
  DIR *d = opendir(dir);
  if (!d) return;
  size_t pl = strlen(prefix), sl = strlen(suffix);
  struct dirent *e;
  while ((e = readdir(d)) != NULL) {
    const char *n = e->d_name;
    size_t len = strlen(n);
    if (strncmp(n, prefix, pl) != 0 || len < pl + sl || strcmp(n + len - sl, suffix) != 0)
      continue;
    char *end;
    long pid = strtol(n + pl, &end, 10);
    struct stat sb;
    if (end == n + pl || *end != '.' || !pid_dead(pid) ||
        fstatat(dirfd(d), n, &sb, AT_SYMLINK_NOFOLLOW) != 0 || sb.st_uid != geteuid())
      continue;
    if (S_ISREG(sb.st_mode)) unlinkat(dirfd(d), n, 0);
    else if (dirs_too && S_ISDIR(sb.st_mode)) remove_tree_at(dirfd(d), n, 4);
  }
  closedir(d);
}

void ew_atomic_dir_of(const char *path, char *dir, size_t cap) {
  const char *sl = strrchr(path, '/');
  if (!sl) snprintf(dir, cap, ".");
  else if (sl == path) snprintf(dir, cap, "/");
  else snprintf(dir, cap, "%.*s", (int)(sl - path), path);
}

static void reset(ew_atomic_file *a) {
  a->path[0] = a->tmp[0] = a->old[0] = '\0';
  a->f = NULL;
  a->fd = -1;
  a->had_old = 0;
}

/* The only place a single temporary is made: ".BASE.PID.RANDOM.tmp" in the target's
 * directory, created exclusively (a planted name or symlink is never opened) with mode 0666
 * less the umask (open applies it), as fopen would give.  Temporaries of dead runs for the
 * same target are removed first. */
static int create_temp(ew_atomic_file *a) {
  const char *sl = strrchr(a->path, '/');
  const char *base = sl ? sl + 1 : a->path;
  char dir[EW_ATOMIC_PATH_MAX], prefix[210];
  ew_atomic_dir_of(a->path, dir, sizeof dir);
  snprintf(prefix, sizeof prefix, ".%.200s.", base);
  clean_dead(dir, prefix, ".tmp", 0);
  clean_dead(dir, prefix, ".tmp.old", 0);
  for (int tries = 0; tries < 100; tries++) {
    snprintf(a->tmp, sizeof a->tmp, "%.1150s/%.205s%ld.%08x.tmp", dir, prefix, (long)getpid(),
             rand32());
    int fd = open(a->tmp, O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC, 0666);
    if (fd >= 0 || errno != EEXIST) return fd;
  }
  return -1;
}

ew_status ew_atomic_create(ew_atomic_file *a, const char *path, ew_error *err) {
  reset(a);
  if (strlen(path) >= sizeof a->path - 230)
    return ew_fail(err, EW_ERR_IO, path, 0, "file name too long");
  snprintf(a->path, sizeof a->path, "%s", path);
  struct stat sb; /* a target that is there must be a plain file */
  if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, path, 0, "exists and is not a regular file");
  a->fd = create_temp(a);
  if (a->fd < 0) {
    ew_status rc = ew_fail(err, EW_ERR_IO, a->tmp, 0, "cannot write: %s", strerror(errno));
    a->tmp[0] = '\0';
    return rc;
  }
  return EW_OK;
}

ew_status ew_atomic_open(ew_atomic_file *a, const char *path, ew_error *err) {
  ew_status rc = ew_atomic_create(a, path, err);
  if (rc != EW_OK) return rc;
  a->f = fdopen(a->fd, "w");
  if (!a->f) {
    rc = ew_fail(err, EW_ERR_IO, a->tmp, 0, "cannot write: %s", strerror(errno));
    ew_atomic_abort(a);
    return rc;
  }
  a->fd = -1; /* owned by the stream now */
  return EW_OK;
}

void ew_atomic_abort(ew_atomic_file *a) {
  if (a->f) fclose(a->f);
  if (a->fd >= 0) close(a->fd);
  a->f = NULL;
  a->fd = -1;
  if (a->tmp[0]) remove(a->tmp);
  a->tmp[0] = '\0';
}

ew_status ew_atomic_fail(ew_atomic_file *a, ew_error *err) {
  ew_atomic_abort(a);
  return ew_fail(err, EW_ERR_IO, a->path, 0, "write failed (disk full?)");
}

ew_status ew_atomic_close(ew_atomic_file *a, ew_error *err) {
  int bad = 0;
  if (a->f) {
    bad = ferror(a->f) != 0;
    bad |= fclose(a->f) != 0;
    a->f = NULL;
  }
  if (a->fd >= 0) {
    bad |= close(a->fd) != 0;
    a->fd = -1;
  }
  return bad ? ew_atomic_fail(a, err) : EW_OK;
}

ew_status ew_atomic_commit(ew_atomic_file *a, ew_error *err) {
  ew_status rc = ew_atomic_close(a, err);
  if (rc != EW_OK) return rc;
  if (rename(a->tmp, a->path) != 0) {
    rc = ew_fail(err, EW_ERR_IO, a->path, 0, "cannot rename into place: %s", strerror(errno));
    ew_atomic_abort(a);
    return rc;
  }
  a->tmp[0] = '\0';
  return EW_OK;
}

/* ---- sets ------------------------------------------------------------------------------ */
void ew_atomic_set_init(ew_atomic_set *s) { s->n = 0; }

static ew_status set_add(ew_atomic_set *s, const char *path, int stream,
                         ew_atomic_file **member, ew_error *err) {
  *member = NULL;
  if (s->n >= EW_ATOMIC_SET_MAX)
    return ew_fail(err, EW_ERR_IO, path, 0, "too many output files at once");
  ew_atomic_file *a = &s->file[s->n];
  ew_status rc = stream ? ew_atomic_open(a, path, err) : ew_atomic_create(a, path, err);
  if (rc != EW_OK) return rc;
  s->n++;
  *member = a;
  return EW_OK;
}

ew_status ew_atomic_set_add(ew_atomic_set *s, const char *path, ew_atomic_file **member,
                            ew_error *err) {
  return set_add(s, path, 1, member, err);
}

ew_status ew_atomic_set_add_fd(ew_atomic_set *s, const char *path, ew_atomic_file **member,
                               ew_error *err) {
  return set_add(s, path, 0, member, err);
}

void ew_atomic_set_abort(ew_atomic_set *s) {
  for (size_t k = 0; k < s->n; k++) ew_atomic_abort(&s->file[k]);
  s->n = 0;
}

/* Move member k's previous target aside and its new file in; on a failure the target is
 * as before. */
static ew_status place(ew_atomic_file *a, ew_error *err) {
  snprintf(a->old, sizeof a->old, "%s.old", a->tmp); /* the temporary's name is unique */
  a->had_old = rename(a->path, a->old) == 0;
  if (!a->had_old && errno != ENOENT)
    return ew_fail(err, EW_ERR_IO, a->path, 0, "cannot replace: %s", strerror(errno));
  if (rename(a->tmp, a->path) != 0) {
    ew_status rc =
        ew_fail(err, EW_ERR_IO, a->path, 0, "cannot rename into place: %s", strerror(errno));
    if (a->had_old) rename(a->old, a->path);
    a->had_old = 0;
    return rc;
  }
  a->tmp[0] = '\0';
  return EW_OK;
}

ew_status ew_atomic_set_commit(ew_atomic_set *s, ew_error *err) {
  ew_status rc = EW_OK;
  for (size_t k = 0; k < s->n && rc == EW_OK; k++) rc = ew_atomic_close(&s->file[k], err);
  size_t placed = 0; /* members whose new file is in place */
  while (rc == EW_OK && placed < s->n) {
    rc = place(&s->file[placed], err);
    if (rc == EW_OK) placed++;
  }
  for (size_t k = 0; k < placed; k++) {
    ew_atomic_file *a = &s->file[k];
    if (rc == EW_OK) { /* done: the previous files go */
      if (a->had_old) remove(a->old);
    } else if (a->had_old) { /* undo */
      rename(a->old, a->path);
    } else {
      remove(a->path);
    }
  }
  ew_atomic_set_abort(s); /* temporaries not renamed in */
  return rc;
}

/* ---- transactions ---------------------------------------------------------------------- */
#ifndef RENAME_EXCHANGE
#define RENAME_EXCHANGE (1 << 1) /* linux/fs.h */
#endif
#define STAGE_PREFIX ".epiwell-stage."

void ew_atomic_txn_init(ew_atomic_txn *t) {
  t->dir[0] = t->work[0] = t->shown[0] = '\0';
  t->dir_existed = 0;
  t->dir_stage = -1;
  t->dir_mode = 0;
  t->owned = NULL;
  t->lock_fd = -1;
  t->nstage = t->nfile = 0;
}

static const char *base_of(const char *path) {
  const char *sl = strrchr(path, '/');
  return sl ? sl + 1 : path;
}

/* The canonical name of dir (symbolic links and "." resolved); a missing dir is its
 * parent's canonical name plus its base name.  0 on success. */
static int resolve_dir(const char *dir, char *out, size_t cap) {
  char buf[EW_ATOMIC_PATH_MAX], rp[PATH_MAX];
  snprintf(buf, sizeof buf, "%s", dir);
  size_t n = strlen(buf);
  while (n > 1 && buf[n - 1] == '/') buf[--n] = '\0';
  if (realpath(buf, rp)) return snprintf(out, cap, "%s", rp) >= (int)cap ? -1 : 0;
  if (errno != ENOENT) return -1;
  char parent[EW_ATOMIC_PATH_MAX];
  ew_atomic_dir_of(buf, parent, sizeof parent);
  const char *b = base_of(buf);
  if (!strcmp(b, ".") || !strcmp(b, "..") || !realpath(parent, rp)) return -1;
  return snprintf(out, cap, "%s/%s", strcmp(rp, "/") ? rp : "", b) >= (int)cap ? -1 : 0;
}

/* A POSIX record lock on the file lockpath (created when missing, never followed when a
 * symbolic link); a held lock is an error at once, naming the holder. */
static ew_status lock_take(ew_atomic_txn *t, const char *lockpath, ew_error *err) {
  int fd = open(lockpath, O_RDWR | O_CREAT | O_NOFOLLOW | O_NONBLOCK | O_CLOEXEC, 0666);
  struct stat sb;
  if (fd < 0 || fstat(fd, &sb) != 0 || !S_ISREG(sb.st_mode)) {
    ew_status rc = ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot lock it with %s: %s", lockpath,
                           fd < 0 ? strerror(errno) : "not a regular file");
    if (fd >= 0) close(fd);
    return rc;
  }
  struct flock fl;
  memset(&fl, 0, sizeof fl);
  fl.l_type = F_WRLCK;
  fl.l_whence = SEEK_SET;
  if (fcntl(fd, F_SETLK, &fl) != 0) {
    int e = errno;
    struct flock q = fl;
    long pid = fcntl(fd, F_GETLK, &q) == 0 && q.l_type != F_UNLCK ? (long)q.l_pid : 0;
    close(fd);
    if (e == EACCES || e == EAGAIN)
      return ew_fail(err, EW_ERR_IO, t->shown, 0, "another epiwell run (pid %ld) is writing this "
                     "output directory; wait for it to finish or choose another one", pid);
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot lock %s: %s", lockpath, strerror(e));
  }
  t->lock_fd = fd;
  return EW_OK;
}

/* An in-place set locks the directory itself with flock(2) (it is never swapped, and no
 * lock file is left among the user's files); the holder's PID is not known then. */
static ew_status lock_dir_itself(ew_atomic_txn *t, ew_error *err) {
  int fd = open(t->dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot lock: %s", strerror(errno));
  if (flock(fd, LOCK_EX | LOCK_NB) != 0) {
    int e = errno;
    close(fd);
    if (e == EWOULDBLOCK)
      return ew_fail(err, EW_ERR_IO, t->shown, 0, "another epiwell run is writing this output "
                     "directory; wait for it to finish or choose another one");
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot lock: %s", strerror(e));
  }
  t->lock_fd = fd;
  return EW_OK;
}

/* A subdirectory of dir (not one of our stage directories) into name; 0 when none. */
static int find_subdir(const char *dir, char *name, size_t cap) {
  DIR *d = opendir(dir);
  if (!d) return 0;
  struct dirent *e;
  int found = 0;
  while (!found && (e = readdir(d)) != NULL) {
    struct stat sb;
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..") ||
        !strncmp(e->d_name, STAGE_PREFIX, strlen(STAGE_PREFIX)))
      continue;
    if (fstatat(dirfd(d), e->d_name, &sb, AT_SYMLINK_NOFOLLOW) == 0 && S_ISDIR(sb.st_mode)) {
      snprintf(name, cap, "%s", e->d_name);
      found = 1;
    }
  }
  closedir(d);
  return found;
}

/* The mode a new directory gets here (0777 less the umask), learnt from a probe made inside
 * the private directory work: reading the umask itself would change it for every thread. */
static unsigned new_dir_mode(const char *work) {
  char probe[EW_ATOMIC_PATH_MAX + 8];
  snprintf(probe, sizeof probe, "%s/.mode", work);
  struct stat sb;
  unsigned mode = 0755;
  if (mkdir(probe, 0777) == 0) {
    if (stat(probe, &sb) == 0) mode = sb.st_mode & 07777;
    rmdir(probe);
  }
  return mode;
}

/* A staging directory in dir (reused when there is one); its index, or -1 with err set. */
static int stage_for(ew_atomic_txn *t, const char *dir, int make_dir, const char *shown,
                     ew_error *err) {
  int made = 0;
  if (make_dir && mkdir(dir, 0777) == 0) made = 1;
  else if (make_dir && errno != EEXIST) {
    ew_fail(err, EW_ERR_IO, shown, 0, "cannot create directory %s: %s", dir, strerror(errno));
    return -1;
  }
  char rd[EW_ATOMIC_PATH_MAX];
  struct stat sb;
  if (stat(dir, &sb) != 0 || !S_ISDIR(sb.st_mode) || resolve_dir(dir, rd, sizeof rd) != 0) {
    ew_fail(err, EW_ERR_IO, shown, 0, "directory %s does not exist", dir);
    return -1;
  }
  for (size_t k = 0; k < t->nstage; k++)
    if (!strcmp(t->stage[k].dir, rd)) return (int)k;
  if (t->nstage >= EW_ATOMIC_TXN_STAGES) {
    ew_fail(err, EW_ERR_IO, shown, 0, "too many output directories at once");
    return -1;
  }
  ew_atomic_stage *s = &t->stage[t->nstage];
  snprintf(s->dir, sizeof s->dir, "%s", rd);
  s->made_dir = made;
  s->whole = 0;
  clean_dead(rd, STAGE_PREFIX, "", 1);
  snprintf(s->work, sizeof s->work, "%.1300s/" STAGE_PREFIX "%ld.XXXXXX", rd, (long)getpid());
  if (!mkdtemp(s->work)) {
    ew_fail(err, EW_ERR_IO, shown, 0, "cannot write in directory %s: %s", dir, strerror(errno));
    if (made) rmdir(dir);
    return -1;
  }
  return (int)t->nstage++;
}

/* Sibling temporaries of dir ".BASE.new.*" / ".BASE.old.*": under the lock, whatever is
 * there was left by a run that no longer holds it (killed). */
static void clean_siblings(const char *parent, const char *base) {
  char p[300];
  for (int k = 0; k < 2; k++) {
    snprintf(p, sizeof p, ".%.200s.%s.", base, k ? "old" : "new");
    DIR *d = opendir(parent);
    if (!d) return;
    struct dirent *e;
    struct stat sb;
    while ((e = readdir(d)) != NULL)
      if (!strncmp(e->d_name, p, strlen(p)) &&
          fstatat(dirfd(d), e->d_name, &sb, AT_SYMLINK_NOFOLLOW) == 0 &&
          sb.st_uid == geteuid())
        remove_tree_at(dirfd(d), e->d_name, 4);
    closedir(d);
  }
}

/* The checks of ew_atomic_txn_dir on the resolved t->dir; EW_OK or the refusal. */
static ew_status dir_usable(ew_atomic_txn *t, ew_error *err) {
  char cwd[PATH_MAX], sub[256];
  struct stat sb;
  if (!strcmp(t->dir, "/") || (realpath(".", cwd) && !strcmp(cwd, t->dir)))
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "is the %s directory: the output set replaces "
                   "its directory as a whole, so name a directory of its own",
                   strcmp(t->dir, "/") ? "working" : "root");
  t->dir_existed = stat(t->dir, &sb) == 0;
  if (!t->dir_existed && errno != ENOENT)
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot use output directory: %s", strerror(errno));
  if (t->dir_existed && !S_ISDIR(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "output path exists and is not a directory");
  if (t->dir_existed && access(t->dir, W_OK | X_OK) != 0)
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "output directory is not writable: %s",
                   strerror(errno));
  if (t->dir_existed && find_subdir(t->dir, sub, sizeof sub))
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "holds the directory %s: the output set replaces "
                   "the directory as a whole and carries over files only", sub);
  t->dir_mode = t->dir_existed ? (unsigned)(sb.st_mode & 07777) : 0;
  return EW_OK;
}

ew_status ew_atomic_txn_dir(ew_atomic_txn *t, const char *dir, const char *const *owned,
                            const char **work, ew_error *err) {
  *work = NULL;
  if (t->dir[0]) return ew_fail(err, EW_ERR_IO, dir, 0, "a second output directory set");
  snprintf(t->shown, sizeof t->shown, "%.1300s", dir);
  if (strlen(dir) > 1200 || resolve_dir(dir, t->dir, sizeof t->dir - 260) != 0) {
    t->dir[0] = '\0';
    return ew_fail(err, EW_ERR_IO, dir, 0, "cannot create output directory: its parent does not "
                   "exist");
  }
  ew_status rc = dir_usable(t, err);
  char parent[EW_ATOMIC_PATH_MAX], lock[EW_ATOMIC_PATH_MAX + 32];
  ew_atomic_dir_of(t->dir, parent, sizeof parent);
  const char *base = base_of(t->dir);
  int swap = access(parent, W_OK | X_OK) == 0;
  if (rc == EW_OK && !swap && !t->dir_existed)
    rc = ew_fail(err, EW_ERR_IO, dir, 0, "cannot create output directory: %s is not writable",
                 parent);
  snprintf(lock, sizeof lock, "%.1100s/.%.200s.lock", strcmp(parent, "/") ? parent : "", base);
  if (rc == EW_OK) rc = swap ? lock_take(t, lock, err) : lock_dir_itself(t, err);
  if (rc == EW_OK && !swap) { /* in place: a stage inside dir, every entry a member */
    int k = stage_for(t, t->dir, 0, dir, err);
    if (k < 0) rc = EW_ERR_IO;
    else t->stage[k].whole = 1, t->dir_stage = k, *work = t->stage[k].work;
  } else if (rc == EW_OK) {
    clean_siblings(parent, base);
    snprintf(t->work, sizeof t->work, "%.1100s/.%.200s.new.%ld.XXXXXX",
             strcmp(parent, "/") ? parent : "", base, (long)getpid());
    if (!mkdtemp(t->work)) {
      rc = ew_fail(err, EW_ERR_IO, dir, 0, "cannot create output directory: %s", strerror(errno));
      t->work[0] = '\0';
    } else {
      if (!t->dir_existed) t->dir_mode = new_dir_mode(t->work);
      *work = t->work;
    }
  }
  t->owned = owned;
  if (rc != EW_OK) ew_atomic_txn_abort(t);
  return rc;
}

ew_status ew_atomic_txn_file(ew_atomic_txn *t, const char *path, int make_dir,
                             const char **work, ew_error *err) {
  *work = NULL;
  char base[256];
  snprintf(base, sizeof base, "%.255s", base_of(path));
  if (!base[0] || strlen(path) > 1200 || !strcmp(base, ".") || !strcmp(base, ".."))
    return ew_fail(err, EW_ERR_IO, path, 0, "not a usable file name");
  struct stat sb;
  if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, path, 0, "exists and is not a regular file");
  if (t->nfile >= EW_ATOMIC_TXN_FILES)
    return ew_fail(err, EW_ERR_IO, path, 0, "too many output files at once");
  ew_atomic_staged *f = &t->file[t->nfile];
  char dir[EW_ATOMIC_PATH_MAX], rd[EW_ATOMIC_PATH_MAX];
  ew_atomic_dir_of(path, dir, sizeof dir);
  if (t->dir[0] && resolve_dir(dir, rd, sizeof rd) == 0 && !strcmp(rd, t->dir)) {
    /* into the directory set: written with it */
    if (snprintf(f->work, sizeof f->work, "%s/%s",
                 t->dir_stage >= 0 ? t->stage[t->dir_stage].work : t->work, base) >=
        (int)sizeof f->work)
      return ew_fail(err, EW_ERR_IO, path, 0, "file name too long");
    *work = f->work;
    return EW_OK; /* not counted: the set commits it */
  }
  int k = stage_for(t, dir, make_dir, path, err);
  if (k < 0) return EW_ERR_IO;
  char sw[EW_ATOMIC_PATH_MAX];
  snprintf(sw, sizeof sw, "%s", t->stage[k].work);
  if (snprintf(f->work, sizeof f->work, "%s/%s", sw, base) >= (int)sizeof f->work)
    return ew_fail(err, EW_ERR_IO, path, 0, "file name too long");
  snprintf(f->path, sizeof f->path, "%s", path);
  f->stage = (size_t)k;
  t->nfile++;
  *work = f->work;
  return EW_OK;
}

void ew_atomic_txn_abort(ew_atomic_txn *t) {
  for (size_t k = 0; k < t->nstage; k++) {
    remove_tree(t->stage[k].work);
    if (t->stage[k].made_dir) rmdir(t->stage[k].dir); /* only when still empty */
  }
  if (t->work[0]) remove_tree(t->work);
  if (t->lock_fd >= 0) close(t->lock_fd); /* releases the lock */
  ew_atomic_txn_init(t);
}

/* A staged file into place: fsync, rename; a file the writer did not write is skipped. */
static ew_status put_file(const char *from, const char *to, ew_error *err) {
  struct stat sb;
  if (lstat(from, &sb) != 0) return EW_OK;
  if (!S_ISREG(sb.st_mode) || sync_path(from, 0) != 0)
    return ew_fail(err, EW_ERR_IO, to, 0, "write failed (disk full?)");
  if (rename(from, to) != 0)
    return ew_fail(err, EW_ERR_IO, to, 0, "cannot rename into place: %s", strerror(errno));
  return EW_OK;
}

static int is_owned(const ew_atomic_txn *t, const char *name) {
  for (size_t k = 0; t->owned && t->owned[k]; k++)
    if (!strcmp(t->owned[k], name)) return 1;
  return 0;
}

/* An in-place set: every regular file of the stage renamed into dir, then the owned names
 * this run did not write removed (the stale other format). */
static ew_status put_whole(const ew_atomic_txn *t, const ew_atomic_stage *s, ew_error *err) {
  ew_status rc = EW_OK;
  char from[EW_ATOMIC_PATH_MAX + 260], to[EW_ATOMIC_PATH_MAX + 260];
  unsigned stale = 0; /* owned names this run does not write */
  for (size_t k = 0; t->owned && t->owned[k] && k < 32; k++) {
    snprintf(from, sizeof from, "%s/%s", s->work, t->owned[k]);
    if (access(from, F_OK) != 0) stale |= 1u << k;
  }
  DIR *d = opendir(s->work);
  struct dirent *e;
  while (rc == EW_OK && d && (e = readdir(d)) != NULL) {
    if (e->d_name[0] == '.') continue; /* our own temporaries */
    snprintf(from, sizeof from, "%s/%s", s->work, e->d_name);
    snprintf(to, sizeof to, "%s/%s", s->dir, e->d_name);
    rc = put_file(from, to, err);
  }
  if (d) closedir(d);
  for (size_t k = 0; rc == EW_OK && t->owned && t->owned[k] && k < 32; k++) {
    snprintf(to, sizeof to, "%s/%s", s->dir, t->owned[k]);
    if (stale >> k & 1u) unlink(to);
  }
  return rc;
}

/* Legacy temporaries of earlier versions in a previous set (".NAME.tmpPID[.oldPID]",
 * ".epiwell-PID-K-NAME") and our lock and stage names: never carried over. */
static int is_leftover(const char *n) {
  if (!strncmp(n, ".epiwell", 8)) return 1;
  const char *t = n[0] == '.' ? strstr(n, ".tmp") : NULL;
  if (!t) return 0;
  t += 4;
  while (*t >= '0' && *t <= '9') t++;
  if (!strncmp(t, ".old", 4))
    for (t += 4; *t >= '0' && *t <= '9'; t++) {}
  return *t == '\0';
}

/* The previous set's files that this run does not write, hard-linked into the new set. */
static ew_status carry_over(const ew_atomic_txn *t, ew_error *err) {
  DIR *d = opendir(t->dir);
  if (!d) return errno == ENOENT ? EW_OK
                                 : ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot read: %s",
                                           strerror(errno));
  int wfd = open(t->work, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  ew_status rc = wfd < 0 ? ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot write: %s",
                                   strerror(errno)) : EW_OK;
  struct dirent *e;
  while (rc == EW_OK && (e = readdir(d)) != NULL) {
    const char *n = e->d_name;
    struct stat sb;
    if (!strcmp(n, ".") || !strcmp(n, "..") || is_leftover(n) || is_owned(t, n) ||
        fstatat(wfd, n, &sb, AT_SYMLINK_NOFOLLOW) == 0 ||
        fstatat(dirfd(d), n, &sb, AT_SYMLINK_NOFOLLOW) != 0)
      continue;
    if (S_ISDIR(sb.st_mode))
      rc = ew_fail(err, EW_ERR_IO, t->shown, 0, "holds the directory %s: the output set replaces "
                   "the directory as a whole and carries over files only", n);
    else if (linkat(dirfd(d), n, wfd, n, 0) != 0)
      rc = ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot carry %s over into the new set: %s", n,
                   strerror(errno));
  }
  if (wfd >= 0) close(wfd);
  closedir(d);
  return rc;
}

/* fsync every file of the new set, give it its mode, fsync it. */
static ew_status seal(const ew_atomic_txn *t, ew_error *err) {
  DIR *d = opendir(t->work);
  int bad = !d;
  struct dirent *e;
  while (!bad && (e = readdir(d)) != NULL) {
    struct stat sb;
    if (fstatat(dirfd(d), e->d_name, &sb, AT_SYMLINK_NOFOLLOW) != 0 || !S_ISREG(sb.st_mode))
      continue;
    int fd = openat(dirfd(d), e->d_name, O_RDONLY | O_NOFOLLOW | O_CLOEXEC);
    bad = fd < 0 || (fsync(fd) != 0 && errno != EINVAL);
    if (fd >= 0) close(fd);
  }
  if (d) closedir(d);
  if (!bad) bad = chmod(t->work, (mode_t)t->dir_mode) != 0 || sync_path(t->work, 1) != 0;
  return bad ? ew_fail(err, EW_ERR_IO, t->shown, 0, "write failed (disk full?)") : EW_OK;
}

/* The one atomic step: the new set becomes dir.  rename(2) when dir is missing or empty;
 * otherwise an exchange, after which t->work holds the previous set.  Without
 * renameat2(RENAME_EXCHANGE) (another kernel or file system) two renames, the previous set
 * moved aside first: dir is missing for an instant then. */
static ew_status swap_in(ew_atomic_txn *t, ew_error *err) {
  if (rename(t->work, t->dir) == 0) {
    t->work[0] = '\0';
    return EW_OK;
  }
  if (errno != ENOTEMPTY && errno != EEXIST)
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot rename into place: %s", strerror(errno));
#ifdef SYS_renameat2
  if (syscall(SYS_renameat2, AT_FDCWD, t->work, AT_FDCWD, t->dir, RENAME_EXCHANGE) == 0)
    return EW_OK;
  if (errno != ENOSYS && errno != EINVAL)
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot swap into place: %s", strerror(errno));
#endif
  char parent[EW_ATOMIC_PATH_MAX], old[EW_ATOMIC_PATH_MAX];
  ew_atomic_dir_of(t->dir, parent, sizeof parent);
  snprintf(old, sizeof old, "%.1100s/.%.200s.old.%ld.%08x", parent, base_of(t->dir), (long)getpid(),
           rand32());
  if (rename(t->dir, old) != 0)
    return ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot replace: %s", strerror(errno));
  if (rename(t->work, t->dir) != 0) {
    ew_status rc =
        ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot rename into place: %s", strerror(errno));
    rename(old, t->dir);
    return rc;
  }
  remove_tree(t->work); /* empty now, gone */
  snprintf(t->work, sizeof t->work, "%s", old);
  return EW_OK;
}

ew_status ew_atomic_txn_commit(ew_atomic_txn *t, ew_error *err) {
  ew_status rc = EW_OK;
  for (size_t k = 0; k < t->nfile && rc == EW_OK; k++)
    rc = put_file(t->file[k].work, t->file[k].path, err);
  for (size_t k = 0; k < t->nstage && rc == EW_OK; k++) {
    if (t->stage[k].whole) rc = put_whole(t, &t->stage[k], err);
    if (rc == EW_OK && sync_path(t->stage[k].dir, 1) != 0)
      rc = ew_fail(err, EW_ERR_IO, t->stage[k].dir, 0, "cannot sync: %s", strerror(errno));
    if (rc == EW_OK) t->stage[k].made_dir = 0; /* it holds the outputs now */
  }
  if (rc == EW_OK && t->work[0]) {
    char parent[EW_ATOMIC_PATH_MAX];
    ew_atomic_dir_of(t->dir, parent, sizeof parent);
    if (t->dir_existed) rc = carry_over(t, err);
    if (rc == EW_OK) rc = seal(t, err);
    if (rc == EW_OK) rc = swap_in(t, err);
    if (rc == EW_OK && sync_path(parent, 1) != 0)
      rc = ew_fail(err, EW_ERR_IO, t->shown, 0, "cannot sync: %s", strerror(errno));
  }
  ew_atomic_txn_abort(t); /* the previous set, stages, the lock */
  return rc;
}

/* Replace every occurrence of from in s (cap bytes) by to. */
static void replace_in(char *s, size_t cap, const char *from, const char *to) {
  size_t fl = strlen(from);
  char *p;
  if (!fl) return;
  while ((p = strstr(s, from)) != NULL) {
    char rest[2048];
    snprintf(rest, sizeof rest, "%s", p + fl);
    *p = '\0';
    size_t used = strlen(s);
    snprintf(p, cap - used, "%s%s", to, rest);
    if (strlen(to) >= fl + sizeof rest) break;
  }
}

void ew_atomic_txn_explain(const ew_atomic_txn *t, ew_error *err) {
  if (!err) return;
  for (size_t k = 0; k < t->nstage; k++) {
    replace_in(err->file, sizeof err->file, t->stage[k].work, t->stage[k].dir);
    replace_in(err->message, sizeof err->message, t->stage[k].work, t->stage[k].dir);
  }
  if (t->work[0]) {
    replace_in(err->file, sizeof err->file, t->work, t->shown);
    replace_in(err->message, sizeof err->message, t->work, t->shown);
  }
}
