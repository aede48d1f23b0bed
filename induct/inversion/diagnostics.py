"""Convergence diagnostics of Markov chains: rank-normalised split R-hat, bulk and tail effective sample size.

Implements the diagnostics of Vehtari, Gelman, Simpson, Carpenter & Buerkner
(2021, Bayesian Analysis 16, 667), written from the paper:

* every chain is split into its first and second half (so that a drifting
  chain looks like two chains that disagree);
* the draws of all split chains are replaced by their normal scores,
  ``Phi^-1((r - 3/8) / (S + 1/4))`` with ``r`` the pooled (average) rank and
  ``S`` the number of draws (Blom's offset);
* R-hat is the larger of the classic potential-scale-reduction factor
  (Gelman & Rubin 1992, Statistical Science 7, 457) of the normal scores and of
  the normal scores of the folded draws ``|x - median(x)|``;
* bulk ESS is the effective sample size of the normal scores; tail ESS is the
  smaller of the effective sample sizes of the indicators ``x <= q_0.05`` and
  ``x <= q_0.95``;
* the effective sample size uses the multi-chain autocorrelation estimate
  (the paper's eq. 10) truncated by Geyer's (1992, Statistical Science 7, 473)
  initial monotone sequence of sums of adjacent pairs.

The paper's thresholds: R-hat <= 1.01 and bulk and tail ESS >= 400
(:data:`RHAT_MAX`, :data:`ESS_MIN`). ``tests/inversion/test_sampler_diagnostics.py``
checks these functions against arviz.

Examples
--------
>>> import numpy as np
>>> from induct.inversion.diagnostics import rank_rhat, ess_bulk
>>> draws = np.random.default_rng(1).normal(size=(4, 1000))   # 4 independent chains
>>> bool(rank_rhat(draws) < 1.01), bool(ess_bulk(draws) > 3000)
(True, True)
"""

from __future__ import annotations

import numpy as np
from scipy import special, stats

__all__ = ["split_chains", "normal_scores", "basic_rhat", "rank_rhat", "ess", "ess_bulk", "ess_tail",
           "chain_diagnostics", "RHAT_MAX", "ESS_MIN"]

#: Largest acceptable rank-normalised split R-hat (Vehtari et al. 2021).
RHAT_MAX = 1.01
#: Smallest acceptable bulk and tail effective sample size (Vehtari et al. 2021).
ESS_MIN = 400


def _as_chains(draws) -> np.ndarray:
    x = np.asarray(draws, dtype=float)
    if x.ndim != 2 or x.shape[1] < 4:
        raise ValueError(f"draws must have shape (chains, draws) with at least 4 draws per chain, got {x.shape}")
    return x


def split_chains(draws) -> np.ndarray:
    """Split each chain into its two halves (the middle draw of an odd chain is dropped).

    Parameters
    ----------
    draws : array_like, shape (C, N)

    Returns
    -------
    ndarray, shape (2 C, N // 2)

    Examples
    --------
    >>> split_chains([[1, 2, 3, 4, 5]]).tolist()
    [[1.0, 2.0], [4.0, 5.0]]
    """
    x = np.asarray(draws, dtype=float)
    half = x.shape[1] // 2
    return np.concatenate([x[:, :half], x[:, x.shape[1] - half:]], axis=0)


def normal_scores(draws) -> np.ndarray:
    """Rank-normalise: ``Phi^-1((r - 3/8) / (S + 1/4))`` with pooled average ranks r; same shape as ``draws``.

    Examples
    --------
    >>> normal_scores([[0.0, 10.0, 5.0]]).round(3).tolist()
    [[-0.869, 0.869, 0.0]]
    """
    x = np.asarray(draws, dtype=float)
    r = stats.rankdata(x, axis=None).reshape(x.shape)
    return special.ndtri((r - 0.375) / (x.size + 0.25))


def basic_rhat(chains) -> float:
    """Potential scale reduction factor of chains (Gelman & Rubin 1992), shape (C, N) with C >= 2.

    Examples
    --------
    >>> round(basic_rhat([[0.0, 1.0, 0.0, 1.0], [5.0, 6.0, 5.0, 6.0]]), 2)
    6.18
    """
    x = np.asarray(chains, dtype=float)
    n = x.shape[1]
    within = np.mean(np.var(x, axis=1, ddof=1))
    between = n * np.var(np.mean(x, axis=1), ddof=1)
    if within == 0:
        return 1.0 if between == 0 else float("inf")
    return float(np.sqrt((between / within + n - 1) / n))


def rank_rhat(draws) -> float:
    """Rank-normalised split R-hat: max of bulk (normal scores) and tail (folded) R-hat.

    Parameters
    ----------
    draws : array_like, shape (C, N), N >= 4

    Returns
    -------
    float
        Dimensionless; <= 1.01 is the convergence threshold.

    Examples
    --------
    >>> x = np.random.default_rng(2).normal(size=(4, 500))
    >>> bool(rank_rhat(x) < 1.01), bool(rank_rhat(x + np.arange(4)[:, None]) > 1.5)
    (True, True)
    """
    x = _as_chains(draws)
    bulk = basic_rhat(normal_scores(split_chains(x)))
    folded = np.abs(x - np.median(x))
    tail = basic_rhat(normal_scores(split_chains(folded)))
    return max(bulk, tail)


def _autocovariance(x: np.ndarray) -> np.ndarray:
    """Biased autocovariance of each row (divided by N), by FFT; shape (C, N)."""
    n = x.shape[1]
    y = x - x.mean(axis=1, keepdims=True)
    size = 1 << int(np.ceil(np.log2(2 * n)))
    f = np.fft.rfft(y, size, axis=1)
    return np.fft.irfft(f * np.conj(f), size, axis=1)[:, :n] / n


def ess(chains) -> float:
    """Effective sample size of chains (no splitting or normalisation here), Vehtari et al. (2021) eq. 10-11.

    Parameters
    ----------
    chains : array_like, shape (C, N)

    Returns
    -------
    float
        Effective number of independent draws among the C N draws.

    Examples
    --------
    >>> x = np.random.default_rng(0).normal(size=(4, 2000))
    >>> bool(6000 < ess(x) < 10000)
    True
    """
    x = np.asarray(chains, dtype=float)
    m, n = x.shape
    acov = _autocovariance(x)
    mean_var = np.mean(acov[:, 0]) * n / (n - 1.0)       # mean within-chain variance W
    var_plus = mean_var * (n - 1.0) / n                  # var+ of eq. 3
    if m > 1:
        var_plus += np.var(np.mean(x, axis=1), ddof=1)
    if var_plus <= 0:
        return float(m * n)
    rho = 1.0 - (mean_var - np.mean(acov, axis=0)) / var_plus   # eq. 10, every lag
    rho[0] = 1.0
    # Geyer's initial positive sequence: keep adjacent pairs (rho_2j, rho_2j+1) while their sum is positive,
    # up to lag n - 3 (as in Stan and arviz).
    t = 1
    even = odd = 1.0
    keep = [rho[0], rho[1]]
    while t < n - 3 and even + odd > 0.0:
        even, odd = rho[t + 1], rho[t + 2]
        if even + odd >= 0.0:
            keep.extend([even, odd])
        t += 2
    last = t - 2                       # highest lag of the sum proper
    r = np.array(keep[: last + 1], dtype=float)
    # Geyer's initial monotone sequence: pair sums may not increase.
    for j in range(2, last, 2):
        if r[j] + r[j + 1] > r[j - 2] + r[j - 1]:
            r[j] = r[j + 1] = 0.5 * (r[j - 2] + r[j - 1])
    # The positive even-lag term just beyond the sum counts once (Stan's refinement).
    tail = even if even > 0 else 0.0
    tau = -1.0 + 2.0 * r.sum() + tail
    tau = max(tau, 1.0 / np.log10(m * n))
    return float(m * n / tau)


def ess_bulk(draws) -> float:
    """Bulk effective sample size: ESS of the normal scores of the split chains; ``draws`` shape (C, N).

    Examples
    --------
    >>> x = np.random.default_rng(2).normal(size=(4, 500))
    >>> bool(1000 < ess_bulk(x) < 3000)
    True
    """
    return ess(normal_scores(split_chains(_as_chains(draws))))


def ess_tail(draws) -> float:
    """Tail effective sample size: the smaller ESS of the indicators of the 5 % and 95 % quantiles.

    ``draws`` has shape (C, N); returns the number of effective draws for the tails.

    Examples
    --------
    >>> x = np.random.default_rng(2).normal(size=(4, 500))
    >>> bool(1000 < ess_tail(x) < 3000)
    True
    """
    x = _as_chains(draws)
    out = []
    for q in (0.05, 0.95):
        ind = (x <= np.quantile(x, q)).astype(float)
        out.append(ess(split_chains(ind)))
    return float(min(out))


def chain_diagnostics(chain: np.ndarray, names) -> dict:
    """R-hat, bulk and tail ESS of every parameter of an ensemble or multi-chain run.

    Parameters
    ----------
    chain : ndarray, shape (N, C, k)
        N draws of C chains (or ensemble walkers) of k parameters (emcee's layout).
    names : sequence of str
        The k parameter names.

    Returns
    -------
    dict
        ``name -> {"rhat", "ess_bulk", "ess_tail"}``.

    Examples
    --------
    >>> chain = np.random.default_rng(0).normal(size=(400, 8, 2))     # 400 steps, 8 walkers, 2 parameters
    >>> d = chain_diagnostics(chain, ["a", "b"])
    >>> bool(d["a"]["rhat"] < 1.01 and d["b"]["ess_bulk"] > 2000)
    True
    """
    out = {}
    for i, name in enumerate(names):
        x = np.asarray(chain[:, :, i], dtype=float).T
        out[name] = {"rhat": rank_rhat(x), "ess_bulk": ess_bulk(x), "ess_tail": ess_tail(x)}
    return out
