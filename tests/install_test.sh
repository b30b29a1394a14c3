#!/bin/sh
# install_test.sh BINARY — `make install PREFIX=…` into a temporary prefix: every installed
# piece is there, a program built with `pkg-config --libs epiwell` links and solves, and the
# installed binary finds the installed catalogue.  Last line: "install: N passed, M failed".
set -u
. "$(dirname "$0")/lib.sh"
# make install and examples/ are relative to the root
cd "$root" || exit 1
make_tmp install "install: cannot make a temp dir"
prefix="$tmp/prefix"
# the plain build, whatever the calling make was asked for (make check SANITIZE=1 passes its
# variables down through MAKEFLAGS)
if env -u MAKEFLAGS -u MAKELEVEL make -s install SANITIZE=0 PREFIX="$prefix" >"$tmp/log" 2>&1; then ok "make install PREFIX=…"; else nok "make install PREFIX=…" "$(tail -3 "$tmp/log")"; fi
for f in bin/epiwell lib/libepiwell.a lib/libepiwell.so lib/libepiwell.so.1 include/epiwell.h lib/pkgconfig/epiwell.pc \
         share/man/man1/epiwell.1 share/epiwell/materials/GaAs.cfg share/epiwell/materials/AlGaAs.cfg; do
  if [ -s "$prefix/$f" ]; then ok "installed $f"; else nok "installed $f"; fi
done
cat >"$tmp/use.c" <<'C'
#include <epiwell.h>
#include <stdio.h>
int main(int argc, char **argv) {
  ew_catalogue *cat; ew_stack *st; ew_result *r; ew_error err;
  if (argc < 2 || ew_catalogue_load(NULL, &cat, &err) || ew_stack_read_file(argv[1], cat, &st, &err) ||
      ew_solve(st, NULL, &r, &err)) return 1;
  printf("%s %.6f\n", ew_result_state(r, 0)->label, ew_result_state(r, 0)->energy_eV);
  ew_result_free(r); ew_stack_free(st); ew_catalogue_free(cat);
  return 0;
}
C
if cc "$tmp/use.c" -o "$tmp/use" $(PKG_CONFIG_PATH="$prefix/lib/pkgconfig" pkg-config --cflags --libs epiwell) 2>"$tmp/cc"; then
  ok "a program links with pkg-config --libs epiwell"
else
  nok "a program links with pkg-config --libs epiwell" "$(head -3 "$tmp/cc")"
fi
# pkg-config --libs links the shared library: found through LD_LIBRARY_PATH for a prefix
# outside the loader's path; with no EPIWELL_MATERIALS the library finds the catalogue
# beside itself (PREFIX/lib/../share/epiwell/materials) wherever the program is
if [ -x "$tmp/use" ] && LD_LIBRARY_PATH="$prefix/lib" ldd "$tmp/use" 2>/dev/null | grep -q "libepiwell.so.1 => $prefix/lib/"; then
  ok "the linked program uses $prefix/lib/libepiwell.so.1"
else
  nok "the linked program uses $prefix/lib/libepiwell.so.1" "$(LD_LIBRARY_PATH="$prefix/lib" ldd "$tmp/use" 2>&1 | grep epiwell)"
fi
if [ -x "$tmp/use" ] && (cd "$tmp" && env -u EPIWELL_MATERIALS LD_LIBRARY_PATH="$prefix/lib" "$tmp/use" "$root/examples/detector_well.cfg") | grep -q '^e1 0\.7'; then
  ok "the linked program solves examples/detector_well.cfg (e1 near 0.77 eV), catalogue found beside the library"
else
  nok "the linked program solves examples/detector_well.cfg, catalogue found beside the library"
fi
# the archive with its dependencies named (README "Linking"; Debian's superlu.pc has a broken
# Libs.private, so `pkg-config --static` cannot be used)
if cc "$tmp/use.c" -o "$tmp/use_static" $(PKG_CONFIG_PATH="$prefix/lib/pkgconfig" pkg-config --cflags epiwell) \
     "$prefix/lib/libepiwell.a" $(pkg-config --libs superlu libconfig zlib) -lblas -lgomp -ldl -lm 2>"$tmp/cc" &&
   ! ldd "$tmp/use_static" | grep -q libepiwell &&
   EPIWELL_MATERIALS="$prefix/share/epiwell/materials" "$tmp/use_static" examples/detector_well.cfg | grep -q '^e1 0\.7'; then
  ok "the static archive still links (pkg-config --static) and solves"
else
  nok "the static archive still links (pkg-config --static) and solves" "$(head -3 "$tmp/cc")"
fi
if (cd "$tmp" && env -u EPIWELL_MATERIALS "$prefix/bin/epiwell" materials | grep -q "$prefix/bin/../share/epiwell/materials"); then
  ok "the installed binary finds the installed catalogue from any directory"
else
  nok "the installed binary finds the installed catalogue from any directory"
fi
# the Python package pip-installed into a virtual environment over the installed library
# (README "Python"): from a copy, so that pip's build files stay out of the tree; offline
# (--no-index, Debian's setuptools through --system-site-packages)
py=
for p in ${PYTHON:-} python3 /usr/bin/python3; do
  if "$p" -c 'import numpy, setuptools, venv' 2>/dev/null; then py=$p; break; fi
done
if [ -z "$py" ]; then
  nok "pip install src/python into a venv" "no python3 with numpy, setuptools and venv (make deps)"
elif cp -r src/python "$tmp/pysrc" && "$py" -m venv --system-site-packages "$tmp/venv" >"$tmp/venv.log" 2>&1 &&
     "$tmp/venv/bin/pip" install -q --no-index --no-build-isolation "$tmp/pysrc" >>"$tmp/venv.log" 2>&1 &&
     (cd "$tmp" && env -u EPIWELL_MATERIALS LD_LIBRARY_PATH="$prefix/lib" "$tmp/venv/bin/python" -c "
import epiwell, os
assert os.path.dirname(epiwell.__file__).startswith('$tmp/venv'), epiwell.__file__
assert '$prefix/lib/libepiwell.so.1' in open('/proc/self/maps').read()
r = epiwell.solve('$root/examples/detector_well.cfg')
sw = epiwell.sweep('$root/examples/detector_well.cfg', 'well.thickness=6:7:0.5', grid_step_nm=0.1)
assert len(sw) == 3 and sw['e1_eV'][0] > sw['e1_eV'][2]  # e1 falls as the well widens
print(epiwell.version(), r.states[0].label, '%.6f' % r.states[0].energy_eV)") >"$tmp/py.out" 2>>"$tmp/venv.log" &&
     grep -q "^$(sed -n 's/^#define EW_VERSION "\(.*\)"$/\1/p' src/epiwell.h) e1 0\.7" "$tmp/py.out"; then
  ok "pip install src/python into a venv: imports from the venv, loads $prefix/lib/libepiwell.so.1, solves, sweeps"
else
  nok "pip install src/python into a venv" "$(tail -3 "$tmp/venv.log")"
fi
finish install
