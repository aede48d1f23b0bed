"""Time scales for mission data: UTC (leap seconds), TAI, TT and TDB.

Every instant is carried as seconds past J2000 in one scale:

* **TDB seconds past J2000** (``tdb_s``): SPICE's "ephemeris time" ET, seconds of
  Barycentric Dynamical Time past 2000-01-01 12:00:00 TDB. The main currency of
  :mod:`induct.io` (NAIF SPICE Required Reading, Time).
* **TT seconds past J2000** (``tt_s``): Terrestrial Time past 2000-01-01 12:00:00 TT;
  the CDF type ``CDF_TIME_TT2000`` stores ``tt_s * 1e9`` as an integer.
* **TAI seconds past J2000** (``tai_s``): ``tt_s - 32.184`` (SPICE's convention; it is
  also the count of TAI seconds past 2000-01-01 12:00:00 TAI).
* **UTC count** (``utc_count_s``): the UTC calendar counted with 86400 s in every day,
  seconds past 2000-01-01 12:00:00 UTC. It cannot name a leap second (23:59:60);
  ``CDF_EPOCH``, ``CDF_EPOCH16`` and ``numpy.datetime64`` stamps are such counts.

Relations (IERS Conventions; NAIF Time Required Reading):

* ``TAI - UTC = DELTA_AT``: an integer number of seconds from 1972-01-01 on, changed by
  leap seconds announced in IERS Bulletin C. A positive leap second is the extra
  second 23:59:60 at the end of a UTC day (30 June or 31 December so far).
* ``TT = TAI + 32.184 s``.
* ``TDB - TT = K sin(E)``, ``E = M + EB sin(M)``, ``M = M0 + M1 * tt_s``: the one-term
  periodic formula with the constants of a SPICE leap-seconds kernel (LSK) --
  ``DELTET/K = 1.657e-3 s``, ``DELTET/EB = 1.671e-2``,
  ``DELTET/M = (6.239996, 1.99096871e-7 rad/s)`` -- so that conversions agree with
  ``spiceypy.str2et``/``et2utc`` loaded with the same LSK. It differs from the full
  TDB - TT series by a few tens of microseconds at most.

Leap seconds
------------
The package ships the table :data:`LEAP_SECONDS` of TAI - UTC from 1972-01-01
(10 s) to 2017-01-01 (37 s), from IERS Bulletin C (the last leap second, at the end of
2016-12-31, was announced in Bulletin C 52, July 2016; later issues announced none, as
far as the authors know at the time of writing). The same table ships with cdflib, and
the tests compare the two. A later leap second needs an updated table: read a current
SPICE LSK with :func:`read_lsk` and pass it as ``constants=``. Times before 1972-01-01 are refused
(UTC had fractional rate offsets before then; SPICE would extrapolate 10 s).

Input forms
-----------
UTC strings in ISO 8601: ``YYYY-MM-DD``, ``YYYY-MM-DDThh:mm``,
``YYYY-MM-DDThh:mm:ss`` or with a fraction ``ss.ffffff`` (any number of digits); a
space may replace the ``T``; a trailing ``Z`` is allowed; day of year
``YYYY-DDDThh:mm:ss`` also works. ``23:59:60`` (and fractions of it) is accepted on days
that end with a leap second. Arrays (any shape) of strings or ``numpy.datetime64``
are converted element-wise; scalars give scalars.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

__all__ = [
    "LEAP_SECONDS",
    "TT_MINUS_TAI_S",
    "TimeConstants",
    "default_constants",
    "read_lsk",
    "lsk_text",
    "utc_to_tdb",
    "tdb_to_utc",
    "utc_to_tai",
    "tai_to_utc",
    "tai_to_tt",
    "tt_to_tai",
    "tt_to_tdb",
    "tdb_to_tt",
    "utc_count_to_tdb",
    "tdb_to_utc_count",
    "tai_minus_utc",
    "tdb_minus_tt",
    "utc_to_tt2000",
    "seconds_from_epoch",
    "check_epoch_utc",
]

#: TT - TAI (s), exact by definition (IAU 1991 Resolution A4; IERS Conventions 2010, ch. 10).
TT_MINUS_TAI_S = 32.184

#: TAI - UTC (s) from the given UTC date (00:00:00) on: ((year, month, day), seconds).
#: Source: IERS Bulletin C (IERS, Paris Observatory), its history
#: table of leap seconds; the last entry was announced in Bulletin C 52 (July 2016).
LEAP_SECONDS = (
    ((1972, 1, 1), 10),
    ((1972, 7, 1), 11),
    ((1973, 1, 1), 12),
    ((1974, 1, 1), 13),
    ((1975, 1, 1), 14),
    ((1976, 1, 1), 15),
    ((1977, 1, 1), 16),
    ((1978, 1, 1), 17),
    ((1979, 1, 1), 18),
    ((1980, 1, 1), 19),
    ((1981, 7, 1), 20),
    ((1982, 7, 1), 21),
    ((1983, 7, 1), 22),
    ((1985, 7, 1), 23),
    ((1988, 1, 1), 24),
    ((1990, 1, 1), 25),
    ((1991, 1, 1), 26),
    ((1992, 7, 1), 27),
    ((1993, 7, 1), 28),
    ((1994, 7, 1), 29),
    ((1996, 1, 1), 30),
    ((1997, 7, 1), 31),
    ((1999, 1, 1), 32),
    ((2006, 1, 1), 33),
    ((2009, 1, 1), 34),
    ((2012, 7, 1), 35),
    ((2015, 7, 1), 36),
    ((2017, 1, 1), 37),
)

_SECONDS_PER_DAY = 86400
_MONTHS = ("JAN", "FEB", "MAR", "APR", "MAY", "JUN", "JUL", "AUG", "SEP", "OCT", "NOV", "DEC")


# ----------------------------------------------------------------------------- calendar


def _days_from_civil(y, m, d):
    """Days since 1970-01-01 of proleptic Gregorian dates (vectorised, int64)."""
    y = np.asarray(y, dtype=np.int64) - (np.asarray(m) <= 2)
    m = np.asarray(m, dtype=np.int64)
    d = np.asarray(d, dtype=np.int64)
    era = np.floor_divide(y, 400)
    yoe = y - era * 400
    mp = (m + 9) % 12
    doy = (153 * mp + 2) // 5 + d - 1
    doe = yoe * 365 + yoe // 4 - yoe // 100 + doy
    return era * 146097 + doe - 719468


def _civil_from_days(z):
    """Proleptic Gregorian (year, month, day) of days since 1970-01-01 (vectorised)."""
    z = np.asarray(z, dtype=np.int64) + 719468
    era = np.floor_divide(z, 146097)
    doe = z - era * 146097
    yoe = (doe - doe // 1460 + doe // 36524 - doe // 146096) // 365
    y = yoe + era * 400
    doy = doe - (365 * yoe + yoe // 4 - yoe // 100)
    mp = (5 * doy + 2) // 153
    d = doy - (153 * mp + 2) // 5 + 1
    m = np.where(mp < 10, mp + 3, mp - 9)
    return y + (m <= 2), m, d


_DAY_J2000 = int(_days_from_civil(2000, 1, 1))  # days 1970-01-01 -> 2000-01-01


def _j2000_day(y, m, d):
    """Days from 2000-01-01 to the given dates."""
    return _days_from_civil(y, m, d) - _DAY_J2000


def _leap_year(y):
    return (y % 4 == 0) & ((y % 100 != 0) | (y % 400 == 0))


_DAYS_IN_MONTH = (31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31)


# ----------------------------------------------------------------------------- constants


@dataclass(frozen=True, eq=False)
class TimeConstants:
    """Leap seconds and TDB - TT constants, as a SPICE leap-seconds kernel holds them.

    Attributes
    ----------
    leap_days : ndarray of int, shape (L,)
        Days from 2000-01-01 to each date from which a TAI - UTC value holds (increasing).
    delta_at_s : ndarray of int, shape (L,)
        TAI - UTC (s) from that date on.
    delta_t_a_s : float
        TT - TAI (s), ``DELTET/DELTA_T_A`` (32.184).
    k_s, eb, m0_rad, m1_rad_per_s : float
        ``DELTET/K`` (s), ``DELTET/EB``, ``DELTET/M`` (rad, rad/s) of the TDB - TT term.
    source : str
        Where the table came from (for reports).
    """

    leap_days: np.ndarray
    delta_at_s: np.ndarray
    delta_t_a_s: float = TT_MINUS_TAI_S
    k_s: float = 1.657e-3
    eb: float = 1.671e-2
    m0_rad: float = 6.239996
    m1_rad_per_s: float = 1.99096871e-7
    source: str = "induct built-in table (IERS Bulletin C, TAI-UTC = 37 s from 2017-01-01)"

    def __post_init__(self):
        days = np.asarray(self.leap_days, dtype=np.int64)
        dat = np.asarray(self.delta_at_s, dtype=np.int64)
        if days.ndim != 1 or days.size == 0 or days.shape != dat.shape:
            raise ValueError(f"{self.source}: leap-second table must be two equal non-empty 1-D sequences")
        if np.any(np.diff(days) <= 0):
            raise ValueError(f"{self.source}: DELTA_AT dates must increase")
        steps = np.diff(dat)
        if np.any(steps != 1):
            i = int(np.argmax(steps != 1)) + 1
            y, m, d = (int(v) for v in _civil_from_days(days[i] + _DAY_J2000))
            raise ValueError(
                f"{self.source}: DELTA_AT changes by {int(steps[i - 1])} s at {y:04d}-{m:02d}-{d:02d}; "
                "only positive leap seconds of 1 s are supported"
            )
        object.__setattr__(self, "leap_days", days)
        object.__setattr__(self, "delta_at_s", dat)

    @property
    def first_day(self) -> int:
        """Day (from 2000-01-01) of the first table entry; earlier times are refused."""
        return int(self.leap_days[0])

    @property
    def leap_tai_s(self) -> np.ndarray:
        """TAI s past J2000 at which each DELTA_AT value starts (00:00:00 UTC of the date), shape (L,)."""
        return (self.leap_days * _SECONDS_PER_DAY - _SECONDS_PER_DAY // 2 + self.delta_at_s).astype(float)

    def leap_second_day(self, day) -> np.ndarray:
        """True where the UTC day (days from 2000-01-01) ends with a leap second (23:59:60)."""
        nxt = np.asarray(day, dtype=np.int64) + 1
        i = np.searchsorted(self.leap_days, nxt)
        i_c = np.minimum(i, self.leap_days.size - 1)
        return (i < self.leap_days.size) & (self.leap_days[i_c] == nxt) & (i > 0)


_DEFAULT = TimeConstants(
    leap_days=np.array([int(_j2000_day(*ymd)) for ymd, _ in LEAP_SECONDS]),
    delta_at_s=np.array([dat for _, dat in LEAP_SECONDS]),
)


def default_constants() -> TimeConstants:
    """The built-in constants: :data:`LEAP_SECONDS` and the LSK's TDB - TT term.

    Returns
    -------
    TimeConstants

    Examples
    --------
    >>> c = default_constants()
    >>> int(c.delta_at_s[-1]), c.delta_t_a_s
    (37, 32.184)
    """
    return _DEFAULT


def _constants(constants) -> TimeConstants:
    if constants is None:
        return _DEFAULT
    if isinstance(constants, TimeConstants):
        return constants
    if isinstance(constants, (str, Path)):
        return read_lsk(constants)
    raise TypeError("constants must be None, a TimeConstants or the path of an LSK text kernel")


# ----------------------------------------------------------------------------- LSK text kernels


_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([EeDd][+-]?\d+)?$")
_ATDATE = re.compile(
    r"^@(\d{4})-([A-Za-z]{3}|\d{1,2})-(\d{1,2})(?:[/T-](\d{1,2}):(\d{2})(?::(\d{2}(?:\.\d*)?))?)?$"
)


def _kernel_assignments(text: str, source: str) -> dict:
    """Variables of the data blocks of a SPICE text kernel: name -> list of raw value tokens."""
    out: dict[str, list] = {}
    in_data = False
    chunks = []
    for line in text.splitlines():
        s = line.strip()
        if s.startswith("\\begindata"):
            in_data = True
            continue
        if s.startswith("\\begintext"):
            in_data = False
            continue
        if in_data:
            chunks.append(line)
    body = "\n".join(chunks)
    # name [+]= value | ( values )
    pos = 0
    pattern = re.compile(r"\s*([^\s=+()]+)\s*(\+?=)\s*")
    while pos < len(body):
        if not body[pos:].strip():
            break
        m = pattern.match(body, pos)
        if not m:
            snippet = body[pos:].strip().splitlines()[0][:60]
            raise ValueError(f"{source}: cannot parse text-kernel assignment near {snippet!r}")
        name, op = m.group(1), m.group(2)
        pos = m.end()
        if pos < len(body) and body[pos] == "(":
            end = body.find(")", pos)
            if end < 0:
                raise ValueError(f"{source}: {name}: missing ')'")
            raw, pos = body[pos + 1 : end], end + 1
        else:
            tail = re.match(r"('(?:[^']|'')*'|\S+)", body[pos:])
            raw, pos = tail.group(1), pos + tail.end()
        tokens = re.findall(r"'(?:[^']|'')*'|[^\s,]+", raw)
        if op == "+=":
            out.setdefault(name, []).extend(tokens)
        else:
            out[name] = tokens
    return out


def _lsk_date_day(token: str, source: str, name: str) -> int:
    m = _ATDATE.match(token)
    if not m:
        raise ValueError(f"{source}: {name}: cannot read the date {token!r} (expected e.g. @1972-JAN-1)")
    y, mon, d = int(m.group(1)), m.group(2), int(m.group(3))
    month = _MONTHS.index(mon.upper()) + 1 if mon.isalpha() and mon.upper() in _MONTHS else None
    if month is None:
        if not mon.isdigit():
            raise ValueError(f"{source}: {name}: unknown month in {token!r}")
        month = int(mon)
    if m.group(4) is not None and (int(m.group(4)) or int(m.group(5)) or float(m.group(6) or 0)):
        raise ValueError(f"{source}: {name}: leap-second dates must be at 00:00:00, got {token!r}")
    return int(_j2000_day(y, month, d))


def _lsk_number(token: str, source: str, name: str) -> float:
    if not _NUMBER.match(token):
        raise ValueError(f"{source}: {name}: not a number: {token!r}")
    return float(token.replace("D", "E").replace("d", "e"))


def read_lsk(path) -> TimeConstants:
    """Read a SPICE leap-seconds kernel (LSK, text) into :class:`TimeConstants`.

    Parameters
    ----------
    path : str or Path
        The LSK file. It must define ``DELTET/DELTA_AT`` (pairs of TAI - UTC in s and
        ``@YYYY-MON-DD`` dates), ``DELTET/DELTA_T_A``, ``DELTET/K``, ``DELTET/EB`` and
        ``DELTET/M`` (two values).

    Returns
    -------
    TimeConstants

    Raises
    ------
    ValueError
        One line naming the file and the item: missing file or variable, unreadable value,
        a table step other than +1 s.

    Examples
    --------
    >>> import os, tempfile
    >>> folder = tempfile.mkdtemp()
    >>> path = os.path.join(folder, "leap.tls")
    >>> with open(path, "w") as f:
    ...     _ = f.write(lsk_text())
    >>> int(read_lsk(path).delta_at_s[-1])
    37
    """
    path = Path(path)
    source = str(path)
    if not path.is_file():
        raise ValueError(f"{source}: leap-seconds kernel not found")
    try:
        text = path.read_text(encoding="utf-8", errors="replace")
    except OSError as exc:
        raise ValueError(f"{source}: cannot read the leap-seconds kernel ({exc.strerror})") from None
    values = _kernel_assignments(text, source)
    need = ("DELTET/DELTA_T_A", "DELTET/K", "DELTET/EB", "DELTET/M", "DELTET/DELTA_AT")
    missing = [n for n in need if n not in values]
    if missing:
        raise ValueError(f"{source}: not a leap-seconds kernel: missing {', '.join(missing)}")
    scalars = {}
    for name in need[:3]:
        if len(values[name]) != 1:
            raise ValueError(f"{source}: {name}: expected one value, got {len(values[name])}")
        scalars[name] = _lsk_number(values[name][0], source, name)
    if len(values["DELTET/M"]) != 2:
        raise ValueError(f"{source}: DELTET/M: expected two values (M0, M1), got {len(values['DELTET/M'])}")
    m0, m1 = (_lsk_number(t, source, "DELTET/M") for t in values["DELTET/M"])
    table = values["DELTET/DELTA_AT"]
    if len(table) < 2 or len(table) % 2:
        raise ValueError(f"{source}: DELTET/DELTA_AT: expected pairs of (seconds, @date), got {len(table)} values")
    dat, days = [], []
    for i in range(0, len(table), 2):
        value = _lsk_number(table[i], source, "DELTET/DELTA_AT")
        if value != round(value):
            raise ValueError(f"{source}: DELTET/DELTA_AT: TAI-UTC must be whole seconds, got {table[i]!r}")
        dat.append(int(round(value)))
        days.append(_lsk_date_day(table[i + 1], source, "DELTET/DELTA_AT"))
    return TimeConstants(
        leap_days=np.array(days),
        delta_at_s=np.array(dat),
        delta_t_a_s=scalars["DELTET/DELTA_T_A"],
        k_s=scalars["DELTET/K"],
        eb=scalars["DELTET/EB"],
        m0_rad=m0,
        m1_rad_per_s=m1,
        source=source,
    )


def lsk_text(constants: TimeConstants | None = None) -> str:
    """Text of a SPICE leap-seconds kernel holding ``constants`` (default: the built-in table).

    Parameters
    ----------
    constants : TimeConstants, optional

    Returns
    -------
    str
        Kernel text, ready to be written to a ``.tls`` file and loaded with ``spiceypy.furnsh``.

    Examples
    --------
    >>> "37, @2017-JAN-1" in lsk_text()
    True
    """
    c = _constants(constants)
    y, m, d = _civil_from_days(c.leap_days + _DAY_J2000)
    rows = [f"{int(v)}, @{int(a):04d}-{_MONTHS[int(b) - 1]}-{int(e)}" for v, a, b, e in zip(c.delta_at_s, y, m, d)]
    table = "\n                           ".join(rows)
    return (
        "KPL/LSK\n\n"
        f"Leap seconds and TDB-TT constants written by induct.io.timescales from: {c.source}.\n\n"
        "\\begindata\n\n"
        f"DELTET/DELTA_T_A = {c.delta_t_a_s!r}\n"
        f"DELTET/K         = {c.k_s!r}\n"
        f"DELTET/EB        = {c.eb!r}\n"
        f"DELTET/M         = ( {c.m0_rad!r} {c.m1_rad_per_s!r} )\n"
        f"DELTET/DELTA_AT  = ( {table} )\n\n"
        "\\begintext\n"
    )


# ----------------------------------------------------------------------------- parsing


_ISO = re.compile(
    r"^\s*(?P<y>\d{4})-(?:(?P<mo>\d{1,2})-(?P<d>\d{1,2})|(?P<doy>\d{3}))"
    r"(?:(?:T|\s+)(?P<h>\d{1,2}):(?P<mi>\d{2})(?::(?P<s>\d{1,2})(?P<f>\.\d*)?)?)?\s*Z?\s*$",
    re.IGNORECASE,
)


def _parse_one(text):
    """(year, month, day, second-of-day integer part, fraction) of one ISO string."""
    if not isinstance(text, str):
        text = str(text)
    m = _ISO.match(text)
    if not m:
        raise ValueError(f"UTC {text!r}: not an ISO 8601 time such as 2031-03-10T12:30:00.25 (Z optional)")
    y = int(m.group("y"))
    if m.group("doy") is not None:
        doy = int(m.group("doy"))
        ndays = 366 if _leap_year(y) else 365
        if not 1 <= doy <= ndays:
            raise ValueError(f"UTC {text!r}: day of year {doy} outside 1..{ndays}")
        mo, d = 1, doy  # days_from_civil accepts day > 31 within January arithmetic
    else:
        mo, d = int(m.group("mo")), int(m.group("d"))
        if not 1 <= mo <= 12:
            raise ValueError(f"UTC {text!r}: month {mo} outside 1..12")
        dim = _DAYS_IN_MONTH[mo - 1] + (1 if mo == 2 and _leap_year(y) else 0)
        if not 1 <= d <= dim:
            raise ValueError(f"UTC {text!r}: day {d} outside 1..{dim}")
    h = int(m.group("h") or 0)
    mi = int(m.group("mi") or 0)
    s = int(m.group("s") or 0)
    frac = float("0" + m.group("f")) if m.group("f") and len(m.group("f")) > 1 else 0.0
    if h > 23 or mi > 59 or s > 60 or (s == 60 and (h != 23 or mi != 59)):
        raise ValueError(f"UTC {text!r}: time of day out of range")
    return y, mo, d, h * 3600 + mi * 60 + s, frac, text


def _parse_utc(utc):
    """Day (from 2000-01-01), second of day (may reach 86400.x in a leap second) and labels."""
    arr = np.asarray(utc)
    shape = arr.shape
    if np.issubdtype(arr.dtype, np.datetime64):
        ns = arr.astype("datetime64[ns]").astype(np.int64).ravel()
        if np.any(arr.ravel() != arr.ravel()):  # NaT
            raise ValueError("UTC datetime64: NaT (not a time) in the input")
        day = np.floor_divide(ns, 86400 * 10**9)
        rem = ns - day * 86400 * 10**9
        whole = rem // 10**9
        frac = (rem - whole * 10**9) * 1e-9
        labels = None
        return (day - _DAY_J2000), whole, frac, labels, shape
    flat = arr.ravel()
    parts = [_parse_one(t) for t in flat.tolist()]
    if not parts:
        return (np.zeros(0, np.int64),) * 2 + (np.zeros(0), [], shape)
    y, mo, d, whole, frac, labels = zip(*parts)
    day = _j2000_day(np.array(y), np.array(mo), np.array(d))
    return day, np.array(whole, dtype=np.int64), np.array(frac), list(labels), shape


def _label(labels, day, whole, frac, i):
    if labels is not None:
        return repr(labels[i])
    y, m, d = (int(v) for v in _civil_from_days(day[i] + _DAY_J2000))
    return f"{y:04d}-{m:02d}-{d:02d} + {whole[i] + frac[i]:.9g} s"


def _delta_at_index(c: TimeConstants, day, labels, whole, frac):
    i = np.searchsorted(c.leap_days, day, side="right") - 1
    if np.any(i < 0):
        k = int(np.argmax(i < 0))
        raise ValueError(
            f"UTC {_label(labels, day, whole, frac, k)}: before {_first_date(c)}, when the leap-second table "
            f"starts ({c.source}); UTC before 1972 is not supported"
        )
    return i


def _first_date(c: TimeConstants) -> str:
    y, m, d = (int(v) for v in _civil_from_days(c.first_day + _DAY_J2000))
    return f"{y:04d}-{m:02d}-{d:02d}"


def _to_shape(values, shape):
    out = np.asarray(values).reshape(shape)
    return _scalar(out) if shape == () else out


def _scalar(out):
    """Python scalar for 0-d arrays (int, float or str), the array itself otherwise."""
    out = np.asarray(out)
    return out.item() if out.ndim == 0 else out


# ----------------------------------------------------------------------------- conversions


def utc_to_tai(utc, *, constants=None):
    """TAI seconds past J2000 of UTC times.

    Parameters
    ----------
    utc : str, datetime64 or array_like of them, any shape
        ISO 8601 UTC (see the module docstring); ``23:59:60.x`` on leap-second days.
    constants : TimeConstants or path of an LSK, optional
        Leap-second table; default the built-in one.

    Returns
    -------
    float or ndarray of float, shape of ``utc``
        TAI seconds past J2000 (= TT seconds past J2000 - 32.184 s).

    Raises
    ------
    ValueError
        Unreadable string, date or time out of range, ``23:59:60`` on a day without a leap
        second, a time before the table starts (1972-01-01).

    Examples
    --------
    >>> float(utc_to_tai("2017-01-01T00:00:00") - utc_to_tai("2016-12-31T23:59:59"))
    2.0
    """
    c = _constants(constants)
    day, whole, frac, labels, shape = _parse_utc(utc)
    if day.size == 0:
        return np.zeros(shape)
    i = _delta_at_index(c, day, labels, whole, frac)
    leap = whole >= _SECONDS_PER_DAY
    if np.any(leap):
        bad = leap & ~c.leap_second_day(day)
        if np.any(bad):
            k = int(np.argmax(bad))
            raise ValueError(f"UTC {_label(labels, day, whole, frac, k)}: 23:59:60 on a day that has no leap second")
    count = (day * _SECONDS_PER_DAY - _SECONDS_PER_DAY // 2 + whole + c.delta_at_s[i]).astype(float)
    return _to_shape(count + frac, shape)


def utc_count_to_tdb(utc_count_s, *, constants=None):
    """TDB seconds past J2000 of UTC counts (86400 s per day, no leap seconds).

    Parameters
    ----------
    utc_count_s : float or array_like, any shape
        UTC calendar seconds past 2000-01-01 12:00:00 UTC, counting 86400 s in every day
        (the count behind ``CDF_EPOCH``, ``CDF_EPOCH16`` and POSIX time stamps). It cannot name
        a leap second.
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray of float
        TDB seconds past J2000.

    Examples
    --------
    >>> round(float(utc_count_to_tdb(-64.184)), 4)  # 2000-01-01T11:58:55.816 UTC
    -0.0001
    """
    c = _constants(constants)
    count = np.asarray(utc_count_s, dtype=float)
    shape = count.shape
    flat = count.ravel()
    if not np.all(np.isfinite(flat)):
        raise ValueError("UTC count: values must be finite")
    day = np.floor_divide(flat + _SECONDS_PER_DAY // 2, _SECONDS_PER_DAY).astype(np.int64)
    sod = flat + _SECONDS_PER_DAY // 2 - day * _SECONDS_PER_DAY
    i = _delta_at_index(c, day, None, np.zeros(day.shape, np.int64), sod)
    tai = flat + c.delta_at_s[i]
    return _to_shape(tt_to_tdb(tai + c.delta_t_a_s, constants=c), shape)


def tai_to_tt(tai_s, *, constants=None):
    """TT seconds past J2000 from TAI seconds past J2000: ``TT = TAI + 32.184 s``.

    Parameters
    ----------
    tai_s : float or array_like
    constants : TimeConstants, optional
        Supplies ``DELTET/DELTA_T_A`` (32.184 s).

    Returns
    -------
    float or ndarray

    Examples
    --------
    >>> tai_to_tt(0.0)
    32.184
    """
    return _scalar(np.asarray(tai_s, dtype=float) + _constants(constants).delta_t_a_s)


def tt_to_tai(tt_s, *, constants=None):
    """TAI seconds past J2000 from TT seconds past J2000: ``TAI = TT - 32.184 s``.

    Examples
    --------
    >>> tt_to_tai(32.184)
    0.0
    """
    return _scalar(np.asarray(tt_s, dtype=float) - _constants(constants).delta_t_a_s)


def _tdb_minus_tt(tt_s, c: TimeConstants):
    m = c.m0_rad + c.m1_rad_per_s * tt_s
    return c.k_s * np.sin(m + c.eb * np.sin(m))


def tdb_minus_tt(tt_s, *, constants=None):
    """The periodic TDB - TT term (s): ``K sin(E)``, ``E = M + EB sin M``, ``M = M0 + M1 tt_s``.

    Parameters
    ----------
    tt_s : float or array_like, any shape
        TT seconds past J2000 (TDB seconds may be given instead: the term changes by less than
        1e-12 s between them).
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray
        TDB - TT (s), within +-1.7 ms.

    Examples
    --------
    >>> abs(tdb_minus_tt(0.0) + 7.3e-5) < 1e-6  # at J2000
    True
    """
    c = _constants(constants)
    return _scalar(_tdb_minus_tt(np.asarray(tt_s, dtype=float), c))


def tt_to_tdb(tt_s, *, constants=None):
    """TDB from TT (both s past J2000): ``TDB = TT + K sin(E)``, ``E = M + EB sin M``, ``M = M0 + M1 TT``.

    Parameters
    ----------
    tt_s : float or array_like, any shape
        TT seconds past J2000.
    constants : TimeConstants or path of an LSK, optional
        ``K``, ``EB``, ``M0``, ``M1`` (default: the values of the current SPICE LSKs).

    Returns
    -------
    float or ndarray
        TDB seconds past J2000 (SPICE ET). ``|TDB - TT| < 1.7 ms``.

    Examples
    --------
    >>> abs(float(tt_to_tdb(0.0))) < 1e-4
    True
    """
    c = _constants(constants)
    tt = np.asarray(tt_s, dtype=float)
    return _scalar(tt + _tdb_minus_tt(tt, c))


def tdb_to_tt(tdb_s, *, constants=None):
    """TT from TDB (both s past J2000), the exact inverse of :func:`tt_to_tdb` (fixed-point iteration).

    Parameters
    ----------
    tdb_s : float or array_like, any shape
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray
        TT seconds past J2000.

    Examples
    --------
    >>> t = 7.5e8
    >>> abs(float(tt_to_tdb(tdb_to_tt(t))) - t) < 1e-7
    True
    """
    c = _constants(constants)
    tdb = np.asarray(tdb_s, dtype=float)
    tt = tdb.copy()
    for _ in range(3):  # contraction factor K * M1 ~ 3e-10
        tt = tdb - _tdb_minus_tt(tt, c)
    return _scalar(tt)


def utc_to_tdb(utc, *, constants=None):
    """TDB seconds past J2000 (SPICE ET) of UTC times; matches ``spiceypy.str2et`` with the same LSK.

    Parameters
    ----------
    utc : str, datetime64 or array_like of them, any shape
        ISO 8601 UTC (see the module docstring), ``23:59:60.x`` on leap-second days.
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray of float, shape of ``utc``
        TDB seconds past J2000.

    Raises
    ------
    ValueError
        As :func:`utc_to_tai`.

    Examples
    --------
    >>> et = utc_to_tdb(["2031-03-10T00:00:00", "2031-03-10 00:01:00.5Z"])
    >>> [round(float(v), 3) for v in et - et[0]]
    [0.0, 60.5]
    >>> round(float(utc_to_tdb("2000-01-01T11:58:55.816")), 6)  # J2000 TT; TDB - TT = -73 us then
    -7.3e-05
    """
    c = _constants(constants)
    return tt_to_tdb(np.asarray(utc_to_tai(utc, constants=c)) + c.delta_t_a_s, constants=c)


def utc_to_tt2000(utc, *, constants=None):
    """TT nanoseconds past J2000 (the ``CDF_TIME_TT2000`` count) of UTC times, in exact integer arithmetic.

    Parameters
    ----------
    utc : str, datetime64 or array_like of them, any shape
        ISO 8601 UTC; fractions of a second beyond 9 digits are rounded.
    constants : TimeConstants or path of an LSK, optional
        Leap seconds and ``DELTET/DELTA_T_A`` (32.184 s).

    Returns
    -------
    int or ndarray of int64

    Examples
    --------
    >>> utc_to_tt2000("2000-01-01T11:58:55.816")
    0
    >>> utc_to_tt2000("2000-01-01T12:00:00Z")
    64184000000
    """
    c = _constants(constants)
    day, whole, frac, labels, shape = _parse_utc(utc)
    if day.size == 0:
        return np.zeros(shape, dtype=np.int64)
    utc_to_tai(utc, constants=c)  # the checks (range, leap seconds)
    i = _delta_at_index(c, day, labels, whole, frac)
    tai = day * _SECONDS_PER_DAY - _SECONDS_PER_DAY // 2 + whole + c.delta_at_s[i]
    ns = tai * 10**9 + int(round(c.delta_t_a_s * 1e9)) + np.rint(np.asarray(frac) * 1e9).astype(np.int64)
    return _to_shape(ns, shape)


def tai_minus_utc(utc, *, constants=None):
    """TAI - UTC (s) at UTC times (the leap-second count in force that day).

    Parameters
    ----------
    utc : str, datetime64 or array_like of them
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    int or ndarray of int

    Examples
    --------
    >>> int(tai_minus_utc("2016-06-01")), int(tai_minus_utc("2017-01-01T00:00:00Z"))
    (36, 37)
    """
    c = _constants(constants)
    day, whole, frac, labels, shape = _parse_utc(utc)
    i = _delta_at_index(c, day, labels, whole, frac)
    return _to_shape(c.delta_at_s[i], shape)


def _split_tai(tai, c: TimeConstants):
    """UTC (day from 2000-01-01, second of day in [0, 86401)) of TAI seconds past J2000 (1-D)."""
    starts = c.leap_tai_s
    i = np.searchsorted(starts, tai, side="right") - 1
    # The second before each new value (i + 1) is the leap second 23:59:60 of the previous day.
    nxt = np.minimum(i + 1, starts.size - 1)
    in_leap = (i >= 0) & (i + 1 < starts.size) & (tai >= starts[nxt] - 1.0)
    if np.any(i < 0):
        k = int(np.argmax(i < 0))
        raise ValueError(f"TAI {float(tai[k])!r} s past J2000: before {_first_date(c)}; UTC before 1972 is not supported")
    i = np.maximum(i, 0)
    count = tai - c.delta_at_s[i]
    day = np.floor_divide(count + _SECONDS_PER_DAY // 2, _SECONDS_PER_DAY).astype(np.int64)
    sod = count + _SECONDS_PER_DAY // 2 - day * _SECONDS_PER_DAY
    leap_day = c.leap_days[nxt] - 1
    sod = np.where(in_leap, _SECONDS_PER_DAY + (tai - (starts[nxt] - 1.0)), sod)
    day = np.where(in_leap, leap_day, day)
    return day, sod


def _format(day, sod, digits: int, separator: str, c: TimeConstants, suffix: str):
    scale = 10**digits
    units = np.rint(sod * scale).astype(np.int64)
    day_len = np.where(c.leap_second_day(day), _SECONDS_PER_DAY + 1, _SECONDS_PER_DAY) * scale
    roll = units >= day_len
    day = day + roll
    units = np.where(roll, units - day_len, units)
    units = np.maximum(units, 0)
    whole, frac = np.divmod(units, scale)
    h = np.minimum(whole // 3600, 23)
    mi = np.minimum((whole - 3600 * h) // 60, 59)
    s = whole - 3600 * h - 60 * mi  # 60 in a leap second
    y, mo, d = _civil_from_days(day + _DAY_J2000)
    if digits > 0:
        return [
            f"{a:04d}-{b:02d}-{e:02d}{separator}{hh:02d}:{mm:02d}:{ss:02d}.{ff:0{digits}d}{suffix}"
            for a, b, e, hh, mm, ss, ff in zip(y.tolist(), mo.tolist(), d.tolist(), h.tolist(), mi.tolist(), s.tolist(), frac.tolist())
        ]
    return [
        f"{a:04d}-{b:02d}-{e:02d}{separator}{hh:02d}:{mm:02d}:{ss:02d}{suffix}"
        for a, b, e, hh, mm, ss in zip(y.tolist(), mo.tolist(), d.tolist(), h.tolist(), mi.tolist(), s.tolist())
    ]


def tai_to_utc(tai_s, *, digits: int = 6, separator: str = "T", suffix: str = "", constants=None):
    """ISO 8601 UTC strings of TAI seconds past J2000 (``23:59:60.x`` inside a leap second).

    Parameters
    ----------
    tai_s : float or array_like, any shape
        TAI seconds past J2000.
    digits : int
        Decimal digits of the seconds, 0..9 (rounded; float64 resolves ~0.1 us near 1e9 s).
    separator : str
        Between date and time: "T" (default) or " ".
    suffix : str
        Appended to each string, e.g. "Z".
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    str or ndarray of str, shape of ``tai_s``

    Examples
    --------
    >>> tai_to_utc(utc_to_tai("2016-12-31T23:59:60.25"), digits=2)
    '2016-12-31T23:59:60.25'
    """
    c = _constants(constants)
    if not (isinstance(digits, (int, np.integer)) and 0 <= digits <= 9):
        raise ValueError(f"digits must be an integer 0..9, got {digits!r}")
    tai = np.asarray(tai_s, dtype=float)
    shape = tai.shape
    flat = tai.ravel()
    if not np.all(np.isfinite(flat)):
        raise ValueError("TAI seconds: values must be finite")
    day, sod = _split_tai(flat, c)
    text = _format(day, sod, int(digits), separator, c, suffix)
    out = np.array(text, dtype=str) if text else np.zeros(0, dtype="<U1")
    return str(out.reshape(shape)[()]) if shape == () else out.reshape(shape)


def tdb_to_utc(tdb_s, *, digits: int = 6, separator: str = "T", suffix: str = "", constants=None):
    """ISO 8601 UTC strings of TDB seconds past J2000 (SPICE ET); matches ``spiceypy.et2utc(et, "ISOC", digits)``.

    Parameters
    ----------
    tdb_s : float or array_like, any shape
        TDB seconds past J2000.
    digits : int
        Decimal digits of the seconds, 0..9 (rounded).
    separator : str
        "T" (default) or " ".
    suffix : str
        Appended to each string, e.g. "Z".
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    str or ndarray of str, shape of ``tdb_s``

    Raises
    ------
    ValueError
        Times before 1972-01-01 UTC, non-finite values, bad ``digits``.

    Examples
    --------
    >>> tdb_to_utc(0.0, digits=3)
    '2000-01-01T11:58:55.816'
    >>> tdb_to_utc(utc_to_tdb(["2016-12-31T23:59:60.5", "2017-01-01T00:00:00.5"]), digits=1).tolist()
    ['2016-12-31T23:59:60.5', '2017-01-01T00:00:00.5']
    """
    c = _constants(constants)
    tai = np.asarray(tdb_to_tt(tdb_s, constants=c)) - c.delta_t_a_s
    return tai_to_utc(tai, digits=digits, separator=separator, suffix=suffix, constants=c)


def tdb_to_utc_count(tdb_s, *, constants=None):
    """UTC counts (86400 s per day, s past 2000-01-01 12:00:00 UTC) of TDB seconds past J2000.

    A count cannot name a leap second: times inside one (23:59:60.x) are clamped to
    1 us before the following midnight.

    Parameters
    ----------
    tdb_s : float or array_like, any shape
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray

    Examples
    --------
    >>> float(tdb_to_utc_count(utc_to_tdb("2000-01-01T12:00:00")))
    0.0
    """
    c = _constants(constants)
    tai = np.asarray(tdb_to_tt(tdb_s, constants=c), dtype=float) - c.delta_t_a_s
    shape = tai.shape
    day, sod = _split_tai(tai.ravel(), c)
    sod = np.minimum(sod, _SECONDS_PER_DAY - 1e-6)
    return _to_shape(day * float(_SECONDS_PER_DAY) - _SECONDS_PER_DAY // 2 + sod, shape)


def seconds_from_epoch(utc, epoch_utc: str, *, constants=None):
    """Elapsed TDB seconds from an epoch to UTC times (leap seconds counted).

    Parameters
    ----------
    utc : str, datetime64 or array_like of them, any shape
        The times.
    epoch_utc : str
        The epoch, ISO 8601 UTC.
    constants : TimeConstants or path of an LSK, optional

    Returns
    -------
    float or ndarray
        ``utc_to_tdb(utc) - utc_to_tdb(epoch_utc)`` (s).

    Examples
    --------
    >>> round(float(seconds_from_epoch("2017-01-01T00:00:00", "2016-12-31T23:59:00")), 6)  # a leap minute
    61.0
    """
    c = _constants(constants)
    t = np.asarray(utc_to_tdb(utc, constants=c)) - utc_to_tdb(epoch_utc, constants=c)
    return _scalar(t)


_EPOCH_FORM = re.compile(r"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?Z?$")


def check_epoch_utc(value, where: str = "epoch_utc", *, constants=None) -> str:
    """Check an epoch given as ``"YYYY-MM-DDTHH:MM:SS"`` (UTC; fraction and ``Z`` optional).

    Parameters
    ----------
    value : str
        The epoch as written in a file or on the command line.
    where : str
        Where it comes from (file and key), for the message.
    constants : TimeConstants or path of an LSK, optional
        Leap-second table used to check that the time exists (default: the built-in one).

    Returns
    -------
    str
        ``value`` without surrounding blanks.

    Raises
    ------
    ValueError
        One line naming ``where``: not a string, another form, an impossible date or time,
        ``23:59:60`` on a day without a leap second, a time before 1972-01-01.

    Examples
    --------
    >>> check_epoch_utc("2031-03-10T00:00:00")
    '2031-03-10T00:00:00'
    >>> check_epoch_utc("2031-03-10", "[drive] epoch_utc")
    Traceback (most recent call last):
    ...
    ValueError: [drive] epoch_utc '2031-03-10': give the epoch as "YYYY-MM-DDTHH:MM:SS" (UTC)
    """
    if not isinstance(value, str) or not _EPOCH_FORM.match(value.strip()):
        raise ValueError(f'{where} {value!r}: give the epoch as "YYYY-MM-DDTHH:MM:SS" (UTC)')
    text = value.strip()
    try:
        utc_to_tdb(text, constants=constants)
    except ValueError as exc:
        raise ValueError(f"{where} {value!r}: {exc}") from None
    return text
