"""Solute registry: complete and consistent records, a throwaway solute, and a regression check.

(a) every registered record is complete and consistent (problems() empty, names and aliases unique,
    limits ordered, saturation table closed at the eutectic, conductivity finite and unflagged at the
    record's reference point) and each built-in reproduces a published value;
(b) a throwaway solute (a copy of KCl under another name, registered inside the test and removed after)
    is accepted by induct.brine.conductivity, freezing_point and the CLI without any other edit;
(c) the refactored code reproduces the values of the previous implementation on a grid.
"""

import dataclasses
import math

import numpy as np
import pytest

from induct import brine
from induct.brine import limits, solutions
from induct.brine.registry import SOLUTES, get_solute, register_solute, unregister_solute
from induct.cli.main import main


def check_close(got, ref, rtol, atol, label, inputs):
    """Compare arrays; on failure report the worst point with its inputs."""
    got, ref = np.asarray(got, float), np.asarray(ref, float)
    err = np.abs(got - ref)
    excess = err - (atol + rtol * np.abs(ref))
    i = int(np.argmax(excess))
    worst = {k: np.asarray(v).ravel()[i] for k, v in inputs.items()}
    assert excess.ravel()[i] <= 0.0, (f"{label}: worst |diff| {err.ravel()[i]:.3e} (allowed {atol:g} + {rtol:g} rel.) "
                                      f"at {worst}: got {got.ravel()[i]!r}, reference {ref.ravel()[i]!r}")


# ---------------------------------------------------------------------------------------------
# (a) records complete and consistent
# ---------------------------------------------------------------------------------------------
def test_builtin_solutes_and_solutes_iteration():
    # The tuple of names callers used before the registry, in the same order.
    assert tuple(SOLUTES)[:4] == ("seawater", "NaCl", "MgSO4", "KCl")
    assert ", ".join(brine.SOLUTES).startswith("seawater, NaCl, MgSO4, KCl")
    assert brine.SOLUTES is SOLUTES and brine.get_solute is get_solute


def test_names_and_aliases_unique_across_registry():
    seen = {}
    for name, rec in SOLUTES.items():
        assert rec.name == name
        for key in rec.lookup_names:
            assert key not in seen, f"{key!r} used by {seen.get(key)!r} and {name!r}"
            seen[key] = name
        for key in (rec.name, *rec.aliases):
            assert get_solute(key) is rec and get_solute(key.upper()) is rec and get_solute(key.lower()) is rec


def test_unknown_name_lists_the_registered_solutes():
    with pytest.raises(ValueError, match="solute must be one of " + ", ".join(SOLUTES)):
        get_solute("CaCl2")
    with pytest.raises(ValueError, match="solute must be one of"):
        get_solute(42)


@pytest.mark.parametrize("name", list(SOLUTES))
def test_record_complete_and_consistent(name):
    rec = SOLUTES[name]
    assert rec.problems() == [], rec.problems()
    assert rec.description and rec.sources and all(isinstance(s, str) and s for s in rec.sources)
    sal = rec.salinity
    assert sal.unit and sal.label and sal.meaning
    assert sal.to_mass_fraction * sal.from_mass_fraction == pytest.approx(1.0, rel=1e-15)
    for f in ("conductivity_model", "extrapolation_flags", "freezing_model"):
        assert callable(getattr(rec, f)), f

    # limits ordered: reference range (no flag) inside the hard range
    lim = rec.limits
    t_lo, t_hi = lim.temperature_C
    ref_lo, ref_hi = lim.reference_temperature_C
    assert t_lo < t_hi and t_lo <= ref_lo < ref_hi <= t_hi, (lim.temperature_C, lim.reference_temperature_C)
    assert lim.pressure_MPa[0] == 0.0 < lim.reference_pressure_max_MPa <= lim.pressure_MPa[1]
    assert 0.0 < lim.freezing_reference_pressure_max_MPa <= lim.pressure_MPa[1]
    assert 0.0 < rec.freezing_salinity_max
    if lim.salinity_max is not None:
        assert 0.0 < lim.reference_salinity_max <= lim.salinity_max
        assert rec.freezing_salinity_max <= lim.salinity_max

    # saturation table: temperatures increasing from the eutectic, which lies on the ice liquidus
    if lim.saturation_w is not None:
        t_sat = np.array([limits.eutectic_temperature_C(rec), *lim.saturation_t_C[1:]]) \
            if lim.saturation_t_C[0] is None else np.array(lim.saturation_t_C)
        assert np.all(np.diff(t_sat) > 0.0), t_sat
        assert all(0.0 < w < 1.0 for w in lim.saturation_w)
        if rec.eutectic_mass_fraction is not None:
            assert lim.saturation_w[0] == rec.eutectic_mass_fraction
            t_eut = float(brine.freezing_point(name, rec.freezing_salinity_max, 0.0))
            assert abs(t_eut - t_sat[0]) < 1e-9, (t_eut, t_sat[0])

    # composition: neutral salt made of ions the conductivity model knows
    if rec.ions:
        assert rec.molar_mass_kg_per_mol > 0.0
        assert sum(ion.count * ion.charge for ion in rec.ions) == 0
        assert all(ion.name in solutions.MCCLESKEY_IONS for ion in rec.ions)
        assert rec.nu == sum(ion.count for ion in rec.ions)

    # conductivity finite, positive and unflagged at the record's reference point
    s_ref, t_ref, p_ref = rec.reference_point
    k, flags = brine.conductivity(name, s_ref, t_ref, p_ref, return_flags=True, warn=False)
    assert math.isfinite(float(k)) and float(k) > 0.0 and int(flags) == 0, (float(k), int(flags))
    if s_ref <= rec.freezing_salinity_max:
        assert float(brine.freezing_point(name, s_ref, p_ref)) < t_ref


def _g_per_kg(rec, molality):
    mm = rec.molar_mass_kg_per_mol * molality
    return 1e3 * mm / (1.0 + mm)


@pytest.mark.parametrize("name, salinity, t_C, ref_S_per_m, rtol, source", [
    # PSS-78 defining value: C(35, 15 degC IPTS-68, 0) = 42.914 mS/cm (Culkin & Smith 1980, IEEE J. Ocean.
    # Eng. OE-5, 22); t90 = t68 / 1.00024. The model reproduces the definition to rounding.
    ("seawater", 35.0, 15.0 / 1.00024, 4.2914, 1e-6, "Culkin & Smith 1980"),
    # CRC Handbook, "Electrical conductivity of aqueous solutions", 20 degC, 1 mass % NaCl 16.0 mS/cm; 5 %.
    ("NaCl", 10.0, 20.0, 1.60, 0.05, "CRC Handbook"),
    # CRC Handbook, same table, 5 mass % MgSO4 27.4 mS/cm; 10 % (the model's stated agreement).
    ("MgSO4", 50.0, 20.0, 2.74, 0.10, "CRC Handbook"),
    # NIST KCl standard 1.0 mol/kg at 25 degC, 108620 uS/cm (Wu et al. 1994, J. Res. NIST 99, 241); 3 %.
    ("KCl", None, 25.0, 10.862, 0.03, "Wu et al. 1994"),
])
def test_builtin_reference_values(name, salinity, t_C, ref_S_per_m, rtol, source):
    rec = get_solute(name)
    s = _g_per_kg(rec, 1.0) if salinity is None else salinity
    got = float(brine.conductivity(name, s, t_C, 0.0))
    assert abs(got / ref_S_per_m - 1.0) <= rtol, f"{name} vs {source}: {got:.6g} S/m, reference {ref_S_per_m} S/m"


# ---------------------------------------------------------------------------------------------
# (b) a throwaway solute: registered in the test, no other edit, removed after
# ---------------------------------------------------------------------------------------------
@pytest.fixture
def throwaway():
    added = []

    def add(record):
        added.append(register_solute(record).name)
        return record

    yield add
    for name in added:
        if name in SOLUTES:
            unregister_solute(name)


def test_throwaway_copy_of_kcl_works_everywhere(throwaway, capsys):
    kcl = get_solute("KCl")
    before = tuple(SOLUTES)
    throwaway(dataclasses.replace(kcl, name="TestSalt", aliases=("test salt",)))
    assert tuple(SOLUTES) == before + ("TestSalt",)
    # Same record data as KCl -> identical results (exact), through the public API only.
    g = np.array([50.0, 1.0, 150.0, 190.0])
    t = np.array([-1.0, 5.0, 20.0, 45.0])
    p = np.array([0.0, 150.0, 30.0, 400.0])
    k_new, f_new = brine.conductivity("test salt", g, t, p, return_flags=True, warn=False)
    k_ref, f_ref = brine.conductivity("KCl", g, t, p, return_flags=True, warn=False)
    np.testing.assert_array_equal(k_new, k_ref)
    np.testing.assert_array_equal(f_new, f_ref)
    assert list(f_ref) == [int(brine.ExtrapolationFlag.COLD), int(brine.ExtrapolationFlag.DEEP), 0,
                           int(brine.ExtrapolationFlag.DEEP)]
    np.testing.assert_array_equal(brine.freezing_point("TESTSALT", g, p, warn=False),
                                  brine.freezing_point("KCl", g, p, warn=False))
    # its limits and messages come from the record
    with pytest.raises(ValueError, match=r"above saturation of TestSalt at 10 degC"):
        brine.conductivity("TestSalt", 280.0, 10.0)
    with pytest.raises(ValueError, match=r"ice liquidus of TestSalt"):
        brine.freezing_point("TestSalt", 250.0)
    # the CLI accepts it (canonical name, g/kg column)
    assert main(["brine", "--solute", "test salt", "--salinity", "50", "--temperature", "5"]) == 0
    out = capsys.readouterr().out
    assert "solute TestSalt" in out and "[g/kg]" in out
    # removed again: unknown, and the error lists the remaining names
    unregister_solute("TestSalt")
    assert tuple(SOLUTES) == before
    with pytest.raises(ValueError, match="solute must be one of " + ", ".join(before) + "; got 'TestSalt'"):
        brine.conductivity("TestSalt", 10.0, 5.0)


def test_throwaway_record_data_is_what_the_models_use(throwaway):
    # A KCl copy with twice the molar mass: the freezing-point depression is colligative, a function of
    # molality only (common practice), so at equal molality both records freeze at the same temperature
    # (to 1e-9 K, the Newton tolerance), while the mass fractions differ -- the record's molar mass is used.
    kcl = get_solute("KCl")
    heavy = throwaway(dataclasses.replace(kcl, name="HeavyTestSalt", aliases=(),
                                          molar_mass_kg_per_mol=2.0 * kcl.molar_mass_kg_per_mol))
    m = np.array([0.1, 0.5, 1.0])
    p = np.array([0.0, 50.0, 100.0])
    g_kcl, g_heavy = _g_per_kg(kcl, m), _g_per_kg(heavy, m)
    assert np.all(g_heavy > 1.5 * g_kcl)
    check_close(brine.freezing_point("HeavyTestSalt", g_heavy, p), brine.freezing_point("KCl", g_kcl, p),
                0.0, 1e-9, "colligative freezing point", {"molality": m, "p": p})


def test_register_refuses_clashes_and_incomplete_records():
    kcl = get_solute("KCl")
    with pytest.raises(ValueError, match="already registered"):
        register_solute(dataclasses.replace(kcl, name="kcl-2", aliases=("KCL",)))
    with pytest.raises(ValueError, match="needs eutectic_mass_fraction"):
        register_solute(dataclasses.replace(kcl, name="BrokenSalt", aliases=(), eutectic_mass_fraction=None))
    with pytest.raises(TypeError):
        register_solute("NaCl")
    assert "kcl-2" not in SOLUTES and "BrokenSalt" not in SOLUTES


# ---------------------------------------------------------------------------------------------
# (c) regression: values of the previous implementation
# ---------------------------------------------------------------------------------------------
# Values of the previous implementation, regression check: computed with the code before the
# registry refactor (commit d1965d8, per-solute dictionaries) and pasted here with 15 significant
# digits; the grids cover every model branch (PSS-78, Hill, COLD/WARM/DEEP/SALTY extrapolation,
# McCleskey + ion pairing, Walden continuation, Bodnar and Pitzer freezing points, eutectics,
# saturation tables). Each solute's points are evaluated in one array call, as when they were recorded.
# Tolerance: 1e-12 relative (the literals carry 5e-15; the rest is room for platform rounding in the
# iterative solvers) plus, for temperatures, 1e-10 K absolute (degC = K - 273.15 cancels digits near 0).
# A changed coefficient or formula moves these values by far more. Flags must match exactly.
CONDUCTIVITY = {  # solute: (salinity, temperature_C, pressure_MPa, conductivity_S_per_m, flags)
    'seawater': [
        (0.5, -3, 50, 0.0537182843206409, 1),
        (0.5, -3, 250, 0.0586027590124659, 3),
        (0.5, 0, 0, 0.0539113833814957, 0),
        (0.5, 0, 50, 0.0586323668936371, 0),
        (0.5, 0, 250, 0.0631938658306375, 2),
        (0.5, 10, 0, 0.0717717447523665, 0),
        (0.5, 10, 50, 0.0763053905263317, 0),
        (0.5, 10, 250, 0.0796913521607084, 2),
        (0.5, 38, 0, 0.129065147906284, 8),
        (0.5, 38, 50, 0.132865014672863, 8),
        (0.5, 38, 250, 0.131684709713385, 10),
        (0.5, 38, 800, 0.0965850498703808, 10),
        (35, -3, 50, 2.84570411143733, 1),
        (35, -3, 250, 3.06426280921967, 3),
        (35, 0, 0, 2.90360286658, 0),
        (35, 0, 50, 3.09964833652302, 0),
        (35, 0, 250, 3.3009095220929, 2),
        (35, 10, 0, 3.80897061839157, 0),
        (35, 10, 50, 4.00052504886455, 0),
        (35, 10, 250, 4.14486857688491, 2),
        (35, 38, 0, 6.70422416912664, 8),
        (35, 38, 50, 6.87057139711378, 8),
        (35, 38, 250, 6.78915121290472, 10),
        (35, 38, 800, 4.97954933342809, 10),
        (60, -3, 0, 4.33962470384448, 5),
        (60, -3, 50, 4.6527188591833, 5),
        (60, -3, 250, 5.00167834490907, 7),
        (60, 0, 0, 4.7582648595986, 4),
        (60, 0, 50, 5.06687406507565, 4),
        (60, 0, 250, 5.38748223333443, 6),
        (60, 10, 0, 6.21877320304323, 4),
        (60, 10, 50, 6.52055292180291, 4),
        (60, 10, 250, 6.74857825649796, 6),
        (60, 10, 800, 4.49491501892211, 6),
        (60, 38, 0, 10.8936938135396, 12),
        (60, 38, 50, 11.1565605567966, 12),
        (60, 38, 250, 11.0195163566811, 14),
        (60, 38, 800, 8.08233954552533, 14),
        (90, -3, 0, 6.27867281771258, 5),
        (90, -3, 50, 6.7316649303183, 5),
        (90, -3, 250, 7.23654786076349, 7),
        (90, 0, 0, 6.88437140819385, 4),
        (90, 0, 50, 7.33087458806746, 4),
        (90, 0, 250, 7.79473815428776, 6),
        (90, 10, 0, 8.97489805022591, 4),
        (90, 10, 50, 9.41042482070994, 4),
        (90, 10, 250, 9.73950968438614, 6),
        (90, 10, 800, 6.4870357419553, 6),
        (90, 38, 0, 15.6743292140214, 12),
        (90, 38, 50, 16.0525535283588, 12),
        (90, 38, 250, 15.8553682626216, 14),
        (90, 38, 800, 11.6292281593791, 14),
    ],
    'NaCl': [
        (5, -5, 100, 0.478986490022681, 1),
        (5, -5, 400, 0.454351898535637, 3),
        (5, 0, 0, 0.484646894230797, 0),
        (5, 0, 100, 0.546736315351019, 0),
        (5, 0, 400, 0.514342547698855, 2),
        (5, 20, 0, 0.813519669595161, 0),
        (5, 20, 100, 0.854508426101596, 0),
        (5, 20, 400, 0.788936505255705, 2),
        (5, 60, 0, 1.577927829864, 0),
        (5, 60, 100, 1.5553055833378, 0),
        (5, 60, 400, 1.39004708086431, 2),
        (150, -5, 0, 9.24330722552277, 1),
        (150, -5, 100, 10.7264186867061, 1),
        (150, -5, 400, 10.1747518903138, 3),
        (150, 0, 0, 10.8531777221631, 0),
        (150, 0, 100, 12.2436076002985, 0),
        (150, 0, 400, 11.5181818901484, 2),
        (150, 20, 0, 17.6993796347366, 0),
        (150, 20, 100, 18.5911534778008, 0),
        (150, 20, 400, 17.1645348429891, 2),
        (150, 60, 0, 33.6970334076138, 0),
        (150, 60, 100, 33.2139298191472, 0),
        (150, 60, 400, 29.6847942190601, 2),
        (230, -25, 100, 6.85391538145457, 1),
        (230, -25, 400, 7.12238240218788, 3),
        (230, -5, 0, 11.7553972637627, 1),
        (230, -5, 100, 13.6415797726064, 1),
        (230, -5, 400, 12.9399843165004, 3),
        (230, 0, 0, 13.8027886107649, 0),
        (230, 0, 100, 15.5711010974206, 0),
        (230, 0, 400, 14.6485235826741, 2),
        (230, 20, 0, 22.4041096622479, 0),
        (230, 20, 100, 23.5329288291481, 0),
        (230, 20, 400, 21.7270960259577, 2),
        (230, 60, 0, 42.5350951209965, 0),
        (230, 60, 100, 41.9252830689931, 0),
        (230, 60, 400, 37.4705253866542, 2),
        (260, 0, 0, 13.9704683439736, 0),
        (260, 0, 100, 15.7602627336239, 0),
        (260, 0, 400, 14.8264775161515, 2),
        (260, 20, 0, 22.6449098345513, 0),
        (260, 20, 100, 23.7858615902483, 0),
        (260, 20, 400, 21.9606196314737, 2),
        (260, 60, 0, 42.9595158407666, 0),
        (260, 60, 100, 42.3436190046738, 0),
        (260, 60, 400, 37.8444111699004, 2),
    ],
    'MgSO4': [
        (2, -5, 100, 0.127705312090591, 1),
        (2, -5, 400, 0.12113734355785, 3),
        (2, -1, 100, 0.142095470675893, 1),
        (2, -1, 400, 0.133869962951222, 3),
        (2, 0, 0, 0.129214464647111, 0),
        (2, 0, 100, 0.145768478313147, 0),
        (2, 0, 400, 0.137131791696759, 2),
        (2, 20, 0, 0.200030835734487, 0),
        (2, 20, 100, 0.210109283160079, 0),
        (2, 20, 400, 0.193986248133715, 2),
        (2, 60, 0, 0.310679784628665, 0),
        (2, 60, 100, 0.306225667941223, 0),
        (2, 60, 400, 0.273687756520431, 2),
        (120, -5, 100, 2.84731346921393, 1),
        (120, -5, 400, 2.70087425723048, 3),
        (120, -1, 0, 2.79385451499378, 1),
        (120, -1, 100, 3.16815597524053, 1),
        (120, -1, 400, 2.98476032354701, 3),
        (120, 0, 0, 2.88096148534524, 0),
        (120, 0, 100, 3.25004923360915, 0),
        (120, 0, 400, 3.05748595076953, 2),
        (120, 20, 0, 4.83076747829028, 0),
        (120, 20, 100, 5.07416313214754, 0),
        (120, 20, 400, 4.68478999889682, 2),
        (120, 60, 0, 8.10695445155098, 0),
        (120, 60, 100, 7.99072763894987, 0),
        (120, 60, 400, 7.14167540289195, 2),
        (170, -5, 100, 3.02460706537776, 1),
        (170, -5, 400, 2.86904952666539, 3),
        (170, -1, 0, 2.96781938379993, 1),
        (170, -1, 100, 3.36542746365638, 1),
        (170, -1, 400, 3.17061231953214, 3),
        (170, 0, 0, 3.06035024168311, 0),
        (170, 0, 100, 3.45241996748383, 0),
        (170, 0, 400, 3.24786635155553, 2),
        (170, 20, 0, 5.18602517542461, 0),
        (170, 20, 100, 5.4473202996808, 0),
        (170, 20, 400, 5.02931241982589, 2),
        (170, 60, 0, 8.79060109980423, 0),
        (170, 60, 100, 8.66457306390198, 0),
        (170, 60, 400, 7.74392159550078, 2),
        (300, 60, 0, 6.1719898240636, 0),
        (300, 60, 100, 6.08350398034209, 0),
        (300, 60, 400, 5.43710319045663, 2),
    ],
    'KCl': [
        (1, -12, 400, 0.0804280013911073, 3),
        (1, -1, 100, 0.114059225327141, 1),
        (1, -1, 400, 0.107456657106383, 3),
        (1, 0, 0, 0.103719715122568, 0),
        (1, 0, 100, 0.117007527646231, 0),
        (1, 0, 400, 0.110074908470033, 2),
        (1, 20, 0, 0.171268138444862, 0),
        (1, 20, 100, 0.179897392642884, 0),
        (1, 20, 400, 0.166092710055285, 2),
        (1, 60, 0, 0.320240821527752, 0),
        (1, 60, 100, 0.315649631312812, 0),
        (1, 60, 400, 0.282110379646837, 2),
        (100, -12, 100, 7.16208471890616, 1),
        (100, -12, 400, 6.91586893818959, 3),
        (100, -1, 0, 8.64902450921644, 1),
        (100, -1, 100, 9.8077614749875, 1),
        (100, -1, 400, 9.24001770813479, 3),
        (100, 0, 0, 8.91868433489819, 0),
        (100, 0, 100, 10.0612810462352, 0),
        (100, 0, 400, 9.46515675131692, 2),
        (100, 20, 0, 14.1120638850969, 0),
        (100, 20, 100, 14.8230927292764, 0),
        (100, 20, 400, 13.6856216014963, 2),
        (100, 60, 0, 24.8181826577677, 0),
        (100, 60, 100, 24.4623723122053, 0),
        (100, 60, 400, 21.8631306849824, 2),
        (190, -12, 100, 13.854828814889, 1),
        (190, -12, 400, 13.378532090229, 3),
        (190, -1, 0, 16.731267318669, 1),
        (190, -1, 100, 18.9728077265705, 1),
        (190, -1, 400, 17.874525172093, 3),
        (190, 0, 0, 17.2529158148409, 0),
        (190, 0, 100, 19.4632334055057, 0),
        (190, 0, 400, 18.3100496074019, 2),
        (190, 20, 0, 27.0553567471672, 0),
        (190, 20, 100, 28.4185265282449, 0),
        (190, 20, 400, 26.2377904288148, 2),
        (190, 60, 0, 46.9521689301438, 0),
        (190, 60, 100, 46.2790307039366, 0),
        (190, 60, 400, 41.3616669446915, 2),
        (300, 60, 0, 76.0875377826745, 0),
        (300, 60, 100, 74.9966950934752, 0),
        (300, 60, 400, 67.0279449942116, 2),
    ],
}
FREEZING = {  # solute: (salinity, pressure_MPa, freezing_point_C, flags)
    'seawater': [
        (0, 0, 0.002519, 0),
        (0, 100, -8.95164276280769, 0),
        (0, 150, -14.5377161053117, 2),
        (0, 1000, 27.0993259913597, 2),
        (35, 0, -1.91913719993395, 0),
        (35, 100, -10.9505794994259, 0),
        (35, 150, -16.5366528419299, 2),
        (35, 1000, 25.1003892547414, 2),
        (100, 0, -6.1532160894473, 0),
        (100, 100, -15.5705043265684, 0),
        (100, 150, -21.1565776690724, 2),
        (100, 1000, 20.4804644275989, 2),
    ],
    'NaCl': [
        (0, 0, 0.00251907976951316, 0),
        (0, 100, -8.95183117554814, 0),
        (0, 150, -14.5379045180521, 2),
        (0, 1000, 27.0991375786192, 2),
        (10, 0, -0.567282920153179, 0),
        (10, 100, -9.54454809873303, 0),
        (10, 150, -15.130621441237, 2),
        (10, 1000, 26.5064206554343, 2),
        (100, 0, -6.61104916397448, 0),
        (100, 100, -15.8313679641819, 0),
        (100, 150, -21.4174413066859, 2),
        (100, 1000, 20.2196007899855, 2),
        (232, 0, -21.2311077335263, 0),
        (232, 100, -31.0393808060169, 0),
        (232, 150, -36.6254541485209, 2),
        (232, 1000, 5.01158794815041, 2),
    ],
    'MgSO4': [
        (0, 0, 0.00251907976951316, 0),
        (0, 100, -8.95183117554814, 0),
        (0, 150, -14.5379045180521, 2),
        (0, 1000, 27.0991375786192, 2),
        (10, 0, -0.191837808602372, 0),
        (10, 100, -9.1540042407378, 0),
        (10, 150, -14.7400775832418, 2),
        (10, 1000, 26.8969645134295, 2),
        (100, 0, -1.88539291643661, 0),
        (100, 100, -10.9156666653972, 0),
        (100, 150, -16.5017400079012, 2),
        (100, 1000, 25.1353020887702, 2),
        (173, 0, -4.22836099552899, 0),
        (173, 100, -13.352858586711, 0),
        (173, 150, -18.938931929215, 2),
        (173, 1000, 22.6981101674564, 2),
    ],
    'KCl': [
        (0, 0, 0.00251907976951316, 0),
        (0, 100, -8.95183117554814, 0),
        (0, 150, -14.5379045180521, 2),
        (0, 1000, 27.0991375786192, 2),
        (10, 0, -0.461538400866516, 0),
        (10, 100, -9.43455100127854, 0),
        (10, 150, -15.0206243437825, 2),
        (10, 1000, 26.6164177528888, 2),
        (100, 0, -4.85892003447384, 0),
        (100, 100, -14.0087759290519, 0),
        (100, 150, -19.5948492715559, 2),
        (100, 1000, 22.0421928251155, 2),
        (198.7, 0, -10.8437246294694, 0),
        (198.7, 100, -20.234262968216, 0),
        (198.7, 150, -25.82033631072, 2),
        (198.7, 1000, 15.8167057859513, 2),
    ],
}
SATURATION_T_C = (-20, -5, 0, 15, 33, 60)
SATURATION = {  # solute: (eutectic_temperature_C, saturation mass fractions at SATURATION_T_C)
    'NaCl': (-21.2311077335263,
        (0.234247388177967, 0.257188868940754, 0.2629, 0.26400504050405, 0.26614049190162, 0.270939164866811)),
    'MgSO4': (-4.22836099552904,
        (0.173, 0.173, 0.182, 0.234, 0.2901, 0.353)),
    'KCl': (-10.8437246294694,
        (0.1987, 0.208777501440243, 0.2174, 0.245, 0.27505, 0.314)),
}


RTOL = 1e-12
ATOL_K = 1e-10


@pytest.mark.parametrize("name", list(CONDUCTIVITY))
def test_conductivity_unchanged(name):
    cols = list(zip(*CONDUCTIVITY[name]))
    s, t, p, ref = (np.array(c, dtype=float) for c in cols[:4])
    ref_flags = np.array(cols[4])
    got, flags = brine.conductivity(name, s, t, p, return_flags=True, warn=False)
    check_close(got, ref, RTOL, 0.0, f"conductivity {name}", {"salinity": s, "t_C": t, "p_MPa": p})
    bad = np.flatnonzero(flags != ref_flags)
    assert bad.size == 0, f"{name}: flags differ at salinity {s[bad[0]]}, t {t[bad[0]]}, p {p[bad[0]]}"


@pytest.mark.parametrize("name", list(FREEZING))
def test_freezing_point_unchanged(name):
    cols = list(zip(*FREEZING[name]))
    s, p, ref = (np.array(c, dtype=float) for c in cols[:3])
    ref_flags = np.array(cols[3])
    got, flags = brine.freezing_point(name, s, p, return_flags=True, warn=False)
    check_close(got, ref, RTOL, ATOL_K, f"freezing point {name}", {"salinity": s, "p_MPa": p})
    np.testing.assert_array_equal(flags, ref_flags)


@pytest.mark.parametrize("name", list(SATURATION))
def test_saturation_tables_unchanged(name):
    t_eut, w_ref = SATURATION[name]
    check_close(limits.eutectic_temperature_C(name), t_eut, RTOL, ATOL_K, f"eutectic {name}", {})
    check_close(limits.saturation_mass_fraction(name, np.array(SATURATION_T_C)), w_ref, RTOL, 0.0,
                f"saturation {name}", {"t_C": np.array(SATURATION_T_C)})
