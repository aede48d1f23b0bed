"""Magnetometer samples from CDF files (ISTP conventions), and model predictions written as CDF.

Reading (:func:`read_magnetometer_cdf`)
--------------------------------------
The caller names the field variable (3 components per record, ``UNITS`` nT) and the
position variable (3 components per record, ``UNITS`` km, moon-centred). Following the
ISTP/IACG guidelines for CDF variable attributes:

* the time variable is the one named by the field variable's ``DEPEND_0``; its type may be
  ``CDF_EPOCH`` (ms since 0000-01-01, UTC calendar without leap seconds),
  ``CDF_EPOCH16`` (s and ps since 0000-01-01, same calendar) or ``CDF_TIME_TT2000``
  (ns since J2000 TT, leap-second aware); times are converted to TDB seconds past J2000
  with :mod:`induct.io.timescales`;
* a sample is dropped when any of its time, field or position values equals the
  variable's ``FILLVAL`` (or is NaN), and counted; then when any value lies outside the
  variable's ``VALIDMIN``/``VALIDMAX`` (scalars or one per component), and counted
  (``CDF_EPOCH16`` times: fill values only, their limits are not compared);
* ``UNITS`` must say nT (field) and km (positions); other units are refused.

The frame of the vectors is given by the caller; only ``"flow"`` (the moon-centred flow
frame of :mod:`induct.field.orbit`) is accepted for now. Frames map to converters in
``FRAME_CONVERTERS``, ready for more.

Writing (:func:`write_prediction_cdf`)
--------------------------------------
A prediction along a track (positions and one or more field vectors) is written with the
ISTP global attributes (``Project``, ``Source_name``, ``Discipline``, ``Data_type``,
``Descriptor``, ``Logical_source``, ``Logical_file_id``, ``TEXT`` with the model's
limits, ...) and variable attributes (``FIELDNAM``, ``CATDESC``, ``UNITS``, ``VAR_TYPE``,
``DEPEND_0``, ``FILLVAL``, ``VALIDMIN``/``VALIDMAX``, ``LABL_PTR_1`` with label
variables, ``FORMAT``, ``DISPLAY_TYPE``); time is ``Epoch`` of type ``CDF_TIME_TT2000``.
The file is written to a temporary file in the target folder and moved into place.

cdflib (Space Physics Data Facility, pure Python) is imported only inside the functions.
"""

from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from induct.constants import MODEL_LIMITS as _MODEL_LIMITS
from induct.io import timescales

__all__ = [
    "FRAME_CONVERTERS",
    "MODEL_LIMITS",
    "MagnetometerSeries",
    "read_magnetometer_cdf",
    "write_prediction_cdf",
    "tt2000_to_tdb",
    "tdb_to_tt2000",
    "cdf_epoch_to_tdb",
    "cdf_epoch16_to_tdb",
]

_IMPORT_MESSAGE = "this needs cdflib: pip install 'induct[cdf]'"

#: What the model behind a prediction leaves out (the project's one sentence; written to the TEXT global attribute).
MODEL_LIMITS = _MODEL_LIMITS

#: What a prediction file holds (written to TEXT before :data:`MODEL_LIMITS`).
_DESCRIPTION = (
    "Model prediction by induct: quasi-static electromagnetic induction in a layered moon driven by the parent "
    "planet's time-varying field; the steady background field is not included. Frame: moon-centred flow frame "
    "(x along corotation, y toward the planet's spin axis, z along it)."
)

_EPOCH_TYPES = {31: "CDF_EPOCH", 32: "CDF_EPOCH16", 33: "CDF_TIME_TT2000"}
_TT2000_FILL = -9223372036854775808
_J2000_NOON_FROM_0AD_S = 730485 * 86400 + 43200  # 0000-01-01T00:00 -> 2000-01-01T12:00 (UTC calendar)
_UNITS = {
    "nT": {"nt", "nanotesla", "nanoteslas"},
    "km": {"km", "kilometer", "kilometers", "kilometre", "kilometres"},
}


def _cdflib():
    try:
        import cdflib
    except ImportError:
        raise ImportError(_IMPORT_MESSAGE) from None
    return cdflib


def _flow(vectors, tdb_s):
    return np.asarray(vectors, dtype=float)


#: Frame name -> function(vectors (N, 3), tdb_s (N,)) -> flow-frame vectors (N, 3).
FRAME_CONVERTERS = {"flow": _flow}


def _check_frame(frame) -> str:
    if frame not in FRAME_CONVERTERS:
        raise ValueError(f"frame {frame!r}: not supported; allowed: {', '.join(FRAME_CONVERTERS)}")
    return frame


# ----------------------------------------------------------------------------- epoch conversions


def tt2000_to_tdb(tt2000_ns, *, constants=None):
    """TDB seconds past J2000 from ``CDF_TIME_TT2000`` values (ns since J2000 TT).

    Parameters
    ----------
    tt2000_ns : int or array_like of int64, any shape
    constants : TimeConstants or path of an LSK, optional
        TDB - TT constants (see :mod:`induct.io.timescales`).

    Returns
    -------
    float or ndarray of float

    Examples
    --------
    >>> from induct.io.timescales import tdb_to_utc
    >>> tdb_to_utc(tt2000_to_tdb(0), digits=3)
    '2000-01-01T11:58:55.816'
    """
    ns = np.asarray(tt2000_ns, dtype=np.int64)
    whole = np.floor_divide(ns, 10**9)
    tt = whole.astype(float) + (ns - whole * 10**9).astype(float) * 1e-9
    return timescales.tt_to_tdb(tt, constants=constants)


def tdb_to_tt2000(tdb_s, *, constants=None):
    """``CDF_TIME_TT2000`` values (int64 ns since J2000 TT) from TDB seconds past J2000.

    Parameters
    ----------
    tdb_s : float or array_like, any shape
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    int or ndarray of int64
        Rounded to the nanosecond (float64 input resolves ~0.1 us near 1e9 s).

    Examples
    --------
    >>> int(tdb_to_tt2000(tt2000_to_tdb(123456789000)))
    123456789000
    """
    ns = _round_ns(timescales.tdb_to_tt(tdb_s, constants=constants))
    return ns.item() if ns.ndim == 0 else ns


def _round_ns(seconds) -> np.ndarray:
    """Nanoseconds (int64) of float seconds, rounding the whole and fractional parts separately."""
    s = np.asarray(seconds, dtype=float)
    whole = np.floor(s)
    return whole.astype(np.int64) * 10**9 + np.rint((s - whole) * 1e9).astype(np.int64)


def cdf_epoch_to_tdb(epoch_ms, *, constants=None):
    """TDB seconds past J2000 from ``CDF_EPOCH`` values (ms since 0000-01-01T00:00, UTC calendar).

    Parameters
    ----------
    epoch_ms : float or array_like, any shape
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray

    Examples
    --------
    >>> from induct.io.timescales import tdb_to_utc
    >>> tdb_to_utc(cdf_epoch_to_tdb(63113947200000.0), digits=3)  # 2000-01-01T12:00 UTC
    '2000-01-01T12:00:00.000'
    """
    ms = np.asarray(epoch_ms, dtype=float)
    count = (ms - _J2000_NOON_FROM_0AD_S * 1000.0) * 1e-3
    return timescales.utc_count_to_tdb(count, constants=constants)


def cdf_epoch16_to_tdb(epoch16, *, constants=None):
    """TDB seconds past J2000 from ``CDF_EPOCH16`` values (complex: s + 1j * ps since 0000-01-01).

    Parameters
    ----------
    epoch16 : complex or array_like of complex, any shape
        Real part: seconds since 0000-01-01T00:00 (UTC calendar); imaginary part: picoseconds.
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray

    Examples
    --------
    >>> from induct.io.timescales import tdb_to_utc
    >>> tdb_to_utc(cdf_epoch16_to_tdb(63113947200 + 5e11j), digits=3)
    '2000-01-01T12:00:00.500'
    """
    e = np.asarray(epoch16, dtype=complex)
    count = (e.real - float(_J2000_NOON_FROM_0AD_S)) + e.imag * 1e-12
    return timescales.utc_count_to_tdb(count, constants=constants)


# ----------------------------------------------------------------------------- reading


@dataclass(frozen=True, eq=False)
class MagnetometerSeries:
    """Magnetometer samples read from a CDF file (valid samples only).

    Attributes
    ----------
    tdb_s : ndarray, shape (N,)
        TDB seconds past J2000, strictly increasing.
    times_s : ndarray, shape (N,)
        Seconds from ``epoch_utc`` if it was given, else equal to ``tdb_s``.
    positions_km : ndarray, shape (N, 3)
        Moon-centred positions (km), flow frame.
    field_nT : ndarray, shape (N, 3)
        Magnetic field (nT), flow frame.
    frame : str
        Frame of the file's vectors.
    source : str
        The file.
    field_variable, position_variable, time_variable : str
    epoch_type : str
        ``CDF_EPOCH``, ``CDF_EPOCH16`` or ``CDF_TIME_TT2000``.
    n_records : int
        Records in the file.
    n_fill : int
        Samples dropped for a FILLVAL (or NaN) in time, field or position.
    n_out_of_range : int
        Further samples dropped for a value outside VALIDMIN/VALIDMAX.
    dropped_by_variable : dict
        ``{variable: {"fill": n, "out_of_range": n}}`` (a sample may count for several variables).
    epoch_utc : str or None
    """

    tdb_s: np.ndarray
    times_s: np.ndarray
    positions_km: np.ndarray
    field_nT: np.ndarray
    frame: str
    source: str
    field_variable: str
    position_variable: str
    time_variable: str
    epoch_type: str
    n_records: int
    n_fill: int
    n_out_of_range: int
    dropped_by_variable: dict = field(default_factory=dict)
    epoch_utc: str | None = None

    @property
    def size(self) -> int:
        """Number of valid samples N."""
        return int(self.tdb_s.size)

    def utc(self, digits: int = 3) -> np.ndarray:
        """ISO UTC strings of the samples, shape (N,)."""
        return np.atleast_1d(timescales.tdb_to_utc(self.tdb_s, digits=digits))


def _attr_value(value):
    """cdflib attribute values come as scalars, numpy scalars, arrays or one-element lists."""
    if isinstance(value, list) and len(value) == 1:
        value = value[0]
    return value


def _units_ok(units, want: str) -> bool:
    return str(units).strip().replace(" ", "").lower() in {u.lower() for u in _UNITS[want]}


def _vector_data(cdf, source: str, name: str, n_expected: int | None):
    raw = cdf.varget(name)
    if raw is None:
        raise ValueError(f"{source}: variable {name}: no records")
    data = np.asarray(raw)
    if data.ndim == 1 and data.size == 3 and n_expected in (None, 1):
        data = data.reshape(1, 3)
    if data.ndim != 2 or data.shape[1] != 3:
        raise ValueError(f"{source}: variable {name}: expected 3 components per record (shape (N, 3)), got shape {data.shape}")
    if not np.issubdtype(data.dtype, np.number) or np.iscomplexobj(data):
        raise ValueError(f"{source}: variable {name}: expected real numbers, got {data.dtype}")
    return data


def _masks(data, attrs, source: str, name: str):
    """(fill mask, out-of-range mask) per record; any component counts."""
    fill = np.zeros(data.shape[0], dtype=bool)
    if np.issubdtype(data.dtype, np.floating):
        fill |= np.isnan(data).reshape(data.shape[0], -1).any(axis=1)
    if "FILLVAL" in attrs:
        fv = np.asarray(_attr_value(attrs["FILLVAL"]))
        try:
            fv = fv.astype(data.dtype)
        except (TypeError, ValueError):
            raise ValueError(f"{source}: variable {name}: attribute FILLVAL {fv!r} does not fit the data type") from None
        fill |= (data == fv).reshape(data.shape[0], -1).any(axis=1)
    bad = np.zeros(data.shape[0], dtype=bool)
    for key, op in (("VALIDMIN", np.less), ("VALIDMAX", np.greater)):
        if key in attrs:
            lim = np.asarray(_attr_value(attrs[key]))
            if np.iscomplexobj(lim) or np.iscomplexobj(data):
                continue  # EPOCH16 limits: not compared
            lim = lim.astype(float) if not np.issubdtype(data.dtype, np.integer) else lim.astype(np.int64)
            if lim.size not in (1, data.reshape(data.shape[0], -1).shape[1]):
                raise ValueError(
                    f"{source}: variable {name}: attribute {key} has {lim.size} values; expected 1 or one per component"
                )
            with np.errstate(invalid="ignore"):
                out = op(data.reshape(data.shape[0], -1), lim.reshape(1, -1))
            bad |= out.any(axis=1)
    return fill, bad & ~fill


def _time_values(cdf, source: str, tname: str, field_name: str, constants):
    try:
        inq = cdf.varinq(tname)
    except ValueError:
        raise ValueError(
            f"{source}: variable {field_name}: attribute DEPEND_0 names {tname!r}, which is not a variable of the file"
        ) from None
    dtype = int(inq.Data_Type)
    if dtype not in _EPOCH_TYPES:
        raise ValueError(
            f"{source}: variable {tname} (DEPEND_0 of {field_name}): type {inq.Data_Type_Description} is not a CDF "
            "epoch type (CDF_EPOCH, CDF_EPOCH16, CDF_TIME_TT2000)"
        )
    raw = cdf.varget(tname)
    if raw is None:
        raise ValueError(f"{source}: variable {tname}: no records")
    raw = np.atleast_1d(np.asarray(raw))
    if dtype == 32 and not np.iscomplexobj(raw):  # some writers return (N, 2) floats
        raw = raw.reshape(-1, 2) @ np.array([1.0, 1j])
    raw = raw.ravel()
    attrs = cdf.varattsget(tname) or {}
    fill = np.zeros(raw.size, dtype=bool)
    if dtype == 33:
        fill |= raw == _TT2000_FILL
    elif dtype == 31:
        fill |= ~np.isfinite(raw) | (raw <= -1e30)
    else:
        fill |= ~np.isfinite(raw.real) | (raw.real <= -1e30)
    f2, bad = _masks(raw.reshape(-1, 1) if dtype != 32 else raw.real.reshape(-1, 1),
                     {k: v for k, v in attrs.items() if k in ("FILLVAL", "VALIDMIN", "VALIDMAX") and dtype != 32}, source, tname)
    fill |= f2
    bad &= ~fill
    tdb = np.full(raw.size, np.nan)
    ok = ~fill
    if ok.any():
        try:
            if dtype == 33:
                tdb[ok] = tt2000_to_tdb(raw[ok], constants=constants)
            elif dtype == 31:
                tdb[ok] = cdf_epoch_to_tdb(raw[ok], constants=constants)
            else:
                tdb[ok] = cdf_epoch16_to_tdb(raw[ok], constants=constants)
        except ValueError as exc:
            raise ValueError(f"{source}: variable {tname}: {exc}") from None
    return tdb, fill, bad, _EPOCH_TYPES[dtype], raw


def read_magnetometer_cdf(
    path,
    field_variable: str,
    position_variable: str,
    *,
    frame: str = "flow",
    epoch_utc: str | None = None,
    constants=None,
) -> MagnetometerSeries:
    """Read magnetometer samples (field and position) from a CDF file, ISTP conventions.

    Parameters
    ----------
    path : str or Path
        The CDF file.
    field_variable : str
        Variable with the field, shape (N, 3), ``UNITS`` nT; its ``DEPEND_0`` names the time variable.
    position_variable : str or None
        Variable with the moon-centred position, shape (N, 3), ``UNITS`` km, on the same time
        variable (or one with identical times). None: the file holds no positions (they come from
        elsewhere, e.g. SPICE kernels); ``positions_km`` is then NaN.
    frame : str
        Frame of both vectors; only ``"flow"`` for now.
    epoch_utc : str, optional
        Epoch for ``times_s`` (ISO UTC); default ``times_s = tdb_s``.
    constants : TimeConstants or path of an LSK, optional
        Leap seconds and TDB - TT constants (default: the built-in table).

    Returns
    -------
    MagnetometerSeries
        ``tdb_s`` (N,), ``times_s`` (N,), ``positions_km`` (N, 3), ``field_nT`` (N, 3) of the
        valid samples, and the counts of dropped ones.

    Raises
    ------
    ImportError
        cdflib is missing.
    ValueError
        One line naming the file, the variable and the attribute: missing file or variable,
        missing ``DEPEND_0``/``UNITS``, units other than nT/km, non-epoch time variable, wrong
        shapes or record counts, every sample fill or out of range, times not strictly
        increasing, an unsupported frame.

    Examples
    --------
    >>> import os, tempfile
    >>> path = os.path.join(tempfile.mkdtemp(), "pred.cdf")
    >>> t = 9.84e8 + 60.0 * np.arange(3)
    >>> write_prediction_cdf(path, t, [[2000.0, 0, 0]] * 3, np.ones((3, 3)))
    >>> s = read_magnetometer_cdf(path, "B_induced", "Position")
    >>> s.field_nT.shape, s.n_fill, round(float(s.tdb_s[1] - s.tdb_s[0]), 6)
    ((3, 3), 0, 60.0)
    """
    cdflib = _cdflib()
    _check_frame(frame)
    path = Path(path)
    source = str(path)
    if not path.is_file():
        raise ValueError(f"{source}: file not found")
    try:
        cdf = cdflib.CDF(str(path))
    except Exception as exc:  # cdflib raises several kinds for a bad file
        raise ValueError(f"{source}: not a readable CDF file ({' '.join(str(exc).split())})") from None
    info = cdf.cdf_info()
    names = list(info.zVariables) + list(info.rVariables)
    for role, name in (("field_variable", field_variable), ("position_variable", position_variable)):
        if name is None and role == "position_variable":
            continue
        if name not in names:
            shown = ", ".join(names[:20]) + (" ..." if len(names) > 20 else "")
            raise ValueError(f"{source}: variable {name!r} ({role}) not found; variables: {shown}")
    fattrs = cdf.varattsget(field_variable) or {}
    pattrs = (cdf.varattsget(position_variable) or {}) if position_variable is not None else {}
    checks = ((field_variable, fattrs, "nT"),) + (((position_variable, pattrs, "km"),) if position_variable else ())
    for name, attrs, want in checks:
        if "UNITS" not in attrs:
            raise ValueError(f"{source}: variable {name}: attribute UNITS missing; expected {want}")
        units = _attr_value(attrs["UNITS"])
        if not _units_ok(units, want):
            raise ValueError(f"{source}: variable {name}: attribute UNITS is {str(units)!r}; expected {want}")
    if "DEPEND_0" not in fattrs:
        raise ValueError(f"{source}: variable {field_variable}: attribute DEPEND_0 missing (it names the time variable)")
    tname = str(_attr_value(fattrs["DEPEND_0"])).strip()
    tdb, tfill, tbad, etype, traw = _time_values(cdf, source, tname, field_variable, constants)
    n = tdb.size
    ptname = str(_attr_value(pattrs.get("DEPEND_0", tname))).strip()
    if position_variable is not None and ptname != tname:
        ptdb, ptfill, _, _, _ = _time_values(cdf, source, ptname, position_variable, constants)
        same = ptdb.size == n and np.array_equal(ptfill, tfill) and np.allclose(ptdb[~tfill], tdb[~tfill], rtol=0, atol=1e-9)
        if not same:
            raise ValueError(
                f"{source}: variable {position_variable}: attribute DEPEND_0 is {ptname!r}, with times that differ from "
                f"{tname!r} (DEPEND_0 of {field_variable}); resample the positions to the field's times"
            )
    b = _vector_data(cdf, source, field_variable, n)
    if position_variable is not None:
        r = _vector_data(cdf, source, position_variable, n)
    else:
        r = np.full((n, 3), np.nan)
    for name, data in ((field_variable, b), (position_variable, r)):
        if data.shape[0] != n:
            raise ValueError(f"{source}: variable {name}: {data.shape[0]} records, but time variable {tname} has {n}")
    bfill, bbad = _masks(b, fattrs, source, field_variable)
    if position_variable is not None:
        rfill, rbad = _masks(r, pattrs, source, position_variable)
    else:
        rfill = rbad = np.zeros(n, dtype=bool)
    fill = tfill | bfill | rfill
    bad = (tbad | bbad | rbad) & ~fill
    keep = ~(fill | bad)
    dropped = {
        tname: {"fill": int(tfill.sum()), "out_of_range": int(tbad.sum())},
        field_variable: {"fill": int(bfill.sum()), "out_of_range": int(bbad.sum())},
    }
    if position_variable is not None:
        dropped[position_variable] = {"fill": int(rfill.sum()), "out_of_range": int(rbad.sum())}
    if not keep.any():
        raise ValueError(
            f"{source}: variable {field_variable}: no valid samples among {n} records ({int(fill.sum())} fill values, "
            f"{int(bad.sum())} outside VALIDMIN/VALIDMAX in "
            f"{', '.join(v for v in (tname, field_variable, position_variable) if v)})"
        )
    tdb_k = tdb[keep]
    step = np.diff(tdb_k)
    if np.any(step <= 0.0):
        i = int(np.argmax(step <= 0.0)) + 1
        record = int(np.flatnonzero(keep)[i])
        raise ValueError(
            f"{source}: variable {tname}: record {record}: time does not increase (duplicate or out of order); "
            "times must increase strictly"
        )
    convert = FRAME_CONVERTERS[frame]
    positions = convert(r[keep].astype(float), tdb_k)
    field_nt = convert(b[keep].astype(float), tdb_k)
    times = tdb_k.copy()
    if epoch_utc is not None:
        t0 = timescales.utc_to_tdb(epoch_utc, constants=constants)
        times = tdb_k - t0
        if etype == "CDF_TIME_TT2000":  # elapsed time from the integer counts: exact to the ns
            d_ns = traw[keep] - int(timescales.utc_to_tt2000(epoch_utc, constants=constants))
            times = d_ns.astype(float) * 1e-9 + (
                np.asarray(timescales.tdb_minus_tt(tdb_k, constants=constants))
                - timescales.tdb_minus_tt(t0, constants=constants)
            )
    return MagnetometerSeries(
        tdb_s=tdb_k,
        times_s=times,
        positions_km=positions,
        field_nT=field_nt,
        frame=frame,
        source=source,
        field_variable=field_variable,
        position_variable=position_variable,
        time_variable=tname,
        epoch_type=etype,
        n_records=n,
        n_fill=int(fill.sum()),
        n_out_of_range=int(bad.sum()),
        dropped_by_variable=dropped,
        epoch_utc=epoch_utc,
    )


# ----------------------------------------------------------------------------- writing

_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")


def _short(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "", str(text).split(">")[0].lower()) or "x"


def write_prediction_cdf(
    path,
    times_s,
    positions_km,
    b_nT,
    *,
    epoch_utc: str | None = None,
    frame: str = "flow",
    project: str = "induct>induction in icy moons",
    source_name: str = "INDUCT>induct model prediction",
    discipline: str = "Planetary Science>Magnetospheres",
    data_type: str = "PRED>model prediction",
    descriptor: str = "INDUCED>induced magnetic field",
    text=(),
    constants=None,
) -> None:
    """Write a field prediction along a track as an ISTP-style CDF file.

    Parameters
    ----------
    path : str or Path
        Output file (written via a temporary ``.cdf`` file in the same folder, then moved).
    times_s : array_like, shape (N,)
        Times: seconds from ``epoch_utc`` (TDB seconds elapsed) if given, else TDB seconds past
        J2000; strictly increasing.
    positions_km : array_like, shape (N, 3)
        Moon-centred positions (km), flow frame; NaN is written as FILLVAL.
    b_nT : array_like, shape (N, 3), or dict of str -> array_like (N, 3)
        Field vectors (nT), flow frame; a plain array becomes the variable ``B_induced``, a dict
        names the variables (e.g. ``{"B_induced": ..., "B_primary": ...}``). NaN -> FILLVAL.
    epoch_utc : str, optional
        ISO UTC epoch of ``times_s``.
    frame : str
        Frame of the vectors; only ``"flow"``.
    project, source_name, discipline, data_type, descriptor : str
        ISTP global attributes (``Source_name``, ``Data_type`` and ``Descriptor`` as ``SHORT>long``;
        their short parts build ``Logical_source``).
    text : sequence of str
        Extra ``TEXT`` lines after the model's limits (:data:`MODEL_LIMITS`).
    constants : TimeConstants or path of an LSK, optional

    Raises
    ------
    ImportError
        cdflib is missing.
    ValueError
        Bad shapes, non-finite or non-increasing times, bad variable names, unsupported frame.

    Examples
    --------
    >>> import os, tempfile, cdflib
    >>> path = os.path.join(tempfile.mkdtemp(), "pred.cdf")
    >>> write_prediction_cdf(path, [0.0, 60.0], [[2000.0, 0, 0], [2000.0, 360.0, 0]],
    ...                      {"B_induced": [[1.0, 2, 3], [4, 5, 6]]}, epoch_utc="2031-03-10T12:00:00")
    >>> cdf = cdflib.CDF(path)
    >>> cdf.varattsget("B_induced")["DEPEND_0"], cdf.varattsget("B_induced")["UNITS"]
    ('Epoch', 'nT')
    >>> cdflib.cdfepoch.encode(int(cdf.varget("Epoch")[0]))
    '2031-03-10T12:00:00.000000000'
    """
    cdflib = _cdflib()
    _check_frame(frame)
    path = Path(path)
    t = np.asarray(times_s, dtype=float)
    if t.ndim != 1 or t.size == 0:
        raise ValueError(f"times_s must have shape (N,) with N >= 1, got {t.shape}")
    if not np.all(np.isfinite(t)):
        raise ValueError("times_s must be finite")
    if np.any(np.diff(t) <= 0.0):
        i = int(np.argmax(np.diff(t) <= 0.0)) + 1
        raise ValueError(f"times_s[{i}] = {float(t[i])!r} does not increase from times_s[{i - 1}] = {float(t[i - 1])!r}")
    if epoch_utc is not None:
        # Elapsed TT from the epoch's exact TT2000 count keeps whole-second epochs exact to the ns.
        tdb0 = timescales.utc_to_tdb(epoch_utc, constants=constants)
        tdb = t + tdb0
        d_tt = t - (np.asarray(timescales.tdb_minus_tt(tdb, constants=constants)) - timescales.tdb_minus_tt(tdb0, constants=constants))
        epochs = int(timescales.utc_to_tt2000(epoch_utc, constants=constants)) + _round_ns(d_tt)
    else:
        tdb = t
        epochs = np.atleast_1d(tdb_to_tt2000(tdb, constants=constants)).astype(np.int64)
    pos = np.asarray(positions_km, dtype=float)
    if pos.shape != (t.size, 3):
        raise ValueError(f"positions_km must have shape ({t.size}, 3), got {pos.shape}")
    fields = b_nT if isinstance(b_nT, dict) else {"B_induced": b_nT}
    if not fields:
        raise ValueError("b_nT: give at least one field")
    arrays = {}
    for name, values in fields.items():
        if not (isinstance(name, str) and _NAME.match(name)) or name in ("Epoch", "Position") or name.startswith("label_"):
            raise ValueError(f"b_nT: bad variable name {name!r} (letters, digits, _; not Epoch/Position/label_*)")
        arr = np.asarray(values, dtype=float)
        if arr.shape != (t.size, 3):
            raise ValueError(f"b_nT[{name!r}] must have shape ({t.size}, 3), got {arr.shape}")
        arrays[name] = arr
    utc0 = timescales.tdb_to_utc(float(tdb[0]), digits=0, constants=constants)
    logical_source = f"{_short(source_name)}_{_short(data_type)}_{_short(descriptor)}"
    lines = [_DESCRIPTION, MODEL_LIMITS] + [" ".join(str(x).split()) for x in text]
    if epoch_utc is not None:
        lines.append(f"Time origin of the model's t_s: {epoch_utc} UTC.")
    globals_ = {
        "Project": {0: project},
        "Source_name": {0: source_name},
        "Discipline": {0: discipline},
        "Data_type": {0: data_type},
        "Descriptor": {0: descriptor},
        "Data_version": {0: "1"},
        "Logical_source": {0: logical_source},
        "Logical_file_id": {0: f"{logical_source}_{utc0[:10].replace('-', '')}_v01"},
        "Logical_source_description": {0: "Magnetic field predicted along a flyby track by a layered-sphere induction model"},
        "PI_name": {0: "n/a (model output)"},
        "PI_affiliation": {0: "n/a"},
        "Mission_group": {0: "n/a (model output)"},
        "Instrument_type": {0: "Magnetic Fields (space)"},
        "TEXT": {i: line for i, line in enumerate(lines)},
        "Generated_by": {0: "induct"},
        "Generation_date": {0: _dt.datetime.now(_dt.timezone.utc).strftime("%Y%m%d")},
    }
    coord = "flow (moon-centred: x along corotation, y toward the planet's spin axis, z along it)"

    def vec_attrs(fieldnam, catdesc, units, labl, var_type, lim):
        return {
            "FIELDNAM": fieldnam,
            "CATDESC": catdesc,
            "UNITS": units,
            "VAR_TYPE": var_type,
            "DEPEND_0": "Epoch",
            "LABL_PTR_1": labl,
            "FILLVAL": np.float64(-1.0e31),
            "VALIDMIN": np.full(3, -lim),
            "VALIDMAX": np.full(3, lim),
            "FORMAT": "E16.8",
            "DISPLAY_TYPE": "time_series",
            "COORDINATE_SYSTEM": coord,
            "SCALETYP": "linear",
        }

    def vec_spec(name):
        return {"Variable": name, "Data_Type": 45, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": [3]}

    def label_spec(name, width):
        return {"Variable": name, "Data_Type": 51, "Num_Elements": width, "Rec_Vary": False, "Dim_Sizes": [3]}

    from induct.io.files import atomic_path

    with atomic_path(path, suffix=".cdf") as tmp:  # not created: cdflib refuses to write over a file
        out = cdflib.cdfwrite.CDF(str(tmp))
        try:
            out.write_globalattrs(globals_)
            lo, hi = int(epochs.min()), int(epochs.max())
            out.write_var(
                {"Variable": "Epoch", "Data_Type": 33, "Num_Elements": 1, "Rec_Vary": True, "Dim_Sizes": []},
                var_attrs={
                    "FIELDNAM": "Epoch",
                    "CATDESC": "Time of each sample, CDF_TIME_TT2000 (ns since J2000 TT)",
                    "UNITS": "ns",
                    "VAR_TYPE": "support_data",
                    "FILLVAL": [_TT2000_FILL, "CDF_TIME_TT2000"],
                    "VALIDMIN": [lo, "CDF_TIME_TT2000"],
                    "VALIDMAX": [hi, "CDF_TIME_TT2000"],
                    "LABLAXIS": "Epoch",
                    "MONOTON": "INCREASE",
                    "TIME_BASE": "J2000",
                    "TIME_SCALE": "Terrestrial Time",
                    "SCALETYP": "linear",
                },
                var_data=epochs,
            )
            out.write_var(
                vec_spec("Position"),
                var_attrs=vec_attrs(
                    "Position", "Spacecraft position relative to the moon, flow frame", "km", "label_Position",
                    "support_data", 1.0e9,
                ),
                var_data=np.where(np.isnan(pos), -1.0e31, pos),
            )
            out.write_var(label_spec("label_Position", 10), var_attrs={
                "FIELDNAM": "label_Position", "CATDESC": "Labels of the position components", "VAR_TYPE": "metadata",
            }, var_data=np.array(["X_flow_km", "Y_flow_km", "Z_flow_km"]))
            out.write_var(label_spec("label_B", 10), var_attrs={
                "FIELDNAM": "label_B", "CATDESC": "Labels of the field components", "VAR_TYPE": "metadata",
            }, var_data=np.array(["Bx_flow", "By_flow", "Bz_flow"]))
            for name, arr in arrays.items():
                kind = name[2:].replace("_", " ") if name.startswith("B_") else name
                out.write_var(
                    vec_spec(name),
                    var_attrs=vec_attrs(
                        name, f"Magnetic field ({kind}), flow frame, model prediction", "nT", "label_B", "data", 1.0e7,
                    ),
                    var_data=np.where(np.isnan(arr), -1.0e31, arr),
                )
        finally:
            out.close()
