/* output_set.c — output files renamed into place together (an atomic.c transaction), and
 * writable-path checks (see output_set.h). */
#include "output_set.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "error.h"

void ew_wf_outset_init(ew_wf_outset *s) { ew_atomic_txn_init(&s->txn); }

ew_status ew_wf_outset_add(ew_wf_outset *s, const char *path, const char *opt,
                           const char **tmp, ew_error *err) {
  ew_status rc = ew_atomic_txn_file(&s->txn, path, 0, tmp, err);
  if (rc != EW_OK && err) { /* the option the path came from, as the command shows it */
    char msg[900];
    snprintf(msg, sizeof msg, "%.899s", err->message);
    snprintf(err->message, sizeof err->message, "%.100s: %s", opt, msg);
  }
  return rc;
}

ew_status ew_wf_outset_commit(ew_wf_outset *s, int ok, ew_error *err) {
  if (ok) return ew_atomic_txn_commit(&s->txn, err);
  ew_atomic_txn_abort(&s->txn);
  return EW_OK;
}

ew_status ew_wf_check_file_path(const char *path, const char *opt, ew_error *err) {
  if (!path || !path[0])
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants a file name, got an empty one", opt);
  size_t n = strlen(path);
  if (path[n - 1] == '/')
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: names a directory, not a file", opt, path);
  char dir[EW_WF_PATH_MAX];
  const char *sl = strrchr(path, '/');
  if (n >= sizeof dir - 64)
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s: file name too long", opt);
  if (!sl) snprintf(dir, sizeof dir, ".");
  else if (sl == path) snprintf(dir, sizeof dir, "/");
  else snprintf(dir, sizeof dir, "%.*s", (int)(sl - path), path);
  struct stat sb;
  if (stat(dir, &sb) != 0 || !S_ISDIR(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: directory %s does not exist", opt, path, dir);
  if (access(dir, W_OK | X_OK) != 0)
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: directory %s is not writable: %s", opt, path,
                   dir, strerror(errno));
  if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, NULL, 0, "%s %s: exists and is not a regular file", opt, path);
  return EW_OK;
}
