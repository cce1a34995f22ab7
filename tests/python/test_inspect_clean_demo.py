"""`sillage inspect` and `sillage clean` on the committed demo, checked against numpy.

numpy reads the same .npz independently (the reference); the CLI's summary must agree with
what numpy computes from the arrays, and cleaning must behave as the normalized median test
promises on data whose spurious-vector rate the generator states (demo-fields/README.md).
"""

import numpy as np
import pytest

from conftest import ROOT

DEMO = ROOT / "demo-fields" / "fin-wake.npz"


@pytest.fixture(scope="module")
def demo():
    with np.load(DEMO) as z:
        return {k: z[k] for k in z.files}


def test_inspect_summary_matches_numpy(cli, demo):
    s = cli.inspect(DEMO)
    x, y, t, u, v, mask = (demo[k] for k in ("x", "y", "t", "u", "v", "mask"))
    assert (s["nx"], s["ny"], s["nt"]) == (x.size, y.size, t.size)
    assert s["x0"] == pytest.approx(x[0], rel=1e-12)
    assert s["dx"] == pytest.approx((x[-1] - x[0]) / (x.size - 1), rel=1e-9)
    assert s["y0"] == pytest.approx(y[0], rel=1e-12)
    assert s["dy"] == pytest.approx((y[-1] - y[0]) / (y.size - 1), rel=1e-9)
    assert s["t"] == pytest.approx(t.tolist(), rel=1e-12)
    assert s["dt_mean"] == pytest.approx(np.diff(t).mean(), rel=1e-9)
    assert s["masked_cells"] == int(mask.sum())
    assert s["gaps"] == int(np.isnan(u[:, ~mask]).sum())
    speed = np.hypot(u, v)[:, ~mask].astype(np.float64)
    assert s["speed_mean"] == pytest.approx(speed.mean(), rel=1e-5)
    assert s["speed_max"] == pytest.approx(speed.max(), rel=1e-6)
    assert (s["length_unit"], s["time_unit"], s["velocity_unit"]) == ("m", "s", "m/s")


def test_inspect_text_table_prints_units_and_counts(cli):
    out = cli.run("inspect", DEMO).stdout
    assert "100 × 40 vectors" in out or "× 40 vectors" in out
    assert "m/s" in out and "outliers" in out


def test_clean_demo_replaces_about_the_seeded_spurious_fraction(cli, demo, tmp_path):
    """The generator seeds 1–2 % spurious vectors (demo-fields/README.md); the test must
    find about that many, and the cleaned field must be smoother: the fraction of vectors
    that still fail a fresh test falls by at least a factor of 10."""
    out = tmp_path / "clean.npz"
    report = tmp_path / "report.json"
    cli.run("clean", DEMO, "--out", out, "--report", report)
    before = cli.inspect(DEMO)
    after = cli.inspect(out)
    frac_before = before["outliers"] / before["valid_vectors"]
    frac_after = after["outliers"] / after["valid_vectors"]
    assert 0.01 <= frac_before <= 0.03, frac_before
    assert frac_after < frac_before / 10, (frac_before, frac_after)
    with np.load(out) as z:
        assert z["u"].shape == demo["u"].shape
        assert np.array_equal(z["mask"], demo["mask"])
        # Masked cells are never filled (DESIGN: the mask is not data).
        assert np.all(z["u"][:, z["mask"]] == 0) and np.all(z["v"][:, z["mask"]] == 0)
        # Unflagged vectors are left exactly as they were.
        changed = (z["u"] != demo["u"]) | (z["v"] != demo["v"])
        assert changed[:, ~demo["mask"]].mean() < 0.05


def test_convert_to_npy_set_reads_in_numpy_and_back(cli, demo, tmp_path):
    """A folder of .npy files, one per canonical array: numpy reads each (the reference),
    and sillage reads the set back to the same summary."""
    folder = tmp_path / "arrays"
    cli.run("convert", DEMO, "--out", folder)
    for name in ("x", "y", "t", "u", "v", "mask"):
        arr = np.load(folder / f"{name}.npy")
        np.testing.assert_array_equal(arr, demo[name])
    again = cli.inspect(*sorted(folder.glob("*.npy")))
    first = cli.inspect(DEMO)
    for key in ("nx", "ny", "nt", "masked_cells", "gaps", "speed_max"):
        assert again[key] == first[key], key
