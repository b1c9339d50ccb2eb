"""The report outline: the tables and charts the evaluator has kept for the report, in order.

An outline item stores a table *specification*, never its numbers: the numbers are
recomputed from the working data at export time, so a correction made after keeping a table
reaches the report. Each change is one transaction that also records an undoable history
step; undo restores the whole outline as it was (it is small: tens of rows).
"""

from __future__ import annotations

import json
import sqlite3
from dataclasses import dataclass, replace
from typing import Any

from core.charts import chart_types
from core.errors import PlaincountError
from core.export.comments import comments_result, is_comment_variable
from core.project import UNDO_HANDLERS, Changes, Project, now
from core.tables.build import compute_table
from core.tables.result import TableResult
from core.tables.spec import TableSpec


@dataclass(frozen=True)
class OutlineItem:
    """One kept result. ``position`` starts at 1; ``chart`` is None for a table-only item."""

    id: int
    position: int
    title: str
    spec: TableSpec
    finding: str
    created: str

    @property
    def chart(self) -> str | None:
        return self.spec.chart

    def to_json(self) -> dict[str, Any]:
        """The documented JSON shape (docs/cli-json.md, ``plaincount-cli outline``)."""
        return {
            "id": self.id,
            "position": self.position,
            "title": self.title,
            "variable": self.spec.variable,
            "chart": self.chart,
            "finding": self.finding,
            "spec": self.spec.to_json(),
            "created": self.created,
        }


def items(project: Project) -> list[OutlineItem]:
    """Every kept result in outline order."""
    rows = project.query(
        "SELECT id, position, title, spec, finding, created FROM outline ORDER BY position, id"
    )
    return [_item(dict(r)) for r in rows]


def item(project: Project, item_id: int) -> OutlineItem:
    """One kept result by id, with a plain message if it is not in the outline."""
    for it in items(project):
        if it.id == item_id:
            return it
    raise PlaincountError(f"The report outline has no item number {item_id}.")


def keep(project: Project, spec: TableSpec, title: str | None = None, finding: str = "") -> int:
    """Add a result to the end of the report outline and return its id.

    The table is computed once now, so a specification that cannot be tabulated (an unknown
    variable, a chart type the table does not allow) is refused with the table's own message
    instead of failing later at export. With no ``title`` the table's caption title is kept.
    """
    result = compute(project, spec)
    if spec.chart is not None:
        _check_chart(result, spec.chart)
    title = _clean_title(title if title is not None else result.title)
    with project.transaction() as conn:
        before = _snapshot(conn)
        (position,) = conn.execute("SELECT COALESCE(MAX(position), 0) + 1 FROM outline").fetchone()
        cur = conn.execute(
            "INSERT INTO outline(position, title, spec, finding, created) VALUES (?,?,?,?,?)",
            (position, title, json.dumps(spec.to_json()), finding.strip(), now()),
        )
        new_id = int(cur.lastrowid)
        _record(project, conn, f"Keep “{_short(title)}” for the report", before)
    project.notify(Changes(outline=True))
    return new_id


def reorder(project: Project, ids: list[int]) -> Changes:
    """Put the outline in the order of ``ids``, which must name every item exactly once."""
    with project.transaction() as conn:
        before = _snapshot(conn)
        current = {row["id"] for row in before}
        if len(ids) != len(set(ids)) or set(ids) != current:
            raise PlaincountError(
                "A new order must list every item of the report outline exactly once."
            )
        for position, item_id in enumerate(ids, start=1):
            conn.execute("UPDATE outline SET position = ? WHERE id = ?", (position, item_id))
        _record(project, conn, "Reorder the report outline", before)
    return project.notify(Changes(outline=True))


def rename(project: Project, item_id: int, title: str) -> Changes:
    """Give a kept result a new title (the caption shown above it in every export)."""
    title = _clean_title(title)
    return _update(project, item_id, "title", title, f"Rename to “{_short(title)}”")


def set_finding(project: Project, item_id: int, text: str) -> Changes:
    """Set the finding sentence: the one-line statement of what the result shows."""
    return _update(project, item_id, "finding", text.strip(), "Edit a finding sentence")


def set_chart(project: Project, item_id: int, chart_type: str | None) -> Changes:
    """Show a kept result as this chart type (None: as a table only)."""
    current = item(project, item_id)
    if chart_type is not None:
        _check_chart(compute(project, current.spec), chart_type)
    spec = current.spec.with_changes(chart=chart_type)
    label = f"Show as {chart_type}" if chart_type else "Show as a table"
    return _update(project, item_id, "spec", json.dumps(spec.to_json()), label)


def remove(project: Project, item_id: int) -> Changes:
    """Take a result out of the report outline (undo puts it back where it was)."""
    with project.transaction() as conn:
        before = _snapshot(conn)
        row = next((r for r in before if r["id"] == item_id), None)
        if row is None:
            raise PlaincountError(f"The report outline has no item number {item_id}.")
        conn.execute("DELETE FROM outline WHERE id = ?", (item_id,))
        # Close the gap so positions stay 1..n.
        conn.execute(
            "UPDATE outline SET position = position - 1 WHERE position > ?", (row["position"],)
        )
        _record(project, conn, f"Remove “{_short(row['title'])}” from the report", before)
    return project.notify(Changes(outline=True))


def compute(project: Project, spec: TableSpec) -> TableResult:
    """The table of a kept specification, computed from today's working data.

    Open-ended questions give a listing of comments (exports leave it out unless comments
    are included explicitly); everything else is a table.
    """
    if is_comment_variable(project, spec):
        return comments_result(project, spec)
    return compute_table(project, spec)


def result_for(project: Project, kept: OutlineItem) -> TableResult:
    """The kept result recomputed, carrying the outline's title and finding sentence."""
    # A copy: computed tables are cached and shared with the views.
    return replace(compute(project, kept.spec), title=kept.title, finding=kept.finding)


# ----------------------------------------------------------------- internals
_COLUMNS = ("id", "position", "title", "spec", "finding", "created")


def _item(row: dict[str, Any]) -> OutlineItem:
    return OutlineItem(
        id=int(row["id"]),
        position=int(row["position"]),
        title=row["title"],
        spec=TableSpec.from_json(json.loads(row["spec"])),
        finding=row["finding"],
        created=row["created"],
    )


def _snapshot(conn: sqlite3.Connection) -> list[dict[str, Any]]:
    cur = conn.execute(f"SELECT {', '.join(_COLUMNS)} FROM outline ORDER BY position, id")
    return [dict(zip(_COLUMNS, r)) for r in cur.fetchall()]


def _record(
    project: Project, conn: sqlite3.Connection, label: str, before: list[dict[str, Any]]
) -> None:
    project._record_history(conn, "outline", label, {"before": before, "after": _snapshot(conn)})


def _update(project: Project, item_id: int, column: str, value: str, label: str) -> Changes:
    with project.transaction() as conn:
        before = _snapshot(conn)
        if not any(r["id"] == item_id for r in before):
            raise PlaincountError(f"The report outline has no item number {item_id}.")
        conn.execute(f"UPDATE outline SET {column} = ? WHERE id = ?", (value, item_id))
        _record(project, conn, label, before)
    return project.notify(Changes(outline=True))


def _restore(conn: sqlite3.Connection, rows: list[dict[str, Any]]) -> None:
    conn.execute("DELETE FROM outline")
    conn.executemany(
        f"INSERT INTO outline({', '.join(_COLUMNS)}) VALUES (?,?,?,?,?,?)",
        [tuple(r[c] for c in _COLUMNS) for r in rows],
    )


def _undo_outline(project: Project, payload: dict[str, Any], undo: bool) -> Changes:
    with project.transaction() as conn:
        _restore(conn, payload["before" if undo else "after"])
    return Changes(outline=True)


UNDO_HANDLERS["outline"] = _undo_outline


def _check_chart(result: TableResult, chart_type: str) -> None:
    allowed = chart_types(result)
    if chart_type not in allowed:
        if not allowed:
            raise PlaincountError(f"“{result.title}” cannot be shown as a chart.")
        raise PlaincountError(
            f"“{result.title}” cannot be shown as a {chart_type} chart; choose one of: "
            f"{', '.join(allowed)}."
        )


def _clean_title(title: str) -> str:
    title = " ".join(str(title).split())
    if not title:
        raise PlaincountError("A kept result needs a title.")
    return title


def _short(text: str, limit: int = 40) -> str:
    return text if len(text) <= limit else text[: limit - 1] + "…"
