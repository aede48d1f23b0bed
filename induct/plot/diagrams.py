"""Figure of an amplitude-phase diagram (:class:`~induct.planning.diagrams.DiagramResult`), one panel per period."""

from __future__ import annotations

import math
import warnings

import numpy as np

from induct.model.response import phase_lag_deg
from induct.planning.diagrams import measurement_ellipses
from induct.text import format_number

__all__ = ["plot_diagram"]


def plot_diagram(result, path=None, *, measurements=None, formats=("png", "pdf")):
    """Draw the amplitude-phase diagram, one panel per period.

    Curves of constant first parameter are solid and coloured by value
    (cividis, dark to light, legend); curves of constant second parameter are
    thin dashed grey lines labelled at their ends. The unchanged model is a
    star; measurements are points with 1 sigma (solid) and 2 sigma (dashed)
    error ellipses. The model-limits caption sits at the bottom.

    Parameters
    ----------
    result : induct.planning.diagrams.DiagramResult
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    measurements : induct.io.measurements.Measurements, optional
        Measured responses; entries whose period matches a panel are drawn there.
    formats : tuple of str

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.planning.diagrams import amplitude_phase_diagram
    >>> model = load_scenario("ilmare").model
    >>> fig = plot_diagram(amplitude_phase_diagram(model, periods_h=[12.12, 84.7], samples=20))
    >>> sum(ax.get_visible() for ax in fig.axes)
    2
    """
    import matplotlib
    from matplotlib.lines import Line2D

    from induct.plot import style as plotting

    npanel = result.periods_h.size
    ncols = min(npanel, 3)
    nrows = math.ceil(npanel / ncols)
    fig, axes = plotting.figure(nrows, ncols, size=(4.0 * ncols, 4.0 * nrows + 0.9), squeeze=False)
    cmap = matplotlib.colormaps[plotting.SEQUENTIAL_CMAP]
    colours = [cmap(0.8 * i / max(1, result.first_values.size - 1)) for i in range(result.first_values.size)]
    unit1, unit2 = result.first.unit, result.second.unit
    drawn = 0
    pending = []
    for p, ax in enumerate(axes.ravel()):
        if p >= npanel:
            ax.set_visible(False)
            continue
        labels = []
        for r, v in zip(result.second_curves[p], result.second_values):
            ok = np.isfinite(r)
            if not ok.any():
                continue
            x, y = phase_lag_deg(r[ok]), np.abs(r[ok])
            ax.plot(x, y, color="0.45", lw=0.9, ls="--", zorder=2)
            labels.append((f"{format_number(v)} {unit2}", x[-1], y[-1]))
        for r, c in zip(result.first_curves[p], colours):
            ok = np.isfinite(r)
            ax.plot(phase_lag_deg(r[ok]), np.abs(r[ok]), color=c, lw=2.0, zorder=3)
        m = result.model_response[p]
        ax.plot([float(phase_lag_deg(m))], [abs(m)], marker="*", ms=14, mfc="white", mec="black", ls="none", zorder=6)
        if measurements is not None:
            for center, cov in measurement_ellipses(measurements, result.periods_h[p], result.degree):
                drawn += 1
                ax.errorbar([center[0]], [center[1]], fmt="o", color=plotting.HIGHLIGHT, ms=5, zorder=7)
                for nsig, ls in ((1, "-"), (2, "--")):
                    plotting.covariance_ellipse(ax, center, cov, nsig, color=plotting.HIGHLIGHT, ls=ls, zorder=7)
        ax.set_title(f"period {result.periods_h[p]:g} h", fontsize=10)
        ax.set_xlabel("phase $\\varphi$ = arg R (deg)")
        ax.set_ylabel("amplitude A = |R|" if result.degree == 1 else f"amplitude A = |R_{result.degree}|")
        ax.margins(x=0.12, y=0.06)
        avoid = [(float(phase_lag_deg(m)), abs(m))]  # the model's star and the measured points stay visible
        if measurements is not None:
            avoid += [tuple(center) for center, _ in measurement_ellipses(measurements, result.periods_h[p], result.degree)]
        pending.append((ax, labels, avoid))
    if measurements is not None and drawn < measurements.n_entries:
        warnings.warn(
            f"{measurements.n_entries - drawn} measurement(s) match no panel's period or degree and are not drawn",
            stacklevel=2,
        )
    handles = [Line2D([], [], color=c, lw=2.0, label=f"{format_number(v)} {unit1}") for v, c in zip(result.first_values, colours)]
    handles.append(Line2D([], [], color="0.45", lw=0.9, ls="--", label=f"constant {result.second.label.rsplit(' (', 1)[0]}"))
    handles.append(Line2D([], [], marker="*", ms=12, mfc="white", mec="black", ls="none", label=f"{result.body} model"))
    if measurements is not None:
        handles.append(Line2D([], [], color=plotting.HIGHLIGHT, marker="o", lw=1.4, label="measured, 1$\\sigma$ ellipse"))
        handles.append(Line2D([], [], color=plotting.HIGHLIGHT, lw=1.4, ls="--", label="2$\\sigma$ ellipse"))
    fig.legend(
        handles=handles,
        title=f"constant {result.first.label}",
        loc="center left",
        bbox_to_anchor=(1.0, 0.5),
        fontsize=8.5,
        title_fontsize=8.5,
    )
    title = f"{result.body}: amplitude-phase diagram (degree {result.degree})"
    sub = "fixed: " + "; ".join(result.fixed)
    meaning = "$\\varphi$ = arg R: the induced field leads the perfect-conductor response by $\\varphi$"
    fig.suptitle(plotting.wrap(title, 100) + "\n" + plotting.wrap(sub, 120) + "\n" + meaning, fontsize=10)
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    for ax, labels, avoid in pending:  # after the layout, so that label extents are final
        _place_labels(ax, labels, avoid)
    if path is None:
        return fig
    return plotting.save_figure(fig, path, formats=formats)


#: Offsets (points) and alignments tried for a curve label, in order of preference.
_LABEL_OFFSETS = ((3, -3, "left", "top"), (-3, -3, "right", "top"), (3, 3, "left", "bottom"),
                  (-3, 3, "right", "bottom"), (3, -13, "left", "top"), (-3, -13, "right", "top"),
                  (3, 13, "left", "bottom"), (-3, 13, "right", "bottom"), (-22, -3, "right", "top"),
                  (22, -3, "left", "top"))


def _place_labels(ax, labels, avoid=(), marker_px: float = 9.0) -> list:
    """Write curve labels near their anchors so that no two overlap and each stays inside the axes.

    Each label tries the offsets of ``_LABEL_OFFSETS`` around its anchor and takes the
    first whose rendered extent (padded by 4 px) overlaps no label already written and
    lies within the axes; a label with no such place is left out (the curve is still
    drawn and the legend names the family). Labels also keep ``marker_px`` pixels
    away from the data points in ``avoid`` (markers). Returns the written annotations.
    """
    from matplotlib.transforms import Bbox

    fig = ax.figure
    # The figure has no backend (no pyplot): matplotlib's own layout renderer measures the text.
    renderer = fig.canvas.get_renderer() if hasattr(fig.canvas, "get_renderer") else fig._get_renderer()
    frame = ax.get_window_extent(renderer)
    written = []
    placed = []
    for x, y in avoid:
        px, py = ax.transData.transform((x, y))
        placed.append(Bbox([[px - marker_px, py - marker_px], [px + marker_px, py + marker_px]]))
    for text, x, y in labels:
        for dx, dy, ha, va in _LABEL_OFFSETS:
            ann = ax.annotate(
                text,
                (x, y),
                xytext=(dx, dy),
                textcoords="offset points",
                ha=ha,
                va=va,
                fontsize=7.5,
                color="0.25",
                bbox={"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none", "alpha": 0.7},
                zorder=5,
            )
            box = ann.get_window_extent(renderer).padded(4.0)
            inside = frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1
            if inside and not any(box.overlaps(other) for other in placed):
                placed.append(box)
                written.append(ann)
                break
            ann.remove()
    return written
