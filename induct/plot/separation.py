"""Figure of a separation (:class:`~induct.planning.separation.SeparationResult`): differences versus period and altitude."""

from __future__ import annotations

__all__ = ["plot_separation"]


def plot_separation(result, path=None, *, formats=("png", "pdf")):
    """Two panels: difference field versus period (log-log) and versus altitude.

    Left: each pair's difference (solid, one colour per pair) and each
    candidate's induced field (thin grey, for scale) at the chosen altitude
    versus period; the marked periods are dotted verticals; the detectability
    threshold k x noise is a dashed horizontal. Right: each pair's difference
    versus altitude at the marked periods (line style per period). Okabe-Ito
    colours; model-limits caption at the bottom.

    Parameters
    ----------
    result : induct.planning.separation.SeparationResult
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    formats : tuple of str

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.planning.separation import separation
    >>> model = load_scenario("ilmare").model
    >>> res = separation([model, model.with_layer("ice shell", thickness_km=40.0)], drive_nT=200.0, periods_h=[1, 10, 100])
    >>> fig = plot_separation(res)
    >>> len(fig.axes)
    2
    """
    from induct.plot import style as plotting

    fig, (ax1, ax2) = plotting.figure(1, 2, size=(11.0, 6.2))
    colours = plotting.COLORS
    styles = ["-", "--", ":", "-."]
    for j, label in enumerate(result.labels):
        ax1.plot(result.periods_h, result.induced_nT[j], color="0.6", lw=1.0, ls=styles[j % 4], label=f"induced field, {label}")
    for i in range(len(result.pairs)):
        ax1.plot(result.periods_h, result.difference_nT[i], color=colours[i % len(colours)], lw=2.2, label=f"difference {result.pair_label(i)}")
    for p in result.marked_periods_h:
        ax1.axvline(p, color="0.35", lw=0.8, ls=":")
        # Named above the top spine, outside the data (labels inside the axes crossed the curves).
        ax1.annotate(f"{p:g} h", (p, 1.0), xycoords=("data", "axes fraction"), xytext=(0, 3), textcoords="offset points",
                     rotation=90, ha="center", va="bottom", fontsize=7.5, color="0.3")
    t = result.threshold_nT
    for ax in (ax1, ax2):
        if t is not None:
            ax.axhline(t, color="black", lw=1.2, ls="--", label=f"{result.k:g} x noise = {t:g} nT")
        ax.set_yscale("log")
        plotting.plain_log_ticks(ax.yaxis)
        ax.set_ylabel("field along the driving field (nT)")
    ax1.set_xscale("log")
    plotting.plain_log_ticks(ax1.xaxis)
    ax1.set_xlabel("period (h)")
    ax1.set_title(f"versus period, {result.altitude_km:g} km altitude", fontsize=10,
                  pad=34 if len(result.marked_periods_h) else 6)
    for i in range(len(result.pairs)):
        for q, period in enumerate(result.marked_periods_h):
            ax2.plot(
                result.altitudes_km,
                result.difference_vs_altitude_nT[i, q],
                color=colours[i % len(colours)],
                ls=styles[q % 4],
                lw=1.8,
                label=f"{result.pair_label(i)}, {period:g} h" if len(result.pairs) > 1 else f"{period:g} h",
            )
    ax2.set_xlabel("altitude above the sub-drive point (km)")
    ax2.set_title("difference versus altitude at the marked periods", fontsize=10)
    for ax in (ax1, ax2):
        ax.legend(fontsize=8, loc="upper center", bbox_to_anchor=(0.5, -0.15), ncol=2, frameon=False)
    fig.suptitle(
        f"{result.body}: where the candidate interiors separate (drive {result.drive_nT:g} nT, uniform field)", fontsize=11
    )
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    if path is None:
        return fig
    return plotting.save_figure(fig, path, formats=formats)
