"""The end-to-end demo in its fast mode: every step runs, every figure and the report are written."""

import pytest

from induct.cli.main import main
from induct.cli.demo import STEP_KEYS, run_demo


def test_demo_fast_writes_figures_and_report(tmp_path):
    steps, report = run_demo(tmp_path, fast=True, progress=False)
    names = {p.name for p in tmp_path.iterdir()}
    for stem in ("driving_spectrum", "flyby", "map_amplitude", "map_difference", "diagram", "separation", "inversion_corner",
                 "plan"):
        for suffix in (".png", ".pdf"):
            path = tmp_path / (stem + suffix)
            assert path.is_file() and path.stat().st_size > 5000, path
    assert {"map_amplitude.nc", "map_amplitude.csv", "flyby_field.csv"} <= names
    text = report.read_text()
    # The report carries the numbers and says what the model leaves out.
    assert "phase lag (deg)" in text and "95 % range" in text and "plasma interaction" in text
    assert [s.argv[0] for s in steps] == ["respond", "drive", "flyby", "map", "map", "diagram", "separate", "invert", "plan"]


def test_demo_command(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "d"), "--fast", "--no-progress"]) == 0
    out = capsys.readouterr().out
    assert "Ilmare" in out and "report.md" in out and "plasma interaction" in out


def test_demo_planning_figures_alone(tmp_path):
    # The figure kinds of the planning studies (maps, diagram, separation), drawn by the demo's own steps:
    # PNG and vector PDF of each, every one a real figure (> 10 kB), and a report that covers only these steps.
    keys = ["map_amplitude", "map_difference", "diagram", "separation"]
    steps, report = run_demo(tmp_path, fast=True, progress=False, only=keys)
    assert [s.key for s in steps] == keys and set(keys) <= set(STEP_KEYS)
    pictures = sorted(p.name for s in steps for p in s.files if p.suffix in (".png", ".pdf"))
    assert pictures == sorted(f"{n}.{e}" for n in ("map_amplitude", "map_difference", "diagram", "separation")
                              for e in ("png", "pdf"))
    for s in steps:
        for p in s.files:
            if p.suffix in (".png", ".pdf"):
                assert p.stat().st_size > 10_000, f"{p} is only {p.stat().st_size} bytes"
    text = report.read_text()
    assert "## 1. Feasibility map" in text and "Inversion" not in text
    assert not [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")]  # atomic writes leave nothing behind
    with pytest.raises(ValueError, match="unknown demo step"):
        run_demo(tmp_path, fast=True, progress=False, only=["gallery"])
