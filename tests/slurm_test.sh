#!/bin/sh
# slurm_test.sh [BINARY] — examples/slurm_sweep.sh and slurm_match.sh through a real Slurm workload manager: a
# single-node cluster on localhost (Debian's slurm-wlm and munge, daemons started as root,
# configuration, keys, state and logs in $EPIWELL_SLURM_DIR, default /tmp/cluster-slurm),
# the job array submitted with sbatch, the parts joined with `epiwell merge` and compared byte
# for byte with the same sweep run on this machine without --shard (the reference), then an
# array cancelled with scancel while its tasks run (they stop with the cancel code and leave
# no part file).  The daemons are stopped at the end, whatever happened.
#
# Where Slurm cannot run (not root, packages missing, a daemon that does not start) the test
# says why; under CI (EPIWELL_CI or CI set, as .ci/run does) that is a failure, elsewhere a
# skip.  Last line "slurm: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
sd=${EPIWELL_SLURM_DIR:-/tmp/cluster-slurm}
in_ci=${EPIWELL_CI:-${CI:-}}
[ "$in_ci" = false ] && in_ci=

# cannot WHY: Slurm cannot run here: a failure under CI, a skip elsewhere; then the summary
cannot() {
  if [ -n "$in_ci" ]; then nok "a single-node Slurm on localhost" "$1"
  else skip "a single-node Slurm on localhost: $1 (a failure under CI)"; fi
  finish slurm
}

[ "$(id -u)" -eq 0 ] || cannot "the daemons need root (run make check as root)"
for c in munged munge slurmctld slurmd sbatch scontrol sinfo scancel; do
  command -v $c >/dev/null 2>&1 || cannot "$c is missing: apt-get install slurm-wlm munge (.ci/deps.sh ci)"
done

# ---- the daemons ----------------------------------------------------------------------
# Only what this test started is stopped, by the PIDs it recorded.
stop_daemons() {
  [ -f "$sd/slurm.conf" ] && SLURM_CONF=$sd/slurm.conf scontrol shutdown >/dev/null 2>&1
  for f in slurmd slurmctld munge/munged; do
    [ -s "$sd/$f.pid" ] || continue
    p=$(cat "$sd/$f.pid")
    i=0
    while kill -0 "$p" 2>/dev/null && [ $i -lt 50 ]; do
      [ $i -eq 20 ] && kill "$p" 2>/dev/null
      sleep 0.1
      i=$((i + 1))
    done
    kill -0 "$p" 2>/dev/null && kill -9 "$p" 2>/dev/null
    rm -f "$sd/$f.pid"
  done
}
on_exit() { stop_daemons; }
trap on_exit EXIT
trap 'exit 1' INT TERM HUP

stop_daemons # a previous run killed before its end
rm -rf "$sd"
mkdir -p "$sd/munge" "$sd/state" "$sd/spool" "$sd/log" "$sd/work" || cannot "cannot make $sd"
chmod 700 "$sd" "$sd/munge"
chmod 755 "$sd/work"
dd if=/dev/urandom of="$sd/munge/munge.key" bs=1024 count=1 2>/dev/null && chmod 400 "$sd/munge/munge.key"
sock=$sd/munge/munge.socket
munged -f --key-file="$sd/munge/munge.key" --socket="$sock" --pid-file="$sd/munge/munged.pid" \
  --log-file="$sd/munge/munged.log" --seed-file="$sd/munge/munged.seed" 2>"$sd/log/munged.err" ||
  cannot "munged did not start: $(cat "$sd/log/munged.err" "$sd/munge/munged.log" 2>/dev/null | tail -n 3 | tr '\n' '|')"
munge -n -S "$sock" | unmunge -S "$sock" >/dev/null 2>&1 || cannot "munge cannot encode and decode a credential"

host=$(hostname -s 2>/dev/null || uname -n)
port=$((16800 + $$ % 100 * 2)) # two ports, away from the default 6817/6818
cat >"$sd/slurm.conf" <<EOF
ClusterName=epiwelltest
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=$port
SlurmdPort=$((port + 1))
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$sock
CredType=cred/munge
StateSaveLocation=$sd/state
SlurmdSpoolDir=$sd/spool
SlurmctldPidFile=$sd/slurmctld.pid
SlurmdPidFile=$sd/slurmd.pid
SlurmctldLogFile=$sd/log/slurmctld.log
SlurmdLogFile=$sd/log/slurmd.log
PlugStackConfig=$sd/plugstack.conf
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SwitchType=switch/none
MpiDefault=none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
ReturnToService=2
KillWait=2
MinJobAge=300
NodeName=$host NodeAddr=127.0.0.1 CPUs=$(nproc) State=UNKNOWN
PartitionName=test Nodes=$host Default=YES MaxTime=INFINITE State=UP
EOF
: >"$sd/plugstack.conf"
SLURM_CONF=$sd/slurm.conf
export SLURM_CONF
daemon_log() { tail -n 4 "$sd/log/$1.log" 2>/dev/null | tr '\n' '|'; }
slurmctld -f "$SLURM_CONF" >"$sd/log/ctld.err" 2>&1 || cannot "slurmctld did not start: $(daemon_log slurmctld)"
slurmd -f "$SLURM_CONF" -N "$host" >"$sd/log/d.err" 2>&1 || cannot "slurmd did not start: $(daemon_log slurmd)"
i=0
until [ "$(sinfo -h -n "$host" -o %t 2>/dev/null)" = idle ]; do
  i=$((i + 1))
  [ $i -gt 150 ] && cannot "the node did not come up within 15 s: $(daemon_log slurmctld) $(daemon_log slurmd)"
  sleep 0.1
done
ok "single-node Slurm on localhost up (slurmctld, slurmd, munged in $sd)"

# ---- the job array: the example script, 3 tasks ---------------------------------------
cp "$bin" "$sd/work/epiwell"
mkdir -p "$sd/work/examples" && cp examples/detector_well.cfg "$sd/work/examples/"
V=well.thickness=4:8:0.05 # 81 points: a few seconds of sweep in all
# the job runs in $sd/work with the test's environment (EPIWELL_MATERIALS, sanitizer options)
if (cd "$sd/work" && EPIWELL="$sd/work/epiwell" VARY=$V EPIWELL_SWEEP_ARGS="--grid-step 0.1" \
    timeout 120 sbatch --wait --array=1-3 --cpus-per-task=1 --time=5 --export=ALL \
      "$root/examples/slurm_sweep.sh" >"$sd/log/sbatch.out" 2>&1); then
  ok "sbatch --array=1-3 examples/slurm_sweep.sh: every task exit 0"
else
  nok "sbatch --array=1-3 examples/slurm_sweep.sh: every task exit 0" \
    "$(cat "$sd/log/sbatch.out" "$sd"/work/slurm-*.out 2>/dev/null | tail -n 6 | tr '\n' '|')"
fi
W=$sd/work
(cd "$W" && ./epiwell sweep examples/detector_well.cfg --vary "$V" --grid-step 0.1 >one.csv &&
  ./epiwell sweep examples/detector_well.cfg --vary "$V" --grid-step 0.1 --json >one.json)
n=$(ls "$W"/parts/part-*.json 2>/dev/null | wc -l)
if [ "$n" -eq 3 ] && grep -q '"shard":{"k":2,"n":3,"first":27,"count":27}' "$W/parts/part-0002.json"; then
  ok "three parts; task 2 computed part 2 of 3, points 27..53 (--shard auto)"
else
  nok "three parts; task 2 computed part 2 of 3, points 27..53 (--shard auto)" "$(ls "$W/parts" 2>&1 | tr '\n' ' ')"
fi
if (cd "$W" && ./epiwell merge parts/part-*.json >merged.json) && cmp -s "$W/merged.json" "$W/one.json"; then
  ok "epiwell merge of the array's JSON parts = the one-machine sweep, byte for byte"
else
  nok "epiwell merge of the array's JSON parts = the one-machine sweep, byte for byte" "$(cmp "$W/merged.json" "$W/one.json" 2>&1)"
fi
if (cd "$W" && ./epiwell merge --vary "$V" parts/part-*.csv >merged.csv) && cmp -s "$W/merged.csv" "$W/one.csv"; then
  ok "epiwell merge of the array's CSV parts = the one-machine sweep, byte for byte"
else
  nok "epiwell merge of the array's CSV parts = the one-machine sweep, byte for byte" "$(cmp "$W/merged.csv" "$W/one.csv" 2>&1)"
fi

# ---- a match scan over the array: examples/slurm_match.sh, 3 tasks --------------------
MA="--grid-step 0.1 --samples 61"
if (cd "$W" && EPIWELL="$W/epiwell" VARY=well.thickness=3:12 LINE=e1-e2 TARGET=9.0um \
    EPIWELL_MATCH_ARGS="$MA" timeout 120 sbatch --wait --array=1-3 --cpus-per-task=1 --time=5 \
      --export=ALL "$root/examples/slurm_match.sh" >"$sd/log/sbatch-m.out" 2>&1) &&
  (cd "$W" && ./epiwell match examples/detector_well.cfg --vary well.thickness=3:12 --line e1-e2 \
    --target 9.0um --json $MA >one-match.json && ./epiwell merge match-parts/part-*.json >merged-match.json) &&
  cmp -s "$W/merged-match.json" "$W/one-match.json" && grep -q '"value":6.4' "$W/one-match.json"; then
  ok "sbatch --array=1-3 examples/slurm_match.sh, merged = the one-machine match --json, byte for byte"
else
  nok "sbatch --array=1-3 examples/slurm_match.sh, merged = the one-machine match --json, byte for byte" \
    "$(cat "$sd/log/sbatch-m.out" "$W"/slurm-*.out 2>/dev/null | tail -n 6 | tr '\n' '|')"
fi

# ---- scancel: SIGTERM to a running task -----------------------------------------------
rm -rf "$W/parts"
id=$(cd "$W" && EPIWELL="$W/epiwell" VARY=well.thickness=4:12:0.001 EPIWELL_SWEEP_ARGS="--grid-step 0.1" \
  sbatch --parsable --array=1-2 --cpus-per-task=1 --time=5 --export=ALL "$root/examples/slurm_sweep.sh" 2>"$sd/log/sbatch2.err")
i=0
until [ "$(timeout 5 squeue -h -j "${id%%;*}" -t R -o %i 2>/dev/null | wc -l)" -ge 1 ] && [ -e "$W/parts" ]; do
  i=$((i + 1))
  [ $i -gt 100 ] && break
  sleep 0.1
done
sleep 1
scancel "${id%%;*}" 2>/dev/null
i=0
while [ -n "$(timeout 5 squeue -h -j "${id%%;*}" 2>/dev/null)" ] && [ $i -lt 150 ]; do
  sleep 0.1
  i=$((i + 1))
done
if [ -n "$id" ] && [ -z "$(ls "$W"/parts/part-*.csv "$W"/parts/part-*.json "$W"/parts/*.tmp 2>/dev/null)" ] &&
  grep -q "cancelled" "$W"/slurm-"${id%%;*}"_*.out 2>/dev/null; then
  ok "scancel: the running tasks stop (SIGTERM: cancelled) and leave no part file"
else
  nok "scancel: the running tasks stop (SIGTERM: cancelled) and leave no part file" \
    "job $id; parts: $(ls -A "$W/parts" 2>&1 | tr '\n' ' '); $(cat "$W"/slurm-"${id%%;*}"_*.out 2>/dev/null | tr '\n' '|')"
fi
stop_daemons
if [ -z "$(ls "$sd"/*.pid "$sd"/munge/*.pid 2>/dev/null)" ]; then ok "daemons stopped"; else nok "daemons stopped"; fi
finish slurm
