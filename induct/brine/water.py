"""Pure liquid water: density (IAPWS-95) and viscosity (IAPWS 2008), SI units.

These two properties drive the physical scaling used wherever a brine model is
carried beyond the range of its data (Walden's rule: the product of molar
conductivity and solvent viscosity is nearly constant, so at fixed composition
conductivity scales as ``rho_w / eta_w``; see :func:`walden_factor`).

Implemented from the published formulations:

* Density: IAPWS R6-95(2018), "Revised Release on the IAPWS Formulation 1995 for
  the Thermodynamic Properties of Ordinary Water Substance for General and
  Scientific Use"; Wagner & Pruss (2002), J. Phys. Chem. Ref. Data 31, 387.
  Only the residual Helmholtz energy is needed for p(rho, T). The two
  non-analytic critical-region terms (i = 55, 56) are omitted: their factor
  ``exp(-D (tau - 1)^2)`` with D >= 700 is below 1e-150 for T < 400 K, so they
  contribute nothing in double precision in the liquid range used here.
* Viscosity: IAPWS R12-08, "Release on the IAPWS Formulation 2008 for the
  Viscosity of Ordinary Water Substance"; Huber et al. (2009), J. Phys. Chem.
  Ref. Data 38, 101. The critical enhancement is set to 1 (the release's
  recommendation for industrial use; it matters only within ~1 K of the
  critical point).

Validity: the formulations are valid in the stable liquid from the melting
curve up to 1000 MPa; both releases state that they extrapolate reasonably
into the metastable (supercooled) liquid. This module is used for
233.15 K <= T <= 373.15 K and 0 <= p <= 1000 MPa (checked by the callers).
This is a kernel: inputs are not validated ("rubbish in, rubbish out").
"""

from __future__ import annotations

import numpy as np

#: IAPWS-95 critical parameters and specific gas constant.
T_CRIT_K = 647.096
RHO_CRIT_KG_M3 = 322.0
R_SPECIFIC_J_KG_K = 461.51805
#: Standard atmosphere (Pa); sea (gauge) pressure + this = absolute pressure.
P_ATM_PA = 101325.0

# --- IAPWS-95 residual part, Table 2 of the release -------------------------
_N1 = np.array([0.12533547935523e-1, 0.78957634722828e1, -0.87803203303561e1,
                0.31802509345418, -0.26145533859358, -0.78199751687981e-2,
                0.88089493102134e-2])
_D1 = np.array([1, 1, 1, 2, 2, 3, 4], dtype=float)
_T1 = np.array([-0.5, 0.875, 1.0, 0.5, 0.75, 0.375, 1.0])

_N2 = np.array([
    -0.66856572307965, 0.20433810950965, -0.66212605039687e-4,
    -0.19232721156002, -0.25709043003438, 0.16074868486251,
    -0.40092828925807e-1, 0.39343422603254e-6, -0.75941377088144e-5,
    0.56250979351888e-3, -0.15608652257135e-4, 0.11537996422951e-8,
    0.36582165144204e-6, -0.13251180074668e-11, -0.62639586912454e-9,
    -0.10793600908932, 0.17611491008752e-1, 0.22132295167546,
    -0.40247669763528, 0.58083399985759, 0.49969146990806e-2,
    -0.31358700712549e-1, -0.74315929710341, 0.47807329915480,
    0.20527940895948e-1, -0.13636435110343, 0.14180634400617e-1,
    0.83326504880713e-2, -0.29052336009585e-1, 0.38615085574206e-1,
    -0.20393486513704e-1, -0.16554050063734e-2, 0.19955571979541e-2,
    0.15870308324157e-3, -0.16388568342530e-4, 0.43613615723811e-1,
    0.34994005463765e-1, -0.76788197844621e-1, 0.22446277332006e-1,
    -0.62689710414685e-4, -0.55711118565645e-9, -0.19905718354408,
    0.31777497330738, -0.11841182425981])
_C2 = np.array([1] * 15 + [2] * 20 + [3] * 4 + [4] + [6] * 4, dtype=float)
_D2 = np.array([1, 1, 1, 2, 2, 3, 4, 4, 5, 7, 9, 10, 11, 13, 15, 1, 2, 2, 2, 3,
                4, 4, 4, 5, 6, 6, 7, 9, 9, 9, 9, 9, 10, 10, 12, 3, 4, 4, 5, 14,
                3, 6, 6, 6], dtype=float)
_T2 = np.array([4, 6, 12, 1, 5, 4, 2, 13, 9, 3, 4, 11, 4, 13, 1, 7, 1, 9, 10,
                10, 3, 7, 10, 10, 6, 10, 10, 1, 2, 3, 4, 8, 6, 9, 8, 16, 22, 23,
                23, 10, 50, 44, 46, 50], dtype=float)

_N3 = np.array([-0.31306260323435e2, 0.31546140237781e2, -0.25213154341695e4])
_T3 = np.array([0.0, 1.0, 4.0])
_ALPHA3 = 20.0
_BETA3 = np.array([150.0, 150.0, 250.0])
_GAMMA3 = np.array([1.21, 1.21, 1.25])
_D3 = 3.0

# --- IAPWS 2008 viscosity, Tables 1 and 2 -----------------------------------
_H0 = np.array([1.67752, 2.20462, 0.6366564, -0.241605])
_H1 = np.zeros((6, 7))
for _i, _j, _h in [(0, 0, 5.20094e-1), (1, 0, 8.50895e-2), (2, 0, -1.08374),
                   (3, 0, -2.89555e-1), (0, 1, 2.22531e-1), (1, 1, 9.99115e-1),
                   (2, 1, 1.88797), (3, 1, 1.26613), (5, 1, 1.20573e-1),
                   (0, 2, -2.81378e-1), (1, 2, -9.06851e-1), (2, 2, -7.72479e-1),
                   (3, 2, -4.89837e-1), (4, 2, -2.57040e-1), (0, 3, 1.61913e-1),
                   (1, 3, 2.57399e-1), (0, 4, -3.25372e-2), (3, 4, 6.98452e-2),
                   (4, 5, 8.72102e-3), (3, 6, -4.35673e-3), (5, 6, -5.93264e-4)]:
    _H1[_i, _j] = _h


def _phir_derivs(delta, tau):
    """delta * d(phi_r)/d(delta) and delta^2 * d2(phi_r)/d(delta)^2 (arrays)."""
    d = delta[..., None]
    t = tau[..., None]
    # polynomial terms
    a = _N1 * d ** _D1 * t ** _T1
    pd = np.sum(_D1 * a, axis=-1)
    pdd = np.sum(_D1 * (_D1 - 1.0) * a, axis=-1)
    # exponential terms: n d^D t^T exp(-d^c)
    dc = d ** _C2
    b = _N2 * d ** _D2 * t ** _T2 * np.exp(-dc)
    g = _D2 - _C2 * dc  # delta * d/d(delta) of log(term)
    pd = pd + np.sum(b * g, axis=-1)
    pdd = pdd + np.sum(b * (g * (g - 1.0) - _C2 * _C2 * dc), axis=-1)
    # Gaussian bell-shaped terms
    e = _N3 * d ** _D3 * t ** _T3 * np.exp(-_ALPHA3 * (d - 1.0) ** 2
                                           - _BETA3 * (t - _GAMMA3) ** 2)
    h = _D3 - 2.0 * _ALPHA3 * d * (d - 1.0)
    pd = pd + np.sum(e * h, axis=-1)
    pdd = pdd + np.sum(e * (h * (h - 1.0) - 2.0 * _ALPHA3 * d * d), axis=-1)
    return pd, pdd


def pressure_from_density(rho_kg_m3, T_K):
    """Absolute pressure (Pa) from density (kg/m^3) and temperature (K), IAPWS-95.

    Parameters
    ----------
    rho_kg_m3, T_K : array_like
        Density (kg/m^3) and temperature (K); broadcast together.

    Returns
    -------
    ndarray
        Pressure (Pa), broadcast shape.
    """
    rho, T = np.broadcast_arrays(np.asarray(rho_kg_m3, float), np.asarray(T_K, float))
    pd, _ = _phir_derivs(rho / RHO_CRIT_KG_M3, T_CRIT_K / T)
    return rho * R_SPECIFIC_J_KG_K * T * (1.0 + pd)


def density(T_K, p_abs_Pa):
    """Density of liquid water (kg/m^3) at temperature (K) and absolute pressure (Pa).

    Solves the IAPWS-95 equation p(rho, T) = p by Newton iteration on the liquid
    branch (start 1100 kg/m^3, converged to ~1e-13 relative).

    Parameters
    ----------
    T_K, p_abs_Pa : array_like
        Temperature (K) and absolute pressure (Pa); broadcast together.
        Intended range 233-373 K, 0-1000 MPa (liquid only).

    Returns
    -------
    ndarray
        Density (kg/m^3), broadcast shape.
    """
    T, p = np.broadcast_arrays(np.asarray(T_K, float), np.asarray(p_abs_Pa, float))
    tau = T_CRIT_K / T
    rho = np.full(T.shape, 1100.0)
    for _ in range(50):
        delta = rho / RHO_CRIT_KG_M3
        pd, pdd = _phir_derivs(delta, tau)
        rt = R_SPECIFIC_J_KG_K * T
        f = rho * rt * (1.0 + pd) - p
        dfdrho = rt * (1.0 + 2.0 * pd + pdd)
        step = f / dfdrho
        step = np.clip(step, -150.0, 150.0)
        rho = rho - step
        if np.all(np.abs(step) <= 1e-12 * rho):
            break
    return rho


def viscosity_from_density(T_K, rho_kg_m3):
    """Dynamic viscosity (Pa s) from temperature (K) and density (kg/m^3), IAPWS 2008.

    Parameters
    ----------
    T_K, rho_kg_m3 : array_like
        Temperature (K) and density (kg/m^3); broadcast together.

    Returns
    -------
    ndarray
        Viscosity (Pa s) with the critical enhancement mu_2 = 1.
    """
    T, rho = np.broadcast_arrays(np.asarray(T_K, float), np.asarray(rho_kg_m3, float))
    tb = T / T_CRIT_K
    rb = rho / RHO_CRIT_KG_M3
    mu0 = 100.0 * np.sqrt(tb) / (_H0[0] + _H0[1] / tb + _H0[2] / tb ** 2 + _H0[3] / tb ** 3)
    x = 1.0 / tb - 1.0
    y = rb - 1.0
    xi = x[..., None] ** np.arange(6)
    yj = y[..., None] ** np.arange(7)
    s = np.einsum("...i,ij,...j->...", xi, _H1, yj)
    return 1e-6 * mu0 * np.exp(rb * s)


def viscosity(T_K, p_abs_Pa):
    """Dynamic viscosity of liquid water (Pa s) at temperature (K) and absolute pressure (Pa).

    Parameters
    ----------
    T_K, p_abs_Pa : array_like
        Temperature (K) and absolute pressure (Pa); broadcast together.

    Returns
    -------
    ndarray
        Viscosity (Pa s).
    """
    return viscosity_from_density(T_K, density(T_K, p_abs_Pa))


def walden_factor(T_K, p_abs_Pa):
    """Walden scaling variable ``rho_w / eta_w`` (kg m^-3 Pa^-1 s^-1) of pure water.

    At fixed mass fraction of solute, the ion number density scales as the
    solution density (approximated by the water density) and the ionic mobility
    as the inverse solvent viscosity (Walden's rule: Lambda * eta = const).
    Ratios of this quantity between two states give the Walden estimate of the
    ratio of conductivities.

    Parameters
    ----------
    T_K, p_abs_Pa : array_like
        Temperature (K) and absolute pressure (Pa); broadcast together.

    Returns
    -------
    ndarray
        ``rho / eta`` (kg m^-3 Pa^-1 s^-1).
    """
    rho = density(T_K, p_abs_Pa)
    return rho / viscosity_from_density(T_K, rho)


#: Exponent s of the fractional Walden rule Lambda * eta^s = const used for
#: temperature scaling; fitted to PSS-78 (minimax error of the t = 2 -> -2 degC
#: extrapolation over SP 2-42, 0-100 MPa) by tools/brine_fit.py. Pressure scaling
#: uses s = 1 (plain Walden), which reproduces PSS-78's pressure factor to 1.5 %.
WALDEN_TEMPERATURE_EXPONENT = 0.87


def walden_ratio(T_K, p_abs_Pa, T_ref_K, p_ref_abs_Pa):
    """Walden estimate of kappa(T, p) / kappa(T_ref, p_ref) at fixed composition.

    ``[W(T, p_ref) / W(T_ref, p_ref)]**s * W(T, p) / W(T, p_ref)`` with
    W = rho_w / eta_w (:func:`walden_factor`) and s = WALDEN_TEMPERATURE_EXPONENT.

    Parameters
    ----------
    T_K, p_abs_Pa : array_like
        Target temperature (K) and absolute pressure (Pa).
    T_ref_K, p_ref_abs_Pa : array_like
        Reference temperature (K) and absolute pressure (Pa).

    Returns
    -------
    ndarray
        Conductivity ratio (dimensionless), broadcast shape.
    """
    w_t = walden_factor(T_K, p_ref_abs_Pa) / walden_factor(T_ref_K, p_ref_abs_Pa)
    w_p = walden_factor(T_K, p_abs_Pa) / walden_factor(T_K, p_ref_abs_Pa)
    return w_t ** WALDEN_TEMPERATURE_EXPONENT * w_p
