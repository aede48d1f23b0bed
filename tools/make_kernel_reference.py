"""Generate tests/model/data/kernel_reference.json: high-precision reference responses of layered spheres.

A fixed-seed sweep over the whole domain of ``induct.model.kernel.layered_response`` plus deliberately
placed extreme corners, each evaluated with the independent mpmath reference of
``tests/model/reference_mpmath.py`` (unscaled Bessel functions, transfer of coefficients across every
layer, adaptive working precision until two precisions agree to 30 significant digits).

Domain of the random sweep: reference radius 1 km to 1e5 km (log-uniform); 1 to 100 layers (half
of the models with 1-5 layers, a fifth with 20-100); conductivities 0 or 1e-12 to 1e7 S/m
(log-uniform) mixed within a model, some models with a perfectly conducting (inf) innermost
layer; periods 1 s to 1e10 s (log-uniform); degrees 1 to 10.

Corners: metallic cores (1e7 S/m) at 1 s in a 1e5 km sphere, near-insulators (1e-12 S/m) at
1e10 s in a 1 km sphere, layers thousands of skin depths thick, very thin and zero-thickness
layers, tiny innermost radii, all-insulating models (R_n = 0), a perfect conductor filling the
sphere (R_n = 1), and a dense scan of |kappa r| from 0.05 to 50 for degrees 1 to 12.

Inputs are stored as exact binary64 values (shortest round-trip ``repr``); reference real and
imaginary parts as decimal strings with 25 significant digits. A subset (every 10th
model-period) is recomputed at a precision 40 digits higher and the largest relative
difference recorded. For every model-period the relative sensitivity of R_n to one-unit-roundoff
perturbations of all inputs (``input_sensitivity``, see ``reference_mpmath.input_sensitivity``)
is stored as well: it is the condition number that limits any double-precision method.

Run: ``python tools/make_kernel_reference.py [--jobs N]`` (about 4-5 min on 2 cores).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import time
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import mpmath as mp
import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests" / "model"))

from reference_mpmath import input_sensitivity, response_adaptive, response_mp  # noqa: E402

OUTPUT = ROOT / "tests" / "model" / "data" / "kernel_reference.json"
SEED = 20240611
N_RANDOM_MODELS = 900
DIGITS_AGREED = 30
STORED_DIGITS = 25
CONFIRM_EVERY = 10
CONFIRM_EXTRA_DPS = 40
MU0 = 4.0e-7 * math.pi
INF = float("inf")


# --------------------------------------------------------------------------- random sweep
def _random_radii(rng: np.random.Generator, big_r: float, n_layers: int) -> list[float]:
    if n_layers == 1:
        return [big_r]
    if rng.random() < 0.15:
        r0 = big_r * 10 ** rng.uniform(-9, -3)  # tiny innermost radius
    else:
        r0 = big_r * rng.uniform(0.02, 0.98)
    k = n_layers - 2
    style = rng.integers(3)
    if style == 0:
        inner = rng.uniform(r0, big_r, k)
    elif style == 1:
        inner = 10 ** rng.uniform(math.log10(r0), math.log10(big_r), k)
    else:  # layers concentrated towards the surface (crust, ice, ocean)
        inner = big_r - (big_r - r0) * 10 ** rng.uniform(-6, 0, k)
    radii = [r0] + sorted(float(x) for x in inner) + [big_r]
    if k > 0 and rng.random() < 0.2:  # one very thin layer
        j = int(rng.integers(1, n_layers - 1))
        radii[j] = min(radii[j - 1] + big_r * 10 ** rng.uniform(-12, -5), radii[j + 1])
    return radii


def _random_sigma(rng: np.random.Generator, n_layers: int) -> list[float]:
    p_zero = rng.uniform(0.0, 0.5)
    sigma = [0.0 if rng.random() < p_zero else float(10 ** rng.uniform(-12, 7)) for _ in range(n_layers)]
    if rng.random() < 0.08:
        sigma[0] = INF
    return sigma


def random_cases(rng: np.random.Generator) -> list[dict]:
    cases = []
    for i in range(N_RANDOM_MODELS):
        u = rng.random()
        if u < 0.5:
            n_layers = int(rng.integers(1, 6))
        elif u < 0.8:
            n_layers = int(rng.integers(6, 20))
        else:
            n_layers = int(rng.integers(20, 101))
        big_r = float(10 ** rng.uniform(3, 8))
        periods = [float(10 ** rng.uniform(0, 10)) for _ in range(int(rng.integers(1, 4)))]
        cases.append(
            dict(
                id=f"random-{i:04d}",
                degree=int(rng.integers(1, 11)),
                radii_m=_random_radii(rng, big_r, n_layers),
                conductivity_S_per_m=_random_sigma(rng, n_layers),
                period_s=periods,
            )
        )
    return cases


# --------------------------------------------------------------------------- corners
def _period_for_z(z_abs: float, sigma: float, r: float) -> float:
    """Period giving |kappa r| = z_abs: |kappa| = sqrt(w mu0 sigma)."""
    omega = z_abs**2 / (MU0 * sigma * r**2)
    return 2.0 * math.pi / omega


def corner_cases() -> list[dict]:
    c = []

    def add(name, degree, radii, sigma, periods):
        c.append(dict(id=f"corner-{name}", degree=degree, radii_m=[float(r) for r in radii],
                      conductivity_S_per_m=[float(s) for s in sigma], period_s=[float(p) for p in periods]))

    big, small = 1.0e8, 1.0e3  # 1e5 km and 1 km
    # Metallic cores at 1 s in the largest sphere: |kappa r| ~ 1e9, layers ~1e9 skin depths thick.
    for n in (1, 2, 5, 10, 12):
        add(f"metal-uniform-n{n}", n, [big], [1e7], [1.0, 10.0])
        add(f"metal-core-n{n}", n, [0.5 * big, 0.9 * big, big], [1e7, 1e-3, 0.0], [1.0, 1e3])
        add(f"metal-core-under-ocean-n{n}", n, [0.3 * big, 0.95 * big, 0.97 * big, big],
            [1e7, 1e-12, 3.0, 0.0], [1.0, 1e5, 1e10])
    # Near-insulators at 1e10 s in the smallest sphere: R_n ~ 1e-22 and smaller.
    for n in (1, 2, 5, 10, 12):
        add(f"insulator-uniform-n{n}", n, [small], [1e-12], [1e10, 1.0])
        add(f"insulator-layers-n{n}", n, [0.2 * small, 0.6 * small, small], [1e-12, 0.0, 1e-12], [1e10])
        add(f"insulator-tiny-core-n{n}", n, [1e-6 * small, small], [1e-12, 0.0], [1e10])
    # Thousands of skin depths: 1 S/m at 1 s (delta ~ 503 m) through 1000 km, structure below.
    for n in (1, 3, 8):
        add(f"thick-layer-n{n}", n, [1e5, 5e5, 1.5e6, 1.6e6], [1e3, 0.0, 1.0, 0.0], [1.0, 100.0, 1e4])
        add(f"thick-two-conductors-n{n}", n, [2e6, 4e6, 5e6, 6e6], [10.0, 0.0, 1.0, 0.0], [1.0, 1e3])
    # Very thin and zero-thickness layers.
    for n in (1, 4, 10):
        a = 1.0e6
        add(f"thin-metal-sheet-n{n}", n, [0.5 * a, a - 1.0, a, 1.2 * a], [0.0, 0.0, 1e7, 0.0], [1.0, 1e3, 1e6])
        add(f"thin-1e-12-n{n}", n, [0.5 * a, a, a * (1 + 1e-12), 1.1 * a], [1.0, 0.0, 1e5, 0.0], [1e2, 1e5])
        add(f"zero-thickness-n{n}", n, [0.5 * a, a, a, 1.1 * a], [0.3, 0.0, 1e6, 0.0], [1e2, 1e5])
        add(f"thin-at-surface-n{n}", n, [0.9 * a, a - 1e-3, a], [2.0, 0.0, 5.0], [10.0, 1e4])
    # Tiny innermost radii, conducting and perfectly conducting.
    for n in (1, 3, 10, 12):
        add(f"tiny-core-n{n}", n, [1e-3, 1e7], [1e7, 0.0], [1.0, 1e4, 1e10])
        add(f"tiny-core-mantle-n{n}", n, [1.0, 5e6, 1e7], [1e5, 1e-2, 0.0], [1.0, 1e6])
        add(f"tiny-inf-core-n{n}", n, [10.0, 1e6], [INF, 0.0], [1.0, 1e10])
        add(f"inf-core-shells-n{n}", n, [1e4, 3e5, 5e5, 5.2e5], [INF, 1e-4, 3.0, 0.0], [1.0, 1e3, 1e7])
    add("inf-core-denormal-n10", 10, [1e-8, 1e7], [INF, 0.0], [1e3])  # R_n = 1e-315 (below the 1e-300 floor)
    # Exact values: insulator (0) and perfect conductor filling the sphere (1).
    for n in (1, 7):
        add(f"all-insulating-n{n}", n, [3e5, 6e5, 1e6], [0.0, 0.0, 0.0], [1.0, 1e10])
        add(f"inf-filled-n{n}", n, [1e6], [INF], [1.0, 1e10])
        add(f"inf-then-zero-thickness-n{n}", n, [1e6, 1e6], [INF, 0.0], [3e3])
    # Conductor reaching the reference radius, many layers, mixed extremes in one model.
    add("conductor-at-surface-n2", 2, [3e5, 9e5, 1e6], [1e7, 1e-12, 10.0], [1.0, 1e3, 1e8])
    radii = list(np.linspace(1e4, 2e6, 100))
    # every 7th layer metallic, other multiples of 3 insulating, the rest spread over 1e-12..1e7 S/m
    sigma = [1e7 if j % 7 == 0 else (0.0 if j % 3 == 0 else 10 ** (-12 + 19 * ((j * 37) % 100) / 99))
             for j in range(100)]
    for n in (1, 10):
        add(f"hundred-layers-extremes-n{n}", n, radii, sigma, [1.0, 1e4, 1e10])
    # Dense scan of |kappa r| from 0.05 to 50: uniform sphere, and a shell (0.5-0.9 R) over an insulator.
    zs = np.geomspace(0.05, 50.0, 40)
    for n in range(1, 13):
        add(f"z-scan-uniform-n{n}", n, [1e6], [1.0], [_period_for_z(z, 1.0, 1e6) for z in zs])
        add(f"z-scan-shell-n{n}", n, [5e5, 9e5, 1e6], [0.0, 1.0, 0.0], [_period_for_z(z, 1.0, 5e5) for z in zs])
    return c


# --------------------------------------------------------------------------- evaluation
def _evaluate(task: tuple[int, dict, float, bool]) -> dict:
    index, case, period, confirm = task  # index: position in the task list (seeds the sign patterns)
    value, dps = response_adaptive(case["radii_m"], case["conductivity_S_per_m"], period, case["degree"],
                                   digits=DIGITS_AGREED)
    out = dict(index=index, period=period, dps=dps,
               re=mp.nstr(value.real, STORED_DIGITS, strip_zeros=False, min_fixed=1, max_fixed=0),
               im=mp.nstr(value.imag, STORED_DIGITS, strip_zeros=False, min_fixed=1, max_fixed=0),
               confirm=None,
               sensitivity=input_sensitivity(case["radii_m"], case["conductivity_S_per_m"], period,
                                             case["degree"], value, dps, seed=index))
    if confirm:
        hi = response_mp(case["radii_m"], case["conductivity_S_per_m"], period, case["degree"], dps + CONFIRM_EXTRA_DPS)
        with mp.workdps(dps + CONFIRM_EXTRA_DPS):
            diff = abs(hi - value)
            out["confirm"] = float(diff / abs(hi)) if hi != 0 else float(diff)
    return out


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--jobs", type=int, default=os.cpu_count() or 1, help="worker processes")
    parser.add_argument("--output", type=Path, default=OUTPUT)
    args = parser.parse_args(argv)

    t0 = time.time()
    rng = np.random.default_rng(SEED)
    cases = corner_cases() + random_cases(rng)
    tasks = []
    for i, case in enumerate(cases):
        for period in case["period_s"]:
            tasks.append((len(tasks), case, period, len(tasks) % CONFIRM_EVERY == 0))
    # Long tasks first so the pool stays busy to the end.
    order = sorted(range(len(tasks)), key=lambda k: -len(tasks[k][1]["radii_m"]))
    with ProcessPoolExecutor(max_workers=args.jobs) as pool:
        results = list(pool.map(_evaluate, [tasks[k] for k in order], chunksize=4))
    by_task = {order[k]: r for k, r in enumerate(results)}

    records = []
    confirms = []
    dps_all = []
    k = 0
    for case in cases:
        rec = dict(case)
        rec["radii_m"] = [repr(float(r)) for r in case["radii_m"]]
        rec["conductivity_S_per_m"] = [repr(float(s)) for s in case["conductivity_S_per_m"]]
        rec["period_s"] = [repr(float(p)) for p in case["period_s"]]
        rec["re"], rec["im"], rec["dps"], rec["input_sensitivity"] = [], [], [], []
        for _ in case["period_s"]:
            r = by_task[k]
            rec["re"].append(r["re"])
            rec["im"].append(r["im"])
            rec["dps"].append(r["dps"])
            rec["input_sensitivity"].append(float(f"{r['sensitivity']:.3e}"))
            dps_all.append(r["dps"])
            if r["confirm"] is not None:
                confirms.append(r["confirm"])
            k += 1
        records.append(rec)
    elapsed = time.time() - t0
    data = dict(
        description=("Reference R_n (exp(+i w t), R_n = 1 for a perfect conductor filling the reference sphere) "
                     "of layered spheres for induct.model.kernel.layered_response; radii_m are outer radii from the "
                     "centre outward, the last being the reference radius; omega = 2 pi / period_s."),
        generator="tools/make_kernel_reference.py",
        reference="tests/model/reference_mpmath.py (unscaled mpmath Bessel functions, transfer of coefficients)",
        seed=SEED,
        mpmath_version=mp.__version__,
        numpy_version=np.__version__,
        digits_agreed_between_two_precisions=DIGITS_AGREED,
        input_sensitivity=("max over 3 sign patterns of |R(x(1+s eps)) - R(x)| / (|R(x)| eps), eps = 2**-52, "
                           "all radii, conductivities and the period perturbed at once"),
        stored_significant_digits=STORED_DIGITS,
        dps_min=min(dps_all),
        dps_max=max(dps_all),
        confirmation=dict(every=CONFIRM_EVERY, extra_dps=CONFIRM_EXTRA_DPS, count=len(confirms),
                          max_relative_difference=max(confirms)),
        n_models=len(records),
        n_model_periods=len(dps_all),
        generation_time_s=round(elapsed, 1),
        generated_on=time.strftime("%Y-%m-%d"),
        cases=records,
    )
    args.output.parent.mkdir(parents=True, exist_ok=True)
    # Metadata indented, one model per line: compact, and diffs stay readable.
    cases_json = ",\n".join(json.dumps(rec, separators=(",", ":")) for rec in data.pop("cases"))
    head = json.dumps(data, indent=1)[:-2]
    args.output.write_text(f'{head},\n "cases": [\n{cases_json}\n ]\n}}\n')
    print(f"{len(records)} models, {len(dps_all)} model-periods, dps {min(dps_all)}-{max(dps_all)}, "
          f"confirmation max rel diff {max(confirms):.2e}, {elapsed:.0f} s -> {args.output}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
