"""Seeded data for a monthly-refresh demo: an invented immunization outreach log, one month at a time.

**Everything here is invented for demonstration.** The scenario is our own: an
invented district outreach service ("Riverbend") whose three mobile teams,
named after birds, vaccinate children at community visits. No real service,
place or person is described.

Each month's rows come from their own seeded generator, so the file for July
is the file for June with July's rows appended: exactly what a person does at
a monthly refresh. The shares of same-day vaccination are fixed by design (the
number of "Yes" rows per month is set, then shuffled), so the demo tells the
same story on every machine:

* January to June: same-day vaccination between 75% and 81% (pooled 78.7%,
  708 of 900), no trend;
* June is up on May (81.3% against 74.8%; not below 0.05);
* July falls to 64.7% (97 of 150): the pooled share moves to 76.7%, the trend
  across months drops below 0.05 (since last run: now below the level), July
  against June points the other way from June against May and is below 0.05
  (direction reversed), and July is beyond the p chart's lower 3-sigma limit.

Waiting times are lognormal (right-skewed), a little longer for one team, with
no trend and no clear change from one month to the next. ``write_workbook``
writes the data sheet that ``make_demo_workbooks.py`` turns into the shipped
demo workbook (January to June, roles sheet added there), and
``write_rows_workbook`` a workbook holding only July's rows for a newcomer to
paste under them.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path
from typing import Any

import numpy as np

SEED = 20260707
YEAR = 2026
INVENTED_LINE = "All data in this workbook are invented for demonstration."
SHEET = "Visits"
COLUMNS = [
    "Visit ID",
    "Visit date",
    "Team",
    "Child age (months)",
    "Vaccinated same day",
    "Wait (minutes)",
]
TEAMS = ("Heron", "Kestrel", "Otter")
TEAM_SHARES = (0.40, 0.35, 0.25)
SLOW_TEAM = "Kestrel"  # about 20% longer waits
# Rows and same-day "Yes" rows per month (January = 1); the design of the story above.
MONTH_ROWS = {1: 148, 2: 152, 3: 150, 4: 149, 5: 151, 6: 150, 7: 150, 8: 151}
MONTH_YES = {1: 119, 2: 118, 3: 120, 4: 116, 5: 113, 6: 122, 7: 97, 8: 104}
OUTCOME = "Vaccinated same day"
DATE_COLUMN = "Visit date"


def month_rows(month: int) -> list[dict[str, Any]]:
    """One month's visits, from a generator seeded by (SEED, month) so months never change once written.

    Visits fall on weekdays of the month in date order; the last weekday of the
    month always has a visit, as a full month's log would.
    """
    rng = np.random.default_rng([SEED, month])
    n, yes = MONTH_ROWS[month], MONTH_YES[month]
    first = dt.date(YEAR, month, 1)
    last = (dt.date(YEAR + (month == 12), month % 12 + 1, 1)) - dt.timedelta(days=1)
    weekdays = [first + dt.timedelta(days=i) for i in range((last - first).days + 1)]
    weekdays = [d for d in weekdays if d.weekday() < 5]
    days = sorted(rng.choice(np.array(weekdays, dtype=object), size=n - 1).tolist() + [weekdays[-1]])
    same_day = np.array(["Yes"] * yes + ["No"] * (n - yes), dtype=object)
    rng.shuffle(same_day)
    teams = rng.choice(np.array(TEAMS, dtype=object), size=n, p=TEAM_SHARES)
    ages = rng.integers(2, 60, size=n)
    # Waits come from their own stream, so the story of the shares above is untouched by them; this
    # stream gives waits with no trend and no clear month-to-month change (checked in the tests).
    waits = np.exp(np.log(25.0) + np.random.default_rng([SEED, month, 1]).normal(0.0, 0.45, size=n))
    waits = np.where(teams == SLOW_TEAM, waits * 1.2, waits)
    return [
        {
            "Visit ID": f"V{YEAR % 100:02d}{month:02d}-{i + 1:03d}",
            "Visit date": days[i],
            "Team": str(teams[i]),
            "Child age (months)": int(ages[i]),
            "Vaccinated same day": str(same_day[i]),
            "Wait (minutes)": float(np.round(waits[i])),
        }
        for i in range(n)
    ]


def period_demo_rows(months: int = 6) -> list[dict[str, Any]]:
    """Visits of January to ``months`` (6: the first run; 7: the refresh after appending July)."""
    return [row for month in range(1, months + 1) for row in month_rows(month)]


def write_workbook(path: str | Path, months: int = 6) -> Path:
    """Write the visits of January to ``months`` to a new workbook (data sheet and an About sheet).

    Dates are written as real dates; the second sheet says the data are invented.
    """
    return _write_visits(
        path, SHEET, period_demo_rows(months),
        "An invented outreach service's visit log, one row per visit; append each month's rows below.",
    )


def write_rows_workbook(path: str | Path, month: int = 7) -> Path:
    """Write one month's visits alone (header and rows), for pasting under the demo's data at a refresh."""
    return _write_visits(
        path, f"{dt.date(YEAR, month, 1):%B} rows", month_rows(month),
        "Copy the rows below the header on the first sheet and paste them under the last row of "
        "the Visits sheet of the demo workbook, then run statmargin again.",
    )


def _write_visits(path: str | Path, sheet_name: str, rows: list[dict[str, Any]], about: str) -> Path:
    """A new workbook: the visits on ``sheet_name`` (dates as real dates) and an About sheet."""
    import xlsxwriter

    path = Path(path)
    workbook = xlsxwriter.Workbook(str(path))
    workbook.set_properties(
        {"title": path.stem, "author": "statmargin demo generator", "comments": INVENTED_LINE,
         "created": dt.datetime(2026, 1, 1)}
    )
    sheet = workbook.add_worksheet(sheet_name)
    bold = workbook.add_format({"bold": True})
    date = workbook.add_format({"num_format": "yyyy-mm-dd"})
    sheet.write_row(0, 0, COLUMNS, bold)
    for r, row in enumerate(rows, start=1):
        for c, name in enumerate(COLUMNS):
            value = row[name]
            if isinstance(value, dt.date):
                sheet.write_datetime(r, c, dt.datetime(value.year, value.month, value.day), date)
            else:
                sheet.write(r, c, value)
    note = workbook.add_worksheet("About")
    note.write(0, 0, INVENTED_LINE, bold)
    note.write(1, 0, about)
    workbook.close()
    return path
