"""Cells the codebook cannot read: text that is not a valid answer for the variable's kind.

The raw text is kept and shown ("twelve" in a numeric item, "Agreee" in a rating). Where the
intended answer is obvious (a single number inside the text, a number word up to twenty, an
answer differing only in case, spaces or a prefix) the check suggests it; otherwise it
suggests setting the cell to missing.
"""

from __future__ import annotations

import re

import numpy as np

from core.checks.flag import Context, Flag, Suggestion, show_number
from core.codebook import Variable
from core.decoding import INVALID
from core.kinds import Kind
from core.ledger import Action

CHECK = "invalid"
_NUMBER_WORDS = {
    w: i
    for i, w in enumerate(
        [
            "zero",
            "one",
            "two",
            "three",
            "four",
            "five",
            "six",
            "seven",
            "eight",
            "nine",
            "ten",
            "eleven",
            "twelve",
            "thirteen",
            "fourteen",
            "fifteen",
            "sixteen",
            "seventeen",
            "eighteen",
            "nineteen",
            "twenty",
        ]
    )
}
_NUMBER = re.compile(r"[-+]?\d+(?:[.,]\d+)?")


def guess(var: Variable, text: str | None) -> object | None:
    """The answer ``text`` most likely meant, or None if there is no single clear guess."""
    if text is None:
        return None
    low = text.strip().lower()
    if var.kind in (Kind.NUMERIC, Kind.RANKING):
        if low in _NUMBER_WORDS:
            return float(_NUMBER_WORDS[low])
        found = _NUMBER.findall(low)
        if len(found) == 1:
            return float(found[0].replace(",", "."))
        return None
    if var.kind.has_levels:
        squeezed = re.sub(r"\s+", " ", low)
        exact = [lv for lv in var.levels if lv.lower() == squeezed]
        if exact:
            return exact[0]
        # A typed-in abbreviation ("Elec"); two letters ("No") are too little to go on.
        prefix = [lv for lv in var.levels if len(squeezed) >= 3 and lv.lower().startswith(squeezed)]
        if len(prefix) == 1:
            return prefix[0]
        near = [lv for lv in var.levels if squeezed.startswith(lv.lower())]
        if len(near) == 1:
            return near[0]
    return None


def check(ctx: Context) -> list[Flag]:
    flags: list[Flag] = []
    reasons = ctx.working.reasons
    for var in ctx.working.codebook:
        if var.name not in reasons.columns or not ctx.wants([var.name]):
            continue
        column = reasons[var.name]
        code = list(column.cat.categories).index(INVALID)
        bad = (column.cat.codes.to_numpy() == code) & ctx.keep
        for row in np.flatnonzero(bad):
            text = ctx.raw_text(row, var.name)
            allowed = ""
            if var.kind.has_levels:
                allowed = f"; its answers are {', '.join(var.levels)}"
            message = (
                f"{var.name}: {text!r} is not a valid answer for a "
                f"{var.kind.label.lower()} question{allowed}."
            )
            meant = guess(var, text)
            if meant is not None:
                shown = show_number(meant) if isinstance(meant, float) else meant
                suggestion = Suggestion(Action.CORRECT, meant, f"Correct to {shown}.")
            else:
                suggestion = Suggestion(Action.SET_MISSING, None, "Set to missing.")
            flags.append(
                ctx.flag(
                    CHECK,
                    row,
                    [var.name],
                    text,
                    "error",
                    message,
                    suggestion,
                    {"kind": str(var.kind)},
                )
            )
    return flags
