"""``table``: one captioned table (frequency, statistics, cross-tab, scale, ranking, choices)."""

from __future__ import annotations

import argparse
import math
from typing import Any

from core.cli.common import emit_json, opened, print_rows
from core.cli.table_options import add_table_options, spec_from_args
from core.tables.build import compute_table
from core.tables.result import TableResult


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "table",
        help="tabulate one question (or question group), optionally broken down by others",
    )
    p.add_argument("project", help="project file")
    p.add_argument(
        "variable",
        help="variable name, or a question group name (a battery, a "
        "ranking or a choose-all-that-apply question)",
    )
    add_table_options(p)
    p.add_argument(
        "--compare-waves",
        metavar="W1,W2,...",
        help="put these waves side by side: counts, %% and the change in percentage points",
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_table)


def _table(args: argparse.Namespace) -> int:
    spec = spec_from_args(args)
    with opened(args.project) as project:
        result = compute_table(project, spec)
    if args.json:
        emit_json(result_json(result))
        return 0
    print(result.title)
    print(result.base)
    print()
    print_rows(result.as_text_rows())
    print()
    for note in result.notes:
        print(f"- {note}")
    return 0


def result_json(result: TableResult) -> dict[str, Any]:
    """The documented JSON object (docs/cli-json.md): the result plus ``stats`` when numeric."""
    out = result.to_json()
    return _clean(out)


def _clean(x: Any) -> Any:
    """JSON-safe: NaN and infinity become null, tuples become lists."""
    if isinstance(x, dict):
        return {str(k): _clean(v) for k, v in x.items()}
    if isinstance(x, list | tuple):
        return [_clean(v) for v in x]
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if hasattr(x, "item") and not isinstance(x, str):  # numpy scalars
        return _clean(x.item())
    return x
