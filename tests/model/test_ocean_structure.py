"""Gravity and hydrostatic pressure inside layered bodies (no chemistry needed)."""

import math

import numpy as np
import pytest
from scipy import integrate

from induct.constants import G
from induct.model.ocean import gravity_m_per_s2, hydrostatic_pressure_MPa


def test_uniform_body_pressure_hand_calculation():
    # Uniform sphere: g = (4/3) pi G rho r, p(r) = (2 pi / 3) G rho^2 (R^2 - r^2)
    # (hand calculation from hydrostatic equilibrium and Newtonian gravity; common practice).
    rho, big_r = 3000.0, 1.5e6
    radii, dens = np.array([5e5, 1e6, big_r]), np.array([rho, rho, rho])
    r = np.linspace(0.0, big_r, 31)
    expected = 2 * math.pi / 3 * G * rho**2 * (big_r**2 - r**2) / 1e6
    got = hydrostatic_pressure_MPa(r, radii, dens)
    worst = np.argmax(np.abs(got - expected))
    assert np.allclose(got, expected, rtol=1e-12, atol=1e-12), (r[worst], got[worst], expected[worst])
    g = gravity_m_per_s2(r[1:], radii, dens)
    np.testing.assert_allclose(g, 4 / 3 * math.pi * G * rho * r[1:], rtol=1e-12)


def test_layered_pressure_against_quadrature():
    # Independent check: integrate rho(r) g(r) with scipy.integrate.quad layer by layer.
    radii = np.array([6e5, 1.42e6, 1.52e6, 1.54e6])
    dens = np.array([7000.0, 3300.0, 1040.0, 920.0])

    def rho_of(r):
        return dens[np.searchsorted(radii, r)]

    def integrand(r):
        return rho_of(r) * gravity_m_per_s2(r, radii, dens)

    for r0 in [1.535e6, 1.5e6, 1.0e6, 3e5]:
        edges = [r0] + [x for x in radii if x > r0]
        ref = sum(integrate.quad(integrand, a, b, epsabs=0, epsrel=1e-13)[0] for a, b in zip(edges[:-1], edges[1:]))
        got = hydrostatic_pressure_MPa(r0, radii, dens) * 1e6
        assert got == pytest.approx(ref, rel=1e-10), (r0, got, ref)
    # Surface gravity from the total mass (definition).
    mass = sum(4 / 3 * math.pi * d * (b**3 - a**3) for d, a, b in zip(dens, np.r_[0, radii[:-1]], radii))
    assert gravity_m_per_s2(radii[-1], radii, dens) == pytest.approx(G * mass / radii[-1] ** 2, rel=1e-14)
