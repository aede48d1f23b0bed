"""Check the kernel's special-function branches against mpmath on both sides of the series threshold.

For each degree n, evaluates ``itilde_n`` (as the ratio itilde(z1)/itilde(z2), which is
all the kernel uses), ``alpha_n`` and ``beta_n`` at complex z = |z| exp(i pi/4) (the
argument of kappa r for a real conductivity) over |z| in [1e-6, 1e4], with both the
series and the closed-form branch where each is defined, and prints the worst
relative error of the branch the kernel uses.

Run: ``python tools/kernel_regimes.py``  (about 20 s)
"""

import mpmath as mp
import numpy as np

from induct.model import kernel

mp.mp.dps = 50


def ref_i(n, z):
    return mp.sqrt(mp.pi / (2 * z)) * mp.besseli(n + mp.mpf(1) / 2, z)


def ref_k(n, z):
    return mp.sqrt(mp.pi / (2 * z)) * mp.besselk(n + mp.mpf(1) / 2, z)


def main():
    mags = np.geomspace(1e-6, 1e4, 120)
    for n in range(1, kernel.MAX_DEGREE + 1):
        worst = 0.0
        where = None
        for mag in mags:
            z = complex(mag * np.exp(1j * np.pi / 4))
            zm = mp.mpc(z.real, z.imag)
            itil, alpha, khat, beta = kernel.layer_terms(np.array([z]), n)
            a_ref = zm * ref_i(n + 1, zm) / ref_i(n, zm)
            b_ref = -zm * ref_k(n - 1, zm) / ref_k(n, zm)
            it_ref = 2 * zm * mp.exp(-zm) * ref_i(n, zm)
            # itilde is only used in ratios: compare the ratio to the value at 1.3 z.
            z2 = 1.3 * z
            itil2, *_ = kernel.layer_terms(np.array([z2]), n)
            z2m = mp.mpc(z2.real, z2.imag)
            it2_ref = 2 * z2m * mp.exp(-z2m) * ref_i(n, z2m)
            errs = [
                abs((alpha[0] - complex(a_ref)) / complex(a_ref)),
                abs((beta[0] - complex(b_ref)) / complex(b_ref)),
                abs((itil[0] / itil2[0]) / complex(it_ref / it2_ref) - 1),
            ]
            e = max(errs)
            if e > worst:
                worst, where = e, mag
        print(f"n={n:2d}  threshold |z|={kernel.SERIES_RADIUS[n]:5.1f}  worst rel err {worst:.2e} at |z|={where:.3g}")


if __name__ == "__main__":
    main()
