"""Captions: the title, base line and notes every table carries.

A table without its denominator, its missing data and its cleaning history can mislead, so
every result gets the same kinds of notes in the same order: missing data and treatment,
cleaning decisions, small-cell protection, method (formulas), source (instrument and wave),
then cautions.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

from core.disclosure import variable_notes
from core.treatments import COMBINED, COMBINED_TEXT, REASON_TEXT

TITLE_LIMIT = 90


# The parts of a caption, in the order they are printed.
NOTE_PARTS = ("missing", "treatment", "cleaning", "suppression", "method", "source", "cautions")


@dataclass
class Notes:
    """Notes collected while a table is built, emitted in a fixed order."""

    missing: list[str] = field(default_factory=list)
    treatment: list[str] = field(default_factory=list)
    cleaning: list[str] = field(default_factory=list)
    suppression: list[str] = field(default_factory=list)
    method: list[str] = field(default_factory=list)
    source: list[str] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)

    def as_list(self) -> list[str]:
        return list(self.kinds())

    def kinds(self) -> dict[str, str]:
        """Each note (in caption order, said once) with the part it belongs to."""
        out: dict[str, str] = {}
        for part in NOTE_PARTS:
            for note in getattr(self, part):
                if note and note not in out:
                    out[note] = part
        return out


def short_title(text: str, limit: int = TITLE_LIMIT) -> str:
    """A question text shortened for a title: one line, no item number, cut at a word.

    Examples
    --------
    >>> short_title("Q12. How satisfied are you with the course overall?")
    'How satisfied are you with the course overall?'
    """
    text = " ".join(str(text).split())
    # Drop a leading item number such as "Q12.", "12)" or "3a:" - it means nothing in a report.
    text = re.sub(r"^(?:Q(?:uestion)?\s*)?\d+[a-z]?[.):]\s+", "", text, flags=re.IGNORECASE)
    if len(text) <= limit:
        return text
    cut = text[: limit - 1]
    # Prefer ending at the first sentence or clause if it is long enough to stand alone.
    for mark in ("? ", ". ", ": ", "; "):
        pos = cut.find(mark)
        if pos >= 30:
            return cut[: pos + 1] if mark == "? " else cut[:pos]
    space = cut.rfind(" ")
    if space > limit // 2:
        cut = cut[:space]
    return cut.rstrip(" ,;:-") + "…"


def common_stem(questions: list[str]) -> str:
    """The whole words that every question text of a group starts with ("" if none)."""
    texts = [" ".join(q.split()) for q in questions if q and q.strip()]
    if len(texts) < 2:
        return ""
    stem = texts[0]
    for t in texts[1:]:
        while not t.startswith(stem):
            stem = stem[:-1]
    if any(len(t) > len(stem) and t[len(stem)].isalnum() for t in texts):
        stem = stem[: stem.rfind(" ") + 1] if " " in stem else ""  # end at a whole word
    return stem


def group_title(group: str, questions: list[str]) -> str:
    """A title for a question group: the words its items' question texts share, if any."""
    stem = common_stem(questions).rstrip(" -–—:([")
    if len(stem) >= 8:
        return short_title(stem)
    return group


def item_label(question: str, stem: str, fallback: str) -> str:
    """An item's own words, without the stem its group shares ("I felt welcome.")."""
    text = " ".join((question or "").split())
    if stem and text.startswith(stem) and len(text) > len(stem):
        rest = text[len(stem) :].lstrip(" -–—:.?").strip()
        if rest:
            return short_title(rest)
    return short_title(text) if text else fallback


def base_line(n_valid: int, n_all: int, who: str = "Respondents who answered") -> str:
    """The base of a table, e.g. "Respondents who answered, n = 342 of 380"."""
    if n_valid == n_all and who.startswith("All"):
        return f"{who}, n = {n_all:,}"
    return f"{who}, n = {n_valid:,} of {n_all:,}"


def reason_text(reason: str) -> str:
    if reason == COMBINED:
        return COMBINED_TEXT
    return REASON_TEXT.get(reason, reason)


def missing_sentence(label: str, missing: dict[str, int], n_all: int) -> str:
    """How many did not answer and why, e.g. "38 of 380 did not answer age: 20 skipped, ..."."""
    total = sum(missing.values())
    if total == 0:
        return f"Everyone counted answered {label}."
    parts = ", ".join(f"{n:,} {reason_text(r).lower()}" for r, n in missing.items() if n)
    pct = 100.0 * total / n_all if n_all else 0.0
    return f"{total:,} of {n_all:,} respondents ({pct:.1f}%) have no answer to {label}: {parts}."


def suppression_note(threshold: int, primary: int, secondary: int) -> str:
    if threshold <= 1:
        return ""
    if primary == 0:
        return (
            f"Small-cell protection is on (counts below {threshold} would be hidden); no count "
            "in this table is that small."
        )
    text = (
        f'Counts from 1 to {threshold - 1} are hidden (shown as "<{threshold}") so that '
        "small groups of people cannot be recognised"
    )
    if secondary:
        text += (
            f"; {secondary} further cell{'s are' if secondary != 1 else ' is'} hidden (shown "
            'as "–") so the small ones cannot be worked out from the totals'
        )
    return text + '. Percentages of hidden counts are hidden too (shown as "–").'


def unstable_note(unstable_base: int, groups: list[str]) -> str:
    if not groups or unstable_base <= 0:
        return ""
    names = ", ".join(groups[:6]) + (" and others" if len(groups) > 6 else "")
    return (
        f"Percentages based on fewer than {unstable_base} people are marked unstable "
        f"({names}): one or two answers move them by several points."
    )


def sd_note(sd: str) -> str:
    if sd == "sample":
        return (
            "Standard deviation and variance use the sample formula (dividing by n − 1), "
            "as for respondents drawn from a larger group."
        )
    return (
        "Standard deviation and variance use the population formula (dividing by n), as for "
        "data that cover everyone in the group described; choose the sample formula when the "
        "respondents are a sample of a larger group."
    )


QUANTILE_NOTE = (
    "Quartiles use linear interpolation between sorted values (Hyndman and Fan type 7, the "
    "numpy and pandas default); the box-plot whiskers reach the furthest values within "
    "1.5 × IQR of the quartiles."
)


def source_note(instrument: str, wave: str) -> str:
    if not instrument and not wave:
        return ""
    if instrument and wave:
        return f"Source: {instrument}, wave {wave}."
    return f"Source: {instrument or 'wave ' + wave}."


GROUP_CAUTION = (
    "Differences between groups describe these respondents; they do not show that one thing "
    "caused another."
)
SMALL_GROUP_CAUTION = (
    "Some groups are small: small groups can identify people, and their percentages can "
    "change a lot with one or two answers."
)


def cleaning_notes(project: Any, wave_id: int, variables: list[str]) -> list[str]:
    """Plain sentences about cleaning decisions that touched these variables."""
    return list(variable_notes(project, wave_id, variables))
