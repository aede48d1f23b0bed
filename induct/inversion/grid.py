"""Inversion of measured responses: posterior ranges of layer thicknesses, conductivities and salinity.

Bayesian set-up: uniform or log-uniform priors on the free parameters
(:mod:`induct.inversion.priors`), zero prior on physically impossible combinations
(layers that leave the fill layer no room), and a Gaussian likelihood
``exp(-chi2 / 2)`` with the misfit of :class:`induct.io.measurements.Measurements`.

Two ways to explore the posterior:

* ``"grid"`` (default for up to 4 free parameters): exact evaluation at the
  midpoints of a grid of equal-prior-mass cells (uniform in each parameter's
  prior coordinate, value or log10 value). The grid is a flat work list
  processed by :func:`induct.parallel.execution.run_reduction`: a pure
  ``GridTask(start, stop) -> GridPartial`` evaluates a slice of cells with the
  vectorised kernel and returns small partial results (1-D and 2-D marginal
  histograms, the best cell, the chi-square values inside the 2-sigma window,
  a capped list of the best cells), which :func:`combine_partials` merges in
  any order. Memory is bounded by the task size, whatever the grid size, so
  the same code runs in-process or on a cluster (``backend=``).
* samplers (default for more than 4 parameters): the nested sampler of
  dynesty (Speagle 2020, MNRAS 493, 3132; :mod:`induct.inversion.nested`;
  evidence included) or the affine-invariant ensemble sampler of emcee
  (Foreman-Mackey et al. 2013, PASP 125, 306; :mod:`induct.inversion.mcmc`),
  each with its convergence checked and run longer within a budget.

Ranges are equal-tailed credible intervals; see :mod:`induct.inversion.posterior` for
every convention reported with the result.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping, Sequence

import numpy as np

from induct.parallel.execution import run_reduction
from induct.model.interior import InteriorModel
from induct.io.measurements import Measurements
from induct.inversion.posterior import (
    PosteriorResult,
    TwoSigmaSet,
    find_tradeoffs,
    histogram_interval,
    map_correlation,
    resolution_notes,
    two_sigma_delta_chi2,
)
from induct.inversion.priors import Parameter, ParameterMap, parse_parameters
from induct.inversion.fitquality import DEFAULT_MIN_P_VALUE, fit_quality, refine_optimum
from induct.inversion.samples import log_likelihood_normalisation

__all__ = [
    "GridSetup",
    "GridPartial",
    "GridTask",
    "combine_partials",
    "make_grid_setup",
    "run_grid",
    "run_adaptive_grid",
    "SubsetTask",
    "bound_shift",
    "add_fit_quality",
    "misfit_message",
    "forward_grid",
    "invert",
    "DEFAULT_GRID_POINTS",
    "DEFAULT_LIST_CAP",
    "GRID_TASK_MODELS",
    "MAX_GRID_PARAMETERS",
]

#: Default grid points per axis.
DEFAULT_GRID_POINTS = 60
#: Default number of 2-sigma combinations listed (the rest are counted).
DEFAULT_LIST_CAP = 200
#: Grid cells per task: a few tens of MB of working memory per task.
GRID_TASK_MODELS = 65_536
#: Above this many free parameters the default sampler is MCMC.
MAX_GRID_PARAMETERS = 4
#: Cells with chi2 - chi2_min above this carry less than exp(-25) ~ 1e-11 of the peak density
#: (negligible mass); adaptive refinement subdivides only the others and their neighbours.
ACTIVE_DELTA_CHI2 = 50.0
#: Reported 68 % and 95 % bounds must move by less than this fraction of the prior width when
#: the resolution doubles (the resolution check).
RESOLUTION_TOLERANCE = 0.01
#: Most resolution doublings of the adaptive refinement.
MAX_REFINEMENTS = 3
#: Most cells evaluated at one refinement level.
MAX_REFINED_CELLS = 3_000_000


@dataclass(frozen=True)
class GridSetup:
    """A grid inversion problem: the parameter map, the data and the grid.

    Attributes
    ----------
    pmap : ParameterMap
        Maps parameter values onto model variants.
    measurements : Measurements
        The data.
    points : tuple of int
        Grid points per parameter (each >= 2).
    delta_chi2 : float
        The 2-sigma threshold on chi2 - chi2_min.
    cap : int
        How many 2-sigma combinations are listed.
    """

    pmap: ParameterMap
    measurements: Measurements
    points: tuple
    delta_chi2: float
    cap: int

    @property
    def parameters(self) -> tuple:
        """The free parameters."""
        return self.pmap.parameters

    @property
    def shape(self) -> tuple:
        """Grid shape (N_1, ..., N_k)."""
        return tuple(self.points)

    @property
    def total(self) -> int:
        """Number of grid cells."""
        return int(np.prod(self.points, dtype=np.int64))

    def midpoints(self) -> list:
        """Cell midpoints of each parameter (field units): list of ndarray, each shape (N_i,)."""
        return [p.midpoints(n) for p, n in zip(self.parameters, self.points)]

    def edges(self) -> list:
        """Cell edges of each parameter in its prior coordinate: list of ndarray, each shape (N_i + 1,)."""
        return [p.edges(n) for p, n in zip(self.parameters, self.points)]

    def cells(self, start: int, stop: int) -> tuple[tuple, list]:
        """Multi-indices and parameter values of cells ``start`` to ``stop - 1`` (C order).

        Returns
        -------
        index : tuple of ndarray, k arrays of shape (stop - start,)
        columns : list of ndarray, k arrays of shape (stop - start,), field units
        """
        index = np.unravel_index(np.arange(start, stop), self.shape)
        mids = self.midpoints()
        return index, [m[i] for m, i in zip(mids, index)]

    def responses(self, start: int, stop: int) -> np.ndarray:
        """Modelled R_n of cells ``start`` to ``stop - 1`` at every measured entry; shape (stop - start, M), NaN if impossible."""
        _, columns = self.cells(start, stop)
        m = self.measurements
        return self.pmap.responses(columns, m.period_h, m.degree)


@dataclass
class GridPartial:
    """Partial result of a slice of the grid (all masses relative to ``exp(-ref / 2)``).

    Attributes
    ----------
    ref : float
        Smallest chi2 in the slice (``inf`` if it has no possible model).
    best_index : int
        Flat grid index of that cell (-1 if none).
    marginals : list of ndarray, shape (N_i,)
        Sum of ``exp(-(chi2 - ref)/2)`` per cell index of each parameter.
    maps : dict
        ``(i, j) -> ndarray (N_i, N_j)``, the same sums over pairs (i < j).
    n_valid, n_cells : int
        Physically possible cells and all cells of the slice.
    within : ndarray, shape (W,)
        The chi2 values with chi2 <= ref + delta_chi2, unordered (for the exact count).
    listed_chi2, listed_index : ndarray, shape (<= cap,)
        The lowest chi2 values of the slice and their flat indices, sorted.
    delta_chi2 : float
    cap : int
    active_index, active_chi2 : ndarray, shape (A,)
        Flat indices and chi2 of the cells with chi2 <= ref + ACTIVE_DELTA_CHI2 (where the
        posterior mass is; the cells subdivided by adaptive refinement).
    """

    ref: float
    best_index: int
    marginals: list
    maps: dict
    n_valid: int
    n_cells: int
    within: np.ndarray
    listed_chi2: np.ndarray
    listed_index: np.ndarray
    delta_chi2: float
    cap: int
    n_within_sure: int = 0
    n_within_dropped: int = 0
    active_index: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    active_chi2: np.ndarray = field(default_factory=lambda: np.empty(0))


#: Largest number of chi-square values kept for the exact 2-sigma count (16 MB); see :func:`_bound_within`.
WITHIN_CAP = 2_000_000


def _bound_within(within: np.ndarray, delta_chi2: float, sure: int, dropped: int):
    """Keep the 2-sigma candidates bounded: values <= delta_chi2 only counted, at most WITHIN_CAP others kept.

    chi2 >= 0, so the final chi2_min >= 0 and every value <= delta_chi2 is inside the 2-sigma set whatever
    the other tasks find: those are counted, not kept. Of the others only the WITHIN_CAP smallest are kept;
    the number dropped makes the final count a lower bound (said in the result's notes).
    """
    certain = within <= delta_chi2
    if certain.any():
        sure += int(certain.sum())
        within = within[~certain]
    if within.size > WITHIN_CAP:
        dropped += within.size - WITHIN_CAP
        within = np.partition(within, WITHIN_CAP - 1)[:WITHIN_CAP]
    return within, sure, dropped


class GridTask:
    """``task(start, stop) -> GridPartial`` over a :class:`GridSetup` (pure; picklable).

    Parameters
    ----------
    setup : GridSetup
    precomputed : ndarray of complex, shape (total, M), optional
        Responses of every cell (from :func:`forward_grid`), to invert many
        data sets on one grid without recomputing the forward model.
    """

    def __init__(self, setup: GridSetup, precomputed: np.ndarray | None = None):
        self.setup = setup
        self.precomputed = precomputed

    @property
    def size(self) -> int:
        """Number of grid cells."""
        return self.setup.total

    def __call__(self, start: int, stop: int) -> GridPartial:
        """Evaluate cells ``start`` to ``stop - 1`` and return their :class:`GridPartial`."""
        s = self.setup
        index, _ = s.cells(start, stop)
        resp = s.responses(start, stop) if self.precomputed is None else self.precomputed[start:stop]
        chi2 = s.measurements.chi2(resp)
        return _partial(s, start, index, chi2)


class SubsetTask:
    """``task(start, stop) -> GridPartial`` over a chosen list of cells of a :class:`GridSetup` (pure; picklable).

    Parameters
    ----------
    setup : GridSetup
    cells : ndarray of int, shape (K,)
        Flat (C-order) indices of the cells to evaluate; the others get zero posterior mass.
    """

    def __init__(self, setup: GridSetup, cells: np.ndarray):
        self.setup = setup
        self.cells = np.asarray(cells, dtype=np.int64)

    @property
    def size(self) -> int:
        """Number of cells evaluated."""
        return int(self.cells.size)

    def __call__(self, start: int, stop: int) -> GridPartial:
        """Evaluate listed cells ``start`` to ``stop - 1``."""
        s = self.setup
        flat = self.cells[start:stop]
        index = np.unravel_index(flat, s.shape)
        mids = s.midpoints()
        columns = [m[i] for m, i in zip(mids, index)]
        resp = s.pmap.responses(columns, s.measurements.period_h, s.measurements.degree)
        return _partial(s, flat, index, s.measurements.chi2(resp))


def _partial(s: GridSetup, start, index: tuple, chi2: np.ndarray) -> GridPartial:
    """Partial result of evaluated cells; ``start`` is the first flat index (contiguous) or the flat indices."""
    flat = start + np.arange(chi2.size, dtype=np.int64) if np.ndim(start) == 0 else np.asarray(start, dtype=np.int64)
    valid = np.isfinite(chi2)
    n_valid = int(valid.sum())
    k = len(s.points)
    if n_valid == 0:
        return GridPartial(
            ref=np.inf, best_index=-1, marginals=[np.zeros(n) for n in s.points],
            maps={(i, j): np.zeros((s.points[i], s.points[j])) for i in range(k) for j in range(i + 1, k)},
            n_valid=0, n_cells=int(chi2.size), within=np.empty(0), listed_chi2=np.empty(0),
            listed_index=np.empty(0, dtype=np.int64), delta_chi2=s.delta_chi2, cap=s.cap,
        )
    c = np.where(valid, chi2, np.inf)
    best = int(np.argmin(c))
    ref = float(c[best])
    w = np.exp(-0.5 * (c - ref))  # exactly 0 for impossible cells
    marginals = [np.bincount(index[i], weights=w, minlength=s.points[i]) for i in range(k)]
    maps = {}
    for i in range(k):
        for j in range(i + 1, k):
            pair = index[i] * s.points[j] + index[j]
            maps[(i, j)] = np.bincount(pair, weights=w, minlength=s.points[i] * s.points[j]).reshape(s.points[i], s.points[j])
    act = np.flatnonzero(c <= ref + ACTIVE_DELTA_CHI2)
    inside = np.flatnonzero(c <= ref + s.delta_chi2)
    listed = inside
    if inside.size > s.cap:
        listed = inside[np.argpartition(c[inside], s.cap - 1)[: s.cap]] if s.cap > 0 else inside[:0]
    listed = listed[np.lexsort((listed, c[listed]))]
    within, sure, dropped = _bound_within(c[inside], s.delta_chi2, 0, 0)
    return GridPartial(
        ref=ref, best_index=int(flat[best]), marginals=marginals, maps=maps, n_valid=n_valid, n_cells=int(chi2.size),
        within=within, listed_chi2=c[listed], listed_index=flat[listed].astype(np.int64),
        delta_chi2=s.delta_chi2, cap=s.cap, n_within_sure=sure, n_within_dropped=dropped,
        active_index=flat[act], active_chi2=c[act],
    )


def combine_partials(a: GridPartial, b: GridPartial) -> GridPartial:
    """Merge two partial results (associative and commutative up to round-off)."""
    if b.ref < a.ref or (b.ref == a.ref and b.best_index < a.best_index and b.best_index >= 0):
        a, b = b, a
    ref = a.ref
    scale = 0.0 if not np.isfinite(b.ref) else float(np.exp(-0.5 * (b.ref - ref)))
    marginals = [x + scale * y for x, y in zip(a.marginals, b.marginals)]
    maps = {key: a.maps[key] + scale * b.maps[key] for key in a.maps}
    limit = ref + a.delta_chi2
    within, sure, dropped = _bound_within(
        np.concatenate([a.within, b.within[b.within <= limit]]), a.delta_chi2,
        a.n_within_sure + b.n_within_sure, a.n_within_dropped + b.n_within_dropped,
    )
    chi2 = np.concatenate([a.listed_chi2, b.listed_chi2])
    idx = np.concatenate([a.listed_index, b.listed_index])
    keep = chi2 <= limit
    chi2, idx = chi2[keep], idx[keep]
    order = np.lexsort((idx, chi2))[: a.cap]
    act_chi2 = np.concatenate([a.active_chi2, b.active_chi2])
    act_idx = np.concatenate([a.active_index, b.active_index])
    keep = act_chi2 <= ref + ACTIVE_DELTA_CHI2
    return GridPartial(
        ref=ref, best_index=a.best_index, marginals=marginals, maps=maps, n_valid=a.n_valid + b.n_valid,
        n_cells=a.n_cells + b.n_cells, within=within, listed_chi2=chi2[order], listed_index=idx[order],
        delta_chi2=a.delta_chi2, cap=a.cap, n_within_sure=sure, n_within_dropped=dropped,
        active_index=act_idx[keep], active_chi2=act_chi2[keep],
    )


def _grid_points(points, k: int) -> tuple:
    if np.ndim(points) == 0:
        points = [points] * k
    points = list(points)
    if len(points) != k:
        raise ValueError(f"grid points: give one number or {k} (one per free parameter), got {len(points)}")
    for n in points:
        if isinstance(n, bool) or int(n) != n or int(n) < 2:
            raise ValueError(f"grid points per axis must be an integer >= 2, got {n!r}")
    return tuple(int(n) for n in points)


def make_grid_setup(
    pmap: ParameterMap, measurements: Measurements, points=DEFAULT_GRID_POINTS, cap: int = DEFAULT_LIST_CAP
) -> GridSetup:
    """Check the grid settings and build a :class:`GridSetup`.

    Parameters
    ----------
    pmap : ParameterMap
    measurements : Measurements
    points : int or sequence of int
        Grid points per axis (>= 2), one for all or one per parameter.
    cap : int
        How many 2-sigma combinations to list (>= 0).
    """
    if isinstance(cap, bool) or int(cap) != cap or cap < 0:
        raise ValueError(f"the 2-sigma list length (cap) must be an integer >= 0, got {cap!r}")
    k = len(pmap.parameters)
    return GridSetup(pmap, measurements, _grid_points(points, k), two_sigma_delta_chi2(k), int(cap))


def forward_grid(setup: GridSetup, chunk_size: int = GRID_TASK_MODELS) -> np.ndarray:
    """Responses of every grid cell, shape (total, M) complex (NaN rows: impossible); memory grows with the grid."""
    out = np.empty((setup.total, setup.measurements.n_entries), dtype=complex)
    for start in range(0, setup.total, chunk_size):
        stop = min(start + chunk_size, setup.total)
        out[start:stop] = setup.responses(start, stop)
    return out


def run_grid(
    setup: GridSetup,
    *,
    backend=None,
    progress: bool = False,
    chunk_size: int = GRID_TASK_MODELS,
    precomputed: np.ndarray | None = None,
) -> PosteriorResult:
    """Evaluate the posterior on the grid (chunked map-reduce) and summarise it.

    Parameters
    ----------
    setup : GridSetup
    backend : induct.parallel.execution.Backend, optional
        Where the tasks run (in-process by default).
    progress : bool
        Show a progress bar (tqdm, standard error).
    chunk_size : int
        Grid cells per task.
    precomputed : ndarray, shape (total, M), optional
        Responses from :func:`forward_grid` (skips the forward model).

    Returns
    -------
    PosteriorResult
    """
    task = GridTask(setup, precomputed)
    part = run_reduction(
        task, setup.total, chunk_size=chunk_size, combine=combine_partials, backend=backend,
        desc="inversion grid", progress=progress,
    )
    return summarise_grid(setup, part)


def summarise_grid(setup: GridSetup, part: GridPartial) -> PosteriorResult:
    """Turn the merged :class:`GridPartial` into a :class:`PosteriorResult`."""
    params = setup.parameters
    if part.n_valid == 0:
        thick = [p.name for p in params if p.field == "thickness_km"]
        raise ValueError(
            "every grid cell is physically impossible (the layers leave the fill layer no room)"
            + (f"; narrow the ranges of {', '.join(thick)}" if thick else "")
        )
    total = float(part.marginals[0].sum())
    marginals = [m / total for m in part.marginals]
    maps = {key: v / total for key, v in part.maps.items()}
    edges = setup.edges()
    ranges = {}
    for p, mass, e in zip(params, marginals, edges):
        ranges[p.name] = {
            level: tuple(float(v) for v in p.from_prior(histogram_interval(mass, e, q)))
            for level, q in (("68", 0.68), ("95", 0.95))
        }
    mids = setup.midpoints()
    best_multi = np.unravel_index(part.best_index, setup.shape)
    best = {p.name: float(m[i]) for p, m, i in zip(params, mids, best_multi)}
    k = len(params)
    corr = np.eye(k)
    for (i, j), mass in maps.items():
        corr[i, j] = corr[j, i] = map_correlation(mass, edges[i], edges[j])
    rows = []
    for c, flat in zip(part.listed_chi2, part.listed_index):
        multi = np.unravel_index(int(flat), setup.shape)
        row = {p.name: float(m[i]) for p, m, i in zip(params, mids, multi)}
        row["chi2"] = float(c)
        rows.append(row)
    count = part.n_within_sure + int(np.count_nonzero(part.within <= part.ref + setup.delta_chi2))
    two = TwoSigmaSet(setup.delta_chi2, count, rows)
    notes = resolution_notes(params, ranges, setup.points)
    if part.n_within_dropped:
        notes = list(notes) + [f"the 2-sigma count is a lower bound: {part.n_within_dropped:,d} candidate cells above "
                               f"the {WITHIN_CAP:,d} kept were not re-checked (memory bound)"]
    result = PosteriorResult(
        method="grid",
        parameters=list(params),
        best=best,
        chi2_min=part.ref,
        n_data=setup.measurements.n_data,
        n_models=part.n_valid,
        n_impossible=part.n_cells - part.n_valid,
        ranges=ranges,
        edges=edges,
        marginals=marginals,
        maps=maps,
        correlation=corr,
        two_sigma=two,
        tradeoffs=find_tradeoffs(params, ranges, corr, best, setup.points),
        notes=notes,
        grid_points=setup.points,
    )
    # Evidence: prior-weighted sum of the likelihood over the equal-prior-mass cells, the prior renormalised
    # over the physically possible cells, with the Gaussian normalisation (see induct.inversion.evidence).
    result.log_evidence = float(-0.5 * part.ref + np.log(total) - np.log(part.n_valid)
                                + log_likelihood_normalisation(setup.measurements))
    return result


def _children(coarse: GridSetup, fine: GridSetup, active: np.ndarray) -> np.ndarray:
    """Flat indices of the fine cells inside the active coarse cells and their neighbours (sorted)."""
    from itertools import product

    from scipy.ndimage import binary_dilation

    mask = np.zeros(coarse.shape, dtype=bool)
    mask.flat[np.asarray(active, dtype=np.int64)] = True
    mask = binary_dilation(mask, structure=np.ones((3,) * len(coarse.shape), dtype=bool))
    idx = np.nonzero(mask)
    out = []
    for offset in product((0, 1), repeat=len(idx)):
        out.append(np.ravel_multi_index(tuple(2 * i + o for i, o in zip(idx, offset)), fine.shape))
    return np.sort(np.concatenate(out))


def bound_shift(a: PosteriorResult, b: PosteriorResult) -> float:
    """Largest move of any reported 68 % or 95 % bound between two results, as a fraction of its prior width."""
    worst = 0.0
    for p in a.parameters:
        lo, hi = p.prior_bounds
        for level in ("68", "95"):
            u = p.to_prior(a.ranges[p.name][level])
            v = p.to_prior(b.ranges[p.name][level])
            worst = max(worst, float(np.max(np.abs(u - v))) / (hi - lo))
    return worst


def run_adaptive_grid(
    setup: GridSetup,
    *,
    backend=None,
    progress: bool = False,
    chunk_size: int = GRID_TASK_MODELS,
    tolerance: float = RESOLUTION_TOLERANCE,
    max_refinements: int = MAX_REFINEMENTS,
    max_cells: int = MAX_REFINED_CELLS,
) -> PosteriorResult:
    """Grid posterior refined where the mass is until the reported bounds stop moving.

    The full grid is evaluated first. Then the resolution is doubled on every axis, but
    only inside cells with chi2 - chi2_min <= :data:`ACTIVE_DELTA_CHI2` and their
    neighbours (the rest carry less than 1e-11 of the peak density), and the 68 % and
    95 % bounds of the two levels are compared. Doubling repeats until no bound moves by
    more than ``tolerance`` of its prior width (default 1 %), or ``max_refinements``
    doublings, or a level would need more than ``max_cells`` cells. The finest level is
    reported; the check is in ``result.resolution``.

    Parameters
    ----------
    setup : GridSetup
        The starting grid.
    backend, progress, chunk_size
        As for :func:`run_grid`.
    tolerance : float
        Largest accepted move of a bound, as a fraction of the prior width.
    max_refinements : int
        Most doublings (0: the check is not made).
    max_cells : int
        Most cells evaluated at one level.

    Returns
    -------
    PosteriorResult
        With ``resolution = {"tolerance", "levels", "cells", "shifts", "max_shift", "converged"}``.
    """
    part = run_reduction(GridTask(setup), setup.total, chunk_size=chunk_size, combine=combine_partials,
                         backend=backend, desc="inversion grid", progress=progress)
    res = summarise_grid(setup, part)
    first_valid = part.n_valid
    levels, cells, shifts = [list(setup.points)], [int(setup.total)], []
    converged = False
    stop_reason = "no refinement requested" if max_refinements <= 0 else ""
    cur = setup
    for _ in range(max(0, int(max_refinements))):
        fine = GridSetup(cur.pmap, cur.measurements, tuple(2 * n for n in cur.points), cur.delta_chi2, cur.cap)
        if part.active_index.size * 2 ** len(cur.points) > max_cells:
            stop_reason = f"the next level would need more than {max_cells:,d} cells"
            break
        sub = _children(cur, fine, part.active_index)
        if sub.size > max_cells:
            stop_reason = f"the next level would need {sub.size:,d} cells (more than {max_cells:,d})"
            break
        task = SubsetTask(fine, sub)
        part_f = run_reduction(task, task.size, chunk_size=chunk_size, combine=combine_partials, backend=backend,
                               desc="refining grid", progress=progress)
        res_f = summarise_grid(fine, part_f)
        shifts.append(bound_shift(res, res_f))
        levels.append(list(fine.points))
        cells.append(int(sub.size))
        cur, part, res = fine, part_f, res_f
        if shifts[-1] < tolerance:
            converged = True
            break
    else:
        if max_refinements > 0:
            stop_reason = f"still moving after {max_refinements} doublings"
    if cur is not setup and res.log_evidence is not None:
        # Only cells near the optimum were evaluated at the finest level: the prior is spread over all possible
        # cells of that level, estimated from the fraction of possible cells in the full starting grid.
        possible = first_valid / setup.total * cur.total
        res.log_evidence += float(np.log(part.n_valid) - np.log(possible))
    res.resolution = {
        "tolerance": float(tolerance),
        "levels": levels,
        "cells": cells,
        "shifts": shifts,
        "max_shift": shifts[-1] if shifts else None,
        "converged": converged,
        "stopped": stop_reason,
        "definition": (
            "largest move of any 68 % or 95 % bound, as a fraction of the prior width, between the last two "
            "resolutions (each doubling the points per axis where chi2 - chi2_min <= "
            f"{ACTIVE_DELTA_CHI2:g} and in the neighbouring cells)"
        ),
    }
    if not converged:
        what = "" if not shifts else f" (last doubling moved a bound by {100 * shifts[-1]:.2f} % of its prior width)"
        res.notes.append(
            f"the ranges are not resolved to {100 * tolerance:g} % of the prior width{what}: {stop_reason}; "
            "rerun with more --grid points or narrower priors"
        )
    return res


def invert(
    model: InteriorModel,
    measurements: Measurements,
    parameters: Mapping | Sequence[Parameter],
    *,
    sampler: str = "auto",
    grid_points=None,
    cap: int = DEFAULT_LIST_CAP,
    backend=None,
    progress: bool = False,
    chunk_size: int = GRID_TASK_MODELS,
    steps: int | None = None,
    walkers: int | None = None,
    seed: int = 0,
    refine: bool = True,
    max_refinements: int = MAX_REFINEMENTS,
    min_p_value: float = DEFAULT_MIN_P_VALUE,
    nlive: int | None = None,
    max_evaluations: int | None = None,
    max_time_s: float | None = None,
) -> PosteriorResult:
    """Posterior ranges of the free parameters of ``model`` given ``measurements``, with the fit quality.

    Parameters
    ----------
    model : InteriorModel
        The reference model: fields that are not free keep its values.
    measurements : Measurements
        The measured responses.
    parameters : mapping or sequence of Parameter
        An ``[invert]`` table (``"LAYER.FIELD" -> {range, scale}``), checked
        by :func:`induct.inversion.priors.parse_parameters`, or checked parameters.
    sampler : {"auto", "grid", "nested", "ensemble", "mcmc"}
        ``"auto"``: grid for up to 4 free parameters; above, the nested sampler
        (dynesty, :mod:`induct.inversion.nested`) if installed, else the
        ensemble sampler (emcee, :mod:`induct.inversion.mcmc`; ``"mcmc"`` is
        the same). Samplers check their convergence and run longer within the
        budget; see ``result.converged``.
    grid_points : int or sequence of int, optional
        Grid points per axis (>= 2; default 60) of the starting grid. For MCMC:
        histogram bins of the marginal maps.
    cap : int
        How many 2-sigma combinations to list.
    backend : induct.parallel.execution.Backend, optional
        Where grid tasks run.
    progress : bool
        Progress bar on standard error.
    chunk_size : int
        Grid cells per task.
    steps, walkers, seed : int, optional
        Ensemble-sampler settings (see :func:`induct.inversion.mcmc.run_mcmc`); ``seed`` also seeds the nested sampler.
    nlive : int, optional
        Live points of the nested sampler (see :func:`induct.inversion.nested.run_nested`).
    max_evaluations : int, optional
        Sampler budget of likelihood evaluations.
    max_time_s : float, optional
        Sampler budget of wall-clock seconds.
    refine : bool
        Grid: refine adaptively and check the resolution (:func:`run_adaptive_grid`).
    max_refinements : int
        Grid: most resolution doublings.
    min_p_value : float
        p-value below which ``result.fit["acceptable"]`` is False (default 1e-3).

    Returns
    -------
    PosteriorResult
        ``best`` and ``chi2_min`` are the locally refined optimum
        (:func:`induct.inversion.fitquality.refine_optimum`); ``fit`` holds ``dof``,
        ``p_value`` and the verdict; ``resolution`` the grid's resolution check.

    Raises
    ------
    ValueError
        Bad parameter names or ranges, grid < 2, physically impossible
        ranges, an unknown sampler.

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.io.measurements import load_measurements
    >>> sc = load_scenario("ilmare")
    >>> res = invert(sc.model, load_measurements("ilmare_measured"),
    ...              {"ocean.thickness_km": {"range": [5, 250]}}, grid_points=20)
    >>> res.fit["dof"], res.resolution["converged"]
    (5, True)
    """
    if isinstance(parameters, Mapping):
        parameters = parse_parameters(parameters, model)
    pmap = ParameterMap(model, parameters)
    k = len(pmap.parameters)
    if sampler not in ("auto", "grid", "mcmc", "ensemble", "nested"):
        raise ValueError(f"sampler must be 'auto', 'grid', 'nested' or 'ensemble' ('mcmc'), got {sampler!r}")
    if sampler == "auto":
        sampler = "grid" if k <= MAX_GRID_PARAMETERS else _default_sampler()
    points = DEFAULT_GRID_POINTS if grid_points is None else grid_points
    if sampler == "grid":
        setup = make_grid_setup(pmap, measurements, points, cap)
        if refine:
            result = run_adaptive_grid(setup, backend=backend, progress=progress, chunk_size=chunk_size,
                                       max_refinements=max_refinements)
        else:
            result = run_grid(setup, backend=backend, progress=progress, chunk_size=chunk_size)
    elif sampler == "nested":
        from induct.inversion.nested import run_nested

        result = run_nested(pmap, measurements, bins=_grid_points(points, k), cap=cap, nlive=nlive, seed=seed,
                            max_evaluations=max_evaluations, max_time_s=max_time_s, progress=progress)
    else:
        from induct.inversion.mcmc import run_mcmc

        result = run_mcmc(pmap, measurements, bins=_grid_points(points, k), cap=cap, steps=steps, walkers=walkers,
                          seed=seed, progress=progress, max_evaluations=max_evaluations, max_time_s=max_time_s)
    if not isinstance(result, PosteriorResult) or (result.method != "grid" and not result.converged):
        return result  # a substituted sampler (tests), or an unconverged sampler: its ranges are not results
    return add_fit_quality(result, pmap, measurements, min_p_value)


def add_fit_quality(result: PosteriorResult, pmap: ParameterMap, measurements: Measurements,
                    min_p_value: float = DEFAULT_MIN_P_VALUE) -> PosteriorResult:
    """Refine the best evaluated model locally; attach the optimum, chi2_min, dof, p-value and verdict as ``result.fit``.

    ``result.best`` and ``result.chi2_min`` stay the best evaluated model; ``result.fit["best"]``
    and ``result.fit["chi2_min"]`` are the refined optimum (never worse).
    """
    best, chi2 = refine_optimum(pmap, measurements, result.best)
    if not chi2 < result.chi2_min:
        best, chi2 = dict(result.best), float(result.chi2_min)
    result.fit = fit_quality(chi2, measurements.n_data, len(pmap.parameters), min_p_value)
    result.fit["best"] = best
    if not result.fit["acceptable"]:
        result.notes.insert(0, misfit_message(result.fit))
    return result


def misfit_message(fit: dict) -> str:
    """The sentence saying that the model family cannot explain the data."""
    return (
        f"the model family cannot explain the data: chi2_min = {fit['chi2_min']:.4g} for {fit['dof']} degrees of "
        f"freedom, p = {fit['p_value']:.3g} < {fit['min_p_value']:g}; the ranges are not results (check the data and "
        "their errors, or allow for fields the model leaves out with a model-error term)"
    )


def _default_sampler() -> str:
    """The sampler above the grid's reach: nested (dynesty) if installed, else the ensemble sampler (emcee)."""
    import importlib.util

    if importlib.util.find_spec("dynesty") is not None:
        return "nested"
    if importlib.util.find_spec("emcee") is not None:
        return "ensemble"
    raise ImportError("more than 4 free parameters need a sampler: pip install 'induct[nested]' (dynesty) "
                      "or 'induct[mcmc]' (emcee)")
