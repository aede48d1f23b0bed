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

from induct.constants import METRES_PER_KM, SECONDS_PER_HOUR

__all__ = [
    "adiabatic_temperature_C",
    "adiabatic_lapse_rate_K_per_MPa",
    "G",
    "DEFAULT_DENSITY",
    "OceanProfile",
    "layer_density",
    "hydrostatic_pressure_MPa",
    "gravity_m_per_s2",
    "resolve_chemistry_layers",
    "CONVERGENCE_RTOL",
]

#: Newtonian constant of gravitation (m^3 kg^-1 s^-2), CODATA 2018.
G = 6.67430e-11

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
    """Mass inside each layer's outer radius (kg); centre-outward arrays of shape (L,)."""
    inner = np.concatenate([[0.0], radii_m[:-1]])
    shell = 4.0 / 3.0 * math.pi * density * (radii_m**3 - inner**3)
    return np.cumsum(shell)


def gravity_m_per_s2(r_m, radii_m, density_kg_per_m3) -> np.ndarray:
    """Gravity g(r) = G M(r) / r**2 (m/s^2) inside a body of piecewise-constant density.

    Parameters
    ----------
    r_m : array_like
        Radii (m), 0 < r <= radii_m[-1].
    radii_m, density_kg_per_m3 : array_like, shape (L,)
        Layer outer radii (m) and densities (kg/m^3), from the centre outward.
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
    p(r) = (2 pi / 3) G rho**2 (R**2 - r**2).

    Parameters
    ----------
    r_m : array_like
        Radii (m), 0 <= r <= R.
    radii_m, density_kg_per_m3 : array_like, shape (L,)
        Layer outer radii (m) and densities (kg/m^3), from the centre outward.
    """
    radii = np.asarray(radii_m, dtype=float)
    rho = np.asarray(density_kg_per_m3, dtype=float)
    r = np.asarray(r_m, dtype=float)
    inner = np.concatenate([[0.0], radii[:-1]])
    mass_top = _enclosed_mass(radii, rho)
    mass_bottom = mass_top - 4.0 / 3.0 * math.pi * rho * (radii**3 - inner**3)
    const = mass_bottom - 4.0 / 3.0 * math.pi * rho * inner**3  # C of each layer

    def within(j, x, top):
        with np.errstate(divide="ignore", invalid="ignore"):
            term = np.where(x > 0, const[j] * (1.0 / x - 1.0 / top), 0.0)
        return rho[j] * G * (term + 2.0 * math.pi / 3.0 * rho[j] * (top**2 - x**2))

    # pressure at the bottom of every layer, from the surface down
    p_bottom = np.zeros(len(radii))
    p_top = 0.0
    for j in range(len(radii) - 1, -1, -1):
        p_bottom[j] = p_top + within(j, inner[j], radii[j])
        p_top = p_bottom[j]
    p_top_of = np.concatenate([p_bottom[1:], [0.0]])
    j = np.clip(np.searchsorted(radii, r), 0, len(radii) - 1)
    return (p_top_of[j] + within(j, r, radii[j])) / 1e6


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


def adiabatic_temperature_C(pressure_MPa, top_temperature_C: float, salinity: float) -> np.ndarray:
    """Temperature along an adiabat from the top of an ocean (degC).

    Integrates dT/dp = :func:`adiabatic_lapse_rate_K_per_MPa` from the first
    pressure down (scipy ``solve_ivp``, rtol 1e-10). Seawater's adiabat is used
    for every solute, with the salinity in g/kg standing in for Practical
    Salinity: an approximation for other brines, whose thermal expansivity is
    not modelled.

    Parameters
    ----------
    pressure_MPa : array_like, shape (S,)
        Increasing gauge pressures (MPa); the first is the ocean top.
    top_temperature_C : float
        Temperature at the first pressure (degC).
    salinity : float
        Salinity (Practical Salinity, or g/kg for other solutes).

    Returns
    -------
    ndarray, shape (S,)
    """
    from scipy.integrate import solve_ivp

    p = np.asarray(pressure_MPa, dtype=float)
    if p.size == 1:
        return np.array([float(top_temperature_C)])

    def rhs(p_mpa, t):
        return [adiabatic_lapse_rate_K_per_MPa(salinity, t[0], p_mpa)]

    sol = solve_ivp(rhs, (p[0], p[-1]), [float(top_temperature_C)], t_eval=p, rtol=1e-10, atol=1e-12)
    return sol.y[0]


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
    from induct.model.interior import InteriorModel

    radius_km = body.get("radius_km")
    # A provisional model (chemistry layers at a placeholder conductivity) gives the geometry.
    provisional = [replace(layer, conductivity_S_per_m=1.0) if layer.conductivity_S_per_m is None else layer for layer in layers]
    model = InteriorModel(radius_km, provisional, name=body.get("name", "body"))
    radii = model.radii_m()  # centre outward
    density = np.array([layer_density(layer) for layer in layers[::-1]])
    check_periods = np.asarray(periods_h if periods_h is not None and len(periods_h) else _CHECK_PERIODS_H, dtype=float)
    out = list(layers)
    nlayer = len(layers)
    for i, layer in enumerate(layers):
        if layer.conductivity_S_per_m is not None or "salinity_g_per_kg" not in layer.extra:
            continue
        lw = f"{where}: layer {layer.name!r}"
        solute = layer.extra.get("solute")
        if solute is None:
            raise ValueError(f"{lw}: give solute (one of {', '.join(brine.SOLUTES)}) with salinity_g_per_kg")
        try:
            solute = brine.get_solute(solute).name  # canonical name from the solute registry
        except ValueError as exc:
            raise ValueError(f"{lw}: {exc}") from exc
        salinity = layer.extra["salinity_g_per_kg"]
        k = nlayer - 1 - i  # index in the centre-outward arrays
        r_top, r_bot = radii[k], (radii[k - 1] if k > 0 else 0.0)
        p_top = float(hydrostatic_pressure_MPa(r_top, radii, density))
        t_fixed = layer.extra.get("temperature_C")
        try:
            t_freeze_top = float(brine.freezing_point(solute, salinity, p_top))
        except ValueError as exc:
            raise ValueError(f"{lw}: {exc}") from exc
        temperature = t_freeze_top if t_fixed is None else float(t_fixed)
        shape = layer.extra.get("temperature_profile", "isothermal")
        if shape not in ("isothermal", "adiabatic"):
            raise ValueError(f"{lw}: temperature_profile must be 'isothermal' or 'adiabatic', got {shape!r}")

        def profile(nsub):
            edges = np.linspace(r_top, r_bot, nsub + 1)
            mid = 0.5 * (edges[:-1] + edges[1:])
            p = hydrostatic_pressure_MPa(mid, radii, density)
            if shape == "adiabatic":
                t = adiabatic_temperature_C(np.concatenate([[p_top], p]), temperature, salinity)[1:]
            else:
                t = np.full(nsub, temperature)
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                try:
                    sigma = np.asarray(brine.conductivity(solute, salinity, t, p), dtype=float)
                except ValueError as exc:
                    raise ValueError(f"{lw}: {exc}") from exc
            messages = tuple(sorted({str(w.message) for w in caught if issubclass(w.category, UserWarning)}))
            return mid, p, t, sigma, messages

        def response_with(sigma_sub):
            sub_h = (r_top - r_bot) / len(sigma_sub)
            r_sub = r_top - sub_h * np.arange(len(sigma_sub))  # outer radii, top first
            r_all = np.concatenate([radii[:k], r_sub[::-1], radii[k + 1 :]])
            s_all = np.concatenate([model.conductivities()[:k], sigma_sub[::-1], model.conductivities()[k + 1 :]])
            from induct.model.response import transfer

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
            if nsub >= 4096:
                raise ValueError(f"{lw}: the ocean profile did not converge to {CONVERGENCE_RTOL:g} with 4096 sub-layers")
            previous = current
        freeze = np.asarray(brine.freezing_point(solute, salinity, p, warn=False))
        if np.any(t < freeze - 1e-9):
            worst = int(np.argmax(freeze - t))
            raise ValueError(
                f"{lw}: temperature {t[worst]:.3f} degC at {p[worst]:.1f} MPa is below the freezing point "
                f"{freeze[worst]:.3f} degC there: the ocean would be frozen (raise temperature_C)"
            )
        prof = OceanProfile(
            solute=solute,
            salinity_g_per_kg=float(salinity),
            sublayers=nsub,
            depth_km=(radii[-1] - mid) / METRES_PER_KM,
            pressure_MPa=np.asarray(p, dtype=float),
            temperature_C=t,
            conductivity_S_per_m=sigma,
            extrapolated=messages,
        )
        extra = dict(layer.extra)
        extra["profile"] = prof
        out[i] = replace(layer, conductivity_S_per_m=float(np.mean(sigma)), extra=extra)
    return out
