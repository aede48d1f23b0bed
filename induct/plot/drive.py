"""Figure of the driving field: the primary-field series and its line spectrum."""

from __future__ import annotations

import textwrap
from pathlib import Path

import numpy as np

from induct.constants import SECONDS_PER_HOUR

__all__ = ["plot_drive"]


def plot_drive(analysis, path=None, *, caption: str | None = None, formats=("png", "pdf")):
    """Two panels: the primary field (flow frame) versus time, and the line amplitudes versus period.

    Top: the three flow-frame components of the series. Bottom: each line's
    component amplitudes as stems on log-log axes, labelled with the line's
    name. Okabe-Ito colours. With a current sheet (``analysis.current_sheet``), the
    internal field alone is overlaid: dashed series and open markers at its line
    amplitudes (:func:`_overlay_internal`).

    Parameters
    ----------
    analysis : induct.field.analysis.DriveAnalysis
    path : str or Path, optional
        Output path; written in each of ``formats`` when given.
    caption : str, optional
        Footer; default ``analysis.caveat`` (what the lines leave out) for lines
        from a planet file, else a note that the lines were fitted to the series.
    formats : tuple of str

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Examples
    --------
    >>> from importlib import resources
    >>> from induct.field.analysis import planet_drive_analysis
    >>> from induct.io.drive_files import read_planet_file
    >>> a = planet_drive_analysis(read_planet_file(resources.files("induct.scenarios") / "tarvos.toml"))
    >>> fig = plot_drive(a)
    >>> [ax.get_xlabel() for ax in fig.axes]
    ['time from epoch (h)', 'period (h)']
    """
    from matplotlib import ticker

    from induct.plot.style import COLORS, figure, plain_log_ticks, save_figure

    spec, t, b = analysis.spectrum, analysis.times_s, analysis.field_nT
    if caption is None:
        caption = analysis.caveat if analysis.planet else "Lines fitted by least squares to the given series."
    caption = textwrap.fill(caption, 150)
    fig, (ax_t, ax_s) = figure(2, 1, size=(8.0, 7.0), caption=caption)
    for c in range(3):
        ax_t.plot(t / SECONDS_PER_HOUR, b[:, c], color=COLORS[c], lw=1.0, label=f"B{'xyz'[c]}")
    ax_t.set_xlabel("time from epoch (h)")
    ax_t.set_ylabel("primary field (nT)")
    title = f"{analysis.planet} at {analysis.moon}" if analysis.planet else Path(analysis.source).name
    ax_t.set_title(f"Primary field in the flow frame: {title}")
    ax_t.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    shown = sorted((ln for ln in spec.lines if float(np.max(ln.amplitude_nT)) > 0.0), key=lambda ln: ln.period_s)
    top = max((float(np.max(ln.amplitude_nT)) for ln in shown), default=1.0)
    bottom = max(0.3 * min((float(np.min(ln.amplitude_nT[ln.amplitude_nT > 0])) for ln in shown), default=1.0),
                 1e-5 * top)
    for i, line in enumerate(shown):
        for c in range(3):
            x = line.period_h * (1.0 + 0.015 * (c - 1))
            if line.amplitude_nT[c] > 0.0:
                ax_s.plot([x, x], [bottom, line.amplitude_nT[c]], color=COLORS[c], lw=1.5)
                ax_s.plot(x, line.amplitude_nT[c], "o", color=COLORS[c], ms=4)
        ax_s.annotate(line.label, (line.period_h, float(np.max(line.amplitude_nT))), textcoords="offset points",
                      xytext=(0, 6 + 10 * (i % 2)), ha="center", fontsize=7)
    for c in range(3):
        ax_s.plot([], [], "o-", color=COLORS[c], lw=1.5, ms=4, label=f"|B{'xyz'[c]}|")
    ax_s.set_xscale("log")
    ax_s.set_yscale("log")
    ax_s.xaxis.set_major_locator(ticker.LogLocator(subs=(1.0, 2.0, 5.0)))
    plain_log_ticks(ax_s.xaxis)
    ax_s.set_xlabel("period (h)")
    ax_s.set_ylabel("line amplitude (nT)")
    ax_s.set_title("Line spectrum (flow-frame components)")
    if analysis.current_sheet is not None:
        _overlay_internal(ax_t, ax_s, analysis, bottom)
    ax_s.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    if shown:
        ax_s.set_ylim(bottom, 8.0 * top)
        periods = [ln.period_h for ln in shown]
        ax_s.set_xlim(0.7 * min(periods), 1.4 * max(periods))
    fig.tight_layout(rect=(0, 0.015 * (1 + caption.count("\n")) + 0.015, 1, 1))
    if path is None:
        return fig
    return save_figure(fig, path, formats=formats)


def _overlay_internal(ax_t, ax_s, analysis, bottom: float) -> None:
    """Draw the internal field alone (no current sheet) over both panels (line amplitudes >= bottom)."""
    from induct.plot.style import COLORS

    t = analysis.times_s / SECONDS_PER_HOUR
    for c in range(3):
        ax_t.plot(t, analysis.internal_field_nT[:, c], color=COLORS[c], lw=0.8, ls="--")
    ax_t.plot([], [], color="0.4", lw=0.8, ls="--", label="internal\nfield only")
    ax_t.set_title(ax_t.get_title() + " (solid: with the current sheet)")
    ax_t.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    for line in analysis.sheet_lines:
        amp = np.abs(line.b_internal_nT)
        for c in range(3):
            if amp[c] > 0.0 and amp[c] >= bottom:
                ax_s.plot(line.period_h * (1.0 + 0.015 * (c - 1)), amp[c], "o", mfc="none", mec=COLORS[c], ms=7)
    ax_s.plot([], [], "o", mfc="none", mec="0.4", ms=7, label="internal\nfield only")
    ax_s.set_title("Line spectrum (flow-frame components; filled: with the current sheet)")
