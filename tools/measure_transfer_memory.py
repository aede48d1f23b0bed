"""Peak memory of ``induct.transfer`` on a large broadcast batch (issue 12, item 2).

Runs in its own process and reads the peak resident set size (``resource.getrusage``
``ru_maxrss``, KiB on Linux) before and after the call; prints the peak above the
baseline (interpreter, imports and inputs) next to the result's own size.

    PYTHONPATH=$PWD python tools/measure_transfer_memory.py            # (50000, 1, 4) x (1000,)
    PYTHONPATH=$PWD python tools/measure_transfer_memory.py 5000 1000  # a smaller batch
"""

from __future__ import annotations

import resource
import sys
import time

import numpy as np


def main(argv=None) -> None:
    args = sys.argv[1:] if argv is None else argv
    models = int(args[0]) if args else 50000
    periods = int(args[1]) if len(args) > 1 else 1000
    from induct import transfer

    rng = np.random.default_rng(1)
    top = 1.5e6
    radii = np.sort(rng.uniform(0.3, 0.99, (models, 1, 3)), axis=-1) * top
    radii = np.concatenate([radii, np.full((models, 1, 1), top)], axis=-1)
    sigma = 10.0 ** rng.uniform(-4, 1, (models, 1, 4))
    period = np.geomspace(3600.0, 1000 * 3600.0, periods)
    base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
    t0 = time.perf_counter()
    r = transfer(radii, sigma, period)
    seconds = time.perf_counter() - t0
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
    print(f"batch {radii.shape} x {period.shape} -> {r.shape} ({r.size:,} model-periods) in {seconds:.1f} s")
    print(f"result {r.nbytes / 1e9:.3f} GB; peak RSS above baseline {(peak - base) / 1e9:.3f} GB; "
          f"above baseline + result {(peak - base - r.nbytes) / 1e9:.3f} GB")


if __name__ == "__main__":
    main()
