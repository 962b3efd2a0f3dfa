#!/bin/bash
# One shard of a decohere sweep per Slurm array task. Submit N tasks, then one merge job that waits for all of them:
#
#   jid=$(sbatch --parsable --array=0-$((N-1)) --export=ALL,SHARDS=$N,OUT=$OUT,SCENARIO=$SCENARIO,VARY="$VARY",METRICS="$METRICS" tools/slurm/sweep-array.sh)
#   sbatch --dependency=afterok:$jid --wrap "decohere merge $OUT"
#
# Every task writes $OUT/part-K-of-N.parquet atomically; a requeued or restarted task continues from its finished
# chunks (--resume). Results do not depend on N: each point's seed follows from the scenario seed and the point index.
#SBATCH --job-name=decohere-sweep
#SBATCH --cpus-per-task=4
#SBATCH --time=01:00:00
#SBATCH --output=decohere-sweep-%A_%a.log
#SBATCH --requeue
set -euo pipefail

: "${SHARDS:?set SHARDS to the number of array tasks (the N of --array=0-(N-1))}"
: "${OUT:?set OUT to the output directory (shared by all tasks)}"
: "${SCENARIO:?set SCENARIO to the scenario file}"
: "${VARY:?set VARY to one or more --vary specifications separated by ';' (PATH=FROM:TO:COUNT[:log], PATH=FROM:TO:+STEP or PATH=v1,v2,...)}"
: "${SLURM_ARRAY_TASK_ID:?run this script as a Slurm job array (sbatch --array=0-(N-1))}"
DECOHERE=${DECOHERE:-decohere}

args=(sweep "$SCENARIO" --shard "$SLURM_ARRAY_TASK_ID/$SHARDS" --out "$OUT" --resume --quiet
      --threads "${SLURM_CPUS_PER_TASK:-1}")
IFS=';' read -r -a axes <<< "$VARY"
for axis in "${axes[@]}"; do args+=(--vary "$axis"); done
if [[ -n "${METRICS:-}" ]]; then args+=(--metrics "$METRICS"); fi
if [[ "${ZIP:-0}" == 1 ]]; then args+=(--zip); fi

exec $DECOHERE "${args[@]}"
