"""Driving-field lines at a moon, with the primary-field series they describe.

Two routes to the lines of the driving (primary) field in the flow frame:

* :func:`planet_drive_analysis`: the exact line spectrum of a planet's internal
  field at a moon (:func:`induct.field.drive.planet_drive_spectrum`) and, for a
  figure, the primary field over two orbits;
* :func:`series_drive_analysis`: lines at given periods fitted by least squares
  to a primary-field time series (:func:`induct.field.spectrum.fit_harmonics`),
  labelled as synodic/orbital multiples when the rotation and orbital periods
  are known.

Both return a :class:`DriveAnalysis`. A planet file gives the internal field
and, when it has a ``[current_sheet]``, the axisymmetric current sheet
(magnetodisc); then the lines are computed with and without the sheet and each
line's share from the sheet is reported (:class:`SheetLine`). What is left out
is stated by :data:`INTERNAL_FIELD_ONLY` (no sheet) or :data:`WITH_CURRENT_SHEET`
(see :attr:`DriveAnalysis.caveat`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from induct.constants import SECONDS_PER_HOUR

__all__ = [
    "DriveAnalysis",
    "SheetLine",
    "INTERNAL_FIELD_ONLY",
    "WITH_CURRENT_SHEET",
    "drive_caveat",
    "planet_drive_analysis",
    "series_drive_analysis",
]

#: What the lines of a planet file without ``[current_sheet]`` leave out (shown beside every such result).
INTERNAL_FIELD_ONLY = (
    "Internal field of the planet only (the planet file has no [current_sheet]): magnetodisc (current sheet), "
    "magnetopause and solar-rotation lines are not included."
)

#: What the lines of a planet file with ``[current_sheet]`` leave out (shown beside every such result).
WITH_CURRENT_SHEET = (
    "Internal field of the planet plus an axisymmetric magnetodisc current sheet (Connerney, Acuna & Ness 1981) "
    "tilted and turning with the dipole: radial currents, hinging and warping of the sheet, the magnetopause and "
    "tail fields, and solar-wind-driven (solar-rotation) lines are not included."
)


def drive_caveat(current_sheet: bool) -> str:
    """What the lines of a planet file leave out.

    Parameters
    ----------
    current_sheet : bool
        The planet file has a ``[current_sheet]``.

    Returns
    -------
    str
        :data:`WITH_CURRENT_SHEET` or :data:`INTERNAL_FIELD_ONLY`.

    Examples
    --------
    >>> "radial currents" in drive_caveat(True), "magnetodisc" in drive_caveat(False)
    (True, True)
    """
    return WITH_CURRENT_SHEET if current_sheet else INTERNAL_FIELD_ONLY


@dataclass(frozen=True)
class SheetLine:
    """One driving line with and without the current sheet (flow frame).

    Attributes
    ----------
    label : str
        Line name ("synodic", ...).
    period_s : float
        Period (s).
    synodic_multiple, orbital_multiple : int
        (j, k): frequency ``j/T_syn + k/T_orb``.
    b_internal_nT : ndarray, shape (3,), complex
        Complex amplitude of the line from the internal field alone (nT).
    b_total_nT : ndarray, shape (3,), complex
        Complex amplitude with the sheet's field added (nT).
    """

    label: str
    period_s: float
    synodic_multiple: int
    orbital_multiple: int
    b_internal_nT: np.ndarray
    b_total_nT: np.ndarray

    @property
    def period_h(self) -> float:
        """Period (h)."""
        return self.period_s / SECONDS_PER_HOUR

    @property
    def b_sheet_nT(self) -> np.ndarray:
        """The sheet's own line ``b_total - b_internal`` (nT, complex, shape (3,)); the spectrum is linear."""
        return self.b_total_nT - self.b_internal_nT

    @property
    def internal_nT(self) -> float:
        """Vector amplitude ``sqrt(sum_c |B_c|**2)`` of the internal-field line (nT)."""
        return float(np.linalg.norm(self.b_internal_nT))

    @property
    def total_nT(self) -> float:
        """Vector amplitude of the line with the sheet (nT)."""
        return float(np.linalg.norm(self.b_total_nT))

    @property
    def sheet_nT(self) -> float:
        """Vector amplitude of the sheet's own line (nT)."""
        return float(np.linalg.norm(self.b_sheet_nT))

    @property
    def sheet_share(self) -> float:
        """Sheet's share ``|B_sheet| / |B_total|`` (vector amplitudes; > 1 where the parts partly cancel; nan if 0)."""
        return self.sheet_nT / self.total_nT if self.total_nT > 0.0 else math.nan


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
    current_sheet : induct.field.current_sheet.CurrentSheetField or None
        The planet file's current sheet, whose field is included in ``spectrum`` and ``field_nT``.
    internal_spectrum : Spectrum or None
        With a sheet: the lines of the internal field alone (same thresholds as ``spectrum``).
    internal_field_nT : ndarray, shape (N, 3), or None
        With a sheet: the internal field alone at ``times_s`` (nT, flow frame).
    sheet_lines : tuple of SheetLine
        With a sheet: every line above the amplitude threshold with or without it, in the order of
        ``spectrum`` (then the lines only the internal field has).
    sheet_height : tuple of float or None
        With a sheet: the least and largest height of the moon above the sheet's mid-plane over all
        orbital and rotation phases (planet radii).
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
    current_sheet: object = None
    internal_spectrum: object = None
    internal_field_nT: np.ndarray | None = None
    sheet_lines: tuple = ()
    sheet_height: tuple | None = None
    epoch_utc: str | None = None

    @property
    def caveat(self) -> str:
        """What the lines leave out (:func:`drive_caveat`); empty for lines fitted to a given series."""
        return drive_caveat(self.current_sheet is not None) if self.planet is not None else ""

    @property
    def sheet_note(self) -> str:
        """One line on the moon's height relative to the sheet (empty without a sheet)."""
        if self.current_sheet is None or self.sheet_height is None:
            return ""
        lo, hi = self.sheet_height
        d = self.current_sheet.half_thickness
        if -d < lo and hi < d:
            where = f"inside the sheet all the time (|z| < half-thickness {d:g})"
        elif lo >= d or hi <= -d:
            where = f"outside the sheet all the time (|z| >= half-thickness {d:g})"
        else:
            where = (f"it crosses the sheet's surface |z| = {d:g}: the field has a kink there and its lines decay "
                     "slowly; raise --samples if the spectrum warns")
        return f"{self.moon}'s height above the sheet's mid-plane: {lo:.3g} to {hi:.3g} planet radii; {where}."

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
    """Driving lines of a planet's field at a moon, with the primary field over two orbits.

    The field is the planet's internal field plus, when the planet file has a
    ``[current_sheet]``, the sheet's field; then the lines of the internal field
    alone are computed too and each line's share from the sheet is given in
    ``sheet_lines`` (see :class:`DriveAnalysis`).

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
    >>> s = a.sheet_lines[0]
    >>> s.label, round(s.internal_nT), round(s.total_nT)
    ('synodic', 102, 136)
    """
    from induct.field.drive import planet_drive_spectrum
    from induct.field.orbit import planet_fixed_position, primary_field_series

    name, orbit = system.orbit(moon)
    sense = "retrograde" if orbit.retrograde else "prograde"
    options = dict(max_harmonic=max_harmonic, max_orbital=max_orbital, samples=samples)
    t = np.linspace(0.0, 2.0 * orbit.period_s, int(series_points))
    sheet = getattr(system, "current_sheet", None)
    if sheet is None:
        spec = planet_drive_spectrum(system, name, min_amplitude_nT=min_amplitude_nT, **options)
        b = primary_field_series(system.planet, orbit, t)
        return DriveAnalysis(spec, t, b, str(system.source), system.planet.name, name, sense,
                             epoch_utc=getattr(system, "epoch_utc", None))
    if not (math.isfinite(min_amplitude_nT) and min_amplitude_nT >= 0.0):
        raise ValueError(f"min_amplitude_nT must be finite and >= 0, got {min_amplitude_nT!r}")
    internal = system.without_current_sheet()
    total_all = planet_drive_spectrum(system, name, min_amplitude_nT=0.0, **options)
    internal_all = planet_drive_spectrum(internal, name, min_amplitude_nT=0.0, **options)
    spec = _above(total_all, min_amplitude_nT)
    internal_spec = _above(internal_all, min_amplitude_nT)
    b = primary_field_series(system.planet, orbit, t)
    b_internal = primary_field_series(internal.planet, orbit, t)
    # Height above the sheet over the whole torus of orbital and rotation phases (the field's two clocks).
    n = int(samples)
    t_o, t_r = np.meshgrid(orbit.period_s * np.arange(n) / n, system.planet.rotation_period_s * np.arange(n) / n)
    _, z = sheet.sheet_coordinates(planet_fixed_position(system.planet, orbit, t_o.ravel(), t_r.ravel()))
    return DriveAnalysis(spec, t, b, str(system.source), system.planet.name, name, sense,
                         epoch_utc=getattr(system, "epoch_utc", None), current_sheet=sheet,
                         internal_spectrum=internal_spec, internal_field_nT=b_internal,
                         sheet_lines=_sheet_lines(total_all, internal_all, spec, internal_spec),
                         sheet_height=(float(z.min()), float(z.max())))


def _above(spectrum, min_amplitude_nT: float):
    """The spectrum's lines whose largest component is >= min_amplitude_nT (as two_period_spectrum keeps them)."""
    from dataclasses import replace

    lines = tuple(ln for ln in spectrum.lines if float(np.max(ln.amplitude_nT)) >= min_amplitude_nT)
    return replace(spectrum, lines=lines, fraction_explained=float(sum(ln.variance_fraction for ln in lines)))


def _sheet_lines(total_all, internal_all, total, internal) -> tuple:
    """SheetLine per (j, k) kept in either spectrum, matched across the unfiltered spectra."""
    by_key_total = {(ln.synodic_multiple, ln.orbital_multiple): ln for ln in total_all.lines}
    by_key_internal = {(ln.synodic_multiple, ln.orbital_multiple): ln for ln in internal_all.lines}
    keys = [(ln.synodic_multiple, ln.orbital_multiple) for ln in total.lines]
    keys += [k for k in ((ln.synodic_multiple, ln.orbital_multiple) for ln in internal.lines) if k not in keys]
    out = []
    zero = np.zeros(3, dtype=complex)
    for key in keys:
        ref = by_key_total.get(key) or by_key_internal[key]
        b_tot = by_key_total[key].b_complex_nT if key in by_key_total else zero
        b_int = by_key_internal[key].b_complex_nT if key in by_key_internal else zero
        out.append(SheetLine(ref.label, ref.period_s, key[0], key[1], np.array(b_int), np.array(b_tot)))
    return tuple(out)


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
