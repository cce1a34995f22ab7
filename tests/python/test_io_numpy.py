"""The readers and writers checked against numpy, the reference implementation of the
.npy/.npz formats: numpy writes the files (np.save, np.savez, np.savez_compressed,
np.savetxt), the sillage CLI converts them to the canonical .npz, and numpy reads the result
back. The external source of every check is numpy itself; the VTK image data output is
checked with a small parser written here from the VTK XML file-format description.
"""

import xml.etree.ElementTree as ET

import numpy as np
import pytest

NX, NY, NT = 7, 5, 4


def reference(nt=NT, dtype=np.float32):
    """A small series: x, y axes, times, and u, v (nt, ny, nx) with distinct values."""
    x = 0.002 * np.arange(NX) - 0.004
    y = 0.003 * np.arange(NY) + 0.01
    t = 0.05 * np.arange(nt)
    k, j, i = np.meshgrid(np.arange(nt), np.arange(NY), np.arange(NX), indexing="ij")
    u = (np.sin(0.7 * i + 0.3 * j) + 0.1 * k).astype(dtype)
    v = (np.cos(0.2 * i - 0.5 * j) * (1 + k)).astype(dtype)
    return x, y, t, u, v


def load(path):
    with np.load(path) as z:
        return {name: z[name] for name in z.files}


def save_set(folder, **arrays):
    folder.mkdir(exist_ok=True)
    for name, a in arrays.items():
        np.save(folder / f"{name}.npy", a)
    return folder


def assert_series(out, x, y, t, u, v, velocity_rtol=0.0):
    """The canonical output equals the reference: float32 velocities exactly, unless a unit
    conversion happened in float32 (then within `velocity_rtol`)."""
    np.testing.assert_allclose(out["x"], x, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(out["y"], y, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(out["t"], t, rtol=1e-12, atol=1e-15)
    assert out["u"].shape == u.shape and out["u"].dtype == np.float32
    if velocity_rtol == 0.0:
        np.testing.assert_array_equal(out["u"], u.astype(np.float32))
        np.testing.assert_array_equal(out["v"], v.astype(np.float32))
    else:
        np.testing.assert_allclose(out["u"], u, rtol=velocity_rtol, atol=1e-30)
        np.testing.assert_allclose(out["v"], v, rtol=velocity_rtol, atol=1e-30)


@pytest.mark.parametrize(
    "variant",
    ["float32", "float64", "big-endian", "fortran-order", "int-coordinates"],
)
def test_npy_set_variants(cli, tmp_path, variant):
    x, y, t, u, v = reference()
    if variant == "float64":
        u, v = u.astype(np.float64), v.astype(np.float64)
    elif variant == "big-endian":
        u, v, x = u.astype(">f4"), v.astype(">f8"), x.astype(">f8")
    elif variant == "fortran-order":
        u, v = np.asfortranarray(u), np.asfortranarray(v)
        assert np.isfortran(u)
    elif variant == "int-coordinates":
        x, y = np.arange(NX, dtype=np.int16), np.arange(NY, dtype=">i8") * 2
    folder = save_set(tmp_path / "set", x=x, y=y, t=t, u=u, v=v)
    out = load(cli.convert(folder, out=tmp_path / "out.npz"))
    assert_series(out, x, y, t, u, v)
    assert out["mask"].dtype == np.bool_ and not out["mask"].any()
    assert str(out["length_unit"]) == "m" and str(out["time_unit"]) == "s"
    assert "gaps" not in out


@pytest.mark.parametrize("writer", [np.savez, np.savez_compressed])
def test_npz_with_mask_and_nan_gaps(cli, tmp_path, writer):
    x, y, t, u, v = reference()
    mask = np.zeros((NY, NX), bool)
    mask[2, 3] = mask[2, 4] = True
    u = u.copy()
    u[1, 0, 0] = np.nan  # a missing vector in snapshot 1
    u[:, mask] = np.nan  # masked cells may hold anything
    writer(tmp_path / "in.npz", X=x, Y=y, T=t, U=u, V=v, Mask=mask)
    out = load(cli.convert(tmp_path / "in.npz", out=tmp_path / "out.npz"))
    np.testing.assert_array_equal(out["mask"], mask)
    gaps = np.zeros(u.shape, bool)
    gaps[1, 0, 0] = True
    np.testing.assert_array_equal(out["gaps"], gaps)
    want_u = np.where(gaps | mask, 0, u).astype(np.float32)
    want_v = np.where(gaps | mask, 0, v).astype(np.float32)
    assert_series(out, x, y, t, want_u, want_v)


def test_descending_y_is_flipped(cli, tmp_path):
    x, y, t, u, v = reference()
    np.savez(tmp_path / "in.npz", x=x, y=y[::-1], t=t, u=u[:, ::-1, :], v=v[:, ::-1, :])
    out = load(cli.convert(tmp_path / "in.npz", out=tmp_path / "out.npz"))
    assert_series(out, x, y, t, u, v)


@pytest.mark.parametrize("indexing", ["xy", "ij"])
def test_meshgrid_coordinates(cli, tmp_path, indexing):
    x, y, t, u, v = reference(nt=1)
    X, Y = np.meshgrid(x, y, indexing=indexing)
    if indexing == "xy":
        U, V = u[0], v[0]
    else:  # matrix indexing: arrays stored (nx, ny)
        U, V = u[0].T, v[0].T
    np.savez(tmp_path / "in.npz", x=X, y=Y, u=U, v=V)
    out = load(cli.convert(tmp_path / "in.npz", out=tmp_path / "out.npz"))
    assert_series(out, x, y, [0.0], u, v)


def test_units_and_dt_options(cli, tmp_path):
    x, y, t, u, v = reference()
    # Lengths in mm (file) and times from --dt in ms (option): SI output.
    np.savez(tmp_path / "mm.npz", x=x * 1e3, y=y * 1e3, u=u, v=v, length_unit=np.array("mm"))
    proc = cli.run("convert", tmp_path / "mm.npz", "--out", tmp_path / "x.npz", ok=False)
    assert "dt" in proc.stderr.lower() and "4 snapshots" in proc.stderr
    cli.convert(tmp_path / "mm.npz", out=tmp_path / "x.npz", options=["--dt", "2", "--time-unit", "ms"])
    out = load(tmp_path / "x.npz")
    np.testing.assert_allclose(out["x"], x, rtol=1e-12)
    np.testing.assert_allclose(out["t"], 2e-3 * np.arange(NT), rtol=1e-12)
    # u in mm/ms = m/s: unchanged numbers.
    np.testing.assert_allclose(out["u"], u, rtol=1e-6)
    info = cli.inspect(tmp_path / "x.npz")
    assert (info["nx"], info["ny"], info["nt"]) == (NX, NY, NT)
    np.testing.assert_allclose([info["x0"], info["dx"], info["y0"], info["dy"]], [x[0], 0.002, y[0], 0.003], rtol=1e-12)
    np.testing.assert_allclose(info["t"], out["t"], rtol=1e-12)


def test_inspect_counts_mask_and_gaps(cli, tmp_path):
    x, y, t, u, v = reference()
    mask = np.zeros((NY, NX), bool)
    mask[0, :3] = True
    u = u.copy()
    u[2, 4, 4] = np.nan
    u[3, 1, 1] = np.nan
    np.savez_compressed(tmp_path / "in.npz", x=x, y=y, t=t, u=u, v=v, mask=mask)
    info = cli.inspect(tmp_path / "in.npz")
    assert info["masked_cells"] == 3
    assert info["gaps"] == 2
    np.testing.assert_allclose(info["t"], t)


def test_text_tables_written_by_numpy(cli, tmp_path):
    x, y, t, u, v = reference()
    rng = np.random.default_rng(7)
    folder = tmp_path / "csv"
    folder.mkdir()
    X, Y = np.meshgrid(x, y)
    for k in range(NT):
        rows = np.column_stack([X.ravel() * 1e3, Y.ravel() * 1e3, u[k].ravel(), v[k].ravel(), np.full(X.size, t[k])])
        rows = rows[rng.permutation(len(rows))]  # any row order
        # Unpadded numbers: natural order must put frame2 before frame10.
        name = folder / f"frame{[1, 2, 10, 11][k]}.csv"
        np.savetxt(name, rows, delimiter=";", header="X [mm];Y [mm];U (m/s);V (m/s);t [s]", comments="", fmt="%.9g")
    out = load(cli.convert(folder, out=tmp_path / "out.npz"))
    # Velocities in m/s beside coordinates in mm are rescaled twice in float32 (to mm/s for
    # the file's units, then to SI): allow two units in the last place (2 · 2^-23).
    assert_series(out, x, y, t, u, v, velocity_rtol=2.4e-7)


def test_csv_output_reads_back_with_numpy(cli, tmp_path):
    x, y, t, u, v = reference(nt=2)
    u = u.copy()
    u[1, 2, 2] = np.nan
    np.savez(tmp_path / "in.npz", x=x, y=y, t=t, u=u, v=v)
    cli.convert(tmp_path / "in.npz", out=tmp_path / "snap.csv")
    table = np.genfromtxt(tmp_path / "snap_0001.csv", delimiter=",", names=True)
    assert table.dtype.names[:5] == ("x_m", "y_m", "u_ms", "v_ms", "valid")
    X, Y = np.meshgrid(x, y)
    np.testing.assert_allclose(table["x_m"], X.ravel(), rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(table["y_m"], Y.ravel(), rtol=1e-12)
    valid = table["valid"].astype(bool)
    assert not valid[2 * NX + 2] and valid.sum() == NX * NY - 1
    np.testing.assert_array_equal(table["u_ms"][valid].astype(np.float32), u[1].ravel()[valid])
    # The CSV files read back into the same series.
    back = load(cli.convert(tmp_path / "snap_0000.csv", tmp_path / "snap_0001.csv", out=tmp_path / "back.npz"))
    gap = np.isnan(u)
    assert_series(back, x, y, t, np.where(gap, 0, u), np.where(gap, 0, v))


def parse_vti(path):
    """Minimal reader for VTK XML ImageData with raw appended data and UInt64 headers."""
    data = path.read_bytes()
    marker = b'<AppendedData encoding="raw">'
    head, rest = data.split(marker, 1)
    base = rest.index(b"_") + 1
    blob = rest[base:]
    root = ET.fromstring(head + b"</VTKFile>")
    assert root.get("type") == "ImageData" and root.get("header_type") == "UInt64"
    assert root.get("byte_order") == "LittleEndian"
    image = root.find("ImageData")
    types = {"Float32": "<f4", "Float64": "<f8", "UInt8": "u1"}
    arrays = {}
    for da in root.iter("DataArray"):
        assert da.get("format") == "appended"
        off = int(da.get("offset"))
        n = int(np.frombuffer(blob[off : off + 8], "<u8")[0])
        a = np.frombuffer(blob[off + 8 : off + 8 + n], types[da.get("type")])
        comps = int(da.get("NumberOfComponents", "1"))
        arrays[da.get("Name")] = a.reshape(-1, comps) if comps > 1 else a
    extent = [int(s) for s in image.get("WholeExtent").split()]
    origin = [float(s) for s in image.get("Origin").split()]
    spacing = [float(s) for s in image.get("Spacing").split()]
    return extent, origin, spacing, arrays


def test_vti_output(cli, tmp_path):
    x, y, t, u, v = reference(nt=2)
    mask = np.zeros((NY, NX), bool)
    mask[4, 6] = True
    np.savez(tmp_path / "in.npz", x=x, y=y, t=t, u=u, v=v, mask=mask)
    cli.convert(tmp_path / "in.npz", out=tmp_path / "field.vti")
    extent, origin, spacing, arrays = parse_vti(tmp_path / "field_0001.vti")
    assert extent == [0, NX - 1, 0, NY - 1, 0, 0]
    np.testing.assert_allclose(origin[:2], [x[0], y[0]], rtol=1e-12)
    np.testing.assert_allclose(spacing[:2], [0.002, 0.003], rtol=1e-12)
    assert arrays["TimeValue"][0] == pytest.approx(t[1])
    want_u = np.where(mask, 0, u[1]).ravel()  # x index fastest, as VTK point order
    want_v = np.where(mask, 0, v[1]).ravel()
    np.testing.assert_array_equal(arrays["velocity"][:, 0], want_u)
    np.testing.assert_array_equal(arrays["velocity"][:, 1], want_v)
    assert not arrays["velocity"][:, 2].any()
    np.testing.assert_allclose(arrays["speed"], np.hypot(want_u, want_v), rtol=1e-6)
    np.testing.assert_array_equal(arrays["mask"], mask.ravel().astype(np.uint8))


def test_malformed_inputs_are_refused_with_reasons(cli, tmp_path):
    x, y, t, u, v = reference()
    np.savez(tmp_path / "good.npz", x=x, y=y, t=t, u=u, v=v)
    raw = (tmp_path / "good.npz").read_bytes()
    (tmp_path / "cut.npz").write_bytes(raw[: len(raw) // 2])
    err = cli.run("inspect", tmp_path / "cut.npz", ok=False).stderr
    assert "cut.npz" in err and "npz" in err

    cases = {
        "object": np.array([{"a": 1}] * (NX * NY), dtype=object).reshape(NY, NX),
        "complex": u[0].astype(np.complex64),
    }
    for word, bad_u in cases.items():
        folder = tmp_path / word
        folder.mkdir()
        np.save(folder / "x.npy", x)
        np.save(folder / "y.npy", y)
        np.save(folder / "u.npy", bad_u, allow_pickle=True)
        np.save(folder / "v.npy", v[0])
        err = cli.run("inspect", folder, ok=False).stderr
        assert word in err and "u.npy" in err, err

    np.savez(tmp_path / "nov.npz", x=x, y=y, t=t, u=u)
    err = cli.run("inspect", tmp_path / "nov.npz", ok=False).stderr
    assert "'v'" in err and "x, y, t, u" in err

    np.savez(tmp_path / "shape.npz", x=x, y=y, t=t, u=u, v=v[:, :, :-1])
    err = cli.run("inspect", tmp_path / "shape.npz", ok=False).stderr
    assert "shape" in err and "(4, 5, 7)" in err and "(4, 5, 6)" in err
