"""Benchmark of flyby planning: :func:`induct.planning.design.plan_flybys` on many random candidates."""

from __future__ import annotations

import time

import numpy as np

from induct.inversion.priors import parse_parameters
from induct.io.scenario import load_scenario
from induct.planning.candidates import Candidate, closest_approach_frame, straight_track
from induct.planning.design import (
    candidate_grams,
    expected_68_widths,
    fisher_matrices,
    greedy_selection,
    log_det_criterion,
    plan_flybys,
    posterior_covariance,
    prior_precision,
    response_derivatives,
)

__all__ = ["benchmark_plan"]


def benchmark_plan(n_candidates: int = 1000, n_samples: int = 600, n_parameters: int = 3, *, choose: int = 5,
                   noise_nT: float = 0.5, scenario: str = "ilmare", repeat: int = 3, seed: int = 20261207) -> dict:
    """Time :func:`plan_flybys` on random straight candidates of a bundled scenario.

    Candidates: closest approach 25-1000 km altitude, random direction and inclination, random time within
    10 days, 5 km/s, ``n_samples`` samples every 6 s. Parameters: the first ``n_parameters`` of the
    scenario's ``[invert]`` table. Each stage is timed ``repeat`` times; the best time is kept.

    Parameters
    ----------
    n_candidates, n_samples, n_parameters : int
    choose : int
    noise_nT : float
    scenario : str
        Bundled scenario name or path (needs ``[[drive.lines]]`` and ``[invert]``).
    repeat : int
    seed : int

    Returns
    -------
    dict
        ``timings_s`` (``derivatives``, ``grams``, ``fisher_and_widths``, ``selection``, ``plan_flybys`` total,
        ``generate_candidates``) and the sizes (``n_candidates``, ``n_samples``, ``n_parameters``, ``n_lines``,
        ``choose``).

    Examples
    --------
    >>> r = benchmark_plan(20, 50, 2, choose=2, repeat=1)
    >>> sorted(r["timings_s"])
    ['derivatives', 'fisher_and_widths', 'generate_candidates', 'grams', 'plan_flybys', 'selection']
    """

    sc = load_scenario(scenario)
    lines = sc.drive_lines
    table = sc.raw.get("invert", {})
    if not lines or len(table) < n_parameters:
        raise ValueError(f"scenario {scenario!r} needs [[drive.lines]] and at least {n_parameters} [invert] parameters")
    params = parse_parameters(dict(list(table.items())[:n_parameters]), sc.model)
    step = 6.0
    duration = n_samples * step  # odd sample count >= n_samples, symmetric about closest approach
    timings = {}

    def best(func):
        times, value = [], None
        for _ in range(max(1, int(repeat))):
            t0 = time.perf_counter()
            value = func()
            times.append(time.perf_counter() - t0)
        return min(times), value

    def make():
        rng = np.random.default_rng(seed)
        out = []
        for i in range(n_candidates):
            rhat, vhat = closest_approach_frame(np.degrees(np.arcsin(rng.uniform(-1, 1))), rng.uniform(0, 360),
                                                rng.uniform(0, 360))
            t, pos = straight_track(rhat, vhat, sc.model.radius_km + rng.uniform(25.0, 1000.0), 5.0,
                                    rng.uniform(0.0, 864000.0), duration, step)
            out.append(Candidate(f"b{i:05d}", t, pos))
        return out

    timings["generate_candidates"], cands = best(make)
    timings["derivatives"], deriv = best(lambda: response_derivatives(sc.model, lines, params))
    timings["grams"], grams = best(lambda: candidate_grams(sc.model, lines, cands))
    prec = prior_precision(params)

    def widths():
        f = fisher_matrices(grams, deriv.derivative, noise_nT)
        log_det_criterion(f, prec)
        expected_68_widths(posterior_covariance(f, prec), params, deriv.reference_u)
        return f

    timings["fisher_and_widths"], fisher = best(widths)
    timings["selection"], _ = best(lambda: greedy_selection(fisher, prec, choose))
    timings["plan_flybys"], _ = best(lambda: plan_flybys(sc.model, lines, params, cands, noise_nT, choose))
    return {"timings_s": timings, "n_candidates": int(n_candidates), "n_samples": int(cands[0].size),
            "n_parameters": len(params), "n_lines": len(lines), "choose": int(choose), "scenario": scenario}
