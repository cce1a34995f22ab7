#!/usr/bin/env bash
# Installs what the tests need and a fresh machine lacks. Idempotent: each step checks first.
set -euo pipefail
cd "$(dirname "$0")/.."

if ! rustup target list --installed | grep -qx wasm32-unknown-unknown; then
  echo "installing the wasm32-unknown-unknown target"
  rustup target add wasm32-unknown-unknown
fi

# The wasm-bindgen CLI must be exactly the version of the crate (pinned with '=').
want=$(sed -n 's/^wasm-bindgen = "=\(.*\)"/\1/p' crate/Cargo.toml)
have=$(wasm-bindgen --version 2>/dev/null | awk '{print $2}' || true)
if [ "$have" != "$want" ]; then
  echo "installing wasm-bindgen-cli $want (found '${have:-none}'); this takes a few minutes"
  cargo install wasm-bindgen-cli --version "$want"
fi

if [ ! -x /usr/bin/chromium ]; then
  echo "installing Chromium from Debian's packages"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update
  apt-get install -y chromium
fi

if [ ! -d tests/browser/node_modules/playwright-core ]; then
  echo "installing the browser test's npm packages"
  (cd tests/browser && npm ci --no-audit --no-fund)
fi

if [ ! -x tests/.venv/bin/python ] || ! tests/.venv/bin/python -c "import numpy, scipy, pytest" 2>/dev/null; then
  echo "creating tests/.venv with numpy, scipy and pytest"
  python3 -m venv tests/.venv
  tests/.venv/bin/pip install --quiet --disable-pip-version-check -r tests/requirements.txt
fi
echo "tools ready"
