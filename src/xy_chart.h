/* xy_chart.h — drawing the line chart of ew_plot_xy (see plot.h) onto a canvas. */
#ifndef EW_XY_CHART_H
#define EW_XY_CHART_H

#include "canvas.h"
#include "chart.h"

/* The chart's data, as ew_plot_xy takes it (title, xlabel, ylabel, names may be NULL). */
typedef struct {
  const char *title, *xlabel, *ylabel;
  size_t npoints, nseries;
  const double *x;
  const double *const *y;
  const char *const *names;
  int break_y; /* 1: when the values fall into two groups far apart (a sweep's electron and
                  hole levels), two stacked panels with the axis broken between them */
} ew_xy_chart;

/* The colour of series s of a chart of n series: twelve chosen hues first, then hues a golden
 * angle apart in two lightnesses, so no two series of one chart share a colour. */
uint32_t ew_xy_series_colour(size_t s);

/* Draw the chart, EW_PLOT_XY_W × EW_PLOT_XY_H units, using sc (allocated for npoints). */
void ew_xy_chart_draw(ew_canvas *cv, const ew_xy_chart *a, ew_chart_scratch *sc);

#endif
