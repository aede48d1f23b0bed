"""Measurement files: the two accepted forms, the Gaussian misfit, and every bad input."""

import numpy as np
import pytest
from scipy import stats

from induct.io.measurements import load_measurements, parse_measurements
from induct.io.scenario import load_scenario

POLAR = dict(period_h=9.6, amplitude=0.912, amplitude_sigma=0.02, phase_lag_deg=4.1, phase_lag_sigma_deg=1.5)
CART = dict(period_h=9.6, real=0.909, imag=0.065, cov=[[4e-4, 1e-4], [1e-4, 9e-4]])


def doc(*entries):
    return {"response": [dict(e) for e in entries]}


def test_polar_chi2_matches_scipy_bivariate_normal():
    # Reference: chi2 = -2 [log N(x; mu, C) - log N(mu; mu, C)] for a bivariate Gaussian
    # (scipy.stats.multivariate_normal, a reference library), with an amplitude-phase correlation.
    entry = dict(POLAR, amplitude_phase_correlation=-0.4)
    m = parse_measurements(doc(entry, dict(POLAR, period_h=20.0)))
    rng = np.random.default_rng(1)
    resp = (0.85 + 0.1 * rng.random((50, 2))) * np.exp(1j * np.radians(10 * rng.random((50, 2))))
    got = m.chi2(resp)
    want = np.zeros(50)
    for k in range(2):
        mean = m.values[k]
        dist = stats.multivariate_normal(mean, m.covariance[k])
        pred = np.stack([np.abs(resp[:, k]), np.degrees(np.angle(resp[:, k]))], axis=-1)
        want += -2 * (dist.logpdf(pred) - dist.logpdf(mean))
    err = np.abs(got - want) / want
    worst = int(np.argmax(err))
    assert err[worst] < 1e-10, f"worst case {resp[worst]}: induct {got[worst]!r}, scipy {want[worst]!r}"
    np.testing.assert_allclose(m.covariance[0], [[4e-4, -0.4 * 0.02 * 1.5], [-0.4 * 0.02 * 1.5, 2.25]], rtol=1e-14)


def test_cartesian_chi2_matches_scipy():
    # Same reference (scipy.stats.multivariate_normal) for the real/imag + covariance form.
    m = parse_measurements(doc(CART))
    assert not m.polar[0] and m.n_data == 2
    resp = np.array([[0.9 + 0.07j], [0.95 + 0.02j], [0.909 + 0.065j]])
    dist = stats.multivariate_normal([0.909, 0.065], CART["cov"])
    pred = np.stack([resp[:, 0].real, resp[:, 0].imag], axis=-1)
    want = -2 * (dist.logpdf(pred) - dist.logpdf([0.909, 0.065]))
    np.testing.assert_allclose(m.chi2(resp), want, rtol=1e-10, atol=1e-14)


def test_both_forms_prefer_covariance():
    # The file written by ``induct fit`` carries both forms: the covariance form is used (issue 4).
    m = parse_measurements(doc(dict(POLAR, **{k: v for k, v in CART.items() if k != "period_h"})))
    assert not m.polar[0]
    np.testing.assert_array_equal(m.values[0], [0.909, 0.065])


def test_degree_default_and_explicit():
    m = parse_measurements(doc(POLAR, dict(POLAR, degree=2)))
    assert m.degree.tolist() == [1, 2]


def test_nan_response_gives_nan_chi2():
    m = parse_measurements(doc(POLAR))
    assert np.isnan(m.chi2(np.array([[np.nan + 0j]])))[0]


def test_bundled_synthetic_file_matches_its_scenario():
    # The bundled synthetic data are the scenario's responses plus noise of the stated sigma
    # (tools/make_synthetic_measurements.py): every residual within 4 sigma (common practice).
    m = load_measurements("ilmare_measured")
    assert m.n_entries == 3 and m.polar.all()
    sc = load_scenario("ilmare")
    r = sc.model.response(periods_h=m.period_h)
    z = (m.predicted(r.response) - m.values) / m.sigmas()
    assert np.all(np.abs(z) < 4), f"normalised residuals {z}"
    np.testing.assert_allclose(np.sort(m.period_h), np.sort(sc.periods_h))


BAD = [
    (dict(POLAR, amplitude_sigma=0.0), "amplitude_sigma must be > 0"),
    (dict(POLAR, phase_lag_sigma_deg=-1.0), "phase_lag_sigma_deg must be > 0"),
    ({k: v for k, v in POLAR.items() if k != "amplitude_sigma"}, "missing amplitude_sigma"),
    ({k: v for k, v in POLAR.items() if k != "phase_lag_sigma_deg"}, "missing phase_lag_sigma_deg"),
    (dict(POLAR, phase_lag_deg=-0.5), "phase_lag_deg must be between 0 and 90"),
    (dict(POLAR, phase_lag_deg=95.0), "phase_lag_deg must be between 0 and 90"),
    (dict(POLAR, amplitude=-0.1), "amplitude must be >= 0"),
    (dict(POLAR, amplitude_phase_correlation=1.0), "amplitude_phase_correlation must be between -1 and 1"),
    (dict(POLAR, period_h=0.0), "period_h must be > 0"),
    ({k: v for k, v in POLAR.items() if k != "period_h"}, "missing period_h"),
    (dict(POLAR, degree=0), "degree must be an integer from 1"),
    (dict(POLAR, amplitud=0.9), "unknown key"),
    (dict(POLAR, amplitude="0.9"), "amplitude must be a number"),
    (dict(POLAR, amplitude=float("nan")), "amplitude must be finite"),
    (dict(CART, cov=[[0.0, 0.0], [0.0, 1e-4]]), "cov diagonal"),
    (dict(CART, cov=[[1e-4, 2e-4], [2e-4, 1e-4]]), "positive definite"),
    (dict(CART, cov=[[1e-4, 1e-5], [0.0, 1e-4]]), "symmetric"),
    (dict(CART, cov=[1e-4, 1e-4]), "2 x 2"),
    ({k: v for k, v in CART.items() if k != "cov"}, "need cov"),
    ({k: v for k, v in CART.items() if k != "imag"}, "missing imag"),
]


@pytest.mark.parametrize("entry, match", BAD)
def test_bad_entries_name_the_field(entry, match):
    with pytest.raises(ValueError, match=match) as info:
        parse_measurements(doc(POLAR, entry), source="data.toml")
    assert "data.toml: [[response]] 2" in str(info.value)


def test_empty_and_misspelt_documents():
    with pytest.raises(ValueError, match="at least one"):
        parse_measurements({})
    with pytest.raises(ValueError, match="unknown top-level key 'responses'"):
        parse_measurements({"responses": [POLAR]})
    m = parse_measurements({"response": [POLAR], "source": {"generator": "test"}, "description": "x"})
    assert m.metadata["description"] == "x"


def test_missing_file():
    with pytest.raises(FileNotFoundError, match="not found"):
        load_measurements("/nonexistent/measurements.toml")
