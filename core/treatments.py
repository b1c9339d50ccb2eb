"""Missing-data treatments: which respondents a table counts, and what it does about gaps.

Four treatments, chosen per table (METHODS.md section 10):

- ``available`` (default): each table uses everyone who answered the questions it shows;
  the denominator is stated, and it may differ from table to table.
- ``complete``: only respondents who answered every one of a chosen set of items (by default
  the table's own variables and break-downs), so several tables share one denominator.
- ``impute``: single imputation; a missing answer is filled with the median (numbers) or the
  most frequent level (categories). Filled-in values are treated as if they had been
  observed, which understates uncertainty and shrinks differences, so the table always
  carries a visible caution and says how many values were filled in.
- ``show-missing``: like available cases, but missing answers appear as rows (by reason, or
  combined) and percentages are of all respondents.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.errors import TableError
from core.kinds import REASON_LABELS, Kind, MissingReason

# A reason of our own for respondents left out by complete-case analysis.
INCOMPLETE = "incomplete_case"
REASON_TEXT = {
    **{r.value: label for r, label in REASON_LABELS.items()},
    "invalid": "Not a valid answer",
    INCOMPLETE: "Left out: did not answer every chosen item",
}
COMBINED = "missing"
COMBINED_TEXT = "No answer (any reason)"

# Answers that are missing because the question did not apply are never filled in.
_NOT_IMPUTED_REASONS = {MissingReason.NOT_APPLICABLE.value}


@dataclass
class Treated:
    """The rows and values one table works on, plus what was done to them."""

    values: pd.DataFrame
    reasons: pd.DataFrame
    treatment: str
    n_all: int  # respondents in the analysis before any treatment (exclusions already out)
    n_dropped: int = 0  # left out by complete cases
    items: tuple[str, ...] = ()  # the complete-case items
    imputed: dict[str, tuple[object, int]] = field(default_factory=dict)  # var: (value, n)
    imputed_mask: dict[str, np.ndarray] = field(default_factory=dict)
    not_imputed: list[str] = field(default_factory=list)
    ties: dict[str, list[str]] = field(default_factory=dict)  # most frequent levels that tied
    missing_rows: str | None = None  # "reason" or "combined" with show-missing

    @property
    def show_missing(self) -> bool:
        return self.missing_rows is not None


def members_of(codebook: Codebook, name: str) -> list[Variable]:
    """The variables a name stands for: itself, or the members of a question group."""
    var = codebook.get(name)
    if var is not None:
        return [var]
    groups = codebook.groups()
    if name in groups:
        return groups[name]
    raise TableError(f"There is no variable or question group called {name!r}.")


def answered(
    codebook: Codebook, values: pd.DataFrame, reasons: pd.DataFrame, name: str
) -> np.ndarray:
    """Which respondents answered ``name`` (a variable, or a group as one question).

    A ranking counts as answered when at least one option was ranked; a choose-all-that-apply
    question when it was not skipped as a whole; a battery when every item was answered.
    """
    members = [m for m in members_of(codebook, name) if m.name in reasons.columns]
    if not members:
        raise TableError(f"{name} has no data in this wave.")
    masks = [reasons[m.name].isna().to_numpy() for m in members]
    if members[0].kind is Kind.RANKING or (
        members[0].kind is Kind.MULTISELECT and len(members) > 1
    ):
        return np.logical_or.reduce(masks)
    return np.logical_and.reduce(masks)


def apply_treatment(
    values: pd.DataFrame,
    reasons: pd.DataFrame,
    codebook: Codebook,
    treatment: str,
    variables: list[str],
    by: tuple[str, ...] = (),
    complete_items: tuple[str, ...] = (),
    missing_rows: str = "reason",
) -> Treated:
    """Apply a treatment to the analysed rows for a table on ``variables`` (column names).

    Parameters
    ----------
    values, reasons
        The analysed working data (excluded respondents already left out).
    treatment
        ``available``, ``complete``, ``impute`` or ``show-missing``.
    variables
        The columns the table counts (a group's members for a group table).
    by
        Break-down variables. They are part of the default complete-case set but are never
        imputed: filling in someone's group would invent who they are.
    complete_items
        Names (variables or groups) a respondent must have answered under ``complete``;
        empty means the table's own variables and break-downs.
    """
    cols = list(dict.fromkeys([*variables, *by]))
    missing_cols = [c for c in cols if c not in values.columns]
    if missing_cols:
        raise TableError(
            f"{', '.join(missing_cols)} {'is' if len(missing_cols) == 1 else 'are'} not in "
            "this wave's data."
        )
    n_all = len(values)
    if treatment == "available":
        return Treated(values, reasons, treatment, n_all)
    if treatment == "show-missing":
        return Treated(values, reasons, treatment, n_all, missing_rows=missing_rows)
    if treatment == "complete":
        items = tuple(complete_items) or _default_items(codebook, variables, by)
        keep = np.ones(n_all, dtype=bool)
        for item in items:
            if item not in values.columns and item not in codebook.groups():
                raise TableError(f"There is no variable or question group called {item!r}.")
            keep &= answered(codebook, values, reasons, item)
        return Treated(
            values[keep],
            reasons[keep],
            treatment,
            n_all,
            n_dropped=int(n_all - keep.sum()),
            items=items,
        )
    if treatment == "impute":
        return _impute(values, reasons, codebook, variables, n_all)
    raise TableError(f"Unknown missing-data treatment {treatment!r}.")


def _default_items(codebook: Codebook, variables: list[str], by: tuple[str, ...]) -> tuple:
    # Members of one ranking or option group stand for one question, not one item each.
    names: list[str] = []
    for v in variables:
        var = codebook[v]
        if var.group and var.kind in (Kind.RANKING, Kind.MULTISELECT) and not var.delimiter:
            names.append(var.group)
        else:
            names.append(v)
    return tuple(dict.fromkeys([*names, *by]))


def _impute(
    values: pd.DataFrame,
    reasons: pd.DataFrame,
    codebook: Codebook,
    variables: list[str],
    n_all: int,
) -> Treated:
    values = values.copy(deep=False)
    reasons = reasons.copy(deep=False)
    out = Treated(values, reasons, "impute", n_all)
    for name in variables:
        var = codebook[name]
        r = reasons[name].astype(object).to_numpy()
        fill = ~pd.isna(r)  # a reason means the answer is missing
        fill &= ~np.isin(r, list(_NOT_IMPUTED_REASONS))
        if var.kind is Kind.NUMERIC:
            observed = values[name][reasons[name].isna()].to_numpy(dtype=float)
            if observed.size == 0:
                out.not_imputed.append(name)
                continue
            value: object = float(np.median(observed))
            new = values[name].to_numpy(dtype=float, copy=True)
            new[fill] = value
            values[name] = pd.Series(new, index=values.index)
        elif var.kind.has_levels:
            col = values[name]
            codes = col.cat.codes.to_numpy()
            counts = np.bincount(codes[codes >= 0], minlength=len(var.levels))
            if counts.sum() == 0:
                out.not_imputed.append(name)
                continue
            top = np.flatnonzero(counts == counts.max())
            if len(top) > 1:
                out.ties[name] = [var.levels[i] for i in top]
            value = var.levels[int(top[0])]
            new_codes = np.where(fill, top[0], codes)
            values[name] = pd.Series(
                pd.Categorical.from_codes(
                    new_codes, categories=col.cat.categories, ordered=col.cat.ordered
                ),
                index=values.index,
            )
        else:
            out.not_imputed.append(name)
            continue
        r = r.copy()
        r[fill] = None
        reasons[name] = pd.Series(
            pd.Categorical(r, categories=reasons[name].cat.categories), index=reasons.index
        )
        out.imputed[name] = (value, int(fill.sum()))
        out.imputed_mask[name] = fill
    return out


def reason_counts(reasons: pd.Series) -> dict[str, int]:
    """Missing answers by reason (only reasons that occur), in the fixed reason order."""
    codes = reasons.cat.codes.to_numpy()
    counts = np.bincount(codes[codes >= 0], minlength=len(reasons.cat.categories))
    return {str(cat): int(n) for cat, n in zip(reasons.cat.categories, counts) if n > 0}


def treatment_notes(treated: Treated, codebook: Codebook) -> list[str]:
    """Plain sentences disclosing the treatment (the caution for imputation first)."""
    notes: list[str] = []
    t = treated.treatment
    if t == "available":
        notes.append(
            "Missing data: available cases; the table counts everyone who answered, so its "
            "base may differ from other tables."
        )
    elif t == "show-missing":
        notes.append(
            "Missing data: shown as rows; percentages are of all respondents, including those "
            "who did not answer."
        )
    elif t == "complete":
        labels = ", ".join(treated.items)
        notes.append(
            f"Missing data: complete cases; only respondents who answered all of {labels} are "
            f"counted ({treated.n_dropped:,} of {treated.n_all:,} left out)."
        )
    elif t == "impute":
        for name, (value, n) in treated.imputed.items():
            var = codebook[name]
            how = "the median" if var.kind is Kind.NUMERIC else "the most frequent answer"
            shown = f"{value:g}" if isinstance(value, float) else f'"{value}"'
            tie = ""
            if name in treated.ties:
                tie = (
                    " (several answers were equally frequent: "
                    + ", ".join(treated.ties[name])
                    + "; the first in questionnaire order was used)"
                )
            notes.append(
                f"Caution: {n:,} missing answer{'s' if n != 1 else ''} to {name} "
                f"{'were' if n != 1 else 'was'} filled in with {how}, {shown}{tie}. Filled-in "
                "answers are treated as if they had been given, which makes results look more "
                "certain than they are and shrinks differences between groups."
            )
        if not treated.imputed:
            notes.append(
                "Missing data: single imputation was asked for, but nothing was "
                "missing that could be filled in."
            )
        if treated.not_imputed:
            notes.append(
                "Not filled in (imputation does not apply to this kind of question, or no "
                "one answered it): " + ", ".join(treated.not_imputed) + "."
            )
        notes.append(
            "Answers missing because the question did not apply are never filled in; "
            "break-down variables are never filled in."
        )
    return notes
