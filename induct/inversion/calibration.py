"""Simulation-based calibration of grid posteriors (Cook, Gelman & Rubin 2006; Talts et al. 2018).

For each trial the truth is drawn from the prior, data are simulated from the
likelihood (complex responses with a Gaussian 2 x 2 covariance per entry) and
inverted on a fixed grid whose forward responses are computed once. A calibrated
posterior's central 68 % and 95 % ranges contain the truth 68 % and 95 % of the
time (within the binomial error), and the rank of the truth in the posterior, here
its marginal posterior CDF value (the probability integral transform, the
continuous limit of the rank among posterior draws of Talts et al. 2018,
arXiv:1804.06788), is uniform: tested with Pearson's chi-square on equal bins
(``scipy.stats.chisquare``).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

__all__ = ["CalibrationResult", "calibrate_grid"]


@dataclass
class CalibrationResult:
    """Coverage and rank uniformity of one calibration case.

    Attributes
    ----------
    names : list of str
        Parameter names.
    trials : int
    coverage_68, coverage_95 : ndarray, shape (k,)
        Fraction of trials whose 68 % / 95 % range contains the truth.
    rank_counts : ndarray, shape (k, bins)
        Histogram of the truth's marginal posterior CDF value.
    rank_p_value : ndarray, shape (k,)
        Pearson chi-square p-value of each histogram against uniform.
    """

    names: list
    trials: int
    coverage_68: np.ndarray
    coverage_95: np.ndarray
    rank_counts: np.ndarray
    rank_p_value: np.ndarray

    def lines(self) -> list[str]:
        """One text line per parameter."""
        return [
            f"{n}: 68 % -> {c68:.3f}, 95 % -> {c95:.3f}, rank-uniformity p = {p:.3f}"
            for n, c68, c95, p in zip(self.names, self.coverage_68, self.coverage_95, self.rank_p_value)
        ]


def _cdf_at(mass, edges, u):
    cdf = np.concatenate([[0.0], np.cumsum(mass)])
    cdf /= cdf[-1]
    return float(np.interp(u, edges, cdf))


def calibrate_grid(model, parameters, periods_h, sigma: float, grid_points, trials: int, seed: int,
                   bins: int = 20, tabulate: bool = True) -> CalibrationResult:
    """Run simulation-based calibration of the grid posterior.

    Parameters
    ----------
    model : induct.model.interior.InteriorModel
    parameters : sequence of Parameter
    periods_h : array_like, shape (M,)
        Measured periods (h), degree 1.
    sigma : float
        1-sigma noise on each of Re R and Im R.
    grid_points : int or sequence of int
    trials : int
        Number of truths drawn from the prior.
    seed : int
        Seed of ``numpy.random.default_rng``.
    bins : int
        Bins of the rank histograms.
    tabulate : bool
        Tabulated chemistry ocean (see :class:`induct.inversion.priors.ParameterMap`).

    Returns
    -------
    CalibrationResult
    """
    from scipy import stats

    from induct.inversion.grid import forward_grid, make_grid_setup, run_grid
    from induct.inversion.priors import ParameterMap
    from induct.io.measurements import parse_measurements

    periods = np.asarray(periods_h, dtype=float)
    cov = [[sigma**2, 0.0], [0.0, sigma**2]]

    def data(resp):
        return parse_measurements({"response": [
            {"period_h": float(p), "real": float(r.real), "imag": float(r.imag), "cov": cov}
            for p, r in zip(periods, resp)]}, amplification=True)

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        pmap = ParameterMap(model, parameters, tabulate=tabulate)
        template = make_grid_setup(pmap, data(np.full(periods.size, 0.5 + 0.1j)), grid_points, cap=1)
        forward = forward_grid(template)
        rng = np.random.default_rng(seed)
        k = len(parameters)
        hits68, hits95 = np.zeros(k), np.zeros(k)
        pit = np.empty((trials, k))
        degree = np.ones(periods.size, dtype=int)
        # Truths drawn from the prior in one batch (physically impossible draws have zero prior: redrawn).
        us, resps = [], []
        while sum(len(u) for u in us) < trials:
            u = np.stack([rng.uniform(*p.prior_bounds, size=trials) for p in parameters], axis=-1)
            cols = [np.asarray(p.from_prior(u[:, i]), dtype=float) for i, p in enumerate(parameters)]
            resp = pmap.responses(cols, periods, degree)
            ok = np.all(np.isfinite(resp), axis=1)
            us.append(u[ok])
            resps.append(resp[ok])
        u_all = np.concatenate(us)[:trials]
        resp_all = np.concatenate(resps)[:trials]
        noise = sigma * (rng.standard_normal((trials, periods.size)) + 1j * rng.standard_normal((trials, periods.size)))
        for t in range(trials):
            setup = make_grid_setup(pmap, data(resp_all[t] + noise[t]), grid_points, cap=1)
            res = run_grid(setup, precomputed=forward, chunk_size=setup.total)
            for i, p in enumerate(parameters):
                x = float(p.from_prior(u_all[t, i]))
                lo, hi = res.ranges[p.name]["68"]
                hits68[i] += lo <= x <= hi
                lo, hi = res.ranges[p.name]["95"]
                hits95[i] += lo <= x <= hi
                pit[t, i] = _cdf_at(res.marginals[i], res.edges[i], u_all[t, i])
    counts = np.stack([np.histogram(pit[:, i], bins=bins, range=(0.0, 1.0))[0] for i in range(k)])
    pvals = np.array([stats.chisquare(c).pvalue for c in counts])
    return CalibrationResult([p.name for p in parameters], trials, hits68 / trials, hits95 / trials, counts, pvals)
