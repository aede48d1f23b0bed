"""One shared plotting style for every figure induct writes.

Figures are meant for papers and mission reviews: readable sizes, labelled axes
with units, perceptually uniform colour-blind-safe colormaps (``cividis`` for
sequential quantities, ``viridis`` for a second sequential map), a colour-blind
safe qualitative cycle (Okabe & Ito 2008, "Color Universal Design"), and every
figure saved as PNG and vector PDF.

Figures are built with matplotlib's object interface
(:class:`matplotlib.figure.Figure`), never through ``pyplot``: no module selects
a backend or keeps global figure state, so importing or using :mod:`induct.plot`
in a notebook leaves the notebook's backend and open figures alone. matplotlib
itself is imported inside the functions that draw.
"""

from __future__ import annotations

from pathlib import Path

from induct.constants import MODEL_LIMITS

__all__ = [
    "SEQUENTIAL_CMAP",
    "SECOND_CMAP",
    "DIVERGING_CMAP",
    "COLORS",
    "HIGHLIGHT",
    "figure",
    "save_figure",
    "filled_contours",
    "two_line_title",
    "covariance_ellipse",
    "wrap",
    "plain_log_ticks",
    "contour_colorbar",
    "style_context",
]

SEQUENTIAL_CMAP = "cividis"
SECOND_CMAP = "viridis"
DIVERGING_CMAP = "PuOr"
#: Okabe-Ito qualitative palette (colour-blind safe).
COLORS = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442", "#000000"]
#: Overlay colour that stands out on the sequential colormaps (Okabe-Ito vermillion).
HIGHLIGHT = "#D55E00"

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
    "image.cmap": SEQUENTIAL_CMAP,
    "savefig.bbox": "tight",
    "pdf.fonttype": 42,  # embed TrueType, editable text in vector output
}


def style_context():
    """A ``matplotlib.rc_context`` with the house style (font sizes, grid, colour cycle, output settings).

    Examples
    --------
    >>> with style_context():
    ...     pass
    """
    import matplotlib

    return matplotlib.rc_context({**_RC, "axes.prop_cycle": matplotlib.cycler(color=COLORS)})


def figure(nrows: int = 1, ncols: int = 1, *, size=(6.4, 4.8), caption: str | None = MODEL_LIMITS, **kwargs):
    """A new figure and axes in the house style; ``caption`` is written small at the bottom.

    The figure is a :class:`matplotlib.figure.Figure` made without ``pyplot``:
    it belongs to no backend and needs no closing.

    Parameters
    ----------
    nrows, ncols : int
        Grid of axes.
    size : (float, float)
        Width and height (inches).
    caption : str or None
        Footer text; by default :data:`induct.constants.MODEL_LIMITS`.
    **kwargs
        Passed to :meth:`matplotlib.figure.Figure.subplots` (``sharex``, ``squeeze``, ...).

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : Axes or ndarray of Axes

    Examples
    --------
    >>> fig, ax = figure(caption=None)
    >>> fig.texts
    []
    """
    from matplotlib.figure import Figure

    with style_context():
        fig = Figure(figsize=size)
        ax = fig.subplots(nrows, ncols, **kwargs)
    if caption:
        fig.text(0.01, 0.005, caption, fontsize=7, color="0.35", ha="left", va="bottom")
    return fig, ax


def save_figure(fig, path, *, formats=("png", "pdf")) -> list[Path]:
    """Save ``fig`` as ``path`` with each suffix in ``formats`` (PNG and vector PDF by default).

    ``path`` may carry a suffix (it is replaced) or not; missing folders are
    created. Each file is written to a temporary name and moved into place.

    Returns
    -------
    list of Path
        The paths written.
    """
    from induct.io.files import atomic_path

    path = Path(path)
    stem = path.with_suffix("") if path.suffix.lower() in {".png", ".pdf", ".svg"} else path
    written = []
    with style_context():
        for fmt in formats:
            out = stem.with_suffix(f".{fmt}")
            out.parent.mkdir(parents=True, exist_ok=True)
            with atomic_path(out) as tmp:
                fig.savefig(tmp, format=fmt)
            written.append(out)
    return written


# --------------------------------------------------------------------------- helpers for maps and diagrams
class ContourPair:
    """Filled contours and their labelled contour lines (``.filled``, ``.lines``, ``.levels``, ``.log``)."""

    def __init__(self, filled, lines, levels, log):
        self.filled, self.lines, self.levels, self.log = filled, lines, levels, log


def contour_levels(z, levels: int = 12):
    """Contour levels for the finite values of ``z`` and whether they are logarithmic.

    Logarithmic (1-2-5 per decade) when every value is > 0 and they span more
    than two decades; otherwise "nice" linear steps (MaxNLocator).

    Returns
    -------
    levels : ndarray, shape (K,)
    log : bool
    """
    import numpy as np
    from matplotlib import ticker

    finite = np.asarray(z, dtype=float)[np.isfinite(z)]
    if finite.size == 0:
        raise ValueError("nothing to contour: every value is NaN")
    lo, hi = float(finite.min()), float(finite.max())
    if lo > 0 and hi / lo > 100:
        decades = np.arange(np.floor(np.log10(lo)) - 1, np.ceil(np.log10(hi)) + 2)
        lev = np.sort(np.outer(10.0**decades, [1.0, 2.0, 5.0]).ravel())
        # keep levels that bracket the data; contourf needs the extremes covered
        below = lev[lev <= lo]
        above = lev[lev >= hi]
        inside = lev[(lev > lo) & (lev < hi)]
        lev = np.concatenate([below[-1:], inside, above[:1]])
        return lev, True
    if hi == lo:
        hi = lo + (abs(lo) * 1e-6 or 1e-12)
    return ticker.MaxNLocator(levels).tick_values(lo, hi), False


def filled_contours(
    ax, x, y, z, *, levels: int = 12, log_x: bool = False, log_y: bool = False, cmap=None, label_lines: bool = True, bounds=None
):
    """Filled contours of ``z`` (shape (ny, nx)) over ``x`` (nx,), ``y`` (ny,) with labelled contour lines.

    Levels come from :func:`contour_levels` (logarithmic for positive data
    spanning more than two decades). Every second line is labelled when there
    are more than eight levels. NaN cells stay empty. ``bounds = (lo, hi)``
    keeps the levels inside a physical range (e.g. 0-90 degrees of phase),
    replacing an outermost level beyond it by the bound itself.

    Returns
    -------
    ContourPair
    """
    import numpy as np
    from matplotlib import colors, ticker

    lev, log = contour_levels(z, levels)
    if bounds is not None and not log:
        lo, hi = bounds
        if lev[0] < lo <= np.nanmin(z):
            lev = np.concatenate([[lo], lev[lev > lo]])
        if lev[-1] > hi >= np.nanmax(z):
            lev = np.concatenate([lev[lev < hi], [hi]])
    norm = colors.LogNorm(lev[0], lev[-1]) if log else None
    filled = ax.contourf(x, y, z, levels=lev, cmap=cmap or SEQUENTIAL_CMAP, norm=norm, extend="neither")
    lines = ax.contour(x, y, z, levels=lev, colors="black", linewidths=0.6, alpha=0.75)
    if label_lines:
        shown = lev[1:-1:2] if len(lev) > 9 else lev[1:-1]
        ax.clabel(lines, levels=shown, fmt=ticker.FuncFormatter(lambda v, _pos=None: f"{v:.3g}"), fontsize=8, inline=True)
    if log_x:
        ax.set_xscale("log")
        plain_log_ticks(ax.xaxis)
    if log_y:
        ax.set_yscale("log")
        plain_log_ticks(ax.yaxis)
    return ContourPair(filled, lines, np.asarray(lev), log)


def plain_log_ticks(axis) -> None:
    """Label a logarithmic axis with plain numbers (0.1, 1, 10, ...) instead of powers of ten."""
    from matplotlib import ticker

    axis.set_major_formatter(ticker.FuncFormatter(lambda v, _pos=None: f"{v:g}"))
    axis.set_minor_formatter(ticker.NullFormatter())


def contour_colorbar(fig, pair: ContourPair, ax, label: str):
    """Colorbar for :func:`filled_contours` with a tick at every level (plain numbers), labelled ``label``."""
    from matplotlib import ticker

    cbar = fig.colorbar(pair.filled, ax=ax, pad=0.02)
    cbar.set_label(label)
    if pair.log:
        cbar.set_ticks(pair.levels)
        cbar.ax.yaxis.set_major_formatter(ticker.FuncFormatter(lambda v, _pos=None: f"{v:.3g}"))
        cbar.ax.yaxis.set_minor_formatter(ticker.NullFormatter())
        cbar.ax.minorticks_off()
    return cbar


def wrap(text: str, width: int = 95) -> str:
    """Wrap ``text`` at about ``width`` characters, breaking after ', ' or '; ' where possible."""
    import re
    import textwrap

    lines, current = [], ""
    for token in re.split(r"(?<=[,;]) ", text):
        candidate = f"{current} {token}" if current else token
        if len(candidate) <= width or not current:
            current = candidate
        else:
            lines.append(current)
            current = token
    lines.append(current)
    out = []
    for line in lines:
        out.extend(textwrap.wrap(line, width=width, break_long_words=False) or [""])
    return "\n".join(out)


def two_line_title(ax, main: str, sub: str | None = None, *, width: int = 80):
    """Axes title: ``main`` (wrapped) and, smaller below it, ``sub`` (wrapped), e.g. the fixed parameters."""
    if sub:
        ax.set_title(wrap(sub, int(width * 1.25)), fontsize=8, color="0.25", loc="center")
        ax.annotate(
            wrap(main, width),
            xy=(0.5, 1.0),
            xycoords=ax.title,
            xytext=(0, 4),
            textcoords="offset points",
            ha="center",
            va="bottom",
            fontsize=10.5,
        )
    else:
        ax.set_title(wrap(main, width), fontsize=10.5)


def covariance_ellipse(ax, center, covariance, nsigma: float = 1.0, **kwargs):
    """Ellipse of ``nsigma`` standard deviations of a 2-D Gaussian with the given covariance.

    The half-axes are ``nsigma * sqrt(eigenvalues)`` along the eigenvectors of
    ``covariance`` (shape (2, 2), in the units of the two axes squared); for a
    diagonal covariance they are ``nsigma * sigma_x`` and ``nsigma * sigma_y``.
    Returns the added :class:`matplotlib.patches.Ellipse`.
    """
    import numpy as np
    from matplotlib.patches import Ellipse

    vals, vecs = np.linalg.eigh(np.asarray(covariance, dtype=float))
    angle = float(np.degrees(np.arctan2(vecs[1, 1], vecs[0, 1])))
    style = {"fill": False, "lw": 1.4, "color": "black"}
    style.update(kwargs)
    width, height = 2 * nsigma * np.sqrt(np.maximum(vals[::-1], 0.0))
    patch = Ellipse(tuple(center), width, height, angle=angle, **style)
    ax.add_patch(patch)
    return patch
