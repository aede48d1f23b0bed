"""Independent approximations to the layered-sphere response.

Each is a closed form with its own range of validity; they serve as quick
estimates and as independent checks of the exact kernel. Time convention
``exp(+i w t)``, normalisation as in :func:`induct.model.response.transfer`.

* :func:`uniform_sphere` -- exact for a uniform sphere (Parkinson 1983; Wait 1951).
* :func:`thin_shell` -- a thin conducting shell, h << delta and h << a.
* :func:`born_low_frequency` -- first-order (Born) estimate for any sigma(r), R << delta.
* :func:`high_frequency` -- the perfect-conductor-at-depth asymptote, delta << r_top.
"""

from __future__ import annotations

import numpy as np
from scipy import special

from induct.constants import MU0
from induct.model.response import check_degree

__all__ = ["uniform_sphere", "thin_shell", "born_low_frequency", "high_frequency"]


def _omega(period_s) -> np.ndarray:
    period = np.asarray(period_s, dtype=float)
    if np.any(~np.isfinite(period)) or np.any(period <= 0):
        raise ValueError("period_s must be finite and > 0 s")
    return 2.0 * np.pi / period


def uniform_sphere(radius_m, conductivity_S_per_m, period_s, degree: int = 1) -> np.ndarray:
    """Exact response of a uniform sphere: R_n = i_{n+1}(kappa R) / i_{n-1}(kappa R).

    Parkinson (1983), Introduction to Geomagnetism; Wait (1951), Geophysics 16.
    Evaluated with scipy's exponentially scaled modified Bessel functions
    (``ive``, AMOS) of half-integer order, which share the exp(kappa R) factor
    so the ratio never overflows.

    Parameters
    ----------
    radius_m, conductivity_S_per_m, period_s : array_like
        Sphere radius (m, > 0), conductivity (S/m, > 0) and period (s, > 0);
        broadcast together.
    degree : int
        Degree n (1-12).

    Returns
    -------
    ndarray of complex128, broadcast shape of the inputs.
    """
    n = check_degree(degree)
    radius = np.asarray(radius_m, dtype=float)
    sigma = np.asarray(conductivity_S_per_m, dtype=float)
    if np.any(~(radius > 0)) or np.any(~(sigma > 0)) or np.any(np.isinf(sigma)):
        raise ValueError("radius_m and conductivity_S_per_m must be finite and > 0")
    z = np.sqrt(1j * _omega(period_s) * MU0 * sigma) * radius
    return special.ive(n + 1.5, z) / special.ive(n - 0.5, z)


def thin_shell(shell_radius_m, conductance_S, reference_radius_m, period_s, degree: int = 1) -> np.ndarray:
    """Thin conducting shell: R_n = (a/R)**(2n+1) i w tau / (1 + i w tau), tau = mu0 Sigma a / (2n+1).

    Classical thin-sheet result. Valid for a shell much thinner than both its
    skin depth and its radius; place ``a`` at the shell's mid-depth. The
    relative error near w tau = 1 is about -0.17 (h/delta)**2.

    Parameters
    ----------
    shell_radius_m : array_like
        Radius a of the shell (m).
    conductance_S : array_like
        Conductance Sigma = sigma h of the shell (S).
    reference_radius_m : array_like
        Reference radius R (m).
    period_s : array_like
        Period (s).
    degree : int
        Degree n.
    """
    n = check_degree(degree)
    a = np.asarray(shell_radius_m, dtype=float)
    tau = MU0 * np.asarray(conductance_S, dtype=float) * a / (2 * n + 1)
    iwt = 1j * _omega(period_s) * tau
    return (a / np.asarray(reference_radius_m, dtype=float)) ** (2 * n + 1) * iwt / (1.0 + iwt)


def born_low_frequency(radii_m, conductivity_S_per_m, period_s, degree: int = 1) -> np.ndarray:
    """First-order low-frequency estimate for any layered sigma(r).

    R_n ~ i w mu0 / ((2n+1) R**(2n+1)) * integral_0^R sigma(r) r**(2n+2) dr,
    exact in the limit R/delta -> 0 (phase -> 90 degrees: the induced field follows -dB/dt). For a uniform
    sphere and n = 1: A ~ (2/15)(R/delta)**2.

    Parameters
    ----------
    radii_m, conductivity_S_per_m : array_like, shape (..., L)
        Layer outer radii (m, from the centre outward) and conductivities (S/m, finite).
    period_s : array_like
        Period (s), broadcast against ``(...)``.
    degree : int
        Degree n.
    """
    n = check_degree(degree)
    radii = np.asarray(radii_m, dtype=float)
    sigma = np.asarray(conductivity_S_per_m, dtype=float)
    inner = np.concatenate([np.zeros_like(radii[..., :1]), radii[..., :-1]], axis=-1)
    p = 2 * n + 3
    big_r = radii[..., -1]
    # integral of r**(2n+2) over each layer, scaled by R**(2n+1) to stay in range.
    weights = ((radii / big_r[..., None]) ** p - (inner / big_r[..., None]) ** p) * big_r[..., None] ** 2 / p
    integral = np.sum(sigma * weights, axis=-1)
    return 1j * _omega(period_s) * MU0 * integral / (2 * n + 1)


def high_frequency(top_radius_m, conductivity_S_per_m, reference_radius_m, period_s, degree: int = 1) -> np.ndarray:
    """High-frequency asymptote: a perfect conductor delta/2 below the top of the conductor.

    R_n ~ (r_top/R)**(2n+1) [1 - (2n+1) delta / (2 r_top) (1 - i)], valid for
    delta << r_top and a conducting layer many skin depths thick.

    Parameters
    ----------
    top_radius_m : array_like
        Outer radius of the outermost conducting layer (m).
    conductivity_S_per_m : array_like
        Its conductivity (S/m).
    reference_radius_m : array_like
        Reference radius R (m).
    period_s : array_like
        Period (s).
    degree : int
        Degree n.
    """
    n = check_degree(degree)
    r_top = np.asarray(top_radius_m, dtype=float)
    delta = np.sqrt(2.0 / (_omega(period_s) * MU0 * np.asarray(conductivity_S_per_m, dtype=float)))
    scale = (r_top / np.asarray(reference_radius_m, dtype=float)) ** (2 * n + 1)
    return scale * (1.0 - (2 * n + 1) * delta / (2.0 * r_top) * (1.0 - 1j))
