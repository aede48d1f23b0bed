"""``induct flyby``: the induced field of a scenario's interior along a flyby trajectory.

Examples::

    induct flyby ilmare --trajectory ilmare_flyby --out field.csv --plot field.png
    induct flyby ilmare --trajectory track.csv --out field.csv --compare other.toml --noise-nT 0.5
    induct flyby ilmare --trajectory ilmare_flyby --out field.csv --planet scenarios/tarvos.toml
    induct flyby ilmare --trajectory ilmare_flyby --out field.csv --noise-nT 0.5 --residuals synthetic.csv
    induct flyby my_moon.toml --spice k.tls k.tpc k.bsp --spacecraft PROBE --moon ILMARE --planet TARVOS \
        --start 2031-03-10T11:00:00 --stop 2031-03-10T13:00:00 --step-s 10 --out field.cdf

The driving field is the scenario's ``[[drive.lines]]`` (uniform at the moon,
flow frame); the induced field is the degree-1 response of the scenario's
interior, plus degree 2 from the gradient of the planet's field with --planet.
With --spice the track comes from SPICE kernels (the scenario needs [drive]
epoch_utc); then --moon and --planet name the SPICE bodies and the planet file
for degree 2 is given as --planet-file. An output ending in .cdf is written as
CDF with ISTP attributes (needs cdflib).
"""

from __future__ import annotations

import argparse
import json
import sys

import numpy as np

from induct.cli.commands._tracks import add_track_options, require, spice_requested, time_constants, track_from_args
from induct.flyby.prediction import FLYBY_LIMITS


def register(subparsers) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "flyby",
        help="induced (and primary, total) field along a flyby trajectory; compare two interiors",
        description=__doc__.split("\n\n")[0] + " " + FLYBY_LIMITS,
    )
    p.add_argument("scenario", help="scenario TOML file with [[drive.lines]], or a bundled scenario (e.g. ilmare)")
    p.add_argument("--trajectory", metavar="TRACK.csv",
                   help="trajectory t_s,x_km,y_km,z_km (moon-centred; time also as utc or tdb_s), or a bundled track "
                   "(e.g. ilmare_flyby); or use --spice")
    p.add_argument("--out", required=True, metavar="FIELD.csv",
                   help="output file of the fields along the track: CSV, or CDF (ISTP) when it ends in .cdf")
    p.add_argument("--frame", metavar="FRAME",
                   help="frame of the track: flow (default) or body (see induct.io.tracks)")
    p.add_argument("--noise-nt", "--noise-nT", dest="noise_nt", type=float, metavar="N",
                   help="magnetometer noise (nT, 1 sigma per component) for the SNR of --compare and for --residuals")
    p.add_argument("--compare", metavar="OTHER.toml",
                   help="second interior (scenario file or bundled name); its induced field under the same driving "
                   "lines is subtracted")
    p.add_argument("--planet", metavar="PLANET.toml",
                   help="add the degree-2 field from the gradient of this planet's internal field across the moon "
                   "(with --spice: the SPICE planet ID; give the planet file as --planet-file)")
    p.add_argument("--planet-file", metavar="PLANET.toml", help="the planet file of --planet (any mode)")
    p.add_argument("--moon", help="with --planet: moon name (when the planet file has several moons); with --spice: "
                   "the SPICE moon ID or name")
    p.add_argument("--residuals", metavar="FILE.csv",
                   help="also write synthetic residuals t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT = induced field + "
                   "Gaussian noise of --noise-nT (input for induct fit)")
    p.add_argument("--seed", type=int, default=0, help="random seed of --residuals (default 0)")
    p.add_argument("--plot", metavar="FIG.png", help="figure of the field components and magnitude vs time, and altitude")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    add_track_options(p)
    return p


#: Tracks estimated above this many rows (and no --plot) are streamed in pieces of CHUNK_ROWS rows.
STREAM_ROWS = 200_000
CHUNK_ROWS = 50_000


def _inputs(args):
    """The scenario, comparison scenario and planet the options name (checked)."""
    from induct.io.drive_files import read_planet_file
    from induct.io.scenario import load_scenario

    scenario = load_scenario(args.scenario)
    if not scenario.drive_lines:
        raise ValueError(
            f"{scenario.path or scenario.name}: no [[drive.lines]]; write them with "
            "`induct drive PLANET.toml --write-scenario SCENARIO.toml`"
        )
    if args.planet and args.planet_file:
        raise ValueError("give the planet file once: --planet or --planet-file")
    planet_path = args.planet_file or args.planet
    if args.moon and not planet_path:
        raise ValueError("--moon needs --planet")
    planet = read_planet_file(planet_path) if planet_path else None
    compare = load_scenario(args.compare) if args.compare else None
    return scenario, compare, planet


def _run_streamed(args) -> int:
    """``induct flyby`` on a long track: read, predict and write piece by piece (bounded memory)."""
    from induct.flyby.prediction import predict_flyby
    from induct.io.flyby_files import write_flyby_stream
    from induct.io.tracks import iter_track_chunks

    scenario, compare, planet = _inputs(args)
    pieces = (
        predict_flyby(scenario, track, compare=compare, planet=planet, moon=args.moon, noise_nT=args.noise_nt)
        for track in iter_track_chunks(args.trajectory, frame=args.frame, chunk_rows=CHUNK_ROWS,
                                       epoch_utc=scenario.epoch_utc, constants=time_constants(args)[0],
                                       epoch_from=str(scenario.path or scenario.name))
    )
    residuals = (args.residuals, args.noise_nt, args.seed) if args.residuals else None
    summary = write_flyby_stream(args.out, pieces, compare_label=args.compare, residuals=residuals)
    result = summary.to_dict(output=args.out)
    if args.json:
        json.dump(result, sys.stdout, indent=2)
        print()
        return 0
    print(format_flyby_summary(result, args.out, args.residuals, None))
    return 0


def predict(args):
    """Read the inputs the options name and run :func:`induct.flyby.prediction.predict_flyby`."""
    from induct.io.drive_files import read_planet_file
    from induct.flyby.prediction import predict_flyby
    from induct.io.scenario import load_scenario

    scenario = load_scenario(args.scenario)
    if not scenario.drive_lines:
        raise ValueError(
            f"{scenario.path or scenario.name}: no [[drive.lines]]; write them with "
            "`induct drive PLANET.toml --write-scenario SCENARIO.toml`"
        )
    if spice_requested(args):
        # --moon/--planet name the SPICE bodies unless --spice-moon/--spice-planet do; then --moon may name the
        # moon in the planet file.
        planet_moon = args.moon if args.spice_moon is not None else None
        args.spice_moon = args.spice_moon or args.moon
        args.spice_planet = args.spice_planet or args.planet
        planet_path = args.planet_file
    else:
        if args.planet and args.planet_file:
            raise ValueError("give the planet file once: --planet or --planet-file")
        planet_path, planet_moon = args.planet_file or args.planet, args.moon
        if planet_moon and not planet_path:
            raise ValueError("--moon needs --planet")
    track, notes = track_from_args(args, scenario, frame=args.frame)
    planet = read_planet_file(planet_path) if planet_path else None
    if planet is not None and spice_requested(args) and planet_moon is None and len(planet.moons) > 1:
        name = str(args.spice_moon).strip().lower()
        planet_moon = next((m for m in planet.moons if m.lower() == name), None)
        if planet_moon is None:
            raise ValueError(f"{planet_path}: no moon named {args.spice_moon!r} (the file has "
                             f"{', '.join(planet.moons)}); use --spice-moon ID with --moon NAME")
    compare = load_scenario(args.compare) if args.compare else None
    prediction = predict_flyby(scenario, track, compare=compare, planet=planet, moon=planet_moon,
                               noise_nT=args.noise_nt)
    return prediction, scenario, notes


def format_flyby_summary(summary: dict, out, residuals=None, plot=None) -> str:
    """The text ``induct flyby`` prints for a summary (:meth:`FlybyPrediction.to_dict`) and the files written."""
    ca = summary["closest_approach"]
    lines = [f"{summary['scenario']}: induced field along {summary['trajectory']} ({summary['points']} points, "
             f"{summary['frame']} frame)"]
    lines.append(f"closest approach {ca['altitude_km']:.4g} km altitude at t = {ca['t_s']:.6g} s")
    lines.append("driving lines and responses R_1 of the interior:")
    for ln in summary["lines"]:
        lines.append(f"  {ln['label'] or '-':<14} {ln['period_h']:>10.5f} h   A = {ln['amplitude']:.4f}, "
                     f"phase arg R {ln['phase_lag_deg']:.2f} deg")
    lines.append(f"degree 2: {summary['degree2']}")
    lines.append(f"peak induced field {summary['peak_induced_nT']:.4g} nT at t = {summary['peak_induced_t_s']:.6g} s")
    if "compare" in summary:
        c = summary["compare"]
        text = f"difference from {c['other']}: peak {c['peak_difference_nT']:.4g} nT at t = {c['peak_difference_t_s']:.6g} s"
        if "peak_snr" in c:
            text += f"; peak SNR {c['peak_snr']:.3g}, track SNR {c['track_snr']:.3g} (noise {c['noise_nT']:g} nT)"
        lines.append(text)
    for note in summary["notes"]:
        lines.append(f"note: {note}")
    lines.append(f"fields written to {out}" + (f", synthetic residuals to {residuals}" if residuals else ""))
    if residuals and summary["frame"] != "flow":
        lines.append(f"note: the residuals are in the {summary['frame']} frame: give --frame {summary['frame']} to induct fit")
    if plot:
        lines.append(f"figure written to {plot}")
    lines.append(summary["limits"])
    return "\n".join(lines)


def run(args) -> int:
    from induct.flyby.prediction import synthetic_residuals
    from induct.io.flyby_files import write_flyby_cdf, write_flyby_fields, write_synthetic_residuals
    from induct.plot.flyby import plot_flyby

    if args.noise_nt is not None and not (np.isfinite(args.noise_nt) and args.noise_nt > 0):
        raise ValueError(f"--noise-nT must be > 0 nT, got {args.noise_nt!r}")
    to_cdf = str(args.out).lower().endswith(".cdf")
    if to_cdf:
        require("cdflib", "--out FILE.cdf")
    if args.residuals and not args.noise_nt:
        raise ValueError("--residuals needs --noise-nT N (> 0), the noise added to the induced field")
    if args.trajectory and not spice_requested(args):
        from induct.cli.budget import check_job, csv_rows_estimate

        rows, size = csv_rows_estimate(args.trajectory)
        per_row = 700.0 * (2 if args.compare else 1) + (200.0 if args.residuals else 0.0)
        if rows > STREAM_ROWS and not args.plot and not to_cdf:
            # long track: read, compute and write in pieces; memory is that of one piece
            check_job(args, f"flyby along about {rows:.3g} track rows (streamed in pieces of {CHUNK_ROWS})",
                      CHUNK_ROWS * (per_row + 200.0), seconds=rows / 2e5)
            return _run_streamed(args)
        # the file's text (2 bytes per byte as str) and, per row: parsed values, fields, CSV output text
        check_job(args, f"flyby along about {rows:.3g} track rows" + (" (held at once)" if args.plot or to_cdf else ""),
                  2 * size + rows * per_row, seconds=rows / 2e5)
    prediction, scenario, notes = predict(args)
    summary = prediction.to_dict(output=args.out)
    summary["epoch_utc"] = scenario.epoch_utc
    summary["notes"] = list(summary.get("notes", [])) + notes
    if to_cdf:
        if scenario.epoch_utc is None:
            raise ValueError(f"{scenario.path or scenario.name}: --out {args.out}: a CDF file needs absolute times; "
                             "give the scenario a [drive] epoch_utc")
        constants, _ = time_constants(args)
        write_flyby_cdf(args.out, prediction, scenario.epoch_utc, text=notes, constants=constants)
    else:
        write_flyby_fields(args.out, prediction, compare_label=args.compare, extra_comments=notes)
    if args.residuals:
        if not args.noise_nt:
            raise ValueError("--residuals needs --noise-nT N (> 0), the noise added to the induced field")
        residuals = synthetic_residuals(prediction, args.noise_nt, args.seed)
        write_synthetic_residuals(args.residuals, prediction, residuals, args.noise_nt, args.seed)
    if args.plot:
        plot_flyby(prediction, args.plot)  # PNG and vector PDF
        summary["figure"] = args.plot
    if args.json:
        json.dump(summary, sys.stdout, indent=2)
        print()
        return 0
    print(format_flyby_summary(summary, args.out, args.residuals, args.plot))
    return 0
