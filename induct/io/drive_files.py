"""Driving-line tables in scenario files, and planet files: reading and writing.

Formats: see :mod:`induct.field.drive`.
"""

from __future__ import annotations

import json
import re
import tomllib
import warnings
from pathlib import Path

from induct.field.drive import PlanetSystem, parse_drive_lines, parse_planet_table
from induct.io.files import read_text_file
from induct.io.timescales import check_epoch_utc
from induct.io.toml import read_toml

__all__ = ["drive_lines_to_toml", "write_drive_lines", "read_planet_file"]


def drive_lines_to_toml(lines, comment: str = "") -> str:
    """TOML text of ``[[drive.lines]]`` tables (full float precision).

    Parameters
    ----------
    lines : sequence of DriveLine
    comment : str
        One-line comment placed inside the first table.

    Returns
    -------
    str
    """
    out = []
    for i, line in enumerate(lines):
        out.append("[[drive.lines]]")
        if comment and i == 0:
            out.append("# " + " ".join(comment.split()))
        if line.label:
            out.append(f"label = {json.dumps(line.label)}")
        out.append(f"period_h = {line.period_h!r}")
        out.append("amplitude_nT = [" + ", ".join(repr(float(a)) for a in line.amplitude_nT) + "]")
        out.append("phase_deg = [" + ", ".join(repr(float(p)) for p in line.phase_deg) + "]")
        out.append("")
    return "\n".join(out)


_LINES_HEADER = re.compile(r"^\s*\[\[\s*drive\s*\.\s*lines\s*\]\]\s*(#.*)?$")
_ANY_HEADER = re.compile(r"^\s*\[\[?\s*[A-Za-z0-9_\-\"' .]+\]\]?\s*(#.*)?$")


def _without_drive_lines(data: dict) -> dict:
    data = json.loads(json.dumps(data, default=str))
    if isinstance(data.get("drive"), dict):
        data["drive"].pop("lines", None)
        data["drive"].pop("epoch_utc", None)
        if not data["drive"]:
            del data["drive"]
    return data


_UNSET = object()


_DRIVE_HEADER = re.compile(r"^\s*\[\s*drive\s*\]\s*(#.*)?$")
_EPOCH_KEY = re.compile(r"^\s*epoch_utc\s*=")


def _set_drive_epoch(text: str, epoch_utc) -> str:
    """Text with ``epoch_utc`` set (or removed, for None) in the ``[drive]`` table; adds the table if needed."""
    rows = text.splitlines()
    start = next((i for i, row in enumerate(rows) if _DRIVE_HEADER.match(row)), None)
    entry = None if epoch_utc is None else f"epoch_utc = {json.dumps(epoch_utc)}  # UTC of t = 0 of the driving lines"
    if start is None:
        if entry is None:
            return text
        first_lines = next((i for i, row in enumerate(rows) if _LINES_HEADER.match(row)), None)
        block = ["[drive]", entry, ""]
        if first_lines is None:
            rows = rows + ([""] if rows and rows[-1].strip() else []) + block
        else:
            rows = rows[:first_lines] + block + rows[first_lines:]
        return "\n".join(rows) + "\n"
    end = next((i for i in range(start + 1, len(rows)) if _ANY_HEADER.match(rows[i])), len(rows))
    at = next((i for i in range(start + 1, end) if _EPOCH_KEY.match(rows[i])), None)
    if at is not None:
        if entry is None:
            del rows[at]
        else:
            rows[at] = entry
    elif entry is not None:
        rows.insert(start + 1, entry)
    return "\n".join(rows) + "\n"


def write_drive_lines(path, lines, *, append: bool = False, comment: str = "", epoch_utc=_UNSET) -> None:
    """Write driving lines into a scenario file's ``[[drive.lines]]`` tables.

    The rest of the file is kept verbatim. Existing ``[[drive.lines]]`` tables are
    replaced (default) or kept (``append=True``); the new tables go at the end.
    A missing file is created. The result is re-read and checked before it replaces
    the file.

    Parameters
    ----------
    path : str or Path
        Scenario file (TOML).
    lines : sequence of DriveLine
    append : bool
        Keep existing lines (periods must not repeat).
    comment : str
        One-line provenance comment.
    epoch_utc : str or None, optional
        UTC of ``t = 0`` of the lines (``"YYYY-MM-DDTHH:MM:SS"``), written as ``epoch_utc`` in
        the ``[drive]`` table. None: the lines have no known epoch (an existing ``epoch_utc``
        is removed, since it would not describe the new lines). Not given: the file's
        ``epoch_utc`` is left as it is. With ``append=True`` it must equal the file's.

    Examples
    --------
    >>> import tempfile, tomllib
    >>> from pathlib import Path
    >>> from induct.field.drive import DriveLine
    >>> path = Path(tempfile.mkdtemp()) / "s.toml"
    >>> _ = path.write_text('[body]\\nname = "Ilmare"\\n')
    >>> line = DriveLine.from_amplitude_phase(12.0, [1.0, 2.0, 0.0], [0.0, 90.0, 0.0])
    >>> write_drive_lines(path, [line], epoch_utc="2031-03-10T00:00:00")
    >>> tomllib.loads(path.read_text())["drive"]["epoch_utc"]
    '2031-03-10T00:00:00'
    """
    path = Path(path)
    lines = list(lines)
    if not lines:
        raise ValueError("no driving lines to write")
    text = read_text_file(path) if path.exists() else ""
    try:
        old = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(f"{path}: not valid TOML ({exc})") from None
    old_drive = old.get("drive", {}) if isinstance(old.get("drive"), dict) else {}
    old_epoch = old_drive.get("epoch_utc")
    if epoch_utc is not _UNSET and epoch_utc is not None:
        epoch_utc = check_epoch_utc(epoch_utc, "epoch_utc")
    if append and epoch_utc is not _UNSET and old_drive.get("lines") and epoch_utc != old_epoch:
        raise ValueError(
            f"{path}: [drive] epoch_utc is {old_epoch!r} but the new lines refer to {epoch_utc!r}; lines with "
            "different epochs cannot be appended (their phases refer to different t = 0)"
        )
    if epoch_utc is None and old_epoch is not None and not append:
        warnings.warn(f"{path}: [drive] epoch_utc = {old_epoch} removed: the new driving lines have no known epoch",
                      stacklevel=2)
    if epoch_utc is not _UNSET:
        text = _set_drive_epoch(text, epoch_utc)
    want_epoch = old_epoch if epoch_utc is _UNSET else epoch_utc
    kept, inside = [], False
    for row in text.splitlines():
        if _LINES_HEADER.match(row):
            inside = True
        elif inside and _ANY_HEADER.match(row):
            inside = False
        if not inside or append:
            kept.append(row)
    body = "\n".join(kept).rstrip("\n")
    new_text = (body + "\n\n" if body else "") + drive_lines_to_toml(lines, comment)
    try:
        new = tomllib.loads(new_text)
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(
            f"{path}: cannot add [[drive.lines]] tables to this file ({exc}); "
            "is drive.lines written as an inline array?"
        ) from None
    expected = (list(old.get("drive", {}).get("lines", [])) if append else []) + [
        tomllib.loads(drive_lines_to_toml([ln]))["drive"]["lines"][0] for ln in lines
    ]
    got = new.get("drive", {}).get("lines", [])
    if (_without_drive_lines(new) != _without_drive_lines(old) or got != expected
            or new.get("drive", {}).get("epoch_utc") != want_epoch):
        raise ValueError(f"{path}: could not edit the [[drive.lines]] tables safely; edit the file by hand")
    parse_drive_lines(new["drive"])  # duplicates or bad old entries surface here, before writing
    from induct.io.files import write_text

    write_text(path, new_text)


def read_planet_file(path) -> PlanetSystem:
    """Read a planet file (TOML, format in the module docstring).

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    PlanetSystem
    """
    path = Path(path)
    system = parse_planet_table(read_toml(path), str(path))
    if system.epoch_utc is not None:
        check_epoch_utc(system.epoch_utc, f"{path}: [planet] epoch_utc")
    return system
