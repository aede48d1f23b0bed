"""Run the chunked execution layer on a Dask cluster (optional: ``pip install 'induct[dask]'``).

:class:`DaskBackend` implements the :class:`induct.parallel.execution.Backend`
protocol, so every sweep built on :func:`induct.parallel.execution.run_reduction`
(inversion grids, maps, flyby sweeps) runs unchanged on

* a local cluster of worker processes on this machine (``workers=N``), or
* an existing cluster, reached through its scheduler (``scheduler="tcp://host:8786"``),
  for example one started on a batch system with dask-jobqueue (docs/cluster.md).

Each task ``task(start, stop)`` runs on a worker and returns a small partial
reduction (a histogram, a minimum chi-square and its index, ...), so only
partial results travel back. :meth:`DaskBackend.reduce_ranges` goes one step
further and merges the partials pairwise on the workers, so that the client
receives only the final result.

Tasks (and ``combine``) are serialised with cloudpickle: classes and
functions defined in an importable module are sent by reference (every
worker needs the same version of induct, and of any module the task comes
from, installed); lambdas, closures and whatever is defined in ``__main__``
or in a module registered with ``cloudpickle.register_pickle_by_value`` are
sent by value. A task should carry small inputs -- an
:class:`~induct.model.interior.InteriorModel`, the grid axes, the measurements --
and build its large arrays inside ``__call__`` from ``start`` and ``stop``.
A large task (its pickle times the number of chunks above
``scatter_threshold_bytes``) is sent to every worker once
(``client.scatter(..., broadcast=True)``) instead of with every chunk.
A script that starts a local cluster must guard its entry point with
``if __name__ == "__main__":`` (worker processes are spawned, not forked).

Failures are loud: a task that raises re-raises its own exception here; a
task whose worker died more often than ``retries`` allows (out of memory,
killed by the batch system, crashed), or that was cancelled or lost with the
connection, raises :class:`DistributedRunError` naming how many tasks of how
many completed. No partial result is ever returned.

Example
-------
>>> from induct.parallel.dask_backend import open_backend                     # doctest: +SKIP
>>> with open_backend(workers=2) as backend:                        # doctest: +SKIP
...     best = run_reduction(task, total, combine=combine, backend=backend)
"""

from __future__ import annotations

import contextlib
import logging
import re
import uuid
import warnings
from typing import Any, Callable

from induct.parallel.execution import InProcess

__all__ = [
    "DaskBackend",
    "DistributedRunError",
    "backend_from_options",
    "open_backend",
    "require_distributed",
    "INSTALL_HINT",
    "WORKER_ENVIRON",
]

#: How to install the optional dependency (shown in the ImportError).
INSTALL_HINT = "pip install 'induct[dask]'"

#: Environment of local worker processes, set before they start. One thread per process for any
#: BLAS/OpenMP library (the workers are the parallelism). Dask's own default trims the heap at
#: 64 KiB, which also disables glibc's adaptive mmap threshold: every temporary array above
#: 128 KiB is then mapped and unmapped again, and the kernel ran 3.7x slower in a measurement on
#: this project's 2-core x86_64 machine (page faults). These values keep arrays of up to 32 MiB
#: on the heap and give memory above 128 MiB back to the system.
WORKER_ENVIRON = {
    "OMP_NUM_THREADS": "1",
    "OPENBLAS_NUM_THREADS": "1",
    "MKL_NUM_THREADS": "1",
    "MALLOC_TRIM_THRESHOLD_": str(128 * 2**20),
    "MALLOC_MMAP_THRESHOLD_": str(32 * 2**20),
}

# A scheduler address: optional protocol, a host (name, IPv4 or [IPv6]) and an optional port.
_ADDRESS = re.compile(r"^(?:[a-z][a-z0-9+]*://)?(?:\[[0-9a-fA-F:.]+\]|[A-Za-z0-9_.\-]+)(?::\d{1,5})?$")


class DistributedRunError(RuntimeError):
    """A distributed run that could not finish: no partial result is returned.

    Attributes
    ----------
    completed : int
        Tasks (chunks) that finished before the failure.
    total : int
        Tasks (chunks) in the run.
    """

    def __init__(self, message: str, completed: int, total: int):
        super().__init__(message)
        self.completed = int(completed)
        self.total = int(total)


def require_distributed():
    """Import and return the ``distributed`` package, or raise an ImportError saying how to install it."""
    try:
        import distributed
    except ImportError as exc:
        raise ImportError(
            "running on a Dask cluster (--workers / --scheduler) needs the optional dependency "
            f"dask[distributed], which is not installed: {INSTALL_HINT}"
        ) from exc
    return distributed


def _call(blob: bytes, *args):
    """Worker side: rebuild a function from its cloudpickle and call it (module level: sent by reference)."""
    import cloudpickle

    return cloudpickle.loads(blob)(*args)


def _heap_settings():
    """Worker side: the malloc settings of this process's environment (see WORKER_ENVIRON)."""
    import os

    return os.environ.get("MALLOC_TRIM_THRESHOLD_"), os.environ.get("MALLOC_MMAP_THRESHOLD_")


def _warn_slow_heap(client) -> None:
    """Warn when workers of an existing cluster run with Dask's small heap-trim threshold."""
    try:
        settings = client.run(_heap_settings, on_error="ignore")
    except Exception:  # pragma: no cover - a diagnostic only
        return
    slow = [
        w for w, (trim, mmap) in settings.items()
        if trim is not None and mmap is None and trim.isdigit() and int(trim) < 2**20
    ]
    if slow:
        warnings.warn(
            f"{len(slow)} of {len(settings)} Dask workers run with MALLOC_TRIM_THRESHOLD_ below 1 MiB (Dask's "
            "default), which makes the response kernel several times slower; start the workers with "
            + " ".join(f"{k}={v}" for k, v in WORKER_ENVIRON.items() if k.startswith("MALLOC"))
            + " in their environment (docs/cluster.md)",
            stacklevel=3,
        )


class DaskBackend:
    """Backend that runs tasks on a Dask cluster.

    Give at most one of ``client``, ``workers`` and ``scheduler``; with none,
    a local cluster with one worker per core is started.

    Parameters
    ----------
    client : distributed.Client, optional
        An existing client; the backend uses it and never closes it.
    workers : int, optional
        Start a local cluster of this many worker processes (one thread each),
        >= 1. It is shut down by :meth:`close` (or at the end of a ``with``
        block).
    scheduler : str, optional
        Address of a running scheduler, e.g. ``"tcp://10.0.0.5:8786"``.
    retries : int
        How often a chunk is run again after it raised or after its worker
        died, >= 0 (default 2). For a local cluster it also sets the
        scheduler's ``allowed_failures``; the scheduler of an existing cluster
        uses its own ``distributed.scheduler.allowed-failures`` setting
        (default 3) for worker deaths.
    timeout_s : float
        Seconds to wait when connecting to a scheduler or to the local
        cluster, > 0 (default 30).
    scatter_threshold_bytes : int
        When the task's cloudpickle times the number of chunks exceeds this
        (bytes), the task is broadcast to the workers once rather than sent
        with every chunk (default 10 MB).

    Raises
    ------
    ImportError
        If dask[distributed] is not installed (the message says how to install it).
    ValueError
        On conflicting or out-of-range options, a malformed scheduler address,
        or a scheduler that cannot be reached within ``timeout_s``.
    """

    def __init__(
        self,
        client=None,
        workers: int | None = None,
        scheduler: str | None = None,
        retries: int = 2,
        *,
        timeout_s: float = 30.0,
        scatter_threshold_bytes: int = 10_000_000,
    ):
        options = (("client", client), ("workers", workers), ("scheduler", scheduler))
        given = [name for name, value in options if value is not None]
        if len(given) > 1:
            raise ValueError(
                f"give at most one of client, workers and scheduler (--workers / --scheduler), got {' and '.join(given)}"
            )
        if isinstance(retries, bool) or int(retries) != retries or retries < 0:
            raise ValueError(f"retries must be an integer >= 0, got {retries!r}")
        if not timeout_s > 0:
            raise ValueError(f"timeout_s must be > 0 s, got {timeout_s!r}")
        if workers is not None:
            _check_workers(workers)
        if scheduler is not None:
            _check_scheduler(scheduler)
        distributed = require_distributed()
        self._distributed = distributed
        self.retries = int(retries)
        self.scatter_threshold_bytes = int(scatter_threshold_bytes)
        self._cluster = None
        self._owns_client = client is None
        if client is not None:
            self.client = client
        elif scheduler is not None:
            try:
                self.client = distributed.Client(scheduler, timeout=timeout_s)
            except (OSError, TimeoutError) as exc:
                raise ValueError(
                    f"could not connect to the Dask scheduler at {scheduler!r} within {timeout_s:g} s ({exc}); "
                    "check the address (tcp://HOST:PORT) and that the scheduler is running"
                ) from exc
            _warn_slow_heap(self.client)
        else:
            import os

            import dask

            n = int(workers) if workers is not None else (os.cpu_count() or 1)
            environ = {**dask.config.get("distributed.nanny.pre-spawn-environ", {}), **WORKER_ENVIRON}
            with dask.config.set({"distributed.nanny.pre-spawn-environ": environ}):
                self._cluster = distributed.LocalCluster(
                    n_workers=n,
                    threads_per_worker=1,
                    processes=True,
                    dashboard_address="127.0.0.1:0",  # a free loopback port: no clash with 8787
                    silence_logs=logging.ERROR,
                    scheduler_kwargs={"allowed_failures": self.retries},
                )
            self.client = distributed.Client(self._cluster, timeout=timeout_s)

    # ------------------------------------------------------------ lifecycle
    def close(self) -> None:
        """Close the client and the local cluster if this backend created them (idempotent)."""
        if self._owns_client and self.client is not None:
            self.client.close()
        if self._cluster is not None:
            self._cluster.close()
        self.client = None if self._owns_client else self.client
        self._cluster = None

    def __enter__(self) -> "DaskBackend":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def __repr__(self) -> str:
        where = "closed" if self.client is None else getattr(self.client.scheduler, "address", "?")
        return f"DaskBackend({where}, retries={self.retries})"

    @property
    def worker_count(self) -> int:
        """Workers currently connected to the scheduler."""
        return len(self.client.scheduler_info(n_workers=-1)["workers"])

    # ------------------------------------------------------------ execution
    def _submit_all(self, task, ranges, label):
        client = self.client
        if client is None:
            raise RuntimeError("this DaskBackend is closed")
        import cloudpickle

        # cloudpickle ourselves: Dask would plain-pickle classes by reference whatever
        # cloudpickle.register_pickle_by_value says.
        payload = cloudpickle.dumps(task)
        if len(payload) * len(ranges) > self.scatter_threshold_bytes:
            payload = client.scatter(payload, broadcast=True, hash=False)
        return [
            client.submit(_call, payload, start, stop, key=(label, i), retries=self.retries, pure=False)
            for i, (start, stop) in enumerate(ranges)
        ]

    def _outcome(self, fut, done: int, total: int, desc: str):
        """Result of a completed future (waiting while a lost one is recomputed).

        Re-raises the task's own error with a note; raises DistributedRunError
        if the task was lost for good (worker deaths beyond the retries,
        cancellation, lost connection).
        """
        distributed = self._distributed
        try:
            return fut.result()
        except (distributed.KilledWorker, distributed.CancelledError) as exc:
            raise self._failure(exc, done, total, desc) from exc
        except Exception as exc:
            if fut.status != "error":  # not raised by the task: connection trouble
                raise self._failure(exc, done, total, desc) from exc
            exc.add_note(f"(raised on a Dask worker by chunk {fut.key!r}; {done} of {total} tasks had completed)")
            raise

    def _failure(self, exc, done: int, total: int, desc: str) -> DistributedRunError:
        what = f"the Dask run{f' {desc!r}' if desc else ''}"
        return DistributedRunError(
            f"{what} failed: {done} of {total} tasks completed, then a task was lost "
            f"({type(exc).__name__}: {exc}). Workers died (out of memory, killed by the batch system or crashed) "
            f"more often than retries={self.retries} allows, or the connection to the scheduler was lost; "
            "no partial result is returned",
            done,
            total,
        )

    def map_ranges(self, task: Callable[[int, int], Any], ranges, desc: str = "", progress: bool = True):
        """Run ``task(start, stop)`` for every range on the workers; yield the partial results as they complete.

        Parameters
        ----------
        task : callable ``(start, stop) -> partial``
            Picklable by cloudpickle (see the module docstring).
        ranges : list of (int, int)
            Index ranges ``[start, stop)``, one task each.
        desc : str
            Label of the progress bar and of the task keys on the dashboard.
        progress : bool
            Show a tqdm bar over completed tasks (standard error).

        Yields
        ------
        The partial result of each range, in completion order.

        Raises
        ------
        DistributedRunError
            If a task was lost (worker deaths beyond the allowed retries,
            cancellation, lost connection); remaining tasks are cancelled.
        Exception
            The task's own exception, unchanged, if it raised on every try.
        """
        from tqdm.auto import tqdm

        ranges = list(ranges)
        if not ranges:
            return
        label = f"induct-{desc or 'chunk'}-{uuid.uuid4().hex[:8]}"
        pending = {f.key: f for f in self._submit_all(task, ranges, label)}
        bar = tqdm(total=len(ranges), desc=desc or "chunks", unit="chunk", disable=not progress, leave=False)
        done = 0
        try:
            for fut in self._distributed.as_completed(list(pending.values())):
                part = self._outcome(fut, done, len(ranges), desc)
                pending.pop(fut.key, None)
                done += 1
                bar.update(1)
                yield part
        finally:
            bar.close()
            if pending and self.client is not None:
                self.client.cancel(list(pending.values()))

    def reduce_ranges(
        self,
        task: Callable[[int, int], Any],
        ranges,
        combine: Callable[[Any, Any], Any],
        desc: str = "",
        progress: bool = False,
    ):
        """Run the tasks and merge their partials pairwise on the workers; return the final result.

        Parameters
        ----------
        task, ranges, desc, progress
            As for :meth:`map_ranges` (the bar counts the chunk tasks).
        combine : callable ``(partial, partial) -> partial``
            Associative and commutative merge, picklable; runs on the workers
            as soon as two partial results exist, so only the final result is
            sent to the client.

        Returns
        -------
        The merged result, or ``None`` for no ranges.

        Raises
        ------
        DistributedRunError, Exception
            As for :meth:`map_ranges`.
        """
        from tqdm.auto import tqdm

        ranges = list(ranges)
        if not ranges:
            return None
        label = f"induct-{desc or 'chunk'}-{uuid.uuid4().hex[:8]}"
        leaves = self._submit_all(task, ranges, label)
        import cloudpickle

        merge = cloudpickle.dumps(combine)
        leaf_keys = {f.key for f in leaves}
        live = {f.key: f for f in leaves}
        queue = self._distributed.as_completed(leaves)
        bar = tqdm(total=len(ranges), desc=desc or "chunks", unit="chunk", disable=not progress, leave=False)
        done, merges, waiting = 0, 0, None
        try:
            for fut in queue:
                if fut.status in ("error", "cancelled"):
                    self._outcome(fut, done, len(ranges), desc)  # raises; a "lost" one is recomputed
                if fut.key in leaf_keys:
                    done += 1
                    bar.update(1)
                if waiting is None:
                    waiting = fut
                    continue
                merged = self.client.submit(
                    _call, merge, waiting, fut, key=(f"{label}-combine", merges), retries=self.retries, pure=False
                )
                merges += 1
                live.pop(waiting.key, None)
                live.pop(fut.key, None)
                live[merged.key] = merged
                queue.add(merged)
                waiting = None
            return self._outcome(waiting, done, len(ranges), desc)
        finally:
            bar.close()
            if self.client is not None:
                self.client.cancel(list(live.values()))


def _check_workers(workers) -> int:
    if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
        raise ValueError(f"workers (--workers) must be an integer >= 1, got {workers!r}")
    return workers


def _check_scheduler(scheduler) -> str:
    if not isinstance(scheduler, str) or not _ADDRESS.match(scheduler.strip()):
        raise ValueError(f"scheduler (--scheduler) must be an address like tcp://HOST:8786, got {scheduler!r}")
    return scheduler.strip()


def backend_from_options(workers: int | None = None, scheduler: str | None = None, retries: int = 2):
    """The backend selected by the ``--workers`` / ``--scheduler`` command-line options.

    Parameters
    ----------
    workers : int, optional
        Start a local Dask cluster of this many worker processes (>= 1).
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://HOST:PORT``).
    retries : int
        Retries per chunk on the cluster (see :class:`DaskBackend`).

    Returns
    -------
    InProcess or DaskBackend
        In-process NumPy (no Dask needed) when neither option is given.
        A :class:`DaskBackend` should be closed after use; prefer
        :func:`open_backend`, which does that.

    Raises
    ------
    ValueError
        If both options are given or either is out of range.
    ImportError
        If a cluster is asked for and dask[distributed] is not installed.
    """
    if workers is not None and scheduler is not None:
        raise ValueError("give either --workers (a local cluster) or --scheduler (an existing cluster), not both")
    if workers is None and scheduler is None:
        return InProcess()
    if workers is not None:
        return DaskBackend(workers=_check_workers(workers), retries=retries)
    return DaskBackend(scheduler=_check_scheduler(scheduler), retries=retries)


@contextlib.contextmanager
def open_backend(workers: int | None = None, scheduler: str | None = None, retries: int = 2):
    """Context manager around :func:`backend_from_options` that closes a Dask backend on exit.

    Yields
    ------
    InProcess or DaskBackend
    """
    backend = backend_from_options(workers, scheduler, retries)
    try:
        yield backend
    finally:
        close = getattr(backend, "close", None)
        if close is not None:
            close()
