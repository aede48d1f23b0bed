"""Simulation-based calibration of the sampler path at a larger size than the test suite runs.

Draws truths from the prior of the bundled moon Ilmare (free parameters below), simulates data with the noise of
the bundled measurement file (ilmare_measured: 3 periods, amplitude sigma 0.01, phase sigma 1 deg), inverts each
data set with the nested (or ensemble) sampler, and prints the coverage of the 68 % and 95 % intervals with their
binomial errors and the chi-square p-value of the uniformity of the posterior CDF at the truth (Talts et al. 2018,
arXiv:1804.06788; Cook, Gelman & Rubin 2006, JCGS 15, 675).

    PYTHONPATH=. python tools/sampler_calibration.py --trials 150 --nlive 60
    PYTHONPATH=. python tools/sampler_calibration.py --sampler ensemble --trials 60
"""

from __future__ import annotations

import argparse
import json
import time

from induct.inversion.priors import ParameterMap, parse_parameters
from induct.inversion.sampler_calibration import run_sbc
from induct.io.measurements import load_measurements
from induct.io.scenario import load_scenario

CASES = {
    "moon2": {"ice shell.thickness_km": {"range": [1, 60]},
              "ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}},
    "moon3": {"ice shell.thickness_km": {"range": [1, 60]}, "ocean.thickness_km": {"range": [5, 250]},
              "ocean.conductivity_S_per_m": {"range": [0.05, 30], "scale": "log"}},
}


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--case", choices=sorted(CASES), default="moon2")
    ap.add_argument("--sampler", choices=("nested", "ensemble"), default="nested")
    ap.add_argument("--trials", type=int, default=150)
    ap.add_argument("--nlive", type=int, default=60)
    ap.add_argument("--seed", type=int, default=2026)
    args = ap.parse_args()
    s, d = load_scenario("ilmare"), load_measurements("ilmare_measured")
    pm = ParameterMap(s.model, parse_parameters(CASES[args.case], s.model))
    kw = {"nlive": args.nlive} if args.sampler == "nested" else {"steps": 500, "walkers": 16}
    t0 = time.monotonic()
    r = run_sbc(pm, d, sampler=args.sampler, n_trials=args.trials, seed=args.seed, **kw)
    out = {
        "case": args.case, "sampler": args.sampler, "settings": kw, "trials_converged": r.n_trials,
        "trials_unconverged": r.n_unconverged,
        "coverage_68": r.coverage["68"], "coverage_68_err": r.coverage_err["68"],
        "coverage_95": r.coverage["95"], "coverage_95_err": r.coverage_err["95"],
        "uniformity_p": r.uniformity_p, "seconds": round(time.monotonic() - t0, 1),
        "note": "coverage pooled over parameters; its binomial error treats them as independent",
    }
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
