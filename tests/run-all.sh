#!/usr/bin/env bash
# Runs every test of sillage, installing whatever a fresh machine lacks first:
# the wasm32 target, the wasm-bindgen CLI of the crate's exact version, Debian's Chromium,
# playwright-core (npm), and numpy/scipy/pytest in tests/.venv.
#
#   bash tests/run-all.sh
#
# Stages: formatting and lints, Rust tests (host), the core built for wasm32, Python
# reference checks (numpy/scipy), the demo data's bit-for-bit regeneration, and the browser
# test in headless Chromium. Every stage runs even when an earlier one fails; the last line
# counts passed and failed stages, and the exit status is non-zero if any failed. Nothing is
# skipped: a stage whose tools cannot be installed fails.
set -uo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)
passed=0
failed=0
failures=()

stage() {
  local name=$1
  shift
  echo
  echo "=== $name"
  local start=$SECONDS
  if "$@"; then
    passed=$((passed + 1))
    echo "=== $name: ok ($((SECONDS - start)) s)"
  else
    failed=$((failed + 1))
    failures+=("$name")
    echo "=== $name: FAILED ($((SECONDS - start)) s)"
  fi
}

install_tools() {
  bash tests/install-tools.sh
}

lint() {
  cargo fmt --all -- --check && cargo clippy --workspace --all-targets -- -D warnings
}

rust_tests() {
  cargo test --workspace
}

wasm_build() {
  bash www/build.sh
}

python_tests() {
  cargo build -p sillage --bin sillage &&
    SILLAGE_BIN="${CARGO_TARGET_DIR:-$root/target}/debug/sillage" tests/.venv/bin/python -m pytest -q tests/python
}

demo_reproducible() {
  bash tests/check_demo_reproducible.sh
}

browser_tests() {
  # ftle.test.mjs compares the page's FTLE with the CLI's (the same binary as pytest uses).
  cargo build -p sillage --bin sillage &&
    (cd tests/browser && SILLAGE_BIN="${CARGO_TARGET_DIR:-$root/target}/debug/sillage" node --test)
}

stage "install tools" install_tools
stage "format and lints" lint
stage "rust tests" rust_tests
stage "wasm build" wasm_build
stage "python reference checks" python_tests
stage "demo data regenerates bit-for-bit" demo_reproducible
stage "browser tests" browser_tests

echo
if [ "$failed" -gt 0 ]; then
  printf 'failed stage: %s\n' "${failures[@]}"
fi
echo "stages: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
