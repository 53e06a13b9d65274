#!/usr/bin/env bash
# Benchmark: peak memory of the page and the CLI on an NWB file of SIZE_MB (default 300) MB, most of it invented
# raw voltage that popdecode must not read. Prints figures; asserts nothing. Needs what scripts/test.sh installs
# (the reference venv with pynwb, chromium, playwright-core); GNU time for the CLI's figure.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/reference-venv.sh
SIZE_MB="${SIZE_MB:-300}"
command -v /usr/bin/time >/dev/null || { apt-get update -qq && apt-get install -y -qq time >/dev/null; }
cargo build --release --quiet --bin popdecode
[ -f www/pkg/popdecode_bg.wasm ] || scripts/build-web.sh > /dev/null
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
"$VENV/bin/python" -c "import sys; sys.path.insert(0, 'tests/reference'); from test_nwb import write_nwb; write_nwb('$dir/big.nwb', raw_mb=$SIZE_MB)"
node scripts/bench-nwb-memory.mjs "$dir/big.nwb"
