"""Reading TOML files: one reader, errors that name the file."""

from __future__ import annotations

import tomllib
from pathlib import Path

__all__ = ["read_toml"]


def read_toml(path) -> dict:
    """Parse a TOML file; a syntax error becomes a ValueError naming the file."""
    path = Path(path)
    with open(path, "rb") as fh:
        try:
            return tomllib.load(fh)
        except tomllib.TOMLDecodeError as exc:
            raise ValueError(f"{path}: not valid TOML: {exc}") from exc
