"""Peak resident memory of one induct command, measured in a child process.

Usage (from the repository root)::

    python tools/measure_peak_memory.py invert ilmare --data ilmare_measured --grid 100000

Runs ``python -m induct.cli.main ARGS...`` and prints its exit code, its peak resident set size
(``resource.getrusage(RUSAGE_CHILDREN).ru_maxrss``, MB) and its wall-clock time.
"""

import resource
import subprocess
import sys
import time


def main(argv):
    t0 = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "induct.cli.main", *argv], capture_output=True, text=True)
    peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    print(f"exit {proc.returncode}, peak {peak_mb:.0f} MB, {time.perf_counter() - t0:.1f} s: induct {' '.join(argv)}")
    if proc.returncode:
        print("   ", (proc.stderr.strip().splitlines() or [""])[-1][:300])
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
