/* material_print.c — what `epiwell materials` prints, to a FILE *: the catalogue list and
 * one material at (x, y, T) with units, sources, band parameters and strain. */
#include "material_print.h"

#include "alloy.h"
#include "error.h"
#include "text.h"

#include <math.h>

static void put_padded(FILE *out, const char *s, int width) {
  fputs(s, out);
  for (int w = ew_text_codepoints(s); w < width; w++) fputc(' ', out);
}

static void put_row(FILE *out, const char *label, double v, const char *unit) {
  put_padded(out, label, 12);
  char num[32];
  snprintf(num, sizeof num, "%.6g", v);
  put_padded(out, num, 15);
  fprintf(out, "%s\n", unit);
}

ew_status ew_material_print(const ew_catalogue *cat, const char *name, double x, double T_K,
                            FILE *out, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, 0.0, 0, T_K, &e, err);
  if (st) return st;
  return ew_material_print_on(cat, name, x, 0.0, T_K, 0.0, out, err);
}

/* Who the material is: binary, ternary or quaternary, the interpolation rule and its files. */
static void print_identity(const ew_catalogue *cat, const ew_cat_entry *e, double x, double y,
                           double T_K, FILE *out) {
  if (e->kind == EW_KIND_QUATERNARY) {
    fprintf(out, "%s: quaternary %s, x = %s, y = %s\n", e->name, e->description, e->x_is,
            e->y_is);
    fprintf(out, "x = %g, y = %g, T = %g K\n", x, y, T_K);
    if (e->scheme == EW_SCHEME_SQUARE)
      fprintf(out,
              "P = xy P(%s) + x(1-y) P(%s) + (1-x)y P(%s) + (1-x)(1-y) P(%s)\n"
              "    - x(1-x)[y C(%s) + (1-y) C(%s)] - y(1-y)[x C(%s) + (1-x) C(%s)]\n",
              e->corner[0], e->corner[1], e->corner[2], e->corner[3],
              cat->e[e->i_edge[0]].name, cat->e[e->i_edge[1]].name, cat->e[e->i_edge[2]].name,
              cat->e[e->i_edge[3]].name);
    else
      fprintf(out,
              "P = x P(%s) + y P(%s) + z P(%s) - xy C(%s) - yz C(%s) - xz C(%s), z = 1 - x - y,\n"
              "    each C at the projection of (x, y, z) on its edge\n",
              e->corner[0], e->corner[1], e->corner[2], cat->e[e->i_edge[0]].name,
              cat->e[e->i_edge[1]].name, cat->e[e->i_edge[2]].name);
    fprintf(out, "interpolation: %s\n", ew_quaternary_ref);
    fputs("ternary bowings from:", out);
    for (int k = 0; k < e->n_edge; k++)
      fprintf(out, "%s %s", k ? "," : "", cat->e[e->i_edge[k]].path);
    fputc('\n', out);
  } else if (e->is_alloy) {
    const ew_cat_entry *a = &cat->e[e->i_first], *c = &cat->e[e->i_second];
    fprintf(out, "%s: alloy of %s (x = 1) and %s (x = 0), x = %s\n", e->name, a->name,
            c->name, e->x_is);
    fprintf(out, "x = %g, T = %g K\n", x, T_K);
    fprintf(out, "P(x) = x P(%s) + (1 - x) P(%s) - x (1 - x) C(x), end values from %s, %s\n",
            a->name, c->name, a->path, c->path);
  } else {
    fprintf(out, "%s: binary, %s\n", e->name, e->description);
    fprintf(out, "T = %g K\n", T_K);
  }
  fprintf(out, "file: %s\n\n", e->path);
}

/* The catalogue parameters at the composition, with each one's source (or bowing). */
static void print_params(const ew_cat_entry *e, const ew_params *pp, FILE *out) {
  const ew_params p = *pp;
  fprintf(out, "parameters%s (gaps at 0 K)\n",
          e->kind == EW_KIND_QUATERNARY ? " at (x, y)" : e->is_alloy ? " at x" : "");
  fputs("parameter   value          unit    source\n", out);
  for (int k = 0; k < EW_P_COUNT; k++) {
    if (!p.have[k]) continue;
    put_padded(out, ew_param_key((ew_param)k), 12);
    char num[32];
    snprintf(num, sizeof num, "%.6g", p.v[k]);
    put_padded(out, num, 15);
    put_padded(out, ew_param_unit((ew_param)k), 8);
    if (e->kind == EW_KIND_ALLOY && e->have[k] && e->per_x[k] != 0.0)
      fprintf(out, "bowing C = %g + %g x: %s\n", e->v[k], e->per_x[k], p.source[k]);
    else if (e->kind == EW_KIND_ALLOY && e->have[k])
      fprintf(out, "bowing C = %g: %s\n", e->v[k], p.source[k]);
    else
      fprintf(out, "%s\n", p.source[k] ? p.source[k] : "");
  }
}

/* The band parameters the solver uses at T (and on the substrate when strained). */
static void print_bands(const ew_cat_entry *e, const ew_bands *bp, double T_K, double a_sub_nm,
                        FILE *out) {
  const ew_bands b = *bp;
  static const char *const valley[3] = {"Γ", "X", "L"};
  fprintf(out, "\nband parameters at T = %g K (gaps by Varshni%s; VBO independent of T)\n",
          T_K,
          e->kind == EW_KIND_QUATERNARY ? " at the corner binaries, then bowing"
          : e->is_alloy              ? " at the end binaries, then bowing"
                                     : "");
  int strained = a_sub_nm > 0.0;
  if (strained)
    fprintf(out, "(Ec, Ev_hh, Ev_lh include the strain below; Ev and the gaps are the relaxed "
                 "material's)\n");
  struct {
    const char *label;
    double v;
    const char *unit;
    int show;
  } rows[] = {
      {"Eg_G(T)", b.Eg_G_eV, "eV", 1},
      {"Eg_X(T)", b.Eg_X_eV, "eV", b.Eg_X_eV != 0.0 && !b.wurtzite},
      {"Eg_L(T)", b.Eg_L_eV, "eV", b.Eg_L_eV != 0.0 && !b.wurtzite},
      {"Ec", b.Ec_eV, "eV", 1},
      {"Ev", b.Ev_eV, "eV", 1},
      {"Ev_hh", b.Ev_hh_eV, "eV", 1},
      {"Ev_lh", b.Ev_lh_eV, "eV", 1},
      {"me", b.me, "m0", 1},
      {"mhh_z", b.mhh_z, "m0", 1},
      {"mlh_z", b.mlh_z, "m0", 1},
      {"mhh_par", b.mhh_par, "m0", 1},
      {"mlh_par", b.mlh_par, "m0", 1},
      /* wurtzite: the crystal-field split-off band and the polarisation (strain_wurtzite.h) */
      {"Ev_ch", b.Ev_ch_eV, "eV", b.wurtzite},
      {"mch_z", b.mch_z, "m0", b.wurtzite},
      {"mch_par", b.mch_par, "m0", b.wurtzite},
      {"Psp", b.Psp_C_m2, "C/m2", b.wurtzite},
      {"Ppz", b.Ppz_C_m2, "C/m2", b.wurtzite},
      {"eps_r", b.eps_r, "-", b.eps_r != 0.0},
      {"a", b.a_nm, "nm", b.a_nm != 0.0},
      {"Ep", b.Ep_eV, "eV", b.Ep_eV != 0.0},
      {"Delta_so", b.Dso_eV, "eV", b.Dso_eV != 0.0},
      {"c11", b.c11_kbar, "kbar", b.c11_kbar != 0.0},
      {"c12", b.c12_kbar, "kbar", b.c12_kbar != 0.0},
  };
  for (size_t k = 0; k < sizeof rows / sizeof rows[0]; k++)
    if (rows[k].show) put_row(out, rows[k].label, rows[k].v, rows[k].unit);
  put_padded(out, "lowest", 12);
  fprintf(out, "%s valley%s\n", valley[b.lowest_valley], a_sub_nm > 0.0 ? " (unstrained gaps)" : "");
}

/* The strain block: the pseudomorphic strain, its shifts, the top valence band and h_c. */
static void print_strain(const ew_bands *bp, double a_sub_nm, FILE *out) {
  const ew_bands b = *bp;
  if (b.wurtzite) {
    fprintf(out, "\nstrain: pseudomorphic on the c plane, template a = %g nm (300 K)\n"
                 "eps_par = eps_xx = (a_sub - a)/a; eps_perp = eps_zz = -2 (c13/c33) eps_xx; "
                 "edges and Ppz = 2 eps_xx (e31 - e33 c13/c33)\nfrom src/strain_wurtzite.h\n",
            a_sub_nm);
    put_row(out, "eps_par", b.eps_par, "-");
    put_row(out, "eps_perp", b.eps_perp, "-");
    put_row(out, "dEc", b.dEc_strain_eV, "eV");
    put_row(out, "dEhh", b.dEhh_strain_eV, "eV");
    put_row(out, "dElh", b.dElh_strain_eV, "eV");
    put_row(out, "Eg_hh", b.Ec_eV - b.Ev_hh_eV, "eV");
    return;
  }
  fprintf(out,
          "\nstrain: pseudomorphic on (001), substrate a = %g nm (lattice constants at 300 K)\n",
          a_sub_nm);
  fputs("eps_par = (a_sub - a)/a < 0 compressive; eps_perp = -2 (c12/c11) eps_par; "
        "dEc = a_c tr eps,\n"
        "dEv_hyd = -a_v tr eps (catalogue a_v < 0), shear Q = b (eps_perp - eps_par), "
        "dEhh = dEv_hyd - Q,\n"
        "dElh with the lh-so coupling (Bir-Pikus; Chuang 2009), see src/strain.h\n",
        out);
  put_row(out, "eps_par", b.eps_par, "-");
  put_row(out, "eps_perp", b.eps_perp, "-");
  put_row(out, "dEc", b.dEc_strain_eV, "eV");
  put_row(out, "dEhh", b.dEhh_strain_eV, "eV");
  put_row(out, "dElh", b.dElh_strain_eV, "eV");
  put_row(out, "Eg_hh", b.Ec_eV - b.Ev_hh_eV, "eV");
  put_row(out, "Eg_lh", b.Ec_eV - b.Ev_lh_eV, "eV");
  put_padded(out, "top", 12);
  fprintf(out, "%s\n", b.Ev_hh_eV >= b.Ev_lh_eV ? "heavy hole" : "light hole");
  if (isinf(b.critical_thickness_nm)) {
    put_padded(out, "h_c", 12);
    fputs("inf            nm      (Matthews-Blakeslee, buried layer)\n", out);
  } else {
    put_padded(out, "h_c", 12);
    char num[32];
    snprintf(num, sizeof num, "%.4g", b.critical_thickness_nm);
    put_padded(out, num, 15);
    fputs("nm      Matthews-Blakeslee (J. Cryst. Growth 27, 118 (1974)), layer buried "
          "between two interfaces\n",
          out);
  }
}

ew_status ew_material_print_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, FILE *out, ew_error *err) {
  const ew_cat_entry *e;
  ew_status st = ew_material_lookup(cat, name, x, y, 1, T_K, &e, err);
  if (st) return st;
  ew_params p;
  ew_bands b;
  if ((st = ew_material_params2(cat, name, x, y, &p, err))) return st;
  if ((st = ew_material_bands_on(cat, name, x, y, T_K, a_sub_nm, &b, err))) return st;
  print_identity(cat, e, x, y, T_K, out);
  print_params(e, &p, out);
  print_bands(e, &b, T_K, a_sub_nm, out);
  if (a_sub_nm > 0.0) print_strain(&b, a_sub_nm, out);
  return EW_OK;
}

void ew_catalogue_print(const ew_catalogue *cat, FILE *out) {
  if (!cat || !out) return;
  int w = 8, kw = 8;
  for (size_t i = 0; i < cat->n; i++) {
    int l = ew_text_codepoints(cat->e[i].name);
    if (l + 2 > w) w = l + 2;
    if (cat->e[i].kind == EW_KIND_QUATERNARY) kw = 12;
  }
  fprintf(out, "materials in %s\n", cat->dir);
  for (size_t i = 0; i < cat->n; i++) {
    const ew_cat_entry *e = &cat->e[i];
    put_padded(out, e->name, w);
    put_padded(out, e->kind == EW_KIND_QUATERNARY ? "quaternary" : e->is_alloy ? "alloy" : "binary",
               kw);
    if (e->kind == EW_KIND_QUATERNARY) {
      fprintf(out, "%s: x = %s, y = %s (", e->description, e->x_is, e->y_is);
      for (int k = 0; k < e->n_corner; k++) fprintf(out, "%s%s", k ? ", " : "", e->corner[k]);
      fputs(")\n", out);
    } else if (e->is_alloy) {
      fprintf(out, "x = %s (%s at x = 1, %s at x = 0)\n", e->x_is, e->first, e->second);
    } else {
      fprintf(out, "%s\n", e->description);
    }
  }
}
