"""``induct drive``: driving-field lines at a moon from a planet file or a time series.

Examples::

    induct drive scenarios/tarvos.toml
    induct drive scenarios/tarvos.toml --plot drive.png --json drive.json --write-scenario my_scenario.toml
    induct drive --series field.csv --periods-h 12.1165 6.0583 84.69

Components are in the flow frame (x along the corotation flow, y toward the
planet's spin axis, z along it); ``B(t) = amplitude cos(2 pi t / period + phase)``
with t in seconds from the epoch of the planet file or series.
"""

from __future__ import annotations

import argparse
import csv
import json
import math
import sys
from pathlib import Path

import numpy as np

from induct import __version__
from induct.constants import SECONDS_PER_HOUR
from induct.field.drive import DriveLine, planet_drive_spectrum
from induct.io.drive_files import read_planet_file, write_drive_lines
from induct.field.orbit import primary_field_series, synodic_period_s
from induct.field.spectrum import fit_harmonics, label_period

CAVEAT = (
    "Internal field of the planet only: magnetodisc (current sheet), magnetopause and solar-rotation "
    "lines are not included."
)
SERIES_HEADER = ["t_s", "bx_nT", "by_nT", "bz_nT"]


def register(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "drive",
        help="driving-field lines at a moon (planet file or primary-field time series)",
        description=__doc__.split("\n\n")[0] + " " + CAVEAT,
    )
    p.add_argument("planet_file", nargs="?", metavar="PLANET.toml", help="planet file (TOML, see induct.field.drive)")
    p.add_argument("--moon", help="moon name (needed when the planet file has several moons)")
    p.add_argument("--series", metavar="FILE.csv", help="primary-field series t_s,bx_nT,by_nT,bz_nT (flow frame)")
    p.add_argument("--periods-h", nargs="+", type=float, metavar="H", help="periods to fit to --series (h)")
    p.add_argument("--rotation-period-h", type=float, help="with --series: label lines using this rotation period")
    p.add_argument("--orbital-period-h", type=float, help="with --series: label lines using this orbital period")
    p.add_argument("--retrograde", action="store_true", help="with --series: the orbit is retrograde")
    p.add_argument("--max-harmonic", type=int, default=3, help="largest synodic multiple reported (default 3)")
    p.add_argument("--max-orbital", type=int, default=2, help="largest orbital multiple in a line (default 2)")
    p.add_argument("--min-amplitude-nT", type=float, default=0.1,
                   help="drop lines whose largest component is below this (nT, default 0.1)")
    p.add_argument("--samples", type=int, default=64, help="FFT samples per period and axis (default 64)")
    p.add_argument("--plot", metavar="FILE.png", help="write a figure of the series and its line spectrum")
    p.add_argument("--json", nargs="?", const="-", metavar="FILE",
                   help="write the result as JSON to FILE (or to standard output instead of the table)")
    p.add_argument("--write-scenario", metavar="SCENARIO.toml",
                   help="write the lines into the scenario's [[drive.lines]] tables (replacing existing ones)")
    p.add_argument("--append", action="store_true", help="with --write-scenario: keep existing lines")
    return p


def _read_series(path: str) -> tuple[np.ndarray, np.ndarray]:
    rows = []
    with open(path, newline="", encoding="utf-8") as handle:
        reader = csv.reader(row for row in handle if row.strip() and not row.lstrip().startswith("#"))
        header = next(reader, None)
        if header is None or [h.strip() for h in header] != SERIES_HEADER:
            raise ValueError(f"{path}: the first line must be the header {','.join(SERIES_HEADER)}, got {header}")
        for number, row in enumerate(reader, start=2):
            if len(row) != 4:
                raise ValueError(f"{path}: data row {number} must have 4 values, got {len(row)}")
            try:
                rows.append([float(v) for v in row])
            except ValueError:
                raise ValueError(f"{path}: data row {number} is not numeric: {row}") from None
    data = np.array(rows, dtype=float).reshape(-1, 4)
    if not np.all(np.isfinite(data)):
        raise ValueError(f"{path}: values must be finite")
    if data.shape[0] < 2 or np.any(np.diff(data[:, 0]) <= 0.0):
        raise ValueError(f"{path}: t_s must be strictly increasing with at least 2 rows")
    return data[:, 0], data[:, 1:]


def _analyse(args):
    """Return (spectrum, t_s, b_nT, description dict)."""
    if (args.planet_file is None) == (args.series is None):
        raise ValueError("give either a planet file or --series FILE.csv (not both)")
    if args.series is not None:
        if not args.periods_h:
            raise ValueError("--series needs --periods-h (the periods to fit, h)")
        t, b = _read_series(args.series)
        periods_s = np.array(args.periods_h, dtype=float) * SECONDS_PER_HOUR
        labels = None
        refs = {}
        if (args.rotation_period_h is None) != (args.orbital_period_h is None):
            raise ValueError("--rotation-period-h and --orbital-period-h go together")
        if args.rotation_period_h is not None:
            rot, orb = args.rotation_period_h * SECONDS_PER_HOUR, args.orbital_period_h * SECONDS_PER_HOUR
            syn = synodic_period_s(rot, orb, args.retrograde)
            refs = {"rotation": rot, "orbital": orb, "synodic": syn}
            labels = []
            for p in periods_s:
                if not (math.isfinite(p) and p > 0.0):
                    raise ValueError(f"--periods-h must be finite and > 0, got {p / SECONDS_PER_HOUR!r}")
                labels.append(label_period(p, syn, orb, args.max_harmonic, args.max_orbital)
                              or f"{p / SECONDS_PER_HOUR:.6g} h")
        spec = fit_harmonics(t, b, periods_s, labels)
        if refs:
            spec.reference_periods_s.update(refs)
        return spec, t, b, {"source": str(args.series), "planet": None, "moon": None}
    system = read_planet_file(args.planet_file)
    moon, orbit = system.orbit(args.moon)
    spec = planet_drive_spectrum(
        system, moon, max_harmonic=args.max_harmonic, max_orbital=args.max_orbital,
        min_amplitude_nT=args.min_amplitude_nT, samples=args.samples,
    )
    t = np.linspace(0.0, 2.0 * orbit.period_s, 2000)
    b = primary_field_series(system.planet, orbit, t)
    return spec, t, b, {"source": str(args.planet_file), "planet": system.planet.name, "moon": moon,
                        "sense": "retrograde" if orbit.retrograde else "prograde"}


def _result_dict(spec, info) -> dict:
    return {
        "induct_version": __version__,
        **info,
        "frame": "flow frame: x along the corotation flow, y toward the planet's spin axis, z along the spin axis",
        "convention": "B(t) = mean + sum_k amplitude_k cos(2 pi t / period_k + phase_k), t in s from the epoch",
        "method": spec.method,
        "reference_periods_h": {k: v / SECONDS_PER_HOUR for k, v in spec.reference_periods_s.items()},
        "mean_nT": [float(x) for x in spec.mean_nT],
        "total_variance_nT2": spec.total_variance_nT2,
        "fraction_explained": spec.fraction_explained,
        "lines": [
            {
                "label": line.label,
                "period_h": line.period_h,
                "amplitude_nT": [float(x) for x in line.amplitude_nT],
                "phase_deg": [float(x) for x in line.phase_deg],
                "variance_fraction": line.variance_fraction,
                "synodic_multiple": line.synodic_multiple,
                "orbital_multiple": line.orbital_multiple,
            }
            for line in spec.lines
        ],
        "caveat": CAVEAT,
    }


def _print_table(spec, info) -> None:
    where = f"{info['planet']} at {info['moon']}" if info["planet"] else info["source"]
    print(f"Primary-field lines: {where} ({spec.method})")
    print("Frame: x = corotation flow, y = toward the spin axis, z = spin axis; B = amplitude cos(2 pi t/period + phase)")
    refs = spec.reference_periods_s
    if refs:
        sense = f" ({info['sense']})" if info.get("sense") else ""
        print(f"Periods: rotation {refs['rotation'] / 3600:.6g} h, orbit {refs['orbital'] / 3600:.6g} h{sense}, "
              f"synodic {refs['synodic'] / 3600:.6g} h")
    print("Mean field (nT): " + ", ".join(f"B{c} = {v:.4g}" for c, v in zip("xyz", spec.mean_nT)))
    head = (f"{'line':<16} {'period_h':>10} {'|Bx|_nT':>10} {'|By|_nT':>10} {'|Bz|_nT':>10} "
            f"{'phx_deg':>8} {'phy_deg':>8} {'phz_deg':>8} {'var_frac':>9}")
    print(head)
    print("-" * len(head))
    for line in spec.lines:
        a, ph = line.amplitude_nT, line.phase_deg
        print(f"{line.label:<16} {line.period_h:>10.5f} {a[0]:>10.4f} {a[1]:>10.4f} {a[2]:>10.4f} "
              f"{ph[0]:>8.2f} {ph[1]:>8.2f} {ph[2]:>8.2f} {line.variance_fraction:>9.3e}")
    print(f"The lines explain {100.0 * spec.fraction_explained:.6g} % of the variance "
          f"(total variance {spec.total_variance_nT2:.6g} nT^2).")
    if info["planet"]:
        print(CAVEAT)


def _plot(path, spec, t, b, info) -> None:
    from matplotlib import ticker

    from induct.plot.style import COLORS, figure, plain_log_ticks, save_figure

    caption = CAVEAT if info["planet"] else "Lines fitted by least squares to the given series."
    fig, (ax_t, ax_s) = figure(2, 1, size=(8.0, 7.0), caption=caption)
    for c in range(3):
        ax_t.plot(t / SECONDS_PER_HOUR, b[:, c], color=COLORS[c], lw=1.0, label=f"B{'xyz'[c]}")
    ax_t.set_xlabel("time from epoch (h)")
    ax_t.set_ylabel("primary field (nT)")
    title = f"{info['planet']} at {info['moon']}" if info["planet"] else Path(info["source"]).name
    ax_t.set_title(f"Primary field in the flow frame: {title}")
    ax_t.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    shown = sorted((ln for ln in spec.lines if float(np.max(ln.amplitude_nT)) > 0.0), key=lambda ln: ln.period_s)
    top = max((float(np.max(ln.amplitude_nT)) for ln in shown), default=1.0)
    bottom = max(0.3 * min((float(np.min(ln.amplitude_nT[ln.amplitude_nT > 0])) for ln in shown), default=1.0),
                 1e-5 * top)
    for i, line in enumerate(shown):
        for c in range(3):
            x = line.period_h * (1.0 + 0.015 * (c - 1))
            if line.amplitude_nT[c] > 0.0:
                ax_s.plot([x, x], [bottom, line.amplitude_nT[c]], color=COLORS[c], lw=1.5)
                ax_s.plot(x, line.amplitude_nT[c], "o", color=COLORS[c], ms=4)
        ax_s.annotate(line.label, (line.period_h, float(np.max(line.amplitude_nT))), textcoords="offset points",
                      xytext=(0, 6 + 10 * (i % 2)), ha="center", fontsize=7)
    for c in range(3):
        ax_s.plot([], [], "o-", color=COLORS[c], lw=1.5, ms=4, label=f"|B{'xyz'[c]}|")
    ax_s.set_xscale("log")
    ax_s.set_yscale("log")
    ax_s.xaxis.set_major_locator(ticker.LogLocator(subs=(1.0, 2.0, 5.0)))
    plain_log_ticks(ax_s.xaxis)
    ax_s.set_xlabel("period (h)")
    ax_s.set_ylabel("line amplitude (nT)")
    ax_s.set_title("Line spectrum (flow-frame components)")
    ax_s.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    if shown:
        ax_s.set_ylim(bottom, 8.0 * top)
        periods = [ln.period_h for ln in shown]
        ax_s.set_xlim(0.7 * min(periods), 1.4 * max(periods))
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    save_figure(fig, path)  # PNG and vector PDF


def run(args) -> int:
    if args.append and not args.write_scenario:
        raise ValueError("--append needs --write-scenario")
    spec, t, b, info = _analyse(args)
    result = _result_dict(spec, info)
    if args.json == "-":
        json.dump(result, sys.stdout, indent=2)
        print()
    else:
        _print_table(spec, info)
        if args.json:
            Path(args.json).write_text(json.dumps(result, indent=2) + "\n", encoding="utf-8")
            print(f"JSON written to {args.json}")
    if args.plot:
        _plot(args.plot, spec, t, b, info)
        if args.json != "-":
            print(f"Figure written to {args.plot}")
    if args.write_scenario:
        lines = [DriveLine.from_spectral_line(line) for line in spec.lines]
        comment = f"written by induct {__version__} drive from {info['source']}"
        if info["moon"]:
            comment += f" (moon {info['moon']})"
        write_drive_lines(args.write_scenario, lines, append=args.append, comment=comment)
        if args.json != "-":
            print(f"{len(lines)} driving lines written to {args.write_scenario}")
    return 0
