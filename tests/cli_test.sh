#!/bin/sh
# cli_test.sh BINARY — end-to-end checks of the epiwell command line (POSIX sh, runs under dash).
#
# Runs BINARY from the project root and from a fresh temporary directory, prints one
# "ok - WHAT" or "not ok - WHAT" line per check (details of a failure on "#" lines below it;
# a check that cannot run here prints "skip - WHAT: WHY" and is not counted), and ends with
# exactly one line "cli: N passed, M failed".  Exits 1 when M > 0.
#
# The functional checks pin the catalogue with EPIWELL_MATERIALS=ROOT/materials, so that one
# discovery problem does not fail every check; the "catalogue discovery" section at the end
# unsets it and checks that the binary finds its catalogue by itself from another directory
# (next to the binary or its parent directory, or under the install prefix).

. "$(dirname "$0")/lib.sh"
use_binary "${1:?usage: sh tests/cli_test.sh path/to/epiwell}"
make_tmp cli "cli: cannot make a temp dir"

# ran: the last command line, for failure details
ran() { printf 'command: %s; exit %s; stderr: %s' "$*" "$rc" "$(head -n 3 "$tmp/err" | tr '\n' '|')"; }

# expect_rc WANT WHAT CMDLINE-DESCRIPTION: the exit status of the last run is WANT
expect_rc() {
  if [ "$rc" -eq "$1" ]; then ok "$2 (exit $1)"; else nok "$2 (exit $1)" "got exit $rc" "$3"; fi
}
# expect_quiet_stdout WHAT DESC: the last run printed nothing on stdout
expect_quiet_stdout() {
  if [ ! -s "$tmp/out" ]; then
    ok "$1: nothing on stdout"
  else
    nok "$1: nothing on stdout" "stdout begins: $(head -n 2 "$tmp/out" | tr '\n' '|')" "$2"
  fi
}
# no_csv DIR: DIR holds no csv files (plain, gzip, or temporary) — true also when DIR is absent
no_csv() {
  [ -d "$1" ] || return 0
  [ -z "$(find "$1" -name '*.csv*' -print | head -n 1)" ]
}
# has_row LABEL FILE: FILE has a table row starting with LABEL as its own word
has_row() { grep -q "^[[:space:]]*$1[[:space:]]" "$2"; }

have_python=0
command -v python3 >/dev/null 2>&1 && have_python=1

examples=$(cd "$root" && ls examples/*.cfg 2>/dev/null)
if [ -z "$examples" ]; then
  nok "examples/*.cfg exist" "no example stacks found under $root/examples"
fi

# ---- version / help ------------------------------------------------------------------
cd "$root" || exit 1
run "$bin" --version
expect_rc 0 "--version succeeds" "$(ran "$bin" --version)"
if grep -Eq '^epiwell [0-9]+\.[0-9]+\.[0-9]+$' "$tmp/out"; then ok "--version prints 'epiwell X.Y.Z'"
else nok "--version prints 'epiwell X.Y.Z'" "got: $(head -n 1 "$tmp/out")"; fi

run "$bin" --help
expect_rc 0 "--help succeeds" "$(ran "$bin" --help)"
if grep -q 'usage' "$tmp/out" && grep -q 'exit codes' "$tmp/out" && grep -q 'epiwell solve' "$tmp/out"; then
  ok "--help prints the usage and the exit codes on stdout"
else
  nok "--help prints the usage and the exit codes on stdout" "stdout: $(head -n 3 "$tmp/out" | tr '\n' '|')"
fi

for c in solve materials sweep match tolerance; do
  run "$bin" $c --help
  if [ "$rc" -eq 0 ] && grep -q "usage" "$tmp/out" && grep -q "epiwell $c" "$tmp/out"; then
    ok "$c --help prints its usage on stdout (exit 0)"
  else
    nok "$c --help prints its usage on stdout (exit 0)" "exit $rc" "stdout: $(head -n 2 "$tmp/out" | tr '\n' '|')"
  fi
done

# ---- solve the examples, from the project root and from a temp dir ------------------
# the levels every example binds; a transistor's electron gas binds no holes (algan_hemt.cfg)
levels_of() { case $1 in *algan_hemt.cfg) echo e1 ;; *) echo e1 hh1 lh1 ;; esac; }
for ex in $examples; do
  for where in root tmpdir; do
    if [ "$where" = root ]; then cd "$root" && arg=$ex; else cd "$tmp" && arg=$root/$ex; fi
    run "$bin" solve "$arg"
    expect_rc 0 "solve $ex from $where" "$(ran "$bin" solve "$arg")"
    missing=
    labs=$(levels_of "$ex")
    for lab in $labs; do has_row "$lab" "$tmp/out" || missing="$missing $lab"; done
    if [ -z "$missing" ]; then ok "solve $ex from $where prints $labs rows"
    else nok "solve $ex from $where prints $labs rows" "missing rows:$missing"; fi
    if { [ "$labs" = e1 ] || grep -q '^Interband lines' "$tmp/out"; } && grep -q '^Intersubband lines' "$tmp/out"; then
      ok "solve $ex from $where prints intersubband and interband line tables"
    else
      nok "solve $ex from $where prints intersubband and interband line tables"
    fi
    if [ ! -s "$tmp/err" ]; then ok "solve $ex from $where writes nothing on stderr"
    else nok "solve $ex from $where writes nothing on stderr" "stderr: $(head -n 2 "$tmp/err" | tr '\n' '|')"; fi
  done
done
cd "$root" || exit 1

# The double-well example exists to show tunnel-split doublets: e1 and e2 must lie in the
# two different wells' region and be close (splitting well below the single-well e1-e2
# spacing, which is > 100 meV for 6 nm GaAs wells).
if [ -f examples/double_well.cfg ]; then
  run "$bin" solve examples/double_well.cfg
  split=$(awk '$1 == "e1" { a = $2 } $1 == "e2" { b = $2 } END { if (a != "" && b != "") printf "%.6f", (b - a) * 1000 }' "$tmp/out")
  if [ -n "$split" ] && awk -v s="$split" 'BEGIN { exit !(s > 0.5 && s < 40) }'; then
    ok "double_well: e1-e2 is a tunnel-split doublet (splitting $split meV, in (0.5, 40) meV)"
  else
    nok "double_well: e1-e2 is a tunnel-split doublet (splitting in (0.5, 40) meV)" "splitting: '${split}' meV"
  fi
fi

# ---- JSON ------------------------------------------------------------------------------
json_check='
import json, sys
d = json.load(sys.stdin)
errs = []
for k in ("states", "transitions"):
    if not isinstance(d.get(k), list) or not d[k]:
        errs.append("missing or empty list %r" % k)
states = d.get("states") or []
labels = set()
for s in states:
    for k in ("label", "band", "n", "energy_eV", "error_eV"):
        if k not in s:
            errs.append("state %r lacks %r" % (s.get("label"), k))
    labels.add(s.get("label"))
want_levels = sys.argv[1].split() if len(sys.argv) > 1 else ["e1", "hh1", "lh1"]
for want in want_levels:
    if want not in labels:
        errs.append("no state %r" % want)
kinds = set()
for t in d.get("transitions") or []:
    kind = t.get("kind")
    kinds.add(kind)
    common = ["kind", "upper", "lower", "energy_eV"]
    extra = {"intersubband": ["wavelength_um", "dipole_nm", "oscillator_strength"],
             "interband": ["wavelength_nm", "overlap"]}.get(kind)
    if extra is None:
        errs.append("transition of unknown kind %r" % kind)
        continue
    for k in common + extra:
        if k not in t:
            errs.append("%s transition %s-%s lacks %r" % (kind, t.get("lower"), t.get("upper"), k))
    for k in ("upper", "lower"):
        if t.get(k) not in labels:
            errs.append("transition names unknown state %r" % t.get(k))
    e = t.get("energy_eV")
    if not isinstance(e, (int, float)) or e <= 0:
        errs.append("transition energy_eV %r is not > 0" % e)
    else:
        lam = t.get("wavelength_um", 0) * 1e3 if kind == "intersubband" else t.get("wavelength_nm", 0)
        if not isinstance(lam, (int, float)) or abs(lam * e - 1239.84198) > 1e-3 * 1239.84198:
            errs.append("%s %s-%s: wavelength %r nm does not match hc/E for E = %r eV" % (kind, t.get("lower"), t.get("upper"), lam, e))
for k in ("intersubband", "interband") if "hh1" in want_levels else ("intersubband",):
    if k not in kinds:
        errs.append("no %s transition" % k)
if errs:
    print("; ".join(errs[:5]))
    sys.exit(1)
'
for ex in $examples; do
  run "$bin" solve "$ex" --json
  expect_rc 0 "solve $ex --json" "$(ran "$bin" solve "$ex" --json)"
  if [ "$have_python" -eq 1 ]; then
    if python3 -c 'import json,sys; json.load(sys.stdin)' <"$tmp/out" 2>"$tmp/pyerr"; then
      ok "solve $ex --json output parses as JSON"
    else
      nok "solve $ex --json output parses as JSON" "$(tail -n 1 "$tmp/pyerr")"
    fi
    if why=$(python3 -c "$json_check" "$(levels_of "$ex")" <"$tmp/out" 2>&1); then
      ok "solve $ex --json has states (label/band/n/energy_eV/error_eV) and transitions (kind/upper/lower/energy_eV + per-kind fields, wavelength = hc/E)"
    else
      nok "solve $ex --json has states and transitions with the documented fields" "$why"
    fi
  else
    skip "solve $ex --json parses as JSON: python3 not found"
    skip "solve $ex --json has the documented fields: python3 not found"
  fi
done

# ---- CSV output ------------------------------------------------------------------------
ex=examples/emitter_well.cfg
[ -f "$ex" ] || ex=$(printf '%s\n' "$examples" | head -n 1)
out1=$tmp/csv_plain
run "$bin" solve "$ex" -o "$out1"
expect_rc 0 "solve $ex -o DIR" "$(ran "$bin" solve "$ex" -o "$out1")"
nodes=$(sed -n 's/.*grid .* nm (\([0-9]*\) nodes).*/\1/p' "$tmp/out" | head -n 1)
for f in profile.csv levels.csv lines.csv wavefunctions.csv; do
  if [ -s "$out1/$f" ]; then ok "-o DIR writes $f"; else nok "-o DIR writes $f" "$(ls -a "$out1" 2>&1 | tr '\n' ' ')"; fi
done
hdr=$(head -n 1 "$out1/profile.csv" 2>/dev/null)
case $hdr in
'z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh' | 'z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh,'*)
  ok "profile.csv header starts with z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh" ;;
*) nok "profile.csv header starts with z_nm,Ec_eV,Ev_hh_eV,Ev_lh_eV,me,mhh,mlh" "got: $hdr" ;;
esac
plines=$(wc -l 2>/dev/null <"$out1/profile.csv" | tr -d ' ')
if [ -n "$nodes" ] && [ "${plines:-0}" -eq $((nodes + 1)) ]; then
  ok "profile.csv has one row per grid node ($nodes) plus the header"
else
  nok "profile.csv has one row per grid node plus the header" "nodes in table header: '${nodes}', lines in profile.csv: '${plines}'"
fi
wlines=$(wc -l 2>/dev/null <"$out1/wavefunctions.csv" | tr -d ' ')
if [ -n "$nodes" ] && [ "${wlines:-0}" -eq $((nodes + 1)) ]; then
  ok "wavefunctions.csv has one row per grid node plus the header"
else
  nok "wavefunctions.csv has one row per grid node plus the header" "nodes: '${nodes}', lines: '${wlines}'"
fi
if head -n 1 "$out1/wavefunctions.csv" 2>/dev/null | grep -q '^z_nm,.*e1' && grep -q '^e1,' "$out1/levels.csv" 2>/dev/null; then
  ok "wavefunctions.csv has an e1 column and levels.csv an e1 row"
else
  nok "wavefunctions.csv has an e1 column and levels.csv an e1 row"
fi
if [ "$(sed -n '2,$p' "$out1/lines.csv" 2>/dev/null | grep -c '^intersubband,')" -ge 1 ] &&
  [ "$(sed -n '2,$p' "$out1/lines.csv" 2>/dev/null | grep -c '^interband,')" -ge 1 ]; then
  ok "lines.csv lists intersubband and interband lines"
else
  nok "lines.csv lists intersubband and interband lines"
fi
if [ -d "$out1" ] && [ -z "$(find "$out1" -name '.*' ! -name . -print | head -n 1)" ] && [ ! -e "$out1/wavefunctions.csv.gz" ]; then
  ok "-o DIR leaves no temporary files and no .gz without --gzip"
else
  nok "-o DIR leaves no temporary files and no .gz without --gzip" "$(ls -a "$out1" 2>&1 | tr '\n' ' ')"
fi

out2=$tmp/csv_gzip
run "$bin" solve "$ex" -o "$out2" --gzip
expect_rc 0 "solve $ex -o DIR --gzip" "$(ran "$bin" solve "$ex" -o "$out2" --gzip)"
if [ -s "$out2/wavefunctions.csv.gz" ] && [ ! -e "$out2/wavefunctions.csv" ]; then
  ok "--gzip writes wavefunctions.csv.gz instead of wavefunctions.csv"
else
  nok "--gzip writes wavefunctions.csv.gz instead of wavefunctions.csv" "$(ls -a "$out2" 2>&1 | tr '\n' ' ')"
fi
if gzip -t "$out2/wavefunctions.csv.gz" 2>"$tmp/gzerr"; then ok "gzip -t accepts wavefunctions.csv.gz"
else nok "gzip -t accepts wavefunctions.csv.gz" "$(head -n 1 "$tmp/gzerr")"; fi
first=$(zcat "$out2/wavefunctions.csv.gz" 2>/dev/null | head -n 1)
case $first in
z_nm*) ok "zcat wavefunctions.csv.gz | head -1 starts with z_nm" ;;
*) nok "zcat wavefunctions.csv.gz | head -1 starts with z_nm" "got: $first" ;;
esac
if zcat "$out2/wavefunctions.csv.gz" 2>/dev/null | cmp -s - "$out1/wavefunctions.csv"; then
  ok "wavefunctions.csv.gz decompresses to the same text as the plain wavefunctions.csv"
else
  nok "wavefunctions.csv.gz decompresses to the same text as the plain wavefunctions.csv"
fi

# ---- bad stacks: exit 2 with file:line:, nothing on stdout, no csv in -o DIR --------------
# case name and the line of the mistake in tests/data/cli/NAME.cfg ("any" for the empty file)
for c in syntax_error:5 unknown_material:5 unknown_key:5 x_out_of_range:4 negative_thickness:5 empty:any; do
  name=${c%%:*}
  line=${c#*:}
  f=tests/data/cli/$name.cfg
  d=$tmp/bad_$name
  if [ ! -f "$f" ]; then nok "bad stack $name: input file $f exists"; continue; fi
  run "$bin" solve "$f" -o "$d"
  expect_rc 2 "bad stack $name is a stack-file error" "$(ran "$bin" solve "$f" -o "$d")"
  if [ "$line" = any ]; then pat="^epiwell: $f:[0-9][0-9]*: "; line=N; else pat="^epiwell: $f:$line: "; fi
  if grep -q "$pat" "$tmp/err"; then ok "bad stack $name: stderr names $f:${line}:"
  else nok "bad stack $name: stderr names $f:${line}:" "stderr: $(head -n 2 "$tmp/err" | tr '\n' '|')"; fi
  expect_quiet_stdout "bad stack $name" "$(ran "$bin" solve "$f" -o "$d")"
  if no_csv "$d"; then ok "bad stack $name: -o DIR holds no csv files"
  else nok "bad stack $name: -o DIR holds no csv files" "$(ls -a "$d" 2>&1 | tr '\n' ' ')"; fi
done

# missing file: an I/O error (5), not a stack-file error
d=$tmp/bad_missing
run "$bin" solve tests/data/cli/no_such_stack.cfg -o "$d"
expect_rc 5 "missing stack file is a file I/O error" "$(ran "$bin" solve tests/data/cli/no_such_stack.cfg -o "$d")"
if grep -q 'no_such_stack.cfg' "$tmp/err"; then ok "missing stack file: stderr names the file"
else nok "missing stack file: stderr names the file" "stderr: $(head -n 2 "$tmp/err")"; fi
expect_quiet_stdout "missing stack file" ""
if no_csv "$d"; then ok "missing stack file: -o DIR holds no csv files"; else nok "missing stack file: -o DIR holds no csv files"; fi

# unreadable stack file (permissions apply: as root the check runs as nobody, lib.sh)
unprivileged_setup
if [ "$unpriv_ok" -eq 1 ]; then
  cp examples/detector_well.cfg "$tmp/unreadable.cfg" && own_unprivileged "$tmp/unreadable.cfg"
  # control: readable, the same user solves it
  run_unprivileged "$bin" solve "$tmp/unreadable.cfg"
  expect_rc 0 "control: the permission checks' user reads a readable stack" "$(ran $unpriv "$bin" solve "$tmp/unreadable.cfg")"
  chmod 000 "$tmp/unreadable.cfg"
  run_unprivileged "$bin" solve "$tmp/unreadable.cfg"
  expect_rc 5 "unreadable stack file is a file I/O error" "$(ran $unpriv "$bin" solve "$tmp/unreadable.cfg")"
  chmod 644 "$tmp/unreadable.cfg"
else
  skip "unreadable stack file exits 5: $unpriv_why"
fi

# ---- unwritable -o paths: exit 5 before any output --------------------------------------
: >"$tmp/regular_file"
for d in "$tmp/regular_file/sub" /proc/forbidden; do
  run "$bin" solve "$ex" -o "$d"
  expect_rc 5 "unwritable -o $d" "$(ran "$bin" solve "$ex" -o "$d")"
  expect_quiet_stdout "unwritable -o $d" ""
  if [ -s "$tmp/err" ]; then ok "unwritable -o $d: the reason is on stderr"; else nok "unwritable -o $d: the reason is on stderr"; fi
done
# before any work: with a broken stack as well, the output path is what gets reported
run "$bin" solve tests/data/cli/syntax_error.cfg -o "$tmp/regular_file/sub"
expect_rc 5 "unwritable -o is checked before the stack is read" "$(ran "$bin" solve tests/data/cli/syntax_error.cfg -o "$tmp/regular_file/sub")"
if [ "$unpriv_ok" -eq 1 ]; then
  mkdir "$tmp/readonly" && own_unprivileged "$tmp/readonly" && chmod 755 "$tmp/readonly"
  # control: writable, the same user writes the set there
  run_unprivileged "$bin" solve "$ex" -o "$tmp/readonly"
  expect_rc 0 "control: the permission checks' user writes a writable -o directory" "$(ran $unpriv "$bin" solve "$ex" -o "$tmp/readonly")"
  rm -f "$tmp/readonly"/*
  chmod 555 "$tmp/readonly"
  run_unprivileged "$bin" solve "$ex" -o "$tmp/readonly"
  expect_rc 5 "read-only -o directory" "$(ran $unpriv "$bin" solve "$ex" -o "$tmp/readonly")"
  if no_csv "$tmp/readonly"; then ok "read-only -o directory: nothing written"; else nok "read-only -o directory: nothing written"; fi
  for opt in "--plot $tmp/readonly/band.svg" "--report $tmp/readonly/rep" "--spectra $tmp/readonly/s.csv"; do
    # shellcheck disable=SC2086 # option and its value
    run_unprivileged "$bin" solve "$ex" $opt
    expect_rc 5 "read-only directory for ${opt%% *}" "$(ran $unpriv "$bin" solve "$ex" $opt)"
  done
  if [ -z "$(ls -A "$tmp/readonly")" ]; then ok "read-only directory: nothing written by --plot, --report, --spectra"
  else nok "read-only directory: nothing written by --plot, --report, --spectra" "found: $(ls -A "$tmp/readonly" | head -n 3 | tr '\n' ' ')"; fi
  chmod 755 "$tmp/readonly"
else
  skip "read-only -o directory exits 5: $unpriv_why"
fi

# ---- bad options: exit 1, usage on stderr, nothing on stdout ----------------------------
# Each case is "description|arguments"; the arguments are split on blanks.
while IFS='|' read -r what args; do
  [ -n "$what" ] || continue
  # shellcheck disable=SC2086 # word splitting of $args is intended
  run "$bin" $args
  expect_rc 1 "bad option: $what" "$(ran "$bin" $args)"
  expect_quiet_stdout "bad option: $what" ""
  if grep -q 'usage' "$tmp/err"; then ok "bad option: $what: usage on stderr"
  else nok "bad option: $what: usage on stderr" "stderr: $(head -n 2 "$tmp/err" | tr '\n' '|')"; fi
done <<EOF
--lines 0|solve $ex --lines 0
--lines 1.5|solve $ex --lines 1.5
--lines without a value|solve $ex --lines
--grid-step -1|solve $ex --grid-step -1
--grid-step abc|solve $ex --grid-step abc
--grid-step 0|solve $ex --grid-step 0
unknown option --frobnicate|solve $ex --frobnicate
solve with no stack|solve
two stack files|solve $ex $ex
no command|
unknown command|dissolve $ex
materials --x abc|materials AlGaAs --x abc
EOF

# the same options with good values work (so the failures above are about the values)
run "$bin" solve "$ex" --lines all
expect_rc 0 "control: --lines all is accepted" "$(ran "$bin" solve "$ex" --lines all)"
run "$bin" solve "$ex" --lines 1
expect_rc 0 "control: --lines 1 is accepted" "$(ran "$bin" solve "$ex" --lines 1)"
run "$bin" solve "$ex" --grid-step 0.1 --no-estimate
expect_rc 0 "control: --grid-step 0.1 --no-estimate is accepted" "$(ran "$bin" solve "$ex" --grid-step 0.1 --no-estimate)"
if grep -q 'grid 0.1 nm' "$tmp/out"; then ok "control: --grid-step 0.1 shows in the table header"
else nok "control: --grid-step 0.1 shows in the table header" "header: $(head -n 1 "$tmp/out")"; fi

# ---- materials ----------------------------------------------------------------------------
run "$bin" materials
expect_rc 0 "materials" "$(ran "$bin" materials)"
missing=
for m in GaAs AlAs AlGaAs; do grep -q "^${m}[[:space:]]" "$tmp/out" || missing="$missing $m"; done
if [ -z "$missing" ]; then ok "materials lists GaAs, AlAs and AlGaAs"; else nok "materials lists GaAs, AlAs and AlGaAs" "missing:$missing"; fi
if grep -q '^AlGaAs[[:space:]][[:space:]]*alloy' "$tmp/out" && grep -q '^GaAs[[:space:]][[:space:]]*binary' "$tmp/out"; then
  ok "materials marks AlGaAs as an alloy and GaAs as a binary"
else
  nok "materials marks AlGaAs as an alloy and GaAs as a binary"
fi

run "$bin" materials AlGaAs --x 0.3 --temperature 300
expect_rc 0 "materials AlGaAs --x 0.3 --temperature 300" "$(ran "$bin" materials AlGaAs --x 0.3 --temperature 300)"
if grep -q 'x = 0.3' "$tmp/out" && grep -q 'T = 300 K' "$tmp/out"; then ok "materials AlGaAs echoes x = 0.3 and T = 300 K"
else nok "materials AlGaAs echoes x = 0.3 and T = 300 K"; fi
# a parameter row: name, number, unit, then a non-empty source text
if grep -q '^parameter[[:space:]].*source' "$tmp/out" &&
  grep -Eq '^Eg_G[[:space:]]+[-0-9.e+]+[[:space:]]+eV[[:space:]]+[^[:space:]]' "$tmp/out" &&
  grep -Eq '^me[[:space:]]+[-0-9.e+]+[[:space:]]+m0[[:space:]]+[^[:space:]]' "$tmp/out"; then
  ok "materials AlGaAs prints parameter rows with value, unit and source"
else
  nok "materials AlGaAs prints parameter rows with value, unit and source"
fi
if grep -Eq '^Ec[[:space:]]+[-0-9.e+]+[[:space:]]+eV' "$tmp/out"; then ok "materials AlGaAs prints the band edge Ec at T"
else nok "materials AlGaAs prints the band edge Ec at T"; fi

run "$bin" materials Nonexistent
if [ "$rc" -ne 0 ] && [ "$rc" -lt 128 ]; then ok "materials Nonexistent fails (exit $rc, not a crash)"
else nok "materials Nonexistent fails (non-zero exit, not a crash)" "got exit $rc"; fi
if [ -s "$tmp/err" ]; then ok "materials Nonexistent: the reason is on stderr"; else nok "materials Nonexistent: the reason is on stderr"; fi
expect_quiet_stdout "materials Nonexistent" ""

# ---- catalogue discovery: no EPIWELL_MATERIALS, run from /tmp -----------------------------
unset EPIWELL_MATERIALS
cd /tmp || exit 1
run "$bin" materials
expect_rc 0 "catalogue discovery: materials run from /tmp without EPIWELL_MATERIALS" "$(ran "$bin" materials)"
catdir=$(sed -n 's/^materials in //p' "$tmp/out" | head -n 1)
if [ -n "$catdir" ] && [ -f "$catdir/GaAs.cfg" ] && grep -q '^GaAs[[:space:]]' "$tmp/out"; then
  ok "catalogue discovery: run from /tmp, the binary finds its catalogue ($catdir)"
else
  nok "catalogue discovery: run from /tmp, the binary finds its catalogue" "catalogue line: '$catdir'" "$(ran "$bin" materials)"
fi
ex1=$(printf '%s\n' "$examples" | head -n 1)
run "$bin" solve "$root/$ex1"
if [ "$rc" -eq 0 ] && has_row e1 "$tmp/out"; then
  ok "catalogue discovery: solve $ex1 from /tmp without EPIWELL_MATERIALS prints levels"
else
  nok "catalogue discovery: solve $ex1 from /tmp without EPIWELL_MATERIALS prints levels" "$(ran "$bin" solve "$root/$ex1")"
fi
cd "$root" || exit 1

# wurtzite nitrides (README "Nitrides"): the blue shift with injection through a sweep of the
# top-level screening_sheet, read back from the sweep CSV (the e1-hh1 wavelength column falls
# with every step: screening lowers the field, F. Della Sala et al. 1999, from memory), and the
# tolerance and report commands on a wurtzite stack
run "$bin" sweep "$root/examples/ingan_led.cfg" --vary screening_sheet=0:1e13:5e12
if [ "$rc" -eq 0 ] && awk -F, 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == "e1-hh1_nm") c = i; next }
     c && NR > 2 && !($c < last) { bad = 1 } { last = $c } END { exit !(c && NR == 4 && !bad) }' "$tmp/out"; then
  ok "nitride sweep of screening_sheet: the e1-hh1 emission blue-shifts at every step"
else
  nok "nitride sweep of screening_sheet: the e1-hh1 emission blue-shifts at every step" "$(ran "$bin" sweep ingan_led.cfg)" "$(head -c 300 "$tmp/out")"
fi
run "$bin" tolerance "$root/examples/ingan_led.cfg"
if [ "$rc" -eq 0 ] && grep -q "1 ML = 0.2592 nm" "$tmp/out"; then
  ok "nitride tolerance: a GaN monolayer is c/2 (0.2592 nm, Vurgaftman & Meyer 2003 c = 5.185 A)"
else
  nok "nitride tolerance: a GaN monolayer is c/2" "$(ran "$bin" tolerance ingan_led.cfg)"
fi
run "$bin" solve "$root/examples/algan_hemt.cfg" --report "$tmp/hemt.html"
if [ "$rc" -eq 0 ] && [ -s "$tmp/hemt.html" ] && grep -q "^Polarisation" "$tmp/out"; then
  ok "nitride solve with --report: table with the polarisation section, report written"
else
  nok "nitride solve with --report: table with the polarisation section, report written" "$(ran "$bin" solve algan_hemt.cfg --report)"
fi
run "$bin" match "$root/examples/ingan_led.cfg" --vary well.thickness=2:4 --line e1-hh1 --target 450nm
t450=$(awk '$1 == "1" { print $2 }' "$tmp/out")
if [ "$rc" -eq 0 ] && awk -v t="$t450" 'BEGIN { exit !(t > 2.5 && t < 4) }'; then
  ok "nitride match: e1-hh1 at 450 nm needs a wider well than the 439 nm of 2.5 nm (QCSE red shift; found $t450 nm)"
else
  nok "nitride match: e1-hh1 at 450 nm needs a wider well than 2.5 nm" "$(ran "$bin" match ingan_led.cfg)" "thickness '$t450'"
fi
run "$bin" materials AlGaN --x 0.3 --substrate GaN
if [ "$rc" -eq 0 ] && grep -q "^Psp  *-0.04681 " "$tmp/out" && grep -q "^mch_z " "$tmp/out"; then
  ok "materials AlGaN: Psp(0.3) = -0.04681 C/m2 (Ambacher et al. 2002 non-linear law) and the crystal-field hole"
else
  nok "materials AlGaN: Psp and the crystal-field hole" "$(ran "$bin" materials AlGaN --x 0.3)" "$(grep Psp "$tmp/out")"
fi

# a failed run creates no output directory (it is checked first, made only when written)
rm -rf "$tmp/never_made"
run "$bin" solve "$root/tests/data/cli/syntax_error.cfg" -o "$tmp/never_made" --report "$tmp/never_made_r"
if [ "$rc" -eq 2 ] && [ ! -e "$tmp/never_made" ] && [ ! -e "$tmp/never_made_r" ]; then
  ok "a stack error with -o/--report leaves no output directory behind"
else
  nok "a stack error with -o/--report leaves no output directory behind" "exit $rc; $(ls -d "$tmp"/never_made* 2>&1)"
fi

finish cli
