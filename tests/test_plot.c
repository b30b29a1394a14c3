/* test_plot.c — pictures and the HTML report: the SVG is well-formed XML as far as tags go
 * and names the levels, the PNG is a real PNG of the promised size, names with markup
 * characters are escaped, NaN leaves gaps, and a failed write leaves no file behind.  One
 * small well of user-defined layers (invented values) is solved for the whole group; each
 * test writes into its own fresh directory.  Rendering in a real renderer is checked by
 * tests/plot_render.sh. */
#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <sys/stat.h>
#include <unistd.h>

#include "testutil.h"

#include "dynlib.h"
#include "plot.h"
#include "report.h"
#include "solve.h"

/* Under LeakSanitizer (make check SANITIZE=1): fontconfig, which cairo calls to find a
 * font, keeps about 1.4 kB of its configuration for the life of the process (the same
 * amount for one picture or many) and never frees it; that is not ours to fix.  LSan asks
 * the program for extra suppressions through this hook; without LSan it is never called. */
const char *__lsan_default_suppressions(void);
const char *__lsan_default_suppressions(void) { return "leak:libfontconfig.so\n"; }

typedef struct {
  ew_stack *st;
  ew_result *res;
  char base[512];
  int seq;
} fixture;

static int group_setup(void **state) {
  static fixture fx; /* lives for the whole run */
  /* a 6 nm well between 15 nm barriers, deep enough for e, hh and lh levels; the layer
     names carry markup characters to test escaping */
  tu_layer ly[] = {{15.0, 1.00, -0.95, 0.090, 0.38, 0.105},
                   {6.0, 0.70, -0.80, 0.067, 0.35, 0.090},
                   {15.0, 1.00, -0.95, 0.090, 0.38, 0.105}};
  fx.st = tu_stack(3, ly);
  snprintf(fx.st->layers[0].name, sizeof fx.st->layers[0].name, "left<b>");
  snprintf(fx.st->layers[1].name, sizeof fx.st->layers[1].name, "well & \"co\"");
  snprintf(fx.st->path, sizeof fx.st->path, "tests/in-memory.cfg");
  if (tu_fixture_solve("test_plot", fx.st, 0.1, &fx.res) || tu_mkdtemp("plot", fx.base, sizeof fx.base))
    return -1;
  *state = &fx;
  return 0;
}


static int group_teardown(void **state) {
  fixture *fx = *state;
  ew_result_free(fx->res);
  tu_stack_free(fx->st);
  tu_rm_tree(fx->base);
  return 0;
}

static void fresh_dir(fixture *fx, const char *tag, char *out, size_t size) {
  snprintf(out, size, "%s/%03d-%s", fx->base, fx->seq++, tag);
  assert_int_equal(mkdir(out, 0700), 0);
}

static int count_entries(const char *dir) {
  DIR *d = opendir(dir);
  if (!d) return -1;
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL)
    if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) n++;
  closedir(d);
  return n;
}

static char *slurp(const char *path, size_t *len) {
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  size_t cap = 1 << 16, n = 0, got;
  char *buf = malloc(cap);
  while (buf && (got = fread(buf + n, 1, cap - n - 1, f)) > 0) {
    n += got;
    if (n + 1 >= cap) {
      char *nb = realloc(buf, cap *= 2);
      if (!nb) free(buf);
      buf = nb;
    }
  }
  fclose(f);
  if (buf) buf[n] = '\0';
  if (len) *len = n;
  return buf;
}

/* Tags balance: every <name …> is closed by </name> in order, <name …/> closes itself;
 * comments, declarations and processing instructions are skipped.  Returns the number of
 * elements seen, or −1 at the first mismatch (printed). */
static int check_tags(const char *s) {
  char stack[64][32];
  int depth = 0, elements = 0;
  for (const char *p = strchr(s, '<'); p; p = strchr(p + 1, '<')) {
    if (p[1] == '!' || p[1] == '?') continue;
    const char *end = strchr(p, '>');
    if (!end) return print_error("unterminated tag\n"), -1;
    int closing = p[1] == '/';
    const char *nm = p + 1 + closing;
    size_t len = strcspn(nm, " \t\n/>");
    if (len == 0 || len >= sizeof stack[0]) return print_error("bad tag name\n"), -1;
    if (closing) {
      if (depth == 0 || strncmp(stack[depth - 1], nm, len) || stack[depth - 1][len])
        return print_error("</%.*s> does not close <%s>\n", (int)len, nm,
                           depth ? stack[depth - 1] : "(nothing)"),
               -1;
      depth--;
    } else if (end[-1] != '/') {
      if (depth == 64) return print_error("nesting too deep\n"), -1;
      memcpy(stack[depth], nm, len);
      stack[depth++][len] = '\0';
      elements++;
    } else {
      elements++;
    }
    p = end;
  }
  if (depth) return print_error("<%s> never closed\n", stack[depth - 1]), -1;
  return elements;
}

static uint32_t be32(const unsigned char *b) {
  return (uint32_t)b[0] << 24 | (uint32_t)b[1] << 16 | (uint32_t)b[2] << 8 | b[3];
}

/* PNG signature, then the IHDR chunk first with the expected width and height. */
static void check_png(const char *path, uint32_t w, uint32_t h) {
  size_t n = 0;
  unsigned char *b = (unsigned char *)slurp(path, &n);
  assert_non_null(b);
  assert_true(n > 33);
  static const unsigned char sig[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};
  assert_memory_equal(b, sig, 8);
  assert_int_equal(be32(b + 8), 13);
  assert_memory_equal(b + 12, "IHDR", 4);
  assert_int_equal(be32(b + 16), w);
  assert_int_equal(be32(b + 20), h);
  free(b);
}

/* ---- band diagram ------------------------------------------------------------------------ */
static void band_svg(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "svg", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/band.svg", dir);
  ew_error err = {0};
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_OK);
  size_t n = 0;
  char *s = slurp(p, &n);
  assert_non_null(s);
  assert_true(n > 100);
  assert_int_equal(strncmp(s, "<svg", 4), 0);
  const char *tail = s + n;
  while (tail > s && (tail[-1] == '\n' || tail[-1] == ' ')) tail--;
  assert_true(tail - s >= 6);
  assert_int_equal(strncmp(tail - 6, "</svg>", 6), 0);
  assert_true(check_tags(s) > 50);
  /* the levels are named in text elements (bold name, then the energy) */
  assert_non_null(strstr(s, ">e1</text>"));
  assert_non_null(strstr(s, ">hh1</text>"));
  assert_non_null(strstr(s, ">lh1</text>"));
  /* markup in layer names is escaped, never passed through */
  assert_non_null(strstr(s, "left&lt;b&gt;"));
  assert_non_null(strstr(s, "well &amp; &quot;co&quot;"));
  assert_null(strstr(s, "<b>"));
  assert_null(strstr(s, "nan"));
  assert_null(strstr(s, "inf"));
  free(s);
  assert_int_equal(count_entries(dir), 1); /* no temporary left */
}

static void band_png(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "png", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/band.PNG", dir); /* the extension is case-insensitive */
  ew_error err = {0};
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_OK);
  check_png(p, EW_PLOT_BAND_W * EW_PLOT_PNG_SCALE, EW_PLOT_BAND_H * EW_PLOT_PNG_SCALE);
  assert_int_equal(count_entries(dir), 1);
}

/* A missing directory and a path that is a directory both fail with EW_ERR_IO and leave
 * nothing behind; a wrong extension is a usage error. */
static void band_unwritable(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "unwritable", dir, sizeof dir);
  ew_error err = {0};
  snprintf(p, sizeof p, "%s/missing/band.svg", dir);
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_ERR_IO);
  assert_int_equal(err.code, EW_ERR_IO);
  assert_true(err.message[0] != '\0');
  snprintf(p, sizeof p, "%s/missing/band.png", dir);
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_ERR_IO);
  snprintf(p, sizeof p, "%s/adir.svg", dir);
  assert_int_equal(mkdir(p, 0700), 0);
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_ERR_IO);
  assert_int_equal(count_entries(p), 0);
  snprintf(p, sizeof p, "%s/band.pdf", dir);
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_ERR_USAGE);
  assert_int_equal(count_entries(dir), 1); /* only adir.svg */
  if (geteuid() != 0) { /* root writes into read-only directories */
    char ro[1100];
    snprintf(ro, sizeof ro, "%s/ro", dir);
    assert_int_equal(mkdir(ro, 0500), 0);
    snprintf(p, sizeof p, "%s/band.svg", ro);
    assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_ERR_IO);
    assert_int_equal(count_entries(ro), 0);
  }
}

/* Writing again replaces the picture in one step and leaves no temporary. */
static void band_overwrite(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "overwrite", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/band.svg", dir);
  FILE *f = fopen(p, "w");
  assert_non_null(f);
  fputs("old", f);
  fclose(f);
  ew_error err = {0};
  assert_int_equal(ew_plot_band_diagram(fx->res, p, &err), EW_OK);
  char *s = slurp(p, NULL);
  assert_non_null(s);
  assert_int_equal(strncmp(s, "<svg", 4), 0);
  free(s);
  assert_int_equal(count_entries(dir), 1);
}

/* A failing stream is an I/O error (/dev/full refuses every write). */
static void band_stream_full(void **state) {
  fixture *fx = *state;
  FILE *f = fopen("/dev/full", "w");
  if (!f) {
    print_message("skipped: no /dev/full\n");
    skip();
  }
  ew_error err = {0};
  ew_status st = ew_plot_band_diagram_svg(fx->res, f, &err);
  fclose(f);
  assert_int_equal(st, EW_ERR_IO);
}

/* Once the grid is finer than the picture resolves, a four times finer grid must not make
 * a larger file: curves are reduced to what a picture column shows. */
static void band_size_bounded(void **state) {
  fixture *fx = *state;
  const double step[2] = {0.02, 0.005}; /* 36 nm: 1800 and 7200 nodes over ~700 columns */
  off_t size[2];
  char dir[1024];
  fresh_dir(fx, "size", dir, sizeof dir);
  for (int k = 0; k < 2; k++) {
    ew_options opt;
    ew_options_default(&opt);
    opt.grid_step_nm = step[k];
    opt.error_estimate = 0;
    ew_result *r = NULL;
    ew_error err = {0};
    assert_int_equal(ew_solve(fx->st, &opt, &r, &err), EW_OK);
    char p[1200];
    snprintf(p, sizeof p, "%s/%d.svg", dir, k);
    assert_int_equal(ew_plot_band_diagram(r, p, &err), EW_OK);
    ew_result_free(r);
    struct stat sb;
    assert_int_equal(stat(p, &sb), 0);
    size[k] = sb.st_size;
  }
  if (!((double)size[1] < 1.1 * (double)size[0]))
    fail_msg("SVG %lld bytes at 0.005 nm vs %lld at 0.02 nm", (long long)size[1],
             (long long)size[0]);
}

/* A stack without any well has no level: the picture says so and the report warns. */
static void band_no_levels(void **state) {
  fixture *fx = *state;
  tu_layer ly[] = {{20.0, 1.00, -0.95, 0.090, 0.38, 0.105}};
  ew_stack *st = tu_stack(1, ly);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  ew_result *r = NULL;
  ew_error err = {0};
  assert_int_equal(ew_solve(st, &opt, &r, &err), EW_OK);
  assert_int_equal(ew_result_state_count(r), 0);
  char dir[1024], p[1200];
  fresh_dir(fx, "nolevels", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/band.svg", dir);
  assert_int_equal(ew_plot_band_diagram(r, p, &err), EW_OK);
  char *s = slurp(p, NULL);
  assert_non_null(s);
  assert_true(check_tags(s) > 10);
  assert_non_null(strstr(s, ">no bound level</text>"));
  assert_null(strstr(s, "nan"));
  free(s);
  snprintf(p, sizeof p, "%s/band.png", dir);
  assert_int_equal(ew_plot_band_diagram(r, p, &err), EW_OK);
  assert_int_equal(ew_report_write(r, NULL, dir, &err), EW_OK);
  snprintf(p, sizeof p, "%s/report.html", dir);
  s = slurp(p, NULL);
  assert_non_null(s);
  assert_non_null(strstr(s, "No bound e level"));
  free(s);
  ew_result_free(r);
  tu_stack_free(st);
}

/* ---- line chart -------------------------------------------------------------------------- */
static void xy_svg_gaps_and_names(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "xy", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/sweep.svg", dir);
  double x[7] = {0, 1, 2, 3, 4, 5, 6};
  double y0[7] = {1, 2, NAN, 4, 5, 6, 7};  /* a gap: two pieces */
  double y1[7] = {3, NAN, 2, NAN, 1, 1, 0}; /* an isolated point at x = 2 */
  const double *ys[2] = {y0, y1};
  const char *names[2] = {"e1 <level>", NULL};
  ew_error err = {0};
  assert_int_equal(ew_plot_xy(p, "Sweep & test", "width (nm)", "energy (eV)", 7, x, 2, ys,
                              names, &err),
                   EW_OK);
  char *s = slurp(p, NULL);
  assert_non_null(s);
  assert_int_equal(strncmp(s, "<svg", 4), 0);
  assert_true(check_tags(s) > 10);
  assert_non_null(strstr(s, "Sweep &amp; test"));
  assert_non_null(strstr(s, "e1 &lt;level&gt;"));
  assert_non_null(strstr(s, ">series 2</text>"));
  assert_null(strstr(s, "nan"));
  /* the first series' path (stroke of palette colour 0) has two pieces: M … M … */
  const char *q = strstr(s, "stroke=\"#1f5fa8\" stroke-width=\"1.80\"");
  assert_non_null(q);
  const char *start = q;
  while (start > s && strncmp(start, "<path", 5)) start--;
  int moves = 0;
  for (const char *c = start; c < q; c++) moves += *c == 'M';
  assert_int_equal(moves, 2);
  free(s);
}

static void xy_png_and_errors(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "xypng", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/spectrum.png", dir);
  double x[50], y[50];
  for (int i = 0; i < 50; i++) x[i] = 700 + i, y[i] = exp(-(i - 25) * (i - 25) / 40.0);
  const double *ys[1] = {y};
  ew_error err = {0};
  assert_int_equal(ew_plot_xy(p, NULL, "wavelength (nm)", NULL, 50, x, 1, ys, NULL, &err), EW_OK);
  check_png(p, EW_PLOT_XY_W * EW_PLOT_PNG_SCALE, EW_PLOT_XY_H * EW_PLOT_PNG_SCALE);
  /* all-NaN data still gives a picture (empty axes saying so) */
  double nan[3] = {NAN, NAN, NAN};
  const double *yn[1] = {nan};
  snprintf(p, sizeof p, "%s/empty.svg", dir);
  assert_int_equal(ew_plot_xy(p, "t", NULL, NULL, 3, x, 1, yn, NULL, &err), EW_OK);
  char *s = slurp(p, NULL);
  assert_non_null(strstr(s, "no finite data"));
  free(s);
  assert_int_equal(ew_plot_xy(p, "t", NULL, NULL, 0, x, 1, ys, NULL, &err), EW_ERR_USAGE);
  snprintf(p, sizeof p, "%s/missing/x.svg", dir);
  assert_int_equal(ew_plot_xy(p, "t", NULL, NULL, 50, x, 1, ys, NULL, &err), EW_ERR_IO);
  assert_int_equal(count_entries(dir), 2);
}

/* ---- report ------------------------------------------------------------------------------ */
static void report_page(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "report", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/sub", dir); /* created by the writer */
  ew_error err = {0};
  assert_int_equal(ew_report_write(fx->res, NULL, p, &err), EW_OK);
  assert_int_equal(count_entries(p), 1);
  snprintf(p, sizeof p, "%s/sub/report.html", dir);
  char *s = slurp(p, NULL);
  assert_non_null(s);
  assert_int_equal(strncmp(s, "<!DOCTYPE html>", 15), 0);
  assert_true(check_tags(strstr(s, "<html")) > 100);
  assert_non_null(strstr(s, "<svg"));
  assert_non_null(strstr(s, ">e1</text>"));
  assert_non_null(strstr(s, "<td>hh1</td>"));
  assert_non_null(strstr(s, "e1&#8211;hh1"));
  assert_non_null(strstr(s, "left&lt;b&gt;"));
  assert_non_null(strstr(s, "no catalogue was given"));
  assert_non_null(strstr(s, "class=\"ok\"")); /* no warnings for this well */
  /* self-contained: nothing fetched */
  assert_null(strstr(s, "<script"));
  assert_null(strstr(s, "<link"));
  assert_null(strstr(s, "src="));
  assert_null(strstr(s, "url("));
  free(s);
}

/* Catalogue materials get their parameter table with sources. */
static void report_with_catalogue(void **state) {
  fixture *fx = *state;
  const char *env = getenv("EPIWELL_MATERIALS");
  ew_catalogue *cat = NULL;
  ew_error err = {0};
  if (ew_catalogue_load(env && env[0] ? env : "materials", &cat, &err) != EW_OK) {
    print_message("skipped: no catalogue in ./materials (run from the source tree)\n");
    skip();
  }
  ew_stack *st = NULL;
  const char *text = "temperature = 77.0;\nlayers = (\n"
                     " { name = \"b1\"; material = \"AlGaAs\"; x = 0.3; thickness = 15.0; },\n"
                     " { name = \"w\"; material = \"GaAs\"; thickness = 6.0; },\n"
                     " { name = \"b2\"; material = \"AlGaAs\"; x = 0.3; thickness = 15.0; }\n);\n";
  assert_int_equal(ew_stack_read_string(text, "mem.cfg", cat, &st, &err), EW_OK);
  ew_options opt;
  ew_options_default(&opt);
  opt.grid_step_nm = 0.1;
  ew_result *r = NULL;
  assert_int_equal(ew_solve(st, &opt, &r, &err), EW_OK);
  char dir[1024], p[1200];
  fresh_dir(fx, "cat", dir, sizeof dir);
  assert_int_equal(ew_report_write(r, cat, dir, &err), EW_OK);
  snprintf(p, sizeof p, "%s/report.html", dir);
  char *s = slurp(p, NULL);
  assert_non_null(s);
  assert_non_null(strstr(s, "<h3>GaAs</h3>"));
  assert_non_null(strstr(s, "<h3>AlGaAs, x = 0.300</h3>")); /* once, though used twice */
  assert_null(strstr(strstr(s, "<h3>AlGaAs, x = 0.300</h3>") + 1, "<h3>AlGaAs"));
  assert_non_null(strstr(s, "<td>Eg_G</td>"));
  free(s);
  ew_result_free(r);
  ew_stack_free(st);
  ew_catalogue_free(cat);
}

/* The report lists the result's own warnings with their codes (README "Warnings"): a 3.0 nm
 * GaAs well in AlAs has its e1 above the AlAs X edge (type II below about 3.5 nm: M. da Cunha
 * Lima et al., Phys. Rev. B 55, 15420 (1997)) and AlAs is an indirect layer; every warning the
 * library returns must be on the page, code and text, and no other. */
static void report_warnings(void **state) {
  fixture *fx = *state;
  const char *env = getenv("EPIWELL_MATERIALS");
  ew_catalogue *cat = NULL;
  ew_error err = {0};
  if (ew_catalogue_load(env && env[0] ? env : "materials", &cat, &err) != EW_OK) {
    print_message("skipped: no catalogue in ./materials (run from the source tree)\n");
    skip();
  }
  ew_stack *st = NULL;
  const char *text = "temperature = 10.0;\nlayers = (\n"
                     " { name = \"b1\"; material = \"AlAs\"; thickness = 12.0; },\n"
                     " { name = \"w\"; material = \"GaAs\"; thickness = 3.0; },\n"
                     " { name = \"b2\"; material = \"AlAs\"; thickness = 12.0; }\n);\n";
  assert_int_equal(ew_stack_read_string(text, "narrow.cfg", cat, &st, &err), EW_OK);
  ew_result *r = NULL;
  assert_int_equal(ew_solve(st, NULL, &r, &err), EW_OK);
  size_t nw = ew_result_warning_count(r);
  int above_x = 0;
  for (size_t i = 0; i < nw; i++) above_x |= !strcmp(ew_result_warning_code(r, i), "level-above-x");
  assert_true(above_x);
  char dir[1024], p[1200];
  fresh_dir(fx, "warn", dir, sizeof dir);
  assert_int_equal(ew_report_write(r, cat, dir, &err), EW_OK);
  snprintf(p, sizeof p, "%s/report.html", dir);
  char *s = slurp(p, NULL);
  assert_non_null(s);
  size_t items = 0;
  for (const char *q = s; (q = strstr(q, "<li><code>")) != NULL; q++) items++;
  assert_int_equal(items, nw);
  for (size_t i = 0; i < nw; i++) {
    char want[160];
    snprintf(want, sizeof want, "<li><code>%s</code> ", ew_result_warning_code(r, i));
    assert_non_null(strstr(s, want));
    char head[41]; /* the text's first words, where they need no HTML escaping */
    snprintf(head, sizeof head, "%s", ew_result_warning(r, i));
    head[strcspn(head, "<>&\"'")] = '\0';
    assert_non_null(strstr(s, head));
  }
  free(s);
  ew_result_free(r);
  ew_stack_free(st);
  ew_catalogue_free(cat);
}

static void report_unwritable(void **state) {
  fixture *fx = *state;
  char dir[1024], p[1200];
  fresh_dir(fx, "repbad", dir, sizeof dir);
  snprintf(p, sizeof p, "%s/file", dir);
  FILE *f = fopen(p, "w");
  assert_non_null(f);
  fclose(f);
  ew_error err = {0};
  snprintf(p, sizeof p, "%s/file/sub", dir); /* parent is a plain file */
  assert_int_equal(ew_report_write(fx->res, NULL, p, &err), EW_ERR_IO);
  snprintf(p, sizeof p, "%s/out/report.html", dir); /* report.html is a directory */
  char d2[1200];
  snprintf(d2, sizeof d2, "%s/out", dir);
  assert_int_equal(mkdir(d2, 0700), 0);
  assert_int_equal(mkdir(p, 0700), 0);
  assert_int_equal(ew_report_write(fx->res, NULL, d2, &err), EW_ERR_IO);
  assert_int_equal(count_entries(d2), 1);
}

/* The loader behind the PNG back end (dynlib.h): a function looked up in a library opened on
 * demand computes what the linked one does (libm's cos and hypot against the C library's own,
 * linked into this program); a missing library or symbol is EW_ERR_IO and names what. */
typedef struct {
  double (*cosine)(double);
  double (*hyp)(double, double);
} math_table;

static void dynlib_lookup(void **state) {
  (void)state;
  static const char *const names[] = {"libnot-there-at-all.so.9", "libm.so.6"};
  const ew_dynsym syms[] = {{"cos", offsetof(math_table, cosine)},
                            {"hypot", offsetof(math_table, hyp)}};
  math_table t = {NULL, NULL};
  void *h = NULL;
  ew_error err = {0};
  assert_int_equal(ew_dynlib_open(names, 2, syms, 2, &t, &h, &err), EW_OK);
  assert_non_null(h);
  volatile double x = 0.7; /* not folded at compile time */
  assert_true(t.cosine(x) == cos(x));
  assert_true(t.hyp(3.0, x) == hypot(3.0, x));
  ew_dynlib_close(h);
  /* no library of the list loads */
  assert_int_equal(ew_dynlib_open(names, 1, syms, 2, &t, &h, &err), EW_ERR_IO);
  assert_null(h);
  assert_non_null(strstr(err.message, "libnot-there-at-all.so.9"));
  /* the library loads but lacks a symbol */
  const ew_dynsym bad[] = {{"cos", offsetof(math_table, cosine)},
                           {"ew_no_such_function", offsetof(math_table, hyp)}};
  assert_int_equal(ew_dynlib_open(names + 1, 1, bad, 2, &t, &h, &err), EW_ERR_IO);
  assert_null(h);
  assert_non_null(strstr(err.message, "ew_no_such_function"));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(band_svg),
      cmocka_unit_test(band_png),
      cmocka_unit_test(band_unwritable),
      cmocka_unit_test(band_overwrite),
      cmocka_unit_test(band_stream_full),
      cmocka_unit_test(band_size_bounded),
      cmocka_unit_test(band_no_levels),
      cmocka_unit_test(xy_svg_gaps_and_names),
      cmocka_unit_test(xy_png_and_errors),
      cmocka_unit_test(report_page),
      cmocka_unit_test(report_warnings),
      cmocka_unit_test(report_with_catalogue),
      cmocka_unit_test(report_unwritable),
      cmocka_unit_test(dynlib_lookup),
  };
  return cmocka_run_group_tests_name("plot", tests, group_setup, group_teardown);
}
