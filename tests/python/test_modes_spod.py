"""SPOD through the CLI (`sillage modes --method spod`, `sillage select ... spod(f=..)`).

References: scipy.signal.welch (Hann window, nperseg = N_f, noverlap = N_f/2, detrend
False, two-sided, 'density' scaling) for the trace identity of METHODS.md §3 check 12
(Towne, Schmidt & Colonius 2018, JFM 847:821); a forcing on a frequency bin peaks on that
bin [D]; band reconstruction by oblique projection (Nekkanti & Schmidt 2021, JFM 926:A26).
"""

import numpy as np
from scipy.signal import welch

from test_modes_dmd import shedding_frequency, clean_demo  # noqa: F401 (fixture)
from test_modes_pod import load, trapezoid_weights, write_series


def synthetic(tmp_path, nt=256, dt=0.01, f0=None, amp=1.0, sigma=0.3, seed=3):
    nx, ny = 20, 12
    x = np.linspace(0, 1, nx)
    y = np.linspace(0, 0.5, ny)
    X, Y = np.meshgrid(x, y)
    t = np.arange(nt) * dt
    rng = np.random.default_rng(seed)
    u = 0.7 + sigma * rng.standard_normal((nt, ny, nx))
    v = sigma * rng.standard_normal((nt, ny, nx))
    if f0 is not None:
        ph = 2 * np.pi * (f0 * t[:, None, None] - 2.0 * X[None])
        u = u + amp * np.cos(ph) * np.sin(np.pi * Y / 0.5)
        v = v + amp * 0.5 * np.sin(ph)
    path = write_series(tmp_path / f"syn_{seed}.npz", x, y, t, u, v)
    return path


def test_trace_identity_against_welch(cli, tmp_path):
    path = synthetic(tmp_path, f0=7.8125, amp=0.5)
    out_path = tmp_path / "spod.npz"
    cli.run("modes", path, "--method", "spod", "--block", "64", "--out", out_path)
    out = load(out_path)
    d = load(path)
    w = trapezoid_weights(d["x"], d["y"], np.zeros(d["u"].shape[1:], bool))
    total = 0.0
    for comp in ("u", "v"):
        a = d[comp].astype(np.float64)
        a = a - a.mean(axis=0)
        f, p = welch(a, fs=1 / 0.01, window="hann", nperseg=64, noverlap=32, detrend=False,
                     return_onesided=False, scaling="density", axis=0)
        total = total + (p * w[None]).sum(axis=(1, 2))
    nl = 64 // 2 + 1
    np.testing.assert_allclose(out["frequencies"], np.abs(f[:nl]), rtol=1e-12)
    # Sum of SPOD eigenvalues = weighted trace of the Welch CSD, to round-off.
    np.testing.assert_allclose(out["energies"].sum(axis=1), total[:nl], rtol=1e-10)
    assert int(out["blocks"]) == (256 - 32) // 32


def test_forcing_on_a_bin_peaks_there(cli, tmp_path):
    nf, dt = 64, 0.01
    l0 = 9
    f0 = l0 / (nf * dt)  # exactly on bin 9
    path = synthetic(tmp_path, f0=f0, amp=0.3, sigma=0.2, seed=8)
    out_path = tmp_path / "spod.npz"
    cli.run("modes", path, "--method", "spod", "--block", str(nf), "--out", out_path)
    out = load(out_path)
    lead = out["energies"][:, 0]
    assert int(np.argmax(lead)) == l0, lead
    # The leading mode there is the forcing's shape: |<psi, phi>_W| / |phi|_W close to 1.
    d = load(path)
    X, Y = np.meshgrid(d["x"], d["y"])
    phi_u = np.exp(-2j * np.pi * 2.0 * X) * np.sin(np.pi * Y / 0.5)
    phi_v = 0.5 * np.exp(-2j * np.pi * 2.0 * X) / 1j
    w = trapezoid_weights(d["x"], d["y"], np.zeros(X.shape, bool))
    psi_u = out["modes_u_re"][l0, 0] + 1j * out["modes_u_im"][l0, 0]
    psi_v = out["modes_v_re"][l0, 0] + 1j * out["modes_v_im"][l0, 0]
    inner = np.sum(w * (np.conj(psi_u) * phi_u + np.conj(psi_v) * phi_v))
    norm = np.sqrt(np.sum(w * (np.abs(phi_u) ** 2 + np.abs(phi_v) ** 2)))
    assert abs(inner) / norm > 0.95


def test_band_reconstruction_recovers_the_oscillation(cli, tmp_path):
    """A clean travelling wave on a bin: the SPOD band rebuilds the fluctuation field."""
    nf, dt = 64, 0.01
    f0 = 8 / (nf * dt)
    path = synthetic(tmp_path, f0=f0, amp=1.0, sigma=0.0, seed=1)
    out = tmp_path / "band.npz"
    cli.run("select", path, "--keep", f"mean + spod(f={f0 - 1}..{f0 + 1})", "--out", out)
    d, r = load(path), load(out)
    err = np.sqrt(np.mean((r["u"] - d["u"]) ** 2 + (r["v"] - d["v"]) ** 2))
    assert err < 1e-5, err  # float32 storage


def test_demo_spod_peak_is_the_shedding_bin(cli, clean_demo, tmp_path):  # noqa: F811
    d = load(clean_demo)
    f_data = shedding_frequency(d)
    out_path = tmp_path / "spod.npz"
    cli.run("modes", clean_demo, "--method", "spod", "--out", out_path)
    out = load(out_path)
    lead = out["energies"][:, 0]
    f = out["frequencies"]
    peak = f[1:][np.argmax(lead[1:])]
    # The bin nearest to the shedding frequency found from the data.
    assert peak == f[np.argmin(np.abs(f - f_data))], (peak, f_data, f)
