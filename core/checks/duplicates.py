"""Duplicates: the same identifier more than once, and rows with identical answers.

A respondent submitting twice is common (a double click, a second attempt). The check shows
whether the copies agree and in which variables they differ; it suggests keeping the latest
submission in the file and excluding the others (common practice, no source), which the
evaluator confirms or changes.
"""

from __future__ import annotations

import hashlib

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
    # Always run, also when refreshing after one decision: a correction can make two rows
    # identical (or different). Column hashes of unedited columns are cached, so this is cheap.
    flags: list[Flag] = []
    if ident is not None and ident.name in ctx.working.values.columns:
        flags += _same_id(ctx, ident.name, names)
    flags += _same_answers(ctx, names)
    return flags


def column_hash(values: pd.Series, reasons: pd.Series) -> np.ndarray:
    """A 64-bit hash per cell of one decoded column and its missing reason."""
    if isinstance(values.dtype, pd.CategoricalDtype):
        arr = values.cat.codes.to_numpy().astype(np.int64)
    elif pd.api.types.is_datetime64_any_dtype(values):
        arr = values.to_numpy(dtype="datetime64[ns]").view(np.int64)
    elif pd.api.types.is_numeric_dtype(values):
        arr = values.to_numpy(dtype=float, na_value=np.nan)
    else:
        arr = np.array([None if v is None else repr(v) for v in values], dtype=object)
    h = pd.util.hash_array(arr)
    codes = reasons.cat.codes.to_numpy().astype(np.int64)
    return h * np.uint64(31) + pd.util.hash_array(codes)


def _salt(name: str) -> np.uint64:
    digest = hashlib.sha256(name.encode("utf-8")).digest()
    return np.uint64(int.from_bytes(digest[:8], "little") | 1)


def row_hashes(ctx: Context, names: list[str]) -> np.ndarray:
    """One 64-bit hash per row over ``names`` (answers and missing reasons).

    The row hash is a sum of salted column hashes (wrapping at 2**64), so the part from
    columns no decision has changed is computed once and reused; only edited columns are
    hashed again after a decision.
    """
    values, reasons = ctx.working.values, ctx.working.reasons

    def combine(cols: list[str]) -> np.ndarray:
        out = np.zeros(len(values), dtype=np.uint64)
        with np.errstate(over="ignore"):
            for name in cols:
                out += column_hash(values[name], reasons[name]) * _salt(name)
        return out

    fixed = [n for n in names if n not in ctx.touched]
    edited = [n for n in names if n in ctx.touched]
    total = ctx.cached("row-hash", fixed, lambda: combine(fixed)).copy()
    with np.errstate(over="ignore"):
        total += combine(edited)
    return total


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


def _id_groups(ctx: Context, ident: str) -> list[list[int]]:
    """Rows sharing an identifier (answered identifiers only), over every row."""
    answered = ctx.working.reasons[ident].isna().to_numpy()
    ids = ctx.working.respondent_ids.to_numpy(dtype=object)
    positions = np.flatnonzero(answered)
    series = pd.Series(ids[positions], index=positions, dtype=object)
    dup = series[series.duplicated(keep=False)]
    return [[int(r) for r in group.index] for _, group in dup.groupby(dup, sort=False)]


def _same_id(ctx: Context, ident: str, names: list[str]) -> list[Flag]:
    groups = ctx.cached("id-groups", [ident], lambda: _id_groups(ctx, ident))
    flags: list[Flag] = []
    for all_rows in groups:
        rows = [r for r in all_rows if ctx.keep[r]]
        if len(rows) < 2:
            continue
        rid = ctx.respondent(rows[0])
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

    def count(cols: list[str]) -> np.ndarray:
        out = np.zeros(len(values), dtype=np.int64)
        for name in cols:
            out += reasons[name].cat.codes.to_numpy() < 0
        return out

    fixed = [n for n in usable if n not in ctx.touched]
    answered_n = ctx.cached("answered", fixed, lambda: count(fixed)) + count(
        [n for n in usable if n in ctx.touched]
    )
    answered = answered_n >= MIN_ANSWERED
    keep = ctx.keep & answered
    positions = np.flatnonzero(keep)
    if len(positions) < 2:
        return []
    hashes = pd.Series(row_hashes(ctx, usable)[positions], index=positions)
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
