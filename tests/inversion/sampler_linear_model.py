"""A linear-Gaussian test problem with closed-form posterior and evidence (for sampler tests).

Responses R_j(theta) = c_j + sum_i J_ji theta_i (complex, per entry) with data in real and imaginary parts and
covariance C. With a uniform prior on a box much wider than the posterior, the posterior is Gaussian with
covariance S = (A^T C^-1 A)^-1 (A the real 2M x k Jacobian) and the evidence is
Z = exp(-chi2_min / 2) (2 pi)^(k/2) det(S)^(1/2) / V / sqrt(det(2 pi C)), V the prior volume
(standard Gaussian integral; e.g. Sivia & Skilling 2006, Data Analysis: A Bayesian Tutorial, 2nd ed., ch. 4).
It stands in for a ParameterMap: it has ``parameters`` and ``responses``, and costs almost nothing.
"""

from __future__ import annotations

import numpy as np

from induct.io.measurements import parse_measurements
from induct.model.parameters import Parameter


class LinearMap:
    def __init__(self, c, jac, bounds):
        self.c = np.asarray(c, dtype=complex)              # (M,)
        self.jac = np.asarray(jac, dtype=complex)          # (M, k)
        self.parameters = tuple(Parameter(f"layer{i}.thickness_km", lo, hi) for i, (lo, hi) in enumerate(bounds))

    def responses(self, columns, period_h, degree):
        theta = np.stack([np.asarray(c, dtype=float) for c in columns], axis=-1)   # (N, k)
        return self.c[None, :] + theta @ self.jac.T

    def real_jacobian(self):
        return np.concatenate([self.jac.real, self.jac.imag], axis=0)              # rows: Re of each entry, then Im


def data_for(lmap, theta, sigma, rng=None, period_h=None):
    """Measurements (real, imag, diagonal cov sigma^2) of the model at theta, with noise if rng is given."""
    r = lmap.responses([np.array([t]) for t in theta], None, None)[0]
    if rng is not None:
        r = r + sigma * (rng.normal(size=r.shape) + 1j * rng.normal(size=r.shape))
    periods = period_h if period_h is not None else np.arange(1, r.size + 1, dtype=float)
    doc = {"response": [{"period_h": float(p), "real": float(v.real), "imag": float(v.imag),
                         "cov": [[sigma ** 2, 0.0], [0.0, sigma ** 2]]} for p, v in zip(periods, r)]}
    return parse_measurements(doc, "linear test")


def closed_form(lmap, data):
    """Posterior mean and covariance and ln Z of the linear-Gaussian problem (box prior assumed to hold all mass)."""
    a = lmap.real_jacobian()
    d = np.concatenate([data.values[:, 0], data.values[:, 1]]) - np.concatenate([lmap.c.real, lmap.c.imag])
    var = np.concatenate([data.covariance[:, 0, 0], data.covariance[:, 1, 1]])
    w = 1.0 / var
    f = a.T @ (a * w[:, None])
    s = np.linalg.inv(f)
    mean = s @ (a.T @ (w * d))
    chi2_min = float(np.sum(w * (d - a @ mean) ** 2))
    vol = np.prod([p.hi - p.lo for p in lmap.parameters])
    k = len(lmap.parameters)
    log_z = (-0.5 * chi2_min + 0.5 * k * np.log(2 * np.pi) + 0.5 * np.linalg.slogdet(s)[1] - np.log(vol)
             - 0.5 * np.sum(np.log(2 * np.pi * var)))
    return mean, s, float(log_z)
