#!/bin/bash
# A Wayward campaign as a Slurm job array: array task K of N runs shard K/N into its own folder; a second job,
# started when every task has succeeded, merges the shards and writes the report.
#
#   mkdir -p campaign-out/logs
#   jid=$(sbatch --parsable scenarios/campaign-slurm.sh)
#   sbatch --dependency=afterok:$jid --output=campaign-out/logs/merge.log \
#          --wrap 'wayward merge campaign-out/shard-* --out campaign-out/merged'
#
# SPEC and OUT may be set in the environment (sbatch passes it on). A task stopped at its time limit (Slurm sends
# SIGTERM first) keeps every finished case; submitting the array again, or `scontrol requeue`, resumes each
# shard where it stopped. Change --array to 1-N for N shards: the shard count is read from Slurm.
#SBATCH --job-name=wayward-campaign
#SBATCH --array=1-4
#SBATCH --cpus-per-task=2
#SBATCH --mem-per-cpu=500M
#SBATCH --time=02:00:00
#SBATCH --output=campaign-out/logs/shard-%a.log
set -euo pipefail
SPEC=${SPEC:-scenarios/example-campaign.toml}
OUT=${OUT:-campaign-out}
K=${SLURM_ARRAY_TASK_ID:?run this with sbatch as a job array}
N=${SLURM_ARRAY_TASK_COUNT:-$SLURM_ARRAY_TASK_MAX}
exec wayward campaign "$SPEC" --out "$OUT/shard-$K" --shard "$K/$N" --threads "${SLURM_CPUS_PER_TASK:-1}"
