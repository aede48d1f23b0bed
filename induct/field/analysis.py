"""Driving-field lines at a moon, with the primary-field series they describe.

Two routes to the lines of the driving (primary) field in the flow frame:

* :func:`planet_drive_analysis`: the exact line spectrum of a planet's internal
  field at a moon (:func:`induct.field.drive.planet_drive_spectrum`) and, for a
  figure, the primary field over two orbits;
* :func:`series_drive_analysis`: lines at given periods fitted by least squares
  to a primary-field time series (:func:`induct.field.spectrum.fit_harmonics`),
  labelled as synodic/orbital multiples when the rotation and orbital periods
  are known.

Both return a :class:`DriveAnalysis`. Only the planet's internal field is
modelled: magnetodisc (current sheet), magnetopause and solar-rotation lines
are not included (:data:`INTERNAL_FIELD_ONLY`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from induct.constants import SECONDS_PER_HOUR

__all__ = ["DriveAnalysis", "INTERNAL_FIELD_ONLY", "planet_drive_analysis", "series_drive_analysis"]

#: What the lines of a planet file leave out (shown beside every result of :func:`planet_drive_analysis`).
INTERNAL_FIELD_ONLY = (
    "Internal field of the planet only: magnetodisc (current sheet), magnetopause and solar-rotation "
    "lines are not included."
)


@dataclass
class DriveAnalysis:
    """Driving-field lines and the primary-field series they come from.

    Attributes
    ----------
    spectrum : induct.field.spectrum.Spectrum
        The lines (flow frame, ``B(t) = mean + sum_k amplitude_k cos(2 pi t / period_k + phase_k)``).
    times_s : ndarray, shape (N,)
        Times of the series (s from the epoch).
    field_nT : ndarray, shape (N, 3)
        Primary field (nT, flow frame): computed from the planet, or the given series.
    source : str
        The planet file or series the lines come from.
    planet, moon : str or None
        Names, for lines computed from a planet file.
    sense : str or None
        ``"prograde"`` or ``"retrograde"`` orbit, for lines computed from a planet file.
    epoch_utc : str or None
        UTC of ``t = 0`` (the planet file's ``[planet] epoch_utc``, or given with a series);
        None when unknown.
    """

    spectrum: object
    times_s: np.ndarray
    field_nT: np.ndarray
    source: str
    planet: str | None = None
    moon: str | None = None
    sense: str | None = None
    epoch_utc: str | None = None

    @property
    def info(self) -> dict:
        """Where the lines come from: ``source``, ``planet``, ``moon`` (and ``sense`` for a planet file), ``epoch_utc``."""
        out = {"source": self.source, "planet": self.planet, "moon": self.moon}
        if self.planet is not None:
            out["sense"] = self.sense
        out["epoch_utc"] = self.epoch_utc
        return out


def planet_drive_analysis(
    system,
    moon: str | None = None,
    *,
    max_harmonic: int = 3,
    max_orbital: int = 2,
    min_amplitude_nT: float = 0.1,
    samples: int = 64,
    series_points: int = 2000,
) -> DriveAnalysis:
    """Driving lines of a planet's internal field at a moon, with the primary field over two orbits.

    Parameters
    ----------
    system : induct.field.drive.PlanetSystem
        Planet and moons (see :func:`induct.field.drive.read_planet_file`).
    moon : str, optional
        Moon name (needed when the system has several moons).
    max_harmonic, max_orbital : int
        Largest synodic and orbital multiples reported.
    min_amplitude_nT : float
        Lines whose largest component is below this are dropped (nT).
    samples : int
        FFT samples per period and axis.
    series_points : int
        Samples of the primary-field series over two orbital periods.

    Returns
    -------
    DriveAnalysis

    Examples
    --------
    >>> from importlib import resources
    >>> from induct.io.drive_files import read_planet_file
    >>> system = read_planet_file(resources.files("induct.scenarios") / "tarvos.toml")
    >>> a = planet_drive_analysis(system)
    >>> a.spectrum.lines[0].label, a.moon, a.field_nT.shape
    ('synodic', 'Ilmare', (2000, 3))
    """
    from induct.field.drive import planet_drive_spectrum
    from induct.field.orbit import primary_field_series

    name, orbit = system.orbit(moon)
    spec = planet_drive_spectrum(
        system, name, max_harmonic=max_harmonic, max_orbital=max_orbital,
        min_amplitude_nT=min_amplitude_nT, samples=samples,
    )
    t = np.linspace(0.0, 2.0 * orbit.period_s, int(series_points))
    b = primary_field_series(system.planet, orbit, t)
    return DriveAnalysis(spec, t, b, str(system.source), system.planet.name, name,
                         "retrograde" if orbit.retrograde else "prograde", getattr(system, "epoch_utc", None))


def series_drive_analysis(
    times_s,
    field_nT,
    periods_h,
    *,
    rotation_period_h: float | None = None,
    orbital_period_h: float | None = None,
    retrograde: bool = False,
    max_harmonic: int = 3,
    max_orbital: int = 2,
    source: str = "",
) -> DriveAnalysis:
    """Driving lines at given periods fitted by least squares to a primary-field series.

    Parameters
    ----------
    times_s : array_like, shape (N,)
        Times (s from the epoch), strictly increasing.
    field_nT : array_like, shape (N, 3)
        Primary field (nT, flow frame).
    periods_h : sequence of float
        Periods of the lines (h), > 0.
    rotation_period_h, orbital_period_h : float, optional
        Give both to label the lines as synodic/orbital multiples
        (:func:`induct.field.spectrum.label_period`); otherwise lines are named by period.
    retrograde : bool
        The orbit is retrograde (for the synodic period).
    max_harmonic, max_orbital : int
        Largest synodic and orbital multiples used in labels.
    source : str
        Where the series comes from (recorded in the result).

    Returns
    -------
    DriveAnalysis

    Examples
    --------
    >>> t = np.linspace(0.0, 240 * 3600.0, 2001)
    >>> b = np.column_stack([np.cos(2 * np.pi * t / (12.0 * 3600)), 0 * t, 0 * t + 5.0])
    >>> a = series_drive_analysis(t, b, [12.0])
    >>> round(float(a.spectrum.lines[0].amplitude_nT[0]), 9), a.spectrum.lines[0].label
    (1.0, '12 h')
    """
    from induct.field.orbit import synodic_period_s
    from induct.field.spectrum import fit_harmonics, label_period

    if not periods_h:
        raise ValueError("periods_h must list the periods to fit (h)")
    periods_s = np.array(periods_h, dtype=float) * SECONDS_PER_HOUR
    labels = None
    refs = {}
    if (rotation_period_h is None) != (orbital_period_h is None):
        raise ValueError("rotation_period_h and orbital_period_h go together")
    if rotation_period_h is not None:
        rot, orb = rotation_period_h * SECONDS_PER_HOUR, orbital_period_h * SECONDS_PER_HOUR
        syn = synodic_period_s(rot, orb, retrograde)
        refs = {"rotation": rot, "orbital": orb, "synodic": syn}
        labels = []
        for p in periods_s:
            if not (math.isfinite(p) and p > 0.0):
                raise ValueError(f"periods_h must be finite and > 0, got {p / SECONDS_PER_HOUR!r}")
            labels.append(label_period(p, syn, orb, max_harmonic, max_orbital) or f"{p / SECONDS_PER_HOUR:.6g} h")
    t = np.asarray(times_s, dtype=float)
    b = np.asarray(field_nT, dtype=float)
    spec = fit_harmonics(t, b, periods_s, labels)
    if refs:
        spec.reference_periods_s.update(refs)
    return DriveAnalysis(spec, t, b, str(source))
