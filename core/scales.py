"""Common English rating scales, in their natural order, and how to recognise them.

Import uses these to tell a rating-scale question (stored as labels such as "Agree" or as
numbers 1..k with the scale named in the question text) from a plain list of categories, and
to put the answer labels in their natural order (negative or low end first). Each scale
position has a few spellings that exports commonly use; matching ignores case, curly quotes,
surrounding numbering such as "5 - Strongly agree" and trailing punctuation.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass

# Words that can stand at the middle of several scales; a match made of these alone says
# nothing about which scale it is.
GENERIC = frozenset({"neutral", "neither", "undecided", "neutral / no opinion", "no opinion"})


@dataclass(frozen=True)
class Scale:
    """One rating scale: ``labels`` in natural order, ``aliases`` per position (normalised)."""

    family: str
    labels: tuple[str, ...]
    aliases: tuple[frozenset[str], ...]

    @property
    def points(self) -> int:
        return len(self.labels)

    @property
    def name(self) -> str:
        return f"{self.family}-{self.points}"

    @property
    def neutral(self) -> int | None:
        """Index of the middle (neutral) point of an odd-length scale, else None."""
        return self.points // 2 if self.points % 2 else None


_NUMBERING = re.compile(
    r"^\s*(?:\(?\d{1,2}\)?\s*[-=:.)–—]\s*)?(.*?)(?:\s*(?:\(\d{1,2}\)|[-=:–—]\s*\d{1,2}))?\s*$"
)


def normalize_label(text: str) -> str:
    """Lower case, straight quotes, single spaces, no numbering or trailing punctuation."""
    text = str(text).replace("’", "'").replace("‘", "'").replace("`", "'")
    match = _NUMBERING.match(text)
    if match and match.group(1):
        text = match.group(1)
    text = re.sub(r"\s+", " ", text).strip().strip(".!;,").strip()
    return text.lower()


def _scale(family: str, *positions: str | tuple[str, ...]) -> Scale:
    labels: list[str] = []
    aliases: list[frozenset[str]] = []
    for pos in positions:
        spellings = (pos,) if isinstance(pos, str) else pos
        labels.append(spellings[0])
        aliases.append(frozenset(normalize_label(s) for s in spellings))
    return Scale(family, tuple(labels), tuple(aliases))


_SD = ("Strongly disagree", "Completely disagree", "Totally disagree", "Strongly Disagree")
_SA = ("Strongly agree", "Completely agree", "Totally agree")
_MID_AGREE = (
    "Neither agree nor disagree",
    "Neither agree or disagree",
    "Neither disagree nor agree",
    "Neutral",
    "Undecided",
    "Neither",
)
_MID_SAT = (
    "Neither satisfied nor dissatisfied",
    "Neither satisfied or dissatisfied",
    "Neither dissatisfied nor satisfied",
    "Neutral",
    "Neither",
)
_MID_LIKELY = (
    "Neither likely nor unlikely",
    "Neither likely or unlikely",
    "Neither unlikely nor likely",
    "Neutral",
    "Neither",
    "Unsure",
)

SCALES: tuple[Scale, ...] = (
    # Agreement
    _scale("agreement", "Disagree", _MID_AGREE, "Agree"),
    _scale("agreement", _SD, "Disagree", "Agree", _SA),
    _scale("agreement", _SD, "Disagree", _MID_AGREE, "Agree", _SA),
    _scale(
        "agreement",
        _SD,
        ("Disagree", "Moderately disagree"),
        ("Somewhat disagree", "Slightly disagree", "Mildly disagree", "Tend to disagree"),
        ("Somewhat agree", "Slightly agree", "Mildly agree", "Tend to agree"),
        ("Agree", "Moderately agree"),
        _SA,
    ),
    _scale(
        "agreement",
        _SD,
        ("Disagree", "Moderately disagree"),
        ("Somewhat disagree", "Slightly disagree", "Mildly disagree", "Tend to disagree"),
        _MID_AGREE,
        ("Somewhat agree", "Slightly agree", "Mildly agree", "Tend to agree"),
        ("Agree", "Moderately agree"),
        _SA,
    ),
    # Frequency
    _scale("frequency", "Never", "Sometimes", ("Always", "Often")),
    _scale(
        "frequency",
        "Never",
        ("Rarely", "Seldom"),
        ("Sometimes", "Occasionally", "Now and then"),
        ("Often", "Frequently", "Usually", "Most of the time"),
    ),
    _scale(
        "frequency",
        "Never",
        ("Rarely", "Seldom"),
        ("Sometimes", "Occasionally", "Now and then"),
        ("Often", "Frequently", "Usually", "Very often", "Most of the time"),
        ("Always", "All of the time", "Every time"),
    ),
    _scale(
        "frequency",
        "Never",
        ("Almost never", "Very rarely"),
        ("Rarely", "Seldom"),
        ("Sometimes", "Occasionally", "Now and then"),
        ("Often", "Frequently"),
        ("Almost always", "Very often", "Usually"),
        "Always",
    ),
    # Satisfaction
    _scale("satisfaction", "Dissatisfied", _MID_SAT, "Satisfied"),
    _scale(
        "satisfaction",
        ("Very dissatisfied", "Extremely dissatisfied", "Completely dissatisfied"),
        ("Dissatisfied", "Somewhat dissatisfied"),
        ("Satisfied", "Somewhat satisfied"),
        ("Very satisfied", "Extremely satisfied", "Completely satisfied"),
    ),
    _scale(
        "satisfaction",
        ("Very dissatisfied", "Extremely dissatisfied", "Completely dissatisfied"),
        ("Dissatisfied", "Somewhat dissatisfied"),
        _MID_SAT,
        ("Satisfied", "Somewhat satisfied"),
        ("Very satisfied", "Extremely satisfied", "Completely satisfied"),
    ),
    _scale(
        "satisfaction",
        ("Very dissatisfied", "Extremely dissatisfied", "Completely dissatisfied"),
        ("Dissatisfied", "Moderately dissatisfied"),
        ("Somewhat dissatisfied", "Slightly dissatisfied"),
        _MID_SAT,
        ("Somewhat satisfied", "Slightly satisfied"),
        ("Satisfied", "Moderately satisfied"),
        ("Very satisfied", "Extremely satisfied", "Completely satisfied"),
    ),
    # Quality
    _scale("quality", "Poor", ("Fair", "Average"), "Good"),
    _scale("quality", "Poor", "Fair", "Good", "Excellent"),
    _scale("quality", "Poor", ("Fair", "Average"), "Good", "Very good", "Excellent"),
    _scale("quality", "Very poor", "Poor", ("Fair", "Average", "Acceptable"), "Good", "Very good"),
    _scale("quality", "Very poor", "Poor", "Fair", "Good", "Very good", "Excellent"),
    # Likelihood
    _scale("likelihood", "Unlikely", _MID_LIKELY, "Likely"),
    _scale(
        "likelihood",
        ("Very unlikely", "Extremely unlikely"),
        ("Unlikely", "Somewhat unlikely"),
        ("Likely", "Somewhat likely"),
        ("Very likely", "Extremely likely"),
    ),
    _scale(
        "likelihood",
        ("Very unlikely", "Extremely unlikely"),
        ("Unlikely", "Somewhat unlikely"),
        _MID_LIKELY,
        ("Likely", "Somewhat likely"),
        ("Very likely", "Extremely likely"),
    ),
    _scale(
        "likelihood",
        ("Extremely unlikely", "Very unlikely"),
        ("Unlikely", "Moderately unlikely"),
        ("Somewhat unlikely", "Slightly unlikely"),
        _MID_LIKELY,
        ("Somewhat likely", "Slightly likely"),
        ("Likely", "Moderately likely"),
        ("Extremely likely", "Very likely"),
    ),
    # Importance
    _scale("importance", "Not important", "Somewhat important", "Very important"),
    _scale(
        "importance",
        ("Not at all important", "Not important"),
        ("Slightly important", "Somewhat important", "A little important"),
        ("Moderately important", "Important"),
        "Very important",
    ),
    _scale(
        "importance",
        ("Not at all important", "Not important"),
        ("Slightly important", "A little important"),
        ("Moderately important", "Somewhat important"),
        ("Very important", "Important"),
        ("Extremely important", "Essential"),
    ),
)

# Ordered answer sets that are not rating scales: their kind is "ordinal".
ORDERED_SETS: tuple[Scale, ...] = (
    _scale("amount", "Low", ("Medium", "Moderate"), "High"),
    _scale("amount", "Very low", "Low", ("Medium", "Moderate"), "High", "Very high"),
    _scale("amount", "None", ("A little", "A little bit"), "Some", ("A lot", "A great deal")),
    _scale(
        "political leaning",
        ("Extremely liberal", "Very liberal"),
        "Liberal",
        ("Slightly liberal", "Somewhat liberal"),
        ("Moderate", "Middle of the road", "Moderate / middle of the road"),
        ("Slightly conservative", "Somewhat conservative"),
        "Conservative",
        ("Extremely conservative", "Very conservative"),
    ),
    _scale("size", "Small", "Medium", "Large"),
    _scale("size", "Small", "Medium", "Large", ("Extra large", "Very large")),
)


@dataclass(frozen=True)
class ScaleMatch:
    """How a set of answer texts maps onto one scale: ``positions[text]`` is 0-based."""

    scale: Scale
    positions: dict[str, int]

    def levels(self) -> tuple[tuple[str, ...], dict[str, str]]:
        """Ordered levels (the data's own spelling where seen) and labels for variants.

        When two spellings land on one point (``"Agree"`` and ``"agree"``), the more common
        first one seen becomes the level and the others map to it through value labels.
        """
        chosen: dict[int, str] = {}
        for text, pos in self.positions.items():
            chosen.setdefault(pos, text)
        levels = tuple(chosen.get(i, label) for i, label in enumerate(self.scale.labels))
        value_labels = {
            text: levels[pos] for text, pos in self.positions.items() if text != levels[pos]
        }
        return levels, value_labels


def _positions(scale: Scale, texts: list[str]) -> dict[str, int] | None:
    out: dict[str, int] = {}
    used: dict[int, str] = {}
    for text in texts:
        norm = normalize_label(text)
        hits = [i for i, al in enumerate(scale.aliases) if norm in al]
        if len(hits) != 1:
            return None
        pos = hits[0]
        # Two different wordings on one point means this is not the scale the data uses.
        if pos in used and used[pos] != norm:
            return None
        used[pos] = norm
        out[text] = pos
    return out


def _best(candidates: Iterable[Scale], texts: list[str], min_points: int) -> ScaleMatch | None:
    texts = [t for t in texts if str(t).strip()]
    if not texts:
        return None
    found: list[ScaleMatch] = []
    for scale in candidates:
        pos = _positions(scale, texts)
        if pos is None or len(set(pos.values())) < min_points:
            continue
        if all(normalize_label(t) in GENERIC for t in texts):
            continue
        found.append(ScaleMatch(scale, pos))
    if not found:
        return None
    # The shortest scale that explains every answer: unseen points are not invented.
    return min(found, key=lambda m: m.scale.points)


def match_labels(texts: Iterable[str], min_points: int = 2) -> ScaleMatch | None:
    """The rating scale whose points explain every text, or None.

    ``min_points`` is how many different scale points must be seen (two by default, so a
    lone "Agree" is not yet a scale).
    """
    return _best(SCALES, list(texts), min_points)


def match_ordered(texts: Iterable[str], min_points: int = 3) -> ScaleMatch | None:
    """An ordered answer set that is not a rating scale (Low/Medium/High and the like)."""
    return _best(ORDERED_SETS, list(texts), min_points)


def scale_for_levels(levels: Iterable[str]) -> Scale | None:
    """The known scale that these ordered levels spell out in full, if any.

    Tables use it to find the agree and disagree sides and the neutral point.
    """
    levels = list(levels)
    for scale in SCALES:
        if scale.points != len(levels):
            continue
        pos = _positions(scale, levels)
        if pos is not None and [pos[t] for t in levels] == list(range(scale.points)):
            return scale
    return None


_FAMILY_WORDS = {
    "agreement": ("agree",),
    "frequency": ("how often", "frequen"),
    "satisfaction": ("satisf",),
    "quality": ("quality", "how would you rate", "rate the"),
    "likelihood": ("likely",),
    "importance": ("important", "importance"),
}
_SCALE_WORDS = re.compile(r"\bscale\b|\b[01]\s*(?:to|-|–)\s*[3-7]\b|\b[3-7]\s*=|\b[01]\s*=")


def scale_named_in_text(text: str, points: int) -> tuple[Scale | None, bool] | None:
    """Does question text name a ``points``-point rating scale?

    Returns ``(scale, reversed)`` when two or more labels of one scale appear in the text
    (``reversed`` when the text gives the positive end first, as in "1 = Strongly agree");
    ``(None, False)`` when the text only says it is a rating (a family word such as
    "satisfied" together with "scale" or "1 to 5"); None when it names no scale.
    """
    if not text:
        return None
    low = " " + re.sub(r"\s+", " ", text.replace("’", "'")).lower() + " "
    best: tuple[int, Scale, bool] | None = None
    for scale in SCALES:
        if scale.points != points:
            continue
        found: dict[int, int] = {}
        for i, aliases in enumerate(scale.aliases):
            for alias in sorted(aliases, key=len, reverse=True):
                if alias in GENERIC:
                    continue
                at = _find_word(low, alias)
                if at >= 0:
                    found[i] = at
                    break
        if len(found) < 2 or not ({0, points - 1} & set(found)):
            continue
        # The end mentioned first is the one numbered 1 (or 0).
        ordered = sorted(found, key=lambda i: found[i])
        rev = ordered[0] > ordered[-1]
        if best is None or len(found) > best[0]:
            best = (len(found), scale, rev)
    if best is not None:
        return best[1], best[2]
    if _SCALE_WORDS.search(low) and any(
        w in low for words in _FAMILY_WORDS.values() for w in words
    ):
        return None, False
    return None


def _find_word(haystack: str, needle: str) -> int:
    """Index of ``needle`` as whole words in ``haystack`` (``agree`` not in ``disagree``)."""
    for m in re.finditer(re.escape(needle), haystack):
        before = haystack[m.start() - 1] if m.start() > 0 else " "
        after = haystack[m.end()] if m.end() < len(haystack) else " "
        if not before.isalnum() and not after.isalnum():
            return m.start()
    return -1
