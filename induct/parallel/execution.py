"""One chunked execution layer for large sweeps (inversion grids, maps, flyby sweeps).

Work is described as a *task* over index ranges ``[start, stop)`` of a flat
work list, whose partial results are merged by an associative *combine*
function. Only these small partial results (histograms, minima, best fits)
travel back, so the same code runs in-process or on a cluster:

>>> total = run_reduction(lambda a, b: b - a, 10, chunk_size=3, combine=lambda x, y: x + y)
>>> total
10

The in-process backend is the default and needs nothing beyond NumPy. Other
backends (for example Dask, see :mod:`induct.parallel.dask_backend`) implement the
same :class:`Backend` protocol.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any, Callable, Iterable, Protocol

__all__ = ["Backend", "InProcess", "ChunkRanges", "chunk_ranges", "run_reduction", "DEFAULT_TASK_SIZE"]

#: Default number of work items (models or model-periods) per task.
DEFAULT_TASK_SIZE = 262_144


class ChunkRanges(Sequence):
    """The ``(start, stop)`` pieces of ``range(total)``, generated on demand (a grid of 1e15 cells costs nothing).

    Examples
    --------
    >>> r = ChunkRanges(10, 4)
    >>> len(r), list(r), r[-1]
    (3, [(0, 4), (4, 8), (8, 10)], (8, 10))
    """

    def __init__(self, total: int, chunk_size: int):
        self.total, self.chunk_size = int(total), int(chunk_size)

    def __len__(self) -> int:
        return -(-self.total // self.chunk_size)

    def __getitem__(self, i):
        if isinstance(i, slice):
            return [self[j] for j in range(*i.indices(len(self)))]
        n = len(self)
        if i < 0:
            i += n
        if not 0 <= i < n:
            raise IndexError(i)
        start = i * self.chunk_size
        return (start, min(start + self.chunk_size, self.total))

    def __iter__(self):
        for start in range(0, self.total, self.chunk_size):
            yield (start, min(start + self.chunk_size, self.total))

    def __eq__(self, other):
        return list(self) == list(other) if isinstance(other, (list, tuple, ChunkRanges)) else NotImplemented

    def __repr__(self) -> str:
        return f"ChunkRanges(total={self.total}, chunk_size={self.chunk_size})"


def chunk_ranges(total: int, chunk_size: int) -> ChunkRanges:
    """Split ``range(total)`` into consecutive ``(start, stop)`` pieces of at most ``chunk_size`` (a lazy sequence).

    Examples
    --------
    >>> list(chunk_ranges(5, 2))
    [(0, 2), (2, 4), (4, 5)]
    """
    if total < 0:
        raise ValueError(f"total must be >= 0, got {total}")
    if chunk_size < 1:
        raise ValueError(f"chunk size must be >= 1, got {chunk_size}")
    return ChunkRanges(total, chunk_size)


class Backend(Protocol):
    """Runs ``task(start, stop)`` over ranges and yields partial results (in any order)."""

    def map_ranges(self, task: Callable[[int, int], Any], ranges: list[tuple[int, int]], desc: str, progress: bool) -> Iterable[Any]:
        ...


class InProcess:
    """Run every task in this process, one after another (the default backend)."""

    def map_ranges(self, task, ranges, desc: str = "", progress: bool = True):
        from tqdm.auto import tqdm

        bar = tqdm(total=len(ranges), desc=desc or "chunks", unit="chunk", disable=not progress or len(ranges) < 2, leave=False)
        try:
            for start, stop in ranges:
                yield task(start, stop)
                bar.update(1)
        finally:
            bar.close()


def run_reduction(
    task: Callable[[int, int], Any],
    total: int,
    *,
    chunk_size: int = DEFAULT_TASK_SIZE,
    combine: Callable[[Any, Any], Any],
    backend: Backend | None = None,
    desc: str = "",
    progress: bool = False,
):
    """Evaluate ``task`` over ``range(total)`` in chunks and merge the partial results.

    Parameters
    ----------
    task : callable ``(start, stop) -> partial``
        Works on items ``start`` to ``stop - 1`` and returns a small partial result.
    total : int
        Number of work items.
    chunk_size : int
        Items per task; bounds the memory of each task.
    combine : callable ``(partial, partial) -> partial``
        Associative and commutative merge (tasks may finish in any order).
    backend : Backend, optional
        Where tasks run; in-process by default.
    desc : str
        Label for the progress bar.
    progress : bool
        Show a progress bar (tqdm, on standard error).

    Returns
    -------
    The merged result, or ``None`` when ``total`` is 0.
    """
    backend = backend or InProcess()
    ranges = chunk_ranges(total, chunk_size)
    # Backends that can merge on their workers (Dask) do so: only the final result travels back.
    reduce_ranges = getattr(backend, "reduce_ranges", None)
    if reduce_ranges is not None:
        return reduce_ranges(task, ranges, combine, desc, progress) if ranges else None
    result = None
    for part in backend.map_ranges(task, ranges, desc, progress):
        result = part if result is None else combine(result, part)
    return result
