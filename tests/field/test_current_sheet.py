"""Axisymmetric current sheet (magnetodisc): exact field, approximations, planet-fixed model.

References used below (each check names its own):
* Connerney, Acuna & Ness (1981), JGR 86, 8370: the model (J_phi = I0/rho in a <= rho <= b,
  |z| <= D, current constant mu0 I0 / 2).
* Field of a circular current loop in complete elliptic integrals: Smythe (1950), Static and
  Dynamic Electricity, 2nd ed., sec. 7.10; Jackson (1999), Classical Electrodynamics, 3rd ed.,
  sec. 5.5 (from memory; the component formulas used here are checked below against the
  loop's on-axis field, Jackson eq. 5.40 (from memory), and its far dipole field, Jackson
  eq. 5.56). Elliptic integrals from scipy.special (ellipkm1, ellipe), Virtanen et
  al. (2020), Nature Methods 17, 261.
* Maxwell's equations in magnetostatics: div B = 0, curl B = mu0 J (common practice).
* Field of a point dipole, Jackson (1999) eq. 5.56; magnetic moment of a current distribution
  m = (1/2) int r x J dV, Jackson (1999) eq. 5.54.
* Gauss-Legendre quadrature nodes from numpy.polynomial.legendre.leggauss (Harris et al. 2020,
  Nature 585, 357); Duffy (1982), SIAM J. Numer. Anal. 19, 1260: the corner-singularity
  transformation used for the Biot-Savart reference inside the sheet.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy.special import ellipe, ellipkm1

from induct.field.current_sheet import (
    CurrentSheetField,
    axis_from_dipole,
    axis_from_tilt,
    current_sheet_field,
    current_sheet_from_table,
    sheet_field_large_rho,
    sheet_field_small_rho,
)
from induct.bench.current_sheet import benchmark_current_sheet
from induct.field.planet import GaussField, SumField, tilted_dipole_coefficients

BIOT_SAVART_TOL = 1e-6  # required |B - B_ref| / |B_ref| (task requirement)


# --------------------------------------------------------------------------- Biot-Savart reference
def loop_field(rho, z, radius, height):
    """Field of a current loop per unit (mu0 I / (2 pi)), in elliptic integrals (Smythe 1950 sec. 7.10;
    Jackson 1999 sec. 5.5, from memory): returns (B_rho, B_z) per (mu0 I / 2 pi)."""
    zeta = z - height
    s2 = (radius + rho) ** 2 + zeta**2
    d2 = (radius - rho) ** 2 + zeta**2
    m1 = d2 / s2  # 1 - m, m = 4 a rho / s2
    k = ellipkm1(m1)
    e = ellipe(1.0 - m1)
    s = np.sqrt(s2)
    b_z = (k + (radius**2 - rho**2 - zeta**2) / d2 * e) / s
    with np.errstate(divide="ignore", invalid="ignore"):
        b_rho = np.where(rho > 0.0, zeta / (rho * s) * (-k + (radius**2 + rho**2 + zeta**2) / d2 * e), 0.0)
    return b_rho, b_z


def _gauss(n):
    return np.polynomial.legendre.leggauss(n)


def _duffy_square(x0, x1, y0, y1, n, grade=3):
    """Nodes and weights on the rectangle [x0, x1] x [y0, y1] (x0, y0 the singular corner):
    two triangles with the Duffy (1982) map, the radial variable graded as s = u**grade."""
    x, w = _gauss(n)
    u = 0.5 * (x + 1.0)
    wu = 0.5 * w
    s = u**grade
    ws = grade * u ** (grade - 1) * wu
    S, T = np.meshgrid(s, u, indexing="ij")
    W = np.outer(ws, wu) * S
    xs, ys, ws_ = [], [], []
    apex = np.array([x0, y0])
    for p1, p2 in (((x1, y0), (x1, y1)), ((x1, y1), (x0, y1))):
        e1 = np.array(p1) - apex
        e2 = np.array(p2) - np.array(p1)
        area2 = abs(e1[0] * e2[1] - e1[1] * e2[0])
        xs.append((apex[0] + S * (e1[0] + T * e2[0])).ravel())
        ys.append((apex[1] + S * (e1[1] + T * e2[1])).ravel())
        ws_.append((W * area2).ravel())
    return np.concatenate(xs), np.concatenate(ys), np.concatenate(ws_)


def _graded_edges(length, delta):
    """0, delta, 2 delta, 4 delta, ... up to length (pieces at most doubling)."""
    edges = [0.0]
    step = delta
    while edges[-1] + step < length * (1 - 1e-12):
        edges.append(edges[-1] + step)
        step = edges[-1]
    edges.append(length)
    return np.array(edges)


def _corner_rectangle_rule(xa, ya, xb, yb, gap, n):
    """Quadrature nodes on the rectangle with corner (xa, ya) nearest to a (near-)singular point
    at distance ``gap`` outside that corner (0: at it) and opposite corner (xb, yb): a
    geometrically graded mesh toward the corner, Duffy rule in the corner cell, tensor
    Gauss-Legendre elsewhere."""
    lx, ly = abs(xb - xa), abs(yb - ya)
    delta = min(lx, ly)
    if gap > 0.0:
        delta = min(delta, 4.0 * gap)
    ex, ey = _graded_edges(lx, delta), _graded_edges(ly, delta)
    sx, sy = math.copysign(1.0, xb - xa), math.copysign(1.0, yb - ya)
    x, w = _gauss(n)
    xs, ys, ws = [], [], []
    for i in range(ex.size - 1):
        for j in range(ey.size - 1):
            if i == 0 and j == 0:
                px, py, pw = _duffy_square(0.0, ex[1], 0.0, ey[1], n)
            else:
                hx, hy = 0.5 * (ex[i + 1] - ex[i]), 0.5 * (ey[j + 1] - ey[j])
                PX, PY = np.meshgrid(ex[i] + hx * (x + 1), ey[j] + hy * (x + 1), indexing="ij")
                px, py, pw = PX.ravel(), PY.ravel(), (np.outer(w, w) * hx * hy).ravel()
            xs.append(xa + sx * px)
            ys.append(ya + sy * py)
            ws.append(pw)
    return np.concatenate(xs), np.concatenate(ys), np.concatenate(ws)


def washer_biot_savart(rho, z, a, b, d, n=20):
    """(B_rho, B_z) / (mu0 I0 / 2) of the washer J = I0/rho', by summing current loops.

    The rectangle a <= rho' <= b, |z'| <= D is cut at the point nearest to (rho, z) into up to
    4 rectangles with that corner; each is meshed geometrically toward it (Duffy rule in the
    corner cell, n x n Gauss-Legendre nodes per cell). Loop current dI = I0 drho' dz' / rho',
    and mu0 dI / (2 pi) = (c / pi) drho' dz' / rho' with c = mu0 I0 / 2.
    """
    apex = (min(max(rho, a), b), min(max(z, -d), d))
    gap = math.hypot(rho - apex[0], z - apex[1])
    tot_rho = tot_z = 0.0
    for xb in {a, b} - {apex[0]}:
        for yb in {-d, d} - {apex[1]}:
            rr, zz, w = _corner_rectangle_rule(apex[0], apex[1], xb, yb, gap, n)
            br, bz = loop_field(rho, z, rr, zz)
            tot_rho += np.sum(w * br / rr)
            tot_z += np.sum(w * bz / rr)
    return tot_rho / math.pi, tot_z / math.pi


def semi_infinite_biot_savart(rho, z, a, d, n=160):
    """(B_rho, B_z) / c of the sheet a <= rho' < inf by loop summation with rho' = a / u,
    u in (0, 1] (drho' / rho' = du / u), n x n Gauss-Legendre nodes; for points off the sheet."""
    x, w = _gauss(n)
    u = 0.5 * (x + 1.0)
    wu = 0.5 * w
    zz, wz = d * x, d * w
    U, Z = np.meshgrid(u, zz, indexing="ij")
    R = a / U
    W = np.outer(wu, wz) / U  # drho'/rho' = du / u
    br, bz = loop_field(rho, z, R, Z)
    return np.sum(W * br) / math.pi, np.sum(W * bz) / math.pi


# --------------------------------------------------------------------------- the loop formula itself
def test_loop_formula_on_axis_and_far_field():
    # On axis: B_z = mu0 I a^2 / (2 (a^2 + z^2)^(3/2)) (Jackson 1999, eq. 5.40, from memory),
    # i.e. pi a^2 / (a^2 + z^2)^(3/2) per (mu0 I / 2 pi). Far: dipole m = I pi a^2 (Jackson eq. 5.56).
    a = 2.0
    for z in (-3.0, 0.0, 0.5, 7.0):
        br, bz = loop_field(0.0, z, a, 0.0)
        assert br == 0.0
        ref = math.pi * a**2 / (a**2 + z**2) ** 1.5
        assert abs(bz - ref) <= 1e-14 * ref, (z, bz, ref)
    # dipole: B = (mu0 m / 4 pi) (3 (m.r) r - m) / r^5 -> per (mu0 I / 2 pi): (pi a^2 / 2)(...)
    r, th = 4000.0, 0.7
    rho, z = r * math.sin(th), r * math.cos(th)
    br, bz = loop_field(rho, z, a, 0.0)
    k = 0.5 * math.pi * a**2 / r**3
    ref_r, ref_z = k * 3 * math.cos(th) * math.sin(th), k * (3 * math.cos(th) ** 2 - 1)
    err = math.hypot(br - ref_r, bz - ref_z) / math.hypot(ref_r, ref_z)
    assert err < 2 * (a / r) ** 2, err


# --------------------------------------------------------------------------- exact field vs Biot-Savart
A, B, D = 5.0, 50.0, 2.5
POINTS = {
    "inside, mid-plane": (9.5, 0.0),
    "inside, off mid-plane": (9.5, 1.3),
    "inside, below": (20.0, -1.7),
    "inside, near outer edge": (49.0, 2.0),
    "inside, just beyond inner edge": (5.001, 0.5),
    "above": (9.5, 4.0),
    "below": (30.0, -6.0),
    "just above the surface": (30.0, 2.501),
    "on the surface": (30.0, 2.5),
    "on the inner edge": (5.0, 1.0),
    "inner corner": (5.0, 2.5),
    "near inner corner, outside": (5.0 - 1e-3, 2.5 + 1e-3),
    "near inner corner, inside": (5.0 + 1e-3, 2.5 - 1e-3),
    "just outside the outer edge": (50.01, 0.0),
    "hole, on axis": (0.0, 0.0),
    "hole, off axis": (2.0, 0.5),
    "hole, just inside the inner edge": (4.99, 1.0),
    "axis, above": (0.0, 7.0),
    "far, oblique": (300.0, 200.0),
    "far, on axis": (0.0, 500.0),
    "far, mid-plane": (1000.0, 0.0),
}


def test_exact_matches_biot_savart_loops():
    # Source: direct Biot-Savart summation of current loops (Smythe 1950; Jackson 1999 sec. 5.5),
    # loops filling the washer with density I0/rho'. Tolerance 1e-6 relative (task requirement);
    # the reference itself is checked for convergence (16 vs 24 nodes per direction and cell).
    rho = np.array([p[0] for p in POINTS.values()])
    z = np.array([p[1] for p in POINTS.values()])
    b_rho, b_z = current_sheet_field(rho, z, A, B, D, 1.0)
    worst = (0.0, None)
    worst_ref = 0.0
    for i, (name, (r, zz)) in enumerate(POINTS.items()):
        ref = np.array(washer_biot_savart(r, zz, A, B, D, n=24))
        ref_lo = np.array(washer_biot_savart(r, zz, A, B, D, n=16))
        scale = np.linalg.norm(ref)
        worst_ref = max(worst_ref, np.linalg.norm(ref - ref_lo) / scale)
        err = np.linalg.norm(np.array([b_rho[i], b_z[i]]) - ref) / scale
        if err > worst[0]:
            worst = (err, (name, r, zz, (b_rho[i], b_z[i]), tuple(ref)))
    assert worst_ref < 1e-8, f"Biot-Savart reference not converged: {worst_ref:.2e}"
    assert worst[0] < BIOT_SAVART_TOL, f"worst relative error {worst[0]:.3e} at {worst[1]}"


def test_thin_and_thick_sheets_match_biot_savart():
    # Same source and tolerance; other aspect ratios (D/a = 0.0017, 0.05 and 1), with points at
    # and near both corners (where the two singularities of the angle integrands separate).
    for a, b, d in ((6.0, 45.0, 0.01), (6.0, 45.0, 0.3), (2.0, 8.0, 2.0)):
        pts = [(a + 0.5 * d, 0.2 * d), (0.5 * a, 1.5 * d), (2 * a, 3 * d), (b, d), (a, d), (a, 0.0),
               (0.5 * (a + b), -0.9 * d), (a + 1e-3 * d, d * (1 - 1e-3)), (a - 1e-2 * d, d * 1.01)]
        rho = np.array([p[0] for p in pts])
        z = np.array([p[1] for p in pts])
        b_rho, b_z = current_sheet_field(rho, z, a, b, d, 1.0)
        for i, (r, zz) in enumerate(pts):
            ref = np.array(washer_biot_savart(r, zz, a, b, d, n=24))
            err = np.linalg.norm(np.array([b_rho[i], b_z[i]]) - ref) / np.linalg.norm(ref)
            assert err < BIOT_SAVART_TOL, (
                f"a, b, D = {a, b, d}; point {(r, zz)}: {err:.2e}; got {(b_rho[i], b_z[i])}, ref {ref}")


def test_semi_infinite_sheet_matches_biot_savart():
    # Source: Biot-Savart loop summation over a <= rho' < inf (rho' = a/u). Tolerance 1e-6 relative;
    # the reference is checked for convergence (160 vs 200 nodes per direction).
    pts = [(0.0, 0.0), (2.0, 0.3), (3.0, -6.0), (9.0, 4.0), (40.0, 10.0)]
    rho = np.array([p[0] for p in pts])
    z = np.array([p[1] for p in pts])
    b_rho, b_z = current_sheet_field(rho, z, A, np.inf, D, 1.0)
    for i, (r, zz) in enumerate(pts):
        ref = np.array(semi_infinite_biot_savart(r, zz, A, D, n=200))
        ref_lo = np.array(semi_infinite_biot_savart(r, zz, A, D, n=160))
        assert np.linalg.norm(ref - ref_lo) < 1e-8 * np.linalg.norm(ref), f"reference not converged at {(r, zz)}"
        err = np.linalg.norm(np.array([b_rho[i], b_z[i]]) - ref) / np.linalg.norm(ref)
        assert err < BIOT_SAVART_TOL, f"point {(r, zz)}: {err:.2e}; got {(b_rho[i], b_z[i])}, ref {ref}"


def test_on_axis_closed_form():
    # Source: on-axis loop field (Jackson 1999 eq. 5.40, from memory) integrated over the washer:
    # B_z(0, z) = c sum_edges +-[asinh((z+D)/e) - asinh((z-D)/e)] (closed form). Tolerance 1e-12 relative.
    z = np.array([-40.0, -3.0, -2.5, -1.0, 0.0, 0.7, 2.5, 6.0, 100.0])
    s = np.arcsinh
    for b in (B, np.inf):
        ref = s((z + D) / A) - s((z - D) / A)
        if np.isfinite(b):
            ref = ref - (s((z + D) / b) - s((z - D) / b))
        b_rho, b_z = current_sheet_field(0.0, z, A, b, D, 3.0)
        assert np.all(b_rho == 0.0)
        err = np.abs(b_z - 3.0 * ref) / np.abs(3.0 * ref)
        assert err.max() < 1e-12, f"outer={b}: worst {err.max():.2e} at z = {z[np.argmax(err)]}"


# --------------------------------------------------------------------------- Maxwell's equations
def _field(rho, z, a=A, b=B, d=D):
    return current_sheet_field(rho, z, a, b, d, 1.0)


def _d_drho(f, rho, z, h):
    # fourth-order central difference (common practice)
    return (-f(rho + 2 * h, z) + 8 * f(rho + h, z) - 8 * f(rho - h, z) + f(rho - 2 * h, z)) / (12 * h)


def _d_dz(f, rho, z, h):
    return (-f(rho, z + 2 * h) + 8 * f(rho, z + h) - 8 * f(rho, z - h) + f(rho, z - 2 * h)) / (12 * h)


def test_divergence_free():
    # Source: div B = 0 (common practice), (1/rho) d(rho B_rho)/drho + dB_z/dz = 0, everywhere
    # (also inside the sheet). Tolerance: 1e-7 of the size of the two terms.
    rng = np.random.default_rng(5)
    rho = np.r_[rng.uniform(0.5, 70.0, 60), 9.5, 5.2, 4.8, 49.0]
    z = np.r_[rng.uniform(-10.0, 10.0, 60), 0.4, 3.0, -2.0, 2.2]
    h = 1e-3
    t1 = _d_drho(lambda r, zz: r * _field(r, zz)[0], rho, z, h) / rho
    t2 = _d_dz(lambda r, zz: _field(r, zz)[1], rho, z, h)
    rel = np.abs(t1 + t2) / (np.abs(t1) + np.abs(t2))
    k = np.argmax(rel)
    assert rel[k] < 1e-7, f"div B / scale = {rel[k]:.2e} at rho, z = {rho[k]}, {z[k]}"


def test_curl_is_mu0_j():
    # Source: Ampere's law, curl B = mu0 J (common practice). Phi component:
    # dB_rho/dz - dB_z/drho = mu0 J_phi = mu0 I0 / rho = 2 c / rho inside the sheet, 0 outside.
    # Tolerance 1e-7 relative to 2 c / rho.
    rng = np.random.default_rng(6)
    rho_in = rng.uniform(5.05, 49.9, 40)
    z_in = rng.uniform(-2.45, 2.45, 40)
    rho_out = np.r_[rng.uniform(0.5, 4.9, 15), rng.uniform(5.0, 60.0, 15), rng.uniform(50.2, 80.0, 10)]
    z_out = np.r_[rng.uniform(-5.0, 5.0, 15), rng.choice([-1, 1], 15) * rng.uniform(2.6, 8.0, 15),
                  rng.uniform(-3, 3, 10)]
    h = 1e-3
    for rho, z, inside in ((rho_in, z_in, True), (rho_out, z_out, False)):
        curl = _d_dz(lambda r, zz: _field(r, zz)[0], rho, z, h) - _d_drho(lambda r, zz: _field(r, zz)[1], rho, z, h)
        expected = 2.0 / rho if inside else 0.0
        err = np.abs(curl - expected) / (2.0 / rho)
        k = np.argmax(err)
        want = expected[k] if inside else expected
        assert err[k] < 1e-7, f"inside={inside}: curl {curl[k]} vs {want} at rho, z = {rho[k]}, {z[k]}"


def test_field_continuous_across_sheet_surfaces_and_edges():
    # Source: B is continuous where J is bounded (common practice). The exact method switches
    # formula at |z| = D; both sides must agree to 1e-10 relative at a relative step of 2e-13
    # (near the corners the gradient is logarithmically singular, so B itself changes by
    # ~ step ln(1/step) ~ 1e-11 there).
    rho = np.array([0.0, 3.0, 5.0, 9.5, 30.0, 50.0, 70.0])
    for zs in (D, -D):
        lo = np.array(_field(rho, np.full_like(rho, zs * (1 - 1e-13))))
        hi = np.array(_field(rho, np.full_like(rho, zs * (1 + 1e-13))))
        err = np.linalg.norm(lo - hi, axis=0) / np.linalg.norm(lo, axis=0)
        assert err.max() < 1e-10, (zs, err)
    z = np.array([-3.0, -2.5, -1.0, 0.0, 1.0, 2.5, 3.0])
    for rs in (A, B):
        lo = np.array(_field(np.full_like(z, rs * (1 - 1e-13)), z))
        hi = np.array(_field(np.full_like(z, rs * (1 + 1e-13)), z))
        err = np.linalg.norm(lo - hi, axis=0) / np.linalg.norm(lo, axis=0)
        assert err.max() < 1e-10, (rs, err)


# --------------------------------------------------------------------------- symmetry and far field
def test_parity_in_z():
    # Source: mirror symmetry of an azimuthal current symmetric in z (common practice):
    # B_rho odd, B_z even. Exact (bitwise) equality is expected from the construction.
    rng = np.random.default_rng(7)
    rho = rng.uniform(0.0, 80.0, 200)
    z = rng.uniform(0.0, 20.0, 200)
    up = _field(rho, z)
    down = _field(rho, -z)
    assert np.array_equal(up[0], -down[0]) and np.array_equal(up[1], down[1])
    mid = _field(rho, 0.0 * z)
    assert np.all(mid[0] == 0.0)


def test_far_field_is_the_washer_dipole():
    # Source: dipole field (Jackson 1999 eq. 5.56) of the moment m = (1/2) int r x J dV
    # (Jackson eq. 5.54) = pi I0 int int rho' drho' dz' = pi I0 D (b^2 - a^2) along +z, i.e.
    # mu0 m / (4 pi) = c D (b^2 - a^2) / 2. The next term (octupole) is smaller by ~(b/r)^2:
    # required relative deviation < 2 (b/r)^2 at r = 20 b ... 2000 b.
    mom = 0.5 * D * (B**2 - A**2)
    for r in (20 * B, 200 * B, 2000 * B):
        for th in (0.0, 0.4, 1.0, math.pi / 2, 2.5):
            rho, z = r * math.sin(th), r * math.cos(th)
            b_rho, b_z = _field(rho, z)
            ref_rho = mom / r**3 * 3 * math.cos(th) * math.sin(th)
            ref_z = mom / r**3 * (3 * math.cos(th) ** 2 - 1)
            err = math.hypot(b_rho - ref_rho, b_z - ref_z) / math.hypot(ref_rho, ref_z)
            assert err < 2 * (B / r) ** 2, f"r = {r}, theta = {th}: {err:.2e}"


# --------------------------------------------------------------------------- approximations
@pytest.mark.parametrize(
    "terms, top, stated",
    # (terms, rho/a upper bound, error stated in the docstring of sheet_field_small_rho)
    [(1, 0.1, 2.5e-3), (2, 0.05, 8.8e-7), (2, 0.25, 5.6e-4), (4, 0.2, 2.0e-7), (8, 0.5, 7.0e-7), (12, 0.5, 1.9e-9)],
)
def test_small_rho_series_errors_as_stated(terms, top, stated):
    # Source: the exact method (checked above against Biot-Savart). Required: the measured worst
    # error is at most the docstring's figure (x 1.3 for the coarser test grid's luck) and
    # at least 1/10 of it (the figure is not stale).
    worst = 0.0
    for d in (0.01, 0.1, 0.5, 1.0, 2.0):
        rho, z = np.meshgrid(np.linspace(0.0, top, 25), np.linspace(-5 * d, 5 * d, 41))
        ex = current_sheet_field(rho, z, 1.0, np.inf, d, 1.0)
        ap = sheet_field_small_rho(rho, z, 1.0, d, 1.0, terms=terms)
        worst = max(worst, float((np.hypot(ap[0] - ex[0], ap[1] - ex[1]) / np.hypot(*ex)).max()))
    assert stated / 10 < worst <= 1.3 * stated, f"terms={terms}, rho <= {top} a: worst {worst:.2e}, stated {stated:.1e}"


@pytest.mark.parametrize(
    "terms, bottom, stated",
    [(1, 10.0, 2.5e-3), (2, 20.0, 8.8e-7), (2, 4.0, 5.7e-4), (4, 5.0, 2.0e-7), (8, 2.0, 7.1e-7), (12, 2.0, 1.9e-9)],
)
def test_large_rho_series_errors_as_stated(terms, bottom, stated):
    # Source and requirement as for the small-rho series.
    worst = 0.0
    for d in (0.01, 0.1, 0.5, 1.0, 2.0):
        rho, z = np.meshgrid(bottom * np.geomspace(1.0, 100.0, 25), np.linspace(-5 * d, 5 * d, 41))
        ex = current_sheet_field(rho, z, 1.0, np.inf, d, 1.0)
        ap = sheet_field_large_rho(rho, z, 1.0, d, 1.0, terms=terms)
        worst = max(worst, float((np.hypot(ap[0] - ex[0], ap[1] - ex[1]) / np.hypot(*ex)).max()))
    assert stated / 10 < worst <= 1.3 * stated, (
        f"terms={terms}, rho >= {bottom} a: worst {worst:.2e}, stated {stated:.1e}")


def test_converged_series_agree_with_exact():
    # Independent route: the series are derived from the Hankel integrals of Connerney et al. (1981)
    # with int k^n J0(ka) e^(-k zeta) dk = n! P_n(zeta/s)/s^(n+1) (Gradshteyn & Ryzhik 6.621, from
    # memory), not from the angle integrals of the exact method. Where they converge fast they
    # must agree with it to 1e-13.
    rho_s, z_s = np.meshgrid(np.linspace(0.0, 0.2, 15), np.linspace(-2.0, 2.0, 21))
    rho_l, z_l = np.meshgrid(np.geomspace(4.0, 400.0, 15), np.linspace(-2.0, 2.0, 21))
    for fn, rho, z in ((sheet_field_small_rho, rho_s, z_s), (sheet_field_large_rho, rho_l, z_l)):
        ap = fn(rho, z, 1.0, 0.4, 1.0, terms=16)
        ex = current_sheet_field(rho, z, 1.0, np.inf, 0.4, 1.0)
        err = np.hypot(ap[0] - ex[0], ap[1] - ex[1]) / np.hypot(*ex)
        k = np.argmax(err)
        assert err.flat[k] < 1e-13, f"{fn.__name__}: {err.flat[k]:.2e} at rho, z = {rho.flat[k]}, {z.flat[k]}"


def test_classic_forms_written_out():
    # Source: the classic closed forms, written out here independently of the module: small rho
    # (Connerney et al. 1981, with Edwards et al. 2001's asinh form of the leading B_z; from memory)
    #   B_rho = c (rho/2) [1/s_- - 1/s_+],  s_pm = sqrt((z pm D)^2 + a^2)
    #   B_z = c [asinh((z+D)/a) - asinh((z-D)/a) + (rho^2/4) ((z+D)/s_+^3 - (z-D)/s_-^3)]
    # large rho (same sources):
    #   B_rho = c [(r_- - r_+)/rho + (|z+D| - |z-D|)/rho + (rho a^2/4)(1/r_+^3 - 1/r_-^3)]
    #   B_z = c [asinh((z+D)/rho) - asinh((z-D)/rho) + (a^2/4)((z+D)/r_+^3 - (z-D)/r_-^3)],
    #   r_pm = sqrt((z pm D)^2 + rho^2).
    # terms=2 must reproduce them to 1e-13; small rho has one more B_rho term, of the same order
    # in the vector potential as the rho^2 term of B_z (derived for the module, written here from
    # the series in its docstring): -c (rho^3/8) [P2(zeta_-/s_-)/s_-^3 - P2(zeta_+/s_+)/s_+^3],
    # P2(x) = (3x^2 - 1)/2.
    a, d, c = 5.0, 2.5, 200.0
    rho, z = np.meshgrid(np.linspace(0.0, 2.0, 9), np.linspace(-6.0, 6.0, 13))
    sp, sm = np.hypot(z + d, a), np.hypot(z - d, a)
    bz = c * (np.arcsinh((z + d) / a) - np.arcsinh((z - d) / a) + rho**2 / 4 * ((z + d) / sp**3 - (z - d) / sm**3))
    brho = c * rho / 2 * (1 / sm - 1 / sp)
    p2p, p2m = (3 * ((z + d) / sp) ** 2 - 1) / 2, (3 * ((z - d) / sm) ** 2 - 1) / 2
    brho = brho - c * rho**3 / 8 * (p2m / sm**3 - p2p / sp**3)
    got = sheet_field_small_rho(rho, z, a, d, c, terms=2)
    scale = np.hypot(bz, brho)
    assert np.max(np.abs(got[1] - bz) / scale) < 1e-13
    assert np.max(np.abs(got[0] - brho) / scale) < 1e-13
    rho, z = np.meshgrid(np.linspace(6.0, 60.0, 9), np.linspace(-6.0, 6.0, 13))
    rp, rm = np.hypot(z + d, rho), np.hypot(z - d, rho)
    bz = c * (np.arcsinh((z + d) / rho) - np.arcsinh((z - d) / rho) + a**2 / 4 * ((z + d) / rp**3 - (z - d) / rm**3))
    brho = c * ((rm - rp) / rho + (np.abs(z + d) - np.abs(z - d)) / rho + rho * a**2 / 4 * (1 / rp**3 - 1 / rm**3))
    got = sheet_field_large_rho(rho, z, a, d, c, terms=2)
    scale = np.hypot(bz, brho)
    assert np.max(np.abs(got[1] - bz) / scale) < 1e-13
    assert np.max(np.abs(got[0] - brho) / scale) < 1e-13


def test_approximate_method_uses_the_series_per_edge():
    # Definition (Connerney et al. 1981's use of the approximations for a finite sheet, from
    # memory): washer = inner sheet (large-rho form where rho > a, small-rho form where rho < a)
    # minus the sheet from b (small-rho form where rho < b). Must equal the public series
    # functions combined by hand, to 1e-13.
    rho = np.array([1.0, 3.0, 9.5, 30.0, 49.0, 60.0])
    z = np.array([0.0, -1.0, 1.3, 2.0, -4.0, 0.5])
    got = np.array(current_sheet_field(rho, z, A, B, D, 7.0, method="approximate"))
    ref = np.zeros_like(got)
    for edge, sign in ((A, 1.0), (B, -1.0)):
        lo = rho < edge
        ref[:, lo] += sign * np.array(sheet_field_small_rho(rho[lo], z[lo], edge, D, 7.0))
        ref[:, ~lo] += sign * np.array(sheet_field_large_rho(rho[~lo], z[~lo], edge, D, 7.0))
    np.testing.assert_allclose(got, ref, rtol=1e-13, atol=1e-13 * np.abs(ref).max())


def test_finite_outer_radius_tends_to_infinite():
    # Consistency: as b -> inf the washer's field tends to the semi-infinite sheet's; the
    # difference is the sheet from b outward, which near the planet is c [asinh((z+D)/b) -
    # asinh((z-D)/b)] along z to O((rho/b)^2) (on-axis closed form above). Required: the
    # difference matches that to 3 (rho/b)^2 relative, and to 1e-12 on the axis.
    rho = np.array([0.0, 0.0, 2.0, 9.5, 9.5])
    z = np.array([0.0, 4.0, 1.0, 0.0, 2.0])
    inf_field = np.array(current_sheet_field(rho, z, A, np.inf, D, 1.0))
    for b in (1e3, 1e4, 1e5):
        fin = np.array(current_sheet_field(rho, z, A, b, D, 1.0))
        diff = inf_field - fin
        expect = np.arcsinh((z + D) / b) - np.arcsinh((z - D) / b)
        rel = np.abs(diff[1] - expect) / expect
        bound = np.where(rho == 0.0, 1e-9, 3 * (np.hypot(rho, z + D) / b) ** 2 + 1e-9)
        assert np.all(rel < bound), (b, rel)
        assert np.all(np.abs(diff[0]) <= 3 * rho / b * expect + 1e-15), (b, diff[0])


# --------------------------------------------------------------------------- planet-fixed model
def _rotation(rng):
    q, r = np.linalg.qr(rng.normal(size=(3, 3)))
    q = q * np.sign(np.diag(r))
    if np.linalg.det(q) < 0:
        q[:, 0] = -q[:, 0]
    return q


def test_axis_along_z_reproduces_cylindrical_field():
    # Source: cylindrical-to-Cartesian components, B = B_rho rho_hat + B_z z_hat (common practice).
    radius = 6.5e7
    sheet = CurrentSheetField(radius, A, B, D, 140.0)
    rng = np.random.default_rng(8)
    xyz = rng.uniform(-60.0, 60.0, (500, 3)) * radius
    xyz[:, 2] *= 0.1
    got = sheet.field_cartesian(xyz)
    p = xyz / radius
    rho = np.hypot(p[:, 0], p[:, 1])
    b_rho, b_z = current_sheet_field(rho, p[:, 2], A, B, D, 140.0)
    ref = np.stack([b_rho * p[:, 0] / rho, b_rho * p[:, 1] / rho, b_z], axis=-1)
    err = np.linalg.norm(got - ref, axis=-1) / np.linalg.norm(ref, axis=-1)
    assert err.max() < 1e-13, err.max()


def test_rotating_the_axis_equals_rotating_the_points():
    # Source: rotational covariance of a field (common practice): B'(Q x) = Q B(x) for the sheet
    # with axis Q e_z. Tolerance 1e-12 relative.
    radius = 6.5e7
    rng = np.random.default_rng(9)
    base = CurrentSheetField(radius, A, B, D, 140.0)
    x = rng.uniform(-30.0, 30.0, (300, 3)) * radius
    b0 = base.field_cartesian(x)
    for _ in range(4):
        q = _rotation(rng)
        turned = CurrentSheetField(radius, A, B, D, 140.0, axis=q[:, 2])
        got = turned.field_cartesian(x @ q.T)
        err = np.linalg.norm(got - b0 @ q.T, axis=-1) / np.linalg.norm(b0, axis=-1)
        assert err.max() < 1e-12, err.max()


def test_tilt_convention_matches_tilted_dipole():
    # Source: induct.field.planet.tilted_dipole_coefficients, whose convention is checked against
    # chaosmagpy in tests/test_planet_field.py: the axis must be the dipole moment's direction.
    for tilt, lon in ((0.0, 0.0), (9.0, 200.0), (120.0, -35.0)):
        g10, g11, h11 = tilted_dipole_coefficients(1.0, tilt, lon)
        np.testing.assert_allclose(axis_from_tilt(tilt, lon), [g11, h11, g10], rtol=0, atol=1e-15)
        np.testing.assert_allclose(axis_from_dipole(g10, g11, h11), [g11, h11, g10], rtol=0, atol=1e-15)
        sheet = CurrentSheetField.from_tilt(6.5e7, A, B, D, 1.0, tilt, lon)
        assert abs(sheet.tilt_deg - tilt) < 1e-9
        np.testing.assert_allclose(sheet.axis, [g11, h11, g10], atol=1e-15)


def test_sheet_moment_parallel_to_axis_and_sum_with_internal_field():
    # Far away the sheet is a dipole along +axis (Jackson eq. 5.56, moment as above), so its far
    # field equals that of a GaussField dipole with (g11, h11, g10) = (mu0 m / 4 pi a^3) axis
    # (induct.field.planet convention). Then SumField adds it to an internal field.
    radius = 6.5e7
    tilt, lon = 9.0, 200.0
    sheet = CurrentSheetField.from_tilt(radius, A, B, D, 140.0, tilt, lon)
    b0 = 140.0 * 0.5 * D * (B**2 - A**2)  # mu0 m / (4 pi a^3) in nT (lengths in planet radii)
    g10, g11, h11 = tilted_dipole_coefficients(b0, tilt, lon)
    g = np.zeros((2, 2))
    h = np.zeros((2, 2))
    g[1, 0], g[1, 1], h[1, 1] = g10, g11, h11
    dip = GaussField(radius, g, h)
    rng = np.random.default_rng(10)
    x = rng.normal(size=(50, 3))
    x = 5000.0 * radius * x / np.linalg.norm(x, axis=-1, keepdims=True)
    err = np.linalg.norm(sheet.field_cartesian(x) - dip.field_cartesian(x), axis=-1) / np.linalg.norm(
        dip.field_cartesian(x), axis=-1)
    assert err.max() < 2 * (B / 5000.0) ** 2, err.max()
    total = SumField((dip, sheet))
    y = rng.uniform(-20, 20, (40, 3)) * radius
    np.testing.assert_allclose(total.field_cartesian(y), dip.field_cartesian(y) + sheet.field_cartesian(y),
                               rtol=1e-14, atol=0)


def test_planet_fixed_field_keeps_shape_and_spherical_components():
    radius = 6.5e7
    sheet = CurrentSheetField.from_tilt(radius, A, B, D, 140.0, 9.0, 200.0)
    x = np.random.default_rng(11).uniform(-20, 20, (4, 5, 3)) * radius
    assert sheet.field_cartesian(x).shape == (4, 5, 3)
    r = np.linalg.norm(x, axis=-1)
    theta = np.arccos(x[..., 2] / r)
    phi = np.arctan2(x[..., 1], x[..., 0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        sph = sheet.field_spherical(r, theta, phi)
    # |B| is frame independent (common practice)
    np.testing.assert_allclose(np.linalg.norm(sph, axis=-1), np.linalg.norm(sheet.field_cartesian(x), axis=-1),
                               rtol=1e-13)


def test_from_table_and_its_errors():
    t = {"inner_radius": 6.0, "outer_radius": 45.0, "half_thickness": 2.0, "current_constant_nT": 140.0}
    s = current_sheet_from_table(t, 6.5e7, axis_from_tilt(9.0, 200.0))
    assert (s.inner_radius, s.outer_radius, s.half_thickness, s.current_constant_nT) == (6.0, 45.0, 2.0, 140.0)
    s = current_sheet_from_table({k: v for k, v in t.items() if k != "outer_radius"}, 6.5e7, [0, 0, 1])
    assert s.outer_radius == math.inf
    bad = [
        ({**t, "thickness": 1.0}, "current_sheet: unknown key"),
        ({k: v for k, v in t.items() if k != "inner_radius"}, "current_sheet.inner_radius: missing"),
        ({**t, "outer_radius": 5.0}, "current_sheet.outer_radius"),
        ({**t, "half_thickness": 0.0}, "current_sheet.half_thickness"),
        ({**t, "current_constant_nT": "140"}, "current_sheet.current_constant_nT"),
        ({**t, "inner_radius": -1.0}, "current_sheet.inner_radius"),
    ]
    for table, msg in bad:
        with pytest.raises(ValueError, match=msg.replace(".", r"\.")):
            current_sheet_from_table(table, 6.5e7, [0, 0, 1])


# --------------------------------------------------------------------------- input checking
@pytest.mark.parametrize(
    "kwargs, name",
    [
        (dict(rho=-1.0), "rho"),
        (dict(rho=np.nan), "rho"),
        (dict(z=np.inf), "z"),
        (dict(inner=0.0), "inner"),
        (dict(outer=4.0), "outer"),
        (dict(outer=np.nan), "outer"),
        (dict(half_thickness=-2.0), "half_thickness"),
        (dict(current_constant_nT=np.inf), "current_constant_nT"),
        (dict(method="auto"), "method"),
        (dict(rho=[1.0, 2.0], z=[1.0, 2.0, 3.0]), "rho and z"),
    ],
)
def test_bad_inputs_name_the_argument(kwargs, name):
    args = dict(rho=1.0, z=0.0, inner=5.0, outer=50.0, half_thickness=2.5, current_constant_nT=1.0)
    args.update(kwargs)
    with pytest.raises(ValueError, match=name):
        current_sheet_field(**args)


def test_bad_class_and_series_inputs():
    with pytest.raises(ValueError, match="axis"):
        CurrentSheetField(6.5e7, A, B, D, 1.0, axis=[0.0, 0.0, 0.0])
    with pytest.raises(ValueError, match="outer_radius"):
        CurrentSheetField(6.5e7, A, A, D, 1.0)
    with pytest.raises(ValueError, match="radius_m"):
        CurrentSheetField(-1.0, A, B, D, 1.0)
    with pytest.raises(ValueError, match="tilt_deg"):
        axis_from_tilt(190.0, 0.0)
    with pytest.raises(ValueError, match="rho"):
        sheet_field_small_rho(5.0, 0.0, 5.0, 1.0, 1.0)
    with pytest.raises(ValueError, match="rho"):
        sheet_field_large_rho(5.0, 0.0, 5.0, 1.0, 1.0)
    with pytest.raises(ValueError, match="terms"):
        sheet_field_large_rho(6.0, 0.0, 5.0, 1.0, 1.0, terms=0)
    with pytest.raises(ValueError, match="points"):
        benchmark_current_sheet(points=0)


def test_no_runtime_warnings_at_special_points():
    # Axis, corners, surfaces and edges evaluated exactly: finite values, no warnings.
    rho = np.array([0.0, 0.0, A, A, A, B, B, 0.0, A])
    z = np.array([0.0, D, D, -D, 0.0, D, 0.0, -D, 1e-300])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for b in (B, np.inf):
            out = current_sheet_field(rho, z, A, b, D, 1.0)
            assert np.all(np.isfinite(out[0])) and np.all(np.isfinite(out[1]))
            out = current_sheet_field(rho, z, A, b, D, 1.0, method="approximate")
            assert np.all(np.isfinite(out[0])) and np.all(np.isfinite(out[1]))
