#!/usr/bin/env bash
# Builds the WebAssembly module the page loads, into www/pkg/ (git-ignored).
#
# Works on a fresh machine that has only the Rust toolchain (rustup), Python 3 and Node:
# adds the wasm32 target and the wasm-bindgen command-line tool when they are missing. The
# tool must be exactly the version of the wasm-bindgen crate in Cargo.lock, or the
# generated JavaScript glue and the module disagree. Quick when nothing changed.
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
cd "$root"
export PATH="${CARGO_HOME:-$HOME/.cargo}/bin:$PATH"
say() { printf 'build.sh: %s\n' "$*"; }

# 1. The compilation target.
if ! rustup target list --installed | grep -qx wasm32-unknown-unknown; then
  say "adding the Rust target wasm32-unknown-unknown"
  rustup target add wasm32-unknown-unknown
fi

# 2. wasm-bindgen CLI of the locked crate version (crate/Cargo.toml pins it with '=').
want=$(awk '$0 == "name = \"wasm-bindgen\"" { getline; gsub(/[^0-9.]/, "", $0); print; exit }' Cargo.lock)
if [ -z "$want" ]; then
  want=$(sed -n 's/^wasm-bindgen *= *"=\([0-9.]*\)".*/\1/p' crate/Cargo.toml)
fi
if [ -z "$want" ]; then
  echo "build.sh: cannot find the wasm-bindgen version in Cargo.lock or crate/Cargo.toml" >&2
  exit 1
fi
have=$(wasm-bindgen --version 2>/dev/null | awk '{ print $2 }' || true)
if [ "$have" != "$want" ]; then
  say "installing wasm-bindgen-cli $want (found: ${have:-none}); this takes a few minutes"
  cargo install wasm-bindgen-cli --version "$want"
fi

# 3. The module (release: optimised and smaller), without the command-line features. The
#    library is an rlib for every other build; only this one asks for a cdylib.
#    The page's core is built at opt-level 2, not the release profile's 3: 46 kB smaller
#    compressed (it keeps the page under 1 MB), with FTLE and sensitivity as fast in the
#    measurements (BENCHMARKS.md, "Transfer size"). SILLAGE_WASM_OPT_LEVEL (e.g. 3, s or z)
#    overrides it, for size/speed measurements.
level=${SILLAGE_WASM_OPT_LEVEL:-2}
case $level in
  s | z) opt=(--config "profile.release.opt-level=\"$level\"") ;;
  *) opt=(--config "profile.release.opt-level=$level") ;;
esac
say "cargo rustc (wasm32, release, opt-level $level, cdylib)"
cargo rustc "${opt[@]}" -p sillage --lib --release --target wasm32-unknown-unknown --no-default-features \
  --crate-type cdylib

# 4. JavaScript glue for ES modules, only when the module changed.
target_dir=$(cargo metadata --format-version 1 --no-deps |
  python3 -c 'import json, sys; print(json.load(sys.stdin)["target_directory"])')
wasm="$target_dir/wasm32-unknown-unknown/release/sillage.wasm"
out="$root/www/pkg"
if [ -f "$out/sillage_bg.wasm" ] && [ "$out/sillage_bg.wasm" -nt "$wasm" ] && [ -f "$out/sillage.js" ]; then
  say "www/pkg is up to date"
else
  say "wasm-bindgen --target web → www/pkg"
  # The name and producers sections only help debuggers and profilers; dropping them saves
  # about a tenth of the module (panic messages keep their text: they are data, not names).
  wasm-bindgen --target web --no-typescript --remove-name-section --remove-producers-section \
    --out-dir "$out" "$wasm"
fi
say "done: $(du -h "$out/sillage_bg.wasm" | cut -f1) module in www/pkg"

# 5. The page as one self-contained file (www/dist/, git-ignored), offered by the page's
#    "Download this page as one file" link.
python3 "$root/www/build-single.py"
