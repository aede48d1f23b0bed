"""Amplitude-phase diagrams: where families of interiors fall in the (phase lag, amplitude) plane.

For each driving period the diagram draws two families of curves over a grid
of two interior parameters (usually the ice-shell thickness and the ocean
conductivity): curves along which the first parameter is constant and the
second varies, and curves along which the second is constant and the first
varies. Measured responses and their 1 and 2 sigma error ellipses are drawn on
top, so one sees at a glance which combinations the data allow and how the
periods separate thickness from conductivity (Seufert, Saur & Neubauer 2011,
Icarus 214).

The model is spherically symmetric quasi-static induction: plasma interaction,
asymmetric shells and motional induction are not included.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from induct.constants import SECONDS_PER_HOUR
from induct.model.interior import InteriorModel
from induct.model.parameters import parameter_value
from induct.planning.maps import AxisSpec, fixed_parameters, parse_axis_spec
from induct.model.response import check_degree

__all__ = [
    "DiagramResult",
    "amplitude_phase_diagram",
    "default_families",
    "measurement_ellipses",
    "plot_diagram",
    "write_diagram_csv",
]

#: Relative tolerance for matching a measurement's period to a diagram panel.
PERIOD_RTOL = 1e-3


@dataclass
class DiagramResult:
    """Responses along the curves of an amplitude-phase diagram.

    Attributes
    ----------
    periods_h : ndarray, shape (P,)
        Driving periods (h), one panel each.
    first, second : AxisSpec
        The two parameter families.
    first_values, second_values : ndarray, shapes (F,), (S,)
        Values at which a curve is drawn.
    first_curves : ndarray of complex, shape (P, F, K)
        R_n along the curves of constant first parameter (second varies over K samples).
    second_curves : ndarray of complex, shape (P, S, K)
        R_n along the curves of constant second parameter (first varies over K samples).
    model_response : ndarray of complex, shape (P,)
        R_n of the unchanged model.
    degree : int
        Degree n.
    body : str
        Body name.
    fixed : list of str
        Parameters held fixed.
    base_point : tuple of float
        The model's own values of the two parameters.
    """

    periods_h: np.ndarray
    first: AxisSpec
    second: AxisSpec
    first_values: np.ndarray
    second_values: np.ndarray
    first_curves: np.ndarray
    second_curves: np.ndarray
    model_response: np.ndarray
    degree: int
    body: str
    fixed: list = field(default_factory=list)
    base_point: tuple = ()


def default_families(model: InteriorModel) -> tuple[AxisSpec, AxisSpec]:
    """Default families: the top layer's thickness and the ocean's conductivity.

    The top layer's thickness h runs linearly from h/4 to 3h (6 curves); the
    "ocean" is the most conductive layer other than the top and innermost
    layers, whose conductivity sigma runs logarithmically from sigma/10 to
    10 sigma (5 curves).

    Raises
    ------
    ValueError
        If the model has fewer than three layers or no conducting middle layer.
    """
    layers = model.layers
    if len(layers) < 3 or layers[0].thickness_km is None:
        raise ValueError("default families need a top layer with a thickness and a middle layer; give the families explicitly")
    middle = [layer for layer in layers[1:-1] if layer.conductivity_S_per_m > 0]
    if not middle:
        raise ValueError("default families need a conducting middle layer (an ocean); give the families explicitly")
    ocean = max(middle, key=lambda layer: layer.conductivity_S_per_m)
    h, s = layers[0].thickness_km, ocean.conductivity_S_per_m
    def nice(v):
        return float(f"{v:.6g}")

    first = AxisSpec.of(f"{layers[0].name}.thickness_km", nice(h / 4), nice(3 * h), 6, False)
    second = AxisSpec.of(f"{ocean.name}.conductivity_S_per_m", nice(s / 10), nice(10 * s), 5, True)
    return first, second


def _dense(spec: AxisSpec, samples: int) -> np.ndarray:
    return spec.param.grid(samples)


def amplitude_phase_diagram(
    model: InteriorModel,
    first_spec=None,
    second_spec=None,
    periods_h=None,
    *,
    degree: int = 1,
    samples: int = 150,
) -> DiagramResult:
    """Responses along constant-parameter curves for an amplitude-phase diagram.

    Parameters
    ----------
    model : InteriorModel
        The interior; parameters not in the families keep their values.
    first_spec, second_spec : str or AxisSpec, optional
        ``"LAYER.FIELD=lo:hi:n[:log]"``; n is the number of curves. Default:
        :func:`default_families`.
    periods_h : array_like, shape (P,)
        Driving periods (h), > 0.
    degree : int
        Degree n (1-12).
    samples : int
        Points along each curve (>= 2).

    Returns
    -------
    DiagramResult
    """
    defaults = default_families(model) if first_spec is None or second_spec is None else (None, None)
    first = parse_axis_spec(first_spec if first_spec is not None else defaults[0], model, "first family")
    second = parse_axis_spec(second_spec if second_spec is not None else defaults[1], model, "second family")
    if first.parameter == second.parameter:
        raise ValueError(f"the two families must vary different parameters, both are {first.parameter!r}")
    if periods_h is None:
        raise ValueError("periods_h is required: the driving periods (h) of the panels")
    periods = np.atleast_1d(np.asarray(periods_h, dtype=float))
    if periods.ndim != 1 or periods.size == 0 or not np.all(np.isfinite(periods) & (periods > 0)):
        raise ValueError(f"periods_h must be a non-empty list of periods > 0 h, got {periods_h!r}")
    n = check_degree(degree)
    if int(samples) < 2:
        raise ValueError(f"samples must be >= 2 points per curve, got {samples}")
    periods_s = periods * SECONDS_PER_HOUR
    fv, sv = first.values(), second.values()
    f_dense, s_dense = _dense(first, int(samples)), _dense(second, int(samples))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        first_curves = model.sweep_response(
            {first.parameter: fv[:, None], second.parameter: s_dense[None, :]}, periods_s, n
        )  # (F, K, P)
        second_curves = model.sweep_response(
            {second.parameter: sv[:, None], first.parameter: f_dense[None, :]}, periods_s, n
        )  # (S, K, P)
    if np.isnan(first_curves).any() or np.isnan(second_curves).any():
        warnings.warn("some family members leave the fill layer no room; those curve points are left out", stacklevel=2)
    return DiagramResult(
        periods_h=periods,
        first=first,
        second=second,
        first_values=fv,
        second_values=sv,
        first_curves=np.moveaxis(first_curves, -1, 0),
        second_curves=np.moveaxis(second_curves, -1, 0),
        model_response=model.response(periods_s=periods_s, degree=n).response,
        degree=n,
        body=model.name,
        fixed=fixed_parameters(model, (first.parameter, second.parameter)),
        base_point=(parameter_value(model, first.parameter), parameter_value(model, second.parameter)),
    )


def measurement_ellipses(measurements, period_h: float, degree: int = 1, rtol: float = PERIOD_RTOL):
    """Measured points and covariances in the (phase lag, amplitude) plane for one period.

    Entries given as real and imaginary parts are carried over to (phase lag,
    amplitude) to first order, ``C' = J C J^T`` with the Jacobian J of
    (phi_deg, A) with respect to (Re, Im).

    Parameters
    ----------
    measurements : induct.io.measurements.Measurements
    period_h : float
        Period (h); entries within relative ``rtol`` match.
    degree : int
        Only entries of this degree.

    Returns
    -------
    list of (center, covariance)
        ``center`` = (phase lag in degrees, A), shape (2,); ``covariance`` shape (2, 2)
        in (degrees, 1) units.
    """
    out = []
    for i in range(measurements.n_entries):
        p = measurements.period_h[i]
        if measurements.degree[i] != degree or abs(p - period_h) > rtol * period_h:
            continue
        v, c = measurements.values[i], measurements.covariance[i]
        if measurements.polar[i]:
            swap = np.array([[0.0, 1.0], [1.0, 0.0]])
            out.append((v[::-1].copy(), swap @ c @ swap))
        else:
            re, im = v
            a = math.hypot(re, im)
            deg = 180.0 / math.pi
            jac = np.array([[-im / a**2 * deg, re / a**2 * deg], [re / a, im / a]])
            out.append((np.array([math.degrees(math.atan2(im, re)), a]), jac @ c @ jac.T))
    return out


def plot_diagram(result: DiagramResult, path=None, *, measurements=None, formats=("png", "pdf")):
    """Draw the amplitude-phase diagram, one panel per period.

    Curves of constant first parameter are solid and coloured by value
    (cividis, dark to light, legend); curves of constant second parameter are
    thin dashed grey lines labelled at their ends. The unchanged model is a
    star; measurements are points with 1 sigma (solid) and 2 sigma (dashed)
    error ellipses. The model-limits caption sits at the bottom.

    Parameters
    ----------
    result : DiagramResult
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    measurements : induct.io.measurements.Measurements, optional
        Measured responses; entries whose period matches a panel are drawn there.
    formats : tuple of str

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.
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
    for p, ax in enumerate(axes.ravel()):
        if p >= npanel:
            ax.set_visible(False)
            continue
        labels = []
        for r, v in zip(result.second_curves[p], result.second_values):
            ok = np.isfinite(r)
            if not ok.any():
                continue
            x, y = np.degrees(np.angle(r[ok])), np.abs(r[ok])
            ax.plot(x, y, color="0.45", lw=0.9, ls="--", zorder=2)
            labels.append((f"{plotting.format_number(v)} {unit2}", x[-1], y[-1]))
        for r, c in zip(result.first_curves[p], colours):
            ok = np.isfinite(r)
            ax.plot(np.degrees(np.angle(r[ok])), np.abs(r[ok]), color=c, lw=2.0, zorder=3)
        m = result.model_response[p]
        ax.plot([np.degrees(np.angle(m))], [abs(m)], marker="*", ms=14, mfc="white", mec="black", ls="none", zorder=6)
        if measurements is not None:
            for center, cov in measurement_ellipses(measurements, result.periods_h[p], result.degree):
                drawn += 1
                ax.errorbar([center[0]], [center[1]], fmt="o", color=plotting.HIGHLIGHT, ms=5, zorder=7)
                for nsig, ls in ((1, "-"), (2, "--")):
                    plotting.covariance_ellipse(ax, center, cov, nsig, color=plotting.HIGHLIGHT, ls=ls, zorder=7)
        ax.set_title(f"period {result.periods_h[p]:g} h", fontsize=10)
        ax.set_xlabel("phase lag (deg)")
        ax.set_ylabel("amplitude A = |R|" if result.degree == 1 else f"amplitude A = |R_{result.degree}|")
        ax.margins(x=0.12, y=0.06)
        _place_labels(ax, labels)
    if measurements is not None and drawn < measurements.n_entries:
        warnings.warn(
            f"{measurements.n_entries - drawn} measurement(s) match no panel's period or degree and are not drawn",
            stacklevel=2,
        )
    handles = [Line2D([], [], color=c, lw=2.0, label=f"{plotting.format_number(v)} {unit1}") for v, c in zip(result.first_values, colours)]
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
    fig.suptitle(plotting.wrap(title, 100) + "\n" + plotting.wrap(sub, 120), fontsize=10)
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    if path is None:
        return fig
    return plotting.save_figure(fig, path, formats=formats)


def _place_labels(ax, labels, min_dx_px: float = 45.0, min_dy_px: float = 11.0) -> None:
    """Write curve labels at their anchors, leaving out any that would overlap one already written."""
    ax.get_xlim(), ax.get_ylim()  # settle the autoscaled limits before using the transform
    placed = []
    for text, x, y in labels:
        px, py = ax.transData.transform((x, y))
        if any(abs(px - qx) < min_dx_px and abs(py - qy) < min_dy_px for qx, qy in placed):
            continue
        placed.append((px, py))
        ax.annotate(
            text,
            (x, y),
            xytext=(3, -3),
            textcoords="offset points",
            fontsize=7.5,
            color="0.25",
            va="top",
            bbox={"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none", "alpha": 0.7},
            zorder=5,
        )


def write_diagram_csv(result: DiagramResult, path) -> None:
    """Write every curve point: period_h, family, the two parameters, amplitude, phase_lag_deg.

    ``family`` is ``"constant FIRST"`` or ``"constant SECOND"`` (parameter
    names as given); one row per point, full precision.
    """
    import csv

    f_dense = _dense(result.first, result.first_curves.shape[-1])
    s_dense = _dense(result.second, result.second_curves.shape[-1])
    with open(path, "w", newline="") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(["period_h", "family", result.first.parameter, result.second.parameter, "amplitude", "phase_lag_deg"])
        for p, period in enumerate(result.periods_h):
            for v, curve in zip(result.first_values, result.first_curves[p]):
                for s, r in zip(s_dense, curve):
                    writer.writerow([repr(float(period)), f"constant {result.first.parameter}", repr(float(v)), repr(float(s)), repr(float(abs(r))), repr(float(np.degrees(np.angle(r))))])
            for v, curve in zip(result.second_values, result.second_curves[p]):
                for f, r in zip(f_dense, curve):
                    writer.writerow([repr(float(period)), f"constant {result.second.parameter}", repr(float(f)), repr(float(v)), repr(float(abs(r))), repr(float(np.degrees(np.angle(r))))])
