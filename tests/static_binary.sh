#!/usr/bin/env bash
# The statically linked executable (scripts/build-static.sh, Rust's musl target) needs nothing on the computer it
# runs on and computes what the normal build computes:
#   * it is linked statically: no program interpreter (the dynamic loader) and no shared library it needs;
#   * it holds the AVX2 copies of the kernels (instructions on ymm registers), chosen at run time as in the normal
#     build (crate/decoders/simd.rs);
#   * run with an empty environment (env -i: no PATH, no HOME, no locale), `decode` with shuffles, `timecourse
#     --generalize` and `neurons` on the demo data in samples/ write the same JSON and the same printed text, byte
#     for byte, as target/release/popdecode run normally.
# Needs the normal build (cargo build --release --bin popdecode) and binutils' readelf and objdump (installed with
# the C compiler Rust links with).
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
normal=$root/target/release/popdecode
[ -x "$normal" ] || { echo "build the CLI first: cargo build --release --bin popdecode" >&2; exit 1; }
for tool in readelf objdump; do
  command -v "$tool" >/dev/null || { echo "$tool (binutils) is needed to inspect the executable" >&2; exit 1; }
done

echo "== build"
static=$("$root/scripts/build-static.sh" popdecode | tail -n 1)
[ -x "$static" ] || { echo "scripts/build-static.sh printed '$static', which is not an executable" >&2; exit 1; }
echo "$static"

echo "== linked statically"
if readelf -lW "$static" | grep -q 'INTERP'; then
  echo "the executable asks for a program interpreter (dynamic loader):" >&2
  readelf -lW "$static" | grep -A1 'INTERP' >&2
  exit 1
fi
if readelf -dW "$static" | grep -q '(NEEDED)'; then
  echo "the executable needs shared libraries:" >&2
  readelf -dW "$static" | grep '(NEEDED)' >&2
  exit 1
fi
command -v file >/dev/null && file -b "$static"

echo "== AVX2 kernels present"
ymm=$(objdump -d --no-show-raw-insn "$static" | grep -c '%ymm' || true)
echo "$ymm instructions on ymm registers"
[ "$ymm" -gt 0 ] || { echo "no AVX2 instruction in the executable: the kernels' AVX2 copies are missing" >&2; exit 1; }

work=$(mktemp -d /tmp/popdecode-static.XXXXXX)
trap 'rm -rf "$work"' EXIT
# Both executables run from an empty folder; the inputs are given as absolute paths.
cd "$work"
samples=$root/samples
same() { # same NAME ARGS...: the static executable (empty environment) and the normal one agree byte for byte
  local name=$1; shift
  env -i "$static" "$@" --json "$work/$name-static.json" > "$work/$name-static.txt"
  "$normal" "$@" --json "$work/$name-normal.json" > "$work/$name-normal.txt"
  [ -s "$work/$name-normal.json" ] || { echo "$name: the normal build wrote no JSON" >&2; exit 1; }
  cmp "$work/$name-static.json" "$work/$name-normal.json"
  cmp "$work/$name-static.txt" "$work/$name-normal.txt"
  echo "ok: $name ($(wc -c < "$work/$name-static.json") bytes of JSON)"
}

echo "== same bytes as target/release/popdecode"
for classifier in shrinkage-lda linear-svm; do
  same "decode-$classifier" decode "$samples/odours.csv" --label odour --group session --classifier "$classifier" \
    --repeats 3 --shuffles 4
done
same timecourse timecourse "$samples/odours_binned.csv" --label odour --ignore session --generalize \
  --repeats 2 --shuffles 3
same neurons neurons "$samples/odours.csv" --label odour --repeats 2 --draws 3
