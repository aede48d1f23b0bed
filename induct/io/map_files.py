"""Writing a :class:`~induct.planning.maps.MapResult`: NetCDF (CF-style), long-format CSV and the figure.

NetCDF needs the optional packages xarray and h5netcdf (extra ``netcdf``);
:func:`require_netcdf` says how to install them when they are missing.
"""

from __future__ import annotations

import csv
import re
from datetime import datetime, timezone

import numpy as np

from induct import __version__
from induct.model.parameters import FIELDS
from induct.planning.maps import QUANTITIES, MapResult

__all__ = ["map_dataset", "write_map_netcdf", "write_map_csv", "plot_map", "cf_name", "require_netcdf"]


def cf_name(parameter: str) -> str:
    """A NetCDF/CF-safe variable name for ``"LAYER.FIELD"`` (letters, digits, underscores)."""
    name = re.sub(r"[^A-Za-z0-9_]+", "_", parameter).strip("_")
    return name if name[:1].isalpha() else f"p_{name}"


def require_netcdf():
    """Import xarray and h5netcdf (with its h5py backend), or raise ImportError saying how to install them."""
    try:
        import h5netcdf  # noqa: F401
        import h5py  # noqa: F401  (h5netcdf's file backend; not a hard dependency of recent h5netcdf)
        import xarray as xr
    except ImportError as exc:
        raise ImportError(
            f"writing NetCDF needs the packages xarray, h5netcdf and h5py ({exc}); "
            "install them with: pip install 'induct[netcdf]'"
        ) from None
    return xr, h5netcdf


def map_dataset(result: MapResult):
    """The map as an ``xarray.Dataset`` with CF-style coordinates, units and attributes.

    Coordinates are named after the axes' parameters made CF-safe (e.g.
    ``ice_shell_thickness_km``) and carry ``long_name``, ``units`` (UDUNITS
    spelling), the original ``parameter`` and the grid ``spacing``. Data
    variables: the quantity (shape (ny, nx)), ``response_real``/``response_imag``
    (R_n) and, with measurements, ``chi_square`` with its 1 and 2 sigma
    thresholds. Global attributes record the body, period, degree, point,
    drive, reference, fixed parameters, conventions and the model's limits.
    """
    from induct.plot.style import LIMITS_CAPTION

    xr = require_netcdf()[0]
    xname, yname = cf_name(result.x.parameter), cf_name(result.y.parameter)
    coords = {}
    for name, spec, vals in ((xname, result.x, result.x_values), (yname, result.y, result.y_values)):
        attrs = {
            "long_name": spec.label.rsplit(" (", 1)[0],
            "units": FIELDS[spec.field_name].cf_unit,
            "parameter": spec.parameter,
            "spacing": "logarithmic" if spec.log else "linear",
        }
        coords[name] = (name, np.asarray(vals, dtype=float), attrs)
    dims = (yname, xname)
    label, _, cf_unit, _ = QUANTITIES[result.quantity]
    data = {
        result.quantity: (dims, result.values, {"long_name": label, "units": cf_unit}),
        "response_real": (dims, result.response.real, {"long_name": "real part of R_n (exp(+i w t))", "units": "1"}),
        "response_imag": (dims, result.response.imag, {"long_name": "imaginary part of R_n (exp(+i w t))", "units": "1"}),
    }
    if result.chi_square is not None:
        data["chi_square"] = (
            dims,
            result.chi_square,
            {
                "long_name": "chi-square misfit to the measured amplitudes and phase lags",
                "units": "1",
                "level_1_sigma": result.chi_square_levels[1],
                "level_2_sigma": result.chi_square_levels[2],
                "region": result.region,
                "n_data": result.n_data,
                "measurement_periods_h": np.asarray(result.measurement_periods_h, dtype=float),
            },
        )
    attrs = {
        "Conventions": "CF-1.10",
        "title": f"{result.body}: {result.describe()}",
        "source": f"induct {__version__} feasibility map",
        "history": f"{datetime.now(timezone.utc).isoformat(timespec='seconds')} created by induct {__version__}",
        "body": result.body,
        "radius_km": result.radius_km,
        "period_h": result.period_h,
        "degree": result.degree,
        "quantity": result.quantity,
        "x_parameter": result.x.parameter,
        "y_parameter": result.y.parameter,
        "fixed_parameters": "; ".join(result.fixed),
        "time_convention": "exp(+i w t); R_n = A exp(i phi), phase lag phi in degrees",
        "comment": LIMITS_CAPTION,
    }
    for key in ("altitude_km", "drive_nT", "reference", "noise_nT", "k", "detection_threshold_nT"):
        if getattr(result, key) is not None:
            attrs[key] = getattr(result, key)
    return xr.Dataset(data, coords=coords, attrs=attrs)


def write_map_netcdf(result: MapResult, path) -> None:
    """Write the map as NetCDF-4 through xarray's h5netcdf engine (see :func:`map_dataset`)."""
    map_dataset(result).to_netcdf(path, engine="h5netcdf")


def write_map_csv(result: MapResult, path) -> None:
    """Write the map in long format: one row per cell, x varying fastest.

    Columns are named after the axes' parameters as given (e.g.
    ``ice shell.thickness_km``) and the quantity; with measurements a
    ``chi_square`` column follows. Values are written at full precision
    (``repr``, so they read back exactly), NaN as ``nan``.
    """
    ny, nx = result.values.shape
    cols = [
        np.broadcast_to(result.x_values, (ny, nx)).ravel(),
        np.broadcast_to(result.y_values[:, None], (ny, nx)).ravel(),
        result.values.ravel(),
    ]
    header = [result.x.parameter, result.y.parameter, result.quantity]
    if result.chi_square is not None:
        cols.append(result.chi_square.ravel())
        header.append("chi_square")
    with open(path, "w", newline="") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(zip(*([repr(float(v)) for v in c] for c in cols)))


def plot_map(result: MapResult, path=None, *, levels: int = 12, formats=("png", "pdf")):
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
    result : MapResult
    path : str or Path, optional
        Output path without suffix; written in each of ``formats`` when given.
    levels : int
        Approximate number of filled contour levels.
    formats : tuple of str
        File formats to write (PNG and vector PDF by default).

    Returns
    -------
    matplotlib.figure.Figure when ``path`` is None, else the list of written paths.
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
