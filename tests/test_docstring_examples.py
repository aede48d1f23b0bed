"""Every Examples section in the package runs as a doctest, and the main public functions have one.

Reference: the expected outputs written in each docstring (numpydoc convention; common practice).
The modules are imported from the installed package, so the examples run against what users get.
"""

import doctest
import importlib
import pkgutil
import subprocess
import sys

import pytest

import induct

#: Modules whose examples need an optional library, with that library.
NEEDS = {
    "induct.io.spice_track": "spiceypy",
    "induct.io.cdf_magnetometer": "cdflib",
    "induct.parallel.dask_backend": "distributed",
    "induct.inversion.mcmc": "emcee",
}

MODULES = sorted(m.name for m in pkgutil.walk_packages(induct.__path__, "induct.") if not m.name.startswith("induct.scenarios"))


@pytest.mark.parametrize("name", MODULES)
def test_examples_run(name):
    if name in NEEDS:
        pytest.importorskip(NEEDS[name])
    module = importlib.import_module(name)
    finder = doctest.DocTestFinder(exclude_empty=True)
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    failures = []
    for test in finder.find(module, name):
        runner.run(test, out=lambda text: failures.append(text))
    assert not failures, f"{name}: failing examples:\n" + "".join(failures)


#: The main public functions and classes: each docstring has a runnable Examples section.
MAIN_API = [
    "induct.transfer", "induct.amplitude", "induct.phase_lag_deg", "induct.q_response", "induct.c_response_km",
    "induct.skin_depth_m", "induct.conductance_S", "induct.perfect_conductor_bound", "induct.InteriorModel",
    "induct.load_scenario",
    "induct.model.parameters.Parameter", "induct.model.parameters.check_parameter_name",
    "induct.model.ocean.hydrostatic_pressure_MPa", "induct.model.ocean.adiabatic_temperature_C",
    "induct.brine.registry.get_solute",
    "induct.planning.design.plan_flybys",
    "induct.io.timescales.utc_to_tdb",
]


def _resolve(path):
    module, _, attr = path.rpartition(".")
    return getattr(importlib.import_module(module), attr)


@pytest.mark.parametrize("path", MAIN_API)
def test_main_api_has_runnable_example(path):
    doc = _resolve(path).__doc__ or ""
    assert "Examples\n" in doc and ">>>" in doc, f"{path}: no Examples section with >>> lines"


def test_import_induct_stays_light():
    # `import induct` and the study modules load no plotting, cluster, sampler or file-format library
    # (the layout rule checked by the project's structure check).
    heavy = ("matplotlib", "dask", "distributed", "emcee", "dynesty", "spiceypy", "cdflib", "xarray", "h5py", "arviz")
    code = ("import sys, induct, induct.io.timescales, induct.io.spice_track, induct.io.cdf_magnetometer; "
            f"print(sorted(m for m in {heavy!r} if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
