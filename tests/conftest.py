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
