"""Where candidate interiors separate: induced-field differences versus period and altitude.

For two or more candidate interiors of the same body, this module computes
the induced field along the driving field (above the sub-drive point, where
the direction of a uniform driving field of amplitude ``drive_nT`` leaves the
body; on the equator for an equatorial drive) and, for every pair of candidates, the magnitude of the
difference of their complex induced fields,

    dB(T, h) = |R_1,a(T) - R_1,b(T)| (R / (R + h))**3 |B_e|   (nT),

versus period T (on a logarithmic grid) at one altitude, and versus altitude h
at chosen periods (usually the driving periods). A planner reads off the
periods and altitudes at which the candidates differ by more than the
instrument noise. The largest altitude at which a pair stays above a
threshold t follows in closed form: ``h_max = R [(dB(T, 0) / t)**(1/3) - 1]``.

The model is spherically symmetric quasi-static induction: plasma interaction,
asymmetric shells and motional induction are not included.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np

from induct.constants import SECONDS_PER_HOUR
from induct.planning.maps import dipole_factor

__all__ = ["SeparationResult", "SeparationSummary", "separation", "separation_summary", "max_detectable_altitude_km"]


@dataclass
class SeparationResult:
    """Induced fields of candidate interiors and their pairwise differences.

    Attributes
    ----------
    labels : list of str
        Candidate names, K of them.
    pairs : list of (int, int)
        Index pairs (a, b), a < b, into ``labels``.
    periods_h : ndarray, shape (P,)
        Period grid (h).
    altitude_km : float
        Altitude (km) of the period curves.
    induced_nT : ndarray, shape (K, P)
        Induced field along the driving field (nT) of each candidate at ``altitude_km``.
    difference_nT : ndarray, shape (N, P)
        Difference field of each pair (nT) at ``altitude_km``.
    marked_periods_h : ndarray, shape (Q,)
        Periods (h) of the altitude curves.
    altitudes_km : ndarray, shape (H,)
        Altitude grid (km).
    difference_vs_altitude_nT : ndarray, shape (N, Q, H)
        Difference field of each pair at each marked period and altitude (nT).
    surface_difference_nT : ndarray, shape (N, Q)
        Difference field at the surface (nT), for :func:`max_detectable_altitude_km`.
    drive_nT : float
        Driving-field amplitude (nT).
    radius_km : float
        Body radius (km).
    body : str
        Body name.
    noise_nT, k : float or None
        Noise level (nT) and its multiple that counts as detectable.

    Drawn by :func:`induct.plot.separation.plot_separation`; written by
    :func:`induct.io.tables.write_separation_csv`.
    """

    labels: list
    pairs: list
    periods_h: np.ndarray
    altitude_km: float
    induced_nT: np.ndarray
    difference_nT: np.ndarray
    marked_periods_h: np.ndarray
    altitudes_km: np.ndarray
    difference_vs_altitude_nT: np.ndarray
    surface_difference_nT: np.ndarray
    drive_nT: float
    radius_km: float
    body: str
    noise_nT: float | None = None
    k: float | None = None

    @property
    def threshold_nT(self) -> float | None:
        """k x noise (nT), or None without a noise level."""
        return None if self.noise_nT is None else self.k * self.noise_nT

    def pair_label(self, i: int) -> str:
        """``"a vs b"`` for pair ``i``."""
        a, b = self.pairs[i]
        return f"{self.labels[a]} vs {self.labels[b]}"


def _positive(value, what):
    if value is None or isinstance(value, bool) or not math.isfinite(value) or value <= 0:
        raise ValueError(f"{what} must be a finite number > 0, got {value!r}")
    return float(value)


def _grid(values, what, lower_inclusive):
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    ok = np.isfinite(arr) & ((arr >= 0) if lower_inclusive else (arr > 0))
    if arr.ndim != 1 or arr.size == 0 or not ok.all():
        bound = ">= 0" if lower_inclusive else "> 0"
        raise ValueError(f"{what} must be a non-empty list of finite values {bound}, got {values!r}")
    return arr


def separation(
    models,
    labels=None,
    *,
    drive_nT: float,
    periods_h=None,
    altitude_km: float = 0.0,
    marked_periods_h=None,
    altitudes_km=None,
    noise_nT: float | None = None,
    k: float = 3.0,
) -> SeparationResult:
    """Induced fields of candidate interiors and their pairwise differences.

    Parameters
    ----------
    models : sequence of InteriorModel
        Two or more candidates of the same radius.
    labels : sequence of str, optional
        Their names (default: "candidate 1", ...); must be unique.
    drive_nT : float
        Driving-field amplitude |B_e| (nT), > 0, the same at every period.
    periods_h : array_like, shape (P,), optional
        Period grid (h); default 200 values from 0.5 h to 1000 h, logarithmic.
    altitude_km : float
        Altitude (km) above the sub-drive point of the period curves, >= 0.
    marked_periods_h : array_like, shape (Q,), optional
        Periods (h) of the altitude curves (sorted); default the ends and middle of ``periods_h``.
    altitudes_km : array_like, shape (H,), optional
        Altitude grid (km), >= 0; default 0 to one body radius, 101 values.
    noise_nT : float, optional
        Instrument noise (nT); with ``k`` it sets the detectability threshold.
    k : float
        Multiple of the noise that counts as detectable (default 3).

    Returns
    -------
    SeparationResult
    """
    models = list(models)
    if len(models) < 2:
        raise ValueError(f"separation needs at least two candidate interiors, got {len(models)}")
    labels = [f"candidate {i + 1}" for i in range(len(models))] if labels is None else [str(x) for x in labels]
    if len(labels) != len(models) or len(set(labels)) != len(labels):
        raise ValueError(f"labels must be {len(models)} unique names, got {labels!r}")
    radius = models[0].radius_km
    for label, m in zip(labels, models):
        if abs(m.radius_km - radius) > 1e-9 * radius:
            raise ValueError(
                f"candidate {label!r} has radius {m.radius_km:g} km, not {radius:g} km: candidates must describe the same body"
            )
    drive_nT = _positive(drive_nT, "drive_nT (driving-field amplitude, nT)")
    periods = np.logspace(math.log10(0.5), 3.0, 200) if periods_h is None else _grid(periods_h, "periods_h", False)
    altitude_km = float(altitude_km)
    if not (math.isfinite(altitude_km) and altitude_km >= 0):
        raise ValueError(f"altitude_km must be >= 0 km and finite, got {altitude_km!r}")
    if marked_periods_h is None:
        marked = periods[[0, periods.size // 2, -1]]
    else:
        marked = np.sort(_grid(marked_periods_h, "marked_periods_h", False))
    alts = np.linspace(0.0, radius, 101) if altitudes_km is None else _grid(altitudes_km, "altitudes_km", True)
    if noise_nT is not None:
        noise_nT, k = _positive(noise_nT, "noise_nT"), _positive(k, "k (multiple of the noise)")
    else:
        k = None
    all_periods_s = np.concatenate([periods, marked]) * SECONDS_PER_HOUR
    resp = np.stack([m.response(periods_s=all_periods_s, degree=1).response for m in models])  # (K, P + Q)
    pairs = list(itertools.combinations(range(len(models)), 2))
    diff = np.stack([np.abs(resp[a] - resp[b]) for a, b in pairs]) * drive_nT  # at the surface, (N, P + Q)
    scale = dipole_factor(radius, altitude_km)
    surface_marked = diff[:, periods.size :]
    return SeparationResult(
        labels=labels,
        pairs=pairs,
        periods_h=periods,
        altitude_km=altitude_km,
        induced_nT=np.abs(resp[:, : periods.size]) * drive_nT * scale,
        difference_nT=diff[:, : periods.size] * scale,
        marked_periods_h=marked,
        altitudes_km=alts,
        difference_vs_altitude_nT=surface_marked[:, :, None] * dipole_factor(radius, alts)[None, None, :],
        surface_difference_nT=surface_marked,
        drive_nT=drive_nT,
        radius_km=radius,
        body=models[0].name,
        noise_nT=noise_nT,
        k=k,
    )


def max_detectable_altitude_km(surface_difference_nT, threshold_nT: float, radius_km: float) -> np.ndarray:
    """Largest altitude (km) at which a difference field stays at or above ``threshold_nT``.

    ``h_max = R [(dB_0 / t)**(1/3) - 1]`` from the (R/r)**3 decay; NaN where
    the difference is below the threshold even at the surface.
    """
    d = np.asarray(surface_difference_nT, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        h = radius_km * (np.cbrt(d / threshold_nT) - 1.0)
    return np.where(d >= threshold_nT, h, np.nan)


@dataclass
class SeparationSummary:
    """One row per pair and marked period: where the candidates differ most and how high it stays detectable.

    Attributes
    ----------
    pair : list of str
        ``"a vs b"`` of each row, R rows = pairs x marked periods (pair-major order).
    period_h : ndarray, shape (R,)
        Marked period (h).
    difference_nT : ndarray, shape (R,)
        Difference field at ``altitude_km`` and the marked period (nT).
    best_period_h : ndarray, shape (R,)
        Period of the grid (h) with the pair's largest difference at ``altitude_km``.
    best_difference_nT : ndarray, shape (R,)
        That largest difference (nT).
    max_altitude_km : ndarray, shape (R,)
        Largest altitude (km) at which the difference stays at or above ``threshold_nT``
        (:func:`max_detectable_altitude_km`); NaN below it everywhere or without a noise level.
    altitude_km : float
        Altitude (km) of the difference columns.
    threshold_nT : float or None
        k x noise (nT), or None without a noise level.
    """

    pair: list
    period_h: np.ndarray
    difference_nT: np.ndarray
    best_period_h: np.ndarray
    best_difference_nT: np.ndarray
    max_altitude_km: np.ndarray
    altitude_km: float
    threshold_nT: float | None


def separation_summary(result: SeparationResult) -> SeparationSummary:
    """Summary of a separation: one row per pair and marked period.

    For each pair and marked period: the difference at the chosen altitude
    (nT), the period of largest difference on the grid (h) and its value (nT),
    and with a noise level the largest altitude (km) at which the pair stays
    above k x noise.

    Parameters
    ----------
    result : SeparationResult

    Returns
    -------
    SeparationSummary

    Examples
    --------
    >>> from induct import load_scenario
    >>> model = load_scenario("ilmare").model
    >>> thick = model.with_layer("ice shell", thickness_km=40.0)
    >>> res = separation([model, thick], ["a", "b"], drive_nT=200.0, marked_periods_h=[12.12, 84.7], noise_nT=0.5)
    >>> s = separation_summary(res)
    >>> s.pair
    ['a vs b', 'a vs b']
    >>> bool(s.max_altitude_km[0] > 0)
    True
    """
    rows = {"pair": [], "period": [], "diff": [], "best_p": [], "best_d": [], "hmax": []}
    scale = dipole_factor(result.radius_km, result.altitude_km)
    for i in range(len(result.pairs)):
        best = int(np.argmax(result.difference_nT[i]))
        hmax = (
            max_detectable_altitude_km(result.surface_difference_nT[i], result.threshold_nT, result.radius_km)
            if result.threshold_nT is not None
            else np.full(result.marked_periods_h.size, np.nan)
        )
        for q, period in enumerate(result.marked_periods_h):
            rows["pair"].append(result.pair_label(i))
            rows["period"].append(period)
            rows["diff"].append(result.surface_difference_nT[i, q] * scale)
            rows["best_p"].append(result.periods_h[best])
            rows["best_d"].append(result.difference_nT[i, best])
            rows["hmax"].append(hmax[q])
    return SeparationSummary(
        pair=rows["pair"],
        period_h=np.array(rows["period"], dtype=float),
        difference_nT=np.array(rows["diff"], dtype=float),
        best_period_h=np.array(rows["best_p"], dtype=float),
        best_difference_nT=np.array(rows["best_d"], dtype=float),
        max_altitude_km=np.array(rows["hmax"], dtype=float),
        altitude_km=result.altitude_km,
        threshold_nT=result.threshold_nT,
    )
