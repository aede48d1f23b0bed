"""Posterior sampling with emcee's affine-invariant ensemble sampler (optional extra ``mcmc``).

Used for more than 4 free parameters, where a grid becomes too large, or on
request. The sampler (Goodman & Weare 2010, Comm. App. Math. Comp. Sci. 5, 65;
Foreman-Mackey, Hogg, Lang & Goodman 2013, PASP 125, 306) walks in the prior
coordinates (value or log10 value), where the prior is uniform on a box; the
log-probability is ``-chi2 / 2`` inside the box for physically possible models
and ``-inf`` elsewhere. All walkers are evaluated together with the vectorised
kernel (``vectorize=True``).

Convergence is checked, and the chain is run longer automatically until it
passes or a budget runs out (``max_evaluations`` likelihood evaluations,
``max_time_s`` seconds); the chain length doubles at each extension. The checks:

* chain length >= 50 integrated autocorrelation times tau of every parameter
  (Goodman & Weare 2010; Foreman-Mackey et al. 2013; emcee documentation,
  "Autocorrelation analysis & convergence"; tau by Sokal's adaptive window,
  ``get_autocorr_time(tol=0)``);
* after discarding the first ``2 max(tau)`` steps as burn-in, every parameter's
  rank-normalised split R-hat <= 1.01 and bulk and tail effective sample size
  >= 400, with the walkers taken as chains (Vehtari et al. 2021, Bayesian
  Analysis 16, 667; :mod:`induct.inversion.diagnostics`).

The mean acceptance fraction is reported (0.2-0.5 is the usual healthy range,
common practice). A run that fails a check is returned with
``converged = False`` and ``diagnostics["failures"]`` naming each failing
parameter and value, and a warning is issued: its ranges are not results.
"""

from __future__ import annotations

import time
import warnings

import numpy as np

from induct.io.measurements import Measurements
from induct.inversion.posterior import PosteriorResult
from induct.inversion.diagnostics import ESS_MIN, RHAT_MAX, chain_diagnostics
from induct.inversion.priors import ParameterMap
from induct.inversion.samples import summarise_samples

__all__ = ["run_mcmc", "DEFAULT_STEPS", "CONVERGENCE_FACTOR", "DEFAULT_MAX_EVALUATIONS"]

#: Steps per walker of the first stretch of chain (it is extended until converged or out of budget).
DEFAULT_STEPS = 2000
#: Default budget of likelihood evaluations (walkers x steps).
DEFAULT_MAX_EVALUATIONS = 2_000_000
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


def _check(chain: np.ndarray, tau: np.ndarray, names) -> tuple[dict, list, int]:
    """Convergence checks of an emcee chain (steps, walkers, k): diagnostics per parameter, failures, burn-in."""
    steps = chain.shape[0]
    burn = int(min(np.ceil(2 * np.nanmax(tau)), steps // 2))
    diag = chain_diagnostics(chain[burn:], names)
    failures = []
    for name, t in zip(names, tau):
        if not steps >= CONVERGENCE_FACTOR * t:
            failures.append(f"{name}: chain of {steps} steps is shorter than {CONVERGENCE_FACTOR} autocorrelation "
                            f"times ({CONVERGENCE_FACTOR} x {t:.0f} = {CONVERGENCE_FACTOR * t:.0f} steps)")
        d = diag[name]
        if not d["rhat"] <= RHAT_MAX:
            failures.append(f"{name}: R-hat {d['rhat']:.3f} > {RHAT_MAX}")
        if not d["ess_bulk"] >= ESS_MIN:
            failures.append(f"{name}: bulk ESS {d['ess_bulk']:.0f} < {ESS_MIN}")
        if not d["ess_tail"] >= ESS_MIN:
            failures.append(f"{name}: tail ESS {d['ess_tail']:.0f} < {ESS_MIN}")
    return diag, failures, burn


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
    max_evaluations: int | None = None,
    max_time_s: float | None = None,
) -> PosteriorResult:
    """Sample the posterior with emcee until converged (or out of budget) and summarise it.

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
        Steps per walker of the first stretch (default 2000, >= 100); the chain
        doubles until converged or the budget is spent.
    walkers : int, optional
        Number of walkers (default max(32, 4 k), >= 2 k + 2 where k is the number of parameters).
    seed : int
        Seed of the initial positions and of the sampler's random numbers.
    progress : bool
        Progress bar (tqdm, standard error).
    max_evaluations : int, optional
        Budget of likelihood evaluations, walkers x steps (default 2 million; at least one first stretch).
    max_time_s : float, optional
        Budget of wall-clock seconds: no extension starts after it (default none).

    Returns
    -------
    PosteriorResult
        ``method = "mcmc"``; ``diagnostics`` holds ``autocorr_time`` (per
        parameter, steps), ``rhat``, ``ess_bulk``, ``ess_tail`` (per parameter),
        ``acceptance_fraction`` (mean), ``burn_in``, ``thin``, ``steps``,
        ``walkers``, ``converged``, ``failures``, ``stopped_by`` and
        ``independent_samples``.

    Raises
    ------
    ValueError
        Bad steps, walkers or budget; no physically possible starting point found.
    ImportError
        When emcee is not installed (``pip install 'induct[mcmc]'``).

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.io.measurements import load_measurements
    >>> from induct.inversion.priors import ParameterMap, parse_parameters
    >>> s = load_scenario("ilmare"); d = load_measurements("ilmare_measured")
    >>> pm = ParameterMap(s.model, parse_parameters({"ice shell.thickness_km": {"range": [1, 60]}}, s.model))
    >>> r = run_mcmc(pm, d, bins=(30,), cap=0, steps=1000, walkers=8, seed=1)
    >>> r.converged
    True
    """
    try:
        import emcee
    except ImportError as exc:  # pragma: no cover - emcee is in the test extra
        raise ImportError("the ensemble sampler needs emcee: pip install 'induct[mcmc]'") from exc
    params = pmap.parameters
    names = [p.name for p in params]
    k = len(params)
    steps = DEFAULT_STEPS if steps is None else steps
    walkers = max(32, 4 * k) if walkers is None else walkers
    if isinstance(steps, bool) or int(steps) != steps or steps < 100:
        raise ValueError(f"steps must be an integer >= 100, got {steps!r}")
    if isinstance(walkers, bool) or int(walkers) != walkers or walkers < 2 * k + 2:
        raise ValueError(f"walkers must be an integer >= 2 k + 2 = {2 * k + 2} for {k} parameters, got {walkers!r}")
    steps, walkers = int(steps), int(walkers)
    max_evaluations = DEFAULT_MAX_EVALUATIONS if max_evaluations is None else max_evaluations
    if isinstance(max_evaluations, bool) or int(max_evaluations) != max_evaluations or max_evaluations < walkers * steps:
        raise ValueError(f"max_evaluations must be an integer >= walkers x steps = {walkers * steps}, got {max_evaluations!r}")
    if max_time_s is not None and not (max_time_s > 0):
        raise ValueError(f"max_time_s must be > 0, got {max_time_s!r}")
    budget_steps = int(max_evaluations) // walkers
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

    bar = None
    if progress:
        from tqdm.auto import tqdm

        bar = tqdm(total=budget_steps, desc="ensemble sampler", unit=" steps", leave=False)
    t0 = time.monotonic()
    done, chunk, state = 0, steps, start[:walkers]
    try:
        while True:
            state = sampler.run_mcmc(state, chunk, progress=False)
            done += chunk
            if bar is not None:
                bar.update(chunk)
            tau = np.asarray(sampler.get_autocorr_time(tol=0), dtype=float)
            diag, failures, burn = _check(sampler.get_chain(), tau, names)
            if bar is not None:
                worst = max(d["rhat"] for d in diag.values())
                least = min(min(d["ess_bulk"], d["ess_tail"]) for d in diag.values())
                bar.set_postfix_str(f"max R-hat {worst:.3f}, min ESS {least:.0f}, {len(failures)} check(s) failing")
            if not failures:
                stopped_by = "converged"
                break
            if max_time_s is not None and time.monotonic() - t0 > max_time_s:
                stopped_by = "max_time_s"
                break
            chunk = min(done, budget_steps - done)
            if chunk < 1:
                stopped_by = "max_evaluations"
                break
    finally:
        if bar is not None:
            bar.close()
    converged = not failures
    if not converged:
        why = (f"the budget of {int(max_evaluations):,d} evaluations" if stopped_by == "max_evaluations"
               else f"the time budget of {max_time_s:g} s")
        warnings.warn(
            f"MCMC not converged after {done} steps x {walkers} walkers ({why} spent): " + "; ".join(failures)
            + "; the ranges are not results",
            stacklevel=2,
        )
    thin = max(1, int(np.nanmin(tau) / 2))
    acceptance = float(np.mean(sampler.acceptance_fraction))
    chain_u = sampler.get_chain(discard=burn, thin=thin, flat=True)
    all_u = sampler.get_chain(flat=True)
    all_logp = sampler.get_log_prob(flat=True)
    evaluated = np.isfinite(all_logp)
    diagnostics = {
        "sampler": "emcee EnsembleSampler (stretch move)",
        "steps": done,
        "walkers": walkers,
        "autocorr_time": {n: float(t) for n, t in zip(names, tau)},
        "rhat": {n: diag[n]["rhat"] for n in names},
        "ess_bulk": {n: diag[n]["ess_bulk"] for n in names},
        "ess_tail": {n: diag[n]["ess_tail"] for n in names},
        "acceptance_fraction": acceptance,
        "burn_in": burn,
        "thin": thin,
        "converged": converged,
        "failures": failures,
        "stopped_by": stopped_by,
        "criteria": (f"chain >= {CONVERGENCE_FACTOR} autocorrelation times; rank-normalised split R-hat <= {RHAT_MAX}; "
                     f"bulk and tail ESS >= {ESS_MIN} (walkers as chains, after burn-in)"),
        "independent_samples": float(walkers * (done - burn) / np.nanmax(tau)),
    }
    return summarise_samples(
        method="mcmc", pmap=pmap, measurements=measurements, u=chain_u, weights=np.ones(len(chain_u)),
        evaluated_u=all_u[evaluated], evaluated_chi2=-2.0 * all_logp[evaluated], bins=tuple(bins), cap=cap,
        n_models=log_prob.evaluated, n_impossible=log_prob.impossible, diagnostics=diagnostics,
    )
