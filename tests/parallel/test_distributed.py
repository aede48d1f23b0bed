"""Dask backend of the chunked execution layer (induct.parallel.dask_backend).

What the results are checked against:

* the same reduction run in this process by :class:`induct.parallel.execution.InProcess`, and
  a direct, unchunked NumPy reduction of the whole chi-square grid. Agreement to 1e-12
  relative is the acceptance criterion of project issue 7; partial sums merged in a
  different order differ by a few ulp (Goldberg 1991, ACM Computing Surveys 23(1), 5-48:
  floating-point addition is not associative, the error of a sum of n positive terms is
  below n * eps relative). Counts, histograms and the best-fit index must agree exactly.
* worker failures: a worker process killed mid-run (SIGKILL) must not change the result,
  and a task whose worker dies more often than the allowed retries must raise a
  DistributedRunError naming how many tasks completed (Dask's documented behaviour:
  "allowed-failures" and KilledWorker, distributed documentation, "Scheduling state").

The LocalCluster (2 single-threaded worker processes) is started once for the module;
the external cluster is a real `dask scheduler` and two `dask worker` processes on
loopback, torn down in the fixture's finally block.
"""

from __future__ import annotations

import json
import os
import socket
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

import induct
from induct.bench.cluster import bench_misfit_task, misfit_difference
from induct.inversion.grid import combine_partials as combine_misfit
from induct.parallel.dask_backend import (
    INSTALL_HINT,
    WORKER_ENVIRON,
    DaskBackend,
    DistributedRunError,
    backend_from_options,
    open_backend,
)
from induct.parallel.execution import InProcess, chunk_ranges, run_reduction

RTOL = 1e-12  # acceptance criterion of issue 7 (relative)
MODELS = 2_000  # grid points of the test reduction (20 x ... x 20 grid), 4 periods each
CHUNK = 300  # grid points per task -> 7 tasks


@pytest.fixture(scope="module", autouse=True)
def _pickle_test_classes_by_value():
    """Workers cannot import this test module: send its classes by value (cloudpickle)."""
    import cloudpickle

    module = sys.modules[__name__]
    cloudpickle.register_pickle_by_value(module)
    yield
    cloudpickle.unregister_pickle_by_value(module)


@pytest.fixture(scope="module")
def task():
    return bench_misfit_task(MODELS)


@pytest.fixture(scope="module")
def reference(task):
    return run_reduction(task, task.size, chunk_size=CHUNK, combine=combine_misfit, backend=InProcess())


@pytest.fixture(scope="module")
def cluster():
    with DaskBackend(workers=2, retries=1) as backend:
        backend.client.wait_for_workers(2, timeout=60)
        yield backend


def _assert_same(result, expected, what):
    diff = misfit_difference(result, expected)
    assert diff <= RTOL, (
        f"{what}: relative difference {diff:.3e} > {RTOL:g}; "
        f"min chi2 {result.ref!r} vs {expected.ref!r}, best cell {result.best_index} vs {expected.best_index}, "
        f"valid cells {result.n_valid} vs {expected.n_valid}"
    )


class SlowTask:
    """Wraps a task: sleeps first, and reports which chunk ran where."""

    def __init__(self, inner, delay_s):
        self.inner, self.delay_s = inner, delay_s

    def __call__(self, start, stop):
        from distributed import get_worker

        time.sleep(self.delay_s)
        return [(start, get_worker().address, self.inner(start, stop))]


class PoisonTask:
    """Kills its worker process whenever it runs the chunk starting at ``poison_start``."""

    def __init__(self, inner, poison_start):
        self.inner, self.poison_start = inner, poison_start

    def __call__(self, start, stop):
        if start == self.poison_start:
            from distributed import get_worker

            get_worker()  # raises ValueError outside a worker: never kill the test process
            os._exit(13)
        return self.inner(start, stop)


class FailingTask:
    def __call__(self, start, stop):
        if start >= 600:
            raise ValueError(f"bad chunk {start}-{stop}")
        return start


# ----------------------------------------------------------------------------- options, no Dask needed
def test_no_options_run_in_process():
    assert isinstance(backend_from_options(), InProcess)
    with open_backend() as backend:
        assert isinstance(backend, InProcess)


@pytest.mark.parametrize(
    "kwargs, message",
    [
        ({"workers": 0}, "workers"),
        ({"workers": 2.5}, "workers"),
        ({"workers": True}, "workers"),
        ({"workers": 2, "scheduler": "tcp://127.0.0.1:8786"}, "not both"),
        ({"scheduler": "tcp://host name:8786"}, "scheduler"),
        ({"scheduler": ""}, "scheduler"),
        ({"workers": 1, "retries": -1}, "retries"),
    ],
)
def test_bad_options(kwargs, message):
    with pytest.raises(ValueError, match=message):
        backend_from_options(**kwargs)


def test_missing_dask_says_how_to_install(monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)  # makes "import distributed" raise ImportError
    for make in (lambda: DaskBackend(workers=2), lambda: backend_from_options(scheduler="tcp://127.0.0.1:8786")):
        with pytest.raises(ImportError) as info:
            make()
        assert INSTALL_HINT in str(info.value) and "pip install 'induct[dask]'" in str(info.value), str(info.value)
    assert isinstance(backend_from_options(), InProcess)  # the default still works


def test_unreachable_scheduler_is_a_value_error():
    with socket.socket() as s:  # a free loopback port with nobody listening
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    t0 = time.perf_counter()
    with pytest.raises(ValueError, match="could not connect to the Dask scheduler"):
        DaskBackend(scheduler=f"tcp://127.0.0.1:{port}", timeout_s=1.0)
    assert time.perf_counter() - t0 < 20


def test_warns_about_workers_with_a_small_heap_trim_threshold():
    from induct.parallel.dask_backend import _warn_slow_heap

    class FakeClient:  # what Client.run returns: worker address -> result
        def run(self, func, on_error):
            return {"tcp://a:1": ("65536", None), "tcp://b:1": (None, None), "tcp://c:1": ("134217728", "33554432")}

    with pytest.warns(UserWarning, match="1 of 3 Dask workers run with MALLOC_TRIM_THRESHOLD_ below 1 MiB"):
        _warn_slow_heap(FakeClient())


# ----------------------------------------------------------------------------- local cluster
def test_local_workers_get_the_worker_environment(cluster):
    from induct.parallel.dask_backend import _heap_settings

    settings = cluster.client.run(_heap_settings)
    threads = cluster.client.run(lambda: os.environ.get("OMP_NUM_THREADS"))
    expected = (WORKER_ENVIRON["MALLOC_TRIM_THRESHOLD_"], WORKER_ENVIRON["MALLOC_MMAP_THRESHOLD_"])
    assert len(settings) == 2 and all(v == expected for v in settings.values()), settings
    assert set(threads.values()) == {"1"}, threads


def test_cluster_agrees_with_in_process_and_direct(task, reference, cluster):
    # Direct, unchunked reduction of the whole grid (chi-square of every cell in one call).
    s = task.setup
    chi2 = s.measurements.chi2(s.responses(0, task.size))
    ok = np.isfinite(chi2)
    assert reference.n_valid == ok.sum() and reference.n_cells == chi2.size
    assert reference.best_index == int(np.nanargmin(chi2)), (reference.best_index, int(np.nanargmin(chi2)))
    assert reference.ref == float(np.nanmin(chi2))
    weight = np.exp(-0.5 * (np.where(ok, chi2, np.inf) - reference.ref)).reshape(s.shape)
    for axis, marginal in enumerate(reference.marginals):
        direct = weight.sum(axis=tuple(k for k in range(len(s.shape)) if k != axis))
        rel = np.abs(marginal - direct) / np.maximum(np.abs(direct), np.finfo(float).tiny)
        k = int(np.argmax(rel))
        assert rel[k] <= RTOL, (
            f"marginal over {s.parameters[axis].name} cell {k}: chunked {marginal[k]!r} vs direct "
            f"{direct[k]!r} (relative difference {rel[k]:.3e} > {RTOL:g})"
        )

    mapped = run_reduction(task, task.size, chunk_size=CHUNK, combine=combine_misfit, backend=cluster)
    _assert_same(mapped, reference, "run_reduction on the cluster")
    tree = cluster.reduce_ranges(task, chunk_ranges(task.size, CHUNK), combine_misfit)
    _assert_same(tree, reference, "tree reduction on the workers")
    assert cluster.reduce_ranges(task, [], combine_misfit) is None
    assert list(cluster.map_ranges(task, [], "", False)) == []


def test_progress_bar_over_completed_tasks(task, cluster, capsys):
    n = len(chunk_ranges(task.size, CHUNK))
    run_reduction(task, task.size, chunk_size=CHUNK, combine=combine_misfit, backend=cluster, desc="misfit grid", progress=True)
    err = capsys.readouterr().err
    assert "misfit grid" in err and f"/{n}" in err, err
    cluster.reduce_ranges(task, chunk_ranges(task.size, CHUNK), combine_misfit, desc="tree grid", progress=True)
    err = capsys.readouterr().err
    assert "tree grid" in err and f"/{n}" in err, err
    run_reduction(task, task.size, chunk_size=CHUNK, combine=combine_misfit, backend=cluster, desc="quiet", progress=False)
    assert "quiet" not in capsys.readouterr().err


def test_task_error_is_raised_unchanged(cluster):
    with pytest.raises(ValueError, match="bad chunk") as info:
        run_reduction(FailingTask(), 1000, chunk_size=200, combine=lambda a, b: a + b, backend=cluster)
    assert any("Dask worker" in note for note in getattr(info.value, "__notes__", [])), info.value


def test_large_task_is_broadcast_once(cluster, monkeypatch):
    table = np.random.default_rng(7).standard_normal(300_000)  # 2.4 MB x 6 chunks: above the 10 MB threshold

    def task(start, stop):  # a closure: pickled by value
        return float(table[start:stop].sum())

    calls = []
    scatter = cluster.client.scatter
    monkeypatch.setattr(cluster.client, "scatter", lambda *a, **k: calls.append(k) or scatter(*a, **k))
    got = cluster.reduce_ranges(task, chunk_ranges(table.size, 50_000), lambda a, b: a + b)
    expected = run_reduction(task, table.size, chunk_size=50_000, combine=lambda a, b: a + b)
    assert len(calls) == 1 and calls[0].get("broadcast") is True, calls
    assert abs(got - expected) <= RTOL * np.abs(table).sum(), (got, expected)


@pytest.mark.parametrize("path", ["map", "tree"])
def test_worker_deaths_beyond_retries_raise(task, cluster, path):
    # retries=1: the poisoned chunk kills its worker twice, then the scheduler gives up (KilledWorker).
    poison = PoisonTask(task, poison_start=3 * CHUNK)
    ranges = chunk_ranges(task.size, CHUNK)
    n = len(ranges)
    try:
        with pytest.raises(DistributedRunError, match=rf"\b\d+ of {n} tasks completed") as info:
            if path == "map":
                run_reduction(poison, task.size, chunk_size=CHUNK, combine=combine_misfit, backend=cluster)
            else:
                cluster.reduce_ranges(poison, ranges, combine_misfit)
        assert info.value.total == n and 0 <= info.value.completed < n, (info.value.completed, info.value.total)
        assert "no partial result" in str(info.value)
    finally:
        cluster.client.wait_for_workers(2, timeout=60)  # the nannies restart the killed workers


# ----------------------------------------------------------------------------- external cluster
@pytest.fixture
def external_cluster(tmp_path):
    """A `dask scheduler` and two `dask worker` processes on loopback (random ports)."""
    root = str(Path(induct.__file__).resolve().parent.parent)
    env = dict(os.environ, **WORKER_ENVIRON)
    env["PYTHONPATH"] = os.pathsep.join([root, env.get("PYTHONPATH", "")]).rstrip(os.pathsep)
    env["DASK_DISTRIBUTED__SCHEDULER__ALLOWED_FAILURES"] = "3"
    env["DASK_LOGGING__DISTRIBUTED"] = "error"
    sched_file = tmp_path / "scheduler.json"
    procs = []

    def start(args, name):
        log = open(tmp_path / f"{name}.log", "w")
        procs.append((subprocess.Popen(args, env=env, stdout=log, stderr=subprocess.STDOUT, cwd=root), log))
        return procs[-1][0]

    backend = None
    try:
        start(["dask", "scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard",
               "--scheduler-file", str(sched_file)], "scheduler")
        workers = [
            start(["dask", "worker", "--scheduler-file", str(sched_file), "--host", "127.0.0.1", "--nworkers", "1",
                   "--nthreads", "1", "--no-nanny", "--no-dashboard", "--name", f"w{i}"], f"worker{i}")
            for i in range(2)
        ]
        deadline = time.monotonic() + 60
        while not sched_file.exists() or not sched_file.read_text().strip().endswith("}"):
            assert time.monotonic() < deadline, "the dask scheduler did not write its address within 60 s"
            time.sleep(0.1)
        address = json.loads(sched_file.read_text())["address"]
        backend = backend_from_options(scheduler=address)
        backend.client.wait_for_workers(2, timeout=60)
        yield backend, workers
    finally:
        if backend is not None:
            backend.close()
        for proc, log in reversed(procs):
            proc.terminate()
        for proc, log in procs:
            try:
                proc.wait(timeout=10)
            except subprocess.TimeoutExpired:
                proc.kill()
                proc.wait()
            log.close()


def test_external_cluster_survives_a_killed_worker(task, reference, external_cluster):
    backend, workers = external_cluster
    ranges = chunk_ranges(task.size, CHUNK)
    slow = SlowTask(task, delay_s=0.4)
    parts, killed_at = [], None
    for part in backend.map_ranges(slow, ranges, "kill test", False):
        parts.extend(part)
        if killed_at is None:
            workers[0].kill()  # SIGKILL, mid-run: the other chunks are queued or running
            workers[0].wait(timeout=10)
            killed_at = len(parts)
    assert killed_at < len(ranges), "the kill did not land mid-run"
    starts = sorted(start for start, _, _ in parts)
    assert starts == [start for start, _ in ranges], f"chunks lost or duplicated: {starts}"
    result = parts[0][2]
    for _, _, partial in parts[1:]:
        result = combine_misfit(result, partial)
    _assert_same(result, reference, "external cluster after a worker was killed")
    deadline = time.monotonic() + 30
    while backend.worker_count != 1:
        assert time.monotonic() < deadline, f"scheduler still lists {backend.worker_count} workers"
        time.sleep(0.1)
    # Chunks finished after the kill ran on the surviving worker.
    survivors = {addr for start, addr, _ in parts[killed_at:]}
    assert len(survivors) == 1, survivors


def test_bench_cli_compares_one_process_with_the_cluster(capsys):
    from induct.cli.main import main

    assert main(["bench", "--dask-workers", "1", "--dask-model-periods", "40000", "--json"]) == 0
    res = json.loads(capsys.readouterr().out)
    assert res["model_periods"] >= 40_000 and res["workers"] == 1, res
    assert res["max_relative_difference"] <= RTOL, res  # same reduction in both places (issue 7 criterion)
    assert res["single_seconds"] > 0 and res["cluster_seconds"] > 0 and res["split_tasks"] == 100, res
