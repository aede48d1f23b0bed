"""Figure of a feasibility map (:class:`~induct.planning.maps.MapResult`): filled contours and overlays."""

from __future__ import annotations

import numpy as np

__all__ = ["plot_map"]


def plot_map(result, path=None, *, levels: int = 12, formats=("png", "pdf")):
    """Filled-contour figure of a map with labelled contour lines.

    The title gives the body, quantity, period (and altitude, drive and
    reference for the nT quantities) and, on a second line, the parameters held
    fixed; the model-limits caption sits at the bottom. Measurements add the
    1 and 2 sigma regions (solid and dashed outlines, see
    :func:`induct.planning.maps.consistency_levels`), a noise level
    the detectability contour (dotted), and the model's own parameters are
    marked with a star. Colormap: cividis (perceptually uniform, colour-blind
    safe); positive data spanning more than two decades get logarithmic levels.

    Parameters
    ----------
    result : induct.planning.maps.MapResult
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    levels : int
        Approximate number of filled contour levels.
    formats : tuple of str
        File formats to write (PNG and vector PDF by default).

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.planning.maps import feasibility_map
    >>> model = load_scenario("ilmare").model
    >>> res = feasibility_map(model, "ice shell.thickness_km=5:60:6", "ocean.conductivity_S_per_m=0.3:30:5:log", 12.12)
    >>> fig = plot_map(res)
    >>> len(fig.axes)  # the map and its colorbar
    2
    """
    from matplotlib.lines import Line2D

    from induct.plot import style as plotting

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
        t = result.detection_threshold_nT
        if np.nanmin(z) < t < np.nanmax(z):
            ax.contour(xv, yv, z, levels=[t], colors="white", linewidths=2.2, linestyles=":")
        where = " (all cells above)" if np.nanmin(z) >= t else " (all cells below)" if np.nanmax(z) <= t else ""
        handles.append(Line2D([], [], color="white", lw=2.2, ls=":", label=f"{result.k:g} x noise = {t:g} nT{where}"))
    bx, by = result.base_point
    if xv[0] <= bx <= xv[-1] and yv[0] <= by <= yv[-1]:
        ax.plot([bx], [by], marker="*", ms=14, mfc="white", mec="black", ls="none")
        handles.append(Line2D([], [], marker="*", ms=12, mfc="white", mec="black", ls="none", label=f"{result.body} model"))
    if handles:
        leg = ax.legend(handles=handles, loc="best", framealpha=0.85)
        leg.get_frame().set_facecolor("0.55")
        for text in leg.get_texts():
            text.set_color("white")
    ax.set_xlabel(result.x.label)
    ax.set_ylabel(result.y.label)
    ax.grid(False)
    plotting.two_line_title(ax, f"{result.body}: {result.describe()}", "fixed: " + "; ".join(result.fixed))
    if np.isnan(z).any():
        ax.set_facecolor("0.85")
    if path is None:
        return fig
    return plotting.save_figure(fig, path, formats=formats)
