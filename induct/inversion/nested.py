"""Nested sampling of the posterior and the evidence with dynesty (optional extra ``nested``).

Nested sampling (Skilling 2004, AIP Conf. Proc. 735, 395; Skilling 2006,
Bayesian Analysis 1, 833) shrinks a set of live points drawn from the prior
through nested likelihood contours; it returns weighted posterior samples and
the evidence ``Z`` with a statistical error, needs no burn-in and handles
several separated modes. The implementation is dynesty's static sampler
(Speagle 2020, MNRAS 493, 3132) with multi-ellipsoid bounds and uniform
sampling inside them.

Set-up: the sampler's unit cube maps linearly onto each parameter's prior
coordinate (value or log10 value), where the prior is uniform; the
log-likelihood is the Gaussian ``-chi2 / 2 - 1/2 log det(2 pi C)`` for
physically possible models and ``-inf`` (zero prior) elsewhere. dynesty
integrates over the whole box, so its ln Z is corrected by ``-ln f`` with
``f`` the physically possible fraction of the prior box, measured on
prior draws (the prior is renormalised over the possible models, as on the grid).

Convergence: dynesty's own stopping rule, the estimated remaining evidence
``Delta ln Z = ln(1 + L_max X / Z) < dlogz`` (default 0.1). A run stopped by its budget
(``max_evaluations`` likelihood calls or ``max_time_s`` seconds) before that
is not converged and says so. The evidence error is dynesty's estimate
(from the spread of the prior-volume shrinkage, about ``sqrt(H / nlive)``
with H the information).

Speed: each proposal of dynesty's uniform sampler is evaluated on its own;
here dynesty's queue of 8 proposals is filled in rounds: candidates for all of
them are drawn from the bound and evaluated in one call of the vectorised
kernel, and each proposal keeps its first candidate that passes the likelihood
constraint (the same distribution as drawing them one at a time). dynesty
checks each queued point against the current constraint when it uses it.
"""

from __future__ import annotations

import math
import time
import warnings

import numpy as np

from induct.io.measurements import Measurements
from induct.inversion.priors import ParameterMap
from induct.inversion.samples import log_likelihood_normalisation, summarise_samples

__all__ = ["run_nested", "DEFAULT_NLIVE", "DEFAULT_DLOGZ", "DEFAULT_MAX_EVALUATIONS"]

DEFAULT_NLIVE = 400
DEFAULT_DLOGZ = 0.1
#: Default budget of likelihood evaluations of a sampler run.
DEFAULT_MAX_EVALUATIONS = 2_000_000
#: Proposals made per round (each checked against the current likelihood bound when used).
QUEUE_SIZE = 8
#: Prior draws used to measure the physically possible fraction of the prior box.
FEASIBLE_DRAWS = 4096


def _need_dynesty():
    try:
        import dynesty
    except ImportError as exc:
        raise ImportError("the nested sampler needs dynesty: pip install 'induct[nested]'") from exc
    return dynesty


class _LogLike:
    """Log-likelihood in prior coordinates, single or batched; counts the models it evaluates (picklable)."""

    def __init__(self, pmap: ParameterMap, measurements: Measurements):
        self.pmap, self.measurements = pmap, measurements
        self.norm = log_likelihood_normalisation(measurements)
        self.evaluated = 0
        self.impossible = 0

    def batch(self, u) -> np.ndarray:
        u = np.atleast_2d(np.asarray(u, dtype=float))
        cols = [p.from_prior(u[:, i]) for i, p in enumerate(self.pmap.parameters)]
        m = self.measurements
        chi2 = m.chi2(self.pmap.responses(cols, m.period_h, m.degree))
        ok = np.isfinite(chi2)
        self.evaluated += int(ok.sum())
        self.impossible += int((~ok).sum())
        return np.where(ok, -0.5 * chi2 + self.norm, -np.inf)

    def __call__(self, v) -> float:
        return float(self.batch(v)[0])


class _Box:
    """Unit cube -> prior coordinates (picklable)."""

    def __init__(self, lo, hi):
        self.lo, self.hi = np.asarray(lo, float), np.asarray(hi, float)

    def __call__(self, x):
        return self.lo + (self.hi - self.lo) * np.asarray(x)


class _BatchMap:
    """A stand-in "pool" whose ``map`` evaluates likelihoods in vectorised batches.

    dynesty calls ``pool.map(func, args)`` for the initial live points (``func``
    its likelihood wrapper) and for new live points (``func`` the internal
    sampler). The uniform sampler's proposals are drawn in batches from the
    bound and evaluated together; anything else falls back to plain ``map``.
    """

    size = 1

    def __init__(self, loglike: _LogLike):
        self.loglike = loglike
        self.batch_size = 16
        try:
            from dynesty.internal_samplers import SamplerReturn
            from dynesty.utils import LogLikelihood, LoglOutput, SamplerHistoryItem, get_random_generator

            self._dyn = (SamplerReturn, LogLikelihood, LoglOutput, SamplerHistoryItem, get_random_generator)
        except ImportError:  # another dynesty layout: evaluate one point at a time
            self._dyn = None

    def map(self, func, iterable):
        items = list(iterable)
        if self._dyn is not None:
            SamplerReturn, LogLikelihood, LoglOutput, _, _ = self._dyn
            if isinstance(func, LogLikelihood) and not func.blob and not func.save_evaluation_history:
                values = self.loglike.batch(np.asarray(items))
                return [LoglOutput(float(v), False) for v in values]
            name = getattr(func, "__qualname__", "")
            if name in ("UniformBoundSampler.sample", "UnitCubeSampler.sample") and items:
                return self._uniform(items, cube=name.startswith("UnitCube"))
        return list(map(func, items))

    def _uniform(self, items, cube: bool):
        """New points for a queue of proposals: one vectorised evaluation per round for the whole queue."""
        SamplerReturn, _, _, SamplerHistoryItem, get_random_generator = self._dyn
        states = [get_random_generator(a.rseed) for a in items]
        ndim = len(items[0].u)
        out = [None] * len(items)
        ncalls = [0] * len(items)
        pending = list(range(len(items)))
        while pending:
            drawn = []
            for i in pending:
                a = items[i]
                if cube:  # before the first bound: uniform in the unit cube
                    u = states[i].uniform(size=(self.batch_size, ndim))
                else:
                    u = np.asarray(a.kwargs["bound"].samples(self.batch_size, rstate=states[i])).reshape(-1, ndim)
                drawn.append(u[(u.min(axis=1) > 0) & (u.max(axis=1) < 1)])
            allu = np.concatenate(drawn)
            if len(allu) == 0:
                continue
            allv = np.array([items[pending[0]].prior_transform(x) for x in allu])
            logl = self.loglike.batch(allv)
            still, start, hits = [], 0, 0
            for i, u in zip(pending, drawn):
                seg = slice(start, start + len(u))
                start += len(u)
                ok = np.flatnonzero(logl[seg] > items[i].loglstar)
                hits += ok.size
                if ok.size == 0:
                    ncalls[i] += len(u)
                    still.append(i)
                    continue
                j = int(ok[0])
                ncalls[i] += j + 1
                v, lj = allv[seg][j], float(logl[seg][j])
                out[i] = SamplerReturn(u=u[j], v=v, logl=lj, ncalls=ncalls[i],
                                       evaluation_history=[SamplerHistoryItem(u=u[j], v=v, logl=lj)],
                                       tuning_info=None, proposal_stats={"n_proposals": 0})
            # adapt the batch to the acceptance rate: about two hits per proposal and round
            rate = hits / max(len(allu), 1)
            self.batch_size = int(np.clip(2.0 / max(rate, 1e-3), 4, 1024))
            pending = still
        return out


def _feasible_fraction(loglike: _LogLike, lo, hi, seed: int) -> tuple[float, int]:
    rng = np.random.default_rng([seed, 7])
    u = lo + (hi - lo) * rng.random((FEASIBLE_DRAWS, len(lo)))
    before = (loglike.evaluated, loglike.impossible)
    ok = np.isfinite(loglike.batch(u))
    loglike.evaluated, loglike.impossible = before
    return float(ok.mean()), FEASIBLE_DRAWS


def run_nested(
    pmap: ParameterMap,
    measurements: Measurements,
    *,
    bins,
    cap: int,
    nlive: int | None = None,
    dlogz: float = DEFAULT_DLOGZ,
    seed: int = 0,
    max_evaluations: int | None = None,
    max_time_s: float | None = None,
    progress: bool = False,
):
    """Sample the posterior and compute the evidence with dynesty; check its stopping rule.

    Parameters
    ----------
    pmap : ParameterMap
        Free parameters and the model.
    measurements : Measurements
        The data.
    bins : sequence of int
        Histogram bins per parameter of the marginal maps.
    cap : int
        How many 2-sigma combinations to list.
    nlive : int, optional
        Live points (default 400; >= 2 k + 2 for k parameters).
    dlogz : float
        Stopping rule: remaining ln-evidence below this (> 0).
    seed : int
        Seed of the sampler's random numbers.
    max_evaluations : int, optional
        Budget of likelihood evaluations (default 2 million).
    max_time_s : float, optional
        Budget of wall-clock seconds (default none).
    progress : bool
        Progress bar (tqdm, standard error) with the remaining ln-evidence.

    Returns
    -------
    PosteriorResult
        ``method = "nested"``; ``log_evidence`` and ``log_evidence_err`` (natural log, normalisation of the
        Gaussian likelihood included); ``diagnostics`` with ``converged`` (stopping rule reached),
        ``delta_logz``, ``dlogz``, ``nlive``, ``iterations``, ``likelihood_calls``, ``feasible_fraction``,
        ``stopped_by`` and, when not converged, ``failures`` (plain-language reasons).

    Raises
    ------
    ImportError
        dynesty missing (``pip install 'induct[nested]'``).
    ValueError
        Bad settings; no physically possible model in the prior box.

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.io.measurements import load_measurements
    >>> from induct.inversion.priors import ParameterMap, parse_parameters
    >>> s = load_scenario("ilmare"); d = load_measurements("ilmare_measured")
    >>> pm = ParameterMap(s.model, parse_parameters({"ice shell.thickness_km": {"range": [1, 60]}}, s.model))
    >>> r = run_nested(pm, d, bins=(30,), cap=0, nlive=50, seed=1)
    >>> r.converged, r.method
    (True, 'nested')
    """
    dynesty = _need_dynesty()
    params = pmap.parameters
    k = len(params)
    nlive = DEFAULT_NLIVE if nlive is None else nlive
    if isinstance(nlive, bool) or int(nlive) != nlive or nlive < 2 * k + 2:
        raise ValueError(f"nlive must be an integer >= 2 k + 2 = {2 * k + 2} for {k} parameters, got {nlive!r}")
    if not (dlogz > 0):
        raise ValueError(f"dlogz must be > 0, got {dlogz!r}")
    max_evaluations = DEFAULT_MAX_EVALUATIONS if max_evaluations is None else max_evaluations
    if int(max_evaluations) != max_evaluations or max_evaluations < 10 * nlive:
        raise ValueError(f"max_evaluations must be an integer >= 10 x nlive = {10 * nlive}, got {max_evaluations!r}")
    if max_time_s is not None and not (max_time_s > 0):
        raise ValueError(f"max_time_s must be > 0, got {max_time_s!r}")
    lo = np.array([p.prior_bounds[0] for p in params], dtype=float)
    hi = np.array([p.prior_bounds[1] for p in params], dtype=float)
    loglike = _LogLike(pmap, measurements)
    frac, ndraw = _feasible_fraction(loglike, lo, hi, seed)
    if frac == 0.0:
        raise ValueError("no physically possible model in the prior ranges: the layers leave the fill layer no room")

    pool = _BatchMap(loglike)
    sampler = dynesty.NestedSampler(
        loglike, _Box(lo, hi), k, nlive=int(nlive), bound="multi", sample="unif",
        rstate=np.random.default_rng(seed), pool=pool, queue_size=QUEUE_SIZE,
        use_pool={"prior_transform": False, "loglikelihood": True, "propose_point": True, "update_bound": False},
    )
    bar = None
    if progress:
        from tqdm.auto import tqdm

        bar = tqdm(desc="nested sampling", unit=" it", leave=False)
    start = time.monotonic()
    stopped_by = "dlogz"
    delta = math.inf
    calls = int(getattr(sampler, "ncall", 0))
    notes = []
    with warnings.catch_warnings(record=True) as caught:
        # dynesty's own warnings are summarised in the result ("stopped short": a convergence failure below)
        warnings.simplefilter("always")
        try:
            for res in sampler.sample(maxcall=int(max_evaluations), dlogz=dlogz, add_live=False):
                calls += int(res.nc)
                delta = float(res.delta_logz)
                if bar is not None:
                    bar.update(1)
                    bar.set_postfix_str(f"remaining ln Z {delta:.3g} (stop at {dlogz:g}), calls {calls:,d}")
                if max_time_s is not None and time.monotonic() - start > max_time_s:
                    stopped_by = "max_time_s"
                    break
        finally:
            if bar is not None:
                bar.close()
    for w in caught:
        text = str(w.message)
        if "stopped short" in text:
            continue
        if "enlargement factor" in text:
            note = ("dynesty's bootstrap found a large enlargement factor for its ellipsoidal bounds (a curved or "
                    "multi-modal posterior): the bounds were enlarged, so sampling was less efficient")
            if note not in notes:
                notes.append(note)
            continue
        warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    if stopped_by == "dlogz" and calls >= max_evaluations:
        stopped_by = "max_evaluations"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        for _ in sampler.add_live_points():
            pass
        r = sampler.results
    logwt = np.asarray(r["logwt"], dtype=float)
    log_z_box = float(np.asarray(r["logz"])[-1])
    log_z_err = float(np.asarray(r["logzerr"])[-1])
    w = np.exp(logwt - logwt.max())
    u = np.asarray(r["samples"], dtype=float)
    logl = np.asarray(r["logl"], dtype=float)
    ok = np.isfinite(logl) & (logl > -1e100)    # dynesty stores impossible initial points at a huge negative value
    chi2 = -2.0 * (logl[ok] - loglike.norm)
    info = float(np.sum(w[ok] * (logl[ok] - log_z_box)) / w.sum())  # information H (nats) of the posterior
    if not math.isfinite(log_z_err):
        # dynesty's estimate is undefined when the run holds impossible points: use its approximation sqrt(H / nlive)
        log_z_err = math.sqrt(max(info, 0.0) / nlive)
    # The prior is renormalised over the possible models: ln Z = ln Z_box - ln f (binomial error of f added).
    frac_err = math.sqrt(max(frac * (1 - frac), 1.0 / ndraw) / ndraw) / frac if frac < 1 else 0.0
    log_z = log_z_box - math.log(frac)
    log_z_err = math.hypot(log_z_err, frac_err)
    converged = stopped_by == "dlogz"
    failures = []
    if not converged:
        why = (f"the budget of {int(max_evaluations):,d} likelihood evaluations" if stopped_by == "max_evaluations"
               else f"the time budget of {max_time_s:g} s")
        failures.append(
            f"nested sampling stopped on {why} with an estimated remaining ln-evidence of {delta:.3g} "
            f"(stopping rule: below {dlogz:g}); raise --max-evaluations / --max-time-s"
        )
    diagnostics = {
        "sampler": f"dynesty static nested sampler (multi-ellipsoid bounds, uniform sampling), {int(nlive)} live points",
        "nlive": int(nlive),
        "dlogz": float(dlogz),
        "delta_logz": delta,
        "iterations": int(r["niter"]),
        "likelihood_calls": int(np.sum(r["ncall"])),
        "feasible_fraction": frac,
        "stopped_by": stopped_by,
        "converged": converged,
        "failures": failures,
        "information_nats": info,
        "notes": notes,
    }
    result = summarise_samples(
        method="nested", pmap=pmap, measurements=measurements, u=u, weights=w,
        evaluated_u=u[ok], evaluated_chi2=chi2, bins=tuple(bins), cap=cap,
        n_models=loglike.evaluated, n_impossible=loglike.impossible, diagnostics=diagnostics,
        log_evidence=log_z, log_evidence_err=log_z_err,
    )
    result.notes.extend(notes)
    return result
