"""Independent reference for the planning tests: one variant's R_1 through the checked API and induct.transfer."""

import induct
from induct.constants import SECONDS_PER_HOUR


def direct_response(model, changes, period_h):
    """R_1 of ``model`` with ``changes`` ("LAYER.FIELD" -> value) applied with ``with_layer``, at one period (h)."""
    variant = model
    for key, value in changes.items():
        layer, fld = key.rsplit(".", 1)
        variant = variant.with_layer(layer, **{fld: float(value)})
    return induct.transfer(variant.radii_m(), variant.conductivities(), period_h * SECONDS_PER_HOUR, 1)
