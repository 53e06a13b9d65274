#!/usr/bin/env bash
# Benchmark: popdecode's decoders against scikit-learn on the identical protocol. Prints figures; asserts nothing.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/reference-venv.sh
cargo build --release --quiet --bin popdecode-bench
table=$(mktemp --suffix=.csv)
trap 'rm -f "$table"' EXIT
echo "== popdecode (one thread)"
./target/release/popdecode-bench --trials-csv "$table"
echo "== scikit-learn (one thread)"
"$VENV/bin/python" scripts/bench_sklearn.py "$table"
