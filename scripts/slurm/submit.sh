#!/usr/bin/env bash
# Run a popdecode analysis on a SLURM cluster in N parts (one job array, part.sbatch) and join them into the
# result when every part has succeeded (combine.sbatch, submitted with --dependency=afterok on the array).
#
#   scripts/slurm/submit.sh N OUT [SBATCH OPTIONS...] -- ANALYSIS...
#
#   N        parts (array tasks); each runs about 1/N of the analysis's tasks. See README, "On a cluster".
#   OUT      folder for the parts, logs (OUT/logs/) and the result: OUT/result.json, OUT/result.txt, OUT/figures/
#   SBATCH OPTIONS  given to both jobs, overriding the scripts' #SBATCH lines: --time, --mem, --cpus-per-task
#            for each part, and what your cluster asks for (--partition, --account).
#   ANALYSIS popdecode's arguments as for a single run, without --part, --json or --plots.
#
# Example:
#   POPDECODE=$HOME/bin/popdecode scripts/slurm/submit.sh 20 runs/odours --time=0:30:00 --mem=2G -- \
#     timecourse --events spikes.csv --trials trials.csv --label odour --start -0.5 --end 1 --generalize \
#     --shuffles 1000
#
# Running it again with the same arguments submits only the parts that have no file in OUT yet (after a part hit
# its time limit or its node was preempted), then the combine step; nothing else is computed again.
set -euo pipefail
usage="usage: $0 N OUT [SBATCH OPTIONS...] -- ANALYSIS..."
[ $# -ge 3 ] || { echo "$usage" >&2; exit 2; }
n=$1
out=$2
shift 2
[[ $n =~ ^[1-9][0-9]*$ ]] || { echo "N must be a whole number of parts, not '$n'" >&2; exit 2; }
sbatch_options=()
while [ $# -gt 0 ] && [ "$1" != "--" ]; do sbatch_options+=("$1"); shift; done
[ $# -gt 1 ] || { echo "$usage" >&2; exit 2; }
shift
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$out/logs"
out=$(cd "$out" && pwd)

# The analysis is recorded so that a second submission into OUT can only resume the same one.
printf '%s\n' "$n" "$@" > "$out/logs/analysis.new"
if [ -e "$out/logs/analysis" ] && ! cmp -s "$out/logs/analysis" "$out/logs/analysis.new"; then
  rm "$out/logs/analysis.new"
  echo "$out holds parts of another analysis (see $out/logs/analysis); choose another folder" >&2
  exit 2
fi
mv "$out/logs/analysis.new" "$out/logs/analysis"

missing=()
for k in $(seq 1 "$n"); do [ -e "$out/part-$k-of-$n.json" ] || missing+=("$k"); done
after=()
if [ ${#missing[@]} -gt 0 ]; then
  list=$(IFS=,; echo "${missing[*]}")
  array=$(sbatch --parsable --array="$list" --output="$out/logs/part-%a.log" "${sbatch_options[@]}" \
    "$here/part.sbatch" "$out" "$n" "$@")
  array=${array%%;*}
  # A part that fails cancels the combine step instead of leaving it waiting forever.
  after=(--dependency="afterok:$array" --kill-on-invalid-dep=yes)
  echo "parts: job array $array (parts $list of $n)"
fi
combine=$(sbatch --parsable "${after[@]}" --output="$out/logs/combine.log" "${sbatch_options[@]}" \
  "$here/combine.sbatch" "$out" "$n")
echo "combine: job ${combine%%;*}"
echo "follow with: squeue -u \"\$USER\"; when done: cat $out/result.txt (result.json and figures/ beside it)"
echo "if a part fails: read $out/logs/part-K.log, then run this command again (only missing parts run)"
