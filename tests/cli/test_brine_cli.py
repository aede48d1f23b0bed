"""``induct brine`` command, run in-process through induct.cli.main."""

import json

import gsw
import numpy as np
import pytest

from induct import brine
from induct.cli.main import main


def test_single_point_table(capsys):
    rc = main(["brine", "--solute", "seawater", "--salinity", "35", "--temperature", "10", "--pressure", "20"])
    out = capsys.readouterr().out
    assert rc == 0
    assert "[S/m]" in out and "[degC]" in out and "[MPa]" in out and "[SP]" in out
    value = float(out.strip().splitlines()[2].split()[3])
    # gsw.C_from_SP (TEOS-10) in mS/cm -> S/m; printed with 6 significant digits
    ref = gsw.C_from_SP(35.0, 10.0, 2000.0) / 10.0
    assert abs(value - ref) <= 5e-6 * ref, (value, ref)


def test_range_table_flags_extrapolated_rows(capsys):
    rc = main(["brine", "--solute", "seawater", "--salinity", "35", "--temperature", "0",
               "--pressure", "0:300:4"])
    lines = capsys.readouterr().out.strip().splitlines()
    rows = [ln for ln in lines[2:] if not ln.startswith("* extrapolated")]
    assert rc == 0 and len(rows) == 4
    assert [r.startswith("*") for r in rows] == [False, False, True, True]
    assert rows[2].rstrip().endswith("DEEP") and lines[-1].startswith("* extrapolated")


def test_csv_output(tmp_path, capsys):
    path = tmp_path / "mgso4.csv"
    rc = main(["brine", "--solute", "MgSO4", "--salinity", "0:100:11", "--temperature", "5",
               "--csv", str(path)])
    capsys.readouterr()
    assert rc == 0
    text = path.read_text().splitlines()
    assert text[0].startswith("# induct") and "rows=11" in text[0] and "S/m" in text[1]
    header = text[2].split(",")
    assert header[:5] == ["salinity", "temperature_C", "pressure_MPa", "conductivity_S_per_m", "freezing_point_C"]
    body = [ln.split(",") for ln in text[3:]]
    assert len(body) == 11
    g = np.array([float(r[0]) for r in body])
    k = np.array([float(r[3]) for r in body])
    np.testing.assert_allclose(k, brine.conductivity("MgSO4", g, 5.0), rtol=1e-12)


def test_json_output_with_flags(capsys):
    rc = main(["brine", "--solute", "NaCl", "--salinity", "50", "--temperature=-2:2:2", "--json"])
    data = json.loads(capsys.readouterr().out)
    assert rc == 0 and data["solute"] == "NaCl" and data["units"]["conductivity_S_per_m"] == "S/m"
    cold, warm = data["rows"]
    assert cold["flags"] == ["COLD"] and cold["extrapolated"] is True
    assert warm["flags"] == [] and warm["extrapolated"] is False
    assert abs(warm["conductivity_S_per_m"] - float(brine.conductivity("NaCl", 50.0, 2.0))) < 1e-12


def test_default_temperature_is_freezing_point(capsys):
    rc = main(["brine", "--solute", "seawater", "--salinity", "35", "--json"])
    row = json.loads(capsys.readouterr().out)["rows"][0]
    assert rc == 0
    assert row["temperature_C"] == row["freezing_point_C"]
    assert abs(row["freezing_point_C"] - gsw.t_freezing(35.16504, 0.0, 0.0)) < 2e-3


def test_invalid_rows_in_a_table_are_marked(capsys):
    rc = main(["brine", "--solute", "seawater", "--salinity", "35", "--temperature=-4:0:3"])
    out = capsys.readouterr().out
    assert rc == 0 and "INVALID" in out and "freezing point" in out


@pytest.mark.parametrize("argv, message", [
    (["--solute", "seawater", "--salinity", "35", "--temperature", "-5"], "below the freezing point"),
    (["--solute", "CaCl2", "--salinity", "35", "--temperature", "5"], "--solute must be one of"),
    (["--solute", "NaCl", "--salinity", "400", "--temperature", "20"], "above saturation"),
    (["--solute", "NaCl", "--salinity", "-3", "--temperature", "20"], "--salinity must be >= 0 (a salinity cannot be negative)"),
    (["--solute", "NaCl", "--salinity", "1:2", "--temperature", "20"], "--salinity must be a number or lo:hi:n"),
    (["--solute", "NaCl", "--salinity", "nan", "--temperature", "20"], "must be finite"),
])
def test_errors_exit_2(argv, message, capsys):
    rc = main(["brine", *argv])
    err = capsys.readouterr().err
    assert rc == 2 and message in err, err
