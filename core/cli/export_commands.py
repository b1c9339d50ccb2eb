"""Commands for the report outline and export: ``keep``, ``outline``, ``export``.

Together they let next year's report be re-run from the saved project without a window:
the outline keeps table specifications, and ``export`` recomputes every kept result from
the current data and writes files with predictable names (docs/export.md).
"""

from __future__ import annotations

import argparse

from core import outline
from core.cli.common import emit_json, opened, print_rows
from core.cli.table_options import add_table_options, spec_from_args
from core.errors import PlaincountError
from core.export.report import FORMATS, export_outline


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "keep",
        help="add a table (or chart) to the report outline",
        description="Add a table to the end of the report outline. It is recomputed from "
        "the current data every time the report is exported.",
    )
    p.add_argument("project", help="the project file")
    p.add_argument("variable", help="a variable or question-group name")
    add_table_options(p, wave_help="wave label (default: the latest wave at export time)")
    p.add_argument("--chart", metavar="TYPE", help="show the result as this chart type")
    p.add_argument(
        "--finding",
        metavar="TEXT",
        default="",
        help="the finding sentence: what the result shows, in one line",
    )
    p.add_argument("--title", metavar="TEXT", help="title (default: the table's caption)")
    p.add_argument("--json", action="store_true", help="print the kept item as JSON")
    p.set_defaults(func=_keep)

    p = sub.add_parser("outline", help="list the report outline")
    p.add_argument("project", help="the project file")
    p.add_argument("--json", action="store_true", help="print the outline as JSON")
    p.set_defaults(func=_outline)

    p = sub.add_parser(
        "export",
        help="export the report outline to files",
        description="Export every kept result: tables.xlsx, report.docx, report.html and "
        "one numbered PNG/SVG/CSV file per result (see docs/export.md).",
    )
    p.add_argument("project", help="the project file")
    p.add_argument("--out", required=True, metavar="DIR", help="folder to write the files to")
    p.add_argument(
        "--formats",
        default=",".join(FORMATS),
        metavar="LIST",
        help=f"comma-separated formats (default: {','.join(FORMATS)})",
    )
    p.add_argument(
        "--include-personal",
        action="store_true",
        help="also export results about identifiers or personal data",
    )
    p.add_argument(
        "--include-comments",
        action="store_true",
        help="also export open-ended comments (they can identify respondents)",
    )
    p.add_argument("--json", action="store_true", help="print the files written as JSON")
    p.set_defaults(func=_export)


def _keep(args: argparse.Namespace) -> int:
    spec = spec_from_args(args)
    with opened(args.project) as project:
        item_id = outline.keep(project, spec, title=args.title, finding=args.finding)
        kept = outline.item(project, item_id)
        if args.json:
            emit_json(kept.to_json())
        else:
            shown = f" as a {kept.chart} chart" if kept.chart else ""
            print(f"Kept “{kept.title}”{shown} as item {kept.position} of the report outline.")
            if kept.chart and not kept.finding:
                print("Note: a chart in a report should show a finding; add one with --finding.")
    return 0


def _outline(args: argparse.Namespace) -> int:
    with opened(args.project) as project:
        kept = outline.items(project)
        if args.json:
            emit_json({"items": [k.to_json() for k in kept]})
            return 0
        if not kept:
            print("The report outline is empty. Add results with: plaincount-cli keep.")
            return 0
        rows = [["#", "Title", "Variable", "Shown as", "Finding"]]
        for k in kept:
            rows.append(
                [
                    str(k.position),
                    k.title,
                    k.spec.variable,
                    k.chart or "table",
                    k.finding or "(none)",
                ]
            )
        print_rows(rows)
    return 0


def _export(args: argparse.Namespace) -> int:
    formats = [f for f in args.formats.split(",") if f.strip()]
    if not formats:
        raise PlaincountError(f"Choose at least one format: {', '.join(FORMATS)}.")
    with opened(args.project) as project:
        files = export_outline(
            project,
            args.out,
            formats,
            include_personal=args.include_personal,
            include_comments=args.include_comments,
        )
    if args.json:
        emit_json(
            {"out": args.out, "files": [str(p) for p in files], "warnings": list(files.warnings)}
        )
        return 0
    for warning in files.warnings:
        print(f"Warning: {warning}")
    print(f"Wrote {len(files)} file{'s' if len(files) != 1 else ''} to {args.out}:")
    for path in files:
        print(f"  {path.name}")
    return 0
