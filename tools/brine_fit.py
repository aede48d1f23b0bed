"""Fit the few empirical constants of induct.brine to published tables; prints them.

Run from the project root:  python tools/brine_fit.py

1. FREEZING_PITZER: beta0 and C_phi of the Pitzer osmotic coefficient for KCl and
   MgSO4 (beta1, beta2, alpha fixed at Pitzer & Mayorga 1973/1974 values), fitted
   by linear least squares to the freezing-point depressions of the Smithsonian
   Physical Tables (Forsythe 1956) as reproduced in the CRC Handbook of Chemistry
   and Physics, "Freezing point lowering by electrolytes in aqueous solution".
2. CONCENTRATED_G: the coefficients (g, h) of the concentrated-solution factor
   G(m) = exp(-g m^2 / (1 + h m)) of induct/brine/solutions.py, fitted in log
   space to the CRC Handbook table "Electrical conductivity of aqueous
   solutions" (20 degC) plus two standards (see solutions.fit_concentrated_factor).
3. WALDEN_TEMPERATURE_EXPONENT: exponent s of the fractional Walden rule used for
   temperature extrapolation, minimising the worst relative error of the
   t = 2 -> -2 degC extrapolation against PSS-78 (SP 2-42, 0-100 MPa).

The printed numbers are pasted into induct/brine/freezing.py (_PITZER),
induct/brine/solutions.py (_CONC) and induct/brine/water.py; tests/test_brine_*.py
check the resulting models against the same references.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from induct.brine import freezing as fz  # noqa: E402

# Smithsonian Physical Tables (Forsythe 1956) via CRC Handbook: molality -> depression (K)
FREEZING_TABLE = {
    "KCl": ([0.05, 0.10, 0.25, 0.50, 0.75, 1.00, 1.50, 2.00, 2.50, 3.00],
            [0.17, 0.35, 0.86, 1.68, 2.49, 3.29, 4.88, 6.50, 8.14, 9.77]),
    "MgSO4": ([0.05, 0.10, 0.25, 0.50, 0.75, 1.00, 1.50],
              [0.13, 0.24, 0.55, 1.01, 1.50, 2.08, 3.41]),
}


def fit_freezing():
    out = {}
    for solute, (m, dt) in FREEZING_TABLE.items():
        m = np.array(m)
        T = fz.T0_K - np.array(dt)
        c = fz._PITZER[solute]
        phi_obs = -fz.ln_water_activity_ice(T) / (c["nu"] * m * fz.M_WATER)
        ionic = 4.0 * m if c["zz"] == 4 else m
        si = np.sqrt(ionic)
        f = -c["zz"] * fz.debye_huckel_aphi(T) * si / (1.0 + 1.2 * si)
        rest = phi_obs - 1.0 - f - m * (c["b1"] * np.exp(-c["a1"] * si)
                                        + c["b2"] * np.exp(-c["a2"] * si))
        # rows weighted by m, so that residuals are ~ proportional to errors in K
        w = m
        A = np.column_stack([m, m * m]) * w[:, None]
        coef, *_ = np.linalg.lstsq(A, rest * w, rcond=None)
        out[solute] = (round(float(coef[0]), 6), round(float(coef[1]), 6))
    return out


def fit_walden_exponent():
    from scipy.optimize import minimize_scalar

    from induct.brine import seawater
    from induct.brine import water

    sp = np.linspace(2.0, 42.0, 21)[:, None]
    p_pa = np.linspace(0.0, 100.0, 11)[None, :] * 1e6 + water.P_ATM_PA
    w = water.walden_factor(fz.T0_K - 2.0, p_pa) / water.walden_factor(fz.T0_K + 2.0, p_pa)
    ref = (seawater.conductivity_pss78(sp, -2.0, (p_pa - water.P_ATM_PA) * 1e-6)
           / seawater.conductivity_pss78(sp, 2.0, (p_pa - water.P_ATM_PA) * 1e-6))
    res = minimize_scalar(lambda s: np.max(np.abs(w ** s / ref - 1.0)), bounds=(0.5, 1.2), method="bounded")
    return round(float(res.x), 2), float(res.fun)


if __name__ == "__main__":
    from induct.brine import solutions

    print("FREEZING_PITZER (beta0, C_phi):", fit_freezing())
    print("CONCENTRATED_G (g, h):", solutions.fit_concentrated_factor())
    print("WALDEN_TEMPERATURE_EXPONENT (s, worst error):", fit_walden_exponent())
