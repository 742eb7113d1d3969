"""The studentized range quantile by secant steps against SciPy's bracketing ``ppf``."""

from __future__ import annotations

import math

import pytest
from scipy import stats

from statmargin.stats.studentized_range import studentized_range_ppf


@pytest.mark.parametrize(("p", "k", "df"), [
    (0.95, 2, 3.0), (0.95, 3, 12.0), (0.99, 5, 7.5), (0.5, 4, 40.0), (0.95, 12, 250.0),
    (0.999, 12, 1_500.0), (0.95, 12, 16_000.0), (0.9, 6, 99_999.0), (0.95, 12, 250_000.0),
])
def test_quantile_equals_scipy_ppf(p: float, k: int, df: float) -> None:
    """The quantile equals scipy.stats.studentized_range.ppf to 1e-9 relative (SciPy is the reference)."""
    assert math.isclose(studentized_range_ppf(p, k, df), float(stats.studentized_range.ppf(p, k, df)),
                        rel_tol=1e-9)


def test_published_table_value() -> None:
    """q(0.95; 3 groups, 12 df) is 3.773 (printed tables of the studentized range; recalled from memory)."""
    assert round(studentized_range_ppf(0.95, 3, 12.0), 3) == 3.773


def test_quantile_inverts_the_cdf() -> None:
    """The CDF at the quantile gives back the probability (SciPy's CDF, to its 1e-11 integration error)."""
    q = studentized_range_ppf(0.95, 12, 8_000.0)
    assert abs(float(stats.studentized_range.cdf(q, 12, 8_000.0)) - 0.95) < 1e-10
