"""Amplitude-phase diagrams: where families of interiors fall in the (phase arg R, amplitude) plane.

For each driving period the diagram draws two families of curves over a grid
of two interior parameters (usually the ice-shell thickness and the ocean
conductivity): curves along which the first parameter is constant and the
second varies, and curves along which the second is constant and the first
varies. Measured responses and their 1 and 2 sigma error ellipses are drawn on
top, so one sees at a glance which combinations the data allow and how the
periods separate thickness from conductivity (Seufert, Saur & Neubauer 2011,
Icarus 214).

The model is spherically symmetric quasi-static induction: plasma interaction,
asymmetric shells and motional induction are not included.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from induct.constants import SECONDS_PER_HOUR
from induct.model.interior import InteriorModel
from induct.model.parameters import parameter_value
from induct.planning.maps import AxisSpec, fixed_parameters, parse_axis_spec
from induct.model.response import check_degree

__all__ = [
    "DiagramResult",
    "amplitude_phase_diagram",
    "default_families",
    "measurement_ellipses",
    "measured_periods_h",
]

#: Relative tolerance for matching a measurement's period to a diagram panel.
PERIOD_RTOL = 1e-3


@dataclass
class DiagramResult:
    """Responses along the curves of an amplitude-phase diagram.

    Attributes
    ----------
    periods_h : ndarray, shape (P,)
        Driving periods (h), one panel each.
    first, second : AxisSpec
        The two parameter families.
    first_values, second_values : ndarray, shapes (F,), (S,)
        Values at which a curve is drawn.
    first_curves : ndarray of complex, shape (P, F, K)
        R_n along the curves of constant first parameter (second varies over K samples).
    second_curves : ndarray of complex, shape (P, S, K)
        R_n along the curves of constant second parameter (first varies over K samples).
    model_response : ndarray of complex, shape (P,)
        R_n of the unchanged model.
    degree : int
        Degree n.
    body : str
        Body name.
    fixed : list of str
        Parameters held fixed.
    base_point : tuple of float
        The model's own values of the two parameters.

    The diagram is drawn by :func:`induct.plot.diagrams.plot_diagram` and its
    curve points written by :func:`induct.io.tables.write_diagram_csv`.
    """

    periods_h: np.ndarray
    first: AxisSpec
    second: AxisSpec
    first_values: np.ndarray
    second_values: np.ndarray
    first_curves: np.ndarray
    second_curves: np.ndarray
    model_response: np.ndarray
    degree: int
    body: str
    fixed: list = field(default_factory=list)
    base_point: tuple = ()

    @property
    def first_samples(self) -> np.ndarray:
        """Values of the first parameter along the curves of constant second parameter, shape (K,)."""
        return _dense(self.first, self.second_curves.shape[-1])

    @property
    def second_samples(self) -> np.ndarray:
        """Values of the second parameter along the curves of constant first parameter, shape (K,)."""
        return _dense(self.second, self.first_curves.shape[-1])


def default_families(model: InteriorModel) -> tuple[AxisSpec, AxisSpec]:
    """Default families: the top layer's thickness and the ocean's conductivity.

    The top layer's thickness h runs linearly from h/4 to 3h (6 curves); the
    "ocean" is the most conductive layer other than the top and innermost
    layers, whose conductivity sigma runs logarithmically from sigma/10 to
    10 sigma (5 curves).

    Raises
    ------
    ValueError
        If the model has fewer than three layers or no conducting middle layer.
    """
    layers = model.layers
    if len(layers) < 3 or layers[0].thickness_km is None:
        raise ValueError("default families need a top layer with a thickness and a middle layer; give the families explicitly")
    middle = [layer for layer in layers[1:-1] if layer.conductivity_S_per_m > 0]
    if not middle:
        raise ValueError("default families need a conducting middle layer (an ocean); give the families explicitly")
    ocean = max(middle, key=lambda layer: layer.conductivity_S_per_m)
    h, s = layers[0].thickness_km, ocean.conductivity_S_per_m
    def nice(v):
        return float(f"{v:.6g}")

    first = AxisSpec.of(f"{layers[0].name}.thickness_km", nice(h / 4), nice(3 * h), 6, False)
    second = AxisSpec.of(f"{ocean.name}.conductivity_S_per_m", nice(s / 10), nice(10 * s), 5, True)
    return first, second


def _dense(spec: AxisSpec, samples: int) -> np.ndarray:
    return spec.param.grid(samples)


def amplitude_phase_diagram(
    model: InteriorModel,
    first_spec=None,
    second_spec=None,
    periods_h=None,
    *,
    degree: int = 1,
    samples: int = 150,
) -> DiagramResult:
    """Responses along constant-parameter curves for an amplitude-phase diagram.

    Parameters
    ----------
    model : InteriorModel
        The interior; parameters not in the families keep their values.
    first_spec, second_spec : str or AxisSpec, optional
        ``"LAYER.FIELD=lo:hi:n[:log]"``; n is the number of curves. Default:
        :func:`default_families`.
    periods_h : array_like, shape (P,)
        Driving periods (h), > 0.
    degree : int
        Degree n (1-12).
    samples : int
        Points along each curve (>= 2).

    Returns
    -------
    DiagramResult
    """
    defaults = default_families(model) if first_spec is None or second_spec is None else (None, None)
    first = parse_axis_spec(first_spec if first_spec is not None else defaults[0], model, "first family")
    second = parse_axis_spec(second_spec if second_spec is not None else defaults[1], model, "second family")
    if first.parameter == second.parameter:
        raise ValueError(f"the two families must vary different parameters, both are {first.parameter!r}")
    if periods_h is None:
        raise ValueError("periods_h is required: the driving periods (h) of the panels")
    periods = np.atleast_1d(np.asarray(periods_h, dtype=float))
    if periods.ndim != 1 or periods.size == 0 or not np.all(np.isfinite(periods) & (periods > 0)):
        raise ValueError(f"periods_h must be a non-empty list of periods > 0 h, got {periods_h!r}")
    n = check_degree(degree)
    if int(samples) < 2:
        raise ValueError(f"samples must be >= 2 points per curve, got {samples}")
    periods_s = periods * SECONDS_PER_HOUR
    fv, sv = first.values(), second.values()
    f_dense, s_dense = _dense(first, int(samples)), _dense(second, int(samples))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        first_curves = model.sweep_response(
            {first.parameter: fv[:, None], second.parameter: s_dense[None, :]}, periods_s, n
        )  # (F, K, P)
        second_curves = model.sweep_response(
            {second.parameter: sv[:, None], first.parameter: f_dense[None, :]}, periods_s, n
        )  # (S, K, P)
    if np.isnan(first_curves).any() or np.isnan(second_curves).any():
        warnings.warn("some family members leave the fill layer no room; those curve points are left out", stacklevel=2)
    return DiagramResult(
        periods_h=periods,
        first=first,
        second=second,
        first_values=fv,
        second_values=sv,
        first_curves=np.moveaxis(first_curves, -1, 0),
        second_curves=np.moveaxis(second_curves, -1, 0),
        model_response=model.response(periods_s=periods_s, degree=n).response,
        degree=n,
        body=model.name,
        fixed=fixed_parameters(model, (first.parameter, second.parameter)),
        base_point=(parameter_value(model, first.parameter), parameter_value(model, second.parameter)),
    )


def measured_periods_h(measurements, degree: int = 1) -> np.ndarray:
    """The distinct periods (h) of the measured entries of one degree, sorted: the panels of a diagram of the data.

    Parameters
    ----------
    measurements : induct.io.measurements.Measurements
    degree : int

    Returns
    -------
    ndarray, shape (P,)

    Examples
    --------
    >>> from induct.io.measurements import load_measurements
    >>> measured_periods_h(load_measurements("ilmare_measured")).tolist()
    [6.06, 12.12, 84.7]
    """
    return np.unique(measurements.period_h[measurements.degree == degree])


def measurement_ellipses(measurements, period_h: float, degree: int = 1, rtol: float = PERIOD_RTOL):
    """Measured points and covariances in the (phase arg R, amplitude) plane for one period.

    Entries given as real and imaginary parts are carried over to (phase,
    amplitude) to first order, ``C' = J C J^T`` with the Jacobian J of
    (phi_deg, A) with respect to (Re, Im).

    Parameters
    ----------
    measurements : induct.io.measurements.Measurements
    period_h : float
        Period (h); entries within relative ``rtol`` match.
    degree : int
        Only entries of this degree.

    Returns
    -------
    list of (center, covariance)
        ``center`` = (phase lag in degrees, A), shape (2,); ``covariance`` shape (2, 2)
        in (degrees, 1) units.
    """
    out = []
    for i in range(measurements.n_entries):
        p = measurements.period_h[i]
        if measurements.degree[i] != degree or abs(p - period_h) > rtol * period_h:
            continue
        v, c = measurements.values[i], measurements.covariance[i]
        if measurements.polar[i]:
            swap = np.array([[0.0, 1.0], [1.0, 0.0]])
            out.append((v[::-1].copy(), swap @ c @ swap))
        else:
            re, im = v
            a = math.hypot(re, im)
            deg = 180.0 / math.pi
            jac = np.array([[-im / a**2 * deg, re / a**2 * deg], [re / a, im / a]])
            out.append((np.array([math.degrees(math.atan2(im, re)), a]), jac @ c @ jac.T))
    return out
