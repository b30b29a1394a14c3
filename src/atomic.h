/* atomic.h — output files that appear whole or not at all.
 *
 * A file is written under a temporary name in the target's own directory (so the final
 * rename(2) never crosses a file system) and renamed into place only when every byte was
 * written and closed without error.  A set of files (the CSV set of one result) is committed
 * together: every member is written first, then each existing target is moved aside, the new
 * file renamed in, and on any failure every step is undone, so the directory keeps the
 * previous set.  The one place that makes temporaries is create_temp() in atomic.c.
 *
 * Use, one file:
 *     ew_atomic_file a;
 *     if (ew_atomic_open(&a, path, err) != EW_OK) return …;   // a.f is a "w" stream
 *     … fprintf(a.f, …) …
 *     return ew_atomic_commit(&a, err);                        // or ew_atomic_abort(&a)
 * A writer that needs the descriptor itself (zlib's gzdopen) calls ew_atomic_create and takes
 * a.fd, setting it to −1; it closes its stream itself and then calls ew_atomic_commit
 * (or ew_atomic_fail on a write error) — the module only renames or removes the temporary.
 *
 * A set:
 *     ew_atomic_set s;  ew_atomic_set_init(&s);
 *     ew_atomic_file *m;
 *     rc = ew_atomic_set_add(&s, path, &m, err);   // m->f open as above (or _add_fd: m->fd)
 *     … write, then ew_atomic_close(m, err) …       // checks the stream, keeps the temporary
 *     rc = ew_atomic_set_commit(&s, err);           // all renamed in, or none (previous kept)
 *     ew_atomic_set_abort(&s) removes every temporary instead.
 * A member may also be filled by name (another writer that writes m->tmp itself).
 *
 * Behaviour the callers rely on (tests check it): on any error no temporary is left and the
 * target keeps its previous content; error messages name the target, except a temporary
 * that cannot be created, which is named itself.
 *
 * Temporary names today are ".BASE.tmpPID" next to the target (BASE cut to 200 bytes), and a
 * set's moved-aside targets "TEMP.oldPID".  They are predictable and shared by threads of one
 * process; a later change can switch create_temp() to mkstemp(3) on ".BASE.XXXXXX" (plus
 * fchmod to the umask's usual mode) without touching a caller, because callers only ever use
 * a->tmp as given.  Not thread-safe for the same target from two threads of one process. */
#ifndef EW_ATOMIC_H
#define EW_ATOMIC_H

#include <stdio.h>

#include "epiwell.h"

#define EW_ATOMIC_PATH_MAX 1400
#define EW_ATOMIC_SET_MAX 16

typedef struct {
  char path[EW_ATOMIC_PATH_MAX]; /* the target */
  char tmp[EW_ATOMIC_PATH_MAX];  /* the temporary in the target's directory; "" when none */
  char old[EW_ATOMIC_PATH_MAX + 32]; /* set members: where a previous target is moved aside */
  FILE *f;                       /* open stream on tmp (ew_atomic_open), else NULL */
  int fd;                        /* open descriptor (ew_atomic_create), else −1 */
  int had_old;                   /* set members: the previous target was moved aside */
} ew_atomic_file;

/* Directory part of path into dir ("." when there is none, "/" for a file in the root). */
void ew_atomic_dir_of(const char *path, char *dir, size_t cap);

/* Create the temporary for path and open it for writing as a stream a->f ("w").  EW_ERR_IO
 * (naming the temporary) when it cannot be created; nothing is left behind then. */
ew_status ew_atomic_open(ew_atomic_file *a, const char *path, ew_error *err);
/* The same with a plain descriptor a->fd instead of a stream (for zlib's gzdopen). */
ew_status ew_atomic_create(ew_atomic_file *a, const char *path, ew_error *err);

/* Close what is still open (a->f: checks ferror and fclose; a->fd: close) and keep the
 * temporary.  EW_ERR_IO "write failed" naming the target when the stream had an error; the
 * temporary is then removed. */
ew_status ew_atomic_close(ew_atomic_file *a, ew_error *err);
/* ew_atomic_close, then rename the temporary onto the target.  Any failure removes the
 * temporary and leaves the target as it was. */
ew_status ew_atomic_commit(ew_atomic_file *a, ew_error *err);
/* A write the caller detected failed: EW_ERR_IO "write failed (disk full?)" naming the
 * target; the temporary is closed and removed. */
ew_status ew_atomic_fail(ew_atomic_file *a, ew_error *err);
/* Give up: close and remove the temporary (no error; safe on a file never opened). */
void ew_atomic_abort(ew_atomic_file *a);

typedef struct {
  size_t n;
  ew_atomic_file file[EW_ATOMIC_SET_MAX];
} ew_atomic_set;

void ew_atomic_set_init(ew_atomic_set *s);
/* Add path to the set and create its temporary, opened as a stream (*member)->f.  On an
 * error nothing is added. */
ew_status ew_atomic_set_add(ew_atomic_set *s, const char *path, ew_atomic_file **member,
                            ew_error *err);
/* The same with a descriptor (*member)->fd. */
ew_status ew_atomic_set_add_fd(ew_atomic_set *s, const char *path, ew_atomic_file **member,
                               ew_error *err);
/* Close every member still open, then put the whole set in place: each previous target is
 * moved aside, the new file renamed in; on a failure every step is undone so every target
 * is as before, and every temporary is removed.  The set is empty afterwards. */
ew_status ew_atomic_set_commit(ew_atomic_set *s, ew_error *err);
/* Remove every temporary (no error).  The set is empty afterwards. */
void ew_atomic_set_abort(ew_atomic_set *s);

#endif
