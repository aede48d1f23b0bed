"""Unchecked, vectorised kernel for the induction response of a layered sphere.

Nothing here validates its input ("rubbish in, rubbish out"): the checked entry
points are :func:`induct.model.response.transfer` and :class:`induct.model.interior.InteriorModel`.
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

Thin layers
-----------
A conducting layer thinner than ``THIN_LAYER_FRACTION`` (1e-4) of its radius is
integrated instead with RK4 on the Riccati equation for rho written so that the
insulating part is exact and the conducting part acts over the exact thickness
``h = r_b - r_a``; forming the Bessel ratios at two nearly equal radii would
lose about ``eps r / h`` of relative accuracy. Layers that would need more than
4096 steps (strong, thin sheets) keep the Bessel path.

The thresholds were chosen by comparison with mpmath at 50 digits (see
``tools/kernel_regimes.py``); the worst relative error of either branch on its
side of the threshold is at most 1.2e-14 for degrees 1 to 12 (arguments on the
ray arg z = pi/4, the only one a real conductivity produces).

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

from induct.constants import MU0

__all__ = ["layered_response", "add_thin_sheet", "layer_terms", "MAX_DEGREE", "SERIES_RADIUS"]

MAX_DEGREE = 12

# |z| below which the power series is used for i_n (index = degree n).
SERIES_RADIUS = np.array([2.0, 2.5, 4.0, 6.0, 8.0, 10.0, 12.0, 14.0, 16.0, 18.0, 20.0, 22.0, 24.0, 26.0])


def _k_coefficients(n: int) -> np.ndarray:
    """Coefficients a_{n,k} = (n+k)! / (k! (n-k)!), k = 0..n."""
    return np.array(
        [math.factorial(n + k) / (math.factorial(k) * math.factorial(n - k)) for k in range(n + 1)]
    )


_KCOEF = [_k_coefficients(n) for n in range(MAX_DEGREE + 2)]

# exp(-x) below which a term is dropped: exp(-40) = 4e-18, and the polynomial ratios it
# multiplies are below 10 wherever |z| exceeds the series threshold.
_NEGLIGIBLE_EXPONENT = 40.0


def _series_terms(n: int, abs_w_max: float) -> int:
    """Number of terms of S_n that reach double precision for |z|**2 <= abs_w_max.

    The terms are bounded by those of the real series at |w|; truncating when
    the next bound falls below 1e-18 (relative to the leading 1) leaves a
    truncation error below 1e-17 since S_n is dominated by its leading term's
    order of magnitude on the ray arg z = pi/4 for |z| within the threshold.
    """
    half = 0.5 * abs_w_max
    term, k = 1.0, 0
    while term > 1e-18 or k < 2:
        k += 1
        term *= half / (k * (2 * n + 2 * k + 1))
    return k


#: Series terms per degree, enough for every |z| below that degree's SERIES_RADIUS.
_SERIES_TERMS = [_series_terms(n, float(SERIES_RADIUS[min(n, len(SERIES_RADIUS) - 1)]) ** 2) for n in range(MAX_DEGREE + 2)]


def _horner(x: np.ndarray, coef_high_first) -> np.ndarray:
    """sum_k coef[k] x**(N-k) by Horner's rule (coefficients from the highest power down)."""
    if len(coef_high_first) == 1:
        return np.full_like(x, coef_high_first[0])
    out = x * coef_high_first[0]
    out += coef_high_first[1]
    for c in coef_high_first[2:]:
        out *= x
        out += c
    return out


def _khat(x: np.ndarray, n: int) -> np.ndarray:
    """Khat_n(x) = sum_k a_{n,k} x**(n-k) (x = 2z)."""
    return _horner(x, _KCOEF[n])


def _kpoly_inv(u: np.ndarray, n: int) -> np.ndarray:
    """K_n = sum_k a_{n,k} u**k with u = 1/(2z)."""
    return _horner(u, _KCOEF[n][::-1])


def _series_coefficients(n: int, nterms: int) -> np.ndarray:
    """c_k = 1 / (k! prod_{j<=k} (2n + 2j + 1)), k = 0..nterms (coefficients of (w/2)**k)."""
    coef = np.ones(nterms + 1)
    for k in range(1, nterms + 1):
        coef[k] = coef[k - 1] / (k * (2 * n + 2 * k + 1))
    return coef


def _series(half_w: np.ndarray, n: int, nterms: int) -> np.ndarray:
    """S_n(w) = 0F1(; n + 3/2; w/4) = sum_k c_k (w/2)**k with w = z**2.

    ``half_w`` is w/2; ``nterms`` terms after the leading 1 (see :func:`_series_terms`).
    """
    return _horner(half_w, _series_coefficients(n, nterms)[::-1])


def _regular_small(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Series branch: (2z i_n(z), alpha(z)) for |z| < SERIES_RADIUS[n] (no exponential factor)."""
    w = z * z
    half_w = 0.5 * w
    # The term count depends only on the degree (the branch's largest |w|), never on the batch,
    # so that a model's response does not depend on the other models computed with it.
    nterms = _SERIES_TERMS[n]
    s_n = _series(half_w, n, nterms)
    s_n1 = _series(half_w, n + 1, nterms)
    dfact = float(np.prod(np.arange(1, 2 * n + 2, 2)))
    mant = z * (2.0 / dfact)
    for _ in range(n):
        mant *= z
    mant *= s_n
    alpha = w * s_n1
    alpha /= (2 * n + 3) * s_n
    return mant, alpha


def _regular_large(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Closed-form branch: (2z exp(-z) i_n(z), alpha(z)) for |z| >= SERIES_RADIUS[n]."""
    u = 0.5 / z
    mu = -u
    num_n = _kpoly_inv(mu, n)
    num_n1 = _kpoly_inv(mu, n + 1)
    # exp(-2z) K(z)/K(-z) < 1e-17 once Re z > NEGLIGIBLE_EXPONENT/2: skip the term.
    if z.real.min() < 0.5 * _NEGLIGIBLE_EXPONENT:
        sign = -1.0 if n % 2 == 0 else 1.0  # (-1)**(n+1)
        e2 = np.exp(-2.0 * z)
        e2 *= sign
        num_n += e2 * _kpoly_inv(u, n)
        num_n1 -= e2 * _kpoly_inv(u, n + 1)
    alpha = z * num_n1
    alpha /= num_n
    return num_n, alpha


def _regular(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """The regular solution at z, split as ``2z i_n(z) = mant * exp(shift)``.

    Returns ``(mant, alpha, shift)``: ``shift`` is z on the closed-form branch
    and 0 on the series branch (``None`` when every element is on the series
    branch), so that ratios of i_n are formed with a single exponential.
    """
    small = np.abs(z) < SERIES_RADIUS[n]
    if small.all():
        mant, alpha = _regular_small(z, n)
        return mant, alpha, None
    if not small.any():
        mant, alpha = _regular_large(z, n)
        return mant, alpha, z
    mant = np.empty_like(z)
    alpha = np.empty_like(z)
    mant[small], alpha[small] = _regular_small(z[small], n)
    large = ~small
    mant[large], alpha[large] = _regular_large(z[large], n)
    shift = np.where(small, 0.0, z)
    return mant, alpha, shift


def _irregular(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """``(Khat_n(2z), beta(z))`` with ``beta = -z k_{n-1}(z)/k_n(z) = -(x**2/2) Khat_{n-1}(x)/Khat_n(x)``."""
    x = 2.0 * z
    khat = _khat(x, n)
    beta = x * x
    beta *= -0.5
    if n > 1:
        beta *= _khat(x, n - 1)
    beta /= khat
    return khat, beta


def layer_terms(z: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Per-radius quantities of a conducting layer at complex argument ``z = kappa r``.

    Returns ``(itilde2z, alpha, khat, beta)``: ``2 z exp(-z) i_n(z)``, ``z i_{n+1}/i_n``,
    ``Khat_n(2z)`` and ``-z k_{n-1}/k_n``; all arrays shaped like ``z``. (For
    inspection and tests; the kernel itself avoids forming exp(-z).)
    """
    mant, alpha, shift = _regular(z, n)
    itil = mant * np.exp(-z + (0.0 if shift is None else shift))
    khat, beta = _irregular(z, n)
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


#: A conducting layer thinner than this fraction of its outer radius is integrated by
#: the Riccati equation for rho (below) instead of the Bessel-function ratios, whose
#: separately rounded boundary values would lose ~ eps r / h of relative accuracy.
THIN_LAYER_FRACTION = 1e-4
# Largest step (times the Lipschitz scale) and largest step count of that integration.
_THIN_STEP = 1e-3
_THIN_MAX_STEPS = 4096


def _thin_layer(rho_a, r_a, r_b, kappa2, n):
    """rho at r_b for a thin conducting layer, by RK4 on the Riccati equation for rho.

    With w(r) = (r/r_a)**(2n+1) and u = rho w, the equation
    d rho/dr = -(2n+1) rho / r - (1 + rho)**2 kappa**2 r / (2n+1)
    becomes du/dr = -(1 + u/w)**2 kappa**2 r w / (2n+1): the insulating part is
    exact and the conducting part is integrated over the exact thickness h, so
    a layer's small contribution keeps its full relative accuracy. Flat arrays;
    returns ``(rho_b, ok)`` where ``ok`` is False where more than
    ``_THIN_MAX_STEPS`` steps would be needed (the caller keeps its own value).
    """
    two_n1 = 2 * n + 1
    h = r_b - r_a
    # Scales on which the right-hand side varies: the conduction term, the powers of r,
    # and the relative change of (1 + rho) carried by the geometric decay of rho.
    one_abs = np.abs(1.0 + rho_a)
    with np.errstate(divide="ignore", invalid="ignore"):
        geometric = np.where(one_abs > 0, two_n1 * np.abs(rho_a) / (r_a * one_abs), np.inf)
    lip = h * (2.0 * one_abs * np.abs(kappa2) * r_b / two_n1 + (2 * n + 2) / r_a + geometric)
    steps = np.maximum(2.0, np.ceil(lip / _THIN_STEP))
    ok = steps <= _THIN_MAX_STEPS
    rho_b = np.zeros_like(rho_a, dtype=complex)
    if not ok.any():
        return rho_b, ok
    # Each element takes exactly its own number of steps (elements that are done stay frozen), so
    # its result does not depend on the other elements of the batch.
    own = steps[ok]
    nsteps = int(own.max())
    rho_a, r_a, r_b, h, kappa2 = rho_a[ok], r_a[ok], r_b[ok], h[ok], kappa2[ok]
    dr = h / own
    c = kappa2 / two_n1

    def rhs(r, u):
        w = (r / r_a) ** two_n1
        one = 1.0 + u / w
        return -(one * one) * c * r * w

    u = rho_a.astype(complex)
    r = r_a.copy()
    for k in range(nsteps):
        k1 = rhs(r, u)
        k2 = rhs(r + 0.5 * dr, u + 0.5 * dr * k1)
        k3 = rhs(r + 0.5 * dr, u + 0.5 * dr * k2)
        r_next = r_a + np.minimum(k + 1, own) * dr
        k4 = rhs(r_next, u + dr * k3)
        u = np.where(k < own, u + dr / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4), u)
        r = r_next
    rho_b[ok] = u / (r_b / r_a) ** two_n1
    return rho_b, ok


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
            mant_b, alpha_b, shift_b = _regular(zb, n)
            ra = r_a[idx]
            rho_a = rho[idx]
            inner = ra > 0.0
            if not inner.any():
                # Innermost conducting sphere (no inner boundary): the regular solution.
                rho[idx] = -alpha_b / (two_n1 + alpha_b)
                continue
            khat_b, beta_b = _irregular(zb, n)
            rho_b = np.empty_like(zb)
            if not inner.all():
                rho_b[~inner] = -alpha_b[~inner] / (two_n1 + alpha_b[~inner])
                sel = np.flatnonzero(inner)
                mant_b, alpha_b, khat_b, beta_b, zb = (v[sel] for v in (mant_b, alpha_b, khat_b, beta_b, zb))
                shift_b = None if shift_b is None else shift_b[sel]
            else:
                sel = slice(None)
            za = kappa[sel] * ra[sel]
            mant_a, alpha_a, shift_a = _regular(za, n)
            khat_a, beta_a = _irregular(za, n)
            rho_in = rho_a[sel]
            one_rho = 1.0 + rho_in
            t_a = (alpha_a * one_rho + two_n1 * rho_in) / (two_n1 - beta_a * one_rho)
            # D = [k_n(z_b)/k_n(z_a)] [i_n(z_a)/i_n(z_b)]
            #   = exp(-(z_b - z_a) + shift_a - shift_b) (r_a/r_b)**n [Khat_b/Khat_a] [mant_a/mant_b].
            # z_b - z_a = kappa h is formed from the exact thickness h = r_b - r_a (never as a
            # difference of two rounded products), so thin layers keep full accuracy:
            # both on the series branch -> -kappa h; both closed-form -> -2 kappa h;
            # a on the series branch, b closed-form -> -kappa h - z_b.
            kh = kappa[sel] * (rb[sel] - ra[sel])
            if shift_b is None:
                expo = -kh
            elif shift_a is None:
                expo = -kh - shift_b
            else:
                large_a = shift_a != 0.0
                expo = np.where(large_a, -2.0 * kh, -kh - shift_b)
            if expo.real.max() < -_NEGLIGIBLE_EXPONENT:
                # Every layer is many skin depths thick: the inner part is invisible.
                rho_b[sel] = -alpha_b / (two_n1 + alpha_b)
            else:
                q = ra[sel] / rb[sel]
                d = np.exp(expo)
                d *= q**n
                d *= khat_b / khat_a
                d *= mant_a / mant_b
                t_b = t_a * d
                rho_b[sel] = (-alpha_b + t_b * (two_n1 - beta_b)) / (two_n1 + alpha_b + t_b * beta_b)
            thin = (r_b[idx] - r_a[idx]) < THIN_LAYER_FRACTION * r_b[idx]
            thin &= r_a[idx] > 0.0
            if thin.any():
                sel_t = np.flatnonzero(thin)
                k2 = kappa[sel_t] ** 2
                rho_t, ok = _thin_layer(rho_a[sel_t], r_a[idx][sel_t], r_b[idx][sel_t], k2, n)
                rho_b[sel_t[ok]] = rho_t[ok]
            rho[idx] = rho_b
    return rho


def add_thin_sheet(
    response: np.ndarray,
    reference_radius_m: np.ndarray,
    sheet_radius_m: np.ndarray,
    conductance_S: np.ndarray,
    omega_rad_per_s: np.ndarray,
    degree: int = 1,
) -> np.ndarray:
    """Add a thin conducting sheet (for example an ionosphere) outside the reference radius.

    The sheet of conductance Sigma at radius a >= R leaves f continuous and
    raises y = r f'/f by ``s = i w mu0 Sigma a`` (the thin-sheet limit of the
    Riccati equation). In terms of rho this is

        rho+ = [(2n+1) rho - s (1 + rho)] / [(2n+1) + s (1 + rho)],

    with ``rho(a) = rho(R) (R/a)**(2n+1)`` carried through the insulating gap.
    The result is referred back to the reference radius R, so the returned
    R_n describes the field outside the sheet as seen from R.

    Parameters
    ----------
    response : ndarray, complex
        R_n of the body at the reference radius R.
    reference_radius_m, sheet_radius_m : ndarray
        R and a (m), a >= R.
    conductance_S : ndarray
        Sheet conductance Sigma (S), >= 0.
    omega_rad_per_s : ndarray
        Angular frequency (rad/s).
    degree : int
        Degree n.

    Returns
    -------
    ndarray, complex, broadcast shape of the inputs.
    """
    n = int(degree)
    two_n1 = 2.0 * n + 1.0
    scale = (np.asarray(reference_radius_m, dtype=float) / np.asarray(sheet_radius_m, dtype=float)) ** (2 * n + 1)
    rho = -np.asarray(response) * scale
    s = 1j * np.asarray(omega_rad_per_s, dtype=float) * MU0 * np.asarray(conductance_S, dtype=float) * sheet_radius_m
    rho = (two_n1 * rho - s * (1.0 + rho)) / (two_n1 + s * (1.0 + rho))
    return -rho / scale
