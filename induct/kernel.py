"""Unchecked, vectorised kernel for the induction response of a layered sphere.

Nothing here validates its input ("rubbish in, rubbish out"): the checked entry
points are :func:`induct.response.transfer` and :class:`induct.interior.InteriorModel`.
Inversions, maps and benchmarks call :func:`layered_response` directly on
arrays they have already checked.

Formulation
-----------
Quasi-static induction, mu = mu0 everywhere, time dependence ``exp(+i w t)``.
The poloidal radial function f(r) of degree n obeys, in a layer of conductivity
sigma, ``f'' + (2/r) f' - [n(n+1)/r**2 + kappa**2] f = 0`` with
``kappa = sqrt(i w mu0 sigma)``, so ``f = a i_n(kappa r) + b k_n(kappa r)``
(modified spherical Bessel functions); in an insulator ``f = A r**n + B r**-(n+1)``.
f and f' are continuous at every boundary.

The state carried outward is the bounded "insulator-equivalent" ratio

    rho(r) = (n - y) / (y + n + 1),   y = r f'/f,

which in an insulator is ``B r**-(2n+1) / A`` and therefore scales as
``(r_a/r_b)**(2n+1)`` across an insulating layer. At the reference radius the
normalised response is ``R_n = -rho(R)`` (``R_n = ((n+1)/n) Q_n``: 1 for a perfect
conductor filling the reference sphere, 0 for an insulator).

Inside a conducting layer [r_a, r_b] the ratio of irregular to regular parts,
``t = b k_n(kappa r) / (a i_n(kappa r))``, obeys ``t_b = t_a D`` with

    D = [k_n(z_b)/k_n(z_a)] [i_n(z_a)/i_n(z_b)]
      = exp(-2 kappa h) (r_a/r_b)**(n+1) [Khat_n(z_b)/Khat_n(z_a)] [itilde_n(z_a)/itilde_n(z_b)],

where ``itilde_n(z) = exp(-z) i_n(z)`` and ``Khat_n`` is the polynomial part of
``k_n`` (below). Only the decaying factor ``exp(-2 kappa h)`` ever appears, so
layers thousands of skin depths thick and metallic cores neither overflow nor
lose accuracy. With ``alpha(z) = z i_{n+1}(z)/i_n(z)`` and
``beta(z) = -z k_{n-1}(z)/k_n(z)`` (both -> 0 as z -> 0),

    t_a   = [alpha_a (1 + rho_a) + (2n+1) rho_a] / [(2n+1) - beta_a (1 + rho_a)]
    rho_b = [-alpha_b + t_b ((2n+1) - beta_b)] / [(2n+1) + alpha_b + t_b beta_b].

Special functions and their regimes
-----------------------------------
* ``Khat_n(x) = sum_k a_{n,k} x**(n-k)``, ``x = 2z``, ``a_{n,k} = (n+k)!/(k!(n-k)!)``,
  so that ``k_n(z) = (pi/2) exp(-z) Khat_n(2z) / (z (2z)**n)`` exactly. Used in every regime.
* ``itilde_n`` and ``alpha`` for ``|z| < SERIES_RADIUS[n]``: the power series
  ``i_n(z) = z**n/(2n+1)!! 0F1(; n+3/2; z**2/4)`` (no cancellation for small z).
* For ``|z| >= SERIES_RADIUS[n]``: the exact finite form
  ``itilde_n(z) = [K_n(-z) + (-1)**(n+1) exp(-2z) K_n(z)] / (2z)`` with
  ``K_n(z) = sum_k a_{n,k} (2z)**-k``.

The thresholds were chosen by comparison with mpmath at 50 digits (see
``tools/kernel_regimes.py``); the worst relative error of either branch on its
side of the threshold is below 1e-14 for degrees 1 to 12.

Array shapes
------------
``radii_m`` and ``conductivity_S_per_m`` have shape ``(..., L)`` and
``omega_rad_per_s`` broadcasts against ``(...)``; the result has the broadcast
batch shape. Layers are ordered from the centre outward and ``radii_m[..., -1]``
is the reference radius.
"""

from __future__ import annotations

import math

import numpy as np

from .constants import MU0

__all__ = ["layered_response", "layer_terms", "MAX_DEGREE", "SERIES_RADIUS"]

MAX_DEGREE = 12

# |z| below which the power series is used for i_n (index = degree n).
SERIES_RADIUS = np.array([2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0, 12.0, 13.0, 14.0])


def _k_coefficients(n: int) -> np.ndarray:
    """Coefficients a_{n,k} = (n+k)! / (k! (n-k)!), k = 0..n."""
    return np.array(
        [math.factorial(n + k) / (math.factorial(k) * math.factorial(n - k)) for k in range(n + 1)]
    )


_KCOEF = [_k_coefficients(n) for n in range(MAX_DEGREE + 2)]


def _series_terms(n: int) -> int:
    """Number of series terms giving double precision for |z| < SERIES_RADIUS[n]."""
    w = SERIES_RADIUS[n] ** 2 / 2.0
    term, k = 1.0, 0
    while term > 1e-18 or k < 3:
        k += 1
        term *= w / (k * (2 * n + 2 * k + 1))
    return k


_NTERMS = [_series_terms(n) for n in range(MAX_DEGREE + 2)]


def _khat(x: np.ndarray, n: int) -> np.ndarray:
    """Khat_n(x) = sum_k a_{n,k} x**(n-k) by Horner's rule (x = 2 z)."""
    coef = _KCOEF[n]
    out = np.full_like(x, coef[0])
    for c in coef[1:]:
        out *= x
        out += c
    return out


def _kpoly_inv(u: np.ndarray, n: int) -> np.ndarray:
    """K_n = sum_k a_{n,k} u**k with u = 1/(2z), by Horner's rule."""
    coef = _KCOEF[n]
    out = np.full_like(u, coef[-1])
    for c in coef[-2::-1]:
        out *= u
        out += c
    return out


def _series(w: np.ndarray, n: int) -> np.ndarray:
    """S_n(w) = 0F1(; n + 3/2; w/4) = sum_k (w/2)**k / (k! prod_j (2n + 2j + 1)), w = z**2."""
    half = 0.5 * w
    nterms = _NTERMS[n]
    # Horner form of the truncated series, innermost factor first.
    out = np.ones_like(w)
    for k in range(nterms, 0, -1):
        out *= half / (k * (2 * n + 2 * k + 1))
        out += 1.0
    return out


def _itilde_alpha(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Return ``(itilde_n(z) * 2z, alpha(z))`` for complex z with Re z > 0.

    ``itilde`` is returned times ``2z`` (a common factor that cancels in the
    ratios the kernel forms) for the large-|z| branch and consistently for the
    series branch.
    """
    itil = np.empty_like(z)
    alpha = np.empty_like(z)
    small = np.abs(z) < SERIES_RADIUS[n]
    if small.any():
        zs = z[small]
        w = zs * zs
        s_n = _series(w, n)
        s_n1 = _series(w, n + 1)
        dfact = float(np.prod(np.arange(1, 2 * n + 2, 2)))
        itil[small] = 2.0 * zs ** (n + 1) * np.exp(-zs) * (s_n / dfact)
        alpha[small] = w * s_n1 / ((2 * n + 3) * s_n)
    large = ~small
    if large.any():
        zl = z[large]
        u = 0.5 / zl
        e2 = np.exp(-2.0 * zl)
        sign = -1.0 if n % 2 == 0 else 1.0  # (-1)**(n+1)
        num_n = _kpoly_inv(-u, n) + sign * e2 * _kpoly_inv(u, n)
        num_n1 = _kpoly_inv(-u, n + 1) - sign * e2 * _kpoly_inv(u, n + 1)
        itil[large] = num_n
        alpha[large] = zl * num_n1 / num_n
    return itil, alpha


def layer_terms(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Per-radius quantities of a conducting layer at complex argument ``z = kappa r``.

    Returns ``(itilde2z, alpha, khat, beta)``: ``2 z exp(-z) i_n(z)``, ``z i_{n+1}/i_n``,
    ``Khat_n(2z)`` and ``-z k_{n-1}/k_n``; all arrays shaped like ``z``.
    """
    itil, alpha = _itilde_alpha(z, n)
    x = 2.0 * z
    khat = _khat(x, n)
    beta = -0.5 * x * x * _khat(x, n - 1) / khat
    return itil, alpha, khat, beta


def layered_response(
    radii_m: np.ndarray,
    conductivity_S_per_m: np.ndarray,
    omega_rad_per_s: np.ndarray,
    degree: int = 1,
) -> np.ndarray:
    """Normalised response R_n of a radially layered sphere (unchecked kernel).

    Parameters
    ----------
    radii_m : ndarray, shape (..., L)
        Outer radius of each layer (m), increasing from the centre outward.
        ``radii_m[..., -1]`` is the reference radius. Must be positive and
        non-decreasing; not checked.
    conductivity_S_per_m : ndarray, shape (..., L)
        Conductivity of each layer (S/m): 0, positive finite, or ``inf``
        (a perfect conductor; its top acts as a perfectly conducting surface).
    omega_rad_per_s : ndarray, broadcastable to (...)
        Angular frequency (rad/s), positive.
    degree : int
        Spherical-harmonic degree n, 1 <= n <= MAX_DEGREE.

    Returns
    -------
    ndarray of complex128, shape broadcast(radii_m[..., 0], conductivity[..., 0], omega)
        ``R_n = A exp(i phi)`` with the ``exp(+i w t)`` convention.
    """
    n = int(degree)
    radii = np.asarray(radii_m, dtype=float)
    sigma = np.asarray(conductivity_S_per_m, dtype=float)
    omega = np.asarray(omega_rad_per_s, dtype=float)
    batch = np.broadcast_shapes(radii.shape[:-1], sigma.shape[:-1], omega.shape)
    nlayer = max(radii.shape[-1], sigma.shape[-1])
    radii = np.broadcast_to(radii, batch + (nlayer,)).reshape(-1, nlayer)
    sigma = np.broadcast_to(sigma, batch + (nlayer,)).reshape(-1, nlayer)
    omega = np.broadcast_to(omega, batch).reshape(-1)
    rho = _propagate(radii, sigma, omega, n)
    return (-rho).reshape(batch)


def _propagate(radii: np.ndarray, sigma: np.ndarray, omega: np.ndarray, n: int) -> np.ndarray:
    """Carry rho from the centre to radii[:, -1]; flat arrays (M, L), (M, L), (M,)."""
    two_n1 = 2.0 * n + 1.0
    m, nlayer = radii.shape
    rho = np.zeros(m, dtype=complex)
    with np.errstate(under="ignore"):
        sqrt_iwmu = np.sqrt(1j * omega * MU0)
        for j in range(nlayer):
            s = sigma[:, j]
            r_b = radii[:, j]
            r_a = radii[:, j - 1] if j > 0 else np.zeros(m)
            perfect = np.isinf(s)
            conducting = (s > 0.0) & ~perfect
            insulating = ~(conducting | perfect)
            if insulating.any() and j > 0:
                ratio = r_a[insulating] / r_b[insulating]
                rho[insulating] *= ratio ** (2 * n + 1)
            if perfect.any():
                rho[perfect] = -1.0
            if not conducting.any():
                continue
            idx = np.flatnonzero(conducting) if not conducting.all() else slice(None)
            kappa = sqrt_iwmu[idx] * np.sqrt(s[idx])
            rb = r_b[idx]
            zb = kappa * rb
            itil_b, alpha_b, khat_b, beta_b = layer_terms(zb, n)
            ra = r_a[idx]
            rho_a = rho[idx]
            inner = ra > 0.0
            rho_b = np.empty_like(zb)
            # Innermost conducting sphere (no inner boundary): the regular solution.
            if (~inner).any():
                rho_b[~inner] = -alpha_b[~inner] / (two_n1 + alpha_b[~inner])
            if inner.any():
                sel = np.flatnonzero(inner) if not inner.all() else slice(None)
                za = kappa[sel] * ra[sel]
                itil_a, alpha_a, khat_a, beta_a = layer_terms(za, n)
                one_rho = 1.0 + rho_a[sel]
                t_a = (alpha_a * one_rho + two_n1 * rho_a[sel]) / (two_n1 - beta_a * one_rho)
                # D = exp(-2 kappa h) (r_a/r_b)^(n+1) [Khat_b/Khat_a] [itilde_a/itilde_b];
                # itil_* carry a factor 2z, whose ratio (r_a/r_b) is removed here.
                q = ra[sel] / rb[sel]
                decay = np.exp(-2.0 * (zb[sel] - za))
                d = decay * q**n * (khat_b[sel] / khat_a) * (itil_a / itil_b[sel])
                t_b = t_a * d
                ab, bb = alpha_b[sel], beta_b[sel]
                rho_b[sel] = (-ab + t_b * (two_n1 - bb)) / (two_n1 + ab + t_b * bb)
            rho[idx] = rho_b
    return rho
