"""Descriptive statistics for numeric questions, overall and by group.

n, missing, mean, median, every mode, standard deviation and variance (population formula by
default, sample formula on request; the caption says which), minimum, maximum, range, the
quartiles and the interquartile range. Quartiles use linear interpolation, Hyndman and Fan
(1996) type 7, the numpy/pandas/scipy default (METHODS.md section 2); the method is fixed
here rather than left to a library default so the caption can name it.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from core.tables.captions import (
    GROUP_CAUTION,
    QUANTILE_NOTE,
    base_line,
    missing_sentence,
    sd_note,
)
from core.tables.context import (
    Context,
    breakdown,
    by_title,
    count_cell,
    label_of,
    protected_groups,
    text_cell,
)
from core.tables.result import Cell, TableResult, format_number
from core.tables.suppression import suppress
from core.treatments import INCOMPLETE, reason_counts

QUANTILE_METHOD = "linear"  # Hyndman & Fan type 7
STAT_KEYS = (
    "n",
    "mean",
    "median",
    "modes",
    "sd",
    "variance",
    "min",
    "max",
    "range",
    "q1",
    "q3",
    "iqr",
)
STAT_LABELS = {
    "n": "Number answered (n)",
    "missing": "Missing",
    "mean": "Mean",
    "median": "Median",
    "modes": "Mode(s)",
    "sd": "Standard deviation",
    "variance": "Variance",
    "min": "Minimum",
    "max": "Maximum",
    "range": "Range",
    "q1": "First quartile (Q1)",
    "q3": "Third quartile (Q3)",
    "iqr": "Interquartile range (IQR)",
}
MAX_BINS = 40
UNIT_BINS = 20  # whole numbers spanning up to this many get one bar each


def describe(x: np.ndarray, sd: str = "population") -> dict[str, Any]:
    """Summary statistics of a 1-D array of answered values.

    ``modes`` lists every most frequent value; it is empty when no value occurs more than
    once (then no value is typical, unlike ``statistics.multimode`` which returns them all).
    ``sd`` is ``"population"`` (divide by n) or ``"sample"`` (divide by n - 1).
    """
    x = np.asarray(x, dtype=float)
    n = int(x.size)
    out: dict[str, Any] = {k: None for k in STAT_KEYS}
    out["n"] = n
    out["modes"] = []
    if n == 0:
        return out
    ddof = 0 if sd == "population" else 1
    values, counts = np.unique(x, return_counts=True)
    top = counts.max()
    modes = values[counts == top] if (top > 1 or n == 1) else np.array([])
    lo, hi = float(values[0]), float(values[-1])
    q1, med, q3 = np.quantile(x, [0.25, 0.5, 0.75], method=QUANTILE_METHOD)
    out.update(
        mean=float(np.mean(x)),
        median=float(med),
        modes=[_num(m) for m in modes],
        min=_num(lo),
        max=_num(hi),
        range=_num(hi - lo),
        q1=float(q1),
        q3=float(q3),
        iqr=float(q3 - q1),
    )
    if n > ddof:
        var = float(np.var(x, ddof=ddof))
        out["variance"] = var
        out["sd"] = math.sqrt(var)
    return out


def _num(v: float) -> float | int:
    v = float(v)
    return int(v) if v.is_integer() and abs(v) < 2**53 else v


def box_stats(x: np.ndarray, stats: dict[str, Any]) -> dict[str, Any]:
    """Box-plot numbers (Tukey's 1.5 x IQR whiskers) in the shape matplotlib's bxp draws."""
    if not stats["n"]:
        return {}
    q1, q3, iqr = stats["q1"], stats["q3"], stats["iqr"]
    lo_fence, hi_fence = q1 - 1.5 * iqr, q3 + 1.5 * iqr
    inside = x[(x >= lo_fence) & (x <= hi_fence)]
    return {
        "q1": q1,
        "med": stats["median"],
        "q3": q3,
        "whislo": float(inside.min()) if inside.size else q1,
        "whishi": float(inside.max()) if inside.size else q3,
        "fliers": [_num(v) for v in np.sort(x[(x < lo_fence) | (x > hi_fence)])],
    }


def histogram_edges(x: np.ndarray) -> np.ndarray:
    """Bin edges: one bin per whole number for short integer ranges, else numpy's 'auto'.

    Wide bins keep counts above the small-cell threshold more often; whole-number data get
    bin edges at half-integers so no answer sits on an edge.
    """
    if x.size == 0:
        return np.array([0.0, 1.0])
    lo, hi = float(x.min()), float(x.max())
    whole = bool(np.all(np.equal(np.mod(x, 1), 0)))
    if whole and hi - lo <= UNIT_BINS:
        return np.arange(lo - 0.5, hi + 1.5, 1.0)
    edges = np.histogram_bin_edges(x, bins="auto")
    if len(edges) - 1 > MAX_BINS:
        edges = np.histogram_bin_edges(x, bins=MAX_BINS)
    if whole:
        width = max(1.0, float(np.ceil(edges[1] - edges[0])))
        edges = np.arange(lo - 0.5, hi + width, width)
    return edges


def _histogram(x: np.ndarray, edges: np.ndarray, ctx: Context) -> dict[str, Any]:
    counts, _ = np.histogram(x, bins=edges)
    sup = suppress(counts, ctx.min_cell, row_totals=False, col_totals=True, protect_totals=False)
    return {
        "edges": [float(e) for e in edges],
        "counts": [None if h else int(n) for n, h in zip(counts, sup.cells[:, 0])],
    }


def descriptives_table(ctx: Context, name: str) -> TableResult:
    """Descriptive statistics of a numeric variable, optionally by break-down group."""
    var = ctx.codebook[name]
    values = ctx.values[name].to_numpy(dtype=float)
    reasons = ctx.reasons[name]
    answered = reasons.isna().to_numpy() & ~np.isnan(values)
    groups = breakdown(ctx, ctx.spec.by)
    in_scope = answered if groups is None else answered & (groups.codes >= 0)
    x_all = values[in_scope]
    stats = describe(x_all, ctx.spec.sd)
    missing = reason_counts(reasons)
    if ctx.treated.n_dropped:
        missing[INCOMPLETE] = ctx.treated.n_dropped
    n_all = ctx.treated.n_all
    stats["missing"] = n_all - stats["n"]
    edges = histogram_edges(x_all)
    data: dict[str, Any] = {
        "stats": stats,
        "histogram": _histogram(x_all, edges, ctx),
        "box": {"All": box_stats(x_all, stats)},
        "sd_formula": ctx.spec.sd,
        "quantile_method": "linear (Hyndman & Fan type 7)",
        "missing": missing,
    }
    columns = ["Statistic"]
    col_stats: list[tuple[dict[str, Any], bool, int]] = []
    small: list[str] = []
    if groups is not None:
        data["groups"] = groups.labels
        data["stats_by_group"] = {}
        data["histogram_by_group"] = {}
        data["group_bases"] = {}
        ns = np.bincount(groups.codes[in_scope], minlength=groups.size)
        hidden_groups = protected_groups(ns, ctx)
        for g, label in enumerate(groups.labels):
            xg = values[in_scope & (groups.codes == g)]
            sg = describe(xg, ctx.spec.sd)
            hide = bool(hidden_groups[g])
            if hide:
                small.append(label)
                sg = {k: (None if k != "modes" else []) for k in sg}
            data["stats_by_group"][label] = sg
            data["group_bases"][label] = None if hide else int(xg.size)
            data["histogram_by_group"][label] = (
                {"edges": [float(e) for e in edges], "counts": [None] * (len(edges) - 1)}
                if hide
                else _histogram(xg, edges, ctx)
            )
            data["box"][label] = {} if hide else box_stats(xg, sg)
            columns.append(label)
            col_stats.append((sg, hide, int(xg.size)))
    columns.append("All")
    col_stats.append((stats, False, stats["n"]))
    rows: list[list[Cell]] = []
    roles: list[str] = []
    # The statistics in their usual order, with the missing count after n.
    for key in ("n", "missing", *STAT_KEYS[1:]):
        if key == "missing" and groups is not None:
            continue
        row = [text_cell(STAT_LABELS[key])]
        for st, hide, n in col_stats:
            row.append(_stat_cell(key, st.get(key), hide, ctx, n))
        rows.append(row)
        roles.append("stat")

    notes = ctx.notes
    notes.missing.append(missing_sentence(var.name, missing, n_all))
    if groups is not None and groups.n_no_group:
        notes.missing.append(
            f"{groups.n_no_group:,} respondents without an answer to "
            f"{' / '.join(groups.names)} are not in any group; the All column counts only "
            "those with a group."
        )
    if len(stats["modes"]) > 1:
        shown = ", ".join(format_number(float(m)) for m in stats["modes"][:8])
        more = "" if len(stats["modes"]) <= 8 else f" and {len(stats['modes']) - 8} more"
        notes.method.append(
            f"There are {len(stats['modes'])} modes (values equally most common): {shown}{more}."
        )
    elif stats["n"] > 1 and not stats["modes"]:
        notes.method.append("No value occurs more than once, so there is no mode.")
    notes.method.append(sd_note(ctx.spec.sd))
    notes.method.append(QUANTILE_NOTE)
    if small:
        notes.suppression.append(
            f"Statistics are hidden for groups of fewer than {ctx.min_cell} people, and for "
            f"enough other groups that they cannot be worked out from the All column "
            f"({', '.join(small)}): the minimum, maximum or mean of a tiny group can identify "
            "someone."
        )
    if groups is not None:
        notes.cautions.append(GROUP_CAUTION)
    title = by_title(ctx, label_of(ctx, name))
    return TableResult(
        spec=ctx.spec,
        table_type="descriptives",
        kind=var.kind.value,
        title=title,
        base=base_line(stats["n"], n_all),
        n_valid=stats["n"],
        n_missing=n_all - stats["n"],
        columns=columns,
        rows=rows,
        row_roles=roles,
        data=data,
        wave=ctx.wave,
        instrument=ctx.instrument,
    )


def _stat_cell(key: str, value: Any, hide: bool, ctx: Context, n: int = 0) -> Cell:
    if key == "n":
        return count_cell(n, hide, ctx) if hide else Cell(value, "count")
    if hide:
        return Cell(None, "number", suppressed=True, text="–")
    if key == "missing":
        return Cell(value, "count")
    if key == "modes":
        if not value:
            return Cell("none", "text")
        text = ", ".join(format_number(float(m)) for m in value[:5])
        if len(value) > 5:
            text += f" … ({len(value)} modes)"
        elif len(value) > 1:
            text += " (several)"
        return Cell(text, "text")
    return Cell(value, "number")
