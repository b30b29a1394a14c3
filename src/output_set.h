/* output_set.h — the output files of a workflow written all or nothing: each under a
 * temporary name beside its target, renamed into place together when the work succeeded;
 * and the check, before any work, that a data file can be written at a path. */
#ifndef EW_OUTPUT_SET_H
#define EW_OUTPUT_SET_H

#include <stddef.h>

#include "atomic.h"
#include "epiwell.h"

#define EW_WF_PATH_MAX 1024

/* Files staged through an atomic.c transaction (each in a private staging directory in its
 * target's directory, under the target's base name, so the extension is kept) and renamed into
 * place together by ew_wf_outset_commit: on an error none of them appears and the previous
 * files stay intact. */
typedef struct {
  ew_atomic_txn txn;
} ew_wf_outset;

void ew_wf_outset_init(ew_wf_outset *s);
/* Register path; *tmp receives the staged name to write.  EW_ERR_IO (naming opt_name) when
 * the name is unusable, the target is not a regular file, or the set is full. */
ew_status ew_wf_outset_add(ew_wf_outset *s, const char *path, const char *opt_name,
                           const char **tmp, ew_error *err);
/* ok: rename every temporary file into place (EW_ERR_IO naming the file that failed; the
 * temporaries not yet renamed are removed); !ok: remove the temporaries.  Idempotent. */
ew_status ew_wf_outset_commit(ew_wf_outset *s, int ok, ew_error *err);

/* EW_OK when a data file (CSV) can be written at path: its directory exists and is
 * writable and path is not a directory.  EW_ERR_IO naming opt_name.  Run before any work. */
ew_status ew_wf_check_file_path(const char *path, const char *opt_name, ew_error *err);

#endif
