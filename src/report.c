/* report.c — the HTML report (see report.h).  Pure formatting of numbers the result
 * already holds, plus the catalogue's parameter table; the picture comes from plot.c, the
 * whole-or-nothing file from atomic.c. */
#include "report.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h> /* strcasecmp */

#include "atomic.h"
#include "constants.h"
#include "error.h"
#include "grid.h"
#include "materials.h"
#include "polarization.h"
#include "output.h"
#include "plot.h"
#include "spectra_workflow.h"

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
  /* the band model, field and substrate: the terminal's "model:" line */
  fputs("<p class=\"meta\" id=\"model\">Band model: ", f);
  h(f, ew_result_model(r));
  if (st->field_kV_cm != 0.0) fprintf(f, " &#183; field %g kV/cm along +z", st->field_kV_cm);
  if (st->substrate[0]) fputs(" &#183; pseudomorphic on ", f), h(f, st->substrate);
  fputs("</p>\n", f);
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
  int any_y = 0;
  for (size_t k = 0; k < st->n_layers; k++) any_y |= st->layers[k].has_y;
  fputs("<h2 id=\"stack\">Layer stack (growth order)</h2>\n<table id=\"layers\">\n<tr><th>#</th>"
        "<th>name</th><th>material</th><th>x</th>", f);
  if (any_y) fputs("<th>y</th>", f);
  fputs("<th>from (nm)</th><th>thickness (nm)</th><th>Ec (eV)</th>"
        "<th>Ev hh (eV)</th><th>Ev lh (eV)</th><th>m<sub>e</sub></th><th>m<sub>hh</sub></th>"
        "<th>m<sub>lh</sub></th><th>strain (%)</th><th>lowest valley</th></tr>\n",
        f);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    fprintf(f, "<tr><td class=\"n\">%zu</td><td>", k + 1);
    h(f, ly->name);
    fputs("</td><td>", f);
    h(f, ly->material);
    if (ly->user_material) fputs(" <i>(user-defined)</i>", f);
    fputs("</td>", f);
    if (ly->grade) fputs("<td class=\"n\">graded</td>", f);
    else if (ly->has_x) num(f, 3, 'f', ly->x);
    else fputs("<td class=\"n\">&#8212;</td>", f);
    if (any_y && ly->has_y) num(f, 3, 'f', ly->y);
    else if (any_y) fputs("<td class=\"n\">&#8212;</td>", f);
    num(f, 3, 'f', ly->z_start_nm);
    num(f, 3, 'f', ly->thickness_nm);
    num(f, 4, 'f', ly->bands.Ec_eV);
    num(f, 4, 'f', ly->bands.Ev_hh_eV);
    num(f, 4, 'f', ly->bands.Ev_lh_eV);
    num(f, 4, 'f', ly->bands.me);
    num(f, 4, 'f', ly->bands.mhh_z);
    num(f, 4, 'f', ly->bands.mlh_z);
    num(f, 3, 'f', 100.0 * ly->bands.eps_par);
    int v = ly->bands.lowest_valley;
    fprintf(f, "<td>%s</td></tr>\n", v >= 0 && v <= 2 ? valley_name[v] : "?");
  }
  fprintf(f, "</table>\n<p class=\"meta\">Masses are growth-axis masses in m<sub>0</sub>; "
             "energies absolute (eV) at T = %g K. Total thickness %.3f nm; the outer faces "
             "are hard walls.</p>\n",
          st->temperature_K, st->total_nm);
}

/* Polarisation of a wurtzite stack, as the terminal table's section (polarization.h). */
static void polarization_table(FILE *f, const ew_result *r) {
  const ew_stack *st = r->stack;
  if (!st->polarized) return;
  fputs("<h2 id=\"polarization\">Polarisation</h2>\n<table id=\"polarization-table\">\n"
        "<tr><th>layer</th><th>P<sub>sp</sub> (C/m&#178;)</th><th>P<sub>pz</sub> (C/m&#178;)</th>"
        "<th>P (C/m&#178;, along +z)</th><th>field (kV/cm)</th></tr>\n", f);
  for (size_t k = 0; k < st->n_layers; k++) {
    fputs("<tr><td>", f);
    h(f, st->layers[k].name);
    fputs("</td>", f);
    num(f, 5, 'f', st->layers[k].bands.Psp_C_m2);
    num(f, 5, 'f', st->layers[k].bands.Ppz_C_m2);
    num(f, 5, 'f', st->layers[k].polarization_C_m2);
    num(f, 1, 'f', ew_result_layer_field_kV_cm(r, k));
    fputs("</tr>\n", f);
  }
  fputs("</table>\n<table id=\"interface-charge-table\">\n<tr><th>first</th><th>second</th>"
        "<th>bound charge (C/m&#178;)</th><th>with screening (C/m&#178;)</th></tr>\n", f);
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    fputs("<tr><td>", f);
    h(f, st->layers[k].name);
    fputs("</td><td>", f);
    h(f, st->layers[k + 1].name);
    fputs("</td>", f);
    num(f, 5, 'f', ew_interface_bound_C_m2(st, k));
    num(f, 5, 'f', ew_interface_charge_C_m2(st, k));
    fputs("</tr>\n", f);
  }
  fprintf(f, "</table>\n<p class=\"meta\">c plane; the field is %s.</p>\n",
          st->pol_in_poisson ? "the self-consistent potential's mean over each layer"
                             : "that of the interface charges with a zero drop over the stack");
}

/* Band offsets of each interface (signs as in stack.h ew_interface). */
static void offsets_table(FILE *f, const ew_stack *st) {
  if (st->n_layers < 2) return;
  fputs("<h2 id=\"offsets\">Band offsets</h2>\n<table id=\"offsets-table\">\n<tr><th>first</th><th>second</th>"
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
  fputs("<table id=\"levels-table\">\n<tr><th>state</th><th>energy (eV)</th><th>depth (meV)</th>"
        "<th>error (meV, numerical)</th><th>mostly in</th><th>probability there</th>"
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
        "holding most of |&#968;|&#178;; hole levels lie below the valence edge. The error is "
        "the numerical error only, not the design uncertainty: <code>epiwell tolerance</code> "
        "gives the spread of the lines from the growth tolerances.</p>\n",
        f);
}

/* The lines the terminal table leaves out (ew_options line_min_strength), said once. */
static void hidden_note(FILE *f, size_t n, const char *what, double min) {
  if (n)
    fprintf(f, "<p class=\"meta\">%zu line%s with %s &lt; %g not listed (as in the terminal "
               "table; <code>--lines all</code> lists every line; JSON and CSV hold them "
               "all).</p>\n",
            n, n == 1 ? "" : "s", what, min);
}

static void intersubband_table(FILE *f, const ew_result *r, double min) {
  const ew_state *S = r->states;
  int head = 0;
  size_t hidden = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    if (ln->oscillator_strength < min) {
      hidden++;
      continue;
    }
    if (!head++)
      fputs("<h3>Intersubband (TM, light polarised along z)</h3>\n<table id=\"intersubband\">\n"
            "<tr><th>line</th><th>energy (meV)</th><th>&#955; (&#181;m)</th><th>dipole (nm)</th>"
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
  else if (hidden) fputs("<h3>Intersubband (TM, light polarised along z)</h3>\n", f);
  hidden_note(f, hidden, "f", min);
}

static void interband_table(FILE *f, const ew_result *r, double min) {
  const ew_state *S = r->states;
  int head = 0;
  size_t hidden = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    if (ln->overlap < min) {
      hidden++;
      continue;
    }
    if (!head++)
      fputs("<h3>Interband (band to band; PL peak = line &#8722; exciton binding)</h3>\n"
            "<table id=\"interband\">\n<tr><th>line</th><th>energy (eV)</th><th>&#955; (nm)</th>"
            "<th>overlap |&#10216;e|h&#10217;|&#178;</th><th>exciton binding (meV)</th>"
            "<th>PL peak (eV)</th><th>PL peak (nm)</th><th>TE</th><th>TM</th><th></th></tr>\n",
            f);
    fprintf(f, "<tr><td>%s&#8211;%s</td>", S[ln->upper].label, S[ln->lower].label);
    num(f, 5, 'f', ln->energy_eV);
    num(f, 2, 'f', ln->wavelength_nm);
    num(f, 4, 'f', ln->overlap);
    num(f, 2, 'f', ln->exciton_binding_eV * 1e3);
    num(f, 5, 'f', ln->pl_peak_eV);
    num(f, 2, 'f', ew_line_pl_peak_nm(ln));
    num(f, 3, 'f', ln->te_strength);
    num(f, 3, 'f', ln->tm_strength);
    fprintf(f, "<td>%s</td></tr>\n", ln->allowed ? "allowed" : "forbidden");
  }
  if (head)
    fputs("</table>\n<p class=\"meta\">TE: light polarised in the layer plane; TM: along z "
          "(relative strengths, overlap included).</p>\n",
          f);
  else if (hidden) fputs("<h3>Interband (band to band)</h3>\n", f);
  hidden_note(f, hidden, "overlap", min);
}

static void lines_tables(FILE *f, const ew_result *r) {
  fputs("<h2 id=\"lines\">Lines</h2>\n", f);
  size_t isb = 0, ib = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    if (r->lines[i].kind == EW_LINE_INTERBAND) ib++;
    else isb++;
  }
  if (!isb && !ib) {
    fputs("<p>None.</p>\n", f);
    return;
  }
  double min = r->opt.line_min_strength > 0 ? r->opt.line_min_strength : 0.0;
  if (isb) intersubband_table(f, r, min);
  if (ib) interband_table(f, r, min);
}

/* Doped stacks: the terminal's Schrödinger–Poisson block (Fermi level, densities, sheet
 * densities, depolarisation-shifted intersubband lines). */
static void sp_section(FILE *f, const ew_result *r) {
  const ew_stack *st = r->stack;
  const ew_sp_info *sp = r->sp;
  fprintf(f, "<h2 id=\"doping\">Self-consistent Schr&#246;dinger&#8211;Poisson</h2>\n"
             "<table id=\"sp-summary\">\n<tr><th>quantity</th><th>value</th><th>unit</th></tr>\n");
  struct { const char *name, *unit; int digits; char style; double v; } q[] = {
      {"Fermi level", "eV", 6, 'f', sp->fermi_eV},
      {"Fermi level, last face", "eV", 6, 'f', sp->fermi_last_eV},
      {"free electrons", "cm<sup>&#8722;2</sup>", 4, 'e', sp->electrons_cm2},
      {"electrons in the subbands", "cm<sup>&#8722;2</sup>", 4, 'e', sp->electrons_bound_cm2},
      {"free holes", "cm<sup>&#8722;2</sup>", 4, 'e', sp->holes_cm2},
      {"holes in the subbands", "cm<sup>&#8722;2</sup>", 4, 'e', sp->holes_bound_cm2},
      {"ionised donors", "cm<sup>&#8722;2</sup>", 4, 'e', sp->donors_ion_cm2},
      {"ionised acceptors", "cm<sup>&#8722;2</sup>", 4, 'e', sp->acceptors_ion_cm2},
      {"residual max|&#916;U|", "eV", 2, 'e', sp->residual_eV},
  };
  for (size_t k = 0; k < sizeof q / sizeof q[0]; k++) {
    if (k == 1 && !st->bias_given) continue;
    fprintf(f, "<tr><td>%s</td>", q[k].name);
    num(f, q[k].digits, q[k].style, q[k].v);
    fprintf(f, "<td>%s</td></tr>\n", q[k].unit);
  }
  fprintf(f, "</table>\n<p class=\"meta\">%s; %d outer iterations; occupations at T = %g K. "
             "The band diagram draws the Fermi level.</p>\n",
          st->bias_given ? "bias between the two faces"
          : st->surface_given ? "pinned first face, neutral last face"
                              : "charge-neutral, flat ends",
          sp->iterations, sp->temperature_K);
  fputs("<h3>Sheet densities</h3>\n<table id=\"sheet\">\n<tr><th>state</th><th>energy (eV)"
        "</th><th>sheet density (cm<sup>&#8722;2</sup>)</th></tr>\n", f);
  for (size_t i = 0; i < r->n_states; i++) {
    fprintf(f, "<tr><td>%s</td>", r->states[i].label);
    num(f, 6, 'f', r->states[i].energy_eV);
    num(f, 4, 'e', sp->sheet_cm2[i]);
    fputs("</tr>\n", f);
  }
  fputs("</table>\n", f);
  int dh = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    if (!dh++)
      fputs("<h3>Depolarisation-shifted intersubband lines</h3>\n<table id=\"depol\">\n<tr>"
            "<th>line</th><th>bare (meV)</th><th>shift (meV)</th><th>shifted (meV)</th>"
            "<th>&#955; shifted (&#181;m)</th></tr>\n", f);
    double d = sp->depol_eV[i], e = ln->energy_eV + d;
    fprintf(f, "<tr><td>%s&#8211;%s</td>", r->states[ln->lower].label, r->states[ln->upper].label);
    num(f, 3, 'f', ln->energy_eV * 1e3);
    num(f, 3, 'f', d * 1e3);
    num(f, 3, 'f', e * 1e3);
    num(f, 4, 'f', EW_HC_EVNM / e / 1e3);
    fputs("</tr>\n", f);
  }
  if (dh) fputs("</table>\n", f);
}

/* One spectrum (0 interband, 1 intersubband) of s: the chart inline and its peaks. */
static ew_status spectrum_figure(FILE *f, const ew_wf_spectra *s, int w, ew_error *err) {
  static const char *const id[2] = {"spectrum-interband", "spectrum-intersubband"};
  double *x = malloc((s->n ? s->n : 1) * sizeof *x), *y = malloc((s->n ? s->n : 1) * sizeof *y);
  if (!x || !y) {
    free(x);
    free(y);
    return ew_fail(err, EW_ERR_NOMEM, NULL, 0, "out of memory (report spectra)");
  }
  size_t m = 0;
  for (size_t k = 0; k < s->n; k++)
    if (s->grid[k] & (w ? 2 : 1)) {
      x[m] = w ? 1e3 * s->E_eV[k] : s->E_eV[k];
      y[m++] = ew_wf_spectra_value(s, w, k); /* intersubband: bound lines + continuum */
    }
  const double *ys[1] = {y};
  const char *names[1] = {w ? "absorbed fraction per pass" : "interband_rel"};
  fprintf(f, "<figure id=\"%s\">\n", id[w]);
  ew_status rc = ew_plot_xy_svg(f, w ? "Intersubband absorption" : "Interband absorption, relative",
                                w ? "photon energy (meV)" : "photon energy (eV)",
                                w ? "fraction absorbed per pass" : "relative absorption", m, x, 1,
                                ys, names, err);
  free(x);
  free(y);
  if (rc != EW_OK) return rc;
  if (w)
    fprintf(f, "<figcaption>TM light at %g&#176; inside n = %g (the <code>--spectra</code> "
               "defaults), N<sub>s</sub> = %g cm<sup>&#8722;2</sup> in e1, Lorentzian FWHM %g "
               "meV.</figcaption>\n</figure>\n",
            s->theta_deg, s->n_refr, s->sheet_density_cm2, s->linewidth_meV);
  else
    fprintf(f, "<figcaption>TE light at normal incidence, Lorentzian FWHM %g meV; 1 = the step "
               "of a line of TE weight &#215; &#956;&#8741;/m<sub>0</sub> = 1.</figcaption>\n"
               "</figure>\n",
            s->linewidth_meV);
  ew_wf_peak pk[64];
  size_t n = ew_wf_spectra_peaks(s, w, pk, 64);
  fprintf(f, "<table id=\"%s-peaks\">\n<tr><th>peak energy (eV)</th><th>wavelength</th>"
             "<th>value</th></tr>\n", id[w]);
  for (size_t k = 0; k < n && k < 64; k++) {
    double lam = EW_HC_EVNM / pk[k].E_eV;
    fputs("<tr>", f);
    num(f, 6, 'f', pk[k].E_eV);
    if (lam >= 2000) fprintf(f, "<td class=\"n\">%.4f &#181;m</td>", lam / 1e3);
    else fprintf(f, "<td class=\"n\">%.2f nm</td>", lam);
    num(f, 5, 'g', pk[k].value);
    fputs("</tr>\n", f);
  }
  fprintf(f, "</table>\n<p class=\"meta\">Peaks: local maxima above %g %% of the spectrum's "
             "maximum%s.</p>\n",
          100.0 * EW_WF_PEAK_FRACTION, n > 64 ? " (the first 64)" : "");
  return EW_OK;
}

/* The absorption spectra of `epiwell solve --spectra` (spectra_workflow.c, its default angle
 * and index), each with its peaks; a spectrum that cannot be computed says why. */
static ew_status spectra_section(FILE *f, const ew_result *r, ew_error *err) {
  fputs("<h2 id=\"spectra\">Absorption spectra</h2>\n", f);
  ew_wf_spectra s;
  ew_error e = {0};
  ew_status rc = ew_wf_spectra_compute(r, EW_WF_DEFAULT_ANGLE_DEG, EW_WF_DEFAULT_INDEX, &s, &e);
  if (rc == EW_ERR_USAGE) { /* a stack built in memory without a linewidth: say so */
    fputs("<p>Not computed: ", f);
    h(f, e.message);
    fputs(".</p>\n", f);
    return EW_OK;
  }
  if (rc != EW_OK) {
    if (err) *err = e;
    return rc;
  }
  for (int w = 0; w < 2 && rc == EW_OK; w++) {
    if (s.note[w][0]) {
      fputs("<p>", f);
      h(f, s.note[w]);
      fputs(".</p>\n", f);
      continue;
    }
    rc = spectrum_figure(f, &s, w, err);
  }
  ew_wf_spectra_free(&s);
  return rc;
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
  polarization_table(f, r);
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
  if (r->sp) sp_section(f, r);
  rc = spectra_section(f, r, err);
  if (rc != EW_OK) return rc;
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
