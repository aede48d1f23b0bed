"""Validity limits: solubility (saturation) curves and the temperature/pressure boxes of each model.

Solubility curves are piecewise linear in temperature through tabulated
points, mass fraction of anhydrous salt in the saturated solution:

* NaCl: Salt Institute table (halite above 0.1 degC, hydrohalite below, ending
  at the ice eutectic, 23.2 % at -21.2 degC per Bodnar 1993), consistent with the CRC Handbook
  "Aqueous solubility of inorganic compounds at various temperatures".
* KCl, MgSO4 (0-60 degC): CRC Handbook, same table (from memory). Below 0 degC
  the line runs straight to the ice-salt eutectic of :mod:`induct.brine.freezing`
  (KCl 19.87 %, MgSO4 17.3 %), placed at that module's freezing temperature
  so that the liquid domain is closed.
"""

from __future__ import annotations

import numpy as np

from induct.brine import freezing

#: Hard temperature limits (degC) of the conductivity models (freezing point still applies).
T_MAX_SOLUTIONS_C = 60.0
T_MIN_WALDEN_C = -40.0
#: Hard pressure limit (MPa, sea pressure) of all models (IAPWS water formulations).
P_MAX_MPA = 1000.0

_SOLUBILITY_T_C = {
    "NaCl": [None, -17.78, -12.22, -6.67, -1.1, 0.0, 0.1, 10.0, 21.11, 37.78, 51.67, 65.56],
    "KCl": [None, 0.0, 10.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0],
    "MgSO4": [None, 0.0, 10.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0],
}
_SOLUBILITY_W = {
    "NaCl": [0.232, 0.2383, 0.2470, 0.2553, 0.2616, 0.2629, 0.2631, 0.2636, 0.2645, 0.2668,
             0.2692, 0.2721],
    "KCl": [0.1987, 0.2174, 0.2361, 0.2539, 0.2622, 0.2704, 0.2859, 0.3004, 0.3140],
    "MgSO4": [0.173, 0.182, 0.217, 0.251, 0.263, 0.282, 0.309, 0.334, 0.353],
}
_TABLE_CACHE = {}


def _table(solute):
    if solute not in _TABLE_CACHE:
        t = list(_SOLUBILITY_T_C[solute])
        w = list(_SOLUBILITY_W[solute])
        if t[0] is None:  # eutectic temperature from the freezing model
            t[0] = float(freezing.brine_freezing_point_C(solute, w[0], 0.0))
        _TABLE_CACHE[solute] = (np.array(t), np.array(w))
    return _TABLE_CACHE[solute]


def eutectic_temperature_C(solute):
    """Temperature (degC, 1 atm) of the ice-salt eutectic closing the liquid domain."""
    return float(_table(solute)[0][0])


def saturation_mass_fraction(solute, t_C):
    """Mass fraction of the saturated solution at temperature t (degC), 1 atm.

    Parameters
    ----------
    solute : {"NaCl", "KCl", "MgSO4"}
    t_C : array_like
        Temperature (degC); held constant outside the tabulated range.

    Returns
    -------
    ndarray
        kg salt per kg solution.
    """
    t, w = _table(solute)
    return np.interp(np.asarray(t_C, float), t, w)
