"""Free parameters of an inversion: names, prior ranges, and their map onto the interior model.

Parameters are named ``"LAYER.FIELD"`` (``FIELD`` one of ``thickness_km``,
``conductivity_S_per_m``, ``salinity_g_per_kg``) or ``"ionosphere.conductance_S"``
and given in an ``[invert]`` table of the scenario (or a separate file)::

    [invert]
    "ice shell.thickness_km" = { range = [1, 60] }
    "ocean.conductivity_S_per_m" = { range = [0.05, 30], scale = "log" }

``scale = "linear"`` (default) means a uniform prior on the range,
``scale = "log"`` a log-uniform prior (uniform in log10 of the value). Inside,
every parameter is handled in its *prior coordinate* u (the value, or its
log10), in which the prior is uniform; cells of a grid have equal prior mass.

A changed thickness is absorbed by the layer without a thickness (the fill
layer); combinations that leave the fill layer no room are physically
impossible and get zero prior.

Salinity as a parameter is mapped to conductivity with
``induct.brine.conductivity(solute, salinity_g_per_kg, temperature_C,
pressure_MPa)`` at the layer's ``solute``, at the layer's ``temperature_C`` or
else the freezing point, and at the hydrostatic pressure at the top of the
layer (surface gravity from the layer densities, thin-shell approximation;
the thicknesses of the cell in question). Temperatures at the freezing point
use ``induct.brine.freezing_point(solute, salinity_g_per_kg, pressure_MPa)``.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from induct.constants import METRES_PER_KM
from induct.model.interior import InteriorModel, split_parameter

__all__ = ["Parameter", "parse_parameters", "load_parameter_table", "ParameterMap", "PARAMETER_FIELDS"]

#: Fields that may be free, with their unit and the lowest allowed value (inclusive flag).
PARAMETER_FIELDS = {
    "thickness_km": ("km", 0.0, False),  # > 0
    "conductivity_S_per_m": ("S/m", 0.0, True),  # >= 0
    "salinity_g_per_kg": ("g/kg", 0.0, True),  # >= 0
    "conductance_S": ("S", 0.0, True),  # >= 0 (ionosphere only)
}
_SCALES = ("linear", "log")
_SPEC_KEYS = {"range", "scale"}
#: Newtonian constant of gravitation (m^3 kg^-1 s^-2), CODATA 2018.
G_SI = 6.67430e-11


@dataclass(frozen=True)
class Parameter:
    """One free parameter with a uniform (``linear``) or log-uniform (``log``) prior on [lo, hi].

    Attributes
    ----------
    name : str
        ``"LAYER.FIELD"``.
    lo, hi : float
        Prior range in the field's unit (``unit``), lo < hi.
    scale : str
        ``"linear"`` or ``"log"``.
    """

    name: str
    lo: float
    hi: float
    scale: str = "linear"

    @property
    def field(self) -> str:
        """The field name (``thickness_km``, ...)."""
        return split_parameter(self.name)[1]

    @property
    def unit(self) -> str:
        """Unit of the value ("km", "S/m", "g/kg", "S")."""
        return PARAMETER_FIELDS[self.field][0]

    @property
    def log(self) -> bool:
        """True for a log-uniform prior."""
        return self.scale == "log"

    def to_prior(self, x):
        """Prior coordinate u of values x (x itself, or log10 x); array_like -> ndarray."""
        x = np.asarray(x, dtype=float)
        return np.log10(x) if self.log else x

    def from_prior(self, u):
        """Values x of prior coordinates u (inverse of :meth:`to_prior`)."""
        u = np.asarray(u, dtype=float)
        return 10.0**u if self.log else u

    @property
    def prior_bounds(self) -> tuple[float, float]:
        """(lo, hi) in the prior coordinate."""
        return float(self.to_prior(self.lo)), float(self.to_prior(self.hi))

    def edges(self, points: int) -> np.ndarray:
        """Cell edges of a grid with ``points`` equal-prior-mass cells, in the prior coordinate; shape (points + 1,)."""
        a, b = self.prior_bounds
        return np.linspace(a, b, int(points) + 1)

    def midpoints(self, points: int) -> np.ndarray:
        """Cell midpoints of that grid as values (field unit); shape (points,)."""
        e = self.edges(points)
        return self.from_prior(0.5 * (e[:-1] + e[1:]))


def load_parameter_table(path) -> dict:
    """Read a ``--params`` TOML file: its ``[invert]`` table, or the whole document if it has none."""
    path = Path(path)
    if not path.is_file():
        raise FileNotFoundError(f"parameter file {str(path)!r} not found")
    from induct.io.toml import read_toml

    doc = read_toml(path)
    return doc.get("invert", doc)


def _range(spec, name, where):
    if not isinstance(spec, dict):
        raise ValueError(f"{where}: {name!r} must be a table such as {{ range = [lo, hi], scale = \"linear\" }}")
    extra = sorted(set(spec) - _SPEC_KEYS)
    if extra:
        raise ValueError(f"{where}: {name!r}: unknown key(s) {', '.join(map(repr, extra))}; allowed: range, scale")
    rng = spec.get("range")
    if not isinstance(rng, list) or len(rng) != 2 or any(isinstance(v, bool) or not isinstance(v, (int, float)) for v in rng):
        raise ValueError(f"{where}: {name!r}: range must be [lo, hi] (two numbers), got {rng!r}")
    lo, hi = float(rng[0]), float(rng[1])
    if not (math.isfinite(lo) and math.isfinite(hi)):
        raise ValueError(f"{where}: {name!r}: range must be finite, got {rng!r}")
    if lo >= hi:
        raise ValueError(f"{where}: {name!r}: empty range: lo = {lo:g} must be < hi = {hi:g}")
    scale = spec.get("scale", "linear")
    if scale not in _SCALES:
        raise ValueError(f"{where}: {name!r}: scale must be 'linear' or 'log', got {scale!r}")
    return lo, hi, scale


def _check_name(name, model: InteriorModel, where):
    layer_name, field_name = split_parameter(name)
    if layer_name == "ionosphere":
        if field_name != "conductance_S":
            raise ValueError(f"{where}: unknown parameter {name!r}: the ionosphere's only free field is conductance_S")
        if model.ionosphere is None:
            raise ValueError(f"{where}: unknown parameter {name!r}: the scenario has no [ionosphere]")
        return
    if layer_name not in model.layer_names:
        raise ValueError(
            f"{where}: unknown parameter {name!r}: no layer {layer_name!r} (layers: {', '.join(model.layer_names)})"
        )
    allowed = [f for f in PARAMETER_FIELDS if f != "conductance_S"]
    if field_name not in allowed:
        raise ValueError(f"{where}: unknown parameter {name!r}: field must be one of {', '.join(allowed)}")
    if field_name == "thickness_km":
        if model.layers[-1].thickness_km is not None:
            raise ValueError(f"{where}: {name!r} cannot vary: the model has no fill layer (a layer without thickness) to absorb it")
        if layer_name == model.layer_names[-1]:
            raise ValueError(f"{where}: {name!r} cannot vary: {layer_name!r} is the fill layer; it absorbs the other thicknesses")


def _check_domain(p: Parameter, where):
    unit, low, inclusive = PARAMETER_FIELDS[p.field]
    bad = p.lo < low if inclusive else p.lo <= low
    if bad:
        rel = ">=" if inclusive else ">"
        raise ValueError(f"{where}: {p.name!r}: range [{p.lo:g}, {p.hi:g}] leaves the physical domain: {p.field} must be {rel} {low:g} {unit}")
    if p.log and p.lo <= 0:
        raise ValueError(f"{where}: {p.name!r}: scale = 'log' needs lo > 0, got {p.lo:g}")


def _check_feasible(params: Sequence[Parameter], model: InteriorModel, where):
    """Raise when every combination of the thickness ranges leaves the fill layer no room."""
    free = {p.name.rsplit(".", 1)[0]: p for p in params if p.field == "thickness_km"}
    if not free:
        return
    total = 0.0
    for layer in model.layers[:-1]:
        total += free[layer.name].lo if layer.name in free else layer.thickness_km
    if total >= model.radius_km:
        names = ", ".join(f"{n}.thickness_km >= {p.lo:g} km" for n, p in free.items())
        raise ValueError(
            f"{where}: physically impossible ranges: even with every free thickness at its lower bound ({names}) "
            f"the layers above {model.layer_names[-1]!r} sum to {total:g} km, not less than body.radius_km = "
            f"{model.radius_km:g} km"
        )


def parse_parameters(table: Mapping, model: InteriorModel, where: str = "[invert]") -> list[Parameter]:
    """Check an ``[invert]`` table against a model and return its free parameters (in table order).

    Parameters
    ----------
    table : mapping
        ``"LAYER.FIELD" -> {range = [lo, hi], scale = "linear" | "log"}``.
    model : InteriorModel
        The model whose layers the names refer to.
    where : str
        Prefix for error messages.

    Returns
    -------
    list of Parameter

    Raises
    ------
    ValueError
        Naming the parameter: unknown names, a field that cannot vary, empty
        ranges (lo >= hi), ranges outside the physical domain (thickness <= 0,
        conductivity, salinity or conductance < 0; log scale with lo <= 0),
        conductivity and salinity of one layer both free, and thickness ranges
        that are physically impossible for every combination.
    """
    if not isinstance(table, Mapping) or not table:
        raise ValueError(
            f"{where}: no free parameters; give e.g. \"ocean.thickness_km\" = {{ range = [5, 250] }} in an [invert] table"
        )
    params = []
    for name, spec in table.items():
        _check_name(name, model, where)
        lo, hi, scale = _range(spec, name, where)
        p = Parameter(name, lo, hi, scale)
        _check_domain(p, where)
        params.append(p)
    layers_cond = {p.name.rsplit(".", 1)[0] for p in params if p.field == "conductivity_S_per_m"}
    for p in params:
        if p.field == "salinity_g_per_kg" and p.name.rsplit(".", 1)[0] in layers_cond:
            raise ValueError(f"{where}: {p.name!r}: salinity and conductivity of one layer cannot both be free")
    _check_feasible(params, model, where)
    return params


class ParameterMap:
    """Maps columns of parameter values onto model variants and their responses.

    Parameters
    ----------
    model : InteriorModel
        The reference model; fields that are not free keep its values.
    parameters : sequence of Parameter
        The free parameters (checked by :func:`parse_parameters`).

    Raises
    ------
    ValueError
        When salinity is free but ``induct.brine.conductivity`` is not
        available, or the layer lacks what the brine model needs.
    """

    def __init__(self, model: InteriorModel, parameters: Sequence[Parameter]):
        self.model = model
        self.parameters = tuple(parameters)
        self._salinity = {}
        for p in self.parameters:
            if p.field == "salinity_g_per_kg":
                self._salinity[p.name] = _SalinityConductivity(model, p.name.rsplit(".", 1)[0], self.parameters)

    def values(self, columns: Sequence[np.ndarray]) -> dict:
        """The ``values`` mapping for :meth:`InteriorModel.sweep_response`.

        Parameters
        ----------
        columns : sequence of ndarray, each shape (N,)
            Values of each free parameter (field units), in parameter order.

        Returns
        -------
        dict
            ``"LAYER.FIELD" -> ndarray (N,)`` with salinities replaced by conductivities.
        """
        out = {}
        named = {p.name: np.asarray(c, dtype=float) for p, c in zip(self.parameters, columns)}
        for p in self.parameters:
            col = named[p.name]
            if p.field == "salinity_g_per_kg":
                layer_name = p.name.rsplit(".", 1)[0]
                out[f"{layer_name}.conductivity_S_per_m"] = self._salinity[p.name](col, named)
            else:
                out[p.name] = col
        return out

    def responses(self, columns: Sequence[np.ndarray], period_h: np.ndarray, degree: np.ndarray) -> np.ndarray:
        """Modelled R_n for each variant at each measured period and degree.

        Parameters
        ----------
        columns : sequence of ndarray, each shape (N,)
            Values of each free parameter (field units).
        period_h : ndarray, shape (M,)
            Periods (h).
        degree : ndarray of int, shape (M,)
            Degree of each entry.

        Returns
        -------
        ndarray of complex, shape (N, M); NaN rows for physically impossible variants.
        """
        values = self.values(columns)
        n = len(columns[0]) if columns else 1
        out = np.empty((n, period_h.size), dtype=complex)
        for deg in np.unique(degree):
            sel = np.flatnonzero(degree == deg)
            out[:, sel] = self.model.sweep_response(values, period_h[sel] * 3600.0, int(deg))
        return out


class _SalinityConductivity:
    """Salinity (g/kg) -> conductivity (S/m) of one layer through ``induct.brine.conductivity``."""

    def __init__(self, model: InteriorModel, layer_name: str, parameters):
        name = f"{layer_name}.salinity_g_per_kg"
        try:
            from induct import brine
        except ImportError:
            brine = None
        self._conductivity = getattr(brine, "conductivity", None)
        self._freezing = getattr(brine, "freezing_point", None)
        if self._conductivity is None:
            raise ValueError(
                f"{name!r}: salinity as a free parameter is not available: it needs "
                "induct.brine.conductivity(solute, salinity_g_per_kg, temperature_C, pressure_MPa), which this "
                "installation does not provide; vary conductivity_S_per_m instead"
            )
        layer = model.layer(layer_name)
        self.solute = layer.extra.get("solute")
        if not isinstance(self.solute, str):
            raise ValueError(f"{name!r}: layer {layer_name!r} needs a solute key (e.g. solute = \"NaCl\") for the brine model")
        self.temperature_C = layer.extra.get("temperature_C")
        if self.temperature_C is None and self._freezing is None:
            raise ValueError(
                f"{name!r}: layer {layer_name!r} has no temperature_C and induct.brine.freezing_point is not "
                "available to put it at the freezing point"
            )
        self.name = name
        self.gravity = _surface_gravity(model, name)
        index = model.layer_names.index(layer_name)
        self.above = model.layers[:index]
        self.thickness = {p.name: p for p in parameters if p.field == "thickness_km"}
        self._check_corners(next(p for p in parameters if p.name == name))

    def _check_corners(self, param: "Parameter"):
        """Evaluate the brine model at the corners of the prior ranges so that bad ranges fail early."""
        named = {key: np.array([p.lo, p.hi]) for key, p in self.thickness.items()}
        grids = np.meshgrid(np.array([param.lo, param.hi]), *named.values(), indexing="ij")
        named = {key: g.ravel() for key, g in zip(named, grids[1:])}
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                self(grids[0].ravel(), named)
        except ValueError as exc:
            raise ValueError(f"{self.name!r}: the brine model rejects part of the prior range: {exc}") from exc

    def pressure_MPa(self, named: Mapping[str, np.ndarray]) -> np.ndarray:
        """Hydrostatic pressure (MPa) at the top of the layer, sum of rho g h over the layers above (shape (N,))."""
        p = 0.0
        for layer in self.above:
            key = f"{layer.name}.thickness_km"
            h_km = named[key] if key in self.thickness else layer.thickness_km
            p = p + layer.extra["density_kg_per_m3"] * self.gravity * np.asarray(h_km) * METRES_PER_KM
        return np.asarray(p, dtype=float) * 1e-6

    def __call__(self, salinity, named):
        salinity = np.asarray(salinity, dtype=float)
        pressure = np.broadcast_to(self.pressure_MPa(named), salinity.shape)
        if self.temperature_C is not None:
            temperature = np.full(salinity.shape, float(self.temperature_C))
        else:
            temperature = np.asarray(self._freezing(self.solute, salinity, pressure, warn=False), dtype=float)
        sigma, flags = self._conductivity(self.solute, salinity, temperature, pressure, return_flags=True, warn=False)
        if np.any(flags):
            warnings.warn(
                f"{self.name}: part of the prior range uses brine conductivities extrapolated beyond the "
                "reference model (see induct.brine flags)",
                stacklevel=2,
            )
        return np.asarray(sigma, dtype=float)


def _surface_gravity(model: InteriorModel, name: str) -> float:
    """Surface gravity (m/s^2) from the layer densities of the reference model."""
    missing = [layer.name for layer in model.layers if "density_kg_per_m3" not in layer.extra]
    if missing:
        raise ValueError(
            f"{name!r}: the pressure for the brine model needs density_kg_per_m3 on every layer; missing on "
            f"{', '.join(map(repr, missing))}"
        )
    radii = model.radii_m()  # centre outward
    inner = np.concatenate([[0.0], radii[:-1]])
    rho = np.array([layer.extra["density_kg_per_m3"] for layer in model.layers[::-1]], dtype=float)
    mass = float(np.sum(4.0 / 3.0 * np.pi * rho * (radii**3 - inner**3)))
    return G_SI * mass / radii[-1] ** 2
