"""Interior model: geometry, checks naming the layer and field, ionosphere, vectorised variants."""

import math

import numpy as np
import pytest

from induct import transfer
from induct.model.approximations import thin_shell
from induct.model.interior import Ionosphere, InteriorModel, Layer


def ilmare_like():
    return InteriorModel(
        1540.0,
        [
            Layer("ice shell", 1e-6, 20.0),
            Layer("ocean", 2.8, 95.0),
            Layer("mantle", 0.01, 825.0),
            Layer("core", 1e5),
        ],
        name="test body",
    )


def test_geometry_centre_outward():
    m = ilmare_like()
    np.testing.assert_allclose(m.radii_m(), [600e3, 1425e3, 1520e3, 1540e3])
    np.testing.assert_allclose(m.conductivities(), [1e5, 0.01, 2.8, 1e-6])
    np.testing.assert_allclose(m.thicknesses_km(), [20, 95, 825, 600])
    assert m.outer_conductor_radius_km() == 1540.0


def test_response_matches_kernel_call():
    m = ilmare_like()
    r = m.response(periods_h=[10.0, 100.0])
    direct = transfer(m.radii_m(), m.conductivities(), np.array([10.0, 100.0]) * 3600)
    np.testing.assert_array_equal(r.response, direct)
    assert r.response.shape == (2,)
    assert np.all((r.phase_lag_deg >= 0) & (r.phase_lag_deg <= 90))
    depths = r.skin_depths_km()
    # Skin depth sqrt(2/(w mu0 sigma)) (common practice): ocean 2.8 S/m at 10 h.
    expected = math.sqrt(2 / (2 * math.pi / 36000 * 4e-7 * math.pi * 2.8)) / 1e3
    assert depths["ocean"][0] == pytest.approx(expected, rel=1e-12)


def test_no_fill_layer_when_thicknesses_sum_to_radius():
    m = InteriorModel(100.0, [Layer("a", 0.0, 40.0), Layer("b", 1.0, 60.0)])
    np.testing.assert_allclose(m.radii_m(), [60e3, 100e3])


@pytest.mark.parametrize(
    "layers, match",
    [
        ([Layer("ice", 1e-6, 0.0), Layer("core", 1.0)], r"layer 1 \('ice'\): thickness_km must be > 0"),
        ([Layer("ice", 1e-6, -5.0), Layer("core", 1.0)], r"layer 1 \('ice'\): thickness_km must be > 0"),
        ([Layer("ice", 1e-6, float("nan")), Layer("core", 1.0)], r"layer 1 \('ice'\): thickness_km is NaN"),
        ([Layer("ice", 1e-6, 90.0), Layer("ocean", 3.0, 20.0), Layer("core", 1.0)], "reach past the centre"),
        ([Layer("ice", 1e-6, 30.0), Layer("ocean", 3.0, 20.0)], "no layer fills to the centre"),
        ([Layer("ice", 1e-6, 100.0), Layer("core", 1.0)], "leaving it no room"),
        ([Layer("ice", None, 10.0), Layer("core", 1.0)], r"layer 1 \('ice'\): conductivity_S_per_m is missing"),
        ([Layer("ice", -1.0, 10.0), Layer("core", 1.0)], r"conductivity_S_per_m must be >= 0"),
        ([Layer("ice", float("nan"), 10.0), Layer("core", 1.0)], r"conductivity_S_per_m is NaN"),
        ([Layer("ice", math.inf, 10.0), Layer("core", 1.0)], "inf only in the innermost"),
        ([Layer("ice", 1e-6, 10.0), Layer("ice", 1.0)], "duplicate layer name"),
        ([Layer("ice", 1e-6), Layer("core", 1.0, 10.0)], r"thickness_km is missing; only the innermost"),
        ([Layer("", 1e-6, 10.0), Layer("core", 1.0)], "non-empty"),
        ([Layer("a.b", 1e-6, 10.0), Layer("core", 1.0)], "must not contain"),
        ([], "at least one layer"),
    ],
)
def test_bad_models_name_layer_and_field(layers, match):
    with pytest.raises(ValueError, match=match):
        InteriorModel(100.0, layers)


@pytest.mark.parametrize("radius", [0.0, -1.0, float("nan"), float("inf")])
def test_bad_radius(radius):
    with pytest.raises(ValueError, match="radius_km"):
        InteriorModel(radius, [Layer("core", 1.0)])


@pytest.mark.parametrize("periods", [[0.0], [-1.0], [float("nan")], [], [[1.0, 2.0]]])
def test_bad_periods(periods):
    with pytest.raises(ValueError, match="period"):
        ilmare_like().response(periods_h=periods)


def test_bad_ionosphere():
    with pytest.raises(ValueError, match="ionosphere.altitude_km"):
        InteriorModel(100.0, [Layer("core", 1.0)], ionosphere=Ionosphere(100.0, 0.0))
    with pytest.raises(ValueError, match="ionosphere.conductance_S"):
        InteriorModel(100.0, [Layer("core", 1.0)], ionosphere=Ionosphere(-1.0, 10.0))


def test_ionosphere_over_insulator_is_thin_shell():
    # A conducting sheet over an insulating body is the classical thin-shell result
    # (thin-sheet formula, e.g. Parkinson 1983): exact in the sheet limit.
    m = InteriorModel(1000.0, [Layer("rock", 0.0)], ionosphere=Ionosphere(800.0, 150.0))
    r = m.response(periods_h=[1.0, 10.0, 100.0]).response
    expected = thin_shell(1150e3, 800.0, 1000e3, np.array([1.0, 10.0, 100.0]) * 3600)
    np.testing.assert_allclose(r, expected, rtol=1e-13)


def test_ionosphere_equals_thin_conducting_layer():
    # The sheet limit of a real layer: a 10 m thick layer of the same conductance (error ~ (h/delta)^2).
    base = ilmare_like()
    ion = InteriorModel(1540.0, base.layers, ionosphere=Ionosphere(2000.0, 100.0))
    r_sheet = ion.response(periods_h=[12.0]).response[0]
    radii = np.concatenate([base.radii_m(), [1640e3 - 5.0, 1640e3 + 5.0]])
    sigma = np.concatenate([base.conductivities(), [0.0, 2000.0 / 10.0]])
    r_layer = transfer(radii, sigma, 12 * 3600.0)[()] * (1640e3 + 5.0) ** 3 / 1540e3**3
    assert abs(r_sheet - r_layer) / abs(r_layer) < 1e-6


def test_parameter_arrays_fill_absorbs_thickness():
    m = ilmare_like()
    ice = np.array([10.0, 20.0, 30.0])[:, None]
    ocean = np.array([50.0, 1500.0])[None, :]
    radii, sigma, valid, ion = m.parameter_arrays({"ice shell.thickness_km": ice, "ocean.thickness_km": ocean})
    assert radii.shape == (3, 2, 4) and sigma.shape == (3, 2, 4) and valid.shape == (3, 2)
    assert ion is None
    np.testing.assert_array_equal(valid, [[True, False]] * 3)
    np.testing.assert_allclose(radii[0, 0], [(1540 - 10 - 50 - 825) * 1e3, (1540 - 60) * 1e3, 1530e3, 1540e3])
    np.testing.assert_allclose(radii[..., -1][valid], 1540e3)


def test_sweep_response_matches_model_copies():
    m = ilmare_like()
    sig = np.array([0.5, 5.0])
    out = m.sweep_response({"ocean.conductivity_S_per_m": sig}, np.array([3600.0 * 12, 3600.0 * 80]))
    for i, s in enumerate(sig):
        single = m.with_layer("ocean", conductivity_S_per_m=float(s)).response(periods_h=[12, 80]).response
        np.testing.assert_allclose(out[i], single, rtol=1e-14)


@pytest.mark.parametrize(
    "key, match",
    [
        ("nonexistent.thickness_km", "no layer 'nonexistent'"),
        ("ocean.colour", "field must be one of"),
        ("ocean", "LAYER.FIELD"),
        ("core.thickness_km", "fill layer"),
        ("ionosphere.conductance_S", r"the model has no ionosphere"),
    ],
)
def test_parameter_names_checked(key, match):
    with pytest.raises(ValueError, match=match):
        ilmare_like().parameter_arrays({key: np.array([1.0])})
