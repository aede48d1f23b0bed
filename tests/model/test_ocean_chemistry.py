"""Oceans given by salinity: temperature, pressure, converged sub-layers, flags and errors."""

import json
import textwrap
import warnings

import numpy as np
import pytest

from induct import brine
from induct import load_scenario
from induct import transfer
from induct.cli.main import main
from induct.model.ocean import CONVERGENCE_RTOL, hydrostatic_pressure_MPa

SCENARIO = """
[body]
name = "Chemtest"
radius_km = 800.0
[[layers]]
name = "ice shell"
thickness_km = 10.0
conductivity_S_per_m = 1e-6
density_kg_per_m3 = 920.0
[[layers]]
name = "ocean"
thickness_km = 60.0
solute = "SOLUTE"
salinity_g_per_kg = SALINITY
EXTRA
[[layers]]
name = "rock"
conductivity_S_per_m = 1e-3
[drive]
periods_h = [10.0, 100.0]
"""


def scenario_file(tmp_path, solute="seawater", salinity=35.0, extra=""):
    text = SCENARIO.replace("SOLUTE", solute).replace("SALINITY", repr(salinity)).replace("EXTRA", extra)
    path = tmp_path / "chem.toml"
    path.write_text(textwrap.dedent(text))
    return path


def test_profile_defaults_and_convergence(tmp_path):
    sc = load_scenario(scenario_file(tmp_path))
    prof = sc.model.layer("ocean").extra["profile"]
    # Temperature defaults to the freezing point at the ice-ocean interface pressure.
    radii = np.array([790e3 - 60e3, 790e3, 800e3])
    dens = np.array([3000.0, 1050.0, 920.0])  # documented defaults for rock and brine; ice as given
    p_top = hydrostatic_pressure_MPa(790e3, radii, dens)
    assert prof.temperature_C[0] == pytest.approx(float(brine.freezing_point("seawater", 35.0, p_top)), abs=1e-12)
    # Sub-layer pressures increase with depth and match the hydrostatic integral at mid-depth.
    assert np.all(np.diff(prof.pressure_MPa) > 0)
    mid_r = 800e3 - prof.depth_km * 1e3
    np.testing.assert_allclose(prof.pressure_MPa, hydrostatic_pressure_MPa(mid_r, radii, dens), rtol=1e-12)
    # Converged: doubling the sub-layers again changes the response by less than 1e-6.
    n = prof.sublayers
    edges = np.linspace(790e3, 730e3, 2 * n + 1)
    mid = 0.5 * (edges[:-1] + edges[1:])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", brine.ExtrapolationWarning)
        sig2 = brine.conductivity("seawater", 35.0, prof.temperature_C[0], hydrostatic_pressure_MPa(mid, radii, dens))
    r_fine = np.concatenate([[730e3], edges[::-1][1:], [800e3]])
    s_fine = np.concatenate([[1e-3], sig2[::-1], [1e-6]])
    periods = np.array([10.0, 100.0]) * 3600
    fine = transfer(r_fine, s_fine, periods)
    coarse = sc.model.response(periods_h=[10.0, 100.0]).response
    assert np.max(np.abs(fine - coarse) / np.abs(fine)) < CONVERGENCE_RTOL


def test_extrapolation_flag_reported(tmp_path, capsys):
    path = scenario_file(tmp_path)  # cold (below -2 degC at depth) -> beyond PSS-78
    assert main(["respond", str(path)]) == 0
    out = capsys.readouterr().out
    assert "sub-layers" in out and "conductivity" in out and "EXTRAPOLATED" in out
    assert main(["respond", str(path), "--json"]) == 0
    ocean = json.loads(capsys.readouterr().out)["oceans"][0]
    assert ocean["layer"] == "ocean" and ocean["extrapolated"]
    lo, hi = ocean["conductivity_range_S_per_m"]
    assert 0 < lo <= hi


def test_bundled_brine_scenario():
    sc = load_scenario("ilmare_brine")
    prof = sc.model.layer("ocean").extra["profile"]
    lo, hi = prof.conductivity_range
    # CRC Handbook MgSO4 at 20 degC, 5 %: 27.4 mS/cm; cold ocean water conducts less (roughly 3 %/K, brine.md).
    assert 0.5 < lo < hi < 2.74


@pytest.mark.parametrize(
    "kwargs, match",
    [
        (dict(salinity=-5.0), "salinity"),
        (dict(solute="Unobtainium"), "solute"),
        (dict(extra='temperature_C = -30.0'), "freez|frozen|below"),
        (dict(salinity=float("nan")), "salinity|NaN"),
    ],
)
def test_bad_chemistry(tmp_path, capsys, kwargs, match):
    path = scenario_file(tmp_path, **kwargs)
    assert main(["respond", str(path)]) == 2
    err = capsys.readouterr().err
    assert "ocean" in err
    import re

    assert re.search(match, err, re.I), err


def test_missing_solute(tmp_path, capsys):
    path = scenario_file(tmp_path)
    path.write_text(path.read_text().replace('solute = "seawater"\n', ""))
    assert main(["respond", str(path)]) == 2
    assert "give solute" in capsys.readouterr().err


def test_adiabatic_lapse_rate_check_value_and_gsw():
    from induct.model.ocean import adiabatic_lapse_rate_K_per_MPa

    # UNESCO 44 (Fofonoff & Millard 1983) check value for ATG: S=40, t68=40 degC, 10000 dbar -> 3.255976e-4 K/dbar.
    assert adiabatic_lapse_rate_K_per_MPa(40.0, 40.0 / 1.00024, 100.0) == pytest.approx(3.255976e-2, rel=2e-7)
    # Against TEOS-10 (gsw.adiabatic_lapse_rate_from_CT): within 1 % for 0-35 degC, 10-100 MPa, S 30-40
    # (EOS-80 and TEOS-10 differ at that level).
    import gsw

    rng = np.random.default_rng(3)
    sp, t, p = rng.uniform(30, 40, 200), rng.uniform(0, 35, 200), rng.uniform(10, 100, 200)
    sa = sp * 35.16504 / 35
    ref = gsw.adiabatic_lapse_rate_from_CT(sa, gsw.CT_from_t(sa, t, p * 100), p * 100) * 1e6
    got = adiabatic_lapse_rate_K_per_MPa(sp, t, p)
    rel = np.abs(got / ref - 1)
    assert rel.max() < 0.01, (sp[rel.argmax()], t[rel.argmax()], p[rel.argmax()], got[rel.argmax()], ref[rel.argmax()])


def test_adiabatic_profile(tmp_path):
    sc = load_scenario(scenario_file(tmp_path, extra='temperature_profile = "adiabatic"'))
    prof = sc.model.layer("ocean").extra["profile"]
    # Deep water warms along the adiabat (positive lapse rate above ~10 MPa); never below freezing.
    assert prof.temperature_C[-1] > prof.temperature_C[0]
    freeze = brine.freezing_point("seawater", 35.0, prof.pressure_MPa, warn=False)
    assert np.all(prof.temperature_C >= freeze)
