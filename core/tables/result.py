"""A computed table with its caption: what views, charts and exports all consume.

``columns`` and ``rows`` are the display table (the first column holds row labels);
``data`` holds the machine-readable numbers in the documented JSON shape (docs/cli-json.md).
Suppressed cells are marked on the cell and are ``None`` in ``data``, so no chart or export
can show them by accident.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from core.tables.spec import TableSpec

FORMATS = ("text", "count", "percent", "number", "pp")  # pp: change in percentage points


@dataclass(frozen=True)
class Cell:
    """One display cell. ``value`` is a number for numeric formats; ``text`` overrides display."""

    value: float | int | str | None
    fmt: str = "text"
    suppressed: bool = False
    text: str | None = None
    flag: str | None = None  # e.g. "unstable" for percentages of tiny groups

    @property
    def display(self) -> str:
        if self.text is not None:
            return self.text
        v = self.value
        if v is None:
            return ""
        if self.fmt == "count":
            return f"{int(v):,}"
        if self.fmt == "percent":
            return f"{float(v):.1f}%"
        if self.fmt == "pp":
            return f"{float(v):+.1f}"
        if self.fmt == "number":
            return format_number(float(v))
        return str(v)

    @property
    def numeric(self) -> bool:
        return self.fmt != "text"


def format_number(x: float) -> str:
    if x != x:  # NaN
        return ""
    if float(x).is_integer() and abs(x) < 1e12:
        return f"{int(x):,}"
    return f"{x:,.2f}"


@dataclass
class TableResult:
    """A finished table: numbers, caption and notes. Build with the table functions."""

    spec: TableSpec
    table_type: str  # frequency, descriptives, crosstab, likert, battery, ranking, multiselect
    kind: str  # the variable kind (or the group's)
    title: str
    base: str
    n_valid: int
    n_missing: int
    columns: list[str]
    rows: list[list[Cell]]
    row_roles: list[str] = field(default_factory=list)  # "level", "missing", "total", "stat"
    notes: list[str] = field(default_factory=list)
    data: dict[str, Any] = field(default_factory=dict)
    wave: str = ""
    instrument: str = ""
    finding: str = ""
    # The caption part each note belongs to (missing, treatment, cleaning, suppression,
    # method, source, cautions), so a chart with little room can keep the important ones.
    note_kinds: dict[str, str] = field(default_factory=dict)

    def to_json(self) -> dict[str, Any]:
        out = {
            "title": self.title,
            "kind": self.kind,
            "table_type": self.table_type,
            "wave": self.wave,
            "instrument": self.instrument,
            "base": self.base,
            "n_valid": self.n_valid,
            "n_missing": self.n_missing,
            "notes": list(self.notes),
            "columns": list(self.columns),
            "rows": [[c.display for c in row] for row in self.rows],
            "spec": self.spec.to_json(),
        }
        out.update(self.data)
        if self.finding:
            out["finding"] = self.finding
        return out

    def as_text_rows(self) -> list[list[str]]:
        """Header plus rows as display strings (for tab-separated text and CSV)."""
        return [list(self.columns)] + [[c.display for c in row] for row in self.rows]
