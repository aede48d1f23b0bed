"""Ocean chemistry -> electrical conductivity and freezing point.

Public API::

    conductivity(solute, salinity_g_per_kg, temperature_C, pressure_MPa=0.0,
                 *, return_flags=False, warn=True)          -> S/m [, flags]
    freezing_point(solute, salinity_g_per_kg, pressure_MPa=0.0,
                   *, return_flags=False, warn=True)        -> degC [, flags]
    ocean_conductivity_profile(solute, salinity_g_per_kg, temperature_C,
                               pressure_MPa)                -> (S/m, flags)
    get_solute(name)                                        -> Solute record

Solutes are records of the registry :mod:`induct.brine.registry`
(:data:`SOLUTES` maps names to records; iterating it gives the names):
built in are "seawater" (Practical Salinity, PSS-78), "NaCl", "MgSO4", "KCl"
(g of salt per kg of solution); names and aliases are case-insensitive.
Adding a solute means adding one record there (see its docstring).
Temperatures ITS-90, sea (gauge) pressure in MPa. Flags are
:class:`ExtrapolationFlag` bits (0 = inside the reference model);
:func:`describe_flags` turns them into names. Results that use an
extrapolation also raise one aggregated :class:`ExtrapolationWarning` per call.
Modules: registry (solute records), seawater (PSS-78), extrapolation (beyond
PSS-78), solutions (NaCl/KCl/MgSO4), freezing, water (IAPWS-95 density, IAPWS
2008 viscosity), limits (saturation), flags, api. Validity ranges: see each
docstring and docs/brine.md.
"""

from induct.brine.api import conductivity, freezing_point, ocean_conductivity_profile
from induct.brine.flags import ExtrapolationFlag, ExtrapolationWarning, describe_flags
from induct.brine.registry import SOLUTES, Solute, get_solute, register_solute, unregister_solute

__all__ = [
    "SOLUTES",
    "ExtrapolationFlag",
    "ExtrapolationWarning",
    "Solute",
    "conductivity",
    "describe_flags",
    "freezing_point",
    "get_solute",
    "ocean_conductivity_profile",
    "register_solute",
    "unregister_solute",
]
