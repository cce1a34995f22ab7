"""numpy's side of the POD benchmark (crate/benches/modes.rs): the same two problems, the
same weighted fluctuation matrix, timed with numpy.linalg.svd (thin) and with the snapshot
method (numpy.linalg.eigh of the correlation matrix). Prints one line per case.

Run: tests/.venv/bin/python tests/python/bench_modes_numpy.py [--demo NPZ] [--synthetic NPZ]
[--repeats N] [--json]. `--synthetic` reads the set crate/examples/modes_bench.rs writes
(`--write-synthetic`), so both sides decompose the very same float32 numbers; without it the
recipe below builds the set (equal up to float32 rounding). `--json` prints one JSON line per
case with the leading singular values, for tests/bench/run-modes.sh. Thread counts are the
caller's (run-modes.sh pins OpenBLAS to one thread).
"""

import argparse
import json
import pathlib
import sys
import time

import numpy as np

sys.path.insert(0, str(pathlib.Path(__file__).parent))
from test_modes_pod import reference_pod  # noqa: E402

ROOT = pathlib.Path(__file__).resolve().parents[2]


def synthetic(nx=200, ny=100, nt=1000):
    """The recipe of crate/benches/modes.rs, in float32 like the stored series."""
    x = np.arange(nx) / (nx - 1)
    y = np.arange(ny) / (ny - 1)
    t = np.arange(nt) * 0.01
    X, Y = np.meshgrid(x, y)
    u = np.zeros((nt, ny, nx), np.float32)
    v = np.zeros((nt, ny, nx), np.float32)
    for j in range(40):
        a = np.exp(-j / 8.0)
        kx, ky, om, ph = 1.0 + j, 2.0 + 0.5 * j, 3.0 + 1.7 * j, 0.37 * j
        arg = kx * X[None] + ky * Y[None] - (om * t[:, None, None] + ph)
        u += (a * np.sin(arg)).astype(np.float32)
        v += (a * np.cos(arg + 0.5)).astype(np.float32)
    return dict(x=x, y=y, t=t, u=u, v=v, mask=np.zeros((ny, nx), bool))


def best_of(fn, repeats):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), float(np.median(times)), out


def run(name, d, repeats, svd_repeats, as_json):
    def full_pod_svd():
        ref = reference_pod(d)  # builds the weighted matrix and runs np.linalg.svd
        return ref["s"][:20]

    def snapshot():
        x, y, u, v, mask = d["x"], d["y"], d["u"], d["v"], d["mask"]
        keep = ~mask.ravel()
        nt = u.shape[0]
        X = np.vstack([u.reshape(nt, -1)[:, keep].T, v.reshape(nt, -1)[:, keep].T]).astype(np.float64)
        wx = np.full(len(x), x[1] - x[0]); wx[[0, -1]] *= 0.5
        wy = np.full(len(y), y[1] - y[0]); wy[[0, -1]] *= 0.5
        w = np.outer(wy, wx)[~mask]
        sw = np.sqrt(np.concatenate([w, w]))
        Y = sw[:, None] * (X - X.mean(axis=1, keepdims=True)) / np.sqrt(nt)
        lam, V = np.linalg.eigh(Y.T @ Y)
        V = V[:, ::-1][:, :20]
        s = np.sqrt(lam[::-1][:20])
        return (Y @ V) / s, s

    cases = (("svd", "numpy svd (thin)", full_pod_svd, svd_repeats),
             ("snapshot", "numpy snapshot (eigh)", lambda: snapshot()[1], repeats))
    for key, label, fn, reps in cases:
        best, med, s = best_of(fn, reps)
        if as_json:
            print(json.dumps(dict(data=name, method=key, best_s=best, median_s=med, runs=reps,
                                  singular_values=[float(x) for x in s])), flush=True)
        else:
            print(f"{name:24s} {label:24s} best {best:8.3f} s  median {med:8.3f} s")


def load_series(path):
    with np.load(path) as f:
        d = {k: f[k] for k in ("x", "y", "t", "u", "v") if k in f.files}
        d["mask"] = f["mask"] if "mask" in f.files else np.zeros(d["u"].shape[1:], bool)
    return d


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--demo", default=str(ROOT / "demo-fields" / "fin-wake.npz"))
    ap.add_argument("--synthetic", help=".npz of the synthetic set (default: build it here)")
    ap.add_argument("--repeats", type=int, default=0, help="runs per case (default 10 / 3)")
    ap.add_argument("--svd-repeats", type=int, default=0, help="runs of the thin SVD (default: --repeats)")
    ap.add_argument("--only", choices=["demo", "synthetic"], help="one data set only")
    ap.add_argument("--json", action="store_true")
    a = ap.parse_args()
    if a.only != "synthetic":
        run("demo", load_series(a.demo), a.repeats or 10, a.svd_repeats or a.repeats or 10, a.json)
    if a.only != "demo":
        synth = load_series(a.synthetic) if a.synthetic else synthetic()
        run("synthetic 200x100x1000", synth, a.repeats or 3, a.svd_repeats or a.repeats or 3,
            a.json)
