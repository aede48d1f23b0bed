"""Mission inputs end to end: SPICE tracks, UTC/TDB times, leap seconds and CDF files in ``flyby`` and ``fit``.

No downloads: the fictional kernels come from ``induct.io.spice_track.write_demo_kernels`` (planet
TARVOS 9100, moon ILMARE 9101 on a circular equatorial orbit, spacecraft PROBE -9900 on a straight
line relative to the moon, closest approach 2040 km at 2031-03-10T12:00:00 UTC), the CDF files from
cdflib's writer. References, named beside each check:

* closed form of the geometry (circular orbit + straight line, seen in the rotating flow frame;
  flow-frame definition of induct.field.orbit, common practice);
* SPICE through spiceypy (Annex et al. 2020, JOSS 5, 2050): ``str2et`` for TDB seconds past J2000;
* leap seconds: IERS Bulletin C (TAI - UTC = 37 s from 2017-01-01, none announced since, from memory);
* the CSV route of the same commands (parity: positions 1e-9 km, fields 1e-12 relative, fit 1e-12).
"""

import json
import math
import sys
from pathlib import Path

import numpy as np
import pytest

from induct.cli.main import main
from induct.io.bundled import resolve_scenario_path

EPOCH = "2031-03-10T00:00:00"
START, STOP = "2031-03-10T11:30:00", "2031-03-10T12:30:00"


def run(capsys, argv):
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def read_table(path):
    """Columns of a CSV written by induct (comments skipped); numbers as floats, other columns as str."""
    rows = [ln.rstrip("\n").split(",") for ln in Path(path).read_text().splitlines() if not ln.startswith("#")]
    head, body = rows[0], rows[1:]
    out = {}
    for k, name in enumerate(head):
        values = [r[k] for r in body]
        try:
            out[name] = np.array([float(v) for v in values])
        except ValueError:
            out[name] = np.array(values)
    return out


def one_line_error(code, err, *needles):
    assert code == 2, err
    lines = err.strip().splitlines()
    assert len(lines) == 1, f"expected one line, got {lines}"
    for n in needles:
        assert n in lines[0], f"{n!r} not in {lines[0]!r}"


def scenario_with_epoch(folder, epoch=EPOCH, name="moon.toml", lines=None):
    """The bundled fictional scenario 'ilmare' with ``[drive] epoch_utc`` (and only its first ``lines`` lines)."""
    text = resolve_scenario_path("ilmare").read_text()
    if lines is not None:
        head, *blocks = text.split("\n[[drive.lines]]\n")
        text = "\n[[drive.lines]]\n".join([head] + blocks[:lines])
    if epoch is not None:
        text = text.replace("[drive]\n", f'[drive]\nepoch_utc = "{epoch}"\n', 1)
    path = Path(folder) / name
    path.write_text(text)
    return path


@pytest.fixture(scope="module")
def kernels(tmp_path_factory):
    pytest.importorskip("spiceypy")
    from induct.io.spice_track import write_demo_kernels

    return write_demo_kernels(tmp_path_factory.mktemp("kernels"))


def spice_args(kernels, **over):
    opts = {"--spacecraft": "PROBE", "--moon": "ILMARE", "--planet": "TARVOS", "--start": START, "--stop": STOP,
            "--step-s": "30"}
    opts.update(over)
    out = ["--spice", *kernels]
    for k, v in opts.items():
        out += [k, v]
    return out


# --------------------------------------------------------------------------- SPICE tracks in flyby
def test_flyby_spice_equals_csv_track_and_closed_form(tmp_path, capsys, kernels):
    pytest.importorskip("cdflib")
    import cdflib

    from induct.io.spice_track import DEMO, spice_track

    scenario = scenario_with_epoch(tmp_path)
    code, out, err = run(capsys, ["flyby", scenario, *spice_args(kernels), "--out", tmp_path / "spice.csv"])
    assert code == 0, err
    assert "leap seconds: loaded kernels" in out and "PROBE (-9900)" in out
    code, _, err = run(capsys, ["flyby", scenario, *spice_args(kernels), "--out", tmp_path / "spice.cdf"])
    assert code == 0, err
    # The same track as CSV (full precision), through --trajectory.
    track = spice_track(kernels, -9900, 9101, 9100, START, STOP, 30.0, epoch_utc=EPOCH)
    track.to_csv(tmp_path / "track.csv")
    for suffix in ("csv", "cdf"):
        code, _, err = run(capsys, ["flyby", scenario, "--trajectory", tmp_path / "track.csv", "--out",
                                    tmp_path / f"file.{suffix}"])
        assert code == 0, err
    a, b = cdflib.CDF(str(tmp_path / "spice.cdf")), cdflib.CDF(str(tmp_path / "file.cdf"))
    assert np.array_equal(a.varget("Epoch"), b.varget("Epoch"))
    # ISTP attributes (ISTP/IACG guidelines; common practice) and the project's model-limits sentence.
    from induct.constants import MODEL_LIMITS

    attrs = a.varattsget("B_induced")
    assert attrs["DEPEND_0"] == "Epoch" and attrs["UNITS"] == "nT" and attrs["LABL_PTR_1"] == "label_B"
    assert a.varinq("Epoch").Data_Type_Description == "CDF_TIME_TT2000"
    assert MODEL_LIMITS in a.globalattsget()["TEXT"]
    dpos = np.abs(a.varget("Position") - b.varget("Position")).max()
    assert dpos <= 1e-9, f"SPICE vs CSV track: worst position difference {dpos:.3g} km (tolerance 1e-9 km)"
    for var in ("B_induced", "B_primary", "B_total"):
        fa, fb = a.varget(var), b.varget(var)
        rel = np.abs(fa - fb).max() / np.abs(fb).max()
        assert rel <= 1e-12, f"{var}: worst relative difference {rel:.3g} (tolerance 1e-12)"
    # The CSV outputs: same columns and numbers, plus utc from SPICE.
    ca, cb = read_table(tmp_path / "spice.csv"), read_table(tmp_path / "file.csv")
    assert list(ca) == list(cb) and list(ca)[-1] == "utc"
    assert ca["utc"][0] == "2031-03-10T11:30:00.000000" and ca["utc"].size == 121
    # The grid steps in TDB seconds: after 3600 s it lies 1.2 us before 12:30:00 UTC (TDB - TT drifts ~3.3e-10 s/s).
    assert ca["utc"][-1] in ("2031-03-10T12:29:59.999999", "2031-03-10T12:30:00.000000")
    for name in ca:
        if name != "utc":
            assert np.array_equal(ca[name], cb[name]), name
    # Closed form (common practice): the probe moves on a straight line at v = 6 km/s along x_flow at
    # closest approach (0, -1200, z0) km; the flow axes turn with the moon's mean motion n = sqrt(GM/a^3),
    # so x = v dt cos(n dt) - 1200 sin(n dt), y = -1200 cos(n dt) - v dt sin(n dt), z = z0.
    n = math.sqrt(DEMO["gm_km3_s2"] / DEMO["orbit_radius_km"] ** 3)
    from induct.io.timescales import seconds_from_epoch

    t_ca = seconds_from_epoch(DEMO["closest_approach_utc"], EPOCH)
    dt = ca["t_s"] - t_ca
    # The demo kernel fixes the line in the flow axes of its moon sample nearest to closest approach (600 s grid
    # from moon_start_utc, TDB), a few 1e-5 s before it: the axes turn by n (t - t_near).
    t0 = seconds_from_epoch(DEMO["moon_start_utc"], EPOCH)
    th = n * (dt + t_ca - (t0 + 600.0 * round((t_ca - t0) / 600.0)))
    v, (_, y0, z0) = DEMO["speed_km_s"], DEMO["closest_approach_flow_km"]
    want = np.column_stack([v * dt * np.cos(th) + y0 * np.sin(th),
                            y0 * np.cos(th) - v * dt * np.sin(th), np.full(dt.size, z0)])
    got = np.column_stack([ca["x_km"], ca["y_km"], ca["z_km"]])
    worst = np.abs(got - want).max()
    # CSV output: 12 significant digits, ~1e-8 km at 1e4 km.
    assert worst <= 1e-6, f"flow-frame track vs closed form: worst {worst:.3g} km (tolerance 1e-6 km)"


def test_flyby_spice_numeric_ids_spin_axis_and_planet_file(tmp_path, capsys, kernels):
    scenario = scenario_with_epoch(tmp_path)
    planet = resolve_scenario_path("ilmare").parent / "tarvos.toml"
    code, out, err = run(capsys, ["flyby", scenario, *spice_args(kernels, **{"--spacecraft": "-9900", "--moon": "9101",
                                  "--planet": "9100", "--spin-axis": "40.0,83.5"}), "--planet-file", planet,
                                  "--out", tmp_path / "f.csv"])
    assert code == 0, err
    assert "given (RA, DEC) = (40, 83.5) deg" in out and "degree 2: not included" not in out


def test_bad_spice_inputs_give_one_line(tmp_path, capsys, kernels):
    scenario = scenario_with_epoch(tmp_path)
    cases = [
        ({"--spacecraft": "NOBODY"}, ("spacecraft 'NOBODY'", "unknown body name")),
        ({"--moon": "99999"}, ("moon", "99999", "do not cover")),
        ({"--start": "2031-03-10T08:00:00"}, ("tarvos_demo.bsp", "do not cover")),
        ({"--spin-axis": "40"}, ("--spin-axis",)),
    ]
    for over, needles in cases:
        code, _, err = run(capsys, ["flyby", scenario, *spice_args(kernels, **over), "--out", tmp_path / "f.csv"])
        one_line_error(code, err, *needles)
    code, _, err = run(capsys, ["flyby", scenario, "--spice", tmp_path / "missing.bsp", "--spacecraft", "1", "--moon",
                                "2", "--planet", "3", "--start", START, "--stop", STOP, "--step-s", "60", "--out",
                                tmp_path / "f.csv"])
    one_line_error(code, err, "missing.bsp", "not found")
    code, _, err = run(capsys, ["flyby", scenario, "--spice", *kernels, "--out", tmp_path / "f.csv"])
    one_line_error(code, err, "--spice needs", "--spacecraft")
    no_epoch = scenario_with_epoch(tmp_path, None, "plain.toml")
    code, _, err = run(capsys, ["flyby", no_epoch, *spice_args(kernels), "--out", tmp_path / "f.csv"])
    one_line_error(code, err, "plain.toml", "epoch_utc")


# --------------------------------------------------------------------------- UTC / TDB track files, leap seconds
def test_utc_and_tdb_tracks_match_t_s_and_spice_str2et(tmp_path, capsys):
    spiceypy = pytest.importorskip("spiceypy")
    from induct.io.timescales import lsk_text

    scenario = scenario_with_epoch(tmp_path)
    t_s = np.arange(40000.0, 46001.0, 600.0)
    x = np.full(t_s.size, 2500.0)
    y = np.linspace(-3000.0, 3000.0, t_s.size)
    z = np.full(t_s.size, 300.0)
    utc = [f"2031-03-10T{int(s // 3600):02d}:{int(s % 3600 // 60):02d}:00" for s in t_s]
    lsk = tmp_path / "leap.tls"
    lsk.write_text(lsk_text())
    spiceypy.furnsh(str(lsk))
    try:  # reference: SPICE's own UTC -> TDB seconds past J2000
        tdb = [spiceypy.str2et(u) for u in utc]
        tdb0 = spiceypy.str2et(EPOCH)
    finally:
        spiceypy.unload(str(lsk))
    files = {
        "t": ("t_s", [repr(float(v)) for v in np.array(tdb) - tdb0]),
        "u": ("utc", utc),
        "d": ("tdb_s", [repr(float(v)) for v in tdb]),
    }
    results = {}
    for key, (col, values) in files.items():
        path = tmp_path / f"{key}.csv"
        path.write_text(f"{col},x_km,y_km,z_km\n" + "".join(f"{v},{float(a)!r},{float(b)!r},{float(c)!r}\n"
                                                            for v, a, b, c in zip(values, x, y, z)))
        code, out, err = run(capsys, ["flyby", scenario, "--trajectory", path, "--out", tmp_path / f"{key}_f.csv"])
        assert code == 0, err
        results[key] = read_table(tmp_path / f"{key}_f.csv")
        if key != "t":
            assert "leap seconds: induct built-in table" in out
    for key in ("u", "d"):
        dt = np.abs(results[key]["t_s"] - results["t"]["t_s"]).max()
        assert dt <= 1e-6, f"{key}: worst time difference from spiceypy.str2et {dt:.3g} s (tolerance 1e-6 s)"
        rel = np.abs(results[key]["b_ind_nT"] - results["t"]["b_ind_nT"]).max() / results["t"]["b_ind_nT"].max()
        assert rel <= 1e-9, f"{key}: worst relative field difference {rel:.3g} (tolerance 1e-9)"
    assert list(results["u"]["utc"]) == utc
    # A track with absolute times needs the scenario's epoch: one line naming the file.
    plain = scenario_with_epoch(tmp_path, None, "plain.toml")
    code, _, err = run(capsys, ["flyby", plain, "--trajectory", tmp_path / "u.csv", "--out", tmp_path / "x.csv"])
    one_line_error(code, err, "u.csv", "column utc", "plain.toml", "epoch_utc")


def test_user_lsk_with_a_later_leap_second(tmp_path, capsys):
    from induct.io.timescales import TimeConstants, default_constants, lsk_text

    # A user LSK with one more (fictional) leap second at the end of 2030: TAI - UTC = 38 s from 2031-01-01.
    c = default_constants()
    day_2031 = (np.datetime64("2031-01-01") - np.datetime64("2000-01-01")).astype(int)
    user = TimeConstants(np.append(c.leap_days, day_2031), np.append(c.delta_at_s, 38), source="test")
    lsk = tmp_path / "user.tls"
    lsk.write_text(lsk_text(user))
    scenario = scenario_with_epoch(tmp_path, "2030-12-31T23:59:00")
    track = tmp_path / "u.csv"
    track.write_text("utc,x_km,y_km,z_km\n2030-12-31T23:59:30,2500,-100,0\n2031-01-01T00:00:00,2500,100,0\n")
    code, out, err = run(capsys, ["flyby", scenario, "--trajectory", track, "--out", tmp_path / "a.csv"])
    assert code == 0, err
    shipped = read_table(tmp_path / "a.csv")["t_s"]
    code, out, err = run(capsys, ["flyby", scenario, "--trajectory", track, "--out", tmp_path / "b.csv", "--lsk", lsk])
    assert code == 0, err
    assert f"leap seconds: leap-seconds kernel {lsk}" in out
    user_t = read_table(tmp_path / "b.csv")["t_s"]
    # One leap second more between the epoch and midnight (IERS Bulletin C convention: 23:59:60 inserted).
    assert abs((user_t[1] - user_t[0]) - (shipped[1] - shipped[0]) - 1.0) < 1e-6
    assert abs(shipped[1] - 60.0) < 1e-4 and abs(user_t[1] - 61.0) < 1e-4


def test_scenario_epoch_checked_and_written_by_drive(tmp_path, capsys):
    bad = scenario_with_epoch(tmp_path, "2031-02-30T00:00:00", "bad.toml")
    code, _, err = run(capsys, ["flyby", bad, "--trajectory", "ilmare_flyby", "--out", tmp_path / "f.csv"])
    one_line_error(code, err, "bad.toml", "[drive] epoch_utc", "2031-02-30")
    # drive --epoch-utc writes [drive] epoch_utc next to the lines; the planet file may carry its own.
    tarvos = resolve_scenario_path("ilmare").parent / "tarvos.toml"
    target = scenario_with_epoch(tmp_path, None, "target.toml")
    code, out, err = run(capsys, ["drive", tarvos, "--epoch-utc", EPOCH, "--write-scenario", target])
    assert code == 0, err
    assert f"Epoch (t = 0): {EPOCH} UTC" in out
    from induct.io.scenario import load_scenario

    sc = load_scenario(target)
    assert sc.epoch_utc == EPOCH and len(sc.drive_lines) >= 1
    planet = tmp_path / "planet.toml"
    planet.write_text(tarvos.read_text().replace("[planet]\n", '[planet]\nepoch_utc = "2031-01-01T00:00:00"\n', 1))
    code, _, err = run(capsys, ["drive", planet, "--write-scenario", target])
    assert code == 0, err
    assert load_scenario(target).epoch_utc == "2031-01-01T00:00:00"
    code, _, err = run(capsys, ["drive", planet, "--epoch-utc", EPOCH])
    one_line_error(code, err, "--epoch-utc", "planet.toml")
    code, _, err = run(capsys, ["drive", tarvos, "--epoch-utc", EPOCH, "--write-scenario", target, "--append"])
    one_line_error(code, err, "target.toml", "epoch_utc")


# --------------------------------------------------------------------------- CDF in fit and flyby
def _residuals(tmp_path, capsys, scenario):
    """Synthetic residuals along the bundled track (t_s from the epoch), as arrays."""
    res = tmp_path / "res.csv"
    code, _, err = run(capsys, ["flyby", scenario, "--trajectory", "ilmare_flyby", "--out", tmp_path / "f.csv",
                                "--noise-nT", "0.5", "--residuals", res])
    assert code == 0, err
    cols = read_table(res)
    return (cols["t_s"], np.column_stack([cols[c] for c in ("x_km", "y_km", "z_km")]),
            np.column_stack([cols[c] for c in ("bx_nT", "by_nT", "bz_nT")]))


def test_fit_from_cdf_equals_fit_from_csv(tmp_path, capsys):
    pytest.importorskip("cdflib")
    from induct.io.cdf_magnetometer import write_prediction_cdf

    # One driving line: a well-conditioned fit. CDF_TIME_TT2000 resolves 1 ns, so the CDF's times agree
    # with the CSV's to 0.5 ns (phase 1e-13 rad); an ill-conditioned fit would amplify that beyond 1e-12.
    scenario = scenario_with_epoch(tmp_path, lines=1)
    t, pos, b = _residuals(tmp_path, capsys, scenario)
    t, pos, b = t[::4], pos[::4], b[::4]
    bad = np.zeros(t.size, bool)
    bad[[3, 50, 51, 400]] = True  # fill values in the CDF (NaN -> FILLVAL), absent from the CSV
    b_cdf = b.copy()
    b_cdf[bad] = np.nan
    write_prediction_cdf(tmp_path / "res.cdf", t, pos, {"B_res": b_cdf}, epoch_utc=EPOCH)
    csv = tmp_path / "same.csv"
    keep = ~bad
    csv.write_text("t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT\n" + "".join(
        ",".join(repr(float(v)) for v in (t[k], *pos[k], *b[k])) + "\n" for k in np.flatnonzero(keep)))
    code, out_cdf, err = run(capsys, ["fit", scenario, "--data", tmp_path / "res.cdf", "--field-variable", "B_res",
                                      "--position-variable", "Position", "--noise-nT", "0.5", "--json"])
    assert code == 0, err
    code, out_csv, err = run(capsys, ["fit", scenario, "--data", csv, "--noise-nT", "0.5", "--json"])
    assert code == 0, err
    a, c = json.loads(out_cdf), json.loads(out_csv)
    assert a["dropped_samples"][0]["fill"] == 4 and a["dropped_samples"][0]["kept"] == int(keep.sum())
    assert a["n_data"] == c["n_data"] == 3 * int(keep.sum())
    worst = 0.0
    for pa, pc in zip(a["response"], c["response"]):
        for key in ("real", "imag", "amplitude"):
            worst = max(worst, abs(pa[key] - pc[key]) / max(abs(pc[key]), 1e-300))
    assert worst <= 1e-12, f"fit from CDF vs CSV: worst relative difference {worst:.3g} (tolerance 1e-12)"
    code, out, err = run(capsys, ["fit", scenario, "--data", tmp_path / "res.cdf", "--field-variable", "B_res",
                                  "--position-variable", "Position", "--noise-nT", "0.5"])
    assert code == 0, err
    assert f"{t.size} records, {int(keep.sum())} used; dropped 4 with fill values, 0 outside VALIDMIN/VALIDMAX" in out


def _write_cdf(path, b, r, *, b_units="nT", r_units="km", epoch=EPOCH, step_s=60.0):
    import cdflib
    from cdflib.cdfwrite import CDF as CDFWriter

    start = cdflib.cdfepoch.compute_tt2000([int(v) for v in epoch.replace("T", "-").replace(":", "-").split("-")]
                                           + [0, 0, 0])
    times = np.int64(start) + (np.arange(len(b)) * step_s * 1e9).astype(np.int64)
    w = CDFWriter(str(path))
    w.write_globalattrs({"Project": {0: "induct tests"}})
    w.write_var({"Variable": "Epoch", "Data_Type": 33, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": []},
                var_attrs={"FIELDNAM": "Epoch", "UNITS": "ns"}, var_data=times)
    for name, data, units in (("B", b, b_units), ("R", r, r_units)):
        w.write_var({"Variable": name, "Data_Type": 45, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": [3]},
                    var_attrs={"UNITS": units, "DEPEND_0": "Epoch", "FILLVAL": np.float64(-1e31)},
                    var_data=np.asarray(data, dtype=float))
    w.close()
    return path


def test_bad_cdf_files_give_one_line(tmp_path, capsys):
    pytest.importorskip("cdflib")
    scenario = scenario_with_epoch(tmp_path)
    r = np.column_stack([np.full(10, 2500.0), np.linspace(-2000, 2000, 10), np.zeros(10)])
    b = np.ones((10, 3))
    good = _write_cdf(tmp_path / "good.cdf", b, r)
    args = ["fit", scenario, "--noise-nT", "0.5", "--position-variable", "R", "--data"]
    code, _, err = run(capsys, args + [good, "--field-variable", "B_missing"])
    one_line_error(code, err, "good.cdf", "B_missing", "not found")
    code, _, err = run(capsys, args + [_write_cdf(tmp_path / "units.cdf", b, r, b_units="G"), "--field-variable", "B"])
    one_line_error(code, err, "units.cdf", "variable B", "UNITS", "nT")
    code, _, err = run(capsys, args + [_write_cdf(tmp_path / "km.cdf", b, r, r_units="m"), "--field-variable", "B"])
    one_line_error(code, err, "km.cdf", "variable R", "UNITS", "km")
    code, _, err = run(capsys, args + [_write_cdf(tmp_path / "fill.cdf", np.full((10, 3), -1e31), r),
                                       "--field-variable", "B"])
    one_line_error(code, err, "fill.cdf", "no valid samples", "10 fill values")
    code, _, err = run(capsys, args + [good])
    one_line_error(code, err, "good.cdf", "--field-variable")
    inside = _write_cdf(tmp_path / "inside.cdf", b, r * 0.1)
    code, _, err = run(capsys, args + [inside, "--field-variable", "B"])
    one_line_error(code, err, "inside.cdf", "inside")
    plain = scenario_with_epoch(tmp_path, None, "plain.toml")
    code, _, err = run(capsys, ["fit", plain, "--noise-nT", "0.5", "--data", good, "--field-variable", "B",
                                "--position-variable", "R"])
    one_line_error(code, err, "plain.toml", "good.cdf", "epoch_utc")


# --------------------------------------------------------------------------- optional extras missing
@pytest.mark.parametrize("module, argv_tail, extra", [
    ("spiceypy", ["--spice", "k.bsp", "--spacecraft", "1", "--moon", "2", "--planet", "3", "--start", START,
                  "--stop", STOP, "--step-s", "60", "--out", "f.csv"], "spice"),
    ("cdflib", ["--trajectory", "ilmare_flyby", "--out", "f.cdf"], "cdf"),
])
def test_flyby_without_the_extra_names_it(tmp_path, capsys, monkeypatch, module, argv_tail, extra):
    monkeypatch.setitem(sys.modules, module, None)  # `import module` now raises ImportError
    monkeypatch.chdir(tmp_path)
    code, _, err = run(capsys, ["flyby", scenario_with_epoch(tmp_path), *argv_tail])
    one_line_error(code, err, f"pip install 'induct[{extra}]'", module)


def test_fit_without_cdflib_names_the_extra(tmp_path, capsys, monkeypatch):
    import builtins

    real_import = builtins.__import__

    def no_cdflib(name, *args, **kwargs):
        if name == "cdflib" or name.startswith("cdflib."):
            raise ImportError("No module named 'cdflib' (simulated)")
        return real_import(name, *args, **kwargs)

    monkeypatch.delitem(sys.modules, "cdflib", raising=False)
    monkeypatch.setattr(builtins, "__import__", no_cdflib)
    code, _, err = run(capsys, ["fit", scenario_with_epoch(tmp_path), "--data", tmp_path / "x.cdf", "--noise-nT", "0.5",
                                "--field-variable", "B", "--position-variable", "R"])
    one_line_error(code, err, "pip install 'induct[cdf]'", "cdflib")


# --------------------------------------------------------------------------- fit with positions from SPICE
def test_fit_with_positions_from_spice(tmp_path, capsys, kernels):
    pytest.importorskip("cdflib")
    from induct.io.cdf_magnetometer import write_prediction_cdf
    from induct.io.spice_track import spice_track

    scenario = scenario_with_epoch(tmp_path, lines=1)
    st = spice_track(kernels, -9900, 9101, 9100, START, STOP, 10.0, epoch_utc=EPOCH)
    st.to_csv(tmp_path / "track.csv")
    code, _, err = run(capsys, ["flyby", scenario, "--trajectory", tmp_path / "track.csv", "--out", tmp_path / "f.csv",
                                "--noise-nT", "0.5", "--residuals", tmp_path / "res.csv"])
    assert code == 0, err
    res = read_table(tmp_path / "res.csv")
    b = np.column_stack([res[c] for c in ("bx_nT", "by_nT", "bz_nT")])
    full = tmp_path / "full.csv"  # the same samples with the SPICE positions at full precision
    full.write_text("t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT\n" + "".join(
        ",".join(repr(float(v)) for v in (st.times_s[k], *st.positions_km[k], *b[k])) + "\n" for k in range(st.size)))
    bare = tmp_path / "bare.csv"  # no positions: they come from the kernels
    bare.write_text("utc,bx_nT,by_nT,bz_nT\n" + "".join(
        f"{st.utc[k]}," + ",".join(repr(float(v)) for v in b[k]) + "\n" for k in range(st.size)))
    write_prediction_cdf(tmp_path / "b.cdf", st.times_s, np.full((st.size, 3), 2000.0), {"B_res": b}, epoch_utc=EPOCH)
    body = ["--spice", *kernels, "--spacecraft", "PROBE", "--moon", "ILMARE", "--planet", "TARVOS"]
    runs = {
        "file": ["--data", full],
        "spice_csv": ["--data", bare, *body],
        "spice_cdf": ["--data", tmp_path / "b.cdf", "--field-variable", "B_res", *body],
    }
    fits = {}
    for key, extra in runs.items():
        code, out, err = run(capsys, ["fit", scenario, "--noise-nT", "0.5", "--json", *extra])
        assert code == 0, err
        fits[key] = json.loads(out)
    # Sample times rebuilt from UTC labels (rounded to 1 us) or TT2000 (1 ns) and the epoch: positions agree to
    # ~6 km/s x 0.5 us = 3e-6 km, fields to ~5e-9 relative, and the fit of one pass amplifies that: tolerance
    # 1e-7 relative (the CSV/CDF parity with identical positions is checked to 1e-12 above).
    for key in ("spice_csv", "spice_cdf"):
        worst = max(abs(pa[k] - pb[k]) / abs(pb[k]) for pa, pb in zip(fits[key]["response"], fits["file"]["response"])
                    for k in ("real", "imag"))
        assert worst <= 1e-7, f"{key}: worst relative difference from the file positions {worst:.3g} (tolerance 1e-7)"
        assert any("PROBE (-9900)" in n for n in fits[key]["time_notes"])
    code, _, err = run(capsys, ["fit", scenario, "--noise-nT", "0.5", "--data", full, *body])
    one_line_error(code, err, "full.csv", "position columns")
    code, _, err = run(capsys, ["fit", scenario, "--noise-nT", "0.5", "--data", bare, *body, "--start", START])
    one_line_error(code, err, "--start", "--data")
    code, _, err = run(capsys, ["fit", scenario, "--noise-nT", "0.5", "--data", bare, *body[:-2], "--planet", "NOPE"])
    one_line_error(code, err, "bare.csv", "planet 'NOPE'")


# --------------------------------------------------------------------------- SPICE tracks in plan
def test_plan_spice_candidate_equals_the_same_track_as_a_candidate_file(tmp_path, capsys, kernels):
    # The track from the kernels is one candidate of `induct plan`; written as a candidate CSV (same times and
    # positions) it must give the same information (identity: one Fisher computation, two input paths).
    import json

    from induct.io.candidates import write_candidates
    from induct.io.spice_track import spice_track
    from induct.planning.candidates import Candidate

    scenario = scenario_with_epoch(tmp_path)
    code, out, err = run(capsys, ["plan", scenario, *spice_args(kernels), "--noise-nT", "0.5", "--choose", "1", "--json"])
    assert code == 0, err
    spice = json.loads(out)
    assert spice["selected"] == [f"spice:{START}"]
    track = spice_track(kernels, -9900, 9101, 9100, START, STOP, 30.0, epoch_utc=EPOCH)
    write_candidates(tmp_path / "c.csv", [Candidate("same", track.times_s, track.positions_km)])
    code, out, err = run(capsys, ["plan", scenario, "--candidates", tmp_path / "c.csv", "--noise-nT", "0.5",
                                  "--choose", "1", "--json"])
    assert code == 0, err
    csv = json.loads(out)
    a, b = spice["candidates"][0]["log_det"], csv["candidates"][0]["log_det"]
    assert abs(a - b) <= 1e-9 * abs(b), (a, b)
    # beside generated candidates
    code, out, err = run(capsys, ["plan", scenario, *spice_args(kernels), "--altitude-km", "100,400", "--phase-deg", "0",
                                  "--noise-nT", "0.5", "--choose", "2", "--json"])
    assert code == 0, err
    assert len(json.loads(out)["candidates"]) == 3
