/* output_set.c — output files renamed into place together, and writable-path checks (see
 * output_set.h). */
#include "output_set.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "error.h"

void ew_wf_outset_init(ew_wf_outset *s) { memset(s, 0, sizeof *s); }

ew_status ew_wf_outset_add(ew_wf_outset *s, const char *path, const char *opt,
                           const char **tmp, ew_error *err) {
  *tmp = NULL;
  if (s->n >= EW_WF_SET_MAX)
    return ew_fail(err, EW_ERR_IO, path, 0, "%s: too many output files at once", opt);
  const char *sl = strrchr(path, '/');
  const char *base = sl ? sl + 1 : path;
  int dl = sl ? (int)(sl - path) + 1 : 0; /* the directory with its slash */
  char *t = s->tmp_path[s->n];
  int w = snprintf(t, EW_WF_PATH_MAX, "%.*s.epiwell-%ld-%zu-%s", dl, path, (long)getpid(), s->n,
                   base);
  if (!base[0] || strlen(path) >= EW_WF_PATH_MAX || w < 0 || w >= EW_WF_PATH_MAX)
    return ew_fail(err, EW_ERR_IO, path, 0, "%s %s: not a usable file name (empty or longer "
                   "than %d bytes)", opt, path, EW_WF_PATH_MAX - 64);
  snprintf(s->final_path[s->n], EW_WF_PATH_MAX, "%s", path);
  *tmp = t;
  s->n++;
  return EW_OK;
}

ew_status ew_wf_outset_commit(ew_wf_outset *s, int ok, ew_error *err) {
  ew_status rc = EW_OK;
  for (size_t k = 0; k < s->n; k++) {
    if (ok && rc == EW_OK) {
      if (rename(s->tmp_path[k], s->final_path[k]) != 0) {
        rc = ew_fail(err, EW_ERR_IO, s->final_path[k], 0, "cannot rename into place: %s",
                     strerror(errno));
        remove(s->tmp_path[k]);
      }
    } else {
      remove(s->tmp_path[k]); /* a file never written is no error */
    }
  }
  s->n = 0;
  return rc;
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
