"""Benchmark: a salinity x ice thickness x ocean thickness grid through the one ocean model.

The bundled chemistry-defined ocean (``ilmare_brine``: MgSO4 at the freezing point of the
ice-ocean interface, 128 sub-layers) is evaluated at every cell of an N x N x N grid at
the three measured periods of ``ilmare_measured`` through the inversion's grid task
(forward model, chi-square, marginals), with the ocean's conductivity interpolated from
:class:`induct.model.ocean_table.OceanConductivityTable`. The exact path (the brine
model at every sub-layer) is timed on a sample of cells, and the largest difference of
the responses on that sample is reported.
"""

from __future__ import annotations

import time
import warnings
from dataclasses import dataclass

import numpy as np

__all__ = ["SalinityBenchResult", "run_salinity_benchmark"]

#: Prior ranges of the benchmark (g/kg, km, km).
RANGES = {
    "ocean.salinity_g_per_kg": [1.0, 150.0],
    "ice shell.thickness_km": [5.0, 60.0],
    "ocean.thickness_km": [10.0, 250.0],
}


@dataclass
class SalinityBenchResult:
    """Measured figures of :func:`run_salinity_benchmark` (seconds are wall clock, one process)."""

    grid_points: int
    periods: int
    sublayers: int
    cells: int
    table_seconds: float
    table_nodes: tuple
    table_max_rel_error: float
    grid_seconds: float
    seconds_per_cell_exact: float
    exact_sample: int
    max_response_difference: float
    chi2_min: float


def run_salinity_benchmark(grid_points: int = 60, exact_sample: int = 200, progress: bool = False) -> SalinityBenchResult:
    """Time the salinity grid (see the module docstring).

    Parameters
    ----------
    grid_points : int
        Points per axis (default 60: 216,000 cells).
    exact_sample : int
        Cells evaluated by the exact path for the comparison.
    progress : bool
        Progress bar.

    Returns
    -------
    SalinityBenchResult
    """
    from induct.inversion.grid import make_grid_setup, run_grid
    from induct.inversion.priors import ParameterMap, parse_parameters
    from induct.io.measurements import load_measurements
    from induct.io.scenario import load_scenario

    sc = load_scenario("ilmare_brine")
    data = load_measurements("ilmare_measured")
    params = parse_parameters({k: {"range": v} for k, v in RANGES.items()}, sc.model)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        t0 = time.perf_counter()
        pmap = ParameterMap(sc.model, params)
        table_seconds = time.perf_counter() - t0
        table = pmap.ocean_tables["ocean"]
        setup = make_grid_setup(pmap, data, grid_points, cap=10)
        t0 = time.perf_counter()
        result = run_grid(setup, progress=progress)
        grid_seconds = time.perf_counter() - t0
        exact = ParameterMap(sc.model, params, tabulate=False)
        rng = np.random.default_rng(20261202)
        cells = np.sort(rng.choice(setup.total, size=min(exact_sample, setup.total), replace=False))
        _, columns = setup.cells(0, setup.total)
        cols = [c[cells] for c in columns]
        t0 = time.perf_counter()
        slow = exact.responses(cols, data.period_h, data.degree)
        exact_seconds = time.perf_counter() - t0
        fast = pmap.responses(cols, data.period_h, data.degree)
    return SalinityBenchResult(
        grid_points=grid_points,
        periods=data.n_entries,
        sublayers=sc.model.layer("ocean").extra["profile"].sublayers,
        cells=setup.total,
        table_seconds=table_seconds,
        table_nodes=tuple(table.counts),
        table_max_rel_error=table.max_rel_error,
        grid_seconds=grid_seconds,
        seconds_per_cell_exact=exact_seconds / len(cells),
        exact_sample=len(cells),
        max_response_difference=float(np.nanmax(np.abs(fast - slow))),
        chi2_min=float(result.chi2_min),
    )
