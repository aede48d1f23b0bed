"""Benchmarks: kernel throughput, peak memory, and the ratio to a scipy-based baseline.

The baseline is a straightforward vectorised implementation of the same rho
recursion as :mod:`induct.model.kernel` that calls scipy's exponentially scaled
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

from induct.constants import MU0, SECONDS_PER_HOUR
from induct.model.response import transfer

__all__ = [
    "benchmark_models",
    "scipy_baseline",
    "BenchResult",
    "run_kernel_benchmark",
    "InversionBenchResult",
    "run_inversion_benchmark",
    "MapBenchResult",
    "run_map_benchmark",
    "FlybyBenchResult",
    "run_flyby_benchmark",
]


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

    Shapes as for :func:`induct.model.kernel.layered_response` with flat inputs
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


# --------------------------------------------------------------------------- inversion benchmark
@dataclass
class InversionBenchResult:
    """Measured figures of a grid inversion (see :func:`run_inversion_benchmark`)."""

    grid_points: int
    parameters: int
    periods: int
    model_periods: int
    seconds: float
    throughput: float
    peak_rss_mb: float
    rss_increase_mb: float
    memory_method: str
    chi2_min: float


def _current_rss_mb() -> float:
    """Resident set size of this process now (MB), from /proc/self/statm (Linux); NaN elsewhere."""
    import os

    try:
        with open("/proc/self/statm") as fh:
            pages = int(fh.read().split()[1])
        return pages * os.sysconf("SC_PAGE_SIZE") / 1e6
    except (OSError, ValueError, IndexError):  # pragma: no cover - non-Linux
        return float("nan")


def _peak_rss_mb() -> float:
    """Peak resident set size of this process so far (MB): getrusage ru_maxrss (kB on Linux)."""
    import resource
    import sys

    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return peak / 1e6 if sys.platform == "darwin" else peak / 1e3


def run_inversion_benchmark(grid_points: int = 120, progress: bool = False) -> InversionBenchResult:
    """Time a 3-parameter grid inversion of the bundled scenario Ilmare at its three periods.

    Free parameters: ice-shell thickness 1-60 km, ocean thickness 5-250 km
    (uniform) and ocean conductivity 0.05-30 S/m (log-uniform); data: the
    scenario's own responses with amplitude sigma 0.02 and phase sigma 1.5 deg.
    The whole :func:`induct.inversion.invert` call is timed once (forward
    model, chi-square, marginal histograms, 2-D maps, summary).

    Memory: the process's peak resident set size (``resource.getrusage``
    ``ru_maxrss``) after the run, and its increase over the resident set size
    just before the run (``/proc/self/statm``). The peak includes the Python
    interpreter and the imported libraries.
    """
    from induct.inversion.grid import invert
    from induct.io.measurements import parse_measurements
    from induct.io.scenario import load_scenario

    sc = load_scenario("ilmare")
    r = sc.model.response(periods_h=sc.periods_h)
    doc = {
        "response": [
            {"period_h": float(p), "amplitude": float(a), "amplitude_sigma": 0.02,
             "phase_lag_deg": float(ph), "phase_lag_sigma_deg": 1.5}
            for p, a, ph in zip(sc.periods_h, r.amplitude, r.phase_lag_deg)
        ]
    }
    data = parse_measurements(doc, source="benchmark")
    table = {
        "ice shell.thickness_km": {"range": [1.0, 60.0]},
        "ocean.thickness_km": {"range": [5.0, 250.0]},
        "ocean.conductivity_S_per_m": {"range": [0.05, 30.0], "scale": "log"},
    }
    before = _current_rss_mb()
    t0 = time.perf_counter()
    result = invert(sc.model, data, table, sampler="grid", grid_points=grid_points, progress=progress, refine=False)
    seconds = time.perf_counter() - t0
    peak = _peak_rss_mb()
    model_periods = grid_points**3 * data.n_entries
    return InversionBenchResult(
        grid_points=grid_points,
        parameters=3,
        periods=data.n_entries,
        model_periods=model_periods,
        seconds=seconds,
        throughput=model_periods / seconds,
        peak_rss_mb=peak,
        rss_increase_mb=peak - before,
        memory_method="resource.getrusage ru_maxrss (process peak) minus /proc/self/statm RSS before the run",
        chi2_min=result.chi2_min,
    )


# --------------------------------------------------------------------------- feasibility-map benchmark
@dataclass
class MapBenchResult:
    """Measured time of a feasibility map (see :func:`run_map_benchmark`)."""

    nx: int
    ny: int
    cells: int
    period_h: float
    quantity: str
    first_seconds: float
    seconds: float
    cells_per_second: float
    output_seconds: float


def run_map_benchmark(size: int = 400, repeat: int = 3, quantity: str = "amplitude", outputs: bool = True) -> MapBenchResult:
    """Time :func:`induct.planning.maps.feasibility_map` on a ``size`` x ``size`` grid at one period.

    The bundled scenario Ilmare, ice-shell thickness 1-100 km (linear) against
    ocean conductivity 0.05-50 S/m (logarithmic), period 12.12 h, in-process
    backend. ``seconds`` is the best of ``repeat`` calls (wall clock),
    ``first_seconds`` the first call; ``output_seconds`` is one round of
    writing the figure (PNG and PDF), CSV and NetCDF to a temporary folder
    (NaN when ``outputs`` is False or xarray/h5netcdf are missing).
    """
    import tempfile
    from pathlib import Path

    from induct.planning.maps import feasibility_map
    from induct.io.scenario import load_scenario

    if int(size) < 2 or int(repeat) < 1:
        raise ValueError(f"size must be >= 2 and repeat >= 1, got {size} and {repeat}")
    if quantity not in ("amplitude", "phase_lag_deg", "induced_nT"):
        raise ValueError(f"quantity must be amplitude, phase_lag_deg or induced_nT, got {quantity!r}")
    model = load_scenario("ilmare").model
    x, y = f"ice shell.thickness_km=1:100:{size}", f"ocean.conductivity_S_per_m=0.05:50:{size}:log"
    kwargs = {"drive_nT": 200.0, "altitude_km": 100.0} if quantity == "induced_nT" else {}

    def once():
        return feasibility_map(model, x, y, 12.12, quantity, **kwargs)

    t0 = time.perf_counter()
    result = once()
    first = time.perf_counter() - t0
    best = min(first, _best_time(once, int(repeat) - 1)) if repeat > 1 else first
    out_seconds = float("nan")
    if outputs:
        from induct.io.map_files import write_map_csv, write_map_netcdf
        from induct.plot.maps import plot_map

        from induct.io.files import output_set

        with tempfile.TemporaryDirectory() as tmp, output_set():  # its own set: committed before tmp goes
            prefix = Path(tmp) / "map"
            t0 = time.perf_counter()
            plot_map(result, prefix)
            write_map_csv(result, prefix.with_suffix(".csv"))
            try:
                write_map_netcdf(result, prefix.with_suffix(".nc"))
            except ImportError:
                pass
            out_seconds = time.perf_counter() - t0
    cells = int(size) ** 2
    return MapBenchResult(
        nx=int(size),
        ny=int(size),
        cells=cells,
        period_h=12.12,
        quantity=quantity,
        first_seconds=first,
        seconds=best,
        cells_per_second=cells / best,
        output_seconds=out_seconds,
    )


# --------------------------------------------------------------------------- flyby benchmark
@dataclass
class FlybyBenchResult:
    """Measured time of the induced field along a long trajectory (see :func:`run_flyby_benchmark`)."""

    points: int
    periods: int
    seconds: float
    kernel_seconds: float
    points_per_second: float
    point_periods_per_second: float


def run_flyby_benchmark(points: int = 1_000_000, repeat: int = 3, seed: int = 20261205) -> FlybyBenchResult:
    """Time :func:`induct.flyby.induced.induced_field` on ``points`` positions and times.

    The bundled scenario Ilmare with its [[drive.lines]] (5 periods), random
    positions 25-5000 km above the surface and random times over 12 days.
    ``seconds`` is the best of ``repeat`` calls of the checked function (input
    checks, the responses R_1 and the field); ``kernel_seconds`` the best of
    ``repeat`` calls of the unchecked kernel :func:`induct.flyby.induced.induced_field_nT`.
    """
    from induct.flyby.induced import induced_field, induced_field_nT
    from induct.io.scenario import load_scenario

    if int(points) < 1 or int(repeat) < 1:
        raise ValueError(f"points and repeat must be >= 1, got {points} and {repeat}")
    sc = load_scenario("ilmare")
    lines = sc.drive_lines
    rng = np.random.default_rng(seed)
    u = rng.normal(size=(int(points), 3))
    u /= np.linalg.norm(u, axis=1)[:, None]
    pos = u * (sc.model.radius_km + rng.uniform(25.0, 5000.0, int(points)))[:, None]
    t = np.sort(rng.uniform(0.0, 12 * 86400.0, int(points)))
    periods = np.array([ln.period_s for ln in lines])
    amps = np.array([ln.b_complex_nT for ln in lines])
    resp = sc.model.response(periods_s=periods).response
    seconds = _best_time(lambda: induced_field(sc.model, lines, pos, t), int(repeat))
    kernel = _best_time(lambda: induced_field_nT(pos, t, sc.model.radius_km, resp, amps, periods), int(repeat))
    return FlybyBenchResult(
        points=int(points),
        periods=len(lines),
        seconds=seconds,
        kernel_seconds=kernel,
        points_per_second=points / seconds,
        point_periods_per_second=points * len(lines) / seconds,
    )
