"""Ranking questions: Borda points and how often each option was ranked 1st, 2nd, ...

Ranks are not averaged: an average rank hides how opinion is split and depends on how
unranked options are counted. The Borda count (de Borda 1781; METHODS.md section 1) gives an
option in position p of n options n - p points (n - 1 for first down to 0 for last) and sums
them over respondents. Partial rankings (a respondent ranks only k of the n options) follow a
rule the evaluator chooses, stated in the caption:

- ``zero``: ranked options keep their full points; unranked options get 0.
- ``average``: unranked options share equally the points of the unused positions, so every
  respondent hands out the same total n(n - 1)/2.
- ``modified``: modified Borda count (Emerson 2013): a respondent who ranks k options gives k
  points to the first, k - 1 to the second, ... 1 to the last ranked; unranked get 0.

Positions come from the order of the rank numbers a respondent gave (1, 2, 4 count as 1st,
2nd and 3rd). Ballots with a tied or impossible rank (two options ranked 2, a rank of 0 or
above n, a fraction) are left out and counted in the notes.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from core.errors import TableError
from core.tables.captions import GROUP_CAUTION, base_line, group_title, suppression_note
from core.tables.context import (
    COMPLEMENT_TEXT,
    Context,
    breakdown,
    count_cell,
    protected_groups,
    text_cell,
)
from core.tables.result import Cell, TableResult
from core.tables.suppression import suppress

RULE_TEXT = {
    "zero": "options a respondent did not rank score 0",
    "average": "options a respondent did not rank share equally the points left over",
    "modified": (
        "modified Borda count: a respondent who ranks k options gives k points to the first "
        "down to 1 for the last ranked; unranked options score 0"
    ),
}


def ordinal(p: int) -> str:
    suffix = "th" if 10 <= p % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(p % 10, "th")
    return f"{p}{suffix}"


def ballot_positions(ranks: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(positions, valid, answered) for a ballots x options array of rank numbers.

    ``positions`` holds 1..k for ranked options by the order of their rank numbers and 0 for
    unranked; ``answered`` marks ballots with at least one rank; ``valid`` those answered
    ballots without ties or impossible ranks.
    """
    ranks = np.asarray(ranks, dtype=float)
    n_opt = ranks.shape[1]
    ranked = ~np.isnan(ranks)
    answered = ranked.any(axis=1)
    with np.errstate(invalid="ignore"):
        bad_value = ranked & ((ranks < 1) | (ranks > n_opt) | (np.mod(ranks, 1) != 0))
    filled = np.where(ranked, ranks, np.inf)
    srt = np.sort(filled, axis=1)
    tie = ((srt[:, 1:] == srt[:, :-1]) & np.isfinite(srt[:, 1:])).any(axis=1)
    valid = answered & ~bad_value.any(axis=1) & ~tie
    order = np.argsort(np.argsort(filled, axis=1, kind="stable"), axis=1, kind="stable")
    positions = np.where(ranked, order + 1, 0)
    positions[~valid] = 0
    return positions, valid, answered


def borda(positions: np.ndarray, rule: str = "zero", points: tuple[float, ...] = ()) -> np.ndarray:
    """Borda points per option, summed over ballots (rows of ``positions``; 0 = unranked).

    ``points`` gives the points for 1st, 2nd, ... place (default n - 1 down to 0); it applies
    to the ``zero`` and ``average`` rules. ``modified`` always uses k down to 1.
    """
    positions = np.asarray(positions, dtype=np.int64)
    n_opt = positions.shape[1]
    scheme = np.asarray(points if points else np.arange(n_opt - 1, -1, -1), dtype=float)
    if len(scheme) != n_opt:
        raise TableError(
            f"A points scheme needs one number per place ({n_opt} places), not {len(scheme)}."
        )
    ranked = positions > 0
    k = ranked.sum(axis=1)
    if rule == "modified":
        score = np.where(ranked, k[:, None] - positions + 1, 0).astype(float)
        return score.sum(axis=0)
    score = np.where(ranked, scheme[np.maximum(positions - 1, 0)], 0.0)
    if rule == "average":
        used = score.sum(axis=1)
        left = scheme.sum() - used
        n_unranked = n_opt - k
        with np.errstate(invalid="ignore", divide="ignore"):
            share = np.where(n_unranked > 0, left / np.maximum(n_unranked, 1), 0.0)
        score = np.where(ranked, score, share[:, None])
        score[k == 0] = 0.0
    elif rule != "zero":
        raise TableError(f"Unknown rule for partial rankings {rule!r}.")
    return score.sum(axis=0)


def rank_counts(positions: np.ndarray) -> np.ndarray:
    """options x places: how many ballots put each option in each place."""
    positions = np.asarray(positions, dtype=np.int64)
    n_opt = positions.shape[1]
    out = np.zeros((n_opt, n_opt), dtype=np.int64)
    for p in range(1, n_opt + 1):
        out[:, p - 1] = (positions == p).sum(axis=0)
    return out


def ranking_table(ctx: Context, group: str) -> TableResult:
    """Borda points and rank-position counts for a ranking question (a question group)."""
    members = ctx.codebook.members(group)
    names = [m.name for m in members]
    options = [m.option or m.question or m.name for m in members]
    ranks = np.column_stack([ctx.values[n].to_numpy(dtype=float) for n in names])
    positions, valid, answered = ballot_positions(ranks)
    groups = breakdown(ctx, ctx.spec.by)
    use = valid if groups is None else valid & (groups.codes >= 0)
    pos = positions[use]
    rule = ctx.spec.borda
    n_opt = len(options)
    pts = borda(pos, rule, ctx.spec.borda_points)
    counts = rank_counts(pos)
    n_ballots = int(use.sum())
    not_ranked = n_ballots - counts.sum(axis=1)
    full = np.column_stack([counts, not_ranked])
    # Under the zero rule each option's points are a weighted sum of its place counts, so the
    # check must not let points and counts together pin down a hidden count. (Under the other
    # rules the points also depend on how many options each respondent ranked.)
    weights = None
    if rule == "zero":
        scheme = np.asarray(ctx.spec.borda_points or np.arange(n_opt - 1, -1, -1), dtype=float)
        weights = np.tile(np.append(scheme, 0.0), (n_opt, 1))
    sup = suppress(full, ctx.min_cell, row_totals=True, col_totals=True, row_weights=weights)
    order = sorted(range(len(options)), key=lambda i: (-pts[i], i))
    data: dict[str, Any] = {
        "options": [options[i] for i in order],
        "points": {options[i]: _num(pts[i]) for i in order},
        "rank_counts": {
            options[i]: {
                str(p + 1): (None if sup.cells[i, p] else int(counts[i, p])) for p in range(n_opt)
            }
            for i in order
        },
        "not_ranked": {
            options[i]: None if sup.cells[i, n_opt] else int(not_ranked[i]) for i in order
        },
        "rule": rule,
        "points_scheme": [float(x) for x in ctx.spec.borda_points]
        or list(range(n_opt - 1, -1, -1)),
        "n_ballots": n_ballots,
        "variables": dict(zip(options, names)),
    }
    if groups is not None:
        data["groups"] = groups.labels
        data["points_by_group"] = {}
        data["group_bases"] = {}
        hidden_groups = protected_groups(np.bincount(groups.codes[use], minlength=groups.size), ctx)
        for gi, g in enumerate(groups.labels):
            sel = valid & (groups.codes == gi)
            nb = int(sel.sum())
            small = bool(hidden_groups[gi])
            pg = borda(positions[sel], rule, ctx.spec.borda_points)
            data["points_by_group"][g] = {options[i]: None if small else _num(pg[i]) for i in order}
            data["group_bases"][g] = None if small else nb

    columns = ["Option", "Borda points"] + [f"Ranked {ordinal(p)}" for p in range(1, n_opt + 1)]
    columns.append("Not ranked")
    if groups is not None:
        columns += [f"Points: {g}" for g in groups.labels]
    rows: list[list[Cell]] = []
    for i in order:
        row = [text_cell(options[i]), Cell(_num(pts[i]), "number")]
        for p in range(n_opt + 1):
            row.append(count_cell(int(full[i, p]), bool(sup.cells[i, p]), ctx))
        if groups is not None:
            for g in groups.labels:
                v = data["points_by_group"][g][options[i]]
                row.append(
                    Cell(
                        v,
                        "number",
                        suppressed=v is None,
                        text=COMPLEMENT_TEXT if v is None else None,
                    )
                )
        rows.append(row)
    total = [text_cell("Respondents"), Cell(None, "text")]
    for p in range(n_opt):
        total.append(count_cell(int(full[:, p].sum()), bool(sup.col_totals[p]), ctx))
    total += [Cell(None, "text")] * (len(columns) - len(total))
    rows.append(total)
    roles = ["level"] * (len(rows) - 1) + ["total"]

    notes = ctx.notes
    n_all = ctx.treated.n_all
    n_invalid = int((answered & ~valid).sum())
    partial = int((valid & ((positions > 0).sum(axis=1) < n_opt)).sum())
    notes.missing.append(
        f"{n_all - int(answered.sum()):,} of {n_all:,} respondents ranked no option."
    )
    if n_invalid:
        notes.missing.append(
            f"{n_invalid:,} ranking{'s' if n_invalid != 1 else ''} with a tied or impossible "
            "rank (two options in one place, or a rank outside 1 to "
            f"{n_opt}) {'are' if n_invalid != 1 else 'is'} left out."
        )
    scheme = data["points_scheme"]
    scheme_text = ", ".join(f"{x:g}" for x in scheme)
    if rule == "modified":
        notes.method.append(f"Borda count, {RULE_TEXT[rule]}.")
    else:
        notes.method.append(
            f"Borda count: points for 1st to {ordinal(n_opt)} place are {scheme_text}; "
            f"{RULE_TEXT[rule]}."
        )
    notes.method.append(
        f"{partial:,} respondent{'s' if partial != 1 else ''} ranked only some of the options."
        if partial
        else "Every respondent counted ranked every option."
    )
    notes.method.append(
        "Ranks are not averaged: an average rank hides how opinion is split and depends on how "
        "unranked options are counted."
    )
    notes.suppression.append(suppression_note(ctx.min_cell, sup.primary, sup.secondary))
    if groups is not None:
        notes.cautions.append(GROUP_CAUTION)
    return TableResult(
        spec=ctx.spec,
        table_type="ranking",
        kind="ranking",
        title=group_title(group, [m.question for m in members]),
        base=base_line(n_ballots, n_all, "Respondents who ranked at least one option"),
        n_valid=n_ballots,
        n_missing=n_all - n_ballots,
        columns=columns,
        rows=rows,
        row_roles=roles,
        data=data,
        wave=ctx.wave,
        instrument=ctx.instrument,
    )


def _num(v: float) -> float | int:
    v = float(v)
    return int(v) if v.is_integer() else round(v, 6)
