"""Checked, user-level description of a layered body and its induction response.

Layers are listed from the surface down, each with a name, a thickness (km)
and a conductivity (S/m). The innermost layer may omit its thickness: it then
fills to the centre. An ionosphere may sit above the surface as a thin
conducting sheet. Every check names the layer and the field at fault.

The model is spherically symmetric quasi-static induction (mu = mu0): plasma
interaction, asymmetric or tidally deformed shells and motional induction are
not included.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field, replace
from typing import Mapping, Sequence

import numpy as np

from induct.constants import METRES_PER_KM, SECONDS_PER_HOUR
from induct.model.kernel import add_thin_sheet, layered_response
from induct.model.ocean import layer_chemistry, layer_density, layer_radii_m, ocean_sublayers
from induct.model.parameters import check_parameter_name
from induct.model.response import (
    amplitude,
    c_response_km,
    check_degree,
    phase_lag_deg,
    q_response,
    skin_depth_m,
    transfer,
)

__all__ = ["Layer", "Ionosphere", "InteriorModel", "ModelResponse"]

# Relative tolerance for "thicknesses sum to the radius" when no fill layer is given.
_SUM_RTOL = 1e-9


def _finite_number(value, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ValueError(f"{what} must be a number, got {value!r}")
    value = float(value)
    if math.isnan(value):
        raise ValueError(f"{what} is NaN")
    return value


@dataclass(frozen=True)
class Layer:
    """One spherical layer.

    Parameters
    ----------
    name : str
        Unique, non-empty name ("ice shell", "ocean", ...).
    conductivity_S_per_m : float
        Conductivity (S/m), >= 0; ``inf`` (perfect conductor) only for the
        innermost layer.
    thickness_km : float or None
        Thickness (km), > 0. ``None`` for the innermost layer makes it fill to
        the centre.
    extra : dict
        Further keys from a scenario (density, salinity, ...) kept for the
        modules that use them.
    """

    name: str
    conductivity_S_per_m: float | None
    thickness_km: float | None = None
    extra: Mapping = field(default_factory=dict)


@dataclass(frozen=True)
class Ionosphere:
    """A thin conducting sheet above the surface.

    Parameters
    ----------
    conductance_S : float
        Height-integrated conductance (S), >= 0 (100-10,000 S is typical of
        thin atmospheres of icy moons, common practice).
    altitude_km : float
        Altitude of the sheet above the surface (km), > 0.
    """

    conductance_S: float
    altitude_km: float


@dataclass(frozen=True)
class ModelResponse:
    """Response of an :class:`InteriorModel` at a set of periods.

    Attributes
    ----------
    periods_s : ndarray, shape (P,)
        Periods (s).
    response : ndarray of complex, shape (P,)
        R_n (exp(+i w t) convention, normalised at the body's radius).
    degree : int
        Degree n.
    model : InteriorModel
        The model that produced it.
    """

    periods_s: np.ndarray
    response: np.ndarray
    degree: int
    model: "InteriorModel"

    @property
    def periods_h(self) -> np.ndarray:
        """Periods (h), shape (P,)."""
        return self.periods_s / SECONDS_PER_HOUR

    @property
    def amplitude(self) -> np.ndarray:
        """A = |R_n|, shape (P,)."""
        return amplitude(self.response)

    @property
    def phase_lag_deg(self) -> np.ndarray:
        """Phase phi = arg R_n (degrees, 0-90), shape (P,): the induced field leads the perfect-conductor response by phi."""
        return phase_lag_deg(self.response)

    @property
    def q_response(self) -> np.ndarray:
        """Q_n = n/(n+1) R_n, shape (P,)."""
        return q_response(self.response, self.degree)

    @property
    def c_response_km(self) -> np.ndarray:
        """C-response (km, complex), shape (P,)."""
        return c_response_km(self.response, self.model.radius_km, self.degree)

    def skin_depths_km(self) -> dict[str, np.ndarray]:
        """Skin depth (km) of each conducting layer at each period: name -> shape (P,)."""
        out = {}
        for layer in self.model.layers:
            sigma = layer.conductivity_S_per_m
            if sigma and np.isfinite(sigma):
                out[layer.name] = skin_depth_m(sigma, self.periods_s) / METRES_PER_KM
        return out


class InteriorModel:
    """A radially layered body: checked once at construction.

    Parameters
    ----------
    radius_km : float
        Radius of the body (km), > 0; the reference radius of the response.
    layers : sequence of Layer
        From the surface down. The innermost layer may have ``thickness_km=None``
        and then fills to the centre; otherwise the thicknesses must sum to the
        radius (relative tolerance 1e-9).
    ionosphere : Ionosphere, optional
        Thin conducting sheet above the surface.
    name : str
        Name of the body (for tables and figures).

    Raises
    ------
    ValueError
        Naming the layer and field: empty or duplicate names, zero, negative or
        NaN thickness, missing, negative or NaN conductivity, ``inf`` outside
        the innermost layer, a fill layer that is not innermost, layers that
        reach past the centre, or thicknesses that do not sum to the radius
        when no layer fills to the centre.

    Examples
    --------
    >>> from induct import InteriorModel, Layer
    >>> moon = InteriorModel(1540.0, [Layer("ice shell", 1e-6, 20.0), Layer("ocean", 2.8, 95.0),
    ...                               Layer("mantle", 0.01, 825.0), Layer("core", 1e5)], name="Ilmare")
    >>> res = moon.response(periods_h=[12.12, 84.7])
    >>> res.amplitude.round(3), res.phase_lag_deg.round(2)
    (array([0.909, 0.86 ]), array([ 3.38, 16.97]))
    """

    def __init__(
        self,
        radius_km: float,
        layers: Sequence[Layer],
        ionosphere: Ionosphere | None = None,
        name: str = "body",
    ):
        self.name = str(name)
        self.radius_km = _finite_number(radius_km, "body.radius_km")
        if not (0.0 < self.radius_km < math.inf):
            raise ValueError(f"body.radius_km must be > 0 and finite, got {radius_km!r}")
        self.layers = tuple(layers)
        self.ionosphere = ionosphere
        self._check()

    # ------------------------------------------------------------------ checks
    def _check(self) -> None:
        if not self.layers:
            raise ValueError("the model needs at least one layer")
        seen = set()
        total = 0.0
        nlayer = len(self.layers)
        for i, layer in enumerate(self.layers):
            where = f"layer {i + 1} ({layer.name!r})"
            if not isinstance(layer.name, str) or not layer.name.strip():
                raise ValueError(f"layer {i + 1}: name must be a non-empty string")
            if "." in layer.name:
                raise ValueError(f"{where}: name must not contain '.' (used in LAYER.FIELD parameter names)")
            if layer.name in seen:
                raise ValueError(f"{where}: duplicate layer name {layer.name!r}; names must be unique")
            seen.add(layer.name)
            if layer.conductivity_S_per_m is None:
                raise ValueError(f"{where}: conductivity_S_per_m is missing (allowed: 0 <= sigma < inf S/m)")
            sigma = _finite_number(layer.conductivity_S_per_m, f"{where}: conductivity_S_per_m")
            if sigma < 0:
                raise ValueError(f"{where}: conductivity_S_per_m must be >= 0 S/m, got {sigma:g}")
            if math.isinf(sigma) and i != nlayer - 1:
                raise ValueError(f"{where}: conductivity_S_per_m may be inf only in the innermost layer")
            if layer.thickness_km is None:
                if i != nlayer - 1:
                    raise ValueError(
                        f"{where}: thickness_km is missing; only the innermost layer may omit it (it then fills to the centre)"
                    )
                continue
            h = _finite_number(layer.thickness_km, f"{where}: thickness_km")
            if not (0.0 < h < math.inf):
                raise ValueError(f"{where}: thickness_km must be > 0 km and finite, got {h:g}")
            total += h
            if total > self.radius_km * (1 + _SUM_RTOL):
                raise ValueError(
                    f"{where}: layers reach past the centre: thicknesses down to this layer sum to "
                    f"{total:g} km, more than body.radius_km = {self.radius_km:g} km"
                )
        fill = self.layers[-1].thickness_km is None
        if fill and total >= self.radius_km * (1 - _SUM_RTOL):
            raise ValueError(
                f"layer {nlayer} ({self.layers[-1].name!r}) fills to the centre but the layers above it already "
                f"sum to {total:g} km of body.radius_km = {self.radius_km:g} km, leaving it no room"
            )
        if not fill and abs(total - self.radius_km) > _SUM_RTOL * self.radius_km:
            raise ValueError(
                f"no layer fills to the centre and the thicknesses sum to {total:g} km, not body.radius_km = "
                f"{self.radius_km:g} km: give the innermost layer no thickness_km, or make the sum match"
            )
        if self.ionosphere is not None:
            cond = _finite_number(self.ionosphere.conductance_S, "ionosphere.conductance_S")
            alt = _finite_number(self.ionosphere.altitude_km, "ionosphere.altitude_km")
            if not 0.0 <= cond < math.inf:
                raise ValueError(f"ionosphere.conductance_S must be >= 0 S and finite, got {cond:g}")
            if not 0.0 < alt < math.inf:
                raise ValueError(f"ionosphere.altitude_km must be > 0 km and finite, got {alt:g}")

    # -------------------------------------------------------------- geometry
    @property
    def layer_names(self) -> tuple[str, ...]:
        """Layer names from the surface down."""
        return tuple(layer.name for layer in self.layers)

    def layer(self, name: str) -> Layer:
        """The layer called ``name`` (ValueError listing the names if absent)."""
        for layer in self.layers:
            if layer.name == name:
                return layer
        raise ValueError(f"no layer named {name!r}; layers are {', '.join(map(repr, self.layer_names))}")

    def thicknesses_km(self) -> np.ndarray:
        """Thickness of every layer (km), surface down, the fill layer included; shape (L,)."""
        h = np.array([layer.thickness_km or 0.0 for layer in self.layers], dtype=float)
        if self.layers[-1].thickness_km is None:
            h[-1] = self.radius_km - h[:-1].sum()
        return h

    def radii_m(self) -> np.ndarray:
        """Outer radius of each kernel layer (m), from the centre outward; shape (L',).

        A chemistry-defined ocean (a layer with a depth profile) contributes
        one kernel layer per sub-layer, so L' >= L.
        """
        return self.parameter_arrays({})[0]

    def conductivities(self) -> np.ndarray:
        """Conductivity of each kernel layer (S/m), from the centre outward; shape (L',)."""
        return self.parameter_arrays({})[1]

    def _profiles(self) -> list:
        """Per layer (surface down): sub-layer conductivities top first, or None for a uniform layer."""
        out = []
        for layer in self.layers:
            prof = layer.extra.get("profile") if layer.extra else None
            out.append(None if prof is None else np.asarray(prof.conductivity_S_per_m, dtype=float))
        return out

    def outer_conductor_radius_km(self) -> float:
        """Outer radius (km) of the outermost layer with conductivity > 0 (0 if none)."""
        radii = self.radii_m()[::-1] / METRES_PER_KM
        for r, layer in zip(radii, self.layers):
            if layer.conductivity_S_per_m > 0:
                return float(r)
        return 0.0

    # -------------------------------------------------------------- responses
    def response(self, periods_s=None, *, periods_h=None, degree: int = 1) -> ModelResponse:
        """Response at the given periods (give exactly one of ``periods_s``, ``periods_h``).

        Parameters
        ----------
        periods_s, periods_h : array_like, shape (P,)
            Periods in seconds or hours, > 0.
        degree : int
            Degree n (1-12).

        Returns
        -------
        ModelResponse
        """
        periods = _periods_seconds(periods_s, periods_h)
        n = check_degree(degree)
        radii, sigma = self.radii_m(), self.conductivities()
        r = transfer(radii, sigma, periods, n)
        if self.ionosphere is not None:
            r = self._with_ionosphere(r, periods, n)
        return ModelResponse(periods_s=periods, response=r, degree=n, model=self)

    def _with_ionosphere(self, response, periods_s, degree, conductance_S=None):
        ion = self.ionosphere
        radius_m = self.radius_km * METRES_PER_KM
        sheet_m = (self.radius_km + ion.altitude_km) * METRES_PER_KM
        cond = ion.conductance_S if conductance_S is None else conductance_S
        return add_thin_sheet(response, radius_m, sheet_m, cond, 2 * np.pi / periods_s, degree)

    def with_layer(self, name: str, **changes) -> "InteriorModel":
        """A copy with one layer's fields replaced (checked again)."""
        layers = [replace(layer, **changes) if layer.name == name else layer for layer in self.layers]
        if name not in self.layer_names:
            self.layer(name)  # raises with the list of names
        return InteriorModel(self.radius_km, layers, self.ionosphere, self.name)

    # ------------------------------------------------------- vectorised sweeps
    def parameter_arrays(self, values: Mapping[str, np.ndarray], ocean_tables: Mapping | None = None):
        """Layer arrays for many variants of this model at once (for sweeps and inversions).

        Parameters
        ----------
        values : mapping of str to array_like
            ``"LAYER.FIELD"`` -> values, with the names and units of
            :mod:`induct.model.parameters` (thickness, conductivity, salinity and
            temperature of a chemistry-defined ocean, ionosphere conductance). All
            arrays broadcast to a common batch shape ``(...)``. A changed
            thickness is absorbed by the fill layer (the one without a
            thickness). A chemistry-defined ocean is recomputed by the one ocean
            model (:func:`induct.model.ocean.ocean_sublayers`, with the sub-layer
            count of the scenario's converged profile) whenever its salinity or
            temperature or any thickness varies; otherwise its profile is reused.

        ocean_tables : mapping, optional
            ``layer name -> OceanConductivityTable``: interpolate those oceans' conductivities
            (:mod:`induct.model.ocean_table`) instead of evaluating the brine model at every
            sub-layer; pressures and sub-layers are unchanged.

        Returns
        -------
        radii_m : ndarray, shape (..., L')
            Outer radii from the centre outward (m); L' counts ocean sub-layers.
        conductivity_S_per_m : ndarray, shape (..., L')
            Conductivities from the centre outward (S/m).
        valid : ndarray of bool, shape (...)
            False where the thicknesses leave the fill layer no room
            (physically impossible; the radii there are not meaningful).
        ionosphere_conductance_S : ndarray or None, shape (...)
            The ionosphere's conductance, when the model has one.
        """
        parsed = {}
        for key, val in values.items():
            parsed[check_parameter_name(key, self)] = np.asarray(val, dtype=float)
        batch = np.broadcast_shapes(*(v.shape for v in parsed.values())) if parsed else ()
        names = self.layer_names
        nlayer = len(self.layers)
        thick = np.broadcast_to(self.thicknesses_km(), batch + (nlayer,)).copy()
        fill = self.layers[-1].thickness_km is None
        thickness_varies = False
        for (layer_name, field_name), val in parsed.items():
            if field_name == "thickness_km":
                thick[..., names.index(layer_name)] = val
                thickness_varies = True
        if fill:
            thick[..., -1] = self.radius_km - thick[..., :-1].sum(axis=-1)
        valid = np.all(thick > 0, axis=-1)
        safe = np.where(valid[..., None], thick, self.thicknesses_km())
        profiles = self._profiles()
        sigma_cols = []  # per layer: array (..., S_i) of sub-layer conductivities, top first
        for i, layer in enumerate(self.layers):
            given = parsed.get((layer.name, "conductivity_S_per_m"))
            if given is not None:
                sigma_cols.append(np.broadcast_to(given, batch)[..., None])
            elif profiles[i] is not None:
                chem_varies = any((layer.name, f) in parsed for f in ("salinity_g_per_kg", "temperature_C"))
                if chem_varies or thickness_varies:
                    sigma_cols.append(self._ocean_batch(i, safe, parsed, batch, (ocean_tables or {}).get(layer.name)))
                else:
                    sigma_cols.append(np.broadcast_to(profiles[i], batch + profiles[i].shape))
            else:
                sigma_cols.append(np.full(batch + (1,), float(layer.conductivity_S_per_m)))
        # Sub-layer thicknesses (surface down): each layer split equally among its sub-layers.
        sub_h = np.concatenate(
            [np.repeat(safe[..., i : i + 1] / col.shape[-1], col.shape[-1], axis=-1) for i, col in enumerate(sigma_cols)],
            axis=-1,
        )
        sigma = np.concatenate(sigma_cols, axis=-1)
        # Centre-outward radii; invalid rows are given harmless placeholder radii.
        radii = np.cumsum(sub_h[..., ::-1], axis=-1)
        radii *= self.radius_km / radii[..., -1:]
        radii *= METRES_PER_KM
        ion = parsed.get(("ionosphere", "conductance_S"))
        if ion is None and self.ionosphere is not None:
            ion = np.full(batch, self.ionosphere.conductance_S)
        return radii, sigma[..., ::-1].copy(), valid, (None if ion is None else np.broadcast_to(ion, batch))

    def _ocean_batch(self, i: int, thick: np.ndarray, parsed: dict, batch: tuple, table=None) -> np.ndarray:
        """Sub-layer conductivities (..., S), top first, of chemistry layer ``i`` for every variant."""
        layer = self.layers[i]
        chem = layer_chemistry(layer)
        nsub = layer.extra["profile"].sublayers
        salinity = np.broadcast_to(parsed.get((layer.name, "salinity_g_per_kg"), chem["salinity_g_per_kg"]), batch)
        temp = chem["temperature_C"]
        temperature = None if temp is None else np.broadcast_to(parsed.get((layer.name, "temperature_C"), temp), batch)
        # Variants that share thicknesses and chemistry share a profile: compute each once.
        columns = [thick.reshape(-1, thick.shape[-1]), salinity.reshape(-1, 1)]
        if temperature is not None:
            columns.append(temperature.reshape(-1, 1))
        keys, inverse = np.unique(np.concatenate(columns, axis=1), axis=0, return_inverse=True)
        nl = thick.shape[-1]
        radii = layer_radii_m(keys[:, :nl], self.radius_km)
        density = np.array([layer_density(la) for la in self.layers[::-1]])
        try:
            _, _, _, sigma, flags = ocean_sublayers(
                chem["solute"], keys[:, nl], None if temperature is None else keys[:, nl + 1],
                chem["temperature_profile"], nl - 1 - i, radii, density, nsub, table=table)
        except ValueError as exc:
            raise ValueError(f"layer {layer.name!r}: {exc}") from None
        if np.any(flags):
            warnings.warn(
                f"layer {layer.name!r}: some variants use brine conductivities extrapolated beyond the "
                "reference model (see induct.brine flags)",
                stacklevel=3,
            )
        return sigma[inverse.ravel()].reshape(batch + (nsub,))

    def sweep_response(self, values: Mapping[str, np.ndarray], periods_s, degree: int = 1,
                       ocean_tables: Mapping | None = None) -> np.ndarray:
        """R_n for many variants at many periods.

        Parameters
        ----------
        values : mapping
            As for :meth:`parameter_arrays`, batch shape ``(...)``.
        periods_s : array_like, shape (P,)
            Periods (s).
        degree : int
            Degree n.
        ocean_tables : mapping, optional
            As for :meth:`parameter_arrays`.

        Returns
        -------
        ndarray of complex, shape (..., P); NaN where the variant is invalid.
        """
        periods = _periods_seconds(periods_s, None)
        radii, sigma, valid, ion = self.parameter_arrays(values, ocean_tables)
        if np.any(~np.isfinite(sigma)[..., 1:]) or np.any(np.isnan(sigma)) or np.any(sigma < 0):
            raise ValueError("conductivity values must be >= 0 and finite (inf only in the innermost layer)")
        # The radii are built here (increasing, positive) and the conductivities checked above:
        # the unchecked kernel is called directly.
        r = layered_response(radii[..., None, :], sigma[..., None, :], 2.0 * np.pi / periods, check_degree(degree))
        if ion is not None:
            r = self._with_ionosphere(r, periods, degree, conductance_S=np.asarray(ion)[..., None])
        r[~valid] = np.nan
        return r


def _periods_seconds(periods_s, periods_h) -> np.ndarray:
    if (periods_s is None) == (periods_h is None):
        raise ValueError("give exactly one of periods_s or periods_h")
    if periods_s is None:
        arr = np.atleast_1d(np.asarray(periods_h, dtype=float)) * SECONDS_PER_HOUR
        what, scale = "period_h", SECONDS_PER_HOUR
    else:
        arr = np.atleast_1d(np.asarray(periods_s, dtype=float))
        what, scale = "period_s", 1.0
    if arr.ndim != 1 or arr.size == 0:
        raise ValueError(f"{what} must be a non-empty 1-D list of periods")
    bad = ~(np.isfinite(arr) & (arr > 0))
    if bad.any():
        raise ValueError(f"{what} must be finite and > 0, got {float(arr[bad][0] / scale)!r}")
    return arr
