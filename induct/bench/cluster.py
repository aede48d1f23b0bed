"""Benchmark of the chunked execution layer: one process versus a local Dask cluster.

The workload is a grid-misfit reduction (minimum chi-square, its index and a
chi-square histogram) over random variants of a 4-layer body, the same kind of
work as an inversion grid; only the small partial results travel back.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from induct.constants import SECONDS_PER_HOUR

__all__ = [
    "bench_interior_model",
    "MisfitPartial",
    "combine_misfit",
    "GridMisfitTask",
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


@dataclass
class MisfitPartial:
    """Partial reduction of :class:`GridMisfitTask` over some grid points (merge with :func:`combine_misfit`).

    Attributes
    ----------
    count, invalid : int
        Valid grid points, and points whose layers leave the fill layer no room.
    min_chi2 : float
        Smallest chi-square (inf if no valid point).
    argmin : int
        Flat grid index of ``min_chi2`` (the smallest index on ties; -1 if none).
    chi2_hist : ndarray of int64, shape (B,)
        Counts of chi-square in the task's bins.
    marginals : tuple of ndarray, shape (n_k,) each
        Per axis k, the sum of exp(-chi2/2) over all other axes (unnormalised marginal likelihood).
    """

    count: int
    invalid: int
    min_chi2: float
    argmin: int
    chi2_hist: np.ndarray
    marginals: tuple


def combine_misfit(a: MisfitPartial, b: MisfitPartial) -> MisfitPartial:
    """Merge two partial reductions (associative and commutative up to rounding of the marginal sums)."""
    if (b.min_chi2, b.argmin if b.argmin >= 0 else np.inf) < (a.min_chi2, a.argmin if a.argmin >= 0 else np.inf):
        best, arg = b.min_chi2, b.argmin
    else:
        best, arg = a.min_chi2, a.argmin
    return MisfitPartial(
        count=a.count + b.count,
        invalid=a.invalid + b.invalid,
        min_chi2=best,
        argmin=arg,
        chi2_hist=a.chi2_hist + b.chi2_hist,
        marginals=tuple(x + y for x, y in zip(a.marginals, b.marginals)),
    )


class GridMisfitTask:
    """Task for :func:`induct.parallel.execution.run_reduction`: chi-square of a grid of model variants.

    Flat index i is the grid point ``numpy.unravel_index(i, shape)`` (C order)
    of the axes; each task evaluates R_n of its points at the P periods
    through :meth:`InteriorModel.sweep_response` and returns a
    :class:`MisfitPartial`, never the responses themselves.

    Parameters
    ----------
    model : InteriorModel
        Base interior.
    axes : mapping of str to array_like
        ``"LAYER.FIELD"`` -> grid values (shape (n_k,) each).
    periods_s : array_like, shape (P,)
        Periods (s).
    observed : array_like of complex, shape (P,)
        Measured R_n.
    sigma : array_like, shape (P,)
        Standard error of the real and of the imaginary part of R_n (dimensionless), > 0.
    chi2_edges : array_like, shape (B + 1,)
        Histogram bin edges of chi-square, increasing.
    degree : int
        Degree n.
    """

    def __init__(self, model, axes, periods_s, observed, sigma, chi2_edges, degree: int = 1):
        self.model = model
        self.names = tuple(axes)
        self.axes = tuple(np.asarray(axes[k], dtype=float) for k in self.names)
        self.shape = tuple(a.size for a in self.axes)
        self.periods_s = np.asarray(periods_s, dtype=float)
        self.observed = np.asarray(observed, dtype=complex)
        self.sigma = np.asarray(sigma, dtype=float)
        self.chi2_edges = np.asarray(chi2_edges, dtype=float)
        self.degree = int(degree)

    @property
    def size(self) -> int:
        """Number of grid points."""
        return int(np.prod(self.shape))

    def chi2(self, start: int, stop: int):
        """Flat indices (shape (M,)) and chi-square (shape (M,), NaN where invalid) of points start..stop-1."""
        flat = np.arange(start, stop)
        index = np.unravel_index(flat, self.shape)
        values = {name: axis[i] for name, axis, i in zip(self.names, self.axes, index)}
        r = self.model.sweep_response(values, self.periods_s, self.degree)
        return flat, np.sum(np.abs(r - self.observed) ** 2 / self.sigma**2, axis=-1)

    def __call__(self, start: int, stop: int) -> MisfitPartial:
        flat, chi2 = self.chi2(start, stop)
        ok = np.isfinite(chi2)
        index = np.unravel_index(flat[ok], self.shape)
        good = chi2[ok]
        weight = np.exp(-0.5 * good)
        if good.size:
            k = int(np.argmin(good))
            best, arg = float(good[k]), int(flat[ok][k])
        else:
            best, arg = np.inf, -1
        return MisfitPartial(
            count=int(good.size),
            invalid=int(flat.size - good.size),
            min_chi2=best,
            argmin=arg,
            chi2_hist=np.histogram(good, self.chi2_edges)[0].astype(np.int64),
            marginals=tuple(np.bincount(i, weights=weight, minlength=n) for i, n in zip(index, self.shape)),
        )


def bench_misfit_task(models: int, periods: int = 4, seed: int = 20261201) -> GridMisfitTask:
    """A :class:`GridMisfitTask` on :func:`bench_interior_model` with about ``models`` grid points.

    Axes: ice thickness 5-60 km (10 values), ocean thickness 10-200 km (10),
    ocean conductivity 0.1-30 S/m (log-spaced, ceil(models / 100) values);
    ``periods`` periods log-spaced over 1-1000 h. The "measured" responses are
    those of the base model with Gaussian noise of 0.01 (fixed seed).
    """
    if models < 1 or periods < 1:
        raise ValueError(f"models and periods must be >= 1, got {models} and {periods}")
    model = bench_interior_model()
    periods_s = np.logspace(0, 3, periods) * SECONDS_PER_HOUR
    rng = np.random.default_rng(seed)
    sigma = np.full(periods, 0.01)
    observed = model.response(periods_s).response + sigma * (rng.standard_normal(periods) + 1j * rng.standard_normal(periods))
    axes = {
        "ice.thickness_km": np.linspace(5.0, 60.0, 10),
        "ocean.thickness_km": np.linspace(10.0, 200.0, 10),
        "ocean.conductivity_S_per_m": np.logspace(-1, np.log10(30.0), -(-models // 100)),
    }
    edges = np.concatenate([[0.0], np.logspace(-1, 6, 57), [np.inf]])
    return GridMisfitTask(model, axes, periods_s, observed, sigma, edges)


def misfit_difference(a: MisfitPartial, b: MisfitPartial) -> float:
    """Largest relative difference between two reductions (inf if counts, histogram or best index differ)."""
    if (a.count, a.invalid, a.argmin) != (b.count, b.invalid, b.argmin) or not np.array_equal(a.chi2_hist, b.chi2_hist):
        return np.inf
    worst = abs(a.min_chi2 - b.min_chi2) / max(abs(a.min_chi2), np.finfo(float).tiny)
    for x, y in zip(a.marginals, b.marginals):
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

    The same :class:`GridMisfitTask` (``model_periods / periods`` models,
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
        return run_reduction(task, task.size, chunk_size=chunk, combine=combine_misfit, backend=backend)

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
