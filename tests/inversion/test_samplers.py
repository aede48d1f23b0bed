"""Converged samplers and evidence: diagnostics against arviz, closed-form evidence, grid against nested sampling."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from induct.inversion.diagnostics import ess_bulk, ess_tail, rank_rhat
from induct.inversion.evidence import grid_evidence, kass_raftery
from induct.inversion.mcmc import run_mcmc
from induct.inversion.nested import run_nested
from induct.inversion.priors import ParameterMap, parse_parameters
from induct.io.measurements import load_measurements
from induct.io.scenario import load_scenario

from sampler_linear_model import LinearMap, closed_form, data_for


def _chains(case, rng):
    c, n = 4, 500
    if case == "iid normal":
        return rng.normal(size=(c, n))
    if case == "AR(1) 0.9":
        x, e = np.zeros((c, n)), rng.normal(size=(c, n))
        for t in range(1, n):
            x[:, t] = 0.9 * x[:, t - 1] + e[:, t]
        return x
    if case == "cauchy":
        return rng.standard_cauchy(size=(c, n))
    if case == "shifted chains":
        return rng.normal(size=(c, n)) + 0.3 * np.arange(c)[:, None]
    if case == "random walk":
        return np.cumsum(rng.normal(size=(c, n)), axis=1)
    return rng.exponential(size=(32, 301))          # many short odd-length chains


def test_rhat_and_ess_match_arviz():
    # Reference library: arviz (Kumar et al. 2019, JOSS 4, 1143), which implements Vehtari et al. (2021,
    # Bayesian Analysis 16, 667). Tolerance: 1e-4 relative (the formulas are the same; arviz and this code
    # differ only in round-off and, for odd chain lengths, in where the folding median is taken).
    az = pytest.importorskip("arviz")
    rng = np.random.default_rng(3)
    worst = (0.0, "")
    for case in ("iid normal", "AR(1) 0.9", "cauchy", "shifted chains", "random walk", "odd length"):
        x = _chains(case, rng)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ref = {"rhat": float(az.rhat(x, method="rank")), "bulk": float(az.ess(x, method="bulk")),
                   "tail": float(az.ess(x, method="tail"))}
        ours = {"rhat": rank_rhat(x), "bulk": ess_bulk(x), "tail": ess_tail(x)}
        for key in ref:
            err = abs(ours[key] / ref[key] - 1)
            if err > worst[0]:
                worst = (err, f"{case} {key}: ours {ours[key]:.6g}, arviz {ref[key]:.6g}")
    assert worst[0] < 1e-4, worst


def test_diagnostics_flag_chains_that_disagree():
    # Vehtari et al. (2021): R-hat > 1.01 when chains sample different locations; iid chains pass.
    rng = np.random.default_rng(0)
    good = rng.normal(size=(8, 1000))
    bad = good + np.arange(8)[:, None] * 0.5
    assert rank_rhat(good) < 1.01 and ess_bulk(good) > 4000 and ess_tail(good) > 2000
    assert rank_rhat(bad) > 1.1


def _linear_problem(k=2, seed=0):
    rng = np.random.default_rng(seed)
    m = 4
    jac = 0.02 * (rng.normal(size=(m, k)) + 1j * rng.normal(size=(m, k)))
    lmap = LinearMap(0.5 + 0.2j + np.zeros(m), jac, [(-1.0, 1.0)] * k)
    theta = np.array([0.1, -0.2, 0.05][:k])
    data = data_for(lmap, theta, 0.004, rng)
    return lmap, data


def test_grid_and_nested_evidence_match_the_closed_form():
    # Closed form: Gaussian integral of a linear-Gaussian model (tests/inversion/sampler_linear_model.py; Sivia & Skilling
    # 2006, ch. 4). Prior box [-1, 1]^2 holds the posterior (widths ~0.1). Grid: 120 points per axis, tolerance
    # its stated error + 0.01; nested sampling: within 3 times its stated error (dynesty's sqrt(H / nlive)).
    lmap, data = _linear_problem()
    mean, cov, log_z = closed_form(lmap, data)
    assert np.all(np.abs(mean) < 0.6) and np.all(np.sqrt(np.diag(cov)) < 0.2)
    g, g_err, _ = grid_evidence(lmap, data, 120)
    assert abs(g - log_z) <= g_err + 0.01, (g, g_err, log_z)
    res = run_nested(lmap, data, bins=(20, 20), cap=5, nlive=150, seed=2)
    assert res.converged and res.method == "nested"
    assert abs(res.log_evidence - log_z) <= 3 * res.log_evidence_err, (res.log_evidence, res.log_evidence_err, log_z)
    # posterior mean within 0.1 posterior sigma... of the closed form (weighted samples; statistical tolerance 0.3 sigma)
    for i, p in enumerate(lmap.parameters):
        lo, hi = res.ranges[p.name]["68"]
        sd = math.sqrt(cov[i, i])
        assert abs(0.5 * (lo + hi) - mean[i]) < 0.3 * sd, (p.name, lo, hi, mean[i], sd)
        assert abs((hi - lo) / (2 * sd) - 1) < 0.2, (p.name, hi - lo, 2 * sd)


def test_grid_and_nested_evidence_agree_on_the_bundled_moon():
    # Two free parameters of the bundled Ilmare scenario (ice thickness, log ocean conductivity) on its bundled
    # data: grid ln Z (80 points; error = change when halved) and dynesty ln Z agree within the combined stated
    # 1-sigma errors (sqrt(err_grid^2 + err_nested^2)) times 2.
    s, d = load_scenario("ilmare"), load_measurements("ilmare_measured")
    table = {"ice shell.thickness_km": {"range": [1, 60]},
             "ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}}
    pm = ParameterMap(s.model, parse_parameters(table, s.model))
    g, g_err, chi2_min = grid_evidence(pm, d, 80)
    res = run_nested(pm, d, bins=(20, 20), cap=0, nlive=100, seed=4)
    err = math.hypot(g_err, res.log_evidence_err)
    assert res.converged and abs(res.log_evidence - g) <= 2 * err, (g, g_err, res.log_evidence, res.log_evidence_err)
    assert res.chi2_min == pytest.approx(chi2_min, abs=0.5)


def test_ensemble_sampler_converges_and_reports_its_checks():
    # Convergence criteria: Vehtari et al. (2021) R-hat <= 1.01, bulk and tail ESS >= 400; Foreman-Mackey et al.
    # (2013) chain >= 50 tau. Closed-form posterior of the linear problem: 68 % half-width within 15 % of sigma.
    lmap, data = _linear_problem(k=2, seed=1)
    mean, cov, _ = closed_form(lmap, data)
    res = run_mcmc(lmap, data, bins=(20, 20), cap=5, steps=500, walkers=16, seed=0)
    d = res.diagnostics
    assert res.converged and d["failures"] == [] and d["stopped_by"] == "converged"
    for i, p in enumerate(lmap.parameters):
        assert d["rhat"][p.name] <= 1.01 and min(d["ess_bulk"][p.name], d["ess_tail"][p.name]) >= 400
        assert d["steps"] >= 50 * d["autocorr_time"][p.name]
        lo, hi = res.ranges[p.name]["68"]
        sd = math.sqrt(cov[i, i])
        assert abs((hi - lo) / (2 * sd) - 1) < 0.15, (p.name, hi - lo, 2 * sd)
        assert abs(0.5 * (lo + hi) - mean[i]) < 0.2 * sd


def test_ensemble_sampler_out_of_budget_says_what_failed():
    lmap, data = _linear_problem(k=2, seed=1)
    with pytest.warns(UserWarning, match="not converged"):
        res = run_mcmc(lmap, data, bins=(10, 10), cap=0, steps=100, walkers=8, seed=0, max_evaluations=800)
    d = res.diagnostics
    assert not res.converged and d["stopped_by"] == "max_evaluations"
    assert any("R-hat" in f or "ESS" in f or "autocorrelation" in f for f in d["failures"])
    assert all(f.split(":")[0] in {p.name for p in lmap.parameters} for f in d["failures"])


def test_nested_sampler_out_of_budget_is_not_converged():
    lmap, data = _linear_problem(k=2, seed=1)
    res = run_nested(lmap, data, bins=(10, 10), cap=0, nlive=50, seed=0, max_evaluations=500)
    assert not res.converged and res.diagnostics["stopped_by"] == "max_evaluations"
    assert "stopped on the budget of 500" in res.diagnostics["failures"][0]


def test_impossible_models_renormalise_the_prior_like_the_grid():
    # With thickness ranges that leave the fill layer no room in part of the prior box, both the grid and the
    # nested sampler renormalise the prior over the possible models; their ln Z agree within 2 combined errors.
    s, d = load_scenario("ilmare"), load_measurements("ilmare_measured")
    table = {"ice shell.thickness_km": {"range": [1, 60]}, "ocean.thickness_km": {"range": [5, 250]},
             "mantle.thickness_km": {"range": [900, 1500]}}
    pm = ParameterMap(s.model, parse_parameters(table, s.model))
    g, g_err, _ = grid_evidence(pm, d, 40)
    res = run_nested(pm, d, bins=(10, 10, 10), cap=0, nlive=50, seed=1)
    assert 0.1 < res.diagnostics["feasible_fraction"] < 0.95
    assert abs(res.log_evidence - g) <= 2 * math.hypot(g_err, res.log_evidence_err), (g, g_err, res.log_evidence)


@pytest.mark.parametrize("two_ln_k, word", [(0.5, "not worth more than a bare mention"), (-3.0, "positive"),
                                            (6.5, "strong"), (25.0, "very strong")])
def test_kass_raftery_scale(two_ln_k, word):
    # Kass & Raftery (1995, JASA 90, 773), section 3.2: 2 ln K 0-2, 2-6, 6-10, > 10.
    assert kass_raftery(two_ln_k) == word


def test_missing_extra_names_it(monkeypatch):
    import builtins

    real = builtins.__import__

    def fake(name, *a, **kw):
        if name == "dynesty":
            raise ImportError("no dynesty")
        return real(name, *a, **kw)

    monkeypatch.setattr(builtins, "__import__", fake)
    lmap, data = _linear_problem()
    with pytest.raises(ImportError, match=r"pip install 'induct\[nested\]'"):
        run_nested(lmap, data, bins=(5, 5), cap=0)


def test_nested_sampler_is_calibrated_on_a_small_simulation_study():
    # Simulation-based calibration (Cook, Gelman & Rubin 2006, JCGS 15, 675; Talts et al. 2018, arXiv:1804.06788)
    # at test size: 30 truths drawn from the prior of the cheap linear-Gaussian problem (1 parameter, fixed seeds),
    # nested sampling with 25 live points. Coverage of the 68 % and 95 % intervals within 3 binomial sigma
    # (sqrt(x (1 - x) / n)); uniformity of the posterior CDF at the truth: chi-square test on 5 bins, p > 0.001.
    # The full-size study on the bundled moon is tools/sampler_calibration.py.
    from induct.inversion.sampler_calibration import run_sbc

    rng = np.random.default_rng(5)
    lmap = LinearMap(0.5 + 0.2j + np.zeros(3), 0.01 * (rng.normal(size=(3, 1)) + 1j * rng.normal(size=(3, 1))),
                     [(-1.0, 1.0)])
    template = data_for(lmap, [0.0], 0.004)
    r = run_sbc(lmap, template, sampler="nested", n_trials=30, seed=11, bins=5, nlive=25)
    assert r.n_trials == 30 and r.n_unconverged == 0
    for level, x in (("68", 0.68), ("95", 0.95)):
        assert abs(r.coverage[level] - x) <= 3 * r.coverage_err[level], (level, r.coverage[level], r.coverage_err[level])
    assert min(r.uniformity_p.values()) > 1e-3, r.uniformity_p


def test_time_budget_stops_both_samplers():
    # A budget far below what either sampler needs (1 ms): not converged, and the reason is the time budget.
    lmap, data = _linear_problem(k=2, seed=1)
    res = run_nested(lmap, data, bins=(10, 10), cap=0, nlive=50, seed=0, max_time_s=1e-3)
    assert not res.converged and res.diagnostics["stopped_by"] == "max_time_s"
    assert "time budget" in res.diagnostics["failures"][0]
    with pytest.warns(UserWarning, match="not converged"):
        mc = run_mcmc(lmap, data, bins=(10, 10), cap=0, steps=100, walkers=8, seed=0, max_time_s=1e-3)
    assert not mc.converged and mc.diagnostics["stopped_by"] == "max_time_s"


def test_refined_grid_evidence_equals_the_full_grid_at_that_resolution():
    # The adaptive grid evaluates only cells near the optimum at its finest level; its evidence spreads the prior
    # over all possible cells of that level, so it must equal the evidence of the full grid at the same resolution
    # (identity; the cells left out carry less than exp(-25) of the peak likelihood).
    from induct import load_scenario
    from induct.inversion.grid import invert
    from induct.io.measurements import load_measurements

    sc, data = load_scenario("ilmare"), load_measurements("ilmare_measured")
    priors = {"ice shell.thickness_km": {"range": [1, 60]},
              "ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}}
    refined = invert(sc.model, data, priors, grid_points=20, refine=True)
    finest = refined.resolution["levels"][-1][0]
    full = invert(sc.model, data, priors, grid_points=finest, refine=False)
    assert abs(refined.log_evidence - full.log_evidence) < 1e-6, (finest, refined.log_evidence, full.log_evidence)


def test_save_posterior_writes_the_weighted_samples(tmp_path, capsys):
    # --save-posterior of a sampler run: the samples and their weights go into the NetCDF file, and the file's
    # per-bin marginal is the weighted histogram of those samples (identity; xarray reads it back).
    xr = pytest.importorskip("xarray")
    pytest.importorskip("dynesty")
    from induct.cli.main import main

    params = tmp_path / "p.toml"
    params.write_text('[invert]\n"ice shell.thickness_km" = { range = [1, 60] }\n'
                      '"ocean.conductivity_S_per_m" = { range = [0.05, 30], scale = "log" }\n')
    out = tmp_path / "post.nc"
    code = main(["invert", "ilmare", "--data", "ilmare_measured", "--params", str(params), "--sampler", "nested",
                 "--nlive", "60", "--seed", "3", "--grid", "12", "--quiet", "--save-posterior", str(out)])
    assert code == 0, capsys.readouterr().err
    with xr.open_dataset(out, engine="h5netcdf") as ds:
        w = ds["sample_weight"].values
        ice = ds["sample_ice_shell_thickness_km"].values
        assert ds.sizes["sample"] > 100 and abs(w.sum() - 1.0) < 1e-12 and np.all((ice >= 1) & (ice <= 60))
        edges = ds["ice_shell_thickness_km"].attrs["bin_edges_prior_coordinate"]
        hist = np.histogram(ice, bins=edges, weights=w)[0]
        mass = ds["marginal_ice_shell_thickness_km"].values
        assert np.allclose(hist / hist.sum(), mass / mass.sum(), atol=1e-12), (hist, mass)
        assert np.isfinite(ds.attrs["log_evidence"])
