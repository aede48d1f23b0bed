"""Shared pytest fixtures for the induct test suite."""

import numpy as np
import pytest

from induct.model.kernel import layered_response


def _response(radii_m, conductivity_S_per_m, period_s, degree=1):
    """R_n of a layered sphere as the tests see it: (radii (m), conductivity (S/m), period (s)).

    The one place where the kernel tests reach the code under test. To test the checked API
    instead, return ``induct.transfer(radii_m, conductivity_S_per_m, period_s, degree)``; note
    that it rejects the five zero-thickness corner models of tests/model/data/kernel_reference.json
    (it requires strictly increasing radii; the kernel allows equal ones).
    """
    omega = 2.0 * np.pi / np.asarray(period_s, dtype=float)
    return layered_response(radii_m, conductivity_S_per_m, omega, degree)


@pytest.fixture(scope="session")
def response():
    """Callable ``response(radii_m, conductivity_S_per_m, period_s, degree=1) -> complex ndarray``."""
    return _response


# --------------------------------------------------------------------------- shared scenario fixtures
# One set of bundled fictional scenarios for every test file (parsed once per session). Scenarios and
# models are not modified by the code under test (InteriorModel.with_layer returns a copy).

@pytest.fixture(scope="session")
def ilmare_scenario():
    """The bundled fictional moon Ilmare (induct.io.scenario.Scenario)."""
    from induct import load_scenario

    return load_scenario("ilmare")


@pytest.fixture(scope="session")
def ilmare(ilmare_scenario):
    """Ilmare's interior model (induct.model.interior.InteriorModel)."""
    return ilmare_scenario.model


@pytest.fixture(scope="session")
def ilmare_brine_scenario():
    """Ilmare with its ocean given by its chemistry (MgSO4 brine)."""
    from induct import load_scenario

    return load_scenario("ilmare_brine")
