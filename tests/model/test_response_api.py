"""Checked response API: validation, broadcasting, chunking, derived quantities, approximations."""

import math
import warnings

import mpmath as mp
import numpy as np
import pytest

from induct import (
    amplitude,
    c_response_km,
    conductance_S,
    perfect_conductor_bound,
    phase_lag_deg,
    q_response,
    skin_depth_m,
    transfer,
)
from induct.model.approximations import born_low_frequency, high_frequency, thin_shell, uniform_sphere
from induct.model.kernel import layered_response

MU0 = 4e-7 * math.pi


def test_broadcast_shapes():
    # Issue contract: radii (N,1,L), conductivity (N,1,L), period (P,) -> (N, P).
    radii = np.array([[600e3, 1500e3, 1540e3]] * 5)[:, None, :]
    sigma = np.array([[1e5, 3.0, 0.0]] * 5)[:, None, :]
    period = np.geomspace(3600, 3.6e5, 7)
    out = transfer(radii, sigma, period)
    assert out.shape == (5, 7) and out.dtype == complex
    # Scalars give a 0-d array, not a squeezed scalar of another type.
    assert transfer([1e6], [1.0], 3600.0).shape == ()


def test_chunking_does_not_change_results():
    # Branch choices (series length, negligible terms) are made per chunk: agreement to rounding.
    rng = np.random.default_rng(1)
    radii = np.sort(rng.uniform(1e5, 1e6, (1000, 3)), axis=-1)
    sigma = 10 ** rng.uniform(-3, 3, (1000, 3))
    period = 10 ** rng.uniform(2, 6, 1000)
    np.testing.assert_allclose(transfer(radii, sigma, period, chunk_size=7), transfer(radii, sigma, period), rtol=1e-14)


@pytest.mark.parametrize(
    "radii, sigma, period, degree, match",
    [
        ([1e6], [1.0], 0.0, 1, "period_s must be finite and > 0"),
        ([1e6], [1.0], -5.0, 1, "period_s"),
        ([1e6], [1.0], np.nan, 1, "period_s"),
        ([1e6], [np.nan], 10.0, 1, "conductivity_S_per_m contains NaN"),
        ([1e6], [-1.0], 10.0, 1, "conductivity_S_per_m must be >= 0"),
        ([1e5, 1e6], [1.0, np.inf], 10.0, 1, "only in the innermost"),
        ([1e6, 1e5], [1.0, 1.0], 10.0, 1, "increase strictly"),
        ([1e6, 1e6], [1.0, 1.0], 10.0, 1, "increase strictly"),
        ([-1e6], [1.0], 10.0, 1, "radii_m must be > 0"),
        ([np.nan], [1.0], 10.0, 1, "radii_m must be finite"),
        ([1e6], [1.0, 2.0], 10.0, 1, "same number of layers"),
        ([1e6], [1.0], 10.0, 0, "degree"),
        ([1e6], [1.0], 10.0, 13, "degree"),
        ([1e6], [1.0], 10.0, 1.5, "degree"),
    ],
)
def test_bad_input(radii, sigma, period, degree, match):
    with pytest.raises(ValueError, match=match):
        transfer(radii, sigma, period, degree)


def test_perfect_conductor_and_insulator_limits():
    # A perfect conductor filling the sphere gives A = 1, phase 0; an insulator gives 0
    # (Parkinson 1983; induction.md conventions).
    assert transfer([1e6], [np.inf], 3600.0) == 1.0
    assert transfer([1e6], [0.0], 3600.0) == 0.0
    r = transfer([5e5, 1e6], [np.inf, 0.0], 3600.0, degree=3)
    assert r == pytest.approx(0.5**7, rel=1e-15)
    assert perfect_conductor_bound(5e5, 1e6, 3) == pytest.approx(0.5**7)


def test_derived_quantities():
    r = np.array([0.9 + 0.05j, 0.2 + 0.3j])
    np.testing.assert_allclose(amplitude(r), np.abs(r))
    np.testing.assert_allclose(phase_lag_deg(r), np.degrees(np.arctan2(r.imag, r.real)))
    # Q_n = n/(n+1) R_n (Parkinson 1983).
    np.testing.assert_allclose(q_response(r, 2), 2 / 3 * r)
    # C-response of an insulator is R/(n+1) (Schmucker 1970; Olsen 1998).
    assert c_response_km(0.0, 1000.0, 1) == pytest.approx(500.0)
    assert c_response_km(0.0, 1000.0, 3) == pytest.approx(250.0)
    assert conductance_S(3.0, 1e5) == pytest.approx(3e5)
    assert np.isinf(skin_depth_m(0.0, 3600.0))


def test_c_response_of_uniform_sphere_at_high_frequency():
    # Uniform conductor at high frequency: C = (1 - i) delta / 2 (exp(+i w t); Olsen 1998).
    radius, sigma, period = 1e6, 10.0, 60.0
    delta = skin_depth_m(sigma, period)
    c = c_response_km(transfer([radius], [sigma], period), radius / 1e3)
    assert c * 1e3 == pytest.approx((1 - 1j) * delta / 2, rel=2 * delta / radius)


def _mp_uniform(radius, sigma, period, n):
    # Uniform sphere (Parkinson 1983; Wait 1951), R_n = i_{n+1}(kR)/i_{n-1}(kR), at 40 digits.
    mp.mp.dps = 40
    z = mp.sqrt(1j * 2 * mp.pi / period * 4e-7 * mp.pi * sigma) * radius
    return complex(mp.besseli(n + mp.mpf(3) / 2, z) / mp.besseli(n - mp.mpf(1) / 2, z))


@pytest.mark.parametrize("n", [1, 2, 5, 10])
@pytest.mark.parametrize("x", [0.05, 1.0, 3.0, 30.0, 3000.0])
def test_uniform_sphere_closed_form_against_mpmath(n, x):
    radius, period = 1e6, 3600.0
    # choose sigma so that R/delta = x
    sigma = 2 * x**2 / (radius**2 * 2 * math.pi / period * MU0)
    ref = _mp_uniform(radius, sigma, period, n)
    got = uniform_sphere(radius, sigma, period, n)
    assert abs(got - ref) / abs(ref) < 1e-12, (n, x, got, ref)


def test_uniform_sphere_table_values():
    # R/delta table of induction.md (computed there at 60+ digits): n = 1 and 2.
    table = {1: (0.13075251, 79.239901, 0.05688240, 84.924870), 10: (0.86065382, 9.024541, 0.77786407, 14.993675)}
    radius, period = 1e6, 3600.0
    for x, (a1, p1, a2, p2) in table.items():
        sigma = 2 * x**2 / (radius**2 * 2 * math.pi / period * MU0)
        for n, a, p in [(1, a1, p1), (2, a2, p2)]:
            r = uniform_sphere(radius, sigma, period, n)
            assert abs(r) == pytest.approx(a, abs=6e-9)
            assert math.degrees(np.angle(r)) == pytest.approx(p, abs=6e-7)


def test_thin_shell_against_kernel():
    # Classical thin-sheet result; relative error about 0.17 (h/delta)^2 near w tau = 1.
    a, h, big_r = 1.5e6, 100.0, 1.56e6
    sig = 3.0
    tau = MU0 * sig * h * a / 3
    period = 2 * math.pi * tau
    exact = transfer([a - h / 2, a + h / 2, big_r], [0.0, sig, 0.0], period)
    approx = thin_shell(a, sig * h, big_r, period)
    delta = skin_depth_m(sig, period)
    assert abs(approx - exact) / abs(exact) < 0.5 * (h / delta) ** 2 + 1e-9


def test_born_low_frequency_against_kernel():
    # Low-frequency limit: R ~ i w mu0/((2n+1) R^(2n+1)) integral sigma r^(2n+2) dr; error O((R/delta)^2) relative.
    radii = np.array([3e5, 9e5, 1e6])
    sigma = np.array([1e-2, 1e-3, 1e-4])
    period = 1e9
    exact = transfer(radii, sigma, period)
    born = born_low_frequency(radii, sigma, period)
    assert abs(born - exact) / abs(exact) < 1e-4
    uni = born_low_frequency([1e6], [1e-3], period)
    delta = skin_depth_m(1e-3, period)
    assert abs(uni) == pytest.approx(2 / 15 * (1e6 / delta) ** 2, rel=1e-12)


def test_high_frequency_against_kernel():
    # R_n ~ (r_top/R)^(2n+1)[1 - (2n+1) delta/(2 r_top)(1 - i)], error O((delta/r)^2).
    radii, sigma = np.array([1.4e6, 1.5e6]), np.array([3.0, 0.0])
    for n in (1, 2):
        period = 1.0
        delta = skin_depth_m(3.0, period)
        exact = transfer(radii, sigma, period, n)
        approx = high_frequency(1.4e6, 3.0, 1.5e6, period, n)
        assert abs(approx - exact) / abs(exact) < 10 * (n + 1) ** 2 * (delta / 1.4e6) ** 2


def test_no_runtime_warning_at_extremes():
    radii = np.array([[1.0, 1e8], [1e3, 1e8], [5e7, 1e8]])
    sigma = np.array([[1e7, 1e-12], [np.inf, 1e7], [1e7, 0.0]])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for p in (1.0, 1e10):
            for n in (1, 10):
                out = transfer(radii, sigma, p, n)
                assert np.all(np.isfinite(out))
                out = layered_response(radii, sigma, 2 * np.pi / p, n)
                assert np.all(np.isfinite(out))
