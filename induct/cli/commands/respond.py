"""``induct respond SCENARIO``: the induction response table of a scenario."""

from __future__ import annotations

import json

import numpy as np

from induct.constants import MODEL_LIMITS
from induct.io.scenario import load_scenario
from induct.cli.tables import Column, format_table
from induct.io.files import write_text
from induct.io.tables import table_csv
from induct.model.response import PHASE_MEANING

#: The model's limits and the conventions of the printed response.
LIMITS_NOTE = f"{MODEL_LIMITS} Convention: exp(+i w t), mu = mu0 in every layer; {PHASE_MEANING}."


def register(subparsers):
    p = subparsers.add_parser(
        "respond",
        help="induced-dipole response (amplitude, phase arg R) of a scenario's interior",
        description="Print the normalised induction response R_n = A exp(i phi) of a scenario at its driving periods.",
    )
    p.add_argument("scenario", help="scenario TOML file, or the name of a bundled scenario (e.g. ilmare)")
    p.add_argument("--periods-h", type=float, nargs="+", metavar="H", help="periods in hours (override the scenario's)")
    p.add_argument("--degree", type=int, default=1, help="spherical-harmonic degree n of the inducing field (default 1)")
    out = p.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="print the response as JSON")
    out.add_argument("--csv", metavar="FILE", help="write the table as CSV to FILE ('-' for standard output)")
    return p


def response_columns(result, *, csv: bool = False) -> list[Column]:
    """Table columns for a ModelResponse: period, A, phase arg R, Re, Im, C, skin depths.

    With ``csv`` the phase column keeps its established machine name ``phase_lag_deg``
    (as in the JSON output and measurement files); the text table says what it is, arg R.
    """
    cols = [
        Column("period", "h", result.periods_h, ".4f"),
        Column("A", "", result.amplitude, ".6f"),
        Column("phase lag" if csv else "phase arg R", "deg", result.phase_lag_deg, ".4f"),
        Column("Re R", "", result.response.real, ".6f"),
        Column("Im R", "", result.response.imag, ".6f"),
        Column("Re C", "km", result.c_response_km.real, ".2f"),
    ]
    for name, depth in result.skin_depths_km().items():
        cols.append(Column(f"skin depth {name}", "km", depth, ".4g"))
    return cols


def run(args) -> int:
    from induct.cli.budget import check_job
    from induct.io.scenario import check_periods_h

    if args.periods_h:
        check_periods_h(args.periods_h, "--periods-h")
    if not 1 <= args.degree <= 100:
        raise ValueError(f"--degree must be an integer from 1 to 100, got {args.degree}")
    scenario = load_scenario(args.scenario)
    periods = args.periods_h if args.periods_h else scenario.periods_h
    if periods is None or len(periods) == 0:
        raise ValueError("no periods: give --periods-h or [drive] periods_h in the scenario")
    layers = len(scenario.model.layers) + 64  # an ocean given by chemistry adds sub-layers
    # per period and layer: ~30 complex temporaries in the kernel; per row of the table ~1 kB of text
    check_job(args, f"response at {len(periods)} periods", len(periods) * (layers * 16.0 * 30 + 1000.0))
    result = scenario.model.response(periods_h=np.asarray(periods, dtype=float), degree=args.degree)
    if args.json:
        payload = {
            "body": scenario.name,
            "degree": result.degree,
            "periods_h": result.periods_h.tolist(),
            "amplitude": result.amplitude.tolist(),
            "phase_lag_deg": result.phase_lag_deg.tolist(),
            "real": result.response.real.tolist(),
            "imag": result.response.imag.tolist(),
            "oceans": ocean_reports(scenario.model),
            "notes": LIMITS_NOTE,
        }
        print(json.dumps(payload, indent=2))
        return 0
    cols = response_columns(result, csv=True)
    if args.csv:
        text = table_csv(cols)
        if args.csv == "-":
            print(text, end="")
        else:
            write_text(args.csv, text)
            print(f"wrote {args.csv}")
        return 0
    print(format_response(scenario, result))
    return 0


def format_response(scenario, result) -> str:
    """The text ``induct respond`` prints: the layers, the response table and the model's limits."""
    model = scenario.model
    return "\n".join([
        f"{scenario.name}: radius {model.radius_km:g} km, degree n = {result.degree}",
        describe_layers(model),
        "",
        format_table(response_columns(result)),
        "",
        LIMITS_NOTE,
    ])


def ocean_reports(model) -> list[dict]:
    """For each chemistry-defined ocean: its profile summary and extrapolation flags (JSON-ready)."""
    out = []
    for layer in model.layers:
        prof = layer.extra.get("profile") if layer.extra else None
        if prof is None:
            continue
        out.append(
            {
                "layer": layer.name,
                "solute": prof.solute,
                "salinity_g_per_kg": prof.salinity_g_per_kg,
                "sublayers": prof.sublayers,
                "conductivity_range_S_per_m": list(prof.conductivity_range),
                "temperature_range_C": [float(prof.temperature_C.min()), float(prof.temperature_C.max())],
                "pressure_range_MPa": [float(prof.pressure_MPa.min()), float(prof.pressure_MPa.max())],
                "extrapolated": list(prof.extrapolated),
            }
        )
    return out


def describe_layers(model) -> str:
    """Layer table (surface down): name, depth range, thickness, conductivity, conductance."""
    h = model.thicknesses_km()
    top = np.concatenate([[0.0], np.cumsum(h)[:-1]])
    sigma = [layer.conductivity_S_per_m for layer in model.layers]
    cols = [
        Column("layer", "", [layer.name for layer in model.layers], "s"),
        Column("depth top", "km", top, ".1f"),
        Column("thickness", "km", h, ".1f"),
        Column("conductivity", "S/m", sigma, ".3g"),
        Column("conductance", "S", np.array(sigma) * h * 1e3, ".3g"),
    ]
    text = format_table(cols)
    for layer in model.layers:
        prof = layer.extra.get("profile") if layer.extra else None
        if prof is None:
            continue
        lo, hi = prof.conductivity_range
        text += (
            f"\n{layer.name}: {prof.solute}, salinity {prof.salinity_g_per_kg:g} g/kg, {prof.sublayers} sub-layers; "
            f"T {prof.temperature_C.min():.2f} to {prof.temperature_C.max():.2f} degC, "
            f"p {prof.pressure_MPa.min():.1f} to {prof.pressure_MPa.max():.1f} MPa, "
            f"conductivity {lo:.4g} to {hi:.4g} S/m (table shows the mean)"
        )
        for message in prof.extrapolated:
            text += f"\n  ** EXTRAPOLATED: {message}"
    if model.ionosphere is not None:
        ion = model.ionosphere
        text += f"\nionosphere: thin sheet of {ion.conductance_S:g} S at {ion.altitude_km:g} km altitude"
    return text
