"""Feasibility maps (induct.planning.maps, induct.io.map_files, induct.plot.maps): cells, dipole field, regions, files, axis specs."""

import csv
import math
import sys
import warnings

import numpy as np
import pytest

from planning_reference import direct_response
from induct import InteriorModel, Layer
from induct.constants import MODEL_LIMITS, MU0
from induct.io.map_files import write_map_csv, write_map_files, write_map_netcdf
from induct.planning.maps import AxisSpec, consistency_levels, feasibility_map, parse_axis_spec
from induct.io.measurements import parse_measurements

X_SPEC = "ice shell.thickness_km=2:90:37"
Y_SPEC = "ocean.conductivity_S_per_m=0.05:30:23:log"




@pytest.mark.parametrize(
    "x_spec, y_spec",
    [
        (X_SPEC, Y_SPEC),
        ("ocean.thickness_km=10:250:19", "mantle.conductivity_S_per_m=1e-5:1:17:log"),
    ],
)
def test_map_cells_equal_direct_transfer_calls(ilmare, x_spec, y_spec):
    # Independent path: each sampled cell is rebuilt as its own InteriorModel (with_layer, fill layer
    # recomputed by the model) and evaluated with induct.transfer; tolerance 1e-12 relative.
    period_h = 12.12
    res = feasibility_map(ilmare, x_spec, y_spec, period_h, "amplitude")
    assert res.values.shape == (res.y_values.size, res.x_values.size)
    rng = np.random.default_rng(20261201)
    iy = rng.integers(0, res.y_values.size, 40)
    ix = rng.integers(0, res.x_values.size, 40)
    worst = (0.0, None)
    for j, i in zip(iy, ix):
        changes = {res.x.parameter: res.x_values[i], res.y.parameter: res.y_values[j]}
        ref = direct_response(ilmare, changes, period_h)
        err = abs(res.response[j, i] - ref) / abs(ref)
        err_a = abs(res.values[j, i] - abs(ref)) / abs(ref)
        if max(err, err_a) > worst[0]:
            worst = (max(err, err_a), (changes, res.response[j, i], ref))
    assert worst[0] <= 1e-12, f"worst relative error {worst[0]:.2e} at {worst[1]}"


def test_phase_lag_map_equals_direct_phase(ilmare):
    res = feasibility_map(ilmare, "ice shell.thickness_km=5:60:9", "ocean.conductivity_S_per_m=0.1:10:7:log", 84.7, "phase_lag_deg")
    worst = 0.0
    for j, y in enumerate(res.y_values):
        for i, x in enumerate(res.x_values):
            ref = math.degrees(np.angle(direct_response(ilmare, {res.x.parameter: x, res.y.parameter: y}, 84.7)))
            worst = max(worst, abs(res.values[j, i] - ref))
            assert abs(res.values[j, i] - ref) <= 1e-10, f"x={x}, y={y}: map {res.values[j, i]!r} vs direct {ref!r} deg"
    assert 0.0 <= np.min(res.values) and np.max(res.values) <= 90.0


def _jackson_dipole_field(moment, position):
    """B(x) = (mu0/4pi) [3 n (n . m) - m] / |x|^3 outside the source (Jackson, Classical Electrodynamics,
    3rd ed. 1999, eq. 5.56); complex vectors allowed (each component is a phasor)."""
    r = np.linalg.norm(position)
    n = position / r
    return MU0 / (4 * np.pi) * (3 * n * np.dot(n, moment) - moment) / r**3


@pytest.mark.parametrize("direction", [(0.0, 0.0, 1.0), (0.48, -0.6, 0.64)])
def test_induced_and_difference_fields_against_jackson_dipole(ilmare, direction):
    # Moment of the induced dipole from the induction sheet: M = -(2 pi / mu0) R^3 R_1 B_e
    # (Zimmer, Khurana & Kivelson 2000, Icarus 147; Saur et al. 2010, Space Sci. Rev. 152), the field from
    # Jackson eq. 5.56, evaluated at altitude h over the pole of B_e (position along B_e). Tolerance 1e-12.
    u = np.asarray(direction) / np.linalg.norm(direction)
    drive_nT, alt_km, period_h = 173.0, 137.0, 12.12
    radius_m = ilmare.radius_km * 1e3
    reference = ilmare.with_layer("ice shell", thickness_km=45.0).with_layer("ocean", conductivity_S_per_m=0.7)
    kw = dict(altitude_km=alt_km, drive_nT=drive_nT)
    ind = feasibility_map(ilmare, X_SPEC, Y_SPEC, period_h, "induced_nT", **kw)
    dif = feasibility_map(ilmare, X_SPEC, Y_SPEC, period_h, "difference_nT", reference=reference, **kw)
    r_ref = reference.response(periods_h=[period_h]).response[0]
    position = (radius_m + alt_km * 1e3) * u
    b_e = drive_nT * u  # nT
    worst = (0.0, None)
    for j, i in [(0, 0), (5, 17), (22, 36), (11, 3), (17, 30)]:
        r1 = ind.response[j, i]
        b = _jackson_dipole_field(-(2 * np.pi / MU0) * radius_m**3 * r1 * b_e, position)
        b_ref = _jackson_dipole_field(-(2 * np.pi / MU0) * radius_m**3 * r_ref * b_e, position)
        mag = math.sqrt(np.sum(np.abs(b) ** 2))
        mag_diff = math.sqrt(np.sum(np.abs(b - b_ref) ** 2))
        for got, want in ((ind.values[j, i], mag), (dif.values[j, i], mag_diff)):
            err = abs(got - want) / want
            if err > worst[0]:
                worst = (err, (j, i, got, want))
    assert worst[0] <= 1e-12, f"worst relative error {worst[0]:.2e} (cell, map, Jackson) = {worst[1]}"


def test_induced_field_scales_with_drive_and_altitude(ilmare):
    # (R/r)^3 decay of a dipole field and linearity in the drive (common practice); tolerance 1e-13.
    a = feasibility_map(ilmare, X_SPEC, Y_SPEC, 6.06, "induced_nT", altitude_km=0.0, drive_nT=1.0)
    b = feasibility_map(ilmare, X_SPEC, Y_SPEC, 6.06, "induced_nT", altitude_km=500.0, drive_nT=250.0)
    scale = 250.0 * (1540.0 / 2040.0) ** 3
    np.testing.assert_allclose(b.values, a.values * scale, rtol=1e-13)
    np.testing.assert_allclose(a.values, a.values * 0 + np.abs(a.response), rtol=1e-15)


def _measured(model, periods_h, sig_a=0.02, sig_p=1.5):
    r = model.response(periods_h=periods_h)
    doc = {
        "response": [
            {"period_h": float(p), "amplitude": float(a), "amplitude_sigma": sig_a, "phase_lag_deg": float(ph), "phase_lag_sigma_deg": sig_p}
            for p, a, ph in zip(periods_h, r.amplitude, r.phase_lag_deg)
        ]
    }
    return parse_measurements(doc, source="test")


def test_chi_square_cells_and_regions(ilmare):
    # Data made noise-free from a grid cell's own model: chi2 is 0 there; elsewhere it equals the hand-written
    # sum of squared normalised residuals; the regions use the chi-square quantiles with 2 degrees of freedom
    # (confidence) and with 2M degrees of freedom (goodness). Table values: Press et al., Numerical Recipes,
    # 2nd ed. 1992, section 15.6 (delta chi2 = 2.30 and 6.17 for 2 parameters at 68.3 % and 95.4 %) and the
    # chi-square table for 6 degrees of freedom (7.04 and 12.8, from memory of the same table).
    truth = ilmare.with_layer("ice shell", thickness_km=31.0).with_layer("ocean", conductivity_S_per_m=1.0)
    periods = [12.12, 6.06, 84.7]
    data = _measured(truth, periods)
    res = feasibility_map(ilmare, "ice shell.thickness_km=11:55:12", "ocean.conductivity_S_per_m=0.1:10:5:log", 12.12, "amplitude", measurements=data)
    j, i = 2, 5  # y = 1.0 S/m, x = 31 km
    assert res.y_values[j] == pytest.approx(1.0, rel=1e-14) and res.x_values[i] == pytest.approx(31.0, rel=1e-14)
    assert res.chi_square[j, i] <= 1e-20, f"chi2 at the true cell {res.chi_square[j, i]!r}"
    # hand-computed chi2 at a few cells
    for jj, ii in [(0, 0), (4, 11), (3, 7)]:
        r = _direct_many(ilmare, {res.x.parameter: res.x_values[ii], res.y.parameter: res.y_values[jj]}, periods)
        hand = sum(
            ((abs(rk) - a) / 0.02) ** 2 + ((math.degrees(np.angle(rk)) - ph) / 1.5) ** 2
            for rk, a, ph in zip(r, data.values[:, 0], data.values[:, 1])
        )
        assert res.chi_square[jj, ii] == pytest.approx(hand, rel=1e-9), f"cell {(jj, ii)}: {res.chi_square[jj, ii]!r} vs {hand!r}"
    # tolerances: the tables give 3 significant figures (NR's 95.4 % column gives 6.17 for 95.45 %)
    assert res.chi_square_levels[1] == pytest.approx(2.30, abs=0.005)
    assert res.chi_square_levels[2] == pytest.approx(6.17, abs=0.02)
    good = consistency_levels(res.chi_square, 6, "goodness")
    assert good[1] == pytest.approx(7.04, abs=0.01) and good[2] == pytest.approx(12.8, abs=0.05)
    assert res.n_data == 6 and res.region == "confidence"
    with pytest.raises(ValueError, match="region"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, measurements=data, region="bayes")


def _direct_many(model, changes, periods_h):
    return np.array([direct_response(model, changes, p) for p in periods_h])


def test_backend_and_chunking_give_identical_cells(ilmare):
    # The map is a map-reduce over index ranges: any chunking and any backend must give the same cells.
    class Recording:
        def __init__(self):
            self.ranges = []

        def map_ranges(self, task, ranges, desc="", progress=False):
            self.ranges = list(ranges)
            for start, stop in reversed(ranges):  # out of order on purpose
                yield task(start, stop)

    backend = Recording()
    a = feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "amplitude")
    b = feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "amplitude", chunk_size=100, backend=backend)
    assert len(backend.ranges) == math.ceil(37 * 23 / 100)
    assert np.array_equal(a.values, b.values) and np.array_equal(a.response, b.response)


def test_impossible_cells_are_nan_with_a_warning(ilmare):
    with pytest.warns(UserWarning, match="fill layer no room"):
        res = feasibility_map(ilmare, "mantle.thickness_km=100:1500:8", Y_SPEC, 12.12)
    thick = res.x_values[None, :] + 20 + 95
    assert np.all(np.isnan(res.values[:, thick[0] >= 1540.0]))
    assert np.all(np.isfinite(res.values[:, thick[0] < 1540.0]))


@pytest.mark.parametrize(
    "spec, message",
    [
        ("ice shell.thickness_km:5:60:10", "malformed"),
        ("ice shell.thickness_km=5:60", "malformed"),
        ("ice shell.thickness_km=5:60:10:log:x", "malformed"),
        ("thickness_km=5:60:10", "malformed"),
        ("ice shell.thickness_km=5:60:10:square", "'log' or 'lin'"),
        ("ice shell.thickness_km=a:60:10", "must be numbers"),
        ("ice shell.thickness_km=5:60:2.5", "whole number"),
        ("ice shell.thickness_km=5:60:1", "n must be >= 2"),
        ("ice shell.thickness_km=60:5:10", "empty range: lo = 60 must be < hi = 5"),
        ("ice shell.thickness_km=5:5:10", "empty range: lo = 5 must be < hi = 5"),
        ("ice shell.thickness_km=5:inf:10", "finite"),
        ("ocean.conductivity_S_per_m=0:30:10:log", "scale = 'log' needs lo > 0"),
        ("ocean.conductivity_S_per_m=-1:30:10:log", "conductivity_S_per_m must be >= 0 S/m"),
        ("ocean.conductivity_S_per_m=-1:30:10", "must be >= 0"),
        ("ice shell.thickness_km=0:60:10", "thickness_km must be > 0 km"),
        ("ocean.salinity=1:2:3", "unknown field 'salinity'"),
        ("crust.thickness_km=5:60:10", "no layer 'crust'"),
        ("core.thickness_km=5:60:10", "fill layer"),
        ("ionosphere.conductance_S=1:10:3", "ionosphere"),
    ],
)
def test_bad_axis_specs_raise_clear_errors(ilmare, spec, message):
    with pytest.raises(ValueError, match=message) as info:
        parse_axis_spec(spec, ilmare, "--x")
    assert "--x" in str(info.value)


def test_axis_spec_values_and_other_argument_errors(ilmare):
    lin = parse_axis_spec("ice shell.thickness_km=5:60:12")
    v = lin.values()
    assert v[0] == 5.0 and v[-1] == 60.0 and v.size == 12
    np.testing.assert_allclose(np.diff(v), 5.0, rtol=1e-13)
    log = parse_axis_spec(" ocean.conductivity_S_per_m = 0.1 : 10 : 5 : log ")
    assert log == AxisSpec.of("ocean.conductivity_S_per_m", 0.1, 10.0, 5, True)
    np.testing.assert_allclose(log.values(), [0.1, 0.31622776601683794, 1.0, 3.1622776601683795, 10.0], rtol=1e-14)
    assert log.label == "ocean conductivity (S/m)"
    with pytest.raises(ValueError, match="different parameters"):
        feasibility_map(ilmare, X_SPEC, "ice shell.thickness_km=1:3:3", 12.12)
    with pytest.raises(ValueError, match="quantity must be one of"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "power")
    with pytest.raises(ValueError, match="needs drive_nT"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "induced_nT")
    with pytest.raises(ValueError, match="reference interior"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "difference_nT", drive_nT=1.0)
    other = InteriorModel(1000.0, [Layer("ice shell", 1e-6, 20.0), Layer("ocean", 3.0, 80.0), Layer("core", 1e5)])
    with pytest.raises(ValueError, match="radius"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "difference_nT", drive_nT=1.0, reference=other)
    with pytest.raises(ValueError, match="noise_nT"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "amplitude", noise_nT=0.5)
    with pytest.raises(ValueError, match="degree 1"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "induced_nT", drive_nT=1.0, degree=2)
    with pytest.raises(ValueError, match="period_h"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, -1.0)
    with pytest.raises(ValueError, match="altitude_km"):
        feasibility_map(ilmare, X_SPEC, Y_SPEC, 12.12, "induced_nT", drive_nT=1.0, altitude_km=-5.0)


def test_netcdf_and_csv_round_trip(ilmare, tmp_path):
    xr = pytest.importorskip("xarray")
    pytest.importorskip("h5netcdf")
    data = _measured(ilmare, [12.12, 84.7])
    res = feasibility_map(
        ilmare, X_SPEC, Y_SPEC, 12.12, "induced_nT", drive_nT=150.0, altitude_km=80.0, measurements=data, noise_nT=0.4
    )
    nc, cs = tmp_path / "m.nc", tmp_path / "m.csv"
    write_map_netcdf(res, nc)
    write_map_csv(res, cs)
    with xr.open_dataset(nc, engine="h5netcdf") as ds:
        x = ds["ice_shell_thickness_km"]
        y = ds["ocean_conductivity_S_per_m"]
        assert np.array_equal(x.values, res.x_values) and np.array_equal(y.values, res.y_values)
        assert x.attrs["units"] == "km" and y.attrs["units"] == "S m-1" and y.attrs["spacing"] == "logarithmic"
        assert x.attrs["parameter"] == "ice shell.thickness_km"
        q = ds["induced_nT"]
        assert q.dims == ("ocean_conductivity_S_per_m", "ice_shell_thickness_km")
        assert np.array_equal(q.values, res.values) and q.attrs["units"] == "nT"
        assert np.array_equal(ds["response_real"].values + 1j * ds["response_imag"].values, res.response)
        assert np.array_equal(ds["chi_square"].values, res.chi_square)
        assert ds.attrs["Conventions"].startswith("CF-") and ds.attrs["period_h"] == 12.12
        assert ds.attrs["altitude_km"] == 80.0 and ds.attrs["drive_nT"] == 150.0
        assert ds.attrs["detection_threshold_nT"] == pytest.approx(1.2, rel=1e-15)
        assert ds.attrs["comment"] == MODEL_LIMITS
    with open(cs, newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert list(rows[0]) == ["ice shell.thickness_km", "ocean.conductivity_S_per_m", "induced_nT", "chi_square"]
    assert len(rows) == res.values.size
    got = np.array([[float(r[k]) for k in rows[0]] for r in rows])
    ny, nx = res.values.shape
    assert np.array_equal(got[:, 0], np.tile(res.x_values, ny))
    assert np.array_equal(got[:, 1], np.repeat(res.y_values, nx))
    assert np.array_equal(got[:, 2], res.values.ravel())
    assert np.array_equal(got[:, 3], res.chi_square.ravel())


def test_missing_netcdf_packages_give_an_install_hint(ilmare, tmp_path, monkeypatch):
    res = feasibility_map(ilmare, "ice shell.thickness_km=5:60:3", "ocean.conductivity_S_per_m=1:3:2", 12.12)
    monkeypatch.setitem(sys.modules, "h5netcdf", None)
    with pytest.raises(ImportError, match=r"reinstall it with pip install induct"):
        write_map_netcdf(res, tmp_path / "x.nc")
    # without NetCDF, write_map_files writes the CSV alone and leaves no temporary file behind
    assert write_map_files(res, tmp_path / "y", netcdf=False) == [tmp_path / "y.csv"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["y.csv"]


def test_map_figures_png_and_pdf(ilmare, tmp_path):
    data = _measured(ilmare, [12.12])
    ref = ilmare.with_layer("ice shell", thickness_km=45.0)
    res = feasibility_map(
        ilmare, "ice shell.thickness_km=2:90:40", Y_SPEC, 12.12, "difference_nT",
        drive_nT=200.0, altitude_km=100.0, reference=ref, measurements=data, noise_nT=0.5,
    )
    from induct.plot.maps import plot_map

    fig = plot_map(res)
    assert MODEL_LIMITS in [t.get_text() for t in fig.texts]
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        paths = plot_map(res, tmp_path / "fig")
    assert sorted(p.suffix for p in paths) == [".pdf", ".png"]
    for p in paths:
        assert p.stat().st_size > 10_000, f"{p} is only {p.stat().st_size} bytes"
    assert paths[0].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert paths[1].read_bytes()[:5] == b"%PDF-"
