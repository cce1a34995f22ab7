#!/usr/bin/env bash
# Regenerates the fin-wake demo data into a temporary directory and compares it byte for
# byte with the committed files in demo-fields/. Exit status 0 only if every file matches
# and no file is missing or extra.
#
#   bash tests/check_demo_reproducible.sh
set -euo pipefail
cd "$(dirname "$0")/.."
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

cargo build --release -p fin-wake-generator
start=$SECONDS
"${CARGO_TARGET_DIR:-./target}/release/fin-wake-generator" "$tmp"
echo "generator run time: $((SECONDS - start)) s"

status=0
committed=$( (cd demo-fields && find fin-wake.npz fin-wake-csv -type f | sort) )
fresh=$( (cd "$tmp" && find . -type f | sed 's|^\./||' | sort) )
if [ "$committed" != "$fresh" ]; then
  echo "file sets differ:"
  diff <(echo "$committed") <(echo "$fresh") || true
  status=1
fi
for f in $committed; do
  if [ -f "$tmp/$f" ] && cmp -s "demo-fields/$f" "$tmp/$f"; then
    echo "same   $f"
  else
    echo "DIFFER $f"
    status=1
  fi
done
if [ $status -eq 0 ]; then
  echo "demo data reproduced bit for bit"
else
  echo "demo data NOT reproduced: regenerate with 'cargo run --release -p fin-wake-generator' and review"
fi
exit $status
