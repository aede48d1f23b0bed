"""Driving (primary) field lines: DriveLine, scenario tables and planet files.

Driving lines
-------------
A driving line is one period of the uniform primary field at the moon, in the
flow frame (x along the corotation flow, y toward the planet's spin axis, z
along it; see :mod:`induct.field.orbit`):

    B(t) = Re{ B_k exp(i w t) } = amplitude cos(2 pi t / period + phase),

t in seconds from the scenario's epoch, ``B_k = amplitude * exp(i phase)``
per component. In a scenario file::

    [[drive.lines]]
    label = "synodic"          # optional
    period_h = 9.6
    amplitude_nT = [210.0, 95.0, 12.0]
    phase_deg = [0.0, 90.0, 30.0]

The induced field of a layered moon follows from each line independently
(``B_ind = Re sum_k -(R_1(w_k)/2) (R/r)**3 [3 (B_k . rhat) rhat - B_k] e^{i w_k t}``),
so :class:`DriveLine` carries exactly ``w_k`` and ``B_k``.

Planet files (format 1, TOML)
-----------------------------
::

    [planet]
    name = "Tarvos"
    radius_km = 65000.0
    rotation_period_h = 10.6
    gm_km3_per_s2 = 1.0e8           # optional if every moon gives orbital_period_h
    prime_meridian_deg = 0.0        # optional: inertial longitude of longitude 0 at t = 0
    epoch_utc = "2031-03-10T00:00:00"  # optional: UTC of t = 0 (checked by induct.io.drive_files)

    [dipole]                        # optional: centred or offset tilted dipole
    B0_nT = 2.5e5                   # equatorial surface field (or moment_A_m2)
    tilt_deg = 9.0                  # angle moment-spin axis, 0..180 (> 90: moment points south)
    tilt_longitude_deg = 200.0      # east longitude toward which the moment tilts
    offset_km = [0.0, 0.0, 0.0]     # optional, planet-fixed

    [[gauss]]                       # any number; Schmidt semi-normalised, nT
    n = 2
    m = 1
    g_nT = 1200.0
    h_nT = -800.0                   # optional (must be 0 or absent for m = 0)

    [[moon]]
    name = "Ilmare"
    semi_major_axis_km = 617500.0
    eccentricity = 0.004            # optional, default 0
    inclination_deg = 0.3           # to the rotational equator, [0, 90) for the given sense
    ascending_node_deg = 0.0        # optional
    periapsis_arg_deg = 0.0         # optional
    mean_anomaly_deg = 0.0          # optional, at t = 0
    sense = "prograde"              # or "retrograde"
    orbital_period_h = 84.7         # optional; else Kepler's third law with gm_km3_per_s2

    [current_sheet]                 # optional: axisymmetric current sheet (magnetodisc)
    inner_radius = 6.0              # planet radii
    outer_radius = 45.0             # planet radii; optional (absent or inf: no outer edge)
    half_thickness = 2.0            # planet radii
    current_constant_nT = 140.0     # mu0 I0 / 2 (nT); > 0: sheet moment parallel to the dipole's

A ``[dipole]`` table and ``[[gauss]]`` rows with n = 1 cannot be combined.

The ``[current_sheet]`` is the washer of azimuthal current of
:mod:`induct.field.current_sheet` (Connerney, Acuna & Ness 1981, JGR 86, 8370),
centred on the planet's centre with its axis along the dipole moment (the
``[dipole]`` tilt, or the degree-1 ``[[gauss]]`` rows), turning with the planet.
Its field is added to the internal field (``planet.field`` is then a
:class:`~induct.field.planet.SumField` of the two; :attr:`PlanetSystem.current_sheet`
is the sheet and :meth:`PlanetSystem.without_current_sheet` the internal field
alone). It leaves out radial currents, hinging and warping of the sheet, and the
magnetopause and tail fields. A moon that crosses the sheet's surface
(|z| = half_thickness) sees a field with a kink; its spectrum then decays slowly
and :func:`planet_drive_spectrum` warns: raise ``samples``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from induct.constants import MU0, SECONDS_PER_HOUR, METRES_PER_KM
from induct.field.current_sheet import CurrentSheetField, axis_from_dipole, axis_from_tilt, current_sheet_from_table
from induct.field.orbit import KeplerOrbit, flow_frame_field
from induct.field.planet import GaussField, OffsetDipoleField, Planet, SumField, tilted_dipole_coefficients
from induct.field.spectrum import SpectralLine, Spectrum, two_period_spectrum

__all__ = [
    "DriveLine",
    "parse_drive_lines",
    "drive_field_nT",
    "PlanetSystem",
    "parse_planet_table",
    "planet_drive_spectrum",
]


# --------------------------------------------------------------------------- DriveLine
@dataclass(frozen=True, eq=False)
class DriveLine:
    """One period of the uniform driving field at the moon (flow frame).

    Parameters
    ----------
    period_s : float
        Period (s), > 0.
    b_complex_nT : array_like, shape (3,), complex
        Complex vector amplitude B_k (nT): ``B(t) = Re{B_k exp(2 pi i t / period_s)}``.
    label : str
        Optional name ("synodic", "orbital", ...).
    """

    period_s: float
    b_complex_nT: np.ndarray
    label: str = ""

    def __post_init__(self):
        if isinstance(self.period_s, bool) or not (math.isfinite(self.period_s) and self.period_s > 0.0):
            raise ValueError(f"period_s must be finite and > 0, got {self.period_s!r}")
        b = np.array(self.b_complex_nT, dtype=complex)
        if b.shape != (3,) or not np.all(np.isfinite(b)):
            raise ValueError(f"b_complex_nT must be 3 finite complex numbers, got shape {b.shape}")
        b.setflags(write=False)
        object.__setattr__(self, "period_s", float(self.period_s))
        object.__setattr__(self, "b_complex_nT", b)
        object.__setattr__(self, "label", str(self.label))

    @classmethod
    def from_amplitude_phase(cls, period_h: float, amplitude_nT, phase_deg, label: str = "") -> "DriveLine":
        """Build from period (h), per-component amplitude (nT, shape (3,)) and phase (deg, shape (3,))."""
        amp = np.asarray(amplitude_nT, dtype=float)
        ph = np.asarray(phase_deg, dtype=float)
        return cls(float(period_h) * SECONDS_PER_HOUR, amp * np.exp(1j * np.radians(ph)), label)

    @classmethod
    def from_spectral_line(cls, line: SpectralLine) -> "DriveLine":
        """Convert a line of :class:`induct.field.spectrum.Spectrum`."""
        return cls(line.period_s, line.b_complex_nT, line.label)

    @property
    def period_h(self) -> float:
        """Period (h)."""
        return self.period_s / SECONDS_PER_HOUR

    @property
    def omega_rad_per_s(self) -> float:
        """Angular frequency 2 pi / period (rad/s)."""
        return 2.0 * math.pi / self.period_s

    @property
    def amplitude_nT(self) -> np.ndarray:
        """Per-component amplitude |B_k| (nT), shape (3,)."""
        return np.abs(self.b_complex_nT)

    @property
    def phase_deg(self) -> np.ndarray:
        """Per-component phase arg(B_k) (deg, in (-180, 180]), shape (3,)."""
        return np.degrees(np.angle(self.b_complex_nT))

    def field_nT(self, t_s) -> np.ndarray:
        """Field of this line at times t_s (s from the epoch): shape (N, 3), nT, flow frame."""
        t = np.atleast_1d(np.asarray(t_s, dtype=float))
        return np.real(np.exp(1j * self.omega_rad_per_s * t)[:, None] * self.b_complex_nT[None, :])


def drive_field_nT(lines, t_s) -> np.ndarray:
    """Sum of driving lines at times t_s (s): shape (N, 3), nT, flow frame."""
    t = np.atleast_1d(np.asarray(t_s, dtype=float))
    out = np.zeros((t.size, 3))
    for line in lines:
        out += line.field_nT(t)
    return out


def _number(value, name: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ValueError(f"{name} must be a number, got {value!r}")
    if not math.isfinite(value):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return float(value)


def _vector3(value, name: str) -> np.ndarray:
    if not isinstance(value, (list, tuple)) or len(value) != 3:
        raise ValueError(f"{name} must be a list of 3 numbers [x, y, z], got {value!r}")
    return np.array([_number(v, f"{name}[{i}]") for i, v in enumerate(value)])


def _check_keys(table: dict, allowed: set, where: str):
    unknown = sorted(set(table) - allowed)
    if unknown:
        raise ValueError(f"{where}: unknown field(s) {', '.join(unknown)}; allowed: {', '.join(sorted(allowed))}")


def parse_drive_lines(table: dict) -> list[DriveLine]:
    """Parse and validate the ``[[drive.lines]]`` tables of a scenario.

    Parameters
    ----------
    table : dict
        The scenario's ``drive`` table (``{"lines": [...], ...}``) or the whole parsed
        scenario (a dict with a ``drive`` key).

    Returns
    -------
    list of DriveLine
        In file order.

    Raises
    ------
    ValueError
        Naming the field, e.g. ``drive.lines[1].amplitude_nT[2]``, for missing, unknown,
        non-finite, negative (period, amplitude) or duplicated (period) entries.
    """
    if not isinstance(table, dict):
        raise ValueError("drive: expected a table")
    if "lines" not in table and isinstance(table.get("drive"), dict):
        table = table["drive"]
    if "lines" not in table:
        raise ValueError("drive.lines: missing; give at least one [[drive.lines]] table")
    raw = table["lines"]
    if not isinstance(raw, list) or not raw:
        raise ValueError("drive.lines must be a non-empty array of tables ([[drive.lines]])")
    lines, seen = [], {}
    for i, entry in enumerate(raw):
        where = f"drive.lines[{i}]"
        if not isinstance(entry, dict):
            raise ValueError(f"{where} must be a table")
        _check_keys(entry, {"period_h", "amplitude_nT", "phase_deg", "label"}, where)
        for key in ("period_h", "amplitude_nT", "phase_deg"):
            if key not in entry:
                raise ValueError(f"{where}.{key}: missing")
        period_h = _number(entry["period_h"], f"{where}.period_h")
        if period_h <= 0.0:
            raise ValueError(f"{where}.period_h must be > 0, got {period_h!r}")
        amp = _vector3(entry["amplitude_nT"], f"{where}.amplitude_nT")
        for c in range(3):
            if amp[c] < 0.0:
                raise ValueError(f"{where}.amplitude_nT[{c}] must be >= 0 (put the sign in phase_deg), got {float(amp[c])!r}")
        phase = _vector3(entry["phase_deg"], f"{where}.phase_deg")
        label = entry.get("label", "")
        if not isinstance(label, str):
            raise ValueError(f"{where}.label must be a string")
        for j, other in seen.items():
            if abs(other - period_h) <= 1e-12 * period_h:
                raise ValueError(f"{where}.period_h = {period_h!r} duplicates drive.lines[{j}]; merge the two lines")
        seen[i] = period_h
        lines.append(DriveLine.from_amplitude_phase(period_h, amp, phase, label))
    return lines


# --------------------------------------------------------------------------- planet files
@dataclass(frozen=True, eq=False)
class PlanetSystem:
    """A planet and its moons' orbits, as read from a planet file.

    Attributes
    ----------
    planet : Planet
        With the current sheet's field included in ``planet.field`` when there is one.
    moons : dict of str -> KeplerOrbit
        In file order.
    source : str
        Where it came from (file name or "<table>").
    current_sheet : CurrentSheetField or None
        The planet file's ``[current_sheet]``; ``planet.field`` is then
        ``SumField((internal field, current_sheet))``.
    epoch_utc : str or None
        ``[planet] epoch_utc``: UTC of ``t = 0`` (the time origin of the orbits, the prime
        meridian and the driving-line phases), if the file gives it.
    """

    planet: Planet
    moons: dict
    source: str = "<table>"
    current_sheet: CurrentSheetField | None = None
    epoch_utc: str | None = None

    def __post_init__(self):
        if self.current_sheet is not None:
            f = self.planet.field
            if not (isinstance(self.current_sheet, CurrentSheetField) and isinstance(f, SumField)
                    and len(f.parts) == 2 and f.parts[1] is self.current_sheet):
                raise ValueError("current_sheet: planet.field must be SumField((internal field, current_sheet))")

    def without_current_sheet(self) -> "PlanetSystem":
        """The same system with the planet's internal field only (itself when there is no sheet).

        Returns
        -------
        PlanetSystem

        Examples
        --------
        >>> from importlib import resources
        >>> from induct.io.drive_files import read_planet_file
        >>> system = read_planet_file(resources.files("induct.scenarios") / "tarvos.toml")
        >>> system.current_sheet is not None, system.without_current_sheet().current_sheet
        (True, None)
        """
        if self.current_sheet is None:
            return self
        p = self.planet
        internal = Planet(p.name, p.radius_m, p.rotation_period_s, p.field.parts[0], p.gm_m3_per_s2,
                          p.prime_meridian_rad)
        return PlanetSystem(internal, self.moons, self.source, epoch_utc=self.epoch_utc)

    def orbit(self, moon: str | None = None) -> tuple[str, KeplerOrbit]:
        """(name, orbit) of the named moon, or of the only moon when ``moon`` is None."""
        if moon is None:
            if len(self.moons) != 1:
                raise ValueError(f"moon: the file has {len(self.moons)} moons ({', '.join(self.moons)}); name one")
            return next(iter(self.moons.items()))
        if moon not in self.moons:
            raise ValueError(f"moon: no moon named {moon!r}; the file has {', '.join(self.moons) or 'none'}")
        return moon, self.moons[moon]


def _get(table: dict, key: str, where: str, default=None, required=True):
    if key in table:
        return _number(table[key], f"{where}.{key}")
    if required:
        raise ValueError(f"{where}.{key}: missing")
    return default


def _positive(table, key, where, required=True, default=None):
    value = _get(table, key, where, default, required)
    if value is not None and value <= 0.0:
        raise ValueError(f"{where}.{key} must be > 0, got {value!r}")
    return value


def _read_field(data: dict, radius_m: float):
    parts, axis = [], None
    gauss = data.get("gauss", [])
    if not isinstance(gauss, list):
        raise ValueError("gauss must be an array of tables ([[gauss]])")
    rows = {}
    for i, row in enumerate(gauss):
        where = f"gauss[{i}]"
        if not isinstance(row, dict):
            raise ValueError(f"{where} must be a table")
        _check_keys(row, {"n", "m", "g_nT", "h_nT"}, where)
        for key in ("n", "m"):
            if key not in row or isinstance(row[key], bool) or not isinstance(row[key], int):
                raise ValueError(f"{where}.{key} must be an integer")
        n, m = row["n"], row["m"]
        if n < 1:
            raise ValueError(f"{where}.n must be >= 1, got {n}")
        if not 0 <= m <= n:
            raise ValueError(f"{where}.m must be in [0, n] = [0, {n}], got {m}")
        g = _get(row, "g_nT", where)
        h = _get(row, "h_nT", where, 0.0, required=False)
        if m == 0 and h != 0.0:
            raise ValueError(f"{where}.h_nT must be 0 (or absent) for m = 0, got {h!r}")
        if (n, m) in rows:
            raise ValueError(f"{where}: n = {n}, m = {m} repeats gauss[{rows[(n, m)][0]}]")
        rows[(n, m)] = (i, g, h)
    dipole = data.get("dipole")
    if dipole is not None:
        if not isinstance(dipole, dict):
            raise ValueError("dipole must be a table")
        if any(n == 1 for n, _ in rows):
            raise ValueError("dipole: cannot be combined with [[gauss]] rows of degree n = 1")
        _check_keys(dipole, {"B0_nT", "moment_A_m2", "tilt_deg", "tilt_longitude_deg", "offset_km"}, "dipole")
        if ("B0_nT" in dipole) == ("moment_A_m2" in dipole):
            raise ValueError("dipole: give exactly one of B0_nT and moment_A_m2")
        if "B0_nT" in dipole:
            b0 = _positive(dipole, "B0_nT", "dipole")
        else:
            b0 = _positive(dipole, "moment_A_m2", "dipole") * MU0 / (4.0 * math.pi * radius_m**3) * 1e9
        tilt = _get(dipole, "tilt_deg", "dipole")
        if not 0.0 <= tilt <= 180.0:
            raise ValueError(f"dipole.tilt_deg must be in [0, 180], got {tilt!r}")
        lon = _get(dipole, "tilt_longitude_deg", "dipole", 0.0, required=False)
        g10, g11, h11 = tilted_dipole_coefficients(b0, tilt, lon)
        axis = axis_from_tilt(tilt, lon)
        offset = _vector3(dipole.get("offset_km", [0.0, 0.0, 0.0]), "dipole.offset_km") * METRES_PER_KM
        if np.linalg.norm(offset) >= radius_m:
            raise ValueError(f"dipole.offset_km must lie inside the planet (|offset| < {radius_m / 1e3:g} km)")
        if np.any(offset != 0.0):
            moment = 4.0 * math.pi * radius_m**3 / MU0 * np.array([g11, h11, g10]) * 1e-9
            parts.append(OffsetDipoleField(radius_m, moment, offset))
        else:
            rows[(1, 0)], rows[(1, 1)] = (-1, g10, 0.0), (-1, g11, h11)
    if rows:
        nmax = max(n for n, _ in rows)
        g = np.zeros((nmax + 1, nmax + 1))
        h = np.zeros_like(g)
        for (n, m), (_, gv, hv) in rows.items():
            g[n, m], h[n, m] = gv, hv
        parts.insert(0, GaussField(radius_m, g, h))
        if axis is None and nmax >= 1 and (g[1, 0], g[1, 1], h[1, 1]) != (0.0, 0.0, 0.0):
            axis = axis_from_dipole(g[1, 0], g[1, 1], h[1, 1])
    if not parts:
        raise ValueError("the planet file needs a [dipole] table or [[gauss]] rows")
    return (parts[0] if len(parts) == 1 else SumField(tuple(parts))), axis


def _read_moon(row: dict, i: int, planet: Planet) -> tuple[str, KeplerOrbit]:
    where = f"moon[{i}]"
    if not isinstance(row, dict):
        raise ValueError(f"{where} must be a table")
    allowed = {"name", "semi_major_axis_km", "eccentricity", "inclination_deg", "ascending_node_deg",
               "periapsis_arg_deg", "mean_anomaly_deg", "sense", "orbital_period_h"}
    _check_keys(row, allowed, where)
    name = row.get("name")
    if not isinstance(name, str) or not name.strip():
        raise ValueError(f"{where}.name must be a non-empty string")
    a_m = _positive(row, "semi_major_axis_km", where) * METRES_PER_KM
    e = _get(row, "eccentricity", where, 0.0, required=False)
    if not 0.0 <= e < 1.0:
        raise ValueError(f"{where}.eccentricity must be in [0, 1), got {e!r}")
    inc = _get(row, "inclination_deg", where, 0.0, required=False)
    if not 0.0 <= inc < 90.0:
        raise ValueError(f"{where}.inclination_deg must be in [0, 90) for the given sense, got {inc!r}")
    sense = row.get("sense", "prograde")
    if sense not in ("prograde", "retrograde"):
        raise ValueError(f"{where}.sense must be \"prograde\" or \"retrograde\", got {sense!r}")
    if a_m * (1.0 - e) <= planet.radius_m:
        raise ValueError(f"{where}: periapsis a (1 - e) = {a_m * (1 - e) / 1e3:g} km lies inside the planet")
    kepler_s = None
    if planet.gm_m3_per_s2 is not None:
        kepler_s = 2.0 * math.pi * math.sqrt(a_m**3 / planet.gm_m3_per_s2)
    period_h = _positive(row, "orbital_period_h", where, required=False)
    if period_h is None:
        if kepler_s is None:
            raise ValueError(f"{where}.orbital_period_h: missing (or give planet.gm_km3_per_s2)")
        period_s = kepler_s
    else:
        period_s = period_h * SECONDS_PER_HOUR
        if kepler_s is not None and abs(period_s / kepler_s - 1.0) > 1e-3:
            raise ValueError(
                f"{where}.orbital_period_h = {period_h!r} disagrees with Kepler's third law for "
                f"planet.gm_km3_per_s2 ({kepler_s / 3600:.6g} h) by more than 0.1 %; drop one of them"
            )
    angles = [math.radians(_get(row, k, where, 0.0, required=False))
              for k in ("ascending_node_deg", "periapsis_arg_deg", "mean_anomaly_deg")]
    return name, KeplerOrbit(a_m, period_s, e, math.radians(inc), *angles, retrograde=(sense == "retrograde"))


def parse_planet_table(data: dict, source: str = "<table>") -> PlanetSystem:
    """Build a :class:`PlanetSystem` from a parsed planet file (see the module docstring).

    Parameters
    ----------
    data : dict
        Parsed TOML.
    source : str
        Name used in messages and outputs.

    Returns
    -------
    PlanetSystem
    """
    if not isinstance(data, dict):
        raise ValueError("planet file: expected a table")
    _check_keys(data, {"planet", "dipole", "gauss", "current_sheet", "moon", "drive"}, "planet file")
    p = data.get("planet")
    if not isinstance(p, dict):
        raise ValueError("planet: missing [planet] table")
    _check_keys(p, {"name", "radius_km", "rotation_period_h", "gm_km3_per_s2", "prime_meridian_deg", "epoch_utc"},
                "planet")
    epoch = p.get("epoch_utc")
    if epoch is not None and not isinstance(epoch, str):
        raise ValueError(f'planet.epoch_utc must be a string "YYYY-MM-DDTHH:MM:SS" (UTC), got {epoch!r}')
    name = p.get("name", "planet")
    if not isinstance(name, str):
        raise ValueError("planet.name must be a string")
    radius_m = _positive(p, "radius_km", "planet") * METRES_PER_KM
    rotation_s = _positive(p, "rotation_period_h", "planet") * SECONDS_PER_HOUR
    gm_km3 = _positive(p, "gm_km3_per_s2", "planet", required=False)
    gm = None if gm_km3 is None else gm_km3 * METRES_PER_KM**3
    meridian = math.radians(_get(p, "prime_meridian_deg", "planet", 0.0, required=False))
    internal, axis = _read_field(data, radius_m)
    sheet = None
    if "current_sheet" in data:
        if axis is None:
            raise ValueError("current_sheet: its axis is the dipole axis; give a [dipole] table or degree-1 "
                             "[[gauss]] rows (not all zero)")
        sheet = current_sheet_from_table(data["current_sheet"], radius_m, axis)
    field = internal if sheet is None else SumField((internal, sheet))
    planet = Planet(name, radius_m, rotation_s, field, gm, meridian)
    moons_raw = data.get("moon", [])
    if isinstance(moons_raw, dict):
        moons_raw = [moons_raw]
    if not isinstance(moons_raw, list):
        raise ValueError("moon must be an array of tables ([[moon]])")
    moons = {}
    for i, row in enumerate(moons_raw):
        moon_name, orbit = _read_moon(row, i, planet)
        if moon_name in moons:
            raise ValueError(f"moon[{i}].name: {moon_name!r} appears twice")
        moons[moon_name] = orbit
    return PlanetSystem(planet, moons, source, sheet, epoch_utc=epoch)


def planet_drive_spectrum(
    system: PlanetSystem,
    moon: str | None = None,
    *,
    max_harmonic: int = 3,
    max_orbital: int = 2,
    min_amplitude_nT: float = 0.0,
    samples: int = 64,
) -> Spectrum:
    """Exact line spectrum of the planet's field at a moon (flow frame).

    The field is ``system.planet.field``: the internal field, plus the current sheet
    when the planet file has a ``[current_sheet]`` (use
    :meth:`PlanetSystem.without_current_sheet` for the internal field alone). The
    spectrum is linear in the field, so the sheet's own lines are the difference of
    the two spectra.

    Parameters
    ----------
    system : PlanetSystem
    moon : str, optional
        Moon name (required when the system has several moons).
    max_harmonic, max_orbital, min_amplitude_nT, samples
        See :func:`induct.field.spectrum.two_period_spectrum`.

    Returns
    -------
    Spectrum
        Phases refer to t = 0 at the planet file's epoch.
    """
    _, orbit = system.orbit(moon)
    planet = system.planet
    return two_period_spectrum(
        lambda t_orb, t_rot: flow_frame_field(planet, orbit, t_orb, t_rot),
        orbit.period_s,
        planet.rotation_period_s,
        retrograde=orbit.retrograde,
        samples=samples,
        max_harmonic=max_harmonic,
        max_orbital=max_orbital,
        min_amplitude_nT=min_amplitude_nT,
    )
