"""Feasibility maps: a response quantity over a grid of two interior parameters.

A map varies two ``"LAYER.FIELD"`` parameters of an :class:`~induct.model.interior.InteriorModel`
over a regular (linear or logarithmic) grid, keeps every other parameter fixed,
and evaluates one quantity at one driving period:

``amplitude``
    A = |R_n| (dimensionless).
``phase_lag_deg``
    phase phi = arg R_n (degrees; the name is kept for compatibility): the
    induced field leads the perfect-conductor response by phi and lags the
    inducing field by 180 - phi degrees (:func:`induct.model.response.phase_lag_deg`).
``induced_nT``
    magnitude of the induced field (nT) at ``altitude_km`` along the driving
    field, i.e. above the sub-drive point where the direction of a uniform
    driving field of amplitude ``drive_nT`` leaves the body (for a drive in the
    equatorial plane this point is on the equator, not at a pole). The induced
    dipole field is ``B_ind(r) = -(R_1/2) (R/|r|)**3 [3 (B_e . rhat) rhat - B_e]``;
    along the driving field (rhat parallel to B_e) it is ``-R_1 (R/r)**3 B_e``,
    of magnitude ``|R_1| (R/r)**3 |B_e|`` with ``r = R + altitude``: the
    strongest induced field at that altitude (twice the value at right angles).
``difference_nT``
    magnitude of the difference of the complex induced fields of the map's
    interior and a fixed reference interior at the same point,
    ``|R_1 - R_1,ref| (R/r)**3 |B_e|`` (nT).

Cells are computed through :func:`induct.parallel.execution.run_reduction`: each task
evaluates the cells of one index range of the flattened grid and returns them,
so another backend (for example Dask) can run the tasks elsewhere.

Measurements (:class:`induct.io.measurements.Measurements`, ``[[response]]``
tables) add the Gaussian chi-square of
:meth:`~induct.io.measurements.Measurements.chi2` per cell, over all measured
entries (each at its own period and degree). Two readings of "consistent at
1 (2) sigma" are offered (probabilities 68.27 % and 95.45 %):

``region="confidence"`` (default)
    the joint confidence region of the two mapped parameters, the others held
    fixed: ``chi2 - min(chi2) <= 2.30 (6.18)``, the 68.27 % (95.45 %) quantiles
    of chi-square with 2 degrees of freedom (Avni 1976, ApJ 210, 642; Press et
    al., Numerical Recipes, section 15.6). It always contains the best cell;
    the best fit's own chi2 is reported beside it.
``region="goodness"``
    cells whose chi2 alone is within the 68.27 % (95.45 %) quantile of
    chi-square with as many degrees of freedom as measured values (an absolute
    goodness-of-fit test; may be empty when the fixed parameters are wrong).

The model is spherically symmetric quasi-static induction: plasma interaction,
asymmetric shells and motional induction are not included.
"""

from __future__ import annotations

import math
import operator
import re
import warnings
from dataclasses import dataclass, field

import numpy as np

from induct.constants import SECONDS_PER_HOUR
from induct.parallel.execution import DEFAULT_TASK_SIZE, run_reduction
from induct.model.interior import InteriorModel
from induct.model.parameters import Parameter, check_parameter_name, check_parameter_range, parameter_value
from induct.model.response import check_degree, phase_lag_deg

__all__ = [
    "AxisSpec",
    "MapResult",
    "QUANTITIES",
    "parse_axis_spec",
    "feasibility_map",
    "consistency_levels",
    "dipole_factor",
    "fixed_parameters",
]

#: Map quantities: name -> (label, unit shown on figures, CF unit, needs a driving amplitude).
QUANTITIES = {
    "amplitude": ("amplitude A = |R|", "", "1", False),
    "phase_lag_deg": ("phase phi = arg R (lead on a perfect conductor)", "deg", "degree", False),
    "induced_nT": ("induced field along the driving field", "nT", "nT", True),
    "difference_nT": ("induced-field difference along the driving field", "nT", "nT", True),
}

_SPEC_HELP = "expected 'LAYER.FIELD=lo:hi:n[:log]' (e.g. 'ice shell.thickness_km=5:60:100' or 'ocean.conductivity_S_per_m=0.1:30:80:log')"
#: Probabilities of the 1 and 2 sigma levels of a normal distribution (common practice).
SIGMA_PROBABILITY = {1: 0.682689492137086, 2: 0.954499736103642}


@dataclass(frozen=True)
class AxisSpec:
    """One map axis: a model parameter (:class:`induct.model.parameters.Parameter`) and its number of grid values.

    Attributes
    ----------
    param : Parameter
        Name (``"LAYER.FIELD"``), range and scale (``"log"`` for logarithmic spacing).
    n : int
        Number of grid values, >= 2.

    Examples
    --------
    >>> AxisSpec.of("ocean.conductivity_S_per_m", 0.1, 10.0, 3, log=True).values()
    array([ 0.1,  1. , 10. ])
    """

    param: Parameter
    n: int

    @classmethod
    def of(cls, parameter: str, lo: float, hi: float, n: int, log: bool = False) -> "AxisSpec":
        """An axis from a name, a range, a count and a spacing."""
        return cls(Parameter(parameter, lo, hi, "log" if log else "linear"), n)

    parameter = property(lambda self: self.param.name, doc="``\"LAYER.FIELD\"``.")
    lo = property(lambda self: self.param.lo, doc="Lower end (field unit).")
    hi = property(lambda self: self.param.hi, doc="Upper end (field unit).")
    log = property(lambda self: self.param.log, doc="Logarithmic spacing.")
    layer = property(lambda self: self.param.layer, doc="The layer name (``\"ionosphere\"`` for its conductance).")
    field_name = property(lambda self: self.param.field, doc="The field name, e.g. ``\"thickness_km\"``.")
    unit = property(lambda self: self.param.unit, doc="Unit of the values.")
    label = property(lambda self: self.param.label, doc="Axis label with unit, e.g. ``\"ice shell thickness (km)\"``.")

    def values(self) -> np.ndarray:
        """Grid values, shape (n,), in the unit of the field; exact end points."""
        return self.param.grid(self.n)

    def __str__(self) -> str:
        return f"{self.parameter}={self.lo:g}:{self.hi:g}:{self.n}" + (":log" if self.log else "")


def parse_axis_spec(text, model: InteriorModel | None = None, what: str = "axis") -> AxisSpec:
    """Parse ``"LAYER.FIELD=lo:hi:n[:log]"`` into an :class:`AxisSpec`.

    Parameters
    ----------
    text : str or AxisSpec
        The specification; an AxisSpec is checked again.
    model : InteriorModel, optional
        When given, the layer and field must exist in it and be variable
        (the fill layer's thickness, or thicknesses in a model without a fill
        layer, cannot vary).
    what : str
        Name of the argument, for error messages (e.g. ``"--x"``).

    Returns
    -------
    AxisSpec

    Raises
    ------
    ValueError
        Naming ``what`` and the fault: malformed text, non-numeric or
        non-finite bounds, lo >= hi, n < 2, a log axis with lo <= 0, a
        negative conductivity or non-positive thickness, an unknown layer or
        field.
    """
    if isinstance(text, AxisSpec):
        spec = text
    else:
        if not isinstance(text, str) or text.count("=") != 1:
            raise ValueError(f"{what} {text!r} is malformed: {_SPEC_HELP}")
        key, rng = (s.strip() for s in text.split("="))
        parts = [p.strip() for p in rng.split(":")]
        if "." not in key or len(parts) not in (3, 4):
            raise ValueError(f"{what} {text!r} is malformed: {_SPEC_HELP}")
        if len(parts) == 4 and parts[3].lower() not in ("log", "lin"):
            raise ValueError(f"{what} {text!r}: the optional fourth part must be 'log' or 'lin', got {parts[3]!r}")
        try:
            lo, hi = float(parts[0]), float(parts[1])
        except ValueError:
            raise ValueError(f"{what} {text!r}: lo and hi must be numbers, got {parts[0]!r} and {parts[1]!r}") from None
        if not re.fullmatch(r"\+?\d+", parts[2]):
            raise ValueError(f"{what} {text!r}: n must be a whole number >= 2, got {parts[2]!r}")
        spec = AxisSpec.of(key, lo, hi, int(parts[2]), len(parts) == 4 and parts[3].lower() == "log")
    _check_spec(spec, what)
    if model is not None:
        _check_spec_in_model(spec, model, what)
    return spec


def _check_spec(spec: AxisSpec, what: str) -> None:
    if spec.n < 2:
        raise ValueError(f"{what} {spec.parameter}: n must be >= 2 grid values, got {spec.n}")
    check_parameter_range(spec.param, what)


def _check_spec_in_model(spec: AxisSpec, model: InteriorModel, what: str) -> None:
    check_parameter_name(spec.parameter, model, what)


def dipole_factor(radius_km: float, altitude_km) -> np.ndarray:
    """(R/r)**3 with r = R + altitude: the decay of the induced dipole field (dimensionless)."""
    return (radius_km / (radius_km + np.asarray(altitude_km, dtype=float))) ** 3


def consistency_levels(chi_square, n_data: int, region: str = "confidence") -> dict[int, float]:
    """Chi-square levels that bound the 1 and 2 sigma regions of a map.

    Parameters
    ----------
    chi_square : ndarray
        Chi-square of every cell (NaN cells are ignored).
    n_data : int
        Number of measured values.
    region : {"confidence", "goodness"}
        ``"confidence"``: ``min(chi2) + chi2.ppf(p, 2)`` (joint region of the two
        mapped parameters); ``"goodness"``: ``chi2.ppf(p, n_data)``.

    Returns
    -------
    dict
        ``{1: level, 2: level}``: a cell is inside the region when its chi-square is <= level.
    """
    from scipy.stats import chi2

    if region == "confidence":
        best = float(np.nanmin(chi_square)) if np.isfinite(chi_square).any() else float("nan")
        return {k: best + float(chi2.ppf(p, 2)) for k, p in SIGMA_PROBABILITY.items()}
    if region == "goodness":
        return {k: float(chi2.ppf(p, n_data)) for k, p in SIGMA_PROBABILITY.items()}
    raise ValueError(f"region must be 'confidence' or 'goodness', got {region!r}")


def fixed_parameters(model: InteriorModel, varied=()) -> list[str]:
    """Short descriptions of the parameters a map holds fixed, surface down.

    ``varied`` lists the ``"LAYER.FIELD"`` names that vary; the fill layer
    (no thickness) is described as filling to the centre.
    """
    from induct.text import format_number as fmt

    varied = set(varied)
    out = []
    for layer in model.layers:
        parts = []
        if f"{layer.name}.thickness_km" not in varied:
            parts.append("to centre" if layer.thickness_km is None else f"{fmt(layer.thickness_km, 4)} km")
        if f"{layer.name}.conductivity_S_per_m" not in varied:
            parts.append(f"{fmt(layer.conductivity_S_per_m, 4)} S/m")
        if parts:
            out.append(f"{layer.name} {', '.join(parts)}")
    if model.ionosphere is not None and "ionosphere.conductance_S" not in varied:
        ion = model.ionosphere
        out.append(f"ionosphere {fmt(ion.conductance_S, 4)} S at {fmt(ion.altitude_km, 4)} km")
    return out


@dataclass
class MapResult:
    """A computed map with everything needed to plot and store it.

    The map is written by :mod:`induct.io.map_files` (NetCDF, CSV) and drawn by
    :func:`induct.plot.maps.plot_map`.

    Attributes
    ----------
    x, y : AxisSpec
        The two axes.
    x_values, y_values : ndarray, shapes (nx,), (ny,)
        Grid values (units of the axes).
    quantity : str
        One of :data:`QUANTITIES`.
    values : ndarray, shape (ny, nx)
        The quantity (NaN where the variant is impossible).
    response : ndarray of complex, shape (ny, nx)
        R_n at the map's period (exp(+i w t) convention).
    period_h : float
        Driving period (h).
    degree : int
        Degree n.
    body, radius_km : str, float
        The body's name and radius (km).
    fixed : list of str
        Parameters held fixed (see :func:`fixed_parameters`).
    base_point : tuple of float
        The model's own (x, y) values.
    altitude_km, drive_nT : float or None
        Point and driving amplitude of the nT quantities.
    reference : str or None
        Label of the reference interior (``difference_nT``).
    chi_square : ndarray, shape (ny, nx), or None
        Goodness of fit to the measurements.
    chi_square_levels : dict
        ``{1: level, 2: level}``: cells with chi-square <= level are inside the
        1 and 2 sigma regions (see :func:`consistency_levels`).
    region : str
        ``"confidence"`` or ``"goodness"`` (see the module docstring).
    n_data : int
        Number of measured values.
    measurement_periods_h : ndarray, shape (M,)
        Periods (h) of the measurements used.
    noise_nT, k : float or None
        Noise level (nT) and its multiple; ``detection_threshold_nT = k * noise_nT``
        is the detectability contour of the nT quantities.
    """

    x: AxisSpec
    y: AxisSpec
    x_values: np.ndarray
    y_values: np.ndarray
    quantity: str
    values: np.ndarray
    response: np.ndarray
    period_h: float
    degree: int
    body: str
    radius_km: float
    fixed: list
    base_point: tuple
    altitude_km: float | None = None
    drive_nT: float | None = None
    reference: str | None = None
    chi_square: np.ndarray | None = None
    chi_square_levels: dict = field(default_factory=dict)
    region: str = "confidence"
    n_data: int = 0
    measurement_periods_h: np.ndarray = field(default_factory=lambda: np.zeros(0))
    noise_nT: float | None = None
    k: float | None = None

    @property
    def detection_threshold_nT(self) -> float | None:
        """k x noise (nT), or None without a noise level."""
        return None if self.noise_nT is None else self.k * self.noise_nT

    @property
    def unit(self) -> str:
        """Unit of the quantity as shown on figures ("" if dimensionless)."""
        return QUANTITIES[self.quantity][1]

    @property
    def label(self) -> str:
        """Quantity label with unit."""
        label, unit = QUANTITIES[self.quantity][:2]
        return f"{label} ({unit})" if unit else label

    def describe(self) -> str:
        """One line: quantity, period, degree, point and drive (for titles and metadata)."""
        text = f"{QUANTITIES[self.quantity][0]}, period {self.period_h:g} h"
        if self.degree != 1:
            text += f", degree {self.degree}"
        if self.drive_nT is not None:
            text += f", {self.altitude_km:g} km altitude, drive {self.drive_nT:g} nT"
        if self.reference:
            text += f", vs {self.reference}"
        return text


class _MapCells:
    """Task: R_n of the map cells with flat indices [start, stop) for groups of (degree, periods).

    Returns ``[(start, [R_0, R_1, ...])]`` with R_g of shape (stop - start, P_g)
    for group g, so partial results merge by list concatenation.
    """

    def __init__(self, model, x: AxisSpec, y: AxisSpec, x_values, y_values, groups):
        self.model, self.x, self.y = model, x, y
        self.x_values, self.y_values = x_values, y_values
        self.groups = groups

    def __call__(self, start: int, stop: int):
        iy, ix = np.divmod(np.arange(start, stop), self.x_values.size)
        values = {self.x.parameter: self.x_values[ix], self.y.parameter: self.y_values[iy]}
        return [(start, [self.model.sweep_response(values, periods_s, degree) for degree, periods_s in self.groups])]


def _positive(value, what):
    if value is None or isinstance(value, bool) or not np.isfinite(value) or value <= 0:
        raise ValueError(f"{what} must be a finite number > 0, got {value!r}")
    return float(value)


def feasibility_map(
    model: InteriorModel,
    x_spec,
    y_spec,
    period_h: float,
    quantity: str = "amplitude",
    *,
    degree: int = 1,
    altitude_km: float = 0.0,
    drive_nT: float | None = None,
    reference: InteriorModel | None = None,
    reference_label: str | None = None,
    measurements=None,
    region: str = "confidence",
    noise_nT: float | None = None,
    k: float = 3.0,
    chunk_size: int = DEFAULT_TASK_SIZE,
    backend=None,
    progress: bool = False,
) -> MapResult:
    """A quantity over a grid of two interior parameters at one period.

    Parameters
    ----------
    model : InteriorModel
        The interior; every parameter not on an axis keeps its value.
    x_spec, y_spec : str or AxisSpec
        Axes, ``"LAYER.FIELD=lo:hi:n[:log]"`` (see :func:`parse_axis_spec`).
    period_h : float
        Driving period (h), > 0.
    quantity : str
        ``"amplitude"``, ``"phase_lag_deg"``, ``"induced_nT"`` or ``"difference_nT"``.
    degree : int
        Degree n of the driving field for the mapped quantity (the nT quantities need n = 1).
    altitude_km : float
        Altitude (km) of the evaluation point along the driving field (above the
        sub-drive point) for the nT quantities, >= 0.
    drive_nT : float
        Amplitude |B_e| (nT) of the uniform driving field; required for the nT quantities.
    reference : InteriorModel
        Fixed reference interior of the same radius; required for ``difference_nT``.
    reference_label : str, optional
        Name of the reference in titles (default: its body name).
    measurements : induct.io.measurements.Measurements, optional
        Measured responses (each entry at its own period and degree); adds
        :attr:`MapResult.chi_square` and its 1 and 2 sigma levels.
    region : {"confidence", "goodness"}
        How the 1 and 2 sigma regions are defined (module docstring).
    noise_nT : float, optional
        Noise level (nT) of the nT quantities; the detectability threshold is ``k * noise_nT``.
    k : float
        Multiple of the noise that counts as detectable (default 3).
    chunk_size : int
        Map cells per task.
    backend : induct.parallel.execution.Backend, optional
        Where the tasks run (in-process by default).
    progress : bool
        Show a progress bar.

    Returns
    -------
    MapResult
        ``values`` and ``response`` of shape (ny, nx) (rows follow the y axis).
    """
    if quantity not in QUANTITIES:
        raise ValueError(f"quantity must be one of {', '.join(QUANTITIES)}, got {quantity!r}")
    if region not in ("confidence", "goodness"):
        raise ValueError(f"region must be 'confidence' or 'goodness', got {region!r}")
    x = parse_axis_spec(x_spec, model, "x axis")
    y = parse_axis_spec(y_spec, model, "y axis")
    if x.parameter == y.parameter:
        raise ValueError(f"the x and y axes must vary different parameters, both are {x.parameter!r}")
    period_h = _positive(period_h, "period_h")
    needs_nT = QUANTITIES[quantity][3]
    degree = check_degree(degree)
    if needs_nT and degree != 1:
        raise ValueError(f"{quantity} needs degree 1 (a uniform driving field), got {degree}")
    if needs_nT:
        if drive_nT is None:
            raise ValueError(f"{quantity} needs drive_nT (--drive-nT), the driving-field amplitude in nT, > 0")
        drive_nT = _positive(drive_nT, "drive_nT (driving-field amplitude, nT)")
        altitude_km = float(altitude_km)
        if not (math.isfinite(altitude_km) and altitude_km >= 0):
            raise ValueError(f"altitude_km must be >= 0 km and finite, got {altitude_km!r}")
        ion = model.ionosphere
        if ion is not None and altitude_km < ion.altitude_km:
            warnings.warn(
                f"altitude {altitude_km:g} km is below the ionosphere sheet at {ion.altitude_km:g} km; "
                "the dipole formula describes the induced field outside the sheet",
                stacklevel=2,
            )
    else:
        drive_nT = altitude_km = None
    if quantity == "difference_nT":
        if reference is None:
            raise ValueError("difference_nT needs a reference interior (reference=..., --reference FILE)")
        if abs(reference.radius_km - model.radius_km) > 1e-9 * model.radius_km:
            raise ValueError(
                f"the reference interior's radius {reference.radius_km:g} km differs from the model's "
                f"{model.radius_km:g} km; the difference field needs the same body"
            )
    if noise_nT is not None:
        if not needs_nT:
            raise ValueError(f"noise_nT (detectability contour) applies to induced_nT and difference_nT, not {quantity}")
        noise_nT, k = _positive(noise_nT, "noise_nT"), _positive(k, "k (multiple of the noise)")
    else:
        k = None
    # groups of (degree, periods): the map's own period first, then the measured entries by degree
    groups = [(degree, np.array([period_h * SECONDS_PER_HOUR]))]
    entry_index = []
    if measurements is not None:
        for n in np.unique(measurements.degree):
            sel = np.flatnonzero(measurements.degree == n)
            groups.append((int(n), measurements.period_h[sel] * SECONDS_PER_HOUR))
            entry_index.append(sel)

    xv, yv = x.values(), y.values()
    task = _MapCells(model, x, y, xv, yv, groups)
    total = xv.size * yv.size
    parts = run_reduction(
        task, total, chunk_size=int(chunk_size), combine=operator.add, backend=backend, desc="map", progress=progress
    )
    r_groups = [np.empty((total, p.size), dtype=complex) for _, p in groups]
    for start, part in parts:
        for out, r in zip(r_groups, part):
            out[start : start + r.shape[0]] = r
    response = r_groups[0][:, 0].reshape(yv.size, xv.size)
    invalid = np.isnan(response)
    if invalid.any():
        warnings.warn(
            f"{int(invalid.sum())} of {total} map cells leave the fill layer no room (thicknesses exceed the "
            "radius); they are NaN",
            stacklevel=2,
        )
    values = _quantity(quantity, response, model, reference, period_h, degree, altitude_km, drive_nT)

    chi_square, levels, meas_periods = None, {}, np.zeros(0)
    if measurements is not None:
        r_meas = np.empty((total, measurements.n_entries), dtype=complex)
        for sel, r in zip(entry_index, r_groups[1:]):
            r_meas[:, sel] = r
        chi_square = measurements.chi2(r_meas).reshape(yv.size, xv.size)
        levels = consistency_levels(chi_square, measurements.n_data, region)
        meas_periods = np.asarray(measurements.period_h, dtype=float)

    return MapResult(
        x=x,
        y=y,
        x_values=xv,
        y_values=yv,
        quantity=quantity,
        values=values,
        response=response,
        period_h=period_h,
        degree=degree,
        body=model.name,
        radius_km=model.radius_km,
        fixed=fixed_parameters(model, (x.parameter, y.parameter)),
        base_point=(parameter_value(model, x.parameter), parameter_value(model, y.parameter)),
        altitude_km=altitude_km,
        drive_nT=drive_nT,
        reference=(reference_label or reference.name) if quantity == "difference_nT" else None,
        chi_square=chi_square,
        chi_square_levels=levels,
        region=region,
        n_data=0 if measurements is None else measurements.n_data,
        measurement_periods_h=meas_periods,
        noise_nT=noise_nT,
        k=k,
    )


def _quantity(quantity, response, model, reference, period_h, degree, altitude_km, drive_nT):
    if quantity == "amplitude":
        return np.abs(response)
    if quantity == "phase_lag_deg":
        return phase_lag_deg(response)
    scale = dipole_factor(model.radius_km, altitude_km) * drive_nT
    if quantity == "induced_nT":
        return np.abs(response) * scale
    r_ref = reference.response(periods_h=[period_h], degree=degree).response[0]
    return np.abs(response - r_ref) * scale
