"""Seawater conductivity from Practical Salinity: PSS-78 with the Hill et al. (1986) extension.

Algorithms (implemented from the published formulas):

* PSS-78: UNESCO (1981), "The Practical Salinity Scale 1978 and the
  International Equation of State of Seawater 1980", UNESCO Tech. Pap. Mar.
  Sci. 36; Lewis & Perkin (1981), Deep-Sea Res. 28A, 307; Fofonoff & Millard
  (1983), UNESCO Tech. Pap. Mar. Sci. 44 (algorithm SAL78 and check values).
  SP = sum a_i Rt^(i/2) + f(t) sum b_i Rt^(i/2), f(t) = (t - 15)/(1 + k (t - 15)),
  Rt = R / (Rp rt), with rt(t) and Rp(R, t, p) as in the standard.
* Below SP = 2: Hill, Dauphinee & Woods (1986), IEEE J. Ocean. Eng. OE-11, 109,
  multiplied by the TEOS-10 "Hill ratio" that makes SP continuous at SP = 2
  (IOC, SCOR & IAPSO 2010, TEOS-10 Manual, appendix E; McDougall & Barker
  2011, GSW Toolbox). This is what TEOS-10's ``C_from_SP`` computes.
* Temperatures are ITS-90 on input and converted with t68 = 1.00024 t90.
  Pressure enters PSS-78 in dbar of sea (gauge) pressure.
* C(35, 15 degC IPTS-68, 0) = 42.914 mS/cm (Culkin & Smith 1980, IEEE J.
  Ocean. Eng. OE-5, 22).

Validity (PSS-78): 2 <= SP <= 42, -2 <= t68 <= 35 degC, 0 <= p <= 10000 dbar
(100 MPa); the Hill extension covers 0 <= SP < 2 over the same t and p.
The inverse C(SP, t, p) is obtained by Newton iteration on sqrt(Rt) with the
exact derivative, iterated to full double precision. This is a kernel: inputs
are not validated here (see :mod:`induct.brine.api`).
"""

from __future__ import annotations

import numpy as np

#: Conductivity of standard seawater SP = 35 at 15 degC (IPTS-68), p = 0 (S/m).
C3515_S_PER_M = 4.2914

_A = np.array([0.0080, -0.1692, 25.3851, 14.0941, -7.0261, 2.7081])
_B = np.array([0.0005, -0.0056, -0.0066, -0.0375, 0.0636, -0.0144])
_C = np.array([0.6766097, 2.00564e-2, 1.104259e-4, -6.9698e-7, 1.0031e-9])
_D1, _D2, _D3, _D4 = 3.426e-2, 4.464e-4, 4.215e-1, -3.107e-3
_E1, _E2, _E3 = 2.070e-5, -6.370e-10, 3.989e-15
_K = 0.0162

#: Validity of PSS-78 (SP, t90 degC, sea pressure MPa). The temperature limits
#: are stated in IPTS-68 in the standard; -2 and 35 degC t68 differ from t90 by
#: < 0.01 K and the t90 values are used here.
SP_MIN, SP_MAX = 2.0, 42.0
T_MIN_C, T_MAX_C = -2.0, 35.0
P_MAX_MPA = 100.0


def _f68(t68):
    return (t68 - 15.0) / (1.0 + _K * (t68 - 15.0))


def rt_ratio(t68):
    """PSS-78 rt(t): conductivity ratio of SP=35 seawater at t68 to that at 15 degC (p = 0)."""
    t = np.asarray(t68, float)
    return _C[0] + t * (_C[1] + t * (_C[2] + t * (_C[3] + t * _C[4])))


def rp_ratio(R, t68, p_dbar):
    """PSS-78 pressure factor Rp(R, t68, p) (dimensionless)."""
    R, t, p = (np.asarray(x, float) for x in (R, t68, p_dbar))
    return 1.0 + p * (_E1 + p * (_E2 + p * _E3)) / (
        1.0 + _D1 * t + _D2 * t * t + (_D3 + _D4 * t) * R)


def _sp78_poly(x, ft):
    """PSS-78 salinity polynomial and d/dx, x = sqrt(Rt)."""
    c = [_A[i] + ft * _B[i] for i in range(6)]
    s = c[0] + x * (c[1] + x * (c[2] + x * (c[3] + x * (c[4] + x * c[5]))))
    ds = c[1] + x * (2.0 * c[2] + x * (3.0 * c[3] + x * (4.0 * c[4] + x * 5.0 * c[5])))
    return s, ds


def _hill_raw(x, ft):
    """Hill et al. (1986) correction term subtracted from PSS-78, and its d/dx."""
    X = 400.0 * x * x
    y = 10.0 * x  # sqrt(100 Rt)
    part1 = 1.0 + X * (1.5 + X)
    part2 = 1.0 + y * (1.0 + y * (1.0 + y))
    corr = _A[0] / part1 + _B[0] * ft / part2
    dcorr = (-_A[0] * (1.5 + 2.0 * X) * 800.0 * x / part1 ** 2
             - _B[0] * ft * (10.0 + y * (20.0 + 30.0 * y)) / part2 ** 2)
    return corr, dcorr


def _newton_sqrt_rt(target, ft, hill_ratio=None, x0=None):
    """Solve SP(x) = target for x = sqrt(Rt) (vectorised Newton)."""
    x = np.sqrt(np.maximum(target, 0.0) / 35.0) if x0 is None else x0
    for _ in range(60):
        s, ds = _sp78_poly(x, ft)
        if hill_ratio is not None:
            c, dc = _hill_raw(x, ft)
            s = hill_ratio * (s - c)
            ds = hill_ratio * (ds - dc)
        step = (s - target) / ds
        x_new = np.maximum(x - step, 0.5 * x)
        done = np.abs(x_new - x) <= 4e-16 * np.maximum(x, 1e-300)
        x = x_new
        if np.all(done):
            break
    return x


def hill_ratio_at_sp2(t90_C):
    """TEOS-10 Hill ratio: 2 / (Hill et al. 1986 salinity at the Rt where PSS-78 gives 2).

    Parameters
    ----------
    t90_C : array_like
        In-situ temperature (degC, ITS-90).

    Returns
    -------
    ndarray
        Hill ratio (dimensionless, close to 1).
    """
    ft = _f68(1.00024 * np.asarray(t90_C, float))
    x2 = _newton_sqrt_rt(np.full(ft.shape, 2.0), ft)
    s, _ = _sp78_poly(x2, ft)
    c, _ = _hill_raw(x2, ft)
    return 2.0 / (s - c)


def practical_salinity(R, t90_C, p_dbar):
    """Practical Salinity from conductivity ratio R = C / C(35, 15, 0) (PSS-78 + Hill).

    Parameters
    ----------
    R : array_like
        Conductivity ratio (dimensionless).
    t90_C : array_like
        In-situ temperature (degC, ITS-90).
    p_dbar : array_like
        Sea pressure (dbar).

    Returns
    -------
    ndarray
        Practical Salinity (dimensionless), broadcast shape.
    """
    R, t90, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (R, t90_C, p_dbar)))
    t68 = 1.00024 * t90
    rt = R / (rp_ratio(R, t68, p) * rt_ratio(t68))
    x = np.sqrt(rt)
    ft = _f68(t68)
    sp, _ = _sp78_poly(x, ft)
    low = sp < 2.0
    if np.any(low):
        c, _ = _hill_raw(x, ft)
        sp = np.where(low, hill_ratio_at_sp2(t90) * (sp - c), sp)
    return sp


def conductivity_ratio(SP, t90_C, p_dbar):
    """Conductivity ratio R = C(SP, t, p) / C(35, 15 degC IPTS-68, 0), inverse of PSS-78 (+Hill).

    Parameters
    ----------
    SP : array_like
        Practical Salinity, 0 <= SP (kernel: no range check).
    t90_C : array_like
        In-situ temperature (degC, ITS-90).
    p_dbar : array_like
        Sea pressure (dbar).

    Returns
    -------
    ndarray
        Conductivity ratio R (dimensionless), broadcast shape.
    """
    SP, t90, p = np.broadcast_arrays(*(np.asarray(v, float) for v in (SP, t90_C, p_dbar)))
    t68 = 1.00024 * t90
    ft = _f68(t68)
    x = _newton_sqrt_rt(SP, ft)
    low = SP < 2.0
    if np.any(low):
        hr = hill_ratio_at_sp2(t90)
        x_low = _newton_sqrt_rt(SP, ft, hill_ratio=hr, x0=np.maximum(x, 0.02))
        x = np.where(low, x_low, x)
    rt = x * x
    # R from Rt: R = Rt rt(t) Rp(R) is a quadratic in R (UNESCO 44, SAL78 inverse).
    aa = _D3 + _D4 * t68
    bb = 1.0 + t68 * (_D1 + _D2 * t68)
    cc = p * (_E1 + p * (_E2 + _E3 * p))
    q = rt_ratio(t68) * rt
    dd = bb - aa * q
    ee = q * aa * (bb + cc)
    return 0.5 * (np.sqrt(dd * dd + 4.0 * ee) - dd) / aa


def conductivity_pss78(SP, t90_C, pressure_MPa):
    """Seawater conductivity (S/m) from Practical Salinity, ITS-90 temperature and sea pressure.

    Kernel form of the PSS-78 inverse (with the Hill et al. 1986 extension for
    SP < 2); no range checks. Valid for 0 <= SP <= 42, -2 <= t <= 35 degC,
    0 <= p <= 100 MPa.

    Parameters
    ----------
    SP : array_like
        Practical Salinity (dimensionless).
    t90_C : array_like
        In-situ temperature (degC, ITS-90).
    pressure_MPa : array_like
        Sea (gauge) pressure (MPa).

    Returns
    -------
    ndarray
        Conductivity (S/m), broadcast shape.
    """
    return C3515_S_PER_M * conductivity_ratio(SP, t90_C, 100.0 * np.asarray(pressure_MPa, float))
