"""Posterior sampling with emcee's affine-invariant ensemble sampler (optional extra ``mcmc``).

Used for more than 4 free parameters, where a grid becomes too large, or on
request. The sampler (Goodman & Weare 2010, Comm. App. Math. Comp. Sci. 5, 65;
Foreman-Mackey, Hogg, Lang & Goodman 2013, PASP 125, 306) walks in the prior
coordinates (value or log10 value), where the prior is uniform on a box; the
log-probability is ``-chi2 / 2`` inside the box for physically possible models
and ``-inf`` elsewhere. All walkers are evaluated together with the vectorised
kernel (``vectorize=True``).

Convergence diagnostics reported with the result (emcee documentation,
"Autocorrelation analysis & convergence"): the integrated autocorrelation time
tau of each parameter (Sokal's adaptive window, ``get_autocorr_time(tol=0)``),
whether the chain is longer than 50 tau, and the mean acceptance fraction
(0.2-0.5 is the usual healthy range, common practice). The first
``2 max(tau)`` steps are discarded as burn-in and the chain is thinned by
``tau_min / 2``. A warning is issued when the chain is shorter than 50 tau.
"""

from __future__ import annotations

import warnings

import numpy as np

from induct.io.measurements import Measurements
from induct.inversion.posterior import PosteriorResult, TwoSigmaSet, find_tradeoffs, map_correlation, two_sigma_delta_chi2
from induct.inversion.priors import ParameterMap

__all__ = ["run_mcmc", "DEFAULT_STEPS", "CONVERGENCE_FACTOR"]

DEFAULT_STEPS = 4000
#: The chain should be longer than this many autocorrelation times (emcee documentation).
CONVERGENCE_FACTOR = 50


class _LogProb:
    """Vectorised log-probability in prior coordinates; counts the models it evaluates."""

    def __init__(self, pmap: ParameterMap, measurements: Measurements):
        self.pmap, self.measurements = pmap, measurements
        self.lo = np.array([p.prior_bounds[0] for p in pmap.parameters])
        self.hi = np.array([p.prior_bounds[1] for p in pmap.parameters])
        self.evaluated = 0
        self.impossible = 0

    def __call__(self, u):
        u = np.atleast_2d(u)
        out = np.full(u.shape[0], -np.inf)
        inside = np.all((u >= self.lo) & (u <= self.hi), axis=1)
        if inside.any():
            cols = [p.from_prior(u[inside, i]) for i, p in enumerate(self.pmap.parameters)]
            m = self.measurements
            chi2 = m.chi2(self.pmap.responses(cols, m.period_h, m.degree))
            ok = np.isfinite(chi2)
            self.evaluated += int(ok.sum())
            self.impossible += int((~ok).sum())
            out[inside] = np.where(ok, -0.5 * chi2, -np.inf)
        return out


def run_mcmc(
    pmap: ParameterMap,
    measurements: Measurements,
    *,
    bins,
    cap: int,
    steps: int | None = None,
    walkers: int | None = None,
    seed: int = 0,
    progress: bool = False,
) -> PosteriorResult:
    """Sample the posterior with emcee and summarise it.

    Parameters
    ----------
    pmap : ParameterMap
        Free parameters and the model.
    measurements : Measurements
        The data.
    bins : tuple of int
        Histogram bins per parameter for the marginal maps.
    cap : int
        How many 2-sigma combinations to list.
    steps : int, optional
        Steps per walker (default 4000, >= 100).
    walkers : int, optional
        Number of walkers (default max(32, 4 k), >= 2 k + 2 where k is the number of parameters).
    seed : int
        Seed of the initial positions and of the sampler's random numbers.
    progress : bool
        emcee's progress bar.

    Returns
    -------
    PosteriorResult
        ``method = "mcmc"``; ``diagnostics`` holds ``autocorr_time`` (per
        parameter, steps), ``acceptance_fraction`` (mean), ``burn_in``,
        ``thin``, ``steps``, ``walkers``, ``converged`` and ``independent_samples``.

    Raises
    ------
    ValueError
        Bad steps or walkers; no physically possible starting point found.
    ImportError
        When emcee is not installed (``pip install induct[mcmc]``).
    """
    try:
        import emcee
    except ImportError as exc:  # pragma: no cover - emcee is in the test extra
        raise ImportError("the MCMC sampler needs emcee: pip install 'induct[mcmc]'") from exc
    params = pmap.parameters
    k = len(params)
    steps = 4000 if steps is None else steps
    walkers = max(32, 4 * k) if walkers is None else walkers
    if isinstance(steps, bool) or int(steps) != steps or steps < 100:
        raise ValueError(f"steps must be an integer >= 100, got {steps!r}")
    if isinstance(walkers, bool) or int(walkers) != walkers or walkers < 2 * k + 2:
        raise ValueError(f"walkers must be an integer >= 2 k + 2 = {2 * k + 2} for {k} parameters, got {walkers!r}")
    steps, walkers = int(steps), int(walkers)
    log_prob = _LogProb(pmap, measurements)
    lo, hi = log_prob.lo, log_prob.hi
    rng = np.random.default_rng(seed)
    start = np.empty((0, k))
    for _ in range(200):
        trial = lo + (hi - lo) * rng.random((4 * walkers, k))
        start = np.vstack([start, trial[np.isfinite(log_prob(trial))]])
        if len(start) >= walkers:
            break
    if len(start) < walkers:
        raise ValueError("no physically possible starting points: the layers leave the fill layer no room in the prior ranges")
    log_prob.evaluated = log_prob.impossible = 0
    sampler = emcee.EnsembleSampler(walkers, k, log_prob, vectorize=True)
    sampler.random_state = np.random.RandomState(seed).get_state()
    sampler.run_mcmc(start[:walkers], steps, progress=progress)

    tau = np.asarray(sampler.get_autocorr_time(tol=0), dtype=float)
    burn = int(min(np.ceil(2 * np.nanmax(tau)), steps // 2))
    thin = max(1, int(np.nanmin(tau) / 2))
    converged = bool(steps > CONVERGENCE_FACTOR * np.nanmax(tau))
    acceptance = float(np.mean(sampler.acceptance_fraction))
    if not converged:
        warnings.warn(
            f"MCMC chain of {steps} steps is shorter than {CONVERGENCE_FACTOR} autocorrelation times "
            f"(max tau = {np.nanmax(tau):.0f} steps): ranges are not reliable; run more steps",
            stacklevel=2,
        )
    chain_u = sampler.get_chain(discard=burn, thin=thin, flat=True)
    all_u = sampler.get_chain(flat=True)
    all_logp = sampler.get_log_prob(flat=True)
    evaluated = np.isfinite(all_logp)

    samples = np.column_stack([p.from_prior(chain_u[:, i]) for i, p in enumerate(params)])
    ranges = {}
    for i, p in enumerate(params):
        q = np.quantile(samples[:, i], [0.16, 0.84, 0.025, 0.975])
        ranges[p.name] = {"68": (float(q[0]), float(q[1])), "95": (float(q[2]), float(q[3]))}
    ibest = int(np.argmax(np.where(evaluated, all_logp, -np.inf)))
    best = {p.name: float(p.from_prior(all_u[ibest, i])) for i, p in enumerate(params)}
    chi2_min = float(-2.0 * all_logp[ibest])

    edges = [p.edges(n) for p, n in zip(params, bins)]
    marginals = [np.histogram(chain_u[:, i], bins=e)[0].astype(float) / len(chain_u) for i, e in enumerate(edges)]
    maps = {}
    corr = np.eye(k)
    for i in range(k):
        for j in range(i + 1, k):
            h = np.histogram2d(chain_u[:, i], chain_u[:, j], bins=[edges[i], edges[j]])[0] / len(chain_u)
            maps[(i, j)] = h
            corr[i, j] = corr[j, i] = float(np.corrcoef(chain_u[:, i], chain_u[:, j])[0, 1])
            if not np.isfinite(corr[i, j]):
                corr[i, j] = corr[j, i] = map_correlation(h, edges[i], edges[j])

    delta = two_sigma_delta_chi2(k)
    chi2_all = -2.0 * all_logp[evaluated]
    u_all = all_u[evaluated]
    inside = np.flatnonzero(chi2_all <= chi2_min + delta)
    uniq, first = np.unique(u_all[inside], axis=0, return_index=True)
    inside = inside[first]
    inside = inside[np.argsort(chi2_all[inside], kind="stable")]
    rows = []
    for n in inside[:cap]:
        row = {p.name: float(p.from_prior(u_all[n, i])) for i, p in enumerate(params)}
        row["chi2"] = float(chi2_all[n])
        rows.append(row)
    diagnostics = {
        "sampler": "emcee EnsembleSampler (stretch move)",
        "steps": steps,
        "walkers": walkers,
        "autocorr_time": {p.name: float(t) for p, t in zip(params, tau)},
        "acceptance_fraction": acceptance,
        "burn_in": burn,
        "thin": thin,
        "converged": converged,
        "independent_samples": float(walkers * (steps - burn) / np.nanmax(tau)),
    }
    return PosteriorResult(
        method="mcmc",
        parameters=list(params),
        best=best,
        chi2_min=chi2_min,
        n_data=measurements.n_data,
        n_models=log_prob.evaluated,
        n_impossible=log_prob.impossible,
        ranges=ranges,
        edges=edges,
        marginals=marginals,
        maps=maps,
        correlation=corr,
        two_sigma=TwoSigmaSet(delta, int(len(inside)), rows),
        tradeoffs=find_tradeoffs(params, ranges, corr, best, bins),
        diagnostics=diagnostics,
        grid_points=tuple(bins),
    )
