"""Line spectra of a driving field: least-squares harmonic fits and exact two-period spectra.

Convention (used for every complex amplitude in induct)
-------------------------------------------------------
A vector time series is written

    B(t) = B_mean + Re sum_k B_k exp(i w_k t),   w_k = 2 pi / T_k,

so each component of line k is ``|B_k| cos(w_k t + arg B_k)``: amplitude_nT =
``|B_k|`` and phase_deg = ``arg(B_k)`` per component, t in seconds from the
epoch of the series. The variance fraction of a line is
``sum_c |B_kc|**2 / 2`` divided by the total variance ``sum_c var(B_c)``.

Two methods
-----------
* :func:`fit_harmonics`: linear least squares of a mean plus cos/sin terms at
  given periods, for any sampling (e.g. a user's time series). Exact when the
  series contains only those lines; otherwise lines not in the model leak in
  at a level set by the window length.
* :func:`two_period_spectrum`: for a signal ``F(t) = f(t, t)`` where ``f`` has
  the orbital period in its first argument and the rotation period in its
  second (the primary field of a planet's internal field at a Kepler moon), a
  2-D FFT over one period of each argument gives the exact complex amplitude
  of every line ``q/T_orb + p/T_rot`` (up to aliasing from |q|, |p| beyond half
  the sample counts, which is checked). No window or leakage is involved.

Line labels
-----------
Lines are indexed by frequency ``j/T_syn + k/T_orb`` (T_syn the synodic
period, T_orb the orbital period) and labelled "synodic" (1, 0),
"synodic/2" (2, 0), "orbital" (0, 1), "orbital/2" (0, 2) and
"beat syn+orb" (1, 1), "beat syn-orb" (1, -1), "beat 2syn-orb" (2, -1), ...
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

__all__ = [
    "SpectralLine",
    "Spectrum",
    "fit_harmonics",
    "two_period_spectrum",
    "line_label",
    "label_period",
]


@dataclass(frozen=True, eq=False)
class SpectralLine:
    """One spectral line of a vector series.

    Attributes
    ----------
    period_s : float
        Period (s).
    b_complex_nT : ndarray, shape (3,), complex
        Complex vector amplitude B_k (nT), see the module convention.
    variance_fraction : float
        Share of the series' total variance carried by this line.
    label : str
        Name of the line ("synodic", "orbital", "beat syn-orb", or the period).
    synodic_multiple, orbital_multiple : int or None
        (j, k) with frequency ``j/T_syn + k/T_orb``, when known.
    """

    period_s: float
    b_complex_nT: np.ndarray
    variance_fraction: float
    label: str
    synodic_multiple: int | None = None
    orbital_multiple: int | None = None

    def __post_init__(self):
        b = np.array(self.b_complex_nT, dtype=complex).reshape(3)
        b.setflags(write=False)
        object.__setattr__(self, "b_complex_nT", b)

    @property
    def period_h(self) -> float:
        """Period (h)."""
        return self.period_s / 3600.0

    @property
    def amplitude_nT(self) -> np.ndarray:
        """Per-component amplitude |B_k| (nT), shape (3,)."""
        return np.abs(self.b_complex_nT)

    @property
    def phase_deg(self) -> np.ndarray:
        """Per-component phase arg(B_k) (deg, in (-180, 180]), shape (3,)."""
        return np.degrees(np.angle(self.b_complex_nT))


@dataclass(frozen=True, eq=False)
class Spectrum:
    """Result of a spectral analysis.

    Attributes
    ----------
    lines : tuple of SpectralLine
        Lines, in decreasing order of vector amplitude.
    mean_nT : ndarray, shape (3,)
        Steady part of the series (nT).
    total_variance_nT2 : float
        Total variance ``sum_c var(B_c)`` (nT^2).
    fraction_explained : float
        Share of the total variance explained by the lines together.
    method : str
        "least squares" or "two-period FFT".
    reference_periods_s : dict
        Periods used for labelling ("rotation", "orbital", "synodic"), when known (s).
    """

    lines: tuple
    mean_nT: np.ndarray
    total_variance_nT2: float
    fraction_explained: float
    method: str
    reference_periods_s: dict = field(default_factory=dict)

    def series_nT(self, t_s) -> np.ndarray:
        """Model series ``mean + Re sum_k B_k exp(i w_k t)`` at times t_s (s), shape (N, 3), nT."""
        t = np.atleast_1d(np.asarray(t_s, dtype=float))
        out = np.tile(np.asarray(self.mean_nT, dtype=float), (t.size, 1))
        for line in self.lines:
            phase = np.exp(2j * math.pi * t / line.period_s)
            out += np.real(phase[:, None] * line.b_complex_nT[None, :])
        return out


def line_label(j: int, k: int) -> str:
    """Label of the line at frequency ``j/T_syn + k/T_orb``.

    Parameters
    ----------
    j, k : int
        Synodic and orbital multiples, not both zero.

    Returns
    -------
    str
        e.g. "synodic", "synodic/3", "orbital", "beat syn-orb", "beat 2orb-syn".
    """
    if j == 0 and k == 0:
        raise ValueError("j and k must not both be zero")
    if j < 0 and k <= 0 or (j == 0 and k < 0):
        j, k = -j, -k
    if k == 0:
        return "synodic" if j == 1 else f"synodic/{j}"
    if j == 0:
        return "orbital" if k == 1 else f"orbital/{k}"
    terms = [(j, "syn"), (k, "orb")]
    terms.sort(key=lambda c: c[0] < 0)  # positive term first
    text = ""
    for i, (c, name) in enumerate(terms):
        mag = "" if abs(c) == 1 else str(abs(c))
        sign = "-" if c < 0 else ("+" if i else "")
        text += f"{sign}{mag}{name}"
    return f"beat {text}"


def label_period(
    period_s: float,
    synodic_period_s: float,
    orbital_period_s: float,
    max_harmonic: int = 3,
    max_orbital: int = 2,
    rtol: float = 1e-3,
) -> str | None:
    """Name a period by matching it to ``1 / (j/T_syn + k/T_orb)``.

    Parameters
    ----------
    period_s, synodic_period_s, orbital_period_s : float
        Period to name and the reference periods (s), > 0.
    max_harmonic, max_orbital : int
        Largest |j| and |k| tried.
    rtol : float
        Relative tolerance of the match.

    Returns
    -------
    str or None
        The label of the best match within ``rtol`` (smallest |j| + |k| first), else None.
    """
    for name, value in (("period_s", period_s), ("synodic_period_s", synodic_period_s),
                        ("orbital_period_s", orbital_period_s)):
        if not (math.isfinite(value) and value > 0.0):
            raise ValueError(f"{name} must be finite and > 0, got {value!r}")
    candidates = []
    for j in range(-max_harmonic, max_harmonic + 1):
        for k in range(-max_orbital, max_orbital + 1):
            freq = j / synodic_period_s + k / orbital_period_s
            if freq > 0.0 and abs(freq * period_s - 1.0) <= rtol:
                candidates.append((abs(j) + abs(k), abs(freq * period_s - 1.0), j, k))
    if not candidates:
        return None
    _, _, j, k = min(candidates)
    return line_label(j, k)


def _check_series(t_s, b_nT):
    t = np.asarray(t_s, dtype=float)
    b = np.asarray(b_nT, dtype=float)
    if t.ndim != 1 or t.size < 2:
        raise ValueError("t_s must be a 1-D array with at least 2 samples")
    if b.shape != (t.size, 3):
        raise ValueError(f"b_nT must have shape (N, 3) = ({t.size}, 3), got {b.shape}")
    if not (np.all(np.isfinite(t)) and np.all(np.isfinite(b))):
        raise ValueError("t_s and b_nT must be finite")
    if np.any(np.diff(t) <= 0.0):
        raise ValueError("t_s must be strictly increasing")
    return t, b


def fit_harmonics(t_s, b_nT, periods_s, labels=None, *, max_condition: float = 1e8) -> Spectrum:
    """Least-squares fit of a mean plus sinusoids at given periods to a vector series.

    Parameters
    ----------
    t_s : array_like, shape (N,)
        Sample times (s from the epoch), strictly increasing; any spacing.
    b_nT : array_like, shape (N, 3)
        Field samples (nT).
    periods_s : array_like, shape (K,)
        Distinct periods to fit (s), > 0.
    labels : sequence of str, optional
        One label per period; default "<period> h".
    max_condition : float
        Largest accepted condition number of the design matrix; above it the
        periods are not separable with this window and a ValueError is raised.

    Returns
    -------
    Spectrum
        Lines in decreasing order of amplitude; ``fraction_explained`` is
        ``1 - (residual variance) / (total variance)``.
    """
    t, b = _check_series(t_s, b_nT)
    periods = np.atleast_1d(np.asarray(periods_s, dtype=float))
    if periods.ndim != 1 or periods.size == 0:
        raise ValueError("periods_s must be a non-empty 1-D array")
    if not (np.all(np.isfinite(periods)) and np.all(periods > 0.0)):
        raise ValueError("periods_s must be finite and > 0")
    if np.unique(periods).size != periods.size:
        raise ValueError("periods_s must be distinct")
    if labels is None:
        labels = [f"{p / 3600.0:.6g} h" for p in periods]
    labels = list(labels)
    if len(labels) != periods.size:
        raise ValueError("labels must have one entry per period")
    n_unknown = 1 + 2 * periods.size
    if t.size < n_unknown + 1:
        raise ValueError(f"t_s: need more than {n_unknown} samples to fit {periods.size} periods, got {t.size}")
    omega = 2.0 * math.pi / periods
    arg = np.outer(t, omega)
    design = np.empty((t.size, n_unknown))
    design[:, 0] = 1.0
    design[:, 1::2] = np.cos(arg)
    design[:, 2::2] = np.sin(arg)
    coef, _, rank, sv = np.linalg.lstsq(design, b, rcond=None)
    condition = sv[0] / sv[-1] if sv[-1] > 0 else math.inf
    if rank < n_unknown or condition > max_condition:
        raise ValueError(
            f"periods_s: the lines are not separable with this series (condition number {condition:.3g}); "
            "lengthen the series, sample it more densely or drop close periods"
        )
    mean = coef[0]
    b_complex = coef[1::2] - 1j * coef[2::2]  # a cos(wt) + b sin(wt) = Re{(a - i b) e^{iwt}}; (K, 3)
    total = float(np.sum(np.var(b, axis=0)))
    if total <= 0.0:
        raise ValueError("b_nT is constant: there is no variance to explain")
    residual = b - design @ coef
    explained = 1.0 - float(np.sum(np.mean(residual**2, axis=0))) / total
    lines = [
        SpectralLine(float(p), bc, float(np.sum(np.abs(bc) ** 2) / 2.0 / total), str(lab))
        for p, bc, lab in zip(periods, b_complex, labels)
    ]
    lines.sort(key=lambda line: -float(np.linalg.norm(line.b_complex_nT)))
    return Spectrum(tuple(lines), mean, total, explained, "least squares")


def _check_int(name, value, minimum):
    if isinstance(value, bool) or int(value) != value or value < minimum:
        raise ValueError(f"{name} must be an integer >= {minimum}, got {value!r}")
    return int(value)


def two_period_spectrum(
    func,
    orbital_period_s: float,
    rotation_period_s: float,
    *,
    retrograde: bool = False,
    samples: int = 64,
    max_harmonic: int = 3,
    max_orbital: int = 2,
    min_amplitude_nT: float = 0.0,
    alias_tolerance: float = 1e-10,
) -> Spectrum:
    """Exact line spectrum of ``F(t) = func(t, t)`` for a two-period function.

    Parameters
    ----------
    func : callable
        ``func(t_orbit_s, t_rotation_s) -> ndarray (M, 3)`` (nT) for arrays of shape
        (M,); periodic with ``orbital_period_s`` in its first and
        ``rotation_period_s`` in its second argument.
    orbital_period_s, rotation_period_s : float
        The two periods (s), > 0, not equal for a prograde orbit.
    retrograde : bool
        Sense of the orbit (sets the synodic period, see :func:`induct.field.orbit.synodic_period_s`).
    samples : int
        Samples per period in each argument; >= 8 and >= 2 (max_harmonic + max_orbital) + 2
        (the orbital FFT index of line (j, k) is k - j or k + j).
    max_harmonic, max_orbital : int
        Lines with |j| <= max_harmonic and |k| <= max_orbital are reported.
    min_amplitude_nT : float
        Lines whose largest component amplitude is below this (nT) are dropped.
    alias_tolerance : float
        Warn when the variance in the outer half of the sampled index range exceeds
        this fraction of the total (the sampling is then too coarse).

    Returns
    -------
    Spectrum
        Method "two-period FFT"; every line carries (j, k). ``fraction_explained`` is
        the sum of the reported lines' variance fractions. Components below 1e-13 of the
        largest line amplitude (FFT round-off) are reported as exactly 0.
    """
    from induct.field.orbit import synodic_period_s  # local import: spectrum has no other orbit dependency

    t_syn = synodic_period_s(rotation_period_s, orbital_period_s, retrograde)
    samples = _check_int("samples", samples, 8)
    max_harmonic = _check_int("max_harmonic", max_harmonic, 0)
    max_orbital = _check_int("max_orbital", max_orbital, 0)
    if samples < 2 * (max_orbital + max_harmonic) + 2:
        raise ValueError(f"samples must be >= 2 (max_harmonic + max_orbital) + 2, got {samples}")
    if not (math.isfinite(min_amplitude_nT) and min_amplitude_nT >= 0.0):
        raise ValueError(f"min_amplitude_nT must be finite and >= 0, got {min_amplitude_nT!r}")
    t_o = orbital_period_s * np.arange(samples) / samples
    t_r = rotation_period_s * np.arange(samples) / samples
    grid_o, grid_r = np.meshgrid(t_o, t_r, indexing="ij")
    values = np.asarray(func(grid_o.reshape(-1), grid_r.reshape(-1)), dtype=float)
    if values.shape != (samples * samples, 3) or not np.all(np.isfinite(values)):
        raise ValueError("func must return finite values of shape (M, 3)")
    coef = np.fft.fft2(values.reshape(samples, samples, 3), axes=(0, 1)) / samples**2
    index = np.rint(np.fft.fftfreq(samples) * samples).astype(int)
    q, p = np.meshgrid(index, index, indexing="ij")  # q: orbital index, p: rotation index
    power = np.sum(np.abs(coef) ** 2, axis=-1)
    outer = (np.abs(q) >= samples // 4) | (np.abs(p) >= samples // 4)
    # Re-index q/T_orb + p/T_rot as j/T_syn + k/T_orb: 1/T_rot = sigma/T_syn + s/T_orb.
    s = -1 if retrograde else 1
    sigma = 1 if (1.0 / rotation_period_s - s / orbital_period_s) > 0 else -1
    j_all, k_all = sigma * p, q + s * p
    freq = j_all / t_syn + k_all / orbital_period_s
    mean = np.real(coef[0, 0]).copy()
    zero = np.abs(freq) <= 1e-9 / orbital_period_s
    zero[0, 0] = False
    mean = mean + np.real(np.sum(coef[zero], axis=0))  # only for commensurate periods
    positive = freq > 1e-9 / orbital_period_s
    order = np.argsort(freq[positive], kind="stable")
    f_pos = freq[positive][order]
    jk_pos = np.stack([j_all[positive], k_all[positive]], axis=-1)[order]
    c_pos = 2.0 * coef[positive][order]
    # Group equal frequencies (several (j, k) share a frequency only for commensurate periods).
    starts = np.concatenate([[0], np.nonzero(np.diff(f_pos) > 1e-9 * f_pos[1:])[0] + 1, [f_pos.size]])
    group_b = [c_pos[a:b].sum(axis=0) for a, b in zip(starts[:-1], starts[1:])]
    total = float(sum(np.sum(np.abs(bc) ** 2) for bc in group_b) / 2.0)
    if total <= 0.0:
        raise ValueError("func is constant: the series has no lines")
    if float(np.sum(power[outer])) > alias_tolerance * float(np.sum(power) - power[0, 0]):
        warnings.warn(
            f"two_period_spectrum: a fraction {np.sum(power[outer]) / (np.sum(power) - power[0, 0]):.2e} of the "
            f"variance lies in the outer half of the sampled index range; increase samples (now {samples})",
            stacklevel=2,
        )
    # Components at the FFT round-off level (below 1e-13 of the largest line) are set to exactly 0:
    # their phases would be meaningless.
    floor = 1e-13 * max(float(np.max(np.abs(bc))) for bc in group_b)
    group_b = [np.where(np.abs(bc) < floor, 0.0, bc) for bc in group_b]
    lines = []
    for a, b, bc in zip(starts[:-1], starts[1:], group_b):
        # Several (j, k) share one frequency only when the periods are commensurate; name those in range.
        members = sorted(((int(jk[0]), int(jk[1])) for jk in jk_pos[a:b] if abs(jk[0]) <= max_harmonic
                          and abs(jk[1]) <= max_orbital), key=lambda m: (abs(m[0]) + abs(m[1]), -m[0]))
        if not members:
            continue
        j, k = members[0]
        if float(np.max(np.abs(bc))) < min_amplitude_nT or not np.any(bc):
            continue
        label = " = ".join(line_label(*m) for m in members)
        f = float(np.mean(f_pos[a:b]))
        lines.append(SpectralLine(1.0 / f, bc, float(np.sum(np.abs(bc) ** 2) / 2.0 / total), label, j, k))
    lines.sort(key=lambda line: -float(np.linalg.norm(line.b_complex_nT)))
    explained = float(sum(line.variance_fraction for line in lines))
    refs = {"rotation": float(rotation_period_s), "orbital": float(orbital_period_s), "synodic": float(t_syn)}
    return Spectrum(tuple(lines), mean, total, explained, "two-period FFT", refs)
