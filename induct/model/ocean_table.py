"""Tabulated sub-layer conductivity of a chemistry-defined ocean: the one ocean model, evaluated fast.

:func:`induct.model.ocean.ocean_sublayers` evaluates the brine model (freezing
point, temperature profile, conductivity) at every sub-layer of every variant:
tens of microseconds per point, far too slow for a salinity x thickness x
thickness grid of a million variants with 128 sub-layers each. The conductivity of
a sub-layer depends on three numbers only:

* with the temperature at the ocean's top the local freezing point (the default),
  isothermal or adiabatic: salinity S, the pressure at the ocean's top p_top, and
  the pressure below the top dp = p - p_top;
* with a fixed (possibly free) isothermal temperature: S, the temperature T and p.

:class:`OceanConductivityTable` evaluates the exact model once on a tensor grid of
these three coordinates (the same functions as :func:`ocean_sublayers`), and
interpolates log(conductivity) with tensor-product cubic Lagrange polynomials
(four nodes per axis): first in the two per-variant coordinates (a row over dp or
p per variant), then along the sub-layers. The table covers the ranges a given
inversion or map can reach (with a margin); points outside it, and temperature
profiles the table does not cover (adiabatic with a fixed top temperature), use
the exact path. The interpolation error is measured against the exact path when
the table is built (:attr:`OceanConductivityTable.max_rel_error`, on random points
between the nodes) and the node counts double until it is below
:data:`TABLE_RTOL` (2e-6 relative in conductivity; the response, which changes by a fraction of the
relative conductivity change, is checked against the exact path in the tests to 1e-6).
"""

from __future__ import annotations

import math
import warnings

import numpy as np

__all__ = ["OceanConductivityTable", "TABLE_RTOL", "lagrange_weights"]

#: Largest accepted relative interpolation error of the conductivity (checked at build time).
TABLE_RTOL = 2e-6
#: Starting node counts (salinity, second coordinate, pressure) and the most nodes per axis.
_START_NODES = (16, 8, 16)
_MAX_NODES = 256
#: Random check points used to measure the interpolation error.
_CHECK_POINTS = 400


def lagrange_weights(u: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Four-point cubic Lagrange stencil on nodes 0..n-1 (n >= 4).

    Parameters
    ----------
    u : ndarray
        Positions in node units (0 <= u <= n - 1).
    n : int
        Number of nodes.

    Returns
    -------
    first : ndarray of int, shape like u
        First node of each stencil.
    weights : ndarray, shape u.shape + (4,)
        Weights of nodes first .. first + 3 (they reproduce cubics exactly).

    Examples
    --------
    >>> i, w = lagrange_weights(np.array([1.5]), 6)
    >>> int(i[0]), float(w[0] @ (np.arange(4.0) + i[0]) ** 3)   # x**3 at x = 1.5
    (0, 3.375)
    """
    u = np.asarray(u, dtype=float)
    first = np.clip(np.floor(u).astype(np.int64) - 1, 0, n - 4)
    t = u - first
    w = np.stack([
        -(t - 1.0) * (t - 2.0) * (t - 3.0) / 6.0,
        t * (t - 2.0) * (t - 3.0) / 2.0,
        -t * (t - 1.0) * (t - 3.0) / 2.0,
        t * (t - 1.0) * (t - 2.0) / 6.0,
    ], axis=-1)
    return first, w


class OceanConductivityTable:
    """Tabulated log-conductivity of one chemistry-defined ocean over (S, second coordinate, pressure).

    Parameters
    ----------
    solute : str
        A solute known to :mod:`induct.brine`.
    temperature_profile : {"isothermal", "adiabatic"}
    fixed_temperature : bool
        False: the ocean's top is at the local freezing point and the coordinates are
        (S, p_top, dp). True: isothermal at a given temperature, coordinates (S, T, p).
    salinity_range, second_range, pressure_range : (float, float)
        Ranges covered (g/kg; MPa or degC; MPa). A margin is added inside.
    rtol : float
        Required relative interpolation error (default :data:`TABLE_RTOL`).

    Attributes
    ----------
    nodes : tuple of ndarray
        Node positions of the three axes.
    max_rel_error : float
        Largest relative error of the interpolated conductivity against the exact model
        on random check points (measured when built).

    Raises
    ------
    ValueError
        When the exact model rejects part of the ranges, or the error target is not
        reached with 256 nodes per axis.

    Examples
    --------
    >>> tab = OceanConductivityTable("MgSO4", "isothermal", False, (40, 60), (20, 30), (0, 100))
    >>> tab.max_rel_error < 2e-6
    True
    """

    def __init__(self, solute, temperature_profile, fixed_temperature, salinity_range, second_range,
                 pressure_range, rtol: float = TABLE_RTOL):
        if temperature_profile == "adiabatic" and fixed_temperature:
            raise ValueError("the table covers a fixed temperature only for an isothermal ocean")
        self.solute = solute
        self.temperature_profile = temperature_profile
        self.fixed_temperature = bool(fixed_temperature)
        self.rtol = float(rtol)
        self.lo = np.array([salinity_range[0], second_range[0], pressure_range[0]], dtype=float)
        self.hi = np.array([salinity_range[1], second_range[1], pressure_range[1]], dtype=float)
        # Degenerate (fixed) axes get a small width so that the stencil is defined.
        width = self.hi - self.lo
        pad = np.maximum(width * 0.02, np.array([1e-3, 1e-3, 1e-3]))
        floor = np.array([0.5 * self.lo[0], 0.0 if not self.fixed_temperature else -np.inf, 0.0])
        self.lo = np.maximum(self.lo - pad, floor)
        self.hi = self.hi + pad
        self.lo[0], self.hi[0] = math.log(self.lo[0]), math.log(self.hi[0])  # axis 0 in log salinity
        counts = list(_START_NODES)
        rng = np.random.default_rng(20261202)
        check = self.lo + (self.hi - self.lo) * rng.random((_CHECK_POINTS, 3))
        check[:, 0] = np.exp(check[:, 0])
        exact = self.exact(check[:, 0], check[:, 1], check[:, 2])
        while True:
            self.nodes = tuple(np.linspace(a, b, n) for a, b, n in zip(self.lo, self.hi, counts))
            grids = np.meshgrid(*self.nodes, indexing="ij")
            self.values = np.log(self.exact(np.exp(grids[0].ravel()), grids[1].ravel(), grids[2].ravel())).reshape(grids[0].shape)
            got = self.interpolate(check[:, 0], check[:, 1], check[:, 2])
            self.max_rel_error = float(np.max(np.abs(got / exact - 1.0)))
            if self.max_rel_error < self.rtol:
                break
            if max(counts) >= _MAX_NODES:
                raise ValueError(
                    f"the conductivity table did not reach a relative error of {self.rtol:g} with {_MAX_NODES} nodes "
                    f"per axis (error {self.max_rel_error:.3g})"
                )
            counts = self._next_counts(counts, check, exact)
        self.counts = tuple(counts)

    def _next_counts(self, counts, check, exact):
        """Double the node count of the axis along which the interpolation is worst.

        Each axis is probed by moving the check points to that axis's nodes (the
        interpolation along it is then exact) and measuring the error that remains.
        """
        worst, axis = -1.0, 0
        for a in range(3):
            probe = check.copy()
            nodes = self.nodes[a]
            col = np.log(probe[:, a]) if a == 0 else probe[:, a]
            col = nodes[np.clip(np.searchsorted(nodes, col), 0, len(nodes) - 1)]
            probe[:, a] = np.exp(col) if a == 0 else col
            got = self.interpolate(probe[:, 0], probe[:, 1], probe[:, 2])
            rest = float(np.max(np.abs(got / self.exact(probe[:, 0], probe[:, 1], probe[:, 2]) - 1.0)))
            gain = self.max_rel_error - rest  # the part of the error due to axis a
            if gain > worst:
                worst, axis = gain, a
        counts = list(counts)
        counts[axis] = min(2 * counts[axis], _MAX_NODES)
        return counts

    def exact(self, salinity, second, pressure):
        """Exact conductivity (S/m) at sub-layer points (the path of :func:`induct.model.ocean.ocean_sublayers`).

        Parameters
        ----------
        salinity, second, pressure : ndarray, shape (N,)
            S (g/kg); p_top (MPa) or T (degC); dp (MPa) or p (MPa).
        """
        from induct import brine
        from induct.model.ocean import adiabatic_temperature_C

        s = np.asarray(salinity, dtype=float)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            if self.fixed_temperature:
                return np.asarray(brine.conductivity(self.solute, s, second, pressure, warn=False), dtype=float)
            p_top = np.asarray(second, dtype=float)
            p = p_top + np.asarray(pressure, dtype=float)
            t_top = np.asarray(brine.freezing_point(self.solute, s, p_top, warn=False), dtype=float)
            if self.temperature_profile == "adiabatic":
                t = adiabatic_temperature_C(np.stack([p_top, p], axis=-1), t_top, s)[..., 1]
            else:
                t = t_top
            return np.asarray(brine.conductivity(self.solute, s, t, p, warn=False), dtype=float)

    def covers(self, salinity, second, pressure) -> np.ndarray:
        """True where every point lies inside the table (arrays broadcast)."""
        out = np.ones(np.broadcast_shapes(np.shape(salinity), np.shape(second), np.shape(pressure)), dtype=bool)
        for v, a, b in zip((np.log(salinity), second, pressure), self.lo, self.hi):
            out &= (np.asarray(v) >= a) & (np.asarray(v) <= b)
        return out

    def rows(self, salinity, second) -> np.ndarray:
        """log-conductivity along the pressure nodes for each (S, second) pair; shape (K, n_p)."""
        s = np.log(np.asarray(salinity, dtype=float).ravel())
        x = np.asarray(second, dtype=float).ravel()
        n0, n1 = len(self.nodes[0]), len(self.nodes[1])
        i0, w0 = lagrange_weights((s - self.lo[0]) / (self.hi[0] - self.lo[0]) * (n0 - 1), n0)
        i1, w1 = lagrange_weights((x - self.lo[1]) / (self.hi[1] - self.lo[1]) * (n1 - 1), n1)
        out = np.zeros((s.size, len(self.nodes[2])))
        for a in range(4):
            for b in range(4):
                out += (w0[:, a] * w1[:, b])[:, None] * self.values[i0 + a, i1 + b, :]
        return out

    def along(self, rows: np.ndarray, pressure: np.ndarray) -> np.ndarray:
        """Conductivity (S/m) at pressures (K, S') given each variant's row (K, n_p)."""
        n2 = len(self.nodes[2])
        p = np.asarray(pressure, dtype=float)
        i2, w2 = lagrange_weights((p - self.lo[2]) / (self.hi[2] - self.lo[2]) * (n2 - 1), n2)
        k = np.arange(rows.shape[0])[:, None]
        log_sigma = sum(w2[..., a] * rows[k, i2 + a] for a in range(4))
        return np.exp(log_sigma)

    def interpolate(self, salinity, second, pressure) -> np.ndarray:
        """Interpolated conductivity (S/m) at single points; all arrays shape (N,)."""
        rows = self.rows(salinity, second)
        return self.along(rows, np.asarray(pressure, dtype=float).reshape(-1, 1))[:, 0]


def table_ranges_note(table: OceanConductivityTable) -> str:
    """One line describing a table (for benchmarks and logs)."""
    return (f"{table.solute} conductivity table {table.counts[0]} x {table.counts[1]} x {table.counts[2]} nodes, "
            f"max relative error {table.max_rel_error:.2g} (measured at {_CHECK_POINTS} random points)")


def build_ocean_tables(model, ranges: dict, rtol: float = TABLE_RTOL) -> dict:
    """Conductivity tables for the chemistry-defined oceans of ``model`` over parameter ranges.

    Parameters
    ----------
    model : induct.model.interior.InteriorModel
    ranges : dict
        ``"LAYER.FIELD" -> (lo, hi)`` of the parameters that vary (field units).
    rtol : float
        Required relative interpolation error of the conductivity.

    Returns
    -------
    dict
        ``layer name -> OceanConductivityTable`` for every chemistry ocean whose profile
        varies and that a table covers (an adiabatic ocean at a fixed temperature is
        left to the exact path).
    """
    from itertools import product

    from induct.model.ocean import (hydrostatic_pressure_MPa, is_chemistry_layer, layer_chemistry, layer_density,
                                    layer_radii_m)

    names = model.layer_names
    thick_free = {k.rsplit(".", 1)[0]: v for k, v in ranges.items() if k.endswith(".thickness_km")}
    base = model.thicknesses_km()
    choices = [(float(base[i]),) if n not in thick_free else tuple(map(float, thick_free[n])) for i, n in enumerate(names)]
    thick = np.array(list(product(*choices)), dtype=float)
    if model.layers[-1].thickness_km is None:
        thick[:, -1] = model.radius_km - thick[:, :-1].sum(axis=1)
    thick = thick[np.all(thick > 0, axis=1)]
    if thick.size == 0:
        return {}
    radii = layer_radii_m(thick, model.radius_km)
    density = np.array([layer_density(la) for la in model.layers[::-1]])
    tables = {}
    nl = len(names)
    for i, layer in enumerate(model.layers):
        if not is_chemistry_layer(layer) or "profile" not in layer.extra:
            continue
        chem = layer_chemistry(layer)
        k = nl - 1 - i
        r_top = radii[:, k]
        r_bot = radii[:, k - 1] if k > 0 else np.zeros_like(r_top)
        p_top = hydrostatic_pressure_MPa(r_top[:, None], radii, density)[:, 0]
        p_bot = hydrostatic_pressure_MPa(r_bot[:, None], radii, density)[:, 0]
        sal = ranges.get(f"{layer.name}.salinity_g_per_kg", (chem["salinity_g_per_kg"],) * 2)
        fixed = chem["temperature_C"] is not None
        if fixed and chem["temperature_profile"] == "adiabatic":
            continue
        if fixed:
            second = ranges.get(f"{layer.name}.temperature_C", (chem["temperature_C"],) * 2)
            press = (float(p_top.min()), float(p_bot.max()))
        else:
            second = (float(p_top.min()), float(p_top.max()))
            press = (0.0, float((p_bot - p_top).max()))
        tables[layer.name] = OceanConductivityTable(chem["solute"], chem["temperature_profile"], fixed,
                                                    tuple(map(float, sal)), second, press, rtol=rtol)
    return tables
