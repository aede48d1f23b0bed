"""The Examples sections of induct.io's modules run as doctests (they create any files they need in
temporary folders). Reference: the expected outputs written in each docstring."""

import doctest
import importlib

import pytest


@pytest.mark.parametrize("name, needs", [
    ("induct.io.timescales", None),
    ("induct.io.spice_track", "spiceypy"),
    ("induct.io.cdf_magnetometer", "cdflib"),
])
def test_examples_run(name, needs):
    if needs:
        pytest.importorskip(needs)
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.attempted > 0
    assert result.failed == 0, f"{name}: {result.failed} of {result.attempted} examples failed (see output above)"


def test_import_induct_stays_light():
    import subprocess
    import sys

    code = ("import sys, induct, induct.io.timescales, induct.io.spice_track, induct.io.cdf_magnetometer; "
            "print(sorted(m for m in ('spiceypy', 'cdflib') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
