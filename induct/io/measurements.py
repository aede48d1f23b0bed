"""Measured induction responses: the measurement file and the Gaussian misfit.

A measurement file (TOML) lists one ``[[response]]`` table per period (and
degree), in one of two forms:

* amplitude and phase lag with 1-sigma uncertainties, and optionally their
  correlation coefficient::

      [[response]]
      period_h = 9.6
      amplitude = 0.912
      amplitude_sigma = 0.02
      phase_lag_deg = 4.1
      phase_lag_sigma_deg = 1.5
      amplitude_phase_correlation = 0.0   # optional, -1 < r < 1
      degree = 1                          # optional, default 1

* real and imaginary parts of R_n = A exp(i phi) with their 2 x 2 covariance
  (``exp(+i w t)`` convention, so ``imag >= 0`` for a physical response)::

      [[response]]
      period_h = 9.6
      real = 0.909
      imag = 0.065
      cov = [[4e-4, 0.0], [0.0, 4e-4]]

An entry may carry both forms (as written by ``induct fit``); the covariance
form is then used and the amplitude/phase keys are informational.

A covariance across all values (between periods and components, as a linear
least-squares fit of magnetometer data gives it) goes in one top-level table;
every entry is then in the real/imaginary form, and the matrix orders the
values as (Re R_1, Im R_1, Re R_2, Im R_2, ...) in file order; an entry's own
``cov`` (optional then) must equal its 2 x 2 diagonal block::

    [covariance]
    order = "re_im"            # the only order
    matrix = [[...], ...]      # 2M x 2M, symmetric positive definite

Fields the model leaves out (plasma-interaction fields, an asymmetric shell,
unmodelled driving) are allowed for by a model-error covariance added to the
data covariance, ``C_total = C_data + C_model`` (Tarantola 2005, Inverse
Problem Theory, SIAM, ch. 1)::

    [model_error]
    fractional = 0.02          # times the measured amplitude |R_n|
    absolute = 0.005           # dimensionless, like R_n

It adds a variance ``(fractional |R_n|)**2 + absolute**2`` to each of Re R_n and
Im R_n (an isotropic complex error; for amplitude/phase entries: to the
amplitude, and its angle ``sqrt(var) / A`` in degrees to the phase lag). The
same term can be given on the command line (``induct invert --model-error``).

Values no interior can produce are refused, naming the file, entry and key:
an amplitude above 1 or a phase lag outside 0-90 degrees by more than 5 sigma
(a layered conductor has 0 <= A <= 1 and 0 <= phi <= 90 degrees; common
practice), and sigmas that are not finite and positive or are absurd
(outside 1e-12 to 1e3). Every other
key is rejected so that a misspelt key is not silently ignored; ``label`` and
``note`` (strings) are allowed. Besides ``response``, a ``[source]`` table and the
top-level strings ``title``, ``description``, ``notes`` and ``body`` are kept as
metadata; any other top-level key is rejected. Uncertainties are bounded
(:data:`SIGMA_RANGE`, :data:`VARIANCE_RANGE`) so that the misfit stays finite.

The misfit is the Gaussian chi-square ``chi2 = r^T C^-1 r`` with ``r`` the
residuals in each entry's own form (amplitude and phase lag in degrees, or real
and imaginary parts), evaluated through the Cholesky factor of C
(``scipy.linalg.cho_factor``; never an explicit inverse). Without a full
covariance C is block diagonal (one 2 x 2 block per entry). Each entry
contributes two data.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from induct.model.kernel import MAX_DEGREE
from induct.model.response import phase_lag_deg

__all__ = [
    "Measurements",
    "parse_measurements",
    "load_measurements",
    "resolve_data_path",
    "SIGMA_LIMITS",
    "PHYSICAL_SIGMA_MARGIN",
]

#: Smallest and largest accepted 1-sigma uncertainty (units of the value; common practice:
#: a sigma outside these is a typing or unit error, not a measurement).
SIGMA_LIMITS = (1e-12, 1e3)
#: A value outside what any interior can produce by more than this many sigma is refused.
PHYSICAL_SIGMA_MARGIN = 5.0

_POLAR_KEYS = ("amplitude", "amplitude_sigma", "phase_lag_deg", "phase_lag_sigma_deg")
_CART_KEYS = ("real", "imag", "cov")
_ENTRY_KEYS = {"period_h", "degree", "amplitude_phase_correlation", "label", "note", *_POLAR_KEYS, *_CART_KEYS}


@dataclass(frozen=True)
class Measurements:
    """Checked measured responses (build with :func:`parse_measurements` or :func:`load_measurements`).

    Attributes
    ----------
    period_h : ndarray, shape (M,)
        Period of each entry (h).
    degree : ndarray of int, shape (M,)
        Degree n of each entry.
    polar : ndarray of bool, shape (M,)
        True where the entry is given as amplitude and phase lag (degrees),
        False where it is given as real and imaginary parts.
    values : ndarray, shape (M, 2)
        The measured pair: (A, phase lag in degrees) or (Re R_n, Im R_n).
    covariance : ndarray, shape (M, 2, 2)
        Covariance of each pair (units of ``values`` squared).
    source : str
        Where the data came from (file name), for summaries.
    metadata : dict
        Top-level tables and strings of the file other than ``response``.
    """

    period_h: np.ndarray
    degree: np.ndarray
    polar: np.ndarray
    values: np.ndarray
    covariance: np.ndarray
    source: str = "measurements"
    metadata: dict = field(default_factory=dict, repr=False)
    full_covariance: np.ndarray | None = field(default=None, repr=False)

    def __post_init__(self):
        from scipy.linalg import cho_factor

        c = self.total_covariance()
        try:
            factor = cho_factor(c, lower=True)
        except np.linalg.LinAlgError:
            raise ValueError(f"{self.source}: the covariance is not positive definite") from None
        chol = np.tril(factor[0])
        object.__setattr__(self, "_chol", chol)
        d = np.arange(0, 2 * self.n_entries, 2)
        object.__setattr__(self, "_blocks", (chol[d, d], chol[d + 1, d], chol[d + 1, d + 1]))

    def total_covariance(self) -> np.ndarray:
        """The covariance of all 2M values, shape (2M, 2M), ordered (first, second) per entry in file order."""
        if self.full_covariance is not None:
            return np.array(self.full_covariance, dtype=float)
        m = self.n_entries
        c = np.zeros((2 * m, 2 * m))
        for k in range(m):
            c[2 * k : 2 * k + 2, 2 * k : 2 * k + 2] = self.covariance[k]
        return c

    def whiten(self, resid: np.ndarray) -> np.ndarray:
        """Whitened residuals ``L^-1 r`` with ``C = L L^T`` (solved, not inverted).

        Parameters
        ----------
        resid : ndarray, shape (..., M, 2)
            Residuals in each entry's form.

        Returns
        -------
        ndarray, shape (..., 2M); its squared norm is the chi-square.
        """
        r = np.asarray(resid, dtype=float)
        if self.full_covariance is None:
            # Block-diagonal C: each entry's 2 x 2 Cholesky factor, solved in closed form.
            l11, l21, l22 = self._blocks
            z1 = r[..., 0] / l11
            z2 = (r[..., 1] - l21 * z1) / l22
            return np.stack([z1, z2], axis=-1).reshape(r.shape[:-2] + (2 * self.n_entries,))
        from scipy.linalg import solve_triangular

        flat = r.reshape(-1, 2 * self.n_entries)
        z = solve_triangular(self._chol, flat.T, lower=True, check_finite=False).T
        return z.reshape(r.shape[:-2] + (2 * self.n_entries,))

    def with_model_error(self, fractional: float = 0.0, absolute: float = 0.0) -> "Measurements":
        """These data with a model-error covariance added (``C_total = C_data + C_model``).

        Parameters
        ----------
        fractional : float
            Model error as a fraction of the measured amplitude |R_n| (>= 0).
        absolute : float
            Absolute model error on R_n (dimensionless, >= 0).

        Returns
        -------
        Measurements
            Each of Re R_n and Im R_n gets the variance ``(fractional |R_n|)**2 + absolute**2``
            (amplitude/phase entries: that variance on A and its angle in degrees on the phase);
            the same data otherwise.

        Examples
        --------
        >>> m = parse_measurements({"response": [{"period_h": 10.0, "real": 0.6, "imag": 0.8,
        ...                                       "cov": [[1e-4, 0.0], [0.0, 1e-4]]}]})
        >>> float(m.with_model_error(fractional=0.01).covariance[0, 0, 0])
        0.0002
        """
        for name, v in (("fractional", fractional), ("absolute", absolute)):
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < 0:
                raise ValueError(f"model error: {name} must be a finite number >= 0, got {v!r}")
        if fractional == 0 and absolute == 0:
            return self
        amp = np.where(self.polar, self.values[:, 0], np.hypot(self.values[:, 0], self.values[:, 1]))
        var = (fractional * amp) ** 2 + absolute**2
        add = np.zeros((self.n_entries, 2))
        add[:, 0] = var
        with np.errstate(divide="ignore"):
            phase_var = np.degrees(np.sqrt(var) / np.maximum(amp, 1e-12)) ** 2
        add[:, 1] = np.where(self.polar, phase_var, var)
        cov = self.covariance.copy()
        cov[:, 0, 0] += add[:, 0]
        cov[:, 1, 1] += add[:, 1]
        full = None
        if self.full_covariance is not None:
            full = np.array(self.full_covariance, dtype=float) + np.diag(add.ravel())
        meta = dict(self.metadata)
        meta["model_error"] = {"fractional": float(fractional), "absolute": float(absolute)}
        return Measurements(self.period_h, self.degree, self.polar, self.values, cov, self.source, meta, full)

    @property
    def n_entries(self) -> int:
        """Number of entries M."""
        return int(self.period_h.size)

    @property
    def n_data(self) -> int:
        """Number of data (two per entry)."""
        return 2 * self.n_entries


    def predicted(self, response) -> np.ndarray:
        """The model's pairs in each entry's form.

        Parameters
        ----------
        response : array_like of complex, shape (..., M)
            Modelled R_n for each entry.

        Returns
        -------
        ndarray, shape (..., M, 2)
            (A, phase lag in degrees) for polar entries, (Re, Im) otherwise.
        """
        r = np.asarray(response)
        if self.polar.all():
            return np.stack([np.abs(r), phase_lag_deg(r)], axis=-1)
        if not self.polar.any():
            return np.stack([r.real, r.imag], axis=-1)
        first = np.where(self.polar, np.abs(r), r.real)
        second = np.where(self.polar, phase_lag_deg(r), r.imag)
        return np.stack([first, second], axis=-1)

    def chi2(self, response) -> np.ndarray:
        """Gaussian chi-square of modelled responses against these data.

        Parameters
        ----------
        response : array_like of complex, shape (..., M)
            Modelled R_n for each entry; NaN marks an invalid model.

        Returns
        -------
        ndarray, shape (...)
            ``sum_k r_k^T C_k^-1 r_k`` (dimensionless); NaN for invalid models.
        """
        resid = self.predicted(response) - self.values
        z = self.whiten(resid)  # NaN residuals propagate to NaN chi2
        return np.einsum("...i,...i->...", z, z)

    def sigmas(self) -> np.ndarray:
        """1-sigma uncertainty of each value, shape (M, 2)."""
        return np.sqrt(np.stack([self.covariance[:, 0, 0], self.covariance[:, 1, 1]], axis=-1))


def _number(entry, key, where) -> float:
    value = entry[key]
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ValueError(f"{where}: {key} must be a number, got {value!r}")
    value = float(value)
    if not math.isfinite(value):
        raise ValueError(f"{where}: {key} must be finite, got {value!r}")
    return value


#: Bounds of the 1-sigma uncertainties (beyond them chi-square overflows or the datum means nothing).
SIGMA_RANGE = {"amplitude_sigma": (1e-9, 10.0), "phase_lag_sigma_deg": (1e-6, 1000.0)}
#: Bounds of the variances in ``cov`` (real and imaginary parts).
VARIANCE_RANGE = (1e-18, 100.0)
#: Largest |value| of amplitude, real and imag (|R_n| <= (n+1)/n for any interior).
VALUE_MAX = 10.0
#: Period bounds (h), as for scenario files.
PERIOD_RANGE_H = (1e-6, 1e9)
#: Top-level keys besides ``response``: the ``[source]`` table written by ``induct fit`` and a few strings.
_TOP_TABLES = {"source", "covariance", "model_error"}
_TOP_STRINGS = {"title", "description", "notes", "body"}


def _sigma(entry, key, where) -> float:
    if key not in entry:
        raise ValueError(f"{where}: missing {key} (the 1-sigma uncertainty, > 0)")
    value = _number(entry, key, where)
    if value <= 0:
        raise ValueError(f"{where}: {key} must be > 0 (a 1-sigma uncertainty), got {value:g}")
    lo, hi = SIGMA_RANGE[key]
    if not lo <= value <= hi:
        raise ValueError(f"{where}: {key} must be between {lo:g} and {hi:g} (a 1-sigma uncertainty), got {value:g}")
    return value


def _check_sigma_size(value: float, key: str, where: str) -> None:
    lo, hi = SIGMA_LIMITS
    if not lo <= value <= hi:
        raise ValueError(
            f"{where}: {key} = {value:g} is not a plausible 1-sigma uncertainty (accepted {lo:g} to {hi:g}); "
            "check the units"
        )


def _parse_entry(entry, where, full_cov=False, amplification=False):
    """One ``[[response]]`` table -> (period_h, degree, polar, values (2,), covariance (2, 2))."""
    if not isinstance(entry, dict):
        raise ValueError(f"{where}: each [[response]] must be a table, got {entry!r}")
    extra = sorted(set(entry) - _ENTRY_KEYS)
    if extra:
        raise ValueError(f"{where}: unknown key(s) {', '.join(map(repr, extra))}; allowed: {', '.join(sorted(_ENTRY_KEYS))}")
    for key in ("label", "note"):
        if key in entry and not isinstance(entry[key], str):
            raise ValueError(f"{where}: {key} must be a string")
    if "period_h" not in entry:
        raise ValueError(f"{where}: missing period_h (period in hours, > 0)")
    period = _number(entry, "period_h", where)
    if period <= 0:
        raise ValueError(f"{where}: period_h must be > 0 h, got {period:g}")
    if not PERIOD_RANGE_H[0] <= period <= PERIOD_RANGE_H[1]:
        raise ValueError(f"{where}: period_h must be between {PERIOD_RANGE_H[0]:g} and {PERIOD_RANGE_H[1]:g} h, "
                         f"got {period:g}")
    for key in ("amplitude", "real", "imag"):
        if key in entry and not abs(_number(entry, key, where)) <= VALUE_MAX:
            if key == "amplitude" and _number(entry, key, where) > VALUE_MAX:
                raise ValueError(f"{where}: amplitude = {_number(entry, key, where):g} exceeds 1 far beyond any "
                                 "uncertainty: no interior produces it (the normalised amplitude is at most 1; "
                                 "was it typed in percent?)")
            raise ValueError(f"{where}: {key} must be between {-VALUE_MAX:g} and {VALUE_MAX:g} "
                             f"(a normalised response), got {_number(entry, key, where):g}")
    degree = entry.get("degree", 1)
    if isinstance(degree, bool) or not isinstance(degree, int) or not 1 <= degree <= MAX_DEGREE:
        raise ValueError(f"{where}: degree must be an integer from 1 to {MAX_DEGREE}, got {degree!r}")
    if "cov" in entry:
        return (period, degree, False) + _cartesian(entry, where, amplification)
    if full_cov and "real" in entry and "imag" in entry:
        return (period, degree, False, np.array([_number(entry, "real", where), _number(entry, "imag", where)]), None)
    present = [k for k in ("real", "imag") if k in entry]
    if present and not all(k in entry for k in _POLAR_KEYS):
        raise ValueError(f"{where}: {' and '.join(present)} need cov = [[var_re, cov], [cov, var_im]] (their covariance)")
    return (period, degree, True) + _polar(entry, where, amplification)


def _polar(entry, where, amplification=False):
    missing = [k for k in ("amplitude", "phase_lag_deg") if k not in entry]
    if missing:
        raise ValueError(
            f"{where}: missing {', '.join(missing)}; give amplitude, amplitude_sigma, phase_lag_deg and "
            "phase_lag_sigma_deg, or real, imag and cov"
        )
    amp = _number(entry, "amplitude", where)
    phase = _number(entry, "phase_lag_deg", where)
    s_amp = _sigma(entry, "amplitude_sigma", where)
    s_phase = _sigma(entry, "phase_lag_sigma_deg", where)
    if amp < 0:
        raise ValueError(f"{where}: amplitude must be >= 0 (A = |R_n|), got {amp:g}")
    k = PHYSICAL_SIGMA_MARGIN
    if amp > 1.0 + k * s_amp and not amplification:
        raise ValueError(
            f"{where}: amplitude = {amp:g} exceeds 1 by {(amp - 1.0) / s_amp:.1f} sigma: no interior gives A > 1 "
            f"(refused beyond {k:g} sigma; was the value typed in percent?)"
        )
    if phase < -k * s_phase or phase > 90.0 + k * s_phase:
        raise ValueError(
            f"{where}: phase_lag_deg = {phase:g} must be between 0 and 90 degrees (within {k:g} sigma = "
            f"{k * s_phase:g} deg): no interior gives a phase lag outside 0-90 degrees"
        )
    rho = 0.0
    if "amplitude_phase_correlation" in entry:
        rho = _number(entry, "amplitude_phase_correlation", where)
        if not -1.0 < rho < 1.0:
            raise ValueError(f"{where}: amplitude_phase_correlation must be between -1 and 1 (exclusive), got {rho:g}")
    cov = np.array([[s_amp**2, rho * s_amp * s_phase], [rho * s_amp * s_phase, s_phase**2]])
    return np.array([amp, phase]), cov


def _cartesian(entry, where, amplification=False):
    for key in ("real", "imag"):
        if key not in entry:
            raise ValueError(f"{where}: missing {key} (cov is given, so real, imag and cov are needed)")
    re, im = _number(entry, "real", where), _number(entry, "imag", where)
    cov = entry["cov"]
    ok = isinstance(cov, list) and len(cov) == 2 and all(isinstance(row, list) and len(row) == 2 for row in cov)
    if not ok or any(isinstance(v, bool) or not isinstance(v, (int, float)) for row in cov for v in row):
        raise ValueError(f"{where}: cov must be a 2 x 2 table of numbers [[var_re, cov], [cov, var_im]], got {cov!r}")
    c = np.array(cov, dtype=float)
    if not np.all(np.isfinite(c)):
        raise ValueError(f"{where}: cov must be finite, got {cov!r}")
    if c[0, 0] <= 0 or c[1, 1] <= 0:
        raise ValueError(f"{where}: cov diagonal (the variances of real and imag) must be > 0, got {c[0, 0]:g} and {c[1, 1]:g}")
    lo, hi = VARIANCE_RANGE
    if not (lo <= c[0, 0] <= hi and lo <= c[1, 1] <= hi and abs(c[0, 1]) <= hi and abs(c[1, 0]) <= hi):
        raise ValueError(f"{where}: cov variances must be between {lo:g} and {hi:g}, got {c[0, 0]:g} and {c[1, 1]:g}")
    if abs(c[0, 1] - c[1, 0]) > 1e-9 * math.sqrt(c[0, 0] * c[1, 1]):
        raise ValueError(f"{where}: cov must be symmetric, got off-diagonal {c[0, 1]:g} and {c[1, 0]:g}")
    c[1, 0] = c[0, 1]
    if c[0, 1] ** 2 >= c[0, 0] * c[1, 1]:
        raise ValueError(f"{where}: cov must be positive definite (|cov_re_im| < sqrt(var_re var_im)), got {cov!r}")
    _check_cartesian_physics(re, im, c, where, amplification=amplification)
    return np.array([re, im]), c


def _check_cartesian_physics(re: float, im: float, c: np.ndarray, where: str, key: str = "cov",
                             amplification: bool = False) -> None:
    """Refuse absurd sigmas and Re/Im values no interior can produce (beyond 5 sigma)."""
    for i, name in enumerate(("real", "imag")):
        _check_sigma_size(math.sqrt(c[i, i]), f"{key} (sigma of {name})", where)
    k = PHYSICAL_SIGMA_MARGIN
    amp = math.hypot(re, im)
    if amp > 1.0 and not amplification:
        u = np.array([re, im]) / amp
        s = math.sqrt(float(u @ c @ u))
        if amp > 1.0 + k * s:
            raise ValueError(
                f"{where}: real, imag: |R_n| = {amp:g} exceeds 1 by {(amp - 1.0) / s:.1f} sigma: no interior gives "
                f"A > 1 (refused beyond {k:g} sigma)"
            )
    if im < -k * math.sqrt(c[1, 1]):
        raise ValueError(
            f"{where}: imag = {im:g} is below 0 by more than {k:g} sigma: the phase lag of a conductor is 0-90 "
            "degrees (imag >= 0 with the exp(+i w t) convention)"
        )
    if re < -k * math.sqrt(c[0, 0]):
        raise ValueError(
            f"{where}: real = {re:g} is below 0 by more than {k:g} sigma: the phase lag of a conductor is 0-90 degrees"
        )


def parse_measurements(doc: dict, source: str = "measurements", *, amplification: bool = False) -> Measurements:
    """Check a parsed measurement document and build :class:`Measurements`.

    Parameters
    ----------
    doc : dict
        The parsed TOML document with a non-empty ``response`` array of tables.
    source : str
        Name used in error messages and summaries.
    amplification : bool
        Accept amplitudes above 1 (a conducting sheet outside the reference radius, such
        as an ionosphere, can give them; no interior can).

    Returns
    -------
    Measurements

    Raises
    ------
    ValueError
        Naming the entry and key: missing, non-positive or non-finite sigmas,
        phase lag outside 0-90 degrees, negative amplitude, bad covariance,
        bad period or degree, unknown keys.
    """
    if not isinstance(doc, dict):
        raise ValueError(f"{source}: expected a TOML document with [[response]] tables")
    for key, value in doc.items():
        if key == "response":
            continue
        ok = (key in _TOP_TABLES and isinstance(value, dict)) or (key in _TOP_STRINGS and isinstance(value, str))
        if not ok:
            raise ValueError(
                f"{source}: unknown top-level key {key!r}; measurements go in [[response]] tables "
                f"(besides them the tables [source], [covariance], [model_error] and the strings {', '.join(sorted(_TOP_STRINGS))} are kept as metadata)"
            )
    entries = doc.get("response")
    if not isinstance(entries, list) or not entries:
        raise ValueError(f"{source}: needs at least one [[response]] table (period_h, amplitude, ... or real, imag, cov)")
    full_cov = "covariance" in doc
    rows = [_parse_entry(e, f"{source}: [[response]] {i + 1}", full_cov, amplification) for i, e in enumerate(entries)]
    period, degree, polar, values, cov = zip(*rows)
    full = None
    if full_cov:
        full = _full_covariance(doc["covariance"], rows, f"{source}: [covariance]")
        cov = [full[2 * k : 2 * k + 2, 2 * k : 2 * k + 2] for k in range(len(rows))]
        for k, (row, e) in enumerate(zip(rows, entries)):
            where = f"{source}: [[response]] {k + 1}"
            _check_cartesian_physics(row[3][0], row[3][1], cov[k], where, key="[covariance] block",
                                     amplification=amplification)
            if row[4] is not None and not np.allclose(row[4], cov[k], rtol=1e-6, atol=0.0):
                raise ValueError(f"{where}: cov differs from its 2 x 2 block of the [covariance] matrix")
    measurements = Measurements(
        period_h=np.array(period, dtype=float),
        degree=np.array(degree, dtype=int),
        polar=np.array(polar, dtype=bool),
        values=np.array(values, dtype=float),
        covariance=np.array(cov, dtype=float),
        source=source,
        metadata={k: v for k, v in doc.items() if k not in ("response", "covariance", "model_error")},
        full_covariance=full,
    )
    if "model_error" in doc:
        me = doc["model_error"]
        extra = sorted(set(me) - {"fractional", "absolute"}) if isinstance(me, dict) else None
        if extra is None or extra:
            raise ValueError(f"{source}: [model_error] takes fractional and absolute (numbers >= 0), got {me!r}")
        try:
            measurements = measurements.with_model_error(me.get("fractional", 0.0), me.get("absolute", 0.0))
        except ValueError as exc:
            raise ValueError(f"{source}: [model_error]: {exc}") from None
    return measurements


def _full_covariance(table, rows, where) -> np.ndarray:
    """Check the top-level ``[covariance]`` table against the entries; shape (2M, 2M)."""
    if not isinstance(table, dict) or set(table) - {"order", "matrix"} or "matrix" not in table:
        raise ValueError(f"{where}: give matrix = [[...], ...] (2M x 2M) and optionally order = \"re_im\"")
    if table.get("order", "re_im") != "re_im":
        raise ValueError(f"{where}: order must be \"re_im\" (Re R_1, Im R_1, Re R_2, ... in file order)")
    polar = [k + 1 for k, row in enumerate(rows) if row[2]]
    if polar:
        raise ValueError(
            f"{where}: a full covariance needs every [[response]] as real and imag; "
            f"entries {', '.join(map(str, polar))} are amplitude/phase"
        )
    n = 2 * len(rows)
    mat = table["matrix"]
    ok = isinstance(mat, list) and len(mat) == n and all(isinstance(r, list) and len(r) == n for r in mat)
    if not ok or any(isinstance(v, bool) or not isinstance(v, (int, float)) for r in mat for v in r):
        raise ValueError(f"{where}: matrix must be a {n} x {n} table of numbers (two values per [[response]])")
    c = np.array(mat, dtype=float)
    if not np.all(np.isfinite(c)):
        raise ValueError(f"{where}: matrix must be finite")
    scale = np.sqrt(np.abs(np.outer(np.diag(c), np.diag(c))))
    if np.any(np.abs(c - c.T) > 1e-9 * scale):
        i, j = np.unravel_index(int(np.argmax(np.abs(c - c.T))), c.shape)
        raise ValueError(f"{where}: matrix must be symmetric (element [{i}][{j}] = {c[i, j]:g}, [{j}][{i}] = {c[j, i]:g})")
    if np.any(np.diag(c) <= 0):
        i = int(np.argmin(np.diag(c)))
        raise ValueError(f"{where}: matrix diagonal (variances) must be > 0; element [{i}][{i}] = {c[i, i]:g}")
    c = 0.5 * (c + c.T)
    if np.linalg.eigvalsh(c / scale)[0] <= 1e-12:
        raise ValueError(f"{where}: matrix must be positive definite")
    return c


def resolve_data_path(name_or_path) -> Path:
    """An existing file, or the stem of a measurement file bundled with the scenarios (e.g. ``"ilmare_measured"``)."""
    from induct.io.bundled import resolve_bundled

    return resolve_bundled(name_or_path, ".toml", "measurement file")


def load_measurements(name_or_path, *, amplification: bool = False) -> Measurements:
    """Read and check a measurement file (TOML; see the module docstring for the format).

    Parameters
    ----------
    name_or_path : str or Path
        A TOML file, or the stem of a bundled measurement file.
    amplification : bool
        Accept amplitudes above 1 (see :func:`parse_measurements`).

    Returns
    -------
    Measurements
    """
    from induct.io.toml import read_toml

    path = resolve_data_path(name_or_path)
    return parse_measurements(read_toml(path), source=path.name, amplification=amplification)
