"""Simulation-based calibration of the sampler path (nested or ensemble sampler).

Cook, Gelman & Rubin (2006, J. Comput. Graph. Stat. 15, 675); Talts, Betancourt,
Simpson, Vehtari & Gelman (2018, arXiv:1804.06788): draw the truth from the
prior, simulate data with the measurement noise, infer; if the inference is
calibrated, the posterior CDF of each parameter at the truth (the normalised
rank of the truth among posterior draws) is uniform on [0, 1], and x %
credible intervals contain the truth x % of the time within the binomial error
``sqrt(x (1 - x) / n)``.

Here the posterior CDF at the truth is the weighted fraction of the
sampler's posterior samples below it; its uniformity is tested with a
chi-square test on equal bins. Runs whose sampler did not
converge are counted and left out.

Examples
--------
>>> from induct.inversion.sampler_calibration import coverage_error
>>> round(coverage_error(0.95, 2000), 4)      # binomial 1-sigma error of a 95 % coverage over 2000 trials
0.0049
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy import stats

__all__ = ["SBCResult", "simulate_data", "run_sbc", "coverage_error"]


def coverage_error(level: float, n: int) -> float:
    """Binomial 1-sigma error of a coverage fraction ``level`` estimated from ``n`` trials."""
    return math.sqrt(level * (1.0 - level) / n)


@dataclass
class SBCResult:
    """Outcome of a simulation-based calibration.

    Attributes
    ----------
    n_trials : int
        Trials with a converged sampler.
    n_unconverged : int
        Trials left out because the sampler did not converge.
    coverage : dict
        ``"68"`` and ``"95"`` -> fraction of trials (all parameters pooled) whose interval held the truth.
    coverage_err : dict
        Binomial 1-sigma error of each.
    pit : ndarray, shape (n_trials, k)
        Posterior CDF of each parameter at the truth.
    uniformity_p : dict
        Parameter name -> p-value of the chi-square test of uniformity of its PIT values.
    bins : int
        Bins of that test.
    """

    n_trials: int
    n_unconverged: int
    coverage: dict
    coverage_err: dict
    pit: np.ndarray
    uniformity_p: dict
    bins: int


def simulate_data(template, response: np.ndarray, rng: np.random.Generator):
    """Noisy measurements: the model's values in the template's forms plus Gaussian noise with its covariance.

    Parameters
    ----------
    template : induct.io.measurements.Measurements
        Periods, degrees, forms and covariances of the simulated data.
    response : ndarray of complex, shape (M,)
        The true model's R_n at each entry.
    rng : numpy.random.Generator

    Returns
    -------
    Measurements

    Examples
    --------
    >>> from induct.io.measurements import load_measurements
    >>> d = load_measurements("ilmare_measured")
    >>> sim = simulate_data(d, np.full(3, 0.9 + 0.05j), np.random.default_rng(0))
    >>> sim.values.shape, sim.source
    ((3, 2), 'simulated')
    """
    clean = template.predicted(np.asarray(response)[None])[0]
    chol = np.linalg.cholesky(template.covariance)
    noise = np.einsum("mij,mj->mi", chol, rng.normal(size=clean.shape))
    return dataclasses.replace(template, values=clean + noise, source="simulated")


def _pit(result, p, value) -> float:
    """Posterior CDF at the truth: weighted fraction of the samples below it (ties count half)."""
    i = [q.name for q in result.parameters].index(p.name)
    u = float(p.to_prior(value))
    x, w = result.samples[:, i], result.sample_weights
    return float((np.sum(w[x < u]) + 0.5 * np.sum(w[x == u])) / np.sum(w))


def run_sbc(pmap, template, *, sampler: str = "nested", n_trials: int, seed: int = 0, bins: int = 10,
            hist_bins: int = 60, **sampler_kw) -> SBCResult:
    """Simulation-based calibration of a sampler on one problem.

    Parameters
    ----------
    pmap : induct.inversion.priors.ParameterMap
        The model and free parameters (the prior the truths are drawn from).
    template : induct.io.measurements.Measurements
        The data layout and noise (covariances) to simulate.
    sampler : {"nested", "ensemble"}
    n_trials : int
        Number of simulated data sets.
    seed : int
        Trial ``t`` uses ``numpy.random.default_rng([seed, t])``; the sampler seed is ``t``.
    bins : int
        Bins of the uniformity test.
    hist_bins : int
        Histogram bins of the marginals the PIT values are read from.
    **sampler_kw
        Passed to :func:`induct.inversion.nested.run_nested` or :func:`induct.inversion.mcmc.run_mcmc`.

    Returns
    -------
    SBCResult
    """
    if sampler == "nested":
        from induct.inversion.nested import run_nested as run
    elif sampler in ("ensemble", "mcmc"):
        from induct.inversion.mcmc import run_mcmc as run
    else:
        raise ValueError(f"sampler must be 'nested' or 'ensemble', got {sampler!r}")
    params = pmap.parameters
    k = len(params)
    lo = np.array([p.prior_bounds[0] for p in params])
    hi = np.array([p.prior_bounds[1] for p in params])
    pits, hits68, hits95, unconverged = [], 0, 0, 0
    for t in range(int(n_trials)):
        rng = np.random.default_rng([seed, t])
        while True:
            u = lo + (hi - lo) * rng.random(k)
            truth = [float(p.from_prior(x)) for p, x in zip(params, u)]
            resp = pmap.responses([np.array([v]) for v in truth], template.period_h, template.degree)[0]
            if np.all(np.isfinite(resp)):
                break
        data = simulate_data(template, resp, rng)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = run(pmap, data, bins=(hist_bins,) * k, cap=0, seed=t, **sampler_kw)
        if not res.converged:
            unconverged += 1
            continue
        row = []
        for p, v in zip(params, truth):
            r = res.ranges[p.name]
            hits68 += int(r["68"][0] <= v <= r["68"][1])
            hits95 += int(r["95"][0] <= v <= r["95"][1])
            row.append(_pit(res, p, v))
        pits.append(row)
    pit = np.array(pits, dtype=float).reshape(-1, k)
    n = len(pit)
    total = max(n * k, 1)
    cov = {"68": hits68 / total, "95": hits95 / total}
    err = {"68": coverage_error(0.68, total), "95": coverage_error(0.95, total)}
    pvals = {}
    for i, p in enumerate(params):
        counts = np.histogram(pit[:, i], bins=bins, range=(0.0, 1.0))[0]
        pvals[p.name] = float(stats.chisquare(counts).pvalue) if n else float("nan")
    return SBCResult(n, unconverged, cov, err, pit, pvals, bins)
