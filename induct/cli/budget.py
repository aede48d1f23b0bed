"""Job size estimates for the commands: refuse a job that would outgrow the machine, before allocating it.

Every command estimates its job (cells, samples, rows, bytes and, for long
runs, a time) with :func:`check_job` before calling the library. The memory
limit is 80 % of the memory available now (``psutil``, else
``/proc/meminfo``, else a fixed 2 GiB), or ``--max-memory``. A job above the
limit is refused with exit code 2 and the estimate; a run expected to take
longer than a minute says so on standard error (unless ``--quiet``).

The byte figures are estimates of the peak working set (the arrays the
command holds at once, with a stated factor for temporaries), not exact
counts; the times use a nominal kernel throughput measured with
``induct bench`` on a 2-core test machine and vary with the machine.
"""

from __future__ import annotations

import math
import re
import sys

__all__ = [
    "JobTooLarge", "available_memory_bytes", "memory_limit_bytes", "parse_size", "format_bytes",
    "format_seconds", "check_job", "csv_rows_estimate", "check_count", "add_budget_options", "model_seconds",
    "LAYER_MODEL_PERIODS_PER_S", "FALLBACK_LIMIT_BYTES",
]

#: Limit used when the available memory cannot be read (bytes).
FALLBACK_LIMIT_BYTES = 2 * 1024**3
#: Nominal throughput of the layered-sphere kernel: layers x models x periods per second on one core
#: (measured: 4-layer models, 7e5 model-periods/s with ``sweep_response`` on the 2-core test machine;
#: halved here for a machine shared with other jobs).
LAYER_MODEL_PERIODS_PER_S = 1.4e6
#: Runs longer than this (s) print their estimated time.
LONG_RUN_S = 60.0

_UNITS = {"": 1, "b": 1, "k": 1024, "kb": 1024, "m": 1024**2, "mb": 1024**2, "g": 1024**3, "gb": 1024**3,
          "t": 1024**4, "tb": 1024**4, "kib": 1024, "mib": 1024**2, "gib": 1024**3, "tib": 1024**4}


class JobTooLarge(ValueError):
    """A job estimated to need more memory than allowed (a ValueError: the CLI exits with code 2)."""


def parse_size(text) -> int:
    """Bytes from a size such as ``"500M"``, ``"2G"``, ``"1.5GB"`` or ``"1000000"`` (powers of 1024).

    Examples
    --------
    >>> parse_size("2G"), parse_size("512m"), parse_size("1000")
    (2147483648, 536870912, 1000)
    """
    m = re.fullmatch(r"\s*([0-9]+(?:\.[0-9]*)?(?:[eE][+-]?[0-9]+)?)\s*([a-zA-Z]*)\s*", str(text))
    if not m or m.group(2).lower() not in _UNITS:
        raise ValueError(f"--max-memory must be a size such as 500M, 2G or 1.5GB, got {text!r}")
    value = float(m.group(1)) * _UNITS[m.group(2).lower()]
    if not (math.isfinite(value) and 1 <= value < 2**62):
        raise ValueError(f"--max-memory must be between 1 byte and 4 EiB, got {text!r}")
    return int(value)


def format_bytes(n: float) -> str:
    """A byte count for people: ``'1.5 GB'`` (powers of 1024).

    Examples
    --------
    >>> format_bytes(1536 * 1024**2)
    '1.5 GB'
    """
    n = float(n)
    for unit in ("B", "kB", "MB", "GB", "TB", "PB"):
        if abs(n) < 1024 or unit == "PB":
            return f"{n:.3g} {unit}" if unit != "B" else f"{n:.0f} B"
        n /= 1024
    return f"{n:.3g} PB"  # pragma: no cover


def format_seconds(s: float) -> str:
    """A duration for people: ``'45 s'``, ``'12 min'``, ``'8.3 h'``, ``'3.1e+02 days'``.

    Examples
    --------
    >>> format_seconds(30000)
    '8.3 h'
    """
    if s < 120:
        return f"{s:.2g} s"
    if s < 7200:
        return f"{s / 60:.0f} min"
    if s < 3 * 86400:
        return f"{s / 3600:.2g} h"
    return f"{s / 86400:.2g} days"


def available_memory_bytes() -> int | None:
    """Memory available to a new job now (bytes): psutil, else ``/proc/meminfo`` MemAvailable, else None."""
    try:
        import psutil

        return int(psutil.virtual_memory().available)
    except Exception:  # noqa: BLE001 - psutil missing or unusable: fall back
        pass
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    return None


def memory_limit_bytes(args=None) -> int:
    """The memory limit of a job: ``--max-memory``, else 80 % of the available memory, else 2 GiB."""
    text = getattr(args, "max_memory", None)
    if text is not None:
        return parse_size(text)
    avail = available_memory_bytes()
    return int(0.8 * avail) if avail else FALLBACK_LIMIT_BYTES


def model_seconds(models: float, periods: float, layers: float) -> float:
    """Nominal time (s) of ``models x periods`` layered-sphere responses with ``layers`` layers on one core."""
    return float(models) * float(periods) * max(float(layers), 1.0) / LAYER_MODEL_PERIODS_PER_S


def check_count(value, what: str, limit: int) -> int:
    """Refuse a count (cells, samples, rows) above ``limit`` before anything is allocated.

    Examples
    --------
    >>> check_count(10, "--samples", 1000)
    10
    """
    if value > limit:
        raise JobTooLarge(f"{what} = {value:.4g} is more than this command handles ({limit:.4g})")
    return value


def check_job(args, what: str, nbytes: float, seconds: float | None = None) -> None:
    """Refuse a job whose estimated peak memory ``nbytes`` is above the limit; announce long runs.

    Parameters
    ----------
    args : argparse.Namespace or None
        The parsed options (``max_memory``, ``quiet``).
    what : str
        The job in words, e.g. ``"map of 1e+10 cells"``.
    nbytes : float
        Estimated peak memory (bytes).
    seconds : float, optional
        Estimated run time (s, nominal); said on standard error above one minute.

    Raises
    ------
    JobTooLarge
        ``nbytes`` is above :func:`memory_limit_bytes`.

    Examples
    --------
    >>> check_job(None, "a small job", 1e6)
    >>> try:
    ...     check_job(None, "a huge job", 1e30)
    ... except JobTooLarge as exc:
    ...     print(str(exc).split(";")[0])
    a huge job needs about 8.88e+14 PB
    """
    limit = memory_limit_bytes(args)
    source = "--max-memory" if getattr(args, "max_memory", None) is not None else "80 % of the available memory"
    when = f", about {format_seconds(seconds)}" if seconds is not None and seconds >= 1 else ""
    if not math.isfinite(nbytes) or nbytes > limit:
        raise JobTooLarge(
            f"{what} needs about {format_bytes(nbytes)}{when}; the limit is {format_bytes(limit)} ({source}): "
            "make the job smaller, or raise the limit with --max-memory SIZE"
        )
    if seconds is not None and seconds > LONG_RUN_S and not getattr(args, "quiet", False):
        print(f"induct: {what}: estimated {format_seconds(seconds)} (nominal rate; about "
              f"{format_bytes(nbytes)} of memory); Ctrl-C stops it cleanly", file=sys.stderr)


def csv_rows_estimate(paths, bytes_per_row: float = 25.0) -> tuple[float, float]:
    """(rows, bytes) of CSV files estimated from their sizes (short rows assumed, so rows are not underestimated).

    Names that are not files (bundled names) count as small.
    """
    import os

    size = 0.0
    for p in paths if isinstance(paths, (list, tuple)) else [paths]:
        try:
            size += os.path.getsize(p)
        except (OSError, TypeError):
            pass
    return size / bytes_per_row, size


def add_budget_options(parser) -> None:
    """Add ``--max-memory`` and ``--quiet`` (shared by every command) to a sub-parser."""
    group = parser.add_argument_group("job size and progress")
    group.add_argument("--max-memory", metavar="SIZE",
                       help="refuse jobs estimated above SIZE (e.g. 500M, 4G; default 80%% of the available memory)")
    group.add_argument("--quiet", "-q", action="store_true", help="no progress bars or run-time estimates")
