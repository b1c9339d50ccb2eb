"""Choose-all-that-apply questions: who chose each option, and each option's share of choices.

Two percentages answer two questions. "% of respondents" (base: those who answered the
question) says how common an option is; these add up to more than 100% because people pick
several. "% of all choices" says what share of all ticks went to an option and adds to 100%.
Both storages are read: one delimited column ("Transportation; Childcare") or one column per
option (a question group of 0/1 columns).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from core.codebook import Variable
from core.errors import TableError
from core.tables.captions import (
    GROUP_CAUTION,
    base_line,
    group_title,
    short_title,
    suppression_note,
    unstable_note,
)
from core.tables.context import (
    Context,
    breakdown,
    count_cell,
    pct,
    pct_cell,
    protected_groups,
    text_cell,
)
from core.tables.result import Cell, TableResult
from core.tables.suppression import suppress


def indicators(ctx: Context, name: str) -> tuple[list[str], np.ndarray, np.ndarray, list[Variable]]:
    """(options, chosen matrix respondents x options, answered mask, member variables)."""
    var = ctx.codebook.get(name)
    if var is not None and var.delimiter:
        options = list(var.levels)
        values = ctx.values[name]
        answered = ctx.reasons[name].isna().to_numpy()
        # Few distinct combinations repeat many times: decide each combination once.
        codes, uniques = pd.factorize(values.where(answered, None), use_na_sentinel=True)
        table = np.zeros((len(uniques) + 1, len(options)), dtype=bool)
        pos = {o: j for j, o in enumerate(options)}
        for u, combo in enumerate(uniques):
            for o in combo or ():
                if o in pos:
                    table[u, pos[o]] = True
        chosen = table[np.where(codes >= 0, codes, len(uniques))]
        return options, chosen, answered, [var]
    members = ctx.codebook.members(name if var is None else (var.group or name))
    members = [m for m in members if m.name in ctx.values.columns]
    if not members:
        raise TableError(f"{name} has no data in this wave.")
    options = [m.option or m.question or m.name for m in members]
    vals = np.column_stack([ctx.values[m.name].to_numpy(dtype=float) for m in members])
    answered = np.logical_or.reduce([ctx.reasons[m.name].isna().to_numpy() for m in members])
    chosen = (vals == 1.0) & answered[:, None]
    return options, chosen, answered, members


def multiselect_table(ctx: Context, name: str) -> TableResult:
    """% of respondents choosing each option (base: those who answered) and % of choices."""
    options, chosen, answered, members = indicators(ctx, name)
    groups = breakdown(ctx, ctx.spec.by)
    use = answered if groups is None else answered & (groups.codes >= 0)
    counts = chosen[use].sum(axis=0).astype(np.int64)
    base = int(use.sum())
    total_choices = int(counts.sum())
    n_all = ctx.treated.n_all
    data: dict[str, Any] = {"options": options, "base": base, "total_choices": total_choices}
    notes = ctx.notes
    unstable: list[str] = []
    if groups is None:
        sup = suppress(
            counts, ctx.min_cell, row_totals=False, col_totals=True, protect_totals=False
        )
        hidden = sup.cells[:, 0]
        data["counts"] = {o: None if h else int(n) for o, n, h in zip(options, counts, hidden)}
        data["percents"] = {
            o: None if h else pct(n, base) for o, n, h in zip(options, counts, hidden)
        }
        data["pct_of_choices"] = {
            o: None if h else pct(n, total_choices) for o, n, h in zip(options, counts, hidden)
        }
        columns = ["Option", "Count", "% of respondents", "% of all choices"]
        rows = []
        for o, n, h in zip(options, counts, hidden):
            rows.append(
                [
                    text_cell(o),
                    count_cell(int(n), bool(h), ctx),
                    pct_cell(data["percents"][o], bool(h), ctx, base),
                    pct_cell(data["pct_of_choices"][o], bool(h), ctx),
                ]
            )
        rows.append(
            [
                text_cell("Respondents who answered"),
                Cell(base, "count"),
                Cell(None, "text"),
                Cell(None, "text"),
            ]
        )
        rows.append(
            [
                text_cell("All choices"),
                Cell(total_choices, "count"),
                Cell(None, "text"),
                Cell(100.0 if total_choices else None, "percent"),
            ]
        )
        roles = ["level"] * len(options) + ["total", "total"]
        primary, secondary = sup.primary, sup.secondary
        if 0 < base < ctx.unstable_base:
            unstable.append("all respondents")
    else:
        g = groups.codes[use]
        sub = chosen[use]
        mat = np.zeros((groups.size, len(options)), dtype=np.int64)
        for gi in range(groups.size):
            mat[gi] = sub[g == gi].sum(axis=0)
        bases = np.bincount(g, minlength=groups.size)
        sup = suppress(mat, ctx.min_cell, row_totals=True, col_totals=True)
        small = protected_groups(bases, ctx)
        data["groups"] = groups.labels
        data["group_bases"] = {
            lab: None if small[gi] else int(bases[gi]) for gi, lab in enumerate(groups.labels)
        }
        data["counts"], data["percents"], data["pct_of_choices"] = {}, {}, {}
        columns = [" / ".join(groups.names), "Respondents"]
        for o in options:
            columns += [f"{o} n", f"{o} %"]
        rows, roles = [], []
        for gi, lab in enumerate(groups.labels):
            hid = sup.cells[gi] | small[gi] | sup.row_totals[gi]
            data["counts"][lab] = {
                o: None if hid[j] else int(mat[gi, j]) for j, o in enumerate(options)
            }
            data["percents"][lab] = {
                o: None if hid[j] else pct(mat[gi, j], bases[gi]) for j, o in enumerate(options)
            }
            choices = mat[gi].sum()
            # With any count of the group hidden, its choices total would reveal the sum.
            data["pct_of_choices"][lab] = {
                o: None if hid.any() else pct(mat[gi, j], choices) for j, o in enumerate(options)
            }
            row = [text_cell(lab), count_cell(int(bases[gi]), bool(small[gi]), ctx)]
            for j, o in enumerate(options):
                row.append(count_cell(int(mat[gi, j]), bool(hid[j]), ctx))
                row.append(pct_cell(data["percents"][lab][o], bool(hid[j]), ctx, int(bases[gi])))
            rows.append(row)
            roles.append("level")
            if 0 < bases[gi] < ctx.unstable_base:
                unstable.append(lab)
        row = [text_cell("All"), Cell(base, "count")]
        for j in range(len(options)):
            h = bool(sup.col_totals[j])
            row.append(count_cell(int(counts[j]), h, ctx))
            row.append(pct_cell(None if h else pct(counts[j], base), h, ctx, base))
        rows.append(row)
        roles.append("total")
        primary, secondary = sup.primary, sup.secondary
        notes.cautions.append(GROUP_CAUTION)
        if groups.n_no_group:
            notes.missing.append(
                f"{groups.n_no_group:,} respondents without an answer to "
                f"{' / '.join(groups.names)} are not in any group and are left out."
            )

    n_skipped = n_all - int(answered.sum())
    notes.missing.append(
        f"{n_skipped:,} of {n_all:,} respondents did not answer the question; percentages are "
        "of those who answered."
    )
    notes.method.append(
        "% of respondents adds up to more than 100% because people could choose several "
        "options; % of all choices adds up to 100%."
    )
    notes.suppression.append(suppression_note(ctx.min_cell, primary, secondary))
    notes.suppression.append(unstable_note(ctx.unstable_base, unstable))
    var = ctx.codebook.get(name)
    title = (
        short_title(var.label)
        if var is not None and var.delimiter
        else group_title(name, [m.question for m in members])
    )
    return TableResult(
        spec=ctx.spec,
        table_type="multiselect",
        kind="multiselect",
        title=title,
        base=base_line(base, n_all),
        n_valid=base,
        n_missing=n_all - base,
        columns=columns,
        rows=rows,
        row_roles=roles,
        data=data,
        wave=ctx.wave,
        instrument=ctx.instrument,
    )
