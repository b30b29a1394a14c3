#!/bin/sh
# exports.sh BINARY — the shared library next to BINARY (BUILD/libepiwell.so.X.Y.Z) exports
# exactly the functions src/epiwell.h declares, each marked EW_API (and SuperLU's three
# allocation hooks); its soname is
# libepiwell.so.X with X = EW_VERSION_MAJOR and the two symlinks point down the chain.
# Last line: "exports: N passed, M failed".
set -u
. "$(dirname "$0")/lib.sh"
build=$(dirname "$1")
hdr="$root/src/epiwell.h"
make_tmp exports "exports: cannot make a temp dir"
major=$(sed -n 's/^#define EW_VERSION_MAJOR \([0-9]*\)$/\1/p' "$hdr")
minor=$(sed -n 's/^#define EW_VERSION_MINOR \([0-9]*\)$/\1/p' "$hdr")
patch=$(sed -n 's/^#define EW_VERSION_PATCH \([0-9]*\)$/\1/p' "$hdr")
so="$build/libepiwell.so.$major.$minor.$patch"
if [ -f "$so" ]; then ok "$so is built"; else nok "$so is built"; finish exports; fi

# Every function declaration starts in column 0 with its return type (comments and the
# struct members are indented, macros start with #): the header's own convention.
grep -E '^(EW_API )?[A-Za-z_][A-Za-z0-9_ ]*[ *]ew_[A-Za-z0-9_]+\(' "$hdr" >"$tmp/decl"
sed -E 's/^.*[ *](ew_[A-Za-z0-9_]+)\(.*$/\1/' "$tmp/decl" | sort -u >"$tmp/declared"
n=$(wc -l <"$tmp/declared")
if [ "$n" -ge 90 ]; then ok "epiwell.h declares $n functions"; else nok "epiwell.h declares $n functions (parser broken?)"; fi
unmarked=$(grep -v '^EW_API ' "$tmp/decl")
if [ -z "$unmarked" ]; then ok "every declaration in epiwell.h is marked EW_API"
else nok "every declaration in epiwell.h is marked EW_API" "$unmarked"; fi

nm -D --defined-only "$so" >"$tmp/nm" || nok "nm -D $so"
# and SuperLU's three hooks of superlu_adapter.c, which must replace libsuperlu.so's own
hooks="superlu_abort_and_exit superlu_free superlu_malloc"
awk '$2 == "T" { print $3 }' "$tmp/nm" | sed 's/@.*//' | sort -u >"$tmp/all"
for h in $hooks; do
  if grep -qx "$h" "$tmp/all"; then ok "SuperLU hook $h exported"; else nok "SuperLU hook $h exported"; fi
done
printf '%s\n' $hooks | grep -vxF -f - "$tmp/all" >"$tmp/exported"
if cmp -s "$tmp/declared" "$tmp/exported"; then
  ok "exported functions = declared functions ($n)"
else
  nok "exported functions = declared functions" \
    "declared, not exported: $(comm -23 "$tmp/declared" "$tmp/exported" | tr '\n' ' ')" \
    "exported, not declared: $(comm -13 "$tmp/declared" "$tmp/exported" | tr '\n' ' ')"
fi
# no data or other symbols: only the version node of src/libepiwell.map
other=$(awk '$2 != "T" { print $2 " " $3 }' "$tmp/nm" | grep -vx "A EPIWELL_$major")
if [ -z "$other" ]; then ok "no exported data or toolchain symbols"
else nok "no exported data or toolchain symbols" "$other"; fi

soname=$(readelf -d "$so" | sed -n 's/.*(SONAME).*\[\(.*\)\]/\1/p')
if [ "$soname" = "libepiwell.so.$major" ]; then ok "soname libepiwell.so.$major"
else nok "soname libepiwell.so.$major" "got '$soname'"; fi
if [ "$(readlink "$build/libepiwell.so.$major")" = "libepiwell.so.$major.$minor.$patch" ] &&
   [ "$(readlink "$build/libepiwell.so")" = "libepiwell.so.$major" ]; then
  ok "libepiwell.so -> libepiwell.so.$major -> libepiwell.so.$major.$minor.$patch"
else
  nok "libepiwell.so -> libepiwell.so.$major -> libepiwell.so.$major.$minor.$patch"
fi
undef=$(ldd -r "$so" 2>&1 | grep -i 'undefined symbol')
if [ -z "$undef" ]; then ok "no undefined symbols (ldd -r)"; else nok "no undefined symbols (ldd -r)" "$undef"; fi
finish exports
