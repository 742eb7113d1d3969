"""Column choices from options: type overrides, COL=VALUE presets and the plan of a one-off question."""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence

from ..errors import OptionError
from ..plan.model import ColumnChoice, Plan, Settings
from ..vocabulary import MeasureType, Role, ShapeHandling
from ..words import refusals

# Words accepted for shape handling: the short option words and the roles sheet's words.
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


def parse_shape(shape: str) -> ShapeHandling:
    """Shape handling from its word: auto, normal (assume normal) or rank (rank-based)."""
    handling = SHAPE_WORDS.get(str(shape).strip().lower())
    if handling is None:
        raise OptionError(refusals.unknown_word("--shape", shape, ["auto", "normal", "rank"]))
    return handling


def parse_treat(treat: Mapping[str, str] | Iterable[str] | None) -> dict[str, tuple[MeasureType, list[str] | None]]:
    """Parse type overrides ("COL=TYPE" or a mapping) into types and optional ordinal orders.

    Examples
    --------
    >>> parse_treat(["pain=ordinal:none,mild,severe"])["pain"][1]
    ['none', 'mild', 'severe']
    """
    if treat is None:
        return {}
    pairs: list[tuple[str, str]] = []
    if isinstance(treat, Mapping):
        pairs = [(str(k), str(v)) for k, v in treat.items()]
    else:
        for item in treat:
            name, sep, kind = str(item).rpartition("=") if ":" not in str(item) else _split_treat(str(item))
            if not sep or not name.strip():
                raise OptionError(refusals.bad_type_override(item))
            pairs.append((name.strip(), kind.strip()))
    out: dict[str, tuple[MeasureType, list[str] | None]] = {}
    for name, kind in pairs:
        word, _, order_text = kind.partition(":")
        word = word.strip().lower()
        if word not in TREAT_WORDS:
            raise OptionError(refusals.unknown_type(word, name))
        order = [p.strip() for p in order_text.split(",") if p.strip()] or None
        if order and TREAT_WORDS[word] is MeasureType.CONTINUOUS:
            raise OptionError(refusals.order_for_continuous(name))
        out[name] = (TREAT_WORDS[word], order)
    return out


def _split_treat(item: str) -> tuple[str, str, str]:
    """Split "COL=ordinal:a,b=c" at the '=' before the first ':' (labels may hold '=')."""
    head, colon, tail = item.partition(":")
    name, sep, kind = head.rpartition("=")
    return name, sep, kind + colon + tail


def parse_col_values(
    values: Mapping[str, str] | Iterable[str] | str | None, option: str, outcomes: Sequence[str] = ()
) -> dict[str, str]:
    """``[COL=]VALUE`` options into {column: value}; a bare VALUE applies to every named outcome.

    One grammar for ``--against`` and ``--paired-with`` everywhere: ``Score=85``
    names its column; with outcomes named (the ``test`` command, the Python API),
    a value whose text before the first ``=`` is not one of them applies to all of
    them, so ``--against 20`` and ``--against Fail=0.1`` keep working.

    Examples
    --------
    >>> parse_col_values(["Score=85"], "--against")
    {'Score': '85'}
    >>> parse_col_values("Result=Fail=0.1", "--against", ["Result"])
    {'Result': 'Fail=0.1'}
    >>> parse_col_values("Fail=0.1", "--against", ["Result"])
    {'Result': 'Fail=0.1'}
    """
    if values is None:
        return {}
    if isinstance(values, Mapping):
        return {str(k).strip(): str(v).strip() for k, v in values.items()}
    items = [values] if isinstance(values, str) else list(values)
    out: dict[str, str] = {}
    for item in items:
        text = str(item).strip()
        name, sep, value = text.partition("=")
        if outcomes and (not sep or name.strip() not in outcomes):
            for outcome in outcomes:
                out[outcome] = text
            continue
        if not sep or not name.strip() or not value.strip():
            raise OptionError(refusals.col_value(option, item))
        out[name.strip()] = value.strip()
    return out


def build_plan(
    outcomes: Sequence[str],
    bys: Sequence[str] = (),
    *,
    against: Mapping[str, str] | None = None,
    pairing_key: str | None = None,
    paired_with: Mapping[str, str] | None = None,
    treat: Mapping[str, tuple[MeasureType, list[str] | None]] | None = None,
    shape: str = "auto",
    settings: Settings | None = None,
    event: Mapping[str, str] | None = None,
    events: Sequence[str] = (),
    out_of: Mapping[str, str] | None = None,
    per: Mapping[str, str] | None = None,
    count: str | None = None,
    period: str | None = None,
) -> Plan:
    """The plan of a one-off question from options (shared by ``analyze`` and ``statmargin test``).

    Refuses what cannot be asked at once: nothing to compare with, a comparison
    value together with a compare-by or paired column, a paired column together
    with a compare-by column, a pairing key without a compare-by column, events
    without a total or person-time.
    """
    if not outcomes and not events:
        raise OptionError(refusals.no_outcome_named())
    against = dict(against or {})
    paired_with = dict(paired_with or {})
    out_of, per = dict(out_of or {}), dict(per or {})
    if pairing_key and not bys:
        raise OptionError(refusals.pairing_key_needs_by())
    if not (bys or against or paired_with or period):
        raise OptionError(refusals.nothing_compared())
    if against and (bys or paired_with):
        raise OptionError(refusals.against_with_others())
    if paired_with and bys:
        raise OptionError(refusals.paired_with_and_by())
    event = dict(event or {})
    analysed = [*outcomes, *events]
    for option, values in (("--against", against), ("--paired-with", paired_with), ("--event", event)):
        for name in values:
            if name not in analysed:
                raise OptionError(refusals.value_for_unnamed(option, name))
    for option, values in (("--out-of", out_of), ("--per", per)):
        for name in values:
            if name not in events:
                raise OptionError(refusals.total_for_non_events(option, name))
    for name in events:
        if name not in out_of and name not in per:
            raise OptionError(refusals.events_need_one_total(name))
    handling = parse_shape(shape)
    treat = dict(treat or {})
    choices: dict[str, ColumnChoice] = {}

    def choice(name: str, role: Role) -> ColumnChoice:
        if name in choices:
            if choices[name].role is not role:
                raise OptionError(refusals.named_twice(name))
            return choices[name]
        kind, order = treat.get(name, (None, None))
        c = ColumnChoice(name, role=role, treat_as=kind, order=order)
        choices[name] = c
        return c

    for name, role in [*((n, Role.OUTCOME) for n in outcomes), *((n, Role.EVENTS) for n in events)]:
        c = choice(name, role)
        c.shape = handling
        c.against = against.get(name)
        c.paired_with = paired_with.get(name)
        c.event = event.get(name)
        c.out_of = out_of.get(name)
        c.per = per.get(name)
    for name in bys:
        choice(name, Role.COMPARE_BY)
    if pairing_key:
        choice(pairing_key, Role.PAIRING_KEY)
    if count:
        choice(count, Role.COUNT)
    if period:
        choice(period, Role.PERIOD)
    for partner in [*paired_with.values(), *out_of.values(), *per.values()]:
        if partner not in choices:
            kind, order = treat.get(partner, (None, None))
            choices[partner] = ColumnChoice(partner, role=Role.IGNORE, treat_as=kind, order=order)
    unknown = [n for n in treat if n not in choices]
    if unknown:
        raise OptionError(refusals.type_for_unnamed(unknown[0]))
    return Plan(columns=list(choices.values()), settings=settings or Settings())


ColValues = Mapping[str, str] | Iterable[str] | str | None


def plan_from_options(
    outcome: str | Sequence[str] = (),
    by: str | Sequence[str] | None = None,
    *,
    against: ColValues = None,
    pairing_key: str | None = None,
    paired_with: ColValues = None,
    treat: Mapping[str, str] | Iterable[str] | None = None,
    shape: str = "auto",
    settings: Settings | None = None,
    event: ColValues = None,
    events: str | Sequence[str] = (),
    out_of: ColValues = None,
    per: ColValues = None,
    count: str | None = None,
    period: str | None = None,
) -> Plan:
    """The plan of a one-off question from options as users give them (``analyze``, ``statmargin test``).

    A column option takes one name or several; ``against``, ``paired_with``,
    ``event``, ``out_of`` and ``per`` take ``[COL=]VALUE`` text, items or a
    mapping (:func:`parse_col_values`). A bare value applies to every outcome,
    or every events column for ``out_of`` and ``per`` (``against``: both). The
    checks are :func:`build_plan`'s.

    Examples
    --------
    >>> plan = plan_from_options("Score", against="85")
    >>> [(c.name, c.role.value, c.against) for c in plan.columns]
    [('Score', 'outcome', '85')]
    """
    outcomes = [outcome] if isinstance(outcome, str) else list(outcome)
    bys = [] if by is None else [by] if isinstance(by, str) else list(by)
    event_columns = [events] if isinstance(events, str) else list(events)
    return build_plan(
        outcomes,
        bys,
        against=parse_col_values(against, "--against", [*outcomes, *event_columns]),
        pairing_key=pairing_key,
        paired_with=parse_col_values(paired_with, "--paired-with", outcomes),
        treat=parse_treat(treat),
        shape=shape,
        settings=settings,
        event=parse_col_values(event, "--event", outcomes),
        events=event_columns,
        out_of=parse_col_values(out_of, "--out-of", event_columns),
        per=parse_col_values(per, "--per", event_columns),
        count=count,
        period=period,
    )
