"""The studentized range: quantiles by secant steps, and the tail and CDF by quadrature over the scale, against SciPy."""

from __future__ import annotations

import math

import pytest
from scipy import stats

from statmargin.stats.studentized_range import (
    studentized_range_cdf,
    studentized_range_ppf,
    studentized_range_sf,
)


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


@pytest.mark.parametrize("df", [50.0, 137.5, 1_000.0, 16_000.0, 99_999.0])
@pytest.mark.parametrize("q", [0.3, 1.5, 2.77, 4.0, 6.5, 9.0])
def test_two_group_tail_equals_the_t_identity(df: float, q: float) -> None:
    """With two groups Q = sqrt(2) |T| exactly, so P(Q > q) = 2 P(T > q / sqrt(2)) (scipy.stats.t as reference)."""
    exact = 2.0 * float(stats.t.sf(q / math.sqrt(2.0), df))
    assert abs(studentized_range_sf(q, 2, df) - exact) < 1e-14
    assert abs(studentized_range_cdf(q, 2, df) - (1.0 - exact)) < 1e-14


@pytest.mark.parametrize("k", [3, 5, 12, 40])
@pytest.mark.parametrize("df", [50.0, 420.0, 7_500.0, 60_000.0])
# SciPy's reference double integral warns of slow convergence at some of these points; its values still agree.
@pytest.mark.filterwarnings("ignore::scipy.integrate.IntegrationWarning")
def test_tail_and_cdf_equal_scipy(k: int, df: float) -> None:
    """Over the range of p a follow-up meets, equal to SciPy's double integral within its own ~1e-11 error."""
    for p in (0.001, 0.05, 0.5, 0.9, 0.99, 0.9999):
        q = float(stats.studentized_range.ppf(p, k, df))
        assert abs(studentized_range_sf(q, k, df) - float(stats.studentized_range.sf(q, k, df))) < 2e-10
        assert abs(studentized_range_cdf(q, k, df) - float(stats.studentized_range.cdf(q, k, df))) < 2e-10


def test_outside_the_quadrature_range_it_is_scipy() -> None:
    """Below df 50 and from df 100,000 the values are SciPy's own."""
    for df in (4.0, 49.0, 100_000.0, 1e7):
        assert studentized_range_sf(3.2, 4, df) == float(stats.studentized_range.sf(3.2, 4, df))
