"""Write the bundled fictional flyby tracks of the fictional moon Ilmare.

Two straight-line passes (a fast hyperbolic flyby is close to a straight line
within an hour of closest approach; gravity of the moon is neglected), sampled
every second over +-30 min around closest approach, moon-centred positions in
the flow frame (x along the corotation flow, y toward the planet's spin axis,
z along it), times in seconds from the epoch of scenarios/tarvos.toml (the
epoch of Ilmare's [[drive.lines]]):

* scenarios/ilmare_flyby.csv: closest approach 100 km altitude over the
  southern hemisphere at t = 60 h, 6.0 km/s;
* scenarios/ilmare_flyby_polar.csv: closest approach 250 km altitude near the
  north pole at t = 196.3 h (about a quarter synodic period of the driving field
  later in phase, so the two passes see the induced moment at different phases),
  5.0 km/s.

Invented trajectories for demonstrations and tests, not a mission design.
Run from the project root::

    python tools/make_flyby_track.py
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
RADIUS_KM = 1540.0  # Ilmare, scenarios/ilmare.toml
HALF_WINDOW_S = 1800
STEP_S = 1.0

TRACKS = {
    "ilmare_flyby.csv": dict(t_ca_h=60.0, altitude_km=100.0, speed_km_s=6.0,
                             towards=[-0.35, -0.55, -0.76], heading=[0.8, -0.5, 0.1]),
    "ilmare_flyby_polar.csv": dict(t_ca_h=196.3, altitude_km=250.0, speed_km_s=5.0,
                                   towards=[0.15, 0.25, 0.956], heading=[0.0, -1.0, 0.2]),
}


def straight_pass(t_ca_s, altitude_km, speed_km_s, towards, heading):
    """Times (s), shape (N,), and positions (km), shape (N, 3), of a straight-line pass.

    ``towards``: direction of the closest-approach point from the centre; ``heading``:
    rough direction of motion (its part along ``towards`` is removed).
    """
    n = np.asarray(towards, float)
    n /= np.linalg.norm(n)
    v = np.asarray(heading, float)
    v = v - (v @ n) * n
    v /= np.linalg.norm(v)
    dt = np.arange(-HALF_WINDOW_S, HALF_WINDOW_S + STEP_S / 2, STEP_S)
    pos = (RADIUS_KM + altitude_km) * n[None, :] + speed_km_s * dt[:, None] * v[None, :]
    return t_ca_s + dt, pos


def main():
    for name, spec in TRACKS.items():
        t, pos = straight_pass(spec["t_ca_h"] * 3600.0, spec["altitude_km"], spec["speed_km_s"],
                               spec["towards"], spec["heading"])
        alt = np.linalg.norm(pos, axis=1) - RADIUS_KM
        path = ROOT / "scenarios" / name
        with path.open("w", encoding="utf-8", newline="") as handle:
            handle.write("# FICTIONAL flyby of the fictional moon Ilmare (written by tools/make_flyby_track.py)\n")
            handle.write(f"# straight pass, closest approach {spec['altitude_km']:g} km altitude at "
                         f"t = {spec['t_ca_h']:g} h, {spec['speed_km_s']:g} km/s, 1 s sampling, +-30 min\n")
            handle.write("# frame: flow (x along the corotation flow, y toward the planet's spin axis, z along it); "
                         "t_s from the epoch of scenarios/tarvos.toml\n")
            handle.write("t_s,x_km,y_km,z_km\n")
            np.savetxt(handle, np.column_stack([t, pos]), fmt=["%.1f", "%.4f", "%.4f", "%.4f"], delimiter=",")
        print(f"wrote {path} ({t.size} rows, minimum altitude {alt.min():.3f} km)")


if __name__ == "__main__":
    main()
