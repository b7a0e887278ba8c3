#!/usr/bin/env bash
# gainsay check over a Slurm job array: task i checks shard i of N.
#   sbatch --array=1-8 deploy/slurm-array.sh profile.yaml replies.jsonl out [check flags...]
#   then: gainsay merge --replies replies.jsonl -o out/out.jsonl out/shard-*.jsonl
# Flags after the three arguments go to every check (e.g. --model DIR); give merge the same --chunk.
#SBATCH --job-name=gainsay-check
#SBATCH --cpus-per-task=2
#SBATCH --mem=2G
#SBATCH --requeue
set -euo pipefail
profile=$1 replies=$2 out=$3
shift 3
n=${SLURM_ARRAY_TASK_COUNT:?run as a job array, e.g. --array=1-8}
k=${SLURM_ARRAY_TASK_ID:?}
mkdir -p "$out"
dest="$out/shard-$k.jsonl"
resume=()
if [ -e "$dest.partial" ] || [ -e "$dest" ]; then resume=(--resume); fi   # a requeued task continues
exec gainsay check --profile "$profile" --replies "$replies" --shard "$k/$n" --out "$dest" \
  --threads "${SLURM_CPUS_PER_TASK:-2}" "${resume[@]}" "$@"
