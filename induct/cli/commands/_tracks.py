"""Shared mission-input options of ``flyby``, ``fit`` and ``plan``: SPICE tracks, leap seconds, CDF data.

A command adds the options with :func:`add_track_options` (SPICE track and ``--lsk``) and,
for magnetometer data, :func:`add_cdf_options`; it then asks :func:`track_from_args` for its
track (from ``--trajectory`` or from the SPICE kernels) and :func:`residuals_from_args` for
its data (CSV residual files and CDF files). Times are turned into seconds from the
scenario's ``[drive] epoch_utc``; leap seconds come from the table shipped with induct or
from ``--lsk FILE`` (a SPICE leap-seconds kernel), and every result says which.

Without the optional extras the options stop with one line naming the extra to install
(``pip install 'induct[spice]'`` for spiceypy, ``pip install 'induct[cdf]'`` for cdflib).
"""

from __future__ import annotations

import dataclasses
import importlib
import os
from dataclasses import dataclass, field

import numpy as np

#: Optional module -> the extra that installs it.
EXTRAS = {"spiceypy": "spice", "cdflib": "cdf"}


def require(module: str, option: str) -> None:
    """Raise ValueError (one line, exit 2 in the CLI) when an optional module is missing.

    Parameters
    ----------
    module : str
        ``"spiceypy"`` or ``"cdflib"``.
    option : str
        The option that needs it, for the message (e.g. ``"--spice"``).
    """
    try:
        importlib.import_module(module)
    except ImportError:
        raise ValueError(f"{option} needs {module}: pip install 'induct[{EXTRAS[module]}]'") from None


def _free(parser, option: str) -> bool:
    return option not in parser._option_string_actions  # noqa: SLF001 - argparse has no public query


def add_track_options(parser, *, group_title: str = "track from SPICE kernels (instead of --trajectory)") -> None:
    """Add ``--spice KERNEL [KERNEL ...] --spacecraft ID --moon ID --planet ID --start UTC --stop UTC
    --step-s S [--spin-axis RA_DEG,DEC_DEG]`` and ``--lsk FILE`` to a sub-command's parser.

    The body options are stored as ``args.spacecraft``, ``args.spice_moon`` and
    ``args.spice_planet``; their spellings are ``--spice-moon``/``--spice-planet`` and, when the
    parser does not use them already, ``--moon``/``--planet``. An option the parser already has
    (e.g. ``--step-s``) is not added again: the command's own definition serves both.
    """
    g = parser.add_argument_group(group_title)

    def add(*names, **kw):
        names = [n for n in names if _free(parser, n)]
        if names:  # an option the command already has (e.g. plan's --step-s) keeps its definition
            g.add_argument(*names, **kw)

    add("--spice", nargs="+", metavar="KERNEL",
        help="SPICE kernels (SPK, PCK, LSK, name bindings or a meta-kernel) giving the track in the "
        "moon-centred flow frame; needs spiceypy (pip install 'induct[spice]')")
    add("--spacecraft", metavar="ID", help="with --spice: spacecraft, NAIF integer ID or name")
    add("--spice-moon", "--moon", dest="spice_moon", metavar="ID", help="with --spice: the moon, NAIF integer ID or name")
    add("--spice-planet", "--planet", dest="spice_planet", metavar="ID",
        help="with --spice: the planet, NAIF integer ID or name")
    add("--start", metavar="UTC", help="with --spice: first sample, UTC (e.g. 2031-03-10T11:00:00)")
    add("--stop", metavar="UTC", help="with --spice: last sample, UTC")
    add("--step-s", type=float, metavar="S", help="with --spice: sampling step (s)")
    add("--spin-axis", metavar="RA_DEG,DEC_DEG",
        help="with --spice: the planet's spin axis (J2000, deg) when the kernels hold no "
        "BODYnnn_POLE_RA/POLE_DEC (write --spin-axis=-RA,DEC for a negative first value)")
    if _free(parser, "--lsk"):
        parser.add_argument("--lsk", metavar="FILE",
                            help="leap-seconds kernel (SPICE LSK text file) for UTC conversions; default: the table "
                            "shipped with induct (IERS Bulletin C, TAI-UTC = 37 s from 2017-01-01)")


def add_cdf_options(parser) -> None:
    """Add ``--field-variable NAME --position-variable NAME`` (for ``--data FILE.cdf``)."""
    g = parser.add_argument_group("magnetometer data in CDF files (--data FILE.cdf)")
    g.add_argument("--field-variable", metavar="NAME",
                   help="CDF variable with the field residuals (N x 3, UNITS nT; DEPEND_0 names the time variable); "
                   "needs cdflib (pip install 'induct[cdf]')")
    g.add_argument("--position-variable", metavar="NAME",
                   help="CDF variable with the moon-centred positions (N x 3, UNITS km)")


def time_constants(args):
    """(leap-second constants or None, their description) from ``--lsk``."""
    from induct.io.timescales import default_constants, read_lsk

    path = getattr(args, "lsk", None)
    if path:
        c = dataclasses.replace(read_lsk(path), source=f"leap-seconds kernel {path}")
        return c, c.source
    return None, default_constants().source


def _epoch(scenario, what: str) -> str:
    if scenario.epoch_utc is None:
        raise ValueError(
            f"{scenario.path or scenario.name}: {what} gives absolute times, but the scenario has no [drive] "
            "epoch_utc (the UTC of t = 0 of its driving lines); add it (induct drive --epoch-utc ... "
            "--write-scenario)"
        )
    return scenario.epoch_utc


def _spin_axis(text):
    if text is None:
        return None
    parts = str(text).replace(" ", "").split(",")
    try:
        ra, dec = (float(p) for p in parts)
    except ValueError:
        raise ValueError(f"--spin-axis {text!r}: give RA_DEG,DEC_DEG (J2000, degrees), e.g. 40.0,83.5") from None
    return ra, dec


def spice_requested(args) -> bool:
    """True when the SPICE options are used."""
    return bool(getattr(args, "spice", None))


def spice_track_from_args(args, scenario, tdb_s=None):
    """The :class:`~induct.io.spice_track.SpiceTrack` the SPICE options describe (times from the scenario's epoch).

    With ``tdb_s`` (TDB seconds past J2000, shape (N,)) the track is computed at those times (``fit``: the
    sample times of the data files) and ``--start/--stop/--step-s`` must not be given.
    """
    require("spiceypy", "--spice")
    bodies = (("--spacecraft", args.spacecraft), ("--moon", args.spice_moon), ("--planet", args.spice_planet))
    grid = (("--start", args.start), ("--stop", args.stop), ("--step-s", args.step_s))
    missing = [opt for opt, value in bodies + (grid if tdb_s is None else ()) if value is None]
    if missing:
        raise ValueError(f"--spice needs {', '.join(missing)}")
    if tdb_s is not None and any(value is not None for _, value in grid):
        raise ValueError("--start, --stop and --step-s do not apply here: the times come from the --data files")
    from induct.io.spice_track import spice_track, spice_track_at

    epoch = _epoch(scenario, "a track from --spice")
    kernels = list(args.spice) + ([args.lsk] if getattr(args, "lsk", None) else [])
    axis = _spin_axis(args.spin_axis)
    if tdb_s is not None:
        return spice_track_at(kernels, args.spacecraft, args.spice_moon, args.spice_planet, tdb_s,
                              spin_axis_radec_deg=axis, epoch_utc=epoch)
    return spice_track(kernels, args.spacecraft, args.spice_moon, args.spice_planet, args.start, args.stop,
                       args.step_s, spin_axis_radec_deg=axis, epoch_utc=epoch)


def _spice_notes(st, args) -> list:
    leap = st.leapseconds_source + (f" (--lsk {args.lsk} loaded last)" if getattr(args, "lsk", None) else "")
    notes = [c for c in st.comments() if not c.startswith(("t_s:", "geometry only", "leap seconds"))]
    return notes + [f"t_s: TDB seconds from the epoch {st.epoch_utc} UTC; SPICE leap seconds: {leap}"]


def track_from_args(args, scenario, *, frame=None):
    """The track a command's options give: ``--trajectory FILE`` or the SPICE options.

    Parameters
    ----------
    args : argparse.Namespace
        With ``trajectory`` and the options of :func:`add_track_options`.
    scenario : induct.io.scenario.Scenario
        Its ``epoch_utc`` turns absolute times into seconds from the driving lines' epoch.
    frame : str, optional
        Frame of a CSV track (``--frame``); SPICE tracks are in the flow frame.

    Returns
    -------
    track : induct.io.tracks.Track
        Positions in the flow frame, ``times_s`` from the scenario's epoch, ``utc`` for SPICE tracks
        and CSV tracks with a ``utc`` column.
    notes : list of str
        Where the track and its times come from (kernels, bodies, spin axis, leap seconds).
    """
    from induct.io.tracks import Track, read_track

    trajectory = getattr(args, "trajectory", None)
    if spice_requested(args):
        if trajectory:
            raise ValueError("give either --trajectory or --spice, not both")
        if frame not in (None, "flow"):
            raise ValueError(f"--frame {frame}: a track from --spice is in the flow frame")
        st = spice_track_from_args(args, scenario)
        source = "SPICE (" + ", ".join(os.path.basename(k) for k in st.kernels) + ")"
        notes = _spice_notes(st, args)
        track = Track(st.times_s, st.positions_km, "flow", {}, source, None, st.utc, notes[-1])
        return track, notes
    if not trajectory:
        raise ValueError("give a track: --trajectory FILE.csv, or --spice KERNEL ... with --spacecraft, --moon, "
                         "--planet, --start, --stop, --step-s")
    constants, leap = time_constants(args)
    track = read_track(trajectory, frame=frame, epoch_utc=scenario.epoch_utc, constants=constants,
                       epoch_from=str(scenario.path or scenario.name))
    return track, [track.time_note] if track.time_note != Track.time_note else []


@dataclass
class Residuals:
    """Residual samples joined from CSV and CDF files (flow frame).

    Attributes
    ----------
    positions_km, residuals_nT : ndarray, shape (N, 3)
    times_s : ndarray, shape (N,)
        Seconds from the scenario's epoch.
    sources, frames : list of str
        One per file.
    dropped : list of dict
        Per CDF file: ``file``, ``records``, ``kept``, ``fill``, ``out_of_range``, ``by_variable``.
    notes : list of str
        Time and leap-second notes.
    """

    positions_km: np.ndarray
    times_s: np.ndarray
    residuals_nT: np.ndarray
    sources: list
    frames: list
    dropped: list = field(default_factory=list)
    notes: list = field(default_factory=list)


def residuals_from_args(args, scenario) -> Residuals:
    """Read ``--data`` files: CSV residual files and ``.cdf`` files (with ``--field-variable``/``--position-variable``).

    With the SPICE options (``--spice``, ``--spacecraft``, ``--moon``, ``--planet``; no ``--start/--stop/--step-s``)
    the positions come from the kernels at each sample's time, and the files must hold none (CSV: no
    ``x_km,y_km,z_km``; CDF: no ``--position-variable``). Every point is checked against the body (radius and
    ionosphere sheet).
    """
    from induct.io.tracks import RESIDUAL_COLUMNS, Track, check_outside_model, read_track

    constants, leap = time_constants(args)
    where = str(scenario.path or scenario.name)
    spice = spice_requested(args)
    if spice:
        require("spiceypy", "--spice")
    pos, t, b, sources, frames, dropped, notes = [], [], [], [], [], [], []
    spice_notes = []

    def positions_from_spice(times_s, tdb_s, source):
        """Flow-frame positions (N, 3) at the samples of one data file, from the SPICE options."""
        from induct.io.timescales import utc_to_tdb

        if tdb_s is None:
            tdb_s = np.asarray(times_s) + float(utc_to_tdb(scenario.epoch_utc, constants=constants))
        try:
            st = spice_track_from_args(args, scenario, tdb_s=tdb_s)
        except ValueError as exc:
            raise ValueError(f"{source}: positions from --spice: {exc}") from None
        if not spice_notes:
            spice_notes.extend(_spice_notes(st, args)[:-1])
        return st.positions_km

    for name in args.data:
        if str(name).lower().endswith(".cdf"):
            require("cdflib", "--data FILE.cdf")
            if not args.field_variable or (not args.position_variable and not spice):
                raise ValueError(f"{name}: a CDF file needs --field-variable NAME and --position-variable NAME "
                                 "(or positions from --spice)")
            if spice and args.position_variable:
                raise ValueError(f"{name}: positions from --position-variable and from --spice; give one")
            from induct.io.cdf_magnetometer import read_magnetometer_cdf

            if args.frame not in (None, "flow"):
                raise ValueError(f"{name}: --frame {args.frame}: CDF files are read in the flow frame only")
            epoch = _epoch(scenario, f"CDF file {name}")
            series = read_magnetometer_cdf(name, args.field_variable, args.position_variable,
                                           frame=args.frame or "flow", epoch_utc=epoch, constants=constants)
            if spice:
                series = dataclasses.replace(
                    series, positions_km=positions_from_spice(series.times_s, series.tdb_s, series.source))
            track = Track(series.times_s, series.positions_km, series.frame,
                          {c: series.field_nT[:, k] for k, c in enumerate(RESIDUAL_COLUMNS[4:])}, series.source)
            check_outside_model(track, scenario.model)
            pos.append(series.positions_km)
            t.append(series.times_s)
            b.append(series.field_nT)
            sources.append(series.source)
            frames.append(series.frame)
            dropped.append({"file": series.source, "records": series.n_records, "kept": series.size,
                            "fill": series.n_fill, "out_of_range": series.n_out_of_range,
                            "by_variable": series.dropped_by_variable, "time_variable": series.time_variable,
                            "epoch_type": series.epoch_type})
            notes.append(f"{series.source}: times from {series.time_variable} ({series.epoch_type}), seconds from "
                         f"{epoch} UTC; leap seconds: {leap}")
        else:
            if spice and args.frame not in (None, "flow"):
                raise ValueError(f"{name}: --frame {args.frame}: with --spice the residuals must be in the flow frame")
            track = read_track(name, columns=RESIDUAL_COLUMNS[4:], frame=args.frame, epoch_utc=scenario.epoch_utc,
                               constants=constants, epoch_from=where, positions=not spice)
            if spice:
                _epoch(scenario, "a track from --spice")
                track = dataclasses.replace(track, positions_km=positions_from_spice(track.times_s, None, track.source))
            check_outside_model(track, scenario.model)
            pos.append(track.positions_km)
            t.append(track.times_s)
            b.append(track.vectors_to_flow(RESIDUAL_COLUMNS[4:]))
            sources.append(track.source)
            frames.append(track.frame)
            if track.time_note != Track.time_note:
                notes.append(f"{track.source}: {track.time_note}")
    return Residuals(np.concatenate(pos), np.concatenate(t), np.concatenate(b), sources, frames, dropped,
                     spice_notes + notes)
