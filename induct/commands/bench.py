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
    return p


def run(args) -> int:
    from ..bench import run_kernel_benchmark

    for name in ("model_periods", "baseline_model_periods", "repeat"):
        if getattr(args, name) < 1:
            raise ValueError(f"--{name.replace('_', '-')} must be >= 1")
    res = run_kernel_benchmark(args.model_periods, args.baseline_model_periods, args.repeat)
    if args.json:
        print(json.dumps(res.__dict__, indent=2))
        return 0
    print(f"induct bench on {platform.machine()} ({os.cpu_count()} cores), numpy kernel, one process")
    print("4-layer degree-1 models (ice / ocean / mantle / iron core), periods 1-1000 h")
    print(f"  kernel:   {res.model_periods:>10,d} model-periods in {res.seconds:8.3f} s  -> {res.throughput:12,.0f} model-periods/s")
    print(f"  peak working memory of one call over all model-periods: {res.peak_memory_mb:.1f} MB (chunked)")
    print(
        f"  baseline: {res.baseline_model_periods:>10,d} model-periods in {res.baseline_seconds:8.3f} s  -> "
        f"{res.baseline_throughput:12,.0f} model-periods/s (same recursion, scipy ive/kve per layer)"
    )
    print(f"  speed-up over baseline: {res.speedup:.1f}x; largest relative difference kernel vs baseline: {res.max_relative_difference:.1e}")
    return 0
