"""Freezing points: seawater vs TEOS-10 gsw, IAPWS R14-08 melting curves, brine tables."""

import gsw
import numpy as np
import pytest

from induct import brine
from induct.brine import freezing
from induct.brine.flags import ExtrapolationFlag, ExtrapolationWarning


def test_seawater_vs_gsw_t_freezing():
    # TEOS-10 gsw.t_freezing(SA, p, saturation_fraction=0) (IOC, SCOR & IAPSO 2010), SA = 35.16504/35 SP.
    # Issue #3: within 0.05 K up to 100 MPa. Measured worst ~0.010 K (at SP 100).
    rng = np.random.default_rng(42)
    n = 20000
    sp = rng.uniform(0.0, 100.0, n)
    p = rng.uniform(0.0, 100.0, n)
    got = brine.freezing_point("seawater", sp, p)
    ref = gsw.t_freezing(sp * 35.16504 / 35.0, p * 100.0, 0.0)
    err = np.abs(got - ref)
    i = int(np.argmax(err))
    assert err[i] <= 0.05, f"worst |dT| {err[i]:.4f} K at SP={sp[i]:.3f}, p={p[i]:.2f} MPa: {got[i]:.5f} vs {ref[i]:.5f}"
    # within the oceanographic range the polynomial is far better (TEOS-10 states +-6e-4 K)
    sel = sp <= 42.0
    assert err[sel].max() <= 2e-3, err[sel].max()


def test_seawater_check_values():
    # shared/domain/brine.md: SP=35 (SA=35.165), p=10000 dbar, air-free -> -10.95 degC (TEOS-10)
    assert abs(float(brine.freezing_point("seawater", 35.0, 100.0, warn=False)) + 10.95) < 0.01
    # UNESCO (1983) / Millero (1978): S=40, p=500 dbar -> -2.588567 degC (a different, older
    # formula; agreement within 0.01 K expected at low pressure)
    assert abs(float(brine.freezing_point("seawater", 40.0, 5.0)) + 2.588567) < 0.01


@pytest.mark.parametrize("phase, T, p_MPa", [
    # IAPWS R14-08(2011) Table 3 check values, and shared/domain/brine.md
    ("Ih", 260.0, 138.268), ("Ih", 265.0, 92.3367), ("Ih", 256.0, 171.4957),
    ("III", 254.0, 268.685), ("V", 265.0, 479.640), ("VI", 320.0, 1356.76),
])
def test_iapws_r14_melting_curves(phase, T, p_MPa):
    got = float(freezing.melting_pressure_MPa(T, phase))
    digits = len(str(p_MPa).split(".")[1])
    assert abs(got - p_MPa) <= 0.6 * 10.0 ** -digits, (phase, T, got, p_MPa)
    # the inverse used for freezing points returns T (stable phase at that pressure)
    assert abs(float(freezing.melting_temperature_K(got)) - T) < 1e-8, (phase, T)


def test_iapws_triple_points_and_pure_water():
    # Ih-III-liquid triple point 251.165 K, 208.566 MPa (IAPWS R14-08); 1 atm melting 273.1525 K
    assert abs(float(freezing.melting_pressure_MPa(251.165, "Ih")) - 208.566) < 1e-3
    assert abs(float(freezing.melting_temperature_K(0.101325)) - 273.152519) < 2e-6
    # pure water from the brine API agrees with gsw.t_freezing(0, p, 0) within 1e-3 K to 100 MPa
    p = np.linspace(0.0, 100.0, 11)
    for solute in ("NaCl", "KCl", "MgSO4"):
        got = brine.freezing_point(solute, 0.0, p)
        ref = gsw.t_freezing(0.0, 100.0 * p, 0.0)
        assert np.max(np.abs(got - ref)) < 1e-3, solute


@pytest.mark.parametrize("solute, molality, depression_K, tol", [
    # Smithsonian Physical Tables (Forsythe 1956) via CRC Handbook, "Freezing point lowering by
    # electrolytes in aqueous solution"; table values have 2 decimals. KCl/MgSO4 are fitted to it.
    # NaCl uses Bodnar (1993), a fluid-inclusion fit (+-0.05 mass %, i.e. ~0.1 K): 0.1 K tolerance,
    # measured worst 0.089 K at 0.75 mol/kg.
    ("NaCl", [0.05, 0.10, 0.25, 0.50, 0.75], [0.18, 0.35, 0.85, 1.68, 2.60], 0.10),
    ("KCl", [0.05, 0.10, 0.25, 0.50, 0.75, 1.0, 1.5, 2.0, 2.5, 3.0],
     [0.17, 0.35, 0.86, 1.68, 2.49, 3.29, 4.88, 6.50, 8.14, 9.77], 0.03),
    ("MgSO4", [0.05, 0.10, 0.25, 0.50, 0.75, 1.0, 1.5], [0.13, 0.24, 0.55, 1.01, 1.50, 2.08, 3.41], 0.03),
])
def test_brine_depressions_smithsonian(solute, molality, depression_K, tol):
    m = np.array(molality)
    M = freezing.MOLAR_MASS[solute]
    g = 1e3 * m * M / (1.0 + m * M)
    got = freezing.water_freezing_point_C(0.0) - brine.freezing_point(solute, g, 0.0)
    err = np.abs(got - np.array(depression_K))
    i = int(np.argmax(err))
    assert err[i] <= tol, f"{solute}: worst {err[i]:.3f} K at {m[i]} mol/kg: {got[i]:.3f} vs {depression_K[i]}"


def test_nacl_bodnar_1993():
    # Bodnar (1993), GCA 57, 683: mass % = 1.78 th - 0.0442 th^2 + 0.000557 th^3; eutectic -21.2 degC at 23.2 %
    th = np.array([1.0, 5.0, 10.0, 15.0, 21.2])
    pct = 1.78 * th - 0.0442 * th ** 2 + 0.000557 * th ** 3
    got = freezing.brine_depression_1atm("NaCl", pct / 100.0)
    np.testing.assert_allclose(got, th, atol=1e-9)
    assert abs(float(brine.freezing_point("NaCl", 232.0)) + 21.2) < 0.1


def test_kcl_eutectic():
    # H2O-KCl eutectic: 19.87 mass % at -10.8 degC (Brady 2009 phase diagram); DSC gives -11.1 degC
    # at 19.5 % (J. Chin. Inst. Chem. Eng. 33, 469, 2002). Within 0.3 K of -10.8.
    assert abs(float(brine.freezing_point("KCl", 198.7)) + 10.8) < 0.3


def test_brine_pressure_scaling():
    # Brines under pressure: depression scaled like TEOS-10 seawater's (+2.4 % at 100 MPa here)
    d0 = freezing.water_freezing_point_C(0.0) - brine.freezing_point("NaCl", 100.0, 0.0)
    d100 = freezing.water_freezing_point_C(100.0) - brine.freezing_point("NaCl", 100.0, 100.0)
    sw = (gsw.t_freezing(0, 1e4, 0) - gsw.t_freezing(35.16504, 1e4, 0)) / (
        gsw.t_freezing(0, 0, 0) - gsw.t_freezing(35.16504, 0, 0))
    assert abs(d100 / d0 - sw) < 2e-3, (d100 / d0, sw)


def test_deep_flag_and_warning():
    with pytest.warns(ExtrapolationWarning, match="DEEP: 2"):
        tf, f = brine.freezing_point("seawater", 35.0, [50.0, 150.0, 400.0], return_flags=True)
    assert list(f) == [0, int(ExtrapolationFlag.DEEP), int(ExtrapolationFlag.DEEP)]
    # continuity at 100 MPa and the ice Ih/III cusp near 209 MPa (coldest liquid there)
    a, b = brine.freezing_point("seawater", 35.0, [100.0 - 1e-9, 100.0 + 1e-9], warn=False)
    assert abs(a - b) < 1e-6
    t = brine.freezing_point("seawater", 35.0, np.linspace(150.0, 300.0, 151), warn=False)
    assert 205.0 < np.linspace(150.0, 300.0, 151)[np.argmin(t)] < 212.0


@pytest.mark.parametrize("solute, salinity, pressure, match", [
    ("NaCl", 250.0, 0.0, r"salinity_g_per_kg=250 .*\[0, 232\]"),
    ("MgSO4", 180.0, 0.0, r"salinity_g_per_kg=180 .*eutectic"),
    ("KCl", -1.0, 0.0, r"salinity_g_per_kg=-1 is negative"),
    ("seawater", 101.0, 0.0, r"salinity_g_per_kg=101 .*\[0, 100\]"),
    ("seawater", 35.0, 1200.0, r"pressure_MPa=1200 .*\[0, 1000\]"),
    ("seawater", 35.0, np.nan, r"pressure_MPa must be finite"),
    ("brine", 35.0, 0.0, r"solute must be one of"),
])
def test_bad_input(solute, salinity, pressure, match):
    with pytest.raises(ValueError, match=match):
        brine.freezing_point(solute, salinity, pressure)
