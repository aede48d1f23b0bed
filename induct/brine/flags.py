"""Extrapolation flags and the single aggregated warning issued per API call."""

from __future__ import annotations

import enum
import warnings

import numpy as np


class ExtrapolationWarning(UserWarning):
    """A brine property was computed outside the range of its reference model.

    Issued once per API call (aggregated over all array points), never once per point.
    """


class ExtrapolationFlag(enum.IntFlag):
    """Bit flags attached to each output point (0 = inside the reference model's range).

    COLD
        Temperature below the reference model's range (seawater: t < -2 degC, PSS-78;
        NaCl/KCl/MgSO4: t < 0 degC, McCleskey et al. 2012); Walden scaling used.
    DEEP
        Pressure above 100 MPa (PSS-78 and TEOS-10 freezing limit); Walden scaling
        (conductivity) or pure-water melting-curve shift (freezing point) used.
    SALTY
        Seawater Practical Salinity above 42 (PSS-78); scaled with the NaCl model.
    WARM
        Seawater temperature above 35 degC (PSS-78); Walden scaling used.
    """

    NONE = 0
    COLD = 1
    DEEP = 2
    SALTY = 4
    WARM = 8


_DESCRIPTION = {
    ExtrapolationFlag.COLD: "colder than the reference model (Walden scaling)",
    ExtrapolationFlag.DEEP: "pressure above 100 MPa (extrapolated)",
    ExtrapolationFlag.SALTY: "salinity above PSS-78's 42 (NaCl-ratio scaling)",
    ExtrapolationFlag.WARM: "warmer than 35 degC (Walden scaling)",
}


def describe_flags(flags):
    """Human-readable names of the flags set in an integer flag value.

    Parameters
    ----------
    flags : int
        Value built from :class:`ExtrapolationFlag` bits.

    Returns
    -------
    list of str
        Flag names (e.g. ``["COLD", "DEEP"]``); empty when no flag is set.
    """
    value = int(flags)
    return [f.name for f in _DESCRIPTION if value & f]


def warn_if_flagged(flags, what, stacklevel=3):
    """Issue one :class:`ExtrapolationWarning` summarising all flagged points."""
    flags = np.asarray(flags)
    n_flagged = int(np.count_nonzero(flags))
    if n_flagged == 0:
        return
    parts = []
    for f, text in _DESCRIPTION.items():
        k = int(np.count_nonzero(flags & int(f)))
        if k:
            parts.append(f"{f.name}: {k} ({text})")
    warnings.warn(
        f"{what}: {n_flagged} of {flags.size} point(s) extrapolated beyond the reference "
        f"model -- " + "; ".join(parts),
        ExtrapolationWarning,
        stacklevel=stacklevel,
    )
