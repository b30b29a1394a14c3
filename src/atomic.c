/* atomic.c — whole-or-nothing output files and sets of files (see atomic.h). */
#include "atomic.h"

#include <errno.h>
#include <fcntl.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "error.h"

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

/* The only place a temporary is made: ".BASE.tmpPID" in the target's directory, created
 * (or truncated) with the mode fopen would give.  Switching to mkstemp(3) means changing
 * the name into a template and the open() call here, nothing else. */
static int create_temp(ew_atomic_file *a) {
  const char *sl = strrchr(a->path, '/');
  const char *base = sl ? sl + 1 : a->path;
  char dir[EW_ATOMIC_PATH_MAX];
  ew_atomic_dir_of(a->path, dir, sizeof dir);
  snprintf(a->tmp, sizeof a->tmp, "%.1150s/.%.200s.tmp%ld", dir, base, (long)getpid());
  return open(a->tmp, O_WRONLY | O_CREAT | O_TRUNC, 0666);
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
  snprintf(a->old, sizeof a->old, "%s.old%ld", a->tmp, (long)getpid());
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
