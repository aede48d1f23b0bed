"""Oceans described by their chemistry: hydrostatic pressure, temperature and a conductivity profile.

A scenario layer may give ``solute`` and ``salinity_g_per_kg`` instead of
``conductivity_S_per_m``. This module turns it into a depth profile:

1. **Gravity and pressure.** Every layer has a density (``density_kg_per_m3``, or
   the default of its ``kind``, see :data:`DEFAULT_DENSITY`); g(r) = G M(r)/r**2
   follows from the enclosed mass, and the hydrostatic pressure
   p(r) = integral_r^R rho g dr' is integrated exactly for piecewise-constant
   densities (:func:`hydrostatic_pressure_MPa`).
2. **Temperature.** By default the ocean is isothermal at the freezing point of
   its brine at the ice-ocean interface pressure; ``temperature_C`` fixes it
   instead (it must not be below the local freezing point), and
   ``temperature_profile = "adiabatic"`` starts at that temperature and follows
   seawater's adiabat (:func:`adiabatic_temperature_C`).
3. **Sub-layers.** The ocean is split into equal sub-layers whose conductivity is
   :func:`induct.brine.conductivity` at each sub-layer's mid-depth pressure and
   temperature. The number of sub-layers doubles until the response at the
   check periods changes by less than 1e-6 (relative).

Extrapolations of the conductivity model are collected (not repeated per
sub-layer) and reported with the profile.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field, replace

import numpy as np

from induct.constants import G, METRES_PER_KM, SECONDS_PER_HOUR

__all__ = [
    "adiabatic_temperature_C",
    "adiabatic_lapse_rate_K_per_MPa",
    "layer_radii_m",
    "layer_chemistry",
    "is_chemistry_layer",
    "ocean_sublayers",
    "MAX_SUBLAYERS",
    "DEFAULT_DENSITY",
    "OceanProfile",
    "layer_density",
    "hydrostatic_pressure_MPa",
    "gravity_m_per_s2",
    "resolve_chemistry_layers",
    "CONVERGENCE_RTOL",
]


#: Default densities (kg/m^3) by layer kind: round values of common practice for icy-moon interiors
#: (ice Ih about 920, salty water about 1050, hydrated or silicate rock about 3000, iron-sulfur cores about 7000).
DEFAULT_DENSITY = {"ice": 920.0, "ocean": 1050.0, "rock": 3000.0, "iron": 7000.0}

_KIND_WORDS = {
    "ice": ("ice", "shell", "crust"),
    "ocean": ("ocean", "brine", "sea", "water"),
    "iron": ("core", "iron", "metal"),
}

#: Relative change of the response below which the sub-layer count has converged.
CONVERGENCE_RTOL = 1e-6

#: Most sub-layers a chemistry-defined ocean may be split into.
MAX_SUBLAYERS = 4096

#: Periods (h) used for the convergence check when a scenario gives none.
_CHECK_PERIODS_H = (1.0, 10.0, 100.0, 1000.0)


@dataclass(frozen=True)
class OceanProfile:
    """The depth profile used for one chemistry-defined ocean.

    Attributes
    ----------
    solute : str
    salinity_g_per_kg : float
    sublayers : int
        Number of equal sub-layers.
    depth_km : ndarray, shape (S,)
        Mid-depth of each sub-layer below the surface (km), top first.
    pressure_MPa, temperature_C, conductivity_S_per_m : ndarray, shape (S,)
        At each sub-layer's mid-depth, top first.
    extrapolated : tuple of str
        Messages of every extrapolation the conductivity model made (empty if none).
    """

    solute: str
    salinity_g_per_kg: float
    sublayers: int
    depth_km: np.ndarray
    pressure_MPa: np.ndarray
    temperature_C: np.ndarray
    conductivity_S_per_m: np.ndarray
    extrapolated: tuple = field(default_factory=tuple)

    @property
    def conductivity_range(self) -> tuple[float, float]:
        """(min, max) conductivity (S/m) over the profile."""
        return float(self.conductivity_S_per_m.min()), float(self.conductivity_S_per_m.max())


def layer_kind(layer) -> str:
    """The kind of a layer: its ``kind`` key, else a guess from its name and chemistry (documented)."""
    kind = layer.extra.get("kind")
    if kind is not None:
        if kind not in DEFAULT_DENSITY:
            raise ValueError(f"layer {layer.name!r}: kind must be one of {', '.join(DEFAULT_DENSITY)}, got {kind!r}")
        return kind
    if "salinity_g_per_kg" in layer.extra:
        return "ocean"
    name = layer.name.lower()
    for kind, words in _KIND_WORDS.items():
        if any(w in name for w in words):
            return kind
    return "rock"


def layer_density(layer) -> float:
    """Density of a layer (kg/m^3): its ``density_kg_per_m3`` or the default of its kind."""
    rho = layer.extra.get("density_kg_per_m3")
    if rho is None:
        return DEFAULT_DENSITY[layer_kind(layer)]
    if isinstance(rho, bool) or not isinstance(rho, (int, float)) or not (0 < rho < math.inf):
        raise ValueError(f"layer {layer.name!r}: density_kg_per_m3 must be > 0 and finite, got {rho!r}")
    return float(rho)


def _enclosed_mass(radii_m: np.ndarray, density: np.ndarray) -> np.ndarray:
    """Mass inside each layer's outer radius (kg); centre-outward arrays of shape (..., L)."""
    inner = np.concatenate([np.zeros(radii_m.shape[:-1] + (1,)), radii_m[..., :-1]], axis=-1)
    shell = 4.0 / 3.0 * math.pi * density * (radii_m**3 - inner**3)
    return np.cumsum(shell, axis=-1)


def layer_radii_m(thicknesses_km, radius_km) -> np.ndarray:
    """Outer radii (m), centre outward, of layers given by their thicknesses from the surface down.

    Parameters
    ----------
    thicknesses_km : array_like, shape (..., L)
        Thickness of every layer (km), surface first; they sum to ``radius_km``.
    radius_km : float
        Body radius (km).

    Returns
    -------
    ndarray, shape (..., L)
        The last entry is exactly ``radius_km * 1000``.

    Examples
    --------
    >>> layer_radii_m([20.0, 80.0, 400.0], 500.0)
    array([400000., 480000., 500000.])
    """
    h = np.asarray(thicknesses_km, dtype=float)
    depth_bottom = np.cumsum(h, axis=-1)  # depth of each layer's bottom, surface down
    top_depth = np.concatenate([np.zeros(h.shape[:-1] + (1,)), depth_bottom[..., :-1]], axis=-1)
    radii = (radius_km - top_depth) * METRES_PER_KM  # outer radius of each layer, surface down
    return radii[..., ::-1].copy()


def gravity_m_per_s2(r_m, radii_m, density_kg_per_m3) -> np.ndarray:
    """Gravity g(r) = G M(r) / r**2 (m/s^2) inside a body of piecewise-constant density.

    Parameters
    ----------
    r_m : array_like
        Radii (m), 0 < r <= radii_m[-1].
    radii_m, density_kg_per_m3 : array_like, shape (L,)
        Layer outer radii (m) and densities (kg/m^3), from the centre outward.

    Examples
    --------
    >>> round(float(gravity_m_per_s2(1.0e6, [1.0e6], [3000.0])), 6)  # 4/3 pi G rho r
    0.838717
    """
    radii = np.asarray(radii_m, dtype=float)
    rho = np.asarray(density_kg_per_m3, dtype=float)
    r = np.asarray(r_m, dtype=float)
    mass_below = np.concatenate([[0.0], _enclosed_mass(radii, rho)])
    j = np.searchsorted(radii, r)  # layer holding r
    inner = np.concatenate([[0.0], radii[:-1]])[j]
    m = mass_below[j] + 4.0 / 3.0 * math.pi * rho[j] * (r**3 - inner**3)
    return G * m / r**2


def hydrostatic_pressure_MPa(r_m, radii_m, density_kg_per_m3) -> np.ndarray:
    """Hydrostatic pressure p(r) = integral_r^R rho g dr' (MPa, gauge: 0 at the surface).

    Exact for piecewise-constant density: within a layer of density rho with
    M(r) = C + (4 pi / 3) rho r**3, the integral of rho G M / r**2 is
    rho G [C (1/r - 1/r_b) + (2 pi / 3) rho (r_b**2 - r**2)]. A uniform body gives
    p(r) = (2 pi / 3) G rho**2 (R**2 - r**2). Vectorised over a batch of bodies.

    Parameters
    ----------
    r_m : array_like, shape (..., S) or (S,)
        Radii (m), 0 <= r <= R, of each body in the batch.
    radii_m : array_like, shape (..., L)
        Layer outer radii (m), from the centre outward.
    density_kg_per_m3 : array_like, shape (L,) or (..., L)
        Layer densities (kg/m^3), from the centre outward.

    Returns
    -------
    ndarray, shape (..., S)

    Examples
    --------
    >>> p = hydrostatic_pressure_MPa([0.0], [1.0e6], [3000.0])  # (2 pi / 3) G rho^2 R^2
    >>> round(float(p[0]), 6)
    1258.075911
    """
    radii = np.asarray(radii_m, dtype=float)
    rho = np.broadcast_to(np.asarray(density_kg_per_m3, dtype=float), radii.shape)
    r = np.asarray(r_m, dtype=float)
    scalar_batch = radii.ndim == 1
    if scalar_batch:
        radii, rho = radii[None], rho[None]
        r = np.atleast_1d(r)[None]
        out_shape = np.shape(r_m)
    inner = np.concatenate([np.zeros(radii.shape[:-1] + (1,)), radii[..., :-1]], axis=-1)
    shell = 4.0 / 3.0 * math.pi * rho * (radii**3 - inner**3)
    mass_top = np.cumsum(shell, axis=-1)
    const = mass_top - shell - 4.0 / 3.0 * math.pi * rho * inner**3  # C of each layer

    def within(rho_j, c_j, x, top):
        with np.errstate(divide="ignore", invalid="ignore"):
            term = np.where(x > 0, c_j * (1.0 / np.where(x > 0, x, 1.0) - 1.0 / top), 0.0)
        return rho_j * G * (term + 2.0 * math.pi / 3.0 * rho_j * (top**2 - x**2))

    # pressure difference across each whole layer, then the pressure at each layer's top (surface = 0)
    across = within(rho, const, inner, radii)
    above = np.cumsum(across[..., ::-1], axis=-1)[..., ::-1] - across  # sum over the layers outside j
    j = np.minimum(np.sum(radii[..., None, :] < r[..., :, None], axis=-1), radii.shape[-1] - 1)

    def pick(a):
        return np.take_along_axis(a, j, axis=-1)

    p = (pick(above) + within(pick(rho), pick(const), r, pick(radii))) / 1e6
    return p[0].reshape(out_shape) if scalar_batch else p


def adiabatic_lapse_rate_K_per_MPa(salinity, temperature_C, pressure_MPa):
    """Adiabatic temperature gradient of seawater, dT/dp (K/MPa).

    The UNESCO polynomial ATG of Bryden (1973), Deep-Sea Res. 20, as given in
    Fofonoff & Millard (1983), UNESCO Tech. Pap. Mar. Sci. 44 (check value
    ATG(40, 40 degC, 10000 dbar) = 3.255976e-4 K/dbar). Stated range: salinity
    0-40, -2 to 40 degC, 0-100 MPa; beyond it the polynomial is extrapolated.
    Temperature is converted to IPTS-68 (t68 = 1.00024 t90).
    """
    s = np.asarray(salinity, dtype=float) - 35.0
    t = 1.00024 * np.asarray(temperature_C, dtype=float)
    p = 100.0 * np.asarray(pressure_MPa, dtype=float)  # dbar
    atg = (
        (((-2.1687e-16 * t + 1.8676e-14) * t - 4.6206e-13) * p
         + ((2.7759e-12 * t - 1.1351e-10) * s + ((-5.4481e-14 * t + 8.733e-12) * t - 6.7795e-10) * t + 1.8741e-8)) * p
        + (-4.2393e-8 * t + 1.8932e-6) * s
        + ((6.6228e-10 * t - 6.836e-8) * t + 8.5258e-6) * t
        + 3.5803e-5
    )
    return 100.0 * atg


#: Largest pressure step (MPa) of the adiabat integration (classical RK4).
_ADIABAT_STEP_MPA = 0.5


def adiabatic_temperature_C(pressure_MPa, top_temperature_C, salinity) -> np.ndarray:
    """Temperature along an adiabat from the top of an ocean (degC).

    Integrates dT/dp = :func:`adiabatic_lapse_rate_K_per_MPa` from the first
    pressure down with the classical fourth-order Runge-Kutta method, at most
    0.5 MPa per step (difference from scipy's ``solve_ivp`` at rtol 1e-10: below
    1e-10 K over 0-300 MPa, see the tests). Vectorised over a batch of oceans.
    Seawater's adiabat is used for every solute, with the salinity in g/kg
    standing in for Practical Salinity: an approximation for other brines,
    whose thermal expansivity is not modelled.

    Parameters
    ----------
    pressure_MPa : array_like, shape (..., S)
        Increasing gauge pressures (MPa) of each ocean; the first is its top.
    top_temperature_C : array_like, shape (...)
        Temperature at the first pressure (degC).
    salinity : array_like, shape (...)
        Salinity (Practical Salinity, or g/kg for other solutes).

    Returns
    -------
    ndarray, shape (..., S)

    Examples
    --------
    >>> t = adiabatic_temperature_C([0.0, 100.0], -2.0, 35.0)   # about 1 K warmer 100 MPa down
    >>> round(float(t[1] - t[0]), 3)
    1.043
    """
    p = np.asarray(pressure_MPa, dtype=float)
    t0 = np.asarray(top_temperature_C, dtype=float)
    s = np.asarray(salinity, dtype=float)
    out = np.empty(np.broadcast_shapes(p.shape, t0.shape + (1,), s.shape + (1,)))
    p = np.broadcast_to(p, out.shape)
    s = np.broadcast_to(s, out.shape[:-1])
    out[..., 0] = t0
    if out.shape[-1] > 1:
        dp_max = float(np.max(np.abs(np.diff(p, axis=-1)))) if p.size else 0.0
        steps = max(1, math.ceil(dp_max / _ADIABAT_STEP_MPA))
    for k in range(1, out.shape[-1]):
        t = out[..., k - 1].copy()
        pk = p[..., k - 1].copy()
        h = (p[..., k] - p[..., k - 1]) / steps
        for _ in range(steps):
            k1 = adiabatic_lapse_rate_K_per_MPa(s, t, pk)
            k2 = adiabatic_lapse_rate_K_per_MPa(s, t + 0.5 * h * k1, pk + 0.5 * h)
            k3 = adiabatic_lapse_rate_K_per_MPa(s, t + 0.5 * h * k2, pk + 0.5 * h)
            k4 = adiabatic_lapse_rate_K_per_MPa(s, t + h * k3, pk + h)
            t = t + h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4)
            pk = pk + h
        out[..., k] = t
    return out


def layer_chemistry(layer, where: str = "") -> dict:
    """The chemistry keys of a chemistry-defined layer, checked: solute, salinity, temperature, profile shape.

    Returns
    -------
    dict
        ``solute`` (str), ``salinity_g_per_kg`` (float), ``temperature_C`` (float or None: the
        freezing point at the ocean's top) and ``temperature_profile`` ("isothermal" or "adiabatic").
    """
    from induct import brine

    lw = where or f"layer {layer.name!r}"
    solute = layer.extra.get("solute")
    if solute is None:
        raise ValueError(f"{lw}: give solute (one of {', '.join(brine.SOLUTES)}) with salinity_g_per_kg")
    try:
        solute = brine.get_solute(solute).name  # canonical name from the solute registry
    except ValueError as exc:
        raise ValueError(f"{lw}: {exc}") from None
    shape = layer.extra.get("temperature_profile", "isothermal")
    if shape not in ("isothermal", "adiabatic"):
        raise ValueError(f"{lw}: temperature_profile must be 'isothermal' or 'adiabatic', got {shape!r}")
    t_fixed = layer.extra.get("temperature_C")
    return {
        "solute": solute,
        "salinity_g_per_kg": layer.extra["salinity_g_per_kg"],
        "temperature_C": None if t_fixed is None else float(t_fixed),
        "temperature_profile": shape,
    }


def is_chemistry_layer(layer) -> bool:
    """True for a layer whose conductivity follows from its chemistry (it carries salinity_g_per_kg)."""
    return bool(layer.extra) and "salinity_g_per_kg" in layer.extra


def ocean_sublayers(solute, salinity_g_per_kg, temperature_C, temperature_profile, layer_index, radii_m,
                    density_kg_per_m3, sublayers, *, warn=False, table=None):
    """Unchecked kernel: pressure, temperature and conductivity of an ocean's equal sub-layers.

    The one ocean model of induct, used by forward runs (:func:`resolve_chemistry_layers`) and by
    every sweep, map and inversion (:meth:`induct.model.interior.InteriorModel.parameter_arrays`).
    The ocean (layer ``layer_index`` of the centre-outward arrays) is split into ``sublayers``
    equal sub-layers; each gets the hydrostatic pressure at its mid-depth (gravity from the
    enclosed mass), the temperature (fixed, or the freezing point at the ocean's top; then
    isothermal or along the adiabat), and :func:`induct.brine.conductivity` there.

    Parameters
    ----------
    solute : str
        A solute known to :mod:`induct.brine`.
    salinity_g_per_kg : array_like, shape (...)
        Salinity (g/kg; Practical Salinity for seawater).
    temperature_C : array_like, shape (...), or None
        Temperature at the ocean's top (degC); None for the freezing point there.
    temperature_profile : {"isothermal", "adiabatic"}
    layer_index : int
        Index of the ocean in the centre-outward layer arrays.
    radii_m : ndarray, shape (..., L)
        Outer radii (m) of the layers, centre outward.
    density_kg_per_m3 : ndarray, shape (L,)
        Layer densities, centre outward.
    sublayers : int
        Number of equal sub-layers S.
    warn : bool
        Let :mod:`induct.brine` issue its extrapolation warnings.
    table : induct.model.ocean_table.OceanConductivityTable, optional
        Interpolate the conductivity from this table of the same model (pressures and
        gravity are computed exactly as always). Used only when every point lies inside
        the table; the temperatures are then not computed (NaN) and no flags are set.

    Returns
    -------
    mid_m, pressure_MPa, temperature_C, conductivity_S_per_m : ndarray, shape (..., S)
        At each sub-layer's mid-depth, top first.
    flags : ndarray of int, shape (..., S)
        :class:`induct.brine.ExtrapolationFlag` bits.
    """
    from induct import brine

    radii = np.asarray(radii_m, dtype=float)
    k = int(layer_index)
    r_top = radii[..., k]
    r_bot = radii[..., k - 1] if k > 0 else np.zeros_like(r_top)
    frac = (np.arange(sublayers) + 0.5) / sublayers
    mid = r_top[..., None] - frac * (r_top - r_bot)[..., None]
    p_top = hydrostatic_pressure_MPa(r_top[..., None], radii, density_kg_per_m3)[..., 0]
    p = hydrostatic_pressure_MPa(mid, radii, density_kg_per_m3)
    salinity = np.broadcast_to(np.asarray(salinity_g_per_kg, dtype=float), r_top.shape)
    if table is not None and (temperature_C is None) != table.fixed_temperature:
        if table.fixed_temperature:
            second, press = np.broadcast_to(np.asarray(temperature_C, dtype=float), r_top.shape), p
        else:
            second, press = p_top, p - p_top[..., None]
        if np.all(table.covers(salinity[..., None], second[..., None], press)):
            rows = table.rows(salinity, second)
            sigma = table.along(rows, press.reshape(rows.shape[0], -1)).reshape(p.shape)
            return mid, p, np.full(p.shape, np.nan), sigma, np.zeros(p.shape, dtype=int)
    if temperature_C is None:
        top_t = np.asarray(brine.freezing_point(solute, salinity, p_top, warn=warn), dtype=float)
    else:
        top_t = np.broadcast_to(np.asarray(temperature_C, dtype=float), r_top.shape)
    if temperature_profile == "adiabatic":
        t = adiabatic_temperature_C(np.concatenate([p_top[..., None], p], axis=-1), top_t, salinity)[..., 1:]
    else:
        t = np.broadcast_to(top_t[..., None], p.shape)
    sigma, flags = brine.conductivity(solute, salinity[..., None], t, p, return_flags=True, warn=warn)
    return mid, p, np.asarray(t, dtype=float), np.asarray(sigma, dtype=float), np.asarray(flags)


def resolve_chemistry_layers(layers, body: dict, where: str, periods_h=None):
    """Replace chemistry-defined layers by the conductivity profile they imply.

    Parameters
    ----------
    layers : sequence of induct.model.interior.Layer
        Surface down; a chemistry layer has ``conductivity_S_per_m=None`` and
        ``solute``, ``salinity_g_per_kg`` in ``extra`` (``temperature_C`` optional).
    body : dict
        The scenario's ``[body]`` table (``radius_km``).
    where : str
        Context for error messages.
    periods_h : sequence of float, optional
        Periods for the convergence check (default 1, 10, 100, 1000 h).

    Returns
    -------
    list of Layer
        The same layers, each chemistry layer carrying its profile in
        ``extra["profile"]`` (an :class:`OceanProfile`) and the profile's
        mean conductivity as a nominal ``conductivity_S_per_m``.
    """
    from induct import brine
    from induct.model.response import transfer

    radius_km = float(body.get("radius_km"))
    thick = np.array([layer.thickness_km or 0.0 for layer in layers], dtype=float)
    if layers[-1].thickness_km is None:
        thick[-1] = radius_km - thick[:-1].sum()
    radii = layer_radii_m(thick, radius_km)  # centre outward
    density = np.array([layer_density(layer) for layer in layers[::-1]])
    nominal = np.array([1.0 if layer.conductivity_S_per_m is None else float(layer.conductivity_S_per_m)
                        for layer in layers[::-1]])
    check_periods = np.asarray(periods_h if periods_h is not None and len(periods_h) else _CHECK_PERIODS_H, dtype=float)
    out = list(layers)
    nlayer = len(layers)
    for i, layer in enumerate(layers):
        if layer.conductivity_S_per_m is not None or not is_chemistry_layer(layer):
            continue
        lw = f"{where}: layer {layer.name!r}"
        chem = layer_chemistry(layer, lw)
        k = nlayer - 1 - i  # index in the centre-outward arrays

        def profile(nsub):
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                try:
                    mid, p, t, sigma, _ = ocean_sublayers(
                        chem["solute"], chem["salinity_g_per_kg"], chem["temperature_C"],
                        chem["temperature_profile"], k, radii, density, nsub, warn=True)
                except ValueError as exc:
                    raise ValueError(f"{lw}: {exc}") from exc
            messages = tuple(sorted({str(w.message) for w in caught if issubclass(w.category, UserWarning)}))
            return mid, p, t, sigma, messages

        def response_with(sigma_sub):
            nsub = len(sigma_sub)
            r_top, r_bot = radii[k], (radii[k - 1] if k > 0 else 0.0)
            r_sub = r_top - (r_top - r_bot) * np.arange(nsub) / nsub  # outer radii, top first
            r_all = np.concatenate([radii[:k], r_sub[::-1], radii[k + 1:]])
            s_all = np.concatenate([nominal[:k], sigma_sub[::-1], nominal[k + 1:]])
            return transfer(r_all, s_all, check_periods * SECONDS_PER_HOUR)

        nsub = 4
        mid, p, t, sigma, messages = profile(nsub)
        previous = response_with(sigma)
        while True:
            nsub *= 2
            mid, p, t, sigma, messages = profile(nsub)
            current = response_with(sigma)
            change = np.max(np.abs(current - previous) / np.abs(current))
            if change < CONVERGENCE_RTOL:
                break
            if nsub >= MAX_SUBLAYERS:
                raise ValueError(f"{lw}: the ocean profile did not converge to {CONVERGENCE_RTOL:g} with {MAX_SUBLAYERS} sub-layers")
            previous = current
        freeze = np.asarray(brine.freezing_point(chem["solute"], chem["salinity_g_per_kg"], p, warn=False))
        if np.any(t < freeze - 1e-9):
            worst = int(np.argmax(freeze - t))
            raise ValueError(
                f"{lw}: temperature {t[worst]:.3f} degC at {p[worst]:.1f} MPa is below the freezing point "
                f"{freeze[worst]:.3f} degC there: the ocean would be frozen (raise temperature_C)"
            )
        prof = OceanProfile(
            solute=chem["solute"],
            salinity_g_per_kg=float(chem["salinity_g_per_kg"]),
            sublayers=nsub,
            depth_km=(radii[-1] - mid) / METRES_PER_KM,
            pressure_MPa=np.asarray(p, dtype=float),
            temperature_C=np.asarray(t, dtype=float),
            conductivity_S_per_m=sigma,
            extrapolated=messages,
        )
        extra = dict(layer.extra)
        extra["profile"] = prof
        out[i] = replace(layer, conductivity_S_per_m=float(np.mean(sigma)), extra=extra)
    return out
