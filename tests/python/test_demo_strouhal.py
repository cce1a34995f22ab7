"""The committed fin-wake demo (demo-fields/fin-wake.npz) checked with numpy alone.

The shedding frequency is estimated from the data the way a user would (spectrum of the
transverse velocity in the wake, and independently from zero crossings), turned into a
Strouhal number St = f D / U∞, and compared with the published St–Re fits for a circular
cylinder, allowing for the channel's confinement. Scenario and parameters:
demo-fields/README.md.
"""

import pathlib

import numpy as np
import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo-fields"
NPZ = DEMO / "fin-wake.npz"
CSV_DIR = DEMO / "fin-wake-csv"

# Kinematic viscosity of water at about 20 °C, m²/s (common practice).
WATER_VISCOSITY = 1.0e-6
# Confinement raises St. Allowance above the unconfined fits: +8 % measured with the same
# lattice-Boltzmann recipe at the same 12.5 % blockage (METHODS.md §5, computed while
# planning, Re = 100), plus 2 % for the move to Re = 150 and for the frequency estimate.
# demo-fields/README.md lists the generator's own blockage study behind this margin.
CONFINEMENT_ALLOWANCE = 0.08 + 0.02


def strouhal_roshko(re):
    """Roshko 1954, NACA Report 1191: St = 0.212 (1 − 21.2/Re), 50 < Re < 150."""
    return 0.212 * (1.0 - 21.2 / re)


def strouhal_williamson(re):
    """Williamson 1988, Phys. Fluids 31:2742: St = −3.3265/Re + 0.1816 + 1.6e-4 Re,
    49 < Re < 178."""
    return -3.3265 / re + 0.1816 + 1.6e-4 * re


@pytest.fixture(scope="module")
def demo():
    with np.load(NPZ) as d:
        return {k: d[k] for k in d.files}


def wake_points(d, x_range, half_width):
    """Unmasked vectors with x in x_range (in D) and |y| < half_width (in D)."""
    diameter = float(d["fin_diameter"])
    X, Y = np.meshgrid(d["x"], d["y"])
    return (
        (X > x_range[0] * diameter)
        & (X < x_range[1] * diameter)
        & (np.abs(Y) < half_width * diameter)
        & ~d["mask"]
    )


def spectral_frequency(d):
    """Peak of the summed power spectrum of v over wake points, 3–10 D downstream.

    Each point's series has its mean removed and a Hann window applied (tames leakage from
    the non-integer number of periods), is zero-padded 64× (interpolates the spectrum
    between the 1/T bins) and the peak is refined by a parabola through the log-power of
    the three highest bins (exact for a Gaussian peak; the Hann main lobe is close to one).
    Summing power over ~650 points averages out the white noise and the spurious vectors,
    which spread their power over all frequencies.
    """
    t, v = d["t"], d["v"].astype(np.float64)
    dt = t[1] - t[0]
    series = v[:, wake_points(d, (3.0, 10.0), 1.0)]
    series = series - series.mean(axis=0)
    window = np.hanning(len(t))[:, None]
    n_fft = 64 * len(t)
    power = (np.abs(np.fft.rfft(series * window, n=n_fft, axis=0)) ** 2).sum(axis=1)
    freqs = np.fft.rfftfreq(n_fft, dt)
    k = int(np.argmax(power[1:])) + 1
    a, b, c = np.log(power[k - 1 : k + 2])
    offset = 0.5 * (a - c) / (a - 2.0 * b + c)
    return freqs[k] + offset * (freqs[1] - freqs[0])


def crossing_frequency(d):
    """Mean rate of upward zero crossings of v on the wake centre line 3 D downstream.

    The probe signal is the mean over the 2 rows nearest the centre line of a 3×3 median in
    space (drops isolated spurious vectors); crossings are linearly interpolated between
    snapshots and the frequency is (number of complete cycles) / (their duration).
    """
    x, y, t, v = d["x"], d["y"], d["t"], d["v"].astype(np.float64)
    diameter = float(d["fin_diameter"])
    i = int(np.argmin(np.abs(x - 3.0 * diameter)))
    rows = np.argsort(np.abs(y))[:2]
    signal = np.zeros(len(t))
    for j in rows:
        patch = v[:, j - 1 : j + 2, i - 1 : i + 2].reshape(len(t), 9)
        signal += np.median(patch, axis=1) / len(rows)
    signal -= signal.mean()
    up = np.nonzero((signal[:-1] < 0.0) & (signal[1:] >= 0.0))[0]
    crossings = t[up] + (t[up + 1] - t[up]) * (-signal[up]) / (signal[up + 1] - signal[up])
    return (len(crossings) - 1) / (crossings[-1] - crossings[0])


def reynolds(d):
    return float(d["free_stream_speed"]) * float(d["fin_diameter"]) / WATER_VISCOSITY


def test_layout_and_mask(demo):
    nt, ny, nx = demo["u"].shape
    assert demo["v"].shape == (nt, ny, nx)
    assert (len(demo["t"]), len(demo["y"]), len(demo["x"])) == (nt, ny, nx)
    assert demo["mask"].shape == (ny, nx) and demo["mask"].dtype == bool
    assert nt >= 200, f"{nt} snapshots, at least 200 expected"
    # Axes ascend, times are regular (one acquisition rate).
    for axis in ("x", "y", "t"):
        assert np.all(np.diff(demo[axis]) > 0.0), axis
    dt = np.diff(demo["t"])
    np.testing.assert_allclose(dt, dt[0], rtol=1e-9)
    # The fin is masked (vectors whose centre lies inside it) and masked values are 0.
    X, Y = np.meshgrid(demo["x"], demo["y"])
    inside = np.hypot(X, Y) <= 0.5 * float(demo["fin_diameter"]) + 1e-12
    np.testing.assert_array_equal(demo["mask"], inside)
    assert np.all(demo["u"][:, demo["mask"]] == 0.0)
    assert np.all(demo["v"][:, demo["mask"]] == 0.0)
    assert np.all(np.isfinite(demo["u"])) and np.all(np.isfinite(demo["v"]))
    assert str(demo["length_unit"]) == "m" and str(demo["time_unit"]) == "s"


def test_reynolds_number_is_150(demo):
    assert reynolds(demo) == pytest.approx(150.0, rel=1e-9)


def test_frequency_estimates_agree(demo):
    # Two independent estimators on the same data; 1 % covers the zero-crossing estimate's
    # noise over ~10 cycles sampled 22 times per cycle.
    f_spec = spectral_frequency(demo)
    f_cross = crossing_frequency(demo)
    assert f_cross == pytest.approx(f_spec, rel=0.01), (f_spec, f_cross)


def test_strouhal_in_published_range(demo):
    re = reynolds(demo)
    # Validity of both fits (Roshko: 50–150, Williamson: 49–178); 1e-9 absorbs rounding.
    assert 50.0 < re <= 150.0 * (1.0 + 1e-9)
    fits = (strouhal_roshko(re), strouhal_williamson(re))
    lower = min(fits)  # confinement only raises St: no allowance downwards
    upper = max(fits) * (1.0 + CONFINEMENT_ALLOWANCE)
    st = spectral_frequency(demo) * float(demo["fin_diameter"]) / float(demo["free_stream_speed"])
    print(f"Re = {re:.1f}, St = {st:.4f}, unconfined fits {fits[0]:.4f} / {fits[1]:.4f}, "
          f"accepted [{lower:.4f}, {upper:.4f}]")
    assert lower <= st <= upper, (st, lower, upper)


def test_record_spans_eight_periods(demo):
    t = demo["t"]
    duration = t[-1] - t[0] + (t[1] - t[0])
    periods = duration * spectral_frequency(demo)
    assert periods >= 8.0, f"{periods:.2f} shedding periods recorded"


def test_spurious_vector_share(demo):
    """Vectors far from the median of their 8 neighbours (the normalized median test's
    idea, Westerweel & Scarano 2005, Exp. Fluids 39:1096, with a plain threshold here):
    the generator draws 1.5 % spurious vectors; a fifth of them lock at zero and some
    uniform ones land near the true value, so a little less than 1.5 % is detectable
    (1.46 % when written); the check asks for the 1–2 % the README states.
    """
    u, v, mask = demo["u"].astype(np.float64), demo["v"].astype(np.float64), demo["mask"]
    U = float(demo["free_stream_speed"])
    nt, ny, nx = u.shape

    def residual(a):
        pad = np.pad(a, ((0, 0), (1, 1), (1, 1)), mode="edge")
        neighbours = [pad[:, 1 + dj : 1 + dj + ny, 1 + di : 1 + di + nx]
                      for dj in (-1, 0, 1) for di in (-1, 0, 1) if (dj, di) != (0, 0)]
        return np.abs(a - np.median(np.stack(neighbours), axis=0))

    # 0.3 U∞ is ~18 noise standard deviations (1.7 % of U∞) yet well below the typical
    # spurious error (uniform over ±2 U∞).
    bad = (residual(u) > 0.3 * U) | (residual(v) > 0.3 * U)
    interior = ~mask.copy()
    interior[[0, -1], :] = False
    interior[:, [0, -1]] = False
    # Leave out the fin's neighbourhood, where real gradients are steep.
    X, Y = np.meshgrid(demo["x"], demo["y"])
    interior &= np.hypot(X, Y) > 1.5 * float(demo["fin_diameter"])
    share = bad[:, interior].mean()
    assert 0.01 <= share <= 0.02, f"{100 * share:.2f} % outliers detected"


def test_csv_snapshots_match_the_archive(demo):
    files = sorted(CSV_DIR.glob("fin-wake-*.csv"))
    assert 5 <= len(files) <= 10
    assert [f.name for f in files] == [f"fin-wake-{k:04d}.csv" for k in range(1, len(files) + 1)]
    ny, nx = demo["mask"].shape
    for k, f in enumerate(files):
        header = f.read_text().splitlines()[0].lower()
        assert "t [" not in header and "time" not in header, header
        table = np.genfromtxt(f, delimiter=",", names=True)
        u = table[table.dtype.names[2]].reshape(ny, nx)
        valid = table[table.dtype.names[4]].reshape(ny, nx) == 1
        np.testing.assert_array_equal(valid, ~demo["mask"])
        np.testing.assert_array_equal(u[valid].astype(np.float32), demo["u"][k][valid])
