#!/bin/sh
# slurm_sweep.sh — one sweep spread over the tasks of a Slurm job array, then joined.
#
#   sbatch examples/slurm_sweep.sh                 # 8 tasks, one part each
#   sbatch --array=1-32 examples/slurm_sweep.sh    # more parts: nothing else changes
#   # when every task has finished (sbatch --wait, or a job with --dependency=afterok:ID):
#   epiwell merge parts/part-*.json > sweep.json
#   epiwell merge --vary "$VARY" parts/part-*.csv > sweep.csv
#
# Each task runs `epiwell sweep … --shard auto`, which takes its part K of N from the
# array's variables (SLURM_ARRAY_TASK_ID − SLURM_ARRAY_TASK_MIN + 1 of SLURM_ARRAY_TASK_COUNT),
# and writes its part as CSV (--csv) and JSON (standard output).  The merged files are byte
# for byte what one machine running the same sweep without --shard writes.  The task IDs
# must be consecutive (--array=MIN-MAX, no :STEP).  scancel sends SIGTERM: the task stops
# with exit 7 and leaves no part file, and `epiwell merge` then names the missing part.
#
# The design (an invented mid-infrared detector well) and the range come from the
# environment, with these defaults; sbatch passes the submitting shell's environment on.
#SBATCH --job-name=epiwell-sweep
#SBATCH --array=1-8
#SBATCH --cpus-per-task=1
#SBATCH --time=00:30:00
set -eu
EPIWELL=${EPIWELL:-epiwell}
STACK=${STACK:-examples/detector_well.cfg}
VARY=${VARY:-well.thickness=4:12:0.01}
OUT=${OUT:-parts}
mkdir -p "$OUT"
part=$OUT/part-$(printf '%04d' "$SLURM_ARRAY_TASK_ID")
# scancel signals this shell too: once epiwell has stopped (exit 7, its --csv part removed),
# remove the JSON part it was writing
trap 'rm -f "$part.json.tmp"; exit 143' TERM INT
# one thread per allocated CPU; the values do not depend on the thread count
"$EPIWELL" sweep "$STACK" --vary "$VARY" --shard auto --threads "${SLURM_CPUS_PER_TASK:-1}" \
  ${EPIWELL_SWEEP_ARGS:-} --csv "$part.csv" --json >"$part.json.tmp" ||
  { rc=$?; rm -f "$part.json.tmp"; exit $rc; }
mv "$part.json.tmp" "$part.json" # a killed task leaves no half-written JSON part behind
