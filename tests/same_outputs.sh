#!/bin/sh
# same_outputs.sh REV [BUILD] — check that this tree's program prints the same outputs as the
# program built from git revision REV (default: the tag layout-base).  For moving code around
# without changing behaviour: every example through solve (table, JSON, CSV set, SVG band
# diagram), plus a sweep, a match, a tolerance table and the materials listing.  Prints one
# "same - WHAT" or "DIFFERENT - WHAT" line per output and exits 1 on any difference.
# Builds REV in a temporary worktree (kept in build/same-REV for reuse).
# same_outputs.sh --close REV [BUILD]: outputs that differ are compared by
# tests/close_outputs.py and count as the same when every number is within rounding noise
# (and every energy within the smallest error_eV); such a line reads "close - WHAT".
set -u
close=0
if [ "${1:-}" = "--close" ]; then close=1; shift; fi
rev=${1:-layout-base}
build=${2:-build}
root=$(cd "$(dirname "$0")/.." && pwd) || exit 1
cd "$root" || exit 1
ref=$root/build/same-$(git rev-parse --short "$rev") || exit 1
if [ ! -x "$ref/build/epiwell" ]; then
  rm -rf "$ref"; git worktree prune
  git worktree add --detach "$ref" "$rev" >/dev/null 2>&1 || { echo "cannot check out $rev"; exit 1; }
  (cd "$ref" && make -j2 build/epiwell >/dev/null 2>&1) || { echo "cannot build $rev"; exit 1; }
fi
make -s "$build/epiwell" >/dev/null || exit 1
tmp=$(mktemp -d "${TMPDIR:-/tmp}/epiwell-same.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
EPIWELL_MATERIALS=$root/materials
export EPIWELL_MATERIALS
bad=0
# one CMD... run by both programs; stdout and exit status compared
same() {
  what=$1; shift
  (cd "$tmp" && "$ref/build/epiwell" "$@" >"$tmp/a" 2>"$tmp/ae"; echo "exit $?" >>"$tmp/a")
  (cd "$tmp" && "$root/$build/epiwell" "$@" >"$tmp/b" 2>"$tmp/be"; echo "exit $?" >>"$tmp/b")
  if cmp -s "$tmp/a" "$tmp/b"; then echo "same - $what"
  elif [ "$close" -eq 1 ] && noise "$tmp/a" "$tmp/b"; then echo "close - $what: $why"
  else echo "DIFFERENT - $what"; diff "$tmp/a" "$tmp/b" | head -n 10; bad=1; fi
}
# noise A B: the two files differ only by rounding noise (close_outputs.py; its line in $why)
noise() {
  why=$(python3 "$root/tests/close_outputs.py" "$1" "$2")
}
# noise_dir A B: every file of two output folders is the same or within noise
noise_dir() {
  [ "$(cd "$1" && ls)" = "$(cd "$2" && ls)" ] || return 1
  for f in "$1"/*; do
    cmp -s "$f" "$2/${f##*/}" || noise "$f" "$2/${f##*/}" || return 1
  done
}
for ex in examples/*.cfg; do
  e=$root/$ex
  same "$ex table" solve "$e"
  same "$ex json" solve "$e" --json
  same "$ex lines all" solve "$e" --lines all
  rm -rf "$tmp/oa" "$tmp/ob"
  (cd "$tmp" && "$ref/build/epiwell" solve "$e" -o "$tmp/oa" --plot "$tmp/oa.svg" >/dev/null 2>&1)
  (cd "$tmp" && "$root/$build/epiwell" solve "$e" -o "$tmp/ob" --plot "$tmp/ob.svg" >/dev/null 2>&1)
  if diff -r "$tmp/oa" "$tmp/ob" >/dev/null && cmp -s "$tmp/oa.svg" "$tmp/ob.svg"; then
    echo "same - $ex CSV set and band diagram"
  elif [ "$close" -eq 1 ] && noise_dir "$tmp/oa" "$tmp/ob" &&
       { cmp -s "$tmp/oa.svg" "$tmp/ob.svg" || noise "$tmp/oa.svg" "$tmp/ob.svg"; }; then
    echo "close - $ex CSV set and band diagram"
  else echo "DIFFERENT - $ex CSV set and band diagram"; bad=1; fi
done
det=$root/examples/detector_well.cfg
same "sweep csv" sweep "$det" --vary well.thickness=4:8:0.5 --threads 2
same "sweep json" sweep "$det" --vary well.thickness=4:6:1 --vary upper_barrier.x=0.25:0.35:0.05 --json
same "match json" match "$det" --vary well.thickness=3:12 --line e1-e2 --target 9.0um --json
same "tolerance json" tolerance "$det" --json
same "tolerance ladder" tolerance "$det" --ladder well
same "materials" materials
same "materials AlGaAs" materials AlGaAs --x 0.3 --temperature 300
same "bad stack" solve "$root/tests/data/cli/unknown_key.cfg"
same "bad option" sweep "$det" --vary wel.thickness=4:5:1
[ "$bad" -eq 0 ] && echo "same outputs as $rev$([ "$close" -eq 1 ] && echo ' (within noise)')" || echo "outputs differ from $rev"
exit "$bad"
