/* band_diagram.h — drawing the band diagram of a solved stack onto a canvas (the layout is
 * described at ew_plot_band_diagram in plot.h; plot.c picks the file format). */
#ifndef EW_BAND_DIAGRAM_H
#define EW_BAND_DIAGRAM_H

#include "canvas.h"
#include "chart.h"
#include "solve.h"

/* Draw r's band diagram, EW_PLOT_BAND_W × EW_PLOT_BAND_H units, using sc (allocated for
 * r's node count + 2 points), with the lowest levels_per_band levels of each band (<= 0: all;
 * EW_PLOT_LEVELS_DEFAULT in plot.h is what the pictures use unless told).  Also drawn: the
 * Fermi level of a doped stack, an arrow for the main interband (PL) line and one for the
 * strongest e1 intersubband line, each with its wavelength.  Sets cv->bad when out of memory. */
void ew_band_diagram_draw(ew_canvas *cv, const ew_result *r, int levels_per_band,
                          ew_chart_scratch *sc);

/* The lines the arrows show (state indices of r; SIZE_MAX when there is none): the PL arrow
 * is the allowed interband line with the lowest PL peak among the levels drawn, the
 * intersubband arrow the e1 -> ej line of largest oscillator strength among them.  Exposed
 * for the tests. */
size_t ew_band_diagram_pl_line(const ew_result *r, int levels_per_band);
size_t ew_band_diagram_isb_line(const ew_result *r, int levels_per_band);

/* The colour of level n (1-based) of band b: the band's hue in three tones taken in turn,
 * so neighbouring levels of one band (a doublet of a double well) differ. */
uint32_t ew_level_colour(ew_band b, int n);

#endif
