#!/usr/bin/env bash
# Benchmark: the page's duration estimate against the runs it announced (the example, and a 1000 trials × 400
# units table with the linear SVM, whose fits on shuffled labels are slower). Prints figures; asserts nothing.
# Needs chromium and playwright-core as scripts/test.sh installs them.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet --bin popdecode-bench
[ -f www/pkg/popdecode_bg.wasm ] || scripts/build-web.sh > /dev/null
tables=$(mktemp -d)
trap 'rm -rf "$tables"' EXIT
./target/release/popdecode-bench grid --decoders nearest-mean --repeats 1 --shapes 1000x400 --tables "$tables" > /dev/null
node scripts/bench-page-estimate.mjs "$tables/1000x400.csv"
