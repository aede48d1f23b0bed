"""CSV tables: the curve points of a diagram, the curves of a separation, and tables of labelled columns.

Every file is written to a temporary name in the target folder and moved into
place (:mod:`induct.io.files`). Numbers are written at full precision
(``repr``), so they read back exactly.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Sequence


from induct.io.files import atomic_open, write_text
from induct.model.response import phase_lag_deg

__all__ = ["csv_name", "table_csv", "write_table_csv", "write_diagram_csv", "write_separation_csv"]


def csv_name(header: str, unit: str) -> str:
    """CSV column name of a labelled column: spaces become underscores and the unit is a suffix.

    Examples
    --------
    >>> csv_name("difference at 100 km", "nT")
    'difference_at_100_km_nT'
    >>> csv_name("conductivity", "S/m")
    'conductivity_S_per_m'
    >>> csv_name("pair", "")
    'pair'
    """
    base = header.strip().replace(" ", "_")
    unit = unit.replace("/", "_per_").replace(" ", "")
    return f"{base}_{unit}" if unit else base


def _csv_value(v) -> str:
    if isinstance(v, str):
        return v
    return repr(float(v))


def table_csv(columns: Sequence) -> str:
    """CSV text of labelled columns (objects with ``header``, ``unit`` and ``values``, e.g. ``induct.cli.tables.Column``).

    The header names carry the unit as a suffix (:func:`csv_name`); numbers
    are written at full precision, strings as they are.

    Examples
    --------
    >>> from types import SimpleNamespace as Col
    >>> print(table_csv([Col(header="period", unit="h", values=[12.5]), Col(header="A", unit="", values=[0.9])]), end="")
    period_h,A
    12.5,0.9
    """
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow([csv_name(c.header, c.unit) for c in columns])
    nrow = len(columns[0].values) if columns else 0
    for i in range(nrow):
        writer.writerow([_csv_value(c.values[i]) for c in columns])
    return buf.getvalue()


def write_table_csv(path, columns: Sequence) -> Path:
    """Write :func:`table_csv` of ``columns`` to ``path``; returns the path.

    Examples
    --------
    >>> import tempfile
    >>> from types import SimpleNamespace as Col
    >>> out = write_table_csv(Path(tempfile.mkdtemp()) / "t.csv", [Col(header="x", unit="km", values=[1.0, 2.0])])
    >>> out.read_text().splitlines()
    ['x_km', '1.0', '2.0']
    """
    return write_text(path, table_csv(columns))


def write_diagram_csv(result, path) -> Path:
    """Write every curve point of an amplitude-phase diagram: period_h, family, the two parameters, amplitude, phase_lag_deg.

    ``family`` is ``"constant FIRST"`` or ``"constant SECOND"`` (parameter
    names as given); one row per point, full precision.

    Parameters
    ----------
    result : induct.planning.diagrams.DiagramResult
    path : str or Path

    Returns
    -------
    Path

    Examples
    --------
    >>> import tempfile
    >>> from induct import load_scenario
    >>> from induct.planning.diagrams import amplitude_phase_diagram
    >>> res = amplitude_phase_diagram(load_scenario("ilmare").model, periods_h=[12.12], samples=5)
    >>> out = write_diagram_csv(res, Path(tempfile.mkdtemp()) / "d.csv")
    >>> len(out.read_text().splitlines()) == 1 + (6 + 5) * 5
    True
    """
    path = Path(path)
    f_dense, s_dense = result.first_samples, result.second_samples
    with atomic_open(path, "w", newline="") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(["period_h", "family", result.first.parameter, result.second.parameter, "amplitude", "phase_lag_deg"])
        for p, period in enumerate(result.periods_h):
            for v, curve in zip(result.first_values, result.first_curves[p]):
                for s, r in zip(s_dense, curve):
                    writer.writerow([repr(float(period)), f"constant {result.first.parameter}", repr(float(v)), repr(float(s)), repr(float(abs(r))), repr(float(phase_lag_deg(r)))])
            for v, curve in zip(result.second_values, result.second_curves[p]):
                for f, r in zip(f_dense, curve):
                    writer.writerow([repr(float(period)), f"constant {result.second.parameter}", repr(float(f)), repr(float(v)), repr(float(abs(r))), repr(float(phase_lag_deg(r)))])
    return path


def write_separation_csv(result, prefix) -> list[Path]:
    """Write the curves of a separation: ``PREFIX_period.csv`` and ``PREFIX_altitude.csv``.

    ``PREFIX_period.csv``: ``period_h``, the induced field of each candidate
    (``induced_nT LABEL``) and the difference of each pair
    (``difference_nT a vs b``), at the result's altitude. ``PREFIX_altitude.csv``:
    ``altitude_km`` and the difference of each pair at each marked period
    (``difference_nT a vs b at P h``). Full precision.

    Parameters
    ----------
    result : induct.planning.separation.SeparationResult
    prefix : str or Path

    Returns
    -------
    list of Path
        The two files.

    Examples
    --------
    >>> import tempfile
    >>> from induct import load_scenario
    >>> from induct.planning.separation import separation
    >>> m = load_scenario("ilmare").model
    >>> res = separation([m, m.with_layer("ice shell", thickness_km=40.0)], ["a", "b"], drive_nT=200.0, periods_h=[1, 10])
    >>> paths = write_separation_csv(res, Path(tempfile.mkdtemp()) / "sep")
    >>> paths[0].read_text().splitlines()[0]
    'period_h,induced_nT a,induced_nT b,difference_nT a vs b'
    """
    prefix = Path(prefix)
    period_csv = prefix.with_name(prefix.name + "_period.csv")
    with atomic_open(period_csv, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["period_h"] + [f"induced_nT {x}" for x in result.labels] + [f"difference_nT {result.pair_label(i)}" for i in range(len(result.pairs))])
        for j, period in enumerate(result.periods_h):
            w.writerow([repr(float(v)) for v in [period, *result.induced_nT[:, j], *result.difference_nT[:, j]]])
    alt_csv = prefix.with_name(prefix.name + "_altitude.csv")
    with atomic_open(alt_csv, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        heads = [f"difference_nT {result.pair_label(i)} at {p:g} h" for i in range(len(result.pairs)) for p in result.marked_periods_h]
        w.writerow(["altitude_km"] + heads)
        flat = result.difference_vs_altitude_nT.reshape(-1, result.altitudes_km.size)
        for j, alt in enumerate(result.altitudes_km):
            w.writerow([repr(float(v)) for v in [alt, *flat[:, j]]])
    return [period_csv, alt_csv]
