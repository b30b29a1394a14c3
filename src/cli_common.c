/* cli_common.c — helpers shared by the command's files (see cli_common.h). */
#include "cli_common.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* After a usage error, the one line that says where the usage is (cmd: len characters). */
static void help_line(const char *cmd, int len) {
  fprintf(stderr, "epiwell: run 'epiwell %.*s%s--help' for the usage\n", len, cmd, len ? " " : "");
}

int ew_cli_report(const ew_error *err) {
  char buf[2048];
  fprintf(stderr, "epiwell: %s\n", ew_error_text(err, buf, sizeof buf));
  if (err->code == EW_ERR_USAGE) help_line("", 0);
  return (int)err->code;
}

int ew_cli_bad(const char *usage, const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  fprintf(stderr, "epiwell: ");
  vfprintf(stderr, fmt, ap);
  va_end(ap);
  /* the cause, then where the usage is: 25 lines of it would bury the one that matters */
  const char *cmd = "";
  int len = 0;
  if (!strncmp(usage, "usage: epiwell ", 15) && islower((unsigned char)usage[15])) {
    cmd = usage + 15; /* a command's own usage: "usage: epiwell sweep ..." */
    while (islower((unsigned char)cmd[len]) || cmd[len] == '-') len++; /* hole-absorption */
  }
  fputc('\n', stderr);
  help_line(cmd, len);
  return EW_ERR_USAGE;
}

int ew_cli_parse_num(const char *s, double *v) {
  char *end;
  errno = 0;
  *v = strtod(s, &end);
  return s[0] && *end == '\0' && errno == 0 && isfinite(*v);
}

void ew_cli_prefix(ew_error *err, const char *opt) {
  char msg[sizeof err->message];
  snprintf(msg, sizeof msg, "%s: %.1000s", opt, err->message);
  memcpy(err->message, msg, sizeof err->message);
}

int ew_cli_triple(const char *v, double x[3]) {
  char buf[256];
  if (strlen(v) >= sizeof buf) return 0;
  strcpy(buf, v);
  char *p = buf;
  for (int k = 0; k < 3; k++) {
    char *c = k < 2 ? strchr(p, ':') : NULL;
    if (k < 2 && !c) return 0;
    if (c) *c = '\0';
    if (!ew_cli_parse_num(p, &x[k])) return 0;
    p = c ? c + 1 : p;
  }
  return 1;
}

int ew_cli_output_arg(const char *usage, ew_cli_outputs *o, const char *s, const char *v, int *used) {
  *used = 1;
  if (!strcmp(s, "--json")) {
    o->json = 1;
  } else if (v && (!strcmp(s, "--csv") || !strcmp(s, "--plot"))) {
    *(s[2] == 'c' ? &o->csv : &o->plot) = v;
    *used = 2;
  } else if (s[0] == '-') {
    return 0;
  } else if (!o->stack) {
    o->stack = s;
  } else {
    return -ew_cli_bad(usage, "more than one stack file (%s)", s);
  }
  return 1;
}

int ew_cli_read_stack(const ew_cli_outputs *o, ew_catalogue **cat, ew_stack **st) {
  ew_error err;
  *cat = NULL, *st = NULL;
  if (o->csv && ew_data_path_check(o->csv, "--csv", &err)) return ew_cli_report(&err);
  if (o->plot && ew_plot_path_check(o->plot, &err)) return ew_cli_report(&err);
  if (ew_catalogue_load(NULL, cat, &err)) return ew_cli_report(&err);
  if (ew_stack_read_file(o->stack, *cat, st, &err)) {
    ew_catalogue_free(*cat);
    *cat = NULL;
    return ew_cli_report(&err);
  }
  return 0;
}

int ew_cli_optics_arg(const char *usage, ew_cli_optics *o, const char *s, const char *v) {
  double x;
  if (!strcmp(s, "--model")) {
    if (!strcmp(v, "4band")) *o->model = 4;
    else if (!strcmp(v, "6band")) *o->model = 6;
    else return -ew_cli_bad(usage, "--model %s: give 4band or 6band", v);
  } else if (!strcmp(s, "--lineshape")) {
    if (!strcmp(v, "sech")) *o->lorentzian = 0;
    else if (!strcmp(v, "lorentzian")) *o->lorentzian = 1;
    else return -ew_cli_bad(usage, "--lineshape %s: give sech or lorentzian", v);
  } else if (!strcmp(s, "--linewidth")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0) || x > 200)
      return -ew_cli_bad(usage, "--linewidth %s: give a FWHM in meV, (0, 200]", v);
    *o->linewidth_meV = x;
  } else if (!strcmp(s, "--index")) {
    if (!ew_cli_parse_num(v, &x) || !(x >= 1) || x > 10)
      return -ew_cli_bad(usage, "--index %s: give a refractive index from 1 to 10", v);
    *o->refractive_index = x;
  } else if (!strcmp(s, "--grid-step")) {
    if (!ew_cli_parse_num(v, &x) || !(x > 0))
      return -ew_cli_bad(usage, "--grid-step %s: give a positive number (nm)", v);
    *o->grid_step_nm = x;
  } else {
    return 0;
  }
  return 1;
}

int ew_cli_file_open(const char *path, ew_output_file **f) {
  ew_error err;
  return ew_output_file_open(path, f, &err) ? ew_cli_report(&err) : 0;
}

int ew_cli_file_close(ew_output_file *f, ew_status written, const ew_error *err) {
  if (written) {
    ew_output_file_abort(f);
    return ew_cli_report(err);
  }
  ew_error cerr;
  return ew_output_file_commit(f, &cerr) ? ew_cli_report(&cerr) : 0;
}

int ew_cli_parse(int argc, char **argv, const char *usage, ew_cli_outputs *o, ew_cli_flag_fn flag,
                 ew_cli_option_fn option, void *ctx) {
  for (int i = 0; i < argc; i++) {
    const char *s = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    int used, r;
    if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
      fputs(usage, stdout);
      exit(0);
    } else if ((r = ew_cli_output_arg(usage, o, s, v, &used))) {
      if (r < 0) return -r;
      i += used - 1;
    } else if (flag && flag(s, ctx)) {
      continue;
    } else if (s[0] == '-' && s[1] == '-' && !v) {
      return ew_cli_bad(usage, "%s needs a value", s);
    } else if ((r = option(s, v, ctx))) {
      return r;
    } else {
      i++;
    }
  }
  return o->stack ? 0 : ew_cli_bad(usage, "give a stack file");
}

int ew_cli_emit(const ew_cli_outputs *o, const void *r, const ew_cli_writers *w, const void *ctx) {
  ew_error err;
  ew_output_file *f;
  int rc = 0;
  if (o->csv && !(rc = ew_cli_file_open(o->csv, &f)))
    rc = ew_cli_file_close(f, w->csv(r, ew_output_file_stream(f), &err), &err);
  if (!rc && o->plot && w->plot(r, o->plot, &err)) rc = ew_cli_report(&err);
  if (!rc && o->json && w->json(r, stdout, &err)) rc = ew_cli_report(&err);
  if (!rc && !o->json) w->table(r, ctx, stdout);
  return rc;
}
