"""Accuracy of the layered-sphere kernel against an independent high-precision reference.

Reference: ``tests/model/reference_mpmath.py`` -- unscaled mpmath Bessel functions (mpmath 1.3,
Johansson et al.), transfer of the coefficients of (f, r f') across every layer, adaptive
working precision (two precisions agreeing to 30 significant digits). Stored values in
``tests/model/data/kernel_reference.json`` come from ``python tools/make_kernel_reference.py``.

Error measure: ``|R - R_ref| / max(|R_ref|, 1e-300)``. The absolute floor 1e-300 only matters
for responses below the normal double range (an all-insulating model has R_ref = 0 exactly,
and one corner has R_ref = 1e-315): there the kernel must be within 1e-310 in absolute value.
"""

from __future__ import annotations

import json
import math
import warnings
from pathlib import Path

import mpmath as mp
import numpy as np
import pytest

from reference_mpmath import response_adaptive, response_mp, skin_depth_m, uniform_sphere_mp

DATA = Path(__file__).parent / "data" / "kernel_reference.json"
REL_TOL = 1e-10  # required relative accuracy of the kernel everywhere in its domain
ABS_FLOOR = 1e-300  # |R_ref| below this is replaced by it in the denominator
EPS = 2.0**-52

HOURS = 3600.0
KM = 1000.0


@pytest.fixture(scope="module")
def reference():
    return json.loads(DATA.read_text())


@pytest.fixture(scope="module")
def comparison(reference, response):
    """Kernel values for every stored model-period.

    Each model is first evaluated under ``warnings.simplefilter('error')``; a warning is recorded
    (and fails test_kernel_finite_and_warning_free) and the model re-evaluated with warnings
    ignored, so that the accuracy tests still see every value.
    """
    rows = []
    for case in reference["cases"]:
        radii = np.array([float(x) for x in case["radii_m"]])
        sigma = np.array([float(x) for x in case["conductivity_S_per_m"]])
        periods = np.array([float(x) for x in case["period_s"]])
        ref = np.array([complex(float(a), float(b)) for a, b in zip(case["re"], case["im"])])
        warned = None
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            try:
                got = response(radii, sigma, periods, case["degree"])
            except Warning as w:
                warned = repr(w)
        if warned is not None:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                got = response(radii, sigma, periods, case["degree"])
        assert got.shape == periods.shape, (case["id"], got.shape)
        err = np.abs(got - ref) / np.maximum(np.abs(ref), ABS_FLOOR)
        for j in range(len(periods)):
            rows.append(dict(case=case, period=periods[j], got=got[j], ref=ref[j], err=err[j],
                             sensitivity=case["input_sensitivity"][j], warning=warned))
    return rows


def _describe(row) -> str:
    c = row["case"]
    return (f"{c['id']}: degree={c['degree']}, radii_m={c['radii_m']}, conductivity_S_per_m="
            f"{c['conductivity_S_per_m']}, period_s={float(row['period'])!r}\n  kernel    = {complex(row['got'])!r}\n"
            f"  reference = {complex(row['ref'])!r}\n  relative error = {row['err']:.3e}, input sensitivity x eps = "
            f"{row['sensitivity'] * EPS:.3e}")


def test_reference_file_covers_the_domain(reference):
    """The stored sweep spans the domain the kernel promises (see tools/make_kernel_reference.py)."""
    cases = reference["cases"]
    big_r = [float(c["radii_m"][-1]) for c in cases]
    periods = [float(p) for c in cases for p in c["period_s"]]
    sig = [float(s) for c in cases for s in c["conductivity_S_per_m"]]
    finite = [s for s in sig if 0 < s < math.inf]
    layers = [len(c["radii_m"]) for c in cases]
    assert 1500 <= reference["n_model_periods"] <= 5000
    assert min(big_r) <= 1.01e3 and max(big_r) >= 0.99e8
    assert min(periods) <= 1.0 and max(periods) >= 1e10
    assert min(finite) <= 1e-12 and max(finite) >= 1e7
    assert 0.0 in sig and any(math.isinf(float(c["conductivity_S_per_m"][0])) for c in cases)
    assert min(layers) == 1 and max(layers) == 100
    assert sum(1 <= n <= 5 for n in layers) > 400 and sum(n >= 20 for n in layers) > 100
    assert {c["degree"] for c in cases} >= set(range(1, 11))
    # The reference is self-consistent: a subset recomputed 40 digits more precisely agrees.
    assert reference["confirmation"]["count"] > 100
    assert reference["confirmation"]["max_relative_difference"] < 1e-25
    assert reference["dps_min"] >= 40


def test_kernel_finite_and_warning_free(comparison):
    """No warning of any kind (RuntimeWarning in particular) under simplefilter('error'), all finite."""
    warned = [r for r in comparison if r["warning"] is not None]
    assert len(warned) == 0, f"{len(warned)} model-periods warn, e.g. {warned[0]['warning']}:\n" + "\n".join(
        _describe(r) for r in warned[:5])
    bad = [r for r in comparison if not np.isfinite(r["got"])]
    assert len(bad) == 0, "non-finite kernel values:\n" + "\n".join(_describe(r) for r in bad[:5])


def test_kernel_matches_reference_everywhere(comparison):
    """The specification: relative error <= 1e-10 for every stored model-period."""
    worst = max(comparison, key=lambda r: r["err"])
    failing = sorted((r for r in comparison if not r["err"] <= REL_TOL), key=lambda r: -r["err"])
    listing = "\n".join(f"  {r['case']['id']:34s} n={r['case']['degree']:2d} T={r['period']:<12.6g} "
                        f"err={r['err']:.2e} sens*eps={r['sensitivity'] * EPS:.2e}" for r in failing)
    assert len(failing) == 0, (
        f"{len(failing)} of {len(comparison)} model-periods exceed {REL_TOL:g}; worst:\n{_describe(worst)}\n"
        f"all failing:\n{listing}"
    )


def test_kernel_error_within_input_conditioning(comparison):
    """Diagnostic companion of the test above: error <= 1e-10 + 2 * sensitivity * eps.

    ``sensitivity`` is the stored relative change of R_n per unit-roundoff perturbation of all
    inputs (reference_mpmath.input_sensitivity); a backward-stable double-precision method
    cannot be asked for less (Higham 2002, Accuracy and Stability of Numerical Algorithms,
    ch. 1: forward error <~ condition number x backward error). Thin layers, whose thickness is
    the difference of two nearly equal radii, are where this differs from the test above.
    """
    def ratio(r):
        return r["err"] / (REL_TOL + 2.0 * r["sensitivity"] * EPS)

    worst = max(comparison, key=ratio)
    assert ratio(worst) <= 1.0, "error beyond the input conditioning:\n" + _describe(worst)


def test_kernel_exact_zero_and_one(comparison):
    """All-insulating models give exactly 0; a perfect conductor filling the sphere gives 1."""
    for r in comparison:
        cid = r["case"]["id"]
        if cid.startswith("corner-all-insulating"):
            assert r["got"] == 0, _describe(r)
        if cid.startswith("corner-inf-filled") or cid.startswith("corner-inf-then-zero-thickness"):
            assert abs(r["got"] - 1.0) <= 1e-15, _describe(r)


LIVE_IDS = ["corner-metal-core-n10", "corner-insulator-uniform-n2", "corner-tiny-inf-core-n3",
            "corner-thick-layer-n3", "random-0003"]


@pytest.mark.parametrize("case_id", LIVE_IDS)
def test_reference_code_reproduces_stored_values(reference, case_id):
    """The mpmath reference code itself, rerun now, reproduces the stored values (1e-20 relative)."""
    case = next(c for c in reference["cases"] if c["id"] == case_id)
    period = case["period_s"][0]
    value, dps = response_adaptive(case["radii_m"], case["conductivity_S_per_m"], period, case["degree"])
    with mp.workdps(dps):
        stored = mp.mpc(mp.mpf(case["re"][0]), mp.mpf(case["im"][0]))
        rel = abs(value - stored) / abs(stored)
    assert rel <= 1e-20, f"{case_id}: live {mp.nstr(value, 25)} vs stored {mp.nstr(stored, 25)} (rel {mp.nstr(rel, 3)})"


# --------------------------------------------------------------------------- check values
# Table of /work/shared/domain/induction.md ("computed" there at 60-120 digits with mpmath and an
# independent double-precision method). Radii km, conductivity S/m, period h.
OCEAN = ([1435.8, 1535.8, 1560.8], [0.0, 2.75, 0.0])
CHECK_VALUES = {
    "U1": ([1000.0], [1.0], 1, 1.0, "0.954703709105962", "0.0439284549148668"),
    "U2": ([1000.0], [1.0], 2, 1.0, "0.924541658014276", "0.0709687697711909"),
    "U3": ([1560.8], [0.1], 1, 11.2330, "0.692438626316579", "0.244466498998873"),
    "S1": (*OCEAN, 1, 11.2330, "0.899547392851182", "0.0508533203518747"),
    "S2": (*OCEAN, 1, 85.2283, "0.821791143283107", "0.245007627497068"),
    "S5": (*OCEAN, 2, 11.2330, "0.836681818417879", "0.0794485315821094"),
    "L1": ([600.0, 1435.8, 1535.8, 1560.8], [1e6, 0.01, 2.75, 0.0], 1, 11.2330,
           "0.899350591545253", "0.0509414433224303"),
}


def _half_unit(text: str) -> float:
    """Half a unit in the last decimal place written in ``text``."""
    return 0.5 * 10.0 ** -len(text.split(".")[1])


@pytest.mark.parametrize("name", sorted(CHECK_VALUES))
def test_check_values_reference_and_kernel(name, response):
    """Reference and kernel reproduce the check values to the digits given (kernel: + 1e-12 relative)."""
    radii_km, sigma, n, period_h, re_s, im_s = CHECK_VALUES[name]
    radii = [r * KM for r in radii_km]
    period = period_h * HOURS
    table = complex(float(re_s), float(im_s))
    ref = complex(response_adaptive(radii, sigma, period, n)[0])
    got = complex(response(np.array(radii), np.array(sigma), period, n))
    for label, value, slack in (("reference", ref, 0.0), ("kernel", got, 1e-12 * abs(table))):
        assert abs(value.real - table.real) <= _half_unit(re_s) + slack, (name, label, value, table)
        assert abs(value.imag - table.imag) <= _half_unit(im_s) + slack, (name, label, value, table)


# Uniform sphere as a function of x = R/delta: (x, A n=1, phi n=1 (deg), A n=2, phi n=2 (deg)).
X_TABLE = [
    ("0.1", "0.00133333", "89.890865", "0.00057143", "89.949070"),
    ("1", "0.13075251", "79.239901", "0.05688240", "84.924870"),
    ("3", "0.59930671", "33.987844", "0.39285141", "53.113719"),
    ("10", "0.86065382", "9.024541", "0.77786407", "14.993675"),
    ("100", "0.98511193", "0.863734", "0.97530907", "1.439509"),
]


@pytest.mark.parametrize("row", X_TABLE, ids=[r[0] for r in X_TABLE])
def test_uniform_sphere_amplitude_phase_table(row, response):
    """A and phi of the R/delta table, from the closed form, the reference and the kernel."""
    sigma, period = 1.0, 1.0e4
    radius = float(row[0]) * skin_depth_m(sigma, period)
    for n, a_s, phi_s in ((1, row[1], row[2]), (2, row[3], row[4])):
        values = {
            "closed form": complex(uniform_sphere_mp(radius, sigma, period, n)),
            "reference": complex(response_adaptive([radius], [sigma], period, n)[0]),
            "kernel": complex(response(np.array([radius]), np.array([sigma]), period, n)),
        }
        for label, v in values.items():
            amp, phi = abs(v), math.degrees(math.atan2(v.imag, v.real))
            assert abs(amp - float(a_s)) <= _half_unit(a_s) * (1 + 1e-6), (row[0], n, label, amp, a_s)
            assert abs(phi - float(phi_s)) <= _half_unit(phi_s) * (1 + 1e-6), (row[0], n, label, phi, phi_s)


def test_reference_agrees_with_closed_form_and_itself():
    """Reference (transfer of coefficients) vs the uniform-sphere closed form, and a split sphere."""
    for n in (1, 4, 10):
        for radius, sigma, period in ((1e6, 1.0, 1e3), (3e3, 1e-6, 10.0), (5e7, 1e7, 1.0)):
            closed = uniform_sphere_mp(radius, sigma, period, n, dps=60)
            ref = response_mp([radius], [sigma], period, n, dps=60)
            split = response_mp([0.3 * radius, 0.7 * radius, radius], [sigma] * 3, period, n, dps=60)
            with mp.workdps(60):
                assert abs(ref - closed) <= mp.mpf("1e-40") * abs(closed), (n, radius, sigma, period)
                assert abs(split - closed) <= mp.mpf("1e-40") * abs(closed), (n, radius, sigma, period)
