#!/usr/bin/env bash
# Build popdecode as one statically linked Linux executable (Rust's x86_64-unknown-linux-musl target): copy it to
# any x86-64 Linux computer or cluster node and run it, with nothing installed there (no Rust, no C library of a
# particular version). Prints each executable's path on standard output, one a line (Cargo's messages go to
# standard error).
#
#   scripts/build-static.sh [BIN...]     BIN: the executables to build (default popdecode; popdecode-bench too)
#
# Rust links musl itself (its self-contained C runtime objects, with the C compiler the native build already uses
# as linker), so no Debian package (musl-tools) is needed. The code is the same as the native build's: a baseline
# x86-64 executable whose hot kernels have AVX2 copies chosen at run time (crate/decoders/simd.rs), so it runs on
# every x86-64 processor and writes the same bytes as target/release/popdecode (tests/static_binary.sh checks it).
# Cargo warns "dropping unsupported crate type `cdylib`": that crate type is only for the page's WebAssembly.
set -euo pipefail
cd "$(dirname "$0")/.."
target=x86_64-unknown-linux-musl
[ $# -gt 0 ] || set -- popdecode

if ! rustup target list --installed | grep -qx "$target"; then
  echo "adding Rust's $target target (rustup target add $target)" >&2
  rustup target add "$target" >&2
fi
bins=()
for bin in "$@"; do bins+=(--bin "$bin"); done
cargo build --release --target "$target" "${bins[@]}" >&2
for bin in "$@"; do echo "$(pwd)/target/$target/release/$bin"; done
