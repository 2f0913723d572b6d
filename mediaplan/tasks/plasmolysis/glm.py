"""Binomial GLM with a logit or probit link, fitted by iteratively reweighted least squares.

References
----------
McCullagh P, Nelder JA (1989) Generalized Linear Models, 2nd ed. Chapman & Hall (IRLS, ch. 2, 4).
Albert A, Anderson JA (1984) Biometrika 71:1-10 (existence of the logistic MLE; separation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from mediaplan.medium.errors import FitError

LINKS = ("logit", "probit")


@dataclass
class GLMResult:
    """Maximum-likelihood fit of p = F(b0 + b1 x) to binomial counts."""

    link: str
    coef: np.ndarray  # [b0, b1] (b1 per MPa)
    cov: np.ndarray  # unscaled covariance (inverse Fisher information)
    mu: np.ndarray  # fitted proportions
    deviance: float
    pearson_chi2: float
    df: int
    iterations: int
    converged: bool


#: sqrt(2 pi), the normal density's constant as scipy.stats.norm computes it
_SQRT_2PI = float(np.sqrt(2 * np.pi))


def inverse_link(eta, link: str):
    """p [-] from the linear predictor."""
    eta = np.asarray(eta, dtype=float)
    if link == "logit":
        return 0.5 * (1.0 + np.tanh(0.5 * eta))  # = 1/(1+exp(-eta)), without overflow
    from scipy.special import ndtr  # the normal cdf scipy.stats.norm.cdf calls; light to import

    return ndtr(eta)


def link_fn(p, link: str):
    """The linear predictor from p [-]."""
    p = np.asarray(p, dtype=float)
    if link == "logit":
        return np.log(p / (1 - p))
    from scipy.special import ndtri  # the standard normal quantile (what scipy.stats.norm.ppf calls)

    return ndtri(p)


def _mu_and_derivative(eta: np.ndarray, link: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """mu, 1 - mu (computed without cancellation) and dmu/deta."""
    if link == "logit":
        mu = inverse_link(eta, link)
        q = inverse_link(-eta, link)
        return mu, q, mu * q
    from scipy.special import ndtr  # scipy.stats.norm's cdf, sf and pdf, term for term, without scipy.stats

    return ndtr(eta), ndtr(-eta), np.exp(-eta**2 / 2.0) / _SQRT_2PI


def check_link(link: str) -> None:
    if link not in LINKS:
        raise FitError(f"unknown link {link!r}", field="link", hint="use logit or probit")


def fit_glm(x, y, n, link: str = "logit", *, max_iter: int = 100, tol: float = 1e-13) -> GLMResult:
    """Binomial GLM with an intercept and a slope in x, by IRLS (Fisher scoring).

    Parameters
    ----------
    x : level of each row [MPa]; y : plasmolysed cells; n : cells counted
    link : ``logit`` or ``probit``

    Notes
    -----
    Starts from mu = (y + 1/2)/(n + 1) and iterates the weighted least-squares step with weights
    n (dmu/deta)^2 / (mu (1 - mu)) and working response eta + (y/n - mu)/(dmu/deta) until the
    deviance changes by less than ``tol`` relative (McCullagh & Nelder 1989, sect. 2.5), or until the
    coefficients change by less than 1e-12 relative: with thousands of cells per level and counts that the
    model fits almost exactly, the deviance's own rounding exceeds ``tol`` and only the coefficients show
    that the iteration has settled.
    """
    check_link(link)
    x, y, n = (np.asarray(a, dtype=float) for a in (x, y, n))
    X = np.column_stack([np.ones_like(x), x])
    mu = (y + 0.5) / (n + 1.0)
    eta = link_fn(mu, link)
    dev_old = math.inf
    coef = np.zeros(2)
    converged = False
    it = 0
    for it in range(1, max_iter + 1):  # noqa: B007 - the count is reported
        mu, q, d = _mu_and_derivative(eta, link)
        var = np.maximum(mu * q, 1e-300)
        w = n * d * d / var
        z = eta + (y / n - mu) / np.where(d > 0, d, 1e-300)
        XtW = X.T * w
        coef_old, coef = coef, np.linalg.solve(XtW @ X, XtW @ z)
        eta = X @ coef
        dev = _deviance(y, n, inverse_link(eta, link), _mu_and_derivative(eta, link)[1])
        if abs(dev - dev_old) <= tol * (abs(dev) + 0.1):
            converged = True
            break
        if it > 1 and float(np.max(np.abs(coef - coef_old))) <= 1e-12 * float(np.max(np.abs(coef))):
            converged = True
            break
        dev_old = dev
    mu, q, d = _mu_and_derivative(eta, link)
    w = n * d * d / np.maximum(mu * q, 1e-300)
    cov = np.linalg.inv((X.T * w) @ X)
    pearson = float(np.sum((y - n * mu) ** 2 / np.maximum(n * mu * q, 1e-300)))
    return GLMResult(link, coef, cov, mu, _deviance(y, n, mu, q), pearson, int(x.size - 2), it, converged)


def _deviance(y: np.ndarray, n: np.ndarray, mu: np.ndarray, q: np.ndarray) -> float:
    """Binomial deviance 2 Σ [y ln(y/(n mu)) + (n - y) ln((n - y)/(n (1 - mu)))], 0 ln 0 = 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        a = np.where(y > 0, y * np.log(y / (n * mu)), 0.0)
        b = np.where(n - y > 0, (n - y) * np.log((n - y) / (n * q)), 0.0)
    return float(2.0 * np.sum(a + b))


def separation(x, y, n) -> tuple[str, float, float] | None:
    """Complete or quasi-complete separation: the MLE does not exist (Albert & Anderson 1984).

    Returns (kind, a, b) with a potential range [MPa] that the message needs, or None when the counts
    overlap (some plasmolysed cells at a level less negative than some turgid cells, and vice versa).
    kind is ``none`` (no cell plasmolysed; a, b = most and least negative level), ``all`` (every cell
    plasmolysed; same a, b), ``separated`` (plasmolysed only at a and below, turgid only at b and
    above) or ``reversed`` (the opposite order).
    """
    x, y, n = (np.asarray(a, dtype=float) for a in (x, y, n))
    s = x[y > 0]  # levels with plasmolysed cells
    f = x[y < n]  # levels with turgid cells
    if s.size == 0:
        return ("none", float(x.min()), float(x.max()))
    if f.size == 0:
        return ("all", float(x.min()), float(x.max()))
    if s.max() <= f.min():
        return ("separated", float(s.max()), float(f.min()))
    if s.min() >= f.max():
        return ("reversed", float(f.max()), float(s.min()))
    return None
