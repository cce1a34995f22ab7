#!/usr/bin/env bash
# The time-left estimate of a decomposition (BENCHMARKS.md, "Modes", "Time left of a
# decomposition in the page"): writes the synthetic series of that record (160×80 points,
# 500 snapshots, two travelling waves plus 5 % seeded noise; numpy, in the test
# environment) and runs tests/bench/modes_progress.mjs on it with the page's core.
#
# Environment: PYTHON (default tests/.venv/bin/python, made by tests/run-all.sh). Needs
# www/pkg (bash www/build.sh).
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
cd "$root"
python=${PYTHON:-$root/tests/.venv/bin/python}
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT

"$python" - "$out/progress-synth.npz" <<'PY'
import sys
import numpy as np

nx, ny, nt = 160, 80, 500
x = np.linspace(0, 1.6, nx)
y = np.linspace(0, 0.8, ny)
t = np.arange(nt) * 0.01
X, Y = np.meshgrid(x, y)
rng = np.random.default_rng(1)
u = np.empty((nt, ny, nx), np.float32)
v = np.empty_like(u)
for k, tk in enumerate(t):
    a, b = 2 * np.pi * (1.5 * tk - X), 2 * np.pi * (4 * tk - 2 * X)
    u[k] = 1 + np.cos(a) * np.sin(3 * Y) + 0.3 * np.sin(b) + 0.05 * rng.standard_normal(X.shape)
    v[k] = 0.5 * np.sin(a) + 0.3 * np.cos(b + Y) + 0.05 * rng.standard_normal(X.shape)
np.savez(sys.argv[1], x=x, y=y, t=t, u=u, v=v)
PY
node tests/bench/modes_progress.mjs "$out/progress-synth.npz" "$@"
