#!/usr/bin/env bash
# Benchmark: every decoder on the standard protocol (232 trials x 52 units, 4 classes, 100 repeats x 5 folds, no
# shuffles) in the page with one worker, from the click to the results, beside the native CLI on one thread (its
# whole run: reading the table, decoding, writing the JSON). Prints figures; asserts nothing. Needs chromium and
# playwright-core as scripts/test.sh installs them.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet --bin popdecode-bench --bin popdecode
[ -f www/pkg/popdecode_bg.wasm ] || scripts/build-web.sh > /dev/null
table=$(mktemp --suffix=.csv)
trap 'rm -f "$table"' EXIT
./target/release/popdecode-bench --trials-csv "$table" > /dev/null
node scripts/bench-page-decoders.mjs "$table"
