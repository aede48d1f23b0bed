"""The result of an inversion: ranges, best fit, 2-D marginals, trade-offs, 2-sigma combinations.

Conventions used throughout (and printed with every summary):

* Ranges are *equal-tailed* posterior credible intervals: the 68 % range runs
  from the 16th to the 84th percentile of the marginal posterior, the 95 % range
  from the 2.5th to the 97.5th. Equal-tailed intervals do not depend on whether
  a parameter is treated on a linear or a log scale (highest-density intervals
  would). On a grid, the marginal's cumulative distribution is interpolated
  linearly in the prior coordinate across each cell (piecewise-constant density).
* The best fit is the evaluated model with the smallest chi-square.
* "Fits within 2 sigma": chi2 - chi2_min <= the 95.45 % quantile of the
  chi-square distribution with as many degrees of freedom as free parameters
  (the joint 2-sigma confidence region; Press et al. 2007, Numerical Recipes,
  3rd ed., sec. 15.6; Avni 1976, Astrophys. J. 210, 642).
* Trade-offs: a pair of parameters whose 2-D marginal has a correlation
  |r| > 0.7 (in prior coordinates), and single parameters whose 95 % range spans
  more than 70 % of the prior range, are reported as not separated by the data.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np
from scipy import special

from induct.constants import MODEL_LIMITS
from induct.inversion.priors import Parameter

__all__ = [
    "PosteriorResult",
    "TwoSigmaSet",
    "two_sigma_delta_chi2",
    "histogram_interval",
    "map_correlation",
    "find_tradeoffs",
    "resolution_notes",
    "INTERVAL_KIND",
    "CORRELATION_THRESHOLD",
    "SPAN_THRESHOLD",
]

#: Probability inside +-2 sigma of a Gaussian, erf(2 / sqrt(2)).
TWO_SIGMA_PROBABILITY = math.erf(2.0 / math.sqrt(2.0))
INTERVAL_KIND = "equal-tailed"
CORRELATION_THRESHOLD = 0.7
SPAN_THRESHOLD = 0.7


def two_sigma_delta_chi2(n_free: int) -> float:
    """Delta chi-square of the joint 2-sigma region: the 95.45 % quantile of chi2 with ``n_free`` degrees of freedom."""
    # chi2 quantile via the regularised incomplete gamma function: P(k/2, x/2) = q.
    return float(2.0 * special.gammaincinv(0.5 * int(n_free), TWO_SIGMA_PROBABILITY))


@dataclass
class TwoSigmaSet:
    """Parameter combinations with chi2 - chi2_min <= ``delta_chi2``.

    Attributes
    ----------
    delta_chi2 : float
        The threshold (see :func:`two_sigma_delta_chi2`).
    count : int
        How many evaluated combinations lie within it.
    rows : list of dict
        The best of them (lowest chi2 first), ``name -> value`` plus ``"chi2"``; at most the cap.
    """

    delta_chi2: float
    count: int
    rows: list

    @property
    def dropped(self) -> int:
        """Combinations within 2 sigma that are not listed in ``rows``."""
        return self.count - len(self.rows)


@dataclass
class PosteriorResult:
    """Everything an inversion reports.

    Attributes
    ----------
    method : str
        ``"grid"`` or ``"mcmc"``.
    parameters : list of Parameter
        The free parameters, in order (index i below).
    best : dict
        Best-fit value of each parameter (field units).
    chi2_min : float
        Chi-square of the best fit.
    n_data : int
        Number of data (two per measured entry).
    n_models : int
        Physically possible models evaluated.
    n_impossible : int
        Grid cells or proposals that were physically impossible (zero prior).
    ranges : dict
        ``name -> {"68": (lo, hi), "95": (lo, hi)}`` (field units, equal-tailed).
    edges : list of ndarray, each shape (N_i + 1,)
        Bin edges of each parameter in its prior coordinate (value or log10 value).
    marginals : list of ndarray, each shape (N_i,)
        Posterior mass per bin (sums to 1).
    maps : dict
        ``(i, j) -> ndarray (N_i, N_j)`` 2-D marginal posterior mass (i < j; sums to 1).
    correlation : ndarray, shape (k, k)
        Posterior correlation in prior coordinates.
    two_sigma : TwoSigmaSet
    tradeoffs : list of str
        Plain-language statements of what the data do not separate.
    diagnostics : dict
        Sampler diagnostics (MCMC: autocorrelation times, acceptance fraction).
    notes : list of str
        Further cautions (for example a grid too coarse for a narrow posterior).
    grid_points : tuple of int
        Points per axis (grid) or histogram bins per axis (MCMC).
    interval : str
    fit : dict
        ``chi2_min``, ``dof``, ``p_value``, ``min_p_value``, ``acceptable``
        (:func:`induct.inversion.fitquality.fit_quality`).
    resolution : dict
        The grid's resolution check (:func:`induct.inversion.grid.run_adaptive_grid`).
    log_evidence, log_evidence_err : float or None
        ln Z and its 1-sigma error where computed (grid, nested sampling).
    """

    method: str
    parameters: list
    best: dict
    chi2_min: float
    n_data: int
    n_models: int
    n_impossible: int
    ranges: dict
    edges: list
    marginals: list
    maps: dict
    correlation: np.ndarray
    two_sigma: TwoSigmaSet
    tradeoffs: list = field(default_factory=list)
    diagnostics: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)
    grid_points: tuple = ()
    interval: str = INTERVAL_KIND
    fit: dict = field(default_factory=dict)
    resolution: dict = field(default_factory=dict)
    #: Natural log of the evidence (marginal likelihood, normalisation of the Gaussian likelihood included)
    #: and its 1-sigma error, where the method computes it (grid, nested sampling); None otherwise.
    log_evidence: float | None = None
    log_evidence_err: float | None = None
    #: Sampler results only: posterior samples in prior coordinates, shape (S, k), and their weights, shape (S,).
    samples: np.ndarray | None = field(default=None, repr=False)
    sample_weights: np.ndarray | None = field(default=None, repr=False)

    @property
    def converged(self) -> bool:
        """Grid: the resolution check passed (True when no check was made); samplers: the convergence checks passed.

        A sampler result that did not converge has no ranges that count as results (``induct invert`` exits 4);
        an unresolved grid says so in its notes.
        """
        if self.method == "grid":
            return bool(self.resolution.get("converged", True))
        return bool(self.diagnostics.get("converged", True))

    def to_dict(self) -> dict:
        """JSON-ready summary: ``{"ranges": {name: {"best", "68", "95", ...}}, "chi2_min", "n_models", ...}``."""
        ranges = {}
        best = self.fit.get("best", self.best)
        for p in self.parameters:
            r = self.ranges[p.name]
            ranges[p.name] = {
                "best": float(best[p.name]),
                "best_evaluated": float(self.best[p.name]),
                "68": [float(v) for v in r["68"]],
                "95": [float(v) for v in r["95"]],
                "unit": p.unit,
                "prior": [p.lo, p.hi],
                "scale": p.scale,
            }
        names = [p.name for p in self.parameters]
        return {
            "ranges": ranges,
            "chi2_min": float(self.fit.get("chi2_min", self.chi2_min)),
            "chi2_min_evaluated": float(self.chi2_min),
            "n_models": int(self.n_models),
            "n_impossible": int(self.n_impossible),
            "n_data": int(self.n_data),
            "method": self.method,
            "grid_points": list(self.grid_points),
            "interval": f"{self.interval} posterior credible intervals (68: 16-84 %, 95: 2.5-97.5 % quantiles)",
            "correlation": {
                f"{names[i]} / {names[j]}": float(self.correlation[i, j])
                for i in range(len(names))
                for j in range(i + 1, len(names))
            },
            "tradeoffs": list(self.tradeoffs),
            "notes": list(self.notes),
            "two_sigma": {
                "definition": (
                    f"chi2 - chi2_min <= {self.two_sigma.delta_chi2:.4g} (95.45 % quantile of chi2 with "
                    f"{len(names)} degrees of freedom)"
                ),
                "count": int(self.two_sigma.count),
                "listed": [{k: float(v) for k, v in row.items()} for row in self.two_sigma.rows],
                "dropped": int(self.two_sigma.dropped),
            },
            "diagnostics": _jsonable(self.diagnostics),
            "dof": self.fit.get("dof"),
            "p_value": self.fit.get("p_value"),
            "fit_acceptable": self.fit.get("acceptable"),
            "min_p_value": self.fit.get("min_p_value"),
            "converged": self.converged,
            "resolution_check": _jsonable(self.resolution) if self.resolution else None,
            **({} if self.log_evidence is None else {
                "log_evidence": float(self.log_evidence),
                "log_evidence_err": None if self.log_evidence_err is None else float(self.log_evidence_err),
            }),
            "not_modelled": MODEL_LIMITS,
        }


def _jsonable(obj):
    if isinstance(obj, dict):
        return {k: _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple, np.ndarray)):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, (np.floating, float)):
        return float(obj)
    if isinstance(obj, (np.integer, int)) and not isinstance(obj, bool):
        return int(obj)
    return obj


def histogram_interval(mass: np.ndarray, edges: np.ndarray, level: float) -> tuple[float, float]:
    """Equal-tailed interval of a binned distribution, in the coordinate of ``edges``.

    Parameters
    ----------
    mass : ndarray, shape (N,)
        Non-negative mass per bin (need not be normalised; sum > 0).
    edges : ndarray, shape (N + 1,)
        Increasing bin edges.
    level : float
        Probability content, 0 < level < 1 (e.g. 0.68).

    Returns
    -------
    (lo, hi) : float
        The (1 - level)/2 and (1 + level)/2 quantiles; the cumulative
        distribution is linear across each bin (uniform density inside a bin).
    """
    cdf = np.concatenate([[0.0], np.cumsum(mass)])
    cdf /= cdf[-1]
    out = []
    for q in ((1.0 - level) / 2.0, (1.0 + level) / 2.0):
        i = int(np.clip(np.searchsorted(cdf, q, side="left"), 1, len(mass)))
        width = cdf[i] - cdf[i - 1]
        frac = (q - cdf[i - 1]) / width if width > 0 else 0.0
        out.append(float(edges[i - 1] + frac * (edges[i] - edges[i - 1])))
    return out[0], out[1]


def map_correlation(mass2d: np.ndarray, edges_i: np.ndarray, edges_j: np.ndarray) -> float:
    """Correlation coefficient of a 2-D binned distribution (bin midpoints; prior coordinates)."""
    ui = 0.5 * (edges_i[:-1] + edges_i[1:])
    uj = 0.5 * (edges_j[:-1] + edges_j[1:])
    m = mass2d / mass2d.sum()
    pi, pj = m.sum(axis=1), m.sum(axis=0)
    mi, mj = pi @ ui, pj @ uj
    vi = pi @ (ui - mi) ** 2
    vj = pj @ (uj - mj) ** 2
    cov = (ui - mi) @ m @ (uj - mj)
    if vi <= 0 or vj <= 0:
        return 0.0
    return float(cov / math.sqrt(vi * vj))


def find_tradeoffs(
    parameters: Sequence[Parameter], ranges: dict, correlation: np.ndarray, best: dict, points: Sequence[int]
) -> list[str]:
    """Plain-language statements of degeneracies (see the module docstring for the criteria).

    Parameters
    ----------
    parameters : sequence of Parameter
    ranges : dict
        ``name -> {"95": (lo, hi), ...}`` in field units.
    correlation : ndarray, shape (k, k)
        Posterior correlation in prior coordinates.
    best : dict
        Best-fit values.
    points : sequence of int
        Grid points (or histogram bins) per parameter: a best fit within one
        bin of a prior bound is reported as lying at the edge.

    Returns
    -------
    list of str
    """
    notes = []
    k = len(parameters)
    for i in range(k):
        for j in range(i + 1, k):
            r = correlation[i, j]
            if abs(r) > CORRELATION_THRESHOLD:
                how = "one rises as the other falls" if r < 0 else "they rise and fall together"
                notes.append(
                    f"{parameters[i].name} and {parameters[j].name} trade off: posterior correlation r = {r:+.2f} "
                    f"({how}); the data constrain a combination of the two, not each one (see their 2-D map)"
                )
    for p, n in zip(parameters, points):
        a, b = p.prior_bounds
        lo, hi = (float(v) for v in p.to_prior(ranges[p.name]["95"]))
        span = (hi - lo) / (b - a)
        if span > SPAN_THRESHOLD:
            notes.append(
                f"{p.name} is poorly constrained: its 95 % range spans {100 * span:.0f} % of the prior range "
                f"[{p.lo:g}, {p.hi:g}] {p.unit}"
            )
        u = float(p.to_prior(best[p.name]))
        cell = (b - a) / n
        if u - a < cell or b - u < cell:
            edge = "lower" if u - a < cell else "upper"
            notes.append(f"the best fit of {p.name} lies at the {edge} end of its prior range: widen the range to see more")
    return notes


#: Fewer grid cells than this inside a 95 % range: the grid is too coarse for that parameter.
MIN_CELLS_IN_RANGE = 5


def resolution_notes(parameters: Sequence[Parameter], ranges: dict, points: Sequence[int]) -> list[str]:
    """Cautions for parameters whose 95 % range covers fewer than 5 grid cells (the grid is too coarse).

    Parameters
    ----------
    parameters : sequence of Parameter
    ranges : dict
        ``name -> {"95": (lo, hi), ...}`` in field units.
    points : sequence of int
        Grid points per parameter.

    Returns
    -------
    list of str
    """
    notes = []
    for p, n in zip(parameters, points):
        a, b = p.prior_bounds
        lo, hi = (float(v) for v in p.to_prior(ranges[p.name]["95"]))
        cells = (hi - lo) / (b - a) * n
        if cells < MIN_CELLS_IN_RANGE:
            notes.append(
                f"the grid is coarse for {p.name}: its 95 % range covers only {cells:.1f} grid cells; "
                "rerun with more points per axis (--grid) or a narrower prior range for accurate ranges"
            )
    return notes
