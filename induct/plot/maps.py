"""Figure of a feasibility map (:class:`~induct.planning.maps.MapResult`): filled contours and overlays."""

from __future__ import annotations

import numpy as np

__all__ = ["plot_map"]


def plot_map(result, path=None, *, levels: int = 12, formats=("png", "pdf"), truth=None):
    """Filled-contour figure of a map with labelled contour lines.

    The title gives the body, quantity, period (and altitude, drive and
    reference for the nT quantities) and, on a second line, the parameters held
    fixed; the model-limits caption sits at the bottom. Measurements add the
    1 and 2 sigma regions (solid and dashed outlines, see
    :func:`induct.planning.maps.consistency_levels`); a noise level adds the
    detectability contour (dotted) with the side that
    is *not* detectable (below k x noise) hatched, so the figure says which
    side is which; the model's own parameters are marked with a star and,
    with ``truth``, the true values with a diamond. The legend sits below the
    axes, never on the data. Colormap: cividis (perceptually uniform,
    colour-blind safe); positive data spanning more than two decades get
    logarithmic levels.

    Parameters
    ----------
    result : induct.planning.maps.MapResult
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    levels : int
        Approximate number of filled contour levels.
    formats : tuple of str
        File formats to write (PNG and vector PDF by default).
    truth : dict of str to float, optional
        True values by ``"LAYER.FIELD"`` name (field units); must hold both
        mapped parameters. Marked with a diamond ("true values").

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Raises
    ------
    ValueError
        ``truth`` lacks one of the mapped parameters or holds a non-finite value.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.planning.maps import feasibility_map
    >>> model = load_scenario("ilmare").model
    >>> res = feasibility_map(model, "ice shell.thickness_km=5:60:6", "ocean.conductivity_S_per_m=0.3:30:5:log", 12.12)
    >>> fig = plot_map(res, truth={"ice shell.thickness_km": 25.0, "ocean.conductivity_S_per_m": 3.0})
    >>> len(fig.axes)  # the map and its colorbar
    2
    """
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    from induct.plot import style as plotting

    true_xy = _truth_point(result, truth)
    fig, ax = plotting.figure(size=(7.0, 5.6))
    xv, yv, z = result.x_values, result.y_values, result.values
    bounds = {"amplitude": (0.0, 1.0), "phase_lag_deg": (0.0, 90.0)}.get(result.quantity, (0.0, np.inf))
    cs = plotting.filled_contours(ax, xv, yv, z, levels=levels, log_x=result.x.log, log_y=result.y.log, bounds=bounds)
    plotting.contour_colorbar(fig, cs, ax, result.label)
    handles = []
    if result.chi_square is not None and np.isfinite(result.chi_square).any():
        word = "confidence region" if result.region == "confidence" else "consistent (goodness of fit)"
        for nsig, style in ((1, "-"), (2, "--")):
            level = result.chi_square_levels[nsig]
            reached = np.nanmin(result.chi_square) <= level
            if reached:
                ax.contour(xv, yv, result.chi_square, levels=[level], colors=plotting.HIGHLIGHT, linewidths=2.0, linestyles=style)
            label = f"{word} {nsig}$\\sigma$" + ("" if reached else " (nowhere)")
            handles.append(Line2D([], [], color=plotting.HIGHLIGHT, lw=2.0, ls=style, label=label))
        periods = ", ".join(f"{p:g}" for p in result.measurement_periods_h)
        best = np.nanmin(result.chi_square)
        handles.append(Line2D([], [], ls="none", label=f"data at {periods} h; best $\\chi^2$ = {best:.3g} for {result.n_data} values"))
    if result.detection_threshold_nT is not None:
        handles.extend(_detectability(ax, result, xv, yv, z, Line2D, Patch))
    bx, by = result.base_point
    same = true_xy is not None and np.allclose(true_xy, (bx, by), rtol=1e-9, atol=0.0)
    if xv[0] <= bx <= xv[-1] and yv[0] <= by <= yv[-1]:
        ax.plot([bx], [by], marker="*", ms=14, mfc="white", mec="black", ls="none", zorder=6)
        label = f"{result.body} model" + (" = true values" if same else "")
        handles.append(Line2D([], [], marker="*", ms=12, mfc="white", mec="black", ls="none", label=label))
    if true_xy is not None and not same:
        ax.plot([true_xy[0]], [true_xy[1]], **TRUTH_MARKER, ls="none", zorder=7, clip_on=False)
        inside = xv[0] <= true_xy[0] <= xv[-1] and yv[0] <= true_xy[1] <= yv[-1]
        handles.append(Line2D([], [], **TRUTH_MARKER, ls="none", label="true values" + ("" if inside else " (outside the map)")))
    ax.set_xlabel(result.x.label)
    ax.set_ylabel(result.y.label)
    ax.grid(False)
    plotting.two_line_title(ax, f"{result.body}: {result.describe()}", "fixed: " + "; ".join(result.fixed))
    if np.isnan(z).any():
        ax.set_facecolor("0.85")
    if handles:
        # Below the axes and above the caption: the legend never covers the map.
        rows = -(-len(handles) // 2)
        height = 5.6 + 0.22 * rows
        fig.set_size_inches(7.0, height)
        fig.subplots_adjust(bottom=(0.7 + 0.22 * rows + 0.15) / height)
        leg = ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.12), ncol=2, fontsize=8.5,
                        borderaxespad=0.0, framealpha=1.0)
        leg.get_frame().set_facecolor("0.55")  # white overlays (noise contour, hatching) need a dark ground
        for text in leg.get_texts():
            text.set_color("white")
    if path is None:
        return fig
    return plotting.save_figure(fig, path, formats=formats)


#: Marker of true values in maps and corner figures (white diamond, reddish-purple edge; as in :mod:`induct.plot.corner`).
TRUTH_MARKER = {"marker": "D", "ms": 8, "mfc": "white", "mec": "#CC79A7", "mew": 2.0}


def _truth_point(result, truth):
    if truth is None:
        return None
    out = []
    for spec, axis in ((result.x, "x"), (result.y, "y")):
        if spec.parameter not in truth:
            raise ValueError(f"truth: no value for the {axis} axis {spec.parameter!r} (have {', '.join(sorted(truth)) or 'none'})")
        value = float(truth[spec.parameter])
        if not np.isfinite(value):
            raise ValueError(f"truth: {spec.parameter!r} must be finite, got {value!r}")
        out.append(value)
    return tuple(out)


def _detectability(ax, result, xv, yv, z, Line2D, Patch):
    """Draw the k x noise contour, hatch the side that is not detectable; return the legend handles."""
    t = result.detection_threshold_nT
    lo, hi = np.nanmin(z), np.nanmax(z)
    hatch = "////"
    below = f"not detectable: below {result.k:g} x noise = {t:g} nT (hatched)"
    if lo < t < hi:
        floor = min(lo, 0.0) - 1.0
        shade = ax.contourf(xv, yv, np.where(np.isnan(z), np.inf, z), levels=[floor, t], colors="none", hatches=[hatch])
        shade.set_edgecolor("white")
        shade.set_linewidth(0.0)
        ax.contour(xv, yv, z, levels=[t], colors="white", linewidths=2.2, linestyles=":")
        return [Line2D([], [], color="white", lw=2.2, ls=":", label=f"{result.k:g} x noise = {t:g} nT: detectable above"),
                Patch(facecolor="0.55", edgecolor="white", hatch=hatch, lw=0.0, label=below)]
    if hi <= t:
        shade = ax.contourf(xv, yv, np.where(np.isnan(z), np.inf, z), levels=[min(lo, 0.0) - 1.0, np.inf], colors="none", hatches=[hatch])
        shade.set_edgecolor("white")
        shade.set_linewidth(0.0)
        return [Patch(facecolor="0.55", edgecolor="white", hatch=hatch, lw=0.0, label=below + ": every cell")]
    return [Line2D([], [], ls="none", label=f"detectable everywhere: every cell above {result.k:g} x noise = {t:g} nT")]
