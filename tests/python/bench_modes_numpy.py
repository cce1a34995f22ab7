"""numpy's side of the POD benchmark (crate/benches/modes.rs): the same two problems, the
same weighted fluctuation matrix, timed with numpy.linalg.svd (thin) and with the snapshot
method (numpy.linalg.eigh of the correlation matrix). Prints one line per case.

Run: tests/.venv/bin/python tests/python/bench_modes_numpy.py
"""

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
        fn()
        times.append(time.perf_counter() - t0)
    return min(times), float(np.median(times))


def run(name, d, repeats):
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
        return (Y @ V) / s

    for label, fn in (("numpy svd (thin)", full_pod_svd), ("numpy snapshot (eigh)", snapshot)):
        best, med = best_of(fn, repeats)
        print(f"{name:24s} {label:24s} best {best:8.3f} s  median {med:8.3f} s")


if __name__ == "__main__":
    with np.load(ROOT / "demo-fields" / "fin-wake.npz") as f:
        demo = {k: f[k] for k in ("x", "y", "t", "u", "v", "mask")}
    run("demo 100x40x240", demo, 10)
    run("synthetic 200x100x1000", synthetic(), 3)
