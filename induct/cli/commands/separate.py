"""``induct separate SCENARIO --other OTHER.toml ...``: at which periods and altitudes candidate interiors differ."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from induct.constants import MODEL_LIMITS
from induct.cli.tables import Column, format_table
from induct.io.scenario import load_scenario
from induct.io.tables import write_separation_csv, write_table_csv
from induct.planning.separation import separation, separation_summary
from induct.plot.separation import plot_separation


def register(subparsers):
    p = subparsers.add_parser(
        "separate",
        help="difference in induced field between candidate interiors versus period and altitude (mission planning)",
        description=(
            "Compare two or more candidate interiors of one body: the induced field along the driving field (above "
            "the sub-drive point, on the equator for an equatorial drive) of a uniform driving field and, for every pair, the magnitude of the difference of their induced fields, versus "
            "period (log axis) and versus altitude. Writes PREFIX.png/.pdf, PREFIX_period.csv, "
            "PREFIX_altitude.csv and PREFIX_summary.csv, and prints the summary table."
        ),
        epilog=MODEL_LIMITS,
    )
    p.add_argument("scenario", help="scenario TOML file, or the name of a bundled scenario (e.g. ilmare)")
    p.add_argument("--other", nargs="+", required=True, metavar="OTHER.toml", help="further candidate interiors (scenario files or bundled names)")
    p.add_argument("--drive-nT", "--drive-nt", dest="drive_nT", type=float, required=True, metavar="NT", help="driving-field amplitude (nT)")
    p.add_argument("--altitude-km", type=float, default=0.0, help="altitude above the sub-drive point of the period curves (km, default 0)")
    p.add_argument("--periods-h", default="0.5:1000:200", metavar="lo:hi:n", help="period grid (h), logarithmic (default 0.5:1000:200)")
    p.add_argument("--mark-periods-h", type=float, nargs="+", metavar="P", help="periods of the altitude curves (default: the scenario's driving periods)")
    p.add_argument("--altitudes-km", default=None, metavar="lo:hi:n", help="altitude grid (km), linear (default 0 to one body radius, 101 values)")
    p.add_argument("--noise-nT", "--noise-nt", dest="noise_nT", type=float, metavar="NT", help="instrument noise (nT): draws k x noise and reports the largest useful altitude")
    p.add_argument("--k", type=float, default=3.0, help="multiple of the noise that counts as detectable (default 3)")
    p.add_argument("--out", required=True, metavar="PREFIX", help="output prefix")
    return p


#: Largest number of values of --periods-h or --altitudes-km.
MAX_GRID = 10_000_000


def _range(text: str, what: str, log: bool) -> np.ndarray:
    parts = text.split(":")
    try:
        if len(parts) != 3:
            raise IndexError
        lo, hi, n = float(parts[0]), float(parts[1]), int(parts[2])
    except (ValueError, IndexError):
        raise ValueError(f"{what} must be lo:hi:n (e.g. 0.5:1000:200), got {text!r}") from None
    if n > MAX_GRID:
        raise ValueError(f"{what}: n = {n} values is more than this command handles ({MAX_GRID:g}), got {text!r}")
    if not (np.isfinite(lo) and np.isfinite(hi) and lo < hi) or n < 2 or (log and lo <= 0) or lo < 0:
        raise ValueError(f"{what} needs 0 {'<' if log else '<='} lo < hi (finite) and n >= 2, got {text!r}")
    return np.logspace(np.log10(lo), np.log10(hi), n) if log else np.linspace(lo, hi, n)


def run(args) -> int:
    from induct.cli.budget import check_job, model_seconds

    names = [args.scenario] + list(args.other)
    n_periods = _count(args.periods_h, "--periods-h")
    n_alt = 101 if args.altitudes_km is None else _count(args.altitudes_km, "--altitudes-km")
    marks = len(args.mark_periods_h) if args.mark_periods_h else 3
    values = float(len(names)) * (n_periods + marks) + float(len(names)) ** 2 * (n_periods + n_alt * marks)
    # each value: complex R_n and field arrays, CSV rows (~150 B); kernel temporaries of one model
    check_job(args, f"separation of {len(names)} interiors at {n_periods} periods and {n_alt} altitudes",
              values * 200.0 + n_periods * 80 * 16.0 * 30, seconds=model_seconds(len(names) * n_periods, 1, 10))
    scenarios = [load_scenario(name) for name in names]
    labels = [Path(name).stem for name in names]
    if len(set(labels)) != len(labels):
        labels = [f"{i + 1}: {label}" for i, label in enumerate(labels)]
    marked = args.mark_periods_h
    if marked is None and len(scenarios[0].periods_h):
        marked = scenarios[0].periods_h
    result = separation(
        [s.model for s in scenarios],
        labels,
        drive_nT=args.drive_nT,
        periods_h=_range(args.periods_h, "--periods-h", True),
        altitude_km=args.altitude_km,
        marked_periods_h=marked,
        altitudes_km=None if args.altitudes_km is None else _range(args.altitudes_km, "--altitudes-km", False),
        noise_nT=args.noise_nT,
        k=args.k,
    )
    prefix = Path(args.out)
    prefix.parent.mkdir(parents=True, exist_ok=True)
    written = plot_separation(result, prefix)
    written += write_separation_csv(result, prefix)
    cols = separation_columns(result)
    written.append(write_table_csv(prefix.with_name(prefix.name + "_summary.csv"), cols))
    print(format_separation_summary(result, cols, written))
    return 0


def _count(text: str, what: str) -> int:
    """The n of ``lo:hi:n`` (checked as in :func:`_range`, without allocating)."""
    parts = str(text).split(":")
    try:
        n = int(parts[2]) if len(parts) == 3 else -1
    except ValueError:
        n = -1
    if n < 0:
        raise ValueError(f"{what} must be lo:hi:n (e.g. 0.5:1000:200), got {text!r}")
    if n > MAX_GRID:
        raise ValueError(f"{what}: n = {n} values is more than this command handles ({MAX_GRID:g}), got {text!r}")
    return n


def separation_columns(result) -> list[Column]:
    """Summary table of :func:`induct.planning.separation.separation_summary`, one row per pair and marked period.

    Columns: pair, period (h), difference at the chosen altitude (nT), the
    period of largest difference on the grid (h) and its value (nT), and with a
    noise level the largest altitude (km) at which the pair stays above k x noise.
    """
    s = separation_summary(result)
    alt = f"{s.altitude_km:g} km"
    cols = [
        Column("pair", "", s.pair, "s"),
        Column("period", "h", list(s.period_h), ".4g"),
        Column(f"difference at {alt}", "nT", list(s.difference_nT), ".4g"),
        Column("period of largest difference", "h", list(s.best_period_h), ".4g"),
        Column(f"largest difference at {alt}", "nT", list(s.best_difference_nT), ".4g"),
    ]
    if s.threshold_nT is not None:
        cols.append(Column(f"max altitude above {s.threshold_nT:g} nT", "km", list(s.max_altitude_km), ".4g"))
    return cols


def format_separation_summary(result, cols, written=()) -> str:
    """The text ``induct separate`` prints: candidates, the summary table, the files and the model's limits."""
    lines = [f"{result.body}: candidates {', '.join(result.labels)}; drive {result.drive_nT:g} nT, field along the driving field"]
    lines.append(format_table(cols))
    lines.extend(f"wrote {path}" for path in written)
    lines.append(MODEL_LIMITS)
    return "\n".join(lines)
