"""Figure of a flyby prediction: induced field, difference from a second interior, altitude."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from induct.constants import SECONDS_PER_HOUR

__all__ = ["plot_flyby"]


def plot_flyby(prediction, path=None, *, formats=("png", "pdf")):
    """Panels versus time from closest approach: induced field, the difference (with a comparison), altitude.

    Field panels show the three components in the frame of the trajectory file
    and the magnitude; with a noise level the difference panel shades +-1 sigma
    and quotes the peak SNR. The caption states the model's limits and whether
    the degree-2 field is included.

    Parameters
    ----------
    prediction : induct.flyby.prediction.FlybyPrediction
    path : str or Path, optional
        Output path; written in each of ``formats`` when given.
    formats : tuple of str

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.flyby.prediction import predict_flyby
    >>> from induct.io.tracks import read_track
    >>> fig = plot_flyby(predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby")))
    >>> [ax.get_ylabel() for ax in fig.axes]
    ['induced field (nT)', 'altitude (km)']
    """
    from induct.flyby.prediction import FLYBY_LIMITS
    from induct.io.tracks import from_flow_frame
    from induct.plot.style import COLORS, figure, save_figure, wrap

    track = prediction.track
    comparison = prediction.comparison
    t_ca = prediction.closest_approach[0]
    x = (track.times_s - t_ca) / 60.0
    panels = 3 if comparison is not None else 2
    caption = wrap(FLYBY_LIMITS + (" Degree 2 from the planet's field gradient included." if prediction.degree2
                                   else " Degree-1 (uniform driving) response only."), 150)
    fig, axes = figure(panels, 1, size=(8.0, 2.6 * panels + 1.0), caption=caption, sharex=True)
    frame = track.frame

    def draw(ax, vec, what):
        v = from_flow_frame(vec, frame)
        for c in range(3):
            ax.plot(x, v[:, c], color=COLORS[c], lw=1.0, label=f"B{'xyz'[c]}")
        ax.plot(x, np.linalg.norm(v, axis=1), color="black", lw=1.3, label="|B|")
        ax.set_ylabel(f"{what} (nT)")
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))

    draw(axes[0], prediction.induced_nT, "induced field")
    axes[0].set_title(f"{prediction.scenario}: induced field along {Path(track.source).name} ({frame} frame)")
    if comparison is not None:
        draw(axes[1], comparison.difference_nT, "difference")
        title = f"{prediction.scenario} minus {comparison.other}"
        noise = comparison.noise_nT
        if noise:
            axes[1].axhspan(-noise, noise, color="0.85", zorder=0, label="noise 1 sigma")
            title += f" (grey: +-{noise:g} nT noise; peak SNR {comparison.peak_snr:.3g})"
        axes[1].set_title(title, fontsize=9)
    ax_alt = axes[-1]
    ax_alt.plot(x, prediction.altitude_km, color=COLORS[3], lw=1.3)
    ax_alt.set_ylabel("altitude (km)")
    ax_alt.set_xlabel(f"time from closest approach (min); closest approach at t = {t_ca / SECONDS_PER_HOUR:.6g} h")
    fig.tight_layout(rect=(0, 0.04, 1, 1))
    if path is None:
        return fig
    return save_figure(fig, path, formats=formats)
