"""Fitting the induction response at each driving period to flyby magnetometer data.

Model
-----
With the primary (driving) field removed, the residual along the flybys is

    b(t_i) = sum_k Re{R_k G_k(r_i, t_i)} + noise,
    G_k = -(1/2) (R/|r|)**3 [3 (B_k . rhat) rhat - B_k] exp(i w_k t)

(:func:`induct.flyby.induced.dipole_geometry`), linear in the 2K unknowns
``(Re R_k, Im R_k)`` because ``Re{R G} = Re R Re G - Im R Im G``. With
independent Gaussian noise of standard deviation ``noise_nT`` on each
component, ordinary least squares is the maximum-likelihood estimate and its
covariance is ``noise_nT**2 (A^T A)^-1`` (A the 3N x 2K design matrix).

Numerics
--------
The design matrix is never stored whole: rows are reduced chunk by chunk with
a QR factorisation of ``[A | b]`` (tall-skinny QR), which gives the triangular
factor, the projected data and the residual sum of squares. The columns are
scaled to unit norm before the singular values are taken, so the condition
number measures how well the flybys separate the periods rather than the
different strengths of the lines.

When the flybys cannot separate the periods
-------------------------------------------
A short flyby sees the induced dipole moment at nearly one instant, i.e. about
three numbers, while each period adds two unknowns; several flybys at different
phases of the driving field are needed. The fit reports

* the condition number of the column-scaled design matrix; above
  ``max_condition`` the periods with weight > 1 % in the right singular vectors
  of the singular values below ``s_max / max_condition`` are "not separable";
* per period, the largest 1-sigma half-axis of its (Re, Im) error ellipse; above
  ``max_sigma`` (in units of R, which lies in [0, 1]) the period is
  "not determined";
* pairs of periods whose estimates correlate by more than ``max_correlation``
  (default 0.9): the largest absolute correlation coefficient between any
  component (Re or Im) of one period's response and any component of the
  other's. Both periods of such a pair are "not separable" and therefore not
  "determined": a period is determined only when it is separable (condition
  number and correlation) and its error ellipse is small enough (``max_sigma``).
  The element-wise correlation is used because it is what a reader of the
  covariance matrix sees; it is at most the first canonical correlation of the
  two (Re, Im) pairs.

Fixing lines to a forward model
-------------------------------
With ``free`` only the chosen lines are fitted; the others are fixed to given
responses (``fixed_responses``, for example the forward model of a scenario's
interior): their induced field is subtracted from the residuals before the
fit. This removes their unknowns from the fit (fewer, better-separated
periods), at the price of trusting the forward model for the fixed lines: an
error there ends up in the free lines' responses, which the reported
covariance does not include.

Only what the model contains is fitted: the degree-1 induced field of a
spherically symmetric body driven by the given lines. Plasma-interaction fields,
the degree-2 (gradient-driven) induced field and errors of the primary field
end up in the residual and bias the result; check ``chi2`` against its
degrees of freedom.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from induct.constants import SECONDS_PER_HOUR
from induct.flyby.induced import CHUNK, check_positions_times, dipole_geometry

__all__ = [
    "DEFAULT_MAX_CONDITION",
    "DEFAULT_MAX_SIGMA",
    "DEFAULT_MAX_CORRELATION",
    "design_matrix",
    "PeriodFit",
    "ResponseFit",
    "fit_responses",
    "polar_covariance",
    "select_lines",
]

#: Largest accepted condition number of the column-scaled design matrix.
DEFAULT_MAX_CONDITION = 1e4
#: Largest accepted 1-sigma half-axis of a period's (Re R, Im R) error ellipse.
DEFAULT_MAX_SIGMA = 0.1
#: Periods whose responses correlate above this (largest |correlation| between their Re/Im components) are
#: "not separable", hence not determined.
DEFAULT_MAX_CORRELATION = 0.9


def design_matrix(positions_km, times_s, radius_km, amplitudes_nT, periods_s) -> np.ndarray:
    """Unchecked kernel: the real design matrix of the response fit.

    Parameters
    ----------
    positions_km : ndarray, shape (N, 3)
        Moon-centred positions (km), flow frame.
    times_s : ndarray, shape (N,)
        Times (s).
    radius_km : float
        Reference radius R (km).
    amplitudes_nT : ndarray, shape (K, 3), complex
        Driving-line amplitudes B_k (nT).
    periods_s : ndarray, shape (K,)
        Periods (s).

    Returns
    -------
    ndarray, shape (3N, 2K)
        Row ``3 i + c`` is component c of point i; column ``2 k`` multiplies Re R_k
        and column ``2 k + 1`` multiplies Im R_k (nT per unit response).
    """
    g = dipole_geometry(positions_km, times_s, radius_km, amplitudes_nT, periods_s)  # (N, K, 3)
    n, k, _ = g.shape
    a = np.empty((n, 3, k, 2))
    a[..., 0] = np.transpose(g.real, (0, 2, 1))
    a[..., 1] = -np.transpose(g.imag, (0, 2, 1))
    return a.reshape(3 * n, 2 * k)


def polar_covariance(response: complex, covariance) -> tuple[float, float, float]:
    """Linearised 1-sigma errors of A = |R| and phase lag = arg R from the (Re, Im) covariance.

    Parameters
    ----------
    response : complex
        R (nonzero).
    covariance : array_like, shape (2, 2)
        Covariance of (Re R, Im R).

    Returns
    -------
    amplitude_sigma : float
    phase_lag_sigma_deg : float
        Degrees.
    correlation : float
        Correlation coefficient of A and the phase lag.
    """
    a = abs(response)
    if a == 0.0:
        return math.inf, math.inf, 0.0
    re, im = response.real, response.imag
    jac = np.array([[re / a, im / a], [-im / a**2, re / a**2]])
    c = jac @ np.asarray(covariance, dtype=float) @ jac.T
    s_a, s_p = math.sqrt(max(c[0, 0], 0.0)), math.sqrt(max(c[1, 1], 0.0))
    rho = c[0, 1] / (s_a * s_p) if s_a > 0 and s_p > 0 else 0.0
    return s_a, math.degrees(s_p), float(rho)


@dataclass(frozen=True, eq=False)
class PeriodFit:
    """Fitted response at one driving period.

    Attributes
    ----------
    period_s : float
        Period (s).
    label : str
        Name of the driving line.
    response : complex
        Fitted R_1 (exp(+i w t) convention).
    covariance : ndarray, shape (2, 2)
        Covariance of (Re R_1, Im R_1).
    determined : bool
        False if the period is not separable (near-null space of the design, or a
        correlation above ``max_correlation`` with another fitted period) or its
        error ellipse's largest 1-sigma half-axis exceeds ``max_sigma``.
    reason : str
        Why it is not determined ("" if it is).
    """

    period_s: float
    label: str
    response: complex
    covariance: np.ndarray
    determined: bool
    reason: str = ""

    @property
    def period_h(self) -> float:
        """Period (h)."""
        return self.period_s / SECONDS_PER_HOUR

    @property
    def sigma_max(self) -> float:
        """Largest 1-sigma half-axis of the (Re, Im) error ellipse."""
        return float(math.sqrt(max(np.linalg.eigvalsh(self.covariance)[-1], 0.0)))

    def to_dict(self) -> dict:
        """JSON-ready dictionary (amplitude, phase lag, real, imag, covariance, sigmas)."""
        s_a, s_p, rho = polar_covariance(self.response, self.covariance)

        def finite(v):  # JSON has no inf: a zero response has undefined polar errors
            return float(v) if math.isfinite(v) else None

        return {
            "period_h": self.period_h,
            "label": self.label,
            "amplitude": abs(self.response),
            "amplitude_sigma": finite(s_a),
            "phase_lag_deg": math.degrees(math.atan2(self.response.imag, self.response.real)),
            "phase_lag_sigma_deg": finite(s_p),
            "amplitude_phase_correlation": rho,
            "real": self.response.real,
            "imag": self.response.imag,
            "cov": [[float(v) for v in row] for row in self.covariance],
            "sigma_max": self.sigma_max,
            "determined": self.determined,
            "reason": self.reason,
        }


@dataclass(frozen=True, eq=False)
class ResponseFit:
    """Result of :func:`fit_responses`.

    Attributes
    ----------
    periods : tuple of PeriodFit
        The free (fitted) lines, in the order of the driving lines (K of them).
    covariance : ndarray, shape (2K, 2K)
        Full covariance of (Re R_1, Im R_1, Re R_2, ...) of the free lines.
    condition_number : float
        Of the column-scaled design matrix (inf if a column is zero).
    chi2 : float
        Residual sum of squares over ``noise_nT**2``.
    n_data : int
        3N.
    noise_nT : float
        Stated noise (nT, 1 sigma per component).
    thresholds : dict
        ``max_condition``, ``max_sigma``, ``max_correlation`` used.
    notes : list of str
        What the flybys cannot separate, and other warnings.
    fixed : tuple of dict
        The lines not fitted: ``{"label", "period_h", "real", "imag"}`` of the response
        whose induced field was subtracted from the residuals (empty when all are free).
    """

    periods: tuple
    covariance: np.ndarray
    condition_number: float
    chi2: float
    n_data: int
    noise_nT: float
    thresholds: dict
    notes: list = field(default_factory=list)
    fixed: tuple = ()

    @property
    def dof(self) -> int:
        """Degrees of freedom 3N - 2K."""
        return self.n_data - 2 * len(self.periods)

    @property
    def separable(self) -> bool:
        """True when every period is determined."""
        return all(p.determined for p in self.periods)

    @property
    def correlation(self) -> np.ndarray:
        """Correlation matrix of the 2K parameters, shape (2K, 2K)."""
        s = np.sqrt(np.diag(self.covariance))
        return self.covariance / np.outer(s, s)

    def to_dict(self) -> dict:
        """JSON-ready dictionary: ``{"response": [...], "condition_number": ..., ...}``."""
        cond = self.condition_number
        return {
            "response": [p.to_dict() for p in self.periods],
            "condition_number": cond if math.isfinite(cond) else None,
            "separable": self.separable,
            "chi2": self.chi2,
            "n_data": self.n_data,
            "dof": self.dof,
            "chi2_per_dof": self.chi2 / self.dof if self.dof > 0 else None,
            "noise_nT": self.noise_nT,
            "thresholds": dict(self.thresholds),
            "covariance": [[float(v) for v in row] for row in self.covariance],
            "fixed": [dict(f) for f in self.fixed],
            "notes": list(self.notes),
        }

    def measurement_toml(self, comments=(), source: dict | None = None, *, include_undetermined: bool = False) -> str:
        """A measurement file (read by :func:`induct.io.measurements.load_measurements`) with the fitted responses.

        Each determined period becomes a ``[[response]]`` table in the covariance form
        (``real``, ``imag``, ``cov``) plus the amplitude/phase-lag form for reading; with
        more than one entry, the full covariance across entries (between periods and
        components) is written as a top-level ``[covariance]`` table (order ``re_im``).

        Parameters
        ----------
        comments : sequence of str
            ``#`` lines at the top.
        source : dict, optional
            Written as a ``[source]`` table (strings and numbers).
        include_undetermined : bool
            Also write periods that are not determined (not advised).

        Returns
        -------
        str
            TOML text.

        Raises
        ------
        ValueError
            If no period would be written.
        """
        import json

        k = [i for i, p in enumerate(self.periods) if p.determined or include_undetermined]
        chosen = [self.periods[i] for i in k]
        if not chosen:
            raise ValueError(
                "no period is determined by these flybys, so there is nothing to write; see the notes: "
                + " | ".join(self.notes)
            )
        out = ["# " + " ".join(str(c).split()) for c in comments]
        skipped = [p for i, p in enumerate(self.periods) if i not in k]
        if skipped:
            out.append("# Not written (not determined by the flybys): "
                       + ", ".join(f"{p.period_h:.6g} h ({p.reason})" for p in skipped))
        if self.fixed:
            out.append("# Not fitted (fixed to the forward model, their induced field subtracted first): "
                       + ", ".join(f"{f['label']} ({f['period_h']:.6g} h)" for f in self.fixed))
        idx = [j for i in k for j in (2 * i, 2 * i + 1)]
        if len(k) > 1:
            corr = self.correlation[np.ix_(idx, idx)]
            cross = max(float(np.max(np.abs(corr[2 * a: 2 * a + 2, 2 * b: 2 * b + 2])))
                        for a in range(len(k)) for b in range(len(k)) if a != b)
            out.append(f"# Largest cross-period correlation of the written entries: {cross:.3f} (kept in [covariance])")
        out.append("")
        if len(k) > 1:
            full = self.covariance[np.ix_(idx, idx)]
            out.append("# Full covariance of the written entries' (Re R, Im R) pairs, in file order (fit covariance)")
            out.append("[covariance]")
            out.append('order = "re_im"')
            out.append("matrix = [")
            for row in full:
                out.append("  [" + ", ".join(repr(float(v)) for v in row) + "],")
            out.append("]")
            out.append("")
        if source:
            out.append("[source]")
            for key, value in source.items():
                out.append(f"{key} = {json.dumps(value) if isinstance(value, str) else repr(value)}")
            out.append("")
        for p in chosen:
            d = p.to_dict()
            c = p.covariance
            out.append("[[response]]")
            out.append(f"period_h = {p.period_h!r}")
            if p.label:
                out.append(f"label = {json.dumps(p.label)}")
            out.append(f"real = {float(d['real'])!r}")
            out.append(f"imag = {float(d['imag'])!r}")
            out.append(f"cov = [[{float(c[0, 0])!r}, {float(c[0, 1])!r}], [{float(c[0, 1])!r}, {float(c[1, 1])!r}]]")
            for key in ("amplitude", "amplitude_sigma", "phase_lag_deg", "phase_lag_sigma_deg"):
                if d[key] is not None:
                    out.append(f"{key} = {float(d[key])!r}")
            note = "fitted by induct fit; the covariance form (real, imag, cov) is used"
            if not p.determined:
                note += f"; NOT DETERMINED: {p.reason}"
            out.append(f"note = {json.dumps(note)}")
            out.append("")
        return "\n".join(out)


def _reduce(positions, times, radius_km, amps, periods, residuals, fixed=None):
    """Tall-skinny QR of [A | b]: triangular factor (2K+1, 2K+1).

    ``fixed`` = (amplitudes (F, 3), periods (F,), x (2F,)): the induced field of these lines with
    these (Re, Im) responses is subtracted from ``residuals`` chunk by chunk.
    """
    k2 = 2 * periods.size
    r = np.zeros((0, k2 + 1))
    for start in range(0, positions.shape[0], CHUNK):
        sl = slice(start, start + CHUNK)
        a = design_matrix(positions[sl], times[sl], radius_km, amps, periods)
        b = residuals[sl].reshape(-1)
        if fixed is not None:
            b = b - design_matrix(positions[sl], times[sl], radius_km, fixed[0], fixed[1]) @ fixed[2]
        block = np.concatenate([a, b.reshape(-1, 1)], axis=1)
        r = np.linalg.qr(np.concatenate([r, block], axis=0), mode="r")
    if r.shape[0] < k2 + 1:
        r = np.concatenate([r, np.zeros((k2 + 1 - r.shape[0], k2 + 1))], axis=0)
    return r


def select_lines(lines, choices) -> list[int]:
    """Indices of the driving lines named by label or by period in hours.

    Parameters
    ----------
    lines : sequence of DriveLine
        The driving lines.
    choices : sequence of str or float
        Each a line's label (exact) or its period in hours; a period matches a line
        within half a unit of its last given digit (``"84.7"`` matches 84.65-84.75 h).

    Returns
    -------
    list of int
        Indices into ``lines``, sorted, without repeats.

    Raises
    ------
    ValueError
        If a choice matches no line or more than one, naming the choice and the lines.

    Examples
    --------
    >>> from induct.field.drive import DriveLine
    >>> lines = [DriveLine(12.5 * 3600, [0, 10, 0], label="a"), DriveLine(84.7 * 3600, [0, 5, 0], label="b")]
    >>> select_lines(lines, ["b", "12.5"])
    [0, 1]
    """
    labels = [ln.label or "" for ln in lines]
    hours = [ln.period_s / SECONDS_PER_HOUR for ln in lines]
    known = ", ".join(f"{lab or '(no label)'} ({h:.6g} h)" for lab, h in zip(labels, hours))
    chosen = set()
    for choice in choices:
        text = str(choice).strip()
        hit = [i for i, lab in enumerate(labels) if lab and lab == text]
        if not hit:
            try:
                value = float(text)
            except ValueError:
                value = None
            if value is not None and math.isfinite(value):
                digits = text.lower().split("e")[0]
                decimals = len(digits.split(".")[1]) if "." in digits else 0
                exp = int(text.lower().split("e")[1]) if "e" in text.lower() else 0
                tol = 0.5 * 10.0 ** (exp - decimals) * (1 + 1e-9)
                hit = [i for i, h in enumerate(hours) if abs(h - value) <= tol]
        if not hit:
            raise ValueError(f"line {text!r} matches no driving line (label or period in h); the lines are: {known}")
        if len(hit) > 1:
            raise ValueError(f"line {text!r} matches more than one driving line: "
                             + ", ".join(f"{labels[i] or '(no label)'} ({hours[i]:.6g} h)" for i in hit)
                             + "; give more digits or the label")
        chosen.add(hit[0])
    return sorted(chosen)


def fit_responses(
    lines,
    radius_km: float,
    positions_km,
    times_s,
    residuals_nT,
    noise_nT: float,
    *,
    max_condition: float = DEFAULT_MAX_CONDITION,
    max_sigma: float = DEFAULT_MAX_SIGMA,
    max_correlation: float = DEFAULT_MAX_CORRELATION,
    free=None,
    fixed_responses=None,
) -> ResponseFit:
    """Least-squares fit of the complex degree-1 response at each driving period.

    Parameters
    ----------
    lines : sequence of DriveLine
        Driving lines (flow frame), distinct periods; one response is fitted per line.
    radius_km : float
        Reference radius R of the responses (km), > 0.
    positions_km : array_like, shape (N, 3)
        Moon-centred positions (km), flow frame, outside the body.
    times_s : array_like, shape (N,)
        Times (s from the epoch of the lines).
    residuals_nT : array_like, shape (N, 3)
        Measured field minus the primary field (nT), flow frame.
    noise_nT : float
        1-sigma noise of each component (nT), > 0.
    max_condition, max_sigma, max_correlation : float
        Thresholds (see the module docstring).
    free : sequence of int, optional
        Indices of the lines to fit (see :func:`select_lines`); default all. The others
        are fixed to ``fixed_responses``.
    fixed_responses : array_like of complex, shape (len(lines),), optional
        Responses R_1 of all lines (exp(+i w t) convention, e.g. a forward model's);
        required when ``free`` leaves a line out, used only for the fixed lines.

    Returns
    -------
    ResponseFit

    Raises
    ------
    ValueError
        Bad shapes or values (naming the row), fewer data than unknowns, bad thresholds,
        a bad ``free`` index or missing ``fixed_responses``.

    Examples
    --------
    >>> import numpy as np
    >>> from induct.field.drive import DriveLine
    >>> from induct.flyby.induced import induced_field_nT
    >>> lines = [DriveLine(12.0 * 3600, [0, 100, 0], label="a"), DriveLine(40.0 * 3600, [0, 30, 0], label="b")]
    >>> t = np.linspace(0.0, 6 * 86400.0, 400)
    >>> pos = np.column_stack([2500.0 * np.cos(t / 5e4), 2500.0 * np.sin(t / 5e4), 300.0 + 0 * t])
    >>> truth = np.array([0.8 - 0.2j, 0.5 - 0.3j])
    >>> b = induced_field_nT(pos, t, 1540.0, truth, np.array([ln.b_complex_nT for ln in lines]), [12.0 * 3600, 40.0 * 3600])
    >>> fit = fit_responses(lines, 1540.0, pos, t, b, 0.5, free=[0], fixed_responses=truth)
    >>> [p.label for p in fit.periods], bool(abs(fit.periods[0].response - truth[0]) < 1e-9)
    (['a'], True)
    """
    from induct.flyby.induced import check_lines

    periods, amps = check_lines(lines)
    labels = [ln.label or f"{ln.period_h:.6g} h" for ln in lines]
    if isinstance(radius_km, bool) or not (math.isfinite(radius_km) and radius_km > 0.0):
        raise ValueError(f"radius_km must be finite and > 0, got {radius_km!r}")
    pos, t = check_positions_times(positions_km, times_s, radius_km)
    res = np.asarray(residuals_nT, dtype=float)
    if res.shape != pos.shape:
        raise ValueError(f"residuals_nT must have shape (N, 3) = {pos.shape}, got {res.shape}")
    bad = ~np.isfinite(res)
    if bad.any():
        i, c = np.argwhere(bad)[0]
        raise ValueError(f"residuals_nT[{i}, {c}] must be finite, got {float(res[i, c])!r}")
    if not (math.isfinite(noise_nT) and noise_nT > 0.0):
        raise ValueError(f"noise_nT must be finite and > 0, got {noise_nT!r}")
    if not (math.isfinite(max_condition) and max_condition > 1.0):
        raise ValueError(f"max_condition must be > 1, got {max_condition!r}")
    if not (math.isfinite(max_sigma) and max_sigma > 0.0):
        raise ValueError(f"max_sigma must be > 0, got {max_sigma!r}")
    if not (0.0 < max_correlation <= 1.0):
        raise ValueError(f"max_correlation must be in (0, 1], got {max_correlation!r}")
    n_lines = periods.size
    if free is None:
        free_idx = list(range(n_lines))
    else:
        free_idx = sorted({int(i) for i in free})
        if not free_idx or free_idx[0] < 0 or free_idx[-1] >= n_lines:
            raise ValueError(f"free must name at least one of the {n_lines} lines by index 0..{n_lines - 1}, got {list(free)!r}")
    fixed_idx = [i for i in range(n_lines) if i not in free_idx]
    fixed_info = ()
    fixed = None
    if fixed_idx:
        if fixed_responses is None:
            raise ValueError("fixed_responses is needed for the lines that are not free: "
                             + ", ".join(labels[i] for i in fixed_idx))
        fr = np.asarray(fixed_responses, dtype=complex).reshape(-1)
        if fr.shape != (n_lines,) or not np.all(np.isfinite(fr[fixed_idx])):
            raise ValueError(f"fixed_responses must be {n_lines} finite complex responses, got {fixed_responses!r}")
        xf = np.column_stack([fr[fixed_idx].real, fr[fixed_idx].imag]).reshape(-1)
        fixed = (amps[fixed_idx], periods[fixed_idx], xf)
        fixed_info = tuple({"label": labels[i], "period_h": float(periods[i] / SECONDS_PER_HOUR),
                            "real": float(fr[i].real), "imag": float(fr[i].imag)} for i in fixed_idx)
    periods, amps, labels = periods[free_idx], amps[free_idx], [labels[i] for i in free_idx]
    k = periods.size
    if 3 * pos.shape[0] <= 2 * k:
        raise ValueError(f"need more than {2 * k} data (3 per point) for {k} periods, got {3 * pos.shape[0]}")

    r_aug = _reduce(pos, t, radius_km, amps, periods, res, fixed)
    r, z, rss = r_aug[: 2 * k, : 2 * k], r_aug[: 2 * k, 2 * k], float(r_aug[2 * k, 2 * k] ** 2)
    norms = np.linalg.norm(r, axis=0)  # column norms of A (R has the same column norms)
    scale = np.where(norms > 0.0, norms, 1.0)
    u, s, vt = np.linalg.svd(r / scale[None, :])
    s_max = float(s[0]) if s.size else 0.0
    condition = s_max / float(s[-1]) if s[-1] > 0.0 and np.all(norms > 0.0) else math.inf
    floor = s_max * 1e-15 if s_max > 0.0 else 1.0
    s_safe = np.maximum(s, floor)
    x = (vt.T @ ((u.T @ z) / s_safe)) / scale
    cov_scaled = (vt.T / s_safe**2) @ vt
    cov = noise_nT**2 * cov_scaled / np.outer(scale, scale)
    cov = 0.5 * (cov + cov.T)  # exactly symmetric (rounding), as written to the measurement file
    chi2 = rss / noise_nT**2
    # Periods in the near-null space of the scaled design.
    small = s < s_max / max_condition
    weight = np.zeros(k)
    if small.any():
        v_small = vt[small].T  # (2K, m)
        weight = np.sum(v_small.reshape(k, 2, -1) ** 2, axis=(1, 2))
    sd = np.sqrt(np.diag(cov))
    corr = cov / np.outer(np.where(sd > 0.0, sd, 1.0), np.where(sd > 0.0, sd, 1.0))
    # Pairs of periods correlated above max_correlation (largest |correlation| between their components).
    pair_corr = {}
    for i in range(k):
        for j in range(i + 1, k):
            c_ij = float(np.max(np.abs(corr[2 * i: 2 * i + 2, 2 * j: 2 * j + 2])))
            if c_ij > max_correlation:
                pair_corr[i, j] = c_ij
    notes = []
    fits = []
    for i in range(k):
        c = cov[2 * i: 2 * i + 2, 2 * i: 2 * i + 2]
        reasons = []
        if norms[2 * i] == 0.0 and norms[2 * i + 1] == 0.0:
            reasons.append("the line has no field along these flybys (zero amplitude)")
        else:
            if weight[i] > 0.01:
                reasons.append(f"not separable from the other periods (condition number {condition:.3g} > {max_condition:.3g})")
            partners = [(j if a == i else a, v) for (a, j), v in pair_corr.items() if i in (a, j)]
            if partners:
                reasons.append("not separable from " + ", ".join(
                    f"{labels[j]} ({periods[j] / SECONDS_PER_HOUR:.6g} h, correlation {v:.3f} > {max_correlation:g})"
                    for j, v in partners))
        sig = math.sqrt(max(np.linalg.eigvalsh(c)[-1], 0.0))
        if sig > max_sigma:
            reasons.append(f"1-sigma uncertainty {sig:.3g} > {max_sigma:g}")
        fits.append(PeriodFit(float(periods[i]), labels[i], complex(x[2 * i], x[2 * i + 1]), c, not reasons,
                              "; ".join(reasons)))
    if math.isfinite(condition) and condition > max_condition:
        notes.append(
            f"the flybys do not separate all periods: condition number {condition:.3g} of the column-scaled design "
            f"matrix exceeds {max_condition:.3g}; add flybys at other phases of the driving field or fit fewer periods"
        )
    for (i, j), v in pair_corr.items():
        notes.append(
            f"periods {periods[i] / SECONDS_PER_HOUR:.6g} h and {periods[j] / SECONDS_PER_HOUR:.6g} h are not "
            f"separated by these flybys: correlation {v:.3f} > {max_correlation:g}; fix one to the forward model "
            "(induct fit --lines) or add flybys"
        )
    for p in fits:
        if not p.determined:
            notes.append(f"period {p.period_h:.6g} h ({p.label}) not determined: {p.reason}")
    if fixed_info:
        notes.append("fixed to the given responses (forward model), not fitted: "
                     + ", ".join(f"{f['label']} ({f['period_h']:.6g} h)" for f in fixed_info)
                     + "; an error in them goes into the free lines' responses and is not in the covariance")
    dof = 3 * pos.shape[0] - 2 * k
    if dof > 0 and chi2 / dof > 1.0 + 5.0 * math.sqrt(2.0 / dof):
        notes.append(
            f"chi2 per degree of freedom is {chi2 / dof:.3g} (expected 1 +- {math.sqrt(2.0 / dof):.2g}): the residuals hold "
            "more than the stated noise and the degree-1 induced field (plasma fields? a wrong primary field?); "
            "the uncertainties are too small"
        )
    thresholds = {"max_condition": max_condition, "max_sigma": max_sigma, "max_correlation": max_correlation}
    return ResponseFit(tuple(fits), cov, condition, chi2, 3 * pos.shape[0], float(noise_nT), thresholds, notes,
                       fixed_info)
