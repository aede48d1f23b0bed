"""Induced magnetic field of a layered moon at arbitrary positions and times.

Conventions
-----------
Time dependence ``exp(+i w t)``, t in seconds from the epoch of the driving
lines. Positions are moon-centred, in km, in the frame of the driving-line
components (the flow frame of :mod:`induct.field.orbit`: x along the corotation
flow, y toward the planet's spin axis, z along it). Fields in nT.

Degree 1 (uniform driving field)
--------------------------------
Each driving line k has the complex vector amplitude ``B_k`` (nT) of
:class:`induct.field.drive.DriveLine`: ``B(t) = Re{B_k exp(i w_k t)}``. Outside the
body (|r| >= R, and above an ionosphere sheet if the model has one)

    B_ind(r, t) = Re sum_k -(R_1(w_k) / 2) (R/|r|)**3 [3 (B_k . rhat) rhat - B_k] exp(i w_k t),

the field of the dipole moment ``M = -(2 pi / mu0) R**3 R_1 B_k`` (Zimmer,
Khurana & Kivelson 2000, Icarus 147). Because the geometry factor is real, the
kernel first sums ``E(t) = Re sum_k R_1(w_k) B_k exp(i w_k t)`` and applies the
dipole geometry once per point.

Degree 2 (gradient of the driving field across the moon)
--------------------------------------------------------
A non-uniform driving field ``B_e(s) = G s`` (s the position from the moon's
centre, G a symmetric, trace-free 3 x 3 gradient tensor, nT/km) derives from
the degree-2 external potential ``V_e = -(1/2) s . G s``. For each spherical
harmonic the internal coefficient is ``i_2 = Q_2 e_2`` with ``Q_2 = (2/3) R_2``
(Parkinson 1983), so ``V_i = Q_2 (R/|s|)**5 V_e`` and, with ``B = -grad V``,

    B_ind,2(s, t) = Re sum_k Q_2(w_k) R**5 / |s|**4 [G_k shat - (5/2) (shat . G_k shat) shat] exp(i w_k t).

A :class:`GradientLine` carries ``G_k`` (complex, nT/km) for one period;
:func:`planet_gradient_lines` computes them exactly from a planet file (the
two-period FFT of :func:`induct.field.spectrum.two_period_spectrum` applied to the
gradient of the planet's internal field at the moon, taken by central
differences in the flow frame). Degree 3 and higher terms of the planet's
field across the moon (relative size about (R/a)**2, a the orbital radius) are
neglected, and so is the steady (zero-frequency) gradient, which induces
nothing in a body without a perfectly conducting part.

Tiers
-----
:func:`induced_field_nT`, :func:`induced_field_degree2_nT`,
:func:`external_degree2_field_nT` and :func:`dipole_geometry` are unchecked
kernels on NumPy arrays ("rubbish in, rubbish out"), safe to call from loops;
:func:`induced_field` and :func:`primary_field` are the checked API. What the
model leaves out: plasma-interaction fields (often as large as the induced
field near the body), asymmetric shells, motional induction.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from induct.constants import METRES_PER_KM, SECONDS_PER_HOUR

__all__ = [
    "GradientLine",
    "induced_field_nT",
    "induced_field_degree2_nT",
    "external_degree2_field_nT",
    "uniform_field_nT",
    "dipole_geometry",
    "induced_field",
    "primary_field",
    "check_positions_times",
    "check_lines",
    "planet_gradient_lines",
]

#: Points per chunk in the kernels (keeps the (n, K) work arrays in cache).
CHUNK = 32_768


# --------------------------------------------------------------------------- data
@dataclass(frozen=True, eq=False)
class GradientLine:
    """One period of the gradient of the driving field across the moon (degree 2).

    Parameters
    ----------
    period_s : float
        Period (s), > 0.
    gradient_nT_per_km : array_like, shape (3, 3), complex
        Complex amplitude G_k (nT/km) of ``dB_i/ds_j`` in the flow frame:
        ``B(s, t) = Re{G_k s exp(2 pi i t / period_s)}``. Must be symmetric and
        trace-free (a curl- and divergence-free field) to 1e-9 of its largest entry.
    label : str
        Optional name ("synodic", ...).
    """

    period_s: float
    gradient_nT_per_km: np.ndarray
    label: str = ""

    def __post_init__(self):
        if isinstance(self.period_s, bool) or not (math.isfinite(self.period_s) and self.period_s > 0.0):
            raise ValueError(f"period_s must be finite and > 0, got {self.period_s!r}")
        g = np.array(self.gradient_nT_per_km, dtype=complex)
        if g.shape != (3, 3) or not np.all(np.isfinite(g)):
            raise ValueError(f"gradient_nT_per_km must be 3 x 3 finite complex numbers, got shape {g.shape}")
        scale = float(np.max(np.abs(g))) if g.size else 0.0
        if np.max(np.abs(g - g.T)) > 1e-9 * scale:
            raise ValueError("gradient_nT_per_km must be symmetric (a curl-free field)")
        if abs(np.trace(g)) > 1e-9 * scale:
            raise ValueError("gradient_nT_per_km must be trace-free (a divergence-free field)")
        g.setflags(write=False)
        object.__setattr__(self, "period_s", float(self.period_s))
        object.__setattr__(self, "gradient_nT_per_km", g)
        object.__setattr__(self, "label", str(self.label))

    @property
    def period_h(self) -> float:
        """Period (h)."""
        return self.period_s / SECONDS_PER_HOUR


# --------------------------------------------------------------------------- kernels
def _real_sum(times, omega, coeffs):
    """``Re sum_k coeffs[k] exp(i omega[k] t)`` for each t: shape (n, C) from coeffs (K, C). Unchecked."""
    phase = times[:, None] * omega[None, :]
    return np.cos(phase) @ coeffs.real - np.sin(phase) @ coeffs.imag


def uniform_field_nT(times_s, amplitudes_nT, periods_s) -> np.ndarray:
    """Unchecked kernel: uniform driving field ``Re sum_k B_k exp(i w_k t)``.

    Parameters
    ----------
    times_s : ndarray, shape (N,)
        Times (s).
    amplitudes_nT : ndarray, shape (K, 3), complex
        B_k (nT).
    periods_s : ndarray, shape (K,)
        Periods (s).

    Returns
    -------
    ndarray, shape (N, 3)
        Field (nT).
    """
    omega = 2.0 * np.pi / np.asarray(periods_s, dtype=float)
    a = np.asarray(amplitudes_nT, dtype=complex).reshape(-1, 3)
    t = np.asarray(times_s, dtype=float)
    out = np.empty((t.shape[0], 3))
    for start in range(0, t.shape[0], CHUNK):
        sl = slice(start, start + CHUNK)
        out[sl] = _real_sum(t[sl], omega, a)
    return out


def induced_field_nT(positions_km, times_s, radius_km, responses, amplitudes_nT, periods_s) -> np.ndarray:
    """Unchecked kernel: degree-1 induced field of a sphere at points and times.

    ``B = Re sum_k -(R_k/2) (R/|r|)**3 [3 (B_k . rhat) rhat - B_k] exp(i w_k t)``.
    No input checks (points must lie outside the body; see :func:`induced_field`).

    Parameters
    ----------
    positions_km : ndarray, shape (N, 3)
        Moon-centred positions (km), flow frame.
    times_s : ndarray, shape (N,)
        Times (s from the epoch of the lines).
    radius_km : float
        Reference radius R of the responses (km).
    responses : ndarray, shape (K,), complex
        R_1 at each period (exp(+i w t) convention).
    amplitudes_nT : ndarray, shape (K, 3), complex
        B_k of each driving line (nT).
    periods_s : ndarray, shape (K,)
        Periods (s).

    Returns
    -------
    ndarray, shape (N, 3)
        Induced field (nT), flow frame.
    """
    pos = np.asarray(positions_km, dtype=float)
    t = np.asarray(times_s, dtype=float)
    omega = 2.0 * np.pi / np.asarray(periods_s, dtype=float)
    coeff = np.asarray(responses, dtype=complex)[:, None] * np.asarray(amplitudes_nT, dtype=complex).reshape(-1, 3)
    out = np.empty((pos.shape[0], 3))
    for start in range(0, pos.shape[0], CHUNK):
        sl = slice(start, start + CHUNK)
        e = _real_sum(t[sl], omega, coeff)  # Re sum_k R_k B_k e^{i w t}, (n, 3)
        p = pos[sl]
        r2 = np.einsum("ij,ij->i", p, p)
        r = np.sqrt(r2)
        scale = -0.5 * (radius_km / r) ** 3
        e_dot_u = np.einsum("ij,ij->i", e, p) / r2  # (E . rhat) / |r|
        out[sl] = scale[:, None] * (3.0 * e_dot_u[:, None] * p - e)
    return out


def dipole_geometry(positions_km, times_s, radius_km, amplitudes_nT, periods_s) -> np.ndarray:
    """Unchecked kernel: complex geometry terms G_k of the degree-1 induced field.

    ``G_k(r, t) = -(1/2) (R/|r|)**3 [3 (B_k . rhat) rhat - B_k] exp(i w_k t)``, so that
    the induced field is ``Re sum_k R_k G_k`` (linear in Re R_k and Im R_k).

    Parameters
    ----------
    positions_km : ndarray, shape (N, 3)
    times_s : ndarray, shape (N,)
    radius_km : float
    amplitudes_nT : ndarray, shape (K, 3), complex
    periods_s : ndarray, shape (K,)
        As for :func:`induced_field_nT`.

    Returns
    -------
    ndarray, shape (N, K, 3), complex
        G_k (nT per unit response).
    """
    pos = np.asarray(positions_km, dtype=float)
    t = np.asarray(times_s, dtype=float)
    b = np.asarray(amplitudes_nT, dtype=complex).reshape(-1, 3)
    omega = 2.0 * np.pi / np.asarray(periods_s, dtype=float)
    r = np.linalg.norm(pos, axis=1)
    u = pos / r[:, None]
    b_dot_u = u @ b.T  # (N, K) complex
    geom = 3.0 * b_dot_u[:, :, None] * u[:, None, :] - b[None, :, :]
    factor = -0.5 * (radius_km / r) ** 3
    return factor[:, None, None] * geom * np.exp(1j * t[:, None] * omega[None, :])[:, :, None]


def _gradient_sum(times, omega, gradients):
    """``Re sum_k G_k exp(i w_k t)`` as shape (n, 3, 3). Unchecked."""
    flat = np.asarray(gradients, dtype=complex).reshape(-1, 9)
    return _real_sum(times, omega, flat).reshape(-1, 3, 3)


def induced_field_degree2_nT(positions_km, times_s, radius_km, responses, gradients_nT_per_km, periods_s) -> np.ndarray:
    """Unchecked kernel: degree-2 induced field from driving-field gradients.

    ``B = Re sum_k Q_2 R**5 / |s|**4 [G_k shat - (5/2) (shat . G_k shat) shat] exp(i w_k t)``
    with ``Q_2 = (2/3) R_2`` (see the module docstring).

    Parameters
    ----------
    positions_km : ndarray, shape (N, 3)
        Moon-centred positions (km), flow frame.
    times_s : ndarray, shape (N,)
        Times (s).
    radius_km : float
        Reference radius R (km).
    responses : ndarray, shape (K,), complex
        R_2 at each period.
    gradients_nT_per_km : ndarray, shape (K, 3, 3), complex
        G_k (nT/km), symmetric and trace-free.
    periods_s : ndarray, shape (K,)
        Periods (s).

    Returns
    -------
    ndarray, shape (N, 3)
        Induced field (nT).
    """
    pos = np.asarray(positions_km, dtype=float)
    t = np.asarray(times_s, dtype=float)
    omega = 2.0 * np.pi / np.asarray(periods_s, dtype=float)
    q2 = (2.0 / 3.0) * np.asarray(responses, dtype=complex)
    coeff = q2[:, None, None] * np.asarray(gradients_nT_per_km, dtype=complex).reshape(-1, 3, 3)
    out = np.empty((pos.shape[0], 3))
    for start in range(0, pos.shape[0], CHUNK):
        sl = slice(start, start + CHUNK)
        h = _gradient_sum(t[sl], omega, coeff)
        p = pos[sl]
        r = np.linalg.norm(p, axis=1)
        u = p / r[:, None]
        hu = np.einsum("nij,nj->ni", h, u)
        uhu = np.einsum("ni,ni->n", u, hu)
        out[sl] = (radius_km**5 / r**4)[:, None] * (hu - 2.5 * uhu[:, None] * u)
    return out


def external_degree2_field_nT(positions_km, times_s, gradients_nT_per_km, periods_s) -> np.ndarray:
    """Unchecked kernel: the non-uniform part of the driving field, ``Re sum_k G_k s exp(i w_k t)``.

    Parameters
    ----------
    positions_km : ndarray, shape (N, 3)
        Moon-centred positions s (km).
    times_s : ndarray, shape (N,)
        Times (s).
    gradients_nT_per_km : ndarray, shape (K, 3, 3), complex
        G_k (nT/km).
    periods_s : ndarray, shape (K,)
        Periods (s).

    Returns
    -------
    ndarray, shape (N, 3)
        Field (nT).
    """
    pos = np.asarray(positions_km, dtype=float)
    t = np.asarray(times_s, dtype=float)
    omega = 2.0 * np.pi / np.asarray(periods_s, dtype=float)
    out = np.empty((pos.shape[0], 3))
    for start in range(0, pos.shape[0], CHUNK):
        sl = slice(start, start + CHUNK)
        out[sl] = np.einsum("nij,nj->ni", _gradient_sum(t[sl], omega, gradients_nT_per_km), pos[sl])
    return out


# --------------------------------------------------------------------------- checked API
def check_positions_times(positions_km, times_s, radius_km: float | None = None, *, what: str = "positions_km",
                          inside_what: str = "the body"):
    """Check trajectory arrays; return them as float arrays.

    Parameters
    ----------
    positions_km : array_like, shape (N, 3)
        Moon-centred positions (km), finite.
    times_s : array_like, shape (N,)
        Times (s), finite.
    radius_km : float, optional
        When given, every point must satisfy ``|r| >= radius_km`` (relative tolerance 1e-12).
    what : str
        Name used for the positions in messages.
    inside_what : str
        What ``radius_km`` bounds, for messages ("the body", "the ionosphere sheet").

    Returns
    -------
    positions_km : ndarray, shape (N, 3)
    times_s : ndarray, shape (N,)

    Raises
    ------
    ValueError
        Naming the first bad row (index from 0) and column: wrong shapes, NaN or
        infinite values, or a point inside ``radius_km``.
    """
    pos = np.asarray(positions_km, dtype=float)
    t = np.asarray(times_s, dtype=float)
    if pos.ndim != 2 or pos.shape[1] != 3:
        raise ValueError(f"{what} must have shape (N, 3), got {pos.shape}")
    if t.shape != (pos.shape[0],):
        raise ValueError(f"times_s must have shape (N,) = ({pos.shape[0]},), got {t.shape}")
    bad = ~np.isfinite(pos)
    if bad.any():
        i, c = np.argwhere(bad)[0]
        raise ValueError(f"{what}[{i}, {c}] ({'xyz'[c]}_km) must be finite, got {float(pos[i, c])!r}")
    bad_t = ~np.isfinite(t)
    if bad_t.any():
        i = int(np.argmax(bad_t))
        raise ValueError(f"times_s[{i}] must be finite, got {float(t[i])!r}")
    if radius_km is not None:
        r = np.linalg.norm(pos, axis=1)
        inside = r < radius_km * (1.0 - 1e-12)
        if inside.any():
            i = int(np.argmax(inside))
            raise ValueError(
                f"{what}[{i}] = {pos[i].tolist()} lies inside {inside_what}: |r| = {r[i]:.6g} km < "
                f"{radius_km:.6g} km; the induced-field formula holds only outside (|r| >= {radius_km:.6g} km)"
            )
    return pos, t


def _line_arrays(lines, kind, cls):
    lines = list(lines)
    if not lines:
        raise ValueError(f"{kind}: give at least one line")
    for i, ln in enumerate(lines):
        if not isinstance(ln, cls):
            raise ValueError(f"{kind}[{i}] must be an {cls.__module__}.{cls.__name__}, got {type(ln).__name__}")
    periods = np.array([ln.period_s for ln in lines], dtype=float)
    if np.unique(periods).size != periods.size:
        raise ValueError(f"{kind}: periods must be distinct")
    return lines, periods


def check_lines(lines) -> tuple[np.ndarray, np.ndarray]:
    """Check driving lines and return their periods and complex amplitudes as arrays.

    Parameters
    ----------
    lines : sequence of induct.field.drive.DriveLine
        At least one line; distinct periods.

    Returns
    -------
    periods_s : ndarray, shape (L,)
        Periods (s).
    amplitudes_nT : ndarray of complex, shape (L, 3)
        Complex amplitudes B_k (nT, flow frame), ``B(t) = Re sum_k B_k exp(i w_k t)``.

    Raises
    ------
    ValueError
        No lines, an item that is not a DriveLine, or repeated periods.

    Examples
    --------
    >>> from induct.field.drive import DriveLine
    >>> periods, amps = check_lines([DriveLine.from_amplitude_phase(10.0, [1.0, 0.0, 0.0], [0.0, 0.0, 0.0])])
    >>> periods.tolist(), amps.shape
    ([36000.0], (1, 3))
    """
    from induct.field.drive import DriveLine

    lines, periods = _line_arrays(lines, "lines", DriveLine)
    return periods, np.array([ln.b_complex_nT for ln in lines])


def _check_gradient_lines(degree2):
    lines, periods = _line_arrays(degree2, "degree2", GradientLine)
    return periods, np.array([ln.gradient_nT_per_km for ln in lines])


def _valid_radius_km(model) -> float:
    """Smallest radius (km) where the outside formulas hold: the surface, or the ionosphere sheet."""
    r = model.radius_km
    if model.ionosphere is not None:
        r += model.ionosphere.altitude_km
    return r


def induced_field(model, lines, positions_km, times_s, *, degree2=None) -> np.ndarray:
    """Induced field of an interior model at given positions and times (checked).

    Parameters
    ----------
    model : InteriorModel
        The body; R_1 (and R_2) come from ``model.response``.
    lines : sequence of DriveLine
        Driving lines (uniform field at the moon, flow frame), distinct periods.
    positions_km : array_like, shape (N, 3)
        Moon-centred positions (km) in the frame of the lines; outside the
        body, and above the ionosphere sheet when the model has one.
    times_s : array_like, shape (N,)
        Times (s from the epoch of the lines).
    degree2 : sequence of GradientLine, optional
        Gradient lines of the driving field; adds the degree-2 induced field
        (R_2 from ``model.response(degree=2)``).

    Returns
    -------
    ndarray, shape (N, 3)
        Induced field (nT), frame of the lines.

    Raises
    ------
    ValueError
        Bad shapes, non-finite values or points inside the body (naming the row),
        lines of the wrong type or with repeated periods.
    """
    from induct.model.interior import InteriorModel

    if not isinstance(model, InteriorModel):
        raise ValueError(f"model must be an induct.InteriorModel, got {type(model).__name__}")
    periods, amps = check_lines(lines)
    inside = "the body" if model.ionosphere is None else "the ionosphere sheet"
    pos, t = check_positions_times(positions_km, times_s, _valid_radius_km(model), inside_what=inside)
    r1 = model.response(periods_s=periods, degree=1).response
    out = induced_field_nT(pos, t, model.radius_km, r1, amps, periods)
    if degree2 is not None:
        p2, grads = _check_gradient_lines(degree2)
        r2 = model.response(periods_s=p2, degree=2).response
        out += induced_field_degree2_nT(pos, t, model.radius_km, r2, grads, p2)
    return out


def primary_field(lines, positions_km, times_s, *, degree2=None) -> np.ndarray:
    """Time-varying driving (primary) field at given positions and times (checked).

    The uniform part ``Re sum_k B_k exp(i w_k t)`` plus, with ``degree2``, the
    non-uniform part ``Re sum_k G_k s exp(i w_k t)``. The steady (mean) field
    is not part of the driving lines and is not included.

    Parameters
    ----------
    lines : sequence of DriveLine
    positions_km : array_like, shape (N, 3)
        Moon-centred positions (km).
    times_s : array_like, shape (N,)
        Times (s).
    degree2 : sequence of GradientLine, optional

    Returns
    -------
    ndarray, shape (N, 3)
        Field (nT).
    """
    periods, amps = check_lines(lines)
    pos, t = check_positions_times(positions_km, times_s)
    out = uniform_field_nT(t, amps, periods)
    if degree2 is not None:
        p2, grads = _check_gradient_lines(degree2)
        out += external_degree2_field_nT(pos, t, grads, p2)
    return out


# --------------------------------------------------------------------------- gradients from a planet
def _flow_gradient(planet, orbit, t_orb, t_rot, rel_step):
    """Gradient tensor of the planet's field at the moon, flow-frame axes (nT/km), shape (M, 3, 3)."""
    from induct.field.orbit import flow_frame_axes, planet_fixed_position

    pos = planet_fixed_position(planet, orbit, t_orb, t_rot)  # (M, 3) m
    axes = flow_frame_axes(pos)  # (M, 3, 3): rows are the flow axes in planet-fixed components
    h = rel_step * np.linalg.norm(pos, axis=1)  # (M,) m
    grad = np.empty((pos.shape[0], 3, 3))
    field = planet.field
    for j in range(3):
        step = axes[:, j, :] * h[:, None]
        plus = field.field_cartesian(pos + step)
        minus = field.field_cartesian(pos - step)
        # d B_pf / d s_j (nT/m), then rotate the field components into the flow frame
        grad[:, :, j] = np.einsum("mik,mk->mi", axes, (plus - minus) / (2.0 * h[:, None]))
    grad = 0.5 * (grad + np.transpose(grad, (0, 2, 1)))
    trace = np.trace(grad, axis1=1, axis2=2)
    grad -= trace[:, None, None] * np.eye(3)[None] / 3.0
    return grad * METRES_PER_KM


def planet_gradient_lines(system, moon=None, *, max_harmonic: int = 3, max_orbital: int = 2, samples: int = 64,
                          rel_step: float = 1e-4, min_amplitude_nT_per_km: float = 0.0) -> list[GradientLine]:
    """Gradient lines of a planet's internal field across a moon (degree-2 driving).

    The gradient ``dB_i/ds_j`` of the planet's internal field at the moon is
    taken by central differences (step ``rel_step`` times the moon's distance
    from the planet's centre) along the flow-frame axes, made exactly symmetric
    and trace-free, and split into lines with the exact two-period FFT of
    :func:`induct.field.spectrum.two_period_spectrum` (lines ``j/T_syn + k/T_orb``).

    Parameters
    ----------
    system : induct.field.drive.PlanetSystem
        Planet and orbits (a planet file).
    moon : str, optional
        Moon name (needed when the system has several moons).
    max_harmonic, max_orbital, samples
        As for :func:`induct.field.drive.planet_drive_spectrum`.
    rel_step : float
        Relative finite-difference step, in (0, 1e-2]. The default 1e-4 gives a
        relative truncation error of order 1e-8 for fields up to degree 10.
    min_amplitude_nT_per_km : float
        Drop lines whose largest entry is below this (nT/km).

    Returns
    -------
    list of GradientLine
        In decreasing order of amplitude; phases refer to the planet file's epoch.
    """
    from induct.field.spectrum import two_period_spectrum

    if not (math.isfinite(rel_step) and 0.0 < rel_step <= 1e-2):
        raise ValueError(f"rel_step must be in (0, 1e-2], got {rel_step!r}")
    if not (math.isfinite(min_amplitude_nT_per_km) and min_amplitude_nT_per_km >= 0.0):
        raise ValueError(f"min_amplitude_nT_per_km must be finite and >= 0, got {min_amplitude_nT_per_km!r}")
    _, orbit = system.orbit(moon)
    planet = system.planet
    cache = {}

    def components(idx):
        def func(t_orb, t_rot):
            key = (t_orb.tobytes(), t_rot.tobytes())
            if key not in cache:
                cache[key] = _flow_gradient(planet, orbit, t_orb, t_rot, rel_step)
            g = cache[key]
            return np.stack([g[:, i, j] for i, j in idx], axis=-1)

        return func

    parts = []
    for idx in (((0, 0), (0, 1), (0, 2)), ((1, 1), (1, 2), (2, 2))):
        spec = two_period_spectrum(components(idx), orbit.period_s, planet.rotation_period_s,
                                   retrograde=orbit.retrograde, samples=samples, max_harmonic=max_harmonic,
                                   max_orbital=max_orbital)
        parts.append({(ln.synodic_multiple, ln.orbital_multiple): ln for ln in spec.lines})
    keys = set(parts[0]) | set(parts[1])
    out = []
    for key in keys:
        g = np.zeros((3, 3), dtype=complex)
        line = parts[0].get(key) or parts[1].get(key)
        for part, idx in zip(parts, (((0, 0), (0, 1), (0, 2)), ((1, 1), (1, 2), (2, 2)))):
            if key in part:
                for value, (i, j) in zip(part[key].b_complex_nT, idx):
                    g[i, j] = g[j, i] = value
        g[2, 2] = -g[0, 0] - g[1, 1]  # exactly trace-free (the FFT of g_zz agrees to round-off)
        if float(np.max(np.abs(g))) <= min_amplitude_nT_per_km or not np.any(g):
            continue
        out.append(GradientLine(line.period_s, g, line.label))
    out.sort(key=lambda ln: -float(np.linalg.norm(ln.gradient_nT_per_km)))
    return out
