"""Writing a :class:`~induct.planning.maps.MapResult`: NetCDF (CF-style) and long-format CSV.

NetCDF needs the optional packages xarray and h5netcdf (extra ``netcdf``);
:func:`require_netcdf` says how to install them when they are missing. The
figure of a map is drawn by :func:`induct.plot.maps.plot_map`. Files are
written to a temporary name in the target folder and moved into place.
"""

from __future__ import annotations

import csv
import re
from datetime import datetime, timezone

import numpy as np

from induct import __version__
from induct.model.parameters import FIELDS
from induct.constants import MODEL_LIMITS
from induct.io.files import atomic_open, atomic_path
from induct.planning.maps import QUANTITIES, MapResult

__all__ = ["map_dataset", "write_map_netcdf", "write_map_csv", "write_map_files", "cf_name", "require_netcdf"]

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
            "they are dependencies of induct: reinstall it with pip install induct"
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
        "comment": MODEL_LIMITS,
    }
    for key in ("altitude_km", "drive_nT", "reference", "noise_nT", "k", "detection_threshold_nT"):
        if getattr(result, key) is not None:
            attrs[key] = getattr(result, key)
    return xr.Dataset(data, coords=coords, attrs=attrs)


def write_map_netcdf(result: MapResult, path) -> None:
    """Write the map as NetCDF-4 through xarray's h5netcdf engine (see :func:`map_dataset`)."""
    dataset = map_dataset(result)
    with atomic_path(path) as tmp:
        dataset.to_netcdf(tmp, engine="h5netcdf")


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
    with atomic_open(path, "w", newline="") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(zip(*([repr(float(v)) for v in c] for c in cols)))


def write_map_files(result: MapResult, prefix, *, netcdf: bool = True) -> list:
    """Write ``PREFIX.csv`` (:func:`write_map_csv`) and, with ``netcdf``, ``PREFIX.nc`` (:func:`write_map_netcdf`).

    Parameters
    ----------
    result : MapResult
    prefix : str or Path
        Output prefix; the suffixes are appended (``maps/a`` gives ``maps/a.csv``).
    netcdf : bool
        Also write the NetCDF file (needs xarray, h5netcdf and h5py).

    Returns
    -------
    list of Path
        The files written, CSV first.
    """
    from pathlib import Path

    prefix = Path(prefix)
    csv_path = prefix.with_name(prefix.name + ".csv")
    write_map_csv(result, csv_path)
    written = [csv_path]
    if netcdf:
        nc_path = prefix.with_name(prefix.name + ".nc")
        write_map_netcdf(result, nc_path)
        written.append(nc_path)
    return written
