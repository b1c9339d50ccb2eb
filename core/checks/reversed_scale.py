"""Reversed scale: answers on a battery that contradict themselves or the respondent's comment.

Two signs, each on one rating battery:

1. *Agreeing with both kinds.* The battery has positively and negatively worded items (codebook
   keying). A respondent whose mean scale position (0 = first level, 1 = last) is at or beyond
   the agreement cut-off (default 0.75, "Agree" on a 5-point scale) on both kinds, or at or
   below 1 - cut-off on both, contradicts themselves: one cannot find the course both
   manageable and unmanageable.
2. *Ratings against the comment.* The respondent's open comments are clearly positive (at
   least two positive tone words, no negative one; :mod:`core.checks.tone_words`) while their
   battery answers, with negatively worded items turned round, are clearly negative (mean at
   or below 1 - cut-off), or the other way round. This is the typical trace of a respondent
   who read the scale the wrong way round; the suggestion is to reverse their scale on the
   battery.

The cut-offs are rules of thumb of our own (common practice, no source).
"""

from __future__ import annotations

import numpy as np

from core.checks.flag import Context, Flag, Suggestion
from core.checks.straightlining import batteries, positions
from core.checks.tone_words import tone
from core.codebook import Variable
from core.kinds import Kind
from core.ledger import Action

CHECK = "reversed_scale"
MIN_TONE_WORDS = 2
_RATING_WORDS = ("agree", "satisf", "true", "like")


def _is_rating(items: list[Variable]) -> bool:
    """Batteries whose answers carry an opinion (agreement, satisfaction) or are keyed."""
    if any(v.keying for v in items):
        return True
    levels = " ".join(items[0].levels).lower()
    return any(w in levels for w in _RATING_WORDS)


def comment_variables(codebook) -> list[Variable]:  # noqa: ANN001
    return [v for v in codebook if v.kind is Kind.TEXT]


def check(ctx: Context) -> list[Flag]:
    cut = ctx.settings.agree_cut
    flags: list[Flag] = []
    comments = [
        v for v in comment_variables(ctx.working.codebook) if v.name in ctx.working.values.columns
    ]
    tones = None
    for group, items in batteries(ctx.working.codebook, 2).items():
        if not _is_rating(items):
            continue
        names = [v.name for v in items]
        if not ctx.wants(names + [c.name for c in comments]):
            continue
        a = positions(ctx, items)
        levels = len(items[0].levels)
        p = (a - 1) / max(levels - 1, 1)  # 0 = first level, 1 = last
        negative = np.array([v.keying == "negative" for v in items])
        reverse_action = Suggestion(
            Action.REVERSE,
            group,
            f"Reverse this respondent's scale on the battery {group}, if the source "
            "confirms the respondent read the scale the wrong way round.",
        )
        if negative.any() and (~negative).any():
            with np.errstate(invalid="ignore"):
                pos_mean = _row_mean(np.where(negative, np.nan, p))
                neg_mean = _row_mean(np.where(negative, p, np.nan))
                both_agree = (pos_mean >= cut) & (neg_mean >= cut)
                both_disagree = (pos_mean <= 1 - cut) & (neg_mean <= 1 - cut)
            worded = ", ".join(v.name for v in items if v.keying == "negative")
            for row in np.flatnonzero(both_agree | both_disagree):
                way = "agrees" if both_agree[row] else "disagrees"
                message = (
                    f"On the battery {group} the respondent {way} with both the positively "
                    f"and the negatively worded items ({worded} "
                    "are negatively worded): the answers contradict each other."
                )
                flags.append(
                    ctx.flag(
                        CHECK,
                        row,
                        names,
                        way,
                        "warning",
                        message,
                        Suggestion(
                            None,
                            group,
                            "Check the source. If the answers are careless, set this "
                            "battery's answers to missing or exclude the respondent; if the "
                            "scale was read the wrong way round, reverse it on this battery.",
                        ),
                        {
                            "group": group,
                            "positive_mean": float(pos_mean[row]),
                            "negative_mean": float(neg_mean[row]),
                            "sign": "both_kinds",
                        },
                    )
                )
        if not comments:
            continue
        if tones is None:
            # Reading every comment is the slow part; cached while no comment is edited.
            every = ctx.cached(
                "tone",
                [c.name for c in comments],
                lambda: _comment_tones(ctx, comments, everyone=True),
            )
            tones = {r: t for r, t in every.items() if ctx.keep[r]}
        keyed = np.where(negative, 1 - p, p)
        with np.errstate(invalid="ignore"):
            net = _row_mean(keyed)
        for row, (t, texts, used) in tones.items():
            if np.isnan(net[row]):
                continue
            positive_comment = t.positive >= MIN_TONE_WORDS and t.negative == 0
            negative_comment = t.negative >= MIN_TONE_WORDS and t.positive == 0
            if positive_comment and net[row] <= 1 - cut:
                mood, ratings = "clearly positive", "clearly negative"
            elif negative_comment and net[row] >= cut:
                mood, ratings = "clearly negative", "clearly positive"
            else:
                continue
            turned = " once negatively worded items are turned round" if negative.any() else ""
            words = ", ".join(repr(w) for w in t.words[:5])
            message = (
                f"The respondent's comment is {mood} ({words}) but their answers on the "
                f"battery {group} are {ratings}{turned}: they may have read the scale the "
                "wrong way round."
            )
            flags.append(
                ctx.flag(
                    CHECK,
                    row,
                    names + used,
                    texts,
                    "warning",
                    message,
                    reverse_action,
                    {
                        "group": group,
                        "net_position": float(net[row]),
                        "tone": t.score,
                        "tone_words": list(t.words),
                        "sign": "comment",
                    },
                )
            )
    return flags


def _row_mean(a: np.ndarray) -> np.ndarray:
    """Mean of each row over answered cells; NaN (no warning) when a row has none."""
    present = ~np.isnan(a)
    count = present.sum(axis=1)
    total = np.where(present, a, 0.0).sum(axis=1)
    out = np.full(len(a), np.nan)
    np.divide(total, count, out=out, where=count > 0)
    return out


def _comment_tones(ctx: Context, comments: list[Variable], everyone: bool = False) -> dict:
    """Row -> (tone, comment text shown, comment variables with words), rows with words
    (every row when ``everyone``, else rows not excluded)."""
    values = ctx.working.values
    texts = {c.name: values[c.name].to_numpy(dtype=object) for c in comments}
    out = {}
    rows = np.arange(ctx.working.n_rows) if everyone else np.flatnonzero(ctx.keep)
    for row in rows:
        parts, used = [], []
        for name, col in texts.items():
            text = col[row]
            if isinstance(text, str) and text:
                parts.append(text)
                used.append(name)
        if not parts:
            continue
        t = tone(" . ".join(parts))
        if t.positive or t.negative:
            out[int(row)] = (t, " | ".join(parts)[:200], used)
    return out
