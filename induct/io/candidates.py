"""Candidate-flyby files: CSV with columns ``candidate,t_s,x_km,y_km,z_km`` (one track per candidate id).

Format and frames as in :mod:`induct.io.tracks`; written atomically.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from induct.io.tracks import FRAMES, read_csv_rows, to_flow_frame
from induct.planning.candidates import Candidate

__all__ = ["CANDIDATE_COLUMNS", "read_candidates", "write_candidates"]

#: Columns of a candidate file.
CANDIDATE_COLUMNS = ("candidate", "t_s", "x_km", "y_km", "z_km")


def read_candidates(path, *, frame: str = "flow") -> list[Candidate]:
    """Read candidate flybys from a CSV file (format in the module docstring).

    Parameters
    ----------
    path : str or Path
        The file.
    frame : str
        Frame of the positions in the file: ``"flow"`` (default) or ``"body"``
        (see :mod:`induct.io.tracks`); converted to the flow frame.

    Returns
    -------
    list of Candidate
        In order of first appearance in the file.

    Raises
    ------
    FileNotFoundError
        If the file does not exist.
    ValueError
        Naming the file, data row (1 = first row after the header), file line and column: missing
        header or columns, a row with the wrong number of values, a value that is not a finite number,
        an empty candidate id, times of a candidate that do not increase strictly, a candidate with
        fewer than 2 rows.

    Examples
    --------
    >>> import os, tempfile
    >>> text = "candidate,t_s,x_km,y_km,z_km\\nA,0,2000,0,0\\nA,10,2000,60,0\\nB,5,0,0,1800\\nB,15,60,0,1800\\n"
    >>> with tempfile.TemporaryDirectory() as d:
    ...     p = os.path.join(d, "c.csv")
    ...     with open(p, "w") as f:
    ...         _ = f.write(text)
    ...     cands = read_candidates(p)
    >>> [(c.name, c.size) for c in cands]
    [('A', 2), ('B', 2)]
    """
    path = Path(path)
    source = str(path)
    if not path.is_file():
        raise FileNotFoundError(f"candidate file {source!r} not found")
    if frame not in FRAMES:
        raise ValueError(f"{source}: unknown frame {frame!r}; allowed: {', '.join(FRAMES)}")
    header, header_line, texts, numbers = read_csv_rows(path)
    rows = [next(csv.reader([text])) for text in texts]
    if header is None:
        raise ValueError(f"{source}: empty file; the first line must be the header {','.join(CANDIDATE_COLUMNS)}")
    dup = sorted({c for c in header if header.count(c) > 1})
    if dup:
        raise ValueError(f"{source}: line {header_line}: column(s) {', '.join(dup)} appear more than once in the header")
    missing = [c for c in CANDIDATE_COLUMNS if c not in header]
    if missing:
        raise ValueError(f"{source}: line {header_line}: missing column(s) {', '.join(missing)}; the header must name "
                         f"{','.join(CANDIDATE_COLUMNS)} (got {','.join(header)})")
    if not rows:
        raise ValueError(f"{source}: no data rows")
    width = len(header)
    index = {c: header.index(c) for c in CANDIDATE_COLUMNS}
    groups: dict[str, list[int]] = {}
    values = np.empty((len(rows), 4))
    for i, (cells, number) in enumerate(zip(rows, numbers)):
        if len(cells) != width:
            raise ValueError(f"{source}: row {i + 1}, line {number}: {len(cells)} values, expected {width} ({','.join(header)})")
        name = cells[index["candidate"]].strip()
        if not name:
            raise ValueError(f"{source}: row {i + 1}, line {number}, column candidate: empty candidate id")
        groups.setdefault(name, []).append(i)
        for j, col in enumerate(CANDIDATE_COLUMNS[1:]):
            cell = cells[index[col]].strip()
            try:
                v = float(cell)
            except ValueError:
                raise ValueError(f"{source}: row {i + 1}, line {number}, column {col}: not a number: {cell!r}") from None
            if not math.isfinite(v):
                raise ValueError(f"{source}: row {i + 1}, line {number}, column {col}: value must be finite, got {cell!r}")
            values[i, j] = v
    out = []
    for name, idx in groups.items():
        idx = np.asarray(idx)
        if idx.size < 2:
            i = int(idx[0])
            raise ValueError(f"{source}: row {i + 1}, line {numbers[i]}, column candidate: candidate {name!r} has only one "
                             "row; a track needs at least 2")
        t = values[idx, 0]
        bad = np.diff(t) <= 0.0
        if bad.any():
            k = int(np.argmax(bad)) + 1
            i, prev = int(idx[k]), int(idx[k - 1])
            raise ValueError(f"{source}: row {i + 1}, line {numbers[i]}, column t_s: t_s = {float(t[k])!r} of candidate {name!r} does "
                             f"not follow its previous row's {float(t[k - 1])!r} (row {prev + 1}); times must increase strictly")
        pos = to_flow_frame(values[idx, 1:], frame)
        out.append(Candidate(name, t, pos, {"source": source}))
    return out


def write_candidates(path, candidates, comments=()) -> None:
    """Write candidates as a CSV file (flow frame), atomically (temporary file, then ``os.replace``).

    Parameters
    ----------
    path : str or Path
        Output file; missing folders are created.
    candidates : sequence of Candidate
    comments : sequence of str
        One ``# ...`` line each, written first.

    Examples
    --------
    >>> import os, tempfile
    >>> c = Candidate("A", [0.0, 10.0], [[2000.0, 0.0, 0.0], [2000.0, 50.0, 0.0]])
    >>> with tempfile.TemporaryDirectory() as d:
    ...     p = os.path.join(d, "c.csv")
    ...     write_candidates(p, [c], comments=["frame: flow"])
    ...     [x.name for x in read_candidates(p)]
    ['A']
    """
    from induct.io.files import atomic_open

    path = Path(path)
    with atomic_open(path, "w", encoding="utf-8", newline="") as handle:
        for text in comments:
            handle.write("# " + " ".join(str(text).split()) + "\n")
        handle.write(",".join(CANDIDATE_COLUMNS) + "\n")
        for c in candidates:
            name = str(c.name)
            if any(ch in name for ch in ',"\n\r#'):
                raise ValueError(f"candidate id {name!r} cannot be written: no commas, quotes, newlines or '#'")
            block = np.column_stack([c.times_s, c.positions_km])
            for row in block:
                handle.write(name + "," + ",".join(f"{v:.12g}" for v in row) + "\n")


# --------------------------------------------------------------------------- geometry
