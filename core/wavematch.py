"""Line up a new wave's columns and answers with an instrument's existing codebook.

Next year's export rarely looks exactly like this year's: a column gets a new name, a
question is reworded, a scale label is rewritten ("Now and then" for "Sometimes"), a question
is added or dropped. Matching reuses last year's codebook (and so its ranges, keying, rules
and decisions) for every column that is the same question, and says plainly what it did.

Columns are matched in three passes, strongest evidence first:

1. by name (exactly, then ignoring capitals, spaces and punctuation);
2. by question text (difflib similarity, with a shared battery stem discounted so two items
   of one battery do not look alike just because they share their lead-in);
3. by answer pattern (the same answer levels, a numeric column inside the plausible range,
   the same kind).

A column is *matched* (same name), *renamed* (another name, but the same question and
answers: applied automatically), *uncertain* (a likely partner, not applied: imported as a
new question unless the evaluator accepts it), or *new*; codebook entries the file lacks are
*missing*. Answer texts the codebook does not know are mapped to an existing level when they
are another wording of the same scale point, or a near-identical spelling, and the level they
would replace no longer occurs in the new file (so a typo beside the correct answer stays a
typo for the cleaning checks, never silently corrected). Every decision carries a score from
0 to 1 and a reason in plain words.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from core import scales
from core.codebook import Codebook, Variable
from core.decoding import factorize_cells, format_number
from core.inference import MISSING_PHRASES, infer_codebook
from core.kinds import Kind

MATCHED, RENAMED, NEW, UNCERTAIN, MISSING = "matched", "renamed", "new", "uncertain", "missing"
STATUSES = (MATCHED, RENAMED, UNCERTAIN, NEW, MISSING)

# Thresholds (common practice for fuzzy matching, no source; tuned on invented examples).
STRONG_QUESTION = 0.85  # question texts this alike are the same question
LIKELY = 0.6  # name or question this alike is worth showing as a suggestion
STRONG_NAME = 0.85
LEVEL_TEXT = 0.8  # answer spellings this alike are the same answer


@dataclass(frozen=True)
class ColumnMatch:
    """What one column of the new file was matched to.

    ``target`` is the codebook name the column will be stored under (for ``uncertain``, the
    suggestion, which is *not* applied). ``question_changed`` is True when the column keeps
    its codebook entry but its question text in this file differs from the codebook's.
    """

    column: str
    status: str
    target: str | None
    score: float
    reason: str
    question: str = ""
    old_question: str = ""
    question_changed: bool = False


@dataclass(frozen=True)
class LevelMatch:
    """One answer text of the new file mapped (or proposed) onto an existing level."""

    variable: str
    answer: str
    level: str | None
    score: float
    reason: str
    applied: bool
    count: int = 0


@dataclass
class MatchReport:
    """The result of :func:`match_wave`: per-column decisions, level mappings and gaps.

    ``column_map`` (file name -> codebook name) and ``level_maps`` (codebook name ->
    {answer text -> level}) are what an import applies; uncertain suggestions are not in
    them until the evaluator accepts one.
    """

    columns: list[ColumnMatch] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)
    levels: list[LevelMatch] = field(default_factory=list)
    unknown_answers: dict[str, list[str]] = field(default_factory=dict)

    def _names(self, status: str) -> list[str]:
        return [c.column for c in self.columns if c.status == status]

    @property
    def matched(self) -> list[str]:
        return self._names(MATCHED)

    @property
    def renamed(self) -> list[str]:
        return self._names(RENAMED)

    @property
    def new(self) -> list[str]:
        return self._names(NEW)

    @property
    def uncertain(self) -> list[str]:
        return self._names(UNCERTAIN)

    @property
    def column_map(self) -> dict[str, str]:
        """File column -> codebook name, for every column stored under another name."""
        return {
            c.column: c.target
            for c in self.columns
            if c.status in (RENAMED, NEW, MATCHED) and c.target and c.target != c.column
        }

    @property
    def level_maps(self) -> dict[str, dict[str, str]]:
        out: dict[str, dict[str, str]] = {}
        for m in self.levels:
            if m.applied and m.level is not None:
                out.setdefault(m.variable, {})[m.answer] = m.level
        return out

    @property
    def complete(self) -> bool:
        """True when every codebook entry found its column and nothing is in doubt."""
        return not (self.missing or self.uncertain or self.new) and not any(
            not m.applied for m in self.levels
        )

    @property
    def needs_review(self) -> bool:
        """Anything a person should look at before importing (everything but plain matches)."""
        return bool(
            self.renamed
            or self.uncertain
            or self.new
            or self.missing
            or self.levels
            or self.unknown_answers
            or any(c.question_changed for c in self.columns)
        )

    def column(self, name: str) -> ColumnMatch | None:
        return next((c for c in self.columns if c.column == name), None)

    def summary(self) -> list[str]:
        """Plain sentences for the import report and the command line."""
        out = [
            f"{len(self.matched)} column(s) matched the codebook by name"
            + (f", {len(self.renamed)} under a new name" if self.renamed else "")
            + "."
        ]
        for c in self.columns:
            if c.status == RENAMED:
                out.append(f"{c.column} is stored as {c.target}: {c.reason}.")
        for c in self.columns:
            if c.status == UNCERTAIN:
                out.append(
                    f"{c.column} may be {c.target} ({c.reason}); it was added as a new "
                    "question. Accept the match in the review if it is the same question."
                )
        if self.new:
            out.append("New question(s) added to the codebook: " + ", ".join(self.new) + ".")
        if self.missing:
            out.append(
                "In the codebook but not in this file (no answers this wave): "
                + ", ".join(self.missing)
                + "."
            )
        for m in self.levels:
            if m.applied:
                out.append(
                    f"{m.variable}: the answer “{m.answer}” counts as “{m.level}” ({m.reason})."
                )
            elif m.level is not None:
                out.append(
                    f"{m.variable}: the answer “{m.answer}” may mean “{m.level}” ({m.reason}); "
                    "not applied."
                )
        changed = [c.target or c.column for c in self.columns if c.question_changed]
        if changed:
            out.append("Question wording changed since the codebook: " + ", ".join(changed) + ".")
        for name, answers in self.unknown_answers.items():
            shown = ", ".join(f"“{a}”" for a in answers[:5]) + (" …" if len(answers) > 5 else "")
            out.append(
                f"{name}: answer(s) the codebook does not know: {shown}. The cleaning checks "
                "show them as invalid until they are mapped or corrected."
            )
        return out

    def to_json(self) -> dict[str, Any]:
        """The documented JSON shape (docs/cli-json.md, ``plaincount-cli import``)."""
        return {
            "columns": [asdict(c) for c in self.columns],
            "matched": self.matched,
            "renamed": self.renamed,
            "uncertain": self.uncertain,
            "new": self.new,
            "missing": list(self.missing),
            "levels": [asdict(m) for m in self.levels],
            "unknown_answers": {k: list(v) for k, v in self.unknown_answers.items()},
            "column_map": self.column_map,
            "level_maps": self.level_maps,
            "complete": self.complete,
        }

    @classmethod
    def from_json(cls, data: dict[str, Any]) -> MatchReport:
        """Read back a report stored in a wave's import report."""
        return cls(
            columns=[ColumnMatch(**c) for c in data.get("columns", [])],
            missing=list(data.get("missing", [])),
            levels=[LevelMatch(**m) for m in data.get("levels", [])],
            unknown_answers={k: list(v) for k, v in (data.get("unknown_answers") or {}).items()},
        )


# ---------------------------------------------------------------------------- similarity
_TOKEN = re.compile(r"[a-z]+|\d+")


def name_tokens(name: str) -> list[str]:
    """``hours_work_week`` -> ["hours", "work", "week"]; ``Q5b`` -> ["q", "5", "b"]."""
    return _TOKEN.findall(str(name).lower())


def name_similarity(a: str, b: str) -> float:
    """How alike two column names are, 0..1.

    Names that differ only in their numbers (``agree_8`` and ``agree_9``) are different
    items of a battery, so they score low however alike the letters are.
    """
    ta, tb = name_tokens(a), name_tokens(b)
    if not ta or not tb:
        return 0.0
    if ta == tb:
        return 1.0
    words_a = [t for t in ta if not t.isdigit()]
    words_b = [t for t in tb if not t.isdigit()]
    nums_a = [t for t in ta if t.isdigit()]
    nums_b = [t for t in tb if t.isdigit()]
    if sorted(nums_a) != sorted(nums_b) and (nums_a or nums_b):
        return 0.3 if words_a == words_b else 0.0
    set_a, set_b = set(ta), set(tb)
    jaccard = len(set_a & set_b) / len(set_a | set_b)
    ratio = difflib.SequenceMatcher(None, "".join(sorted(ta)), "".join(sorted(tb))).ratio()
    return round(max(jaccard, ratio), 3)


def _words(text: str) -> list[str]:
    return re.findall(r"[a-z0-9']+", str(text).lower().replace("’", "'"))


def question_similarity(a: str, b: str) -> float | None:
    """How alike two question texts are, 0..1 (None when either is blank).

    A long shared lead-in (a battery stem such as "How much do you agree? -") would make
    every pair of items look alike, so when the texts share their first three or more words
    the score is capped by how alike the rest is.
    """
    wa, wb = _words(a), _words(b)
    if not wa or not wb:
        return None
    if wa == wb:
        return 1.0
    full = difflib.SequenceMatcher(None, " ".join(wa), " ".join(wb)).ratio()
    k = 0
    while k < min(len(wa), len(wb)) and wa[k] == wb[k]:
        k += 1
    if k >= 3 and k < len(wa) and k < len(wb):
        rest = difflib.SequenceMatcher(None, " ".join(wa[k:]), " ".join(wb[k:])).ratio()
        full = min(full, 0.5 + 0.5 * rest)
    return round(full, 3)


def same_text(a: str, b: str) -> bool:
    return _words(a) == _words(b)


# ---------------------------------------------------------------------------- answers
def answer_counts(column: pd.Series) -> dict[str, int]:
    """Distinct answer texts of a raw column (as the codebook refers to them) and counts."""
    codes, texts = factorize_cells(column)
    counts = np.bincount(codes[codes >= 0], minlength=len(texts)) if len(texts) else []
    return {t: int(n) for t, n in zip(texts, counts)}


def _missing_code(var: Variable, text: str) -> bool:
    low = text.strip().lower()
    codes = {k.strip().lower() for k in var.missing_codes}
    if low in codes:
        return True
    try:
        if format_number(float(text)) in codes:
            return True
    except (ValueError, OverflowError):
        pass
    return False


def level_of(var: Variable, text: str) -> str | None:
    """The level an answer text decodes to under ``var`` (as decoding does), or None."""
    mapped = var.value_labels.get(text, text)
    lowered = {lv.lower(): lv for lv in var.levels}
    return lowered.get(mapped.lower())


def _is_missing_phrase(text: str) -> bool:
    return scales.normalize_label(text) in MISSING_PHRASES


def unknown_answers(var: Variable, counts: dict[str, int]) -> dict[str, int]:
    """Answers of a levelled variable that are neither a level nor a missing code."""
    if not var.kind.has_levels or not var.levels:
        return {}
    return {
        t: n
        for t, n in counts.items()
        if level_of(var, t) is None and not _missing_code(var, t) and not _is_missing_phrase(t)
    }


def answer_fit(existing: Variable, guessed: Variable, counts: dict[str, int]) -> float:
    """How well a column's answers fit an existing entry, 0..1 (the answer-pattern pass)."""
    if existing.kind.has_levels and existing.levels:
        answers = [
            t for t in counts if not _missing_code(existing, t) and not _is_missing_phrase(t)
        ]
        if not answers:
            return 0.0
        scale = scales.scale_for_levels(existing.levels)
        hits = 0
        for t in answers:
            if level_of(existing, t) is not None or (
                scale and _scale_position(scale, t) is not None
            ):
                hits += 1
        return round(hits / len(answers), 3)
    if existing.kind is Kind.NUMERIC:
        if guessed.kind is not Kind.NUMERIC:
            return 0.0
        if existing.range is None:
            return 0.7
        lo, hi = existing.range
        values = []
        for t, n in counts.items():
            try:
                x = float(t)
            except ValueError:
                continue
            if not _missing_code(existing, t) and not _missing_code(guessed, t):
                values.append((x, n))
        total = sum(n for _, n in values)
        if not total:
            return 0.0
        inside = sum(n for x, n in values if lo <= x <= hi)
        return round(inside / total, 3)
    if existing.kind is Kind.MULTISELECT and existing.levels and guessed.levels:
        a, b = {x.lower() for x in existing.levels}, {x.lower() for x in guessed.levels}
        return round(len(a & b) / len(a | b), 3)
    if existing.kind is guessed.kind:
        return 0.7 if existing.kind in (Kind.IDENTIFIER, Kind.DATE, Kind.RANKING) else 0.5
    return 0.0


def _scale_position(scale: scales.Scale, text: str) -> int | None:
    norm = scales.normalize_label(text)
    hits = [i for i, aliases in enumerate(scale.aliases) if norm in aliases]
    return hits[0] if len(hits) == 1 else None


# ---------------------------------------------------------------------------- matching
def match_wave(
    codebook: Codebook,
    frame: pd.DataFrame,
    questions: dict[str, str] | None = None,
    *,
    column_map: dict[str, str] | None = None,
    level_maps: dict[str, dict[str, str]] | None = None,
) -> MatchReport:
    """Match the columns and answers of a new wave's raw table to an existing codebook.

    Parameters
    ----------
    codebook
        The instrument's codebook (last wave's work).
    frame
        The new wave's raw table, with the file's own column names.
    questions
        File column name -> question text (the second header row), if any.
    column_map, level_maps
        The evaluator's own decisions; they override the matcher. A column mapped to its
        own name that the codebook lacks is a new question; ``level_maps`` are keyed by
        codebook name, and an answer mapped to "" is left as it is (no guess is made).

    Returns
    -------
    MatchReport
        Every column's status, score and reason, the codebook entries the file lacks, and
        the answer mappings (applied or only proposed).
    """
    questions = dict(questions or {})
    overrides = dict(column_map or {})
    columns = [str(c) for c in frame.columns]
    decided: dict[str, ColumnMatch] = {}
    taken: set[str] = set()

    def q(col: str) -> str:
        return questions.get(col, "") or ""

    def settle(col: str, status: str, target: str | None, score: float, reason: str) -> None:
        old = codebook.get(target).question if target and target in codebook else ""
        changed = (
            status in (MATCHED, RENAMED)
            and bool(q(col))
            and bool(old)
            and not same_text(q(col), old)
        )
        decided[col] = ColumnMatch(
            col, status, target, round(float(score), 3), reason, q(col), old, changed
        )
        if status in (MATCHED, RENAMED) and target:
            taken.add(target)

    # 0. The evaluator's own decisions.
    for col in columns:
        if col not in overrides:
            continue
        target = str(overrides[col])
        if target in codebook and target not in taken:
            status = MATCHED if target == col else RENAMED
            settle(col, status, target, 1.0, "chosen in the review")
        else:
            settle(col, NEW, target, 1.0, "marked as a new question in the review")
    # 1. Same name, then the same name written differently.
    for col in columns:
        if col in decided:
            continue
        if col in codebook and col not in taken:
            settle(col, MATCHED, col, 1.0, "same column name")
    loose = {_loose(v.name): v.name for v in codebook if v.name not in taken}
    for col in columns:
        if col in decided:
            continue
        other = loose.get(_loose(col))
        if other is not None and other not in taken and other not in columns:
            settle(col, RENAMED, other, 0.95, "the same name written with other capitals or signs")
    # 2 and 3. Question text, then answer pattern, for what is left on both sides.
    rest_cols = [c for c in columns if c not in decided]
    rest_vars = [v for v in codebook if v.name not in taken and v.name not in columns]
    if rest_cols and rest_vars:
        # Each column guessed at its own position (a column of distinct whole numbers is
        # taken for an identifier only when it comes first in the file).
        guessed = {
            c: infer_codebook(frame[[c]], {c: q(c)}, first_position=columns.index(c) + 1)[c]
            for c in rest_cols
        }
        counts = {c: answer_counts(frame[c]) for c in rest_cols}
        pairs = []
        for col in rest_cols:
            for var in rest_vars:
                pair = _score_pair(col, q(col), guessed[col], counts[col], var)
                if pair is not None:
                    pairs.append(pair)
        # Strongest evidence first; each column and each entry is used once.
        pairs.sort(key=lambda p: (p[0] != RENAMED, -p[1], p[2], p[3]))
        for status, score, col, target, reason in pairs:
            if col in decided or target in taken:
                continue
            if status == UNCERTAIN and any(c.target == target for c in decided.values()):
                continue
            settle(col, status, target, score, reason)
    for col in columns:
        if col not in decided:
            settle(col, NEW, col, 1.0, "no codebook entry is like it")
    report = MatchReport(columns=[decided[c] for c in columns])
    stored = {c.target for c in report.columns if c.status in (MATCHED, RENAMED)}
    report.missing = [v.name for v in codebook if v.name not in stored and not v.derived_from]
    _match_levels(report, codebook, frame, level_maps or {})
    return report


def _loose(name: str) -> str:
    return "".join(name_tokens(name))


def _score_pair(
    col: str, question: str, guessed: Variable, counts: dict[str, int], var: Variable
) -> tuple[str, float, str, str, str] | None:
    qs = question_similarity(question, var.question)
    ns = name_similarity(col, var.name)
    fit = answer_fit(var, guessed, counts)
    if qs is not None:
        score = 0.55 * qs + 0.15 * ns + 0.3 * fit
    else:
        score = 0.6 * ns + 0.4 * fit
    how_q = f"question text {round(100 * qs)}% alike" if qs is not None else "no question text"
    how_a = f"{round(100 * fit)}% of its answers fit"
    if qs is not None and qs >= STRONG_QUESTION and fit >= 0.5:
        return RENAMED, score, col, var.name, f"same question ({how_q}), {how_a}"
    if ns >= STRONG_NAME and fit >= 0.6 and (qs is None or qs >= 0.5):
        return RENAMED, score, col, var.name, f"nearly the same name, {how_q}, {how_a}"
    if ((qs is not None and qs >= LIKELY) or ns >= LIKELY) and (fit >= 0.3 or qs is None):
        return (
            UNCERTAIN,
            score,
            col,
            var.name,
            f"{how_q}, name {round(100 * ns)}% alike, {how_a}",
        )
    if (
        fit >= 0.9
        and var.kind.has_levels
        and len(var.levels) >= 3
        and guessed.kind.has_levels
        and (qs is None or qs >= 0.3)
    ):
        return (
            UNCERTAIN,
            score,
            col,
            var.name,
            f"answers follow the same pattern ({how_a}), {how_q}",
        )
    return None


def _match_levels(
    report: MatchReport,
    codebook: Codebook,
    frame: pd.DataFrame,
    level_maps: dict[str, dict[str, str]],
) -> None:
    for c in report.columns:
        if c.status not in (MATCHED, RENAMED) or not c.target:
            continue
        var = codebook[c.target]
        if not var.kind.has_levels or not var.levels:
            continue
        counts = answer_counts(frame[c.column])
        chosen = level_maps.get(var.name, {})
        for answer, level in chosen.items():
            if level in var.levels:
                report.levels.append(
                    LevelMatch(
                        var.name,
                        answer,
                        level,
                        1.0,
                        "chosen in the review",
                        True,
                        counts.get(answer, 0),
                    )
                )
        # An answer mapped to "" was left as it is on purpose: no guess is made for it.
        unknown = {
            t: n
            for t, n in unknown_answers(var, counts).items()
            if t not in chosen or not chosen[t]
        }
        if not unknown:
            continue
        used = {level_of(var, t) for t in counts} - {None}
        used |= {lv for lv in chosen.values() if lv}
        left = []
        for answer, n in sorted(unknown.items(), key=lambda kv: -kv[1]):
            found = None if answer in chosen else _level_for(var, answer, used)
            if found is None:
                left.append(answer)
                continue
            level, score, reason, certain = found
            report.levels.append(LevelMatch(var.name, answer, level, score, reason, certain, n))
            if certain:
                used.add(level)
        # One new answer where exactly one level no longer occurs: likely its new wording.
        free = [lv for lv in var.levels if lv not in used]
        if len(left) == 1 and len(free) == 1 and var.kind.ordered and left[0] not in chosen:
            report.levels.append(
                LevelMatch(
                    var.name,
                    left[0],
                    free[0],
                    0.5,
                    f"the only new answer, and “{free[0]}” is the only level no longer chosen",
                    False,
                    unknown[left[0]],
                )
            )
        elif left:
            report.unknown_answers[var.name] = left


def _level_for(
    var: Variable, answer: str, used: set[str | None]
) -> tuple[str, float, str, bool] | None:
    """A level this unknown answer is another wording of, with score, reason and whether
    it is certain enough to apply."""
    scale = scales.scale_for_levels(var.levels)
    norm = scales.normalize_label(answer)
    # Same words, other spelling or numbering ("5 - Strongly agree").
    for lv in var.levels:
        if scales.normalize_label(lv) == norm:
            return lv, 0.95, "the same words written differently", lv not in used
    if scale is not None:
        pos = _scale_position(scale, answer)
        if pos is not None:
            lv = var.levels[pos]
            reason = (
                f"another wording of point {pos + 1} of {scale.points} on the {scale.family} scale"
            )
            return lv, 0.9, reason, lv not in used
    best, best_ratio = None, 0.0
    for lv in var.levels:
        ratio = difflib.SequenceMatcher(None, norm, scales.normalize_label(lv)).ratio()
        if ratio > best_ratio:
            best, best_ratio = lv, ratio
    if best is not None and best_ratio >= LEVEL_TEXT:
        reason = f"spelled {round(100 * best_ratio)}% alike"
        if best in used:
            # The correct answer is still chosen by others: a typo for the cleaning checks.
            return None
        return best, round(best_ratio, 3), reason, True
    return None
