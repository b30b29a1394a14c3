#!/bin/sh
# python.sh BINARY — the Python package of BUILD/python (`make python`) under pytest:
# tests/test_python*.py from a directory outside the tree (so only PYTHONPATH finds the
# package).  The interpreter: $PYTHON, else the first of python3 and /usr/bin/python3 that
# has numpy and pytest (Debian's python3-numpy, python3-pytest: .ci/deps.sh).  Under
# SANITIZE=1 the library needs the sanitizer runtimes preloaded.  Last line:
# "python: N passed, M failed".
set -u
. "$(dirname "$0")/lib.sh"
use_binary "$1"
build=$(dirname "$bin")
make_tmp python "python: cannot make a temp dir"
# no __pycache__ in the tree (the test modules are imported from tests/)
PYTHONDONTWRITEBYTECODE=1
export PYTHONDONTWRITEBYTECODE
py=
for p in ${PYTHON:-} python3 /usr/bin/python3; do
  if "$p" -c 'import numpy, pytest' 2>/dev/null; then py=$p; break; fi
done
if [ -z "$py" ]; then nok "a python3 with numpy and pytest (run make deps)"; finish python; fi
pre=
asan=${ASAN_OPTIONS:-}
if ldd "$build/libepiwell.so" | grep -q libasan; then
  # the interpreter is not instrumented: preload the runtimes, and leave leak checking to the
  # RSS test (the interpreter's own allocations at exit are not ours), which needs freed
  # memory reused at once (no quarantine)
  pre="$(${CC:-cc} -print-file-name=libasan.so) $(${CC:-cc} -print-file-name=libubsan.so)"
  asan="detect_leaks=0:quarantine_size_mb=0${asan:+:$asan}"
fi
if (cd "$tmp" && PYTHONPATH="$build/python" EPIWELL_BIN="$bin" LD_PRELOAD="$pre" \
      ASAN_OPTIONS="$asan" "$py" -c 'import epiwell' ); then
  ok "PYTHONPATH=$build/python $py -c 'import epiwell' from $tmp"
else
  nok "PYTHONPATH=$build/python $py -c 'import epiwell' from $tmp"
fi
# loaded into an interpreter, libsuperlu.so must call the library's allocation and abort hooks
# (superlu_adapter.c), or an out-of-memory inside SuperLU would end the script
(cd "$tmp" && PYTHONPATH="$build/python" LD_PRELOAD="$pre" ASAN_OPTIONS="$asan" \
   LD_DEBUG=bindings "$py" -c "import epiwell; epiwell.solve('$root/examples/detector_well.cfg')") \
  >/dev/null 2>"$tmp/bind"
for h in superlu_malloc superlu_abort_and_exit; do
  if grep -q "libsuperlu.* to .*libepiwell\.so.*symbol \`$h'" "$tmp/bind"; then
    ok "in a Python process libsuperlu calls $h of libepiwell.so"
  else
    nok "in a Python process libsuperlu calls $h of libepiwell.so" "$(grep "$h" "$tmp/bind" | head -2)"
  fi
done
(cd "$tmp" && PYTHONPATH="$build/python" EPIWELL_BIN="$bin" LD_PRELOAD="$pre" \
   ASAN_OPTIONS="$asan" "$py" -m pytest -q -p no:cacheprovider "$root"/tests/test_python*.py) \
  >"$tmp/log" 2>&1
cat "$tmp/log"
# pytest's last line: "N failed, M passed, K errors in …s" (parts absent when 0)
last=$(grep -E ' in [0-9.]+s' "$tmp/log" | tail -n 1)
p=$(printf '%s\n' "$last" | sed -En 's/(^|.* )([0-9]+) passed.*/\2/p')
f=$(printf '%s\n' "$last" | sed -En 's/(^|.* )([0-9]+) failed.*/\2/p')
e=$(printf '%s\n' "$last" | sed -En 's/(^|.* )([0-9]+) errors?.*/\2/p')
pass=$((pass + ${p:-0})); fail=$((fail + ${f:-0} + ${e:-0}))
[ -z "$p" ] && [ -z "$f" ] && { fail=$((fail + 1)); echo "python: pytest gave no summary"; }
finish python
