"""The registry of designs: which module answers which question.

A design module is one ``DesignSpec`` subclass; registering it is one line in
``REGISTRY``. The first spec whose ``accepts`` is true answers a question, so
more specific designs come first.
"""

from __future__ import annotations

from ..vocabulary import Design, Test
from .base import DesignSpec
from .group_pooled_shares import GroupPooledShares
from .group_rates import GroupRates
from .multi_group_continuous import MultiGroupContinuous
from .one_sample_categorical import OneSampleCategorical
from .one_sample_continuous import OneSampleContinuous
from .one_sample_pooled_share import OneSamplePooledShare
from .one_sample_rate import OneSampleRate
from .paired_categorical import PairedCategorical
from .paired_continuous import PairedContinuous
from .period_centre import PeriodCentre
from .period_shares import PeriodShares
from .question import Question
from .two_categorical import TwoCategorical
from .two_continuous import TwoContinuous
from .two_group_continuous import TwoGroupContinuous

REGISTRY: list[DesignSpec] = [
    # Rows of events with their totals: ahead of the record-level designs, which would
    # read a count of events as a measurement.
    OneSamplePooledShare(),
    GroupPooledShares(),
    OneSampleRate(),
    GroupRates(),
    PeriodShares(),  # questions over time come first: a group's series also has a compare-by column
    PeriodCentre(),
    OneSampleCategorical(),
    OneSampleContinuous(),
    PairedCategorical(),
    PairedContinuous(),
    TwoCategorical(),
    TwoContinuous(),
    TwoGroupContinuous(),
    MultiGroupContinuous(),
]


def register(spec: DesignSpec, *, first: bool = False) -> None:
    """Add a design (``first`` puts it ahead of the others, for a more specific question)."""
    if first:
        REGISTRY.insert(0, spec)
    else:
        REGISTRY.append(spec)


def spec_for(question: Question) -> DesignSpec:
    """The design that answers a question."""
    for spec in REGISTRY:
        if spec.accepts(question):
            return spec
    raise LookupError(f"no design accepts {question.analysis}")  # every question shape is covered


def decision_table() -> dict[Design, tuple[Test, Test]]:
    """Each design's (normal-shaped, not normal-shaped) tests, from the registered modules."""
    return {spec.design: spec.tests for spec in REGISTRY}


def spec_of(design: Design) -> DesignSpec | None:
    """The registered spec of a design, if any."""
    return next((spec for spec in REGISTRY if spec.design is design), None)
