#!/usr/bin/env bash
# Run a stormcharge sweep as a Slurm job array: one array task per shard.
#
#   sbatch --array=1-8 tools/slurm_sweep.sh configs/sweep_schemes.toml sweep_out
#
# Arguments after OUTDIR go to `stormcharge sweep` unchanged, e.g.
# `--outcomes-only` for a large ensemble (no member files) or `--resume`.
#
# Each task runs `stormcharge sweep --shard K/N` with K the array task and N
# the array size, on the cores Slurm gives it. When every task has finished:
#
#   stormcharge sweep-merge sweep_out
#
# joins the shard summaries into sweep_out/summary.csv.
# Adapt the #SBATCH lines to your cluster (partition, account, time).
#SBATCH --job-name=stormcharge-sweep
#SBATCH --cpus-per-task=4
#SBATCH --time=01:00:00
#SBATCH --output=stormcharge-sweep-%A_%a.log
set -euo pipefail

config=${1:?usage: sbatch --array=1-N slurm_sweep.sh CONFIG OUTDIR}
outdir=${2:?usage: sbatch --array=1-N slurm_sweep.sh CONFIG OUTDIR}
k=${SLURM_ARRAY_TASK_ID:?run this with sbatch --array}
n=${SLURM_ARRAY_TASK_COUNT:?run this with sbatch --array}
threads=${SLURM_CPUS_PER_TASK:-0}

shift 2
stormcharge sweep "$config" -o "$outdir" --shard "$k/$n" --threads "$threads" --quiet "$@"
