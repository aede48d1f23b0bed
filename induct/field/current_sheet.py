"""Axisymmetric current sheet (magnetodisc): exact field, classic approximations, planet-fixed model.

The model
---------
An annular slab ("washer") of azimuthal current in the sheet's own cylindrical
coordinates (rho, phi, z), z along the sheet's symmetry axis::

    J_phi(rho, z) = I0 / rho    for  a <= rho <= b  and  |z| <= D,   zero elsewhere,

flowing along +phi (right-handed about +z), with inner radius a, outer radius b
(b may be infinite) and half-thickness D (Connerney, Acuna & Ness 1981, JGR 86,
8370). The "current constant" is ``mu0 I0 / 2`` in nT; lengths are in any one
unit (planet radii in induct), because the field depends only on ratios of
lengths. With a positive current constant the sheet's magnetic moment points
along +z, so for a magnetodisc the axis should be the planet's dipole moment.

The model leaves out: radial currents, a local-time or warped sheet (hinging,
bending toward the solar wind), the sheet's finite response time to the
planet's rotation, and magnetopause and tail fields.

Exact field: the method used here
---------------------------------
With c = mu0 I0 / 2, the washer is the semi-infinite sheet starting at a minus the
one starting at b. For the semi-infinite sheet starting at a, the Hankel-type
integrals of Connerney et al. (1981)::

    B_rho = c int_0^inf J1(k rho) J0(k a) Zr(k, z) dk / k ,
    B_z   = c int_0^inf J0(k rho) J0(k a) Zz(k, z) dk / k ,

(Zr, Zz the z-integrals of exp(-k |z - z'|) over |z'| <= D) are turned into
integrals over a *finite* angle with elementary, non-oscillating integrands
(derived for this module, checked against direct Biot-Savart summation in
``tests/field/test_current_sheet.py``). By Neumann's addition theorem
``J0(k rho) J0(k a) = (1/pi) int_0^pi J0(k R) dphi`` with
``R**2 = rho**2 + a**2 - 2 rho a cos(phi)``, and the k- and z'-integrals are then
done in closed form. With ``zeta_pm = z +- D``, ``r_pm = sqrt(R**2 + zeta_pm**2)``
and ``M = max(rho, a)``::

    B_z / c   = (1/pi) int_0^pi [asinh(zeta_+ / R) - asinh(zeta_- / R)] dphi
    B_rho / c = (1/pi) int_0^pi (rho - a cos phi) [1/(r_- + |zeta_-|) - 1/(r_+ + |zeta_+|)] dphi.

The logarithmic singularity of asinh at R = 0 is removed with the exact mean
``(1/pi) int_0^pi ln R dphi = ln M``: inside the slab (|z| < D)
``B_z / c = (1/pi) int [ln((|zeta_+| + r_+)/M) + ln((|zeta_-| + r_-)/M)] dphi``, outside
``B_z / c = (1/pi) int ln((|zeta_+| + r_+)/(|zeta_-| + r_-)) dphi`` (z >= D; B_z is even,
B_rho odd in z). Every difference that could cancel is rewritten without
cancellation (``R**2 = (rho - a)**2 + 4 rho a sin**2(phi/2)``,
``r_+ - r_- = 4 z D / (r_+ + r_-)``, log1p of exact increments).

The integrands are analytic in phi except at the branch points ``phi = +-i eta``
(and their 2 pi images), where ``cosh(eta) = (rho**2 + a**2 + zeta**2) / (2 rho a)``;
eta is small only near the sheet's corners (rho = a, |z| = D), where it is about
the distance to the corner divided by a. The quadrature: Gauss-Legendre on
[pi/2, pi] (10 nodes; the singularities are >= pi/2 away) and, on [0, pi/2], the
substitution ``phi = lam sinh(u)`` with lam <= eta (eta of the nearer mid-plane
offset, lam from a fixed geometric table, 1e-15 <= lam <= 1), which moves every
singularity ``phi = i y`` with y >= lam to ``Im u = pi/2`` whatever y, followed by
Gauss-Legendre in u on equal panels of length <= 3 (16 nodes each; 12 on a single
panel of length <= 1.5). Panels keep the rule accurate when both offsets give
singularities far apart (thin sheets near a corner).

Measured accuracy of each semi-infinite part (relative error of the field vector):
below 3e-13 against the same integrals with a 5 times finer rule at 9000 points
for D/a from 0.001 to 2 (including points 1e-12 a from a corner and on it; the
worst cases are for the thinnest sheet, whose field is ~D/a times its integrands),
below 3e-14 against mpmath (40 digits) near the corners for D/a = 0.4 and 0.01, and
below 1e-13 against the converged series of :func:`sheet_field_small_rho` /
:func:`sheet_field_large_rho` (an independent route from the Hankel integrals).
The finite washer is the difference of two such parts, so where they nearly cancel
its relative error grows accordingly: near the washer's field nulls (2.4e-12 was the
worst of 2000 random points within 80 a), and far away, r >> b, by a factor of about
(r/b)**2. Against direct Biot-Savart summation of current loops (the tests) the
worst of 53 points was 4.5e-13. Cost: 22 node evaluations per point and edge far
from the corners, 26 to about 60 near them (up to 202 on a corner); about 2 to 3.5
microseconds per point for a washer on one core, i.e. 0.2 to 0.35 s for 10**5
points (see :func:`benchmark_current_sheet`).

Approximations
--------------
:func:`sheet_field_small_rho` and :func:`sheet_field_large_rho` are the series of
the same exact kernels in (rho/a)**2 and (a/rho)**2; with ``terms=2`` they are the
classic forms of Connerney et al. (1981) as written via the vector potential by
Edwards, Bunce & Cowley (2001, Planet. Space Sci. 49, 1115) (the published forms
are recalled from memory; the forms here are derived for this module). Their
measured errors are in their docstrings.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from induct.field.planet import InternalField

__all__ = [
    "current_sheet_field",
    "sheet_field_small_rho",
    "sheet_field_large_rho",
    "axis_from_tilt",
    "axis_from_dipole",
    "CurrentSheetField",
    "current_sheet_from_table",
]

_CHUNK_ELEMENTS = 2**18  # points x nodes per kernel chunk (~15 such float64 arrays: ~30 MB)
_NB = 10  # Gauss-Legendre nodes on [pi/2, pi]
_PANEL = 3.0  # longest panel of the mapped [0, pi/2] (in u)
_NPANEL = 16  # Gauss-Legendre nodes per panel
_NPANEL_SHORT = 12  # ... on a single short panel (u-length <= 1.5, i.e. lam >= 0.74)
_LAM_STEPS_PER_OCTAVE = 4  # geometric table of lam = 2**(-k/4), k = 0 .. _LAM_K_MAX
_LAM_K_MAX = 4 * 50  # lam down to ~1e-15 (a point within ~1e-15 a of a corner)


# --------------------------------------------------------------------------- quadrature tables
@lru_cache(maxsize=None)
def _gauss(n: int):
    x, w = np.polynomial.legendre.leggauss(n)
    x.setflags(write=False)
    w.setflags(write=False)
    return x, w


@lru_cache(maxsize=None)
def _nodes(k: int):
    """sin(phi/2)**2 and weights/pi of the nodes for lam = 2**(-k/4). Unchecked."""
    lam = 2.0 ** (-k / _LAM_STEPS_PER_OCTAVE)
    big_u = math.asinh(0.5 * math.pi / lam)
    panels = max(1, math.ceil(big_u / _PANEL))
    h = big_u / panels
    x, w = _gauss(_NPANEL if h > 1.5 else _NPANEL_SHORT)
    u = (h * (np.arange(panels)[:, None] + 0.5 * (x + 1.0))).ravel()
    w_u = np.tile(0.5 * h * w, panels)
    phi_a = lam * np.sinh(u)
    w_a = lam * np.cosh(u) * w_u
    xb, wb = _gauss(_NB)
    phi_b = 0.75 * math.pi + 0.25 * math.pi * xb
    w_b = 0.25 * math.pi * wb
    phi = np.concatenate([phi_a, phi_b])
    s2 = np.sin(0.5 * phi) ** 2
    wt = np.concatenate([w_a, w_b]) / math.pi
    s2.setflags(write=False)
    wt.setflags(write=False)
    return s2, wt


def _lam_index(eta: np.ndarray) -> np.ndarray:
    """Index k of the largest tabulated lam = 2**(-k/4) <= min(eta, 1). Unchecked."""
    with np.errstate(divide="ignore"):
        k = np.ceil(-_LAM_STEPS_PER_OCTAVE * np.log2(np.minimum(eta, 1.0)) - 1e-9)
    return np.clip(k, 0, _LAM_K_MAX).astype(np.int64)


# --------------------------------------------------------------------------- exact kernel
def _edge_group(rho, z, a, d, s2, wt, inside):
    """Semi-infinite sheet from edge a, points sharing one node table. Unchecked.

    rho, z : shape (n,), rho >= 0, z >= 0 (B_rho is returned for z >= 0); all points
    inside the slab (z < d) when ``inside``, else all outside (z >= d).
    Returns (B_rho / c, B_z / c), each shape (n,).
    """
    r_ = rho[:, None]
    zp = (z + d)[:, None]
    zm = np.abs(z - d)[:, None]
    rr2 = (r_ - a) ** 2 + (4.0 * a) * r_ * s2  # R**2, exact near R = 0
    rp = np.sqrt(rr2 + zp * zp)
    rm = np.sqrt(rr2 + zm * zm)
    w = 2.0 * np.minimum(z, d)[:, None]
    f_rho = ((r_ - a) + (2.0 * a) * s2) * w * (1.0 + (zm + zp) / (rp + rm)) / ((rp + zp) * (rm + zm))
    if inside:
        big = np.maximum(rho, a)[:, None]
        small = np.minimum(rho, a)[:, None]
        q = small * (small - 2.0 * big) + (4.0 * a) * r_ * s2  # R**2 - M**2
        xp = (zp + (q + zp * zp) / (rp + big)) / big
        xm = (zm + (q + zm * zm) / (rm + big)) / big
        f_z = np.log1p(xp) + np.log1p(xm)
    else:
        f_z = np.log1p((2.0 * d + (4.0 * d) * z[:, None] / (rp + rm)) / (zm + rm))
    return f_rho @ wt, f_z @ wt


def _edge_exact(rho, z, a, d):
    """Semi-infinite sheet from edge a at points with z >= 0: (B_rho/c, B_z/c). Unchecked, 1-D."""
    zmin = np.abs(z - d)
    with np.errstate(divide="ignore", invalid="ignore"):
        delta = ((rho - a) ** 2 + zmin * zmin) / (2.0 * rho * a)
        eta = np.log1p(delta + np.sqrt(delta * (2.0 + delta)))
    eta = np.where(rho > 0.0, eta, np.inf)
    key = 2 * _lam_index(eta) + (z < d)
    b_rho = np.empty_like(rho)
    b_z = np.empty_like(rho)
    order = np.argsort(key, kind="stable")
    ks = key[order]
    starts = np.flatnonzero(np.r_[True, ks[1:] != ks[:-1]])
    stops = np.r_[starts[1:], ks.size]
    for lo, hi in zip(starts, stops):
        s2, wt = _nodes(int(ks[lo]) // 2)
        inside = bool(ks[lo] % 2)
        chunk = max(64, _CHUNK_ELEMENTS // s2.size)
        for c0 in range(lo, hi, chunk):
            idx = order[c0 : min(hi, c0 + chunk)]
            b_rho[idx], b_z[idx] = _edge_group(rho[idx], z[idx], a, d, s2, wt, inside)
    b_rho[rho == 0.0] = 0.0
    return b_rho, b_z


def _washer(edge_fn, rho, z, inner, outer, d):
    """Washer = sheet(inner) - sheet(outer), in units of c. Unchecked, 1-D arrays."""
    zabs = np.abs(z)
    b_rho, b_z = edge_fn(rho, zabs, inner, d)
    if math.isfinite(outer):
        r2, z2 = edge_fn(rho, zabs, outer, d)
        b_rho = b_rho - r2
        b_z = b_z - z2
    return np.where(z < 0.0, -b_rho, b_rho), b_z


def current_sheet_kernel(rho, z, inner, outer, half_thickness):
    """Unchecked kernel: exact washer field per unit current constant.

    Parameters
    ----------
    rho, z : ndarray, shape (n,)
        Cylindrical distance (>= 0) and height, float64, same length.
    inner, outer, half_thickness : float
        a > 0, b > a (may be inf), D > 0, same length unit as rho and z.

    Returns
    -------
    b_rho, b_z : ndarray, shape (n,)
        Field divided by the current constant (dimensionless).

    Examples
    --------
    >>> import numpy as np
    >>> b_rho, b_z = current_sheet_kernel(np.array([0.0]), np.array([0.0]), 5.0, np.inf, 2.5)
    >>> bool(abs(b_z[0] - 2 * np.arcsinh(0.5)) < 1e-14)
    True
    """
    return _washer(_edge_exact, rho, z, inner, outer, half_thickness)


# --------------------------------------------------------------------------- series (approximations)
def _legendre_table(nmax: int, x: np.ndarray) -> np.ndarray:
    """P_0 .. P_nmax (x), shape (nmax + 1, n). Unchecked."""
    p = np.empty((nmax + 1,) + x.shape)
    p[0] = 1.0
    if nmax >= 1:
        p[1] = x
    for n in range(2, nmax + 1):
        p[n] = ((2 * n - 1) * x * p[n - 1] - (n - 1) * p[n - 2]) / n
    return p


def _series_p(near, far, zeta, terms):
    """Correction terms j >= 1 of P(near, zeta; far) = int J0(k near) J0(k far) (1 - exp(-k zeta)) dk / k
    = asinh(zeta/far) + (this), series in (near/s)**2, s = sqrt(far**2 + zeta**2); odd in zeta. Unchecked."""
    out = np.zeros(np.broadcast(near, far, zeta).shape)
    if terms > 1:
        s = np.hypot(far, zeta)
        leg = _legendre_table(2 * terms - 3, zeta / s)
        t2 = (0.5 * near / s) ** 2
        power = np.ones_like(s)
        for j in range(1, terms):
            power = power * t2
            coef = math.factorial(2 * j - 1) / math.factorial(j) ** 2
            out = out - (-1) ** j * coef * power * leg[2 * j - 1]
    return out


def _series_h_small(rho, a, zeta, terms):
    """Correction terms j >= 1 of H = int J1(k rho) J0(k a) exp(-k |zeta|) dk / k = (rho/2)/s + (this),
    rho < a, series in (rho/s)**2, s = sqrt(a**2 + zeta**2). Unchecked."""
    out = np.zeros(np.broadcast(rho, a, zeta).shape)
    if terms > 1:
        s = np.hypot(a, zeta)
        leg = _legendre_table(2 * terms - 2, np.abs(zeta) / s)
        t2 = (0.5 * rho / s) ** 2
        h = 0.5 * rho / s
        for j in range(1, terms):
            h = h * t2
            coef = math.factorial(2 * j) / (math.factorial(j) * math.factorial(j + 1))
            out = out + (-1) ** j * coef * h * leg[2 * j]
    return out


def _series_h_large(rho, a, zeta, terms):
    """Correction terms j >= 1 of H = (r - |zeta|)/rho + (this) for rho > a, series in (a/r)**2,
    r = sqrt(rho**2 + zeta**2). Unchecked."""
    out = np.zeros(np.broadcast(rho, a, zeta).shape)
    if terms > 1:
        az = np.abs(zeta)
        r = np.hypot(rho, zeta)
        x = az / r
        sin_t = rho / r
        leg = _legendre_table(2 * terms - 2, x)
        t2 = (0.5 * a / r) ** 2
        power = np.ones_like(r)
        for j in range(1, terms):
            power = power * t2
            n = 2 * j - 1
            # P_n^1(x) = sin(theta) dP_n/dx = n (P_{n-1} - x P_n) / sin(theta)
            dp = n * (leg[n - 1] - x * leg[n]) / sin_t
            coef = math.factorial(2 * j - 2) / math.factorial(j) ** 2
            out = out + (-1) ** j * coef * power * dp
    return out


def _asinh_difference(zp, zm, scale):
    """asinh(zp/scale) - asinh(zm/scale) for zp = z + d > zm = z - d, z >= 0, without cancellation."""
    rp = np.hypot(scale, zp)
    rm = np.hypot(scale, zm)
    with np.errstate(divide="ignore", invalid="ignore"):
        same = np.log1p((zp - zm) * (1.0 + (zp + zm) / (rp + rm)) / (np.abs(zm) + rm))
    return np.where(zm >= 0.0, same, np.arcsinh(zp / scale) + np.arcsinh(-zm / scale))


def _edge_small(rho, z, a, d, terms):
    """Semi-infinite sheet (edge a), small-rho series, z >= 0: (B_rho/c, B_z/c). Unchecked."""
    zp, zm = z + d, z - d
    b_z = _asinh_difference(zp, zm, a) + _series_p(rho, a, zp, terms) - _series_p(rho, a, zm, terms)
    sp, sm = np.hypot(a, zp), np.hypot(a, zm)
    lead = 0.5 * rho * (4.0 * z * d) / ((sp + sm) * sp * sm)  # (rho/2)(1/s_- - 1/s_+)
    b_rho = lead + _series_h_small(rho, a, zm, terms) - _series_h_small(rho, a, zp, terms)
    return b_rho, b_z


def _edge_large(rho, z, a, d, terms):
    """Semi-infinite sheet (edge a), large-rho series, z >= 0: (B_rho/c, B_z/c). Unchecked."""
    zp, zm = z + d, z - d
    b_z = _asinh_difference(zp, zm, rho) + _series_p(a, rho, zp, terms) - _series_p(a, rho, zm, terms)
    rp, rm, azm = np.hypot(rho, zp), np.hypot(rho, zm), np.abs(zm)
    w = 2.0 * np.minimum(z, d)  # |zeta_+| - |zeta_-|
    # rho/(r_- + |zeta_-|) - rho/(r_+ + zeta_+) without cancellation
    lead = rho * w * (1.0 + (zp + azm) / (rp + rm)) / ((rp + zp) * (rm + azm))
    b_rho = lead + _series_h_large(rho, a, zm, terms) - _series_h_large(rho, a, zp, terms)
    return b_rho, b_z


def _edge_approx(terms):
    def edge(rho, z, a, d):
        small = rho < a
        b_rho = np.empty_like(rho)
        b_z = np.empty_like(rho)
        if np.any(small):
            b_rho[small], b_z[small] = _edge_small(rho[small], z[small], a, d, terms)
        if not np.all(small):
            big = ~small
            b_rho[big], b_z[big] = _edge_large(rho[big], z[big], a, d, terms)
        return b_rho, b_z

    return edge


# --------------------------------------------------------------------------- checked API
def _check_float(name, value, *, positive=False, allow_inf=False) -> float:
    if isinstance(value, bool):
        raise ValueError(f"{name} must be a number, got {value!r}")
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number, got {value!r}") from None
    if math.isnan(x) or (math.isinf(x) and not (allow_inf and x > 0)):
        raise ValueError(f"{name} must be finite{' or +inf' if allow_inf else ''}, got {value!r}")
    if positive and not x > 0.0:
        raise ValueError(f"{name} must be > 0, got {value!r}")
    return x


def _check_geometry(inner, outer, half_thickness):
    a = _check_float("inner", inner, positive=True)
    b = _check_float("outer", outer, positive=True, allow_inf=True)
    d = _check_float("half_thickness", half_thickness, positive=True)
    if not b > a:
        raise ValueError(f"outer must be > inner = {a!r}, got {outer!r}")
    return a, b, d


def _check_points(rho, z):
    try:
        r_arr = np.asarray(rho, dtype=float)
    except (TypeError, ValueError):
        raise ValueError("rho must be an array of numbers") from None
    try:
        z_arr = np.asarray(z, dtype=float)
    except (TypeError, ValueError):
        raise ValueError("z must be an array of numbers") from None
    if not np.all(np.isfinite(r_arr)) or np.any(r_arr < 0.0):
        raise ValueError("rho must be finite and >= 0")
    if not np.all(np.isfinite(z_arr)):
        raise ValueError("z must be finite")
    try:
        r_arr, z_arr = np.broadcast_arrays(r_arr, z_arr)
    except ValueError:
        raise ValueError(f"rho and z must broadcast together, got shapes {r_arr.shape} and {z_arr.shape}") from None
    return r_arr, z_arr


def _check_terms(terms) -> int:
    if isinstance(terms, bool) or not isinstance(terms, (int, np.integer)) or not 1 <= terms <= 30:
        raise ValueError(f"terms must be an integer in [1, 30], got {terms!r}")
    return int(terms)


def _evaluate(edge_fn, rho, z, a, b, d, c):
    shape = rho.shape
    b_rho, b_z = _washer(edge_fn, rho.reshape(-1).copy(), z.reshape(-1).copy(), a, b, d)
    return (c * b_rho).reshape(shape), (c * b_z).reshape(shape)


def current_sheet_field(rho, z, inner, outer, half_thickness, current_constant_nT, *, method="exact"):
    """Field of the axisymmetric current sheet (magnetodisc) in its own cylindrical coordinates.

    Current density ``J_phi = I0 / rho`` along +phi for ``inner <= rho <= outer``,
    ``|z| <= half_thickness`` (Connerney, Acuna & Ness 1981, JGR 86, 8370). The exact
    method evaluates the Hankel-type integrals of that paper, rewritten as integrals
    over a finite angle with elementary integrands, by a singularity-adapted
    Gauss-Legendre rule (see the module docstring): relative error below 3e-13 of
    each semi-infinite part (measured; the washer is their difference), valid
    everywhere, including inside the sheet and at its edges and corners. There is no
    "auto" method: the exact one costs 2 to 3.5 microseconds per point, and the classic
    approximations are within 1e-6 only for rho <= 0.05 a or rho >= 20 a.

    Parameters
    ----------
    rho : array_like, shape broadcastable with ``z``
        Distance from the sheet's axis (planet radii, or any length unit), >= 0.
    z : array_like
        Height above the sheet's mid-plane, along its axis (same unit as rho).
    inner : float
        Inner radius a (same unit), > 0.
    outer : float
        Outer radius b (same unit), > inner; ``numpy.inf`` for a semi-infinite sheet.
    half_thickness : float
        Half-thickness D (same unit), > 0.
    current_constant_nT : float
        ``mu0 I0 / 2`` (nT), any sign (negative reverses the current).
    method : {"exact", "approximate"}
        "approximate" uses, for each edge of the washer, :func:`sheet_field_small_rho`
        where rho < edge radius and :func:`sheet_field_large_rho` elsewhere, with
        ``terms=2`` (the classic Connerney et al. forms; errors in those functions'
        docstrings). It is not accurate near rho = edge radius.

    Returns
    -------
    b_rho_nT, b_z_nT : ndarray, shape of ``broadcast(rho, z)``
        Cylindrical field components (nT); ``b_rho_nT`` is odd and ``b_z_nT`` even in z.

    Raises
    ------
    ValueError
        Naming the argument: negative or non-finite rho, non-finite z, inner <= 0,
        outer <= inner, half_thickness <= 0, non-finite current constant, unknown method.

    Examples
    --------
    On the axis the field has the closed form
    ``B_z = c [asinh((z+D)/a) - asinh((z-D)/a) - asinh((z+D)/b) + asinh((z-D)/b)]``:

    >>> import numpy as np
    >>> b_rho, b_z = current_sheet_field(0.0, 1.0, 5.0, 50.0, 2.5, 200.0)
    >>> s = np.arcsinh
    >>> bool(abs(b_z - 200.0 * (s(3.5/5) - s(-1.5/5) - s(3.5/50) + s(-1.5/50))) < 1e-10)
    True
    >>> b_rho, b_z = current_sheet_field([8.0, 8.0], [1.0, -1.0], 5.0, np.inf, 2.5, 200.0)
    >>> bool(b_rho[0] == -b_rho[1] and b_z[0] == b_z[1])
    True
    """
    rho_a, z_a = _check_points(rho, z)
    a, b, d = _check_geometry(inner, outer, half_thickness)
    c = _check_float("current_constant_nT", current_constant_nT)
    if method == "exact":
        edge_fn = _edge_exact
    elif method == "approximate":
        edge_fn = _edge_approx(2)
    else:
        raise ValueError(f"method must be 'exact' or 'approximate', got {method!r}")
    return _evaluate(edge_fn, rho_a, z_a, a, b, d, c)


def sheet_field_small_rho(rho, z, inner, half_thickness, current_constant_nT, *, terms=2):
    """Series approximation of the semi-infinite sheet (inner radius a, outer inf) for rho < a.

    The exact kernels expanded in powers of rho**2 (derived for this module from the
    Hankel integrals of Connerney et al. 1981 with ``int k**n J0(k a) exp(-k zeta) dk =
    n! P_n(zeta/s) / s**(n+1)``, P_n the Legendre polynomials)::

        B_z / c = P(z + D) - P(z - D),    B_rho / c = H(z - D) - H(z + D),
        P(zeta) = asinh(zeta/a) - sum_{j=1}^{terms-1} (-1)**j (2j-1)!/(j!)**2
                                  * (rho/2)**(2j) P_{2j-1}(zeta/s) / s**(2j),
        H(zeta) = sum_{j=0}^{terms-1} (-1)**j (2j)!/(j! (j+1)!)
                  * (rho/2)**(2j+1) P_{2j}(zeta/s) / s**(2j+1),    s = sqrt(a**2 + zeta**2).

    ``terms=1`` is the leading form (the curl of the small-rho vector potential
    ``A = c (rho/2)[asinh((z+D)/a) - asinh((z-D)/a)]`` of Edwards, Bunce & Cowley 2001,
    Planet. Space Sci. 49, 1115, from memory); ``terms=2`` adds the rho**2 term of B_z
    given by Connerney et al. (1981) (from memory) and the rho**3 term of B_rho.
    The series converges for rho < a (geometrically, ratio about (rho/a)**2).

    Measured relative error of the field vector against the exact field (worst case
    over ``|z| <= 5 D``, where it is largest in the mid-plane, for D/a in {0.01, 0.1,
    0.5, 1, 2}; ``tools/current_sheet_accuracy.py``)::

        terms   rho <= 0.05 a   0.1 a    0.2 a    0.25 a   0.5 a    0.8 a
        1       6.3e-4          2.5e-3   1.0e-2   1.6e-2   6.8e-2   2.1e-1
        2       8.8e-7          1.4e-5   2.3e-4   5.6e-4   9.9e-3   8.7e-2
        4       2.9e-12         7.5e-10  2.0e-7   1.2e-6   3.4e-4   2.1e-2
        8       1e-15           2e-15    2.6e-13  9.3e-12  7.0e-7   2.0e-3
        12      1e-15           2e-15    3e-15    3e-15    1.9e-9   2.4e-4

    Domains with error below 1e-6: terms=2 for rho <= 0.05 a, terms=4 for
    rho <= 0.2 a, terms=8 and 12 for rho <= 0.5 a.

    Parameters
    ----------
    rho : array_like
        Distance from the axis (planet radii), 0 <= rho < inner (a).
    z : array_like
        Height above the mid-plane (planet radii), broadcastable with rho.
    inner, half_thickness : float
        a > 0 and D > 0 (planet radii).
    current_constant_nT : float
        ``mu0 I0 / 2`` (nT).
    terms : int
        Number of series terms, 1 to 30.

    Returns
    -------
    b_rho_nT, b_z_nT : ndarray, shape of ``broadcast(rho, z)``
        Field (nT).

    Examples
    --------
    >>> b_rho, b_z = sheet_field_small_rho(0.5, 0.0, 5.0, 2.5, 200.0)
    >>> b_rho_x, b_z_x = current_sheet_field(0.5, 0.0, 5.0, float("inf"), 2.5, 200.0)
    >>> bool(abs(b_z - b_z_x) < 1e-4 * abs(b_z_x))
    True
    """
    rho_a, z_a = _check_points(rho, z)
    a, _, d = _check_geometry(inner, math.inf, half_thickness)
    c = _check_float("current_constant_nT", current_constant_nT)
    terms = _check_terms(terms)
    if np.any(rho_a >= a):
        raise ValueError(f"rho must be < inner = {a!r} for the small-rho series")
    return _evaluate(lambda r, zz, e, dd: _edge_small(r, zz, e, dd, terms), rho_a, z_a, a, math.inf, d, c)


def sheet_field_large_rho(rho, z, inner, half_thickness, current_constant_nT, *, terms=2):
    """Series approximation of the semi-infinite sheet (inner radius a, outer inf) for rho > a.

    The exact kernels expanded in powers of a**2 (derived for this module; the kernel
    for B_z is symmetric in rho and a, so its series is that of
    :func:`sheet_field_small_rho` with rho and a exchanged)::

        B_z / c = P(z + D) - P(z - D),    B_rho / c = H(z - D) - H(z + D),
        P(zeta) = asinh(zeta/rho) - sum_{j=1}^{terms-1} (-1)**j (2j-1)!/(j!)**2
                                    * (a/2)**(2j) P_{2j-1}(zeta/r) / r**(2j),
        H(zeta) = (r - |zeta|)/rho + sum_{j=1}^{terms-1} (-1)**j (2j-2)!/(j!)**2
                                     * (a/2)**(2j) P^1_{2j-1}(|zeta|/r) / r**(2j),

    with ``r = sqrt(rho**2 + zeta**2)`` and ``P_n^1 = sin(theta) dP_n/dcos(theta)``.
    ``terms=1`` is the field of the sheet with its hole closed (a -> 0);
    ``terms=2`` adds the a**2 terms and is the classic large-rho form of Connerney et
    al. (1981) and Edwards, Bunce & Cowley (2001) (published forms from memory). The
    series converges for rho > a (ratio about (a/rho)**2).

    Measured relative error of the field vector against the exact field (worst case
    over ``|z| <= 5 D`` and ``x a <= rho <= 100 x a``, largest in the mid-plane, for
    D/a in {0.01, 0.1, 0.5, 1, 2}; ``tools/current_sheet_accuracy.py``)::

        terms   rho >= 1.5 a   2 a      2.5 a    4 a      5 a      10 a     20 a     50 a
        1       1.3e-1         6.8e-2   4.2e-2   1.6e-2   1.0e-2   2.5e-3   6.3e-4   1.0e-4
        2       3.6e-2         1.0e-2   3.9e-3   5.7e-4   2.3e-4   1.4e-5   8.8e-7   2.3e-8
        4       4.0e-3         3.4e-4   5.4e-5   1.2e-6   2.0e-7   7.5e-10  2.9e-12  1e-14
        8       8.5e-5         7.1e-7   1.8e-8   9.4e-12  2.6e-13  1.5e-14  1.5e-14  1e-14
        12      2.3e-6         1.9e-9   8.2e-12  1.4e-14  1.4e-14  1.5e-14  1.5e-14  1e-14

    Domains with error below 1e-6: terms=2 for rho >= 20 a, terms=4 for rho >= 5 a,
    terms=8 and 12 for rho >= 2 a.

    Parameters
    ----------
    rho : array_like
        Distance from the axis (planet radii), rho > inner (a).
    z : array_like
        Height above the mid-plane (planet radii), broadcastable with rho.
    inner, half_thickness : float
        a > 0 and D > 0 (planet radii).
    current_constant_nT : float
        ``mu0 I0 / 2`` (nT).
    terms : int
        Number of series terms, 1 to 30.

    Returns
    -------
    b_rho_nT, b_z_nT : ndarray, shape of ``broadcast(rho, z)``
        Field (nT).

    Examples
    --------
    >>> b_rho, b_z = sheet_field_large_rho(60.0, 3.0, 5.0, 2.5, 200.0, terms=4)
    >>> b_rho_x, b_z_x = current_sheet_field(60.0, 3.0, 5.0, float("inf"), 2.5, 200.0)
    >>> bool(abs(b_rho - b_rho_x) < 1e-7 * abs(b_rho_x))
    True
    """
    rho_a, z_a = _check_points(rho, z)
    a, _, d = _check_geometry(inner, math.inf, half_thickness)
    c = _check_float("current_constant_nT", current_constant_nT)
    terms = _check_terms(terms)
    if np.any(rho_a <= a):
        raise ValueError(f"rho must be > inner = {a!r} for the large-rho series")
    return _evaluate(lambda r, zz, e, dd: _edge_large(r, zz, e, dd, terms), rho_a, z_a, a, math.inf, d, c)


# --------------------------------------------------------------------------- planet-fixed model
def axis_from_tilt(tilt_deg: float, tilt_longitude_deg: float) -> np.ndarray:
    """Unit vector of a tilted axis in planet-fixed Cartesian coordinates.

    Same convention as :func:`induct.field.planet.tilted_dipole_coefficients`: the axis
    makes the angle ``tilt_deg`` with the spin axis (+z) and leans toward east
    longitude ``tilt_longitude_deg``.

    Parameters
    ----------
    tilt_deg : float
        Angle from the spin axis (deg), in [0, 180].
    tilt_longitude_deg : float
        East longitude of the tilt (deg), finite.

    Returns
    -------
    ndarray, shape (3,)
        ``(sin t cos l, sin t sin l, cos t)``.

    Examples
    --------
    >>> axis_from_tilt(90.0, 0.0).round(12).tolist()
    [1.0, 0.0, 0.0]
    """
    t = _check_float("tilt_deg", tilt_deg)
    lon = _check_float("tilt_longitude_deg", tilt_longitude_deg)
    if not 0.0 <= t <= 180.0:
        raise ValueError(f"tilt_deg must be in [0, 180], got {tilt_deg!r}")
    t, lon = math.radians(t), math.radians(lon)
    return np.array([math.sin(t) * math.cos(lon), math.sin(t) * math.sin(lon), math.cos(t)])


def axis_from_dipole(g10_nT: float, g11_nT: float, h11_nT: float) -> np.ndarray:
    """Unit vector along the dipole moment of degree-1 Gauss coefficients.

    The moment is ``(4 pi a**3 / mu0) (g11, h11, g10)`` in planet-fixed axes.

    Parameters
    ----------
    g10_nT, g11_nT, h11_nT : float
        Degree-1 Gauss coefficients (nT), not all zero.

    Returns
    -------
    ndarray, shape (3,)
        Unit vector ``(g11, h11, g10) / |(g11, h11, g10)|``.

    Examples
    --------
    >>> axis_from_dipole(-3.0, 0.0, 4.0).tolist()
    [0.0, 0.8, -0.6]
    """
    v = np.array([_check_float(n, x) for n, x in (("g11_nT", g11_nT), ("h11_nT", h11_nT), ("g10_nT", g10_nT))])
    norm = float(np.linalg.norm(v))
    if norm == 0.0:
        raise ValueError("g10_nT, g11_nT, h11_nT: the dipole is zero, so it has no axis")
    return v / norm


@dataclass(frozen=True, eq=False)
class CurrentSheetField(InternalField):
    """Current sheet (magnetodisc) fixed to the planet, usable beside the internal-field models.

    The sheet of :func:`current_sheet_field`, centred on the planet's centre (an
    offset of the dipole is not followed), with its symmetry axis along ``axis``
    (planet-fixed, so the sheet tilts and turns with the planet). Add it to an
    internal field with :class:`induct.field.planet.SumField`. What the model leaves
    out is listed in the module docstring (radial currents, hinging and warping,
    magnetopause and tail fields).

    Parameters
    ----------
    radius_m : float
        Planet radius (m), > 0: the length unit of the sheet parameters.
    inner_radius, outer_radius, half_thickness : float
        a, b and D in planet radii (0 < a < b; b may be ``inf``; D > 0).
    current_constant_nT : float
        ``mu0 I0 / 2`` (nT). Positive: current right-handed about ``axis``, sheet moment along ``axis``.
    axis : array_like, shape (3,)
        Direction of the sheet's +z in planet-fixed Cartesian axes (normalised here);
        normally the dipole moment's direction (:func:`axis_from_tilt`,
        :func:`axis_from_dipole`), so that a positive current constant gives the usual
        magnetodisc (moment parallel to the planet's).
    method : {"exact", "approximate"}
        Passed to :func:`current_sheet_field`.

    Examples
    --------
    >>> import numpy as np
    >>> sheet = CurrentSheetField(7.0e7, 5.0, 50.0, 2.5, 200.0, axis=[0.0, 0.0, 1.0])
    >>> b = sheet.field_cartesian([[0.0, 0.0, 7.0e7]])  # on the axis, 1 planet radius up
    >>> b_rho, b_z = current_sheet_field(0.0, 1.0, 5.0, 50.0, 2.5, 200.0)
    >>> bool(np.allclose(b, [[0.0, 0.0, b_z]], rtol=1e-14, atol=0.0))
    True
    """

    radius_m: float
    inner_radius: float
    outer_radius: float
    half_thickness: float
    current_constant_nT: float
    axis: np.ndarray = field(default_factory=lambda: np.array([0.0, 0.0, 1.0]))
    method: str = "exact"

    def __post_init__(self):
        radius = _check_float("radius_m", self.radius_m, positive=True)
        try:
            a, b, d = _check_geometry(self.inner_radius, self.outer_radius, self.half_thickness)
        except ValueError as exc:
            msg = str(exc).replace("inner", "inner_radius").replace("outer", "outer_radius")
            raise ValueError(msg) from None
        c = _check_float("current_constant_nT", self.current_constant_nT)
        try:
            axis = np.array(self.axis, dtype=float)
        except (TypeError, ValueError):
            raise ValueError(f"axis must be 3 numbers, got {self.axis!r}") from None
        if axis.shape != (3,) or not np.all(np.isfinite(axis)) or not np.linalg.norm(axis) > 0.0:
            raise ValueError(f"axis must be 3 finite numbers, not all zero, got {self.axis!r}")
        axis = axis / np.linalg.norm(axis)
        axis.setflags(write=False)
        if self.method not in ("exact", "approximate"):
            raise ValueError(f"method must be 'exact' or 'approximate', got {self.method!r}")
        for name, value in (("radius_m", radius), ("inner_radius", a), ("outer_radius", b),
                            ("half_thickness", d), ("current_constant_nT", c), ("axis", axis)):
            object.__setattr__(self, name, value)

    @classmethod
    def from_tilt(cls, radius_m, inner_radius, outer_radius, half_thickness, current_constant_nT,
                  tilt_deg, tilt_longitude_deg, method="exact") -> "CurrentSheetField":
        """Sheet whose axis is tilted like a dipole (see :func:`axis_from_tilt`).

        Parameters are those of the class, with the axis given by ``tilt_deg`` (deg, [0, 180])
        and ``tilt_longitude_deg`` (deg, east).

        Returns
        -------
        CurrentSheetField

        Examples
        --------
        >>> s = CurrentSheetField.from_tilt(7.0e7, 5.0, 50.0, 2.5, 200.0, 10.0, 200.0)
        >>> round(float(s.tilt_deg), 9)
        10.0
        """
        return cls(radius_m, inner_radius, outer_radius, half_thickness, current_constant_nT,
                   axis_from_tilt(tilt_deg, tilt_longitude_deg), method)

    @property
    def reference_radius_m(self) -> float:
        return self.radius_m

    @property
    def tilt_deg(self) -> float:
        """Angle between the sheet's axis and the spin axis (deg)."""
        return math.degrees(math.acos(max(-1.0, min(1.0, float(self.axis[2])))))

    @property
    def tilt_longitude_deg(self) -> float:
        """East longitude toward which the axis leans (deg, (-180, 180]); 0 if untilted."""
        return math.degrees(math.atan2(float(self.axis[1]), float(self.axis[0])))

    def sheet_coordinates(self, xyz_m):
        """Sheet-frame cylindrical coordinates of planet-fixed points.

        Parameters
        ----------
        xyz_m : array_like, shape (..., 3)
            Planet-fixed positions (m).

        Returns
        -------
        rho, z : ndarray, shape (...)
            Distance from the sheet's axis and height above its mid-plane (planet radii).

        Examples
        --------
        >>> s = CurrentSheetField(7.0e7, 5.0, 50.0, 2.5, 200.0, axis=[1.0, 0.0, 0.0])
        >>> [float(v) for v in s.sheet_coordinates([7.0e7, 0.0, 1.4e8])]
        [2.0, 1.0]
        """
        xyz = np.asarray(xyz_m, dtype=float) / self.radius_m
        z = xyz @ self.axis
        rho = np.linalg.norm(xyz - z[..., None] * self.axis, axis=-1)
        return rho, z

    def _cartesian(self, xyz):
        p = xyz / self.radius_m
        z = p @ self.axis
        perp = p - z[:, None] * self.axis
        rho = np.linalg.norm(perp, axis=-1)
        edge_fn = _edge_exact if self.method == "exact" else _edge_approx(2)
        b_rho, b_z = _washer(edge_fn, rho, z, self.inner_radius, self.outer_radius, self.half_thickness)
        with np.errstate(invalid="ignore", divide="ignore"):
            unit = np.where(rho[:, None] > 0.0, perp / rho[:, None], 0.0)
        return self.current_constant_nT * (b_rho[:, None] * unit + b_z[:, None] * self.axis)


_TABLE_KEYS = {"inner_radius", "outer_radius", "half_thickness", "current_constant_nT"}


def current_sheet_from_table(table: dict, radius_m: float, axis, where: str = "current_sheet") -> CurrentSheetField:
    """Build a :class:`CurrentSheetField` from a planet file's ``[current_sheet]`` table.

    Keys: ``inner_radius``, ``half_thickness`` (planet radii, required),
    ``outer_radius`` (planet radii, optional; default and TOML ``inf``: no outer edge),
    ``current_constant_nT`` (``mu0 I0 / 2`` in nT, required).

    Parameters
    ----------
    table : dict
        The parsed table.
    radius_m : float
        Planet radius (m).
    axis : array_like, shape (3,)
        Planet-fixed direction of the sheet's axis (normally the dipole moment's).
    where : str
        Name of the table in error messages.

    Returns
    -------
    CurrentSheetField

    Raises
    ------
    ValueError
        Naming the key (``current_sheet.inner_radius`` ...) for missing, unknown or bad values.

    Examples
    --------
    >>> t = {"inner_radius": 6.0, "outer_radius": 45.0, "half_thickness": 2.0, "current_constant_nT": 140.0}
    >>> current_sheet_from_table(t, 6.5e7, [0.0, 0.0, 1.0]).outer_radius
    45.0
    """
    if not isinstance(table, dict):
        raise ValueError(f"{where} must be a table")
    unknown = sorted(set(table) - _TABLE_KEYS)
    if unknown:
        raise ValueError(f"{where}: unknown key(s) {', '.join(unknown)}; allowed: {', '.join(sorted(_TABLE_KEYS))}")
    for key in ("inner_radius", "half_thickness", "current_constant_nT"):
        if key not in table:
            raise ValueError(f"{where}.{key}: missing")
    values = {}
    for key in _TABLE_KEYS:
        if key not in table:
            continue
        v = table[key]
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            raise ValueError(f"{where}.{key} must be a number, got {v!r}")
        values[key] = float(v)
    a, b = values["inner_radius"], values.get("outer_radius", math.inf)
    d, c = values["half_thickness"], values["current_constant_nT"]
    if not (math.isfinite(a) and a > 0.0):
        raise ValueError(f"{where}.inner_radius must be finite and > 0, got {a!r}")
    if math.isnan(b) or not b > a:
        raise ValueError(f"{where}.outer_radius must be > inner_radius = {a!r} (or inf), got {b!r}")
    if not (math.isfinite(d) and d > 0.0):
        raise ValueError(f"{where}.half_thickness must be finite and > 0, got {d!r}")
    if not math.isfinite(c):
        raise ValueError(f"{where}.current_constant_nT must be finite, got {c!r}")
    return CurrentSheetField(radius_m, a, b, d, c, axis)


# --------------------------------------------------------------------------- benchmark
