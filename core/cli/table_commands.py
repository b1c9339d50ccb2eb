"""``table``: one captioned table (frequency, statistics, cross-tab, scale, ranking, choices)."""

from __future__ import annotations

import argparse
import math
from typing import Any

from core.cli.common import emit_json, opened, print_rows
from core.tables.build import compute_table
from core.tables.result import TableResult
from core.tables.spec import PERCENT_BASES, TREATMENTS, TableSpec


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
    p.add_argument(
        "--by",
        action="append",
        default=[],
        metavar="VARIABLE",
        help="break the table down by this category question (twice to nest)",
    )
    p.add_argument(
        "--percent",
        choices=PERCENT_BASES,
        default="row",
        help="percentages within each group (row, default), within each answer "
        "(column) or of the total",
    )
    p.add_argument("--wave", help="wave label (default: the latest wave)")
    p.add_argument("--instrument", help="instrument name (when several have this question)")
    p.add_argument(
        "--treatment",
        choices=TREATMENTS,
        default="available",
        help="missing data: available cases (default), complete cases, single "
        "imputation, or missing shown as rows",
    )
    p.add_argument(
        "--complete-items",
        metavar="VAR,VAR,...",
        help="with --treatment complete: the items a respondent must have answered",
    )
    p.add_argument(
        "--missing-rows",
        choices=("reason", "combined"),
        default="reason",
        help="with --treatment show-missing: one row per reason, or one in all",
    )
    p.add_argument(
        "--min-cell",
        type=int,
        metavar="N",
        help="hide counts below N (default: the project setting; 0 = off)",
    )
    p.add_argument(
        "--sd",
        choices=("population", "sample"),
        default="population",
        help="standard deviation formula (default population: dividing by n)",
    )
    p.add_argument(
        "--borda",
        choices=("zero", "average", "modified"),
        default="zero",
        help="rule for partial rankings (default: unranked options score 0)",
    )
    p.add_argument(
        "--points",
        metavar="P1,P2,...",
        help="Borda points for 1st, 2nd, ... place (default n-1 down to 0)",
    )
    p.add_argument(
        "--sort",
        choices=("level", "frequency"),
        default="level",
        help="order answers as in the questionnaire (default) or by frequency / % agreeing",
    )
    p.add_argument(
        "--tests",
        action="store_true",
        help="add a chi-square test and Cramér's V (for samples only)",
    )
    p.add_argument(
        "--intervals",
        action="store_true",
        help="add 95%% margins of error (Wilson score intervals) to the percentages, for a "
        "wave marked as a sample; a whole-population wave gets a note saying why there are none",
    )
    p.add_argument(
        "--show-mean",
        action="store_true",
        help="add the mean of codes to a rating scale (treats answers as equally spaced)",
    )
    p.add_argument(
        "--pct-of-all", action="store_true", help="add a column of percentages of all respondents"
    )
    p.add_argument(
        "--compare-waves",
        metavar="W1,W2,...",
        help="put these waves side by side: counts, %% and the change in percentage points",
    )
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.set_defaults(func=_table)


def _split(text: str | None) -> tuple[str, ...]:
    return tuple(t.strip() for t in (text or "").split(",") if t.strip())


def _table(args: argparse.Namespace) -> int:
    from core.errors import TableError

    points: tuple[float, ...] = ()
    if args.points:
        try:
            points = tuple(float(x) for x in _split(args.points))
        except ValueError:
            raise TableError("--points takes numbers separated by commas, e.g. 3,2,1,0.") from None
    spec = TableSpec(
        variable=args.variable,
        wave=args.wave,
        instrument=args.instrument,
        by=tuple(args.by),
        percent=args.percent,
        treatment=args.treatment,
        complete_items=_split(args.complete_items),
        missing_rows=args.missing_rows,
        min_cell=args.min_cell,
        sort=args.sort,
        sd=args.sd,
        show_mean=args.show_mean,
        borda=args.borda,
        borda_points=points,
        tests=args.tests,
        pct_of_all=args.pct_of_all,
        intervals=args.intervals,
        compare_waves=_split(args.compare_waves),
    )
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
