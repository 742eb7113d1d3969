"""Run a plan: each analysis by its design, p-values adjusted across the run, then follow-ups.

``run_answers`` is what the workbook jobs call (the sheets need each result's
prepared data); ``run_plan`` returns just the results; ``analyze`` is the
Python API, the same question ``statmargin test`` asks. Degenerate data never
crash a run: the analysis is reported with ``skipped`` set to its reason code.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from ..errors import OptionError
from ..plan.clean import prepare_table
from ..plan.expand import Analysis, expand
from ..plan.model import Plan, Settings
from ..read.table import Table
from ..results import Result
from ..stats.adjust import adjust_by_family
from ..words import refusals
from .base import DesignSpec, Prepared, clean_numbers
from .question import ColumnTypes, build_question
from .registry import spec_for


@dataclass
class Answer:
    """One analysis answered: its result, the data it ran on and the design that ran it."""

    result: Result
    prepared: Prepared
    spec: DesignSpec


def run_answers(
    table: Table, plan: Plan, *, progress: Callable[[int, int], None] | None = None,
    followup_progress: Callable[[int, int], None] | None = None,
) -> list[Answer]:
    """Run every analysis of a plan, adjust p-values across the run, add follow-ups.

    Parameters
    ----------
    table : read.table.Table
        The data as read.
    plan : plan.model.Plan
        Roles, choices and settings.
    progress : callable, optional
        Called with (analyses done, analyses in all) after each analysis.
    followup_progress : callable, optional
        Called the same way as each analysis's follow-ups are done (they can take
        longer than the analyses on big sheets).

    Returns
    -------
    list of Answer
        One per analysis (see ``plan.expand``), skipped ones included.

    Notes
    -----
    Look-alike labels of the used columns are merged first (``plan.clean``), and
    the cells each column's type leaves out are added to ``table.notes``.
    The adjustment family is set by ``settings.family``
    (``stats.adjust.adjust_by_family``): every non-skipped result of the run
    (default), the results of each outcome, or none. A period analysis joins it
    with its trend test's p-value. Follow-ups run only when the adjusted p is
    below ``settings.alpha``; which ones is up to each design module (the latest-
    period comparisons of a period analysis always run, adjusted within it).
    """
    settings = plan.settings
    analyses = expand(plan, table)
    prepare_table(table, plan)
    types = ColumnTypes(table)
    answers: list[Answer] = []
    for analysis in analyses:
        question = build_question(analysis, table, settings, types)
        spec = spec_for(question)
        result, prepared = spec.answer(question)
        answers.append(Answer(result, prepared, spec))
        if progress is not None:
            progress(len(answers), len(analyses))
    adjust_by_family([a.result for a in answers], settings.adjust, settings.family)
    for done, answer in enumerate(answers, start=1):
        _follow_up(answer, settings)
        if followup_progress is not None:
            followup_progress(done, len(answers))
    return answers


def run_analysis(table: Table, analysis: Analysis, settings: Settings) -> tuple[Result, Prepared]:
    """Answer one analysis on its own (before adjustment): the Result and the data it ran on."""
    question = build_question(analysis, table, settings, ColumnTypes(table))
    return spec_for(question).answer(question)


def run_plan(
    table: Table, plan: Plan, *, progress: Callable[[int, int], None] | None = None
) -> list[Result]:
    """The results of ``run_answers``, in the same order."""
    return [answer.result for answer in run_answers(table, plan, progress=progress)]


def _follow_up(answer: Answer, settings: Settings) -> None:
    result = answer.result
    if result.skipped is not None or result.p_adjusted is None or result.p_adjusted >= settings.alpha:
        return
    followups, reasons = answer.spec.follow_up(result, answer.prepared, settings)
    if followups:
        result.followups = followups
        result.reasons.extend(reasons)
        clean_numbers(result)


# ---------------------------------------------------------------- public API


def analyze(
    data: Any,
    *,
    outcome: str | Sequence[str] = (),
    by: str | Sequence[str] | None = None,
    against: str | float | Mapping[str, str] | None = None,
    pairing_key: str | None = None,
    paired_with: str | Mapping[str, str] | None = None,
    treat: Mapping[str, str] | Iterable[str] | None = None,
    shape: str = "auto",
    alternative: str = "two-sided",
    confidence: float = 0.95,
    adjust: str = "holm",
    event: str | Mapping[str, str] | None = None,
    events: str | Sequence[str] = (),
    out_of: str | Mapping[str, str] | None = None,
    per: str | Mapping[str, str] | None = None,
    per_unit: str | float | None = None,
    count: str | None = None,
    period: str | None = None,
    period_length: str | None = None,
    adjust_across: str | None = None,
    series_by_group: bool = False,
    paired_by: str | None = None,
) -> list[Result]:
    """Run the tests that fit the data and return one Result per question.

    Parameters
    ----------
    data : pandas.DataFrame or read.table.Table
        The data, one row per record.
    outcome : str or list of str
        Outcome column(s).
    by : str or list of str, optional
        Compare-by column(s).
    against : str, float or mapping, optional
        One-sample comparison: a number for a continuous outcome, ``"LABEL=SHARE"``
        or ``"A=0.25,B=0.25,C=0.5"`` for a categorical one; ``"COL=VALUE"`` or a
        mapping {column: value} names the outcome it is for.
    pairing_key : str, optional
        Pairing key for long-form paired data; needs ``by`` (a two-level column
        saying which measurement each row is). ``paired_by`` is its old name,
        kept for one release.
    paired_with : str or mapping, optional
        Second measurement column for wide-form paired data (``"COL=COL2"`` or a
        mapping names the outcome it pairs).
    treat : mapping or iterable of "COL=TYPE", optional
        Measurement type overrides: categorical, continuous or ordinal. An ordinal
        type may list its labels lowest first: ``"pain=ordinal:none,mild,severe"``.
    shape : {"auto", "normal", "rank"}
        Let the shape checks decide, or fix the test family.
    alternative : {"two-sided", "greater", "less"}
        Direction of the question, passed to every test that has one (see the
        ``alternative`` of each method); comparisons of three or more groups and
        chi-square tests are always two-sided.
    confidence : float
        Confidence level of intervals, between 0 and 1.
    adjust : {"holm", "benjamini-hochberg", "none"}
        P-value adjustment across the returned results.
    event : str or mapping, optional
        The event level of a two-level outcome (``"Yes"``, ``"COL=Fail"``): the
        share readings report; inferred from common words ("Yes", "Pass",
        "Positive", "1", ...) when not given.
    events, out_of, per, per_unit : optional
        Aggregated rows: columns of event counts, each out of a column of totals
        (``out_of``) or per a column of person-time or population (``per``), with
        rates given ``per_unit`` (``"per 1,000"``).
    count : str, optional
        A frequency weight: each row stands for that many records.
    period, period_length : str, optional
        The date or period column, and the length of a period (week, month,
        quarter, year; month by default). Each outcome is then also followed
        over time: a series by period with its trend, unusual periods, and the
        latest period against the previous one and a year earlier.
    series_by_group : bool
        With ``period``: also a series for each group of each ``by`` column.
    adjust_across : {"this run", "each outcome", "none"}, optional
        Which results share one p-value adjustment (default: all of them).

    Returns
    -------
    list of Result
        In the order: each outcome against its value, with its pair, then by each
        compare-by column.

    Raises
    ------
    ColumnNotFoundError, OptionError, RoleError
        One-line messages for names or options that do not fit; the same as
        ``statmargin test`` gives for the same options.

    Notes
    -----
    Each question is matched to a design (one sample, two groups, several groups,
    two measurements, paired, counts); with ``shape="auto"`` the shape checks pick
    the test that assumes normal-shaped data or its rank-based counterpart, and
    the reasons are kept in ``Result.reasons``. Data that cannot support a test
    give a skipped Result with a plain reason instead of an error. All p-values
    of the returned results form one family for ``adjust``; readings and
    cautions are added as the command line shows them. Results inform, they do
    not decide: decisions about people's health or services belong to qualified
    analysts and local policy.

    References
    ----------
    Holm, S. (1979). A simple sequentially rejective multiple test procedure.
    Scandinavian Journal of Statistics 6(2), 65-70.
    Delacre, M., Lakens, D., & Leys, C. (2017). Why psychologists should by
    default use Welch's t-test instead of Student's t-test. International Review
    of Social Psychology 30(1), 92-101. https://doi.org/10.5334/irsp.82

    Examples
    --------
    R's ``sleep`` data (datasets::sleep): extra hours of sleep of ten patients
    under two drugs, in long form.

    >>> import math
    >>> import pandas as pd
    >>> from scipy import stats
    >>> drug1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
    >>> drug2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4]
    >>> sleep = pd.DataFrame({"extra": drug1 + drug2, "group": ["1"] * 10 + ["2"] * 10,
    ...                       "ID": list(range(1, 11)) * 2})

    As two independent groups, both groups look close to normal, so Welch's
    t-test is chosen:

    >>> [result] = analyze(sleep, outcome="extra", by="group")
    >>> result.test, round(result.p_value, 4), round(result.p_adjusted, 4)
    ('welch_t', 0.0794, 0.0794)
    >>> math.isclose(result.p_value, stats.ttest_ind(drug1, drug2, equal_var=False).pvalue)
    True

    Paired by patient, the differences are skewed, so the signed-rank test is
    chosen (one zero difference is dropped):

    >>> [result] = analyze(sleep, outcome="extra", by="group", pairing_key="ID")
    >>> result.test, result.design, round(result.p_value, 4)
    ('wilcoxon_signed_rank', 'paired_continuous', 0.0091)
    >>> scipy_p = stats.wilcoxon(drug1, drug2, correction=True, method="approx").pvalue
    >>> math.isclose(result.p_value, scipy_p)
    True
    """
    from ..options import make_settings, plan_from_options
    from ..words.explain import apply as explain_results

    table = data if isinstance(data, Table) else _table_from(data)
    against_text = against if isinstance(against, (Mapping, type(None))) else str(against)
    settings = make_settings(alternative=alternative, confidence=confidence, adjust=adjust, family=adjust_across,
                             grain=period_length, per_unit=per_unit, series_by_group=series_by_group)
    plan = plan_from_options(
        outcome, by, against=against_text, pairing_key=pairing_key or paired_by, paired_with=paired_with, treat=treat,
        shape=shape, settings=settings, event=event, events=events, out_of=out_of, per=per, count=count,
        period=period,
    )
    results = run_plan(table, plan)
    explain_results(results, plan.settings)  # readings and cautions, as the command line shows them
    return results


def _table_from(data: Any) -> Table:
    try:
        import pandas as pd
    except ImportError:  # pragma: no cover - pandas is a dependency
        raise OptionError(refusals.not_a_frame()) from None
    if not isinstance(data, pd.DataFrame):
        raise OptionError(refusals.not_a_frame(type(data).__name__))
    return Table.from_frame(data)
