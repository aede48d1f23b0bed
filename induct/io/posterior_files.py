"""Writing an inversion's posterior to NetCDF (``induct invert --save-posterior FILE.nc``).

The grid posterior is written as an ``xarray.Dataset`` (NetCDF-4 through h5netcdf):
for each free parameter ``p`` (named CF-safe, e.g. ``ocean_thickness_km``) the
coordinate ``p`` (bin midpoints, field units, with ``units``, ``parameter``,
``prior_scale`` and ``bin_edges`` in the prior coordinate), the variable
``marginal_p`` (posterior mass per bin, sums to 1), and for each pair the 2-D
marginal ``map_p_q``. A sampler's result (nested or ensemble) also carries its
posterior samples along the dimension ``sample``: ``sample_p`` (field units) and
``sample_weight`` (normalised to sum 1; equal weights for the ensemble sampler).
Global attributes carry the ranges, the best fit, chi2_min, dof, p-value, the
evidence where computed, the resolution check and what the model leaves out.
Written atomically (:mod:`induct.io.files`).
"""

from __future__ import annotations

import json

import numpy as np

from induct import __version__
from induct.constants import MODEL_LIMITS
from induct.io.files import atomic_path
from induct.io.map_files import cf_name, require_netcdf
from induct.model.parameters import FIELDS

__all__ = ["posterior_dataset", "write_posterior_netcdf"]



def posterior_dataset(result):
    """The posterior of an inversion result as an ``xarray.Dataset`` (see the module docstring).

    Parameters
    ----------
    result : induct.inversion.posterior.PosteriorResult

    Returns
    -------
    xarray.Dataset
    """
    xr = require_netcdf()[0]
    coords, data = {}, {}
    names = [cf_name(p.name) for p in result.parameters]
    for p, name, e, mass in zip(result.parameters, names, result.edges, result.marginals):
        mids = p.from_prior(0.5 * (np.asarray(e)[:-1] + np.asarray(e)[1:]))
        coords[name] = (name, np.asarray(mids, dtype=float), {
            "long_name": p.name, "parameter": p.name, "units": FIELDS[p.field].cf_unit,
            "prior_scale": p.scale, "prior_range": np.array([p.lo, p.hi], dtype=float),
            "bin_edges_prior_coordinate": np.asarray(e, dtype=float),
        })
        data[f"marginal_{name}"] = (name, np.asarray(mass, dtype=float), {
            "long_name": f"marginal posterior mass of {p.name} per bin", "units": "1"})
    for (i, j), mass in result.maps.items():
        data[f"map_{names[i]}_{names[j]}"] = ((names[i], names[j]), np.asarray(mass, dtype=float), {
            "long_name": f"2-D marginal posterior mass of {result.parameters[i].name} and {result.parameters[j].name}",
            "units": "1"})
    if result.samples is not None:
        samples = np.asarray(result.samples, dtype=float)
        weights = (np.full(samples.shape[0], 1.0) if result.sample_weights is None
                   else np.asarray(result.sample_weights, dtype=float))
        for k, (p, name) in enumerate(zip(result.parameters, names)):
            data[f"sample_{name}"] = ("sample", np.asarray(p.from_prior(samples[:, k]), dtype=float), {
                "long_name": f"posterior sample of {p.name}", "units": FIELDS[p.field].cf_unit})
        data["sample_weight"] = ("sample", weights / weights.sum(), {
            "long_name": "weight of each posterior sample (sums to 1)", "units": "1"})
    fit = result.fit or {}
    attrs = {
        "title": "posterior of an induct inversion",
        "source": f"induct {__version__}",
        "method": result.method,
        "grid_points": np.asarray(result.grid_points, dtype=int),
        "interval": "equal-tailed credible intervals (68: 16-84 %, 95: 2.5-97.5 %)",
        "ranges_json": json.dumps(result.to_dict()["ranges"]),
        "best_json": json.dumps({k: float(v) for k, v in result.best.items()}),
        "chi2_min": float(result.chi2_min),
        "n_data": int(result.n_data),
        "dof": int(fit.get("dof", result.n_data - len(result.parameters))),
        "p_value": float("nan") if fit.get("p_value") is None else float(fit["p_value"]),
        "converged": int(result.converged),
        "resolution_check_json": json.dumps(result.to_dict()["resolution_check"]),
        "comment": MODEL_LIMITS,
    }
    if result.log_evidence is not None:
        attrs["log_evidence"] = float(result.log_evidence)
        attrs["log_evidence_err"] = float("nan") if result.log_evidence_err is None else float(result.log_evidence_err)
    return xr.Dataset(data, coords=coords, attrs=attrs)


def write_posterior_netcdf(result, path) -> None:
    """Write :func:`posterior_dataset` of ``result`` to ``path`` (NetCDF-4, atomically).

    Parameters
    ----------
    result : induct.inversion.posterior.PosteriorResult
    path : str or Path
    """
    dataset = posterior_dataset(result)
    with atomic_path(path) as tmp:
        dataset.to_netcdf(tmp, engine="h5netcdf")
