"""What the phase phi = arg R_n means in the time domain, and the insulator's zero response (issue 12).

Convention (domain sheet /work/shared/domain/induction.md): exp(+i w t), R_1 = A exp(i phi), induced field outside
the body B_ind = -(R_1/2) (R/r)^3 [3 (B_e . rhat) rhat - B_e] (Zimmer, Khurana & Kivelson 2000, Icarus 147). Along
the driving field (rhat parallel to B_e) this is -R_1 (R/r)^3 B_e: a perfect conductor (R_1 = 1) gives exactly the
opposite of the primary field, and with B_e(t) = B0 cos(w t) the induced field is -A (R/r)^3 B0 cos(w t + phi),
whose maximum comes phi / w *earlier* than the perfect conductor's. A weak conductor follows -dB/dt (Faraday's
law; first-order Born approximation R_1 ~ i w mu0 sigma R^2 / 15 for a uniform sphere, Parkinson 1983,
Introduction to Geomagnetism). The tests synthesise the time series with the flyby code
(induct.flyby.induced.induced_field / primary_field) and read the peak times off the samples.
"""

from __future__ import annotations

import json

import numpy as np

from induct import InteriorModel, Layer, amplitude, phase_lag_deg, transfer
from induct.cli.main import main
from induct.constants import MU0
from induct.field.drive import DriveLine
from induct.flyby.induced import induced_field, primary_field

RADIUS_KM = 1540.0
ALTITUDE_KM = 100.0
PERIOD_S = 12.12 * 3600.0
SAMPLES = 36000  # one period: 0.01 deg of phase per sample


def _series(model, b0_nT=100.0):
    """Times (s), primary z and induced z (nT) at the point along the driving field (+z), one period."""
    line = DriveLine(PERIOD_S, [0.0, 0.0, b0_nT])
    t = np.arange(SAMPLES) * (PERIOD_S / SAMPLES)
    pos = np.tile([0.0, 0.0, RADIUS_KM + ALTITUDE_KM], (SAMPLES, 1))
    return t, primary_field([line], pos, t)[:, 2], induced_field(model, [line], pos, t)[:, 2]


def _peak_phase_deg(t, b):
    """Phase (deg, 0-360) of the time of the maximum of one sampled period, parabola-refined (common practice)."""
    i = int(np.argmax(b))
    y0, y1, y2 = b[i - 1], b[i], b[(i + 1) % b.size]
    shift = 0.5 * (y0 - y2) / (y0 - 2 * y1 + y2)
    return ((t[i] + shift * (t[1] - t[0])) / PERIOD_S * 360.0) % 360.0


def _ilmare_like(ocean_S_per_m):
    return InteriorModel(RADIUS_KM, [Layer("ice shell", 1e-6, 20.0), Layer("ocean", ocean_S_per_m, 95.0),
                                     Layer("mantle", 0.01, 825.0), Layer("core", 1e5)])


def test_induced_field_leads_the_perfect_conductor_response_by_phi():
    # Tolerance 0.05 deg: five samples (0.01 deg each) of the peak-time estimate.
    perfect = InteriorModel(RADIUS_KM, [Layer("core", np.inf)])
    t, primary, ideal = _series(perfect)
    ideal_peak = _peak_phase_deg(t, ideal)
    # The perfect conductor's induced field is opposite to the primary: its maximum is half a period after the
    # primary's (which peaks at t = 0).
    assert abs(ideal_peak - 180.0) < 0.05, ideal_peak
    assert abs(_peak_phase_deg(t, primary)) < 0.05 or abs(_peak_phase_deg(t, primary) - 360) < 0.05
    worst = (0.0, None)
    for sigma in (0.03, 0.3, 3.0, 30.0):
        model = _ilmare_like(sigma)
        phi = float(model.response(periods_s=[PERIOD_S]).phase_lag_deg[0])
        t, _, b = _series(model)
        lead = (ideal_peak - _peak_phase_deg(t, b)) % 360.0   # how much earlier the induced field peaks
        lag_behind_primary = _peak_phase_deg(t, b)            # primary peaks at phase 0
        err = max(abs(lead - phi), abs(lag_behind_primary - (180.0 - phi)))
        worst = max(worst, (err, (sigma, phi, lead, lag_behind_primary)), key=lambda w: w[0])
    assert worst[0] < 0.05, f"worst case (sigma S/m, phi API, lead of peak, lag behind primary): {worst}"


def test_weak_conductor_follows_minus_dB_dt():
    # Uniform sphere with R/delta = 0.05: Born (Parkinson 1983; domain sheet) gives R_1 = i w mu0 sigma R^2/15 to
    # relative O((R/delta)^2) ~ 3e-3, so along the driving field B_ind = -(R/r)^3 (mu0 sigma R^2 / 15) dB/dt.
    # Tolerance: 1 % of the peak induced field (measured 0.05 %); phi within 0.5 deg of 90 (measured 0.03).
    radius_m = RADIUS_KM * 1e3
    omega = 2 * np.pi / PERIOD_S
    sigma = 2.0 * (0.05 / radius_m) ** 2 / (omega * MU0)          # delta = R / 0.05
    model = InteriorModel(RADIUS_KM, [Layer("body", sigma)])
    t, primary, b = _series(model)
    dbdt = np.gradient(primary, t, edge_order=2)
    # Check the derivative itself against the closed form -B0 w sin(w t) (a sampled-data sanity check).
    np.testing.assert_allclose(dbdt, -100.0 * omega * np.sin(omega * t), atol=1e-6 * 100.0 * omega)
    geometry = (RADIUS_KM / (RADIUS_KM + ALTITUDE_KM)) ** 3
    born = -geometry * MU0 * sigma * radius_m**2 / 15.0 * dbdt
    err = np.abs(b - born)
    i = int(np.argmax(err))
    assert err[i] < 0.01 * np.abs(b).max(), (t[i], b[i], born[i], np.abs(b).max())
    phi = float(model.response(periods_s=[PERIOD_S]).phase_lag_deg[0])
    assert 89.5 < phi <= 90.0, phi
    # ... and its maximum comes about a quarter period before the perfect conductor's (which is at 180 deg).
    assert abs(_peak_phase_deg(t, b) - (180.0 - phi)) < 0.05, (_peak_phase_deg(t, b), phi)


def test_insulator_response_is_exactly_zero_with_zero_phase():
    # An insulating body induces nothing: R = 0, A = 0 (domain sheet, "Bounds"); its phase is defined as 0, and
    # neither part may be a negative zero (which prints as -0 and gives arg = -180 deg).
    r = transfer([[3e5, 8e5], [5e5, 8e5]], [[0.0, 0.0], [0.0, 0.0]], [3600.0, 3.6e6])
    assert np.all(r == 0)
    assert not np.any(np.signbit(r.real)) and not np.any(np.signbit(r.imag)), r
    assert np.all(amplitude(r) == 0) and np.all(phase_lag_deg(r) == 0.0)
    # A negative zero from elsewhere (e.g. -1 * 0j) also gives 0 deg.
    assert float(phase_lag_deg(complex(-0.0, -0.0))) == 0.0
    res = InteriorModel(800.0, [Layer("ice", 0.0, 100.0), Layer("rock", 0.0)]).response(periods_h=[1.0, 10.0])
    assert res.phase_lag_deg.tolist() == [0.0, 0.0] and not np.any(np.signbit(res.response.real))


def test_insulator_in_json_and_table(tmp_path, capsys):
    scn = tmp_path / "dry.toml"
    scn.write_text('[body]\nname = "Brenna"\nradius_km = 800.0\n\n[[layers]]\nname = "ice"\nthickness_km = 100.0\n'
                   'conductivity_S_per_m = 0.0\n\n[[layers]]\nname = "rock"\nconductivity_S_per_m = 0.0\n\n'
                   '[drive]\nperiods_h = [10.0, 100.0]\n')
    assert main(["respond", str(scn), "--json"]) == 0
    payload = json.loads(capsys.readouterr().out)
    text = json.dumps(payload)
    assert "-0.0" not in text and "-180" not in text
    assert payload["phase_lag_deg"] == [0.0, 0.0] and payload["real"] == [0.0, 0.0] and payload["imag"] == [0.0, 0.0]
    assert main(["respond", str(scn)]) == 0
    table = capsys.readouterr().out
    assert "-0.0" not in table and "-180" not in table
    assert "leads the perfect-conductor response by phi" in table
