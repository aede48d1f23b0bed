"""Free parameters: checks naming the field, prior coordinates, salinity through the brine model."""

import warnings

import numpy as np
import pytest

from induct.model.interior import InteriorModel, Layer
from induct.inversion.priors import G_SI, Parameter, ParameterMap, parse_parameters


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
    ({"ionosphere.conductance_S": {"range": [1, 2]}}, r"'ionosphere.conductance_S'.*no \[ionosphere\]"),
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
    ({"ocean.salinity_g_per_kg": {"range": [-1, 5]}}, r"salinity_g_per_kg must be >= 0 g/kg"),
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


def test_salinity_maps_through_the_brine_model():
    # Salinity -> conductivity with induct.brine at the freezing point and the hydrostatic pressure at the
    # top of the ocean, p = rho_ice g h_ice with g = G M / R^2 (thin-shell approximation, common practice).
    brine = pytest.importorskip("induct.brine")
    if not hasattr(brine, "conductivity"):
        pytest.skip("induct.brine.conductivity not available")
    model = body(solute="NaCl")
    params = parse_parameters({"ice shell.thickness_km": {"range": [5, 40]},
                               "ocean.salinity_g_per_kg": {"range": [5, 80], "scale": "log"}}, model)
    pmap = ParameterMap(model, params)
    h = np.array([5.0, 20.0, 40.0])
    s = np.array([10.0, 35.0, 70.0])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        got = pmap.values([h, s])["ocean.conductivity_S_per_m"]
        radii = np.array([600.0, 1425.0, 1520.0, 1540.0]) * 1e3
        rho = np.array([5500.0, 3300.0, 1040.0, 920.0])
        mass = np.sum(4 / 3 * np.pi * rho * (radii**3 - np.concatenate([[0.0], radii[:-1]]) ** 3))
        p = 920.0 * G_SI * mass / radii[-1] ** 2 * h * 1e3 * 1e-6
        want = brine.conductivity("NaCl", s, brine.freezing_point("NaCl", s, p), p)
        assert "ocean.salinity_g_per_kg" not in pmap.values([h, s])
    np.testing.assert_allclose(got, want, rtol=1e-12)


def test_salinity_needs_a_solute_and_both_cannot_be_free():
    pytest.importorskip("induct.brine")
    with pytest.raises(ValueError, match="needs a solute key"):
        ParameterMap(body(), parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 80]}}, body()))
    with pytest.raises(ValueError, match="salinity and conductivity of one layer cannot both be free"):
        parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 80]},
                          "ocean.conductivity_S_per_m": {"range": [1, 5]}}, body())


def test_salinity_without_the_brine_model_is_a_clear_error(monkeypatch):
    import induct.brine as brine

    monkeypatch.delattr(brine, "conductivity")
    model = body(solute="NaCl")
    with pytest.raises(ValueError, match="salinity as a free parameter is not available"):
        ParameterMap(model, parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 80]}}, model))


def test_salinity_range_the_brine_model_rejects_fails_early():
    pytest.importorskip("induct.brine")
    model = body(solute="NaCl")
    with pytest.raises(ValueError, match="'ocean.salinity_g_per_kg': the brine model rejects part of the prior range"):
        ParameterMap(model, parse_parameters({"ocean.salinity_g_per_kg": {"range": [5, 900]}}, model))
