"""Flyby prediction (induct.flyby.prediction) as a library call: fields, comparison, SNRs, synthetic residuals."""

import math

import numpy as np
import pytest
from scipy import stats

from induct import load_scenario
from induct.field.drive import drive_field_nT
from induct.flyby.induced import induced_field
from induct.flyby.prediction import FLYBY_LIMITS, predict_flyby, synthetic_residuals
from induct.io.tracks import read_track


@pytest.fixture(scope="module")
def prediction():
    return predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"), compare=load_scenario("ilmare_thick"),
                         noise_nT=0.5)


def test_fields_and_comparison_match_direct_calls(prediction):
    sc, other = load_scenario("ilmare"), load_scenario("ilmare_thick")
    track = prediction.track
    pos, t = track.positions_km, track.times_s
    ind = induced_field(sc.model, sc.drive_lines, pos, t)
    # Same function, same inputs: equal to rounding (1e-12 of the largest value).
    assert np.abs(prediction.induced_nT - ind).max() <= 1e-12 * np.abs(ind).max()
    # Primary = Re sum_k B_k exp(i w_k t) (induct.field.drive definition), uniform at the moon.
    pri = drive_field_nT(sc.drive_lines, t)
    assert np.abs(prediction.primary_nT - pri).max() <= 1e-12 * np.abs(pri).max()
    diff = ind - induced_field(other.model, sc.drive_lines, pos, t)
    dmag = np.linalg.norm(diff, axis=1)
    c = prediction.comparison
    # SNR definitions of the module docstring: peak |dB| / sigma and sqrt(sum dB^2) / sigma (common practice).
    assert math.isclose(c.peak_difference_nT, dmag.max(), rel_tol=1e-12)
    assert math.isclose(c.peak_snr, dmag.max() / 0.5, rel_tol=1e-12)
    assert math.isclose(c.track_snr, math.sqrt(np.sum(diff**2)) / 0.5, rel_tol=1e-12)
    assert math.isclose(c.rms_difference_nT, math.sqrt(np.mean(dmag**2)), rel_tol=1e-12)
    # The bundled pass is built with its closest approach at 100 km (tools/make_flyby_track.py), file precision 1e-4 km.
    assert abs(prediction.closest_approach[1] - 100.0) < 1e-3
    summary = prediction.to_dict(output="f.csv")
    assert summary["output"] == "f.csv" and summary["limits"] == FLYBY_LIMITS
    assert summary["compare"]["snr_definitions"].startswith("peak_snr = max |dB| / noise")


def test_synthetic_residuals_are_induced_field_plus_white_noise(prediction):
    r = synthetic_residuals(prediction, 0.5, seed=3)
    noise = (r - prediction.induced_nT).ravel()  # flow-frame track: no rotation
    # 10803 independent N(0, 0.5^2) values: Kolmogorov-Smirnov test at the 0.1 % level (scipy.stats.kstest).
    p = stats.kstest(noise / 0.5, "norm").pvalue
    assert p > 1e-3, f"noise does not look like N(0, 0.5^2): KS p = {p:.3g}"
    assert np.array_equal(r, synthetic_residuals(prediction, 0.5, seed=3))  # reproducible for a seed


def test_bad_inputs():
    sc, track = load_scenario("ilmare"), read_track("ilmare_flyby")
    with pytest.raises(ValueError, match="noise_nT must be > 0"):
        predict_flyby(sc, track, noise_nT=0.0)
    with pytest.raises(ValueError, match="moon needs planet"):
        predict_flyby(sc, track, moon="Ilmare")
    with pytest.raises(ValueError, match="no \\[\\[drive.lines\\]\\]"):
        predict_flyby(load_scenario("brenna"), track)
    p = predict_flyby(sc, track)
    assert p.comparison is None and p.to_dict()["degree2"] == "not included"
    with pytest.raises(ValueError, match="noise_nT"):
        synthetic_residuals(p, None)
