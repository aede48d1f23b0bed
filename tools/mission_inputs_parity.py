"""Parity figures of the mission inputs (issue 14), on fictional kernels and files written here (no downloads).

Usage (from the project root; needs spiceypy and cdflib)::

    PYTHONPATH=$PWD python tools/mission_inputs_parity.py

Prints:

1. ``induct flyby`` from SPICE kernels versus the same track given as CSV: worst position difference (km)
   and worst relative field difference;
2. the SPICE flow-frame track versus the closed form (circular moon orbit, straight spacecraft path);
3. UTC -> TDB of induct.io.timescales versus ``spiceypy.str2et`` (same LSK) over 1972-2040, incl. leap seconds;
4. ``induct fit`` from a CDF file versus the same samples as CSV (one driving line);
5. ``induct fit`` with positions from SPICE at the sample times versus positions in the file.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import tempfile
from pathlib import Path

import numpy as np


def main() -> None:
    import cdflib
    import spiceypy

    from induct.cli.main import main as cli
    from induct.io.bundled import resolve_scenario_path
    from induct.io.cdf_magnetometer import write_prediction_cdf
    from induct.io.spice_track import DEMO, spice_track, write_demo_kernels
    from induct.io.timescales import lsk_text, utc_to_tdb

    def run(*argv):
        out = io.StringIO()
        with contextlib.redirect_stdout(out):
            code = cli([str(a) for a in argv])
        if code:
            raise SystemExit(f"induct {argv[0]} failed")
        return out.getvalue()

    epoch, start, stop = "2031-03-10T00:00:00", "2031-03-10T11:00:00", "2031-03-10T13:00:00"
    folder = Path(tempfile.mkdtemp(prefix="induct-parity-"))
    kernels = write_demo_kernels(folder)
    text = resolve_scenario_path("ilmare").read_text().replace("[drive]\n", f'[drive]\nepoch_utc = "{epoch}"\n', 1)
    scenario = folder / "moon.toml"
    scenario.write_text(text)

    # 1. SPICE route versus CSV route.
    run("flyby", scenario, "--spice", *kernels, "--spacecraft", "PROBE", "--moon", "ILMARE", "--planet", "TARVOS",
        "--start", start, "--stop", stop, "--step-s", "10", "--out", folder / "spice.cdf")
    track = spice_track(kernels, -9900, 9101, 9100, start, stop, 10.0, epoch_utc=epoch)
    track.to_csv(folder / "track.csv")
    run("flyby", scenario, "--trajectory", folder / "track.csv", "--out", folder / "csv.cdf")
    a, b = cdflib.CDF(str(folder / "spice.cdf")), cdflib.CDF(str(folder / "csv.cdf"))
    dpos = np.abs(a.varget("Position") - b.varget("Position")).max()
    drel = max(np.abs(a.varget(v) - b.varget(v)).max() / np.abs(b.varget(v)).max()
               for v in ("B_induced", "B_primary", "B_total"))
    print(f"1. flyby SPICE vs CSV track ({track.size} points): positions {dpos:.3g} km, fields {drel:.3g} relative")

    # 2. Closed form: straight line at v along x_flow at closest approach, axes turning at n = sqrt(GM/a^3).
    n = math.sqrt(DEMO["gm_km3_s2"] / DEMO["orbit_radius_km"] ** 3)
    from induct.io.timescales import seconds_from_epoch

    t_ca = seconds_from_epoch(DEMO["closest_approach_utc"], epoch)
    dt = track.times_s - t_ca
    # The demo kernel fixes the line in the flow axes of its moon sample nearest to closest approach (600 s grid
    # from moon_start_utc, TDB), a few 1e-5 s before it: the axes turn by n (t - t_near).
    t0 = seconds_from_epoch(DEMO["moon_start_utc"], epoch)
    th = n * (dt + t_ca - (t0 + 600.0 * round((t_ca - t0) / 600.0)))
    v, (_, y0, z0) = DEMO["speed_km_s"], DEMO["closest_approach_flow_km"]
    want = np.column_stack([v * dt * np.cos(th) + y0 * np.sin(th),
                            y0 * np.cos(th) - v * dt * np.sin(th), np.full(dt.size, z0)])
    print(f"2. SPICE flow-frame track vs closed form: worst {np.abs(track.positions_km - want).max():.3g} km")

    # 3. UTC -> TDB against spiceypy.str2et with the same LSK.
    lsk = folder / "leap.tls"
    lsk.write_text(lsk_text())
    rng = np.random.default_rng(14)
    days = rng.integers(0, 68 * 365, 2000)
    stamps = [str(np.datetime64("1972-01-01") + int(d)) + f"T{rng.integers(0, 24):02d}:{rng.integers(0, 60):02d}:"
              f"{rng.uniform(0, 60):09.6f}" for d in days]
    stamps += ["2016-12-31T23:59:60.500000", "2017-01-01T00:00:00.000000", "1999-01-01T00:00:00.000000"]
    spiceypy.furnsh(str(lsk))
    try:
        ref = np.array([spiceypy.str2et(s) for s in stamps])
    finally:
        spiceypy.unload(str(lsk))
    got = np.asarray(utc_to_tdb(stamps))
    print(f"3. UTC -> TDB vs spiceypy.str2et ({len(stamps)} times): worst {np.abs(got - ref).max():.3g} s")

    # 4. fit from CDF versus CSV (one driving line: a well-conditioned fit).
    head, *blocks = text.split("\n[[drive.lines]]\n")
    one = folder / "one.toml"
    one.write_text("\n[[drive.lines]]\n".join([head, blocks[0]]))
    run("flyby", one, "--trajectory", "ilmare_flyby", "--out", folder / "f.csv", "--noise-nT", "0.5",
        "--residuals", folder / "res.csv")
    rows = [ln for ln in (folder / "res.csv").read_text().splitlines() if ln and not ln.startswith("#")][1:]
    data = np.array([[float(v) for v in ln.split(",")] for ln in rows])
    write_prediction_cdf(folder / "res.cdf", data[:, 0], data[:, 1:4], {"B_res": data[:, 4:7]}, epoch_utc=epoch)
    fa = json.loads(run("fit", one, "--data", folder / "res.cdf", "--field-variable", "B_res", "--position-variable",
                        "Position", "--noise-nT", "0.5", "--json"))
    fb = json.loads(run("fit", one, "--data", folder / "res.csv", "--noise-nT", "0.5", "--json"))
    worst = max(abs(pa[k] - pb[k]) / abs(pb[k]) for pa, pb in zip(fa["response"], fb["response"])
                for k in ("real", "imag", "amplitude"))
    print(f"4. fit from CDF vs CSV ({data.shape[0]} samples): worst {worst:.3g} relative")

    # 5. fit with positions from SPICE (samples given by UTC, 1 us labels) vs the same positions in the file.
    run("flyby", one, "--trajectory", folder / "track.csv", "--out", folder / "g.csv", "--noise-nT", "0.5",
        "--residuals", folder / "res2.csv")
    rows = [ln for ln in (folder / "res2.csv").read_text().splitlines() if ln and not ln.startswith("#")][1:]
    field = np.array([[float(v) for v in ln.split(",")[4:7]] for ln in rows])
    full, bare = folder / "full.csv", folder / "bare.csv"
    full.write_text("t_s,x_km,y_km,z_km,bx_nT,by_nT,bz_nT\n" + "".join(
        ",".join(repr(float(v)) for v in (track.times_s[k], *track.positions_km[k], *field[k])) + "\n"
        for k in range(track.size)))
    bare.write_text("utc,bx_nT,by_nT,bz_nT\n" + "".join(
        f"{track.utc[k]}," + ",".join(repr(float(v)) for v in field[k]) + "\n" for k in range(track.size)))
    fa = json.loads(run("fit", one, "--data", bare, "--noise-nT", "0.5", "--json", "--spice", *kernels,
                        "--spacecraft", "PROBE", "--moon", "ILMARE", "--planet", "TARVOS"))
    fb = json.loads(run("fit", one, "--data", full, "--noise-nT", "0.5", "--json"))
    worst = max(abs(pa[k] - pb[k]) / abs(pb[k]) for pa, pb in zip(fa["response"], fb["response"])
                for k in ("real", "imag", "amplitude"))
    print(f"5. fit with SPICE positions vs file positions ({track.size} samples): worst {worst:.3g} relative")


if __name__ == "__main__":
    main()
