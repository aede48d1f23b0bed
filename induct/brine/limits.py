"""Validity limits: solubility (saturation) curves and the temperature/pressure limits of the models.

Solubility curves are piecewise linear in temperature through the points
tabulated in each solute's registry record (``Solute.limits.saturation_t_C``,
``saturation_w``: mass fraction of anhydrous salt in the saturated solution).
Built-in tables:

* NaCl: Salt Institute table (halite above 0.1 degC, hydrohalite below, ending
  at the ice eutectic, 23.2 % at -21.2 degC per Bodnar 1993), consistent with the CRC Handbook
  "Aqueous solubility of inorganic compounds at various temperatures".
* KCl, MgSO4 (0-60 degC): CRC Handbook, same table (from memory). Below 0 degC
  the line runs straight to the ice-salt eutectic of :mod:`induct.brine.freezing`
  (KCl 19.87 %, MgSO4 17.3 %), placed at that module's freezing temperature
  so that the liquid domain is closed (a leading ``None`` temperature in the table).
"""

from __future__ import annotations

import numpy as np

from induct.brine import freezing
from induct.brine.names import get_solute

#: Hard temperature limits (degC) of the conductivity models (freezing point still applies).
T_MAX_SOLUTIONS_C = 60.0
T_MIN_WALDEN_C = -40.0
#: Hard pressure limit (MPa, sea pressure) of all models (IAPWS water formulations).
P_MAX_MPA = 1000.0

#: Solubility tables as arrays, per record (records are hashable).
_TABLE_CACHE = {}


def _solute(solute):
    """The registry record of ``solute`` (name, alias or record); imported here since the registry imports us."""
    return get_solute(solute)


def _table(solute):
    rec = _solute(solute)
    if rec not in _TABLE_CACHE:
        t = list(rec.limits.saturation_t_C)
        w = list(rec.limits.saturation_w)
        if t[0] is None:  # eutectic temperature from the freezing model
            t[0] = float(freezing.brine_freezing_point_C(rec, w[0], 0.0))
        _TABLE_CACHE[rec] = (np.array(t), np.array(w))
    return _TABLE_CACHE[rec]


def eutectic_temperature_C(solute):
    """Temperature (degC, 1 atm) of the ice-salt eutectic closing the liquid domain.

    Parameters
    ----------
    solute : str or Solute
        A registered salt with a saturation table.

    Returns
    -------
    float
        degC.

    Examples
    --------
    >>> round(eutectic_temperature_C("NaCl"), 1)
    -21.2
    """
    return float(_table(solute)[0][0])


def saturation_mass_fraction(solute, t_C):
    """Mass fraction of the saturated solution at temperature t (degC), 1 atm.

    Parameters
    ----------
    solute : str or Solute
        A registered salt with a saturation table.
    t_C : array_like
        Temperature (degC); held constant outside the tabulated range.

    Returns
    -------
    ndarray
        kg salt per kg solution.

    Examples
    --------
    >>> float(saturation_mass_fraction("KCl", 20.0))
    0.2539
    """
    t, w = _table(solute)
    return np.interp(np.asarray(t_C, float), t, w)
