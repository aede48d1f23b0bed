"""Amplitude-phase diagrams (induct.planning.diagrams), separation curves (induct.planning.separation), their figures and files, plotting helpers."""

import math
import warnings

import numpy as np
import pytest

from planning_reference import direct_response
from induct import InteriorModel, Layer
from induct.cli.commands.separate import separation_columns
from induct.constants import MODEL_LIMITS
from induct.io.measurements import parse_measurements
from induct.io.tables import write_diagram_csv
from induct.planning.diagrams import amplitude_phase_diagram, default_families, measurement_ellipses
from induct.planning.separation import max_detectable_altitude_km, separation, separation_summary
from induct.plot.diagrams import plot_diagram
from induct.plot.separation import plot_separation
from induct.plot.style import covariance_ellipse, figure




@pytest.fixture(scope="module")
def diagram(ilmare):
    return amplitude_phase_diagram(
        ilmare, "ice shell.thickness_km=5:60:4", "ocean.conductivity_S_per_m=0.2:20:3:log", [12.12, 84.7], samples=25
    )


def test_default_families(ilmare):
    first, second = default_families(ilmare)
    assert (first.parameter, first.lo, first.hi, first.n, first.log) == ("ice shell.thickness_km", 5.0, 60.0, 6, False)
    assert (second.parameter, second.lo, second.hi, second.n, second.log) == ("ocean.conductivity_S_per_m", 0.28, 28.0, 5, True)
    with pytest.raises(ValueError, match="families"):
        default_families(InteriorModel(100.0, [Layer("ice", 0.0, 10.0), Layer("core", 1.0)]))


def test_diagram_curves_equal_direct_transfer_calls(ilmare, diagram):
    # Independent path: each sampled curve point rebuilt with with_layer and evaluated by induct.transfer;
    # tolerance 1e-12 relative.
    d = diagram
    s_dense = np.logspace(math.log10(0.2), math.log10(20.0), 25)
    f_dense = np.linspace(5.0, 60.0, 25)
    worst = (0.0, None)
    for p, period in enumerate(d.periods_h):
        for c, k in [(0, 0), (1, 7), (3, 24), (2, 13)]:
            ch = {"ice shell.thickness_km": d.first_values[c], "ocean.conductivity_S_per_m": s_dense[k]}
            ref = direct_response(ilmare, ch, period)
            err = abs(d.first_curves[p, c, k] - ref) / abs(ref)
            worst = max(worst, (err, (period, ch, d.first_curves[p, c, k], ref)), key=lambda t: t[0])
        for c, k in [(0, 0), (2, 24), (1, 11)]:
            ch = {"ocean.conductivity_S_per_m": d.second_values[c], "ice shell.thickness_km": f_dense[k]}
            ref = direct_response(ilmare, ch, period)
            err = abs(d.second_curves[p, c, k] - ref) / abs(ref)
            worst = max(worst, (err, (period, ch, d.second_curves[p, c, k], ref)), key=lambda t: t[0])
    assert worst[0] <= 1e-12, f"worst relative error {worst[0]:.2e} at {worst[1]}"
    assert d.first_curves.shape == (2, 4, 25) and d.second_curves.shape == (2, 3, 25)
    np.testing.assert_allclose(d.model_response, ilmare.response(periods_h=[12.12, 84.7]).response, rtol=1e-15)


def test_diagram_respects_the_perfect_conductor_bound(diagram):
    # 0 <= A <= (r_top/R)^3 with r_top the top of the outermost conductor (here the ocean under the ice shell),
    # and 0 <= phase lag <= 90 deg (perfect-conductor limit; Zimmer, Khurana & Kivelson 2000, Icarus 147).
    for c, h in enumerate(diagram.first_values):
        bound = ((1540.0 - h) / 1540.0) ** 3
        a = np.abs(diagram.first_curves[:, c])
        assert np.all(a <= bound * (1 + 1e-12)), f"ice {h} km: max A {a.max()!r} above bound {bound!r}"
    phase = np.degrees(np.angle(np.concatenate([diagram.first_curves.ravel(), diagram.second_curves.ravel()])))
    assert phase.min() >= 0.0 and phase.max() <= 90.0


def test_measurement_ellipses_in_the_phase_amplitude_plane():
    doc = {
        "response": [
            {"period_h": 10.0, "amplitude": 0.9, "amplitude_sigma": 0.02, "phase_lag_deg": 5.0, "phase_lag_sigma_deg": 1.5,
             "amplitude_phase_correlation": 0.4},
            {"period_h": 10.0, "real": 0.85, "imag": 0.12, "cov": [[4e-4, 1e-4], [1e-4, 3e-4]]},
            {"period_h": 20.0, "amplitude": 0.8, "amplitude_sigma": 0.02, "phase_lag_deg": 9.0, "phase_lag_sigma_deg": 1.0},
        ]
    }
    data = parse_measurements(doc, source="test")
    out = measurement_ellipses(data, 10.0)
    assert len(out) == 2
    (c0, cov0), (c1, cov1) = out
    np.testing.assert_array_equal(c0, [5.0, 0.9])
    np.testing.assert_allclose(cov0, [[1.5**2, 0.4 * 0.02 * 1.5], [0.4 * 0.02 * 1.5, 0.02**2]], rtol=1e-15)
    # Cartesian entry: linearised propagation checked against a Monte Carlo propagation of the Gaussian
    # (fixed seed, 400k samples; tolerance 3 % relative on each covariance entry, common practice).
    rng = np.random.default_rng(7)
    samples = rng.multivariate_normal([0.85, 0.12], [[4e-4, 1e-4], [1e-4, 3e-4]], 400_000)
    mc = np.cov(np.stack([np.degrees(np.arctan2(samples[:, 1], samples[:, 0])), np.hypot(samples[:, 0], samples[:, 1])]))
    assert c1 == pytest.approx([math.degrees(math.atan2(0.12, 0.85)), math.hypot(0.85, 0.12)], rel=1e-15)
    rel = np.abs(cov1 - mc) / np.sqrt(np.outer(np.diag(mc), np.diag(mc)))
    assert rel.max() <= 0.03, f"linearised {cov1.tolist()} vs Monte Carlo {mc.tolist()}"


def test_covariance_ellipse_boundary_is_at_n_sigma():
    # Points on the drawn ellipse satisfy d^T C^-1 d = n^2 (definition of the n-sigma ellipse); tolerance 1e-9.
    # The patch is a unit circle of 8 cubic Bezier arcs: every third vertex lies on the curve (the others
    # are control points), which pins size, axes and orientation.
    fig, ax = figure()
    cov = np.array([[2.0, 0.9], [0.9, 0.8]])
    for nsig in (1.0, 2.0):
        patch = covariance_ellipse(ax, (3.0, -1.0), cov, nsig)
        verts = patch.get_path().vertices[:-1:3]
        assert len(verts) >= 8
        pts = patch.get_patch_transform().transform(verts)
        d = pts - np.array([3.0, -1.0])
        m = np.einsum("ij,jk,ik->i", d, np.linalg.inv(cov), d)
        assert np.max(np.abs(m - nsig**2)) <= 1e-9 * nsig**2, f"n = {nsig}: Mahalanobis^2 from {m.min()} to {m.max()}"


def test_diagram_figure_and_csv(diagram, tmp_path):
    doc = {"response": [{"period_h": 12.12, "amplitude": 0.9, "amplitude_sigma": 0.02, "phase_lag_deg": 4.0, "phase_lag_sigma_deg": 1.5},
                        {"period_h": 33.0, "amplitude": 0.9, "amplitude_sigma": 0.02, "phase_lag_deg": 4.0, "phase_lag_sigma_deg": 1.5}]}
    data = parse_measurements(doc, source="test")
    with pytest.warns(UserWarning, match="1 measurement"):
        paths = plot_diagram(diagram, tmp_path / "d", measurements=data)
    for p in paths:
        assert p.stat().st_size > 10_000, f"{p} is only {p.stat().st_size} bytes"
    fig = plot_diagram(diagram)
    assert MODEL_LIMITS in [t.get_text() for t in fig.texts]
    write_diagram_csv(diagram, tmp_path / "d.csv")
    lines = (tmp_path / "d.csv").read_text().splitlines()
    assert lines[0] == "period_h,family,ice shell.thickness_km,ocean.conductivity_S_per_m,amplitude,phase_lag_deg"
    assert len(lines) == 1 + 2 * (4 + 3) * 25


def test_diagram_argument_errors(ilmare):
    with pytest.raises(ValueError, match="periods_h"):
        amplitude_phase_diagram(ilmare, None, None, [])
    with pytest.raises(ValueError, match="different parameters"):
        amplitude_phase_diagram(ilmare, "ocean.thickness_km=10:20:3", "ocean.thickness_km=10:30:3", [10.0])
    with pytest.raises(ValueError, match="samples"):
        amplitude_phase_diagram(ilmare, None, None, [10.0], samples=1)


# ------------------------------------------------------------------------------------------ separation
@pytest.fixture(scope="module")
def candidates(ilmare):
    thick = ilmare.with_layer("ice shell", thickness_km=40.0).with_layer("ocean", conductivity_S_per_m=1.0)
    fresh = ilmare.with_layer("ocean", conductivity_S_per_m=0.3)
    return [ilmare, thick, fresh]


def test_separation_against_direct_responses(candidates):
    # difference = |R_a - R_b| (R/(R+h))^3 B_e from independent response() calls; tolerance 1e-13 relative.
    periods = np.array([0.7, 6.06, 12.12, 84.7, 640.0])
    res = separation(candidates, ["a", "b", "c"], drive_nT=200.0, periods_h=periods, altitude_km=100.0,
                     marked_periods_h=[12.12], altitudes_km=[0.0, 100.0, 400.0], noise_nT=0.5)
    r = [m.response(periods_h=periods).response for m in candidates]
    scale = 200.0 * (1540.0 / 1640.0) ** 3
    assert res.pairs == [(0, 1), (0, 2), (1, 2)]
    for i, (a, b) in enumerate(res.pairs):
        np.testing.assert_allclose(res.difference_nT[i], np.abs(r[a] - r[b]) * scale, rtol=1e-13)
        # the altitude curve at 100 km equals the period curve at 12.12 h
        assert res.difference_vs_altitude_nT[i, 0, 1] == pytest.approx(res.difference_nT[i, 2], rel=1e-13)
    np.testing.assert_allclose(res.induced_nT, np.abs(np.array(r)) * scale, rtol=1e-13)
    # closed-form altitude limit: at h_max the difference equals k x noise (rel 1e-12)
    hmax = max_detectable_altitude_km(res.surface_difference_nT[:, 0], 1.5, 1540.0)
    back = res.surface_difference_nT[:, 0] * (1540.0 / (1540.0 + hmax)) ** 3
    np.testing.assert_allclose(back, 1.5, rtol=1e-12)
    assert np.isnan(max_detectable_altitude_km([1.0], 1.5, 1540.0)[0])
    summary = separation_summary(res)
    assert summary.pair == ["a vs b", "a vs c", "b vs c"]
    np.testing.assert_allclose(summary.max_altitude_km, hmax, rtol=1e-15)
    np.testing.assert_allclose(summary.difference_nT, res.difference_nT[:, 2], rtol=1e-13)
    best = np.argmax(res.difference_nT, axis=1)
    assert np.array_equal(summary.best_period_h, periods[best])
    cols = separation_columns(res)
    assert [c.header for c in cols][-1].startswith("max altitude above 1.5 nT")
    assert len(cols[0].values) == 3


def test_separation_errors_and_figure(candidates, tmp_path):
    with pytest.raises(ValueError, match="at least two"):
        separation(candidates[:1], drive_nT=1.0)
    with pytest.raises(ValueError, match="unique"):
        separation(candidates[:2], ["x", "x"], drive_nT=1.0)
    small = InteriorModel(1000.0, [Layer("ice shell", 1e-6, 20.0), Layer("ocean", 3.0, 80.0), Layer("core", 1e5)])
    with pytest.raises(ValueError, match="same body"):
        separation([candidates[0], small], drive_nT=1.0)
    with pytest.raises(ValueError, match="drive_nT"):
        separation(candidates, drive_nT=0.0)
    res = separation(candidates, drive_nT=200.0, periods_h=np.logspace(0, 3, 30), altitudes_km=np.linspace(0, 1000, 11), noise_nT=0.5)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        paths = plot_separation(res, tmp_path / "s")
    for p in paths:
        assert p.stat().st_size > 10_000, f"{p} is only {p.stat().st_size} bytes"
