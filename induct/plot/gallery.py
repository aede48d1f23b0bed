"""Regenerate the gallery of figure kinds for the bundled fictional scenario Ilmare.

:func:`make_gallery` writes, as PNG and vector PDF:

``map_amplitude``
    amplitude at the synodic period over ice-shell thickness x ocean
    conductivity, with the region consistent with the bundled synthetic
    measurements (``ilmare_measured``) at 1 and 2 sigma.
``map_difference``
    induced-field difference (nT, 100 km over the pole, 200 nT drive) from a
    thick-shell, fresher-ocean alternative, with the 3 x 0.5 nT detectability contour.
``diagram``
    amplitude-phase diagram at the three driving periods with the measurements
    and their error ellipses.
``separation``
    induced-field differences of three candidate interiors versus period and altitude.

All numbers are invented for a fictional moon; every figure carries the
model-limits caption. ``fast=True`` uses coarse grids (for tests and quick
previews); the figures look the same apart from smoothness.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["make_gallery", "candidate_interiors", "GALLERY_DRIVE_NT", "GALLERY_ALTITUDE_KM", "GALLERY_NOISE_NT"]

#: Driving-field amplitude (nT) used by the gallery's nT figures (invented, typical of a large icy moon).
GALLERY_DRIVE_NT = 200.0
#: Altitude over the pole (km) of the gallery's nT figures.
GALLERY_ALTITUDE_KM = 100.0
#: Magnetometer noise level (nT) for the detectability contours (order 0.1-1 nT, common practice).
GALLERY_NOISE_NT = 0.5


def candidate_interiors(model):
    """Three candidate interiors of one body: the model itself and two alternatives.

    Returns
    -------
    list of (label, InteriorModel)
        ``"baseline"`` (the model), ``"thick shell"`` (ice shell 40 km, ocean
        conductivity 1 S/m) and ``"fresh ocean"`` (ocean 200 km at 0.3 S/m, the
        mantle thinner by the difference). Layers named "ice shell", "ocean" and
        "mantle" are expected (as in the bundled scenario Ilmare).
    """
    ocean = model.layer("ocean")
    mantle = model.layer("mantle")
    thick = model.with_layer("ice shell", thickness_km=40.0).with_layer("ocean", conductivity_S_per_m=1.0)
    extra = 200.0 - ocean.thickness_km
    fresh = model.with_layer("ocean", thickness_km=200.0, conductivity_S_per_m=0.3).with_layer(
        "mantle", thickness_km=mantle.thickness_km - extra
    )
    return [("baseline", model), ("thick shell", thick), ("fresh ocean", fresh)]


def make_gallery(out_dir, fast: bool = False) -> list[Path]:
    """Write the map, diagram and separation figures for the bundled scenario Ilmare.

    Parameters
    ----------
    out_dir : str or Path
        Folder for the figures (created if missing).
    fast : bool
        Coarse grids (a few seconds in all) instead of publication grids.

    Returns
    -------
    list of Path
        The files written (PNG and PDF of each figure).
    """
    from induct.planning.diagrams import amplitude_phase_diagram, plot_diagram
    from induct.io.map_files import plot_map
    from induct.planning.maps import feasibility_map
    from induct.io.measurements import load_measurements
    from induct.io.scenario import load_scenario
    from induct.planning.separation import plot_separation, separation

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    scenario = load_scenario("ilmare")
    model = scenario.model
    data = load_measurements("ilmare_measured")
    nx, ny = (60, 50) if fast else (300, 260)
    x = f"ice shell.thickness_km=1:80:{nx}"
    y = f"ocean.conductivity_S_per_m=0.05:30:{ny}:log"
    period = float(scenario.periods_h[0])
    written = []

    amp = feasibility_map(model, x, y, period, "amplitude", measurements=data)
    written += plot_map(amp, out / "map_amplitude")

    candidates = candidate_interiors(model)
    ref_label, reference = candidates[1]
    diff = feasibility_map(
        model,
        x,
        y,
        period,
        "difference_nT",
        altitude_km=GALLERY_ALTITUDE_KM,
        drive_nT=GALLERY_DRIVE_NT,
        reference=reference,
        reference_label=f"'{ref_label}' (ice 40 km, ocean 1 S/m)",
        noise_nT=GALLERY_NOISE_NT,
        k=3.0,
    )
    written += plot_map(diff, out / "map_difference")

    diagram = amplitude_phase_diagram(model, None, None, scenario.periods_h, samples=40 if fast else 200)
    written += plot_diagram(diagram, out / "diagram", measurements=data)

    sep = separation(
        [m for _, m in candidates],
        [label for label, _ in candidates],
        drive_nT=GALLERY_DRIVE_NT,
        periods_h=np.logspace(np.log10(0.5), 3.0, 60 if fast else 300),
        altitude_km=GALLERY_ALTITUDE_KM,
        marked_periods_h=scenario.periods_h,
        altitudes_km=np.linspace(0.0, 1500.0, 31 if fast else 151),
        noise_nT=GALLERY_NOISE_NT,
    )
    written += plot_separation(sep, out / "separation")
    return written
