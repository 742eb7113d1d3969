"""One-line refusals about roles, columns and options: what is wrong and what to do.

Each function returns the message a typed error carries; the command line
prints it as it is, so every message names the column, sheet or option and
says how to fix it.
"""

from __future__ import annotations

ROLE_OUTCOME = "an outcome"
ROLE_BY = "a compare-by column"
ROLE_PAIRED = "a paired measurement"


def _article(word: str) -> str:
    return ("an " if word[:1] in "aeiou" else "a ") + word


def empty_column(name: str, role: str) -> str:
    return (
        f"Column {name!r} has no values, so it cannot be {role}; check the column name and the "
        "header row."
    )


def unusable_type(name: str, kind: str, reason: str, role: str) -> str:
    if kind == "date":
        return (
            f"Column {name!r} holds dates ({reason.rstrip('.')}), so it cannot be {role}; give it the role "
            "'period' for a series by week, month, quarter or year, or change its role."
        )
    return (
        f"Column {name!r} looks like {_article(kind)} ({reason.rstrip('.')}), so it cannot be {role}; "
        "set its type to continuous, categorical or ordinal, or change its role."
    )


def nothing_to_compare(outcome: str) -> str:
    return (
        f"Nothing to compare {outcome} with: give a compare-by column, a comparison value or a "
        "paired measurement."
    )


def mixed_pair(first: str, second: str) -> str:
    return (
        f"{first!r} and {second!r} are paired but one holds categories and the other numbers; set "
        "both to the same type."
    )


def shares_for_numbers(outcome: str) -> str:
    return (
        f"Comparison value for {outcome}: shares by label fit categories, but {outcome} holds "
        "numbers; give one number such as 20."
    )


# ---------------------------------------------------------------- options


def unknown_word(option: str, word: object, allowed: list[str]) -> str:
    return f"{option}: {word!r} is not known; use {', '.join(allowed[:-1])} or {allowed[-1]}."


def bad_confidence(confidence: object) -> str:
    return f"Confidence {confidence!r} must be a number between 0 and 1, such as 0.95."


def bad_type_override(item: object) -> str:
    return f"Type override {item!r} is not COL=TYPE (e.g. site=categorical)."


def unknown_type(word: str, name: str) -> str:
    return f"--treat: type {word!r} for {name!r} is not known; use categorical, continuous or ordinal."


def order_for_continuous(name: str) -> str:
    return f"A level order was given for {name!r}, but only categories and ordinal columns have levels."


def total_for_non_events(option: str, name: str) -> str:
    return f"{option} names {name!r}, which is not one of the --events columns; name an events column."


def events_need_one_total(name: str) -> str:
    return (
        f"Events column {name!r} needs its total: --out-of COL (people or inspections), --per COL "
        "(person-time or population), or both."
    )


def no_outcome_named() -> str:
    return "Name at least one outcome column."


def pairing_key_needs_by() -> str:
    return "--pairing-key needs --by: the column saying which measurement each row is."


def named_twice(name: str) -> str:
    return f"Column {name!r} is named twice with different roles; use it once."


def type_for_unnamed(name: str) -> str:
    return f"A type is given for {name!r}, which is not one of the named columns."


def nothing_compared() -> str:
    return "Say what the outcome is compared with: --by COL, --against VALUE or --paired-with COL."


def against_with_others() -> str:
    return "--against asks a one-sample question; use it without --by and --paired-with."


def paired_with_and_by() -> str:
    return "--paired-with pairs two columns; use it without --by."


def col_value(option: str, item: object) -> str:
    return f"{option} {item!r}: write it as COL=VALUE, e.g. {option} \"Score=85\"."


def value_for_unnamed(option: str, name: str) -> str:
    return f"{option} names {name!r}, which is not one of the outcome columns; name an outcome."


# ---------------------------------------------------------------- comparison values


def against_where(column: str) -> str:
    return f"Comparison value for {column}"


def not_a_number(where: str, text: str) -> str:
    return f"{where}: {text!r} is not a number."


def not_finite(where: str, text: str) -> str:
    return f"{where}: {text!r} is not a finite number."


def against_empty(where: str) -> str:
    return f"{where} is empty; give a number, or LABEL=SHARE for categories."


def shares_for_number_column(where: str, text: str, column: str) -> str:
    return f"{where}: {text!r} gives shares, but {column} holds numbers; give one number such as 20."


def cannot_compare_kind(column: str, kind: str) -> str:
    return f"{column} is {kind}, so it cannot be compared with a fixed value; set its type."


def number_for_categories(where: str, text: str, column: str, example: str) -> str:
    return (
        f"{where}: {text!r} is a single number, but {column} holds categories; write LABEL=SHARE "
        f"(e.g. {example}=0.5)."
    )


def not_label_share(where: str, part: str) -> str:
    return f"{where}: {part!r} is not LABEL=SHARE."


def unknown_category(where: str, label: str, column: str, known: str) -> str:
    return f"{where}: {label!r} is not a category of {column} (categories: {known})."


def share_twice(where: str, label: str) -> str:
    return f"{where}: {label!r} is given twice."


def share_out_of_range(where: str, label: str, value: str) -> str:
    return f"{where}: the share for {label!r} must be between 0 and 1, got {value}."


def shares_missing(where: str, missing: str) -> str:
    return f"{where}: shares are missing for {missing}; give one share per category, or one LABEL=SHARE only."


def shares_total(where: str, total: float) -> str:
    return f"{where}: the shares add up to {total:g}, not 1."


# ---------------------------------------------------------------- expanding roles


def no_outcome_role() -> str:
    return "No column has the role 'outcome'; mark at least one outcome column."


def several_keys(names: str) -> str:
    return f"Only one pairing key is allowed, but {names} are marked; keep one."


def key_needs_by(key: str) -> str:
    return (
        f"Pairing key {key!r} needs a compare-by column that says which measurement each row is "
        "(e.g. before/after)."
    )


def paired_with_itself(name: str) -> str:
    return f"{name!r} cannot be paired with itself; name the other measurement column."


def outcome_alone(name: str) -> str:
    return (
        f"Outcome {name!r} has nothing to be compared with; mark a compare-by column, give a "
        "comparison value, or name a column to pair it with."
    )


def no_roles_sheet(workbook: str) -> str:
    return (
        f"{workbook} has no roles sheet yet; run 'statmargin plan {workbook}' first and mark at least one "
        "outcome column."
    )


def no_outcome_on_sheet() -> str:
    return (
        "No column has the role 'outcome' on the roles sheet; pick 'outcome' in the Role column for at "
        "least one column, save, and run again."
    )


def role_for_missing_column(name: str) -> str:
    return (
        f"Column {name!r} has a role but is no longer in the data; run 'statmargin plan' to refresh the "
        "roles sheet, or set its role to 'ignore'."
    )


def demo_file_missing(name: str) -> str:
    return f"The bundled workbook {name} is missing from this installation; reinstall statmargin."


def demo_folder(folder: str, reason: str) -> str:
    return f"Cannot make the folder {folder} ({reason}); choose another folder."


def one_sided_needs_order(column: str, levels: list[str]) -> str:
    example = ", ".join(levels[:2]) if len(levels) >= 2 else "first, second"
    return (
        f"A one-sided question compares {column}'s groups in a stated order; give it as the label "
        f"order of {column} (Label order on the roles sheet, or --treat \"{column}=categorical:{example}\"), "
        "first the group expected to be higher."
    )


def one_sided_not_applicable(test_words: str, outcome: str, by: str | None) -> str:
    what = f"{outcome} by {by}" if by else outcome
    return (
        f"--alternative greater/less does not apply to {what}: {test_words} has no direction; "
        "set the sidedness to two-sided."
    )


def not_a_frame(kind: str | None = None) -> str:
    if kind is None:
        return "data must be a pandas DataFrame or a statmargin Table."
    return f"data must be a pandas DataFrame or a statmargin Table, not {kind}."


def bad_share_threshold(min_count: object, default: int) -> str:
    return f"The sharing threshold must be a whole number of at least 2 (got {min_count!r}); the default is {default}."


def cannot_share(kind: str) -> str:
    return f"Sharing mode can only hide counts in sheets or results, not in {kind}."


def no_such_name(module: str, name: str) -> str:
    """Python's own wording for a name a module does not have."""
    return f"module {module!r} has no attribute {name!r}"


# A one-sided question has no direction for these tests (``one_sided_not_applicable``).
UNDIRECTED_GROUP_CENTRES = "a comparison of three or more groups"
UNDIRECTED_GROUP_SHARES = "a chi-square test of three or more groups"
UNDIRECTED_GROUP_RATES = "a test of three or more groups' rates"
UNDIRECTED_SEVERAL_SHARES = "a chi-square goodness-of-fit test of several shares"
UNDIRECTED_LARGE_TABLE = "a chi-square test of a table larger than 2x2"
