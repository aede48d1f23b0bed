"""Planning flybys by expected information: linearised (D-optimal) experiment design.

Model
-----
Along a flyby, with the primary field removed, the magnetometer sees the
degree-1 induced field ``b = A x(theta) + noise``: A is the 3N x 2K design
matrix of :func:`induct.flyby.magfit.design_matrix` (N samples, K driving lines) and
``x = (Re R_1, Im R_1, Re R_2, ...)`` the responses of the interior model at
the line periods, which depend nonlinearly on the free parameters theta. The
noise is white and Gaussian, ``noise_nT`` (1 sigma) on each component of each
sample.

Linearised about a reference model theta_0 (the scenario's values unless
given), the Jacobian of the samples is ``J = A D`` with
``D = d x / d u`` (2K x P), u each parameter in its *sampling coordinate*
(the value for ``scale = "linear"``, log10 of the value for ``scale = "log"``,
as in :mod:`induct.inversion.priors`). D is computed once for all candidates by central
differences (step ``step_fraction`` times the prior width in u) with one
vectorised :meth:`induct.model.interior.InteriorModel.sweep_response`. The Fisher
information of candidate c is

    F_c = J_c^T J_c / sigma^2 = D^T (A_c^T A_c) D / sigma^2      (P x P),

formed from the 2K x 2K Gram matrix ``A_c^T A_c`` of each candidate (batched
over candidates), and the information of a set of flybys is the sum of their
F_c (independent noise).

Prior (Gaussian approximation)
------------------------------
The prior of each parameter is uniform on its ``[invert]`` range in the
sampling coordinate (uniform or log-uniform). The linearised design replaces
it by a Gaussian with the same variance, ``width**2 / 12`` (width in u:
``hi - lo``, or ``log10(hi / lo)`` for log parameters), independent between
parameters; its precision matrix is ``P^-1 = diag(12 / width**2)``. The mean
does not enter the information criterion; widths in physical units are centred
on the reference value.

Criteria
--------
* Posterior covariance (linear-Gaussian) ``(F + P^-1)^-1``, in u.
* Expected 68 % width: ``2 s``, s the posterior standard deviation in u; for a
  log parameter reported in physical units as ``10**(u0 + s) - 10**(u0 - s)``
  and in decades as ``2 s``.
* ``log_det = log det(F + P^-1) - log det(P^-1) = log det(I + P F)``, the
  D-optimal criterion. For a linear-Gaussian model the expected information
  gain (Shannon; the mutual information of parameters and data, in nats) is
  *half* of it, ``EIG = log_det / 2`` (Lindley 1956, Ann. Math. Stat. 27, 986;
  Chaloner & Verdinelli 1995, Statistical Science 10, 273); both are reported
  and rank designs identically.
* Choosing k of N: ``log_det`` of a set is monotone submodular, so greedy
  selection is within a factor ``1 - 1/e`` of the best set (Nemhauser, Wolsey &
  Fisher 1978, Math. Programming 14, 265); :func:`exhaustive_selection` checks
  small cases.
* Which driving periods a set separates: from the response-space covariance
  ``sigma^2 (A^T A)^-1`` of the set (the covariance of a least-squares fit of
  the 2K responses, as in :mod:`induct.flyby.magfit`), the canonical correlation of
  each pair of lines (Hotelling 1936, Biometrika 28, 321: the largest
  correlation between any combinations of the two lines' Re and Im; never
  smaller than the largest single entry used by :mod:`induct.flyby.magfit`). A line
  is *separable* when it is determined (not in the near-null space of the
  column-scaled design, condition number below ``max_condition``, largest
  1-sigma half-axis of its (Re, Im) ellipse below ``max_sigma``) and its
  largest correlation with any other line is at most ``max_correlation``.
* A nonlinear check for small cases: :func:`nested_mc_information_gain`, the
  nested Monte Carlo estimate of the expected information gain under the
  actual (uniform or log-uniform) prior (Ryan 2003, J. Comput. Graph. Stat. 12,
  585).

What the model leaves out
-------------------------
Plasma-interaction fields (near a moon often as large as the induced field,
and correlated along the track, not white), asymmetric shells, motional
induction, the degree-2 (gradient-driven) induced field, errors of the primary
field and magnetometer offsets. The linearisation holds where the posterior is
close to Gaussian (high signal-to-noise); where the data add little, the
Gaussian prior approximation sets the widths, and widths comparable to the
prior range mean "not constrained". The white-noise information grows with the
number of samples: give ``noise_nT`` for the sampling step of the candidates.
"""

from __future__ import annotations

import itertools
import math
import warnings
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from induct.field.drive import DriveLine
from induct.model.interior import InteriorModel
from induct.model.parameters import FIELDS, Parameter, parameter_value
from induct.flyby.magfit import DEFAULT_MAX_CONDITION, DEFAULT_MAX_SIGMA, design_matrix
from induct.inversion.priors import ParameterMap, parse_parameters
from induct.planning.candidates import Candidate

__all__ = [
    "DEFAULT_MAX_CORRELATION",
    "DEFAULT_STEP_FRACTION",
    "ResponseDerivatives",
    "Separability",
    "FlybyPlan",
    "default_reference",
    "response_derivatives",
    "candidate_grams",
    "fisher_matrices",
    "prior_precision",
    "posterior_covariance",
    "log_det_criterion",
    "expected_68_widths",
    "greedy_selection",
    "exhaustive_selection",
    "line_separability",
    "nested_mc_information_gain",
    "plan_flybys",
]

#: A line is separable when its largest correlation with another line is at most this.
DEFAULT_MAX_CORRELATION = 0.9
#: Central-difference step as a fraction of each parameter's prior width (sampling coordinate).
DEFAULT_STEP_FRACTION = 1e-5
#: Points per design-matrix batch in :func:`candidate_grams`.
BATCH_POINTS = 65_536

_LEAVES_OUT = (
    "linearised D-optimal design with white Gaussian magnetometer noise and the degree-1 induced field of a "
    "spherically symmetric body; not included: plasma-interaction fields (often as large as the induced field near "
    "the body, and correlated along the track), asymmetric shells, motional induction, the degree-2 induced field, "
    "primary-field and magnetometer-offset errors"
)


# --------------------------------------------------------------------------- checks
def _check_lines(lines):
    lines = list(lines)
    if not lines:
        raise ValueError("drive_lines: give at least one driving line")
    for i, ln in enumerate(lines):
        if not isinstance(ln, DriveLine):
            raise ValueError(f"drive_lines[{i}] must be an induct.field.drive.DriveLine, got {type(ln).__name__}")
    periods = np.array([ln.period_s for ln in lines], dtype=float)
    if np.unique(periods).size != periods.size:
        raise ValueError("drive_lines: periods must be distinct")
    amps = np.array([ln.b_complex_nT for ln in lines])
    labels = tuple(ln.label or f"{ln.period_h:.6g} h" for ln in lines)
    return lines, periods, amps, labels


def _check_parameters(model, parameters):
    if isinstance(parameters, Mapping):
        return tuple(parse_parameters(parameters, model))
    params = tuple(parameters)
    if not params:
        raise ValueError("parameters: give at least one free parameter")
    for i, p in enumerate(params):
        if not isinstance(p, Parameter):
            raise ValueError(f"parameters[{i}] must be an induct.inversion.priors.Parameter, got {type(p).__name__}")
    names = [p.name for p in params]
    if len(set(names)) != len(names):
        raise ValueError("parameters: names must be unique")
    return params


def _check_noise(noise_nT):
    if isinstance(noise_nT, bool) or not isinstance(noise_nT, (int, float, np.floating, np.integer)) \
            or not (math.isfinite(noise_nT) and noise_nT > 0.0):
        raise ValueError(f"noise_nT must be a finite number > 0 (nT, 1 sigma per component and sample), got {noise_nT!r}")
    return float(noise_nT)


def _check_candidates(candidates):
    out = []
    for i, c in enumerate(candidates):
        if not isinstance(c, Candidate):
            try:
                c = Candidate(c.name, c.times_s, c.positions_km, getattr(c, "info", {}))
            except AttributeError:
                raise ValueError(f"candidates[{i}] must be an induct Candidate (name, times_s, positions_km), "
                                 f"got {type(c).__name__}") from None
        out.append(c)
    if not out:
        raise ValueError("candidates: give at least one candidate flyby")
    names = [c.name for c in out]
    if len(set(names)) != len(names):
        dup = sorted({n for n in names if names.count(n) > 1})
        raise ValueError(f"candidates: names must be unique; repeated: {', '.join(map(repr, dup))}")
    return out


def _valid_radius_km(model) -> float:
    r = model.radius_km
    if model.ionosphere is not None:
        r += model.ionosphere.altitude_km
    return r


# --------------------------------------------------------------------------- derivatives
@dataclass(frozen=True, eq=False)
class ResponseDerivatives:
    """Responses at the reference model and their derivatives with respect to the parameters.

    Attributes
    ----------
    parameters : tuple of Parameter
        The P free parameters.
    periods_s : ndarray, shape (K,)
        Periods of the driving lines (s).
    labels : tuple of str
        Line labels.
    response : ndarray of complex, shape (K,)
        R_1 of the reference model at each period.
    derivative : ndarray, shape (2K, P)
        ``d(Re R_1, Im R_1, Re R_2, ...)/du_j``, u the sampling coordinate (value, or log10 of the value).
    reference : ndarray, shape (P,)
        Reference values (field units).
    reference_u : ndarray, shape (P,)
        Reference in the sampling coordinate.
    steps_u : ndarray, shape (P,)
        Central-difference steps used (sampling coordinate).
    """

    parameters: tuple
    periods_s: np.ndarray
    labels: tuple
    response: np.ndarray
    derivative: np.ndarray
    reference: np.ndarray
    reference_u: np.ndarray
    steps_u: np.ndarray


def default_reference(model: InteriorModel, parameters) -> dict:
    """Reference values of the free parameters taken from the model.

    Parameters
    ----------
    model : InteriorModel
    parameters : sequence of Parameter

    Returns
    -------
    dict
        ``name -> value`` (field units): a layer's ``thickness_km`` or ``conductivity_S_per_m``, its
        ``salinity_g_per_kg`` extra key, or the ionosphere's ``conductance_S``.

    Raises
    ------
    ValueError
        When the model does not hold a value (e.g. a salinity not given in the scenario).

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.model.parameters import Parameter
    >>> default_reference(load_scenario("ilmare").model, [Parameter("ocean.thickness_km", 5, 250)])
    {'ocean.thickness_km': 95.0}
    """
    out = {}
    for p in parameters:
        value = parameter_value(model, p.name)
        if not math.isfinite(value):
            raise ValueError(f"no reference value of {p.name!r} in the model; give reference={{{p.name!r}: VALUE}}")
        out[p.name] = float(value)
    return out


def response_derivatives(model: InteriorModel, drive_lines, parameters, reference=None, *,
                         step_fraction: float = DEFAULT_STEP_FRACTION) -> ResponseDerivatives:
    """Responses R_1 at the driving periods and their central-difference derivatives in the sampling coordinates.

    All ``1 + 2P`` model variants are evaluated in one vectorised call of
    :meth:`induct.model.interior.InteriorModel.sweep_response`.

    Parameters
    ----------
    model : InteriorModel
        The reference model; fields that are not free keep its values.
    drive_lines : sequence of DriveLine
        Driving lines (distinct periods).
    parameters : sequence of Parameter, or mapping
        Free parameters, or an ``[invert]`` table (checked with :func:`induct.inversion.priors.parse_parameters`).
    reference : mapping, optional
        ``name -> value`` (field units) of the linearisation point; default :func:`default_reference`.
    step_fraction : float
        Step h_j = ``step_fraction`` x prior width of parameter j in its sampling coordinate (u, or log10 u).
        The default 1e-5 keeps the truncation error (O(h^2)) and the rounding error (O(eps/h)) of the
        derivatives near 1e-8 relative for the bundled scenarios (checked in the tests by Richardson
        extrapolation).

    Returns
    -------
    ResponseDerivatives

    Raises
    ------
    ValueError
        Bad lines or parameters, a non-positive reference of a log parameter, or a stencil that leaves the
        physical domain (e.g. a thickness that leaves the fill layer no room).

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> sc = load_scenario("ilmare")
    >>> d = response_derivatives(sc.model, sc.drive_lines, sc.raw["invert"])
    >>> d.derivative.shape
    (10, 3)
    """
    _, periods, _, labels = _check_lines(drive_lines)
    params = _check_parameters(model, parameters)
    if not (isinstance(step_fraction, (int, float)) and 0.0 < step_fraction < 0.1):
        raise ValueError(f"step_fraction must lie in (0, 0.1), got {step_fraction!r}")
    ref = default_reference(model, params) if reference is None else dict(reference)
    unknown = sorted(set(ref) - {p.name for p in params})
    if unknown:
        raise ValueError(f"reference: {', '.join(map(repr, unknown))} not among the free parameters "
                         f"({', '.join(p.name for p in params)})")
    missing = [p.name for p in params if p.name not in ref]
    if missing:
        ref = {**default_reference(model, [p for p in params if p.name in missing]), **ref}
    x0 = np.array([float(ref[p.name]) for p in params])
    for p, v in zip(params, x0):
        if not math.isfinite(v):
            raise ValueError(f"reference of {p.name!r} must be finite, got {v!r}")
        if p.log and v <= 0.0:
            raise ValueError(f"reference of {p.name!r} must be > 0 for a log-scale parameter, got {v:g}")
        if not (p.lo <= v <= p.hi):
            warnings.warn(f"reference {p.name} = {v:g} {p.unit} lies outside its prior range [{p.lo:g}, {p.hi:g}]",
                          stacklevel=2)
    u0 = np.array([float(p.to_prior(v)) for p, v in zip(params, x0)])
    width = np.array([p.prior_bounds[1] - p.prior_bounds[0] for p in params])
    h = step_fraction * width
    npar = len(params)
    u = np.tile(u0, (1 + 2 * npar, 1))
    for j in range(npar):
        u[1 + 2 * j, j] += h[j]
        u[2 + 2 * j, j] -= h[j]
    for j, p in enumerate(params):
        low = FIELDS[p.field].lowest
        if not p.log and u[2 + 2 * j, j] < low:
            raise ValueError(f"{p.name}: the difference stencil reaches {u[2 + 2 * j, j]:g} {p.unit}, below the physical "
                             f"limit {low:g}; move the reference away from the limit or use scale = 'log'")
    columns = [p.from_prior(u[:, j]) for j, p in enumerate(params)]
    values = ParameterMap(model, params).values(columns)
    r = model.sweep_response(values, periods, 1)  # (1 + 2P, K)
    bad = ~np.all(np.isfinite(r), axis=1)
    if bad.any():
        i = int(np.argmax(bad))
        what = "the reference model" if i == 0 else f"the stencil point of {params[(i - 1) // 2].name}"
        raise ValueError(f"{what} is physically impossible (e.g. the layers leave the fill layer no room); move the "
                         "reference or reduce step_fraction")
    dr = (r[1::2] - r[2::2]) / (2.0 * h[:, None])  # (P, K) complex
    deriv = np.empty((2 * periods.size, npar))
    deriv[0::2] = dr.real.T
    deriv[1::2] = dr.imag.T
    return ResponseDerivatives(params, periods, labels, r[0].copy(), deriv, x0, u0, h)


# --------------------------------------------------------------------------- information
def _gram_of_points(pos, t, radius_km, amps, periods):
    k2 = 2 * periods.size
    gram = np.zeros((k2, k2))
    for start in range(0, t.size, BATCH_POINTS):
        sl = slice(start, start + BATCH_POINTS)
        a = design_matrix(pos[sl], t[sl], radius_km, amps, periods)
        gram += a.T @ a
    return gram


def candidate_grams(model: InteriorModel, drive_lines, candidates, *, progress: bool = False) -> np.ndarray:
    """Unit-noise Gram matrix ``A_c^T A_c`` of each candidate's design matrix, batched over candidates.

    Parameters
    ----------
    model : InteriorModel
        Supplies the reference radius and the radius below which the outside formula fails (surface,
        or the ionosphere sheet).
    drive_lines : sequence of DriveLine
    candidates : sequence of Candidate
    progress : bool
        Show a progress bar over the candidates (tqdm, standard error).

    Returns
    -------
    ndarray, shape (C, 2K, 2K)
        In (nT per unit response)^2; rows and columns ordered (Re R_1, Im R_1, Re R_2, ...).

    Raises
    ------
    ValueError
        A sample inside the body (or the ionosphere sheet), naming the candidate and sample.

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.planning.candidates import generate_candidates
    >>> sc = load_scenario("ilmare")
    >>> cands = generate_candidates(sc.model.radius_km, altitude_km=200.0, t_ca_s=0.0, step_s=60.0)
    >>> candidate_grams(sc.model, sc.drive_lines, cands).shape
    (1, 10, 10)
    """
    _, periods, amps, _ = _check_lines(drive_lines)
    cands = _check_candidates(candidates)
    rmin = _valid_radius_km(model)
    inside = "the body" if model.ionosphere is None else "the ionosphere sheet"
    for c in cands:
        r = np.linalg.norm(c.positions_km, axis=1)
        low = r < rmin * (1.0 - 1e-12)
        if low.any():
            i = int(np.argmax(low))
            raise ValueError(f"candidate {c.name!r}: sample {i} (t_s = {c.times_s[i]:.9g}) lies inside {inside}: "
                             f"|r| = {r[i]:.6g} km < {rmin:.6g} km; the induced-field formula holds only outside")
    k2 = 2 * periods.size
    out = np.empty((len(cands), k2, k2))
    sizes = np.array([c.size for c in cands])
    from tqdm.auto import tqdm

    bar = tqdm(total=len(cands), desc="candidate flybys", unit="flyby", disable=not progress, leave=False)
    for n in np.unique(sizes):
        idx = np.flatnonzero(sizes == n)
        per = max(1, BATCH_POINTS // int(n))
        if per == 1:
            for i in idx:
                out[i] = _gram_of_points(cands[i].positions_km, cands[i].times_s, model.radius_km, amps, periods)
                bar.update(1)
            continue
        for start in range(0, idx.size, per):
            batch = idx[start:start + per]
            pos = np.concatenate([cands[i].positions_km for i in batch])
            t = np.concatenate([cands[i].times_s for i in batch])
            a = design_matrix(pos, t, model.radius_km, amps, periods).reshape(batch.size, 3 * int(n), k2)
            out[batch] = np.matmul(a.transpose(0, 2, 1), a)
            bar.update(batch.size)
    bar.close()
    return out


def fisher_matrices(grams, derivative, noise_nT: float) -> np.ndarray:
    """Fisher information of the parameters, ``D^T G D / sigma^2``, for each Gram matrix.

    Parameters
    ----------
    grams : ndarray, shape (..., 2K, 2K)
        Unit-noise Gram matrices (:func:`candidate_grams`); sums of them give sets of flybys.
    derivative : ndarray, shape (2K, P)
        ``ResponseDerivatives.derivative``.
    noise_nT : float
        White noise (nT, 1 sigma per component and sample), > 0.

    Returns
    -------
    ndarray, shape (..., P, P)
        In the sampling coordinates (per unit, or per decade squared).

    Examples
    --------
    >>> import numpy as np
    >>> fisher_matrices(np.eye(2)[None], np.array([[1.0], [0.0]]), 0.5)
    array([[[4.]]])
    """
    sigma = _check_noise(noise_nT)
    d = np.asarray(derivative, dtype=float)
    f = np.matmul(np.matmul(d.T, np.asarray(grams, dtype=float)), d) / sigma**2
    return 0.5 * (f + np.swapaxes(f, -1, -2))


def prior_precision(parameters) -> np.ndarray:
    """Precision of the Gaussian approximation of the uniform prior: ``diag(12 / width**2)``.

    The prior of each parameter is uniform in its sampling coordinate (the value, or log10 of the value)
    on the ``[invert]`` range; a uniform distribution of width w has variance ``w**2 / 12``.

    Parameters
    ----------
    parameters : sequence of Parameter

    Returns
    -------
    ndarray, shape (P, P)

    Examples
    --------
    >>> from induct.model.parameters import Parameter
    >>> prior_precision([Parameter("ocean.thickness_km", 0.0 + 10, 10 + 12 ** 0.5)]).round(12)
    array([[1.]])
    """
    width = np.array([p.prior_bounds[1] - p.prior_bounds[0] for p in parameters], dtype=float)
    return np.diag(12.0 / width**2)


def posterior_covariance(fisher, precision) -> np.ndarray:
    """Linear-Gaussian posterior covariance ``(F + P^-1)^-1``.

    Parameters
    ----------
    fisher : ndarray, shape (..., P, P)
    precision : ndarray, shape (P, P)
        Prior precision :func:`prior_precision`.

    Returns
    -------
    ndarray, shape (..., P, P)
        In the sampling coordinates.

    Examples
    --------
    >>> import numpy as np
    >>> posterior_covariance(np.array([[3.0]]), np.array([[1.0]]))
    array([[0.25]])
    """
    m = np.asarray(fisher, dtype=float) + np.asarray(precision, dtype=float)
    c = np.linalg.inv(m)
    return 0.5 * (c + np.swapaxes(c, -1, -2))


def log_det_criterion(fisher, precision) -> np.ndarray:
    """D-optimal criterion ``log det(F + P^-1) - log det(P^-1) = log det(I + P F)``.

    For a linear-Gaussian model the expected information gain is half of it (nats; module docstring).

    Parameters
    ----------
    fisher : ndarray, shape (..., P, P)
    precision : ndarray, shape (P, P)

    Returns
    -------
    ndarray, shape (...)

    Examples
    --------
    >>> import numpy as np
    >>> float(log_det_criterion(np.array([[3.0]]), np.array([[1.0]])))  # log 4
    1.3862943611198906
    """
    p = np.asarray(precision, dtype=float)
    sign, logdet = np.linalg.slogdet(np.asarray(fisher, dtype=float) + p)
    sign0, logdet0 = np.linalg.slogdet(p)
    if np.any(sign <= 0) or sign0 <= 0:
        raise ValueError("F + P^-1 is not positive definite (Fisher information or prior precision is invalid)")
    return logdet - logdet0


def expected_68_widths(covariance, parameters, reference_u):
    """Expected 68 % interval widths from a covariance in the sampling coordinates.

    Parameters
    ----------
    covariance : ndarray, shape (..., P, P)
        Posterior (or prior) covariance in the sampling coordinates.
    parameters : sequence of Parameter
    reference_u : ndarray, shape (P,)
        Centre (sampling coordinate).

    Returns
    -------
    physical : ndarray, shape (..., P)
        ``2 s`` (field units) for linear parameters; ``10**(u0 + s) - 10**(u0 - s)`` (field units) for log ones.
    log10 : ndarray, shape (..., P)
        ``2 s`` in decades for log parameters, NaN for linear ones.

    Examples
    --------
    >>> import numpy as np
    >>> from induct.model.parameters import Parameter
    >>> p = [Parameter("ocean.conductivity_S_per_m", 0.1, 10.0, "log")]
    >>> phys, dec = expected_68_widths(np.array([[0.01]]), p, np.array([0.0]))
    >>> round(float(phys[0]), 6), float(dec[0])
    (0.464597, 0.2)
    """
    c = np.asarray(covariance, dtype=float)
    s = np.sqrt(np.maximum(np.diagonal(c, axis1=-2, axis2=-1), 0.0))
    u0 = np.asarray(reference_u, dtype=float)
    is_log = np.array([p.log for p in parameters])
    with np.errstate(over="ignore"):
        phys = np.where(is_log, 10.0 ** (u0 + s) - 10.0 ** (u0 - s), 2.0 * s)
    dec = np.where(is_log, 2.0 * s, np.nan)
    return phys, dec


def greedy_selection(fisher, precision, choose: int):
    """Greedy choice of ``choose`` candidates maximising ``log det(sum F + P^-1)``.

    Parameters
    ----------
    fisher : ndarray, shape (C, P, P)
        Per-candidate Fisher information.
    precision : ndarray, shape (P, P)
        Prior precision.
    choose : int
        Number to choose, 1 <= choose <= C.

    Returns
    -------
    order : ndarray of int, shape (choose,)
        Indices in the order chosen (ties go to the lower index).
    log_det : ndarray, shape (choose,)
        ``log_det`` criterion of the first 1, 2, ... chosen candidates (the expected information gain is half).

    Examples
    --------
    >>> import numpy as np
    >>> f = np.array([[[1.0]], [[5.0]], [[2.0]]])
    >>> order, gain = greedy_selection(f, np.eye(1), 2)
    >>> order.tolist(), gain.round(4).tolist()
    ([1, 2], [1.7918, 2.0794])
    """
    f = np.asarray(fisher, dtype=float)
    n = f.shape[0]
    k = _check_choose(choose, n)
    p = np.asarray(precision, dtype=float)
    _, logdet0 = np.linalg.slogdet(p)
    current = p.copy()
    used = np.zeros(n, dtype=bool)
    order, gains = [], []
    for _ in range(k):
        sign, logdet = np.linalg.slogdet(current[None] + f)
        score = np.where(used | (sign <= 0), -np.inf, logdet)
        best = int(np.argmax(score))
        used[best] = True
        order.append(best)
        gains.append(float(score[best] - logdet0))
        current = current + f[best]
    return np.array(order, dtype=int), np.array(gains)


def _check_choose(choose, n):
    if isinstance(choose, bool) or not isinstance(choose, (int, np.integer)) or not (1 <= choose <= n):
        raise ValueError(f"choose must be an integer from 1 to the number of candidates ({n}), got {choose!r}")
    return int(choose)


def exhaustive_selection(fisher, precision, choose: int, *, max_subsets: int = 500_000):
    """Best set of ``choose`` candidates by ``log det`` over all subsets (to check :func:`greedy_selection`).

    Parameters
    ----------
    fisher : ndarray, shape (C, P, P)
    precision : ndarray, shape (P, P)
    choose : int
    max_subsets : int
        Refuse when ``C choose k`` exceeds this.

    Returns
    -------
    best : ndarray of int, shape (choose,)
        Indices of the best set, ascending.
    log_det : float
        Its ``log_det`` criterion.

    Examples
    --------
    >>> import numpy as np
    >>> f = np.array([[[1.0]], [[5.0]], [[2.0]]])
    >>> best, gain = exhaustive_selection(f, np.eye(1), 2)
    >>> best.tolist(), round(gain, 4)
    ([1, 2], 2.0794)
    """
    f = np.asarray(fisher, dtype=float)
    n = f.shape[0]
    k = _check_choose(choose, n)
    total = math.comb(n, k)
    if total > max_subsets:
        raise ValueError(f"{n} choose {k} = {total} subsets exceed max_subsets = {max_subsets}; use greedy_selection")
    p = np.asarray(precision, dtype=float)
    _, logdet0 = np.linalg.slogdet(p)
    best, best_val = None, -np.inf
    combos = itertools.combinations(range(n), k)
    while True:
        chunk = np.array(list(itertools.islice(combos, 20_000)), dtype=int).reshape(-1, k)
        if chunk.size == 0:
            break
        sign, logdet = np.linalg.slogdet(p[None] + f[chunk].sum(axis=1))
        logdet = np.where(sign > 0, logdet, -np.inf)
        i = int(np.argmax(logdet))
        if logdet[i] > best_val:
            best, best_val = chunk[i], float(logdet[i])
    return np.asarray(best, dtype=int), best_val - float(logdet0)


# --------------------------------------------------------------------------- separability
@dataclass(frozen=True, eq=False)
class Separability:
    """Which driving lines a set of flybys separates (response-space covariance of the set).

    Attributes
    ----------
    labels : tuple of str
        Line labels (K).
    periods_s : ndarray, shape (K,)
    covariance : ndarray, shape (2K, 2K)
        ``sigma^2 (A^T A)^-1`` of (Re R_1, Im R_1, ...) (pseudo-inverse floor 1e-30 of the largest eigenvalue
        of the column-scaled Gram matrix where it is singular).
    correlation : ndarray, shape (K, K)
        Canonical correlation of each pair of lines (1 on the diagonal).
    condition_number : float
        Of the column-scaled design matrix (inf if singular or a line has no field).
    sigma_max : ndarray, shape (K,)
        Largest 1-sigma half-axis of each line's (Re, Im) error ellipse.
    determined : ndarray of bool, shape (K,)
    separable : ndarray of bool, shape (K,)
    reasons : tuple of str
        Why a line is not separable ("" if it is).
    thresholds : dict
        ``max_correlation``, ``max_condition``, ``max_sigma``.
    """

    labels: tuple
    periods_s: np.ndarray
    covariance: np.ndarray
    correlation: np.ndarray
    condition_number: float
    sigma_max: np.ndarray
    determined: np.ndarray
    separable: np.ndarray
    reasons: tuple
    thresholds: dict

    def to_dict(self) -> dict:
        """JSON-ready: per line (label, period_h, sigma_max, max_correlation, partner, separable, reason) and pairs."""
        k = len(self.labels)
        lines = []
        for i in range(k):
            others = [j for j in range(k) if j != i]
            if others:
                j = max(others, key=lambda m: self.correlation[i, m])
                worst, partner = float(self.correlation[i, j]), self.labels[j]
            else:
                worst, partner = 0.0, None
            lines.append({"label": self.labels[i], "period_h": float(self.periods_s[i]) / 3600.0,
                          "sigma_max": _finite(self.sigma_max[i]), "max_correlation": _finite(worst),
                          "most_correlated_with": partner, "determined": bool(self.determined[i]),
                          "separable": bool(self.separable[i]), "reason": self.reasons[i]})
        pairs = [{"lines": [self.labels[i], self.labels[j]], "correlation": _finite(self.correlation[i, j])}
                 for i in range(k) for j in range(i + 1, k)]
        return {"lines": lines, "pairs": pairs, "condition_number": _finite(self.condition_number),
                "thresholds": dict(self.thresholds)}


def _finite(v):
    v = float(v)
    return v if math.isfinite(v) else None


def _inv_sqrt_2x2(c):
    w, v = np.linalg.eigh(c)
    if w[0] <= 0.0:
        return None
    return (v / np.sqrt(w)) @ v.T


def line_separability(gram, noise_nT: float, drive_lines, *, max_correlation: float = DEFAULT_MAX_CORRELATION,
                      max_condition: float = DEFAULT_MAX_CONDITION, max_sigma: float = DEFAULT_MAX_SIGMA) -> Separability:
    """Which driving periods a set of flybys separates.

    Parameters
    ----------
    gram : ndarray, shape (2K, 2K)
        Unit-noise Gram matrix of the set (sum of :func:`candidate_grams` over its candidates).
    noise_nT : float
        White noise (nT, 1 sigma per component and sample).
    drive_lines : sequence of DriveLine
        The K lines (for labels and periods).
    max_correlation : float
        A line is separable only if its largest canonical correlation with another line is at most this.
    max_condition : float
        Lines with weight > 1 % in the right singular vectors of singular values below ``s_max / max_condition``
        of the column-scaled design are not determined (as in :mod:`induct.flyby.magfit`).
    max_sigma : float
        Lines whose (Re, Im) error ellipse has a 1-sigma half-axis above this are not determined.

    Returns
    -------
    Separability

    Examples
    --------
    >>> import numpy as np
    >>> from induct.field.drive import DriveLine
    >>> lines = [DriveLine(3600.0, [1, 0, 0]), DriveLine(7200.0, [0, 1, 0])]
    >>> s = line_separability(np.eye(4) * 1e4, 0.5, lines)
    >>> s.separable.tolist(), float(s.correlation[0, 1])
    ([True, True], 0.0)
    """
    _, periods, _, labels = _check_lines(drive_lines)
    sigma = _check_noise(noise_nT)
    g = np.asarray(gram, dtype=float)
    k = periods.size
    if g.shape != (2 * k, 2 * k):
        raise ValueError(f"gram must have shape (2K, 2K) = ({2 * k}, {2 * k}), got {g.shape}")
    if not (0.0 < max_correlation <= 1.0):
        raise ValueError(f"max_correlation must lie in (0, 1], got {max_correlation!r}")
    norms = np.sqrt(np.maximum(np.diag(g), 0.0))
    scale = np.where(norms > 0.0, norms, 1.0)
    gs = g / np.outer(scale, scale)
    lam, vec = np.linalg.eigh(0.5 * (gs + gs.T))
    lam_max = max(float(lam[-1]), 0.0)
    s = np.sqrt(np.maximum(lam, 0.0))
    s_max = float(s[-1])
    condition = s_max / float(s[0]) if s[0] > 0.0 and np.all(norms > 0.0) else math.inf
    floor = lam_max * 1e-30 if lam_max > 0.0 else 1.0
    cov_scaled = (vec / np.maximum(lam, floor)) @ vec.T
    cov = sigma**2 * cov_scaled / np.outer(scale, scale)
    small = s < s_max / max_condition
    weight = np.zeros(k)
    if small.any():
        weight = np.sum(vec[:, small].reshape(k, 2, -1) ** 2, axis=(1, 2))
    sig = np.array([math.sqrt(max(np.linalg.eigvalsh(cov[2 * i:2 * i + 2, 2 * i:2 * i + 2])[-1], 0.0)) for i in range(k)])
    inv_sqrt = [_inv_sqrt_2x2(cov[2 * i:2 * i + 2, 2 * i:2 * i + 2]) for i in range(k)]
    corr = np.eye(k)
    for i in range(k):
        for j in range(i + 1, k):
            if inv_sqrt[i] is None or inv_sqrt[j] is None:
                rho = 1.0
            else:
                m = inv_sqrt[i] @ cov[2 * i:2 * i + 2, 2 * j:2 * j + 2] @ inv_sqrt[j]
                rho = min(float(np.linalg.svd(m, compute_uv=False)[0]), 1.0)
            corr[i, j] = corr[j, i] = rho
    determined = np.zeros(k, dtype=bool)
    separable = np.zeros(k, dtype=bool)
    reasons = []
    for i in range(k):
        why = []
        if norms[2 * i] == 0.0 and norms[2 * i + 1] == 0.0:
            why.append("the line has no field along these flybys")
        elif weight[i] > 0.01:
            why.append(f"in the near-null space of the design (condition number {condition:.3g} > {max_condition:.3g})")
        if sig[i] > max_sigma:
            why.append(f"1-sigma uncertainty {sig[i]:.3g} > {max_sigma:g}")
        determined[i] = not why
        others = [j for j in range(k) if j != i]
        if others:
            j = max(others, key=lambda m: corr[i, m])
            if corr[i, j] > max_correlation:
                why.append(f"correlation {corr[i, j]:.3f} > {max_correlation:g} with {labels[j]}")
        separable[i] = not why
        reasons.append("; ".join(why))
    thresholds = {"max_correlation": float(max_correlation), "max_condition": float(max_condition),
                  "max_sigma": float(max_sigma)}
    return Separability(labels, periods, cov, corr, condition, sig, determined, separable, tuple(reasons), thresholds)


# --------------------------------------------------------------------------- nested Monte Carlo
def nested_mc_information_gain(model: InteriorModel, drive_lines, parameters, candidates, noise_nT: float, *,
                               n_outer: int = 2000, n_inner: int = 2000, seed: int = 0) -> np.ndarray:
    """Expected information gain of each candidate by nested Monte Carlo under the actual prior.

    ``EIG ~ (1/N) sum_n [log p(y_n | theta_n) - log (1/M) sum_m p(y_n | theta_m)]`` with theta_n, theta_m drawn
    from the uniform (or log-uniform) prior of the ranges and y_n simulated from theta_n (Ryan 2003, J. Comput.
    Graph. Stat. 12, 585). No linearisation in the parameters: the induced field is exactly ``A x(theta)``, so
    ``log p(y | theta) = (x^T A^T y - x^T A^T A x / 2) / sigma^2`` + terms of y alone, and ``A^T y`` of the
    simulated data is drawn exactly as ``A^T A x_n + sigma L z`` with ``L L^T = A^T A``, z standard normal.
    Inner samples are one prior sample shared by all outer samples; the same draws (common random numbers)
    serve every candidate. The estimator is biased high by O(1/M); its Monte Carlo error is O(1/sqrt(N)).
    Draws that leave the fill layer no room (zero prior) are discarded.

    Parameters
    ----------
    model : InteriorModel
    drive_lines : sequence of DriveLine
    parameters : sequence of Parameter, or mapping
    candidates : sequence of Candidate
    noise_nT : float
        White noise (nT, 1 sigma per component and sample).
    n_outer, n_inner : int
        Outer (N) and inner (M) sample sizes.
    seed : int
        Seed of ``numpy.random.default_rng``.

    Returns
    -------
    ndarray, shape (C,)
        Expected information gain (nats).

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.model.parameters import Parameter
    >>> from induct.planning.candidates import generate_candidates
    >>> sc = load_scenario("ilmare")
    >>> cands = generate_candidates(sc.model.radius_km, altitude_km=[100.0, 1000.0], t_ca_s=0.0, step_s=60.0)
    >>> eig = nested_mc_information_gain(sc.model, sc.drive_lines, [Parameter("ice shell.thickness_km", 1, 60)],
    ...                                  cands, 1.0, n_outer=300, n_inner=300)
    >>> bool(eig[0] > eig[1])
    True
    """
    _, periods, _, _ = _check_lines(drive_lines)
    params = _check_parameters(model, parameters)
    sigma = _check_noise(noise_nT)
    cands = _check_candidates(candidates)
    rng = np.random.default_rng(seed)
    lo = np.array([p.prior_bounds[0] for p in params])
    hi = np.array([p.prior_bounds[1] for p in params])
    pmap = ParameterMap(model, params)

    def draw(n):
        u = lo + (hi - lo) * rng.random((int(n), len(params)))
        r = model.sweep_response(pmap.values([p.from_prior(u[:, j]) for j, p in enumerate(params)]), periods, 1)
        r = r[np.all(np.isfinite(r), axis=1)]
        x = np.empty((r.shape[0], 2 * periods.size))
        x[:, 0::2], x[:, 1::2] = r.real, r.imag
        return x

    x_out, x_in = draw(n_outer), draw(n_inner)
    if x_out.shape[0] < 2 or x_in.shape[0] < 2:
        raise ValueError("almost every prior draw is physically impossible (the fill layer has no room)")
    z = rng.standard_normal((x_out.shape[0], 2 * periods.size))
    grams = candidate_grams(model, drive_lines, cands)
    out = np.empty(len(cands))
    log_m = math.log(x_in.shape[0])
    for c, g in enumerate(grams):
        lam, vec = np.linalg.eigh(0.5 * (g + g.T))
        root = vec * np.sqrt(np.maximum(lam, 0.0))
        b = x_out @ g + sigma * z @ root.T  # A^T y, (N, 2K)
        quad_out = np.einsum("ni,ij,nj->n", x_out, g, x_out)
        quad_in = np.einsum("mi,ij,mj->m", x_in, g, x_in)
        ll_true = (np.einsum("ni,ni->n", x_out, b) - 0.5 * quad_out) / sigma**2
        ll_in = (b @ x_in.T - 0.5 * quad_in[None, :]) / sigma**2  # (N, M)
        top = ll_in.max(axis=1)
        log_evidence = top + np.log(np.exp(ll_in - top[:, None]).sum(axis=1)) - log_m
        out[c] = float(np.mean(ll_true - log_evidence))
    return out


# --------------------------------------------------------------------------- plan
@dataclass(frozen=True, eq=False)
class FlybyPlan:
    """Result of :func:`plan_flybys`.

    Attributes
    ----------
    parameters : tuple of Parameter
        The P free parameters.
    candidate_names : tuple of str
        The C candidates, in input order.
    candidate_info : tuple of dict
        ``Candidate.info`` of each.
    noise_nT : float
    derivatives : ResponseDerivatives
        Linearisation point, responses and their derivatives.
    fisher : ndarray, shape (C, P, P)
        Per-candidate Fisher information (sampling coordinates).
    log_det : ndarray, shape (C,)
        Per-candidate ``log_det`` criterion; the expected information gain (nats) is half of it.
    expected_68_width : ndarray, shape (C, P)
        Per-candidate expected 68 % width (field units).
    expected_68_width_log10 : ndarray, shape (C, P)
        The same in decades for log parameters (NaN for linear ones).
    prior_68_width, prior_68_width_log10 : ndarray, shape (P,)
        Widths of the Gaussian prior approximation alone (no data).
    selection_order : ndarray of int, shape (k,)
        Greedy choice (indices into the candidates), in the order chosen.
    selection_log_det : ndarray, shape (k,)
        ``log_det`` of the first 1, 2, ..., k chosen.
    selected_covariance : ndarray, shape (P, P)
        Posterior covariance of the chosen set (sampling coordinates).
    selected_expected_68_width, selected_expected_68_width_log10 : ndarray, shape (P,)
    separability : Separability
        Of the chosen set.
    selection_separable : tuple of tuple of str
        Labels of the lines separable by the first 1, 2, ..., k chosen candidates.
    notes : list of str
    """

    parameters: tuple
    candidate_names: tuple
    candidate_info: tuple
    noise_nT: float
    derivatives: ResponseDerivatives
    fisher: np.ndarray
    log_det: np.ndarray
    expected_68_width: np.ndarray
    expected_68_width_log10: np.ndarray
    prior_68_width: np.ndarray
    prior_68_width_log10: np.ndarray
    selection_order: np.ndarray
    selection_log_det: np.ndarray
    selected_covariance: np.ndarray
    selected_expected_68_width: np.ndarray
    selected_expected_68_width_log10: np.ndarray
    separability: Separability
    selection_separable: tuple = ()
    notes: list = field(default_factory=list)

    @property
    def ranking(self) -> np.ndarray:
        """Candidate indices by decreasing ``log_det`` (ties keep input order); shape (C,)."""
        return np.argsort(-self.log_det, kind="stable")

    def selection_widths(self):
        """Expected 68 % widths after the first 1, 2, ..., k chosen candidates (greedy order).

        Returns
        -------
        physical : ndarray, shape (k, P)
            Field units (as :func:`expected_68_widths`).
        log10 : ndarray, shape (k, P)
            Decades for log parameters, NaN for linear ones.
        """
        prefix = np.cumsum(self.fisher[self.selection_order], axis=0)
        prec = prior_precision(self.parameters)
        return expected_68_widths(posterior_covariance(prefix, prec), self.parameters, self.derivatives.reference_u)

    @property
    def selected(self) -> list:
        """Names of the chosen candidates, in the order chosen."""
        return [self.candidate_names[i] for i in self.selection_order]

    def _widths(self, phys, dec):
        out = {p.name: _finite(v) for p, v in zip(self.parameters, phys)}
        logs = {p.name: _finite(v) for p, v in zip(self.parameters, dec) if p.log}
        return out, logs

    def to_dict(self) -> dict:
        """JSON-ready dictionary.

        Keys: ``candidates`` (best first: ``candidate``, ``log_det``, ``expected_information_gain_nats``
        (= log_det / 2), ``expected_68_width`` per parameter in
        field units, ``expected_68_width_log10`` for log parameters, ``info``), ``selected`` (names in the
        order chosen), ``selection`` (cumulative ``log_det``, ``gain``, the lines separable and the expected widths
        after each step),
        ``selected_expected_68_width`` (and ``_log10``), ``selected_log_det``,
        ``selected_expected_information_gain_nats``, ``separability``, ``lines`` (reference responses),
        ``parameters`` (range, scale, reference, prior widths), ``noise_nT``, ``method``, ``notes``.
        """
        cands = []
        for i in self.ranking:
            w, wl = self._widths(self.expected_68_width[i], self.expected_68_width_log10[i])
            entry = {"candidate": self.candidate_names[i], "log_det": float(self.log_det[i]),
                     "expected_information_gain_nats": 0.5 * float(self.log_det[i]), "expected_68_width": w}
            if wl:
                entry["expected_68_width_log10"] = wl
            entry["info"] = dict(self.candidate_info[i])
            cands.append(entry)
        sel_w, sel_wl = self._widths(self.selected_expected_68_width, self.selected_expected_68_width_log10)
        steps = []
        prev = 0.0
        seps = self.selection_separable or ((),) * len(self.selection_order)
        step_w, step_wl = self.selection_widths()
        for n, (i, v, sep) in enumerate(zip(self.selection_order, self.selection_log_det, seps)):
            w, wl = self._widths(step_w[n], step_wl[n])
            entry = {"candidate": self.candidate_names[i], "log_det": float(v), "gain": float(v - prev),
                     "separable_lines": list(sep), "expected_68_width": w}
            if wl:
                entry["expected_68_width_log10"] = wl
            steps.append(entry)
            prev = float(v)
        params = []
        for j, p in enumerate(self.parameters):
            entry = {"name": p.name, "unit": p.unit, "scale": p.scale, "range": [p.lo, p.hi],
                     "reference": float(self.derivatives.reference[j]),
                     "prior_68_width": _finite(self.prior_68_width[j])}
            if p.log:
                entry["prior_68_width_log10"] = _finite(self.prior_68_width_log10[j])
            params.append(entry)
        out = {
            "candidates": cands,
            "selected": self.selected,
            "selection": steps,
            "selected_log_det": float(self.selection_log_det[-1]),
            "selected_expected_information_gain_nats": 0.5 * float(self.selection_log_det[-1]),
            "selected_expected_68_width": sel_w,
        }
        if sel_wl:
            out["selected_expected_68_width_log10"] = sel_wl
        out.update({
            "separability": self.separability.to_dict(),
            "parameters": params,
            "noise_nT": self.noise_nT,
            "lines": [{"label": lab, "period_h": float(t) / 3600.0, "response_real": float(r.real),
                       "response_imag": float(r.imag)}
                      for lab, t, r in zip(self.derivatives.labels, self.derivatives.periods_s, self.derivatives.response)],
            "method": ("linearised about the reference model; Fisher information of white noise; Gaussian approximation "
                       "(variance width^2/12 in the sampling coordinate) of the uniform prior; log_det = log det(F + "
                       "P^-1) - log det(P^-1); expected information gain (linear-Gaussian, nats) = log_det / 2; greedy selection "
                       "(Nemhauser, Wolsey & Fisher 1978)"),
            "notes": list(self.notes),
        })
        return out


def plan_flybys(model: InteriorModel, drive_lines, parameters, candidates, noise_nT: float, choose: int, *,
                reference=None, step_fraction: float = DEFAULT_STEP_FRACTION,
                max_correlation: float = DEFAULT_MAX_CORRELATION, max_condition: float = DEFAULT_MAX_CONDITION,
                max_sigma: float = DEFAULT_MAX_SIGMA, progress: bool = False) -> FlybyPlan:
    """Rank candidate flybys by expected information and choose ``choose`` of them greedily.

    Parameters
    ----------
    model : InteriorModel
        Reference interior (the linearisation point unless ``reference`` is given).
    drive_lines : sequence of DriveLine
        Driving lines (flow frame; e.g. ``Scenario.drive_lines``).
    parameters : sequence of Parameter, or mapping
        Free parameters, or an ``[invert]`` table (e.g. ``Scenario.raw["invert"]``).
    candidates : sequence of Candidate
        Candidate flybys (unique names), flow frame, outside the body (and the ionosphere sheet).
    noise_nT : float
        White magnetometer noise (nT, 1 sigma per component and sample at the candidates' sampling), > 0.
    choose : int
        How many candidates to choose (1 to C).
    reference : mapping, optional
        ``name -> value`` (field units) of the linearisation point.
    step_fraction : float
        Central-difference step (fraction of each prior width in the sampling coordinate).
    max_correlation, max_condition, max_sigma : float
        Separability thresholds (:func:`line_separability`).
    progress : bool
        Show a progress bar over the candidates (tqdm, standard error).

    Returns
    -------
    FlybyPlan

    Raises
    ------
    ValueError
        Bad inputs (naming the candidate, parameter or value at fault).

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.planning.candidates import generate_candidates
    >>> sc = load_scenario("ilmare")
    >>> cands = generate_candidates(sc.model.radius_km, altitude_km=[100.0, 400.0], phase_deg=[0.0, 90.0],
    ...                             lines=sc.drive_lines, step_s=60.0)
    >>> plan = plan_flybys(sc.model, sc.drive_lines, sc.raw["invert"], cands, noise_nT=0.5, choose=2)
    >>> d = plan.to_dict()
    >>> d["candidates"][0]["info"]["altitude_km"], len(d["selected"])
    (100.0, 2)
    """
    lines, periods, _, _ = _check_lines(drive_lines)
    params = _check_parameters(model, parameters)
    sigma = _check_noise(noise_nT)
    cands = _check_candidates(candidates)
    k = _check_choose(choose, len(cands))
    deriv = response_derivatives(model, lines, params, reference, step_fraction=step_fraction)
    grams = candidate_grams(model, lines, cands, progress=progress)
    fisher = fisher_matrices(grams, deriv.derivative, sigma)
    prec = prior_precision(params)
    log_det = log_det_criterion(fisher, prec)
    cov = posterior_covariance(fisher, prec)
    w, wl = expected_68_widths(cov, params, deriv.reference_u)
    pw, pwl = expected_68_widths(np.linalg.inv(prec), params, deriv.reference_u)
    order, sel_gain = greedy_selection(fisher, prec, k)
    sel_cov = posterior_covariance(fisher[order].sum(axis=0), prec)
    sw, swl = expected_68_widths(sel_cov, params, deriv.reference_u)
    thresholds = dict(max_correlation=max_correlation, max_condition=max_condition, max_sigma=max_sigma)
    prefix = np.cumsum(grams[order], axis=0)
    steps = [line_separability(g, sigma, lines, **thresholds) for g in prefix]
    sep = steps[-1]
    step_sep = tuple(tuple(lab for lab, ok in zip(st.labels, st.separable) if ok) for st in steps)
    notes = [_LEAVES_OUT]
    prior_s = np.sqrt(np.diag(np.linalg.inv(prec)))
    post_s = np.sqrt(np.diag(sel_cov))
    for p, a, b in zip(params, post_s, prior_s):
        if a > 0.7 * b:
            notes.append(f"{p.name}: the chosen flybys barely constrain it (expected width {a / b:.0%} of the prior's); "
                         "its width is set by the prior approximation")
    bad = [sep.labels[i] for i in range(len(sep.labels)) if not sep.separable[i]]
    if bad:
        notes.append("driving lines not separated by the chosen flybys: " + ", ".join(bad)
                     + "; add flybys at other phases of the main line or fit fewer periods")
    return FlybyPlan(params, tuple(c.name for c in cands), tuple(dict(c.info) for c in cands), sigma, deriv, fisher,
                     log_det, w, wl, pw, pwl, order, sel_gain, sel_cov, sw, swl, sep, step_sep, notes)


# --------------------------------------------------------------------------- benchmark
