"""Control charts and run rules against textbook formulas, a textbook example and simulated in-control data.

Sources:
- Montgomery, D. C. (2009). Introduction to Statistical Quality Control, 6th ed.:
  Example 7.1 (orange-juice cans, 30 samples of 50, 347 nonconforming: p̄ = 0.2313,
  UCL = 0.4102, LCL = 0.0524, samples 15 and 23 above the UCL), recalled from memory (the
  counts add up to the published 347); p chart limits p̄ ± 3 sqrt(p̄(1-p̄)/n_i) (section 7.2);
  x̄ chart with variable n, x̄̄ ± 3 s̄ / (c4(n_i) sqrt(n_i)) (section 6.3.2); individuals
  chart x̄ ± 3 MR̄ / 1.128 (section 6.4); c4(2) = 0.7979, c4(5) = 0.9400, c4(25) = 0.9896
  (Appendix Table VI).
- Western Electric Company (1956). Statistical Quality Control Handbook: rules 1-4.
- Champ, C. W. & Woodall, W. H. (1987). Exact results for Shewhart control charts with
  supplementary runs rules. Technometrics 29(4), 393-399: in-control ARL 91.75 with the four
  Western Electric rules (recalled from memory); rule 1 alone 1 / 0.0027 = 370.4.
- Laney, D. B. (2002). Improved control charts for attributes. Quality Engineering 14(4), 531-537.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from statmargin.errors import NotEnoughDataError
from statmargin.stats.control import (
    MIN_BASELINE_PERIODS,
    WESTERN_ELECTRIC,
    baseline_mask,
    c4,
    individuals_chart,
    p_chart,
    run_rules,
    xbar_chart,
)
from statmargin.vocabulary import ChartKind, ControlRule
from statmargin.vocabulary.codes import Note, Skip
from statmargin.words.period_words import RULE_NAMES
from statmargin.words.sentences import say

ORANGE_JUICE = np.array(
    [12, 15, 8, 10, 4, 7, 16, 9, 14, 10, 5, 6, 17, 12, 22, 8, 10, 5, 13, 11, 20, 18, 24, 15, 9, 12, 7, 13, 9, 6]
)


def test_p_chart_montgomery_example_7_1() -> None:
    """Montgomery Example 7.1: p̄ = 0.2313, UCL = 0.4102, LCL = 0.0524; samples 15 and 23 out (recalled)."""
    assert ORANGE_JUICE.sum() == 347
    chart = p_chart(ORANGE_JUICE, np.full(30, 50), np.ones(30, dtype=bool), laney=False)
    assert chart.kind is ChartKind.P
    assert round(chart.centre, 4) == 0.2313
    assert np.round(chart.upper, 4).tolist() == [0.4102] * 30
    assert np.round(chart.lower, 4).tolist() == [0.0524] * 30
    beyond = [i + 1 for i, rule in chart.flags if rule is ControlRule.BEYOND_3_SIGMA]
    assert beyond == [15, 23]


def test_p_chart_variable_n_limits_by_formula() -> None:
    """With varying n each period's limits are p̄ ± 3 sqrt(p̄(1-p̄)/n_i), clipped at 0 and 1."""
    n = np.array([40, 120, 0, 300, 15, 200, 90])
    x = np.array([30, 95, 0, 230, 12, 150, 50])
    base = baseline_mask(n, 6)
    chart = p_chart(x, n, base, laney=False)
    p_bar = x[base].sum() / n[base].sum()
    for i in np.flatnonzero(n):
        sigma = math.sqrt(p_bar * (1 - p_bar) / n[i])
        assert chart.upper[i] == pytest.approx(min(1.0, p_bar + 3 * sigma))
        assert chart.lower[i] == pytest.approx(max(0.0, p_bar - 3 * sigma))
        assert chart.z[i] == pytest.approx((x[i] / n[i] - p_bar) / sigma)
    assert np.isnan(chart.upper[2]) and np.isnan(chart.z[2])  # the gap is not plotted
    assert chart.baseline.tolist() == [True, True, False, True, True, True, False]


def test_c4_matches_montgomery_appendix() -> None:
    """c4(2) = 0.7979, c4(5) = 0.9400, c4(25) = 0.9896 (Montgomery Appendix Table VI)."""
    assert np.round(c4(np.array([2, 5, 25])), 4).tolist() == [0.7979, 0.94, 0.9896]


def test_xbar_chart_by_formula() -> None:
    """x̄̄ is the n-weighted mean, s̄ the pooled SD, limits x̄̄ ± 3 s̄ / (c4(n_i) sqrt(n_i))."""
    means = np.array([20.1, 19.4, 21.0, 20.3, 19.8, 20.6, 23.9])
    sds = np.array([2.1, 1.8, 2.4, 2.0, 2.2, 1.9, 2.3])
    n = np.array([12, 30, 8, 25, 16, 22, 18])
    base = baseline_mask(n, 6)
    chart = xbar_chart(means, sds, n, base)
    grand = (n[:6] * means[:6]).sum() / n[:6].sum()
    pooled = math.sqrt(((n[:6] - 1) * sds[:6] ** 2).sum() / (n[:6] - 1).sum())
    assert chart.centre == pytest.approx(grand)
    for i in range(7):
        c4_i = math.sqrt(2 / (n[i] - 1)) * math.exp(math.lgamma(n[i] / 2) - math.lgamma((n[i] - 1) / 2))
        assert chart.upper[i] == pytest.approx(grand + 3 * pooled / (c4_i * math.sqrt(n[i])))
    assert (6, ControlRule.BEYOND_3_SIGMA) in chart.flags


def test_individuals_chart_by_formula() -> None:
    """Centre is the baseline mean, limits ± 3 MR̄ / 1.128 with MR̄ over consecutive plotted periods."""
    values = np.array([71.0, 74.5, np.nan, 73.0, 76.2, 72.8, 75.1, 74.0, 64.9])
    base = baseline_mask(np.where(np.isnan(values), 0, 1), 8)
    chart = individuals_chart(values, base)
    kept = values[:8][~np.isnan(values[:8])]
    mr_bar = np.mean(np.abs(np.diff(kept)))
    assert chart.centre == pytest.approx(kept.mean())
    assert chart.upper[0] == pytest.approx(kept.mean() + 3 * mr_bar / 1.128)
    assert chart.lower[8] == pytest.approx(kept.mean() - 2.659574468 * mr_bar)
    assert chart.flags == [(8, ControlRule.BEYOND_3_SIGMA)]


@pytest.mark.parametrize(
    ("z", "expected"),
    [
        # Rule 1: one point beyond 3 sigma (either side).
        ([0.1, -3.2, 0.4], [(1, ControlRule.BEYOND_3_SIGMA)]),
        # Rule 2: 2 of 3 beyond 2 sigma on the same side, flagged on the second.
        ([2.4, 0.3, 2.1], [(2, ControlRule.TWO_OF_THREE_BEYOND_2_SIGMA)]),
        # ... not when they are on opposite sides.
        ([2.4, 0.3, -2.1], []),
        # Rule 3: 4 of 5 beyond 1 sigma on one side.
        ([-1.2, -1.5, 0.2, -1.1, -1.3], [(4, ControlRule.FOUR_OF_FIVE_BEYOND_1_SIGMA)]),
        # Rule 4: 8 in a row on one side of the centre line; the ninth flags again.
        ([0.2] * 9, [(7, ControlRule.EIGHT_ON_ONE_SIDE), (8, ControlRule.EIGHT_ON_ONE_SIDE)]),
        # Seven in a row is not enough.
        ([0.2] * 7 + [-0.1], []),
        # A gap (NaN) is skipped: the points either side are neighbours.
        ([2.2, np.nan, 2.5], [(2, ControlRule.TWO_OF_THREE_BEYOND_2_SIGMA)]),
        # A point that completes the window but is itself inside the zone is not flagged.
        ([2.2, 2.3, 0.0], [(1, ControlRule.TWO_OF_THREE_BEYOND_2_SIGMA)]),
    ],
)
def test_run_rule_patterns(z: list[float], expected: list[tuple[int, ControlRule]]) -> None:
    """Each Western Electric rule flags the period that completes its pattern (WE Handbook 1956)."""
    assert run_rules(np.array(z, dtype=float)) == expected


def test_in_control_average_run_length() -> None:
    """On in-control normal data the four rules signal after about 91.75 points; rule 1 alone after about 370."""
    rng = np.random.default_rng(20261205)
    first = []
    for _ in range(4000):
        flags = run_rules(rng.standard_normal(700))
        first.append(flags[0][0] + 1 if flags else 700)
    arl = float(np.mean(first))
    # Champ & Woodall (1987): 91.75; Monte Carlo standard error about 91 / sqrt(4000) = 1.4.
    assert abs(arl - 91.75) < 5.0
    first_rule1 = []
    for _ in range(1500):
        flags = run_rules(rng.standard_normal(2500), WESTERN_ELECTRIC[:1])
        first_rule1.append(flags[0][0] + 1 if flags else 2500)
    assert abs(np.mean(first_rule1) - 1 / (2 * stats.norm.sf(3))) < 30  # 370.4, SE about 9.6


def test_p_chart_false_alarms_on_in_control_data() -> None:
    """A stable program's latest month is flagged about as often as the rules' design implies."""
    rng = np.random.default_rng(12)
    k, sims = 13, 3000
    n = rng.integers(150, 400, size=k)
    flagged_latest = 0
    laney_used = 0
    for _ in range(sims):
        chart = p_chart(rng.binomial(n, 0.78), n, baseline_mask(n, k - 1))
        flagged_latest += any(i == k - 1 for i, _ in chart.flags)
        laney_used += chart.kind is ChartKind.LANEY_P
    rate = flagged_latest / sims
    # Per point, rule 1 alone gives 0.0027 and all four rules about 1/91.75 = 0.011 once the
    # run has started; with estimated limits and early points the rate stays near that.
    assert rate < 0.03
    # The dispersion test behind Laney's widening is at level 0.01 and rarely fires here.
    assert laney_used / sims < 0.02


def test_laney_widening_on_overdispersed_data() -> None:
    """When months vary beyond binomial sampling, the p chart widens (Laney) and keeps false alarms rare."""
    rng = np.random.default_rng(13)
    k, sims = 13, 1500
    n = np.full(k, 2000)
    plain_flags = laney_flags = 0
    for _ in range(sims):
        shares = np.clip(rng.normal(0.78, 0.02, size=k), 0, 1)  # month-to-month variation, no shift
        x = rng.binomial(n, shares)
        base = baseline_mask(n, k - 1)
        plain = p_chart(x, n, base, laney=False)
        auto = p_chart(x, n, base)
        plain_flags += any(i == k - 1 for i, _ in plain.flags)
        laney_flags += any(i == k - 1 for i, _ in auto.flags)
    assert plain_flags / sims > 0.3  # the plain p chart flags a third or more of stable months
    assert laney_flags / sims < 0.05
    last = p_chart(x, n, baseline_mask(n, k - 1))
    assert last.kind is ChartKind.LANEY_P
    note = next(n for n in last.notes if n.code is Note.OVERDISPERSED)
    assert note.facts["ratio"] > 1
    assert "Laney's p' chart" in say(note)


def test_baseline_needs_enough_periods() -> None:
    """Fewer than the minimum baseline periods give a skip code, not limits."""
    with pytest.raises(NotEnoughDataError) as info:
        baseline_mask(np.array([10, 0, 10, 10, 10, 10]), 5)
    assert info.value.reason.code is Skip.NO_BASELINE
    assert info.value.reason.facts == {"n": 4, "minimum": MIN_BASELINE_PERIODS}


def test_every_rule_has_a_name_with_its_source() -> None:
    """Each rule's display name cites the Western Electric rule number."""
    for rule in ControlRule:
        assert "Western Electric rule" in RULE_NAMES[rule]
