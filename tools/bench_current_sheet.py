"""Benchmark of the exact current-sheet field and of a driving spectrum that includes it.

Prints JSON: the timings of :func:`induct.bench.current_sheet.benchmark_current_sheet`
(random points around the sheet, points along a moon's orbit, and the planet-fixed model)
and the wall-clock time of the exact line spectrum of the bundled Tarvos planet file at
Ilmare with an added (fictional) current sheet, both on one process.

Run:  PYTHONPATH=. python tools/bench_current_sheet.py [--points N]
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import time
from importlib import resources

from induct.field.drive import planet_drive_spectrum
from induct.io.drive_files import read_planet_file
from induct.bench.current_sheet import benchmark_current_sheet
from induct.field.current_sheet import CurrentSheetField, axis_from_tilt
from induct.field.planet import SumField

# Fictional sheet for Tarvos (planet radii, nT); the axis is Tarvos' dipole axis (scenarios/tarvos.toml).
TARVOS_SHEET = dict(inner_radius=6.0, outer_radius=45.0, half_thickness=2.0, current_constant_nT=140.0)


def spectrum_with_sheet(samples: int = 64):
    path = resources.files("induct.scenarios") / "tarvos.toml"
    system = read_planet_file(path)
    planet = system.planet
    sheet = CurrentSheetField(planet.radius_m, axis=axis_from_tilt(9.0, 200.0), **TARVOS_SHEET)
    with_sheet = dataclasses.replace(system, planet=dataclasses.replace(planet, field=SumField((planet.field, sheet))))
    t0 = time.perf_counter()
    spec_plain = planet_drive_spectrum(system, samples=samples)
    t1 = time.perf_counter()
    spec_sheet = planet_drive_spectrum(with_sheet, samples=samples)
    t2 = time.perf_counter()
    return {"samples": samples, "points": samples * samples, "spectrum_internal_only_s": t1 - t0,
            "spectrum_with_sheet_s": t2 - t1}, spec_plain, spec_sheet


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=100_000)
    args = parser.parse_args(argv)
    out = {"field": benchmark_current_sheet(points=args.points)}
    out["spectrum"], _, _ = spectrum_with_sheet()
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
