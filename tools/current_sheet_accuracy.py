"""Measure the accuracy of induct.field.current_sheet (prints tables; writes nothing).

1. The exact method against the same angle integrals evaluated by mpmath (40 digits,
   tanh-sinh quadrature on intervals graded toward phi = 0) at points 1e-9 to 3 (x D)
   from the sheet's corner, for D/a = 0.4 and 0.01.
2. The small-rho / large-rho series (the classic approximations for terms=2) against
   the exact method: worst relative error of the field vector over the mid-plane
   region |z| <= 5 D, D/a in {0.01, 0.1, 0.5, 1, 2}, for rho ranges measured from a.

Run:  PYTHONPATH=. python tools/current_sheet_accuracy.py [--mpmath-only]
"""

from __future__ import annotations

import sys

import numpy as np

from induct.field.current_sheet import current_sheet_field, sheet_field_large_rho, sheet_field_small_rho

D_OVER_A = (0.01, 0.1, 0.5, 1.0, 2.0)
TERMS = (1, 2, 3, 4, 6, 8, 12)
SMALL_TOPS = (0.05, 0.1, 0.2, 0.25, 0.4, 0.5, 0.8)
LARGE_BOTTOMS = (1.25, 1.5, 2.0, 2.5, 4.0, 5.0, 10.0, 20.0, 50.0)


def _worst(fn, rhos, terms):
    worst = 0.0
    for d in D_OVER_A:
        z = np.linspace(-5.0 * d, 5.0 * d, 201)
        rr, zz = np.meshgrid(rhos, z)
        exact = current_sheet_field(rr, zz, 1.0, np.inf, d, 1.0)
        approx = fn(rr, zz, 1.0, d, 1.0, terms=terms)
        err = np.hypot(approx[0] - exact[0], approx[1] - exact[1]) / np.hypot(*exact)
        worst = max(worst, float(err.max()))
    return worst


def series_tables():
    print("small-rho series: worst relative error for rho <= x a")
    print("terms " + " ".join(f"{x:>8g}" for x in SMALL_TOPS))
    for terms in TERMS:
        row = [_worst(sheet_field_small_rho, np.linspace(0.0, top, 60), terms) for top in SMALL_TOPS]
        print(f"{terms:5d} " + " ".join(f"{e:8.1e}" for e in row))
    print("large-rho series: worst relative error for rho >= x a (up to 100 x)")
    print("terms " + " ".join(f"{x:>8g}" for x in LARGE_BOTTOMS))
    for terms in TERMS:
        row = [_worst(sheet_field_large_rho, bot * np.geomspace(1.0, 100.0, 60), terms) for bot in LARGE_BOTTOMS]
        print(f"{terms:5d} " + " ".join(f"{e:8.1e}" for e in row))


def exact_vs_mpmath(n_points: int = 25, seed: int = 2):
    for d in (0.4, 0.01):
        _exact_vs_mpmath(d, n_points, seed)


def _exact_vs_mpmath(d, n_points, seed):
    import mpmath as mp

    mp.mp.dps = 40
    rng = np.random.default_rng(seed)
    a = 1.0
    dist = 10.0 ** rng.uniform(-9, 0.5, n_points) * max(d, 0.1)
    ang = rng.uniform(0.0, 2.0 * np.pi, n_points)
    rho = np.abs(a + dist * np.cos(ang))
    z = d + dist * np.sin(ang)
    b_rho, b_z = current_sheet_field(rho, z, a, np.inf, d, 1.0)
    worst = (0.0, None)
    for i in range(n_points):
        r, zz = mp.mpf(rho[i]), mp.mpf(z[i])
        am, dm = mp.mpf(a), mp.mpf(d)

        def big_r(p):
            return mp.sqrt((r - am) ** 2 + 4 * r * am * mp.sin(p / 2) ** 2)

        def f_z(p):
            rr = big_r(p)
            return mp.asinh((zz + dm) / rr) - mp.asinh((zz - dm) / rr)

        def f_rho(p):
            rr = big_r(p)
            rp, rm = mp.sqrt(rr**2 + (zz + dm) ** 2), mp.sqrt(rr**2 + (zz - dm) ** 2)
            return (r - am * mp.cos(p)) * (1 / (rm + abs(zz - dm)) - 1 / (rp + abs(zz + dm)))

        cuts = [0] + [mp.mpf(10) ** k for k in range(-12, 0)] + [mp.pi / 2, mp.pi]
        ref_z = mp.quad(f_z, cuts) / mp.pi
        ref_rho = mp.quad(f_rho, cuts) / mp.pi
        err = float(mp.sqrt((ref_rho - b_rho[i]) ** 2 + (ref_z - b_z[i]) ** 2) / mp.sqrt(ref_rho**2 + ref_z**2))
        if err > worst[0]:
            worst = (err, (rho[i], z[i], dist[i]))
    print(f"exact vs mpmath, D/a = {d}: worst relative error {worst[0]:.2e} "
          f"at rho, z, distance to corner = {worst[1]}")


if __name__ == "__main__":
    exact_vs_mpmath()
    if "--mpmath-only" not in sys.argv:
        series_tables()
