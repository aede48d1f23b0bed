"""``induct plan SCENARIO (--candidates FILE | --altitude-km ...) --noise-nT S --choose K``: rank flybys by information."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

from induct.constants import MODEL_LIMITS
from induct.cli.tables import Column, format_table
from induct.cli.commands._tracks import add_track_options, spice_requested, track_from_args

#: Largest candidates x samples evaluated unless ``--max-samples`` says otherwise (about 0.2 GB of tracks).
DEFAULT_MAX_SAMPLES = 5_000_000
#: Above this many candidates x samples a progress bar is shown (unless --no-progress or --json).
PROGRESS_SAMPLES = 200_000

#: Generation options: (option, attribute, keyword of generate_candidates).
_GENERATION = (
    ("--altitude-km", "altitude_km", "altitude_km"),
    ("--lat-deg", "lat_deg", "lat_deg"),
    ("--lon-deg", "lon_deg", "lon_deg"),
    ("--t-ca-s", "t_ca_s", "t_ca_s"),
    ("--phase-deg", "phase_deg", "phase_deg"),
    ("--speed-km-s", "speed_km_s", "speed_km_s"),
    ("--duration-s", "duration_s", "duration_s"),
    ("--inclination-deg", "inclination_deg", "inclination_deg"),
)

_VALUES = "V, V1,V2,... or LO:HI:N"

#: What the widths assume about the inversion that follows (measured by tools/verify_plan.py).
INVERSION_NOTE = (
    "The widths are those of an inversion that uses every driving period and the full response covariance of "
    "the fit (cross-period terms included). The measurement file of `induct fit` keeps only the periods it "
    "determines (with their full covariance); a period that the flybys do not separate is not written, or must "
    "be fixed to the forward model (`induct fit --lines`), so inverting that file can give wider ranges "
    "(see the separability table)."
)


def register(subparsers):
    p = subparsers.add_parser(
        "plan",
        help="rank candidate flybys by the expected constraint on the interior and choose the best set",
        description=(
            "Linearised experiment design: for each candidate flyby (from --candidates FILE, or generated from "
            "ranges of closest-approach values) the Fisher information of the magnetometer samples about the free "
            "parameters of the scenario's [invert] table, with a Gaussian approximation of the uniform prior: the "
            "log det criterion (the expected information gain is half of it, in nats), the expected 68 % widths, "
            "a greedy choice of --choose flybys and the driving periods they separate. Values of the generation "
            f"options: {_VALUES} (N evenly spaced values, ends included); one candidate per combination."
        ),
        epilog=MODEL_LIMITS,
    )
    p.add_argument("scenario", help="scenario TOML file with [[drive.lines]], or a bundled scenario name (e.g. ilmare)")
    p.add_argument("--candidates", metavar="FILE", help="candidate flybys: CSV with columns candidate,t_s,x_km,y_km,z_km")
    p.add_argument("--frame", choices=("flow", "body"), default="flow", help="frame of the positions in --candidates (default flow)")
    g = p.add_argument_group("generated candidates (instead of --candidates)")
    g.add_argument("--altitude-km", metavar="VALUES", help="closest-approach altitudes (km), e.g. 25:400:6")
    g.add_argument("--lat-deg", metavar="VALUES", help="closest-approach latitudes, flow frame (deg; default 0); write negative values as --lat-deg=-45,0,45")
    g.add_argument("--lon-deg", metavar="VALUES",
                   help="closest-approach longitudes, flow frame (deg; 0 = downstream +x, 90 = toward the planet; default 0)")
    g.add_argument("--t-ca-s", metavar="VALUES", help="times of closest approach (s from the epoch of the driving lines)")
    g.add_argument("--phase-deg", metavar="VALUES",
                   help="instead of --t-ca-s: phases of the main driving line at closest approach (deg), e.g. 0:300:6")
    g.add_argument("--start-s", type=float, default=0.0, help="with --phase-deg: earliest time of closest approach (s, default 0)")
    g.add_argument("--speed-km-s", metavar="VALUES", help="speed at closest approach (km/s; default 5)")
    g.add_argument("--duration-s", metavar="VALUES", help="track length centred on closest approach (s; default 3600)")
    g.add_argument("--step-s", type=float, default=None, help="sampling step (s; default 6); --noise-nT is per sample at this step")
    g.add_argument("--inclination-deg", metavar="VALUES",
                   help="rotation of the direction of motion about the radius at closest approach (deg; default 0)")
    g.add_argument("--trajectory", choices=("straight", "hyperbolic"), default=None,
                   help="straight (default) or hyperbolic (two-body, the moon's mass from the layer densities)")
    g.add_argument("--gm-km3-s2", type=float, default=None, help="with --trajectory hyperbolic: the moon's GM (km^3/s^2)")
    p.add_argument("--noise-nT", "--noise-nt", dest="noise_nT", type=float, required=True, metavar="S",
                   help="white magnetometer noise (nT, 1 sigma per component and per sample at the candidates' step)")
    p.add_argument("--choose", type=int, required=True, metavar="K", help="how many flybys to choose (greedy)")
    p.add_argument("--params", metavar="FILE", help="free parameters and prior ranges (TOML [invert] table); overrides the scenario's")
    p.add_argument("--list", type=int, default=15, metavar="N", help="candidates to print, best first (default 15; 0 = all)")
    p.add_argument("--max-samples", type=int, default=DEFAULT_MAX_SAMPLES, metavar="N",
                   help=f"refuse more than N candidates x samples (default {DEFAULT_MAX_SAMPLES:,d})")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.add_argument("--out", metavar="DIR",
                   help="write DIR/plan_candidates.csv, DIR/plan_selection.csv, DIR/plan.json and the figure DIR/plan.png/.pdf")
    p.add_argument("--no-progress", action="store_true", help="no progress bar")
    add_track_options(p, group_title="a candidate track from SPICE kernels (--step-s is the sampling step)")
    return p


# --------------------------------------------------------------------------- inputs
def _values(args, option, attr, *, positive=False):
    from induct.planning.candidates import parse_value_range

    text = getattr(args, attr)
    try:
        values = parse_value_range(text)
    except ValueError:
        raise ValueError(f"{option}: cannot read {text!r}; give {_VALUES} (N >= 1)") from None
    if positive and np.any(values <= 0.0):
        raise ValueError(f"{option}: values must be > 0, got {text!r}")
    return values


def _count_samples(duration_s: np.ndarray, step_s: float) -> np.ndarray:
    """Samples of a generated track: ``2 floor(duration / 2 step) + 1`` (as in :mod:`induct.planning.candidates`)."""
    return 2 * np.floor(0.5 * duration_s / step_s + 1e-9).astype(np.int64) + 1


def _check_size(n_candidates: int, n_samples: int, args, where: str):
    total = int(n_candidates) * int(n_samples)
    if total > args.max_samples:
        raise ValueError(
            f"{where}: {n_candidates:,d} candidates x {n_samples:,d} samples = {total:,d} exceeds --max-samples "
            f"{args.max_samples:,d} (about {total * 32 / 1e9:.2g} GB of tracks); use fewer values, a longer --step-s "
            "or raise --max-samples"
        )
    return total


def build_candidates(args, scenario):
    """The candidate flybys of the command line: a track from SPICE kernels, ``--candidates``, generated ones.

    ``--spice`` adds the spacecraft's track from the kernels (``--start``/``--stop``/``--step-s``) as one
    candidate, alone or beside the file's or the generated candidates. Sizes are checked first.
    """
    from induct.planning.candidates import Candidate, generate_candidates, moon_gm_km3_s2

    spice = []
    if spice_requested(args):
        track, notes = track_from_args(args, scenario)
        spice = [Candidate(f"spice:{args.start}", track.times_s, track.positions_km, {"source": track.source})]
        if args.candidates is None and args.altitude_km is None:
            return spice
    return _file_or_generated(args, scenario, Candidate, generate_candidates, moon_gm_km3_s2) + spice


def _file_or_generated(args, scenario, Candidate, generate_candidates, moon_gm_km3_s2):
    given = [opt for opt, attr, _ in _GENERATION if getattr(args, attr) is not None]
    if args.step_s is not None and not spice_requested(args):
        given.append("--step-s")
    if args.trajectory is not None:
        given.append("--trajectory")
    if args.candidates:
        if given:
            raise ValueError(f"--candidates: give either a candidate file or generation options, not both ({', '.join(given)})")
        from induct.io.candidates import read_candidates

        cands = read_candidates(args.candidates, frame=args.frame)
        _check_size(len(cands), max(c.size for c in cands), args, f"--candidates {args.candidates}")
        return cands
    if args.altitude_km is None:
        raise ValueError("--altitude-km: give closest-approach altitudes (or --candidates FILE)")
    if (args.t_ca_s is None) == (args.phase_deg is None):
        raise ValueError("--phase-deg: give exactly one of --t-ca-s and --phase-deg (when closest approach happens)")
    step = 6.0 if args.step_s is None else args.step_s
    if not (math.isfinite(step) and step > 0.0):
        raise ValueError(f"--step-s: must be finite and > 0 s, got {args.step_s!r}")
    kw = {}
    for option, attr, key in _GENERATION:
        if getattr(args, attr) is not None:
            kw[key] = _values(args, option, attr, positive=attr in ("altitude_km", "speed_km_s", "duration_s"))
    lat = kw.get("lat_deg", np.zeros(1))
    if np.any(np.abs(lat) > 90.0):
        raise ValueError(f"--lat-deg: latitudes must lie in [-90, 90], got {args.lat_deg!r}")
    durations = kw.get("duration_s", np.array([3600.0]))
    n_cand = int(np.prod([v.size for v in kw.values()]))
    _check_size(n_cand, int(_count_samples(durations, step).max()), args, "generation options")
    trajectory = args.trajectory or "straight"
    gm = args.gm_km3_s2
    if trajectory == "hyperbolic" and gm is None:
        try:
            gm = moon_gm_km3_s2(scenario.model)
        except ValueError as exc:
            raise ValueError(f"--trajectory hyperbolic: {exc}; or give --gm-km3-s2") from None
    if gm is not None and not (math.isfinite(gm) and gm > 0.0):
        raise ValueError(f"--gm-km3-s2: must be finite and > 0, got {gm!r}")
    try:
        return generate_candidates(scenario.model.radius_km, lines=scenario.drive_lines, start_s=args.start_s,
                                   step_s=step, trajectory=trajectory, gm_km3_s2=gm, **kw)
    except ValueError as exc:
        raise ValueError(f"generation options: {exc}") from None


# --------------------------------------------------------------------------- run
def run(args) -> int:
    from induct.inversion.priors import parse_parameters
    from induct.io.scenario import load_scenario
    from induct.io.toml import read_parameter_table
    from induct.planning.candidates import closest_approach_summary
    from induct.planning.design import plan_flybys

    if not (math.isfinite(args.noise_nT) and args.noise_nT > 0.0):
        raise ValueError(f"--noise-nT: must be finite and > 0 nT, got {args.noise_nT!r}")
    if args.choose < 1:
        raise ValueError(f"--choose: must be >= 1, got {args.choose}")
    if args.list < 0:
        raise ValueError(f"--list: must be >= 0, got {args.list}")
    if args.max_samples < 1:
        raise ValueError(f"--max-samples: must be >= 1, got {args.max_samples}")
    scenario = load_scenario(args.scenario)
    where = scenario.path or scenario.name
    if not scenario.drive_lines:
        raise ValueError(f"{where}: no [[drive.lines]] (the driving field at the moon; write them with induct drive)")
    if args.params:
        table, twhere = read_parameter_table(args.params), f"{args.params}"
    else:
        table, twhere = scenario.raw.get("invert"), f"{where}: [invert]"
        if not table:
            raise ValueError(f"{where}: no [invert] table of free parameters; add one or give --params FILE")
    params = parse_parameters(table, scenario.model, twhere)
    cands = build_candidates(args, scenario)
    if args.choose > len(cands):
        raise ValueError(f"--choose: {args.choose} is more than the {len(cands)} candidate(s)")
    total = sum(c.size for c in cands)
    progress = not args.no_progress and not args.json and total > PROGRESS_SAMPLES
    plan = plan_flybys(scenario.model, scenario.drive_lines, params, cands, args.noise_nT, args.choose, progress=progress)
    geometry = closest_approach_summary(cands, scenario.model.radius_km, scenario.drive_lines)
    payload = plan_payload(plan, geometry, scenario)
    written = []
    if args.out:
        written = write_plan_outputs(plan, geometry, payload, Path(args.out), title=f"{scenario.name}: flyby plan")
    if args.json:
        if written:
            payload["files"] = [str(w) for w in written]
        print(json.dumps(payload, indent=2))
        return 0
    print(format_plan(plan, geometry, scenario, args.list, total))
    for w in written:
        print(f"wrote {w}")
    return 0


def plan_payload(plan, geometry, scenario) -> dict:
    """The JSON of ``induct plan``: :meth:`FlybyPlan.to_dict` plus the body and each candidate's closest approach."""
    payload = plan.to_dict()
    index = {name: i for i, name in enumerate(plan.candidate_names)}
    for entry in payload["candidates"]:
        i = index[entry["candidate"]]
        entry["closest_approach"] = {k: (None if not math.isfinite(float(v[i])) else float(v[i]))
                                     for k, v in geometry.items()}
    return {"body": scenario.name, **payload}


def write_plan_outputs(plan, geometry, payload, out: Path, *, title=None) -> list:
    """Write the ranked table and the selection (CSV), the JSON and the figure (PNG + PDF) into ``out``."""
    from induct.io.files import write_text
    from induct.io.tables import write_table_csv
    from induct.plot.plan import plot_plan

    out.mkdir(parents=True, exist_ok=True)
    written = [write_table_csv(out / "plan_candidates.csv", candidate_columns(plan, geometry)),
               write_table_csv(out / "plan_selection.csv", selection_columns(plan)),
               write_text(out / "plan.json", json.dumps(payload, indent=2) + "\n")]
    written += plot_plan(plan, geometry, out / "plan", title=title)
    return written


# --------------------------------------------------------------------------- tables
def _width_columns(plan, widths, widths_log10, rows):
    cols = []
    for j, p in enumerate(plan.parameters):
        cols.append(Column(f"68% {p.name}", p.unit, [float(widths[i, j]) for i in rows], ".3g"))
        if p.log:
            cols.append(Column(f"68% {p.name}", "decades", [float(widths_log10[i, j]) for i in rows], ".3g"))
    return cols


def candidate_columns(plan, geometry, rows=None) -> list:
    """Ranked table (best first): rank, candidate, closest approach, log det, EIG (nats), expected 68 % widths."""
    rows = list(plan.ranking if rows is None else rows)
    rank = np.empty(len(plan.log_det), dtype=int)
    rank[plan.ranking] = np.arange(1, len(plan.log_det) + 1)
    chosen = {int(i): n for n, i in enumerate(plan.selection_order, 1)}
    cols = [
        Column("rank", "", [int(rank[i]) for i in rows], "d"),
        Column("candidate", "", [plan.candidate_names[i] for i in rows], "s"),
        Column("chosen", "", [str(chosen[i]) if i in chosen else "" for i in rows], "s"),
        Column("altitude", "km", [float(geometry["altitude_km"][i]) for i in rows], ".4g"),
        Column("lat", "deg", [float(geometry["lat_deg"][i]) for i in rows], ".3g"),
        Column("lon", "deg", [float(geometry["lon_deg"][i]) for i in rows], ".4g"),
        Column("t_ca", "s", [float(geometry["t_ca_s"][i]) for i in rows], ".8g"),
        Column("main-line phase", "deg", [float(geometry["phase_deg"][i]) for i in rows], ".4g"),
        Column("log_det", "", [float(plan.log_det[i]) for i in rows], ".4f"),
        Column("EIG", "nats", [0.5 * float(plan.log_det[i]) for i in rows], ".4f"),
    ]
    return cols + _width_columns(plan, plan.expected_68_width, plan.expected_68_width_log10, rows)


def selection_columns(plan) -> list:
    """Greedy steps: candidate, cumulative log det and EIG, gain, widths after the step, lines separable."""
    w, wl = plan.selection_widths()
    steps = range(len(plan.selection_order))
    seps = plan.selection_separable or ((),) * len(plan.selection_order)
    prev = np.concatenate([[0.0], plan.selection_log_det[:-1]])
    cols = [
        Column("step", "", [n + 1 for n in steps], "d"),
        Column("candidate", "", [plan.candidate_names[i] for i in plan.selection_order], "s"),
        Column("log_det", "", [float(v) for v in plan.selection_log_det], ".4f"),
        Column("EIG", "nats", [0.5 * float(v) for v in plan.selection_log_det], ".4f"),
        Column("gain", "", [float(a - b) for a, b in zip(plan.selection_log_det, prev)], ".4f"),
    ]
    cols += _width_columns(plan, w, wl, list(steps))
    cols.append(Column("separable lines", "", [" ".join(s) if s else "none" for s in seps], "s"))
    return cols


def format_plan(plan, geometry, scenario, n_list: int, total_samples: int) -> str:
    """The text ``induct plan`` prints."""
    names = ", ".join(f"{p.name} ({p.lo:g}-{p.hi:g} {p.unit}, {p.scale})" for p in plan.parameters)
    d = plan.derivatives
    lines = [
        f"{scenario.name}: {len(plan.candidate_names):,d} candidate flybys ({total_samples:,d} samples), "
        f"noise {plan.noise_nT:g} nT per component and sample",
        "free parameters: " + names,
        "reference: " + ", ".join(f"{p.name} = {v:.4g}" for p, v in zip(plan.parameters, d.reference)),
        "driving lines: " + ", ".join(f"{lab} ({t / 3600.0:.4g} h)" for lab, t in zip(d.labels, d.periods_s)),
        "",
    ]
    shown = list(plan.ranking if n_list == 0 else plan.ranking[:n_list])
    lines.append(f"candidates ranked by information, best first ({len(shown)} of {len(plan.candidate_names):,d} shown):")
    lines.append(format_table(candidate_columns(plan, geometry, shown)))
    lines.append("log_det = log det(I + P F) (D-optimal); EIG = log_det / 2, the expected information gain of a "
                 "linear-Gaussian model; 68% width = 2 sigma of the linearised posterior (log parameters: "
                 "10^(u0 + sigma) - 10^(u0 - sigma) and 2 sigma in decades)")
    lines.append("")
    lines.append(f"chosen set ({len(plan.selection_order)} flybys, greedy; within 1 - 1/e of the best set, "
                 "Nemhauser, Wolsey & Fisher 1978):")
    lines.append(format_table(selection_columns(plan)))
    lines.append("")
    cols = [
        Column("parameter", "", [p.name for p in plan.parameters], "s"),
        Column("unit", "", [p.unit for p in plan.parameters], "s"),
        Column("reference", "", [float(v) for v in d.reference], ".4g"),
        Column("prior 68% width", "", [float(v) for v in plan.prior_68_width], ".3g"),
        Column("expected 68% width", "", [float(v) for v in plan.selected_expected_68_width], ".3g"),
        Column("ratio", "", [float(a / b) for a, b in zip(plan.selected_expected_68_width, plan.prior_68_width)], ".3f"),
    ]
    lines.append("expected widths of the chosen set:")
    lines.append(format_table(cols))
    sep = plan.separability
    sep_cols = [
        Column("line", "", list(sep.labels), "s"),
        Column("period", "h", [float(t) / 3600.0 for t in sep.periods_s], ".5g"),
        Column("sigma_max", "", [float(v) for v in sep.sigma_max], ".3g"),
        Column("separable", "", ["yes" if ok else "no" for ok in sep.separable], "s"),
        Column("reason", "", [r or "-" for r in sep.reasons], "s"),
    ]
    lines.append("")
    lines.append("driving periods separated by the chosen set (response-space covariance, canonical correlations):")
    lines.append(format_table(sep_cols))
    if plan.notes:
        lines.append("notes:")
        lines.extend(f"  - {n}" for n in plan.notes)
    lines.append(INVERSION_NOTE)
    lines.append(MODEL_LIMITS)
    return "\n".join(lines)
