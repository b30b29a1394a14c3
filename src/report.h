/* report.h — one self-contained HTML page describing a solved stack: run description,
 * warnings, the layers, the band diagram (inline SVG), the levels and lines, and the
 * catalogue parameters used with their sources.  No external resources (no scripts, fonts,
 * style sheets or images fetched), so the page can be mailed, archived or printed as is. */
#ifndef EW_REPORT_H
#define EW_REPORT_H

#include "solve.h"

/* Write dir/report.html (dir is created when missing), or the page at dir itself when dir
 * ends in ".html" (case-insensitive).  cat is the catalogue the stack was
 * read with, for the material-parameter table; NULL leaves that table out.  The page is
 * written under a temporary name and renamed into place: an error leaves no partial page
 * and a previous one intact.  Returns EW_OK, EW_ERR_IO or EW_ERR_NOMEM. */
ew_status ew_report_write(const ew_result *r, const ew_catalogue *cat, const char *dir,
                          ew_error *err);

#endif
