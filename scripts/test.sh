#!/usr/bin/env bash
# Every test suite, with one closing line "N passed, N failed" summed over all of them.
#   Rust unit, integration and doc tests (cargo test --release)
#   reference agreement with scikit-learn (pytest, in the venv made by scripts/reference-venv.sh)
#   formatting and lint (cargo fmt --check, cargo clippy -D warnings), one check each
#   browser tests (node --test), when scripts/build-web.sh exists
#   a real one-node SLURM running scripts/slurm/ (tests/slurm.sh), one check; skipped, saying so, without root or
#   without slurm-wlm and munge
#   the fuzzer (scripts/fuzz.sh) for FUZZ_SECONDS per input kind (default 45) from seed FUZZ_SEED (fixed, so a CI
#   run repeats the same inputs; run scripts/fuzz.sh alone for new ones), one check: fails when it keeps a failing
#   input, which then stays in tests/fuzz-regressions/ as a regression test
#   the statically linked executable (tests/static_binary.sh: built by scripts/build-static.sh, run on the demo data
#   with an empty environment, compared byte for byte with the normal build), one check; on x86-64 Linux only
set -uo pipefail
cd "$(dirname "$0")/.."
mkdir -p test-output
passed=0
failed=0

count_cargo() { # sum "test result: ok. N passed; M failed" lines
  local p f
  p=$(grep -Eo '[0-9]+ passed;' "$1" | grep -Eo '[0-9]+' | awk '{s+=$1} END {print s+0}')
  f=$(grep -Eo '[0-9]+ failed;' "$1" | grep -Eo '[0-9]+' | awk '{s+=$1} END {print s+0}')
  passed=$((passed + ${p:-0})); failed=$((failed + ${f:-0}))
}

check() { # one named check that passes or fails as a whole
  local name=$1; shift
  if "$@" > "test-output/$name.log" 2>&1; then passed=$((passed + 1)); echo "ok: $name"
  else failed=$((failed + 1)); echo "FAILED: $name (see test-output/$name.log)"; tail -n 20 "test-output/$name.log"; fi
}

echo "== cargo test"
cargo test --release --no-fail-fast 2>&1 | tee test-output/cargo-test.log | grep -E '^test result|FAILED|panicked'
if ! grep -q '^test result' test-output/cargo-test.log; then
  echo "cargo test did not run (build failure?)"; tail -n 30 test-output/cargo-test.log; failed=$((failed + 1))
fi
count_cargo test-output/cargo-test.log

echo "== formatting and lint"
check cargo-fmt cargo fmt --check
check cargo-clippy cargo clippy --release --all-targets -- -D warnings
check cargo-clippy-wasm env RUSTFLAGS="-C target-feature=+simd128" \
  cargo clippy --lib --release --target wasm32-unknown-unknown -- -D warnings

echo "== reference agreement (scikit-learn)"
source scripts/reference-venv.sh
"$VENV/bin/python" -m pytest -q tests/reference 2>&1 | tee test-output/pytest.log | tail -n 3
p=$(grep -Eo '[0-9]+ passed' test-output/pytest.log | tail -1 | grep -Eo '[0-9]+'); passed=$((passed + ${p:-0}))
f=$(grep -Eo '[0-9]+ (failed|error)' test-output/pytest.log | grep -Eo '[0-9]+' | awk '{s+=$1} END {print s+0}'); failed=$((failed + ${f:-0}))
[ "${p:-0}" -gt 0 ] || [ "${f:-0}" -gt 0 ] || { echo "pytest ran no test"; failed=$((failed + 1)); }

echo "== fuzzing the readers and plans (${FUZZ_SECONDS:-45} s per kind)"
check fuzz scripts/fuzz.sh "${FUZZ_SECONDS:-45}" --seed "${FUZZ_SEED:-20261202}"

echo "== a real SLURM (one node, started and stopped by tests/slurm.sh)"
if [ "$(id -u)" -ne 0 ] || ! command -v slurmctld >/dev/null 2>&1 || ! command -v munged >/dev/null 2>&1; then
  echo "SKIPPED: slurm (needs root and Debian's slurm-wlm and munge: apt-get install slurm-wlm munge)"
else
  cargo build --release --quiet --bin popdecode
  check slurm tests/slurm.sh
fi

echo "== the statically linked executable (musl target)"
if [ "$(uname -s)-$(uname -m)" != "Linux-x86_64" ]; then
  echo "SKIPPED: static-binary (the musl target is built and run on x86-64 Linux only)"
else
  cargo build --release --quiet --bin popdecode
  check static-binary tests/static_binary.sh
fi

if [ -x scripts/build-web.sh ] && [ -d tests/browser ]; then
  echo "== browser tests"
  (cd tests/browser && { [ -d node_modules/playwright-core ] && [ -d node_modules/puppeteer-core ] && [ -d node_modules/axe-core ] || npm ci --no-audit --no-fund --silent; }) \
    > test-output/npm.log 2>&1 || echo "npm install failed (see test-output/npm.log)"
  cargo build --release --quiet --bin popdecode
  if scripts/build-web.sh > test-output/build-web.log 2>&1; then
    # The timeout bounds a test file as a whole too (node runs each file as a test): a file whose tests take
    # longer is cancelled, and its cancelled tests count as failed below.
    node --test --test-timeout=900000 --test-reporter=spec tests/browser/ 2>&1 | tee test-output/browser.log | grep -E '^ℹ (pass|fail|cancelled)|✖' | head -40
    # A failure's assertion and where it was raised, so a CI log says why without the log file.
    sed -n '/^✖ failing tests:/,$p' test-output/browser.log | grep -vE '^ *at .*node:internal' | head -80
    p=$(grep -Eo '^ℹ pass [0-9]+' test-output/browser.log | grep -Eo '[0-9]+'); passed=$((passed + ${p:-0}))
    f=$(grep -Eo '^ℹ fail [0-9]+' test-output/browser.log | grep -Eo '[0-9]+'); failed=$((failed + ${f:-0}))
    c=$(grep -Eo '^ℹ cancelled [0-9]+' test-output/browser.log | grep -Eo '[0-9]+'); failed=$((failed + ${c:-0}))
    [ -n "$p" ] || { echo "browser tests did not run"; failed=$((failed + 1)); }
  else
    echo "FAILED: web build (see test-output/build-web.log)"; tail -n 30 test-output/build-web.log; failed=$((failed + 1))
  fi
fi

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
