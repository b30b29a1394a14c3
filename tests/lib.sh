# lib.sh — the machinery the shell suites share (POSIX sh, runs under dash).  A suite sources
# it first, before it changes directory:  . "$(dirname "$0")/lib.sh"
#
# Sourcing sets root (the project root), pins the catalogue with EPIWELL_MATERIALS=ROOT/materials
# (so that one discovery problem does not fail every check) and starts the pass/fail counters.
# The suite then calls use_binary and make_tmp, reports with ok/nok/skip, and ends with
# finish NAME.

# $0 is the sourcing suite, so its directory's parent is the root, whatever the caller's cwd
root=$(cd "$(dirname "$0")/.." && pwd) || exit 1
EPIWELL_MATERIALS=$root/materials
export EPIWELL_MATERIALS

pass=0
fail=0

# use_binary PATH: bin=PATH made absolute, so that it still runs after the suite changes directory
use_binary() {
  case $1 in
  /*) bin=$1 ;;
  *) bin=$(pwd)/$1 ;;
  esac
}

# make_tmp TAG MESSAGE: tmp=a fresh ${TMPDIR:-/tmp}/epiwell-TAG.XXXXXX, removed on any exit
# (an interrupt too); prints MESSAGE and exits 1 when it cannot be made.
make_tmp() {
  tmp=$(mktemp -d "${TMPDIR:-/tmp}/epiwell-$1.XXXXXX") || { echo "$2"; exit 1; }
  trap cleanup EXIT
  trap 'exit 1' INT TERM HUP
}
# cleanup: write permission back first, since checks make parts of $tmp unwritable
cleanup() { chmod -R u+w "$tmp" 2>/dev/null; rm -rf "$tmp"; }

# ok WHAT / nok WHAT [DETAIL...] / skip WHAT: one line per check; a failure's details go on
# "#" lines below it; a skipped check (cannot run here) is not counted
ok() { pass=$((pass + 1)); printf 'ok - %s\n' "$1"; }
nok() {
  fail=$((fail + 1))
  printf 'not ok - %s\n' "$1"
  shift
  for why in "$@"; do printf '#   %s\n' "$why"; done
}
skip() { printf 'skip - %s\n' "$1"; }

# run CMD...: stdout to $tmp/out, stderr to $tmp/err, exit status in $rc
run() {
  "$@" </dev/null >"$tmp/out" 2>"$tmp/err"
  rc=$?
}

# finish NAME: the summary line tests/run_all.sh reads ("NAME: N passed, M failed"), then
# exit 1 when anything failed
finish() {
  echo "$1: $pass passed, $fail failed"
  [ "$fail" -eq 0 ] || exit 1
  exit 0
}

# Checks of file permissions (unreadable files, read-only directories) mean nothing to root,
# which reads and writes anything.  unprivileged_setup: as root, find a way to run as the
# unprivileged user nobody:nogroup (setpriv or runuser, util-linux) and open $tmp to it (its
# files are test data); unpriv is then the command prefix, "" when not root (run directly).
# unpriv_ok=0 (with the reason in unpriv_why) when no way works: skip those checks.
# The project tree and the binary must be readable by that user: checked with --version.
unprivileged_setup() {
  unpriv=
  unpriv_ok=1
  unpriv_why=
  unpriv_owner=
  [ "$(id -u)" -ne 0 ] && return 0
  if command -v setpriv >/dev/null 2>&1 &&
    setpriv --reuid=nobody --regid=nogroup --clear-groups true 2>/dev/null; then
    unpriv="setpriv --reuid=nobody --regid=nogroup --clear-groups --"
  elif command -v runuser >/dev/null 2>&1 && runuser -u nobody -- true 2>/dev/null; then
    unpriv="runuser -u nobody --"
  else
    unpriv_ok=0
    unpriv_why="running as root, and neither setpriv nor runuser can switch to nobody"
    return 0
  fi
  unpriv_owner=nobody:nogroup
  chmod 755 "$tmp"
  # shellcheck disable=SC2086 # unpriv is a command prefix, split on purpose
  if ! $unpriv "$bin" --version >/dev/null 2>&1; then
    unpriv_ok=0
    unpriv_why="running as root, and nobody cannot run $bin (is the tree readable by others?)"
  fi
}
# own_unprivileged PATH...: hand PATH to the unprivileged user (as root), so that its mode
# bits, not its owner, decide what that user may do
own_unprivileged() { [ -z "$unpriv_owner" ] || chown "$unpriv_owner" "$@"; }
# run_unprivileged CMD...: run, as the unprivileged user
run_unprivileged() {
  # shellcheck disable=SC2086
  $unpriv "$@" </dev/null >"$tmp/out" 2>"$tmp/err"
  rc=$?
}
