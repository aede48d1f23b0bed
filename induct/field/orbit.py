"""Keplerian orbit of a moon and the parent planet's field seen from the moon.

Frames
------
* Planet-fixed frame: see :mod:`induct.field.planet` (z = spin axis, x toward
  east longitude 0). It turns about z at ``2 pi / T_rot``.
* Inertial planet-centred frame: z = spin axis; planet-fixed longitude 0 lies
  at inertial longitude ``W(t) = W0 + 2 pi t / T_rot`` (``W0`` =
  ``Planet.prime_meridian_rad``), so planet-fixed = Rz(-W(t)) . inertial.
* **Flow frame** (moon-centred, used for all driving fields in induct):

  - x: along the corotation flow at the moon, i.e. the planet's eastward
    azimuthal direction ``phi_hat`` (for a prograde moon, roughly the direction
    of orbital motion; for a retrograde moon, against it);
  - y: toward the planet's spin axis, perpendicular to it (``-rho_hat`` in
    cylindrical coordinates; for a moon in the rotational equator this points
    at the planet's centre, for an inclined orbit it differs from the
    moon-to-planet direction by the moon's latitude);
  - z: parallel to the planet's spin axis.

  The frame is right-handed (x = y cross z). Its axes depend only on the moon's
  position, not on the planet's rotation angle. For a synchronously rotating
  moon with body-fixed axes (x toward the sub-planet point, z along its spin):
  x_flow = -y_body, y_flow = x_body, z_flow = z_body.

Orbit
-----
Elliptic Kepler orbit with elements referred to the planet's rotational
equator and the inertial x axis: semi-major axis a, eccentricity e in [0, 1),
inclination i in [0, 90) deg *for the given sense* (a retrograde orbit has the
geometric inclination 180 deg - i), longitude of the ascending node Omega,
argument of periapsis omega and mean anomaly M0 at t = 0. Time t in seconds
from the epoch of the planet/orbit description.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from induct.field.planet import Planet

__all__ = [
    "KeplerOrbit",
    "solve_kepler",
    "synodic_period_s",
    "flow_frame_axes",
    "planet_fixed_position",
    "flow_frame_field",
    "primary_field_series",
]


def solve_kepler(mean_anomaly_rad, eccentricity: float) -> np.ndarray:
    """Eccentric anomaly E from Kepler's equation ``M = E - e sin E``.

    Newton iteration from ``E0 = M + e sin M`` (M reduced to [-pi, pi]) until the
    step is below 1e-15 rad; converges for every M when 0 <= e < 1.

    Parameters
    ----------
    mean_anomaly_rad : array_like, shape (...)
        Mean anomaly M (rad).
    eccentricity : float
        e in [0, 1).

    Returns
    -------
    ndarray, shape (...)
        Eccentric anomaly (rad), with the same whole number of turns as M.
    """
    if not (math.isfinite(eccentricity) and 0.0 <= eccentricity < 1.0):
        raise ValueError(f"eccentricity must be in [0, 1), got {eccentricity!r}")
    m = np.asarray(mean_anomaly_rad, dtype=float)
    if not np.all(np.isfinite(m)):
        raise ValueError("mean_anomaly_rad must be finite")
    turns = np.round(m / (2.0 * math.pi))
    m_red = m - 2.0 * math.pi * turns
    e_anom = m_red + eccentricity * np.sin(m_red)
    if eccentricity > 0.8:
        e_anom = math.pi * np.sign(m_red)  # start that always converges for high e (E = 0 exactly at M = 0)
    for _ in range(60):
        f = e_anom - eccentricity * np.sin(e_anom) - m_red
        step = f / (1.0 - eccentricity * np.cos(e_anom))
        e_anom = e_anom - step
        if np.all(np.abs(step) < 1e-15):
            break
    else:  # pragma: no cover - Newton on Kepler's equation always converges for e < 1
        raise RuntimeError("Kepler's equation did not converge")
    return e_anom + 2.0 * math.pi * turns


def synodic_period_s(rotation_period_s: float, orbital_period_s: float, retrograde: bool = False) -> float:
    """Synodic period of the planet's rotation as seen from the moon.

    ``1/T_syn = |1/T_rot - 1/T_orb|`` (prograde) or ``1/T_rot + 1/T_orb`` (retrograde).

    Parameters
    ----------
    rotation_period_s, orbital_period_s : float
        Sidereal rotation and orbital periods (s), > 0.
    retrograde : bool
        True for a moon orbiting against the planet's spin.

    Returns
    -------
    float
        T_syn (s).
    """
    for name, value in (("rotation_period_s", rotation_period_s), ("orbital_period_s", orbital_period_s)):
        if not (math.isfinite(value) and value > 0.0):
            raise ValueError(f"{name} must be finite and > 0, got {value!r}")
    freq = 1.0 / rotation_period_s + (1.0 if retrograde else -1.0) / orbital_period_s
    if abs(freq) * rotation_period_s < 1e-12:
        raise ValueError("orbital_period equals rotation_period: a synchronous orbit has no synodic period")
    return 1.0 / abs(freq)


@dataclass(frozen=True)
class KeplerOrbit:
    """Elliptic Kepler orbit about the planet (SI units; see the module docstring).

    Parameters
    ----------
    semi_major_axis_m : float
        a (m), > 0.
    period_s : float
        Orbital (anomalistic) period (s), > 0.
    eccentricity : float
        e in [0, 1).
    inclination_rad : float
        Inclination to the rotational equator for the given sense (rad), in [0, pi/2).
    ascending_node_rad, periapsis_arg_rad, mean_anomaly_rad : float
        Omega, omega and M at t = 0 (rad), finite.
    retrograde : bool
        True if the moon orbits against the planet's spin.
    """

    semi_major_axis_m: float
    period_s: float
    eccentricity: float = 0.0
    inclination_rad: float = 0.0
    ascending_node_rad: float = 0.0
    periapsis_arg_rad: float = 0.0
    mean_anomaly_rad: float = 0.0
    retrograde: bool = False

    def __post_init__(self):
        if not (math.isfinite(self.semi_major_axis_m) and self.semi_major_axis_m > 0.0):
            raise ValueError(f"semi_major_axis must be finite and > 0, got {self.semi_major_axis_m!r}")
        if not (math.isfinite(self.period_s) and self.period_s > 0.0):
            raise ValueError(f"orbital period must be finite and > 0, got {self.period_s!r}")
        if not (math.isfinite(self.eccentricity) and 0.0 <= self.eccentricity < 1.0):
            raise ValueError(f"eccentricity must be in [0, 1), got {self.eccentricity!r}")
        if not (math.isfinite(self.inclination_rad) and 0.0 <= self.inclination_rad < 0.5 * math.pi):
            raise ValueError(
                f"inclination must be in [0, 90) deg for the given sense, got {math.degrees(self.inclination_rad)!r} deg"
            )
        for name in ("ascending_node_rad", "periapsis_arg_rad", "mean_anomaly_rad"):
            if not math.isfinite(getattr(self, name)):
                raise ValueError(f"{name} must be finite")
        if not isinstance(self.retrograde, bool):
            raise ValueError("retrograde must be True or False")

    @property
    def geometric_inclination_rad(self) -> float:
        """Angle between the orbit normal and the spin axis (rad), in [0, pi]."""
        return math.pi - self.inclination_rad if self.retrograde else self.inclination_rad

    @property
    def periapsis_m(self) -> float:
        """Periapsis distance a (1 - e) (m)."""
        return self.semi_major_axis_m * (1.0 - self.eccentricity)

    def _rotation(self) -> np.ndarray:
        """Perifocal -> inertial rotation matrix Rz(Omega) Rx(i) Rz(omega), shape (3, 3)."""
        co, so = math.cos(self.ascending_node_rad), math.sin(self.ascending_node_rad)
        ci, si = math.cos(self.geometric_inclination_rad), math.sin(self.geometric_inclination_rad)
        cw, sw = math.cos(self.periapsis_arg_rad), math.sin(self.periapsis_arg_rad)
        rz_o = np.array([[co, -so, 0.0], [so, co, 0.0], [0.0, 0.0, 1.0]])
        rx_i = np.array([[1.0, 0.0, 0.0], [0.0, ci, -si], [0.0, si, ci]])
        rz_w = np.array([[cw, -sw, 0.0], [sw, cw, 0.0], [0.0, 0.0, 1.0]])
        return rz_o @ rx_i @ rz_w

    def position_inertial(self, t_s) -> np.ndarray:
        """Moon position in the inertial planet-centred frame.

        Parameters
        ----------
        t_s : array_like, shape (N,) or scalar
            Time from the epoch (s), finite.

        Returns
        -------
        ndarray, shape (N, 3)
            Position (m); a scalar ``t_s`` gives shape (1, 3).
        """
        t = np.atleast_1d(np.asarray(t_s, dtype=float))
        if t.ndim != 1 or not np.all(np.isfinite(t)):
            raise ValueError("t_s must be a finite scalar or 1-D array")
        mean = self.mean_anomaly_rad + 2.0 * math.pi * t / self.period_s
        e = self.eccentricity
        ecc = solve_kepler(mean, e)
        x = self.semi_major_axis_m * (np.cos(ecc) - e)
        y = self.semi_major_axis_m * math.sqrt(1.0 - e * e) * np.sin(ecc)
        perifocal = np.stack([x, y, np.zeros_like(x)], axis=-1)
        return perifocal @ self._rotation().T


def _rotate_z(vectors: np.ndarray, angle_rad: np.ndarray) -> np.ndarray:
    """Rotate vectors (N, 3) by angles (N,) about z."""
    c, s = np.cos(angle_rad), np.sin(angle_rad)
    x, y = vectors[:, 0], vectors[:, 1]
    return np.stack([c * x - s * y, s * x + c * y, vectors[:, 2]], axis=-1)


def flow_frame_axes(position_m) -> np.ndarray:
    """Unit axes of the flow frame at given moon positions.

    Parameters
    ----------
    position_m : array_like, shape (N, 3)
        Moon position in any planet-centred frame whose z axis is the spin axis (m).

    Returns
    -------
    ndarray, shape (N, 3, 3)
        ``axes[k, 0]``, ``axes[k, 1]``, ``axes[k, 2]`` are the x, y, z unit vectors,
        expressed in the frame of ``position_m``; ``axes @ v`` gives flow-frame components.
    """
    pos = np.asarray(position_m, dtype=float)
    if pos.ndim != 2 or pos.shape[1] != 3:
        raise ValueError(f"position_m must have shape (N, 3), got {pos.shape}")
    rho = np.hypot(pos[:, 0], pos[:, 1])
    if np.any(rho <= 0.0):
        raise ValueError("the flow frame is undefined on the spin axis (position_m with x = y = 0)")
    cphi, sphi = pos[:, 0] / rho, pos[:, 1] / rho
    zero, one = np.zeros_like(rho), np.ones_like(rho)
    x_axis = np.stack([-sphi, cphi, zero], axis=-1)
    y_axis = np.stack([-cphi, -sphi, zero], axis=-1)
    z_axis = np.stack([zero, zero, one], axis=-1)
    return np.stack([x_axis, y_axis, z_axis], axis=1)


def _check_pair(planet: Planet, orbit: KeplerOrbit):
    if not isinstance(planet, Planet):
        raise ValueError("planet must be an induct.field.planet.Planet")
    if not isinstance(orbit, KeplerOrbit):
        raise ValueError("orbit must be an induct.field.orbit.KeplerOrbit")
    if orbit.periapsis_m <= planet.radius_m:
        raise ValueError(
            f"the orbit's periapsis ({orbit.periapsis_m / 1e3:g} km) must lie outside the planet "
            f"(radius {planet.radius_m / 1e3:g} km)"
        )


def planet_fixed_position(planet: Planet, orbit: KeplerOrbit, t_orbit_s, t_rotation_s=None) -> np.ndarray:
    """Moon position in the planet-fixed frame.

    Parameters
    ----------
    planet : Planet
    orbit : KeplerOrbit
    t_orbit_s : array_like, shape (N,)
        Time (s) at which the orbit is evaluated.
    t_rotation_s : array_like, shape (N,), optional
        Time (s) at which the planet's rotation angle is evaluated; defaults to
        ``t_orbit_s`` (the physical case). Separate times let a caller sample the
        two periodicities independently (see :func:`flow_frame_field`).

    Returns
    -------
    ndarray, shape (N, 3)
        Planet-fixed position (m).
    """
    _check_pair(planet, orbit)
    t_orb = np.atleast_1d(np.asarray(t_orbit_s, dtype=float))
    t_rot = t_orb if t_rotation_s is None else np.atleast_1d(np.asarray(t_rotation_s, dtype=float))
    if t_rot.shape != t_orb.shape or not np.all(np.isfinite(t_rot)):
        raise ValueError("t_rotation_s must be finite with the shape of t_orbit_s")
    angle = planet.prime_meridian_rad + 2.0 * math.pi * t_rot / planet.rotation_period_s
    return _rotate_z(orbit.position_inertial(t_orb), -angle)


def flow_frame_field(planet: Planet, orbit: KeplerOrbit, t_orbit_s, t_rotation_s) -> np.ndarray:
    """Planet's internal field at the moon, flow-frame components, with separate clocks.

    ``flow_frame_field(p, o, t, t)`` is the physical primary field at time t. The
    function is periodic in ``t_orbit_s`` with the orbital period and in
    ``t_rotation_s`` with the rotation period, which gives the exact line spectrum
    (see :func:`induct.field.spectrum.two_period_spectrum`).

    Parameters
    ----------
    planet : Planet
    orbit : KeplerOrbit
    t_orbit_s, t_rotation_s : array_like, shape (N,)
        Times (s) for the orbit and for the planet's rotation angle.

    Returns
    -------
    ndarray, shape (N, 3)
        (B_x, B_y, B_z) in the flow frame (nT).
    """
    pos = planet_fixed_position(planet, orbit, t_orbit_s, t_rotation_s)
    b = planet.field.field_cartesian(pos)
    return np.einsum("nij,nj->ni", flow_frame_axes(pos), b)


def primary_field_series(planet: Planet, orbit: KeplerOrbit, t_s) -> np.ndarray:
    """Time series of the planet's internal field at the moon in the flow frame.

    Parameters
    ----------
    planet : Planet
    orbit : KeplerOrbit
    t_s : array_like, shape (N,)
        Time from the epoch (s).

    Returns
    -------
    ndarray, shape (N, 3)
        (B_x, B_y, B_z) in nT (flow frame).
    """
    t = np.atleast_1d(np.asarray(t_s, dtype=float))
    return flow_frame_field(planet, orbit, t, t)
