"""Candidate flybys for planning: straight or hyperbolic passes generated from ranges (files: :mod:`induct.io.candidates`).

A candidate is one flyby track: times (s from the epoch of the driving lines)
and moon-centred positions (km) in the flow frame (x along the corotation
flow, y toward the planet's spin axis and perpendicular to it, z along the
spin axis; see :mod:`induct.field.orbit`).

File format
-----------
Comma-separated text with a header naming the columns, ``#`` comment lines
and blank lines skipped, columns in any order, extra columns ignored::

    # two candidate flybys, flow frame
    candidate,t_s,x_km,y_km,z_km
    A,215000.0,-5200.3,1817.2,-2950.0
    A,215010.0,-5140.1,1790.0,-2941.2
    ...
    B,480000.0,...

One track per candidate id (the ``candidate`` column, read as text); the rows
of a candidate need not be contiguous but its times must increase strictly
in file order, and it needs at least two rows.

Generated candidates
--------------------
:func:`generate_candidates` takes values (a number or a list of numbers) of
the closest-approach altitude, latitude and longitude, the time of closest
approach (or the phase of the main driving line then), speed, duration,
sampling step and inclination, and makes one candidate for every combination
(Cartesian product).

* Closest-approach point: latitude and longitude in the flow frame,
  ``rhat = (cos lat cos lon, cos lat sin lon, sin lat)``; longitude 0 deg
  faces +x (downstream of the corotation flow, the wake side), 90 deg faces
  +y (toward the planet), 180 deg faces the oncoming flow, 270 deg away from
  the planet; latitude +90 deg is +z.
* Direction of motion at closest approach (perpendicular to ``rhat``):
  with ``inclination_deg = 0`` it is the flow direction +x projected onto the
  plane perpendicular to ``rhat`` (the spacecraft moves with the plasma flow);
  where ``rhat`` is along +-x it is the projection of +z instead. A non-zero
  inclination turns that direction about ``rhat`` by the given angle
  (right-handed: from ``e1`` toward ``rhat x e1``).
* Time of closest approach: ``t_ca_s`` directly, or ``phase_deg``, the phase
  ``360 t / T_main mod 360`` of the main driving line (largest ``|B_k|``;
  its field is ``Re{B_main exp(i 2 pi t / T_main)}``) at closest approach;
  the first such time at or after ``start_s`` is used. Other lines have
  other phases at that time.
* Track shape: ``trajectory="straight"`` (default): a straight line at
  constant speed through the closest-approach point. Within an hour of
  closest approach a fast flyby (several km/s) past a moon of radius about
  1500 km bends little; the moon's gravity is neglected.
  ``trajectory="hyperbolic"``: the two-body Kepler hyperbola with the given
  speed at closest approach (periapsis) and the moon's ``gm_km3_s2`` (see
  :func:`moon_gm_km3_s2`); the moon is treated as a point mass, other
  bodies (the planet) are neglected.
* Samples: every ``step_s`` seconds from ``-duration_s/2`` to
  ``+duration_s/2`` around closest approach (``floor(duration/step) + 1``
  samples, symmetric about closest approach).

These are geometric planning tracks, not navigation solutions.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field

import numpy as np


__all__ = [
    "Candidate",
    "closest_approach_frame",
    "straight_track",
    "hyperbolic_track",
    "moon_gm_km3_s2",
    "main_line_index",
    "time_of_phase_s",
    "generate_candidates",
    "parse_value_range",
    "closest_approach_summary",
]

#: Newtonian constant of gravitation (m^3 kg^-1 s^-2), CODATA 2018.
G_SI = 6.67430e-11


@dataclass(frozen=True, eq=False)
class Candidate:
    """One candidate flyby.

    Parameters
    ----------
    name : str
        Identifier, unique within a plan.
    times_s : array_like, shape (N,)
        Times (s from the epoch of the driving lines), finite, strictly increasing, N >= 2.
    positions_km : array_like, shape (N, 3)
        Moon-centred positions (km), flow frame, finite.
    info : dict
        How the candidate was made (generation values such as ``altitude_km``), for reports.

    Raises
    ------
    ValueError
        Wrong shapes, non-finite values or times that do not increase strictly (naming the sample).

    Examples
    --------
    >>> import numpy as np
    >>> c = Candidate("A", [0.0, 10.0], [[2000.0, 0.0, 0.0], [2000.0, 50.0, 0.0]])
    >>> c.size, c.min_radius_km
    (2, 2000.0)
    """

    name: str
    times_s: np.ndarray
    positions_km: np.ndarray
    info: dict = field(default_factory=dict)

    def __post_init__(self):
        name = str(self.name)
        t = np.array(self.times_s, dtype=float)
        pos = np.array(self.positions_km, dtype=float)
        where = f"candidate {name!r}"
        if t.ndim != 1 or t.size < 2:
            raise ValueError(f"{where}: times_s must have shape (N,) with N >= 2, got {t.shape}")
        if pos.shape != (t.size, 3):
            raise ValueError(f"{where}: positions_km must have shape (N, 3) = ({t.size}, 3), got {pos.shape}")
        bad = ~np.isfinite(t)
        if bad.any():
            i = int(np.argmax(bad))
            raise ValueError(f"{where}: times_s[{i}] must be finite, got {t[i]!r}")
        bad = ~np.isfinite(pos)
        if bad.any():
            i, c = np.argwhere(bad)[0]
            raise ValueError(f"{where}: positions_km[{i}, {c}] must be finite, got {pos[i, c]!r}")
        step = np.diff(t)
        if np.any(step <= 0.0):
            i = int(np.argmax(step <= 0.0)) + 1
            raise ValueError(f"{where}: times_s[{i}] = {t[i]!r} does not follow times_s[{i - 1}] = {t[i - 1]!r}; "
                             "times must increase strictly")
        t.setflags(write=False)
        pos.setflags(write=False)
        object.__setattr__(self, "name", name)
        object.__setattr__(self, "times_s", t)
        object.__setattr__(self, "positions_km", pos)
        object.__setattr__(self, "info", dict(self.info))

    @property
    def size(self) -> int:
        """Number of samples N."""
        return int(self.times_s.size)

    @property
    def min_radius_km(self) -> float:
        """Smallest distance from the moon's centre along the track (km)."""
        return float(np.min(np.linalg.norm(self.positions_km, axis=1)))

    def closest_approach(self) -> tuple[float, np.ndarray]:
        """Time (s) and position (km, shape (3,)) of the sample closest to the moon's centre."""
        i = int(np.argmin(np.einsum("ij,ij->i", self.positions_km, self.positions_km)))
        return float(self.times_s[i]), self.positions_km[i].copy()


# --------------------------------------------------------------------------- files
def closest_approach_frame(lat_deg, lon_deg, inclination_deg=0.0):
    """Unit radius and unit direction of motion at closest approach (flow frame).

    Parameters
    ----------
    lat_deg, lon_deg : float
        Latitude and longitude of the closest-approach point in the flow frame (deg; see the module docstring).
    inclination_deg : float
        Rotation of the direction of motion about the radius (deg, right-handed) from the default direction
        (+x projected onto the plane perpendicular to the radius; +z projected where the radius is along +-x).

    Returns
    -------
    rhat : ndarray, shape (3,)
    vhat : ndarray, shape (3,)
        Perpendicular unit vectors.

    Examples
    --------
    >>> rhat, vhat = closest_approach_frame(0.0, 90.0)     # over the sub-planet point
    >>> [round(float(v), 12) + 0.0 for v in rhat], [round(float(v), 12) + 0.0 for v in vhat]
    ([0.0, 1.0, 0.0], [1.0, 0.0, 0.0])
    """
    lat, lon, inc = math.radians(float(lat_deg)), math.radians(float(lon_deg)), math.radians(float(inclination_deg))
    rhat = np.array([math.cos(lat) * math.cos(lon), math.cos(lat) * math.sin(lon), math.sin(lat)])
    e1 = np.array([1.0, 0.0, 0.0]) - rhat[0] * rhat
    if np.linalg.norm(e1) < 1e-9:
        e1 = np.array([0.0, 0.0, 1.0]) - rhat[2] * rhat
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(rhat, e1)
    return rhat, math.cos(inc) * e1 + math.sin(inc) * e2


def _offsets(duration_s: float, step_s: float) -> np.ndarray:
    half = 0.5 * float(duration_s)
    n = int(math.floor(half / step_s + 1e-9))
    return np.arange(-n, n + 1, dtype=float) * step_s


def _check_positive(value, what):
    if isinstance(value, bool) or not (math.isfinite(value) and value > 0.0):
        raise ValueError(f"{what} must be finite and > 0, got {value!r}")
    return float(value)


def straight_track(rhat, vhat, ca_radius_km, speed_km_s, t_ca_s, duration_s, step_s):
    """Straight pass at constant speed through the closest-approach point.

    Parameters
    ----------
    rhat, vhat : array_like, shape (3,)
        Unit radius of closest approach and unit direction of motion (perpendicular), flow frame.
    ca_radius_km : float
        Distance of closest approach from the moon's centre (km).
    speed_km_s : float
        Speed (km/s).
    t_ca_s : float
        Time of closest approach (s from the epoch of the driving lines).
    duration_s, step_s : float
        Length of the track and sampling step (s); samples symmetric about closest approach.

    Returns
    -------
    times_s : ndarray, shape (N,)
    positions_km : ndarray, shape (N, 3)

    Examples
    --------
    >>> t, p = straight_track([0, 1, 0], [1, 0, 0], 1640.0, 5.0, 100.0, 20.0, 10.0)
    >>> t.tolist(), p[:, 0].tolist()
    ([90.0, 100.0, 110.0], [-50.0, 0.0, 50.0])
    """
    dt = _offsets(_check_positive(duration_s, "duration_s"), _check_positive(step_s, "step_s"))
    r = np.asarray(rhat, dtype=float)
    v = np.asarray(vhat, dtype=float)
    pos = float(ca_radius_km) * r[None, :] + float(speed_km_s) * dt[:, None] * v[None, :]
    return float(t_ca_s) + dt, pos


def _solve_hyperbolic_kepler(mean, e):
    """H with ``e sinh H - H = M`` (Newton from an asymptotic start); vectorised."""
    m = np.asarray(mean, dtype=float)
    h = np.sign(m) * np.log(2.0 * np.abs(m) / e + 1.8)
    for _ in range(100):
        f = e * np.sinh(h) - h - m
        step = f / (e * np.cosh(h) - 1.0)
        h = h - step
        if np.all(np.abs(step) <= 1e-14 * np.maximum(1.0, np.abs(h))):
            break
    return h


def hyperbolic_track(rhat, vhat, ca_radius_km, speed_km_s, t_ca_s, duration_s, step_s, gm_km3_s2):
    """Two-body Kepler hyperbola with periapsis at the closest-approach point.

    Parameters
    ----------
    rhat, vhat : array_like, shape (3,)
        Unit radius of periapsis and unit velocity direction there (perpendicular), flow frame.
    ca_radius_km : float
        Periapsis distance from the moon's centre (km).
    speed_km_s : float
        Speed at periapsis (km/s); must exceed the escape speed ``sqrt(2 GM / r_p)``.
    t_ca_s, duration_s, step_s : float
        As for :func:`straight_track`.
    gm_km3_s2 : float
        Gravitational parameter GM of the moon (km^3/s^2), > 0.

    Returns
    -------
    times_s : ndarray, shape (N,)
    positions_km : ndarray, shape (N, 3)

    Raises
    ------
    ValueError
        If the pass is bound (speed at or below escape speed).

    Notes
    -----
    Eccentricity ``e = r_p v_p**2 / GM - 1``, semi-major axis ``a = r_p / (1 - e) < 0``, mean motion
    ``n = sqrt(GM / |a|**3)``; ``e sinh H - H = n (t - t_ca)``; in the periapsis frame
    ``x = a (cosh H - e)``, ``y = -a sqrt(e**2 - 1) sinh H`` (e.g. Vallado 2013, Fundamentals of
    Astrodynamics and Applications, 4th ed., sec. 2.2, from memory; checked in the tests against a numerical
    integration of the two-body equations).

    Examples
    --------
    >>> t, p = hyperbolic_track([1, 0, 0], [0, 1, 0], 1700.0, 5.0, 0.0, 600.0, 300.0, 5000.0)
    >>> round(float(p[1, 0]), 6), round(float(p[1, 1]), 6)
    (1700.0, 0.0)
    """
    mu = _check_positive(gm_km3_s2, "gm_km3_s2")
    rp = _check_positive(ca_radius_km, "ca_radius_km")
    vp = _check_positive(speed_km_s, "speed_km_s")
    e = rp * vp**2 / mu - 1.0
    if e <= 1.0:
        raise ValueError(f"speed_km_s = {vp:g} km/s at closest approach is not above the escape speed "
                         f"{math.sqrt(2.0 * mu / rp):.6g} km/s at {rp:g} km: the pass would be bound")
    a = rp / (1.0 - e)
    n = math.sqrt(mu / abs(a) ** 3)
    dt = _offsets(_check_positive(duration_s, "duration_s"), _check_positive(step_s, "step_s"))
    h = _solve_hyperbolic_kepler(n * dt, e)
    x = a * (np.cosh(h) - e)
    y = -a * math.sqrt(e * e - 1.0) * np.sinh(h)
    r = np.asarray(rhat, dtype=float)
    v = np.asarray(vhat, dtype=float)
    return float(t_ca_s) + dt, x[:, None] * r[None, :] + y[:, None] * v[None, :]


def moon_gm_km3_s2(model) -> float:
    """GM of a layered moon (km^3/s^2) from the ``density_kg_per_m3`` of its layers.

    Parameters
    ----------
    model : InteriorModel
        Every layer needs ``density_kg_per_m3`` in its extra keys.

    Returns
    -------
    float
        G M with G = 6.67430e-11 m^3 kg^-1 s^-2 (CODATA 2018).

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> round(moon_gm_km3_s2(load_scenario("ilmare").model))
    3018
    """
    missing = [layer.name for layer in model.layers if "density_kg_per_m3" not in (layer.extra or {})]
    if missing:
        raise ValueError(f"the moon's mass needs density_kg_per_m3 on every layer; missing on {', '.join(map(repr, missing))}")
    radii = np.asarray(model.radii_m(), dtype=float)
    if radii.size != len(model.layers):
        raise ValueError("the moon's mass needs one kernel layer per layer (no depth profiles)")
    inner = np.concatenate([[0.0], radii[:-1]])
    rho = np.array([layer.extra["density_kg_per_m3"] for layer in model.layers[::-1]], dtype=float)
    mass = float(np.sum(4.0 / 3.0 * np.pi * rho * (radii**3 - inner**3)))
    return G_SI * mass * 1e-9


def main_line_index(lines) -> int:
    """Index of the main driving line: the one with the largest ``|B_k|`` (Euclidean norm of the complex vector)."""
    lines = list(lines)
    if not lines:
        raise ValueError("lines: give at least one driving line")
    return int(np.argmax([np.linalg.norm(np.asarray(ln.b_complex_nT)) for ln in lines]))


def time_of_phase_s(phase_deg, period_s: float, start_s: float = 0.0):
    """First time at or after ``start_s`` when ``360 t / period_s mod 360`` equals ``phase_deg``.

    Parameters
    ----------
    phase_deg : float or array_like
        Phase (deg).
    period_s : float
        Period (s), > 0.
    start_s : float
        Earliest time (s).

    Returns
    -------
    float or ndarray
        Time (s from the epoch of the driving lines).

    Examples
    --------
    >>> float(time_of_phase_s(90.0, 3600.0, start_s=1000.0))
    4500.0
    """
    period = _check_positive(period_s, "period_s")
    frac = np.mod((np.asarray(phase_deg, dtype=float) / 360.0) - float(start_s) / period, 1.0)
    return float(start_s) + frac * period


def _values(value, what):
    arr = np.atleast_1d(np.asarray(value, dtype=float))
    if arr.ndim != 1 or arr.size == 0:
        raise ValueError(f"{what}: give a number or a non-empty list of numbers")
    bad = ~np.isfinite(arr)
    if bad.any():
        raise ValueError(f"{what}: values must be finite, got {arr[bad][0]!r}")
    return arr


def parse_value_range(text: str) -> np.ndarray:
    """Values from ``"V"``, ``"V1,V2,..."`` or ``"LO:HI:N"`` (N evenly spaced values, ends included).

    Examples
    --------
    >>> parse_value_range("50:250:3").tolist(), parse_value_range("10,20").tolist()
    ([50.0, 150.0, 250.0], [10.0, 20.0])
    """
    text = str(text).strip()
    try:
        if ":" in text:
            parts = text.split(":")
            if len(parts) != 3:
                raise ValueError
            lo, hi, n = float(parts[0]), float(parts[1]), int(parts[2])
            if n < 1 or not (math.isfinite(lo) and math.isfinite(hi)):
                raise ValueError
            return np.linspace(lo, hi, n)
        return _values([float(v) for v in text.split(",")], "value")
    except ValueError:
        raise ValueError(f"cannot read {text!r} as values: give V, V1,V2,... or LO:HI:N (N >= 1)") from None


def generate_candidates(
    radius_km: float,
    *,
    altitude_km,
    lat_deg=0.0,
    lon_deg=0.0,
    t_ca_s=None,
    phase_deg=None,
    lines=None,
    start_s: float = 0.0,
    speed_km_s=5.0,
    duration_s=3600.0,
    step_s: float = 6.0,
    inclination_deg=0.0,
    trajectory: str = "straight",
    gm_km3_s2: float | None = None,
    prefix: str = "c",
) -> list[Candidate]:
    """Candidate flybys for every combination of the given closest-approach values.

    Parameters
    ----------
    radius_km : float
        Radius of the moon (km), > 0.
    altitude_km : float or sequence of float
        Closest-approach altitude above ``radius_km`` (km), > 0.
    lat_deg, lon_deg : float or sequence of float
        Closest-approach latitude and longitude in the flow frame (deg; module docstring).
    t_ca_s : float or sequence of float, optional
        Time of closest approach (s from the epoch of the driving lines).
    phase_deg : float or sequence of float, optional
        Instead of ``t_ca_s``: phase of the main driving line at closest approach (deg); needs ``lines``.
    lines : sequence of DriveLine, optional
        Driving lines (for ``phase_deg``).
    start_s : float
        With ``phase_deg``: the earliest time of closest approach (s).
    speed_km_s : float or sequence of float
        Speed at closest approach (km/s), > 0.
    duration_s : float or sequence of float
        Track length (s), > 0, centred on closest approach.
    step_s : float
        Sampling step (s), > 0. The Fisher information grows with the number of samples: use the noise of
        one sample at this step (for white noise, ``sigma_1s / sqrt(step_s / 1 s)`` after averaging 1 s samples).
    inclination_deg : float or sequence of float
        Rotation of the direction of motion about the radius (deg; module docstring).
    trajectory : {"straight", "hyperbolic"}
        Track shape; ``"hyperbolic"`` needs ``gm_km3_s2``.
    gm_km3_s2 : float, optional
        GM of the moon (km^3/s^2); see :func:`moon_gm_km3_s2`.
    prefix : str
        Names are ``prefix`` followed by a running number (``c0000``, ``c0001``, ...).

    Returns
    -------
    list of Candidate
        Product order: altitude, latitude, longitude, time (or phase), speed, duration, inclination
        (the last varies fastest). ``info`` holds the values of each candidate.

    Raises
    ------
    ValueError
        Bad values, both or neither of ``t_ca_s`` and ``phase_deg``, ``phase_deg`` without ``lines``,
        a bound hyperbolic pass.

    Examples
    --------
    >>> cands = generate_candidates(1540.0, altitude_km=[100, 400], t_ca_s=0.0, duration_s=600.0, step_s=60.0)
    >>> [c.name for c in cands], cands[0].size, round(cands[1].min_radius_km, 6)
    (['c0000', 'c0001'], 11, 1940.0)
    """
    radius = _check_positive(radius_km, "radius_km")
    if (t_ca_s is None) == (phase_deg is None):
        raise ValueError("give exactly one of t_ca_s (time of closest approach) and phase_deg (phase of the main line)")
    if trajectory not in ("straight", "hyperbolic"):
        raise ValueError(f"trajectory must be 'straight' or 'hyperbolic', got {trajectory!r}")
    if trajectory == "hyperbolic" and gm_km3_s2 is None:
        raise ValueError("trajectory='hyperbolic' needs gm_km3_s2 (the moon's GM, km^3/s^2; see moon_gm_km3_s2)")
    step = _check_positive(step_s, "step_s")
    alt = _values(altitude_km, "altitude_km")
    if np.any(alt <= 0.0):
        raise ValueError(f"altitude_km must be > 0 km, got {alt[alt <= 0.0][0]:g}")
    speeds = _values(speed_km_s, "speed_km_s")
    durations = _values(duration_s, "duration_s")
    for what, arr in (("speed_km_s", speeds), ("duration_s", durations)):
        if np.any(arr <= 0.0):
            raise ValueError(f"{what} must be > 0, got {arr[arr <= 0.0][0]:g}")
    lats = _values(lat_deg, "lat_deg")
    if np.any(np.abs(lats) > 90.0):
        raise ValueError(f"lat_deg must lie in [-90, 90], got {lats[np.abs(lats) > 90.0][0]:g}")
    lons = _values(lon_deg, "lon_deg")
    incs = _values(inclination_deg, "inclination_deg")
    if phase_deg is not None:
        if lines is None:
            raise ValueError("phase_deg needs the driving lines (lines=...) to know the main line's period")
        lines = list(lines)
        main = lines[main_line_index(lines)]
        phases = _values(phase_deg, "phase_deg")
        times = np.atleast_1d(time_of_phase_s(phases, main.period_s, float(start_s)))
        time_info = [{"phase_deg": float(p), "t_ca_s": float(t), "main_line": main.label or f"{main.period_h:.6g} h"}
                     for p, t in zip(phases, times)]
    else:
        times = _values(t_ca_s, "t_ca_s")
        time_info = [{"t_ca_s": float(t)} for t in times]
    out = []
    for i, (a, la, lo, k, v, d, inc) in enumerate(
        itertools.product(alt, lats, lons, range(times.size), speeds, durations, incs)
    ):
        rhat, vhat = closest_approach_frame(la, lo, inc)
        if trajectory == "straight":
            t, pos = straight_track(rhat, vhat, radius + a, v, times[k], d, step)
        else:
            t, pos = hyperbolic_track(rhat, vhat, radius + a, v, times[k], d, step, gm_km3_s2)
        info = {"altitude_km": float(a), "lat_deg": float(la), "lon_deg": float(lo), **time_info[k],
                "speed_km_s": float(v), "duration_s": float(d), "step_s": step, "inclination_deg": float(inc),
                "trajectory": trajectory}
        out.append(Candidate(f"{prefix}{i:04d}", t, pos, info))
    return out


def closest_approach_summary(candidates, radius_km: float, lines=None) -> dict:
    """Closest approach of each candidate, measured from its samples (for tables and figures).

    Parameters
    ----------
    candidates : sequence of Candidate
    radius_km : float
        Radius of the moon (km).
    lines : sequence of DriveLine, optional
        Driving lines; with them, the phase of the main line (:func:`main_line_index`) at closest approach.

    Returns
    -------
    dict
        ``altitude_km``, ``lat_deg``, ``lon_deg`` (flow frame), ``t_ca_s`` and ``phase_deg`` (``360 t / T_main mod
        360``; NaN without ``lines``): ndarrays of shape (C,), taken at the sample closest to the centre.

    Examples
    --------
    >>> c = Candidate("A", [0.0, 10.0, 20.0], [[0.0, 2000.0, -50.0], [0.0, 2000.0, 0.0], [0.0, 2000.0, 50.0]])
    >>> s = closest_approach_summary([c], 1540.0)
    >>> float(s["altitude_km"][0]), float(s["lon_deg"][0]), float(s["t_ca_s"][0])
    (460.0, 90.0, 10.0)
    """
    cands = list(candidates)
    n = len(cands)
    out = {key: np.full(n, np.nan) for key in ("altitude_km", "lat_deg", "lon_deg", "t_ca_s", "phase_deg")}
    period = None
    if lines is not None and list(lines):
        lines = list(lines)
        period = lines[main_line_index(lines)].period_s
    for i, c in enumerate(cands):
        t, pos = c.closest_approach()
        r = float(np.linalg.norm(pos))
        out["altitude_km"][i] = r - float(radius_km)
        out["lat_deg"][i] = math.degrees(math.asin(max(-1.0, min(1.0, pos[2] / r)))) if r > 0 else 0.0
        out["lon_deg"][i] = math.degrees(math.atan2(pos[1], pos[0])) % 360.0
        out["t_ca_s"][i] = t
        if period is not None:
            out["phase_deg"][i] = (360.0 * t / period) % 360.0
    return out
