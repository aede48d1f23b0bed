"""``induct compare SCENARIO SCENARIO [...] --data FILE``: evidence of each hypothesis and the Bayes factors."""

from __future__ import annotations

import json
import warnings

from induct.constants import MODEL_LIMITS
from induct.cli.tables import Column, format_table
from induct.cli.commands._cluster import add_cluster_options, backend_for

#: Exit code when a nested-sampling evidence did not reach its stopping rule.
EXIT_NOT_CONVERGED = 4


def register(subparsers):
    p = subparsers.add_parser(
        "compare",
        help="compare hypotheses (e.g. with and without an ocean) on the same data: evidence and Bayes factors",
        description=(
            "Each scenario is one hypothesis with its own [invert] priors. Prints each log evidence (natural log, "
            "with its error) and the Bayes factors 2 ln K of the best hypothesis over each other one, with the "
            "Kass & Raftery (1995) scale. Evidence on a grid for up to 3 free parameters (exact up to resolution; "
            "error: the change when the resolution halves), by nested sampling (dynesty) above. The evidence "
            "depends on the priors, which are printed. Exit codes: 0 ok, 2 bad input, 4 a sampler not converged, "
            "130 interrupted."
        ),
    )
    p.add_argument("scenarios", nargs="+", metavar="SCENARIO",
                   help="two or more scenario TOML files or bundled names (e.g. ilmare ilmare_no_ocean)")
    p.add_argument("--data", required=True, metavar="FILE", help="measurement file (TOML) or a bundled one")
    p.add_argument("--method", choices=("auto", "grid", "nested"), default="auto",
                   help="evidence method; auto: grid for up to 3 free parameters, nested above (default)")
    p.add_argument("--grid", type=int, default=60, metavar="N",
                   help="grid points per axis (even, >= 4; default 60; the error compares with N/2)")
    p.add_argument("--nlive", type=int, help="nested sampler: live points (default 400)")
    p.add_argument("--max-evaluations", type=int, metavar="N", help="nested sampler: budget of likelihood calls")
    p.add_argument("--max-time-s", type=float, metavar="S", help="nested sampler: budget of seconds per hypothesis")
    p.add_argument("--seed", type=int, default=0, help="nested sampler: random seed (default 0)")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.add_argument("--no-progress", action="store_true", help="no progress bar (also --quiet)")
    add_cluster_options(p, 65_536)
    return p


def run(args) -> int:
    from induct.inversion.evidence import Hypothesis, compare_hypotheses
    from induct.inversion.priors import parse_parameters
    from induct.io.measurements import load_measurements
    from induct.io.scenario import load_scenario

    if len(args.scenarios) < 2:
        raise ValueError(f"compare needs at least two scenarios (hypotheses), got {len(args.scenarios)}")
    data = load_measurements(args.data)
    hypotheses = []
    for name in args.scenarios:
        sc = load_scenario(name)
        where = f"{sc.path or sc.name}: [invert]"
        table = sc.raw.get("invert")
        if not table:
            raise ValueError(f"{sc.path or sc.name}: no [invert] table: each hypothesis needs its free parameters "
                             "and prior ranges (e.g. \"ocean.thickness_km\" = { range = [5, 250] })")
        hypotheses.append(Hypothesis(sc.name, sc.model, tuple(parse_parameters(table, sc.model, where))))
    with backend_for(args) as backend, warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        result = compare_hypotheses(
            hypotheses, data, method=args.method, grid_points=args.grid, backend=backend,
            progress=not (args.no_progress or args.quiet or args.json), seed=args.seed, nlive=args.nlive,
            max_evaluations=args.max_evaluations, max_time_s=args.max_time_s,
        )
    unconverged = [h for h in result.hypotheses if not h.converged]
    if args.json:
        payload = result.to_dict()
        payload["data"] = data.source
        if unconverged:
            payload["message"] = "a nested sampler did not reach its stopping rule: the evidence is not a result"
        print(json.dumps(payload, indent=2))
        return EXIT_NOT_CONVERGED if unconverged else 0
    print(format_comparison(result, data))
    return EXIT_NOT_CONVERGED if unconverged else 0


def format_comparison(result, data) -> str:
    """The readable summary of a model comparison."""
    hs = result.hypotheses
    lines = [f"model comparison on {data.n_entries} measured response(s) ({data.n_data} data) from {data.source}", ""]
    cols = [
        Column("hypothesis", "", [h.name for h in hs], "s"),
        Column("free", "", [str(h.n_free) for h in hs], "s"),
        Column("ln Z", "", [f"{h.log_evidence:.2f} +/- {h.log_evidence_err:.2f}" for h in hs], "s"),
        Column("chi2_min", "", [f"{h.chi2_min:.2f}" for h in hs], "s"),
        Column("dof", "", [str(h.n_data - h.n_free) for h in hs], "s"),
        Column("p", "", [f"{h.p_value:.2g}" for h in hs], "s"),
        Column("method", "", [h.method + ("" if h.converged else " (NOT CONVERGED)") for h in hs], "s"),
    ]
    lines.append(format_table(cols))
    lines.append("p: chi-square goodness of fit of the best model (common practice: p < 0.001, the model family cannot "
                 "explain the data)")
    lines.append("ln Z: natural log of the evidence, Gaussian likelihood with its normalisation -1/2 log det(2 pi C); "
                 "grid error: change of ln Z when the points per axis halve; nested: dynesty's estimate")
    lines.append("")
    lines.append("priors (the evidence depends on them):")
    for h in hs:
        lines.append(f"  {h.name}: " + "; ".join(h.priors))
    lines.append("")
    lines.append("Bayes factors (Kass & Raftery 1995, JASA 90, 773: 2 ln K 0-2 not worth more than a bare mention, "
                 "2-6 positive, 6-10 strong, > 10 very strong):")
    for bf in result.bayes_factors():
        lines.append(f"  {bf['favoured']} over {bf['over']}: 2 ln K = {bf['two_ln_K']:.2f} +/- {bf['two_ln_K_err']:.2f} "
                     f"({bf['evidence']})")
    misfit = [h for h in hs if h.p_value < 1e-3]
    if misfit:
        lines.append("")
        lines.append("goodness of fit: " + "; ".join(
            f"{h.name} cannot explain the data (chi2_min {h.chi2_min:.1f} for {h.n_data - h.n_free} degrees of "
            f"freedom, p = {h.p_value:.2g} < 0.001)" for h in misfit)
            + ". A Bayes factor only ranks the hypotheses given; it does not say that the favoured one fits.")
    bad = [h.name for h in hs if not h.converged]
    if bad:
        lines.append("")
        lines.append(f"NOT CONVERGED: the nested sampler for {', '.join(bad)} stopped on its budget before its "
                     "stopping rule; that evidence is not a result (raise --max-evaluations / --max-time-s)")
    lines.append("")
    lines.append(MODEL_LIMITS)
    return "\n".join(lines)
