"""Rows that summarise many records: checking them, pooling them per group, measuring their spread.

An aggregated row holds a count of events and its denominator: people (events
out of a total, binomial rows) or person-time / population (events per unit,
Poisson rows). The tests use the totals pooled per group; the rows themselves
are only used to measure whether they vary more than binomial or Poisson
sampling allows (the Pearson dispersion). Inputs are arrays; nothing here
knows about sheets.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import stats

from statmargin.errors import NotEnoughDataError
from statmargin.stats._common import caveat
from statmargin.vocabulary import PMethod
from statmargin.vocabulary.codes import Coded, Note, Reason, Skip, Subject, coded

# The dispersion test says rows vary more than sampling allows when its p-value is
# below this level (a conventional 5% level; see ``pearson_dispersion``).
DISPERSION_LEVEL = 0.05
# Up to this many rows the dispersion test is a Monte Carlo test conditional on the
# group totals (exact up to simulation error); above it a moment-matched chi-square.
DISPERSION_MONTE_CARLO_ROWS = 5000
DISPERSION_RESAMPLES = 2000
DISPERSION_SEED = 20261203  # fixed so the same rows always give the same verdict
_CELLS_PER_CHUNK = 1_000_000  # simulated row counts held in memory at once
_ALMOST_ONE = 1.0 - 64.0 * np.finfo(float).eps  # R's tolerance for simulated >= observed


@dataclass(frozen=True)
class Pooled:
    """Rows pooled per group: events and denominators, in display order.

    ``row_events`` and ``row_totals`` keep the usable rows of each group for the
    dispersion measure; ``n_excluded`` counts rows left out for a missing value.
    """

    labels: tuple[str, ...]
    events: np.ndarray  # int64, pooled events per group
    totals: np.ndarray  # float64, pooled denominator per group (people or person-time)
    rows: np.ndarray  # int64, usable rows per group
    row_events: tuple[np.ndarray, ...]
    row_totals: tuple[np.ndarray, ...]
    n_excluded: int
    binomial: bool


@dataclass(frozen=True)
class Dispersion:
    """The Pearson dispersion of rows within groups and the test of it against 1.

    ``dispersion`` is X2 / df (None when no group has two informative rows);
    ``overdispersed`` is True when the test's p-value is below ``DISPERSION_LEVEL``
    and the dispersion is above 1.
    """

    statistic: float
    df: int
    dispersion: float | None
    p_value: float | None
    p_method: PMethod | None
    overdispersed: bool
    rows: int
    resamples: int | None = None
    binomial: bool = False

    def to_record(self) -> dict[str, Any]:
        """The numbers for ``Result.extra["dispersion"]``."""
        return {
            "pearson_x2": self.statistic,
            "df": self.df,
            "dispersion": self.dispersion,
            "p_value": self.p_value,
            "p_method": None if self.p_method is None else self.p_method.value,
            "overdispersed": self.overdispersed,
            "rows": self.rows,
            "resamples": self.resamples,
        }


def check_rows(
    events: Any,
    totals: Any,
    *,
    binomial: bool,
    events_name: str = "the events",
    totals_name: str = "the totals",
    row_numbers: Sequence[int] | np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray, int]:
    """Usable rows of events and their denominators; refuse impossible values in one line.

    Parameters
    ----------
    events, totals : array-like
        One number per row; NaN marks a missing cell (the row is left out).
    binomial : bool
        True for events out of a total of people (totals are whole numbers and
        every count of events is at most its total); False for events per
        person-time or population (totals are any numbers 0 or more).
    events_name, totals_name : str
        Column names for the messages.
    row_numbers : sequence of int, optional
        The sheet row of each position, for the messages (default: position + 1).

    Returns
    -------
    numpy.ndarray, numpy.ndarray, int
        Events (float, whole) and totals of the complete rows, and the number of
        rows left out for a missing value.

    Raises
    ------
    NotEnoughDataError
        With a skip code naming the first impossible row: a count that is not a
        whole number or is below 0, events above the total, or events with no
        person-time.

    Examples
    --------
    >>> e, t, dropped = check_rows([3, 5, float("nan")], [40, 52, 30], binomial=True)
    >>> e.tolist(), t.tolist(), dropped
    ([3.0, 5.0], [40.0, 52.0], 1)
    """
    e = np.asarray(events, dtype=float).ravel()
    t = np.asarray(totals, dtype=float).ravel()
    if e.size != t.size:
        raise NotEnoughDataError(
            coded(Skip.LENGTH_MISMATCH, what=f"{events_name} and {totals_name}", first=e.size, second=t.size)
        )
    where = np.arange(1, e.size + 1) if row_numbers is None else np.asarray(row_numbers)
    keep = np.isfinite(e) & np.isfinite(t)
    _refuse_first(keep & ((e < 0) | (e != np.floor(e))), where, e, events_name, whole=True)
    _refuse_first(keep & (t < 0), where, t, totals_name, whole=False)
    if binomial:
        _refuse_first(keep & (t != np.floor(t)), where, t, totals_name, whole=True)
        above = np.flatnonzero(keep & (e > t))
        if above.size:
            i = int(above[0])
            raise NotEnoughDataError(
                coded(Skip.EVENTS_ABOVE_TOTAL, row=int(where[i]), events=float(e[i]), total=float(t[i]),
                      events_name=events_name, totals_name=totals_name)
            )
    else:
        orphan = np.flatnonzero(keep & (t == 0) & (e > 0))
        if orphan.size:
            i = int(orphan[0])
            raise NotEnoughDataError(
                coded(Skip.EVENTS_WITHOUT_TIME, row=int(where[i]), events=float(e[i]),
                      events_name=events_name, totals_name=totals_name)
            )
    return e[keep], t[keep], int(e.size - keep.sum())


def _refuse_first(bad: np.ndarray, where: np.ndarray, values: np.ndarray, what: str, *, whole: bool) -> None:
    """Raise for the first flagged row: negative values first, then values that are not whole."""
    hits = np.flatnonzero(bad)
    if not hits.size:
        return
    i = int(hits[0])
    code = Skip.NEGATIVE_VALUE if values[i] < 0 else Skip.NOT_WHOLE_COUNT
    raise NotEnoughDataError(coded(code, what=what, row=int(where[i]), value=float(values[i])))


def pool(groups: Mapping[str, tuple[Any, Any]], *, binomial: bool) -> Pooled:
    """Check every group's rows and add them up per group.

    Parameters
    ----------
    groups : mapping of label to (events, totals)
        Each group's rows, in display order (one group for a one-sample question).
    binomial : bool
        As for :func:`check_rows`.

    Returns
    -------
    Pooled
        Pooled events and totals per group with the rows kept for the dispersion.

    Raises
    ------
    NotEnoughDataError
        For an impossible row (see :func:`check_rows`) or a group whose totals add
        up to 0 (no people, or no person-time).

    Examples
    --------
    Two invented sites, three monthly rows each (screened, positive):

    >>> pooled = pool({"North": ([3, 4, 2], [50, 61, 47]), "South": ([9, 7, 8], [55, 58, 60])},
    ...               binomial=True)
    >>> pooled.events.tolist(), pooled.totals.tolist(), pooled.rows.tolist()
    ([9, 24], [158.0, 173.0], [3, 3])
    """
    labels, events, totals, rows, row_events, row_totals = [], [], [], [], [], []
    excluded = 0
    for label, (group_events, group_totals) in groups.items():
        e, t, dropped = check_rows(group_events, group_totals, binomial=binomial)
        excluded += dropped
        total = math.fsum(t)
        if total <= 0:
            code = Skip.NO_RECORDS if binomial else Skip.NO_PERSON_TIME
            raise NotEnoughDataError(coded(code, label=str(label)))
        labels.append(str(label))
        events.append(int(math.fsum(e)))
        totals.append(total)
        rows.append(e.size)
        row_events.append(e)
        row_totals.append(t)
    return Pooled(
        labels=tuple(labels),
        events=np.array(events, dtype=np.int64),
        totals=np.array(totals, dtype=float),
        rows=np.array(rows, dtype=np.int64),
        row_events=tuple(row_events),
        row_totals=tuple(row_totals),
        n_excluded=excluded,
        binomial=binomial,
    )


def split_by(events: Any, totals: Any, strata: Sequence[Any]) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """One group's rows split by a label per row (the strata whose differences are not sampling noise).

    Examples
    --------
    >>> parts = split_by([1, 2, 3], [10, 20, 30], ["a", "b", "a"])
    >>> {k: (e.tolist(), t.tolist()) for k, (e, t) in parts.items()}
    {'a': ([1.0, 3.0], [10.0, 30.0]), 'b': ([2.0], [20.0])}
    """
    e = np.asarray(events, dtype=float).ravel()
    t = np.asarray(totals, dtype=float).ravel()
    labels = np.asarray([str(s) for s in strata], dtype=object)
    if labels.size != e.size:
        raise NotEnoughDataError(coded(Skip.LENGTH_MISMATCH, what=Subject.ROWS_AND_STRATA, first=e.size,
                                       second=labels.size))
    return {str(k): (e[labels == k], t[labels == k]) for k in dict.fromkeys(labels.tolist())}


def pearson_dispersion(
    pooled: Pooled,
    *,
    seed: int = DISPERSION_SEED,
    resamples: int = DISPERSION_RESAMPLES,
    monte_carlo_rows: int = DISPERSION_MONTE_CARLO_ROWS,
) -> Dispersion:
    """How much rows within groups vary beyond binomial or Poisson sampling.

    Parameters
    ----------
    pooled : Pooled
        Rows per group (from :func:`pool`).
    seed, resamples : int
        Seed and number of simulated sets of rows for the Monte Carlo p-value.
    monte_carlo_rows : int
        Most informative rows for which the Monte Carlo test is used.

    Returns
    -------
    Dispersion
        Pearson X2 of the rows about their group's pooled share or rate, its
        degrees of freedom (informative rows minus informative groups), the
        dispersion X2 / df and a p-value for "no extra variation".

    Notes
    -----
    X2 = sum over rows of (x_i - mu_i)^2 / V_i, with mu_i = n_i p_g, V_i = n_i p_g
    (1 - p_g) for rows of people and mu_i = V_i = T_i r_g for person-time, where
    p_g and r_g are the group's pooled share and rate. X2 / df is the Pearson
    estimate of the dispersion of a quasi-binomial or quasi-Poisson model
    (Wedderburn 1974; McCullagh & Nelder 1989, ch. 9), and equals statsmodels'
    ``pearson_chi2 / df_resid`` of a GLM with one share or rate per group.
    Groups whose pooled share is 0 or 1 (or whose rate is 0) and rows with a
    zero total carry no information on variation and are left out.

    The test conditions on each group's total events, as a test of homogeneity of
    the rows (a Monte Carlo version of the classical index-of-dispersion test,
    Fisher 1950; Cochran 1954): Poisson rows are then multinomial with
    probabilities T_i / sum T, binomial rows multivariate hypergeometric. Up to
    ``monte_carlo_rows`` rows the p-value is (1 + #{X2_sim >= X2}) / (B + 1). For
    more rows it is our approximation: X2 / c against chi-square on nu df, with c
    and nu matching the mean df and the variance of X2 (Haldane's exact
    conditional variance for Poisson rows; the summed row variances
    2 - 6/n_i + 1/(n_i p q), scaled by df/rows, for binomial rows), so that small
    expected counts do not inflate false alarms as the plain chi-square does. The
    criterion "p below 0.05 and dispersion above 1" is a conventional 5% test; its
    false-alarm rate is checked by simulation in the test suite.

    References
    ----------
    Wedderburn, R. W. M. (1974). Quasi-likelihood functions, generalized linear
    models, and the Gauss-Newton method. Biometrika 61(3), 439-447.
    https://doi.org/10.1093/biomet/61.3.439
    Cochran, W. G. (1954). Some methods for strengthening the common chi-square
    tests. Biometrics 10(4), 417-451. https://doi.org/10.2307/3001616
    Haldane, J. B. S. (1937). The exact value of the moments of the distribution
    of chi-square, used as a test of goodness of fit, when expectations are small.
    Biometrika 29(1-2), 133-143. https://doi.org/10.1093/biomet/29.1-2.133

    Examples
    --------
    Monthly positives out of screened at one invented site; months differ far more
    than binomial sampling allows:

    >>> pooled = pool({"site": ([2, 30, 3, 28], [100, 100, 100, 100])}, binomial=True)
    >>> d = pearson_dispersion(pooled)
    >>> round(d.dispersion, 2), d.df, d.overdispersed
    (17.7, 3, True)

    The same Pearson X2 over df as statsmodels' binomial model of the rows:

    >>> import math
    >>> import numpy as np
    >>> import statsmodels.api as sm
    >>> endog = np.column_stack([[2, 30, 3, 28], [98, 70, 97, 72]])
    >>> fit = sm.GLM(endog, np.ones((4, 1)), family=sm.families.Binomial()).fit()
    >>> math.isclose(d.dispersion, fit.pearson_chi2 / fit.df_resid)
    True
    """
    parts: list[tuple[np.ndarray, np.ndarray]] = []
    for e, t in zip(pooled.row_events, pooled.row_totals, strict=True):
        informative = _informative(e, t, pooled.binomial)
        if informative is not None and informative[0].size >= 2:
            parts.append(informative)
    rows = int(sum(p[0].size for p in parts))
    df = rows - len(parts)
    if df <= 0:
        return Dispersion(0.0, 0, None, None, None, False, rows, binomial=pooled.binomial)
    x2 = math.fsum(_group_x2(e, t, pooled.binomial) for e, t in parts)
    dispersion = x2 / df
    if rows <= monte_carlo_rows:
        p_value = _monte_carlo_dispersion_p(parts, x2, pooled.binomial, seed, resamples)
        method, used = PMethod.MONTE_CARLO, resamples
    else:
        p_value = _moment_matched_p(parts, x2, df, pooled.binomial)
        method, used = PMethod.ASYMPTOTIC, None
    overdispersed = p_value < DISPERSION_LEVEL and dispersion > 1.0
    return Dispersion(x2, df, dispersion, p_value, method, overdispersed, rows, used, pooled.binomial)


def _informative(e: np.ndarray, t: np.ndarray, binomial: bool) -> tuple[np.ndarray, np.ndarray] | None:
    """The group's rows with a positive total, or None when its share is 0 or 1 (rate 0)."""
    keep = t > 0
    e, t = e[keep], t[keep]
    events = math.fsum(e)
    if events == 0 or (binomial and events == math.fsum(t)):
        return None
    return e, t


def _group_x2(e: np.ndarray, t: np.ndarray, binomial: bool) -> float:
    """Pearson X2 of one group's rows about the group's pooled share or rate."""
    share = math.fsum(e) / math.fsum(t)
    mean = t * share
    variance = mean * (1.0 - share) if binomial else mean
    return math.fsum((e - mean) ** 2 / variance)


def _monte_carlo_dispersion_p(
    parts: list[tuple[np.ndarray, np.ndarray]], observed: float, binomial: bool, seed: int, resamples: int
) -> float:
    """Monte Carlo p of X2 given each group's total events (chunked to bound memory)."""
    rng = np.random.default_rng(seed)
    rows = sum(e.size for e, _ in parts)
    chunk = max(1, _CELLS_PER_CHUNK // max(rows, 1))
    simulated = np.zeros(resamples)
    for start in range(0, resamples, chunk):
        size = min(chunk, resamples - start)
        total = np.zeros(size)
        for e, t in parts:
            events = int(round(math.fsum(e)))
            share = events / math.fsum(t)
            if binomial:
                draws = rng.multivariate_hypergeometric(t.astype(np.int64), events, size=size)
                mean = t * share
                variance = mean * (1.0 - share)
            else:
                draws = rng.multinomial(events, t / math.fsum(t), size=size)
                mean = variance = t * share
            total += (((draws - mean) ** 2) / variance).sum(axis=1)
        simulated[start : start + size] = total
    return (1 + int((simulated >= _ALMOST_ONE * observed).sum())) / (resamples + 1)


def _moment_matched_p(
    parts: list[tuple[np.ndarray, np.ndarray]], observed: float, df: int, binomial: bool
) -> float:
    """P of X2 from a chi-square scaled to the mean df and the variance of X2 (see pearson_dispersion)."""
    variance = 0.0
    for e, t in parts:
        k, events = e.size, math.fsum(e)
        if binomial:
            share = events / math.fsum(t)
            terms = 2.0 - 6.0 / t + 1.0 / (t * share * (1.0 - share))
            variance += math.fsum(terms) * (k - 1) / k
        else:
            shares = t / math.fsum(t)
            variance += 2.0 * (k - 1) + (math.fsum(1.0 / shares) - k * k - 2 * k + 2) / events
    if variance <= 0:
        return 1.0
    scale = variance / (2.0 * df)
    nu = 2.0 * df * df / variance
    return float(stats.chi2.sf(observed / scale, nu))


def scale_for(dispersion: Dispersion, notes: list[Coded], reasons: list[Coded]) -> float | None:
    """The dispersion to scale tests and intervals by when rows vary too much, else None.

    Adds the overdispersion note (also raised as a warning) and the reason for the
    quasi-likelihood test: Poisson or binomial codes by the kind of rows.
    """
    if not dispersion.overdispersed or dispersion.dispersion is None:
        return None
    phi = dispersion.dispersion
    note = Note.SHARES_OVERDISPERSED if dispersion.binomial else Note.RATES_OVERDISPERSED
    caveat(notes, coded(note, dispersion=phi, rows=dispersion.rows, p=dispersion.p_value))
    reasons.append(coded(Reason.QUASI_BINOMIAL if dispersion.binomial else Reason.QUASI_POISSON, dispersion=phi))
    return phi


Interval = Callable[[float, float, float], tuple[float, float]]  # (events, total, confidence) -> limits


def summaries(
    pooled: Pooled, interval: Interval, *, per: float = 1.0, confidence: float = 0.95, scale: float | None = None
) -> list[dict[str, Any]]:
    """Per-group events, total, rate (events per ``per`` of the total) and its interval, for ``Result.groups``.

    ``interval`` gives the limits per one unit of the total (Garwood for person-time,
    Wilson for people); with ``scale`` (rows vary more than sampling allows) it is
    computed from the effective counts, events and total divided by the scale.
    """
    divide = 1.0 if scale is None else scale
    out = []
    for label, x, total, rows in zip(pooled.labels, pooled.events, pooled.totals, pooled.rows, strict=True):
        low, high = interval(x / divide, total / divide, confidence)
        out.append(
            {
                "label": label,
                "events": int(x),
                "total": int(total) if pooled.binomial else float(total),
                "rate": float(x * per / total),
                "ci_low": low * per,
                "ci_high": high * per,
                "per": per,
                "rows": int(rows),
            }
        )
    return out


def extras(pooled: Pooled, dispersion: Dispersion, per: float) -> dict[str, Any]:
    """The numbers every aggregated result keeps in ``extra``: unit, dispersion, rows used and left out."""
    return {"per": per, "dispersion": dispersion.to_record(), "rows_used": int(pooled.rows.sum()),
            "rows_excluded": pooled.n_excluded}


def pairs_level(confidence: float, n_groups: int) -> float:
    """The level of each pair's interval so that all k(k-1)/2 pairs hold together (Bonferroni).

    The widest gap is picked after looking at the data, so its interval must hold
    for every pair it could have been: Bonferroni's inequality gives that.

    Examples
    --------
    >>> round(pairs_level(0.95, 4), 6)  # 6 pairs, 0.05 / 6 each
    0.991667
    """
    pairs = n_groups * (n_groups - 1) / 2
    return 1.0 - (1.0 - confidence) / max(pairs, 1.0)

