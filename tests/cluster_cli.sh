#!/bin/sh
# cluster_cli.sh [BINARY] — sweeps split over a job array, without a workload manager:
# `--shard auto` from the Slurm job-array variables (set here as sbatch sets them), `epiwell
# merge` of the parts against the one-machine sweep byte for byte (the reference: the same
# sweep run without --shard), the refusals of a missing, duplicated, foreign or cut-short
# part, and a sweep stopped by SIGTERM (exit 7, no output file).  tests/slurm_test.sh runs
# the same through a real Slurm.  Last line "cluster: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp cluster "cluster: 0 passed, 1 failed"

check() { # check WHAT CONDITION-COMMAND...
  what=$1
  shift
  if "$@"; then ok "$what"; else nok "$what" "exit $rc; stderr: $(head -n 3 "$tmp/err" | tr '\n' '|')"; fi
}
has() { grep -q -- "$1" "$2"; }
det=examples/detector_well.cfg
V=well.thickness=4:8:0.1 # 41 points
sw() { "$bin" sweep $det --vary "$V" --grid-step 0.1 --no-estimate "$@"; }

# ---- the reference: one machine -------------------------------------------------------
sw >"$tmp/one.csv"
sw --json >"$tmp/one.json"
# ---- the parts of an array of 4, task IDs 0..3 (sbatch --array=0-3) ------------------
for id in 0 1 2 3; do
  run env SLURM_ARRAY_TASK_ID=$id SLURM_ARRAY_TASK_COUNT=4 SLURM_ARRAY_TASK_MIN=0 \
    "$bin" sweep $det --vary "$V" --grid-step 0.1 --no-estimate --shard auto --csv "$tmp/p$id.csv"
  [ "$rc" -eq 0 ] || nok "--shard auto, task $id: exit 0" "exit $rc: $(cat "$tmp/err")"
  env SLURM_ARRAY_TASK_ID=$id SLURM_ARRAY_TASK_COUNT=4 SLURM_ARRAY_TASK_MIN=0 \
    "$bin" sweep $det --vary "$V" --grid-step 0.1 --no-estimate --shard auto --json >"$tmp/p$id.json"
done
# task 2 of 0..3 is part 3 of 4: points [2*41/4, 3*41/4) = [20, 30) (README "epiwell sweep")
sw --shard 3/4 --json >"$tmp/k3.json"
check "--shard auto: task ID 2 of an array 0..3 is --shard 3/4" cmp -s "$tmp/p2.json" "$tmp/k3.json"
check "--shard auto: part 3/4 holds points 20..29" has '"shard":{"k":3,"n":4,"first":20,"count":10}' "$tmp/p2.json"

run "$bin" merge "$tmp/p2.json" "$tmp/p0.json" "$tmp/p3.json" "$tmp/p1.json"
check "merge: JSON parts in any order give the one-machine JSON byte for byte" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/one.json'"
run "$bin" merge --vary "$V" "$tmp/p3.csv" "$tmp/p1.csv" "$tmp/p0.csv" "$tmp/p2.csv"
check "merge: CSV parts (placed by --vary) give the one-machine CSV byte for byte" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/one.csv'"
run "$bin" merge "$tmp/p0.json" "$tmp/p1.json" "$tmp/p2.json" "$tmp/p3.json" -o "$tmp/merged.json"
check "merge -o FILE: the file is the one-machine JSON, standard output empty" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/merged.json' '$tmp/one.json' && [ ! -s '$tmp/out' ]"

# a grid of two keys with a tied pair (a.x,b.x), 3 x 4 points in 5 parts: one part's
# boundary falls inside a row of the inner key
dw=examples/double_well.cfg
G1=left_well.thickness,right_well.thickness=5:6:0.5
G2=temperature=77:300:74.33333333333
"$bin" sweep $dw --vary "$G1" --vary "$G2" --grid-step 0.1 --no-estimate >"$tmp/g.csv"
for k in 1 2 3 4 5; do
  "$bin" sweep $dw --vary "$G1" --vary "$G2" --grid-step 0.1 --no-estimate --shard $k/5 >"$tmp/g$k.csv"
done
run "$bin" merge --vary "$G1" --vary "$G2" "$tmp/g5.csv" "$tmp/g2.csv" "$tmp/g4.csv" "$tmp/g1.csv" "$tmp/g3.csv"
check "merge: a two-key sweep with tied keys, 5 CSV parts, byte for byte" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/g.csv' && [ \$(wc -l <'$tmp/g.csv') -eq 13 ]"

# ---- refusals: exit 2, nothing on standard output, no -o file ---------------------------
refused() { # refused WHAT PATTERN ARGS...: exit 2, stdout empty, the message matches
  what=$1 pat=$2
  shift 2
  rm -f "$tmp/never.json"
  run "$bin" merge "$@" -o "$tmp/never.json"
  if [ "$rc" -eq 2 ] && [ ! -s "$tmp/out" ] && [ ! -e "$tmp/never.json" ] && has "$pat" "$tmp/err"; then
    ok "merge refuses $what"
  else
    nok "merge refuses $what" "exit $rc; stderr: $(cat "$tmp/err")"
  fi
}
refused "a missing JSON part" "part 3 of 4 is missing" "$tmp/p0.json" "$tmp/p1.json" "$tmp/p3.json"
refused "a duplicated JSON part" "part 2 of 4 given twice" "$tmp/p0.json" "$tmp/p1.json" "$tmp/p1.json" "$tmp/p2.json" "$tmp/p3.json"
refused "a missing CSV part" "points 30..40 of 41 are in no part" --vary "$V" "$tmp/p0.csv" "$tmp/p1.csv" "$tmp/p2.csv"
refused "a duplicated CSV part" "point 10 is also in" --vary "$V" "$tmp/p0.csv" "$tmp/p1.csv" "$tmp/p1.csv" "$tmp/p2.csv" "$tmp/p3.csv"
# a part of another sweep: the same keys at another grid step (other columns), other range
sw --shard 2/4 --json --levels 5 >"$tmp/other.json"
refused "a JSON part of another sweep (other columns)" "not a part of the sweep" "$tmp/p0.json" "$tmp/other.json" "$tmp/p2.json" "$tmp/p3.json"
"$bin" sweep $det --vary well.thickness=4:8.1:0.1 --grid-step 0.1 --no-estimate --shard 4/4 >"$tmp/other.csv"
refused "a CSV part of another range" "the row is not point" --vary "$V" "$tmp/p0.csv" "$tmp/p1.csv" "$tmp/p2.csv" "$tmp/other.csv"
"$bin" sweep $det --vary well.thickness=4.05:8:0.1 --grid-step 0.1 --no-estimate --shard 2/4 >"$tmp/off.csv"
refused "a CSV part off the grid" "no point of the sweep" --vary "$V" "$tmp/p0.csv" "$tmp/off.csv" "$tmp/p2.csv" "$tmp/p3.csv"
head -c 700 "$tmp/p1.json" >"$tmp/cut.json"
refused "a JSON part cut short" "cut short" "$tmp/p0.json" "$tmp/cut.json" "$tmp/p2.json" "$tmp/p3.json"
head -n 3 "$tmp/p1.json" >"$tmp/cut2.json"
refused "a JSON part missing its last points" "cut short" "$tmp/p0.json" "$tmp/cut2.json" "$tmp/p2.json" "$tmp/p3.json"
refused "a CSV part among JSON parts" "a CSV part among JSON parts" "$tmp/p0.json" "$tmp/p1.csv"
refused "a sweep of another size given by --vary" "a sweep of 41 points, --vary gives 42" --vary well.thickness=4:8.1:0.1 "$tmp/p0.json" "$tmp/p1.json" "$tmp/p2.json" "$tmp/p3.json"
run "$bin" merge "$tmp/p0.csv" "$tmp/p1.csv"
check "merge: CSV parts without --vary: exit 1, says why" sh -c "[ $rc -eq 1 ] && grep -q 'give the sweep' '$tmp/err'"
run "$bin" merge "$tmp/no_such.json"
check "merge: an unreadable part: exit 5" [ "$rc" -eq 5 ]
run "$bin" merge
check "merge: no parts: exit 1" [ "$rc" -eq 1 ]

# ---- --shard auto outside an array ----------------------------------------------------
run env -u SLURM_ARRAY_TASK_ID -u SLURM_ARRAY_TASK_COUNT -u SLURM_ARRAY_TASK_MIN \
  "$bin" sweep $det --vary "$V" --shard auto
check "--shard auto without a job array: exit 1 naming SLURM_ARRAY_TASK_ID" \
  sh -c "[ $rc -eq 1 ] && grep -q 'SLURM_ARRAY_TASK_ID is not set' '$tmp/err' && [ ! -s '$tmp/out' ]"
run env -u SLURM_ARRAY_TASK_COUNT SLURM_ARRAY_TASK_ID=3 SLURM_ARRAY_TASK_MIN=1 \
  "$bin" sweep $det --vary "$V" --shard auto
check "--shard auto without SLURM_ARRAY_TASK_COUNT: exit 1 naming it" \
  sh -c "[ $rc -eq 1 ] && grep -q 'SLURM_ARRAY_TASK_COUNT is not set' '$tmp/err'"
run env SLURM_ARRAY_TASK_ID=8 SLURM_ARRAY_TASK_COUNT=3 SLURM_ARRAY_TASK_MIN=0 \
  "$bin" sweep $det --vary "$V" --shard auto
check "--shard auto with a stepped array (IDs 0,4,8): exit 1, consecutive IDs asked for" \
  sh -c "[ $rc -eq 1 ] && grep -q 'must be consecutive' '$tmp/err'"

# ---- SIGTERM (what scancel sends) stops a sweep: exit 7, no output file ---------------
mkdir "$tmp/cancel"
"$bin" sweep $det --vary well.thickness=4:12:0.002 --threads 2 --csv "$tmp/cancel/s.csv" \
  --plot "$tmp/cancel/s.svg" >"$tmp/out" 2>"$tmp/err" &
pid=$!
sleep 1
kill -TERM $pid
wait $pid
rc=$?
check "SIGTERM: the sweep stops with exit 7 (cancelled)" sh -c "[ $rc -eq 7 ] && grep -q 'cancelled' '$tmp/err'"
check "SIGTERM: no output file and no staging leftovers in the directory" \
  sh -c "[ -z \"\$(ls -A '$tmp/cancel')\" ] && [ ! -s '$tmp/out' ]"

# ---- more parts than points: part 1 of 4 of a 2-point sweep holds the CSV header only,
# part 3 nothing; merged (any order) they are still the one-machine sweep
V2=well.thickness=5:6:1
"$bin" sweep $det --vary $V2 --grid-step 0.2 >"$tmp/two.csv"
"$bin" sweep $det --vary $V2 --grid-step 0.2 --json >"$tmp/two.json"
for k in 1 2 3 4; do
  "$bin" sweep $det --vary $V2 --grid-step 0.2 --shard $k/4 --csv "$tmp/t$k.csv"
  "$bin" sweep $det --vary $V2 --grid-step 0.2 --shard $k/4 --json >"$tmp/t$k.json"
done
run "$bin" merge --vary $V2 "$tmp/t3.csv" "$tmp/t2.csv" "$tmp/t1.csv" "$tmp/t4.csv"
check "merge: 4 CSV parts of a 2-point sweep (a header-only part, an empty part) give the sweep" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/two.csv'"
run "$bin" merge "$tmp/t3.json" "$tmp/t1.json" "$tmp/t4.json" "$tmp/t2.json"
check "merge: 4 JSON parts of a 2-point sweep give the sweep" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/two.json'"

# ---- a match scan over many machines: the parts of `match --shard K/N` merged give the
# one-machine `match --json` byte for byte (the reference: the same match without --shard)
mt() { "$bin" match $det --grid-step 0.1 --no-estimate --json "$@"; }
match_parts() { # match_parts NAME N ARGS...: parts NAME-1..N of the match with ARGS
  name=$1 n=$2
  shift 2
  k=1
  while [ "$k" -le "$n" ]; do mt "$@" --shard "$k/$n" >"$tmp/$name-$k.mp"; k=$((k + 1)); done
}
# merged NAME N ARGS...: the one-machine match (NAME.json), its N parts, and their merge (rc, out)
merged() {
  name=$1 n=$2
  shift 2
  mt "$@" >"$tmp/$name.json"
  match_parts "$name" "$n" "$@"
  run "$bin" merge "$tmp/$name"-*.mp
}
same_as() { [ "$rc" -eq 0 ] && cmp -s "$tmp/out" "$tmp/$1.json"; } # same_as NAME: the merge = NAME.json
M1="--vary well.thickness=4:9 --line e1-e2 --target 9.0um"
merged m1 3 $M1
run "$bin" merge "$tmp/m1-3.mp" "$tmp/m1-1.mp" "$tmp/m1-2.mp" # parts in any order
check "merge: 3 parts of a 1D match give the one-machine match --json byte for byte" same_as m1
check "the 1D match found its solution (e1-e2 at 9.0 um near 6.48 nm)" has '"value":6.47' "$tmp/m1.json"
merged mt 4 --vary well.thickness=3:12 --line e1-hh1 --target 1.5480eV --tolerance 0.002eV
check "merge: 4 parts of a match with --tolerance (uncertainty, values at target -/+ tolerance)" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/mt.json' && grep -q value_at_target_plus '$tmp/out'"
merged mn 2 --vary well.thickness=3:12 --line e1-e2 --target 0.3eV
check "merge: a match without solution gets the whole range's message (reached energies)" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/mn.json' && grep -q 'spans' '$tmp/out'"
merged ms 5 --vary well.thickness=4:9 --line e1-e2 --target 9.0um --samples 3
check "merge: more parts (5) than sample intervals (2): the empty parts join too" same_as ms
merged m2 3 --vary well.thickness=5:8 --vary temperature=50:300 --line e1-e2 --target 0.1393eV \
  --line e1-hh1 --target 1.5066eV --samples 6
check "merge: 3 parts of a 2D match (Newton's starts chosen again over all parts)" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/m2.json' && grep -q '\"solutions\":\[{' '$tmp/out'"
merged m2n 2 --vary well.thickness=5:8 --vary temperature=50:300 --line e1-e2 --target 0.3eV \
  --line e1-hh1 --target 1.5066eV --samples 5
check "merge: a 2D match without a sign-changing cell (Newton from the best point of all parts)" same_as m2n
run env SLURM_ARRAY_TASK_ID=5 SLURM_ARRAY_TASK_COUNT=3 SLURM_ARRAY_TASK_MIN=4 \
  "$bin" match $det --grid-step 0.1 --no-estimate --json $M1 --shard auto
check "match --shard auto: task 5 of an array 4..6 is part 2 of 3" \
  sh -c "[ $rc -eq 0 ] && cmp -s '$tmp/out' '$tmp/m1-2.mp'"
run "$bin" merge "$tmp/m1-1.mp" "$tmp/m1-3.mp"
check "merge: a missing match part is refused naming it (exit 2)" \
  sh -c "[ $rc -eq 2 ] && grep -q 'part 2 of 3 is missing' '$tmp/err' && [ ! -s '$tmp/out' ]"
run "$bin" merge "$tmp/m1-1.mp" "$tmp/m1-2.mp" "$tmp/m1-2.mp" "$tmp/m1-3.mp"
check "merge: a match part given twice is refused (exit 2)" sh -c "[ $rc -eq 2 ] && grep -q 'given twice' '$tmp/err'"
run "$bin" merge "$tmp/m1-1.mp" "$tmp/mn-2.mp"
check "merge: a part of another match is refused naming it (exit 2)" \
  sh -c "[ $rc -eq 2 ] && grep -q 'another match' '$tmp/err' && grep -q 'mn-2.mp' '$tmp/err'"
head -c 300 "$tmp/m1-2.mp" >"$tmp/cut.mp"
run "$bin" merge "$tmp/m1-1.mp" "$tmp/cut.mp" "$tmp/m1-3.mp"
check "merge: a match part cut short is refused naming it (exit 2)" \
  sh -c "[ $rc -eq 2 ] && grep -q 'cut.mp' '$tmp/err'"
run "$bin" match $det $M1 --shard 1/2
check "match --shard without --json is refused (exit 1)" sh -c "[ $rc -eq 1 ] && grep -q -- '--json' '$tmp/err'"
run "$bin" match $det $M1 --json --shard 3/2
check "match --shard 3/2 is refused (exit 1)" sh -c "[ $rc -eq 1 ] && grep -q -- '--shard' '$tmp/err'"

finish cluster
