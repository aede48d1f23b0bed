"""Conductivity of single-salt brines (NaCl, KCl, MgSO4, ...): ion-additive model with ion pairing.

Model (``kappa`` in S/m; m = molality, mol/kg water; t in degC):

1. Ionic molar conductivities of McCleskey, Nordstrom, Ryan & Ball (2012),
   Geochim. Cosmochim. Acta 77, 369 (their eqs. 4-6 and Table 1):
   lambda_i(t, I) = lambda0_i(t) - A_i(t) sqrt(I) / (1 + B_i sqrt(I)),
   lambda0 = a t^2 + b t + c, A = p t^2 + q t + r (S cm^2 per mole of ion),
   stated valid 0-95 degC and ionic strength <= 0.7 mol/kg.
2. Speciation for MgSO4 (the published model does the same step with a
   speciation code): Mg2+ + SO4^2- = MgSO4(aq), log10 K = 2.37 at 25 degC with
   van 't Hoff enthalpy 19.04 kJ/mol (4.55 kcal/mol; PHREEQC database
   phreeqc.dat, Parkhurst & Appelo 2013; from memory), activity coefficients
   of the free ions from the Guentelberg form
   log10 gamma = -A_DH z^2 sqrt(I) / (1 + sqrt(I)); the ion pair carries no
   current. Without this step the ion-additive model overestimates the CRC
   MgSO4 conductivities by 46 % at 2 mass %, 84 % at 10 % and 4x at 25 %.
3. Concentrated-solution factor G(m) = exp(-g m^2 / (1 + h m)) applied to the
   ion-additive sum; g, h fitted (tools/brine_fit.py --conductivity) to the
   CRC Handbook table "Electrical conductivity of aqueous solutions" (20 degC)
   and, for NaCl, to the saturated-NaCl conductivity standard (226.0 mS/cm at
   20 degC). Physically it stands for the viscosity increase and short-range
   ion association that the limiting-law form of step 1 lacks; it is 1 to
   within 1 % below I = 0.3 mol/kg. It is taken independent of temperature.
4. Molar concentration from molality with the solution density
   rho = (1 + m M) / (1/rho_w + m V_phi), V_phi = V0 + S_v sqrt(m) (Masson's
   rule; V0, S_v near 25 degC, from memory), rho_w from IAPWS-95.
5. Below 0 degC (outside step 1's range) and for pressure, Walden scaling with
   pure water: kappa(t, p) = kappa(max(t, 0), 0) * walden_ratio, built from
   W = rho_w / eta_w (IAPWS-95, IAPWS 2008; fractional exponent 0.87 for the
   temperature part, see :func:`induct.brine.water.walden_ratio`). Checked against PSS-78's pressure
   factor (seawater): within 1.5 % at 0 degC, 100 MPa.

Validity: 0 <= w <= saturation at t (see :mod:`induct.brine.limits`), from
the freezing point to 60 degC, 0-100 MPa. The API flags t < 0 degC (Walden
continuation below McCleskey's range) and p > 100 MPa. Kernel: no input checks.
"""

from __future__ import annotations

import numpy as np

from induct.brine import water
from induct.brine.freezing import T0_K
from induct.brine.names import SOLUTES, get_solute

#: McCleskey et al. (2012) Table 1, per ion: a, b, c, p, q, r, B (see the module docstring).
#: Salts name their ions in their registry record (:class:`induct.brine.registry.Ion`);
#: a new salt with new ions adds them here.
MCCLESKEY_IONS = {
    "Na+": (0.003763, 0.8770, 26.23, 0.00027, 1.141, 32.07, 1.7),
    "K+": (0.003046, 1.261, 40.70, 0.00535, 0.9316, 22.59, 1.5),
    "Mg2+": (0.01068, 1.695, 57.16, 0.02453, 1.915, 80.50, 2.1),
    "Cl-": (0.003817, 1.337, 40.99, 0.00613, 0.9469, 22.01, 1.5),
    "SO4 2-": (0.01037, 2.838, 82.37, 0.03324, 5.889, 193.5, 2.6),
}

# Per-salt data (molar mass, ions, Masson volumes, concentrated-solution factor,
# ion pairing, calibration points) live in the records of induct.brine.registry.
_R_GAS = 8.314462618


def _solute(solute):
    """The registry record of ``solute`` (name, alias or record); imported here since the registry imports us."""
    return get_solute(solute)


def __getattr__(name):
    """``_VPHI``: read-only view name -> (V0, S_v) derived from the registry, kept for existing tests."""
    if name == "_VPHI":
        from types import MappingProxyType
        return MappingProxyType({n: r.apparent_molar_volume for n, r in SOLUTES.items()
                                 if r.apparent_molar_volume is not None})
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def ion_molar_conductivity(ion, t_C, ionic_strength):
    """McCleskey et al. (2012) molar conductivity of an ion (S cm^2/mol).

    Parameters
    ----------
    ion : {"Na+", "K+", "Mg2+", "Cl-", "SO4 2-"}
    t_C : array_like
        Temperature (degC), 0-95.
    ionic_strength : array_like
        Ionic strength (mol/kg).

    Returns
    -------
    ndarray
        lambda_i (S cm^2 per mole of ion).
    """
    a, b, c, p, q, r, B = MCCLESKEY_IONS[ion]
    t = np.asarray(t_C, float)
    si = np.sqrt(np.asarray(ionic_strength, float))
    return (a * t * t + b * t + c) - (p * t * t + q * t + r) * si / (1.0 + B * si)


def _debye_huckel_a(t_C):
    """Debye-Hueckel A (log10 basis, (kg/mol)^0.5); 0.4918 + 6.661e-4 t + 5.04e-6 t^2 (common practice)."""
    t = np.asarray(t_C, float)
    return 0.4918 + 6.661e-4 * t + 5.04e-6 * t * t


def free_ion_fraction(solute, molality, t_C):
    """Fraction of the salt present as free ions (1 without ``ion_pairing``, e.g. NaCl, KCl; < 1 for MgSO4).

    Solves (1 - alpha) = K gamma^2 alpha^2 m by bisection (60 steps, vectorised),
    for a symmetric salt (|z+| = |z-| = z): ionic strength z^2 alpha m,
    log10 gamma = -A z^2 sqrt(I) / (1 + sqrt(I)).

    Parameters
    ----------
    solute : str or Solute
        A registered salt; its ``ion_pairing`` (None: fully dissociated).
    molality : array_like
        mol/kg water.
    t_C : array_like
        Temperature (degC).

    Returns
    -------
    ndarray
        alpha in (0, 1].

    Examples
    --------
    >>> float(free_ion_fraction("NaCl", 1.0, 20.0))
    1.0
    >>> bool(free_ion_fraction("MgSO4", 1.0, 20.0) < 0.8)
    True
    """
    rec = _solute(solute)
    m, t = np.broadcast_arrays(np.asarray(molality, float), np.asarray(t_C, float))
    pair = rec.ion_pairing
    if pair is None:
        return np.ones(m.shape)
    z2 = rec.charge_product
    i_per_m = rec.ionic_strength_per_molality
    T = t + T0_K
    logk = pair.log10_k_25C - pair.enthalpy_J_per_mol / (np.log(10.0) * _R_GAS) * (1.0 / T - 1.0 / 298.15)
    K = 10.0 ** logk
    A = _debye_huckel_a(t)
    lo = np.zeros(m.shape)
    hi = np.ones(m.shape)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        si = np.sqrt(i_per_m * mid * m)
        gamma2 = 10.0 ** (-2.0 * z2 * A * si / (1.0 + si))
        f = (1.0 - mid) - K * gamma2 * mid * mid * m
        lo = np.where(f > 0.0, mid, lo)
        hi = np.where(f > 0.0, hi, mid)
    return 0.5 * (lo + hi)


def solution_density(solute, molality, T_K, p_abs_Pa=water.P_ATM_PA):
    """Solution density (kg/m^3) from Masson's rule with IAPWS-95 water density.

    Parameters
    ----------
    solute : str or Solute
        Record with ``apparent_molar_volume`` and ``molar_mass_kg_per_mol``.
    molality : array_like
        mol/kg water.
    T_K : array_like
        Temperature (K).
    p_abs_Pa : array_like, default 1 atm
        Absolute pressure (Pa).

    Returns
    -------
    ndarray
        Density (kg/m^3).

    Examples
    --------
    >>> round(float(solution_density("NaCl", 0.0, 298.15)), 2)   # pure water, IAPWS-95
    997.05
    """
    rec = _solute(solute)
    m = np.asarray(molality, float)
    v0, sv = rec.apparent_molar_volume
    vphi = (v0 + sv * np.sqrt(m)) * 1e-6
    return (1.0 + m * rec.molar_mass_kg_per_mol) / (1.0 / water.density(T_K, p_abs_Pa) + m * vphi)


def concentrated_factor(solute, molality):
    """Concentrated-solution factor G(m) = exp(-g m^2 / (1 + h m)) (dimensionless).

    Parameters
    ----------
    solute : str or Solute
        Record with ``concentrated_factor`` = (g, h).
    molality : array_like
        mol/kg water.

    Returns
    -------
    ndarray
        G, in (0, 1].

    Examples
    --------
    >>> float(concentrated_factor("KCl", 0.0))
    1.0
    """
    g, h = _solute(solute).concentrated_factor
    m = np.asarray(molality, float)
    return np.exp(-g * m * m / (1.0 + h * m))


def _kappa_1atm(solute, m, t_C, G=True):
    """Conductivity (S/m) at 1 atm for t >= 0 degC (steps 1-4 of the module docstring)."""
    rec = _solute(solute)
    alpha = free_ion_fraction(rec, m, t_C)
    ionic = rec.ionic_strength_per_molality * alpha * m
    lam = 0.0
    for ion in rec.ions:
        lam = lam + ion.count * ion_molar_conductivity(ion.name, t_C, ionic)
    rho = solution_density(rec, m, t_C + T0_K)
    c_mol_per_L = m * rho / (1.0 + m * rec.molar_mass_kg_per_mol) * 1e-3
    kappa = 0.1 * alpha * c_mol_per_L * lam   # S/m (1 mS/cm = 0.1 S/m)
    return kappa * concentrated_factor(rec, m) if G else kappa


def conductivity_kernel(solute, mass_fraction, t_C, pressure_MPa):
    """Brine conductivity (S/m); kernel without range checks.

    Parameters
    ----------
    solute : str or Solute
        A registered single-salt brine (name, alias or record).
    mass_fraction : array_like
        kg solute per kg solution.
    t_C : array_like
        Temperature (degC, ITS-90).
    pressure_MPa : array_like
        Sea (gauge) pressure (MPa).

    Returns
    -------
    ndarray
        Conductivity (S/m), broadcast shape.

    Examples
    --------
    >>> round(float(conductivity_kernel("NaCl", 0.01, 20.0, 0.0)), 3)   # CRC Handbook: 1.60 S/m
    1.548
    """
    rec = _solute(solute)
    w, t, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (mass_fraction, t_C, pressure_MPa)))
    m = w / (rec.molar_mass_kg_per_mol * (1.0 - w))
    t_ref = np.maximum(t, 0.0)
    kappa = _kappa_1atm(rec, m, t_ref)
    p_abs = p * 1e6 + water.P_ATM_PA
    needs = (t < 0.0) | (p > 0.0)
    if np.any(needs):
        ratio = water.walden_ratio(t + T0_K, p_abs, t_ref + T0_K, water.P_ATM_PA)
        kappa = np.where(needs, kappa * ratio, kappa)
    return kappa


def brine_conductivity(solute, salinity, t_C, pressure_MPa):
    """Brine conductivity (S/m) from salinity in the record's unit; the registry's ``conductivity_model``.

    :func:`conductivity_kernel` at mass fraction ``salinity * solute.salinity.to_mass_fraction``.

    Parameters
    ----------
    solute : str or Solute
        A registered single-salt brine.
    salinity : array_like
        Salinity in the record's unit (g/kg of solution for the built-in salts).
    t_C : array_like
        Temperature (degC, ITS-90).
    pressure_MPa : array_like
        Sea pressure (MPa).

    Returns
    -------
    ndarray
        Conductivity (S/m), broadcast shape.

    Examples
    --------
    >>> round(float(brine_conductivity("NaCl", 10.0, 20.0, 0.0)), 3)
    1.548
    """
    rec = _solute(solute)
    return conductivity_kernel(rec, salinity * rec.salinity.to_mass_fraction, t_C, pressure_MPa)


brine_conductivity.requires = ("molar_mass_kg_per_mol", "ions", "apparent_molar_volume", "concentrated_factor")


def fit_concentrated_factor(solutes=None):
    """Fit (g, h) of G(m) to each record's ``conductivity_calibration``; used by tools/brine_fit.py.

    Calibration data (20 degC, mass % -> mS/cm) are in the registry records: CRC
    Handbook "Electrical conductivity of aqueous solutions"; for NaCl also the
    saturated-NaCl standard (26.4 mass %, 226.0 mS/cm, Mettler-Toledo), for KCl
    the NIST 1.0 mol/kg standard (99.170 mS/cm; Wu et al. 1994).

    Parameters
    ----------
    solutes : iterable of str or Solute, optional
        Default: every registered solute with calibration data.

    Returns
    -------
    dict
        name -> (g, h), rounded to 6 decimals.
    """
    from scipy.optimize import least_squares
    records = [_solute(s) for s in (SOLUTES if solutes is None else solutes)]
    out = {}
    for rec in records:
        if rec.conductivity_calibration is None:
            continue
        pct, kap = (list(c) for c in zip(*rec.conductivity_calibration))
        w = np.array(pct) / 100.0
        m = w / (rec.molar_mass_kg_per_mol * (1.0 - w))
        raw = _kappa_1atm(rec, m, np.full(m.shape, 20.0), G=False) * 10.0  # mS/cm
        target = np.log(np.array(kap) / raw)

        def resid(x, m=m, target=target):
            return -x[0] * m * m / (1.0 + x[1] * m) - target

        # g, h >= 0: the factor can only lower the conductivity (G <= 1)
        sol = least_squares(resid, x0=[0.01, 0.1], bounds=([0.0, 0.0], [np.inf, np.inf]))
        out[rec.name] = (round(float(sol.x[0]), 6), round(float(sol.x[1]), 6))
    return out
