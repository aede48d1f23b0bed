"""induct: electromagnetic induction in icy moons with subsurface oceans.

The main entry points:

* :func:`induct.transfer` -- the checked, vectorised response of layered spheres.
* :class:`induct.InteriorModel`, :class:`induct.Layer` -- a body described layer by layer.
* :func:`induct.load_scenario` -- read a scenario file (TOML) or a bundled scenario.

The model is quasi-static induction in a spherically symmetric body; plasma
interaction, asymmetric shells and motional induction are not included.
"""

__version__ = "0.1.0"

from induct.model.interior import Ionosphere, InteriorModel, Layer
from induct.model.response import (
    amplitude,
    c_response_km,
    conductance_S,
    perfect_conductor_bound,
    phase_lag_deg,
    q_response,
    skin_depth_m,
    transfer,
)
from induct.io.scenario import load_scenario


__all__ = [
    "transfer",
    "amplitude",
    "phase_lag_deg",
    "q_response",
    "c_response_km",
    "skin_depth_m",
    "conductance_S",
    "perfect_conductor_bound",
    "InteriorModel",
    "Layer",
    "Ionosphere",
    "load_scenario",
    "__version__",
]
