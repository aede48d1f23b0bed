"""Grid posterior: known answers, chunking identities, zero prior on impossible models, MCMC agreement."""

import math
import warnings

import numpy as np
import pytest

from induct.parallel.execution import InProcess
from induct.model.interior import Ionosphere, InteriorModel, Layer
from induct.inversion.grid import combine_partials, forward_grid, invert, make_grid_setup, run_grid
from induct.io.measurements import parse_measurements
from induct.inversion.priors import ParameterMap, parse_parameters
from induct.io.scenario import load_scenario


def measurements(model, periods_h, amp_sigma, phase_sigma, degree=1):
    r = model.response(periods_h=periods_h, degree=degree)
    return parse_measurements({"response": [
        dict(period_h=float(p), amplitude=float(a), amplitude_sigma=amp_sigma,
             phase_lag_deg=float(ph), phase_lag_sigma_deg=phase_sigma, degree=degree)
        for p, a, ph in zip(periods_h, r.amplitude, r.phase_lag_deg)
    ]}, amplification=model.ionosphere is not None)  # an ionosphere outside the surface can give A > 1


def ilmare():
    return load_scenario("ilmare")


class Reversed(InProcess):
    """A backend that hands partial results back in reverse order (as a cluster might)."""

    def map_ranges(self, task, ranges, desc="", progress=False):
        return [task(a, b) for a, b in reversed(ranges)]


def test_depth_bound_of_a_perfectly_conducting_ocean():
    # Depth bound (induction.md; Zimmer, Khurana & Kivelson 2000, Icarus 147): a perfect conductor below
    # an insulating shell of thickness h gives A = (1 - h/R)^3 at degree 1, so A >= A_min allows at most
    # h = R (1 - A_min^(1/3)). A 1e6 S/m ocean at 1 h has a 30 m skin depth (A lower by 3 delta / 2 r,
    # 5e-5 relative; the bound moves by ~15 m). With one free parameter the 2-sigma set is
    # |A - A_obs| <= 2 sigma, i.e. h between R(1 - (A_obs + 2s)^(1/3)) and R(1 - (A_obs - 2s)^(1/3)).
    radius, a_obs, s = 1000.0, 0.8, 0.002
    model = InteriorModel(radius, [Layer("ice", 0.0, 50.0), Layer("ocean", 1e6, 100.0), Layer("core", 0.01)])
    data = parse_measurements({"response": [dict(period_h=1.0, amplitude=a_obs, amplitude_sigma=s,
                                                 phase_lag_deg=0.0, phase_lag_sigma_deg=1.0)]})
    n = 4000
    res = invert(model, data, {"ice.thickness_km": {"range": [50.0, 100.0]}}, grid_points=n, cap=n)
    cell = 50.0 / n
    h = [r["ice.thickness_km"] for r in res.two_sigma.rows]
    assert res.two_sigma.count == len(h)
    h_max = radius * (1 - (a_obs - 2 * s) ** (1 / 3))
    h_min = radius * (1 - (a_obs + 2 * s) ** (1 / 3))
    tol = cell + 0.02
    assert abs(max(h) - h_max) < tol, f"2-sigma h_max {max(h):.4f} km, bound {h_max:.4f} km"
    assert abs(min(h) - h_min) < tol, f"2-sigma h_min {min(h):.4f} km, bound {h_min:.4f} km"
    # The equal-tailed 95 % range of a near-Gaussian posterior: A_obs -/+ 1.96 sigma mapped through the bound.
    lo95, hi95 = res.ranges["ice.thickness_km"]["95"]
    assert abs(hi95 - radius * (1 - (a_obs - 1.96 * s) ** (1 / 3))) < 0.05
    assert abs(lo95 - radius * (1 - (a_obs + 1.96 * s) ** (1 / 3))) < 0.05
    assert abs(res.best["ice.thickness_km"] - radius * (1 - a_obs ** (1 / 3))) < tol


def test_known_model_recovered_from_noise_free_data():
    # (refine=False: this and the fixed-grid tests below check one grid exactly, without adaptive refinement)
    # A model placed on a grid midpoint and inverted from its own noise-free responses at 3 periods
    # must come back exactly (chi2_min = 0 up to round-off) and lie inside its 68 % ranges (common practice).
    sc = ilmare()
    table = sc.raw["invert"]
    params = parse_parameters(table, sc.model)
    n = 24
    truth = {p.name: float(p.midpoints(n)[i]) for p, i in zip(params, (9, 14, 15))}
    model = sc.model.with_layer("ice shell", thickness_km=truth["ice shell.thickness_km"])
    model = model.with_layer("ocean", thickness_km=truth["ocean.thickness_km"],
                             conductivity_S_per_m=truth["ocean.conductivity_S_per_m"])
    data = measurements(model, sc.periods_h, 0.003, 0.3)
    res = invert(sc.model, data, params, grid_points=n, refine=False)
    assert res.chi2_min < 1e-16, res.chi2_min
    for name, x in truth.items():
        assert res.best[name] == pytest.approx(x, rel=1e-12)
        lo, hi = res.ranges[name]["68"]
        assert lo <= x <= hi, f"{name}: truth {x} outside 68 % range [{lo}, {hi}]"
    assert res.method == "grid" and res.n_models == n**3 and res.n_impossible == 0


def test_single_period_leaves_ocean_thickness_open_and_says_so():
    # Seufert, Saur & Neubauer (2011), Icarus 214: one inducing period cannot separate ocean thickness
    # from conductivity; several periods can. At 84.7 h (skin depth ~170 km) the 2-D marginal of ocean
    # thickness and conductivity is a ridge; at 12.12 h the ocean is several skin depths thick and its
    # thickness is unconstrained. Both must be said in the result.
    sc = ilmare()
    table = sc.raw["invert"]
    one = invert(sc.model, measurements(sc.model, [12.12], 0.01, 1.0), table, grid_points=30, refine=False)
    lo, hi = one.ranges["ocean.thickness_km"]["95"]
    assert (hi - lo) / (250 - 5) > 0.8, (lo, hi)
    assert any("ocean.thickness_km is poorly constrained" in t for t in one.tradeoffs), one.tradeoffs
    long = invert(sc.model, measurements(sc.model, [84.7], 0.01, 1.0), table, grid_points=30, refine=False)
    assert long.correlation[1, 2] < -0.7
    assert any(t.startswith("ocean.thickness_km and ocean.conductivity_S_per_m trade off") for t in long.tradeoffs)
    three = invert(sc.model, measurements(sc.model, sc.periods_h, 0.01, 1.0), table, grid_points=30, refine=False)
    lo3, hi3 = three.ranges["ocean.thickness_km"]["95"]
    assert hi3 - lo3 < 0.8 * (hi - lo), ((lo, hi), (lo3, hi3))


def test_chunking_and_order_do_not_change_the_result():
    # Map-reduce identity (common practice): any chunk size and any completion order give the same merge.
    sc = ilmare()
    params = parse_parameters(sc.raw["invert"], sc.model)
    data = measurements(sc.model, sc.periods_h, 0.02, 1.5)
    setup = make_grid_setup(ParameterMap(sc.model, params), data, (9, 8, 7), cap=5)
    whole = run_grid(setup, chunk_size=setup.total)
    parts = run_grid(setup, chunk_size=37, backend=Reversed())
    pre = run_grid(setup, chunk_size=100, precomputed=forward_grid(setup))
    for other in (parts, pre):
        assert other.chi2_min == pytest.approx(whole.chi2_min, rel=1e-13)
        assert other.best == whole.best
        for a, b in zip(whole.marginals, other.marginals):
            np.testing.assert_allclose(a, b, rtol=1e-12, atol=1e-300)
        for key in whole.maps:
            np.testing.assert_allclose(whole.maps[key], other.maps[key], rtol=1e-12, atol=1e-300)
        assert other.two_sigma.count == whole.two_sigma.count
        assert [r["chi2"] for r in other.two_sigma.rows] == pytest.approx([r["chi2"] for r in whole.two_sigma.rows])
    assert len(whole.two_sigma.rows) == min(5, whole.two_sigma.count)
    assert whole.two_sigma.dropped == whole.two_sigma.count - len(whole.two_sigma.rows)


def test_grid_matches_direct_evaluation_through_the_checked_api():
    # Independent path: every grid cell built with InteriorModel.with_layer and evaluated with
    # InteriorModel.response; posterior mass exp(-chi2/2) with chi2 written out by hand.
    sc = ilmare()
    table = {"ice shell.thickness_km": {"range": [5, 45]}, "ocean.conductivity_S_per_m": {"range": [0.5, 20], "scale": "log"}}
    data = measurements(sc.model, sc.periods_h, 0.02, 1.5)
    res = invert(sc.model, data, table, grid_points=(5, 4), refine=False)
    ice = 5 + 8 * (np.arange(5) + 0.5)
    cond = 10 ** (np.log10(0.5) + np.log10(40) / 4 * (np.arange(4) + 0.5))
    chi2 = np.empty((5, 4))
    for i, h in enumerate(ice):
        for j, c in enumerate(cond):
            r = sc.model.with_layer("ice shell", thickness_km=h).with_layer("ocean", conductivity_S_per_m=c)
            out = r.response(periods_h=sc.periods_h)
            chi2[i, j] = np.sum(((out.amplitude - data.values[:, 0]) / 0.02) ** 2
                                + ((out.phase_lag_deg - data.values[:, 1]) / 1.5) ** 2)
    w = np.exp(-0.5 * (chi2 - chi2.min()))
    w /= w.sum()
    np.testing.assert_allclose(res.maps[(0, 1)], w, rtol=1e-9, atol=1e-300)
    np.testing.assert_allclose(res.marginals[0], w.sum(axis=1), rtol=1e-9, atol=1e-300)
    assert res.chi2_min == pytest.approx(chi2.min(), rel=1e-9)
    i, j = np.unravel_index(np.argmin(chi2), chi2.shape)
    assert res.best["ice shell.thickness_km"] == pytest.approx(ice[i]) and res.best["ocean.conductivity_S_per_m"] == pytest.approx(cond[j])


def test_impossible_cells_get_zero_prior():
    # Ice plus ocean thicker than the room above the fixed mantle: counted by hand, zero posterior mass.
    model = InteriorModel(500.0, [Layer("ice", 1e-6, 20.0), Layer("ocean", 3.0, 100.0),
                                  Layer("mantle", 0.01, 300.0), Layer("core", 1e5)])
    table = {"ice.thickness_km": {"range": [10, 130]}, "ocean.thickness_km": {"range": [10, 130]}}
    data = measurements(model, [10.0, 50.0], 0.02, 2.0)
    n = 12
    res = invert(model, data, table, grid_points=n, refine=False)
    mids = 10 + 10 * (np.arange(n) + 0.5)
    impossible = (mids[:, None] + mids[None, :] + 300.0) >= 500.0
    assert res.n_impossible == int(impossible.sum()) and res.n_models == n * n - int(impossible.sum())
    assert np.all(res.maps[(0, 1)][impossible] == 0.0)
    assert res.ranges["ice.thickness_km"]["95"][1] < 130


def test_ionosphere_conductance_as_a_parameter():
    # The thin-sheet ionosphere (kernel.add_thin_sheet) as a free parameter: truth on a grid midpoint
    # is recovered exactly from its own noise-free data.
    model = InteriorModel(1540.0, [Layer("ice", 1e-6, 20.0), Layer("ocean", 2.8, 95.0), Layer("core", 1e-2)],
                          ionosphere=Ionosphere(conductance_S=1000.0, altitude_km=100.0))
    table = {"ionosphere.conductance_S": {"range": [100.0, 10000.0], "scale": "log"}}
    params = parse_parameters(table, model)
    truth = float(params[0].midpoints(20)[13])
    m2 = InteriorModel(1540.0, model.layers, Ionosphere(truth, 100.0))
    res = invert(model, measurements(m2, [1.0, 12.0], 0.002, 0.2), params, grid_points=20, refine=False)
    assert res.best["ionosphere.conductance_S"] == pytest.approx(truth, rel=1e-12)
    assert res.chi2_min < 1e-16


def test_mcmc_agrees_with_the_exact_grid():
    # emcee (Foreman-Mackey et al. 2013, PASP 125, 306; reference library) against the exact grid
    # posterior on a 2-parameter problem: 68 % and 95 % bounds within 10 % of the grid's 95 % width.
    sc = ilmare()
    table = {"ice shell.thickness_km": {"range": [1, 60]}, "ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}}
    data = measurements(sc.model, sc.periods_h, 0.02, 1.5)
    grid = invert(sc.model, data, table, grid_points=200)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # a short chain may be flagged as not converged
        mc = invert(sc.model, data, table, sampler="mcmc", steps=1500, walkers=24, seed=3, grid_points=30,
                    max_evaluations=1500 * 24)  # one stretch only (the sampler would otherwise extend the chain)
    assert mc.method == "mcmc"
    d = mc.diagnostics
    assert set(d["autocorr_time"]) == {"ice shell.thickness_km", "ocean.conductivity_S_per_m"}
    assert 0.1 < d["acceptance_fraction"] < 0.9 and d["steps"] == 1500 and d["walkers"] == 24
    worst = (0.0, "")
    for p in parse_parameters(table, sc.model):
        g95 = p.to_prior(grid.ranges[p.name]["95"])
        width = g95[1] - g95[0]
        for level in ("68", "95"):
            diff = np.abs(p.to_prior(mc.ranges[p.name][level]) - p.to_prior(grid.ranges[p.name][level])) / width
            if diff.max() > worst[0]:
                worst = (float(diff.max()), f"{p.name} {level}: mcmc {mc.ranges[p.name][level]} grid {grid.ranges[p.name][level]}")
    assert worst[0] < 0.1, worst
    assert mc.chi2_min < 0.5 and len(mc.two_sigma.rows) <= 200
    np.testing.assert_allclose(sum(m.sum() for m in mc.marginals[:1]), 1.0, rtol=1e-12)


def test_auto_sampler_switches_to_mcmc_above_four_parameters(monkeypatch):
    import induct.inversion.mcmc as mcmc

    called = {}

    def fake(pmap, measurements, **kw):
        called["k"] = len(pmap.parameters)
        return "sampled"

    import induct.inversion.nested as nested

    monkeypatch.setattr(mcmc, "run_mcmc", fake)
    monkeypatch.setattr(nested, "run_nested", fake)
    model = InteriorModel(1540.0, [Layer("ice", 1e-6, 20.0), Layer("ocean", 2.8, 95.0),
                                   Layer("mantle", 0.01, 800.0), Layer("core", 1e5)])
    table = {"ice.thickness_km": {"range": [1, 60]}, "ocean.thickness_km": {"range": [5, 250]},
             "ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"},
             "mantle.conductivity_S_per_m": {"range": [1e-4, 1], "scale": "log"},
             "core.conductivity_S_per_m": {"range": [1e3, 1e6], "scale": "log"}}
    assert invert(model, measurements(model, [10.0], 0.02, 1.0), table) == "sampled" and called["k"] == 5


def test_two_sigma_threshold_is_the_chi2_quantile():
    # 95.45 % quantiles of chi2 with k degrees of freedom (scipy.stats.chi2, reference library);
    # k = 1 gives exactly 4 (2 sigma squared).
    from scipy import stats

    from induct.inversion.posterior import two_sigma_delta_chi2

    for k in range(1, 7):
        want = stats.chi2.ppf(math.erf(2 / math.sqrt(2)), k)
        assert two_sigma_delta_chi2(k) == pytest.approx(want, rel=1e-12), k
    assert two_sigma_delta_chi2(1) == pytest.approx(4.0, rel=1e-12)


def test_combine_with_an_empty_part():
    sc = ilmare()
    params = parse_parameters({"ocean.thickness_km": {"range": [5, 250]}}, sc.model)
    setup = make_grid_setup(ParameterMap(sc.model, params), measurements(sc.model, [10.0], 0.02, 1.0), 5)
    from induct.inversion.grid import GridTask, _partial

    part = GridTask(setup)(0, 5)
    empty = _partial(setup, 0, (np.arange(0),), np.empty(0))
    merged = combine_partials(empty, part)
    assert merged.ref == part.ref and merged.best_index == part.best_index
    np.testing.assert_array_equal(merged.marginals[0], part.marginals[0])


def test_a_grid_too_coarse_for_the_posterior_is_flagged():
    # A 95 % range narrower than 5 grid cells cannot be trusted to a fraction of a cell (common practice);
    # the result says so, and a finer grid clears the note.
    sc = ilmare()
    table = {"ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}}
    data = measurements(sc.model, sc.periods_h, 0.003, 0.3)
    coarse = invert(sc.model, data, table, grid_points=20)
    assert any("grid is coarse for ocean.conductivity_S_per_m" in n for n in coarse.notes), coarse.notes
    fine = invert(sc.model, data, table, grid_points=4000)
    assert fine.notes == []
