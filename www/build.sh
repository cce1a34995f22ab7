#!/usr/bin/env bash
# Builds the WebAssembly core for the page into www/pkg/ (git-ignored), installing what a
# fresh machine lacks: the wasm32 target and the wasm-bindgen CLI of exactly the version of
# the wasm-bindgen crate (the two must match).
set -euo pipefail
cd "$(dirname "$0")/.."

if ! rustup target list --installed | grep -qx wasm32-unknown-unknown; then
  echo "build: installing the wasm32-unknown-unknown target"
  rustup target add wasm32-unknown-unknown
fi
want=$(sed -n 's/^wasm-bindgen = "=\(.*\)"/\1/p' crate/Cargo.toml)
have=$(wasm-bindgen --version 2>/dev/null | awk '{print $2}' || true)
if [ "$have" != "$want" ]; then
  echo "build: installing wasm-bindgen-cli $want (found '${have:-none}'); this takes a few minutes"
  cargo install wasm-bindgen-cli --version "$want"
fi

echo "build: compiling the core for wasm32 (release, simd128)"
# The crate is an rlib for native use; the cdylib the browser needs is asked for here.
cargo rustc -p sillage --lib --release --target wasm32-unknown-unknown --no-default-features \
  --crate-type cdylib
echo "build: generating the JavaScript bindings into www/pkg"
wasm-bindgen --target web --no-typescript --out-dir www/pkg \
  target/wasm32-unknown-unknown/release/sillage.wasm
ls -l www/pkg/sillage_bg.wasm
