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
form is then used and the amplitude/phase keys are informational. Every other
key is rejected so that a misspelt key is not silently ignored; ``label`` and
``note`` (strings) are allowed. Besides ``response``, a ``[source]`` table and the
top-level strings ``title``, ``description``, ``notes`` and ``body`` are kept as
metadata; any other top-level key is rejected. Uncertainties are bounded
(:data:`SIGMA_RANGE`, :data:`VARIANCE_RANGE`) so that the misfit stays finite.

The misfit is the Gaussian chi-square summed over entries,
``chi2 = sum_k r_k^T C_k^-1 r_k`` with ``r_k`` the 2-vector of residuals in the
entry's own form (amplitude and phase lag in degrees, or real and imaginary
parts). Each entry contributes two data.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from induct.model.kernel import MAX_DEGREE
from induct.model.response import phase_lag_deg

__all__ = ["Measurements", "parse_measurements", "load_measurements", "resolve_data_path"]

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

    @property
    def n_entries(self) -> int:
        """Number of entries M."""
        return int(self.period_h.size)

    @property
    def n_data(self) -> int:
        """Number of data (two per entry)."""
        return 2 * self.n_entries

    @property
    def inverse_covariance(self) -> np.ndarray:
        """Inverse covariance of each pair, shape (M, 2, 2)."""
        return np.linalg.inv(self.covariance)

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
        w = self.inverse_covariance
        a, b = resid[..., 0], resid[..., 1]
        terms = w[:, 0, 0] * a * a + 2.0 * w[:, 0, 1] * a * b + w[:, 1, 1] * b * b
        return terms.sum(axis=-1)

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
_TOP_TABLES = {"source"}
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


def _parse_entry(entry, where):
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
            raise ValueError(f"{where}: {key} must be between {-VALUE_MAX:g} and {VALUE_MAX:g} "
                             f"(a normalised response), got {_number(entry, key, where):g}")
    degree = entry.get("degree", 1)
    if isinstance(degree, bool) or not isinstance(degree, int) or not 1 <= degree <= MAX_DEGREE:
        raise ValueError(f"{where}: degree must be an integer from 1 to {MAX_DEGREE}, got {degree!r}")
    if "cov" in entry:
        return (period, degree, False) + _cartesian(entry, where)
    present = [k for k in ("real", "imag") if k in entry]
    if present and not all(k in entry for k in _POLAR_KEYS):
        raise ValueError(f"{where}: {' and '.join(present)} need cov = [[var_re, cov], [cov, var_im]] (their covariance)")
    return (period, degree, True) + _polar(entry, where)


def _polar(entry, where):
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
    if not 0.0 <= phase <= 90.0:
        raise ValueError(f"{where}: phase_lag_deg must be between 0 and 90 degrees, got {phase:g}")
    rho = 0.0
    if "amplitude_phase_correlation" in entry:
        rho = _number(entry, "amplitude_phase_correlation", where)
        if not -1.0 < rho < 1.0:
            raise ValueError(f"{where}: amplitude_phase_correlation must be between -1 and 1 (exclusive), got {rho:g}")
    cov = np.array([[s_amp**2, rho * s_amp * s_phase], [rho * s_amp * s_phase, s_phase**2]])
    return np.array([amp, phase]), cov


def _cartesian(entry, where):
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
    return np.array([re, im]), c


def parse_measurements(doc: dict, source: str = "measurements") -> Measurements:
    """Check a parsed measurement document and build :class:`Measurements`.

    Parameters
    ----------
    doc : dict
        The parsed TOML document with a non-empty ``response`` array of tables.
    source : str
        Name used in error messages and summaries.

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
                f"(besides them a [source] table and the strings {', '.join(sorted(_TOP_STRINGS))} are kept as metadata)"
            )
    entries = doc.get("response")
    if not isinstance(entries, list) or not entries:
        raise ValueError(f"{source}: needs at least one [[response]] table (period_h, amplitude, ... or real, imag, cov)")
    rows = [_parse_entry(e, f"{source}: [[response]] {i + 1}") for i, e in enumerate(entries)]
    period, degree, polar, values, cov = zip(*rows)
    return Measurements(
        period_h=np.array(period, dtype=float),
        degree=np.array(degree, dtype=int),
        polar=np.array(polar, dtype=bool),
        values=np.array(values, dtype=float),
        covariance=np.array(cov, dtype=float),
        source=source,
        metadata={k: v for k, v in doc.items() if k != "response"},
    )


def resolve_data_path(name_or_path) -> Path:
    """An existing file, or the stem of a measurement file bundled with the scenarios (e.g. ``"ilmare_measured"``)."""
    from induct.io.bundled import resolve_bundled

    return resolve_bundled(name_or_path, ".toml", "measurement file")


def load_measurements(name_or_path) -> Measurements:
    """Read and check a measurement file (TOML; see the module docstring for the format).

    Parameters
    ----------
    name_or_path : str or Path
        A TOML file, or the stem of a bundled measurement file.

    Returns
    -------
    Measurements
    """
    from induct.io.toml import read_toml

    path = resolve_data_path(name_or_path)
    return parse_measurements(read_toml(path), source=path.name)
