"""The map, diagram, separate and bench --map commands, end to end on the bundled scenario."""

import csv
import json
import sys
import textwrap

import numpy as np
import pytest

from induct import load_scenario
from induct.cli.main import main
from induct.planning.maps import feasibility_map
from induct.io.measurements import load_measurements

X = "ice shell.thickness_km=2:90:30"
Y = "ocean.conductivity_S_per_m=0.05:30:20:log"

THICK = """
[body]
name = "Ilmare"
radius_km = 1540.0
[[layers]]
name = "ice shell"
thickness_km = 40.0
conductivity_S_per_m = 1e-6
[[layers]]
name = "ocean"
thickness_km = 95.0
conductivity_S_per_m = 1.0
[[layers]]
name = "mantle"
thickness_km = 805.0
conductivity_S_per_m = 0.01
[[layers]]
name = "core"
conductivity_S_per_m = 1e5
[drive]
periods_h = [12.12]
"""


def test_map_command_writes_all_outputs_matching_the_library(tmp_path, capsys):
    xr = pytest.importorskip("xarray")
    prefix = tmp_path / "out" / "ind"
    argv = [
        "map", "ilmare", "--x", X, "--y", Y, "--period-h", "12.12", "--quantity", "induced_nT",
        "--drive-nT", "150", "--altitude-km", "60", "--data", "ilmare_measured", "--noise-nT", "0.5", "--out", str(prefix),
    ]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert "wrote" in out and "best chi-square" in out and "Spherically symmetric" in out
    for suffix in (".png", ".pdf", ".nc", ".csv"):
        path = prefix.with_name("ind" + suffix)
        assert path.stat().st_size > 1000, f"{path} is only {path.stat().st_size} bytes"
    lib = feasibility_map(
        load_scenario("ilmare").model, X, Y, 12.12, "induced_nT", drive_nT=150.0, altitude_km=60.0,
        measurements=load_measurements("ilmare_measured"), noise_nT=0.5,
    )
    with open(prefix.with_name("ind.csv"), newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["ice shell.thickness_km", "ocean.conductivity_S_per_m", "induced_nT", "chi_square"]
    got = np.array(rows[1:], dtype=float)
    assert np.array_equal(got[:, 2], lib.values.ravel()) and np.array_equal(got[:, 3], lib.chi_square.ravel())
    with xr.open_dataset(prefix.with_name("ind.nc"), engine="h5netcdf") as ds:
        assert np.array_equal(ds["induced_nT"].values, lib.values)
        assert ds.attrs["quantity"] == "induced_nT" and ds.attrs["noise_nT"] == 0.5


def test_map_difference_against_a_reference_file(tmp_path, capsys):
    ref = tmp_path / "thick.toml"
    ref.write_text(textwrap.dedent(THICK))
    prefix = tmp_path / "diff"
    argv = ["map", "ilmare", "--x", X, "--y", Y, "--quantity", "difference_nT", "--reference", str(ref),
            "--drive-nt", "200", "--altitude-km", "100", "--out", str(prefix), "--no-netcdf"]
    assert main(argv) == 0
    assert not prefix.with_name("diff.nc").exists()
    rows = list(csv.DictReader(open(prefix.with_name("diff.csv"))))
    lib = feasibility_map(load_scenario("ilmare").model, X, Y, 12.12, "difference_nT", drive_nT=200.0,
                          altitude_km=100.0, reference=load_scenario(ref).model)
    assert np.array_equal(np.array([float(r["difference_nT"]) for r in rows]), lib.values.ravel())
    assert "vs thick" in capsys.readouterr().out


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--x", "crust.thickness_km=1:2:3", "--y", Y], "--x: unknown parameter 'crust.thickness_km'"),
        (["--x", X, "--y", "ocean.conductivity_S_per_m=0:30:20:log"], "--y: 'ocean.conductivity_S_per_m': scale = 'log' needs lo > 0"),
        (["--x", X, "--y", Y, "--quantity", "induced_nT"], "needs drive_nT"),
        (["--x", "ice shell.thickness_km=5-60-10", "--y", Y], "malformed"),
    ],
)
def test_map_command_bad_input_exits_2(tmp_path, capsys, extra, message):
    assert main(["map", "ilmare", *extra, "--out", str(tmp_path / "x")]) == 2
    err = capsys.readouterr().err
    assert message in err, err


def test_map_command_without_netcdf_packages(tmp_path, capsys, monkeypatch):
    monkeypatch.setitem(sys.modules, "xarray", None)
    assert main(["map", "ilmare", "--x", X, "--y", Y, "--out", str(tmp_path / "x")]) == 2
    err = capsys.readouterr().err
    assert "reinstall it with pip install induct" in err and "--no-netcdf" in err


def test_diagram_command(tmp_path, capsys):
    prefix = tmp_path / "diag"
    argv = ["diagram", "ilmare", "--data", "ilmare_measured", "--ice-km", "5:60:4",
            "--conductivity", "0.3:30:3:log", "--samples", "20", "--out", str(prefix)]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert "model at 12.12 h" in out
    for suffix in (".png", ".pdf", ".csv"):
        assert prefix.with_name("diag" + suffix).stat().st_size > 1000
    lines = prefix.with_name("diag.csv").read_text().splitlines()
    assert len(lines) == 1 + 3 * (4 + 3) * 20  # periods taken from the measurement file
    assert main(["diagram", "ilmare", "--first", "ocean.thickness_km=10:50:3", "--ice-km", "1:2:3", "--out", str(prefix)]) == 2
    assert "either --first or --ice-km" in capsys.readouterr().err


def test_separate_command(tmp_path, capsys):
    ref = tmp_path / "thick.toml"
    ref.write_text(textwrap.dedent(THICK))
    prefix = tmp_path / "sep"
    argv = ["separate", "ilmare", "--other", str(ref), "--drive-nT", "200", "--altitude-km", "100",
            "--periods-h", "0.5:1000:40", "--altitudes-km", "0:1500:16", "--noise-nT", "0.5", "--out", str(prefix)]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert "ilmare vs thick" in out and "max altitude above 1.5 nT" in out
    for name in ("sep.png", "sep.pdf", "sep_period.csv", "sep_altitude.csv", "sep_summary.csv"):
        assert (tmp_path / name).stat().st_size > 100
    rows = list(csv.DictReader(open(tmp_path / "sep_period.csv")))
    assert len(rows) == 40 and float(rows[0]["period_h"]) == pytest.approx(0.5, rel=1e-15)
    sc, other = load_scenario("ilmare").model, load_scenario(ref).model
    r = [m.response(periods_h=[float(rows[7]["period_h"])]).response[0] for m in (sc, other)]
    want = abs(r[0] - r[1]) * 200.0 * (1540.0 / 1640.0) ** 3
    assert float(rows[7]["difference_nT ilmare vs thick"]) == pytest.approx(want, rel=1e-13)
    assert main(["separate", "ilmare", "--other", str(ref), "--drive-nT", "1", "--periods-h", "5:1", "--out", str(prefix)]) == 2


def test_bench_map_option(capsys):
    assert main(["bench", "--map", "--map-size", "40", "--repeat", "1", "--json"]) == 0
    res = json.loads(capsys.readouterr().out)
    assert res["cells"] == 1600 and res["seconds"] > 0 and res["cells_per_second"] > 0
