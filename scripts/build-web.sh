#!/usr/bin/env bash
# Build the page: www/pkg/ (wasm + glue), www/pkg-shared/ (the same core built with atomics, for a served page
# whose workers share one memory: crate/wasm/shared.rs) and dist/popdecode.html (one self-contained file, which
# a browser never lets share memory, so it carries www/pkg/ only).
# Installs on a fresh machine what it needs: the wasm32 target and the standard library's source (the shared
# build compiles std with atomics), wasm-bindgen-cli at the crate's pinned version, and binaryen's wasm-opt from
# npm (Debian's binaryen is too old for wasm-bindgen output).
set -euo pipefail
cd "$(dirname "$0")/.."

rustup target add wasm32-unknown-unknown >/dev/null 2>&1 || rustup target add wasm32-unknown-unknown
rustup component add rust-src >/dev/null 2>&1 || rustup component add rust-src
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

# Cargo's output directory: the default, or the one the caller chose (CARGO_TARGET_DIR).
TARGET_DIR=${CARGO_TARGET_DIR:-target}
OPT=(-Oz --enable-simd --enable-bulk-memory --enable-nontrapping-float-to-int --enable-sign-ext
  --enable-mutable-globals --enable-reference-types --enable-multivalue)
RUSTFLAGS="-C target-feature=+simd128" cargo build --lib --release --target wasm32-unknown-unknown
rm -rf www/pkg
wasm-bindgen --target no-modules --no-typescript --out-dir www/pkg \
  "$TARGET_DIR/wasm32-unknown-unknown/release/popdecode.wasm"
"$TOOLS/node_modules/.bin/wasm-opt" "${OPT[@]}" www/pkg/popdecode_bg.wasm -o www/pkg/popdecode_bg.wasm

# The shared-memory build: the same source and the same floating-point operations (atomics change how memory is
# declared and locked, not arithmetic; the browser tests compare both builds' JSON with the CLI's). The standard
# library must be compiled with atomics too, which stable cargo does only with RUSTC_BOOTSTRAP=1 and -Zbuild-std;
# its own target directory keeps the two builds from rebuilding each other. The memory is imported (the page makes
# one per data set) and may grow to 4 GiB, a 32-bit memory's limit.
RUSTC_BOOTSTRAP=1 CARGO_TARGET_DIR="$TARGET_DIR/wasm-shared" RUSTFLAGS="-C target-feature=+simd128,+atomics,+bulk-memory,+mutable-globals \
  -C link-arg=--shared-memory -C link-arg=--import-memory -C link-arg=--max-memory=4294967296 \
  -C link-arg=--export=__wasm_init_tls -C link-arg=--export=__tls_size -C link-arg=--export=__tls_align \
  -C link-arg=--export=__tls_base" \
  cargo build --lib --release --target wasm32-unknown-unknown -Zbuild-std=std,panic_abort
rm -rf www/pkg-shared
wasm-bindgen --target no-modules --no-typescript --out-dir www/pkg-shared \
  "$TARGET_DIR/wasm-shared/wasm32-unknown-unknown/release/popdecode.wasm"
"$TOOLS/node_modules/.bin/wasm-opt" "${OPT[@]}" --enable-threads \
  www/pkg-shared/popdecode_bg.wasm -o www/pkg-shared/popdecode_bg.wasm
mkdir -p www/samples/study
cp samples/*.csv www/samples/
cp samples/study/study.csv samples/study/m?-d?.csv www/samples/study/
node scripts/bundle-offline.mjs
echo "built www/pkg ($(wc -c < www/pkg/popdecode_bg.wasm) bytes of wasm), www/pkg-shared and dist/popdecode.html"
