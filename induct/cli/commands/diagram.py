"""``induct diagram SCENARIO``: amplitude-phase diagrams for families of interiors, with measurements."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from induct.constants import MODEL_LIMITS
from induct.io.measurements import load_measurements
from induct.io.scenario import load_scenario
from induct.io.tables import write_diagram_csv
from induct.model.response import phase_lag_deg
from induct.planning.diagrams import amplitude_phase_diagram, default_families, measured_periods_h
from induct.planning.maps import parse_axis_spec
from induct.plot.diagrams import plot_diagram


def register(subparsers):
    p = subparsers.add_parser(
        "diagram",
        help="amplitude-phase diagram: curves of constant ice thickness and ocean conductivity, with measurements",
        description=(
            "For each period, draw where interiors fall in the (phase arg R, amplitude) plane: curves of constant "
            "first parameter (default the top layer's thickness) and of constant second parameter (default the "
            "ocean's conductivity), the scenario's own model, and measured responses with 1 and 2 sigma error "
            "ellipses. Writes PREFIX.png, PREFIX.pdf and PREFIX.csv (every curve point)."
        ),
        epilog=MODEL_LIMITS,
    )
    p.add_argument("scenario", help="scenario TOML file, or the name of a bundled scenario (e.g. ilmare)")
    p.add_argument(
        "--period-h", type=float, nargs="+", metavar="P",
        help="periods (h), one panel each; default the periods of --data, else the scenario's",
    )
    p.add_argument("--first", metavar="SPEC", help="first family, LAYER.FIELD=lo:hi:n[:log] (n curves)")
    p.add_argument("--second", metavar="SPEC", help="second family, same form")
    p.add_argument("--ice-km", metavar="lo:hi:n[:log]", help="shortcut for --first: the top layer's thickness (km)")
    p.add_argument("--conductivity", metavar="lo:hi:n[:log]", help="shortcut for --second: the ocean's conductivity (S/m)")
    p.add_argument("--data", metavar="MEASUREMENTS.toml", help="measured responses ([[response]] tables) to overlay")
    p.add_argument("--degree", type=int, default=1, help="degree n of the driving field (default 1)")
    p.add_argument("--samples", type=int, default=150, help="points along each curve (default 150)")
    p.add_argument("--out", required=True, metavar="PREFIX", help="output prefix: writes PREFIX.png, .pdf, .csv")
    return p


def _families(args, model):
    if args.first and args.ice_km:
        raise ValueError("give either --first or --ice-km, not both")
    if args.second and args.conductivity:
        raise ValueError("give either --second or --conductivity, not both")
    first = second = None
    if args.first:
        first = parse_axis_spec(args.first, model, "--first")
    if args.second:
        second = parse_axis_spec(args.second, model, "--second")
    if first is None or second is None:
        d1, d2 = default_families(model)
        if first is None:
            first = parse_axis_spec(f"{d1.parameter}={args.ice_km}", model, "--ice-km") if args.ice_km else d1
        if second is None:
            second = parse_axis_spec(f"{d2.parameter}={args.conductivity}", model, "--conductivity") if args.conductivity else d2
    return first, second


def run(args) -> int:
    scenario = load_scenario(args.scenario)
    model = scenario.model
    measurements = load_measurements(args.data) if args.data else None
    if args.period_h:
        periods = np.asarray(args.period_h, dtype=float)
    elif measurements is not None:
        periods = measured_periods_h(measurements, args.degree)
    else:
        periods = scenario.periods_h
    if periods is None or len(periods) == 0:
        raise ValueError("no periods: give --period-h, --data or [drive] periods_h in the scenario")
    first, second = _families(args, model)
    from induct.cli.budget import check_job, model_seconds

    if not 2 <= args.samples:
        raise ValueError(f"--samples must be >= 2, got {args.samples}")
    points = float(args.samples) * (first.n + second.n) * len(periods)
    layers = len(model.layers) + 64
    # each curve point: R_n (complex), its CSV row (~200 B) and the kernel temporaries of one curve
    check_job(args, f"diagram of {points:.3g} curve points", points * 260.0 + args.samples * layers * 16.0 * 30,
              seconds=model_seconds(points, 1, len(model.layers)))
    result = amplitude_phase_diagram(model, first, second, periods, degree=args.degree, samples=args.samples)
    prefix = Path(args.out)
    prefix.parent.mkdir(parents=True, exist_ok=True)
    written = plot_diagram(result, prefix, measurements=measurements)
    written.append(write_diagram_csv(result, prefix.with_name(prefix.name + ".csv")))
    print(format_diagram_summary(scenario.name, result, written))
    return 0


def format_diagram_summary(name: str, result, written=()) -> str:
    """The text ``induct diagram`` prints: periods, families, the model's response, the files and the limits."""
    lines = [f"{name}: amplitude-phase diagram at {', '.join(f'{p:g}' for p in result.periods_h)} h"]
    lines.append(f"  curves of constant {result.first} and of constant {result.second}")
    for p, r in zip(result.periods_h, result.model_response):
        lines.append(f"  model at {p:g} h: A = {abs(r):.4f}, phase arg R = {float(phase_lag_deg(r)):.2f} deg")
    lines.extend(f"wrote {path}" for path in written)
    lines.append(MODEL_LIMITS)
    return "\n".join(lines)
