"""Frequency tables for categorical, rating-scale and ordered questions.

For each answer: the count, the percentage of those who answered (or, with missing shown as
rows, of all respondents), optionally the percentage of all respondents, and for ordered
kinds the cumulative percentage. Missing answers are listed by reason at the foot.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from core.tables.captions import base_line, missing_sentence, reason_text, suppression_note
from core.tables.context import (
    Context,
    count_cell,
    label_of,
    level_codes,
    pct,
    pct_cell,
    text_cell,
)
from core.tables.result import Cell, TableResult
from core.tables.suppression import Suppression, suppress
from core.treatments import COMBINED, INCOMPLETE, reason_counts


@dataclass
class Counted:
    """Counts of one variable with levels, before display (shared with rating scales)."""

    levels: list[str]  # display order
    counts: np.ndarray  # per display level
    missing: dict[str, int]
    n_valid: int
    n_rows: int  # rows in the treated table (answered + missing shown)
    ordered: bool
    sup: Suppression
    sup_missing: Suppression


def count_levels(ctx: Context, name: str) -> Counted:
    var = ctx.codebook[name]
    codes = level_codes(var, ctx.values[name])
    counts = np.bincount(codes[codes >= 0], minlength=len(var.levels))
    levels = list(var.levels)
    if ctx.spec.sort == "frequency" and not var.kind.ordered:
        order = np.argsort(-counts, kind="stable")
        levels = [levels[i] for i in order]
        counts = counts[order]
    missing = reason_counts(ctx.reasons[name])
    if ctx.treated.n_dropped:
        missing[INCOMPLETE] = ctx.treated.n_dropped
    if ctx.treated.missing_rows == "combined" and missing:
        missing = {COMBINED: sum(missing.values())}
    k = ctx.min_cell
    sup = suppress(counts, k, row_totals=False, col_totals=True, protect_totals=False)
    miss_counts = np.array(list(missing.values()), dtype=float)
    sup_missing = suppress(miss_counts, k, row_totals=False, col_totals=True, protect_totals=False)
    return Counted(
        levels=levels,
        counts=counts,
        missing=missing,
        n_valid=int(counts.sum()),
        n_rows=len(codes),
        ordered=var.kind.ordered,
        sup=sup,
        sup_missing=sup_missing,
    )


def frequency_table(ctx: Context, name: str) -> TableResult:
    """A one-way frequency table of ``name`` (a categorical, rating-scale or ordered item)."""
    var = ctx.codebook[name]
    c = count_levels(ctx, name)
    show_missing = ctx.treated.show_missing
    n_all = ctx.treated.n_all
    base = c.n_rows if show_missing else c.n_valid
    hidden = c.sup.cells[:, 0]
    counts_d = {lv: (None if h else int(n)) for lv, n, h in zip(c.levels, c.counts, hidden)}
    pcts_d = {lv: (None if h else pct(n, base)) for lv, n, h in zip(c.levels, c.counts, hidden)}
    data = {
        "levels": c.levels,
        "counts": counts_d,
        "percents": pcts_d,
        "missing": {
            r: (None if h else n) for (r, n), h in zip(c.missing.items(), c.sup_missing.cells[:, 0])
        },
        "ordered": c.ordered,
        "base": base,
        "percent_base": "all respondents" if show_missing else "those who answered",
    }
    pct_header = "% of all respondents" if show_missing else "% of those who answered"
    columns = ["Answer", "Count", pct_header]
    with_all = ctx.spec.pct_of_all and not show_missing
    with_cum = c.ordered and not show_missing
    if with_all:
        columns.append("% of all respondents")
        data["pct_of_all"] = {
            lv: (None if h else pct(n, n_all)) for lv, n, h in zip(c.levels, c.counts, hidden)
        }
    if with_cum:
        columns.append("Cumulative %")
        cum = np.cumsum(c.counts)
        # A running total reveals part of the hidden counts when it covers some of them but
        # not all (their sum is known anyway from the total): hide it exactly then.
        before = np.cumsum(hidden)
        cum_hidden = (before > 0) & (before < hidden.sum())
        data["cumulative"] = {
            lv: (None if h else pct(x, c.n_valid)) for lv, x, h in zip(c.levels, cum, cum_hidden)
        }
    rows: list[list[Cell]] = []
    roles: list[str] = []
    for i, lv in enumerate(c.levels):
        h = bool(hidden[i])
        row = [
            text_cell(lv),
            count_cell(int(c.counts[i]), h, ctx),
            pct_cell(pcts_d[lv], h, ctx, base),
        ]
        if with_all:
            row.append(pct_cell(data["pct_of_all"][lv], h, ctx, n_all))
        if with_cum:
            cv = data["cumulative"][lv]
            row.append(pct_cell(cv, cv is None, ctx, c.n_valid))
        rows.append(row)
        roles.append("level")
    width = len(columns)
    total_pct = pct_cell(pct(c.n_valid, base), False, ctx)
    rows.append(_pad([text_cell("Total answered"), Cell(c.n_valid, "count"), total_pct], width))
    roles.append("total")
    for (reason, n), h in zip(c.missing.items(), c.sup_missing.cells[:, 0]):
        row = [text_cell(reason_text(reason)), count_cell(n, bool(h), ctx)]
        row.append(pct_cell(pct(n, base), bool(h), ctx) if show_missing else Cell(None, "text"))
        rows.append(_pad(row, width))
        roles.append("missing")
    if c.missing:
        rows.append(
            _pad(
                [
                    text_cell("All respondents"),
                    Cell(n_all, "count"),
                    pct_cell(100.0, False, ctx) if show_missing else Cell(None, "text"),
                ],
                width,
            )
        )
        roles.append("total")

    label = label_of(ctx, name)
    ctx.notes.missing.append(missing_sentence(var.name, c.missing, n_all))
    primary = c.sup.primary + c.sup_missing.primary
    secondary = c.sup.secondary + c.sup_missing.secondary
    ctx.notes.suppression.append(suppression_note(ctx.min_cell, primary, secondary))
    if 0 < base < ctx.unstable_base:
        ctx.notes.cautions.append(
            f"Only {base} people are counted: percentages of so few people can change a lot "
            "with one or two answers."
        )
    who = "All respondents" if show_missing else "Respondents who answered"
    return TableResult(
        spec=ctx.spec,
        table_type="frequency",
        kind=var.kind.value,
        title=label,
        base=base_line(base if not show_missing else c.n_rows, n_all, who),
        n_valid=c.n_valid,
        n_missing=n_all - c.n_valid,
        columns=columns,
        rows=rows,
        row_roles=roles,
        data=data,
        wave=ctx.wave,
        instrument=ctx.instrument,
    )


def _pad(row: list[Cell], width: int) -> list[Cell]:
    return row + [Cell(None, "text")] * (width - len(row))
