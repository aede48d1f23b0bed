"""Kepler orbit, flow frame and the primary field at the moon.

References (each check names its own):
* scipy.optimize.brentq (SciPy 1.10+): independent root of Kepler's equation.
* Murray & Dermott (1999), Solar System Dynamics, ch. 2 (from memory): vis-viva
  v^2 = GM (2/r - 1/a), specific angular momentum |h| = sqrt(GM a (1 - e^2)), Kepler's third law.
* /work/shared/domain/driving.md (project reference sheet, computed there): the synodic-period
  relations and worked example; the tilted-dipole field at an equatorial moon
  B = B_eq [2 sin(td) cos(psi) rhat - sin(td) sin(psi) phihat - cos(td) zhat], giving amplitudes
  2 B_eq sin(td) (radial) and B_eq sin(td) (azimuthal), 90 deg apart; eccentricity adds ~3 e B_eq at T_orb.
* Jackson (1999), Classical Electrodynamics, 3rd ed., eq. 5.56 (dipole field), for the expected
  values derived in the comments.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from induct.field.orbit import (
    KeplerOrbit,
    flow_frame_axes,
    planet_fixed_position,
    primary_field_series,
    solve_kepler,
    synodic_period_s,
)
from induct.field.planet import GaussField, Planet, tilted_dipole_coefficients
from induct.field.spectrum import fit_harmonics

HOUR = 3600.0
GM = 1.0e17  # m^3/s^2 (fictional giant planet)
RADIUS = 6.5e7  # m


def _dipole_planet(b0_nT=2.5e5, tilt_deg=9.0, lon_deg=200.0, rotation_h=10.6, meridian=0.0):
    g10, g11, h11 = tilted_dipole_coefficients(b0_nT, tilt_deg, lon_deg)
    g = np.zeros((2, 2))
    h = np.zeros((2, 2))
    g[1, 0], g[1, 1], h[1, 1] = g10, g11, h11
    return Planet("Tarvos", RADIUS, rotation_h * HOUR, GaussField(RADIUS, g, h), GM, meridian)


def _kepler_period(a_m):
    return 2.0 * math.pi * math.sqrt(a_m**3 / GM)  # Kepler's third law (Murray & Dermott 1999)


# --------------------------------------------------------------------------- Kepler's equation
@pytest.mark.parametrize("e", [0.0, 0.004, 0.1, 0.5, 0.9, 0.99])
def test_kepler_equation_against_brentq(e):
    # Reference: scipy.optimize.brentq on E - e sin E - M (xtol 1e-15); tol 1e-12 rad.
    mean = np.linspace(-7.0, 20.0, 97)
    ours = solve_kepler(mean, e)
    worst = (0.0, None)
    for m, got in zip(mean, ours):
        turns = round(m / (2 * math.pi))
        m_red = m - 2 * math.pi * turns
        ref = brentq(lambda x: x - e * math.sin(x) - m_red, -math.pi - 1, math.pi + 1, xtol=1e-15, rtol=1e-15)
        ref += 2 * math.pi * turns
        if abs(got - ref) > worst[0]:
            worst = (abs(got - ref), (m, got, ref))
    assert worst[0] < 1e-12, f"e={e}: worst |E - E_ref| = {worst}"


# --------------------------------------------------------------------------- orbit geometry
@pytest.mark.parametrize("e, inc_deg, retro", [(0.0, 0.0, False), (0.3, 25.0, False), (0.05, 10.0, True)])
def test_orbit_geometry_vis_viva_and_angular_momentum(e, inc_deg, retro):
    # Murray & Dermott (1999) (from memory): v^2 = GM (2/r - 1/a); |r x v| = sqrt(GM a (1 - e^2));
    # the orbit normal makes the (geometric) inclination with the spin axis; the ascending node lies at
    # longitude Omega. Velocity by 4th-order central differences (step 1e-5 T); tol 1e-8 relative.
    a = 6.175e8
    node, peri = math.radians(40.0), math.radians(110.0)
    orbit = KeplerOrbit(a, _kepler_period(a), e, math.radians(inc_deg), node, peri, math.radians(25.0), retro)
    t = np.linspace(0.0, orbit.period_s, 37)
    step = 1e-5 * orbit.period_s
    pos = orbit.position_inertial(t)
    vel = (8 * (orbit.position_inertial(t + step) - orbit.position_inertial(t - step))
           - (orbit.position_inertial(t + 2 * step) - orbit.position_inertial(t - 2 * step))) / (12 * step)
    r = np.linalg.norm(pos, axis=-1)
    v2 = np.sum(vel**2, axis=-1)
    err = np.abs(v2 / (GM * (2 / r - 1 / a)) - 1)
    assert err.max() < 1e-8, f"vis-viva worst {err.max():.3e} at t={t[np.argmax(err)]}"
    h = np.cross(pos, vel)
    err_h = np.abs(np.linalg.norm(h, axis=-1) / math.sqrt(GM * a * (1 - e * e)) - 1)
    assert err_h.max() < 1e-8, f"|h| worst {err_h.max():.3e}"
    normal = h[0] / np.linalg.norm(h[0])
    geometric = 180.0 - inc_deg if retro else inc_deg
    assert math.isclose(math.degrees(math.acos(normal[2])), geometric, abs_tol=1e-6)
    if inc_deg > 0:
        node_dir = np.cross([0.0, 0.0, 1.0], normal)
        assert math.isclose(math.atan2(node_dir[1], node_dir[0]) % (2 * math.pi), node, abs_tol=1e-7)
    assert r.min() >= a * (1 - e) * (1 - 1e-12) and r.max() <= a * (1 + e) * (1 + 1e-12)
    # Sense: angular momentum along +z for prograde, -z for retrograde.
    assert (normal[2] > 0) == (not retro)


# --------------------------------------------------------------------------- periods
def test_synodic_period_worked_example():
    # driving.md worked example (computed there): T_rot = 9.924920 h, T_orb = 85.2283 h ->
    # T_syn = 11.2330 h, T_syn/2 = 5.6165 h, beats 9.9249 h and 12.9383 h (4 decimals: tol 5e-5 h).
    t_syn = synodic_period_s(9.924920 * HOUR, 85.2283 * HOUR) / HOUR
    assert abs(t_syn - 11.2330) < 5e-5, t_syn
    assert abs(t_syn / 2 - 5.6165) < 5e-5
    plus = 1.0 / (1.0 / t_syn + 1.0 / 85.2283)
    minus = 1.0 / (1.0 / t_syn - 1.0 / 85.2283)
    assert abs(plus - 9.9249) < 5e-5 and abs(minus - 12.9383) < 5e-5, (plus, minus)
    # Retrograde: 1/T_syn = 1/T_rot + 1/T_orb (driving.md).
    retro = synodic_period_s(9.924920 * HOUR, 85.2283 * HOUR, retrograde=True) / HOUR
    assert math.isclose(retro, 1.0 / (1.0 / 9.924920 + 1.0 / 85.2283), rel_tol=1e-14)


def _fit_one_window(planet, orbit, period_s, samples=720):
    """Least-squares fit of one exact window of the line at period_s (plus the mean)."""
    t = np.arange(samples) * period_s / samples
    return fit_harmonics(t, primary_field_series(planet, orbit, t), [period_s])


@pytest.mark.parametrize("retro", [False, True])
@pytest.mark.parametrize("tilt_deg", [9.0, 30.0])
def test_tilted_dipole_synodic_amplitudes(tilt_deg, retro):
    # driving.md (computed from Jackson 5.56): equatorial circular orbit, tilted dipole:
    # |B_y| = 2 B_eq sin(td) (radial, y = -rhat), |B_x| = B_eq sin(td) (azimuthal), 90 deg apart,
    # steady B_z = -B_eq cos(td) for a moment tilted into the north. Exact for this geometry: tol 1e-10.
    planet = _dipole_planet(tilt_deg=tilt_deg)
    a = 9.5 * RADIUS
    orbit = KeplerOrbit(a, _kepler_period(a), retrograde=retro)
    t_syn = synodic_period_s(planet.rotation_period_s, orbit.period_s, retro)
    spec = _fit_one_window(planet, orbit, t_syn)
    b_eq = 2.5e5 / 9.5**3
    s = math.sin(math.radians(tilt_deg))
    line = spec.lines[0]
    expected = np.array([b_eq * s, 2 * b_eq * s, 0.0])
    assert np.allclose(line.amplitude_nT, expected, rtol=1e-10, atol=1e-10 * b_eq), (line.amplitude_nT, expected)
    dphase = (line.phase_deg[1] - line.phase_deg[0]) % 360.0
    # Sign (derived from Jackson 5.56): psi = phi_moon - lon_dipole decreases at 2 pi / T_syn in both
    # cases tested (the planet overtakes the moon), and B_x = B_eq s sin(psi), B_y = -2 B_eq s cos(psi),
    # so phase_y = phase_x + 90 deg.
    assert abs(dphase - 90.0) < 1e-8, (line.phase_deg, dphase)
    assert np.allclose(spec.mean_nT, [0.0, 0.0, -b_eq * math.cos(math.radians(tilt_deg))], rtol=0, atol=1e-10 * b_eq)
    assert spec.fraction_explained > 1 - 1e-12


def test_eccentricity_adds_orbital_line_in_bz():
    # driving.md: eccentricity e adds about 3 e B_eq at T_orb in B_z (first order in e, aligned dipole:
    # B_z = -B_eq (a/r)^3, (a/r)^3 = 1 + 3 e cos M + O(e^2)); the fundamental's next correction is
    # O(e^2) relative. e = 1e-3: tol 1e-5 relative (measured 1.1e-6).
    planet = _dipole_planet(tilt_deg=0.0)
    a, e = 9.5 * RADIUS, 1e-3
    orbit = KeplerOrbit(a, _kepler_period(a), e)
    spec = _fit_one_window(planet, orbit, orbit.period_s)
    b_eq = 2.5e5 / 9.5**3
    amp = spec.lines[0].amplitude_nT
    assert abs(amp[2] / (3 * e * b_eq) - 1) < 1e-5, (amp, 3 * e * b_eq)
    assert amp[0] < 1e-12 * b_eq and amp[1] < 1e-12 * b_eq  # an aligned dipole has no horizontal field here


# --------------------------------------------------------------------------- flow frame
def test_flow_frame_axes_definition():
    # Frame definition (driving.md; common practice): x along the corotation flow Omega zhat x r,
    # y toward the spin axis, z along it; orthonormal and right-handed. For a prograde moon on a circular
    # equatorial orbit x is the direction of motion and y points at the planet's centre (tol 1e-12).
    rng = np.random.default_rng(5)
    pos = rng.normal(size=(50, 3)) * 1e8
    axes = flow_frame_axes(pos)
    assert np.allclose(axes @ np.swapaxes(axes, 1, 2), np.eye(3), atol=1e-14)
    assert np.allclose(np.linalg.det(axes), 1.0, atol=1e-14)
    flow = np.cross([0.0, 0.0, 1.0], pos)
    assert np.allclose(np.sum(axes[:, 0] * flow, -1), np.linalg.norm(flow, axis=-1), rtol=1e-12)
    assert np.all(np.sum(axes[:, 1] * pos, -1) < 0)
    a = 9.5 * RADIUS
    orbit = KeplerOrbit(a, _kepler_period(a))
    t = np.linspace(0, orbit.period_s, 9)
    step = 1e-4 * orbit.period_s
    p = orbit.position_inertial(t)
    v = (orbit.position_inertial(t + step) - orbit.position_inertial(t - step)) / (2 * step)
    ax = flow_frame_axes(p)
    assert np.allclose(ax[:, 0], v / np.linalg.norm(v, axis=-1, keepdims=True), atol=1e-8)
    assert np.allclose(ax[:, 1], -p / np.linalg.norm(p, axis=-1, keepdims=True), atol=1e-12)


def test_planet_fixed_longitude_drifts_at_synodic_rate():
    # The moon's planet-fixed longitude changes by -360 deg per synodic period (prograde, T_rot < T_orb)
    # (driving.md periods); tol 1e-9 deg.
    planet = _dipole_planet(meridian=0.3)
    a = 9.5 * RADIUS
    orbit = KeplerOrbit(a, _kepler_period(a), mean_anomaly_rad=1.0)
    t_syn = synodic_period_s(planet.rotation_period_s, orbit.period_s)
    t = np.array([0.0, 0.25 * t_syn, t_syn])
    pos = planet_fixed_position(planet, orbit, t)
    lon = np.degrees(np.arctan2(pos[:, 1], pos[:, 0]))
    assert abs((lon[1] - lon[0]) % 360.0 - 270.0) < 1e-9 and abs((lon[2] - lon[0] + 180) % 360 - 180) < 1e-9


# --------------------------------------------------------------------------- bad input
def test_bad_orbits_raise_value_errors():
    with pytest.raises(ValueError, match="eccentricity"):
        KeplerOrbit(1e9, 1e5, 1.0)
    with pytest.raises(ValueError, match="inclination"):
        KeplerOrbit(1e9, 1e5, 0.0, math.radians(90.0))
    with pytest.raises(ValueError, match="semi_major_axis"):
        KeplerOrbit(-1e9, 1e5)
    with pytest.raises(ValueError, match="period"):
        KeplerOrbit(1e9, 0.0)
    with pytest.raises(ValueError, match="retrograde"):
        KeplerOrbit(1e9, 1e5, retrograde="yes")
    with pytest.raises(ValueError, match="synchronous"):
        synodic_period_s(3600.0, 3600.0)
    with pytest.raises(ValueError, match="orbital_period_s"):
        synodic_period_s(3600.0, -1.0)
    with pytest.raises(ValueError, match="eccentricity"):
        solve_kepler(0.3, 1.2)
    planet = _dipole_planet()
    with pytest.raises(ValueError, match="periapsis"):
        primary_field_series(planet, KeplerOrbit(2.0 * RADIUS, 1e5, 0.6), [0.0])
    with pytest.raises(ValueError, match="t_s"):
        primary_field_series(planet, KeplerOrbit(9 * RADIUS, 1e5), [np.nan])
    with pytest.raises(ValueError, match="spin axis"):
        flow_frame_axes([[0.0, 0.0, 1e8]])
