"""Response fit from flyby residuals: linearity, exact recovery, covariance coverage, separability."""

import math
import tomllib

import numpy as np
import pytest
from scipy import stats

from induct.field.drive import DriveLine
from induct.flyby.induced import induced_field_nT
from induct.flyby.magfit import design_matrix, fit_responses, polar_covariance, select_lines
from induct.io.measurements import parse_measurements
from induct.io.scenario import load_scenario
from induct.io.tracks import read_track

HOUR = 3600.0
RADIUS_KM = 1540.0


def flybys(count, step=1, spacing_days=3.3):
    """The bundled track repeated ``count`` times, ``spacing_days`` apart, every ``step``-th sample."""
    tr = read_track("ilmare_flyby")
    pos = np.concatenate([tr.positions_km[::step]] * count)
    t = np.concatenate([tr.times_s[::step] + i * spacing_days * 86400.0 for i in range(count)])
    return pos, t


def arrays(lines):
    return np.array([ln.b_complex_nT for ln in lines]), np.array([ln.period_s for ln in lines])


def test_design_matrix_reproduces_induced_field():
    # Re{R G} = Re R Re G - Im R Im G (the fit's linear model, issue text): A x equals the induced field
    # of the kernel. Tolerance 1e-12 of the largest value.
    lines = load_scenario("ilmare").drive_lines
    amps, periods = arrays(lines)
    pos, t = flybys(2, step=20)
    rng = np.random.default_rng(1)
    resp = rng.uniform(0.2, 1.0, len(lines)) * np.exp(1j * rng.uniform(0, 1.5, len(lines)))
    x = np.column_stack([resp.real, resp.imag]).reshape(-1)
    got = design_matrix(pos, t, RADIUS_KM, amps, periods) @ x
    want = induced_field_nT(pos, t, RADIUS_KM, resp, amps, periods).reshape(-1)
    err = np.abs(got - want)
    assert err.max() <= 1e-12 * np.abs(want).max(), f"worst row {err.argmax()}: {got[err.argmax()]} vs {want[err.argmax()]}"


def test_noise_free_data_recovered_exactly():
    # Synthetic residuals of the bundled interior without noise: the fit must return the model's R_1
    # (least squares is exact on data in the model's range; common practice). Tolerance 1e-9 absolute.
    sc = load_scenario("ilmare")
    lines = sc.drive_lines
    pos, t = flybys(6, step=10)
    truth = sc.model.response(periods_s=[ln.period_s for ln in lines]).response
    amps, periods = arrays(lines)
    b = induced_field_nT(pos, t, RADIUS_KM, truth, amps, periods)
    fit = fit_responses(lines, RADIUS_KM, pos, t, b, 0.5)
    got = np.array([p.response for p in fit.periods])
    err = np.abs(got - truth)
    assert err.max() <= 1e-9, f"worst period {lines[err.argmax()].label}: {got[err.argmax()]} vs {truth[err.argmax()]}"
    assert fit.chi2 < 1e-12


def test_fit_covers_truth_at_the_stated_rate():
    # 200 noisy realisations (fixed seed): for a linear model with Gaussian noise the estimate is Gaussian with
    # the stated covariance (Gauss-Markov; e.g. Aster, Borchers & Thurber 2013, Parameter Estimation and Inverse
    # Problems, ch. 2), so (x - x0)^T C^-1 (x - x0) follows chi-square with 2 dof per period and the 95 % ellipse
    # (scipy.stats.chi2.ppf(0.95, 2) = 5.99) covers the truth in 95 % of realisations. Required: 95 +- 3 % per
    # period (binomial sd 1.5 % for 200), and the Monte Carlo scatter matches the stated sigmas within 15 %.
    sc = load_scenario("ilmare")
    lines = sc.drive_lines[:3]  # synodic, orbital, beat syn-orb
    amps, periods = arrays(lines)
    pos, t = flybys(4, step=5)
    truth = sc.model.response(periods_s=periods).response
    clean = induced_field_nT(pos, t, RADIUS_KM, truth, amps, periods)
    rng = np.random.default_rng(20261205)
    limit = stats.chi2.ppf(0.95, 2)
    noise = 0.5
    inside = np.zeros(len(lines))
    est = []
    for _ in range(200):
        fit = fit_responses(lines, RADIUS_KM, pos, t, clean + rng.normal(0.0, noise, clean.shape), noise)
        for k, p in enumerate(fit.periods):
            d = np.array([p.response.real - truth[k].real, p.response.imag - truth[k].imag])
            inside[k] += d @ np.linalg.solve(p.covariance, d) <= limit
        est.append([p.response for p in fit.periods])
    coverage = inside / 200
    assert np.all(np.abs(coverage - 0.95) <= 0.03), f"coverage per period {coverage} (expected 0.95 +- 0.03)"
    est = np.array(est)
    stated = np.sqrt(np.diag(fit.covariance))
    empirical = np.column_stack([est.real.std(axis=0), est.imag.std(axis=0)]).reshape(-1)
    ratio = empirical / stated
    assert np.all(np.abs(ratio - 1) < 0.15), f"Monte Carlo sd / stated sigma = {ratio}"


def test_single_short_flyby_cannot_separate_two_periods():
    # Two lines along the same direction seen by one 10-minute pass: the pass sees about two numbers of the
    # induced moment (its value and slope) for four unknowns, so the fit must say the periods are not separated
    # (condition-number and sigma thresholds), while four passes 3.3 days apart separate them.
    lines = [DriveLine.from_amplitude_phase(12.1, [0, 100, 0], [0, 0, 0], "a"),
             DriveLine.from_amplitude_phase(14.1, [0, 100, 0], [0, 0, 0], "b")]
    tr = read_track("ilmare_flyby")
    near = np.abs(tr.times_s - tr.times_s[1800]) <= 300
    pos, t = tr.positions_km[near], tr.times_s[near]
    fit = fit_responses(lines, RADIUS_KM, pos, t, np.zeros(pos.shape), 0.5)
    assert fit.condition_number > fit.thresholds["max_condition"], fit.condition_number
    assert not fit.separable and not any(p.determined for p in fit.periods)
    assert all("not separable" in p.reason and "uncertainty" in p.reason for p in fit.periods)
    text = " ".join(fit.notes)
    assert "12.1 h and 14.1 h are not separated" in text and "condition number" in text
    # Four passes 1.3 days apart sample different relative phases of the two lines (beat period
    # 1 / (1/12.1 - 1/14.1) h = 85.3 h; 31.2 h steps advance it by 132 deg) and separate them.
    pos4, t4 = flybys(4, spacing_days=1.3)
    fit4 = fit_responses(lines, RADIUS_KM, pos4, t4, np.zeros(pos4.shape), 0.5)
    assert fit4.separable and fit4.condition_number < 100 and max(p.sigma_max for p in fit4.periods) < 0.02
    assert np.abs(fit4.correlation[:2, 2:]).max() <= 0.9
    with pytest.raises(ValueError, match="no period is determined"):
        fit.measurement_toml()


def test_correlated_periods_are_not_separable_and_not_determined():
    # Issue 11 item 8: a line whose response correlates above 0.9 with another line's is "not separable", never
    # "determined", even when its sigma and the condition number pass. Four passes 3.3 days apart, close to the
    # beat period of the 12.1 h and 14.1 h lines (85.3 h = 3.55 d), see the two lines at nearly the same relative
    # phase each time, so their estimates are strongly correlated (computed here: 0.99; a pass at the same beat
    # phase cannot tell the lines apart, common practice of harmonic analysis: a record must span the beat period
    # of two lines to resolve them, the Rayleigh criterion, e.g. Emery & Thomson 2001, Data Analysis Methods in
    # Physical Oceanography, ch. 5, from memory).
    lines = [DriveLine.from_amplitude_phase(12.1, [0, 100, 0], [0, 0, 0], "a"),
             DriveLine.from_amplitude_phase(14.1, [0, 100, 0], [0, 0, 0], "b")]
    pos, t = flybys(4, spacing_days=3.3)
    fit = fit_responses(lines, RADIUS_KM, pos, t, np.zeros(pos.shape), 0.5)
    corr = np.abs(fit.correlation[:2, 2:]).max()
    assert corr > 0.9 and fit.thresholds["max_correlation"] == 0.9
    # The other checks pass: this is the case the old wording called "determined" and "not separated" at once.
    assert fit.condition_number < fit.thresholds["max_condition"] and max(p.sigma_max for p in fit.periods) < 0.1
    for p, other in zip(fit.periods, "ba"):
        assert not p.determined and p.reason.startswith(f"not separable from {other} ") and f"{corr:.3f}" in p.reason
    assert not fit.separable and any("not separated" in n for n in fit.notes)
    with pytest.raises(ValueError, match="no period is determined"):
        fit.measurement_toml()
    # A looser threshold (--max-correlation 0.995) accepts them; one that is not in (0, 1] is refused.
    loose = fit_responses(lines, RADIUS_KM, pos, t, np.zeros(pos.shape), 0.5, max_correlation=0.995)
    assert loose.separable
    with pytest.raises(ValueError, match="max_correlation"):
        fit_responses(lines, RADIUS_KM, pos, t, np.zeros(pos.shape), 0.5, max_correlation=1.5)


def test_fixed_lines_are_subtracted_before_the_fit():
    # Fixing a line to its true response and subtracting its induced field leaves a linear model with one line
    # fewer: noise-free data give the free line's response exactly (least squares is exact on data in the model's
    # range, common practice; tolerance 1e-9), and with noise the free lines' covariance equals noise^2 (A_f^T A_f)^-1
    # of the reduced design (Gauss-Markov, Aster, Borchers & Thurber 2013, ch. 2; tolerance 1e-9 relative).
    sc = load_scenario("ilmare")
    lines = sc.drive_lines
    amps, periods = arrays(lines)
    pos, t = flybys(2, step=10)
    truth = sc.model.response(periods_s=periods).response
    b = induced_field_nT(pos, t, RADIUS_KM, truth, amps, periods)
    fit = fit_responses(lines, RADIUS_KM, pos, t, b, 0.5, free=[1, 0], fixed_responses=truth)
    assert [p.label for p in fit.periods] == [lines[0].label, lines[1].label]
    assert [f["label"] for f in fit.fixed] == [ln.label for ln in lines[2:]] and fit.dof == fit.n_data - 4
    got = np.array([p.response for p in fit.periods])
    err = np.abs(got - truth[:2])
    assert err.max() <= 1e-9, f"worst: {got} vs {truth[:2]}"
    a = design_matrix(pos, t, RADIUS_KM, amps[:2], periods[:2])
    want = 0.25 * np.linalg.inv(a.T @ a)
    rel = np.abs(fit.covariance - want).max() / np.abs(want).max()
    assert rel <= 1e-9, f"covariance differs by {rel:.3g} of its largest element"
    # Fixing a line to a wrong response biases the free lines (the model error is not in the covariance).
    wrong = truth.copy()
    wrong[2:] *= 0.5
    biased = fit_responses(lines, RADIUS_KM, pos, t, b, 0.5, free=[0, 1], fixed_responses=wrong)
    assert np.abs(np.array([p.response for p in biased.periods]) - truth[:2]).max() > 1e-3
    assert any("fixed to the given responses" in n for n in fit.notes)
    text = fit.measurement_toml()
    assert "# Not fitted (fixed to the forward model" in text
    with pytest.raises(ValueError, match="fixed_responses is needed"):
        fit_responses(lines, RADIUS_KM, pos, t, b, 0.5, free=[0])
    with pytest.raises(ValueError, match="free must name"):
        fit_responses(lines, RADIUS_KM, pos, t, b, 0.5, free=[7], fixed_responses=truth)


def test_select_lines_by_label_or_period():
    # A period matches within half a unit of its last digit (the usual reading of a rounded number, common practice).
    lines = load_scenario("ilmare").drive_lines
    hours = [ln.period_h for ln in lines]
    assert select_lines(lines, ["synodic", f"{hours[1]:.1f}"]) == [0, 1]
    assert select_lines(lines, [f"{hours[3]:.4f}", "synodic", "synodic"]) == [0, 3]
    with pytest.raises(ValueError, match=r"line 'nope' matches no driving line.*synodic \(12.1165 h\)"):
        select_lines(lines, ["nope"])
    with pytest.raises(ValueError, match="line '84.6' matches no driving line"):
        select_lines(lines, ["84.6"])
    with pytest.raises(ValueError, match="matches more than one"):
        select_lines(lines, ["1e1"])  # 5-15 h holds three lines


def test_zero_amplitude_line_is_not_determined():
    lines = [DriveLine(12 * HOUR, [0, 100, 0]), DriveLine(30 * HOUR, [0, 0, 0])]
    pos, t = flybys(2, step=10)
    fit = fit_responses(lines, RADIUS_KM, pos, t, np.zeros(pos.shape), 0.5)
    assert fit.periods[0].determined and not fit.periods[1].determined
    assert "zero amplitude" in fit.periods[1].reason and math.isinf(fit.condition_number)


def test_polar_errors_match_numerical_jacobian():
    # Linear error propagation sigma_f^2 = J C J^T (common practice) with J by central differences of
    # (|R|, arg R); tolerance 1e-6 relative.
    r = 0.83 + 0.21j
    cov = np.array([[4e-4, 1.5e-4], [1.5e-4, 9e-4]])
    h = 1e-7
    f = lambda z: np.array([abs(z), math.degrees(math.atan2(z.imag, z.real))])  # noqa: E731
    jac = np.column_stack([(f(r + h) - f(r - h)) / (2 * h), (f(r + 1j * h) - f(r - 1j * h)) / (2 * h)])
    c = jac @ cov @ jac.T
    s_a, s_p, rho = polar_covariance(r, cov)
    want = np.array([math.sqrt(c[0, 0]), math.sqrt(c[1, 1]), c[0, 1] / math.sqrt(c[0, 0] * c[1, 1])])
    got = np.array([s_a, s_p, rho])
    assert np.allclose(got, want, rtol=1e-6), f"got {got}, expected {want}"


def test_measurement_toml_round_trip():
    # The written file is read by induct.io.measurements (the reader of induct invert) with the same numbers.
    sc = load_scenario("ilmare")
    lines = sc.drive_lines[:2]
    amps, periods = arrays(lines)
    pos, t = flybys(4, step=10)
    truth = sc.model.response(periods_s=periods).response
    b = induced_field_nT(pos, t, RADIUS_KM, truth, amps, periods) + np.random.default_rng(3).normal(0, 0.3, pos.shape)
    fit = fit_responses(lines, RADIUS_KM, pos, t, b, 0.3)
    text = fit.measurement_toml(["test"], {"tool": "induct fit", "noise_nT": 0.3})
    m = parse_measurements(tomllib.loads(text), "fit.toml")
    assert m.n_entries == 2 and not m.polar.any()
    for k, p in enumerate(fit.periods):
        assert m.period_h[k] == p.period_h
        assert np.array_equal(m.values[k], [p.response.real, p.response.imag])
        assert np.allclose(m.covariance[k], p.covariance, rtol=1e-15, atol=0)
    assert tomllib.loads(text)["source"]["noise_nT"] == 0.3


def test_fit_input_errors():
    lines = load_scenario("ilmare").drive_lines[:1]
    pos, t = flybys(1, step=100)
    b = np.zeros(pos.shape)
    with pytest.raises(ValueError, match="noise_nT must be finite and > 0"):
        fit_responses(lines, RADIUS_KM, pos, t, b, 0.0)
    with pytest.raises(ValueError, match=r"residuals_nT must have shape"):
        fit_responses(lines, RADIUS_KM, pos, t, b[:, :2], 0.5)
    bad = b.copy()
    bad[7, 1] = np.nan
    with pytest.raises(ValueError, match=r"residuals_nT\[7, 1\] must be finite"):
        fit_responses(lines, RADIUS_KM, pos, t, bad, 0.5)
    inside = pos.copy()
    inside[3] = [10.0, 0.0, 0.0]
    with pytest.raises(ValueError, match=r"positions_km\[3\].*inside the body"):
        fit_responses(lines, RADIUS_KM, inside, t, b, 0.5)
    with pytest.raises(ValueError, match="need more than 2 data"):
        fit_responses(lines, RADIUS_KM, pos[:0], t[:0], b[:0], 0.5)
    with pytest.raises(ValueError, match="max_sigma"):
        fit_responses(lines, RADIUS_KM, pos, t, b, 0.5, max_sigma=0.0)
    with pytest.raises(ValueError, match="radius_km"):
        fit_responses(lines, -1.0, pos, t, b, 0.5)
