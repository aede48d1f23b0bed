"""Goodness of fit of an inversion: the locally refined optimum, chi2_min, degrees of freedom, p-value.

A grid (or a sampler) finds the best evaluated model; its chi-square is an upper bound
on the true minimum. The best model is refined with a bounded local least-squares
optimiser (``scipy.optimize.least_squares``, trust-region reflective) on the whitened
residuals ``L^-1 (m - d)`` (``C = L L^T``), in each parameter's prior coordinate.

With nu = N_data - N_free degrees of freedom, the p-value is the probability of a
chi-square at least as large if the model family were right and the errors correct,
``p = scipy.stats.chi2.sf(chi2_min, nu)``. Common practice: p < 1e-3 means the model
family cannot explain the data (or the errors are wrong), and ranges from such a fit
are not results.
"""

from __future__ import annotations

import warnings

import numpy as np

__all__ = ["refine_optimum", "fit_quality", "DEFAULT_MIN_P_VALUE"]

#: Default p-value below which the model family is rejected (common practice).
DEFAULT_MIN_P_VALUE = 1e-3

#: Whitened residual given to the optimiser for a physically impossible model.
_IMPOSSIBLE = 1e6


def refine_optimum(pmap, measurements, start: dict) -> tuple[dict, float]:
    """Refine a best-fit model locally (bounded least squares in the prior coordinates).

    Parameters
    ----------
    pmap : induct.inversion.priors.ParameterMap
    measurements : induct.io.measurements.Measurements
    start : dict
        ``name -> value`` (field units), the best evaluated model.

    Returns
    -------
    best : dict
        Refined ``name -> value`` (the start if the optimiser found nothing better).
    chi2 : float
        Its chi-square.

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.io.measurements import load_measurements
    >>> from induct.inversion.priors import ParameterMap, parse_parameters
    >>> sc = load_scenario("ilmare")
    >>> pm = ParameterMap(sc.model, parse_parameters({"ocean.thickness_km": {"range": [5, 250]}}, sc.model))
    >>> best, chi2 = refine_optimum(pm, load_measurements("ilmare_measured"), {"ocean.thickness_km": 80.0})
    >>> 5 <= best["ocean.thickness_km"] <= 250 and chi2 >= 0
    True
    """
    from scipy.optimize import least_squares

    params = pmap.parameters
    m = measurements

    def residuals(u):
        cols = [np.array([float(p.from_prior(x))]) for p, x in zip(params, u)]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            resp = pmap.responses(cols, m.period_h, m.degree)
        if not np.all(np.isfinite(resp)):
            return np.full(m.n_data, _IMPOSSIBLE)
        return m.whiten(m.predicted(resp) - m.values)[0]

    u0 = np.array([float(p.to_prior(start[p.name])) for p in params])
    lo = np.array([p.prior_bounds[0] for p in params])
    hi = np.array([p.prior_bounds[1] for p in params])
    r0 = residuals(u0)
    chi0 = float(r0 @ r0)
    u0 = np.clip(u0, lo, hi)
    try:
        sol = least_squares(residuals, u0, bounds=(lo, hi), x_scale=(hi - lo), diff_step=1e-6, max_nfev=200 * len(u0))
    except ValueError:
        return dict(start), chi0
    chi = float(sol.fun @ sol.fun)
    if not np.isfinite(chi) or chi >= chi0:
        return dict(start), chi0
    return {p.name: float(p.from_prior(x)) for p, x in zip(params, sol.x)}, chi


def fit_quality(chi2_min: float, n_data: int, n_free: int, min_p_value: float = DEFAULT_MIN_P_VALUE) -> dict:
    """Degrees of freedom, p-value and the verdict for a minimum chi-square.

    Parameters
    ----------
    chi2_min : float
    n_data, n_free : int
        Number of data and of free parameters.
    min_p_value : float
        Threshold below which the model family is rejected (default 1e-3).

    Returns
    -------
    dict
        ``chi2_min``, ``dof`` (N_data - N_free), ``p_value`` (None when dof <= 0),
        ``min_p_value``, ``acceptable`` (False when p < min_p_value).

    Examples
    --------
    >>> q = fit_quality(3.0, 6, 3)      # chi2 = dof: p about 0.39
    >>> round(q["p_value"], 3), q["acceptable"]
    (0.392, True)
    """
    from scipy import stats

    if not 0.0 < min_p_value < 1.0:
        raise ValueError(f"min_p_value must be between 0 and 1, got {min_p_value!r}")
    dof = int(n_data) - int(n_free)
    p = float(stats.chi2.sf(chi2_min, dof)) if dof > 0 else None
    return {
        "chi2_min": float(chi2_min),
        "dof": dof,
        "p_value": p,
        "min_p_value": float(min_p_value),
        "acceptable": True if p is None else bool(p >= min_p_value),
    }
