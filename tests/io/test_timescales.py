"""UTC / TAI / TT / TDB conversions of induct.io.timescales.

References
----------
* SPICE through spiceypy (Annex et al. 2020, JOSS 5, 2050), loaded with an LSK this test writes
  from the IERS Bulletin C table: ``str2et`` and ``et2utc`` are the reference conversions.
* IERS Bulletin C: TAI - UTC = 36 s during 2016, 37 s from 2017-01-01; leap second at the end
  of 2016-12-31 (and of 1972-06-30).
* TT = TAI + 32.184 s exactly (IAU 1991 Resolution A4; IERS Conventions 2010, ch. 10).
* J2000 = 2000-01-01T12:00:00 TT = 2000-01-01T11:58:55.816 UTC (NAIF Time Required Reading).
* cdflib (its own leap-second table and CDF_TIME_TT2000 conversion) as a second reference library.
* TDB - TT series of Kaplan (2005), USNO Circular 179, eq. 2.6 (coefficients from memory).
"""

import numpy as np
import pytest

from induct.io import timescales as ts
from lsk_for_tests import IERS_BULLETIN_C, lsk_text

spiceypy = pytest.importorskip("spiceypy")

RNG = np.random.default_rng(20310310)


@pytest.fixture(scope="module")
def lsk(tmp_path_factory):
    path = tmp_path_factory.mktemp("lsk") / "test_leap.tls"
    path.write_text(lsk_text())
    return path


@pytest.fixture()
def spice(lsk):
    spiceypy.kclear()
    spiceypy.furnsh(str(lsk))
    yield spiceypy
    spiceypy.kclear()


def _random_utc(n, digits):
    """Random ISO strings 1972-01-01 .. 2039-12-31 with the given number of fraction digits."""
    days = RNG.integers(ts._days_from_civil(1972, 1, 1), ts._days_from_civil(2040, 1, 1), n)
    y, m, d = ts._civil_from_days(days)
    sod = RNG.integers(0, 86400, n)
    out = []
    for a, b, c, s, k in zip(y, m, d, sod, digits):
        frac = "" if k == 0 else "." + "".join(str(v) for v in RNG.integers(0, 10, k))
        out.append(f"{a:04d}-{b:02d}-{c:02d}T{s // 3600:02d}:{s % 3600 // 60:02d}:{s % 60:02d}{frac}")
    return out


def test_builtin_table_is_the_iers_table_and_cdflibs():
    # IERS Bulletin C, as typed into the test LSK and as shipped by cdflib (from 1972 on).
    cdflib = pytest.importorskip("cdflib")
    months = {"JAN": 1, "JUL": 7}
    ours = [(ymd, dat) for ymd, dat in ts.LEAP_SECONDS]
    typed = [((int(s[:4]), months[s[5:8]], 1), dat) for s, dat in IERS_BULLETIN_C]
    assert ours == typed
    lts = [((int(r[0]), int(r[1]), int(r[2])), int(r[3])) for r in cdflib.cdfepoch.LTS if r[0] >= 1972]
    assert ours == lts
    assert ours[-1] == ((2017, 1, 1), 37) and len(ours) == 28  # 27 leap seconds after the initial 10 s


def test_read_lsk_equals_builtin(lsk):
    c = ts.read_lsk(lsk)
    d = ts.default_constants()
    assert np.array_equal(c.leap_days, d.leap_days) and np.array_equal(c.delta_at_s, d.delta_at_s)
    assert (c.delta_t_a_s, c.k_s, c.eb, c.m0_rad, c.m1_rad_per_s) == (d.delta_t_a_s, d.k_s, d.eb, d.m0_rad, d.m1_rad_per_s)
    # And the LSK written by the module reads back to the same constants.
    c2 = ts.read_lsk(_write(lsk.parent / "own.tls", ts.lsk_text()))
    assert np.array_equal(c2.leap_days, d.leap_days) and c2.k_s == d.k_s


def _write(path, text):
    path.write_text(text)
    return path


def test_utc_to_tdb_matches_spice_str2et(spice):
    # Tolerance 1e-6 s (the brief); float64 near 1e9 s resolves 1.2e-7 s.
    digits = RNG.integers(0, 10, 3000)
    utc = _random_utc(3000, digits) + ["2016-12-31T23:59:60.5", "1972-06-30T23:59:60.999", "2031-069T12:00:00"]
    ours = ts.utc_to_tdb(np.array(utc))
    ref = np.array([spice.str2et(u) for u in utc])
    err = np.abs(ours - ref)
    k = int(np.argmax(err))
    assert err[k] < 1e-6, f"worst: {utc[k]}: ours {ours[k]!r}, str2et {ref[k]!r}, diff {err[k]:.3g} s"
    print(f"UTC->TDB vs str2et: max |diff| = {err.max():.3g} s over {len(utc)} times")


def _near_tie(et, digits, c=None):
    """True when the time lies within 1e-6 s of a rounding boundary at ``digits`` decimals."""
    tai = np.asarray(ts.tdb_to_tt(et)) - 32.184
    x = tai * 10**digits
    return np.abs((x - np.floor(x)) - 0.5) * 10.0**-digits < 1e-6


def test_tdb_to_utc_matches_spice_et2utc(spice):
    lo, hi = ts.utc_to_tdb("1972-01-01T00:00:01"), ts.utc_to_tdb("2040-01-01")
    et = RNG.uniform(lo, hi, 3000)
    for digits in (0, 3, 6):
        ours = ts.tdb_to_utc(et, digits=digits)
        ref = np.array([spice.et2utc(e, "ISOC", digits) for e in et])
        bad = (ours != ref) & ~_near_tie(et, digits)
        assert not bad.any(), f"digits {digits}: worst: ET {et[bad][0]!r}: ours {ours[bad][0]}, et2utc {ref[bad][0]}"
    # Both directions agree to 1e-6 s at 9 digits: ours(string) = et and str2et(our string) = et.
    s9 = ts.tdb_to_utc(et, digits=9)
    back = np.array([spice.str2et(s) for s in s9])
    err = np.abs(back - et)
    assert err.max() < 1e-6, f"worst: {s9[np.argmax(err)]}: |str2et - et| = {err.max():.3g} s"


def test_leap_second_day_against_spice(spice):
    # ET grid across the leap seconds at the end of 1972-06-30 and 2016-12-31, 0.25 s steps.
    for before, after in (("1972-06-30T23:59:58", "1972-07-01T00:00:02"), ("2016-12-31T23:59:58", "2017-01-01T00:00:02")):
        et = np.arange(ts.utc_to_tdb(before), ts.utc_to_tdb(after) + 0.01, 0.25) + 1e-4
        ours = ts.tdb_to_utc(et, digits=3)
        ref = np.array([spice.et2utc(e, "ISOC", 3) for e in et])
        assert list(ours) == list(ref), f"worst: {[(a, b) for a, b in zip(ours, ref) if a != b][:3]}"
        assert sum(":60." in s for s in ours) == 4  # the leap second, sampled four times
    # The leap second lasts one second; the day 86401 SI seconds (IERS Bulletin C). Elapsed TDB differs
    # from elapsed TAI by the TDB - TT rate (< 3.3e-10, i.e. < 3e-5 s per day).
    assert ts.seconds_from_epoch("2017-01-01T00:00:00", "2016-12-31T23:59:59") == pytest.approx(2.0, abs=1e-6)
    assert ts.utc_to_tai("2017-01-01T00:00:00") - ts.utc_to_tai("2016-12-31T00:00:00") == 86401.0
    assert ts.seconds_from_epoch("2017-01-01T00:00:00", "2016-12-31T00:00:00") == pytest.approx(86401.0, abs=3e-5)
    assert ts.utc_to_tdb("2016-12-31T23:59:60.5") == pytest.approx(spice.str2et("2016-12-31T23:59:60.5"), abs=1e-6)
    with pytest.raises(ValueError, match="no leap second") as info:
        ts.utc_to_tdb("2016-12-30T23:59:60")
    assert "\n" not in str(info.value)


def test_known_facts():
    # TT - TAI = 32.184 s (IAU 1991 Res. A4); TAI - UTC = 36 s in 2016, 37 s from 2017 (IERS Bulletin C).
    assert ts.tai_to_tt(0.0) == 32.184 and ts.TT_MINUS_TAI_S == 32.184
    assert ts.tai_minus_utc("2016-06-15T00:00:00") == 36
    assert ts.tai_minus_utc("2016-12-31T23:59:60.9") == 36
    assert ts.tai_minus_utc("2017-01-01T00:00:00") == 37
    assert ts.tai_minus_utc("2031-03-10") == 37
    # J2000 = 2000-01-01T11:58:55.816 UTC (NAIF Time Required Reading): TT = 0 exactly.
    assert ts.utc_to_tt2000("2000-01-01T11:58:55.816") == 0
    assert ts.utc_to_tai("2000-01-01T11:58:55.816") + 32.184 == pytest.approx(0.0, abs=1e-9)
    assert abs(ts.utc_to_tdb("2000-01-01T11:58:55.816")) < 1.7e-3  # |TDB - TT| < 1.7 ms
    assert ts.tdb_to_utc(0.0, digits=3) == "2000-01-01T11:58:55.816"


def test_tdb_minus_tt_against_circular_179():
    # Kaplan (2005), USNO Circular 179, eq. 2.6 (coefficients from memory): quoted to ~10 us. SPICE's
    # one-term formula omits the smaller terms (up to ~22 us + 10 us T); tolerance 60 us.
    tt = np.linspace(ts.utc_to_tdb("1972-01-01"), ts.utc_to_tdb("2050-01-01"), 20001)
    T = tt / (86400.0 * 36525.0)
    ref = (
        0.001657 * np.sin(628.3076 * T + 6.2401)
        + 0.000022 * np.sin(575.3385 * T + 4.2970)
        + 0.000014 * np.sin(1256.6152 * T + 6.1969)
        + 0.000005 * np.sin(606.9777 * T + 4.0212)
        + 0.000005 * np.sin(52.9691 * T + 0.4444)
        + 0.000002 * np.sin(21.3299 * T + 5.5431)
        + 0.000010 * T * np.sin(628.3076 * T + 4.2490)
    )
    err = np.abs(ts.tdb_minus_tt(tt) - ref)
    assert err.max() < 60e-6, f"worst at T = {T[np.argmax(err)]:.4f} cy: {err.max() * 1e6:.3g} us"


def test_tt2000_matches_cdflib():
    cdflib = pytest.importorskip("cdflib")
    cases = [
        [2000, 1, 1, 12, 0, 0, 0, 0, 0],
        [2016, 12, 31, 23, 59, 60, 500, 0, 0],
        [2017, 1, 1, 0, 0, 0, 250, 125, 7],
        [1972, 6, 30, 23, 59, 60, 0, 0, 1],
        [2031, 3, 10, 12, 34, 56, 789, 12, 345],
    ]
    for c in cases:
        text = f"{c[0]:04d}-{c[1]:02d}-{c[2]:02d}T{c[3]:02d}:{c[4]:02d}:{c[5]:02d}.{c[6]:03d}{c[7]:03d}{c[8]:03d}"
        assert ts.utc_to_tt2000(text) == int(cdflib.cdfepoch.compute_tt2000(c)), text


def test_round_trips():
    utc = _random_utc(500, np.full(500, 6))
    et = ts.utc_to_tdb(utc)
    assert list(ts.tdb_to_utc(et, digits=6)) == utc
    tt = RNG.uniform(-8e8, 1.3e9, 500)
    err = np.abs(ts.tdb_to_tt(ts.tt_to_tdb(tt)) - tt)
    assert err.max() < 1e-9, f"worst TT -> TDB -> TT error {err.max():.3g} s"
    tai = ts.utc_to_tai(utc)
    assert list(ts.tai_to_utc(tai, digits=6)) == utc
    assert ts.tt_to_tai(ts.tai_to_tt(12.5)) == 12.5
    # UTC counts (CDF_EPOCH-like) round trip, away from leap seconds.
    count = RNG.uniform(-8e8, 1.3e9, 500)
    err = np.abs(ts.tdb_to_utc_count(ts.utc_count_to_tdb(count)) - count)
    assert err.max() < 1e-6, f"worst count round trip {err.max():.3g} s"


def test_input_forms_and_shapes():
    a = ts.utc_to_tdb("2031-03-10T12:00:00")
    for form in ("2031-03-10 12:00:00", "2031-03-10T12:00:00Z", "2031-03-10T12:00", "2031-069T12:00:00", "2031-03-10T12:00:00.000000"):
        assert ts.utc_to_tdb(form) == a, form
    assert ts.utc_to_tai("2031-03-10") == ts.utc_to_tai("2031-03-10T12:00:00") - 43200.0
    dt = np.array(["2031-03-10T12:00:00.25", "2016-12-31T23:59:59.5"], dtype="datetime64[ns]")
    assert np.allclose(ts.utc_to_tdb(dt), ts.utc_to_tdb(["2031-03-10T12:00:00.25", "2016-12-31T23:59:59.5"]), rtol=0, atol=1e-6)
    grid = np.array([["2031-03-10T12:00:00"] * 3] * 2)
    assert ts.utc_to_tdb(grid).shape == (2, 3) and ts.tdb_to_utc(np.zeros((2, 3))).shape == (2, 3)
    assert isinstance(ts.utc_to_tdb("2031-03-10"), float) and isinstance(ts.tdb_to_utc(0.0), str)


@pytest.mark.parametrize(
    "call, match",
    [
        (lambda: ts.utc_to_tdb("1971-12-31T23:59:59"), "before 1972-01-01"),
        (lambda: ts.utc_to_tdb(np.datetime64("1965-01-01")), "before 1972-01-01"),
        (lambda: ts.tdb_to_utc(-1.0e9), "before 1972-01-01"),
        (lambda: ts.utc_count_to_tdb(-1.0e9), "before 1972-01-01"),
        (lambda: ts.utc_to_tdb("2031-13-01"), "month 13"),
        (lambda: ts.utc_to_tdb("2031-02-29"), "day 29"),
        (lambda: ts.utc_to_tdb("10 March 2031"), "not an ISO 8601 time"),
        (lambda: ts.utc_to_tdb("2031-03-10T12:60:00"), "out of range"),
        (lambda: ts.tdb_to_utc(0.0, digits=12), "digits"),
    ],
)
def test_errors_are_one_line(call, match):
    with pytest.raises(ValueError, match=match) as info:
        call()
    assert "\n" not in str(info.value)


def test_read_lsk_errors(tmp_path):
    with pytest.raises(ValueError, match="not found") as info:
        ts.read_lsk(tmp_path / "none.tls")
    assert "none.tls" in str(info.value)
    bad = _write(tmp_path / "bad.tls", "KPL/LSK\n\\begindata\nDELTET/K = 1.657D-3\n\\begintext\n")
    with pytest.raises(ValueError, match=r"bad\.tls: not a leap-seconds kernel: missing DELTET/DELTA_T_A"):
        ts.read_lsk(bad)
    neg = _write(tmp_path / "neg.tls", lsk_text().replace("37, @2017-JAN-1", "35, @2017-JAN-1"))
    with pytest.raises(ValueError, match=r"neg\.tls: DELTA_AT changes by -1 s at 2017-01-01"):
        ts.read_lsk(neg)
