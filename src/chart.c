/* chart.c — labels, ticks and polyline reduction shared by the pictures (see chart.h). */
#include "chart.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

const uint32_t ew_band_colour[EW_BAND_COUNT] = {0x1b7a3du, 0x6a2c91u, 0xc25a00u};

void ew_chart_fmt_num(char *buf, size_t cap, double v, int dec) {
  char tmp[64];
  snprintf(tmp, sizeof tmp, "%.*f", dec, fabs(v));
  int zero = 1;
  for (const char *p = tmp; *p; p++)
    if (*p >= '1' && *p <= '9') zero = 0;
  snprintf(buf, cap, "%s%s", v < 0 && !zero ? "\xe2\x88\x92" : "", tmp);
}

void ew_chart_fmt_tick(char *buf, size_t cap, double v, double step, int dec) {
  if (fabs(v) < 1e-9 * step) v = 0;
  double a = fabs(v);
  if (a >= 1e6 || (a > 0 && step < 1e-5)) {
    char tmp[64];
    snprintf(tmp, sizeof tmp, "%.3g", a);
    snprintf(buf, cap, "%s%s", v < 0 ? "\xe2\x88\x92" : "", tmp);
  } else {
    ew_chart_fmt_num(buf, cap, v, dec);
  }
}

ew_ticks ew_chart_ticks(double lo, double hi, int target) {
  ew_ticks t = {lo, 1, 1, 0};
  double span = hi - lo;
  if (!(span > 0) || !isfinite(span)) return t;
  if (target < 2) target = 2;
  double raw = span / target, p = pow(10, floor(log10(raw))), m = raw / p;
  double mult = m < 1.5 ? 1 : m < 2.25 ? 2 : m < 3.5 ? 2.5 : m < 7.5 ? 5 : 10;
  t.step = mult * p;
  t.first = ceil(lo / t.step - 1e-9) * t.step;
  t.count = (int)floor((hi - t.first) / t.step + 1e-9) + 1;
  if (t.count < 0) t.count = 0;
  int d = (int)-floor(log10(t.step) + 1e-9);
  if (mult == 2.5) d++;
  t.dec = d > 0 ? d : 0;
  return t;
}

size_t ew_chart_decimate(size_t n, const double *x, const double *y, double *ox, double *oy) {
  size_t m = 0, i = 0;
  while (i < n) {
    if (!isfinite(x[i]) || !isfinite(y[i])) {
      if (m && isfinite(ox[m - 1])) ox[m] = oy[m] = NAN, m++;
      i++;
      continue;
    }
    double col = floor(x[i]);
    size_t first = i, last = i, lo = i, hi = i;
    while (i < n && isfinite(x[i]) && isfinite(y[i]) && floor(x[i]) == col) {
      if (y[i] < y[lo]) lo = i;
      if (y[i] > y[hi]) hi = i;
      last = i++;
    }
    size_t keep[4] = {first, lo < hi ? lo : hi, lo < hi ? hi : lo, last};
    for (int k = 0; k < 4; k++) {
      if (k && keep[k] == keep[k - 1]) continue;
      ox[m] = x[keep[k]];
      oy[m] = y[keep[k]];
      m++;
    }
  }
  return m;
}

void ew_chart_scratch_free(ew_chart_scratch *s) {
  free(s->x), free(s->y), free(s->dx), free(s->dy), free(s->fx), free(s->fy);
  s->x = s->y = s->dx = s->dy = s->fx = s->fy = NULL;
}

int ew_chart_scratch_alloc(ew_chart_scratch *s, size_t n) {
  size_t cap = 2 * n + 8;
  s->x = malloc(cap * sizeof *s->x);
  s->y = malloc(cap * sizeof *s->y);
  s->dx = malloc(cap * sizeof *s->dx);
  s->dy = malloc(cap * sizeof *s->dy);
  s->fx = malloc(cap * sizeof *s->fx);
  s->fy = malloc(cap * sizeof *s->fy);
  return s->x && s->y && s->dx && s->dy && s->fx && s->fy;
}
