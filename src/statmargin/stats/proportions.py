"""Events out of totals (positive out of screened, failed out of inspected), pooled per group.

Each group's rows are pooled into one count of events out of one total; the
tests are then exactly those of the same records listed one per row (the exact
binomial test and Wilson interval for one share; chi-square or Fisher on the
pooled table for groups). The rows are also used to measure whether they vary
more than binomial sampling allows; when they do, the quasi-binomial version
of the test and interval is used instead, with a note.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from scipy import stats

from statmargin.errors import NotEnoughDataError, OptionError
from statmargin.results import Estimate, Result
from statmargin.stats import _common as common
from statmargin.stats.aggregated import (
    Dispersion,
    Pooled,
    extras,
    pairs_level,
    pearson_dispersion,
    pool,
    scale_for,
    split_by,
    summaries,
)
from statmargin.stats.categorical import (
    SMALL_EXPECTED,
    binomial_exact,
    chi_square_independence,
    fisher_exact,
    newcombe_difference_interval,
    wilson_interval,
)
from statmargin.stats.defaults import DEFAULT_RESAMPLES, DEFAULT_SEED
from statmargin.vocabulary import EstimateKind, PMethod, Test
from statmargin.vocabulary.codes import Coded, Refusal, Skip, coded


def share_summaries(
    pooled: Pooled, *, per: float = 1.0, confidence: float = 0.95, dispersion: float | None = None
) -> list[dict[str, Any]]:
    """Per-group events, total, share (times ``per``) and its Wilson interval, for ``Result.groups``.

    Parameters
    ----------
    pooled : Pooled
        Rows pooled per group (binomial).
    per : float
        Shares are multiplied by this (1: a share; 100: a percentage; 1000: per 1,000).
    confidence : float
        Level of each interval.
    dispersion : float, optional
        When given, each interval is the Wilson interval of the effective counts
        (events and total divided by the dispersion).

    Returns
    -------
    list of dict
        label, events, total, rate (the share times ``per``), ci_low, ci_high, per, rows.

    Examples
    --------
    >>> from statmargin.stats.aggregated import pool
    >>> pooled = pool({"North": ([3, 4], [50, 50])}, binomial=True)
    >>> [(g["events"], g["total"], g["rate"]) for g in share_summaries(pooled, per=100)]
    [(7, 100, 7.0)]
    """
    return summaries(pooled, _wilson, per=per, confidence=confidence, scale=dispersion)


def _wilson(events: float, total: float, confidence: float) -> tuple[float, float]:
    return wilson_interval(events, total, confidence=confidence)


def _share_target(value: float) -> float:
    share = float(value)
    if not (math.isfinite(share) and 0.0 < share < 1.0):
        raise OptionError(coded(Refusal.TARGET_SHARE, value=value))
    return share


def one_share(
    events: Any,
    totals: Any,
    *,
    target: float,
    label: str = "event",
    other_label: str | None = None,
    group: str = "all",
    per: float = 1.0,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    seed: int = DEFAULT_SEED,
    strata: Sequence[Any] | None = None,
) -> Result:
    """One share of events out of totals against a target: exact binomial test and Wilson interval.

    Parameters
    ----------
    events, totals : array-like
        Events and totals (people) of each row; rows with a missing value are left out.
    target : float
        Target share, strictly between 0 and 1.
    label, other_label : str
        Words for an event and a non-event (``"positive"``, ``"not positive"``).
    group : str
        Label of the group summary.
    per : float
        Shares in ``groups`` are multiplied by this (100 gives percentages).
    alternative : {"two-sided", "greater", "less"}
        ``greater``: the share is above the target.
    confidence : float
        Level of the interval.
    seed : int
        Seed of the Monte Carlo dispersion test.
    strata : sequence, optional
        A label per row (sites, districts): extra variation is then measured
        within each stratum. Differences between fixed strata are not sampling
        noise for the pooled total (they make its variance smaller than binomial,
        not larger), so only rows that vary within a stratum call for the
        quasi-binomial version.

    Returns
    -------
    Result
        The result of :func:`statmargin.stats.categorical.binomial_exact` on the
        pooled counts (identical to the same records listed one per row), with
        ``groups`` replaced by the pooled events, total and share
        (:func:`share_summaries`; the binomial result's own groups are in
        ``extra["categories"]``) and the row dispersion in ``extra["dispersion"]``.
        When the rows vary more than binomial sampling allows the test is
        QUASI_BINOMIAL (see Notes).

    Notes
    -----
    Quasi-binomial: z = (x - n p0) / sqrt(phi n p0 (1 - p0)) against t on the
    dispersion's df; the interval is the Wilson interval of the effective counts
    x / phi out of n / phi (the effective sample size of Kish 1965, as used for
    intervals of clustered shares by Korn & Graubard 1998); phi is the Pearson
    dispersion of :func:`~statmargin.stats.aggregated.pearson_dispersion`.

    References
    ----------
    Korn, E. L., & Graubard, B. I. (1998). Confidence intervals for proportions with
    small expected number of positive counts estimated from survey data. Survey
    Methodology 24(2), 193-201.
    Williams, D. A. (1982). Extra-binomial variation in logistic linear models.
    Applied Statistics 31(2), 144-148. https://doi.org/10.2307/2347977

    Examples
    --------
    The plant counts of R's ``?binom.test`` example (682 giant plants out of 925
    against 3/4) split into three invented rows give R's p-value 0.3825 exactly:

    >>> result = one_share([220, 231, 231], [300, 312, 313], target=0.75, label="giant")
    >>> result.test, round(result.p_value, 4), round(result.estimate.value, 4)
    ('binomial_exact', 0.3825, 0.7373)
    >>> result.groups[0]["events"], result.groups[0]["total"]
    (682, 925)
    """
    common.check_options(alternative, confidence)
    target = _share_target(target)
    pooled = pool({str(group): (events, totals)}, binomial=True)
    within = pooled if strata is None else pool(split_by(events, totals, strata), binomial=True)
    dispersion = pearson_dispersion(within, seed=seed)
    x, n = int(pooled.events[0]), int(pooled.totals[0])
    notes: list[Coded] = []
    reasons: list[Coded] = []
    phi = scale_for(dispersion, notes, reasons)
    result = binomial_exact(x, n, share=target, label=label, other_label=other_label,
                            alternative=alternative, confidence=confidence)
    if phi is not None:
        df = float(dispersion.df)
        z = (x - n * target) / math.sqrt(phi * n * target * (1.0 - target))
        low, high = wilson_interval(x / phi, n / phi, confidence=confidence, alternative=alternative)
        result.test, result.statistic_name, result.statistic, result.df = Test.QUASI_BINOMIAL, "t", z, df
        result.p_value, result.p_method = common.p_from_t(z, df, alternative), PMethod.ASYMPTOTIC
        result.estimate = Estimate(EstimateKind.SHARE, x / n, low, high, level=str(label))
        result.effect = None
    result.extra["categories"] = result.groups
    result.groups = share_summaries(pooled, per=per, confidence=confidence, dispersion=phi)
    result.reasons.extend(reasons)
    result.notes.extend(notes)
    result.n_excluded = pooled.n_excluded
    result.extra.update(extras(pooled, dispersion, per))
    return result


def pooled_table(pooled: Pooled) -> tuple[np.ndarray, float]:
    """The groups-by-(event, non-event) table of pooled counts and its smallest expected count.

    Examples
    --------
    >>> from statmargin.stats.aggregated import pool
    >>> table, smallest = pooled_table(pool({"A": ([3], [10]), "B": ([5], [10])}, binomial=True))
    >>> table.tolist(), smallest
    ([[3, 7], [5, 5]], 4.0)
    """
    events = pooled.events
    totals = np.rint(pooled.totals).astype(np.int64)
    table = np.column_stack([events, totals - events])
    expected = np.outer(table.sum(axis=1), table.sum(axis=0)) / table.sum()
    return table, float(expected.min())


def compare_shares(
    groups: Mapping[str, tuple[Any, Any]],
    *,
    label: str = "event",
    other_label: str = "no event",
    test: Test | None = None,
    per: float = 1.0,
    alternative: str = "two-sided",
    confidence: float = 0.95,
    seed: int = DEFAULT_SEED,
    resamples: int = DEFAULT_RESAMPLES,
) -> Result:
    """Groups' shares of events out of totals compared on the pooled table.

    Parameters
    ----------
    groups : mapping of label to (events, totals)
        Each group's rows, in display order (two or more groups).
    label, other_label : str
        Column labels of the pooled table (an event, a non-event).
    test : Test, optional
        ``Test.FISHER_EXACT`` or ``Test.CHI_SQUARE_INDEPENDENCE``; by default Fisher's
        exact test for two groups with an expected count below 5 (Cochran's rule,
        common practice, as for record-level tables) and chi-square otherwise.
    per : float
        Shares in ``groups`` are multiplied by this.
    alternative : {"two-sided", "greater", "less"}
        Fisher's test only (the first group's share is higher for ``greater``).
    confidence : float
        Level of the intervals.
    seed, resamples : int
        Monte Carlo settings (chi-square p-value with small expected counts, and the
        dispersion test).

    Returns
    -------
    Result
        The record-level result (:func:`~statmargin.stats.categorical.
        chi_square_independence` or :func:`~statmargin.stats.categorical.fisher_exact`)
        of the pooled table, with ``groups`` giving each group's events, total and
        share (the table's own groups in ``extra["categories"]``). When the rows
        vary more than binomial sampling allows: test QUASI_BINOMIAL, F = X2 / ((k -
        1) phi) on (k - 1, df of phi) and, for two groups, the difference in shares
        with Newcombe's interval on the effective counts.

    Notes
    -----
    Pooling rows and then tabulating gives the same table as tabulating the
    records, so without extra variation every number equals the record-level
    analysis. The quasi-binomial F test divides the Pearson X2 by the dispersion
    (Williams 1982; McCullagh & Nelder 1989, ch. 9).

    References
    ----------
    Williams, D. A. (1982). Extra-binomial variation in logistic linear models.
    Applied Statistics 31(2), 144-148. https://doi.org/10.2307/2347977

    Examples
    --------
    Two invented clinics' monthly rows: the pooled table is [[12, 8], [5, 15]], as in
    the 2x2 example of ``chi_square_independence`` (X2 5.0128, p 0.0252):

    >>> result = compare_shares({"clinic A": ([5, 7], [9, 11]), "clinic B": ([2, 3], [10, 10])},
    ...                         label="attended", other_label="missed")
    >>> result.test, round(result.statistic, 4), round(result.p_value, 4)
    ('chi_square_independence', 5.0128, 0.0252)
    >>> [(g["label"], g["events"], g["total"], g["rate"]) for g in result.groups]
    [('clinic A', 12, 20, 0.6), ('clinic B', 5, 20, 0.25)]
    """
    common.check_options(alternative, confidence)
    pooled = pool(groups, binomial=True)
    if len(pooled.labels) < 2:
        raise NotEnoughDataError(coded(Skip.TOO_FEW_GROUPS, n=len(pooled.labels)))
    dispersion = pearson_dispersion(pooled, seed=seed)
    notes: list[Coded] = []
    reasons: list[Coded] = []
    phi = scale_for(dispersion, notes, reasons)
    table, smallest = pooled_table(pooled)
    columns = [str(label), str(other_label)]
    chosen = test
    if chosen is None:
        chosen = Test.FISHER_EXACT if len(pooled.labels) == 2 and smallest < SMALL_EXPECTED else Test.CHI_SQUARE_INDEPENDENCE
    if chosen is Test.FISHER_EXACT:
        result = fisher_exact(table, pooled.labels, columns, alternative=alternative, confidence=confidence)
    elif chosen is Test.CHI_SQUARE_INDEPENDENCE:
        result = chi_square_independence(table, pooled.labels, columns, confidence=confidence,
                                         seed=seed, resamples=resamples,
                                         monte_carlo="auto" if phi is None else False)
    else:
        raise OptionError(coded(Refusal.SHARE_TEST, test=chosen))
    if phi is not None:
        _quasi_binomial(result, table, pooled, phi, dispersion, alternative, confidence)
    result.extra["categories"] = result.groups
    result.groups = share_summaries(pooled, per=per, confidence=confidence, dispersion=phi)
    result.reasons.extend(reasons)
    result.notes.extend(notes)
    result.n_excluded = pooled.n_excluded
    result.extra.update(extras(pooled, dispersion, per), min_expected=smallest)
    return result


def _quasi_binomial(
    result: Result, table: np.ndarray, pooled: Pooled, phi: float, dispersion: Dispersion,
    alternative: str, confidence: float,
) -> None:
    """Turn a pooled-table result into its quasi-binomial version (F test, effective-count interval)."""
    counts = table.astype(float)
    expected = np.outer(counts.sum(axis=1), counts.sum(axis=0)) / counts.sum()
    x2 = float(((counts - expected) ** 2 / expected).sum())
    k = table.shape[0]
    f = x2 / ((k - 1) * phi)
    result.test, result.statistic_name, result.statistic = Test.QUASI_BINOMIAL, "F", f
    result.df = [float(k - 1), float(dispersion.df)]
    result.p_value = float(stats.f.sf(f, k - 1, dispersion.df))
    result.p_method = PMethod.ASYMPTOTIC
    result.alternative = "two-sided"
    result.effect = None
    result.estimate = None
    if k == 2:
        (x1, x2_), (n1, n2) = pooled.events.tolist(), pooled.totals.tolist()
        low, high = newcombe_difference_interval(x1 / phi, n1 / phi, x2_ / phi, n2 / phi,
                                                 confidence=confidence)
        result.estimate = Estimate(EstimateKind.SHARE_DIFFERENCE, x1 / n1 - x2_ / n2, low, high,
                                   levels=pooled.labels[:2], level=str(table_label(result)))


def table_label(result: Result) -> str:
    """The event label of a pooled-table result (first column of its observed table)."""
    observed = result.extra.get("observed", {})
    labels = observed.get("col_labels") or ["event"]
    return str(labels[0])


def rows_dispersion(groups: Mapping[str, tuple[Any, Any]], *, seed: int = DEFAULT_SEED) -> Dispersion:
    """The Pearson dispersion of binomial rows within groups (see ``aggregated.pearson_dispersion``)."""
    return pearson_dispersion(pool(groups, binomial=True), seed=seed)


__all__ = ["compare_shares", "one_share", "pooled_table", "rows_dispersion", "share_summaries"]



def widest_share_gap(table: Any, labels: Sequence[str], level: str, *, confidence: float = 0.95) -> Estimate | None:
    """The highest group share of the table's first column minus the lowest, with a simultaneous interval.

    Parameters
    ----------
    table : array of shape (k, 2)
        Counts: one row per group, the counted level first (k of 3 or more).
    labels : sequence of str
        The groups, in the table's row order.
    level : str
        The counted level (the first column).
    confidence : float
        Level the interval holds at over all k(k-1)/2 pairs.

    Returns
    -------
    Estimate or None
        Kind LARGEST_SHARE_GAP with levels (highest, lowest) and Newcombe's method-10
        interval at :func:`~statmargin.stats.aggregated.pairs_level`; None for fewer than 3 groups, another
        number of columns, or fewer than two groups with records.

    Examples
    --------
    Three invented sites; the gap is 12/20 - 5/20, and its interval equals
    statsmodels' Newcombe interval at the level for 3 pairs:

    >>> from statsmodels.stats.proportion import confint_proportions_2indep
    >>> gap = widest_share_gap([[12, 8], [5, 15], [9, 11]], ["A", "B", "C"], "yes")
    >>> gap.levels, round(gap.value, 4)
    (('A', 'B'), 0.35)
    >>> low, high = confint_proportions_2indep(12, 20, 5, 20, method="newcomb", alpha=0.05 / 3)
    >>> bool(abs(gap.ci_low - low) < 1e-12 and abs(gap.ci_high - high) < 1e-12)
    True
    """
    counts = np.asarray(table, dtype=float)
    if counts.ndim != 2 or counts.shape[0] < 3 or counts.shape[1] != 2:
        return None
    totals = counts.sum(axis=1)
    present = np.flatnonzero(totals > 0)
    if present.size < 2:
        return None
    shares = counts[present, 0] / totals[present]
    high, low = int(present[np.argmax(shares)]), int(present[np.argmin(shares)])
    if high == low:
        high, low = int(present[0]), int(present[1])
    value = counts[high, 0] / totals[high] - counts[low, 0] / totals[low]
    ci_low, ci_high = newcombe_difference_interval(counts[high, 0], totals[high], counts[low, 0], totals[low],
                                                   confidence=pairs_level(confidence, counts.shape[0]))
    return Estimate(EstimateKind.LARGEST_SHARE_GAP, float(value), float(ci_low), float(ci_high),
                    levels=(str(labels[high]), str(labels[low])), level=level)
