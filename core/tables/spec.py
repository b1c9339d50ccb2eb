"""What the evaluator asked for: a table specification, stored as data in the project."""

from __future__ import annotations

from dataclasses import asdict, dataclass, fields, replace
from typing import Any

from core.errors import TableError

PERCENT_BASES = ("column", "row", "total")
TREATMENTS = ("available", "complete", "impute", "show-missing")
SORTS = ("level", "frequency")
SD_FORMULAS = ("population", "sample")
BORDA_RULES = ("zero", "average", "modified")
MISSING_ROWS = ("reason", "combined")


@dataclass(frozen=True)
class TableSpec:
    """A table request. ``variable`` is a variable name or a question-group name.

    ``wave`` is a wave label (None: the latest wave of the variable's instrument).
    ``min_cell`` None means the project's small-cell threshold; 0 turns suppression off.
    """

    variable: str
    wave: str | None = None
    instrument: str | None = None
    by: tuple[str, ...] = ()
    # Break-down groups run down the rows, so "row" (percent within each group) is the default.
    percent: str = "row"
    treatment: str = "available"
    complete_items: tuple[str, ...] = ()
    min_cell: int | None = None
    sort: str = "level"
    sd: str = "population"
    show_mean: bool = False
    borda: str = "zero"
    borda_points: tuple[float, ...] = ()
    tests: bool = False
    pct_of_all: bool = False
    intervals: bool = False
    compare_waves: tuple[str, ...] = ()
    chart: str | None = None
    # With treatment "show-missing": one row per missing reason ("reason") or one row for all.
    missing_rows: str = "reason"

    def __post_init__(self) -> None:
        object.__setattr__(self, "by", tuple(self.by))
        object.__setattr__(self, "complete_items", tuple(self.complete_items))
        object.__setattr__(self, "compare_waves", tuple(self.compare_waves))
        object.__setattr__(self, "borda_points", tuple(self.borda_points))
        for name, allowed in (
            ("percent", PERCENT_BASES),
            ("treatment", TREATMENTS),
            ("sort", SORTS),
            ("sd", SD_FORMULAS),
            ("borda", BORDA_RULES),
            ("missing_rows", MISSING_ROWS),
        ):
            value = getattr(self, name)
            if value not in allowed:
                raise TableError(f"{name} must be one of {', '.join(allowed)}, not {value!r}.")
        if len(self.by) > 2:
            raise TableError("A table can be broken down by at most two variables.")
        if self.min_cell is not None and self.min_cell < 0:
            raise TableError("The small-cell threshold cannot be negative.")

    def with_changes(self, **changes: Any) -> TableSpec:
        return replace(self, **changes)

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        for key in ("by", "complete_items", "compare_waves", "borda_points"):
            data[key] = list(data[key])
        return data

    @classmethod
    def from_json(cls, data: dict[str, Any]) -> TableSpec:
        known = {f.name for f in fields(cls)}
        return cls(**{k: v for k, v in data.items() if k in known})
