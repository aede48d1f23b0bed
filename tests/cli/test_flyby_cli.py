"""``induct flyby`` and ``induct fit`` end to end, the bundled tracks, and every bad-input error."""

import csv
import importlib.util
import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest

from induct.cli.main import main
from induct.field.drive import drive_field_nT
from induct.io.drive_files import read_planet_file
from induct.flyby.induced import induced_field, planet_gradient_lines
from induct.io.measurements import load_measurements
from induct.io.scenario import load_scenario
from induct.io.tracks import check_outside, read_track, resolve_track_path

ROOT = Path(__file__).resolve().parents[2]


def read_csv(path):
    with open(path, newline="") as handle:
        rows = list(csv.DictReader(line for line in handle if not line.startswith("#")))
    return {k: np.array([float(r[k]) for r in rows]) for k in rows[0]}


def vec(cols, name):
    return np.column_stack([cols[f"b{c}_{name}_nT"] for c in "xyz"])


def run(capsys, argv):
    code = main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def write_track(path, rows, header="t_s,x_km,y_km,z_km"):
    path.write_text(header + "\n" + "\n".join(",".join(str(v) for v in r) for r in rows) + "\n")
    return path


# --------------------------------------------------------------------------- flyby CLI
def test_flyby_fields_compare_snr_and_plot(tmp_path, capsys):
    out, fig = tmp_path / "field.csv", tmp_path / "field.png"
    code, stdout, err = run(capsys, ["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", str(out), "--plot",
                                     str(fig), "--compare", "ilmare_brine", "--noise-nT", "0.5", "--json"])
    assert code == 0, err
    summary = json.loads(stdout)
    cols = read_csv(out)
    for name in ("t_s", "x_km", "y_km", "z_km", "bx_ind_nT", "by_ind_nT", "bz_ind_nT", "bx_pri_nT", "bx_tot_nT",
                 "bx_diff_nT", "altitude_km"):
        assert name in cols
    sc, other = load_scenario("ilmare"), load_scenario("ilmare_brine")
    lines = sc.drive_lines
    pos = np.column_stack([cols["x_km"], cols["y_km"], cols["z_km"]])
    t = cols["t_s"]
    ind = induced_field(sc.model, lines, pos, t)
    # The CSV holds 12 significant digits: tolerance 1e-10 of the largest value.
    tol = 1e-10 * np.abs(ind).max()
    assert np.abs(vec(cols, "ind") - ind).max() <= tol
    # Primary = sum of the driving lines, B(t) = Re{B_k e^{i w t}} (induct.field.drive definition).
    pri = drive_field_nT(lines, t)
    assert np.abs(vec(cols, "pri") - pri).max() <= 1e-10 * np.abs(pri).max()
    assert np.abs(vec(cols, "tot") - (pri + ind)).max() <= 1e-10 * np.abs(pri).max()
    diff = ind - induced_field(other.model, lines, pos, t)
    assert np.abs(vec(cols, "diff") - diff).max() <= tol
    dmag = np.linalg.norm(diff, axis=1)
    cmp = summary["compare"]
    assert math.isclose(cmp["peak_difference_nT"], dmag.max(), rel_tol=1e-12)
    assert math.isclose(cmp["peak_snr"], dmag.max() / 0.5, rel_tol=1e-12)
    assert math.isclose(cmp["track_snr"], math.sqrt(np.sum(diff**2)) / 0.5, rel_tol=1e-12)
    assert abs(summary["closest_approach"]["altitude_km"] - 100.0) < 1e-3
    assert fig.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "plasma interaction" in summary["limits"] and "steady field not included" in summary["limits"]
    # Text summary.
    code, stdout, err = run(capsys, ["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", str(out)])
    assert code == 0 and "peak induced field" in stdout and "closest approach 100 km" in stdout


def test_body_frame_track_gives_rotated_field(tmp_path, capsys):
    # x_flow = -y_body, y_flow = x_body, z_flow = z_body (induct.field.orbit docstring): the same pass written in the body
    # frame gives the same field, rotated; tolerance 1e-9 of the largest value.
    flow = read_track("ilmare_flyby")
    sel = slice(1500, 2100, 10)
    p, t = flow.positions_km[sel], flow.times_s[sel]
    body = np.column_stack([p[:, 1], -p[:, 0], p[:, 2]])
    path = write_track(tmp_path / "body.csv", [[ti, *b, "body"] for ti, b in zip(t, body)], "t_s,x_km,y_km,z_km,frame")
    out = tmp_path / "out.csv"
    assert run(capsys, ["flyby", "ilmare", "--trajectory", str(path), "--out", str(out)])[0] == 0
    got = vec(read_csv(out), "ind")
    sc = load_scenario("ilmare")
    want_flow = induced_field(sc.model, sc.drive_lines, p, t)
    want = np.column_stack([want_flow[:, 1], -want_flow[:, 0], want_flow[:, 2]])
    assert np.abs(got - want).max() <= 1e-9 * np.abs(want).max()
    # The same file without the frame column, with --frame body.
    path2 = write_track(tmp_path / "body2.csv", [[ti, *b] for ti, b in zip(t, body)])
    assert run(capsys, ["flyby", "ilmare", "--trajectory", str(path2), "--frame", "body", "--out", str(out)])[0] == 0
    assert np.abs(vec(read_csv(out), "ind") - want).max() <= 1e-9 * np.abs(want).max()


def test_planet_degree2_option(tmp_path, capsys):
    # --planet adds the degree-2 field: the CSV equals the API with planet_gradient_lines (tolerance 1e-10 of the
    # largest value); the degree-2 part is small but not zero (|G| R ~ 1e-2 of the driving field, computed).
    out = tmp_path / "d2.csv"
    tarvos = str(ROOT / "scenarios" / "tarvos.toml")
    code, stdout, err = run(capsys, ["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", str(out),
                                     "--planet", tarvos])
    assert code == 0, err
    assert "degree 2: gradient of" in stdout and "does not match" not in stdout
    sc = load_scenario("ilmare")
    cols = read_csv(out)
    pos, t = np.column_stack([cols["x_km"], cols["y_km"], cols["z_km"]]), cols["t_s"]
    # Degree 2 from the internal field alone (the current sheet's field is not a potential field inside the sheet).
    assert "internal field only" in stdout
    grads = planet_gradient_lines(read_planet_file(tarvos).without_current_sheet())
    want = induced_field(sc.model, sc.drive_lines, pos, t, degree2=grads)
    assert np.abs(vec(cols, "ind") - want).max() <= 1e-10 * np.abs(want).max()
    d1 = induced_field(sc.model, sc.drive_lines, pos, t)
    part2 = np.abs(want - d1).max()
    assert 1e-3 * np.abs(d1).max() < part2 < 5e-2 * np.abs(d1).max()
    # A scenario whose lines do not come from this planet file: a note says so.
    other = tmp_path / "shifted.toml"
    other.write_text((ROOT / "scenarios" / "ilmare.toml").read_text().replace("phase_deg = [114.", "phase_deg = [14."))
    code, stdout, _ = run(capsys, ["flyby", str(other), "--trajectory", "ilmare_flyby", "--out", str(out),
                                   "--planet", tarvos])
    assert code == 0 and "does not match" in stdout


def test_flyby_residuals_fit_json_toml_and_invert(tmp_path, capsys):
    res1, res2 = tmp_path / "r1.csv", tmp_path / "r2.csv"
    for track, res, seed in (("ilmare_flyby", res1, "1"), ("ilmare_flyby_polar", res2, "2")):
        code, _, err = run(capsys, ["flyby", "ilmare", "--trajectory", track, "--out", str(tmp_path / "f.csv"),
                                    "--noise-nT", "0.5", "--residuals", str(res), "--seed", seed])
        assert code == 0, err
    code, stdout, err = run(capsys, ["fit", "ilmare", "--data", str(res1), str(res2), "--noise-nT", "0.5", "--json"])
    assert code == 0, err
    result = json.loads(stdout)
    entry = result["response"][0]
    for key in ("period_h", "amplitude", "amplitude_sigma", "phase_lag_deg", "phase_lag_sigma_deg", "real", "imag", "cov"):
        assert key in entry
    assert len(result["response"]) == 5 and result["thresholds"]["max_sigma"] == 0.1
    assert result["thresholds"]["max_correlation"] == 0.9 and entry["label"] == "synodic"
    # Two short passes cannot separate five periods: every line correlates above 0.9 with another, so none is
    # "determined" (issue 11 item 8: "not separable", never "determined"), and the output says so.
    assert not result["separable"] and not any(e["determined"] for e in result["response"])
    assert "not separable from orbital" in entry["reason"] and any("not separated" in n for n in result["notes"])
    code, stdout, err = run(capsys, ["fit", "ilmare", "--data", str(res1), str(res2), "--noise-nT", "0.5"])
    assert code == 0, err
    synodic_row = next(line for line in stdout.splitlines() if line.startswith("synodic"))
    assert synodic_row.endswith("NO") and "(determined = all three hold)" in stdout
    # --lines synodic 84.7: the synodic and orbital (84.69 h) lines free, the other three fixed to the forward
    # model of the scenario's interior; both free lines are determined.
    toml = tmp_path / "fitted.toml"
    code, stdout, err = run(capsys, ["fit", "ilmare", "--data", str(res1), str(res2), "--noise-nT", "0.5",
                                     "--lines", "synodic", "84.7", "--json", "--toml", str(toml)])
    assert code == 0, err
    result = json.loads(stdout)
    assert [e["label"] for e in result["response"]] == ["synodic", "orbital"]
    assert all(e["determined"] for e in result["response"]) and result["separable"]
    assert [f["label"] for f in result["fixed"]] == ["beat syn-orb", "synodic/2", "beat syn+orb"]
    want = load_scenario("ilmare").model.response(periods_s=[f["period_h"] * 3600.0 for f in result["fixed"]]).response
    assert np.allclose([f["real"] + 1j * f["imag"] for f in result["fixed"]], want, rtol=0, atol=1e-12)
    # The measurement file holds the free lines' full covariance (across periods and components, file order):
    # equal to the fit's covariance to 1e-12 relative (written with repr, read by invert's reader).
    m = load_measurements(toml)
    assert m.n_entries == 2 and result["toml"]["entries"] == 2
    assert m.values[0][0] == result["response"][0]["real"] and m.values[0][1] == result["response"][0]["imag"]
    cov = np.array(result["covariance"])
    assert m.full_covariance is not None and abs(cov[0, 2]) > 0  # a cross-period term is present
    err_cov = np.abs(m.full_covariance - cov).max()
    assert err_cov <= 1e-12 * np.abs(cov).max(), f"largest difference {err_cov:.3g}"
    # invert's chi-square on these data is the generalised one, r^T C^-1 r with the full C (Tarantola 2005, Inverse
    # Problem Theory, ch. 3, from memory), not the block-diagonal one; checked with numpy.linalg.solve to 1e-9.
    r = np.array([0.9 + 0.1j, 0.1 - 0.05j])
    d = (np.column_stack([r.real, r.imag]) - m.values).reshape(-1)
    full = d @ np.linalg.solve(cov, d)
    block = sum(d[2 * k: 2 * k + 2] @ np.linalg.solve(cov[2 * k: 2 * k + 2, 2 * k: 2 * k + 2], d[2 * k: 2 * k + 2])
                for k in range(2))
    got = float(m.chi2(r))
    assert abs(got - full) <= 1e-9 * full and abs(full - block) > 1e-3 * full, (got, full, block)
    code, stdout, err = run(capsys, ["invert", "ilmare", "--data", str(toml), "--grid", "6", "--json"])
    assert code == 0, err
    assert json.loads(stdout)["data"] == "fitted.toml"
    # An unknown label or period: exit 2 with one line naming it.
    for bad in ("nope", "99.5"):
        code, _, err = run(capsys, ["fit", "ilmare", "--data", str(res1), "--noise-nT", "0.5", "--lines", "synodic", bad])
        assert code == 2 and f"line '{bad}' matches no driving line" in err and len(err.strip().splitlines()) == 1, err


def test_bench_flyby_option(capsys):
    code, stdout, _ = run(capsys, ["bench", "--flyby", "--flyby-points", "2000", "--repeat", "1", "--json"])
    assert code == 0
    res = json.loads(stdout)
    assert res["points"] == 2000 and res["periods"] == 5 and res["seconds"] > 0


# --------------------------------------------------------------------------- bundled tracks
def test_bundled_tracks_match_their_script():
    # scenarios/ilmare_flyby*.csv are written by tools/make_flyby_track.py: regenerate in memory and compare
    # (file precision 1e-4 km); closest approach altitude as documented, 1 s sampling over +-30 min.
    spec = importlib.util.spec_from_file_location("make_flyby_track", ROOT / "tools" / "make_flyby_track.py")
    tool = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(tool)
    for name, params in tool.TRACKS.items():
        track = read_track(resolve_track_path(name[:-4]))
        t, pos = tool.straight_pass(params["t_ca_h"] * 3600.0, params["altitude_km"], params["speed_km_s"],
                                    params["towards"], params["heading"])
        assert np.array_equal(track.times_s, t)
        assert np.abs(track.positions_km - pos).max() <= 1e-4
        alt = np.linalg.norm(track.positions_km, axis=1) - tool.RADIUS_KM
        assert abs(alt.min() - params["altitude_km"]) < 1e-3
        assert np.all(np.diff(t) == 1.0) and t[-1] - t[0] == 3600.0


# --------------------------------------------------------------------------- bad input
GOOD = [[0.0, 3000.0, 0.0, 0.0], [1.0, 3000.0, 10.0, 0.0], [2.0, 3000.0, 20.0, 0.0]]


@pytest.mark.parametrize("rows, header, kwargs, message", [
    ([GOOD[0], GOOD[1], [2.0, 3000.0, "nan", 0.0]], None, {},
     r"row 3, line 4, column y_km: value must be finite, got 'nan'"),
    ([GOOD[0], GOOD[1], [2.0, "abc", 20.0, 0.0]], None, {}, r"row 3, line 4, column x_km: not a number: 'abc'"),
    ([GOOD[0], [0.0, 3000.0, 10.0, 0.0], GOOD[2]], None, {}, r"row 2, line 3, column t_s: t_s = 0.0 repeats"),
    ([GOOD[0], [5.0, 3000.0, 10.0, 0.0], GOOD[2]], None, {}, r"row 3, line 4, column t_s: t_s = 2.0 is earlier than"),
    ([r[:3] for r in GOOD], "t_s,x_km,y_km", {}, r"line 1: missing column\(s\) z_km"),
    ([GOOD[0], GOOD[1][:3], GOOD[2]], None, {}, r"row 2, line 3: 3 values, expected 4"),
    ([r + ["planet"] for r in GOOD], "t_s,x_km,y_km,z_km,frame", {}, r"row 1, line 2, column frame: unknown frame 'planet'"),
    ([GOOD[0] + ["flow"], GOOD[1] + ["body"], GOOD[2] + ["flow"]], "t_s,x_km,y_km,z_km,frame", {},
     r"row 2, line 3, column frame: 'body' differs"),
    (GOOD, None, {"frame": "inertial"}, r"frame option: unknown frame 'inertial'"),
    ([r + ["flow"] for r in GOOD], "t_s,x_km,y_km,z_km,frame", {"frame": "body"}, r"column frame says 'flow'"),
    (GOOD[:1], None, {}, r"at least 2 data rows"),
    (GOOD, None, {"columns": ("bx_nT",)}, r"missing column\(s\) bx_nT"),
    (GOOD, "t_s,x_km,x_km,z_km", {}, r"x_km appear more than once"),
])
def test_track_errors_name_row_and_column(tmp_path, rows, header, kwargs, message):
    path = write_track(tmp_path / "bad.csv", rows, header or "t_s,x_km,y_km,z_km")
    with pytest.raises(ValueError, match=message):
        read_track(path, **kwargs)


def test_inside_body_and_empty_file_errors(tmp_path, capsys):
    path = write_track(tmp_path / "inside.csv", [GOOD[0], [1.0, 1000.0, 0.0, 0.0], GOOD[2]])
    with pytest.raises(ValueError, match=r"row 2, line 3, columns x_km,y_km,z_km: the point lies inside"):
        check_outside(read_track(path), 1540.0)
    code, _, err = run(capsys, ["flyby", "ilmare", "--trajectory", str(path), "--out", str(tmp_path / "o.csv")])
    assert code == 2 and "row 2, line 3" in err and "inside Ilmare" in err
    res = write_track(tmp_path / "res.csv", [r + [0.0, 0.0, 0.0] for r in (GOOD[0], [1.0, 10.0, 0, 0], GOOD[2])],
                      "t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT")
    code, _, err = run(capsys, ["fit", "ilmare", "--data", str(res), "--noise-nT", "0.5"])
    assert code == 2 and "row 2, line 3" in err and "inside the body" in err
    empty = tmp_path / "empty.csv"
    empty.write_text("# only a comment\n")
    with pytest.raises(ValueError, match="empty file"):
        read_track(empty)
    with pytest.raises(FileNotFoundError, match="not found"):
        read_track(tmp_path / "missing.csv")


def test_cli_option_errors(tmp_path, capsys):
    out = str(tmp_path / "o.csv")
    code, _, err = run(capsys, ["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", out, "--residuals", out + "2"])
    assert code == 2 and "--residuals needs --noise-nT" in err
    code, _, err = run(capsys, ["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", out, "--noise-nT", "-1"])
    assert code == 2 and "--noise-nT must be > 0" in err
    code, _, err = run(capsys, ["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", out, "--frame", "planet"])
    assert code == 2 and "unknown frame 'planet'" in err
    nolines = tmp_path / "nolines.toml"
    shutil.copy(ROOT / "scenarios" / "brenna.toml", nolines)
    code, _, err = run(capsys, ["flyby", str(nolines), "--trajectory", "ilmare_flyby", "--out", out])
    assert code == 2 and "no [[drive.lines]]" in err
    code, _, err = run(capsys, ["fit", "ilmare", "--data", "ilmare_flyby", "--noise-nT", "0.5"])
    assert code == 2 and "missing column(s) bx_nT" in err
