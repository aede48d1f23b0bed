"""Freezing points: pure-water ice melting curves, seawater (TEOS-10) and single-salt brines.

Models (implemented from the published formulas):

* Pure water, melting curves of ice Ih, III, V and VI: IAPWS R14-08(2011),
  "Revised Release on the Pressure along the Melting and Sublimation Curves of
  Ordinary Water Substance"; Wagner, Riethmann, Feistel & Harvey (2011),
  J. Phys. Chem. Ref. Data 40, 043103. Absolute pressure, 251.165-355 K
  (0-2216 MPa; this module uses up to 1000 MPa).
* Seawater: TEOS-10 polynomial for the in-situ freezing temperature,
  ``gsw_t_freezing_poly`` (McDougall, Barker, Feistel & Galton 2014, J. Phys.
  Oceanogr. 44, 1751; McDougall & Barker 2011, GSW Toolbox), air-free
  (saturation fraction 0). Valid 0 <= SA <= 120 g/kg, 0 <= p <= 100 MPa; stated
  fit error about +-6e-4 K against the exact TEOS-10 Gibbs-function result.
  Beyond 100 MPa (extrapolation): the 100 MPa value plus the change of the
  pure-water melting temperature (IAPWS R14-08) from 100 MPa to p.
* NaCl: Bodnar (1993), Geochim. Cosmochim. Acta 57, 683: mass % =
  1.78 th - 0.0442 th^2 + 0.000557 th^3 (th = freezing-point depression, K),
  from 0 to the ice-hydrohalite eutectic (23.2 mass %, -21.2 degC).
* KCl and MgSO4: ice-solution equilibrium ln a_w = -(1/R)[dH (1/T - 1/T0)
  - dCp (T0/T - 1 + ln(T/T0))] with the water activity from a Pitzer
  osmotic coefficient (Pitzer & Mayorga 1973, J. Phys. Chem. 77, 268; 1974,
  J. Solution Chem. 3, 539) whose beta0 and C_phi were refitted (tools/
  brine_fit.py) to the freezing-point depressions of the Smithsonian Physical
  Tables (Forsythe 1956) reproduced in the CRC Handbook ("Freezing point
  lowering by electrolytes in aqueous solution"); A_phi from the Debye-Hueckel
  expression with the dielectric constant of Malmberg & Maryott (1956), J. Res.
  NBS 56, 1 and the IAPWS-95 density. Valid up to the ice-salt eutectics:
  KCl 19.87 mass % (-10.8 degC, Brady 2009 phase diagram), MgSO4 17.3 mass %
  (about -3.6 degC, ice-meridianiite eutectic; from memory).
* Brines under pressure: the 1-atm depression is scaled by the ratio of the
  TEOS-10 seawater depressions at p and at 0 (colligative scaling; +4 % at
  100 MPa) and added to the pure-water melting temperature (IAPWS R14-08).

Temperatures ITS-90 (degC at the user boundary, K inside); pressure is sea
(gauge) pressure in MPa at the boundary. Kernels: no input validation here.
"""

from __future__ import annotations

import numpy as np

from induct.brine import water
from induct.brine.names import SOLUTES, get_solute

P_ATM_MPA = water.P_ATM_PA * 1e-6
T0_K = 273.15
#: Reference-composition conversion SA = (35.16504 / 35) SP (Millero et al. 2008, Deep-Sea Res. I 55, 50).
SA_PER_SP = 35.16504 / 35.0

# ----------------------------------------------------------------------------
# Pure water: IAPWS R14-08 melting curves
# ----------------------------------------------------------------------------
_IH_PT_MPA, _IH_TT_K = 611.657e-6, 273.16
_IH_A = (0.119539337e7, 0.808183159e5, 0.333826860e4)
_IH_B = (3.0, 25.75, 103.75)
#: (T_low_K, p_low_MPa, coefficient a, exponent b) for p/p_low = 1 - a (1 - (T/T_low)^b)
_HP_PHASES = {
    "III": (251.165, 208.566, 0.299948, 60.0),
    "V": (256.164, 350.1, 1.18721, 8.0),
    "VI": (273.31, 632.4, 1.07476, 4.6),
}
#: Upper pressure (absolute, MPa) of each phase's stable melting curve.
_PHASE_P_MAX = {"Ih": 208.566, "III": 350.1, "V": 632.4, "VI": 2216.0}


def melting_pressure_MPa(T_K, phase="Ih"):
    """Absolute pressure (MPa) on the melting curve of an ice phase (IAPWS R14-08).

    Parameters
    ----------
    T_K : array_like
        Temperature (K). Ranges: Ih 251.165-273.16, III 251.165-256.164,
        V 256.164-273.31, VI 273.31-355.
    phase : {"Ih", "III", "V", "VI"}
        Ice phase.

    Returns
    -------
    ndarray
        Melting pressure (MPa, absolute).
    """
    T = np.asarray(T_K, float)
    if phase == "Ih":
        th = T / _IH_TT_K
        s = sum(a * (1.0 - th ** b) for a, b in zip(_IH_A, _IH_B))
        return _IH_PT_MPA * (1.0 + s)
    if phase not in _HP_PHASES:
        raise ValueError(f"phase must be one of Ih, III, V, VI, got {phase!r}")
    t_low, p_low, a, b = _HP_PHASES[phase]
    return p_low * (1.0 - a * (1.0 - (T / t_low) ** b))


def melting_temperature_K(p_abs_MPa):
    """Melting temperature (K) of the stable ice phase at absolute pressure (MPa).

    Ice Ih below 208.566 MPa, III to 350.1 MPa, V to 632.4 MPa, VI to 2216 MPa
    (IAPWS R14-08). Kernel: no range checks.

    Parameters
    ----------
    p_abs_MPa : array_like
        Absolute pressure (MPa), 611.657e-6 to 2216.

    Returns
    -------
    ndarray
        Temperature (K).
    """
    p = np.asarray(p_abs_MPa, float)
    out = np.empty(p.shape)
    # ice Ih: Newton on T (monotone decreasing p(T)); start from a linear guess
    p_ih = np.minimum(p, _PHASE_P_MAX["Ih"])
    T = _IH_TT_K - 0.105 * p_ih
    for _ in range(40):
        th = T / _IH_TT_K
        f = melting_pressure_MPa(T, "Ih") - p_ih
        df = -_IH_PT_MPA * sum(a * b * th ** (b - 1.0) for a, b in zip(_IH_A, _IH_B)) / _IH_TT_K
        step = f / df
        T = np.clip(T - step, 240.0, _IH_TT_K)
        if np.all(np.abs(step) < 1e-12):
            break
    out[...] = T
    for name, p_lo in (("III", 208.566), ("V", 350.1), ("VI", 632.4)):
        t_low, p_low, a, b = _HP_PHASES[name]
        sel = p > p_lo
        p_sel = np.where(sel, p, p_low)  # keep the power's base positive off-branch
        th = (1.0 - (1.0 - p_sel / p_low) / a) ** (1.0 / b)
        out = np.where(sel, t_low * th, out)
    return out


def water_freezing_point_C(pressure_MPa):
    """Freezing (melting) temperature of pure water (degC) at sea pressure (MPa), IAPWS R14-08."""
    return melting_temperature_K(np.asarray(pressure_MPa, float) + P_ATM_MPA) - T0_K


# ----------------------------------------------------------------------------
# Seawater: TEOS-10 polynomial
# ----------------------------------------------------------------------------
_TF = (0.002519, -5.946302841607319, 4.136051661346983, -1.115150523403847e1,
       1.476878746184548e1, -1.088873263630961e1, 2.961018839640730,
       -7.433320943962606, -1.561578562479883, 4.073774363480365e-2,
       1.158414435887717e-2, -4.122639292422863e-1, -1.123186915628260e-1,
       5.715012685553502e-1, 2.021682115652684e-1, 4.140574258089767e-2,
       -6.034228641903586e-1, -1.205825928146808e-2, -2.812172968619369e-1,
       1.877244474023750e-2, -1.204395563789007e-1, 2.349147739749606e-1,
       2.748444541144219e-3)


def t_freezing_teos10_poly(SA, p_dbar):
    """TEOS-10 polynomial in-situ freezing temperature (degC) of air-free seawater.

    Parameters
    ----------
    SA : array_like
        Absolute Salinity (g/kg), 0-120.
    p_dbar : array_like
        Sea pressure (dbar), 0-10000.

    Returns
    -------
    ndarray
        Freezing temperature (degC, ITS-90).
    """
    c = _TF
    sa_r = np.asarray(SA, float) * 1e-2
    x = np.sqrt(sa_r)
    p_r = np.asarray(p_dbar, float) * 1e-4
    return (c[0]
            + sa_r * (c[1] + x * (c[2] + x * (c[3] + x * (c[4] + x * (c[5] + c[6] * x)))))
            + p_r * (c[7] + p_r * (c[8] + c[9] * p_r))
            + sa_r * p_r * (c[10] + p_r * (c[12] + p_r * (c[15] + c[21] * sa_r))
                            + sa_r * (c[13] + c[17] * p_r + c[19] * sa_r)
                            + x * (c[11] + p_r * (c[14] + c[18] * p_r)
                                   + sa_r * (c[16] + c[20] * p_r + c[22] * sa_r))))


def seawater_freezing_point_C(SP, pressure_MPa):
    """Freezing temperature (degC) of air-free seawater from Practical Salinity and sea pressure.

    TEOS-10 polynomial up to 100 MPa; beyond, the 100 MPa value shifted by the
    pure-water melting-curve change (extrapolation, flagged by the API).

    Parameters
    ----------
    SP : array_like
        Practical Salinity (SA = 35.16504/35 SP).
    pressure_MPa : array_like
        Sea pressure (MPa).

    Returns
    -------
    ndarray
        Freezing temperature (degC).
    """
    SA = SA_PER_SP * np.asarray(SP, float)
    p = np.asarray(pressure_MPa, float)
    pc = np.minimum(p, 100.0)
    tf = t_freezing_teos10_poly(SA, 100.0 * pc)
    deep = p > 100.0
    if np.any(deep):
        shift = water_freezing_point_C(np.maximum(p, 100.0)) - water_freezing_point_C(100.0)
        tf = np.where(deep, tf + shift, tf)
    return tf


def depression_pressure_factor(pressure_MPa):
    """Ratio of the seawater (SA = 35.16504 g/kg) freezing depression at p to that at 0 (TEOS-10).

    Held at its 100 MPa value above 100 MPa.
    """
    p = np.minimum(np.asarray(pressure_MPa, float), 100.0) * 100.0
    d = t_freezing_teos10_poly(35.16504, p) - t_freezing_teos10_poly(0.0, p)
    d0 = t_freezing_teos10_poly(35.16504, 0.0) - t_freezing_teos10_poly(0.0, 0.0)
    return d / d0


# ----------------------------------------------------------------------------
# Single-salt brines at 1 atm
# ----------------------------------------------------------------------------
# Per-solute data (molar mass, eutectic, Pitzer parameters) live in the solute
# records of induct.brine.registry; the functions below take a record or a name.
#: Molar mass of water (kg/mol).
M_WATER = 0.018015268

_R_GAS = 8.314462618
_DH_FUS = 6009.5       # J/mol, enthalpy of fusion of ice Ih at 273.15 K (common practice)
_DCP_FUS = 38.0        # J/(mol K), Cp(liquid) - Cp(ice Ih) near 0 degC (common practice)


def _solute(solute):
    """The registry record of ``solute`` (name, alias or record); imported here since the registry imports us."""
    return get_solute(solute)


def __getattr__(name):
    """Read-only views derived from the registry, kept for existing callers (tools/brine_fit.py, tests).

    ``MOLAR_MASS`` and ``EUTECTIC_MASS_FRACTION`` map solute names to floats,
    ``_PITZER`` maps names to dicts with keys nu, zz, a1, b1, a2, b2, b0, cphi.
    New code reads the records (:func:`induct.brine.registry.get_solute`).
    """
    if name not in ("MOLAR_MASS", "EUTECTIC_MASS_FRACTION", "_PITZER"):
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    from types import MappingProxyType
    if name == "MOLAR_MASS":
        view = {n: r.molar_mass_kg_per_mol for n, r in SOLUTES.items() if r.molar_mass_kg_per_mol is not None}
    elif name == "EUTECTIC_MASS_FRACTION":
        view = {n: r.eutectic_mass_fraction for n, r in SOLUTES.items() if r.eutectic_mass_fraction is not None}
    else:
        view = {n: MappingProxyType(dict(nu=r.nu, zz=r.charge_product, **vars(r.pitzer)))
                for n, r in SOLUTES.items() if r.pitzer is not None}
    return MappingProxyType(view)

_E = 1.602176634e-19
_EPS0 = 8.8541878128e-12
_KB = 1.380649e-23
_NA = 6.02214076e23


def debye_huckel_aphi(T_K, p_abs_Pa=water.P_ATM_PA):
    """Debye-Hueckel osmotic slope A_phi ((kg/mol)^0.5) of water.

    A_phi = (1/3) (2 pi N_A rho_w)^(1/2) (e^2 / (4 pi eps0 eps_r k T))^(3/2), with
    eps_r(t) of Malmberg & Maryott (1956) and rho_w from IAPWS-95
    (0.3921 at 25 degC; Pitzer's tabulated value is 0.3915).
    """
    T = np.asarray(T_K, float)
    t = T - T0_K
    eps = 87.740 - 0.40008 * t + 9.398e-4 * t ** 2 - 1.410e-6 * t ** 3
    lb = _E ** 2 / (4.0 * np.pi * _EPS0 * eps * _KB * T)
    return np.sqrt(2.0 * np.pi * _NA * water.density(T, p_abs_Pa)) * lb ** 1.5 / 3.0


def osmotic_coefficient(solute, molality, T_K):
    """Pitzer osmotic coefficient of a single-salt solution (dimensionless).

    Parameters
    ----------
    solute : str or Solute
        A registered solute with ``pitzer`` parameters (KCl, MgSO4).
    molality : array_like
        mol/kg water.
    T_K : array_like
        Temperature (K).

    Returns
    -------
    ndarray
        phi, broadcast shape.

    Examples
    --------
    >>> round(float(osmotic_coefficient("KCl", 1.0, 273.15 - 3.29)), 3)
    0.884
    """
    rec = _solute(solute)
    c = rec.pitzer
    m = np.asarray(molality, float)
    ionic = rec.ionic_strength_per_molality * m
    si = np.sqrt(ionic)
    f = -rec.charge_product * debye_huckel_aphi(T_K) * si / (1.0 + 1.2 * si)
    bphi = c.b0 + c.b1 * np.exp(-c.a1 * si) + c.b2 * np.exp(-c.a2 * si)
    return 1.0 + f + m * bphi + m * m * c.cphi


def ln_water_activity_ice(T_K):
    """ln(a_w) of a solution in equilibrium with ice Ih at temperature T (1 atm)."""
    T = np.asarray(T_K, float)
    return -(_DH_FUS * (1.0 / T - 1.0 / T0_K)
             - _DCP_FUS * (T0_K / T - 1.0 + np.log(T / T0_K))) / _R_GAS


def molality_from_mass_fraction(solute, w):
    """Molality (mol/kg water) from solute mass fraction w (kg solute / kg solution)."""
    w = np.asarray(w, float)
    return w / (_solute(solute).molar_mass_kg_per_mol * (1.0 - w))


def _pitzer_depression(solute, m):
    """Freezing-point depression (K) at 1 atm from the Pitzer model (Newton on T)."""
    rec = _solute(solute)
    nu = rec.nu
    T = T0_K - 3.6 * m  # near-ideal start
    for _ in range(30):
        phi = osmotic_coefficient(rec, m, T)
        f = ln_water_activity_ice(T) + nu * m * M_WATER * phi
        h = 1e-4
        phi2 = osmotic_coefficient(rec, m, T + h)
        f2 = ln_water_activity_ice(T + h) + nu * m * M_WATER * phi2
        step = f * h / (f2 - f)
        T = T - step
        if np.all(np.abs(step) < 1e-10):
            break
    return T0_K - T


def _bodnar_depression(w):
    """NaCl freezing-point depression (K) from Bodnar (1993), inverting the cubic by Newton."""
    pct = 100.0 * np.asarray(w, float)
    th = pct / 1.78
    for _ in range(30):
        f = 1.78 * th - 0.0442 * th ** 2 + 0.000557 * th ** 3 - pct
        df = 1.78 - 0.0884 * th + 0.001671 * th ** 2
        step = f / df
        th = th - step
        if np.all(np.abs(step) < 1e-12):
            break
    return th


def bodnar_depression(solute, mass_fraction):
    """NaCl freezing-point depression (K) at 1 atm, Bodnar (1993); a ``freezing_depression`` for the registry.

    Parameters
    ----------
    solute : str or Solute
        Unused (the Bodnar fit is for NaCl); present for the registry's call signature.
    mass_fraction : array_like
        kg NaCl per kg solution, 0 to 0.232 (eutectic).

    Returns
    -------
    ndarray
        Depression (K, positive).

    Examples
    --------
    >>> round(float(bodnar_depression("NaCl", 0.232)), 1)
    21.2
    """
    return _bodnar_depression(mass_fraction)


def pitzer_depression(solute, mass_fraction):
    """Freezing-point depression (K) at 1 atm from the Pitzer ice equilibrium; a ``freezing_depression``.

    Parameters
    ----------
    solute : str or Solute
        Record with ``pitzer`` parameters, ``ions`` and ``molar_mass_kg_per_mol``.
    mass_fraction : array_like
        kg solute per kg solution, 0 up to the eutectic.

    Returns
    -------
    ndarray
        Depression (K, positive).

    Examples
    --------
    >>> round(float(pitzer_depression("KCl", 0.0745513 / 1.0745513)), 2)   # 1 mol/kg; table: 3.29 K
    3.28
    """
    rec = _solute(solute)
    return _pitzer_depression(rec, molality_from_mass_fraction(rec, mass_fraction))


pitzer_depression.requires = ("molar_mass_kg_per_mol", "ions", "pitzer")


def brine_depression_1atm(solute, mass_fraction):
    """Freezing-point depression (K) of a single-salt brine at 1 atm.

    Uses the record's ``freezing_depression`` callable.

    Parameters
    ----------
    solute : str or Solute
        A registered single-salt brine (name, alias or record).
    mass_fraction : array_like
        kg solute per kg solution, 0 up to the eutectic.

    Returns
    -------
    ndarray
        Depression below the freezing point of pure water (K, positive).
    """
    rec = _solute(solute)
    w = np.asarray(mass_fraction, float)
    # evaluate once per distinct salinity (profiles usually have one salinity)
    uniq, inverse = np.unique(w, return_inverse=True)
    dep = rec.freezing_depression(rec, uniq)
    return dep[inverse].reshape(w.shape)


def brine_freezing_point_C(solute, mass_fraction, pressure_MPa):
    """Freezing temperature (degC) of a single-salt brine at sea pressure (MPa).

    T_f = T_melt,water(p) - depression_1atm(w) * depression_pressure_factor(p).

    Parameters
    ----------
    solute : str or Solute
        A registered single-salt brine.
    mass_fraction : array_like
        kg solute per kg solution (0 to the eutectic).
    pressure_MPa : array_like
        Sea pressure (MPa).

    Returns
    -------
    ndarray
        Freezing temperature (degC).
    """
    w, p = np.broadcast_arrays(np.asarray(mass_fraction, float), np.asarray(pressure_MPa, float))
    dep = brine_depression_1atm(solute, w)
    return water_freezing_point_C(p) - dep * depression_pressure_factor(p)


# ----------------------------------------------------------------------------
# Registry freezing models: (solute, salinity in the record's unit, p) -> degC
# ----------------------------------------------------------------------------
def brine_freezing_point(solute, salinity, pressure_MPa, above_liquidus=None):
    """Freezing temperature (degC) of a single-salt brine; the registry's ``freezing_model`` for brines.

    Parameters
    ----------
    solute : str or Solute
        Record with ``freezing_depression``, ``eutectic_mass_fraction`` and a salinity scale.
    salinity : array_like
        Salinity in the record's unit (g/kg of solution for the built-in salts).
    pressure_MPa : array_like
        Sea pressure (MPa).
    above_liquidus : float, optional
        If given, the value returned where the mass fraction exceeds the eutectic
        (the first solid is then the salt, not ice); otherwise no such check.

    Returns
    -------
    ndarray
        Freezing temperature (degC), broadcast shape.

    Examples
    --------
    >>> round(float(brine_freezing_point("NaCl", 232.0, 0.0)), 1)
    -21.2
    >>> float(brine_freezing_point("NaCl", 250.0, 0.0, above_liquidus=-np.inf))
    -inf
    """
    rec = _solute(solute)
    w = salinity * rec.salinity.to_mass_fraction
    if above_liquidus is None:
        return brine_freezing_point_C(rec, w, pressure_MPa)
    w_eut = rec.eutectic_mass_fraction
    return np.where(w <= w_eut, brine_freezing_point_C(rec, np.minimum(w, w_eut), pressure_MPa), above_liquidus)


brine_freezing_point.requires = ("freezing_depression", "eutectic_mass_fraction")


def seawater_freezing_point(solute, SP, pressure_MPa, above_liquidus=None):
    """Freezing temperature (degC) of seawater; the registry's ``freezing_model`` for seawater.

    :func:`seawater_freezing_point_C` with the registry's call signature.

    Parameters
    ----------
    solute : str or Solute
        The seawater record (its ``freezing_salinity_max`` ends the liquidus).
    SP : array_like
        Practical Salinity.
    pressure_MPa : array_like
        Sea pressure (MPa).
    above_liquidus : float, optional
        If given, the value returned above the record's upper salinity.

    Returns
    -------
    ndarray
        Freezing temperature (degC), broadcast shape.

    Examples
    --------
    >>> round(float(seawater_freezing_point("seawater", 35.0, 0.0)), 3)
    -1.919
    """
    tf = seawater_freezing_point_C(SP, pressure_MPa)
    if above_liquidus is None:
        return tf
    return np.where(np.asarray(SP) <= _solute(solute).freezing_salinity_max, tf, above_liquidus)
