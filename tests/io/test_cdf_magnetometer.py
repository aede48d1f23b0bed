"""Magnetometer CDF reading and prediction CDF writing (induct.io.cdf_magnetometer).

The test writes fictional CDF files with cdflib itself (the reference library: its writer, its
epoch encoders ``compute_tt2000``/``compute_epoch``/``compute_epoch16`` and ``encode``), following
the ISTP/IACG variable-attribute conventions (DEPEND_0, UNITS, FILLVAL, VALIDMIN/VALIDMAX;
common practice). Data read back must equal the arrays written (tolerance 1e-12 nT / km), and
times must equal the UTC stamps converted by induct.io.timescales (tolerance 1e-6 s; float64
near 1e9 s resolves 1.2e-7 s).
"""

import sys

import numpy as np
import pytest

from induct.io import timescales as ts

cdflib = pytest.importorskip("cdflib")
from cdflib.cdfwrite import CDF as CDFWriter  # noqa: E402

from induct.io.cdf_magnetometer import (  # noqa: E402
    MODEL_LIMITS,
    read_magnetometer_cdf,
    tdb_to_tt2000,
    tt2000_to_tdb,
    write_prediction_cdf,
)

RNG = np.random.default_rng(9101)
FILL = -1.0e31


def _parts(utc):
    """[y, m, d, h, mi, s, ms, us, ns] of 'YYYY-MM-DDThh:mm:ss.fffffffff'."""
    date, time = utc.split("T")
    y, m, d = (int(v) for v in date.split("-"))
    h, mi, s = time.split(":")
    whole, frac = (s.split(".") + [""])[:2]
    frac = (frac + "000000000")[:9]
    return [y, m, d, int(h), int(mi), int(whole), int(frac[:3]), int(frac[3:6]), int(frac[6:9])]


@pytest.fixture()
def epoch16_writer(monkeypatch):
    """cdflib 1.3's writer splits each CDF_EPOCH16 value into two records; this re-pairs them when the
    bug is present (checked on a probe file first), so the test file holds the values cdflib encoded."""
    original = CDFWriter._convert_data

    def fixed(self, data_type, num_elems, num_values, indata):
        if data_type == 32 and isinstance(indata, np.ndarray) and not np.iscomplexobj(indata) and indata.size % 2 == 0:
            indata = indata[0::2] + 1j * indata[1::2]
        return original(self, data_type, num_elems, num_values, indata)

    def roundtrip_ok(tmp):
        w = CDFWriter(str(tmp))
        w.write_var({"Variable": "E", "Data_Type": 32, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": []},
                    var_data=np.array([1.0 + 2.0j, 3.0 + 4.0j]))
        w.close()
        got = cdflib.CDF(str(tmp)).varget("E")
        return np.array_equal(np.asarray(got).ravel(), [1.0 + 2.0j, 3.0 + 4.0j])

    return lambda tmp: None if roundtrip_ok(tmp) else monkeypatch.setattr(CDFWriter, "_convert_data", fixed)


def write_file(path, utc, b, r, *, epoch_type=33, b_attrs=None, r_attrs=None, t_attrs=None, drop=(), fill_times=()):
    """A fictional magnetometer CDF written with cdflib: Epoch, B_flow (nT), R_flow (km)."""
    parts = [_parts(u) for u in utc]
    if epoch_type == 33:
        times = np.asarray(cdflib.cdfepoch.compute_tt2000(parts), dtype=np.int64)
        t_fill = [np.int64(-9223372036854775808), "CDF_TIME_TT2000"]
        times[list(fill_times)] = -9223372036854775808
    elif epoch_type == 31:
        times = np.asarray(cdflib.cdfepoch.compute_epoch([p[:7] for p in parts]), dtype=float)
        t_fill = [FILL, "CDF_EPOCH"]
    else:
        times = np.asarray(cdflib.cdfepoch.compute_epoch16([p + [0] for p in parts]), dtype=complex)
        t_fill = None
    w = CDFWriter(str(path))
    w.write_globalattrs({"Project": {0: "induct tests"}, "Source_name": {0: "PROBE>fictional probe"}})
    tatt = {"FIELDNAM": "Epoch", "VAR_TYPE": "support_data", "UNITS": "ns"}
    if t_fill is not None:
        tatt["FILLVAL"] = t_fill
    tatt.update(t_attrs or {})
    w.write_var({"Variable": "Epoch", "Data_Type": epoch_type, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": []},
                var_attrs=tatt, var_data=times)
    batt = {"DEPEND_0": "Epoch", "UNITS": "nT", "FILLVAL": np.float64(FILL), "VALIDMIN": np.float64(-1e5),
            "VALIDMAX": np.float64(1e5), "CATDESC": "field", "VAR_TYPE": "data"}
    ratt = {"DEPEND_0": "Epoch", "UNITS": "km", "FILLVAL": np.float64(FILL),
            "VALIDMIN": np.array([-1e6, -1e6, -1e6]), "VALIDMAX": np.array([1e6, 1e6, 1e6]), "VAR_TYPE": "support_data"}
    for att, extra in ((batt, b_attrs), (ratt, r_attrs)):
        for k, v in (extra or {}).items():
            if v is None:
                att.pop(k, None)
            else:
                att[k] = v
    vec = {"Data_Type": 45, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": [3]}
    if "B_flow" not in drop:
        w.write_var({"Variable": "B_flow", **vec}, var_attrs=batt, var_data=np.asarray(b, dtype=float))
    w.write_var({"Variable": "R_flow", **vec}, var_attrs=ratt, var_data=np.asarray(r, dtype=float))
    w.close()
    return path


def _series(n, start="2031-03-10T11:00:00", step_s=0.5):
    t0 = ts.utc_to_tai(start)
    utc = [str(u) for u in ts.tai_to_utc(t0 + step_s * np.arange(n), digits=9)]
    b = RNG.normal(0.0, 50.0, (n, 3))
    r = np.column_stack([np.linspace(-5000, 5000, n), np.full(n, -1200.0), RNG.uniform(1000, 2000, n)])
    return utc, b, r


@pytest.mark.parametrize("epoch_type, name", [(33, "CDF_TIME_TT2000"), (31, "CDF_EPOCH"), (32, "CDF_EPOCH16")])
def test_each_epoch_type_reads_back(tmp_path, epoch16_writer, epoch_type, name):
    if epoch_type == 32:
        epoch16_writer(tmp_path / "probe.cdf")
    utc, b, r = _series(200)
    if epoch_type == 31:  # CDF_EPOCH holds milliseconds
        utc = [u[:23] + "000000" for u in utc]
    path = write_file(tmp_path / f"mag_{epoch_type}.cdf", utc, b, r, epoch_type=epoch_type)
    s = read_magnetometer_cdf(path, "B_flow", "R_flow", frame="flow")
    assert s.epoch_type == name and s.time_variable == "Epoch" and s.n_records == 200 and s.n_fill == 0
    assert np.abs(s.field_nT - b).max() <= 1e-12 and np.abs(s.positions_km - r).max() <= 1e-12
    want = ts.utc_to_tdb(utc)
    err = np.abs(s.tdb_s - want)
    k = int(np.argmax(err))
    assert err[k] < 1e-6, f"{name}: worst at {utc[k]}: read {s.tdb_s[k]!r}, expected {want[k]!r} ({err[k]:.3g} s)"
    print(f"{name}: max |t - t_ref| = {err.max():.3g} s, field/position max |diff| = "
          f"{max(np.abs(s.field_nT - b).max(), np.abs(s.positions_km - r).max()):.3g}")


def test_tt2000_across_a_leap_second_and_cdflib_encode(tmp_path):
    # TT2000 is leap-second aware: 23:59:60.x is a valid sample (IERS Bulletin C: leap second at the end
    # of 2016-12-31); cdflib's encode of each stored value, converted by our parser, gives the same time.
    utc = [f"2016-12-31T23:59:{s}" for s in ("58.000000000", "58.500000000", "59.000000000", "59.500000000",
                                             "60.000000000", "60.500000000")] + ["2017-01-01T00:00:00.000000000"]
    b, r = np.ones((7, 3)), np.tile([0.0, -1500.0, 0.0], (7, 1))
    path = write_file(tmp_path / "leap.cdf", utc, b, r)
    s = read_magnetometer_cdf(path, "B_flow", "R_flow", epoch_utc="2016-12-31T23:59:58")
    assert np.allclose(np.diff(s.tdb_s), 0.5, rtol=0, atol=1e-6)
    assert np.allclose(s.times_s, 0.5 * np.arange(7), rtol=0, atol=1e-8)
    raw = cdflib.CDF(str(path)).varget("Epoch")
    encoded = [cdflib.cdfepoch.encode(int(v)) for v in raw]
    assert encoded == utc
    assert list(s.utc(digits=9)) == utc
    # TT2000 -> TDB (float64) -> TT2000: within the float64 resolution near 5e8 s (6e-8 s); tolerance 200 ns.
    assert np.abs(tdb_to_tt2000(tt2000_to_tdb(raw)) - raw).max() <= 200


def test_fill_and_range_dropped_and_counted(tmp_path):
    utc, b, r = _series(50)
    b[3] = FILL  # fill in the field
    b[7, 1] = np.nan  # NaN counts as fill
    r[11, 2] = FILL  # fill in a position component
    b[20, 0] = 2e5  # above VALIDMAX (1e5 nT)
    r[30, 1] = -2e6  # below VALIDMIN (-1e6 km)
    path = write_file(tmp_path / "fill.cdf", utc, b, r)
    s = read_magnetometer_cdf(path, "B_flow", "R_flow")
    keep = np.setdiff1d(np.arange(50), [3, 7, 11, 20, 30])
    assert (s.n_records, s.n_fill, s.n_out_of_range, s.size) == (50, 3, 2, 45)
    assert s.dropped_by_variable["B_flow"] == {"fill": 2, "out_of_range": 1}
    assert s.dropped_by_variable["R_flow"] == {"fill": 1, "out_of_range": 1}
    assert np.abs(s.field_nT - b[keep]).max() <= 1e-12 and np.abs(s.positions_km - r[keep]).max() <= 1e-12
    assert np.abs(s.tdb_s - ts.utc_to_tdb(np.array(utc)[keep])).max() < 1e-6
    # Fill times (TT2000 FILLVAL = -9223372036854775808, ISTP) and times before the time variable's
    # VALIDMIN are dropped too.
    w = write_file(tmp_path / "tfill.cdf", utc[:6], np.ones((6, 3)), r[:6], fill_times=[4],
                   t_attrs={"VALIDMIN": [int(ts.utc_to_tt2000(utc[1])), "CDF_TIME_TT2000"]})
    s = read_magnetometer_cdf(w, "B_flow", "R_flow")
    assert (s.n_fill, s.n_out_of_range, s.size) == (1, 1, 4)
    assert s.dropped_by_variable["Epoch"] == {"fill": 1, "out_of_range": 1}
    assert np.abs(s.tdb_s - ts.utc_to_tdb(np.array(utc)[[1, 2, 3, 5]])).max() < 1e-6


def _one_line(match, *args, **kwargs):
    with pytest.raises(ValueError, match=match) as info:
        read_magnetometer_cdf(*args, **kwargs)
    assert "\n" not in str(info.value), str(info.value)
    return str(info.value)


def test_errors_name_file_variable_and_attribute(tmp_path):
    utc, b, r = _series(10)
    wrong = write_file(tmp_path / "gauss.cdf", utc, b, r, b_attrs={"UNITS": "G"})
    msg = _one_line("UNITS is 'G'; expected nT", wrong, "B_flow", "R_flow")
    assert "gauss.cdf" in msg and "variable B_flow" in msg
    radii = write_file(tmp_path / "radii.cdf", utc, b, r, r_attrs={"UNITS": "R_M"})
    assert "variable R_flow" in _one_line("radii.cdf.*UNITS is 'R_M'; expected km", radii, "B_flow", "R_flow")
    nounits = write_file(tmp_path / "nounits.cdf", utc, b, r, b_attrs={"UNITS": None})
    _one_line("nounits.cdf: variable B_flow: attribute UNITS missing", nounits, "B_flow", "R_flow")
    nodep = write_file(tmp_path / "nodep.cdf", utc, b, r, b_attrs={"DEPEND_0": None})
    _one_line("nodep.cdf: variable B_flow: attribute DEPEND_0 missing", nodep, "B_flow", "R_flow")
    baddep = write_file(tmp_path / "baddep.cdf", utc, b, r, b_attrs={"DEPEND_0": "Time"})
    _one_line("baddep.cdf: variable B_flow: attribute DEPEND_0 names 'Time'", baddep, "B_flow", "R_flow")
    ok = write_file(tmp_path / "ok.cdf", utc, b, r)
    _one_line(r"ok.cdf: variable 'B_mag' \(field_variable\) not found", ok, "B_mag", "R_flow")
    _one_line("missing.cdf: file not found", tmp_path / "missing.cdf", "B_flow", "R_flow")
    allfill = write_file(tmp_path / "allfill.cdf", utc, np.full((10, 3), FILL), r)
    _one_line("allfill.cdf: variable B_flow: no valid samples among 10 records", allfill, "B_flow", "R_flow")
    _one_line("frame 'body': not supported; allowed: flow", ok, "B_flow", "R_flow", frame="body")
    notcdf = tmp_path / "text.cdf"
    notcdf.write_text("not a cdf")
    _one_line("text.cdf: not a readable CDF file", notcdf, "B_flow", "R_flow")


def test_prediction_writer_round_trip_and_istp_attributes(tmp_path):
    n = 120
    t = 30.0 * np.arange(n) - 1800.0
    r = np.column_stack([6.0 * t, np.full(n, -1200.0), np.full(n, 1650.0)])
    b_ind = RNG.normal(0, 20, (n, 3))
    b_pri = RNG.normal(0, 200, (n, 3))
    path = tmp_path / "pred.cdf"
    path.write_text("old content, replaced atomically")
    write_prediction_cdf(path, t, r, {"B_induced": b_ind, "B_primary": b_pri}, epoch_utc="2031-03-10T12:00:00",
                         text=["Scenario: fictional Ilmare interior."])
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pred.cdf"]  # no temporary file left
    for name, arr in (("B_induced", b_ind), ("B_primary", b_pri)):
        s = read_magnetometer_cdf(path, name, "Position", epoch_utc="2031-03-10T12:00:00")
        assert np.abs(s.field_nT - arr).max() <= 1e-12 and np.abs(s.positions_km - r).max() <= 1e-12
        err = np.abs(s.times_s - t).max()
        assert err < 1e-6, f"{name}: worst time error {err:.3g} s"
    cdf = cdflib.CDF(str(path))
    g = cdf.globalattsget()
    for key in ("Project", "Source_name", "Discipline", "Data_type", "Descriptor", "Logical_source",
                "Logical_file_id", "TEXT"):
        assert key in g, key
    assert g["Logical_source"] == ["induct_pred_induced"]
    # The one model-limits sentence of the project (induct.constants.MODEL_LIMITS) is written to TEXT.
    import induct.constants

    assert MODEL_LIMITS is induct.constants.MODEL_LIMITS and MODEL_LIMITS in g["TEXT"]
    assert "plasma interaction" in MODEL_LIMITS
    assert cdf.varinq("Epoch").Data_Type_Description == "CDF_TIME_TT2000"
    ea = cdf.varattsget("Epoch")
    assert {"FIELDNAM", "CATDESC", "UNITS", "VAR_TYPE", "FILLVAL", "VALIDMIN", "VALIDMAX"} <= set(ea)
    for var in ("Position", "B_induced", "B_primary"):
        a = cdf.varattsget(var)
        assert {"DEPEND_0", "FILLVAL", "VALIDMIN", "VALIDMAX", "UNITS", "CATDESC", "FIELDNAM", "VAR_TYPE",
                "LABL_PTR_1"} <= set(a), var
        assert a["DEPEND_0"] == "Epoch"
        labels = [str(x).strip() for x in cdf.varget(a["LABL_PTR_1"])]
        assert len(labels) == 3
    # cdflib's own decoding of the stored epochs agrees with our UTC labels (reference library).
    enc = [cdflib.cdfepoch.encode(int(v)) for v in cdf.varget("Epoch")]
    err = np.abs(ts.utc_to_tdb(enc) - (t + ts.utc_to_tdb("2031-03-10T12:00:00")))
    assert err.max() < 1e-6, f"worst: {enc[int(np.argmax(err))]}: {err.max():.3g} s"
    assert enc[60] == "2031-03-10T12:00:00.000000000"  # the epoch itself is exact to the ns
    with pytest.raises(ValueError, match="frame 'body'"):
        write_prediction_cdf(path, t, r, b_ind, frame="body")
    with pytest.raises(ValueError, match=r"positions_km must have shape \(120, 3\)"):
        write_prediction_cdf(path, t, r[:5], b_ind)


def test_missing_cdflib_message(tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "cdflib", None)
    with pytest.raises(ImportError, match=r"pip install 'induct\[cdf\]'"):
        read_magnetometer_cdf(tmp_path / "x.cdf", "B", "R")
    with pytest.raises(ImportError, match=r"pip install 'induct\[cdf\]'"):
        write_prediction_cdf(tmp_path / "x.cdf", [0.0], [[1.0, 2.0, 3.0]], [[0.0, 0.0, 0.0]])
