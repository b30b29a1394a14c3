/* atomic.h — output files that appear whole or not at all.
 *
 * A file is written under a temporary name in the target's own directory (so the final
 * rename(2) never crosses a file system) and renamed into place only when every byte was
 * written and closed without error.  A set of files (the CSV set of one result) is committed
 * together: every member is written first, then each existing target is moved aside, the new
 * file renamed in, and on any failure every step is undone, so the directory keeps the
 * previous set.  atomic.c is the one place in the library that makes temporaries: files in
 * create_temp(), directories (a staged -o set, private staging directories) with mkdtemp(3)
 * in the transactions below.
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
 * Temporaries are ".BASE.PID.RANDOM.tmp" next to the target, created with
 * O_CREAT|O_EXCL|O_NOFOLLOW (a name planted in advance, symlink or not, is never opened: a new
 * name is drawn) and mode 0666 less the umask, as fopen would give.  A temporary whose PID is
 * dead (a killed run) is removed the next time a temporary is made for the same target.  A
 * set's moved-aside targets are "TEMP.old".
 *
 * Transactions (ew_atomic_txn, below) hold every output of one run — one whole directory and
 * any number of single files — until all of them were written, then commit them at once.
 * Not thread-safe for the same target from two threads of one process (the directory lock is
 * a POSIX record lock, which belongs to the process). */
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


/* ---- transactions ---------------------------------------------------------------------------
 * One run's outputs, staged until all were written and then committed together.
 *
 * A whole directory (ew_atomic_txn_dir, the -o DIR CSV set): locked with a POSIX record lock
 * on ".BASE.lock" beside it (a second writer fails at once, naming the holder's PID), filled in
 * a sibling temporary directory ".BASE.new.PID.RANDOM" (mode 0700 while filled), then every file
 * and the directory are fsync'ed and it is swapped in by one rename: rename(2) when DIR is
 * missing or empty, renameat2(RENAME_EXCHANGE) when it holds a previous set, which is then
 * removed.  Regular files of the previous DIR that this run does not write (and that are not in
 * `owned`) are carried over by hard link; a previous DIR holding a subdirectory is refused
 * (it cannot be carried over atomically).  Under the lock, temporary directories left by a
 * killed run are removed.  When DIR's parent is not writable but DIR is, the set is staged in a
 * private directory inside DIR instead and its files renamed in one by one (the lock is then
 * flock(2) on DIR itself): whole files always, but a kill during the renames can mix two sets.
 *
 * Single files (ew_atomic_txn_file): staged in a private directory ".epiwell-stage.PID.RANDOM"
 * (mkdtemp, 0700) in the target's directory under the target's own base name (so a writer that
 * picks the format from the extension, or that takes a directory, works unchanged), renamed
 * into place at commit.  A file staged into the transaction's directory goes into its set.
 * Stage directories of dead PIDs are removed when a stage is made in the same directory.
 *
 * Commit order: the single files, then the directory swap.  Any error before the commit, or
 * ew_atomic_txn_abort, leaves every target as it was and removes every temporary (and a report
 * directory this transaction created, when empty). */
#define EW_ATOMIC_TXN_FILES 16
#define EW_ATOMIC_TXN_STAGES 8

typedef struct {
  char dir[EW_ATOMIC_PATH_MAX];  /* the target directory */
  char work[EW_ATOMIC_PATH_MAX]; /* the private staging directory in it */
  int made_dir;                  /* dir was created by this transaction */
  int whole;                     /* in-place directory set: every entry of work is a member */
} ew_atomic_stage;

typedef struct {
  char path[EW_ATOMIC_PATH_MAX]; /* the target */
  char work[EW_ATOMIC_PATH_MAX]; /* where the writer writes it */
  size_t stage;                  /* its staging directory */
} ew_atomic_staged;

typedef struct {
  char dir[EW_ATOMIC_PATH_MAX];  /* the whole directory, resolved; "" when none */
  char work[EW_ATOMIC_PATH_MAX]; /* its sibling temporary ("" in place: see stage) */
  char shown[EW_ATOMIC_PATH_MAX]; /* DIR as the caller named it (messages) */
  int dir_existed, dir_stage;    /* dir_stage: the stage of an in-place set, else -1 */
  unsigned dir_mode;
  const char *const *owned;      /* NULL-terminated names the set replaces even unwritten */
  int lock_fd;
  size_t nstage, nfile;
  ew_atomic_stage stage[EW_ATOMIC_TXN_STAGES];
  ew_atomic_staged file[EW_ATOMIC_TXN_FILES];
} ew_atomic_txn;

void ew_atomic_txn_init(ew_atomic_txn *t);
/* Stage dir as a whole (once per transaction): lock, clean up, make the temporary; *work is
 * the directory to write the set into (valid while t lives).  EW_ERR_IO naming dir when it
 * is not a directory, not writable, holds a subdirectory, is the working directory, or is
 * locked by another run ("another epiwell run (pid N) is writing it"). */
ew_status ew_atomic_txn_dir(ew_atomic_txn *t, const char *dir, const char *const *owned,
                            const char **work, ew_error *err);
/* Stage the file path: *work is where to write it (its base name is path's).  make_dir: the
 * directory of path is created when missing (mkdir; a directory made meanwhile by another
 * run is fine).  EW_ERR_IO naming path when it exists and is not a regular file (a FIFO, a
 * device, a directory), or its directory is missing or not writable. */
ew_status ew_atomic_txn_file(ew_atomic_txn *t, const char *path, int make_dir,
                             const char **work, ew_error *err);
/* Put everything in place (a staged file never written is skipped) and release the lock.
 * The transaction is empty afterwards, also on an error (then aborted). */
ew_status ew_atomic_txn_commit(ew_atomic_txn *t, ew_error *err);
/* Remove every temporary and release the lock (no error).  Empty afterwards. */
void ew_atomic_txn_abort(ew_atomic_txn *t);
/* Rewrite a staged path in err's file and message to its target (writers name what they
 * were given). */
void ew_atomic_txn_explain(const ew_atomic_txn *t, ew_error *err);

#endif
