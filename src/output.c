/* output.c — table, JSON and CSV writers (see output.h).  zlib is used only here. */
#include "output.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zlib.h>

#include "constants.h"
#include "error.h"
#include "poisson.h"

static const ew_state *st_of(const ew_result *r, size_t i) { return &r->states[i]; }

/* ---- table ---------------------------------------------------------------------------- */
void ew_output_table(const ew_result *r, FILE *out) {
  const ew_stack *st = r->stack;
  fprintf(out, "epiwell %s  %s  T = %g K  grid %.4g nm (%zu nodes)\n", EW_VERSION, st->path,
          st->temperature_K, r->step_nm, r->grid->n);
  fprintf(out, "model: %s", ew_result_model(r));
  if (st->field_kV_cm != 0.0) fprintf(out, "; field %g kV/cm along +z", st->field_kV_cm);
  if (st->substrate[0]) fprintf(out, "; pseudomorphic on %s", st->substrate);
  fprintf(out, "\n\n");
  fprintf(out, "Layers (growth order)\n");
  /* name columns as wide as the longest name (at least 14), so long names keep the grid */
  int wn = 14, wm = 14;
  for (size_t k = 0; k < st->n_layers; k++) {
    int ln = (int)strlen(st->layers[k].name), lm = (int)strlen(st->layers[k].material);
    if (ln > wn) wn = ln;
    if (lm > wm) wm = lm;
  }
  fprintf(out, "  %-3s %-*s %-*s %6s %10s %9s %9s %9s %9s %7s %7s %7s %8s\n", "#", wn, "name", wm,
          "material", "x", "from_nm", "thick_nm", "Ec_eV", "Ev_hh_eV", "Ev_lh_eV", "me", "mhh",
          "mlh", "strain_%");
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    char x[16] = "-";
    if (ly->has_x) snprintf(x, sizeof x, "%.3f", ly->x);
    if (ly->grade) snprintf(x, sizeof x, "graded");
    fprintf(out, "  %-3zu %-*s %-*s %6s %10.3f %9.3f %9.4f %9.4f %9.4f %7.4f %7.4f %7.4f %8.3f\n",
            k + 1, wn, ly->name, wm, ly->material, x, ly->z_start_nm, ly->thickness_nm, ly->bands.Ec_eV,
            ly->bands.Ev_hh_eV, ly->bands.Ev_lh_eV, ly->bands.me, ly->bands.mhh_z,
            ly->bands.mlh_z, 100.0 * ly->bands.eps_par);
  }
  fprintf(out, "\nBound levels (%zu e, %zu hh, %zu lh; count certified by inertia)\n",
          r->band_count[0], r->band_count[1], r->band_count[2]);
  fprintf(out, "  %-6s %12s %11s %11s  %-*s %6s %8s\n", "state", "energy_eV", "depth_meV",
          "error_meV", wn, "mostly in", "prob", "m_inpl");
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *s = st_of(r, i);
    char e[24] = "n/a";
    if (s->error_eV >= 0) snprintf(e, sizeof e, "%.2e", s->error_eV * 1e3);
    fprintf(out, "  %-6s %12.6f %11.3f %11s  %-*s %6.3f %8.4f%s\n", s->label, s->energy_eV,
            s->depth_eV * 1e3, e, wn, st->layers[s->layer].name, s->layer_probability,
            s->inplane_mass, s->flagged ? "  RESIDUAL CHECK FAILED" : "");
  }
  if (r->n_states == 0)
    fprintf(out, "  (none: no band binds a state below the edges of its outer layers)\n");
  int head = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERSUBBAND) continue;
    if (!head++)
      fprintf(out, "\nIntersubband lines (TM, light polarised along z)\n  %-10s %11s %10s %10s %9s\n",
              "line", "energy_meV", "lambda_um", "dipole_nm", "f");
    char nm[40];
    snprintf(nm, sizeof nm, "%s-%s", st_of(r, ln->lower)->label, st_of(r, ln->upper)->label);
    fprintf(out, "  %-10s %11.3f %10.4f %10.4f %9.4f\n", nm, ln->energy_eV * 1e3,
            ln->wavelength_nm / 1e3, ln->dipole_nm, ln->oscillator_strength);
  }
  head = 0;
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    if (ln->kind != EW_LINE_INTERBAND) continue;
    if (!head++)
      fprintf(out, "\nInterband lines (band to band; PL peak = line − exciton binding)\n"
                   "  %-10s %11s %10s %9s %10s %10s %6s %6s  %s\n",
              "line", "energy_eV", "lambda_nm", "overlap", "Xbind_meV", "PL_eV", "TE", "TM", "");
    char nm[40];
    snprintf(nm, sizeof nm, "%s-%s", st_of(r, ln->upper)->label, st_of(r, ln->lower)->label);
    fprintf(out, "  %-10s %11.5f %10.2f %9.4f %10.2f %10.5f %6.3f %6.3f  %s\n", nm,
            ln->energy_eV, ln->wavelength_nm, ln->overlap, ln->exciton_binding_eV * 1e3,
            ln->pl_peak_eV, ln->te_strength, ln->tm_strength,
            ln->allowed ? "allowed" : "forbidden");
  }
  if (r->sp) { /* self-consistent Schrödinger–Poisson (doped stacks) */
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
  if (r->n_warnings) {
    fprintf(out, "\nWarnings\n");
    for (size_t i = 0; i < r->n_warnings; i++) fprintf(out, "  - %s\n", r->warnings[i]);
  }
  fputc('\n', out);
}

/* ---- JSON ----------------------------------------------------------------------------- */
static void jnum(FILE *out, double v) {
  if (isfinite(v)) fprintf(out, "%.10g", v);
  else fputs("null", out);
}

static void jstr(FILE *out, const char *s) {
  fputc('"', out);
  for (; *s; s++) {
    unsigned char c = (unsigned char)*s;
    if (c == '"' || c == '\\') fprintf(out, "\\%c", c);
    else if (c < 0x20) fprintf(out, "\\u%04x", c);
    else fputc(c, out);
  }
  fputc('"', out);
}

void ew_output_json(const ew_result *r, FILE *out) {
  const ew_stack *st = r->stack;
  fprintf(out, "{\"version\":");
  jstr(out, EW_VERSION);
  fprintf(out, ",\"stack\":");
  jstr(out, st->path);
  fprintf(out, ",\"temperature_K\":");
  jnum(out, st->temperature_K);
  fprintf(out, ",\"grid_step_nm\":");
  jnum(out, r->step_nm);
  fprintf(out, ",\"nodes\":%zu,\"model\":", r->grid->n);
  jstr(out, ew_result_model(r));
  fprintf(out, ",\"field_kV_cm\":");
  jnum(out, st->field_kV_cm);
  fprintf(out, ",\"warnings\":[");
  for (size_t i = 0; i < r->n_warnings; i++) {
    if (i) fputc(',', out);
    jstr(out, r->warnings[i]);
  }
  fprintf(out, "],\"layers\":[");
  for (size_t k = 0; k < st->n_layers; k++) {
    const ew_layer *ly = &st->layers[k];
    fprintf(out, "%s{\"name\":", k ? "," : "");
    jstr(out, ly->name);
    fprintf(out, ",\"material\":");
    jstr(out, ly->material);
    if (ly->has_x) fprintf(out, ",\"x\":"), jnum(out, ly->x);
    fprintf(out, ",\"z_start_nm\":"), jnum(out, ly->z_start_nm);
    fprintf(out, ",\"thickness_nm\":"), jnum(out, ly->thickness_nm);
    fprintf(out, ",\"Ec_eV\":"), jnum(out, ly->bands.Ec_eV);
    fprintf(out, ",\"Ev_hh_eV\":"), jnum(out, ly->bands.Ev_hh_eV);
    fprintf(out, ",\"Ev_lh_eV\":"), jnum(out, ly->bands.Ev_lh_eV);
    fprintf(out, ",\"me\":"), jnum(out, ly->bands.me);
    fprintf(out, ",\"mhh\":"), jnum(out, ly->bands.mhh_z);
    fprintf(out, ",\"mlh\":"), jnum(out, ly->bands.mlh_z);
    if (ly->has_y) fprintf(out, ",\"y\":"), jnum(out, ly->y);
    fprintf(out, ",\"eps_par\":"), jnum(out, ly->bands.eps_par);
    fprintf(out, ",\"eps_perp\":"), jnum(out, ly->bands.eps_perp);
    fprintf(out, ",\"critical_thickness_nm\":"), jnum(out, ly->bands.critical_thickness_nm);
    fputc('}', out);
  }
  fprintf(out, "],\"bands\":{");
  for (int b = 0; b < EW_BAND_COUNT; b++) {
    fprintf(out, "%s\"%s\":{\"count\":%zu,\"window_eV\":", b ? "," : "", ew_band_name((ew_band)b),
            r->band_count[b]);
    jnum(out, r->window_eV[b]);
    fputc('}', out);
  }
  fprintf(out, "},\"states\":[");
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *s = st_of(r, i);
    fprintf(out, "%s{\"label\":\"%s\",\"band\":\"%s\",\"n\":%d,\"energy_eV\":", i ? "," : "",
            s->label, ew_band_name(s->band), s->n);
    jnum(out, s->energy_eV);
    fprintf(out, ",\"error_eV\":");
    if (s->error_eV >= 0) jnum(out, s->error_eV);
    else fputs("null", out);
    fprintf(out, ",\"edge_eV\":"), jnum(out, s->edge_eV);
    fprintf(out, ",\"depth_eV\":"), jnum(out, s->depth_eV);
    fprintf(out, ",\"layer\":"), jstr(out, st->layers[s->layer].name);
    fprintf(out, ",\"layer_probability\":"), jnum(out, s->layer_probability);
    fprintf(out, ",\"residual\":"), jnum(out, s->residual);
    fprintf(out, ",\"flagged\":%s", s->flagged ? "true" : "false");
    fprintf(out, ",\"inplane_mass_m0\":"), jnum(out, s->inplane_mass);
    fprintf(out, ",\"sheet_density_cm2\":");
    if (r->sp) jnum(out, r->sp->sheet_cm2[i]);
    else fputs("null", out);
    fputc('}', out);
  }
  fprintf(out, "],\"transitions\":[");
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    fprintf(out, "%s{\"kind\":\"%s\",\"upper\":\"%s\",\"lower\":\"%s\",\"energy_eV\":",
            i ? "," : "", isb ? "intersubband" : "interband", st_of(r, ln->upper)->label,
            st_of(r, ln->lower)->label);
    jnum(out, ln->energy_eV);
    if (isb) {
      fprintf(out, ",\"wavelength_um\":"), jnum(out, ln->wavelength_nm / 1e3);
      fprintf(out, ",\"dipole_nm\":"), jnum(out, ln->dipole_nm);
      fprintf(out, ",\"oscillator_strength\":"), jnum(out, ln->oscillator_strength);
      fprintf(out, ",\"depolarization_shift_eV\":");
      if (r->sp) jnum(out, r->sp->depol_eV[i]);
      else fputs("null", out);
    } else {
      fprintf(out, ",\"wavelength_nm\":"), jnum(out, ln->wavelength_nm);
      fprintf(out, ",\"overlap\":"), jnum(out, ln->overlap);
      fprintf(out, ",\"allowed\":%s", ln->allowed ? "true" : "false");
      fprintf(out, ",\"exciton_binding_eV\":"), jnum(out, ln->exciton_binding_eV);
      fprintf(out, ",\"pl_peak_eV\":"), jnum(out, ln->pl_peak_eV);
      fprintf(out, ",\"te_strength\":"), jnum(out, ln->te_strength);
      fprintf(out, ",\"tm_strength\":"), jnum(out, ln->tm_strength);
    }
    fputc('}', out);
  }
  fprintf(out, "]");
  /* self-consistent Schrödinger–Poisson (null for undoped stacks) */
  const ew_sp_info *sp = r->sp;
  fprintf(out, ",\"fermi_energy_eV\":");
  if (sp) jnum(out, sp->fermi_eV);
  else fputs("null", out);
  fprintf(out, ",\"iterations\":");
  if (sp) fprintf(out, "%d", sp->iterations);
  else fputs("null", out);
  fprintf(out, ",\"residual_eV\":");
  if (sp) jnum(out, sp->residual_eV);
  else fputs("null", out);
  if (sp) {
    fprintf(out, ",\"fermi_energy_last_eV\":"), jnum(out, sp->fermi_last_eV);
    fprintf(out, ",\"electrons_cm2\":"), jnum(out, sp->electrons_cm2);
    fprintf(out, ",\"holes_cm2\":"), jnum(out, sp->holes_cm2);
    fprintf(out, ",\"donors_ionised_cm2\":"), jnum(out, sp->donors_ion_cm2);
    fprintf(out, ",\"acceptors_ionised_cm2\":"), jnum(out, sp->acceptors_ion_cm2);
  }
  fprintf(out, "}\n");
}

/* ---- CSV files ---------------------------------------------------------------------- */
/* A sink writing either plain text (stdio) or gzip (zlib). */
typedef struct {
  FILE *f;
  gzFile gz;
  int bad;
} sink;

static void sk_printf(sink *s, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;
static void sk_printf(sink *s, const char *fmt, ...) {
  char buf[512];
  va_list ap;
  va_start(ap, fmt);
  int n = vsnprintf(buf, sizeof buf, fmt, ap);
  va_end(ap);
  if (n < 0 || (size_t)n >= sizeof buf) {
    s->bad = 1;
    return;
  }
  if (s->gz) {
    if (n > 0 && gzwrite(s->gz, buf, (unsigned)n) != n) s->bad = 1;
  } else if (fwrite(buf, 1, (size_t)n, s->f) != (size_t)n) {
    s->bad = 1;
  }
}

static void write_profile(const ew_result *r, sink *s) {
  const ew_grid *g = r->grid;
  sk_printf(s, "z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh,layer,"
               "potential_eV,charge_cm3,n_cm3,p_cm3,donors_ion_cm3,acceptors_ion_cm3\n");
  for (size_t i = 0; i < g->n; i++) {
    sk_printf(s, "%.6f,%.8f,%.8f,%.8f,%.6f,%.6f,%.6f,%s", g->z[i], g->edge[0][i],
              g->edge[1][i], g->edge[2][i], g->mass[0][i], g->mass[1][i], g->mass[2][i],
              r->stack->layers[g->layer[i]].name);
    if (r->sp) /* self-consistent: U = −eφ and the densities; empty for a plain solve */
      sk_printf(s, ",%.10f,%.6e,%.6e,%.6e,%.6e,%.6e\n", r->sp->prof[EW_SP_POTENTIAL_EV][i],
                r->sp->prof[EW_SP_CHARGE_CM3][i], r->sp->prof[EW_SP_N_CM3][i],
                r->sp->prof[EW_SP_P_CM3][i], r->sp->prof[EW_SP_DONORS_ION_CM3][i],
                r->sp->prof[EW_SP_ACCEPTORS_ION_CM3][i]);
    else
      sk_printf(s, ",,,,,,\n");
  }
}

static void write_levels(const ew_result *r, sink *s) {
  sk_printf(s, "label,band,n,energy_eV,error_eV,edge_eV,depth_eV,layer,layer_probability,residual,flagged,sheet_density_cm2,inplane_mass_m0\n");
  for (size_t i = 0; i < r->n_states; i++) {
    const ew_state *q = st_of(r, i);
    sk_printf(s, "%s,%s,%d,%.10f,%.3e,%.8f,%.10f,%s,%.6f,%.3e,%d,", q->label,
              ew_band_name(q->band), q->n, q->energy_eV, q->error_eV, q->edge_eV, q->depth_eV,
              r->stack->layers[q->layer].name, q->layer_probability, q->residual, q->flagged);
    if (r->sp) sk_printf(s, "%.6e", r->sp->sheet_cm2[i]);
    sk_printf(s, ",%.6f\n", q->inplane_mass);
  }
}

static void write_lines(const ew_result *r, sink *s) {
  sk_printf(s, "kind,upper,lower,energy_eV,wavelength_nm,wavelength_um,dipole_nm,oscillator_strength,overlap,allowed,exciton_binding_eV,pl_peak_eV,te_strength,tm_strength,depolarization_shift_eV\n");
  for (size_t i = 0; i < r->n_lines; i++) {
    const ew_line *ln = &r->lines[i];
    int isb = ln->kind == EW_LINE_INTERSUBBAND;
    sk_printf(s, "%s,%s,%s,%.10f,%.6f,%.8f,", isb ? "intersubband" : "interband",
              st_of(r, ln->upper)->label, st_of(r, ln->lower)->label, ln->energy_eV,
              ln->wavelength_nm, ln->wavelength_nm / 1e3);
    if (isb) sk_printf(s, "%.8f,%.8f,,1,,,,,", ln->dipole_nm, ln->oscillator_strength);
    else sk_printf(s, ",,%.8f,%d,%.8f,%.10f,%.6f,%.6f,", ln->overlap, ln->allowed,
                   ln->exciton_binding_eV, ln->pl_peak_eV, ln->te_strength, ln->tm_strength);
    if (r->sp && isb) sk_printf(s, "%.8e\n", r->sp->depol_eV[i]);
    else sk_printf(s, "\n");
  }
}

static void write_waves(const ew_result *r, sink *s) {
  const ew_grid *g = r->grid;
  sk_printf(s, "z_nm");
  for (size_t j = 0; j < r->n_states; j++) sk_printf(s, ",%s", st_of(r, j)->label);
  sk_printf(s, "\n");
  for (size_t i = 0; i < g->n && !s->bad; i++) {
    sk_printf(s, "%.6f", g->z[i]);
    for (size_t j = 0; j < r->n_states; j++) sk_printf(s, ",%.6e", r->psi[j * g->n + i]);
    sk_printf(s, "\n");
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
      if (mkdir(dir, 0777) != 0)
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

ew_status ew_output_csv_dir(const ew_result *r, const char *dir, int gzip, ew_error *err) {
  if (gzip < 0) gzip = (double)r->grid->n * (double)(r->n_states + 1) > 2e5;
  struct {
    const char *name;
    void (*fn)(const ew_result *, sink *);
    int gz;
  } files[] = {{"profile.csv", write_profile, 0},
               {"levels.csv", write_levels, 0},
               {"lines.csv", write_lines, 0},
               {gzip ? "wavefunctions.csv.gz" : "wavefunctions.csv", write_waves, gzip}};
  enum { NF = 4 };
  char tmp[NF][1200], fin[NF][1200];
  ew_status rc = ew_output_make_dir(dir, err);
  if (rc != EW_OK) return rc;
  for (int k = 0; k < NF; k++) { /* a target that is there must be a plain file */
    struct stat sb;
    snprintf(fin[k], sizeof fin[k], "%s/%s", dir, files[k].name);
    if (stat(fin[k], &sb) == 0 && !S_ISREG(sb.st_mode))
      return ew_fail(err, EW_ERR_IO, fin[k], 0, "exists and is not a regular file");
  }
  int made = 0;
  for (int k = 0; k < NF; k++, made++) {
    snprintf(tmp[k], sizeof tmp[k], "%s/.%s.tmp%ld", dir, files[k].name, (long)getpid());
    sink s = {0};
    if (files[k].gz) s.gz = gzopen(tmp[k], "wb6");
    else s.f = fopen(tmp[k], "w");
    if (!s.gz && !s.f) {
      rc = ew_fail(err, EW_ERR_IO, tmp[k], 0, "cannot write: %s", strerror(errno));
      break;
    }
    files[k].fn(r, &s);
    int closed = s.gz ? gzclose(s.gz) == Z_OK : fclose(s.f) == 0;
    if (s.bad || !closed) {
      rc = ew_fail(err, EW_ERR_IO, fin[k], 0, "write failed (disk full?)");
      made++;
      break;
    }
  }
  /* Put the set in place as a whole: move any previous file aside, rename the new one in,
     and on a failure undo every step so the previous result stays as it was. */
  char bak[NF][1300 + 64];
  int had[NF] = {0}, placed = 0;
  if (rc == EW_OK) {
    for (int k = 0; k < NF; k++) {
      snprintf(bak[k], sizeof bak[k], "%.1200s.old%ld", tmp[k], (long)getpid());
      had[k] = rename(fin[k], bak[k]) == 0;
      if (!had[k] && errno != ENOENT) {
        rc = ew_fail(err, EW_ERR_IO, fin[k], 0, "cannot replace: %s", strerror(errno));
        break;
      }
      if (rename(tmp[k], fin[k]) != 0) {
        rc = ew_fail(err, EW_ERR_IO, fin[k], 0, "cannot rename into place: %s", strerror(errno));
        if (had[k]) rename(bak[k], fin[k]);
        had[k] = 0;
        break;
      }
      placed = k + 1;
    }
  }
  if (rc != EW_OK) {
    for (int k = 0; k < placed; k++) { /* undo */
      if (had[k]) rename(bak[k], fin[k]);
      else remove(fin[k]);
    }
    for (int k = 0; k < made && k < NF; k++) remove(tmp[k]);
    return rc;
  }
  for (int k = 0; k < NF; k++)
    if (had[k]) remove(bak[k]);
  /* the wavefunctions of the other format would be stale now */
  char stale[1200];
  snprintf(stale, sizeof stale, "%s/%s", dir, gzip ? "wavefunctions.csv" : "wavefunctions.csv.gz");
  remove(stale);
  return EW_OK;
}
