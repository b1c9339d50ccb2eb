"""Group a numeric variable into categories (age groups, hours bands) as a derived variable.

Three ways to choose the cut points: the evaluator's own (``cuts``), equal-width groups
between the smallest and largest answer (``equal``), or groups holding about equal numbers
of respondents (``quantile``; quantiles by linear interpolation, type 7). The result is a new
ordered variable in the codebook with ``derived_from`` naming the source and ``cut_points``
recording the rule, so working data recompute it from the cleaned source every time.
Groups are closed at the bottom and open at the top: with cut points 25 and 35, 25 falls in
"25–34", and the first and last groups are open-ended ("Under 25", "35 and over").
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.codebook import Variable
from core.errors import TableError
from core.kinds import Kind
from core.project import Project

METHODS = ("cuts", "equal", "quantile")


def cut_points_for(
    x: np.ndarray,
    method: str = "cuts",
    *,
    n_groups: int = 4,
    cuts: Sequence[float] = (),
) -> tuple[float, ...]:
    """Cut points between groups for answered values ``x``.

    For whole-number data, equal-width and quantile cut points are rounded up to whole
    numbers so that labels such as "25–34" are exact. Duplicate cut points (many equal
    values at a quantile) are merged, giving fewer groups.
    """
    x = np.asarray(x, dtype=float)
    x = x[~np.isnan(x)]
    if method == "cuts":
        points = sorted({float(c) for c in cuts})
        if not points:
            raise TableError("Give at least one cut point, for example 25, 35, 45.")
        return tuple(points)
    if method not in METHODS:
        raise TableError(f"Grouping method must be one of {', '.join(METHODS)}, not {method!r}.")
    if n_groups < 2:
        raise TableError("Ask for at least two groups.")
    if x.size == 0:
        raise TableError("No one answered this question, so there is nothing to group.")
    if method == "equal":
        lo, hi = float(x.min()), float(x.max())
        if hi == lo:
            raise TableError("Every answer is the same, so it cannot be split into groups.")
        points = [lo + (hi - lo) * i / n_groups for i in range(1, n_groups)]
    else:
        points = list(np.quantile(x, [i / n_groups for i in range(1, n_groups)], method="linear"))
    if np.all(np.mod(x, 1) == 0):
        points = [float(math.ceil(p)) for p in points]
    return tuple(sorted(set(points)))


def format_number(x: float) -> str:
    """A cut point as people write it: 25, 1.5, 2.25 (no trailing zeros)."""
    return f"{float(x):,.6g}" if abs(x) < 1e6 else f"{float(x):,.0f}"


def group_labels(cut_points: Sequence[float], whole_numbers: bool = True) -> list[str]:
    """Labels for the len(cut_points) + 1 groups, e.g. "Under 25", "25–34", "35 and over"."""
    cuts = [float(c) for c in cut_points]
    whole = whole_numbers and all(c.is_integer() for c in cuts)
    labels = [f"Under {format_number(cuts[0])}"]
    for a, b in zip(cuts, cuts[1:]):
        if whole:
            top = b - 1
            labels.append(
                format_number(a) if top == a else f"{format_number(a)}–{format_number(top)}"
            )
        else:
            labels.append(f"{format_number(a)} to under {format_number(b)}")
    labels.append(f"{format_number(cuts[-1])} and over")
    return labels


def bin_values(x: np.ndarray, cut_points: Sequence[float]) -> np.ndarray:
    """Group index of each value (-1 where missing), the same rule working data use."""
    x = np.asarray(x, dtype=float)
    codes = np.searchsorted(np.asarray(cut_points, dtype=float), x, side="right")
    return np.where(np.isnan(x), -1, codes)


def bin_variable(
    project: Project,
    source: str,
    *,
    method: str = "cuts",
    cuts: Sequence[float] = (),
    n_groups: int = 4,
    name: str | None = None,
    labels: Sequence[str] | None = None,
    instrument: str | None = None,
    wave: str | None = None,
) -> Variable:
    """Create (or redefine) a grouped version of numeric ``source`` in the codebook.

    Equal-width and quantile groups are computed from the cleaned answers of ``wave`` (by
    default the latest wave); the cut points are then fixed, so later waves use the same
    groups and stay comparable. Recorded as one undoable codebook change.
    """

    inst = (
        project.instrument(instrument)
        if instrument is not None
        else _instrument_with(project, source)
    )
    codebook = project.codebook(inst.id)
    src = codebook[source]
    if src.kind is not Kind.NUMERIC:
        raise TableError(
            f"{source} is not a number question ({src.kind.label.lower()}); only "
            "numbers can be grouped into ranges."
        )
    new_name = name or f"{source}_group"
    existing = codebook.get(new_name)
    if existing is not None and existing.derived_from != source:
        raise TableError(
            f"The codebook already has a variable called {new_name!r}; choose another name."
        )
    # The answers decide equal-width and quantile cuts, and whether labels can be whole numbers.
    x = answered_values(project, inst.id, source, wave)
    whole = bool(np.all(np.mod(x, 1) == 0)) if x.size else True
    points = cut_points_for(x, method, n_groups=n_groups, cuts=cuts)
    names = list(labels) if labels else group_labels(points, whole)
    if len(names) != len(points) + 1:
        raise TableError(
            f"{len(points)} cut points make {len(points) + 1} groups; give "
            f"{len(points) + 1} labels, not {len(names)}."
        )
    how = {
        "cuts": "chosen cut points",
        "equal": "groups of equal width",
        "quantile": "groups of about equal size",
    }[method]
    var = Variable(
        name=new_name,
        question=f"{src.label} (grouped)",
        kind=Kind.ORDINAL,
        levels=tuple(names),
        derived_from=source,
        cut_points=points,
        position=src.position,
        group=None,
    )
    project.set_codebook(
        inst.id,
        codebook.with_variable(var),
        label=f"Group {source} into {len(names)} categories ({how})",
    )
    return var


def answered_values(
    project: Project, instrument_id: int, source: str, wave: str | None = None
) -> np.ndarray:
    """The cleaned, answered values of ``source`` in ``wave`` (default: the latest wave).

    Working data, not the raw table: corrections and exclusions from the ledger count,
    missing codes do not. Empty when the instrument has no wave yet.
    """
    from core.working import working_data

    if not project.waves(instrument_id):
        return np.array([])
    work = working_data(project, project.find_wave(wave, instrument_id).id)
    values, reasons = work.analysed()
    if source not in values.columns:
        return np.array([])
    col = pd.to_numeric(values[source], errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    return col[reasons[source].isna().to_numpy() & ~np.isnan(col)]


@dataclass(frozen=True)
class GroupPreview:
    """The groups a grouping would make, with how many answers fall in each."""

    cut_points: tuple[float, ...]
    labels: tuple[str, ...]
    counts: tuple[int, ...]
    n_answered: int

    def to_json(self) -> dict:
        return {
            "cut_points": list(self.cut_points),
            "groups": [{"label": label, "count": n} for label, n in zip(self.labels, self.counts)],
            "n_answered": self.n_answered,
        }


def preview_groups(
    x: np.ndarray,
    method: str = "cuts",
    *,
    cuts: Sequence[float] = (),
    n_groups: int = 4,
) -> GroupPreview:
    """Cut points, labels and counts for answered values ``x``, the way ``bin_variable`` does.

    Pure, so a window can show the groups live as the evaluator changes the method.
    """
    x = np.asarray(x, dtype=float)
    x = x[~np.isnan(x)]
    whole = bool(np.all(np.mod(x, 1) == 0)) if x.size else True
    points = cut_points_for(x, method, n_groups=n_groups, cuts=cuts)
    labels = group_labels(points, whole)
    counts = np.bincount(bin_values(x, points), minlength=len(labels)) if x.size else None
    return GroupPreview(
        cut_points=points,
        labels=tuple(labels),
        counts=tuple(int(n) for n in counts) if counts is not None else (0,) * len(labels),
        n_answered=int(x.size),
    )


def _instrument_with(project: Project, source: str):  # noqa: ANN202 - Instrument
    for inst in project.instruments():
        if source in project.codebook(inst.id):
            return inst
    raise TableError(f"There is no variable called {source!r}.")
