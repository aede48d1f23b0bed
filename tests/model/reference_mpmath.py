"""Independent high-precision reference for the layered-sphere induction response.

Used by ``tools/make_kernel_reference.py`` (to generate ``tests/model/data/kernel_reference.json``)
and by the live checks in ``tests/test_kernel_reference.py``. The formulation is deliberately
different from the kernel's (which carries a bounded ratio with exponentially scaled Bessel
functions): here the 2-vector ``(f, r f')`` of the poloidal radial function is carried
outward with *unscaled* mpmath Bessel functions, solving the 2x2 continuity system for the
coefficients of the two independent solutions at the bottom of every layer and evaluating
them at its top (transfer of coefficients). Accuracy comes from working precision alone; the
adaptive driver repeats the computation at a higher precision until two results agree.

Conventions (``/work/shared/domain/induction.md``): quasi-static, mu = mu0 = 4 pi 1e-7 H/m,
time dependence exp(+i w t), kappa = sqrt(i w mu0 sigma) with Re kappa > 0.

* Conducting layer: ``f = a i_n(kappa r) + b k_n(kappa r)`` with
  ``i_n(z) = sqrt(pi/(2z)) I_{n+1/2}(z)``, ``k_n(z) = sqrt(pi/(2z)) K_{n+1/2}(z)``
  (Abramowitz & Stegun 1964, Handbook of Mathematical Functions, section 10.2; equation numbers
  10.2.2 and 10.2.4 from memory), and the derivatives
  ``z i_n'(z) = z i_{n-1}(z) - (n+1) i_n(z)``, ``z k_n'(z) = -z k_{n-1}(z) - (n+1) k_n(z)``, which
  follow from ``I_nu' = I_{nu-1} - (nu/z) I_nu`` and ``K_nu' = -K_{nu-1} - (nu/z) K_nu``
  (NIST DLMF 10.29.2) applied to ``z**-1/2 I_{n+1/2}(z)`` and ``z**-1/2 K_{n+1/2}(z)``.
* Insulating layer: ``f = A r**n + B r**-(n+1)``.
* Innermost layer: the solution regular at r = 0; a perfect conductor (sigma = inf) imposes
  ``f = 0`` at its surface (no normal field enters it).
* Outside the reference radius R: ``R_n = -B R**-(2n+1) / A`` (1 for a perfect conductor filling
  the reference sphere, 0 for an insulator).
"""

from __future__ import annotations

import math
import random

import mpmath as mp

MU0_EXACT = "4e-7"  # mu0 = 4 pi 1e-7 H/m, the conventional value (common practice)


def _to_mpf(x) -> mp.mpf:
    """Exact conversion: mpf passes through; floats and decimal strings are read as binary64."""
    return x if isinstance(x, mp.mpf) else mp.mpf(float(x))


def _conductor_basis(n: int, kappa: mp.mpc, r: mp.mpf) -> mp.matrix:
    """Columns: (g, r g') for i_n(kappa r) and k_n(kappa r), common factor sqrt(pi/2) dropped."""
    z = kappa * r
    nu = n + mp.mpf(1) / 2
    s = 1 / mp.sqrt(z)
    i_hi, i_lo = mp.besseli(nu, z), mp.besseli(nu - 1, z)
    k_hi, k_lo = mp.besselk(nu, z), mp.besselk(nu - 1, z)
    return mp.matrix(
        [
            [s * i_hi, s * k_hi],
            [s * (z * i_lo - (n + 1) * i_hi), s * (-z * k_lo - (n + 1) * k_hi)],
        ]
    )


def _insulator_basis(n: int, r: mp.mpf, r0: mp.mpf) -> mp.matrix:
    """Columns: (g, r g') for (r/r0)**n and (r0/r)**(n+1)."""
    g1 = (r / r0) ** n
    g2 = (r0 / r) ** (n + 1)
    return mp.matrix([[g1, g2], [n * g1, -(n + 1) * g2]])


def _solve2(g: mp.matrix, v: mp.matrix) -> mp.matrix:
    """Cramer's rule for the 2x2 continuity system g c = v.

    The determinant is a Wronskian, r (g1 g2' - g1' g2), whose two products have the same sign
    for both bases, so it is computed without cancellation even when the columns differ by
    exp(2 |kappa r|) in size (mpmath's LU solver would call such a matrix singular).
    """
    det = g[0, 0] * g[1, 1] - g[0, 1] * g[1, 0]
    return mp.matrix([[(v[0] * g[1, 1] - g[0, 1] * v[1]) / det], [(g[0, 0] * v[1] - g[1, 0] * v[0]) / det]])


def _normalise(v: mp.matrix) -> mp.matrix:
    scale = max(abs(v[0]), abs(v[1]))
    return v / scale


def response_mp(radii_m, conductivity_S_per_m, period_s, degree: int, dps: int) -> mp.mpc:
    """Normalised response R_n at a fixed working precision.

    Parameters
    ----------
    radii_m : sequence of float, str or mpf, length L
        Outer radius of each layer (m), centre outward; the last is the reference radius.
        Floats and strings are taken as the exact binary64 value they denote.
    conductivity_S_per_m : sequence of float, str or mpf, length L
        Layer conductivities (S/m): 0, positive finite, or ``inf`` (innermost layer only).
    period_s : float, str or mpf
        Period (s); the angular frequency is 2 pi / period evaluated at working precision.
    degree : int
        Spherical-harmonic degree n >= 1.
    dps : int
        mpmath decimal working precision.

    Returns
    -------
    mpmath.mpc
        R_n (exp(+i w t) convention), correct to roughly ``dps`` minus the digits lost to
        cancellation; use :func:`response_adaptive` for a checked value.
    """
    n = int(degree)
    with mp.workdps(dps):
        radii = [_to_mpf(r) for r in radii_m]
        sigma = [_to_mpf(s) for s in conductivity_S_per_m]
        omega = 2 * mp.pi / _to_mpf(period_s)
        mu0 = mp.mpf(MU0_EXACT) * mp.pi

        if all(s == 0 for s in sigma):
            return mp.mpc(0)  # no conductor anywhere: no induced field

        def kappa_of(s):
            return mp.sqrt(mp.mpc(0, 1) * omega * mu0 * s)

        # Innermost layer: the solution regular at the centre, state (f, r f') at its top.
        r0, s0 = radii[0], sigma[0]
        if mp.isinf(s0):
            state = mp.matrix([[0], [1]])
        elif s0 == 0:
            state = mp.matrix([[1], [n]])
        else:
            state = _conductor_basis(n, kappa_of(s0), r0)[:, 0]
        state = _normalise(state)

        for j in range(1, len(radii)):
            ra, rb, s = radii[j - 1], radii[j], sigma[j]
            if s == 0:
                ga, gb = _insulator_basis(n, ra, ra), _insulator_basis(n, rb, ra)
            else:
                kap = kappa_of(s)
                ga, gb = _conductor_basis(n, kap, ra), _conductor_basis(n, kap, rb)
            coeff = _solve2(ga, state)
            state = _normalise(gb * coeff)

        big_r = radii[-1]
        a_b = _solve2(_insulator_basis(n, big_r, big_r), state)
        # With r0 = R the insulator basis is (r/R)**n, (R/r)**(n+1): R_n = -B/A directly.
        return -a_b[1] / a_b[0]


def response_adaptive(
    radii_m, conductivity_S_per_m, period_s, degree: int, digits: int = 30, start_dps: int = 50
) -> tuple[mp.mpc, int]:
    """R_n correct to about ``digits`` significant digits, and the precision that achieved it.

    The value is computed at ``dps`` and at ``dps + max(25, dps // 2)``; if the two agree to
    ``digits`` significant digits (relative to the modulus) the higher-precision value is
    returned, otherwise the precision is raised and the comparison repeated.  A first guess
    of the cancellation loss is taken from the modulus of the first result (the loss is
    about ``-log10 |R_n|`` for weakly inducing models, where ``r f'/f`` is close to ``n``).

    Returns
    -------
    value : mpmath.mpc
    dps : int
        The (higher) working precision of the accepted pair.
    """
    insulating = all(_to_mpf(s) == 0 for s in conductivity_S_per_m)
    dps = start_dps
    prev = response_mp(radii_m, conductivity_S_per_m, period_s, degree, dps)
    if prev != 0:
        loss = max(0, -int(mp.floor(mp.log10(abs(prev)))))
        dps = start_dps + loss
        if loss:
            prev = response_mp(radii_m, conductivity_S_per_m, period_s, degree, dps)
    for _ in range(12):
        hi = dps + max(25, dps // 2)
        cur = response_mp(radii_m, conductivity_S_per_m, period_s, degree, hi)
        with mp.workdps(hi):
            # Cancellation can also produce an exact 0 at too low a precision: only a model
            # without any conductor has R_n = 0.
            if (cur != 0 or insulating) and abs(cur - prev) <= mp.mpf(10) ** (-digits) * abs(cur):
                return cur, hi
        prev, dps = cur, hi
    raise RuntimeError(
        f"reference did not converge up to dps={dps}: radii={list(radii_m)}, "
        f"sigma={list(conductivity_S_per_m)}, period={period_s}, degree={degree}"
    )


def input_sensitivity(
    radii_m, conductivity_S_per_m, period_s, degree: int, value: mp.mpc, dps: int, seed: int = 0
) -> float:
    """Relative change of R_n per unit-roundoff relative perturbation of all inputs.

    ``max_p |R_n(x (1 + s_p eps)) - R_n(x)| / (|R_n(x)| eps)`` with ``eps = 2**-52`` over three
    sign patterns ``s_p`` applied to every radius, conductivity and the period at once: radii
    with alternating signs (thickening and thinning neighbouring layers) and all other inputs
    increased, then two patterns with independent random signs for every input (independent,
    so that the perturbation is not the scale-invariant direction of a uniform sphere).

    This estimates the condition number of the problem with respect to rounding of its
    double-precision inputs: a backward-stable double-precision method can be expected to
    reach a relative error of about ``sensitivity * 2**-53`` but not much less. Thin layers
    (thickness a tiny fraction of their radius) make it large, because their thickness is the
    difference of two nearly equal radii. Returns 0 for R_n = 0.
    """
    if value == 0:
        return 0.0
    rng = random.Random(seed)
    n_layers = len(radii_m)

    def signs():
        return [rng.choice((-1, 1)) for _ in range(n_layers)]

    patterns = [([(-1) ** j for j in range(n_layers)], [1] * n_layers, 1)]
    patterns += [(signs(), signs(), rng.choice((-1, 1))) for _ in range(2)]
    worst = mp.mpf(0)
    with mp.workdps(dps):
        eps = mp.mpf(2) ** -52
        for s_radii, s_sigma, s_period in patterns:
            radii = [_to_mpf(r) * (1 + s * eps) for r, s in zip(radii_m, s_radii)]
            sigma = [_to_mpf(c) * (1 + s * eps) for c, s in zip(conductivity_S_per_m, s_sigma)]
            period = _to_mpf(period_s) * (1 + s_period * eps)
            other = response_mp(radii, sigma, period, degree, dps)
            worst = max(worst, abs(other - value) / (abs(value) * eps))
    return float(worst)


def uniform_sphere_mp(radius_m, conductivity_S_per_m, period_s, degree: int, dps: int = 50) -> mp.mpc:
    """Closed form for a uniform sphere, R_n = i_{n+1}(kappa R) / i_{n-1}(kappa R).

    Parkinson (1983), Introduction to Geomagnetism; Wait (1951). With the modified spherical
    Bessel functions written through I_{n+1/2}, the common factor sqrt(pi/(2z)) cancels.
    """
    n = int(degree)
    with mp.workdps(dps):
        omega = 2 * mp.pi / mp.mpf(float(period_s))
        kap = mp.sqrt(mp.mpc(0, 1) * omega * mp.mpf(MU0_EXACT) * mp.pi * mp.mpf(float(conductivity_S_per_m)))
        z = kap * mp.mpf(float(radius_m))
        return mp.besseli(n + mp.mpf(3) / 2, z) / mp.besseli(n - mp.mpf(1) / 2, z)


def skin_depth_m(conductivity_S_per_m: float, period_s: float) -> float:
    """delta = sqrt(2 / (w mu0 sigma)) (m), in double precision."""
    omega = 2.0 * math.pi / period_s
    return math.sqrt(2.0 / (omega * 4.0e-7 * math.pi * conductivity_S_per_m))
