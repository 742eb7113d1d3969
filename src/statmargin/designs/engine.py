"""Run analyses: prepare the values, choose the test, call it, adjust across the run, follow up.

``analyze`` is the Python API (it mirrors ``statmargin test``); ``run_plan`` is what
the workbook pipeline calls. Degenerate data never crash a run: the analysis is
reported with ``skipped`` set to the plain reason and ``test`` set to the test
that would have run.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import NotEnoughDataError, OptionError, RoleError
from ..plan.expand import Analysis, expand, parse_against
from ..plan.model import ColumnChoice, Plan, Settings
from ..plan.types import ColumnValues, TypeInfo, category_labels, infer_type, usable_values
from ..read.table import Column, Table
from ..results import Effect, Result
from ..stats.shape import assess, count_check, expected_counts, spread_check
from ..vocabulary import (
    AdjustMethod,
    Alternative,
    Design,
    EffectKind,
    MeasureType,
    Role,
    ShapeHandling,
    Test,
)
from ..vocabulary.codes import Coded, Count, Note, Reason, Skip, coded
from .choose import DECISION_TABLE, Choice, choose_test

USABLE_TYPES = (MeasureType.CONTINUOUS, MeasureType.CATEGORICAL, MeasureType.ORDINAL)
RESIDUAL_FLAG = 2.0  # |adjusted residual| > 2 flags a cell (common practice; Agresti 2013, Categorical Data Analysis, 3rd ed., sec. 3.3.1)

SHAPE_WORDS = {
    "auto": ShapeHandling.AUTO,
    "normal": ShapeHandling.NORMAL,
    "rank": ShapeHandling.RANK,
    ShapeHandling.NORMAL.value: ShapeHandling.NORMAL,
    ShapeHandling.RANK.value: ShapeHandling.RANK,
}
TREAT_WORDS = {
    "categorical": MeasureType.CATEGORICAL,
    "continuous": MeasureType.CONTINUOUS,
    "ordinal": MeasureType.ORDINAL,
}


@dataclass
class _Prepared:
    """What a follow-up needs after adjustment: the groups or the table behind a result."""

    groups: dict[str, np.ndarray] = field(default_factory=dict)
    table: np.ndarray | None = None
    row_labels: list[str] = field(default_factory=list)
    col_labels: list[str] = field(default_factory=list)


# ---------------------------------------------------------------- public API


def analyze(
    data: Any,
    *,
    outcome: str | Sequence[str],
    by: str | Sequence[str] | None = None,
    against: str | float | None = None,
    paired_by: str | None = None,
    paired_with: str | None = None,
    treat: Mapping[str, str] | Iterable[str] | None = None,
    shape: str = "auto",
    alternative: str = "two-sided",
    confidence: float = 0.95,
    adjust: str = "holm",
) -> list[Result]:
    """Run the tests that fit the data and return one Result per question.

    Parameters
    ----------
    data : pandas.DataFrame or table.Table
        The data, one row per record.
    outcome : str or list of str
        Outcome column(s).
    by : str or list of str, optional
        Compare-by column(s).
    against : str or float, optional
        One-sample comparison: a number for a continuous outcome, ``"LABEL=SHARE"``
        or ``"A=0.25,B=0.25,C=0.5"`` for a categorical one.
    paired_by : str, optional
        Pairing key for long-form paired data; needs ``by`` (a two-level column
        saying which measurement each row is).
    paired_with : str, optional
        Second measurement column for wide-form paired data.
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

    Returns
    -------
    list of Result
        In the order: each outcome against its value, with its pair, then by each
        compare-by column.

    Raises
    ------
    ColumnNotFoundError, OptionError, RoleError
        One-line messages for names or options that do not fit.

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

    >>> [result] = analyze(sleep, outcome="extra", by="group", paired_by="ID")
    >>> result.test, result.design, round(result.p_value, 4)
    ('wilcoxon_signed_rank', 'paired_continuous', 0.0091)
    >>> scipy_p = stats.wilcoxon(drug1, drug2, correction=True, method="approx").pvalue
    >>> math.isclose(result.p_value, scipy_p)
    True
    """
    table = data if isinstance(data, Table) else _table_from(data)
    outcomes = [outcome] if isinstance(outcome, str) else list(outcome)
    bys = [] if by is None else [by] if isinstance(by, str) else list(by)
    plan = build_plan(
        outcomes,
        bys,
        against=None if against is None else str(against),
        paired_by=paired_by,
        paired_with=paired_with,
        treat=parse_treat(treat),
        shape=shape,
        settings=make_settings(alternative=alternative, confidence=confidence, adjust=adjust),
    )
    results = run_plan(table, plan)
    from ..words.explain import apply as explain_results

    explain_results(results, plan.settings)  # readings and cautions, as the command line shows them
    return results


def _table_from(data: Any) -> Table:
    try:
        import pandas as pd
    except ImportError:  # pragma: no cover - pandas is a dependency
        raise OptionError("data must be a pandas DataFrame or a statmargin Table.") from None
    if not isinstance(data, pd.DataFrame):
        raise OptionError(f"data must be a pandas DataFrame or a statmargin Table, not {type(data).__name__}.")
    return Table.from_frame(data)


def make_settings(*, alternative: str = "two-sided", confidence: float = 0.95, adjust: str = "holm") -> Settings:
    """Settings from plain option values, with one-line errors for values that do not fit."""
    try:
        alt = Alternative(str(alternative).strip().lower())
    except ValueError:
        raise OptionError(
            f"Unknown alternative {alternative!r}; use two-sided, greater or less."
        ) from None
    try:
        adj = AdjustMethod(str(adjust).strip().lower())
    except ValueError:
        raise OptionError(
            f"Unknown adjustment {adjust!r}; use holm, benjamini-hochberg or none."
        ) from None
    if isinstance(confidence, bool) or not isinstance(confidence, (int, float)) or not 0.0 < float(confidence) < 1.0:
        raise OptionError(f"Confidence {confidence!r} must be a number between 0 and 1, such as 0.95.")
    return Settings(confidence=float(confidence), adjust=adj, alternative=alt)


def parse_treat(treat: Mapping[str, str] | Iterable[str] | None) -> dict[str, tuple[MeasureType, list[str] | None]]:
    """Parse type overrides ("COL=TYPE" or a mapping) into types and optional ordinal orders."""
    if treat is None:
        return {}
    pairs: list[tuple[str, str]] = []
    if isinstance(treat, Mapping):
        pairs = [(str(k), str(v)) for k, v in treat.items()]
    else:
        for item in treat:
            name, sep, kind = str(item).rpartition("=") if ":" not in str(item) else _split_treat(str(item))
            if not sep or not name.strip():
                raise OptionError(f"Type override {item!r} is not COL=TYPE (e.g. site=categorical).")
            pairs.append((name.strip(), kind.strip()))
    out: dict[str, tuple[MeasureType, list[str] | None]] = {}
    for name, kind in pairs:
        word, _, order_text = kind.partition(":")
        word = word.strip().lower()
        if word not in TREAT_WORDS:
            raise OptionError(
                f"Type {word!r} for {name!r} is not known; use categorical, continuous or ordinal."
            )
        order = [p.strip() for p in order_text.split(",") if p.strip()] or None
        if order and TREAT_WORDS[word] is MeasureType.CONTINUOUS:
            raise OptionError(f"A level order was given for {name!r}, but only categories and ordinal columns have levels.")
        out[name] = (TREAT_WORDS[word], order)
    return out


def _split_treat(item: str) -> tuple[str, str, str]:
    """Split "COL=ordinal:a,b=c" at the '=' before the first ':' (labels may hold '=')."""
    head, colon, tail = item.partition(":")
    name, sep, kind = head.rpartition("=")
    return name, sep, kind + colon + tail


def build_plan(
    outcomes: Sequence[str],
    bys: Sequence[str] = (),
    *,
    against: str | None = None,
    paired_by: str | None = None,
    paired_with: str | None = None,
    treat: Mapping[str, tuple[MeasureType, list[str] | None]] | None = None,
    shape: str = "auto",
    settings: Settings | None = None,
) -> Plan:
    """A roles.Plan from command-line style options (shared by ``analyze`` and the CLI)."""
    if not outcomes:
        raise OptionError("Name at least one outcome column.")
    handling = SHAPE_WORDS.get(str(shape).strip().lower())
    if handling is None:
        raise OptionError(f"Shape handling {shape!r} is not known; use auto, normal or rank.")
    if paired_by and not bys:
        raise OptionError("--paired-by needs --by: the column saying which measurement each row is.")
    treat = dict(treat or {})
    choices: dict[str, ColumnChoice] = {}

    def choice(name: str, role: Role) -> ColumnChoice:
        if name in choices:
            if choices[name].role is not role:
                raise OptionError(f"Column {name!r} is named twice with different roles; use it once.")
            return choices[name]
        kind, order = treat.get(name, (None, None))
        c = ColumnChoice(name, role=role, treat_as=kind, order=order)
        choices[name] = c
        return c

    for name in outcomes:
        c = choice(name, Role.OUTCOME)
        c.shape = handling
        c.against = against
        c.paired_with = paired_with
    for name in bys:
        choice(name, Role.COMPARE_BY)
    if paired_by:
        choice(paired_by, Role.PAIRING_KEY)
    if paired_with and paired_with not in choices:
        kind, order = treat.get(paired_with, (None, None))
        choices[paired_with] = ColumnChoice(paired_with, role=Role.IGNORE, treat_as=kind, order=order)
    unknown = [n for n in treat if n not in choices]
    if unknown:
        raise OptionError(f"A type is given for {unknown[0]!r}, which is not one of the named columns.")
    return Plan(columns=list(choices.values()), settings=settings or Settings())


def run_plan(
    table: Table, plan: Plan, *, progress: Callable[[int, int], None] | None = None
) -> list[Result]:
    """Run every analysis of a plan, adjust p-values across the run, add follow-ups.

    Parameters
    ----------
    table : table.Table
        The data as read.
    plan : roles.Plan
        Roles, choices and settings.
    progress : callable, optional
        Called with (analyses done, analyses in all) after each analysis.

    Returns
    -------
    list of Result
        One per analysis (see ``plan.expand``), skipped ones included.

    Notes
    -----
    The adjustment family is every non-skipped result of the run (``adjust.adjust_results``).
    Follow-ups run only when the adjusted p is below ``settings.alpha``: Tukey HSD after
    one-way ANOVA, Games-Howell after Welch's ANOVA, Dunn (Holm within the test) after
    Kruskal-Wallis, adjusted residuals for tables larger than 2x2.
    """
    from ..stats.adjust import adjust_results

    settings = plan.settings
    analyses = expand(plan, table)
    done = []
    for analysis in analyses:
        done.append(run_analysis(table, analysis, settings))
        if progress is not None:
            progress(len(done), len(analyses))
    results = [r for r, _ in done]
    adjust_results(results, settings.adjust)
    for result, prepared in done:
        _follow_up(result, prepared, settings)
    return results


# ---------------------------------------------------------------- one analysis


def run_analysis(table: Table, analysis: Analysis, settings: Settings) -> tuple[Result, _Prepared]:
    """Run one analysis (before adjustment); returns the Result and what follow-ups need."""
    out_col = table.column(analysis.outcome)
    out_info = _usable_type(out_col, analysis.outcome_choice, "an outcome")
    handling = analysis.outcome_choice.shape if analysis.outcome_choice else ShapeHandling.AUTO
    if analysis.against is not None:
        return _one_sample(out_col, out_info, analysis, handling, settings)
    if analysis.paired_with:
        other = table.column(analysis.paired_with)
        partner = analysis.by_choice
        if (partner is None or partner.treat_as is None) and analysis.outcome_choice is not None:
            # The second measurement is the same kind of value as the first unless said otherwise.
            first = analysis.outcome_choice
            partner = ColumnChoice(other.name, treat_as=first.treat_as, order=first.order)
        other_info = _usable_type(other, partner, "a paired measurement")
        return _paired_wide(out_col, out_info, other, other_info, handling, settings, rows=table.rows)
    if analysis.by is None:
        raise OptionError(
            f"Nothing to compare {analysis.outcome} with: give a compare-by column, a comparison"
            " value or a paired measurement."
        )
    by_col = table.column(analysis.by)
    by_info = _usable_type(by_col, analysis.by_choice, "a compare-by column")
    if analysis.pairing_key and by_info.type is MeasureType.CATEGORICAL:
        key_col = table.column(analysis.pairing_key)
        return _paired_long(out_col, out_info, by_col, by_info, key_col, handling, settings)
    return _by(out_col, out_info, by_col, by_info, handling, settings)


def _usable_type(column: Column, choice: ColumnChoice | None, what: str) -> TypeInfo:
    info = infer_type(column, choice)
    if info.type is MeasureType.EMPTY:
        raise RoleError(
            f"Column {column.name!r} has no values, so it cannot be {what}; check the column name and the header row."
        )
    if info.type not in USABLE_TYPES:
        raise RoleError(
            f"Column {column.name!r} looks like {_article(info.type.value)} ({info.reason.rstrip('.')}),"
            f" so it cannot be {what}; set its type to continuous, categorical or ordinal, or change its role."
        )
    return info


def _article(word: str) -> str:
    return ("an " if word[0] in "aeiou" else "a ") + word


def _both(a: ColumnValues, b: ColumnValues) -> tuple[np.ndarray, int]:
    """Rows usable in both columns, and rows excluded (held something in either but not usable)."""
    usable = a.usable & b.usable
    excluded = int(np.sum(~usable & (a.present | b.present)))
    return usable, excluded


def _skipped(design: Design, test: Test | None, outcome: str, exposure: str | None, reason: Coded,
             settings: Settings, *, n: int = 0, n_excluded: int = 0, reasons: list[Coded] | None = None) -> Result:
    return Result(
        outcome=outcome, exposure=exposure, design=design, test=test, skipped=reason,
        alternative=_alt(settings), confidence=settings.confidence, n=n,
        n_excluded=n_excluded, reasons=list(reasons or []),
    )


def _finish(result: Result, *, design: Design, outcome: str, exposure: str | None, choice: Choice | None,
            n: int, n_excluded: int, groups: list[dict], shape: dict, settings: Settings) -> Result:
    """Fill the engine's fields on a method's Result (which arrives with outcome '' and exposure None)."""
    result.outcome = outcome
    result.exposure = exposure
    result.design = design
    result.n = n
    result.n_excluded = n_excluded
    if choice is not None:
        result.reasons = list(choice.reasons) + [r for r in result.reasons if r not in choice.reasons]
        result.notes = list(result.notes) + [n_ for n_ in choice.notes if n_ not in result.notes]
    if groups:
        by_label = {str(g.get("label")): g for g in result.groups if isinstance(g, dict)}
        if by_label:
            for g in groups:
                target = by_label.get(str(g.get("label")))
                if target is not None:
                    for k, v in g.items():
                        target.setdefault(k, v)
        else:
            result.groups = groups
    result.shape = {**shape, **result.shape}
    if result.p_value is None or (isinstance(result.p_value, float) and math.isnan(result.p_value)):
        if result.skipped is None:
            result.skipped = coded(Skip.NO_P_VALUE)
            result.p_value = None
    return result


def _run(test: Test, call, *, design: Design, outcome: str, exposure: str | None, choice: Choice | None,
         n: int, n_excluded: int, groups: list[dict], shape: dict, settings: Settings) -> Result:
    """Call a method; a NotEnoughDataError becomes a skipped Result with the method's message."""
    try:
        result = call()
    except NotEnoughDataError as err:
        reason = err.reason if err.reason is not None else coded(Skip.NO_P_VALUE)
        result = _skipped(design, test, outcome, exposure, reason, settings, n=n, n_excluded=n_excluded,
                          reasons=choice.reasons if choice else None)
        result.groups = groups
        result.shape = shape
        return result
    return _finish(result, design=design, outcome=outcome, exposure=exposure, choice=choice, n=n,
                   n_excluded=n_excluded, groups=groups, shape=shape, settings=settings)


def _alt(settings: Settings) -> str:
    """The alternative as a plain string (settings may hold the enum or its value)."""
    return str(getattr(settings.alternative, "value", settings.alternative))


def _opts(settings: Settings) -> dict[str, Any]:
    return {"alternative": _alt(settings), "confidence": settings.confidence}


def _constant_reason(name: str, values: np.ndarray) -> Coded | None:
    if values.size >= 2 and np.all(values == values[0]):
        return coded(Skip.CONSTANT_COLUMN, name=name, value=float(values[0]))
    return None


# ---------------------------------------------------------------- one sample


def _one_sample(col: Column, info: TypeInfo, analysis: Analysis, handling: ShapeHandling,
                settings: Settings) -> tuple[Result, _Prepared]:
    from ..stats import categorical, onesample

    name = col.name
    vals = usable_values(col, info)
    n, n_excl = vals.n, int(np.sum(vals.present & ~vals.usable))
    against = analysis.against
    if info.type is MeasureType.CATEGORICAL:
        parsed = against if isinstance(against, dict) else parse_against(
            str(analysis.against_text or against), info, column=name)
        assert isinstance(parsed, dict)  # a categorical outcome always parses to shares by label
        shares: dict[str, float] = parsed
        design = Design.ONE_SAMPLE_CATEGORICAL
        labels = vals.values[vals.usable]
        levels = list(info.levels) or sorted(set(labels))
        counts = {lev: int(np.sum(labels == lev)) for lev in levels}
        groups = [{"label": lev, "n": c, "share": c / n if n else None} for lev, c in counts.items()]
        single = len(shares) == 1
        if n == 0:
            return _skipped(design, None, name, None, coded(Skip.NO_USABLE_VALUES, name=name), settings,
                            n_excluded=n_excl), _Prepared()
        if single:
            label, share = next(iter(shares.items()))
            expected = np.array([n * share, n * (1 - share)])
        else:
            expected = np.array([n * shares[lev] for lev in levels])
        check = count_check(expected)
        choice = choose_test(design, outcome=name, min_expected=check["min_expected"],
                             n_expected_lt_5=check["n_expected_lt_5"], n_levels=len(levels), single_share=single)
        shape = {"counts": check}
        if choice.test == Test.BINOMIAL_EXACT:
            if single:
                label, share = next(iter(shares.items()))
            else:
                label, share = levels[0], shares[levels[0]]
            successes = counts.get(label, 0)
            call = lambda: categorical.binomial_exact(successes, n, share=share, label=label, **_opts(settings))  # noqa: E731
        else:
            call = lambda: categorical.chi_square_goodness_of_fit(  # noqa: E731
                counts, dict(shares), confidence=settings.confidence, seed=settings.seed,
                monte_carlo_resamples=settings.monte_carlo_resamples)
        result = _run(choice.test, call, design=design, outcome=name, exposure=None, choice=choice, n=n,
                      n_excluded=n_excl, groups=groups, shape=shape, settings=settings)
        result.against = shares
        return result, _Prepared()

    design = Design.ONE_SAMPLE_CONTINUOUS
    x = vals.values[vals.usable].astype(float)
    if against is None or isinstance(against, dict):
        raise OptionError(
            f"Comparison value for {name}: shares by label fit categories, but {name} holds numbers;"
            " give one number such as 20."
        )
    mu = float(against)
    if n == 0:
        return _skipped(design, None, name, None, coded(Skip.NO_USABLE_VALUES, name=name), settings,
                        n_excluded=n_excl), _Prepared()
    constant = _constant_reason(name, x)
    shape_a = assess({name: x})
    shape = {"assessment": shape_a.to_record()}
    groups = [s.to_record() for s in shape_a.summaries]
    if constant:
        test = DECISION_TABLE[design][0]
        r = _skipped(design, test, name, None, constant, settings, n=n, n_excluded=n_excl)
        r.against, r.groups, r.shape = mu, groups, shape
        return r, _Prepared()
    choice = choose_test(design, outcome=name, outcome_type=info.type, shape_handling=handling, shape=shape_a)
    if choice.test == Test.ONE_SAMPLE_T:
        call = lambda: onesample.one_sample_t(x, mu=mu, **_opts(settings))  # noqa: E731
    else:
        call = lambda: onesample.wilcoxon_signed_rank(x, mu=mu, **_opts(settings))  # noqa: E731
    result = _run(choice.test, call, design=design, outcome=name, exposure=None, choice=choice, n=n,
                  n_excluded=n_excl, groups=groups, shape=shape, settings=settings)
    result.against = mu
    return result, _Prepared()


# ---------------------------------------------------------------- by a column


def _levels_present(info: TypeInfo, labels: np.ndarray) -> list[str]:
    """Levels seen in the usable rows: the column's level order first, then any others."""
    present = {lab for lab in labels if lab is not None}
    ordered = [lev for lev in info.levels if lev in present]
    rest = sorted(present - set(ordered))
    return ordered + rest


def _by(out_col: Column, out_info: TypeInfo, by_col: Column, by_info: TypeInfo, handling: ShapeHandling,
        settings: Settings) -> tuple[Result, _Prepared]:
    out_cat = out_info.type is MeasureType.CATEGORICAL
    by_cat = by_info.type is MeasureType.CATEGORICAL
    if out_cat and by_cat:
        return _two_categorical(out_col, out_info, by_col, by_info, settings)
    if not out_cat and not by_cat:
        return _two_continuous(out_col, out_info, by_col, by_info, handling, settings)
    if out_cat:
        # A categorical outcome by a numeric column: compare the numbers across the outcome's levels.
        swap = coded(Reason.CATEGORY_BY_NUMBER, outcome=out_col.name, by=by_col.name)
        return _groups(by_col, by_info, out_col, out_info, handling, settings,
                       report_outcome=out_col.name, report_exposure=by_col.name, extra_reason=swap)
    return _groups(out_col, out_info, by_col, by_info, handling, settings,
                   report_outcome=out_col.name, report_exposure=by_col.name)


def _groups(num_col: Column, num_info: TypeInfo, grp_col: Column, grp_info: TypeInfo,
            handling: ShapeHandling, settings: Settings, *, report_outcome: str, report_exposure: str,
            extra_reason: Coded | None = None) -> tuple[Result, _Prepared]:
    from ..stats import multigroup, twogroup

    y = usable_values(num_col, num_info)
    g = usable_values(grp_col, grp_info)
    usable, n_excl = _both(y, g)
    values = y.values[usable].astype(float)
    labels = g.values[usable]
    levels = _levels_present(grp_info, labels)
    groups = {lev: values[labels == lev] for lev in levels}
    n = int(values.size)
    design = Design.TWO_GROUP_CONTINUOUS if len(levels) == 2 else Design.MULTI_GROUP_CONTINUOUS
    name, by = num_col.name, grp_col.name
    ordinal = num_info.type is MeasureType.ORDINAL
    lead = [extra_reason] if extra_reason else []
    shape_a = assess(groups)
    spread = spread_check(groups) if len(levels) >= 3 else None
    shape = {"assessment": shape_a.to_record(), "spread": spread.to_record() if spread else None}
    summaries = [s.to_record() for s in shape_a.summaries]
    would = DECISION_TABLE[design][1 if ordinal or handling is ShapeHandling.RANK else 0]
    if len(levels) < 2:
        reason = coded(Skip.FEWER_THAN_TWO_GROUPS, by=by, level=levels[0] if levels else None)
        r = _skipped(Design.TWO_GROUP_CONTINUOUS, None, report_outcome, report_exposure, reason, settings,
                     n=n, n_excluded=n_excl, reasons=lead)
        r.groups, r.shape = summaries, shape
        return r, _Prepared()
    constant = _constant_reason(name, values)
    if constant:
        r = _skipped(design, would, report_outcome, report_exposure, constant, settings, n=n,
                     n_excluded=n_excl, reasons=lead)
        r.groups, r.shape = summaries, shape
        return r, _Prepared()
    choice = choose_test(design, outcome=name, by=by, outcome_type=num_info.type, shape_handling=handling,
                         shape=shape_a, spread=spread)
    choice.reasons[:0] = lead
    opts = _opts(settings)
    if design == Design.TWO_GROUP_CONTINUOUS:
        x, z = groups[levels[0]], groups[levels[1]]
        lab = (levels[0], levels[1])
        pair_fn = {"welch_t": twogroup.welch_t, Test.STUDENT_T: twogroup.student_t,
                   Test.MANN_WHITNEY_U: twogroup.mann_whitney_u}[choice.test]
        call = lambda: pair_fn(x, z, labels=lab, **opts)  # noqa: E731
    else:
        many_fn = {"one_way_anova": multigroup.one_way_anova, Test.WELCH_ANOVA: multigroup.welch_anova,
                   Test.KRUSKAL_WALLIS: multigroup.kruskal_wallis}[choice.test]
        call = lambda: many_fn(groups, **opts)  # noqa: E731
    result = _run(choice.test, call, design=design, outcome=report_outcome, exposure=report_exposure,
                  choice=choice, n=n, n_excluded=n_excl, groups=summaries, shape=shape, settings=settings)
    if result.skipped is None and design == Design.TWO_GROUP_CONTINUOUS and (choice.rank_based or ordinal):
        ps = probability_of_superiority(groups[levels[0]], groups[levels[1]])
        result.extra["probability_of_superiority"] = ps
        result.extra["probability_of_superiority_levels"] = [levels[0], levels[1]]
        if ordinal and result.effect is not None and result.effect.kind is EffectKind.RANK_BISERIAL:
            # For ordered labels the chance that a record of the first group ranks above one
            # of the second (ties half) reads more plainly than r; r = 2 * PS - 1 exactly
            # (Kerby 2014, Comprehensive Psychology 3:11.IT.3.1), so its interval maps across.
            rank_r = result.effect
            result.extra["rank_biserial_r"] = rank_r.to_record()
            result.effect = Effect(
                EffectKind.PROBABILITY_OF_SUPERIORITY,
                ps,
                None if rank_r.ci_low is None else (rank_r.ci_low + 1) / 2,
                None if rank_r.ci_high is None else (rank_r.ci_high + 1) / 2,
            )
    return result, _Prepared(groups=groups)


def probability_of_superiority(x: np.ndarray, y: np.ndarray) -> float:
    """P(X > Y) + P(X = Y) / 2 over all pairs of one value from each group.

    Notes
    -----
    Equals U / (n_x n_y) for the Mann-Whitney U of ``x`` (ties count one half);
    also called the common-language effect size or probability of superiority
    (McGraw & Wong 1992, Psychol Bull 111(2):361-365, doi:10.1037/0033-2909.111.2.361;
    Grissom & Kim 2012, Effect Sizes for Research, 2nd ed.). 0.5 means no tendency.
    Computed from mid-ranks of the pooled values, U = (rank sum of ``x``) -
    n_x (n_x + 1) / 2, so memory is O(n_x + n_y) rather than one cell per pair; rank
    sums are whole or half numbers, so the result equals the pair count exactly.

    Examples
    --------
    Invented values; of the six pairs ``x`` wins 2 (3 > 2, 5 > 2), ties 1 (5 = 5)
    and loses 3:

    >>> probability_of_superiority(np.array([1.0, 3.0, 5.0]), np.array([2.0, 5.0]))
    0.4166666666666667
    >>> (2 + 0.5 * 1) / 6
    0.4166666666666667
    """
    from scipy import stats

    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    ranks = stats.rankdata(np.concatenate([x, y]))
    u = float(ranks[: x.size].sum()) - x.size * (x.size + 1) / 2.0
    return float(u / (x.size * y.size))


def _two_continuous(out_col: Column, out_info: TypeInfo, by_col: Column, by_info: TypeInfo,
                    handling: ShapeHandling, settings: Settings) -> tuple[Result, _Prepared]:
    from ..stats import correlation

    a = usable_values(out_col, out_info)
    b = usable_values(by_col, by_info)
    usable, n_excl = _both(a, b)
    x = a.values[usable].astype(float)
    y = b.values[usable].astype(float)
    n = int(x.size)
    design = Design.TWO_CONTINUOUS
    name, by = out_col.name, by_col.name
    shape_a = assess({name: x, by: y})
    shape = {"assessment": shape_a.to_record()}
    summaries = [s.to_record() for s in shape_a.summaries]
    for col_name, values in ((name, x), (by, y)):
        constant = _constant_reason(col_name, values)
        if constant or n == 0:
            r = _skipped(design, DECISION_TABLE[design][0], name, by,
                         constant or coded(Skip.NO_ROWS_WITH_BOTH, outcome=name, by=by), settings,
                         n=n, n_excluded=n_excl)
            r.groups, r.shape = summaries, shape
            return r, _Prepared()
    choice = choose_test(design, outcome=name, by=by, outcome_type=out_info.type, by_type=by_info.type,
                         shape_handling=handling, shape=shape_a)
    fn = correlation.pearson_r if choice.test == Test.PEARSON_R else correlation.spearman_rho
    call = lambda: fn(x, y, **_opts(settings))  # noqa: E731
    return _run(choice.test, call, design=design, outcome=name, exposure=by, choice=choice, n=n,
                n_excluded=n_excl, groups=summaries, shape=shape, settings=settings), _Prepared()


def _two_categorical(out_col: Column, out_info: TypeInfo, by_col: Column, by_info: TypeInfo,
                     settings: Settings) -> tuple[Result, _Prepared]:
    from ..stats import categorical

    a = usable_values(out_col, out_info)
    b = usable_values(by_col, by_info)
    usable, n_excl = _both(a, b)
    out_labels = a.values[usable]
    by_labels = b.values[usable]
    rows = _levels_present(by_info, by_labels)
    cols = _levels_present(out_info, out_labels)
    n = int(usable.sum())
    design = Design.TWO_CATEGORICAL
    name, by = out_col.name, by_col.name
    observed = np.array([[int(np.sum((by_labels == r) & (out_labels == c))) for c in cols] for r in rows])
    groups = [{"label": r, "n": int(observed[i].sum()),
               "counts": {c: int(observed[i, j]) for j, c in enumerate(cols)}} for i, r in enumerate(rows)]
    if len(rows) < 2 or len(cols) < 2:
        which, levels = (by, rows) if len(rows) < 2 else (name, cols)
        reason = coded(Skip.ONE_LEVEL, column=which, level=levels[0] if levels else None)
        r = _skipped(design, None, name, by, reason, settings, n=n, n_excluded=n_excl)
        r.groups = groups
        return r, _Prepared()
    expected = expected_counts(observed)
    check = count_check(expected)
    shape = {"counts": {**check, "observed": observed.tolist(), "row_labels": rows, "col_labels": cols}}
    choice = choose_test(design, outcome=name, by=by, min_expected=check["min_expected"],
                         n_expected_lt_5=check["n_expected_lt_5"], table_shape=observed.shape)
    if choice.test == Test.FISHER_EXACT:
        call = lambda: categorical.fisher_exact(observed, rows, cols, **_opts(settings))  # noqa: E731
    else:
        call = lambda: categorical.chi_square_independence(  # noqa: E731
            observed, rows, cols, confidence=settings.confidence, seed=settings.seed,
            resamples=settings.monte_carlo_resamples)
    result = _run(choice.test, call, design=design, outcome=name, exposure=by, choice=choice, n=n,
                  n_excluded=n_excl, groups=groups, shape=shape, settings=settings)
    return result, _Prepared(table=observed, row_labels=rows, col_labels=cols)


# ---------------------------------------------------------------- paired


def _key_labels(key_col: Column) -> tuple[np.ndarray, np.ndarray]:
    labels = category_labels(key_col)
    present = np.array([lab is not None for lab in labels], dtype=bool)
    return labels, present


def _paired_long(out_col: Column, out_info: TypeInfo, by_col: Column, by_info: TypeInfo, key_col: Column,
                 handling: ShapeHandling, settings: Settings) -> tuple[Result, _Prepared]:
    name, by, key = out_col.name, by_col.name, key_col.name
    cat = out_info.type is MeasureType.CATEGORICAL
    design = Design.PAIRED_CATEGORICAL if cat else Design.PAIRED_CONTINUOUS
    y = usable_values(out_col, out_info)
    g = usable_values(by_col, by_info)
    keys, key_present = _key_labels(key_col)
    conditions = _levels_present(by_info, g.values[g.usable])
    if len(conditions) != 2:
        if len(conditions) > 2:
            reason = coded(Skip.TOO_MANY_CONDITIONS, by=by, n=len(conditions), key=key)
            r = _skipped(Design.MULTI_GROUP_CONTINUOUS if not cat else design, None, name, by, reason, settings)
        else:
            r = _skipped(design, None, name, by, coded(Skip.NEED_TWO_CONDITIONS, by=by, outcome=name, key=key),
                         settings)
        r.pairing = key
        return r, _Prepared()
    first, second = conditions
    cells: dict[str, dict[str, Any]] = {}
    order: list[str] = []
    duplicates: list[str] = []
    for i in range(len(keys)):
        if not key_present[i] or not g.usable[i]:
            continue
        k, cond = keys[i], g.values[i]
        if k not in cells:
            cells[k] = {}
            order.append(k)
        if cond in cells[k]:
            duplicates.append(k)
        cells[k][cond] = y.values[i] if y.usable[i] else None
    if duplicates:
        r = _skipped(design, None, name, by,
                     coded(Skip.DUPLICATE_KEYS, key=key, by=by, keys=list(dict.fromkeys(duplicates))), settings)
        r.pairing = key
        return r, _Prepared()
    complete = [k for k in order if cells[k].get(first) is not None and cells[k].get(second) is not None]
    incomplete = [k for k in order if k not in set(complete)]
    n_rows_used = 2 * len(complete)
    n_excl = int(np.sum(y.present | g.present | key_present)) - n_rows_used
    a = np.array([cells[k][first] for k in complete], dtype=object if cat else float)
    b = np.array([cells[k][second] for k in complete], dtype=object if cat else float)
    result, prepared = _paired_core(name, out_info, a, b, (first, second), design, handling, settings,
                                    exposure=by, n_excl=n_excl)
    result.pairing = key
    result.extra["incomplete_pairs"] = incomplete
    if incomplete:
        result.notes.append(
            coded(Note.INCOMPLETE_PAIRS, n=Count(len(incomplete)), key=key, outcome=name, first=first, second=second)
        )
    return result, prepared


def _paired_wide(a_col: Column, a_info: TypeInfo, b_col: Column, b_info: TypeInfo, handling: ShapeHandling,
                 settings: Settings, *, rows: np.ndarray | None = None) -> tuple[Result, _Prepared]:
    a_cat = a_info.type is MeasureType.CATEGORICAL
    b_cat = b_info.type is MeasureType.CATEGORICAL
    if a_cat != b_cat:
        raise RoleError(
            f"{a_col.name!r} and {b_col.name!r} are paired but one holds categories and the other numbers;"
            " set both to the same type."
        )
    design = Design.PAIRED_CATEGORICAL if a_cat else Design.PAIRED_CONTINUOUS
    if a_cat:
        # Both columns must share one set of two levels.
        levels = tuple(sorted(set(a_info.levels) | set(b_info.levels), key=_level_key))
        a_info = TypeInfo(MeasureType.CATEGORICAL, len(levels), levels, a_info.reason, a_info.inferred)
    a = usable_values(a_col, a_info)
    b = usable_values(b_col, b_info)
    usable, n_excl = _both(a, b)
    x = a.values[usable]
    z = b.values[usable]
    if not a_cat:
        x, z = x.astype(float), z.astype(float)
    result, prepared = _paired_core(a_col.name, a_info, x, z, (a_col.name, b_col.name), design, handling,
                                    settings, exposure=None, n_excl=n_excl)
    result.pairing = b_col.name
    # Sheet rows whose pair had one half missing or unreadable, so the data notes can list them.
    half = ~usable & (a.present | b.present)
    where = rows[half] if rows is not None else np.flatnonzero(half)
    result.extra["incomplete_pairs"] = [f"row {int(r)}" for r in where] if rows is not None else where.tolist()
    return result, prepared


def _level_key(label: str):
    try:
        return (0, float(label), label)
    except ValueError:
        return (1, 0.0, label)


def _paired_core(name: str, info: TypeInfo, a: np.ndarray, b: np.ndarray, labels: tuple[str, str], design: Design,
                 handling: ShapeHandling, settings: Settings, *, exposure: str | None,
                 n_excl: int) -> tuple[Result, _Prepared]:
    from ..stats import categorical, paired

    n_pairs = int(a.size)
    if design == Design.PAIRED_CATEGORICAL:
        levels = [lev for lev in info.levels if lev in set(a) | set(b)] or sorted(set(a) | set(b))
        if len(levels) != 2:
            reason = coded(Skip.PAIRED_NOT_TWO_LEVELS, outcome=name, n=len(levels))
            return _skipped(design, Test.MCNEMAR, name, exposure, reason, settings, n=n_pairs,
                            n_excluded=n_excl), _Prepared()
        table = np.array([[int(np.sum((a == r) & (b == c))) for c in levels] for r in levels])
        choice = choose_test(design, outcome=name)
        shape = {"counts": {"observed": table.tolist(), "row_labels": [f"{labels[0]}: {lv}" for lv in levels],
                            "col_labels": [f"{labels[1]}: {lv}" for lv in levels]}}
        call = lambda: categorical.mcnemar(table, list(levels), **_opts(settings))  # noqa: E731
        groups = [{"label": labels[0], "n": n_pairs, "counts": {lv: int(np.sum(a == lv)) for lv in levels}},
                  {"label": labels[1], "n": n_pairs, "counts": {lv: int(np.sum(b == lv)) for lv in levels}}]
        return _run(Test.MCNEMAR, call, design=design, outcome=name, exposure=exposure, choice=choice, n=n_pairs,
                    n_excluded=n_excl, groups=groups, shape=shape, settings=settings), _Prepared()
    diff = a - b
    shape_a = assess({f"{labels[0]} - {labels[1]}": diff})
    shape = {"assessment": shape_a.to_record()}
    summaries = [s.to_record() for s in assess({labels[0]: a, labels[1]: b}).summaries]
    ordinal = info.type is MeasureType.ORDINAL
    would = DECISION_TABLE[design][1 if ordinal or handling is ShapeHandling.RANK else 0]
    if n_pairs == 0:
        return _skipped(design, would, name, exposure, coded(Skip.NO_COMPLETE_PAIRS, outcome=name), settings,
                        n_excluded=n_excl), _Prepared()
    constant = _constant_reason(f"the differences in {name}", diff)
    if constant:
        r = _skipped(design, would, name, exposure, constant, settings, n=n_pairs, n_excluded=n_excl)
        r.groups, r.shape = summaries, shape
        return r, _Prepared()
    choice = choose_test(design, outcome=name, outcome_type=info.type, shape_handling=handling, shape=shape_a)
    fn = paired.paired_t if choice.test == Test.PAIRED_T else paired.wilcoxon_paired
    call = lambda: fn(a, b, labels=labels, **_opts(settings))  # noqa: E731
    return _run(choice.test, call, design=design, outcome=name, exposure=exposure, choice=choice, n=n_pairs,
                n_excluded=n_excl, groups=summaries, shape=shape, settings=settings), _Prepared()


# ---------------------------------------------------------------- follow-ups


def _follow_up(result: Result, prepared: _Prepared, settings: Settings) -> None:
    """Add pairwise follow-ups to a significant 3+ group result or cell residuals to a large table."""
    if result.skipped is not None or result.p_adjusted is None or result.p_adjusted >= settings.alpha:
        return
    from ..stats import followup

    if result.design == Design.MULTI_GROUP_CONTINUOUS and len(prepared.groups) >= 3:
        if result.test == Test.ONE_WAY_ANOVA:
            result.followups = list(followup.tukey_hsd(prepared.groups, confidence=settings.confidence, alpha=settings.alpha))
        elif result.test == Test.WELCH_ANOVA:
            result.followups = list(followup.games_howell(prepared.groups, confidence=settings.confidence, alpha=settings.alpha))
        elif result.test == Test.KRUSKAL_WALLIS:
            result.followups = list(followup.dunn(prepared.groups, adjust="holm", alpha=settings.alpha,
                                                         confidence=settings.confidence))
        else:
            return
        test = result.followups[0].test if result.followups else None
        result.reasons.append(coded(Reason.FOLLOWUP_PAIRS, alpha=settings.alpha, test=test,
                                    holm=result.test == Test.KRUSKAL_WALLIS))
    elif result.design == Design.TWO_CATEGORICAL and prepared.table is not None and prepared.table.size > 4:
        result.followups = list(
            followup.adjusted_residuals(prepared.table, prepared.row_labels, prepared.col_labels,
                                        threshold=RESIDUAL_FLAG)
        )
        result.reasons.append(coded(Reason.FOLLOWUP_RESIDUALS, threshold=RESIDUAL_FLAG))
