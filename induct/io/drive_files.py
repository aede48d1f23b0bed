"""Driving-line tables in scenario files, and planet files: reading and writing.

Formats: see :mod:`induct.field.drive`.
"""

from __future__ import annotations

import json
import re
import tomllib
from pathlib import Path

from induct.field.drive import PlanetSystem, parse_drive_lines, parse_planet_table
from induct.io.files import read_text_file
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
        if not data["drive"]:
            del data["drive"]
    return data


def write_drive_lines(path, lines, *, append: bool = False, comment: str = "") -> None:
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
    if _without_drive_lines(new) != _without_drive_lines(old) or got != expected:
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
    return parse_planet_table(read_toml(path), str(path))
