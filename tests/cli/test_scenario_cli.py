"""Scenario files and the respond / demo / bench commands, end to end."""

import json
import textwrap

import numpy as np
import pytest

from induct import load_scenario
from induct.cli.main import main
from induct.io.scenario import bundled_scenarios


def write(tmp_path, text, name="s.toml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text))
    return path


GOOD = """
[body]
name = "Testbody"
radius_km = 1000.0
[[layers]]
name = "ice shell"
thickness_km = 20.0
conductivity_S_per_m = 1e-6
[[layers]]
name = "ocean"
thickness_km = 80.0
conductivity_S_per_m = 3.0
[[layers]]
name = "core"
conductivity_S_per_m = 1e5
[drive]
periods_h = [10.0, 50.0]
"""


def test_bundled_scenarios_load_and_respond():
    names = bundled_scenarios()
    assert {"ilmare", "brenna"} <= set(names)
    for name in names:
        sc = load_scenario(name)
        if sc.periods_h.size:
            res = sc.model.response(periods_h=sc.periods_h)
            assert np.all((res.amplitude > 0) & (res.amplitude <= 1))


def test_respond_json(tmp_path, capsys):
    path = write(tmp_path, GOOD)
    assert main(["respond", str(path), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(["periods_h", "amplitude", "phase_lag_deg", "real", "imag"]) <= set(out)
    assert out["periods_h"] == [10.0, 50.0]
    sc = load_scenario(path)
    r = sc.model.response(periods_h=[10.0, 50.0]).response
    np.testing.assert_allclose(out["real"], r.real, rtol=1e-15)
    np.testing.assert_allclose(out["imag"], r.imag, rtol=1e-15)
    np.testing.assert_allclose(out["amplitude"], np.hypot(out["real"], out["imag"]), rtol=1e-14)


def test_respond_table_and_periods_override(tmp_path, capsys):
    path = write(tmp_path, GOOD)
    assert main(["respond", str(path), "--periods-h", "1", "2", "3"]) == 0
    text = capsys.readouterr().out
    assert "period (h)" in text and "phase arg R (deg)" in text and "skin depth ocean (km)" in text
    assert "plasma interaction" in text  # the model's limits are stated beside the results
    assert text.count("\n   1.0000") + text.count("\n    1.0000") >= 1


def test_respond_csv(tmp_path, capsys):
    path = write(tmp_path, GOOD)
    out_csv = tmp_path / "r.csv"
    assert main(["respond", str(path), "--csv", str(out_csv)]) == 0
    rows = out_csv.read_text().splitlines()
    assert rows[0].split(",")[:3] == ["period_h", "A", "phase_lag_deg"]
    assert len(rows) == 3


def test_bench_small_runs(capsys):
    assert main(["bench", "--model-periods", "2000", "--baseline-model-periods", "200", "--repeat", "1", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["throughput"] > 0 and out["speedup"] > 0
    # The baseline (scipy AMOS Bessel functions) is an independent evaluation of the same recursion.
    assert out["max_relative_difference"] < 1e-10


@pytest.mark.parametrize(
    "patch, match",
    [
        (("radius_km = 1000.0", "radius_km = -1.0"), "radius_km"),
        (("thickness_km = 80.0", "thickness_km = -80.0"), r"'ocean'\): thickness_km must be > 0"),
        (("thickness_km = 80.0", "thickness_km = 2000.0"), "reach past the centre"),
        (("conductivity_S_per_m = 3.0", "conductivity_S_per_m = -3.0"), "conductivity_S_per_m must be >= 0"),
        (("conductivity_S_per_m = 3.0", "conductivity_S_per_m = nan"), "conductivity_S_per_m is NaN"),
        (("conductivity_S_per_m = 3.0", "conductivty_S_per_m = 3.0"), "unknown key"),
        (("periods_h = [10.0, 50.0]", "periods_h = [0.0]"), "periods_h must be > 0"),
        (('name = "core"', 'name = "ocean"'), "duplicate layer name"),
        (("[body]", "[bod]"), "unknown key"),
        (("radius_km = 1000.0", ""), "radius_km"),
        (("periods_h = [10.0, 50.0]", "periods_h = [10.0, 50.0"), "not valid TOML"),
    ],
)
def test_bad_scenarios_exit_2_with_clear_message(tmp_path, capsys, patch, match):
    path = write(tmp_path, GOOD.replace(*patch))
    assert main(["respond", str(path)]) == 2
    err = capsys.readouterr().err
    assert "error" in err
    import re

    assert re.search(match, err), err


def test_missing_scenario(capsys):
    assert main(["respond", "no-such-scenario"]) == 2
    assert "bundled scenarios (brenna, ilmare" in capsys.readouterr().err


def test_bad_cli_period(tmp_path, capsys):
    path = write(tmp_path, GOOD)
    assert main(["respond", str(path), "--periods-h", "-3"]) == 2
    assert "--periods-h must be > 0 h" in capsys.readouterr().err
