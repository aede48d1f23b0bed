"""Bayesian evidence and model comparison: grid and nested-sampling evidence, Bayes factors.

The evidence of a hypothesis H (a model family with proper priors) given data d is
``Z = integral L(d | theta) pi(theta | H) dtheta`` with the Gaussian likelihood
``L = exp(-chi2 / 2 - 1/2 log det(2 pi C))``. Two estimates:

* grid: the prior-weighted sum of the likelihood over a grid of equal-prior-mass
  cells (uniform in each parameter's prior coordinate), the prior renormalised
  over the physically possible cells; exact up to resolution. Its error is
  stated as the change of ln Z when the number of points per axis is halved
  (a conservative estimate for the midpoint rule, whose error falls as the
  square of the cell size for a smooth integrand);
* nested sampling (Skilling 2004, AIP Conf. Proc. 735, 395; Skilling 2006,
  Bayesian Analysis 1, 833) with dynesty (Speagle 2020, MNRAS 493, 3132):
  ln Z and its statistical error, see :mod:`induct.inversion.nested`.

Bayes factor of H1 over H2: ``K = Z1 / Z2``; reported as ``2 ln K`` with the
scale of Kass & Raftery (1995, JASA 90, 773): 0-2 not worth more than a bare
mention, 2-6 positive, 6-10 strong, above 10 very strong. The evidence depends
on the priors, which are stated with every result.

Examples
--------
>>> from induct.inversion.evidence import kass_raftery
>>> kass_raftery(7.3)
'strong'
>>> kass_raftery(-1.0)
'not worth more than a bare mention'
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from induct.constants import MODEL_LIMITS
from induct.inversion.samples import log_likelihood_normalisation

__all__ = [
    "kass_raftery",
    "grid_log_evidence_from_sums",
    "grid_evidence",
    "Hypothesis",
    "HypothesisEvidence",
    "ComparisonResult",
    "compare_hypotheses",
    "DEFAULT_EVIDENCE_POINTS",
    "MAX_GRID_EVIDENCE_PARAMETERS",
]

#: Grid points per axis of a grid evidence (and half as many for its error estimate).
DEFAULT_EVIDENCE_POINTS = 60
#: Above this many free parameters, ``compare`` uses nested sampling.
MAX_GRID_EVIDENCE_PARAMETERS = 3

_SCALE = ((2.0, "not worth more than a bare mention"), (6.0, "positive"), (10.0, "strong"), (math.inf, "very strong"))


def kass_raftery(two_ln_k: float) -> str:
    """Kass & Raftery (1995, JASA 90, 773) words for the size of ``|2 ln K|``.

    Parameters
    ----------
    two_ln_k : float
        Twice the natural log of a Bayes factor (either sign; the sign says which hypothesis is favoured).

    Returns
    -------
    str
        ``"not worth more than a bare mention"`` (0-2), ``"positive"`` (2-6),
        ``"strong"`` (6-10) or ``"very strong"`` (> 10).

    Examples
    --------
    >>> kass_raftery(12.0)
    'very strong'
    """
    x = abs(float(two_ln_k))
    for limit, word in _SCALE:
        if x <= limit:
            return word
    return _SCALE[-1][1]


def grid_log_evidence_from_sums(ref_chi2: float, weight_sum: float, n_valid: int, measurements) -> float:
    """ln Z of a grid of equal-prior-mass cells from its running sums.

    Parameters
    ----------
    ref_chi2 : float
        The reference chi-square (the grid minimum).
    weight_sum : float
        ``sum exp(-(chi2 - ref_chi2) / 2)`` over the physically possible cells.
    n_valid : int
        Number of physically possible cells (the prior is renormalised over them).
    measurements : induct.io.measurements.Measurements
        For the likelihood's normalisation ``-1/2 log det(2 pi C)``.

    Returns
    -------
    float
        Natural log of the evidence.

    Examples
    --------
    >>> import numpy as np
    >>> from types import SimpleNamespace
    >>> m = SimpleNamespace(covariance=np.array([[[1.0, 0.0], [0.0, 1.0]]]))
    >>> round(grid_log_evidence_from_sums(0.0, 1.0, 1, m), 4)   # one cell, chi2 = 0: -log(2 pi)
    -1.8379
    """
    return float(-0.5 * ref_chi2 + math.log(weight_sum) - math.log(n_valid) + log_likelihood_normalisation(measurements))


class _EvidenceTask:
    """``task(start, stop) -> (ref_chi2, weight_sum, n_valid)`` over a grid setup (picklable)."""

    def __init__(self, setup):
        self.setup = setup

    @property
    def size(self) -> int:
        return self.setup.total

    def __call__(self, start: int, stop: int):
        chi2 = self.setup.measurements.chi2(self.setup.responses(start, stop))
        ok = np.isfinite(chi2)
        if not ok.any():
            return (math.inf, 0.0, 0)
        c = chi2[ok]
        ref = float(c.min())
        return (ref, float(np.exp(-0.5 * (c - ref)).sum()), int(ok.sum()))


def _combine(a, b):
    if b[0] < a[0]:
        a, b = b, a
    if not math.isfinite(b[0]):
        return (a[0], a[1], a[2] + b[2])
    return (a[0], a[1] + b[1] * math.exp(-0.5 * (b[0] - a[0])), a[2] + b[2])


def _grid_log_z(pmap, measurements, points, *, backend=None, progress=False) -> tuple[float, float]:
    from induct.inversion.grid import make_grid_setup
    from induct.parallel.execution import run_reduction

    setup = make_grid_setup(pmap, measurements, points, 0)
    ref, total, n_valid = run_reduction(
        _EvidenceTask(setup), setup.total, chunk_size=65_536, combine=_combine, backend=backend,
        desc="evidence grid", progress=progress,
    )
    if n_valid == 0:
        raise ValueError("every grid cell is physically impossible (the layers leave the fill layer no room)")
    return grid_log_evidence_from_sums(ref, total, n_valid, measurements), ref


def grid_evidence(pmap, measurements, points: int = DEFAULT_EVIDENCE_POINTS, *, backend=None,
                  progress: bool = False) -> tuple[float, float, float]:
    """ln Z on a grid, its resolution error and the smallest chi-square.

    Parameters
    ----------
    pmap : induct.inversion.priors.ParameterMap
        The hypothesis: model and free parameters with their priors.
    measurements : induct.io.measurements.Measurements
    points : int
        Grid points per axis (>= 4, even); the error is ``|ln Z(points) - ln Z(points / 2)|``.
    backend : induct.parallel.execution.Backend, optional
    progress : bool
        Progress bar on standard error.

    Returns
    -------
    (log_z, log_z_err, chi2_min) : float

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.io.measurements import load_measurements
    >>> from induct.inversion.priors import ParameterMap, parse_parameters
    >>> s = load_scenario("ilmare"); d = load_measurements("ilmare_measured")
    >>> pm = ParameterMap(s.model, parse_parameters({"ice shell.thickness_km": {"range": [1, 60]}}, s.model))
    >>> log_z, err, chi2 = grid_evidence(pm, d, 40)
    >>> bool(err < 0.01)
    True
    """
    if isinstance(points, bool) or int(points) != points or points < 4 or points % 2:
        raise ValueError(f"evidence grid points must be an even integer >= 4, got {points!r}")
    fine, chi2_min = _grid_log_z(pmap, measurements, int(points), backend=backend, progress=progress)
    coarse, _ = _grid_log_z(pmap, measurements, int(points) // 2, backend=backend, progress=False)
    return fine, abs(fine - coarse), chi2_min


@dataclass(frozen=True)
class Hypothesis:
    """One hypothesis of a model comparison: a name, a model and its free parameters with priors.

    Attributes
    ----------
    name : str
        Shown in tables (e.g. the scenario name).
    model : induct.model.interior.InteriorModel
    parameters : sequence of induct.inversion.priors.Parameter
        Checked free parameters (proper priors: bounded uniform or log-uniform).
    """

    name: str
    model: object
    parameters: tuple


@dataclass
class HypothesisEvidence:
    """Evidence of one hypothesis.

    Attributes
    ----------
    name : str
    log_evidence, log_evidence_err : float
        ln Z and its 1-sigma error.
    method : str
        ``"grid"`` or ``"nested"``.
    n_free : int
        Free parameters.
    chi2_min : float
        The best fit's chi-square.
    priors : list of str
        The priors, stated.
    converged : bool
        False when the nested sampler stopped on its budget before its stopping rule.
    details : dict
        Method details (grid points; sampler calls, dlogz).
    """

    name: str
    log_evidence: float
    log_evidence_err: float
    method: str
    n_free: int
    chi2_min: float
    priors: list
    converged: bool = True
    details: dict = field(default_factory=dict)
    n_data: int = 0

    @property
    def p_value(self) -> float:
        """Goodness of fit of the best model: ``P(chi2 >= chi2_min)`` with ``n_data - n_free`` degrees of freedom (NaN if <= 0)."""
        from scipy import stats

        dof = self.n_data - self.n_free
        return float(stats.chi2.sf(self.chi2_min, dof)) if dof > 0 else float("nan")


@dataclass
class ComparisonResult:
    """Evidence of each hypothesis and the Bayes factors against the best one.

    Attributes
    ----------
    hypotheses : list of HypothesisEvidence
        In the order given.
    n_data : int
    """

    hypotheses: list
    n_data: int

    @property
    def best(self) -> HypothesisEvidence:
        """The hypothesis with the largest evidence."""
        return max(self.hypotheses, key=lambda h: h.log_evidence)

    def bayes_factors(self) -> list[dict]:
        """``2 ln K`` of the best hypothesis over each other one, with its error and the Kass & Raftery word."""
        b = self.best
        out = []
        for h in self.hypotheses:
            if h is b:
                continue
            two = 2.0 * (b.log_evidence - h.log_evidence)
            err = 2.0 * math.hypot(b.log_evidence_err, h.log_evidence_err)
            out.append({"favoured": b.name, "over": h.name, "two_ln_K": two, "two_ln_K_err": err,
                        "evidence": kass_raftery(two)})
        return out

    def to_dict(self) -> dict:
        """JSON-ready: ``{"hypotheses": [{"scenario", "log_evidence", "log_evidence_err", ...}], "bayes_factors": [...]}``."""
        return {
            "hypotheses": [
                {"scenario": h.name, "log_evidence": h.log_evidence, "log_evidence_err": h.log_evidence_err,
                 "method": h.method, "n_free": h.n_free, "chi2_min": h.chi2_min, "priors": list(h.priors),
                 "p_value": h.p_value, "dof": h.n_data - h.n_free,
                 "converged": h.converged, **{k: v for k, v in h.details.items()}}
                for h in self.hypotheses
            ],
            "bayes_factors": self.bayes_factors(),
            "best": self.best.name,
            "n_data": self.n_data,
            "scale": "Kass & Raftery (1995, JASA 90, 773): 2 ln K 0-2 not worth more than a bare mention, "
                     "2-6 positive, 6-10 strong, > 10 very strong",
            "evidence": "natural log; Gaussian likelihood with its normalisation -1/2 log det(2 pi C); "
                        "the priors as stated (the evidence depends on them)",
            "not_modelled": MODEL_LIMITS,
        }


def _prior_text(p) -> str:
    kind = "log-uniform" if p.scale == "log" else "uniform"
    return f"{p.name}: {kind} on [{p.lo:g}, {p.hi:g}] {p.unit}"


def compare_hypotheses(
    hypotheses: Sequence[Hypothesis],
    measurements,
    *,
    method: str = "auto",
    grid_points: int = DEFAULT_EVIDENCE_POINTS,
    backend=None,
    progress: bool = False,
    seed: int = 0,
    nlive: int | None = None,
    max_evaluations: int | None = None,
    max_time_s: float | None = None,
) -> ComparisonResult:
    """Evidence of each hypothesis on the same data, and the Bayes factors.

    Parameters
    ----------
    hypotheses : sequence of Hypothesis
        At least two.
    measurements : induct.io.measurements.Measurements
    method : {"auto", "grid", "nested"}
        ``"auto"``: grid for up to 3 free parameters, nested sampling above.
    grid_points : int
        Grid points per axis (even, >= 4).
    backend : induct.parallel.execution.Backend, optional
        Where grid tasks run.
    progress : bool
        Progress bars on standard error.
    seed, nlive, max_evaluations, max_time_s
        Nested-sampler settings (see :func:`induct.inversion.nested.run_nested`).

    Returns
    -------
    ComparisonResult

    Raises
    ------
    ValueError
        Fewer than two hypotheses, an unknown method, bad grid points.

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.io.measurements import load_measurements
    >>> from induct.inversion.priors import parse_parameters
    >>> s, d = load_scenario("ilmare"), load_measurements("ilmare_measured")
    >>> wide = parse_parameters({"ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}}, s.model)
    >>> ice = parse_parameters({"ice shell.thickness_km": {"range": [1, 60]}}, s.model)
    >>> r = compare_hypotheses([Hypothesis("sigma free", s.model, tuple(wide)),
    ...                         Hypothesis("ice free", s.model, tuple(ice))], d, grid_points=40)
    >>> sorted(r.to_dict()["hypotheses"][0])[:3]
    ['chi2_min', 'converged', 'dof']
    """
    from induct.inversion.priors import ParameterMap

    if len(hypotheses) < 2:
        raise ValueError(f"a comparison needs at least two hypotheses, got {len(hypotheses)}")
    if method not in ("auto", "grid", "nested"):
        raise ValueError(f"method must be 'auto', 'grid' or 'nested', got {method!r}")
    out = []
    for h in hypotheses:
        pmap = ParameterMap(h.model, h.parameters)
        k = len(pmap.parameters)
        use = method if method != "auto" else ("grid" if k <= MAX_GRID_EVIDENCE_PARAMETERS else "nested")
        priors = [_prior_text(p) for p in pmap.parameters]
        if use == "grid":
            log_z, err, chi2_min = grid_evidence(pmap, measurements, grid_points, backend=backend, progress=progress)
            out.append(HypothesisEvidence(h.name, log_z, err, "grid", k, chi2_min, priors,
                                          details={"grid_points": int(grid_points)}, n_data=measurements.n_data))
        else:
            from induct.inversion.nested import run_nested

            with warnings.catch_warnings():
                warnings.simplefilter("ignore", UserWarning)
                res = run_nested(pmap, measurements, bins=(30,) * k, cap=0, seed=seed, nlive=nlive,
                                 max_evaluations=max_evaluations, max_time_s=max_time_s, progress=progress)
            d = res.diagnostics
            out.append(HypothesisEvidence(
                h.name, float(res.log_evidence), float(res.log_evidence_err), "nested", k, res.chi2_min, priors,
                converged=res.converged,
                details={"likelihood_calls": d["likelihood_calls"], "dlogz": d["dlogz"], "nlive": d["nlive"]},
                n_data=measurements.n_data,
            ))
    return ComparisonResult(out, measurements.n_data)
