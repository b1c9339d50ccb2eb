"""Cross-tabulations: break-down groups down the rows, answer choices across the columns.

Counts with row percentages (within each group, the default), column percentages (within
each answer) or percentages of the total; totals on both margins; a second break-down nested
as "A / B"; ordered levels keep their order. An optional chi-square test of independence
with Cramér's V is offered for respondents who are a sample of a larger group (METHODS.md
section 5), with Cochran's expected-count rule checked and reported.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy import stats as sps

from core.tables.captions import (
    GROUP_CAUTION,
    SMALL_GROUP_CAUTION,
    base_line,
    missing_sentence,
    reason_text,
    suppression_note,
    unstable_note,
)
from core.tables.context import (
    Breakdown,
    Context,
    breakdown,
    by_title,
    count_cell,
    label_of,
    level_codes,
    pct_cell,
    text_cell,
)
from core.tables.result import Cell, TableResult
from core.tables.suppression import Suppression, suppress
from core.treatments import COMBINED, INCOMPLETE, reason_counts

PERCENT_LABELS = {
    "row": "row percentages (within each group)",
    "column": "column percentages (within each answer)",
    "total": "percentages of the total",
}


def partial_hidden(hidden: np.ndarray, subset: list[int] | np.ndarray) -> bool:
    """Whether a sum over ``subset`` of one line would reveal part of its hidden cells.

    The sum of *all* hidden cells of a line is known anyway (total minus shown cells), so a
    sum that covers all of them, or none, reveals nothing new.
    """
    hidden = np.asarray(hidden, dtype=bool)
    if not hidden.any():
        return False
    inside = hidden[np.asarray(subset, dtype=int)].sum() if len(subset) else 0
    return 0 < inside < hidden.sum()


def group_matrix(
    ctx: Context, name: str, groups: Breakdown
) -> tuple[np.ndarray, list[str], list[str], np.ndarray]:
    """(counts G x K, column labels, missing-reason keys, level codes).

    With missing shown as rows, the reasons of ``name`` become extra columns at the right.
    """
    var = ctx.codebook[name]
    codes = level_codes(var, ctx.values[name])
    n_levels = len(var.levels)
    g = groups.codes
    valid = (g >= 0) & (codes >= 0)
    counts = np.bincount(
        g[valid] * n_levels + codes[valid], minlength=groups.size * n_levels
    ).reshape(groups.size, n_levels)
    labels = list(var.levels)
    reasons_keys: list[str] = []
    if ctx.treated.show_missing:
        rcodes = ctx.reasons[name].cat.codes.to_numpy()
        cats = list(ctx.reasons[name].cat.categories)
        miss = (g >= 0) & (rcodes >= 0)
        m = np.bincount(
            g[miss] * len(cats) + rcodes[miss], minlength=groups.size * len(cats)
        ).reshape(groups.size, len(cats))
        present = np.flatnonzero(m.sum(axis=0) > 0)
        if ctx.treated.missing_rows == "combined" and present.size:
            counts = np.hstack([counts, m[:, present].sum(axis=1, keepdims=True)])
            reasons_keys = [COMBINED]
        else:
            counts = np.hstack([counts, m[:, present]])
            reasons_keys = [str(cats[i]) for i in present]
        labels += [reason_text(r) for r in reasons_keys]
    return counts, labels, reasons_keys, codes


def chi_square(counts: np.ndarray) -> dict[str, Any] | None:
    """Pearson's chi-square test of independence (no continuity correction) and Cramér's V.

    Empty rows and columns are dropped first. Returns None when fewer than two rows or
    columns remain. ``cochran_ok`` applies Cochran's (1954) rule: no expected count below 1
    and at most 20% below 5.
    """
    obs = np.asarray(counts, dtype=float)
    obs = obs[obs.sum(axis=1) > 0][:, obs.sum(axis=0) > 0]
    if obs.shape[0] < 2 or obs.shape[1] < 2:
        return None
    chi2, p, dof, expected = sps.chi2_contingency(obs, correction=False)
    n = obs.sum()
    v = float(np.sqrt(chi2 / (n * (min(obs.shape) - 1))))
    below5 = float((expected < 5).mean() * 100.0)
    below1 = int((expected < 1).sum())
    return {
        "chi2": float(chi2),
        "df": int(dof),
        "p_value": float(p),
        "cramers_v": v,
        "n": int(n),
        "min_expected": float(expected.min()),
        "pct_expected_below_5": below5,
        "n_expected_below_1": below1,
        "cochran_ok": below1 == 0 and below5 <= 20.0,
    }


def chi_square_notes(test: dict[str, Any] | None, population: bool) -> tuple[list[str], list[str]]:
    """(method notes, cautions) describing a chi-square result in plain words."""
    if test is None:
        return [
            "A chi-square test needs at least two groups and two answers with people in "
            "them; it was not computed."
        ], []
    p = test["p_value"]
    p_text = "p < 0.001" if p < 0.001 else f"p = {p:.3f}"
    method = [
        f"Chi-square test of independence (Pearson, no continuity correction): "
        f"X² = {test['chi2']:.2f}, df = {test['df']}, {p_text}; Cramér's V = "
        f"{test['cramers_v']:.2f} (0 = no association, 1 = complete)."
    ]
    cautions = []
    if not test["cochran_ok"]:
        cautions.append(
            f"Caution: {test['pct_expected_below_5']:.0f}% of expected counts are below 5 "
            f"(smallest {test['min_expected']:.1f}); the chi-square approximation is doubtful "
            "(Cochran's rule: none below 1 and no more than 20% below 5). Combine answer "
            "categories or groups before relying on the test."
        )
    if population:
        cautions.append(
            "If these respondents are everyone in the group of interest (the whole "
            "population), the differences shown are the actual differences and need no test; "
            "a test only helps when respondents are a sample of a larger group."
        )
    return method, cautions


def crosstab_table(ctx: Context, name: str) -> TableResult:
    """Cross-tabulate ``name`` (an item with levels) by the spec's break-down variable(s)."""
    var = ctx.codebook[name]
    groups = breakdown(ctx, ctx.spec.by)
    assert groups is not None
    counts, col_labels, reason_keys, codes = group_matrix(ctx, name, groups)
    n_levels = len(var.levels)
    base_kind = ctx.spec.percent
    sup = suppress(counts, ctx.min_cell, row_totals=True, col_totals=True)
    row_tot = counts.sum(axis=1)
    col_tot = counts.sum(axis=0)
    total = int(counts.sum())
    perc = _percents(counts, row_tot, col_tot, total, base_kind)
    hidden_pct = _hidden_percents(sup, base_kind)

    def n_or_none(n: int, h: bool) -> int | None:
        return None if h else int(n)

    def p_or_none(p: float, h: bool) -> float | None:
        return None if h or p != p else float(p)

    levels = list(var.levels)
    data: dict[str, Any] = {
        "groups": groups.labels,
        "levels": levels,
        "counts": {},
        "percents": {},
        "group_bases": {},
        "level_totals": {},
        "level_percents": {},
        "total": None if sup.grand else total,
        "percent_base": base_kind,
        "ordered": var.kind.ordered,
    }
    if reason_keys:
        data["missing_counts"] = {}
    for gi, g in enumerate(groups.labels):
        data["counts"][g] = {
            lv: n_or_none(counts[gi, j], sup.cells[gi, j]) for j, lv in enumerate(levels)
        }
        data["percents"][g] = {
            lv: p_or_none(perc[gi, j], hidden_pct[gi, j]) for j, lv in enumerate(levels)
        }
        data["group_bases"][g] = n_or_none(row_tot[gi], sup.row_totals[gi])
        if reason_keys:
            data["missing_counts"][g] = {
                r: n_or_none(counts[gi, n_levels + k], sup.cells[gi, n_levels + k])
                for k, r in enumerate(reason_keys)
            }
    tot_row_pct = _total_row_percents(col_tot, total, base_kind)
    tot_col_pct = _total_col_percents(row_tot, total, base_kind)
    for j, lv in enumerate(levels):
        data["level_totals"][lv] = n_or_none(col_tot[j], sup.col_totals[j])
        data["level_percents"][lv] = p_or_none(
            tot_row_pct[j], sup.col_totals[j] or (base_kind != "column" and sup.grand)
        )
    if var.kind.value == "likert":
        from core.tables.likert import scale_summary_by_group

        data.update(
            scale_summary_by_group(
                var, counts[:, :n_levels], sup.cells[:, :n_levels], groups.labels
            )
        )

    # Display: one row per group; a count and a percentage column per answer; totals.
    columns = [" / ".join(groups.names)]
    for lab in col_labels:
        columns += [f"{lab} n", f"{lab} %"]
    columns += ["Total n", "Total %"]
    rows: list[list[Cell]] = []
    roles: list[str] = []
    unstable: list[str] = []
    for gi, g in enumerate(groups.labels):
        row = [text_cell(g)]
        for j in range(counts.shape[1]):
            row.append(
                count_cell(int(counts[gi, j]), bool(sup.cells[gi, j]), ctx, sup.is_small(gi, j))
            )
            row.append(
                pct_cell(
                    p_or_none(perc[gi, j], hidden_pct[gi, j]),
                    bool(hidden_pct[gi, j]),
                    ctx,
                    _pct_base(base_kind, row_tot[gi], col_tot[j], total),
                )
            )
        row.append(count_cell(int(row_tot[gi]), bool(sup.row_totals[gi]), ctx))
        row.append(
            pct_cell(p_or_none(tot_col_pct[gi], sup.row_totals[gi]), bool(sup.row_totals[gi]), ctx)
        )
        rows.append(row)
        roles.append("level")
        if 0 < row_tot[gi] < ctx.unstable_base and base_kind == "row":
            unstable.append(g)
    row = [text_cell("Total")]
    for j in range(counts.shape[1]):
        h = bool(sup.col_totals[j])
        row.append(count_cell(int(col_tot[j]), h, ctx))
        row.append(pct_cell(p_or_none(tot_row_pct[j], h), h, ctx))
    row.append(count_cell(total, sup.grand, ctx))
    row.append(pct_cell(100.0 if total else None, sup.grand, ctx))
    rows.append(row)
    roles.append("total")

    # Notes.
    notes = ctx.notes
    n_all = ctx.treated.n_all
    missing = reason_counts(ctx.reasons[name])
    if ctx.treated.n_dropped:
        missing[INCOMPLETE] = ctx.treated.n_dropped
    notes.missing.append(missing_sentence(var.name, missing, n_all))
    if groups.n_no_group:
        notes.missing.append(
            f"{groups.n_no_group:,} respondents without an answer to "
            f"{' / '.join(groups.names)} are not in any group and are left out."
        )
    notes.method.append(f"Percentages: {PERCENT_LABELS[base_kind]}.")
    notes.suppression.append(suppression_note(ctx.min_cell, sup.primary, sup.secondary))
    notes.suppression.append(unstable_note(ctx.unstable_base, unstable))
    if ctx.spec.tests:
        test = chi_square(counts[:, :n_levels])
        data["test"] = test
        method, cautions = chi_square_notes(test, ctx.population)
        notes.method += method
        notes.cautions += cautions
    notes.cautions.append(GROUP_CAUTION)
    if unstable or sup.primary:
        notes.cautions.append(SMALL_GROUP_CAUTION)
    n_valid = int(counts[:, :n_levels].sum())
    who = "All respondents with a group" if reason_keys else "Respondents who answered both"
    if len(groups.names) > 1 and not reason_keys:
        who = "Respondents who answered all three"
    return TableResult(
        spec=ctx.spec,
        table_type="crosstab",
        kind=var.kind.value,
        title=by_title(ctx, label_of(ctx, name)),
        base=(
            f"{who}, n = <{ctx.min_cell} of {n_all:,}"
            if sup.grand
            else base_line(total, n_all, who)
        ),
        n_valid=n_valid,
        n_missing=n_all - n_valid,
        columns=columns,
        rows=rows,
        row_roles=roles,
        data=data,
        wave=ctx.wave,
        instrument=ctx.instrument,
    )


def _pct_base(kind: str, row_total: int, col_total: int, total: int) -> int:
    return {"row": row_total, "column": col_total, "total": total}[kind]


def _percents(counts, row_tot, col_tot, total, kind) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        if kind == "row":
            return 100.0 * counts / row_tot[:, None]
        if kind == "column":
            return 100.0 * counts / col_tot[None, :]
        return 100.0 * counts / total if total else np.full(counts.shape, np.nan)


def _hidden_percents(sup: Suppression, kind: str) -> np.ndarray:
    """A percentage is hidden with its count, and with its base (it would reveal the base)."""
    hidden = sup.cells.copy()
    if kind == "row":
        hidden |= sup.row_totals[:, None]
    elif kind == "column":
        hidden |= sup.col_totals[None, :]
    elif sup.grand:
        hidden[:] = True
    return hidden


def _total_row_percents(col_tot, total, kind) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        if kind == "column":
            return np.where(col_tot > 0, 100.0, np.nan)
        return 100.0 * col_tot / total if total else np.full(col_tot.shape, np.nan)


def _total_col_percents(row_tot, total, kind) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        if kind == "row":
            return np.where(row_tot > 0, 100.0, np.nan)
        return 100.0 * row_tot / total if total else np.full(row_tot.shape, np.nan)
