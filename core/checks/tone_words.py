"""A small word list for the tone of an open comment (positive or negative), our own.

Used only to notice ratings that contradict the respondent's own comment (see
:mod:`core.checks.reversed_scale`), never to score sentiment in a report. The lists are short
on purpose: common English words about a course, a job or a service whose tone rarely
depends on context. A negator ("not", "never", "no", words ending in "n't") up to two words
before a tone word flips it ("not helpful" counts as negative). Documented in
docs/methods.md, "Tone of open comments".
"""

from __future__ import annotations

import re
from dataclasses import dataclass

POSITIVE = frozenset(
    [
        "amazing",
        "awesome",
        "beneficial",
        "best",
        "brilliant",
        "clear",
        "confident",
        "convenient",
        "enjoy",
        "enjoyed",
        "enjoyable",
        "excellent",
        "exceptional",
        "fantastic",
        "friendly",
        "fun",
        "glad",
        "good",
        "grateful",
        "great",
        "happy",
        "helpful",
        "impressive",
        "inspiring",
        "interesting",
        "knowledgeable",
        "love",
        "loved",
        "lovely",
        "motivating",
        "organized",
        "organised",
        "outstanding",
        "patient",
        "perfect",
        "pleasant",
        "positive",
        "practical",
        "recommend",
        "rewarding",
        "satisfied",
        "smooth",
        "successful",
        "superb",
        "supportive",
        "thankful",
        "thanks",
        "useful",
        "valuable",
        "welcoming",
        "wonderful",
        "worthwhile",
    ]
)

NEGATIVE = frozenset(
    [
        "annoying",
        "awful",
        "bad",
        "boring",
        "chaotic",
        "confused",
        "confusing",
        "disappointed",
        "disappointing",
        "disorganized",
        "disorganised",
        "frustrated",
        "frustrating",
        "hate",
        "hated",
        "horrible",
        "lost",
        "messy",
        "miserable",
        "negative",
        "overwhelmed",
        "overwhelming",
        "pointless",
        "poor",
        "rude",
        "stressful",
        "terrible",
        "unclear",
        "unfair",
        "unhappy",
        "unhelpful",
        "unmanageable",
        "unorganized",
        "unpleasant",
        "unprepared",
        "useless",
        "waste",
        "worse",
        "worst",
        "wrong",
    ]
)

NEGATORS = frozenset(["not", "no", "never", "nothing", "hardly", "barely", "without"])

_WORD = re.compile(r"[a-z]+(?:'[a-z]+)?")


@dataclass(frozen=True)
class Tone:
    """Counts of positive and negative words (after negation) and the words found."""

    positive: int
    negative: int
    words: tuple[str, ...]

    @property
    def score(self) -> int:
        return self.positive - self.negative


def tone(text: str | None) -> Tone:
    """Count tone words in ``text``; a negator up to two words before flips a word."""
    if not text:
        return Tone(0, 0, ())
    words = _WORD.findall(str(text).lower().replace("’", "'"))
    pos = neg = 0
    found: list[str] = []
    for i, word in enumerate(words):
        sign = 1 if word in POSITIVE else -1 if word in NEGATIVE else 0
        if not sign:
            continue
        before = words[max(0, i - 2) : i]
        if any(w in NEGATORS or w.endswith("n't") for w in before):
            sign = -sign
            found.append(f"not {word}")
        else:
            found.append(word)
        if sign > 0:
            pos += 1
        else:
            neg += 1
    return Tone(pos, neg, tuple(found))
