"""``--truth`` on ``induct map`` and ``induct invert``: true values marked on the figures, bad items refused (issue 12)."""

from __future__ import annotations

import pytest

from induct.cli.main import main

AXES = ["--x", "ice shell.thickness_km=2:60:6", "--y", "ocean.conductivity_S_per_m=0.1:30:5:log"]


def test_map_truth_assignments_and_scenario(tmp_path, capsys):
    out = tmp_path / "m"
    assert main(["map", "ilmare", *AXES, "--no-netcdf", "--out", str(out),
                 "--truth", "ice shell.thickness_km=25", "ocean.conductivity_S_per_m=3"]) == 0
    assert (tmp_path / "m.png").stat().st_size > 0 and (tmp_path / "m.pdf").stat().st_size > 0
    assert main(["map", "ilmare", *AXES, "--no-netcdf", "--out", str(tmp_path / "s"), "--truth", "ilmare_thick"]) == 0
    capsys.readouterr()


@pytest.mark.parametrize("items, message", [
    (["ocean.thickness_km=50"], "is not shown in this figure"),
    (["ice shell.thickness_km=25"], "missing 'ocean.conductivity_S_per_m'"),
    (["ice shell.thickness_km=abc", "ocean.conductivity_S_per_m=3"], "needs a number, got 'abc'"),
    (["ice shell.thickness_km=25", "ocean.conductivity_S_per_m=-3"], "must be a finite number >= 0 S/m"),
    (["ice shell.thickness_km=nan", "ocean.conductivity_S_per_m=3"], "must be a finite number"),
    (["ice shell.thickness_km=25", "ice shell.thickness_km=26"], "given twice"),
    (["nolayer.thickness_km=25", "ocean.conductivity_S_per_m=3"], "no layer 'nolayer'"),
    (["thickness", "ocean.conductivity_S_per_m=3"], "expected LAYER.FIELD=VALUE"),
])
def test_map_truth_bad_items_exit_2(tmp_path, capsys, items, message):
    assert main(["map", "ilmare", *AXES, "--no-netcdf", "--out", str(tmp_path / "m"), "--truth", *items]) == 2
    err = capsys.readouterr().err
    assert "--truth" in err and message in err, err
    assert not (tmp_path / "m.png").exists()  # refused before any work


def test_invert_truth_marks_the_corner(tmp_path, capsys):
    plot = tmp_path / "c"
    assert main(["invert", "ilmare", "--data", "ilmare_measured", "--grid", "6", "--plot", str(plot), "--no-progress",
                 "--truth", "ocean.conductivity_S_per_m=2.8", "ice shell.thickness_km=20"]) == 0
    assert (tmp_path / "c.png").exists()
    capsys.readouterr()
    assert main(["invert", "ilmare", "--data", "ilmare_measured", "--grid", "6", "--no-progress", "--truth", "ilmare"]) == 2
    assert "give --plot FILE too" in capsys.readouterr().err
