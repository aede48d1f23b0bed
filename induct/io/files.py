"""Writing files safely: into a temporary file in the target folder, then ``os.replace`` into place.

A reader never sees a half-written file, and a failed write leaves an existing
file untouched. Every writer in :mod:`induct.io` (and the figure writer of
:mod:`induct.plot.style`) goes through :func:`atomic_path`; missing folders are
created.

Inside :func:`output_set` (the CLI opens one around every command) the
temporary files are only renamed into place when the whole block succeeds, so a
command's outputs are complete or absent; on an error or an interrupt every
temporary file is removed. Files registered with :meth:`OutputSet.protect`
(the command's inputs) are never written over.
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import uuid
from pathlib import Path

__all__ = ["atomic_path", "atomic_open", "write_text", "output_set", "OutputSet", "same_file"]

_CURRENT: contextvars.ContextVar = contextvars.ContextVar("induct_output_set", default=None)


def same_file(a, b) -> bool:
    """True when paths ``a`` and ``b`` name the same file (``os.path.samefile``, else resolved paths).

    Examples
    --------
    >>> same_file("a/../b.txt", "b.txt")
    True
    """
    try:
        return os.path.samefile(a, b)
    except OSError:
        return Path(a).resolve() == Path(b).resolve()


class OutputSet:
    """The outputs of one run: temporary files waiting to be renamed together, and the inputs they must not replace.

    Attributes
    ----------
    pending : list of (Path, Path)
        ``(temporary, final)`` pairs, renamed on :meth:`commit`.
    protected : list of Path
        Inputs read in this run.
    replaced : list of Path
        Final paths that existed before the commit (earlier outputs replaced).

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> with output_set() as outputs:
    ...     _ = write_text(folder / "a.txt", "one")
    ...     (folder / "a.txt").exists()          # not yet: renamed when the block ends
    False
    >>> (folder / "a.txt").read_text()
    'one'
    """

    def __init__(self):
        self.pending: list[tuple[Path, Path]] = []
        self.protected: list[Path] = []
        self.replaced: list[Path] = []

    def protect(self, *paths) -> None:
        """Register input files that no output of this run may replace (non-existent paths are ignored)."""
        for p in paths:
            if p is not None and os.path.isfile(p):
                self.protected.append(Path(p))

    def check(self, path) -> None:
        """Raise ValueError if ``path`` is an input of this run or already an output of it."""
        for p in self.protected:
            if same_file(p, path):
                raise ValueError(f"refusing to write {path}: it is an input of this command (give another output name)")
        for _, final in self.pending:
            if same_file(final, path):
                raise ValueError(f"two outputs of this command are the same file {path}; give different names")

    def commit(self) -> None:
        """Rename every temporary file into place (in the order written)."""
        for tmp, final in self.pending:
            if final.exists():
                self.replaced.append(final)
            os.replace(tmp, final)
        self.pending = []

    def discard(self) -> None:
        """Remove every temporary file not yet renamed."""
        for tmp, _ in self.pending:
            with contextlib.suppress(OSError):
                os.unlink(tmp)
        self.pending = []


@contextlib.contextmanager
def output_set():
    """Group the writes of a block: all renamed into place at its end, or (on any error/interrupt) none.

    Yields
    ------
    OutputSet
    """
    outputs = OutputSet()
    token = _CURRENT.set(outputs)
    try:
        yield outputs
        outputs.commit()
    except BaseException:
        outputs.discard()
        raise
    finally:
        _CURRENT.reset(token)


@contextlib.contextmanager
def atomic_path(path, suffix: str = ".tmp"):
    """Yield a temporary path beside ``path``; on success it replaces ``path``, on error it is removed.

    Inside :func:`output_set` the rename waits for the end of the set.

    Parameters
    ----------
    path : str or Path
        The file to write. Missing folders are created.
    suffix : str
        Ending of the temporary name (some writers need ``.cdf`` or ``.bsp``); the file is not created.

    Yields
    ------
    Path
        A file name in the same folder (hidden, ``.tmp`` suffix) to write to.

    Raises
    ------
    ValueError
        If ``path`` is an input of the current :func:`output_set` (or written twice in it).

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
    outputs = _CURRENT.get()
    if outputs is not None:
        outputs.check(path)
    if path.is_dir():
        raise ValueError(f"cannot write {path}: it is a folder")
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.{uuid.uuid4().hex[:12]}{suffix}")
    try:
        yield tmp
        if outputs is not None:
            outputs.pending.append((tmp, path))
        else:
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


def read_text_file(path, what: str = "file") -> str:
    """The text of a UTF-8 file (a byte-order mark is dropped); binary or non-UTF-8 content is an error naming the file.

    Parameters
    ----------
    path : str or Path
    what : str
        What the file is, for messages ("scenario file", "trajectory file").

    Raises
    ------
    ValueError
        The file holds NUL bytes (binary) or is not valid UTF-8 (with the byte offset).
    FileNotFoundError
        The file does not exist.

    Examples
    --------
    >>> import tempfile
    >>> p = Path(tempfile.mkdtemp()) / "bom.csv"
    >>> _ = p.write_bytes(b"\\xef\\xbb\\xbft_s\\n")
    >>> read_text_file(p)
    't_s\\n'
    """
    path = Path(path)
    if path.is_dir():
        raise ValueError(f"{path}: is a folder, not a {what}")
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise FileNotFoundError(f"{path}: No such file ({what} not found)") from None
    except OSError as exc:
        raise ValueError(f"{path}: cannot read this {what} ({exc.strerror or exc})") from None
    return decode_text(data, path, what)


def decode_text(data: bytes, source, what: str = "file") -> str:
    """Decode bytes read from ``source`` as UTF-8 (BOM dropped) with errors naming the source (see :func:`read_text_file`).

    Examples
    --------
    >>> decode_text(b"a = 1\\n", "x.toml")
    'a = 1\\n'
    """
    if b"\x00" in data:
        raise ValueError(f"{source}: not a text {what} (it holds binary data: NUL bytes)")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ValueError(
            f"{source}: not a UTF-8 text {what} (undecodable byte 0x{data[exc.start]:02x} at offset {exc.start})"
        ) from None
