#!/usr/bin/env bash
# Shows that a change left every output byte as it was: builds the CLI at a base revision (default HEAD, i.e. the
# working tree is compared with its last commit) in a worktree of its own, runs one battery of analyses with both
# binaries, and compares every file they write (result JSON, figures, CSV tables, recipes, printed text).
#   scripts/same-outputs.sh [BASE_REV]
# The battery: every decoder with shuffles, nested tuning, leave-one-out, unbalanced classes, grouped folds, a time
# course from spike events with temporal generalization, a binned time course, the neuron analyses, a
# pseudo-population, and (with the reference venv) an NWB file written by pynwb and the scikit-learn reference cases
# through `predict`.
set -euo pipefail
cd "$(dirname "$0")/.."
BASE=${1:-HEAD}
WORK=target/same-outputs
rm -rf "$WORK/out-base" "$WORK/out-new" "$WORK/data"
mkdir -p "$WORK/data"

# The base binary, built once per commit.
commit=$(git rev-parse "$BASE")
base_bin="$WORK/bin-$commit"
if [ ! -x "$base_bin" ]; then
  rm -rf "$WORK/tree"
  git worktree add --force --detach "$WORK/tree" "$commit" >/dev/null
  (cd "$WORK/tree" && CARGO_TARGET_DIR="$PWD/../target-base" cargo build --release --quiet --bin popdecode)
  cp "$WORK/target-base/release/popdecode" "$base_bin"
  git worktree remove --force "$WORK/tree"
fi
cargo build --release --quiet --bin popdecode
new_bin=target/release/popdecode

# Inputs: the samples, a pseudo-population made from the example, and (venv) NWB + reference cases.
python3 - "$WORK/data/pseudo.csv" <<'PY'
import csv, sys
rows = list(csv.reader(open("samples/odours.csv")))
head, body = rows[0], rows[1:]
s = head.index("session"); sessions = sorted({r[s] for r in body})
units = [j for j, h in enumerate(head) if h.startswith("unit")]
for r in body:  # unit j is recorded in session j mod 3 only
    for k, j in enumerate(units):
        if sessions[k % len(sessions)] != r[s]:
            r[j] = ""
csv.writer(open(sys.argv[1], "w", newline="")).writerows([head] + body)
PY
have_venv=0
if [ -f scripts/reference-venv.sh ]; then
  source scripts/reference-venv.sh && "$VENV/bin/python" scripts/same_outputs_data.py "$WORK/data" && have_venv=1
fi

battery() { # battery BIN OUT
  local bin=$1 out=$2 i=0
  mkdir -p "$out"
  run() { # run NAME ARGS... : stdout, JSON, recipe and figures of one analysis
    local name=$1; shift
    mkdir -p "$out/$name"
    "$bin" "$@" --quiet --json "$out/$name/result.json" --save-recipe "$out/$name/recipe.json" \
      --plots "$out/$name/plots" > "$out/$name/stdout.txt" 2> "$out/$name/stderr.txt" || echo "exit $?" >> "$out/$name/stderr.txt"
  }
  local quick=(--repeats 12 --shuffles 15)
  for c in linear-svm shrinkage-lda logistic gaussian-nb poisson-nb nearest-mean rbf-svm; do
    run "decode-$c" decode samples/odours.csv --label odour --group session --classifier "$c" "${quick[@]}"
  done
  run decode-tune decode samples/odours.csv --label odour --ignore session --tune --repeats 3 --shuffles 2
  run decode-tune-rbf decode samples/odours.csv --label odour --ignore session --tune --classifier rbf-svm --repeats 2 --shuffles 0
  run decode-loo decode samples/odours.csv --label odour --ignore session --folds loo --repeats 2 --shuffles 3 --classifier shrinkage-lda
  run decode-unbalanced decode samples/odours_blocked.csv --label odour --ignore block --no-balance "${quick[@]}"
  run decode-blocks decode samples/odours_blocked.csv --label odour --group block "${quick[@]}"
  run decode-default decode samples/odours.csv --label odour --group session --repeats 30 --shuffles 40
  run decode-pseudo decode "$WORK/data/pseudo.csv" --label odour --pseudo session --classifier shrinkage-lda "${quick[@]}"
  run time-events timecourse --events samples/odour_spikes.csv --trials samples/odour_trials.csv --label odour \
    --start -0.5 --end 1 --width 0.1 --step 0.05 --generalize --repeats 4 --shuffles 12
  run time-events-poisson timecourse --events samples/odour_spikes.csv --trials samples/odour_trials.csv --label odour \
    --start -0.2 --end 0.8 --width 0.2 --step 0.1 --classifier poisson-nb --repeats 3 --shuffles 5
  run time-binned timecourse samples/odours_binned.csv --label odour --group session --repeats 4 --shuffles 12 --classifier nearest-mean
  run time-binned-tune timecourse samples/odours_binned.csv --label odour --ignore session --repeats 2 --shuffles 0 --tune --classifier logistic
  run neurons-svm neurons samples/odours.csv --label odour --ignore session --repeats 4 --draws 3
  run neurons-lda neurons samples/odours.csv --label odour --group session --classifier shrinkage-lda --repeats 4 --draws 3
  run neurons-nb neurons samples/odours.csv --label odour --ignore session --classifier gaussian-nb --repeats 3 --draws 2
  if [ "$have_venv" = 1 ]; then
    run time-nwb timecourse --nwb "$WORK/data/odours.nwb" --label odour --start -0.5 --end 1 --repeats 4 --shuffles 10 --generalize
    run time-nwb-units timecourse --nwb "$WORK/data/odours.nwb" --label odour --start -0.5 --end 1 --repeats 3 --shuffles 6 --units quality=good --units 'snr>=3'
    "$bin" inspect "$WORK/data/odours.nwb" --spikes "$out/inspect-spikes.csv" > "$out/inspect.txt" 2>&1 || true
    for f in "$WORK"/data/*.csv; do
      case "$f" in */pseudo.csv) continue ;; esac
      for c in linear-svm shrinkage-lda logistic gaussian-nb poisson-nb nearest-mean rbf-svm; do
        "$bin" predict "$f" --label label --fold-column fold --classifier "$c" --out "$out/predict-$(basename "$f" .csv)-$c.csv" 2>&1 || true
      done
    done
  fi
}
battery "$base_bin" "$WORK/out-base"
battery "$new_bin" "$WORK/out-new"

same=0; differ=0
while IFS= read -r f; do
  rel=${f#"$WORK/out-base/"}
  if cmp -s "$f" "$WORK/out-new/$rel"; then same=$((same + 1)); else differ=$((differ + 1)); echo "DIFFERS: $rel"; fi
done < <(find "$WORK/out-base" -type f | sort)
extra=$(comm -13 <(cd "$WORK/out-base" && find . -type f | sort) <(cd "$WORK/out-new" && find . -type f | sort) | wc -l)
[ "$extra" -eq 0 ] || echo "files only the new build wrote: $extra"
echo "$same output files identical, $differ differ (base $commit$([ "$have_venv" = 1 ] || echo '; no venv: NWB and reference cases skipped'))"
[ "$differ" -eq 0 ]
