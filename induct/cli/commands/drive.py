"""``induct drive``: driving-field lines at a moon from a planet file or a time series.

Examples::

    induct drive scenarios/tarvos.toml
    induct drive scenarios/tarvos.toml --plot drive.png --json drive.json --write-scenario my_scenario.toml
    induct drive scenarios/tarvos.toml --no-current-sheet      # the internal field alone
    induct drive --series field.csv --periods-h 12.1165 6.0583 84.69

Components are in the flow frame (x along the corotation flow, y toward the
planet's spin axis, z along it); ``B(t) = amplitude cos(2 pi t / period + phase)``
with t in seconds from the epoch of the planet file or series. When the planet
file has a ``[current_sheet]``, its field is added to the internal field and a
second table gives each line's amplitude from the internal field alone, with
the sheet, and the sheet's share.
The epoch's UTC (``[planet] epoch_utc`` of the planet file, or --epoch-utc) is
printed and written with --write-scenario as ``[drive] epoch_utc``.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

import numpy as np

from induct import __version__
from induct.constants import SECONDS_PER_HOUR
from induct.field.analysis import WITH_CURRENT_SHEET, planet_drive_analysis, series_drive_analysis
from induct.field.drive import DriveLine
from induct.io.drive_files import read_planet_file, write_drive_lines

def register(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "drive",
        help="driving-field lines at a moon (planet file or primary-field time series)",
        description=__doc__.split("\n\n")[0] + " With a [current_sheet] in the planet file: " + WITH_CURRENT_SHEET,
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
    p.add_argument("--no-current-sheet", action="store_true",
                   help="ignore the planet file's [current_sheet]: lines of the internal field alone")
    p.add_argument("--plot", metavar="FILE.png", help="write a figure of the series and its line spectrum")
    p.add_argument("--json", nargs="?", const="-", metavar="FILE",
                   help="write the result as JSON to FILE (or to standard output instead of the table)")
    p.add_argument("--write-scenario", metavar="SCENARIO.toml",
                   help="write the lines into the scenario's [[drive.lines]] tables (replacing existing ones)")
    p.add_argument("--append", action="store_true", help="with --write-scenario: keep existing lines")
    p.add_argument("--epoch-utc", metavar="YYYY-MM-DDTHH:MM:SS",
                   help="UTC of t = 0 of the planet file or series (when the planet file has no [planet] epoch_utc; "
                   "must agree with it otherwise); written to the scenario as [drive] epoch_utc")
    return p


def analyse(args):
    """The :class:`~induct.field.analysis.DriveAnalysis` the options ask for (planet file or fitted series)."""
    from induct.io.tracks import read_field_series

    if (args.planet_file is None) == (args.series is None):
        raise ValueError("give either a planet file or --series FILE.csv (not both)")
    if args.series is not None:
        if not args.periods_h:
            raise ValueError("--series needs --periods-h (the periods to fit, h)")
        if (args.rotation_period_h is None) != (args.orbital_period_h is None):
            raise ValueError("--rotation-period-h and --orbital-period-h go together")
        bad = [p for p in args.periods_h if not (p > 0.0 and p < float("inf"))]
        if bad and args.rotation_period_h is not None:
            raise ValueError(f"--periods-h must be finite and > 0, got {bad[0]!r}")
        t, b = read_field_series(args.series)
        return series_drive_analysis(
            t, b, args.periods_h, rotation_period_h=args.rotation_period_h, orbital_period_h=args.orbital_period_h,
            retrograde=args.retrograde, max_harmonic=args.max_harmonic, max_orbital=args.max_orbital,
            source=str(args.series),
        )
    system = read_planet_file(args.planet_file)
    if args.no_current_sheet:
        system = system.without_current_sheet()
    return planet_drive_analysis(
        system, args.moon, max_harmonic=args.max_harmonic, max_orbital=args.max_orbital,
        min_amplitude_nT=args.min_amplitude_nT, samples=args.samples,
    )


def result_dict(analysis) -> dict:
    """The JSON form of a :class:`~induct.field.analysis.DriveAnalysis` (``--json``)."""
    spec = analysis.spectrum
    return {
        "induct_version": __version__,
        **analysis.info,
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
        **({"current_sheet": _sheet_dict(analysis)} if analysis.current_sheet is not None else {}),
        "caveat": analysis.caveat,
    }


def _components(b) -> dict:
    return {"amplitude_nT": [float(x) for x in abs(b)], "phase_deg": [float(x) for x in np.degrees(np.angle(b))]}


def _sheet_dict(analysis) -> dict:
    """JSON form of the current sheet and of each line with and without it."""
    sheet = analysis.current_sheet
    return {
        "model": "axisymmetric washer of azimuthal current I0/rho (Connerney, Acuna & Ness 1981), axis along the dipole",
        "inner_radius": sheet.inner_radius,
        "outer_radius": sheet.outer_radius if math.isfinite(sheet.outer_radius) else "inf",
        "half_thickness": sheet.half_thickness,
        "current_constant_nT": sheet.current_constant_nT,
        "axis_tilt_deg": sheet.tilt_deg,
        "axis_tilt_longitude_deg": sheet.tilt_longitude_deg,
        "moon_height_range": list(analysis.sheet_height),
        "share_definition": "sheet_share = |B_sheet| / |B_with_sheet|, vector amplitudes sqrt(sum_c |B_c|^2); "
                            "B_sheet = B_with_sheet - B_internal (complex, per component)",
        "lines": [
            {
                "label": ln.label,
                "period_h": ln.period_h,
                "internal": _components(ln.b_internal_nT),
                "with_sheet": _components(ln.b_total_nT),
                "sheet": _components(ln.b_sheet_nT),
                "internal_vector_amplitude_nT": ln.internal_nT,
                "with_sheet_vector_amplitude_nT": ln.total_nT,
                "sheet_vector_amplitude_nT": ln.sheet_nT,
                "sheet_share": ln.sheet_share,
            }
            for ln in analysis.sheet_lines
        ],
    }


def format_sheet_table(analysis) -> str:
    """Each line from the internal field alone and with the current sheet (empty without a sheet)."""
    sheet = analysis.current_sheet
    if sheet is None:
        return ""
    outer = f"{sheet.outer_radius:g}" if math.isfinite(sheet.outer_radius) else "inf"
    out = [f"Current sheet: inner radius {sheet.inner_radius:g}, outer radius {outer}, half-thickness "
           f"{sheet.half_thickness:g} (planet radii), current constant {sheet.current_constant_nT:g} nT, axis tilted "
           f"{sheet.tilt_deg:.4g} deg toward {sheet.tilt_longitude_deg % 360.0:.4g} deg E."]
    if analysis.sheet_note:
        out.append(analysis.sheet_note)
    out.append("Lines with and without the sheet (vector amplitude |B| = sqrt(|Bx|^2 + |By|^2 + |Bz|^2); "
               "B_sheet = B_with - B_internal; share = |B_sheet| / |B_with|):")
    head = (f"{'line':<16} {'period_h':>10} {'|B|int_nT':>10} {'|B|with_nT':>10} {'|B|sheet_nT':>11} "
            f"{'share':>7} {'|By|int_nT':>10} {'|By|with_nT':>11}")
    out += [head, "-" * len(head)]
    for ln in analysis.sheet_lines:
        out.append(f"{ln.label:<16} {ln.period_h:>10.5f} {ln.internal_nT:>10.4f} {ln.total_nT:>10.4f} "
                   f"{ln.sheet_nT:>11.4f} {ln.sheet_share:>7.3f} {abs(ln.b_internal_nT[1]):>10.4f} "
                   f"{abs(ln.b_total_nT[1]):>11.4f}")
    return "\n".join(out)


def format_drive_table(analysis) -> str:
    """The table ``induct drive`` prints: reference periods, mean field, one row per line, explained variance."""
    spec, info = analysis.spectrum, analysis.info
    where = f"{info['planet']} at {info['moon']}" if info["planet"] else info["source"]
    out = [f"Primary-field lines: {where} ({spec.method})"]
    out.append("Frame: x = corotation flow, y = toward the spin axis, z = spin axis; B = amplitude cos(2 pi t/period + phase)")
    refs = spec.reference_periods_s
    if refs:
        sense = f" ({info['sense']})" if info.get("sense") else ""
        out.append(f"Periods: rotation {refs['rotation'] / 3600:.6g} h, orbit {refs['orbital'] / 3600:.6g} h{sense}, "
                   f"synodic {refs['synodic'] / 3600:.6g} h")
    epoch = info.get("epoch_utc")
    out.append(f"Epoch (t = 0): {epoch} UTC" if epoch else "Epoch (t = 0): not given (no [planet] epoch_utc or --epoch-utc)")
    out.append("Mean field (nT): " + ", ".join(f"B{c} = {v:.4g}" for c, v in zip("xyz", spec.mean_nT)))
    head = (f"{'line':<16} {'period_h':>10} {'|Bx|_nT':>10} {'|By|_nT':>10} {'|Bz|_nT':>10} "
            f"{'phx_deg':>8} {'phy_deg':>8} {'phz_deg':>8} {'var_frac':>9}")
    out.append(head)
    out.append("-" * len(head))
    for line in spec.lines:
        a, ph = line.amplitude_nT, line.phase_deg
        out.append(f"{line.label:<16} {line.period_h:>10.5f} {a[0]:>10.4f} {a[1]:>10.4f} {a[2]:>10.4f} "
                   f"{ph[0]:>8.2f} {ph[1]:>8.2f} {ph[2]:>8.2f} {line.variance_fraction:>9.3e}")
    out.append(f"The lines explain {100.0 * spec.fraction_explained:.6g} % of the variance "
               f"(total variance {spec.total_variance_nT2:.6g} nT^2).")
    if analysis.current_sheet is not None:
        out.append(format_sheet_table(analysis))
    if info["planet"]:
        out.append(analysis.caveat)
    return "\n".join(out)


def run(args) -> int:
    from induct.io.files import write_text
    from induct.plot.drive import plot_drive

    from induct.io.timescales import check_epoch_utc

    if args.append and not args.write_scenario:
        raise ValueError("--append needs --write-scenario")
    from induct.cli.budget import check_job, csv_rows_estimate

    if not 4 <= args.samples <= 1_000_000:
        raise ValueError(f"--samples must be between 4 and 1000000, got {args.samples}")
    for name in ("max_harmonic", "max_orbital"):
        if not 0 <= getattr(args, name) <= 1000:
            raise ValueError(f"--{name.replace('_', '-')} must be between 0 and 1000, got {getattr(args, name)}")
    if args.periods_h and len(args.periods_h) > 10_000:
        raise ValueError(f"--periods-h: at most 10000 periods, got {len(args.periods_h)}")
    rows, size = csv_rows_estimate(args.series) if args.series else (0.0, 0.0)
    fit_cols = 2 * len(args.periods_h or []) + 1
    # series text, parsed values, and the least-squares design matrix (rows x fit columns)
    check_job(args, f"driving-field analysis of about {rows:.3g} series rows", 2 * size + rows * (300.0 + 8 * 3 * fit_cols)
              + 8.0 * args.samples * 3 * 200)
    epoch = check_epoch_utc(args.epoch_utc, "--epoch-utc") if args.epoch_utc is not None else None
    analysis = analyse(args)
    if epoch is not None:
        if analysis.epoch_utc is not None and analysis.epoch_utc != epoch:
            raise ValueError(
                f"--epoch-utc {epoch} differs from [planet] epoch_utc = {analysis.epoch_utc} of {analysis.source}; "
                "the lines' phases refer to the file's epoch"
            )
        analysis.epoch_utc = epoch
    result = result_dict(analysis)
    if args.json == "-":
        json.dump(result, sys.stdout, indent=2)
        print()
    else:
        print(format_drive_table(analysis))
        if args.json:
            write_text(args.json, json.dumps(result, indent=2) + "\n")
            print(f"JSON written to {args.json}")
    if args.plot:
        plot_drive(analysis, args.plot)  # PNG and vector PDF
        if args.json != "-":
            print(f"Figure written to {args.plot}")
    if args.write_scenario:
        lines = [DriveLine.from_spectral_line(line) for line in analysis.spectrum.lines]
        comment = f"written by induct {__version__} drive from {analysis.source}"
        if analysis.moon:
            comment += f" (moon {analysis.moon})"
        write_drive_lines(args.write_scenario, lines, append=args.append, comment=comment,
                          epoch_utc=analysis.epoch_utc)
        if args.json != "-":
            print(f"{len(lines)} driving lines written to {args.write_scenario}")
    return 0
