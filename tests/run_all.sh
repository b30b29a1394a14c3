#!/bin/sh
# run_all.sh BUILD — run every test program and the CLI checks; the last line is the total.
build=${1:-build}
# a known leak inside libconfig on syntax errors (not ours): see tests/lsan.supp
LSAN_OPTIONS="suppressions=$(pwd)/tests/lsan.supp${LSAN_OPTIONS:+:$LSAN_OPTIONS}"
export LSAN_OPTIONS
pass=0; fail=0
for t in "$build"/tests/test_*; do
  [ -x "$t" ] || continue
  out=$("$t" 2>&1); rc=$?
  printf '%s\n' "$out"
  p=$(printf '%s\n' "$out" | sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' | tail -n 1)
  f=$(printf '%s\n' "$out" | sed -n 's/^\[  FAILED  \] \([0-9]*\) test.*/\1/p' | tail -n 1)
  pass=$((pass + ${p:-0})); fail=$((fail + ${f:-0}))
  if [ "$rc" -ne 0 ] && [ -z "$f" ]; then fail=$((fail + 1)); echo "$t exited $rc"; fi
done
if [ -f tests/cli_test.sh ]; then
  out=$(sh tests/cli_test.sh "$build/epiwell" 2>&1); rc=$?
  printf '%s\n' "$out"
  p=$(printf '%s\n' "$out" | sed -n 's/^cli: \([0-9]*\) passed, \([0-9]*\) failed$/\1/p')
  f=$(printf '%s\n' "$out" | sed -n 's/^cli: \([0-9]*\) passed, \([0-9]*\) failed$/\2/p')
  pass=$((pass + ${p:-0})); fail=$((fail + ${f:-1}))
fi
# other shell suites: each ends with a line "NAME: N passed, M failed"
for suite in tests/exports.sh tests/python.sh tests/plot_render.sh tests/workflow_cli.sh \
  tests/robust_cli.sh tests/atomic_cli.sh tests/install_test.sh tests/practitioner_cli.sh \
  tests/cluster_cli.sh tests/slurm_test.sh tests/kp_cli.sh tests/minibands_cli.sh tests/gain_cli.sh \
  tests/hole_absorption_cli.sh tests/hole_dos_cli.sh tests/threads_tsan.sh; do
  [ -f "$suite" ] || continue
  out=$(sh "$suite" "$build/epiwell" 2>&1); rc=$?
  printf '%s\n' "$out"
  last=$(printf '%s\n' "$out" | tail -n 1)
  p=$(printf '%s\n' "$last" | sed -n 's/^[a-z_]*: \([0-9]*\) passed, \([0-9]*\) failed$/\1/p')
  f=$(printf '%s\n' "$last" | sed -n 's/^[a-z_]*: \([0-9]*\) passed, \([0-9]*\) failed$/\2/p')
  if [ -z "$p" ]; then p=0; f=1; echo "$suite: no summary line (exit $rc)"; fi
  [ "$rc" -ne 0 ] && [ "${f:-0}" -eq 0 ] && f=1
  pass=$((pass + p)); fail=$((fail + f))
done
echo "$pass passed, $fail failed"
[ "$fail" -eq 0 ]
