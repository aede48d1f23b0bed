"""``induct map SCENARIO --x SPEC --y SPEC ...``: a feasibility map over two interior parameters."""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np

from induct.planning.maps import DEFAULT_TASK_SIZE, QUANTITIES, feasibility_map, parse_axis_spec
from induct.cli.commands._cluster import add_cluster_options, backend_for
from induct.cli.commands._truth import add_truth_option, truth_from_args
from induct.io.measurements import load_measurements
from induct.constants import MODEL_LIMITS
from induct.io.scenario import load_scenario

SPEC_HELP = "LAYER.FIELD=lo:hi:n[:log], FIELD thickness_km, conductivity_S_per_m, or salinity_g_per_kg / temperature_C of a chemistry-defined ocean (e.g. 'ice shell.thickness_km=5:60:200', 'ocean.salinity_g_per_kg=1:150:100')"


def register(subparsers):
    p = subparsers.add_parser(
        "map",
        help="feasibility map: amplitude, phase arg R or induced field over a grid of two interior parameters",
        description=(
            "Vary two interior parameters of a scenario over a grid and map one quantity at one driving period. "
            "Writes PREFIX.png and PREFIX.pdf (filled contours), PREFIX.nc (CF-style NetCDF) and PREFIX.csv "
            "(one row per cell). The nT quantities are the induced field (or its difference from a reference "
            "interior) along the driving field (above the sub-drive point, on the equator for an equatorial drive) "
            "of a uniform driving field."
        ),
        epilog=MODEL_LIMITS,
    )
    p.add_argument("scenario", help="scenario TOML file, or the name of a bundled scenario (e.g. ilmare)")
    p.add_argument("--x", required=True, metavar="SPEC", help=f"horizontal axis: {SPEC_HELP}")
    p.add_argument("--y", required=True, metavar="SPEC", help="vertical axis, same form as --x")
    p.add_argument("--period-h", type=float, metavar="P", help="driving period (h); default: the scenario's first period")
    p.add_argument("--quantity", default="amplitude", choices=list(QUANTITIES), help="mapped quantity (default amplitude)")
    p.add_argument("--altitude-km", type=float, default=0.0, help="altitude above the sub-drive point (along the driving field) for the nT quantities (km, default 0)")
    p.add_argument("--drive-nT", "--drive-nt", dest="drive_nT", type=float, metavar="NT", help="driving-field amplitude (nT), needed by the nT quantities")
    p.add_argument("--reference", metavar="OTHER.toml", help="reference interior (scenario file or bundled name) for difference_nT")
    p.add_argument("--data", metavar="MEASUREMENTS.toml", help="measured responses ([[response]] tables, or a bundled name such as ilmare_measured): overlay the 1 and 2 sigma regions")
    p.add_argument(
        "--region", choices=["confidence", "goodness"], default="confidence",
        help="with --data: 'confidence' = joint region of the two mapped parameters (chi2 - min <= 2.30, 6.18), "
        "'goodness' = cells whose chi2 passes a goodness-of-fit test on its own (default confidence)",
    )
    p.add_argument("--noise-nT", "--noise-nt", dest="noise_nT", type=float, metavar="NT", help="noise level (nT): draw the detectability contour k x noise (nT quantities)")
    p.add_argument("--k", type=float, default=3.0, help="multiple of the noise that counts as detectable (default 3)")
    p.add_argument("--degree", type=int, default=1, help="degree n of the driving field (default 1; the nT quantities and --data need 1)")
    p.add_argument("--out", required=True, metavar="PREFIX", help="output prefix: writes PREFIX.png, .pdf, .nc, .csv")
    p.add_argument("--no-netcdf", action="store_true", help="do not write PREFIX.nc (no xarray/h5netcdf needed)")
    p.add_argument("--progress", action="store_true", help=argparse.SUPPRESS)  # the default now; --quiet hides it
    add_truth_option(p)
    add_cluster_options(p, DEFAULT_TASK_SIZE)
    return p


def run(args) -> int:
    if not args.no_netcdf:
        from induct.io.map_files import require_netcdf

        try:
            require_netcdf()
        except ImportError as exc:
            raise ValueError(f"{exc}; or pass --no-netcdf") from None
    scenario = load_scenario(args.scenario)
    _check_size(args, scenario)
    period = args.period_h
    if period is None:
        if not len(scenario.periods_h):
            raise ValueError("no period: give --period-h or [drive] periods_h in the scenario")
        period = float(scenario.periods_h[0])
    reference = label = None
    if args.reference:
        ref_scenario = load_scenario(args.reference)
        reference, label = ref_scenario.model, Path(args.reference).stem
    measurements = load_measurements(args.data) if args.data else None
    axes = [parse_axis_spec(spec, scenario.model, flag).parameter for spec, flag in ((args.x, "--x"), (args.y, "--y"))]
    truth = truth_from_args(args, scenario.model, axes, require_all=True)
    with backend_for(args) as backend:
        result = _compute(args, scenario, period, reference, label, measurements, backend)
    return _write(args, scenario, result, truth)


#: Bytes held per map cell: the value, chi-square and region arrays, their CSV text and the NetCDF copy.
BYTES_PER_CELL = 800.0


def _check_size(args, scenario):
    """Refuse a map larger than the memory limit, before any grid is allocated; say the time of long maps."""
    from induct.cli.budget import check_job, model_seconds

    x = parse_axis_spec(args.x, scenario.model, "--x")
    y = parse_axis_spec(args.y, scenario.model, "--y")
    cells = float(x.n) * float(y.n)
    chunk = min(float(args.task_size), cells) * (len(scenario.model.layers) + 64) * 16.0 * 30
    check_job(args, f"map of {x.n} x {y.n} = {cells:.3g} cells", cells * BYTES_PER_CELL + chunk,
              seconds=model_seconds(cells, 1, len(scenario.model.layers)))


def _compute(args, scenario, period, reference, label, measurements, backend):
    return feasibility_map(
        scenario.model,
        parse_axis_spec(args.x, scenario.model, "--x"),
        parse_axis_spec(args.y, scenario.model, "--y"),
        period,
        args.quantity,
        degree=args.degree,
        altitude_km=args.altitude_km,
        drive_nT=args.drive_nT,
        reference=reference,
        reference_label=label,
        measurements=measurements,
        region=args.region,
        noise_nT=args.noise_nT,
        k=args.k,
        progress=not args.quiet,
        backend=backend,
        chunk_size=args.task_size,
    )


def _write(args, scenario, result, truth=None) -> int:
    from induct.io.map_files import write_map_files
    from induct.plot.maps import plot_map

    prefix = Path(args.out)
    prefix.parent.mkdir(parents=True, exist_ok=True)
    written = plot_map(result, prefix, truth=truth)
    written += write_map_files(result, prefix, netcdf=not args.no_netcdf)
    print(format_map_summary(scenario.name, result, written))
    return 0


def format_map_summary(name: str, result, written=()) -> str:
    """The text ``induct map`` prints: the range of the quantity, the regions, the files and the model's limits."""
    lines = [f"{name}: {result.describe()}"]
    lines.append(f"  x: {result.x}   y: {result.y}   ({result.values.size} cells)")
    finite = result.values[np.isfinite(result.values)]
    if finite.size:
        lines.append(f"  {result.label}: {finite.min():.4g} to {finite.max():.4g}")
    if result.chi_square is not None:
        lines.append(f"  best chi-square on the map: {np.nanmin(result.chi_square):.4g} for {result.n_data} measured values")
        for nsig, level in result.chi_square_levels.items():
            share = np.mean(result.chi_square <= level)
            lines.append(f"  inside the {nsig} sigma {result.region} region: {100 * share:.1f} % of the cells")
    if result.detection_threshold_nT is not None:
        share = np.mean(finite > result.detection_threshold_nT) if finite.size else 0.0
        lines.append(f"  above {result.detection_threshold_nT:g} nT (k x noise): {100 * share:.1f} % of the cells")
    lines.extend(f"wrote {path}" for path in written)
    lines.append(MODEL_LIMITS)
    return "\n".join(lines)
