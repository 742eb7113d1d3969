"""Cautions: what to keep in mind when reading each result, and those that apply to the whole run.

The review line (decisions about people's health or services belong to a
qualified analyst and local policy) is always last. Before/after designs get
the cautions that fit them (no comparison group, regression to the mean)
instead of the one about groups differing.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from ..plan.model import Settings
from ..results import Result
from ..vocabulary import AdjustFamily, AdjustMethod, Design, PMethod, Test
from ..vocabulary.codes import Note
from . import context as ctx
from .magnitude import NEGLIGIBLE
from .numbers import decimals_for, fmt_number, is_number
from .questions import EVENT_DESIGNS, ONE_SAMPLE, PAIRED
from .readings import effect_magnitude, min_expected, p_used
from .sentences import say
from .technical import ADJUST_NAMES

REVIEW_LINE = (
    "Decisions affecting people's health or services should be reviewed by a qualified "
    "analyst and follow local policy."
)
CAUSATION_LINE = (
    "An association between two measures does not show that one causes the other; "
    "other differences between the groups may explain it."
)
OBSERVATIONAL_LINE = (
    "These are routinely collected records, not a designed study: they may not represent "
    "everyone the service reaches, and groups may differ in ways the data do not record."
)
EXPECTED_LINE = (
    "Some expected counts are below 5{smallest}, so the usual chi-square approximation may be "
    "poor (Cochran's rule, common practice); {p_how}."
)
SMALL_GROUPS_LINE = (
    "Some groups have fewer than {limit} records, so their estimates are imprecise and the "
    "shape checks can miss problems."
)
SMALL_SAMPLE_LINE = (
    "Fewer than {limit} records were used, so the estimate is imprecise and the shape "
    "checks can miss problems."
)
UNEQUAL_GROUPS_LINE = (
    "Group sizes are unequal (the largest is at least {ratio} times the smallest), which makes "
    "results more sensitive to differences in spread between groups."
)
MULTIPLE_LINE = (
    "This run made {count} comparisons; the adjusted p-value ({method}) allows for that, so "
    "read each result alongside the others."
)
UNADJUSTED_LINE = (
    "This run made {count} comparisons and no adjustment was asked for, so some small "
    "p-values are expected by chance alone; read each result alongside the others."
)


OUTCOME_FAMILY_LINE = (
    "This run made {count} comparisons; the adjusted p-value ({method}) allows for the other "
    "comparisons of the same outcome only, so read each result alongside the others."
)
# Designs that replace the line about groups differing with their own (``register_lines``).
DESIGN_LINES: dict[Design, tuple[str, ...]] = {}


def register_lines(design: Design, lines: Sequence[str]) -> None:
    """Cautions a design's own words module states instead of the line about groups differing."""
    DESIGN_LINES[design] = tuple(lines)


def multiple_line(count: int, settings: Any) -> str:
    """The several-comparisons caution, worded for the adjustment method and family in use."""
    key = getattr(settings.adjust, "value", str(settings.adjust))
    family = getattr(getattr(settings, "family", None), "value", None)
    if key == AdjustMethod.NONE.value or family == AdjustFamily.NONE.value:
        return UNADJUSTED_LINE.format(count=count)
    method = ADJUST_NAMES.get(key, str(settings.adjust))
    if family == AdjustFamily.OUTCOME.value:
        return OUTCOME_FAMILY_LINE.format(count=count, method=method)
    return MULTIPLE_LINE.format(count=count, method=method)
EXCLUDED_LINE = (
    "{count} {records} left out (blank, unreadable or incomplete values; see the data "
    "notes); if they differ from the others, the result may be biased."
)
TINY_EFFECT_LINE = (
    "The result is statistically clear but the effect is negligible in size by a common rule "
    "of thumb; with many records even very small differences reach significance, so judge "
    "whether it matters in practice."
)
UNDERPOWERED_LINE = (
    "The effect looks {word} in size by a common rule of thumb, but the evidence is weak; a "
    "larger sample would be needed to tell."
)

BEFORE_AFTER_LINE = (
    "A before/after change has no comparison group: anything else that changed over the same "
    "time may explain it."
)
REGRESSION_LINE = (
    "Records picked because they were unusually high or low tend to be nearer the average when "
    "measured again (regression to the mean), which can look like a change."
)
SHARE_NOTE = (
    "Sharing mode: counts below {floor} are hidden on the statmargin sheets (shown <{floor}), and "
    "so is any other count, share or summary that would give one back (shown suppressed). The "
    "data sheet itself still holds record-level data; remove it before sharing this file."
)
SHARE_CAUTION = (
    "Some numbers for this analysis are hidden in sharing mode because a group or cell has "
    "fewer than {floor} records."
)
SHARE_HIDDEN_READING = (
    "The numbers for this analysis are hidden in sharing mode because some counts are small; "
    'the question was "{question}".'
)

# Small and unequal groups (common practice; no single published source).
SMALL_GROUP_LIMIT = 10
SMALL_SAMPLE_LIMIT = 20
UNEQUAL_RATIO = 2.0

def _group_sizes(result: Result) -> list[int]:
    sizes = []
    for g in result.groups:
        if not isinstance(g, Mapping):
            continue
        n = g.get("n", g.get("count"))
        if is_number(n):
            sizes.append(int(n))
    return sizes


def _excluded_line(count: int, context: Any, noun: str = "record") -> str:
    records = f"{noun} was" if count == 1 and ctx.share_floor(context) is None else f"{noun}s were"
    return EXCLUDED_LINE.format(count=ctx.count_text(count, context), records=records)


def _left_out_noun(result: Result) -> str:
    """Rows of events stand for unknown numbers of people, so what is left out is counted in rows."""
    return "row" if result.design in EVENT_DESIGNS else "record"


def cautions(
    result: Result, *, settings: Settings, context: Any = None, n_comparisons: int | None = None
) -> list[str]:
    """The plain cautions that apply to a result; the review line is always last.

    Parameters
    ----------
    result, settings, context, n_comparisons
        As for ``reading``. ``context.observational`` (default True) says the data
        are routine records rather than a designed study.

    Returns
    -------
    list of str

    Notes
    -----
    Small groups: fewer than 10 records in any group, or fewer than 20 records
    in all for a one-sample or two-measure analysis; unequal groups: the largest
    at least twice the smallest. Both are common practice rather than a
    published rule. Small expected counts follow Cochran's rule (expected counts
    below 5; Cochran WG, Biometrics 1954;10(4):417-451, doi:10.2307/3001616).
    """
    out: list[str] = []
    if result.skipped:
        if ctx.positive(result.n_excluded):
            out.append(_excluded_line(result.n_excluded, context, _left_out_noun(result)))
        out.append(REVIEW_LINE)
        return out
    if result.design in PAIRED:
        out.extend((BEFORE_AFTER_LINE, REGRESSION_LINE))
    elif result.design in DESIGN_LINES:
        out.extend(DESIGN_LINES[result.design])
    elif result.design not in ONE_SAMPLE:
        out.append(CAUSATION_LINE)
    if ctx.observational(context):
        out.append(OBSERVATIONAL_LINE)
    if is_number(result.p_adjusted) and n_comparisons and n_comparisons > 1:
        out.append(multiple_line(n_comparisons, settings))
    sizes = _group_sizes(result)
    grouped = result.design in (Design.TWO_GROUP_CONTINUOUS, Design.MULTI_GROUP_CONTINUOUS)
    if grouped and sizes:
        if min(sizes) < SMALL_GROUP_LIMIT:
            out.append(SMALL_GROUPS_LINE.format(limit=SMALL_GROUP_LIMIT))
        if min(sizes) > 0 and max(sizes) >= UNEQUAL_RATIO * min(sizes):
            out.append(UNEQUAL_GROUPS_LINE.format(ratio=f"{UNEQUAL_RATIO:g}"))
    elif (
        not grouped
        and result.design not in (Design.TWO_CATEGORICAL, Design.ONE_SAMPLE_CATEGORICAL, *EVENT_DESIGNS)
        and ctx.below(result.n, SMALL_SAMPLE_LIMIT)
    ):
        out.append(SMALL_SAMPLE_LINE.format(limit=SMALL_SAMPLE_LIMIT))
    smallest = min_expected(result)
    if (
        result.test in (Test.CHI_SQUARE_GOODNESS_OF_FIT, Test.CHI_SQUARE_INDEPENDENCE)
        and smallest is not None
        and smallest < 5
    ):
        p_how = (
            "the p-value was estimated by simulation instead"
            if result.p_method == PMethod.MONTE_CARLO
            else "treat the p-value as rough"
        )
        # In sharing mode the smallest expected count is left out: with the total and one
        # margin it gives the other margin back.
        shown = "" if ctx.share_floor(context) is not None else f" (smallest {fmt_number(smallest, decimals_for(smallest))})"
        line = EXPECTED_LINE.format(smallest=shown, p_how=p_how)
        out.append(line)
    if ctx.positive(result.n_excluded):
        out.append(_excluded_line(result.n_excluded, context, _left_out_noun(result)))
    p, _ = p_used(result)
    mag = effect_magnitude(result)
    if mag is not None and is_number(p):
        if p < settings.alpha and mag.word == NEGLIGIBLE:
            out.append(TINY_EFFECT_LINE)
        elif p >= settings.alpha and mag.word in ("medium", "large"):
            out.append(UNDERPOWERED_LINE.format(word=mag.word))
    said_expected = any(line.startswith("Some expected counts are below 5") for line in out)
    for item in result.notes:
        # A method's own note on small expected counts repeats the line above (the
        # technical note keeps its details).
        note = say(item)
        repeats = said_expected and item.code in (Note.EXPECTED_BELOW_5, Note.MONTE_CARLO_P)
        if note not in out and not repeats:
            out.append(note)
    out.append(REVIEW_LINE)
    return out


RUN_WIDE_HEADING = "Each caution here applies to every result below"
NO_ROW_CAUTIONS = "None beyond the cautions above the table."


def run_wide_cautions(
    results: Sequence[Result],
    *,
    settings: Settings,
    context: Any = None,
    n_comparisons: int | None = None,
) -> list[str]:
    """The cautions a results sheet states once, above the table, for every result.

    Parameters
    ----------
    results : sequence of Result
        The run's results, cautions filled (``apply``) or not.
    settings : Settings
    context : optional
        ``observational`` (default True) adds the routine-records line.
    n_comparisons : int, optional
        Size of the run's family; by default the results with a p-value.

    Returns
    -------
    list of str
        The review line first, then the routine-records line (for routine
        records), the several-comparisons line (when more than one p-value was
        adjusted), then any other line every run result carries.

    Notes
    -----
    Only the sheet layout uses this: each ``Result.cautions`` keeps its full
    list, review line included, so a result read on its own is complete.
    """
    if n_comparisons is None:
        n_comparisons = count_comparisons(results)
    out = [REVIEW_LINE]
    if ctx.observational(context):
        out.append(OBSERVATIONAL_LINE)
    adjusted = [r for r in results if not r.skipped and is_number(r.p_adjusted)]
    if adjusted and n_comparisons > 1:
        out.append(multiple_line(n_comparisons, settings))
    run = [r for r in results if not r.skipped]
    lists = [
        r.cautions or cautions(r, settings=settings, context=context, n_comparisons=n_comparisons)
        for r in run
    ]
    if lists:
        shared = [line for line in lists[0] if all(line in other for other in lists[1:])]
        out.extend(line for line in shared if line not in out)
    return out


def row_cautions(caution_list: Sequence[str], run_wide: Sequence[str]) -> list[str]:
    """The cautions of one result that are not already stated once for the whole run."""
    shown = set(run_wide)
    return [line for line in caution_list if line and line not in shown]


def count_comparisons(results: Iterable[Result]) -> int:
    """How many analyses of a run produced a p-value (the family adjusted together)."""
    return sum(1 for r in results if not r.skipped and is_number(r.p_value))


def incomplete_pairs_note(result: Result, count: int, context: Any = None) -> str:
    """The data-notes sentence for pairs left out because one half was missing."""
    outcome = result.outcome or "the outcome"
    if result.pairing and not result.exposure:  # two columns of one row form the pair
        what = f"incomplete pairs of {outcome} and {result.pairing}"
        tail = "one of the two measurements was missing"
    else:
        what = f"incomplete pairs by {result.pairing}" if result.pairing else "incomplete pairs"
        tail = f"one of the two measurements of {outcome} was missing"
    return f"{ctx.count_text(count, context)} {what} were left out of the analysis ({tail})."


