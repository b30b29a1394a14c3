/* threads_drive.c — every stack named on the command line solved and written as JSON (which
 * computes the continuum sum rule), through the public API: the paths that run on helper
 * threads (helper_thread.h: the catalogue's files, the bands of each pass, the Kane levels'
 * tasks, the exciton lines, the continuum's energies).  Built with ThreadSanitizer by
 * tests/threads_tsan.sh; prints one line per stack, exits 1 on any error. */
#include <stdio.h>

#include "epiwell.h"

int main(int argc, char **argv) {
  ew_catalogue *cat = NULL;
  ew_error err;
  char msg[1200];
  if (ew_catalogue_load("materials", &cat, &err) != EW_OK) {
    fprintf(stderr, "%s\n", ew_error_text(&err, msg, sizeof msg));
    return 1;
  }
  int bad = 0;
  for (int i = 1; i < argc; i++) {
    ew_stack *st = NULL;
    ew_result *r = NULL;
    FILE *sink = fopen("/dev/null", "w");
    if (!sink || ew_stack_read_file(argv[i], cat, &st, &err) != EW_OK ||
        ew_solve(st, NULL, &r, &err) != EW_OK || ew_result_write_json(r, sink, &err) != EW_OK) {
      fprintf(stderr, "%s: %s\n", argv[i], ew_error_text(&err, msg, sizeof msg));
      bad = 1;
    } else printf("%s: %zu states\n", argv[i], ew_result_state_count(r));
    if (sink) fclose(sink);
    ew_result_free(r);
    ew_stack_free(st);
  }
  ew_catalogue_free(cat);
  return bad;
}
