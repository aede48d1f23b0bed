"""Flyby prediction: the fields along a trajectory, the difference between interiors and its detectability.

:func:`predict_flyby` evaluates, along a trajectory, the induced field of a
scenario's interior driven by its ``[[drive.lines]]`` (degree 1, plus degree 2
from the gradient of the planet's field when a planet file is given), the
primary (driving) field, and optionally the difference from a second interior
under the same driving lines. It returns a :class:`FlybyPrediction` with the
closest approach, the peak induced field and, for a comparison, the peak and
rms difference and two signal-to-noise ratios:

``peak_snr``
    max_t |dB(t)| / sigma,
``track_snr``
    sqrt(sum over samples and components of dB**2) / sigma, the square root of
    the chi-square distance between the two interiors for white Gaussian noise
    of sigma per component (common practice).

:func:`synthetic_residuals` adds Gaussian noise to the induced field: input for
:func:`induct.flyby.magfit.fit_responses`. Files are written by
:mod:`induct.io.flyby_files`, the figure drawn by :func:`induct.plot.flyby.plot_flyby`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from induct import __version__
from induct.constants import MODEL_LIMITS

__all__ = ["FLYBY_LIMITS", "SNR_DEFINITIONS", "FlybyComparison", "FlybyPrediction", "predict_flyby",
           "synthetic_residuals", "degree2_consistency_notes"]

#: What a flyby prediction leaves out: the model's limits and what the primary field means.
FLYBY_LIMITS = (
    f"{MODEL_LIMITS} Primary field = time-varying part of the driving lines (steady field not included)."
)
SNR_DEFINITIONS = (
    "peak_snr = max |dB| / noise; track_snr = sqrt(sum over samples and components of dB^2) / noise "
    "(the square root of the chi-square distance between the two interiors)"
)


@dataclass
class FlybyComparison:
    """The difference between the induced fields of two interiors along a trajectory.

    Attributes
    ----------
    other : str
        Name of the second interior.
    difference_nT : ndarray, shape (N, 3)
        Induced field of the first minus that of the second (nT, flow frame).
    peak_difference_nT, peak_difference_t_s : float
        Largest |dB| (nT) and its time (s).
    rms_difference_nT : float
        Root mean square of |dB| over the samples (nT).
    noise_nT : float or None
        Noise (nT, 1 sigma per component).
    peak_snr, track_snr : float or None
        Signal-to-noise ratios (module docstring); None without a noise level.
    """

    other: str
    difference_nT: np.ndarray
    peak_difference_nT: float
    peak_difference_t_s: float
    rms_difference_nT: float
    noise_nT: float | None = None
    peak_snr: float | None = None
    track_snr: float | None = None

    def to_dict(self) -> dict:
        """JSON-ready summary (without the field samples)."""
        out = {"other": self.other, "peak_difference_nT": self.peak_difference_nT,
               "peak_difference_t_s": self.peak_difference_t_s, "rms_difference_nT": self.rms_difference_nT}
        if self.noise_nT:
            out["noise_nT"] = self.noise_nT
            out["peak_snr"] = self.peak_snr
            out["track_snr"] = self.track_snr
            out["snr_definitions"] = SNR_DEFINITIONS
        return out


@dataclass
class FlybyPrediction:
    """Fields of an interior along a trajectory.

    Attributes
    ----------
    scenario : str
        Name of the body's scenario.
    scenario_source : str
        Its file (or name, for a scenario given as a table).
    track : induct.io.tracks.Track
        The trajectory (positions in the flow frame, ``track.frame`` the frame of the file).
    radius_km : float
        Body radius (km).
    lines : list of DriveLine
        Driving lines.
    responses : ndarray of complex, shape (L,)
        R_1 of the interior at the lines' periods.
    induced_nT, primary_nT : ndarray, shape (N, 3)
        Induced and primary field (nT, flow frame).
    degree2 : list of GradientLine or None
        Gradient lines of the planet's field, when the degree-2 field is included.
    degree2_source : str or None
        The planet file of ``degree2``.
    notes : list of str
        Warnings about the inputs (e.g. degree-1 lines that do not match the planet file).
    comparison : FlybyComparison or None
        Difference from a second interior.
    """

    scenario: str
    scenario_source: str
    track: object
    radius_km: float
    lines: list
    responses: np.ndarray
    induced_nT: np.ndarray
    primary_nT: np.ndarray
    degree2: list | None = None
    degree2_source: str | None = None
    notes: list = field(default_factory=list)
    comparison: FlybyComparison | None = None

    @property
    def altitude_km(self) -> np.ndarray:
        """Altitude above the surface (km), shape (N,)."""
        return np.linalg.norm(self.track.positions_km, axis=1) - self.radius_km

    @property
    def closest_approach(self) -> tuple[float, float]:
        """Time (s) and altitude (km) of the closest approach."""
        alt = self.altitude_km
        i = int(np.argmin(alt))
        return float(self.track.times_s[i]), float(alt[i])

    @property
    def peak_induced(self) -> tuple[float, float]:
        """Largest |B_induced| (nT) and its time (s)."""
        mag = np.linalg.norm(self.induced_nT, axis=1)
        i = int(np.argmax(mag))
        return float(mag[i]), float(self.track.times_s[i])

    @property
    def degree2_description(self) -> str:
        """``"gradient of PLANET across the moon, K lines"`` or ``"not included"``."""
        if not self.degree2:
            return "not included"
        return f"gradient of {self.degree2_source} across the moon, {len(self.degree2)} lines"

    def to_dict(self, output: str | None = None) -> dict:
        """JSON-ready summary: closest approach, responses, peaks, comparison, limits and notes.

        Parameters
        ----------
        output : str, optional
            The file the fields were written to (recorded as ``"output"``).
        """
        track = self.track
        t_ca, alt_ca = self.closest_approach
        peak, t_peak = self.peak_induced
        out = {
            "induct_version": __version__,
            "scenario": self.scenario,
            "trajectory": track.source,
            "frame": track.frame,
            "points": track.size,
            "time_span_s": [float(track.times_s[0]), float(track.times_s[-1])],
            "closest_approach": {"t_s": t_ca, "altitude_km": alt_ca},
            "lines": [
                {"label": ln.label, "period_h": ln.period_h, "response_real": float(rr.real),
                 "response_imag": float(rr.imag), "amplitude": float(abs(rr)),
                 "phase_lag_deg": float(np.degrees(np.angle(rr)))}
                for ln, rr in zip(self.lines, self.responses)
            ],
            "degree2": self.degree2_description,
            "peak_induced_nT": peak,
            "peak_induced_t_s": t_peak,
            "output": output,
            "limits": FLYBY_LIMITS,
            "notes": list(self.notes),
        }
        if self.comparison is not None:
            out["compare"] = self.comparison.to_dict()
        return out


def degree2_consistency_notes(lines, system, moon=None, source: str | None = None) -> list[str]:
    """Notes when a scenario's driving lines do not come from the planet file used for degree 2.

    The degree-1 lines must come from the same planet, moon and epoch as the
    gradient lines, else degree 1 and degree 2 are inconsistent: each line's
    complex amplitude is compared with the planet file's line of the same
    period (relative tolerance 1e-9 in period, 1e-3 of the largest amplitude).
    When the planet file has a ``[current_sheet]``, lines of the internal field
    alone (``induct drive --no-current-sheet``) match too.

    Parameters
    ----------
    lines : sequence of DriveLine
    system : induct.field.drive.PlanetSystem
    moon : str, optional
    source : str, optional
        Name of the planet file in the note (default ``system.source``).

    Returns
    -------
    list of str
        Empty when the lines match.

    Examples
    --------
    >>> from importlib import resources
    >>> from induct import load_scenario
    >>> from induct.io.drive_files import read_planet_file
    >>> system = read_planet_file(resources.files("induct.scenarios") / "tarvos.toml")
    >>> degree2_consistency_notes(load_scenario("ilmare").drive_lines, system)
    []
    """
    from induct.field.drive import planet_drive_spectrum

    source = system.source if source is None else source
    scale = max(float(np.max(np.abs(ln.b_complex_nT))) for ln in lines)

    def first_mismatch(spec):
        for ln in lines:
            match = [s for s in spec.lines if abs(s.period_s / ln.period_s - 1.0) < 1e-9]
            if not match or float(np.max(np.abs(match[0].b_complex_nT - ln.b_complex_nT))) > 1e-3 * scale:
                return ln
        return None

    bad = first_mismatch(planet_drive_spectrum(system, moon))
    if bad is not None and getattr(system, "current_sheet", None) is not None:  # lines without the sheet
        if first_mismatch(planet_drive_spectrum(system.without_current_sheet(), moon)) is None:
            bad = None
    if bad is not None:
        return [
            f"the scenario's {bad.period_h:.6g} h line does not match {source} "
            "(different planet, moon or epoch?): degree 1 and degree 2 may be inconsistent"
        ]
    return []


def _check_outside(track, model, name):
    from induct.io.tracks import check_outside

    check_outside(track, model.radius_km, f"{name} (radius {model.radius_km:g} km)")
    if model.ionosphere is not None:
        check_outside(track, model.radius_km + model.ionosphere.altitude_km,
                      f"the ionosphere sheet of {name} (altitude {model.ionosphere.altitude_km:g} km)")


def _noise(noise_nT):
    if noise_nT is None:
        return None
    if isinstance(noise_nT, bool) or not (math.isfinite(noise_nT) and noise_nT > 0):
        raise ValueError(f"noise_nT must be > 0 nT, got {noise_nT!r}")
    return float(noise_nT)


def predict_flyby(scenario, track, *, compare=None, planet=None, moon=None, noise_nT=None) -> FlybyPrediction:
    """Induced and primary field along a trajectory, optionally compared with a second interior.

    Parameters
    ----------
    scenario : induct.io.scenario.Scenario
        The body, with ``[[drive.lines]]`` (uniform driving field at the moon, flow frame).
    track : induct.io.tracks.Track
        The trajectory (see :func:`induct.io.tracks.read_track`); every point
        outside the body and above its ionosphere sheet.
    compare : induct.io.scenario.Scenario, optional
        Second interior of the same body; its induced field under the same lines is subtracted.
    planet : induct.field.drive.PlanetSystem, optional
        Adds the degree-2 field from the gradient of this planet's internal field
        across the moon (:func:`induct.flyby.induced.planet_gradient_lines`), and a
        note when the scenario's lines do not come from it.
    moon : str, optional
        Moon of ``planet`` (when it has several).
    noise_nT : float, optional
        Magnetometer noise (nT, 1 sigma per component) for the SNRs of the comparison.

    Returns
    -------
    FlybyPrediction

    Raises
    ------
    ValueError
        No driving lines, a point inside a body or ionosphere sheet, noise <= 0.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.io.tracks import read_track
    >>> p = predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"),
    ...                   compare=load_scenario("ilmare_thick"), noise_nT=0.5)
    >>> round(p.closest_approach[1], 3)
    100.0
    >>> p.comparison.peak_snr > 3
    True
    """
    from induct.flyby.induced import induced_field, planet_gradient_lines, primary_field

    noise_nT = _noise(noise_nT)
    if moon is not None and planet is None:
        raise ValueError("moon needs planet (the planet file of the degree-2 field)")
    lines = scenario.drive_lines
    if not lines:
        raise ValueError(
            f"{scenario.path or scenario.name}: no [[drive.lines]]; write them with "
            "`induct drive PLANET.toml --write-scenario SCENARIO.toml`"
        )
    model = scenario.model
    _check_outside(track, model, scenario.name)
    notes, degree2, degree2_source = [], None, None
    if planet is not None:
        gradient_system = planet
        if getattr(planet, "current_sheet", None) is not None:
            # Inside the current sheet curl B = mu0 J: the sheet's gradient is not the potential field of degree 2.
            gradient_system = planet.without_current_sheet()
            notes.append("degree 2 uses the planet's internal field only (the current sheet's field is not a "
                         "potential field inside the sheet)")
        degree2 = planet_gradient_lines(gradient_system, moon)
        degree2_source = str(planet.source)
        notes += degree2_consistency_notes(lines, planet, moon)
    pos, t = track.positions_km, track.times_s
    induced = induced_field(model, lines, pos, t, degree2=degree2)
    primary = primary_field(lines, pos, t, degree2=degree2)
    comparison = None
    if compare is not None:
        _check_outside(track, compare.model, compare.name)
        diff = induced - induced_field(compare.model, lines, pos, t, degree2=degree2)
        dmag = np.linalg.norm(diff, axis=1)
        k = int(np.argmax(dmag))
        comparison = FlybyComparison(
            other=compare.name, difference_nT=diff, peak_difference_nT=float(dmag[k]),
            peak_difference_t_s=float(t[k]), rms_difference_nT=float(np.sqrt(np.mean(dmag**2))), noise_nT=noise_nT,
        )
        if noise_nT:
            comparison.peak_snr = float(dmag[k] / noise_nT)
            comparison.track_snr = float(np.sqrt(np.sum(diff**2)) / noise_nT)
    responses = model.response(periods_s=[ln.period_s for ln in lines]).response
    return FlybyPrediction(
        scenario=scenario.name,
        scenario_source=str(scenario.path or scenario.name),
        track=track,
        radius_km=model.radius_km,
        lines=list(lines),
        responses=responses,
        induced_nT=induced,
        primary_nT=primary,
        degree2=degree2,
        degree2_source=degree2_source,
        notes=notes,
        comparison=comparison,
    )


def synthetic_residuals(prediction: FlybyPrediction, noise_nT: float, seed: int = 0) -> np.ndarray:
    """Synthetic magnetometer residuals: the induced field plus white Gaussian noise, in the track's frame.

    The induced field is turned into the frame of the trajectory file
    (``prediction.track.frame``) and noise of ``noise_nT`` (1 sigma, each
    component and sample independent) from ``numpy.random.default_rng(seed)``
    is added.

    Parameters
    ----------
    prediction : FlybyPrediction
    noise_nT : float
        Noise (nT), > 0.
    seed : int
        Random seed.

    Returns
    -------
    ndarray, shape (N, 3)
        Residuals (nT), frame of the track.

    Examples
    --------
    >>> from induct import load_scenario
    >>> from induct.io.tracks import read_track
    >>> p = predict_flyby(load_scenario("ilmare"), read_track("ilmare_flyby"))
    >>> r = synthetic_residuals(p, 0.5, seed=1)
    >>> r.shape, bool(abs(np.std(r - p.induced_nT) - 0.5) < 0.02)
    ((3601, 3), True)
    """
    from induct.io.tracks import from_flow_frame

    noise_nT = _noise(noise_nT)
    if noise_nT is None:
        raise ValueError("noise_nT (> 0 nT) is needed for synthetic residuals")
    rng = np.random.default_rng(seed)
    induced = prediction.induced_nT
    return from_flow_frame(induced, prediction.track.frame) + rng.normal(0.0, noise_nT, induced.shape)
