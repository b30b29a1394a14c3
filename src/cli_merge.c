/* cli_merge.c — the `epiwell merge` command: the parts of a sweep run with --shard (on the
 * tasks of a job array) joined into exactly the one-machine output, through ew_sweep_merge
 * (epiwell.h).  The output is standard output or one file written atomically (-o FILE);
 * either way nothing is written unless every part checks. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli_common.h"
#include "epiwell.h"

static const char merge_usage[] =
    "usage: epiwell merge PART... [--vary KEY=FROM:TO:STEP [--vary ...]] [-o FILE]\n"
    "  PART  the outputs of `epiwell sweep ... --shard K/N` (or --shard auto), all JSON\n"
    "        (--json) or all CSV, in any order; written in point order to standard output\n"
    "        or FILE, byte for byte what one `epiwell sweep` without --shard writes;\n"
    "        or the parts of `epiwell match ... --json --shard K/N`: the --json of the\n"
    "        whole match\n"
    "  --vary  CSV parts only (they carry no part number): the sweep's own --vary, to place\n"
    "        their rows; JSON parts are checked against it when given\n"
    "  a part missing, given twice, of another sweep or cut short is refused (exit 2)\n";

typedef struct {
  const char **parts;
  size_t n;
  const char *out_path;
  ew_sweep *sw; /* holds the --vary ranges */
  int help;
} merge_cmd;

static int merge_parse(int argc, char **argv, merge_cmd *m) {
  ew_error err = {0};
  for (int i = 0; i < argc; i++) {
    const char *a = argv[i];
    if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
      m->help = 1;
      return 0;
    }
    if (!strcmp(a, "--vary") || !strcmp(a, "-o")) {
      if (i + 1 >= argc) return ew_cli_bad(merge_usage, "%s needs a value", a);
      const char *v = argv[++i];
      if (!strcmp(a, "-o")) m->out_path = v;
      else if (ew_sweep_key_count(m->sw) == 2)
        return ew_cli_bad(merge_usage, "%s", "--vary: at most two ranges (a grid)");
      else if (ew_sweep_vary(m->sw, v, &err) != EW_OK)
        return ew_cli_report(&err);
    } else if (a[0] == '-' && a[1]) {
      return ew_cli_bad(merge_usage, "unknown option %s", a);
    } else {
      m->parts[m->n++] = a;
    }
  }
  if (m->n == 0) return ew_cli_bad(merge_usage, "%s", "merge needs the parts (files) to join");
  return 0;
}

/* 1 when the first part is a part of a match (its first bytes), not of a sweep. */
static int match_parts(const merge_cmd *m) {
  char head[16] = {0};
  FILE *f = fopen(m->parts[0], "rb");
  if (!f) return 0; /* the merge names the file it cannot read */
  size_t got = fread(head, 1, sizeof head - 1, f);
  fclose(f);
  return got == sizeof head - 1 && !strncmp(head, "{\"match_part\":", 14);
}

static ew_status merge_into(const merge_cmd *m, FILE *out, ew_error *err) {
  if (match_parts(m)) return ew_match_merge(m->n, m->parts, out, err);
  return ew_sweep_merge(ew_sweep_key_count(m->sw) ? m->sw : NULL, m->n, m->parts, out, err);
}

/* Merge into -o FILE (staged, renamed into place on success) or standard output. */
static int merge_run(const merge_cmd *m) {
  ew_error err = {0};
  if (match_parts(m) && ew_sweep_key_count(m->sw))
    return ew_cli_bad(merge_usage, "%s", "--vary: parts of a match carry their ranges; leave it out");
  if (!m->out_path) {
    ew_status st = merge_into(m, stdout, &err);
    if (st != EW_OK) return ew_cli_report(&err);
    return fflush(stdout) == 0 ? 0 : (fprintf(stderr, "epiwell: cannot write standard output\n"),
                                      EW_ERR_IO);
  }
  ew_output_file *f = NULL;
  ew_status st = ew_data_path_check(m->out_path, "-o", &err);
  if (st == EW_OK) st = ew_output_file_open(m->out_path, &f, &err);
  if (st == EW_OK) st = merge_into(m, ew_output_file_stream(f), &err);
  if (st == EW_OK) {
    st = ew_output_file_commit(f, &err);
    f = NULL;
  }
  ew_output_file_abort(f);
  return st == EW_OK ? 0 : ew_cli_report(&err);
}

int ew_cli_merge(int argc, char **argv) {
  merge_cmd m;
  memset(&m, 0, sizeof m);
  ew_error err = {0};
  m.parts = malloc((argc > 0 ? (size_t)argc : 1) * sizeof *m.parts);
  if (!m.parts) {
    fprintf(stderr, "epiwell: out of memory\n");
    return EW_ERR_NOMEM;
  }
  if (ew_sweep_create(&m.sw, &err) != EW_OK) {
    free(m.parts);
    return ew_cli_report(&err);
  }
  int rc = merge_parse(argc, argv, &m);
  if (!rc && m.help) fputs(merge_usage, stdout);
  else if (!rc) rc = merge_run(&m);
  ew_sweep_free(m.sw);
  free(m.parts);
  return rc;
}
