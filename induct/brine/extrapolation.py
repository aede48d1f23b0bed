"""Seawater conductivity beyond PSS-78: Walden scaling in t and p, NaCl-ratio scaling in salinity.

For a point (SP, t, p) outside the PSS-78 box (2..42 (0..42 with Hill),
-2..35 degC, 0..100 MPa) the conductivity is

    C(SP, t, p) = C_PSS78(SP_b, t_b, p_b) * [W(t, p) / W(t_b, p_b)] * F_S,

with (SP_b, t_b, p_b) the nearest point of the box (componentwise clipping),
W = rho_w / eta_w of pure water (IAPWS-95 density, IAPWS 2008 viscosity;
Walden's rule: Lambda * eta ~ const, concentration ~ density; for the
temperature part the fractional form W**0.87, calibrated on PSS-78,
see :func:`induct.brine.water.walden_ratio`) and, for SP > 42,
F_S = kappa_NaCl(w(SP), t_b, 0) / kappa_NaCl(w(42), t_b, 0) with the NaCl
model of :mod:`induct.brine.solutions` at the NaCl mass fraction equal to
SA = (35.16504/35) SP g/kg. Every factor is 1 on the boundary, so the
extrapolation is continuous with PSS-78 there (tested).

Error estimated by applying the same scaling inside PSS-78's range and
comparing with PSS-78 itself (tests/test_brine_seawater.py, docs/brine.md):
4 K of temperature extrapolation (t = 2 -> -2 degC, or 31 -> 35 degC) is
within 0.4 %; Walden pressure scaling over 0 -> 100 MPa within 3.3 % (worst at
SP 2, 35 degC; 1.5 % at SP 35, 0 degC) and over 50 -> 100 MPa within 1.6 %;
NaCl-ratio salinity scaling over SP 28 -> 42 within 1.8 %. Beyond the box no
seawater data were available to check it; the error grows with the distance
extrapolated (roughly 0.1 %/K in temperature and 1.5-3 % per 100 MPa).

Limits of the extrapolation itself (the API raises ValueError beyond them):
0 <= SP <= 100, -40 <= t <= 40 degC (and t above the freezing point),
0 <= p <= 1000 MPa (range of the IAPWS water formulations).
"""

from __future__ import annotations

import numpy as np

from induct.brine import seawater
from induct.brine import solutions
from induct.brine import water
from induct.brine.flags import ExtrapolationFlag
from induct.brine.freezing import SA_PER_SP, T0_K
from induct.brine.names import get_solute

SP_LIMIT = 100.0
T_LIMITS_C = (-40.0, 40.0)
P_LIMIT_MPA = 1000.0
#: Registered brine whose conductivity ratio scales seawater beyond SP 42 (flag SALTY).
SALINITY_PROXY = "NaCl"


def walden_ratio(t_C, p_MPa, t_ref_C, p_ref_MPa):
    """Walden conductivity ratio kappa(t, p) / kappa(t_ref, p_ref) (see water.walden_ratio)."""
    def k(t):
        return np.asarray(t, float) + T0_K

    def pa(p):
        return np.asarray(p, float) * 1e6 + water.P_ATM_PA
    return water.walden_ratio(k(t_C), pa(p_MPa), k(t_ref_C), pa(p_ref_MPa))


def seawater_flags(SP, t_C, p_MPa):
    """Extrapolation flags (int array) for seawater points."""
    SP, t, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (SP, t_C, p_MPa)))
    flags = np.zeros(SP.shape, dtype=np.int64)
    flags |= np.where(t < seawater.T_MIN_C, int(ExtrapolationFlag.COLD), 0)
    flags |= np.where(t > seawater.T_MAX_C, int(ExtrapolationFlag.WARM), 0)
    flags |= np.where(p > seawater.P_MAX_MPA, int(ExtrapolationFlag.DEEP), 0)
    flags |= np.where(SP > seawater.SP_MAX, int(ExtrapolationFlag.SALTY), 0)
    return flags


def seawater_conductivity(SP, t_C, p_MPa):
    """Seawater conductivity (S/m): PSS-78 inside its range, scaled extrapolation outside.

    Kernel: no range checks (see module docstring for the limits).

    Parameters
    ----------
    SP : array_like
        Practical Salinity.
    t_C : array_like
        Temperature (degC, ITS-90).
    p_MPa : array_like
        Sea pressure (MPa).

    Returns
    -------
    kappa : ndarray
        Conductivity (S/m), broadcast shape.
    flags : ndarray of int
        :class:`~induct.brine.flags.ExtrapolationFlag` bits per point.
    """
    SP, t, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (SP, t_C, p_MPa)))
    sp_b = np.minimum(SP, seawater.SP_MAX)
    t_b = np.clip(t, seawater.T_MIN_C, seawater.T_MAX_C)
    p_b = np.clip(p, 0.0, seawater.P_MAX_MPA)
    kappa = seawater.conductivity_pss78(sp_b, t_b, p_b)
    flags = seawater_flags(SP, t, p)
    tp = (t != t_b) | (p != p_b)
    if np.any(tp):
        kappa = np.where(tp, kappa * walden_ratio(t, p, t_b, p_b), kappa)
    salty = SP > seawater.SP_MAX
    if np.any(salty):
        w = SA_PER_SP * SP * 1e-3
        w42 = SA_PER_SP * seawater.SP_MAX * 1e-3
        zero = np.zeros(SP.shape)
        ratio = (solutions.conductivity_kernel(SALINITY_PROXY, w, t_b, zero)
                 / solutions.conductivity_kernel(SALINITY_PROXY, w42, t_b, zero))
        kappa = np.where(salty, kappa * ratio, kappa)
    return kappa, flags


# ----------------------------------------------------------------------------
# Registry hooks: (solute, salinity in the record's unit, t, p)
# ----------------------------------------------------------------------------
def seawater_conductivity_model(solute, SP, t_C, p_MPa):
    """Seawater conductivity (S/m); the registry's ``conductivity_model`` for seawater.

    :func:`seawater_conductivity` without its flags (the registry's
    ``extrapolation_flags`` hook gives them).

    Parameters
    ----------
    solute : str or Solute
        Unused (seawater's model is fixed); present for the registry's call signature.
    SP : array_like
        Practical Salinity.
    t_C : array_like
        Temperature (degC, ITS-90).
    p_MPa : array_like
        Sea pressure (MPa).

    Returns
    -------
    ndarray
        Conductivity (S/m), broadcast shape.

    Examples
    --------
    >>> round(float(seawater_conductivity_model("seawater", 35.0, 15.0 / 1.00024, 0.0)), 6)
    4.2914
    """
    return seawater_conductivity(SP, t_C, p_MPa)[0]


def reference_range_flags(solute, salinity, t_C, p_MPa):
    """Extrapolation flags of points outside a solute's reference range; the registry's ``extrapolation_flags``.

    SALTY above ``limits.reference_salinity_max``, COLD / WARM below / above
    ``limits.reference_temperature_C``, DEEP above ``limits.reference_pressure_max_MPa``.

    Parameters
    ----------
    solute : str or Solute
        A registered solute.
    salinity : array_like
        Salinity in the record's unit.
    t_C : array_like
        Temperature (degC).
    p_MPa : array_like
        Sea pressure (MPa).

    Returns
    -------
    ndarray of int64
        :class:`~induct.brine.flags.ExtrapolationFlag` bits, broadcast shape.

    Examples
    --------
    >>> [int(f) for f in reference_range_flags("NaCl", 10.0, [-1.0, 5.0], [0.0, 150.0])]
    [1, 2]
    """
    lim = get_solute(solute).limits
    s, t, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (salinity, t_C, p_MPa)))
    t_lo, t_hi = lim.reference_temperature_C
    flags = np.zeros(s.shape, dtype=np.int64)
    flags |= np.where(t < t_lo, int(ExtrapolationFlag.COLD), 0)
    flags |= np.where(t > t_hi, int(ExtrapolationFlag.WARM), 0)
    flags |= np.where(p > lim.reference_pressure_max_MPa, int(ExtrapolationFlag.DEEP), 0)
    flags |= np.where(s > lim.reference_salinity_max, int(ExtrapolationFlag.SALTY), 0)
    return flags
