#!/bin/sh
# deps.sh — make sure the Debian packages epiwell builds against are present.
# As root: apt-get update, then install what is missing.  Otherwise: print the exact
# apt-get line and fail.  Usage: deps.sh [check|ci]   (check also wants the test runner and
# the picture renderers, and Debian's python3 with numpy and pytest for the Python package's
# tests and matplotlib for its example; ci also the leak checker and a single-node Slurm
# workload manager for tests/slurm_test.sh)
set -u
pkgs="gcc make pkg-config libsuperlu-dev libconfig-dev zlib1g-dev liblapack-dev liblapacke-dev libblas-dev libcairo2-dev"
case "${1:-}" in
check) pkgs="$pkgs libcmocka-dev librsvg2-bin chromium python3 python3-numpy python3-pytest python3-matplotlib" ;;
ci) pkgs="$pkgs libcmocka-dev librsvg2-bin chromium python3 python3-numpy python3-pytest python3-matplotlib valgrind slurm-wlm munge" ;;
esac
missing=""
for p in $pkgs; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing="$missing $p"
done
[ -z "$missing" ] && exit 0
if [ "$(id -u)" = 0 ]; then
  echo "epiwell: installing missing packages:$missing"
  apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends $missing && exit 0
  echo "epiwell: apt-get failed" >&2
  exit 1
fi
echo "epiwell: missing Debian packages. Run as root:" >&2
echo "  apt-get update && apt-get install -y$missing" >&2
exit 1
