"""The filtering allele frequency's Poisson bound against an independent implementation.

Reference: the chi-square/Poisson relation lambda_low = chi2.ppf(alpha, 2*AC) / 2 as computed by
SciPy (a general-purpose reference library); skipped when SciPy is not installed.
"""
import pytest

from irdtriage.evidence.faf import filtering_af, poisson_lower_bound


@pytest.mark.parametrize("ac", [1, 2, 3, 7, 10, 55, 250, 3021, 100000])
@pytest.mark.parametrize("alpha", [0.05, 0.01])
def test_poisson_lower_bound_matches_scipy(ac, alpha):
    stats = pytest.importorskip("scipy.stats", reason="SciPy not installed: independent reference unavailable")
    expected = stats.chi2.ppf(alpha, 2 * ac) / 2
    assert poisson_lower_bound(ac, alpha) == pytest.approx(expected, rel=1e-9)


def test_filtering_af_edge_cases():
    assert filtering_af(0, 1000) == 0.0
    assert filtering_af(None, 1000) is None
    assert filtering_af(5, 0) is None
    with pytest.raises(ValueError):
        filtering_af(11, 10)
