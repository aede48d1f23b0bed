"""Property tests (hypothesis, derandomized) for the layered-sphere kernel.

Bounds from /work/shared/domain/induction.md: 0 <= A <= (r_top/R)^(2n+1) with r_top the outer radius
of the outermost conducting layer, and 0 <= phi <= 90 deg with R_n = A exp(i phi) in the exp(+i w t)
convention (phi = arg R_n: the induced field leads the perfect-conductor response by phi and lags the
inducing field by 180 - phi; tests/model/test_phase_convention.py checks this in the time domain). The sign convention is pinned
by the limits: sigma -> inf gives phi -> 0 and A -> (r_top/R)^(2n+1) (test_kernel_limits.py,
test_perfect_conductor_core / test_large_conductivity_limit), w -> 0 gives phi -> +90 deg
(test_low_frequency_born_layered).

Tolerances: amplitude bound 1e-12 relative; phase bounds 1e-10 rad (the specified accuracy of the
kernel, 1e-10 relative, bounds its phase error). Layers are kept at least ~1e-3 of the radius thick:
ill-conditioned thin layers are covered by test_kernel_reference.py.
"""

from __future__ import annotations

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

PROPERTY_SETTINGS = settings(max_examples=150, derandomize=True, deadline=None)
PHASE_TOL = 1e-10  # rad
AMP_TOL = 1e-12  # relative

log_sigma = st.floats(-12.0, 7.0)
conductivity = st.one_of(st.just(0.0), log_sigma.map(lambda x: 10.0**x))


@st.composite
def models(draw, min_layers=1, max_layers=8):
    """(radii_m (L,), conductivity_S_per_m (L,), period_s, degree) over the kernel's domain."""
    n_layers = draw(st.integers(min_layers, max_layers))
    big_r = 10.0 ** draw(st.floats(3.0, 8.0))
    gaps = np.array(draw(st.lists(st.floats(1e-3, 1.0), min_size=n_layers, max_size=n_layers)))
    radii = big_r * np.cumsum(gaps) / gaps.sum()
    radii[-1] = big_r
    sigma = np.array(draw(st.lists(conductivity, min_size=n_layers, max_size=n_layers)))
    if draw(st.booleans()) and draw(st.booleans()):
        sigma[0] = np.inf
    period = 10.0 ** draw(st.floats(0.0, 10.0))
    degree = draw(st.integers(1, 10))
    return radii, sigma, period, degree


def _describe(radii, sigma, period, degree, value):
    return f"radii_m={radii.tolist()}, sigma={sigma.tolist()}, period_s={period!r}, n={degree}: R_n={value!r}"


@PROPERTY_SETTINGS
@given(models())
def test_amplitude_bounded_by_perfect_conductor(response, model):
    """0 <= A <= (r_top/R)^(2n+1) (+1e-12 relative); exactly 0 without any conductor."""
    radii, sigma, period, n = model
    value = complex(response(radii, sigma, period, n))
    conducting = np.nonzero(sigma > 0)[0]
    if conducting.size == 0:
        assert value == 0, _describe(radii, sigma, period, n, value)
        return
    bound = (radii[conducting[-1]] / radii[-1]) ** (2 * n + 1)
    assert abs(value) <= bound * (1 + AMP_TOL), (bound, _describe(radii, sigma, period, n, value))


@PROPERTY_SETTINGS
@given(models())
def test_phase_lag_between_0_and_90_degrees(response, model):
    """0 <= phi = arg R_n <= 90 deg (within 1e-10 rad)."""
    radii, sigma, period, n = model
    value = complex(response(radii, sigma, period, n))
    if value != 0:
        phi = math.atan2(value.imag, value.real)
        assert -PHASE_TOL <= phi <= math.pi / 2 + PHASE_TOL, (phi, _describe(radii, sigma, period, n, value))


@PROPERTY_SETTINGS
@given(
    inner=st.floats(0.0, 0.95),
    top=st.floats(0.05, 1.0),
    covered=st.booleans(),
    log_s=log_sigma,
    factor=st.floats(1.001, 1e4),
    log_r=st.floats(3.0, 8.0),
    log_t=st.floats(0.0, 10.0),
    n=st.integers(1, 10),
)
def test_amplitude_grows_with_shell_conductivity(response, inner, top, covered, log_s, factor, log_r, log_t, n):
    """One conducting shell over an insulating interior (with or without an insulating cover):
    A(sigma) <= A(factor * sigma) (1 + 1e-12) for factor > 1 (common practice: more conductance, more
    induction; the uniform-sphere table of induction.md increases monotonically in R/delta)."""
    big_r = 10.0**log_r
    r_a = inner * big_r
    r_b = max(top, inner + 0.02) * big_r if covered else big_r
    if r_b >= big_r:
        r_b, covered = big_r, False
    radii = np.array([r_a, r_b, big_r]) if covered else np.array([r_a, big_r])
    s = 10.0**log_s
    sigmas = np.array([[0.0, s, 0.0], [0.0, s * factor, 0.0]]) if covered else np.array([[0.0, s], [0.0, s * factor]])
    a_low, a_high = np.abs(response(np.broadcast_to(radii, sigmas.shape), sigmas, 10.0**log_t, n))
    assert a_low <= a_high * (1 + AMP_TOL), (radii.tolist(), s, factor, 10.0**log_t, n, a_low, a_high)


@settings(max_examples=25, derandomize=True, deadline=None)
@given(
    models_=st.integers(1, 5).flatmap(lambda k: st.lists(models(k, k), min_size=1, max_size=4)),
    periods=st.lists(st.floats(0.0, 10.0).map(lambda x: 10.0**x), min_size=1, max_size=5),
    n=st.integers(1, 10),
)
def test_shape_broadcasting(response, models_, periods, n):
    """radii (N,1,L), sigma (N,1,L), period (P,) -> (N,P), equal to one-model calls (1e-12 relative)."""
    radii = np.stack([m[0] for m in models_])[:, None, :]
    sigma = np.stack([m[1] for m in models_])[:, None, :]
    periods = np.array(periods)
    got = response(radii, sigma, periods, n)
    assert got.shape == (len(models_), len(periods)), got.shape
    for i, (r, s, _, _) in enumerate(models_):
        single = response(r, s, periods, n)
        assert single.shape == periods.shape, single.shape
        scale = np.maximum(np.abs(single), 1e-300)
        assert np.all(np.abs(got[i] - single) <= 1e-12 * scale), (r.tolist(), s.tolist(), periods, got[i], single)


def test_response_independent_of_its_batch():
    # A model's response must not depend on the other models computed with it (identity). The series term
    # count and the thin-layer step count are per element; what remains is the rounding of numpy's
    # vectorised loops (a lone element takes the scalar path), at the level of the kernel's own rounding:
    # absolute differences (|R| <= 1) below 2e-14 (measured 1.1e-14), relative below 1e-13 where |R| >= 1e-3. The previous
    # kernel chose both counts from the batch maximum: absolute differences up to 2e-13 on this set.
    from induct.model.kernel import layered_response

    rng = np.random.default_rng(20261202)
    m = 400
    radii = np.sort(rng.uniform(1e5, 2e6, (m, 4)), axis=1)
    radii[:, 2] = radii[:, 3] * (1 - 10 ** rng.uniform(-7, -3, m))  # thin layers: the RK4 branch
    sigma = 10 ** rng.uniform(-8, 5, (m, 4))
    omega = 2 * np.pi / 10 ** rng.uniform(1, 9, m)
    for degree in (1, 2, 5):
        batch = layered_response(radii, sigma, omega, degree)
        alone = np.array([layered_response(radii[i:i + 1], sigma[i:i + 1], omega[i:i + 1], degree)[0] for i in range(m)])
        diff = np.abs(alone - batch)
        i = int(np.argmax(diff))
        assert diff[i] <= 2e-14, (degree, i, radii[i], sigma[i], omega[i], alone[i], batch[i])
        big = np.abs(alone) >= 1e-3
        rel = np.where(big, diff / np.abs(alone), 0.0)
        j = int(np.argmax(rel))
        assert rel[j] <= 1e-13, (degree, j, alone[j], batch[j], rel[j])
