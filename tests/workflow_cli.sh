#!/bin/sh
# workflow_cli.sh [BINARY] — end-to-end checks of `epiwell sweep`, `match` and `tolerance`
# (POSIX sh).  Prints one "ok - WHAT" / "not ok - WHAT" line per check and ends with exactly
# one line "workflow: N passed, M failed"; exits 1 when M > 0.  Runs from the project root
# (the examples and materials/ are there).
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp wf "workflow: 0 passed, 1 failed"

check() { # check WHAT CONDITION-COMMAND...
  what=$1
  shift
  if "$@"; then ok "$what"; else nok "$what" "exit $rc; stderr: $(head -n 3 "$tmp/err" | tr '\n' '|')"; fi
}
has() { grep -q -- "$1" "$2"; }
empty() { [ ! -s "$1" ]; }

det=examples/detector_well.cfg

# ---- sweep ---------------------------------------------------------------------------
run "$bin" sweep $det --vary well.thickness=4:8:0.5
check "sweep: exit 0" [ "$rc" -eq 0 ]
check "sweep: header names the varied key and the level/line columns" \
  sh -c "head -n 1 '$tmp/out' | grep -q '^well.thickness,e1_eV,.*e1-e2_eV,e1-e2_um,e1-e2_f.*e1-hh1_eV,e1-hh1_nm,e1-hh1_overlap'"
check "sweep: 9 rows for 4:8:0.5 (both ends included)" [ "$(tail -n +2 "$tmp/out" | wc -l)" -eq 9 ]
check "sweep: last row is the end value 8" sh -c "tail -n 1 '$tmp/out' | grep -q '^8,'"
check "sweep: no progress bar when stderr is not a terminal" empty "$tmp/err"
cp "$tmp/out" "$tmp/full.csv"

# e1 falls as the well widens (variational argument; strict)
check "sweep: e1 decreases monotonically with the width" \
  sh -c "tail -n +2 '$tmp/full.csv' | cut -d, -f2 | awk 'NR > 1 && \$1 >= prev { bad = 1 } { prev = \$1 } END { exit bad }'"

# shards: a job array of 3, K from an environment variable as a scheduler would set it
for TASK in 1 2 3; do
  "$bin" sweep $det --vary well.thickness=4:8:0.5 --shard "$TASK/3" >"$tmp/part$TASK.csv" 2>"$tmp/err" || true
done
cat "$tmp/part1.csv" "$tmp/part2.csv" "$tmp/part3.csv" >"$tmp/joined.csv"
check "sweep: shards 1..3 of 3 concatenate byte for byte to the full sweep" cmp -s "$tmp/joined.csv" "$tmp/full.csv"
check "sweep: only part 1 prints the header" sh -c "! grep -q well.thickness '$tmp/part2.csv'"

run "$bin" sweep $det --vary well.thickness=4:6:1 --vary upper_barrier.x=0.25:0.35:0.05 --threads 1
cp "$tmp/out" "$tmp/t1.csv"
run "$bin" sweep $det --vary well.thickness=4:6:1 --vary upper_barrier.x=0.25:0.35:0.05 --threads 2
check "sweep: grid of 3 x 3 points" [ "$(tail -n +2 "$tmp/out" | wc -l)" -eq 9 ]
check "sweep: 1 and 2 threads give identical output" cmp -s "$tmp/out" "$tmp/t1.csv"

run "$bin" sweep $det --vary well.thickness=4:5:0.5 --csv "$tmp/s.csv"
check "sweep --csv: exit 0, nothing on stdout" sh -c "[ $rc -eq 0 ] && [ ! -s '$tmp/out' ]"
# temporaries are hidden files beside the target (atomic.c): list them with ls -A
check "sweep --csv: file written, no temporary left" \
  sh -c "[ -s '$tmp/s.csv' ] && [ -z \"\$(ls -A '$tmp' | grep 's\.csv.' )\" ]"
run "$bin" sweep $det --vary well.thickness=-1:1:1 --csv "$tmp/f.csv"
check "sweep --csv: a failed sweep leaves neither the file nor a temporary" \
  sh -c "[ $rc -eq 2 ] && [ -z \"\$(ls -A '$tmp' | grep 'f\.csv')\" ]"

run "$bin" sweep $det --vary well.thickness=4:5:0.5 --json
if command -v python3 >/dev/null 2>&1; then
  check "sweep --json: valid JSON with 3 points" \
    python3 -c "import json,sys; d=json.load(open('$tmp/out')); sys.exit(0 if len(d['points'])==3 and d['points'][0]['well.thickness']==4 else 1)"
else
  printf 'skip - sweep --json: python3 not available\n'
fi

run "$bin" sweep $det --vary well.thickness=4:12
check "sweep: FROM:TO without STEP is refused (exit 1, names --vary)" sh -c "[ $rc -eq 1 ] && grep -q -- '--vary' '$tmp/err'"
run "$bin" sweep $det --vary wel.thickness=4:5:1
check "sweep: unknown layer is refused naming the option and the layers" \
  sh -c "[ $rc -eq 1 ] && grep -q -- '--vary' '$tmp/err' && grep -q upper_barrier '$tmp/err'"
run "$bin" sweep $det --vary well.thickness=-1:1:1
check "sweep: an invalid stack value fails with exit 2, nothing on stdout" \
  sh -c "[ $rc -eq 2 ] && [ ! -s '$tmp/out' ] && grep -q 'well.thickness = -1' '$tmp/err'"
run "$bin" sweep $det --vary well.thickness=4:5:1 --csv "$tmp/no/such/dir/x.csv"
check "sweep: unwritable --csv fails with exit 5" [ "$rc" -eq 5 ]
mkfifo "$tmp/fifo"
run "$bin" sweep $det --vary well.thickness=4:5:1 --csv "$tmp/fifo"
check "sweep: --csv on a FIFO (not a regular file) is refused with exit 5, the FIFO kept" \
  sh -c "[ $rc -eq 5 ] && grep -q -- '--csv' '$tmp/err' && [ -p '$tmp/fifo' ]"
run "$bin" sweep $det --vary well.thickness=4:5:1 --shard 4/3
check "sweep: --shard 4/3 refused (exit 1)" sh -c "[ $rc -eq 1 ] && grep -q -- '--shard' '$tmp/err'"

# ---- match ---------------------------------------------------------------------------
run "$bin" match $det --vary well.thickness=3:12 --line e1-e2 --target 9.0um --json
check "match: exit 0" [ "$rc" -eq 0 ]
check "match --json: one solution near 6.45 nm" \
  sh -c "grep -q '\"solutions\":\[{\"value\":6\.4' '$tmp/out'"
run "$bin" match $det --vary well.thickness=3:12 --line e1-hh1 --target 1.5480eV --tolerance 0.002eV
check "match --tolerance: table with the uncertainty column" sh -c "[ $rc -eq 0 ] && grep -q uncertainty '$tmp/out'"
run "$bin" match $det --vary well.thickness=3:12 --line e1-e2 --target 0.3eV --json
check "match: unreachable target exits 0 with an empty list and the reached range" \
  sh -c "[ $rc -eq 0 ] && grep -q '\"solutions\":\[\]' '$tmp/out' && grep -q spans '$tmp/err'"
run "$bin" match $det --vary well.thickness=3:12 --line e1-e2 --target 9.0
check "match: a target without unit is refused naming --target" sh -c "[ $rc -eq 1 ] && grep -q -- '--target' '$tmp/err'"
run "$bin" match $det --vary well.thickness=3:12 --line hh1-lh1 --target 9um
check "match: hh1-lh1 is not a line (exit 1, names --line)" sh -c "[ $rc -eq 1 ] && grep -q -- '--line' '$tmp/err'"

# ---- tolerance -----------------------------------------------------------------------
run "$bin" tolerance $det
check "tolerance: exit 0, a block per layer" \
  sh -c "[ $rc -eq 0 ] && [ \$(grep -c '^layer ' '$tmp/out') -eq 3 ] && grep -q dEdt_HF '$tmp/out'"
run "$bin" tolerance $det --ladder well
check "tolerance --ladder: five widths, e1-hh1 row" \
  sh -c "[ $rc -eq 0 ] && grep -q '+2 ML' '$tmp/out' && grep -q '^  e1-hh1_nm' '$tmp/out'"
run "$bin" tolerance $det --ladder nosuch
check "tolerance --ladder with an unknown layer: exit 1 naming --ladder" \
  sh -c "[ $rc -eq 1 ] && grep -q -- '--ladder' '$tmp/err'"
run "$bin" tolerance $det --json
if command -v python3 >/dev/null 2>&1; then
  check "tolerance --json: valid JSON" python3 -c "import json; json.load(open('$tmp/out'))"
fi

# ---- sweep --plot ----------------------------------------------------------------------
# well-formed enough for a picture: one <svg ...> root first, </svg> last
svg_ok() { head -c 4 "$1" | grep -q '^<svg' && [ "$(tail -n 1 "$1")" = "</svg>" ]; }
mkdir "$tmp/pic"
run "$bin" sweep $det --vary well.thickness=4:8:0.5 --plot "$tmp/pic/w.svg"
check "sweep --plot: exit 0" [ "$rc" -eq 0 ]
check "sweep --plot: the CSV on stdout is unchanged by --plot" cmp -s "$tmp/out" "$tmp/full.csv"
check "sweep --plot: FILE, FILE-interband and FILE-intersubband written, non-empty" \
  sh -c "[ -s '$tmp/pic/w.svg' ] && [ -s '$tmp/pic/w-interband.svg' ] && [ -s '$tmp/pic/w-intersubband.svg' ]"
for f in w w-interband w-intersubband; do
  if svg_ok "$tmp/pic/$f.svg"; then ok "sweep --plot: $f.svg is well-formed"; else nok "sweep --plot: $f.svg is well-formed" "$(head -c 80 "$tmp/pic/$f.svg")"; fi
done
check "sweep --plot: the levels chart names e1, e2, hh1, lh1 in its legend" \
  sh -c "grep -q '>e1<' '$tmp/pic/w.svg' && grep -q '>e2<' '$tmp/pic/w.svg' && grep -q '>hh1<' '$tmp/pic/w.svg' && grep -q '>lh1<' '$tmp/pic/w.svg'"
check "sweep --plot: the line charts name e1-hh1 (nm) and e1-e2 (um)" \
  sh -c "grep -q '>e1-hh1<' '$tmp/pic/w-interband.svg' && grep -q 'wavelength (nm)' '$tmp/pic/w-interband.svg' && grep -q '>e1-e2<' '$tmp/pic/w-intersubband.svg'"
check "sweep --plot: no temporary picture left" sh -c "[ -z \"\$(ls -A '$tmp/pic' | grep -v '^w')\" ]"
run "$bin" sweep $det --vary well.thickness=4:6:1 --vary upper_barrier.x=0.25:0.35:0.05 --plot "$tmp/pic/g.svg"
check "sweep --plot, two keys: one curve per value of the second key, labelled key=value" \
  sh -c "[ $rc -eq 0 ] && grep -q '>upper_barrier.x=0.25<' '$tmp/pic/g-interband.svg' && grep -q '>upper_barrier.x=0.35<' '$tmp/pic/g-interband.svg' && grep -q 'e1-hh1 against well.thickness' '$tmp/pic/g-interband.svg'"
run "$bin" sweep $det --vary well.thickness=4:5:0.5 --plot "$tmp/pic/p.png"
check "sweep --plot FILE.png: PNG files written" \
  sh -c "[ $rc -eq 0 ] && head -c 8 '$tmp/pic/p.png' | grep -q PNG && head -c 8 '$tmp/pic/p-interband.png' | grep -q PNG"
run "$bin" sweep $det --vary well.thickness=4:5:0.5 --plot "$tmp/pic/x.pdf"
check "sweep --plot x.pdf: exit 1 naming --plot, nothing written" \
  sh -c "[ $rc -eq 1 ] && grep -q -- '--plot' '$tmp/err' && [ ! -s '$tmp/out' ] && [ ! -e '$tmp/pic/x.pdf' ]"
run "$bin" sweep $det --vary well.thickness=4:5:0.5 --csv "$tmp/pic/c.csv" --plot "$tmp/no/such/dir/p.svg"
check "sweep --plot into a missing directory: exit 5 before the sweep, no CSV written" \
  sh -c "[ $rc -eq 5 ] && grep -q -- '--plot' '$tmp/err' && [ ! -e '$tmp/pic/c.csv' ] && [ ! -s '$tmp/out' ]"
run "$bin" sweep --help
check "sweep --help: describes the --plot files" sh -c "[ $rc -eq 0 ] && grep -q 'FILE-intersubband' '$tmp/out'"

# ---- solve --spectra ---------------------------------------------------------------------
# the detector well with 5e11 electrons per cm^2 in the well
sed 's/^temperature = 77.0;/temperature = 77.0;\nsheet_density = 5e11;/' $det >"$tmp/ns.cfg"
mkdir "$tmp/sp"
run "$bin" solve "$tmp/ns.cfg" --spectra "$tmp/sp/ns.csv" --spectra-plot "$tmp/sp/ns.svg"
check "solve --spectra: exit 0" [ "$rc" -eq 0 ]
check "solve --spectra: header E_eV,interband_rel,intersubband_fraction,intersubband_continuum_fraction" \
  sh -c "[ \"\$(head -n 1 '$tmp/sp/ns.csv')\" = 'E_eV,interband_rel,intersubband_fraction,intersubband_continuum_fraction' ]"
check "solve --spectra: 4002 rows (two grids of 2001) with both spectra set" \
  sh -c "[ \$(tail -n +2 '$tmp/sp/ns.csv' | wc -l) -eq 4002 ] && [ -z \"\$(tail -n +2 '$tmp/sp/ns.csv' | grep -E ',$|,,')\" ]"
# reference: the e1-e2 line of the same solve (the table); a Lorentzian peaks at its line
# energy, and e1-e2 is the only e1->ej line of this well, so the grid step is 1.5*E12/2000
e12=$(awk '$1 == "e1-e2" { print $2 / 1000; exit }' "$tmp/out")
check "solve --spectra: intersubband peak within one grid step (1.5*E12/2000) of e1-e2 = ${e12:-?} eV" \
  sh -c "tail -n +2 '$tmp/sp/ns.csv' | awk -F, -v e=${e12:-0} 'NR == 1 || \$3 > m { m = \$3; at = \$1 } END { d = at - e; if (d < 0) d = -d; exit !(e > 0 && d <= 1.5 * e / 2000) }'"
check "solve --spectra: the peak summary follows the table" \
  sh -c "grep -q '^Absorption spectra' '$tmp/out' && grep -q '^  intersubband  ' '$tmp/out' && grep -q '^  interband  ' '$tmp/out'"
check "solve --spectra-plot: both charts written, well-formed" \
  sh -c "$(printf '%s' "head -c 4 '$tmp/sp/ns.svg' | grep -q '^<svg' && tail -n 1 '$tmp/sp/ns-intersubband.svg' | grep -q '^</svg>\$'")"
check "solve --spectra: no temporary file left" sh -c "[ \$(ls -A '$tmp/sp' | wc -l) -eq 3 ]"
run "$bin" solve $det --spectra "$tmp/sp/plain.csv" --json
check "solve --spectra without sheet_density: 2001 rows, intersubband column empty, a note" \
  sh -c "[ $rc -eq 0 ] && [ \$(tail -n +2 '$tmp/sp/plain.csv' | wc -l) -eq 2001 ] && [ -z \"\$(tail -n +2 '$tmp/sp/plain.csv' | grep -v ',$')\" ] && grep -q sheet_density '$tmp/err'"
if command -v python3 >/dev/null 2>&1; then
  check "solve --spectra --json: stdout stays one JSON object (no peak table)" \
    python3 -c "import json; json.load(open('$tmp/out'))"
fi
run "$bin" solve "$tmp/ns.cfg" --spectra "$tmp/sp/a.csv" --angle 90
check "solve --angle 90: exit 1 naming --angle, nothing written" \
  sh -c "[ $rc -eq 1 ] && grep -q -- '--angle' '$tmp/err' && [ ! -s '$tmp/out' ] && [ ! -e '$tmp/sp/a.csv' ]"
run "$bin" solve "$tmp/ns.cfg" --spectra "$tmp/sp/a.csv" --index 0
check "solve --index 0: exit 1 naming --index, nothing written" \
  sh -c "[ $rc -eq 1 ] && grep -q -- '--index' '$tmp/err' && [ ! -s '$tmp/out' ] && [ ! -e '$tmp/sp/a.csv' ]"
run "$bin" solve "$tmp/ns.cfg" --angle 30
check "solve --angle without --spectra: exit 1" sh -c "[ $rc -eq 1 ] && grep -q -- '--angle' '$tmp/err'"
run "$bin" solve "$tmp/ns.cfg" --spectra "$tmp/no/such/dir/a.csv"
check "solve --spectra into a missing directory: exit 5 naming --spectra, nothing on stdout" \
  sh -c "[ $rc -eq 5 ] && grep -q -- '--spectra' '$tmp/err' && [ ! -s '$tmp/out' ]"
run "$bin" solve "$tmp/ns.cfg" --spectra "$tmp/sp/b.csv" --spectra-plot "$tmp/sp/b.txt"
check "solve --spectra-plot b.txt: exit 1, no CSV written" \
  sh -c "[ $rc -eq 1 ] && grep -q -- '--spectra-plot' '$tmp/err' && [ ! -e '$tmp/sp/b.csv' ]"

# growth check on a PL peak: solve the emitter at its nominal 8 nm, read e1-hh1's PL peak
# (exciton included) from the JSON, match it back to the width (round trip, 1e-3 nm)
if command -v python3 >/dev/null 2>&1; then
  run "$bin" solve examples/emitter_well.cfg --json
  plpeak=$(python3 -c "import json; d=json.load(open('$tmp/out')); print([t['pl_peak_eV'] for t in d['transitions'] if t['kind']=='interband' and t['upper']=='e1' and t['lower']=='hh1'][0])")
  run "$bin" match examples/emitter_well.cfg --vary well.thickness=5:12 --line e1-hh1:pl --target "${plpeak}eV" --json
  check "match --line e1-hh1:pl recovers the 8 nm well from its own PL peak (1e-3 nm)" \
    python3 -c "import json; s=json.load(open('$tmp/out'))['solutions']; assert len(s)==1 and abs(s[0]['value']-8.0)<1e-3, s"
  run "$bin" match examples/emitter_well.cfg --vary well.thickness=5:12 --line e1-e2:pl --target 1eV
  check "match --line e1-e2:pl (not interband): exit 1 naming --line" sh -c "[ $rc -eq 1 ] && grep -q -- '--line' '$tmp/err'"
fi

finish workflow
