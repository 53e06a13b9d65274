#!/usr/bin/env bash
# Benchmark: the time-course target case (1000 trials x 300 units x 40 windows, 10 repeats, 200 shuffles x 10
# repeats) natively and in the page with 2 workers, for DECODER (default nearest-mean). Prints figures; asserts
# nothing. Needs chromium and playwright-core as scripts/test.sh installs them.
set -euo pipefail
cd "$(dirname "$0")/.."
DECODER="${DECODER:-nearest-mean}"
cargo build --release --quiet --bin popdecode-bench
[ -f www/pkg/popdecode_bg.wasm ] || scripts/build-web.sh > /dev/null
table=$(mktemp --suffix=.csv)
trap 'rm -f "$table"' EXIT
./target/release/popdecode-bench timecourse --classifier "$DECODER" --binned-csv "$table"
node scripts/bench-page-timecourse.mjs "$table" "$DECODER"
