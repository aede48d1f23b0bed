"""Command-line options shared by the commands that run large sweeps (invert, map).

``--workers N`` starts a local Dask cluster, ``--scheduler ADDRESS`` uses a
running one, ``--task-size`` bounds the work (and memory) of each task. Without
them everything runs in this process and Dask is not needed.
"""

from __future__ import annotations

import contextlib


def add_cluster_options(parser, default_task_size: int) -> None:
    group = parser.add_argument_group("cluster (optional; needs pip install 'induct[dask]')")
    where = group.add_mutually_exclusive_group()
    where.add_argument("--workers", type=int, metavar="N", help="run on a local Dask cluster of N worker processes")
    where.add_argument("--scheduler", metavar="ADDRESS", help="run on an existing Dask cluster (e.g. tcp://host:8786)")
    group.add_argument(
        "--task-size",
        type=int,
        default=default_task_size,
        metavar="M",
        help=f"models (or cells) per task; bounds each task's memory (default {default_task_size})",
    )


@contextlib.contextmanager
def backend_for(args):
    """The execution backend the options ask for (in-process when neither option is given)."""
    if args.task_size < 1:
        raise ValueError(f"--task-size must be >= 1, got {args.task_size}")
    if args.workers is None and args.scheduler is None:
        yield None
        return
    if args.workers is not None and args.workers < 1:
        raise ValueError(f"--workers must be >= 1, got {args.workers}")
    from induct.parallel.dask_backend import open_backend

    with open_backend(workers=args.workers, scheduler=args.scheduler) as backend:
        yield backend
