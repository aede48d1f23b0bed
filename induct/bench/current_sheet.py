"""Benchmark of the current-sheet (magnetodisc) field evaluation."""

from __future__ import annotations

import math
import time

import numpy as np

from induct.field.current_sheet import CurrentSheetField, current_sheet_field

__all__ = ["benchmark_current_sheet"]


def benchmark_current_sheet(points: int = 50_000, *, repeat: int = 3, seed: int = 0) -> dict:
    """Time the exact field at random points around a sheet (one process).

    Points are uniform in 0 < rho < 30, |z| < 5 around a sheet with a = 6, b = 45,
    D = 2 (planet radii); plus, separately, the same number of points along a moon's
    orbit at rho = 9.5 inside the sheet, the case the driving-spectrum code samples.

    Parameters
    ----------
    points : int
        Number of points per set, >= 1.
    repeat : int
        Timings per set (the best is reported), >= 1.
    seed : int
        Random seed.

    Returns
    -------
    dict
        ``points``, ``random_s``, ``orbit_s``, ``planet_fixed_s`` (best wall-clock times, s,
        the last through :class:`CurrentSheetField`) and ``us_per_point`` (random set).

    Examples
    --------
    >>> r = benchmark_current_sheet(points=200, repeat=1)
    >>> sorted(r)
    ['orbit_s', 'planet_fixed_s', 'points', 'random_s', 'us_per_point']
    """
    if isinstance(points, bool) or not isinstance(points, (int, np.integer)) or points < 1:
        raise ValueError(f"points must be an integer >= 1, got {points!r}")
    if isinstance(repeat, bool) or not isinstance(repeat, (int, np.integer)) or repeat < 1:
        raise ValueError(f"repeat must be an integer >= 1, got {repeat!r}")
    rng = np.random.default_rng(seed)
    rho = rng.uniform(0.0, 30.0, points)
    z = rng.uniform(-5.0, 5.0, points)
    phase = np.linspace(0.0, 2.0 * math.pi, points, endpoint=False)
    rho_orbit = np.full(points, 9.5)
    z_orbit = 9.5 * math.sin(math.radians(9.0)) * np.sin(phase)
    sheet = CurrentSheetField.from_tilt(6.5e7, 6.0, 45.0, 2.0, 140.0, 9.0, 200.0)
    xyz = 6.5e7 * 9.5 * np.stack([np.cos(phase), np.sin(phase), np.zeros(points)], axis=-1)

    def best(fn):
        times = []
        for _ in range(repeat):
            t0 = time.perf_counter()
            fn()
            times.append(time.perf_counter() - t0)
        return min(times)

    random_s = best(lambda: current_sheet_field(rho, z, 6.0, 45.0, 2.0, 140.0))
    orbit_s = best(lambda: current_sheet_field(rho_orbit, z_orbit, 6.0, 45.0, 2.0, 140.0))
    fixed_s = best(lambda: sheet.field_cartesian(xyz))
    return {"points": int(points), "random_s": random_s, "orbit_s": orbit_s, "planet_fixed_s": fixed_s,
            "us_per_point": 1e6 * random_s / points}
