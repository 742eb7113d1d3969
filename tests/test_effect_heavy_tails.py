"""Hedges' g of one sample with heavy tails: its interval keeps its coverage (simulation).

The noncentral-t interval assumes normal data. With t-distributed values (3 df,
shifted by 0.6, so the true standardized mean is 0.6 / sqrt(3)) it covers well
under 95% at 200 values; the union with the delta-method interval that uses the
sample skewness and kurtosis (``effects.standardized_mean_with_any_shape``) does not.
"""

from __future__ import annotations

import math

import numpy as np

from statmargin.stats import effects
from statmargin.vocabulary import EffectKind

RUNS, N, SHIFT = 600, 200, 0.6


def _coverages() -> tuple[float, float]:
    rng = np.random.default_rng(20261205)
    truth = SHIFT / math.sqrt(3.0)  # the sd of a t with 3 df is sqrt(3)
    plain = wide = 0
    for _ in range(RUNS):
        x = rng.standard_t(3, N) + SHIFT
        t = x.mean() / (x.std(ddof=1) / math.sqrt(N))
        effect = effects.standardized_effect(EffectKind.HEDGES_G, t, N - 1, N**-0.5, "two-sided", 0.95)
        widened = effects.standardized_mean_with_any_shape(effect, x, 0.0, "two-sided", 0.95)
        plain += effect.ci_low <= truth <= effect.ci_high
        wide += widened.ci_low <= truth <= widened.ci_high
    return plain / RUNS, wide / RUNS


def test_heavy_tails_keep_the_interval_near_its_level() -> None:
    """600 runs: the widened interval covers at least 93% less 3 Monte Carlo SEs; the plain one measured 88.6% (1000 runs)."""
    plain, wide = _coverages()
    assert wide >= 0.93 - 3 * math.sqrt(0.93 * 0.07 / RUNS)
    assert wide > plain


def test_normal_data_keep_the_noncentral_t_interval_nearly_as_it_was() -> None:
    """With normal data the delta-method interval is about as wide, so the union widens by under 5%."""
    x = np.random.default_rng(4).normal(0.5, 1.0, 40)
    t = x.mean() / (x.std(ddof=1) / math.sqrt(40))
    effect = effects.standardized_effect(EffectKind.HEDGES_G, t, 39, 40**-0.5, "two-sided", 0.95)
    widened = effects.standardized_mean_with_any_shape(effect, x, 0.0, "two-sided", 0.95)
    assert widened.value == effect.value
    assert (widened.ci_high - widened.ci_low) <= 1.05 * (effect.ci_high - effect.ci_low)
