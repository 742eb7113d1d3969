"""Sentences for codes: every skip reason, caveat, choice reason and caution, worded once.

``say(coded)`` turns a ``vocabulary.codes.Coded`` into its sentence. Each code
has one template (a ``str.format`` string over the code's facts) or one
function of the facts; adding a code means adding its entry here, and a test
checks that every code has one.

Facts that are record counts (``vocabulary.codes.Count``) may have been
replaced by sharing mode with a ``Hidden`` marker before wording; it formats as
"fewer than N", so a template never needs to know about sharing mode.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from ..vocabulary.codes import Caution, Code, Coded, Hidden, Note, Reason, Skip, Subject
from .numbers import fmt_p, noun

Facts = Mapping[str, Any]


def number(value: Any) -> str:
    """A number in a message, short but exact enough to find the cell: 6 significant digits."""
    if isinstance(value, Hidden):
        return str(value)
    return f"{float(value):.6g}"


def capitalized(text: str) -> str:
    """The text with its first letter in upper case (column names keep the rest of their spelling)."""
    return text[:1].upper() + text[1:]


def _values_count(n: Any) -> str:
    return "value" if n == 1 else "values"


def _too_few_values(f: Facts) -> str:
    return capitalized(
        f"{f['what']} has {f['n']} usable {_values_count(f['n'])}; at least {f['minimum']} are needed."
    )


def _group_of_one(f: Facts) -> str:
    if isinstance(f["n"], Hidden):
        # Sharing mode: one cell address, or the minimum of 2, would say the group has one record.
        return (
            f"Group {f['level']!r} of {f['by']} has too few values to compare (sharing mode hides how many). "
            "A typing slip in a label often makes such a group: correct the label, or leave its rows out."
        )
    where = f" (cell {f['cell']})" if f.get("cell") else ""
    return (
        f"Group {f['level']!r} of {f['by']} has a single value{where}; each group needs at least 2. "
        "A typing slip in that cell often makes such a group: correct the label, or leave the row out."
    )


def _few(noun: str, limit: Any) -> str:
    """'fewer than 5 values', or 'very few values' when sharing mode hid the threshold (it would narrow a count)."""
    return f"very few {noun}" if isinstance(limit, Hidden) else f"fewer than {limit} {noun}"


def _how_many_of(part: Any, whole: Any) -> str:
    """'3 of 9', or 'some of the' when sharing mode hid the part."""
    return "some of the" if isinstance(part, Hidden) else f"{part} of {whole}"


def _monte_carlo(f: Facts) -> str:
    reason = (
        f"{_how_many_of(f['n_small'], f['n_cells'])} expected counts are below 5, so the chi-square "
        "approximation may be poor; "
        if f.get("small", True)
        else ""
    )
    margins = " of tables with the same row and column totals" if f.get("margins") else ""
    return capitalized(
        f"{reason}the p-value comes from {f['resamples']} Monte Carlo resamples{margins} "
        f"(Monte Carlo standard error {f['se']:.2g})."
    )


def _expected_below_5(f: Facts) -> str:
    advice = (
        "Fisher's exact test is the better choice for this table."
        if f.get("two_by_two")
        else "treat the p-value with caution."
    )
    smallest = f.get("smallest")
    shown = "" if smallest is None else f" (smallest {smallest:.2g})"
    return capitalized(
        f"{_how_many_of(f['n_small'], f['n_cells'])} expected counts are below 5{shown}, so the "
        f"chi-square approximation may be poor; {advice}"
    )


def _level_suffix(f: Facts) -> str:
    level = f.get("level")
    return f" ({level!r})" if level is not None else ""


def _too_many_conditions(f: Facts) -> str:
    return (
        f"{f['by']} has {f['n']} conditions; paired comparisons of more than two conditions per "
        f"{f['key']} are not supported yet. Keep two conditions, or remove the pairing key if every "
        "row is a different unit."
    )


def _incomplete_pairs(f: Facts) -> str:
    return (
        f"{f['n']} {f['key']} {noun(f['n'], 'value')} lacked a usable {f['outcome']} for both {f['first']} and "
        f"{f['second']} and were left out."
    )


def _exact_ruled_out(f: Facts) -> str:
    if f.get("one_sample"):
        return (
            "An exact p-value was asked for, but ties or zero differences (or 50 or more values) "
            "rule it out; the normal approximation was used instead."
        )
    return (
        "An exact p-value was asked for, but ties (or 50 or more values in a group) rule it out; "
        "the normal approximation was used instead."
    )


def _exact_p(f: Facts) -> str:
    if f.get("per_group"):
        return "The p-value is exact (no ties, fewer than 50 values per group)."
    return "The p-value is exact (no ties, fewer than 50 values)."


def _normal_approximation(f: Facts) -> str:
    tail = " and a continuity correction." if f.get("continuity") else " (no continuity correction)."
    return "The p-value uses the normal approximation with the tie correction" + tail


def _too_few_pairs(f: Facts) -> str:
    if f.get("first") is not None:
        return (
            f"Only {f['n']} complete {noun(f['n'], 'pair')} of {f['first']} and {f['second']}; at least "
            f"{f['minimum']} are needed."
        )
    return f"Only {f['n']} complete {noun(f['n'], 'pair')} of values; a correlation needs at least {f['minimum']}."


TEMPLATES: dict[Code, str | Callable[[Facts], str]] = {
    # ------------------------------------------------------------ skips
    Skip.NOT_NUMBERS: "Some values of {what} are not numbers; mark that column as a category or fix the cells.",
    Skip.LENGTH_MISMATCH: (
        "The two columns of {what} have different lengths ({first} and {second}); give one value of "
        "each per row."
    ),
    Skip.TOO_FEW_VALUES: _too_few_values,
    Skip.NO_SPREAD: lambda f: f"Every value of {f['what']} is the same ({number(f['value'])}), so there is no spread to test.",
    Skip.NO_VALUES_FOR_SHIFT: "A Hodges-Lehmann shift needs at least one value in each group.",
    Skip.NO_VALUES_FOR_PSEUDO_MEDIAN: "A pseudo-median needs at least one value.",
    Skip.ONE_CATEGORY_SIDE: (
        "Only one category was found on one side of the table; a test of association needs at "
        "least two on each side."
    ),
    Skip.EMPTY_TABLE: "The table has no counts (n = 0); there is nothing to test.",
    Skip.EMPTY_ROW: "Row '{label}' has no counts; remove the empty category and run again.",
    Skip.EMPTY_COLUMN: "Column '{label}' has no counts; remove the empty category and run again.",
    Skip.ONE_CATEGORY_GIVEN: "Only one category was given; a goodness-of-fit test needs at least two.",
    Skip.NO_OBSERVATIONS: "There are no observations (n = 0); there is nothing to test.",
    Skip.NO_COMPLETE_PAIRS: lambda f: (
        f"There are no complete pairs of {f['outcome']}."
        if f.get("outcome")
        else "There are no complete pairs (n = 0); there is nothing to test."
    ),
    Skip.NO_DISCORDANT_PAIRS: (
        "No pair changed between the two measurements (no discordant pairs), so McNemar's test "
        "cannot be run."
    ),
    Skip.TOO_FEW_PAIRS: _too_few_pairs,
    Skip.PAIRWISE_TOO_FEW: lambda f: (
        f"Group '{f['label']}' has {f['n']} usable {noun(f['n'], 'value')}; pairwise comparisons need at "
        f"least {f['minimum']} per group, so merge or drop that group."
    ),
    Skip.PAIRWISE_ONE_GROUP: "Pairwise comparisons need at least two groups; only one was given.",
    Skip.NO_WITHIN_SPREAD: (
        "Every group has no spread (all values equal within each group), so Tukey's comparisons "
        "cannot be made."
    ),
    Skip.PAIR_NO_SPREAD: (
        "Groups '{first}' and '{second}' both have no spread (all values equal), so they cannot be "
        "compared this way."
    ),
    Skip.ALL_RANKS_EQUAL: "Every value is the same in all groups, so there are no rank differences to compare.",
    Skip.TOO_FEW_GROUPS: lambda f: (
        f"Only {f['n']} {noun(f['n'], 'group')} {'has' if noun(f['n'], 'group') == 'group' else 'have'} data; "
        "at least two groups are needed to compare."
    ),
    Skip.GROUP_CONSTANT_WELCH: lambda f: (
        f"Every value in group {f['label']} is the same ({number(f['value'])}), so Welch's ANOVA cannot "
        "weight it; use the classic ANOVA or check the data."
    ),
    Skip.ALL_EQUAL_TARGET: lambda f: (
        f"Every value of {f['what']} equals {number(f['value'])}, so there is no difference to test."
    ),
    Skip.ALL_DIFFERENCES_ZERO: "Every {first} value equals its {second} value, so there is no difference to test.",
    Skip.SINGLE_VALUE_GROUPS: lambda f: (
        f"Each group holds a single repeated value ({f['first']}: {number(f['first_value'])}, "
        f"{f['second']}: {number(f['second_value'])}), so there is no spread within groups to test against."
    ),
    Skip.NO_SPREAD_WITHIN_GROUPS: (
        "Every group has a single repeated value, so there is no spread within groups to test against."
    ),
    Skip.CONSTANT_COLUMN: lambda f: (
        f"Every usable value of {f['name']} is the same ({_plain(f['value'])}), so there is nothing to test."
    ),
    Skip.NO_USABLE_VALUES: "{name} has no usable values.",
    Skip.NO_ROWS_WITH_BOTH: "{outcome} and {by} have no rows with both values.",
    Skip.ONE_LEVEL: lambda f: (
        f"{f['column']} has only one category{_level_suffix(f)} among the usable rows, so there is "
        "nothing to compare."
    ),
    Skip.FEWER_THAN_TWO_GROUPS: lambda f: (
        f"{f['by']} has fewer than two groups{_level_suffix(f)} among the usable rows, so there is "
        "nothing to compare."
    ),
    Skip.GROUP_OF_ONE: _group_of_one,
    Skip.TOO_MANY_GROUPS: lambda f: (
        f"{f['by']} has {f['n']:,} different groups, more than the {f['limit']} statmargin compares at once "
        f"({f['limit']} groups already make {f['limit'] * (f['limit'] - 1) // 2:,} pairs to follow up); group the "
        "labels into fewer categories in a new column (for example region instead of site) and compare by that."
    ),
    Skip.TOO_MANY_CONDITIONS: _too_many_conditions,
    Skip.NEED_TWO_CONDITIONS: "{by} needs two conditions to pair {outcome} by {key}.",
    Skip.DUPLICATE_KEYS: lambda f: (
        f"{f['key']} has more than one row for the same {f['by']} (keys "
        f"{', '.join(repr(k) for k in f['keys'])}); each key needs one row per condition."
    ),
    Skip.PAIRED_NOT_TWO_LEVELS: (
        "{outcome} must have exactly two categories for a paired comparison of counts; found {n} "
        "among the complete pairs."
    ),
    Skip.NO_P_VALUE: "The test could not give a p-value for these data.",
    # ------------------------------------------------------------ notes
    Note.EXACT_P: _exact_p,
    Note.NORMAL_APPROXIMATION: _normal_approximation,
    Note.EXACT_RULED_OUT: _exact_ruled_out,
    Note.ZEROS_DROPPED: lambda f: (
        f"{f['n']} {noun(f['n'], 'value')} equal to {number(f['value'])} "
        f"{'was' if noun(f['n'], 'value') == 'value' else 'were'} left out of the ranking and of the "
        "pseudo-median, as the test requires."
    ),
    Note.MONTE_CARLO_P: _monte_carlo,
    Note.EXPECTED_BELOW_5: _expected_below_5,
    Note.ONE_WAY_DISCORDANT: (
        "All {n} discordant pairs changed the same way, so the odds ratio of discordant pairs has "
        "no finite value."
    ),
    Note.PERFECT_LINE: "The points lie exactly on a straight line; the correlation is perfect.",
    Note.NO_CI_FEW_PAIRS: "With fewer than 4 pairs no confidence interval for the correlation can be given.",
    Note.MULTIGROUP_TWO_SIDED: (
        "A comparison of three or more groups has no direction, so the test is two-sided whatever "
        "was asked ('{alternative}')."
    ),
    Note.WELCH_EFFECT_CLASSIC: (
        "The effect size and its interval come from the classic sums of squares; they describe the "
        "share of variation between groups and do not use Welch's weighting."
    ),
    Note.KRUSKAL_SMALL_GROUPS: lambda f: (
        f"At least one group has {_few('values', f.get('limit', 5))}, so the chi-square p-value of "
        "Kruskal-Wallis is only a rough guide."
    ),
    Note.CI_NOT_REACHABLE: lambda f: (
        f"With so few values the {f['confidence']:.0%} interval for the pseudo-median cannot be "
        "reached; the range of the data is shown instead."
    ),
    Note.INCOMPLETE_PAIRS: _incomplete_pairs,
    Note.SHARE_HIDDEN: (
        "Some numbers for this analysis are hidden in sharing mode because a group or cell has "
        "fewer than {floor} records."
    ),
    Caution.SHARE_HIDDEN: (
        "Some numbers for this analysis are hidden in sharing mode because a group or cell has "
        "fewer than {floor} records."
    ),
}


def _plain(value: Any) -> str:
    """A constant value as typed: whole numbers without a decimal point."""
    if isinstance(value, (int, float)) and float(value).is_integer():
        return str(int(value))
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


# ---------------------------------------------------------------- shape phrases


def sentence_start(text: str) -> str:
    """Capitalize a leading lowercase article only; column names keep their own spelling."""
    for word in ("the ", "there "):
        if text.startswith(word):
            return text[0].upper() + text[1:]
    return text


def shape_phrase(f: Facts) -> str:
    """Where the shape check failed or passed, as a clause (without the conclusion)."""
    from ..vocabulary import Design

    design, outcome, by = f["design"], f["outcome"], f.get("by")
    assessment = f["assessment"]
    summaries = assessment["groups"]
    if design in (Design.MULTI_GROUP_CONTINUOUS, Design.TWO_GROUP_CONTINUOUS):
        k = len(summaries)
        if assessment["unchecked"]:
            names = ", ".join(repr(u) for u in assessment["unchecked"])
            return f"the {by} group {names} has too few values to check the shape of {outcome}"
        if assessment["constant"] and not assessment["failing"]:
            names = ", ".join(repr(u) for u in assessment["constant"])
            return f"all values of {outcome} are equal in the {by} group {names}, so its shape cannot be checked"
        if assessment["failing"]:
            bad = [s for s in summaries if s["normal_shaped"] is False]
            directions = {s["direction"] for s in bad}
            direction = directions.pop() if len(directions) == 1 else "not normal-shaped"
            worst = min(bad, key=lambda s: s["check_p"] if s["check_p"] is not None else -1.0)
            return f"{outcome} is {direction} in {len(bad)} of {k} groups of {by} ({worst['evidence']})"
        return f"{outcome} looks close to normal in all {k} groups of {by}"
    if design == Design.PAIRED_CONTINUOUS:
        first = summaries[0]
        if first["normal_shaped"] is None:
            return f"there are too few pairs to check the shape of the differences in {outcome}"
        return f"the differences in {outcome} are {first['verdict']}"
    if design == Design.TWO_CONTINUOUS:
        bad = [s for s in summaries if s["normal_shaped"] is False]
        if assessment["unchecked"]:
            return f"there are too few values to check the shape of {outcome} and {by}"
        if bad:
            return " and ".join(f"{s['label']} is {s['verdict']}" for s in bad)
        return f"{outcome} and {by} both look close to normal"
    first = summaries[0]
    if first["normal_shaped"] is None:
        return f"there are too few values to check the shape of {outcome}"
    return f"{outcome} is {first['verdict']}"


def _smallest(f: Facts) -> str:
    """' (smallest 3.2)', or nothing when sharing mode dropped it."""
    smallest = f.get("smallest")
    return "" if smallest is None else f" (smallest {smallest:.3g})"


def _followup_pairs(f: Facts) -> str:
    from .explain import TEST_NAMES

    what = TEST_NAMES[f["test"]]
    if what.startswith("Pairwise "):
        what = "p" + what[1:]
    if f.get("holm"):
        what = f"{what} with Holm adjustment"
    return (
        f"The overall test was below {f['alpha']:g} after adjustment, so pairs of groups were compared "
        f"with {what}."
    )


REASON_TEMPLATES: dict[Code, str | Callable[[Facts], str]] = {
    Reason.ONE_SHARE_BINOMIAL: "One share was given for {outcome}, so the exact binomial test was used.",
    Reason.SMALL_EXPECTED_BINOMIAL: lambda f: (
        f"An expected count is below 5{_smallest(f)}, so the exact binomial test was used instead of "
        "chi-square (Cochran's rule)."
    ),
    Reason.GOODNESS_OF_FIT: "{outcome} is compared with the given shares by a chi-square goodness-of-fit test.",
    Reason.SMALL_EXPECTED_FISHER: lambda f: (
        f"An expected count is below 5{_smallest(f)} in a 2x2 table, so Fisher's exact test was used "
        "(Cochran's rule)."
    ),
    Reason.CHI_SQUARE_INDEPENDENCE: (
        "{outcome} and {by} are both categories, so a chi-square test of independence was used."
    ),
    Reason.MCNEMAR_PAIRED: (
        "{outcome} is a two-level category measured twice on the same units, so McNemar's test was used."
    ),
    Reason.ORDINAL_RANK: "{column} is ordinal, so a rank-based test was used.",
    Reason.USER_RANK: "Shape handling for {outcome} is set to rank-based, so a rank-based test was used.",
    Reason.USER_NORMAL: (
        "Shape handling for {outcome} is set to assume normal, so the shape checks were not used."
    ),
    Reason.SHAPE_RANK: lambda f: sentence_start(f"{shape_phrase(f)}, so a rank-based test was used."),
    Reason.SHAPE_NORMAL: lambda f: sentence_start(
        f"{shape_phrase(f)}, so a test that assumes normal-shaped data was used."
    ),
    Reason.WELCH_DEFAULT: (
        "Welch's t-test was used because it stays accurate when the two groups' spreads differ and "
        "loses little when they do not (Delacre, Lakens & Leys 2017)."
    ),
    Reason.SPREAD_DIFFERS: lambda f: (
        f"The spread of {f['outcome']} differs between the groups of {f['by']} (Brown-Forsythe "
        f"{fmt_p(f['p'])}), so Welch's ANOVA was used."
    ),
    Reason.SPREAD_SIMILAR: lambda f: (
        f"The spread of {f['outcome']} is similar across the groups of {f['by']} (Brown-Forsythe "
        f"{fmt_p(f['p'])}), so the classic one-way ANOVA was used."
    ),
    Reason.SPREAD_UNCHECKED: (
        "The spread of {outcome} across the groups of {by} could not be checked, so Welch's ANOVA (which "
        "does not assume equal spreads) was used."
    ),
    Reason.CATEGORY_BY_NUMBER: (
        "{outcome} is a category and {by} holds numbers, so {by} was compared across the levels of {outcome}."
    ),
    Reason.FOLLOWUP_PAIRS: _followup_pairs,
    Reason.FOLLOWUP_RESIDUALS: (
        "The table is larger than 2x2, so each cell's adjusted residual was computed; |z| > {threshold:g} "
        "marks a cell that stands out (common practice)."
    ),
    Note.ASSUMED_NORMAL_DESPITE_SHAPE: lambda f: (
        f"The shape checks suggest {shape_phrase(f)}; the test assumes normal-shaped data because that "
        "was chosen."
    ),
}
TEMPLATES.update(REASON_TEMPLATES)


def register(
    templates: Mapping[Code, str | Callable[[Facts], str]],
) -> None:
    """Add the templates of another words module (each code once)."""
    for code, template in templates.items():
        if code in TEMPLATES:
            raise ValueError(f"{code!r} is worded twice")
        TEMPLATES[code] = template


# The phrase of each Subject: the values a code speaks of when no column name says it.
SUBJECTS: dict[Subject, str] = {
    Subject.OUTCOME_BOTH_GROUPS: "the outcome in both groups",
    Subject.OUTCOME_EVERY_GROUP: "the outcome in every group",
    Subject.ROWS_AND_STRATA: "the rows and their strata",
    Subject.LABELS_AND_COUNTS: "the labels and counts",
    Subject.TABLE_CELL: "A table cell",
    Subject.OBSERVATIONS: "The number of observations",
    Subject.COUNT_OF: "The count of '{label}'",
}


def subject(what: Any, label: Any = None) -> Any:
    """The phrase of a ``Subject`` fact (with its label where it takes one); any other fact as it is."""
    if isinstance(what, Subject):
        return SUBJECTS[what].format(label=label)
    return what


def say(item: Coded) -> str:
    """The sentence for a code with its facts (a ``Subject`` fact written as its phrase)."""
    template = TEMPLATES[item.code]
    facts = {key: subject(value, item.facts.get("label")) for key, value in item.facts.items()}
    if callable(template):
        return template(facts)
    return template.format(**facts)


def say_all(items: list[Coded]) -> list[str]:
    """The sentences for a list of codes, in order."""
    return [say(item) for item in items]
