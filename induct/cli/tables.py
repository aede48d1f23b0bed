"""Plain-text tables with units, for command-line output (their CSV form: :func:`induct.io.tables.table_csv`)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

__all__ = ["Column", "format_table"]


@dataclass(frozen=True)
class Column:
    """One table column: a header, its unit ("" for dimensionless), values and a format spec."""

    header: str
    unit: str
    values: Sequence
    fmt: str = ".6g"

    def cells(self) -> list[str]:
        out = []
        for v in self.values:
            if isinstance(v, str):
                out.append(v)
            elif v is None or (isinstance(v, float) and np.isnan(v)):
                out.append("-")
            else:
                out.append(format(v, self.fmt))
        return out

    @property
    def title(self) -> str:
        return f"{self.header} ({self.unit})" if self.unit else self.header


def format_table(columns: Sequence[Column]) -> str:
    """Right-aligned text table: a header line with units, a rule, one line per row."""
    cells = [c.cells() for c in columns]
    widths = [max([len(c.title)] + [len(x) for x in col]) for c, col in zip(columns, cells)]
    lines = ["  ".join(c.title.rjust(w) for c, w in zip(columns, widths))]
    lines.append("  ".join("-" * w for w in widths))
    nrow = len(cells[0]) if cells else 0
    for i in range(nrow):
        lines.append("  ".join(col[i].rjust(w) for col, w in zip(cells, widths)))
    return "\n".join(lines)
