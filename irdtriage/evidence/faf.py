"""Filtering allele frequency (Whiffin et al., Genet Med 2017;19:1151-1158).

The filtering allele frequency is the highest true population allele frequency that is
still statistically *incompatible* with the observed allele count: the allele frequency
``lambda / AN`` where ``lambda`` is the Poisson mean for which observing ``AC`` or more
alleles has probability 1 - confidence (0.05 by default).  Equivalently it is the lower
one-sided 95 % confidence bound of the Poisson mean of AC, divided by AN: "we are 95 % sure
the true frequency is at least this".  A variant whose filtering AF exceeds a disease's
maximum credible population AF is too common to cause it (BS1).

Closed form: lambda = chi2.ppf(1 - confidence, 2 * AC) / 2 (the exact Poisson/chi-square
relation), computed with scipy.
"""
from __future__ import annotations

from typing import Optional

from scipy.stats import chi2


def filtering_af(ac: Optional[int], an: Optional[int], confidence: float = 0.95) -> Optional[float]:
    """Whiffin 2017 filtering AF, or None when AC/AN are missing; 0.0 when AC is 0."""
    if ac is None or an is None or an <= 0:
        return None
    if ac < 0 or ac > an:
        raise ValueError(f"allele count {ac} is not within 0..AN ({an})")
    if ac == 0:
        return 0.0
    lam = chi2.ppf(1.0 - confidence, 2 * ac) / 2.0
    return float(lam / an)
