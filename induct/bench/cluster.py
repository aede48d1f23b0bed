"""Benchmark of the chunked execution layer: one process versus a local Dask cluster.

The workload is the inversion's own grid task (:class:`induct.inversion.grid.GridTask`:
minimum chi-square, its cell, marginal and pairwise posterior masses) over variants of
a 4-layer body; only the small partial results travel back.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from induct.inversion.grid import GridPartial, GridTask, combine_partials, make_grid_setup
from induct.inversion.priors import ParameterMap
from induct.io.measurements import Measurements
from induct.model.parameters import Parameter

__all__ = [
    "bench_interior_model",
    "bench_misfit_task",
    "misfit_difference",
    "DistributedBenchResult",
    "run_distributed_benchmark",
]



def bench_interior_model():
    """A 4-layer fictional moon for the distributed benchmark (radius 1540 km).

    Ice shell 20 km (1e-6 S/m), ocean 100 km (3 S/m), mantle 900 km (0.01 S/m),
    iron core filling the centre (1e5 S/m).
    """
    from induct.model.interior import InteriorModel, Layer

    layers = [
        Layer("ice", 1e-6, 20.0),
        Layer("ocean", 3.0, 100.0),
        Layer("mantle", 1e-2, 900.0),
        Layer("core", 1e5, None),
    ]
    return InteriorModel(1540.0, layers, name="Ilmare")


def bench_misfit_task(models: int, periods: int = 4, seed: int = 20261201) -> GridTask:
    """The inversion's own grid task (:class:`induct.inversion.grid.GridTask`) on :func:`bench_interior_model`.

    About ``models`` grid cells: ice thickness 5-60 km (10 cells), ocean thickness 10-200 km (10),
    ocean conductivity 0.1-30 S/m (log-uniform, ceil(models / 100) cells); ``periods`` periods
    log-spaced over 1-1000 h. The "measured" responses are those of the base model with Gaussian
    noise of 0.01 on their real and imaginary parts (fixed seed).
    """
    if models < 1 or periods < 1:
        raise ValueError(f"models and periods must be >= 1, got {models} and {periods}")
    model = bench_interior_model()
    period_h = np.logspace(0, 3, periods)
    rng = np.random.default_rng(seed)
    sigma = 0.01
    observed = model.response(periods_h=period_h).response + sigma * (
        rng.standard_normal(periods) + 1j * rng.standard_normal(periods))
    measurements = Measurements(
        period_h=period_h,
        degree=np.ones(periods, dtype=int),
        polar=np.zeros(periods, dtype=bool),
        values=np.column_stack([observed.real, observed.imag]),
        covariance=np.broadcast_to(np.eye(2) * sigma**2, (periods, 2, 2)).copy(),
        source="benchmark",
    )
    params = [
        Parameter("ice.thickness_km", 5.0, 60.0),
        Parameter("ocean.thickness_km", 10.0, 200.0),
        Parameter("ocean.conductivity_S_per_m", 0.1, 30.0, "log"),
    ]
    setup = make_grid_setup(ParameterMap(model, params), measurements, (10, 10, -(-models // 100)))
    return GridTask(setup)


def misfit_difference(a: GridPartial, b: GridPartial) -> float:
    """Largest relative difference between two grid reductions (inf if the counts or the best cell differ)."""
    if (a.n_valid, a.n_cells, a.best_index) != (b.n_valid, b.n_cells, b.best_index):
        return np.inf
    worst = abs(a.ref - b.ref) / max(abs(a.ref), np.finfo(float).tiny)
    for x, y in list(zip(a.marginals, b.marginals)) + [(a.maps[k], b.maps[k]) for k in a.maps]:
        scale = np.maximum(np.abs(x), np.finfo(float).tiny)
        worst = max(worst, float(np.max(np.abs(x - y) / scale)))
    return float(worst)


@dataclass
class DistributedBenchResult:
    """Measured figures of :func:`run_distributed_benchmark` (seconds are wall-clock, best of the repeats)."""

    workers: int
    models: int
    model_periods: int
    chunk_models: int
    tasks: int
    single_seconds: float
    single_throughput: float
    cluster_seconds: float
    cluster_throughput: float
    speedup: float
    startup_seconds: float
    small_models: int
    small_single_seconds: float
    small_cluster_seconds: float
    small_overhead_seconds: float
    split_tasks: int
    split_single_seconds: float
    split_cluster_seconds: float
    max_relative_difference: float


def _timed(func, repeat: int):
    """Best wall-clock time of ``repeat`` calls (s) and the last call's result."""
    best, out = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = func()
        best = min(best, time.perf_counter() - t0)
    return best, out


def run_distributed_benchmark(
    model_periods: int = 20_000_000,
    workers: int = 2,
    *,
    small_models: int = 10_000,
    chunk_models: int = 65_536,
    periods: int = 4,
    repeat: int = 1,
) -> DistributedBenchResult:
    """Throughput of a grid-misfit reduction in one process and on a local Dask cluster.

    The inversion's grid task (:func:`bench_misfit_task` (``model_periods / periods`` models,
    ``periods`` periods each, chunks of ``chunk_models`` models) runs through
    :func:`induct.parallel.execution.run_reduction` in-process and on a local cluster
    of ``workers`` single-threaded worker processes (started once; its
    start-up time is reported apart). The small run (``small_models``
    models, one task) shows the fixed cost of going through the cluster, and
    the same grid cut into about 100 tasks the cost per task. Throughput is
    model-periods per second.

    Raises
    ------
    ImportError
        If dask[distributed] is not installed.
    """
    from induct.parallel.dask_backend import DaskBackend
    from induct.parallel.execution import InProcess, run_reduction

    for name, value in (("model_periods", model_periods), ("workers", workers), ("small_models", small_models),
                        ("chunk_models", chunk_models), ("periods", periods), ("repeat", repeat)):
        if value < 1:
            raise ValueError(f"{name} must be >= 1, got {value}")
    big = bench_misfit_task(-(-model_periods // periods), periods)
    small = bench_misfit_task(small_models, periods)

    split = max(1, small.size // 100)  # the small grid again, as 100 tasks: the cost per task

    def run(task, backend, chunk=chunk_models):
        return run_reduction(task, task.size, chunk_size=chunk, combine=combine_partials, backend=backend)

    local = InProcess()
    run(small, local)  # warm caches
    small_single, _ = _timed(lambda: run(small, local), 3)
    split_single, _ = _timed(lambda: run(small, local, split), 3)
    single, reference = _timed(lambda: run(big, local), repeat)
    t0 = time.perf_counter()
    with DaskBackend(workers=workers) as backend:
        backend.client.wait_for_workers(workers)
        startup = time.perf_counter() - t0
        run(small, backend)  # the workers import induct on their first task
        small_cluster, _ = _timed(lambda: run(small, backend), 3)
        split_cluster, _ = _timed(lambda: run(small, backend, split), 3)
        cluster, result = _timed(lambda: run(big, backend), repeat)
    mp = big.size * periods
    return DistributedBenchResult(
        workers=workers,
        models=big.size,
        model_periods=mp,
        chunk_models=chunk_models,
        tasks=-(-big.size // chunk_models),
        single_seconds=single,
        single_throughput=mp / single,
        cluster_seconds=cluster,
        cluster_throughput=mp / cluster,
        speedup=single / cluster,
        startup_seconds=startup,
        small_models=small.size,
        small_single_seconds=small_single,
        small_cluster_seconds=small_cluster,
        small_overhead_seconds=small_cluster - small_single,
        split_tasks=-(-small.size // split),
        split_single_seconds=split_single,
        split_cluster_seconds=split_cluster,
        max_relative_difference=misfit_difference(reference, result),
    )
