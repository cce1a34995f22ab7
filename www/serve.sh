#!/usr/bin/env bash
# Builds the wasm core if needed, then serves the page on http://127.0.0.1:PORT (default 8000).
#   bash www/serve.sh [PORT]
set -euo pipefail
here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
port=${1:-8000}
case "$port" in
  '' | *[!0-9]*) echo "serve.sh: the port must be a number, not '$port'" >&2; exit 2 ;;
esac
bash "$here/build.sh"
exec python3 "$here/serve.py" --port "$port"
