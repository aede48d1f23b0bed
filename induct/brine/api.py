"""Checked user API: brine conductivity and freezing point with validity flags.

Every public function checks its inputs once (ValueError naming the argument
and the allowed range), broadcasts NumPy arrays, and returns arrays of the
broadcast shape (0-d for scalar input). Points computed outside a reference
model's range carry :class:`~induct.brine.flags.ExtrapolationFlag` bits and
trigger one aggregated :class:`~induct.brine.flags.ExtrapolationWarning` per call.
"""

from __future__ import annotations

import numpy as np

from induct.brine import limits
from induct.brine.flags import ExtrapolationFlag, warn_if_flagged
from induct.brine.registry import SOLUTES, get_solute

__all__ = ["SOLUTES", "FREEZING_TOLERANCE_K", "conductivity", "freezing_point", "get_solute",
           "ocean_conductivity_profile"]

#: Tolerance (K) for "temperature below the freezing point": a temperature taken
#: from freezing_point() itself must pass.
FREEZING_TOLERANCE_K = 1e-6


def _finite(name, value):
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr)
    if np.any(bad):
        raise ValueError(f"{name} must be finite; got {float(arr[bad].ravel()[0])!r}")
    return arr


def _range(name, arr, lo, hi, unit, what=""):
    bad = (arr < lo) | (arr > hi)
    if np.any(bad):
        v = arr[bad].ravel()[0]
        raise ValueError(f"{name}={v:g} is outside the allowed range [{lo:g}, {hi:g}] {unit}{what}")


def _check_common(solute, salinity_g_per_kg, pressure_MPa):
    """The solute's record and the checked salinity and pressure arrays."""
    rec = get_solute(solute)
    s = _finite("salinity_g_per_kg", salinity_g_per_kg)
    p = _finite("pressure_MPa", pressure_MPa)
    p_lo, p_hi = rec.limits.pressure_MPa
    _range("pressure_MPa", p, p_lo, p_hi, "MPa (sea pressure)")
    if np.any(s < 0):
        v = s[s < 0].ravel()[0]
        raise ValueError(f"salinity_g_per_kg={v:g} is negative; salinity must be >= 0 "
                         f"{rec.salinity.unit}")
    return rec, s, p


def freezing_point(solute, salinity_g_per_kg, pressure_MPa=0.0, *, return_flags=False, warn=True):
    """Freezing temperature (degC, ITS-90) of seawater or a single-salt brine.

    The solute's registry record (:mod:`induct.brine.registry`) supplies the
    model, its salinity unit and limits. Built-in models and validity (details
    in :mod:`induct.brine.freezing`):

    * ``"seawater"``: TEOS-10 polynomial (McDougall et al. 2014), air-free,
      0 <= SP <= 100, 0 <= p <= 100 MPa (within 6e-4 K of the exact TEOS-10
      value); 100 < p <= 1000 MPa extrapolated (flag DEEP) by the IAPWS R14-08
      pure-water melting curve (ices Ih, III, V, VI).
    * ``"NaCl"``: Bodnar (1993), 0 to 232 g/kg (eutectic, -21.2 degC).
    * ``"KCl"``: Pitzer-model ice equilibrium fitted to the Smithsonian/CRC
      depressions (within 0.02 K of them up to 3 mol/kg), 0 to 198.7 g/kg.
    * ``"MgSO4"``: same method, 0 to 173 g/kg (within 0.02 K of the table to 1.5 mol/kg).
    * Brines under pressure: the 1-atm depression scaled by the TEOS-10
      seawater depression ratio, added to the IAPWS R14-08 melting curve;
      0-100 MPa, beyond flagged DEEP.

    Parameters
    ----------
    solute : str or Solute
        A registered name or alias (:data:`induct.brine.SOLUTES`: "seawater",
        "NaCl", "MgSO4", "KCl", ...), case-insensitive, or a registry record.
    salinity_g_per_kg : array_like
        In the solute's unit (``get_solute(solute).salinity``): seawater Practical
        Salinity; the salts g of anhydrous salt per kg of solution.
    pressure_MPa : array_like, default 0
        Sea (gauge) pressure (MPa), 0-1000.
    return_flags : bool, default False
        Also return the per-point :class:`ExtrapolationFlag` bits (int array).
    warn : bool, default True
        Issue one :class:`ExtrapolationWarning` if any point is flagged.

    Returns
    -------
    ndarray or (ndarray, ndarray)
        Freezing temperature (degC), broadcast shape; with ``return_flags`` also
        the int flags array of the same shape.

    Raises
    ------
    ValueError
        Unknown solute, NaN/inf, negative salinity, salinity above the model's
        upper limit (for brines: the ice-salt eutectic), pressure outside 0-1000 MPa.

    Examples
    --------
    >>> from induct import brine
    >>> round(float(brine.freezing_point("seawater", 35.0)), 3)     # TEOS-10, air-free
    -1.919
    >>> round(float(brine.freezing_point("nacl", 232.0)), 1)        # Bodnar (1993) eutectic
    -21.2
    """
    rec, s, p = _check_common(solute, salinity_g_per_kg, pressure_MPa)
    s, p = np.broadcast_arrays(s, p)
    _range("salinity_g_per_kg", s, 0.0, rec.freezing_salinity_max, rec.salinity.unit,
           rec.limits.freezing_note.format(name=rec.name))
    tf = rec.freezing_model(rec, s, p)
    flags = np.where(p > rec.limits.freezing_reference_pressure_max_MPa,
                     int(ExtrapolationFlag.DEEP), 0).astype(np.int64)
    if warn:
        warn_if_flagged(flags, f"freezing_point({rec.name!r})")
    return (tf, flags) if return_flags else tf


def conductivity(solute, salinity_g_per_kg, temperature_C, pressure_MPa=0.0, *,
                 return_flags=False, warn=True):
    """Electrical conductivity (S/m) of seawater or a single-salt brine.

    The solute's registry record (:mod:`induct.brine.registry`) supplies the
    model, its salinity unit, limits and extrapolation flags. Built-in models
    and validity (no flag inside these ranges):

    * ``"seawater"`` (salinity = Practical Salinity): PSS-78 (UNESCO 1981;
      Lewis & Perkin 1981) for 2 <= SP <= 42, -2 <= t <= 35 degC, 0 <= p <= 100 MPa,
      with Hill et al. (1986) below SP = 2 -- identical to TEOS-10 C_from_SP.
      Outside (flags COLD / WARM / DEEP / SALTY): Walden scaling with pure-water
      density and viscosity and NaCl-ratio scaling in salinity
      (:mod:`induct.brine.extrapolation`), up to SP 100, -40..40 degC, 1000 MPa.
    * ``"NaCl"``, ``"KCl"``, ``"MgSO4"`` (g salt / kg solution): McCleskey et al.
      (2012) ion-additive model, MgSO4 ion pairing, a concentrated-solution factor
      fitted to the CRC Handbook 20 degC table, Walden pressure scaling
      (:mod:`induct.brine.solutions`); 0 to saturation, 0 <= t <= 60 degC,
      0 <= p <= 100 MPa. Flags: COLD below 0 degC (down to the freezing point,
      Walden continuation), DEEP above 100 MPa (to 1000 MPa).

    Parameters
    ----------
    solute : str or Solute
        A registered name or alias (:data:`induct.brine.SOLUTES`: "seawater",
        "NaCl", "MgSO4", "KCl", ...), case-insensitive, or a registry record.
    salinity_g_per_kg : array_like
        In the solute's unit (``get_solute(solute).salinity``): seawater Practical
        Salinity; the salts g of anhydrous salt per kg of solution.
    temperature_C : array_like
        In-situ temperature (degC, ITS-90); must not be below the freezing point.
    pressure_MPa : array_like, default 0
        Sea (gauge) pressure (MPa).
    return_flags : bool, default False
        Also return the per-point :class:`ExtrapolationFlag` bits as an int array.
    warn : bool, default True
        Issue one aggregated :class:`ExtrapolationWarning` if any point is flagged.

    Returns
    -------
    ndarray or (ndarray, ndarray)
        Conductivity (S/m), broadcast shape of the inputs (0-d for scalars); with
        ``return_flags`` also the flags (int array, same shape; 0 = not extrapolated).

    Raises
    ------
    ValueError
        Unknown solute; NaN/inf; negative salinity; salinity above saturation
        (brines) or above SP 100 (seawater); temperature below the freezing point
        (frozen) or outside the model's limits; pressure outside 0-1000 MPa.

    Examples
    --------
    >>> from induct import brine
    >>> round(float(brine.conductivity("seawater", 35.0, 0.0)), 4)   # TEOS-10 C_from_SP: 2.9036 S/m
    2.9036
    >>> k, f = brine.conductivity("KCl", 50.0, [-1.0, 20.0], return_flags=True, warn=False)
    >>> brine.describe_flags(f[0]), int(f[1])
    (['COLD'], 0)
    """
    rec, s, p = _check_common(solute, salinity_g_per_kg, pressure_MPa)
    t = _finite("temperature_C", temperature_C)
    s, t, p = np.broadcast_arrays(s, t, p)
    lim = rec.limits
    if lim.salinity_max is not None:
        _range("salinity_g_per_kg", s, 0.0, lim.salinity_max, rec.salinity.unit,
               lim.salinity_note.format(name=rec.name))
    t_lo, t_hi = lim.temperature_C
    _range("temperature_C", t, t_lo, t_hi, "degC", f" for {rec.name}")
    if lim.saturation_w is not None:
        w = s * rec.salinity.to_mass_fraction
        wsat = limits.saturation_mass_fraction(rec, t)
        over = w > wsat
        if np.any(over):
            i = np.flatnonzero(over.ravel())[0]
            raise ValueError(
                f"salinity_g_per_kg={s.ravel()[i]:g} is above saturation of {rec.name} at "
                f"{t.ravel()[i]:g} degC; allowed range "
                f"[0, {rec.salinity.from_mass_fraction * wsat.ravel()[i]:.4g}] {rec.salinity.unit}")
    # -inf where no ice liquidus exists (above the eutectic the salt precipitates first)
    tf = rec.freezing_model(rec, s, p, above_liquidus=-np.inf)
    _check_not_frozen(rec.name, s, t, p, tf, t_hi)
    kappa = rec.conductivity_model(rec, s, t, p)
    flags = rec.extrapolation_flags(rec, s, t, p)
    if warn:
        warn_if_flagged(flags, f"conductivity({rec.name!r})")
    return (kappa, flags) if return_flags else kappa


def _check_not_frozen(solute, s, t, p, tf, t_max):
    frozen = t < tf - FREEZING_TOLERANCE_K
    if np.any(frozen):
        i = np.flatnonzero(frozen.ravel())[0]
        raise ValueError(
            f"temperature_C={t.ravel()[i]:g} is below the freezing point "
            f"{tf.ravel()[i]:.4f} degC of {solute} at salinity {s.ravel()[i]:g}, "
            f"pressure {p.ravel()[i]:g} MPa (the ocean would be frozen); allowed range "
            f"[{tf.ravel()[i]:.4f}, {t_max:g}] degC")


def ocean_conductivity_profile(solute, salinity_g_per_kg, temperature_C, pressure_MPa):
    """Conductivity along a depth profile, with per-point extrapolation flags.

    Same models and checks as :func:`conductivity`; arrays broadcast (typically
    shape (ndepth,)). At most one :class:`ExtrapolationWarning` is issued for the
    whole profile, however many points are extrapolated.

    Parameters
    ----------
    solute : str or Solute
        A registered name or alias, or a registry record.
    salinity_g_per_kg, temperature_C, pressure_MPa : array_like
        As in :func:`conductivity` (units: PSS-78 or g/kg, degC, MPa).

    Returns
    -------
    conductivity_S_per_m : ndarray
        Conductivity (S/m), broadcast shape.
    flags : ndarray of int
        :class:`ExtrapolationFlag` bits per point (0 where no extrapolation).

    Examples
    --------
    >>> from induct import brine
    >>> sigma, flags = brine.ocean_conductivity_profile("MgSO4", 50.0, 0.0, [10.0, 90.0])
    >>> sigma.shape, [int(f) for f in flags]
    ((2,), [0, 0])
    """
    return conductivity(solute, salinity_g_per_kg, temperature_C, pressure_MPa,
                        return_flags=True, warn=True)
