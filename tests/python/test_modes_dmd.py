"""DMD through the CLI (`sillage modes --method dmd`) against numpy.

References: numpy.linalg.eigvals of the known linear map that generated the snapshots
(METHODS.md §3 check 11; exact DMD, Tu et al. 2014, J. Comput. Dyn. 1:391); the inward bias
of exact DMD eigenvalues under noise and its removal by total-least-squares DMD (Hemati et
al. 2017, Theor. Comput. Fluid Dyn. 31:349), measured here.
"""

import numpy as np
import pytest

from test_modes_pod import load, write_series


def field_from_states(z, nx, ny, seed):
    """Snapshots q_k = P z_k on an nx-by-ny grid, P a fixed integer matrix (so that the
    float32 storage of the canonical layout is exact when z_k is dyadic)."""
    rng = np.random.default_rng(seed)
    n = 2 * nx * ny
    P = rng.integers(-3, 4, size=(n, z.shape[0])).astype(np.float64)
    q = P @ z
    nt = z.shape[1]
    u = q[: nx * ny].T.reshape(nt, ny, nx)
    v = q[nx * ny :].T.reshape(nt, ny, nx)
    return u, v


def dmd_eigs(out):
    return out["eigenvalues_re"] + 1j * out["eigenvalues_im"]


def match(a, b):
    """Pairs each value of b with the nearest of a; returns the largest distance."""
    return max(np.min(np.abs(a - x)) for x in b)


def test_eigenvalues_of_known_linear_map(cli, tmp_path):
    # A_r = blockdiag(C5, C3 / 2): C_p the cyclic shift (eigenvalues exp(2 pi i j / p)).
    # Dyadic states keep the float32 data exact, so DMD sees the map without rounding.
    C5 = np.roll(np.eye(5), 1, axis=0)
    C3 = np.roll(np.eye(3), 1, axis=0)
    A = np.zeros((8, 8))
    A[:5, :5] = C5
    A[5:, 5:] = 0.5 * C3
    z = np.zeros((8, 16))
    z[:, 0] = [1, 2, -1, 3, 0, 2, -1, 1]
    for k in range(15):
        z[:, k + 1] = A @ z[:, k]
    nx, ny, dt = 12, 9, 0.05
    u, v = field_from_states(z, nx, ny, seed=2)
    assert np.array_equal(u.astype(np.float32).astype(np.float64), u)  # exact storage
    path = write_series(tmp_path / "lin.npz", np.arange(nx) * 1.0, np.arange(ny) * 1.0,
                        np.arange(16) * dt, u, v)
    expected = np.linalg.eigvals(A)  # numpy reference
    for solver in ("svd", "snapshot"):
        out_path = tmp_path / f"dmd_{solver}.npz"
        cli.run("modes", path, "--method", "dmd", "--rank", "8", "--solver", solver, "--out", out_path)
        out = load(out_path)
        mu = dmd_eigs(out)
        assert len(mu) == 8
        # 1e-8 (METHODS.md §3 check 11), both ways round.
        assert match(mu, expected) < 1e-8, (solver, mu)
        assert match(expected, mu) < 1e-8, (solver, mu)
        omega = np.log(expected.astype(complex)) / dt
        got = out["omega_re"] + 1j * out["omega_im"]
        assert match(got, omega) < 1e-8 / dt
        np.testing.assert_allclose(out["frequencies"], out["omega_im"] / (2 * np.pi), rtol=1e-14)
        np.testing.assert_allclose(out["growth_rates"], out["omega_re"], rtol=1e-14)


def noisy_oscillator(tmp_path, sigma, seed, nt=200):
    """One undamped travelling wave (|mu| = 1) plus white noise of std sigma."""
    nx, ny, dt = 24, 16, 0.02
    x = np.linspace(0, 1, nx)
    y = np.linspace(0, 0.6, ny)
    X, Y = np.meshgrid(x, y)
    t = np.arange(nt) * dt
    f = 2.5
    rng = np.random.default_rng(seed)
    ph = 2 * np.pi * (f * t[:, None, None] - 1.5 * X[None])
    u = np.cos(ph) * np.sin(np.pi * Y / 0.6)[None] + sigma * rng.standard_normal((nt, ny, nx))
    v = np.sin(ph) * 0.5 + sigma * rng.standard_normal((nt, ny, nx))
    path = write_series(tmp_path / f"osc_{seed}.npz", x, y, t, u, v)
    return path, np.exp(2j * np.pi * f * dt)


def test_tls_reduces_noise_bias(cli, tmp_path):
    """Exact DMD pulls |mu| inside the unit circle under noise; TLS DMD removes most of it
    (Hemati et al. 2017). Bias = mean over 6 noise draws of |mu| - 1 for the pair."""
    bias = {"exact": [], "tls": []}
    for seed in range(6):
        path, mu_true = noisy_oscillator(tmp_path, sigma=0.5, seed=seed)
        for variant in bias:
            out_path = tmp_path / f"{variant}_{seed}.npz"
            cli.run("modes", path, "--method", "dmd", "--rank", "2", "--variant", variant, "--out", out_path)
            mu = dmd_eigs(load(out_path))
            # Frequency right in both.
            assert match(mu, [mu_true, np.conj(mu_true)]) < 0.05
            bias[variant].append(np.mean(np.abs(mu)) - 1.0)
    # Gavish & Donoho 2014 (IEEE Trans. Inf. Theory 60:5040): the optimal hard threshold
    # (the default rank rule) finds the signal's rank 2 under white noise.
    cli.run("modes", path, "--method", "dmd", "--out", tmp_path / "oht.npz")
    assert len(load(tmp_path / "oht.npz")["eigenvalues_re"]) == 2
    b_exact, b_tls = np.mean(bias["exact"]), np.mean(bias["tls"])
    print(f"noise bias of |mu|: exact {b_exact:.3e}, TLS {b_tls:.3e}")
    assert b_exact < 0  # inward, as the theory says
    assert abs(b_tls) < 0.2 * abs(b_exact), (b_exact, b_tls)


def shedding_frequency(d):
    """Peak of the summed power spectrum of v (mean removed, Hann window, 64x zero padding,
    parabolic refinement of the log-power peak): common practice."""
    t, v = d["t"], d["v"][:, ~d["mask"]].astype(np.float64)
    v = v - v.mean(axis=0)
    n_fft = 64 * len(t)
    p = (np.abs(np.fft.rfft(v * np.hanning(len(t))[:, None], n=n_fft, axis=0)) ** 2).sum(axis=1)
    freqs = np.fft.rfftfreq(n_fft, t[1] - t[0])
    k = int(np.argmax(p[1:])) + 1
    a, b, c = np.log(p[k - 1 : k + 2])
    return freqs[k] + 0.5 * (a - c) / (a - 2 * b + c) * (freqs[1] - freqs[0])


@pytest.fixture(scope="module")
def clean_demo(cli, tmp_path_factory):
    from conftest import ROOT

    path = tmp_path_factory.mktemp("demo") / "clean.npz"
    cli.run("clean", ROOT / "demo-fields" / "fin-wake.npz", "--out", path)
    return path


def test_demo_dmd_dominant_frequency_is_shedding(cli, clean_demo, tmp_path):
    """Demo wake: the largest-amplitude oscillating DMD mode is at the shedding frequency
    found from the data by spectral analysis (METHODS.md §5: |mu| ~ 1 at the shedding
    frequency)."""
    d = load(clean_demo)
    f_data = shedding_frequency(d)
    for variant in ("exact", "tls"):
        out_path = tmp_path / f"demo_{variant}.npz"
        cli.run("modes", clean_demo, "--method", "dmd", "--variant", variant, "--out", out_path)
        out = load(out_path)
        amp = np.hypot(out["amplitudes_re"], out["amplitudes_im"])
        osc = np.abs(out["frequencies"]) > 0.05 * f_data
        f_dmd = abs(out["frequencies"][osc][np.argmax(amp[osc])])
        print(f"{variant}: DMD {f_dmd:.4f} Hz, spectrum {f_data:.4f} Hz")
        # Within 1 % (a tenth of the record's 1/T = 0.17 Hz bin is 0.9 %).
        assert abs(f_dmd - f_data) < 0.01 * f_data
        mu = np.hypot(out["eigenvalues_re"], out["eigenvalues_im"])[osc][np.argmax(amp[osc])]
        assert abs(mu - 1) < 1e-3
