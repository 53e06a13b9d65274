#!/usr/bin/env bash
# Benchmark: popdecode's decoders against scikit-learn on the identical protocol. Prints figures and ratios;
# asserts nothing. Each side runs ROUNDS times (default 3) on one thread and the median time is used.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/reference-venv.sh
ROUNDS="${ROUNDS:-3}"
cargo build --release --quiet --bin popdecode-bench
table=$(mktemp --suffix=.csv)
out=$(mktemp)
trap 'rm -f "$table" "$out"' EXIT
for _ in $(seq "$ROUNDS"); do
  ./target/release/popdecode-bench --trials-csv "$table" >> "$out"
  "$VENV/bin/python" -W ignore scripts/bench_sklearn.py "$table" >> "$out"
done
median() { grep -F "$1" "$out" | awk '{for (i = 1; i <= NF; i++) if ($(i + 1) == "s") {print $i; break}}' | sort -g | awk '{v[NR] = $1} END {print v[int((NR + 1) / 2)]}'; }
svm=$(median "linear-svm ")
lda=$(median "shrinkage-lda ")
svc=$(median "SVC(kernel='linear')")
linsvc=$(median "LinearSVC ")
sklda=$(median "LDA(lsqr, auto)")
grep -m1 "^scikit-learn" "$out"
echo "232 trials x 52 units, 4 classes, 100 repeats x 5 folds, one thread, median of $ROUNDS rounds:"
printf '  %-15s %7.3f s   scikit-learn SVC(kernel=linear) %7.3f s  ratio %5.1fx   LinearSVC %7.3f s  ratio %5.1fx\n' \
  linear-svm "$svm" "$svc" "$(echo "$svc / $svm" | awk -F/ '{print $1 / $2}')" "$linsvc" "$(echo "$linsvc / $svm" | awk -F/ '{print $1 / $2}')"
printf '  %-15s %7.3f s   scikit-learn LDA(lsqr, auto)    %7.3f s  ratio %5.1fx\n' \
  shrinkage-lda "$lda" "$sklda" "$(echo "$sklda / $lda" | awk -F/ '{print $1 / $2}')"
# The large case for the Gaussian-kernel SVM (one round: it takes about a minute per side).
: > "$out"
./target/release/popdecode-bench rbf --trials-csv "$table" >> "$out"
"$VENV/bin/python" -W ignore scripts/bench_sklearn.py "$table" rbf >> "$out"
rbf=$(median "rbf-svm ")
svc_rbf=$(median "SVC(kernel='rbf')")
echo "1000 trials x 300 units, 4 classes, 10 repeats x 5 folds, one thread:"
printf '  %-15s %7.3f s   scikit-learn SVC(kernel=rbf)     %7.3f s  ratio %5.1fx\n' \
  rbf-svm "$rbf" "$svc_rbf" "$(echo "$svc_rbf / $rbf" | awk -F/ '{print $1 / $2}')"
# The grid of shapes (trials 250–4000 × neurons 50–1000): linear SVM and shrinkage LDA against scikit-learn's
# SVC(kernel='linear') and LDA(lsqr, auto) pipelines, 10 repeats × 5 folds, one thread, one round (the largest
# shapes take minutes per side). GRID=0 skips it; SHAPES=248x100,... picks shapes.
[ "${GRID:-1}" = 0 ] && exit 0
shapes="${SHAPES:-$(./target/release/popdecode-bench grid-shapes)}"
tables=$(mktemp -d)
trap 'rm -rf "$table" "$out" "$tables"' EXIT
: > "$out"
RAYON_NUM_THREADS=1 ./target/release/popdecode-bench grid --shapes "$shapes" --tables "$tables" >> "$out"
"$VENV/bin/python" -W ignore scripts/bench_sklearn.py grid "$tables" "$shapes" >> "$out"
seconds() { grep -F "grid $1 " "$out" | grep -E " $2 " | awk '{for (i = 1; i <= NF; i++) if ($(i + 1) == "s") {print $i; exit}}'; }
echo "grid: 4 classes, 10 of the neurons weakly tuned, 10 repeats x 5 folds, one thread (ratio = scikit-learn / popdecode):"
printf '  %-11s %10s %10s %7s   %10s %10s %7s\n' 'trials x n' 'linear-svm' 'SVC' 'ratio' 'shr.-LDA' 'LDA lsqr' 'ratio'
for shape in ${shapes//,/ }; do
  a=$(seconds linear-svm "$shape"); b=$(seconds "SVC(kernel='linear')" "$shape")
  c=$(seconds shrinkage-lda "$shape"); d=$(seconds "LDA(lsqr, auto)" "$shape")
  printf '  %-11s %8.3f s %8.3f s %6.1fx   %8.3f s %8.3f s %6.1fx\n' "$shape" "$a" "$b" "$(awk "BEGIN {print $b / $a}")" \
    "$c" "$d" "$(awk "BEGIN {print $d / $c}")"
done
