"""Issue 12, items 1-4: outputs never lose data, jobs never outgrow the machine, inputs never slip through,
every failure is one line.

Each case of the issue is one table row. The expectations are facts of the trade (common practice):
exit code 2 for bad input (POSIX utility conventions, as argparse uses), 128 + signal number for a
command stopped by a signal (130 for SIGINT, 143 for SIGTERM: the shell convention), atomic replacement
by rename within one folder (POSIX rename(2)), UTF-8 with an optional byte-order mark (Unicode Standard,
section 23.8). No timed tests: sizes are refused from estimates, never by waiting.
"""

from __future__ import annotations

import os
import signal
from pathlib import Path

import numpy as np
import pytest

from induct.cli.main import main

ROOT = Path(__file__).resolve().parents[2]
SCEN = ROOT / "scenarios"


def _run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def _one_line(err: str) -> bool:
    lines = [ln for ln in err.splitlines() if ln.strip()]
    return len(lines) == 1 and "Traceback" not in err


def _leftovers(folder: Path) -> list[str]:
    """Temporary files left in ``folder`` (the atomic writers' hidden ``.NAME.HEX.tmp`` names)."""
    return sorted(p.name for p in folder.rglob(".*") if p.is_file())


@pytest.fixture()
def work(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "scn.toml").write_text((SCEN / "ilmare.toml").read_text())
    (tmp_path / "t.csv").write_text((SCEN / "ilmare_flyby.csv").read_text())
    return tmp_path


# --------------------------------------------------------------------------- item 1: files
@pytest.mark.parametrize(
    "argv, protected",
    [
        (["respond", "scn.toml", "--csv", "scn.toml"], "scn.toml"),
        (["flyby", "ilmare", "--trajectory", "t.csv", "--out", "t.csv"], "t.csv"),
        (["flyby", "scn.toml", "--trajectory", "t.csv", "--out", "f.csv", "--residuals", "scn.toml",
          "--noise-nT", "1"], "scn.toml"),
        (["map", "scn.toml", "--x", "ocean.thickness_km=10:100:3", "--y", "ice shell.thickness_km=5:50:3",
          "--out", "scn", "--no-netcdf"], None),  # writes scn.csv/.png/.pdf: allowed, the input is scn.toml
    ],
)
def test_never_writes_over_an_input(work, capsys, argv, protected):
    before = {p.name: p.read_bytes() for p in work.iterdir() if p.is_file()}
    code, _, err = _run(argv, capsys)
    if protected is None:
        assert code == 0, err
        assert (work / "scn.toml").read_bytes() == before["scn.toml"]
        return
    assert code == 2 and _one_line(err) and "it is an input of this command" in err, err
    assert (work / protected).read_bytes() == before[protected]
    assert _leftovers(work) == []


def test_two_outputs_with_one_name_are_refused(work, capsys):
    code, _, err = _run(["flyby", "ilmare", "--trajectory", "t.csv", "--out", "x.csv", "--residuals", "x.csv",
                         "--noise-nT", "1"], capsys)
    assert code == 2 and "same file" in err and not (work / "x.csv").exists()


def test_replacing_an_earlier_output_is_said(work, capsys):
    assert _run(["respond", "ilmare", "--csv", "r.csv"], capsys)[0] == 0
    code, _, err = _run(["respond", "ilmare", "--csv", "r.csv"], capsys)
    assert code == 0 and "replaced the earlier file r.csv" in err


@pytest.mark.parametrize(
    "argv, made",
    [
        (["respond", "ilmare", "--csv", "new/a/r.csv"], "new/a/r.csv"),
        (["brine", "--solute", "seawater", "--salinity", "35", "--csv", "new/b/b.csv"], "new/b/b.csv"),
        (["flyby", "ilmare", "--trajectory", "ilmare_flyby", "--out", "new/c/f.csv"], "new/c/f.csv"),
        (["drive", str(SCEN / "tarvos.toml"), "--json", "new/d/d.json"], "new/d/d.json"),
        (["drive", str(SCEN / "tarvos.toml"), "--write-scenario", "new/e/s.toml"], "new/e/s.toml"),
    ],
)
def test_missing_output_folders_are_created(work, capsys, argv, made):
    code, _, err = _run(argv, capsys)
    assert code == 0, err
    assert (work / made).is_file()


def _interrupt_after_first_file(monkeypatch, exc):
    """Make the second atomic write of a run raise ``exc`` (the first has then been written to its temporary)."""
    import induct.io.files as files

    real = files.atomic_path
    calls = {"n": 0}

    def flaky(path, suffix=".tmp"):
        calls["n"] += 1
        if calls["n"] == 2:
            exc()
        return real(path, suffix)

    monkeypatch.setattr(files, "atomic_path", flaky)
    return calls


def _raise_sigint():
    raise KeyboardInterrupt


def _send_sigterm():
    os.kill(os.getpid(), signal.SIGTERM)


@pytest.mark.parametrize("stop, code, word", [(_raise_sigint, 130, "interrupted"), (_send_sigterm, 143, "terminated")])
def test_interrupted_command_leaves_no_partial_output(work, capsys, monkeypatch, stop, code, word):
    calls = _interrupt_after_first_file(monkeypatch, stop)
    rc, _, err = _run(["map", "ilmare", "--x", "ocean.thickness_km=10:100:4", "--y", "ice shell.thickness_km=5:50:4",
                       "--out", "res/res", "--no-netcdf", "--quiet"], capsys)
    assert rc == code and _one_line(err) and word in err, err
    written = sorted(p.name for p in (work / "res").iterdir()) if (work / "res").exists() else []
    assert calls["n"] == 2 and (work / "res").is_dir()  # the first file had been written to its temporary
    assert written == [], f"partial outputs left: {written}"


# --------------------------------------------------------------------------- item 2: size
@pytest.mark.parametrize(
    "argv, words",
    [
        (["invert", "ilmare", "--data", "ilmare_measured", "--grid", "100000"], "1e+15 cells"),
        (["map", "ilmare", "--x", "ocean.thickness_km=10:100:100000", "--y", "ice shell.thickness_km=5:50:100000",
          "--out", "m/m"], "1e+10 cells"),
        (["diagram", "ilmare", "--samples", "100000000", "--out", "d/d"], "curve points"),
        (["separate", "ilmare", "--other", "ilmare_thick", "--drive-nT", "10", "--periods-h", "1:1000:100000000",
          "--out", "s/s"], "n = 100000000 values"),
        (["brine", "--solute", "seawater", "--salinity", "0:35:10000", "--temperature", "0:10:10000"], "1e+08 rows"),
        (["invert", "ilmare", "--data", "ilmare_measured", "--grid", "2000", "--max-memory", "100M"], "h;"),
        (["flyby", "ilmare", "--trajectory", "t.csv", "--out", "f.csv", "--max-memory", "1M"], "track rows"),
        (["respond", "ilmare", "--max-memory", "1k"], "response at"),
    ],
)
def test_large_jobs_are_refused_with_an_estimate(work, capsys, argv, words):
    code, _, err = _run(argv, capsys)
    assert code == 2 and _one_line(err), err
    assert "needs about" in err or "more than this command handles" in err, err
    assert words in err, err
    assert _leftovers(work) == []


def test_long_runs_announce_their_time_and_quiet_silences_it(capsys):
    from induct.cli.budget import check_job

    class Args:
        max_memory, quiet = None, False

    check_job(Args, "a long job", 1e6, seconds=8 * 3600)
    assert "estimated 8 h" in capsys.readouterr().err
    Args.quiet = True
    check_job(Args, "a long job", 1e6, seconds=8 * 3600)
    assert capsys.readouterr().err == ""


@pytest.mark.parametrize("text, expected", [("2G", 2 * 1024**3), ("500M", 500 * 1024**2), ("1.5gb", 1.5 * 1024**3),
                                            ("1000", 1000)])
def test_max_memory_sizes(text, expected):
    from induct.cli.budget import parse_size

    assert parse_size(text) == int(expected)


@pytest.mark.parametrize("text", ["", "-1G", "2X", "nan", "1e400"])
def test_bad_max_memory_is_one_line(capsys, text):
    code, _, err = _run(["respond", "ilmare", f"--max-memory={text}"], capsys)
    assert code == 2 and _one_line(err) and "--max-memory" in err


def test_task_list_is_lazy():
    from induct.parallel.execution import chunk_ranges

    ranges = chunk_ranges(10**15, 65536)  # a 100000^3 grid: 1.5e10 tasks, never listed
    assert len(ranges) == -(-10**15 // 65536) and ranges[-1] == ((len(ranges) - 1) * 65536, 10**15)


def test_two_sigma_candidates_stay_bounded(monkeypatch):
    """Uninformative data (every cell inside 2 sigma): the kept list stays bounded and the count stays exact.

    chi2 >= 0 for a positive-definite covariance (common practice), so a value <= delta_chi2 is inside the
    final 2-sigma set whatever the global minimum; those are counted, not kept.
    """
    import induct.inversion.grid as grid

    monkeypatch.setattr(grid, "WITHIN_CAP", 1000)
    delta = 8.02
    rng = np.random.default_rng(1)
    parts = []
    for start in range(0, 50_000, 5000):
        c = rng.uniform(0.0, 9.0, 5000)
        within, sure, dropped = grid._bound_within(c[c <= c.min() + delta], delta, 0, 0)
        parts.append(grid.GridPartial(
            ref=float(c.min()), best_index=start, marginals=[np.zeros(1)], maps={}, n_valid=5000, n_cells=5000,
            within=within, listed_chi2=np.empty(0), listed_index=np.empty(0, dtype=np.int64), delta_chi2=delta,
            cap=0, n_within_sure=sure, n_within_dropped=dropped,
        ))
        parts[-1]._all = c
    merged = parts[0]
    for p in parts[1:]:
        merged = grid.combine_partials(merged, p)
        assert merged.within.size <= 1000
    everything = np.concatenate([p._all for p in parts])
    exact = int(np.count_nonzero(everything <= everything.min() + delta))
    count = merged.n_within_sure + int(np.count_nonzero(merged.within <= merged.ref + delta))
    assert merged.n_within_dropped == 0 and count == exact, (count, exact)


def test_progress_is_shown_by_default_and_quiet_hides_it(work, capsys):
    argv = ["map", "ilmare", "--x", "ocean.thickness_km=10:100:8", "--y", "ice shell.thickness_km=5:50:8",
            "--out", "p/p", "--no-netcdf", "--task-size", "16"]
    code, _, err = _run(argv, capsys)
    assert code == 0 and "chunk" in err, err
    code, _, err = _run(argv + ["--quiet"], capsys)
    assert code == 0 and "chunk" not in err and "replaced the earlier file" in err


# --------------------------------------------------------------------------- item 3: schema
def _scenario(work, old, new, src="ilmare.toml"):
    text = (SCEN / src).read_text()
    assert old in text
    path = work / "case.toml"
    path.write_text(text.replace(old, new, 1))
    return path


SCHEMA_CASES = [
    # (source scenario, replace, by, words in the one-line error)
    ("ilmare.toml", "[drive]", "[drive]\nperiods_hh = [1.0]", "unknown key(s) 'periods_hh'"),
    ("ilmare.toml", "[drive]", "[map]\nquantity = 'x'\n[drive]", "unknown key(s) 'map'"),
    ("ilmare.toml", "periods_h = [", 'periods_h = ["12", ', "periods_h must hold numbers (hours), got '12'"),
    ("ilmare.toml", "periods_h = [", "periods_h = [true, ", "periods_h must hold numbers (hours), got True"),
    ("ilmare.toml", "radius_km = 1540.0", 'radius_km = "1540"', "radius_km must be a number (not a string)"),
    ("ilmare.toml", "conductivity_S_per_m = 1e5", "conductivity_S_per_m = 1e308", "conductivity_S_per_m must be at most"),
    ("ilmare.toml", "conductivity_S_per_m = 1e5", "conductivity_S_per_m = 1e5\nsolute = 'NaCl'",
     "solute need(s) salinity_g_per_kg"),
    ("ilmare_brine.toml", "salinity_g_per_kg = 50.0", "salinity_g_per_kg = true", "salinity_g_per_kg must be a number (not a boolean)"),
    ("ilmare_brine.toml", "salinity_g_per_kg = 50.0", 'salinity_g_per_kg = 50.0\ntemperature_C = "5"',
     "temperature_C must be a number (not a string)"),
    ("ilmare_brine.toml", "salinity_g_per_kg = 50.0", "salinity_g_per_kg = [50.0]", "salinity_g_per_kg must be a number (not a list)"),
    ("ilmare_brine.toml", "salinity_g_per_kg = 50.0", "salinity_g_per_kg = 50.0\nsublayers = 100000000",
     "sublayers is not a setting"),
    ("ilmare_brine.toml", "salinity_g_per_kg = 50.0", "salinity_g_per_kg = 50.0\nconductivity_S_per_m = 3.0",
     "give conductivity_S_per_m or salinity_g_per_kg (with solute), not both"),
    ("ilmare.toml", "[body]", "ionosphere = 3\n[body]", "ionosphere must be a table"),
]


@pytest.mark.parametrize("src, old, new, words", SCHEMA_CASES)
def test_scenario_schema(work, capsys, src, old, new, words):
    path = _scenario(work, old, new, src)
    code, _, err = _run(["respond", path], capsys)
    assert code == 2 and _one_line(err) and words in err and "case.toml" in err, err


RESPONSE = "[[response]]\nperiod_h = 12.12\namplitude = 0.9\namplitude_sigma = {a}\nphase_lag_deg = 4.0\nphase_lag_sigma_deg = {p}\n"

MEASUREMENT_CASES = [
    (RESPONSE.format(a="1e300", p="1.0"), "amplitude_sigma must be between"),
    (RESPONSE.format(a="1e-300", p="1.0"), "amplitude_sigma must be between"),
    (RESPONSE.format(a="0.01", p="1e300"), "phase_lag_sigma_deg must be between"),
    (RESPONSE.format(a="true", p="1.0"), "amplitude_sigma must be a number"),
    (RESPONSE.format(a='"0.01"', p="1.0"), "amplitude_sigma must be a number"),
    ("[map]\nquantity = 'x'\n" + RESPONSE.format(a="0.01", p="1.0"), "unknown top-level key 'map'"),
    ("[[response]]\nperiod_h = 12.12\nreal = 0.9\nimag = 0.1\ncov = [[1e300, 0.0], [0.0, 1e-4]]\n",
     "cov variances must be between"),
    (RESPONSE.format(a="0.01", p="1.0").replace("amplitude = 0.9", "amplitude = 1e300"), "amplitude = 1e+300 exceeds 1"),
]


@pytest.mark.parametrize("text, words", MEASUREMENT_CASES)
def test_measurement_schema(work, capsys, text, words):
    (work / "m.toml").write_text(text)
    code, _, err = _run(["invert", "ilmare", "--data", "m.toml", "--grid", "4"], capsys)
    assert code == 2 and _one_line(err) and words in err and "m.toml" in err, err


def test_parameter_file_rejects_other_tables(work, capsys):
    (work / "p.toml").write_text('[invert]\n"ocean.thickness_km" = { range = [50, 150] }\n[extra]\nx = 1\n')
    code, _, err = _run(["invert", "ilmare", "--data", "ilmare_measured", "--params", "p.toml", "--grid", "4"], capsys)
    assert code == 2 and _one_line(err) and "'extra'" in err


@pytest.mark.parametrize(
    "name, content, argv",
    [
        ("latin.toml", "[body]\nname = 'caf\xe9'\n".encode("latin-1"), ["respond", "{f}"]),
        ("bin.toml", b"\x00\x01PK\x03\x04", ["respond", "{f}"]),
        ("latin.csv", b"t_s,x_km,y_km,z_km\n0,2000,0,0\n\xe9\n", ["flyby", "ilmare", "--trajectory", "{f}", "--out", "o.csv"]),
        ("m.toml", b"\xff\xfe[\x00", ["invert", "ilmare", "--data", "{f}"]),
        ("p.toml", b"\xc3\x28 = 1\n", ["drive", "{f}"]),
    ],
)
def test_undecodable_files_are_named(work, capsys, name, content, argv):
    (work / name).write_bytes(content)
    code, _, err = _run([a.format(f=name) for a in argv], capsys)
    assert code == 2 and _one_line(err) and name in err and ("UTF-8" in err or "binary" in err), err


def test_csv_byte_order_mark_is_accepted(work, capsys):
    text = (SCEN / "ilmare_flyby.csv").read_text()
    (work / "bom.csv").write_text(text, encoding="utf-8-sig")
    code, _, err = _run(["flyby", "ilmare", "--trajectory", "bom.csv", "--out", "b.csv"], capsys)
    assert code == 0, err
    plain = _run(["flyby", "ilmare", "--trajectory", "t.csv", "--out", "p.csv"], capsys)
    assert plain[0] == 0
    assert (work / "b.csv").read_text().splitlines()[5:] == (work / "p.csv").read_text().splitlines()[5:]


# --------------------------------------------------------------------------- item 4: messages
@pytest.mark.parametrize(
    "argv, words",
    [
        (["brine", "--solute", "seawater", "--salinity=-5"], "--salinity must be >= 0"),
        (["brine", "--solute", "seawater", "--salinity", "nan"], "--salinity must be finite"),
        (["brine", "--solute", "seawater", "--salinity", "35", "--pressure=-10"], "--pressure must be >= 0"),
        (["brine", "--solute", "seawater", "--salinity", "35", "--pressure", "inf"], "--pressure must be finite"),
        (["brine", "--solute", "MgSO4", "--salinity", "300"], "ice liquidus"),
        (["respond", "ilmare", "--periods-h", "1e300"], "--periods-h must be between"),
        (["respond", "ilmare", "--periods-h", "0"], "--periods-h must be > 0 h"),
        (["respond", "ilmare", "--periods-h", "nan"], "--periods-h must be > 0 h, got nan"),
        (["respond", "ilmare", "--degree", "x"], "invalid int value"),
        (["respond", "nothing-here"], "not found"),
        (["map", "ilmare", "--x", "ocean.thickness_km=1:2", "--y", "ocean.conductivity_S_per_m=1:2:3", "--out", "m"],
         "malformed"),
    ],
)
def test_failures_are_one_line_with_exit_2(work, capsys, argv, words):
    with _no_runtime_warning():
        try:
            code, _, err = _run(argv, capsys)
        except SystemExit as exc:  # argparse errors exit from the parser
            code, err = exc.code, capsys.readouterr().err
    assert code == 2 and _one_line(err) and words in err, err
    assert "np.float64" not in err and "no freezing point defined" not in err


class _no_runtime_warning:
    def __enter__(self):
        import warnings

        self._ctx = warnings.catch_warnings(record=True)
        self._log = self._ctx.__enter__()
        warnings.simplefilter("always")

    def __exit__(self, *exc):
        self._ctx.__exit__(*exc)
        leaked = [w for w in self._log if issubclass(w.category, RuntimeWarning)]
        assert not leaked, [str(w.message) for w in leaked]


def test_numbers_print_plainly(work, capsys):
    # a NaN period through the API reaches a message built from a numpy value
    (work / "m.toml").write_text(RESPONSE.format(a="0.01", p="1.0").replace("period_h = 12.12", "period_h = nan"))
    code, _, err = _run(["invert", "ilmare", "--data", "m.toml"], capsys)
    assert code == 2 and "np." not in err and "nan" in err, err


def test_numpy_overflow_becomes_one_line_error(work, capsys, monkeypatch):
    """A floating-point warning that would reach the user is turned into a bad-input error instead."""
    import induct.cli.commands.respond as respond

    real = respond.response_columns

    def overflowing(*args, **kwargs):
        np.exp(np.array([1e5]))  # RuntimeWarning: overflow encountered in exp
        return real(*args, **kwargs)

    monkeypatch.setattr(respond, "response_columns", overflowing)
    code, _, err = _run(["respond", "ilmare"], capsys)
    assert code == 2 and _one_line(err) and "overflow encountered" in err, err


def test_internal_errors_are_one_line(work, capsys, monkeypatch):
    import induct.cli.commands.respond as respond

    monkeypatch.setattr(respond, "load_scenario", lambda name: 1 / 0)
    code, _, err = _run(["respond", "ilmare"], capsys)
    assert code == 1 and _one_line(err) and "internal error: ZeroDivisionError" in err


# --------------------------------------------------------------------------- item 2: flyby streams long tracks
def test_streamed_flyby_equals_the_whole_track(work, capsys, monkeypatch):
    """The streamed path (pieces of 700 rows) writes the same rows, residuals and summary as the in-memory path.

    The residual noise continues from piece to piece: numpy's Generator draws normals sequentially, so the
    pieces concatenate to one draw (numpy.random.Generator documentation; checked here).
    """
    import json

    import induct.cli.commands.flyby as flyby

    argv = ["flyby", "ilmare", "--trajectory", "t.csv", "--compare", "ilmare_thick", "--noise-nT", "0.5",
            "--residuals", "{d}/r.csv", "--out", "{d}/f.csv", "--json", "--quiet"]
    code, out, err = _run([a.format(d="whole") for a in argv], capsys)
    assert code == 0, err
    whole = json.loads(out)
    monkeypatch.setattr(flyby, "STREAM_ROWS", 0)
    monkeypatch.setattr(flyby, "CHUNK_ROWS", 700)
    code, out, err = _run([a.format(d="streamed") for a in argv], capsys)
    assert code == 0, err
    streamed = json.loads(out)

    def rows(path):
        return [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]

    for name in ("f.csv", "r.csv"):
        assert rows(work / "whole" / name) == rows(work / "streamed" / name), name
    for key in ("points", "time_span_s", "closest_approach", "peak_induced_nT", "peak_induced_t_s"):
        assert streamed[key] == whole[key], key
    for key in ("peak_difference_nT", "peak_snr"):
        assert streamed["compare"][key] == whole["compare"][key], key
    for key in ("rms_difference_nT", "track_snr"):  # sums in another order: round-off only
        assert abs(streamed["compare"][key] - whole["compare"][key]) <= 1e-12 * whole["compare"][key], key


@pytest.mark.parametrize(
    "body, words",
    [
        ("0,2000,0,0\n1,2000,1,0\n1,2000,2,0\n", "times must increase strictly"),  # repeat across pieces
        ("0,2000,0,0\n", "needs at least 2 data rows"),
        ("0,2000,0,0\n1,2000,x,0\n", "not a number"),
    ],
)
def test_streamed_track_checks(work, capsys, monkeypatch, body, words):
    import induct.cli.commands.flyby as flyby

    monkeypatch.setattr(flyby, "STREAM_ROWS", 0)
    monkeypatch.setattr(flyby, "CHUNK_ROWS", 2)
    (work / "s.csv").write_text("t_s,x_km,y_km,z_km\n" + body)
    code, _, err = _run(["flyby", "ilmare", "--trajectory", "s.csv", "--out", "o.csv"], capsys)
    assert code == 2 and _one_line(err) and words in err and not (work / "o.csv").exists(), err
