"""Tail probabilities and quantiles the fit needs, in the standard library only (no scipy import).

The logit fit of ``mediaplan fit`` needs two numbers besides the GLM: the chi-square survival function at
the fit's integer degrees of freedom (the goodness-of-fit p-values) and the standard normal quantile at
1 - alpha/2 (the interval's critical value). Importing scipy.special for them costs some 300 modules; these
few lines cost none.

- :func:`chi2_sf` sums the closed forms of the chi-square tail for integer degrees of freedom
  (Abramowitz & Stegun 1964, eq. 26.4.4 and 26.4.5): for df = 2m, Q = exp(-x/2) sum_{k<m} (x/2)^k / k!;
  for df = 2m + 1, Q = erfc(sqrt(x/2)) + exp(-x/2) sum_{k=1..m} (x/2)^(k-1/2) / Gamma(k + 1/2). Every term
  is positive, so the sum keeps its relative accuracy (a few units in the last place); where exp(-x/2)
  would underflow the terms are formed from logarithms.
- :func:`normal_quantile` starts from :meth:`statistics.NormalDist.inv_cdf` (Wichura 1988, AS 241) and takes
  one Newton step on the smaller tail, computed with :func:`math.erfc`, which brings it to the nearest
  double or next to it.

References
----------
Abramowitz M, Stegun IA (1964) Handbook of Mathematical Functions, NBS AMS 55, ch. 26.
Wichura MJ (1988) Algorithm AS 241: the percentage points of the normal distribution. Appl Stat 37:477-484.
"""

from __future__ import annotations

import math

#: most degrees of freedom summed term by term (a counts file holds far fewer rows)
MAX_DF = 100_000

_SQRT_PI = math.sqrt(math.pi)
_LOG_TINY = -700.0  # below this exp() of a term's logarithm is near or under the smallest normal double


def chi2_sf(df: int, x: float) -> float:
    """P(X > x) for X chi-square on ``df`` (a positive integer) degrees of freedom [-]; nan for df < 1
    or a nan x, 1 for x <= 0."""
    if isinstance(df, float) and not df.is_integer():
        raise ValueError("chi2_sf needs an integer number of degrees of freedom")
    df = int(df)
    if df < 1 or df > MAX_DF or math.isnan(x):
        return math.nan
    if x <= 0:
        return 1.0
    if math.isinf(x):
        return 0.0
    y = 0.5 * x
    m, odd = divmod(df, 2)
    if odd:
        total = math.erfc(math.sqrt(y))
        # terms y^(k-1/2)/Gamma(k+1/2), k = 1..m, times exp(-y)
        if -y > _LOG_TINY:
            t = math.exp(-y) * math.sqrt(y) / (0.5 * _SQRT_PI)  # k = 1: Gamma(3/2) = sqrt(pi)/2
            s = 0.0
            for k in range(1, m + 1):
                s += t
                t *= y / (k + 0.5)
            return min(1.0, total + s)  # a probability: rounding never lifts it above 1
        log_y = math.log(y)
        return min(1.0, total + math.fsum(math.exp(-y + (k - 0.5) * log_y - math.lgamma(k + 0.5))
                                          for k in range(1, m + 1)))
    if -y > _LOG_TINY:
        t = math.exp(-y)
        s = 0.0
        for k in range(m):
            s += t
            t *= y / (k + 1)
        return min(1.0, s)
    log_y = math.log(y)
    return min(1.0, math.fsum(math.exp(-y + k * log_y - math.lgamma(k + 1)) for k in range(m)))


def normal_quantile(p: float) -> float:
    """z with P(Z <= z) = p for the standard normal [-]; -inf and inf at 0 and 1, nan outside."""
    if math.isnan(p) or not 0.0 <= p <= 1.0:
        return math.nan
    if p == 0.0:
        return -math.inf
    if p == 1.0:
        return math.inf
    from statistics import NormalDist  # here: statistics brings decimal and fractions along

    z = NormalDist().inv_cdf(p)
    # one Newton step on the smaller tail, Q(|z|) = erfc(|z|/sqrt 2)/2, where its relative accuracy holds
    tail, sign = (p, -1.0) if p < 0.5 else (1.0 - p, 1.0)
    if tail <= 0.0:
        return z
    a = abs(z)
    q = 0.5 * math.erfc(a / math.sqrt(2.0))
    dens = math.exp(-0.5 * a * a) / math.sqrt(2.0 * math.pi)
    if dens > 0.0:
        a += (q - tail) / dens
    return sign * a
