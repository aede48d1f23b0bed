"""Reading TOML files: one reader, errors that name the file."""

from __future__ import annotations

import tomllib
from pathlib import Path

__all__ = ["read_toml", "read_parameter_table"]


def read_toml(path) -> dict:
    """Parse a TOML file; a syntax error becomes a ValueError naming the file."""
    path = Path(path)
    with open(path, "rb") as fh:
        try:
            return tomllib.load(fh)
        except tomllib.TOMLDecodeError as exc:
            raise ValueError(f"{path}: not valid TOML: {exc}") from exc


def read_parameter_table(path) -> dict:
    """Read a parameter file (TOML): its ``[invert]`` table, or the whole document if it has none."""
    path = Path(path)
    if not path.is_file():
        raise FileNotFoundError(f"parameter file {str(path)!r} not found")
    doc = read_toml(path)
    return doc.get("invert", doc)
