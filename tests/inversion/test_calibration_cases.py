"""Simulation-based calibration of the narrow-ridge and salinity cases (small size; full size in
tools/calibrate_inversion.py). The bundled moon is calibrated in test_inversion_calibration.py.

Cook, Gelman & Rubin (2006), J. Comput. Graph. Stat. 15, 675; Talts et al. (2018), arXiv:1804.06788:
with truths drawn from the prior and data from the likelihood, central x % ranges contain the truth
x % of the time and the truth's posterior rank (its marginal CDF value) is uniform.
Tolerances: 95 +/- 3 % and 68 +/- 4 % (the issue's), which at 400 trials are about 2.7 and 1.7
binomial standard errors; rank histograms (10 bins) uniform at the 0.1 % level (chi-square test).
Fixed seeds.
"""

import numpy as np

from induct.inversion.calibration import calibrate_grid
from induct.inversion.priors import parse_parameters
from induct.io.scenario import load_scenario
from induct.model.interior import InteriorModel, Layer

TRIALS = 400


def check(res):
    report = "; ".join(res.lines())
    assert np.all(np.abs(res.coverage_95 - 0.95) <= 0.03), report
    assert np.all(np.abs(res.coverage_68 - 0.68) <= 0.04), report
    assert np.all(res.rank_p_value > 1e-3), report


def test_narrow_ridge_is_calibrated():
    # Thin ocean at 500 h: only the conductance sigma*h is constrained (thin-shell regime).
    thin = InteriorModel(1540.0, [Layer("ice", 1e-6, 20.0), Layer("ocean", 3.0, 2.0),
                                  Layer("mantle", 1e-4, 900.0), Layer("core", 1e-4)])
    table = {"ocean.thickness_km": {"range": [0.5, 5.0], "scale": "log"},
             "ocean.conductivity_S_per_m": {"range": [0.3, 30.0], "scale": "log"}}
    check(calibrate_grid(thin, parse_parameters(table, thin), [500.0], 0.002, 80, TRIALS, seed=11, bins=10))


def test_salinity_inversion_of_a_chemistry_ocean_is_calibrated():
    br = load_scenario("ilmare_brine")
    table = {"ocean.salinity_g_per_kg": {"range": [30.0, 70.0]}, "ice shell.thickness_km": {"range": [10.0, 30.0]}}
    check(calibrate_grid(br.model, parse_parameters(table, br.model), [12.12, 6.06, 84.7], 0.02, 20, TRIALS,
                         seed=12, bins=10))
