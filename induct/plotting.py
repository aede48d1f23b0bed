"""One shared plotting style for every figure induct writes.

Figures are meant for papers and mission reviews: readable sizes, labelled axes
with units, perceptually uniform colour-blind-safe colormaps (``cividis`` for
sequential quantities, ``viridis`` for a second sequential map), a colour-blind
safe qualitative cycle (Okabe & Ito 2008, "Color Universal Design"), and every
figure saved as PNG and vector PDF.
"""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")  # no display needed; figures are written to files

import matplotlib.pyplot as plt  # noqa: E402

__all__ = ["SEQUENTIAL_CMAP", "SECOND_CMAP", "DIVERGING_CMAP", "COLORS", "figure", "save_figure", "LIMITS_CAPTION"]

SEQUENTIAL_CMAP = "cividis"
SECOND_CMAP = "viridis"
DIVERGING_CMAP = "PuOr"
#: Okabe-Ito qualitative palette (colour-blind safe).
COLORS = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442", "#000000"]

#: One-line statement of what the model leaves out, for figure footers.
LIMITS_CAPTION = "Spherically symmetric induction only: no plasma interaction, asymmetric shells or motional induction."

_RC = {
    "figure.dpi": 100,
    "savefig.dpi": 200,
    "font.size": 10,
    "axes.titlesize": 11,
    "axes.labelsize": 10,
    "legend.fontsize": 9,
    "xtick.labelsize": 9,
    "ytick.labelsize": 9,
    "axes.grid": True,
    "grid.alpha": 0.3,
    "axes.prop_cycle": matplotlib.cycler(color=COLORS),
    "image.cmap": SEQUENTIAL_CMAP,
    "savefig.bbox": "tight",
    "pdf.fonttype": 42,  # embed TrueType, editable text in vector output
}


def figure(nrows: int = 1, ncols: int = 1, *, size=(6.4, 4.8), caption: str | None = LIMITS_CAPTION, **kwargs):
    """A new figure and axes in the house style; ``caption`` is written small at the bottom."""
    with plt.rc_context(_RC):
        fig, ax = plt.subplots(nrows, ncols, figsize=size, **kwargs)
    if caption:
        fig.text(0.01, 0.005, caption, fontsize=7, color="0.35", ha="left", va="bottom")
    return fig, ax


def save_figure(fig, path, *, formats=("png", "pdf")) -> list[Path]:
    """Save ``fig`` as ``path`` with each suffix in ``formats`` (PNG and vector PDF by default).

    ``path`` may carry a suffix (it is replaced) or not. Returns the paths written.
    """
    path = Path(path)
    stem = path.with_suffix("") if path.suffix.lower() in {".png", ".pdf", ".svg"} else path
    written = []
    with plt.rc_context(_RC):
        for fmt in formats:
            out = stem.with_suffix(f".{fmt}")
            out.parent.mkdir(parents=True, exist_ok=True)
            fig.savefig(out)
            written.append(out)
    plt.close(fig)
    return written
