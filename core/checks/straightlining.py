"""Straight-lining: the same answer on every item of a rating battery.

Simple non-differentiation (all answers identical) on a battery of at least k items (default
5) is flagged. Each flag also reports indicators compared by Kim et al. (2019, *Social Science
Computer Review* 37(2)): the within-respondent standard deviation of the answers (scale
positions 1..L), "longstring" (the longest run of identical consecutive answers; Johnson
2005) and the share of answers equal to the respondent's most frequent answer
(METHODS.md §15).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from core.checks.flag import Context, Flag, Suggestion, show_number
from core.codebook import Variable
from core.kinds import Kind
from core.ledger import Action

CHECK = "straightlining"


@dataclass(frozen=True)
class Indicators:
    """Per-respondent straight-lining indicators (arrays, NaN where nothing was answered)."""

    sd: np.ndarray  # population SD (ddof=0)
    sd_sample: np.ndarray  # sample SD (ddof=1), NaN with fewer than 2 answers
    longstring: np.ndarray
    modal_share: np.ndarray
    answered: np.ndarray
    identical: np.ndarray  # every answered item has the same answer


def indicators(answers: np.ndarray) -> Indicators:
    """Indicators of a respondents x items array of scale positions (NaN = no answer)."""
    a = np.asarray(answers, dtype=float)
    if a.ndim == 1:
        a = a[None, :]
    n, k = a.shape
    present = ~np.isnan(a)
    answered = present.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(answered > 0, np.nansum(a, axis=1) / np.maximum(answered, 1), np.nan)
        sq = np.nansum((a - mean[:, None]) ** 2, axis=1)
        sd = np.where(answered > 0, np.sqrt(sq / np.maximum(answered, 1)), np.nan)
        sd1 = np.where(answered > 1, np.sqrt(sq / np.maximum(answered - 1, 1)), np.nan)
    # Longest run of equal consecutive answers; a blank breaks the run.
    run = np.where(present[:, 0], 1, 0)
    longest = run.copy()
    for j in range(1, k):
        same = present[:, j] & present[:, j - 1] & (a[:, j] == a[:, j - 1])
        run = np.where(same, run + 1, np.where(present[:, j], 1, 0))
        longest = np.maximum(longest, run)
    # Share of answers equal to the most frequent answer.
    levels = np.unique(a[present]) if present.any() else np.array([])
    best = np.zeros(n)
    for level in levels:
        best = np.maximum(best, (a == level).sum(axis=1))
    with np.errstate(invalid="ignore", divide="ignore"):
        modal = np.where(answered > 0, best / np.maximum(answered, 1), np.nan)
    lo = np.nanmin(np.where(present, a, np.inf), axis=1)
    hi = np.nanmax(np.where(present, a, -np.inf), axis=1)
    identical = (answered > 0) & (lo == hi)
    return Indicators(sd, sd1, longest.astype(float), modal, answered, identical)


def batteries(codebook, min_items: int = 2) -> dict[str, list[Variable]]:  # noqa: ANN001
    """Rating-scale batteries with at least ``min_items`` items sharing one set of levels.

    Codebook groups come first. Rating items without a group whose names share a stem
    (``agree_1`` ... ``agree_8``) and whose levels are the same form a battery named after
    the stem, so checks work before the evaluator has grouped the items.
    """
    out: dict[str, list[Variable]] = {}
    for group, members in codebook.groups().items():
        items = [m for m in members if m.kind is Kind.LIKERT and m.levels]
        if not items:
            continue
        levels = items[0].levels
        items = [m for m in items if m.levels == levels]
        if len(items) >= min_items:
            out[group] = items
    implicit: dict[tuple[str, tuple[str, ...]], list[Variable]] = {}
    for var in codebook:
        if var.kind is not Kind.LIKERT or var.group or not var.levels:
            continue
        stem = _STEM.sub("", var.name)
        if stem and stem != var.name:
            implicit.setdefault((stem, var.levels), []).append(var)
    for (stem, _), items in implicit.items():
        if len(items) >= min_items and stem not in out:
            out[stem] = items
    return out


_STEM = re.compile(r"[_\-. ]*(?:item)?\d+[a-z]?$", re.IGNORECASE)


def battery_items(codebook, group: str) -> list[Variable]:  # noqa: ANN001
    """The items of a battery by name (a codebook group or an implicit stem battery)."""
    found = batteries(codebook, 1).get(group)
    if found:
        return found
    return list(codebook.members(group))  # raises a plain error for an unknown group


def positions(ctx: Context, items: list[Variable]) -> np.ndarray:
    """Respondents x items array of scale positions 1..L (NaN missing or excluded)."""
    values = ctx.working.values
    cols = []
    for var in items:
        codes = values[var.name].cat.codes.to_numpy().astype(float)
        codes[codes < 0] = np.nan
        cols.append(codes + 1)
    out = np.column_stack(cols)
    out[~ctx.keep] = np.nan
    return out


def check(ctx: Context) -> list[Flag]:
    k = ctx.settings.straightline_min_items
    flags: list[Flag] = []
    for group, items in batteries(ctx.working.codebook, k).items():
        names = [v.name for v in items]
        if not ctx.wants(names):
            continue
        a = positions(ctx, items)
        ind = indicators(a)
        hit = ind.identical & (ind.answered >= k)
        levels = items[0].levels
        for row in np.flatnonzero(hit):
            first = a[row][~np.isnan(a[row])][0]
            level = levels[int(first) - 1]
            n_ans = int(ind.answered[row])
            of = (
                f"all {n_ans}" if n_ans == len(items) else f"all {n_ans} answered (of {len(items)})"
            )
            message = (
                f"Gave the same answer, {level!r}, to {of} items of the battery {group} "
                f"(within-respondent SD {show_number(float(ind.sd[row]))}, longest run "
                f"{int(ind.longstring[row])}, modal share {ind.modal_share[row]:.0%})."
            )
            flags.append(
                ctx.flag(
                    CHECK,
                    row,
                    names,
                    level,
                    "warning",
                    message,
                    Suggestion(
                        Action.EXCLUDE,
                        None,
                        "Look at the respondent's other answers first (speed, comments, "
                        "other batteries); exclude only if they confirm careless answering.",
                    ),
                    {
                        "group": group,
                        "sd": float(ind.sd[row]),
                        "sd_sample": float(ind.sd_sample[row]),
                        "longstring": int(ind.longstring[row]),
                        "modal_share": float(ind.modal_share[row]),
                    },
                )
            )
    return flags
