"""Parent-planet internal field: Schmidt Legendre functions, Gauss-coefficient synthesis, dipoles.

References used below (each check names its own):
* chaosmagpy (Kloss, Finlay et al., PyPI package ``chaosmagpy`` 0.13+), ``model_utils.synth_values``
  and ``model_utils.legendre_poly``: an independent spherical-harmonic synthesis in the same
  (Schmidt semi-normalised, no Condon-Shortley phase) convention. Its reference radius is fixed
  at ``chaosmagpy.basicConfig['params.r_surf']`` (6371.2 km), so the comparisons use that radius.
* IGRF-13 main-field coefficients, epoch 2020.0: Alken et al. (2021), "International Geomagnetic
  Reference Field: the thirteenth generation", EPS 73, 49; values copied from the coefficient file
  IGRF13.shc shipped in the PyPI package ppigrf 2.1.0 (degree 1 cross-checked below against the
  values hard-coded in chaosmagpy.coordinate_utils.igrf_dipole('2020')).
* mpmath 1.3 (Johansson et al.) ``legenp``: associated Legendre functions at 30 digits
  (mpmath includes the Condon-Shortley phase (-1)**m, removed here).
* Jackson (1999), Classical Electrodynamics, 3rd ed., eq. 5.56: the field of a point dipole.
* Winch, Ivers, Turner & Stening (2005), Geophys. J. Int. 160, 487-504 (from memory):
  sum_m [P_n^m]^2 = 1 and sum_m [dP_n^m/dtheta]^2 = sum_m [m P_n^m/sin]^2 = n(n+1)/2
  for Schmidt semi-normalised functions (the addition theorem and its derivatives).
"""

from __future__ import annotations

import math
import warnings

import mpmath as mp
import numpy as np
import pytest

from induct.constants import MU0
from induct.field.planet import (
    GaussField,
    OffsetDipoleField,
    SumField,
    cartesian_to_spherical,
    schmidt_legendre,
    spherical_to_cartesian_vectors,
    tilted_dipole_coefficients,
)

chaosmagpy = pytest.importorskip("chaosmagpy")
from chaosmagpy import model_utils as cmu  # noqa: E402

A_REF_KM = float(chaosmagpy.basicConfig["params.r_surf"])  # chaosmagpy's fixed reference radius
PARITY_TOL = 1e-10  # required |B - B_ref| / |B_ref| (task requirement)

# IGRF-13, epoch 2020.0 (n, m, g_nT, h_nT), Alken et al. (2021) -- see the module docstring.
IGRF13_2020 = [
    (1, 0, -29404.8, 0.0), (1, 1, -1450.9, 4652.5), (2, 0, -2499.6, 0.0), (2, 1, 2982.0, -2991.6),
    (2, 2, 1677.0, -734.6), (3, 0, 1363.2, 0.0), (3, 1, -2381.2, -82.1), (3, 2, 1236.2, 241.8),
    (3, 3, 525.7, -543.4), (4, 0, 903.0, 0.0), (4, 1, 809.5, 281.9), (4, 2, 86.3, -158.4),
    (4, 3, -309.4, 199.7), (4, 4, 48.0, -349.7), (5, 0, -234.3, 0.0), (5, 1, 363.2, 47.7),
    (5, 2, 187.8, 208.3), (5, 3, -140.7, -121.2), (5, 4, -151.2, 32.3), (5, 5, 13.5, 98.8),
    (6, 0, 66.0, 0.0), (6, 1, 65.5, -19.1), (6, 2, 72.9, 25.1), (6, 3, -121.5, 52.8), (6, 4, -36.2, -64.5),
    (6, 5, 13.5, 8.9), (6, 6, -64.7, 68.1), (7, 0, 80.6, 0.0), (7, 1, -76.7, -51.5), (7, 2, -8.2, -16.9),
    (7, 3, 56.5, 2.2), (7, 4, 15.8, 23.5), (7, 5, 6.4, -2.2), (7, 6, -7.2, -27.2), (7, 7, 9.8, -1.8),
    (8, 0, 23.7, 0.0), (8, 1, 9.7, 8.4), (8, 2, -17.6, -15.3), (8, 3, -0.5, 12.8), (8, 4, -21.1, -11.7),
    (8, 5, 15.3, 14.9), (8, 6, 13.7, 3.6), (8, 7, -16.5, -6.9), (8, 8, -0.3, 2.8), (9, 0, 5.0, 0.0),
    (9, 1, 8.4, -23.4), (9, 2, 2.9, 11.0), (9, 3, -1.5, 9.8), (9, 4, -1.1, -5.1), (9, 5, -13.2, -6.3),
    (9, 6, 1.1, 7.8), (9, 7, 8.8, 0.4), (9, 8, -9.3, -1.4), (9, 9, -11.9, 9.6), (10, 0, -1.9, 0.0),
    (10, 1, -6.2, 3.4), (10, 2, -0.1, -0.2), (10, 3, 1.7, 3.5), (10, 4, -0.9, 4.8), (10, 5, 0.7, -8.6),
    (10, 6, -0.9, -0.1), (10, 7, 1.9, -4.3), (10, 8, 1.4, -3.4), (10, 9, -2.4, -0.1), (10, 10, -3.8, -8.8),
    (11, 0, 3.0, 0.0), (11, 1, -1.4, 0.0), (11, 2, -2.5, 2.5), (11, 3, 2.3, -0.6), (11, 4, -0.9, -0.4),
    (11, 5, 0.3, 0.6), (11, 6, -0.7, -0.2), (11, 7, -0.1, -1.7), (11, 8, 1.4, -1.6), (11, 9, -0.6, -3.0),
    (11, 10, 0.2, -2.0), (11, 11, 3.1, -2.5), (12, 0, -2.0, 0.0), (12, 1, -0.1, -1.2), (12, 2, 0.5, 0.5),
    (12, 3, 1.3, 1.4), (12, 4, -1.1, -1.8), (12, 5, 0.7, 0.1), (12, 6, 0.3, 0.8), (12, 7, 0.5, -0.1),
    (12, 8, -0.3, 0.6), (12, 9, -0.5, 0.2), (12, 10, 0.1, -0.9), (12, 11, -1.1, -0.0), (12, 12, -0.3, 0.5),
    (13, 0, 0.1, 0.0), (13, 1, -0.9, -0.9), (13, 2, 0.5, 0.6), (13, 3, 0.7, 1.4), (13, 4, -0.3, -0.4),
    (13, 5, 0.8, -1.3), (13, 6, -0.0, -0.1), (13, 7, 0.8, 0.3), (13, 8, -0.0, -0.1), (13, 9, 0.4, 0.5),
    (13, 10, 0.1, 0.5), (13, 11, 0.5, -0.4), (13, 12, -0.5, -0.3), (13, 13, -0.4, -0.6),
]


def _igrf_field() -> GaussField:
    nmax = max(row[0] for row in IGRF13_2020)
    g = np.zeros((nmax + 1, nmax + 1))
    h = np.zeros_like(g)
    for n, m, gv, hv in IGRF13_2020:
        g[n, m], h[n, m] = gv, hv
    return GaussField(A_REF_KM * 1e3, g, h)


def _points(rng, count, r_max=10.0):
    """Random points (r in km, theta, phi in deg) including both poles exactly."""
    r = A_REF_KM * rng.uniform(1.0, r_max, count)
    theta = np.degrees(np.arccos(rng.uniform(-1.0, 1.0, count)))
    phi = rng.uniform(-180.0, 360.0, count)
    theta[:4] = [0.0, 180.0, 0.0, 180.0]
    return r, theta, phi


def _schmidt_mp(n, m, theta):
    """Schmidt P_n^m(cos theta) at mpmath precision, without the Condon-Shortley phase.

    Terminating hypergeometric form (DLMF 14.3.1 with the (-1)^m phase removed; from memory):
    P_nm(cos t) = (n+m)! / ((n-m)! m! 2^m) sin(t)^m 2F1(m-n, n+m+1; m+1; sin(t/2)^2),
    which is well conditioned at and near the poles. Checked against mpmath.legenp below.
    """
    norm = mp.sqrt((2 if m else 1) * mp.factorial(n - m) / mp.factorial(n + m))
    lead = mp.factorial(n + m) / (mp.factorial(n - m) * mp.factorial(m) * mp.mpf(2) ** m)
    return norm * lead * mp.sin(theta) ** m * mp.hyp2f1(m - n, n + m + 1, m + 1, mp.sin(theta / 2) ** 2)


def test_reference_form_matches_mpmath_legenp():
    # The hypergeometric reference above against mpmath.legenp (which carries the (-1)^m phase), 30 digits.
    mp.mp.dps = 30
    for n, m, t in [(3, 2, 0.7), (7, 0, 2.2), (12, 5, 1.1), (18, 18, 0.4)]:
        legenp = (-1) ** m * mp.sqrt((2 if m else 1) * mp.factorial(n - m) / mp.factorial(n + m)) * mp.legenp(n, m, mp.cos(t))
        assert abs(_schmidt_mp(n, m, mp.mpf(t)) - legenp) < mp.mpf("1e-25"), (n, m, t)


def _report(name, err, where):
    k = int(np.argmax(err))
    return f"{name}: worst relative error {err[k]:.3e} at {where(k)}"


# --------------------------------------------------------------------------- Legendre functions
@pytest.mark.parametrize("theta", [0.0, 1e-7, 0.3, 1.2, math.pi / 2, 2.9, math.pi - 1e-7, math.pi])
def test_legendre_against_mpmath(theta):
    # Reference: _schmidt_mp at 30 digits (mpmath 1.3, Johansson et al.), derivative by mpmath.diff.
    # Error measure: |ours - ref| / max(1, sqrt(n(n+1)/2)) (the size of the derivatives); tol 1e-13.
    nmax = 18
    mp.mp.dps = 30
    p, dp, mps = schmidt_legendre(nmax, theta)
    worst = (0.0, None)
    th = mp.mpf(theta)
    for n in range(nmax + 1):
        scale = max(1.0, math.sqrt(n * (n + 1) / 2.0))
        for m in range(n + 1):
            ref_p = _schmidt_mp(n, m, th)
            ref_dp = mp.diff(lambda t: _schmidt_mp(n, m, t), th) if 0.0 < theta < math.pi else None
            if m == 0:
                ref_mps = mp.mpf(0)
            elif 0.0 < theta < math.pi:
                ref_mps = m * ref_p / mp.sin(th)
            else:  # at the poles: limit, only m = 1 survives (value sqrt(n(n+1)/2) (+-1 at the south pole))
                ref_mps = mp.mpf(0) if m > 1 else mp.sqrt(mp.mpf(n * (n + 1)) / 2) * (1 if theta == 0.0 else (-1) ** (n + 1))
            pairs = [("P", p[n, m], ref_p), ("mP/sin", mps[n, m], ref_mps)]
            if ref_dp is not None:
                pairs.append(("dP", dp[n, m], ref_dp))
            for name, got, ref in pairs:
                err = abs(got - float(ref)) / scale
                if err > worst[0]:
                    worst = (err, (name, n, m, got, float(ref)))
    assert worst[0] < 1e-13, f"theta={theta}: worst {worst}"


def test_legendre_pole_derivative_limits():
    # At theta = 0: dP_n^1/dtheta = sqrt(n(n+1)/2) and dP_n^m/dtheta = 0 otherwise (from the series of
    # P_n^m near x = 1; mpmath.diff is unusable exactly at the endpoint). Checked against a one-sided
    # mpmath limit at theta = 1e-20 (30 digits), tol 1e-13.
    nmax = 15
    mp.mp.dps = 40
    _, dp, _ = schmidt_legendre(nmax, 0.0)
    for n in range(1, nmax + 1):
        for m in range(n + 1):
            ref = float(mp.diff(lambda t: _schmidt_mp(n, m, t), mp.mpf("1e-20")))
            assert abs(dp[n, m] - ref) < 1e-13 * max(1.0, abs(ref)), (n, m, dp[n, m], ref)


def test_legendre_against_chaosmagpy():
    # Reference: chaosmagpy.model_utils.legendre_poly (Langel 1987 recurrences), tol 1e-13 absolute.
    theta_deg = np.array([0.0, 0.5, 10.0, 45.0, 90.0, 137.0, 179.5, 180.0])
    nmax = 20
    p, dp, _ = schmidt_legendre(nmax, np.radians(theta_deg))
    ref = cmu.legendre_poly(nmax, theta_deg)  # ref[n, m] = P, ref[m, n + 1] = dP/dtheta
    worst = 0.0
    for n in range(nmax + 1):
        for m in range(n + 1):
            worst = max(worst, np.max(np.abs(p[:, n, m] - ref[n, m])), np.max(np.abs(dp[:, n, m] - ref[m, n + 1])))
    assert worst < 1e-12, f"worst absolute difference {worst:.3e}"


def test_legendre_high_degree_addition_theorem():
    # Winch et al. (2005) (from memory): sum_m P^2 = 1, sum_m dP^2 = sum_m (mP/sin)^2 = n(n+1)/2,
    # to degree 400 including both poles; tol 1e-11 relative (round-off grows ~ n eps).
    theta = np.array([0.0, 1e-12, 1e-4, 0.02, 0.7, math.pi / 2, 2.4, math.pi - 1e-9, math.pi])
    nmax = 400
    p, dp, mps = schmidt_legendre(nmax, theta)
    n = np.arange(nmax + 1)
    half = np.maximum(n * (n + 1) / 2.0, 1.0)
    for name, total, expected in (
        ("sum P^2", np.sum(p**2, -1), np.ones(nmax + 1)),
        ("sum dP^2", np.sum(dp**2, -1) / half, (n > 0).astype(float)),
        ("sum (mP/sin)^2", np.sum(mps**2, -1) / half, (n > 0).astype(float)),
    ):
        err = np.abs(total - expected)
        i, k = np.unravel_index(np.argmax(err), err.shape)
        assert err[i, k] < 1e-11, f"{name}: worst {err[i, k]:.3e} at theta={theta[i]}, n={k}"
    # Pole values: P_n^0(+-1) = (+-1)^n, P_n^m(+-1) = 0 for m > 0 (definition).
    assert np.allclose(p[0, :, 0], 1.0, atol=1e-13, rtol=0) and np.all(p[0, :, 1:] == 0.0)
    assert np.allclose(p[-1, :, 0], (-1.0) ** n, atol=1e-13, rtol=0)


# --------------------------------------------------------------------------- synthesis parity
def _parity(field: GaussField, rng, count=3000):
    r, theta, phi = _points(rng, count)
    ours = field.field_spherical(r * 1e3, np.radians(theta), np.radians(phi))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # chaosmagpy warns that the input includes the poles
        ref = np.stack(cmu.synth_values(field.to_flat(), r, theta, phi), axis=-1)
    err = np.linalg.norm(ours - ref, axis=-1) / np.linalg.norm(ref, axis=-1)
    k = int(np.argmax(err))
    message = (f"worst relative error {err[k]:.3e} at r={r[k]:.6g} km, theta={theta[k]:.6g}, phi={phi[k]:.6g}: "
               f"ours {ours[k]}, chaosmagpy {ref[k]}")
    return err.max(), message


def test_igrf_table_degree_one_matches_chaosmagpy_constants():
    # The degree-1 IGRF-13 2020 values hard-coded in chaosmagpy.coordinate_utils (igrf_dipole) use
    # g10 = -29404.8, g11 = -1450.9, h11 = 4652.5 nT: the unit vector it returns is anti-parallel to ours.
    from chaosmagpy.coordinate_utils import igrf_dipole

    field = _igrf_field()
    moment = field.dipole_moment_A_m2
    assert np.allclose(-moment / np.linalg.norm(moment), igrf_dipole("2020"), rtol=0, atol=1e-12)
    assert len(IGRF13_2020) == sum(n + 1 for n in range(1, 14))


def test_parity_with_chaosmagpy_igrf():
    # Reference: chaosmagpy.model_utils.synth_values with the IGRF-13 2020 coefficients; tol 1e-10.
    worst, message = _parity(_igrf_field(), np.random.default_rng(20))
    assert worst < PARITY_TOL, message


@pytest.mark.parametrize("nmax, seed", [(1, 1), (2, 2), (6, 3), (13, 4), (13, 5)])
def test_parity_with_chaosmagpy_random(nmax, seed):
    # Reference: chaosmagpy.model_utils.synth_values, random Gauss coefficients (N(0, 1000 nT)); tol 1e-10.
    rng = np.random.default_rng(seed)
    field = GaussField.from_flat(A_REF_KM * 1e3, rng.normal(0.0, 1000.0, nmax * (nmax + 2)))
    worst, message = _parity(field, rng)
    assert worst < PARITY_TOL, message


def test_flat_round_trip():
    # Coefficient ordering g10, g11, h11, g20, ... (the ordering of chaosmagpy's coefficient arrays).
    coeffs = np.arange(1.0, 16.0)
    field = GaussField.from_flat(1.0, coeffs)
    assert field.g_nT[2, 1] == 5.0 and field.h_nT[2, 1] == 6.0 and field.g_nT[3, 0] == 9.0
    assert np.array_equal(field.to_flat(), coeffs)


# --------------------------------------------------------------------------- dipoles
def _jackson_dipole_nT(moment_A_m2, xyz_m):
    """Jackson (1999) eq. 5.56: B = mu0/(4 pi) [3 n (n.m) - m] / |x|^3, in nT."""
    r = np.linalg.norm(xyz_m, axis=-1, keepdims=True)
    u = xyz_m / r
    return MU0 / (4 * math.pi) * (3 * u * np.sum(u * moment_A_m2, -1, keepdims=True) - moment_A_m2) / r**3 * 1e9


def _random_xyz(rng, radius_m, count=500):
    direction = rng.normal(size=(count, 3))
    direction /= np.linalg.norm(direction, axis=-1, keepdims=True)
    direction[:4] = [[0, 0, 1], [0, 0, -1], [1, 0, 0], [0, -1, 0]]  # poles and equator exactly
    return direction * radius_m * rng.uniform(1.0, 20.0, (count, 1))


@pytest.mark.parametrize("tilt_deg, lon_deg", [(0.0, 0.0), (9.0, 200.0), (96.0, -35.0), (180.0, 10.0)])
def test_tilted_dipole_against_jackson(tilt_deg, lon_deg):
    # Reference: Jackson (1999), eq. 5.56 with m = (4 pi a^3/mu0)(g11, h11, g10); tol 1e-13 relative.
    a = 65.0e6
    g10, g11, h11 = tilted_dipole_coefficients(2.5e5, tilt_deg, lon_deg)
    g = np.zeros((2, 2))
    h = np.zeros((2, 2))
    g[1, 0], g[1, 1], h[1, 1] = g10, g11, h11
    field = GaussField(a, g, h)
    moment = field.dipole_moment_A_m2
    # The moment makes the angle tilt with the spin axis and points toward longitude lon (definition).
    assert math.isclose(math.degrees(math.acos(moment[2] / np.linalg.norm(moment))), tilt_deg, abs_tol=1e-9)
    if 0.0 < tilt_deg < 180.0:
        assert math.isclose(math.degrees(math.atan2(moment[1], moment[0])) % 360.0, lon_deg % 360.0, abs_tol=1e-9)
    assert math.isclose(MU0 * np.linalg.norm(moment) / (4 * math.pi * a**3) * 1e9, 2.5e5, rel_tol=1e-14)
    xyz = _random_xyz(np.random.default_rng(7), a)
    ours = field.field_cartesian(xyz)
    ref = _jackson_dipole_nT(moment, xyz)
    err = np.linalg.norm(ours - ref, axis=-1) / np.linalg.norm(ref, axis=-1)
    assert err.max() < 1e-13, _report("Gauss dipole vs Jackson 5.56", err, lambda k: (xyz[k], ours[k], ref[k]))
    offset = OffsetDipoleField(a, moment, [0.0, 0.0, 0.0])
    ours2 = offset.field_cartesian(xyz)
    err2 = np.linalg.norm(ours2 - ref, axis=-1) / np.linalg.norm(ref, axis=-1)
    assert err2.max() < 1e-13, _report("offset dipole (no offset) vs Jackson", err2, lambda k: (xyz[k], ours2[k], ref[k]))


def test_radial_field_at_north_pole_is_twice_g10():
    # driving.md / Parkinson (1983), Introduction to Geomagnetism: B_r = 2 g10 at the north pole, r = a;
    # and B_r = -2 g10 at the south pole; tol 1e-13 relative.
    g = np.zeros((2, 2))
    g[1, 0] = -29404.8
    field = GaussField(6.0e6, g, np.zeros((2, 2)))
    b = field.field_spherical([6.0e6, 6.0e6], [0.0, math.pi], [0.0, 0.0])
    assert np.allclose(b[:, 0], [2 * -29404.8, -2 * -29404.8], rtol=1e-13, atol=0), b


def test_offset_dipole_is_translated_dipole_and_sum_field():
    # Jackson (1999) eq. 5.56 about the displaced source point; SumField adds parts (tol 1e-13).
    a = 6.0e7
    moment = np.array([1e26, -2e26, 5e26])
    offset = np.array([3.0e6, -1.0e6, 2.0e6])
    xyz = _random_xyz(np.random.default_rng(3), a)
    dip = OffsetDipoleField(a, moment, offset)
    ref = _jackson_dipole_nT(moment, xyz - offset)
    ours = dip.field_cartesian(xyz)
    err = np.linalg.norm(ours - ref, axis=-1) / np.linalg.norm(ref, axis=-1)
    assert err.max() < 1e-13, _report("offset dipole", err, lambda k: (xyz[k], ours[k], ref[k]))
    quad = GaussField.from_flat(a, np.r_[0.0, 0.0, 0.0, np.linspace(-500, 500, 5)])
    total = SumField((dip, quad)).field_cartesian(xyz)
    assert np.allclose(total, ours + quad.field_cartesian(xyz), rtol=1e-13, atol=1e-12 * np.abs(ref).max())


# --------------------------------------------------------------------------- potential-field identities
def _div_curl(fun, xyz, step):
    """Central differences (2nd order) of a Cartesian field: returns div (K,), curl (K, 3), |B| (K,)."""
    jac = np.empty(xyz.shape + (3,))  # jac[k, i, j] = dB_i / dx_j
    for j in range(3):
        dx = np.zeros(3)
        dx[j] = 1.0
        plus = fun(xyz + step[:, None] * dx)
        minus = fun(xyz - step[:, None] * dx)
        jac[:, :, j] = (plus - minus) / (2.0 * step[:, None])
    div = np.trace(jac, axis1=1, axis2=2)
    curl = np.stack([jac[:, 2, 1] - jac[:, 1, 2], jac[:, 0, 2] - jac[:, 2, 0], jac[:, 1, 0] - jac[:, 0, 1]], -1)
    return div, curl, np.linalg.norm(fun(xyz), axis=-1)


@pytest.mark.parametrize("kind", ["gauss13", "offset+gauss"])
def test_divergence_and_curl_vanish_outside(kind):
    # Maxwell: div B = 0 everywhere and curl B = 0 in current-free space (common practice).
    # Central differences with step 1e-5 r: truncation ~ (1e-5)^2 n^3, round-off ~ 1e-16 / 1e-5.
    # Measure: |div B| r / |B| and |curl B| r / |B|, tol 1e-6. A 1 % error in B_r must fail it (control).
    rng = np.random.default_rng(11)
    a = 6.0e7
    coeffs = rng.normal(0.0, 1000.0, 13 * 15)
    gauss = GaussField.from_flat(a, coeffs)
    field = gauss if kind == "gauss13" else SumField((OffsetDipoleField(a, [0, 3e26, 2e27], [2e6, 0, -1e6]), gauss))
    xyz = _random_xyz(rng, a, 300)
    xyz *= a * rng.uniform(1.1, 3.0, (300, 1)) / np.linalg.norm(xyz, axis=-1, keepdims=True)
    r = np.linalg.norm(xyz, axis=-1)
    div, curl, size = _div_curl(field.field_cartesian, xyz, 1e-5 * r)
    d = np.abs(div) * r / size
    c = np.linalg.norm(curl, axis=-1) * r / size
    assert d.max() < 1e-6, _report("div B", d, lambda k: (xyz[k], div[k], 0.0))
    assert c.max() < 1e-6, _report("curl B", c, lambda k: (xyz[k], curl[k], 0.0))

    def broken(p):
        rr, th, ph = cartesian_to_spherical(p)
        b = gauss.field_spherical(rr, th, ph)
        b[..., 0] *= 1.01
        return spherical_to_cartesian_vectors(b, th, ph)

    div_b, _, size_b = _div_curl(broken, xyz, 1e-5 * r)
    assert np.max(np.abs(div_b) * r / size_b) > 1e-3


# --------------------------------------------------------------------------- bad input
def test_bad_inputs_raise_value_errors_naming_the_argument():
    with pytest.raises(ValueError, match="nmax"):
        schmidt_legendre(0, 0.1)
    with pytest.raises(ValueError, match="theta_rad"):
        schmidt_legendre(3, [0.1, 3.5])
    with pytest.raises(ValueError, match="g_nT and h_nT"):
        GaussField(1.0, np.zeros((3, 3)), np.zeros((2, 2)))
    bad = np.zeros((3, 3))
    bad[1, 0] = 1.0
    with pytest.raises(ValueError, match=r"h_nT\[n, 0\]"):
        GaussField(1.0, np.zeros((3, 3)), bad)
    with pytest.raises(ValueError, match="m > n"):
        GaussField(1.0, np.triu(np.ones((3, 3))), np.zeros((3, 3)))
    with pytest.raises(ValueError, match="radius_m"):
        GaussField(-1.0, np.zeros((2, 2)), np.zeros((2, 2)))
    with pytest.raises(ValueError, match="N\\(N\\+2\\)"):
        GaussField.from_flat(1.0, np.ones(5))
    field = GaussField.from_flat(1.0, [1.0, 2.0, 3.0])
    with pytest.raises(ValueError, match="r_m"):
        field.field_spherical(0.0, 0.1, 0.1)
    with pytest.raises(ValueError, match="theta_rad"):
        field.field_spherical(2.0, np.nan, 0.1)
    with pytest.raises(ValueError, match="xyz_m"):
        field.field_cartesian([[1.0, 2.0]])
    with pytest.raises(ValueError, match="origin"):
        field.field_cartesian([0.0, 0.0, 0.0])
    with pytest.raises(ValueError, match="B0_nT"):
        tilted_dipole_coefficients(-1.0, 9.0, 0.0)
    with pytest.raises(ValueError, match="tilt_deg"):
        tilted_dipole_coefficients(1.0, 181.0, 0.0)
    with pytest.raises(ValueError, match="offset_km"):
        OffsetDipoleField(1.0, [0, 0, 1], [0, 0, 2.0])
    with pytest.warns(UserWarning, match="inside the planet"):
        field.field_spherical(0.5, 0.1, 0.1)
