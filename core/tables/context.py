"""What every table function receives, and the small helpers they share.

A :class:`Context` bundles the treated rows, the codebook, the spec and the project's
protection settings, so each table module is a pure function of it.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from core.codebook import Codebook, Variable
from core.errors import TableError
from core.tables.captions import Notes, common_stem, item_label, short_title
from core.tables.result import Cell
from core.tables.spec import TableSpec
from core.treatments import Treated


@dataclass
class Context:
    codebook: Codebook
    treated: Treated
    spec: TableSpec
    min_cell: int = 5
    unstable_base: int = 30
    wave: str = ""
    instrument: str = ""
    population: bool = True
    notes: Notes = field(default_factory=Notes)

    @property
    def values(self) -> pd.DataFrame:
        return self.treated.values

    @property
    def reasons(self) -> pd.DataFrame:
        return self.treated.reasons

    def hidden_text(self) -> str:
        return f"<{self.min_cell}"


@dataclass(frozen=True)
class Breakdown:
    """Break-down groups: one code per respondent (-1: no group), labels in display order."""

    codes: np.ndarray
    labels: list[str]
    names: tuple[str, ...]
    n_no_group: int

    @property
    def size(self) -> int:
        return len(self.labels)


def level_codes(var: Variable, values: pd.Series) -> np.ndarray:
    """Integer level codes (-1 where there is no answer) for a variable with levels."""
    if isinstance(values.dtype, pd.CategoricalDtype):
        return values.cat.codes.to_numpy().astype(np.int64)
    raise TableError(f"{var.name} has no answer levels to count.")


def breakdown(ctx: Context, names: tuple[str, ...]) -> Breakdown | None:
    """Groups from one or two break-down variables; two are nested as "A / B"."""
    if not names:
        return None
    parts = []
    for name in names:
        var = ctx.codebook.get(name)
        if var is None:
            raise TableError(f"There is no variable called {name!r} to break the table down by.")
        if not var.kind.has_levels:
            hint = (
                " Group its values into categories first (for example age groups)."
                if var.kind.value == "numeric"
                else ""
            )
            raise TableError(
                f"{name} ({var.kind.label.lower()}) cannot be used as a break-down: a break-down "
                f"needs answer categories.{hint}"
            )
        if name not in ctx.values.columns:
            raise TableError(f"{name} is not in this wave's data.")
        codes = level_codes(var, ctx.values[name])
        parts.append((var, codes))
    if len(parts) == 1:
        var, codes = parts[0]
        return Breakdown(codes, list(var.levels), names, int((codes < 0).sum()))
    (v1, c1), (v2, c2) = parts
    n2 = len(v2.levels)
    combined = np.where((c1 >= 0) & (c2 >= 0), c1 * n2 + c2, -1)
    present = np.unique(combined[combined >= 0])
    remap = np.full(len(v1.levels) * n2, -1, dtype=np.int64)
    remap[present] = np.arange(len(present))
    codes = np.where(combined >= 0, remap[np.maximum(combined, 0)], -1)
    labels = [f"{v1.levels[k // n2]} / {v2.levels[k % n2]}" for k in present]
    return Breakdown(codes, labels, names, int((codes < 0).sum()))


COMPLEMENT_TEXT = "–"


def count_cell(n: int | None, hidden: bool, ctx: Context, small: bool | None = None) -> Cell:
    """A count; hidden small counts read "<5", cells hidden only to protect them read "–"."""
    if hidden:
        if small is None:
            small = n is not None and 0 < n < ctx.min_cell
        return Cell(
            None, "count", suppressed=True, text=ctx.hidden_text() if small else COMPLEMENT_TEXT
        )
    return Cell(n, "count")


def protected_groups(bases: np.ndarray, ctx: Context) -> np.ndarray:
    """Groups whose figures must be hidden: groups smaller than the threshold, plus enough
    others that a small group cannot be worked out as "all" minus the shown groups."""
    from core.tables.suppression import suppress

    bases = np.asarray(bases, dtype=np.int64)
    if bases.size == 0:
        return np.zeros(0, dtype=bool)
    sup = suppress(bases, ctx.min_cell, row_totals=False, col_totals=True, protect_totals=False)
    return sup.cells[:, 0]


def pct_cell(p: float | None, hidden: bool, ctx: Context, base: int | None = None) -> Cell:
    if hidden:
        return Cell(None, "percent", suppressed=True, text=COMPLEMENT_TEXT)
    if p is None:
        return Cell(None, "percent")
    flag = None
    if base is not None and 0 < base < ctx.unstable_base:
        flag = "unstable"
    return Cell(float(p), "percent", flag=flag)


def text_cell(text: str) -> Cell:
    return Cell(text, "text")


def pct(n: float, base: float) -> float | None:
    return 100.0 * float(n) / float(base) if base else None


def label_of(ctx: Context, name: str) -> str:
    return variable_title(ctx.codebook, name)


def variable_title(codebook: Codebook, name: str) -> str:
    """A variable's title: its question text shortened; for an item of a group, the item's
    own words without the stem the group shares ("I felt welcome in my cohort.")."""
    var = codebook.get(name)
    if var is None:
        return name
    if var.group:
        members = codebook.groups().get(var.group, [])
        stem = common_stem([m.question for m in members])
        if stem:
            own = item_label(var.question, stem, var.name)
            head = stem.rstrip(" -–—:")
            # A bare "Tutoring" needs its question; a full statement stands on its own.
            return short_title(f"{head} – {own}") if len(own) < 20 and head else own
    return short_title(var.label)


def by_label(ctx: Context, name: str) -> str:
    """How a break-down reads after "by": a short label, else the name in plain words.

    "by Which trade track are you in?" reads badly; "by track" does not.
    """
    var = ctx.codebook.get(name)
    text = " ".join((var.question if var is not None else "").split())
    if text and len(text) <= 30 and "?" not in text:
        return text
    return name.replace("_", " ")


def by_title(ctx: Context, title: str) -> str:
    if not ctx.spec.by:
        return title
    return title + " — by " + " and ".join(by_label(ctx, b) for b in ctx.spec.by)
