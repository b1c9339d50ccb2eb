"""Duplicates: the same identifier more than once, and rows with identical answers.

A respondent submitting twice is common (a double click, a second attempt). The check shows
whether the copies agree and in which variables they differ; it suggests keeping the latest
submission in the file and excluding the others (common practice, no source), which the
evaluator confirms or changes.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from core.checks.flag import Context, Flag, Suggestion
from core.kinds import Kind
from core.ledger import Action

DUPLICATE_ID = "duplicate_id"
DUPLICATE_ROW = "duplicate_row"
MIN_ANSWERED = 3  # all-blank rows are "identical" trivially; they are a missing-data matter


def check(ctx: Context) -> list[Flag]:
    ident = ctx.working.codebook.identifier()
    names = [n for n in ctx.working.values.columns if ident is None or n != ident.name]
    # A single-cell refresh keeps duplicate flags; a full run (and any exclusion) redoes them.
    if ctx.only is not None and (ident is None or ident.name not in ctx.only):
        return []
    flags: list[Flag] = []
    if ident is not None and ident.name in ctx.working.values.columns:
        flags += _same_id(ctx, ident.name, names)
    flags += _same_answers(ctx, names)
    return flags


def row_hashes(values: pd.DataFrame, reasons: pd.DataFrame, names: list[str]) -> np.ndarray:
    """One 64-bit hash per row of the decoded answers and missing reasons of ``names``."""
    parts = {}
    for name in names:
        col = values[name]
        if isinstance(col.dtype, pd.CategoricalDtype):
            parts[name] = col.cat.codes.to_numpy()
        elif pd.api.types.is_numeric_dtype(col) or pd.api.types.is_datetime64_any_dtype(col):
            parts[name] = col
        else:
            parts[name] = col.map(lambda v: None if v is None else repr(v))
        parts["~" + name] = reasons[name].cat.codes.to_numpy()
    frame = pd.DataFrame(parts, index=values.index)
    return pd.util.hash_pandas_object(frame, index=False).to_numpy()


def _differing(ctx: Context, rows: list[int], names: list[str]) -> list[str]:
    first = rows[0]
    out = []
    for name in names:
        base = ctx.shown(first, name)
        if any(ctx.shown(r, name) != base for r in rows[1:]):
            out.append(name)
    return out


def _rows_text(rows: list[int]) -> str:
    return ", ".join(str(r + 1) for r in rows)


def _same_id(ctx: Context, ident: str, names: list[str]) -> list[Flag]:
    answered = ctx.working.reasons[ident].isna().to_numpy() & ctx.keep
    ids = ctx.working.respondent_ids.to_numpy(dtype=object)
    positions = np.flatnonzero(answered)
    series = pd.Series(ids[positions], index=positions)
    dup = series[series.duplicated(keep=False)]
    flags: list[Flag] = []
    for rid, group in dup.groupby(dup, sort=False):
        rows = [int(r) for r in group.index]
        differ = _differing(ctx, rows, names)
        latest = rows[-1]
        if differ:
            shown = ", ".join(differ[:6]) + (" and more" if len(differ) > 6 else "")
            state = f"the answers differ in {shown}"
        else:
            state = "the answers are identical"
        for row in rows:
            message = f"{ident} {rid} appears {len(rows)} times (rows {_rows_text(rows)}); {state}."
            if row == latest:
                suggestion = Suggestion(
                    Action.KEEP,
                    None,
                    "Keep this latest submission and exclude the earlier one(s).",
                )
            else:
                suggestion = Suggestion(
                    Action.EXCLUDE,
                    None,
                    f"Exclude this earlier submission; keep the latest (row {latest + 1}).",
                )
            flags.append(
                ctx.flag(
                    DUPLICATE_ID,
                    row,
                    [ident],
                    str(rid),
                    "error",
                    message,
                    suggestion,
                    {"rows": [r + 1 for r in rows], "differing": differ},
                )
            )
    return flags


def _same_answers(ctx: Context, names: list[str]) -> list[Flag]:
    if not names:
        return []
    values, reasons = ctx.working.values, ctx.working.reasons
    usable = [n for n in names if ctx.working.codebook[n].kind is not Kind.IDENTIFIER]
    answered = reasons[usable].isna().sum(axis=1).to_numpy() >= MIN_ANSWERED
    keep = ctx.keep & answered
    positions = np.flatnonzero(keep)
    if len(positions) < 2:
        return []
    hashes = pd.Series(row_hashes(values, reasons, usable)[positions], index=positions)
    dup = hashes[hashes.duplicated(keep=False)]
    flags: list[Flag] = []
    for _, group in dup.groupby(dup, sort=False):
        rows = [int(r) for r in group.index]
        ids = {ctx.respondent(r) for r in rows}
        who = "with the same identifier" if len(ids) == 1 else "under different identifiers"
        for row in rows:
            others = [r for r in rows if r != row]
            message = (
                f"Row {row + 1} has exactly the same answers as row(s) {_rows_text(others)} "
                f"on all {len(usable)} variables, {who}."
            )
            first = rows[0]
            suggestion = (
                Suggestion(Action.KEEP, None, "Keep this first copy and exclude the others.")
                if row == first
                else Suggestion(Action.EXCLUDE, None, f"Exclude this copy of row {first + 1}.")
            )
            flags.append(
                ctx.flag(
                    DUPLICATE_ROW,
                    row,
                    (),
                    ctx.respondent(row),
                    "warning",
                    message,
                    suggestion,
                    {"rows": [r + 1 for r in rows]},
                )
            )
    return flags
