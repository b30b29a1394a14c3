#!/bin/sh
# plot_render.sh BINARY — the pictures and the report seen through real renderers (POSIX sh).
#
# BINARY writes the band diagram of two examples as SVG and PNG and an HTML report; then
# rsvg-convert (librsvg2-bin) renders the SVG, headless chromium renders the report page and
# the SVG, and a small checker compiled here against cairo decodes every resulting PNG and
# counts pixels: a picture must not be blank, and must show the electron and heavy-hole
# colours of the band diagram (so an inline SVG that failed to render is caught even though
# the rest of the page is fine).  Prints "ok - WHAT" / "not ok - WHAT" lines (details on "#"
# lines) and last "plot: N passed, M failed"; exits 1 when M > 0.  A missing renderer is a
# failure that names the Debian package to install.

. "$(dirname "$0")/lib.sh"
use_binary "${1:?usage: sh tests/plot_render.sh path/to/epiwell}"
make_tmp render "plot: cannot make a temp dir"

# The checker: "W H NONWHITE E HH" for a PNG — size, pixels that are not near-white, and
# pixels near the electron (#1b7a3d) and heavy-hole (#6a2c91) colours of plot.c.
cat > "$tmp/pngstat.c" <<'EOF'
#include <cairo.h>
#include <stdio.h>
#include <stdlib.h>
static int near(unsigned r, unsigned g, unsigned b, unsigned c) {
  int dr = (int)r - (int)(c >> 16 & 255), dg = (int)g - (int)(c >> 8 & 255),
      db = (int)b - (int)(c & 255);
  return dr * dr + dg * dg + db * db < 40 * 40;
}
int main(int argc, char **argv) {
  if (argc != 2) return 2;
  cairo_surface_t *s = cairo_image_surface_create_from_png(argv[1]);
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS) {
    printf("undecodable %s\n", cairo_status_to_string(cairo_surface_status(s)));
    return 1;
  }
  cairo_surface_flush(s);
  int w = cairo_image_surface_get_width(s), h = cairo_image_surface_get_height(s);
  int stride = cairo_image_surface_get_stride(s);
  const unsigned char *d = cairo_image_surface_get_data(s);
  long inked = 0, e = 0, hh = 0;
  for (int y = 0; y < h; y++)
    for (int x = 0; x < w; x++) {
      unsigned px = *(const unsigned *)(d + (size_t)y * stride + 4 * (size_t)x);
      unsigned r = px >> 16 & 255, g = px >> 8 & 255, b = px & 255;
      if (r < 235 || g < 235 || b < 235) inked++;
      e += near(r, g, b, 0x1b7a3du);
      hh += near(r, g, b, 0x6a2c91u);
    }
  printf("%d %d %ld %ld %ld\n", w, h, inked, e, hh);
  cairo_surface_destroy(s);
  return 0;
}
EOF
cc=${CC:-cc}
if ! $cc -std=c11 -O1 -o "$tmp/pngstat" "$tmp/pngstat.c" $(pkg-config --cflags --libs cairo) 2>"$tmp/cc.err"; then
  nok "build the PNG checker against cairo" "$(head -n 3 "$tmp/cc.err")" "needs libcairo2-dev"
  finish plot
fi

# check_png WHAT FILE [W H]: decodes, has the expected size, is not blank, shows both band
# colours.  Blank means under 1 % of the pixels inked.
check_png() {
  what=$1 f=$2
  if [ ! -s "$f" ]; then nok "$what" "no image written: $f"; return; fi
  set -- $("$tmp/pngstat" "$f")
  if [ $# -ne 5 ]; then nok "$what" "checker: $*"; return; fi
  w=$1 h=$2 inked=$3 e=$4 hh=$5
  total=$((w * h))
  if [ -n "${want_w:-}" ] && { [ "$w" -ne "$want_w" ] || [ "$h" -ne "$want_h" ]; }; then
    nok "$what" "size ${w}x$h, want ${want_w}x$want_h"
  elif [ $((inked * 100)) -lt "$total" ]; then
    nok "$what" "blank: $inked of $total pixels inked"
  elif [ "$e" -lt 200 ] || [ "$hh" -lt 200 ]; then
    nok "$what" "band colours missing: $e electron-green, $hh heavy-hole-purple pixels"
  else
    ok "$what (${w}x$h, $((inked * 100 / total)) % inked)"
  fi
}

# ---- epiwell writes the pictures and the page ------------------------------------------
for ex in detector_well double_well; do
  if "$bin" solve "$root/examples/$ex.cfg" --plot "$tmp/$ex.svg" >/dev/null 2>"$tmp/err" &&
    "$bin" solve "$root/examples/$ex.cfg" --plot "$tmp/$ex.png" --report "$tmp/rep_$ex" \
      >/dev/null 2>>"$tmp/err"; then
    ok "epiwell writes $ex as SVG, PNG and report"
  else
    nok "epiwell writes $ex as SVG, PNG and report" "$(head -n 3 "$tmp/err")"
  fi
done

# ---- the PNG written by cairo ------------------------------------------------------------
want_w=1960 want_h=1440 # EW_PLOT_BAND_W/H x EW_PLOT_PNG_SCALE in src/plot.h
for ex in detector_well double_well; do check_png "PNG of $ex decodes and is drawn" "$tmp/$ex.png"; done
unset want_w want_h

# ---- the SVG through librsvg ---------------------------------------------------------------
if command -v rsvg-convert >/dev/null 2>&1; then
  for ex in detector_well double_well; do
    if rsvg-convert -b white -o "$tmp/$ex.rsvg.png" "$tmp/$ex.svg" 2>"$tmp/err"; then
      check_png "rsvg-convert renders the $ex SVG" "$tmp/$ex.rsvg.png"
    else
      nok "rsvg-convert renders the $ex SVG" "$(head -n 3 "$tmp/err")"
    fi
  done
else
  nok "rsvg-convert renders the SVG" "rsvg-convert not found: apt-get install librsvg2-bin"
fi

# ---- the report page and the SVG through chromium -----------------------------------------
browser=""
for c in chromium chromium-browser; do
  command -v "$c" >/dev/null 2>&1 && { browser=$c; break; }
done
shot() { # shot URL OUT: one headless screenshot, at most 45 s
  prof=$(mktemp -d "$tmp/profile.XXXXXX")
  timeout 45 "$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --hide-scrollbars --user-data-dir="$prof" --screenshot="$2" --window-size=1200,1500 \
    "$1" >"$tmp/chromium.log" 2>&1
}
if [ -n "$browser" ]; then
  if shot "file://$tmp/rep_double_well/report.html" "$tmp/report.png"; then
    check_png "chromium renders the report page with its inline diagram" "$tmp/report.png"
  else
    nok "chromium renders the report page" "$(tail -n 3 "$tmp/chromium.log")"
  fi
  if shot "file://$tmp/detector_well.svg" "$tmp/svg_chromium.png"; then
    check_png "chromium renders the detector_well SVG" "$tmp/svg_chromium.png"
  else
    nok "chromium renders the SVG" "$(tail -n 3 "$tmp/chromium.log")"
  fi
else
  nok "chromium renders the report page" "chromium not found: apt-get install chromium"
fi

finish plot
