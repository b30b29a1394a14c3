#!/bin/sh
# threads_tsan.sh BINARY — ThreadSanitizer over the helper threads of a single solve
# (src/helper_thread.h: the catalogue's files, the bands of each pass, the Kane levels' tasks,
# the exciton lines, the continuum's energies).  The library is built with -fsanitize=thread
# into build/tsan (objects of its own), and tests/threads_drive.c solves and writes the demo
# well, the doped detector, a wide Kane well (tests/data/wide_kane_well.cfg) and the
# bound-to-continuum detector on two threads (the wide well on three too); a data race (TSan's
# report and exit code) fails.
# Skipped where no ThreadSanitizer program can be built or started.  The OpenMP workflows
# (sweeps) are not driven here: libgomp is not instrumented.  BINARY only names the suite's
# caller.  Last line: "threads_tsan: N passed, M failed".
set -u
. "$(dirname "$0")/lib.sh"
make_tmp threads_tsan "threads_tsan: cannot make a temp dir"
cc=${CC:-cc}
printf '%s\n' '#include <pthread.h>' 'static void *f(void *a) { return a; }' \
  'int main(void) { pthread_t t; pthread_create(&t, 0, f, 0); return pthread_join(t, 0); }' \
  >"$tmp/t.c"
if ! "$cc" -fsanitize=thread "$tmp/t.c" -o "$tmp/t" 2>/dev/null || ! "$tmp/t" 2>/dev/null; then
  skip "ThreadSanitizer: cannot build or start a TSan program with $cc here"
  finish threads_tsan
fi
if make -C "$root" --no-print-directory CC="$cc" BUILD=build/tsan \
  OPT='-O1 -fsanitize=thread -fno-omit-frame-pointer' build/tsan/threads_drive >"$tmp/make" 2>&1
then ok "library and tests/threads_drive.c built with -fsanitize=thread"
else
  nok "library and tests/threads_drive.c built with -fsanitize=thread" "$(tail -n 5 "$tmp/make")"
  finish threads_tsan
fi
# threads: 2, and 3 for the wide well (two threads out of bands serve its tasks at once)
for run in 2:examples/detector_well.cfg 2:examples/doped_detector.cfg \
  2:tests/data/wide_kane_well.cfg 3:tests/data/wide_kane_well.cfg 2:examples/btc_detector.cfg; do
  nt=${run%%:*} s=${run#*:}
  (cd "$root" && TSAN_OPTIONS="halt_on_error=1 exitcode=66" OMP_NUM_THREADS=$nt \
    build/tsan/threads_drive "$s") >"$tmp/out" 2>"$tmp/err"
  rc=$?
  if [ "$rc" -eq 0 ] && ! grep -q "ThreadSanitizer" "$tmp/err"; then
    ok "$s on $nt threads: no data race ($(cat "$tmp/out"))"
  else nok "$s on $nt threads: no data race (exit $rc)" "$(head -n 12 "$tmp/err")"; fi
done
finish threads_tsan
