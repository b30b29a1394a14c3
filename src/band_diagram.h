/* band_diagram.h — drawing the band diagram of a solved stack onto a canvas (the layout is
 * described at ew_plot_band_diagram in plot.h; plot.c picks the file format). */
#ifndef EW_BAND_DIAGRAM_H
#define EW_BAND_DIAGRAM_H

#include "canvas.h"
#include "chart.h"
#include "solve.h"

/* Draw r's band diagram, EW_PLOT_BAND_W × EW_PLOT_BAND_H units, using sc (allocated for
 * r's node count + 2 points).  Sets cv->bad when out of memory. */
void ew_band_diagram_draw(ew_canvas *cv, const ew_result *r, ew_chart_scratch *sc);

#endif
