#!/bin/sh
# public_includes.sh — the command is a client of the public API (issue 11): every CLI source
# (src/cli*.c, src/cli*.h) includes no project header but epiwell.h and cli_common.h, compiles
# with only those two headers beside it, and calls no ew_ function that epiwell.h or
# cli_common.h does not declare (a hand-written prototype of an internal one).  Prints one
# "ok - WHAT" / "not ok - WHAT" line per check and ends with "public_includes: N passed, M
# failed"; exits 1 when M > 0.  Run from the project root; CC as for the build.
set -u
cd "$(dirname "$0")/.." || exit 1
pass=0; fail=0
ok() { pass=$((pass + 1)); echo "ok - $1"; }
nok() { fail=$((fail + 1)); echo "not ok - $1"; [ -n "${2:-}" ] && echo "  $2"; }
srcs=$(ls src/cli*.c src/cli*.h)
allowed='epiwell.h cli_common.h'

for f in $srcs; do
  bad=$(sed -n 's/^[[:space:]]*#[[:space:]]*include[[:space:]]*"\([^"]*\)".*/\1/p' "$f" |
        while read -r h; do case " $allowed " in *" $h "*) ;; *) printf '%s ' "$h" ;; esac; done)
  if [ -z "$bad" ]; then ok "$f includes only public headers"
  else nok "$f includes only public headers" "non-public: $bad"; fi
done

# the public-API test uses epiwell.h alone too
bad=$(sed -n 's/^[[:space:]]*#[[:space:]]*include[[:space:]]*"\([^"]*\)".*/\1/p' tests/test_public_api.c | grep -vx epiwell.h)
if [ -z "$bad" ]; then ok "tests/test_public_api.c includes only epiwell.h"
else nok "tests/test_public_api.c includes only epiwell.h" "non-public: $bad"; fi

tmp=$(mktemp -d "${TMPDIR:-/tmp}/epiwell-inc.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
cp src/epiwell.h $srcs "$tmp"/
for f in src/cli*.c; do
  b=$(basename "$f")
  if ${CC:-cc} -std=c11 -D_POSIX_C_SOURCE=200809L -fsyntax-only -I"$tmp" "$tmp/$b" 2>"$tmp/err"; then
    ok "$f compiles with epiwell.h and cli_common.h alone"
  else nok "$f compiles with epiwell.h and cli_common.h alone" "$(head -n 3 "$tmp/err" | tr '\n' '|')"; fi
done

# every ew_NAME( called or declared in a CLI source is declared by a public header
sed -e 's://.*$::' src/epiwell.h src/cli_common.h >"$tmp/public.h"
for f in $srcs; do
  missing=''
  for id in $(grep -o '\bew_[a-z0-9_]*[[:space:]]*(' "$f" | tr -d ' (' | sort -u); do
    grep -q "[^a-z0-9_]$id[[:space:]]*(" "$tmp/public.h" || missing="$missing $id"
  done
  if [ -z "$missing" ]; then ok "$f calls only public ew_ functions"
  else nok "$f calls only public ew_ functions" "not in epiwell.h:$missing"; fi
done
echo "public_includes: $pass passed, $fail failed"
[ "$fail" -eq 0 ]
