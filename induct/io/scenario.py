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
    "kind",
    "description",
}
_ION_KEYS = {"conductance_S", "altitude_km"}
_DRIVE_KEYS = {"periods_h", "lines", "epoch_utc"}
#: Type of every key: "number" (int or float, never a boolean or a string), "string".
_TYPES = {
    "name": "string", "description": "string", "parent": "string", "notes": "string", "kind": "string",
    "solute": "string", "temperature_profile": "string",
    "radius_km": "number", "thickness_km": "number", "conductivity_S_per_m": "number", "density_kg_per_m3": "number",
    "salinity_g_per_kg": "number", "temperature_C": "number", "conductance_S": "number", "altitude_km": "number",
}
#: Bounds a scenario file must keep (beyond them the arithmetic overflows or the model means nothing).
CONDUCTIVITY_MAX_S_PER_M = 1e10   # metals are ~1e7 S/m; inf (perfect conductor) is allowed in the innermost layer
PERIOD_RANGE_H = (1e-6, 1e9)      # 3.6 ms to ~100,000 years
LENGTH_MAX_KM = 1e6
#: Chemistry keys, meaningful only for a layer given by salinity instead of conductivity.
_CHEMISTRY_KEYS = ("solute", "temperature_C", "temperature_profile")


def _check_types(table: dict, where: str) -> None:
    """Every key of ``table`` has the type :data:`_TYPES` says (no booleans or strings for numbers)."""
    for key, value in table.items():
        kind = _TYPES.get(key)
        if kind == "string" and not isinstance(value, str):
            raise ValueError(f"{where}: {key} must be a string, got {_show(value)}")
        if kind == "number":
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise ValueError(f"{where}: {key} must be a number (not {_kind_name(value)}), got {_show(value)}")
            if value != value:
                raise ValueError(f"{where}: {key} is NaN")
            if key == "conductivity_S_per_m":
                if value < 0:
                    raise ValueError(f"{where}: {key} must be >= 0 S/m, got {value:g}")
                if not (value <= CONDUCTIVITY_MAX_S_PER_M or value == float("inf")):
                    raise ValueError(f"{where}: {key} must be at most {CONDUCTIVITY_MAX_S_PER_M:g} S/m "
                                     f"(or inf, a perfect conductor, in the innermost layer), got {value:g}")
            elif key.endswith("_km") and not abs(value) <= LENGTH_MAX_KM:
                raise ValueError(f"{where}: {key} must be at most {LENGTH_MAX_KM:g} km, got {value:g}")
            elif not abs(value) < float("inf"):
                raise ValueError(f"{where}: {key} must be finite, got {value:g}")


def _kind_name(value) -> str:
    return {bool: "a boolean", str: "a string", list: "a list", dict: "a table"}.get(type(value), type(value).__name__)


def _show(value) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


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
    _check_types({k: v for k, v in body.items() if k != "epoch"}, f"{where}: [body]")
    if "notes" in doc and not isinstance(doc["notes"], str):
        raise ValueError(f"{where}: notes must be a string, got {_show(doc['notes'])}")
    for table in ("ionosphere", "drive", "invert"):
        if table in doc and not isinstance(doc[table], dict):
            raise ValueError(f"{where}: {table} must be a table [{table}], got {_show(doc[table])}")
    if "radius_km" not in body:
        raise ValueError(f"{where}: [body] needs radius_km (km, > 0)")
    layers_raw = doc.get("layers")
    if not isinstance(layers_raw, list) or not layers_raw:
        raise ValueError(f"{where}: needs at least one [[layers]] table, listed from the surface down")
    layers = []
    for i, item in enumerate(layers_raw):
        if not isinstance(item, dict):
            raise ValueError(f"{where}: layers must be [[layers]] tables, got {_show(item)}")
        lw = f"{where}: [[layers]] {i + 1} ({item.get('name', '?')!r})"
        if "sublayers" in item:
            raise ValueError(f"{lw}: sublayers is not a setting: the ocean is split into sub-layers automatically "
                             "until its response converges; remove the key")
        _unknown(item.keys(), _LAYER_CORE_KEYS | _LAYER_EXTRA_KEYS, lw)
        if "name" not in item:
            raise ValueError(f"{lw}: needs a name")
        _check_types(item, lw)
        if "conductivity_S_per_m" in item and "salinity_g_per_kg" in item:
            raise ValueError(f"{lw}: give conductivity_S_per_m or salinity_g_per_kg (with solute), not both: "
                             "the conductivity follows from the chemistry")
        stray = [k for k in _CHEMISTRY_KEYS if k in item and "salinity_g_per_kg" not in item]
        if stray:
            raise ValueError(f"{lw}: {', '.join(stray)} need(s) salinity_g_per_kg (an ocean given by its chemistry); "
                             "remove them or give the salinity instead of conductivity_S_per_m")
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
        _check_types(ion_raw, f"{where}: [ionosphere]")
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


def check_periods_h(periods, what: str) -> np.ndarray:
    """Periods (h) as a float array: each a number (not a boolean or string) within :data:`PERIOD_RANGE_H`.

    Examples
    --------
    >>> check_periods_h([12.0, 6], "periods_h").tolist()
    [12.0, 6.0]
    """
    lo, hi = PERIOD_RANGE_H
    for p in periods:
        if isinstance(p, bool) or not isinstance(p, (int, float, np.integer, np.floating)):
            raise ValueError(f"{what} must hold numbers (hours), got {_show(p)}")
        if not p > 0:
            raise ValueError(f"{what} must be > 0 h, got {float(p):g}")
        if not lo <= p <= hi:
            raise ValueError(f"{what} must be between {lo:g} and {hi:g} h, got {float(p):g}")
    return np.array(periods, dtype=float)


def _periods(drive: dict, where: str) -> np.ndarray:
    _unknown(drive.keys(), _DRIVE_KEYS, f"{where}: [drive]")
    if "periods_h" in drive:
        periods = drive["periods_h"]
        if not isinstance(periods, list) or not periods:
            raise ValueError(f"{where}: [drive] periods_h must be a non-empty list of periods in hours")
        return check_periods_h(periods, f"{where}: [drive] periods_h")
    lines = drive.get("lines") or []
    if not isinstance(lines, list) or not all(isinstance(line, dict) for line in lines):
        raise ValueError(f"{where}: [drive] lines must be [[drive.lines]] tables")
    periods = [line.get("period_h") for line in lines]
    if any(p is None for p in periods):
        raise ValueError(f"{where}: every [[drive.lines]] needs period_h")
    return check_periods_h(periods, f"{where}: [[drive.lines]] period_h")


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
