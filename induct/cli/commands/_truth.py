"""Shared ``--truth`` option of the commands whose figures mark true parameter values (``invert``, ``map``)."""

from __future__ import annotations

import math

TRUTH_HELP = (
    "mark true values on the figure: LAYER.FIELD=VALUE ... (e.g. 'ocean.conductivity_S_per_m=2.8' "
    "'ice shell.thickness_km=20'), or one scenario (file or bundled name) whose own values are the truth"
)


def add_truth_option(parser) -> None:
    """Add ``--truth`` (zero or more values) to ``parser``."""
    parser.add_argument("--truth", nargs="+", metavar="ITEM", help=TRUTH_HELP)


def truth_from_args(args, model, names, *, require_all: bool = False) -> dict | None:
    """The true values by parameter name from ``args.truth`` (None when not given).

    Each item is ``LAYER.FIELD=VALUE``; a single item without ``=`` is a scenario whose
    values of ``names`` are taken (a parameter it does not define is an error). With
    ``require_all`` every name needs a value (a map marks one point).
    """
    items = getattr(args, "truth", None)
    if not items:
        return None
    from induct.model.parameters import parameter_value, parse_truth

    if len(items) == 1 and "=" not in items[0]:
        from induct.io.scenario import load_scenario

        truth_model = load_scenario(items[0]).model
        out = {}
        for name in names:
            value = parameter_value(truth_model, name) if _has_layer(truth_model, name) else math.nan
            if not math.isfinite(value):
                raise ValueError(f"--truth: scenario {items[0]!r} gives no value of {name!r}")
            out[name] = value
        return out
    out = parse_truth(items, model, names, "--truth")
    missing = [name for name in names if name not in out]
    if require_all and missing:
        raise ValueError(f"--truth: give a value for every axis of the figure; missing {', '.join(map(repr, missing))}")
    return out


def _has_layer(model, name: str) -> bool:
    layer = name.split(".", 1)[0]
    return layer == "ionosphere" or layer in model.layer_names
