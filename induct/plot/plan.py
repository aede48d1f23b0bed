"""Figure of a flyby plan (:class:`~induct.planning.design.FlybyPlan`): information per candidate, widths per flyby."""

from __future__ import annotations

import numpy as np
from induct.model.parameters import FIELDS

__all__ = ["plot_plan"]


def plot_plan(plan, geometry, path=None, *, title: str | None = None, formats=("png", "pdf")):
    """Three panels: information per candidate against altitude and against phase; widths as flybys are added.

    Left: the ``log_det`` criterion of each candidate alone (the expected information gain is half of it,
    right-hand axis in nats) against its closest-approach altitude (log axis), coloured by the phase of the
    main driving line at closest approach. Middle: the same against that phase, coloured by altitude. The
    chosen candidates are ringed and numbered in the order chosen. Right: the expected 68 % width of each
    parameter as a fraction of its prior's (Gaussian approximation of the uniform prior), after 0, 1, ..., k
    chosen flybys (log axis). Colour-blind-safe colours; model-limits caption at the bottom.

    Parameters
    ----------
    plan : induct.planning.design.FlybyPlan
    geometry : dict
        :func:`induct.planning.candidates.closest_approach_summary` of the same candidates (``altitude_km``,
        ``phase_deg``, arrays of shape (C,)). Without phases (NaN) the middle panel uses the time of closest
        approach.
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    title : str, optional
        Figure title.
    formats : tuple of str

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.

    Examples
    --------
    >>> from induct.io.scenario import load_scenario
    >>> from induct.planning.candidates import closest_approach_summary, generate_candidates
    >>> from induct.planning.design import plan_flybys
    >>> sc = load_scenario("ilmare")
    >>> cands = generate_candidates(sc.model.radius_km, altitude_km=[100.0, 400.0], phase_deg=[0.0, 120.0],
    ...                             lines=sc.drive_lines, step_s=60.0)
    >>> plan = plan_flybys(sc.model, sc.drive_lines, sc.raw["invert"], cands, 0.5, 2)
    >>> fig = plot_plan(plan, closest_approach_summary(cands, sc.model.radius_km, sc.drive_lines))
    >>> len(fig.axes) >= 3
    True
    """
    from matplotlib.colors import LogNorm, Normalize

    from induct.plot import style as plotting

    alt = np.asarray(geometry["altitude_km"], dtype=float)
    phase = np.asarray(geometry["phase_deg"], dtype=float)
    use_phase = bool(np.all(np.isfinite(phase)))
    second = phase if use_phase else np.asarray(geometry["t_ca_s"], dtype=float) / 3600.0
    second_label = "phase of the main line at closest approach (deg)" if use_phase else "time of closest approach (h)"
    info = np.asarray(plan.log_det, dtype=float)
    order = np.asarray(plan.selection_order, dtype=int)

    fig, axes = plotting.figure(1, 3, size=(15.0, 5.4))
    ax1, ax2, ax3 = axes
    pos_alt = np.maximum(alt, 1e-3)
    alt_norm = LogNorm(vmin=float(pos_alt.min()), vmax=float(max(pos_alt.max(), pos_alt.min() * 1.01)))
    if use_phase:
        sec_norm = Normalize(vmin=0.0, vmax=360.0)
        sec_cmap = "twilight"  # cyclic map for a cyclic quantity
    else:
        sec_norm = Normalize(vmin=float(second.min()), vmax=float(max(second.max(), second.min() + 1e-9)))
        sec_cmap = plotting.SECOND_CMAP
    s1 = ax1.scatter(pos_alt, info, c=second, cmap=sec_cmap, norm=sec_norm, s=18, edgecolors="none")
    s2 = ax2.scatter(second, info, c=pos_alt, cmap=plotting.SEQUENTIAL_CMAP, norm=alt_norm, s=18, edgecolors="none")
    fig.colorbar(s1, ax=ax1, label=second_label, pad=0.2)
    bar = fig.colorbar(s2, ax=ax2, label="closest-approach altitude (km)", pad=0.2)
    plotting.plain_log_ticks(bar.ax.yaxis)
    for ax, x in ((ax1, pos_alt), (ax2, second)):
        ax.scatter(x[order], info[order], s=90, facecolors="none", edgecolors=plotting.HIGHLIGHT, linewidths=1.6,
                   label="chosen (order)")
        for n, i in enumerate(order, 1):
            ax.annotate(str(n), (x[i], info[i]), xytext=(5, 4), textcoords="offset points", fontsize=8,
                        color=plotting.HIGHLIGHT)
        ax.set_ylabel("log det(I + P F) per candidate")
        twin = ax.secondary_yaxis("right", functions=(lambda v: 0.5 * v, lambda v: 2.0 * v))
        twin.set_ylabel("expected information gain (nats)")
        ax.legend(fontsize=8, loc="best")
    ax1.set_xscale("log")
    plotting.plain_log_ticks(ax1.xaxis)
    ticks = np.unique(np.round(pos_alt, 6))
    if ticks.size <= 8:
        ax1.set_xticks(ticks, [f"{v:.4g}" for v in ticks], minor=False)
        bar.set_ticks(ticks, labels=[f"{v:.4g}" for v in ticks])
    ax1.set_xlabel("closest-approach altitude (km)")
    ax1.set_title("information per candidate versus altitude", fontsize=10)
    ax2.set_xlabel(second_label)
    if use_phase:
        ax2.set_xticks([0, 90, 180, 270, 360])
    ax2.set_title("information per candidate versus phase", fontsize=10)

    widths, dec = plan.selection_widths()
    prior = np.asarray(plan.prior_68_width, dtype=float)
    # Log parameters: compared in decades (the physical width is asymmetric about the reference).
    steps = np.arange(0, len(order) + 1)
    for j, p in enumerate(plan.parameters):
        if p.log:
            rel = np.concatenate([[1.0], dec[:, j] / plan.prior_68_width_log10[j]])
        else:
            rel = np.concatenate([[1.0], widths[:, j] / prior[j]])
        ax3.plot(steps, rel, marker="o", lw=1.8, color=plotting.COLORS[j % len(plotting.COLORS)],
                 label=f"{p.layer} {FIELDS[p.field].word}" + (" (in decades)" if p.log else ""))
    ax3.set_yscale("log")
    plotting.plain_log_ticks(ax3.yaxis)
    ax3.set_xticks(steps)
    ax3.set_xticklabels(["prior"] + [plan.candidate_names[i] for i in order], rotation=30, ha="right", fontsize=8)
    ax3.set_xlabel("flybys chosen (greedy order)")
    ax3.set_ylabel("expected 68 % width / prior width")
    ax3.set_title("expected widths as flybys are added", fontsize=10)
    ax3.legend(fontsize=8, loc="best")
    fig.suptitle(title or f"Flyby plan: {len(info)} candidates, noise {plan.noise_nT:g} nT per sample, "
                 f"{len(order)} chosen", fontsize=11)
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    if path is None:
        return fig
    return plotting.save_figure(fig, path, formats=formats)
