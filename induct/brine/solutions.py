"""Conductivity of single-salt brines (NaCl, KCl, MgSO4): ion-additive model with ion pairing.

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
from induct.brine.freezing import MOLAR_MASS, T0_K

# McCleskey et al. (2012) Table 1: a, b, c, p, q, r, B
_ION = {
    "Na+": (0.003763, 0.8770, 26.23, 0.00027, 1.141, 32.07, 1.7),
    "K+": (0.003046, 1.261, 40.70, 0.00535, 0.9316, 22.59, 1.5),
    "Mg2+": (0.01068, 1.695, 57.16, 0.02453, 1.915, 80.50, 2.1),
    "Cl-": (0.003817, 1.337, 40.99, 0.00613, 0.9469, 22.01, 1.5),
    "SO4 2-": (0.01037, 2.838, 82.37, 0.03324, 5.889, 193.5, 2.6),
}
_SALT_IONS = {"NaCl": ("Na+", "Cl-"), "KCl": ("K+", "Cl-"), "MgSO4": ("Mg2+", "SO4 2-")}
_CHARGE = {"NaCl": 1, "KCl": 1, "MgSO4": 2}

#: Apparent molar volume V0 (cm^3/mol) and Masson slope S_v (cm^3 kg^0.5 mol^-1.5) near 25 degC.
_VPHI = {"NaCl": (16.6, 1.9), "KCl": (26.8, 2.0), "MgSO4": (-7.2, 12.5)}

#: Concentrated-solution factor G(m) = exp(-g m^2 / (1 + h m)); from tools/brine_fit.py.
_CONC = {"NaCl": (0.012017, 0.0), "KCl": (1.5e-05, 4.471304), "MgSO4": (0.714311, 1.332731)}

#: MgSO4(aq) association: log10 K at 25 degC and enthalpy (J/mol), PHREEQC phreeqc.dat (from memory).
_LOGK_MGSO4_25 = 2.37
_DH_MGSO4 = 19037.0
_R_GAS = 8.314462618


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
    a, b, c, p, q, r, B = _ION[ion]
    t = np.asarray(t_C, float)
    si = np.sqrt(np.asarray(ionic_strength, float))
    return (a * t * t + b * t + c) - (p * t * t + q * t + r) * si / (1.0 + B * si)


def _debye_huckel_a(t_C):
    """Debye-Hueckel A (log10 basis, (kg/mol)^0.5); 0.4918 + 6.661e-4 t + 5.04e-6 t^2 (common practice)."""
    t = np.asarray(t_C, float)
    return 0.4918 + 6.661e-4 * t + 5.04e-6 * t * t


def free_ion_fraction(solute, molality, t_C):
    """Fraction of the salt present as free ions (1 for NaCl, KCl; < 1 for MgSO4).

    Solves (1 - alpha) = K gamma^2 alpha^2 m by bisection (60 steps, vectorised).

    Parameters
    ----------
    solute : {"NaCl", "KCl", "MgSO4"}
    molality : array_like
        mol/kg water.
    t_C : array_like
        Temperature (degC).

    Returns
    -------
    ndarray
        alpha in (0, 1].
    """
    m, t = np.broadcast_arrays(np.asarray(molality, float), np.asarray(t_C, float))
    if solute != "MgSO4":
        return np.ones(m.shape)
    T = t + T0_K
    logk = _LOGK_MGSO4_25 - _DH_MGSO4 / (np.log(10.0) * _R_GAS) * (1.0 / T - 1.0 / 298.15)
    K = 10.0 ** logk
    A = _debye_huckel_a(t)
    lo = np.zeros(m.shape)
    hi = np.ones(m.shape)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        si = np.sqrt(4.0 * mid * m)
        gamma2 = 10.0 ** (-2.0 * 4.0 * A * si / (1.0 + si))
        f = (1.0 - mid) - K * gamma2 * mid * mid * m
        lo = np.where(f > 0.0, mid, lo)
        hi = np.where(f > 0.0, hi, mid)
    return 0.5 * (lo + hi)


def solution_density(solute, molality, T_K, p_abs_Pa=water.P_ATM_PA):
    """Solution density (kg/m^3) from Masson's rule with IAPWS-95 water density."""
    m = np.asarray(molality, float)
    v0, sv = _VPHI[solute]
    vphi = (v0 + sv * np.sqrt(m)) * 1e-6
    return (1.0 + m * MOLAR_MASS[solute]) / (1.0 / water.density(T_K, p_abs_Pa) + m * vphi)


def concentrated_factor(solute, molality):
    """Concentrated-solution factor G(m) = exp(-g m^2 / (1 + h m)) (dimensionless)."""
    g, h = _CONC[solute]
    m = np.asarray(molality, float)
    return np.exp(-g * m * m / (1.0 + h * m))


def _kappa_1atm(solute, m, t_C, G=True):
    """Conductivity (S/m) at 1 atm for t >= 0 degC (steps 1-4 of the module docstring)."""
    cation, anion = _SALT_IONS[solute]
    z = _CHARGE[solute]
    alpha = free_ion_fraction(solute, m, t_C)
    ionic = z * z * alpha * m
    lam = ion_molar_conductivity(cation, t_C, ionic) + ion_molar_conductivity(anion, t_C, ionic)
    rho = solution_density(solute, m, t_C + T0_K)
    c_mol_per_L = m * rho / (1.0 + m * MOLAR_MASS[solute]) * 1e-3
    kappa = 0.1 * alpha * c_mol_per_L * lam   # S/m (1 mS/cm = 0.1 S/m)
    return kappa * concentrated_factor(solute, m) if G else kappa


def conductivity_kernel(solute, mass_fraction, t_C, pressure_MPa):
    """Brine conductivity (S/m); kernel without range checks.

    Parameters
    ----------
    solute : {"NaCl", "KCl", "MgSO4"}
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
    """
    w, t, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (mass_fraction, t_C, pressure_MPa)))
    m = w / (MOLAR_MASS[solute] * (1.0 - w))
    t_ref = np.maximum(t, 0.0)
    kappa = _kappa_1atm(solute, m, t_ref)
    p_abs = p * 1e6 + water.P_ATM_PA
    needs = (t < 0.0) | (p > 0.0)
    if np.any(needs):
        ratio = water.walden_ratio(t + T0_K, p_abs, t_ref + T0_K, water.P_ATM_PA)
        kappa = np.where(needs, kappa * ratio, kappa)
    return kappa


def fit_concentrated_factor():
    """Fit (g, h) of G(m) to the 20 degC data; used by tools/brine_fit.py. Returns a dict."""
    from scipy.optimize import least_squares

    # CRC Handbook, "Electrical conductivity of aqueous solutions", 20 degC: mass % -> mS/cm;
    # NaCl also the saturated-NaCl standard (26.4 mass %, 226.0 mS/cm at 20 degC, Mettler-Toledo);
    # KCl also the NIST 1.0 mol/kg standard at 20 degC (99.170 mS/cm; Wu et al. 1994).
    data = {
        "NaCl": ([0.5, 1, 2, 26.4], [8.2, 16.0, 30.2, 226.0]),
        "KCl": ([0.5, 1, 2, 5, 100 * 74.5513e-3 / 1.0745513], [8.2, 15.7, 29.5, 71.9, 99.170]),
        "MgSO4": ([0.5, 1, 2, 5, 10, 15, 20, 25], [4.1, 7.6, 13.3, 27.4, 42.7, 54.2, 51.1, 44.1]),
    }
    out = {}
    for solute, (pct, kap) in data.items():
        w = np.array(pct) / 100.0
        m = w / (MOLAR_MASS[solute] * (1.0 - w))
        raw = _kappa_1atm(solute, m, np.full(m.shape, 20.0), G=False) * 10.0  # mS/cm
        target = np.log(np.array(kap) / raw)

        def resid(x, m=m, target=target):
            return -x[0] * m * m / (1.0 + x[1] * m) - target

        # g, h >= 0: the factor can only lower the conductivity (G <= 1)
        sol = least_squares(resid, x0=[0.01, 0.1], bounds=([0.0, 0.0], [np.inf, np.inf]))
        out[solute] = (round(float(sol.x[0]), 6), round(float(sol.x[1]), 6))
    return out
