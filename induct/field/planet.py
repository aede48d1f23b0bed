"""Internal magnetic field of a parent planet: Gauss coefficients and dipoles.

Frames and components
---------------------
Planet-fixed frame: z along the spin axis (north), x toward east longitude 0 on
the rotational equator, y toward 90 deg east. Spherical coordinates are
(r, theta, phi) with theta the colatitude and phi the east longitude; spherical
field components are (B_r, B_theta, B_phi) with B_theta pointing south and
B_phi east. At the poles the horizontal basis is the limit taken along the
meridian phi (so Cartesian input at a pole uses phi = 0).

Potential and normalisation
---------------------------
The field is ``B = -grad V`` with

    V = a sum_{n>=1} (a/r)**(n+1) sum_{m=0..n} [g_n^m cos(m phi) + h_n^m sin(m phi)] P_n^m(cos theta),

``a`` the reference (planet) radius and P_n^m the Schmidt semi-normalised
associated Legendre functions *without* the Condon-Shortley phase (the
geomagnetic convention): ``P_n^m = sqrt((2 - delta_m0) (n-m)!/(n+m)!) P_nm``
with ``P_nm`` the unnormalised function ``(1-x**2)**(m/2) d^m P_n/dx^m``.
The dipole moment is ``m = (4 pi a**3 / mu0) (g_1^1, h_1^1, g_1^0)`` in
planet-fixed Cartesian axes; ``B_r = 2 g_1^0`` at the north pole for r = a.

Algorithms (see :func:`schmidt_legendre`)
-----------------------------------------
* P_n^m: the standard forward column recurrence in n for each order m, seeded
  by the sectoral values ``P_m^m = sqrt((2m-1)/(2m)) sin(theta) P_{m-1}^{m-1}``.
  It is stable for every theta; the sectoral seeds underflow (to values that
  are genuinely below 1e-300) only for orders beyond about 1500.
* dP_n^m/dtheta and m P_n^m / sin(theta): the order-raising/lowering identities
  of the normalised functions, which contain no division by sin(theta) and are
  therefore exact at the poles (B_phi has its correct limit there).

Units: Gauss coefficients and fields in nT, positions in metres.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from induct.constants import MU0

__all__ = [
    "schmidt_legendre",
    "synth_spherical",
    "spherical_to_cartesian_vectors",
    "cartesian_to_spherical",
    "tilted_dipole_coefficients",
    "InternalField",
    "GaussField",
    "OffsetDipoleField",
    "SumField",
    "Planet",
]

_NT_PER_T = 1.0e9
_CHUNK = 8192  # points per synthesis chunk (memory ~ (nmax+2)**2 * _CHUNK * 8 bytes per array)


# --------------------------------------------------------------------------- Legendre
def _recurrence_coefficients(nmax: int):
    """Coefficients of the column recurrence, shape (nmax+2, nmax+2) each."""
    size = nmax + 2
    n = np.arange(size, dtype=float)[:, None]
    m = np.arange(size, dtype=float)[None, :]
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = np.sqrt(np.maximum(n**2 - m**2, 0.0))
        a = np.where(m < n, (2.0 * n - 1.0) / denom, 0.0)
        b = np.where(m < n - 1, np.sqrt(np.maximum((n - 1.0) ** 2 - m**2, 0.0)) / denom, 0.0)
    return a, b


def _legendre_table(nmax: int, cos_t: np.ndarray, sin_t: np.ndarray) -> np.ndarray:
    """Schmidt P_n^m for n, m <= nmax + 1; shape (nmax+2, nmax+2, npts). Unchecked."""
    size = nmax + 2
    a, b = _recurrence_coefficients(nmax)
    p = np.zeros((size, size) + cos_t.shape)
    p[0, 0] = 1.0
    p[1, 0] = cos_t
    p[1, 1] = sin_t
    for n in range(2, size):
        p[n, :n] = a[n, :n, None] * cos_t * p[n - 1, :n] - b[n, :n, None] * p[n - 2, :n]
        p[n, n] = math.sqrt((2.0 * n - 1.0) / (2.0 * n)) * sin_t * p[n - 1, n - 1]
    return p


def _derived_tables(nmax: int, p: np.ndarray):
    """dP/dtheta and m P / sin(theta) from a table of degree nmax+1. Unchecked."""
    size = nmax + 1
    n = np.arange(size, dtype=float)[:, None, None]
    m = np.arange(size, dtype=float)[None, :, None]
    dp = np.zeros((size, size) + p.shape[2:])
    mps = np.zeros_like(dp)
    # Lowered/raised-order weights for the normalised functions; m = 0 and m = 1 carry the
    # extra sqrt(2) of the Schmidt normalisation.
    lo = 0.5 * np.sqrt(np.maximum((n + m) * (n - m + 1.0), 0.0))
    hi = 0.5 * np.sqrt(np.maximum((n - m) * (n + m + 1.0), 0.0))
    lo = np.where(m == 1, lo * math.sqrt(2.0), lo)
    hi = np.where(m == 0, hi * math.sqrt(2.0), hi)
    lo = np.where(m == 0, 0.0, lo)
    pm_minus = np.zeros_like(dp)
    pm_minus[:, 1:] = p[:size, : size - 1]
    pm_plus = p[:size, 1 : size + 1]
    dp[...] = lo * pm_minus - hi * pm_plus
    # m P_n^m / sin = 0.5 [sqrt((n+m+1)(n+m+2)) P_{n+1}^{m+1} + sqrt((n-m+1)(n-m+2)) P_{n+1}^{m-1}]
    up = 0.5 * np.sqrt((n + m + 1.0) * (n + m + 2.0))
    down = 0.5 * np.sqrt(np.maximum((n - m + 1.0) * (n - m + 2.0), 0.0))
    down = np.where(m == 1, down * math.sqrt(2.0), down)
    q_minus = np.zeros_like(dp)
    q_minus[:, 1:] = p[1 : size + 1, : size - 1]
    q_plus = p[1 : size + 1, 1 : size + 1]
    mps[...] = np.where(m == 0, 0.0, up * q_plus + down * q_minus)
    return dp, mps


def schmidt_legendre(nmax: int, theta_rad) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Schmidt semi-normalised associated Legendre functions and their derivatives.

    No Condon-Shortley phase (geomagnetic convention). See the module docstring
    for the recurrences used; all three outputs are finite and exact at the poles.

    Parameters
    ----------
    nmax : int
        Maximum degree, >= 1.
    theta_rad : array_like, shape (...)
        Colatitude (rad), in [0, pi].

    Returns
    -------
    p : ndarray, shape (..., nmax+1, nmax+1)
        ``p[..., n, m] = P_n^m(cos theta)``; zero for m > n.
    dp_dtheta : ndarray, shape (..., nmax+1, nmax+1)
        ``dP_n^m(cos theta)/dtheta`` (1/rad).
    m_p_over_sin : ndarray, shape (..., nmax+1, nmax+1)
        ``m P_n^m(cos theta) / sin(theta)``, with its finite limit at the poles.
    """
    if isinstance(nmax, bool) or int(nmax) != nmax or nmax < 1:
        raise ValueError(f"nmax must be an integer >= 1, got {nmax!r}")
    nmax = int(nmax)
    theta = np.asarray(theta_rad, dtype=float)
    if not np.all(np.isfinite(theta)) or np.any(theta < 0.0) or np.any(theta > math.pi):
        raise ValueError("theta_rad must be finite and in [0, pi]")
    flat = theta.reshape(-1)
    p = _legendre_table(nmax, np.cos(flat), np.sin(flat))
    dp, mps = _derived_tables(nmax, p)
    out = [np.moveaxis(x[: nmax + 1, : nmax + 1], (0, 1), (-2, -1)) for x in (p, dp, mps)]
    return tuple(x.reshape(theta.shape + (nmax + 1, nmax + 1)) for x in out)


# --------------------------------------------------------------------------- synthesis
def synth_spherical(g_nT, h_nT, radius_m, r_m, theta_rad, phi_rad) -> np.ndarray:
    """Unchecked kernel: field of Gauss coefficients at spherical positions.

    Parameters
    ----------
    g_nT, h_nT : ndarray, shape (N+1, N+1)
        Coefficients ``g[n, m]``, ``h[n, m]`` (nT); row 0 and entries m > n are ignored.
    radius_m : float
        Reference radius a (m).
    r_m, theta_rad, phi_rad : ndarray, shape (K,)
        Radius (m), colatitude (rad), east longitude (rad); 1-D, same length.

    Returns
    -------
    ndarray, shape (K, 3)
        (B_r, B_theta, B_phi) in nT.
    """
    nmax = g_nT.shape[0] - 1
    n = np.arange(nmax + 1, dtype=float)
    m = np.arange(nmax + 1, dtype=float)
    g = np.tril(g_nT)
    h = np.tril(h_nT)
    g[0] = 0.0
    h[0] = 0.0
    out = np.empty((r_m.shape[0], 3))
    for start in range(0, r_m.shape[0], _CHUNK):
        sl = slice(start, start + _CHUNK)
        th, ph = theta_rad[sl], phi_rad[sl]
        p = _legendre_table(nmax, np.cos(th), np.sin(th))
        dp, mps = _derived_tables(nmax, p)
        p = p[: nmax + 1, : nmax + 1]
        ratio = radius_m / r_m[sl]
        rpow = ratio[None, :] ** (n[:, None] + 2.0)  # (N+1, k)
        cos_m = np.cos(m[:, None] * ph[None, :])  # (N+1, k)
        sin_m = np.sin(m[:, None] * ph[None, :])
        even = g[:, :, None] * cos_m[None] + h[:, :, None] * sin_m[None]  # (N+1, N+1, k)
        odd = g[:, :, None] * sin_m[None] - h[:, :, None] * cos_m[None]
        out[sl, 0] = np.einsum("nk,n,nmk,nmk->k", rpow, n + 1.0, even, p)
        out[sl, 1] = -np.einsum("nk,nmk,nmk->k", rpow, even, dp)
        out[sl, 2] = np.einsum("nk,nmk,nmk->k", rpow, odd, mps)
    return out


def cartesian_to_spherical(xyz_m) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Planet-fixed Cartesian positions to (r, theta, phi).

    Parameters
    ----------
    xyz_m : array_like, shape (..., 3)
        Positions (m).

    Returns
    -------
    r_m, theta_rad, phi_rad : ndarray, shape (...)
        Radius (m), colatitude in [0, pi] (rad), east longitude in (-pi, pi] (rad).
        On the spin axis phi = 0.
    """
    xyz = np.asarray(xyz_m, dtype=float)
    rho = np.hypot(xyz[..., 0], xyz[..., 1])
    r = np.hypot(rho, xyz[..., 2])
    return r, np.arctan2(rho, xyz[..., 2]), np.arctan2(xyz[..., 1], xyz[..., 0])


def spherical_to_cartesian_vectors(b_sph, theta_rad, phi_rad) -> np.ndarray:
    """Rotate vector components from (r, theta, phi) to planet-fixed (x, y, z).

    Parameters
    ----------
    b_sph : array_like, shape (..., 3)
        Components (B_r, B_theta, B_phi), any unit.
    theta_rad, phi_rad : array_like, shape (...)
        Colatitude and east longitude (rad) of the points.

    Returns
    -------
    ndarray, shape (..., 3)
        (B_x, B_y, B_z) in the unit of ``b_sph``.
    """
    b = np.asarray(b_sph, dtype=float)
    st, ct = np.sin(theta_rad), np.cos(theta_rad)
    sp, cp = np.sin(phi_rad), np.cos(phi_rad)
    br, bt, bp = b[..., 0], b[..., 1], b[..., 2]
    horizontal = br * st + bt * ct
    return np.stack([horizontal * cp - bp * sp, horizontal * sp + bp * cp, br * ct - bt * st], axis=-1)


def _cartesian_to_spherical_vectors(b_xyz, theta, phi) -> np.ndarray:
    st, ct, sp, cp = np.sin(theta), np.cos(theta), np.sin(phi), np.cos(phi)
    bx, by, bz = b_xyz[..., 0], b_xyz[..., 1], b_xyz[..., 2]
    horizontal = bx * cp + by * sp
    return np.stack([horizontal * st + bz * ct, horizontal * ct - bz * st, by * cp - bx * sp], axis=-1)


def _check_positions_cartesian(xyz_m) -> np.ndarray:
    xyz = np.asarray(xyz_m, dtype=float)
    if xyz.ndim < 1 or xyz.shape[-1] != 3:
        raise ValueError(f"xyz_m must have shape (..., 3), got {xyz.shape}")
    if not np.all(np.isfinite(xyz)):
        raise ValueError("xyz_m must be finite")
    return xyz


def tilted_dipole_coefficients(b0_nT: float, tilt_deg: float, tilt_longitude_deg: float) -> tuple[float, float, float]:
    """Degree-1 Gauss coefficients of a centred, tilted dipole.

    Parameters
    ----------
    b0_nT : float
        Equatorial surface field of the dipole, ``mu0 |m| / (4 pi a**3)`` (nT), > 0.
    tilt_deg : float
        Angle between the dipole moment and the spin axis (deg), in [0, 180];
        above 90 the moment points into the southern hemisphere.
    tilt_longitude_deg : float
        East longitude toward which the moment is tilted (deg), finite.

    Returns
    -------
    g10_nT, g11_nT, h11_nT : float
        ``(g11, h11, g10) = b0 (sin t cos l, sin t sin l, cos t)`` (nT).
    """
    if not (math.isfinite(b0_nT) and b0_nT > 0.0):
        raise ValueError(f"B0_nT must be finite and > 0, got {b0_nT!r}")
    if not (math.isfinite(tilt_deg) and 0.0 <= tilt_deg <= 180.0):
        raise ValueError(f"tilt_deg must be in [0, 180], got {tilt_deg!r}")
    if not math.isfinite(tilt_longitude_deg):
        raise ValueError(f"tilt_longitude_deg must be finite, got {tilt_longitude_deg!r}")
    t, lon = math.radians(tilt_deg), math.radians(tilt_longitude_deg)
    return b0_nT * math.cos(t), b0_nT * math.sin(t) * math.cos(lon), b0_nT * math.sin(t) * math.sin(lon)


# --------------------------------------------------------------------------- field models
class InternalField:
    """Base class of internal-field models.

    A subclass overrides at least one of the unchecked evaluators ``_spherical(r, theta, phi)``
    (1-D arrays, SI) and ``_cartesian(xyz)`` (shape (K, 3), m); the other follows by rotation.
    The public methods check their input and keep the input's shape.
    """

    def _spherical(self, r, theta, phi):
        xyz = np.stack([r * np.sin(theta) * np.cos(phi), r * np.sin(theta) * np.sin(phi), r * np.cos(theta)], -1)
        return _cartesian_to_spherical_vectors(self._cartesian(xyz), theta, phi)

    def _cartesian(self, xyz):
        r, theta, phi = cartesian_to_spherical(xyz)
        return spherical_to_cartesian_vectors(self._spherical(r, theta, phi), theta, phi)

    @property
    def reference_radius_m(self) -> float:
        raise NotImplementedError

    def field_spherical(self, r_m, theta_rad, phi_rad) -> np.ndarray:
        """Field in spherical components at spherical positions.

        Parameters
        ----------
        r_m, theta_rad, phi_rad : array_like, broadcastable to shape (...)
            Radius (m, > 0), colatitude (rad, [0, pi]), east longitude (rad).

        Returns
        -------
        ndarray, shape (..., 3)
            (B_r, B_theta, B_phi) in nT.
        """
        r, theta, phi = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (r_m, theta_rad, phi_rad)))
        if not (np.all(np.isfinite(r)) and np.all(r > 0.0)):
            raise ValueError("r_m must be finite and > 0")
        if not np.all(np.isfinite(theta)) or np.any(theta < 0.0) or np.any(theta > math.pi):
            raise ValueError("theta_rad must be finite and in [0, pi]")
        if not np.all(np.isfinite(phi)):
            raise ValueError("phi_rad must be finite")
        self._warn_inside(r)
        shape = r.shape
        out = self._spherical(r.reshape(-1), theta.reshape(-1), phi.reshape(-1))
        return out.reshape(shape + (3,))

    def field_cartesian(self, xyz_m) -> np.ndarray:
        """Field in planet-fixed Cartesian components at Cartesian positions.

        Parameters
        ----------
        xyz_m : array_like, shape (..., 3)
            Planet-fixed positions (m), not at the origin.

        Returns
        -------
        ndarray, shape (..., 3)
            (B_x, B_y, B_z) in nT.
        """
        xyz = _check_positions_cartesian(xyz_m)
        r = np.linalg.norm(xyz, axis=-1)
        if np.any(r == 0.0):
            raise ValueError("xyz_m must not contain the origin")
        self._warn_inside(r)
        shape = xyz.shape
        return self._cartesian(xyz.reshape(-1, 3)).reshape(shape)

    def _warn_inside(self, r):
        if np.any(r < self.reference_radius_m * (1.0 - 1e-12)):
            warnings.warn("internal field evaluated inside the planet's reference radius", stacklevel=3)


@dataclass(frozen=True, eq=False)
class GaussField(InternalField):
    """Internal field from Schmidt semi-normalised Gauss coefficients.

    Parameters
    ----------
    radius_m : float
        Reference radius a (m), > 0.
    g_nT, h_nT : array_like, shape (N+1, N+1)
        ``g[n, m]``, ``h[n, m]`` (nT) for 1 <= n <= N, 0 <= m <= n; the n = 0 row,
        the entries m > n and ``h[n, 0]`` must be zero.
    """

    radius_m: float
    g_nT: np.ndarray = field(repr=False)
    h_nT: np.ndarray = field(repr=False)

    def __post_init__(self):
        if not (math.isfinite(self.radius_m) and self.radius_m > 0.0):
            raise ValueError(f"radius_m must be finite and > 0, got {self.radius_m!r}")
        g = np.array(self.g_nT, dtype=float)
        h = np.array(self.h_nT, dtype=float)
        if g.ndim != 2 or g.shape[0] != g.shape[1] or g.shape[0] < 2 or h.shape != g.shape:
            raise ValueError(f"g_nT and h_nT must both have shape (N+1, N+1) with N >= 1, got {g.shape}, {h.shape}")
        if not (np.all(np.isfinite(g)) and np.all(np.isfinite(h))):
            raise ValueError("g_nT and h_nT must be finite")
        if np.any(g[0] != 0) or np.any(h[0] != 0) or np.any(np.triu(g, 1) != 0) or np.any(np.triu(h, 1) != 0):
            raise ValueError("g_nT/h_nT: the n = 0 row and entries with m > n must be zero")
        if np.any(h[:, 0] != 0):
            raise ValueError("h_nT[n, 0] must be zero (no sine term for m = 0)")
        g.setflags(write=False)
        h.setflags(write=False)
        object.__setattr__(self, "g_nT", g)
        object.__setattr__(self, "h_nT", h)

    @property
    def nmax(self) -> int:
        """Maximum degree N."""
        return self.g_nT.shape[0] - 1

    @property
    def reference_radius_m(self) -> float:
        return self.radius_m

    @property
    def dipole_moment_A_m2(self) -> np.ndarray:
        """Dipole moment ``(4 pi a**3 / mu0) (g11, h11, g10)``, shape (3,), A m^2, planet-fixed axes."""
        g1 = np.array([self.g_nT[1, 1], self.h_nT[1, 1], self.g_nT[1, 0]]) / _NT_PER_T
        return 4.0 * math.pi * self.radius_m**3 / MU0 * g1

    def to_flat(self) -> np.ndarray:
        """Coefficients in the flat order g10, g11, h11, g20, g21, h21, g22, h22, ... (nT), shape (N(N+2),)."""
        out = []
        for n in range(1, self.nmax + 1):
            out.append(self.g_nT[n, 0])
            for m in range(1, n + 1):
                out.extend((self.g_nT[n, m], self.h_nT[n, m]))
        return np.array(out)

    @classmethod
    def from_flat(cls, radius_m: float, coeffs_nT) -> "GaussField":
        """Inverse of :meth:`to_flat`; ``coeffs_nT`` shape (N(N+2),), nT."""
        c = np.asarray(coeffs_nT, dtype=float).reshape(-1)
        nmax = int(round(math.sqrt(c.size + 1) - 1))
        if nmax < 1 or nmax * (nmax + 2) != c.size:
            raise ValueError(f"coeffs_nT must have N(N+2) entries for some N >= 1, got {c.size}")
        g = np.zeros((nmax + 1, nmax + 1))
        h = np.zeros_like(g)
        i = 0
        for n in range(1, nmax + 1):
            g[n, 0] = c[i]
            i += 1
            for m in range(1, n + 1):
                g[n, m], h[n, m] = c[i], c[i + 1]
                i += 2
        return cls(radius_m, g, h)

    def _spherical(self, r, theta, phi):
        return synth_spherical(np.array(self.g_nT), np.array(self.h_nT), self.radius_m, r, theta, phi)


@dataclass(frozen=True, eq=False)
class OffsetDipoleField(InternalField):
    """Point dipole, possibly offset from the planet's centre.

    ``B = (mu0 / 4 pi) [3 (m . u) u - m] / |s|**3`` with ``s = r - offset``,
    ``u = s / |s|`` (Jackson 1999, eq. 5.56).

    Parameters
    ----------
    radius_m : float
        Planet radius (m), > 0 (used only to warn about evaluation inside).
    moment_A_m2 : array_like, shape (3,)
        Dipole moment in planet-fixed axes (A m^2).
    offset_m : array_like, shape (3,)
        Dipole position in planet-fixed axes (m); must lie inside the planet.
    """

    radius_m: float
    moment_A_m2: np.ndarray
    offset_m: np.ndarray

    def __post_init__(self):
        if not (math.isfinite(self.radius_m) and self.radius_m > 0.0):
            raise ValueError(f"radius_m must be finite and > 0, got {self.radius_m!r}")
        mom = np.array(self.moment_A_m2, dtype=float)
        off = np.array(self.offset_m, dtype=float)
        if mom.shape != (3,) or off.shape != (3,):
            raise ValueError("moment_A_m2 and offset_m must have shape (3,)")
        if not (np.all(np.isfinite(mom)) and np.all(np.isfinite(off))):
            raise ValueError("moment_A_m2 and offset_m must be finite")
        if np.linalg.norm(off) >= self.radius_m:
            raise ValueError(f"offset_km must lie inside the planet (|offset| < {self.radius_m / 1e3:g} km)")
        mom.setflags(write=False)
        off.setflags(write=False)
        object.__setattr__(self, "moment_A_m2", mom)
        object.__setattr__(self, "offset_m", off)

    @property
    def reference_radius_m(self) -> float:
        return self.radius_m

    def _cartesian(self, xyz):
        s = xyz - self.offset_m
        dist = np.linalg.norm(s, axis=-1, keepdims=True)
        u = s / dist
        mu = np.sum(u * self.moment_A_m2, axis=-1, keepdims=True)
        return MU0 / (4.0 * math.pi) * (3.0 * mu * u - self.moment_A_m2) / dist**3 * _NT_PER_T


@dataclass(frozen=True, eq=False)
class SumField(InternalField):
    """Sum of internal-field models (e.g. an offset dipole plus higher-degree Gauss terms)."""

    parts: tuple

    def __post_init__(self):
        if not self.parts or not all(isinstance(p, InternalField) for p in self.parts):
            raise ValueError("parts must be a non-empty tuple of InternalField models")
        object.__setattr__(self, "parts", tuple(self.parts))

    @property
    def reference_radius_m(self) -> float:
        return max(p.reference_radius_m for p in self.parts)

    def _cartesian(self, xyz):
        return sum(p._cartesian(xyz) for p in self.parts)


@dataclass(frozen=True, eq=False)
class Planet:
    """Parent planet: size, spin and internal field.

    Parameters
    ----------
    name : str
        Name, for outputs.
    radius_m : float
        Radius (m), > 0.
    rotation_period_s : float
        Sidereal rotation period (s), > 0; the planet spins about +z (north).
    field : InternalField
        Internal field model in the planet-fixed frame.
    gm_m3_per_s2 : float or None
        Gravitational parameter G M (m^3/s^2), > 0, or None if unknown.
    prime_meridian_rad : float
        Inertial longitude of planet-fixed longitude 0 at t = 0 (rad).
    """

    name: str
    radius_m: float
    rotation_period_s: float
    field: InternalField
    gm_m3_per_s2: float | None = None
    prime_meridian_rad: float = 0.0

    def __post_init__(self):
        if not (math.isfinite(self.radius_m) and self.radius_m > 0.0):
            raise ValueError(f"radius_m must be finite and > 0, got {self.radius_m!r}")
        if not (math.isfinite(self.rotation_period_s) and self.rotation_period_s > 0.0):
            raise ValueError(f"rotation_period_s must be finite and > 0, got {self.rotation_period_s!r}")
        if self.gm_m3_per_s2 is not None and not (math.isfinite(self.gm_m3_per_s2) and self.gm_m3_per_s2 > 0.0):
            raise ValueError(f"gm_m3_per_s2 must be finite and > 0, got {self.gm_m3_per_s2!r}")
        if not math.isfinite(self.prime_meridian_rad):
            raise ValueError("prime_meridian_rad must be finite")
        if not isinstance(self.field, InternalField):
            raise ValueError("field must be an InternalField model")
