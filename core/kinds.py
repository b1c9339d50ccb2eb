"""The fixed vocabularies every part of Plaincount shares: variable kinds and missing reasons."""

from __future__ import annotations

from enum import StrEnum


class Kind(StrEnum):
    """What a variable's answers are, which decides the analyses it allows."""

    NUMERIC = "numeric"
    CATEGORICAL = "categorical"
    LIKERT = "likert"
    ORDINAL = "ordinal"
    RANKING = "ranking"
    MULTISELECT = "multiselect"
    TEXT = "text"
    IDENTIFIER = "identifier"
    DATE = "date"

    @property
    def ordered(self) -> bool:
        return self in (Kind.LIKERT, Kind.ORDINAL)

    @property
    def has_levels(self) -> bool:
        return self in (Kind.CATEGORICAL, Kind.LIKERT, Kind.ORDINAL)

    @property
    def label(self) -> str:
        return KIND_LABELS[self]


KIND_LABELS = {
    Kind.NUMERIC: "Number",
    Kind.CATEGORICAL: "Category",
    Kind.LIKERT: "Rating scale",
    Kind.ORDINAL: "Ordered category",
    Kind.RANKING: "Ranking",
    Kind.MULTISELECT: "Choose all that apply",
    Kind.TEXT: "Open-ended text",
    Kind.IDENTIFIER: "Identifier",
    Kind.DATE: "Date and time",
}


class MissingReason(StrEnum):
    """Why a cell has no usable answer. Tables can report each reason separately."""

    SKIPPED = "skipped"
    DECLINED = "declined"
    NOT_APPLICABLE = "not_applicable"
    DONT_KNOW = "dont_know"
    SET_MISSING = "set_missing"

    @property
    def label(self) -> str:
        return REASON_LABELS[self]


REASON_LABELS = {
    MissingReason.SKIPPED: "Skipped (left blank)",
    MissingReason.DECLINED: "Declined to answer",
    MissingReason.NOT_APPLICABLE: "Not applicable",
    MissingReason.DONT_KNOW: "Don't know",
    MissingReason.SET_MISSING: "Set missing in cleaning",
}

# Reasons a codebook may assign to a missing code; SET_MISSING comes only from the ledger.
CODE_REASONS = (
    MissingReason.DECLINED,
    MissingReason.NOT_APPLICABLE,
    MissingReason.DONT_KNOW,
    MissingReason.SKIPPED,
)
