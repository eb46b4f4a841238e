#!/bin/bash
# Joins the shards of slurm-sweep.sh into sweep.csv, in grid order: the
# same bytes as the sweep run in one piece. Submit it to start after the
# array job (sbatch --dependency=afterok:JOBID slurm-merge.sh).
#SBATCH --job-name=falls-merge
#SBATCH --time=00:05:00
set -eu
status=0
enough merge shards/shard-*.jsonl -f csv -o sweep.csv || status=$?
[ "$status" -eq 0 ] || [ "$status" -eq 6 ]
