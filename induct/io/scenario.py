"""Scenario files: one body per TOML file, read by both the CLI and the API.

A scenario holds the body, its layers (from the surface down), an optional
ionosphere, the driving periods and, for later steps, the driving-field lines
and inversion settings::

    [body]
    name = "Ilmare"              # fictional
    radius_km = 1540.0

    [[layers]]                   # from the surface down
    name = "ice shell"
    thickness_km = 20.0
    conductivity_S_per_m = 1e-6

    [[layers]]
    name = "core"                # no thickness: fills to the centre
    conductivity_S_per_m = 1e5

    [ionosphere]                 # optional thin sheet above the surface
    conductance_S = 500.0
    altitude_km = 100.0

    [drive]
    periods_h = [12.1, 6.05]
    epoch_utc = "2031-03-10T00:00:00"   # optional: t = 0 of the driving lines (UTC)

``[drive] epoch_utc`` gives the driving lines an absolute time origin: their phases
refer to ``t = 0`` at that UTC instant (written by ``induct drive`` from the planet file's
``[planet] epoch_utc`` or ``--epoch-utc``). Tracks and residual files with absolute times
(``utc`` or ``tdb_s`` columns, SPICE kernels, CDF files) need it.

Unknown tables and keys are rejected (a misspelt key would otherwise be silently
ignored); the ``[drive]`` lines and the ``[invert]`` table are checked by the modules
that read them (:mod:`induct.field.drive`, :mod:`induct.inversion.priors`) and kept
in :attr:`Scenario.raw`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from induct.field.drive import parse_drive_lines
from induct.io.bundled import bundled_scenarios, resolve_scenario_path
from induct.io.timescales import check_epoch_utc
from induct.io.toml import read_toml
from induct.model.interior import Ionosphere, InteriorModel, Layer

__all__ = ["Scenario", "load_scenario", "parse_scenario", "bundled_scenarios"]

_TOP_KEYS = {"body", "layers", "ionosphere", "drive", "invert", "notes"}
_BODY_KEYS = {"name", "radius_km", "description", "parent", "epoch"}
_LAYER_CORE_KEYS = {"name", "thickness_km", "conductivity_S_per_m"}
# Keys a layer may carry for other modules (ocean chemistry, densities).
_LAYER_EXTRA_KEYS = {
    "density_kg_per_m3",
    "solute",
    "salinity_g_per_kg",
    "temperature_C",
    "temperature_profile",
    "sublayers",
    "kind",
    "description",
}
_ION_KEYS = {"conductance_S", "altitude_km"}


@dataclass
class Scenario:
    """A parsed scenario.

    Attributes
    ----------
    name : str
        The body's name.
    model : InteriorModel
        The checked interior model.
    periods_h : ndarray, shape (P,)
        Driving periods (h): ``[drive].periods_h``, else the periods of the
        ``[[drive.lines]]``; empty if neither is given.
    raw : dict
        The whole TOML document, for the modules that read further tables.
    path : Path or None
        Where it was read from.
    epoch_utc : str or None
        ``[drive] epoch_utc``: UTC of ``t = 0`` of the driving lines (``"YYYY-MM-DDTHH:MM:SS"``),
        or None when the scenario gives none (then only ``t_s`` tracks can be used).
    """

    name: str
    model: InteriorModel
    periods_h: np.ndarray
    raw: dict = field(repr=False)
    path: Path | None = None
    epoch_utc: str | None = None

    @property
    def drive_lines(self):
        """The ``[[drive.lines]]`` of the scenario as parsed driving lines (empty list if none)."""
        lines = self.raw.get("drive", {}).get("lines")
        if not lines:
            return []
        return parse_drive_lines(self.raw["drive"])


def _unknown(keys, allowed, where):
    extra = sorted(set(keys) - set(allowed))
    if extra:
        raise ValueError(f"{where}: unknown key(s) {', '.join(map(repr, extra))}; allowed: {', '.join(sorted(allowed))}")


def parse_scenario(doc: dict, path: Path | None = None) -> Scenario:
    """Build a :class:`Scenario` from a parsed TOML document.

    Raises
    ------
    ValueError
        Naming the table and key at fault.
    """
    where = str(path) if path else "scenario"
    _unknown(doc.keys(), _TOP_KEYS, where)
    body = doc.get("body")
    if not isinstance(body, dict):
        raise ValueError(f"{where}: missing [body] table with name and radius_km")
    _unknown(body.keys(), _BODY_KEYS, f"{where}: [body]")
    if "radius_km" not in body:
        raise ValueError(f"{where}: [body] needs radius_km (km, > 0)")
    layers_raw = doc.get("layers")
    if not isinstance(layers_raw, list) or not layers_raw:
        raise ValueError(f"{where}: needs at least one [[layers]] table, listed from the surface down")
    layers = []
    for i, item in enumerate(layers_raw):
        lw = f"{where}: [[layers]] {i + 1} ({item.get('name', '?')!r})"
        _unknown(item.keys(), _LAYER_CORE_KEYS | _LAYER_EXTRA_KEYS, lw)
        if "name" not in item:
            raise ValueError(f"{lw}: needs a name")
        extra = {k: v for k, v in item.items() if k in _LAYER_EXTRA_KEYS}
        layers.append(
            Layer(
                name=item["name"],
                conductivity_S_per_m=item.get("conductivity_S_per_m"),
                thickness_km=item.get("thickness_km"),
                extra=extra,
            )
        )
    ion = None
    if "ionosphere" in doc:
        ion_raw = doc["ionosphere"]
        _unknown(ion_raw.keys(), _ION_KEYS, f"{where}: [ionosphere]")
        missing = _ION_KEYS - set(ion_raw)
        if missing:
            raise ValueError(f"{where}: [ionosphere] needs {', '.join(sorted(missing))}")
        ion = Ionosphere(conductance_S=ion_raw["conductance_S"], altitude_km=ion_raw["altitude_km"])
    drive = doc.get("drive", {})
    if not isinstance(drive, dict):
        raise ValueError(f"{where}: drive must be a table ([drive])")
    periods = _periods(drive, where)
    epoch = None
    if "epoch_utc" in drive:
        epoch = check_epoch_utc(drive["epoch_utc"], f"{where}: [drive] epoch_utc")
    layers = _resolve_chemistry(layers, body, where, periods)
    model = InteriorModel(body["radius_km"], layers, ionosphere=ion, name=body.get("name", "body"))
    return Scenario(name=model.name, model=model, periods_h=periods, raw=doc, path=path, epoch_utc=epoch)


def _resolve_chemistry(layers, body, where, periods_h):
    """Layers that give salinity instead of conductivity are resolved by the ocean module."""
    if not any(layer.conductivity_S_per_m is None and "salinity_g_per_kg" in layer.extra for layer in layers):
        return layers
    try:
        from induct.model.ocean import resolve_chemistry_layers
    except ImportError as exc:  # pragma: no cover - the module ships with the package
        raise ValueError(f"{where}: oceans given by salinity need induct.model.ocean ({exc})") from exc
    return resolve_chemistry_layers(layers, body, where, periods_h)


def _periods(drive: dict, where: str) -> np.ndarray:
    if "periods_h" in drive:
        periods = drive["periods_h"]
        if not isinstance(periods, list) or not periods:
            raise ValueError(f"{where}: [drive] periods_h must be a non-empty list of periods in hours")
        arr = np.array(periods, dtype=float)
        bad = ~(np.isfinite(arr) & (arr > 0))
        if bad.any():
            raise ValueError(f"{where}: [drive] periods_h must be > 0 h, got {arr[bad][0]!r}")
        return arr
    lines = drive.get("lines") or []
    periods = [line.get("period_h") for line in lines]
    if any(p is None for p in periods):
        raise ValueError(f"{where}: every [[drive.lines]] needs period_h")
    return np.array(periods, dtype=float)


def load_scenario(name_or_path) -> Scenario:
    """Read and check a scenario file (or a bundled scenario by name).

    Parameters
    ----------
    name_or_path : str or Path
        A TOML file, or a bundled scenario's name (see :func:`bundled_scenarios`).

    Returns
    -------
    Scenario

    Examples
    --------
    >>> from induct import load_scenario
    >>> sc = load_scenario("ilmare")             # a bundled fictional scenario
    >>> sc.model.layer_names
    ('ice shell', 'ocean', 'mantle', 'core')
    >>> sc.model.response(periods_h=[12.12]).amplitude.round(3)
    array([0.909])
    """
    path = resolve_scenario_path(name_or_path)
    return parse_scenario(read_toml(path), path)
