"""Filtering allele frequency (Whiffin et al., Genet Med 2017;19:1151-1158).

The filtering allele frequency is the highest true population allele frequency that is
still statistically *incompatible* with the observed allele count: the allele frequency
``lambda / AN`` where ``lambda`` is the Poisson mean for which observing ``AC`` or more
alleles has probability 1 - confidence (0.05 by default).  Equivalently it is the lower
one-sided 95 % confidence bound of the Poisson mean of AC, divided by AN: "we are 95 % sure
the true frequency is at least this".  A variant whose filtering AF exceeds a disease's
maximum credible population AF is too common to cause it (BS1).

Closed form: lambda = chi2.ppf(1 - confidence, 2 * AC) / 2 (the exact Poisson/chi-square
relation), i.e. the lambda at which the regularized lower incomplete gamma function
P(AC, lambda) equals 1 - confidence. It is solved here with the standard series /
continued-fraction evaluation of P (Press et al., Numerical Recipes, section 6.2) and
bisection, so no numerical library is needed at run time; tests compare it with scipy's
chi-square quantile when scipy is installed.
"""
from __future__ import annotations

import math
from typing import Optional


def _lower_regularized_gamma(a: float, x: float) -> float:
    """P(a, x) = gamma(a, x) / Gamma(a), for a > 0, x >= 0."""
    if x <= 0.0:
        return 0.0
    log_pre = a * math.log(x) - x - math.lgamma(a)
    if x < a + 1.0:  # series
        term = total = 1.0 / a
        ap = a
        for _ in range(100000):
            ap += 1.0
            term *= x / ap
            total += term
            if abs(term) < abs(total) * 1e-15:
                break
        return min(1.0, total * math.exp(log_pre))
    # continued fraction for Q = 1 - P (modified Lentz)
    tiny = 1e-300
    b = x + 1.0 - a
    c = 1.0 / tiny
    d = 1.0 / b
    h = d
    for i in range(1, 100000):
        an = -i * (i - a)
        b += 2.0
        d = an * d + b
        d = tiny if abs(d) < tiny else d
        c = b + an / c
        c = tiny if abs(c) < tiny else c
        d = 1.0 / d
        delta = d * c
        h *= delta
        if abs(delta - 1.0) < 1e-15:
            break
    return max(0.0, 1.0 - math.exp(log_pre) * h)


def poisson_lower_bound(ac: int, alpha: float) -> float:
    """The Poisson mean lambda with P(X >= ac | lambda) = alpha (ac >= 1)."""
    lo, hi = 0.0, max(10.0, ac + 20.0 * math.sqrt(ac) + 20.0)
    for _ in range(200):
        mid = (lo + hi) / 2.0
        if _lower_regularized_gamma(ac, mid) < alpha:
            lo = mid
        else:
            hi = mid
        if hi - lo <= 1e-12 * max(1.0, hi):
            break
    return (lo + hi) / 2.0


def filtering_af(ac: Optional[int], an: Optional[int], confidence: float = 0.95) -> Optional[float]:
    """Whiffin 2017 filtering AF, or None when AC/AN are missing; 0.0 when AC is 0."""
    if ac is None or an is None or an <= 0:
        return None
    if ac < 0 or ac > an:
        raise ValueError(f"allele count {ac} is not within 0..AN ({an})")
    if ac == 0:
        return 0.0
    lam = poisson_lower_bound(int(ac), 1.0 - confidence)
    return float(lam / an)
