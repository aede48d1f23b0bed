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
    # A phase lag outside 0-90 deg, or an amplitude above 1, by more than 5 sigma (no layered
    # conductor produces them: common practice); sigma_phase = 1.5 deg, sigma_A = 0.02 here.
    (dict(POLAR, phase_lag_deg=-7.6), "phase_lag_deg = -7.6 must be between 0 and 90"),
    (dict(POLAR, phase_lag_deg=97.6), "phase_lag_deg = 97.6 must be between 0 and 90"),
    (dict(POLAR, amplitude=90.02), "amplitude = 90.02 exceeds 1"),
    (dict(POLAR, amplitude=1.11), "amplitude = 1.11 exceeds 1 by 5.5 sigma"),
    (dict(POLAR, amplitude_sigma=1e4), "amplitude_sigma must be between 1e-09 and 10"),
    (dict(POLAR, phase_lag_sigma_deg=1e-13), "phase_lag_sigma_deg must be between 1e-06 and 1000"),
    (dict(CART, real=1.2, imag=0.0, cov=[[1e-4, 0.0], [0.0, 1e-4]]), r"\|R_n\| = 1.2 exceeds 1"),
    (dict(CART, imag=-0.5), "imag = -0.5 is below 0 by more than 5 sigma"),
    (dict(CART, cov=[[1e8, 0.0], [0.0, 1e-4]]), "cov variances must be between 1e-18 and 100"),
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


def test_values_within_five_sigma_of_the_physical_range_are_kept():
    # Noise can push a measured value slightly past 0 deg or A = 1: within 5 sigma it is data
    # (common practice: refusing it would bias the inversion).
    m = parse_measurements(doc(dict(POLAR, phase_lag_deg=-0.5), dict(POLAR, amplitude=1.05)))
    assert m.values[0, 1] == -0.5 and m.values[1, 0] == 1.05


def _full_doc(matrix, **extra):
    entries = [dict(period_h=9.6, real=0.9, imag=0.06), dict(period_h=20.0, real=0.85, imag=0.12)]
    return dict({"response": entries, "covariance": {"order": "re_im", "matrix": matrix}}, **extra)


def test_full_covariance_chi2_matches_scipy_multivariate_normal():
    # Reference: chi2 = -2 [log N(x; mu, C) - log N(mu; mu, C)] (scipy.stats.multivariate_normal)
    # with a 4 x 4 covariance correlating the two periods; relative tolerance 1e-10.
    a = np.array([[2.0, 0.3, 0.8, 0.1], [0.3, 1.5, 0.2, 0.6], [0.8, 0.2, 2.5, 0.4], [0.1, 0.6, 0.4, 1.8]]) * 1e-4
    m = parse_measurements(_full_doc(a.tolist()))
    assert m.full_covariance is not None and not m.polar.any()
    rng = np.random.default_rng(3)
    resp = (0.8 + 0.1 * rng.random((20, 2))) + 1j * 0.1 * rng.random((20, 2))
    x = np.stack([resp.real, resp.imag], axis=-1).reshape(20, 4)
    mu = m.values.ravel()
    dist = stats.multivariate_normal(mu, a)
    want = -2.0 * (dist.logpdf(x) - dist.logpdf(mu))
    got = m.chi2(resp)
    worst = int(np.argmax(np.abs(got / want - 1)))
    assert np.allclose(got, want, rtol=1e-10), f"worst {worst}: {got[worst]} vs {want[worst]}"


def test_model_error_adds_to_the_covariance():
    # C_total = C_data + C_model (Tarantola 2005, Inverse Problem Theory, SIAM, ch. 1): variance
    # (f |R|)^2 + a^2 added to each of Re and Im; off-diagonal terms unchanged. Exact to 1e-15.
    a = np.diag([1e-4, 1e-4, 2e-4, 2e-4])
    a[0, 2] = a[2, 0] = 5e-5
    m = parse_measurements(_full_doc(a.tolist(), model_error={"fractional": 0.02, "absolute": 0.005}))
    amp = np.hypot(m.values[:, 0], m.values[:, 1])
    add = np.repeat((0.02 * amp) ** 2 + 0.005**2, 2)
    assert np.allclose(m.total_covariance(), a + np.diag(add), rtol=0, atol=1e-15)
    with pytest.raises(ValueError, match=r"\[model_error\].*fractional must be"):
        parse_measurements(_full_doc(a.tolist(), model_error={"fractional": -1.0}))


BAD_FULL = [
    ([[1e-4, 0.0], [0.0, 1e-4]], "matrix must be a 4 x 4"),
    ((np.eye(4) * 1e-4 + np.diag([1e-5] * 3, 1)).tolist(), "symmetric"),
    ((np.ones((4, 4)) * 1e-4).tolist(), "positive definite"),
    ((np.eye(4) * -1e-4).tolist(), "variances"),
]


@pytest.mark.parametrize("matrix, match", BAD_FULL)
def test_bad_full_covariance_names_the_table(matrix, match):
    with pytest.raises(ValueError, match=match) as info:
        parse_measurements(_full_doc(matrix), source="data.toml")
    assert "data.toml: [covariance]" in str(info.value)


def test_full_covariance_needs_real_imag_entries():
    d = {"response": [POLAR], "covariance": {"matrix": (np.eye(2) * 1e-4).tolist()}}
    with pytest.raises(ValueError, match="entries 1 are amplitude/phase"):
        parse_measurements(d, source="data.toml")


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
