/* chart.h — what the band diagram and the line chart share: the palette for white paper,
 * number and tick labels, "nice" tick spacing, and the reduction of long polylines to what
 * a picture column shows.  Pure functions; drawing goes through canvas.h. */
#ifndef EW_CHART_H
#define EW_CHART_H

#include <stddef.h>
#include <stdint.h>

#include "epiwell.h"

/* Chosen for white paper: dark, clearly different hues that stay apart in grey scale too
 * (light holes also get a dashed line for that reason). */
#define EW_COL_INK 0x1a1a1au
#define EW_COL_FRAME 0x4d4d4du
#define EW_COL_MUTED 0x5f5f5fu
#define EW_COL_FAINT 0xa6a6a6u
#define EW_COL_SHADE 0xf1f1eeu
#define EW_COL_GRID 0xe4e4e4u
#define EW_COL_WARN 0xa30000u
extern const uint32_t ew_band_colour[EW_BAND_COUNT];

/* v with `dec` decimals and a true minus sign (U+2212) for negative values; a value that
 * rounds to zero prints as 0 without a sign. */
void ew_chart_fmt_num(char *buf, size_t cap, double v, int dec);
/* Tick label: fixed decimals for ordinary magnitudes, %g beyond them. */
void ew_chart_fmt_tick(char *buf, size_t cap, double v, double step, int dec);

typedef struct {
  double first, step; /* first tick >= lo, spacing */
  int count;          /* ticks within [lo, hi] */
  int dec;            /* decimals for the labels */
} ew_ticks;

/* About `target` ticks over [lo, hi] at 1, 2, 2.5 or 5 × 10^k. */
ew_ticks ew_chart_ticks(double lo, double hi, int target);

/* Reduce a polyline in picture units to what can be seen: per unit column (two PNG pixels)
 * keep the first, lowest, highest and last point in their order.  A wavefunction on a
 * 10⁵-node grid thus costs a few thousand points in the file, and vertical steps
 * (interfaces) stay exact.  Non-finite points become single separators.  ox/oy hold 2n
 * points; returns how many were kept. */
size_t ew_chart_decimate(size_t n, const double *x, const double *y, double *ox, double *oy);

/* Scratch polylines for a picture of up to n points: 2n+8 values each. */
typedef struct {
  double *x, *y, *dx, *dy, *fx, *fy;
} ew_chart_scratch;

/* 1 on success; on failure (and always) ew_chart_scratch_free releases what was made. */
int ew_chart_scratch_alloc(ew_chart_scratch *s, size_t n);
void ew_chart_scratch_free(ew_chart_scratch *s);

#endif
