/* plot.h — pictures of a result: the band diagram (band edges along z, every bound level
 * with its wavefunction) and a generic line chart for sweeps and spectra.
 *
 * Both are drawn once, by one set of drawing calls (band_diagram.c, xy_chart.c), onto the
 * canvas of canvas.h with either of two back ends chosen by the file name's extension:
 * ".svg" is written by our own code as plain, escaped SVG text (canvas_svg.c; labels stay
 * searchable and the report can inline it), ".png" is rasterised by cairo (canvas_png.c,
 * the only cairo user in the library).  Layout never depends on the back end (text widths
 * are estimated, not measured), so the two formats show the same picture.
 *
 * Every file is written under a temporary name in the target's directory and renamed into
 * place only when complete (atomic.c): an error leaves no file behind and a previous
 * picture intact. */
#ifndef EW_PLOT_H
#define EW_PLOT_H

#include "solve.h"
#include "xy_chart.h"

/* Picture sizes in SVG user units (CSS px).  A PNG has EW_PLOT_PNG_SCALE pixels per unit,
 * so it stays sharp when printed or zoomed. */
#define EW_PLOT_BAND_W 980
#define EW_PLOT_BAND_H 720
#define EW_PLOT_XY_W 860
#define EW_PLOT_XY_H 520
#define EW_PLOT_PNG_SCALE 2

/* int ew_plot_format(const char *path), the picture format from a file name: public, in
 * epiwell.h */

/* EW_OK when path names a .svg or .png file that can be written: its directory exists and
 * is writable, and the path, if it exists, is a regular file.  EW_ERR_USAGE for another
 * extension, EW_ERR_IO otherwise.  Meant to run before any work (like ew_output_check_dir). */
ew_status ew_plot_check_path(const char *path, ew_error *err);

/* Band diagram of a solved stack: two stacked panels sharing the z axis (nm) — conduction
 * band with the electron levels above, valence band with the heavy- and light-hole levels
 * below — because the band gap (~1.5 eV) would otherwise squeeze both into thin strips.
 * Each level is a horizontal line where |ψ|² exceeds EW_PLOT_LEVEL_FRACTION of its peak,
 * with ψ itself (largest lobe drawn upward) scaled and drawn about the level; labels with
 * the energy stand in a column at the right, layer names along the top, a legend below.
 * Energies are absolute eV.  Writes path (.svg or .png). */
#define EW_PLOT_LEVEL_FRACTION 0.02
/* Levels drawn per band unless told (ew_plot_band_diagram_levels): EW_PLOT_LEVELS_DEFAULT
 * (epiwell.h).  A graded stack's 22 e, 36 hh, 19 lh levels are a solid mesh; the lowest
 * eight of each are what a design reads. */
ew_status ew_plot_band_diagram(const ew_result *r, const char *path, ew_error *err);
/* The same with the lowest levels_per_band levels of each band (<= 0: every level). */
ew_status ew_plot_band_diagram_levels(const ew_result *r, const char *path, int levels_per_band,
                                      ew_error *err);

/* The same band diagram as SVG text on an open stream (the report inlines it).  Returns
 * EW_ERR_IO when a write fails. */
ew_status ew_plot_band_diagram_svg(const ew_result *r, FILE *out, ew_error *err);

/* Line chart of nseries series y[s][0..npoints) against x[0..npoints): linear axes from the
 * finite data, ticks, axis labels, a legend with names[s] (names or any entry may be NULL:
 * "series N").  A NaN (or infinite) x or y leaves a gap in that series; a point with no
 * finite neighbour is drawn as a dot.  title, xlabel, ylabel may be NULL.  Writes path
 * (.svg or .png). */
ew_status ew_plot_xy(const char *path, const char *title, const char *xlabel,
                     const char *ylabel, size_t npoints, const double *x, size_t nseries,
                     const double *const *y, const char *const *names, ew_error *err);

/* The same from a chart description (xy_chart.h; its break_y for a sweep's levels). */
ew_status ew_plot_xy_chart(const char *path, const ew_xy_chart *chart, ew_error *err);

/* The same line chart as SVG text on an open stream (the report inlines it). */
ew_status ew_plot_xy_svg(FILE *out, const char *title, const char *xlabel, const char *ylabel,
                         size_t npoints, const double *x, size_t nseries,
                         const double *const *y, const char *const *names, ew_error *err);

#endif
