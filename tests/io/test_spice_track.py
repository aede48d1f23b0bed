"""Flyby tracks from SPICE kernels (induct.io.spice_track) against hand geometry.

The test writes its own fictional kernels (no downloads): an LSK from the IERS Bulletin C table,
a text PCK with the pole of planet 9100 (TARVOS, with rates) and NAIF name bindings, and an SPK
(type 9, Lagrange) with moon 9101 (ILMARE) on an inclined circular orbit around 9100 and the
spacecraft -9900 (PROBE) on a straight line relative to the moon. References: closed forms
(circular motion, straight line), the flow-frame definition (x = spin x planet-to-moon,
normalised; y toward the planet, perpendicular to the spin axis; z = spin axis; common practice,
see induct.field.orbit), and SPICE through spiceypy (Annex et al. 2020, JOSS 5, 2050).
"""

import csv
import sys

import numpy as np
import pytest

from induct.io import timescales as ts
from induct.io.tracks import read_track
from lsk_for_tests import lsk_text

spiceypy = pytest.importorskip("spiceypy")
from induct.io.spice_track import spice_track  # noqa: E402

CENTURY_S = 86400.0 * 36525.0
RA0, RA1 = 268.05, 0.75  # deg, deg per century (fictional)
DEC0, DEC1 = 64.49, -0.35
INCL_DEG = 3.0  # orbit inclination to the planet's equator at T_REF
RADIUS_KM = 617500.0
PERIOD_S = 84.69 * 3600.0
START, STOP = "2031-03-10T10:00:00", "2031-03-10T14:00:00"
CA_UTC = "2031-03-10T12:00:00"
P0_KM = np.array([1200.0, -800.0, 1500.0])  # probe relative to the moon at closest approach (J2000)
V_KM_S = np.array([-3.0, 4.5, 2.0])


def pole(et):
    T = np.asarray(et) / CENTURY_S
    ra, dec = np.radians(RA0 + RA1 * T), np.radians(DEC0 + DEC1 * T)
    return np.stack([np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)], axis=-1)


def orbit_basis(t_ref):
    n0 = pole(t_ref)
    a = np.cross(n0, [1.0, 0.0, 0.0])
    a /= np.linalg.norm(a)
    b = np.cross(n0, a)
    i = np.radians(INCL_DEG)
    normal = np.cos(i) * n0 + np.sin(i) * b  # tilted orbit normal
    e1 = a  # ascending-node direction (in both planes)
    e2 = np.cross(normal, e1)
    return e1, e2


def moon_state(et, t_ref):
    e1, e2 = orbit_basis(t_ref)
    w = 2.0 * np.pi / PERIOD_S
    ph = w * (np.asarray(et) - t_ref)
    c, s = np.cos(ph)[:, None], np.sin(ph)[:, None]
    return np.hstack([RADIUS_KM * (c * e1 + s * e2), RADIUS_KM * w * (-s * e1 + c * e2)])


def probe_state(et, t_ca):
    dt = (np.asarray(et) - t_ca)[:, None]
    return np.hstack([P0_KM + dt * V_KM_S, np.broadcast_to(V_KM_S, (dt.size, 3))])


def hand_track(et, t_ref, t_ca):
    """The flow-frame track computed here from the closed forms, independently of the module."""
    r_moon = moon_state(et, t_ref)[:, :3]
    r_sc = probe_state(et, t_ca)[:, :3]
    z = pole(et)
    z /= np.linalg.norm(z, axis=1)[:, None]
    x = np.cross(z, r_moon)  # corotation: spin axis x planet-to-moon, normalised
    x /= np.linalg.norm(x, axis=1)[:, None]
    y = np.cross(z, x)  # completes the right-handed set: toward the planet, perpendicular to z
    return np.stack([np.sum(r_sc * x, 1), np.sum(r_sc * y, 1), np.sum(r_sc * z, 1)], axis=1), np.stack([x, y, z], 1)


@pytest.fixture(scope="module")
def kernels(tmp_path_factory):
    folder = tmp_path_factory.mktemp("kernels")
    lsk = folder / "test.tls"
    lsk.write_text(lsk_text())
    pck = folder / "tarvos.tpc"
    pck.write_text(
        "KPL/PCK\n\\begindata\n"
        f"BODY9100_POLE_RA = ( {RA0} {RA1} 0.0 )\nBODY9100_POLE_DEC = ( {DEC0} {DEC1} 0.0 )\n"
        "BODY9100_PM = ( 0.0 815.0 0.0 )\n\\begintext\n"
    )
    names = folder / "names.tk"
    names.write_text(
        "KPL/FK\n\\begindata\nNAIF_BODY_NAME += ( 'TARVOS' 'ILMARE' 'PROBE' )\n"
        "NAIF_BODY_CODE += ( 9100 9101 -9900 )\n\\begintext\n"
    )
    c = ts.read_lsk(lsk)
    t_ca = ts.utc_to_tdb(CA_UTC, constants=c)
    t_ref = t_ca - 5000.0
    spk = folder / "flyby.bsp"
    moon_t = np.arange(t_ca - 86400.0, t_ca + 86400.0 + 1.0, 300.0)
    probe_t = np.arange(t_ca - 3 * 3600.0, t_ca + 3 * 3600.0 + 1.0, 900.0)
    handle = spiceypy.spkopn(str(spk), "induct test", 0)
    spiceypy.spkw09(handle, 9101, 9100, "J2000", moon_t[0], moon_t[-1], "MOON", 7, moon_t.size,
                    moon_state(moon_t, t_ref), moon_t)
    spiceypy.spkw09(handle, -9900, 9101, "J2000", probe_t[0], probe_t[-1], "PROBE", 1, probe_t.size,
                    probe_state(probe_t, t_ca), probe_t)
    spiceypy.spkcls(handle)
    return {"lsk": str(lsk), "pck": str(pck), "names": str(names), "spk": str(spk), "t_ca": t_ca, "t_ref": t_ref}


@pytest.fixture(autouse=True)
def clean_pool():
    spiceypy.kclear()
    yield
    assert spiceypy.ktotal("ALL") == 0, "spice_track left kernels loaded"
    spiceypy.kclear()


def _all(k):
    return [k["lsk"], k["pck"], k["names"], k["spk"]]


def test_track_equals_hand_geometry(kernels):
    track = spice_track(_all(kernels), "PROBE", "ILMARE", "TARVOS", START, STOP, 60.0)
    assert track.positions_km.shape == (241, 3) and track.spacecraft == (-9900, "PROBE")
    # Times: a TDB grid from str2et(start); our own UTC -> TDB agrees to 1e-6 s.
    assert track.tdb_s[0] == pytest.approx(ts.utc_to_tdb(START), abs=1e-6)
    assert np.allclose(np.diff(track.tdb_s), 60.0, rtol=0, atol=1e-6)
    assert track.utc[0] == "2031-03-10T10:00:00.000000"
    want, axes = hand_track(track.tdb_s, kernels["t_ref"], kernels["t_ca"])
    err = np.abs(track.positions_km - want).max(axis=1)
    k = int(np.argmax(err))
    assert err[k] < 1e-9, f"worst at {track.utc[k]}: SPICE {track.positions_km[k]}, hand {want[k]}, {err[k]:.3g} km"
    print(f"SPICE track vs hand geometry: max |diff| = {err.max():.3g} km over {track.size} samples")
    ax_err = np.abs(track.axes_j2000 - axes).max()
    assert ax_err < 1e-12, f"axes differ from the hand frame by {ax_err:.3g}"


def test_axes_orthonormal_right_handed_and_oriented(kernels):
    track = spice_track(_all(kernels), -9900, "9101", 9100, START, STOP, 600.0)
    a = track.axes_j2000
    gram = np.einsum("nij,nkj->nik", a, a)
    assert np.abs(gram - np.eye(3)).max() < 1e-14
    assert np.allclose(np.linalg.det(a), 1.0, rtol=0, atol=1e-14)  # right-handed
    # x along corotation: a prograde moon (orbit normal within 3 deg of the spin axis) moves along +x;
    # y points toward the planet: y . (planet - moon) > 0 (closed forms).
    state = moon_state(track.tdb_s, kernels["t_ref"])
    v_x = np.einsum("nj,nj->n", a[:, 0], state[:, 3:]) / np.linalg.norm(state[:, 3:], axis=1)
    assert v_x.min() > np.cos(np.radians(INCL_DEG)) - 1e-9
    assert np.all(np.einsum("nj,nj->n", a[:, 1], -state[:, :3]) > 0.0)
    assert np.allclose(a[:, 2], pole(track.tdb_s), rtol=0, atol=1e-14)


def test_epoch_times_and_builtin_leap_seconds(kernels):
    with_lsk = spice_track(_all(kernels), "PROBE", "ILMARE", "TARVOS", START, STOP, 300.0, epoch_utc=CA_UTC)
    assert with_lsk.leapseconds_source == "loaded kernels"
    assert with_lsk.times_s[24] == pytest.approx(0.0, abs=1e-5)  # 12:00 UTC; TDB - UTC rate drift < 3e-6 s
    assert np.allclose(with_lsk.times_s, with_lsk.tdb_s - ts.utc_to_tdb(CA_UTC), rtol=0, atol=1e-6)
    # Without an LSK among the kernels the built-in table is loaded: same times, same track.
    builtin = spice_track([kernels["pck"], kernels["names"], kernels["spk"]], "PROBE", "ILMARE", "TARVOS",
                          START, STOP, 300.0, epoch_utc=CA_UTC)
    assert "IERS Bulletin C" in builtin.leapseconds_source
    assert np.array_equal(builtin.tdb_s, with_lsk.tdb_s)
    assert np.abs(builtin.positions_km - with_lsk.positions_km).max() < 1e-9


def test_spin_axis_given_by_the_caller(kernels):
    # Without the PCK the caller's (RA, DEC) is used; compare with the hand track for a fixed pole.
    files = [kernels["lsk"], kernels["names"], kernels["spk"]]
    ra, dec = RA0 + 0.3, DEC0 - 0.2
    track = spice_track(files, "PROBE", "ILMARE", "TARVOS", START, STOP, 600.0, spin_axis_radec_deg=(ra, dec))
    z = np.array([np.cos(np.radians(dec)) * np.cos(np.radians(ra)), np.cos(np.radians(dec)) * np.sin(np.radians(ra)),
                  np.sin(np.radians(dec))])
    r_moon = moon_state(track.tdb_s, kernels["t_ref"])[:, :3]
    r_sc = probe_state(track.tdb_s, kernels["t_ca"])[:, :3]
    x = np.cross(z, r_moon)
    x /= np.linalg.norm(x, axis=1)[:, None]
    y = np.cross(z, x)
    want = np.stack([np.sum(r_sc * x, 1), np.sum(r_sc * y, 1), r_sc @ z], axis=1)
    err = np.abs(track.positions_km - want).max()
    assert err < 1e-9, f"worst |diff| {err:.3g} km"
    assert track.spin_axis_source.startswith("given")
    with pytest.warns(UserWarning, match="differs by"):
        spice_track(_all(kernels), "PROBE", "ILMARE", "TARVOS", START, STOP, 600.0, spin_axis_radec_deg=(ra, dec))


def test_csv_round_trip(kernels, tmp_path):
    track = spice_track(_all(kernels), "PROBE", "ILMARE", "TARVOS", START, STOP, 120.0, epoch_utc=CA_UTC)
    path = tmp_path / "track.csv"
    track.to_csv(path)
    back = read_track(path)  # the project reader; the extra utc column is ignored there
    err = np.abs(back.positions_km - track.positions_km).max()
    assert err < 1e-9, f"CSV round trip: worst |diff| {err:.3g} km"
    assert np.array_equal(back.times_s, track.times_s)
    with open(path, newline="") as handle:
        rows = [r for r in csv.reader(line for line in handle if not line.startswith("#"))]
    assert rows[0] == ["t_s", "x_km", "y_km", "z_km", "utc"]
    assert [r[4] for r in rows[1:]] == list(track.utc)
    assert [p.name for p in tmp_path.iterdir()] == ["track.csv"]  # no temporary file left


def _one_line_error(match, *args, **kwargs):
    with pytest.raises(ValueError, match=match) as info:
        spice_track(*args, **kwargs)
    assert "\n" not in str(info.value), str(info.value)
    return str(info.value)


def test_errors_name_the_item(kernels, tmp_path):
    files = _all(kernels)
    msg = _one_line_error("kernel file not found", files + [str(tmp_path / "missing.bsp")], "PROBE", "ILMARE",
                          "TARVOS", START, STOP, 60.0)
    assert "missing.bsp" in msg
    bad = tmp_path / "garbage.bsp"
    bad.write_bytes(b"\x00\x01not a kernel")
    assert "garbage.bsp" in _one_line_error("not a binary SPK kernel", files + [str(bad)], "PROBE", "ILMARE",
                                            "TARVOS", START, STOP, 60.0)
    text = tmp_path / "garbage.tpc"
    text.write_text("no data here\n")
    assert "garbage.tpc" in _one_line_error("not a SPICE text kernel", files + [str(text)], "PROBE", "ILMARE",
                                            "TARVOS", START, STOP, 60.0)
    cut = tmp_path / "truncated.bsp"
    cut.write_bytes(open(kernels["spk"], "rb").read()[:1500])
    print(_one_line_error("truncated.bsp: SPICE cannot read this SPK", [kernels["lsk"], kernels["pck"], kernels["names"], str(cut)], "PROBE",
                          "ILMARE", "TARVOS", START, STOP, 60.0))
    msg = _one_line_error("do not cover", files, "PROBE", "ILMARE", "TARVOS", "2031-03-10T08:30:00", STOP, 60.0)
    assert "spacecraft PROBE (-9900)" in msg and "flyby.bsp" in msg and "2031-03-10T08:30:00" in msg
    assert "spacecraft -9999" in _one_line_error("do not cover", files, -9999, "ILMARE", "TARVOS", START, STOP, 60.0)
    msg = _one_line_error("unknown body name", files, "PROBE", "NOSUCHMOON", "TARVOS", START, STOP, 60.0)
    assert "moon 'NOSUCHMOON'" in msg
    msg = _one_line_error("no pole data", [kernels["lsk"], kernels["names"], kernels["spk"]], "PROBE", "ILMARE",
                          "TARVOS", START, STOP, 60.0)
    assert "BODY9100_POLE_RA" in msg and "spin_axis_radec_deg" in msg
    _one_line_error("must be after", files, "PROBE", "ILMARE", "TARVOS", STOP, START, 60.0)
    _one_line_error("step_s", files, "PROBE", "ILMARE", "TARVOS", START, STOP, 0.0)
    _one_line_error("start_utc 'yesterday'", files, "PROBE", "ILMARE", "TARVOS", "yesterday", STOP, 60.0)
    _one_line_error("spin_axis_radec_deg", files, "PROBE", "ILMARE", "TARVOS", START, STOP, 60.0,
                    spin_axis_radec_deg=(10.0, 95.0))


def test_missing_spiceypy_message(kernels, monkeypatch):
    monkeypatch.setitem(sys.modules, "spiceypy", None)
    with pytest.raises(ImportError, match=r"this needs spiceypy: pip install 'induct\[spice\]'"):
        spice_track(_all(kernels), "PROBE", "ILMARE", "TARVOS", START, STOP, 60.0)


def _pck(path, extra):
    path.write_text(
        "KPL/PCK\n\\begindata\n"
        f"BODY9100_POLE_RA = ( {RA0} {RA1} 0.0 )\nBODY9100_POLE_DEC = ( {DEC0} {DEC1} 0.0 )\n{extra}\n\\begintext\n"
    )
    return str(path)


def test_pole_conventions(kernels, tmp_path):
    base = spice_track(_all(kernels), "PROBE", "ILMARE", "TARVOS", START, STOP, 1200.0)
    others = [kernels["lsk"], kernels["names"], kernels["spk"]]
    # Retrograde rotation (PM rate < 0; IAU north pole kept, Archinal et al. 2018, from memory): the spin
    # axis is the south pole, so z and x flip and y stays (x = y cross z).
    retro = spice_track(others + [_pck(tmp_path / "retro.tpc", "BODY9100_PM = ( 0.0 -815.0 0.0 )")],
                        "PROBE", "ILMARE", "TARVOS", START, STOP, 1200.0)
    assert np.allclose(retro.positions_km, base.positions_km * [-1.0, 1.0, -1.0], rtol=0, atol=1e-9)
    assert "retrograde" in retro.spin_axis_source
    # Pole constants in B1950 (BODY9100_CONSTANTS_REF_FRAME = 2): rotated to J2000 with SPICE's own pxform.
    b1950 = spice_track(others + [_pck(tmp_path / "b1950.tpc", "BODY9100_CONSTANTS_REF_FRAME = 2")],
                        "PROBE", "ILMARE", "TARVOS", START, STOP, 1200.0)
    spiceypy.furnsh(kernels["lsk"])
    rot = np.asarray(spiceypy.pxform("B1950", "J2000", 0.0))
    spiceypy.kclear()
    assert np.allclose(b1950.axes_j2000[:, 2], pole(b1950.tdb_s) @ rot.T, rtol=0, atol=1e-14)
    assert "B1950" in b1950.spin_axis_source
    # Nutation-precession terms are not modelled: a warning says so.
    with pytest.warns(UserWarning, match="nutation-precession"):
        spice_track(others + [_pck(tmp_path / "nut.tpc", "BODY9100_NUT_PREC_RA = ( 0.1 )\nBODY9100_NUT_PREC_DEC = ( 0.1 )")],
                    "PROBE", "ILMARE", "TARVOS", START, STOP, 1200.0)
