#!/usr/bin/env bash
# The fuzzer (crate/bin/fuzz/): mutated trial tables, binned tables, spike events and NWB files through the
# library's readers and plans, each kind for SECONDS (default 600), failures kept in tests/fuzz-regressions/<kind>/.
#   scripts/fuzz.sh [SECONDS] [popdecode-fuzz flags: --kinds table,binned,events,nwb --seed S --hang-seconds N]
# NWB seeds are written by pynwb (scripts/fuzz_nwb_seeds.py) when the reference venv can be had; otherwise only a
# minimal NWB layout built in Rust seeds the NWB kind. Exit code 1 when a failing input was kept.
set -euo pipefail
cd "$(dirname "$0")/.."
SECONDS_PER_KIND=${1:-600}
shift || true
cargo build --release --quiet --bin popdecode-fuzz
seeds=target/fuzz-seeds/nwb
if [ ! -f "$seeds/odours.nwb" ]; then
  if source scripts/reference-venv.sh > target/fuzz-seeds.log 2>&1; then
    "$VENV/bin/python" scripts/fuzz_nwb_seeds.py "$seeds" >> target/fuzz-seeds.log 2>&1 \
      || echo "fuzz: pynwb seeds not written (see target/fuzz-seeds.log)"
  else
    echo "fuzz: no reference venv, so no pynwb seeds (see target/fuzz-seeds.log)"
  fi
fi
exec target/release/popdecode-fuzz --seconds "$SECONDS_PER_KIND" --nwb-seeds "$seeds" "$@"
