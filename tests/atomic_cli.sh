#!/bin/sh
# atomic_cli.sh BINARY — the command's output promises under hostile conditions (README
# "Output files"): kill -9 at random moments never leaves a mixed or partial -o set and the
# next run removes what the killed ones left; two runs on one -o DIR: one set wins whole, the
# other fails at once naming the first; an error exit leaves the previous outputs intact;
# planted symbolic links are never followed; targets that are not regular files are refused;
# several runs making one report directory at once all succeed.  Every output path is under
# $tmp (never a device).
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
make_tmp atomic "atomic_cli: cannot make a temporary directory"
cd "$root" || exit 1
ex=examples/detector_well.cfg
unprivileged_setup

# sig DIR: one line naming every entry of DIR (hidden ones too) with its checksum
sig() { (cd "$1" 2>/dev/null && ls -A | while read -r f; do printf '%s:%s ' "$f" "$(cksum <"$f" | cut -d' ' -f1)"; done); }
# hidden_left DIR...: our temporaries and staging directories left in DIR
hidden_left() { for d in "$@"; do ls -A "$d" 2>/dev/null | grep -E '^\.(.*\.new\.|.*\.old\.|epiwell-stage\.|.*\.tmp$)' | sed "s|^|$d/|"; done; }

# two different results: A on the default grid, B on a finer one (other profile, levels)
A="--grid-step 0.01"
B="--grid-step 0.008"
mkdir "$tmp/refA" "$tmp/refB" "$tmp/kill" "$tmp/krep"
# shellcheck disable=SC2086 # option and value
"$bin" solve "$ex" $A -o "$tmp/refA/out" --plot "$tmp/refA/b.svg" >/dev/null 2>&1 &&
  "$bin" solve "$ex" $B -o "$tmp/refB/out" --plot "$tmp/refB/b.svg" >/dev/null 2>&1 ||
  { nok "reference runs"; finish atomic_cli; }
sigA=$(sig "$tmp/refA/out")
sigB=$(sig "$tmp/refB/out")
svgA=$(cksum <"$tmp/refA/b.svg")
svgB=$(cksum <"$tmp/refB/b.svg")
[ "$sigA" != "$sigB" ] && ok "control: the two reference sets differ" || nok "control: the two reference sets differ"

# ---- kill -9 at random moments ------------------------------------------------------------
# shellcheck disable=SC2086
"$bin" solve "$ex" $A -o "$tmp/kill/out" --plot "$tmp/kill/b.svg" --report "$tmp/krep" >/dev/null 2>&1
bad=
killed=0
seen=0
i=0
while [ $i -lt 30 ]; do
  i=$((i + 1))
  if [ $((i % 2)) -eq 0 ]; then opts=$A; else opts=$B; fi
  delay=$(awk -v s="$i$$" 'BEGIN { srand(s); printf "%.3f", rand() * 0.35 }')
  # shellcheck disable=SC2086
  "$bin" solve "$ex" $opts -o "$tmp/kill/out" --plot "$tmp/kill/b.svg" --report "$tmp/krep" \
    >/dev/null 2>&1 &
  pid=$!
  sleep "$delay"
  kill -9 "$pid" 2>/dev/null && killed=$((killed + 1))
  wait "$pid" 2>/dev/null
  s=$(sig "$tmp/kill/out")
  if [ "$s" != "$sigA" ] && [ "$s" != "$sigB" ]; then bad="$bad [kill $i after ${delay}s: -o holds $s]"; fi
  p=$(cksum <"$tmp/kill/b.svg")
  if [ "$p" != "$svgA" ] && [ "$p" != "$svgB" ]; then bad="$bad [kill $i after ${delay}s: partial picture]"; fi
  [ -s "$tmp/krep/report.html" ] || bad="$bad [kill $i: report.html missing]"
  seen=$((seen + $(hidden_left "$tmp/kill" "$tmp/kill/out" "$tmp/krep" | wc -l)))
done
if [ -z "$bad" ]; then ok "30 random kill -9 ($killed during the run, $seen temporaries seen just after a kill): -o DIR is always one whole set (A or B), the picture and the report whole"
else nok "random kill -9 leaves whole sets" "$bad"; fi
before=$(hidden_left "$tmp/kill" "$tmp/kill/out" "$tmp/krep" | wc -l)
# shellcheck disable=SC2086
"$bin" solve "$ex" $A -o "$tmp/kill/out" --plot "$tmp/kill/b.svg" --report "$tmp/krep" >/dev/null 2>&1
left=$(hidden_left "$tmp/kill" "$tmp/kill/out" "$tmp/krep")
if [ -z "$left" ] && [ "$(sig "$tmp/kill/out")" = "$sigA" ]; then ok "the next run removes what the killed runs left ($before temporaries of the last kill; each run removed the previous kill's) and writes its set"
else nok "the next run removes what the killed runs left" "$left"; fi

# ---- two runs on one -o DIR ------------------------------------------------------------------
mkdir "$tmp/two"
# The first run reads its stack from a FIFO: it stages (and locks) -o DIR before it reads the
# stack, so it holds the lock until the stack is written into the FIFO — no timing involved.
mkfifo "$tmp/two/stack.cfg"
"$bin" solve "$tmp/two/stack.cfg" --grid-step 0.004 -o "$tmp/two/out" >/dev/null 2>"$tmp/two/err1" &
p1=$!
for _ in 1 2 3 4 5 6 7 8 9 10; do [ -e "$tmp/two/.out.lock" ] && break; sleep 0.2; done
# shellcheck disable=SC2086
"$bin" solve "$ex" $B -o "$tmp/two/out" >/dev/null 2>"$tmp/two/err2"
rc2=$?
cat "$ex" >"$tmp/two/stack.cfg"
wait "$p1"
rc1=$?
if [ "$rc1" -eq 0 ] && [ "$rc2" -eq 5 ] && grep -q "another epiwell run (pid $p1) is writing" "$tmp/two/err2"; then
  ok "a second run on a locked -o DIR fails at once (exit 5) naming the first one's pid"
else nok "a second run on a locked -o DIR fails naming the first" "rc1=$rc1 rc2=$rc2" "$(cat "$tmp/two/err2")"; fi
"$bin" solve "$ex" --grid-step 0.004 -o "$tmp/refA/fine" >/dev/null 2>&1
if [ "$(sig "$tmp/two/out")" = "$(sig "$tmp/refA/fine")" ]; then ok "the first run's set is there whole"
else nok "the first run's set is there whole"; fi

# ---- an error exit leaves the previous outputs ---------------------------------------------
mkdir "$tmp/fail"
: >"$tmp/fail/plainfile"
# shellcheck disable=SC2086
"$bin" solve "$ex" $A -o "$tmp/fail/out" --plot "$tmp/fail/b.svg" >/dev/null 2>&1
# shellcheck disable=SC2086
run "$bin" solve "$ex" $B -o "$tmp/fail/out" --plot "$tmp/fail/b.svg" --report "$tmp/fail/plainfile/rep"
if [ "$rc" -eq 5 ] && [ "$(sig "$tmp/fail/out")" = "$sigA" ] && [ "$(cksum <"$tmp/fail/b.svg")" = "$svgA" ]; then
  ok "an unwritable report path: exit 5, the previous set and picture intact"
else nok "an unwritable report path leaves the previous outputs" "rc=$rc"; fi
run "$bin" solve tests/data/cli/syntax_error.cfg -o "$tmp/fail/out" --plot "$tmp/fail/b.svg" --report "$tmp/fail/rep"
left=$(hidden_left "$tmp/fail" "$tmp/fail/out")
if [ "$rc" -eq 2 ] && [ "$(sig "$tmp/fail/out")" = "$sigA" ] && [ -z "$left" ] && [ ! -e "$tmp/fail/rep" ]; then
  ok "a stack error after staging: exit 2, previous set intact, no temporary and no report directory left"
else nok "a stack error after staging leaves nothing new" "rc=$rc" "$left" "$(ls -A "$tmp/fail")"; fi

# ---- planted symbolic links and targets that are not regular files -------------------------
mkdir "$tmp/plant"
echo precious >"$tmp/plant/victim"
ln -s "$tmp/plant/victim" "$tmp/plant/.out.lock"
run "$bin" solve "$ex" -o "$tmp/plant/out"
if [ "$rc" -eq 5 ] && [ "$(cat "$tmp/plant/victim")" = precious ] && [ ! -e "$tmp/plant/out" ]; then
  ok "a symlink planted at the lock name is not followed (exit 5, victim unchanged)"
else nok "a symlink planted at the lock name is not followed" "rc=$rc" "$(cat "$tmp/err")"; fi
ln -s "$tmp/plant/victim" "$tmp/plant/b.svg"
ln -s "$tmp/plant/victim" "$tmp/plant/s.csv"
run "$bin" solve "$ex" --plot "$tmp/plant/b.svg" --spectra "$tmp/plant/s.csv"
if [ "$rc" -eq 0 ] && [ "$(cat "$tmp/plant/victim")" = precious ] && [ ! -L "$tmp/plant/b.svg" ] && [ ! -L "$tmp/plant/s.csv" ]; then
  ok "symlinks at the targets are replaced by the files, never written through"
else nok "symlinks at the targets are not written through" "rc=$rc"; fi
mkfifo "$tmp/plant/f.svg" "$tmp/plant/f.csv"
mkdir "$tmp/plant/d.csv"
for opt in "--plot $tmp/plant/f.svg" "--spectra $tmp/plant/f.csv" "--spectra $tmp/plant/d.csv" "-o $tmp/plant/victim"; do
  # shellcheck disable=SC2086
  run "$bin" solve "$ex" $opt
  if [ "$rc" -eq 5 ] && [ -p "$tmp/plant/f.svg" ] && [ -p "$tmp/plant/f.csv" ] && [ -d "$tmp/plant/d.csv" ] &&
    [ "$(cat "$tmp/plant/victim")" = precious ]; then ok "refused, nothing replaced: $opt"
  else nok "refused, nothing replaced: $opt" "rc=$rc"; fi
done

# ---- several runs making one report directory at once --------------------------------------
mkdir "$tmp/race"
pids=
for k in 1 2 3 4; do
  "$bin" solve "$ex" --report "$tmp/race/rep" >/dev/null 2>"$tmp/race$k.err" &
  pids="$pids $!"
done
allok=1
for p in $pids; do wait "$p" || allok=0; done
if [ "$allok" -eq 1 ] && [ -s "$tmp/race/rep/report.html" ] && [ -z "$(hidden_left "$tmp/race/rep")" ]; then
  ok "four runs making one --report directory at once all succeed"
else nok "four runs making one --report directory at once all succeed" "$(cat "$tmp"/race*.err)"; fi

# ---- a sweep's CSV and pictures: together, or not at all ------------------------------------
mkdir "$tmp/sw"
echo old >"$tmp/sw/s.csv"
run "$bin" sweep "$ex" --vary no_such_layer.thickness=4:6:1 --csv "$tmp/sw/s.csv" --plot "$tmp/sw/s.svg"
if [ "$rc" -ne 0 ] && [ "$(cat "$tmp/sw/s.csv")" = old ] && [ "$(ls -A "$tmp/sw")" = s.csv ]; then
  ok "a sweep failing after its files were staged (exit $rc): the previous CSV intact, no picture, nothing else left"
else nok "a failing sweep leaves the previous CSV and nothing else" "rc=$rc" "$(ls -A "$tmp/sw" | tr '\n' ' ')"; fi
run "$bin" sweep "$ex" --vary well.thickness=4:6:1 --csv "$tmp/sw/s.csv" --plot "$tmp/sw/s.svg"
if [ "$rc" -eq 0 ] && head -n 1 "$tmp/sw/s.csv" | grep -q '^well.thickness' && [ -s "$tmp/sw/s.svg" ] &&
  [ -z "$(hidden_left "$tmp/sw")" ]; then ok "a sweep: the CSV and its pictures in place, no temporary left"
else nok "a sweep: the CSV and its pictures in place" "rc=$rc" "$(head -n 1 "$tmp/sw/s.csv")" "$(ls -A "$tmp/sw" | tr '\n' ' ')"; fi

# ---- as an unprivileged user ----------------------------------------------------------------
if [ "$unpriv_ok" -eq 1 ] && [ -n "$unpriv" ]; then
  mkdir "$tmp/np" "$tmp/np/own" "$tmp/np/inplace"
  own_unprivileged "$tmp/np/own" "$tmp/np/inplace"
  # shellcheck disable=SC2086
  run_unprivileged "$bin" solve "$ex" $A -o "$tmp/np/own/out"
  if [ "$rc" -eq 0 ] && [ "$(sig "$tmp/np/own/out")" = "$sigA" ]; then ok "unprivileged: a set swapped in whole"
  else nok "unprivileged: a set swapped in whole" "rc=$rc" "$(cat "$tmp/err")"; fi
  # the parent $tmp/np is not writable by that user: the set is staged inside DIR instead
  # shellcheck disable=SC2086
  run_unprivileged "$bin" solve "$ex" $A -o "$tmp/np/inplace"
  if [ "$rc" -eq 0 ] && [ "$(sig "$tmp/np/inplace")" = "$sigA" ]; then ok "unprivileged, parent not writable: the set is written in place, nothing else left"
  else nok "unprivileged, parent not writable: the set in place" "rc=$rc" "$(cat "$tmp/err")" "$(ls -A "$tmp/np/inplace")"; fi
  mkfifo -m 666 "$tmp/np/own/stack.cfg" # the first run holds the lock until it can read this
  $unpriv "$bin" solve "$tmp/np/own/stack.cfg" --grid-step 0.004 -o "$tmp/np/inplace" >/dev/null 2>&1 &
  p1=$!
  for _ in 1 2 3 4 5 6 7 8 9 10; do [ -e "$tmp/np/.inplace.lock" ] || [ -e "$tmp/np/inplace/.inplace.lock" ] && break; sleep 0.2; done
  sleep 0.2
  # shellcheck disable=SC2086
  run_unprivileged "$bin" solve "$ex" $B -o "$tmp/np/inplace"
  cat "$ex" >"$tmp/np/own/stack.cfg"
  wait "$p1"
  rc1=$?
  if [ "$rc1" -eq 0 ] && [ "$rc" -eq 5 ] && grep -q "another epiwell run" "$tmp/err"; then
    ok "unprivileged, in place: a second run fails at once"
  else nok "unprivileged, in place: a second run fails at once" "rc1=$rc1 rc=$rc" "$(cat "$tmp/err")"; fi
  echo precious >"$tmp/np/victim"
  chmod 644 "$tmp/np/victim"
  ln -s "$tmp/np/victim" "$tmp/np/own/b.svg"
  run_unprivileged "$bin" solve "$ex" --plot "$tmp/np/own/b.svg"
  if [ "$rc" -eq 0 ] && [ "$(cat "$tmp/np/victim")" = precious ]; then ok "unprivileged: a root-owned file behind a planted symlink is untouched"
  else nok "unprivileged: a planted symlink is not followed" "rc=$rc"; fi
else
  skip "unprivileged runs: ${unpriv_why:-not running as root (the checks above ran unprivileged)}"
fi

finish atomic_cli
