"""Tracer advection the way a careful numpy/scipy user would write it, timed on one core.

The comparison point for sillage's RK4 flow map (crate/benches/transport.rs): the same
problem, the same steps, the same stopping rule, vectorised over all tracers:

* data: a canonical .npz (x, y, t, u, v, mask), by default demo-fields/fin-wake.npz;
* a NX x NY tracer grid over the data window (default 256 x 128), start time T0, horizon
  HORIZON forward, classical RK4 with fixed step STEP (defaults 2 s, 1 s, 0.005 s);
* velocity by trilinear interpolation in (t, y, x) of the stored snapshots, either with
  scipy.ndimage.map_coordinates (order=1) or with scipy.interpolate.RegularGridInterpolator
  (method="linear"); both are timed and the faster one is the reference;
* a tracer stops for good when a stage point of its step lies outside the window or in a
  cell with a masked corner (sillage additionally bisects that last step to place the exit;
  that refinement is left out here, as most scripts would).

Tracer-steps are counted as RK4 steps attempted by a tracer (all four stages evaluated),
so rates compare like with like. The arrays are converted to float64 once, outside the
timed region, as the Rust side parses its data outside its timed region.

Run with threads pinned to one core for a per-core figure (tests/bench/run-transport.sh):
  OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1 \\
    tests/.venv/bin/python tests/bench/transport_numpy.py [--data F] [--repeats N]
    [--check positions.npz]
With --check, final positions from sillage (crate/examples/transport_bench.rs
--positions) are compared with this script's for tracers that completed in both.
Prints one JSON line per method.
"""

import argparse
import json
import pathlib
import time

import numpy as np
from scipy.interpolate import RegularGridInterpolator
from scipy.ndimage import map_coordinates

ROOT = pathlib.Path(__file__).resolve().parents[2]
EDGE_TOL = 1e-9  # cells, as sillage's gridded field


class Problem:
    def __init__(self, path, nx, ny, t0, horizon, step):
        d = np.load(path)
        self.x, self.y, self.t = d["x"], d["y"], d["t"]
        self.u = d["u"].astype(np.float64)
        self.v = d["v"].astype(np.float64)
        mask = d["mask"] if "mask" in d.files else np.zeros(self.u.shape[1:], bool)
        # A cell has data when its four corners do.
        good = ~mask
        self.cell_ok = good[:-1, :-1] & good[1:, :-1] & good[:-1, 1:] & good[1:, 1:]
        self.dx = (self.x[-1] - self.x[0]) / (len(self.x) - 1)
        self.dy = (self.y[-1] - self.y[0]) / (len(self.y) - 1)
        self.dt = (self.t[-1] - self.t[0]) / (len(self.t) - 1)
        gx = np.linspace(self.x[0], self.x[-1], nx)
        gy = np.linspace(self.y[0], self.y[-1], ny)
        self.px0, self.py0 = [a.ravel() for a in np.meshgrid(gx, gy)]
        self.nx, self.ny = nx, ny
        self.t0, self.horizon = t0, horizon
        self.n = int(np.ceil(abs(horizon) / step * (1 - 1e-12)))
        self.h = horizon / self.n

    def valid(self, px, py, t):
        """Points with data: inside the window and the time range, in an unmasked cell."""
        fx = (px - self.x[0]) / self.dx
        fy = (py - self.y[0]) / self.dy
        nxd, nyd = len(self.x), len(self.y)
        inside = (fx >= -EDGE_TOL) & (fx <= nxd - 1 + EDGE_TOL)
        inside &= (fy >= -EDGE_TOL) & (fy <= nyd - 1 + EDGE_TOL)
        inside &= (t >= self.t[0]) & (t <= self.t[-1])
        i = np.clip(np.floor(fx), 0, nxd - 2).astype(np.intp)
        j = np.clip(np.floor(fy), 0, nyd - 2).astype(np.intp)
        return inside & self.cell_ok[j, i], fx, fy

    def sampler_map_coordinates(self):
        u, v = self.u, self.v

        def sample(px, py, t):
            ok, fx, fy = self.valid(px, py, t)
            coords = np.empty((3, px.size))
            coords[0] = (t - self.t[0]) / self.dt
            coords[1] = fy
            coords[2] = fx
            a = map_coordinates(u, coords, order=1, mode="nearest", prefilter=False)
            b = map_coordinates(v, coords, order=1, mode="nearest", prefilter=False)
            return a, b, ok

        return sample

    def sampler_regular_grid(self):
        uv = np.stack([self.u, self.v], axis=-1)
        rgi = RegularGridInterpolator(
            (self.t, self.y, self.x), uv, method="linear", bounds_error=False, fill_value=0.0
        )

        def sample(px, py, t):
            ok, _, _ = self.valid(px, py, t)
            w = rgi(np.column_stack((np.full(px.size, t), py, px)))
            return w[:, 0], w[:, 1], ok

        return sample

    def advect(self, sample):
        """Vectorised RK4 over the tracers still running; returns positions, status, steps."""
        px, py = self.px0.copy(), self.py0.copy()
        ok0 = sample(px, py, self.t0)[2]
        status = np.where(ok0, 0, 2).astype(np.uint8)  # 0 complete, 1 exited, 2 masked
        active = np.flatnonzero(ok0)
        steps = 0
        h = self.h
        for s in range(self.n):
            if active.size == 0:
                break
            t = self.t0 + s * h
            x, y = px[active], py[active]
            k1u, k1v, ok = sample(x, y, t)
            k2u, k2v, ok2 = sample(x + 0.5 * h * k1u, y + 0.5 * h * k1v, t + 0.5 * h)
            k3u, k3v, ok3 = sample(x + 0.5 * h * k2u, y + 0.5 * h * k2v, t + 0.5 * h)
            k4u, k4v, ok4 = sample(x + h * k3u, y + h * k3v, t + h)
            ok &= ok2 & ok3 & ok4
            steps += active.size
            px[active] = np.where(ok, x + h / 6 * (k1u + 2 * k2u + 2 * k3u + k4u), x)
            py[active] = np.where(ok, y + h / 6 * (k1v + 2 * k2v + 2 * k3v + k4v), y)
            status[active[~ok]] = 1
            active = active[ok]
        return px, py, status, steps


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--data", default=str(ROOT / "demo-fields" / "fin-wake.npz"))
    ap.add_argument("--grid", default="256x128")
    ap.add_argument("--t0", type=float, default=2.0)
    ap.add_argument("--horizon", type=float, default=1.0)
    ap.add_argument("--step", type=float, default=0.005)
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--check", help="sillage final positions (.npz) to compare with")
    a = ap.parse_args()
    nx, ny = (int(v) for v in a.grid.lower().split("x"))
    prob = Problem(a.data, nx, ny, a.t0, a.horizon, a.step)
    for name, make in [
        ("map_coordinates", prob.sampler_map_coordinates),
        ("RegularGridInterpolator", prob.sampler_regular_grid),
    ]:
        sample = make()
        times = []
        for _ in range(max(1, a.repeats)):
            start = time.perf_counter()
            px, py, status, steps = prob.advect(sample)
            times.append(time.perf_counter() - start)
        out = {
            "kind": "flow_map",
            "method": name,
            "tracer_steps": steps,
            "best_s": min(times),
            "median_s": float(np.median(times)),
            "runs": len(times),
            "steps_per_s": steps / min(times),
            "complete": int((status == 0).sum()),
            "exited": int((status == 1).sum()),
            "masked": int((status == 2).sum()),
        }
        if a.check:
            r = np.load(a.check)
            both = (r["status"].ravel() == 0) & (status == 0)
            dev = np.hypot(r["x"].ravel() - px, r["y"].ravel() - py)[both]
            out["check_both_complete"] = int(both.sum())
            out["check_max_position_difference"] = float(dev.max()) if dev.size else None
            out["check_status_agree"] = float((r["status"].ravel() == status).mean())
        print(json.dumps(out), flush=True)


if __name__ == "__main__":
    main()
