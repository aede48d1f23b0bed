"""induct.transfer on large broadcast batches: bounded memory and batch-independent values (issue 12)."""

from __future__ import annotations

import subprocess
import sys
import textwrap

import numpy as np

from induct import transfer
from induct.model.kernel import layered_response


def test_peak_memory_above_the_result_stays_chunk_sized():
    # (2000, 1, 4) radii and conductivities broadcast against 500 periods: 1e6 model-periods, a 16 MB result.
    # Copying the broadcast inputs (the old behaviour) costs 2 x 32 MB of layers plus 8 MB of periods and
    # 8 MB of angular frequencies above the result; gathering each 8192-element chunk from broadcast views
    # needs a few chunk-sized arrays. Measured: 4.3 MB above the result; the copying code 75 MB. Bound (stated here): 20 MB.
    # Peak resident memory from getrusage ru_maxrss (KiB on Linux; common practice), in a fresh process.
    code = textwrap.dedent(
        """
        import resource, numpy as np
        from induct import transfer
        m, p = 2000, 500
        radii = np.sort(np.random.default_rng(0).uniform(0.2, 0.99, (m, 1, 3)), axis=-1) * 1.5e6
        radii = np.concatenate([radii, np.full((m, 1, 1), 1.5e6)], axis=-1)
        sigma = 10.0 ** np.random.default_rng(1).uniform(-4, 1, (m, 1, 4))
        period = np.geomspace(3600.0, 3.6e6, p)
        transfer(radii[:2], sigma[:2], period[:3])           # warm up (code paths, allocator)
        base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
        r = transfer(radii, sigma, period)
        peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
        print(r.shape, r.nbytes, peak - base)
        """
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    nbytes, above = int(out[-2]), int(out[-1])
    assert nbytes == 2000 * 500 * 16
    extra = above - nbytes
    assert extra <= 20e6, f"peak {above / 1e6:.1f} MB above the baseline for a {nbytes / 1e6:.1f} MB result (extra {extra / 1e6:.1f} MB)"


def test_response_does_not_depend_on_batch_or_chunk():
    # Identity (common practice): a model's R_n must not depend on the other models in its batch, on its
    # position in the batch, on the chunk size or on how its inputs broadcast. Tolerance: 2e-14 absolute
    # (|R| <= 1), the kernel's own rounding between numpy's vector and scalar loops
    # (tests/model/test_kernel_properties.py::test_response_independent_of_its_batch).
    rng = np.random.default_rng(12)
    m, p = 30, 5
    radii = np.sort(rng.uniform(1e5, 2e6, (m, 1, 4)), axis=-1)
    radii[:, 0, 2] = radii[:, 0, 3] * (1 - 10 ** rng.uniform(-7, -3, m))  # thin layers: the RK4 branch
    sigma = 10 ** rng.uniform(-8, 5, (m, 1, 4))
    sigma[::5, 0, :] = 0.0                                                # insulators in the batch
    period = 10 ** rng.uniform(1, 9, p)
    alone = np.array([[layered_response(radii[i, 0][None], sigma[i, 0][None], 2 * np.pi / period[j:j + 1], 1)[0]
                       for j in range(p)] for i in range(m)])
    worst = (0.0, None)
    for chunk in (1, 3, 64, 8192):
        r = transfer(radii, sigma, period, chunk_size=chunk)
        diff = np.abs(r - alone)
        k = np.unravel_index(np.argmax(diff), diff.shape)
        worst = max(worst, (float(diff[k]), (chunk, k, r[k], alone[k])), key=lambda w: w[0])
    # The same model in another batch (reversed order, a broadcast conductivity axis) gives the same values.
    rev = transfer(radii[::-1], np.broadcast_to(sigma[::-1], (m, p, 4)), period)[::-1]
    diff = np.abs(rev - alone)
    k = np.unravel_index(np.argmax(diff), diff.shape)
    worst = max(worst, (float(diff[k]), ("reversed", k, rev[k], alone[k])), key=lambda w: w[0])
    assert worst[0] <= 2e-14, worst


def test_zero_dimensional_and_empty_batches():
    # Shapes follow numpy broadcasting (common practice): a single model at one period gives a 0-d result,
    # an empty batch an empty result.
    r = transfer([1e6, 1.5e6], [1.0, 0.0], 3600.0)
    assert r.shape == () and abs(r) > 0
    assert transfer(np.ones((0, 1, 2)) * [1e6, 1.5e6], [1.0, 0.0], [3600.0, 7200.0]).shape == (0, 2)
