"""Reading TOML files: one reader, errors that name the file."""

from __future__ import annotations

import tomllib
from pathlib import Path

__all__ = ["read_toml", "read_parameter_table"]


def read_toml(path) -> dict:
    """Parse a TOML file; a syntax error becomes a ValueError naming the file."""
    from induct.io.files import read_text_file

    path = Path(path)
    text = read_text_file(path, "TOML file")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(f"{path}: not valid TOML: {exc}") from None


def read_parameter_table(path) -> dict:
    """Read a parameter file (TOML): its ``[invert]`` table, or the whole document if it has none."""
    path = Path(path)
    if not path.is_file():
        raise FileNotFoundError(f"parameter file {str(path)!r} not found")
    doc = read_toml(path)
    if "invert" not in doc:
        return doc
    extra = sorted(set(doc) - {"invert"})
    if extra:
        raise ValueError(f"{path}: unknown top-level key(s) {', '.join(map(repr, extra))} beside [invert]; "
                         "a parameter file holds only the [invert] table (or only its entries)")
    if not isinstance(doc["invert"], dict):
        raise ValueError(f"{path}: invert must be a table [invert]")
    return doc["invert"]
