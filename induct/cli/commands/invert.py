"""``induct invert SCENARIO --data MEASUREMENTS.toml``: ranges of the free parameters that fit the data."""

from __future__ import annotations

import json
import warnings

from induct.constants import MODEL_LIMITS
from induct.cli.tables import Column, format_table
from induct.inversion.grid import GRID_TASK_MODELS
from induct.cli.commands._cluster import add_cluster_options, backend_for
from induct.cli.commands._truth import add_truth_option, truth_from_args
from induct.inversion.grid import misfit_message


def register(subparsers):
    p = subparsers.add_parser(
        "invert",
        help="invert measured responses into the ranges of ice thickness, ocean thickness, conductivity, ... that fit",
        description=(
            "Posterior ranges of the free parameters of a scenario (its [invert] table, or --params FILE) given "
            "measured responses (--data FILE, TOML). Uniform or log-uniform priors, Gaussian likelihood; exact "
            "evaluation on a grid for up to 4 parameters, a sampler above (nested or ensemble, with --sampler) "
            "whose convergence is checked. Exit codes: 0 ok, 2 bad input, 3 data the model cannot fit, "
            "4 sampler not converged (no ranges are printed), 130 interrupted."
        ),
    )
    p.add_argument("scenario", help="scenario TOML file, or the name of a bundled scenario (e.g. ilmare)")
    p.add_argument("--data", required=True, metavar="FILE",
                   help="measurement file (TOML, [[response]] tables), or a bundled one (e.g. ilmare_measured)")
    p.add_argument("--params", metavar="FILE", help="free parameters and prior ranges (TOML [invert] table); overrides the scenario's")
    p.add_argument("--grid", type=int, metavar="N", help="grid points per axis (>= 2; default 60); with --sampler mcmc: histogram bins of the maps")
    p.add_argument("--sampler", choices=("auto", "grid", "nested", "ensemble", "mcmc"), default="auto",
                   help="grid (exact), nested (dynesty; gives the evidence) or ensemble (emcee; 'mcmc' is the same); "
                        "auto: grid for up to 4 parameters, nested above (default)")
    p.add_argument("--steps", type=int, help="ensemble sampler: steps per walker of the first stretch (default 2000); "
                   "the chain doubles until converged or out of budget")
    p.add_argument("--walkers", type=int, help="ensemble sampler: walkers (default max(32, 4 x parameters))")
    p.add_argument("--nlive", type=int, help="nested sampler: live points (default 400)")
    p.add_argument("--max-evaluations", type=int, metavar="N",
                   help="sampler budget of likelihood evaluations (default 2,000,000)")
    p.add_argument("--max-time-s", type=float, metavar="S", help="sampler budget of wall-clock seconds (default none)")
    p.add_argument("--seed", type=int, default=0, help="sampler random seed (default 0)")
    p.add_argument("--list", type=int, default=10, metavar="N", help="2-sigma combinations to print (default 10)")
    p.add_argument("--plot", metavar="FILE", help="write the corner figure to FILE (.png and .pdf)")
    add_truth_option(p)
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.add_argument("--no-progress", action="store_true", help="no progress bar")
    p.add_argument("--no-refine", action="store_true",
                   help="grid: evaluate the starting grid only (no adaptive refinement and no resolution check)")
    p.add_argument("--max-refinements", type=int, default=3, metavar="N",
                   help="grid: most resolution doublings of the adaptive refinement (default 3)")
    p.add_argument("--min-p-value", type=float, default=1e-3, metavar="P",
                   help="below this p-value of chi2_min the model family is rejected (default 1e-3)")
    p.add_argument("--accept-misfit", action="store_true",
                   help="report the ranges (exit 0) even when the p-value is below --min-p-value")
    p.add_argument("--model-error", nargs=2, type=float, metavar=("FRACTIONAL", "ABSOLUTE"),
                   help="add a model-error covariance: variance (FRACTIONAL |R|)^2 + ABSOLUTE^2 on each of Re R and "
                        "Im R, the way to allow for fields the model leaves out (replaces the file's [model_error])")
    p.add_argument("--save-posterior", metavar="FILE.nc",
                   help="write the posterior as NetCDF: marginals, 2-D maps, ranges, fit quality, and a sampler's weighted samples")
    add_cluster_options(p, GRID_TASK_MODELS)
    return p


def run(args) -> int:
    from induct.inversion.grid import DEFAULT_LIST_CAP, invert
    from induct.io.measurements import load_measurements
    from induct.inversion.priors import parse_parameters
    from induct.io.toml import read_parameter_table
    from induct.io.scenario import load_scenario

    scenario = load_scenario(args.scenario)
    # Amplitudes above 1 are only possible with a conducting sheet outside the reference radius.
    data = load_measurements(args.data, amplification=scenario.model.ionosphere is not None)
    if args.model_error is not None:
        frac, absolute = args.model_error
        if not (frac >= 0 and absolute >= 0):
            raise ValueError(f"--model-error FRACTIONAL ABSOLUTE must both be >= 0, got {frac:g} {absolute:g}")
        data = data.with_model_error(frac, absolute)
    if not 0.0 < args.min_p_value < 1.0:
        raise ValueError(f"--min-p-value must be between 0 and 1, got {args.min_p_value:g}")
    if args.max_refinements < 0:
        raise ValueError(f"--max-refinements must be >= 0, got {args.max_refinements}")
    if args.save_posterior and not str(args.save_posterior).endswith(".nc"):
        raise ValueError(f"--save-posterior: give a file name ending in .nc, got {args.save_posterior!r}")
    if args.params:
        table, where = read_parameter_table(args.params), f"{args.params}"
    else:
        table, where = scenario.raw.get("invert"), f"{scenario.path or scenario.name}: [invert]"
        if not table:
            raise ValueError(
                f"{scenario.path or scenario.name}: no [invert] table; add one (e.g. \"ocean.thickness_km\" = "
                "{ range = [5, 250] }) or give --params FILE"
            )
    params = parse_parameters(table, scenario.model, where)
    truth = truth_from_args(args, scenario.model, [q.name for q in params])
    if truth is not None and not args.plot:
        raise ValueError("--truth marks the corner figure: give --plot FILE too")
    if args.grid is not None and args.grid < 2:
        raise ValueError(f"--grid must be >= 2 points per axis, got {args.grid}")
    if args.list < 0:
        raise ValueError(f"--list must be >= 0, got {args.list}")
    for name in ("steps", "walkers"):
        value = getattr(args, name)
        if value is not None and value < 1:
            raise ValueError(f"--{name} must be >= 1, got {value}")
    _check_size(args, scenario.model, data, params)
    with backend_for(args) as backend, warnings.catch_warnings():
        # the sampler's convergence warning is reported below, with what failed
        warnings.filterwarnings("ignore", message=".*not converged.*", category=UserWarning)
        result = invert(
            scenario.model, data, params, sampler=args.sampler, grid_points=args.grid,
            cap=max(args.list, DEFAULT_LIST_CAP), progress=not (args.no_progress or args.quiet or args.json),
            steps=args.steps, walkers=args.walkers, seed=args.seed, nlive=args.nlive,
            max_evaluations=args.max_evaluations, max_time_s=args.max_time_s,
            backend=backend, chunk_size=args.task_size, refine=not args.no_refine,
            max_refinements=args.max_refinements, min_p_value=args.min_p_value,
        )
    if result.method != "grid" and not result.converged:
        return _not_converged(result, scenario, data, args.json)
    rejected = bool(result.fit) and not result.fit["acceptable"]
    code = 3 if rejected and not args.accept_misfit else 0
    written = []
    if args.save_posterior:
        from induct.io.posterior_files import write_posterior_netcdf

        write_posterior_netcdf(result, args.save_posterior)
        written.append(args.save_posterior)
    if args.plot:
        from induct.plot.corner import save_corner

        written += save_corner(result, args.plot, title=f"{scenario.name} ({data.source})", truth=truth)
    if args.json:
        payload = result.to_dict()
        payload["body"] = scenario.name
        payload["data"] = data.source
        payload["model_rejected"] = rejected
        if written:
            payload["files"] = [str(w) for w in written]
        print(json.dumps(payload, indent=2))
        return code
    print(format_summary(result, scenario, data, args.list))
    for w in written:
        print(f"wrote {w}")
    if rejected:
        print("")
        print("MODEL REJECTED: " + misfit_message(result.fit)
              + ("" if args.accept_misfit else " (exit code 3; --accept-misfit to accept)"))
    return code


def _check_size(args, model, data, params) -> None:
    """Refuse an inversion above the memory limit and say how long a long one takes (before allocating)."""
    from induct.cli.budget import check_job, model_seconds
    from induct.inversion.grid import DEFAULT_GRID_POINTS

    k, m, layers = len(params), data.n_entries, len(model.layers)
    layers_eff = layers + (64 if any(p.field in ("salinity_g_per_kg", "temperature_C") for p in params) else 0)
    grid = args.sampler == "grid" or (args.sampler == "auto" and k <= 4)
    n = args.grid or (DEFAULT_GRID_POINTS if grid else 40)
    if grid:
        cells = float(n) ** k
        # pair maps (3 copies while merging), the per-task forward model (~30 complex temporaries per layer)
        # and the kept chi-square values of one task
        nbytes = 3 * 8.0 * (k * (k - 1) / 2) * n * n + min(float(args.task_size), cells) * (m * layers_eff * 16 * 30 + 64)
        check_job(args, f"inversion grid of {n}^{k} = {cells:.3g} cells at {m} periods", nbytes,
                  seconds=model_seconds(cells, m, layers_eff))
    else:
        walkers = args.walkers or max(32, 4 * k)
        steps = args.steps or 4000
        samples = float(walkers) * steps
        nbytes = samples * (k + 2) * 8.0 * 4 + 3 * 8.0 * (k * (k - 1) / 2) * n * n
        check_job(args, f"MCMC of {walkers} walkers x {steps} steps at {m} periods", nbytes,
                  seconds=model_seconds(samples, m, layers_eff))


#: Exit code of a sampler run whose convergence checks failed.
EXIT_NOT_CONVERGED = 4


def _not_converged(result, scenario, data, as_json: bool) -> int:
    """Report a sampler run that failed its convergence checks: what failed, no ranges; exit code 4."""
    d = result.diagnostics
    failures = list(d.get("failures", []))
    if as_json:
        payload = {
            "body": scenario.name, "data": data.source, "method": result.method, "converged": False,
            "failures": failures, "stopped_by": d.get("stopped_by"),
            "diagnostics": result.to_dict()["diagnostics"],
            "message": "the sampler did not converge: no ranges are reported",
        }
        print(json.dumps(payload, indent=2))
        return EXIT_NOT_CONVERGED
    lines = [
        f"{scenario.name}: inversion of {data.n_entries} measured response(s) from {data.source}",
        f"method: {d.get('sampler', result.method)}",
        "NOT CONVERGED: the sampler failed its convergence checks, so no ranges are reported. What failed:",
    ]
    lines.extend(f"  - {f}" for f in failures)
    spent = {"max_evaluations": "the budget of likelihood evaluations (--max-evaluations) was spent",
             "max_time_s": "the time budget (--max-time-s) was spent"}.get(d.get("stopped_by"), d.get("stopped_by"))
    if result.method == "mcmc":
        spent = f"{spent}, after {d['steps']:,d} steps x {d['walkers']} walkers"
    lines.append(f"stopped: {spent}")
    if d.get("criteria"):
        lines.append(f"criteria: {d['criteria']}")
    lines.append("to fix: raise --max-evaluations or --max-time-s, or fix fewer parameters / narrow the prior ranges")
    print("\n".join(lines))
    return EXIT_NOT_CONVERGED


def _fmt(x: float) -> str:
    return f"{x:.3g}"


def format_summary(result, scenario, data, n_list: int = 10) -> str:
    """The readable text summary of an inversion result."""
    k = len(result.parameters)
    lines = [
        f"{scenario.name}: inversion of {data.n_entries} measured response(s) ({data.n_data} data) from {data.source}",
        "periods (h): " + ", ".join(f"{p:g}" + (f" (n={d})" if d != 1 else "") for p, d in zip(data.period_h, data.degree)),
    ]
    if result.method == "grid":
        shape = " x ".join(str(n) for n in result.grid_points)
        refined = len((result.resolution or {}).get("levels", [])) > 1
        lines.append(
            f"method: exact posterior on a {shape} grid of equal-prior-mass cells"
            + (" (adaptively refined: only cells near the posterior mass evaluated at this level; "
               if refined else " (")
            + f"{result.n_models:,d} possible models, "
            f"{result.n_impossible:,d} physically impossible with zero prior); uniform / log-uniform priors, Gaussian likelihood"
        )
    elif result.method == "nested":
        d = result.diagnostics
        lines.append(
            f"method: {d['sampler']} ({d['iterations']:,d} iterations, {result.n_models:,d} models evaluated, "
            f"{result.n_impossible:,d} proposals physically impossible); uniform / log-uniform priors, Gaussian likelihood"
        )
    else:
        d = result.diagnostics
        lines.append(
            f"method: MCMC, {d['sampler']}, {d['walkers']} walkers x {d['steps']} steps ({result.n_models:,d} models "
            f"evaluated, {result.n_impossible:,d} proposals physically impossible); uniform / log-uniform priors, "
            "Gaussian likelihood"
        )
    fit = result.fit or {}
    pv = fit.get("p_value")
    lines.append(
        f"best fit (refined locally by least squares): chi2_min = {result.chi2_min:.3f} for {result.n_data} data and "
        f"{k} free parameter(s), {fit.get('dof', result.n_data - k)} degrees of freedom, "
        + (f"p-value {pv:.3g}" if pv is not None else "p-value undefined (no degrees of freedom)")
        + ("" if fit.get("acceptable", True) else f" < {fit['min_p_value']:g}: THE MODEL FAMILY CANNOT EXPLAIN THE DATA")
    )
    if data.full_covariance is not None:
        lines.append("data covariance: full (across periods and components), Cholesky-factored")
    if "model_error" in data.metadata:
        me = data.metadata["model_error"]
        lines.append(f"model-error covariance added: fractional {me['fractional']:g}, absolute {me['absolute']:g}")
    res = result.resolution
    if res:
        if res.get("shifts"):
            lines.append(
                "resolution check: grids " + " -> ".join("x".join(map(str, lv)) for lv in res["levels"])
                + f" (refined where the mass is); last doubling moved the 68/95 % bounds by at most "
                f"{100 * res['shifts'][-1]:.2f} % of the prior width ("
                + ("resolved, < " if res["converged"] else "NOT resolved, tolerance ")
                + f"{100 * res['tolerance']:g} %)"
            )
        else:
            lines.append(f"resolution check: not made ({res.get('stopped', '')})")
    lines.append("")
    params = result.parameters
    cols = [
        Column("parameter", "", [p.name for p in params], "s"),
        Column("unit", "", [p.unit for p in params], "s"),
        Column("prior", "", [f"{p.lo:g}-{p.hi:g} {p.scale}" for p in params], "s"),
        Column("best", "", [_fmt(result.best[p.name]) for p in params], "s"),
        Column("68 % range", "", [" - ".join(_fmt(v) for v in result.ranges[p.name]["68"]) for p in params], "s"),
        Column("95 % range", "", [" - ".join(_fmt(v) for v in result.ranges[p.name]["95"]) for p in params], "s"),
    ]
    lines.append(format_table(cols))
    lines.append(
        "ranges: equal-tailed posterior credible intervals (68 %: 16th-84th percentile, 95 %: 2.5th-97.5th) "
        "of each marginal posterior"
    )
    if result.method == "mcmc":
        d = result.diagnostics
        taus = ", ".join(f"{name} {t:.0f}" for name, t in d["autocorr_time"].items())
        worst_rhat = max(d["rhat"].values())
        least_ess = min(min(d["ess_bulk"].values()), min(d["ess_tail"].values()))
        lines.append(
            f"MCMC diagnostics: autocorrelation time (steps) {taus}; mean acceptance fraction {d['acceptance_fraction']:.2f}; "
            f"burn-in {d['burn_in']}, thin {d['thin']}; largest R-hat {worst_rhat:.4f}, smallest bulk/tail ESS "
            f"{least_ess:.0f}; converged ({d['criteria']})"
        )
    if result.method == "nested":
        d = result.diagnostics
        lines.append(
            f"nested-sampling diagnostics: stopped by its rule (remaining ln-evidence {d['delta_logz']:.3g} < "
            f"{d['dlogz']:g}); {d['likelihood_calls']:,d} likelihood calls; information {d['information_nats']:.2f} nats"
        )
    if result.log_evidence is not None:
        err = "" if result.log_evidence_err is None else f" +/- {result.log_evidence_err:.2f}"
        lines.append(
            f"log evidence ln Z = {result.log_evidence:.2f}{err} (natural log; Gaussian likelihood with its "
            "normalisation; the priors as listed; compare hypotheses with `induct compare`)"
        )
    lines.append("")
    if result.tradeoffs:
        lines.append("what the data do not separate:")
        lines.extend(f"  - {t}" for t in result.tradeoffs)
    else:
        lines.append("what the data do not separate: no strong trade-off (all |r| <= 0.7, every 95 % range within 70 % of its prior)")
    if result.notes:
        lines.append("notes:")
        lines.extend(f"  - {t}" for t in result.notes)
    lines.append("")
    two = result.two_sigma
    what = "grid cells" if result.method == "grid" else "distinct sampled models"
    lines.append(
        f"combinations that fit within 2 sigma (chi2 - chi2_min <= {two.delta_chi2:.3f}, the 95.45 % quantile of chi2 "
        f"with {k} degrees of freedom): {two.count:,d} {what}"
    )
    shown = two.rows[:n_list]
    if shown:
        cols = [Column(p.name, p.unit, [row[p.name] for row in shown], ".4g") for p in params]
        cols.append(Column("chi2", "", [row["chi2"] for row in shown], ".3f"))
        lines.append(format_table(cols))
    lines.append(f"({len(shown)} listed, {two.count - len(shown):,d} not listed)")
    lines.append("")
    lines.append(MODEL_LIMITS)
    return "\n".join(lines)
