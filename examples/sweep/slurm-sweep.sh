#!/bin/bash
# A sharded sweep on a Slurm cluster: each task of the array computes one
# shard of the grid (enough sweep --shard auto reads SLURM_ARRAY_TASK_ID,
# SLURM_ARRAY_TASK_MIN and SLURM_ARRAY_TASK_COUNT), and slurm-merge.sh joins
# the shards once every task has finished. From the directory holding
# falls-visits.yaml:
#
#   jobid=$(sbatch --parsable slurm-sweep.sh)
#   sbatch --dependency=afterok:"$jobid" slurm-merge.sh
#
# The array's indices must run by 1 (--array=1-4, or 0-3; a %N limit on
# running tasks is fine): enough refuses a step.
#SBATCH --job-name=falls-sweep
#SBATCH --array=1-4
#SBATCH --cpus-per-task=4
#SBATCH --time=00:30:00
set -eu
mkdir -p shards
# Exit status 6 means some points could not be planned: their rows say why,
# and the shard is complete.
status=0
enough sweep falls-visits.yaml \
  --vary control_risk=0.2:0.4:0.05 \
  --vary risk_ratio=0.6,0.7,0.75,0.8 \
  --workers "${SLURM_CPUS_PER_TASK:-0}" --quiet \
  --shard auto -o "shards/shard-${SLURM_ARRAY_TASK_ID}.jsonl" || status=$?
[ "$status" -eq 0 ] || [ "$status" -eq 6 ]
