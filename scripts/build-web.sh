#!/usr/bin/env bash
# Build the page: www/pkg/ (wasm + glue for the served page) and dist/popdecode.html (one self-contained file).
# Installs on a fresh machine what it needs: the wasm32 target, wasm-bindgen-cli at the crate's pinned version,
# and binaryen's wasm-opt from npm (Debian's binaryen is too old for wasm-bindgen output).
set -euo pipefail
cd "$(dirname "$0")/.."

rustup target add wasm32-unknown-unknown >/dev/null 2>&1 || rustup target add wasm32-unknown-unknown
WB_VERSION=$(grep -A1 '^name = "wasm-bindgen"$' Cargo.lock | sed -n 's/^version = "\(.*\)"/\1/p' | head -1)
if ! wasm-bindgen --version 2>/dev/null | grep -qF "$WB_VERSION"; then
  cargo install wasm-bindgen-cli --version "$WB_VERSION"
fi
TOOLS=target/web-tools
BINARYEN=132.0.0
if [ ! -x "$TOOLS/node_modules/.bin/wasm-opt" ]; then
  mkdir -p "$TOOLS"
  [ -f "$TOOLS/package.json" ] || echo '{"name": "popdecode-web-tools", "private": true}' > "$TOOLS/package.json"
  (cd "$TOOLS" && npm install --no-audit --no-fund --silent "binaryen@$BINARYEN")
fi

RUSTFLAGS="-C target-feature=+simd128" cargo build --lib --release --target wasm32-unknown-unknown
rm -rf www/pkg
wasm-bindgen --target no-modules --no-typescript --out-dir www/pkg \
  target/wasm32-unknown-unknown/release/popdecode.wasm
"$TOOLS/node_modules/.bin/wasm-opt" -Oz --enable-simd --enable-bulk-memory --enable-nontrapping-float-to-int \
  --enable-sign-ext --enable-mutable-globals --enable-reference-types --enable-multivalue \
  www/pkg/popdecode_bg.wasm -o www/pkg/popdecode_bg.wasm
mkdir -p www/samples/study
cp samples/*.csv www/samples/
cp samples/study/study.csv samples/study/m?-d?.csv www/samples/study/
node scripts/bundle-offline.mjs
echo "built www/pkg ($(wc -c < www/pkg/popdecode_bg.wasm) bytes of wasm) and dist/popdecode.html"
