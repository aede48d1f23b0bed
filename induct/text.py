"""Plain-text forms of numbers shared by results, files, figures and command output.

Study modules describe their inputs in words (for example the parameters a map
holds fixed), figures label curves and the command line prints tables; all of
them write numbers the same short way. This module needs nothing beyond the
standard library, so a study can use it without importing a plotting library
or the command-line layer.
"""

from __future__ import annotations

import re

__all__ = ["format_number"]


def format_number(value: float, digits: int = 3) -> str:
    """Short plain form of a number: ``digits`` significant digits, exponents without '+' or leading zeros.

    Parameters
    ----------
    value : float
        The number (any unit; the unit is written by the caller).
    digits : int
        Significant digits (default 3).

    Returns
    -------
    str

    Examples
    --------
    >>> format_number(100000.0)
    '1e5'
    >>> format_number(2.5e-6)
    '2.5e-6'
    >>> format_number(0.1234, 2)
    '0.12'
    """
    text = f"{value:.{digits}g}"
    return re.sub(r"e([+-])0*(\d)", lambda m: "e" + ("-" if m.group(1) == "-" else "") + m.group(2), text)
