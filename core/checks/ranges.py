"""Plausible range: numeric answers outside the codebook's minimum and maximum.

Where the codebook sets no range, common items recognised by name or question text get a
suggested default (:func:`suggest_ranges`), for example 0 to 168 hours per week: a week has
168 hours, so more is impossible. Suggested ranges other than such physical limits are
rules of thumb (common practice, no source) that the evaluator can change in the codebook.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from core.checks.flag import Context, Flag, Suggestion, show_number
from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.ledger import Action

CHECK = "range"

# Codes survey exports often use for "no answer" in numeric items; a value like this outside
# the range is more likely an undeclared missing code than a typing error.
COMMON_MISSING_CODES = {-1, -7, -8, -9, -77, -88, -97, -98, -99, -999, 99, 999, 9999}


@dataclass(frozen=True)
class RangeRule:
    """A default range for items whose name or question matches.

    ``impossible`` is True when values outside the range cannot be true (a physical
    limit), so a flag is an error rather than a warning.
    """

    label: str
    lo: float
    hi: float
    impossible: bool
    why: str


def _words(var: Variable) -> tuple[set[str], str]:
    # Split "hours_work_week", "hoursWorkWeek" and "Hours per week" alike into words.
    name = re.sub(r"([a-z])([A-Z])", r"\1 \2", var.name).lower()
    tokens = set(re.split(r"[^a-z0-9%]+", name)) - {""}
    question = var.question.lower()
    return tokens | set(re.split(r"[^a-z0-9%]+", question)) - {""}, question


def range_rule(var: Variable) -> RangeRule | None:
    """The suggested default range for a numeric item, or None if it is not a common one."""
    if var.kind is not Kind.NUMERIC:
        return None
    words, question = _words(var)
    hours = bool(words & {"hours", "hour", "hrs", "hr"})
    week = bool(words & {"week", "weekly", "wk", "weeks"})
    day = bool(words & {"day", "daily", "days"})
    if hours and week:
        return RangeRule("hours per week", 0, 168, True, "a week has 168 hours")
    if hours and day:
        return RangeRule("hours per day", 0, 24, True, "a day has 24 hours")
    if day and week:
        return RangeRule("days per week", 0, 7, True, "a week has 7 days")
    if "age" in words or "how old" in question:
        # Adult and youth programmes alike: under 14 or over 100 is almost always a typing
        # error (common practice, no source).
        return RangeRule("age in years", 14, 100, False, "a plausible age for a respondent")
    if words & {"credits", "credit"}:
        # A full-time term is about 12 to 18 credits; 30 leaves room for heavy loads
        # (common practice, no source).
        return RangeRule("credits in a term", 0, 30, False, "a plausible credit load")
    if words & {"years", "yrs", "year"} and not words & {"birth", "born"}:
        return RangeRule("a number of years", 0, 80, False, "a plausible span of a working life")
    if words & {"percent", "percentage", "pct", "%"}:
        return RangeRule("a percentage", 0, 100, True, "a percentage lies between 0 and 100")
    return None


def suggest_ranges(codebook: Codebook) -> dict[str, tuple[float, float]]:
    """Suggested plausible ranges for common numeric items, by variable name.

    Covers ages, hours per week (at most 168: impossible beyond), hours per day, days per
    week, credits, numbers of years and percentages. Variables that already have a range in
    the codebook are included too, so a view can show the suggestion beside it.
    """
    out: dict[str, tuple[float, float]] = {}
    for var in codebook:
        rule = range_rule(var)
        if rule is not None:
            out[var.name] = (float(rule.lo), float(rule.hi))
    return out


def check(ctx: Context) -> list[Flag]:
    flags: list[Flag] = []
    values, reasons = ctx.working.values, ctx.working.reasons
    for var in ctx.numeric_variables():
        rule = range_rule(var)
        if var.range is not None:
            lo, hi = var.range
            source = "the plausible range set in the codebook"
        elif rule is not None and ctx.settings.suggested_ranges:
            lo, hi = rule.lo, rule.hi
            source = f"the suggested range for {rule.label} (not yet set in the codebook)"
        else:
            continue
        x = values[var.name].to_numpy(dtype=float, na_value=np.nan)
        answered = reasons[var.name].isna().to_numpy() & ctx.keep
        with np.errstate(invalid="ignore"):
            outside = answered & ((x < lo) | (x > hi))
        for row in np.flatnonzero(outside):
            value = float(x[row])
            # Beyond a physical limit (168 hours a week) whatever range the codebook sets.
            impossible = bool(
                rule is not None and rule.impossible and not rule.lo <= value <= rule.hi
            )
            severity = "error" if (var.range is not None or impossible) else "warning"
            why = f" Impossible: {rule.why}." if impossible and rule is not None else ""
            message = (
                f"{var.name} is {show_number(value)}, outside {source} "
                f"({show_number(lo)} to {show_number(hi)}).{why}"
            )
            flags.append(
                ctx.flag(
                    CHECK,
                    row,
                    [var.name],
                    value,
                    severity,
                    message,
                    _suggest(value, lo, hi),
                    {"lo": lo, "hi": hi, "impossible": impossible},
                )
            )
    return flags


def _suggest(value: float, lo: float, hi: float) -> Suggestion:
    if value in COMMON_MISSING_CODES:
        return Suggestion(
            Action.SET_MISSING,
            None,
            f"Set to missing. {show_number(value)} looks like a code for 'no answer': if so, "
            "add it to the codebook's missing codes instead, which covers every such cell.",
        )
    for factor in (10, 100):
        smaller = value / factor
        if value == int(value) and value % factor == 0 and lo <= smaller <= hi:
            return Suggestion(
                Action.CORRECT,
                smaller,
                f"Correct to {show_number(smaller)} if the source shows a zero typed too many.",
            )
    return Suggestion(
        Action.SET_MISSING, None, "Set to missing unless the source shows the true value."
    )
