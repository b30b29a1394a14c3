/* result.c — the accessors of ew_result (epiwell.h), its warnings and its release. */
#include "result.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void ew_sp_info_free(ew_sp_info *sp) {
  if (!sp) return;
  free(sp->sheet_cm2);
  free(sp->depol_eV);
  for (int k = 0; k < EW_SP_PROFILE_COUNT; k++) free(sp->prof[k]);
  free(sp);
}

void ew_result_free(ew_result *r) {
  if (!r) return;
  ew_grid_free(r->grid);
  free(r->warnings);
  free(r->warning_codes);
  free(r->states);
  free(r->psi);
  free(r->mean_inv_mass);
  free(r->lines);
  ew_sp_info_free(r->sp);
  free(r);
}

/* Accessors given NULL (or a band out of range) return their "no value": 0, NAN or NULL
 * (epiwell.h), never crash. */
#define BAND_OK(b) ((int)(b) >= 0 && (int)(b) < EW_BAND_COUNT)

size_t ew_result_state_count(const ew_result *r) { return r ? r->n_states : 0; }
const ew_state *ew_result_state(const ew_result *r, size_t i) {
  return r && i < r->n_states ? &r->states[i] : NULL;
}
const double *ew_result_wavefunction(const ew_result *r, size_t i) {
  return r && i < r->n_states ? r->psi + i * r->grid->n : NULL;
}
size_t ew_result_line_count(const ew_result *r) { return r ? r->n_lines : 0; }
const ew_line *ew_result_line(const ew_result *r, size_t i) {
  return r && i < r->n_lines ? &r->lines[i] : NULL;
}
size_t ew_result_node_count(const ew_result *r) { return r ? r->grid->n : 0; }
const double *ew_result_z_nm(const ew_result *r) { return r ? r->grid->z : NULL; }
const double *ew_result_edge_eV(const ew_result *r, ew_band b) {
  return r && BAND_OK(b) ? r->grid->edge[b] : NULL;
}
const double *ew_result_mass(const ew_result *r, ew_band b) {
  return r && BAND_OK(b) ? r->grid->mass[b] : NULL;
}
double ew_result_grid_step_nm(const ew_result *r) { return r ? r->step_nm : NAN; }
size_t ew_result_band_count(const ew_result *r, ew_band b) {
  return r && BAND_OK(b) ? r->band_count[b] : 0;
}
double ew_result_window_eV(const ew_result *r, ew_band b) {
  return r && BAND_OK(b) ? r->window_eV[b] : NAN;
}

double ew_result_state_below_top_eV(const ew_result *r, size_t i) {
  if (!r || i >= r->n_states) return NAN;
  const ew_state *s = &r->states[i];
  if (!BAND_OK(s->band)) return NAN;
  double w = r->window_eV[s->band];
  return s->band == EW_BAND_E ? w - s->energy_eV : s->energy_eV - w;
}

static int warn_v(ew_result *r, const char *code, const char *fmt, va_list ap) {
  size_t n = r->n_warnings + 1;
  char (*w)[EW_WARNING_MAX] = realloc(r->warnings, n * sizeof *w);
  if (!w) return 0;
  r->warnings = w;
  const char **c = realloc(r->warning_codes, n * sizeof *c);
  if (!c) return 0; /* the text array only grew: n_warnings still counts both */
  r->warning_codes = c;
  vsnprintf(r->warnings[r->n_warnings], EW_WARNING_MAX, fmt, ap);
  r->warning_codes[r->n_warnings++] = code;
  return 1;
}

int ew_result_warn_code(ew_result *r, const char *code, const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  int ok = warn_v(r, code, fmt, ap);
  va_end(ap);
  return ok;
}

int ew_result_warn(ew_result *r, const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  int ok = warn_v(r, "self-consistent", fmt, ap);
  va_end(ap);
  return ok;
}

size_t ew_result_warning_count(const ew_result *r) { return r ? r->n_warnings : 0; }
const char *ew_result_model(const ew_result *r) {
  if (!r) return NULL;
  return r->nonparabolic ? "BenDaniel-Duke; electrons with the Kane energy-dependent mass "
                           "(non-parabolic), holes parabolic"
                         : "BenDaniel-Duke, parabolic bands";
}
const char *ew_result_warning(const ew_result *r, size_t i) {
  return r && i < r->n_warnings ? r->warnings[i] : NULL;
}
const char *ew_result_warning_code(const ew_result *r, size_t i) {
  return r && i < r->n_warnings ? r->warning_codes[i] : NULL;
}

void ew_result_warning_codes_join(const ew_result *r, char *buf, size_t size) {
  if (!size) return;
  buf[0] = '\0';
  size_t len = 0;
  for (size_t i = 0; r && i < r->n_warnings; i++) {
    const char *c = r->warning_codes[i];
    int seen = 0;
    for (size_t k = 0; k < i && !seen; k++) seen = !strcmp(r->warning_codes[k], c);
    size_t n = strlen(c);
    if (seen || len + (len > 0) + n + 1 > size) continue;
    if (len) buf[len++] = ';';
    memcpy(buf + len, c, n + 1);
    len += n;
  }
}

/* the self-consistent quantities (NAN, 0 or NULL for a plain solve) */
double ew_result_fermi_energy_eV(const ew_result *r) { return r && r->sp ? r->sp->fermi_eV : NAN; }
double ew_result_fermi_energy_last_eV(const ew_result *r) {
  return r && r->sp ? r->sp->fermi_last_eV : NAN;
}
int ew_result_sp_iterations(const ew_result *r) { return r && r->sp ? r->sp->iterations : 0; }
double ew_result_sp_residual_eV(const ew_result *r) { return r && r->sp ? r->sp->residual_eV : NAN; }
double ew_result_state_sheet_density_cm2(const ew_result *r, size_t i) {
  return r && r->sp && i < r->sp->n_states ? r->sp->sheet_cm2[i] : NAN;
}
double ew_result_line_depolarization_eV(const ew_result *r, size_t j) {
  return r && r->sp && j < r->sp->n_lines ? r->sp->depol_eV[j] : NAN;
}
const double *ew_result_sp_profile(const ew_result *r, ew_sp_profile which) {
  return r && r->sp && (int)which >= 0 && which < EW_SP_PROFILE_COUNT ? r->sp->prof[which] : NULL;
}
