"""Induced field anywhere: degree-1 dipole, degree-2 gradient response, planet gradient lines, input checks."""

import math

import numpy as np
import pytest
from scipy import constants

from induct.field.drive import DriveLine, drive_field_nT, parse_planet_table
from induct.flyby.induced import (
    GradientLine,
    dipole_geometry,
    external_degree2_field_nT,
    induced_field,
    induced_field_degree2_nT,
    induced_field_nT,
    planet_gradient_lines,
    primary_field,
)
from induct.model.interior import Ionosphere, InteriorModel, Layer
from induct.io.scenario import load_scenario

HOUR = 3600.0
RADIUS_KM = 1540.0


def random_points(rng, n, rmin=RADIUS_KM, rmax=4 * RADIUS_KM):
    u = rng.normal(size=(n, 3))
    u /= np.linalg.norm(u, axis=1)[:, None]
    return u * rng.uniform(rmin, rmax, n)[:, None]


def random_lines(rng, k=3):
    periods = rng.uniform(2.0, 100.0, k) * HOUR
    amps = rng.normal(size=(k, 3)) * 50.0 + 1j * rng.normal(size=(k, 3)) * 50.0
    resp = rng.uniform(0.1, 1.0, k) * np.exp(1j * rng.uniform(0.0, 0.5 * math.pi, k))
    return periods, amps, resp


def assert_close(got, want, atol, what):
    got = np.asarray(got)
    want = np.broadcast_to(np.asarray(want), got.shape)
    err = np.abs(got - want)
    if err.max() > atol:
        i = np.unravel_index(np.argmax(err), err.shape)
        pytest.fail(f"{what}: worst case at index {i}: got {got[i]!r}, expected {want[i]!r} "
                    f"(|diff| {err[i]:.3e} > {atol:.3e})")


def ilmare():
    return load_scenario("ilmare")


# --------------------------------------------------------------------------- degree 1
def test_dipole_field_matches_textbook_dipole():
    # Jackson (1999), Classical Electrodynamics, 3rd ed., eq. 5.56: B = (mu0/4pi) [3 n (n.m) - m] / r^3,
    # with the induced moment M = -(2 pi / mu0) R^3 R_1 B_e (Zimmer, Khurana & Kivelson 2000, Icarus 147;
    # induction.md). Independent SI evaluation with scipy's mu0; tolerance 1e-12 of the largest field.
    rng = np.random.default_rng(1)
    pos_km = random_points(rng, 500)
    t = rng.uniform(0.0, 1e6, 500)
    periods, amps, resp = random_lines(rng)
    got = induced_field_nT(pos_km, t, RADIUS_KM, resp, amps, periods)
    mu0 = constants.mu_0
    r_m = pos_km * 1e3
    dist = np.linalg.norm(r_m, axis=1)
    n = r_m / dist[:, None]
    want = np.zeros_like(got)
    for k in range(periods.size):
        moment = -(2 * math.pi / mu0) * (RADIUS_KM * 1e3) ** 3 * resp[k] * amps[k] * 1e-9  # A m^2, complex
        n_dot_m = n @ moment
        b_t = mu0 / (4 * math.pi) * (3 * n * n_dot_m[:, None] - moment[None, :]) / dist[:, None] ** 3
        want += np.real(b_t * np.exp(2j * math.pi * t / periods[k])[:, None]) * 1e9
    assert_close(got, want, 1e-12 * np.abs(want).max(), "induced field vs Jackson eq. 5.56 dipole")


def test_checked_api_uses_model_response():
    # induced_field(model, ...) equals the kernel with R_1 from model.response (same formula, API plumbing).
    sc = ilmare()
    lines = sc.drive_lines
    rng = np.random.default_rng(2)
    pos, t = random_points(rng, 200), rng.uniform(0, 1e6, 200)
    periods = np.array([ln.period_s for ln in lines])
    r1 = sc.model.response(periods_s=periods).response
    want = induced_field_nT(pos, t, RADIUS_KM, r1, np.array([ln.b_complex_nT for ln in lines]), periods)
    assert_close(induced_field(sc.model, lines, pos, t), want, 0.0, "checked API vs kernel")


def test_time_series_is_real_part_of_complex_sum():
    # The time series is the real part of the complex sum (induction.md, "each period's component is independent;
    # the time series is the real part of the sum"): evaluated with complex arithmetic term by term, and line by
    # line (superposition). Tolerance 1e-12 of the largest value.
    rng = np.random.default_rng(3)
    pos, t = random_points(rng, 300), rng.uniform(0, 3e5, 300)
    periods, amps, resp = random_lines(rng, 4)
    got = induced_field_nT(pos, t, RADIUS_KM, resp, amps, periods)
    r = np.linalg.norm(pos, axis=1)
    u = pos / r[:, None]
    total = np.zeros(pos.shape, dtype=complex)
    single = np.zeros(pos.shape)
    for k in range(periods.size):
        bu = u @ amps[k]
        term = -(resp[k] / 2) * (RADIUS_KM / r[:, None]) ** 3 * (3 * bu[:, None] * u - amps[k][None, :])
        total += term * np.exp(1j * 2 * math.pi * t / periods[k])[:, None]
        single += induced_field_nT(pos, t, RADIUS_KM, resp[k:k + 1], amps[k:k + 1], periods[k:k + 1])
    scale = np.abs(got).max()
    assert_close(got, total.real, 1e-12 * scale, "kernel vs complex sum")
    assert_close(got, single, 1e-12 * scale, "all lines vs sum of single lines")
    # The geometry terms G_k used by the fit: Re sum R_k G_k is the same field.
    g = dipole_geometry(pos, t, RADIUS_KM, amps, periods)
    assert_close(np.real(np.einsum("k,nkc->nc", resp, g)), got, 1e-12 * scale, "Re sum R_k G_k")


def test_in_phase_response_is_instantaneous_dipole():
    # For a real response R (no lag) the induced field at time t is the dipole of the instantaneous primary
    # field: -(R/2)(R_b/r)^3 [3 (B(t).rhat) rhat - B(t)] with B(t) = drive_field_nT (computed from the definition).
    lines = ilmare().drive_lines
    rng = np.random.default_rng(4)
    pos, t = random_points(rng, 100), rng.uniform(0, 1e6, 100)
    b = drive_field_nT(lines, t)
    u = pos / np.linalg.norm(pos, axis=1)[:, None]
    fac = (RADIUS_KM / np.linalg.norm(pos, axis=1)) ** 3
    want = -0.35 * fac[:, None] * (3 * np.sum(b * u, axis=1)[:, None] * u - b)
    got = induced_field_nT(pos, t, RADIUS_KM, np.full(len(lines), 0.7), np.array([ln.b_complex_nT for ln in lines]),
                           np.array([ln.period_s for ln in lines]))
    assert_close(got, want, 1e-12 * np.abs(want).max(), "real response vs instantaneous dipole")


def _fd_div_curl(func, pts, h):
    """Central-difference divergence, curl and largest |dB_i/dx_j| of a field func(points (N, 3)) -> (N, 3)."""
    jac = np.empty((pts.shape[0], 3, 3))
    for j in range(3):
        e = np.zeros(3)
        e[j] = h
        jac[:, :, j] = (func(pts + e) - func(pts - e)) / (2 * h)
    div = np.trace(jac, axis1=1, axis2=2)
    curl = np.stack([jac[:, 2, 1] - jac[:, 1, 2], jac[:, 0, 2] - jac[:, 2, 0], jac[:, 1, 0] - jac[:, 0, 1]], axis=1)
    return div, curl, np.abs(jac).max(axis=(1, 2))


@pytest.mark.parametrize("degree", [1, 2])
def test_divergence_and_curl_free_outside(degree):
    # Maxwell: div B = 0 everywhere, curl B = 0 where no current flows (outside the body, quasi-static);
    # common practice. Central differences with h = 0.05 km: truncation ~ 10 (h/r)^2 ~ 1e-8 relative; the check
    # is |div|, |curl| <= 1e-7 of the largest derivative |dB_i/dx_j| at each point.
    rng = np.random.default_rng(5 + degree)
    pts = random_points(rng, 200, 1.05 * RADIUS_KM, 3 * RADIUS_KM)
    t = np.full(200, 12345.0)
    periods, amps, resp = random_lines(rng, 2)
    if degree == 1:
        def func(p):
            return induced_field_nT(p, t, RADIUS_KM, resp, amps, periods)
    else:
        grads = np.array([sym_traceless(rng) for _ in periods])

        def func(p):
            return induced_field_degree2_nT(p, t, RADIUS_KM, resp, grads, periods)
    div, curl, ref = _fd_div_curl(func, pts, 0.05)
    assert_close(div / ref, 0.0, 1e-7, f"degree {degree} divergence / max |dB_i/dx_j|")
    assert_close(np.linalg.norm(curl, axis=1) / ref, 0.0, 1e-7, f"degree {degree} |curl| / max |dB_i/dx_j|")


def perfect_conductor():
    return InteriorModel(RADIUS_KM, [Layer("metal", math.inf)], name="perfect conductor")


def test_perfect_conductor_cancels_normal_field_at_surface():
    # Classical boundary condition: a perfectly conducting sphere excludes the time-varying field, so the total
    # normal component B_r vanishes on its surface (e.g. Jackson 1999, sect. 5.12 and problem 5.34 type; common
    # practice). R_1 = 1 here (induction.md: perfect conductor A = 1). Tolerance 1e-12 of the primary field.
    model = perfect_conductor()
    lines = ilmare().drive_lines
    rng = np.random.default_rng(8)
    pos = random_points(rng, 400, RADIUS_KM, RADIUS_KM)
    t = rng.uniform(0, 1e6, 400)
    total = primary_field(lines, pos, t) + induced_field(model, lines, pos, t)
    u = pos / RADIUS_KM
    br = np.sum(total * u, axis=1)
    assert_close(br, 0.0, 1e-12 * np.abs(drive_field_nT(lines, t)).max(), "B_r at a perfect conductor's surface")


def sym_traceless(rng):
    a = rng.normal(size=(3, 3)) + 1j * rng.normal(size=(3, 3))
    a = 0.5 * (a + a.T)
    return (a - np.trace(a) / 3 * np.eye(3)) * 0.05


def test_degree2_perfect_conductor_cancels_normal_field():
    # Same boundary condition for a gradient (degree-2) field: perfect conductor Q_2 = n/(n+1) = 2/3
    # (Parkinson 1983; induction.md), i.e. R_2 = 1. Tolerance 1e-12 of the external field.
    model = perfect_conductor()
    rng = np.random.default_rng(9)
    grads = [GradientLine(p, sym_traceless(rng)) for p in (5 * HOUR, 11 * HOUR)]
    pos = random_points(rng, 400, RADIUS_KM, RADIUS_KM)
    t = rng.uniform(0, 1e6, 400)
    lines = [DriveLine(7 * HOUR, [1.0, 0.0, 0.0])]
    total = primary_field(lines, pos, t, degree2=grads) + induced_field(model, lines, pos, t, degree2=grads)
    br = np.sum(total * pos / RADIUS_KM, axis=1)
    assert_close(br, 0.0, 1e-12 * np.abs(total).max(), "degree-2 B_r at a perfect conductor's surface")


def test_degree2_is_minus_gradient_of_internal_potential():
    # The internal potential of degree 2 is V_i = Q_2 (R/r)^5 V_e with V_e = -(1/2) s.G s (Parkinson 1983:
    # i_n = Q_n e_n for each harmonic of V = R sum [e_n (r/R)^n + i_n (R/r)^(n+1)] P_n); B = -grad V_i is
    # checked by central differences of the potential (h = 0.01 km). Tolerance 1e-7 of the largest field.
    rng = np.random.default_rng(10)
    g = sym_traceless(rng)
    r2 = 0.8 * np.exp(0.3j)
    q2 = 2.0 / 3.0 * r2
    pts = random_points(rng, 200, RADIUS_KM, 3 * RADIUS_KM)
    t = np.zeros(200)

    def potential(p):
        s = np.linalg.norm(p, axis=1)
        ve = -0.5 * np.einsum("ni,ij,nj->n", p, g, p)
        return q2 * (RADIUS_KM / s) ** 5 * ve

    h = 0.01
    grad = np.stack([(potential(pts + h * e) - potential(pts - h * e)) / (2 * h) for e in np.eye(3)], axis=1)
    want = np.real(-grad)
    got = induced_field_degree2_nT(pts, t, RADIUS_KM, np.array([r2]), g[None], np.array([10 * HOUR]))
    assert_close(got, want, 1e-7 * np.abs(want).max(), "degree-2 field vs -grad of the internal potential")
    # And the external part: B_e = G s = -grad V_e (same construction, exact for a quadratic potential).
    ext = external_degree2_field_nT(pts, t, g[None], np.array([10 * HOUR]))
    assert_close(ext, np.real(np.einsum("ij,nj->ni", g, pts)), 1e-12 * np.abs(ext).max(), "external G s")


# --------------------------------------------------------------------------- planet gradient lines
def dipole_gradient(moment, x):
    """Analytic gradient dB_i/dx_j of a centred point dipole (T/m), from differentiating Jackson eq. 5.56."""
    k = constants.mu_0 / (4 * math.pi)
    r = np.linalg.norm(x)
    md = moment @ x
    return k * (3 * np.outer(x, moment) + 3 * md * np.eye(3) + 3 * np.outer(moment, x)
                - 15 * md * np.outer(x, x) / r**2) / r**5


def test_planet_gradient_lines_match_analytic_dipole_gradient():
    # A centred tilted dipole and a circular equatorial orbit: the gradient at the moon, flow-frame axes, from
    # the analytic derivative of the dipole field (Jackson 1999, eq. 5.56) with positions and axes computed here
    # from the definitions (planet-fixed longitude = orbital angle - rotation angle; x_flow = phi_hat,
    # y_flow = -rho_hat, z_flow = z). Only the synodic line varies; compare the change between two times.
    # Tolerance 1e-6 of the gradient's variation (finite-difference step 1e-4 of the distance).
    a_km, b0, tilt, lon = 400000.0, 3.0e5, 12.0, 75.0
    table = {
        "planet": {"name": "Testplanet", "radius_km": 60000.0, "rotation_period_h": 10.0},
        "dipole": {"B0_nT": b0, "tilt_deg": tilt, "tilt_longitude_deg": lon},
        "moon": [{"name": "Testmoon", "semi_major_axis_km": a_km, "orbital_period_h": 60.0, "mean_anomaly_deg": 30.0}],
    }
    lines = planet_gradient_lines(parse_planet_table(table))
    assert [ln.label for ln in lines if np.max(np.abs(ln.gradient_nT_per_km)) > 1e-12 * 1e6] == ["synodic"]
    th, ph = math.radians(tilt), math.radians(lon)
    g = b0 * np.array([math.sin(th) * math.cos(ph), math.sin(th) * math.sin(ph), math.cos(th)]) * 1e-9
    moment = 4 * math.pi * (60000e3) ** 3 / constants.mu_0 * g

    def analytic(t):
        phi = math.radians(30.0) + 2 * math.pi * t / (60 * HOUR) - 2 * math.pi * t / (10 * HOUR)
        x = a_km * 1e3 * np.array([math.cos(phi), math.sin(phi), 0.0])
        axes = np.array([[-math.sin(phi), math.cos(phi), 0], [-math.cos(phi), -math.sin(phi), 0], [0, 0, 1.0]])
        return axes @ dipole_gradient(moment, x) @ axes.T * 1e9 * 1e3  # nT/km

    def from_lines(t):
        return sum(np.real(ln.gradient_nT_per_km * np.exp(2j * math.pi * t / ln.period_s)) for ln in lines)

    for t1, t2 in ((0.0, 3.7 * HOUR), (1000.0, 25.0 * HOUR), (5e5, 5e5 + 2.2 * HOUR)):
        want = analytic(t1) - analytic(t2)
        got = from_lines(t1) - from_lines(t2)
        assert_close(got, want, 1e-6 * np.abs(want).max(), f"gradient change between t = {t1} s and {t2} s")


def test_tarvos_gradient_predicts_field_across_moon():
    # The degree-2 driving field G s (flow frame) must equal the change of Tarvos's internal field between the
    # moon's centre and a point s away, minus the steady part, to second order in |s|/a (a = orbital radius):
    # here |s| = 1640 km, a = 617500 km, so the residual is <~ 3 |s|/a ~ 1 % of |G s| (Taylor expansion,
    # common practice). Also checks the flow-frame convention of the positions.
    from induct.io.drive_files import read_planet_file
    from induct.field.orbit import flow_frame_axes, planet_fixed_position
    from pathlib import Path

    # The internal field alone: inside the current sheet curl B = mu0 J != 0, so the sheet's gradient is not
    # the symmetric, potential-field gradient this degree-2 model assumes (and ilmare.toml's lines leave it out).
    system = read_planet_file(Path(__file__).resolve().parents[2] / "scenarios" / "tarvos.toml").without_current_sheet()
    _, orbit = system.orbit("Ilmare")
    grads = planet_gradient_lines(system)
    lines = ilmare().drive_lines
    rng = np.random.default_rng(12)
    s = random_points(rng, 20, 1640.0, 1640.0)
    t1, t2 = 216000.0, 216000.0 + 4.1 * HOUR
    diffs = []
    for t in (t1, t2):
        pos = planet_fixed_position(system.planet, orbit, [t])[0]
        axes = flow_frame_axes(pos[None])[0]
        b_moon = axes @ system.planet.field.field_cartesian(pos)
        b_off = (axes @ system.planet.field.field_cartesian(pos + (s * 1e3) @ axes).T).T
        diffs.append(b_off - b_moon)
    want = diffs[0] - diffs[1]
    model = [external_degree2_field_nT(s, np.full(20, t), np.array([g.gradient_nT_per_km for g in grads]),
                                       np.array([g.period_s for g in grads])) for t in (t1, t2)]
    got = model[0] - model[1]
    assert_close(got, want, 0.02 * np.abs(want).max(), "G s vs planet field difference across the moon")
    # The uniform lines of the scenario came from the same file and epoch: the primary field at the centre agrees.
    prim = primary_field(lines, np.zeros((2, 3)) + [RADIUS_KM * 2, 0, 0], np.array([t1, t2]))
    pos = planet_fixed_position(system.planet, orbit, [t1, t2])
    direct = np.einsum("nij,nj->ni", flow_frame_axes(pos), system.planet.field.field_cartesian(pos))
    assert_close(prim[0] - prim[1], direct[0] - direct[1], 1e-3 * np.abs(direct).max(), "lines vs planet field")


def test_gradient_line_checks():
    with pytest.raises(ValueError, match="symmetric"):
        GradientLine(HOUR, [[0, 1, 0], [0, 0, 0], [0, 0, 0]])
    with pytest.raises(ValueError, match="trace-free"):
        GradientLine(HOUR, np.eye(3))
    with pytest.raises(ValueError, match="period_s"):
        GradientLine(-1.0, np.zeros((3, 3)))
    with pytest.raises(ValueError, match="3 x 3"):
        GradientLine(HOUR, np.zeros((2, 2)))


# --------------------------------------------------------------------------- input checks
def test_checked_api_errors_name_the_row():
    sc = ilmare()
    lines = sc.drive_lines
    pos = np.array([[3000.0, 0, 0], [0, 1000.0, 0], [0, 0, 2000.0]])
    t = np.array([0.0, 1.0, 2.0])
    with pytest.raises(ValueError, match=r"positions_km\[1\].*inside the body"):
        induced_field(sc.model, lines, pos, t)
    bad = pos.copy()
    bad[1] = [0, 2000.0, np.nan]
    with pytest.raises(ValueError, match=r"positions_km\[1, 2\] \(z_km\) must be finite"):
        induced_field(sc.model, lines, bad, t)
    with pytest.raises(ValueError, match=r"times_s\[2\] must be finite"):
        induced_field(sc.model, lines, pos * 2, np.array([0.0, 1.0, np.inf]))
    with pytest.raises(ValueError, match=r"shape \(N, 3\)"):
        induced_field(sc.model, lines, pos[:, :2], t)
    with pytest.raises(ValueError, match=r"times_s must have shape"):
        induced_field(sc.model, lines, pos * 2, t[:2])
    with pytest.raises(ValueError, match="distinct"):
        induced_field(sc.model, [lines[0], lines[0]], pos * 2, t)
    with pytest.raises(ValueError, match="DriveLine"):
        induced_field(sc.model, [1.0], pos * 2, t)
    with pytest.raises(ValueError, match="at least one"):
        induced_field(sc.model, [], pos * 2, t)
    with pytest.raises(ValueError, match="InteriorModel"):
        induced_field("ilmare", lines, pos * 2, t)
    with pytest.raises(ValueError, match="GradientLine"):
        induced_field(sc.model, lines, pos * 2, t, degree2=[lines[0]])
    # With an ionosphere the formula holds only above the sheet.
    ion = InteriorModel(RADIUS_KM, sc.model.layers, Ionosphere(500.0, 100.0), "with ionosphere")
    with pytest.raises(ValueError, match=r"positions_km\[0\].*inside the ionosphere sheet.*1640"):
        induced_field(ion, lines, np.array([[1600.0, 0, 0], [1700.0, 0, 0]]), t[:2])
    assert induced_field(ion, lines, np.array([[1640.0, 0, 0], [1700.0, 0, 0]]), t[:2]).shape == (2, 3)
