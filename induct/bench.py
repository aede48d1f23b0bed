"""Benchmarks: kernel throughput, peak memory, and the ratio to a scipy-based baseline.

The baseline is a straightforward vectorised implementation of the same rho
recursion as :mod:`induct.kernel` that calls scipy's exponentially scaled
modified Bessel functions (``scipy.special.ive``/``kve``, AMOS) for every layer
boundary. It is also an independent evaluation of the special functions, so
the benchmark reports the largest difference between the two.
"""

from __future__ import annotations

import time
import tracemalloc
from dataclasses import dataclass

import numpy as np
from scipy import special

from .constants import MU0, SECONDS_PER_HOUR
from .response import transfer

__all__ = ["benchmark_models", "scipy_baseline", "BenchResult", "run_kernel_benchmark"]


def benchmark_models(count: int, seed: int = 20261201):
    """Random realistic 4-layer bodies and periods for benchmarks.

    Ice shell 5-60 km (1e-6 S/m) over an ocean 10-200 km (0.1-30 S/m, log-uniform),
    a mantle (1e-4-1 S/m) and an iron core of radius 300-700 km (1e5 S/m); body
    radius 1540 km; periods 1-1000 h (log-uniform).

    Returns
    -------
    radii_m, conductivity_S_per_m : ndarray, shape (count, 4)
    period_s : ndarray, shape (count,)
    """
    rng = np.random.default_rng(seed)
    radius = 1540e3
    ice = rng.uniform(5e3, 60e3, count)
    ocean = rng.uniform(10e3, 200e3, count)
    core = rng.uniform(300e3, 700e3, count)
    radii = np.stack([core, radius - ice - ocean, radius - ice, np.full(count, radius)], axis=-1)
    sigma = np.stack(
        [
            np.full(count, 1e5),
            10.0 ** rng.uniform(-4, 0, count),
            10.0 ** rng.uniform(-1, np.log10(30), count),
            np.full(count, 1e-6),
        ],
        axis=-1,
    )
    period = 10.0 ** rng.uniform(0, 3, count) * SECONDS_PER_HOUR
    return radii, sigma, period


def scipy_baseline(radii_m, conductivity_S_per_m, period_s, degree: int = 1) -> np.ndarray:
    """Same recursion as the kernel, with scipy's scaled Bessel functions at every boundary.

    Shapes as for :func:`induct.kernel.layered_response` with flat inputs
    (M, L), (M, L), (M,). Intended for benchmarks and cross-checks only.
    """
    n = int(degree)
    two_n1 = 2.0 * n + 1.0
    radii = np.asarray(radii_m, dtype=float)
    sigma = np.asarray(conductivity_S_per_m, dtype=float)
    omega = 2.0 * np.pi / np.asarray(period_s, dtype=float)
    m, nlayer = radii.shape
    rho = np.zeros(m, dtype=complex)

    def alpha_beta(z):
        alpha = z * special.ive(n + 1.5, z) / special.ive(n + 0.5, z)
        beta = -z * special.kve(n - 0.5, z) / special.kve(n + 0.5, z)
        return alpha, beta

    for j in range(nlayer):
        s = sigma[:, j]
        kappa = np.sqrt(1j * omega * MU0 * s)
        if j == 0:
            cond = s > 0
            zb = kappa[cond] * radii[cond, 0]
            ab, _ = alpha_beta(zb)
            rho[cond] = -ab / (two_n1 + ab)
            continue
        ins = s == 0
        rho[ins] *= (radii[ins, j - 1] / radii[ins, j]) ** (2 * n + 1)
        cond = ~ins
        za = kappa[cond] * radii[cond, j - 1]
        zb = kappa[cond] * radii[cond, j]
        aa, ba = alpha_beta(za)
        ab, bb = alpha_beta(zb)
        r = rho[cond]
        t_a = (aa * (1 + r) + two_n1 * r) / (two_n1 - ba * (1 + r))
        # kve(z) = K(z) exp(z) but ive(z) = I(z) exp(-|Re z|): the leftover exponentials differ.
        dz = zb - za
        with np.errstate(under="ignore"):
            d = (
                np.exp(-dz - dz.real)
                * (special.kve(n + 0.5, zb) / special.kve(n + 0.5, za))
                * (special.ive(n + 0.5, za) / special.ive(n + 0.5, zb))
            )
        t_b = t_a * d
        rho[cond] = (-ab + t_b * (two_n1 - bb)) / (two_n1 + ab + t_b * bb)
    return -rho


@dataclass
class BenchResult:
    """Measured kernel figures (see :func:`run_kernel_benchmark`)."""

    model_periods: int
    seconds: float
    throughput: float
    peak_memory_mb: float
    baseline_model_periods: int
    baseline_seconds: float
    baseline_throughput: float
    speedup: float
    max_relative_difference: float


def _best_time(func, repeat: int) -> float:
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - t0)
    return best


def run_kernel_benchmark(count: int = 2_000_000, baseline_count: int = 20_000, repeat: int = 3) -> BenchResult:
    """Time the kernel (through :func:`induct.transfer`) and the scipy baseline on 4-layer degree-1 models.

    Throughput is model-periods per second (best of ``repeat``); peak memory
    is the largest traced allocation during one kernel call over all
    ``count`` model-periods (tracemalloc, numpy buffers included).
    """
    radii, sigma, period = benchmark_models(count)
    seconds = _best_time(lambda: transfer(radii, sigma, period), repeat)
    tracemalloc.start()
    base_current, _ = tracemalloc.get_traced_memory()
    fast = transfer(radii, sigma, period)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    out_bytes = fast.nbytes
    b = slice(0, baseline_count)
    baseline_seconds = _best_time(lambda: scipy_baseline(radii[b], sigma[b], period[b]), 1)
    ref = scipy_baseline(radii[b], sigma[b], period[b])
    diff = float(np.max(np.abs(fast[b] - ref) / np.abs(ref)))
    throughput = count / seconds
    base_tp = baseline_count / baseline_seconds
    return BenchResult(
        model_periods=count,
        seconds=seconds,
        throughput=throughput,
        peak_memory_mb=(peak - base_current - out_bytes) / 1e6,
        baseline_model_periods=baseline_count,
        baseline_seconds=baseline_seconds,
        baseline_throughput=base_tp,
        speedup=throughput / base_tp,
        max_relative_difference=diff,
    )
