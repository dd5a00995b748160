#!/usr/bin/env bash
# Submits an array of N shard tasks and a merge job that runs only if every
# shard succeeded (afterok; with --kill-on-invalid-dep=yes a failed shard
# cancels the merge instead of leaving it pending for ever).
#
#   slurm-submit.sh N OUT [STUDY.yaml|DIR...]
#
# With no study, the embedded demo study. Prints "<array job id> <merge job id>". OUT and the studies must be on a
# file system every node sees. Environment:
#   SWEEPSTAT     the sweepstat binary the jobs run (default: sweepstat on PATH)
#   SHARD_CPUS    CPUs per shard task (default 1), its --workers
#   MERGE_CPUS    CPUs of the merge job (default 1); Sobol indices are solved there
#   LOGS          folder of the job logs (default OUT/slurm-logs)
#   SBATCH_EXTRA  more sbatch options for both jobs, e.g. "--partition=batch --mem=2G"
set -euo pipefail
if [ $# -lt 2 ]; then
  echo "usage: $0 N OUT [STUDY.yaml|DIR...]" >&2
  exit 2
fi
n=$1 out=$2
shift 2
case $n in ''|*[!0-9]*|0) echo "$0: N must be a whole number of shards, not '$n'" >&2; exit 2 ;; esac
here=$(cd "$(dirname "$0")" && pwd)
logs=${LOGS:-$out/slurm-logs}
mkdir -p "$out" "$logs"
# shellcheck disable=SC2206
extra=(${SBATCH_EXTRA:-})

array=$(sbatch --parsable "${extra[@]}" --array=1-"$n" --cpus-per-task="${SHARD_CPUS:-1}" \
  --output="$logs/shard-%A_%a.out" "$here/slurm-shards.sbatch" --out "$out" "$@")
array=${array%%;*} # --parsable prints "id" or "id;cluster"
merge=$(sbatch --parsable "${extra[@]}" --dependency=afterok:"$array" --kill-on-invalid-dep=yes \
  --cpus-per-task="${MERGE_CPUS:-1}" --output="$logs/merge-%j.out" "$here/slurm-merge.sbatch" "$out")
merge=${merge%%;*}
echo "$array $merge"
