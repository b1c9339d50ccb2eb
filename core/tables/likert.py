"""Rating-scale (Likert) items and batteries, reported as the ordered categories they are.

For each item: the distribution, % agreeing (the top two categories), % disagreeing (the
bottom two), % neutral (the middle category of an odd-length scale) and the median category.
Scales of three categories use the single top and bottom category. No mean by default: the
categories are ordered but not equally spaced (Jamieson 2004; METHODS.md section 14); a
"mean of codes" is given only on request, and then its caption says what it assumes.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from core.codebook import Variable
from core.errors import TableError
from core.tables.captions import (
    base_line,
    common_stem,
    group_title,
    item_label,
    suppression_note,
)
from core.tables.context import (
    Context,
    breakdown,
    count_cell,
    level_codes,
    pct,
    pct_cell,
    protected_groups,
    text_cell,
)
from core.tables.crosstab import partial_hidden
from core.tables.frequency import frequency_table
from core.tables.result import Cell, TableResult
from core.tables.suppression import suppress

MEAN_NOTE = (
    "The mean of codes numbers the answers 1, 2, 3, … and averages them. It treats the "
    "categories as equally spaced, which they are not: the step from 'Agree' to 'Strongly "
    "agree' need not equal the step from 'Neutral' to 'Agree'. Prefer the percentages and the "
    "median category."
)
NEGATIVE_NOTE = (
    "Negatively worded items (marked) are worded so that agreeing is the unfavourable "
    "answer; read their % agreeing the other way round."
)


def scale_parts(n_levels: int) -> tuple[list[int], list[int], int | None]:
    """(top, bottom, neutral) level positions: top/bottom two, or one on a 3-point scale."""
    width = 2 if n_levels >= 4 else 1
    top = list(range(n_levels - width, n_levels))
    bottom = list(range(width))
    neutral = n_levels // 2 if n_levels % 2 == 1 and n_levels >= 3 else None
    return top, bottom, neutral


def median_level(levels: list[str], counts: np.ndarray) -> str | None:
    """The category where the cumulative share first reaches half of those who answered."""
    n = counts.sum()
    if n == 0:
        return None
    cum = np.cumsum(counts)
    return levels[int(np.searchsorted(cum, n / 2.0))]


def summarise(levels: list[str], counts: np.ndarray, hidden: np.ndarray) -> dict[str, Any]:
    """Agree/disagree/neutral percentages and the median category of one item or group."""
    counts = np.asarray(counts)
    n = int(counts.sum())
    top, bottom, neutral = scale_parts(len(levels))

    def share(idx: list[int]) -> float | None:
        if partial_hidden(hidden, idx):
            return None  # it would reveal part of a hidden count
        return pct(counts[idx].sum(), n)

    return {
        "agree_pct": share(top),
        "disagree_pct": share(bottom),
        "neutral_pct": share([neutral]) if neutral is not None else None,
        "neutral_level": levels[neutral] if neutral is not None else None,
        "median_level": median_level(levels, counts),
    }


def mean_of_codes(counts: np.ndarray) -> float | None:
    counts = np.asarray(counts, dtype=float)
    n = counts.sum()
    return float((counts * np.arange(1, len(counts) + 1)).sum() / n) if n else None


def scale_summary_by_group(
    var: Variable, counts: np.ndarray, hidden: np.ndarray, groups: list[str]
) -> dict[str, Any]:
    """Per-group agree/disagree/neutral percentages for a rating scale cross-tabulation."""
    levels = list(var.levels)
    out: dict[str, Any] = {
        "agree_pct": {},
        "disagree_pct": {},
        "neutral_pct": {},
        "median_level": {},
    }
    for gi, g in enumerate(groups):
        s = summarise(levels, counts[gi], hidden[gi])
        for key in ("agree_pct", "disagree_pct", "neutral_pct", "median_level"):
            out[key][g] = s[key]
    out["neutral_level"] = summarise(levels, counts.sum(axis=0), np.zeros(len(levels), bool))[
        "neutral_level"
    ]
    out["keying"] = var.keying
    return out


def likert_table(ctx: Context, name: str) -> TableResult:
    """Distribution of one rating-scale item, with % agreeing / disagreeing / neutral."""
    var = ctx.codebook[name]
    result = frequency_table(ctx, name)
    levels = list(var.levels)
    data = result.data
    # Summaries always use the codebook order, even if the display was sorted.
    codes = level_codes(var, ctx.values[name])
    counts = np.bincount(codes[codes >= 0], minlength=len(levels))
    hidden = np.array([data["counts"][lv] is None for lv in levels])
    summary = summarise(levels, counts, hidden)
    data.update(summary)
    data["keying"] = var.keying
    top, bottom, _ = scale_parts(len(levels))
    width = len(result.columns)
    extra = [
        (f"% agreeing (top {len(top)})", summary["agree_pct"]),
        ("% neutral", summary["neutral_pct"]),
        (f"% disagreeing (bottom {len(bottom)})", summary["disagree_pct"]),
    ]
    for label, value in extra:
        if label == "% neutral" and summary["neutral_level"] is None:
            continue
        result.rows.append(
            _pad([text_cell(label), Cell(None, "text"), pct_cell(value, value is None, ctx)], width)
        )
        result.row_roles.append("stat")
    result.rows.append(
        _pad(
            [
                text_cell("Median answer"),
                Cell(None, "text"),
                text_cell(summary["median_level"] or ""),
            ],
            width,
        )
    )
    result.row_roles.append("stat")
    if ctx.spec.show_mean:
        m = mean_of_codes(counts)
        data["mean_of_codes"] = m
        result.rows.append(
            _pad(
                [
                    text_cell("Mean of codes (1 = first answer)"),
                    Cell(None, "text"),
                    Cell(m, "number"),
                ],
                width,
            )
        )
        result.row_roles.append("stat")
        ctx.notes.method.append(MEAN_NOTE)
    result.table_type = "likert"
    if var.keying == "negative":
        result.title += " (negatively worded)"
        ctx.notes.method.append(NEGATIVE_NOTE)
    ctx.notes.method.append(
        f"% agreeing counts the top {len(top)} answers ({', '.join(levels[i] for i in top)}); "
        f"% disagreeing the bottom {len(bottom)} ({', '.join(levels[i] for i in bottom)})."
    )
    return result


def _pad(row: list[Cell], width: int) -> list[Cell]:
    return row + [Cell(None, "text")] * (width - len(row))


def battery_table(ctx: Context, group: str) -> TableResult:
    """One row per item of a rating-scale battery: distribution and % agreeing."""
    members = ctx.codebook.members(group)
    levels = list(members[0].levels)
    odd = [m.name for m in members if list(m.levels) != levels]
    if odd:
        raise TableError(
            f"The items of {group} do not share one answer scale ({', '.join(odd)} differ "
            "from the first item), so they cannot be shown in one table. Fix the codebook or "
            "tabulate the items one by one."
        )
    names = [m.name for m in members]
    stem = common_stem([m.question for m in members])
    counts = np.zeros((len(names), len(levels)), dtype=np.int64)
    for i, name in enumerate(names):
        codes = level_codes(members[i], ctx.values[name])
        counts[i] = np.bincount(codes[codes >= 0], minlength=len(levels))
    bases = counts.sum(axis=1)
    sup = suppress(counts, ctx.min_cell, row_totals=True, col_totals=False)
    summaries = [summarise(levels, counts[i], sup.cells[i]) for i in range(len(names))]
    order = list(range(len(names)))
    if ctx.spec.sort == "frequency":
        order.sort(key=lambda i: -(summaries[i]["agree_pct"] or -1.0))
    top, bottom, neutral = scale_parts(len(levels))
    hidden_row = sup.row_totals
    data: dict[str, Any] = {
        "items": [names[i] for i in order],
        "item_labels": {m.name: item_label(m.question, stem, m.name) for m in members},
        "levels": levels,
        "counts": {},
        "percents": {},
        "agree_pct": {},
        "disagree_pct": {},
        "neutral_pct": {},
        "median_level": {},
        "neutral_level": levels[neutral] if neutral is not None else None,
        "keying": {m.name: m.keying for m in members},
        "bases": {},
    }
    for i, name in enumerate(names):
        data["counts"][name] = {
            lv: None if sup.cells[i, j] else int(counts[i, j]) for j, lv in enumerate(levels)
        }
        data["percents"][name] = {
            lv: None if sup.cells[i, j] or hidden_row[i] else pct(counts[i, j], bases[i])
            for j, lv in enumerate(levels)
        }
        for key in ("agree_pct", "disagree_pct", "neutral_pct", "median_level"):
            value = summaries[i][key]
            data[key][name] = None if hidden_row[i] and key != "median_level" else value
        data["bases"][name] = None if hidden_row[i] else int(bases[i])
    if ctx.spec.show_mean:
        data["mean_of_codes"] = {n: mean_of_codes(counts[i]) for i, n in enumerate(names)}

    columns = ["Item", "n"] + [f"{lv} %" for lv in levels]
    columns += [f"% agreeing (top {len(top)})"]
    if neutral is not None:
        columns.append("% neutral")
    columns += [f"% disagreeing (bottom {len(bottom)})", "Median answer"]
    if ctx.spec.show_mean:
        columns.append("Mean of codes")
    rows: list[list[Cell]] = []
    any_negative = False
    for i in order:
        m = members[i]
        label = data["item_labels"][m.name]
        if m.keying == "negative":
            label += " (negatively worded)"
            any_negative = True
        row = [text_cell(label), count_cell(int(bases[i]), bool(hidden_row[i]), ctx)]
        for lv in levels:
            v = data["percents"][m.name][lv]
            row.append(_pct_or_dash(v, ctx, int(bases[i])))
        for key in ("agree_pct", "neutral_pct", "disagree_pct"):
            if key == "neutral_pct" and neutral is None:
                continue
            row.append(_pct_or_dash(data[key][m.name], ctx, int(bases[i])))
        row.append(text_cell(data["median_level"][m.name] or ""))
        if ctx.spec.show_mean:
            row.append(Cell(data["mean_of_codes"][m.name], "number"))
        rows.append(row)

    # A battery by group: the same summaries per group, as extra data.
    groups = breakdown(ctx, ctx.spec.by)
    if groups is not None:
        data["groups"] = groups.labels
        data["group_bases"] = {}
        data["agree_pct_by_group"] = {g: {} for g in groups.labels}
        data["disagree_pct_by_group"] = {g: {} for g in groups.labels}
        sizes = np.bincount(groups.codes[groups.codes >= 0], minlength=groups.size)
        hidden_groups = protected_groups(sizes, ctx)
        for gi, g in enumerate(groups.labels):
            in_group = groups.codes == gi
            for i, name in enumerate(names):
                codes = level_codes(members[i], ctx.values[name])[in_group]
                cg = np.bincount(codes[codes >= 0], minlength=len(levels))
                sg = suppress(
                    cg, ctx.min_cell, row_totals=False, col_totals=True, protect_totals=True
                )
                small = bool(hidden_groups[gi]) or 0 < cg.sum() < ctx.min_cell
                s = summarise(levels, cg, sg.cells[:, 0])
                data["agree_pct_by_group"][g][name] = None if small else s["agree_pct"]
                data["disagree_pct_by_group"][g][name] = None if small else s["disagree_pct"]
            data["group_bases"][g] = None if hidden_groups[gi] else int(in_group.sum())

    notes = ctx.notes
    n_all = ctx.treated.n_all
    n_missing_items = {name: int(n_all - bases[i]) for i, name in enumerate(names)}
    worst = max(n_missing_items.values()) if n_missing_items else 0
    notes.missing.append(
        f"Each item counts those who answered it (from {int(bases.min()):,} to "
        f"{int(bases.max()):,} of {n_all:,}); up to {worst:,} did not answer an item."
        if ctx.treated.treatment != "complete"
        else f"Only respondents who answered every item are counted ({int(bases.max()):,} of "
        f"{n_all:,})."
    )
    notes.suppression.append(suppression_note(ctx.min_cell, sup.primary, sup.secondary))
    if sup.primary:
        notes.suppression.append("– marks a percentage hidden with its small count.")
    notes.method.append(
        f"% agreeing counts the top {len(top)} answers ({', '.join(levels[i] for i in top)}); "
        f"% disagreeing the bottom {len(bottom)} ({', '.join(levels[i] for i in bottom)})."
    )
    if ctx.spec.sort == "frequency":
        notes.method.append("Items are sorted by % agreeing, highest first.")
    if any_negative:
        notes.method.append(NEGATIVE_NOTE)
    if ctx.spec.show_mean:
        notes.method.append(MEAN_NOTE)
    n_valid = int(bases.min()) if len(bases) else 0
    return TableResult(
        spec=ctx.spec,
        table_type="battery",
        kind="likert",
        title=group_title(group, [m.question for m in members]),
        base=base_line(
            int(bases.max()) if len(bases) else 0,
            n_all,
            "Respondents who answered (most answered item)",
        ),
        n_valid=n_valid,
        n_missing=n_all - n_valid,
        columns=columns,
        rows=rows,
        row_roles=["level"] * len(rows),
        data=data,
        wave=ctx.wave,
        instrument=ctx.instrument,
    )


def _pct_or_dash(v: float | None, ctx: Context, base: int) -> Cell:
    if v is None:
        return Cell(None, "percent", suppressed=True, text="–")
    return pct_cell(v, False, ctx, base)
