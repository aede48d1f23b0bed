"""Fit quality, resolved posteriors, the tabulated chemistry ocean and the new `invert` outputs (issue 11)."""

import json
import math
import warnings

import numpy as np
import pytest
from scipy import stats

from induct.cli.main import main
from induct.inversion.fitquality import fit_quality
from induct.inversion.grid import invert
from induct.inversion.priors import ParameterMap, parse_parameters
from induct.io.measurements import parse_measurements
from induct.io.scenario import load_scenario
from induct.model.interior import InteriorModel, Layer
from induct.model.ocean_table import OceanConductivityTable, lagrange_weights


def cartesian_data(model, periods_h, sigma):
    r = model.response(periods_h=periods_h).response
    return parse_measurements({"response": [
        {"period_h": float(p), "real": float(x.real), "imag": float(x.imag), "cov": [[sigma**2, 0.0], [0.0, sigma**2]]}
        for p, x in zip(periods_h, r)
    ]})


def test_p_value_is_the_chi2_survival_function():
    # p = scipy.stats.chi2.sf(chi2_min, N_data - N_free) (reference library); for 2 degrees of
    # freedom the closed form exp(-chi2 / 2) (Abramowitz & Stegun 1964, 26.4.21). Tolerance 1e-12.
    q = fit_quality(7.3, 5, 3)
    assert q["dof"] == 2 and q["p_value"] == pytest.approx(math.exp(-7.3 / 2), rel=1e-12)
    q = fit_quality(40.0, 12, 3, min_p_value=1e-3)
    assert q["p_value"] == pytest.approx(stats.chi2.sf(40.0, 9), rel=1e-12) and q["acceptable"] is False
    assert fit_quality(1.0, 3, 3)["p_value"] is None


def test_local_refinement_finds_an_off_grid_truth():
    # Noise-free data of a model between grid midpoints: least squares from the best cell must
    # reach chi2 ~ 0 and the truth (closed-form fact: the data are the model). Tolerances 1e-6 in
    # chi2 and 1e-4 relative in the parameters.
    sc = load_scenario("ilmare")
    truth = {"ice shell.thickness_km": 23.7, "ocean.thickness_km": 101.3}
    model = sc.model.with_layer("ice shell", thickness_km=23.7).with_layer("ocean", thickness_km=101.3)
    data = cartesian_data(model, sc.periods_h, 0.01)
    table = {"ice shell.thickness_km": {"range": [1, 60]}, "ocean.thickness_km": {"range": [5, 250]}}
    res = invert(sc.model, data, table, grid_points=12, refine=False)
    assert res.chi2_min > 1e-3  # the grid misses the truth
    assert res.fit["chi2_min"] < 1e-6, res.fit
    for name, x in truth.items():
        assert res.fit["best"][name] == pytest.approx(x, rel=1e-4), (name, res.fit["best"])
    assert res.fit["dof"] == 4 and res.fit["acceptable"]


def test_thin_shell_ridge_is_resolved_without_beads():
    # Thin-shell regime (induction.md; Parkinson 1983, Introduction to Geomagnetism, thin-sheet
    # limit): a 0.5-5 km ocean at 500 h responds to its conductance sigma*h only, so the posterior
    # is a narrow diagonal ridge in (log h, log sigma). Adaptive refinement must converge (bounds
    # moving < 1 % of the prior width on doubling) and the marginal of h must not be comb-like:
    # the thin-shell posterior of log h with log-uniform priors is a smoothed top hat (the prior
    # window of log sigma shifted by the constrained log conductance), so its density has one
    # plateau and no interior dips deeper than 2 % of its maximum (common practice for
    # "no beading"). A 3-cell moving average is not used: the raw bins are tested.
    model = InteriorModel(1540.0, [Layer("ice", 1e-6, 20.0), Layer("ocean", 3.0, 2.0),
                                   Layer("mantle", 1e-4, 900.0), Layer("core", 1e-4)])
    data = cartesian_data(model, [500.0], 0.002)
    table = {"ocean.thickness_km": {"range": [0.5, 5.0], "scale": "log"},
             "ocean.conductivity_S_per_m": {"range": [0.3, 30.0], "scale": "log"}}
    res = invert(model, data, table, grid_points=24, max_refinements=4)
    assert res.resolution["converged"], res.resolution
    mass = res.marginals[0] / res.marginals[0].max()
    inside = mass > 0.05
    lo, hi = np.flatnonzero(inside)[[0, -1]]
    core = mass[lo : hi + 1]
    # depth of the deepest dip: how far a bin lies below the lower of the highest bins on its two sides
    left, right = np.maximum.accumulate(core), np.maximum.accumulate(core[::-1])[::-1]
    worst = float(np.max(np.minimum(left, right) - core))
    assert worst < 0.02, f"marginal of ocean thickness has a dip of {worst:.3f} of its maximum (beads); {core}"
    assert len(res.resolution["levels"]) >= 2 and core.size >= 10, res.resolution
    # The conductance sigma*h = 6000 S is what the data fix: the refined optimum has it to 1 %.
    best = res.fit["best"]
    assert best["ocean.thickness_km"] * 1e3 * best["ocean.conductivity_S_per_m"] == pytest.approx(6000.0, rel=0.01)


def test_lagrange_stencil_reproduces_cubics():
    # Four-point Lagrange interpolation is exact for polynomials of degree <= 3 (closed form);
    # tolerance 1e-12, stencils at the ends included.
    x = np.linspace(0.0, 9.0, 37)
    i, w = lagrange_weights(x, 10)
    nodes = i[:, None] + np.arange(4)
    f = lambda t: 2.0 - t + 0.5 * t**2 - 0.03 * t**3  # noqa: E731
    got = np.sum(w * f(nodes.astype(float)), axis=1)
    assert np.max(np.abs(got - f(x))) < 1e-12


def test_tabulated_ocean_matches_the_exact_ocean_model():
    # The tabulated conductivity is the same ocean model: responses of a salinity x ice x ocean
    # sample through the table and through induct.brine at every sub-layer (the exact path) differ
    # by less than 1e-6 (the target), and the table's own conductivity error is < 2e-6.
    sc = load_scenario("ilmare_brine")
    table = {"ocean.salinity_g_per_kg": {"range": [30, 70]}, "ice shell.thickness_km": {"range": [15, 25]},
             "ocean.thickness_km": {"range": [85, 105]}}
    params = parse_parameters(table, sc.model)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        fast = ParameterMap(sc.model, params)
        exact = ParameterMap(sc.model, params, tabulate=False)
        tab = fast.ocean_tables["ocean"]
        assert isinstance(tab, OceanConductivityTable) and tab.max_rel_error < 2e-6
        rng = np.random.default_rng(5)
        cols = [rng.uniform(30, 70, 40), rng.uniform(15, 25, 40), rng.uniform(85, 105, 40)]
        periods, degree = np.array([6.06, 12.12, 84.7]), np.ones(3, dtype=int)
        a = fast.responses(cols, periods, degree)
        b = exact.responses(cols, periods, degree)
    worst = int(np.argmax(np.max(np.abs(a - b), axis=1)))
    assert np.max(np.abs(a - b)) < 1e-6, f"worst cell {[c[worst] for c in cols]}: {a[worst]} vs {b[worst]}"


@pytest.fixture
def ilmare_data(tmp_path):
    def write(text):
        path = tmp_path / "data.toml"
        path.write_text(text)
        return str(path)
    return write


def test_typed_percent_amplitude_is_refused_with_exit_2(ilmare_data, capsys):
    # The case: 90.02 typed instead of 0.9002 (no interior gives A > 1).
    path = ilmare_data("[[response]]\nperiod_h = 12.12\namplitude = 90.02\namplitude_sigma = 0.01\n"
                       "phase_lag_deg = 4.4\nphase_lag_sigma_deg = 1.0\n")
    assert main(["invert", "ilmare", "--data", path, "--grid", "6", "--json"]) == 2
    err = capsys.readouterr().err
    assert "data.toml: [[response]] 1: amplitude = 90.02 exceeds 1" in err


def test_a_misfit_exits_3_unless_accepted(ilmare_data, capsys):
    # Amplitude 0.99 with a 60 deg lag at 12 h: physical values no Ilmare interior of the prior
    # gives together; p << 1e-3 -> exit 3 and the verdict; --accept-misfit -> exit 0.
    path = ilmare_data("[[response]]\nperiod_h = 12.12\namplitude = 0.99\namplitude_sigma = 0.01\n"
                       "phase_lag_deg = 60.0\nphase_lag_sigma_deg = 1.0\n"
                       "[[response]]\nperiod_h = 84.7\namplitude = 0.86\namplitude_sigma = 0.01\n"
                       "phase_lag_deg = 17.0\nphase_lag_sigma_deg = 1.0\n")
    args = ["invert", "ilmare", "--data", path, "--grid", "8", "--no-refine", "--no-progress"]
    assert main(args) == 3
    out = capsys.readouterr().out
    assert "cannot explain the data" in out and "exit code 3" in out
    assert main(args + ["--accept-misfit", "--json"]) == 0
    payload = json.loads(capsys.readouterr().out)
    assert payload["model_rejected"] is True and payload["p_value"] < 1e-3


def test_json_has_fit_quality_and_resolution_and_model_error(capsys, tmp_path):
    target = tmp_path / "post.nc"
    args = ["invert", "ilmare", "--data", "ilmare_measured", "--grid", "10", "--json", "--model-error", "0.02", "0.005"]
    try:
        import h5netcdf  # noqa: F401
        import xarray  # noqa: F401
        args += ["--save-posterior", str(target)]
    except ImportError:
        target = None
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("ranges", "chi2_min", "dof", "p_value", "converged", "resolution_check"):
        assert key in out, key
    assert out["dof"] == 6 - 3 and 0 < out["p_value"] <= 1
    assert out["p_value"] == pytest.approx(stats.chi2.sf(out["chi2_min"], 3), rel=1e-12)
    assert out["resolution_check"]["levels"][0] == [10, 10, 10]
    for r in out["ranges"].values():
        assert {"best", "68", "95"} <= set(r)
    if target is not None:
        import xarray as xr

        with xr.open_dataset(target, engine="h5netcdf") as ds:
            assert ds["ocean_thickness_km"].attrs["units"] == "km"
            assert float(ds["marginal_ocean_thickness_km"].sum()) == pytest.approx(1.0, rel=1e-9)


def test_refinement_removes_the_beading_of_a_conductance_ridge():
    # A thin ocean at a long period: only its conductance sigma*h is constrained, and the posterior is a narrow
    # curved ridge in (h, sigma) (thin-shell limit; common practice). A coarse regular grid aliases it into a
    # comb (beaded 1-D marginals); the adaptive refinement must leave unimodal marginals and pass its own
    # resolution check. Beading measure: total variation of the marginal / (2 x its peak) - 1 (0 if unimodal).
    from induct.model.interior import InteriorModel, Layer
    from induct.io.measurements import Measurements

    thin = InteriorModel(1540.0, [Layer("ice", 1e-6, 20.0), Layer("ocean", 3.0, 2.0), Layer("mantle", 1e-4, 900.0),
                                  Layer("core", 1e-4)])
    period = np.array([500.0])
    r = thin.response(periods_h=period).response
    data = Measurements(period_h=period, degree=np.ones(1, dtype=int), polar=np.zeros(1, dtype=bool),
                        values=np.column_stack([r.real, r.imag]),
                        covariance=np.broadcast_to(np.eye(2) * 0.0005**2, (1, 2, 2)).copy())
    priors = {"ocean.thickness_km": {"range": [0.5, 5.0]}, "ocean.conductivity_S_per_m": {"range": [0.3, 30.0]}}

    def beading(mass):
        x = mass / mass.max()
        return float(np.abs(np.diff(np.concatenate([[0.0], x, [0.0]]))).sum() / 2 - 1)

    coarse = invert(thin, data, priors, grid_points=30, refine=False)
    refined = invert(thin, data, priors, grid_points=30, refine=True, max_refinements=4)
    before = [beading(m) for m in coarse.marginals]
    after = [beading(m) for m in refined.marginals]
    assert max(before) > 0.3, before            # the coarse grid shows the comb
    assert max(after) < 0.02, (before, after)   # measured 2.81/0.43 before, 0.008/0.0 after
    assert refined.resolution["converged"], refined.resolution
