"""Small version of tools/verify_plan.py: planned widths against what fit + invert recover over noise draws.

Source of the check: Cramer-Rao (Cramer 1946, Mathematical Methods of Statistics; common practice): at high
signal-to-noise the maximum-likelihood estimate scatters with the inverse Fisher information, which is what
the plan's linearised covariance (F + P^-1)^-1 ~ F^-1 predicts. Tolerance: spread / predicted within 0.7-1.3
(the issue's criterion; the standard deviation of a sample standard deviation of n draws is about
1 / sqrt(2 n), 13 % for 30 draws). At low signal-to-noise the posterior is bounded by the prior and curved,
and the linearised width does not describe the spread (shown, not hidden: the ratio leaves 0.7-1.3).
"""

import importlib.util
import sys
from pathlib import Path

import numpy as np
import pytest

from induct.inversion.priors import parse_parameters
from induct.io.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def verify():
    spec = importlib.util.spec_from_file_location("verify_plan", ROOT / "tools" / "verify_plan.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules["verify_plan"] = module
    spec.loader.exec_module(module)
    sc = load_scenario("ilmare")
    return module, sc, parse_parameters(sc.raw["invert"], sc.model)


def test_verify_planned_widths_match_fit_and_invert_spread(verify):
    vp, sc, params = verify
    case = vp.CASES[0]  # 4 low passes chosen from 32, 0.05 nT: far above the noise
    assert case.gaussian
    r = vp.run_case(case, sc, params, draws=30, grid_points=16, seed=vp.SEED)
    full = r["full"]
    assert np.all(r["predicted"] < 0.05 * r["prior_sd"]), "not the high signal-to-noise case this test is for"
    ratio = dict(zip([p.name for p in params], np.round(full["ratio"], 3)))
    assert np.all((full["ratio"] >= 0.7) & (full["ratio"] <= 1.3)), f"spread / predicted = {ratio}"
    # The estimates are unbiased within their own scatter (3 standard errors of the mean of 30 draws).
    assert np.all(np.abs(full["bias"]) < 3 * full["ratio"] / np.sqrt(30)), f"bias / predicted = {full['bias']}"


def test_verify_low_snr_is_not_gaussian(verify):
    vp, sc, params = verify
    case = vp.CASES[-1]  # 2 passes at 400 km, 1.5 nT
    assert not case.gaussian
    r = vp.run_case(case, sc, params, draws=15, grid_points=8, seed=vp.SEED)
    assert np.max(r["full"]["ratio"]) > 1.5, f"spread / predicted = {r['full']['ratio']}"
