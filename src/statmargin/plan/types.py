"""Measurement-type inference for one column, and the usable values for a chosen type.

The rules, in the order they are applied (the user's choice always wins):

1. No cell holds a number or text: **empty**.
2. At least half of the filled cells were dates: **date**.
3. Most filled cells are numbers (a numeric column; text cells in it are excluded):

   - every number is a whole number and there are at most 10 distinct values:
     **categorical** (common practice for coded answers such as 0/1 or 1-5 codes;
     the user can set "continuous" to override);
   - every number is a whole number, every value is distinct and there are more
     than 20 values: **identifier** (record numbers);
   - otherwise **continuous**.

4. Most filled cells are text: more than 90% distinct with more than 20 values is an
   **identifier** (names, codes), otherwise **categorical**.

Ordinal is never inferred; it applies only when the user says so. Ordinal text
labels with a user-given order become ranks 1..k; numeric ordinal values keep
their numbers.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np

from .. import stages
from ..errors import RoleError
from ..read.table import Column, not_none
from ..vocabulary import MeasureType
from ..words import type_words as why
from .model import ColumnChoice

# Thresholds of the rules above, kept together so the docs and the code agree.
MAX_CATEGORICAL_CODES = 10  # whole-number columns with <= this many values are categories
IDENTIFIER_MIN_N = 20  # identifiers need more than this many values ...
IDENTIFIER_MIN_UNIQUE_SHARE = 0.90  # ... and more than this share distinct (text)


@dataclass(frozen=True)
class TypeInfo:
    """A column's measurement type, its levels (for categories), and why it was chosen."""

    type: MeasureType
    n_levels: int = 0
    levels: tuple[str, ...] = ()
    reason: str = ""
    inferred: bool = True  # False when the user chose the type

    @property
    def is_binary(self) -> bool:
        """True for a categorical column with exactly two levels."""
        return self.type is MeasureType.CATEGORICAL and self.n_levels == 2


@dataclass
class ColumnValues:
    """The usable values of one column for one type, aligned with the table rows.

    ``values`` is float64 (NaN where unusable) for continuous and ordinal columns,
    and object (None where unusable) for categorical ones. ``excluded`` counts the
    rows that held something but could not be used, by reason.
    """

    values: np.ndarray
    usable: np.ndarray  # bool per row
    present: np.ndarray  # bool per row: the cell held anything at all
    excluded: dict[str, int] = field(default_factory=dict)

    @property
    def n(self) -> int:
        return int(self.usable.sum())

    @property
    def why(self) -> np.ndarray:
        """Per row: why a filled cell was left out (object array; None where usable or blank)."""
        out = np.full(self.usable.shape, None, dtype=object)
        left_out = self.present & ~self.usable
        if left_out.any():
            reason = "; ".join(self.excluded) or "not usable"
            out[left_out] = reason
        return out

    @property
    def n_excluded(self) -> int:
        return int(sum(self.excluded.values()))


def format_number(value: float) -> str:
    """A number as a category label: whole numbers without a decimal point (2.0 -> "2")."""
    if float(value).is_integer():
        return str(int(value))
    return repr(float(value))


def _labels_of_numbers(distinct: np.ndarray) -> np.ndarray:
    """``format_number`` of each value, as an object array; whole numbers are done in one NumPy step.

    An identifier column holds a million whole numbers, and one Python call each took about a second.
    """
    shown = np.empty(distinct.shape, dtype=object)
    whole = np.isfinite(distinct) & (np.floor(distinct) == distinct) & (np.abs(distinct) < 1e15)
    shown[whole] = distinct[whole].astype(np.int64).astype(str).astype(object)
    shown[~whole] = [format_number(v) for v in distinct[~whole].tolist()]
    return shown


def _frozen(array: np.ndarray) -> np.ndarray:
    """The array made read-only, since it is shared through the column's cache."""
    array.flags.writeable = False
    return array


def _text_codes(column: Column) -> tuple[np.ndarray, list[str]]:
    """Each row's index into the column's distinct stripped texts (-1: no text), and those texts.

    Notes
    -----
    Distinct values are found by hashing (``pandas.factorize``), so each distinct
    text is stripped once however many rows repeat it.
    """
    import pandas as pd

    cached = column.cache.get("text codes")
    if cached is not None:
        return cached
    labels = column.labels
    codes = np.full(labels.shape[0], -1, dtype=np.int64)
    texts: list[str] = []
    has = not_none(labels)
    if has.any():
        found, uniques = pd.factorize(labels[has])
        stripped = [str(u).strip() for u in uniques]
        keep = np.array([t != "" for t in stripped], dtype=bool)
        # Renumber so blank texts drop out and the codes index the non-blank texts.
        renumber = np.where(keep, np.cumsum(keep) - 1, -1)
        codes[has] = renumber[found]
        texts = [t for t, k in zip(stripped, keep, strict=True) if k]
    column.cache["text codes"] = (_frozen(codes), texts)
    return codes, texts


def _present(column: Column) -> tuple[np.ndarray, np.ndarray]:
    """Masks of cells holding a number and cells holding text (read-only, computed once per column)."""
    cached = column.cache.get("present")
    if cached is None:
        has_number = ~np.isnan(column.numbers)
        codes, _ = _text_codes(column)
        has_text = (codes >= 0) & ~has_number
        cached = column.cache["present"] = (_frozen(has_number), _frozen(has_text))
    return cached


def _is_numeric(column: Column) -> bool:
    has_number, has_text = _present(column)
    return int(has_number.sum()) >= int(has_text.sum()) and bool(has_number.any())


def category_labels(column: Column) -> np.ndarray:
    """Every row's category label (numbers formatted, text stripped), None where blank.

    The array is computed once per column and shared, so it is read-only.
    """
    cached = column.cache.get("labels")
    if cached is not None:
        return cached
    has_number, _ = _present(column)
    out = np.full(len(column), None, dtype=object)
    if has_number.any():
        distinct, inverse = np.unique(column.numbers[has_number], return_inverse=True)
        shown = _labels_of_numbers(distinct)
        out[has_number] = shown[inverse.ravel()]
    codes, texts = _text_codes(column)
    has_text = (codes >= 0) & ~has_number
    if has_text.any():
        out[has_text] = np.array(texts, dtype=object)[codes[has_text]]
    column.cache["labels"] = _frozen(out)
    return out


def sorted_levels(labels: np.ndarray) -> tuple[str, ...]:
    """Distinct labels, numerically when all are numbers, else alphabetically."""
    import pandas as pd

    present = labels[not_none(labels)]
    distinct = set(pd.unique(present).tolist()) if present.size else set()
    try:
        return tuple(sorted(distinct, key=float))
    except ValueError:
        return tuple(sorted(distinct))


def infer_type(column: Column, choice: ColumnChoice | None = None) -> TypeInfo:
    """Infer a column's measurement type, or apply the user's choice.

    Parameters
    ----------
    column : Column
        The column as read.
    choice : ColumnChoice, optional
        The user's choices for this column; ``treat_as`` overrides inference and
        ``order`` fixes the level order of a categorical or ordinal column.

    Returns
    -------
    TypeInfo
        Type, number of levels and levels (categorical and ordinal columns), and a
        one-sentence reason.

    Notes
    -----
    The rules and thresholds are listed in this module's docstring. Treating a
    numeric column with at most 10 distinct whole numbers as categorical is a rule
    of thumb (common practice, no single source); the user can override it.
    """
    order = tuple(choice.order) if choice and choice.order else None
    treat = choice.treat_as if choice else None
    key = ("type", treat, order)
    info = column.cache.get(key)
    if info is None:
        start = time.perf_counter()
        info = column.cache[key] = _infer(column, treat, order)
        stages.add("types", time.perf_counter() - start)
    return info


def _infer(column: Column, treat: MeasureType | None, order: tuple[str, ...] | None) -> TypeInfo:
    """``infer_type`` without the cache."""
    name = column.name
    has_number, has_text = _present(column)
    n_filled = int(has_number.sum() + has_text.sum())
    if treat is not None:
        return _user_type(column, treat, order)
    if n_filled == 0:
        return TypeInfo(MeasureType.EMPTY, reason=why.no_values(name))
    if column.n_dates * 2 >= n_filled:
        return TypeInfo(MeasureType.DATE, reason=why.dates(name, column.n_dates, n_filled))

    if _is_numeric(column):
        numbers = column.numbers[has_number]
        whole = bool(np.all(np.mod(numbers, 1) == 0))
        n_distinct = len(np.unique(numbers))
        if whole and n_distinct <= MAX_CATEGORICAL_CODES:
            levels = order or sorted_levels(category_labels(column))
            return TypeInfo(
                MeasureType.CATEGORICAL,
                n_levels=len(levels),
                levels=levels,
                reason=why.few_whole_numbers(name, n_distinct, MAX_CATEGORICAL_CODES),
            )
        if whole and n_distinct == len(numbers) and len(numbers) > IDENTIFIER_MIN_N:
            return TypeInfo(
                MeasureType.IDENTIFIER,
                reason=why.whole_number_identifier(name),
            )
        return TypeInfo(MeasureType.CONTINUOUS, reason=why.numbers(name, n_distinct))

    import pandas as pd

    labels = category_labels(column)
    texts = labels[has_text]
    n_distinct = len(pd.unique(texts))
    if len(texts) > IDENTIFIER_MIN_N and n_distinct > IDENTIFIER_MIN_UNIQUE_SHARE * len(texts):
        return TypeInfo(
            MeasureType.IDENTIFIER,
            reason=why.text_identifier(name, n_distinct, len(texts)),
        )
    levels = order or sorted_levels(labels)
    return TypeInfo(
        MeasureType.CATEGORICAL,
        n_levels=len(levels),
        levels=levels,
        reason=why.labels(name, len(levels)),
    )


def _user_type(column: Column, treat: MeasureType, order: tuple[str, ...] | None) -> TypeInfo:
    """The TypeInfo for a type the user chose."""
    name = column.name
    reason = why.as_chosen(name, treat.value)
    if treat is MeasureType.CATEGORICAL:
        levels = order or sorted_levels(category_labels(column))
        return TypeInfo(treat, n_levels=len(levels), levels=levels, reason=reason, inferred=False)
    if treat is MeasureType.ORDINAL:
        if _is_numeric(column):
            levels = sorted_levels(category_labels(column)) if order is None else order
        else:
            if order is None:
                raise RoleError(why.ordinal_needs_order(name))
            levels = order
        return TypeInfo(treat, n_levels=len(levels), levels=levels, reason=reason, inferred=False)
    return TypeInfo(treat, reason=reason, inferred=False)


def usable_values(column: Column, info: TypeInfo) -> ColumnValues:
    """The values of a column that can be used as ``info.type``, and the rows left out.

    Parameters
    ----------
    column : Column
        The column as read.
    info : TypeInfo
        The type to read the values as (from :func:`infer_type`).

    Returns
    -------
    ColumnValues
        Values aligned with the table rows, a usable mask, a mask of filled cells,
        and counts of filled cells that were left out, by reason.

    Notes
    -----
    Continuous (and date) columns use the numbers; text cells are left out (the
    reader has already made a data note for each). Categorical columns use every
    filled cell as a label. Ordinal columns with a label order map the labels to
    ranks 1..k and leave out labels not in the order; numeric ordinal columns keep
    their numbers.
    """
    has_number, has_text = _present(column)
    present = has_number | has_text
    excluded: dict[str, int] = {}
    kind = info.type
    if kind in (MeasureType.CONTINUOUS, MeasureType.DATE):
        values = np.where(has_number, column.numbers, np.nan)
        if has_text.any():
            excluded[why.TEXT_IN_NUMBERS] = int(has_text.sum())
        return ColumnValues(values, has_number.copy(), present, excluded)
    if kind is MeasureType.CATEGORICAL:
        labels = category_labels(column)
        usable = present.copy()
        if info.levels and not info.inferred:
            # A user-given order lists the levels to use; anything else is left out.
            allowed = set(info.levels)
            outside = np.array([lab is not None and lab not in allowed for lab in labels], dtype=bool)
            if outside.any():
                excluded[why.NOT_LISTED] = int(outside.sum())
                usable &= ~outside
                # numpy's stubs reject None as a fill value; at run time it fills an object array.
                labels = np.where(usable, labels, None)  # type: ignore[call-overload]
        return ColumnValues(labels, usable, present, excluded)
    if kind is MeasureType.ORDINAL:
        if ordinal_labels(column, info) is None:
            values = np.where(has_number, column.numbers, np.nan)
            if has_text.any():
                excluded[why.TEXT_IN_NUMBERS] = int(has_text.sum())
            return ColumnValues(values, has_number.copy(), present, excluded)
        rank = {lab: float(i + 1) for i, lab in enumerate(info.levels)}
        labels = category_labels(column)
        values = np.array([rank.get(lab, np.nan) if lab is not None else np.nan for lab in labels], dtype=float)
        usable = ~np.isnan(values)
        outside = present & ~usable
        if outside.any():
            excluded[why.NOT_ORDERED] = int(outside.sum())
        return ColumnValues(values, usable, present, excluded)
    # Identifiers and empty columns: labels are kept (pairing keys use them) but no test uses them.
    labels = category_labels(column)
    return ColumnValues(labels, present.copy(), present, excluded)


def ordinal_labels(column: Column, info: TypeInfo) -> tuple[str, ...] | None:
    """The labels an ordinal column's values 1..k stand for, lowest first; None when its numbers are used as they are."""
    if info.type is not MeasureType.ORDINAL:
        return None
    if _is_numeric(column) and not (info.levels and not _levels_are_numbers(info.levels)):
        return None
    return info.levels


def _levels_are_numbers(levels: tuple[str, ...]) -> bool:
    try:
        [float(v) for v in levels]
    except ValueError:
        return False
    return True
