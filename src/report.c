/* report.c — the HTML report (see report.h).  Pure formatting of numbers the result
 * already holds, plus the catalogue's parameter table; the picture comes from plot.c, the
 * whole-or-nothing file from atomic.c. */
#include "report.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h> /* strcasecmp */

#include "atomic.h"
#include "error.h"
#include "grid.h"
#include "materials.h"
#include "output.h"
#include "plot.h"

/* Text into HTML: markup characters escaped, control characters dropped (they have no
 * place in a page and some are not allowed in HTML at all). */
static void h(FILE *f, const char *s) {
  if (!s) return;
  for (; *s; s++) {
    unsigned char c = (unsigned char)*s;
    switch (c) {
    case '&': fputs("&amp;", f); break;
    case '<': fputs("&lt;", f); break;
    case '>': fputs("&gt;", f); break;
    case '"': fputs("&quot;", f); break;
    case '\'': fputs("&#39;", f); break;
    default:
      if (c >= 0x20 && c != 0x7f) fputc(c, f);
      else if (c == '\n' || c == '\t') fputc(' ', f);
    }
  }
}

/* A number cell with `digits` in printf style 'f', 'e' or 'g'; non-finite values show as an em
 * dash rather than "nan". */
static void num(FILE *f, int digits, char style, double v) {
  fputs("<td class=\"n\">", f);
  if (isfinite(v)) fprintf(f, style == 'e' ? "%.*e" : style == 'g' ? "%.*g" : "%.*f", digits, v);
  else fputs("&#8212;", f);
  fputs("</td>", f);
}

static const char *const valley_name[3] = {"&#915;", "X", "L"};

static const char css[] =
    "body{font-family:'DejaVu Sans',Verdana,Arial,sans-serif;color:#1a1a1a;background:#fff;"
    "max-width:1060px;margin:24px auto;padding:0 16px;line-height:1.4;font-size:14px}"
    "h1{font-size:22px;margin:0 0 4px}h2{font-size:17px;margin:28px 0 8px;"
    "border-bottom:1px solid #bbb;padding-bottom:3px}"
    "table{border-collapse:collapse;margin:6px 0 10px;font-size:13px}"
    "th,td{border:1px solid #c8c8c8;padding:3px 8px;text-align:left;vertical-align:top}"
    "th{background:#f1f1ee;font-weight:bold}td.n{text-align:right;"
    "font-variant-numeric:tabular-nums;white-space:nowrap}"
    "p.meta{color:#4d4d4d;margin:0 0 6px}"
    ".warn{border-left:4px solid #a30000;padding:4px 10px;background:#fbf3f3}"
    ".ok{border-left:4px solid #1b7a3d;padding:4px 10px;background:#f3f8f4}"
    "figure{margin:8px 0}figure svg{max-width:100%;height:auto;display:block}"
    "figcaption{color:#4d4d4d;font-size:12.5px}"
    "td.src{font-size:12px;color:#333;max-width:520px}"
    "@media print{body{margin:0;max-width:none;font-size:11pt}h2{break-after:avoid}"
    "table,figure{break-inside:avoid}}";

static void page_head(FILE *f, const ew_result *r) {
  const ew_stack *st = r->stack;
  fputs("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n<title>epiwell "
        "report",
        f);
  if (st->path[0]) fputs(" &#8212; ", f), h(f, st->path);
  fprintf(f, "</title>\n<style>%s</style>\n</head>\n<body>\n<h1>epiwell report", css);
  if (st->path[0]) fputs(": ", f), h(f, st->path);
  fprintf(f, "</h1>\n<p class=\"meta\">epiwell %s &#183; T = %g K &#183; grid step %.4g nm "
             "(%zu nodes) &#183; bound levels: %zu e, %zu hh, %zu lh (counts certified by "
             "inertia) &#183; error estimates %s</p>\n",
          EW_VERSION, st->temperature_K, r->step_nm, r->grid->n, r->band_count[0],
          r->band_count[1], r->band_count[2],
          r->opt.error_estimate ? "from a second grid (Richardson)" : "not computed");
}

/* The result's own warnings, each with its stable code (README "Warnings": what it means and
 * what to do), then any band without a bound level; the page says the same as the table and
 * the JSON. */
static void warnings(FILE *f, const ew_result *r) {
  fputs("<h2 id=\"warnings\">Warnings</h2>\n", f);
  int any = 0;
  for (size_t i = 0; i < ew_result_warning_count(r); i++) {
    if (!any++) fputs("<div class=\"warn\"><ul>\n", f);
    fputs("<li><code>", f);
    h(f, ew_result_warning_code(r, i));
    fputs("</code> ", f);
    h(f, ew_result_warning(r, i));
    fputs("</li>\n", f);
  }
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    if (r->band_count[b]) continue;
    if (!any++) fputs("<div class=\"warn\"><ul>\n", f);
    fprintf(f, "<li>No bound %s level: no well in this band is deeper than the outer "
               "layers.</li>\n",
            ew_band_name((ew_band)b));
  }
  if (any) fputs("</ul></div>\n", f);
  else fputs("<p class=\"ok\">None: the model's checks found nothing to flag (README "
             "\"Warnings\" lists what is checked).</p>\n",
             f);
}

static void layers_table(FILE *f, const ew_result *r) {
  const ew_stack *st = r->stack;
  fputs("<h2 id=\"stack\">Layer stack (growth order)</h2>\n<table>\n<tr><th>#</th><th>name</th>"
        "<th>material</th><th>x</th><th>from (nm)</th><th>thickness (nm)</th><th>Ec (eV)</th>"
        "<th>Ev hh (eV)</th><th>Ev lh (eV)</th><th>m<sub>e</sub></th><th>m<sub>hh</sub></th>"
        "<th>m<sub>lh</sub></th><th>lowest valley</th></tr>\n",
        f);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    fprintf(f, "<tr><td class=\"n\">%zu</td><td>", k + 1);
    h(f, ly->name);
    fputs("</td><td>", f);
    h(f, ly->material);
    if (ly->user_material) fputs(" <i>(user-defined)</i>", f);
    fputs("</td>", f);
    if (ly->has_x) num(f, 3, 'f', ly->x);
    else fputs("<td class=\"n\">&#8212;</td>", f);
    num(f, 3, 'f', ly->z_start_nm);
    num(f, 3, 'f', ly->thickness_nm);
    num(f, 4, 'f', ly->bands.Ec_eV);
    num(f, 4, 'f', ly->bands.Ev_hh_eV);
    num(f, 4, 'f', ly->bands.Ev_lh_eV);
    num(f, 4, 'f', ly->bands.me);
    num(f, 4, 'f', ly->bands.mhh_z);
    num(f, 4, 'f', ly->bands.mlh_z);
    int v = ly->bands.lowest_valley;
    fprintf(f, "<td>%s</td></tr>\n", v >= 0 && v <= 2 ? valley_name[v] : "?");
  }
  fprintf(f, "</table>\n<p class=\"meta\">Masses are growth-axis masses in m<sub>0</sub>; "
             "energies absolute (eV) at T = %g K. Total thickness %.3f nm; the outer faces "
             "are hard walls.</p>\n",
          st->temperature_K, st->total_nm);
}

/* Band offsets of each interface (signs as in stack.h ew_interface). */
static void offsets_table(FILE *f, const ew_stack *st) {
  if (st->n_layers < 2) return;
  fputs("<h2 id=\"offsets\">Band offsets</h2>\n<table>\n<tr><th>first</th><th>second</th>"
        "<th>z (nm)</th><th>&#916;E<sub>c</sub> (eV)</th><th>&#916;E<sub>v</sub> hh (eV)</th>"
        "<th>conduction share</th></tr>\n",
        f);
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    ew_interface in;
    ew_stack_interface(st, k, &in);
    fputs("<tr><td>", f);
    h(f, st->layers[k].name);
    fputs("</td><td>", f);
    h(f, st->layers[k + 1].name);
    fputs("</td>", f);
    num(f, 3, 'f', in.z_nm);
    num(f, 4, 'f', in.dEc_eV);
    num(f, 4, 'f', in.dEv_eV);
    num(f, 3, 'f', in.conduction_share);
    fputs("</tr>\n", f);
  }
  fprintf(f, "</table>\n<p class=\"meta\">&#916;E<sub>c</sub> = E<sub>c</sub>(first) &#8722; "
             "E<sub>c</sub>(second), &#916;E<sub>v</sub> = E<sub>v,hh</sub>(second) &#8722; "
             "E<sub>v,hh</sub>(first) at the interface; conduction share = &#916;E<sub>c</sub> / "
             "(&#916;E<sub>c</sub> + &#916;E<sub>v</sub>). %s</p>\n",
          st->offsets_set
              ? "Offsets re-split by the stack's conduction_share."
              : "Offsets from the catalogue's valence-band offsets; a stack's conduction_share "
                "key applies a measured split.");
}

static void levels_table(FILE *f, const ew_result *r) {
  const ew_stack *st = r->stack;
  fputs("<h2 id=\"levels\">Bound levels</h2>\n", f);
  if (!r->n_states) {
    fputs("<p>None: no band has a well deeper than its outer layers.</p>\n", f);
    return;
  }
  fputs("<table>\n<tr><th>state</th><th>energy (eV)</th><th>depth (meV)</th>"
        "<th>error (meV)</th><th>mostly in</th><th>probability there</th>"
        "<th>in-plane mass (m<sub>0</sub>)</th><th>residual</th><th>check</th></tr>\n",
        f);
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *s = &r->states[i];
    fprintf(f, "<tr><td>%s</td>", s->label);
    num(f, 6, 'f', s->energy_eV);
    num(f, 3, 'f', s->depth_eV * 1e3);
    if (s->error_eV >= 0) num(f, 2, 'e', s->error_eV * 1e3);
    else fputs("<td class=\"n\">n/a</td>", f);
    fputs("<td>", f);
    h(f, st->layers[s->layer].name);
    fputs("</td>", f);
    num(f, 3, 'f', s->layer_probability);
    num(f, 4, 'f', s->inplane_mass);
    num(f, 2, 'e', s->residual);
    fprintf(f, "<td>%s</td></tr>\n", s->flagged ? "<b>FAILED</b>" : "ok");
  }
  fputs("</table>\n<p class=\"meta\">Depth is |E &#8722; edge| from the band edge of the layer "
        "holding most of |&#968;|&#178;; hole levels lie below the valence edge.</p>\n",
        f);
}

static void lines_tables(FILE *f, const ew_result *r) {
  const ew_state *S = r->states;
  fputs("<h2 id=\"lines\">Lines</h2>\n", f);
  int head = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    if (!head++)
      fputs("<h3>Intersubband (TM, light polarised along z)</h3>\n<table>\n<tr><th>line</th>"
            "<th>energy (meV)</th><th>&#955; (&#181;m)</th><th>dipole (nm)</th>"
            "<th>oscillator strength</th></tr>\n",
            f);
    fprintf(f, "<tr><td>%s&#8211;%s</td>", S[ln->lower].label, S[ln->upper].label);
    num(f, 3, 'f', ln->energy_eV * 1e3);
    num(f, 4, 'f', ln->wavelength_nm / 1e3);
    num(f, 4, 'f', ln->dipole_nm);
    num(f, 4, 'f', ln->oscillator_strength);
    fputs("</tr>\n", f);
  }
  if (head) fputs("</table>\n", f);
  int head2 = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    if (!head2++)
      fputs("<h3>Interband (band to band, no exciton correction)</h3>\n<table>\n<tr>"
            "<th>line</th><th>energy (eV)</th><th>&#955; (nm)</th><th>overlap |&#10216;e|h"
            "&#10217;|&#178;</th><th></th></tr>\n",
            f);
    fprintf(f, "<tr><td>%s&#8211;%s</td>", S[ln->upper].label, S[ln->lower].label);
    num(f, 5, 'f', ln->energy_eV);
    num(f, 2, 'f', ln->wavelength_nm);
    num(f, 4, 'f', ln->overlap);
    fprintf(f, "<td>%s</td></tr>\n", ln->allowed ? "allowed" : "forbidden");
  }
  if (head2) fputs("</table>\n", f);
  if (!head && !head2) fputs("<p>None.</p>\n", f);
}

/* The parameters of one catalogue material at the layer's x, each with its source. */
static void params_table(FILE *f, const ew_catalogue *cat, const ew_layer *ly) {
  ew_params p;
  ew_error e = {0};
  if (ew_material_params(cat, ly->material, ly->x, &p, &e) != EW_OK) {
    /* the page still helps without this one table: say why it is missing */
    fputs("<p class=\"warn\">Parameters unavailable: ", f);
    h(f, e.message);
    fputs("</p>\n", f);
    return;
  }
  fputs("<table>\n<tr><th>parameter</th><th>value</th><th>unit</th><th>source</th></tr>\n", f);
  for (int q = 0; q < EW_P_COUNT; q++) {
    if (!p.have[q]) continue;
    fputs("<tr><td>", f);
    h(f, ew_param_key((ew_param)q));
    fputs("</td>", f);
    num(f, 6, 'g', p.v[q]);
    fputs("<td>", f);
    h(f, ew_param_unit((ew_param)q));
    fputs("</td><td class=\"src\">", f);
    h(f, p.source[q] ? p.source[q] : "");
    fputs("</td></tr>\n", f);
  }
  fputs("</table>\n", f);
}

/* Layer k has the material and x of an earlier layer (its table is already there). */
static int seen_before(const ew_stack *st, size_t k) {
  const ew_layer *ly = &st->layers[k];
  for (size_t j = 0; j < k; j++) {
    const ew_layer *o = &st->layers[j];
    if (!strcmp(o->material, ly->material) && o->has_x == ly->has_x &&
        (!ly->has_x || o->x == ly->x))
      return 1;
  }
  return 0;
}

/* One parameter table per distinct (material, x) in the stack, in stack order. */
static void params_tables(FILE *f, const ew_result *r, const ew_catalogue *cat) {
  const ew_stack *st = r->stack;
  fputs("<h2 id=\"materials\">Material parameters used</h2>\n", f);
  if (!cat) {
    fputs("<p>Not included: no catalogue was given when this report was written.</p>\n", f);
    return;
  }
  fputs("<p class=\"meta\">Catalogue ", f);
  h(f, ew_catalogue_dir(cat));
  fputs(". Values at the layer's composition x, before temperature (gaps at 0 K; the band "
        "edges at T are in the layer table). For an alloy the source names the bowing "
        "parameter, or says how the value is interpolated between the end binaries.</p>\n",
        f);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    if (seen_before(st, k)) continue;
    fputs("<h3>", f);
    h(f, ly->material);
    if (ly->has_x) fprintf(f, ", x = %.3f", ly->x);
    fputs("</h3>\n", f);
    if (ly->user_material)
      fputs("<p>User-defined in the stack file: Ec, Ev and the masses are as given there "
            "(see the layer table); no source.</p>\n",
            f);
    else
      params_table(f, cat, ly);
  }
}

static ew_status write_page(FILE *f, const ew_result *r, const ew_catalogue *cat,
                            ew_error *err) {
  page_head(f, r);
  warnings(f, r);
  layers_table(f, r);
  offsets_table(f, r->stack);
  fputs("<h2 id=\"diagram\">Band diagram</h2>\n<figure>\n", f);
  ew_status rc = ew_plot_band_diagram_svg(r, f, err);
  if (rc != EW_OK) return rc;
  fprintf(f, "<figcaption>Conduction band (top) and valence band (bottom) share the z axis; "
             "the energy axis is broken between them. Each level is drawn where its "
             "|&#968;|&#178; exceeds %g&#160;%% of its peak, with &#968; drawn about it."
             "</figcaption>\n</figure>\n",
          EW_PLOT_LEVEL_FRACTION * 100);
  levels_table(f, r);
  lines_tables(f, r);
  params_tables(f, r, cat);
  fputs("<p class=\"meta\" style=\"margin-top:24px\">Design estimates from an effective-mass "
        "model with tabulated parameters; not a substitute for measurement.</p>\n"
        "</body>\n</html>\n",
        f);
  return EW_OK;
}

ew_status ew_report_write(const ew_result *r, const ew_catalogue *cat, const char *dir,
                          ew_error *err) {
  if (!r || !dir) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_report_write: NULL argument");
  /* a path ending in .html is the page itself (issue 17: "--report foo.html" made a
   * directory foo.html/); any other path is a directory that receives report.html */
  size_t n = strlen(dir);
  int page = n > 5 && !strcasecmp(dir + n - 5, ".html");
  char fin[1200];
  ew_status rc = EW_OK;
  if (page) {
    if (n >= sizeof fin) return ew_fail(err, EW_ERR_USAGE, NULL, 0, "report path is too long");
    memcpy(fin, dir, n + 1);
  } else {
    rc = ew_output_make_dir(dir, err);
    if (rc != EW_OK) return rc;
    snprintf(fin, sizeof fin, "%s/report.html", dir);
  }
  ew_atomic_file a;
  rc = ew_atomic_open(&a, fin, err);
  if (rc != EW_OK) return rc;
  rc = write_page(a.f, r, cat, err);
  if (rc == EW_OK) return ew_atomic_commit(&a, err);
  ew_atomic_abort(&a);
  return rc;
}
