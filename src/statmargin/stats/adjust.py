"""Multiple-comparison adjustment of p-values across one run.

A run asks many questions at once; the family whose error rate is controlled is
every non-skipped result in that run. Holm controls the family-wise error rate,
Benjamini-Hochberg the false discovery rate, "none" leaves p-values as they are.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from statmargin.errors import OptionError
from statmargin.results import Result
from statmargin.vocabulary import AdjustFamily, AdjustMethod
from statmargin.vocabulary.codes import Refusal, coded


def _as_method(method: AdjustMethod | str) -> AdjustMethod:
    """The AdjustMethod for a name as typed by a user or passed by the engine."""
    if isinstance(method, AdjustMethod):
        return method
    try:
        return AdjustMethod(str(method).strip().lower())
    except ValueError:
        raise OptionError(coded(Refusal.UNKNOWN_ADJUSTMENT, given=method)) from None


def _holm(p: np.ndarray) -> np.ndarray:
    """Holm step-down adjusted p-values for a 1-D array with no missing values."""
    m = p.size
    order = np.argsort(p, kind="stable")
    scaled = (m - np.arange(m)) * p[order]  # (m - i + 1) p_(i), i = 1..m
    stepped = np.minimum(1.0, np.maximum.accumulate(scaled))
    out = np.empty(m)
    out[order] = stepped
    return out


def _benjamini_hochberg(p: np.ndarray) -> np.ndarray:
    """Benjamini-Hochberg step-up adjusted p-values for a 1-D array with no missing values."""
    m = p.size
    order = np.argsort(p, kind="stable")[::-1]  # largest first
    rank = m - np.arange(m)  # rank i of each p in ascending order
    scaled = m / rank * p[order]
    stepped = np.minimum(1.0, np.minimum.accumulate(scaled))
    out = np.empty(m)
    out[order] = stepped
    return out


def adjust_p(p: Sequence[float | None], method: AdjustMethod | str) -> list[float | None]:
    """Adjust a family of p-values for multiple comparisons.

    Parameters
    ----------
    p : sequence of float or None
        Raw p-values. ``None`` (or NaN) marks a question with no p-value; it stays
        ``None`` and is not counted in the family size.
    method : AdjustMethod or str
        ``"holm"``, ``"benjamini-hochberg"`` or ``"none"``.

    Returns
    -------
    list of float or None
        Adjusted p-values in the input order, each in [0, 1].

    Raises
    ------
    OptionError
        If the method is unknown or a p-value lies outside [0, 1].

    Notes
    -----
    Holm: sort the m p-values ascending, p_(1) <= ... <= p_(m); the adjusted
    value of p_(i) is max over j <= i of min(1, (m - j + 1) p_(j)).
    Benjamini-Hochberg: the adjusted value of p_(i) is min over j >= i of
    min(1, m p_(j) / j). Both match R's ``p.adjust``, including its handling of
    missing values (excluded from m).

    References
    ----------
    Holm, S. (1979). A simple sequentially rejective multiple test procedure.
    Scandinavian Journal of Statistics 6(2), 65-70.
    Benjamini, Y. and Hochberg, Y. (1995). Controlling the false discovery rate.
    Journal of the Royal Statistical Society B 57(1), 289-300.
    https://doi.org/10.1111/j.2517-6161.1995.tb02031.x

    Examples
    --------
    Four p-values and one question without a p-value (it is not counted):

    >>> adjust_p([0.01, 0.04, 0.03, 0.2, None], "holm")
    [0.04, 0.09, 0.09, 0.2, None]

    By hand: sorted 0.01, 0.03, 0.04, 0.2 times 4, 3, 2, 1 gives 0.04, 0.09, 0.08,
    0.2; the running maximum makes the third 0.09. Benjamini-Hochberg agrees with
    SciPy's ``false_discovery_control``:

    >>> import numpy as np
    >>> from scipy import stats
    >>> p = [0.01, 0.04, 0.03, 0.2]
    >>> [round(v, 4) for v in adjust_p(p, "benjamini-hochberg")]
    [0.04, 0.0533, 0.0533, 0.2]
    >>> bool(np.allclose(adjust_p(p, "benjamini-hochberg"), stats.false_discovery_control(p)))
    True
    """
    chosen = _as_method(method)
    given = [(i, float(v)) for i, v in enumerate(p) if v is not None and not math.isnan(float(v))]
    present = [i for i, _ in given]
    values = np.array([v for _, v in given], dtype=float)
    if values.size and (values.min() < 0.0 or values.max() > 1.0):
        raise OptionError(f"p outside 0 to 1: {values.min()!r}, {values.max()!r}")  # a caller's bug
    if chosen is AdjustMethod.HOLM:
        adjusted = _holm(values)
    elif chosen is AdjustMethod.BH:
        adjusted = _benjamini_hochberg(values)
    else:
        adjusted = values.copy()
    out: list[float | None] = [None] * len(p)
    for i, value in zip(present, adjusted, strict=True):
        out[i] = float(value)
    return out


def adjust_results(results: list[Result], method: AdjustMethod | str) -> list[Result]:
    """Set ``p_adjusted`` on every result of a run, treating the run as one family.

    Parameters
    ----------
    results : list of Result
        All results of one run. Skipped results and results without a p-value
        get ``p_adjusted = None`` and do not count towards the family size.
    method : AdjustMethod or str
        ``"holm"``, ``"benjamini-hochberg"`` or ``"none"``.

    Returns
    -------
    list of Result
        The same objects, changed in place, in the same order.

    Notes
    -----
    Follow-up comparisons inside a result carry their own within-test
    adjustment and are left alone.

    References
    ----------
    Holm, S. (1979). A simple sequentially rejective multiple test procedure.
    Scandinavian Journal of Statistics 6(2), 65-70.
    Benjamini, Y. and Hochberg, Y. (1995). Controlling the false discovery rate.
    Journal of the Royal Statistical Society B 57(1), 289-300.
    https://doi.org/10.1111/j.2517-6161.1995.tb02031.x

    Examples
    --------
    Three results of one run, one of them skipped (p-values invented):

    >>> from statmargin.results import Result
    >>> run = [
    ...     Result(outcome="wait", exposure="site", design="multi_group_continuous", test="kruskal_wallis",
    ...            p_value=0.02),
    ...     Result(outcome="age", exposure="site", design="multi_group_continuous", test="one_way_anova",
    ...            p_value=0.30),
    ...     Result(outcome="visits", exposure="site", design="two_categorical", test=None,
    ...            skipped="a category has no counts"),
    ... ]
    >>> [r.p_adjusted for r in adjust_results(run, "holm")]
    [0.04, 0.3, None]
    """
    raw = [None if r.skipped is not None else r.p_value for r in results]
    adjusted = adjust_p(raw, method)
    for result, value in zip(results, adjusted, strict=True):
        result.p_adjusted = value
    return results


def _as_family(family: AdjustFamily | str) -> AdjustFamily:
    """The AdjustFamily for a setting as typed on the roles sheet or passed by the engine."""
    if isinstance(family, AdjustFamily):
        return family
    try:
        return AdjustFamily(" ".join(str(family).split()).lower())
    except ValueError:
        raise OptionError(coded(Refusal.UNKNOWN_FAMILY, given=str(family))) from None


def adjust_by_family(
    results: list[Result], method: AdjustMethod | str, family: AdjustFamily | str = AdjustFamily.RUN
) -> list[Result]:
    """Set ``p_adjusted`` with the family the user fixed: the whole run, each outcome, or none.

    Parameters
    ----------
    results : list of Result
        All results of one run.
    method : AdjustMethod or str
        ``"holm"``, ``"benjamini-hochberg"`` or ``"none"``.
    family : AdjustFamily or str
        ``"this run"``: every result is one family (``adjust_results``);
        ``"each outcome"``: the results about one outcome column form a family,
        so adding a question about another outcome leaves these adjusted
        p-values where they were; ``"none"``: no adjustment (``p_adjusted``
        equals the p-value).

    Returns
    -------
    list of Result
        The same objects, changed in place, in the same order.

    Notes
    -----
    The family controls what the error rate is promised over: Holm by outcome
    keeps the family-wise error rate at the level for each outcome's questions,
    not for the run as a whole (the header states the run's choice).

    Examples
    --------
    Two outcomes, Holm by outcome: wait's p-values 0.01 and 0.04 become 0.02
    and 0.04 (2 x 0.01, then max(0.02, 1 x 0.04)); score's single 0.03 stays.

    >>> from statmargin.results import Result
    >>> run = [Result("wait", "site", "two_group_continuous", "welch_t", p_value=0.01),
    ...        Result("score", "site", "two_group_continuous", "welch_t", p_value=0.03),
    ...        Result("wait", "type", "two_group_continuous", "welch_t", p_value=0.04)]
    >>> [r.p_adjusted for r in adjust_by_family(run, "holm", "each outcome")]
    [0.02, 0.03, 0.04]
    >>> [r.p_adjusted for r in adjust_by_family(run, "holm", "this run")]
    [0.03, 0.06, 0.06]
    """
    chosen = _as_family(family)
    if chosen is AdjustFamily.RUN:
        return adjust_results(results, method)
    if chosen is AdjustFamily.NONE:
        return adjust_results(results, AdjustMethod.NONE)
    _as_method(method)  # refuse an unknown method even when every family has one result
    by_outcome: dict[str, list[Result]] = {}
    for result in results:
        by_outcome.setdefault(result.outcome, []).append(result)
    for members in by_outcome.values():
        adjust_results(members, method)
    return results


def matched_levels(p: Sequence[float | None], method: AdjustMethod | str, alpha: float) -> list[float | None]:
    """Per-comparison levels whose intervals exclude the null exactly when the adjusted p < alpha.

    Parameters
    ----------
    p : sequence of float or None
        Raw p-values of a family (None is left out, as in :func:`adjust_p`).
    method : AdjustMethod or str
        ``"holm"``, ``"benjamini-hochberg"`` or ``"none"``.
    alpha : float
        The level at which adjusted p-values are read.

    Returns
    -------
    list of float or None
        alpha_i for each comparison: a 1 - alpha_i interval that is the inversion of the
        comparison's own test excludes the null exactly when ``adjust_p`` gives p < alpha.

    Notes
    -----
    Holm (step-down): the j-th smallest p, when the procedure reaches it and rejects,
    is compared with alpha / (m - j + 1), so that is its level; every comparison
    after the first one kept gets alpha / (m - s + 1), s that first kept step, which its
    raw p cannot beat. Benjamini-Hochberg: with R the comparisons selected, every
    interval has level 1 - R alpha / m (alpha / m when R = 0), the false-coverage-rate
    intervals of Benjamini & Yekutieli (2005), which match the selection exactly.
    "none": alpha for all. These intervals agree with their adjusted p by
    construction; Holm-matched ones are not simultaneous intervals (each has at
    least 1 - alpha coverage on its own), while Bonferroni's alpha / m would be.

    References
    ----------
    Holm, S. (1979). Scandinavian Journal of Statistics 6(2), 65-70.
    Benjamini, Y., & Yekutieli, D. (2005). False discovery rate-adjusted multiple
    confidence intervals for selected parameters. JASA 100(469):71-81.
    doi:10.1198/016214504000001907

    Examples
    --------
    >>> p = [0.01, 0.04, 0.03, 0.2]
    >>> adjust_p(p, "holm")
    [0.04, 0.09, 0.09, 0.2]
    >>> matched_levels(p, "holm", 0.05)
    [0.0125, 0.016666666666666666, 0.016666666666666666, 0.016666666666666666]
    """
    chosen = _as_method(method)
    given = [(i, float(v)) for i, v in enumerate(p) if v is not None and not math.isnan(float(v))]
    out: list[float | None] = [None] * len(p)
    m = len(given)
    if m == 0:
        return out
    if chosen is AdjustMethod.NONE:
        for i, _ in given:
            out[i] = alpha
        return out
    order = sorted(given, key=lambda item: item[1])
    if chosen is AdjustMethod.HOLM:
        stopped: float | None = None
        for j, (i, value) in enumerate(order):
            level = alpha / (m - j)
            if stopped is None and value < level:
                out[i] = level
            else:
                stopped = level if stopped is None else stopped
                out[i] = stopped
        return out
    selected = max((j + 1 for j, (_, value) in enumerate(order) if value < (j + 1) * alpha / m), default=0)
    level = max(selected, 1) * alpha / m
    for i, _ in given:
        out[i] = level
    return out
