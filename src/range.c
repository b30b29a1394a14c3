/* range.c — parsing ranges of a varied key and quantities with units (see range.h). */
#include "range.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "constants.h"
#include "error.h"

static int parse_double(const char *s, const char *end, double *v) {
  char buf[64];
  size_t n = (size_t)(end - s);
  if (n == 0 || n >= sizeof buf) return 0;
  memcpy(buf, s, n);
  buf[n] = '\0';
  char *stop;
  errno = 0;
  *v = strtod(buf, &stop);
  return *stop == '\0' && errno == 0 && isfinite(*v);
}

ew_status ew_wf_range_parse(const char *spec, int need_step, const char *opt, ew_wf_range *r,
                            ew_error *err) {
  memset(r, 0, sizeof *r);
  const char *eq = strchr(spec, '=');
  const char *form = need_step ? "KEY=FROM:TO:STEP (e.g. well.thickness=4:12:0.25)"
                               : "KEY=FROM:TO (e.g. well.thickness=3:12)";
  if (!eq || eq == spec || (size_t)(eq - spec) >= sizeof r->key)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants %s, got '%s'", opt, form, spec);
  memcpy(r->key, spec, (size_t)(eq - spec));
  r->key[eq - spec] = '\0';
  const char *a = eq + 1, *c1 = strchr(a, ':');
  const char *c2 = c1 ? strchr(c1 + 1, ':') : NULL;
  const char *end = a + strlen(a);
  if (!c1 || (c2 && strchr(c2 + 1, ':')) || (need_step && !c2) ||
      !parse_double(a, c1, &r->from) || !parse_double(c1 + 1, c2 ? c2 : end, &r->to) ||
      (c2 && !parse_double(c2 + 1, end, &r->step)))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants %s, got '%s'", opt, form, spec);
  if (c2 && !(r->step > 0))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: STEP must be > 0, got %g", opt, r->key,
                   r->step);
  if (!need_step && r->from == r->to)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: FROM and TO must differ", opt, r->key);
  if (c2 && fabs(r->to - r->from) / r->step > EW_WF_MAX_POINTS)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s %s: %g values is more than the limit %d",
                   opt, r->key, fabs(r->to - r->from) / r->step, EW_WF_MAX_POINTS);
  return EW_OK;
}

size_t ew_wf_range_count(const ew_wf_range *r) {
  if (!(r->step > 0)) return r->from == r->to ? 1 : 2;
  /* 1e-9 of a step absorbs the rounding of (TO − FROM)/STEP, e.g. (12 − 4)/0.1 = 79.999… */
  return (size_t)floor(fabs(r->to - r->from) / r->step + 1e-9) + 1;
}

double ew_wf_range_value(const ew_wf_range *r, size_t i) {
  size_t n = ew_wf_range_count(r);
  if (!(r->step > 0)) return i == 0 ? r->from : r->to;
  double dir = r->to >= r->from ? 1.0 : -1.0;
  double v = r->from + dir * (double)i * r->step;
  if (i + 1 == n && fabs(v - r->to) <= 1e-9 * r->step) v = r->to;
  return v;
}

ew_status ew_wf_quantity_parse(const char *text, int allow_zero, const char *opt,
                               ew_wf_quantity *q, ew_error *err) {
  memset(q, 0, sizeof *q);
  char *stop;
  errno = 0;
  double v = strtod(text, &stop);
  const char *u = stop;
  while (*u == ' ') u++;
  static const struct {
    const char *unit;
    int wl;
    double scale;
  } units[] = {{"eV", 0, 1.0},       {"meV", 0, 1e-3},        {"nm", 1, 1.0},
               {"um", 1, 1e3},       {"\xc2\xb5m", 1, 1e3},   {"\xce\xbcm", 1, 1e3}};
  size_t k = 0, nu = sizeof units / sizeof units[0];
  while (k < nu && strcmp(u, units[k].unit) != 0) k++;
  if (stop == text || errno != 0 || !isfinite(v))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s wants a number with a unit (eV, meV, nm, um "
                   "or \xc2\xb5m), e.g. 9.0um or 1.548eV; got '%s'", opt, text);
  if (k == nu)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s '%s': unit must be eV, meV, nm, um or "
                   "\xc2\xb5m", opt, text);
  if (v < 0 || (!allow_zero && v == 0))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "%s '%s' must be %s", opt, text,
                   allow_zero ? ">= 0" : "> 0");
  q->value = v;
  q->is_wavelength = units[k].wl;
  q->scale = units[k].scale;
  if (q->is_wavelength) {
    q->nm = v * q->scale;
    q->eV = q->nm > 0 ? EW_HC_EVNM / q->nm : INFINITY;
  } else {
    q->eV = v * q->scale;
    q->nm = q->eV > 0 ? EW_HC_EVNM / q->eV : INFINITY;
  }
  return EW_OK;
}
