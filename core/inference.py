"""Infer a codebook from a raw table: kinds, ordered levels, missing codes, groups.

Every choice made here is a first guess the evaluator can change. The guesses are made from
each column's distinct answers (counted once, so a 100,000-row wave costs little more than a
small one), the column name and the question text:

* missing codes: texts such as "Prefer not to say" (declined), "N/A" (not applicable),
  "Don't know" (don't know), and negative sentinel numbers such as -99 next to otherwise
  non-negative answers (declined, unless the question text says what the code means);
* kinds: dates, identifiers, rating scales (labels, or numbers 1..k when the question names
  the scale or the items form a battery), ordered bands (income, age), choose-all-that-apply
  answers joined by a delimiter, open text, categories and numbers;
* groups: neighbouring columns that share a name stem or a question stem and answer the same
  way (a Likert battery, the columns of a ranking question, one 0/1 column per option);
* personal data: names, e-mail addresses, phone numbers and addresses are marked personal.

A real answer option called "None" stays an answer.
"""

from __future__ import annotations

import contextlib
import math
import os
import re
from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from core import scales
from core.codebook import Codebook, Variable
from core.decoding import format_number
from core.kinds import Kind, MissingReason
from core.progress import Progress, ensure_progress

# ---------------------------------------------------------------------------- vocabularies
MISSING_PHRASES: dict[str, MissingReason] = {
    **dict.fromkeys(
        (
            "prefer not to say",
            "prefer not to answer",
            "i prefer not to say",
            "i prefer not to answer",
            "i'd rather not say",
            "rather not say",
            "would rather not say",
            "prefer not to disclose",
            "declined",
            "decline",
            "decline to answer",
            "declined to answer",
            "decline to state",
            "refused",
            "refuse",
            "refused to answer",
        ),
        MissingReason.DECLINED,
    ),
    **dict.fromkeys(
        (
            "n/a",
            "n.a",
            "n.a.",
            "not applicable",
            "does not apply",
            "doesn't apply",
            "not applicable to me",
        ),
        MissingReason.NOT_APPLICABLE,
    ),
    **dict.fromkeys(
        (
            "don't know",
            "dont know",
            "do not know",
            "dk",
            "d/k",
            "don't know / not sure",
            "don't know/not sure",
            "not sure / don't know",
            "i don't know",
            "no idea",
        ),
        MissingReason.DONT_KNOW,
    ),
    # Tokens some programs write for an empty cell.
    **dict.fromkeys(("na", "null", "nan", "#n/a", "(blank)", "skipped", "missing"), None),
}
SENTINELS = (-9.0, -8.0, -7.0, -77.0, -88.0, -97.0, -98.0, -99.0, -999.0, -9999.0)
_EXCLUSIVE_OPTIONS = {"none", "none of the above", "none of these", "no barriers", "nothing"}

_ID_NAME = re.compile(
    r"^(?:.*[_\s.-])?(?:id|uuid|guid|identifier)$|^id(?:[_\s.-].*)?$"
    r"|^(?:resp|respondent|response|participant|record|case|subject|student|client|person)"
    r"(?:[_\s.-]?(?:no|nr|num|number|code|key))?$",
    re.IGNORECASE,
)
_ID_QUESTION = re.compile(r"\b(?:id|identifier|respondent (?:number|code))\b", re.IGNORECASE)
_CODE_VALUE = re.compile(r"^[A-Za-z]{0,6}[-_]?\d+[A-Za-z]?$|^[0-9a-fA-F]{8}-[0-9a-fA-F-]{27}$")
_EMAIL = re.compile(r"^[^@\s]+@[^@\s]+\.[A-Za-z]{2,}$")
_PHONE = re.compile(r"^\+?[\d\s().-]{7,20}$")
_PERSONAL_NAME = {
    "email": re.compile(r"(^|_)e?_?mail($|_)|email", re.IGNORECASE),
    "phone": re.compile(r"(^|_)(phone|tel|telephone|mobile|cell)($|_)", re.IGNORECASE),
    "name": re.compile(
        r"(^|_)(first|last|full|given|family|middle|sur|user)?_?name($|_)"
        r"|^(forename|surname)$",
        re.IGNORECASE,
    ),
    "address": re.compile(
        r"(^|_)(address|street|postcode|postal_code|zip|zipcode|zip_code)($|_)", re.IGNORECASE
    ),
    "birth": re.compile(r"(^|_)(dob|birth_?date|date_?of_?birth|birthday)($|_)", re.IGNORECASE),
    "national_id": re.compile(r"(^|_)(ssn|social_security|national_id|passport)($|_)", re.I),
}
_TEXT_NAME = re.compile(
    r"comment|feedback|explain|describe|specify|why|suggest|other_text|open|remarks|notes?$",
    re.IGNORECASE,
)
_DATE_TEXT = re.compile(
    r"^\d{4}-\d{1,2}-\d{1,2}(?:[ T]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?(?:Z|[+-]\d{2}:?\d{2})?)?$"
    r"|^\d{1,2}[/.]\d{1,2}[/.]\d{2,4}(?: \d{1,2}:\d{2}(?::\d{2})?(?: ?[AaPp][Mm])?)?$"
)
_NUMBER_IN_TEXT = re.compile(r"\d[\d,]*(?:\.\d+)?\s*[kK]?")
_LOW_END = re.compile(r"\b(under|less than|below|fewer than|up to|younger than|<)", re.I)
_HIGH_END = re.compile(
    r"(or more|or older|or over|and over|and above|or above|or higher|\+|"
    r"more than|over|older than|at least|>)",
    re.I,
)
_STEM_SEPARATORS = (" - ", " – ", " — ", ": ", "? ", "... ", ".. ")
_CODE_IN_TEXT = re.compile(
    r"(-?\d+)\s*(?:=|:|means|is|-|–)\s*[\"'“]?([A-Za-z][A-Za-z' /]{1,40}?)[\"'”]?"
    r"(?=[,;.)\]]|$| or | and )",
)

SAMPLE = 400  # distinct values examined by the costlier checks (dates, e-mail patterns)


# ---------------------------------------------------------------------------- profiles
@dataclass
class _Profile:
    """What one column holds: its distinct answers (stripped text) and their counts."""

    name: str
    question: str
    position: int
    n_rows: int
    n_blank: int
    values: list[str]
    counts: np.ndarray
    is_number_column: bool = False
    is_date_column: bool = False
    numbers: dict[str, float] = field(default_factory=dict)

    @property
    def text(self) -> str:
        """Question text if known, else the name: what a person would read."""
        return self.question or self.name


@dataclass
class _Guess:
    kind: Kind
    levels: tuple[str, ...] = ()
    value_labels: dict[str, str] = field(default_factory=dict)
    missing_codes: dict[str, MissingReason] = field(default_factory=dict)
    personal: bool = False
    delimiter: str | None = None
    option: str | None = None
    group: str | None = None
    answers: list[str] = field(default_factory=list)
    answer_counts: np.ndarray | None = None


def _profile(name: str, column: pd.Series, question: str, position: int) -> _Profile:
    n = len(column)
    if pd.api.types.is_datetime64_any_dtype(column):
        blank = int(column.isna().sum())
        return _Profile(name, question, position, n, blank, [], np.zeros(0), is_date_column=True)
    if pd.api.types.is_bool_dtype(column):
        column = column.map({True: "TRUE", False: "FALSE"})
    if pd.api.types.is_numeric_dtype(column):
        arr = column.to_numpy(dtype=float, na_value=np.nan)
        finite = arr[~np.isnan(arr)]
        uniq, counts = np.unique(finite, return_counts=True)
        texts = [format_number(float(x)) for x in uniq]
        nums = dict(zip(texts, (float(x) for x in uniq)))
        return _Profile(
            name,
            question,
            position,
            n,
            n - len(finite),
            texts,
            counts,
            is_number_column=True,
            numbers=nums,
        )
    if column.dtype == object:
        column = column.map(lambda v: v if v is None or isinstance(v, str) else _as_text(v))
    counts_series = column.value_counts(dropna=True, sort=False)
    index = counts_series.index.astype("str")
    stripped = index.str.strip()
    if not (stripped == index).all():
        # " Agree" and "Agree" are one answer: add up their counts.
        counts_series = pd.Series(counts_series.to_numpy(), index=stripped)
        counts_series = counts_series.groupby(level=0, sort=False).sum()
    counts_series = counts_series[counts_series.index != ""]
    texts = counts_series.index.tolist()
    counts = counts_series.to_numpy(dtype=np.int64)
    blank = n - int(counts.sum())
    nums = _parse_numbers(texts)
    return _Profile(name, question, position, n, blank, texts, counts, numbers=nums)


def _as_text(value: Any) -> str | None:
    if isinstance(value, float):
        return None if math.isnan(value) else format_number(value)
    return str(value)


_NUMBER_TEXT = r"^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*$"


def _parse_numbers(texts: list[str]) -> dict[str, float]:
    """Texts that read as plain numbers (``"007"`` -> 7.0), found in compiled code."""
    if not texts:
        return {}
    arr = pa.array(texts, pa.large_string())
    is_number = pc.match_substring_regex(arr, _NUMBER_TEXT)
    if not pc.any(is_number).as_py():
        return {}
    numeric = pc.cast(pc.utf8_trim_whitespace(arr.filter(is_number)), pa.float64())
    picked = np.flatnonzero(is_number.to_numpy(zero_copy_only=False))
    return {texts[i]: float(x) for i, x in zip(picked, numeric.to_numpy(zero_copy_only=False))}


# ---------------------------------------------------------------------------- missing codes
def _phrase_reason(text: str) -> tuple[bool, MissingReason | None]:
    key = scales.normalize_label(text)
    if key in MISSING_PHRASES:
        return True, MISSING_PHRASES[key]
    return False, None


def _declared_codes(question: str) -> dict[str, MissingReason]:
    """Codes the question text explains, such as "(-99 = not applicable)"."""
    out: dict[str, MissingReason] = {}
    for m in _CODE_IN_TEXT.finditer(question or ""):
        hit, reason = _phrase_reason(m.group(2))
        if hit and reason is not None:
            out[format_number(float(m.group(1)))] = reason
    return out


def _missing_codes(p: _Profile) -> dict[str, MissingReason]:
    codes: dict[str, MissingReason] = {}
    declared = _declared_codes(p.question)
    # Full normalisation ("9 - Don't know.") for ordinary answer lists; columns of many
    # distinct texts (ids, comments) are only checked for the plain phrases.
    if len(p.values) <= 1000:
        candidates = p.values
    else:
        lowered = pc.utf8_lower(pa.array(p.values, pa.large_string()))
        known = pa.array(list(MISSING_PHRASES), pa.large_string())
        hits = np.flatnonzero(pc.is_in(lowered, value_set=known).to_numpy(zero_copy_only=False))
        candidates = [p.values[i] for i in hits]
    for text in candidates:
        hit, reason = _phrase_reason(text)
        if hit:
            codes[text] = reason if reason is not None else MissingReason.SKIPPED
    # Negative sentinels beside non-negative answers: -99 in an age column.
    others = [v for t, v in p.numbers.items() if t not in codes and v not in SENTINELS]
    non_numeric = len(p.values) - len(p.numbers)
    for text, value in p.numbers.items():
        if text in declared:
            codes[text] = declared[text]
        elif value in SENTINELS and (others or non_numeric) and all(v >= 0 for v in others):
            codes[text] = MissingReason.DECLINED
    return codes


# ---------------------------------------------------------------------------- single column
def _is_integer(values: Sequence[float]) -> bool:
    return all(float(v).is_integer() for v in values)


def _personal(p: _Profile, answers: list[str]) -> str | None:
    for what, pattern in _PERSONAL_NAME.items():
        if pattern.search(p.name):
            return what
    sample = answers[:SAMPLE]
    if len(sample) >= 3 and sum(bool(_EMAIL.match(v)) for v in sample) >= 0.8 * len(sample):
        return "email"
    return None


def _looks_like_id(p: _Profile, answers: list[str], counts: np.ndarray) -> bool:
    n_answers = int(counts.sum())
    if n_answers < 5:
        return False
    unique_share = len(answers) / n_answers
    named = bool(_ID_NAME.match(p.name.strip())) or bool(
        p.question and _ID_QUESTION.search(p.question) and len(p.question.split()) <= 4
    )
    if named and unique_share >= 0.9:
        return True
    if unique_share < 1.0 or n_answers < 10:
        return False
    sample = answers[:SAMPLE]
    if all(_CODE_VALUE.match(v) for v in sample):
        nums = [p.numbers.get(v) for v in sample]
        if all(x is not None for x in nums):
            # A column of distinct whole numbers is an id only when it is the first column.
            return p.position == 1 and _is_integer([x for x in nums if x is not None])
        return True
    return False


def _bands(answers: list[str]) -> tuple[str, ...] | None:
    """Ordered bands such as "Under $20,000", "$20,000 to $39,999", "$80,000 or more"."""
    if not 3 <= len(answers) <= 30:
        return None
    keys = []
    for text in answers:
        found = _NUMBER_IN_TEXT.findall(text)
        if not found:
            return None
        first = found[0].strip()
        mult = 1000.0 if first.lower().endswith("k") else 1.0
        try:
            value = float(first.rstrip("kK").replace(",", "").strip()) * mult
        except ValueError:
            return None
        if _LOW_END.search(text):
            value -= 0.5
        elif _HIGH_END.search(text) and len(found) == 1:
            value += 0.5
        keys.append(value)
    if len(set(keys)) != len(keys):
        return None
    if all(re.fullmatch(r"[\d.,\s]+", a) for a in answers):
        return None  # plain numbers are numbers, not bands
    return tuple(a for _, a in sorted(zip(keys, answers)))


# (rank, pattern) in the order they are tried: the most specific wording first, so "Some
# college, no degree" is not read as a degree and "Less than high school" not as a diploma.
_EDUCATION = (
    (
        0,
        r"less than high school|no schooling|no formal|grade school|elementary|primary"
        r"|\b[1-8](?:th)?\s*(?:-|to)\s*[1-8](?:th)?\s*grades?\b|8th grade or less",
    ),
    (1, r"some high school|no diploma|\b9(?:th)?\s*(?:-|to)\s*1[12](?:th)?\b"),
    (3, r"some college|some university|no degree|vocational|trade school|technical"),
    (4, r"associate"),
    (6, r"graduate or professional|master|\bmba\b|postgraduate|graduate degree"),
    (7, r"\bphd\b|ph\.d|doctor|professional degree|\bjd\b|\bmd\b"),
    (5, r"bachelor|college degree|college graduate|undergraduate|\bba\b|\bbs\b"),
    (2, r"high school|\bged\b|secondary|diploma"),
)


def _education(answers: list[str]) -> tuple[str, ...] | None:
    """Levels of schooling in their natural order (from no schooling to a doctorate)."""
    if not 3 <= len(answers) <= 12:
        return None
    ranks = {}
    for text in answers:
        low = text.lower()
        rank = next((r for r, pattern in _EDUCATION if re.search(pattern, low)), None)
        if rank is None:
            return None
        ranks[text] = rank
    if len(set(ranks.values())) != len(ranks):
        return None
    return tuple(sorted(answers, key=ranks.__getitem__))


def _dates(answers: list[str]) -> bool:
    sample = answers[:SAMPLE]
    if not sample or not all(_DATE_TEXT.match(v) for v in sample):
        return False
    parsed = pd.to_datetime(pd.Series(sample), errors="coerce", format="mixed")
    return bool(parsed.notna().all())


def _delimited(answers: list[str], counts: np.ndarray) -> tuple[str, tuple[str, ...]] | None:
    """Choose-all-that-apply answers joined by a delimiter: (delimiter, options in order)."""
    total = counts.sum()
    for delim in (";", "|", ","):
        with_delim = sum(c for a, c in zip(answers, counts) if delim in a)
        if with_delim < max(2, 0.03 * total):
            continue
        parts_per = [[t.strip() for t in a.split(delim) if t.strip()] for a in answers]
        tokens: Counter[str] = Counter()
        for parts, c in zip(parts_per, counts):
            for t in parts:
                tokens[t] += int(c)
        if not 2 <= len(tokens) <= 40:
            continue
        if any(len(t.split()) > 8 for t in tokens):
            continue
        alone = {a for a, parts in zip(answers, parts_per) if len(parts) == 1}
        if len(alone & set(tokens)) < 0.5 * len(tokens):
            continue
        if len(tokens) > 0.5 * total:
            continue
        return delim, _option_order(parts_per, counts, tokens)
    return None


def _option_order(
    parts_per: list[list[str]], counts: np.ndarray, tokens: Counter[str]
) -> tuple[str, ...]:
    """Options in questionnaire order, recovered from the order they are listed in answers.

    Exports list the chosen options in the order the questionnaire shows them, so "A; C"
    and "B; C" say A and B come before C. Options that are never combined with another
    ("None") go last, as questionnaires put them.
    """
    first_seen: dict[str, int] = {}
    after: dict[str, Counter[str]] = {t: Counter() for t in tokens}
    combined: set[str] = set()
    for parts, c in zip(parts_per, counts):
        for i, t in enumerate(parts):
            first_seen.setdefault(t, len(first_seen))
            if len(parts) > 1:
                combined.add(t)
            for later in parts[i + 1 :]:
                if later != t:
                    after[t][later] += int(c)
    exclusive = [
        t for t in tokens if t not in combined and scales.normalize_label(t) in _EXCLUSIVE_OPTIONS
    ]
    rest = [t for t in tokens if t not in exclusive]
    indegree = {t: 0 for t in rest}
    for t in rest:
        for later in after[t]:
            if later in indegree and after[later][t] < after[t][later]:
                indegree[later] += 1
    order: list[str] = []
    remaining = set(rest)
    while remaining:
        ready = [t for t in remaining if indegree[t] == 0]
        if not ready:  # inconsistent orders: take the one most often listed first
            ready = [min(remaining, key=lambda t: indegree[t])]
        pick = min(ready, key=lambda t: (-len(after[t]), first_seen.get(t, 0)))
        order.append(pick)
        remaining.discard(pick)
        for later in after[pick]:
            if later in indegree and after[later][pick] < after[pick][later]:
                indegree[later] -= 1
    return tuple(order + sorted(exclusive, key=lambda t: first_seen.get(t, 0)))


def _level_order(answers: list[str]) -> tuple[str, ...]:
    """Unordered categories: Yes before No, else alphabetical with 'Other' last."""
    low = {a.lower(): a for a in answers}
    if set(low) <= {"yes", "no"}:
        return tuple(low[k] for k in ("yes", "no") if k in low)
    if set(low) <= {"true", "false"}:
        return tuple(low[k] for k in ("true", "false") if k in low)

    def key(a: str) -> tuple[int, str]:
        lower = a.lower()
        return (1 if lower.startswith(("other", "self-describe", "self describe")) else 0, lower)

    return tuple(sorted(answers, key=key))


def _guess_column(p: _Profile) -> _Guess:
    if p.is_date_column:
        return _Guess(Kind.DATE, personal=bool(_PERSONAL_NAME["birth"].search(p.name)))
    codes = _missing_codes(p)
    if codes:
        keep = [i for i, v in enumerate(p.values) if v not in codes]
        answers = [p.values[i] for i in keep]
        counts = p.counts[keep] if len(p.counts) else np.zeros(0, dtype=np.int64)
    else:
        answers, counts = p.values, p.counts
    guess = _Guess(Kind.TEXT, missing_codes=codes, answers=answers, answer_counts=counts)
    personal = _personal(p, answers)
    guess.personal = personal is not None
    if not answers:
        guess.kind = Kind.NUMERIC if p.is_number_column else Kind.TEXT
        return guess
    if personal in ("email", "phone", "name", "national_id"):
        return guess  # open text, marked personal; never a category to tabulate
    coded_numbers = sum(1 for c in codes if c in p.numbers)
    all_numeric = len(p.numbers) - coded_numbers == len(answers)
    if all_numeric and _looks_like_id(p, answers, counts):
        guess.kind = Kind.IDENTIFIER
        return guess
    if all_numeric:
        nums = [p.numbers[a] for a in answers]
        guess.kind = Kind.NUMERIC
        if _is_integer(nums) and min(nums) >= 0 and max(nums) <= 7:
            rated = _numbered_scale(p.question, nums)
            if rated is not None:
                guess.kind = Kind.LIKERT
                guess.levels, guess.value_labels = rated
            elif set(nums) == {0.0, 1.0}:
                # A 0/1 column is a yes/no answer, tabulated as two categories.
                guess.kind = Kind.CATEGORICAL
                guess.levels = tuple(answers[i] for i in np.argsort(nums))
        return guess
    if _looks_like_id(p, answers, counts):
        guess.kind = Kind.IDENTIFIER
        return guess
    if _dates(answers):
        guess.kind = Kind.DATE
        return guess
    n_answers = int(counts.sum())
    if len(answers) > 5000 or (len(answers) > 100 and len(answers) > 0.5 * n_answers):
        # Thousands of different texts are open answers, whatever else they hold.
        guess.kind = Kind.TEXT
        return guess
    match = scales.match_labels(answers) if len(answers) <= 60 else None
    if match is not None:
        guess.kind = Kind.LIKERT
        guess.levels, guess.value_labels = match.levels()
        return guess
    ordered = scales.match_ordered(answers) if len(answers) <= 60 else None
    if ordered is not None:
        guess.kind = Kind.ORDINAL
        guess.levels, guess.value_labels = ordered.levels()
        return guess
    bands = _bands(answers) or _education(answers)
    if bands is not None:
        guess.kind = Kind.ORDINAL
        guess.levels = bands
        return guess
    multi = _delimited(answers, counts)
    if multi is not None:
        guess.kind = Kind.MULTISELECT
        guess.delimiter, guess.levels = multi
        return guess
    words = np.array([len(a.split()) for a in answers], dtype=float)
    mean_words = float((words * counts).sum() / max(n_answers, 1))
    distinct_share = len(answers) / max(n_answers, 1)
    if (
        mean_words >= 5
        or len(answers) > 100
        or (n_answers >= 5 and distinct_share > 0.5)
        or (_TEXT_NAME.search(p.name) and distinct_share > 0.2)
    ):
        guess.kind = Kind.TEXT
        return guess
    guess.kind = Kind.CATEGORICAL
    guess.levels = _level_order(answers)
    return guess


def _numbered_scale(
    question: str, nums: list[float], in_battery: bool = False
) -> tuple[tuple[str, ...], dict[str, str]] | None:
    """Levels for numbers 1..k (or 0..k-1) when the question names a k-point scale."""
    low, high = int(min(nums)), int(max(nums))
    start = 0 if low == 0 else 1
    k = high - start + 1
    if not 3 <= k <= 7:
        return None
    numbers = [str(i) for i in range(start, start + k)]
    named = scales.scale_named_in_text(question, k)
    if named is None:
        if not in_battery:
            return None
        return tuple(numbers), {}
    scale, reverse = named
    if scale is None:
        return tuple(numbers), {}
    labels = scale.labels[::-1] if reverse else scale.labels
    return scale.labels, dict(zip(numbers, labels))


# ---------------------------------------------------------------------------- groups
def _name_key(name: str) -> str | None:
    """The stem neighbouring columns share: ``agree_3`` -> ``agree``, ``rank_tools`` ->
    ``rank``, ``q5_1`` -> ``q5``."""
    m = re.match(r"^(.*?[A-Za-z].*?)[_.\-\s](\d+)[A-Za-z]?$", name)
    if m:
        return m.group(1).lower()
    m = re.match(r"^([A-Za-z]{3,})(\d+)$", name)
    if m:
        return m.group(1).lower()
    if "_" in name:
        head = name.split("_", 1)[0]
        if len(head) >= 2:
            return head.lower()
    return None


def _stem(a: str, b: str) -> str | None:
    """The shared lead-in of two question texts, ending at a separator such as " - "."""
    if not a or not b or a == b:
        return None
    common = os.path.commonprefix([a, b])
    best = -1
    for sep in _STEM_SEPARATORS:
        at = common.rfind(sep)
        if at >= 0:
            best = max(best, at + len(sep.rstrip()))
    if best < 8:
        return None
    return common[:best].rstrip()


def _item_text(question: str, stem: str | None) -> str:
    if stem and question.startswith(stem):
        return question[len(stem) :].strip(" -–—:?.").strip()
    return ""


def _pretty(token: str) -> str:
    text = re.sub(r"[_.]+", " ", token).strip()
    return text[:1].upper() + text[1:] if text else token


def _runs(profiles: list[_Profile]) -> list[tuple[list[int], str | None, str | None]]:
    """Maximal runs of neighbouring columns sharing a name stem or a question stem."""
    out: list[tuple[list[int], str | None, str | None]] = []
    i = 0
    while i < len(profiles):
        key = _name_key(profiles[i].name)
        run = [i]
        stem: str | None = None
        j = i + 1
        while j < len(profiles):
            same_key = key is not None and _name_key(profiles[j].name) == key
            shared = _stem(profiles[i].question, profiles[j].question)
            same_stem = shared is not None and (stem is None or shared.startswith(stem[:8]))
            if not (same_key or same_stem):
                break
            if same_stem and shared is not None:
                stem = shared if stem is None or len(shared) < len(stem) else stem
            run.append(j)
            j += 1
        if len(run) >= 2:
            keys = {_name_key(profiles[k].name) for k in run}
            out.append((run, key if keys == {key} else None, stem))
        i = j
    return out


def _rank_matrix(frame: pd.DataFrame, names: list[str], codes: list[dict]) -> np.ndarray:
    cols = []
    for name, missing in zip(names, codes):
        col = frame[name]
        arr = _numbers_of(col)
        for code in missing:
            with contextlib.suppress(ValueError):
                arr[arr == float(code)] = np.nan
        cols.append(arr)
    return np.column_stack(cols)


def _numbers_of(col: pd.Series) -> np.ndarray:
    """A column as floats (text that is no number becomes NaN), in compiled code if possible."""
    if pd.api.types.is_numeric_dtype(col):
        return col.to_numpy(dtype=float, na_value=np.nan).copy()
    try:
        cast = pc.cast(pa.array(col.array), pa.float64())
        return cast.to_numpy(zero_copy_only=False).astype(float, copy=True)
    except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError, TypeError):
        return pd.to_numeric(col, errors="coerce").to_numpy(dtype=float, na_value=np.nan)


def _is_ranking(matrix: np.ndarray, hint: bool) -> bool:
    m = matrix.shape[1]
    if m < 3:
        return False
    finite = matrix[~np.isnan(matrix)]
    if finite.size == 0 or not np.all(finite == np.round(finite)):
        return False
    if finite.min() < 1 or finite.max() > m:
        return False
    answered = (~np.isnan(matrix)).any(axis=1)
    if not answered.any():
        return False
    ordered = np.sort(matrix, axis=1)
    repeats = (ordered[:, 1:] == ordered[:, :-1]).any(axis=1)
    valid = 1.0 - repeats[answered].mean()
    if hint:
        return bool(valid >= 0.9)
    used = set(np.unique(finite).astype(int))
    return bool(valid >= 0.98 and used == set(range(1, m + 1)))


_CHECK_WORDS = {"x", "✓", "✔", "checked", "selected", "yes", "1", "true", "on"}
_UNCHECKED_WORDS = {"0", "unchecked", "not selected", "false", "off"}


def _checkbox(guess: _Guess) -> str | None:
    """How a column stores one option of a choose-all-that-apply question, if it does.

    ``"binary"`` for 0/1 or checked/unchecked words, ``"label"`` when a chosen cell holds
    the option's own text and an unchosen one is blank.
    """
    answers = {a.lower() for a in guess.answers}
    if not answers:
        return None
    # Yes/No pairs are ordinary questions; a lone "Yes" (else blank) is a ticked box.
    if answers <= (_CHECK_WORDS | _UNCHECKED_WORDS) and answers & _CHECK_WORDS:
        return "binary"
    if len(answers) == 1 and guess.kind in (Kind.CATEGORICAL, Kind.TEXT):
        return "label"
    return None


def _apply_groups(frame: pd.DataFrame, profiles: list[_Profile], guesses: list[_Guess]) -> None:
    taken: set[str] = set()
    for run, key, stem in _runs(profiles):
        # Split the run into stretches of members that answer the same way.
        for members in _compatible_stretches(frame, run, profiles, guesses, key, stem):
            name = _group_name(members, profiles, key, stem, taken)
            taken.add(name)
            for i in members:
                guesses[i].group = name


def _compatible_stretches(
    frame: pd.DataFrame,
    run: list[int],
    profiles: list[_Profile],
    guesses: list[_Guess],
    key: str | None,
    stem: str | None,
) -> list[list[int]]:
    out: list[list[int]] = []
    names = [profiles[i].name for i in run]
    hint = bool(
        (key and "rank" in key)
        or (stem and "rank" in stem.lower())
        or any("rank" in profiles[i].question.lower()[:60] for i in run)
    )
    numeric = [
        i
        for i in run
        if guesses[i].kind in (Kind.NUMERIC, Kind.LIKERT, Kind.CATEGORICAL)
        and all(a in profiles[i].numbers for a in guesses[i].answers)
    ]
    within = all(
        float(profiles[i].numbers[a]).is_integer() and 1 <= profiles[i].numbers[a] <= len(run)
        for i in numeric
        for a in guesses[i].answers
    )
    if len(numeric) == len(run) and len(run) >= 3 and within:
        matrix = _rank_matrix(frame, names, [guesses[i].missing_codes for i in run])
        if _is_ranking(matrix, hint):
            for i in run:
                g = guesses[i]
                g.kind, g.levels, g.value_labels = Kind.RANKING, (), {}
                g.option = _item_text(profiles[i].question, stem) or _option_from_name(
                    profiles[i].name, key
                )
            return [run]
    boxes = [_checkbox(guesses[i]) for i in run]
    stretch: list[int] = []
    for i, box in zip(run, boxes):
        if box is not None:
            stretch.append(i)
        else:
            if len(stretch) >= 2:
                out.append(stretch)
            stretch = []
    if len(stretch) >= 2:
        out.append(stretch)
    boxed = {i for s in out for i in s}
    for s in out:
        for i in s:
            g = guesses[i]
            label = _checkbox(g) == "label"
            g.kind, g.levels, g.value_labels = Kind.MULTISELECT, (), {}
            g.option = (
                g.answers[0]
                if label and g.answers[0].lower() not in _CHECK_WORDS
                else _item_text(profiles[i].question, stem)
                or _option_from_name(profiles[i].name, key)
            )
    rest = [i for i in run if i not in boxed]
    out.extend(_battery_stretches(rest, profiles, guesses))
    return out


def _battery_stretches(
    run: list[int], profiles: list[_Profile], guesses: list[_Guess]
) -> list[list[int]]:
    """Neighbours answering on one scale: a rating battery (labels or numbers 1..k)."""
    out: list[list[int]] = []
    # Numbers 1..k in a battery are a rating scale even when no question names it.
    ints = [
        i
        for i in run
        if guesses[i].kind in (Kind.NUMERIC, Kind.LIKERT)
        and guesses[i].answers
        and all(a in profiles[i].numbers for a in guesses[i].answers)
    ]
    if len(ints) >= 3:
        values = [profiles[i].numbers[a] for i in ints for a in guesses[i].answers]
        if _is_integer(values) and min(values) >= 0 and max(values) <= 7 and max(values) >= 3:
            for i in ints:
                rated = _numbered_scale(profiles[i].question, values, in_battery=True)
                if rated is not None:
                    guesses[i].kind = Kind.LIKERT
                    guesses[i].levels, guesses[i].value_labels = rated
    stretch: list[int] = []
    for i in run:
        g = guesses[i]
        if stretch and _same_scale(guesses[stretch[0]], g):
            stretch.append(i)
            continue
        if len(stretch) >= 2:
            out.append(stretch)
        stretch = [i] if g.kind in (Kind.LIKERT, Kind.ORDINAL, Kind.CATEGORICAL) else []
    if len(stretch) >= 2:
        out.append(stretch)
    for s in out:
        _unify_scale(s, guesses)
    return out


def _same_scale(a: _Guess, b: _Guess) -> bool:
    if a.kind is not b.kind or a.kind not in (Kind.LIKERT, Kind.ORDINAL, Kind.CATEGORICAL):
        return False
    if a.kind is Kind.LIKERT:
        ma = scales.scale_for_levels(a.levels)
        mb = scales.scale_for_levels(b.levels)
        if ma is not None and mb is not None:
            return ma.family == mb.family
        return a.levels == b.levels
    return set(a.levels) == set(b.levels)


def _unify_scale(members: list[int], guesses: list[_Guess]) -> None:
    """One battery, one scale: match the union of the members' answers."""
    if guesses[members[0]].kind is not Kind.LIKERT:
        return
    answers = sorted({a for i in members for a in guesses[i].answers})
    if all(re.fullmatch(r"-?\d+(?:\.\d+)?", a) for a in answers):
        return  # numbered scales already share their levels
    match = scales.match_labels(answers)
    if match is None:
        return
    levels, labels = match.levels()
    for i in members:
        guesses[i].levels = levels
        guesses[i].value_labels = {k: v for k, v in labels.items() if k in guesses[i].answers}


def _option_from_name(name: str, key: str | None) -> str:
    rest = name
    if key and name.lower().startswith(key):
        rest = name[len(key) :].lstrip("_.- ")
    return _pretty(rest or name)


def _group_name(
    members: list[int], profiles: list[_Profile], key: str | None, stem: str | None, taken: set
) -> str:
    names = [profiles[i].name for i in members]
    base = key
    if base is None:
        common = os.path.commonprefix(names).rstrip("_.- 0123456789")
        base = common if len(common) >= 2 else names[0]
    name = base
    k = 2
    while name in taken:
        name = f"{base}_{k}"
        k += 1
    return name


# ---------------------------------------------------------------------------- public API
def infer_codebook(
    frame: pd.DataFrame,
    questions: dict[str, str] | None = None,
    *,
    progress: Progress | None = None,
    first_position: int = 1,
) -> Codebook:
    """Infer one codebook entry per column of ``frame``, in column order.

    ``questions`` maps column names to full question texts (a second header row), which
    help recognise scales, stems and codes. ``first_position`` numbers the entries (1-based
    questionnaire order), so inferred entries can be appended to an existing codebook.
    """
    questions = questions or {}
    progress = ensure_progress(progress)
    profiles: list[_Profile] = []
    guesses: list[_Guess] = []
    total = max(frame.shape[1], 1)
    for j, name in enumerate(frame.columns):
        p = _profile(str(name), frame[name], questions.get(name, ""), first_position + j)
        profiles.append(p)
        guesses.append(_guess_column(p))
        if j % 4 == 0:
            progress.update(j, total, "Recognising question types")
    _apply_groups(frame, profiles, guesses)
    variables = []
    for p, g in zip(profiles, guesses):
        variables.append(
            Variable(
                name=p.name,
                question=p.question,
                kind=g.kind,
                levels=g.levels if (g.kind.has_levels or g.kind is Kind.MULTISELECT) else (),
                value_labels=g.value_labels if g.kind.has_levels else {},
                missing_codes=g.missing_codes,
                group=g.group,
                personal=g.personal,
                option=g.option,
                delimiter=g.delimiter,
                position=p.position,
            )
        )
    progress.update(total, total, "Recognising question types")
    return Codebook(variables)


def kind_summary(codebook: Codebook) -> dict[str, int]:
    """How many variables of each kind: the import report's summary line."""
    counts = Counter(str(v.kind) for v in codebook)
    return {k.value: counts[k.value] for k in Kind if counts[k.value]}
