"""Writing files safely: into a temporary file in the target folder, then ``os.replace`` into place.

A reader never sees a half-written file, and a failed write leaves an existing
file untouched. Every writer in :mod:`induct.io` (and the figure writer of
:mod:`induct.plot.style`) goes through :func:`atomic_path`.
"""

from __future__ import annotations

import contextlib
import os
import uuid
from pathlib import Path

__all__ = ["atomic_path", "atomic_open", "write_text"]


@contextlib.contextmanager
def atomic_path(path):
    """Yield a temporary path beside ``path``; on success it replaces ``path``, on error it is removed.

    Parameters
    ----------
    path : str or Path
        The file to write. Its folder must exist.

    Yields
    ------
    Path
        A file name in the same folder (hidden, ``.tmp`` suffix) to write to.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> with atomic_path(folder / "a.txt") as tmp:
    ...     _ = tmp.write_text("hello")
    >>> (folder / "a.txt").read_text()
    'hello'
    """
    path = Path(path)
    tmp = path.with_name(f".{path.name}.{uuid.uuid4().hex[:12]}.tmp")
    try:
        yield tmp
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


@contextlib.contextmanager
def atomic_open(path, mode: str = "w", **kwargs):
    """Open a temporary file beside ``path`` for writing; it replaces ``path`` when the block ends without error.

    Parameters
    ----------
    path : str or Path
    mode : str
        A writing mode (``"w"``, ``"wb"``).
    **kwargs
        Passed to :func:`open` (``encoding``, ``newline``).

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> with atomic_open(folder / "b.csv", newline="") as fh:
    ...     _ = fh.write("x,y\\n")
    >>> (folder / "b.csv").read_text()
    'x,y\\n'
    """
    with atomic_path(path) as tmp:
        with open(tmp, mode, **kwargs) as handle:
            yield handle


def write_text(path, text: str, encoding: str = "utf-8") -> Path:
    """Write ``text`` to ``path`` atomically; returns the path.

    Examples
    --------
    >>> import tempfile
    >>> out = write_text(Path(tempfile.mkdtemp()) / "c.txt", "done\\n")
    >>> out.read_text()
    'done\\n'
    """
    path = Path(path)
    with atomic_open(path, "w", encoding=encoding, newline="") as handle:
        handle.write(text)
    return path
