#!/bin/sh
# slurm_match.sh — one match scan spread over the tasks of a Slurm job array, then joined.
#
#   sbatch examples/slurm_match.sh                 # 8 tasks, one part of the samples each
#   # when every task has finished (sbatch --wait, or a job with --dependency=afterok:ID):
#   epiwell merge match-parts/part-*.json > match.json
#
# Each task runs `epiwell match … --json --shard auto`: it samples only its part K of N of
# the range (K = SLURM_ARRAY_TASK_ID − SLURM_ARRAY_TASK_MIN + 1, N = SLURM_ARRAY_TASK_COUNT)
# and writes that part as one JSON line.  The merged file is byte for byte what
# `epiwell match … --json` writes on one machine.  Fine scans pay: --samples sets the
# points, spread over the tasks.  The task IDs must be consecutive (--array=MIN-MAX).
#
# The design (the invented mid-infrared detector well), the unknown, the line and the
# target come from the environment, with these defaults.
#SBATCH --job-name=epiwell-match
#SBATCH --array=1-8
#SBATCH --cpus-per-task=1
#SBATCH --time=00:30:00
set -eu
EPIWELL=${EPIWELL:-epiwell}
STACK=${STACK:-examples/detector_well.cfg}
VARY=${VARY:-well.thickness=3:12}
LINE=${LINE:-e1-e2}
TARGET=${TARGET:-9.0um}
OUT=${OUT:-match-parts}
mkdir -p "$OUT"
part=$OUT/part-$(printf '%04d' "$SLURM_ARRAY_TASK_ID")
trap 'rm -f "$part.json.tmp"; exit 143' TERM INT
"$EPIWELL" match "$STACK" --vary "$VARY" --line "$LINE" --target "$TARGET" --json --shard auto \
  --threads "${SLURM_CPUS_PER_TASK:-1}" ${EPIWELL_MATCH_ARGS:-} >"$part.json.tmp" ||
  { rc=$?; rm -f "$part.json.tmp"; exit $rc; }
mv "$part.json.tmp" "$part.json" # a killed task leaves no half-written part behind
