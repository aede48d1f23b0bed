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

from dataclasses import dataclass
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
from induct.inversion.samples import log_likelihood_normalisation

__all__ = [
    "GridSetup",
    "GridPartial",
    "GridTask",
    "combine_partials",
    "make_grid_setup",
    "run_grid",
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


def _partial(s: GridSetup, start: int, index: tuple, chi2: np.ndarray) -> GridPartial:
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
            flat = index[i] * s.points[j] + index[j]
            maps[(i, j)] = np.bincount(flat, weights=w, minlength=s.points[i] * s.points[j]).reshape(s.points[i], s.points[j])
    inside = np.flatnonzero(c <= ref + s.delta_chi2)
    listed = inside
    if inside.size > s.cap:
        listed = inside[np.argpartition(c[inside], s.cap - 1)[: s.cap]] if s.cap > 0 else inside[:0]
    listed = listed[np.lexsort((listed, c[listed]))]
    return GridPartial(
        ref=ref, best_index=start + best, marginals=marginals, maps=maps, n_valid=n_valid, n_cells=int(chi2.size),
        within=c[inside], listed_chi2=c[listed], listed_index=(start + listed).astype(np.int64),
        delta_chi2=s.delta_chi2, cap=s.cap,
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
    within = np.concatenate([a.within, b.within[b.within <= limit]])
    chi2 = np.concatenate([a.listed_chi2, b.listed_chi2])
    idx = np.concatenate([a.listed_index, b.listed_index])
    keep = chi2 <= limit
    chi2, idx = chi2[keep], idx[keep]
    order = np.lexsort((idx, chi2))[: a.cap]
    return GridPartial(
        ref=ref, best_index=a.best_index, marginals=marginals, maps=maps, n_valid=a.n_valid + b.n_valid,
        n_cells=a.n_cells + b.n_cells, within=within, listed_chi2=chi2[order], listed_index=idx[order],
        delta_chi2=a.delta_chi2, cap=a.cap,
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
    two = TwoSigmaSet(setup.delta_chi2, int(np.count_nonzero(part.within <= part.ref + setup.delta_chi2)), rows)
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
        notes=resolution_notes(params, ranges, setup.points),
        grid_points=setup.points,
    )
    # Evidence: prior-weighted sum of the likelihood over the equal-prior-mass cells, the prior renormalised
    # over the physically possible cells, with the Gaussian normalisation (see induct.inversion.evidence).
    result.log_evidence = float(-0.5 * part.ref + np.log(total) - np.log(part.n_valid)
                                + log_likelihood_normalisation(setup.measurements))
    return result


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
    nlive: int | None = None,
    max_evaluations: int | None = None,
    max_time_s: float | None = None,
) -> PosteriorResult:
    """Posterior ranges of the free parameters of ``model`` given ``measurements``.

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
        Grid points per axis (>= 2; default 60). For MCMC: histogram bins of
        the marginal maps.
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

    Returns
    -------
    PosteriorResult

    Raises
    ------
    ValueError
        Bad parameter names or ranges, grid < 2, physically impossible
        ranges, an unknown sampler.
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
        return run_grid(setup, backend=backend, progress=progress, chunk_size=chunk_size)
    if sampler == "nested":
        from induct.inversion.nested import run_nested

        return run_nested(pmap, measurements, bins=_grid_points(points, k), cap=cap, nlive=nlive, seed=seed,
                          max_evaluations=max_evaluations, max_time_s=max_time_s, progress=progress)
    from induct.inversion.mcmc import run_mcmc

    return run_mcmc(pmap, measurements, bins=_grid_points(points, k), cap=cap, steps=steps, walkers=walkers,
                    seed=seed, progress=progress, max_evaluations=max_evaluations, max_time_s=max_time_s)


def _default_sampler() -> str:
    """The sampler above the grid's reach: nested (dynesty) if installed, else the ensemble sampler (emcee)."""
    import importlib.util

    if importlib.util.find_spec("dynesty") is not None:
        return "nested"
    if importlib.util.find_spec("emcee") is not None:
        return "ensemble"
    raise ImportError("more than 4 free parameters need a sampler: pip install 'induct[nested]' (dynesty) "
                      "or 'induct[mcmc]' (emcee)")
