"""Model sensitivity on the periodic double gyre against an independent numpy/scipy
implementation (issue: "an independent numpy/scipy implementation agrees on a small case").

Flow: Shadden, Lekien & Marsden (2005), Physica D 212:271-304, A = 0.1, eps = 0.25,
omega = 2*pi/10 (parameters from memory, METHODS.md check 5). Perturbation g: the smooth
periodic field of sillage::sensitivity::analytic::Wobble (formula repeated below).
Definitions: Kaszas & Haller (2020), Chaos 30:093132, and METHODS.md section 2.

The reference takes other routes than the core on purpose:
* xi by integrating dxi/dt = grad(f) xi + g with the trajectory (scipy solve_ivp, DOP853,
  rtol 1e-11), not by quadrature of propagators;
* ||grad F_s^t|| from M(t) M(s)^-1 at dense-output times (fine for sigma*T of order 1; the
  core's backward sweep exists for larger values), integrated with scipy.integrate.simpson;
* the strain bound from scipy's cumulative_trapezoid on a grid 10x finer than the core's.
sillage's values come from the example binary crate/examples/sensitivity_probe.rs.
"""

import json
import os
import pathlib
import subprocess

import numpy as np
import pytest
from scipy.integrate import cumulative_trapezoid, simpson, solve_ivp

from conftest import ROOT
from test_ftle_reference import velocity_gradient

AMP = 0.03
W = 2 * np.pi / 10
T0, HORIZON, STEP = 0.0, 5.0, 0.01


def perturbation(t, x, y):
    """g of the Wobble field (sillage::sensitivity::analytic)."""
    return AMP * np.array([np.sin(np.pi * y) * np.cos(W * t + x), 0.5 * np.cos(np.pi * x) * np.sin(W * t)])


def rhs(t, z):
    u, v, g = velocity_gradient(t, z[0], z[1])
    m = z[2:6].reshape(2, 2)
    xi = z[6:8]
    return np.concatenate(([u, v], (g @ m).ravel(), g @ xi + perturbation(t, z[0], z[1])))


def max_strain(g, direction):
    shear = np.hypot(0.5 * (g[0, 0] - g[1, 1]), 0.5 * (g[0, 1] + g[1, 0]))
    return shear + np.sign(direction) * 0.5 * (g[0, 0] + g[1, 1])


def reference(point, horizon):
    t_end = T0 + horizon
    n = int(round(abs(horizon) / STEP)) * 10
    ts = np.linspace(T0, t_end, n + 1)
    sol = solve_ivp(rhs, (T0, t_end), [point[0], point[1], 1, 0, 0, 1, 0, 0],
                    method="DOP853", rtol=1e-11, atol=1e-13, dense_output=True)
    assert sol.success, sol.message
    z = sol.sol(ts)
    m_end = z[2:6, -1].reshape(2, 2)
    norms, gnorm, lam = [], [], []
    for k, s in enumerate(ts):
        p = m_end @ np.linalg.inv(z[2:6, k].reshape(2, 2))
        norms.append(np.linalg.norm(p, 2))
        gnorm.append(np.hypot(*perturbation(s, z[0, k], z[1, k])))
        lam.append(max_strain(velocity_gradient(s, z[0, k], z[1, k])[2], horizon))
    norms, gnorm, lam = map(np.array, (norms, gnorm, lam))
    dt = abs(ts[1] - ts[0])
    # integral of lambda from s to the end: total minus the running integral up to s
    running = cumulative_trapezoid(lam, dx=dt, initial=0.0)
    growth = np.exp(running[-1] - running)
    return {
        "xi": z[6:8, -1],
        "ms": simpson(norms, dx=dt),
        "ms_g": simpson(norms * gnorm, dx=dt),
        "strain_bound": simpson(growth, dx=dt),
        "ftle": np.log(np.linalg.norm(m_end, 2)) / abs(horizon),
    }


def points():
    k = np.arange(1, 13)
    return np.column_stack([0.1 + 1.8 * ((k * 0.618034) % 1.0), 0.1 + 0.8 * ((k * 0.754878) % 1.0)])


@pytest.fixture(scope="module")
def probe():
    exe = os.environ.get("SILLAGE_SENSITIVITY_PROBE")
    if exe is None:
        subprocess.run(["cargo", "build", "-q", "-p", "sillage", "--release", "--example",
                        "sensitivity_probe"], cwd=ROOT, check=True)
        exe = pathlib.Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target")) / "release" / "examples" / "sensitivity_probe"

    def run(horizon):
        req = {"points": points().tolist(), "t0": T0, "horizon": horizon, "step": STEP,
               "amplitude": AMP}
        res = subprocess.run([str(exe)], input=json.dumps(req), capture_output=True, text=True,
                             check=True)
        return json.loads(res.stdout)

    return run


@pytest.mark.parametrize("horizon", [HORIZON, -HORIZON])
def test_double_gyre_agrees_with_scipy(probe, horizon):
    got = probe(horizon)
    worst = {}
    for i, p in enumerate(points()):
        ref = reference(p, horizon)
        for key in ["ms", "ms_g", "strain_bound", "ftle"]:
            rel = abs(got[key][i] - ref[key]) / abs(ref[key])
            worst[key] = max(worst.get(key, 0.0), rel)
        xi_err = np.linalg.norm(np.array(got["xi"][i]) - ref["xi"]) / np.linalg.norm(ref["xi"])
        worst["xi"] = max(worst.get("xi", 0.0), xi_err)
    print(f"\nhorizon {horizon}: worst relative differences {worst}")
    # RK4 with dt = 0.01 and Simpson's rule against DOP853 at 1e-11: agreement to 1e-7 for
    # smooth integrands. |g| has kinks where g passes through zero, which cost Simpson's
    # rule its order there (1e-5); the reference's trapezoid (dt/10) limits the strain
    # bound to ~1e-6.
    for key in ["ms", "xi", "ftle"]:
        assert worst[key] < 1e-7, (key, worst[key])
    assert worst["ms_g"] < 1e-5, worst["ms_g"]
    assert worst["strain_bound"] < 1e-5, worst["strain_bound"]
