"""``induct bench``: measured throughput and memory of the numerical engine."""

from __future__ import annotations

import json
import os
import platform


def register(subparsers):
    p = subparsers.add_parser(
        "bench",
        help="measure kernel throughput, peak memory and the speed-up over a scipy-based baseline",
        description=(
            "Time the response kernel on random realistic 4-layer, degree-1 models (model-periods per second), "
            "its peak working memory, and a straightforward scipy-Bessel implementation of the same recursion."
        ),
    )
    p.add_argument("--model-periods", type=int, default=2_000_000, help="model-periods for the kernel (default 2e6)")
    p.add_argument("--baseline-model-periods", type=int, default=20_000, help="model-periods for the baseline (default 2e4)")
    p.add_argument("--repeat", type=int, default=3, help="timing repeats; the best is reported (default 3)")
    p.add_argument("--json", action="store_true", help="print the figures as JSON")
    p.add_argument("--map", action="store_true", help="instead: time a feasibility map (Ilmare, ice thickness x ocean conductivity, one period)")
    p.add_argument("--map-size", type=int, default=400, metavar="N", help="grid points per axis for --map (default 400: 160,000 cells)")
    p.add_argument(
        "--dask-workers", type=int, default=None, metavar="N",
        help="instead: time a grid-misfit reduction in one process and on a local Dask cluster of N workers "
        "(needs induct[dask]), and the overhead of a small grid",
    )
    p.add_argument(
        "--dask-model-periods", type=int, default=20_000_000,
        help="model-periods of the --dask-workers run (default 2e7)",
    )
    p.add_argument("--inversion", action="store_true",
                   help="instead: time a 3-parameter grid inversion (Ilmare, 3 periods) and its peak memory")
    p.add_argument("--inversion-grid", type=int, default=120, metavar="N",
                   help="grid points per axis for --inversion (default 120: 5.2 million model-periods)")
    p.add_argument("--salinity", action="store_true",
                   help="instead: time a salinity x ice thickness x ocean thickness grid through the chemistry ocean "
                        "(ilmare_brine, 3 periods) with the tabulated conductivity, against the exact path")
    p.add_argument("--salinity-grid", type=int, default=60, metavar="N",
                   help="grid points per axis for --salinity (default 60: 216,000 cells)")
    p.add_argument("--flyby", action="store_true",
                   help="instead: time the induced field along a trajectory (Ilmare, its 5 driving lines)")
    p.add_argument("--flyby-points", type=int, default=1_000_000, metavar="N",
                   help="trajectory points for --flyby (default 1e6)")
    p.add_argument("--plan", action="store_true",
                   help="instead: time flyby planning (Ilmare, random candidates, greedy choice of 5)")
    p.add_argument("--plan-candidates", type=int, default=1000, metavar="N", help="candidates for --plan (default 1000)")
    p.add_argument("--plan-samples", type=int, default=600, metavar="N", help="samples per candidate for --plan (default 600)")
    return p


def _printed_json(args, res) -> bool:
    """With ``--json``, print the result's fields as JSON and say so."""
    if args.json:
        print(json.dumps(res.__dict__, indent=2))
    return bool(args.json)


def _header(what: str, rest: str) -> str:
    """First line of every benchmark report: the option, the machine and how it ran."""
    return f"induct bench{what} on {platform.machine()} ({os.cpu_count()} cores){rest}"


def run(args) -> int:
    if getattr(args, "plan", False):
        return _run_plan(args)
    if getattr(args, "flyby", False):
        return _run_flyby(args)
    if getattr(args, "salinity", False):
        return _run_salinity(args)
    if getattr(args, "map", False):
        return _run_map(args)
    if getattr(args, "inversion", False):
        return _run_inversion(args)
    if getattr(args, "dask_workers", None) is not None:
        return _run_dask(args)
    from induct.bench.core import run_kernel_benchmark

    for name in ("model_periods", "baseline_model_periods", "repeat"):
        if getattr(args, name) < 1:
            raise ValueError(f"--{name.replace('_', '-')} must be >= 1")
    res = run_kernel_benchmark(args.model_periods, args.baseline_model_periods, args.repeat)
    if _printed_json(args, res):
        return 0
    print(_header("", ", numpy kernel, one process"))
    print("4-layer degree-1 models (ice / ocean / mantle / iron core), periods 1-1000 h")
    print(f"  kernel:   {res.model_periods:>10,d} model-periods in {res.seconds:8.3f} s  -> {res.throughput:12,.0f} model-periods/s")
    print(f"  peak working memory of one call over all model-periods: {res.peak_memory_mb:.1f} MB (chunked)")
    print(
        f"  baseline: {res.baseline_model_periods:>10,d} model-periods in {res.baseline_seconds:8.3f} s  -> "
        f"{res.baseline_throughput:12,.0f} model-periods/s (same recursion, scipy ive/kve per layer)"
    )
    print(f"  speed-up over baseline: {res.speedup:.1f}x; largest relative difference kernel vs baseline: {res.max_relative_difference:.1e}")
    return 0


def _run_salinity(args) -> int:
    from induct.bench.salinity import run_salinity_benchmark

    if args.salinity_grid < 2:
        raise ValueError(f"--salinity-grid must be >= 2 points per axis, got {args.salinity_grid}")
    res = run_salinity_benchmark(args.salinity_grid, progress=not args.json)
    if _printed_json(args, res):
        return 0
    n = res.grid_points
    print(_header(" --salinity", ", numpy kernel, one process"))
    print(f"  ilmare_brine (MgSO4 ocean, {res.sublayers} sub-layers): salinity x ice thickness x ocean thickness, "
          f"{n} x {n} x {n} = {res.cells:,d} cells x {res.periods} periods")
    print(f"  conductivity table: {' x '.join(map(str, res.table_nodes))} nodes built in {res.table_seconds:.1f} s, "
          f"max relative error {res.table_max_rel_error:.2g}")
    print(f"  grid (forward model, chi-square, marginals): {res.grid_seconds:.1f} s "
          f"({res.grid_seconds / res.cells * 1e6:.0f} us per cell); total {res.grid_seconds + res.table_seconds:.1f} s")
    print(f"  exact path (brine model at every sub-layer): {res.seconds_per_cell_exact * 1e6:.0f} us per cell on "
          f"{res.exact_sample} cells -> about {res.seconds_per_cell_exact * res.cells:.0f} s for the grid")
    print(f"  largest |R_tabulated - R_exact| on those cells: {res.max_response_difference:.1e}")
    return 0


def _run_inversion(args) -> int:
    from induct.bench.core import run_inversion_benchmark

    if args.inversion_grid < 2:
        raise ValueError(f"--inversion-grid must be >= 2 points per axis, got {args.inversion_grid}")
    res = run_inversion_benchmark(args.inversion_grid, progress=not args.json)
    if _printed_json(args, res):
        return 0
    n = res.grid_points
    print(_header(" --inversion", ", numpy kernel, one process"))
    print(f"  grid inversion of Ilmare: {res.parameters} parameters, {n} x {n} x {n} grid, {res.periods} periods")
    print(f"  {res.model_periods:,d} model-periods in {res.seconds:.2f} s -> {res.throughput:,.0f} model-periods/s (one run, wall clock)")
    print(f"  peak memory: {res.peak_rss_mb:.0f} MB resident (process peak, ru_maxrss), {res.rss_increase_mb:.0f} MB above the resident size before the run")
    print(f"  memory measured with {res.memory_method}")
    return 0


def _run_dask(args) -> int:
    """``--dask-workers N``: one process against a local Dask cluster on the same grid-misfit reduction."""
    from induct.bench.cluster import run_distributed_benchmark

    if args.dask_workers < 1:
        raise ValueError(f"--dask-workers must be >= 1, got {args.dask_workers}")
    if args.dask_model_periods < 1:
        raise ValueError(f"--dask-model-periods must be >= 1, got {args.dask_model_periods}")
    res = run_distributed_benchmark(args.dask_model_periods, args.dask_workers)
    if _printed_json(args, res):
        return 0
    print(_header("", ": grid misfit (min chi-square, histograms)"))
    print(f"  {res.models:,d} models x {res.model_periods // res.models} periods in {res.tasks} tasks of {res.chunk_models:,d} models")
    print(f"  one process:      {res.single_seconds:8.2f} s  -> {res.single_throughput:12,.0f} model-periods/s")
    print(
        f"  {res.workers} Dask workers:   {res.cluster_seconds:8.2f} s  -> {res.cluster_throughput:12,.0f} model-periods/s "
        f"({res.speedup:.2f}x; cluster start-up {res.startup_seconds:.1f} s not included)"
    )
    print(
        f"  small grid ({res.small_models:,d} models, one task): {res.small_single_seconds * 1e3:.0f} ms in one process, "
        f"{res.small_cluster_seconds * 1e3:.0f} ms on the cluster (overhead {res.small_overhead_seconds * 1e3:+.0f} ms)"
    )
    print(
        f"  the same grid as {res.split_tasks} tasks: {res.split_single_seconds * 1e3:.0f} ms in one process, "
        f"{res.split_cluster_seconds * 1e3:.0f} ms on the cluster"
    )
    print(f"  largest relative difference between the two results: {res.max_relative_difference:.1e}")
    return 0


def _run_map(args) -> int:
    """``--map``: time a feasibility map of ``--map-size`` squared cells at one period."""
    from induct.bench.core import run_map_benchmark

    if args.map_size < 2 or args.repeat < 1:
        raise ValueError(f"--map-size must be >= 2 and --repeat >= 1, got {args.map_size} and {args.repeat}")
    res = run_map_benchmark(args.map_size, args.repeat)
    if _printed_json(args, res):
        return 0
    print(_header(" --map", ", numpy kernel, one process"))
    print(f"  Ilmare: ice shell thickness x ocean conductivity, {res.nx} x {res.ny} = {res.cells:,d} cells, {res.quantity} at {res.period_h:g} h")
    print(f"  map computation: {res.seconds:.3f} s (best of {args.repeat}; first call {res.first_seconds:.3f} s) -> {res.cells_per_second:,.0f} cells/s")
    print(f"  writing PNG, PDF, CSV and NetCDF once: {res.output_seconds:.2f} s")
    return 0


def _run_flyby(args) -> int:
    """``--flyby``: time the induced field at ``--flyby-points`` positions and times."""
    from induct.bench.core import run_flyby_benchmark

    if args.flyby_points < 1 or args.repeat < 1:
        raise ValueError(f"--flyby-points and --repeat must be >= 1, got {args.flyby_points} and {args.repeat}")
    res = run_flyby_benchmark(args.flyby_points, args.repeat)
    if _printed_json(args, res):
        return 0
    print(_header(" --flyby", ", numpy, one process"))
    print(f"  Ilmare: induced field at {res.points:,d} trajectory points x {res.periods} periods")
    print(f"  checked induced_field: {res.seconds:.3f} s (best of {args.repeat}) -> {res.points_per_second:,.0f} points/s")
    print(f"  unchecked kernel induced_field_nT: {res.kernel_seconds:.3f} s")
    return 0


def _run_plan(args) -> int:
    """``--plan``: time :func:`induct.planning.design.plan_flybys` on random candidates (3 parameters)."""
    from induct.bench.plan import benchmark_plan

    if args.plan_candidates < 1 or args.plan_samples < 2 or args.repeat < 1:
        raise ValueError(f"--plan-candidates >= 1, --plan-samples >= 2 and --repeat >= 1 needed, got "
                         f"{args.plan_candidates}, {args.plan_samples} and {args.repeat}")
    res = benchmark_plan(args.plan_candidates, args.plan_samples, 3, repeat=args.repeat)
    if args.json:
        print(json.dumps(res, indent=2))
        return 0
    t = res["timings_s"]
    print(_header(" --plan", ", numpy, one process"))
    print(f"  {res['scenario']}: {res['n_candidates']:,d} candidates x {res['n_samples']} samples x {res['n_parameters']} "
          f"parameters, {res['n_lines']} driving lines, greedy choice of {res['choose']} (best of {args.repeat})")
    print(f"  plan_flybys total: {t['plan_flybys']:.3f} s")
    print(f"    derivatives {t['derivatives']:.3f} s, Gram matrices {t['grams']:.3f} s, Fisher + widths "
          f"{t['fisher_and_widths']:.3f} s, greedy selection {t['selection']:.3f} s")
    print(f"  generating the candidate tracks: {t['generate_candidates']:.3f} s")
    return 0
