"""Corner-style figure of an inversion result (PNG and PDF through :mod:`induct.plot.style`).

Diagonal: the 1-D marginal posterior density of each parameter with its 68 %
and 95 % equal-tailed ranges shaded and the best fit marked. Below the
diagonal: the 2-D marginal posterior of each pair (colour: posterior density
per cell; contours enclosing 68 % and 95 % of the posterior mass), with the
best fit marked and the correlation coefficient written in the corner, so a
trade-off shows as a tilted ridge. Log-uniform parameters are drawn on log axes.
Axis labels carry the unit once (``ocean conductivity (S/m)``); the legend
sits in the empty upper-right triangle, never on a panel; true values (when
given) are marked by dashed lines and a diamond.
"""

from __future__ import annotations

import numpy as np

from induct.constants import MODEL_LIMITS
from induct.model.parameters import parameter_label
from induct.plot.style import COLORS, SEQUENTIAL_CMAP, figure, save_figure
from induct.inversion.posterior import CORRELATION_THRESHOLD, PosteriorResult, histogram_interval

__all__ = ["corner_figure", "save_corner"]


def _label(p) -> str:
    return parameter_label(p.name)  # "ocean conductivity (S/m)": the unit once


#: True values in corner and map figures (white diamond, reddish-purple edge; as in :mod:`induct.plot.maps`).
TRUTH_COLOR = "#CC79A7"  # Okabe-Ito reddish purple: distinct from the vermillion best fit
TRUTH_MARKER = {"marker": "D", "ms": 7, "mfc": "white", "mec": TRUTH_COLOR, "mew": 1.8}


def _check_truth(result: PosteriorResult, truth) -> dict:
    if truth is None:
        return {}
    names = [p.name for p in result.parameters]
    unknown = sorted(set(truth) - set(names))
    if unknown:
        raise ValueError(f"truth: {', '.join(map(repr, unknown))} is not a free parameter (free: {', '.join(names)})")
    out = {}
    for name, value in truth.items():
        v = float(value)
        if not np.isfinite(v):
            raise ValueError(f"truth: {name!r} must be finite, got {value!r}")
        out[name] = v
    return out


def _view(result: PosteriorResult, i: int) -> tuple[float, float]:
    """Axis limits (field units): the central 99.9 % of the marginal padded by 15 %, within the prior range."""
    p = result.parameters[i]
    a, b = p.prior_bounds
    lo, hi = histogram_interval(result.marginals[i], result.edges[i], 0.999)
    pad = 0.15 * (hi - lo) + 0.02 * (b - a)
    return float(p.from_prior(max(a, lo - pad))), float(p.from_prior(min(b, hi + pad)))


def _mass_levels(mass: np.ndarray, fractions=(0.95, 0.68)) -> list[float]:
    """Density thresholds whose super-level sets hold the given fractions of the mass (increasing)."""
    flat = np.sort(mass.ravel())[::-1]
    cum = np.cumsum(flat) / flat.sum()
    levels = [float(flat[min(np.searchsorted(cum, f), flat.size - 1)]) for f in fractions]
    return sorted(set(levels))


def _free_corner(mass, xe, ye, xlim, ylim, xlog, ylog, wide=0.45, tall=0.14):
    """The panel corner (fx, fy in {0, 1}) whose label-sized box holds the least posterior mass.

    ``mass`` has shape (len(xe) - 1, len(ye) - 1) on the cell edges ``xe``, ``ye``
    (field units); the box is ``wide`` x ``tall`` of the shown axes (log axes in log units).
    """
    def frac(edges, lim, log):
        f = np.log10 if log else (lambda v: np.asarray(v, dtype=float))
        mid = 0.5 * (f(edges[:-1]) + f(edges[1:]))
        lo, hi = f(lim[0]), f(lim[1])
        return (mid - lo) / (hi - lo)

    u, v = frac(np.asarray(xe), xlim, xlog), frac(np.asarray(ye), ylim, ylog)
    best, corner = None, (0, 1)
    for fy in (1, 0):
        rows = (v >= 1 - tall) & (v <= 1) if fy else (v >= 0) & (v <= tall)
        for fx in (0, 1):
            cols = (u >= 0) & (u <= wide) if fx == 0 else (u >= 1 - wide) & (u <= 1)
            inside = float(mass[np.ix_(cols, rows)].sum())
            if best is None or inside < best - 1e-12 * float(mass.sum()):
                best, corner = inside, (fx, fy)
    return corner


def corner_figure(result: PosteriorResult, title: str | None = None, truth=None):
    """Build the corner figure of ``result``; returns the matplotlib figure (not saved).

    Parameters
    ----------
    result : PosteriorResult
    title : str, optional
        Head of the figure title.
    truth : dict of str to float, optional
        True values by free-parameter name (``"LAYER.FIELD"``, field units); any
        subset of the free parameters. Drawn as dashed lines and diamonds.
    """
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    truth = _check_truth(result, truth)
    params = result.parameters
    k = len(params)
    size = max(5.0, 2.5 * k)
    fig, axes = figure(k, k, size=(size, size + 0.8), squeeze=False, caption=MODEL_LIMITS)
    fig.subplots_adjust(top=1 - 0.85 / (size + 0.8), bottom=0.75 / (size + 0.8), hspace=0.35, wspace=0.15)
    view = [_view(result, i) for i in range(k)]
    xs = [p.from_prior(e) for p, e in zip(params, result.edges)]
    for i, p in enumerate(params):
        ax = axes[i, i]
        e = xs[i]
        density = result.marginals[i] / np.diff(result.edges[i])
        ax.stairs(density, e, color=COLORS[0], lw=1.4)
        lo95, hi95 = result.ranges[p.name]["95"]
        lo68, hi68 = result.ranges[p.name]["68"]
        ax.axvspan(lo95, hi95, color=COLORS[0], alpha=0.12, lw=0, label="95 %")
        ax.axvspan(lo68, hi68, color=COLORS[0], alpha=0.25, lw=0, label="68 %")
        ax.axvline(result.best[p.name], color=COLORS[1], lw=1.2, label="best fit")
        ax.set_yticks([])
        if p.name in truth:
            ax.axvline(truth[p.name], color=TRUTH_COLOR, lw=1.2, ls="--")
        ax.set_title(f"{_label(p)}\n[{lo68:.3g}, {hi68:.3g}] (68 %)", fontsize=8)
        for j in range(k):
            if j > i:
                axes[i, j].set_visible(False)
    for (j, i), mass in result.maps.items():  # j < i: row i, column j
        ax = axes[i, j]
        density = mass / np.outer(np.diff(result.edges[j]), np.diff(result.edges[i]))
        ax.pcolormesh(xs[j], xs[i], density.T, cmap=SEQUENTIAL_CMAP, shading="flat", rasterized=True)
        levels = _mass_levels(mass)
        if mass.sum() > 0 and len(levels) == 2 and min(mass.shape) >= 3:
            cj = params[j].from_prior(0.5 * (result.edges[j][:-1] + result.edges[j][1:]))
            ci = params[i].from_prior(0.5 * (result.edges[i][:-1] + result.edges[i][1:]))
            ax.contour(cj, ci, mass.T, levels=levels, colors="white", linewidths=(0.8, 1.2))
        ax.plot(result.best[params[j].name], result.best[params[i].name], "x", color=COLORS[1], ms=7, mew=1.8)
        tj, ti = truth.get(params[j].name), truth.get(params[i].name)
        if tj is not None:
            ax.axvline(tj, color=TRUTH_COLOR, lw=1.0, ls="--")
        if ti is not None:
            ax.axhline(ti, color=TRUTH_COLOR, lw=1.0, ls="--")
        if tj is not None and ti is not None:
            ax.plot([tj], [ti], ls="none", zorder=5, **TRUTH_MARKER)
        r = result.correlation[i, j]
        flag = " trade-off" if abs(r) > CORRELATION_THRESHOLD else ""
        fx, fy = _free_corner(mass, xs[j], xs[i], view[j], view[i], params[j].log, params[i].log)
        ax.text(0.03 if fx == 0 else 0.97, 0.95 if fy == 1 else 0.05, f"r = {r:+.2f}{flag}", transform=ax.transAxes,
                fontsize=7, va="top" if fy == 1 else "bottom", ha="left" if fx == 0 else "right",
                color="white", bbox=dict(facecolor="black", alpha=0.35, lw=0, pad=1.5))
    for i, p in enumerate(params):
        for row in range(k):
            ax = axes[row, i]
            if row >= i:
                if p.log:
                    ax.set_xscale("log")
                ax.set_xlim(*view[i])
        for col in range(i):
            ax = axes[i, col]
            if p.log:
                ax.set_yscale("log")
            ax.set_ylim(*view[i])
        axes[k - 1, i].set_xlabel(_label(p), fontsize=8)
        if i > 0:
            axes[i, 0].set_ylabel(_label(p), fontsize=8)
        for row in range(k - 1):
            if row >= i:
                axes[row, i].tick_params(labelbottom=False)
        for col in range(1, i):
            axes[i, col].tick_params(labelleft=False)
    # The legend goes into the empty upper-right triangle (or beside the single panel): never on a panel.
    handles = [Patch(color=COLORS[0], alpha=0.12, lw=0, label="95 % range"),
               Patch(color=COLORS[0], alpha=0.25, lw=0, label="68 % range"),
               Line2D([], [], color=COLORS[1], lw=1.2, marker="x", mew=1.8, label="best fit"),
               Line2D([], [], color="white", lw=1.2, label="68 % / 95 % mass contours")]
    if truth:
        handles.append(Line2D([], [], color=TRUTH_COLOR, lw=1.2, ls="--", label="true value", **TRUTH_MARKER))
    if k > 1:
        box = axes[0, k - 1].get_position()
        fig.legend(handles=handles, loc="upper right", bbox_to_anchor=(box.x1, box.y1), fontsize=8, facecolor="0.7")
    else:
        axes[0, 0].legend(handles=handles, loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8, facecolor="0.7")
    head = title or "Posterior"
    fig.suptitle(
        f"{head}: {result.method}, chi2_min = {result.chi2_min:.3g} for {result.n_data} data\n"
        f"{result.interval} 68 % / 95 % ranges; axes show the central 99.9 % of each marginal",
        fontsize=9,
    )
    return fig


def save_corner(result: PosteriorResult, path, title: str | None = None, truth=None) -> list:
    """Draw and save the corner figure as PNG and PDF (``path`` with or without suffix); returns the paths.

    ``truth``: true values by free-parameter name, as for :func:`corner_figure`.
    """
    return save_figure(corner_figure(result, title, truth=truth), path)
