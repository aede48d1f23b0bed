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

Salinity (and, where the layer sets one, temperature) of a chemistry-defined ocean
are evaluated by the same ocean model as every forward run
(:func:`induct.model.ocean.ocean_sublayers` through
:meth:`induct.model.interior.InteriorModel.parameter_arrays`): same pressure,
gravity, temperature profile and sub-layers.
"""

from __future__ import annotations

import warnings
from typing import Mapping, Sequence

import numpy as np

from induct.model.interior import InteriorModel
from induct.model.parameters import Parameter, check_parameter_name, check_parameter_range

__all__ = ["Parameter", "parse_parameters", "ParameterMap"]

_SPEC_KEYS = {"range", "scale"}


def _range(spec, name, where):
    if not isinstance(spec, dict):
        raise ValueError(f"{where}: {name!r} must be a table such as {{ range = [lo, hi], scale = \"linear\" }}")
    extra = sorted(set(spec) - _SPEC_KEYS)
    if extra:
        raise ValueError(f"{where}: {name!r}: unknown key(s) {', '.join(map(repr, extra))}; allowed: range, scale")
    rng = spec.get("range")
    if not isinstance(rng, list) or len(rng) != 2 or any(isinstance(v, bool) or not isinstance(v, (int, float)) for v in rng):
        raise ValueError(f"{where}: {name!r}: range must be [lo, hi] (two numbers), got {rng!r}")
    return float(rng[0]), float(rng[1]), spec.get("scale", "linear")


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
        check_parameter_name(name, model, where)
        lo, hi, scale = _range(spec, name, where)
        p = Parameter(name, lo, hi, scale)
        check_parameter_range(p, where)
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

    tabulate : bool
        With salinity or temperature free, interpolate the ocean's conductivity from a
        table of the same ocean model (:mod:`induct.model.ocean_table`, relative error
        below 2e-6 measured when built) instead of evaluating the brine model at every
        sub-layer (default True; False: the exact path).

    Raises
    ------
    ValueError
        When salinity is free but ``induct.brine.conductivity`` is not
        available, or the layer lacks what the brine model needs.
    """

    def __init__(self, model: InteriorModel, parameters: Sequence[Parameter], *, tabulate: bool = True):
        self.model = model
        self.parameters = tuple(parameters)
        self.ocean_tables = {}
        if any(p.field in ("salinity_g_per_kg", "temperature_C") for p in self.parameters):
            self._check_corners()
            if tabulate:
                from induct.model.ocean_table import build_ocean_tables

                self.ocean_tables = build_ocean_tables(model, {p.name: (p.lo, p.hi) for p in self.parameters})

    def _check_corners(self):
        """Evaluate the ocean model at the corners of the prior ranges so that bad ranges fail early."""
        grids = np.meshgrid(*[np.array([p.lo, p.hi]) for p in self.parameters], indexing="ij")
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                self.model.parameter_arrays(self.values([g.ravel() for g in grids]))
        except ValueError as exc:
            names = ", ".join(p.name for p in self.parameters)
            raise ValueError(f"the ocean model rejects part of the prior ranges of {names}: {exc}") from None

    def values(self, columns: Sequence[np.ndarray]) -> dict:
        """The ``values`` mapping for :meth:`InteriorModel.sweep_response`.

        Parameters
        ----------
        columns : sequence of ndarray, each shape (N,)
            Values of each free parameter (field units), in parameter order.

        Returns
        -------
        dict
            ``"LAYER.FIELD" -> ndarray (N,)``.
        """
        return {p.name: np.asarray(c, dtype=float) for p, c in zip(self.parameters, columns)}

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
            out[:, sel] = self.model.sweep_response(values, period_h[sel] * 3600.0, int(deg),
                                                    ocean_tables=self.ocean_tables)
        return out
