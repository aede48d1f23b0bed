"""Summaries of posterior samples (ensemble MCMC, nested sampling) and the likelihood's normalisation.

Weighted samples in the prior coordinates (value or log10 value) are turned
into the same :class:`induct.inversion.posterior.PosteriorResult` the grid
gives: equal-tailed 68 % and 95 % ranges (weighted quantiles), histogram
marginals and 2-D maps, weighted correlations, and the evaluated models
within the 2-sigma chi-square window.

The Gaussian log-likelihood of data d with covariance C is
``-1/2 (d - m)^T C^-1 (d - m) - 1/2 log det(2 pi C)``; the second term
(:func:`log_likelihood_normalisation`) does not change a posterior but is part
of the evidence.

Examples
--------
>>> import numpy as np
>>> from induct.inversion.samples import weighted_quantile
>>> weighted_quantile(np.array([1.0, 2.0, 3.0, 4.0]), np.ones(4), [0.5])
array([2.5])
"""

from __future__ import annotations

import numpy as np

from induct.inversion.posterior import PosteriorResult, TwoSigmaSet, find_tradeoffs, two_sigma_delta_chi2

__all__ = ["weighted_quantile", "summarise_samples", "log_likelihood_normalisation"]


def log_likelihood_normalisation(measurements) -> float:
    """``-1/2 log det(2 pi C)`` of the data covariance C (the Gaussian likelihood's normalisation).

    Parameters
    ----------
    measurements : induct.io.measurements.Measurements
        Its ``covariance`` is either per entry, shape (M, 2, 2), or one full
        matrix, shape (2 M, 2 M). Units: those of the data squared (amplitude,
        degrees of phase, or real and imaginary parts).

    Returns
    -------
    float
        Dimensionless (natural log); a Cholesky factorisation gives the determinant.

    Examples
    --------
    >>> import numpy as np
    >>> from types import SimpleNamespace
    >>> m = SimpleNamespace(covariance=np.array([[[1.0, 0.0], [0.0, 1.0]]]))
    >>> bool(abs(log_likelihood_normalisation(m) + np.log(2 * np.pi)) < 1e-12)
    True
    """
    c = np.asarray(measurements.covariance, dtype=float)
    blocks = c if c.ndim == 3 else c[None]
    total = 0.0
    for block in blocks:
        chol = np.linalg.cholesky(2.0 * np.pi * block)
        total += 2.0 * np.sum(np.log(np.diag(chol)))
    return -0.5 * float(total)


def weighted_quantile(x: np.ndarray, w: np.ndarray, q) -> np.ndarray:
    """Quantiles of weighted samples (the weighted empirical CDF, interpolated at sample midpoints).

    Parameters
    ----------
    x : ndarray, shape (S,)
        Samples.
    w : ndarray, shape (S,)
        Non-negative weights (sum > 0).
    q : sequence of float
        Probabilities in [0, 1].

    Returns
    -------
    ndarray, shape (len(q),)
    """
    order = np.argsort(x, kind="stable")
    xs, ws = np.asarray(x, float)[order], np.asarray(w, float)[order]
    cdf = (np.cumsum(ws) - 0.5 * ws) / ws.sum()
    return np.interp(np.asarray(q, dtype=float), cdf, xs)


def summarise_samples(
    *,
    method: str,
    pmap,
    measurements,
    u: np.ndarray,
    weights: np.ndarray,
    evaluated_u: np.ndarray,
    evaluated_chi2: np.ndarray,
    bins,
    cap: int,
    n_models: int,
    n_impossible: int,
    diagnostics: dict,
    log_evidence: float | None = None,
    log_evidence_err: float | None = None,
) -> PosteriorResult:
    """Build a :class:`PosteriorResult` from weighted posterior samples.

    Parameters
    ----------
    method : str
        ``"mcmc"`` or ``"nested"``.
    pmap : induct.inversion.priors.ParameterMap
    measurements : induct.io.measurements.Measurements
    u : ndarray, shape (S, k)
        Posterior samples in prior coordinates.
    weights : ndarray, shape (S,)
        Their weights (equal for MCMC).
    evaluated_u : ndarray, shape (E, k)
        Every physically possible evaluated model (prior coordinates), for the best fit and the 2-sigma list.
    evaluated_chi2 : ndarray, shape (E,)
        Their chi-square values.
    bins : sequence of int
        Histogram bins per parameter for the marginals and maps.
    cap : int
        How many 2-sigma combinations to list.
    n_models, n_impossible : int
        Possible and impossible models evaluated.
    diagnostics : dict
        Sampler diagnostics, copied into the result.
    log_evidence, log_evidence_err : float, optional
        Natural-log evidence and its 1-sigma error, where the method computes it.

    Returns
    -------
    PosteriorResult
    """
    params = pmap.parameters
    k = len(params)
    w = np.asarray(weights, dtype=float)
    w = w / w.sum()
    ranges = {}
    for i, p in enumerate(params):
        q = p.from_prior(weighted_quantile(u[:, i], w, [0.16, 0.84, 0.025, 0.975]))
        ranges[p.name] = {"68": (float(q[0]), float(q[1])), "95": (float(q[2]), float(q[3]))}
    ibest = int(np.argmin(evaluated_chi2))
    best = {p.name: float(p.from_prior(evaluated_u[ibest, i])) for i, p in enumerate(params)}
    chi2_min = float(evaluated_chi2[ibest])
    edges = [p.edges(n) for p, n in zip(params, bins)]
    marginals = [np.histogram(u[:, i], bins=e, weights=w)[0] for i, e in enumerate(edges)]
    mean = w @ u
    cov = (u - mean).T @ ((u - mean) * w[:, None])
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    corr = np.where(np.isfinite(corr), corr, 0.0)
    np.fill_diagonal(corr, 1.0)
    maps = {}
    for i in range(k):
        for j in range(i + 1, k):
            maps[(i, j)] = np.histogram2d(u[:, i], u[:, j], bins=[edges[i], edges[j]], weights=w)[0]
    delta = two_sigma_delta_chi2(k)
    inside = np.flatnonzero(evaluated_chi2 <= chi2_min + delta)
    _, first = np.unique(evaluated_u[inside], axis=0, return_index=True)
    inside = inside[first]
    inside = inside[np.argsort(evaluated_chi2[inside], kind="stable")]
    rows = []
    for n in inside[:cap]:
        row = {p.name: float(p.from_prior(evaluated_u[n, i])) for i, p in enumerate(params)}
        row["chi2"] = float(evaluated_chi2[n])
        rows.append(row)
    result = PosteriorResult(
        method=method,
        parameters=list(params),
        best=best,
        chi2_min=chi2_min,
        n_data=measurements.n_data,
        n_models=int(n_models),
        n_impossible=int(n_impossible),
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
    result.log_evidence = log_evidence
    result.log_evidence_err = log_evidence_err
    result.samples = np.asarray(u, dtype=float)
    result.sample_weights = w
    return result
