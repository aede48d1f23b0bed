"""``induct fit``: the complex induction response at each driving period from flyby residuals.

Examples::

    induct fit ilmare --data residuals.csv --noise-nT 0.5
    induct fit ilmare --data pass1.csv pass2.csv --noise-nT 0.5 --json --toml fitted.toml
    induct fit ilmare --data pass1.csv pass2.csv --noise-nT 0.5 --lines synodic 84.7 --toml fitted.toml
    induct invert ilmare --data fitted.toml
    induct fit my_moon.toml --data pass1.cdf --field-variable B_res --position-variable Position --noise-nT 0.5

RESIDUALS.csv holds t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT: the measured field
minus the primary field, moon-centred, in the frame of the scenario's driving
lines (flow frame; or --frame body); time may also be a utc or tdb_s column
(absolute times need the scenario's [drive] epoch_utc). CDF files (.cdf) are
read with cdflib following the ISTP conventions (--field-variable,
--position-variable; fill and out-of-range samples dropped and counted).
With --spice (and --spacecraft, --moon, --planet) the positions come from
SPICE kernels at each sample's time instead of from the files.
Linear least squares for Re and Im of
R_1 at every [[drive.lines]] period, with the full covariance. With --lines
only the named lines are fitted; the others are fixed to the forward model of
the scenario's interior (their induced field is subtracted first). A line whose
response correlates above --max-correlation (0.9) with another's is "not
separable" and not determined; the measurement file keeps the full covariance
of the written entries across periods and components.
"""

from __future__ import annotations

import argparse
import json
import math
import sys


from induct import __version__
from induct.cli.commands._tracks import add_cdf_options, add_track_options, residuals_from_args


def register(subparsers) -> argparse.ArgumentParser:
    from induct.flyby.magfit import DEFAULT_MAX_CONDITION, DEFAULT_MAX_CORRELATION, DEFAULT_MAX_SIGMA

    p = subparsers.add_parser(
        "fit",
        help="fit the complex response at each driving period to flyby magnetometer residuals",
        description=__doc__.split("\n\n")[0] + ". Only the degree-1 induced field of a spherically symmetric "
        "body is fitted; plasma-interaction fields in the residuals bias the result.",
    )
    p.add_argument("scenario", help="scenario with [[drive.lines]] (file or bundled name); its radius and lines are used")
    p.add_argument("--data", required=True, nargs="+", metavar="RESIDUALS.csv",
                   help="one or more residual files t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT (time also as utc or "
                   "tdb_s), or CDF files (.cdf, with --field-variable and --position-variable)")
    p.add_argument("--noise-nt", "--noise-nT", dest="noise_nt", type=float, required=True, metavar="N",
                   help="1-sigma noise of each field component (nT)")
    p.add_argument("--frame", metavar="FRAME", help="frame of the files: flow (default) or body")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    add_cdf_options(p)
    add_track_options(p, group_title="positions from SPICE kernels at the data's sample times (instead of "
                      "positions in the --data files; no --start/--stop/--step-s)")
    p.add_argument("--toml", metavar="FILE", help="write the determined responses as a measurement file for induct invert")
    p.add_argument("--include-undetermined", action="store_true",
                   help="with --toml: also write periods that the flybys do not determine (not advised)")
    p.add_argument("--max-condition", type=float, default=DEFAULT_MAX_CONDITION,
                   help=f"largest condition number of the column-scaled design matrix (default {DEFAULT_MAX_CONDITION:g})")
    p.add_argument("--max-sigma", type=float, default=DEFAULT_MAX_SIGMA,
                   help=f"largest 1-sigma half-axis of a period's (Re, Im) error ellipse (default {DEFAULT_MAX_SIGMA:g})")
    p.add_argument("--max-correlation", type=float, default=DEFAULT_MAX_CORRELATION,
                   help="a line whose response correlates above this with another line's (largest |correlation| "
                   "between their Re/Im components) is not separable, hence not determined "
                   f"(default {DEFAULT_MAX_CORRELATION:g})")
    p.add_argument("--lines", nargs="+", metavar="LINE",
                   help="fit only these driving lines (label, or period in hours: --lines synodic 84.7); the others "
                   "are fixed to the forward model of the scenario's interior and their induced field is subtracted")
    return p


def _g(value) -> str:
    return "n/a" if value is None else f"{value:.2g}"


def run(args) -> int:
    from induct.flyby.magfit import fit_responses, select_lines
    from induct.io.files import write_text
    from induct.io.measurements import parse_measurements
    from induct.io.scenario import load_scenario

    if not (math.isfinite(args.noise_nt) and args.noise_nt > 0):
        raise ValueError(f"--noise-nT must be > 0 nT, got {args.noise_nt!r}")
    if args.include_undetermined and not args.toml:
        raise ValueError("--include-undetermined needs --toml")
    from induct.cli.budget import check_job, csv_rows_estimate

    scenario = load_scenario(args.scenario)
    lines = scenario.drive_lines
    rows, size = csv_rows_estimate(list(args.data))
    # file text, parsed rows, and the design matrix (3 rows per point x 2 columns per line, 3 copies in the solve)
    check_job(args, f"response fit to about {rows:.3g} residual rows", 2 * size + rows * (500.0 + 3 * 2 * 8.0 * 3 * max(len(lines), 1)))
    if not lines:
        raise ValueError(
            f"{scenario.path or scenario.name}: no [[drive.lines]]; write them with "
            "`induct drive PLANET.toml --write-scenario SCENARIO.toml`"
        )
    if args.lines:
        select_lines(lines, args.lines)  # unknown label/period: error before reading the data
    data = residuals_from_args(args, scenario)
    pos, t, b, sources, frames = data.positions_km, data.times_s, data.residuals_nT, data.sources, data.frames
    free, fixed_responses = None, None
    if args.lines:
        free = select_lines(lines, args.lines)
        if len(free) < len(lines):
            fixed_responses = scenario.model.response(periods_s=[ln.period_s for ln in lines]).response
    fit = fit_responses(lines, scenario.model.radius_km, pos, t, b, args.noise_nt, max_condition=args.max_condition,
                        max_sigma=args.max_sigma, max_correlation=args.max_correlation, free=free,
                        fixed_responses=fixed_responses)
    result = fit.to_dict()
    result.update({
        "induct_version": __version__,
        "scenario": scenario.name,
        "data": sources,
        "convention": "R_1 = real + i imag = amplitude exp(i phase_lag), exp(+i w t); cov of (real, imag)",
        "frames": frames,
        "model": "degree-1 induced field of a spherically symmetric body driven by the scenario's [[drive.lines]]",
        "epoch_utc": scenario.epoch_utc,
        "dropped_samples": data.dropped,
        "time_notes": data.notes,
    })
    if args.toml:
        text = fit.measurement_toml(
            comments=[
                f"Responses fitted by induct {__version__} fit from flyby residuals ({', '.join(sources)}), "
                f"scenario {scenario.name}, noise {args.noise_nt:g} nT.",
                "Use: induct invert SCENARIO --data THIS_FILE",
            ],
            source={"tool": "induct fit", "scenario": scenario.name, "data": ", ".join(sources),
                    "noise_nT": float(args.noise_nt), "condition_number": float(fit.condition_number)
                    if math.isfinite(fit.condition_number) else "inf", "chi2": float(fit.chi2), "n_data": fit.n_data},
            include_undetermined=args.include_undetermined,
        )
        import tomllib

        back = parse_measurements(tomllib.loads(text), args.toml)  # what invert will read
        write_text(args.toml, text)
        result["toml"] = {"file": args.toml, "entries": back.n_entries}
    if args.json:
        json.dump(result, sys.stdout, indent=2)
        print()
        return 0
    print(f"{scenario.name}: response fit to {fit.n_data // 3} points ({fit.n_data} data) from {', '.join(sources)}")
    print(f"noise {args.noise_nt:g} nT; chi2 = {fit.chi2:.6g} for {fit.dof} degrees of freedom "
          f"(per dof {fit.chi2 / fit.dof:.3f}); condition number {fit.condition_number:.3g}")
    head = (f"{'line':<14} {'period_h':>10} {'amplitude':>16} {'phase_lag_deg':>16} {'real':>9} {'imag':>9} "
            f"{'sigma_max':>9}  determined")
    print(head)
    print("-" * len(head))
    for p in result["response"]:
        print(f"{p['label']:<14} {p['period_h']:>10.5f} {p['amplitude']:>8.4f} +-{_g(p['amplitude_sigma']):<6} "
              f"{p['phase_lag_deg']:>8.2f} +-{_g(p['phase_lag_sigma_deg']):<6} {p['real']:>9.4f} {p['imag']:>9.4f} "
              f"{p['sigma_max']:>9.3g}  {'yes' if p['determined'] else 'NO'}")
    for f in fit.fixed:
        print(f"{f['label']:<14} {f['period_h']:>10.5f} fixed to the forward model: real {f['real']:.4f}, "
              f"imag {f['imag']:.4f} (not fitted)")
    th = fit.thresholds
    print(f"thresholds: condition number <= {th['max_condition']:g}, sigma_max <= {th['max_sigma']:g}, "
          f"cross-period correlation <= {th['max_correlation']:g} (determined = all three hold)")
    for d in data.dropped:
        print(f"{d['file']}: {d['records']} records, {d['kept']} used; dropped {d['fill']} with fill values, "
              f"{d['out_of_range']} outside VALIDMIN/VALIDMAX")
    for note in data.notes:
        print(f"time: {note}")
    for note in fit.notes:
        print(f"note: {note}")
    if args.toml:
        print(f"{result['toml']['entries']} response(s) written to {args.toml} (read back with induct.io.measurements)")
    return 0
