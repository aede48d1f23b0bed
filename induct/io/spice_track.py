"""Flyby tracks from SPICE kernels, in the moon-centred flow frame.

:func:`spice_track` loads the caller's kernels (LSK, SPK, PCK, name bindings or a
meta-kernel), samples the spacecraft's position relative to the moon on a regular
time grid, and expresses it in the flow frame used for all driving fields in
induct (see :mod:`induct.field.orbit`):

* ``z_hat``: the planet's spin axis ``s`` (unit vector, J2000);
* ``y_hat``: the moon-to-planet direction projected onto the plane perpendicular to
  ``s`` and normalised: ``y_hat = -(r - (r . s) s) / |r - (r . s) s|`` with ``r`` the
  planet-to-moon vector. For a moon in the planet's rotational equator this is the
  moon-to-planet unit vector; for an inclined orbit it differs from it by the moon's
  latitude (the frame stays exactly orthonormal);
* ``x_hat = y_hat x z_hat``: then ``x_hat = (s x r) / |s x r|``, the direction of
  corotation (the planet's eastward azimuth at the moon), and (x, y, z) is right-handed.

Geometric positions (aberration correction "NONE") in the J2000 frame are used. The
planet's spin axis comes from the loaded PCK (``BODYnnn_POLE_RA``/``POLE_DEC``: constant
term + rate * T + quadratic * T^2, T in Julian centuries TDB past J2000, in the frame
``BODYnnn_CONSTANTS_REF_FRAME`` if given, else J2000; nutation-precession terms are
ignored with a warning) or from the caller (RA, DEC in J2000). For a planet whose
prime-meridian rate ``BODYnnn_PM`` is negative (retrograde rotation in the IAU convention,
north pole on the north side of the invariable plane; Archinal et al. 2018, Celest. Mech.
Dyn. Astron. 130, 22, from memory) the spin axis is the south pole, so that ``x_hat``
follows the actual rotation.

Kernels the function loads are unloaded again before it returns (also on errors); the
caller's own loaded kernels are left alone, except a file the caller had loaded and also
passes in ``kernels``, which ends up unloaded. When none of the kernels is a
leap-seconds kernel, the built-in table of :mod:`induct.io.timescales` is loaded.

Track files
-----------
:func:`write_track_csv` writes the columns ``t_s,x_km,y_km,z_km,utc`` with full float
precision; :func:`induct.io.tracks.read_track` reads such files (the ``utc`` column is
carried along and ignored there).

The track is geometry only: the model that uses it leaves out the plasma interaction,
asymmetric shells and motional induction.
"""

from __future__ import annotations

import math
import os
import re
import tempfile
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from induct.io import timescales

__all__ = [
    "SpiceTrack",
    "spice_track",
    "spice_track_at",
    "flow_frame_axes_j2000",
    "radec_to_vector",
    "write_track_csv",
    "write_demo_kernels",
]

_IMPORT_MESSAGE = "this needs spiceypy: pip install 'induct[spice]'"
_SECONDS_PER_CENTURY = 86400.0 * 36525.0
_MAX_SAMPLES = 10_000_000


def _spice():
    try:
        import spiceypy
    except ImportError:
        raise ImportError(_IMPORT_MESSAGE) from None
    return spiceypy


def _one_line(text) -> str:
    return " ".join(str(text).split())


def _spice_message(err) -> str:
    """Short one-line text of a SpiceyError: its short code and the long message."""
    short = _one_line(getattr(err, "short", "") or "")
    long = _one_line(getattr(err, "long", "") or "")
    if not (short or long):
        long = _one_line(err)
    return f"{short}: {long}" if short and long else (short or long)


# ----------------------------------------------------------------------------- geometry (pure numpy)


def radec_to_vector(ra_deg, dec_deg) -> np.ndarray:
    """Unit vectors of right ascension and declination.

    Parameters
    ----------
    ra_deg, dec_deg : float or array_like, broadcastable
        Right ascension and declination (deg).

    Returns
    -------
    ndarray, shape (..., 3)
        ``(cos dec cos ra, cos dec sin ra, sin dec)``.

    Examples
    --------
    >>> radec_to_vector(0.0, 90.0).round(12).tolist()
    [0.0, 0.0, 1.0]
    """
    ra = np.radians(np.asarray(ra_deg, dtype=float))
    dec = np.radians(np.asarray(dec_deg, dtype=float))
    ra, dec = np.broadcast_arrays(ra, dec)
    return np.stack([np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)], axis=-1)


def flow_frame_axes_j2000(moon_from_planet_km, spin_axis) -> np.ndarray:
    """Flow-frame unit axes from the planet-to-moon vector and the planet's spin axis.

    Parameters
    ----------
    moon_from_planet_km : array_like, shape (N, 3)
        Position of the moon relative to the planet (km, any inertial frame).
    spin_axis : array_like, shape (3,) or (N, 3)
        The planet's spin axis in the same frame (any length; normalised here).

    Returns
    -------
    ndarray, shape (N, 3, 3)
        ``axes[k, 0]``, ``axes[k, 1]``, ``axes[k, 2]``: x, y, z unit vectors of the flow frame
        (rows), so that ``axes[k] @ v`` gives flow-frame components of a vector ``v``.
        ``z = s``, ``y = -(r - (r.s) s)/|...|``, ``x = y cross z``.

    Raises
    ------
    ValueError
        Bad shapes, a zero spin axis, or a moon on the spin axis (frame undefined).

    Examples
    --------
    >>> axes = flow_frame_axes_j2000([[1000.0, 0.0, 0.0]], [0.0, 0.0, 1.0])
    >>> (axes[0].round(12) + 0.0).tolist()  # x = corotation (+y here), y = toward the planet (-x)
    [[0.0, 1.0, 0.0], [-1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]
    """
    r = np.asarray(moon_from_planet_km, dtype=float)
    if r.ndim != 2 or r.shape[1] != 3:
        raise ValueError(f"moon_from_planet_km must have shape (N, 3), got {r.shape}")
    s = np.broadcast_to(np.asarray(spin_axis, dtype=float), r.shape)
    norm = np.linalg.norm(s, axis=1)
    if np.any(~(norm > 0)) or not np.all(np.isfinite(s)):
        raise ValueError("spin_axis must be finite and non-zero")
    z = s / norm[:, None]
    perp = r - np.sum(r * z, axis=1)[:, None] * z
    rho = np.linalg.norm(perp, axis=1)
    bad = ~(rho > 1e-12 * np.maximum(np.linalg.norm(r, axis=1), 1e-300))
    if np.any(bad):
        k = int(np.argmax(bad))
        raise ValueError(f"sample {k}: the moon lies on the planet's spin axis; the flow frame is undefined there")
    y = -perp / rho[:, None]
    x = np.cross(y, z)
    return np.stack([x, y, z], axis=1)


# ----------------------------------------------------------------------------- result


@dataclass(frozen=True, eq=False)
class SpiceTrack:
    """A flyby track computed from SPICE kernels, flow frame.

    Attributes
    ----------
    times_s : ndarray, shape (N,)
        Seconds from ``epoch_utc`` (TDB seconds elapsed) if it was given, else TDB seconds
        past J2000.
    tdb_s : ndarray, shape (N,)
        TDB seconds past J2000 (SPICE ET).
    utc : ndarray of str, shape (N,)
        ISO UTC (``YYYY-MM-DDThh:mm:ss.ffffff``, from ``spiceypy.et2utc``).
    positions_km : ndarray, shape (N, 3)
        Spacecraft relative to the moon, flow frame (km).
    axes_j2000 : ndarray, shape (N, 3, 3)
        Flow-frame unit axes (rows x, y, z) in J2000.
    epoch_utc : str or None
    spacecraft, moon, planet : tuple of (int, str)
        NAIF ID and name of each body.
    spin_axis_source : str
        Where the planet's spin axis came from.
    leapseconds_source : str
        "loaded kernels" or the built-in table of :mod:`induct.io.timescales`.
    kernels : tuple of str
        The kernel files given.
    """

    times_s: np.ndarray
    tdb_s: np.ndarray
    utc: np.ndarray
    positions_km: np.ndarray
    axes_j2000: np.ndarray
    epoch_utc: str | None
    spacecraft: tuple
    moon: tuple
    planet: tuple
    spin_axis_source: str
    leapseconds_source: str
    kernels: tuple

    @property
    def size(self) -> int:
        """Number of samples N."""
        return int(self.times_s.size)

    def comments(self) -> list:
        """Description lines for file headers (one line each)."""
        when = (
            f"t_s: TDB seconds from the epoch {self.epoch_utc} UTC"
            if self.epoch_utc
            else "t_s: TDB seconds past J2000 (SPICE ephemeris time)"
        )
        return [
            f"flyby track from SPICE: spacecraft {self.spacecraft[1]} ({self.spacecraft[0]}), moon {self.moon[1]} "
            f"({self.moon[0]}), planet {self.planet[1]} ({self.planet[0]})",
            "frame: flow (moon-centred; x along corotation, y toward the planet's spin axis, z along it); km",
            when,
            f"spin axis: {self.spin_axis_source}",
            f"leap seconds: {self.leapseconds_source}",
            "kernels: " + ", ".join(os.path.basename(k) for k in self.kernels),
            "geometry only: plasma interaction, asymmetric shells and motional induction are not modelled",
        ]

    def to_csv(self, path) -> None:
        """Write ``t_s,x_km,y_km,z_km,utc`` with full precision (see :func:`write_track_csv`)."""
        write_track_csv(path, self.times_s, self.positions_km, utc=self.utc, comments=self.comments())


# ----------------------------------------------------------------------------- CSV


def write_track_csv(path, times_s, positions_km, *, utc=None, comments=()) -> None:
    """Write a track as CSV ``t_s,x_km,y_km,z_km[,utc]`` (17 significant digits, exact round trip).

    The file is written to a temporary file in the target folder and moved into place.
    :func:`induct.io.tracks.read_track` reads it.

    Parameters
    ----------
    path : str or Path
    times_s : array_like, shape (N,)
        Times (s), strictly increasing.
    positions_km : array_like, shape (N, 3)
        Positions (km), flow frame.
    utc : sequence of str, shape (N,), optional
        UTC labels, written as a last column ``utc``.
    comments : sequence of str
        ``# ...`` lines written before the header.

    Examples
    --------
    >>> import os, tempfile
    >>> path = os.path.join(tempfile.mkdtemp(), "track.csv")
    >>> write_track_csv(path, [0.0, 60.0], [[1.0, 2.0, 3.0], [4.0, 5.0, 6.0]], utc=["2031-03-10T00:00:00", "2031-03-10T00:01:00"])
    >>> from pathlib import Path
    >>> Path(path).read_text().splitlines()[1]
    '0,1,2,3,2031-03-10T00:00:00'
    """
    t = np.asarray(times_s, dtype=float)
    pos = np.asarray(positions_km, dtype=float)
    if t.ndim != 1 or pos.shape != (t.size, 3):
        raise ValueError(f"times_s must have shape (N,) and positions_km (N, 3); got {t.shape} and {pos.shape}")
    if not (np.all(np.isfinite(t)) and np.all(np.isfinite(pos))):
        raise ValueError("times_s and positions_km must be finite")
    labels = None
    if utc is not None:
        labels = [str(u) for u in np.asarray(utc).ravel().tolist()]
        if len(labels) != t.size:
            raise ValueError(f"utc must have {t.size} entries, got {len(labels)}")
        if any(("," in u or "\n" in u or '"' in u) for u in labels):
            raise ValueError("utc labels must not contain commas, quotes or line breaks")
    header = "t_s,x_km,y_km,z_km" + (",utc" if labels is not None else "")
    lines = ["# " + _one_line(c) for c in comments] + [header]
    for k in range(t.size):
        row = ",".join(f"{v:.17g}" for v in (t[k], *pos[k]))
        lines.append(row + ("," + labels[k] if labels is not None else ""))
    _write_text_atomic(Path(path), "\n".join(lines) + "\n")


def _write_text_atomic(path: Path, text: str) -> None:
    from induct.io.files import write_text

    write_text(path, text)


# ----------------------------------------------------------------------------- SPICE helpers


def _kernel_list(kernels):
    if isinstance(kernels, (str, os.PathLike)):
        kernels = [kernels]
    out = [os.fspath(k) for k in kernels]
    if not out:
        raise ValueError("kernels: give at least one kernel file (SPK with the spacecraft and the moon)")
    return out


def _body(sp, value, role: str):
    """(NAIF ID, name) of a body given as an integer, an integer string or a name."""
    if isinstance(value, (bool, np.bool_)):
        raise ValueError(f"{role} {value!r}: not a NAIF ID or body name")
    if isinstance(value, (int, np.integer)):
        code = int(value)
    elif isinstance(value, str) and re.fullmatch(r"\s*[+-]?\d+\s*", value):
        code = int(value)
    elif isinstance(value, str) and value.strip():
        try:
            out = sp.bodn2c(value.strip())
        except sp.stypes.SpiceyError:  # NotFoundError is a SpiceyError
            out = None
        if isinstance(out, tuple):
            out = out[0] if out[1] else None
        if out is None:
            raise ValueError(
                f"{role} {value!r}: unknown body name (not a NAIF ID, and no loaded kernel binds it with "
                "NAIF_BODY_NAME/NAIF_BODY_CODE)"
            ) from None
        code = int(out)
    else:
        raise ValueError(f"{role} {value!r}: not a NAIF ID or body name")
    try:
        name = sp.bodc2n(code)
        if isinstance(name, tuple):
            name = name[0] if name[1] else str(code)
    except sp.stypes.SpiceyError:
        name = str(code)
    return code, str(name)


_BINARY_KINDS = {".bsp": "SPK", ".bpc": "PCK", ".bc": "CK", ".bds": "DSK", ".bes": "EK"}


def _check_kernel_kind(sp, path: str) -> None:
    """SPICE loads any file; refuse a binary-named file it reads as text and text without data."""
    try:
        kind = str(sp.kinfo(path)[0]).strip().upper()
    except sp.stypes.SpiceyError:  # pragma: no cover - the file was just loaded
        return
    want = _BINARY_KINDS.get(os.path.splitext(path)[1].lower())
    if want and kind != want:
        raise ValueError(f"{path}: not a binary {want} kernel (SPICE reads it as {kind})")
    if kind == "SPK":
        try:
            sp.spkobj(path)
        except sp.stypes.SpiceyError as err:
            raise ValueError(f"{path}: SPICE cannot read this SPK kernel ({_spice_message(err)})") from None
    if kind in ("TEXT", "META"):
        with open(path, "rb") as handle:
            if b"\\begindata" not in handle.read():
                raise ValueError(f"{path}: not a SPICE text kernel (no \\begindata block)")


def _str2et(sp, text, what: str) -> float:
    if not isinstance(text, str) or not text.strip():
        raise ValueError(f"{what} {text!r}: give a UTC time string such as 2031-03-10T12:00:00")
    try:
        return float(sp.str2et(text))
    except sp.stypes.SpiceyError as err:
        raise ValueError(f"{what} {text!r}: SPICE cannot read this time ({_spice_message(err)})") from None


def _loaded_files(sp, kind: str) -> list:
    files = []
    for i in range(sp.ktotal(kind)):
        out = sp.kdata(i, kind)
        files.append(out[0])
    return files


def _coverage_text(sp, code: int) -> str:
    """Coverage of a body in the loaded SPK files, as UTC intervals (first three)."""
    spans = []
    for f in _loaded_files(sp, "SPK"):
        try:
            cell = sp.spkcov(f, code)
        except sp.stypes.SpiceyError:
            continue
        for i in range(sp.wncard(cell)):
            spans.append(sp.wnfetd(cell, i))
    if not spans:
        return f"the loaded SPK files have no data for {code}"
    spans.sort()
    text = "; ".join(f"{sp.et2utc(a, 'ISOC', 0)} .. {sp.et2utc(b, 'ISOC', 0)}" for a, b in spans[:3])
    more = f" (+{len(spans) - 3} more)" if len(spans) > 3 else ""
    return f"coverage of {code} in the loaded SPK files: {text}{more}"


def _positions(sp, target, observer, ets, files):
    """Geometric J2000 position of target relative to observer (km), shape (N, 3), errors translated."""
    try:
        pos, _ = sp.spkpos(str(target[0]), ets, "J2000", "NONE", str(observer[0]))
        return np.asarray(pos, dtype=float).reshape(-1, 3)
    except sp.stypes.SpiceyError as err:
        first = None
        for k, et in enumerate(ets):  # the first time that fails
            try:
                sp.spkpos(str(target[0]), float(et), "J2000", "NONE", str(observer[0]))
            except sp.stypes.SpiceyError:
                first = k
                break
        where = f" at {sp.et2utc(float(ets[first]), 'ISOC', 3)} UTC" if first is not None else ""
        short = getattr(err, "short", "") or ""
        if "SPKINSUFFDATA" in short or "NOLOADEDFILES" in short or "NOSPKFILESLOADED" in short:
            raise ValueError(
                f"{target[2]} {target[1]} ({target[0]}): kernels {', '.join(os.path.basename(f) for f in files)} "
                f"do not cover it relative to {observer[2]} {observer[1]} ({observer[0]}){where}; "
                f"{_coverage_text(sp, target[0])}; {_coverage_text(sp, observer[0])}"
            ) from None
        raise ValueError(
            f"{target[2]} {target[1]} ({target[0]}) relative to {observer[2]} {observer[1]}{where}: "
            f"{_spice_message(err)}"
        ) from None


def _pole_from_pck(sp, code: int, name: str, ets: np.ndarray):
    """Spin axis (N, 3) in J2000 from BODYnnn_POLE_RA/DEC, and a description."""
    def poly(item):
        _, values = sp.bodvcd(code, item, 3)
        c = np.zeros(3)
        values = np.asarray(values, dtype=float).ravel()
        c[: values.size] = values[:3]
        return c

    ra_c, dec_c = poly("POLE_RA"), poly("POLE_DEC")
    T = ets / _SECONDS_PER_CENTURY
    ra = ra_c[0] + ra_c[1] * T + ra_c[2] * T**2
    dec = dec_c[0] + dec_c[1] * T + dec_c[2] * T**2
    axis = radec_to_vector(ra, dec)
    text = (
        f"PCK BODY{code}_POLE_RA = ({ra_c[0]:.10g}, {ra_c[1]:.6g}, {ra_c[2]:.6g}) deg, "
        f"POLE_DEC = ({dec_c[0]:.10g}, {dec_c[1]:.6g}, {dec_c[2]:.6g}) deg"
    )
    if sp.bodfnd(code, "NUT_PREC_RA") or sp.bodfnd(code, "NUT_PREC_DEC"):
        warnings.warn(
            f"planet {code} ({name}): nutation-precession terms of the pole are ignored; only "
            "the polynomial part of POLE_RA/POLE_DEC is used",
            stacklevel=3,
        )
        text += " (nutation-precession terms ignored)"
    ref_var = f"BODY{code}_CONSTANTS_REF_FRAME"
    if sp.expool(ref_var):
        ref = int(np.asarray(sp.gdpool(ref_var, 0, 1)).ravel()[0])
        if ref != 1:
            frame = sp.frmnam(ref)
            if not frame:
                raise ValueError(f"planet {code} ({name}): {ref_var} = {ref} is not a known inertial frame")
            rot = np.asarray(sp.pxform(frame, "J2000", float(ets[0])), dtype=float)
            axis = axis @ rot.T
            text += f" in {frame}"
    if sp.bodfnd(code, "PM"):
        _, pm = sp.bodvcd(code, "PM", 3)
        pm = np.asarray(pm, dtype=float).ravel()
        if pm.size > 1 and pm[1] < 0.0:
            axis = -axis
            text += "; PM rate < 0 (retrograde rotation): spin axis = -pole"
    return axis, text


def _spin_axis(sp, planet, ets, radec):
    code, name = planet[0], planet[1]
    has_pck = bool(sp.bodfnd(code, "POLE_RA") and sp.bodfnd(code, "POLE_DEC"))
    if radec is not None:
        try:
            ra, dec = (float(v) for v in radec)
        except (TypeError, ValueError):
            raise ValueError(f"spin_axis_radec_deg {radec!r}: give two numbers (RA_DEG, DEC_DEG), J2000") from None
        if not (math.isfinite(ra) and math.isfinite(dec) and -90.0 <= dec <= 90.0):
            raise ValueError(f"spin_axis_radec_deg {radec!r}: RA must be finite and DEC within -90..90 deg")
        axis = np.broadcast_to(radec_to_vector(ra, dec), (ets.size, 3)).copy()
        if has_pck:
            pck, _ = _pole_from_pck(sp, code, name, ets[:1])
            angle = math.degrees(math.acos(float(np.clip(np.dot(pck[0], axis[0]), -1.0, 1.0))))
            if angle > 0.01:
                warnings.warn(
                    f"planet {code} ({name}): the given spin axis differs by {angle:.4g} deg from the loaded "
                    "PCK's pole; using the given one",
                    stacklevel=3,
                )
        return axis, f"given (RA, DEC) = ({ra:.10g}, {dec:.10g}) deg, J2000"
    if not has_pck:
        raise ValueError(
            f"planet {code} ({name}): no pole data (BODY{code}_POLE_RA/POLE_DEC) in the loaded kernels; load a "
            "PCK or give spin_axis_radec_deg=(RA_DEG, DEC_DEG) (CLI: --spin-axis RA_DEG DEC_DEG)"
        )
    return _pole_from_pck(sp, code, name, ets)


# ----------------------------------------------------------------------------- main entry


def spice_track(
    kernels,
    spacecraft,
    moon,
    planet,
    start_utc: str,
    stop_utc: str,
    step_s: float,
    *,
    spin_axis_radec_deg=None,
    epoch_utc: str | None = None,
) -> SpiceTrack:
    """Flyby track of a spacecraft in the moon-centred flow frame, from SPICE kernels.

    Parameters
    ----------
    kernels : str, Path or sequence of them
        Kernel files (SPK, PCK, LSK, text kernels with name bindings, or meta-kernels). They are
        loaded for this call and unloaded before it returns.
    spacecraft, moon, planet : int or str
        NAIF integer IDs (e.g. -9900, 9101, 9100) or names known to SPICE or the kernels.
    start_utc, stop_utc : str
        UTC interval (any format ``spiceypy.str2et`` reads, e.g. ``2031-03-10T10:00:00``).
    step_s : float
        Sampling step (s, TDB). Samples at ``start + k * step_s`` up to ``stop`` (the last sample
        is ``stop`` only if it falls on the grid, within 1e-6 s).
    spin_axis_radec_deg : (float, float), optional
        The planet's spin axis as (RA, DEC) in J2000 (deg). Needed when the kernels hold no
        ``BODYnnn_POLE_RA/POLE_DEC``; overrides them otherwise (with a warning if they differ by
        more than 0.01 deg).
    epoch_utc : str, optional
        Epoch for ``times_s`` (e.g. the scenario's driving-line epoch); default: times are TDB
        seconds past J2000.

    Returns
    -------
    SpiceTrack
        ``times_s`` (N,), ``tdb_s`` (N,), ``utc`` (N,), ``positions_km`` (N, 3) in the flow frame,
        ``axes_j2000`` (N, 3, 3) and a description of the sources.

    Raises
    ------
    ImportError
        spiceypy is missing.
    ValueError
        One line naming the file or item: a kernel file that does not exist or that SPICE
        cannot load; an unknown body name; an unreadable time; stop not after start; a step
        that is not positive; kernels that do not cover a body over the interval (with the
        first uncovered time and the loaded coverage); no pole data and no
        ``spin_axis_radec_deg``.

    Examples
    --------
    >>> import tempfile
    >>> files = write_demo_kernels(tempfile.mkdtemp())
    >>> track = spice_track(files, "PROBE", "ILMARE", "TARVOS", "2031-03-10T11:50:00",
    ...                     "2031-03-10T12:10:00", 60.0, epoch_utc="2031-03-10T12:00:00")
    >>> track.positions_km.shape, abs(float(track.times_s[10])) < 1e-6
    ((21, 3), True)
    >>> round(float(np.linalg.norm(track.positions_km, axis=1).min()), 3)  # closest approach (km)
    2040.0
    >>> str(track.utc[0])
    '2031-03-10T11:50:00.000000'
    """
    step = float(step_s)
    if not (math.isfinite(step) and step > 0.0):
        raise ValueError(f"step_s {step_s!r}: must be a positive number of seconds")

    def grid(sp):
        et0 = _str2et(sp, start_utc, "start_utc")
        et1 = _str2et(sp, stop_utc, "stop_utc")
        if not et1 > et0:
            raise ValueError(f"stop_utc {stop_utc!r}: must be after start_utc {start_utc!r}")
        n = int(math.floor((et1 - et0) / step + 1e-6 / step)) + 1
        if n > _MAX_SAMPLES:
            raise ValueError(f"step_s {step_s!r}: {n} samples over the interval; at most {_MAX_SAMPLES} allowed")
        ets = et0 + step * np.arange(n, dtype=float)
        ets[-1] = min(ets[-1], et1)
        return ets, lambda ep: (et0 - ep) + step * np.arange(n, dtype=float)

    return _track(kernels, spacecraft, moon, planet, grid, spin_axis_radec_deg, epoch_utc)


def spice_track_at(kernels, spacecraft, moon, planet, tdb_s, *, spin_axis_radec_deg=None,
                   epoch_utc: str | None = None) -> SpiceTrack:
    """Like :func:`spice_track`, at given times (e.g. the sample times of a magnetometer file).

    Parameters
    ----------
    kernels, spacecraft, moon, planet, spin_axis_radec_deg, epoch_utc
        As for :func:`spice_track`.
    tdb_s : array_like, shape (N,)
        TDB seconds past J2000 (SPICE ET), finite and strictly increasing, N >= 1.

    Returns
    -------
    SpiceTrack
        ``tdb_s`` as given; ``times_s`` = ``tdb_s`` minus the epoch's TDB (or ``tdb_s`` without an epoch).

    Examples
    --------
    >>> import tempfile
    >>> files = write_demo_kernels(tempfile.mkdtemp())
    >>> from induct.io.timescales import utc_to_tdb
    >>> t = utc_to_tdb(["2031-03-10T11:59:00", "2031-03-10T12:00:00"])
    >>> round(float(np.linalg.norm(spice_track_at(files, -9900, 9101, 9100, t).positions_km[1])), 3)
    2040.0
    """
    ets = np.array(tdb_s, dtype=float).reshape(-1)
    if ets.size == 0 or not np.all(np.isfinite(ets)):
        raise ValueError("tdb_s: give at least one finite time (TDB seconds past J2000)")
    if np.any(np.diff(ets) <= 0.0):
        raise ValueError("tdb_s: times must increase strictly")
    if ets.size > _MAX_SAMPLES:
        raise ValueError(f"tdb_s: {ets.size} samples; at most {_MAX_SAMPLES} allowed")
    return _track(kernels, spacecraft, moon, planet, lambda sp: (ets, lambda ep: ets - ep), spin_axis_radec_deg,
                  epoch_utc)


def _track(kernels, spacecraft, moon, planet, grid, spin_axis_radec_deg, epoch_utc) -> SpiceTrack:
    """Load the kernels, sample the times ``grid(sp) -> (ets, times_from(epoch_et))``, unload."""
    sp = _spice()
    files = _kernel_list(kernels)
    for f in files:
        if not os.path.isfile(f):
            raise ValueError(f"{f}: kernel file not found")
    loaded = []
    tmpdir = None
    try:
        for f in files:
            try:
                sp.furnsh(f)
            except sp.stypes.SpiceyError as err:
                raise ValueError(f"{f}: SPICE cannot load this kernel ({_spice_message(err)})") from None
            loaded.append(f)
            _check_kernel_kind(sp, f)
        if sp.expool("DELTET/DELTA_AT"):
            leap_source = "loaded kernels"
        else:
            tmpdir = tempfile.TemporaryDirectory(prefix="induct-lsk-")
            lsk = os.path.join(tmpdir.name, "induct_builtin.tls")
            with open(lsk, "w", encoding="utf-8") as handle:
                handle.write(timescales.lsk_text())
            sp.furnsh(lsk)
            loaded.append(lsk)
            leap_source = timescales.default_constants().source
        sc = _body(sp, spacecraft, "spacecraft") + ("spacecraft",)
        mn = _body(sp, moon, "moon") + ("moon",)
        pl = _body(sp, planet, "planet") + ("planet",)
        for a, b in ((sc, mn), (sc, pl), (mn, pl)):
            if a[0] == b[0]:
                raise ValueError(f"{a[2]} and {b[2]} are the same body ({a[0]})")
        ets, times_from = grid(sp)
        ep = _str2et(sp, epoch_utc, "epoch_utc") if epoch_utc is not None else 0.0
        spk_files = _loaded_files(sp, "SPK")
        r_sc = _positions(sp, sc, mn, ets, spk_files)
        r_moon = _positions(sp, mn, pl, ets, spk_files)
        axis, axis_source = _spin_axis(sp, pl, ets, spin_axis_radec_deg)
        axes = flow_frame_axes_j2000(r_moon, axis)
        positions = np.einsum("nij,nj->ni", axes, r_sc)
        utc = np.asarray(sp.et2utc(ets, "ISOC", 6)).reshape(-1).astype(str)
        return SpiceTrack(
            times_s=times_from(ep) if epoch_utc is not None else ets,
            tdb_s=ets,
            utc=utc,
            positions_km=positions,
            axes_j2000=axes,
            epoch_utc=epoch_utc,
            spacecraft=sc[:2],
            moon=mn[:2],
            planet=pl[:2],
            spin_axis_source=axis_source,
            leapseconds_source=leap_source,
            kernels=tuple(files),
        )
    finally:
        for f in reversed(loaded):
            try:
                sp.unload(f)
            except sp.stypes.SpiceyError:  # pragma: no cover - unload of a loaded file does not fail
                pass
        if tmpdir is not None:
            tmpdir.cleanup()


# ----------------------------------------------------------------------------- demo kernels

#: Fictional demo system written by :func:`write_demo_kernels` (all values invented).
DEMO = {
    "planet": (9100, "TARVOS"),
    "moon": (9101, "ILMARE"),
    "spacecraft": (-9900, "PROBE"),
    "pole_ra_deg": (40.0, 0.0),
    "pole_dec_deg": (83.5, 0.0),
    "orbit_radius_km": 617500.0,
    "gm_km3_s2": 1.0e8,
    "moon_start_utc": "2031-03-09T00:00:00",
    "moon_stop_utc": "2031-03-12T00:00:00",
    "closest_approach_utc": "2031-03-10T12:00:00",
    "closest_approach_flow_km": (0.0, -1200.0, math.sqrt(2040.0**2 - 1200.0**2)),  # |r| = 2040 km
    "speed_km_s": 6.0,
}


def write_demo_kernels(folder) -> list:
    """Write kernels of a fictional system (planet TARVOS 9100, moon ILMARE 9101, PROBE -9900).

    The moon moves on a circular orbit (radius 617 500 km) in the planet's equator; the probe
    crosses it on a straight line at 6 km/s (relative to the moon), closest approach 2040 km
    at 2031-03-10T12:00:00 UTC, coverage 2031-03-10T09:50 .. 14:10. Files: an LSK (the
    built-in leap-second table), a text PCK with the pole and name bindings, and an SPK
    (type 9). Each is written to a temporary file in ``folder`` and moved into place.

    Parameters
    ----------
    folder : str or Path
        Existing folder.

    Returns
    -------
    list of str
        Paths of the LSK, the text kernel and the SPK.

    Examples
    --------
    >>> import os, tempfile
    >>> [os.path.basename(p) for p in write_demo_kernels(tempfile.mkdtemp())]
    ['tarvos_demo.tls', 'tarvos_demo.tpc', 'tarvos_demo.bsp']
    """
    sp = _spice()
    folder = Path(folder)
    if not folder.is_dir():
        raise ValueError(f"{folder}: folder not found")
    d = DEMO
    lsk = folder / "tarvos_demo.tls"
    _write_text_atomic(lsk, timescales.lsk_text())
    pck = folder / "tarvos_demo.tpc"
    _write_text_atomic(
        pck,
        "KPL/PCK\n\nFictional system for induct demos (all values invented).\n\n\\begindata\n\n"
        f"BODY9100_POLE_RA  = ( {d['pole_ra_deg'][0]!r} {d['pole_ra_deg'][1]!r} 0.0 )\n"
        f"BODY9100_POLE_DEC = ( {d['pole_dec_deg'][0]!r} {d['pole_dec_deg'][1]!r} 0.0 )\n"
        "BODY9100_PM       = ( 0.0 815.094 0.0 )\n"
        "BODY9100_RADII    = ( 65000.0 65000.0 61000.0 )\n"
        "BODY9101_RADII    = ( 1540.0 1540.0 1540.0 )\n"
        "NAIF_BODY_NAME   += ( 'TARVOS' 'ILMARE' 'PROBE' )\n"
        "NAIF_BODY_CODE   += ( 9100 9101 -9900 )\n\n\\begintext\n",
    )
    spk = folder / "tarvos_demo.bsp"
    const = timescales.default_constants()
    t_ca = float(timescales.utc_to_tdb(d["closest_approach_utc"], constants=const))
    t0 = float(timescales.utc_to_tdb(d["moon_start_utc"], constants=const))
    t1 = float(timescales.utc_to_tdb(d["moon_stop_utc"], constants=const))
    pole = radec_to_vector(d["pole_ra_deg"][0], d["pole_dec_deg"][0])
    e1 = np.cross(pole, [0.0, 0.0, 1.0])
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(pole, e1)
    a, gm = d["orbit_radius_km"], d["gm_km3_s2"]
    n_rad = math.sqrt(gm / a**3)
    moon_t = np.arange(t0, t1 + 1.0, 600.0)
    ph = n_rad * (moon_t - t_ca)
    moon_states = np.hstack([
        a * (np.cos(ph)[:, None] * e1 + np.sin(ph)[:, None] * e2),
        a * n_rad * (-np.sin(ph)[:, None] * e1 + np.cos(ph)[:, None] * e2),
    ])
    # Probe: straight line relative to the moon, in the flow frame at closest approach.
    axes = flow_frame_axes_j2000(moon_states[[int(np.argmin(np.abs(moon_t - t_ca)))], :3], pole)[0]
    ca = np.asarray(d["closest_approach_flow_km"]) @ axes
    vel = d["speed_km_s"] * axes[0]  # along the flow direction: perpendicular to the CA vector
    probe_t = t_ca + np.arange(-7800.0, 7801.0, 600.0)
    probe_states = np.hstack([ca + (probe_t - t_ca)[:, None] * vel, np.broadcast_to(vel, (probe_t.size, 3))])
    from induct.io.files import atomic_path

    with atomic_path(spk, suffix=".bsp") as tmp:  # spkopn creates the file itself
        handle = sp.spkopn(str(tmp), "induct demo", 0)
        sp.spkw09(handle, 9101, 9100, "J2000", moon_t[0], moon_t[-1], "ILMARE", 11, moon_t.size, moon_states, moon_t)
        sp.spkw09(handle, -9900, 9101, "J2000", probe_t[0], probe_t[-1], "PROBE", 1, probe_t.size, probe_states, probe_t)
        sp.spkcls(handle)
    return [str(lsk), str(pck), str(spk)]
