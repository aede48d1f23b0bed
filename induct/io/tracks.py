"""Flyby trajectories and magnetometer series: CSV reading, checks and frames.

File format
-----------
Comma-separated text with a header line naming the columns; lines starting
with ``#`` are comments (anywhere) and blank lines are skipped. Columns may come
in any order and extra columns are ignored. A trajectory needs
``t_s,x_km,y_km,z_km``; a residual series (``induct fit``) also needs
``bx_nT,by_nT,bz_nT``::

    # flyby 1, flow frame
    t_s,x_km,y_km,z_km
    216000.0,-5200.3,1817.2,-2950.0
    ...

* time, one of (strictly increasing within a file):

  - ``t_s``: seconds from the epoch of the scenario's driving lines;
  - ``utc``: ISO 8601 UTC (``2031-03-10T12:00:00.25``, ``Z`` optional; ``23:59:60`` on a
    leap-second day);
  - ``tdb_s``: TDB seconds past J2000 (SPICE ephemeris time).

  ``utc`` and ``tdb_s`` are converted to seconds from the scenario's ``[drive] epoch_utc``
  (elapsed TDB seconds, leap seconds counted; :mod:`induct.io.timescales`), so they need a
  scenario that gives one. When ``t_s`` is present it is used, and a ``utc``/``tdb_s``
  column beside it must agree with it (within 1e-4 s) when the epoch is known.
* positions: moon-centred, km.
* Frame: ``flow`` (default; x along the corotation flow, y toward the planet's
  spin axis, z along it -- the frame of the driving lines, see
  :mod:`induct.field.orbit`) or ``body`` (body-fixed axes of a synchronously rotating
  moon: x toward the sub-planet point, z along its spin axis, y completing the
  right-handed set; ``x_flow = -y_body, y_flow = x_body, z_flow = z_body``).
  Give it with an optional ``frame`` column (one value for the whole file) or
  the ``frame`` argument; vectors in the file (field components) are in the
  same frame as the positions.

Every error names the file, the data row (1 = first row after the header), the
file line and the column.
"""

from __future__ import annotations

import contextlib
import csv
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

__all__ = [
    "FRAMES",
    "TRACK_COLUMNS",
    "TIME_COLUMNS",
    "read_csv_rows",
    "RESIDUAL_COLUMNS",
    "iter_track_chunks",
    "csv_appender",
    "Track",
    "read_track",
    "resolve_track_path",
    "to_flow_frame",
    "from_flow_frame",
    "check_outside",
    "write_csv",
    "SERIES_HEADER",
    "read_field_series",
    "check_outside_model",
    "read_residual_tracks",
]

#: Supported frames: name -> matrix M with ``v_flow = M @ v_frame``.
FRAMES = {
    "flow": np.eye(3),
    "body": np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]),
}
TRACK_COLUMNS = ("t_s", "x_km", "y_km", "z_km")
#: Accepted time columns, in order of precedence.
TIME_COLUMNS = ("t_s", "tdb_s", "utc")
_TIME_AGREEMENT_S = 1e-4
#: Header of a primary-field series (flow frame), read by :func:`read_field_series`.
SERIES_HEADER = ["t_s", "bx_nT", "by_nT", "bz_nT"]
RESIDUAL_COLUMNS = TRACK_COLUMNS + ("bx_nT", "by_nT", "bz_nT")


@dataclass(frozen=True, eq=False)
class Track:
    """A checked trajectory (and optional columns) read from a CSV file.

    Attributes
    ----------
    times_s : ndarray, shape (N,)
        Times (s), strictly increasing.
    positions_km : ndarray, shape (N, 3)
        Moon-centred positions (km) in the **flow frame** (converted on reading).
    frame : str
        Frame of the file ("flow" or "body").
    columns : dict of str -> ndarray, shape (N,)
        Further requested numeric columns, as in the file (not rotated).
    source : str
        File name, for messages.
    file_lines : ndarray of int, shape (N,)
        File line number of each row (for messages).
    utc : ndarray of str, shape (N,), or None
        UTC of each row, when the file has a ``utc`` column (or the track came from SPICE).
    time_note : str
        How ``times_s`` were obtained (column, epoch, leap-second table), for reports.
    """

    times_s: np.ndarray
    positions_km: np.ndarray
    frame: str
    columns: dict = field(default_factory=dict)
    source: str = "<track>"
    file_lines: np.ndarray | None = None
    utc: np.ndarray | None = None
    time_note: str = "t_s: seconds from the epoch of the driving lines"

    @property
    def size(self) -> int:
        """Number of rows N."""
        return int(self.times_s.size)

    def where(self, i: int) -> str:
        """Human-readable location of row ``i`` (0-based)."""
        line = f", line {int(self.file_lines[i])}" if self.file_lines is not None else ""
        return f"{self.source}: row {i + 1}{line}"

    def vectors_to_flow(self, names) -> np.ndarray:
        """Columns ``names`` (3 of them) as flow-frame vectors, shape (N, 3)."""
        v = np.stack([self.columns[n] for n in names], axis=-1)
        return to_flow_frame(v, self.frame)


def _check_frame(frame, where: str) -> str:
    if frame not in FRAMES:
        raise ValueError(f"{where}: unknown frame {frame!r}; allowed: {', '.join(FRAMES)}")
    return frame


def to_flow_frame(vectors, frame: str) -> np.ndarray:
    """Rotate vectors (positions or fields), shape (N, 3), from ``frame`` to the flow frame."""
    _check_frame(frame, "frame")
    return np.asarray(vectors, dtype=float) @ FRAMES[frame].T


def from_flow_frame(vectors, frame: str) -> np.ndarray:
    """Rotate vectors, shape (N, 3), from the flow frame to ``frame``."""
    _check_frame(frame, "frame")
    return np.asarray(vectors, dtype=float) @ FRAMES[frame]


def resolve_track_path(name_or_path) -> Path:
    """An existing file, or the stem of a track bundled with the scenarios (e.g. ``"ilmare_flyby"``)."""
    from induct.io.bundled import resolve_bundled

    return resolve_bundled(name_or_path, ".csv", "trajectory file")


def read_csv_rows(path: Path):
    """Header cells, header line number, data lines (text) and their line numbers of a ``#``-commented CSV file.

    Blank lines and lines starting with ``#`` are skipped; the first other line is the header. The one row
    splitter of the track, residual and candidate readers.
    """
    header, header_line, rows, lines = None, 0, [], []
    from induct.io.files import read_text_file

    for number, text in enumerate(read_text_file(path, "CSV file").splitlines(), start=1):
        stripped = text.strip()
        if not stripped or stripped.startswith("#"):
            continue
        if header is None:
            header, header_line = [c.strip() for c in next(csv.reader([stripped]))], number
            continue
        rows.append(stripped)
        lines.append(number)
    return header, header_line, rows, lines


def _fast_table(rows, width):
    """All-numeric rows of equal width as a float array (M, width), or None (then the careful path finds the error)."""
    try:
        table = np.loadtxt(rows, delimiter=",", ndmin=2, dtype=float)
    except ValueError:
        return None
    return table if table.shape == (len(rows), width) else None


def read_track(path, *, columns=(), frame: str | None = None, epoch_utc: str | None = None, constants=None,
               epoch_from: str | None = None, positions: bool = True) -> Track:
    """Read and check a trajectory CSV file (format in the module docstring).

    Parameters
    ----------
    path : str or Path
        The file, or the stem of a bundled track.
    columns : sequence of str
        Further numeric columns that must be present (e.g. ``("bx_nT", "by_nT", "bz_nT")``).
    frame : str, optional
        Frame of the file ("flow" or "body"); must agree with a ``frame`` column if both are given.
        Default: the ``frame`` column, else "flow".
    epoch_utc : str, optional
        UTC of ``t = 0`` (the scenario's ``[drive] epoch_utc``); needed for ``utc`` and ``tdb_s``
        columns.
    constants : TimeConstants or path of an LSK, optional
        Leap-second table (default: the one shipped with induct).
    epoch_from : str, optional
        Where ``epoch_utc`` comes from (e.g. the scenario file), for messages.
    positions : bool
        False: the file must not have ``x_km,y_km,z_km`` (positions come from elsewhere, e.g. SPICE
        kernels); ``positions_km`` is then NaN.

    Returns
    -------
    Track
        Positions converted to the flow frame.

    Raises
    ------
    ValueError
        Naming the file, row, line and column: missing header or columns, a row with the wrong
        number of values, a non-numeric, NaN or infinite value, an unknown or mixed frame,
        times that do not increase strictly (duplicate or out of order), fewer than 2 rows, a
        ``utc``/``tdb_s`` column without an epoch, ``t_s`` disagreeing with ``utc``/``tdb_s``.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> f = Path(tempfile.mkdtemp()) / "t.csv"
    >>> _ = f.write_text("utc,x_km,y_km,z_km\\n2031-03-10T12:00:00,2000,0,0\\n2031-03-10T12:01:00,2000,360,0\\n")
    >>> [round(t, 3) for t in read_track(f, epoch_utc="2031-03-10T00:00:00").times_s.tolist()]  # elapsed TDB (s)
    [43200.0, 43260.0]
    """
    path = resolve_track_path(path)
    source = str(path)
    if frame is not None:
        _check_frame(frame, f"{source}: frame option")
    header, header_line, rows, lines = read_csv_rows(path)
    return _track_from_rows(source, header, header_line, rows, lines, columns, frame, epoch_utc=epoch_utc,
                            constants=constants, epoch_from=epoch_from, positions=positions)


def _track_from_rows(source, header, header_line, rows, lines, columns=(), frame=None, *, row0: int = 0,
                     min_rows: int = 2, epoch_utc=None, constants=None, epoch_from=None, positions: bool = True) -> Track:
    """Check data rows (text) under ``header`` and build a :class:`Track` (``row0``: rows before these)."""
    if header is None:
        raise ValueError(f"{source}: empty file; the first line must be a header such as {','.join(TRACK_COLUMNS)}")
    dup = sorted({c for c in header if header.count(c) > 1})
    if dup:
        raise ValueError(f"{source}: line {header_line}: column(s) {', '.join(dup)} appear more than once in the header")
    time_col = next((c for c in TIME_COLUMNS if c in header), "t_s")
    numeric_times = [c for c in ("t_s", "tdb_s") if c in header]
    pos_cols = list(TRACK_COLUMNS[1:]) if positions else []
    if not positions and any(c in header for c in TRACK_COLUMNS[1:]):
        raise ValueError(
            f"{source}: line {header_line}: the file has position columns, but the positions come from elsewhere "
            "(SPICE kernels); drop x_km,y_km,z_km or the --spice options"
        )
    needed = numeric_times + pos_cols + [c for c in columns if c not in TRACK_COLUMNS]
    missing = [c for c in needed[len(numeric_times):] if c not in header]
    if time_col not in header:
        missing.insert(0, "t_s")
    if missing:
        raise ValueError(
            f"{source}: line {header_line}: missing column(s) {', '.join(missing)}; the header must name "
            f"{','.join(['t_s'] + needed[len(numeric_times):])} (time may also be given as utc or tdb_s; "
            f"got {','.join(header)})"
        )
    if time_col != "t_s" and epoch_utc is None:
        raise ValueError(
            f"{source}: column {time_col} holds absolute times, but {epoch_from or 'the scenario'} gives no "
            "[drive] epoch_utc (the UTC of t = 0 of the driving lines); add it (induct drive --epoch-utc ... "
            "--write-scenario) or give the times as t_s"
        )
    if len(rows) < min_rows:
        raise ValueError(f"{source}: needs at least 2 data rows, got {len(rows)}")
    width = len(header)
    index = {c: header.index(c) for c in needed}
    fast = None if ("frame" in header or "utc" in header) else _fast_table(rows, width)
    data = {}
    if fast is not None:
        for name in needed:
            values = fast[:, index[name]]
            bad = ~np.isfinite(values)
            if bad.any():
                i = int(np.argmax(bad))
                cell = next(csv.reader([rows[i]]))[index[name]].strip()
                raise ValueError(f"{source}: row {row0 + i + 1}, line {lines[i]}, column {name}: value must be finite, got {cell!r}")
            data[name] = values.copy()
        table = None
    else:
        cells = [next(csv.reader([row])) for row in rows]
        for i, (row, number) in enumerate(zip(cells, lines)):
            if len(row) != width:
                raise ValueError(f"{source}: row {row0 + i + 1}, line {number}: {len(row)} values, expected {width} ({','.join(header)})")
        table = np.array(cells, dtype=object)
        for name in needed:
            raw = table[:, index[name]]
            try:
                values = raw.astype(str).astype(float)
            except ValueError:
                for i, cell in enumerate(raw):
                    try:
                        float(cell)
                    except ValueError:
                        raise ValueError(f"{source}: row {row0 + i + 1}, line {lines[i]}, column {name}: not a number: {cell!r}") from None
                raise  # pragma: no cover - astype and float agree
            bad = ~np.isfinite(values)
            if bad.any():
                i = int(np.argmax(bad))
                raise ValueError(f"{source}: row {row0 + i + 1}, line {lines[i]}, column {name}: value must be finite, got {raw[i].strip()!r}")
            data[name] = values
    file_frame = None
    if "frame" in header:
        col = [str(c).strip() for c in table[:, header.index("frame")]]
        for i, value in enumerate(col):
            if value not in FRAMES:
                raise ValueError(
                    f"{source}: row {row0 + i + 1}, line {lines[i]}, column frame: unknown frame {value!r}; allowed: {', '.join(FRAMES)}"
                )
            if value != col[0]:
                raise ValueError(
                    f"{source}: row {row0 + i + 1}, line {lines[i]}, column frame: {value!r} differs from the first row's "
                    f"{col[0]!r}; one frame per file"
                )
        file_frame = col[0]
        if frame is not None and frame != file_frame:
            raise ValueError(f"{source}: column frame says {file_frame!r} but the frame option says {frame!r}")
    use_frame = frame or file_frame or "flow"
    utc = None
    if "utc" in header:
        if table is None:  # pragma: no cover - the fast path is not taken with a utc column
            table = np.array([next(csv.reader([row])) for row in rows], dtype=object)
        utc = np.array([str(c).strip() for c in table[:, header.index("utc")]])
    t, note = _times(data, utc, time_col, header, epoch_utc, constants, source, lines, epoch_from)
    data["t_s"] = t
    step = np.diff(t)
    bad = step <= 0.0
    if bad.any():
        i = int(np.argmax(bad)) + 1
        kind = "repeats" if step[i - 1] == 0.0 else "is earlier than"
        raise ValueError(
            f"{source}: row {row0 + i + 1}, line {lines[i]}, column {time_col}: {time_col} = "
            f"{(str(utc[i]) if time_col == 'utc' else float(data.get(time_col, t)[i]))!r} {kind} the previous row's "
            f"{(str(utc[i - 1]) if time_col == 'utc' else float(data.get(time_col, t)[i - 1]))!r}; times must increase "
            "strictly (no duplicates, in time order)"
        )
    if positions:
        pos = np.stack([data["x_km"], data["y_km"], data["z_km"]], axis=-1)
    else:
        pos = np.full((t.size, 3), np.nan)
    extra = {c: data[c] for c in needed if c not in TRACK_COLUMNS and c != "tdb_s"}
    return Track(t, to_flow_frame(pos, use_frame), use_frame, extra, source, np.array(lines), utc, note)


def _leap_source(constants) -> str:
    from induct.io.timescales import TimeConstants, default_constants, read_lsk

    if constants is None:
        return default_constants().source
    return constants.source if isinstance(constants, TimeConstants) else read_lsk(constants).source


def _utc_seconds(utc, epoch_utc, constants, source, lines):
    """Seconds from the epoch of UTC labels; errors name the first bad row."""
    from induct.io.timescales import seconds_from_epoch, utc_to_tdb

    try:
        return np.asarray(seconds_from_epoch(utc, epoch_utc, constants=constants), dtype=float)
    except ValueError:
        for i, label in enumerate(utc):
            try:
                utc_to_tdb(label, constants=constants)
            except ValueError as exc:
                raise ValueError(f"{source}: row {i + 1}, line {lines[i]}, column utc: {exc}") from None
        raise


def _times(data, utc, time_col, header, epoch_utc, constants, source, lines, epoch_from):
    """(times from the epoch (N,), description) from the time columns of a track file."""
    from induct.io.timescales import utc_to_tdb

    absolute = {}
    if "tdb_s" in header and epoch_utc is not None:
        absolute["tdb_s"] = data["tdb_s"] - float(utc_to_tdb(epoch_utc, constants=constants))
    if utc is not None and epoch_utc is not None:
        absolute["utc"] = _utc_seconds(utc, epoch_utc, constants, source, lines)
    leap = f"leap seconds: {_leap_source(constants)}"
    if time_col == "t_s":
        t = data["t_s"]
        for name, values in absolute.items():
            diff = np.abs(values - t)
            if np.any(diff > _TIME_AGREEMENT_S):
                i = int(np.argmax(diff))
                raise ValueError(
                    f"{source}: row {i + 1}, line {lines[i]}, column t_s: t_s = {float(t[i])!r} s but column {name} "
                    f"gives {float(values[i])!r} s from the epoch {epoch_utc} UTC of {epoch_from or 'the scenario'}; "
                    f"t_s must count from that epoch (drop the t_s column to use {name})"
                )
        note = "t_s: seconds from the epoch of the driving lines"
        if absolute:
            note += f" (checked against column {', '.join(absolute)}; {leap})"
        return t, note
    t = absolute[time_col]
    return t, f"times from column {time_col}, converted to seconds from {epoch_utc} UTC (elapsed TDB); {leap}"


def iter_track_chunks(path, *, columns=(), frame: str | None = None, chunk_rows: int = 100_000,
                      epoch_utc: str | None = None, constants=None, epoch_from: str | None = None):
    """Read a trajectory CSV file in pieces of ``chunk_rows`` rows: the checks of :func:`read_track`, bounded memory.

    Parameters
    ----------
    path : str or Path
        The file, or the stem of a bundled track.
    columns, frame, epoch_utc, constants, epoch_from
        As for :func:`read_track`.
    chunk_rows : int
        Rows per piece (>= 2).

    Yields
    ------
    Track
        Consecutive pieces (times increase across pieces; one frame for the file).

    Examples
    --------
    >>> pieces = list(iter_track_chunks("ilmare_flyby", chunk_rows=1000))
    >>> [p.size for p in pieces]
    [1000, 1000, 1000, 601]
    """
    from induct.io.files import decode_text

    if chunk_rows < 2:
        raise ValueError(f"chunk_rows must be >= 2, got {chunk_rows}")
    path = resolve_track_path(path)
    source = str(path)
    if frame is not None:
        _check_frame(frame, f"{source}: frame option")
    header, header_line, rows, lines = None, 0, [], []
    state = {"row0": 0, "last_t": None, "frame": None}

    def emit():
        track = _track_from_rows(source, header, header_line, rows, lines, columns, frame, row0=state["row0"],
                                 min_rows=1, epoch_utc=epoch_utc, constants=constants, epoch_from=epoch_from)
        if state["last_t"] is not None and not track.times_s[0] > state["last_t"]:
            raise ValueError(f"{source}: row {state['row0'] + 1}, line {lines[0]}, column t_s: t_s = "
                             f"{float(track.times_s[0])!r} does not follow the previous row's {state['last_t']!r}; "
                             "times must increase strictly")
        if state["frame"] is not None and track.frame != state["frame"]:
            raise ValueError(f"{source}: line {lines[0]}: frame {track.frame!r} differs from the first rows' "
                             f"{state['frame']!r}; one frame per file")
        state["row0"] += len(rows)
        state["last_t"], state["frame"] = float(track.times_s[-1]), track.frame
        return track

    try:
        handle = open(path, "rb")
    except OSError as exc:
        raise ValueError(f"{source}: cannot read this trajectory file ({exc.strerror or exc})") from None
    with handle:
        for number, raw in enumerate(handle, start=1):
            stripped = decode_text(raw, source, "CSV file").strip()
            if not stripped or stripped.startswith("#"):
                continue
            if header is None:
                header, header_line = [c.strip() for c in next(csv.reader([stripped]))], number
                continue
            rows.append(stripped)
            lines.append(number)
            if len(rows) == chunk_rows:
                yield emit()
                rows, lines = [], []
    if header is None:
        raise ValueError(f"{source}: empty file; the first line must be a header such as {','.join(TRACK_COLUMNS)}")
    if state["row0"] + len(rows) < 2:
        raise ValueError(f"{source}: needs at least 2 data rows, got {state['row0'] + len(rows)}")
    if rows:
        yield emit()


def check_outside(track: Track, radius_km: float, what: str = "the body") -> None:
    """Raise ValueError naming the first row of ``track`` with ``|r| < radius_km`` (relative tolerance 1e-12).

    Parameters
    ----------
    track : Track
    radius_km : float
        Radius below which the induced-field formulas do not hold (km): the body's
        radius, or the radius of its ionosphere sheet.
    what : str
        What the radius is, for the message.
    """
    r = np.linalg.norm(track.positions_km, axis=1)
    inside = r < radius_km * (1.0 - 1e-12)
    if inside.any():
        i = int(np.argmax(inside))
        raise ValueError(
            f"{track.where(i)}, columns x_km,y_km,z_km: the point lies inside {what}: |r| = {r[i]:.6g} km < "
            f"{radius_km:.6g} km (altitude {r[i] - radius_km:.4g} km); the induced-field formula holds only outside"
        )


def write_csv(path, columns: dict, comments=()) -> None:
    """Write named columns (each shape (N,)) as CSV with ``#`` comment lines first.

    Parameters
    ----------
    path : str or Path
    columns : dict of str -> array_like, shape (N,)
        In output order; numbers written with 12 significant digits, string columns
        (e.g. ``utc``) as they are (no commas).
    comments : sequence of str
        One ``# ...`` line each.
    """
    with csv_appender(path, list(columns), comments) as append:
        append(columns)


@contextlib.contextmanager
def csv_appender(path, names, comments=()):
    """Write a CSV file in pieces: ``#`` comments and the header first, then ``append(columns)`` per piece.

    The file is written atomically (:func:`induct.io.files.atomic_open`): it appears only when the block ends
    without error.

    Parameters
    ----------
    path : str or Path
    names : sequence of str
        Column names, in output order.
    comments : sequence of str
        One ``# ...`` line each.

    Yields
    ------
    callable
        ``append(columns)``: a dict of str -> array_like, shape (N,), with every name; numbers with 12
        significant digits, string columns (e.g. ``utc``) as they are (no commas).
        ``append.comment(text)`` adds a ``# ...`` line.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> out = Path(tempfile.mkdtemp()) / "a.csv"
    >>> with csv_appender(out, ["t_s", "x_km"]) as append:
    ...     append({"t_s": [0.0, 1.0], "x_km": [5.0, 6.0]})
    ...     append({"t_s": [2.0], "x_km": [7.0]})
    >>> out.read_text().splitlines()
    ['t_s,x_km', '0,5', '1,6', '2,7']
    """
    from induct.io.files import atomic_open

    names = list(names)
    with atomic_open(path, "w", encoding="utf-8", newline="") as handle:
        for text in comments:
            handle.write("# " + " ".join(str(text).split()) + "\n")
        handle.write(",".join(names) + "\n")

        def append(columns):
            arrays = [np.asarray(columns[n]) for n in names]
            text_cols = [a.dtype.kind in "USO" for a in arrays]
            if not arrays or not arrays[0].size:
                return
            if not any(text_cols):
                np.savetxt(handle, np.stack([a.astype(float) for a in arrays], axis=-1), fmt="%.12g", delimiter=",")
            else:
                cells = [a.astype(str).tolist() if tc else [f"{v:.12g}" for v in a.astype(float).tolist()]
                         for a, tc in zip(arrays, text_cols)]
                handle.write("\n".join(",".join(row) for row in zip(*cells)) + "\n")

        append.comment = lambda text: handle.write("# " + " ".join(str(text).split()) + "\n")
        yield append


def read_field_series(path) -> tuple[np.ndarray, np.ndarray]:
    """Read a primary-field series: header ``t_s,bx_nT,by_nT,bz_nT``, then one row per time.

    Lines starting with ``#`` and blank lines are skipped. Times are in s from
    the epoch of the lines to be fitted, the field in nT in the flow frame.

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    t_s : ndarray, shape (N,)
        Strictly increasing, N >= 2.
    b_nT : ndarray, shape (N, 3)

    Raises
    ------
    ValueError
        Wrong header, a row without 4 numbers, non-finite values or times not increasing.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> f = Path(tempfile.mkdtemp()) / "s.csv"
    >>> _ = f.write_text("t_s,bx_nT,by_nT,bz_nT\\n0,1,2,3\\n60,1.5,2,3\\n")
    >>> t, b = read_field_series(f)
    >>> t.tolist(), b.shape
    ([0.0, 60.0], (2, 3))
    """
    rows = []
    from induct.io.files import read_text_file

    handle = read_text_file(path, "CSV file").splitlines()
    if True:
        reader = csv.reader(row for row in handle if row.strip() and not row.lstrip().startswith("#"))
        header = next(reader, None)
        if header is None or [h.strip() for h in header] != SERIES_HEADER:
            raise ValueError(f"{path}: the first line must be the header {','.join(SERIES_HEADER)}, got {header}")
        for number, row in enumerate(reader, start=2):
            if len(row) != 4:
                raise ValueError(f"{path}: data row {number} must have 4 values, got {len(row)}")
            try:
                rows.append([float(v) for v in row])
            except ValueError:
                raise ValueError(f"{path}: data row {number} is not numeric: {row}") from None
    data = np.array(rows, dtype=float).reshape(-1, 4)
    if not np.all(np.isfinite(data)):
        raise ValueError(f"{path}: values must be finite")
    if data.shape[0] < 2 or np.any(np.diff(data[:, 0]) <= 0.0):
        raise ValueError(f"{path}: t_s must be strictly increasing with at least 2 rows")
    return data[:, 0], data[:, 1:]


def check_outside_model(track, model, what: str = "the body") -> None:
    """Check that every point of ``track`` lies outside a model's body and above its ionosphere sheet.

    Parameters
    ----------
    track : Track
    model : induct.InteriorModel
    what : str
        How the body is named in the message.

    Raises
    ------
    ValueError
        Naming the first point inside (row, line, columns).

    Examples
    --------
    >>> from induct import load_scenario
    >>> check_outside_model(read_track("ilmare_flyby"), load_scenario("ilmare").model)
    """
    check_outside(track, model.radius_km, f"{what} (radius {model.radius_km:g} km)")
    if model.ionosphere is not None:
        check_outside(track, model.radius_km + model.ionosphere.altitude_km,
                      f"the ionosphere sheet (altitude {model.ionosphere.altitude_km:g} km)")


def read_residual_tracks(paths, model, frame: str | None = None, *, epoch_utc: str | None = None, constants=None,
                         epoch_from: str | None = None):
    """Read one or more residual files and join them, checking every point against the body.

    Parameters
    ----------
    paths : sequence of str or Path
        Files ``t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT`` (see the module docstring).
    model : induct.InteriorModel
        The body (its radius and ionosphere sheet bound the points).
    frame : str, optional
        Frame of the files when they have no ``frame`` column.
    epoch_utc, constants, epoch_from
        Time origin and leap seconds for files with ``utc`` or ``tdb_s`` times (see :func:`read_track`).

    Returns
    -------
    positions_km : ndarray, shape (N, 3)
        Flow frame, all files joined in order.
    times_s : ndarray, shape (N,)
    residuals_nT : ndarray, shape (N, 3)
        Flow frame.
    sources : list of str
        The files.
    frames : list of str
        The frame of each file.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> from induct import load_scenario
    >>> f = Path(tempfile.mkdtemp()) / "r.csv"
    >>> _ = f.write_text("t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT\\n0,2000,0,0,1,0,0\\n60,2000,10,0,1,0,0\\n")
    >>> pos, t, b, sources, frames = read_residual_tracks([f], load_scenario("ilmare").model)
    >>> pos.shape, frames
    ((2, 3), ['flow'])
    """
    pos, t, b, sources, frames = [], [], [], [], []
    for name in paths:
        track = read_track(name, columns=RESIDUAL_COLUMNS[4:], frame=frame, epoch_utc=epoch_utc, constants=constants,
                           epoch_from=epoch_from)
        check_outside_model(track, model)
        pos.append(track.positions_km)
        t.append(track.times_s)
        b.append(track.vectors_to_flow(RESIDUAL_COLUMNS[4:]))
        sources.append(track.source)
        frames.append(track.frame)
    return np.concatenate(pos), np.concatenate(t), np.concatenate(b), sources, frames
