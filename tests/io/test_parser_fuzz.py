"""Property-based fuzzing (hypothesis) of every file parser and every command-line argument parser.

Property (issue 12, item 7): any input gives a valid result or a ``ValueError``/``FileNotFoundError`` whose
message is one line; never another exception, never a numpy RuntimeWarning; through the CLI, exit code
0 or 2 with at most one line on standard error for a failure. Inputs are valid documents with one part
replaced by an arbitrary TOML value (or arbitrary text for CSV files and options), which reaches the
checks behind the first one. Bounded by ``max_examples`` (about 20 s in all); no deadline (no timed tests).
"""

from __future__ import annotations

import copy
import tomllib
import warnings
from pathlib import Path

import pytest

hypothesis = pytest.importorskip("hypothesis")
from hypothesis import HealthCheck, given, settings, strategies as st  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
SCEN = ROOT / "scenarios"
FUZZ = settings(max_examples=40, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

scalars = st.one_of(
    st.booleans(),
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0, 1, -1, 1e-320, 1e308, -1e308, 1e300, 12.12, 50.0, 0.5]),
    st.text(max_size=8),
)
values = st.recursive(
    scalars,
    lambda inner: st.one_of(st.lists(inner, max_size=3), st.dictionaries(st.text(max_size=6), inner, max_size=3)),
    max_leaves=6,
)


def _paths(doc, prefix=()):
    """Every (path) to a value inside nested dicts/lists."""
    out = []
    items = doc.items() if isinstance(doc, dict) else enumerate(doc) if isinstance(doc, list) else []
    for key, value in items:
        out.append(prefix + (key,))
        out.extend(_paths(value, prefix + (key,)))
    return out


@st.composite
def mutated(draw, doc):
    """``doc`` with one value replaced, one key added or one key removed."""
    doc = copy.deepcopy(doc)
    paths = _paths(doc)
    path = draw(st.sampled_from(paths))
    parent = doc
    for key in path[:-1]:
        parent = parent[key]
    action = draw(st.sampled_from(["replace", "replace", "add", "remove"]))
    if action == "replace":
        parent[path[-1]] = draw(values)
    elif action == "add" and isinstance(parent, dict):
        parent[draw(st.text(min_size=1, max_size=10))] = draw(values)
    elif isinstance(parent, dict):
        del parent[path[-1]]
    return doc


def _check(call):
    """Run ``call``: a result, or a one-line ValueError/FileNotFoundError; no RuntimeWarning."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            call()
        except (ValueError, FileNotFoundError) as exc:
            message = str(exc.args[0] if exc.args else exc)
            assert message.strip(), "empty error message"
    leaked = [str(w.message) for w in caught if issubclass(w.category, RuntimeWarning)]
    assert not leaked, leaked


def _toml(name):
    return tomllib.loads((SCEN / name).read_text())


SCENARIO = _toml("ilmare.toml")
BRINE_SCENARIO = _toml("ilmare_brine.toml")
MEASURED = _toml("ilmare_measured.toml")
PLANET = _toml("tarvos.toml")


@FUZZ
@given(mutated(SCENARIO))
def test_scenario_parser(doc):
    from induct.io.scenario import parse_scenario

    _check(lambda: parse_scenario(doc).model.response(periods_h=[12.0]))


@settings(max_examples=15, deadline=None, derandomize=True)
@given(mutated(BRINE_SCENARIO))
def test_scenario_parser_with_chemistry(doc):
    from induct.io.scenario import parse_scenario

    _check(lambda: parse_scenario(doc))


@FUZZ
@given(mutated(MEASURED))
def test_measurement_parser(doc):
    from induct.io.measurements import parse_measurements

    _check(lambda: parse_measurements(doc).chi2(0.9 + 0.05j))


@FUZZ
@given(mutated(PLANET))
def test_planet_parser(doc):
    from induct.field.drive import parse_planet_table

    _check(lambda: parse_planet_table(doc, "tarvos.toml"))


@FUZZ
@given(mutated({"invert": {"ocean.thickness_km": {"range": [50.0, 150.0], "scale": "linear"},
                           "ocean.conductivity_S_per_m": {"range": [0.1, 10.0], "scale": "log"}}}))
def test_parameter_parser(doc):
    from induct.inversion.priors import parse_parameters
    from induct.io.scenario import parse_scenario

    model = parse_scenario(copy.deepcopy(SCENARIO)).model
    _check(lambda: parse_parameters(doc.get("invert", doc), model))


@FUZZ
@given(st.text(alphabet=st.sampled_from(list("0123456789.,-+eE \n#\ufefftsxyzbnk_kmTnanif\"")), max_size=120))
def test_toml_text(text):
    from induct.io.toml import read_toml

    def call():
        path = _tmp / "f.toml"
        path.write_text(text, encoding="utf-8")
        read_toml(path)

    _check(call)


# --------------------------------------------------------------------------- CSV files
TRACK_HEADERS = ["t_s,x_km,y_km,z_km", "t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT", "t_s,bx_nT,by_nT,bz_nT",
                 "candidate,t_s,x_km,y_km,z_km", "t_s,x_km,y_km,z_km,frame", "\ufefft_s,x_km,y_km,z_km"]
cells = st.one_of(st.sampled_from(["0", "1", "-1", "2000", "1e308", "nan", "inf", "", " ", "x", "flow", "body",
                                   "A", "1e-320", "3.5"]),
                  st.floats(allow_nan=True, allow_infinity=True).map(repr), st.text(max_size=4))
rows = st.lists(st.lists(cells, min_size=1, max_size=8).map(",".join), max_size=6)


@pytest.fixture(scope="module", autouse=True)
def _folder(tmp_path_factory):
    global _tmp
    _tmp = tmp_path_factory.mktemp("fuzz")


def _csv(header, body, raw=b""):
    path = _tmp / "f.csv"
    path.write_bytes(("\n".join([header] + body) + "\n").encode("utf-8") + raw)
    return path


@FUZZ
@given(st.sampled_from(TRACK_HEADERS), rows, st.sampled_from([b"", b"\xff", b"\x00", b"2,3,4,5\n"]))
def test_csv_parsers(header, body, raw):
    from induct.io.candidates import read_candidates
    from induct.io.scenario import parse_scenario
    from induct.io.tracks import read_field_series, read_residual_tracks, read_track

    path = _csv(header, body, raw)
    model = parse_scenario(copy.deepcopy(SCENARIO)).model
    _check(lambda: read_track(path))
    _check(lambda: read_field_series(path))
    _check(lambda: read_residual_tracks([path], model))
    _check(lambda: read_candidates(path))


# --------------------------------------------------------------------------- command-line options
option_text = st.one_of(
    st.sampled_from(["0", "-1", "nan", "inf", "-inf", "1e300", "1e-300", "35", "0:10:3", "1:2", "::", "a", "",
                     "0:100:1e9", "5:1:2", "1:1000:100000000", "2G", "-5", "1e308"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.text(alphabet=st.sampled_from(list("0123456789:.-e+naif")), max_size=10),
)


def _cli(argv, capsys):
    from induct.cli.main import main

    try:
        code = main(argv)
    except SystemExit as exc:  # argparse rejects the option before the command runs
        code = exc.code
    err = capsys.readouterr().err
    assert code in (0, 2), (argv, code, err)
    if code:
        lines = [ln for ln in err.splitlines() if ln.strip()]
        assert len(lines) == 1 and "Traceback" not in err and "np.float" not in err, (argv, err)


@settings(max_examples=30, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.sampled_from(["--salinity", "--temperature", "--pressure", "--max-memory"]), option_text, option_text)
def test_brine_options(capsys, option, value, salinity):
    argv = ["brine", "--solute", "seawater", f"--salinity={salinity}", f"{option}={value}", "--quiet"]
    _cli(argv, capsys)


@settings(max_examples=30, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(option_text, min_size=1, max_size=3), option_text)
def test_respond_options(capsys, periods, degree):
    given_periods = [p for p in periods if p and not p.startswith("-")] or ["1"]
    _cli(["respond", "ilmare", "--periods-h", *given_periods, f"--degree={degree}", "--quiet"], capsys)


@FUZZ
@given(option_text, option_text, st.sampled_from(["ocean.thickness_km", "ocean.conductivity_S_per_m", "ice shell.x",
                                                  "nope", "ocean.salinity_g_per_kg"]))
def test_axis_and_range_options(lo_hi, n, parameter):
    from induct.cli.budget import parse_size
    from induct.cli.commands.separate import _range
    from induct.io.scenario import parse_scenario
    from induct.planning.maps import parse_axis_spec

    model = parse_scenario(copy.deepcopy(SCENARIO)).model
    spec = f"{parameter}={lo_hi}:{n}"
    _check(lambda: parse_axis_spec(spec, model, "--x"))
    _check(lambda: _range(f"{lo_hi}:{n}", "--periods-h", True))
    _check(lambda: parse_size(n))


@settings(max_examples=25, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.sampled_from(["respond", "brine", "drive", "flyby", "fit", "invert", "map", "diagram", "separate", "demo"]),
       st.lists(st.one_of(option_text, st.sampled_from(["--out", "--csv", "--json", "--grid", "--samples", "--x",
                                                        "--periods-h", "--data", "--help-me", "-q"])), max_size=4))
def test_any_command_line_is_parsed_or_refused_in_one_line(capsys, command, words):
    """Every sub-parser: random words either parse or exit 2 with one line (the command itself is not run)."""
    from induct.cli.main import build_parser

    parser = build_parser()
    try:
        parser.parse_args([command, *words])
    except SystemExit as exc:
        err = capsys.readouterr().err
        assert exc.code == 2 and len([ln for ln in err.splitlines() if ln.strip()]) == 1, err
