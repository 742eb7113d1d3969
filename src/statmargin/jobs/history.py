"""What changed since the last run: each run's key results, kept as rows of a hidden history sheet.

Each run stores one compact record per analysis (``KeyResult``): the test, the
p-value and adjusted p-value, the estimate with its interval, its direction,
the level used and the run's time stamp. The records are written as rows of
plain values (``history_rows``), bounded to the last ``KEEP_RUNS`` runs; the
next run reads them back (``parse_history_rows``), takes the latest run's
records (``last_run``) and compares each analysis (``since_last_run``).

Flags and precedence (the first that applies is reported):

1. ``no_longer_run``: the analysis was run last time and is missing or skipped now;
2. ``new``: it is run now and was not run last time (absent or skipped), or it is
   asked for the first time and cannot be run;
3. ``direction_reversed``: the estimate points the other way and at least one of
   the two runs was below its significance level (a sign flip between two
   results that were both above the level is noise, not news);
4. ``now_below_level``: the (adjusted) p-value crossed below the level;
5. ``no_longer_below_level``: it crossed back above it;
6. ``moved_outside_interval``: the new estimate lies outside the previous
   interval (same kind of estimate);
7. ``unchanged``; this includes a question that was not run last time and is not
   run now (skipped twice, or skipped last time and no longer asked): there is
   nothing new to say about it, and flagging it "new" on every refresh would
   keep "nothing changed" from ever being said while one question stays skipped.

Reversal comes before crossing because a result that now points the other way
is read differently whatever its p-value; crossing comes before the interval
check because it changes what the results sheet flags.

The p-value compared is the adjusted one when the run adjusted, else the raw
one, each against the level of its own run.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import astuple, dataclass, fields, replace
from typing import Any

from ..results import Followup, Result
from ..vocabulary import SINCE_LAST_RUN_ORDER, EstimateKind, PeriodComparison, SinceLastRun

KIND = "history"  # tool-sheet kind of the hidden history sheet
SHEET_NAME = "statmargin history"
KEEP_RUNS = 24  # runs kept in the history sheet (two years of monthly refreshes)
TREND_PART = "trend"  # key suffix of a result's trend test
HIDDEN = "hidden"  # the test of a record whose numbers sharing mode hid
_COMPARISON_PARTS = frozenset(kind.value for kind in PeriodComparison)

# Estimates whose value is a signed difference, slope or correlation: direction = sign(value).
_SIGNED = frozenset(
    {
        EstimateKind.MEAN_DIFFERENCE,
        EstimateKind.LOCATION_SHIFT,
        EstimateKind.MEAN_DIFFERENCE_FROM_VALUE,
        EstimateKind.PAIRED_MEAN_DIFFERENCE,
        EstimateKind.PAIRED_PSEUDO_MEDIAN,
        EstimateKind.SHARE_DIFFERENCE,
        EstimateKind.PAIRED_SHARE_DIFFERENCE,
        EstimateKind.PEARSON_R,
        EstimateKind.SPEARMAN_RHO,
        EstimateKind.SHARE_CHANGE_PER_PERIOD,
        EstimateKind.THEIL_SEN_SLOPE,
    }
)
# Estimates compared with the question's fixed value: direction = sign(value - against).
_AGAINST = frozenset({EstimateKind.PSEUDO_MEDIAN, EstimateKind.SHARE})

PRECEDENCE: tuple[SinceLastRun, ...] = SINCE_LAST_RUN_ORDER


@dataclass(frozen=True)
class KeyResult:
    """One analysis's key numbers in one run, as stored in the history sheet (one row)."""

    run: str  # the run's time stamp, ISO 8601 (UTC); identifies the run
    analysis: str  # ``analysis_key``
    test: str | None
    p_value: float | None
    p_adjusted: float | None
    estimate_kind: str | None
    estimate: float | None
    ci_low: float | None
    ci_high: float | None
    direction: int | None  # +1, -1, 0, or None for an estimate without a direction
    alpha: float

    @property
    def p(self) -> float | None:
        """The p-value the results sheet flags by: adjusted when the run adjusted."""
        return self.p_adjusted if self.p_adjusted is not None else self.p_value

    @property
    def below(self) -> bool:
        return self.p is not None and self.p < self.alpha


HEADER: tuple[str, ...] = tuple(f.name for f in fields(KeyResult))


def analysis_key(result: Result, part: str | None = None) -> str:
    """A stable identifier of the question a result answers (not of the test that answered it).

    The outcome, the compare-by column, the pairing, the fixed value and the
    design identify the question; a changed test (Welch's t becoming
    Mann-Whitney after a shape change) is the same question. ``part`` names a
    second answer inside one result, such as its trend test.

    Examples
    --------
    >>> from statmargin.results import Result
    >>> analysis_key(Result(outcome="Wait", exposure="Site", design="two_group_continuous", test="welch_t"))
    'Wait | by Site | two_group_continuous'
    """
    pieces = [result.outcome]
    group = result.extra.get("group") if isinstance(result.extra, Mapping) else None
    if result.exposure:
        pieces.append(f"by {result.exposure}" + (f" = {group}" if group is not None else ""))
    if result.pairing:
        pieces.append(f"with {result.pairing}")
    if result.against is not None:
        pieces.append(f"against {result.against}")
    pieces.append(str(result.design))
    if part:
        pieces.append(part)
    return " | ".join(pieces)


def direction(result: Result) -> int | None:
    """+1, -1 or 0 for the direction of a result's estimate; None when it has none."""
    estimate = result.estimate
    if estimate is None or estimate.value is None or not math.isfinite(estimate.value):
        return None
    if estimate.kind in _SIGNED:
        return _sign(estimate.value)
    if estimate.kind in _AGAINST and isinstance(result.against, (int, float)):
        return _sign(estimate.value - float(result.against))
    return None


def _sign(value: float) -> int:
    return (value > 0) - (value < 0)


def _finite(value: Any) -> float | None:
    if value is None:
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def key_results(results: Iterable[Result], run: str, alpha: float) -> list[KeyResult]:
    """The key results of a run: one record per result, plus one per trend test.

    Skipped results get a record without a p-value, so the next run can tell a
    skipped analysis from a new one.
    """
    out: list[KeyResult] = []
    for result in results:
        skipped = result.skipped is not None
        estimate = result.estimate if not skipped else None
        out.append(
            KeyResult(
                run=run,
                analysis=analysis_key(result),
                test=str(result.test) if result.test is not None else None,
                p_value=None if skipped else _finite(result.p_value),
                p_adjusted=None if skipped else _finite(result.p_adjusted),
                estimate_kind=str(estimate.kind) if estimate else None,
                estimate=_finite(estimate.value) if estimate else None,
                ci_low=_finite(estimate.ci_low) if estimate else None,
                ci_high=_finite(estimate.ci_high) if estimate else None,
                direction=None if skipped else direction(result),
                alpha=alpha,
            )
        )
        out.extend(_comparison_records(result, run, alpha))
        trend = result.trend
        if trend is not None:
            slope = trend.estimate
            value = _finite(slope.value) if slope else None
            out.append(
                KeyResult(
                    run=run,
                    analysis=analysis_key(result, TREND_PART),
                    test=str(trend.test),
                    p_value=_finite(trend.p_value),
                    p_adjusted=None,
                    estimate_kind=str(slope.kind) if slope else None,
                    estimate=value,
                    ci_low=_finite(slope.ci_low) if slope else None,
                    ci_high=_finite(slope.ci_high) if slope else None,
                    direction=_sign(value) if value is not None else None,
                    alpha=alpha,
                )
            )
    return out


def comparison_parts(result: Result) -> list[tuple[str, Followup]]:
    """A period result's latest-period comparisons as (part name, follow-up), e.g. ('latest_vs_previous', ...)."""
    kinds = result.extra.get("comparisons") if isinstance(result.extra, Mapping) else None
    if not isinstance(kinds, (list, tuple)):
        return []
    return [(str(kind), followup) for kind, followup in zip(kinds, result.followups, strict=False)]


def _comparison_records(result: Result, run: str, alpha: float) -> list[KeyResult]:
    """One record per latest-period comparison, so a change that reverses is seen next run."""
    out = []
    hidden = bool(result.extra.get("suppressed")) if isinstance(result.extra, Mapping) else False
    for part, followup in comparison_parts(result):
        estimate = followup.estimate
        value = _finite(estimate.value) if estimate is not None else None
        signed = estimate is not None and estimate.kind in _SIGNED
        out.append(
            KeyResult(
                run=run,
                analysis=analysis_key(result, part),
                test=HIDDEN if hidden and followup.p_value is None else str(followup.test),
                p_value=_finite(followup.p_value),
                p_adjusted=_finite(followup.p_adjusted),
                estimate_kind=str(estimate.kind) if estimate is not None else None,
                estimate=value,
                ci_low=_finite(estimate.ci_low) if estimate is not None else None,
                ci_high=_finite(estimate.ci_high) if estimate is not None else None,
                direction=_sign(value) if signed and value is not None else None,
                alpha=alpha,
            )
        )
    return out


def parts(result: Result) -> list[str | None]:
    """The parts of a result the history keeps: the result itself (None), its comparisons and its trend."""
    out: list[str | None] = [None]
    out.extend(part for part, _ in comparison_parts(result))
    if result.trend is not None:
        out.append(TREND_PART)
    return out


def since_last_run(previous: KeyResult | None, current: KeyResult | None) -> SinceLastRun:
    """How one analysis changed between two runs (see the module notes for the precedence).

    Parameters
    ----------
    previous, current : KeyResult or None
        The analysis in the previous and in this run (None: not in that run).

    Returns
    -------
    SinceLastRun

    Notes
    -----
    A question that is not run now is ``no_longer_run`` if it was run last
    time; ``new`` if it was not asked last time at all (a new question whose
    data cannot support a test yet); and ``unchanged`` if it was asked and not
    run last time either, or was skipped last time and is gone now. The
    reason it is skipped is on the results sheet beside it every run.

    Examples
    --------
    >>> before = KeyResult("2026-06-01", "a", "welch_t", 0.08, 0.08, "mean_difference", 2.0, -0.3, 4.3, 1, 0.05)
    >>> since_last_run(before, before)
    'unchanged'
    >>> skipped = KeyResult("2026-06-01", "a", None, None, None, None, None, None, None, None, 0.05)
    >>> since_last_run(skipped, skipped), since_last_run(None, skipped), since_last_run(before, skipped)
    ('unchanged', 'new', 'no_longer_run')
    >>> now = KeyResult("2026-07-01", "a", "welch_t", 0.01, 0.01, "mean_difference", 3.1, 0.8, 5.4, 1, 0.05)
    >>> since_last_run(before, now)
    'now_below_level'
    >>> flipped = KeyResult("2026-07-01", "a", "welch_t", 0.03, 0.03, "mean_difference", -2.6, -4.9, -0.3, -1, 0.05)
    >>> since_last_run(before, flipped)
    'direction_reversed'
    """
    ran_before = previous is not None and previous.p is not None
    runs_now = current is not None and current.p is not None
    if not runs_now:
        if ran_before:
            return SinceLastRun.NO_LONGER_RUN
        # Not run last time either: only a question asked for the first time is news.
        return SinceLastRun.NEW if previous is None and current is not None else SinceLastRun.UNCHANGED
    if not ran_before:
        return SinceLastRun.NEW
    assert previous is not None and current is not None  # narrowed by the checks above
    if (
        previous.direction
        and current.direction
        and previous.direction != current.direction
        and (previous.below or current.below)
    ):
        return SinceLastRun.DIRECTION_REVERSED
    if current.below and not previous.below:
        return SinceLastRun.NOW_BELOW_LEVEL
    if previous.below and not current.below:
        return SinceLastRun.NO_LONGER_BELOW_LEVEL
    if (
        current.estimate is not None
        and previous.estimate_kind == current.estimate_kind
        and (
            (previous.ci_low is not None and current.estimate < previous.ci_low)
            or (previous.ci_high is not None and current.estimate > previous.ci_high)
        )
    ):
        return SinceLastRun.MOVED_OUTSIDE_INTERVAL
    return SinceLastRun.UNCHANGED


def since_last_comparison(previous: KeyResult | None, current: KeyResult | None) -> SinceLastRun:
    """How a latest-period comparison changed: each refresh compares a new pair of periods.

    July against June is not the same quantity as June against May, so its
    estimate moving outside the previous interval, or a change that was clear
    last month and is not this month, says nothing new (by simulation of a
    stable program, these flagged about one refresh in four; see the README).
    The flag says only whether this month's change is clear: ``direction
    reversed`` when it is clear and points the other way from the last
    comparison's estimate, ``now below the significance level`` when it is
    clear and the last one was not (or pointed the same way but was not clear),
    else ``unchanged``. A comparison that was not run before, or is not run now,
    is ``new`` or ``no longer run`` as any analysis.

    Examples
    --------
    >>> june = KeyResult("r1", "a", "chi_square_independence", 0.17, 0.17, "share_difference", 0.065,
    ...                  -0.03, 0.16, 1, 0.05)
    >>> july = KeyResult("r2", "a", "chi_square_independence", 0.001, 0.001, "share_difference", -0.167,
    ...                  -0.26, -0.07, -1, 0.05)
    >>> since_last_comparison(june, july), since_last_comparison(july, june)
    ('direction_reversed', 'unchanged')
    """
    ran_before = previous is not None and previous.p is not None
    runs_now = current is not None and current.p is not None
    if not (ran_before and runs_now):
        return since_last_run(previous, current)
    assert previous is not None and current is not None  # narrowed by the checks above
    if not current.below:
        return SinceLastRun.UNCHANGED
    if previous.direction and current.direction and previous.direction != current.direction:
        return SinceLastRun.DIRECTION_REVERSED
    return SinceLastRun.UNCHANGED if previous.below else SinceLastRun.NOW_BELOW_LEVEL


def _flag(key: str, previous: KeyResult | None, current: KeyResult | None) -> SinceLastRun:
    """The flag of one analysis key: comparisons of the latest period by their own rule."""
    if key.rsplit(" | ", 1)[-1] in _COMPARISON_PARTS:
        return since_last_comparison(previous, current)
    return since_last_run(previous, current)


def compare_runs(
    previous: Mapping[str, KeyResult], current: Sequence[KeyResult]
) -> dict[str, SinceLastRun]:
    """Flags for every analysis of this run and for each analysis of the last run that is gone.

    Returns an empty dict on a first run (no previous records): every
    ``since_last_run`` is then None, as the JSON schema says.
    """
    if not previous:
        return {}
    now = {record.analysis: record for record in current}
    flags = {key: _flag(key, previous.get(key), record) for key, record in now.items()
             if record.test != HIDDEN}  # hidden in sharing mode: nothing to compare
    for key, record in previous.items():
        if key not in now:
            flags[key] = _flag(key, record, None)
    return flags


def most_important(flags: Iterable[SinceLastRun]) -> SinceLastRun | None:
    """The flag that comes first in ``PRECEDENCE`` (None for no flags)."""
    chosen = [PRECEDENCE.index(flag) for flag in flags]
    return PRECEDENCE[min(chosen)] if chosen else None


def apply_since_last_run(results: Sequence[Result], flags: Mapping[str, SinceLastRun]) -> None:
    """Set ``since_last_run`` on each result: the more important of its own flag and its trend's."""
    for result in results:
        keys = {analysis_key(result, part) for part in [*parts(result), TREND_PART]}
        found = [flags[key] for key in keys if key in flags]
        result.since_last_run = most_important(found)


def headline(flags: Mapping[str, SinceLastRun]) -> list[tuple[SinceLastRun, list[str]]]:
    """What changed, most important first: (flag, analysis keys) for every flag other than unchanged.

    An empty list on a refresh where nothing changed (the sheet then says so in
    one line); a first run has no flags at all and also gives an empty list, so
    callers tell the two apart by whether there was a previous run.
    """
    out: list[tuple[SinceLastRun, list[str]]] = []
    for flag in PRECEDENCE:
        if flag is SinceLastRun.UNCHANGED:
            continue
        keys = sorted(key for key, value in flags.items() if value is flag)
        if keys:
            out.append((flag, keys))
    return out


# --------------------------------------------------------------------------- the sheet's rows


def history_rows(
    earlier: Sequence[KeyResult], current: Sequence[KeyResult], keep: int = KEEP_RUNS
) -> list[list[Any]]:
    """Rows of the history sheet: the header, then the records of the last ``keep`` runs, oldest first.

    Examples
    --------
    >>> old = [KeyResult(f"2026-0{m}-01", "a", None, None, None, None, None, None, None, None, 0.05)
    ...        for m in range(1, 5)]
    >>> rows = history_rows(old[:3], old[3:], keep=2)
    >>> [row[0] for row in rows]
    ['run', '2026-03-01', '2026-04-01']
    """
    records = [*earlier, *current]
    runs = list(dict.fromkeys(record.run for record in records))[-keep:]
    kept = set(runs)
    return [list(HEADER)] + [list(astuple(r)) for r in records if r.run in kept]


def parse_history_rows(rows: Iterable[Sequence[Any]]) -> list[KeyResult]:
    """Records from the history sheet's rows as read back; unreadable rows are dropped.

    Cells come back as the reader gives them (numbers as floats, blanks as None
    or ''); a row edited by hand into something else is skipped rather than
    stopping the run, since the history only feeds the "since last run" column.
    """
    out: list[KeyResult] = []
    seen_header = False
    for row in rows:
        cells = [None if (isinstance(c, str) and not c.strip()) else c for c in list(row)[: len(HEADER)]]
        if not seen_header:
            seen_header = bool(cells) and cells[0] == HEADER[0]
            continue
        cells += [None] * (len(HEADER) - len(cells))
        record = _record(cells)
        if record is not None:
            out.append(record)
    return out


def _record(cells: list[Any]) -> KeyResult | None:
    run, analysis = cells[0], cells[1]
    alpha = _finite(cells[10])
    if not isinstance(run, str) or not isinstance(analysis, str) or alpha is None:
        return None
    direction_value = _finite(cells[9])
    return KeyResult(
        run=run,
        analysis=analysis,
        test=str(cells[2]) if cells[2] is not None else None,
        p_value=_finite(cells[3]),
        p_adjusted=_finite(cells[4]),
        estimate_kind=str(cells[5]) if cells[5] is not None else None,
        estimate=_finite(cells[6]),
        ci_low=_finite(cells[7]),
        ci_high=_finite(cells[8]),
        direction=int(direction_value) if direction_value is not None else None,
        alpha=alpha,
    )


def last_run(records: Sequence[KeyResult]) -> dict[str, KeyResult]:
    """The records of the most recent run in the history (by position: runs are appended in order)."""
    if not records:
        return {}
    newest = records[-1].run
    return {r.analysis: r for r in records if r.run == newest}


# --------------------------------------------------------------------------- one run's bookkeeping


@dataclass(frozen=True)
class RunChanges:
    """What the sheets need to say what changed: when the last run was, and each analysis's flag.

    ``previous_run`` is the last run's time stamp (None on a first run, when
    ``flags`` is empty); ``flags`` maps analysis keys (parts included) to flags,
    analyses of the last run that are gone included.
    """

    previous_run: str | None
    flags: Mapping[str, SinceLastRun]


def without_numbers(record: KeyResult) -> KeyResult:
    """A record with its p-values, estimate, interval and direction removed (which analysis, when and how stay)."""
    return replace(record, p_value=None, p_adjusted=None, estimate=None, ci_low=None, ci_high=None, direction=None)


def track(results: Sequence[Result], earlier: Sequence[KeyResult], run: str, alpha: float,
          keep: int = KEEP_RUNS, *, share: bool = False) -> tuple[RunChanges, list[list[Any]]]:
    """Compare a run with the last one in the history, set each result's flag, and give the new history rows.

    Parameters
    ----------
    results : sequence of Result
        This run's results (flags are set on them in place).
    earlier : sequence of KeyResult
        The history as read back before the run (``parse_history_rows``).
    run : str
        This run's time stamp (ISO 8601, UTC).
    alpha : float
        This run's significance level.
    keep : int
        Runs the history keeps, this one included.
    share : bool
        Sharing mode: this run's results arrive suppressed; the earlier runs'
        records lose their numbers in the rows written (``without_numbers``),
        since a run without sharing mode kept estimates and p-values that could
        give a small count back and the hidden sheet travels with the file.
        Flags are worked out before that, and the next run compares with this
        one only, so no flag is lost.

    Returns
    -------
    (RunChanges, list of rows)
        The changes for the sheets, and the history sheet's rows (``history_rows``).
    """
    previous = last_run(earlier)
    current = key_results(results, run, alpha)
    flags = compare_runs(previous, current)
    apply_since_last_run(results, flags)
    previous_run = earlier[-1].run if earlier else None
    kept = [without_numbers(record) for record in earlier] if share else list(earlier)
    return RunChanges(previous_run, flags), history_rows(kept, current, keep)


def history_sheet(rows: Sequence[Sequence[Any]]) -> Any:
    """The hidden history sheet (kind ``history``): the rows as plain values, header first."""
    from ..sheets.model import SheetModel

    model = SheetModel(name=SHEET_NAME, kind=KIND, hidden=True)
    for r, row in enumerate(rows):
        for c, value in enumerate(row):
            if value is None:
                continue
            style = "text" if isinstance(value, str) else "integer" if isinstance(value, int) else "number"
            model.put(r, c, value, style)
    model.widths = {0: 34.0, 1: 48.0}
    return model


def change_lines(results: Sequence[Result], changes: RunChanges) -> list[str]:
    """The lines at the top of the results sheet: what changed, most important first (in the run's order).

    One line "Nothing changed since the last run on ..." when nothing did; one
    line saying it is the first run when there is no history.
    """
    from ..words.period_readings import change_label, run_time_text
    from ..words.period_words import since_last_run_lines

    labels: dict[str, str] = {}
    for result in results:
        for part in [*parts(result), TREND_PART]:
            key = analysis_key(result, part)
            labels.setdefault(key, change_label(result, part, key))
    order = {key: i for i, key in enumerate(labels)}
    grouped = []
    for flag, keys in headline(changes.flags):
        ranked = sorted(keys, key=lambda k: (order.get(k, len(order)), k))
        texts = [labels.get(k) or change_label(None, None, k) for k in ranked]
        grouped.append((flag, list(dict.fromkeys(texts))))
    when = run_time_text(changes.previous_run) if changes.previous_run else None
    return since_last_run_lines(grouped, when)
