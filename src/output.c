/* output.c — table, JSON and CSV writers (see output.h).  zlib is used only here; the JSON
 * and CSV syntax comes from json_writer.c and csv_writer.c, the atomic file set from
 * atomic.c. */
#include "output.h"
#include "polarization.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zlib.h>

#include "atomic.h"
#include "constants.h"
#include "text.h"
#include "csv_writer.h"
#include "error.h"
#include "continuum.h"
#include "json_writer.h"
#include "poisson.h"
#include "stack_caveats.h" /* ew_stack_layer_hc_nm */

static const ew_state *st_of(const ew_result *r, size_t i) { return &r->states[i]; }

/* ---- table ---------------------------------------------------------------------------- */
/* Width of the name column: the longest layer name, at least 14, so long names keep the
 * grid (also the "mostly in" column of the levels). */
static int name_width(const ew_stack *st, int material) {
  int w = 14;
  for (size_t k = 0; k < st->n_layers; k++) {
    int len = (int)strlen(material ? st->layers[k].material : st->layers[k].name);
    if (len > w) w = len;
  }
  return w;
}

static void table_head(const ew_result *r, FILE *out) {
  const ew_stack *st = r->stack;
  /* the file name is the one text of the table the reader does not check (a file named with
   * an escape sequence): control bytes and invalid UTF-8 as \xNN, as in messages */
  char path[4 * sizeof st->path];
  ew_text_escape(st->path, path, sizeof path);
  fprintf(out, "epiwell %s  %s  T = %g K  grid %.4g nm (%zu nodes)\n", EW_VERSION, path,
          st->temperature_K, r->step_nm, r->grid->n);
  fprintf(out, "model: %s", ew_result_model(r));
  if (st->field_kV_cm != 0.0) fprintf(out, "; field %g kV/cm along +z", st->field_kV_cm);
  if (st->substrate[0]) fprintf(out, "; pseudomorphic on %s", st->substrate);
  fprintf(out, "\n\n");
}

static void table_layers(const ew_stack *st, FILE *out) {
  int wn = name_width(st, 0), wm = name_width(st, 1), any_y = 0;
  for (size_t k = 0; k < st->n_layers; k++) any_y |= st->layers[k].has_y;
  fprintf(out, "Layers (growth order)\n");
  /* a y column only for stacks with a quaternary: the others' table stays as it was */
  fprintf(out, "  %-3s %-*s %-*s %6s", "#", wn, "name", wm, "material", "x");
  if (any_y) fprintf(out, " %6s", "y");
  fprintf(out, " %10s %9s %9s %9s %9s %7s %7s %7s %8s\n", "from_nm", "thick_nm", "Ec_eV",
          "Ev_hh_eV", "Ev_lh_eV", "me", "mhh", "mlh", "strain_%");
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    char x[16] = "-", y[16] = "-";
    if (ly->has_x) snprintf(x, sizeof x, "%.3f", ly->x);
    if (ly->grade) snprintf(x, sizeof x, "graded");
    if (ly->has_y) snprintf(y, sizeof y, "%.3f", ly->y);
    fprintf(out, "  %-3zu %-*s %-*s %6s", k + 1, wn, ly->name, wm, ly->material, x);
    if (any_y) fprintf(out, " %6s", y);
    fprintf(out, " %10.3f %9.3f %9.4f %9.4f %9.4f %7.4f %7.4f %7.4f %8.3f\n",
            ly->z_start_nm, ly->thickness_nm, ly->bands.Ec_eV,
            ly->bands.Ev_hh_eV, ly->bands.Ev_lh_eV, ly->bands.me, ly->bands.mhh_z,
            ly->bands.mlh_z, 100.0 * ly->bands.eps_par);
  }
}

/* Band offsets of each interface (stack.h ew_interface: signs and share). */
static void table_offsets(const ew_stack *st, FILE *out) {
  if (st->n_layers < 2) return;
  int wn = name_width(st, 0);
  fprintf(out, "\nInterfaces (dEc = Ec(first) - Ec(second), dEv = Ev_hh(second) - Ev_hh(first); "
               "share = dEc/(dEc + dEv)%s)\n",
          st->offsets_set ? "; offsets set by the stack" : "");
  fprintf(out, "  %-*s %-*s %10s %9s %9s %7s\n", wn, "first", wn, "second", "z_nm", "dEc_eV",
          "dEv_eV", "share");
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    ew_interface in;
    ew_stack_interface(st, k, &in);
    char sh[16] = "-";
    if (isfinite(in.conduction_share)) snprintf(sh, sizeof sh, "%.3f", in.conduction_share);
    fprintf(out, "  %-*s %-*s %10.3f %9.4f %9.4f %7s\n", wn, st->layers[k].name, wn,
            st->layers[k + 1].name, in.z_nm, in.dEc_eV, in.dEv_eV, sh);
  }
}

/* Polarisation of a wurtzite stack: each layer's P and field, each interface's charges. */
static void table_polarization(const ew_result *r, FILE *out) {
  const ew_stack *st = r->stack;
  if (!st->polarized) return;
  int wn = name_width(st, 0);
  fprintf(out, "\nPolarisation (c plane, [0001] along %s; P_sp, P_pz along [0001]; field along +z %s%s)\n",
          st->c_sign > 0 ? "+z" : "-z",
          st->pol_in_poisson ? "of the self-consistent potential"
                             : "of the interface charges, zero drop over the stack",
          st->screening_sheet_cm2 > 0 ? "; wells screened" : "");
  fprintf(out, "  %-*s %12s %12s %12s\n", wn, "layer", "P_sp_C_m2", "P_pz_C_m2", "field_kV_cm");
  for (size_t k = 0; k < st->n_layers; k++)
    fprintf(out, "  %-*s %12.5f %12.5f %12.1f\n", wn, st->layers[k].name,
            st->layers[k].bands.Psp_C_m2, st->layers[k].bands.Ppz_C_m2,
            ew_result_layer_field_kV_cm(r, k));
  fprintf(out, "  %-*s %-*s %10s %12s %12s %12s\n", wn, "first", wn, "second", "z_nm",
          "bound_C_m2", "sheet_C_m2", "sheet_cm-2");
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    double s = ew_interface_charge_C_m2(st, k);
    fprintf(out, "  %-*s %-*s %10.3f %12.5f %12.5f %12.4g\n", wn, st->layers[k].name, wn,
            st->layers[k + 1].name, st->layers[k + 1].z_start_nm,
            ew_interface_bound_C_m2(st, k), s, s / EW_E_C * 1e-4);
  }
}

static void table_levels(const ew_result *r, FILE *out) {
  const ew_stack *st = r->stack;
  int wn = name_width(st, 0);
  fprintf(out, "\nBound levels (%zu e, %zu hh, %zu lh; count certified by inertia; error_meV is "
          "the numerical error only, not the design uncertainty: see `epiwell tolerance`)\n",
          r->band_count[0], r->band_count[1], r->band_count[2]);
  int kp = r->opt.hole_dos != EW_HOLE_DOS_PARABOLIC; /* + the k·p DOS masses, last */
  fprintf(out, "  %-6s %12s %11s %11s  %-*s %6s %8s %13s%s\n", "state", "energy_eV", "depth_meV",
          "error_meV", wn, "mostly in", "prob", "m_inpl", "below_top_meV", kp ? "    m_dos" : "");
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *s = st_of(r, i);
    char e[24] = "n/a";
    if (s->error_eV >= 0) snprintf(e, sizeof e, "%.2e", s->error_eV * 1e3);
    char md[24] = "";
    if (kp && s->dos_mass_m0 != 0.0 && isfinite(s->dos_mass_m0))
      snprintf(md, sizeof md, " %8.4f", s->dos_mass_m0);
    else if (kp) snprintf(md, sizeof md, " %8s", "-");
    fprintf(out, "  %-6s %12.6f %11.3f %11s  %-*s %6.3f %8.4f %13.3f%s%s\n", s->label,
            s->energy_eV, s->depth_eV * 1e3, e, wn, st->layers[s->layer].name,
            s->layer_probability, s->inplane_mass, ew_result_state_below_top_eV(r, i) * 1e3,
            md, s->flagged ? "  RESIDUAL CHECK FAILED" : "");
  }
  if (r->n_states == 0)
    fprintf(out, "  (none: no band binds a state below the edges of its outer layers)\n");
}

static double pl_peak_nm(const ew_line *ln) { return ew_line_pl_peak_nm(ln); }

/* One line each for the lines the table leaves out (ew_options line_min_strength). */
static void table_hidden(const char *what, size_t n, double min, FILE *out) {
  if (n)
    fprintf(out, "  (%zu line%s with %s < %g not listed: `--lines all` lists every line)\n", n,
            n == 1 ? "" : "s", what, min);
}

static void table_lines(const ew_result *r, FILE *out) {
  int head = 0;
  double min = r->opt.line_min_strength > 0 ? r->opt.line_min_strength : 0.0;
  size_t hidden = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    if (ln->oscillator_strength < min) { /* f = 0 by parity in a symmetric well */
      hidden++;
      continue;
    }
    if (!head++)
      fprintf(out, "\nIntersubband lines (TM, light polarised along z)\n  %-10s %11s %10s %10s %9s\n",
              "line", "energy_meV", "lambda_um", "dipole_nm", "f");
    char nm[40];
    snprintf(nm, sizeof nm, "%s-%s", st_of(r, ln->lower)->label, st_of(r, ln->upper)->label);
    char wl[32] = "-";
    if (isfinite(ln->wavelength_nm)) snprintf(wl, sizeof wl, "%.4f", ln->wavelength_nm / 1e3);
    fprintf(out, "  %-10s %11.3f %10s %10.4f %9.4f\n", nm, ln->energy_eV * 1e3, wl,
            ln->dipole_nm, ln->oscillator_strength);
  }
  if (!head && hidden) fprintf(out, "\nIntersubband lines (TM, light polarised along z)\n");
  table_hidden("f", hidden, min, out);
  head = 0;
  hidden = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    if (ln->overlap < min) {
      hidden++;
      continue;
    }
    if (!head++)
      fprintf(out, "\nInterband lines (band to band; PL peak = line − exciton binding)\n"
                   "  %-10s %11s %10s %9s %10s %10s %8s %6s %6s  %s\n",
              "line", "energy_eV", "lambda_nm", "overlap", "Xbind_meV", "PL_eV", "PL_nm", "TE",
              "TM", "");
    char nm[40];
    snprintf(nm, sizeof nm, "%s-%s", st_of(r, ln->upper)->label, st_of(r, ln->lower)->label);
    fprintf(out, "  %-10s %11.5f %10.2f %9.4f %10.2f %10.5f %8.2f %6.3f %6.3f  %s\n", nm,
            ln->energy_eV, ln->wavelength_nm, ln->overlap, ln->exciton_binding_eV * 1e3,
            ln->pl_peak_eV, pl_peak_nm(ln), ln->te_strength, ln->tm_strength,
            ln->allowed ? "allowed" : "forbidden");
  }
  if (!head && hidden) fprintf(out, "\nInterband lines (band to band)\n");
  table_hidden("overlap", hidden, min, out);
}

/* Self-consistent Schrödinger–Poisson (doped stacks): Fermi level, densities, sheet
 * densities and the depolarised intersubband lines. */
static void table_sp(const ew_result *r, FILE *out) {
  const ew_stack *st = r->stack;
  const ew_sp_info *sp = r->sp;
  fprintf(out, "\nSelf-consistent Schrödinger–Poisson (%s)\n",
          st->bias_given ? "bias between the two faces"
          : st->surface_given ? "pinned first face, neutral last face"
                              : "charge-neutral, flat ends");
  fprintf(out, "  Fermi level %.6f eV", sp->fermi_eV);
  if (st->bias_given) fprintf(out, " (first face), %.6f eV (last face)", sp->fermi_last_eV);
  fprintf(out, "; %d iterations, residual max|dU| %.2e eV; T = %g K\n", sp->iterations,
          sp->residual_eV, sp->temperature_K);
  fprintf(out, "  free electrons %.4e cm^-2 (subbands %.4e), holes %.4e cm^-2 (subbands %.4e)\n",
          sp->electrons_cm2, sp->electrons_bound_cm2, sp->holes_cm2, sp->holes_bound_cm2);
  fprintf(out, "  ionised donors %.4e cm^-2, ionised acceptors %.4e cm^-2\n", sp->donors_ion_cm2,
          sp->acceptors_ion_cm2);
  fprintf(out, "  %-6s %12s %14s\n", "state", "energy_eV", "sheet_cm^-2");
  for (size_t i = 0; i < r->n_states; i++)
    fprintf(out, "  %-6s %12.6f %14.4e\n", st_of(r, i)->label, st_of(r, i)->energy_eV,
            sp->sheet_cm2[i]);
  int dh = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    if (!dh++)
      fprintf(out, "  Depolarised intersubband lines\n  %-10s %11s %11s %11s %10s\n", "line",
              "bare_meV", "shift_meV", "depol_meV", "lambda_um");
    char nm[40];
    snprintf(nm, sizeof nm, "%s-%s", st_of(r, ln->lower)->label, st_of(r, ln->upper)->label);
    double d = sp->depol_eV[i], e = ln->energy_eV + d;
    fprintf(out, "  %-10s %11.3f %11.3f %11.3f %10.4f\n", nm, ln->energy_eV * 1e3, d * 1e3,
            e * 1e3, EW_HC_EVNM / e / 1e3);
  }
}

void ew_output_table(const ew_result *r, FILE *out) {
  table_head(r, out);
  table_layers(r->stack, out);
  table_offsets(r->stack, out);
  table_polarization(r, out);
  table_levels(r, out);
  table_lines(r, out);
  if (r->sp) table_sp(r, out);
  if (r->n_warnings) {
    fprintf(out, "\nWarnings\n");
    for (size_t i = 0; i < r->n_warnings; i++)
      fprintf(out, "  - [%s] %s\n", r->warning_codes[i], r->warnings[i]);
  }
  fputc('\n', out);
}

/* ---- JSON (README "Output reference"; the writer places the commas) ------------------- */
static void json_layers(ew_json *j, const ew_result *r) {
  const ew_stack *st = r->stack;
  ew_json_key(j, "layers");
  ew_json_begin_array(j);
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    ew_json_begin_object(j);
    ew_json_key_str(j, "name", ly->name);
    ew_json_key_str(j, "material", ly->material);
    if (ly->has_x) ew_json_key_num(j, "x", ly->x);
    ew_json_key_num(j, "z_start_nm", ly->z_start_nm);
    ew_json_key_num(j, "thickness_nm", ly->thickness_nm);
    ew_json_key_num(j, "Ec_eV", ly->bands.Ec_eV);
    ew_json_key_num(j, "Ev_hh_eV", ly->bands.Ev_hh_eV);
    ew_json_key_num(j, "Ev_lh_eV", ly->bands.Ev_lh_eV);
    ew_json_key_num(j, "me", ly->bands.me);
    ew_json_key_num(j, "mhh", ly->bands.mhh_z);
    ew_json_key_num(j, "mlh", ly->bands.mlh_z);
    if (ly->has_y) ew_json_key_num(j, "y", ly->y);
    ew_json_key_num(j, "eps_par", ly->bands.eps_par);
    ew_json_key_num(j, "eps_perp", ly->bands.eps_perp);
    /* by the one rule of stack_caveats.c: one interface for the uncapped surface layer */
    ew_json_key_num(j, "critical_thickness_nm", ew_stack_layer_hc_nm(st, k));
    if (st->polarized) { /* wurtzite stacks (polarization.h) */
      ew_json_key_num(j, "polarization_C_m2", ly->polarization_C_m2);
      ew_json_key_num(j, "field_kV_cm", ew_result_layer_field_kV_cm(r, k));
      ew_json_key_num(j, "Ev_ch_eV", ly->bands.Ev_ch_eV);
      ew_json_key_num(j, "mhh_par", ly->bands.mhh_par);
      ew_json_key_num(j, "mlh_par", ly->bands.mlh_par);
      ew_json_key_num(j, "mch", ly->bands.mch_z);
      ew_json_key_num(j, "mch_par", ly->bands.mch_par);
    }
    ew_json_end_object(j);
  }
  ew_json_end_array(j);
}

/* "interfaces": the band offsets of each interface (stack.h ew_interface; null share for
 * equal gaps) */
static void json_interfaces(ew_json *j, const ew_stack *st) {
  ew_json_key(j, "interfaces");
  ew_json_begin_array(j);
  for (size_t k = 0; k + 1 < st->n_layers; k++) {
    ew_interface in;
    ew_stack_interface(st, k, &in);
    ew_json_begin_object(j);
    ew_json_key(j, "between");
    ew_json_begin_array(j);
    ew_json_str(j, st->layers[k].name);
    ew_json_str(j, st->layers[k + 1].name);
    ew_json_end_array(j);
    ew_json_key_num(j, "z_nm", in.z_nm);
    ew_json_key_num(j, "dEc_eV", in.dEc_eV);
    ew_json_key_num(j, "dEv_eV", in.dEv_eV);
    ew_json_key_num(j, "conduction_share", in.conduction_share);
    if (st->polarized) {
      /* bound charge P_k − P_{k+1}, and with the screening sheets (what the fields see) */
      ew_json_key_num(j, "bound_charge_C_m2", ew_interface_bound_C_m2(st, k));
      ew_json_key_num(j, "sheet_charge_C_m2", ew_interface_charge_C_m2(st, k));
    }
    ew_json_end_object(j);
  }
  ew_json_end_array(j);
}

static void json_bands(ew_json *j, const ew_result *r) {
  ew_json_key(j, "bands");
  ew_json_begin_object(j);
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    ew_json_key(j, ew_band_name((ew_band)b));
    ew_json_begin_object(j);
    ew_json_key_size(j, "count", r->band_count[b]);
    ew_json_key_num(j, "window_eV", r->window_eV[b]);
    ew_json_end_object(j);
  }
  ew_json_end_object(j);
}

static void json_states(ew_json *j, const ew_result *r) {
  ew_json_key(j, "states");
  ew_json_begin_array(j);
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *s = st_of(r, i);
    ew_json_begin_object(j);
    ew_json_key_str(j, "label", s->label);
    ew_json_key_str(j, "band", ew_band_name(s->band));
    ew_json_key_int(j, "n", s->n);
    ew_json_key_num(j, "energy_eV", s->energy_eV);
    if (s->error_eV >= 0) ew_json_key_num(j, "error_eV", s->error_eV);
    else ew_json_key_null(j, "error_eV");
    ew_json_key_num(j, "edge_eV", s->edge_eV);
    ew_json_key_num(j, "depth_eV", s->depth_eV);
    ew_json_key_str(j, "layer", r->stack->layers[s->layer].name);
    ew_json_key_num(j, "layer_probability", s->layer_probability);
    ew_json_key_num(j, "residual", s->residual);
    ew_json_key_bool(j, "flagged", s->flagged);
    ew_json_key_num(j, "inplane_mass_m0", s->inplane_mass);
    ew_json_key_num(j, "below_top_eV", ew_result_state_below_top_eV(r, i));
    /* k·p density-of-states mass (ew_options.hole_dos); null when not computed */
    if (s->dos_mass_m0 != 0.0) ew_json_key_num(j, "dos_mass_m0", s->dos_mass_m0);
    else ew_json_key_null(j, "dos_mass_m0");
    if (r->sp) ew_json_key_num(j, "sheet_density_cm2", r->sp->sheet_cm2[i]);
    else ew_json_key_null(j, "sheet_density_cm2");
    ew_json_end_object(j);
  }
  ew_json_end_array(j);
}

static void json_transitions(ew_json *j, const ew_result *r) {
  ew_json_key(j, "transitions");
  ew_json_begin_array(j);
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    ew_json_begin_object(j);
    ew_json_key_str(j, "kind", isb ? "intersubband" : "interband");
    ew_json_key_str(j, "upper", st_of(r, ln->upper)->label);
    ew_json_key_str(j, "lower", st_of(r, ln->lower)->label);
    ew_json_key_num(j, "energy_eV", ln->energy_eV);
    if (isb) {
      ew_json_key_num(j, "wavelength_um", ln->wavelength_nm / 1e3);
      ew_json_key_num(j, "dipole_nm", ln->dipole_nm);
      ew_json_key_num(j, "oscillator_strength", ln->oscillator_strength);
      if (r->sp) ew_json_key_num(j, "depolarization_shift_eV", r->sp->depol_eV[i]);
      else ew_json_key_null(j, "depolarization_shift_eV");
    } else {
      ew_json_key_num(j, "wavelength_nm", ln->wavelength_nm);
      ew_json_key_num(j, "overlap", ln->overlap);
      ew_json_key_bool(j, "allowed", ln->allowed);
      ew_json_key_num(j, "exciton_binding_eV", ln->exciton_binding_eV);
      ew_json_key_num(j, "pl_peak_eV", ln->pl_peak_eV);
      ew_json_key_num(j, "pl_peak_nm", pl_peak_nm(ln));
      ew_json_key_num(j, "te_strength", ln->te_strength);
      ew_json_key_num(j, "tm_strength", ln->tm_strength);
    }
    ew_json_end_object(j);
  }
  ew_json_end_array(j);
}

/* Self-consistent Schrödinger–Poisson: the first three keys are null for undoped stacks. */
static void json_sp(ew_json *j, const ew_sp_info *sp) {
  if (!sp) {
    ew_json_key_null(j, "fermi_energy_eV");
    ew_json_key_null(j, "iterations");
    ew_json_key_null(j, "residual_eV");
    return;
  }
  ew_json_key_num(j, "fermi_energy_eV", sp->fermi_eV);
  ew_json_key_int(j, "iterations", sp->iterations);
  ew_json_key_num(j, "residual_eV", sp->residual_eV);
  ew_json_key_num(j, "fermi_energy_last_eV", sp->fermi_last_eV);
  ew_json_key_num(j, "electrons_cm2", sp->electrons_cm2);
  ew_json_key_num(j, "holes_cm2", sp->holes_cm2);
  ew_json_key_num(j, "donors_ionised_cm2", sp->donors_ion_cm2);
  ew_json_key_num(j, "acceptors_ionised_cm2", sp->acceptors_ion_cm2);
}

/* "sum_rule": the Thomas–Reiche–Kuhn sum from e1, bound lines and continuum (continuum.h);
 * null without e1 or where the continuum does not apply (a field). */
static void json_sum_rule(ew_json *j, const double sr[2]) {
  ew_json_key(j, "sum_rule");
  if (!sr || !isfinite(sr[0]) || !isfinite(sr[1])) {
    ew_json_null(j);
    return;
  }
  ew_json_begin_object(j);
  ew_json_key_str(j, "from", "e1");
  ew_json_key_num(j, "bound", sr[0]);
  ew_json_key_num(j, "continuum", sr[1]);
  ew_json_end_object(j);
}

void ew_output_json(const ew_result *r, FILE *out) {
  double sr[2];
  if (ew_continuum_sum_rule_e1(r, &sr[0], &sr[1], NULL) != EW_OK) sr[0] = sr[1] = NAN;
  ew_output_json_sum(r, sr, out);
}

void ew_output_json_sum(const ew_result *r, const double sum_rule[2], FILE *out) {
  const ew_stack *st = r->stack;
  ew_json j;
  ew_json_init(&j, out);
  ew_json_begin_object(&j);
  ew_json_key_str(&j, "version", EW_VERSION);
  ew_json_key_str(&j, "stack", st->path);
  ew_json_key_num(&j, "temperature_K", st->temperature_K);
  ew_json_key_num(&j, "grid_step_nm", r->step_nm);
  ew_json_key_size(&j, "nodes", r->grid->n);
  ew_json_key_str(&j, "model", ew_result_model(r));
  ew_json_key_str(&j, "hole_dos", ew_hole_dos_name(r->opt.hole_dos)); /* the DOS model of holes */
  ew_json_key_num(&j, "field_kV_cm", st->field_kV_cm);
  ew_json_key(&j, "warnings");
  ew_json_begin_array(&j);
  for (size_t i = 0; i < r->n_warnings; i++) ew_json_str(&j, r->warnings[i]);
  ew_json_end_array(&j);
  ew_json_key(&j, "warning_codes"); /* parallel to warnings: code i belongs to warning i */
  ew_json_begin_array(&j);
  for (size_t i = 0; i < r->n_warnings; i++) ew_json_str(&j, r->warning_codes[i]);
  ew_json_end_array(&j);
  json_layers(&j, r);
  json_interfaces(&j, st);
  json_bands(&j, r);
  json_states(&j, r);
  json_transitions(&j, r);
  json_sp(&j, r->sp);
  json_sum_rule(&j, sum_rule);
  ew_json_end_object(&j);
  ew_json_finish(&j); /* the stream's error state stays for the caller to check */
}

/* ---- CSV files ---------------------------------------------------------------------- */
/* Cells go to a plain file (stdio) or through zlib: the csv writer's sink. */
typedef struct {
  FILE *f;
  gzFile gz;
} sink;

static int sink_write(void *ctx, const char *data, size_t len) {
  sink *s = ctx;
  if (s->gz) return gzwrite(s->gz, data, (unsigned)len) != (int)len;
  return fwrite(data, 1, len, s->f) != len;
}

static void write_profile(const ew_result *r, ew_csv *c) {
  static const char *const cols[] = {"z_nm", "Ec_eV", "Ev_hh_eV", "Ev_lh_eV", "me", "mhh",
                                     "mlh", "layer", "potential_eV", "charge_cm3", "n_cm3",
                                     "p_cm3", "donors_ion_cm3", "acceptors_ion_cm3"};
  static const ew_sp_profile sp_cols[] = {EW_SP_CHARGE_CM3, EW_SP_N_CM3, EW_SP_P_CM3,
                                          EW_SP_DONORS_ION_CM3, EW_SP_ACCEPTORS_ION_CM3};
  const ew_grid *g = r->grid;
  ew_csv_header(c, sizeof cols / sizeof cols[0], cols);
  for (size_t i = 0; i < g->n && !ew_csv_failed(c); i++) {
    ew_csv_format(c, "%.6f", g->z[i]);
    for (int b = 0; b < EW_BAND_COUNT; b++) ew_csv_format(c, "%.8f", g->edge[b][i]);
    for (int b = 0; b < EW_BAND_COUNT; b++) ew_csv_format(c, "%.6f", g->mass[b][i]);
    ew_csv_text(c, r->stack->layers[g->layer[i]].name);
    /* self-consistent: U = −eφ and the densities; empty cells for a plain solve */
    if (r->sp) ew_csv_format(c, "%.10f", r->sp->prof[EW_SP_POTENTIAL_EV][i]);
    else ew_csv_empty(c);
    for (size_t k = 0; k < sizeof sp_cols / sizeof sp_cols[0]; k++) {
      if (r->sp) ew_csv_format(c, "%.6e", r->sp->prof[sp_cols[k]][i]);
      else ew_csv_empty(c);
    }
    ew_csv_end_row(c);
  }
}

static void write_levels(const ew_result *r, ew_csv *c) {
  static const char *const cols[] = {"label", "band", "n", "energy_eV", "error_eV", "edge_eV",
                                     "depth_eV", "layer", "layer_probability", "residual",
                                     "flagged", "sheet_density_cm2", "inplane_mass_m0",
                                     "below_top_eV", "dos_mass_m0"};
  ew_csv_header(c, sizeof cols / sizeof cols[0], cols);
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *q = st_of(r, i);
    ew_csv_text(c, q->label);
    ew_csv_text(c, ew_band_name(q->band));
    ew_csv_int(c, q->n);
    ew_csv_format(c, "%.10f", q->energy_eV);
    ew_csv_format(c, "%.3e", q->error_eV);
    ew_csv_format(c, "%.8f", q->edge_eV);
    ew_csv_format(c, "%.10f", q->depth_eV);
    ew_csv_text(c, r->stack->layers[q->layer].name);
    ew_csv_format(c, "%.6f", q->layer_probability);
    ew_csv_format(c, "%.3e", q->residual);
    ew_csv_int(c, q->flagged);
    if (r->sp) ew_csv_format(c, "%.6e", r->sp->sheet_cm2[i]);
    else ew_csv_empty(c);
    ew_csv_format(c, "%.6f", q->inplane_mass);
    ew_csv_format(c, "%.10f", ew_result_state_below_top_eV(r, i));
    if (q->dos_mass_m0 != 0.0 && isfinite(q->dos_mass_m0)) ew_csv_format(c, "%.6f", q->dos_mass_m0);
    else ew_csv_empty(c); /* not computed (ew_options.hole_dos parabolic), or undefined */
    ew_csv_end_row(c);
  }
}

static void write_lines(const ew_result *r, ew_csv *c) {
  static const char *const cols[] = {
      "kind",        "upper",  "lower",   "energy_eV",          "wavelength_nm",
      "wavelength_um", "dipole_nm", "oscillator_strength", "overlap", "allowed",
      "exciton_binding_eV", "pl_peak_eV", "te_strength", "tm_strength",
      "depolarization_shift_eV", "pl_peak_nm"}; /* new columns go last: positions are kept */
  ew_csv_header(c, sizeof cols / sizeof cols[0], cols);
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    ew_csv_text(c, isb ? "intersubband" : "interband");
    ew_csv_text(c, st_of(r, ln->upper)->label);
    ew_csv_text(c, st_of(r, ln->lower)->label);
    ew_csv_format(c, "%.10f", ln->energy_eV);
    if (isfinite(ln->wavelength_nm)) {
      ew_csv_format(c, "%.6f", ln->wavelength_nm);
      ew_csv_format(c, "%.8f", ln->wavelength_nm / 1e3);
    } else { /* a zero-energy pair of degenerate levels has no wavelength */
      ew_csv_empty(c);
      ew_csv_empty(c);
    }
    if (isb) { /* dipole, f; no overlap; always allowed; no interband columns */
      ew_csv_format(c, "%.8f", ln->dipole_nm);
      ew_csv_format(c, "%.8f", ln->oscillator_strength);
      ew_csv_empty(c);
      ew_csv_int(c, 1);
      for (int k = 0; k < 4; k++) ew_csv_empty(c);
    } else {
      ew_csv_empty(c);
      ew_csv_empty(c);
      ew_csv_format(c, "%.8f", ln->overlap);
      ew_csv_int(c, ln->allowed);
      ew_csv_format(c, "%.8f", ln->exciton_binding_eV);
      ew_csv_format(c, "%.10f", ln->pl_peak_eV);
      ew_csv_format(c, "%.6f", ln->te_strength);
      ew_csv_format(c, "%.6f", ln->tm_strength);
    }
    if (r->sp && isb) ew_csv_format(c, "%.8e", r->sp->depol_eV[i]);
    else ew_csv_empty(c);
    if (!isb && isfinite(pl_peak_nm(ln))) ew_csv_format(c, "%.6f", pl_peak_nm(ln));
    else ew_csv_empty(c);
    ew_csv_end_row(c);
  }
}

static void write_waves(const ew_result *r, ew_csv *c) {
  const ew_grid *g = r->grid;
  ew_csv_text(c, "z_nm");
  for (size_t j = 0; j < r->n_states; j++) ew_csv_text(c, st_of(r, j)->label);
  ew_csv_end_row(c);
  for (size_t i = 0; i < g->n && !ew_csv_failed(c); i++) {
    ew_csv_format(c, "%.6f", g->z[i]);
    for (size_t j = 0; j < r->n_states; j++) ew_csv_format(c, "%.6e", r->psi[j * g->n + i]);
    ew_csv_end_row(c);
  }
}
/* dir exists and is a writable directory (create = 1: make it first when missing), or, with
 * create = 0, it is missing but its parent is a writable directory (made when writing). */
static ew_status dir_ready(const char *dir, int create, ew_error *err) {
  struct stat sb;
  if (stat(dir, &sb) != 0) {
    if (errno != ENOENT)
      return ew_fail(err, EW_ERR_IO, dir, 0, "cannot use output directory: %s", strerror(errno));
    if (create) {
      /* another run may make it meanwhile: a directory there is fine */
      if (mkdir(dir, 0777) != 0 &&
          !(errno == EEXIST && stat(dir, &sb) == 0 && S_ISDIR(sb.st_mode)))
        return ew_fail(err, EW_ERR_IO, dir, 0, "cannot create output directory: %s",
                       strerror(errno));
      return EW_OK;
    }
    char parent[1200];
    snprintf(parent, sizeof parent, "%s", dir);
    size_t len = strlen(parent);
    while (len > 1 && parent[len - 1] == '/') parent[--len] = '\0';
    char *slash = strrchr(parent, '/');
    if (!slash) snprintf(parent, sizeof parent, ".");
    else if (slash == parent) parent[1] = '\0';
    else *slash = '\0';
    if (stat(parent, &sb) != 0 || !S_ISDIR(sb.st_mode))
      return ew_fail(err, EW_ERR_IO, dir, 0, "cannot create output directory: %s does not exist",
                     parent);
    if (access(parent, W_OK) != 0)
      return ew_fail(err, EW_ERR_IO, dir, 0, "cannot create output directory: %s is not "
                     "writable", parent);
    return EW_OK;
  }
  if (!S_ISDIR(sb.st_mode))
    return ew_fail(err, EW_ERR_IO, dir, 0, "output path exists and is not a directory");
  if (access(dir, W_OK) != 0)
    return ew_fail(err, EW_ERR_IO, dir, 0, "output directory is not writable: %s",
                   strerror(errno));
  return EW_OK;
}

ew_status ew_output_check_dir(const char *dir, ew_error *err) { return dir_ready(dir, 0, err); }
ew_status ew_output_make_dir(const char *dir, ew_error *err) { return dir_ready(dir, 1, err); }


/* Write one member of the set: plain through stdio, or gzip through zlib on the member's
 * descriptor. */
static ew_status write_member(ew_atomic_set *set, const char *path, int gz,
                              void (*fn)(const ew_result *, ew_csv *), const ew_result *r,
                              ew_error *err) {
  ew_atomic_file *a;
  ew_status rc = gz ? ew_atomic_set_add_fd(set, path, &a, err)
                    : ew_atomic_set_add(set, path, &a, err);
  if (rc != EW_OK) return rc;
  sink s = {a->f, NULL};
  if (gz) {
    s.gz = gzdopen(a->fd, "wb6");
    if (!s.gz) return ew_atomic_fail(a, err);
    a->fd = -1; /* gzclose closes it */
  }
  ew_csv c;
  ew_csv_init(&c, sink_write, &s);
  fn(r, &c);
  int bad = ew_csv_failed(&c);
  if (gz) bad |= gzclose(s.gz) != Z_OK;
  if (bad) return ew_atomic_fail(a, err);
  return ew_atomic_close(a, err);
}

ew_status ew_output_csv_dir(const ew_result *r, const char *dir, int gzip, ew_error *err) {
  if (gzip < 0) gzip = (double)r->grid->n * (double)(r->n_states + 1) > 2e5;
  static const struct {
    const char *name;
    void (*fn)(const ew_result *, ew_csv *);
  } files[] = {{"profile.csv", write_profile},
               {"levels.csv", write_levels},
               {"lines.csv", write_lines},
               {"wavefunctions.csv", write_waves}};
  enum { NF = 4 };
  ew_status rc = ew_output_make_dir(dir, err);
  if (rc != EW_OK) return rc;
  ew_atomic_set set;
  ew_atomic_set_init(&set);
  for (int k = 0; k < NF && rc == EW_OK; k++) {
    int gz = gzip && k == NF - 1; /* only the large table is ever compressed */
    char path[1200];
    snprintf(path, sizeof path, "%s/%s%s", dir, files[k].name, gz ? ".gz" : "");
    rc = write_member(&set, path, gz, files[k].fn, r, err);
  }
  if (rc != EW_OK) {
    ew_atomic_set_abort(&set);
    return rc;
  }
  rc = ew_atomic_set_commit(&set, err);
  if (rc != EW_OK) return rc;
  /* the wavefunctions of the other format would be stale now */
  char stale[1200];
  snprintf(stale, sizeof stale, "%s/%s", dir, gzip ? "wavefunctions.csv" : "wavefunctions.csv.gz");
  remove(stale);
  return EW_OK;
}
