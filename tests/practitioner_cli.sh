#!/bin/sh
# practitioner_cli.sh [BINARY] — what a practitioner trips over on the command line (issue 17):
# forgiven input forms, command-line errors that are exit 1 with a one-line cause and a pointer
# at --help, and --report FILE.html.  POSIX sh; one "ok"/"not ok" line per check and a last
# line "practitioner: N passed, M failed".  Runs from the project root.
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp prac "practitioner: 0 passed, 1 failed"

check() { # check WHAT CONDITION-COMMAND...
  what=$1
  shift
  if "$@"; then ok "$what"; else nok "$what" "exit $rc; stderr: $(head -n 3 "$tmp/err" | tr '\n' '|')"; fi
}
has() { grep -q -- "$1" "$2"; }

det=examples/detector_well.cfg

# ---- a byte-order mark: the same file solves to the same bytes ---------------------------
printf '\357\273\277' >"$tmp/bom.cfg"   # EF BB BF, the UTF-8 BOM (RFC 3629)
cat $det >>"$tmp/bom.cfg"
run "$bin" solve $det --json
cp "$tmp/out" "$tmp/plain.json"
run "$bin" solve "$tmp/bom.cfg" --json
check "BOM: exit 0" [ "$rc" -eq 0 ]
# the stack's path differs; every other byte of the JSON must be the same
nopath() { sed 's|"stack":"[^"]*"|"stack":P|' "$1"; }
nopath "$tmp/plain.json" >"$tmp/plain.np"
check "BOM: the JSON equals that of the file without it (but the path)" \
  sh -c "[ -s '$tmp/plain.np' ] && sed 's|\"stack\":\"[^\"]*\"|\"stack\":P|' '$tmp/out' | cmp -s - '$tmp/plain.np'"

run "$bin" sweep $det --vary well.thickness=6:7:1
cp "$tmp/out" "$tmp/plain_sweep.csv"
run "$bin" sweep "$tmp/bom.cfg" --vary well.thickness=6:7:1
check "BOM: a sweep of the file gives the same CSV as without it" \
  sh -c "[ $rc -eq 0 ] && [ -s '$tmp/out' ] && cmp -s '$tmp/out' '$tmp/plain_sweep.csv'"

# ---- specific syntax messages with file:line (exit 2) -------------------------------------
slip() { # slip WHAT LINE MESSAGE SED-EXPRESSION: the detector file with one slip
  sed "$4" $det >"$tmp/slip.cfg"
  run "$bin" solve "$tmp/slip.cfg"
  check "$1: exit 2, '$3' at line $2" sh -c "[ $rc -eq 2 ] && grep -q -- 'slip.cfg:$2: .*$3' '$tmp/err'"
}
slip "unit after a thickness" 6 "write the number without a unit: nm is implied" \
  's/thickness = 6.2;/thickness = 6.2 nm;/'
slip "unit after the temperature" 3 "write the number without a unit: K is implied" \
  's/temperature = 77.0;/temperature = 77 K;/'
slip "decimal comma" 5 "use a decimal point (x = 0.28)" '5s/x = 0.28;/x = 0,28;/'
slip "unquoted substrate" 4 'quote the name (substrate = "GaAs";)' '3a substrate = GaAs;'

# ---- composition in the name: same levels as catalogue name + x ---------------------------
sed 's/material = "AlGaAs"; x = 0.28;/material = "Al0.28Ga0.72As";/' $det >"$tmp/named.cfg"
run "$bin" solve "$tmp/named.cfg" --json
nopath "$tmp/out" >"$tmp/named.np"
check "Al0.28Ga0.72As: exit 0 and the JSON (layers, levels, lines) equals that of AlGaAs, x = 0.28" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/named.np' '$tmp/plain.np'"
sed '5s/material = "AlGaAs"; x = 0.28;/material = "Al0.28Ga0.72As"; x = 0.28;/' $det >"$tmp/twice.cfg"
run "$bin" solve "$tmp/twice.cfg"
check "a name with a composition plus x: exit 2, 'x given twice' at line 5" \
  sh -c "[ $rc -eq 2 ] && grep -q 'twice.cfg:5: .*x given twice' '$tmp/err'"

# ---- command-line errors: exit 1, the cause and one line pointing at --help ----------------
run "$bin" sweep $det --vary well.thicknes=5:6:0.5
check "--vary well.thicknes: exit 1 (a command-line error, not a stack error)" [ "$rc" -eq 1 ]
check "--vary well.thicknes: says did you mean 'thickness'" has "did you mean 'thickness'" "$tmp/err"
check "--vary well.thicknes: two lines on stderr, the second pointing at --help" \
  sh -c "[ \$(wc -l <'$tmp/err') -eq 2 ] && tail -n 1 '$tmp/err' | grep -q -- \"--help' for the usage\""
run "$bin" match $det --vary well.thicknes=5:7 --line e1-e2 --target 9um
check "match --vary well.thicknes: exit 1" [ "$rc" -eq 1 ]
run "$bin" sweep $det --vary well.doping.donorz=0:1:1
check "--vary of a missing group: exit 1" [ "$rc" -eq 1 ]
run "$bin" sweep $det --vary field=0:10:10
check "--vary of a valid key absent from the file (field) still runs" [ "$rc" -eq 0 ]
run "$bin" solve $det --bogus
check "unknown option: exit 1, exactly 2 lines on stderr (cause, --help pointer)" \
  sh -c "[ $rc -eq 1 ] && [ \$(wc -l <'$tmp/err') -eq 2 ] && head -n 1 '$tmp/err' | grep -q 'unknown option --bogus' && tail -n 1 '$tmp/err' | grep -q \"run 'epiwell --help'\""
run "$bin" sweep $det --bogus
check "sweep: the pointer names 'epiwell sweep --help'" \
  sh -c "[ $rc -eq 1 ] && [ \$(wc -l <'$tmp/err') -eq 2 ] && grep -q \"run 'epiwell sweep --help'\" '$tmp/err'"

# ---- tied keys: one --vary sets both barriers; its rows are the diagonal of the 2-D sweep ---
run "$bin" sweep $det --vary lower_barrier.x,upper_barrier.x=0.2:0.4:0.1
cp "$tmp/out" "$tmp/tied.csv"
check "tied --vary: exit 0, 3 rows, the key column quoted (RFC 4180)" \
  sh -c "[ $rc -eq 0 ] && [ \$(tail -n +2 '$tmp/tied.csv' | wc -l) -eq 3 ] && head -n 1 '$tmp/tied.csv' | grep -q '^\"lower_barrier.x,upper_barrier.x\",e1_eV,'"
run "$bin" sweep $det --vary lower_barrier.x=0.2:0.4:0.1 --vary upper_barrier.x=0.2:0.4:0.1
cp "$tmp/out" "$tmp/grid.csv"
check "tied --vary: e1, e2, hh1 and e1-e2 of each row equal the 2-D sweep's diagonal to the digit" \
  python3 - "$tmp/tied.csv" "$tmp/grid.csv" <<'PY'
import csv, sys
tied = list(csv.DictReader(open(sys.argv[1])))
grid = list(csv.DictReader(open(sys.argv[2])))
diag = [r for r in grid if r["lower_barrier.x"] == r["upper_barrier.x"]]
assert len(tied) == 3 and len(diag) == 3
for t, g in zip(tied, diag):
    assert t["lower_barrier.x,upper_barrier.x"] == g["lower_barrier.x"]
    for k in ("e1_eV", "e2_eV", "hh1_eV", "e1-e2_eV"):
        assert t[k] == g[k] and t[k] != "", (k, t[k], g[k])
# the barriers matter: the lines move with x (a tie that set only one key would move less)
assert float(tied[2]["e1-e2_eV"]) > float(tied[0]["e1-e2_eV"])
PY
run "$bin" sweep $det --vary lower_barrier.x,upper_barrier.xx=0.2:0.4:0.1
check "tied --vary with a misspelt key: exit 1, did you mean 'x'" sh -c "[ $rc -eq 1 ] && grep -q \"did you mean 'x'\" '$tmp/err'"
run "$bin" sweep $det --vary lower_barrier.x,lower_barrier.x=0.2:0.4:0.1
check "tied --vary with a key twice: exit 1" sh -c "[ $rc -eq 1 ] && grep -q 'given twice' '$tmp/err'"

# ---- --lines: weak lines hidden by default, --lines all lists them, --lines K still works ---
run "$bin" solve $det
check "solve: the parity-forbidden hh1-hh3 (f = 0) is not listed, and a note says so" \
  sh -c "! grep -q '^  hh1-hh3 ' '$tmp/out' && grep -q 'with f < 0.001 not listed' '$tmp/out' && grep -q '^  e1-e2 ' '$tmp/out'"
run "$bin" solve $det --lines all
check "solve --lines all: hh1-hh3 and e1-hh2 listed, no note" \
  sh -c "[ $rc -eq 0 ] && grep -q '^  hh1-hh3 ' '$tmp/out' && grep -q '^  e1-hh2 ' '$tmp/out' && ! grep -q 'not listed' '$tmp/out'"
run "$bin" solve $det --lines 1
check "solve --lines 1: lines from the lowest level only (no hh2-hh3), e1-e2 kept" \
  sh -c "[ $rc -eq 0 ] && grep -q '^  e1-e2 ' '$tmp/out' && ! grep -q '^  hh2-hh3 ' '$tmp/out'"
run "$bin" solve $det --json
check "solve --json keeps every line (hh1-hh3 in transitions)" \
  sh -c "grep -q '\"upper\":\"hh3\",\"lower\":\"hh1\"' '$tmp/out'"

# ---- --report FILE.html is the page --------------------------------------------------------
run "$bin" solve $det --report "$tmp/page.html"
check "--report page.html: exit 0, a regular file (not a directory)" \
  sh -c "[ $rc -eq 0 ] && [ -f '$tmp/page.html' ] && grep -q '</html>' '$tmp/page.html'"
run "$bin" solve $det --report "$tmp/rdir"
check "--report DIR: still DIR/report.html" [ -f "$tmp/rdir/report.html" ]
mkdir "$tmp/taken.html"
run "$bin" solve $det --report "$tmp/taken.html"
check "--report X.html that is a directory: refused before work (exit 5), nothing inside" \
  sh -c "[ $rc -eq 5 ] && [ ! -e '$tmp/taken.html/report.html' ] && [ ! -s '$tmp/out' ]"

finish practitioner
