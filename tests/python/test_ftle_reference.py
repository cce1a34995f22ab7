"""FTLE of the time-periodic double gyre against an independent scipy reference.

Source of the flow: Shadden, Lekien & Marsden (2005), Physica D 212:271-304, with
A = 0.1, eps = 0.25, omega = 2*pi/10 (parameter set from memory, METHODS.md check 5).
Reference: scipy.integrate.solve_ivp (DOP853, rtol 1e-10, atol 1e-12) on the flow and its
variational equation dM/dt = grad(u) M, M(t0) = I; sigma = ln(s1)/|T| with s1 from
numpy.linalg.svd. sillage's values come from the example binary crate/examples/ftle_probe.rs.

Run: tests/.venv/bin/python -m pytest tests/python/test_ftle_reference.py -s
(SILLAGE_PROBE=path/to/ftle_probe skips the cargo build.)
"""

import json
import os
import pathlib
import subprocess

import numpy as np
import pytest
from scipy.integrate import solve_ivp

ROOT = pathlib.Path(__file__).resolve().parents[2]
A, EPS, OMEGA = 0.1, 0.25, 2 * np.pi / 10
T0, HORIZON = 0.0, 15.0


def velocity_gradient(t, x, y):
    """Velocity and gradient of the double gyre (formulas of Shadden et al. 2005)."""
    s = EPS * np.sin(OMEGA * t)
    f = s * x * x + (1 - 2 * s) * x
    fx = 2 * s * x + 1 - 2 * s
    fxx = 2 * s
    pa = np.pi * A
    sf, cf = np.sin(np.pi * f), np.cos(np.pi * f)
    sy, cy = np.sin(np.pi * y), np.cos(np.pi * y)
    u = -pa * sf * cy
    v = pa * cf * sy * fx
    g = np.array(
        [
            [-pa * np.pi * cf * fx * cy, pa * np.pi * sf * sy],
            [pa * (-np.pi * sf * fx * fx + cf * fxx) * sy, pa * np.pi * cf * cy * fx],
        ]
    )
    return u, v, g


def rhs(t, z):
    u, v, g = velocity_gradient(t, z[0], z[1])
    m = z[2:].reshape(2, 2)
    return np.concatenate(([u, v], (g @ m).ravel()))


def reference_ftle(points, horizon):
    out = []
    for x, y in points:
        sol = solve_ivp(
            rhs, (T0, T0 + horizon), [x, y, 1, 0, 0, 1], method="DOP853", rtol=1e-10, atol=1e-12
        )
        assert sol.success, sol.message
        s1 = np.linalg.svd(sol.y[2:, -1].reshape(2, 2), compute_uv=False)[0]
        out.append(np.log(s1) / abs(horizon))
    return np.array(out)


def points():
    """24 points spread over the interior of the box (a fixed Halton-like sequence)."""
    k = np.arange(1, 25)
    x = 0.05 + 1.9 * ((k * 0.6180339887498949) % 1.0)
    y = 0.05 + 0.9 * ((k * 0.7548776662466927) % 1.0)
    return np.column_stack([x, y])


@pytest.fixture(scope="module")
def probe():
    exe = os.environ.get("SILLAGE_PROBE")
    if exe is None:
        subprocess.run(
            ["cargo", "build", "-q", "-p", "sillage", "--release", "--example", "ftle_probe"],
            cwd=ROOT,
            check=True,
        )
        exe = pathlib.Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target")) / "release" / "examples" / "ftle_probe"

    def run(request):
        res = subprocess.run(
            [str(exe)], input=json.dumps(request), capture_output=True, text=True, check=True
        )
        return json.loads(res.stdout)

    return run


def request(horizon, integrator, sampled=None):
    return {
        "flow": "periodic_gyre",
        "points": points().tolist(),
        "t0": T0,
        "horizon": horizon,
        "integrator": integrator,
        "sampled": sampled,
    }


TIGHT = {"dormand_prince": {"rtol": 1e-10, "atol": 1e-12, "max_steps": 1000000}}


@pytest.mark.parametrize("horizon", [HORIZON, -HORIZON])
def test_analytic_field_matches_solve_ivp(probe, horizon):
    ref = reference_ftle(points(), horizon)
    got = probe(request(horizon, TIGHT))
    assert all(f == "Full" for f in got["flag"])
    # Both sides integrate to ~1e-10; sigma is stored as f32 (7 digits).
    np.testing.assert_allclose(got["ftle"], ref, rtol=0, atol=2e-6)
    rk4 = probe(request(horizon, {"rk4": {"max_step": 0.01}}))
    np.testing.assert_allclose(rk4["ftle"], ref, rtol=0, atol=1e-4)


def test_sampled_data_refinement(probe):
    """Data sampled from the flow at spacing h (and snapshot interval 0.05): the FTLE error
    against the scipy reference falls as h shrinks. Printed as the refinement study."""
    ref = reference_ftle(points(), HORIZON)
    rows = []
    for space in ["bilinear", "cubic"]:
        errs = []
        for n in [21, 41, 81, 161]:
            h = 1.0 / (n - 1)
            sampled = {
                "nx": 2 * (n - 1) + 1,
                "ny": n,
                "nt": 301,
                "t_end": 15.0,
                "space": space,
                "time": "hermite",
            }
            got = probe(request(HORIZON, {"rk4": {"max_step": 0.01}}, sampled))
            err = np.abs(np.array(got["ftle"]) - ref)
            errs.append((h, np.median(err), err.max()))
        rows.append((space, errs))
    print("\nrefinement study, periodic double gyre, T = 15, 24 points, RK4 dt = 0.01")
    print("interpolant  spacing h   median |err|   max |err|")
    for space, errs in rows:
        for h, med, mx in errs:
            print(f"{space:10s}  {h:8.5f}   {med:11.2e}   {mx:9.2e}")
    for space, errs in rows:
        meds = [e[1] for e in errs]
        assert all(b < a for a, b in zip(meds, meds[1:])), (space, meds)
    # Finest spacing: cubic within 1e-3 (median) of the analytic-field reference.
    assert rows[1][1][-1][1] < 1e-3
