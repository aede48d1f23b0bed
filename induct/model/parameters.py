"""The one vocabulary of model parameters: ``"LAYER.FIELD"`` names, units, domains and ranges.

Every place that varies a model -- map axes, inversion parameters, amplitude-phase
diagram families, sweeps of :meth:`induct.model.interior.InteriorModel.sweep_response`
-- names what it varies ``"LAYER.FIELD"`` and checks it here:

==========================  ======  ==========================================================
field                       unit    where it may vary
==========================  ======  ==========================================================
``thickness_km``            km      any layer but the fill layer (which absorbs the change)
``conductivity_S_per_m``    S/m     any layer (replaces a chemistry-defined profile)
``salinity_g_per_kg``       g/kg    a chemistry-defined ocean (Practical Salinity for seawater)
``temperature_C``           degC    a chemistry-defined ocean that sets ``temperature_C``
``conductance_S``           S       ``ionosphere`` only
==========================  ======  ==========================================================

A :class:`Parameter` is a name with a range and a scale (``"linear"`` or ``"log"``): the
prior of an inversion and the axis of a map are both Parameters.

To add a field: one entry in :data:`FIELDS` and, if the model must apply it, a branch in
:meth:`induct.model.interior.InteriorModel.parameter_arrays`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "FieldInfo",
    "FIELDS",
    "Parameter",
    "split_parameter",
    "check_parameter_name",
    "check_parameter_range",
    "parameter_label",
    "parameter_value",
    "parse_truth",
]


@dataclass(frozen=True)
class FieldInfo:
    """What a field is: its unit, the word used in labels, its CF unit and its physical domain.

    Attributes
    ----------
    unit : str
        Unit shown to users ("km", "S/m", ...).
    word : str
        Word for labels ("thickness", ...).
    cf_unit : str
        UDUNITS spelling for NetCDF files (CF conventions).
    lowest : float
        Lowest physical value.
    inclusive : bool
        Whether ``lowest`` itself is allowed.
    applies_to : {"layer", "chemistry", "chemistry-temperature", "ionosphere"}
        Which part of a model carries the field.
    """

    unit: str
    word: str
    cf_unit: str
    lowest: float
    inclusive: bool
    applies_to: str


#: The fields that may vary, with their units and domains (the table in the module docstring).
FIELDS = {
    "thickness_km": FieldInfo("km", "thickness", "km", 0.0, False, "layer"),
    "conductivity_S_per_m": FieldInfo("S/m", "conductivity", "S m-1", 0.0, True, "layer"),
    "salinity_g_per_kg": FieldInfo("g/kg", "salinity", "g kg-1", 0.0, True, "chemistry"),
    "temperature_C": FieldInfo("degC", "temperature", "degree_Celsius", -273.15, False, "chemistry-temperature"),
    "conductance_S": FieldInfo("S", "conductance", "S", 0.0, True, "ionosphere"),
}

_SCALES = ("linear", "log")


def split_parameter(key: str) -> tuple[str, str]:
    """Split ``"LAYER.FIELD"`` at its last dot.

    Examples
    --------
    >>> split_parameter("ice shell.thickness_km")
    ('ice shell', 'thickness_km')
    """
    if not isinstance(key, str) or "." not in key:
        raise ValueError(f"parameter names are 'LAYER.FIELD' (e.g. 'ocean.thickness_km'), got {key!r}")
    layer_name, field_name = key.rsplit(".", 1)
    return layer_name, field_name


def parameter_label(key: str) -> str:
    """Label with the unit once, e.g. ``"ice shell thickness (km)"``.

    Examples
    --------
    >>> parameter_label("ocean.conductivity_S_per_m")
    'ocean conductivity (S/m)'
    """
    layer_name, field_name = split_parameter(key)
    info = FIELDS[field_name]
    return f"{layer_name} {info.word} ({info.unit})"


def _fields_of(model, layer_name: str) -> list[str]:
    """The fields that may vary on one layer of ``model`` (or on its ionosphere)."""
    if layer_name == "ionosphere":
        return ["conductance_S"] if model.ionosphere is not None else []
    layer = model.layer(layer_name)
    extra = layer.extra or {}
    chemistry = "profile" in extra  # a chemistry-defined layer resolved into a depth profile
    out = []
    for name, info in FIELDS.items():
        if info.applies_to == "layer":
            out.append(name)
        elif info.applies_to == "chemistry" and chemistry:
            out.append(name)
        elif info.applies_to == "chemistry-temperature" and chemistry and extra.get("temperature_C") is not None:
            out.append(name)
    return out


def check_parameter_name(key: str, model, where: str = "") -> tuple[str, str]:
    """Check that ``key`` names a field that can vary in ``model``.

    Parameters
    ----------
    key : str
        ``"LAYER.FIELD"``.
    model : InteriorModel
    where : str
        Prefix for error messages (e.g. ``"[invert]"`` or ``"--x"``).

    Returns
    -------
    (layer_name, field_name)

    Raises
    ------
    ValueError
        Naming the key: unknown layer, unknown field, a field this layer does not have
        (salinity on a layer without chemistry, the ionosphere of a model without one),
        or a thickness that cannot vary (the fill layer's, or any in a model without
        a fill layer).

    Examples
    --------
    >>> from induct import load_scenario
    >>> check_parameter_name("ocean.thickness_km", load_scenario("ilmare").model)
    ('ocean', 'thickness_km')
    """
    pre = f"{where}: " if where else ""
    layer_name, field_name = split_parameter(key)
    if layer_name == "ionosphere":
        if field_name != "conductance_S":
            raise ValueError(f"{pre}unknown parameter {key!r}: the ionosphere's only free field is conductance_S")
        if model.ionosphere is None:
            raise ValueError(f"{pre}unknown parameter {key!r}: the model has no ionosphere")
        return layer_name, field_name
    if layer_name not in model.layer_names:
        raise ValueError(f"{pre}unknown parameter {key!r}: no layer {layer_name!r} (layers: {', '.join(model.layer_names)})")
    if field_name not in FIELDS or FIELDS[field_name].applies_to == "ionosphere":
        allowed = [f for f, i in FIELDS.items() if i.applies_to != "ionosphere"]
        raise ValueError(f"{pre}unknown parameter {key!r}: field must be one of {', '.join(allowed)}")
    allowed_here = _fields_of(model, layer_name)
    if field_name not in allowed_here:
        why = {
            "chemistry": "only a layer defined by its chemistry (solute and salinity_g_per_kg) has a salinity",
            "chemistry-temperature": "only a chemistry-defined layer that sets temperature_C can vary its temperature "
            "(otherwise it sits at the freezing point)",
        }[FIELDS[field_name].applies_to]
        raise ValueError(f"{pre}{key!r} cannot vary: {why}")
    if field_name == "thickness_km":
        if model.layers[-1].thickness_km is not None:
            raise ValueError(f"{pre}{key!r} cannot vary: the model has no fill layer (a layer without thickness) to absorb it")
        if layer_name == model.layer_names[-1]:
            raise ValueError(f"{pre}{key!r} cannot vary: {layer_name!r} is the fill layer; it absorbs the other thicknesses")
    return layer_name, field_name


@dataclass(frozen=True)
class Parameter:
    """A named model parameter with a range and a scale: an inversion prior or a map axis.

    Attributes
    ----------
    name : str
        ``"LAYER.FIELD"``.
    lo, hi : float
        Range in the field's unit (``unit``), lo < hi.
    scale : {"linear", "log"}
        A uniform (linear) or log-uniform (log) prior; evenly or logarithmically spaced grids.

    Examples
    --------
    >>> p = Parameter("ocean.conductivity_S_per_m", 0.1, 10.0, "log")
    >>> p.unit, p.label
    ('S/m', 'ocean conductivity (S/m)')
    >>> p.grid(3)
    array([ 0.1,  1. , 10. ])
    """

    name: str
    lo: float
    hi: float
    scale: str = "linear"

    @property
    def layer(self) -> str:
        """The layer name (``"ionosphere"`` for the ionosphere's conductance)."""
        return split_parameter(self.name)[0]

    @property
    def field(self) -> str:
        """The field name (``thickness_km``, ...)."""
        return split_parameter(self.name)[1]

    @property
    def unit(self) -> str:
        """Unit of the values ("km", "S/m", "g/kg", "degC", "S")."""
        return FIELDS[self.field].unit

    @property
    def label(self) -> str:
        """Label with unit, e.g. ``"ice shell thickness (km)"``."""
        return parameter_label(self.name)

    @property
    def log(self) -> bool:
        """True for a log scale."""
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
        """Cell edges of ``points`` equal-prior-mass cells, in the prior coordinate; shape (points + 1,)."""
        a, b = self.prior_bounds
        return np.linspace(a, b, int(points) + 1)

    def midpoints(self, points: int) -> np.ndarray:
        """Cell midpoints of that grid as values (field unit); shape (points,)."""
        e = self.edges(points)
        return self.from_prior(0.5 * (e[:-1] + e[1:]))

    def grid(self, points: int) -> np.ndarray:
        """``points`` values from lo to hi inclusive, evenly spaced in the prior coordinate; exact end points."""
        a, b = self.prior_bounds
        v = self.from_prior(np.linspace(a, b, int(points)))
        v[0], v[-1] = self.lo, self.hi
        return v


def check_parameter_range(p: Parameter, where: str = "") -> None:
    """Check a parameter's range against its field's physical domain and its scale.

    Raises
    ------
    ValueError
        Naming the parameter: unknown field or scale, non-finite bounds, lo >= hi, a range
        leaving the physical domain (thickness <= 0, conductivity, salinity or conductance < 0),
        or a log scale with lo <= 0.

    Examples
    --------
    >>> check_parameter_range(Parameter("ocean.thickness_km", 0.0, 10.0))
    Traceback (most recent call last):
    ...
    ValueError: 'ocean.thickness_km': range [0, 10] leaves the physical domain: thickness_km must be > 0 km
    """
    pre = f"{where}: " if where else ""
    if p.field not in FIELDS:
        raise ValueError(f"{pre}{p.name!r}: unknown field {p.field!r}; allowed: {', '.join(FIELDS)}")
    if p.scale not in _SCALES:
        raise ValueError(f"{pre}{p.name!r}: scale must be 'linear' or 'log', got {p.scale!r}")
    for v in (p.lo, p.hi):
        if isinstance(v, bool) or not isinstance(v, (int, float, np.integer, np.floating)):
            raise ValueError(f"{pre}{p.name!r}: range bounds must be numbers, got {v!r}")
    if not (math.isfinite(p.lo) and math.isfinite(p.hi)):
        raise ValueError(f"{pre}{p.name!r}: range must be finite, got [{p.lo!r}, {p.hi!r}]")
    if not p.lo < p.hi:
        raise ValueError(f"{pre}{p.name!r}: empty range: lo = {p.lo:g} must be < hi = {p.hi:g}")
    info = FIELDS[p.field]
    if p.lo < info.lowest or (p.lo == info.lowest and not info.inclusive):
        rel = ">=" if info.inclusive else ">"
        raise ValueError(
            f"{pre}{p.name!r}: range [{p.lo:g}, {p.hi:g}] leaves the physical domain: {p.field} must be "
            f"{rel} {info.lowest:g} {info.unit}"
        )
    if p.log and p.lo <= 0:
        raise ValueError(f"{pre}{p.name!r}: scale = 'log' needs lo > 0, got {p.lo:g}")


def parameter_value(model, key: str) -> float:
    """The model's own value of ``"LAYER.FIELD"`` in the field's unit (NaN where the model has none).

    The fill layer's thickness is NaN (it has none of its own); a chemistry-defined ocean's
    conductivity is the mean of its profile.

    Examples
    --------
    >>> from induct import load_scenario
    >>> parameter_value(load_scenario("ilmare").model, "ocean.thickness_km")
    95.0
    """
    layer_name, field_name = split_parameter(key)
    if layer_name == "ionosphere":
        return float("nan") if model.ionosphere is None else float(model.ionosphere.conductance_S)
    layer = model.layer(layer_name)
    if field_name in ("thickness_km", "conductivity_S_per_m"):
        value = getattr(layer, field_name)
    else:
        value = (layer.extra or {}).get(field_name)
    if value is None or isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        return float("nan")
    return float(value)


def parse_truth(items, model, names, where: str = "--truth") -> dict:
    """True parameter values from ``"LAYER.FIELD=VALUE"`` strings, for figures that mark them.

    Parameters
    ----------
    items : sequence of str
        ``"LAYER.FIELD=VALUE"`` assignments (value in the field's unit). (The
        command line also accepts a scenario instead, whose own values are the
        truth: :func:`parameter_value`.)
    model : InteriorModel
        The model whose parameters are named (checks layer and field names).
    names : sequence of str
        The parameters the figure shows; every assignment must name one of them.
    where : str
        Prefix of error messages.

    Returns
    -------
    dict of str to float
        Value (field units) by parameter name.

    Raises
    ------
    ValueError
        A malformed item, an unknown or repeated parameter, one the figure does
        not show, or a value that is not a finite number in the field's domain.

    Examples
    --------
    >>> from induct import load_scenario
    >>> model = load_scenario("ilmare").model
    >>> parse_truth(["ocean.conductivity_S_per_m=3", "ice shell.thickness_km=25"], model,
    ...             ["ice shell.thickness_km", "ocean.conductivity_S_per_m"])
    {'ocean.conductivity_S_per_m': 3.0, 'ice shell.thickness_km': 25.0}
    """
    out = {}
    shown = list(names)
    for item in items:
        key, sep, text = str(item).partition("=")
        key = key.strip()
        if not sep or not key:
            raise ValueError(f"{where}: expected LAYER.FIELD=VALUE (e.g. 'ocean.conductivity_S_per_m=3') or one scenario, got {item!r}")
        try:
            split_parameter(key)
        except ValueError as exc:
            raise ValueError(f"{where}: {exc}") from None
        check_parameter_name(key, model, where)
        if key not in shown:
            raise ValueError(f"{where}: {key!r} is not shown in this figure (shown: {', '.join(shown)})")
        if key in out:
            raise ValueError(f"{where}: {key!r} given twice")
        try:
            value = float(text)
        except ValueError:
            raise ValueError(f"{where}: {key!r} needs a number, got {text.strip()!r}") from None
        info = FIELDS[split_parameter(key)[1]]
        if not math.isfinite(value) or value < info.lowest or (value == info.lowest and not info.inclusive):
            rel = ">=" if info.inclusive else ">"
            raise ValueError(f"{where}: {key!r} must be a finite number {rel} {info.lowest:g} {info.unit}, got {text.strip()!r}")
        out[key] = value
    return out
