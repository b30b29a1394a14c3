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
} ew_xy_chart;

/* Draw the chart, EW_PLOT_XY_W × EW_PLOT_XY_H units, using sc (allocated for npoints). */
void ew_xy_chart_draw(ew_canvas *cv, const ew_xy_chart *a, ew_chart_scratch *sc);

#endif
