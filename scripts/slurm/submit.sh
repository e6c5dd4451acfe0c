#!/usr/bin/env bash
# Submits a cagerank run to SLURM: a job array that enumerates and scores the sizes into one
# catalogue per task, a merge job that starts when every task has succeeded
# (--dependency=afterok), and optionally an energy screen of the merged catalogue.
#
# Usage: scripts/slurm/submit.sh [--only K,K...] [--no-merge]
# Settings (environment variables; defaults in brackets):
#   SIZES       atom counts, e.g. "80" or "60..100" (required)
#   OUT         run directory on storage every node sees (required); tasks write
#               OUT/shards/task-K, the merge writes OUT/merged, the screen OUT/screen-cN.csv
#   TASKS       number of array tasks N [8]
#   THREADS     CPUs (threads) per task [1]
#   IPR         1 for the IPR list only [0]
#   CHARGE      cage charge Q [0]
#   FACES       face set: fullerene, 4-6, 4-5-6 or 5-6-7 [fullerene]
#   HEPTAGONS   heptagon bound, required with FACES=5-6-7
#   CAGERANK    the cagerank binary, a path every node can run [cagerank]
#   PARTITION   SLURM partition [the cluster's default]
#   TIME        time limit per task, SLURM format [the partition's default]
#   MEM         memory per task, e.g. 4G [the partition's default]
#   SCREEN      1 to queue the energy screen after the merge [0]
#   CANDIDATES  candidates the screen relaxes per size [100]
#   SCREEN_TIME time limit of the screen job [the partition's default]
# --only K,K... submits only those tasks of the same N-way split (to rerun failed ones) and
# a merge after them; --no-merge submits the array alone. Prints the job IDs.
set -euo pipefail
here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
only=""
merge=1
while [ $# -gt 0 ]; do
    case "$1" in
        --only) only="${2:?--only needs a list such as 3,5}"; shift 2 ;;
        --no-merge) merge=0; shift ;;
        -h|--help) sed -n '2,25p' "$0" | sed 's/^# \{0,1\}//'; exit 0 ;;
        *) echo "submit.sh: unknown argument '$1'; see --help" >&2; exit 2 ;;
    esac
done
: "${SIZES:?set SIZES, e.g. SIZES=80}" "${OUT:?set OUT, a run directory on shared storage}"
TASKS="${TASKS:-8}"
THREADS="${THREADS:-1}"
mkdir -p "$OUT/logs"
OUT=$(cd "$OUT" && pwd)
env_list="SIZES=$SIZES,TASKS=$TASKS,OUT=$OUT,IPR=${IPR:-0},CHARGE=${CHARGE:-0},CAGERANK=${CAGERANK:-cagerank}"
[ -n "${FACES:-}" ] && env_list+=",FACES=$FACES"
[ -n "${HEPTAGONS:-}" ] && env_list+=",HEPTAGONS=$HEPTAGONS"
common=(--parsable --chdir="$OUT/logs")
[ -n "${PARTITION:-}" ] && common+=(--partition="$PARTITION")
task_opts=(--cpus-per-task="$THREADS")
[ -n "${TIME:-}" ] && task_opts+=(--time="$TIME")
[ -n "${MEM:-}" ] && task_opts+=(--mem="$MEM")
array="${only:-1-$TASKS}"
# sbatch splits --export at commas, so a SIZES list uses spaces ("60 70"), never commas.
array_job=$(sbatch "${common[@]}" "${task_opts[@]}" --array="$array" \
    --export="ALL,$env_list" "$here/enumerate-array.sbatch")
echo "array $array_job (tasks $array of $TASKS)"
[ "$merge" = 1 ] || exit 0
merge_job=$(sbatch "${common[@]}" --dependency="afterok:$array_job" --kill-on-invalid-dep=yes \
    --export="ALL,$env_list,SCRIPTS=$here" "$here/merge.sbatch")
echo "merge $merge_job"
if [ "${SCREEN:-0}" = 1 ]; then
    screen_opts=(--cpus-per-task="$THREADS")
    [ -n "${SCREEN_TIME:-}" ] && screen_opts+=(--time="$SCREEN_TIME")
    screen_job=$(sbatch "${common[@]}" "${screen_opts[@]}" --dependency="afterok:$merge_job" \
        --kill-on-invalid-dep=yes --export="ALL,$env_list,CANDIDATES=${CANDIDATES:-100}" \
        "$here/screen.sbatch")
    echo "screen $screen_job"
fi
