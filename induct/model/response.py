"""Checked response API and the quantities derived from a response.

:func:`transfer` validates its arrays once, then calls the unchecked kernel
(:func:`induct.model.kernel.layered_response`) chunk by chunk so that memory stays
bounded for any batch size. The derived quantities (amplitude, phase,
Q- and C-responses, skin depth, conductance, perfect-conductor bound) are plain
functions of their inputs.

Conventions (see README, "Conventions"): time dependence ``exp(+i w t)``;
``R_n = ((n+1)/n) Q_n = A exp(i phi)``, A = 1 for a perfect conductor filling
the reference sphere, 0 for an insulator, phase phi in [0, 90] degrees
(:func:`phase_lag_deg`: the induced field leads the perfect-conductor response
by phi and lags the inducing field by 180 - phi degrees).
"""

from __future__ import annotations

import numpy as np

from induct.constants import MU0
from induct.model.kernel import MAX_DEGREE, layered_response

__all__ = [
    "transfer",
    "amplitude",
    "phase_lag_deg",
    "q_response",
    "c_response_km",
    "skin_depth_m",
    "conductance_S",
    "perfect_conductor_bound",
    "check_degree",
    "DEFAULT_CHUNK",
    "PHASE_MEANING",
]

#: What phi = arg R_n means in the time domain (one sentence for tables, figures and files).
PHASE_MEANING = (
    "phase arg R = phi: the induced field leads the perfect-conductor response by phi and lags the "
    "inducing field by 180 - phi degrees (a weak conductor follows -dB/dt, Faraday's law)"
)

#: Model-periods handed to the kernel at a time: small enough to stay in cache,
#: large enough to amortise Python overhead (measured best on 2-core x86_64).
DEFAULT_CHUNK = 8192


def check_degree(degree) -> int:
    """Return ``degree`` as an int after checking 1 <= degree <= MAX_DEGREE."""
    if isinstance(degree, bool) or int(degree) != degree:
        raise ValueError(f"degree must be an integer from 1 to {MAX_DEGREE}, got {degree!r}")
    n = int(degree)
    if not 1 <= n <= MAX_DEGREE:
        raise ValueError(f"degree must be from 1 to {MAX_DEGREE}, got {n}")
    return n


def _check_layers(radii: np.ndarray, sigma: np.ndarray) -> None:
    if radii.ndim < 1 or radii.shape[-1] < 1:
        raise ValueError("radii_m must have at least one layer along its last axis")
    if sigma.ndim < 1 or sigma.shape[-1] != radii.shape[-1]:
        raise ValueError(
            f"conductivity_S_per_m must have the same number of layers as radii_m "
            f"(last axis {radii.shape[-1]}), got shape {sigma.shape}"
        )
    if not np.all(np.isfinite(radii)):
        raise ValueError("radii_m must be finite (no NaN or inf)")
    if np.any(radii <= 0.0):
        raise ValueError(f"radii_m must be > 0 m, got minimum {radii.min():g}")
    if radii.shape[-1] > 1 and np.any(np.diff(radii, axis=-1) <= 0.0):
        raise ValueError("radii_m must increase strictly from the centre outward (each layer thicker than 0 m)")
    if np.any(np.isnan(sigma)):
        raise ValueError("conductivity_S_per_m contains NaN; allowed: 0 <= sigma < inf (inf in the innermost layer)")
    if np.any(sigma < 0.0):
        raise ValueError(f"conductivity_S_per_m must be >= 0 S/m, got minimum {np.nanmin(sigma):g}")
    if sigma.shape[-1] > 1 and np.any(np.isinf(sigma[..., 1:])):
        raise ValueError("conductivity_S_per_m may be inf (perfect conductor) only in the innermost layer")


def transfer(radii_m, conductivity_S_per_m, period_s, degree: int = 1, *, chunk_size: int = DEFAULT_CHUNK):
    """Normalised induction response R_n = A exp(i phi) of a radially layered sphere.

    Parameters
    ----------
    radii_m : array_like, shape (..., L)
        Outer radius of each layer (m), from the centre outward, strictly
        increasing. The last entry is the reference radius R at which the
        response is normalised (usually the body's surface).
    conductivity_S_per_m : array_like, shape (..., L)
        Conductivity of each layer (S/m). 0 is allowed in any layer;
        ``numpy.inf`` (a perfect conductor) in the innermost layer.
    period_s : array_like
        Period of the inducing field (s), > 0; broadcasts against the batch
        shape ``(...)`` by NumPy rules.
    degree : int, optional
        Spherical-harmonic degree n of the inducing field, 1 to
        :data:`induct.model.kernel.MAX_DEGREE` (12). Default 1 (uniform field).
    chunk_size : int, optional
        Model-periods evaluated at a time; bounds working memory to a few MB.

    Returns
    -------
    ndarray of complex128
        ``R_n`` with the broadcast batch shape: radii (N, 1, L), conductivity
        (N, 1, L) and period (P,) give shape (N, P). Time convention
        ``exp(+i w t)``; ``A = |R_n|`` is 1 for a perfect conductor filling the
        reference sphere and exactly 0 for an insulator; ``phi = arg R_n`` is in
        [0, pi/2] (the induced field leads the perfect-conductor response by
        phi and lags the inducing field by pi - phi; see :func:`phase_lag_deg`).

    Raises
    ------
    ValueError
        On NaN, non-positive or non-increasing radii, negative conductivity,
        inf outside the innermost layer, non-positive or non-finite periods,
        or a degree outside 1..12.

    Notes
    -----
    The model is quasi-static induction in a spherically symmetric body
    (mu = mu0). Plasma interaction, asymmetric shells and motional induction
    are not included. Accuracy: worst relative error 8.7e-13 (median 3e-16)
    against an independent high-precision mpmath reference over 2904
    model-periods spanning radii 1 km-1e5 km, 1-100 layers, conductivities 0
    and 1e-12-1e7 S/m, periods 1 s-1e10 s and degrees 1-12
    (tests/test_kernel_reference.py; spec 1e-10).

    Memory: broadcast inputs are never copied; each chunk of ``chunk_size``
    model-periods is gathered from broadcast views, so the peak above the
    result is a few chunk-sized arrays (radii (50000, 1, 4) against 1000
    periods: 0.80 GB result, 0.003 GB above it; tools/measure_transfer_memory.py).
    A model's value does not depend on the batch or chunk it is computed in
    (to rounding, <= 2e-14; tests/model/test_transfer_chunking.py).

    Examples
    --------
    >>> import numpy as np
    >>> from induct import transfer
    >>> radii = [600e3, 1425e3, 1520e3, 1540e3]          # m, centre outward
    >>> sigma = [1e5, 0.01, 2.8, 1e-6]                    # S/m
    >>> r = transfer(radii, sigma, np.array([12.12, 84.7]) * 3600.0)
    >>> np.round(r, 4)
    array([0.9076+0.0536j, 0.8226+0.251j ])
    """
    n = check_degree(degree)
    radii = np.asarray(radii_m, dtype=float)
    sigma = np.asarray(conductivity_S_per_m, dtype=float)
    period = np.asarray(period_s, dtype=float)
    _check_layers(radii, sigma)
    if np.any(~np.isfinite(period)) or np.any(period <= 0.0):
        bad = period[~(np.isfinite(period) & (period > 0))]
        raise ValueError(f"period_s must be finite and > 0 s, got {float(bad.ravel()[0])!r}")
    if int(chunk_size) < 1:
        raise ValueError(f"chunk_size must be >= 1, got {chunk_size}")
    batch = np.broadcast_shapes(radii.shape[:-1], sigma.shape[:-1], period.shape)
    nlayer = radii.shape[-1]
    # Broadcast *views* (no copy); each chunk gathers its own rows by flat index, so the
    # working memory is a few chunk-sized arrays whatever the batch (issue 12: copying the
    # broadcast inputs cost 3.5x the result's size). Every element goes through the same
    # kernel code as it would alone, so its value does not depend on the batch or chunk.
    view_r = np.broadcast_to(radii, batch + (nlayer,))
    view_s = np.broadcast_to(sigma, batch + (nlayer,))
    view_p = np.broadcast_to(period, batch)
    grid = batch if batch else (1,)  # a 0-d batch is gathered as one element
    view_r, view_s, view_p = view_r.reshape(grid + (nlayer,)), view_s.reshape(grid + (nlayer,)), view_p.reshape(grid)
    out = np.empty(batch, dtype=complex)
    flat_out = out.reshape(-1)  # a view: out is C-contiguous
    step = int(chunk_size)
    for start in range(0, flat_out.size, step):
        idx = np.unravel_index(np.arange(start, min(start + step, flat_out.size)), grid)
        omega = 2.0 * np.pi / view_p[idx]
        flat_out[start:start + step] = layered_response(view_r[idx], view_s[idx], omega, n)
    # An insulating body gives rho = 0 and R = -rho = -0-0j; report +0 (its phase is 0, not -180 deg).
    flat_out += 0.0
    return out.reshape(batch)


def amplitude(response) -> np.ndarray:
    """Amplitude A = |R_n| (dimensionless, 0 to 1).

    Examples
    --------
    >>> float(amplitude(0.6 + 0.8j))
    1.0
    """
    return np.abs(np.asarray(response))


def phase_lag_deg(response) -> np.ndarray:
    """Phase phi = arg R_n (degrees, 0 to 90; 0 for an insulator, whose R_n is 0).

    Meaning in the time domain (``exp(+i w t)``; induced field
    ``B_ind = -(R_n/2) (R/r)**3 [3 (B_e . rhat) rhat - B_e]`` for n = 1): the induced
    field *leads* the ideal (perfect-conductor) response by phi, i.e. it lags the
    inducing (primary) field by 180 - phi degrees. A weak conductor (phi -> 90)
    follows -dB/dt (Faraday's law); a perfect conductor (phi = 0) is exactly
    opposite to the primary field. The name ``phase_lag_deg`` is kept because
    it is used in tables, JSON keys, map quantities and measurement files; it
    is the phase of the complex response, not a delay of the induced field.

    Parameters
    ----------
    response : array_like, complex
        R_n as returned by :func:`transfer`.

    Returns
    -------
    ndarray of float
        phi in degrees, same shape as ``response``.

    Examples
    --------
    >>> float(phase_lag_deg(0.5 + 0.5j))
    45.0
    >>> float(phase_lag_deg(complex(-0.0, -0.0)))   # an insulator: 0, not -180
    0.0
    """
    # + 0.0 turns -0 into +0 (IEEE 754 round-to-nearest), so R = -0-0j gives 0 deg, not -180 deg.
    return np.degrees(np.angle(np.asarray(response) + 0.0))


def q_response(response, degree: int = 1) -> np.ndarray:
    """Geomagnetic Q-response Q_n = i_n / e_n = n/(n+1) R_n (dimensionless, complex).

    Examples
    --------
    >>> complex(q_response(0.9 + 0.1j, degree=1))   # Q_1 = R_1 / 2
    (0.45+0.05j)
    """
    n = check_degree(degree)
    return n / (n + 1.0) * np.asarray(response)


def c_response_km(response, radius_km, degree: int = 1) -> np.ndarray:
    """C-response (inductive scale length, km, complex): C_n = R [n - (n+1)Q_n] / [n(n+1)(1+Q_n)].

    Schmucker (1970); Olsen (1998). An insulator gives R/(n+1); a uniform
    conductor at high frequency gives (1 - i) delta / 2 in the exp(+i w t)
    convention.

    Parameters
    ----------
    response : array_like, complex
        R_n as returned by :func:`transfer`.
    radius_km : array_like
        Reference radius R (km), broadcast against ``response``.
    degree : int
        Degree n.

    Examples
    --------
    >>> c = c_response_km(1e-12 + 0j, 1540.0)     # an insulator: C_1 = R/2
    >>> round(float(c.real), 3)
    770.0
    """
    n = check_degree(degree)
    q = q_response(response, n)
    return np.asarray(radius_km, dtype=float) * (n - (n + 1) * q) / (n * (n + 1) * (1.0 + q))


def skin_depth_m(conductivity_S_per_m, period_s) -> np.ndarray:
    """Skin depth delta = sqrt(2 / (w mu0 sigma)) (m); ``inf`` where sigma = 0, 0 where sigma = inf.

    Broadcasts ``conductivity_S_per_m`` (S/m) against ``period_s`` (s).

    Examples
    --------
    >>> round(float(skin_depth_m(3.0, 12.0 * 3600.0)) / 1e3, 1)   # km, 3 S/m at 12 h
    60.4
    """
    sigma = np.asarray(conductivity_S_per_m, dtype=float)
    period = np.asarray(period_s, dtype=float)
    omega = 2.0 * np.pi / period
    with np.errstate(divide="ignore"):
        return np.sqrt(2.0 / (omega * MU0 * sigma))


def conductance_S(conductivity_S_per_m, thickness_m) -> np.ndarray:
    """Layer conductance Sigma = sigma h (S) from conductivity (S/m) and thickness (m).

    Examples
    --------
    >>> float(conductance_S(2.8, 95e3))   # 2.8 S/m over 95 km
    266000.0
    """
    return np.asarray(conductivity_S_per_m, dtype=float) * np.asarray(thickness_m, dtype=float)


def perfect_conductor_bound(top_radius_m, reference_radius_m, degree: int = 1) -> np.ndarray:
    """Upper bound on A: (r_top / R)**(2n+1), reached by a perfect conductor of radius r_top.

    ``top_radius_m`` is the outer radius of the outermost conducting layer (m),
    ``reference_radius_m`` the reference radius R (m).

    Examples
    --------
    >>> round(float(perfect_conductor_bound(1520e3, 1540e3)), 4)   # ocean top 20 km below the surface
    0.9615
    """
    n = check_degree(degree)
    ratio = np.asarray(top_radius_m, dtype=float) / np.asarray(reference_radius_m, dtype=float)
    return ratio ** (2 * n + 1)
