"""Free parameters: checks naming the field, prior coordinates, salinity through the brine model."""

import tomllib
from pathlib import Path

import numpy as np
import pytest

from induct.model.interior import InteriorModel, Layer
from induct.inversion.priors import Parameter, ParameterMap, parse_parameters
from induct.io.scenario import parse_scenario

BUNDLED = Path(__file__).resolve().parents[2] / "scenarios"


def body(**ocean_extra):
    return InteriorModel(
        1540.0,
        [
            Layer("ice shell", 1e-6, 20.0, extra={"density_kg_per_m3": 920.0}),
            Layer("ocean", 2.8, 95.0, extra={"density_kg_per_m3": 1040.0, **ocean_extra}),
            Layer("mantle", 0.01, 825.0, extra={"density_kg_per_m3": 3300.0}),
            Layer("core", 1e5, extra={"density_kg_per_m3": 5500.0}),
        ],
    )


BAD = [
    ({"mantel.thickness_km": {"range": [1, 2]}}, r"unknown parameter 'mantel.thickness_km': no layer 'mantel'"),
    ({"ocean.thickness": {"range": [1, 2]}}, r"unknown parameter 'ocean.thickness': field must be one of"),
    ({"ocean": {"range": [1, 2]}}, r"parameter names are 'LAYER.FIELD'"),
    ({"ionosphere.conductance_S": {"range": [1, 2]}}, r"'ionosphere.conductance_S'.*no ionosphere"),
    ({"core.thickness_km": {"range": [1, 2]}}, r"'core.thickness_km' cannot vary: 'core' is the fill layer"),
    ({"ocean.thickness_km": {"range": [50, 50]}}, r"'ocean.thickness_km': empty range: lo = 50 must be < hi = 50"),
    ({"ocean.thickness_km": {"range": [60, 50]}}, r"'ocean.thickness_km': empty range"),
    ({"ocean.thickness_km": {"range": [0, 50]}}, r"'ocean.thickness_km'.*physical domain: thickness_km must be > 0 km"),
    ({"ocean.conductivity_S_per_m": {"range": [-1, 5]}}, r"physical domain: conductivity_S_per_m must be >= 0 S/m"),
    ({"ocean.conductivity_S_per_m": {"range": [0, 5], "scale": "log"}}, r"scale = 'log' needs lo > 0"),
    ({"ocean.conductivity_S_per_m": {"range": [1, 5], "scale": "ln"}}, r"scale must be 'linear' or 'log'"),
    ({"ocean.conductivity_S_per_m": {"range": [1]}}, r"range must be \[lo, hi\]"),
    ({"ocean.conductivity_S_per_m": {"range": [1, float("inf")]}}, r"range must be finite"),
    ({"ocean.conductivity_S_per_m": {"range": [1, 5], "prior": "x"}}, r"unknown key\(s\) 'prior'"),
    ({"ocean.conductivity_S_per_m": [1, 5]}, r"must be a table"),
    ({}, r"no free parameters"),
    # Ice plus ocean thicker than the room left above the fixed 825 km mantle for every combination.
    ({"ice shell.thickness_km": {"range": [100, 200]}, "ocean.thickness_km": {"range": [700, 800]}},
     r"physically impossible ranges: .*ice shell.thickness_km >= 100 km, ocean.thickness_km >= 700 km"),
]


@pytest.mark.parametrize("table, match", BAD)
def test_bad_parameters_name_the_field(table, match):
    with pytest.raises(ValueError, match=match):
        parse_parameters(table, body())


def test_no_fill_layer_cannot_vary_thickness():
    model = InteriorModel(100.0, [Layer("a", 0.0, 40.0), Layer("b", 1.0, 60.0)])
    with pytest.raises(ValueError, match="no fill layer"):
        parse_parameters({"a.thickness_km": {"range": [10, 20]}}, model)


def test_grid_cells_have_equal_prior_mass():
    # Log-uniform prior: cells equally wide in log10 (common practice); midpoints are geometric means.
    p = Parameter("ocean.conductivity_S_per_m", 0.01, 100.0, "log")
    np.testing.assert_allclose(p.edges(4), [-2, -1, 0, 1, 2], rtol=0, atol=1e-15)
    np.testing.assert_allclose(p.midpoints(4), [10**-1.5, 10**-0.5, 10**0.5, 10**1.5], rtol=1e-14)
    q = Parameter("ocean.thickness_km", 10.0, 20.0)
    np.testing.assert_allclose(q.midpoints(5), [11, 13, 15, 17, 19], rtol=1e-15)
    assert p.unit == "S/m" and q.unit == "km"


def chemistry_scenario(salinity=50.0, ice_km=20.0, solute="MgSO4", extra=""):
    """The bundled brine-ocean moon with its chemistry changed (parsed like any scenario file)."""
    doc = tomllib.loads((BUNDLED / "ilmare_brine.toml").read_text())
    doc["layers"][0]["thickness_km"] = ice_km
    doc["layers"][1].update(salinity_g_per_kg=salinity, solute=solute)
    return parse_scenario(doc)


def test_chemistry_ocean_same_response_through_inversion_and_respond():
    # One ocean model: the inversion's path (ParameterMap -> InteriorModel.sweep_response, ocean recomputed
    # because salinity and a thickness are free) and the forward path (respond: the scenario's converged
    # profile) must agree to 1e-12 at the scenario's own values (requirement of the layout; identity check).
    sc = chemistry_scenario()
    params = parse_parameters({"ice shell.thickness_km": {"range": [5, 40]},
                               "ocean.salinity_g_per_kg": {"range": [5, 80], "scale": "log"}}, sc.model)
    # The exact path (tabulate=False) is the identity; the tabulated conductivity (default) is checked
    # against it to 1e-6 in test_inversion_quality.py.
    pmap = ParameterMap(sc.model, params, tabulate=False)
    periods = np.array([6.06, 12.12, 84.7])
    via_inversion = pmap.responses([np.array([20.0]), np.array([50.0])], periods, np.ones(3, dtype=int))[0]
    via_respond = sc.model.response(periods_h=periods).response
    rel = np.abs(via_inversion - via_respond) / np.abs(via_respond)
    assert rel.max() < 1e-12, (periods[np.argmax(rel)], via_inversion, via_respond)


def test_salinity_and_thickness_variants_match_a_reparsed_scenario():
    # A variant of the sweep equals the forward run of a scenario written with those values, to the ocean
    # profile's convergence tolerance (sub-layer counts may differ by a doubling; CONVERGENCE_RTOL = 1e-6).
    base = chemistry_scenario()
    params = parse_parameters({"ice shell.thickness_km": {"range": [5, 40]},
                               "ocean.salinity_g_per_kg": {"range": [5, 80], "scale": "log"}}, base.model)
    pmap = ParameterMap(base.model, params)
    periods = np.array([6.06, 12.12, 84.7])
    for ice, sal in [(8.0, 12.0), (35.0, 75.0)]:
        got = pmap.responses([np.array([ice]), np.array([sal])], periods, np.ones(3, dtype=int))[0]
        want = chemistry_scenario(sal, ice).model.response(periods_h=periods).response
        rel = np.abs(got - want) / np.abs(want)
        assert rel.max() < 5e-6, (ice, sal, rel.max())


def test_ice_thickness_alone_changes_the_ocean_pressure():
    # Varying only the ice thickness must recompute the chemistry-defined ocean (its pressure and freezing
    # temperature change), not reuse the profile of the reference thickness.
    base = chemistry_scenario()
    periods = np.array([12.12])
    swept = base.model.sweep_response({"ice shell.thickness_km": np.array([35.0])}, periods * 3600.0)[0, 0]
    want = chemistry_scenario(ice_km=35.0).model.response(periods_h=periods).response[0]
    assert abs(swept - want) / abs(want) < 5e-6


def test_salinity_needs_a_chemistry_layer_and_both_cannot_be_free():
    with pytest.raises(ValueError, match="only a layer defined by its chemistry"):
        parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 80]}}, body())
    sc = chemistry_scenario()
    with pytest.raises(ValueError, match="salinity and conductivity of one layer cannot both be free"):
        parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 80]},
                          "ocean.conductivity_S_per_m": {"range": [1, 5]}}, sc.model)


def test_salinity_range_the_ocean_model_rejects_fails_early():
    sc = chemistry_scenario()
    with pytest.raises(ValueError, match="the ocean model rejects part of the prior ranges of ocean.salinity_g_per_kg"):
        ParameterMap(sc.model, parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 900]}}, sc.model))
